"""Benchmark: a cold `siderod now` on the demo against the usual one-off way to get an LST.

Run:  python tests/benchmarks/bench_startup.py [--runs 9]

Each case is a fresh interpreter (so imports are paid every time), timed from start to exit;
the median of --runs runs is printed. The reference is what a user would otherwise type for one
apparent LST at a site: astropy's ``Time.sidereal_time("apparent", longitude)`` (astropy is a
test-only reference here; it runs offline with its bundled IERS tables). The aim from the
foundation issue: a cold `siderod now` on the demo in at most 0.5 s. The demo has Jupiter, the Moon
and a comet (the planetary ephemeris is opened); a copy of it without them measures a star-only
configuration, which must not pay for the ephemeris (aims: star-only <= 0.5 s, with planets <= 0.7 s).
"""

from __future__ import annotations

import argparse
import pathlib
import shutil
import sys
import tempfile

from wall_medians import median_wall_seconds

DEMO = pathlib.Path(__file__).resolve().parents[2] / "siderod" / "demo"
_STAR_ONLY_DIR = pathlib.Path(tempfile.mkdtemp(prefix="siderod-bench-"))
(_STAR_ONLY_DIR / "demo.toml").write_text((DEMO / "demo.toml").read_text())
(_STAR_ONLY_DIR / "demo-targets.toml").write_text(
    (DEMO / "demo-targets.toml").read_text().split("# Targets that move.")[0])

NOW_CASE = "siderod now --json (demo: 19 targets, 5 from the catalogue, 3 moving)"
STAR_CASE = "siderod now --json (demo without its moving targets)"
CASES = {
    "python -c pass (interpreter floor)": [sys.executable, "-c", "pass"],
    NOW_CASE: [sys.executable, "-m", "siderod", "now", "--json"],
    STAR_CASE: [sys.executable, "-m", "siderod", "now", "--json",
                "--config", str(_STAR_ONLY_DIR / "demo.toml")],
    "siderod status (no service: the quick path)": [sys.executable, "-m", "siderod", "status"],
    "astropy Time.sidereal_time('apparent') (reference)": [
        sys.executable,
        "-c",
        "from astropy.utils import iers; iers.conf.auto_download = False\n"
        "from astropy.time import Time\n"
        "print(Time('2026-12-14T22:30:00', scale='utc').sidereal_time('apparent', longitude=-3.6875))",
    ],
}


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=9)
    runs = parser.parse_args().runs
    medians = median_wall_seconds(CASES, runs, width=55)
    ours = medians[STAR_CASE]
    planets = medians[NOW_CASE]
    reference = medians["astropy Time.sidereal_time('apparent') (reference)"]
    shutil.rmtree(_STAR_ONLY_DIR, ignore_errors=True)
    print(f"\ncold `siderod now`, stars only: {ours:.2f} s (aim <= 0.5 s); with planets: {planets:.2f} s "
          f"(aim <= 0.7 s); astropy one-off LST: {reference:.2f} s; ratio {reference / ours:.1f}x")


if __name__ == "__main__":
    main()
