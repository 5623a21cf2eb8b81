"""Frame bias, IAU 2006 precession and IAU 2000B nutation (siderod.astro.precession).

References, named beside each check:
- ERFA's test program liberfa/erfa src/t_erfa_c.c (ERFA 2.0.1 / SOFA 20231011): t_nut00b, t_obl06,
  t_pfw06, t_pmat06, t_pnm06a (values and tolerances copied from there);
- pyerfa 2.0.1.5, test-only: nut00b, obl06, pfw06, pmat06, fw2m, pnm06a.
"""

import erfa
import numpy as np
import pytest

from siderod.astro.precession import (
    bias_precession_matrix,
    bias_precession_nutation_matrix,
    fw_angles_rad,
    mean_obliquity_rad,
    nutation_rad,
)

Z = 2400000.5
MAS_RAD = 4.848136811095359935899141e-9

#: t_erfa_c.c tolerances, copied: nut00b 1e-13 rad; obl06 1e-14 rad; matrices 1e-12 diagonal, 1e-14 off.
NUT00B_TOL_RAD = 1e-13
OBL06_TOL_RAD = 1e-14
MATRIX_DIAG_TOL = 1e-12
MATRIX_OFF_TOL = 1e-14
#: Same formulas and operation order as ERFA: differences are round-off.
SAME_MODEL_TOL_RAD = 1e-15
#: Our NPB uses IAU 2000B, pnm06a uses 2000A: the pole differs by ~1 mas (measured up to ~3 mas in dpsi,
#: times sin(eps) on the matrix elements) -> 2e-8 per element bounds it.
PNM06A_TOL = 2e-8


def test_nutation_matches_erfa_test_vector_t_nut00b():
    dpsi, deps = nutation_rad(2400000.5, 53736.0)
    assert abs(float(dpsi) + 0.9632552291148362783e-5) <= NUT00B_TOL_RAD
    assert abs(float(deps) - 0.4063197106621159367e-4) <= NUT00B_TOL_RAD


def test_mean_obliquity_matches_erfa_test_vector_t_obl06():
    assert abs(float(mean_obliquity_rad(2400000.5, 54388.0)) - 0.4090749229387258204) <= OBL06_TOL_RAD


def test_fw_angles_match_erfa_test_vector_t_pfw06():
    gamb, phib, psib, epsa = fw_angles_rad(2400000.5, 50123.9999)
    assert abs(float(gamb) + 0.2243387670997995690e-5) <= 1e-16
    assert abs(float(phib) - 0.4091014602391312808) <= 1e-12
    assert abs(float(psib) + 0.9501954178013031895e-3) <= 1e-14
    assert abs(float(epsa) - 0.4091014316587367491) <= 1e-12


PMAT06 = np.array(
    [
        [0.9999995505176007047, 0.8695404617348208406e-3, 0.3779735201865589104e-3],
        [-0.8695404723772031414e-3, 0.9999996219496027161, -0.1361752497080270143e-6],
        [-0.3779734957034089490e-3, -0.1924880847894457113e-6, 0.9999999285679971958],
    ]
)
PNM06A = np.array(
    [
        [0.9999995832794205484, 0.8372382772630962111e-3, 0.3639684771140623099e-3],
        [-0.8372533744743683605e-3, 0.9999996486492861646, 0.4132905944611019498e-4],
        [-0.3639337469629464969e-3, -0.4163377605910663999e-4, 0.9999999329094260057],
    ]
)


def _assert_matrix_close(got, expected, diag_tol, off_tol):
    diff = np.abs(np.asarray(got) - expected)
    assert np.all(np.diag(diff) <= diag_tol)
    assert np.all(diff[~np.eye(3, dtype=bool)] <= off_tol)


def test_bias_precession_matrix_matches_erfa_test_vector_t_pmat06():
    _assert_matrix_close(
        bias_precession_matrix(2400000.5, 50123.9999), PMAT06, MATRIX_DIAG_TOL, MATRIX_OFF_TOL
    )


def test_bias_precession_nutation_matrix_near_erfa_test_vector_t_pnm06a():
    # pnm06a is IAU 2006/2000A; ours is the same construction with IAU 2000B nutation.
    _assert_matrix_close(
        bias_precession_nutation_matrix(2400000.5, 50123.9999), PNM06A, PNM06A_TOL, PNM06A_TOL
    )


def test_against_pyerfa_over_1900_2100():
    mjd = np.linspace(15020.0, 88069.0, 401)
    dpsi, deps = nutation_rad(Z, mjd)
    ref_dpsi, ref_deps = erfa.nut00b(Z, mjd)
    assert np.abs(dpsi - ref_dpsi).max() <= SAME_MODEL_TOL_RAD
    assert np.abs(deps - ref_deps).max() <= SAME_MODEL_TOL_RAD
    assert np.abs(mean_obliquity_rad(Z, mjd) - erfa.obl06(Z, mjd)).max() <= SAME_MODEL_TOL_RAD
    for ours, ref in zip(fw_angles_rad(Z, mjd), erfa.pfw06(Z, mjd), strict=True):
        assert np.abs(ours - ref).max() <= SAME_MODEL_TOL_RAD
    assert np.abs(bias_precession_matrix(Z, mjd) - erfa.pmat06(Z, mjd)).max() <= SAME_MODEL_TOL_RAD
    gamb, phib, psib, epsa = erfa.pfw06(Z, mjd)
    same = erfa.fw2m(gamb, phib, psib + ref_dpsi, epsa + ref_deps)  # pnm06a's recipe with nut00b
    npb = bias_precession_nutation_matrix(Z, mjd)
    assert np.abs(npb - same).max() <= SAME_MODEL_TOL_RAD
    assert np.abs(npb - erfa.pnm06a(Z, mjd)).max() <= PNM06A_TOL


def test_matrices_broadcast_and_are_rotations():
    whole = np.full((2, 1), 2461388.5)
    frac = np.array([0.1, 0.5, 0.9])
    m = bias_precession_nutation_matrix(whole, frac)
    assert m.shape == (2, 3, 3, 3)
    np.testing.assert_allclose(m @ np.swapaxes(m, -1, -2), np.broadcast_to(np.eye(3), m.shape), atol=1e-15)
    np.testing.assert_allclose(np.linalg.det(m), 1.0, atol=1e-15)
    assert bias_precession_matrix(2461388.5, 0.25).shape == (3, 3)
    dpsi, deps = nutation_rad(2461388.5, 0.25)
    assert isinstance(dpsi, np.float64) and isinstance(deps, np.float64)
    assert nutation_rad(whole, frac)[0].shape == (2, 3)


@pytest.mark.parametrize(
    "split", [(2400000.5, 61388.25), (2461388.5, 0.25), (2461388.75, 0.0), (2451545.0, 9843.75)]
)
def test_results_do_not_depend_on_the_date_split(split):
    # ERFA routines accept any split of the same JD; so must ours (differences at round-off).
    ref = nutation_rad(2461388.5, 0.25)
    got = nutation_rad(*split)
    assert abs(float(got[0] - ref[0])) <= 1e-14 and abs(float(got[1] - ref[1])) <= 1e-14
