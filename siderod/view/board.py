"""The sky board: one frame of the live view as a pure function of its inputs and the terminal size.

``render_board(inputs, width, height)`` returns rich renderables and reads nothing else: no clock,
no terminal, no files (the time-zone database aside). Every line it makes is exactly one terminal
line, so the height budget is exact and a frame never wraps. Run ``python -m siderod.view.board``
for the demo frame, or ``python -m siderod.view.board --svg config/demo-view.svg`` to refresh the
README picture.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from datetime import UTC, date, datetime, timedelta
from typing import Any
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

import numpy as np
from rich.cells import cell_len, set_cell_size
from rich.console import Group
from rich.text import Text

from siderod.astro.constants import SIDEREAL_PER_SOLAR, UNIX_EPOCH_JD
from siderod.common.model import (
    ClockHealth,
    Config,
    Delivery,
    Event,
    EventKind,
    MountKind,
    PlannedAlert,
    ServiceSnapshot,
    Urgency,
)
from siderod.plan.table import KIND_CODES, EventTable
from siderod.service.clockhealth import format_clock_warning
from siderod.view.columns import ColumnSpec, choose_columns

__all__ = [
    "BoardInputs",
    "BoardFrame",
    "DEMO_INSTANT_UTC",
    "DIGIT_PIXELS",
    "SUN_CAUTION_SEPARATION_DEG",
    "compose_board",
    "render_board",
    "render_clock",
    "clock_height",
    "sidereal_hours_at",
    "format_countdown",
    "format_sidereal",
    "agenda_events",
    "inputs_from_config",
]

#: The demo instant used by the ``__main__`` demo and the README picture: the invented demo
#: night, 2026-12-14 at 22:30 UTC (22:30 GMT at the site).
DEMO_INSTANT_UTC = datetime(2026, 12, 14, 22, 30, 0, tzinfo=UTC)

#: A target closer than this to the Sun raises the solar caution (common practice: many
#: observatories refuse pointings within 15-30 deg of the Sun; 20 deg is the middle of that range).
SUN_CAUTION_SEPARATION_DEG = 20.0
#: The solar caution is raised only while the Sun is above this altitude (-18 deg: outside
#: astronomical night a target that close to the Sun is near or above the horizon with it).
SUN_CAUTION_SUN_ABOVE_DEG = -18.0
#: A delivery this many seconds behind its due time is shown as late (scheduler jitter is far
#: below a second; more than a few seconds means the alert waited: a suspend, a busy machine).
LATE_SHOWN_SECONDS = 5.0
#: Countdowns below this are drawn in the "soon" style.
SOON_SECONDS = 15 * 60.0
#: Rows the target table keeps even when alerts and warnings compete for a short terminal.
MIN_TABLE_ROWS = 3
#: Fixed pointings with a beam shown on the board, one line each (the rest: `siderod agenda`).
BEAM_LINES_SHOWN = 3
#: Events of a pointing read ahead per frame to find the sources in its beam and the next one.
BEAM_SCAN_EVENTS = 200
#: How long after the tracking limit a German-mount row keeps saying "past".
PAST_LIMIT_SHOWN_HOURS = 1.0

# Block digits of our own: 3 x 5 pixels, drawn 2 cells wide per pixel with half blocks, so a
# digit is 6 cells wide and 3 lines high.
DIGIT_PIXELS: Mapping[str, tuple[str, ...]] = {
    "0": ("###", "#.#", "#.#", "#.#", "###"),
    "1": ("##.", ".#.", ".#.", ".#.", "###"),
    "2": ("###", "..#", "###", "#..", "###"),
    "3": ("###", "..#", ".##", "..#", "###"),
    "4": ("#.#", "#.#", "###", "..#", "..#"),
    "5": ("###", "#..", "###", "..#", "###"),
    "6": ("###", "#..", "###", "#.#", "###"),
    "7": ("###", "..#", "..#", ".#.", ".#."),
    "8": ("###", "#.#", "###", "#.#", "###"),
    "9": ("###", "#.#", "###", "..#", "###"),
    ":": (".", "#", ".", "#", "."),
}
_BIG_WIDTH = 6 * 6 + 2 * 2 + 7  # HH:MM:SS: six digits, two colons, a cell between glyphs
_BIG_PANEL_MIN_WIDTH = 26  # the text panel beside the big digits


@dataclass(frozen=True, slots=True)
class BoardInputs:
    """Everything one frame shows. Built by the caller (``live.py``, ``watch``, the service).

    Attributes:
        now_utc: the instant the frame shows (aware).
        config: the configuration in use (site, targets, mount).
        sky: a ``siderod.plan.positions.SkyState`` computed at ``sky_utc`` (per-target arrays of
            shape (N,), plus Sun, Moon and sidereal scalars), or None before the first one.
        sky_utc: the instant ``sky`` was computed for; the clock is carried forward from it at
            the mean sidereal rate, which is exact to far below a millisecond over seconds.
        events: the agenda's events sorted by time (those before ``now_utc`` are skipped): its
            ``EventTable`` (what the live view passes: no record is made for an event not shown)
            or ``Event`` records. Keep passing the same object from frame to frame: the board
            indexes it once.
        snapshot: the running service's state, or None when the view is computed here.
        source: where the data comes from, in a few words, shown in the title line.
        local_alerts: alerts the service would plan (used when ``snapshot`` is None).
        clock_health: the system clock's state (used when ``snapshot`` is None).
        leap_known_good_until: last date the leap-second table is known good, or None.
        notices: extra warnings from the caller, e.g. "the service stopped answering".
        agenda_pending: True while the agenda is still being computed.
    """

    now_utc: datetime
    config: Config
    sky: Any | None
    sky_utc: datetime | None
    events: tuple[Event, ...] | EventTable = ()
    snapshot: ServiceSnapshot | None = None
    source: str = ""
    local_alerts: tuple[PlannedAlert, ...] = ()
    clock_health: ClockHealth | None = None
    leap_known_good_until: date | None = None
    notices: tuple[str, ...] = ()
    agenda_pending: bool = False


@dataclass(frozen=True, slots=True)
class BoardFrame:
    """A frame in three parts: the live view caches ``header`` and ``body`` and redraws ``clock``."""

    header: tuple[Text, ...]
    clock: tuple[Text, ...]
    body: tuple[Text, ...] = field(default=())

    def lines(self) -> tuple[Text, ...]:
        return self.header + self.clock + self.body


def render_board(inputs: BoardInputs, width: int, height: int | None = None) -> Group:
    """One whole frame.

    Args:
        inputs: what to show.
        width: terminal width in cells; no line is longer.
        height: terminal height in lines; the frame is no taller. None: show every target.

    Returns:
        A rich ``Group`` of single-line ``Text`` renderables.
    """
    return Group(*compose_board(inputs, width, height).lines())


def compose_board(inputs: BoardInputs, width: int, height: int | None = None) -> BoardFrame:
    """The frame in its three parts (see :class:`BoardFrame`); same arguments as :func:`render_board`."""
    header = (_render_title(inputs, width),)
    clock = render_clock(inputs, width)
    body_height = None if height is None else max(0, height - len(header) - len(clock))
    return BoardFrame(header, clock, _render_body(inputs, width, body_height))


def clock_height(width: int) -> int:
    """Lines the clock part takes at ``width`` (fixed per width, so cached parts stay put)."""
    if width >= _BIG_WIDTH + 2 + _BIG_PANEL_MIN_WIDTH:
        return 4
    if width >= _BIG_WIDTH:
        return 5
    return 3


def render_clock(inputs: BoardInputs, width: int) -> tuple[Text, ...]:
    """The clock part: big apparent LST, mean LST, UTC, site time and Julian date."""
    now_utc = inputs.now_utc
    last_hours, lmst_hours = sidereal_hours_at(inputs, now_utc)
    apparent = format_sidereal(last_hours)
    mean = format_sidereal(lmst_hours)
    utc_text = now_utc.astimezone(UTC).strftime("%Y-%m-%d %H:%M:%S")
    local = now_utc.astimezone(_zone(inputs.config.site.timezone))
    local_text = f"{local:%H:%M:%S} {local.tzname() or ''}".rstrip()
    jd_text = f"JD {now_utc.timestamp() / 86400.0 + UNIX_EPOCH_JD:.5f}"
    height = clock_height(width)
    if height == 3:
        return (
            _line(width, ("apparent LST ", "siderod.lst.label"), (apparent, "siderod.lst")),
            _line(width, ("mean LST     ", "siderod.lst.label"), (mean, "siderod.lst.mean")),
            _line(width, ("UTC ", "siderod.label"), (utc_text, "siderod.time")),
        )
    big = _big_digit_rows(apparent[:2] + ":" + apparent[3:5] + ":" + apparent[6:8])
    if height == 5:
        return (
            *(_line(width, (row, "siderod.lst")) for row in big),
            _line(width, ("apparent ", "siderod.lst.label"), (apparent, "siderod.lst"),
                  ("  mean ", "siderod.lst.label"), (mean, "siderod.lst.mean")),
            _line(width, ("UTC ", "siderod.label"), (utc_text, "siderod.time"),
                  ("  site ", "siderod.label"), (local_text, "siderod.time")),
        )
    under = f"apparent sidereal time   {jd_text}".center(_BIG_WIDTH)
    gap = "   "
    panel = (
        (("apparent ", "siderod.lst.label"), (apparent, "siderod.lst")),
        (("mean     ", "siderod.lst.label"), (mean, "siderod.lst.mean")),
        (("UTC  ", "siderod.label"), (utc_text, "siderod.time")),
        (("site ", "siderod.label"), (local_text, "siderod.time"), (f" {local:%a %d %b}", "siderod.dim")),
    )
    lefts = (*((row, "siderod.lst") for row in big), (under, "siderod.lst.label"))
    return tuple(_line(width, left, (gap, ""), *right) for left, right in zip(lefts, panel, strict=True))


def sidereal_hours_at(inputs: BoardInputs, when_utc: datetime) -> tuple[float, float]:
    """(apparent, mean) local sidereal time in hours [0, 24) at ``when_utc``.

    Carried forward from ``inputs.sky`` at the mean sidereal rate (the apparent rate differs by
    the nutation rate, about 1e-8 relative: nanoseconds over a frame). NaN without a sky.
    """
    sky = inputs.sky
    if sky is None or inputs.sky_utc is None:
        return math.nan, math.nan
    elapsed_hours = (when_utc - inputs.sky_utc).total_seconds() / 3600.0 * SIDEREAL_PER_SOLAR
    return (
        (float(sky.last_hours) + elapsed_hours) % 24.0,
        (float(sky.lmst_hours) + elapsed_hours) % 24.0,
    )


def format_sidereal(hours: float) -> str:
    """``"03h12m45.3s"``: truncated (not rounded) to 0.1 s, as a clock shows time already reached.

    >>> format_sidereal(3.2125833333)
    '03h12m45.2s'
    >>> format_sidereal(float("nan"))
    '--h--m--.-s'
    """
    if not math.isfinite(hours):
        return "--h--m--.-s"
    tenths = int(math.floor((hours % 24.0) * 36000.0 + 1e-6))  # 1e-6 tenth: float noise only
    tenths %= 24 * 36000
    h, rest = divmod(tenths, 36000)
    m, rest = divmod(rest, 600)
    s, t = divmod(rest, 10)
    return f"{h:02d}h{m:02d}m{s:02d}.{t:d}s"


def format_countdown(seconds: float) -> str:
    """A countdown in at most 6 cells, rounded up so that "0s" shows at the event itself.

    >>> [format_countdown(x) for x in (0.0, 0.2, 59.0, 754.2, 3600.0, 7325.0, 90061.0)]
    ['0s', '1s', '59s', '12m35s', '1h00m', '2h02m', '1d01h']
    >>> format_countdown(-125.0)
    '-2m05s'
    """
    if not math.isfinite(seconds):
        return ""
    sign = "-" if seconds < 0 else ""
    total = math.ceil(abs(seconds) - 1e-9) if seconds >= 0 else math.floor(abs(seconds) + 1e-9)
    if total < 60:
        return f"{sign}{total}s"
    if total < 3600:
        return f"{sign}{total // 60}m{total % 60:02d}s"
    if total < 86400:
        return f"{sign}{total // 3600}h{total % 3600 // 60:02d}m"
    return f"{sign}{total // 86400}d{total % 86400 // 3600:02d}h"


def inputs_from_config(
    config: Config,
    now_utc: datetime,
    *,
    agenda: Any | None = None,
    snapshot: ServiceSnapshot | None = None,
    source: str = "",
    clock_health: ClockHealth | None = None,
    leap_known_good_until: date | None = None,
    notices: tuple[str, ...] = (),
) -> BoardInputs:
    """Board inputs computed from a configuration at one instant (positions, agenda, local plan).

    Pure: it calls ``siderod.plan.positions.compute_sky`` and, when ``agenda`` is None,
    ``siderod.plan.agenda.compute_agenda`` from ``now_utc`` for the configured window. When there is
    no ``snapshot`` the alerts shown are those ``siderod.plan.planner.plan_alerts`` would plan.
    """
    from siderod.plan.positions import compute_sky

    if agenda is None:
        from siderod.plan.agenda import compute_agenda

        agenda = compute_agenda(config, now_utc)
    sky = compute_sky(config, now_utc.timestamp())
    local_alerts: tuple[PlannedAlert, ...] = ()
    if snapshot is None:
        from siderod.plan.planner import plan_alerts

        local_alerts = plan_alerts(agenda, config, muted={}, now_utc=now_utc)
    return BoardInputs(
        now_utc=now_utc,
        config=config,
        sky=sky,
        sky_utc=now_utc,
        events=agenda_events(agenda),
        snapshot=snapshot,
        source=source,
        local_alerts=local_alerts,
        clock_health=clock_health,
        leap_known_good_until=leap_known_good_until,
        notices=notices,
    )


def agenda_events(agenda: Any) -> tuple[Event, ...] | EventTable:
    """What :attr:`BoardInputs.events` takes from an agenda: its event table when it has one (no
    ``Event`` record is made for an event the board does not show), else its records."""
    table = getattr(agenda, "table", None)
    return table if isinstance(table, EventTable) else tuple(agenda.events)


# -- the title -------------------------------------------------------------------------------------


def _render_title(inputs: BoardInputs, width: int) -> Text:
    site = inputs.config.site
    left = [("siderod ", "siderod.title"), (site.name, "siderod.site"), ("  ", "")]
    coordinates = (f"{_format_lat(site.latitude_deg)} {_format_lon(site.longitude_deg)}", "siderod.site")
    if inputs.snapshot is not None:
        right = (inputs.source or "from the service", "siderod.source")
    else:
        right = (inputs.source or "computed here, no service", "siderod.source.local")
    left_len = sum(cell_len(t) for t, _ in left)
    if left_len + cell_len(coordinates[0]) + 2 + cell_len(right[0]) <= width:
        left.append(coordinates)  # the coordinates go first when the line is short of room
        left_len += cell_len(coordinates[0])
    room = width - left_len - 2
    right_text = right[0]
    if cell_len(right_text) > room:
        right_text = _fit(right_text, max(0, room))
    pad = max(1, width - left_len - cell_len(right_text))
    return _line(width, *left, (" " * pad, ""), (right_text, right[1]))


# -- the body --------------------------------------------------------------------------------------


def _render_body(inputs: BoardInputs, width: int, height: int | None) -> tuple[Text, ...]:
    now_utc = inputs.now_utc
    info = [_time_facts_line(inputs, width), _sky_line(inputs, width)]
    if inputs.snapshot is not None:  # the linked mount and the target in use (view/mountpanel.py)
        from siderod.view.mountpanel import mount_panel_lines

        info.extend(mount_panel_lines(inputs.snapshot.mount, width))
    info.extend(_beam_lines(inputs, width))
    warnings = _warning_lines(inputs, width)
    alert_lines, delivery_lines = _alert_lines(inputs, width), _delivery_lines(inputs, width)
    row_count = len(inputs.sky.names) if inputs.sky is not None else 0
    columns, name_width = choose_columns(width, german_equatorial=_is_gem(inputs.config))
    table_header = _table_header(columns, name_width, width)

    if height is None:
        shown_count = row_count
        shown_alerts, shown_deliveries = alert_lines[:5], delivery_lines[:3]
    else:
        fixed = len(info) + 1  # info lines and the table header
        warnings = warnings[: max(0, min(len(warnings), height - fixed - MIN_TABLE_ROWS - 2))]
        budget = height - fixed - len(warnings)
        shown_alerts, shown_deliveries = alert_lines[:1], delivery_lines[:1]
        extra_alerts, extra_deliveries = alert_lines[1:3], delivery_lines[1:2]
        spare = budget - 2 - max(row_count, MIN_TABLE_ROWS)
        while spare > 0 and (extra_alerts or extra_deliveries):
            if extra_alerts:
                shown_alerts.append(extra_alerts.pop(0))
            elif extra_deliveries:
                shown_deliveries.append(extra_deliveries.pop(0))
            spare -= 1
        row_budget = max(0, budget - len(shown_alerts) - len(shown_deliveries))
        shown_count = max(0, row_budget - 1) if row_budget < row_count else row_count
    lines = [*info, *warnings, table_header]
    for row in _target_rows(inputs, shown_count):  # records for the rows shown, not for every target
        lines.append(_table_row(row, columns, name_width, width, now_utc))
    if shown_count < row_count:
        more = row_count - shown_count
        lines.append(_line(width, (f"  ... {more} more target{'s' if more != 1 else ''} "
                                   "(a taller terminal shows more)", "siderod.dim")))
    lines.extend(shown_alerts)
    lines.extend(shown_deliveries)
    if height is not None:
        lines = lines[:height]
    return tuple(lines)


def _time_facts_line(inputs: BoardInputs, width: int) -> Text:
    snapshot = inputs.snapshot
    if snapshot is not None:
        dut1, dut1_source, health = snapshot.dut1_seconds, snapshot.dut1_source, snapshot.clock_health
    else:
        dut1, dut1_source = inputs.config.time.dut1_seconds, inputs.config.time.dut1_source
        health = inputs.clock_health
    if dut1_source.startswith("iers:"):  # a path to the IERS file: its name says enough
        dut1_source = "iers:" + dut1_source[5:].replace("\\", "/").rsplit("/", 1)[-1]
    fields: list[tuple[int, list[tuple[str, str]]]] = [
        (0, [("DUT1 ", "siderod.label"), (f"{dut1:+.3f} s", "siderod.value"),
             (f" via {dut1_source}", "siderod.dim")]),
    ]
    if health is not None:
        style = _HEALTH_STYLES.get(health.state, "siderod.dim")
        clock_parts = [("clock ", "siderod.label"), (health.state, style)]
        if health.estimated_error_seconds is not None and health.state == "synchronised":
            clock_parts.append((f" ±{_format_small_seconds(health.estimated_error_seconds)}", "siderod.dim"))
        fields.append((1, clock_parts))
    if inputs.leap_known_good_until is not None:
        fields.append((3, [("leap table to ", "siderod.label"),
                           (inputs.leap_known_good_until.isoformat(), "siderod.dim")]))
    fields.append((2, [("tz ", "siderod.label"), (inputs.config.site.timezone, "siderod.dim")]))
    return _fit_fields(width, fields)


def _sky_line(inputs: BoardInputs, width: int) -> Text:
    sky = inputs.sky
    fields: list[tuple[int, list[tuple[str, str]]]] = []
    if sky is not None:
        phase = str(sky.twilight)
        fields.append((0, [("Sun ", "siderod.sun"), (f"{float(sky.sun_alt_deg):+.1f}°", "siderod.value"),
                           (" " + _TWILIGHT_WORDS.get(phase, phase), f"siderod.twilight.{phase}")]))
        moon_pct = 100.0 * float(sky.moon_illuminated_fraction)
        fields.append((1, [("Moon ", "siderod.moon"), (f"{float(sky.moon_alt_deg):+.1f}°", "siderod.value"),
                           (f" {moon_pct:.0f}% lit", "siderod.dim")]))
    next_sky = _event_index(inputs.events).next_sky_event(inputs.now_utc.timestamp())
    if next_sky is not None:
        local = next_sky.time_utc.astimezone(_zone(inputs.config.site.timezone))
        fields.append((2, [("next ", "siderod.label"), (_SKY_WORDS.get(next_sky.kind, next_sky.kind.value),
                                                        "siderod.value"),
                           (f" {local:%H:%M}", "siderod.time"),
                           (" in " + format_countdown((next_sky.time_utc - inputs.now_utc).total_seconds()),
                            "siderod.countdown")]))
    elif inputs.agenda_pending:
        fields.append((2, [("working out tonight's events...", "siderod.dim")]))
    return _fit_fields(width, fields)


def _beam_lines(inputs: BoardInputs, width: int) -> list[Text]:
    """Per fixed pointing with a beam: the sources in the beam now and the next to enter."""
    pointings = _beam_pointings(inputs.config.targets)
    if not pointings:
        return []
    index = _event_index(inputs.events)
    now_unix = inputs.now_utc.timestamp()
    out = []
    for pointing in pointings[:BEAM_LINES_SHOWN]:
        inside, coming = _beam_state(index, pointing.name, now_unix)
        parts = [("◎ ", "siderod.label"), (f"{pointing.name}  ", "siderod.value")]
        if inside:
            first = inside[0]
            more = f" +{len(inside) - 1}" if len(inside) > 1 else ""
            parts += [("in beam ", "siderod.label"), (f"{first.beam_source}{more}", "siderod.value"),
                      (" leaves in " + format_countdown(first.time_utc.timestamp() - now_unix),
                       "siderod.countdown")]
        else:
            parts += [("beam empty", "siderod.dim")]
        if coming is not None:
            seconds = coming.time_utc.timestamp() - now_unix
            parts += [("  ·  next ", "siderod.label"), (f"{coming.beam_source}", "siderod.value"),
                      (" in " + format_countdown(seconds),
                       "siderod.countdown.soon" if seconds < SOON_SECONDS else "siderod.countdown")]
        out.append(_line(width, *parts))
    return out


_POINTINGS_CACHE: list[Any] = [None, []]  # (the targets tuple looked at last, its beam pointings)


def _beam_pointings(targets: Sequence[Any]) -> list[Any]:
    # Memoised on the identity of the targets tuple: it changes only when the configuration does.
    if _POINTINGS_CACHE[0] is not targets:
        _POINTINGS_CACHE[:] = [targets, [t for t in targets if t.beam_ha_deg is not None and t.beam_sources]]
    return _POINTINGS_CACHE[1]


def _beam_state(index: _EventIndex, pointing: str, now_unix: float) -> tuple[list[Event], Event | None]:
    """(the leave events of the sources in the beam now, the next entry) from a pointing's events.

    A source is in the beam when its first event after now is its centre or its leaving; only the
    next :data:`BEAM_SCAN_EVENTS` events are read, so a frame costs the same for any source list.
    """
    rows = index.rows_ahead(pointing, now_unix, BEAM_SCAN_EVENTS)
    if rows.size == 0:
        return [], None
    kinds = index.table.kind[rows].tolist()
    sources = index.table.beam_source[rows].tolist()
    times = index.time_unix[rows].tolist()
    seen: set[int] = set()
    inside: list[int] = []  # positions in ``rows``
    coming = None
    for j, (kind, source) in enumerate(zip(kinds, sources, strict=True)):
        if source in seen:
            continue
        seen.add(source)
        if kind == _BEAM_ENTER:
            coming = j if coming is None else coming
        elif kind == _BEAM_LEAVE:
            inside.append(j)
        elif kind == _BEAM_CENTRE:
            leave = next((m for m in range(len(kinds)) if sources[m] == source and kinds[m] == _BEAM_LEAVE
                          and times[m] > times[j]), j)
            inside.append(leave)
    inside.sort(key=times.__getitem__)
    return ([index.record(int(rows[j])) for j in inside],
            None if coming is None else index.record(int(rows[coming])))


def _warning_lines(inputs: BoardInputs, width: int) -> list[Text]:
    out: list[Text] = []
    sky = inputs.sky
    if sky is not None and len(sky.names) and float(sky.sun_alt_deg) > SUN_CAUTION_SUN_ABOVE_DEG:
        near = np.flatnonzero(np.asarray(sky.sun_separation_deg, dtype=float) < SUN_CAUTION_SEPARATION_DEG)
        if near.size:
            names = (", ".join(sky.names[i] for i in near[:3].tolist())
                     + (f" +{near.size - 3}" if near.size > 3 else ""))
            out.append(_line(width, ("CAUTION ", "siderod.danger"),
                             (f"{names} within {SUN_CAUTION_SEPARATION_DEG:g}° of the Sun: "
                              "never point unfiltered optics at or near the Sun", "siderod.warn")))
    out.extend(_elements_lines(inputs, width))
    snapshot = inputs.snapshot
    health = snapshot.clock_health if snapshot is not None else inputs.clock_health
    tolerance_seconds = inputs.config.time.clock_tolerance_seconds
    clock_warning = format_clock_warning(health, tolerance_seconds) if health is not None else None
    if clock_warning:
        out.append(_warn(width, clock_warning))
    if inputs.leap_known_good_until is not None and inputs.now_utc.date() > inputs.leap_known_good_until:
        out.append(_warn(width, f"leap-second table known good only to {inputs.leap_known_good_until}: "
                                "UTC after that is a guess; update siderod"))
    if snapshot is not None:
        for channel in snapshot.channels:
            if channel.healthy:
                continue
            why = f": {channel.last_error}" if channel.last_error else ""
            if channel.name.startswith("desktop"):
                out.append(_warn(width, f"desktop notifications failing{why} (alerts still reach the log)"))
            elif channel.name.startswith("push:"):
                # The error text is already masked by the push channel: no secret reaches the board.
                out.append(_warn(width, f"push destination {channel.name[5:]} failing{why} (retried "
                                        "within grace; other channels still deliver)"))
        if snapshot.ledger_error:
            out.append(_warn(width, snapshot.ledger_error))
        if snapshot.config_error:
            out.append(_warn(width, f"reload failed, last good configuration kept: {snapshot.config_error}"))
    for notice in inputs.notices:
        out.append(_warn(width, notice))
    return out


def _elements_lines(inputs: BoardInputs, width: int) -> list[Text]:
    """Comets and asteroids: estimated magnitude and the elements' epoch; old elements warned."""
    sky = inputs.sky
    epochs = getattr(sky, "elements_epoch_jd_tt", None) if sky is not None else None
    if epochs is None:
        return []
    out = []
    jd_now = inputs.now_utc.timestamp() / 86400.0 + 2440587.5
    for i in np.flatnonzero(np.isfinite(np.asarray(epochs, dtype=float))).tolist():
        name, epoch = sky.names[i], float(epochs[i])
        mag = float(sky.magnitude[i]) if sky.magnitude is not None else math.nan
        date = (datetime(2000, 1, 1, 12, tzinfo=UTC) + timedelta(days=epoch - 2451545.0)).strftime("%Y-%m-%d")
        parts = [(f"{name} ", "siderod.value")]
        if math.isfinite(mag):
            parts.append((f"mag {mag:.1f} ", "siderod.value"))
        parts.append((f"elements {date}", "siderod.dim"))
        age = abs(jd_now - epoch)
        if age > inputs.config.max_element_age_days:
            parts.append((f" {age:.0f} d old: fetch fresh elements", "siderod.warn"))
        out.append(_line(width, *parts))
    return out


