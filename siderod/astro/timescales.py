"""Time scales as data: UTC, TAI, TT and UT1 instants as two-part Julian dates, plus datetime/ISO/JD I/O.

Chain (IAU/IERS conventions, as in ERFA ``utctai``, ``taitt``, ``utcut1``):

* TAI = UTC + (TAI - UTC) from a :class:`~siderod.astro.leapseconds.LeapTable` passed in;
* TT = TAI + 32.184 s (exact by definition);
* UT1 = UTC + DUT1, with DUT1 in seconds passed in (0 when unknown: |DUT1| < 0.9 s, so the
  sidereal time is then off by at most 0.9 s x 1.0027 = 13.5 arcsec of hour angle).

Every Julian date is kept in two parts (a whole part that starts a day, at .0 or .5, plus a fraction in
[0, 1)), because one float JD has a resolution of about 40 microseconds of time, which is ~1e-9 rad of
Earth rotation. UTC instants come in as POSIX seconds, which cannot name the 61st second of a leap-second
minute; that second is simply not representable, as in every POSIX system clock.
"""

import datetime as _dt
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from typing import Literal

import numpy as np

from .constants import DAY_SECONDS, TT_MINUS_TAI_SECONDS, UNIX_EPOCH_JD, UNIX_EPOCH_MJD
from .leapseconds import BUILTIN_LEAP_TABLE, LeapTable

__all__ = [
    "Dut1Table",
    "Instants",
    "NaiveDatetimeError",
    "datetime_from_unix",
    "format_iso_utc",
    "instants_from_datetime",
    "instants_from_jd",
    "instants_from_unix",
    "parse_iers_finals",
    "parse_iso_datetime",
    "unix_from_datetime",
]


class NaiveDatetimeError(ValueError):
    """A datetime without a timezone was given where an instant is needed."""

    def __init__(self, value: object) -> None:
        self.value = value
        super().__init__(
            f"datetime {value!r} has no timezone, so it does not name one instant; "
            f"attach one, e.g. dt.replace(tzinfo=datetime.timezone.utc) for UTC or "
            f"dt.replace(tzinfo=zoneinfo.ZoneInfo('Europe/London')) for a local wall-clock time"
        )


@dataclass(frozen=True, eq=False)
class Instants:
    """A set of instants (any shape) on the UTC, TT and UT1 scales.

    All fields are float64 arrays of the same shape. Build with :func:`instants_from_unix`,
    :func:`instants_from_datetime` or :func:`instants_from_jd` rather than directly.

    Attributes:
        unix_seconds: POSIX seconds (UTC).
        utc_whole, utc_frac: Julian date (UTC) = whole + frac; whole ends in .5 (a UTC day start),
            frac in [0, 1) is the POSIX seconds of the day / 86400. (On a leap-second day this differs
            from ERFA's "quasi-JD", which stretches the day to 86401 s.)
        tt_whole, tt_frac: Julian date (TT), same split rule.
        ut1_whole, ut1_frac: Julian date (UT1), same split rule.
        dut1_seconds: UT1 - UTC used, seconds.
    """

    unix_seconds: np.ndarray
    utc_whole: np.ndarray
    utc_frac: np.ndarray
    tt_whole: np.ndarray
    tt_frac: np.ndarray
    ut1_whole: np.ndarray
    ut1_frac: np.ndarray
    dut1_seconds: np.ndarray
    _fields: tuple[str, ...] = field(init=False, repr=False, default=(
        "unix_seconds", "utc_whole", "utc_frac", "tt_whole", "tt_frac", "ut1_whole", "ut1_frac",
        "dut1_seconds"))

    @property
    def shape(self) -> tuple[int, ...]:
        """Shape of every array field."""
        return self.unix_seconds.shape

    @property
    def jd_utc(self) -> np.ndarray:
        """Julian date (UTC) as one float, for display only (resolution ~40 microseconds)."""
        return self.utc_whole + self.utc_frac

    @property
    def jd_tt(self) -> np.ndarray:
        """Julian date (TT) as one float, for display only."""
        return self.tt_whole + self.tt_frac

    def __getitem__(self, key) -> "Instants":
        return Instants(*(np.asarray(getattr(self, name)[key]) for name in self._fields))

    def __len__(self) -> int:
        if not self.shape:
            raise TypeError("len() of a scalar Instants")
        return self.shape[0]


