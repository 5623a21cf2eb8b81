"""Desktop notifications over a REAL private session bus, to a recording notification service.

The bus is ``dbus-daemon`` with a minimal configuration (no service directories, so nothing on a
developer's desktop can be activated); the notification service is tests/helpers/notify_server.py
run as its own process, so the hung-server case can SIGSTOP it.
"""

from __future__ import annotations

import asyncio
import json
import logging
import signal
import subprocess
import tempfile
import time
from datetime import timedelta
from pathlib import Path

import pytest
from helpers.session_bus import BUS_CONFIG as _BUS_CONFIG
from helpers.session_bus import START_TIMEOUT_SECONDS, read_first_line, start_notify_server, stop_process

from siderod.common.model import EventKind, Urgency
from siderod.service.delivery import AlertMessage, ChannelFailed, DesktopChannel, LogChannel

pytestmark = [pytest.mark.slow, pytest.mark.needs_dbus]

SEND_TIMEOUT_SECONDS = 0.5  # short in tests; 5 s in production
# A bounded send gives up within its timeout plus event-loop slack.
BOUNDED_SLACK_SECONDS = 1.0



@pytest.fixture
def session_bus(tool, monkeypatch):
    """A private dbus-daemon; DBUS_SESSION_BUS_ADDRESS points at it. Yields the address."""
    dbus_daemon = tool("dbus-daemon")
    # A short directory: unix socket paths are limited to 107 bytes.
    with tempfile.TemporaryDirectory(prefix="sdbus", dir="/tmp") as directory:
        config = Path(directory) / "bus.conf"
        config.write_text(_BUS_CONFIG.format(dir=directory))
        process = subprocess.Popen(
            [dbus_daemon, f"--config-file={config}", "--nofork", "--print-address=1"],
            stdout=subprocess.PIPE,
            stderr=subprocess.DEVNULL,  # "Failed to set fd limit" without CAP_SYS_RESOURCE: harmless
        )
        try:
            address = read_first_line(process, "dbus-daemon")
            monkeypatch.setenv("DBUS_SESSION_BUS_ADDRESS", address)
            yield address
        finally:
            process.kill()
            process.wait()
            process.stdout.close()


@pytest.fixture
def notify_server(session_bus, tmp_path):
    """The recording notification service. Yields (process, record file)."""
    record = tmp_path / "notify.jsonl"
    process = start_notify_server(record, session_bus)
    try:
        yield process, record
    finally:
        stop_process(process)


def _records(path: Path) -> list[dict]:
    return [json.loads(line) for line in path.read_text().splitlines()] if path.exists() else []


def _message(title="NGC 1001: meridian flip due now", urgency=Urgency.CRITICAL, key=None) -> AlertMessage:
    # One key per title unless given: a key is one alert, and a repeat of a key is the same alert.
    return AlertMessage(key=key or f"k|{title}", title=title,
                        body="At 21:13:05 GMT (21:13:05 UTC)\nHour angle +0h05m00s",
                        urgency=urgency)


async def test_desktop_channel_sends_summary_body_and_urgency(notify_server):
    _, record = notify_server
    channel = DesktopChannel(send_timeout_seconds=5.0)
    try:
        await channel.send(_message())
        await channel.send(_message("NGC 1002 culminates now", Urgency.LOW))
    finally:
        await channel.close()
    got = _records(record)
    assert [g["summary"] for g in got] == ["NGC 1001: meridian flip due now", "NGC 1002 culminates now"]
    assert got[0]["body"] == "At 21:13:05 GMT (21:13:05 UTC)\nHour angle +0h05m00s"
    # D-Bus urgency hint: 0 low, 1 normal, 2 critical (Desktop Notifications Specification).
    assert [g["hints"]["urgency"] for g in got] == [2, 0]
    assert got[0]["app_name"] == "siderod"
    assert got[0]["app_icon"] == "", "no icon file from inside site-packages"


async def test_no_notification_server_fails_fast_and_clearly(session_bus, caplog):
    channel = DesktopChannel(send_timeout_seconds=5.0)
    started = time.monotonic()
    with caplog.at_level(logging.WARNING), pytest.raises(ChannelFailed, match="not accepted"):
        await channel.send(_message())
    await channel.close()
    assert time.monotonic() - started < 5.0


