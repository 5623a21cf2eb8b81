"""The generic bracket-and-refine finders, checked against functions with known roots."""

import math

import numpy as np

from siderod.astro.search import find_crossings, find_extrema, refine_roots

#: Root tolerance asked of the finders; checks allow 10x for the last false-position step.
TOLERANCE_SECONDS = 1e-3
CHECK_SECONDS = 1e-2


def test_find_crossings_matches_analytic_sine_roots():
    # f = sin(2 pi t / P) - level: roots at asin(level) and pi - asin(level), per period (analytic).
    period = 86400.0
    levels = np.array([0.5, -0.3])

    def f(t, column):
        return np.sin(2 * math.pi * t / period) - levels[column]

    col, t, rising = find_crossings(f, 0.0, 2 * period, 1200.0, columns=2,
                                    tolerance_seconds=TOLERANCE_SECONDS)
    for c, level in enumerate(levels):
        a = math.asin(level) / (2 * math.pi) * period
        expected = sorted(x for k in range(3)
                          for x in (a % period + k * period, (period / 2 - a) + k * period)
                          if 0 <= x <= 2 * period)
        got = t[col == c]
        assert len(got) == len(expected)
        assert np.max(np.abs(got - expected)) < CHECK_SECONDS
        # Rising where the derivative is positive.
        assert np.array_equal(rising[col == c], np.cos(2 * math.pi * got / period) > 0)
    assert np.all(np.diff(t) >= 0)


def test_find_crossings_keeps_a_pair_closer_than_the_grid_step():
    # A grazing parabola: 0.01 - ((t - 5000)/1000)^2 crosses zero at 4900 and 5100, both inside one
    # 3000 s grid cell; only the extremum search can see them.
    def f(t, column):
        return 0.01 - ((t - 5000.0) / 1000.0) ** 2 + 0.0 * column

    col, t, rising = find_crossings(f, 0.0, 9000.0, 3000.0, tolerance_seconds=TOLERANCE_SECONDS)
    assert np.allclose(t, [4900.0, 5100.0], atol=CHECK_SECONDS)
    assert rising.tolist() == [True, False]


def test_find_crossings_with_nothing_to_find_and_empty_window():
    col, t, rising = find_crossings(lambda t, c: 1.0 + 0.0 * t, 0.0, 1000.0, 100.0)
    assert t.size == 0 and col.size == 0 and rising.size == 0
    col, t, rising = find_crossings(lambda t, c: t, 10.0, 10.0, 100.0)
    assert t.size == 0


def test_find_extrema_locates_a_maximum():
    grid = np.linspace(0.0, 10.0, 11)

    def f(t, column):
        return -(t - 4.3) ** 2 + 0.0 * column

    values = f(grid[:, None], np.zeros((1, 1), dtype=int))
    col, t, v = find_extrema(f, grid, values, tolerance_seconds=1e-6)
    assert col.tolist() == [0]
    assert abs(t[0] - 4.3) < 1e-5 and abs(v[0]) < 1e-9


def test_refine_roots_vectorised_over_columns():
    roots = np.array([1.0, 2.5, 7.25])

    def f(t, column):
        return (t - roots[column]) ** 3 + 0.1 * (t - roots[column])

    lo, hi = roots - 1.7, roots + 0.4
    got = refine_roots(f, lo, hi, f(lo, np.arange(3)), f(hi, np.arange(3)), np.arange(3),
                       tolerance_seconds=1e-9)
    assert np.max(np.abs(got - roots)) < 1e-8
