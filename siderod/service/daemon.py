"""The service: plan alerts on a rolling horizon, fire them on time, deliver each exactly once.

Wiring, in the order ``run()`` does it: load the configuration, open the ledger, take the control
socket (and with it the single-instance lock), start one worker per channel and hand each what the
ledger says it still owes, make the first plan, tell systemd READY=1, then run the supervised tasks
in one TaskGroup:

- the dispatcher (takes due keys from the scheduler, claims each alert in the ledger, which makes
  every channel owe it, and hands it to every channel's worker; it never waits on a channel),
- the channel workers (delivery.ChannelWorker: one task and one queue per channel, so a slow or
  hung channel delays only itself; each retries and gives up on its own),
- the clock watch (suspend or step -> wake the scheduler and re-plan),
- the re-plan timer, the configuration file watch,
- the systemd watchdog pinger and the clock-health check.

An exception in any of them ends the TaskGroup and leaves ``run()``: the service stops loudly and
systemd restarts it. Channel failures are not exceptions here: they are recorded, shown in
``status`` and retried.
"""

from __future__ import annotations

import asyncio
import contextlib
import gc
import itertools
import logging
import os
import signal
import sqlite3
import sys
from collections.abc import Callable, Iterable, Iterator, Mapping, Sequence
from dataclasses import replace
from datetime import UTC, datetime, timedelta
from typing import Any

from siderod.common.clock import Clock
from siderod.common.errors import ControlError, SiderodError
from siderod.common.model import (
    ChannelHealth,
    ClockHealth,
    Config,
    Delivery,
    PlannedAlert,
    ServiceSnapshot,
    Urgency,
)
from siderod.plan.insist import event_id
from siderod.plan.planner import (
    SKY_TARGET_NAME,
    alert_body,
    format_missed_summary,
    near_sun_targets,
    plan_alerts,
    plan_repeats,
    repeat_lookback_minutes,
)
from siderod.service.anomaly import ClockAnomaly, ClockWatch
from siderod.service.delivery import (
    AlertMessage,
    Channel,
    ChannelFailed,
    ChannelHealthBook,
    ChannelWorker,
    OwedDelivery,
    build_channels,
    channel_accepts,
)
from siderod.service.ledger import Ledger, LedgerRow, open_ledger
from siderod.service.loading import LOAD_TIMEOUT_SECONDS
from siderod.service.scheduling import Scheduler, SchedulerFactory

__all__ = ["Service", "AgendaSource", "LATE_MARK_SECONDS", "RETRY_SECONDS", "repeat_stretch_minutes",
           "first_stretch_minutes"]

log = logging.getLogger("siderod.service")

# An alert this much after its due time is marked late in its title: under half a minute an alert
# is as good as on time to an observer at the telescope (common practice, our judgement).
LATE_MARK_SECONDS = 30.0
# How often a failed channel is tried again with the alerts it still owes (within their grace).
RETRY_SECONDS = 30.0
# How often the kernel's clock-synchronisation state is read again.
CLOCK_HEALTH_SECONDS = 600.0
# Upcoming alerts listed in a snapshot, and recent deliveries.
SNAPSHOT_ALERTS = 20
# A reload or control request that sends a service message waits at most this long (real seconds)
# for the channels to take it; each channel's own send is bounded anyway, this only caps the reply.
SERVICE_MESSAGE_WAIT_SECONDS = 5.0
# How often writes that failed (a full or failing disk) are tried again, in monotonic seconds.
LEDGER_RETRY_SECONDS = 10.0
# Closed ledger rows older than this are forgotten at start-up.
LEDGER_KEEP_DAYS = 14
# The scheduler holds the alerts due within twice the re-plan interval, and at least this long
# (every re-plan refreshes them; see Service._schedule). Critical repeats are planned as far
# (repeat_stretch_minutes).
SCHEDULE_MIN_MINUTES = 180.0
# The first plan at start covers this much (and at least two repeat periods): the whole plan
# follows at once (20-35 s for 100,000 targets on a 2-core machine), so this is margin enough, and a
# short first stretch is what makes the service ready within a second or two.
FIRST_STRETCH_MINUTES = 30.0
# The Sun hold's altitudes for a whole plan are interpolated from a grid this fine (seconds).
SUN_GRID_SECONDS = 15.0
# A graceful stop waits this long for the alert being sent to finish (each channel is bounded).
STOP_WAIT_SECONDS = 15.0
# Ledger writes a full disk kept back are tried this often at a stop, this far apart (real
# seconds): a stop that comes just as the disk is freed still writes them.
STOP_REPLAY_TRIES = 8
STOP_REPLAY_PAUSE_SECONDS = 0.25

# agenda_source(config, start_utc, hours) -> Agenda (siderod.plan.agenda.compute_agenda by default)
AgendaSource = Callable[[Config, datetime, float], Any]


class _StopRequested(Exception):
    """Raised inside the TaskGroup to end it after a requested stop."""