def instants_from_unix(unix_seconds, *, dut1_seconds=0.0, leap_table: LeapTable = BUILTIN_LEAP_TABLE,
                       strict: bool = False) -> Instants:
    """Instants from POSIX seconds (UTC).

    Args:
        unix_seconds: POSIX seconds, any shape.
        dut1_seconds: UT1 - UTC in seconds, broadcast against ``unix_seconds`` (default 0).
        leap_table: TAI - UTC table.
        strict: raise :class:`~siderod.astro.leapseconds.LeapTableExpired` for an instant outside the
            table's known-good span, instead of using its last value.

    Returns:
        :class:`Instants` of the broadcast shape.

    >>> t = instants_from_unix(1798000000.0)
    >>> float(t.utc_whole), round(float(t.utc_frac), 9), float(t.tt_whole)
    (2461397.5, 0.185185185, 2461397.5)
    """
    unix, dut1 = np.broadcast_arrays(np.asarray(unix_seconds, dtype=np.float64),
                                     np.asarray(dut1_seconds, dtype=np.float64))
    unix = unix.copy()
    dut1 = dut1.copy()
    dat = np.asarray(leap_table.tai_minus_utc_seconds(unix, strict=strict))
    days = np.floor(unix / DAY_SECONDS)
    utc_frac = (unix - days * DAY_SECONDS) / DAY_SECONDS
    utc_whole = days + UNIX_EPOCH_JD
    utc_whole, utc_frac = _normalise(utc_whole, utc_frac)
    tt_whole, tt_frac = _normalise(utc_whole, utc_frac + (dat + TT_MINUS_TAI_SECONDS) / DAY_SECONDS)
    ut1_whole, ut1_frac = _normalise(utc_whole, utc_frac + dut1 / DAY_SECONDS)
    return Instants(unix, utc_whole, utc_frac, tt_whole, tt_frac, ut1_whole, ut1_frac, dut1)


def instants_from_datetime(dt_or_sequence: _dt.datetime | Sequence[_dt.datetime], *, dut1_seconds=0.0,
                           leap_table: LeapTable = BUILTIN_LEAP_TABLE, strict: bool = False) -> Instants:
    """Instants from one timezone-aware datetime or a sequence of them.

    Args:
        dt_or_sequence: aware datetime(s); naive ones are refused.
        dut1_seconds, leap_table, strict: as for :func:`instants_from_unix`.

    Raises:
        NaiveDatetimeError: a datetime has no tzinfo (the message shows how to attach one).
    """
    if isinstance(dt_or_sequence, _dt.datetime):
        unix = unix_from_datetime(dt_or_sequence)
    else:
        unix = np.array([unix_from_datetime(d) for d in dt_or_sequence], dtype=np.float64)
    return instants_from_unix(unix, dut1_seconds=dut1_seconds, leap_table=leap_table, strict=strict)


def instants_from_jd(whole, frac, *, scale: Literal["utc", "tai", "tt", "ut1"] = "utc", dut1_seconds=0.0,
                     leap_table: LeapTable = BUILTIN_LEAP_TABLE, strict: bool = False) -> Instants:
    """Instants from a two-part Julian date on the given scale.

    The given parts are kept as they are (after moving whole days between them so that the fraction
    lies in [0, 1)) for the scale named; the other scales are derived. "utc" is the POSIX-style
    Julian date (seconds of day / 86400). For "tt" and "tai" the TAI - UTC step is found by iteration;
    an instant inside a leap second has no POSIX time and lands on the following second.

    Args:
        whole, frac: Julian date parts (days), broadcast together; any split works, e.g.
            (2400000.5, MJD) or (JD, 0.0), but (day start, fraction) keeps full precision.
        scale: the time scale of the given date.
        dut1_seconds, leap_table, strict: as for :func:`instants_from_unix`.

    Returns:
        :class:`Instants` of the broadcast shape.

    >>> t = instants_from_jd(2400000.5, 53736.0, scale="tt")
    >>> float(t.tt_whole), float(t.tt_frac), float(t.unix_seconds)
    (2453736.5, 0.0, 1136073535.816)
    """
    if scale not in ("utc", "tai", "tt", "ut1"):
        raise ValueError(f"scale must be 'utc', 'tai', 'tt' or 'ut1'; got {scale!r}")
    w, f, dut1 = np.broadcast_arrays(np.asarray(whole, dtype=np.float64), np.asarray(frac, dtype=np.float64),
                                     np.asarray(dut1_seconds, dtype=np.float64))
    w, f = _normalise(w, f)
    # POSIX seconds of the given scale, counted like UTC: (whole - epoch) is exact, frac*86400 rounds once.
    scale_unix = (w - UNIX_EPOCH_JD) * DAY_SECONDS + f * DAY_SECONDS
    if scale == "utc":
        unix = scale_unix
    elif scale == "ut1":
        unix = scale_unix - dut1
    else:
        offset = TT_MINUS_TAI_SECONDS if scale == "tt" else 0.0
        unix = scale_unix - offset - 37.0
        for _ in range(3):  # converges in 2 steps except across a leap second
            unix = scale_unix - offset - np.asarray(leap_table.tai_minus_utc_seconds(unix))
    out = instants_from_unix(unix, dut1_seconds=dut1, leap_table=leap_table, strict=strict)
    if scale == "tt":
        return _replace(out, tt_whole=w, tt_frac=f)
    if scale == "ut1":
        return _replace(out, ut1_whole=w, ut1_frac=f)
    if scale == "utc":
        return _replace(out, utc_whole=w, utc_frac=f)
    return out


