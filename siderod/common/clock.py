"""The one place siderod reads time: a real clock, and a fake one for tests.

The service is handed one ``Clock`` and reads wall time, monotonic time and sleeps only through
it, so a test can run a whole night in a fraction of a second, step the wall clock, or simulate
a suspend (wall time moves while monotonic time stands still, as CLOCK_MONOTONIC does on Linux).
"""

from __future__ import annotations

import heapq
import itertools
import random
import time
from datetime import UTC, datetime, timedelta
from typing import TYPE_CHECKING, Protocol

if TYPE_CHECKING:
    import asyncio

# asyncio is imported inside the methods that need a running loop, not at the top: the one-shot
# verbs (`siderod now`, `agenda`, `watch --once`) read the wall clock through SystemClock too,
# and asyncio would add about 90 ms to their start.

__all__ = ["Clock", "SystemClock", "FakeClock"]


class Clock(Protocol):
    """What the service needs of time."""

    def now_utc(self) -> datetime:
        """Wall-clock time as a timezone-aware UTC datetime."""

    def monotonic(self) -> float:
        """Seconds on a clock that never steps; only differences mean anything."""

    async def sleep(self, seconds: float) -> None:
        """Wait ``seconds`` of monotonic time."""


class SystemClock:
    """The real clocks of this machine.

    ``monotonic()`` carries a random offset, so that code which mixes monotonic and wall
    seconds gives nonsense at once instead of being nearly right by luck.
    """

    def __init__(self) -> None:
        self._offset_mono = random.uniform(1e4, 1e6)

    def now_utc(self) -> datetime:
        return datetime.now(UTC)

    def monotonic(self) -> float:
        return time.monotonic() + self._offset_mono

    async def sleep(self, seconds: float) -> None:
        import asyncio

        await asyncio.sleep(max(0.0, seconds))


class FakeClock:
    """A clock that moves only when told to, or jumps straight to the next sleeper.

    Args:
        start_utc: the wall time to start at (aware).
        autojump: when True, whenever every task is blocked in ``sleep``, time jumps to the
            earliest sleeper's deadline, so a simulated night runs as fast as the code allows.
            Start it with ``async with clock.running():`` or call ``start_autojump()`` in a loop.

    The monotonic time starts at 1000.0 so that a zero never looks meaningful.
    """

    def __init__(self, start_utc: datetime, *, autojump: bool = False) -> None:
        if start_utc.tzinfo is None:
            raise ValueError("FakeClock needs an aware start time, e.g. datetime(..., tzinfo=UTC)")
        self._wall_utc = start_utc.astimezone(UTC)
        self._mono = 1000.0
        self._sleepers: list[tuple[float, int, asyncio.Future[None]]] = []
        self._counter = itertools.count()
        self.autojump = autojump
        self._driver: asyncio.Task[None] | None = None

    # -- reading ---------------------------------------------------------------------------
    def now_utc(self) -> datetime:
        return self._wall_utc

    def monotonic(self) -> float:
        return self._mono

    async def sleep(self, seconds: float) -> None:
        import asyncio

        if seconds <= 0:
            await asyncio.sleep(0)
            return
        future: asyncio.Future[None] = asyncio.get_running_loop().create_future()
        heapq.heappush(self._sleepers, (self._mono + seconds, next(self._counter), future))
        try:
            await future
        finally:
            if not future.done():
                future.cancel()

    # -- moving time -----------------------------------------------------------------------
    async def advance(self, seconds: float) -> None:
        """Let ``seconds`` pass on both clocks, waking each sleeper at its own deadline in order."""
        if seconds < 0:
            raise ValueError("advance() moves forward only; use jump() to step the wall clock back")
        end_mono = self._mono + seconds
        while True:
            await _settle()
            deadline = self._next_deadline()
            if deadline is None or deadline > end_mono:
                break
            self._move_both(deadline - self._mono)
            self._wake_due()
        self._move_both(end_mono - self._mono)
        self._wake_due()
        await _settle()

    def jump(self, seconds: float) -> None:
        """Step the wall clock by ``seconds`` (either sign); monotonic time does not move.

        This is what an NTP step or a manual ``date -s`` looks like to a process.
        """
        self._wall_utc += timedelta(seconds=seconds)

    def suspend(self, seconds: float) -> None:
        """Simulate a system suspend: wall time moves on, monotonic time stands still."""
        if seconds < 0:
            raise ValueError("a suspend lasts a non-negative time")
        self._wall_utc += timedelta(seconds=seconds)

    def stall(self, seconds: float) -> None:
        """Simulate a stopped process (SIGSTOP, a paused machine): both clocks move, nobody wakes.

        The sleepers whose deadlines passed wake at the next ``advance`` or ``settle``-and-advance,
        all at once and late, as after a SIGCONT.
        """
        if seconds < 0:
            raise ValueError("a stall lasts a non-negative time")
        self._move_both(seconds)

    async def settle(self) -> None:
        """Let every task that can run without time passing run."""
        await _settle()

    # -- autojump ----------------------------------------------------------------------------
    def start_autojump(self) -> asyncio.Task[None]:
        """Start the task that jumps to the next sleeper whenever everyone is asleep."""
        import asyncio

        self.autojump = True
        if self._driver is None or self._driver.done():
            self._driver = asyncio.get_running_loop().create_task(self._drive())
        return self._driver

    def stop_autojump(self) -> None:
        self.autojump = False
        if self._driver is not None:
            self._driver.cancel()
            self._driver = None

    async def _drive(self) -> None:
        import asyncio

        while self.autojump:
            await _settle()
            deadline = self._next_deadline()
            if deadline is None:
                await asyncio.sleep(0.001)  # nothing asleep yet: let real I/O progress
                continue
            self._move_both(deadline - self._mono)
            self._wake_due()

    # -- helpers -----------------------------------------------------------------------------
    def _next_deadline(self) -> float | None:
        while self._sleepers and self._sleepers[0][2].done():
            heapq.heappop(self._sleepers)  # cancelled sleepers
        return self._sleepers[0][0] if self._sleepers else None

    def _move_both(self, seconds: float) -> None:
        if seconds > 0:
            self._mono += seconds
            self._wall_utc += timedelta(seconds=seconds)

    def _wake_due(self) -> None:
        while self._sleepers and self._sleepers[0][0] <= self._mono:
            _, _, future = heapq.heappop(self._sleepers)
            if not future.done():
                future.set_result(None)


async def _settle(rounds: int = 30) -> None:
    import asyncio

    # Yield to the event loop enough times for chains of ready callbacks to finish. asyncio
    # offers no public "everyone is blocked" signal, so this is a bounded approximation.
    for _ in range(rounds):
        await asyncio.sleep(0)
