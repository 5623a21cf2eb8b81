"""TAI - UTC (leap seconds) as data: the bundled table, its known-good date, and a parser for IERS files.

The table is passed in wherever it is used, so that a newer one can replace the bundled one without any
code change. Nothing here reads files or the clock; :func:`parse_leap_second_file` takes a file object.
"""

import datetime as _dt
import re
from collections.abc import Iterable
from dataclasses import dataclass, field

import numpy as np

from .constants import DAY_SECONDS, UNIX_EPOCH_MJD

__all__ = [
    "BUILTIN_LEAP_TABLE",
    "LeapTable",
    "LeapTableExpired",
    "parse_leap_second_file",
]


class LeapTableExpired(ValueError):
    """An instant lies outside the dates for which the leap-second table is known to be right.

    Raised only when a caller asks for ``strict=True``; otherwise the table's last value is used.

    Attributes:
        valid_from_utc: first date (UTC) the table covers (UTC itself began on 1960-01-01).
        valid_until_utc: date (UTC) from which the table may be missing a leap second.
    """

    def __init__(self, valid_from_utc: _dt.date, valid_until_utc: _dt.date, first_bad_unix: float) -> None:
        self.valid_from_utc = valid_from_utc
        self.valid_until_utc = valid_until_utc
        self.first_bad_unix = first_bad_unix
        when = _dt.datetime.fromtimestamp(first_bad_unix, _dt.UTC).strftime("%Y-%m-%dT%H:%M:%SZ")
        super().__init__(
            f"the leap-second table is known good from {valid_from_utc.isoformat()} until "
            f"{valid_until_utc.isoformat()} (UTC), but {when} is outside that span; load a newer IERS "
            f"Leap_Second.dat with parse_leap_second_file() and pass it as leap_table=, or call with "
            f"strict=False to accept TAI-UTC = the table's last value"
        )


@dataclass(frozen=True, eq=False)
class LeapTable:
    """TAI - UTC as a step table with the pre-1972 linear drift ("rubber seconds").

    Each entry i applies from ``start_mjd_utc[i]`` (00:00 UTC of that day) until the next entry:
    TAI - UTC = ``base_seconds[i] + (MJD_UTC - drift_ref_mjd[i]) * drift_seconds_per_day[i]``.
    From 1972 the drift is zero and the base is a whole number of seconds.

    Attributes:
        start_mjd_utc: MJD (UTC) at which each entry starts, increasing.
        base_seconds: TAI - UTC at the reference MJD, seconds.
        drift_ref_mjd: reference MJD of the drift term (0 where there is no drift).
        drift_seconds_per_day: drift rate, seconds per day (0 from 1972).
        known_good_until_utc: the table is known to be complete for instants before 00:00 UTC of this
            date (for IERS files, the "File expires on" date).
        source: where the numbers come from, for ``siderod check --doctor``.
    """

    start_mjd_utc: tuple[float, ...]
    base_seconds: tuple[float, ...]
    drift_ref_mjd: tuple[float, ...]
    drift_seconds_per_day: tuple[float, ...]
    known_good_until_utc: _dt.date
    source: str
    _arrays: tuple[np.ndarray, ...] = field(init=False, repr=False)

    def __post_init__(self) -> None:
        columns = (self.start_mjd_utc, self.base_seconds, self.drift_ref_mjd, self.drift_seconds_per_day)
        arrays = tuple(np.asarray(a, dtype=np.float64) for a in columns)
        n = arrays[0].size
        if n == 0 or any(a.shape != (n,) for a in arrays):
            raise ValueError("LeapTable needs four sequences of the same non-zero length")
        if np.any(np.diff(arrays[0]) <= 0):
            raise ValueError("LeapTable start_mjd_utc must be strictly increasing")
        object.__setattr__(self, "_arrays", arrays)

    @property
    def known_good_from_utc(self) -> _dt.date:
        """First date covered by the table (00:00 UTC)."""
        return _date_from_mjd(self.start_mjd_utc[0])

    @property
    def last_leap_utc(self) -> _dt.date:
        """Date of the last entry (the last leap second took effect at 00:00 UTC of this date)."""
        return _date_from_mjd(self.start_mjd_utc[-1])

    def tai_minus_utc_seconds(self, unix_seconds, *, strict: bool = False):
        """TAI - UTC at UTC instants given as POSIX seconds.

        Before the first entry (1960-01-01 for the bundled table) the result is 0, as ERFA ``dat``
        returns (with a warning there); after ``known_good_until_utc`` the last value is used.
        On a day that ends in a leap second the value before the leap is returned, as in ERFA.

        Args:
            unix_seconds: POSIX seconds (UTC), any shape.
            strict: raise :class:`LeapTableExpired` if any instant is outside the known-good span.

        Returns:
            TAI - UTC in seconds, same shape as ``unix_seconds`` (numpy scalar for a scalar).

        >>> float(BUILTIN_LEAP_TABLE.tai_minus_utc_seconds(1798000000.0))
        37.0
        """
        unix = np.asarray(unix_seconds, dtype=np.float64)
        if strict:
            self._check_known_good(unix)
        start, base, ref, rate = self._arrays
        mjd = unix / DAY_SECONDS + UNIX_EPOCH_MJD
        i = np.searchsorted(start, mjd, side="right") - 1
        before = i < 0
        i = np.maximum(i, 0)
        value = base[i] + (mjd - ref[i]) * rate[i]
        return np.where(before, 0.0, value)[()]

    def is_known_good(self, unix_seconds):
        """True where the table is known to be right: from its first entry to ``known_good_until_utc``.

        Args:
            unix_seconds: POSIX seconds (UTC), any shape.

        Returns:
            bool array (numpy bool for a scalar) of the same shape.
        """
        unix = np.asarray(unix_seconds, dtype=np.float64)
        first_unix = (self.start_mjd_utc[0] - UNIX_EPOCH_MJD) * DAY_SECONDS
        until_unix = (_mjd_from_date(self.known_good_until_utc) - UNIX_EPOCH_MJD) * DAY_SECONDS
        return ((unix >= first_unix) & (unix < until_unix))[()]

    def _check_known_good(self, unix: np.ndarray) -> None:
        good = np.asarray(self.is_known_good(unix))
        if not good.all():
            first_bad = float(unix[~good].flat[0]) if unix.ndim else float(unix)
            raise LeapTableExpired(self.known_good_from_utc, self.known_good_until_utc, first_bad)


