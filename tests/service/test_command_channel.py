"""The command-hook channel runs a real program: argv filled per alert, no shell, a timeout."""

from __future__ import annotations

import json
import sys
from datetime import UTC, datetime

import pytest

from siderod.common.model import COMMAND_PLACEHOLDERS, Urgency
from siderod.service.delivery import AlertMessage, ChannelFailed, CommandChannel

EVENT_UTC = datetime(2026, 12, 14, 22, 34, 5, tzinfo=UTC)
MESSAGE = AlertMessage(
    key="M45|flip-due|2026-12-14T22:34:05Z|10",
    title="M45: meridian flip due in 10 min",
    body="a body; with $(shell) `characters` and 'quotes'",
    urgency=Urgency.CRITICAL,
    target="M45",
    kind="flip-due",
    event_utc=EVENT_UTC,
    due_utc=datetime(2026, 12, 14, 22, 24, 5, tzinfo=UTC),
    lead_minutes=10.0,
)
# A tiny program that writes its arguments as JSON, so the test sees exactly what it was given.
RECORDER = "import json, sys; open(sys.argv[1], 'w').write(json.dumps(sys.argv[2:]))"


@pytest.mark.slow
async def test_every_placeholder_is_filled_and_nothing_goes_through_a_shell(tmp_path):
    out = tmp_path / "argv.json"
    argv = [sys.executable, "-c", RECORDER, str(out)] + ["{" + name + "}" for name in COMMAND_PLACEHOLDERS]
    channel = CommandChannel(argv, timeout_seconds=20, timezone="Europe/London")
    await channel.send(MESSAGE)
    got = dict(zip(COMMAND_PLACEHOLDERS, json.loads(out.read_text()), strict=True))
    assert got["title"] == MESSAGE.title
    assert got["body"] == MESSAGE.body  # passed through untouched: no shell expansion
    assert got["target"] == "M45" and got["kind"] == "flip-due" and got["urgency"] == "critical"
    assert got["time_utc"] == "2026-12-14T22:34:05Z"
    assert got["time_local"] == "2026-12-14T22:34:05+00:00"  # London is on GMT in December
    assert got["lead_minutes"] == "10" and got["key"] == MESSAGE.key


@pytest.mark.slow
async def test_a_failing_or_missing_or_slow_command_is_a_channel_failure(tmp_path):
    failing = CommandChannel([sys.executable, "-c", "import sys; print('nope'); sys.exit(3)"])
    with pytest.raises(ChannelFailed):
        await failing.send(MESSAGE)
    missing = CommandChannel([str(tmp_path / "no-such-program"), "{title}"])
    with pytest.raises(ChannelFailed, match="cannot run"):
        await missing.send(MESSAGE)
    slow = CommandChannel([sys.executable, "-c", "import time; time.sleep(30)"], timeout_seconds=0.5)
    with pytest.raises(ChannelFailed, match="did not finish"):
        await slow.send(MESSAGE)


def test_an_unknown_placeholder_is_refused_before_anything_runs():
    channel = CommandChannel(["echo", "{when}"])
    with pytest.raises(ChannelFailed, match="bad placeholder"):
        channel.argv_for(MESSAGE)


# Writes the key and the previous-try time it was given, one line per run, and fails on its first
# run for a key ending in "|fail-once" (so the worker retries it).
ENV_RECORDER = (
    "import os, sys; key = os.environ['SIDEROD_ALERT_KEY']; "
    "seen = open(sys.argv[1]).read() if os.path.exists(sys.argv[1]) else ''; "
    "open(sys.argv[1], 'a').write(key + ' ' + os.environ['SIDEROD_PREVIOUS_TRY_UTC'] + chr(10)); "
    "sys.exit(1 if key.endswith('|fail-once') and key not in seen else 0)"
)


