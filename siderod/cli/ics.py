"""The agenda as an iCalendar (RFC 5545) file, written with the ``icalendar`` library.

Two writers give the same bytes:

* :func:`calendar_for` builds an ``icalendar.Calendar`` with one ``Event`` component per event and
  lets the library escape, fold and format every value. It is the reference, and what small
  agendas use.
* :func:`write_ics` streams big agendas. Building 800,000 component objects takes minutes, so it
  asks the library once for everything that does not change from event to event (the calendar
  head, the property order, how a UTC time, the stamp and each distinct text are written), then
  lays the events out as numpy byte columns. Lines are folded as the library folds them
  (``icalendar.parser.Contentline.to_ical``); a line the column folding cannot do exactly (one with non-ASCII
  text, or an escape at a fold point) is folded by the library itself. Tests check that both give
  identical bytes.

UIDs are stable across runs (target, kind and time to the second), so re-importing an agenda
updates events rather than duplicating them. Every event is an instant: a DTSTART in UTC and no
DTEND (RFC 5545 §3.6.1: such an event ends when it starts).
"""

from __future__ import annotations

import re
from datetime import UTC, datetime

import numpy as np

from siderod.cli import textcols as tc

__all__ = ["LIBRARY_MAX_EVENTS", "calendar_for", "event_note", "event_texts", "write_ics"]

#: Up to this many events the calendar is built from library components (the reference writer).
LIBRARY_MAX_EVENTS = 2000
_BLOCK = 16384  # events per block of the streaming writer: ~5 MB, reused block after block (bigger
# blocks came back from the allocator as fresh pages each time: 100,000 page faults for 1e5 targets)
# icalendar's content-line folding starts a new line before the octet that would make a line 75 long,
# and a continuation line holds 74 octets after its leading space.
_FOLD = 74
_CRLF = b"\r\n"
_PRODID = "-//siderod//agenda//EN"


def event_texts(kind: str, who: str, when_utc: datetime, altitude_deg: float, azimuth_deg: float,
                note: str) -> dict[str, str]:
    """The text values of one event (before escaping): uid, summary, description."""
    stamp = when_utc.strftime("%Y%m%dT%H%M%SZ")
    # What and when are in SUMMARY and DTSTART already: the description adds where and the note.
    detail = f"altitude {_tenths(altitude_deg)} deg, azimuth {_tenths(round(azimuth_deg, 1) % 360.0)} deg"
    if note:
        detail += f"; {note}"
    return {"uid": f"{stamp}-{kind}-{_uid_safe(who)}@siderod", "summary": f"{who}: {kind}",
            "description": detail}


def event_note(event) -> str:
    """The kind-specific value of one event, as the calendar's description ends."""
    from siderod.common.model import EventKind

    kind = event.kind
    if event.beam_source is not None:
        offset = round(event.beam_offset_deg or 0.0, 2) + 0.0
        return f"{event.beam_source} {abs(offset):.2f} deg {'S' if offset < 0 else 'N'} of the axis"
    if kind in (EventKind.CULMINATION, EventKind.LOWER_CULMINATION):
        return "usable" if event.usable else "below its limit"
    if kind in (EventKind.HOUR_ANGLE, EventKind.FLIP_DUE, EventKind.TRACKING_LIMIT):
        text = f"HA {round(event.mark_hours, 2) + 0.0:+.2f} h"
        if kind is EventKind.TRACKING_LIMIT:
            text += " - check the mount's own limits"
        return text
    if kind in (EventKind.MOONRISE, EventKind.MOONSET) and event.moon_illuminated_fraction is not None:
        return f"{event.moon_illuminated_fraction * 100:.0f}% lit"
    if event.threshold_deg is not None:
        return f"through {_tenths(event.threshold_deg)} deg"
    return ""


def calendar_for(agenda, config, *, stamp_utc: datetime) -> bytes:
    """The reference writer: one library component per event (see the module docstring)."""
    import icalendar

    calendar = _calendar_head(config)
    for e in agenda.events:
        when = e.time_utc.replace(microsecond=0)
        calendar.add_component(_component(e.kind.value, _who(e.target, e.kind.value), when,
                                          stamp_utc, e.altitude_deg, e.azimuth_deg, event_note(e),
                                          config.site.name, icalendar))
    return calendar.to_ical()


def _tenths(value: float) -> str:
    return f"{round(value, 1) + 0.0:.1f}"  # + 0.0: never "-0.0"


