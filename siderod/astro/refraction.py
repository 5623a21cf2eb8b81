"""Atmospheric refraction (Bennett's formula, with its below-horizon taper) and airmass.

Refraction raises every object: the apparent (observed) altitude is the true (airless, geometric)
altitude plus the refraction angle R.  All functions here are pure and broadcast over numpy arrays.

Method and limits, said once for the whole module:

* **Bennett refraction** (G. G. Bennett, 1982, J. Inst. Navigation 35, 255), as given by Meeus,
  *Astronomical Algorithms* 2nd ed., ch. 16 [from memory]: ``R = cot(h + 7.31/(h + 4.4))``
  arcminutes, ``h`` the *apparent* altitude in degrees, with the refinement
  ``R - 0.06 sin(14.7 R + 13)`` (argument in degrees) that Meeus gives with it.  Stated accuracy:
  0.07' for the plain formula and about 0.015' refined, for 0 <= h <= 90 deg, for 1010 hPa, 10 degC and
  visible light.  Near the zenith the refined formula dips to -0.9"; we clamp R at zero there.
* **Pressure and temperature**: R is scaled by ``(P / 1010) * (283 / (273 + T))`` (Meeus ch. 16,
  P in hPa, T in degC).  We pin this constant (the NOVAS-style ``0.28 P / (T + 273)`` differs by
  about 0.07 %); humidity and wavelength are not modelled.
* **Near the horizon** real refraction varies from night to night by several arcminutes
  (temperature inversions), far more than the formula's error: alerts that depend on the
  horizon should use a standard altitude (-0 deg 34' for stars) rather than trust R to the second.
* **Below the horizon** (apparent altitude < 0 deg) Bennett's formula is no longer valid and turns
  nonsensical near -3 deg.  We keep refraction *continuous and documented* instead of cutting it
  off (a step at the cut-off makes rise/set searches jump): R falls linearly from its horizon value
  R(0 deg) (about 34.5') at 0 deg apparent to zero at -5 deg apparent, and is zero below.  The slope is
  about 0.115 deg per deg, so true and apparent altitude stay strictly monotone in each other and the
  inverse (:func:`refraction_from_true_deg`) is single-valued everywhere.
* **Airmass**: Pickering (2002, DIO 12, 3) ``X = 1 / sin(h + 244 / (165 + 47 h^1.1))`` with ``h`` the
  apparent altitude in degrees; good to a few per mille down to the horizon; ``nan`` below 0 deg.

Example:
    >>> round(float(refraction_deg(0.0)) * 60.0, 3)   # arcminutes at the horizon
    34.457
"""

from __future__ import annotations

import functools

import numpy as np

__all__ = [
    "BELOW_HORIZON_TAPER_DEG",
    "airmass",
    "refraction_deg",
    "refraction_from_true_deg",
    "refraction_slope",
    "standard_pressure_hpa",
]

#: Apparent altitude (deg) at which the below-horizon taper reaches zero refraction.
BELOW_HORIZON_TAPER_DEG = -5.0


def refraction_deg(alt_apparent_deg, pressure_hpa=1010.0, temperature_c=10.0):
    """Refraction for a given *apparent* altitude: Bennett (1982), refined, with a taper below 0 deg.

    Args:
        alt_apparent_deg (array_like): apparent (observed) altitude, degrees in [-90, 90], any shape.
        pressure_hpa (array_like): air pressure at the observer, hPa (0 turns refraction off);
            broadcasts with ``alt_apparent_deg``.
        temperature_c (array_like): air temperature, degrees Celsius; broadcasts.

    Returns:
        ndarray: refraction R >= 0 in degrees, so that ``true = apparent - R``.  Accuracy
        about 0.015' (1") at standard conditions for 0-90 deg (Bennett's statement, via Meeus);
        below 0 deg it is the documented linear taper described in the module docstring.

    Example:
        >>> round(float(refraction_deg(45.0)) * 3600.0, 1)   # arcseconds
        58.0
    """
    h = np.asarray(alt_apparent_deg, dtype=float)
    r_deg = _bennett_refined_deg(np.maximum(h, 0.0))
    # Linear taper below the horizon (module docstring): continuous at 0 deg and at -5 deg.
    taper = np.clip(1.0 - h / BELOW_HORIZON_TAPER_DEG, 0.0, 1.0)
    r_deg = np.where(h >= 0.0, r_deg, _HORIZON_R_DEG * taper)
    return r_deg * _scale(pressure_hpa, temperature_c)


