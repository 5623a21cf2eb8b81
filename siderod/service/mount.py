"""Watch the mount itself: a read-only INDI link and the alerts it drives.

Two parts:

- :class:`MountWatch` keeps what the mount last reported (pointing of date, pier side, tracking,
  parked) and the state of the link, and from these plans the flip-due and tracking-limit alerts
  for where the mount actually points, the Sun alert, and the tracking and link alerts. It never
  does I/O itself: alerts go out through the ``send`` callback the service gives it, so a slow
  channel never delays the watch. Tests drive it directly under ``FakeClock``.
- :class:`IndiLink` is the INDI client (``indipyclient``) that feeds the watch. It only ever sends
  ``getProperties``: :class:`_ReadOnlyClient` drops anything else before it reaches the socket.
  siderod never slews, parks, syncs or stops the mount.

The automatic acknowledgement of a flip alert when the pier side changes is an event
(``on_acknowledge(keys, reason)``), so a repeat-until-acknowledged rule can hook it.
"""

from __future__ import annotations

import asyncio
import logging
from collections.abc import Awaitable, Callable, Mapping, Sequence
from dataclasses import dataclass, field, replace
from datetime import UTC, datetime, timedelta
from typing import Any

from siderod.common.clock import Clock
from siderod.common.model import Config, EventKind, MountView, Urgency
from siderod.plan.mount import (
    LinkState,
    MountDue,
    PierSide,
    Pointing,
    angular_distance_deg,
    counterweight_up,
    hour_angle_hours,
    mount_due_key,
    nearest_target,
    plan_pointing_alerts,
    seconds_to_mark,
)
from siderod.service.delivery import AlertMessage

__all__ = [
    "MountWatch",
    "IndiLink",
    "BACKOFF_SECONDS",
    "NIGHT_SUN_BELOW_DEG",
    "SLEW_JUMP_DEG",
    "next_dawn_utc",
]

log = logging.getLogger("siderod.mount")

#: Waits between connection attempts, growing after each failure (the last one repeats).
BACKOFF_SECONDS = (1.0, 2.0, 4.0, 8.0, 15.0, 30.0)
#: How long one connection attempt may take to reach the server before it is given up.
CONNECT_WINDOW_SECONDS = 5.0
#: A pointing that moves more than this between two reports without the driver saying it slews
#: was moved all the same (a sync, a jog): the alerts are planned afresh.
SLEW_JUMP_DEG = 0.05
#: Tracking and link alerts are given only while the Sun is below this altitude, unless
#: ``[alerts] hold_while_sun_above`` sets one (-6 deg, the end of civil twilight: common practice).
NIGHT_SUN_BELOW_DEG = -6.0
#: The Sun alert is raised only while the Sun is above this (outside astronomical night, the
#: board's own limit for its solar caution).
SUN_ALERT_SUN_ABOVE_DEG = -18.0
#: Tracking off for this long (not slewing, not parked) is a stop worth an alert.
TRACKING_STOP_CONFIRM_SECONDS = 10.0
#: The watch looks again at least this often (Sun distance, nearest target, board values).
REASSESS_SECONDS = 30.0
#: Apparent places of the configured targets are recomputed this often (they move slowly).
TARGET_PLACES_SECONDS = 300.0

SendMessage = Callable[[AlertMessage], Awaitable[None]]
Acknowledge = Callable[[tuple[str, ...], str], None]
InUseChanged = Callable[[str | None, str], Awaitable[None]]


@dataclass(frozen=True, slots=True)
class _Sky:
    """What the watch needs of the sky at one instant."""

    last_hours: float
    sun_alt_deg: float
    sun_distance_deg: float | None


