"""Tests for siderod.astro.sunmoon against astropy 8 with its builtin (offline) ephemeris, and
Meeus' worked examples [from memory]."""

import math
import warnings

import astropy.units as u  # noqa: E402
import numpy as np
import pytest
from astropy.coordinates import TETE, AltAz, EarthLocation, get_body, get_sun  # noqa: E402
from astropy.time import Time  # noqa: E402
from astropy.utils import iers  # noqa: E402

from siderod.astro.places import Observer
from siderod.astro.sunmoon import (
    moon_apparent_radec,
    moon_illuminated_fraction,
    observe_moon,
    observe_sun,
    sun_apparent_radec,
    sun_separation_deg,
)
from siderod.astro.timescales import instants_from_jd, instants_from_unix

#: Brief: the Sun within 0.01 deg, 1900-2100 (Meeus' stated accuracy for the low-precision theory).
SUN_TOL_DEG = 0.01
#: Brief: the Moon within 0.3 deg; our 80-term series is good to a few hundredths.
MOON_TOL_DEG = 0.3
#: Brief: illuminated fraction within 0.01.
ILLUMINATION_TOL = 0.01
#: Meeus 25.a gives alpha to 0.1 s of time and delta to 1"; our theory adds planetary perturbation
#: terms and IAU 2006/2000B nutation, which move the result by up to 0.005 deg against Meeus' own.
MEEUS_25A_TOL_DEG = 0.006
#: Distance from our Kepler orbit plus perturbation terms against VSOP87 (Meeus 25.b).
MEEUS_25B_DISTANCE_AU = 2e-5
#: Meeus 47.a uses the full tables (60 + 60 terms); we keep 50 + 30: omitted terms < 0.003 deg each.
MEEUS_47A_TOL_DEG = 0.01
#: Distance of the Moon in 47.a: omitted distance terms are < 1.5 km each.
MEEUS_47A_DISTANCE_KM = 10.0

UNIX_1900 = -2208988800.0
UNIX_2100 = 4102444800.0
SITE = dict(lat=56.2083, lon=-3.6875, height=212.0)  # demo site, Corrie Hill Observatory


@pytest.fixture(scope="module")
def epochs():
    """300 random instants 1900-2100 and the same instants as astropy Time (same TT and UT1)."""
    iers.conf.auto_download = False
    rng = np.random.default_rng(8)
    inst = instants_from_unix(rng.uniform(UNIX_1900, UNIX_2100, 300), dut1_seconds=0.2)
    with warnings.catch_warnings():
        # astropy/ERFA warn "dubious year" outside the leap-second era; we give TT and UT1 directly.
        warnings.simplefilter("ignore")
        t = Time(inst.tt_whole, inst.tt_frac, format="jd", scale="tt")
        utc = t.utc
        t.delta_ut1_utc = ((inst.ut1_whole - utc.jd1) + (inst.ut1_frac - utc.jd2)) * 86400.0
    return inst, t


def _sep_deg(ra1_deg, dec1_deg, ra2_deg, dec2_deg):
    a1, d1, a2, d2 = (np.radians(v) for v in (ra1_deg, dec1_deg, ra2_deg, dec2_deg))
    c = np.sin(d1) * np.sin(d2) + np.cos(d1) * np.cos(d2) * np.cos(a1 - a2)
    return np.degrees(np.arccos(np.clip(c, -1.0, 1.0)))


def _astropy(body, t, frame):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # ERFA "dubious year" outside 1960-2028
        coord = get_sun(t) if body == "sun" else get_body("moon", t)
        return coord.transform_to(frame)


@pytest.mark.slow
def test_sun_apparent_place_matches_astropy(epochs):
    inst, t = epochs
    ref = _astropy("sun", t, TETE(obstime=t))  # TETE = true equator and equinox of date
    ra_h, dec_d, dist_au = sun_apparent_radec(inst)
    assert np.max(_sep_deg(ra_h * 15, dec_d, ref.ra.deg, ref.dec.deg)) < SUN_TOL_DEG
    assert np.max(np.abs(dist_au - ref.distance.au)) < 1e-4


@pytest.mark.slow
def test_moon_apparent_place_matches_astropy(epochs):
    inst, t = epochs
    ref = _astropy("moon", t, TETE(obstime=t))
    ra_h, dec_d, dist_km = moon_apparent_radec(inst)
    assert np.max(_sep_deg(ra_h * 15, dec_d, ref.ra.deg, ref.dec.deg)) < MOON_TOL_DEG
    assert np.max(np.abs(dist_km - ref.distance.km)) < 300.0


