"""The one narrow test of the real APScheduler adapter: deterministic ids, replace_existing."""

from __future__ import annotations

import asyncio
from datetime import UTC, datetime, timedelta

from siderod.common.model import Event, EventKind, PlannedAlert, Urgency
from siderod.plan.planner import alert_key
from siderod.service.scheduling import APSchedulerAdapter

FIRE_TIMEOUT_SECONDS = 2.0  # a job due now runs on the next loop turns; this only bounds a failure


def _alert(minutes_ahead: float, target: str, now_utc: datetime) -> PlannedAlert:
    event = Event(now_utc + timedelta(minutes=minutes_ahead), EventKind.CULMINATION, target, 60.0, 180.0)
    return PlannedAlert(key=alert_key(event, 0), event=event, lead_minutes=0.0, due_utc=event.time_utc,
                        urgency=Urgency.NORMAL, title=f"{target} culminates now", body="")


async def test_apscheduler_adapter_ids_are_keys_and_replanning_replaces():
    fired: list[str] = []
    adapter = APSchedulerAdapter(fired.append, misfire_grace_seconds=600)
    await adapter.start()
    try:
        now = datetime.now(UTC)
        plan = [_alert(60, "NGC 1001", now), _alert(120, "NGC 1002", now)]
        adapter.replace_jobs(plan)
        adapter.replace_jobs(plan)  # the same plan again: replaced, not duplicated, no ConflictingIdError
        jobs = adapter.apscheduler.get_jobs()
        assert sorted(j.id for j in jobs) == sorted(a.key for a in plan)
        # The grace went into job_defaults (a top-level argument would be silently ignored).
        # No misfire grace: a late job always runs and the service decides (issue 14 item 2).
        assert {j.misfire_grace_time for j in jobs} == {None}
        assert str(adapter.apscheduler.timezone) == "UTC"

        moved = _alert(90, "NGC 1002", now)  # a re-plan moved one event: new key, old job removed
        adapter.replace_jobs([plan[0], moved])
        assert sorted(j.id for j in adapter.apscheduler.get_jobs()) == sorted([plan[0].key, moved.key])
        assert adapter.apscheduler.get_job(moved.key).next_run_time == moved.due_utc

        adapter.remove(plan[0].key)
        adapter.remove("not-a-key")  # no error
        assert [j.id for j in adapter.apscheduler.get_jobs()] == [moved.key]

        due_now = _alert(0, "NGC 1003", datetime.now(UTC))
        adapter.replace_jobs([moved, due_now])
        adapter.wake()
        async with asyncio.timeout(FIRE_TIMEOUT_SECONDS):
            while not fired:
                await asyncio.sleep(0)
        assert fired == [due_now.key]
        assert [j.id for j in adapter.apscheduler.get_jobs()] == [moved.key]
    finally:
        await adapter.shutdown()
    assert not adapter.apscheduler.running


#: Alerts in one re-plan: 5,000 targets give about 30,000 (see test_reload_responsive.py).
BIG_PLAN_ALERTS = 1_000


async def test_a_big_replan_wakes_apscheduler_once_and_leaves_unchanged_jobs_alone():
    # Each add_job on a running AsyncIOScheduler queued one wakeup through call_soon_threadsafe:
    # thousands of them filled the loop's self-pipe, so a SIGHUP arriving then was lost, and the
    # loop spent its time in the queued wakeups instead of answering `status`.
    adapter = APSchedulerAdapter(lambda key: None, misfire_grace_seconds=600)
    await adapter.start()
    wakeups: list[int] = []
    real_wakeup = adapter.apscheduler.wakeup
    adapter.apscheduler.wakeup = lambda: (wakeups.append(1), real_wakeup())[1]  # a counting spy
    try:
        now = datetime.now(UTC)
        plan = [_alert(60 + i / 100, f"T{i:05d}", now) for i in range(BIG_PLAN_ALERTS)]
        adapter.replace_jobs(plan)
        assert len(wakeups) <= 1
        assert len(adapter.apscheduler.get_jobs()) == BIG_PLAN_ALERTS
        first_job = adapter.apscheduler.get_job(plan[0].key)
        wakeups.clear()
        adapter.replace_jobs(plan)  # the same plan: nothing to add, nothing to wake
        assert adapter.apscheduler.get_job(plan[0].key) is first_job
        assert len(wakeups) <= 1
    finally:
        await adapter.shutdown()
