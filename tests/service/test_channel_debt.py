"""Each channel owes its own alerts: in the ledger, on its own worker, late-marked when late.

Issue 14 items 1 (a restart forgets what a failed channel owes), 5 (a hung channel holds back the
others) and 6 (retried alerts are not marked late). Time is a FakeClock; channels record what they
get and when (tests/helpers/service_fakes.py).
"""

from __future__ import annotations

import statistics
from datetime import timedelta

import pytest
from helpers import service_fakes as fakes

from siderod.common.clock import FakeClock
from siderod.common.model import ClockHealth, Event, EventKind
from siderod.plan.planner import plan_alerts
from siderod.service.ledger import Ledger
from siderod.service.scheduling import ClockScheduler

# The measure for a healthy channel beside a hung one: within 100 ms of due (median).
HEALTHY_MEDIAN_SECONDS = 0.1
# Retries run this often in these tests (the service's default is 30 s).
RETRY_SECONDS = 20.0
# The service's late mark (daemon.LATE_MARK_SECONDS).
LATE_MARK_SECONDS = 30.0


def _events(count: int, spacing_seconds: float, first_offset_seconds: float = 60.0):
    return [
        Event(fakes.NIGHT_START_UTC + timedelta(seconds=first_offset_seconds + i * spacing_seconds),
              EventKind.CULMINATION, f"T{i:03d}", 60.0, 180.0, hour_angle_hours=0.0)
        for i in range(count)
    ]


def _config(count: int, grace_minutes: float = 10.0):
    return fakes.make_config(targets=tuple(f"T{i:03d}" for i in range(count)),
                             lead_minutes={EventKind.CULMINATION: (0.0,)}, grace_minutes=grace_minutes)


def _service(ledger_path, clock, config, events, channels):
    from siderod.service.daemon import Service

    return Service(
        lambda: config, clock, lambda on_due: ClockScheduler(on_due, clock), channels,
        ledger_path=ledger_path, agenda_source=fakes.FixedAgendaSource(events), control=False, env={},
        offload_planning=False, file_poll_seconds=0, anomaly_period_seconds=10.0,
        clock_health_reader=lambda: ClockHealth(state="unknown"), retry_seconds=RETRY_SECONDS,
    )


def _expected(config, events):
    return plan_alerts(fakes.FixedAgenda(None, None, tuple(events)), config, muted={},
                       now_utc=fakes.NIGHT_START_UTC)


@pytest.mark.slow
async def test_a_restart_keeps_what_a_failed_channel_owes(tmp_path):
    """Item 1: desktop down, stop and restart within grace: the desktop still gets every alert."""
    count = 6
    events, config = _events(count, 30.0), _config(count)
    expected = [a.key for a in _expected(config, events)]
    ledger_path = tmp_path / "ledger.sqlite3"
    clock = FakeClock(fakes.NIGHT_START_UTC)
    log1 = fakes.RecordingChannel(clock, "log")
    desk1 = fakes.RecordingChannel(clock, "desktop", fail=True)
    service = _service(ledger_path, clock, config, events, [log1, desk1])
    task = await fakes.run_service_until(service, clock, fakes.NIGHT_START_UTC + timedelta(minutes=5),
                                         step_seconds=5.0)
    await fakes.stop_service(service, task)
    assert log1.alert_keys == expected
    assert desk1.received == [] and desk1.attempts > 0

    with Ledger(ledger_path) as ledger:
        assert {r.state for r in ledger.rows()} == {"sending"}, "not closed while the desktop owes them"

    # Restart 2 minutes later with the desktop back: it gets all six, late and marked, the log none again.
    await clock.advance(120.0)
    log2 = fakes.RecordingChannel(clock, "log")
    desk2 = fakes.RecordingChannel(clock, "desktop")
    service = _service(ledger_path, clock, config, events, [log2, desk2])
    task = await fakes.run_service_until(service, clock, clock.now_utc() + timedelta(seconds=10),
                                         step_seconds=1.0)
    await fakes.stop_service(service, task)
    assert log2.alert_keys == []
    assert desk2.alert_keys == expected
    assert all(r.message.title.startswith("[late ") for r in desk2.received if r.message.key in expected)
    with Ledger(ledger_path) as ledger:
        assert {r.state for r in ledger.rows()} == {"delivered"}


