"""The agenda: every event of a time window for the configured site and targets, as records.

This is the only bridge from the array-level event engine (:mod:`siderod.astro.events`) to the
``Event`` records the planner, the view and the command line use. It is pure: the window comes in
as arguments, nothing reads the clock, files or the environment.

Conventions, said once:

* Windows are half-open, ``[start, end)``: an event within 1 ms of the start belongs to the window,
  one within 1 ms of the end to the next, so back-to-back windows list every event exactly once.
* A target's lowest usable altitude at azimuth A is ``max(horizon profile at A, its own
  min_altitude or the global [events] min_altitude)``. With ``[events] refraction = true`` that is
  compared with the refracted altitude, otherwise with the geometric one (never both).
* Sun and Moon events use the standard altitudes of the trade (astro-references §4i) on geometric
  positions whatever the refraction switch says: -0.8333 deg for sunrise/sunset (horizon refraction
  and semidiameter included), -6/-12/-18 deg for the twilights, the Moon's upper limb at -34'.
* Fixed hour-angle (``hadec``) pointings have a constant altitude: they get no events, only a
  classification ("circumpolar" when usable, else "never-rises") and their dark intervals.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Collection, Mapping
from dataclasses import dataclass, field
from datetime import UTC, datetime, timedelta

import numpy as np

from siderod.astro import events as ev
from siderod.astro.ephemeris import geocentric_site_rho
from siderod.astro.places import Observer, hadec_to_altaz
from siderod.astro.sidereal import FastSidereal
from siderod.astro.sunmoon import moon_illuminated_fraction, observe_moon, observe_sun, sun_apparent_radec
from siderod.astro.timescales import instants_from_unix
from siderod.common.model import Config, Event, EventKind, Frame, MountKind, Target
from siderod.plan.moving import ephemeris_for, is_moving, moving_places
from siderod.plan.positions import altitude_limit, observer_for, target_stars

__all__ = [
    "Agenda",
    "CHUNK_HOURS",
    "TARGET_CHUNK",
    "compute_agenda",
    "event_to_json",
]

#: Longest stretch handled with one set of fitted apparent places; longer windows are cut into pieces.
CHUNK_HOURS = 48.0
#: Targets per pass of the engine: bounds memory and drives the progress callback.
TARGET_CHUNK = 32768

_SUN_KINDS = {
    (0, False): EventKind.SUNSET, (0, True): EventKind.SUNRISE,
    (1, False): EventKind.CIVIL_DUSK, (1, True): EventKind.CIVIL_DAWN,
    (2, False): EventKind.NAUTICAL_DUSK, (2, True): EventKind.NAUTICAL_DAWN,
    (3, False): EventKind.ASTRONOMICAL_DUSK, (3, True): EventKind.ASTRONOMICAL_DAWN,
}
_ASTRONOMICAL_NIGHT_DEG = -18.0
# Ties in time are listed in this order (e.g. a rise exactly at a culmination of a grazing target).
_KIND_ORDER = {kind: i for i, kind in enumerate(EventKind)}


@dataclass(frozen=True)
class Agenda:
    """The events of one window, sorted by time, plus per-target summaries.

    Attributes:
        start_utc, end_utc: the window, aware UTC datetimes (half-open).
        events: every event, sorted by time (then kind, then target).
        classification: target name -> "circumpolar" (usable all window), "never-rises" (never
            usable in the window) or "normal".
        dark_intervals: target name -> ((begin_utc, end_utc), ...): usable while the Sun is below
            -18 deg.
    """

    start_utc: datetime
    end_utc: datetime
    events: tuple[Event, ...]
    classification: Mapping[str, str] = field(default_factory=dict)
    dark_intervals: Mapping[str, tuple[tuple[datetime, datetime], ...]] = field(default_factory=dict)


def compute_agenda(config: Config, start_utc: datetime, hours: float | None = None, *,
                   targets: Collection[str] | None = None, kinds: Collection[EventKind] | None = None,
                   progress: Callable[[int, int], None] | None = None) -> Agenda:
    """Every event of ``[start_utc, start_utc + hours)`` for the configured site and targets.

    Args:
        config: the whole configuration (site, targets, [events], [mount], [time]).
        start_utc: window start, a timezone-aware datetime.
        hours: window length, hours (default: ``config.events.window_hours``).
        targets: names of the targets to include (default: all); Sun and Moon events are always
            computed unless ``kinds`` leaves them out.
        kinds: event kinds to keep (default: all).
        progress: called as ``progress(done, total)`` (targets) after each pass over a chunk.

    Returns:
        Agenda: the sorted events and the per-target summaries.

    Raises:
        ValueError: a naive ``start_utc``, a non-positive ``hours``, or an unknown target name (the
            message lists the configured names).
    """
    if start_utc.tzinfo is None or start_utc.utcoffset() is None:
        raise ValueError(f"start_utc must be timezone-aware (got naive {start_utc.isoformat()}); "
                         "add tzinfo=datetime.timezone.utc or an offset")
    hours = float(config.events.window_hours if hours is None else hours)
    if not (hours > 0.0 and math.isfinite(hours)):
        raise ValueError(f"hours must be a positive number of hours; got {hours}")
    chosen = _choose_targets(config.targets, targets)
    wanted = set(EventKind) if kinds is None else set(kinds)
    start_unix = start_utc.timestamp()
    end_unix = start_unix + hours * 3600.0
    observer = observer_for(config)
    dut1 = config.time.dut1_seconds

    records: list[Event] = []
    night = _night_intervals(observer, start_unix, end_unix, dut1, records, wanted)
    if wanted & {EventKind.MOONRISE, EventKind.MOONSET}:
        records.extend(_moon_events(observer, start_unix, end_unix, dut1, wanted))

    # Fixed places and moving bodies go in separate chunks: a chunk shares one track, and only a
    # moving body's track carries parallax and needs the extra refinement steps.
    sky = [t for t in chosen if t.frame is not Frame.HADEC and not is_moving(t)]
    moving = [t for t in chosen if is_moving(t)]
    fixed = [t for t in chosen if t.frame is Frame.HADEC]
    classification: dict[str, str] = {}
    dark: dict[str, tuple[tuple[datetime, datetime], ...]] = {}
    total = len(sky) + len(moving)
    done = 0
    groups = [sky[i:i + TARGET_CHUNK] for i in range(0, len(sky), TARGET_CHUNK)]
    groups += [moving[i:i + TARGET_CHUNK] for i in range(0, len(moving), TARGET_CHUNK)]
    for group in groups:
        up_at_start, crossings = _target_pieces(config, observer, group, start_unix, end_unix, wanted,
                                                records)
        for j, target in enumerate(group):
            times, rising = crossings.get(j, ((), ()))
            classification[target.name] = _classify(up_at_start[j], len(times))
            up = ev.intervals_from_crossings(up_at_start[j], times, rising, start_unix, end_unix)
            dark[target.name] = _as_datetimes(ev.intersect_intervals(up, night))
        done += len(group)
        if progress is not None:
            progress(done, total)
    for target in fixed:
        usable = _fixed_usable(config, target)
        classification[target.name] = "circumpolar" if usable else "never-rises"
        dark[target.name] = _as_datetimes(night) if usable else ()

    records.sort(key=lambda e: (e.time_utc, _KIND_ORDER[e.kind], e.target or ""))
    return Agenda(start_utc=_utc(start_unix), end_utc=_utc(end_unix), events=tuple(records),
                  classification=classification, dark_intervals=dark)


def event_to_json(event: Event) -> dict:
    """One event as the stable ``--json`` object (field list in the README).

    ``time_utc`` is ISO 8601 with milliseconds and a ``Z``; angles are rounded to 0.001 deg and
    hour angles to 1e-5 h; absent values are ``null``.
    """
    when = event.time_utc.astimezone(UTC)
    text = when.strftime("%Y-%m-%dT%H:%M:%S") + f".{when.microsecond // 1000:03d}Z"
    return {
        "time_utc": text,
        "target": event.target,
        "kind": event.kind.value,
        "altitude_deg": _round(event.altitude_deg, 3),
        "azimuth_deg": _azimuth(event.azimuth_deg),
        "hour_angle_hours": _round(event.hour_angle_hours, 5),
        "threshold_deg": _round(event.threshold_deg, 4),
        "mark_hours": _round(event.mark_hours, 5),
        "usable": event.usable,
        "moon_illuminated_fraction": _round(event.moon_illuminated_fraction, 3),
    }


# ---------------------------------------------------------------------------------------------
# targets


def _choose_targets(all_targets: tuple[Target, ...], names: Collection[str] | None) -> list[Target]:
    if names is None:
        return list(all_targets)
    by_name = {t.name: t for t in all_targets}
    unknown = [n for n in names if n not in by_name]
    if unknown:
        known = ", ".join(sorted(by_name)) or "(none configured)"
        raise ValueError(f"unknown target {', '.join(repr(n) for n in unknown)}; configured targets: {known}")
    wanted = set(names)
    return [t for t in all_targets if t.name in wanted]


def _limit_for(config: Config, targets: list[Target], observer: Observer) -> ev.AltitudeLimit:
    return altitude_limit(config, targets)  # the one definition, shared with `now` and the board


def _target_pieces(config, observer, group, start_unix, end_unix, wanted, records):
    """Events of one chunk of sky targets, over the whole window (cut into <= 48 h pieces).

    Returns the per-target "usable at the start" flags and, per target index, the usable-limit
    crossings (times, rising) used for classification and dark intervals.
    """
    names = [t.name for t in group]
    limit = _limit_for(config, group, observer)
    lat = config.site.latitude_deg
    lon = config.site.longitude_deg
    dut1 = config.time.dut1_seconds
    mid_jd_tt = float(instants_from_unix(0.5 * (start_unix + end_unix), dut1_seconds=dut1).jd_tt)
    bodies = is_moving(group[0])
    stars = None if bodies else target_stars(group, mid_jd_tt)
    crossings: dict[int, tuple[list[float], list[bool]]] = {}
    up_at_start = None
    piece_start = start_unix
    while piece_start < end_unix - ev.EDGE_TOLERANCE_SECONDS:
        piece_end = min(end_unix, piece_start + CHUNK_HOURS * 3600.0)
        sidereal = FastSidereal(piece_start - 600.0, piece_end + 600.0, dut1_seconds=dut1)

        def last(unix, _s=sidereal):
            return _s.last_hours(unix, lon)

        if bodies:
            track = _moving_track(config, observer, group, piece_start, piece_end)
        else:
            track = ev.build_track(stars, piece_start, piece_end, dut1_seconds=dut1)
        if up_at_start is None:
            alt, az, _ = ev.target_altaz(track, last, lat, np.full(len(group), start_unix))
            up_at_start = (alt >= limit.geometric_deg(az)).tolist()
        maker = _EventMaker(track, last, lat, limit, names, records, _SunPath(piece_start, piece_end))
        _hour_angle_kinds(config, maker, track, last, lat, piece_start, piece_end, wanted)
        # Rise and set: always computed (classification and dark intervals need them).
        flat = np.flatnonzero(~limit.depends_on_azimuth())
        profiled = np.flatnonzero(limit.depends_on_azimuth())
        floor_geo = limit.to_geometric_deg(limit.min_alt_deg)
        parts = []
        if flat.size:
            parts.append(ev.find_altitude_events(track, last, lat, floor_geo[flat], piece_start, piece_end,
                                                 index=flat))
        if profiled.size:
            parts.append(ev.find_limit_events(track, last, lat, limit, piece_start, piece_end,
                                              index=profiled))
        for idx, times, rising in parts:
            for j, t, r in zip(idx.tolist(), times.tolist(), rising.tolist(), strict=True):
                entry = crossings.setdefault(j, ([], []))
                entry[0].append(t)
                entry[1].append(r)
            maker.crossings(idx, times, rising, EventKind.RISE, EventKind.SET, wanted, threshold=None)
        for threshold in config.events.altitudes_deg:
            if not wanted & {EventKind.ALTITUDE_UP, EventKind.ALTITUDE_DOWN}:
                break
            geo = float(limit.to_geometric_deg(threshold))
            idx, times, rising = ev.find_altitude_events(track, last, lat, geo, piece_start, piece_end)
            maker.crossings(idx, times, rising, EventKind.ALTITUDE_UP, EventKind.ALTITUDE_DOWN, wanted,
                            threshold=threshold)
        piece_start = piece_end
    for j in crossings:
        times, rising = crossings[j]
        order = np.argsort(times, kind="stable")
        crossings[j] = (np.asarray(times)[order], np.asarray(rising)[order])
    return up_at_start or [], crossings


def _moving_track(config, observer, group, start_unix, end_unix):
    """The track of planets, the Moon, comets and asteroids: exact places at a few instants, fitted."""
    sample = ev.moving_sample_unix(start_unix, end_unix)
    instants = instants_from_unix(sample[:, None], dut1_seconds=config.time.dut1_seconds)
    places = moving_places(ephemeris_for(config), group, instants)
    return ev.track_from_apparent(sample, places.unit_xyz, places.distance_au, geocentric_site_rho(observer))


def _hour_angle_kinds(config, maker, track, last, lat, start, end, wanted):
    marks: list[tuple[EventKind, float, bool]] = []  # kind, hour angle, only while usable
    if EventKind.CULMINATION in wanted:
        marks.append((EventKind.CULMINATION, 0.0, False))
    if EventKind.LOWER_CULMINATION in wanted:
        marks.append((EventKind.LOWER_CULMINATION, 12.0, False))
    if EventKind.HOUR_ANGLE in wanted:
        marks.extend((EventKind.HOUR_ANGLE, float(h), False) for h in config.events.hour_angles_hours)
    if config.mount.kind is MountKind.GERMAN_EQUATORIAL:
        if EventKind.FLIP_DUE in wanted:
            marks.append((EventKind.FLIP_DUE, config.mount.flip_after_minutes / 60.0, True))
        if EventKind.TRACKING_LIMIT in wanted:
            marks.append((EventKind.TRACKING_LIMIT, config.mount.limit_after_minutes / 60.0, True))
    for kind, ha, only_usable in marks:
        idx, times, _ = ev.find_hour_angle_events(track, last, ha, start, end, latitude_deg=lat)
        maker.marks(idx, times, kind, ha, only_usable)


class _EventMaker:
    """Turns the engine's arrays into Event records (one place, so every kind is filled alike)."""

    def __init__(self, track, last, lat, limit: ev.AltitudeLimit, names, records, sun=None):
        self.track, self.last, self.lat, self.limit = track, last, lat, limit
        self.names, self.records = names, records
        self.sun = sun

    def _state(self, idx, times):
        alt_geo, az, ha = ev.target_altaz(self.track, self.last, self.lat, times, idx)
        ra, dec = self.track.radec_at(times, idx)
        ha = ev.observed_hour_angle_hours(ha, dec, self.lat)
        alt = self.limit.to_observed_deg(alt_geo)
        floor = self.limit.observed_deg(az, idx)
        self.sun_sep = self.sun.separation_deg(times, ra, dec) if self.sun is not None else None
        return alt, az, ha, floor

    def _sep(self, k):
        return None if self.sun_sep is None else float(self.sun_sep[k])

    def marks(self, idx, times, kind, mark_hours, only_usable):
        if idx.size == 0:
            return
        alt, az, ha, floor = self._state(idx, times)
        usable = alt >= floor  # usable at or above the limit, as in `now` and on the board
        wrapped_mark = mark_hours - 24.0 * math.floor((mark_hours + 12.0) / 24.0)
        is_culmination = kind in (EventKind.CULMINATION, EventKind.LOWER_CULMINATION)
        for k, (j, t, a, z, h, u) in enumerate(zip(idx.tolist(), times.tolist(), alt.tolist(), az.tolist(),
                                                   ha.tolist(), usable.tolist(), strict=True)):
            if only_usable and not u:
                continue
            self.records.append(Event(
                time_utc=_utc(t), kind=kind, target=self.names[j], altitude_deg=a, azimuth_deg=z,
                hour_angle_hours=h, mark_hours=None if is_culmination else wrapped_mark, usable=u,
                sun_separation_deg=self._sep(k)))

    def crossings(self, idx, times, rising, up_kind, down_kind, wanted, *, threshold):
        if idx.size == 0 or not wanted & {up_kind, down_kind}:
            return
        alt, az, ha, floor = self._state(idx, times)
        for k, (j, t, r, a, z, h, f) in enumerate(zip(idx.tolist(), times.tolist(), rising.tolist(),
                                                      alt.tolist(), az.tolist(), ha.tolist(), floor.tolist(),
                                                      strict=True)):
            kind = up_kind if r else down_kind
            if kind not in wanted:
                continue
            self.records.append(Event(
                time_utc=_utc(t), kind=kind, target=self.names[j], altitude_deg=a, azimuth_deg=z,
                hour_angle_hours=h, threshold_deg=f if threshold is None else float(threshold),
                sun_separation_deg=self._sep(k)))


