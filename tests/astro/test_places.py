"""Tests for siderod.astro.places: apparent places, hour angle, alt/az, parallactic angle.

References: pyerfa (ERFA 2.0.1 / SOFA 20231011) routines named beside each check, ERFA's own test
program ``t_erfa_c.c`` (vectors copied into astro-references.md §1), and Meeus' worked examples
[from memory, re-derived in astro-references.md §3].
"""

import math
import warnings

import erfa
import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from siderod.astro.places import (
    ApparentWindow,
    Observer,
    altaz_to_hadec,
    apparent_radec,
    hadec_to_altaz,
    observe,
    parallactic_angle_deg,
    stars_from_radec,
)
from siderod.astro.timescales import instants_from_jd, instants_from_unix

ARCSEC_DEG = 1.0 / 3600.0

#: t_erfa_c.c tolerances for hd2ae/ae2hd/hd2pa are 1e-13/1e-14 rad; we compute in degrees and hours
#: (one more multiply and divide), so we allow 1e-12 rad.
ERFA_VECTOR_TOL_RAD = 1e-12
#: Meeus 13.b prints h and A to 1e-4 deg, and its theta0 is rounded to 1 ms of time.
MEEUS_13B_TOL_DEG = 1.5e-4
#: Brief: apparent topocentric alt/az within 1" of erfa.atco13 (refraction off) above 0 deg.
ATCO13_NO_REFRACTION_ARCSEC = 1.0
#: Brief: refraction on, within 5" above 15 deg (Bennett vs ERFA's refco model, see refraction tests).
ATCO13_REFRACTION_ARCSEC = 5.0
#: Omitted light deflection is 0.5" at 1 deg from the Sun and 0.16" at 3 deg; nobody points there.
SUN_EXCLUSION_DEG = 3.0
#: Meeus 23.a (approximate method) and ERFA atci13 differ by 0.004 s / 0.05" (reference notes §3e).
MEEUS_23A_TOL_ARCSEC = 0.15
#: ERFA atci13 includes light deflection, which we omit; the t_erfa_c.c star lies only 0.30 deg from
#: the Sun (epv00), where deflection is about 1.6" (0.00407" (1 + cos E) / sin E).
ATCI13_TOL_ARCSEC = 1.7
#: ApparentWindow interpolation (Chebyshev nodes, 1 per day + 3) against the direct computation.
WINDOW_TOL_ARCSEC = 0.002


# ---------------------------------------------------------------------------------------------
# ERFA t_erfa_c.c vectors (astro-references.md §1c), routines t_hd2ae, t_ae2hd, t_hd2pa


def test_hadec_to_altaz_matches_erfa_t_hd2ae():
    alt, az = hadec_to_altaz(math.degrees(1.1) / 15.0, math.degrees(1.2), math.degrees(0.3))
    assert abs(math.radians(float(az)) - 5.916889243730066194) < ERFA_VECTOR_TOL_RAD
    assert abs(math.radians(float(alt)) - 0.4472186304990486228) < ERFA_VECTOR_TOL_RAD


def test_altaz_to_hadec_matches_erfa_t_ae2hd():
    ha, dec = altaz_to_hadec(math.degrees(1.1), math.degrees(5.5), math.degrees(0.7))
    assert abs(float(ha) * 15.0 * math.pi / 180.0 - 0.5933291115507309663) < ERFA_VECTOR_TOL_RAD
    assert abs(math.radians(float(dec)) - 0.9613934761647817620) < ERFA_VECTOR_TOL_RAD


def test_parallactic_angle_matches_erfa_t_hd2pa():
    q = parallactic_angle_deg(math.degrees(1.1) / 15.0, math.degrees(1.2), math.degrees(0.3))
    assert abs(math.radians(float(q)) - 1.906227428001995580) < ERFA_VECTOR_TOL_RAD


# astro-references.md §4f table [pyerfa hd2ae / hd2pa, phi = 52 deg]: (dec, H, A, h, q)
GEOMETRY_TABLE = [
    (20, -1, 154.2704613095, 55.9280881660, -16.5245502724),
    (20, 0, 180.0, 58.0, 0.0),
    (20, 6, 282.6303352052, 15.6354413488, 39.7410432047),
    (20, 12, 0.0, -18.0, 0.0),
    (52, -1, 84.0771186439, 80.7814882899, -84.0771186439),
    (80, -1, 5.4149211465, 61.5586121573, -160.4532539593),
    (80, 0, 0.0, 62.0, 180.0),
    (80, 6, 344.0181553673, 50.8993361352, 77.4691552142),
    (-30, 6, 250.4321255333, -23.2039563893, 42.0552277942),
]