class MountWatch:
    """The mount's state and the alerts planned from it.

    Args:
        config: the whole configuration (site, ``[mount]``, ``[alerts.lead]``, targets).
        clock: the only source of time.
        send: sends one message through the service's channels (awaited in the watch's own
            sender task, never inside a report).
        on_acknowledge: called with the keys of the flip and limit alerts a pier-side change
            acknowledged, and the reason.
        on_in_use: awaited when the link sets or clears the target in use (name or None, source).
    """

    def __init__(
        self,
        config: Config,
        clock: Clock,
        send: SendMessage,
        *,
        on_acknowledge: Acknowledge | None = None,
        on_in_use: InUseChanged | None = None,
    ) -> None:
        self.config = config
        self._clock = clock
        self._send = send
        self._on_acknowledge = on_acknowledge
        self._on_in_use = on_in_use
        self.link_state = LinkState.CONNECTING if config.mount.link.enabled else LinkState.OFF
        self.link_detail = ""
        self.device = config.mount.link.device
        self.pointing: Pointing | None = None
        self.pier_side_reported = False
        self.episode = 0
        self.pending: tuple[MountDue, ...] = ()
        self.acknowledged: list[tuple[tuple[str, ...], str]] = []
        self._fired: dict[str, datetime] = {}  # key -> when, this episode
        # Critical flip and limit events given and not acknowledged, by event id: they repeat by
        # the rule of siderod.plan.insist until acknowledged (a flip, a slew away, the user).
        self.insisting: dict[str, _Insist] = {}
        self._episode_events: dict[EventKind, datetime] = {}  # event time fixed per episode
        self._sun_alerted_episode = -1
        self._tracking_alerted = False
        self._tracking_off_mono: float | None = None  # when tracking was last seen to stop
        self._link_alerted = False
        self._ever_linked = False
        self._changed = asyncio.Event()
        self._outbox: asyncio.Queue[AlertMessage] = asyncio.Queue()
        self._message_count = 0
        self._early: dict[str, Any] = {}
        self._places: tuple[float, tuple[str, ...], Sequence[float], Sequence[float]] | None = None
        self.nearest: tuple[str, float] | None = None
        self.link_in_use: str | None = None

    # -- inputs -----------------------------------------------------------------------------
    def update_config(self, config: Config) -> None:
        """Take a reloaded configuration; the alerts are planned again with it."""
        self.config = config
        self._places = None
        self._reassess("configuration reloaded")

    def set_link(self, state: LinkState, detail: str = "") -> None:
        """The link's new state (from :class:`IndiLink`)."""
        if state is self.link_state and detail == self.link_detail:
            return
        old = self.link_state
        self.link_state, self.link_detail = state, detail
        log.info("mount link %s%s", state.value, f": {detail}" if detail else "")
        if state is LinkState.LINKED:
            self._ever_linked = True
            if self._link_alerted:
                self._link_alerted = False
                self._queue("link-back", "Mount link back",
                            "siderod reads the mount again; flip and limit alerts follow its pointing.",
                            Urgency.NORMAL)
        elif old is LinkState.LINKED:
            self.pending = ()
            if state is not LinkState.OFF and self._is_night():  # OFF: the user switched it off
                self._link_alerted = True
                self._queue(
                    "link-lost",
                    "Mount link lost: flip alerts are blind",
                    f"{detail or 'The INDI server or the driver went away'}. siderod keeps retrying; "
                    "until it is back it cannot see where the mount points. Check the mount.",
                    Urgency.CRITICAL,
                )
        if state is not LinkState.LINKED:
            self.pointing = None
        self._changed.set()

    def report(
        self,
        *,
        ra_hours: float | None = None,
        dec_deg: float | None = None,
        slewing: bool | None = None,
        pier_side: PierSide | None = None,
        tracking: bool | None = None,
        parked: bool | None = None,
    ) -> None:
        """Take part of a report from the driver (only the values given change)."""
        old = self.pointing
        if old is None:
            if ra_hours is None or dec_deg is None:
                # Nothing to anchor the other values to yet: keep them for when the pointing comes.
                self._early = {k: v for k, v in (("pier_side", pier_side), ("tracking", tracking),
                               ("parked", parked), ("slewing", slewing)) if v is not None}
                return
            early = self._early
            old = Pointing(ra_hours, dec_deg, pier_side=early.get("pier_side", PierSide.UNKNOWN),
                           tracking=early.get("tracking"), parked=early.get("parked"),
                           slewing=early.get("slewing", False))
            self.pointing = old
            self._new_episode("first report")
        new = old
        if ra_hours is not None and dec_deg is not None:
            new = replace(new, ra_hours=ra_hours, dec_deg=dec_deg)
        if slewing is not None:
            new = replace(new, slewing=slewing)
        if pier_side is not None:
            self.pier_side_reported = self.pier_side_reported or pier_side is not PierSide.UNKNOWN
            new = replace(new, pier_side=pier_side)
        if tracking is not None:
            new = replace(new, tracking=tracking)
        if parked is not None:
            new = replace(new, parked=parked)
        self.pointing = new
        reasons = []
        if new.pier_side is not old.pier_side and old.pier_side is not PierSide.UNKNOWN:
            self._flip_noticed(old.pier_side, new.pier_side)
            reasons.append("pier side changed")
        if new.slewing != old.slewing:
            reasons.append("slew started" if new.slewing else "slew ended")
            self._new_episode(reasons[-1])
        elif not new.slewing and angular_distance_deg(old.ra_hours, old.dec_deg, new.ra_hours,
                                                      new.dec_deg) > SLEW_JUMP_DEG:
            self._new_episode("pointing moved")
            reasons.append("pointing moved")
        if tracking is not None and old.tracking is not None and tracking != old.tracking:
            self._tracking_changed(tracking, new)
        self._reassess(", ".join(reasons) or "report")
        moved = "slew ended" in reasons or "pointing moved" in reasons
        now_utc = self._clock.now_utc()
        if moved and self.insisting and not any(d.due_utc <= now_utc for d in self.pending):
            # Slewed to where no flip or limit alert is due: the ones given have nothing left to warn of.
            self._acknowledge("the mount slewed away from the flip")

    # -- reading ----------------------------------------------------------------------------
    def view(self, in_use: str | None = None, in_use_source: str = "") -> MountView:
        """The mount as it stands now, for ``status`` and the board."""
        base = MountView(link_state=self.link_state.value, link_detail=self.link_detail,
                         device=self.device, in_use=in_use, in_use_source=in_use_source)
        p = self.pointing
        if p is None:
            return base
        sky = self._sky(with_sun_distance=True)
        ha = hour_angle_hours(sky.last_hours, p.ra_hours)
        alt, az = _alt_az(ha, p.dec_deg, self.config.site.latitude_deg)
        to_flip = to_limit = None
        for due in plan_pointing_alerts(self._clock.now_utc(), ha, p, self.config.mount,
                                        {EventKind.FLIP_DUE: (0.0,), EventKind.TRACKING_LIMIT: (0.0,)}):
            seconds = (due.event_utc - self._clock.now_utc()).total_seconds()
            if due.kind is EventKind.FLIP_DUE:
                to_flip = seconds
            else:
                to_limit = seconds
        return replace(
            base, ra_hours=p.ra_hours, dec_deg=p.dec_deg, ha_hours=ha, alt_deg=alt, az_deg=az,
            pier_side=p.pier_side.value, counterweight_up=counterweight_up(ha, p.pier_side),
            tracking=p.tracking, parked=p.parked, slewing=p.slewing,
            seconds_to_flip=to_flip, seconds_to_limit=to_limit,
            nearest_target=self.nearest[0] if self.nearest else None,
            nearest_distance_deg=self.nearest[1] if self.nearest else None,
            sun_distance_deg=sky.sun_distance_deg,
        )

    # -- running ----------------------------------------------------------------------------
    async def run(self) -> None:
        """Fire planned alerts on time and send queued messages; runs until cancelled."""
        async with asyncio.TaskGroup() as tasks:
            tasks.create_task(self._sender(), name="mount-sender")
            tasks.create_task(self._timer(), name="mount-timer")

    async def _timer(self) -> None:
        while True:
            self._changed.clear()
            now_utc = self._clock.now_utc()
            self._fire_due(now_utc)
            wait_seconds = REASSESS_SECONDS
            confirm_in = self._check_tracking_stop()
            if confirm_in is not None:
                wait_seconds = min(wait_seconds, confirm_in)
            if self.pending:
                next_due = min(d.due_utc for d in self.pending)
                wait_seconds = min(wait_seconds, max(0.0, (next_due - now_utc).total_seconds()))
            next_repeat = self._repeat_due(now_utc)
            if next_repeat is not None:
                wait_seconds = min(wait_seconds, max(0.0, (next_repeat - now_utc).total_seconds()))
            woke = await _wait_event_or_sleep(self._changed, self._clock, wait_seconds)
            if not woke:
                self._reassess("timer", quiet=True)

    async def _sender(self) -> None:
        while True:
            message = await self._outbox.get()
            try:
                await self._send(message)
            except Exception:  # a channel bug must not end the watch
                log.exception("sending mount alert %s failed", message.key)

    # -- planning ----------------------------------------------------------------------------
    def _reassess(self, reason: str, *, quiet: bool = False) -> None:
        p = self.pointing
        if p is None or self.link_state is not LinkState.LINKED:
            self.pending = ()
            self._changed.set()
            return
        now_utc = self._clock.now_utc()
        sky = self._sky(with_sun_distance=True)
        ha = hour_angle_hours(sky.last_hours, p.ra_hours)
        if p.slewing:
            self.pending = ()
        else:
            leads = self.config.alerts.lead_minutes
            planned = plan_pointing_alerts(now_utc, ha, p, self.config.mount, leads)
            self.pending = tuple(d for d in planned if mount_due_key(d, self.episode) not in self._fired)
            for due in planned:  # fixed at first sight, so keys and the next stage stay put
                self._episode_events.setdefault(due.kind, due.event_utc)
        self._check_sun(p, sky)
        self._update_nearest(p)
        if not quiet:
            log.debug("mount re-planned (%s): HA %+.4f h, %d alerts ahead", reason, ha, len(self.pending))
        self._changed.set()

    def _fire_due(self, now_utc: datetime) -> None:
        if not self.pending:
            return
        due_now = [d for d in self.pending if d.due_utc <= now_utc]
        if not due_now:
            return
        p = self.pointing
        for due in due_now:
            key = mount_due_key(due, self.episode)
            if key in self._fired or p is None:
                continue
            self._fired[key] = now_utc
            title, body = self._flip_text(due, p, now_utc)
            urgency = self.config.alerts.urgency.get(due.kind, Urgency.CRITICAL)
            # Keys in the planner's spelling (target|kind|event time|lead), with the event time
            # fixed for the episode, so that acknowledgements and repeats work as for any alert.
            event_utc = self._episode_events.setdefault(due.kind, due.event_utc)
            event = f"mount|{due.kind.value}|{_iso(event_utc)}"
            message_key = f"{event}|{due.lead_minutes:g}"
            if urgency is Urgency.CRITICAL:
                insist = self.insisting.setdefault(event, _Insist(title=title, body=body, kind=due.kind.value,
                                                                  event_utc=event_utc))
                insist.given_utc.append(now_utc)
                insist.title, insist.body = title, body
            self._outbox.put_nowait(AlertMessage(
                key=message_key, title=title, body=body, urgency=urgency,
                target="mount", kind=due.kind.value, event_utc=due.event_utc, due_utc=due.due_utc,
                lead_minutes=due.lead_minutes,
            ))
            log.warning("mount alert: %s", title)
        self.pending = tuple(d for d in self.pending if mount_due_key(d, self.episode) not in self._fired)

    def _flip_text(self, due: MountDue, p: Pointing, now_utc: datetime) -> tuple[str, str]:
        what = "meridian flip due" if due.kind is EventKind.FLIP_DUE else "tracking limit"
        seconds = (due.event_utc - now_utc).total_seconds()
        if seconds > 30.0:
            title = f"Mount: {what} in {seconds / 60.0:.0f} min"
        elif seconds > -60.0:
            title = f"Mount: {what} now"
        else:
            title = f"Mount: {what} - passed {-seconds / 60.0:.0f} min ago"
        sky = self._sky(with_sun_distance=False)
        ha = hour_angle_hours(sky.last_hours, p.ra_hours)
        alt, az = _alt_az(ha, p.dec_deg, self.config.site.latitude_deg)
        mark = _format_ha(due.mark_hours)
        lines = [
            f"The mount's hour angle is {_format_ha(ha)}; it reaches {mark} at "
            f"{due.event_utc.astimezone(UTC).strftime('%H:%M:%S')} UTC.",
            f"Pointing RA {p.ra_hours:.4f} h, Dec {p.dec_deg:+.3f}° (of date); "
            f"altitude {alt:.1f}°, azimuth {az:.1f}°.",
        ]
        if self.nearest:
            lines.append(f"On {self.nearest[0]} ({self.nearest[1]:.2f}° away).")
        if p.pier_side is PierSide.UNKNOWN:
            lines.append("The driver does not report the pier side: this alert uses the hour angle alone.")
        else:
            looking = "east" if p.pier_side is PierSide.WEST else "west"
            lines.append(f"Pier side {p.pier_side.value} (looking {looking}).")
        lines.append("Advisory only: keep the mount's own limits on. siderod never moves the mount.")
        return title, "\n".join(lines)

    def _new_episode(self, reason: str) -> None:
        self.episode += 1
        self._fired = {}
        self._episode_events = {}

    def awaiting(self) -> tuple[str, ...]:
        """Event ids of mount alerts that repeat until acknowledged."""
        return tuple(sorted(self.insisting))

    def user_acknowledged(self, events: Sequence[str]) -> None:
        """The user acknowledged these events (command, board, desktop): their repeats stop."""
        for event in events:
            self.insisting.pop(event, None)
        self._changed.set()

    def _repeat_due(self, now_utc: datetime) -> datetime | None:
        """Send the repeats now due; return when the next one falls (None: none)."""
        from siderod.plan.insist import format_repeat, repeat_times

        rules = self.config.alerts
        upcoming: list[datetime] = []
        limit_utc = self._episode_events.get(EventKind.TRACKING_LIMIT)
        for event, insist in list(self.insisting.items()):
            next_stage = limit_utc if insist.kind == EventKind.FLIP_DUE.value else None
            # The event's configured alerts: one per lead time, none before the first one given.
            first = insist.given_utc[0]
            leads = rules.lead_minutes.get(EventKind(insist.kind), (0.0,))
            configured = sorted({max(first, insist.event_utc - timedelta(minutes=float(lead)))
                                 for lead in leads})
            times = repeat_times(configured, repeat_minutes=rules.repeat_minutes,
                                 repeat_count=rules.repeat_count, next_stage_utc=next_stage)
            for number, when in enumerate(times, start=1):
                if number <= insist.repeats_sent:
                    continue
                if when > now_utc:
                    upcoming.append(when)
                    break
                insist.repeats_sent = number
                title, body = format_repeat(insist.title, insist.body, number, rules.repeat_minutes)
                self._outbox.put_nowait(AlertMessage(
                    key=f"{event}|r{number}", title=title, body=body, urgency=Urgency.CRITICAL,
                    target="mount", kind=insist.kind, event_utc=insist.event_utc, due_utc=when))
                log.warning("mount alert: %s", title)
        return min(upcoming) if upcoming else None

    def _acknowledge(self, reason: str) -> tuple[str, ...]:
        """Acknowledge every mount flip and limit event given and not yet acknowledged (an event)."""
        keys = tuple(sorted(self.insisting))
        self.insisting = {}
        if not keys:
            return keys
        self.acknowledged.append((keys, reason))
        if self._on_acknowledge is not None:
            try:
                self._on_acknowledge(keys, reason)
            except Exception:
                log.exception("acknowledge hook failed")
        return keys

    def _flip_noticed(self, old: PierSide, new: PierSide) -> None:
        reason = f"pier side changed from {old.value} to {new.value}"
        keys = self._acknowledge(reason)
        self._new_episode(reason)
        if keys:
            self._queue("flip-noticed", "Mount flipped: flip alerts acknowledged",
                        f"The {reason}; the alerts given for the old side are acknowledged.", Urgency.LOW)
        log.info("mount %s; acknowledged %d alerts", reason, len(keys))

    def _tracking_changed(self, tracking: bool, p: Pointing) -> None:
        # A slew or a flip turns tracking off for a moment on many drivers (the simulator does):
        # the stop is alerted only once it has lasted TRACKING_STOP_CONFIRM_SECONDS (the timer).
        self._tracking_off_mono = None if tracking else self._clock.monotonic()
        if tracking and self._tracking_alerted:
            self._tracking_alerted = False
            self._queue("tracking-back", "Mount tracking again", "The mount reports tracking on.",
                        Urgency.NORMAL)

    def _check_tracking_stop(self) -> float | None:
        """Alert a confirmed stop; return the seconds until one could be confirmed (None: none)."""
        p = self.pointing
        since = self._tracking_off_mono
        if p is None or since is None or self._tracking_alerted or self.link_state is not LinkState.LINKED:
            return None
        if p.parked or p.slewing or p.tracking is not False:
            return None
        left = TRACKING_STOP_CONFIRM_SECONDS - (self._clock.monotonic() - since)
        if left > 0:
            return left
        self._tracking_off_mono = None
        if self._is_night():
            self._tracking_alerted = True
            self._queue("tracking-stopped", "Mount stopped tracking",
                        "The mount reports tracking off while it is dark. A stalled mount ruins the "
                        "night: check it.", Urgency.CRITICAL)
        return None

    def _check_sun(self, p: Pointing, sky: _Sky) -> None:
        if sky.sun_distance_deg is None:
            return
        caution_deg = self.config.alerts.sun_separation_min_deg  # the configured caution distance
        if p.tracking is True and sky.sun_alt_deg > SUN_ALERT_SUN_ABOVE_DEG \
                and sky.sun_distance_deg < caution_deg:
            if self._sun_alerted_episode != self.episode:
                self._sun_alerted_episode = self.episode
                self._queue(
                    "sun", "DANGER: the mount points near the Sun",
                    f"The mount is tracking {sky.sun_distance_deg:.1f}° from the Sun (caution distance "
                    f"{caution_deg:g}°). Never point unfiltered optics at or near the Sun: cover "
                    "the optics now. siderod never moves the mount.",
                    Urgency.CRITICAL,
                )

    def _update_nearest(self, p: Pointing) -> None:
        places = self._target_places()
        if places is None:
            self.nearest = None
        else:
            _, names, ras, decs = places
            self.nearest = nearest_target(p.ra_hours, p.dec_deg, names, ras, decs,
                                          within_deg=self.config.mount.link.match_within_deg)
        name = self.nearest[0] if self.nearest and not p.slewing else None
        if p.slewing or p.parked or p.tracking is not True:
            # Slewing, parked, standing still or not saying: keep what was set (a driver that
            # never reports tracking leaves the target in use to `siderod use`).
            return
        if name != self.link_in_use:
            self.link_in_use = name
            if self._on_in_use is not None:
                callback = self._on_in_use
                task = asyncio.get_running_loop().create_task(callback(name, "link"))
                _BACKGROUND.add(task)
                task.add_done_callback(_BACKGROUND.discard)

    def _target_places(self) -> tuple[float, tuple[str, ...], Sequence[float], Sequence[float]] | None:
        targets = [t for t in self.config.targets if _on_the_sky(t)]
        if not targets:
            return None
        now_mono = self._clock.monotonic()
        if self._places is None or now_mono - self._places[0] > TARGET_PLACES_SECONDS:
            from siderod.plan.positions import compute_sky

            sky = compute_sky(self.config, self._clock.now_utc().timestamp(), targets=targets)
            self._places = (now_mono, sky.names, sky.ra_hours.tolist(), sky.dec_deg.tolist())
        return self._places

    def _is_night(self) -> bool:
        below = self.config.alerts.hold_while_sun_above_deg
        limit = NIGHT_SUN_BELOW_DEG if below is None else below
        return self._sky(with_sun_distance=False).sun_alt_deg < limit

    def _sky(self, *, with_sun_distance: bool) -> _Sky:
        from siderod.astro.sidereal import last_hours
        from siderod.astro.sunmoon import observe_sun, sun_separation_deg
        from siderod.astro.timescales import instants_from_unix
        from siderod.plan.positions import observer_for

        config = self.config
        now_unix = self._clock.now_utc().timestamp()
        instants = instants_from_unix(now_unix, dut1_seconds=config.time.dut1_seconds)
        last = float(last_hours(instants, config.site.longitude_deg))
        sun = observe_sun(instants, observer_for(config))
        distance = None
        if with_sun_distance and self.pointing is not None:
            distance = float(sun_separation_deg(self.pointing.ra_hours, self.pointing.dec_deg, instants))
        return _Sky(last, float(sun.alt_deg), distance)

    def _queue(self, what: str, title: str, body: str, urgency: Urgency) -> None:
        self._message_count += 1
        now_utc = self._clock.now_utc()
        self._outbox.put_nowait(AlertMessage(
            key=f"mount|{what}|{_iso(now_utc)}|{self._message_count}", title=title,
            body=body + "\nAdvisory only: siderod never moves the mount.", urgency=urgency,
            target="mount", kind=what,
        ))
        log.warning("mount alert: %s", title)


