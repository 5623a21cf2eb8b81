"""The board's A key in a real terminal: `siderod run` in a private tmux server, a critical flip
alert repeating every 3 seconds, one key press, and no repeat after it.

The target is placed, with pyerfa (atci13, eo06a-style equation of the origins, gst06a), so that its
meridian flip falls a little after the service starts; the rest is the real service on the real
clock, so the test polls (bounded) instead of using a fake clock, and is marked slow.
"""

from __future__ import annotations

import json
import math
import os
import shutil
import signal
import subprocess
import sys
import time
from datetime import UTC, datetime, timedelta
from pathlib import Path

import erfa  # reference: pyerfa, from the test extra
import pytest
from helpers.tmux_pane import TmuxPane, tmux_env

pytestmark = [
    pytest.mark.slow,
    pytest.mark.needs_tmux,
    pytest.mark.skipif(shutil.which("tmux") is None, reason="tmux is not installed"),
]

REPO = Path(__file__).resolve().parents[2]
LONGITUDE_DEG = -(3 + 41 / 60 + 15 / 3600)  # the demo site, Corrie Hill Observatory (invented)
# The flip falls this long after the test starts: time for Python, the agenda and the first plan.
FLIP_AHEAD_SECONDS = 25.0
# Repeats every 0.05 min = 3 s, so that a few arrive while the test waits.
REPEAT_MINUTES = 0.05
DEADLINE_SECONDS = 90.0  # for the board to show something (a loaded machine starts slowly)


def _ra_for_flip_at(when_utc: datetime, dec_deg: float) -> str:
    """An ICRS RA whose apparent place (pyerfa atci13, less the equation of the origins) culminates
    at ``when_utc`` at the demo longitude: flip_after = 0 makes that the flip."""
    seconds = when_utc.second + when_utc.microsecond / 1e6
    utc1, utc2 = erfa.dtf2d("UTC", when_utc.year, when_utc.month, when_utc.day, when_utc.hour,
                            when_utc.minute, seconds)
    tt1, tt2 = erfa.taitt(*erfa.utctai(utc1, utc2))
    last = (erfa.gst06a(utc1, utc2, tt1, tt2) + math.radians(LONGITUDE_DEG)) % (2 * math.pi)
    ra, dec = last, math.radians(dec_deg)
    for _ in range(3):  # ICRS RA -> apparent RA is nearly a shift: a few corrections converge
        ri, _, eo = erfa.atci13(ra, dec, 0.0, 0.0, 0.0, 0.0, tt1, tt2)
        ra = (ra + (last - (ri - eo))) % (2 * math.pi)
    hours = math.degrees(ra) / 15.0
    h = int(hours)
    m = int((hours - h) * 60)
    s = ((hours - h) * 60 - m) * 60
    return f"{h:02d}h{m:02d}m{s:05.2f}s"


class _Tmux(TmuxPane):
    """The pane runs `siderod run` itself, which must not outlive the test."""

    def kill(self) -> None:
        # kill-server alone hangs up the pane, and siderod run takes SIGHUP as "reload": it would
        # outlive the test. Stop the service itself first, as systemd would, then the terminal.
        pane_pid = subprocess.run(["tmux", "-L", self.socket_name, "display-message", "-p", "-t", "ui",
                                   "#{pane_pid}"], env=self.env, capture_output=True, text=True, timeout=10,
                                  check=False).stdout.strip()
        if pane_pid.isdigit():
            _stop(int(pane_pid))
        super().kill()


def _stop(pid: int) -> None:
    """SIGTERM, a bounded wait for the process to go, then SIGKILL."""
    try:
        os.kill(pid, signal.SIGTERM)
        end = time.monotonic() + 15.0
        while time.monotonic() < end:
            os.kill(pid, 0)  # raises once the process is gone
            time.sleep(0.1)
        os.kill(pid, signal.SIGKILL)
    except ProcessLookupError:
        pass


def _status(env: dict[str, str]) -> dict:
    done = subprocess.run([sys.executable, "-m", "siderod", "status", "--json"], env=env,
                          capture_output=True, text=True, timeout=30)
    assert done.returncode == 0, done.stderr
    return json.loads(done.stdout)


def test_the_a_key_on_the_board_acknowledges_a_repeating_flip(tmp_path):
    flip_utc = datetime.now(UTC) + timedelta(seconds=FLIP_AHEAD_SECONDS)
    (tmp_path / "targets.toml").write_text(
        f'[[target]]\nname = "Test Star"\nra = "{_ra_for_flip_at(flip_utc, 80.0)}"\ndec = "+80 00 00"\n')
    config = tmp_path / "config.toml"
    config.write_text(
        '[site]\nname = "Corrie Hill Observatory"\nlatitude = "+56 12 30"\nlongitude = "-3 41 15"\n'
        'timezone = "Europe/London"\n[targets]\nfiles = ["targets.toml"]\n'
        '[mount]\nkind = "german-equatorial"\nflip_after = 0\nlimit_after = 30\n'
        f'[alerts]\nrepeat = {REPEAT_MINUTES}\n[alerts.lead]\nflip-due = [0]\n[notify]\ndesktop = false\n')
    tmux = _Tmux(tmux_env(tmp_path, PYTHONPATH=str(REPO)), deadline_seconds=DEADLINE_SECONDS)
    try:
        tmux("new-session", "-d", "-s", "ui", "-x", "120", "-y", "40", "-c", str(REPO),
             f"{sys.executable} -m siderod run --config {config}")
        # The log channel's lines scroll above the board: wait for the flip and one repeat.
        tmux.wait_for(lambda text: "REPEATING Test Star flip-due" in text
                      and text.count("ALERT Test Star|flip-due|") >= 2, "the repeating flip")
        tmux("send-keys", "-t", "ui", "a")
        acked_utc = datetime.now(UTC)
        tmux.wait_for(lambda text: "REPEATING" not in text, "the acknowledgement")
        time.sleep(4 * REPEAT_MINUTES * 60)  # real time on purpose: no repeat may come now
        status = _status(tmux.env)
    finally:
        tmux.kill()
    assert status["awaiting_ack"] == []
    flips = [d for d in status["recent_deliveries"] if "|flip-due|" in d["key"] and d["ok"]]
    assert len(flips) >= 2  # the flip and at least one repeat were given
    after = [d for d in flips if datetime.fromisoformat(d["delivered_utc"].replace("Z", "+00:00"))
             > acked_utc + timedelta(seconds=1)]
    assert after == [], after
