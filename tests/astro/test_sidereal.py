"""Earth rotation angle and sidereal time (siderod.astro.sidereal).

References, named beside each check:
- ERFA's test program liberfa/erfa src/t_erfa_c.c (ERFA 2.0.1 / SOFA 20231011): t_era00, t_gmst06,
  t_gst06a, t_ee06a, t_ee00b, t_eect00 (values and tolerances copied from there);
- pyerfa 2.0.1.5, test-only: era00, gmst06, gst06a, ee06a, nut06a, nut00b, obl06, eect00, fal03...fapa03;
- the 10-row table of astro-references.md section 5 (computed with pyerfa 2.0.1.5);
- Meeus, Astronomical Algorithms 2nd ed., Examples 12.a/12.b [from memory, re-derived with erfa.gmst82];
- common practice: 24 h sidereal = 23 h 56 m 4.09 s mean solar.
"""

import datetime as dt

import erfa
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from siderod.astro.sidereal import (
    SIDEREAL_DAY_SECONDS,
    FastSidereal,
    _fundamental_arguments_2003,
    complementary_terms_rad,
    equation_of_equinoxes_rad,
    era_rad,
    find_lst_unix,
    gast_rad,
    gmst_rad,
    last_hours,
    lmst_hours,
    sidereal_to_solar_seconds,
    solar_to_sidereal_seconds,
)
from siderod.astro.timescales import instants_from_jd, instants_from_unix

Z = 2400000.5
SECONDS_PER_RAD = 43200.0 / np.pi
DEMO_LON_DEG = -(3 + 41 / 60 + 15 / 3600)  # Corrie Hill Observatory (invented demo site)
DEMO_NIGHT_START_UNIX = dt.datetime(2026, 12, 14, 16, 0, tzinfo=dt.UTC).timestamp()
DEMO_NIGHT_END_UNIX = dt.datetime(2026, 12, 15, 9, 0, tzinfo=dt.UTC).timestamp()

#: ERFA t_erfa_c.c tolerance for era00/gmst06/gst* (rad).
ERFA_ST_TOL_RAD = 1e-12
#: Brief: ERA bit-near era00; we keep ERFA's operation order, so 1e-12 rad is generous.
ERA_TOL_RAD = 1e-12
#: Brief: LMST within 1 microsecond of time of gmst06 + longitude (we measure ~1e-15 rad).
LMST_TOL_SECONDS = 1e-6
#: Project requirement: LAST within 0.1 ms of time of gst06a + longitude over 1900-2100. The checks below
#: use tighter, measured bounds; this one is what the 2000B path is held to on the demo night.
REQUIRED_LAST_SECONDS = 0.1e-3
#: Default (2000A) GAST is gst06a's IAU 2006/2000A model in equinox-based form (GMST + EE), gst06a the
#: CIO-based form (ERA - EO): we measured them 4.3e-12 rad = 0.06 microseconds of time apart at most
#: over 1900-2100; 0.2 microseconds bounds that with room for round-off, 500x inside the requirement.
LAST_VS_GST06A_TOL_SECONDS = 0.2e-6
#: The same equinox-vs-CIO difference in radians, for the ERFA vectors t_gst06a and t_ee06a (their own
#: tolerances, 1e-12 and 1e-15 rad, are for the CIO form; we measured 8.4e-13 rad at that epoch).
EQUINOX_VS_CIO_FORM_TOL_RAD = 5e-12
#: IAU 2000B nutation is a truncation: we measured its dpsi off 2000A by up to 2.8 mas over 1900-2100,
#: i.e. up to 0.17 ms of time in the equation of the equinoxes; 0.2 ms bounds the 2000B path.
LAST_2000B_VS_GST06A_TOL_SECONDS = 0.2e-3
#: Our GAST against the same model assembled from ERFA pieces (gmst06 + nut06a or nut00b dpsi cos obl06
#: + eect00): only round-off differs (measured 8.9e-16 rad).
SAME_MODEL_TOL_RAD = 1e-13
#: ee00b uses eps_A = obl80 + pr00 rate term; we use obl06 (IAU 2006): they differ by ~0.04", which moves
#: dpsi*cos(eps) by ~1e-12 rad.
EE00B_TOL_RAD = 1e-11
#: t_eect00 tolerance (rad).
EECT00_TOL_RAD = 1e-20
#: Meeus 12.a/12.b are IAU 1982 (gmst82); IAU 2006 GMST differs by ~3-4 ms in 1987 (astro-references 3a).
MEEUS_TOL_SECONDS = 5e-3
#: FastSidereal must stay within a microsecond of our exact model (fit error measured 0.09 us on the demo
#: night, 0.55 us at worst over 300 random windows of 1 h to 3 days in 1900-2100).
FAST_VS_EXACT_TOL_SECONDS = 1e-6
#: FastSidereal (2000A) against gst06a: its fit error plus the 0.06 us model difference (measured 0.55 us
#: at worst over those 300 windows); 1 us, 100x inside the 0.1 ms requirement.
FAST_VS_GST06A_TOL_SECONDS = 1e-6
#: Newton refinement in find_lst_unix converges far below this; 1e-9 h = 3.6 microseconds.
FIND_TOL_HOURS = 1e-9


