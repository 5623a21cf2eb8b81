"""Low-precision Sun and Moon: apparent and topocentric places, lunar illuminated fraction, and
angular distance from the Sun (for Sun-proximity warnings).

**Caution:** never point unfiltered optics at or near the Sun.  :func:`sun_separation_deg` is meant
for warnings; it does not replace the mount's or the observer's own limits.

Methods (all by us from published series; accuracy checked against astropy's builtin ephemeris
in ``tests/astro/test_sunmoon.py``):

* **Sun**: Meeus, *Astronomical Algorithms* 2nd ed., ch. 25, low-accuracy solar theory
  [from memory; reference notes §3d]: geometric longitude from the mean longitude, mean anomaly
  and equation of the centre, distance from the Kepler ellipse.  We add IAU 2000B nutation in
  longitude and the annual aberration -20.4898"/R, and use the IAU 2006 obliquity plus nutation.
  About 0.01 deg over 1900-2100 (Meeus' statement; measured worst case is in the tests).
* **Moon**: Meeus ch. 47 (a truncation of ELP-2000/82 by Chapront), the largest 50 longitude and
  distance terms and 30 latitude terms with the additive A1/A2/A3 terms [from memory]; the
  omitted terms are each below 0.003 deg.  Measured against astropy's builtin lunar theory the
  error is a few hundredths of a degree, far inside the 0.3 deg the alerts need.
* **Topocentric**: the site's geocentric vector (WGS84) is subtracted (lunar parallax is up to
  1 deg; the Sun's 8.8").
* **Illuminated fraction** ``k = (1 + cos i) / 2`` with the phase angle ``i`` from the geocentric
  elongation and the two distances (Meeus ch. 48).
"""

from __future__ import annotations

import numpy as np

from siderod.astro.constants import ARCSEC_RAD, DEG_RAD, HOUR_RAD, J2000_JD, JULIAN_CENTURY_DAYS
from siderod.astro.places import (
    _EARTH_RADIUS_KM,
    Observer,
    Positions,
    _geocentric_site,
    _positions_from_ha_frame,
    _sun_orbit,
)
from siderod.astro.precession import mean_obliquity_rad, nutation_rad
from siderod.astro.sidereal import gast_rad
from siderod.astro.timescales import Instants

__all__ = [
    "moon_apparent_radec",
    "moon_illuminated_fraction",
    "observe_moon",
    "observe_sun",
    "sun_apparent_radec",
    "sun_separation_deg",
]

#: Astronomical unit, km (IAU 2012).
_AU_KM = 149597870.7


def sun_apparent_radec(instants: Instants):
    """Geocentric apparent RA/Dec of the Sun (true equator and equinox of date) and its distance.

    Args:
        instants: times, any shape.

    Returns:
        tuple: ``(ra_hours, dec_deg, distance_au)``; RA in [0, 24).  About 0.01 deg (1900-2100).
    """
    x, y, z, r = _sun_apparent_xyz(instants)
    return _ra_hours(x, y), np.arctan2(z, np.hypot(x, y)) / DEG_RAD, r


def moon_apparent_radec(instants: Instants):
    """Geocentric apparent RA/Dec of the Moon (true equator and equinox of date) and its distance.

    Args:
        instants: times, any shape.

    Returns:
        tuple: ``(ra_hours, dec_deg, distance_km)``; RA in [0, 24).  A few hundredths of a degree.
    """
    x, y, z = _moon_apparent_xyz_km(instants)
    return _ra_hours(x, y), np.arctan2(z, np.hypot(x, y)) / DEG_RAD, np.sqrt(x * x + y * y + z * z)


def observe_sun(instants: Instants, observer: Observer) -> Positions:
    """Topocentric position of the Sun's centre for an observer (a :class:`Positions` record).

    Args:
        instants: times, any shape.
        observer: site and weather.

    Returns:
        Positions: of shape ``instants.shape``.
    """
    x, y, z, r = _sun_apparent_xyz(instants)
    return _observe_geocentric(x * (r * _AU_KM), y * (r * _AU_KM), z * (r * _AU_KM), instants, observer)


def observe_moon(instants: Instants, observer: Observer) -> Positions:
    """Topocentric position of the Moon's centre for an observer (lunar parallax included).

    Args:
        instants: times, any shape.
        observer: site and weather.

    Returns:
        Positions: of shape ``instants.shape``.
    """
    x, y, z = _moon_apparent_xyz_km(instants)
    return _observe_geocentric(x, y, z, instants, observer)


