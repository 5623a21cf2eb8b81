"""Critical repeats planned one stretch at a time, under FakeClock: bounded per plan, continued by
every re-plan, and after a stop resumed rather than reported missed (the rule in plan/insist.py).

The expected repeats come from the planner over the whole night (plan_repeats without a stretch),
worked by the rule in siderod.plan.insist; nothing here reads the real clock.
"""

from __future__ import annotations

import asyncio
import sqlite3
from datetime import timedelta

import pytest
from helpers import service_fakes as fakes

from siderod.common.clock import FakeClock
from siderod.plan.planner import plan_repeats

# Every repeat within this of its due time (simulated seconds): the night tests' own bound.
ON_TIME_SECONDS = 1.0
# 2-minute repeats, 120 of them (the cap) after a tracking limit: a 4-hour series, longer than a stretch.
REPEAT_MINUTES = 2.0
REPEAT_COUNT = 500
# Bounds a failure only: the whole plan follows READY=1 within a few loop turns (no time passes).
WAIT_SECONDS = 10.0


def _config():
    return fakes.make_config(horizon_hours=16.0, repeat_minutes=REPEAT_MINUTES, repeat_count=REPEAT_COUNT)


def _whole_night_repeats(config):
    agenda = fakes.FixedAgenda(None, None, fakes.synthetic_night())
    return plan_repeats(agenda, config, muted={}, now_utc=fakes.NIGHT_START_UTC)


async def test_one_plan_holds_the_repeats_of_its_stretch_not_of_the_horizon(tmp_path):
    from siderod.service.daemon import repeat_stretch_minutes

    clock = FakeClock(fakes.NIGHT_START_UTC)
    config = _config()
    service = fakes.simulated_service(tmp_path, clock, config, [fakes.RecordingChannel(clock)])
    task = await fakes.run_service_until(service, clock, clock.now_utc())
    stretch_end = clock.now_utc() + timedelta(minutes=repeat_stretch_minutes(config))
    repeats = [a for a in service._plan.values() if a.repeat_number]
    whole = [a for a in _whole_night_repeats(config) if a.due_utc >= clock.now_utc()]
    assert repeats, "the first flips of the night fall within the first stretch"
    assert max(a.due_utc for a in repeats) <= stretch_end
    assert len(repeats) == sum(a.due_utc <= stretch_end for a in whole) < len(whole)
    # Repeats are not written to the ledger as planned rows: only once claimed (see _deliver).
    with sqlite3.connect(tmp_path / "ledger.sqlite3") as db:
        planned = {k for (k,) in db.execute("SELECT key FROM alerts WHERE state = 'planned'")}
    assert planned and not planned & {a.key for a in repeats}
    await fakes.stop_service(service, task)


@pytest.mark.slow
async def test_repeats_go_on_across_re_plans_once_each_on_time(tmp_path):
    clock = FakeClock(fakes.NIGHT_START_UTC)
    config = _config()
    recorder = fakes.RecordingChannel(clock)
    service = fakes.simulated_service(tmp_path, clock, config, [recorder])
    end_utc = fakes.NIGHT_START_UTC + timedelta(hours=10)
    task = await fakes.run_service_until(service, clock, end_utc, step_seconds=600.0)
    await fakes.stop_service(service, task)
    expected = {a.key: a for a in _whole_night_repeats(config) if a.due_utc < end_utc}
    got = [r for r in recorder.received if r.message.key in expected]
    assert sorted(r.message.key for r in got) == sorted(expected), "every repeat, once"
    # The series outlast several re-plans and stretches (the tracking limit's runs for 4 h).
    first, last = min(a.due_utc for a in expected.values()), max(a.due_utc for a in expected.values())
    assert last - first > timedelta(minutes=3 * config.alerts.replan_minutes)
    for received in got:
        late = (received.when_utc - expected[received.message.key].due_utc).total_seconds()
        assert 0 <= late <= ON_TIME_SECONDS