@pytest.mark.parametrize(("dec", "ha", "az", "alt", "q"), GEOMETRY_TABLE)
def test_geometry_table_from_pyerfa(dec, ha, az, alt, q):
    alt_c, az_c = hadec_to_altaz(ha, dec, 52.0)
    assert float(alt_c) == pytest.approx(alt, abs=1e-9)
    assert ((float(az_c) - az + 180.0) % 360.0) - 180.0 == pytest.approx(0.0, abs=1e-9)
    assert 0.0 <= float(az_c) < 360.0
    q_c = float(parallactic_angle_deg(ha, dec, 52.0))
    assert ((q_c - q + 180.0) % 360.0) - 180.0 == pytest.approx(0.0, abs=1e-9)


def test_altaz_round_trip_over_the_sphere():
    rng = np.random.default_rng(5)
    ha = rng.uniform(-12, 12, 1000)
    dec = np.degrees(np.arcsin(rng.uniform(-1, 1, 1000)))
    lat = rng.uniform(-89.9, 89.9, 1000)
    ha2, dec2 = altaz_to_hadec(*hadec_to_altaz(ha, dec, lat), lat)
    assert np.max(np.abs(dec2 - dec)) < 1e-9
    assert np.max(np.abs(((ha2 - ha + 12) % 24 - 12) * np.cos(np.radians(dec)))) < 1e-9
    assert np.all((ha2 >= -12) & (ha2 < 12))


def test_meeus_example_13b_venus_from_usno():
    # [Meeus, from memory; re-derived §3b]: 1987-04-10 19:21 UT, phi = +38 55' 17", L = +77 03' 56"
    # (Meeus west positive, so east longitude is negative), apparent theta0 = 8h34m56.853s,
    # Venus alpha = 23h09m16.641s, delta = -6 43' 11.61".  A = 68.0337 deg from the SOUTH, h = 15.1249.
    lon_east = -(77 + 3 / 60 + 56 / 3600)
    last = 8 + 34 / 60 + 56.853 / 3600 + lon_east / 15.0
    ha = last - (23 + 9 / 60 + 16.641 / 3600)
    dec = -(6 + 43 / 60 + 11.61 / 3600)
    alt, az = hadec_to_altaz(ha, dec, 38 + 55 / 60 + 17 / 3600)
    assert float(alt) == pytest.approx(15.1249, abs=MEEUS_13B_TOL_DEG)
    assert float(az) == pytest.approx(68.0337 + 180.0, abs=MEEUS_13B_TOL_DEG)  # north-based


# ---------------------------------------------------------------------------------------------
# apparent place


def test_apparent_place_matches_erfa_t_atci13():
    # t_erfa_c.c t_atci13 inputs; ERFA returns CIRS RA, so equinox-based RA = ri - eo.
    pr, pd = 1e-5, 5e-6  # rad/yr, pr is dRA/dt
    dc = 0.174
    stars = stars_from_radec(math.degrees(2.71), math.degrees(dc),
                             pm_ra_cosdec_mas_per_year=math.degrees(pr) * 3.6e6 * math.cos(dc),
                             pm_dec_mas_per_year=math.degrees(pd) * 3.6e6, parallax_mas=100.0,
                             radial_velocity_km_s=55.0)
    inst = instants_from_jd(2456165.5, 0.401182685, scale="tt")  # TDB given; TDB - TT < 2 ms
    ra_h, dec_d = apparent_radec(stars, inst)
    ri, di, eo = 2.710121572968696744, 0.1729371367219539137, -0.002900618712657375647
    dra = ((float(ra_h[0]) * 15.0 - math.degrees(ri - eo) + 180) % 360 - 180) * math.cos(di)
    assert abs(dra) / ARCSEC_DEG < ATCI13_TOL_ARCSEC
    assert abs(float(dec_d[0]) - math.degrees(di)) / ARCSEC_DEG < ATCI13_TOL_ARCSEC


