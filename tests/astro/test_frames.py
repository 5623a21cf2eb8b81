"""Tests for siderod.astro.frames against astropy 8 (Galactic, BarycentricMeanEcliptic,
GeocentricMeanEcliptic), used here as the reference library."""

import warnings

import astropy.coordinates as astropy_coordinates  # noqa: E402 -- reference, from the test extra
import astropy.units as u  # noqa: E402
import numpy as np
import pytest
from astropy.time import Time  # noqa: E402
from hypothesis import given, settings
from hypothesis import strategies as st

from siderod.astro.frames import (
    ecliptic_j2000_to_icrs_deg,
    ecliptic_of_date_to_icrs_deg,
    galactic_to_icrs_deg,
    icrs_to_ecliptic_j2000_deg,
    icrs_to_ecliptic_of_date_deg,
    icrs_to_galactic_deg,
)

ARCSEC_DEG = 1.0 / 3600.0
#: Brief: galactic and ecliptic conversions within 0.1" of astropy.
ASTROPY_FRAME_TOL_ARCSEC = 0.1
#: Forward then inverse is two rotations: float rounding only.
ROUND_TRIP_TOL_ARCSEC = 1e-6


def _sep_arcsec(lon1, lat1, lon2, lat2):
    l1, b1, l2, b2 = (np.radians(np.asarray(v, dtype=float)) for v in (lon1, lat1, lon2, lat2))
    v1 = np.stack([np.cos(l1) * np.cos(b1), np.sin(l1) * np.cos(b1), np.sin(b1)])
    v2 = np.stack([np.cos(l2) * np.cos(b2), np.sin(l2) * np.cos(b2), np.sin(b2)])
    cross = np.linalg.norm(np.cross(v1, v2, axis=0), axis=0)
    return np.degrees(np.arctan2(cross, np.sum(v1 * v2, axis=0))) / ARCSEC_DEG


def _random_sky(seed, n=400):
    rng = np.random.default_rng(seed)
    ra = np.concatenate([rng.uniform(0, 360, n), [0.0, 0.0, 266.4]])
    dec = np.concatenate([np.degrees(np.arcsin(rng.uniform(-1, 1, n))), [90.0, -90.0, -28.9]])
    return ra, dec


@pytest.mark.slow
def test_galactic_matches_astropy():
    ra, dec = _random_sky(1)
    ref = astropy_coordinates.SkyCoord(ra * u.deg, dec * u.deg, frame="icrs").galactic
    l_deg, b_deg = icrs_to_galactic_deg(ra, dec)
    assert np.max(_sep_arcsec(l_deg, b_deg, ref.l.deg, ref.b.deg)) < ASTROPY_FRAME_TOL_ARCSEC
    back_ra, back_dec = galactic_to_icrs_deg(ref.l.deg, ref.b.deg)
    assert np.max(_sep_arcsec(back_ra, back_dec, ra, dec)) < ASTROPY_FRAME_TOL_ARCSEC
    assert np.all((l_deg >= 0) & (l_deg < 360))


@pytest.mark.slow
def test_ecliptic_j2000_matches_astropy_barycentric_mean_ecliptic():
    ra, dec = _random_sky(2)
    icrs = astropy_coordinates.SkyCoord(ra * u.deg, dec * u.deg, frame="icrs")
    ref = icrs.transform_to(astropy_coordinates.BarycentricMeanEcliptic(equinox="J2000"))
    lon, lat = icrs_to_ecliptic_j2000_deg(ra, dec)
    assert np.max(_sep_arcsec(lon, lat, ref.lon.deg, ref.lat.deg)) < ASTROPY_FRAME_TOL_ARCSEC
    back = ecliptic_j2000_to_icrs_deg(ref.lon.deg, ref.lat.deg)
    assert np.max(_sep_arcsec(*back, ra, dec)) < ASTROPY_FRAME_TOL_ARCSEC


@pytest.mark.slow
@pytest.mark.parametrize("equinox", ["1900-01-01T00:00:00", "2026-12-14T21:00:00", "2100-01-01T00:00:00"])
def test_ecliptic_of_date_matches_astropy(equinox):
    ra, dec = _random_sky(3)
    with warnings.catch_warnings():
        # astropy/ERFA warn "dubious year" for dates outside their leap-second table; the equinox is TT.
        warnings.simplefilter("ignore")
        t = Time(equinox, scale="tt")
        icrs = astropy_coordinates.SkyCoord(ra * u.deg, dec * u.deg, frame="icrs")
        ref = icrs.transform_to(astropy_coordinates.BarycentricMeanEcliptic(equinox=t))
        # GeocentricMeanEcliptic is a pure rotation from GCRS (astropy adds aberration on the way
        # from ICRS to GCRS, so the geocentric check starts from GCRS directions).
        gcrs = astropy_coordinates.SkyCoord(ra * u.deg, dec * u.deg,
                                            frame=astropy_coordinates.GCRS(obstime=t))
        ref_geo = gcrs.transform_to(astropy_coordinates.GeocentricMeanEcliptic(equinox=t, obstime=t))
    lon, lat = icrs_to_ecliptic_of_date_deg(ra, dec, t.jd1, t.jd2)
    assert np.max(_sep_arcsec(lon, lat, ref.lon.deg, ref.lat.deg)) < ASTROPY_FRAME_TOL_ARCSEC
    assert np.max(_sep_arcsec(lon, lat, ref_geo.lon.deg, ref_geo.lat.deg)) < ASTROPY_FRAME_TOL_ARCSEC
    back = ecliptic_of_date_to_icrs_deg(ref.lon.deg, ref.lat.deg, t.jd1, t.jd2)
    assert np.max(_sep_arcsec(*back, ra, dec)) < ASTROPY_FRAME_TOL_ARCSEC


def test_galactic_centre_and_pole():
    # The galactic centre direction (l, b) = (0, 0) lies at about RA 266.40 deg, Dec -28.94 deg, and
    # the north galactic pole at about RA 192.86, Dec +27.13 (IAU 1958 in J2000: common practice).
    ra, dec = galactic_to_icrs_deg(0.0, 0.0)
    assert float(ra) == pytest.approx(266.405, abs=0.001) and float(dec) == pytest.approx(-28.936, abs=0.001)
    ra, dec = galactic_to_icrs_deg(0.0, 90.0)
    assert float(ra) == pytest.approx(192.859, abs=0.001) and float(dec) == pytest.approx(27.128, abs=0.001)


@settings(max_examples=60, deadline=None)
@given(lon=st.floats(0.0, 360.0, exclude_max=True), lat=st.floats(-90.0, 90.0),
       jd_offset=st.floats(-36525.0, 36525.0))
def test_round_trips_are_exact(lon, lat, jd_offset):
    for fwd, inv in [(icrs_to_galactic_deg, galactic_to_icrs_deg),
                     (icrs_to_ecliptic_j2000_deg, ecliptic_j2000_to_icrs_deg)]:
        assert _sep_arcsec(*inv(*fwd(lon, lat)), lon, lat) < ROUND_TRIP_TOL_ARCSEC
    a, b = icrs_to_ecliptic_of_date_deg(lon, lat, 2451545.0, jd_offset)
    back = ecliptic_of_date_to_icrs_deg(a, b, 2451545.0, jd_offset)
    assert _sep_arcsec(*back, lon, lat) < ROUND_TRIP_TOL_ARCSEC


def test_shapes_broadcast():
    lon, lat = icrs_to_ecliptic_of_date_deg(np.zeros((2, 3)), 10.0, 2451545.0, np.array([[0.0], [100.0]]))
    assert lon.shape == lat.shape == (2, 3)