@pytest.mark.slow
@pytest.mark.parametrize("body", ["sun", "moon"])
def test_topocentric_altaz_matches_astropy(epochs, body):
    inst, t = epochs
    loc = EarthLocation.from_geodetic(SITE["lon"] * u.deg, SITE["lat"] * u.deg, SITE["height"] * u.m)
    ref = _astropy(body, t, AltAz(obstime=t, location=loc, pressure=0 * u.hPa))
    obs = Observer(SITE["lat"], SITE["lon"], SITE["height"], pressure_hpa=0.0)
    pos = observe_sun(inst, obs) if body == "sun" else observe_moon(inst, obs)
    tol = SUN_TOL_DEG if body == "sun" else MOON_TOL_DEG
    assert np.max(_sep_deg(pos.az_deg, pos.alt_deg, ref.az.deg, ref.alt.deg)) < tol


@pytest.mark.slow
def test_moon_illuminated_fraction_matches_astropy(epochs):
    # The usual astropy-based computation (as in astroplan's moon_illumination): geocentric
    # elongation from get_sun/get_body, phase angle from the distances, k = (1 + cos i) / 2.
    inst, t = epochs
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        sun, moon = get_sun(t), get_body("moon", t)
        elong = sun.separation(moon)
        i = np.arctan2(sun.distance * np.sin(elong), moon.distance - sun.distance * np.cos(elong))
    k_ref = (1 + np.cos(i)).value / 2
    k = moon_illuminated_fraction(inst)
    assert np.max(np.abs(k - k_ref)) < ILLUMINATION_TOL
    assert np.all((k >= 0) & (k <= 1))


def test_meeus_example_25a_sun():
    # [Meeus, from memory; re-derived §3d]: 1992 October 13.0 TD: alpha = 13h13m31.4s,
    # delta = -7 47' 06", R = 0.99766 au.
    ra_h, dec_d, r = sun_apparent_radec(instants_from_jd(2448908.5, 0.0, scale="tt"))
    ra_expected = (13 + 13 / 60 + 31.4 / 3600) * 15
    dec_expected = -(7 + 47 / 60 + 6 / 3600)
    assert float(_sep_deg(float(ra_h) * 15, float(dec_d), ra_expected, dec_expected)) < MEEUS_25A_TOL_DEG
    # Our distance carries the perturbation terms, so it is checked against Meeus 25.b (VSOP87,
    # [from memory; re-derived with DE421 in §3d]): R = 0.99760775 au, alpha = 13h13m30.749s,
    # delta = -7 47' 01.74".
    assert float(r) == pytest.approx(0.99760775, abs=MEEUS_25B_DISTANCE_AU)
    ra_vsop, dec_vsop = (13 + 13 / 60 + 30.749 / 3600) * 15, -(7 + 47 / 60 + 1.74 / 3600)
    assert float(_sep_deg(float(ra_h) * 15, float(dec_d), ra_vsop, dec_vsop)) < SUN_TOL_DEG / 2


def test_meeus_example_47a_moon():
    # [Meeus, from memory]: 1992 April 12, 0h TD: apparent alpha = 134.688470 deg,
    # delta = +13.768368 deg, distance 368409.7 km.
    ra_h, dec_d, dist = moon_apparent_radec(instants_from_jd(2448724.5, 0.0, scale="tt"))
    assert float(_sep_deg(float(ra_h) * 15, float(dec_d), 134.688470, 13.768368)) < MEEUS_47A_TOL_DEG
    assert float(dist) == pytest.approx(368409.7, abs=MEEUS_47A_DISTANCE_KM)


def test_sun_separation():
    inst = instants_from_unix(1797292800.0 + np.array([0.0, 86400.0 * 90]))
    ra_h, dec_d, _ = sun_apparent_radec(inst)
    assert np.allclose(sun_separation_deg(ra_h, dec_d, inst), 0.0, atol=1e-6)
    # The antisolar point is 180 deg away; the celestial pole is 90 deg - |Sun's Dec| away.
    anti = sun_separation_deg((ra_h + 12) % 24, -dec_d, inst)
    assert np.allclose(anti, 180.0, atol=1e-6)
    assert np.allclose(sun_separation_deg(0.0, 90.0, inst), 90.0 - dec_d, atol=1e-6)


def test_shapes_and_ranges():
    inst = instants_from_unix(1797292800.0 + 3600.0 * np.arange(6).reshape(2, 3))
    obs = Observer(SITE["lat"], SITE["lon"], SITE["height"])
    for pos in (observe_sun(inst, obs), observe_moon(inst, obs)):
        assert pos.alt_deg.shape == (2, 3)
        assert np.all((pos.az_deg >= 0) & (pos.az_deg < 360))
    assert moon_illuminated_fraction(inst).shape == (2, 3)
    assert sun_apparent_radec(inst[0, 0])[0].shape == ()
    assert math.isfinite(float(moon_apparent_radec(inst[0, 0])[2]))
