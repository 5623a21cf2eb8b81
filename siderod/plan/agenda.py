"""The agenda: every event of a time window for the configured site and targets, as arrays.

This is the bridge from the array-level event engine (:mod:`siderod.astro.events`) to the events
the planner, the view and the command line use. The events stay columns
(:class:`~siderod.plan.table.EventTable`): a catalogue of 1e5 targets has ~800,000 events a day,
and making a Python record of each costs more than finding them. Records are made at the edge,
for the rows that are printed or scheduled (``Agenda.events`` makes them all, for small agendas).
It is pure: the window comes in as arguments, nothing reads the clock, files or the environment.

Conventions, said once:

* Windows are half-open, ``[start, end)``: an event within 1 ms of the start belongs to the window,
  one within 1 ms of the end to the next, so back-to-back windows list every event exactly once.
* A target's lowest usable altitude at azimuth A is ``max(horizon profile at A, its own
  min_altitude or the global [events] min_altitude)``. With ``[events] refraction = true`` that is
  compared with the refracted altitude, otherwise with the geometric one (never both).
* Sun and Moon events use the standard altitudes of the trade (astro-references §4i) on geometric
  positions whatever the refraction switch says: -0.8333 deg for sunrise/sunset (horizon refraction
  and semidiameter included), -6/-12/-18 deg for the twilights, the Moon's upper limb at -34'.
* Fixed hour-angle (``fixed-pointing``) pointings have a constant altitude: they get no events, only a
  window state ("up-whole-window" when usable, else "down-whole-window") and their dark intervals.
* The window state names what happened in this window only. The trade's "circumpolar" and
  "never rises" depend on latitude, declination and usable altitude alone; they are in
  ``sky_classes`` (see :mod:`siderod.plan.skyclass`) and nowhere else.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Collection, Mapping
from dataclasses import dataclass, field
from datetime import UTC, datetime
from functools import cached_property
from operator import attrgetter

import numpy as np

from siderod.astro import events as ev
from siderod.astro.beams import BEAM_CENTRE, BEAM_ENTER, BEAM_LEAVE, find_beam_events
from siderod.astro.ephemeris import geocentric_site_rho
from siderod.astro.places import Observer, hadec_to_altaz
from siderod.astro.sidereal import FastSidereal
from siderod.astro.sunmoon import moon_illuminated_fraction, observe_moon, observe_sun, sun_apparent_radec
from siderod.astro.timescales import instants_from_unix
from siderod.common.model import (
    BEAM_EVENT_KINDS,
    SUN_SOURCE,
    Config,
    Event,
    EventKind,
    Frame,
    MountKind,
    Target,
)
from siderod.plan.moving import ephemeris_for, is_moving, moving_places
from siderod.plan.positions import altitude_limit, observer_for, target_stars
from siderod.plan.skyclass import SKY_CLASSES, sky_class_codes
from siderod.plan.table import KIND_CODES, EventTable, utc_from_unix

__all__ = [
    "Agenda",
    "CLASSES",
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


def _count_not_stars(frames: list[Frame]) -> int:
    """How many of ``frames`` are not fixed places on the sky: fixed pointings and moving bodies
    (:func:`siderod.plan.moving.is_moving`). ``list.count`` compares by identity first, in C."""
    return frames.count(Frame.HADEC) + frames.count(Frame.BODY) + frames.count(Frame.ORBIT)


@dataclass(frozen=True, eq=False)
class Agenda:
    """The events of one window, sorted by time, plus per-target summaries, kept as arrays.

    The events stay columns (:class:`~siderod.plan.table.EventTable`) until an edge prints or
    schedules them; ``events``, ``classification`` and ``dark_intervals`` make records and mappings
    on first use, for callers that want them.

    Attributes:
        start_utc, end_utc: the window, aware UTC datetimes (half-open).
        table: every event, sorted by time (then kind, then target name).
        target_names: every chosen target, in configuration order (fixed pointings included).
        class_codes: per target in ``target_names``, an index into :data:`CLASSES`.
        dark_target, dark_begin_unix, dark_end_unix: the dark intervals (usable while the Sun is
            below -18 deg) as flat arrays, sorted by target then time; ``dark_target`` indexes
            ``target_names``.
    """

    start_utc: datetime
    end_utc: datetime
    table: EventTable
    target_names: tuple[str, ...] = ()
    class_codes: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=np.int8))
    dark_target: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=np.int64))
    dark_begin_unix: np.ndarray = field(default_factory=lambda: np.zeros(0))
    dark_end_unix: np.ndarray = field(default_factory=lambda: np.zeros(0))

    @cached_property
    def events(self) -> tuple[Event, ...]:
        """Every event as an ``Event`` record, sorted like ``table``."""
        return self.table.records()

    sky_codes: tuple[int, ...] = ()  # per target: index into skyclass.SKY_CLASSES, -1: none

    @cached_property
    def classification(self) -> Mapping[str, str]:
        """Target name -> "up-whole-window" (usable all window), "down-whole-window" (never usable
        in the window) or "normal"."""
        return dict(zip(self.target_names, (CLASSES[c] for c in self.class_codes.tolist()), strict=True))

    @cached_property
    def sky_classes(self) -> Mapping[str, str]:
        """Target name -> "circumpolar", "rises-and-sets" or "never-rises" (the trade's fixed
        meaning: latitude, declination, usable altitude), for targets with a fixed place on the sky."""
        if not self.sky_codes:  # an agenda made without them
            return {}
        pairs = zip(self.target_names, self.sky_codes, strict=True)
        return {name: SKY_CLASSES[c] for name, c in pairs if c >= 0}

    @cached_property
    def dark_intervals(self) -> Mapping[str, tuple[tuple[datetime, datetime], ...]]:
        """Target name -> ((begin_utc, end_utc), ...)."""
        spans: dict[str, list[tuple[datetime, datetime]]] = {name: [] for name in self.target_names}
        for j, a, b in zip(self.dark_target.tolist(), self.dark_begin_unix.tolist(),
                           self.dark_end_unix.tolist(), strict=True):
            spans[self.target_names[j]].append((_utc(a), _utc(b)))
        return {name: tuple(v) for name, v in spans.items()}


#: Whole-window classes, by code (``Agenda.class_codes``).
CLASSES = ("normal", "up-whole-window", "down-whole-window")
_NORMAL, _UP_ALL_WINDOW, _DOWN_ALL_WINDOW = range(3)


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
        Agenda: the sorted events (as arrays) and the per-target summaries.

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

    # Fixed places and moving bodies go in separate chunks: a chunk shares one track, and only a
    # moving body's track carries parallax and needs the extra refinement steps.
    # One pass over the frames (not a call per target): 1e5 targets cost milliseconds here.
    frames = list(map(attrgetter("frame"), chosen))
    in_order = not _count_not_stars(frames)  # the common case: stars only, already in configured order
    if in_order:
        star_at, moving_at, fixed_at = list(range(len(chosen))), [], []
    else:
        star_at = [i for i, f in enumerate(frames)
                   if f is not Frame.HADEC and f is not Frame.BODY and f is not Frame.ORBIT]
        moving_at = [i for i, f in enumerate(frames) if f is Frame.BODY or f is Frame.ORBIT]
        fixed_at = [i for i, f in enumerate(frames) if f is Frame.HADEC]
    stars = chosen if in_order else [chosen[i] for i in star_at]
    moving = [chosen[i] for i in moving_at]
    sky = stars + moving
    fixed = [chosen[i] for i in fixed_at]
    sky_names = list(map(attrgetter("name"), sky))
    parts: list[EventTable] = []
    night = _night_intervals(observer, start_unix, end_unix, dut1, parts, wanted, sky_names)
    if wanted & {EventKind.MOONRISE, EventKind.MOONSET}:
        parts.append(_moon_events(observer, start_unix, end_unix, dut1, wanted, sky_names))

    # Sky targets come first in these arrays (index j), fixed pointings after them.
    class_codes = np.zeros(len(sky) + len(fixed), dtype=np.int8)
    dark_parts: list[tuple[np.ndarray, np.ndarray, np.ndarray]] = []
    total = len(sky)
    starts = list(range(0, len(stars), TARGET_CHUNK)) + list(range(len(stars), total, TARGET_CHUNK))
    for first in starts:
        group = sky[first:min(first + TARGET_CHUNK, len(stars) if first < len(stars) else total)]
        up_at_start, cross_idx, cross_t, cross_rising = _target_pieces(
            config, observer, group, first, start_unix, end_unix, wanted, parts, sky_names)
        count = np.bincount(cross_idx, minlength=len(group))
        class_codes[first:first + len(group)] = np.where(
            count > 0, _NORMAL, np.where(up_at_start, _UP_ALL_WINDOW, _DOWN_ALL_WINDOW))
        dark_parts.append(_dark_spans(up_at_start, cross_idx, cross_t, cross_rising, start_unix, end_unix,
                                      night, offset=first))
        if progress is not None:
            progress(first + len(group), total)
    for k, target in enumerate(fixed):
        usable = _fixed_usable(config, target)
        class_codes[len(sky) + k] = _UP_ALL_WINDOW if usable else _DOWN_ALL_WINDOW
        if usable and len(night):
            dark_parts.append((np.full(len(night), len(sky) + k), night[:, 0].copy(), night[:, 1].copy()))

    # Report targets in the order they were configured (sky and fixed pointings interleaved):
    # row j of the arrays above is target remap[j] of ``chosen``.
    order_names = sky_names if in_order else list(map(attrgetter("name"), chosen))
    remap = np.arange(len(chosen)) if in_order else np.array(star_at + moving_at + fixed_at, dtype=np.int64)
    codes = np.empty_like(class_codes)
    codes[remap] = class_codes
    if dark_parts:
        dt = remap[np.concatenate([p[0] for p in dark_parts]).astype(np.int64)]
        db = np.concatenate([p[1] for p in dark_parts])
        de = np.concatenate([p[2] for p in dark_parts])
        order = np.lexsort((db, dt))
        dt, db, de = dt[order], db[order], de[order]
    else:
        dt, db, de = np.zeros(0, dtype=np.int64), np.zeros(0), np.zeros(0)
    # Drift scans: each fixed pointing with a beam gets its sources' passages through the beam. The
    # table's names go on past the sky targets: the pointings, then sources not chosen and the Sun.
    names = sky_names + [t.name for t in fixed]
    beam_kinds = wanted & BEAM_EVENT_KINDS
    for k, pointing in enumerate(fixed):
        if pointing.beam_ha_deg is not None and pointing.beam_sources and beam_kinds:
            parts.append(_beam_events(config, observer, pointing, len(sky) + k, names, start_unix, end_unix,
                                      beam_kinds))
    table = EventTable.concat_sorted(parts, names)
    parts.clear()
    return Agenda(start_utc=_utc(start_unix), end_utc=_utc(end_unix), table=table,
                  target_names=tuple(order_names), class_codes=codes, dark_target=dt, dark_begin_unix=db,
                  dark_end_unix=de, sky_codes=_sky_codes(config, chosen, frames))


#: The name beam events give the Sun as a source.
SUN_NAME = "Sun"
_BEAM_KIND_CODES = {BEAM_ENTER: EventKind.BEAM_ENTER, BEAM_CENTRE: EventKind.BEAM_CENTRE,
                    BEAM_LEAVE: EventKind.BEAM_LEAVE}


def _beam_events(config: Config, observer, pointing: Target, pointing_index: int, names: list[str],
                 start_unix: float, end_unix: float, kinds) -> EventTable:
    """The passages of a pointing's sources through its beam (``names`` grows by sources it lacks).

    Sources with a fixed place, moving ones and the Sun each get one fitted track of apparent
    topocentric places of date (:func:`siderod.astro.beams.find_beam_events` works on it); the
    event's altitude, azimuth and hour angle are the source's at that instant.
    """
    by_name = {t.name: t for t in config.targets}
    stars = [by_name[n] for n in pointing.beam_sources
             if n in by_name and by_name[n].frame is not Frame.HADEC and not is_moving(by_name[n])]
    moving = [by_name[n] for n in pointing.beam_sources if n in by_name and is_moving(by_name[n])]
    groups: list[tuple[str, list[str]]] = []
    if stars:
        groups.append(("stars", [t.name for t in stars]))
    if moving:
        groups.append(("moving", [t.name for t in moving]))
    if SUN_SOURCE in pointing.beam_sources:
        groups.append(("sun", [SUN_NAME]))
    lat = config.site.latitude_deg
    lon = config.site.longitude_deg
    dut1 = config.time.dut1_seconds
    position = {name: i for i, name in enumerate(names)}
    half_ha = 0.5 * float(pointing.beam_ha_deg)
    half_dec = 0.5 * float(pointing.beam_dec_deg)
    out: list[EventTable] = []
    for piece_start, piece_end, last in _window_pieces(start_unix, end_unix, lon, dut1):
        for what, members in groups:
            if what == "stars":
                mid = float(instants_from_unix(0.5 * (piece_start + piece_end), dut1_seconds=dut1).jd_tt)
                track = ev.build_track(target_stars(stars, mid), piece_start, piece_end, dut1_seconds=dut1)
            elif what == "moving":
                track = _moving_track(config, observer, moving, piece_start, piece_end)
            else:
                track = _sun_track(observer, piece_start, piece_end, dut1)
            idx, times, code, offset = find_beam_events(
                track, last, lat, float(pointing.ha_hours), float(pointing.dec_deg), half_ha, piece_start,
                piece_end, half_width_dec_deg=None if half_dec == half_ha else half_dec)
            kind = np.array([KIND_CODES[_BEAM_KIND_CODES[int(c)]] for c in code.tolist()], dtype=np.int8)
            keep = np.isin(kind, [KIND_CODES[k] for k in kinds])
            idx, times, kind, offset = idx[keep], times[keep], kind[keep], offset[keep]
            if idx.size == 0:
                continue
            alt_geo, az, ha = ev.target_altaz(track, last, lat, times, idx)
            _, dec = track.radec_at(times, idx)
            for name in members:
                if name not in position:
                    position[name] = len(names)
                    names.append(name)
            source = np.array([position[n] for n in members], dtype=np.int32)[idx]
            out.append(EventTable.build(
                names, times, kind, target=pointing_index, altitude_deg=alt_geo, azimuth_deg=az,
                hour_angle_hours=ev.observed_hour_angle_hours(ha, dec, lat), beam_source=source,
                beam_offset_deg=offset))
    return EventTable.concat(out, names) if out else EventTable.empty(names)


def _sun_track(observer, start_unix, end_unix, dut1):
    """The Sun's apparent place as a fitted track (a radio source for a fixed pointing only)."""
    sample = ev.moving_sample_unix(start_unix, end_unix)
    ra, dec, distance_au = sun_apparent_radec(instants_from_unix(sample, dut1_seconds=dut1))
    xyz = np.array(_unit(ra, dec))[:, :, None]
    distance = np.asarray(distance_au)[:, None]
    return ev.track_from_apparent(sample, xyz, distance, geocentric_site_rho(observer))