class _SunPath:
    """The Sun's apparent direction across a piece of window, sampled hourly and interpolated (the
    Sun moves 1 deg a day, so linear interpolation is good to a few arcseconds), for the distance
    of each target event from the Sun."""

    def __init__(self, start_unix, end_unix):
        self.grid = np.arange(start_unix - 3600.0, end_unix + 7200.0, 3600.0)
        ra, dec, _ = sun_apparent_radec(instants_from_unix(self.grid))
        self.xyz = _unit(ra, dec)

    def separation_deg(self, unix_seconds, ra_hours, dec_deg):
        t = np.asarray(unix_seconds, dtype=float)
        sun = [np.interp(t, self.grid, c) for c in self.xyz]
        target = _unit(ra_hours, dec_deg)
        dot = sum(a * b for a, b in zip(sun, target, strict=True))
        norm = np.sqrt(sum(a * a for a in sun))
        return np.degrees(np.arccos(np.clip(dot / norm, -1.0, 1.0)))


def _unit(ra_hours, dec_deg):
    a = np.asarray(ra_hours, dtype=float) * (np.pi / 12.0)
    d = np.radians(np.asarray(dec_deg, dtype=float))
    return np.cos(a) * np.cos(d), np.sin(a) * np.cos(d), np.sin(d)


