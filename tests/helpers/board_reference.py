"""The board's target table worked out one target at a time: the reference for the vectorised board.

This is how ``siderod.view.board`` built its table until it moved the per-target work onto arrays:
a dictionary of every target's events rebuilt from ``Event`` records, a bisection per target and
kind, a ``_Row`` record for every target and one sort of them all. It is kept here, unchanged in
what it computes, so that ``tests/view/test_board_rows.py`` can check the arrays against it on random
inputs and ``tests/benchmarks/bench_view.py`` can measure both in one run.
"""

from __future__ import annotations

import bisect
import math
from datetime import datetime

from siderod.astro.constants import SIDEREAL_PER_SOLAR
from siderod.common.model import Event, EventKind, MountKind
from siderod.view import board
from siderod.view.board import (
    BEAM_SCAN_EVENTS,
    PAST_LIMIT_SHOWN_HOURS,
    SUN_CAUTION_SEPARATION_DEG,
    SUN_CAUTION_SUN_ABOVE_DEG,
    BoardInputs,
    format_countdown,
)

__all__ = ["reference_beam_state", "reference_next_sky_event", "reference_target_rows", "TargetEvents",
           "event_index"]


class TargetEvents:
    """One target's events, split by kind (None: every kind), with times as floats for bisecting."""

    __slots__ = ("by_kind",)

    def __init__(self) -> None:
        self.by_kind: dict[EventKind | None, tuple[list[float], list[Event]]] = {}

    def add(self, event: Event) -> None:
        t = event.time_utc.timestamp()
        for key in (None, event.kind):
            times, items = self.by_kind.setdefault(key, ([], []))
            times.append(t)
            items.append(event)


def event_index(events: tuple[Event, ...]) -> dict[str, TargetEvents]:
    """Every target's events, rebuilt from the records (the old board memoised this per tuple)."""
    index: dict[str, TargetEvents] = {}
    for event in sorted(events, key=lambda e: e.time_utc):
        if event.target is not None:
            index.setdefault(event.target, TargetEvents()).add(event)
    return index