class _Sink:
    def __init__(self):
        self.outcomes = []

    def started(self, channel, item, now_utc):
        pass

    def delivered(self, channel, item, sent, now_utc):
        self.outcomes.append(("ok", item.message.key))

    def failed(self, channel, item, sent, now_utc, error):
        self.outcomes.append(("failed", item.message.key))

    def gave_up(self, channel, item, now_utc):
        self.outcomes.append(("gave up", item.message.key))


@pytest.mark.slow
async def test_the_hook_is_told_the_key_and_when_an_earlier_try_began(tmp_path):
    """Issue 14 item 8: a hook cut off by a kill runs again after the restart; it can now tell."""
    import asyncio
    from dataclasses import replace
    from datetime import timedelta

    from siderod.common.clock import FakeClock
    from siderod.service.delivery import ChannelWorker, OwedDelivery

    out = tmp_path / "runs.txt"
    clock = FakeClock(EVENT_UTC)
    sink = _Sink()
    channel = CommandChannel([sys.executable, "-c", ENV_RECORDER, str(out)], timeout_seconds=10.0)
    worker = ChannelWorker(channel, clock, sink, late_mark_seconds=30.0, retry_seconds=5.0)
    killed_run_utc = EVENT_UTC - timedelta(seconds=40)  # a run before a restart began this one
    give_up = EVENT_UTC + timedelta(minutes=10)
    worker.put(OwedDelivery(replace(MESSAGE, key="A|resumed"), EVENT_UTC, give_up,
                            started_utc=killed_run_utc))
    worker.put(OwedDelivery(replace(MESSAGE, key="B|fail-once"), EVENT_UTC, give_up))
    worker.put(OwedDelivery(replace(MESSAGE, key="C|fresh"), EVENT_UTC, give_up))
    task = asyncio.get_running_loop().create_task(worker.run())
    advanced = 0
    try:
        for _ in range(2400):  # real processes: poll; 2 min bounds a failure on a loaded machine
            if len([o for o in sink.outcomes if o[0] == "ok"]) == 3:
                break
            await asyncio.sleep(0.05)
            if sink.outcomes.count(("failed", "B|fail-once")) > advanced:
                advanced += 1
                await clock.advance(5.0)  # the retry wait: B's one failure is followed by one retry
    finally:
        task.cancel()
        await asyncio.gather(task, return_exceptions=True)
    assert out.exists(), sink.outcomes
    lines = out.read_text().splitlines()
    assert lines[0] == "A|resumed 2026-12-14T22:33:25Z"
    assert lines[1] == "B|fail-once "  # a first try: nothing before it
    assert lines[2].startswith("B|fail-once 2026-12-14T22:34:05Z")  # the retry names the first try
    assert lines[3] == "C|fresh "
    assert sorted(o for o in sink.outcomes if o[0] == "ok") == [("ok", "A|resumed"), ("ok", "B|fail-once"),
                                                               ("ok", "C|fresh")]


def test_time_placeholders_round_the_event_to_the_second_as_the_body_does():
    # The body said 21:03:08 (rounded) while {time_local} and {time_utc} said 21:03:07 (cut).
    from dataclasses import replace
    from datetime import UTC, datetime

    from siderod.common.model import Event, EventKind, Site
    from siderod.plan.planner import format_alert

    when = datetime(2026, 12, 14, 21, 3, 7, 600_000, tzinfo=UTC)
    site = Site("Corrie Hill Observatory", 56.2, -3.7, 212.0, "Europe/London")
    event = Event(when, EventKind.CULMINATION, "M31", 70.0, 180.0, hour_angle_hours=0.0)
    _, body = format_alert(event, 0, site)
    assert "21:03:08 GMT" in body
    channel = CommandChannel(["echo", "{time_utc}", "{time_local}"], timezone="Europe/London")
    argv = channel.argv_for(replace(MESSAGE, event_utc=when))
    assert argv[1:] == ["2026-12-14T21:03:08Z", "2026-12-14T21:03:08+00:00"]
