"""IAU 2000A nutation with the IAU 2006 adjustments (siderod.astro.nutation2000a).

References, named beside each check:
- ERFA's test program liberfa/erfa src/t_erfa_c.c (ERFA 2.0.1 / SOFA 20231011, as bundled in the pyerfa
  2.0.1.5 source distribution): t_nut06a, t_nut00a (values and tolerances copied from there);
- pyerfa 2.0.1.5, test-only: nut06a, nut00a, fal03 ... fapa03;
- ERFA src/nut00b.c via siderod.astro.precession: IAU 2000B is the same series cut to its 77 largest
  luni-solar terms (McCarthy & Luzum 2003), so its table must equal our first 77 rows.
"""

import subprocess
import sys

import erfa
import numpy as np
import pytest

from siderod.astro import nutation2000a as nut
from siderod.astro.nutation2000a import nutation_2000a_rad
from siderod.astro.precession import _NUT00B_ARRAY, julian_centuries_tt

Z = 2400000.5
MJD_1900 = 15020.0  # 1900-01-01
MJD_2100 = 88069.0  # 2100-01-01

#: t_erfa_c.c tolerance for t_nut06a and t_nut00a (rad), copied.
ERFA_NUT_TOL_RAD = 1e-13
#: Same series, arguments and operation order as ERFA except the order of summation (matrix products
#: here, a reverse loop there); we measured at most 3.4e-19 rad, so 1e-16 rad (2e-5 microarcsec) bounds
#: round-off with room for other BLAS kernels.
SAME_MODEL_TOL_RAD = 1e-16
#: Our fundamental arguments copy ERFA's polynomials and operation order: equal to the last bit, measured.
ARGUMENT_TOL_RAD = 1e-15
#: Splitting one date differently changes t by round-off only (~1e-17 centuries).
SPLIT_TOL_RAD = 1e-16


def test_nutation_matches_erfa_test_vector_t_nut06a():
    dpsi, deps = nutation_2000a_rad(2400000.5, 53736.0)
    assert abs(float(dpsi) - -0.9630912025820308797e-5) <= ERFA_NUT_TOL_RAD
    assert abs(float(deps) - 0.4063238496887249798e-4) <= ERFA_NUT_TOL_RAD


def test_unadjusted_series_matches_erfa_test_vector_t_nut00a():
    t = np.asarray(julian_centuries_tt(2400000.5, 53736.0))
    dpsi, deps = nut._nutation_2000a_from_t(t)
    assert abs(float(dpsi) - -0.9630909107115518431e-5) <= ERFA_NUT_TOL_RAD
    assert abs(float(deps) - 0.4063239174001678710e-4) <= ERFA_NUT_TOL_RAD


def test_matches_pyerfa_nut06a_and_nut00a_over_1900_2100():
    rng = np.random.default_rng(20261214)
    mjd = rng.uniform(MJD_1900, MJD_2100, 400)
    dpsi, deps = nutation_2000a_rad(Z, mjd)
    ref_dpsi, ref_deps = erfa.nut06a(Z, mjd)  # pyerfa nut06a: IAU 2000A + IAU 2006 adjustments
    assert np.abs(dpsi - ref_dpsi).max() <= SAME_MODEL_TOL_RAD
    assert np.abs(deps - ref_deps).max() <= SAME_MODEL_TOL_RAD
    raw_dpsi, raw_deps = nut._nutation_2000a_from_t(np.asarray(julian_centuries_tt(Z, mjd)))
    ref_dpsi, ref_deps = erfa.nut00a(Z, mjd)  # pyerfa nut00a: IAU 2000A as published
    assert np.abs(raw_dpsi - ref_dpsi).max() <= SAME_MODEL_TOL_RAD
    assert np.abs(raw_deps - ref_deps).max() <= SAME_MODEL_TOL_RAD


def test_chunked_evaluation_matches_pyerfa_across_chunk_edges(monkeypatch):
    # Instants go through in passes of _CHUNK_INSTANTS; shrink a pass to 7 so that 30 instants take
    # five passes, the last one partial (pyerfa nut06a as the reference).
    monkeypatch.setattr(nut, "_CHUNK_INSTANTS", 7)
    mjd = np.linspace(MJD_1900, MJD_2100, 30).reshape(5, 6)
    dpsi, deps = nutation_2000a_rad(Z, mjd)
    ref_dpsi, ref_deps = erfa.nut06a(Z, mjd)
    assert dpsi.shape == (5, 6)
    assert np.abs(dpsi - ref_dpsi).max() <= SAME_MODEL_TOL_RAD
    assert np.abs(deps - ref_deps).max() <= SAME_MODEL_TOL_RAD