class Service:
    """One running siderod service.

    Args:
        config_loader: returns a whole, validated Config or raises ConfigErrors; called at start and
            on every reload (``lambda: load_config(args.config, os.environ)`` in the CLI).
        clock: the only source of time (SystemClock, or FakeClock in tests).
        scheduler_factory: builds the Scheduler from the on-due callback; None gives the APScheduler
            adapter with the configured grace.
        channels: fixed channels (tests); None builds them from ``[notify]`` and rebuilds on reload.
        paths: anything with ``ledger_path``, ``socket_path`` and ``lock_path`` (``paths.Paths``).
        ledger_path: overrides ``paths.ledger_path``; one of the two is required.
        agenda_source: computes the agenda; None uses ``siderod.plan.agenda.compute_agenda``.
        control: serve the control socket (needs ``paths``).
        env: the environment for sd_notify (``os.environ`` when None).
        anomaly_period_seconds: monotonic seconds between clock checks.
        file_poll_seconds: monotonic seconds between configuration file checks (0: no watch).
        offload_planning: compute the agenda in a worker thread so the loop stays responsive.
            Tests under FakeClock pass False so that simulated time cannot run on meanwhile.
        boot_seconds: CLOCK_BOOTTIME reader to tell a suspend from a step (None: cannot tell).
        clock_health_reader: returns ClockHealth; None uses ``siderod.service.clockhealth``.
        sun_altitude_deg: Sun altitude at a UTC instant for the hold rule; None computes it with
            ``siderod.plan.positions`` when that is available.
        load_config_in_child: reload in a child process (``siderod.service.loading``), so that
            parsing and checking a big file never holds this interpreter; ``config_loader`` must
            then be picklable (``loading.ConfigLoad``) and take the instant (POSIX seconds, on
            ``clock``) at which to look up DUT1. ``siderod run`` does this.
        load_timeout_seconds: a reload in a child that takes longer is stopped (the last good
            configuration stays).
    """

    def __init__(
        self,
        config_loader: Callable[[], Config],
        clock: Clock,
        scheduler_factory: SchedulerFactory | None = None,
        channels: Sequence[Channel] | None = None,
        paths: Any = None,
        *,
        ledger_path: str | os.PathLike[str] | None = None,
        agenda_source: AgendaSource | None = None,
        control: bool = True,
        env: Mapping[str, str] | None = None,
        anomaly_period_seconds: float = 2.0,
        file_poll_seconds: float = 5.0,
        offload_planning: bool = True,
        boot_seconds: Callable[[], float] | None = None,
        clock_health_reader: Callable[[], ClockHealth] | None = None,
        sun_altitude_deg: Callable[[datetime], float] | None = None,
        retry_seconds: float = RETRY_SECONDS,
        load_config_in_child: bool = False,
        load_timeout_seconds: float = LOAD_TIMEOUT_SECONDS,
    ) -> None:
        if ledger_path is None and paths is None:
            raise ValueError("Service needs paths (from siderod.files.paths.resolve_paths) or ledger_path")
        self._config_loader = config_loader
        self._clock = clock
        self._scheduler_factory = scheduler_factory
        self._fixed_channels = list(channels) if channels is not None else None
        self._paths = paths
        self._ledger_path = str(ledger_path if ledger_path is not None else paths.ledger_path)
        self._agenda_source = agenda_source
        self._control_wanted = control and paths is not None
        self._env = os.environ if env is None else env
        self._anomaly_period_seconds = anomaly_period_seconds
        self._file_poll_seconds = file_poll_seconds
        self._offload_planning = offload_planning
        self._boot_seconds = boot_seconds
        self._clock_health_reader = clock_health_reader
        self._sun_altitude_override = sun_altitude_deg
        self._retry_seconds = retry_seconds
        self._load_in_child = load_config_in_child
        self._load_timeout_seconds = load_timeout_seconds

        self.config: Config | None = None
        self.config_error = ""
        self.started_utc: datetime | None = None
        self.clock_health = ClockHealth(state="unknown", detail="not read yet")
        self.anomalies: list[ClockAnomaly] = []
        self._ledger: Ledger | None = None
        self._scheduler: Scheduler | None = None
        self._channels: list[Channel] = []
        self._health = ChannelHealthBook()
        self._plan: dict[str, PlannedAlert] = {}  # open alerts of the current plan, by key
        # event id -> keys of its planned repeats, made with each plan (status must not scan it)
        self._repeats_by_event: dict[str, tuple[str, ...]] = {}
        self._mutes: dict[str, datetime | None] = {}
        self._queue: asyncio.Queue[str] = asyncio.Queue()
        self._missed_titles: list[str] = []
        self._workers: dict[str, ChannelWorker] = {}
        self._worker_tasks: dict[str, asyncio.Task[None]] = {}
        self._worker_failed: asyncio.Future[None] | None = None
        self._background: set[asyncio.Task[Any]] = set()
        self._plan_lock = asyncio.Lock()
        self._reload_lock = asyncio.Lock()  # one reload at a time, now that loading awaits
        self._stop = asyncio.Event()
        self._reload_asked = asyncio.Event()
        self._ready = asyncio.Event()
        self._whole_plan = asyncio.Event()  # set once a plan of the whole horizon is made
        # Until then (the first stretch's plan at start): how far the plan reaches.
        self._partial_plan_until_utc: datetime | None = None
        self._file_stamps: dict[str, tuple[int, int] | None] = {}
        self._sun_altitude: Callable[[datetime], float] | None = None
        self._service_message_count = 0
        self._catch_up_floor_utc: datetime | None = None
        # Ledger writes that failed, in order, to replay when the disk recovers; and why.
        self.ledger_error = ""
        self._unwritten: list[tuple[str, Callable[[], object]]] = []
        self._claimed_unwritten: set[str] = set()
        # Acknowledged while the ledger could not be written: in force now, written on recovery.
        self._acks_unwritten: set[str] = set()
        self._mount: Any = None  # siderod.service.mount.MountDesk, built in run()

    # -- public API ----------------------------------------------------------------------------
    async def run(self, *, install_signal_handlers: bool = False) -> None:
        """Run until ``request_stop()`` (or SIGTERM with ``install_signal_handlers``).

        Raises:
            ConfigErrors: the configuration is invalid at start-up (nothing was started).
            ServiceAlreadyRunning: another instance holds the lock.
            Exception: anything unexpected from a supervised task, after a clean shutdown.
        """
        self.started_utc = self._clock.now_utc()
        # Invalid at start: raise, nothing else to fall back on. Loaded here, in this process:
        # nothing is answering yet.
        self.config = (self._config_loader(self.started_utc.timestamp()) if self._load_in_child
                       else self._config_loader())
        self._sun_altitude = self._sun_altitude_override or _sun_altitude_function(self.config)
        self._channels = self._build_channels(self.config)
        loop = asyncio.get_running_loop()
        async with contextlib.AsyncExitStack() as stack:
            if self._control_wanted:
                from siderod.service.control import ControlServer

                # Taken first: the lock keeps a second instance from touching the ledger or socket.
                await stack.enter_async_context(
                    ControlServer(self._paths.socket_path, self.handle_request, self._paths.lock_path)
                )
            self._ledger, ledger_notice = open_ledger(self._ledger_path, self._clock.now_utc())
            stack.callback(self._ledger.close)
            # Catching up on alerts that fell due while the service was down only makes sense if
            # it ran before; a first start begins with what is due from now on.
            # The floor is stored in the ledger, so the promise outlives a restart.
            self._catch_up_floor_utc = self._ledger.catch_up_floor(self.started_utc)
            keep_from_utc = self._clock.now_utc() - timedelta(days=LEDGER_KEEP_DAYS)
            self._write("prune", lambda: self._ledger.prune(keep_from_utc))
            self._scope_ledger_to(self.config)  # before the workers pick up what is owed
            self._mutes = self._ledger.mutes(self._clock.now_utc())
            from siderod.service.mount import MountDesk

            self._mount = MountDesk(self._clock, self._send_mount_message, self.replan,
                                    on_acknowledge=self._mount_acknowledged)
            self._mount.start(self.config, self._ledger)
            self._scheduler = self._make_scheduler()
            await self._scheduler.start()
            stack.push_async_callback(self._scheduler.shutdown)
            if install_signal_handlers:
                loop.add_signal_handler(signal.SIGTERM, self.request_stop)
                loop.add_signal_handler(signal.SIGINT, self.request_stop)
                loop.add_signal_handler(signal.SIGHUP, self.request_reload)
                stack.callback(_remove_signal_handlers, loop)
            self._read_clock_health()
            self._file_stamps = self._stat_files()
            self._worker_failed = loop.create_future()
            stack.push_async_callback(self._stop_workers)
            self._start_workers()
            if ledger_notice:
                self._put_service_message("siderod: alert ledger replaced", ledger_notice, Urgency.NORMAL)
            # Ready soon however long the target list: the first plan covers the first stretch
            # (all the scheduler needs); the whole horizon is planned at once after READY=1.
            first_stretch_only = config_needs_a_first_stretch(self.config)
            await self.replan("start", stretch_only=first_stretch_only)
            self._notify("READY=1\n" + self._status_line())
            self._ready.set()
            log.info(
                "siderod service running: config %s%s, ledger %s",
                self.config.path,
                " (the bundled demo: an invented site; write your own, see `siderod check`)"
                if self.config.is_demo
                else "",
                self._ledger_path,
            )
            try:
                async with asyncio.TaskGroup() as tasks:
                    if first_stretch_only:
                        tasks.create_task(self.replan("start: the whole horizon"), name="first-horizon")
                    tasks.create_task(self._dispatcher(), name="dispatch")
                    tasks.create_task(self._supervise_workers(), name="channel-workers")
                    watch = ClockWatch(
                        self._clock,
                        self._on_anomaly,
                        period_seconds=self._anomaly_period_seconds,
                        boot_seconds=self._boot_seconds,
                    )
                    tasks.create_task(watch.run(), name="clock-watch")
                    tasks.create_task(self._replan_timer(), name="replan-timer")
                    tasks.create_task(self._reload_listener(), name="reload")
                    tasks.create_task(self._ledger_reconciler(), name="ledger-retry")
                    tasks.create_task(self._clock_health_loop(), name="clock-health")
                    if self._file_poll_seconds > 0:
                        tasks.create_task(self._file_watch(), name="file-watch")
                    tasks.create_task(self._watchdog(), name="watchdog")
                    tasks.create_task(self._mount.run(), name="mount")
                    tasks.create_task(self._stopper(), name="stopper")
            except* _StopRequested:
                pass
            finally:
                self._notify("STOPPING=1")
                log.info("siderod service stopping")
                # An acknowledgement from a desktop button still running: it reached the ledger
                # before its first await, so cancelling stops only its re-plan, which must not
                # outlive the ledger.
                for task in list(self._background):
                    task.cancel()
                await asyncio.gather(*self._background, return_exceptions=True)

    async def wait_ready(self) -> None:
        """Wait until the first plan is made (tests and the CLI's live view use this)."""
        await self._ready.wait()

    async def wait_whole_plan(self) -> None:
        """Wait until a plan of the whole horizon is made: at start, right after the first
        stretch's plan and READY=1 (see ``replan(stretch_only=True)``)."""
        await self._whole_plan.wait()

    def request_stop(self) -> None:
        """Ask for a graceful stop: the alert being sent finishes, then everything closes."""
        self._stop.set()

    def request_reload(self) -> None:
        """Ask for a configuration reload (what SIGHUP does)."""
        self._reload_asked.set()

    async def handle_request(self, request: Any) -> Mapping[str, Any]:
        """Serve one control request (``protocol.Request``: op, target, for_seconds).

        Raises:
            ControlError: the request cannot be done; the message says why (sent to the peer).
        """
        op = str(getattr(request, "op", ""))
        if op == "status":
            from siderod.service.protocol import snapshot_to_json

            return snapshot_to_json(self.snapshot())
        if op == "mute":
            target = self._known_target(request.target)
            until_utc = None
            if request.for_seconds is not None:
                until_utc = self._clock.now_utc() + timedelta(seconds=float(request.for_seconds))
            await self.mute(target, until_utc)
            return {"target": target, "until_utc": None if until_utc is None else _iso(until_utc)}
        if op == "unmute":
            target = str(request.target)
            if target not in self._mutes:
                self._known_target(target)  # a name that is neither muted nor configured: refused
            was_muted = await self.unmute(target)
            return {"target": target, "was_muted": was_muted}
        if op == "reload":
            ok = await self.reload("control request", always_announce=True)
            path = self.config.path if self.config else ""
            return {"reloaded": ok, "config_path": path, "error": self.config_error}
        if op == "test-alert":
            return {"channels": await self.send_test_alert()}
        if op == "use":
            target = None if request.target is None else self._known_target(request.target)
            await self._mount.use(target, "command")
            return {"target": target}
        if op == "ack":
            target = None if request.target is None else self._known_target(request.target)
            return {"acknowledged": list(await self.acknowledge(target=target, via="command"))}
        raise ControlError(
            f"unknown request {op!r}; expected status, mute, unmute, reload, test-alert, use or ack"
        )

    def snapshot(self) -> ServiceSnapshot:
        """Everything ``status`` and the live view show, built fresh."""
        now_utc = self._clock.now_utc()
        config = self.config
        if config is None or self._ledger is None:
            raise SiderodError("the service has not started yet")
        # Only what is still ahead: an alert past due is being delivered or swept, never "next".
        # The plan dict is in due order (see _compute_plan) and only loses entries, so its first
        # items are the next alerts: no sort of a 100,000-alert plan on every status.
        ahead = itertools.dropwhile(lambda a: a.due_utc < now_utc, self._plan.values())
        upcoming = [replace(a, body=alert_body(a, config))
                    for a in itertools.islice(_first_repeat_only(ahead), SNAPSHOT_ALERTS)]
        try:
            counts = self._ledger.counts()
            recent = self._ledger.recent_deliveries(SNAPSHOT_ALERTS)
        except sqlite3.Error as exc:  # an unreadable disk: status still answers, and says why
            counts, recent = {}, ()
            self._ledger_failed("read status", exc)
        return ServiceSnapshot(
            taken_utc=now_utc,
            started_utc=self.started_utc or now_utc,
            config_path=config.path,
            site=config.site,
            dut1_seconds=config.time.dut1_seconds,
            dut1_source=config.time.dut1_source,
            clock_health=self.clock_health,
            next_alerts=tuple(upcoming),
            recent_deliveries=recent,
            channels=self._channel_snapshot(),
            muted=dict(self._mutes),
            config_error=self.config_error,
            missed_count=counts.get("missed", 0),
            planned_count=len(self._plan),
            partial_plan_until_utc=self._partial_plan_until_utc,
            clock_tolerance_seconds=self.config.time.clock_tolerance_seconds,
            mount=self._mount.view(),
            awaiting_ack=self.awaiting_acknowledgement(),
            ledger_error=self.ledger_error,
        )

    def awaiting_acknowledgement(self) -> tuple[str, ...]:
        """Event ids of critical alerts that have been given and will repeat until acknowledged."""
        assert self._ledger is not None
        # Events whose repeats are still in the plan (not all delivered or dropped since), given
        # according to the ledger or to the claims it could not take yet (a full disk).
        given_events = self._ledger.given_events() | {event_id(k) for k in self._claimed_unwritten}
        candidates = self._repeats_by_event.keys() & given_events
        plan = self._plan
        given = {e for e in candidates if any(k in plan for k in self._repeats_by_event[e])}
        return tuple(sorted(given | set(self._mount.awaiting())))  # and the linked mount's own

    async def acknowledge(self, *, target: str | None = None, events: Sequence[str] | None = None,
                          via: str) -> tuple[str, ...]:
        """Stop critical alerts repeating: these ``events``, or every one awaiting acknowledgement
        (only ``target``'s when given). Their repeats are taken out of the plan and any copy still
        owed on a channel is dropped; configured alerts not yet due still come once each.

        Returns:
            The event ids newly acknowledged (an event acknowledged before is not repeated here).
        """
        assert self._ledger is not None
        if events is None:
            events = [e for e in self.awaiting_acknowledgement()
                      if target is None or e.rsplit("|", 2)[0] == target]
        now_utc = self._clock.now_utc()
        ledger = self._ledger
        fresh = self._write("acknowledge", lambda: ledger.acknowledge(events, now_utc, via),
                            replay=lambda: self._write_acks(events, now_utc, via))
        if fresh is None:  # not written yet: in force at once (repeats stop), written on recovery
            known = self._acknowledged()
            fresh = tuple(e for e in dict.fromkeys(events) if e not in known)
            self._acks_unwritten.update(fresh)
        self._mount.user_acknowledged(fresh)
        if not fresh:
            return ()
        dropped = self._write("drop owed alerts", lambda: ledger.drop_owed_of_events(fresh, now_utc),
                              fallback=())
        prefixes = tuple(event + "|" for event in fresh)
        for worker in self._workers.values():
            # By prefix too: debts the ledger could not drop (or never held) are forgotten alike.
            worker.drop(set(dropped) | {k for k in worker.queued_keys() if k.startswith(prefixes)})
        log.info("acknowledged (%s): %s; their repeats stop", via, ", ".join(fresh))
        await self.replan("acknowledged")
        return fresh

    async def cycle_target_in_use(self) -> str | None:
        """The board's U key: the next target in use (nearest the meridian first), then none."""
        assert self.config is not None
        return await self._mount.cycle(self.config)

    def _acknowledged(self) -> frozenset[str]:
        """Every acknowledged event id: the ledger's and those it could not be given yet."""
        assert self._ledger is not None
        return self._ledger.acknowledged() | self._acks_unwritten

    def _write_acks(self, events: Sequence[str], now_utc: datetime, via: str) -> None:
        assert self._ledger is not None
        self._ledger.acknowledge(events, now_utc, via)
        self._acks_unwritten.difference_update(events)

    def _mount_acknowledged(self, events: tuple[str, ...], reason: str) -> None:
        """The mount acknowledged its own flip alerts (the pier side changed): keep it in the ledger."""
        assert self._ledger is not None
        try:
            self._ledger.acknowledge(events, self._clock.now_utc(), f"mount ({reason})")
        except Exception:  # the ledger's own trouble is reported by status; the mount goes on
            log.exception("could not record the mount's acknowledgement in the ledger")

    def _acknowledge_from_desktop(self, key: str) -> None:
        """The desktop's Acknowledge button (called from the D-Bus signal, on the loop)."""
        task = asyncio.get_running_loop().create_task(
            self.acknowledge(events=[event_id(key)], via="desktop"), name="acknowledge")
        self._background.add(task)
        task.add_done_callback(self._background.discard)

    def _build_channels(self, config: Config) -> list[Channel]:
        if self._fixed_channels is None:
            return build_channels(config, on_acknowledge=self._acknowledge_from_desktop)
        for channel in self._fixed_channels:
            if getattr(channel, "on_acknowledge", False) is None:
                channel.on_acknowledge = self._acknowledge_from_desktop  # type: ignore[attr-defined]
        return list(self._fixed_channels)

    async def mute(self, target: str, until_utc: datetime | None) -> None:
        """Mute a target (``"sky"``: Sun, Moon and twilight alerts) until a time, or until unmuted."""
        assert self._ledger is not None
        self._write_or_refuse("mute", lambda: self._ledger.set_mute(target, until_utc))
        self._mutes = self._ledger.mutes(self._clock.now_utc())
        log.info("muted %s %s", target, "until unmuted" if until_utc is None else f"until {_iso(until_utc)}")
        await self.replan("mute")

    async def unmute(self, target: str) -> bool:
        assert self._ledger is not None
        was_muted = bool(self._write_or_refuse("unmute", lambda: self._ledger.clear_mute(target)))
        self._mutes = self._ledger.mutes(self._clock.now_utc())
        if was_muted:
            log.info("unmuted %s", target)
            await self.replan("unmute")
        return was_muted

    async def reload(self, reason: str, *, always_announce: bool = False) -> bool:
        """Load the configuration again and swap it in whole, or keep the last good one.

        An invalid configuration gives one log line and one alert naming the problem; the same
        problem found again by the file watch is not announced again (``always_announce`` makes a
        SIGHUP or ``siderod reload`` announce it each time).

        Returns:
            True if the new configuration is in use.
        """
        async with self._reload_lock:
            return await self._reload(reason, always_announce=always_announce)

    async def _reload(self, reason: str, *, always_announce: bool) -> bool:
        self._notify("RELOADING=1")
        try:
            # Off the loop: reading a big target file takes seconds, and meanwhile `status`,
            # the scheduler and the watchdog pings must keep going.
            new_config = await self._load_config()
        except (SiderodError, OSError) as exc:
            text = str(exc)
            repeat = text == self.config_error
            self.config_error = text
            self._file_stamps = self._stat_files()
            if always_announce or not repeat:
                one_line = " ".join(text.split())
                log.error("configuration not reloaded (%s); keeping the last good one: %s", reason, one_line)
                await self._send_service_message(
                    "siderod: configuration not reloaded",
                    f"{_first_lines(text, 6)}\nStill using the last good configuration.",
                    Urgency.NORMAL,
                )
            self._notify("READY=1\n" + self._status_line())
            return False
        # Swapping in and re-planning, the ledger write included, makes objects by the ten
        # thousand: no collection pauses the service meanwhile (see _collections_paused). The
        # wait for the child above runs with collections on: it may last minutes if a load hangs.
        with _collections_paused() if self._offload_planning else contextlib.nullcontext():
            return await self._swap_in(new_config, reason)

    async def _swap_in(self, new_config: Config, reason: str) -> bool:
        old_config, self.config = self.config, new_config
        self.config_error = ""
        self._file_stamps = self._stat_files()
        if self._sun_altitude_override is None:
            self._sun_altitude = _sun_altitude_function(new_config)
        if self._fixed_channels is None and (old_config is None or old_config.notify != new_config.notify):
            await self._stop_workers()
            self._channels = self._build_channels(new_config)
            self._start_workers()
        self._mount.update_config(new_config)
        dropped = self._scope_ledger_to(new_config)
        for worker in self._workers.values():
            worker.drop(set(dropped))
        log.info("configuration reloaded (%s) from %s", reason, new_config.path)
        await self.replan("reload")
        self._notify("READY=1\n" + self._status_line())
        return True

    async def send_test_alert(self) -> dict[str, str]:
        """Send one test message through every channel; return channel -> "ok" or the error."""
        now_utc = self._clock.now_utc()
        message = AlertMessage(
            key=f"test|{_iso(now_utc)}",
            title="siderod test alert",
            body=f"Sent at {_iso(now_utc)} through every channel. No action needed.",
            urgency=Urgency.NORMAL,
        )
        channels = list(self._channels)
        results = await asyncio.gather(*(self._send_direct(c, message) for c in channels))
        return {c.name: r for c, r in zip(channels, results, strict=True)}

    async def replan(self, reason: str, *, stretch_only: bool = False) -> None:
        """Sweep missed alerts, compute the agenda for the horizon and hand the open alerts out.

        ``stretch_only`` (the first plan at start): plan only the alerts due within the first
        stretch (``first_stretch_minutes``), from an agenda just long enough to hold their events;
        the ledger keeps what an earlier run planned after it until the next whole plan.
        """
        assert self.config is not None and self._ledger is not None and self._scheduler is not None
        async with self._plan_lock:
            config = self.config
            now_utc = self._clock.now_utc()
            grace = timedelta(minutes=config.alerts.grace_minutes)
            ledger = self._ledger
            swept = self._write("sweep missed alerts", lambda: ledger.sweep_missed(now_utc - grace, now_utc),
                                journal=False, fallback=())
            known = self._known_names(config)
            gone = [row for row in swept if row.target not in known]
            if gone:
                log.info("dropped %d missed alerts of targets no longer in %s (%s): not reported",
                         len(gone), config.path, ", ".join(sorted({r.target for r in gone})))
            for row in swept:
                if row.target in known:
                    self._note_missed(row.title, row.due_utc)
            # Early enough that an event whose repeats are still owed is in the agenda.
            lookback = grace + timedelta(minutes=repeat_lookback_minutes(config))
            start_utc = now_utc - lookback
            stretch_minutes = (first_stretch_minutes if stretch_only else repeat_stretch_minutes)(config)
            stretch_end_utc = now_utc + timedelta(minutes=stretch_minutes)
            ahead_hours = config.alerts.horizon_hours
            if stretch_only:  # the events of every alert due within the stretch, and no more
                ahead_hours = min(ahead_hours, (stretch_minutes + _longest_lead_minutes(config)) / 60.0)
            hours = ahead_hours + lookback.total_seconds() / 3600.0
            self._mutes = self._ledger.mutes(now_utc)
            planned, near_sun = await self._compute_plan(config, start_utc, hours, dict(self._mutes), now_utc,
                                                         self._acknowledged(), stretch_end_utc)
            planned = self._mount.adjust(planned, config)  # the target in use
            # Only critical alerts insist: a repeat made less urgent by the target in use goes.
            planned = tuple(a for a in planned if a.repeat_number == 0 or a.urgency is Urgency.CRITICAL)
            if near_sun:
                log.info("no alerts for %s: closer than %g° to the Sun ([alerts] sun_separation_min)",
                         ", ".join(near_sun), config.alerts.sun_separation_min_deg)
            if self._catch_up_floor_utc is not None:
                planned = tuple(a for a in planned if a.due_utc >= self._catch_up_floor_utc)
            keep_after_utc = None
            if stretch_only:
                planned = tuple(a for a in planned if a.due_utc <= stretch_end_utc)
                keep_after_utc = stretch_end_utc
            now_utc = self._clock.now_utc()  # the agenda may have taken a while
            written = await self._write_plan(planned, now_utc, keep_after_utc)
            if written is None:  # not written: plan from what the ledger holds and what we sent since
                settled = self._ledger.settled_keys(planned) | self._claimed_unwritten
                written = _index_plan(planned, frozenset(a.key for a in planned if a.key not in settled))
            self._plan, self._repeats_by_event = written
            due_now = list(itertools.takewhile(lambda a: a.due_utc <= now_utc, self._plan.values()))
            self._schedule(now_utc)
            for alert in sorted(due_now, key=lambda a: (a.due_utc, a.key)):
                self._queue.put_nowait(alert.key)
            if self._missed_titles:
                self._queue.put_nowait(_SUMMARY)
            if stretch_only:
                self._partial_plan_until_utc = stretch_end_utc
            else:
                self._partial_plan_until_utc = None
                self._whole_plan.set()
            log.info(
                "planned %d alerts to %s (%s%s); %d due now",
                len(self._plan),
                _iso(stretch_end_utc if stretch_only else now_utc + timedelta(hours=ahead_hours)),
                reason,
                ": the first stretch, the whole horizon follows" if stretch_only else "",
                len(due_now),
            )
        self._notify(self._status_line())

    # -- delivery ------------------------------------------------------------------------------
    def _on_due(self, key: str) -> None:
        self._queue.put_nowait(key)

    async def _dispatcher(self) -> None:
        """Turn due keys into debts: claim in the ledger, then hand to every channel's worker."""
        while True:
            key = await self._queue.get()
            if key != _SUMMARY:
                self._deliver(key)
            if self._queue.empty() and self._missed_titles:
                self._send_missed_summary()
            self._notify(self._status_line())

    def _deliver(self, key: str) -> None:
        assert self.config is not None and self._ledger is not None and self._scheduler is not None
        alert = self._plan.get(key)
        if alert is None:
            return  # re-planned away (muted, moved, already done) after it was queued
        now_utc = self._clock.now_utc()
        late_seconds = (now_utc - alert.due_utc).total_seconds()
        if late_seconds < 0:
            # Only after a backward clock step can a timer fire before the wall-clock due time.
            log.info("alert %s fired %.1f s early (clock stepped back?); rescheduled", key, -late_seconds)
            self._schedule(now_utc)
            return
        grace_seconds = self.config.alerts.grace_minutes * 60.0
        if late_seconds > grace_seconds:
            del self._plan[key]
            if alert.repeat_number:
                # A reminder, not a debt (plan/insist.py): the next repeat reminds again.
                log.info("repeat %s dropped: %.0f s late, past its grace; the series goes on",
                         key, late_seconds)
                return
            self._write("mark missed", lambda: self._ledger.mark_missed(key, now_utc))
            self._note_missed(alert.title, alert.due_utc)
            return
        alert = replace(alert, body=alert_body(alert, self.config))
        message = _message_from_row(_row_from_alert(alert))
        # A channel with a filter (a push destination's urgency and kinds) owes only what it takes.
        names = [name for name, worker in self._workers.items() if channel_accepts(worker.channel, message)]
        ledger = self._ledger
        if alert.repeat_number:  # no planned row (see _write_plan): written and claimed at once
            claimed = self._write("claim", lambda: ledger.record_claim(alert, now_utc, names))
        else:
            claimed = self._write("claim", lambda: ledger.claim(key, now_utc, names, body=alert.body),
                                  replay=lambda: ledger.record_claim(alert, now_utc, names))
        if claimed is None:  # the ledger cannot be written: deliver from memory, write it later
            self._claimed_unwritten.add(key)
        elif not claimed:
            self._plan.pop(key, None)
            return
        del self._plan[key]
        give_up_utc = alert.due_utc + timedelta(seconds=grace_seconds)
        for name in names:
            self._workers[name].put(OwedDelivery(message, alert.due_utc, give_up_utc))

    def _start_workers(self) -> None:
        """One worker per channel, each given what the ledger says that channel still owes."""
        assert self.config is not None and self._ledger is not None
        now_utc = self._clock.now_utc()
        for channel in self._channels:
            worker = ChannelWorker(channel, self._clock, self, late_mark_seconds=LATE_MARK_SECONDS,
                                   retry_seconds=self._retry_seconds)
            self._workers[channel.name] = worker
            task = asyncio.get_running_loop().create_task(worker.run(), name=f"channel-{channel.name}")
            task.add_done_callback(self._worker_done)
            self._worker_tasks[channel.name] = task
        ledger = self._ledger
        adopted = self._write("adopt half-sent alerts", lambda: ledger.adopt_unowned(self._workers, now_utc),
                              fallback=0)
        if adopted:
            log.info("%d half-sent alerts from an older ledger are now owed by each channel that lacks them",
                     adopted)
        grace = timedelta(minutes=self.config.alerts.grace_minutes)
        resumed: dict[str, int] = {}
        for owed in self._ledger.owed():
            worker = self._workers.get(owed.channel)
            if worker is None:
                closed = self._write("drop a removed channel",
                                     lambda c=owed.channel: ledger.drop_channel(c, now_utc),
                                     fallback=())
                for key in closed:
                    log.info("alert %s closed: channel %s is no longer configured", key, owed.channel)
                continue
            row = owed.alert
            worker.put(OwedDelivery(_message_from_row(row), row.due_utc, row.due_utc + grace,
                                    started_utc=owed.started_utc))
            resumed[owed.channel] = resumed.get(owed.channel, 0) + 1
        for name, n in sorted(resumed.items()):
            log.warning("channel %s still owes %d alerts from before; sending them now (late-marked if late)",
                        name, n)

    async def _stop_workers(self) -> None:
        """Let each worker finish the send in flight (bounded), then end the workers and channels."""
        workers, self._workers = self._workers, {}
        tasks, self._worker_tasks = self._worker_tasks, {}
        idle = await asyncio.gather(*(w.stop(STOP_WAIT_SECONDS) for w in workers.values()))
        for worker, ok in zip(workers.values(), idle, strict=True):
            if not ok:
                log.warning("stopping while channel %s is still sending; the next start finishes it",
                            worker.name)
        for task in tasks.values():
            task.remove_done_callback(self._worker_done)
            task.cancel()
        await asyncio.gather(*tasks.values(), return_exceptions=True)
        for worker in workers.values():
            try:
                await worker.channel.close()
            except Exception:
                log.debug("closing channel %s failed", worker.name, exc_info=True)

    def _worker_done(self, task: asyncio.Task[None]) -> None:
        if task.cancelled() or self._worker_failed is None or self._worker_failed.done():
            return
        exc = task.exception()
        self._worker_failed.set_exception(exc or RuntimeError(f"{task.get_name()} ended"))

    async def _supervise_workers(self) -> None:
        """A worker that dies (a bug) ends the service loudly, like any other supervised task."""
        assert self._worker_failed is not None
        await self._worker_failed

    # DeliverySink: what the workers report (delivery.DeliverySink) -------------------------------
    def started(self, channel: str, item: OwedDelivery, now_utc: datetime) -> None:
        assert self._ledger is not None
        self._write("start mark", lambda: self._ledger.mark_started(item.message.key, channel, now_utc))

    def delivered(self, channel: str, item: OwedDelivery, sent: AlertMessage, now_utc: datetime) -> None:
        if not self._health.is_healthy(channel):
            log.info("channel %s works again", channel)
        self._health.ok(channel, now_utc)
        self._record(sent, channel, now_utc, ok=True)

    def failed(self, channel: str, item: OwedDelivery, sent: AlertMessage, now_utc: datetime,
               error: str) -> None:
        if self._health.failed(channel, error):
            log.warning("channel %s failed; other channels still deliver; retrying every %g s: %s",
                        channel, self._retry_seconds, error)
        self._record(sent, channel, now_utc, ok=False, error=error)

    def gave_up(self, channel: str, item: OwedDelivery, now_utc: datetime) -> None:
        assert self._ledger is not None
        message = item.message
        error = self._health.last_error(channel)
        log.warning("gave up sending %s on %s: past its grace (%s)", message.key, channel,
                    error or "no reason given")
        ledger = self._ledger
        self._write("channel missed", lambda: ledger.channel_missed(message.key, channel, now_utc, error))
        self._note_missed(f"{message.title} (not delivered on {channel})", item.due_utc)
        self._queue.put_nowait(_SUMMARY)

    async def _send_direct(self, channel: Channel, message: AlertMessage) -> str:
        """Send a test message straight on one channel (not queued); record it. Never raises."""
        try:
            await channel.send(message)
        except ChannelFailed as exc:
            error = str(exc)
        except Exception as exc:
            log.exception("channel %s failed unexpectedly", channel.name)
            error = f"unexpected {type(exc).__name__}: {exc}"
        else:
            now_utc = self._clock.now_utc()
            self._health.ok(channel.name, now_utc)
            self._record(message, channel.name, now_utc, ok=True)
            return "ok"
        now_utc = self._clock.now_utc()
        self.failed(channel.name, OwedDelivery(message, now_utc, ledger=False), message, now_utc, error)
        return error

    def _record(
        self, message: AlertMessage, channel: str, now_utc: datetime, *, ok: bool, error: str = ""
    ) -> None:
        assert self._ledger is not None
        delivery = Delivery(
            key=message.key,
            channel=channel,
            delivered_utc=now_utc,
            late_seconds=message.late_seconds,
            ok=ok,
            error=error,
            title=message.title,
        )
        self._write("delivery", lambda: self._ledger.record_delivery(delivery))

    # -- ledger write faults ------------------------------------------------------------------------
    def _write(self, what: str, write: Callable[[], Any], *, replay: Callable[[], Any] | None = None,
               journal: bool = True, fallback: Any = None) -> Any:
        """Do one ledger write; if the ledger cannot be written, keep going without it.

        The failed write (``replay`` if given) is kept, in order, and written again when the disk
        recovers (``_ledger_reconciler``); while earlier writes wait, later ones queue behind them
        so the ledger sees them in order. ``journal=False`` writes (the plan) are simply redone by
        the next re-plan. Returns what ``write`` returned, or ``fallback``.
        """
        if self._unwritten and journal:
            self._unwritten.append((what, replay or write))
            return fallback
        try:
            return write()
        except sqlite3.Error as exc:
            self._ledger_failed(what, exc)
            if journal:
                self._unwritten.append((what, replay or write))
            return fallback

    def _write_or_refuse(self, what: str, write: Callable[[], Any]) -> Any:
        """A write a user asked for (mute): refused with the reason if the ledger cannot take it."""
        try:
            return write()
        except sqlite3.Error as exc:
            self._ledger_failed(what, exc)
            raise ControlError(f"cannot {what} now: {self.ledger_error}") from None

    def _ledger_failed(self, what: str, exc: sqlite3.Error) -> None:
        first = not self.ledger_error
        self.ledger_error = (
            f"cannot write the alert ledger {self._ledger_path} ({exc}); alerts still go out but may repeat"
            " after a restart; free disk space or fix the file"
        )
        if first:
            log.error("LEDGER WRITE FAILED (%s): %s. Alerts keep going out; the writes are kept and tried"
                      " again every %g s.", what, self.ledger_error, LEDGER_RETRY_SECONDS)
            self._put_service_message(
                "siderod: cannot write its alert ledger",
                f"{self._ledger_path}: {exc}.\nAlerts still go out on every channel, but a restart may repeat"
                " some until the ledger can be written again. Free disk space or fix the file; siderod"
                " retries by itself.",
                Urgency.CRITICAL,
            )

    async def _ledger_reconciler(self) -> None:
        """Replay the writes that failed, in order, once the ledger can be written again."""
        while True:
            await self._clock.sleep(LEDGER_RETRY_SECONDS)
            if self.ledger_error and not self._replay_unwritten():
                await self.replan("ledger writable again")

    def _replay_unwritten(self) -> str:
        """Write what could not be written, in order; "" if all of it is written now, else why not."""
        while self._unwritten:
            what, write = self._unwritten[0]
            try:
                write()
            except sqlite3.Error as exc:
                log.debug("ledger still not writable (%s): %s", what, exc)
                return f"{what}: {exc}"
            self._unwritten.pop(0)
        count = len(self._claimed_unwritten)
        self._claimed_unwritten.clear()
        if self.ledger_error:
            self.ledger_error = ""
            log.warning("the alert ledger %s can be written again; %d alerts sent meanwhile are recorded",
                        self._ledger_path, count)
        return ""

    def _channel_snapshot(self) -> tuple[ChannelHealth, ...]:
        assert self._ledger is not None
        counts = self._ledger.channel_counts()
        out = []
        for health in self._health.snapshot([c.name for c in self._channels]):
            worker = self._workers.get(health.name)
            out.append(replace(health, owed_count=worker.owed_count if worker else 0,
                               missed_count=counts.get(health.name, {}).get("missed", 0)))
        return tuple(out)

    def _note_missed(self, title: str, due_utc: datetime) -> None:
        log.warning("alert missed (more than the grace period late): %s (due %s)", title, _iso(due_utc))
        self._missed_titles.append(f"{title} (due {due_utc.strftime('%H:%M')} UTC)")

    def _send_missed_summary(self) -> None:
        assert self.config is not None
        titles, self._missed_titles = self._missed_titles, []
        title, body = format_missed_summary(titles, self.config.alerts.grace_minutes)
        self._put_service_message(title, body, Urgency.NORMAL)

    async def _send_mount_message(self, message: AlertMessage) -> None:
        """A live mount alert (siderod.service.mount): queued at once on every channel's worker."""
        now_utc = self._clock.now_utc()
        for worker in self._workers.values():
            worker.put(OwedDelivery(message, now_utc, ledger=False))

    async def _send_service_message(self, title: str, body: str, urgency: Urgency) -> None:
        """Queue a service message and wait (bounded) until each channel has tried it once."""
        tries = self._put_service_message(title, body, urgency)
        if tries:
            await asyncio.wait(tries, timeout=SERVICE_MESSAGE_WAIT_SECONDS)

    def _put_service_message(self, title: str, body: str, urgency: Urgency) -> list[asyncio.Future[bool]]:
        """A message that is not a planned alert (missed summary, configuration error).

        Queued on the workers of healthy channels and the log, tried once, not in the ledger.
        """
        now_utc = self._clock.now_utc()
        self._service_message_count += 1
        message = AlertMessage(
            key=f"service|{_iso(now_utc)}|{self._service_message_count}",
            title=title,
            body=body,
            urgency=urgency,
        )
        tries: list[asyncio.Future[bool]] = []
        loop = asyncio.get_running_loop()
        for name, worker in self._workers.items():
            if not channel_accepts(worker.channel, message):
                continue
            if self._health.is_healthy(name) or name == "log":
                tried: asyncio.Future[bool] = loop.create_future()
                worker.put(OwedDelivery(message, now_utc, ledger=False, tried=tried))
                tries.append(tried)
        return tries

    # -- watching time, files and health -----------------------------------------------------
    async def _on_anomaly(self, anomaly: ClockAnomaly) -> None:
        self.anomalies.append(anomaly)
        assert self._scheduler is not None
        self._scheduler.wake()
        await self.replan(f"clock {anomaly.kind} {anomaly.jump_seconds:+.0f} s")

    async def _replan_timer(self) -> None:
        assert self.config is not None
        while True:
            await self._clock.sleep(self.config.alerts.replan_minutes * 60.0)
            await self.replan("timer")

    async def _reload_listener(self) -> None:
        while True:
            await self._reload_asked.wait()
            self._reload_asked.clear()
            await self.reload("SIGHUP", always_announce=True)

    async def _file_watch(self) -> None:
        while True:
            await self._clock.sleep(self._file_poll_seconds)
            stamps = self._stat_files()
            if stamps != self._file_stamps:
                changed = [p for p in stamps if stamps.get(p) != self._file_stamps.get(p)]
                self._file_stamps = stamps
                await self.reload("file changed: " + ", ".join(changed))

    def _stat_files(self) -> dict[str, tuple[int, int] | None]:
        if self.config is None:
            return {}
        stamps: dict[str, tuple[int, int] | None] = {}
        for name in (self.config.path, *self.config.target_files):
            try:
                st = os.stat(name)
            except OSError:
                stamps[name] = None
            else:
                stamps[name] = (st.st_mtime_ns, st.st_size)
        return stamps

    async def _watchdog(self) -> None:
        from siderod.service.sdnotify import watchdog_interval_seconds

        interval = watchdog_interval_seconds(self._env)
        if interval is None:
            await self._stop.wait()
            return
        while True:
            # Sent from the event loop, so a wedged loop stops the pings and systemd restarts us.
            self._notify("WATCHDOG=1")
            await self._clock.sleep(interval)

    async def _clock_health_loop(self) -> None:
        while True:
            await self._clock.sleep(CLOCK_HEALTH_SECONDS)
            self._read_clock_health()

    def _read_clock_health(self) -> None:
        try:
            if self._clock_health_reader is not None:
                health = self._clock_health_reader()
            else:
                from siderod.service.clockhealth import format_clock_warning, read_clock_health

                health = read_clock_health()
                warning = format_clock_warning(health, self.config.time.clock_tolerance_seconds)
                if warning and warning != getattr(self, "_last_clock_warning", None):
                    log.warning("clock: %s", warning)
                self._last_clock_warning = warning
        except (ImportError, OSError) as exc:
            health = ClockHealth(state="unknown", detail=f"cannot read: {exc}")
        self.clock_health = health

    async def _stopper(self) -> None:
        await self._stop.wait()
        # Let each send in flight finish and reach the ledger: a cancelled send is the one thing
        # that could make the next start resend it. What is still owed stays in the ledger.
        await self._stop_workers()
        tries = 0
        while self._unwritten and (why := self._replay_unwritten()):
            tries += 1
            if tries == STOP_REPLAY_TRIES:
                log.error("stopping with %d ledger writes not made (%s: %s); the next start may repeat the"
                          " alerts sent since the ledger stopped taking writes", len(self._unwritten),
                          self._ledger_path, why)
                break
            log.info("ledger writes kept back still fail at stop (%s); trying again", why)
            await asyncio.sleep(STOP_REPLAY_PAUSE_SECONDS)
        raise _StopRequested

    # -- helpers -------------------------------------------------------------------------------
    def _make_scheduler(self) -> Scheduler:
        if self._scheduler_factory is not None:
            return self._scheduler_factory(self._on_due)
        from siderod.service.scheduling import APSchedulerAdapter

        assert self.config is not None
        return APSchedulerAdapter(self._on_due)

    async def _write_plan(self, planned: Sequence[PlannedAlert], now_utc: datetime,
                          keep_after_utc: datetime | None = None) -> _IndexedPlan | None:
        """Write the plan to the ledger; return its open alerts by key (in the planner's order) and
        the keys of the repeats planned for each event, or None if the ledger could not be written.

        With offloading this runs on a worker thread with its own connection: tens of thousands
        of rows must not stall the loop. The write is one short transaction (see
        ``Ledger.replace_planned``), so a claim or a delivery record from the loop waits at most
        that long for SQLite's write lock, and sees the old plan or the new one, never half.
        ``keep_after_utc``: the plan of the first stretch only (see ``Ledger.replace_planned``).
        """
        assert self._ledger is not None
        ledger = self._ledger
        # Repeats are not written as planned rows: a repeat enters the ledger when it is claimed
        # (record_claim in _deliver), so one past its grace is never swept as missed (a repeat is
        # a reminder, see plan/insist.py), and most of a plan's rows are never written at all.
        configured = [a for a in planned if not a.repeat_number]
        repeats = [a for a in planned if a.repeat_number]

        def open_keys(own: Ledger) -> frozenset[str]:
            return own.replace_planned(configured, now_utc, keep_after_utc=keep_after_utc) | (
                frozenset(a.key for a in repeats) - own.settled_keys(repeats))

        try:
            if not self._offload_planning or self._ledger_path == ":memory:":
                return _index_plan(planned, open_keys(ledger))

            def write() -> _IndexedPlan:
                with Ledger(self._ledger_path) as own:
                    return _index_plan(planned, open_keys(own))

            return await self._off_loop(write)  # a row object per alert: no collections meanwhile
        except sqlite3.Error as exc:  # a full or failing disk: the next re-plan writes it again
            self._ledger_failed("plan", exc)
            return None

    def _schedule(self, now_utc: datetime) -> None:
        """Hand the scheduler the open alerts due from now until well past the next re-plan.

        The plan reaches ``horizon_hours`` ahead (36 h), but every re-plan hands the scheduler a
        fresh set, so only alerts due before the next one are needed (the same stretch as the
        critical repeats', ``repeat_stretch_minutes``).
        """
        assert self.config is not None and self._scheduler is not None
        until_utc = now_utc + timedelta(minutes=repeat_stretch_minutes(self.config))
        upcoming = itertools.dropwhile(lambda a: a.due_utc <= now_utc, self._plan.values())
        self._scheduler.replace_jobs(list(itertools.takewhile(lambda a: a.due_utc <= until_utc, upcoming)))

    async def _compute_plan(
        self, config: Config, start_utc: datetime, hours: float, muted: Mapping[str, datetime | None],
        now_utc: datetime, acknowledged: Any, repeats_until_utc: datetime,
    ) -> tuple[tuple[PlannedAlert, ...], list[str]]:
        """The alerts planned from the agenda, in due order, and the targets held back for being
        near the Sun; computed off the loop when offloading."""
        source = self._agenda_source
        if source is None:
            from siderod.plan.agenda import compute_agenda

            def source(c: Config, s: datetime, h: float) -> Any:
                return compute_agenda(c, s, h)

        sun_altitude = self._sun_altitude

        def plan() -> tuple[tuple[PlannedAlert, ...], list[str]]:
            agenda = source(config, start_utc, hours)
            # Bodies are made when an alert is given or shown (alert_body): most are never shown.
            common = {"muted": muted, "now_utc": now_utc, "sun_altitude_deg": sun_altitude,
                      "lazy_bodies": True}
            planned = plan_alerts(agenda, config, **common)
            # Repeats only for the stretch up to the next re-plan and a margin (the scheduler's
            # lookahead): each re-plan adds the next stretch (see repeat_stretch_minutes).
            planned += plan_repeats(agenda, config, acknowledged=acknowledged, until_utc=repeats_until_utc,
                                    **common)
            near_sun = near_sun_targets(agenda, config.alerts)
            # Due order (then key): snapshot(), replan() and _schedule() take prefixes of it.
            return tuple(sorted(planned, key=lambda a: (a.due_utc, a.key))), near_sun

        return await self._off_loop(plan)

    async def _load_config(self) -> Config:
        """The configuration loaded again: in a child process (see ``load_config_in_child``), or
        off the loop on a worker thread. Raises what the loader raises (SiderodError, OSError)."""
        if self._load_in_child:
            from siderod.service.loading import load_in_child

            # The result is unpickled on a thread, tens of thousands of objects: no collections then.
            return await load_in_child(self._config_loader, self._clock.now_utc().timestamp(),
                                       timeout_seconds=self._load_timeout_seconds,
                                       unpickling=_collections_paused)
        return await self._off_loop(self._config_loader)

    async def _off_loop(self, work: Callable[[], Any]) -> Any:
        # A worker thread keeps the loop answering (status, alerts, watchdog) during slow work.
        # Tests under FakeClock run it inline so that simulated time cannot run on meanwhile.
        if self._offload_planning:
            with _collections_paused():
                return await asyncio.to_thread(_yielding_the_lock_often, work)
        return work()

    @staticmethod
    def _known_names(config: Config) -> set[str]:
        return {t.name for t in config.targets} | {SKY_TARGET_NAME}

    def _scope_ledger_to(self, config: Config) -> tuple[str, ...]:
        """Drop the ledger state of targets this configuration does not have; log what went.

        After a switch to another configuration, mutes of targets that no longer exist would be
        listed by `status`, and alerts still owed for them sent (late) after a restart. Returns the
        keys whose debts were dropped, so live channel workers can forget them too.
        """
        assert self._ledger is not None
        ledger = self._ledger
        known = self._known_names(config)
        now_utc = self._clock.now_utc()
        for name in sorted(set(ledger.mutes(now_utc)) - known):
            self._write("drop a mute", lambda name=name: ledger.clear_mute(name))
            log.warning("dropped the mute of %s: no target of that name in %s", name, config.path)
        stale = sorted({event_id(o.alert.key) for o in ledger.owed() if o.alert.target not in known})
        if not stale:
            return ()
        keys = self._write("drop owed alerts", lambda: ledger.drop_owed_of_events(stale, now_utc),
                           fallback=())
        log.warning("dropped %d owed alerts of targets no longer in %s: %s", len(keys), config.path,
                    ", ".join(sorted({k.split("|", 1)[0] for k in keys})))
        return tuple(keys)

    def _known_target(self, name: Any) -> str:
        assert self.config is not None
        names = [t.name for t in self.config.targets]
        if name in names or name == SKY_TARGET_NAME:
            return str(name)
        import difflib

        close = difflib.get_close_matches(str(name), names, n=1, cutoff=0.6)
        hint = f' -- did you mean "{close[0]}"?' if close else ""
        shown = ", ".join(names[:10]) + (" ..." if len(names) > 10 else "")
        raise ControlError(
            f"no target named {name!r} in {self.config.path}{hint}; use a target name ({shown}) or"
            f" {SKY_TARGET_NAME!r} for Sun, Moon and twilight alerts"
        )

    def _status_line(self) -> str:
        now_utc = self._clock.now_utc()
        # The plan is in due order (see _compute_plan): called after every alert, this must not
        # scan a 100,000-alert plan.
        first = next(itertools.dropwhile(lambda a: a.due_utc < now_utc, self._plan.values()), None)
        if first is None and self._partial_plan_until_utc is not None:
            return (f"STATUS=no alert before {self._partial_plan_until_utc.strftime('%H:%M:%S')} UTC;"
                    " planning the rest of the horizon")
        if first is None:
            return "STATUS=no alerts planned"
        return f"STATUS=next alert {first.due_utc.strftime('%H:%M:%S')} UTC: {first.title}"

    def _notify(self, message: str) -> None:
        try:
            from siderod.service.sdnotify import notify
        except ImportError:
            return
        notify(message, self._env)