def _wrap_pi(x):
    return (np.asarray(x) + np.pi) % (2 * np.pi) - np.pi


def _wrap_12(h):
    return (np.asarray(h) + 12.0) % 24.0 - 12.0


# --- ERFA test-program vectors -------------------------------------------------------------------


def test_era_matches_erfa_test_vector_t_era00():
    assert abs(float(era_rad(2400000.5, 54388.0)) - 0.4022837240028158102) <= ERFA_ST_TOL_RAD


def test_gmst_matches_erfa_test_vector_t_gmst06():
    value = gmst_rad(2400000.5, 53736.0, 2400000.5, 53736.0)
    assert abs(float(value) - 1.754174971870091203) <= ERFA_ST_TOL_RAD


def test_gast_matches_erfa_test_vector_t_gst06a():
    value = gast_rad(2400000.5, 53736.0, 2400000.5, 53736.0)
    assert abs(float(value) - 1.754166137675019159) <= EQUINOX_VS_CIO_FORM_TOL_RAD


def test_equation_of_equinoxes_matches_erfa_test_vector_t_ee06a():
    # t_erfa_c.c t_ee06a: -0.8834195072043790156e-5 rad (IAU 2006/2000A; = gst06a - gmst06).
    value = equation_of_equinoxes_rad(2400000.5, 53736.0)
    assert abs(float(value) + 0.8834195072043790156e-5) <= EQUINOX_VS_CIO_FORM_TOL_RAD


def test_equation_of_equinoxes_2000b_matches_erfa_test_vector_t_ee00b():
    # t_erfa_c.c t_ee00b: -0.8835700060003032831e-5 rad (tol 1e-18 there; ours uses obl06, see EE00B_TOL_RAD).
    value = equation_of_equinoxes_rad(2400000.5, 53736.0, nutation="2000B")
    assert abs(float(value) + 0.8835700060003032831e-5) <= EE00B_TOL_RAD


@pytest.mark.parametrize("bad", ["2000a", "IAU2000A", "2006A", None, 2000])
def test_unknown_nutation_model_is_refused_with_the_choices(bad):
    with pytest.raises(ValueError, match=r'nutation must be "2000A" .* or "2000B" .*got'):
        gast_rad(Z, 53736.0, Z, 53736.0, nutation=bad)
    with pytest.raises(ValueError, match="nutation must be"):
        FastSidereal(DEMO_NIGHT_START_UNIX, DEMO_NIGHT_END_UNIX, nutation=bad)


def test_complementary_terms_match_erfa_test_vector_t_eect00():
    assert (
        abs(float(complementary_terms_rad(2400000.5, 53736.0)) - 0.2046085004885125264e-8) <= EECT00_TOL_RAD
    )