def test_meeus_example_23a_theta_persei():
    # [Meeus, from memory; §3e]: J2000 2h44m11.986s +49 13' 42.48", pm +0.03425 s/yr, -0.0895"/yr,
    # 2028 Nov 13.19 TD -> apparent 2h46m14.390s, +49 21' 07.45".
    dec0 = 49 + 13 / 60 + 42.48 / 3600
    stars = stars_from_radec((2 + 44 / 60 + 11.986 / 3600) * 15.0, dec0,
                             pm_ra_cosdec_mas_per_year=0.03425 * 15000.0 * math.cos(math.radians(dec0)),
                             pm_dec_mas_per_year=-89.5)
    ra_h, dec_d = apparent_radec(stars, instants_from_jd(2462088.5, 0.19, scale="tt"))
    ra_expected = (2 + 46 / 60 + 14.390 / 3600)
    dec_expected = 49 + 21 / 60 + 7.45 / 3600
    dra = (float(ra_h[0]) - ra_expected) * 15.0 * math.cos(math.radians(dec_expected))
    assert abs(dra) / ARCSEC_DEG < MEEUS_23A_TOL_ARCSEC
    assert abs(float(dec_d[0]) - dec_expected) / ARCSEC_DEG < MEEUS_23A_TOL_ARCSEC


# ---------------------------------------------------------------------------------------------
# observed place against erfa.atco13 (hypothesis over epochs, sites and targets)


def _erfa_utc_and_dut1(inst):
    """ERFA's UTC for our TT (ERFA's own leap table) and the DUT1 that reproduces our UT1."""
    with warnings.catch_warnings():
        # ERFA warns "dubious year" before 1960 and after 2028; its UTC is then only a label.
        warnings.simplefilter("ignore", erfa.ErfaWarning)
        tai = erfa.tttai(inst.tt_whole, inst.tt_frac)
        u1, u2 = erfa.taiutc(*tai)
    dut1 = ((inst.ut1_whole - u1) + (inst.ut1_frac - u2)) * 86400.0
    return u1, u2, dut1


def _atco13(ra_deg, dec_deg, inst, lat, lon, height, phpa, tc):
    u1, u2, dut1 = _erfa_utc_and_dut1(inst)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", erfa.ErfaWarning)  # dubious year, as above
        aob, zob, hob, dob, rob, eo = erfa.atco13(np.radians(ra_deg), np.radians(dec_deg), 0.0, 0.0, 0.0, 0.0,
                                                  u1, u2, dut1, np.radians(lon), np.radians(lat), height,
                                                  0.0, 0.0, phpa, tc, 0.0, 0.574)
    return 90.0 - np.degrees(zob), np.degrees(aob), np.degrees(hob) / 15.0, np.degrees(dob)


def _sun_elongation_deg(ra_deg, dec_deg, inst):
    pv, _ = erfa.epv00(inst.tt_whole, inst.tt_frac)  # heliocentric Earth
    sun = -pv[0] / np.linalg.norm(pv[0])
    a, d = np.radians(ra_deg), np.radians(dec_deg)
    p = np.stack([np.cos(a) * np.cos(d), np.sin(a) * np.cos(d), np.sin(d)])
    return np.degrees(np.arccos(np.clip(sun @ p, -1, 1)))


def _angle_diff_deg(a, b, period=360.0):
    return (np.asarray(a) - b + period / 2) % period - period / 2


UNIX_1900 = -2208988800.0
UNIX_2100 = 4102444800.0
latitudes = st.one_of(st.sampled_from([-90.0, -89.999, 0.0, 89.999, 90.0]), st.floats(-90.0, 90.0))


@pytest.mark.slow
@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(unix=st.floats(UNIX_1900, UNIX_2100), lat=latitudes, lon=st.floats(-180.0, 180.0),
       height=st.floats(0.0, 4000.0), seed=st.integers(0, 2**32 - 1),
       dut1=st.floats(-0.9, 0.9))
def test_observe_matches_erfa_atco13_without_refraction(unix, lat, lon, height, seed, dut1):
    rng = np.random.default_rng(seed)
    ra = np.concatenate([rng.uniform(0, 360, 60), [0.0, 123.0, 300.0]])
    dec = np.concatenate([np.degrees(np.arcsin(rng.uniform(-1, 1, 60))), [90.0, -90.0, 0.0]])
    inst = instants_from_unix(unix, dut1_seconds=dut1)
    pos = observe(stars_from_radec(ra, dec), inst, Observer(lat, lon, height, pressure_hpa=0.0))
    alt_e, az_e, ha_e, dec_e = _atco13(ra, dec, inst, lat, lon, height, 0.0, 10.0)
    keep = (alt_e > 0.0) & (_sun_elongation_deg(ra, dec, inst) > SUN_EXCLUSION_DEG)
    assert np.all(pos.alt_deg == pos.alt_geometric_deg)
    dalt = np.abs(pos.alt_deg - alt_e)[keep] / ARCSEC_DEG
    daz = np.abs(_angle_diff_deg(pos.az_deg, az_e) * np.cos(np.radians(alt_e)))[keep] / ARCSEC_DEG
    assert np.all(dalt < ATCO13_NO_REFRACTION_ARCSEC), dalt.max()
    # Azimuth is undefined at the zenith and at a pole of the sky seen from a pole: compare the
    # on-sky offset (times cos alt), which is well defined.
    assert np.all(daz < ATCO13_NO_REFRACTION_ARCSEC), daz.max()
    dha = np.abs(_angle_diff_deg(pos.ha_hours * 15, ha_e * 15) * np.cos(np.radians(dec_e)))[keep]
    assert np.all(dha / ARCSEC_DEG < ATCO13_NO_REFRACTION_ARCSEC)
    assert np.all(np.abs(pos.dec_deg - dec_e)[keep] / ARCSEC_DEG < ATCO13_NO_REFRACTION_ARCSEC)


