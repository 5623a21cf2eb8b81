"""A whole night with two real push destinations, kill -9 at random moments, one acknowledgement.

The service runs in a child process (tests/helpers/push_child.py) on a clock 120 times faster than
real time, sending real apprise requests to a loopback HTTP receiver that lives in this process and
so survives every kill. What it must show, per destination:
- every alert and every repeat of an unacknowledged critical alert arrives, and exactly once, except
  an alert the destination had accepted when the process was killed (the documented crash window:
  the kill fell between the server's answer and the ledger commit);
- after ``siderod ack T002`` (over the real control socket), no repeat of T002's flip arrives.
"""

from __future__ import annotations

import os
import random
import signal
import subprocess
import sys
import time
from datetime import timedelta
from pathlib import Path

import pytest
from helpers import push_child
from helpers.push_receivers import HttpReceiver

from siderod.common.errors import SiderodError
from siderod.plan.planner import plan_alerts, plan_repeats

pytestmark = pytest.mark.slow

CHILD = Path(__file__).resolve().parents[1] / "helpers" / "push_child.py"
SPEED = 120.0  # simulated seconds per real second: a 2-minute repeat every second
COUNT = 6  # targets, each with a flip and a tracking limit
KILLS = 4
START_TIMEOUT_SECONDS = 20.0  # a child that does not say "child up" in this long is a failure
ACKED = "T002"
# The night's simulated clock starts this long (real seconds) after the first child is launched.
START_HEAD_START_SECONDS = 2.0
# A send the service had started before the ack reply may land just after it (loopback: ms).
IN_FLIGHT_SECONDS = 0.5


def _start(state: Path, port: int, epoch: float) -> subprocess.Popen:
    env = dict(os.environ, PYTHONUNBUFFERED="1")
    with open(state / "child.err", "ab") as err:
        process = subprocess.Popen(
            [sys.executable, str(CHILD), str(state), str(port), repr(epoch), repr(SPEED), str(COUNT)],
            stdout=subprocess.PIPE, stderr=err, env=env,
        )
    line = _readline(process)
    assert line == b"child up", (state / "child.err").read_text()[-3000:]
    return process


def _readline(process: subprocess.Popen) -> bytes:
    deadline = time.monotonic() + START_TIMEOUT_SECONDS
    os.set_blocking(process.stdout.fileno(), False)
    data = b""
    while b"\n" not in data:
        assert time.monotonic() < deadline and process.poll() is None, "the child did not start"
        chunk = process.stdout.read()
        if chunk:
            data += chunk
        else:
            time.sleep(0.01)  # a real process is starting
    return data.split(b"\n", 1)[0].strip()


def _kill(process: subprocess.Popen) -> float:
    process.kill()  # SIGKILL
    process.wait()
    process.stdout.close()
    return time.time()


def _title(received) -> str:
    title = received.json()["title"]
    return title.split("] ", 1)[1] if title.startswith("[late ") else title


def _destination(received) -> str:
    return "a" if received.path == "/a" else "b"


def _ack(state: Path) -> tuple[float, list[str]]:
    from siderod.service.control import request_once

    deadline = time.monotonic() + START_TIMEOUT_SECONDS
    while True:
        try:
            result = request_once(state / "control.sock", {"op": "ack", "target": ACKED},
                                  timeout_seconds=10.0)
        except (SiderodError, OSError):
            assert time.monotonic() < deadline, "the service never answered the ack"
            time.sleep(0.05)  # the child is being restarted
            continue
        # Normally only the flip is repeating yet; on a slow machine the limit may be too.
        assert f"{ACKED}|flip-due|2026-12-14T16:04:00Z" in result["acknowledged"], result
        return time.time(), result["acknowledged"]