def _warn(width: int, text: str) -> Text:
    return _line(width, ("warning ", "siderod.warn"), (text, "siderod.value"))


# -- alerts and deliveries -------------------------------------------------------------------------


def _alert_lines(inputs: BoardInputs, width: int) -> list[Text]:
    now_utc = inputs.now_utc
    if inputs.snapshot is not None:
        alerts, label = inputs.snapshot.next_alerts, "next alerts "
    else:
        alerts, label = inputs.local_alerts, "would alert "
    ahead = [a for a in alerts if a.due_utc >= now_utc]
    zone = _zone(inputs.config.site.timezone)
    out = []
    awaiting = inputs.snapshot.awaiting_ack if inputs.snapshot is not None else ()
    if awaiting:
        more = f" +{len(awaiting) - 3}" if len(awaiting) > 3 else ""
        names = ", ".join(_event_name(e) for e in awaiting[:3]) + more
        out.append(_line(width, ("REPEATING ", "siderod.alert.critical"), (names, "siderod.alert.critical"),
                         ("  press A to acknowledge", "siderod.label")))
    if not ahead:
        return out + [_line(width, (label, "siderod.label"), ("none planned", "siderod.dim"))]
    for i, alert in enumerate(ahead[:3]):
        style = {Urgency.CRITICAL: "siderod.alert.critical", Urgency.LOW: "siderod.alert.low"}.get(
            alert.urgency, "siderod.alert.normal")
        mark = "! " if alert.urgency is Urgency.CRITICAL else "  "
        countdown = format_countdown((alert.due_utc - now_utc).total_seconds())
        out.append(_line(width, (label if i == 0 else " " * len(label), "siderod.label"),
                         (_clock_on_day(alert.due_utc, now_utc, zone), "siderod.time"),
                         (f"in {countdown:<6} ", "siderod.countdown"), (mark, style), (alert.title, style)))
    return out


