"""When to fire each planned alert: a small Scheduler protocol, APScheduler 3.x behind it, and a
stand-in driven by the injected Clock for whole-night tests.

A scheduler only says "this key is due now" by calling ``on_due(key)``; it never delivers. The
service queues the key and delivers in order on its own task, so a slow channel can never hold
up a timer and shutting the scheduler down never cancels a half-sent alert.

Both implementations share APScheduler's weakness on purpose: a wall-clock delay is turned into a
monotonic countdown once, so a suspend or a clock step leaves the countdown wrong until someone
calls ``wake()``. The service's clock watch (anomaly.py) does exactly that.
"""

from __future__ import annotations

import asyncio
import heapq
import logging
from collections.abc import Callable, Sequence
from datetime import UTC, datetime
from typing import Protocol

from siderod.common.clock import Clock
from siderod.common.errors import InternalError
from siderod.common.model import PlannedAlert

__all__ = ["Scheduler", "SchedulerFactory", "APSchedulerAdapter", "ClockScheduler", "NEXT_DUE_JOB_ID"]

log = logging.getLogger("siderod.scheduling")

DueCallback = Callable[[str], None]


class Scheduler(Protocol):
    """What the service needs of a scheduler. No clock argument: it fires by wall time."""

    def replace_jobs(self, planned: Sequence[PlannedAlert]) -> None:
        """Make the set of pending jobs exactly ``planned`` (job id = alert key)."""

    def remove(self, key: str) -> None:
        """Forget one job; no error if it is not there."""

    def wake(self) -> None:
        """Re-read the wall clock now and fire whatever is due (after a suspend or a step)."""

    async def start(self) -> None:
        """Begin firing; call from inside the running event loop."""

    async def shutdown(self) -> None:
        """Stop firing. Pending jobs are dropped; nothing in flight is cancelled."""


SchedulerFactory = Callable[[DueCallback], Scheduler]


#: The id of the adapter's one APScheduler job: the next due time of any planned alert.
NEXT_DUE_JOB_ID = "siderod-next-due"


class APSchedulerAdapter:
    """The production scheduler: APScheduler 3.x ``AsyncIOScheduler`` with *one* DateTrigger job.

    The adapter keeps the planned keys in due order itself and holds one APScheduler job
    (:data:`NEXT_DUE_JOB_ID`) at the earliest due time. When it runs, every key due at or before
    that time is handed to ``on_due`` in (due time, key) order, each once, and the job is armed
    again at the next due time. One job per alert cost ~90 us of add_job each (it inspects the
    callable's signature every time), 2 s for a 10,000-target start, and every add_job queued a
    loop wakeup; now a re-plan costs one sort and at most one add_job. APScheduler still does
    what it is here for: turning a wall-clock time into a wait, misfire handling and ``wakeup``.

    Args:
        on_due: called with the alert key when its time comes (on the loop thread; must not block).
        misfire_grace_seconds: accepted for compatibility and ignored. APScheduler drops a job
            that runs later than its misfire grace without telling anyone (a stopped process
            resumed, a starved loop); the service must decide instead, so the job runs however
            late (``misfire_grace_time=None`` in ``job_defaults``, where it must go: a top-level
            argument is silently ignored) and the service delivers it late-marked or records it
            missed.
    """

    def __init__(self, on_due: DueCallback, *, misfire_grace_seconds: float | None = None) -> None:
        from apscheduler.schedulers.asyncio import AsyncIOScheduler

        self._on_due = on_due
        self._scheduler = AsyncIOScheduler(
            timezone=UTC,
            job_defaults={
                "misfire_grace_time": None,
                "coalesce": True,
                "max_instances": 1,
            },
        )
        self._due: dict[str, datetime] = {}  # pending key -> due time (UTC)
        self._order: list[tuple[datetime, str]] = []  # a heap; entries no longer in _due are skipped
        self._armed_utc: datetime | None = None  # the run time of the one job, None if there is none

    @property
    def apscheduler(self):  # the wrapped AsyncIOScheduler, for the adapter's own test
        return self._scheduler

    @property
    def pending_keys(self) -> frozenset[str]:
        return frozenset(self._due)

    async def start(self) -> None:
        self._scheduler.start()
        self._arm()

    async def shutdown(self) -> None:
        if self._scheduler.running:
            self._scheduler.shutdown(wait=False)
            await asyncio.sleep(0)  # AsyncIOScheduler.shutdown takes effect on the next loop turn
        self._armed_utc = None

    def replace_jobs(self, planned: Sequence[PlannedAlert]) -> None:
        due: dict[str, datetime] = {}
        for alert in planned:
            _require_aware(alert.due_utc)
            due[alert.key] = alert.due_utc.astimezone(UTC)
        self._due = due
        self._order = sorted((when, key) for key, when in due.items())  # a sorted list is a heap
        self._arm()

    def remove(self, key: str) -> None:
        if self._due.pop(key, None) is not None:
            self._arm()

    def wake(self) -> None:
        if self._scheduler.running:
            self._scheduler.wakeup()

    def _arm(self) -> None:
        """Put the one job at the earliest pending due time (or remove it when nothing is pending)."""
        from apscheduler.jobstores.base import JobLookupError
        from apscheduler.triggers.date import DateTrigger

        order = self._order
        while order and self._due.get(order[0][1]) != order[0][0]:
            heapq.heappop(order)  # removed or replaced since it was queued
        first_utc = order[0][0] if order else None
        if first_utc == self._armed_utc or not self._scheduler.running:
            return
        if first_utc is None:
            try:
                self._scheduler.remove_job(NEXT_DUE_JOB_ID)
            except JobLookupError:
                pass  # it has just run (a DateTrigger job removes itself)
        else:
            # replace_existing: re-arming moves the one job instead of raising ConflictingIdError.
            # _fire re-arms while APScheduler still counts it as running, and a job at its
            # max_instances is skipped (and, a DateTrigger, lost): the firings must not be counted.
            # They cannot overlap anyway (_fire never awaits).
            self._scheduler.add_job(self._fire, trigger=DateTrigger(run_date=first_utc, timezone=UTC),
                                    args=(first_utc,), id=NEXT_DUE_JOB_ID, name=f"next due: {order[0][1]}",
                                    replace_existing=True, max_instances=_UNCOUNTED_INSTANCES)
        self._armed_utc = first_utc

    async def _fire(self, run_utc: datetime) -> None:
        # APScheduler has removed the job (its trigger has no next time) before this runs.
        if self._armed_utc == run_utc:
            self._armed_utc = None
        order, due = self._order, []
        while order and order[0][0] <= run_utc:
            when, key = heapq.heappop(order)
            if self._due.get(key) == when:
                del self._due[key]
                due.append(key)
        for key in due:
            self._on_due(key)
        self._arm()


