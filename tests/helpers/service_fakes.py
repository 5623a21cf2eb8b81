"""Fakes for the service tests: a recording channel, a fixed agenda, a synthetic night.

Load from a test with ``load_helper("service_fakes")`` (tests/helpers is not a package, and the
suite runs with ``--import-mode=importlib``).

The synthetic night is a SCHEDULE, not astronomy: event times are spread over the demo night
(Corrie Hill Observatory, 2026-12-14/15) so that every alert kind, lead time and ordering case
occurs; the astronomy of events is tested with the agenda, not here.
"""

from __future__ import annotations

import asyncio
import time
from dataclasses import dataclass, field
from datetime import UTC, datetime, timedelta

from siderod.common.clock import FakeClock
from siderod.common.model import (
    AlertRules,
    Config,
    Event,
    EventKind,
    Mount,
    MountKind,
    NotifySettings,
    Site,
    Target,
    Urgency,
)
from siderod.service.delivery import AlertMessage, ChannelFailed

CORRIE_HILL = Site(
    name="Corrie Hill Observatory",
    latitude_deg=56 + 12 / 60 + 30 / 3600,
    longitude_deg=-(3 + 41 / 60 + 15 / 3600),
    elevation_m=212.0,
    timezone="Europe/London",
)
NIGHT_START_UTC = datetime(2026, 12, 14, 16, 0, tzinfo=UTC)


class ScaledClock:
    """Real time, sped up: ``base_utc + (time.time() - epoch_unix) * speed``.

    For service children that are killed and restarted (tests/helpers/push_child.py,
    restart_child.py): simulated time runs on while the process is dead, as real time would.
    """

    def __init__(self, base_utc: datetime, epoch_unix: float, speed: float) -> None:
        self._base_utc = base_utc
        self._epoch_unix = epoch_unix
        self._speed = speed

    def now_utc(self) -> datetime:
        return self._base_utc + timedelta(seconds=(time.time() - self._epoch_unix) * self._speed)

    def monotonic(self) -> float:
        return time.monotonic() * self._speed

    async def sleep(self, seconds: float) -> None:
        await asyncio.sleep(max(0.0, seconds) / self._speed)


@dataclass
class FixedAgenda:
    start_utc: datetime
    end_utc: datetime
    events: tuple[Event, ...]
    classification: dict = field(default_factory=dict)
    dark_intervals: dict = field(default_factory=dict)


class FixedAgendaSource:
    """``agenda_source`` that returns the events of a fixed list inside the asked window."""

    def __init__(self, events):
        self.events = tuple(sorted(events, key=lambda e: e.time_utc))
        self.calls: list[tuple[datetime, float]] = []

    def __call__(self, config, start_utc, hours):
        self.calls.append((start_utc, hours))
        end_utc = start_utc + timedelta(hours=hours)
        return FixedAgenda(
            start_utc, end_utc, tuple(e for e in self.events if start_utc <= e.time_utc < end_utc)
        )


@dataclass(frozen=True)
class Received:
    message: AlertMessage
    when_utc: datetime


class RecordingChannel:
    """A channel that records what it is sent, with the (fake) time it got it."""

    def __init__(self, clock, name: str = "recorder", *, fail: bool = False, hang_seconds: float = 0.0):
        self.name = name
        self.clock = clock
        self.fail = fail
        self.hang_seconds = hang_seconds
        self.received: list[Received] = []
        self.attempts = 0

    async def send(self, message: AlertMessage) -> None:
        self.attempts += 1
        if self.hang_seconds:
            await self.clock.sleep(self.hang_seconds)
        if self.fail:
            raise ChannelFailed(f"{self.name} is switched off for this test")
        self.received.append(Received(message, self.clock.now_utc()))

    async def close(self) -> None:
        return None

    @property
    def alert_keys(self) -> list[str]:
        return [r.message.key for r in self.received if not r.message.key.startswith(("service|", "test|"))]

    @property
    def service_messages(self) -> list[AlertMessage]:
        return [r.message for r in self.received if r.message.key.startswith("service|")]


def make_config(
    targets=("NGC 1001", "NGC 1002", "NGC 1003", "NGC 1004", "NGC 1005", "NGC 1006"),
    *,
    lead_minutes=None,
    grace_minutes: float = 10.0,
    horizon_hours: float = 6.0,
    replan_minutes: float = 60.0,
    path: str = "synthetic.toml",
    target_overrides=None,
    repeat_minutes: float = 0.0,
    repeat_count: int = 10,
) -> Config:
    """A whole synthetic configuration. Critical alerts do not repeat unless ``repeat_minutes``
    says so: the tests that use it count configured alerts; the repeats have tests of their own."""
    leads = lead_minutes or {
        EventKind.FLIP_DUE: (10.0, 0.0),
        EventKind.TRACKING_LIMIT: (5.0,),
        EventKind.CULMINATION: (0.0,),
        EventKind.RISE: (5.0,),
        EventKind.ASTRONOMICAL_DUSK: (0.0,),
        EventKind.ASTRONOMICAL_DAWN: (15.0,),
    }
    overrides = target_overrides or {}
    return Config(
        path=path,
        site=CORRIE_HILL,
        targets=tuple(
            Target(name=n, frame=_icrs(), lon_deg=0.0, lat_deg=40.0, ra_deg=0.0, dec_deg=40.0,
                   lead_minutes=overrides.get(n))
            for n in targets
        ),
        mount=Mount(kind=MountKind.GERMAN_EQUATORIAL, flip_after_minutes=5.0, limit_after_minutes=20.0),
        alerts=AlertRules(
            lead_minutes=leads,
            urgency={EventKind.CULMINATION: Urgency.LOW},
            grace_minutes=grace_minutes,
            horizon_hours=horizon_hours,
            replan_minutes=replan_minutes,
            repeat_minutes=repeat_minutes,
            repeat_count=repeat_count,
        ),
        notify=NotifySettings(desktop=False),
    )