def _clock_on_day(when_utc: datetime, now_utc: datetime, zone: Any) -> str:
    """``"22:39 "`` today (site time); ``"Tue 00:05 "`` on another day, so tomorrow's alert is not
    read as today's."""
    local, today = when_utc.astimezone(zone), now_utc.astimezone(zone)
    return f"{local:%H:%M} " if local.date() == today.date() else f"{local:%a %H:%M} "


def _event_name(event: str) -> str:
    """``M42|flip-due|2026-12-14T22:03:08Z`` -> ``M42 flip-due``."""
    parts = event.rsplit("|", 2)
    return f"{parts[0]} {parts[1]}" if len(parts) == 3 else event


def _delivery_lines(inputs: BoardInputs, width: int) -> list[Text]:
    label = "last sent   "
    if inputs.snapshot is None:
        return [_line(width, (label, "siderod.label"), ("(the service keeps this list)", "siderod.dim"))]
    deliveries: Sequence[Delivery] = sorted(inputs.snapshot.recent_deliveries,
                                            key=lambda d: d.delivered_utc, reverse=True)
    if not deliveries:
        return [_line(width, (label, "siderod.label"), ("nothing yet", "siderod.dim"))]
    zone = _zone(inputs.config.site.timezone)
    now_utc = inputs.now_utc
    out = []
    for i, d in enumerate(deliveries[:2]):
        if not d.ok:
            state = (f"FAILED {d.error}".strip() + " ", "siderod.delivery.failed")
        elif d.late_seconds >= LATE_SHOWN_SECONDS:
            state = (f"late {format_countdown(d.late_seconds)} ", "siderod.delivery.late")
        else:
            state = ("on time ", "siderod.delivery.ok")
        out.append(_line(width, (label if i == 0 else " " * len(label), "siderod.label"),
                         (_clock_on_day(d.delivered_utc, now_utc, zone), "siderod.time"),
                         (f"{d.channel} ", "siderod.dim"), state, (d.title or d.key, "siderod.value")))
    return out