def _sky_codes(config: Config, chosen, frames) -> tuple[int, ...]:
    # The trade's classes for targets with a fixed place on the sky (catalogue declination, no
    # refraction), against the target's own lowest usable altitude; -1 for fixed pointings and
    # moving bodies, which have no fixed class.
    if not chosen:
        return ()
    if _count_not_stars(frames):
        fixed_place = np.array([f is not Frame.HADEC and f is not Frame.BODY and f is not Frame.ORBIT
                                for f in frames], dtype=bool)
    else:
        fixed_place = np.ones(len(frames), dtype=bool)
    dec = np.array(list(map(attrgetter("dec_deg"), chosen)), dtype=float)
    dec[~fixed_place] = 0.0
    usable = np.array(list(map(attrgetter("min_altitude_deg"), chosen)), dtype=float)  # None: NaN
    usable[np.isnan(usable)] = config.events.min_altitude_deg
    codes = sky_class_codes(config.site.latitude_deg, dec, usable)
    return tuple(np.where(fixed_place, codes, -1).tolist())


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
        "beam_source": event.beam_source,
        "beam_offset_deg": _round(event.beam_offset_deg, 3),
    }


def _dark_spans(up_at_start, idx, t, rising, start_unix, end_unix, night, *, offset):
    """Usable-and-dark intervals of many targets at once: ``(target, begin, end)`` flat arrays.

    The same rule as :func:`siderod.astro.events.intervals_from_crossings` per target (a crossing
    that does not change the state is ignored; empty intervals are dropped), intersected with the
    night intervals, without a Python loop over targets.
    """
    up_at_start = np.asarray(up_at_start, dtype=bool)
    n = up_at_start.size
    if idx.size:
        first = np.ones(idx.size, dtype=bool)
        first[1:] = idx[1:] != idx[:-1]
        before = np.empty(idx.size, dtype=bool)
        before[first] = up_at_start[idx[first]]
        before[~first] = rising[:-1][~first[1:]]
        begins = rising & ~before
        ends = ~rising & before
        last = np.ones(idx.size, dtype=bool)
        last[:-1] = idx[1:] != idx[:-1]
        final_up = up_at_start.copy()
        final_up[idx[last]] = rising[last]
    else:
        begins = ends = np.zeros(0, dtype=bool)
        final_up = up_at_start
    every = np.arange(n)
    b_target = np.concatenate([every[up_at_start], idx[begins]])
    b_time = np.concatenate([np.full(int(up_at_start.sum()), float(start_unix)), t[begins]])
    e_target = np.concatenate([idx[ends], every[final_up]])
    e_time = np.concatenate([t[ends], np.full(int(final_up.sum()), float(end_unix))])
    bo = np.lexsort((b_time, b_target))
    eo = np.lexsort((e_time, e_target))
    target, begin, end = b_target[bo], b_time[bo], e_time[eo]
    keep = end > begin
    target, begin, end = target[keep], begin[keep], end[keep]
    out_t, out_b, out_e = [], [], []
    for lo, hi in np.asarray(night, dtype=float).reshape(-1, 2).tolist():
        b = np.maximum(begin, lo)
        e = np.minimum(end, hi)
        ok = e > b
        out_t.append(target[ok] + offset)
        out_b.append(b[ok])
        out_e.append(e[ok])
    if not out_t:
        return np.zeros(0, dtype=np.int64), np.zeros(0), np.zeros(0)
    return np.concatenate(out_t), np.concatenate(out_b), np.concatenate(out_e)


