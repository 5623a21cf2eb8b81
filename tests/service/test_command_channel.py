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