def moon_illuminated_fraction(instants: Instants):
    """Illuminated fraction of the Moon's disc, geocentric (Meeus ch. 48).

    Args:
        instants: times, any shape.

    Returns:
        ndarray: fraction in [0, 1] (0 new, 1 full); good to about 0.002.
    """
    sx, sy, sz, r_au = _sun_apparent_xyz(instants)
    mx, my, mz = _moon_apparent_xyz_km(instants)
    dist_km = np.sqrt(mx * mx + my * my + mz * mz)
    cos_psi = (sx * mx + sy * my + sz * mz) / dist_km
    sun_km = r_au * _AU_KM
    sin_psi = np.sqrt(np.maximum(0.0, 1.0 - cos_psi * cos_psi))
    phase = np.arctan2(sun_km * sin_psi, dist_km - sun_km * cos_psi)
    return (1.0 + np.cos(phase)) / 2.0


def sun_separation_deg(ra_hours, dec_deg, instants: Instants):
    """Angular distance of apparent RA/Dec of date from the Sun's centre, degrees in [0, 180].

    Args:
        ra_hours (array_like): apparent RA of date, hours; broadcasts with ``instants.shape``.
        dec_deg (array_like): apparent Dec of date, degrees; broadcasts.
        instants: times.

    Returns:
        ndarray: separation in degrees (geocentric Sun; the Sun's 8.8" parallax is ignored).
    """
    sx, sy, sz, _ = _sun_apparent_xyz(instants)
    a = np.asarray(ra_hours, dtype=float) * HOUR_RAD
    d = np.asarray(dec_deg, dtype=float) * DEG_RAD
    cd = np.cos(d)
    px, py, pz = np.cos(a) * cd, np.sin(a) * cd, np.sin(d)
    dot = px * sx + py * sy + pz * sz
    cx, cy, cz = py * sz - pz * sy, pz * sx - px * sz, px * sy - py * sx
    return np.arctan2(np.sqrt(cx * cx + cy * cy + cz * cz), dot) / DEG_RAD


# ---------------------------------------------------------------------------------------------
# helpers


def _ra_hours(x, y):
    ra = np.arctan2(y, x) / HOUR_RAD
    return np.where(ra < 0.0, ra + 24.0, ra)


def _true_obliquity_and_dpsi(tt_w, tt_f):
    dpsi, deps = nutation_rad(tt_w, tt_f)
    return mean_obliquity_rad(tt_w, tt_f) + deps, dpsi


def _ecliptic_to_equator(lon, lat, eps):
    """Unit vector of date from ecliptic longitude/latitude (rad) and the true obliquity."""
    cb = np.cos(lat)
    xe, ye, ze = np.cos(lon) * cb, np.sin(lon) * cb, np.sin(lat)
    ce, se = np.cos(eps), np.sin(eps)
    return xe, ye * ce - ze * se, ye * se + ze * ce


def _sun_apparent_xyz(instants: Instants):
    """Apparent unit vector of the Sun (true equator/equinox of date) and distance (au)."""
    tt_w, tt_f = np.asarray(instants.tt_whole), np.asarray(instants.tt_frac)
    _, lon, r, _, _ = _sun_orbit(tt_w, tt_f)
    eps, dpsi = _true_obliquity_and_dpsi(tt_w, tt_f)
    # Annual aberration of the Sun: -kappa / R with kappa = 20.49552" (IAU 1976); Meeus gives
    # 20.4898"/R, the same to 0.006".
    lam = lon + dpsi - 20.4898 * ARCSEC_RAD / r
    x, y, z = _ecliptic_to_equator(lam, 0.0, eps)
    return x, y, z, r