# -- the target table ------------------------------------------------------------------------------


@dataclass(frozen=True, slots=True)
class _Row:
    name: str
    ha_hours: float
    dec_deg: float
    alt_deg: float
    az_deg: float
    airmass: float
    rising: bool
    fixed: bool  # a fixed hour-angle pointing: neither rising nor setting
    up: bool
    muted: bool
    near_sun: bool
    culm_seconds: float
    culm_usable: bool
    flip_text: str
    flip_style: str
    limit_text: str
    limit_style: str
    next_event: Event | None


def _target_rows(inputs: BoardInputs, count: int | None = None) -> list[_Row]:
    """The first ``count`` rows of the target table (every row when None), in the order shown.

    What needs attention next comes first: a due or overdue flip, then the soonest event; muted
    targets last; ties by name. Everything per target is worked out on arrays; ``_Row`` records
    (and ``Event`` records) are made only for the rows returned, so a frame of 100,000 targets
    costs little more than one of 20.
    """
    state = _target_state(inputs)
    if state is None:
        return []
    return [_make_row(state, i) for i in _row_order(state, count).tolist()]


class _TargetState:
    """One frame's per-target arrays, each of shape (N,) in the sky's target order."""

    __slots__ = ("inputs", "index", "now_unix", "ha_now", "up", "fixed", "muted", "urgent", "flips_apply",
                 "next_row", "culm_row", "flip_row", "limit_row", "next_seconds", "rank")

    def __init__(self, **values: Any) -> None:
        for key, value in values.items():
            setattr(self, key, value)