def repeat_stretch_minutes(config: Config) -> float:
    """How far ahead of a re-plan critical repeats are planned and alerts handed to the scheduler.

    Twice the re-plan interval (so a late re-plan leaves nothing unplanned), at least
    ``SCHEDULE_MIN_MINUTES``, and at least two repeat periods (so an event given and awaiting
    acknowledgement always has its next repeat in the plan). Each re-plan plans the next stretch;
    a repeat keeps its key and number whichever plan makes it (see plan/insist.py).
    """
    rules = config.alerts
    return max(2.0 * rules.replan_minutes, SCHEDULE_MIN_MINUTES, 2.0 * rules.repeat_minutes)


def first_stretch_minutes(config: Config) -> float:
    """How far the first plan at start reaches: ``FIRST_STRETCH_MINUTES``, at least two repeat
    periods, at most the usual stretch (see ``Service.replan(stretch_only=True)``)."""
    return min(repeat_stretch_minutes(config),
               max(FIRST_STRETCH_MINUTES, 2.0 * config.alerts.repeat_minutes))


def config_needs_a_first_stretch(config: Config) -> bool:
    """True when the horizon reaches past the first stretch: the service then makes its first
    plan for the stretch alone (ready sooner) and the whole plan right after READY=1."""
    stretch_hours = (first_stretch_minutes(config) + _longest_lead_minutes(config)) / 60.0
    return config.alerts.horizon_hours > stretch_hours