@pytest.mark.slow
@settings(max_examples=25, deadline=None)
@given(unix=st.floats(UNIX_1900, UNIX_2100), lat=latitudes, lon=st.floats(-180.0, 180.0),
       seed=st.integers(0, 2**32 - 1), pressure=st.floats(600.0, 1050.0), temp=st.floats(-25.0, 35.0))
def test_observe_matches_erfa_atco13_with_refraction_above_15_deg(unix, lat, lon, seed, pressure, temp):
    rng = np.random.default_rng(seed)
    ra = rng.uniform(0, 360, 200)
    dec = np.degrees(np.arcsin(rng.uniform(-1, 1, 200)))
    inst = instants_from_unix(unix)
    pos = observe(stars_from_radec(ra, dec), inst, Observer(lat, lon, 100.0, pressure, temp))
    alt_e, az_e, _, _ = _atco13(ra, dec, inst, lat, lon, 100.0, pressure, temp)
    keep = (alt_e > 15.0) & (_sun_elongation_deg(ra, dec, inst) > SUN_EXCLUSION_DEG)
    assert np.all(np.abs(pos.alt_deg - alt_e)[keep] / ARCSEC_DEG < ATCO13_REFRACTION_ARCSEC)
    daz = np.abs(_angle_diff_deg(pos.az_deg, az_e) * np.cos(np.radians(alt_e)))[keep]
    assert np.all(daz / ARCSEC_DEG < ATCO13_REFRACTION_ARCSEC)


def test_observe_with_proper_motion_parallax_matches_erfa_atco13():
    rng = np.random.default_rng(11)
    n = 300
    ra, dec = rng.uniform(0, 360, n), np.degrees(np.arcsin(rng.uniform(-1, 1, n)))
    pmra, pmd = rng.normal(0, 300, n), rng.normal(0, 300, n)
    plx, rv = rng.uniform(0, 500, n), rng.normal(0, 60, n)
    stars = stars_from_radec(ra, dec, pm_ra_cosdec_mas_per_year=pmra, pm_dec_mas_per_year=pmd,
                             parallax_mas=plx, radial_velocity_km_s=rv)
    lat, lon, h = 56.2083, -3.6875, 212.0  # demo site, Corrie Hill Observatory
    for unix in (-1.5e9, 1.797e9, 3.9e9):
        inst = instants_from_unix(unix)
        pos = observe(stars, inst, Observer(lat, lon, h, pressure_hpa=0.0))
        u1, u2, dut1 = _erfa_utc_and_dut1(inst)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", erfa.ErfaWarning)  # dubious year outside 1960-2028
            aob, zob, *_ = erfa.atco13(np.radians(ra), np.radians(dec),
                                       np.radians(pmra / 3.6e6) / np.cos(np.radians(dec)),
                                       np.radians(pmd / 3.6e6), plx / 1000.0, rv, u1, u2, dut1,
                                       np.radians(lon), np.radians(lat), h, 0, 0, 0, 10, 0, 0.574)
        alt_e = 90 - np.degrees(zob)
        keep = (alt_e > 0) & (_sun_elongation_deg(ra, dec, inst) > SUN_EXCLUSION_DEG)
        assert np.max(np.abs(pos.alt_deg - alt_e)[keep]) / ARCSEC_DEG < ATCO13_NO_REFRACTION_ARCSEC
        daz = _angle_diff_deg(pos.az_deg, np.degrees(aob)) * np.cos(np.radians(alt_e))
        assert np.max(np.abs(daz[keep])) / ARCSEC_DEG < ATCO13_NO_REFRACTION_ARCSEC


# ---------------------------------------------------------------------------------------------
# shapes, ranges, records