def _target_state(inputs: BoardInputs) -> _TargetState | None:
    sky = inputs.sky
    if sky is None or not len(sky.names):
        return None
    now_utc = inputs.now_utc
    now_unix = now_utc.timestamp()
    index = _event_index(inputs.events)
    slots, fixed, rank, positions = index.for_targets(tuple(sky.names), tuple(sky.frames))
    elapsed_sidereal_hours = 0.0
    if inputs.sky_utc is not None:
        elapsed_sidereal_hours = (now_utc - inputs.sky_utc).total_seconds() / 3600.0 * SIDEREAL_PER_SOLAR
    # numpy's float remainder takes the divisor's sign, as Python's does: the same hour angles.
    ha_now = (np.asarray(sky.ha_hours, dtype=float) + elapsed_sidereal_hours + 12.0) % 24.0 - 12.0
    up = np.asarray(sky.alt_deg, dtype=float) >= np.asarray(sky.min_alt_deg, dtype=float)
    muted = np.zeros(fixed.size, dtype=bool)
    for name in _muted_targets(inputs.snapshot, now_utc):
        muted[positions.get(name, [])] = True
    mount = inputs.config.mount
    flip_hours, limit_hours = mount.flip_after_minutes / 60.0, mount.limit_after_minutes / 60.0
    # The flip states follow the hour angle, for targets the event engine gives flips for (or for
    # all while the agenda is still being worked out). A target up now gets them too when the
    # window is too short to hold its next flip.
    has_limit = index.has_kind(EventKind.TRACKING_LIMIT, slots)
    flips_apply = (~fixed & _is_gem(inputs.config)) & (up | has_limit | (not index.has_target_events))
    due = flips_apply & up & (flip_hours <= ha_now) & (ha_now < limit_hours)
    past = (flips_apply & up & ~due & (limit_hours <= ha_now)
            & (ha_now < limit_hours + PAST_LIMIT_SHOWN_HOURS))
    next_row = index.next_rows(None, slots, now_unix)
    return _TargetState(
        inputs=inputs, index=index, now_unix=now_unix, ha_now=ha_now, up=up, fixed=fixed, muted=muted,
        urgent=due | past, flips_apply=flips_apply, next_row=next_row,
        culm_row=index.next_rows(EventKind.CULMINATION, slots, now_unix),
        flip_row=index.next_rows(EventKind.FLIP_DUE, slots, now_unix),
        limit_row=index.next_rows(EventKind.TRACKING_LIMIT, slots, now_unix),
        next_seconds=np.where(next_row >= 0, index.time_unix[np.maximum(next_row, 0)] - now_unix, math.inf)
        if len(index.table) else np.full(next_row.size, math.inf),
        rank=rank,
    )


def _row_order(state: _TargetState, count: int | None) -> np.ndarray:
    """Indices of the first ``count`` targets by (muted, not urgent, seconds to next event, name).

    Only the targets that can be among the first ``count`` are sorted: those of the groups before
    the one the count ends in, and of that group those no later than its count-th soonest.
    """
    group = state.muted.astype(np.int8) * 2 + (~state.urgent).astype(np.int8)
    seconds, rank = state.next_seconds, state.rank
    n = group.size
    if count is not None and count <= 0:
        return np.zeros(0, dtype=np.int64)
    if count is not None and count < n:
        ends = np.cumsum(np.bincount(group, minlength=4))
        last = int(np.searchsorted(ends, count))  # the group the count ends in
        need = count - (int(ends[last - 1]) if last else 0)
        members = np.flatnonzero(group == last)
        cut = np.partition(seconds[members], need - 1)[need - 1]
        chosen = np.concatenate([np.flatnonzero(group < last), members[seconds[members] <= cut]])
        return chosen[np.lexsort((rank[chosen], seconds[chosen], group[chosen]))][:count]
    return np.lexsort((rank, seconds, group))


