"""Pure planning for a linked mount: where it points, which side of the pier it is on, and when
its own hour angle reaches the flip and limit marks.

Nothing here reads the clock, the network or files: the service passes the present instant, the
apparent sidereal time and the mount's last reported pointing, and gets plain records back.

Conventions (the INDI protocol's, which most drivers follow): the mount reports its pointing of
date (apparent RA and Dec, "JNow") and, where it can, its pier side. ``PierSide.WEST`` is the
telescope on the west side of the pier, looking east: the side a German equatorial mount tracks
on before its meridian flip. ``PierSide.EAST`` is the side after the flip. On the west side the
counterweight rises above the mount once the hour angle passes 0 (common practice).
"""

from __future__ import annotations

import enum
import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from datetime import datetime, timedelta

from siderod.common.model import EventKind, Frame, Mount, Target, Urgency

__all__ = [
    "PierSide",
    "LinkState",
    "Pointing",
    "MountDue",
    "SIDEREAL_RATE",
    "SUN_CAUTION_DEG",
    "NEAREST_TARGET_DEG",
    "hour_angle_hours",
    "counterweight_up",
    "seconds_to_mark",
    "plan_pointing_alerts",
    "mount_due_key",
    "nearest_target",
    "angular_distance_deg",
    "urgency_for_target",
    "next_target_in_use",
    "pointable",
]

#: Hour angle gained per hour of UT by a point fixed on the sky: the ratio of the mean solar to
#: the mean sidereal day (IAU 1982 value, 1.00273790935; the drift of the ratio is negligible
#: over one night).
SIDEREAL_RATE = 1.00273790935
#: The board's solar caution distance (common practice); the service's Sun alert for the mount
#: uses ``[alerts] sun_separation_min``, the configured caution distance.
SUN_CAUTION_DEG = 20.0
#: A configured target within this of the mount's pointing is named as the one it is on.
NEAREST_TARGET_DEG = 1.0


class PierSide(enum.Enum):
    """Which side of the pier the telescope is on. ``.value`` is the JSON spelling."""

    WEST = "west"  # looking east: tracks towards the meridian, flip ahead
    EAST = "east"  # looking west: the side after the flip
    UNKNOWN = "unknown"  # the driver does not report it


class LinkState(enum.Enum):
    """How the service's read-only link to the mount stands. ``.value`` is the JSON spelling."""

    OFF = "off"  # not configured
    CONNECTING = "connecting"  # no answer from the server yet (or retrying after a failure)
    NO_DEVICE = "no-device"  # the server answers but the telescope device is absent or unconnected
    LINKED = "linked"  # the device reports its pointing
    LOST = "lost"  # it was linked and the link broke; retrying with back-off


@dataclass(frozen=True, slots=True)
class Pointing:
    """The mount's own report, as last received.

    ``ra_hours``/``dec_deg`` are apparent, of date (the driver's ``EQUATORIAL_EOD_COORD``).
    ``tracking``/``parked`` are None when the driver has not said.
    """

    ra_hours: float
    dec_deg: float
    pier_side: PierSide = PierSide.UNKNOWN
    tracking: bool | None = None
    parked: bool | None = None
    slewing: bool = False


@dataclass(frozen=True, slots=True)
class MountDue:
    """One flip or limit alert planned for the mount's actual pointing."""

    kind: EventKind  # FLIP_DUE or TRACKING_LIMIT
    event_utc: datetime  # when the mount's hour angle reaches the mark
    lead_minutes: float
    due_utc: datetime
    mark_hours: float
    overdue: bool = False  # the mark was already passed on the pre-flip side when planned


def hour_angle_hours(last_hours: float, ra_hours: float) -> float:
    """Local hour angle from apparent sidereal time and apparent RA, hours in [-12, 12)."""
    return (last_hours - ra_hours + 12.0) % 24.0 - 12.0


def counterweight_up(ha_hours: float, pier_side: PierSide) -> bool | None:
    """True when the counterweight is above the mount (common practice geometry).

    On the west side (looking east) it rises once the pointing is west of the meridian; on the
    east side once it is east of it. None when the pier side is unknown.
    """
    if pier_side is PierSide.WEST:
        return ha_hours > 0.0
    if pier_side is PierSide.EAST:
        return ha_hours < 0.0
    return None


def seconds_to_mark(ha_hours: float, mark_hours: float) -> float:
    """Seconds of UT until a point fixed on the sky goes from ``ha_hours`` to ``mark_hours``.

    Negative when the mark is already behind (within half a turn); both in hours.
    """
    delta_hours = (mark_hours - ha_hours + 12.0) % 24.0 - 12.0
    return delta_hours * 3600.0 / SIDEREAL_RATE