def parse_leap_second_file(fileobj: Iterable[str] | Iterable[bytes]) -> LeapTable:
    """Read an IERS ``Leap_Second.dat`` text (from a file object or any iterable of lines).

    The file lists MJD, day, month, year and TAI - UTC from 1972; its header says
    "File expires on <day> <month> <year>", which becomes ``known_good_until_utc``. The pre-1972
    drift entries, which the IERS file does not carry, are taken from the bundled table.

    Args:
        fileobj: an open text or binary file, or an iterable of lines.

    Returns:
        A :class:`LeapTable`.

    Raises:
        ValueError: no expiry line or no data lines were found (the message says which).
    """
    expires: _dt.date | None = None
    rows: list[tuple[float, float]] = []
    for number, raw in enumerate(fileobj, start=1):
        line = raw.decode("ascii", "replace") if isinstance(raw, bytes) else raw
        if line.lstrip().startswith("#"):
            m = _EXPIRES_RE.search(line)
            if m:
                expires = _dt.datetime.strptime(" ".join(m.groups()), "%d %B %Y").date()
            continue
        fields = line.split()
        if not fields:
            continue
        if len(fields) != 5:
            raise ValueError(f"Leap_Second.dat line {number}: expected 'MJD day month year TAI-UTC', "
                             f"got {line.strip()!r}")
        rows.append((float(fields[0]), float(fields[4])))
    if expires is None:
        raise ValueError("Leap_Second.dat: no '# File expires on <day> <Month> <year>' line found; "
                         "is this the IERS Leap_Second.dat file?")
    if not rows:
        raise ValueError("Leap_Second.dat: no data lines ('MJD day month year TAI-UTC') found")
    n_pre = sum(1 for m in _BUILTIN_ROWS_MJD if m < rows[0][0])
    pre = list(zip(*_BUILTIN_COLUMNS, strict=True))[:n_pre]
    post = [(mjd, dat, 0.0, 0.0) for mjd, dat in rows]
    columns = list(zip(*(pre + post), strict=True))
    return LeapTable(*columns, known_good_until_utc=expires,
                     source=f"IERS Leap_Second.dat (last entry {_date_from_mjd(rows[-1][0])}, "
                            f"expires {expires.isoformat()}); pre-1972 drift entries from ERFA dat.c")


# ---------------------------------------------------------------------------------------------
# helpers and data

_MJD_DATE_ZERO = _dt.date(1858, 11, 17).toordinal()
_EXPIRES_RE = re.compile(r"File expires on\s+(\d{1,2})\s+([A-Za-z]+)\s+(\d{4})")