_BACKGROUND: set[asyncio.Task[Any]] = set()


@dataclass(slots=True)
class _Insist:
    """One critical mount event given and not acknowledged: what its repeats say and how many went."""

    title: str
    body: str
    kind: str
    event_utc: datetime
    given_utc: list[datetime] = field(default_factory=list)
    repeats_sent: int = 0


class IndiLink:
    """The read-only INDI client that feeds a :class:`MountWatch`.

    One ``indipyclient`` client per connection attempt: when an attempt fails or a connection
    drops, the client is shut down and the next attempt waits the next step of
    :data:`BACKOFF_SECONDS` (the library's own fixed five-second retry never runs).

    Args:
        host, port, device: the server and the telescope device ("" for the first one with a
            pointing).
        watch: receives the reports and link states.
        clock: for the back-off waits.
    """

    def __init__(self, host: str, port: int, device: str, watch: MountWatch, clock: Clock, *,
                 backoff_seconds: Sequence[float] = BACKOFF_SECONDS) -> None:
        self.host, self.port, self.device = host, port, device
        self._watch = watch
        self._clock = clock
        self._backoff = tuple(backoff_seconds)
        self.attempts = 0

    async def run(self) -> None:
        """Connect, read, reconnect with back-off; runs until cancelled."""
        failures = 0
        while True:
            self.attempts += 1
            linked = await self._one_connection()
            failures = 0 if linked else failures + 1
            wait = self._backoff[min(failures, len(self._backoff) - 1)]
            await self._clock.sleep(wait)

    async def _one_connection(self) -> bool:
        made = asyncio.Event()
        lost = asyncio.Event()
        client = _ReadOnlyClient(self.host, self.port, self, made, lost)
        task = asyncio.get_running_loop().create_task(client.asyncrun(), name="indi-client")
        self._had_pointing = False
        try:
            if not await _wait_event_or_sleep(made, self._clock, CONNECT_WINDOW_SECONDS):
                detail = f"no INDI server answers on {self.host}:{self.port}"
                if self._watch.link_state is not LinkState.LOST:
                    self._watch.set_link(LinkState.CONNECTING, detail)
                return False
            was_lost = self._watch.link_state is LinkState.LOST
            if not was_lost:  # a lost link stays "lost" until the mount reports again
                self._watch.set_link(LinkState.NO_DEVICE, f"connected to {self.host}:{self.port}; "
                                     f"waiting for {self.device or 'a telescope device'}")
            await lost.wait()
            lost_now = self._had_pointing or self._watch.link_state is LinkState.LOST
            self._watch.set_link(LinkState.LOST if lost_now else LinkState.CONNECTING,
                                 f"the INDI server on {self.host}:{self.port} went away")
            return self._had_pointing
        finally:
            client.shutdown()
            try:
                await asyncio.wait_for(asyncio.shield(task), 2.0)
            except asyncio.CancelledError:
                task.cancel()  # we are being stopped: do not wait for the client
                raise
            except (TimeoutError, Exception):
                await _cancel_and_wait(task)

    # -- called by the client -----------------------------------------------------------------
    def on_vector(self, device: str, name: str, state: str | None, values: Mapping[str, str],
                  deleted: bool = False) -> None:
        """One property vector defined, set or deleted by the server."""
        if self.device and device != self.device:
            return
        if not self.device and name != "EQUATORIAL_EOD_COORD" and self._watch.device != device:
            return
        watch = self._watch
        if deleted:
            if watch.device == device and (name == "" or name == "EQUATORIAL_EOD_COORD"):
                watch.set_link(LinkState.NO_DEVICE, f"{device} went away")
            return
        if name == "EQUATORIAL_EOD_COORD":
            ra, dec = _number(values.get("RA")), _number(values.get("DEC"))
            if ra is None or dec is None:
                return
            watch.device = device
            self._had_pointing = True
            if watch.link_state is not LinkState.LINKED and self._device_connected is not False:
                watch.set_link(LinkState.LINKED, f"{device} on {self.host}:{self.port}")
            watch.report(ra_hours=ra % 24.0, dec_deg=dec, slewing=state == "Busy")
        elif name == "CONNECTION":
            connected = values.get("CONNECT") == "On"
            self._device_connected = connected
            if not connected and watch.link_state is not LinkState.LOST:
                watch.set_link(LinkState.NO_DEVICE, f"{device} is not connected to its mount")
        elif name == "TELESCOPE_PIER_SIDE":
            side = PierSide.UNKNOWN
            if values.get("PIER_WEST") == "On":
                side = PierSide.WEST
            elif values.get("PIER_EAST") == "On":
                side = PierSide.EAST
            watch.report(pier_side=side)
        elif name == "TELESCOPE_TRACK_STATE":
            if "TRACK_ON" in values:
                watch.report(tracking=values.get("TRACK_ON") == "On")
        elif name == "TELESCOPE_PARK":
            if "PARK" in values:
                watch.report(parked=values.get("PARK") == "On")

    _device_connected: bool | None = None
    _had_pointing = False


