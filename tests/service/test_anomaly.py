"""Clock steps and suspends: late within grace and marked late; beyond grace missed, summarised once."""

from __future__ import annotations

from datetime import UTC, datetime, timedelta

import pytest
from helpers import service_fakes as fakes

from siderod.common.clock import FakeClock
from siderod.common.model import ClockHealth, EventKind
from siderod.plan.planner import plan_alerts
from siderod.service.anomaly import STEP_TOLERANCE_SECONDS, classify_progress
from siderod.service.ledger import Ledger
from siderod.service.scheduling import ClockScheduler

ANOMALY_PERIOD_SECONDS = 2.0  # the service's default check period
# After a step or a suspend the watch notices within one period; delivery follows at once.
DETECT_SECONDS = ANOMALY_PERIOD_SECONDS + 0.5
ON_TIME_SECONDS = 1.0  # the on-time requirement
T0 = datetime(2026, 12, 14, 18, 0, tzinfo=UTC)


# -- the pure classifier ------------------------------------------------------------------------
def test_classify_progress_tells_suspend_step_and_nothing_apart():
    assert classify_progress(2.0, 2.0, 2.0, T0) is None
    assert classify_progress(2.0 + STEP_TOLERANCE_SECONDS / 2, 2.0, None, T0) is None  # NTP slew
    assert classify_progress(3602.0, 2.0, 3602.0, T0).kind == "suspend"
    assert classify_progress(302.0, 2.0, 2.0, T0).kind == "step-forward"
    assert classify_progress(302.0, 2.0, None, T0).kind == "forward"
    back = classify_progress(-598.0, 2.0, 2.0, T0)
    assert back.kind == "step-back" and back.jump_seconds == pytest.approx(-600.0)


# -- the service under steps and suspends -------------------------------------------------------
def _setup(tmp_path, *, start_utc=fakes.NIGHT_START_UTC, grace_minutes=10.0):
    from siderod.service.daemon import Service

    clock = FakeClock(start_utc)
    config = fakes.make_config(grace_minutes=grace_minutes, horizon_hours=8.0)
    events = fakes.synthetic_night()
    recorder = fakes.RecordingChannel(clock)
    ledger_path = tmp_path / "ledger.sqlite3"
    service = Service(
        lambda: config,
        clock,
        lambda on_due: ClockScheduler(on_due, clock),
        [recorder],
        ledger_path=ledger_path,
        agenda_source=fakes.FixedAgendaSource(events),
        control=False,
        env={},
        offload_planning=False,
        file_poll_seconds=0,
        anomaly_period_seconds=ANOMALY_PERIOD_SECONDS,
        clock_health_reader=lambda: ClockHealth(state="unknown"),
    )
    everything = fakes.FixedAgenda(start_utc, start_utc + timedelta(hours=20), events)
    expected = plan_alerts(everything, config, muted={}, now_utc=start_utc)
    return clock, service, recorder, expected, ledger_path


def _first(expected, kind, lead=0.0, after_utc=None):
    return next(a for a in expected if a.event.kind is kind and a.lead_minutes == lead
                and (after_utc is None or a.due_utc > after_utc))


@pytest.mark.slow
async def test_forward_step_over_an_alert_delivers_it_late_and_marked(tmp_path):
    clock, service, recorder, expected, _ = _setup(tmp_path)
    flip = _first(expected, EventKind.FLIP_DUE, lead=0.0)
    task = await fakes.run_service_until(service, clock, flip.due_utc - timedelta(minutes=1))
    clock.jump(4 * 60)  # NTP step forward: the flip is now 3 min overdue, within 10 min grace
    await clock.advance(DETECT_SECONDS)
    await fakes.stop_service(service, task)

    got = [r for r in recorder.received if r.message.key == flip.key]
    assert len(got) == 1
    assert got[0].message.title.startswith("[late 3 min]")
    assert 3 * 60 <= got[0].message.late_seconds <= 3 * 60 + DETECT_SECONDS
    assert service.anomalies and service.anomalies[0].kind == "forward"


@pytest.mark.slow
async def test_backward_step_neither_repeats_nor_fires_early(tmp_path):
    clock, service, recorder, expected, _ = _setup(tmp_path)
    flip10 = _first(expected, EventKind.FLIP_DUE, lead=10.0)
    flip0 = _first(expected, EventKind.FLIP_DUE, lead=0.0)
    # Deliver the 10-minute warning, then step the clock back 15 min: its due time is "ahead" again.
    task = await fakes.run_service_until(service, clock, flip10.due_utc + timedelta(seconds=30))
    assert flip10.key in recorder.alert_keys
    clock.jump(-15 * 60)
    until = flip0.due_utc + timedelta(seconds=5)
    while clock.now_utc() < until:
        await clock.advance(30)
    await fakes.stop_service(service, task)

    assert recorder.alert_keys.count(flip10.key) == 1, "no repeat after the wall clock went back"
    got0 = [r for r in recorder.received if r.message.key == flip0.key]
    assert len(got0) == 1
    assert abs((got0[0].when_utc - flip0.due_utc).total_seconds()) <= ON_TIME_SECONDS, "not early, not late"
    assert service.anomalies[0].kind == "step-back"


