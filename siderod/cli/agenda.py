"""`siderod agenda`: the events of the coming window as a table, as JSON, or as an iCalendar file."""

from __future__ import annotations

import argparse
import sys

__all__ = ["JSON_FIELDS", "MAX_HOURS", "PROGRESS_MIN_TARGETS", "format_ics", "register", "run"]

#: Top-level fields of ``siderod agenda --json`` (stable; documented in the README).
JSON_FIELDS = ("site", "timezone", "start_utc", "end_utc", "dut1_seconds", "events", "classification",
               "dark_intervals")
#: Show a progress bar (on a terminal) from this many targets up.
PROGRESS_MIN_TARGETS = 20000
#: The longest window ``--hours`` accepts: the same cap as ``[events] window_hours`` (ten days).
MAX_HOURS = 240.0
#: Exit code of a malformed command line (``siderod.cli.main.EXIT_USAGE``).
_EXIT_USAGE = 2


def register(subparsers: argparse._SubParsersAction) -> None:
    """Add ``agenda`` to the command line."""
    parser = subparsers.add_parser(
        "agenda",
        help="list the coming culminations, crossings, flips, twilights and Moon events",
        description="List every event of a time window for the configured site and targets, sorted by "
        "time, in the site's local time and UTC.",
    )
    parser.add_argument("--from", dest="start", metavar="ISO-8601",
                        help='window start with "Z" or an offset, e.g. 2026-12-14T12:00:00Z (default: now)')
    parser.add_argument("--hours", type=float, metavar="N",
                        help="window length in hours (default: [events] window_hours, usually 24)")
    parser.add_argument("--target", action="append", metavar="NAME",
                        help="only this target (repeatable); Sun and Moon events are kept")
    parser.add_argument("--kind", action="append", metavar="KIND",
                        help="only this event kind (repeatable), e.g. culmination, flip-due, "
                        "astronomical-dusk")
    parser.add_argument("--json", action="store_true", help="print one JSON object (fields in the README)")
    parser.add_argument("--ics", metavar="FILE", help="also write the events as an iCalendar (RFC 5545) file")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Compute and print; 0 on success, 1 for bad input (time, kind, target, configuration)."""
    import os

    from siderod.astro.timescales import parse_iso_datetime
    from siderod.common.model import EventKind
    from siderod.files.config import load_config

    if args.start:
        try:
            start_utc = parse_iso_datetime(args.start)
        except ValueError as exc:
            print(f"siderod agenda: --from: {exc}", file=sys.stderr)
            return 1
    else:
        from siderod.common.clock import SystemClock

        start_utc = SystemClock().now_utc()  # the one read of the wall clock
    if args.hours is not None and not args.hours > 0:
        print(f"siderod agenda: --hours: expected a positive number of hours, got {args.hours:g}",
              file=sys.stderr)
        return 1
    if args.hours is not None and not args.hours <= MAX_HOURS:
        # Without a cap, --hours 100000 ran for 8 minutes and took 4 GB before printing anything.
        print(f"siderod agenda: --hours: at most {MAX_HOURS:g} hours (10 days), the same limit as "
              f"[events] window_hours; got {args.hours:g}. For a longer span, run one window after "
              "another with --from.", file=sys.stderr)
        return _EXIT_USAGE
    kinds = None
    if args.kind:
        valid = {k.value: k for k in EventKind}
        bad = [k for k in args.kind if k not in valid]
        if bad:
            print(f"siderod agenda: --kind: unknown kind {', '.join(repr(b) for b in bad)}; choose from: "
                  + ", ".join(valid), file=sys.stderr)
            return 1
        kinds = {valid[k] for k in args.kind}

    config = load_config(getattr(args, "config", None), os.environ, at_unix=start_utc.timestamp())
    if config.is_demo and not args.json:
        print("siderod: no configuration given, so the bundled demo is used (Corrie Hill Observatory, an "
              "invented site); see `siderod check`.", file=sys.stderr)
    try:
        agenda = _compute(config, start_utc, args, kinds)
    except ValueError as exc:
        print(f"siderod agenda: {exc}", file=sys.stderr)
        return 1

    if args.ics:
        text = format_ics(agenda, config, stamp_utc=start_utc)
        try:
            with open(args.ics, "w", encoding="utf-8", newline="") as handle:
                handle.write(text)
        except OSError as exc:
            print(f"siderod agenda: --ics: cannot write {args.ics!r}: {exc.strerror or exc}", file=sys.stderr)
            return 1
    if args.json:
        write_json(agenda, config, sys.stdout)
    else:
        _print_table(agenda, config)
    return 0


def _compute(config, start_utc, args, kinds):
    from siderod.plan.agenda import compute_agenda

    count = len(config.targets) if not args.target else len(args.target)
    if count < PROGRESS_MIN_TARGETS or not sys.stderr.isatty():
        return compute_agenda(config, start_utc, args.hours, targets=args.target, kinds=kinds)
    from rich.progress import Progress

    with Progress(transient=True) as bar:
        task = bar.add_task("computing events", total=count)

        def progress(done: int, total: int) -> None:
            bar.update(task, completed=done, total=total)

        return compute_agenda(config, start_utc, args.hours, targets=args.target, kinds=kinds,
                              progress=progress)


def write_json(agenda, config, out) -> None:
    """Write ``siderod agenda --json`` to a text stream, streaming the events in blocks.

    The object is the documented one (see the README): the header fields, ``events`` one object a
    line, then ``classification`` and ``dark_intervals``. Numbers are written with fixed decimals
    (angles 0.001 deg, hour angles 1e-5 h); the events are formatted as numpy byte columns, so
    800,000 events take well under a second and no giant string is ever built.
    """
    import json

    import numpy as np

    from siderod.cli import textcols as tc

    def iso(dt):
        return dt.strftime("%Y-%m-%dT%H:%M:%SZ")

    head = {"site": config.site.name, "timezone": config.site.timezone, "start_utc": iso(agenda.start_utc),
            "end_utc": iso(agenda.end_utc), "dut1_seconds": config.time.dut1_seconds}
    write = _byte_writer(out)
    write(("{\n" + "".join(f"  {json.dumps(k)}: {json.dumps(v)},\n" for k, v in head.items())
           + '  "events": [').encode())
    table = agenda.table
    names = tc.text_table(tc.json_strings(table.names) + [b"null"])  # index -1: no target
    kinds = tc.text_table([f'"{k.value}"'.encode() for k in _kinds()])
    usable = tc.text_table([b"false", b"true", b"null"])
    for first in range(0, len(table), _JSON_BLOCK):
        part = table.take(slice(first, first + _JSON_BLOCK))
        n = len(part)
        c = tc.constant
        write(tc.join_rows([
            c(b',\n    {"time_utc": "', n),
            tc.iso_column(part.time_microseconds()),
            c(b'", "target": ', n), names[part.target],
            c(b', "kind": ', n), kinds[part.kind],
            c(b', "altitude_deg": ', n), tc.decimal_column(part.altitude_deg, 3),
            c(b', "azimuth_deg": ', n), tc.decimal_column(part.azimuth_deg, 3, wrap=360.0),
            c(b', "hour_angle_hours": ', n), tc.decimal_column(part.hour_angle_hours, 5),
            c(b', "threshold_deg": ', n), tc.decimal_column(part.threshold_deg, 4),
            c(b', "mark_hours": ', n), tc.decimal_column(part.mark_hours, 5),
            c(b', "usable": ', n), usable[part.usable],
            c(b', "moon_illuminated_fraction": ', n), tc.decimal_column(part.moon_illuminated_fraction, 3),
            c(b"}", n),
        ])[0 if first else 1:])  # no comma before the first event
    write(b"\n  ],\n")
    classes = dict(zip(agenda.target_names, (_CLASSES[c] for c in agenda.class_codes.tolist()), strict=True))
    write(f'  "classification": {json.dumps(classes)},\n  "dark_intervals": {{'.encode())
    # Dark intervals: one fixed-width "[begin, end]" per row, then sliced per target.
    target = agenda.dark_target
    k = target.size
    begin = tc.iso_column(np.round(agenda.dark_begin_unix * 1e6).astype(np.int64), millis=False)
    end = tc.iso_column(np.round(agenda.dark_end_unix * 1e6).astype(np.int64), millis=False)
    more = np.zeros(k, dtype=bool)
    more[:-1] = target[1:] == target[:-1]
    rows = tc.join_rows([tc.constant(b'["', k), begin, tc.constant(b'", "', k), end, tc.constant(b'"]', k),
                         tc.text_column([b"", b", "], more.astype(np.int64))], drop_nul=False)
    width = len(rows) // k if k else 0
    bounds = np.searchsorted(target, np.arange(len(agenda.target_names) + 1)).tolist()
    quoted = tc.json_strings(agenda.target_names)
    pieces = []
    for j, name in enumerate(quoted):
        block = rows[bounds[j] * width:bounds[j + 1] * width].replace(b"\0", b"")
        pieces.append(name + b": [" + block + b"]")
    write(b", ".join(pieces) + b"}\n}\n")


_JSON_BLOCK = 65536  # events per block written: bounds the memory of the byte columns
_CLASSES = ("normal", "circumpolar", "never-rises")  # siderod.plan.agenda.CLASSES, without importing it


def _kinds():
    from siderod.plan.table import KINDS

    return KINDS


def _byte_writer(out):
    """A function writing bytes to the text stream ``out`` (to its buffer when it has one)."""
    buffer = getattr(out, "buffer", None)
    if buffer is not None:
        out.flush()
        return buffer.write
    return lambda data: out.write(data.decode())


def _describe(event) -> str:
    """A short note for the table and the calendar: the kind-specific value."""
    from siderod.common.model import EventKind

    kind = event.kind
    if kind in (EventKind.CULMINATION, EventKind.LOWER_CULMINATION):
        return "usable" if event.usable else "below its limit"
    if kind in (EventKind.HOUR_ANGLE, EventKind.FLIP_DUE, EventKind.TRACKING_LIMIT):
        text = f"HA {_signed(event.mark_hours)} h"
        if kind is EventKind.TRACKING_LIMIT:
            text += " - check the mount's own limits"
        return text
    if kind in (EventKind.MOONRISE, EventKind.MOONSET) and event.moon_illuminated_fraction is not None:
        return f"{event.moon_illuminated_fraction * 100:.0f}% lit"
    if event.threshold_deg is not None:
        return f"through {event.threshold_deg:.1f}°"
    return ""


def _table_note(event) -> str:
    """The note column: what the other columns do not already say."""
    from siderod.common.model import EventKind

    if event.kind is EventKind.HOUR_ANGLE:
        return ""  # the HA column is the mark
    if event.kind is EventKind.FLIP_DUE:
        return "flip the mount"
    if event.kind is EventKind.TRACKING_LIMIT:
        return "at mount limit"
    return _describe(event)


def _print_table(agenda, config) -> None:
    import os
    from zoneinfo import ZoneInfo

    from rich import box
    from rich.console import Console
    from rich.table import Table

    zone = ZoneInfo(config.site.timezone)
    hours = (agenda.end_utc - agenda.start_utc).total_seconds() / 3600
    title = f"{config.site.name}: {agenda.start_utc:%Y-%m-%d %H:%M} UTC + {hours:g} h"
    table = Table(box=box.SIMPLE_HEAD, pad_edge=False, title=title, title_justify="left")
    for name, justify in (("Local", "left"), ("UTC", "left"), ("Event", "left"), ("Target", "left"),
                          ("Alt°", "right"), ("Az°", "right"), ("HA h", "right"), ("Note", "left")):
        table.add_column(name, justify=justify, no_wrap=name != "Note")
    for e in agenda.events:
        local = e.time_utc.astimezone(zone)
        table.add_row(
            local.strftime("%a %H:%M %Z"), e.time_utc.strftime("%H:%M:%S"), e.kind.value, e.target or "",
            f"{e.altitude_deg:.1f}", f"{round(e.azimuth_deg, 1) % 360.0:.1f}",
            "" if e.hour_angle_hours is None else _signed(e.hour_angle_hours), _table_note(e))
    console = Console()
    if not console.is_terminal and "COLUMNS" not in os.environ:
        console = Console(width=120)  # pipes and files get every column unless told otherwise
    console.print(table)
    if not agenda.events:
        console.print("No events in this window (check --target/--kind).")
    rare = {name: c for name, c in agenda.classification.items() if c != "normal"}
    if rare:
        console.print("Whole window: " + "; ".join(f"{n} {c}" for n, c in sorted(rare.items())))


# ---------------------------------------------------------------------------------------------
# iCalendar (RFC 5545), written by hand: no runtime dependency


def format_ics(agenda, config, *, stamp_utc) -> str:
    """The agenda as an RFC 5545 VCALENDAR: one zero-length VEVENT per event, times in UTC.

    UIDs are stable across runs (target, kind and time to the second), so re-importing updates
    rather than duplicates. Lines use CRLF and are folded at 75 octets (RFC 5545 §3.1).

    Args:
        agenda: the computed agenda.
        config: for the site name.
        stamp_utc: DTSTAMP for every event (the window start keeps the output reproducible).

    Returns:
        str: the calendar text.
    """
    stamp = stamp_utc.strftime("%Y%m%dT%H%M%SZ")
    lines = ["BEGIN:VCALENDAR", "VERSION:2.0", "PRODID:-//siderod//agenda//EN", "CALSCALE:GREGORIAN",
             "METHOD:PUBLISH", "X-WR-CALNAME:" + _ics_text(f"siderod: {config.site.name}")]
    for e in agenda.events:
        when = e.time_utc.strftime("%Y%m%dT%H%M%SZ")
        who = e.target or ("Moon" if e.kind.value.startswith("moon") else "Sun")
        uid = f"{when}-{e.kind.value}-{_uid_safe(who)}@siderod"
        summary = f"{who}: {e.kind.value}"
        detail = (f"{e.kind.value} of {who} at {e.time_utc:%Y-%m-%d %H:%M:%S} UTC; altitude "
                  f"{e.altitude_deg:.1f} deg, azimuth {round(e.azimuth_deg, 1) % 360.0:.1f} deg")
        note = _describe(e)
        if note:
            detail += f"; {note}"
        lines += ["BEGIN:VEVENT", f"UID:{uid}", f"DTSTAMP:{stamp}", f"DTSTART:{when}", f"DTEND:{when}",
                  "SUMMARY:" + _ics_text(summary), "DESCRIPTION:" + _ics_text(detail),
                  "LOCATION:" + _ics_text(config.site.name), "TRANSP:TRANSPARENT", "END:VEVENT"]
    lines.append("END:VCALENDAR")
    return "".join(_fold(line) + "\r\n" for line in lines)


def _ics_text(value: str) -> str:
    """Escape a TEXT value (RFC 5545 §3.3.11)."""
    return (value.replace("\\", "\\\\").replace(";", "\\;").replace(",", "\\,").replace("\n", "\\n"))


def _uid_safe(value: str) -> str:
    return "".join(ch if ch.isalnum() or ch in "-_." else "-" for ch in value)


def _fold(line: str) -> str:
    """Fold a content line at 75 octets, never inside a UTF-8 sequence (RFC 5545 §3.1)."""
    out, current, size = [], [], 0
    for ch in line:
        width = len(ch.encode("utf-8"))
        if size + width > 75:
            out.append("".join(current))
            current, size = [" "], 1
        current.append(ch)
        size += width
    out.append("".join(current))
    return "\r\n".join(out)


def _signed(hours: float) -> str:
    # Round before formatting so a culmination a microsecond early does not print as "-0.00".
    return f"{round(hours, 2) + 0.0:+.2f}"
