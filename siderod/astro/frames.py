"""Target frames: galactic and ecliptic coordinates to and from ICRS.

All conversions are pure rotations of direction (no aberration, no parallax), and broadcast over
arrays of any shape.  Fixed hour-angle/declination pointings need no frame transform: their
altitude and azimuth come straight from :func:`siderod.astro.places.hadec_to_altaz`.

* **Galactic**: the IAU 1958 system (defined in FK4 B1950: north galactic pole at RA 192.25 deg,
  Dec +27.4 deg, galactic longitude of the north celestial pole 123 deg) carried to FK5 J2000, where the
  pole is at RA 192.8594812065348 deg, Dec +27.12825118085622 deg and the longitude of the celestial pole
  is 122.9319185680026 deg (the values astropy's ``Galactic`` frame uses), then to ICRS with the FK5
  frame offsets of USNO Circular 179 (Kaplan 2005): eta0 = -19.9 mas, xi0 = 9.1 mas, da0 = -22.9 mas.
  This matches astropy's ``Galactic`` to about 1 microarcsecond.
* **Ecliptic** (mean ecliptic and equinox of J2000, or of date): ``R1(eps_A) . B . P``, with IAU 2006
  mean obliquity and the frame-bias + IAU 2006 precession matrix of
  :mod:`siderod.astro.precession` (the same construction as ERFA ``ecm06``); for J2000 the matrix
  is the frame bias alone.  Matches astropy's ``BarycentricMeanEcliptic`` (and
  ``GeocentricMeanEcliptic`` from GCRS) to well below 1 mas.
"""

from __future__ import annotations

import functools
import math

import numpy as np

from siderod.astro.constants import DEG_RAD, J2000_JD
from siderod.astro.precession import bias_precession_matrix, mean_obliquity_rad

__all__ = [
    "ecliptic_j2000_to_icrs_deg",
    "ecliptic_of_date_to_icrs_deg",
    "galactic_to_icrs_deg",
    "icrs_to_ecliptic_j2000_deg",
    "icrs_to_ecliptic_of_date_deg",
    "icrs_to_galactic_deg",
]


def icrs_to_galactic_deg(ra_deg, dec_deg):
    """ICRS RA/Dec to galactic longitude and latitude (IAU 1958 system, as realised in ICRS).

    Args:
        ra_deg (array_like): ICRS right ascension, degrees, any shape.
        dec_deg (array_like): ICRS declination, degrees in [-90, 90]; broadcasts.

    Returns:
        tuple: ``(l_deg, b_deg)``, longitude in [0, 360), latitude in [-90, 90].

    >>> [round(float(v), 3) for v in icrs_to_galactic_deg(266.405, -28.936)]
    [0.0, 0.0]
    """
    return _rotate(_galactic_matrix(), ra_deg, dec_deg)


def galactic_to_icrs_deg(l_deg, b_deg):
    """Galactic longitude/latitude to ICRS RA/Dec (inverse of :func:`icrs_to_galactic_deg`).

    Args:
        l_deg (array_like): galactic longitude, degrees, any shape.
        b_deg (array_like): galactic latitude, degrees in [-90, 90]; broadcasts.

    Returns:
        tuple: ``(ra_deg, dec_deg)``, RA in [0, 360).
    """
    return _rotate(_galactic_matrix().T, l_deg, b_deg)


def icrs_to_ecliptic_j2000_deg(ra_deg, dec_deg):
    """ICRS RA/Dec to ecliptic longitude/latitude, mean ecliptic and equinox of J2000.0.

    Args:
        ra_deg (array_like): ICRS right ascension, degrees, any shape.
        dec_deg (array_like): ICRS declination, degrees; broadcasts.

    Returns:
        tuple: ``(lon_deg, lat_deg)``, longitude in [0, 360).
    """
    return _rotate(_ecliptic_j2000_matrix(), ra_deg, dec_deg)


def ecliptic_j2000_to_icrs_deg(lon_deg, lat_deg):
    """Ecliptic longitude/latitude (mean ecliptic and equinox of J2000.0) to ICRS RA/Dec.

    Args:
        lon_deg (array_like): ecliptic longitude, degrees, any shape.
        lat_deg (array_like): ecliptic latitude, degrees; broadcasts.

    Returns:
        tuple: ``(ra_deg, dec_deg)``, RA in [0, 360).
    """
    return _rotate(_ecliptic_j2000_matrix().T, lon_deg, lat_deg)


def icrs_to_ecliptic_of_date_deg(ra_deg, dec_deg, tt_whole, tt_frac):
    """ICRS RA/Dec to ecliptic coordinates referred to the mean ecliptic and equinox of date.

    Args:
        ra_deg (array_like): ICRS right ascension, degrees, any shape.
        dec_deg (array_like): ICRS declination, degrees; broadcasts.
        tt_whole, tt_frac (array_like): the date (equinox), two-part Julian date TT; broadcasts.

    Returns:
        tuple: ``(lon_deg, lat_deg)``, longitude in [0, 360).
    """
    return _rotate(_ecliptic_of_date_matrix(tt_whole, tt_frac), ra_deg, dec_deg)