@pytest.mark.slow
async def test_after_a_stop_repeats_past_their_grace_are_not_missed_and_the_series_resumes(tmp_path):
    clock = FakeClock(fakes.NIGHT_START_UTC + timedelta(hours=2))  # 18:00; NGC 1001 flips at 18:18:03
    config = _config()
    first = fakes.RecordingChannel(clock)
    service = fakes.simulated_service(tmp_path, clock, config, [first])
    stop_utc = fakes.NIGHT_START_UTC + timedelta(hours=2, minutes=21)
    task = await fakes.run_service_until(service, clock, stop_utc)
    await fakes.stop_service(service, task)
    assert any("NGC 1001: meridian flip due now (repeat" in r.message.title for r in first.received)

    # Stopped for 24 minutes: the flip's last repeats and the limit alert (due 18:28:03) and its
    # first repeats pass their 10-minute grace; later repeats of the limit are still within it.
    await clock.advance(24 * 60.0)
    restart_utc = clock.now_utc()
    grace = timedelta(minutes=config.alerts.grace_minutes)
    second = fakes.RecordingChannel(clock)
    service = fakes.simulated_service(tmp_path, clock, config, [second])
    task = await fakes.run_service_until(service, clock, restart_utc + timedelta(minutes=10))
    await fakes.stop_service(service, task)

    summaries = [m for m in second.service_messages if "missed" in m.title]
    assert summaries, "the tracking-limit alert that fell due while stopped is reported missed"
    body = "\n".join(m.body for m in summaries)
    assert "NGC 1001: tracking limit in 5 min" in body
    assert "(repeat" not in body, "a repeat is a reminder: one past its grace is not reported missed"
    with sqlite3.connect(tmp_path / "ledger.sqlite3") as db:
        missed = [k for (k,) in db.execute("SELECT key FROM alerts WHERE state = 'missed'")]
    assert missed and all(" (repeat" not in k for k in missed)
    repeats = {a.key: a for a in _whole_night_repeats(config)}
    missed_keys = set(missed)
    assert not missed_keys & repeats.keys()

    # The limit's series resumes: the repeats still within their grace once each (late-marked),
    # then every later one on time.
    owed = sorted((a for a in repeats.values()
                   if a.event.target == "NGC 1001" and restart_utc - grace <= a.due_utc
                   < restart_utc + timedelta(minutes=10)), key=lambda a: a.due_utc)
    got = [r for r in second.received if r.message.key in repeats]
    assert [r.message.key for r in got] == [a.key for a in owed] and owed
    for received, alert in zip(got, owed, strict=True):
        assert received.when_utc - alert.due_utc <= max(restart_utc - alert.due_utc,
                                                         timedelta(seconds=ON_TIME_SECONDS))


async def test_the_first_plan_is_the_first_stretch_and_the_whole_horizon_follows(tmp_path):
    # Ready soon on a big target list: the plan made before READY=1 covers what the scheduler
    # needs (the stretch, and the events whose alerts fall in it); the whole horizon is planned
    # right after, before any time passes.
    from siderod.service.daemon import first_stretch_minutes, repeat_stretch_minutes

    clock = FakeClock(fakes.NIGHT_START_UTC)
    config = _config()
    assert first_stretch_minutes(config) < repeat_stretch_minutes(config)
    source = fakes.FixedAgendaSource(fakes.synthetic_night())
    service = fakes.simulated_service(tmp_path, clock, config, [fakes.RecordingChannel(clock)])
    service._agenda_source = source
    task = asyncio.get_running_loop().create_task(service.run())
    await fakes.wait_ready(service, task)
    stretch_end = clock.now_utc() + timedelta(minutes=first_stretch_minutes(config))
    first_start, first_hours = source.calls[0]
    assert first_start + timedelta(hours=first_hours) < clock.now_utc() + timedelta(
        hours=config.alerts.horizon_hours)
    first_plan = dict(service._plan)
    assert first_plan and max(a.due_utc for a in first_plan.values()) <= stretch_end
    await asyncio.wait_for(service.wait_whole_plan(), WAIT_SECONDS)
    assert len(source.calls) == 2 and clock.now_utc() == fakes.NIGHT_START_UTC
    start, hours = source.calls[1]
    assert start + timedelta(hours=hours) >= clock.now_utc() + timedelta(hours=config.alerts.horizon_hours)
    assert max(a.due_utc for a in service._plan.values()) > stretch_end
    assert first_plan.keys() <= service._plan.keys()  # the stretch planned alike both times
    await fakes.stop_service(service, task)


async def test_a_first_stretch_without_alerts_is_not_reported_as_nothing_planned(tmp_path):
    # Found by CI at an hour when the demo night had no alert within the first 30 minutes: READY=1
    # said "no alerts planned" although the whole horizon was still being planned. Here the start
    # is 40 minutes into the synthetic night, when the next alert (a rise, 5 min ahead) is 79 min off.
    from siderod.cli.control import format_status
    from siderod.service.daemon import first_stretch_minutes
    from siderod.service.protocol import snapshot_from_json, snapshot_to_json

    start = fakes.NIGHT_START_UTC + timedelta(minutes=40)
    clock = FakeClock(start)
    config = _config()
    service = fakes.simulated_service(tmp_path, clock, config, [fakes.RecordingChannel(clock)])
    sent: list[str] = []
    service._notify = sent.append
    task = asyncio.get_running_loop().create_task(service.run())
    await fakes.wait_ready(service, task)
    stretch_end = start + timedelta(minutes=first_stretch_minutes(config))
    ready = next(m for m in sent if m.startswith("READY=1"))
    assert not service._plan, "no alert falls within the first stretch: the case under test"
    assert ready == (f"READY=1\nSTATUS=no alert before {stretch_end:%H:%M:%S} UTC;"
                     " planning the rest of the horizon")
    partial = snapshot_to_json(service.snapshot())
    assert snapshot_from_json(partial).partial_plan_until_utc == stretch_end
    assert "planned to " in format_status(partial) and "  none yet" in format_status(partial)

    await asyncio.wait_for(service.wait_whole_plan(), WAIT_SECONDS)
    first = min(service._plan.values(), key=lambda a: a.due_utc)
    assert first.due_utc > stretch_end
    assert sent[-1] == f"STATUS=next alert {first.due_utc:%H:%M:%S} UTC: {first.title}"
    whole = snapshot_to_json(service.snapshot())
    assert whole["partial_plan_until_utc"] is None and "planned to " not in format_status(whole)
    await fakes.stop_service(service, task)
