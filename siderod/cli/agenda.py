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
    parser.add_argument("--ics", metavar="FILE",
                        help='also write the events as an iCalendar (RFC 5545) file; "-" writes only the '
                        "calendar, to standard output")
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
            return _EXIT_USAGE
    else:
        from siderod.common.clock import SystemClock

        start_utc = SystemClock().now_utc()  # the one read of the wall clock
    if args.hours is not None and not args.hours > 0:
        print(f"siderod agenda: --hours: expected a positive number of hours, got {args.hours:g}",
              file=sys.stderr)
        return _EXIT_USAGE
    if args.hours is not None and not args.hours <= MAX_HOURS:
        # Without a cap, --hours 100000 ran for 8 minutes and took 4 GB before printing anything.
        print(f"siderod agenda: --hours: at most {MAX_HOURS:g} hours (10 days), the same limit as "
              f"[events] window_hours; got {args.hours:g}. For a longer span, run one window after "
              "another with --from.", file=sys.stderr)
        return _EXIT_USAGE
    if args.ics == "-" and args.json:
        print("siderod agenda: --ics - and --json both write to standard output; choose one, or give "
              "--ics a file name", file=sys.stderr)
        return _EXIT_USAGE
    kinds = None
    if args.kind:
        import difflib

        valid = {k.value: k for k in EventKind}
        given = [k.strip().lower() for k in args.kind]  # Culmination and culmination alike
        bad = [k for k in given if k not in valid]
        if bad:
            close = difflib.get_close_matches(bad[0], list(valid), n=1, cutoff=0.6)
            hint = f' -- did you mean "{close[0]}"?' if close else ""
            unknown = ", ".join(repr(b) for b in bad)
            print(f"siderod agenda: --kind: unknown kind {unknown}{hint}; choose from: " + ", ".join(valid),
                  file=sys.stderr)
            return _EXIT_USAGE
        kinds = {valid[k] for k in given}

    from siderod.cli.now import format_time_scale_warning

    warning = format_time_scale_warning(start_utc.timestamp())
    if warning:
        print(f"siderod: warning: {warning}", file=sys.stderr)
    config = load_config(getattr(args, "config", None), os.environ, at_unix=start_utc.timestamp())
    if config.is_demo and not args.json:
        from siderod.cli import DEMO_NOTICE

        print(DEMO_NOTICE, file=sys.stderr)
    try:
        agenda = _compute(config, start_utc, args, kinds)
    except ValueError as exc:
        print(f"siderod agenda: {exc}", file=sys.stderr)
        return 1

    if args.ics == "-":  # the calendar alone, e.g. to pipe it on
        from siderod.cli.ics import write_ics

        sys.stdout.flush()
        write_ics(agenda, config, sys.stdout.buffer, stamp_utc=start_utc)
        sys.stdout.buffer.flush()
        return 0
    if args.ics:
        from siderod.cli.ics import write_ics

        try:
            with open(args.ics, "wb") as handle:
                write_ics(agenda, config, handle, stamp_utc=start_utc)
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
        write(memoryview(tc.join_rows([
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
            c(b', "beam_source": ', n), names[part.beam_source],
            c(b', "beam_offset_deg": ', n), tc.decimal_column(part.beam_offset_deg, 3),
            c(b"}", n),
        ]))[0 if first else 1:])  # no comma before the first event (a view: no copy)
    write(b"\n  ],\n")
    # The per-target objects, as columns too: each target's quoted name once, for all three.
    from siderod.plan.skyclass import SKY_CLASSES

    count = len(agenda.target_names)
    names = tc.text_table(tc.json_strings(agenda.target_names) or [b""])
    sky_codes = np.asarray(agenda.sky_codes if agenda.sky_codes else [-1] * count, dtype=np.int64)
    has_sky = sky_codes >= 0
    classification = _json_members(names[:count], _json_texts(_CLASSES), agenda.class_codes)
    sky = _json_members(names[:count][has_sky], _json_texts(SKY_CLASSES), sky_codes[has_sky])
    write(b'  "classification": ' + classification + b',\n  "sky_class": ' + sky + b",\n")
    write(b'  "dark_intervals": ' + _json_dark_intervals(agenda, names[:count]) + b"\n}\n")


def _json_texts(words):
    import json

    from siderod.cli import textcols as tc

    return tc.text_table([json.dumps(w).encode() for w in words])