def test_fundamental_arguments_match_erfa_fa03_functions():
    # pyerfa fal03, falp03, faf03, fad03, faom03, fave03, fae03, fapa03 (IERS Conventions 2003).
    t = np.array([-1.0, 0.0, 0.2693, 1.0])
    ours = _fundamental_arguments_2003(t)
    refs = [
        erfa.fal03,
        erfa.falp03,
        erfa.faf03,
        erfa.fad03,
        erfa.faom03,
        erfa.fave03,
        erfa.fae03,
        erfa.fapa03,
    ]
    for k, fn in enumerate(refs):
        np.testing.assert_allclose(ours[:, k], fn(t), rtol=0, atol=1e-15)


# --- reference table (astro-references.md section 5, pyerfa 2.0.1.5) -----------------------------

SECTION5_ROWS = [
    # UT1 date2, TT date2, ERA00, GMST06, GST06A (rad)
    (33282.0, 33282.000337, 1.757829425324722, 1.746650999558344, 1.746636310422770),
    (42578.25, 42578.250527, 6.164754948989440, 6.159266346650742, 6.159332781884518),
    (46895.0, 46895.00064, 3.453243617472879, 3.450397404055972, 3.450380588652902),
    (46895.80625, 46895.80689, 2.249745721498535, 2.246900001624689, 2.246882833793142),
    (51544.5, 51544.500739, 4.894961212823757, 4.894961283603241, 4.894899323192855),
    (53736.0, 53736.00075, 1.752833255303074, 1.754174972329249, 1.754166138768565),
    (60389.129166666666, 60389.129968, 3.915398490533427, 3.920813581026263, 3.920794119340659),
    (61376.0, 61376.0008, 1.230593759393855, 1.236613098956119, 1.236653335930928),
    (69991.75, 69991.751, 3.356214042874655, 3.367509120422961, 3.367569966253460),
    (88069.0, 88069.0023, 1.735845737264874, 1.758212615021356, 1.758227241133763),
]


@pytest.mark.parametrize(("ut1", "tt", "era", "gmst", "gst"), SECTION5_ROWS)
def test_section5_table_era_gmst06_gst06a(ut1, tt, era, gmst, gst):
    assert abs(float(era_rad(Z, ut1)) - era) <= ERFA_ST_TOL_RAD
    assert abs(float(gmst_rad(Z, ut1, Z, tt)) - gmst) <= ERFA_ST_TOL_RAD
    assert abs(float(_wrap_pi(gast_rad(Z, ut1, Z, tt) - gst))) * SECONDS_PER_RAD <= LAST_VS_GST06A_TOL_SECONDS


@pytest.mark.parametrize(("ut1", "tt", "era", "gmst", "gst"), SECTION5_ROWS)
def test_section5_table_lmst_with_longitude(ut1, tt, era, gmst, gst):
    inst = instants_from_jd(Z, ut1, scale="ut1")
    # Re-use the table's exact TT literal: Instants derived from UT1 would carry a different Delta T.
    from siderod.astro.timescales import _replace

    inst = _replace(inst, tt_whole=np.float64(Z), tt_frac=np.float64(tt))
    for lon in (DEMO_LON_DEG, 0.0, 151.2, -179.9):
        expected = (gmst * 12 / np.pi + lon / 15.0) % 24.0
        assert abs(float(_wrap_12(lmst_hours(inst, lon) - expected))) * 3600 <= LMST_TOL_SECONDS


# --- property tests against pyerfa over 1900-2100 ------------------------------------------------

UNIX_1900 = dt.datetime(1900, 1, 1, tzinfo=dt.UTC).timestamp()
UNIX_2100 = dt.datetime(2100, 1, 1, tzinfo=dt.UTC).timestamp()