def _fixed_usable(config: Config, target: Target) -> bool:
    alt_geo, az = hadec_to_altaz(target.ha_hours, target.dec_deg, config.site.latitude_deg)
    limit = _limit_for(config, [target], observer_for(config))
    return bool(alt_geo >= limit.geometric_deg(np.atleast_1d(az), np.array([0]))[0])


def _classify(up_at_start: bool, crossing_count: int) -> str:
    if crossing_count:
        return "normal"
    return "circumpolar" if up_at_start else "never-rises"


# ---------------------------------------------------------------------------------------------
# Sun and Moon


def _night_intervals(observer, start_unix, end_unix, dut1, records, wanted):
    """Sun events into ``records``; returns the astronomical-night intervals as an (K, 2) array."""
    col, times, rising = ev.find_sun_events(observer, start_unix, end_unix, dut1_seconds=dut1)
    if times.size:
        pos = observe_sun(instants_from_unix(times, dut1_seconds=dut1), observer)
        for c, t, r, alt, az in zip(col.tolist(), times.tolist(), rising.tolist(),
                                    pos.alt_geometric_deg.tolist(), pos.az_deg.tolist(), strict=True):
            kind = _SUN_KINDS[(c, bool(r))]
            if kind in wanted:
                records.append(Event(time_utc=_utc(t), kind=kind, target=None, altitude_deg=alt,
                                     azimuth_deg=az, threshold_deg=ev.SUN_THRESHOLDS_DEG[c]))
    sun_at_start = ev.sun_altitude_deg(start_unix, observer, dut1_seconds=dut1)
    dark_at_start = bool(sun_at_start < _ASTRONOMICAL_NIGHT_DEG)
    night = col == ev.SUN_THRESHOLDS_DEG.index(_ASTRONOMICAL_NIGHT_DEG)
    # Night is "up" when the Sun is down: a falling Sun crossing starts it.
    return ev.intervals_from_crossings(dark_at_start, times[night], ~rising[night], start_unix, end_unix)