def _json_members(names, values, codes) -> bytes:
    """``{"name": value, ...}`` as ``json.dumps`` writes it, from a text table of quoted names (one
    row per member), a text table of JSON values and each member's row in it."""
    import numpy as np

    from siderod.cli import textcols as tc

    n = names.shape[0]
    if n == 0:
        return b"{}"
    last = np.zeros(n, dtype=np.int64)
    last[-1] = 1
    return b"{" + bytes(tc.join_rows([names, tc.constant(b": ", n), values[np.asarray(codes, dtype=np.int64)],
                                      tc.text_column([b", ", b""], last)])) + b"}"


def _json_dark_intervals(agenda, names) -> bytes:
    """``{"name": [["begin", "end"], ...], ...}`` for every target (sorted by target, then time).

    Rows of three shapes are laid out in output order - per target a head (``"name": [``), its
    intervals and a tail (``]``) - in one byte matrix whose NUL padding is then dropped.
    """
    import numpy as np

    from siderod.cli import textcols as tc

    count = names.shape[0]
    if count == 0:
        return b"{}"
    target = np.asarray(agenda.dark_target, dtype=np.int64)
    k = target.size
    bounds = np.searchsorted(target, np.arange(count + 1))
    more = np.zeros(k, dtype=np.int64)  # another interval of the same target follows
    more[:-1] = target[1:] == target[:-1]
    begin = tc.iso_column(np.round(agenda.dark_begin_unix * 1e6).astype(np.int64), millis=False)
    end = tc.iso_column(np.round(agenda.dark_end_unix * 1e6).astype(np.int64), millis=False)
    intervals = np.concatenate([tc.constant(b'["', k), begin, tc.constant(b'", "', k), end,
                                tc.constant(b'"]', k), tc.text_column([b"", b", "], more)], axis=1)
    heads = np.concatenate([tc.text_column([b", ", b""], (np.arange(count) == 0).astype(np.int64)), names,
                            tc.constant(b": [", count)], axis=1)
    width = max(intervals.shape[1], heads.shape[1])
    rows = np.zeros((2 * count + k, width), dtype=np.uint8)
    at = np.arange(count)
    rows[2 * at + bounds[:-1], :heads.shape[1]] = heads
    rows[2 * target + 1 + np.arange(k), :intervals.shape[1]] = intervals
    rows[2 * at + 1 + bounds[1:], 0] = ord("]")
    return b"{" + bytes(tc.drop_nul_bytes([rows])) + b"}"


_JSON_BLOCK = 16384  # events per block: ~5 MB of byte columns, reused by the allocator block after block
# (blocks of 65,536 rows, ~22 MB, came back as fresh pages each time: 100,000 page faults, 0.3 s)
_CLASSES = ("normal", "up-whole-window", "down-whole-window")  # siderod.plan.agenda.CLASSES, not imported
_CLASS_WORDS = {"up-whole-window": "up the whole window", "down-whole-window": "down the whole window"}


def _kinds():
    from siderod.plan.table import KINDS

    return KINDS


def _byte_writer(out):
    """A function writing bytes to the text stream ``out`` (to its buffer when it has one)."""
    buffer = getattr(out, "buffer", None)
    if buffer is not None:
        out.flush()
        return buffer.write
    return lambda data: out.write(bytes(data).decode())


def _print_table(agenda, config) -> None:
    """The agenda as a table on standard output.

    Piped or redirected, every row is printed (formatted as numpy columns: 800,000 events take
    about as long as ``--json``). On a terminal only the rows that fit the window are shown, with
    a line saying how many more there are and how to see them.
    """
    import shutil

    out = sys.stdout
    total = len(agenda.table)
    notes = _summary_lines(agenda)
    rows = None
    if out.isatty():
        height = shutil.get_terminal_size().lines
        rows = max(1, height - _TABLE_FRAME_LINES - len(notes))
    shown = total if rows is None or total <= rows else rows
    write = _byte_writer(out)
    hours = (agenda.end_utc - agenda.start_utc).total_seconds() / 3600
    write(f"{config.site.name}: {agenda.start_utc:%Y-%m-%d %H:%M} UTC + {hours:g} h\n\n".encode())
    for block in format_table_rows(agenda.table.take(slice(0, shown)), config.site.timezone):
        write(block)
    if not total:
        write(b"No events in this window (check --target/--kind).\n")
    elif shown < total:
        write(f"... and {total - shown} more events: pipe the output (| less) or use --json to see "
              "them all\n".encode())
    if notes:
        write(("\n".join(notes) + "\n").encode())