async def test_no_bus_at_all_fails_fast(monkeypatch, tmp_path):
    monkeypatch.setenv("DBUS_SESSION_BUS_ADDRESS", f"unix:path={tmp_path}/no-such-bus")
    channel = DesktopChannel(send_timeout_seconds=5.0)
    with pytest.raises(ChannelFailed, match="not accepted"):
        await channel.send(_message())
    await channel.close()


async def test_hung_server_is_bounded_and_recovers(notify_server):
    process, record = notify_server
    channel = DesktopChannel(send_timeout_seconds=SEND_TIMEOUT_SECONDS)
    try:
        await channel.send(_message("before the hang"))  # an already-connected notifier ...
        process.send_signal(signal.SIGSTOP)  # ... would wait forever on a hung server
        started = time.monotonic()
        with pytest.raises(ChannelFailed, match="did not answer"):
            await channel.send(_message("during the hang"))
        assert time.monotonic() - started < SEND_TIMEOUT_SECONDS + BOUNDED_SLACK_SECONDS
        # A fresh notifier is bounded too (dbus-fast's own introspection timeout is 30 s).
        started = time.monotonic()
        with pytest.raises(ChannelFailed, match="did not answer"):
            await channel.send(_message("still hung"))
        assert time.monotonic() - started < SEND_TIMEOUT_SECONDS + BOUNDED_SLACK_SECONDS
        process.send_signal(signal.SIGCONT)
        await channel.send(_message("after the hang"))  # rebuilt notifier works again
    finally:
        await channel.close()
    summaries = [g["summary"] for g in _records(record)]
    assert summaries[0] == "before the hang" and summaries[-1] == "after the hang"


async def _service_with(tmp_path, channels, clock):
    fakes = _load_fakes()
    from siderod.service.daemon import Service
    from siderod.service.scheduling import ClockScheduler

    config = fakes.make_config(targets=("NGC 1001",), lead_minutes={EventKind.FLIP_DUE: (0.0,)})
    event = next(e for e in fakes.synthetic_night(("NGC 1001",)) if e.kind is EventKind.FLIP_DUE)
    service = Service(
        lambda: config, clock, lambda on_due: ClockScheduler(on_due, clock), channels,
        ledger_path=tmp_path / "ledger.sqlite3", agenda_source=fakes.FixedAgendaSource([event]),
        control=False, env={}, offload_planning=False, file_poll_seconds=0,
        clock_health_reader=lambda: __import__(
            "siderod.common.model").common.model.ClockHealth(state="unknown"),
    )
    return service, event


def _load_fakes():
    from helpers import service_fakes

    return service_fakes


async def _run_until_delivered(service, clock, due_utc, done) -> asyncio.Task:
    """Run the service past ``due_utc`` (fake time), then wait in real time for the D-Bus side."""
    fakes = _load_fakes()
    task = await fakes.run_service_until(service, clock, due_utc + timedelta(seconds=1))
    deadline = time.monotonic() + START_TIMEOUT_SECONDS
    while not done() and time.monotonic() < deadline:
        await asyncio.sleep(0.01)  # real I/O on the bus: the one place these tests wait
    return task


async def test_service_alert_reaches_the_bus(notify_server, tmp_path):
    from siderod.common.clock import FakeClock

    fakes = _load_fakes()
    process, record = notify_server
    clock = FakeClock(fakes.NIGHT_START_UTC)
    channels = [LogChannel(), DesktopChannel(send_timeout_seconds=5.0)]
    service, event = await _service_with(tmp_path, channels, clock)
    task = await _run_until_delivered(service, clock, event.time_utc, lambda: bool(_records(record)))
    snapshot = service.snapshot()
    await fakes.stop_service(service, task)
    got = _records(record)
    assert len(got) == 1
    assert got[0]["summary"] == "NGC 1001: meridian flip due now"
    body = got[0]["body"]
    assert "UTC" in body and "Hour angle +0h05m00s" in body and "Altitude 73.5°" in body
    assert got[0]["hints"]["urgency"] == 2  # flip-due is critical by default
    assert all(c.healthy for c in snapshot.channels)