def plan_pointing_alerts(
    now_utc: datetime,
    ha_hours: float,
    pointing: Pointing,
    mount: Mount,
    lead_minutes: Mapping[EventKind, Sequence[float]],
) -> tuple[MountDue, ...]:
    """The flip-due and tracking-limit alerts for where the mount points now.

    Args:
        now_utc: the present (aware).
        ha_hours: the mount's hour angle now, hours in [-12, 12).
        pointing: its last report (pier side, tracking, parked).
        mount: ``flip_after``/``limit_after`` (minutes of time past the meridian).
        lead_minutes: kind -> lead times in minutes (``[alerts.lead]``); kinds absent do not alert.

    Returns:
        MountDue records sorted by due time. Empty while the mount is parked, not tracking, or on
        the east side of the pier (already flipped). On the west side a mark already passed gives
        one overdue alert at once; with the pier side unknown a passed mark is taken as a slew
        to the other side and gives nothing (the alert text says the side is unknown).
    """
    if pointing.parked or pointing.tracking is False or pointing.pier_side is PierSide.EAST:
        return ()
    planned: list[MountDue] = []
    for kind, mark_minutes in (
        (EventKind.FLIP_DUE, mount.flip_after_minutes),
        (EventKind.TRACKING_LIMIT, mount.limit_after_minutes),
    ):
        leads = tuple(lead_minutes.get(kind, ()))
        if not leads:
            continue
        mark_hours = mark_minutes / 60.0
        seconds = seconds_to_mark(ha_hours, mark_hours)
        event_utc = now_utc + timedelta(seconds=seconds)
        if seconds < 0.0:
            if pointing.pier_side is PierSide.WEST:
                planned.append(MountDue(kind, event_utc, 0.0, now_utc, mark_hours, overdue=True))
            continue
        for lead in sorted(set(leads), reverse=True):
            due_utc = max(now_utc, event_utc - timedelta(minutes=float(lead)))
            planned.append(MountDue(kind, event_utc, float(lead), due_utc, mark_hours))
    return tuple(sorted(planned, key=lambda d: (d.due_utc, d.kind.value, -d.lead_minutes)))


def mount_due_key(due: MountDue, episode: int) -> str:
    """A key for one mount alert within one pointing episode (a slew or flip starts a new one).

    >>> from datetime import UTC
    >>> when = datetime(2026, 12, 14, 22, 0, tzinfo=UTC)
    >>> mount_due_key(MountDue(EventKind.FLIP_DUE, when, 10.0, when, 0.25), 3)
    'mount|flip-due|3|10'
    """
    return f"mount|{due.kind.value}|{episode}|{due.lead_minutes:g}"


def angular_distance_deg(ra1_hours: float, dec1_deg: float, ra2_hours: float, dec2_deg: float) -> float:
    """Great-circle distance between two RA/Dec points, degrees (Vincenty's formula, stable at 0)."""
    a1, d1 = math.radians(ra1_hours * 15.0), math.radians(dec1_deg)
    a2, d2 = math.radians(ra2_hours * 15.0), math.radians(dec2_deg)
    da = a2 - a1
    num = math.hypot(math.cos(d2) * math.sin(da),
                     math.cos(d1) * math.sin(d2) - math.sin(d1) * math.cos(d2) * math.cos(da))
    den = math.sin(d1) * math.sin(d2) + math.cos(d1) * math.cos(d2) * math.cos(da)
    return math.degrees(math.atan2(num, den))


def nearest_target(
    ra_hours: float,
    dec_deg: float,
    names: Sequence[str],
    target_ra_hours: Sequence[float],
    target_dec_deg: Sequence[float],
    within_deg: float = NEAREST_TARGET_DEG,
) -> tuple[str, float] | None:
    """The configured target nearest the pointing, if one is within ``within_deg``.

    All positions must be in the same frame (apparent of date here). Returns (name, distance).
    """
    best: tuple[str, float] | None = None
    for name, ra, dec in zip(names, target_ra_hours, target_dec_deg, strict=True):
        if not (math.isfinite(ra) and math.isfinite(dec)):
            continue
        distance = angular_distance_deg(ra_hours, dec_deg, float(ra), float(dec))
        if distance <= within_deg and (best is None or distance < best[1]):
            best = (name, distance)
    return best


def urgency_for_target(
    kind: EventKind,
    target: str | None,
    in_use: str | None,
    configured: Urgency,
    others: str,
) -> Urgency | None:
    """The urgency of a target's flip or limit alert given the target in use.

    Args:
        kind: the event kind; only FLIP_DUE and TRACKING_LIMIT are affected.
        target: the alert's target.
        in_use: the target in use, or None (then every target keeps ``configured``).
        configured: the urgency the rules give.
        others: ``"info"`` (other targets' flip/limit alerts become LOW) or ``"off"`` (dropped).

    Returns:
        The urgency, or None when the alert is to be left out.
    """
    if kind not in (EventKind.FLIP_DUE, EventKind.TRACKING_LIMIT) or in_use is None or target is None:
        return configured
    if target == in_use:
        return Urgency.CRITICAL
    if others == "off":
        return None
    return Urgency.LOW


def next_target_in_use(
    names: Sequence[str],
    ha_hours: Sequence[float],
    alt_deg: Sequence[float],
    current: str | None,
) -> str | None:
    """The board key's choice: the next target in use after ``current``, or None after the last.

    Candidates are the targets above the horizon (``alt_deg`` > 0), nearest the meridian first
    (smallest ``|ha_hours|``): the one being imaged is most often near it.
    """
    rows = zip(names, ha_hours, alt_deg, strict=True)
    order = [name for _, name in sorted((abs(float(ha)), name) for name, ha, alt in rows if float(alt) > 0.0)]
    if current in order:
        index = order.index(current) + 1
        return order[index] if index < len(order) else None
    return order[0] if order else None


def pointable(target: Target) -> bool:
    """A target a mount can point at: a catalogue place, or a planet, the Moon, a comet (placed now)."""
    return target.ra_deg is not None or target.frame in (Frame.BODY, Frame.ORBIT)