# ---------------------------------------------------------------------------------------------
# targets


def _choose_targets(all_targets: tuple[Target, ...], names: Collection[str] | None) -> list[Target]:
    if names is None:
        return list(all_targets)
    by_name = {t.name: t for t in all_targets}
    unknown = [n for n in names if n not in by_name]
    if unknown:
        import difflib

        close = difflib.get_close_matches(unknown[0], list(by_name), n=1, cutoff=0.6)
        hint = f' -- did you mean "{close[0]}"?' if close else ""
        shown = sorted(by_name)
        known = ", ".join(shown[:20]) + (f" and {len(shown) - 20} more" if len(shown) > 20 else "")
        raise ValueError(f"unknown target {', '.join(repr(n) for n in unknown)}{hint}; configured targets: "
                         f"{known or '(none configured)'}")
    wanted = set(names)
    return [t for t in all_targets if t.name in wanted]


def _limit_for(config: Config, targets: list[Target], observer: Observer) -> ev.AltitudeLimit:
    return altitude_limit(config, targets)  # the one definition, shared with `now` and the board


def _target_pieces(config, observer, group, offset, start_unix, end_unix, wanted, parts, names):
    """Events of one chunk of sky targets, over the whole window (cut into <= 48 h pieces).

    Appends event tables to ``parts`` (target indices shifted by ``offset`` into ``names``) and
    returns the per-target "usable at the start" flags and the usable-limit crossings as flat
    arrays ``(index, unix, rising)`` sorted by target then time, for classes and dark intervals.
    """
    limit = _limit_for(config, group, observer)
    lat = config.site.latitude_deg
    lon = config.site.longitude_deg
    dut1 = config.time.dut1_seconds
    mid_jd_tt = float(instants_from_unix(0.5 * (start_unix + end_unix), dut1_seconds=dut1).jd_tt)
    bodies = is_moving(group[0])
    stars = None if bodies else target_stars(group, mid_jd_tt)
    cross: list[tuple[np.ndarray, np.ndarray, np.ndarray]] = []
    up_at_start = None
    for piece_start, piece_end, last in _window_pieces(start_unix, end_unix, lon, dut1):
        if bodies:
            track = _moving_track(config, observer, group, piece_start, piece_end)
        else:
            track = ev.build_track(stars, piece_start, piece_end, dut1_seconds=dut1)
        if up_at_start is None:
            alt, az, _ = ev.target_altaz(track, last, lat, np.full(len(group), start_unix))
            up_at_start = alt >= limit.geometric_deg(az)
        maker = _EventMaker(track, last, lat, limit, names, parts, offset, _SunPath(piece_start, piece_end))
        _hour_angle_kinds(config, maker, track, last, lat, piece_start, piece_end, wanted, group)
        # Rise and set: always computed (classification and dark intervals need them).
        flat = np.flatnonzero(~limit.depends_on_azimuth())
        profiled = np.flatnonzero(limit.depends_on_azimuth())
        floor_geo = limit.to_geometric_deg(limit.min_alt_deg)
        found = []
        if flat.size:
            found.append(ev.find_altitude_events(track, last, lat, floor_geo[flat], piece_start, piece_end,
                                                 index=flat))
        if profiled.size:
            found.append(ev.find_limit_events(track, last, lat, limit, piece_start, piece_end,
                                              index=profiled))
        for idx, times, rising in found:
            cross.append((np.asarray(idx, dtype=np.int64), np.asarray(times, dtype=float),
                          np.asarray(rising, dtype=bool)))
            maker.crossings(idx, times, rising, EventKind.RISE, EventKind.SET, wanted, threshold=None)
        for threshold in config.events.altitudes_deg:
            if not wanted & {EventKind.ALTITUDE_UP, EventKind.ALTITUDE_DOWN}:
                break
            geo = float(limit.to_geometric_deg(threshold))
            idx, times, rising = ev.find_altitude_events(track, last, lat, geo, piece_start, piece_end)
            maker.crossings(idx, times, rising, EventKind.ALTITUDE_UP, EventKind.ALTITUDE_DOWN, wanted,
                            threshold=threshold)
    if up_at_start is None:
        up_at_start = np.zeros(len(group), dtype=bool)
    if cross:
        idx = np.concatenate([c[0] for c in cross])
        t = np.concatenate([c[1] for c in cross])
        rising = np.concatenate([c[2] for c in cross])
        order = np.lexsort((t, idx))
        return up_at_start, idx[order], t[order], rising[order]
    return up_at_start, np.zeros(0, dtype=np.int64), np.zeros(0), np.zeros(0, dtype=bool)