def write_ics(agenda, config, out, *, stamp_utc: datetime) -> None:
    """Write the agenda's calendar to the binary stream ``out`` (streaming for big agendas)."""
    from siderod.common.model import EventKind
    from siderod.plan.table import KIND_CODES, KINDS

    table = agenda.table
    if len(table) <= LIBRARY_MAX_EVENTS:
        out.write(calendar_for(agenda, config, stamp_utc=stamp_utc))
        return
    import icalendar
    from icalendar.parser import Contentline

    head = _calendar_head(config).to_ical()
    end = b"END:VCALENDAR\r\n"
    out.write(head[: -len(end)])
    # One component through the library tells the property order and how each value is written.
    sample = _component("culmination", "x", datetime(2000, 1, 1, tzinfo=UTC), stamp_utc, 0.0, 0.0, "n",
                        config.site.name, icalendar)
    raw = sample.to_ical().replace(b"\r\n ", b"\0")  # keep folded lines whole while splitting
    sample_lines = [line.replace(b"\0", b"\r\n ") for line in raw.split(_CRLF) if line]
    order = [line.split(b":", 1)[0].split(b";", 1)[0] for line in sample_lines]
    constant = {name: line for name, line in zip(order, sample_lines, strict=True)
                if name in (b"BEGIN", b"END", b"DTSTAMP", b"LOCATION", b"TRANSP")}
    moon_codes = [KIND_CODES[EventKind.MOONRISE], KIND_CODES[EventKind.MOONSET]]
    kinds = [k.value for k in KINDS]
    whos = list(table.names) + ["Sun", "Moon"]
    # One match for every name (one a line; no name may hold a line break itself), in the usual
    # case that none needs escaping or a change for its UID.
    joined = "\n".join(whos)
    one_a_line = joined.count("\n") == len(whos) - 1
    plain = [w.encode() for w in whos] if one_a_line else None
    escaped = plain if plain and _PLAIN_TEXT_LINES.fullmatch(joined) else [_escape(w) for w in whos]
    uids = plain if plain and _PLAIN_UID_LINES.fullmatch(joined) else [_uid_safe(w).encode() for w in whos]
    esc_who, esc_len = tc.text_table(escaped), np.array([len(b) for b in escaped])
    sources = tc.text_table(escaped[:len(table.names)] + [b""])  # a beam event's source; -1: none
    uid_who, uid_len = tc.text_table(uids), np.array([len(b) for b in uids])
    kind_text, kind_len = tc.text_table([k.encode() for k in kinds]), np.array([len(k) for k in kinds])
    # Only names can make a folded line non-ASCII (the library then folds it; the constant lines
    # are the library's own already): flag them once instead of scanning every row's bytes.
    wide_who = np.array([not (e.isascii() and u.isascii()) for e, u in zip(escaped, uids, strict=True)])
    wide_source = np.append(wide_who[:len(table.names)], False)

    for first in range(0, len(table), _BLOCK):
        rows = slice(first, first + _BLOCK)
        part = table.take(rows)
        n = len(part)
        micros = part.time_microseconds()
        secs = micros // 1_000_000
        sky_who = np.where(np.isin(part.kind, moon_codes), len(whos) - 1, len(whos) - 2)
        who = np.where(part.target >= 0, part.target, sky_who)
        compact = tc.iso_column(secs * 1_000_000, millis=False, date_sep=b"", time_sep=b"")
        kind = part.kind

        def c(text, n=n):  # a constant part and its length
            return tc.constant(text, n), len(text)

        def counted(col):  # a NUL-padded part and its length per row
            return col, np.count_nonzero(col, axis=1)

        lines = {
            b"UID": [c(b"UID:"), (compact, 16), c(b"-"), (kind_text[kind], kind_len[kind]), c(b"-"),
                     (uid_who[who], uid_len[who]), c(b"@siderod")],
            b"DTSTART": [c(b"DTSTART:"), (compact, 16)],
            b"SUMMARY": [c(b"SUMMARY:"), (esc_who[who], esc_len[who]), c(b": "),
                         (kind_text[kind], kind_len[kind])],
            b"DESCRIPTION": [c(b"DESCRIPTION:altitude "), counted(tc.decimal_column(part.altitude_deg, 1)),
                             c(b" deg\\, azimuth "),
                             counted(tc.decimal_column(np.round(part.azimuth_deg, 1) % 360.0, 1)), c(b" deg"),
                             counted(_note_columns(part, sources))],
        }
        columns = []
        spans = []  # (start in the row, length) of each line the library might fold, in output bytes
        done = np.zeros(n, dtype=np.int64)  # output bytes of the row so far
        for name in order:
            if name in constant:
                columns.append(tc.constant(constant[name] + _CRLF, n))
                done = done + len(constant[name]) + 2
                continue
            length = sum(size for _, size in lines[name])
            spans.append((done, length))
            columns += [np.asarray(p, dtype=np.uint8) for p, _ in lines[name]]
            columns.append(tc.constant(_CRLF, n))
            done = done + length + 2
        slow = wide_who[who] | wide_source[part.beam_source]
        if not slow.any():  # the usual case: every row folded from the columns, no block copy
            out.write(_fold_rows(columns, done, _rows(spans, n)))
            continue
        block = np.concatenate(columns, axis=1)
        # Runs of rows: the column folding for ASCII rows, the library for the others.
        edges = np.flatnonzero(np.diff(slow.astype(np.int8))) + 1
        for a, b in zip([0, *edges.tolist()], [*edges.tolist(), n], strict=True):
            if not slow[a]:
                out.write(_fold_rows([block[a:b]], done[a:b], [(s[a:b], z[a:b]) for s, z in _rows(spans, n)]))
                continue
            for i in range(a, b):
                parts = []
                for name in order:
                    if name in constant:
                        parts.append(constant[name])
                    else:
                        row = np.concatenate([np.asarray(p, dtype=np.uint8)[i] for p, _ in lines[name]])
                        parts.append(Contentline(bytes(row[row != 0]).decode()).to_ical())
                out.write(_CRLF.join(parts) + _CRLF)
    out.write(end)