def refraction_from_true_deg(alt_true_deg, pressure_hpa=1010.0, temperature_c=10.0):
    """Refraction for a given *true* (geometric, airless) altitude: the exact inverse of
    :func:`refraction_deg`.

    Solved by interpolating a precomputed table of the forward formula (exact at its nodes,
    interpolation error < 0.01") and then fixed-point steps ``h_app = h_true + R(h_app)``
    (each shrinks the error at least 4x, since |dR/dh| <= 0.22).  Saemundsson's formula (1986)
    would be the usual closed form but agrees with Bennett only to about 0.1'; solving keeps the
    forward and inverse directions consistent to far below 0.001".

    Args:
        alt_true_deg (array_like): geometric altitude, degrees in [-90, 90], any shape.
        pressure_hpa (array_like): air pressure, hPa (0 turns refraction off); broadcasts.
        temperature_c (array_like): temperature, degC; broadcasts.

    Returns:
        ndarray: refraction R in degrees such that ``apparent = true + R``.

    Example:
        >>> h = 10.0
        >>> r = float(refraction_from_true_deg(h))
        >>> abs(float(refraction_deg(h + r)) - r) < 1e-9
        True
    """
    scale_in = _scale(pressure_hpa, temperature_c)
    h_true, scale = np.broadcast_arrays(np.asarray(alt_true_deg, dtype=float), scale_in)
    # One weather for every altitude is the usual call: no sort of the broadcast copy to find that.
    scales = scale_in.reshape(1) if scale_in.ndim == 0 else np.unique(scale)
    if scales.size == 1:
        r = _refraction_from_true_table_deg(h_true, float(scales[0]))
    else:  # varied weather in one call: start from the standard table and iterate longer
        r = _refraction_from_true_table_deg(h_true, 1.0) * scale
    for _ in range(2 if scales.size == 1 else 8):
        r = refraction_deg(h_true + r, 1010.0, 10.0) * scale
    return r[()]


def refraction_slope(alt_apparent_deg, pressure_hpa=1010.0, temperature_c=10.0):
    """dR/dh of :func:`refraction_deg`: degrees of refraction per degree of apparent altitude.

    Differentiated in closed form, piece by piece: refined Bennett above 0 deg (zero where it is
    clamped near the zenith), the constant slope of the linear taper between -5 and 0 deg, zero
    below. At the kinks (0 deg, -5 deg) it gives the value of the piece above.

    Args:
        alt_apparent_deg (array_like): apparent altitude, degrees, any shape.
        pressure_hpa, temperature_c (array_like): weather, as for :func:`refraction_deg`.

    Returns:
        ndarray: dR/dh (dimensionless, <= 0 above the horizon, > 0 on the taper).

    Example:
        >>> h = 20.0
        >>> numeric = float(refraction_deg(h + 1e-5) - refraction_deg(h - 1e-5)) / 2e-5
        >>> abs(float(refraction_slope(h)) - numeric) < 1e-8
        True
    """
    h = np.asarray(alt_apparent_deg, dtype=float)
    hp = np.maximum(h, 0.0)
    x = np.radians(hp + 7.31 / (hp + 4.4))
    r0 = 1.0 / np.tan(x)  # arcminutes
    dr0 = -np.radians(1.0 - 7.31 / (hp + 4.4) ** 2) / np.sin(x) ** 2  # arcminutes per degree
    phase = np.radians(14.7 * r0 + 13.0)
    refined = r0 - 0.06 * np.sin(phase)
    slope = np.where(refined > 0.0, dr0 * (1.0 - 0.06 * 14.7 * np.radians(1.0) * np.cos(phase)), 0.0) / 60.0
    taper = np.where(h > BELOW_HORIZON_TAPER_DEG, -_HORIZON_R_DEG / BELOW_HORIZON_TAPER_DEG, 0.0)
    return np.where(h >= 0.0, slope, taper) * _scale(pressure_hpa, temperature_c)