def test_fundamental_arguments_match_erfa_fa03_functions():
    # pyerfa fal03 ... fapa03 (IERS Conventions 2003), in our column order.
    t = np.array([-1.0, -0.37, 0.0, 0.2693, 1.0])
    refs = [erfa.fal03, erfa.falp03, erfa.faf03, erfa.fad03, erfa.faom03, erfa.fame03, erfa.fave03,
            erfa.fae03, erfa.fama03, erfa.faju03, erfa.fasa03, erfa.faur03, erfa.fane03, erfa.fapa03]
    ours = nut._iers2003_arguments_rad(t)
    assert ours.shape == (5, 14)
    for k, fn in enumerate(refs):
        np.testing.assert_allclose(ours[:, k], fn(t), rtol=0, atol=ARGUMENT_TOL_RAD, err_msg=fn.__name__)


def test_tables_hold_the_published_term_counts_and_agree_with_iau_2000b():
    # IERS Conventions 2003 Tables 5.3a/5.3b (MHB2000): 678 luni-solar and 687 planetary terms.
    series = nut._series()
    assert series.multipliers.shape == (18, 678 + 687)
    assert series.sin_coefs.shape == series.cos_coefs.shape == (678 + 687, 3)
    assert not series.multipliers.flags.writeable
    # The 5 luni-solar arguments drive only the first 678 terms, the 13 planetary ones only the rest.
    assert not series.multipliers[:5, 678:].any() and not series.multipliers[5:, :678].any()
    # Columns back in ERFA's layout: l l' F D Om, sp spt cp ce cet se.
    ls = np.column_stack([
        series.multipliers[:5, :678].T,
        series.sin_coefs[:678, 0], series.sin_coefs[:678, 1], series.cos_coefs[:678, 0],
        series.cos_coefs[:678, 1], series.cos_coefs[:678, 2], series.sin_coefs[:678, 2],
    ])
    # IAU 2000B (ERFA nut00b.c, transcribed separately in precession.py) is the first 77 terms.
    np.testing.assert_array_equal(ls[:77], _NUT00B_ARRAY)
    # Leading term, IERS Conventions 2003 Table 5.3a row 1: -17.2064161" sin Omega (and its companions).
    np.testing.assert_array_equal(ls[0], [0, 0, 0, 0, 1, -172064161, -174666, 33386, 92052331, 9086, 15377])


@pytest.mark.parametrize(
    "split", [(2400000.5, 61388.25), (2461388.5, 0.25), (2461388.75, 0.0), (2451545.0, 9843.75)]
)
def test_results_do_not_depend_on_the_date_split(split):
    # ERFA routines accept any split of the same JD; so must ours.
    ref = nutation_2000a_rad(2461388.5, 0.25)
    got = nutation_2000a_rad(*split)
    assert abs(float(got[0] - ref[0])) <= SPLIT_TOL_RAD and abs(float(got[1] - ref[1])) <= SPLIT_TOL_RAD


def test_broadcasts_and_returns_scalars_for_scalars():
    dpsi, deps = nutation_2000a_rad(2461388.5, 0.25)
    assert isinstance(dpsi, np.float64) and isinstance(deps, np.float64)
    whole = np.full((2, 1), 2461388.5)
    frac = np.array([0.1, 0.5, 0.9])
    dpsi, deps = nutation_2000a_rad(whole, frac)
    assert dpsi.shape == deps.shape == (2, 3)
    np.testing.assert_array_equal(dpsi[0], dpsi[1])
    empty = nutation_2000a_rad(2461388.5, np.empty((0, 4)))
    assert empty[0].shape == empty[1].shape == (0, 4)


@pytest.mark.slow
def test_tables_are_built_on_first_call_not_at_import():
    # A fresh interpreter: importing the module must leave the cache empty; the first call fills it.
    code = (
        "import siderod.astro.nutation2000a as m\n"
        "assert m._series.cache_info().currsize == 0\n"
        "m.nutation_2000a_rad(2451545.0, 0.0)\n"
        "assert m._series.cache_info().currsize == 1\n"
    )
    subprocess.run([sys.executable, "-c", code], check=True, timeout=60)
