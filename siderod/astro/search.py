"""Generic root and extremum finders over time windows: arrays in, arrays out.

The event engine (``events.py``) uses these for the cases with no closed form: the Sun and the Moon
crossing a standard altitude. (A star crossing a horizon profile needs no scan: see
``events.find_limit_events``.)

Method (bracket first, then refine), chosen after the pitfall in which a root finder started from
one guess near a shallow altitude extremum skips a pair of crossings:

1. sample ``f`` on a regular grid of times, for every column at once;
2. find the grid's local extrema and refine each with a golden-section search, so that a pair of
   crossings closer together than the grid step (a grazing Sun at a polar site) is still bracketed;
3. between consecutive samples (grid points and refined extrema, in time order) where the sign of
   ``f`` changes, refine the root with the Illinois variant of regula falsi, which keeps the bracket
   and converges superlinearly (Dowell & Jarratt 1971).

Functions here never read a clock: every time is POSIX seconds (UTC) passed in.
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np

__all__ = [
    "find_crossings",
    "find_extrema",
    "refine_roots",
]

#: ``f(unix_seconds, column) -> values``: both arguments broadcast against each other.
ColumnFunction = Callable[[np.ndarray, np.ndarray], np.ndarray]

_GOLDEN = (math.sqrt(5.0) - 1.0) / 2.0  # 0.618..., the golden-section shrink factor


def find_crossings(f: ColumnFunction, start_unix: float, end_unix: float, step_seconds: float, *,
                   columns: int = 1, tolerance_seconds: float = 1e-3):
    """Find every time in ``[start_unix, end_unix]`` at which ``f(t, column)`` changes sign.

    Args:
        f: ``f(unix_seconds, column) -> ndarray``; called on a grid with ``unix_seconds`` of shape
            (M, 1) and ``column`` of shape (1, C), and on flat arrays of equal shape (K,) while
            refining. Must be continuous in time.
        start_unix, end_unix: the window, POSIX seconds (UTC).
        step_seconds: grid step, seconds; must be well under the shortest interval between two
            extrema of ``f`` (e.g. 1200 s for the Sun or Moon altitude).
        columns: how many independent functions ``f`` holds (e.g. one per altitude threshold).
        tolerance_seconds: stop refining when successive estimates differ by less than this.

    Returns:
        (column, unix_seconds, rising): flat arrays sorted by time; ``rising`` is True where ``f``
        goes from <= 0 to > 0. A zero exactly on a grid point counts as "not above".
    """
    span = float(end_unix) - float(start_unix)
    if span <= 0.0:
        empty = np.zeros(0)
        return empty.astype(np.intp), empty, empty.astype(bool)
    count = max(2, int(math.ceil(span / step_seconds)) + 1)
    grid = np.linspace(float(start_unix), float(end_unix), count)
    col_ids = np.arange(columns)
    values = np.asarray(f(grid[:, None], col_ids[None, :]), dtype=float)
    values = np.broadcast_to(values, (count, columns))

    ext_col, ext_t, ext_v = find_extrema(f, grid, values, tolerance_seconds=tolerance_seconds)

    # All samples, column-major, in time order inside each column.
    sample_col = np.concatenate([np.broadcast_to(col_ids, (count, columns)).ravel(), ext_col])
    sample_t = np.concatenate([np.broadcast_to(grid[:, None], (count, columns)).ravel(), ext_t])
    sample_v = np.concatenate([values.ravel(), ext_v])
    order = np.lexsort((sample_t, sample_col))
    sample_col, sample_t, sample_v = sample_col[order], sample_t[order], sample_v[order]

    above = sample_v > 0.0
    change = (sample_col[1:] == sample_col[:-1]) & (above[1:] != above[:-1])
    lo = np.flatnonzero(change)
    hi = lo + 1
    col = sample_col[lo]
    roots = refine_roots(f, sample_t[lo], sample_t[hi], sample_v[lo], sample_v[hi], col,
                         tolerance_seconds=tolerance_seconds)
    rising = above[hi]
    order = np.argsort(roots, kind="stable")
    return col[order], roots[order], rising[order]


def find_extrema(f: ColumnFunction, grid_unix: np.ndarray, values: np.ndarray, *,
                 tolerance_seconds: float = 1e-3):
    """Refine the interior local extrema seen on a sampled grid.

    Args:
        f: as for :func:`find_crossings`.
        grid_unix (ndarray): sample times, POSIX seconds, shape (M,), increasing.
        values (ndarray): ``f`` on the grid, shape (M, C).
        tolerance_seconds: golden-section stopping width, seconds.

    Returns:
        (column, unix_seconds, value): one entry per extremum found, flat arrays.
    """
    diffs = np.diff(values, axis=0)  # (M-1, C)
    turn = (diffs[:-1] * diffs[1:]) < 0.0  # sign change of the slope at interior point i+1
    i, c = np.nonzero(turn)
    if i.size == 0:
        empty = np.zeros(0)
        return empty.astype(np.intp), empty, empty
    maximum = diffs[i, c] > 0.0
    sign = np.where(maximum, 1.0, -1.0)  # maximise sign * f
    a = grid_unix[i].astype(float)
    b = grid_unix[i + 2].astype(float)
    x1 = b - _GOLDEN * (b - a)
    x2 = a + _GOLDEN * (b - a)
    g1 = sign * f(x1, c)
    g2 = sign * f(x2, c)
    iterations = int(math.ceil(math.log(tolerance_seconds / max(np.max(b - a), tolerance_seconds))
                               / math.log(_GOLDEN))) + 1
    for _ in range(max(iterations, 1)):
        keep_left = g1 > g2  # the maximum lies in [a, x2]
        b = np.where(keep_left, x2, b)
        a = np.where(keep_left, a, x1)
        new_x1 = np.where(keep_left, b - _GOLDEN * (b - a), x2)
        new_x2 = np.where(keep_left, x1, a + _GOLDEN * (b - a))
        new_g1 = np.where(keep_left, np.nan, g2)
        new_g2 = np.where(keep_left, g1, np.nan)
        probe = np.where(keep_left, new_x1, new_x2)
        g_probe = sign * f(probe, c)
        x1, x2 = new_x1, new_x2
        g1 = np.where(keep_left, g_probe, new_g1)
        g2 = np.where(keep_left, new_g2, g_probe)
    t = 0.5 * (a + b)
    return c, t, np.asarray(f(t, c), dtype=float)


def refine_roots(f: ColumnFunction, lo_unix, hi_unix, f_lo, f_hi, column, *,
                 tolerance_seconds: float = 1e-3, max_iterations: int = 60):
    """Refine bracketed roots with the Illinois method (regula falsi that halves a stale end).

    Args:
        f: as for :func:`find_crossings`, called with flat arrays.
        lo_unix, hi_unix (ndarray): bracket ends, POSIX seconds, shape (K,); ``f`` changes sign
            between them (``f_lo > 0`` differs from ``f_hi > 0``).
        f_lo, f_hi (ndarray): ``f`` at the ends, shape (K,).
        column (ndarray): which function each bracket belongs to, shape (K,).
        tolerance_seconds: stop when successive estimates move less than this, seconds.
        max_iterations: safety cap; the bracket always stays valid, so the answer degrades
            gracefully to the bracket's false-position point.

    Returns:
        ndarray: root estimates, POSIX seconds, shape (K,).
    """
    a = np.array(lo_unix, dtype=float)
    b = np.array(hi_unix, dtype=float)
    fa = np.array(f_lo, dtype=float)
    fb = np.array(f_hi, dtype=float)
    col = np.asarray(column)
    if a.size == 0:
        return a
    estimate = np.full(a.shape, np.nan)
    side = np.zeros(a.shape, dtype=np.int8)  # +1: a moved last time, -1: b moved last time
    active = np.ones(a.shape, dtype=bool)
    for iteration in range(max_iterations):
        idx = np.flatnonzero(active)
        if idx.size == 0:
            break
        ai, bi, fai, fbi = a[idx], b[idx], fa[idx], fb[idx]
        with np.errstate(divide="ignore", invalid="ignore"):
            c = (ai * fbi - bi * fai) / (fbi - fai)
        # Every fourth step bisect, which bounds the worst case of false position.
        bad = ~np.isfinite(c) | (c <= np.minimum(ai, bi)) | (c >= np.maximum(ai, bi))
        if iteration % 4 == 3:
            bad[:] = True
        c = np.where(bad, 0.5 * (ai + bi), c)
        fc = np.asarray(f(c, col[idx]), dtype=float)
        same_as_b = (fc > 0.0) == (fbi > 0.0)
        # fc on b's side: b <- c; if b also moved last time, halve fa (Illinois).
        si = side[idx]
        fa_new = np.where(same_as_b & (si == -1), 0.5 * fai, fai)
        fb_new = np.where(~same_as_b & (si == 1), 0.5 * fbi, fbi)
        a[idx] = np.where(same_as_b, ai, c)
        fa[idx] = np.where(same_as_b, fa_new, fc)
        b[idx] = np.where(same_as_b, c, bi)
        fb[idx] = np.where(same_as_b, fc, fb_new)
        side[idx] = np.where(same_as_b, -1, 1)
        previous = estimate[idx]
        estimate[idx] = c
        done = (np.abs(c - previous) < tolerance_seconds) | (np.abs(b[idx] - a[idx]) < tolerance_seconds) \
            | (fc == 0.0)
        active[idx[done]] = False
    return estimate