def _make_client_class() -> type:
    from indipyclient import IPyClient

    class ReadOnlyClient(IPyClient):
        """An IPyClient that can only ask (getProperties) and never sends anything else."""

        def __init__(self, host: str, port: int, link: IndiLink, made: asyncio.Event,
                     lost: asyncio.Event) -> None:
            super().__init__(indihost=host, indiport=port)
            self._link = link
            self._made, self._lost = made, lost
            # No enableBLOB on a BLOB definition: we never want images, and we send nothing but
            # getProperties.
            self.resend_enableBLOB_on_def = False
            # The library notices a dead server only when its keep-alive getProperties goes
            # unanswered: shorten its idle timer (2 x 2 s) and answer timer (4 x 2 s).
            self.set_vector_timeouts(timeout_max=2)
            self.debug_verbosity(0)

        async def send(self, xmldata: Any) -> None:
            if getattr(xmldata, "tag", None) != "getProperties":
                log.error("refused to send <%s> to the INDI server: siderod only reads",
                          getattr(xmldata, "tag", "?"))
                return
            await super().send(xmldata)

        async def report(self, message: str) -> None:  # keep the library's chatter out of our log
            return

        async def warning(self, message: str) -> None:
            log.debug("indipyclient: %s", message)

        async def rxevent(self, event: Any) -> None:
            kind = getattr(event, "eventtype", "")
            if kind == "ConnectionMade":
                self._made.set()
                return
            if kind == "ConnectionLost":
                self._lost.set()
                return
            device = getattr(event, "devicename", None)
            name = getattr(event, "vectorname", None) or ""
            if device is None:
                return
            if kind == "Delete":
                self._link.on_vector(device, name, None, {}, deleted=True)
            elif kind in ("Define", "Set"):
                try:
                    values = {str(k): str(v) for k, v in event.items()}
                except Exception:
                    return
                self._link.on_vector(device, name, getattr(event, "state", None), values)

    return ReadOnlyClient