def test_a_night_of_kills_delivers_every_push_alert_once_and_honours_the_ack(tmp_path):
    fakes = push_child.load_fakes()
    state = tmp_path
    rng = random.Random(20261214)
    with HttpReceiver() as http:
        # The night's clock starts a little after the child is launched, so that its first start
        # (which owes nothing due before it) normally comes before the first alert.
        epoch = time.time() + START_HEAD_START_SECONDS
        kills: list[float] = []
        downs: list[tuple[float, float]] = []  # (killed, started again), real time
        acked_at, acked_events = None, []
        process = _start(state, http.port, epoch)
        first_up_simulated_seconds = (time.time() - epoch) * SPEED
        kill_times = sorted(epoch + rng.uniform(1.0, 9.0) for _ in range(KILLS))
        end_real = epoch + (push_child.FIRST_FLIP_SECONDS + COUNT * push_child.FLIP_SPACING_SECONDS
                            + push_child.LIMIT_AFTER_SECONDS + 5 * 60) / SPEED
        while time.time() < end_real:
            if acked_at is None and any(_title(r).startswith(f"{ACKED}: meridian flip due now")
                                        for r in http.delivered()):
                acked_at, acked_events = _ack(state)
            if kill_times and time.time() >= kill_times[0]:
                kill_times.pop(0)
                kills.append(_kill(process))
                process = _start(state, http.port, epoch)
                downs.append((kills[-1], time.time()))
            time.sleep(0.02)  # real time on purpose: a real process is being killed and restarted
        process.send_signal(signal.SIGTERM)
        assert process.wait(timeout=20) == 0, (state / "child.err").read_text()[-3000:]
        process.stdout.close()
        received = http.delivered()

    assert acked_at is not None, "the acknowledged flip was never given"
    assert len(kills) == KILLS
    first_up_utc = fakes.NIGHT_START_UTC + timedelta(seconds=first_up_simulated_seconds)
    config = push_child.config(fakes, COUNT)
    agenda = fakes.FixedAgenda(None, None, tuple(push_child.events(fakes, COUNT)))
    planned = plan_alerts(agenda, config, muted={}, now_utc=fakes.NIGHT_START_UTC) + plan_repeats(
        agenda, config, muted={}, now_utc=fakes.NIGHT_START_UTC)
    phrases = {"flip-due": "meridian flip due now", "tracking-limit": "tracking limit now"}
    stopped = tuple(f"{ACKED}: {phrases[e.split('|')[1]]} (repeat " for e in acked_events)
    for destination in ("a", "b"):
        got = [r for r in received if _destination(r) == destination]
        titles = [_title(r) for r in got]
        # After the ack, no repeat of that flip (one already being sent may just land).
        late = [r for r in got
                if _title(r).startswith(stopped) and r.arrived_unix > acked_at + IN_FLIGHT_SECONDS]
        assert not late, [_title(r) for r in late]
        acked_titles = {t for t in titles if t.startswith(stopped)}
        # A first start owes nothing due before it: on a slow machine the first alerts may go.
        before_start = {a.title for a in planned if a.due_utc <= first_up_utc}
        expected = {a.title for a in planned if not a.title.startswith(stopped)} | acked_titles
        assert expected - before_start <= set(titles) <= expected, (
            f"{destination}: lost {expected - before_start - set(titles)}, extra {set(titles) - expected}")
        # Exactly once, but for an alert the destination had taken just before a kill.
        crash_window = set()
        for killed_at in kills:
            before = [r for r in got if r.arrived_unix <= killed_at]
            if before:
                crash_window.add(_title(before[-1]))
        twice = {t for t in titles if titles.count(t) > 1}
        assert twice <= crash_window, f"{destination}: repeated outside the window: {twice - crash_window}"
        thrice = {t: [round(r.arrived_unix - epoch, 3) for r in got if _title(r) == t]
                  for t in titles if titles.count(t) > 2}
        assert not thrice, (thrice, [round(k - epoch, 3) for k in kills])
    # The restarts did happen in the middle of the night.
    assert (state / "child.err").read_text().count("siderod service running") == KILLS + 1
    # An alert that fell due while the service was down arrives after the restart, marked late.
    # (How many fall due then depends on how fast the machine restarts a Python process.)
    def real_due(alert) -> float:
        return epoch + (alert.due_utc - fakes.NIGHT_START_UTC).total_seconds() / SPEED
    due_while_down = [a for a in planned if not a.title.startswith(stopped)
                      and any(killed < real_due(a) < up - 0.5 for killed, up in downs)]
    if due_while_down:
        late_marked = [r for r in received if r.json()["title"].startswith("[late ")]
        assert late_marked, [a.title for a in due_while_down]