def _window_pieces(start_unix, end_unix, lon, dut1):
    """The window cut into pieces of at most ``CHUNK_HOURS``: ``(piece start, piece end, last)``,
    where ``last(unix)`` is the local apparent sidereal time in hours, from a fast table covering
    the piece and 10 minutes either side (events are refined a little past a piece's edges)."""
    piece_start = start_unix
    while piece_start < end_unix - ev.EDGE_TOLERANCE_SECONDS:
        piece_end = min(end_unix, piece_start + CHUNK_HOURS * 3600.0)
        sidereal = FastSidereal(piece_start - 600.0, piece_end + 600.0, dut1_seconds=dut1)

        def last(unix, _s=sidereal):
            return _s.last_hours(unix, lon)

        yield piece_start, piece_end, last
        piece_start = piece_end


def _moving_track(config, observer, group, start_unix, end_unix):
    """The track of planets, the Moon, comets and asteroids: exact places at a few instants, fitted."""
    sample = ev.moving_sample_unix(start_unix, end_unix)
    instants = instants_from_unix(sample[:, None], dut1_seconds=config.time.dut1_seconds)
    places = moving_places(ephemeris_for(config), group, instants)
    return ev.track_from_apparent(sample, places.unit_xyz, places.distance_au, geocentric_site_rho(observer))