def _moon_apparent_xyz_km(instants: Instants):
    """Geocentric apparent position of the Moon (km, true equator/equinox of date), Meeus ch. 47."""
    tt_w, tt_f = np.asarray(instants.tt_whole), np.asarray(instants.tt_frac)
    t = ((tt_w - J2000_JD) + tt_f) / JULIAN_CENTURY_DAYS
    lp = 218.3164477 + t * (481267.88123421 + t * (-0.0015786 + t * (1.0 / 538841.0 - t / 65194000.0)))
    d = 297.8501921 + t * (445267.1114034 + t * (-0.0018819 + t * (1.0 / 545868.0 - t / 113065000.0)))
    m = 357.5291092 + t * (35999.0502909 + t * (-0.0001536 + t / 24490000.0))
    mp = 134.9633964 + t * (477198.8675055 + t * (0.0087414 + t * (1.0 / 69699.0 - t / 14712000.0)))
    f = 93.2720950 + t * (483202.0175233 + t * (-0.0036539 + t * (-1.0 / 3526000.0 + t / 863310000.0)))
    a1 = (119.75 + 131.849 * t) * DEG_RAD
    a2 = (53.09 + 479264.290 * t) * DEG_RAD
    a3 = (313.45 + 481266.484 * t) * DEG_RAD
    e = 1.0 - t * (0.002516 + 0.0000074 * t)
    lp_r, d_r, m_r, mp_r, f_r = (v * DEG_RAD for v in (lp, d, m, mp, f))
    args = np.stack([d_r, m_r, mp_r, f_r], axis=-1)  # shape + (4,)
    e_col = e[..., None]
    # Terms with the Sun's mean anomaly M carry E (|M| = 1) or E^2 (|M| = 2): the decreasing
    # eccentricity of the Earth's orbit.
    theta = args @ _LR_MULT.T  # shape + (K,)
    ecorr = e_col ** np.abs(_LR_MULT[:, 1])
    sum_l = np.sum(_LR_SIN * ecorr * np.sin(theta), axis=-1)
    sum_r = np.sum(_LR_COS * ecorr * np.cos(theta), axis=-1)
    theta_b = args @ _B_MULT.T
    sum_b = np.sum(_B_SIN * e_col ** np.abs(_B_MULT[:, 1]) * np.sin(theta_b), axis=-1)
    sum_l = sum_l + 3958.0 * np.sin(a1) + 1962.0 * np.sin(lp_r - f_r) + 318.0 * np.sin(a2)
    sum_b = (sum_b - 2235.0 * np.sin(lp_r) + 382.0 * np.sin(a3) + 175.0 * np.sin(a1 - f_r)
             + 175.0 * np.sin(a1 + f_r) + 127.0 * np.sin(lp_r - mp_r) - 115.0 * np.sin(lp_r + mp_r))
    lam = (lp + sum_l * 1e-6) * DEG_RAD
    beta = sum_b * 1e-6 * DEG_RAD
    dist_km = 385000.56 + sum_r * 1e-3
    eps, dpsi = _true_obliquity_and_dpsi(tt_w, tt_f)
    x, y, z = _ecliptic_to_equator(lam + dpsi, beta, eps)
    return x * dist_km, y * dist_km, z * dist_km


def _observe_geocentric(x, y, z, instants: Instants, observer: Observer) -> Positions:
    """Positions of a body from its geocentric apparent position (km, equator of date)."""
    tt_w, tt_f = np.asarray(instants.tt_whole), np.asarray(instants.tt_frac)
    # Same nutation model as the body's place of date (IAU 2000B), so it cancels in the hour angle.
    last_rad = (gast_rad(instants.ut1_whole, instants.ut1_frac, tt_w, tt_f, nutation="2000B")
                + observer.longitude_deg * DEG_RAD)
    cl, sl = np.cos(last_rad), np.sin(last_rad)
    xh = cl * x + sl * y
    yh = sl * x - cl * y
    rho_cos, rho_sin = _geocentric_site(observer)
    # The site lies on its own meridian: in the hour-angle frame it is (rho cos phi', 0, rho sin phi').
    return _positions_from_ha_frame(xh - rho_cos * _EARTH_RADIUS_KM, yh, z - rho_sin * _EARTH_RADIUS_KM,
                                    last_rad, observer)


def _table(rows):
    arr = np.array(rows, dtype=float)
    return arr[:, :4].copy(), arr[:, 4].copy(), arr[:, 5].copy() if arr.shape[1] > 5 else None