def _calendar_head(config):
    import icalendar

    calendar = icalendar.Calendar()
    calendar.add("version", "2.0")
    calendar.add("prodid", _PRODID)
    calendar.add("calscale", "GREGORIAN")
    calendar.add("method", "PUBLISH")
    calendar.add("x-wr-calname", f"siderod: {config.site.name}")
    return calendar


def _component(kind, who, when_utc, stamp_utc, altitude_deg, azimuth_deg, note, site_name, icalendar):
    texts = event_texts(kind, who, when_utc, altitude_deg, azimuth_deg, note)
    event = icalendar.Event()
    event.add("uid", texts["uid"])
    event.add("dtstamp", stamp_utc.astimezone(UTC).replace(microsecond=0))
    event.add("dtstart", when_utc)
    event.add("summary", texts["summary"])
    event.add("description", texts["description"])
    event.add("location", site_name)
    event.add("transp", "TRANSPARENT")
    return event


def _who(target, kind_value):
    return target or ("Moon" if kind_value.startswith("moon") else "Sun")


def _uid_safe(value: str) -> str:
    if _PLAIN_UID.fullmatch(value):
        return value  # the common case, without a pass per character
    return "".join(ch if ch.isalnum() or ch in "-_." else "-" for ch in value)


def _escape(text: str) -> bytes:
    """A TEXT value escaped by the library (RFC 5545 §3.3.11); plain ASCII text needs none."""
    if _PLAIN_TEXT.fullmatch(text):
        return text.encode()
    import icalendar

    return icalendar.vText(text).to_ical()


_PLAIN_UID = re.compile(r"[A-Za-z0-9_.-]*")
_PLAIN_TEXT = re.compile(r"[A-Za-z0-9 _.:'()+/*#&!?=@<>\[\]{}|~%$-]*")
_PLAIN_UID_LINES = re.compile(r"[A-Za-z0-9_.\n-]*")  # the same, for names one a line
_PLAIN_TEXT_LINES = re.compile(r"[A-Za-z0-9 _.:'()+/*#&!?=@<>\[\]{}|~%$\n-]*")