def _summary_lines(agenda) -> list[str]:
    """The lines under the table: the window's own state in words of ours, then "circumpolar" and
    "never rises" in their trade meaning only (latitude, declination, usable altitude)."""
    groups = []
    codes = agenda.class_codes.tolist()
    for code, words in _CLASS_WORDS.items():
        groups.append((words.capitalize(), sorted(n for n, c in zip(agenda.target_names, codes, strict=True)
                                                  if _CLASSES[c] == code)))
    for sky, words in (("circumpolar", "Circumpolar here (never below its usable altitude)"),
                       ("never-rises", "Never rises here (never above its usable altitude)")):
        groups.append((words, sorted(n for n, c in agenda.sky_classes.items() if c == sky)))
    lines = []
    for words, names in groups:
        if names:
            more = f" and {len(names) - _NAMES_SHOWN} more (--json lists them)" * (len(names) > _NAMES_SHOWN)
            lines.append(f"{words}: {', '.join(names[:_NAMES_SHOWN])}{more}")
    return lines


#: Lines of a terminal the table leaves for the title, header, rule, the "... more" line and the prompt.
_TABLE_FRAME_LINES = 6
#: Names listed in each summary line under the table.
_NAMES_SHOWN = 10
_HEADERS = (("Local", "<"), ("UTC", "<"), ("Event", "<"), ("Target", "<"), ("Alt°", ">"), ("Az°", ">"),
            ("HA h", ">"), ("Note", "<"))
_WEEKDAYS = (b"Mon", b"Tue", b"Wed", b"Thu", b"Fri", b"Sat", b"Sun")


def format_table_rows(table, timezone: str):
    """Header, rule and one line per event, from the event columns: an iterator of UTF-8 blocks.

    Columns: local time (weekday, HH:MM, zone), UTC, kind, target, altitude, azimuth, hour angle
    and a note with what the other columns do not say. Rows are formatted as numpy byte columns in
    blocks; every column but the last is padded with spaces to a width fixed for the whole table.
    """
    import numpy as np

    from siderod.cli import textcols as tc
    from siderod.plan.table import KINDS

    # Targets and kinds present (bincount: one pass, no sort or hash of 800,000 rows).
    present = np.flatnonzero(np.bincount(table.target[table.target >= 0], minlength=len(table.names)))
    name_width = max((len(table.names[j]) for j in present.tolist()), default=0)
    target_texts = [b""] * (len(table.names) + 1)
    for j in present.tolist():
        target_texts[j] = table.names[j].ljust(name_width).encode()
    targets = tc.text_table(target_texts, pad=tc.SPACE)
    present_kinds = np.flatnonzero(np.bincount(table.kind, minlength=len(KINDS))).tolist()
    kind_width = max((len(KINDS[k].value) for k in present_kinds), default=0)
    # Only the kinds in the table are padded: a longer absent kind would widen the column past the header's.
    kinds = tc.text_table([k.value.ljust(kind_width).encode() if code in present_kinds else b""
                           for code, k in enumerate(KINDS)], pad=tc.SPACE)

    def span(values, decimals, plus=False):
        finite = values[np.isfinite(values)]
        ends = np.array([finite.min(), finite.max()]) if finite.size else np.zeros(0)
        return tc.decimal_column(ends, decimals, plus=plus, null=b"").shape[1]

    az = np.round(table.azimuth_deg, 1) % 360.0
    numbers = [span(table.altitude_deg, 1), span(az, 1), span(table.hour_angle_hours, 2, plus=True)]
    local_width = 10 + max((len(a) for a in _zone_names(table, timezone)), default=0)
    widths = [max(len(h), w) for (h, _), w in zip(
        _HEADERS, [local_width, 8, kind_width, name_width, *numbers, 0], strict=True)]
    head = "  ".join(h.ljust(w) if a == "<" else h.rjust(w)
                     for (h, a), w in zip(_HEADERS, widths, strict=True))
    yield (" " + head.rstrip() + "\n" + " " + "─" * (sum(widths[:-1]) + 2 * (len(widths) - 1) + 16)
           + "\n").encode()
    # A beam event's source, by name index: made once, not per block (1e5 names).
    sources = tc.text_table([n.encode() for n in table.names] + [b""]) if np.any(table.beam_source >= 0) \
        else tc.text_table([b""])
    for first in range(0, len(table), _TABLE_BLOCK):
        part = table.take(slice(first, first + _TABLE_BLOCK))
        yield _table_block(part, timezone, widths, targets, kinds, az[first:first + _TABLE_BLOCK], sources)


_TABLE_BLOCK = 65536