def _moon_events(observer, start_unix, end_unix, dut1, wanted):
    times, rising = ev.find_moon_events(observer, start_unix, end_unix, dut1_seconds=dut1)
    out = []
    if times.size == 0:
        return out
    instants = instants_from_unix(times, dut1_seconds=dut1)
    pos = observe_moon(instants, observer)
    fraction = moon_illuminated_fraction(instants)
    for t, r, alt, az, k in zip(times.tolist(), rising.tolist(), pos.alt_geometric_deg.tolist(),
                                pos.az_deg.tolist(), fraction.tolist(), strict=True):
        kind = EventKind.MOONRISE if r else EventKind.MOONSET
        if kind in wanted:
            out.append(Event(time_utc=_utc(t), kind=kind, target=None, altitude_deg=alt, azimuth_deg=az,
                             moon_illuminated_fraction=k))
    return out


# ---------------------------------------------------------------------------------------------
# helpers


_EPOCH = datetime(1970, 1, 1, tzinfo=UTC)


def _utc(unix_seconds: float) -> datetime:
    """Aware UTC datetime, rounded to the microsecond (a leap second maps onto the next second)."""
    return _EPOCH + timedelta(microseconds=round(unix_seconds * 1e6))


def _as_datetimes(intervals) -> tuple[tuple[datetime, datetime], ...]:
    return tuple((_utc(a), _utc(b)) for a, b in np.asarray(intervals).reshape(-1, 2).tolist())


def _azimuth(az_deg: float) -> float:
    """Rounded to 0.001 deg and kept in [0, 360) (359.9999 would otherwise print as 360.0)."""
    value = round(float(az_deg), 3)
    return 0.0 if value >= 360.0 else value


def _round(value, digits):
    return None if value is None else round(float(value), digits)