async def test_service_with_hung_server_keeps_delivering_elsewhere(notify_server, tmp_path, caplog):
    from siderod.common.clock import FakeClock

    fakes = _load_fakes()
    process, record = notify_server
    process.send_signal(signal.SIGSTOP)
    clock = FakeClock(fakes.NIGHT_START_UTC)
    recorder = fakes.RecordingChannel(clock)
    desktop = DesktopChannel(send_timeout_seconds=SEND_TIMEOUT_SECONDS)
    service, event = await _service_with(tmp_path, [recorder, desktop], clock)
    with caplog.at_level(logging.WARNING, logger="siderod"):
        task = await _run_until_delivered(
            service, clock, event.time_utc,
            lambda: not {c.name: c for c in service.snapshot().channels}["desktop"].healthy,
        )
    snapshot = service.snapshot()
    assert not task.done(), "the service is still running"
    await fakes.stop_service(service, task)
    assert len(recorder.alert_keys) == 1, "the other channel delivered"
    desktop_health = {c.name: c for c in snapshot.channels}["desktop"]
    assert not desktop_health.healthy and "did not answer" in desktop_health.last_error
    assert any("channel desktop failed" in r.getMessage() for r in caplog.records)


async def test_a_hung_server_shows_each_alert_once_however_often_it_is_retried(notify_server):
    """Issue 14 item 7: a send that timed out had in fact reached the queue of the hung server; each
    retry queued another copy, and the user saw the alert 3-4 times once the server came back."""
    process, record = notify_server
    channel = DesktopChannel(send_timeout_seconds=SEND_TIMEOUT_SECONDS)
    flip = _message("M42: meridian flip due now", key="M42|flip-due|2026-12-14T21:13:05Z|0")
    try:
        await channel.send(_message("before the hang"))
        process.send_signal(signal.SIGSTOP)
        for _ in range(3):  # the first try and two retries, all while the server hangs
            with pytest.raises(ChannelFailed, match="did not answer"):
                await channel.send(flip)
        process.send_signal(signal.SIGCONT)
        await channel.send(flip)  # the retry after the hang: the server has shown the first copy
        await channel.send(_message("after the hang"))
    finally:
        await channel.close()
    summaries = [g["summary"] for g in _records(record)]
    assert summaries == ["before the hang", flip.title, "after the hang"]


async def test_a_replaced_server_gets_the_alert_the_hung_one_never_showed(notify_server, session_bus,
                                                                          tmp_path):
    """The other half of item 7: if the hung server is gone, its queued copy went with it; send again."""
    process, record = notify_server
    channel = DesktopChannel(send_timeout_seconds=SEND_TIMEOUT_SECONDS)
    flip = _message("M42: meridian flip due now", key="M42|flip-due|2026-12-14T21:13:05Z|0")
    second_record = tmp_path / "second.jsonl"
    second = None
    try:
        process.send_signal(signal.SIGSTOP)
        with pytest.raises(ChannelFailed, match="did not answer"):
            await channel.send(flip)
        process.kill()
        process.wait()
        second = start_notify_server(second_record, session_bus, what="second notify_server")
        await channel.send(flip)
    finally:
        await channel.close()
        if second is not None:
            stop_process(second)
    assert [g["summary"] for g in _records(second_record)] == [flip.title]


async def test_a_server_that_showed_the_alert_before_it_was_replaced_gets_no_second_copy(
        notify_server, session_bus, tmp_path):
    """Found by the fault harness: the hung server came back and showed the alert, then was replaced
    before the retry; the retry must not send it again to the new one."""
    process, record = notify_server
    channel = DesktopChannel(send_timeout_seconds=SEND_TIMEOUT_SECONDS)
    flip = _message("M42: meridian flip due now", key="M42|flip-due|2026-12-14T21:13:05Z|0")
    second_record = tmp_path / "second.jsonl"
    second = None
    try:
        await channel.send(_message("before the hang"))
        process.send_signal(signal.SIGSTOP)
        with pytest.raises(ChannelFailed, match="did not answer"):
            await channel.send(flip)
        process.send_signal(signal.SIGCONT)
        deadline = time.monotonic() + START_TIMEOUT_SECONDS
        while flip.title not in [g["summary"] for g in _records(record)]:
            assert time.monotonic() < deadline, "the server did not show the queued alert"
            await asyncio.sleep(0.01)
        process.kill()
        process.wait()
        second = start_notify_server(second_record, session_bus, what="second notify_server")
        await channel.send(flip)  # the retry: the first server answered, so nothing is sent
    finally:
        await channel.close()
        if second is not None:
            stop_process(second)
    assert [g["summary"] for g in _records(record)] == ["before the hang", flip.title]
    assert _records(second_record) == []