def _hour_angle_kinds(config, maker, track, last, lat, start, end, wanted, group=()):
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
    # Each target's own marks (`hour_angles` in its [[target]]), besides the global ones.
    if EventKind.HOUR_ANGLE in wanted:
        own: dict[float, list[int]] = {}
        for j, target in enumerate(group):
            for h in target.hour_angles_hours:
                if h not in config.events.hour_angles_hours:
                    own.setdefault(h, []).append(j)
        for ha, members in sorted(own.items()):
            idx, times, _ = ev.find_hour_angle_events(track, last, ha, start, end, latitude_deg=lat,
                                                      index=np.array(members, dtype=np.intp))
            maker.marks(idx, times, EventKind.HOUR_ANGLE, ha, False)


class _EventMaker:
    """Turns the engine's arrays into event-table columns (one place, so every kind is filled alike)."""

    def __init__(self, track, last, lat, limit: ev.AltitudeLimit, names, parts, offset, sun=None):
        self.track, self.last, self.lat, self.limit = track, last, lat, limit
        self.names, self.parts, self.offset = names, parts, offset
        self.sun = sun
        self._unit_xyz = None  # (3, N) the targets' directions, made on first use

    def _state(self, idx, times):
        radec = self.track.radec_at(times, idx)
        alt_geo, az, ha = ev.target_altaz(self.track, self.last, self.lat, times, idx, radec=radec)
        ha = ev.observed_hour_angle_hours(ha, radec[1], self.lat)
        alt = self.limit.to_observed_deg(alt_geo)
        floor = self.limit.observed_deg(az, idx)
        self.sun_sep = None
        if self.sun is not None:
            if self.track.parallax_coeffs is None:
                # A star's apparent place moves < 1" in a day: its direction at mid-piece will do.
                if self._unit_xyz is None:
                    self._unit_xyz = np.array(_unit(*self.track.radec_at(self.track.mid_unix)))
                target_xyz = self._unit_xyz[:, idx]
            else:  # a moving body (the Moon moves 13 deg a day): its place at the event
                target_xyz = np.array(_unit(*radec))
            self.sun_sep = self.sun.separation_deg(times, target_xyz)
        return alt, az, ha, floor

    def _sep(self, keep):
        return None if self.sun_sep is None else self.sun_sep[keep]

    def marks(self, idx, times, kind, mark_hours, only_usable):
        if idx.size == 0:
            return
        alt, az, ha, floor = self._state(idx, times)
        if kind is EventKind.LOWER_CULMINATION:
            # On the +12 h side always: round-off put it at -12.00 h at some latitudes, +12.00 h at others.
            ha = np.where(ha < 0.0, ha + 24.0, ha)
        usable = alt >= floor  # usable at or above the limit, as in `now` and on the board
        wrapped_mark = mark_hours - 24.0 * math.floor((mark_hours + 12.0) / 24.0)
        is_culmination = kind in (EventKind.CULMINATION, EventKind.LOWER_CULMINATION)
        keep = usable if only_usable else slice(None)
        self.parts.append(EventTable.build(
            self.names, times[keep], KIND_CODES[kind], target=idx[keep] + self.offset,
            altitude_deg=alt[keep], azimuth_deg=az[keep], hour_angle_hours=ha[keep],
            mark_hours=None if is_culmination else wrapped_mark, usable=usable[keep],
            sun_separation_deg=self._sep(keep)))

    def crossings(self, idx, times, rising, up_kind, down_kind, wanted, *, threshold):
        if idx.size == 0 or not wanted & {up_kind, down_kind}:
            return
        rising = np.asarray(rising, dtype=bool)
        keep = np.ones(idx.size, dtype=bool)
        if up_kind not in wanted:
            keep &= ~rising
        if down_kind not in wanted:
            keep &= rising
        alt, az, ha, floor = self._state(idx[keep], times[keep])
        kind = np.where(rising[keep], KIND_CODES[up_kind], KIND_CODES[down_kind])
        self.parts.append(EventTable.build(
            self.names, times[keep], kind, target=idx[keep] + self.offset, altitude_deg=alt, azimuth_deg=az,
            hour_angle_hours=ha, threshold_deg=floor if threshold is None else float(threshold),
            sun_separation_deg=self._sep(slice(None))))