def _ReadOnlyClient(host: str, port: int, link: IndiLink, made: asyncio.Event, lost: asyncio.Event) -> Any:
    global _CLIENT_CLASS
    if _CLIENT_CLASS is None:
        _CLIENT_CLASS = _make_client_class()
        logging.getLogger("indipyclient").setLevel(logging.CRITICAL)
    return _CLIENT_CLASS(host, port, link, made, lost)


_CLIENT_CLASS: type | None = None


def next_dawn_utc(config: Config, now_utc: datetime) -> datetime:
    """The next time the Sun climbs through the night limit (``NIGHT_SUN_BELOW_DEG`` or the hold).

    Sampled every 5 minutes over the next 36 hours and refined by bisection to a second; if the
    Sun never crosses (polar day or night), 24 hours from now.
    """
    import numpy as np

    from siderod.astro.sunmoon import observe_sun
    from siderod.astro.timescales import instants_from_unix
    from siderod.plan.positions import observer_for

    below = config.alerts.hold_while_sun_above_deg
    limit = NIGHT_SUN_BELOW_DEG if below is None else below
    observer = observer_for(config)
    start = now_utc.timestamp()

    def alt(unix: Any) -> Any:
        return observe_sun(instants_from_unix(unix, dut1_seconds=config.time.dut1_seconds), observer).alt_deg

    grid = start + np.arange(0, 36 * 3600 + 1, 300.0)
    above = np.asarray(alt(grid)) >= limit
    ups = np.flatnonzero(~above[:-1] & above[1:])
    if ups.size == 0:
        return now_utc + timedelta(hours=24)
    lo, hi = float(grid[ups[0]]), float(grid[ups[0] + 1])
    while hi - lo > 1.0:
        mid = (lo + hi) / 2
        if float(alt(mid)) >= limit:
            hi = mid
        else:
            lo = mid
    return datetime.fromtimestamp(hi, UTC)


