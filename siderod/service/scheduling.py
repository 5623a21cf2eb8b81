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
import logging
from collections.abc import Callable, Sequence
from datetime import UTC, datetime
from typing import Protocol

from siderod.common.clock import Clock
from siderod.common.errors import InternalError
from siderod.common.model import PlannedAlert

__all__ = ["Scheduler", "SchedulerFactory", "APSchedulerAdapter", "ClockScheduler"]

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


class APSchedulerAdapter:
    """The production scheduler: APScheduler 3.x ``AsyncIOScheduler``, one DateTrigger job per alert.

    Args:
        on_due: called with the alert key when its job runs (on the loop thread; must not block).
        misfire_grace_seconds: accepted for compatibility and ignored. APScheduler drops a job
            that runs later than its misfire grace without telling anyone (a stopped process
            resumed, a starved loop); the service must decide instead, so every job runs however
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
        self._keys: set[str] = set()

    @property
    def apscheduler(self):  # the wrapped AsyncIOScheduler, for the adapter's own test
        return self._scheduler

    async def start(self) -> None:
        self._scheduler.start()

    async def shutdown(self) -> None:
        if self._scheduler.running:
            self._scheduler.shutdown(wait=False)
            await asyncio.sleep(0)  # AsyncIOScheduler.shutdown takes effect on the next loop turn

    def replace_jobs(self, planned: Sequence[PlannedAlert]) -> None:
        from apscheduler.schedulers.base import STATE_RUNNING
        from apscheduler.triggers.date import DateTrigger

        wanted = {a.key: a for a in planned}
        # Every add_job on a running AsyncIOScheduler queues one wakeup through
        # call_soon_threadsafe. Thousands of them fill the loop's self-pipe (a signal arriving
        # then is lost) and keep the loop busy, so the scheduler is paused for the batch and
        # woken once. A key fixes its due time (it holds the event time and the lead), so a job
        # still pending under the same key is left as it is.
        pause = self._scheduler.running and self._scheduler.state == STATE_RUNNING
        if pause:
            self._scheduler.pause()
        try:
            for key in self._keys - wanted.keys():
                self.remove(key)
            for key, alert in wanted.items():
                _require_aware(alert.due_utc)
                if key in self._keys:
                    continue
                # replace_existing turns a second add of the same id into an update: re-planning
                # is idempotent instead of raising ConflictingIdError or running the alert twice.
                self._scheduler.add_job(
                    self._fire,
                    trigger=DateTrigger(run_date=alert.due_utc.astimezone(UTC), timezone=UTC),
                    args=(key,),
                    id=key,
                    name=alert.title,
                    replace_existing=True,
                )
                self._keys.add(key)
        finally:
            if pause:
                self._scheduler.resume()

    def remove(self, key: str) -> None:
        from apscheduler.jobstores.base import JobLookupError

        self._keys.discard(key)
        try:
            self._scheduler.remove_job(key)
        except JobLookupError:
            pass  # already fired (DateTrigger jobs remove themselves) or never added

    def wake(self) -> None:
        if self._scheduler.running:
            self._scheduler.wakeup()

    async def _fire(self, key: str) -> None:
        self._keys.discard(key)
        self._on_due(key)


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


def _require_aware(when: datetime) -> None:
    if when.tzinfo is None:
        raise InternalError(f"a naive due time reached the scheduler: {when!r}")