@settings(max_examples=80, deadline=None, database=None)
@given(st.floats(UNIX_1900, UNIX_2100), st.floats(-180.0, 180.0), st.floats(-0.9, 0.9))
def test_lmst_matches_erfa_gmst06_plus_longitude(unix, lon_deg, dut1):
    inst = instants_from_unix(unix, dut1_seconds=dut1)
    # pyerfa gmst06 with the very same UT1 and TT two-part dates.
    ref = erfa.gmst06(inst.ut1_whole, inst.ut1_frac, inst.tt_whole, inst.tt_frac) * 12 / np.pi + lon_deg / 15
    assert abs(float(_wrap_12(lmst_hours(inst, lon_deg) - ref))) * 3600 <= LMST_TOL_SECONDS
    assert (
        abs(float(era_rad(inst.ut1_whole, inst.ut1_frac) - erfa.era00(inst.ut1_whole, inst.ut1_frac)))
        <= ERA_TOL_RAD
    )


@settings(max_examples=80, deadline=None, database=None)
@given(st.floats(UNIX_1900, UNIX_2100), st.floats(-180.0, 180.0), st.floats(-0.9, 0.9))
def test_last_matches_erfa_gst06a_plus_longitude(unix, lon_deg, dut1):
    inst = instants_from_unix(unix, dut1_seconds=dut1)
    ref = erfa.gst06a(inst.ut1_whole, inst.ut1_frac, inst.tt_whole, inst.tt_frac) * 12 / np.pi + lon_deg / 15
    assert abs(float(_wrap_12(last_hours(inst, lon_deg) - ref))) * 3600 <= LAST_VS_GST06A_TOL_SECONDS
    # The 2000B path stays available, held to its own bound.
    last_b = last_hours(inst, lon_deg, nutation="2000B")
    assert abs(float(_wrap_12(last_b - ref))) * 3600 <= LAST_2000B_VS_GST06A_TOL_SECONDS


@settings(max_examples=40, deadline=None, database=None)
@given(st.floats(UNIX_1900, UNIX_2100), st.floats(600.0, 3 * 86400.0), st.floats(-180.0, 180.0),
       st.floats(-0.9, 0.9))
def test_fast_sidereal_matches_erfa_gst06a_plus_longitude(start_unix, length_seconds, lon_deg, dut1):
    fast = FastSidereal(start_unix, start_unix + length_seconds, dut1_seconds=dut1)
    unix = np.linspace(start_unix, start_unix + length_seconds, 9)
    inst = instants_from_unix(unix, dut1_seconds=dut1)
    ref = erfa.gst06a(inst.ut1_whole, inst.ut1_frac, inst.tt_whole, inst.tt_frac) * 12 / np.pi + lon_deg / 15
    assert np.abs(_wrap_12(fast.last_hours(unix, lon_deg) - ref)).max() * 3600 <= FAST_VS_GST06A_TOL_SECONDS


@pytest.mark.slow
def test_last_vectorised_against_erfa_over_two_centuries():
    # 2 000 instants spread over 1900-2100 in one call (pyerfa gst06a, gmst06, era00, vectorised).
    rng = np.random.default_rng(20261214)
    inst = instants_from_unix(
        rng.uniform(UNIX_1900, UNIX_2100, 2000), dut1_seconds=rng.uniform(-0.9, 0.9, 2000)
    )
    u1, u2, t1, t2 = inst.ut1_whole, inst.ut1_frac, inst.tt_whole, inst.tt_frac
    assert np.abs(era_rad(u1, u2) - erfa.era00(u1, u2)).max() <= ERA_TOL_RAD
    assert (
        np.abs(_wrap_pi(gmst_rad(u1, u2, t1, t2) - erfa.gmst06(u1, u2, t1, t2))).max() * SECONDS_PER_RAD
        <= LMST_TOL_SECONDS
    )
    gast = gast_rad(u1, u2, t1, t2)
    gst06a = erfa.gst06a(u1, u2, t1, t2)
    assert np.abs(_wrap_pi(gast - gst06a)).max() * SECONDS_PER_RAD <= LAST_VS_GST06A_TOL_SECONDS
    gast_b = gast_rad(u1, u2, t1, t2, nutation="2000B")
    assert np.abs(_wrap_pi(gast_b - gst06a)).max() * SECONDS_PER_RAD <= LAST_2000B_VS_GST06A_TOL_SECONDS
    # The same IAU 2006 GMST + EE models assembled from ERFA routines agree to round-off.
    for ours, nutation in ((gast, erfa.nut06a), (gast_b, erfa.nut00b)):
        dpsi, _ = nutation(t1, t2)
        same = erfa.gmst06(u1, u2, t1, t2) + dpsi * np.cos(erfa.obl06(t1, t2)) + erfa.eect00(t1, t2)
        assert np.abs(_wrap_pi(ours - same)).max() <= SAME_MODEL_TOL_RAD


