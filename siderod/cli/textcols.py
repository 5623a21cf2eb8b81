"""Text for many rows at once: numbers, names and times formatted as numpy byte columns.

A big agenda has about 800,000 events; formatting them one Python string at a time costs several
seconds. Here each column is built for every row at once as an ``(N, width)`` uint8 array, the
columns are laid side by side, and the rows are written out in one ``tobytes()``.

Padding is one byte, given per call: a space where columns must line up (tables), or NUL where
every row should be only as long as its content; :func:`join_rows` drops every NUL byte, so a
NUL-padded row comes out as if each value had been formatted on its own (JSON, iCalendar). No
column may contain a real NUL byte (text from configuration files never does: TOML forbids it).
"""

from __future__ import annotations

import json
from collections.abc import Sequence

import numpy as np

__all__ = [
    "NUL",
    "SPACE",
    "civil_fields",
    "compact",
    "constant",
    "decimal_column",
    "digits_column",
    "drop_nul_bytes",
    "hhmmss_column",
    "iso_column",
    "join_rows",
    "json_strings",
    "pick",
    "sexagesimal_column",
    "text_column",
    "text_table",
]

NUL = 0
SPACE = 0x20
_ZERO = 0x30
_MINUS = 0x2D
_PLUS = 0x2B
_DOT = 0x2E


def constant(text: bytes | str, rows: int) -> np.ndarray:
    """The same bytes on every row: an ``(rows, len)`` read-only view, no copy."""
    data = np.frombuffer(text.encode() if isinstance(text, str) else text, dtype=np.uint8)
    return np.broadcast_to(data, (rows, data.size))


def digits_column(values, width: int) -> np.ndarray:
    """Non-negative integers, zero-padded to ``width`` digits (``7`` -> ``b"07"``); ``(N, width)``."""
    v = np.asarray(values, dtype=np.int64).reshape(-1)
    if width <= _TABLE_DIGITS:  # one look-up per row in a table of every value (values < 10**width)
        return _digit_table(width)[v]
    out = np.empty((v.size, width), dtype=np.uint8)
    col = width
    while col >= 2:  # two digits per step, from a 100-entry table
        out[:, col - 2:col] = _PAIRS[v % 100]
        v = v // 100
        col -= 2
    if col == 1:
        out[:, 0] = _ZERO + v % 10
    return out


