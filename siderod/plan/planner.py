"""Pure planning: agenda events + alert rules + mutes -> the alerts the service intends to give.

Nothing here reads the clock, touches files, SQLite, asyncio or D-Bus: the caller passes ``now_utc``
and, when the Sun hold is configured, a function giving the Sun's altitude.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Collection, Iterable, Mapping, Sequence
from datetime import UTC, datetime, timedelta
from typing import Protocol
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

import numpy as np

from siderod.common.model import (
    BEAM_EVENT_KINDS,
    AlertRules,
    Config,
    Event,
    EventKind,
    PlannedAlert,
    Site,
    Urgency,
)

__all__ = [
    "plan_alerts",
    "plan_repeats",
    "repeat_lookback_minutes",
    "alert_key",
    "parse_alert_key",
    "format_alert",
    "alert_body",
    "format_title",
    "format_missed_summary",
    "DEFAULT_URGENCY",
    "SKY_KINDS",
    "SKY_TARGET_NAME",
    "held_kinds",
    "near_sun_targets",
    "SUN_CAUTION_DEG",
    "too_near_the_sun",
]

#: Alert bodies carry the Sun caution when the target is closer than this to the Sun, degrees
#: (the same limit as the `now` table and the board).
SUN_CAUTION_DEG = 20.0

# Kinds that warn of possible harm to equipment are critical unless [alerts] says otherwise
# (common practice: a missed flip can drive the mount into its pier).
DEFAULT_URGENCY: Mapping[EventKind, Urgency] = {
    EventKind.FLIP_DUE: Urgency.CRITICAL,
    EventKind.TRACKING_LIMIT: Urgency.CRITICAL,
}

# The name under which Sun, Moon and twilight events appear in keys and mutes.
SKY_TARGET_NAME = "sky"

# Sun, Moon and twilight kinds: never held by the Sun hold (they are what an observer asks for
# in daylight).
SKY_KINDS: frozenset[EventKind] = frozenset({
    EventKind.SUNSET, EventKind.SUNRISE, EventKind.CIVIL_DUSK, EventKind.NAUTICAL_DUSK,
    EventKind.ASTRONOMICAL_DUSK, EventKind.ASTRONOMICAL_DAWN, EventKind.NAUTICAL_DAWN,
    EventKind.CIVIL_DAWN, EventKind.MOONRISE, EventKind.MOONSET,
})


def held_kinds(rules: AlertRules) -> tuple[EventKind, ...]:
    """The target event kinds that ``[alerts] hold_while_sun_above`` keeps quiet, in kind order.

    ``hold_kinds`` when the user gave it; otherwise every target kind whose urgency is not
    critical. Flip and tracking-limit alerts are critical by default, so a rule meant to keep
    daytime quiet never hides an equipment-protection alert unless the user names that kind.
    """
    if rules.hold_kinds is not None:
        chosen = set(rules.hold_kinds)
        return tuple(kind for kind in EventKind if kind in chosen and kind not in SKY_KINDS)
    # Drift scans run by day as well (the Sun is a radio source): beam events are held only when named.
    return tuple(
        kind for kind in EventKind
        if kind not in SKY_KINDS and kind not in BEAM_EVENT_KINDS
        and rules.urgency.get(kind, DEFAULT_URGENCY.get(kind, Urgency.NORMAL)) is not Urgency.CRITICAL
    )


class _AgendaLike(Protocol):
    events: tuple[Event, ...]


def plan_alerts(
    agenda: _AgendaLike,
    config: Config,
    *,
    muted: Mapping[str, datetime | None],
    now_utc: datetime,
    sun_altitude_deg: Callable[[Sequence[datetime]], Sequence[float]] | None = None,
    lazy_bodies: bool = False,
) -> tuple[PlannedAlert, ...]:
    """Turn an agenda into the alerts to give, sorted by due time (then key).

    Args:
        agenda: anything with ``events`` (``siderod.plan.agenda.Agenda``).
        config: the whole configuration; ``alerts`` gives lead times, urgency, hold and grace,
            each ``Target`` may override lead times or switch its alerts off.
        muted: target name -> muted until (aware UTC), or None for "until unmuted". The name
            ``"sky"`` mutes Sun, Moon and twilight alerts.
        now_utc: the present (aware). Alerts due more than the grace period ago are left out:
            they can no longer be given, and the ledger already knows the ones it planned.
        sun_altitude_deg: the Sun's altitudes (degrees) at a sequence of aware UTC instants, in
            one vectorised call. Needed only when ``alerts.hold_while_sun_above_deg`` is set; if
            None the hold is not applied.
        lazy_bodies: leave each ``body`` empty, to be made by :func:`alert_body` when the alert
            is given or shown (the service: most of a big plan is never shown).

    Returns:
        PlannedAlert records with stable keys, sorted by ``due_utc`` then ``key``. Duplicate
        keys (the same event found twice) appear once.

    The Sun hold applies to the target kinds :func:`held_kinds` names: never to sunset, twilight
    and Moon alerts (the ones an observer asks for in daylight), and never to critical kinds
    such as flip-due and tracking-limit unless ``alerts.hold_kinds`` names them.
    """
    rules = config.alerts
    grace = timedelta(minutes=rules.grace_minutes)
    earliest_due_utc = now_utc - grace
    targets = {t.name: t for t in config.targets}
    candidates: dict[str, tuple[Event, float, datetime]] = {}
    for event in _events_of_kinds(agenda, _kinds_with_leads(config)):
        if too_near_the_sun(event, rules):
            continue  # never lead an observer towards the Sun; the service logs these
        leads = _lead_minutes_for(event, targets, rules.lead_minutes)
        mute_name = event.target if event.target is not None else SKY_TARGET_NAME
        for lead in leads or ():
            due_utc = event.time_utc - timedelta(minutes=lead)
            if due_utc < earliest_due_utc or _is_muted(muted, mute_name, due_utc, now_utc):
                continue
            candidates.setdefault(alert_key(event, lead), (event, lead, due_utc))
    held = _held_by_sun(candidates, rules.hold_while_sun_above_deg, sun_altitude_deg, held_kinds(rules))
    planned: dict[str, PlannedAlert] = {}
    bodies: dict[int, str] = {}  # the body is the event's, whatever the lead: formatted once per event
    for key, (event, lead, due_utc) in candidates.items():
        if key in held:
            continue
        body = "" if lazy_bodies else bodies.get(id(event))
        if body is None:
            body = bodies[id(event)] = format_alert(event, lead, config.site)[1]
        title = format_title(event, lead)
        urgency = rules.urgency.get(event.kind, DEFAULT_URGENCY.get(event.kind, Urgency.NORMAL))
        planned[key] = PlannedAlert(
            key=key,
            event=event,
            lead_minutes=float(lead),
            due_utc=due_utc,
            urgency=urgency,
            title=title,
            body=body,
        )
    return tuple(sorted(planned.values(), key=lambda a: (a.due_utc, a.key)))


def plan_repeats(
    agenda: _AgendaLike,
    config: Config,
    *,
    muted: Mapping[str, datetime | None],
    now_utc: datetime,
    acknowledged: Collection[str] = frozenset(),
    sun_altitude_deg: Callable[[Sequence[datetime]], Sequence[float]] | None = None,
    until_utc: datetime | None = None,
    lazy_bodies: bool = False,
) -> tuple[PlannedAlert, ...]:
    """The repeats of every unacknowledged critical event in the agenda (see ``plan.insist``).

    Args:
        agenda, config, muted, now_utc, sun_altitude_deg: as for :func:`plan_alerts`; a repeat is
            muted, held by the Sun and dropped past its grace exactly like a configured alert.
        acknowledged: event ids (``insist.event_id`` of a key) that get no more repeats.
        until_utc: leave out repeats due after this (aware UTC): the service plans repeats only
            up to the end of its current stretch, and each re-plan adds the next one (a repeat
            keeps its key and number whichever plan makes it). None: the whole series.
        lazy_bodies: as for :func:`plan_alerts`.

    Returns:
        One PlannedAlert per repeat, its own key made from the event and the repeat's lead
        (negative after the event), sorted by due time then key. A flip-due event's next stage
        is the first tracking-limit alert (or, without one, the limit itself) of the same target
        at or after the flip.
    """
    from siderod.plan.insist import event_id, format_repeat, format_repeat_title, repeat_times

    rules = config.alerts
    if rules.repeat_minutes <= 0:
        return ()
    earliest_due_utc = now_utc - timedelta(minutes=rules.grace_minutes)
    targets = {t.name: t for t in config.targets}
    # Every configured alert's due time, grace or not: a repeat can be owed long after the
    # alert that started its series has dropped out of the plan.
    groups: dict[str, tuple[Event, list[datetime]]] = {}
    limits: dict[str, list[datetime]] = {}
    critical = {kind for kind in _kinds_with_leads(config) if _urgency(rules, kind) is Urgency.CRITICAL}
    for event in _events_of_kinds(agenda, critical | {EventKind.TRACKING_LIMIT}):
        leads = _lead_minutes_for(event, targets, rules.lead_minutes)
        if event.kind is EventKind.TRACKING_LIMIT and event.target is not None:
            dues = [event.time_utc - timedelta(minutes=lead) for lead in leads] or [event.time_utc]
            limits.setdefault(event.target, []).append(min(dues))
        if not leads or _urgency(rules, event.kind) is not Urgency.CRITICAL or too_near_the_sun(event, rules):
            continue
        key = event_id(alert_key(event, 0.0))
        if key in acknowledged:
            continue
        _, dues = groups.setdefault(key, (event, []))
        dues.extend(event.time_utc - timedelta(minutes=lead) for lead in leads)
    candidates: dict[str, tuple[Event, float, datetime, int]] = {}
    for event, dues in groups.values():
        if until_utc is not None and min(dues) >= until_utc:
            continue  # its first repeat comes after the first configured alert: a later stretch
        next_stage_utc = None
        if event.kind is EventKind.FLIP_DUE and event.target is not None:
            later = [t for t in limits.get(event.target, ()) if t >= event.time_utc]
            next_stage_utc = min(later) if later else None
        mute_name = event.target if event.target is not None else SKY_TARGET_NAME
        times = repeat_times(dues, repeat_minutes=rules.repeat_minutes, repeat_count=rules.repeat_count,
                             next_stage_utc=next_stage_utc)
        for number, due_utc in enumerate(times, start=1):
            if until_utc is not None and due_utc > until_utc:
                break
            if due_utc < earliest_due_utc or _is_muted(muted, mute_name, due_utc, now_utc):
                continue
            lead = round((event.time_utc - due_utc).total_seconds() / 60.0, 6)
            candidates.setdefault(alert_key(event, lead), (event, lead, due_utc, number))
    held = _held_by_sun({k: v[:3] for k, v in candidates.items()}, rules.hold_while_sun_above_deg,
                        sun_altitude_deg, held_kinds(rules))
    repeats = []
    bodies: dict[int, str] = {}  # the body is the event's, whatever the lead: formatted once per event
    for key, (event, lead, due_utc, number) in candidates.items():
        if key in held:
            continue
        title = format_title(event, max(lead, 0.0))
        if lazy_bodies:
            title, body = format_repeat_title(title, number), ""
        else:
            body = bodies.get(id(event))
            if body is None:
                body = bodies[id(event)] = format_alert(event, 0.0, config.site)[1]
            title, body = format_repeat(title, body, number, rules.repeat_minutes)
        repeats.append(PlannedAlert(key=key, event=event, lead_minutes=float(lead), due_utc=due_utc,
                                    urgency=Urgency.CRITICAL, title=title, body=body, repeat_number=number))
    return tuple(sorted(repeats, key=lambda a: (a.due_utc, a.key)))


def repeat_lookback_minutes(config: Config) -> float:
    """How far before ``now - grace`` an agenda must start so that no owed repeat is forgotten.

    A repeat can fall long after its event: up to ``repeat_count`` periods after the last
    configured alert, or until a flip's tracking limit. An agenda that starts later than the
    event no longer yields its repeats, and a re-plan would drop them.
    """
    from siderod.plan.insist import MAX_REPEATS

    rules = config.alerts
    if rules.repeat_minutes <= 0:
        return 0.0
    counted = rules.repeat_minutes * (rules.repeat_count + 1)
    flip_to_limit = max(0.0, config.mount.limit_after_minutes - config.mount.flip_after_minutes)
    # A configured alert after its event (a negative lead) starts the count that much later.
    latest_after = max((-min(leads, default=0.0) for leads in rules.lead_minutes.values()), default=0.0)
    span = max(counted, flip_to_limit + rules.repeat_minutes) + max(0.0, latest_after)
    return min(span, rules.repeat_minutes * (MAX_REPEATS + 1) + max(0.0, latest_after))


def near_sun_targets(agenda: _AgendaLike, rules: AlertRules) -> list[str]:
    """The targets with an event closer to the Sun than ``[alerts] sun_separation_min`` (sorted)."""
    table = getattr(agenda, "table", None)
    if table is None:
        return sorted({e.target for e in agenda.events if too_near_the_sun(e, rules)})
    with np.errstate(invalid="ignore"):  # NaN: no separation for this kind
        near = (table.target >= 0) & (table.sun_separation_deg < rules.sun_separation_min_deg)
    return sorted({table.names[i] for i in np.unique(table.target[near]).tolist()})


def _kinds_with_leads(config: Config) -> frozenset[EventKind]:
    """Every kind some alert can be given for: lead times globally or for some target."""
    kinds = {kind for kind, leads in config.alerts.lead_minutes.items() if leads}
    for target in config.targets:
        if target.lead_minutes:
            kinds.update(kind for kind, leads in target.lead_minutes.items() if leads)
    return frozenset(kinds)


def _events_of_kinds(agenda: _AgendaLike, kinds: Collection[EventKind]) -> Sequence[Event]:
    """The agenda's events of these kinds, in its order. An agenda that keeps its events as
    columns (``table``) makes records of these rows only: most of a big agenda's events (rise,
    set, hour-angle marks...) have no alert, and a record costs more than the planning itself."""
    table = getattr(agenda, "table", None)
    if table is None:
        return [e for e in agenda.events if e.kind in kinds]
    from siderod.plan.table import KIND_CODES

    codes = np.array(sorted(KIND_CODES[kind] for kind in kinds), dtype=table.kind.dtype)
    return table.take(np.flatnonzero(np.isin(table.kind, codes))).records()


def _urgency(rules: AlertRules, kind: EventKind) -> Urgency:
    return rules.urgency.get(kind, DEFAULT_URGENCY.get(kind, Urgency.NORMAL))


def _held_by_sun(
    candidates: Mapping[str, tuple[Event, float, datetime]],
    hold_above_deg: float | None,
    sun_altitude_deg: Callable[[Sequence[datetime]], Sequence[float]] | None,
    kinds: Sequence[EventKind],
) -> set[str]:
    # Only the kinds the hold covers (see held_kinds); one call for every due time keeps a
    # re-plan of thousands of alerts cheap.
    if hold_above_deg is None or sun_altitude_deg is None:
        return set()
    covered = set(kinds)
    keys = [key for key, (event, _, _) in candidates.items()
            if event.target is not None and event.kind in covered]
    if not keys:
        return set()
    altitudes = sun_altitude_deg([candidates[key][2] for key in keys])
    return {key for key, alt in zip(keys, altitudes, strict=True) if float(alt) > hold_above_deg}


def too_near_the_sun(event: Event, rules: AlertRules) -> bool:
    """True for a target event closer to the Sun than ``[alerts] sun_separation_min``: no alert."""
    sep = event.sun_separation_deg
    return event.target is not None and sep is not None and sep < rules.sun_separation_min_deg


def alert_key(event: Event, lead_minutes: float) -> str:
    """The stable identity of one alert: ``target|kind|event time to the second|lead``.

    >>> from siderod.common.model import Event, EventKind
    >>> when = datetime(2026, 12, 14, 22, 3, 7, 600000, tzinfo=UTC)
    >>> alert_key(Event(when, EventKind.FLIP_DUE, "M42", 40.0, 180.0), 10)
    'M42|flip-due|2026-12-14T22:03:08Z|10'

    The event time is rounded to the nearest second, so two agenda runs that find the same
    event a few milliseconds apart give the same key in all but the rare case of straddling a
    half second; the ledger also matches keys whose event times differ by a few seconds.

    A drift-scan event names its source after the kind (``Dish|beam-centre:Vega|...``): two
    sources may pass through one beam in the same second, and each is an alert of its own.
    """
    target = event.target if event.target is not None else SKY_TARGET_NAME
    when = _round_to_second(event.time_utc).strftime("%Y-%m-%dT%H:%M:%SZ")
    kind = event.kind.value
    if event.beam_source is not None:
        kind = f"{kind}:{event.beam_source.replace('|', '/')}"
    return f"{target}|{kind}|{when}|{_format_lead(lead_minutes)}"


def parse_alert_key(key: str) -> tuple[str, str, datetime, float]:
    """Split a key made by ``alert_key`` into (target, kind value, event time UTC, lead minutes);
    a drift-scan key's source is left out of the kind.

    Raises:
        ValueError: the text is not a key made by ``alert_key``.
    """
    parts = key.rsplit("|", 3)
    if len(parts) != 4:
        raise ValueError(f"not an alert key (expected target|kind|time|lead): {key!r}")
    target, kind, when, lead = parts
    kind = kind.split(":", 1)[0]
    event_utc = datetime.strptime(when, "%Y-%m-%dT%H:%M:%SZ").replace(tzinfo=UTC)
    return target, kind, event_utc, float(lead)


def format_alert(event: Event, lead_minutes: float, site: Site) -> tuple[str, str]:
    """The notification title and body for one alert.

    The title names the target and the event and says how soon; the body gives the event time
    in the site's local time and in UTC, the hour angle and the altitude.
    """
    title = format_title(event, lead_minutes)
    local_text = _format_local(event.time_utc, site.timezone)
    lines = [
        f"At {local_text} ({_round_to_second(event.time_utc).strftime('%H:%M:%S')} UTC)",
    ]
    if event.hour_angle_hours is not None:
        lines.append(f"Hour angle {_format_hour_angle(event.hour_angle_hours)}")
    lines.append(f"Altitude {event.altitude_deg:.1f}°, azimuth {event.azimuth_deg:.1f}°")
    if event.kind in (EventKind.FLIP_DUE, EventKind.TRACKING_LIMIT):
        lines.append("Advisory only: the mount's own limits must be set.")
    if event.kind is EventKind.SUNRISE:
        lines.append("Cover or park unfiltered optics before the Sun is up.")
    if event.beam_offset_deg is not None:
        side = "south" if event.beam_offset_deg < 0 else "north"
        lines.append(f"Passes {abs(event.beam_offset_deg):.2f}° {side} of the beam's axis.")
    if event.beam_source == "Sun":
        lines.append("The Sun is a radio source here: never point unfiltered optics at or near the Sun.")
    if event.target is not None and event.sun_separation_deg is not None \
            and event.sun_separation_deg < SUN_CAUTION_DEG:
        lines.append(f"Caution: {event.sun_separation_deg:.0f}° from the Sun. Never point unfiltered "
                     "optics at or near the Sun.")
    return title, "\n".join(lines)


def alert_body(alert: PlannedAlert, config: Config) -> str:
    """The notification body of a planned alert: its own, or made now if it was planned with
    ``lazy_bodies`` (the same text the planner would have made)."""
    if alert.body:
        return alert.body
    body = format_alert(alert.event, max(alert.lead_minutes, 0.0), config.site)[1]
    if alert.repeat_number:
        from siderod.plan.insist import format_repeat

        body = format_repeat("", body, alert.repeat_number, config.alerts.repeat_minutes)[1]
    return body


def format_title(event: Event, lead_minutes: float) -> str:
    """The notification title of one alert: the target, the event and how soon."""
    what = _EVENT_PHRASES[event.kind].format(
        target=event.target or "",
        threshold=_format_deg(event.threshold_deg),
        mark=_format_hour_angle(event.mark_hours),
        source=event.beam_source or "",
    )
    if lead_minutes > 0:
        return f"{what} in {_format_lead(lead_minutes)} min"
    return f"{what} now"


def format_missed_summary(titles: Iterable[str], grace_minutes: float) -> tuple[str, str]:
    """Title and body of the one notification that summarises alerts missed beyond their grace."""
    titles = list(titles)
    count = len(titles)
    plural = "s" if count != 1 else ""
    title = f"{count} alert{plural} missed (more than {_format_lead(grace_minutes)} min late)"
    shown = titles[:_SUMMARY_LINES]
    body = "\n".join(shown)
    if count > len(shown):
        body += f"\n... and {count - len(shown)} more (see the log)"
    return title, body


# -- helpers, in the order they are called ---------------------------------------------------


def _lead_minutes_for(
    event: Event, targets: Mapping[str, object], global_leads: Mapping[EventKind, tuple[float, ...]]
) -> tuple[float, ...]:
    if event.target is None:
        return tuple(global_leads.get(event.kind, ()))
    target = targets.get(event.target)
    if target is None:
        return ()  # an event for a target the config no longer has
    if not target.alerts_enabled:
        return ()
    if target.lead_minutes is not None and event.kind in target.lead_minutes:
        return tuple(target.lead_minutes[event.kind])
    return tuple(global_leads.get(event.kind, ()))


def _is_muted(muted: Mapping[str, datetime | None], name: str, due_utc: datetime, now_utc: datetime) -> bool:
    if name not in muted:
        return False
    until_utc = muted[name]
    if until_utc is None:
        return True
    return until_utc > now_utc and due_utc < until_utc


def _round_to_second(when_utc: datetime) -> datetime:
    when_utc = when_utc.astimezone(UTC)
    whole = when_utc.replace(microsecond=0)
    if when_utc.microsecond >= 500_000:
        whole += timedelta(seconds=1)
    return whole


def _format_lead(minutes: float) -> str:
    return f"{minutes:g}"


def _format_deg(value: float | None) -> str:
    return "" if value is None else f"{value:g}°"


def _format_hour_angle(hours: float | None) -> str:
    if hours is None or not math.isfinite(hours):
        return ""
    sign = "-" if hours < 0 else "+"
    total_seconds = round(abs(hours) * 3600)
    h, rest = divmod(total_seconds, 3600)
    m, s = divmod(rest, 60)
    return f"{sign}{h:d}h{m:02d}m{s:02d}s"


def _format_local(when_utc: datetime, timezone_name: str) -> str:
    try:
        zone = ZoneInfo(timezone_name)
    except (ZoneInfoNotFoundError, ValueError):
        zone = UTC
    local = _round_to_second(when_utc).astimezone(zone)
    return local.strftime("%H:%M:%S %Z on %a %d %b")


_EVENT_PHRASES: Mapping[EventKind, str] = {
    EventKind.CULMINATION: "{target} culminates",
    EventKind.LOWER_CULMINATION: "{target} at lower culmination",
    EventKind.RISE: "{target} rises above {threshold}",
    EventKind.SET: "{target} sets below {threshold}",
    EventKind.ALTITUDE_UP: "{target} climbs through {threshold}",
    EventKind.ALTITUDE_DOWN: "{target} sinks through {threshold}",
    EventKind.HOUR_ANGLE: "{target} reaches hour angle {mark}",
    EventKind.FLIP_DUE: "{target}: meridian flip due",
    EventKind.TRACKING_LIMIT: "{target}: tracking limit",
    EventKind.SUNSET: "Sunset",
    EventKind.SUNRISE: "Sunrise",
    EventKind.CIVIL_DUSK: "Civil twilight ends",
    EventKind.NAUTICAL_DUSK: "Nautical twilight ends",
    EventKind.ASTRONOMICAL_DUSK: "Astronomical night begins",
    EventKind.ASTRONOMICAL_DAWN: "Astronomical night ends",
    EventKind.NAUTICAL_DAWN: "Nautical dawn",
    EventKind.CIVIL_DAWN: "Civil dawn",
    EventKind.MOONRISE: "Moonrise",
    EventKind.MOONSET: "Moonset",
    EventKind.BEAM_ENTER: "{source} enters the beam of {target}",
    EventKind.BEAM_CENTRE: "{source} centres in the beam of {target}",
    EventKind.BEAM_LEAVE: "{source} leaves the beam of {target}",
}

_SUMMARY_LINES = 12  # titles listed in a missed-alert summary before "... and N more"