def _mjd_from_date(date: _dt.date) -> float:
    return float(date.toordinal() - _MJD_DATE_ZERO)


def _date_from_mjd(mjd: float) -> _dt.date:
    return _dt.date.fromordinal(int(mjd) + _MJD_DATE_ZERO)


# TAI - UTC, transcribed from ERFA src/dat.c ("This revision 2023 January 17"; latest leap second
# 2016 December 31), which follows the USNO/IERS history. Columns: (year, month) of 00:00 UTC on the
# 1st, base seconds, drift reference MJD, drift seconds per day. The integer entries from 1972 agree
# with IERS Leap_Second.dat (Bulletin C 72, July 2026: no leap second since 2017-01-01).
_BUILTIN_ROWS = (
    (1960, 1, 1.4178180, 37300.0, 0.0012960),
    (1961, 1, 1.4228180, 37300.0, 0.0012960),
    (1961, 8, 1.3728180, 37300.0, 0.0012960),
    (1962, 1, 1.8458580, 37665.0, 0.0011232),
    (1963, 11, 1.9458580, 37665.0, 0.0011232),
    (1964, 1, 3.2401300, 38761.0, 0.0012960),
    (1964, 4, 3.3401300, 38761.0, 0.0012960),
    (1964, 9, 3.4401300, 38761.0, 0.0012960),
    (1965, 1, 3.5401300, 38761.0, 0.0012960),
    (1965, 3, 3.6401300, 38761.0, 0.0012960),
    (1965, 7, 3.7401300, 38761.0, 0.0012960),
    (1965, 9, 3.8401300, 38761.0, 0.0012960),
    (1966, 1, 4.3131700, 39126.0, 0.0025920),
    (1968, 2, 4.2131700, 39126.0, 0.0025920),
    (1972, 1, 10.0, 0.0, 0.0),
    (1972, 7, 11.0, 0.0, 0.0),
    (1973, 1, 12.0, 0.0, 0.0),
    (1974, 1, 13.0, 0.0, 0.0),
    (1975, 1, 14.0, 0.0, 0.0),
    (1976, 1, 15.0, 0.0, 0.0),
    (1977, 1, 16.0, 0.0, 0.0),
    (1978, 1, 17.0, 0.0, 0.0),
    (1979, 1, 18.0, 0.0, 0.0),
    (1980, 1, 19.0, 0.0, 0.0),
    (1981, 7, 20.0, 0.0, 0.0),
    (1982, 7, 21.0, 0.0, 0.0),
    (1983, 7, 22.0, 0.0, 0.0),
    (1985, 7, 23.0, 0.0, 0.0),
    (1988, 1, 24.0, 0.0, 0.0),
    (1990, 1, 25.0, 0.0, 0.0),
    (1991, 1, 26.0, 0.0, 0.0),
    (1992, 7, 27.0, 0.0, 0.0),
    (1993, 7, 28.0, 0.0, 0.0),
    (1994, 7, 29.0, 0.0, 0.0),
    (1996, 1, 30.0, 0.0, 0.0),
    (1997, 7, 31.0, 0.0, 0.0),
    (1999, 1, 32.0, 0.0, 0.0),
    (2006, 1, 33.0, 0.0, 0.0),
    (2009, 1, 34.0, 0.0, 0.0),
    (2012, 7, 35.0, 0.0, 0.0),
    (2015, 7, 36.0, 0.0, 0.0),
    (2017, 1, 37.0, 0.0, 0.0),
)
_BUILTIN_ROWS_MJD = tuple(_mjd_from_date(_dt.date(y, m, 1)) for y, m, *_ in _BUILTIN_ROWS)
_BUILTIN_COLUMNS = (
    _BUILTIN_ROWS_MJD,
    tuple(r[2] for r in _BUILTIN_ROWS),
    tuple(r[3] for r in _BUILTIN_ROWS),
    tuple(r[4] for r in _BUILTIN_ROWS),
)

#: The bundled table: ERFA dat.c entries (1960 onwards), known good until 2027-06-28 per IERS
#: Leap_Second.dat ("Updated through IERS Bulletin 72 issued in July 2026", "File expires on 28 June 2027").
BUILTIN_LEAP_TABLE = LeapTable(
    *_BUILTIN_COLUMNS,
    known_good_until_utc=_dt.date(2027, 6, 28),
    source="bundled: ERFA dat.c entries 1960-2017 (TAI-UTC 37 s since 2017-01-01); known good until "
           "2027-06-28 per IERS Leap_Second.dat (Bulletin C 72, July 2026)",
)