def unix_from_datetime(dt: _dt.datetime) -> float:
    """POSIX seconds of a timezone-aware datetime (microsecond resolution).

    Raises:
        NaiveDatetimeError: ``dt`` has no tzinfo.
        TypeError: ``dt`` is not a datetime.

    >>> unix_from_datetime(_dt.datetime(2026, 12, 14, 21, 3, 7, tzinfo=_dt.UTC))
    1797282187.0
    """
    if not isinstance(dt, _dt.datetime):
        raise TypeError(f"expected a timezone-aware datetime.datetime, got {type(dt).__name__} {dt!r}")
    if dt.tzinfo is None or dt.utcoffset() is None:
        raise NaiveDatetimeError(dt)
    delta = dt - _EPOCH_UTC
    # Integer arithmetic first, one rounding at the end.
    return (delta.days * 86400 + delta.seconds) + delta.microseconds / 1e6


def datetime_from_unix(seconds: float) -> _dt.datetime:
    """Aware UTC datetime from POSIX seconds (rounded to the microsecond).

    >>> datetime_from_unix(1797282187.0).isoformat()
    '2026-12-14T21:03:07+00:00'
    """
    micro = round(float(seconds) * 1e6)
    return _EPOCH_UTC + _dt.timedelta(microseconds=micro)


def parse_iso_datetime(text: str) -> _dt.datetime:
    """Read an ISO 8601 date-time with an explicit "Z" or UTC offset into an aware datetime.

    Raises:
        ValueError: not ISO 8601, or no "Z"/offset given (the message shows the fix).

    >>> parse_iso_datetime("2026-12-14T21:03:07Z").isoformat()
    '2026-12-14T21:03:07+00:00'
    """
    if not isinstance(text, str):
        raise TypeError(f"expected ISO 8601 text, got {type(text).__name__} {text!r}")
    try:
        value = _dt.datetime.fromisoformat(text.strip())
    except ValueError:
        raise ValueError(f"cannot read {text!r} as an ISO 8601 date-time; write it like "
                         f"'2026-12-14T21:03:07Z' (UTC) or '2026-12-14T21:03:07+01:00'") from None
    if value.tzinfo is None:
        raise ValueError(f"date-time {text!r} has no timezone; add 'Z' for UTC "
                         f"('{text.strip()}Z') or an offset such as '+00:00'")
    return value


def format_iso_utc(dt_or_unix: _dt.datetime | float) -> str:
    """Format an instant as ``2026-12-14T21:03:07Z`` (UTC, seconds truncated like a clock).

    Args:
        dt_or_unix: an aware datetime, or POSIX seconds.

    >>> format_iso_utc(1797282187.9)
    '2026-12-14T21:03:07Z'
    """
    if isinstance(dt_or_unix, _dt.datetime):
        unix = unix_from_datetime(dt_or_unix)
    else:
        unix = float(dt_or_unix)
    whole = _dt.datetime.fromtimestamp(np.floor(unix + 1e-7), _dt.UTC)  # 1e-7 s absorbs float noise
    return whole.strftime("%Y-%m-%dT%H:%M:%SZ")


@dataclass(frozen=True, eq=False)
class Dut1Table:
    """UT1 - UTC from IERS Earth-orientation data, linearly interpolated.

    Interpolation runs on UT1 - TAI, which has no leap-second steps, and the step is added back for
    the instant asked about, so days that end in a leap second are interpolated correctly.

    Attributes:
        mjd_utc: MJD (UTC, 0h) of each row, increasing, shape (N,).
        ut1_minus_tai_seconds: UT1 - TAI at each row, seconds, shape (N,).
        predicted: True where the row is a prediction rather than a measurement, shape (N,).
        leap_table: the TAI - UTC table used to convert, and to convert back.
        source: description of the data.
    """

    mjd_utc: np.ndarray
    ut1_minus_tai_seconds: np.ndarray
    predicted: np.ndarray
    leap_table: LeapTable
    source: str

    def dut1_seconds(self, unix_seconds):
        """UT1 - UTC at UTC instants; outside the table, the nearest end value of UT1 - TAI is used.

        Args:
            unix_seconds: POSIX seconds (UTC), any shape.

        Returns:
            seconds, same shape (numpy scalar for a scalar).
        """
        unix = np.asarray(unix_seconds, dtype=np.float64)
        mjd = unix / DAY_SECONDS + UNIX_EPOCH_MJD
        ut1_tai = np.interp(mjd, self.mjd_utc, self.ut1_minus_tai_seconds)
        return (ut1_tai + np.asarray(self.leap_table.tai_minus_utc_seconds(unix)))[()]

    def covers(self, unix_seconds):
        """True where the instant lies within the table's first and last rows. Any shape."""
        mjd = np.asarray(unix_seconds, dtype=np.float64) / DAY_SECONDS + UNIX_EPOCH_MJD
        return ((mjd >= self.mjd_utc[0]) & (mjd <= self.mjd_utc[-1]))[()]


