"""Notice when time did not pass the way the service thinks: a suspend, a clock step, a stall.

Every few seconds of monotonic time the watch compares how far the wall clock moved with how far
the monotonic clock moved. On Linux CLOCK_MONOTONIC stands still during a suspend and ignores
steps, so a difference means the scheduler's countdowns are now wrong and the plan must be
re-checked. Where CLOCK_BOOTTIME exists (Linux) it tells a suspend from a step; elsewhere the
report says "forward" without guessing which.

The watch also checks its own progress: a sleep that ends much later than asked means the
process did not run (SIGSTOP, Ctrl-Z, a paused virtual machine, a frozen cgroup, a swap storm).
Wall and monotonic time agree then, so only this check sees it; it is reported as a "stall".
"""

from __future__ import annotations

import logging
from collections.abc import Awaitable, Callable
from dataclasses import dataclass
from datetime import datetime

from siderod.common.clock import Clock

__all__ = ["ClockAnomaly", "classify_progress", "ClockWatch", "STEP_TOLERANCE_SECONDS",
           "STALL_TOLERANCE_SECONDS"]

log = logging.getLogger("siderod.anomaly")

# A disagreement smaller than this is NTP slewing or loop latency, not a step: slewing moves the
# clock at most 0.5 ms/s (common practice: ntpd/chrony max slew 500 ppm), i.e. 1 ms per 2 s check.
STEP_TOLERANCE_SECONDS = 0.5
# A watch sleep that ends this much later than asked is a stall, not scheduling noise: a loaded
# two-core machine delays a ready task by milliseconds to tens of milliseconds (our judgement).
STALL_TOLERANCE_SECONDS = 3.0


@dataclass(frozen=True, slots=True)
class ClockAnomaly:
    """The wall clock moved ``jump_seconds`` more than the monotonic clock (negative: back).

    ``kind`` is "suspend" (the machine slept), "step-forward", "step-back", "forward" when
    a suspend cannot be told from a forward step, or "stall" (the process did not run for
    ``jump_seconds`` more than it slept; wall and monotonic time agree).
    """

    kind: str
    jump_seconds: float
    detected_utc: datetime


def classify_progress(
    wall_elapsed_seconds: float,
    mono_elapsed_seconds: float,
    boot_elapsed_seconds: float | None,
    detected_utc: datetime,
    *,
    tolerance_seconds: float = STEP_TOLERANCE_SECONDS,
) -> ClockAnomaly | None:
    """Decide whether one interval shows a suspend or a clock step.

    Args:
        wall_elapsed_seconds: wall clock progress over the interval.
        mono_elapsed_seconds: monotonic progress over the same interval.
        boot_elapsed_seconds: CLOCK_BOOTTIME progress (counts suspended time), or None.
        detected_utc: when the check ran (aware UTC).
        tolerance_seconds: smaller disagreements are ignored.

    Returns:
        A ClockAnomaly, or None when the clocks agree.
    """
    jump = wall_elapsed_seconds - mono_elapsed_seconds
    if abs(jump) <= tolerance_seconds:
        return None
    if jump < 0:
        return ClockAnomaly("step-back", jump, detected_utc)
    if boot_elapsed_seconds is None:
        return ClockAnomaly("forward", jump, detected_utc)
    slept = boot_elapsed_seconds - mono_elapsed_seconds
    if slept > tolerance_seconds:
        return ClockAnomaly("suspend", jump, detected_utc)
    return ClockAnomaly("step-forward", jump, detected_utc)


class ClockWatch:
    """Compare wall and monotonic progress every ``period_seconds`` and report anomalies.

    Args:
        clock: the service's clock.
        on_anomaly: awaited with each ClockAnomaly, from the watch's own task. Exceptions
            propagate (the service's supervisor stops loudly).
        period_seconds: monotonic seconds between checks.
        boot_seconds: a CLOCK_BOOTTIME reader, or None (FakeClock, non-Linux).
    """

    def __init__(
        self,
        clock: Clock,
        on_anomaly: Callable[[ClockAnomaly], Awaitable[None]],
        *,
        period_seconds: float = 2.0,
        boot_seconds: Callable[[], float] | None = None,
    ) -> None:
        self._clock = clock
        self._on_anomaly = on_anomaly
        self._period_seconds = period_seconds
        self._boot_seconds = boot_seconds
        self.anomalies: list[ClockAnomaly] = []

    async def run(self) -> None:
        last_wall = self._clock.now_utc()
        last_mono = self._clock.monotonic()
        last_boot = self._boot_seconds() if self._boot_seconds else None
        while True:
            await self._clock.sleep(self._period_seconds)
            wall = self._clock.now_utc()
            mono = self._clock.monotonic()
            boot = self._boot_seconds() if self._boot_seconds else None
            anomaly = classify_progress(
                (wall - last_wall).total_seconds(),
                mono - last_mono,
                None if boot is None or last_boot is None else boot - last_boot,
                wall,
            )
            overslept = mono - last_mono - self._period_seconds
            last_wall, last_mono, last_boot = wall, mono, boot
            if anomaly is None and overslept > STALL_TOLERANCE_SECONDS:
                anomaly = ClockAnomaly("stall", overslept, wall)
            if anomaly is not None:
                self.anomalies.append(anomaly)
                if anomaly.kind == "stall":
                    log.warning("the service did not run for %.1f s (stopped or starved); re-planning",
                                anomaly.jump_seconds)
                else:
                    log.warning(
                        "clock anomaly: %s of %+.1f s (wall vs monotonic); re-planning",
                        anomaly.kind,
                        anomaly.jump_seconds,
                    )
                await self._on_anomaly(anomaly)


def linux_boot_seconds() -> Callable[[], float] | None:
    """A CLOCK_BOOTTIME reader where the platform has one, else None."""
    import time

    clock_id = getattr(time, "CLOCK_BOOTTIME", None)
    if clock_id is None:
        return None
    return lambda: time.clock_gettime(clock_id)
