"""The desktop's Acknowledge button, pressed for real: a private session bus, the recording
notification service (tests/helpers/notify_server.py) emitting ActionInvoked as a desktop does
when its button is clicked, and the service stopping the repeats of that alert.
"""

from __future__ import annotations

import asyncio
import json
import subprocess
import tempfile
import time
from datetime import timedelta
from pathlib import Path

import pytest
from helpers import service_fakes as fakes
from helpers.session_bus import BUS_CONFIG as _BUS_CONFIG
from helpers.session_bus import read_first_line, start_notify_server, stop_process

from siderod.common.clock import FakeClock
from siderod.common.model import ClockHealth, Event, EventKind
from siderod.service.delivery import ACKNOWLEDGE_BUTTON, CRITICAL_SOUND_NAME, DesktopChannel
from siderod.service.scheduling import ClockScheduler

pytestmark = [pytest.mark.slow, pytest.mark.needs_dbus]

BUS_WAIT_SECONDS = 30.0  # the longest real wait for something to cross the bus (a loaded machine)
FLIP_UTC = fakes.NIGHT_START_UTC + timedelta(minutes=5)



@pytest.fixture
def desktop(tool, monkeypatch, tmp_path):
    """A private bus and the recording notification service taking commands. Yields (process, record)."""
    dbus_daemon = tool("dbus-daemon")
    with tempfile.TemporaryDirectory(prefix="sdbus", dir="/tmp") as directory:  # short: socket path limit
        config = Path(directory) / "bus.conf"
        config.write_text(_BUS_CONFIG.format(dir=directory))
        bus = subprocess.Popen([dbus_daemon, f"--config-file={config}", "--nofork", "--print-address=1"],
                               stdout=subprocess.PIPE, stderr=subprocess.DEVNULL)
        server = None
        try:
            address = read_first_line(bus, "dbus-daemon")
            monkeypatch.setenv("DBUS_SESSION_BUS_ADDRESS", address)
            record = tmp_path / "notify.jsonl"
            server = start_notify_server(record, address, commands=True)
            yield server, record
        finally:
            for process in (server, bus):
                if process is not None:
                    stop_process(process)


def _records(path: Path) -> list[dict]:
    return [json.loads(line) for line in path.read_text().splitlines()] if path.exists() else []


def _service(tmp_path, clock, channels, *, repeat_minutes=2.0):
    from siderod.service.daemon import Service

    config = fakes.make_config(targets=("M42", "M31"), lead_minutes={EventKind.FLIP_DUE: (0.0,),
                                                                     EventKind.CULMINATION: (0.0,)},
                               repeat_minutes=repeat_minutes)
    events = [Event(FLIP_UTC, EventKind.FLIP_DUE, "M42", 30.0, 180.0, hour_angle_hours=0.0),
              Event(FLIP_UTC, EventKind.CULMINATION, "M31", 70.0, 180.0, hour_angle_hours=0.0)]
    return Service(
        lambda: config, clock, lambda on_due: ClockScheduler(on_due, clock), channels,
        ledger_path=tmp_path / "ledger.sqlite3", agenda_source=fakes.FixedAgendaSource(events),
        control=False, env={}, offload_planning=False, file_poll_seconds=0, anomaly_period_seconds=600.0,
        clock_health_reader=lambda: ClockHealth(state="unknown"),
    )


async def _until(condition, what: str) -> None:
    deadline = time.monotonic() + BUS_WAIT_SECONDS
    while not condition():
        assert time.monotonic() < deadline, f"timed out waiting for {what}"
        await asyncio.sleep(0.01)  # real I/O across the bus: the one place this test waits


async def test_pressing_acknowledge_on_the_desktop_stops_the_repeats(desktop, tmp_path):
    server, record = desktop
    clock = FakeClock(fakes.NIGHT_START_UTC)
    service = _service(tmp_path, clock, [DesktopChannel(send_timeout_seconds=20.0)])
    task = await fakes.run_service_until(service, clock, FLIP_UTC + timedelta(seconds=1))
    await _until(lambda: len(_records(record)) == 2, "the flip and the culmination")
    flip, culmination = sorted(_records(record), key=lambda r: "flip" not in r["summary"])
    assert flip["summary"] == "M42: meridian flip due now" and flip["hints"]["urgency"] == 2
    assert ACKNOWLEDGE_BUTTON in flip["actions"]
    assert flip["hints"]["sound-name"] == CRITICAL_SOUND_NAME
    assert ACKNOWLEDGE_BUTTON not in culmination["actions"] and "sound-name" not in culmination["hints"]

    await clock.advance(120.0)  # the first repeat
    await _until(lambda: len(_records(record)) == 3, "the first repeat")
    assert _records(record)[-1]["summary"] == "M42: meridian flip due now (repeat 1)"
    # A person presses seconds later; here, wait until the service has the notification's id
    # back (the send returned), or the press could overtake the reply that names the notification.
    await _until(lambda: any(d.ok and d.title.endswith("(repeat 1)")
                             for d in service.snapshot().recent_deliveries), "the first repeat's send")

    server.stdin.write(f"press {ACKNOWLEDGE_BUTTON}\n".encode())
    server.stdin.flush()
    assert read_first_line(server, "notify_server").startswith("pressed ")
    await _until(lambda: service._ledger.acknowledged() == {"M42|flip-due|2026-12-14T16:05:00Z"},
                 "the acknowledgement")
    await _until(lambda: not service.snapshot().awaiting_ack, "the repeats to be planned away")
    for _ in range(5):  # ten more minutes: no repeat comes
        await clock.advance(120.0)
        await asyncio.sleep(0.05)
    await fakes.stop_service(service, task)
    assert len(_records(record)) == 3


async def test_the_critical_sound_can_be_switched_off(desktop, tmp_path):
    _, record = desktop
    clock = FakeClock(fakes.NIGHT_START_UTC)
    service = _service(tmp_path, clock, [DesktopChannel(send_timeout_seconds=20.0, critical_sound=False)],
                       repeat_minutes=0.0)
    task = await fakes.run_service_until(service, clock, FLIP_UTC + timedelta(seconds=1))
    await _until(lambda: len(_records(record)) == 2, "both alerts")
    await fakes.stop_service(service, task)
    flip = next(r for r in _records(record) if "flip" in r["summary"])
    assert "sound-name" not in flip["hints"] and ACKNOWLEDGE_BUTTON in flip["actions"]