def test_observe_broadcasts_instants_against_stars():
    stars = stars_from_radec([10.0, 100.0, 200.0], [-30.0, 0.0, 60.0])
    obs = Observer(56.2083, -3.6875, 212.0)
    one = observe(stars, instants_from_unix(1797292800.0), obs)
    assert one.alt_deg.shape == (3,)
    many = observe(stars, instants_from_unix(1797292800.0 + 3600.0 * np.arange(4)[:, None]), obs)
    assert many.az_deg.shape == (4, 3)
    assert np.allclose(many.alt_deg[0], one.alt_deg, atol=1e-12, rtol=0)
    for field in ("ra_hours", "dec_deg", "ha_hours", "alt_geometric_deg", "parallactic_deg", "airmass"):
        assert getattr(many, field).shape == (4, 3)
    ra, dec = apparent_radec(stars, instants_from_unix(1797292800.0 + np.zeros((2, 1))))
    assert ra.shape == dec.shape == (2, 3)


def test_observe_ranges_and_airmass_below_horizon():
    rng = np.random.default_rng(2)
    stars = stars_from_radec(rng.uniform(0, 360, 5000), np.degrees(np.arcsin(rng.uniform(-1, 1, 5000))))
    pos = observe(stars, instants_from_unix(1797292800.0), Observer(56.2083, -3.6875, 212.0))
    assert np.all((pos.ha_hours >= -12) & (pos.ha_hours < 12))
    assert np.all((pos.az_deg >= 0) & (pos.az_deg < 360))
    assert np.all((pos.ra_hours >= 0) & (pos.ra_hours < 24))
    assert np.all(np.isnan(pos.airmass[pos.alt_deg < 0]))
    assert np.all(pos.airmass[pos.alt_deg >= 0] >= 1.0 - 1e-6)
    assert np.all(pos.alt_deg >= pos.alt_geometric_deg)
    assert np.allclose(pos.parallactic_deg, parallactic_angle_deg(pos.ha_hours, pos.dec_deg, 56.2083),
                       atol=1e-9, rtol=0)


def test_observer_defaults_to_standard_atmosphere():
    assert Observer(0.0, 0.0, 0.0).effective_pressure_hpa == 1013.25
    assert Observer(0.0, 0.0, 212.0, pressure_hpa=0.0).effective_pressure_hpa == 0.0


def test_records_reject_bad_input_with_the_fix_in_the_message():
    with pytest.raises(ValueError, match="latitude_deg"):
        Observer(91.0, 0.0)
    with pytest.raises(ValueError, match="dec_deg"):
        stars_from_radec([0.0], [95.0])
    with pytest.raises(ValueError, match="one length"):
        stars_from_radec([0.0, 1.0], [0.0, 1.0, 2.0])
    with pytest.raises(TypeError, match="accepted"):
        stars_from_radec(0.0, 0.0, parallax=3.0)


# ---------------------------------------------------------------------------------------------
# ApparentWindow


@pytest.mark.parametrize("days", [1.0, 2.0, 10.0])
def test_apparent_window_reproduces_direct_computation(days):
    rng = np.random.default_rng(4)
    stars = stars_from_radec(rng.uniform(0, 360, 200), np.degrees(np.arcsin(rng.uniform(-1, 1, 200))),
                             pm_ra_cosdec_mas_per_year=rng.normal(0, 500, 200))
    start = 1797292800.0
    win = ApparentWindow(stars, start, start + days * 86400.0, dut1_seconds=0.1)
    t = start + np.linspace(0, days * 86400.0, 37)[:, None]
    ra_w, dec_w = win.radec_at(t)
    ra_d, dec_d = apparent_radec(stars, instants_from_unix(t, dut1_seconds=0.1))
    assert ra_w.shape == (37, 200)
    dra = _angle_diff_deg(ra_w * 15, ra_d * 15) * np.cos(np.radians(dec_d))
    assert np.max(np.abs(dra)) / ARCSEC_DEG < WINDOW_TOL_ARCSEC
    assert np.max(np.abs(dec_w - dec_d)) / ARCSEC_DEG < WINDOW_TOL_ARCSEC
    # one time per star (numpy broadcasting of the time shape against (N,))
    ra_p, _ = win.radec_at(t[:200, 0] if t.shape[0] >= 200 else np.full(200, start + 3600.0))
    assert ra_p.shape == (200,)


def test_apparent_window_rejects_empty_window():
    with pytest.raises(ValueError, match="end_unix > start_unix"):
        ApparentWindow(stars_from_radec(0.0, 0.0), 10.0, 10.0)
