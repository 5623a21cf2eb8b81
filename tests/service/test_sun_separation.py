"""The service holds target alerts closer to the Sun than [alerts] sun_separation_min, and says why."""

from __future__ import annotations

import logging
from datetime import timedelta

from helpers import service_fakes as fakes

from siderod.common.clock import FakeClock
from siderod.common.model import Event, EventKind
from siderod.service.scheduling import ClockScheduler


async def test_alerts_for_a_target_near_the_sun_are_held_and_logged(tmp_path, caplog):
    from siderod.common.model import ClockHealth
    from siderod.service.daemon import Service

    clock = FakeClock(fakes.NIGHT_START_UTC)
    config = fakes.make_config(targets=("Venus", "NGC 1001"))
    when = fakes.NIGHT_START_UTC + timedelta(hours=1)
    events = [
        Event(when, EventKind.CULMINATION, "Venus", 20.0, 180.0, hour_angle_hours=0.0,
              sun_separation_deg=6.0),
        Event(when + timedelta(minutes=7), EventKind.CULMINATION, "NGC 1001", 50.0, 180.0,
              hour_angle_hours=0.0, sun_separation_deg=15.0),
    ]
    health = ClockHealth(state="synchronised", estimated_error_seconds=0.001)
    recorder = fakes.RecordingChannel(clock)
    service = Service(lambda: config, clock, lambda on_due: ClockScheduler(on_due, clock), [recorder],
                      ledger_path=tmp_path / "ledger.sqlite3",
                      agenda_source=fakes.FixedAgendaSource(events),
                      control=False, env={}, offload_planning=False, file_poll_seconds=0,
                      anomaly_period_seconds=10.0,
                      clock_health_reader=lambda: health)
    with caplog.at_level(logging.INFO, logger="siderod.service"):
        task = await fakes.run_service_until(service, clock, when + timedelta(hours=1), step_seconds=300.0)
        await fakes.stop_service(service, task)
    got = [r.message for r in recorder.received if not r.message.key.startswith("service|")]
    assert [m.key.split("|")[0] for m in got] == ["NGC 1001"]
    assert "15° from the Sun" in got[0].body and "unfiltered" in got[0].body
    assert any("no alerts for Venus: closer than 10° to the Sun" in r.getMessage() for r in caplog.records)