def reference_target_rows(inputs: BoardInputs, index: dict[str, TargetEvents] | None = None) -> list:
    """Every target's ``board._Row``, in the order the table shows them."""
    sky = inputs.sky
    if sky is None:
        return []
    events = tuple(inputs.events)
    now_utc = inputs.now_utc
    now_unix = now_utc.timestamp()
    index = event_index(events) if index is None else index
    ha = [float(x) for x in sky.ha_hours]
    alt = [float(x) for x in sky.alt_deg]
    min_alt = [float(x) for x in sky.min_alt_deg]
    sun_sep = [float(x) for x in sky.sun_separation_deg]
    sun_up_enough = float(sky.sun_alt_deg) > SUN_CAUTION_SUN_ABOVE_DEG
    snapshot = inputs.snapshot
    muted_map = set() if snapshot is None else {
        name for name, until in snapshot.muted.items() if until is None or until > now_utc}
    mount = inputs.config.mount
    gem = mount.kind is MountKind.GERMAN_EQUATORIAL
    flip_hours, limit_hours = mount.flip_after_minutes / 60.0, mount.limit_after_minutes / 60.0
    elapsed_sidereal_hours = 0.0
    if inputs.sky_utc is not None:
        elapsed_sidereal_hours = (now_utc - inputs.sky_utc).total_seconds() / 3600.0 * SIDEREAL_PER_SOLAR
    have_agenda = bool(index)
    keyed = []
    for i, name in enumerate(sky.names):
        ha_now = (ha[i] + elapsed_sidereal_hours + 12.0) % 24.0 - 12.0
        up = alt[i] >= min_alt[i]
        target_events = index.get(name)
        next_event = _first_after(target_events, None, now_unix)
        culm = _first_after(target_events, EventKind.CULMINATION, now_unix)
        culm_seconds, culm_usable = math.inf, True
        fixed = sky.frames[i] == "fixed-pointing"
        if culm is not None:
            culm_seconds = culm.time_utc.timestamp() - now_unix
            culm_usable = culm.usable is not False
        elif not fixed:
            culm_seconds = ((-ha_now) % 24.0) / SIDEREAL_PER_SOLAR * 3600.0
        flip_text = limit_text = ""
        flip_style = limit_style = "siderod.countdown"
        urgent = False
        flips_apply = gem and not fixed and (not have_agenda or up
                                             or _has_kind(target_events, EventKind.TRACKING_LIMIT))
        if flips_apply:
            flip = _first_after(target_events, EventKind.FLIP_DUE, now_unix)
            limit = _first_after(target_events, EventKind.TRACKING_LIMIT, now_unix)
            flip_seconds = (flip.time_utc.timestamp() - now_unix if flip is not None
                            else ((flip_hours - ha_now) % 24.0) / SIDEREAL_PER_SOLAR * 3600.0)
            limit_seconds = (limit.time_utc.timestamp() - now_unix if limit is not None
                             else ((limit_hours - ha_now) % 24.0) / SIDEREAL_PER_SOLAR * 3600.0)
            flip_text = format_countdown(flip_seconds)
            limit_text = format_countdown(limit_seconds)
            if flip_hours <= ha_now < limit_hours and up:
                flip_text, flip_style, urgent = "DUE", "siderod.flip.due", True
            elif limit_hours <= ha_now < limit_hours + PAST_LIMIT_SHOWN_HOURS and up:
                limit_text, limit_style, urgent = "PAST", "siderod.flip.due", True
            if not up:
                flip_style = limit_style = "siderod.dim"
        muted = name in muted_map
        next_seconds = next_event.time_utc.timestamp() - now_unix if next_event is not None else math.inf
        row = board._Row(
            name=name, ha_hours=ha_now, dec_deg=float(sky.dec_deg[i]), alt_deg=alt[i],
            az_deg=float(sky.az_deg[i]), airmass=float(sky.airmass[i]), rising=bool(sky.rising[i]),
            fixed=fixed, up=up, muted=muted,
            near_sun=sun_up_enough and sun_sep[i] < SUN_CAUTION_SEPARATION_DEG,
            culm_seconds=culm_seconds, culm_usable=culm_usable,
            flip_text=flip_text, flip_style=flip_style, limit_text=limit_text, limit_style=limit_style,
            next_event=next_event,
        )
        # What needs attention next: a due or overdue flip, then the soonest event; muted last.
        keyed.append(((muted, not urgent, next_seconds, name), row))
    keyed.sort(key=lambda pair: pair[0])
    return [row for _, row in keyed]


def reference_beam_state(target_events: TargetEvents | None,
                         now_unix: float) -> tuple[list[Event], Event | None]:
    """(the leave events of the sources in the beam now, the next entry) from a pointing's events."""
    if target_events is None or None not in target_events.by_kind:
        return [], None
    times, items = target_events.by_kind[None]
    seen: set[str | None] = set()
    inside: list[Event] = []
    coming = None
    start = bisect.bisect_left(times, now_unix)
    for event in items[start:start + BEAM_SCAN_EVENTS]:
        source = event.beam_source
        if source in seen:
            continue
        seen.add(source)
        if event.kind is EventKind.BEAM_ENTER:
            coming = coming or event
        elif event.kind is EventKind.BEAM_LEAVE:
            inside.append(event)
        elif event.kind is EventKind.BEAM_CENTRE:
            leave = next((e for e in items[start:start + BEAM_SCAN_EVENTS]
                          if e.beam_source == source and e.kind is EventKind.BEAM_LEAVE
                          and e.time_utc > event.time_utc), event)
            inside.append(leave)
    inside.sort(key=lambda e: e.time_utc)
    return inside, coming


def reference_next_sky_event(events: tuple[Event, ...], now_utc: datetime) -> Event | None:
    """The first Sun, Moon or twilight event at or after ``now_utc`` (``events`` sorted by time)."""
    for event in events:
        if event.target is None and event.time_utc >= now_utc:
            return event
    return None


def _first_after(events: TargetEvents | None, kind: EventKind | None, now_unix: float) -> Event | None:
    if events is None:
        return None
    found = events.by_kind.get(kind)
    if found is None:
        return None
    times, items = found
    i = bisect.bisect_left(times, now_unix)
    return items[i] if i < len(items) else None


def _has_kind(events: TargetEvents | None, kind: EventKind) -> bool:
    return events is not None and kind in events.by_kind