async def _wait_event_or_sleep(event: asyncio.Event, clock: Clock, seconds: float) -> bool:
    """Wait until ``event`` is set (True) or ``seconds`` pass on ``clock`` (False)."""
    if event.is_set():
        return True
    waiter = asyncio.ensure_future(event.wait())
    sleeper = asyncio.ensure_future(clock.sleep(seconds))
    try:
        await asyncio.wait({waiter, sleeper}, return_when=asyncio.FIRST_COMPLETED)
    finally:
        for task in (waiter, sleeper):
            await _cancel_and_wait(task)
    return event.is_set()


async def _cancel_and_wait(task: asyncio.Future[Any]) -> None:
    """Cancel ``task`` and wait for it to end, without swallowing a cancellation of our own.

    A bare ``suppress(CancelledError)`` around the wait would also swallow the cancellation of
    the *calling* task if it arrives meanwhile, and a loop around it would then never stop.
    """
    if task.done():
        return
    task.cancel()
    try:
        await task
    except asyncio.CancelledError:
        current = asyncio.current_task()
        if current is not None and current.cancelling():
            raise
    except Exception:
        log.debug("a cancelled helper task failed", exc_info=True)


def _number(text: str | None) -> float | None:
    if text is None:
        return None
    try:
        from indipyclient import getfloat

        return float(getfloat(text))
    except (TypeError, ValueError, ImportError):
        return None