@pytest.mark.slow
async def test_suspend_across_a_flip_within_grace_is_late_and_marked(tmp_path):
    clock, service, recorder, expected, _ = _setup(tmp_path)
    flip = _first(expected, EventKind.FLIP_DUE, lead=0.0)
    task = await fakes.run_service_until(service, clock, flip.due_utc - timedelta(minutes=2))
    clock.suspend(8 * 60)  # lid closed for 8 min: resumes 6 min after the flip
    await clock.advance(DETECT_SECONDS)
    await fakes.stop_service(service, task)

    got = [r for r in recorder.received if r.message.key == flip.key]
    assert len(got) == 1
    message = got[0].message
    assert message.title.startswith("[late 6 min]") and "after it was due" in message.body
    assert 6 * 60 <= message.late_seconds <= 6 * 60 + DETECT_SECONDS
    assert recorder.service_messages == []


@pytest.mark.slow
async def test_long_suspend_records_missed_and_summarises_in_one_notification(tmp_path):
    clock, service, recorder, expected, ledger_path = _setup(tmp_path)
    sleep_from = _first(expected, EventKind.CULMINATION).due_utc - timedelta(minutes=1)
    wake_at = sleep_from + timedelta(hours=3)
    grace = timedelta(minutes=10)
    missed = [a for a in expected if sleep_from < a.due_utc < wake_at - grace]
    late_ok = [a for a in expected if wake_at - grace <= a.due_utc <= wake_at]
    after = [a for a in expected if wake_at < a.due_utc <= wake_at + timedelta(hours=2)]
    assert len(missed) >= 3 and after

    task = await fakes.run_service_until(service, clock, sleep_from)
    clock.suspend((wake_at - sleep_from).total_seconds())
    until = wake_at + timedelta(hours=2)
    while clock.now_utc() < until:
        await clock.advance(60)
    await fakes.stop_service(service, task)

    keys = recorder.alert_keys
    assert not set(a.key for a in missed) & set(keys), "beyond grace: not delivered"
    assert all(keys.count(a.key) == 1 for a in late_ok + after)
    summaries = recorder.service_messages
    assert len(summaries) == 1, "one notification summarises every missed alert"
    assert summaries[0].title.startswith(f"{len(missed)} alerts missed")
    for a in missed:
        assert a.title in summaries[0].body
    with Ledger(ledger_path) as ledger:
        assert {r.key for r in ledger.rows("missed")} == {a.key for a in missed}
    on_time = {r.message.key: r.when_utc for r in recorder.received}
    assert all(abs((on_time[a.key] - a.due_utc).total_seconds()) <= ON_TIME_SECONDS for a in after)


# -- catching up after downtime, and not before a first start -----------------------------------
@pytest.mark.slow
async def test_a_first_start_does_not_catch_up_but_a_restart_does(tmp_path):
    """Alerts due shortly before a start are owed only if the service ran before (its ledger exists)."""
    _, _, _, expected, _ = _setup(tmp_path / "probe")
    flip = _first(expected, EventKind.FLIP_DUE, lead=0.0)
    start_utc = flip.due_utc + timedelta(minutes=3)  # within the 10 min grace

    clock, service, recorder, _, _ = _setup(tmp_path / "fresh", start_utc=start_utc)
    task = await fakes.run_service_until(service, clock, start_utc + timedelta(seconds=5))
    await fakes.stop_service(service, task)
    assert flip.key not in {r.message.key for r in recorder.received}  # brand-new ledger: not owed

    earlier_utc = flip.due_utc - timedelta(hours=1)
    clock, service, recorder, _, _ = _setup(tmp_path / "restart", start_utc=earlier_utc)
    task = await fakes.run_service_until(service, clock, earlier_utc + timedelta(minutes=1))
    await fakes.stop_service(service, task)  # it ran, then stopped before the flip was due
    clock, service, recorder, _, _ = _setup(tmp_path / "restart", start_utc=start_utc)
    task = await fakes.run_service_until(service, clock, start_utc + timedelta(seconds=5))
    await fakes.stop_service(service, task)
    got = [r for r in recorder.received if r.message.key == flip.key]
    assert len(got) == 1 and got[0].message.title.startswith("[late 3 min]")