def _longest_lead_minutes(config: Config) -> float:
    """The longest lead time of any alert (minutes before its event; 0 if none is before)."""
    leads = [lead for leads in config.alerts.lead_minutes.values() for lead in leads]
    for target in config.targets:
        if target.lead_minutes:
            leads.extend(lead for leads in target.lead_minutes.values() for lead in leads)
    return max([0.0, *leads])


_IndexedPlan = tuple[dict[str, PlannedAlert], dict[str, tuple[str, ...]]]


def _index_plan(planned: Sequence[PlannedAlert], open_keys: frozenset[str]) -> _IndexedPlan:
    """The open alerts by key, keeping the planner's due order (snapshot() relies on it), and
    the keys of each event's planned repeats (so status never scans the plan)."""
    plan = {a.key: a for a in planned if a.key in open_keys}
    repeats: dict[str, list[str]] = {}
    for alert in plan.values():
        if alert.repeat_number > 0:
            repeats.setdefault(event_id(alert.key), []).append(alert.key)
    return plan, {e: tuple(keys) for e, keys in repeats.items()}


_SUMMARY = "\x00summary"  # queue marker: send the missed-alert summary once the queue drains


def _first_repeat_only(alerts: Iterable[PlannedAlert]) -> Iterator[PlannedAlert]:
    """``alerts`` without the repeats of an event already listed: a critical event's repeats
    (planned for the whole stretch, until acknowledged) would otherwise crowd every other alert
    out of "next alerts". Its next repeat is listed; the count of planned alerts keeps them all."""
    listed: set[str] = set()
    for alert in alerts:
        event = event_id(alert.key)
        if alert.repeat_number and event in listed:
            continue
        listed.add(event)
        yield alert