def _zone_names(table, timezone):
    from zoneinfo import ZoneInfo

    from siderod.cli import textcols as tc

    return tc.local_time_parts(table.time_microseconds() // 1_000_000, ZoneInfo(timezone))[2]


def _table_block(part, timezone, widths, targets, kinds, az, sources) -> bytes:
    from zoneinfo import ZoneInfo

    import numpy as np

    from siderod.cli import textcols as tc
    from siderod.common.model import EventKind
    from siderod.plan.table import KIND_CODES

    n = len(part)
    sp = tc.SPACE
    c = tc.constant
    secs = part.time_microseconds() // 1_000_000
    offsets, abbr, abbr_names = tc.local_time_parts(secs, ZoneInfo(timezone))
    local = secs + offsets
    fields = tc.civil_fields(local)
    zones = tc.text_table([a.encode() for a in abbr_names] or [b""], pad=sp)
    local_col = np.concatenate([tc.text_table(_WEEKDAYS)[fields["weekday"]], c(b" ", n),
                                tc.hhmmss_column(local - (local // 86400) * 86400, seconds=False), c(b" ", n),
                                zones[abbr]], axis=1)
    ha = tc.decimal_column(part.hour_angle_hours, 2, pad=sp, plus=True, null=b"")
    columns = [local_col, tc.hhmmss_column(secs - (secs // 86400) * 86400), kinds[part.kind],
               targets[part.target], tc.decimal_column(part.altitude_deg, 1, pad=sp),
               tc.decimal_column(az, 1, pad=sp), ha]
    # The note (last column, NUL-padded so a row ends where its text does): a fixed text by kind,
    # "through 30.0°" or "28% lit", each after the two-space column gap.
    texts = [b"", b"  usable", b"  below its limit", b"  flip the mount", b"  at mount limit"]
    code = np.zeros(n, dtype=np.int64)
    culm = np.isin(part.kind, [KIND_CODES[EventKind.CULMINATION], KIND_CODES[EventKind.LOWER_CULMINATION]])
    code[culm] = np.where(part.usable[culm] == 1, 1, 2)
    code[part.kind == KIND_CODES[EventKind.FLIP_DUE]] = 3
    code[part.kind == KIND_CODES[EventKind.TRACKING_LIMIT]] = 4
    through = ~np.isnan(part.threshold_deg) & (code == 0)
    moon = ~np.isnan(part.moon_illuminated_fraction) & (code == 0) & ~through
    choice = np.where(through, 1, np.where(moon, 2, 0))
    through_col = np.concatenate([c(b"  through ", n), tc.decimal_column(part.threshold_deg, 1),
                                  c("°".encode(), n)], axis=1)
    moon_col = np.concatenate([c(b"  ", n), tc.decimal_column(part.moon_illuminated_fraction * 100.0, 0),
                               c(b"% lit", n)], axis=1)
    # Beam events: the source and its declination offset from the beam's axis.
    beam = part.beam_source >= 0
    choice = np.where(beam, 3, choice)
    offset = np.nan_to_num(part.beam_offset_deg)
    beam_col = np.concatenate([c(b"  ", n), sources[part.beam_source], c(b", ", n),
                               tc.decimal_column(np.abs(offset), 2), c("° ".encode(), n),
                               tc.text_table([b"N", b"S"])[(offset < 0).astype(np.int64)],
                               c(b" of the axis", n)], axis=1)
    note = tc.pick(choice, [tc.text_table(texts)[code], through_col, moon_col, beam_col])
    parts = [c(b" ", n)]
    for (_, align), w, col in zip(_HEADERS, widths, columns, strict=False):
        col = np.where(col == tc.NUL, np.uint8(sp), col)
        extra = c(b" " * (w - col.shape[1]), n)
        parts += [col, extra] if align == "<" else [extra, col]
        parts.append(c(b"  ", n))
    parts[-1] = note
    parts.append(c(b"\n", n))
    return tc.join_rows(parts)


def format_ics(agenda, config, *, stamp_utc) -> str:
    """The agenda as an RFC 5545 calendar, written by the ``icalendar`` library (see ``siderod.cli.ics``).

    Args:
        agenda: the computed agenda.
        config: for the site name.
        stamp_utc: DTSTAMP for every event (the window start keeps the output reproducible).
    """
    import io

    from siderod.cli.ics import write_ics

    buffer = io.BytesIO()
    write_ics(agenda, config, buffer, stamp_utc=stamp_utc)
    return buffer.getvalue().decode("utf-8")