def _icrs():
    from siderod.common.model import Frame

    return Frame.ICRS


def synthetic_night(targets=("NGC 1001", "NGC 1002", "NGC 1003", "NGC 1004", "NGC 1005", "NGC 1006")):
    """Events over 16:00-08:00 UTC: per target a rise, a culmination, a flip and a limit; dusk, dawn.

    Culminations are spaced 97 minutes apart with odd seconds so that due times never coincide by
    accident; two targets share a flip-due minute to test ordering by key.
    """
    events = [
        Event(NIGHT_START_UTC + timedelta(hours=2, minutes=3, seconds=11), EventKind.ASTRONOMICAL_DUSK,
              None, -18.0, 240.0, threshold_deg=-18.0),
        Event(NIGHT_START_UTC + timedelta(hours=14, minutes=41, seconds=5), EventKind.ASTRONOMICAL_DAWN,
              None, -18.0, 120.0, threshold_deg=-18.0),
    ]
    for i, name in enumerate(targets):
        culmination = NIGHT_START_UTC + timedelta(hours=2, minutes=97 * i + 13, seconds=7 * i + 3)
        events += [
            Event(culmination - timedelta(hours=5, seconds=31), EventKind.RISE, name, 0.0, 60.0,
                  hour_angle_hours=-5.0, threshold_deg=0.0),
            Event(culmination, EventKind.CULMINATION, name, 73.8, 180.0, hour_angle_hours=0.0, usable=True),
            Event(culmination + timedelta(minutes=5), EventKind.FLIP_DUE, name, 73.5, 182.0,
                  hour_angle_hours=5 / 60, mark_hours=5 / 60),
            Event(culmination + timedelta(minutes=20), EventKind.TRACKING_LIMIT, name, 72.0, 190.0,
                  hour_angle_hours=20 / 60, mark_hours=20 / 60),
        ]
    # Two flips at the same second: delivered in key order.
    if len(targets) >= 2:
        twin = NIGHT_START_UTC + timedelta(hours=11, minutes=30)
        events += [
            Event(twin, EventKind.FLIP_DUE, targets[1], 60.0, 181.0, hour_angle_hours=0.1, mark_hours=0.1),
            Event(twin, EventKind.FLIP_DUE, targets[0], 61.0, 181.0, hour_angle_hours=0.1, mark_hours=0.1),
        ]
    return tuple(sorted(events, key=lambda e: e.time_utc))


def simulated_service(tmp_path, clock, config, channels, *, source=None, **options):
    """A real Service on a simulated clock: ClockScheduler, a SQLite ledger in ``tmp_path``, no
    control socket, planning inline (no worker thread, so simulated time cannot run on meanwhile).

    ``source`` is the agenda source (default: the synthetic night); ``options`` go to Service.
    """
    from siderod.service.daemon import Service
    from siderod.service.scheduling import ClockScheduler

    options.setdefault("anomaly_period_seconds", 10.0)
    return Service(
        lambda: config,
        clock,
        lambda on_due: ClockScheduler(on_due, clock),
        channels,
        ledger_path=tmp_path / "ledger.sqlite3",
        agenda_source=source if source is not None else FixedAgendaSource(synthetic_night()),
        control=False,
        env={},
        offload_planning=False,
        file_poll_seconds=0,
        clock_health_reader=synchronised_health,
        **options,
    )


def synchronised_health():
    """Clock health of a synchronised clock (1 ms estimated error): no clock alert in the way."""
    from siderod.common.model import ClockHealth

    return ClockHealth(state="synchronised", estimated_error_seconds=0.001)


async def run_service_until(service, clock: FakeClock, until_utc: datetime, *, step_seconds: float = 60.0):
    """Start ``service.run()`` and advance the fake clock to ``until_utc``; return the run task.

    Time starts to pass only once the whole horizon is planned: at start the service plans its
    first stretch, says it is ready, and plans the rest at once (tests inspect the whole plan).
    """
    task = asyncio.get_running_loop().create_task(service.run())
    await wait_ready(service, task)
    await _wait_for_event(service._whole_plan, task, "the service did not plan its whole horizon")
    while clock.now_utc() < until_utc:
        seconds = min(step_seconds, (until_utc - clock.now_utc()).total_seconds())
        await clock.advance(seconds)
        if task.done():
            task.result()  # re-raise whatever stopped it
    return task


async def wait_ready(service, task) -> None:
    await _wait_for_event(service._ready, task, "the service did not become ready")


async def _wait_for_event(event: asyncio.Event, task, failure: str) -> None:
    """Let the loop turn (no time passes) until ``event`` is set; re-raise if ``task`` ended."""
    for _ in range(1000):
        if event.is_set():
            return
        if task.done():
            task.result()
        await asyncio.sleep(0)
    raise AssertionError(failure)


async def stop_service(service, task) -> None:
    service.request_stop()
    for _ in range(1000):
        if task.done():
            break
        await asyncio.sleep(0)
    task.result()