# --- handbook and common practice ----------------------------------------------------------------


def _hms(h, m, s):
    return h + m / 60 + s / 3600


@pytest.mark.parametrize(
    ("jd_frac", "expected_hours"),
    [
        (0.0, _hms(13, 10, 46.3668)),  # Meeus Example 12.a, 1987 April 10, 0h UT [from memory, re-derived]
        (0.80625, _hms(8, 34, 57.0896)),  # Meeus Example 12.b, 1987 April 10, 19h21m00s UT [same]
    ],
)
def test_mean_sidereal_time_matches_meeus_examples_12a_12b(jd_frac, expected_hours):
    # UT1 = UT as in Meeus; TT = UT + 55 s (Delta T in 1987, as in astro-references 3a).
    inst = instants_from_jd(2446895.5, jd_frac, scale="ut1")
    from siderod.astro.timescales import _replace

    inst = _replace(inst, tt_whole=np.float64(2446895.5), tt_frac=np.float64(jd_frac + 55.0 / 86400.0))
    assert abs(float(_wrap_12(lmst_hours(inst, 0.0) - expected_hours))) * 3600 <= MEEUS_TOL_SECONDS


def test_sidereal_day_is_23h56m4_09s_of_mean_solar_time():
    # Common practice: 24 h sidereal = 23 h 56 m 4.09 s mean solar (4.0905 s with one more digit).
    assert float(sidereal_to_solar_seconds(86400.0)) == pytest.approx(23 * 3600 + 56 * 60 + 4.0905, abs=1e-4)
    assert SIDEREAL_DAY_SECONDS == pytest.approx(86164.0905, abs=1e-4)
    assert float(solar_to_sidereal_seconds(sidereal_to_solar_seconds(3600.0))) == pytest.approx(
        3600.0, abs=1e-9
    )
    # And the GMST model itself advances one turn in that time (pyerfa-free: our own exact GMST).
    t0 = instants_from_unix(DEMO_NIGHT_START_UNIX)
    t1 = instants_from_unix(DEMO_NIGHT_START_UNIX + SIDEREAL_DAY_SECONDS)
    assert abs(float(_wrap_12(lmst_hours(t1, 0.0) - lmst_hours(t0, 0.0)))) * 3600 < 1e-3


# --- FastSidereal and find_lst_unix ---------------------------------------------------------------


def test_fast_sidereal_matches_exact_model_and_gst06a_on_demo_night():
    fast = FastSidereal(DEMO_NIGHT_START_UNIX, DEMO_NIGHT_END_UNIX, dut1_seconds=0.08)
    # Every 30 s of the 17 h night: the fit error varies over hours, so this grid sees its peaks.
    unix = np.linspace(DEMO_NIGHT_START_UNIX, DEMO_NIGHT_END_UNIX, 2041)
    inst = instants_from_unix(unix, dut1_seconds=0.08)
    exact = last_hours(inst, DEMO_LON_DEG)
    got = fast.last_hours(unix, DEMO_LON_DEG)
    assert np.abs(_wrap_12(got - exact)).max() * 3600 <= FAST_VS_EXACT_TOL_SECONDS
    few = inst[::4]  # pyerfa gst06a costs ~50 us per instant: 511 of them
    ref = erfa.gst06a(few.ut1_whole, few.ut1_frac, few.tt_whole, few.tt_frac) * 12 / np.pi + DEMO_LON_DEG / 15
    assert np.abs(_wrap_12(got[::4] - ref)).max() * 3600 <= FAST_VS_GST06A_TOL_SECONDS
    mean = fast.lmst_hours(unix, DEMO_LON_DEG)
    assert np.abs(_wrap_12(mean - lmst_hours(inst, DEMO_LON_DEG))).max() * 3600 <= FAST_VS_EXACT_TOL_SECONDS
    assert np.all((got >= 0) & (got < 24))
    # The 2000B path: same fit, the 2000B model; within the requirement on this night.
    fast_b = FastSidereal(DEMO_NIGHT_START_UNIX, DEMO_NIGHT_END_UNIX, dut1_seconds=0.08, nutation="2000B")
    got_b = fast_b.last_hours(unix, DEMO_LON_DEG)
    exact_b = last_hours(inst, DEMO_LON_DEG, nutation="2000B")
    assert np.abs(_wrap_12(got_b - exact_b)).max() * 3600 <= FAST_VS_EXACT_TOL_SECONDS
    assert np.abs(_wrap_12(got_b[::4] - ref)).max() * 3600 <= REQUIRED_LAST_SECONDS