class _SunPath:
    """The Sun's apparent direction across a piece of window, for each target event's distance from
    the Sun (the Sun caution and ``[alerts] sun_separation_min``, which work in whole degrees).

    Its unit vector is fitted, component by component, by the polynomial through its place at a
    few Chebyshev nodes (3 plus one per day, as :func:`siderod.astro.events.build_track` does for
    stars); the Sun moves about 1 deg a day along a nearly great circle, so the fit is good to far
    better than an arcsecond and costs a few multiplications per event (the low-precision solar
    formula behind it is good to about 0.01 deg; tests/test_agenda.py checks the whole against astropy).
    """

    def __init__(self, start_unix, end_unix):
        lo, hi = float(start_unix) - 120.0, float(end_unix) + 120.0
        n = 3 + int(math.ceil((hi - lo) / 86400.0)) - 1
        nodes = np.cos((2 * np.arange(n) + 1) * np.pi / (2 * n))[::-1]
        nodes = nodes / nodes[-1]  # the end nodes on the span's ends
        self.mid_unix, self.half_seconds = 0.5 * (lo + hi), 0.5 * (hi - lo)
        sample = self.mid_unix + self.half_seconds * nodes
        ra, dec, _ = sun_apparent_radec(instants_from_unix(sample))
        # (n, 3): polynomial coefficients of x, y, z, highest power first.
        self.coeffs = np.linalg.solve(np.vander(nodes, n), np.array(_unit(ra, dec)).T)

    def separation_deg(self, unix_seconds, target_xyz):
        """Degrees between the Sun's centre and unit vectors ``target_xyz`` (3, M) at ``unix_seconds``."""
        tau = (np.asarray(unix_seconds, dtype=float) - self.mid_unix) * (1.0 / self.half_seconds)
        dot = None
        for axis in range(3):
            c = self.coeffs[:, axis]
            value = np.full(tau.shape, c[0])
            for k in range(1, c.size):
                value *= tau
                value += c[k]
            value *= target_xyz[axis]
            dot = value if dot is None else dot + value
        np.clip(dot, -1.0, 1.0, out=dot)
        return np.degrees(np.arccos(dot, out=dot), out=dot)