_PAIRS = np.array([[_ZERO + i // 10, _ZERO + i % 10] for i in range(100)], dtype=np.uint8)
#: Up to this many digits a column is one look-up in a table of every value (10**5 rows of 5 bytes).
_TABLE_DIGITS = 5
_DIGIT_TABLES: dict[int, np.ndarray] = {}
_SIGNED_TABLES: dict[tuple[int, int, bool], np.ndarray] = {}


def _digit_table(width: int) -> np.ndarray:
    """Row k: k zero-padded to ``width`` digits, for every k < 10**width."""
    table = _DIGIT_TABLES.get(width)
    if table is None:
        v = np.arange(10 ** width, dtype=np.int64)
        table = np.empty((v.size, width), dtype=np.uint8)
        for col in range(width - 1, -1, -1):
            table[:, col] = _ZERO + v % 10
            v //= 10
        _DIGIT_TABLES[width] = table
    return table


def _signed_table(digits: int, pad: int, plus: bool) -> np.ndarray:
    """Rows k and 10**digits + k: the integer part k right-aligned in ``digits + 1`` bytes after its
    sign (``-`` in the second half, ``+`` or padding in the first), no leading zeros, padded left."""
    key = (digits, pad, plus)
    table = _SIGNED_TABLES.get(key)
    if table is None:
        size = 10 ** digits
        v = np.arange(size, dtype=np.int64)
        count = np.ones(size, dtype=np.int64)  # digits shown: at least one
        for k in range(1, digits):
            count += v >= 10 ** k
        body = np.full((size, digits + 1), pad, dtype=np.uint8)
        shown = np.arange(digits) >= (digits - count)[:, None]
        body[:, 1:] = np.where(shown, _digit_table(digits)[v], np.uint8(pad))
        negative = body.copy()
        rows = np.arange(size)
        negative[rows, digits - count] = _MINUS
        if plus:
            body[rows, digits - count] = _PLUS
        table = np.concatenate([body, negative])
        _SIGNED_TABLES[key] = table
    return table


def decimal_column(values, decimals: int, *, pad: int = NUL, plus: bool = False, null: bytes = b"null",
                   wrap: float | None = None) -> np.ndarray:
    """Numbers rounded to ``decimals`` places, right-aligned in an ``(N, width)`` array.

    Rounding is half to even on the scaled value (``np.rint``), the way ``f"{x:.3f}"`` rounds all
    but a few exact binary ties. Zero is never signed (no ``-0.000``); ``plus`` writes ``+`` before
    non-negative values. NaN becomes ``null`` (right-aligned too).

    Args:
        values: (N,) floats; |value| below 1e15 / 10**decimals.
        decimals: digits after the point (0: no point).
        pad: the padding byte on the left.
        plus: sign every non-negative value with ``+``.
        null: the text for NaN.
        wrap: if given, a rounded value >= ``wrap`` is written as 0 (azimuth 359.9999 -> 0.000).
    """
    x = np.asarray(values, dtype=float).reshape(-1)
    n = x.size
    missing = np.isnan(x)
    any_missing = bool(missing.any())
    if any_missing and missing.all():  # a column that does not apply to any of these rows
        width = max(2 + (1 + decimals if decimals else 0), len(null))  # as for a column of zeros
        return constant(bytes([pad]) * (width - len(null)) + null, n)
    scaled = np.rint((np.where(missing, 0.0, x) if any_missing else x) * 10.0 ** decimals).astype(np.int64)
    if wrap is not None:
        scaled[scaled >= round(wrap * 10 ** decimals)] = 0
    negative = scaled < 0
    mag = np.abs(scaled)
    int_part = mag // 10 ** decimals
    top = int(int_part.max()) if n else 0
    int_digits = len(str(top))
    width = max(1 + int_digits + (1 + decimals if decimals else 0), len(null))
    if n == 0:
        return np.full((n, width), pad, dtype=np.uint8)
    stop = width - (1 + decimals if decimals else 0)  # just after the units digit
    if int_digits <= _TABLE_DIGITS - 1 and decimals <= _TABLE_DIGITS:
        # The common case, three look-ups a row: sign and integer part, the point, the fraction.
        index = int_part + negative * 10 ** int_digits
        parts = [_signed_table(int_digits, pad, plus)[index]]
        if stop - int_digits - 1 > 0:
            parts.insert(0, np.full((n, stop - int_digits - 1), pad, dtype=np.uint8))
        if decimals:
            parts += [constant(b".", n), _digit_table(decimals)[mag - int_part * 10 ** decimals]]
        out = np.concatenate(parts, axis=1) if len(parts) > 1 else parts[0]
    else:
        out = np.full((n, width), pad, dtype=np.uint8)
        if decimals:
            out[:, width - decimals:] = digits_column(mag % 10 ** decimals, decimals)
            out[:, width - decimals - 1] = _DOT
        digits = digits_column(int_part, int_digits)
        # How many integer digits each row has (at least one), to blank the leading zeros.
        count = np.ones(n, dtype=np.int64)
        for k in range(1, int_digits):
            count += int_part >= 10 ** k
        shown = np.arange(int_digits) >= (int_digits - count)[:, None]
        out[:, stop - int_digits:stop] = np.where(shown, digits, np.uint8(pad))
        rows = np.flatnonzero(negative)
        out[rows, stop - 1 - count[rows]] = _MINUS
        if plus:
            rows = np.flatnonzero(~negative)
            out[rows, stop - 1 - count[rows]] = _PLUS
    if any_missing:
        null_row = np.full(width, pad, dtype=np.uint8)
        null_row[width - len(null):] = np.frombuffer(null, dtype=np.uint8)
        out = np.where(missing[:, None], null_row, out)
    return out


def text_table(texts: Sequence[bytes], *, pad: int = NUL) -> np.ndarray:
    """Byte strings as the rows of an ``(M, width)`` array, padded on the right (index it per row)."""
    width = max(1, max(map(len, texts), default=0))
    table = np.array(list(texts), dtype=f"S{width}").view(np.uint8).reshape(len(texts), width)
    if pad != NUL:
        table = np.where(table == NUL, np.uint8(pad), table)
    return table


def text_column(texts: Sequence[bytes], index, *, pad: int = NUL) -> np.ndarray:
    """Per row, one of some byte strings: ``texts[index[i]]``, padded on the right; ``(N, width)``."""
    return text_table(texts, pad=pad)[np.asarray(index, dtype=np.int64)]


def json_strings(texts: Sequence[str]) -> list[bytes]:
    """Each text as a JSON string literal (quotes included), in one pass of the C encoder."""
    if not texts:
        return []
    joined = json.dumps(list(texts))
    # Inside an encoded string every quote is escaped, so '", "' only ever separates two items.
    return [f'"{piece}"'.encode() for piece in joined[2:-2].split('", "')]


def pick(choice, columns: Sequence[np.ndarray], *, pad: int = NUL) -> np.ndarray:
    """Per row ``i``, the row of ``columns[choice[i]]`` (widths may differ: padded on the right)."""
    choice = np.asarray(choice, dtype=np.int64)
    width = max((c.shape[1] for c in columns), default=0)
    out = np.full((choice.size, width), pad, dtype=np.uint8)
    for k, col in enumerate(columns):
        rows = choice == k
        out[rows, :col.shape[1]] = col[rows]
    return out


def join_rows(columns: Sequence[np.ndarray], *, drop_nul: bool = True) -> bytes | bytearray:
    """Lay the columns side by side and return the rows as one bytes object (NULs dropped: then a
    ``bytearray``, which every writer and ``bytes`` concatenation take as it is)."""
    if not drop_nul:
        return np.concatenate([np.asarray(c, dtype=np.uint8) for c in columns], axis=1).tobytes()
    return drop_nul_bytes(columns)


def drop_nul_bytes(columns: Sequence[np.ndarray]) -> bytearray:
    """The rows of the columns laid side by side, as bytes without their NUL bytes.

    The columns are laid straight into a ``bytearray`` (no copy out of numpy), and
    ``bytearray.translate`` deletes the NULs in one table-driven pass: about 3x ``bytes.replace``
    (which searches for each NUL in turn) and 4x a boolean mask on rows with ~40 NULs each.
    """
    parts = [np.asarray(c, dtype=np.uint8) for c in columns]
    rows = parts[0].shape[0] if parts else 0
    width = sum(p.shape[1] for p in parts)
    buffer = bytearray(rows * width)
    if rows and width:
        block = np.frombuffer(buffer, dtype=np.uint8).reshape(rows, width)
        # The constant columns (views of one row, see constant()) go in as one template row copied
        # to every row; then only the columns that vary are copied in, one by one.
        template = np.zeros(width, dtype=np.uint8)
        varying = []
        at = 0
        for part in parts:
            w = part.shape[1]
            if part.strides[0] == 0:
                template[at:at + w] = part[0]
            else:
                varying.append((at, w, part))
            at += w
        block[:] = template
        for at, w, part in varying:
            block[:, at:at + w] = part
    return buffer.translate(None, b"\0")


def civil_fields(unix_seconds) -> dict[str, np.ndarray]:
    """Calendar fields of whole POSIX seconds (proleptic Gregorian, no leap seconds), vectorised.

    Returns a dict of int64 arrays: ``year, month, day, hour, minute, second, weekday`` (Monday 0).
    The days-to-civil step is the well-known era/day-of-era conversion for the proleptic Gregorian
    calendar (H. Hinnant, "chrono-compatible low-level date algorithms").
    """
    secs = np.asarray(unix_seconds, dtype=np.int64)
    days = secs // 86400
    rest = secs - days * 86400
    z = days + 719468
    era = z // 146097
    doe = z - era * 146097
    yoe = (doe - doe // 1460 + doe // 36524 - doe // 146096) // 365
    doy = doe - (365 * yoe + yoe // 4 - yoe // 100)
    mp = (5 * doy + 2) // 153
    day = doy - (153 * mp + 2) // 5 + 1
    month = np.where(mp < 10, mp + 3, mp - 9)
    year = yoe + era * 400 + (month <= 2)
    return {"year": year, "month": month, "day": day, "hour": rest // 3600, "minute": rest // 60 % 60,
            "second": rest % 60, "weekday": (days + 3) % 7}


def iso_column(micros, *, millis: bool = True, date_sep: bytes = b"-", time_sep: bytes = b":",
               t: bytes = b"T", zone: bytes = b"Z") -> np.ndarray:
    """UTC instants (int64 POSIX microseconds) as ISO 8601 text, truncated to the millisecond or
    the second: ``2026-12-14T22:03:07.600Z``; the separators can be changed (``20261214T220307Z``).

    The date, the time of day and the milliseconds each come from a small table built once (the
    days in the span, 86,400 seconds, 1,000 milliseconds), so a row costs three lookups.
    """
    micros = np.asarray(micros, dtype=np.int64).reshape(-1)
    n = micros.size
    secs = micros // 1_000_000
    days = secs // 86400
    first = int(days.min()) if n else 0
    span = np.arange(first, (int(days.max()) if n else first) + 1, dtype=np.int64)
    f = civil_fields(span * 86400)
    date_table = np.concatenate([digits_column(f["year"], 4), constant(date_sep, span.size),
                                 digits_column(f["month"], 2), constant(date_sep, span.size),
                                 digits_column(f["day"], 2), constant(t, span.size)], axis=1)
    parts = [date_table[days - first], _time_of_day_table(time_sep)[secs - days * 86400]]
    if millis:
        parts += [constant(b".", n), _MILLIS[(micros - secs * 1_000_000) // 1000]]
    parts.append(constant(zone, n))
    return np.concatenate(parts, axis=1)


def hhmmss_column(seconds_of_day, *, seconds: bool = True) -> np.ndarray:
    """Seconds since midnight (0..86399) as ``HH:MM:SS`` (or ``HH:MM``); ``(N, 8)`` or ``(N, 5)``."""
    table = _time_of_day_table(b":")
    return table[np.asarray(seconds_of_day, dtype=np.int64)][:, :8 if seconds else 5]


_TIME_TABLES: dict[bytes, np.ndarray] = {}
_MILLIS = digits_column(np.arange(1000), 3)


def _time_of_day_table(sep: bytes) -> np.ndarray:
    table = _TIME_TABLES.get(sep)
    if table is None:
        s = np.arange(86400)
        table = np.concatenate([digits_column(s // 3600, 2), constant(sep, s.size),
                                digits_column(s // 60 % 60, 2), constant(sep, s.size),
                                digits_column(s % 60, 2)], axis=1)
        _TIME_TABLES[sep] = table
    return table


def local_time_parts(unix_seconds, zone) -> tuple[np.ndarray, np.ndarray, list[str]]:
    """UTC offsets and zone abbreviations of many instants, with one zone look-up per hour.

    Args:
        unix_seconds: (N,) int64 whole POSIX seconds.
        zone: a ``tzinfo`` (e.g. ``zoneinfo.ZoneInfo``).

    Returns:
        ``(offset_seconds, abbreviation_index, abbreviations)``: per instant its UTC offset and the
        index of its abbreviation (``"GMT"``, ``"BST"``) in the list. Hours in which the offset
        changes are looked up instant by instant.
    """
    from datetime import UTC, datetime

    secs = np.asarray(unix_seconds, dtype=np.int64).reshape(-1)
    offsets = np.zeros(secs.size, dtype=np.int64)
    which = np.zeros(secs.size, dtype=np.int64)
    names: dict[str, int] = {}
    if secs.size == 0:
        return offsets, which, []

    def look(second: int) -> tuple[int, int]:
        local = datetime.fromtimestamp(second, UTC).astimezone(zone)
        name = local.tzname() or ""
        return int(local.utcoffset().total_seconds()), names.setdefault(name, len(names))

    hours = secs // 3600
    first = int(hours.min())
    span = int(hours.max()) - first + 1
    hour_offset = np.zeros(span, dtype=np.int64)
    hour_name = np.zeros(span, dtype=np.int64)
    mixed = np.zeros(span, dtype=bool)
    for h in range(span):
        start = look((first + h) * 3600)
        end = look((first + h) * 3600 + 3599)
        hour_offset[h], hour_name[h] = start
        mixed[h] = start != end
    slot = hours - first
    offsets[:] = hour_offset[slot]
    which[:] = hour_name[slot]
    for i in np.flatnonzero(mixed[slot]).tolist():  # a change of offset inside this hour
        offsets[i], which[i] = look(int(secs[i]))
    return offsets, which, list(names)


def compact(columns: np.ndarray) -> np.ndarray:
    """Each row's bytes moved to the left in order, NUL padding to the right; ``(N, width)``."""
    keep = columns != NUL
    dest = np.cumsum(keep, axis=1) - 1
    out = np.zeros_like(columns)
    rows = np.nonzero(keep)[0]
    out[rows, dest[keep]] = columns[keep]
    return out


def sexagesimal_column(values, *, units: tuple[bytes, bytes, bytes], whole_digits: int = 2,
                       sign: bool = True) -> np.ndarray:
    """Values as ``+DDuMMuSSu`` (e.g. ``+05h35m17s``, ``-05°23'28"``), seconds rounded once, as
    :func:`siderod.astro.angles.format_hms`/``format_dms`` with ``decimals=0``; ``(N, width)``.

    The sign is ``-`` for negative values (``+`` otherwise, when ``sign``); the whole part has at
    least ``whole_digits`` digits.
    """
    x = np.asarray(values, dtype=float).reshape(-1)
    n = x.size
    total = np.rint(np.abs(x) * 3600.0).astype(np.int64)
    whole, rest = total // 3600, total % 3600
    digits = max(whole_digits, len(str(int(whole.max()))) if n else whole_digits)
    parts = []
    if sign:
        parts.append(text_table([b"+", b"-"])[(x < 0).astype(np.int64)])
    parts += [digits_column(whole, digits), constant(units[0], n), digits_column(rest // 60, 2),
              constant(units[1], n), digits_column(rest % 60, 2), constant(units[2], n)]
    return np.concatenate(parts, axis=1)
