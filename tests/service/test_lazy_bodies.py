"""Alert bodies are written when an alert is given, not for every alert of a plan.

A body (event time in two zones, hour angle, altitude, cautions) is most of an alert's text and
memory; a plan of 10,000 targets holds 60,000 alerts, of which `status` shows twenty. The expected
text comes from the planner's own formatting (plan_alerts and plan_repeats with bodies), so the
test checks only *when* it is made, not what it says.
"""

from __future__ import annotations

import sqlite3
from datetime import timedelta

from helpers import service_fakes as fakes

from siderod.common.clock import FakeClock
from siderod.plan.planner import plan_alerts, plan_repeats
from siderod.service.protocol import snapshot_from_json, snapshot_to_json
from siderod.service.scheduling import ClockScheduler


def _service(tmp_path, clock, config, channels):
    from siderod.service.daemon import Service

    return Service(
        lambda: config, clock, lambda on_due: ClockScheduler(on_due, clock), channels,
        ledger_path=tmp_path / "ledger.sqlite3",
        agenda_source=fakes.FixedAgendaSource(fakes.synthetic_night()),
        control=False, env={}, offload_planning=False, file_poll_seconds=0, anomaly_period_seconds=10.0,
        clock_health_reader=_health,
    )


def _health():
    from siderod.common.model import ClockHealth

    return ClockHealth(state="synchronised", estimated_error_seconds=0.001)


async def test_bodies_are_made_when_given_and_for_status_not_for_the_whole_plan(tmp_path):
    clock = FakeClock(fakes.NIGHT_START_UTC + timedelta(hours=2))  # NGC 1001 flips at 18:18:03
    config = fakes.make_config(horizon_hours=16.0, repeat_minutes=2.0)
    recorder = fakes.RecordingChannel(clock)
    service = _service(tmp_path, clock, config, [recorder])
    task = await fakes.run_service_until(service, clock, clock.now_utc())
    assert service._plan and not any(a.body for a in service._plan.values())
    agenda = fakes.FixedAgenda(None, None, fakes.synthetic_night())
    full = {a.key: a for a in plan_alerts(agenda, config, muted={}, now_utc=fakes.NIGHT_START_UTC)
            + plan_repeats(agenda, config, muted={}, now_utc=fakes.NIGHT_START_UTC)}

    shown = snapshot_from_json(snapshot_to_json(service.snapshot())).next_alerts
    assert shown and all(a.body == full[a.key].body for a in shown)

    end_utc = clock.now_utc() + timedelta(minutes=25)
    while clock.now_utc() < end_utc:
        await clock.advance(60.0)
    given = [r.message for r in recorder.received if r.message.key in full]
    assert any("(repeat" in m.title for m in given) and any("(repeat" not in m.title for m in given)
    assert all(m.body == full[m.key].body for m in given)
    await fakes.stop_service(service, task)
    with sqlite3.connect(tmp_path / "ledger.sqlite3") as db:
        rows = dict(db.execute("SELECT key, body FROM alerts WHERE state != 'planned'"))
    assert rows and all(rows[m.key] == full[m.key].body for m in given)
