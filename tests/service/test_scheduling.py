"""The one narrow test of the real APScheduler adapter: one APScheduler job at the earliest due
time, re-armed by every re-plan and every firing; keys fire in due order, each once."""

from __future__ import annotations

import asyncio
from datetime import UTC, datetime, timedelta

from siderod.common.model import Event, EventKind, PlannedAlert, Urgency
from siderod.plan.planner import alert_key
from siderod.service.scheduling import NEXT_DUE_JOB_ID, APSchedulerAdapter

FIRE_TIMEOUT_SECONDS = 2.0  # a job due now runs on the next loop turns; this only bounds a failure


def _alert(minutes_ahead: float, target: str, now_utc: datetime) -> PlannedAlert:
    event = Event(now_utc + timedelta(minutes=minutes_ahead), EventKind.CULMINATION, target, 60.0, 180.0)
    return PlannedAlert(key=alert_key(event, 0), event=event, lead_minutes=0.0, due_utc=event.time_utc,
                        urgency=Urgency.NORMAL, title=f"{target} culminates now", body="")


async def test_apscheduler_adapter_keeps_one_job_at_the_earliest_due_time():
    fired: list[str] = []
    adapter = APSchedulerAdapter(fired.append, misfire_grace_seconds=600)
    await adapter.start()
    try:
        now = datetime.now(UTC)
        plan = [_alert(120, "NGC 1002", now), _alert(60, "NGC 1001", now)]
        adapter.replace_jobs(plan)
        adapter.replace_jobs(plan)  # the same plan again: nothing duplicated, no ConflictingIdError
        jobs = adapter.apscheduler.get_jobs()
        assert [j.id for j in jobs] == [NEXT_DUE_JOB_ID]
        assert jobs[0].next_run_time == plan[1].due_utc
        assert adapter.pending_keys == frozenset(a.key for a in plan)
        # No misfire grace: a late job always runs and the service decides (issue 14 item 2); it
        # went into job_defaults (a top-level argument would be silently ignored).
        assert {j.misfire_grace_time for j in jobs} == {None}
        assert str(adapter.apscheduler.timezone) == "UTC"

        moved = _alert(90, "NGC 1002", now)  # a re-plan moved one event: new key, the old one gone
        adapter.replace_jobs([plan[1], moved])
        assert adapter.pending_keys == {plan[1].key, moved.key}

        adapter.remove(plan[1].key)  # the earliest: the one job moves to the next
        adapter.remove("not-a-key")  # no error
        assert adapter.pending_keys == {moved.key}
        assert adapter.apscheduler.get_job(NEXT_DUE_JOB_ID).next_run_time == moved.due_utc

        due_now = [_alert(0, "NGC 1004", datetime.now(UTC)), _alert(0, "NGC 1003", datetime.now(UTC))]
        adapter.replace_jobs([moved, *due_now])
        adapter.wake()
        async with asyncio.timeout(FIRE_TIMEOUT_SECONDS):
            while len(fired) < 2:
                await asyncio.sleep(0)
        assert fired == [a.key for a in sorted(due_now, key=lambda a: (a.due_utc, a.key))]
        assert adapter.pending_keys == {moved.key}
        assert adapter.apscheduler.get_job(NEXT_DUE_JOB_ID).next_run_time == moved.due_utc
    finally:
        await adapter.shutdown()
    assert not adapter.apscheduler.running


#: Alerts in one re-plan: 10,000 targets give about 20,000 within the scheduler's stretch.
BIG_PLAN_ALERTS = 20_000


async def test_a_big_replan_is_one_apscheduler_job_and_wakes_it_at_most_once():
    # One APScheduler job per alert cost ~90 us each (add_job inspects the callable's signature
    # every time): 2 s of a 10,000-target start. Each add_job on a running AsyncIOScheduler also
    # queued one wakeup through call_soon_threadsafe: thousands of them filled the loop's
    # self-pipe, so a SIGHUP arriving then was lost.
    adapter = APSchedulerAdapter(lambda key: None, misfire_grace_seconds=600)
    await adapter.start()
    wakeups: list[int] = []
    real_wakeup = adapter.apscheduler.wakeup
    adapter.apscheduler.wakeup = lambda: (wakeups.append(1), real_wakeup())[1]  # a counting spy
    try:
        now = datetime.now(UTC)
        plan = [_alert(60 + i / 1000, f"T{i:05d}", now) for i in range(BIG_PLAN_ALERTS)]
        adapter.replace_jobs(plan)
        assert len(wakeups) <= 1
        assert [j.id for j in adapter.apscheduler.get_jobs()] == [NEXT_DUE_JOB_ID]
        assert len(adapter.pending_keys) == BIG_PLAN_ALERTS
        first_job = adapter.apscheduler.get_job(NEXT_DUE_JOB_ID)
        wakeups.clear()
        adapter.replace_jobs(plan)  # the same plan: the same first due time, nothing to wake
        assert adapter.apscheduler.get_job(NEXT_DUE_JOB_ID).next_run_time == first_job.next_run_time
        assert not wakeups
    finally:
        await adapter.shutdown()
