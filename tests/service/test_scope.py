"""State from another configuration: mutes and owed or missed alerts of targets that no longer exist.

Run one configuration, mute a target, stop; start again on a configuration without that target,
after its alerts fell due. The old target's mute and alerts must not surface (status, the missed
summary), and the log says what was dropped.
"""

from __future__ import annotations

import logging
from datetime import timedelta

from helpers import service_fakes as fakes

from siderod.common.clock import FakeClock
from siderod.service.scheduling import ClockScheduler


def _service(tmp_path, clock, config, channels):
    from siderod.common.model import ClockHealth
    from siderod.service.daemon import Service

    return Service(lambda: config, clock, lambda on_due: ClockScheduler(on_due, clock), channels,
                   ledger_path=tmp_path / "ledger.sqlite3",
                   agenda_source=fakes.FixedAgendaSource(fakes.synthetic_night(("NGC 1001", "NGC 1002"))),
                   control=False, env={}, offload_planning=False, file_poll_seconds=0,
                   clock_health_reader=lambda: ClockHealth(state="synchronised"))


async def test_a_new_configuration_drops_the_old_targets_mutes_and_missed_alerts(tmp_path, caplog):
    clock = FakeClock(start_utc=fakes.NIGHT_START_UTC)
    both = fakes.make_config(("NGC 1001", "NGC 1002"), horizon_hours=16.0)
    first = fakes.RecordingChannel(clock)
    service = _service(tmp_path, clock, both, [first])
    task = await fakes.run_service_until(service, clock, fakes.NIGHT_START_UTC + timedelta(minutes=1))
    await service.mute("NGC 1002", None)
    await fakes.stop_service(service, task)

    # Later, past the old target's alerts and their grace, on a configuration without it.
    clock.jump(timedelta(hours=6).total_seconds())
    only = fakes.make_config(("NGC 1001",), horizon_hours=16.0, path="other.toml")
    second = fakes.RecordingChannel(clock)
    service = _service(tmp_path, clock, only, [second])
    with caplog.at_level(logging.INFO, logger="siderod.service"):
        task = await fakes.run_service_until(service, clock, clock.now_utc() + timedelta(minutes=1))
        snapshot = service.snapshot()
        await fakes.stop_service(service, task)
    assert "NGC 1002" not in snapshot.muted
    summaries = [m for m in second.service_messages if "missed" in m.title]
    assert not any("NGC 1002" in m.body for m in summaries)
    assert any("NGC 1001" in m.body for m in summaries)  # the target that still exists is reported
    text = caplog.text
    assert "NGC 1002" in text and "other.toml" in text and "dropped" in text
