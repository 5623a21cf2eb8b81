"""A one-line picture of a target's night: how high it stands, slice by slice, dusk to dawn.

Pure text, so it reads the same with or without colour: a rising bar (``▁`` to ``█``, in eighths
of 0-90 deg) where the target is usable, ``·`` where it is up but below its lowest usable altitude,
a space where it is below the horizon, and ``|`` where a German equatorial mount must flip.
"""

from __future__ import annotations

import math
from datetime import datetime
from zoneinfo import ZoneInfo

import numpy as np

__all__ = ["BARS", "LOW_MARK", "FLIP_MARK", "format_night_row", "format_hour_ruler"]

#: Eight heights, for altitudes in eighths of 0-90 deg.
BARS = "▁▂▃▄▅▆▇█"
#: Up, but below the lowest usable altitude (horizon profile or min_altitude).
LOW_MARK = "·"
#: The flip of a German equatorial mount falls in this slice.
FLIP_MARK = "|"


def format_night_row(alt_deg, limit_deg, *, flip_column: int | None = None) -> str:
    """One target's chart.

    Args:
        alt_deg (array_like): altitude at the middle of each slice, degrees, shape (columns,).
        limit_deg (array_like): lowest usable altitude in each slice, degrees, same shape.
        flip_column: the slice holding the flip, or None.

    >>> format_night_row([-5.0, 5.0, 20.0, 60.0, 89.0], [10.0] * 5, flip_column=None)
    ' ·▂▆█'
    """
    alt = np.asarray(alt_deg, dtype=float)
    limit = np.asarray(limit_deg, dtype=float)
    level = np.clip((alt / 90.0 * len(BARS)).astype(int), 0, len(BARS) - 1)
    chars = [BARS[k] if a >= lim else (LOW_MARK if a >= 0.0 else " ")
             for a, lim, k in zip(alt.tolist(), limit.tolist(), level.tolist(), strict=True)]
    if flip_column is not None and 0 <= flip_column < len(chars):
        chars[flip_column] = FLIP_MARK
    return "".join(chars)


def format_hour_ruler(start_unix: float, end_unix: float, columns: int, timezone: str) -> str:
    """Local hours above the charts: each label starts in the slice where that hour begins.

    Labels are two digits; where two would touch, every other hour is shown.
    """
    zone = ZoneInfo(timezone)
    span = (end_unix - start_unix) / columns
    every = 1
    while every < 24 and 3600.0 * every / span < 3:
        every += 1
    ruler = [" "] * columns
    first = math.ceil(start_unix / 3600.0) * 3600.0
    hour = first
    while hour < end_unix:
        local = datetime.fromtimestamp(hour, zone)
        if local.hour % every == 0:
            column = int((hour - start_unix) / span)
            label = f"{local.hour:02d}"
            if column + len(label) <= columns and all(c == " " for c in ruler[max(0, column - 1):column + 2]):
                ruler[column:column + 2] = list(label)
        hour += 3600.0
    return "".join(ruler)