def ecliptic_of_date_to_icrs_deg(lon_deg, lat_deg, tt_whole, tt_frac):
    """Ecliptic coordinates (mean ecliptic and equinox of date) to ICRS RA/Dec.

    Args:
        lon_deg (array_like): ecliptic longitude, degrees, any shape.
        lat_deg (array_like): ecliptic latitude, degrees; broadcasts.
        tt_whole, tt_frac (array_like): the date (equinox), two-part Julian date TT; broadcasts.

    Returns:
        tuple: ``(ra_deg, dec_deg)``, RA in [0, 360).
    """
    return _rotate(np.swapaxes(_ecliptic_of_date_matrix(tt_whole, tt_frac), -1, -2), lon_deg, lat_deg)


# ---------------------------------------------------------------------------------------------
# helpers


def _rotate(matrix, lon_deg, lat_deg):
    """Apply a (..., 3, 3) rotation to directions given as longitude/latitude in degrees."""
    lon = np.asarray(lon_deg, dtype=float) * DEG_RAD
    lat = np.asarray(lat_deg, dtype=float) * DEG_RAD
    cl = np.cos(lat)
    x, y, z = np.cos(lon) * cl, np.sin(lon) * cl, np.sin(lat)
    m = np.asarray(matrix)
    xr = m[..., 0, 0] * x + m[..., 0, 1] * y + m[..., 0, 2] * z
    yr = m[..., 1, 0] * x + m[..., 1, 1] * y + m[..., 1, 2] * z
    zr = m[..., 2, 0] * x + m[..., 2, 1] * y + m[..., 2, 2] * z
    lon_out = np.arctan2(yr, xr) / DEG_RAD
    lon_out = np.where(lon_out < 0.0, lon_out + 360.0, lon_out)
    lon_out = np.where(lon_out >= 360.0, lon_out - 360.0, lon_out)
    return lon_out, np.arctan2(zr, np.hypot(xr, yr)) / DEG_RAD


def _r1(a):
    c, s = math.cos(a), math.sin(a)
    return np.array([[1.0, 0.0, 0.0], [0.0, c, s], [0.0, -s, c]])


def _r2(a):
    c, s = math.cos(a), math.sin(a)
    return np.array([[c, 0.0, -s], [0.0, 1.0, 0.0], [s, 0.0, c]])


def _r3(a):
    c, s = math.cos(a), math.sin(a)
    return np.array([[c, s, 0.0], [-s, c, 0.0], [0.0, 0.0, 1.0]])


@functools.cache
def _galactic_matrix():
    """ICRS -> galactic rotation (frame rotations as in ERFA: R3(theta) turns the axes by theta)."""
    mas = DEG_RAD / 3.6e6
    icrs_to_fk5 = _r1(-_FK5_ETA0_MAS * mas) @ _r2(_FK5_XI0_MAS * mas) @ _r3(_FK5_DA0_MAS * mas)
    fk5_to_gal = (_r3((180.0 - _NCP_L_DEG) * DEG_RAD) @ _r2((90.0 - _NGP_DEC_DEG) * DEG_RAD)
                  @ _r3(_NGP_RA_DEG * DEG_RAD))
    m = fk5_to_gal @ icrs_to_fk5
    m.flags.writeable = False
    return m


@functools.cache
def _ecliptic_j2000_matrix():
    m = _ecliptic_of_date_matrix(J2000_JD, 0.0)
    m.flags.writeable = False
    return m


def _ecliptic_of_date_matrix(tt_whole, tt_frac):
    """ICRS -> mean ecliptic and equinox of date, R1(eps_A) . (bias-precession), shape (..., 3, 3)."""
    bp = bias_precession_matrix(tt_whole, tt_frac)
    eps = np.asarray(mean_obliquity_rad(tt_whole, tt_frac), dtype=float)
    c, s = np.cos(eps), np.sin(eps)
    r1 = np.zeros(eps.shape + (3, 3))
    r1[..., 0, 0] = 1.0
    r1[..., 1, 1], r1[..., 1, 2] = c, s
    r1[..., 2, 1], r1[..., 2, 2] = -s, c
    return r1 @ bp


# IAU 1958 galactic system in FK5 J2000 (see module docstring for the source of the digits).
_NGP_RA_DEG = 192.8594812065348
_NGP_DEC_DEG = 27.12825118085622
_NCP_L_DEG = 122.9319185680026
# FK5 -> ICRS frame offsets, USNO Circular 179 (Kaplan 2005), milliarcseconds.
_FK5_ETA0_MAS = -19.9
_FK5_XI0_MAS = 9.1
_FK5_DA0_MAS = -22.9
