"""The target table's columns, and which of them to drop first as the terminal narrows.

Pure and tiny: :func:`choose_columns` is all the board asks. At 80 columns every column that
matters at the telescope survives (name, hour angle, altitude, flip countdown, next event).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

__all__ = ["ColumnSpec", "COLUMNS", "COLUMN_GAP", "NAME_MIN_WIDTH", "NAME_MAX_WIDTH", "choose_columns",
           "table_width"]

#: Cells between two columns.
COLUMN_GAP = 1
#: The name column shrinks to this (longer names end in an ellipsis) before any column is dropped...
NAME_MIN_WIDTH = 10
#: ...and grows up to this when there is room to spare.
NAME_MAX_WIDTH = 20


@dataclass(frozen=True, slots=True)
class ColumnSpec:
    """One column of the target table.

    Attributes:
        key: stable identifier used by the board ("ha", "alt", ...).
        header: the heading shown.
        width: cells the column needs (the name column: its minimum).
        justify: cell alignment.
        drop_rank: the order in which columns go as the terminal narrows (1 goes first);
            None means the column is never dropped.
        gem_only: shown only for a German equatorial mount.
    """

    key: str
    header: str
    width: int
    justify: Literal["left", "right", "center"]
    drop_rank: int | None
    gem_only: bool = False


#: Display order, left to right. Drop order, by ``drop_rank``: Dec, azimuth, airmass, mute flag,
#: time to culmination, tracking limit, rising/setting arrow, hour angle. Name, altitude, the flip
#: countdown and the next event always stay: they answer "what do I do next, and how soon".
COLUMNS: tuple[ColumnSpec, ...] = (
    ColumnSpec("name", "target", NAME_MIN_WIDTH, "left", None),
    ColumnSpec("ha", "HA", 6, "right", 8),
    ColumnSpec("dec", "Dec", 6, "right", 1),
    ColumnSpec("alt", "alt", 5, "right", None),
    ColumnSpec("az", "az", 5, "right", 2),
    ColumnSpec("airmass", "X", 4, "right", 3),
    ColumnSpec("trend", "", 1, "center", 7),
    ColumnSpec("culm", "culm in", 7, "right", 5),
    ColumnSpec("flip", "flip in", 7, "right", None, gem_only=True),
    ColumnSpec("limit", "limit in", 8, "right", 6, gem_only=True),
    ColumnSpec("next", "next event", 17, "left", None),
    ColumnSpec("muted", "mute", 4, "left", 4),
)


def table_width(columns: tuple[ColumnSpec, ...]) -> int:
    """Cells the columns take at their stated widths, gaps included."""
    return sum(c.width for c in columns) + COLUMN_GAP * max(0, len(columns) - 1)


def choose_columns(width: int, *, german_equatorial: bool) -> tuple[tuple[ColumnSpec, ...], int]:
    """The columns that fit in ``width`` cells, in display order, and the name column's width.

    Args:
        width: terminal width in cells.
        german_equatorial: include the flip and tracking-limit columns.

    Returns:
        (columns, name_width): the kept columns and the width granted to the name column
        (between NAME_MIN_WIDTH and NAME_MAX_WIDTH; the rest of any spare room stays unused).

    >>> cols, name_width = choose_columns(80, german_equatorial=True)
    >>> [c.key for c in cols]
    ['name', 'ha', 'alt', 'airmass', 'trend', 'culm', 'flip', 'limit', 'next', 'muted']
    """
    kept = [c for c in COLUMNS if german_equatorial or not c.gem_only]
    droppable = sorted((c for c in kept if c.drop_rank is not None), key=lambda c: c.drop_rank)
    while table_width(tuple(kept)) > width and droppable:
        kept.remove(droppable.pop(0))
    spare = max(0, width - table_width(tuple(kept)))
    name_width = min(NAME_MAX_WIDTH, NAME_MIN_WIDTH + spare)
    return tuple(kept), name_width
