"""Gaps in the service's own progress and its first-start promise (issue 14 items 2 and 3).

A SIGSTOP (Ctrl-Z, a paused virtual machine, a frozen cgroup) moves wall and monotonic time
together, so the wall-versus-monotonic watch cannot see it; the loop simply runs late. Under
FakeClock that is ``clock.stall(seconds)``: both clocks move and nobody is woken until the loop
runs again. The real APScheduler adapter is tested with a real blocked event loop.
"""

from __future__ import annotations

import asyncio
import time
from datetime import UTC, datetime, timedelta

import pytest
from helpers import service_fakes as fakes

from siderod.common.clock import FakeClock
from siderod.common.model import ClockHealth, Event, EventKind, PlannedAlert, Urgency
from siderod.plan.planner import alert_key
from siderod.service.ledger import Ledger
from siderod.service.scheduling import APSchedulerAdapter, ClockScheduler

# The service's clock-watch period (daemon default).
ANOMALY_PERIOD_SECONDS = 2.0
# The case: a 1-minute grace and a stop of 30-120 s.
GRACE_MINUTES = 1.0
STALL_SECONDS = 100.0
# How long a real blocked loop holds up the adapter; above its 1 s misfire grace on purpose.
BLOCK_SECONDS = 1.5
FIRE_TIMEOUT_SECONDS = 3.0  # bounds a failure only
LATE_MARK_SECONDS = 30.0  # the service's late mark (daemon.LATE_MARK_SECONDS)


def _events(count: int, spacing_seconds: float, first_offset_seconds: float):
    return [
        Event(fakes.NIGHT_START_UTC + timedelta(seconds=first_offset_seconds + i * spacing_seconds),
              EventKind.CULMINATION, f"T{i:03d}", 60.0, 180.0, hour_angle_hours=0.0)
        for i in range(count)
    ]


def _service(ledger_path, clock, config, events, channels):
    from siderod.service.daemon import Service

    return Service(
        lambda: config, clock, lambda on_due: ClockScheduler(on_due, clock), channels,
        ledger_path=ledger_path, agenda_source=fakes.FixedAgendaSource(events), control=False, env={},
        offload_planning=False, file_poll_seconds=0, anomaly_period_seconds=ANOMALY_PERIOD_SECONDS,
        clock_health_reader=lambda: ClockHealth(state="unknown"),
    )


def _config(count):
    return fakes.make_config(targets=tuple(f"T{i:03d}" for i in range(count)),
                             lead_minutes={EventKind.CULMINATION: (0.0,)}, grace_minutes=GRACE_MINUTES)


@pytest.mark.slow
async def test_a_stall_is_noticed_and_every_alert_is_late_or_recorded_missed(tmp_path):
    """Item 2: a 100 s stop over six alerts: each is delivered late and marked, or missed and reported."""
    count = 6
    events, config = _events(count, 15.0, 60.0), _config(count)
    clock = FakeClock(fakes.NIGHT_START_UTC)
    recorder = fakes.RecordingChannel(clock, "log")
    service = _service(tmp_path / "ledger.sqlite3", clock, config, events, [recorder])
    task = await fakes.run_service_until(service, clock, fakes.NIGHT_START_UTC + timedelta(seconds=55),
                                         step_seconds=1.0)
    clock.stall(STALL_SECONDS)  # the process is stopped: both clocks move, nothing runs
    snapshot = service.snapshot()
    assert all(a.due_utc >= snapshot.taken_utc for a in snapshot.next_alerts), "no past alert listed as next"
    await clock.advance(ANOMALY_PERIOD_SECONDS + 1.0)  # SIGCONT, and one watch period
    assert any(a.kind == "stall" for a in service.anomalies), "the watch saw the loop run late"
    await fakes.stop_service(service, task)

    resumed_utc = fakes.NIGHT_START_UTC + timedelta(seconds=55 + STALL_SECONDS)
    summaries = "\n".join(m.body for m in recorder.service_messages)
    with Ledger(tmp_path / "ledger.sqlite3") as ledger:
        states = {r.key.split("|")[0]: r.state for r in ledger.rows()}
    for event in events:
        name = event.target
        late_seconds = (resumed_utc - event.time_utc).total_seconds()
        got = [r for r in recorder.received if r.message.key.startswith(name + "|")]
        if late_seconds > GRACE_MINUTES * 60:
            assert got == [] and states[name] == "missed" and name in summaries, name
        else:
            assert len(got) == 1 and states[name] == "delivered", name
            marked = got[0].message.title.startswith("[late ")
            assert marked == (late_seconds > LATE_MARK_SECONDS), got[0].message.title


@pytest.mark.slow
async def test_the_scheduler_never_drops_a_job_that_fires_late():
    """Item 2: APScheduler's own misfire check dropped what a stopped loop fired late; it must run."""
    fired: list[str] = []
    adapter = APSchedulerAdapter(fired.append, misfire_grace_seconds=1.0)
    await adapter.start()
    try:
        now = datetime.now(UTC)
        event = Event(now + timedelta(seconds=0.2), EventKind.CULMINATION, "T000", 60.0, 180.0)
        alert = PlannedAlert(key=alert_key(event, 0), event=event, lead_minutes=0.0, due_utc=event.time_utc,
                             urgency=Urgency.NORMAL, title="T000 culminates now", body="")
        adapter.replace_jobs([alert])
        time.sleep(BLOCK_SECONDS)  # the loop is held up past the due time plus the misfire grace
        async with asyncio.timeout(FIRE_TIMEOUT_SECONDS):
            while not fired:
                await asyncio.sleep(0.01)
        assert fired == [alert.key]
    finally:
        await adapter.shutdown()


@pytest.mark.slow
async def test_the_first_start_floor_survives_a_restart(tmp_path):
    """Item 3: a kill 43 s into a new ledger must not make the restart deliver what was due before."""
    count = 8
    # Four alerts due in the 4 minutes before the first start, four after it.
    events, config = _events(count, 60.0, -240.0), fakes.make_config(
        targets=tuple(f"T{i:03d}" for i in range(count)), lead_minutes={EventKind.CULMINATION: (0.0,)},
        grace_minutes=10.0)
    ledger_path = tmp_path / "ledger.sqlite3"
    clock = FakeClock(fakes.NIGHT_START_UTC)
    first = fakes.RecordingChannel(clock, "log")
    service = _service(ledger_path, clock, config, events, [first])
    task = await fakes.run_service_until(service, clock, fakes.NIGHT_START_UTC + timedelta(seconds=43))
    await fakes.stop_service(service, task)
    await clock.advance(10.0)
    second = fakes.RecordingChannel(clock, "log")
    service = _service(ledger_path, clock, config, events, [second])
    task = await fakes.run_service_until(service, clock, fakes.NIGHT_START_UTC + timedelta(minutes=5))
    await fakes.stop_service(service, task)
    got = first.alert_keys + second.alert_keys
    assert [k.split("|")[0] for k in got] == ["T004", "T005", "T006", "T007"]