class ClockScheduler:
    """A scheduler driven by the injected ``Clock``, for whole-night tests under ``FakeClock``.

    It waits like APScheduler does: the wall-clock delay to the earliest job becomes one
    ``clock.sleep`` (monotonic), re-armed whenever the job set changes or ``wake()`` is called.
    """

    def __init__(self, on_due: DueCallback, clock: Clock) -> None:
        self._on_due = on_due
        self._clock = clock
        self._jobs: dict[str, datetime] = {}
        self._changed = asyncio.Event()
        self._task: asyncio.Task[None] | None = None

    async def start(self) -> None:
        if self._task is not None:
            raise InternalError("ClockScheduler.start() called twice")
        self._task = asyncio.get_running_loop().create_task(self._run(), name="clock-scheduler")

    async def shutdown(self) -> None:
        if self._task is not None:
            self._task.cancel()
            try:
                await self._task
            except asyncio.CancelledError:
                pass
            self._task = None

    def replace_jobs(self, planned: Sequence[PlannedAlert]) -> None:
        for alert in planned:
            _require_aware(alert.due_utc)
        self._jobs = {a.key: a.due_utc for a in planned}
        self._changed.set()

    def remove(self, key: str) -> None:
        if self._jobs.pop(key, None) is not None:
            self._changed.set()

    def wake(self) -> None:
        self._changed.set()

    @property
    def pending_keys(self) -> frozenset[str]:
        return frozenset(self._jobs)

    async def _run(self) -> None:
        while True:
            self._changed.clear()
            now_utc = self._clock.now_utc()
            due = sorted((d, k) for k, d in self._jobs.items() if d <= now_utc)
            for _, key in due:
                del self._jobs[key]
                self._on_due(key)
            if self._jobs:
                first_utc = min(self._jobs.values())
                wait_seconds = (first_utc - now_utc).total_seconds()
                await self._wait(wait_seconds)
            else:
                await self._changed.wait()

    async def _wait(self, seconds: float) -> None:
        sleeper = asyncio.ensure_future(self._clock.sleep(seconds))
        changed = asyncio.ensure_future(self._changed.wait())
        try:
            await asyncio.wait({sleeper, changed}, return_when=asyncio.FIRST_COMPLETED)
        finally:
            for f in (sleeper, changed):
                if not f.done():
                    f.cancel()
            await asyncio.gather(sleeper, changed, return_exceptions=True)


# Well above any number of firings that can be pending at once (each is one loop callback).
_UNCOUNTED_INSTANCES = 1 << 30


def _require_aware(when: datetime) -> None:
    if when.tzinfo is None:
        raise InternalError(f"a naive due time reached the scheduler: {when!r}")