def _make_row(state: _TargetState, i: int) -> _Row:
    inputs, index, now_unix = state.inputs, state.index, state.now_unix
    sky = inputs.sky
    ha_now = float(state.ha_now[i])
    up, fixed, muted = bool(state.up[i]), bool(state.fixed[i]), bool(state.muted[i])
    culm_row = int(state.culm_row[i])
    culm_seconds, culm_usable = math.inf, True
    if culm_row >= 0:
        culm_seconds = float(index.time_unix[culm_row]) - now_unix
        culm_usable = int(index.table.usable[culm_row]) != 0
    elif not fixed:
        # Not in the agenda (still being worked out, or beyond a short window_hours): from the
        # hour angle, as the sky turns (sidereal rate).
        culm_seconds = ((-ha_now) % 24.0) / SIDEREAL_PER_SOLAR * 3600.0
    flip_text = limit_text = ""
    flip_style = limit_style = "siderod.countdown"
    if state.flips_apply[i]:
        mount = inputs.config.mount
        flip_hours, limit_hours = mount.flip_after_minutes / 60.0, mount.limit_after_minutes / 60.0
        flip_row, limit_row = int(state.flip_row[i]), int(state.limit_row[i])
        flip_seconds = (float(index.time_unix[flip_row]) - now_unix if flip_row >= 0
                        else ((flip_hours - ha_now) % 24.0) / SIDEREAL_PER_SOLAR * 3600.0)
        limit_seconds = (float(index.time_unix[limit_row]) - now_unix if limit_row >= 0
                         else ((limit_hours - ha_now) % 24.0) / SIDEREAL_PER_SOLAR * 3600.0)
        flip_text = format_countdown(flip_seconds)
        limit_text = format_countdown(limit_seconds)
        if flip_hours <= ha_now < limit_hours and up:
            flip_text, flip_style = "DUE", "siderod.flip.due"
        elif limit_hours <= ha_now < limit_hours + PAST_LIMIT_SHOWN_HOURS and up:
            limit_text, limit_style = "PAST", "siderod.flip.due"
        if not up:
            flip_style = limit_style = "siderod.dim"
    next_row = int(state.next_row[i])
    sun_up_enough = float(sky.sun_alt_deg) > SUN_CAUTION_SUN_ABOVE_DEG
    return _Row(
        name=sky.names[i], ha_hours=ha_now, dec_deg=float(sky.dec_deg[i]), alt_deg=float(sky.alt_deg[i]),
        az_deg=float(sky.az_deg[i]), airmass=float(sky.airmass[i]), rising=bool(sky.rising[i]), fixed=fixed,
        up=up, muted=muted,
        near_sun=sun_up_enough and float(sky.sun_separation_deg[i]) < SUN_CAUTION_SEPARATION_DEG,
        culm_seconds=culm_seconds, culm_usable=culm_usable,
        flip_text=flip_text, flip_style=flip_style, limit_text=limit_text, limit_style=limit_style,
        next_event=index.record(next_row) if next_row >= 0 else None,
    )


def _table_header(columns: tuple[ColumnSpec, ...], name_width: int, width: int) -> Text:
    cells = [(_cell(c.header, name_width if c.key == "name" else c.width, c.justify), "siderod.table.header")
             for c in columns]
    return _line(width, *_join_cells(cells))


def _table_row(row: _Row, columns: tuple[ColumnSpec, ...], name_width: int, width: int,
               now_utc: datetime) -> Text:
    base = "siderod.target" if row.up else "siderod.target.down"
    if row.muted:
        base = "siderod.target.muted"
    cells = []
    for c in columns:
        w = name_width if c.key == "name" else c.width
        text, style = _cell_value(row, c.key, now_utc, base)
        cells.append((_cell(text, w, c.justify), style))
    return _line(width, *_join_cells(cells))


def _cell_value(row: _Row, key: str, now_utc: datetime, base: str) -> tuple[str, str]:
    if key == "name":
        return row.name, "siderod.danger" if row.near_sun else base
    if key == "ha":
        return _format_ha(row.ha_hours), base
    if key == "dec":
        return f"{row.dec_deg:+.1f}", base
    if key == "alt":
        return f"{row.alt_deg:.1f}", base
    if key == "az":
        return f"{row.az_deg:.1f}", base
    if key == "airmass":
        x = row.airmass
        return ("" if not math.isfinite(x) else ("9.9+" if x >= 9.95 else f"{x:.2f}")), base
    if key == "trend":
        if row.fixed:
            return "", base
        return ("↑", "siderod.rising") if row.rising else ("↓", "siderod.setting")
    if key == "culm":
        style = "siderod.countdown" if row.culm_usable else "siderod.dim"
        return format_countdown(row.culm_seconds), style
    if key == "flip":
        return row.flip_text, row.flip_style
    if key == "limit":
        return row.limit_text, row.limit_style
    if key == "next":
        event = row.next_event
        if event is None:
            return "", base
        seconds = (event.time_utc - now_utc).total_seconds()
        label = _event_label(event)
        countdown = format_countdown(seconds)
        style = "siderod.countdown.soon" if seconds < SOON_SECONDS and not row.muted else base
        return f"{label:<10} {countdown:>6}", style
    if key == "muted":
        return ("yes" if row.muted else ""), base
    return "", base


def _event_label(event: Event) -> str:
    kind = event.kind
    if kind in (EventKind.ALTITUDE_UP, EventKind.ALTITUDE_DOWN) and event.threshold_deg is not None:
        arrow = "↑" if kind is EventKind.ALTITUDE_UP else "↓"
        return f"alt {arrow}{event.threshold_deg:g}°"
    if kind is EventKind.HOUR_ANGLE and event.mark_hours is not None:
        return f"HA {event.mark_hours:+g}h"
    return _TARGET_WORDS.get(kind, kind.value)


# -- small helpers, in the order they are called ---------------------------------------------------


def _zone(name: str) -> Any:
    try:
        return ZoneInfo(name)
    except (ZoneInfoNotFoundError, ValueError):
        return UTC


def _line(width: int, *parts: tuple[str, str]) -> Text:
    text = Text(no_wrap=True, overflow="ellipsis")
    for content, style in parts:
        text.append(content, style or None)
    if text.cell_len > width:
        text.truncate(width, overflow="ellipsis")
    return text


def _big_digit_rows(clock_text: str) -> tuple[str, str, str]:
    glyphs = [DIGIT_PIXELS.get(ch, DIGIT_PIXELS["0"]) if ch != "-" else _DASH for ch in clock_text]
    rows = []
    for top, bottom in ((0, 1), (2, 3), (4, None)):
        parts = []
        for glyph in glyphs:
            cells = []
            for col in range(len(glyph[0])):
                upper = glyph[top][col] == "#"
                lower = bottom is not None and glyph[bottom][col] == "#"
                cells.append(_HALF_BLOCKS[(upper, lower)] * 2)
            parts.append("".join(cells))
        rows.append(" ".join(parts))
    return rows[0], rows[1], rows[2]


def _format_lat(lat_deg: float) -> str:
    return _format_dms_abs(lat_deg) + ("N" if lat_deg >= 0 else "S")


def _format_lon(lon_deg: float) -> str:
    return _format_dms_abs(lon_deg) + ("E" if lon_deg >= 0 else "W")


def _format_dms_abs(deg: float) -> str:
    total = round(abs(deg) * 3600)
    d, rest = divmod(total, 3600)
    m, s = divmod(rest, 60)
    return f"{d}°{m:02d}'{s:02d}\""


def _fit(text: str, width: int) -> str:
    if cell_len(text) <= width:
        return text
    if width <= 1:
        return text[:width]
    return set_cell_size(text, width - 1) + "…"


