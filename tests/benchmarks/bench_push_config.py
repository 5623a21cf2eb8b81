"""Benchmark: what push destinations cost the quick verbs, and what checking them costs.

Run:  python tests/benchmarks/bench_push_config.py [--runs 7]

Each case is a fresh interpreter timed from start to exit (median of --runs). A copy of the demo
configuration gets two push destinations (one from a private secrets file). `siderod now` only
checks the tables' shape and should cost what it costs without them; `siderod check` reads the
URLs and has apprise check them, which loads apprise's plugins (the one-off price, shown against
a bare `import apprise` and plugin load). The reference for the quick path is the same command on
the unchanged demo.
"""

from __future__ import annotations

import argparse
import os
import pathlib
import shutil
import sys
import tempfile

from wall_medians import median_wall_seconds

DEMO = pathlib.Path(__file__).resolve().parents[2] / "siderod" / "demo"
_DIR = pathlib.Path(tempfile.mkdtemp(prefix="siderod-bench-push-"))
(_DIR / "demo-targets.toml").write_text((DEMO / "demo-targets.toml").read_text())
(_DIR / "demo.toml").write_text((DEMO / "demo.toml").read_text().replace("[view]", """\
secrets = "secrets.toml"

[[notify.push]]
name = "phone"
secret = "phone"
min_urgency = "critical"

[[notify.push]]
name = "desk"
url = "json://127.0.0.1:9/siderod"

[view]""", 1))
(_DIR / "secrets.toml").write_text('phone = "ntfys://tk_benchtoken@push.example.org/scope"\n')
os.chmod(_DIR / "secrets.toml", 0o600)

PLAIN = "siderod now --json (demo)"
WITH_PUSH = "siderod now --json (demo + 2 push destinations)"
CHECK = "siderod check (demo + 2 push destinations: apprise checks the URLs)"
APPRISE = "python: import apprise and load its plugins"
CASES = {
    PLAIN: [sys.executable, "-m", "siderod", "now", "--json", "--config", str(DEMO / "demo.toml")],
    WITH_PUSH: [sys.executable, "-m", "siderod", "now", "--json", "--config", str(_DIR / "demo.toml")],
    CHECK: [sys.executable, "-m", "siderod", "check", "--config", str(_DIR / "demo.toml")],
    APPRISE: [sys.executable, "-W", "ignore", "-c",
              "import apprise; apprise.Apprise.instantiate('json://localhost')"],
}


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=7)
    runs = parser.parse_args().runs
    medians = median_wall_seconds(CASES, runs, width=70)
    shutil.rmtree(_DIR, ignore_errors=True)
    print(f"\nquick verb with push destinations / without: {medians[WITH_PUSH] / medians[PLAIN]:.2f}x; "
          f"check with push: {medians[CHECK]:.2f} s, of which apprise's load is about "
          f"{medians[APPRISE]:.2f} s")


if __name__ == "__main__":
    main()