def test_fast_sidereal_multi_day_window_broadcasts_longitudes():
    start = DEMO_NIGHT_START_UNIX
    fast = FastSidereal(start, start + 5 * 86400)
    unix = np.linspace(start, start + 5 * 86400, 600).reshape(3, 200, 1)  # 20 min apart
    lons = np.array([-120.0, DEMO_LON_DEG, 45.0])
    got = fast.last_hours(unix, lons)
    assert got.shape == (3, 200, 3)
    exact = last_hours(instants_from_unix(unix), lons)
    assert np.abs(_wrap_12(got - exact)).max() * 3600 <= FAST_VS_EXACT_TOL_SECONDS
    assert isinstance(fast.last_hours(start + 10.0, 0.0), np.float64)
    with pytest.raises(ValueError, match="start_unix < end_unix"):
        FastSidereal(start, start)


def test_find_lst_unix_returns_each_crossing_in_window():
    start, end = DEMO_NIGHT_START_UNIX, DEMO_NIGHT_START_UNIX + 3 * 86400
    for apparent, local in ((True, last_hours), (False, lmst_hours)):
        found = find_lst_unix(5.5, DEMO_LON_DEG, start, end, apparent=apparent, dut1_seconds=0.08)
        assert found.shape == (3,)
        assert np.all(np.diff(found) > 0) and found[0] >= start and found[-1] < end
        np.testing.assert_allclose(np.diff(found), SIDEREAL_DAY_SECONDS, atol=0.01)
        lst = local(instants_from_unix(found, dut1_seconds=0.08), DEMO_LON_DEG)
        assert np.abs(_wrap_12(lst - 5.5)).max() <= FIND_TOL_HOURS
    assert find_lst_unix(5.5, 0.0, start, start).size == 0
    short = find_lst_unix(29.5, 0.0, start, start + 3600.0)  # 29.5 h wraps to 5.5 h
    assert short.size in (0, 1)
    with pytest.raises(ValueError, match="scalars"):
        find_lst_unix(np.array([1.0, 2.0]), 0.0, start, end)


def test_exact_functions_broadcast_and_return_scalars_for_scalars():
    assert isinstance(era_rad(Z, 53736.0), np.float64)
    assert isinstance(gast_rad(Z, 53736.0, Z, 53736.0), np.float64)
    frac = np.linspace(0, 1, 6).reshape(2, 3)
    assert era_rad(Z + 61388.0, frac).shape == (2, 3)
    assert gmst_rad(Z, 61388.0 + frac, Z, 61388.0 + frac[:1]).shape == (2, 3)
    inst = instants_from_unix(DEMO_NIGHT_START_UNIX + np.arange(4.0)[:, None] * 3600)
    assert lmst_hours(inst, np.array([0.0, 10.0])).shape == (4, 2)
    assert isinstance(last_hours(instants_from_unix(DEMO_NIGHT_START_UNIX), 0.0), np.float64)