def _fit_fields(width: int, fields: list[tuple[int, list[tuple[str, str]]]]) -> Text:
    """Join fields with a separator, dropping the least important (highest rank) until they fit."""
    kept = list(fields)
    sep = ("  ·  ", "siderod.dim")

    def length(items: list[tuple[int, list[tuple[str, str]]]]) -> int:
        joins = cell_len(sep[0]) * max(0, len(items) - 1)
        return sum(cell_len(t) for _, parts in items for t, _ in parts) + joins

    while len(kept) > 1 and length(kept) > width:
        kept.remove(max(kept, key=lambda f: f[0]))
    parts: list[tuple[str, str]] = []
    for i, (_, field_parts) in enumerate(kept):
        if i:
            parts.append(sep)
        parts.extend(field_parts)
    return _line(width, *parts)


def _format_small_seconds(seconds: float | None) -> str:
    if seconds is None or not math.isfinite(seconds):
        return "?"
    if seconds < 1.0:
        return f"{seconds * 1000:.0f} ms"
    return f"{seconds:.1f} s"


_INDEX_CACHE: list[Any] = [None, None]  # (the events indexed last, their _EventIndex): frames share it


def _event_index(events: tuple[Event, ...] | EventTable) -> _EventIndex:
    # Memoised on the identity of the events: the live view passes the same table for hours.
    if _INDEX_CACHE[0] is not events or _INDEX_CACHE[1] is None:
        _INDEX_CACHE[:] = [events, _EventIndex(events)]
    return _INDEX_CACHE[1]


class _EventIndex:
    """An agenda's events as columns, grouped by target (and kind) for look-ups by ``np.searchsorted``.

    Built once per agenda. For each group (every kind, or one kind) the events of each target are
    contiguous and in time order, so one frame finds every target's next event with one comparison
    over the group and one ``np.searchsorted``, whatever the number of targets.
    """

    _KINDS = (None, EventKind.CULMINATION, EventKind.FLIP_DUE, EventKind.TRACKING_LIMIT)

    def __init__(self, events: tuple[Event, ...] | EventTable) -> None:
        if isinstance(events, EventTable):
            table, records = events, None
        else:
            table, records = EventTable.from_records(events), list(events)
        micros = table.time_microseconds()
        if micros.size and np.any(micros[1:] < micros[:-1]):
            order = np.argsort(micros, kind="stable")
            table, micros = table.take(order), micros[order]
            records = None if records is None else [records[i] for i in order.tolist()]
        self.table = table
        self._records = records
        # Seconds as the records' aware datetimes give them (rounded to the microsecond).
        self.time_unix = micros / 1e6
        sky_rows = np.flatnonzero(table.target < 0)
        self._sky_rows, self._sky_times = sky_rows, self.time_unix[sky_rows]
        self.has_target_events = bool(sky_rows.size < len(table))
        # A target is known by its name: a name listed twice in the table is one slot (its first).
        self._slot_of: dict[str, int] = {}
        first = np.array([self._slot_of.setdefault(name, i) for i, name in enumerate(table.names)],
                         dtype=np.int64)
        self._target = np.where(table.target >= 0, first[np.maximum(table.target, 0)], -1) if first.size \
            else np.full(len(table), -1, dtype=np.int64)
        self._groups = {kind: self._group(kind) for kind in self._KINDS}
        self._targets_key: Any = None
        self._targets: Any = None

    def _group(self, kind: EventKind | None) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """(table rows by target then time, their times, first and end position of each target)."""
        target = self._target
        chosen = target >= 0 if kind is None else (target >= 0) & (self.table.kind == KIND_CODES[kind])
        rows = np.flatnonzero(chosen)
        rows = rows[np.argsort(target[rows], kind="stable")]  # stable: time order kept per target
        by_target = target[rows]
        slots = np.arange(len(self.table.names))
        return (rows, self.time_unix[rows], np.searchsorted(by_target, slots, "left"),
                np.searchsorted(by_target, slots, "right"))

    def for_targets(self, names: tuple[str, ...], frames: tuple[str, ...]) -> tuple[Any, ...]:
        """(each target's slot in the table or -1, fixed-pointing flags, rank by name, name -> positions).

        Kept for the last target list seen (the sky gives equal lists frame after frame).
        """
        if self._targets_key != (names, frames):
            slots = np.array([self._slot_of.get(name, -1) for name in names], dtype=np.int64)
            fixed = np.array([frame == "fixed-pointing" for frame in frames], dtype=bool)
            rank = np.empty(len(names), dtype=np.int64)
            rank[sorted(range(len(names)), key=names.__getitem__)] = np.arange(len(names))
            positions: dict[str, list[int]] = {}
            for i, name in enumerate(names):
                positions.setdefault(name, []).append(i)
            self._targets_key, self._targets = (names, frames), (slots, fixed, rank, positions)
        return self._targets

    def next_rows(self, kind: EventKind | None, slots: np.ndarray, now_unix: float) -> np.ndarray:
        """Per target slot, the table row of its first event of ``kind`` (None: any) at or after
        ``now_unix``, or -1."""
        rows, times, first, end = self._groups[kind]
        ahead = np.flatnonzero(times >= now_unix)  # positions in the group; in time order per target
        if ahead.size == 0 or slots.size == 0:
            return np.full(slots.size, -1, dtype=np.int64)
        known = slots >= 0
        safe = np.where(known, slots, 0)
        where = np.searchsorted(ahead, first[safe])  # each target's first position at or after now
        found = np.minimum(where, ahead.size - 1)
        hit = known & (where < ahead.size) & (ahead[found] < end[safe])
        return np.where(hit, rows[ahead[found]], -1)

    def has_kind(self, kind: EventKind, slots: np.ndarray) -> np.ndarray:
        """Per target slot: does the table hold any event of ``kind`` for it (past or future)?"""
        _, _, first, end = self._groups[kind]
        if first.size == 0:
            return np.zeros(slots.size, dtype=bool)
        safe = np.where(slots >= 0, slots, 0)
        return (slots >= 0) & (end[safe] > first[safe])

    def rows_ahead(self, name: str, now_unix: float, count: int) -> np.ndarray:
        """Table rows of the first ``count`` events of target ``name`` at or after ``now_unix``."""
        slot = self._slot_of.get(name)
        if slot is None:
            return np.zeros(0, dtype=np.int64)
        rows, times, first, end = self._groups[None]
        lo, hi = int(first[slot]), int(end[slot])
        start = lo + int(np.searchsorted(times[lo:hi], now_unix, "left"))
        return rows[start:min(hi, start + count)]

    def next_sky_event(self, now_unix: float) -> Event | None:
        """The first Sun, Moon or twilight event at or after ``now_unix``."""
        i = int(np.searchsorted(self._sky_times, now_unix, "left"))
        return self.record(int(self._sky_rows[i])) if i < self._sky_rows.size else None

    def record(self, row: int) -> Event:
        """Table row ``row`` as an ``Event`` (the caller's own record when it passed records)."""
        return self._records[row] if self._records is not None else self.table.event(row)


def _muted_targets(snapshot: ServiceSnapshot | None, now_utc: datetime) -> set[str]:
    if snapshot is None:
        return set()
    return {name for name, until in snapshot.muted.items() if until is None or until > now_utc}


def _is_gem(config: Config) -> bool:
    return config.mount.kind is MountKind.GERMAN_EQUATORIAL


def _format_ha(ha_hours: float) -> str:
    """``+1:23`` / ``-11:59``: hours and minutes of time, truncated towards zero."""
    sign = "-" if ha_hours < 0 else "+"
    total_minutes = int(abs(ha_hours) * 60.0)
    return f"{sign}{total_minutes // 60}:{total_minutes % 60:02d}"


