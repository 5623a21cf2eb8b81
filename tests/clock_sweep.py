"""Run the test suite with the wall clock moved, to catch tests (and code) that only pass at some hours.

The in-process tests inject their time, but the real-process ones (``siderod run`` under sd_notify,
the tmux board, the restart and fault tests) run the demo night on the wall clock, so what they see
depends on the hour the suite runs: CI once failed because no demo alert fell within the service's
first 30-minute plan at that hour. This script runs pytest once per offset under libfaketime
(Debian package ``faketime``), the clock moved by that much and running on::

    python tests/clock_sweep.py +3h +9h +15h +21h          # the whole suite at four other hours
    python tests/clock_sweep.py +6h -- -m slow tests/service  # arguments after -- go to pytest

It prints one line per offset and exits non-zero if any run failed. Not a test (pytest never
collects it) and not part of CI: a check to make before trusting a change to the real-process tests.
"""

from __future__ import annotations

import os
import subprocess
import sys
import time
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]
LIBFAKETIME = Path("/usr/lib/x86_64-linux-gnu/faketime/libfaketime.so.1")
# Tests that fail under libfaketime only (they pass on the real clock): the INDI test's status
# probe thread, whose timed wait on the monotonic clock (threading.Event.wait) can sleep for the
# whole offset under libfaketime.
UNDER_FAKETIME_ONLY_FAILS = (
    "tests/service/test_mount_indi.py::test_flip_stop_and_lost_link_with_the_simulated_telescope",
)


def main(argv: list[str]) -> int:
    offsets, pytest_args = _split(argv)
    if not offsets:
        print(__doc__)
        return 2
    if not LIBFAKETIME.exists():
        print(f"clock_sweep: {LIBFAKETIME} not found; install libfaketime (Debian: apt install faketime)")
        return 2
    failed = 0
    for offset in offsets:
        env = dict(os.environ, LD_PRELOAD=str(LIBFAKETIME), FAKETIME=offset, PYTHONPATH=str(REPO))
        deselect = [f"--deselect={test}" for test in UNDER_FAKETIME_ONLY_FAILS]
        started = time.monotonic()
        done = subprocess.run([sys.executable, "-m", "pytest", "-q", "-p", "no:cacheprovider", *deselect,
                               *pytest_args], cwd=REPO, env=env, capture_output=True, text=True, check=False)
        summary = done.stdout.strip().splitlines()[-1:] or ["(no output)"]
        print(f"{offset:>6}  exit {done.returncode}  {time.monotonic() - started:5.0f} s  {summary[0]}")
        if done.returncode:
            failed += 1
            print("\n".join(line for line in done.stdout.splitlines()
                            if line.startswith(("FAILED", "ERROR"))))
    return 1 if failed else 0


def _split(argv: list[str]) -> tuple[list[str], list[str]]:
    if "--" in argv:
        at = argv.index("--")
        return argv[:at], argv[at + 1:]
    return argv, []


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