# Meeus table 47.A [from memory]: multiples of D, M, M', F; sine coefficient of longitude and
# cosine coefficient of distance, units 1e-6 deg and 1e-3 km.
_LR_MULT, _LR_SIN, _LR_COS = _table([
    (0, 0, 1, 0, 6288774, -20905355),
    (2, 0, -1, 0, 1274027, -3699111),
    (2, 0, 0, 0, 658314, -2955968),
    (0, 0, 2, 0, 213618, -569925),
    (0, 1, 0, 0, -185116, 48888),
    (0, 0, 0, 2, -114332, -3149),
    (2, 0, -2, 0, 58793, 246158),
    (2, -1, -1, 0, 57066, -152138),
    (2, 0, 1, 0, 53322, -170733),
    (2, -1, 0, 0, 45758, -204586),
    (0, 1, -1, 0, -40923, -129620),
    (1, 0, 0, 0, -34720, 108743),
    (0, 1, 1, 0, -30383, 104755),
    (2, 0, 0, -2, 15327, 10321),
    (0, 0, 1, 2, -12528, 0),
    (0, 0, 1, -2, 10980, 79661),
    (4, 0, -1, 0, 10675, -34782),
    (0, 0, 3, 0, 10034, -23210),
    (4, 0, -2, 0, 8548, -21636),
    (2, 1, -1, 0, -7888, 24208),
    (2, 1, 0, 0, -6766, 30824),
    (1, 0, -1, 0, -5163, -8379),
    (1, 1, 0, 0, 4987, -16675),
    (2, -1, 1, 0, 4036, -12831),
    (2, 0, 2, 0, 3994, -10445),
    (4, 0, 0, 0, 3861, -11650),
    (2, 0, -3, 0, 3665, 14403),
    (0, 1, -2, 0, -2689, -7003),
    (2, 0, -1, 2, -2602, 0),
    (2, -1, -2, 0, 2390, 10056),
    (1, 0, 1, 0, -2348, 6322),
    (2, -2, 0, 0, 2236, -9884),
    (0, 1, 2, 0, -2120, 5751),
    (0, 2, 0, 0, -2069, 0),
    (2, -2, -1, 0, 2048, -4950),
    (2, 0, 1, -2, -1773, 4130),
    (2, 0, 0, 2, -1595, 0),
    (4, -1, -1, 0, 1215, -3958),
    (0, 0, 2, 2, -1110, 0),
    (3, 0, -1, 0, -892, 3258),
    (2, 1, 1, 0, -810, 2616),
    (4, -1, -2, 0, 759, -1897),
    (0, 2, -1, 0, -713, -2117),
    (2, 2, -1, 0, -700, 2354),
    (2, 1, -2, 0, 691, 0),
    (2, -1, 0, -2, 596, 0),
    (4, 0, 1, 0, 549, -1423),
    (0, 0, 4, 0, 537, -1117),
    (4, -1, 0, 0, 520, -1571),
    (1, 0, -2, 0, -487, -1739),
])

# Meeus table 47.B [from memory]: multiples of D, M, M', F; sine coefficient of latitude, 1e-6 deg.
_B_MULT, _B_SIN, _ = _table([
    (0, 0, 0, 1, 5128122, 0),
    (0, 0, 1, 1, 280602, 0),
    (0, 0, 1, -1, 277693, 0),
    (2, 0, 0, -1, 173237, 0),
    (2, 0, -1, 1, 55413, 0),
    (2, 0, -1, -1, 46271, 0),
    (2, 0, 0, 1, 32573, 0),
    (0, 0, 2, 1, 17198, 0),
    (2, 0, 1, -1, 9266, 0),
    (0, 0, 2, -1, 8822, 0),
    (2, -1, 0, -1, 8216, 0),
    (2, 0, -2, -1, 4324, 0),
    (2, 0, 1, 1, 4200, 0),
    (2, 1, 0, -1, -3359, 0),
    (2, -1, -1, 1, 2463, 0),
    (2, -1, 0, 1, 2211, 0),
    (2, -1, -1, -1, 2065, 0),
    (0, 1, -1, -1, -1870, 0),
    (4, 0, -1, -1, 1828, 0),
    (0, 1, 0, 1, -1794, 0),
    (0, 0, 0, 3, -1749, 0),
    (0, 1, -1, 1, -1565, 0),
    (1, 0, 0, 1, -1491, 0),
    (0, 1, 1, 1, -1475, 0),
    (0, 1, 1, -1, -1410, 0),
    (0, 1, 0, -1, -1344, 0),
    (1, 0, 0, -1, -1335, 0),
    (0, 0, 3, 1, 1107, 0),
    (4, 0, 0, -1, 1021, 0),
    (4, 0, -1, 1, 833, 0),
])