def _unit(ra_hours, dec_deg):
    a = np.asarray(ra_hours, dtype=float) * (np.pi / 12.0)
    d = np.radians(np.asarray(dec_deg, dtype=float))
    return np.cos(a) * np.cos(d), np.sin(a) * np.cos(d), np.sin(d)


def _fixed_usable(config: Config, target: Target) -> bool:
    alt_geo, az = hadec_to_altaz(target.ha_hours, target.dec_deg, config.site.latitude_deg)
    limit = _limit_for(config, [target], observer_for(config))
    return bool(alt_geo >= limit.geometric_deg(np.atleast_1d(az), np.array([0]))[0])


# ---------------------------------------------------------------------------------------------
# Sun and Moon


def _night_intervals(observer, start_unix, end_unix, dut1, parts, wanted, names):
    """Sun events into ``parts``; returns the astronomical-night intervals as an (K, 2) array."""
    col, times, rising = ev.find_sun_events(observer, start_unix, end_unix, dut1_seconds=dut1)
    if times.size:
        pos = observe_sun(instants_from_unix(times, dut1_seconds=dut1), observer)
        kinds = np.array([KIND_CODES[_SUN_KINDS[(c, bool(r))]] for c, r in zip(col.tolist(), rising.tolist(),
                                                                               strict=True)], dtype=np.int8)
        keep = np.isin(kinds, [KIND_CODES[k] for k in wanted])
        parts.append(EventTable.build(
            names, times[keep], kinds[keep], altitude_deg=pos.alt_geometric_deg[keep],
            azimuth_deg=pos.az_deg[keep],
            threshold_deg=np.asarray(ev.SUN_THRESHOLDS_DEG, dtype=float)[col[keep]]))
    sun_at_start = ev.sun_altitude_deg(start_unix, observer, dut1_seconds=dut1)
    dark_at_start = bool(sun_at_start < _ASTRONOMICAL_NIGHT_DEG)
    night = col == ev.SUN_THRESHOLDS_DEG.index(_ASTRONOMICAL_NIGHT_DEG)
    # Night is "up" when the Sun is down: a falling Sun crossing starts it.
    return ev.intervals_from_crossings(dark_at_start, times[night], ~rising[night], start_unix, end_unix)