@pytest.mark.slow
async def test_a_channel_that_gives_up_past_grace_records_a_miss(tmp_path):
    """Item 1: a give-up past grace is a recorded miss, counted by status and the summary."""
    count = 3
    events, config = _events(count, 30.0), _config(count, grace_minutes=2.0)
    ledger_path = tmp_path / "ledger.sqlite3"
    clock = FakeClock(fakes.NIGHT_START_UTC)
    log = fakes.RecordingChannel(clock, "log")
    desk = fakes.RecordingChannel(clock, "desktop", fail=True)
    service = _service(ledger_path, clock, config, events, [log, desk])
    task = await fakes.run_service_until(service, clock, fakes.NIGHT_START_UTC + timedelta(minutes=8),
                                         step_seconds=5.0)
    snapshot = service.snapshot()
    await fakes.stop_service(service, task)
    assert len(log.alert_keys) == count
    by_name = {c.name: c for c in snapshot.channels}
    assert by_name["desktop"].missed_count == count and by_name["desktop"].owed_count == 0
    assert by_name["log"].missed_count == 0
    summaries = "\n".join(m.body for m in log.service_messages if "missed" in m.title.lower())
    assert all(summaries.count(f"T{i:03d} culminates") == 1 for i in range(count)), summaries
    assert summaries.count("not delivered on desktop") == count
    with Ledger(ledger_path) as ledger:
        assert ledger.channel_counts()["desktop"]["missed"] == count
        # Closed: the log delivered, the desktop gave up.
        assert {r.state for r in ledger.rows()} == {"delivered"}


@pytest.mark.slow
async def test_a_hung_channel_delays_only_itself(tmp_path):
    """Item 5: with the desktop hanging 5 s on every send, the log delivers on time throughout."""
    count = 20
    events, config = _events(count, 2.0), _config(count)
    expected = _expected(config, events)
    clock = FakeClock(fakes.NIGHT_START_UTC)
    log = fakes.RecordingChannel(clock, "log")
    desk = fakes.RecordingChannel(clock, "desktop", hang_seconds=5.0, fail=True)
    service = _service(tmp_path / "ledger.sqlite3", clock, config, events, [log, desk])
    task = await fakes.run_service_until(service, clock, fakes.NIGHT_START_UTC + timedelta(minutes=3),
                                         step_seconds=0.25)
    due = {a.key: a.due_utc for a in expected}
    delays = [(r.when_utc - due[r.message.key]).total_seconds() for r in log.received
              if r.message.key in due]
    assert len(delays) == count
    assert statistics.median(delays) <= HEALTHY_MEDIAN_SECONDS
    assert max(delays) <= 1.0, "not even one alert waited behind the hung channel"
    await fakes.stop_service(service, task)


@pytest.mark.slow
async def test_every_delivery_later_than_the_mark_carries_it_on_retry_too(tmp_path):
    """Item 6: a desktop that fails for 2 minutes then recovers: its retried alerts say late."""
    count = 4
    events, config = _events(count, 10.0), _config(count)
    clock = FakeClock(fakes.NIGHT_START_UTC)
    log = fakes.RecordingChannel(clock, "log")
    desk = fakes.RecordingChannel(clock, "desktop", fail=True)
    service = _service(tmp_path / "ledger.sqlite3", clock, config, events, [log, desk])
    task = await fakes.run_service_until(service, clock, fakes.NIGHT_START_UTC + timedelta(minutes=3),
                                         step_seconds=1.0)
    desk.fail = False
    end = clock.now_utc() + timedelta(seconds=2 * RETRY_SECONDS)
    while clock.now_utc() < end:
        await clock.advance(1.0)
    await fakes.stop_service(service, task)
    got = [r for r in desk.received if not r.message.key.startswith("service|")]
    assert len(got) == count
    due = {a.key: a.due_utc for a in _expected(config, events)}
    for r in got:
        late = (r.when_utc - due[r.message.key]).total_seconds()
        assert late > LATE_MARK_SECONDS
        assert r.message.title.startswith("[late "), r.message.title
        assert r.message.late_seconds == pytest.approx(late, abs=1.0)