def _note_columns(table, sources=None) -> np.ndarray:
    """Per event, ``\\; <note>`` (escaped) or nothing: the kind-specific value, as for the table.

    Each kind of note is formatted for its own rows only (NUL-padded to a common width).
    ``sources``: the escaped target names as a text table (last row empty), when already made.
    """
    from siderod.common.model import EventKind
    from siderod.plan.table import KIND_CODES

    n = len(table)
    c = tc.constant
    kind = table.kind
    culm = np.isin(kind, [KIND_CODES[EventKind.CULMINATION], KIND_CODES[EventKind.LOWER_CULMINATION]])
    marks = np.isin(kind, [KIND_CODES[k] for k in (EventKind.HOUR_ANGLE, EventKind.FLIP_DUE,
                                                      EventKind.TRACKING_LIMIT)])
    moon_codes = [KIND_CODES[EventKind.MOONRISE], KIND_CODES[EventKind.MOONSET]]
    moon = np.isin(kind, moon_codes) & ~np.isnan(table.moon_illuminated_fraction)
    through = ~np.isnan(table.threshold_deg) & ~culm & ~marks & ~moon
    beam = table.beam_source >= 0
    notes = []  # (rows, their note column)

    def rows_of(mask):
        rows = np.flatnonzero(mask)
        return (rows, table.take(rows)) if rows.size else (rows, None)

    rows, sub = rows_of(culm & ~beam)
    if sub is not None:
        fixed = tc.text_table([b"\\; usable", b"\\; below its limit"])
        notes.append((rows, fixed[(sub.usable != 1).astype(np.int64)]))
    rows, sub = rows_of(marks & ~culm & ~beam)
    if sub is not None:
        m = rows.size
        limit = sub.kind == KIND_CODES[EventKind.TRACKING_LIMIT]
        caution = tc.text_table([b"", b" - check the mount's own limits"])[limit.astype(np.int64)]
        notes.append((rows, np.concatenate([c(b"\\; HA ", m), tc.decimal_column(sub.mark_hours, 2, plus=True),
                                            c(b" h", m), caution], axis=1)))
    rows, sub = rows_of(moon & ~culm & ~marks & ~beam)
    if sub is not None:
        m = rows.size
        notes.append((rows, np.concatenate([c(b"\\; ", m),
                                            tc.decimal_column(sub.moon_illuminated_fraction * 100.0, 0),
                                            c(b"% lit", m)], axis=1)))
    rows, sub = rows_of(through & ~beam)
    if sub is not None:
        m = rows.size
        notes.append((rows, np.concatenate([c(b"\\; through ", m), tc.decimal_column(sub.threshold_deg, 1),
                                            c(b" deg", m)], axis=1)))
    rows, sub = rows_of(beam)
    if sub is not None:  # the source and its declination offset from the beam's axis
        m = rows.size
        if sources is None:
            sources = tc.text_table([_escape(name) for name in table.names] + [b""])
        offset = np.nan_to_num(sub.beam_offset_deg)
        notes.append((rows, np.concatenate([c(b"\\; ", m), sources[sub.beam_source], c(b" ", m),
                                            tc.decimal_column(np.abs(offset), 2), c(b" deg ", m),
                                            tc.text_table([b"N", b"S"])[(offset < 0).astype(np.int64)],
                                            c(b" of the axis", m)], axis=1)))
    out = np.zeros((n, max((col.shape[1] for _, col in notes), default=0)), dtype=np.uint8)
    for rows, col in notes:
        out[rows, :col.shape[1]] = col
    return out


def _rows(spans, n):
    return [(np.broadcast_to(start, (n,)), np.broadcast_to(length, (n,))) for start, length in spans]


def _fold_rows(columns: list[np.ndarray], row_bytes, spans) -> bytes:
    """The rows of the columns laid side by side (NUL-padded, ASCII) as bytes, each content line
    folded as icalendar's ``Contentline.to_ical`` folds it.

    The library cuts a line before the octet that would make it 75 long, and each continuation
    holds 74 octets after its space; a backslash or caret that would end a piece moves to the next
    one (escapes are kept whole). ``row_bytes`` is each row's length without NULs and ``spans``
    gives each foldable line's start in its row and length, so the cuts are found for all rows at
    once in the row's bytes laid end to end.
    """
    data = tc.drop_nul_bytes(columns)
    flat = np.frombuffer(data, dtype=np.uint8)
    row_start = np.concatenate([[0], np.cumsum(row_bytes)[:-1]])
    cuts = []
    for line_start, length in spans:
        start = row_start + line_start
        end = start + length
        while True:
            cut = start + _FOLD
            more = cut < end
            if not more.any():
                break
            cut, end = cut[more], end[more]
            last = flat[cut - 1]
            cut = cut - ((last == ord("\\")) | (last == ord("^")))
            cuts.append(cut)
            start = cut
    if not cuts:
        return data
    bounds = [0, *np.sort(np.concatenate(cuts)).tolist(), len(data)]
    return b"\r\n ".join([data[a:b] for a, b in zip(bounds[:-1], bounds[1:], strict=True)])