def _moon_events(observer, start_unix, end_unix, dut1, wanted, names):
    times, rising = ev.find_moon_events(observer, start_unix, end_unix, dut1_seconds=dut1)
    if times.size == 0:
        return EventTable.empty(names)
    instants = instants_from_unix(times, dut1_seconds=dut1)
    pos = observe_moon(instants, observer)
    fraction = moon_illuminated_fraction(instants)
    rising = np.asarray(rising, dtype=bool)
    keep = np.ones(times.size, dtype=bool)
    if EventKind.MOONRISE not in wanted:
        keep &= ~rising
    if EventKind.MOONSET not in wanted:
        keep &= rising
    kinds = np.where(rising, KIND_CODES[EventKind.MOONRISE], KIND_CODES[EventKind.MOONSET])
    return EventTable.build(names, times[keep], kinds[keep], altitude_deg=pos.alt_geometric_deg[keep],
                            azimuth_deg=pos.az_deg[keep],
                            moon_illuminated_fraction=np.asarray(fraction)[keep])


# ---------------------------------------------------------------------------------------------
# helpers


_utc = utc_from_unix


def _azimuth(az_deg: float) -> float:
    """Rounded to 0.001 deg and kept in [0, 360) (359.9999 would otherwise print as 360.0)."""
    value = round(float(az_deg), 3)
    return 0.0 if value >= 360.0 else value


def _round(value, digits):
    # "+ 0.0" turns a rounded -0.0 into 0.0: JSON readers should never see a negative zero.
    return None if value is None else round(float(value), digits) + 0.0