def parse_iers_finals(fileobj: Iterable[str] | Iterable[bytes], *,
                      leap_table: LeapTable = BUILTIN_LEAP_TABLE) -> Dut1Table:
    """Read UT1 - UTC from IERS ``finals2000A.all`` / ``finals.all`` fixed-width text.

    Columns used (1-based, from the IERS ReadMe.finals2000A): MJD in 8-15, the UT1 "I"/"P" flag in 58,
    Bulletin A UT1 - UTC in 59-68 and Bulletin B UT1 - UTC in 155-165 (preferred where present).
    Rows with no UT1 value (the blank future rows) are skipped.

    Args:
        fileobj: an open text or binary file, or an iterable of lines.
        leap_table: TAI - UTC table, to remove leap-second steps before interpolating.

    Raises:
        ValueError: no usable rows, or a row that cannot be read (with its line number).
    """
    mjd: list[float] = []
    dut1: list[float] = []
    predicted: list[bool] = []
    for number, raw in enumerate(fileobj, start=1):
        line = raw.decode("ascii", "replace") if isinstance(raw, bytes) else raw
        bulletin_a = line[58:68].strip()
        if not bulletin_a:
            continue
        bulletin_b = line[154:165].strip()
        try:
            mjd.append(float(line[7:15]))
            dut1.append(float(bulletin_b or bulletin_a))
        except ValueError:
            raise ValueError(f"IERS finals line {number}: cannot read MJD (columns 8-15) or UT1-UTC "
                             f"(59-68): {line.rstrip()!r}; is this a finals2000A.all file?") from None
        predicted.append(line[57:58] == "P")
    if not mjd:
        raise ValueError("IERS finals: no rows with UT1-UTC (columns 59-68) found; is this a "
                         "finals2000A.all or finals.all file?")
    mjd_arr = np.array(mjd)
    if np.any(np.diff(mjd_arr) <= 0):
        raise ValueError("IERS finals: MJD column is not increasing")
    unix = (mjd_arr - UNIX_EPOCH_MJD) * DAY_SECONDS
    ut1_tai = np.array(dut1) - np.asarray(leap_table.tai_minus_utc_seconds(unix))
    pred = np.array(predicted, dtype=bool)
    first = _iso_date_from_mjd(mjd_arr[0])
    last = _iso_date_from_mjd(mjd_arr[-1])
    measured = _iso_date_from_mjd(mjd_arr[~pred][-1]) if (~pred).any() else "none"
    return Dut1Table(mjd_arr, ut1_tai, pred, leap_table,
                     source=f"IERS finals {first}..{last} (measured to {measured})")


# ---------------------------------------------------------------------------------------------
# helpers

_EPOCH_UTC = _dt.datetime(1970, 1, 1, tzinfo=_dt.UTC)


def _normalise(whole: np.ndarray, frac: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Move whole days so that ``whole`` ends in .5 (a day start) and ``frac`` is in [0, 1)."""
    # Put whole on a day start first (x.5); the moved remainder is exact for JD-sized values.
    start = np.floor(whole - 0.5) + 0.5
    frac = frac + (whole - start)
    days = np.floor(frac)
    frac = frac - days
    # A tiny negative fraction (-1e-20) becomes exactly 1.0 above; carry it so frac stays in [0, 1).
    carry = frac >= 1.0
    return start + days + carry, np.where(carry, 0.0, frac)


def _replace(inst: Instants, **changes: np.ndarray) -> Instants:
    values = {name: getattr(inst, name) for name in inst._fields}
    values.update({k: np.array(v, dtype=np.float64) for k, v in changes.items()})
    return Instants(**values)


def _iso_date_from_mjd(mjd: float) -> str:
    return (_dt.date(1858, 11, 17) + _dt.timedelta(days=int(mjd))).isoformat()

