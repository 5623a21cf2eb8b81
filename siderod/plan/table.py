"""Events as columns: the array form the pure layers pass along until an edge prints or schedules them.

A catalogue of 1e5 targets has about 800,000 events a day. Made into one Python record each, they
cost seconds and hundreds of megabytes before anything is printed, so the agenda keeps them as
numpy columns (:class:`EventTable`) and makes :class:`~siderod.common.model.Event` records only
for the rows an edge asks for (:meth:`EventTable.event`, :meth:`EventTable.records`).

Absent values, said once: NaN in the float columns (``hour_angle_hours``, ``threshold_deg``,
``mark_hours``, ``moon_illuminated_fraction``), -1 in ``target`` (Sun, Moon and twilight events)
and in ``usable`` (where it does not apply).
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from datetime import UTC, datetime, timedelta

import numpy as np

from siderod.common.model import Event, EventKind

__all__ = ["KINDS", "KIND_CODES", "EventTable", "utc_from_unix"]

#: Event kinds by code; the code order is also the tie order of the agenda (the enum's order).
KINDS: tuple[EventKind, ...] = tuple(EventKind)
#: EventKind -> its code in ``EventTable.kind``.
KIND_CODES = {kind: code for code, kind in enumerate(KINDS)}

_KIND_SPAN = 1 << max(1, (len(KINDS) - 1).bit_length())  # room for every kind code
_EPOCH = datetime(1970, 1, 1, tzinfo=UTC)
_FLOAT_COLUMNS = ("time_unix", "altitude_deg", "azimuth_deg", "hour_angle_hours", "threshold_deg",
                  "mark_hours", "moon_illuminated_fraction", "sun_separation_deg", "beam_offset_deg")


def utc_from_unix(unix_seconds: float) -> datetime:
    """Aware UTC datetime, rounded to the microsecond (a leap second maps onto the next second)."""
    return _EPOCH + timedelta(microseconds=round(unix_seconds * 1e6))


@dataclass(frozen=True, eq=False)
class EventTable:
    """N events as parallel arrays (each of shape (N,)).

    Attributes:
        time_unix: POSIX seconds (float64).
        kind: codes into :data:`KINDS` (int8).
        target: index into ``names`` (int32), -1 for Sun, Moon and twilight events.
        altitude_deg, azimuth_deg: the position at the event (float64).
        hour_angle_hours, threshold_deg, mark_hours, moon_illuminated_fraction,
            sun_separation_deg: float64, NaN where they do not apply.
        usable: 1, 0, or -1 where it does not apply (int8).
        beam_source: beam events: index into ``names`` of the source (int32), -1 elsewhere.
        beam_offset_deg: beam events: the source's declination minus the axis's, degrees (NaN elsewhere).
        names: target names that ``target`` and ``beam_source`` index.
    """

    time_unix: np.ndarray
    kind: np.ndarray
    target: np.ndarray
    altitude_deg: np.ndarray
    azimuth_deg: np.ndarray
    hour_angle_hours: np.ndarray
    threshold_deg: np.ndarray
    mark_hours: np.ndarray
    usable: np.ndarray
    moon_illuminated_fraction: np.ndarray
    sun_separation_deg: np.ndarray
    beam_source: np.ndarray
    beam_offset_deg: np.ndarray
    names: tuple[str, ...] = ()

    # -- building ------------------------------------------------------------------------------
    @classmethod
    def build(cls, names: Sequence[str], time_unix, kind, *, target=None, altitude_deg, azimuth_deg,
              hour_angle_hours=None, threshold_deg=None, mark_hours=None, usable=None,
              moon_illuminated_fraction=None, sun_separation_deg=None, beam_source=None,
              beam_offset_deg=None) -> EventTable:
        """Columns from arrays or scalars (scalars are broadcast; None means absent)."""
        t = np.asarray(time_unix, dtype=float).reshape(-1)
        n = t.size

        def col(value, dtype, absent):
            if value is None:
                return np.full(n, absent, dtype=dtype)
            array = np.asarray(value, dtype=dtype)
            if array.shape == (n,) and array is not value:
                return array  # already a new array of its own (a conversion): no second copy
            return np.broadcast_to(array, (n,)).copy()

        return cls(time_unix=t, kind=col(kind, np.int8, 0), target=col(target, np.int32, -1),
                   altitude_deg=col(altitude_deg, float, np.nan), azimuth_deg=col(azimuth_deg, float, np.nan),
                   hour_angle_hours=col(hour_angle_hours, float, np.nan),
                   threshold_deg=col(threshold_deg, float, np.nan), mark_hours=col(mark_hours, float, np.nan),
                   usable=col(usable, np.int8, -1),
                   moon_illuminated_fraction=col(moon_illuminated_fraction, float, np.nan),
                   sun_separation_deg=col(sun_separation_deg, float, np.nan),
                   beam_source=col(beam_source, np.int32, -1),
                   beam_offset_deg=col(beam_offset_deg, float, np.nan),
                   names=tuple(names))

    @classmethod
    def empty(cls, names: Sequence[str] = ()) -> EventTable:
        return cls.build(names, np.zeros(0), 0, altitude_deg=np.zeros(0), azimuth_deg=np.zeros(0))

    @classmethod
    def concat(cls, parts: Iterable[EventTable], names: Sequence[str]) -> EventTable:
        """Join tables whose ``target`` columns already index ``names``."""
        parts = list(parts)
        if not parts:
            return cls.empty(names)
        columns = {f: np.concatenate([getattr(p, f) for p in parts]) for f in _COLUMNS}
        return cls(**columns, names=tuple(names))

    @classmethod
    def from_records(cls, events: Iterable[Event]) -> EventTable:
        """The table of some ``Event`` records (the reverse of :meth:`records`)."""
        events = list(events)
        names: dict[str, int] = {}
        target = [-1 if e.target is None else names.setdefault(e.target, len(names)) for e in events]
        source = [-1 if e.beam_source is None else names.setdefault(e.beam_source, len(names))
                  for e in events]

        def floats(attr):
            return np.array([np.nan if getattr(e, attr) is None else getattr(e, attr) for e in events],
                            dtype=float)

        return cls(time_unix=np.array([e.time_utc.timestamp() for e in events], dtype=float),
                   kind=np.array([KIND_CODES[e.kind] for e in events], dtype=np.int8),
                   target=np.array(target, dtype=np.int32),
                   altitude_deg=floats("altitude_deg"), azimuth_deg=floats("azimuth_deg"),
                   hour_angle_hours=floats("hour_angle_hours"), threshold_deg=floats("threshold_deg"),
                   mark_hours=floats("mark_hours"),
                   usable=np.array([-1 if e.usable is None else int(e.usable) for e in events],
                                   dtype=np.int8),
                   moon_illuminated_fraction=floats("moon_illuminated_fraction"),
                   sun_separation_deg=floats("sun_separation_deg"),
                   beam_source=np.array(source, dtype=np.int32), beam_offset_deg=floats("beam_offset_deg"),
                   names=tuple(names))

    # -- reading -------------------------------------------------------------------------------
    def __len__(self) -> int:
        return int(self.time_unix.size)

    def take(self, rows) -> EventTable:
        """The rows selected by an index array or a boolean mask, in that order."""
        return EventTable(**{f: getattr(self, f)[rows] for f in _COLUMNS}, names=self.names)

    def time_microseconds(self) -> np.ndarray:
        """Event times as int64 POSIX microseconds, rounded as :func:`utc_from_unix` rounds."""
        return np.round(self.time_unix * 1e6).astype(np.int64)

    def sorted(self) -> EventTable:
        """Sorted by time (to the microsecond), then kind (enum order), then target name."""
        if len(self) == 0:
            return self
        return self.take(_order(self.time_unix, self.kind, lambda: self.target, self.names))

    @classmethod
    def concat_sorted(cls, parts: Iterable[EventTable], names: Sequence[str]) -> EventTable:
        """``concat(parts, names).sorted()`` without the unsorted copy of every column in between
        (for 800,000 events that copy is 70 MB of fresh memory)."""
        parts = list(parts)
        if not parts:
            return cls.empty(names)

        def joined(field):
            return np.concatenate([getattr(p, field) for p in parts])

        order = _order(joined("time_unix"), joined("kind"), lambda: joined("target"), names)
        return cls(**{f: joined(f)[order] for f in _COLUMNS}, names=tuple(names))

    def target_names(self) -> list[str | None]:
        """Per row, the target name or None."""
        lookup = list(self.names) + [None]
        return [lookup[i] for i in self.target.tolist()]

    def event(self, row: int) -> Event:
        """One row as an ``Event`` record."""
        return self._records(np.array([row]))[0]

    def records(self) -> tuple[Event, ...]:
        """Every row as an ``Event`` record (costly for big tables: make them only at the edge)."""
        return tuple(self._records(np.arange(len(self))))

    def _records(self, rows) -> list[Event]:
        lists = {f: _optional(getattr(self, f)[rows]) for f in _FLOAT_COLUMNS[1:]}
        usable = [None if u < 0 else bool(u) for u in self.usable[rows].tolist()]
        names = list(self.names) + [None]
        return [
            Event(time_utc=utc_from_unix(t), kind=KINDS[k], target=names[j], altitude_deg=a, azimuth_deg=z,
                  hour_angle_hours=h, threshold_deg=th, mark_hours=m, usable=u, moon_illuminated_fraction=f,
                  sun_separation_deg=sep, beam_source=names[b], beam_offset_deg=off)
            for t, k, j, a, z, h, th, m, u, f, sep, b, off in zip(
                self.time_unix[rows].tolist(), self.kind[rows].tolist(), self.target[rows].tolist(),
                lists["altitude_deg"], lists["azimuth_deg"], lists["hour_angle_hours"],
                lists["threshold_deg"], lists["mark_hours"], usable, lists["moon_illuminated_fraction"],
                lists["sun_separation_deg"], self.beam_source[rows].tolist(), lists["beam_offset_deg"],
                strict=True)
        ]


_COLUMNS = ("time_unix", "kind", "target", "altitude_deg", "azimuth_deg", "hour_angle_hours", "threshold_deg",
            "mark_hours", "usable", "moon_illuminated_fraction", "sun_separation_deg", "beam_source",
            "beam_offset_deg")


def _order(time_unix: np.ndarray, kind: np.ndarray, target, names: Sequence[str]) -> np.ndarray:
    """The row order by time (to the microsecond), then kind, then target name; ``target()`` gives
    the target column, asked for only when two rows tie in time and kind."""
    micros = np.round(time_unix * 1e6).astype(np.int64)  # as time_microseconds() rounds
    # One sort of a combined key (time, then kind, in the low bits: POSIX microseconds times
    # 2**5 stay far inside int64 until the year 2300) instead of two.
    key = micros * _KIND_SPAN + kind.astype(np.int64)
    # numpy's default sort (vectorised quicksort) is ~6x its stable sort on 800,000 keys; equal
    # keys, the only rows whose order it could leave open, are ordered by lexsort below.
    order = np.argsort(key)
    sorted_key = key[order]
    if np.any(sorted_key[1:] == sorted_key[:-1]):
        # Ties in time and kind are rare; only then rank the names (a sort of every name).
        rank = np.empty(len(names) + 1, dtype=np.int64)
        rank[-1] = -1  # Sun/Moon events (target -1) sort as the empty name, before every target
        by_name = sorted(range(len(names)), key=names.__getitem__)
        rank[np.array(by_name, dtype=np.int64)] = np.arange(len(names))
        order = np.lexsort((rank[target()], kind, micros))
    return order


def _optional(values: np.ndarray) -> list[float | None]:
    return [None if math.isnan(v) else v for v in values.tolist()]