def _message_from_row(row: LedgerRow) -> AlertMessage:
    """The unmarked message for a ledger row (the worker marks it late when it sends it)."""
    return AlertMessage(
        key=row.key,
        title=row.title,
        body=row.body,
        urgency=Urgency(row.urgency),
        target=row.target,
        kind=row.kind,
        event_utc=row.event_utc,
        due_utc=row.due_utc,
        lead_minutes=row.lead_minutes,
    )


def _row_from_alert(alert: PlannedAlert) -> LedgerRow:
    return LedgerRow(
        key=alert.key,
        target=alert.event.target or "",
        kind=alert.event.kind.value,
        event_utc=alert.event.time_utc,
        lead_minutes=alert.lead_minutes,
        due_utc=alert.due_utc,
        title=alert.title,
        body=alert.body,
        urgency=alert.urgency.value,
        state="sending",
        late_seconds=None,
    )


def _sun_altitude_function(config: Config) -> Callable[[Sequence[datetime]], Sequence[float]] | None:
    """The Sun's altitude at many instants in one call, for the planner's hold rule.

    More instants than a ``SUN_GRID_SECONDS`` grid over their span has points (a whole plan's
    due times) are interpolated linearly from that grid: the exact evaluation (nutation and all,
    per instant) of 30,000 due times took 40 MB and half a second. The grid's error is largest
    near the horizon, where refraction bends the curve (about 1e-3 deg, a quarter of a second of
    the Sun's motion; tests/service/test_sun_hold_grid.py). Fewer instants are computed exactly.
    """
    if config.alerts.hold_while_sun_above_deg is None:
        return None
    import numpy as np

    from siderod.astro.sunmoon import observe_sun
    from siderod.astro.timescales import instants_from_unix
    from siderod.plan.positions import observer_for

    observer = observer_for(config)

    def exact(unix: Any) -> Any:
        instants = instants_from_unix(unix, dut1_seconds=config.time.dut1_seconds)
        return observe_sun(instants, observer).alt_deg

    def sun_alt_deg(when_utc: Sequence[datetime]) -> Sequence[float]:
        unix = np.array([moment.timestamp() for moment in when_utc], dtype=float)
        if unix.size == 0:
            return []
        first, last = float(unix.min()), float(unix.max())
        points = int((last - first) // SUN_GRID_SECONDS) + 2
        if unix.size <= points:
            return np.asarray(exact(unix), dtype=float).tolist()
        grid = first + SUN_GRID_SECONDS * np.arange(points)  # the last point is at or past `last`
        return np.interp(unix, grid, np.asarray(exact(grid), dtype=float)).tolist()

    return sun_alt_deg


def _remove_signal_handlers(loop: asyncio.AbstractEventLoop) -> None:
    for sig in (signal.SIGTERM, signal.SIGINT, signal.SIGHUP):
        loop.remove_signal_handler(sig)


def _first_lines(text: str, count: int) -> str:
    lines = text.splitlines()
    shown = "\n".join(lines[:count])
    return shown + (f"\n... {len(lines) - count} more lines in the log" if len(lines) > count else "")


def _iso(when: datetime) -> str:
    return when.astimezone(UTC).strftime("%Y-%m-%dT%H:%M:%SZ")


def _yielding_the_lock_often(work: Callable[[], Any]) -> Any:
    """Run pure-Python work in a thread that hands the interpreter lock back to the loop often.

    A worker thread alone does not keep the loop answering: by default CPython lets a busy thread
    hold the lock for 5 ms at a time, and the loop needs it several times to answer one request,
    so `status` replies took up to half a second during a big reload. A 0.5 ms switch interval
    while the work runs keeps them near a millisecond of CPU each; the default comes back after.
    """
    sys.setswitchinterval(min(_DEFAULT_SWITCH_SECONDS, 0.0005))
    try:
        return work()
    finally:
        sys.setswitchinterval(_DEFAULT_SWITCH_SECONDS)


# The interpreter's own interval, read once: overlapping workers then restore the same value.
_DEFAULT_SWITCH_SECONDS = sys.getswitchinterval()


@contextlib.contextmanager
def _collections_paused() -> Iterator[None]:
    """No cyclic garbage collection while off-loop work makes many objects; the heap as it was
    is left out of collections meanwhile.

    A full collection walks every tracked object while holding the interpreter lock: with a
    20,000-target configuration and a 50,000-alert plan in memory, each took 100-250 ms on a
    loaded 2-core machine, and a re-plan or the unpickling of a reloaded configuration set off
    several, so `status` and the watchdog waited that long (measured in
    tests/service/test_reload_responsive.py). Reference counting frees almost everything anyway;
    what the work leaves is moved to the oldest generation without a collection (freeze, then
    unfreeze), and collections resume as usual when the last overlapping work ends.
    """
    global _PAUSED_WORKS, _COLLECTING_BEFORE
    if _PAUSED_WORKS == 0:
        _COLLECTING_BEFORE = gc.isenabled()
        gc.freeze()  # what exists now is skipped by any collection until the work ends
        gc.disable()
    _PAUSED_WORKS += 1
    try:
        yield
    finally:
        _PAUSED_WORKS -= 1
        if _PAUSED_WORKS == 0:
            gc.freeze()
            gc.unfreeze()  # everything back, in the oldest generation, uncollected
            if _COLLECTING_BEFORE:
                gc.enable()


# Off-loop works running now (they may overlap: a re-plan during a reload's load), and whether
# collections were on before the first of them.
_PAUSED_WORKS = 0
_COLLECTING_BEFORE = True