def standard_pressure_hpa(elevation_m):
    """Pressure of the ICAO standard atmosphere at a height: 1013.25 (1 - 2.25577e-5 h)^5.25588.

    Common practice (the ICAO/ISA troposphere formula, valid up to 11 km).  Real pressure differs
    by a few per cent with the weather, which moves refraction near the horizon by about 1'.

    Args:
        elevation_m (array_like): height above mean sea level, metres, any shape.

    Returns:
        ndarray: pressure in hPa.

    Example:
        >>> round(float(standard_pressure_hpa(212.0)), 1)
        988.0
    """
    h = np.asarray(elevation_m, dtype=float)
    return 1013.25 * (1.0 - 2.25577e-5 * h) ** 5.25588


def airmass(alt_apparent_deg):
    """Relative airmass: Pickering (2002), ``1 / sin(h + 244 / (165 + 47 h^1.1))``.

    Args:
        alt_apparent_deg (array_like): apparent altitude, degrees, any shape.

    Returns:
        ndarray: airmass (1.0 at the zenith, about 38.1 at 0 deg); ``nan`` below 0 deg, where the
        object is not visible and airmass has no meaning.

    Example:
        >>> round(float(airmass(90.0)), 4), round(float(airmass(30.0)), 3)
        (1.0, 1.993)
    """
    h = np.asarray(alt_apparent_deg, dtype=float)
    hp = np.where(h >= 0.0, h, np.nan)
    with np.errstate(invalid="ignore"):
        return 1.0 / np.sin(np.radians(hp + 244.0 / (165.0 + 47.0 * hp**1.1)))


# ---------------------------------------------------------------------------------------------
# helpers


def _bennett_refined_deg(h_deg):
    """Bennett R (deg) at apparent altitude h >= 0 deg, 1010 hPa and 10 degC, refined, clamped >= 0."""
    r_arcmin = 1.0 / np.tan(np.radians(h_deg + 7.31 / (h_deg + 4.4)))
    r_arcmin = r_arcmin - 0.06 * np.sin(np.radians(14.7 * r_arcmin + 13.0))
    return np.maximum(r_arcmin, 0.0) / 60.0


def _scale(pressure_hpa, temperature_c):
    """Meeus' pressure/temperature factor (P/1010)(283/(273 + T)); zero pressure gives zero."""
    p = np.asarray(pressure_hpa, dtype=float)
    t = np.asarray(temperature_c, dtype=float)
    return (p / 1010.0) * (283.0 / (273.0 + t))


_HORIZON_R_DEG = float(_bennett_refined_deg(np.float64(0.0)))


@functools.lru_cache(maxsize=16)
def _true_altitude_table(scale: float):
    """Nodes (h_true, R) of the forward formula scaled by ``scale``, sorted by h_true.

    Apparent-altitude nodes every 0.005 deg from -5.5 to 15 deg and every 0.05 deg above; the
    linear interpolation error is below 0.01" everywhere (checked in tests).  Building one table
    takes about a millisecond; the weather of a site changes rarely, so a few are cached.
    """
    h_app = np.concatenate([np.arange(-5.5, 15.0, 0.005), np.arange(15.0, 90.0001, 0.05)])
    h_app[-1] = 90.0
    r = refraction_deg(h_app) * scale
    return h_app - r, r


def _refraction_from_true_table_deg(h_true_deg, scale: float):
    """Fast inverse by table lookup (np.interp): R (deg) for geometric altitude.

    Args:
        h_true_deg (ndarray): geometric altitude, degrees, any shape.
        scale (float): the pressure/temperature factor from :func:`_scale` (a scalar).
    """
    nodes_true, nodes_r = _true_altitude_table(float(scale))
    return np.interp(h_true_deg, nodes_true, nodes_r, left=0.0, right=0.0)