def _cell(text: str, width: int, justify: str) -> str:
    text = _fit(text, width)
    pad = width - cell_len(text)
    if justify == "right":
        return " " * pad + text
    if justify == "center":
        return " " * (pad // 2) + text + " " * (pad - pad // 2)
    return text + " " * pad


def _join_cells(cells: list[tuple[str, str]]) -> list[tuple[str, str]]:
    out: list[tuple[str, str]] = []
    for i, cell in enumerate(cells):
        if i:
            out.append((" ", ""))
        out.append(cell)
    return out


_BEAM_ENTER, _BEAM_CENTRE, _BEAM_LEAVE = (KIND_CODES[EventKind.BEAM_ENTER], KIND_CODES[EventKind.BEAM_CENTRE],
                                        KIND_CODES[EventKind.BEAM_LEAVE])
_HEALTH_STYLES = {"synchronised": "siderod.ok", "unsynchronised": "siderod.warn"}
_HALF_BLOCKS = {(True, True): "█", (True, False): "▀", (False, True): "▄", (False, False): " "}
_DASH = ("...", "...", "###", "...", "...")

_TWILIGHT_WORDS = {
    "day": "daylight",
    "civil": "civil twilight",
    "nautical": "nautical twilight",
    "astronomical": "astronomical twilight",
    "night": "dark night",
}

_SKY_WORDS = {
    EventKind.SUNSET: "sunset",
    EventKind.SUNRISE: "sunrise",
    EventKind.CIVIL_DUSK: "civil dusk",
    EventKind.NAUTICAL_DUSK: "nautical dusk",
    EventKind.ASTRONOMICAL_DUSK: "night begins",
    EventKind.ASTRONOMICAL_DAWN: "night ends",
    EventKind.NAUTICAL_DAWN: "nautical dawn",
    EventKind.CIVIL_DAWN: "civil dawn",
    EventKind.MOONRISE: "moonrise",
    EventKind.MOONSET: "moonset",
}

_TARGET_WORDS = {
    EventKind.CULMINATION: "culminates",
    EventKind.LOWER_CULMINATION: "lower culm",
    EventKind.RISE: "rises",
    EventKind.SET: "sets",
    EventKind.HOUR_ANGLE: "HA mark",
    EventKind.FLIP_DUE: "flip due",
    EventKind.TRACKING_LIMIT: "limit",
}


# -- the demo --------------------------------------------------------------------------------------


def _demo_inputs() -> BoardInputs:
    """The demo configuration at :data:`DEMO_INSTANT_UTC`, with an invented service state."""
    from siderod.astro.leapseconds import BUILTIN_LEAP_TABLE
    from siderod.common.model import ChannelHealth
    from siderod.files.config import load_config
    from siderod.plan.agenda import compute_agenda
    from siderod.plan.planner import plan_alerts

    config = load_config(None, env={})
    now_utc = DEMO_INSTANT_UTC
    earlier_utc = now_utc - timedelta(hours=3)
    agenda = compute_agenda(config, earlier_utc, config.events.window_hours + 3.0)
    planned = plan_alerts(agenda, config, muted={}, now_utc=earlier_utc)
    # Invented history for the picture: what was due before the instant went out on time, but for
    # the latest, delivered 95 s late (as after a laptop lid was opened).
    past = [a for a in planned if a.due_utc <= now_utc - timedelta(seconds=95)][-3:]
    deliveries = tuple(
        Delivery(key=a.key, channel="desktop", delivered_utc=a.due_utc + timedelta(seconds=late),
                 late_seconds=late, ok=True, title=a.title)
        for a, late in ((a, 95.0 if a is past[-1] else 0.2) for a in past)
    )
    muted = {config.targets[-1].name: None} if config.targets else {}
    snapshot = ServiceSnapshot(
        taken_utc=now_utc,
        started_utc=earlier_utc,
        config_path=config.path,
        site=config.site,
        dut1_seconds=config.time.dut1_seconds,
        dut1_source=config.time.dut1_source,
        clock_health=ClockHealth("synchronised", estimated_error_seconds=0.0012, max_error_seconds=0.05),
        next_alerts=tuple(a for a in planned if a.due_utc > now_utc and a.event.target not in muted),
        recent_deliveries=deliveries,
        channels=(ChannelHealth("desktop", True), ChannelHealth("log", True)),
        muted=muted,
    )
    return inputs_from_config(
        config, now_utc, agenda=agenda, snapshot=snapshot,
        source="demo instant, invented service state",
        leap_known_good_until=BUILTIN_LEAP_TABLE.known_good_until_utc,
    )


def _main(argv: Sequence[str] | None = None) -> int:
    import argparse
    import os

    from siderod.view.theme import make_console

    parser = argparse.ArgumentParser(
        prog="python -m siderod.view.board",
        description="Render the demo configuration at the demo instant (2026-12-14 22:30 UTC).",
    )
    parser.add_argument("--svg", metavar="FILE", help="also write an SVG picture")
    parser.add_argument("--width", type=int, default=100)
    parser.add_argument("--height", type=int, default=32)
    args = parser.parse_args(argv)
    inputs = _demo_inputs()
    console = make_console(os.environ, width=args.width, height=args.height, record=bool(args.svg))
    console.print(render_board(inputs, args.width, args.height))
    if args.svg:
        title = "siderod watch: Corrie Hill Observatory (demo)"
        svg = console.export_svg(title=title, code_format=_svg_format(title), font_aspect_ratio=0.6,
                                 unique_id="siderod-board")
        with open(args.svg, "w", encoding="utf-8") as out:
            out.write(svg)
        print(f"wrote {args.svg}")
    return 0


#: Fonts already on the viewer's machine; nothing is fetched.
_SVG_FONTS = "'DejaVu Sans Mono', 'Liberation Mono', Menlo, Consolas, monospace"


def _svg_format(title: str) -> str:
    """Our own SVG frame for the README picture: a plain panel with the title, local fonts only.

    The terminal library's default frame draws window buttons in one desktop system's colours and
    loads a font from the network each time the picture is viewed; this one draws neither. The
    placeholders in braces are filled by ``Console.export_svg`` (the text, its styles, the sizes).
    """
    from html import escape

    safe_title = escape(title).replace("{", "{{").replace("}", "}}")
    return (
        '<svg class="siderod-board" viewBox="0 0 {width} {height}" xmlns="http://www.w3.org/2000/svg">\n'
        "<style>\n"
        ".{unique_id}-matrix {{ font-family: " + _SVG_FONTS + ";"
        " font-size: {char_height}px; line-height: {line_height}px; }}\n"
        ".{unique_id}-title {{ font-family: " + _SVG_FONTS + "; font-size: 15px; fill: #9aa5b1; }}\n"
        "{styles}\n"
        "</style>\n"
        '<defs><clipPath id="{unique_id}-clip-terminal">'
        '<rect x="0" y="0" width="{terminal_width}" height="{terminal_height}" /></clipPath>\n'
        "{lines}\n</defs>\n"
        '<rect x="0.5" y="0.5" width="{width}" height="{height}" fill="#0f1419" stroke="#3a4652" />\n'
        '<rect x="0.5" y="0.5" width="{width}" height="30" fill="#1b232c" />\n'
        f'<text class="{{unique_id}}-title" x="12" y="20">{safe_title}</text>\n'
        '<g transform="translate({terminal_x}, {terminal_y})" clip-path="url(#{unique_id}-clip-terminal)">\n'
        '{backgrounds}\n<g class="{unique_id}-matrix">\n{matrix}\n</g>\n</g>\n</svg>\n'
    )


if __name__ == "__main__":
    raise SystemExit(_main())