def _alt_az(ha_hours: float, dec_deg: float, lat_deg: float) -> tuple[float, float]:
    from siderod.astro.places import hadec_to_altaz

    alt, az = hadec_to_altaz(ha_hours, dec_deg, lat_deg)
    return float(alt), float(az)


def _format_ha(hours: float) -> str:
    sign = "-" if hours < 0 else "+"
    total = round(abs(hours) * 3600)
    h, rest = divmod(total, 3600)
    m, s = divmod(rest, 60)
    return f"{sign}{h:d}h{m:02d}m{s:02d}s"


def _iso(when: datetime) -> str:
    return when.astimezone(UTC).strftime("%Y-%m-%dT%H:%M:%SZ")


def time_to_mark_seconds(ha_hours: float, mark_minutes: float) -> float:
    """Seconds until the hour angle reaches ``mark_minutes`` past the meridian (negative: passed)."""
    return seconds_to_mark(ha_hours, mark_minutes / 60.0)


class MountDesk:
    """Everything the service keeps about the mount and the target in use, in one object.

    The daemon holds one and calls it at five places: ``start`` (after the ledger opens),
    ``run`` (a supervised task), ``adjust`` (after planning, to apply the target in use),
    ``view`` (snapshots) and ``update_config`` (reload); the ``use`` control request goes to
    :meth:`use`.

    Args:
        clock: the only source of time.
        send: sends one message through the service's channels.
        replan: awaited after the target in use changes (``Service.replan``).
        on_acknowledge: hook for the repeat-until-acknowledged rule: called with the keys of the
            mount alerts a flip acknowledged.
    """

    def __init__(self, clock: Clock, send: SendMessage, replan: Callable[[str], Awaitable[None]], *,
                 on_acknowledge: Acknowledge | None = None) -> None:
        self._clock = clock
        self._send = send
        self._replan = replan
        self._on_acknowledge = on_acknowledge
        self._ledger: Any = None
        self.watch: MountWatch | None = None
        self.link: IndiLink | None = None
        self.in_use: str | None = None
        self.in_use_source = ""
        self.in_use_until_utc: datetime | None = None
        self._restart_link = asyncio.Event()

    def start(self, config: Config, ledger: Any) -> None:
        """Read the target in use back from the ledger and build the watch."""
        self._ledger = ledger
        remembered = ledger.in_use(self._clock.now_utc())
        if remembered is not None:
            self.in_use, self.in_use_source, self.in_use_until_utc = remembered
            log.info("target in use (remembered): %s, set by %s", self.in_use, self.in_use_source)
        self.watch = MountWatch(config, self._clock, self._send, on_acknowledge=self._on_acknowledge,
                                on_in_use=self._link_in_use)

    def update_config(self, config: Config) -> None:
        assert self.watch is not None
        old = self.watch.config.mount.link
        self.watch.update_config(config)
        if config.mount.link != old:
            self._restart_link.set()

    async def run(self) -> None:
        """The watch, the link (when configured) and the dawn clearing; runs until cancelled."""
        assert self.watch is not None
        async with asyncio.TaskGroup() as tasks:
            tasks.create_task(self.watch.run(), name="mount-watch")
            tasks.create_task(self._link_loop(), name="mount-link")
            tasks.create_task(self._dawn_loop(), name="mount-dawn")

    async def _link_loop(self) -> None:
        assert self.watch is not None
        while True:
            self._restart_link.clear()
            settings = self.watch.config.mount.link
            if not settings.enabled:
                self.watch.set_link(LinkState.OFF)
                await self._restart_link.wait()
                continue
            self.watch.set_link(LinkState.CONNECTING, f"connecting to {settings.host}:{settings.port}")
            self.link = IndiLink(settings.host, settings.port, settings.device, self.watch, self._clock)
            task = asyncio.get_running_loop().create_task(self.link.run(), name="indi-link")
            try:
                await self._restart_link.wait()
            finally:
                await _cancel_and_wait(task)

    async def _dawn_loop(self) -> None:
        while True:
            until = self.in_use_until_utc
            now_utc = self._clock.now_utc()
            if self.in_use is not None and until is not None and until <= now_utc:
                log.info("dawn: the target in use (%s) is cleared", self.in_use)
                await self.use(None, "dawn")
                continue
            wait = 600.0 if until is None else min(600.0, max(0.0, (until - now_utc).total_seconds()))
            await self._clock.sleep(max(wait, 1.0))

    async def use(self, target: str | None, source: str) -> None:
        """Set (or with None clear) the target in use, remember it until dawn, and re-plan."""
        assert self.watch is not None
        if target == self.in_use and (target is None or source == self.in_use_source):
            return
        until = None if target is None else next_dawn_utc(self.watch.config, self._clock.now_utc())
        self.in_use, self.in_use_source, self.in_use_until_utc = target, source if target else "", until
        if self._ledger is not None:
            self._ledger.set_in_use(target, source, until)
        log.info("target in use: %s (%s)", target or "none", source)
        await self._replan(f"target in use: {target or 'none'}")

    async def _link_in_use(self, target: str | None, source: str) -> None:
        # The link names the target only while it points at one; moving off every target clears
        # what the link set, but never what a command set.
        if target is None and self.in_use_source != "link":
            return
        await self.use(target, source)

    def adjust(self, planned: Sequence[Any], config: Config) -> tuple[Any, ...]:
        """Apply the target in use to planned alerts: critical for it, low or dropped for others."""
        from siderod.plan.mount import urgency_for_target

        if self.in_use is None:
            return tuple(planned)
        adjusted = []
        for alert in planned:
            urgency = urgency_for_target(alert.event.kind, alert.event.target, self.in_use,
                                         alert.urgency, config.mount.other_targets)
            if urgency is None:
                continue
            adjusted.append(alert if urgency is alert.urgency else replace(alert, urgency=urgency))
        return tuple(adjusted)

    async def cycle(self, config: Config) -> str | None:
        """The board's one key: the next target in use, then none.

        Candidates are the configured targets above the horizon, nearest the meridian first (the
        one being imaged is most often near it); after the last one, nothing is in use.
        """
        from siderod.plan.mount import next_target_in_use
        from siderod.plan.positions import compute_sky

        targets = [t for t in config.targets if _on_the_sky(t)]
        choice = None
        if targets:
            sky = compute_sky(config, self._clock.now_utc().timestamp(), targets=targets)
            choice = next_target_in_use(sky.names, sky.ha_hours, sky.alt_deg, self.in_use)
        await self.use(choice, "board")
        return choice

    def awaiting(self) -> tuple[str, ...]:
        """Event ids of the mount's own critical alerts repeating until acknowledged."""
        return self.watch.awaiting() if self.watch is not None else ()

    def user_acknowledged(self, events: Sequence[str]) -> None:
        if self.watch is not None:
            self.watch.user_acknowledged(events)

    def view(self) -> MountView:
        if self.watch is None:
            return MountView(in_use=self.in_use, in_use_source=self.in_use_source)
        return self.watch.view(self.in_use, self.in_use_source)


def _on_the_sky(target: Any) -> bool:
    """A target the mount can point at (``siderod.plan.mount.pointable``)."""
    from siderod.plan.mount import pointable

    return pointable(target)
