"""Frame bias, IAU 2006 precession and IAU 2000B nutation: angles and rotation matrices.

Methods, each named beside its formula below:

* IAU 2006 mean obliquity (Hilton et al. 2006; ERFA ``obl06``);
* IAU 2006 Fukushima-Williams precession angles, frame bias included (ERFA ``pfw06``);
* IAU 2000B nutation, 77 luni-solar terms plus fixed planetary offsets (McCarthy & Luzum 2003;
  ERFA ``nut00b``): pole good to about 1 mas over 1900-2100;
* the equinox-based matrix NPB = R1(-eps) R3(-psi) R1(phi) R3(gamma) (ERFA ``fw2m``).

Dates are TT two-part Julian dates (TDB would be strictly right for the series; the difference is
negligible here). Angles are radians. Matrices have shape (..., 3, 3) and map GCRS/ICRS column vectors
to the frame of date: ``v_date = M @ v_icrs``.
"""

import numpy as np

from .constants import ARCSEC_RAD, J2000_JD, JULIAN_CENTURY_DAYS

__all__ = [
    "bias_precession_matrix",
    "bias_precession_nutation_matrix",
    "fw_angles_rad",
    "fw_matrix",
    "julian_centuries_tt",
    "mean_obliquity_rad",
    "nutation_rad",
]


def julian_centuries_tt(tt_whole, tt_frac):
    """Julian centuries of TT since J2000.0, ``((whole - 2451545) + frac) / 36525`` (ERFA order).

    Args:
        tt_whole, tt_frac: two-part Julian date (TT), days, broadcast together.
    """
    return (((np.asarray(tt_whole, dtype=np.float64) - J2000_JD) + tt_frac) / JULIAN_CENTURY_DAYS)[()]


def mean_obliquity_rad(tt_whole, tt_frac):
    """Mean obliquity of the ecliptic, IAU 2006 (Hilton et al. 2006; ERFA ``obl06``).

    Args:
        tt_whole, tt_frac: two-part Julian date (TT), days, any broadcastable shapes.

    Returns:
        radians, broadcast shape.

    >>> round(float(mean_obliquity_rad(2400000.5, 54388.0)), 12)
    0.409074922939
    """
    t = julian_centuries_tt(tt_whole, tt_frac)
    return _obliquity_from_t(t)


def fw_angles_rad(tt_whole, tt_frac):
    """IAU 2006 Fukushima-Williams precession angles, frame bias included (ERFA ``pfw06``).

    Args:
        tt_whole, tt_frac: two-part Julian date (TT), days, any broadcastable shapes.

    Returns:
        (gamb, phib, psib, epsa) in radians, each of the broadcast shape: gamma-bar, phi-bar,
        psi-bar, and the mean obliquity (IAU 2006).
    """
    t = julian_centuries_tt(tt_whole, tt_frac)
    # Coefficients in arcsec, Capitaine et al. (2003) / IERS Conventions 2010 eq. 5.40, as in ERFA pfw06.
    gamb = (-0.052928 + (10.556378 + (0.4932044 + (-0.00031238 + (-0.000002788 + (0.0000000260)
            * t) * t) * t) * t) * t) * ARCSEC_RAD
    phib = (84381.412819 + (-46.811016 + (0.0511268 + (0.00053289 + (-0.000000440 + (-0.0000000176)
            * t) * t) * t) * t) * t) * ARCSEC_RAD
    psib = (-0.041775 + (5038.481484 + (1.5584175 + (-0.00018522 + (-0.000026452 + (-0.0000000148)
            * t) * t) * t) * t) * t) * ARCSEC_RAD
    return gamb, phib, psib, _obliquity_from_t(t)


def nutation_rad(tt_whole, tt_frac):
    """Nutation in longitude and obliquity, IAU 2000B (McCarthy & Luzum 2003; ERFA ``nut00b``).

    77 luni-solar terms (IERS Conventions 2003 Table 5.3a truncation, "MHB_2000_SHORT") with the
    linear Delaunay arguments of Simon et al. (1994), plus fixed offsets in place of the planetary
    terms (-0.135 mas, +0.388 mas; Luzum 2001). Pole good to about 1 mas 1900-2100.

    Args:
        tt_whole, tt_frac: two-part Julian date (TT), days, any broadcastable shapes.

    Returns:
        (dpsi, deps) in radians, each of the broadcast shape.
    """
    t = np.asarray(julian_centuries_tt(tt_whole, tt_frac))
    # Delaunay arguments, linear terms only (Simon et al. 1994), arcsec reduced to one turn, as in nut00b.
    args = np.stack([
        np.fmod(485868.249036 + 1717915923.2178 * t, _TURN_ARCSEC),   # l, Moon's mean anomaly
        np.fmod(1287104.79305 + 129596581.0481 * t, _TURN_ARCSEC),    # l', Sun's mean anomaly
        np.fmod(335779.526232 + 1739527262.8478 * t, _TURN_ARCSEC),   # F = L - Omega
        np.fmod(1072260.70369 + 1602961601.2090 * t, _TURN_ARCSEC),   # D, Moon's elongation
        np.fmod(450160.398036 - 6962890.5431 * t, _TURN_ARCSEC),      # Omega, Moon's node
    ], axis=-1) * ARCSEC_RAD
    phase = args @ _NUT00B_MULT.T                                     # (..., 77)
    s = np.sin(phase)
    c = np.cos(phase)
    tt = t[..., None]
    ps, pst, pc, ec, ect, es = _NUT00B_COEF.T
    dp = np.sum((ps + pst * tt) * s + pc * c, axis=-1)
    de = np.sum((ec + ect * tt) * c + es * s, axis=-1)
    dpsi = dp * _U2R + _DPSI_PLANETARY_RAD
    deps = de * _U2R + _DEPS_PLANETARY_RAD
    return dpsi[()], deps[()]


def fw_matrix(gamb, phib, psi, eps):
    """Rotation matrix from Fukushima-Williams angles: R1(-eps) R3(-psi) R1(phib) R3(gamb) (ERFA ``fw2m``).

    R1/R3 are frame rotations (positive angle turns the frame anticlockwise seen from the axis tip).

    Args:
        gamb, phib, psi, eps: radians, broadcastable shapes.

    Returns:
        ndarray of shape (..., 3, 3).
    """
    return _r1(-eps) @ _r3(-psi) @ _r1(phib) @ _r3(gamb)


def bias_precession_matrix(tt_whole, tt_frac):
    """Frame bias and IAU 2006 precession matrix, GCRS to mean equator and equinox of date (ERFA ``pmat06``).

    Args:
        tt_whole, tt_frac: two-part Julian date (TT), days, any broadcastable shapes.

    Returns:
        ndarray of shape (..., 3, 3).
    """
    gamb, phib, psib, epsa = fw_angles_rad(tt_whole, tt_frac)
    return fw_matrix(gamb, phib, psib, epsa)


def bias_precession_nutation_matrix(tt_whole, tt_frac):
    """Bias, IAU 2006 precession and IAU 2000B nutation, GCRS to true equator and equinox of date.

    Like ERFA ``pnm06a`` but with the IAU 2000B nutation instead of IAU 2006/2000A: differs from
    ``pnm06a`` by about 1 mas (the 2000B truncation).

    Args:
        tt_whole, tt_frac: two-part Julian date (TT), days, any broadcastable shapes.

    Returns:
        ndarray of shape (..., 3, 3).
    """
    gamb, phib, psib, epsa = fw_angles_rad(tt_whole, tt_frac)
    dpsi, deps = nutation_rad(tt_whole, tt_frac)
    return fw_matrix(gamb, phib, psib + dpsi, epsa + deps)


# ---------------------------------------------------------------------------------------------
# helpers


def _obliquity_from_t(t):
    # IAU 2006 mean obliquity, arcsec (Hilton et al. 2006; IERS Conventions 2010 eq. 5.40; ERFA obl06).
    return ((84381.406 + (-46.836769 + (-0.0001831 + (0.00200340 + (-0.000000576 + (-0.0000000434)
             * t) * t) * t) * t) * t) * ARCSEC_RAD)


def _r1(a):
    a = np.asarray(a, dtype=np.float64)
    c, s = np.cos(a), np.sin(a)
    one, zero = np.ones_like(a), np.zeros_like(a)
    return np.stack([np.stack([one, zero, zero], -1),
                     np.stack([zero, c, s], -1),
                     np.stack([zero, -s, c], -1)], -2)


def _r3(a):
    a = np.asarray(a, dtype=np.float64)
    c, s = np.cos(a), np.sin(a)
    one, zero = np.ones_like(a), np.zeros_like(a)
    return np.stack([np.stack([c, s, zero], -1),
                     np.stack([-s, c, zero], -1),
                     np.stack([zero, zero, one], -1)], -2)


_TURN_ARCSEC = 1296000.0
_U2R = ARCSEC_RAD / 1e7  # series units are 0.1 microarcsecond
# Fixed offsets in lieu of planetary nutation (Luzum 2001, as in ERFA nut00b), milliarcsec -> rad.
_DPSI_PLANETARY_RAD = -0.135e-3 * ARCSEC_RAD
_DEPS_PLANETARY_RAD = 0.388e-3 * ARCSEC_RAD

# IAU 2000B luni-solar nutation series: IERS Conventions 2003 Table 5.3a truncated to 77 terms
# (MHB_2000_SHORT, McCarthy & Luzum 2003), transcribed from ERFA src/nut00b.c (release 2023-10-11).
# Columns: multipliers of l, l', F, D, Omega; then longitude sin, t*sin, cos and obliquity cos, t*cos,
# sin coefficients in units of 0.1 microarcsecond (and per Julian century for the t columns).
_NUT00B_TABLE = (
    (0, 0, 0, 0, 1, -172064161.0, -174666.0, 33386.0, 92052331.0, 9086.0, 15377.0),
    (0, 0, 2, -2, 2, -13170906.0, -1675.0, -13696.0, 5730336.0, -3015.0, -4587.0),
    (0, 0, 2, 0, 2, -2276413.0, -234.0, 2796.0, 978459.0, -485.0, 1374.0),
    (0, 0, 0, 0, 2, 2074554.0, 207.0, -698.0, -897492.0, 470.0, -291.0),
    (0, 1, 0, 0, 0, 1475877.0, -3633.0, 11817.0, 73871.0, -184.0, -1924.0),
    (0, 1, 2, -2, 2, -516821.0, 1226.0, -524.0, 224386.0, -677.0, -174.0),
    (1, 0, 0, 0, 0, 711159.0, 73.0, -872.0, -6750.0, 0.0, 358.0),
    (0, 0, 2, 0, 1, -387298.0, -367.0, 380.0, 200728.0, 18.0, 318.0),
    (1, 0, 2, 0, 2, -301461.0, -36.0, 816.0, 129025.0, -63.0, 367.0),
    (0, -1, 2, -2, 2, 215829.0, -494.0, 111.0, -95929.0, 299.0, 132.0),
    (0, 0, 2, -2, 1, 128227.0, 137.0, 181.0, -68982.0, -9.0, 39.0),
    (-1, 0, 2, 0, 2, 123457.0, 11.0, 19.0, -53311.0, 32.0, -4.0),
    (-1, 0, 0, 2, 0, 156994.0, 10.0, -168.0, -1235.0, 0.0, 82.0),
    (1, 0, 0, 0, 1, 63110.0, 63.0, 27.0, -33228.0, 0.0, -9.0),
    (-1, 0, 0, 0, 1, -57976.0, -63.0, -189.0, 31429.0, 0.0, -75.0),
    (-1, 0, 2, 2, 2, -59641.0, -11.0, 149.0, 25543.0, -11.0, 66.0),
    (1, 0, 2, 0, 1, -51613.0, -42.0, 129.0, 26366.0, 0.0, 78.0),
    (-2, 0, 2, 0, 1, 45893.0, 50.0, 31.0, -24236.0, -10.0, 20.0),
    (0, 0, 0, 2, 0, 63384.0, 11.0, -150.0, -1220.0, 0.0, 29.0),
    (0, 0, 2, 2, 2, -38571.0, -1.0, 158.0, 16452.0, -11.0, 68.0),
    (0, -2, 2, -2, 2, 32481.0, 0.0, 0.0, -13870.0, 0.0, 0.0),
    (-2, 0, 0, 2, 0, -47722.0, 0.0, -18.0, 477.0, 0.0, -25.0),
    (2, 0, 2, 0, 2, -31046.0, -1.0, 131.0, 13238.0, -11.0, 59.0),
    (1, 0, 2, -2, 2, 28593.0, 0.0, -1.0, -12338.0, 10.0, -3.0),
    (-1, 0, 2, 0, 1, 20441.0, 21.0, 10.0, -10758.0, 0.0, -3.0),
    (2, 0, 0, 0, 0, 29243.0, 0.0, -74.0, -609.0, 0.0, 13.0),
    (0, 0, 2, 0, 0, 25887.0, 0.0, -66.0, -550.0, 0.0, 11.0),
    (0, 1, 0, 0, 1, -14053.0, -25.0, 79.0, 8551.0, -2.0, -45.0),
    (-1, 0, 0, 2, 1, 15164.0, 10.0, 11.0, -8001.0, 0.0, -1.0),
    (0, 2, 2, -2, 2, -15794.0, 72.0, -16.0, 6850.0, -42.0, -5.0),
    (0, 0, -2, 2, 0, 21783.0, 0.0, 13.0, -167.0, 0.0, 13.0),
    (1, 0, 0, -2, 1, -12873.0, -10.0, -37.0, 6953.0, 0.0, -14.0),
    (0, -1, 0, 0, 1, -12654.0, 11.0, 63.0, 6415.0, 0.0, 26.0),
    (-1, 0, 2, 2, 1, -10204.0, 0.0, 25.0, 5222.0, 0.0, 15.0),
    (0, 2, 0, 0, 0, 16707.0, -85.0, -10.0, 168.0, -1.0, 10.0),
    (1, 0, 2, 2, 2, -7691.0, 0.0, 44.0, 3268.0, 0.0, 19.0),
    (-2, 0, 2, 0, 0, -11024.0, 0.0, -14.0, 104.0, 0.0, 2.0),
    (0, 1, 2, 0, 2, 7566.0, -21.0, -11.0, -3250.0, 0.0, -5.0),
    (0, 0, 2, 2, 1, -6637.0, -11.0, 25.0, 3353.0, 0.0, 14.0),
    (0, -1, 2, 0, 2, -7141.0, 21.0, 8.0, 3070.0, 0.0, 4.0),
    (0, 0, 0, 2, 1, -6302.0, -11.0, 2.0, 3272.0, 0.0, 4.0),
    (1, 0, 2, -2, 1, 5800.0, 10.0, 2.0, -3045.0, 0.0, -1.0),
    (2, 0, 2, -2, 2, 6443.0, 0.0, -7.0, -2768.0, 0.0, -4.0),
    (-2, 0, 0, 2, 1, -5774.0, -11.0, -15.0, 3041.0, 0.0, -5.0),
    (2, 0, 2, 0, 1, -5350.0, 0.0, 21.0, 2695.0, 0.0, 12.0),
    (0, -1, 2, -2, 1, -4752.0, -11.0, -3.0, 2719.0, 0.0, -3.0),
    (0, 0, 0, -2, 1, -4940.0, -11.0, -21.0, 2720.0, 0.0, -9.0),
    (-1, -1, 0, 2, 0, 7350.0, 0.0, -8.0, -51.0, 0.0, 4.0),
    (2, 0, 0, -2, 1, 4065.0, 0.0, 6.0, -2206.0, 0.0, 1.0),
    (1, 0, 0, 2, 0, 6579.0, 0.0, -24.0, -199.0, 0.0, 2.0),
    (0, 1, 2, -2, 1, 3579.0, 0.0, 5.0, -1900.0, 0.0, 1.0),
    (1, -1, 0, 0, 0, 4725.0, 0.0, -6.0, -41.0, 0.0, 3.0),
    (-2, 0, 2, 0, 2, -3075.0, 0.0, -2.0, 1313.0, 0.0, -1.0),
    (3, 0, 2, 0, 2, -2904.0, 0.0, 15.0, 1233.0, 0.0, 7.0),
    (0, -1, 0, 2, 0, 4348.0, 0.0, -10.0, -81.0, 0.0, 2.0),
    (1, -1, 2, 0, 2, -2878.0, 0.0, 8.0, 1232.0, 0.0, 4.0),
    (0, 0, 0, 1, 0, -4230.0, 0.0, 5.0, -20.0, 0.0, -2.0),
    (-1, -1, 2, 2, 2, -2819.0, 0.0, 7.0, 1207.0, 0.0, 3.0),
    (-1, 0, 2, 0, 0, -4056.0, 0.0, 5.0, 40.0, 0.0, -2.0),
    (0, -1, 2, 2, 2, -2647.0, 0.0, 11.0, 1129.0, 0.0, 5.0),
    (-2, 0, 0, 0, 1, -2294.0, 0.0, -10.0, 1266.0, 0.0, -4.0),
    (1, 1, 2, 0, 2, 2481.0, 0.0, -7.0, -1062.0, 0.0, -3.0),
    (2, 0, 0, 0, 1, 2179.0, 0.0, -2.0, -1129.0, 0.0, -2.0),
    (-1, 1, 0, 1, 0, 3276.0, 0.0, 1.0, -9.0, 0.0, 0.0),
    (1, 1, 0, 0, 0, -3389.0, 0.0, 5.0, 35.0, 0.0, -2.0),
    (1, 0, 2, 0, 0, 3339.0, 0.0, -13.0, -107.0, 0.0, 1.0),
    (-1, 0, 2, -2, 1, -1987.0, 0.0, -6.0, 1073.0, 0.0, -2.0),
    (1, 0, 0, 0, 2, -1981.0, 0.0, 0.0, 854.0, 0.0, 0.0),
    (-1, 0, 0, 1, 0, 4026.0, 0.0, -353.0, -553.0, 0.0, -139.0),
    (0, 0, 2, 1, 2, 1660.0, 0.0, -5.0, -710.0, 0.0, -2.0),
    (-1, 0, 2, 4, 2, -1521.0, 0.0, 9.0, 647.0, 0.0, 4.0),
    (-1, 1, 0, 1, 1, 1314.0, 0.0, 0.0, -700.0, 0.0, 0.0),
    (0, -2, 2, -2, 1, -1283.0, 0.0, 0.0, 672.0, 0.0, 0.0),
    (1, 0, 2, 2, 1, -1331.0, 0.0, 8.0, 663.0, 0.0, 4.0),
    (-2, 0, 2, 2, 2, 1383.0, 0.0, -2.0, -594.0, 0.0, -2.0),
    (-1, 0, 0, 0, 2, 1405.0, 0.0, 4.0, -610.0, 0.0, 2.0),
    (1, 1, 2, -2, 2, 1290.0, 0.0, 0.0, -556.0, 0.0, 0.0),
)
_NUT00B_ARRAY = np.array(_NUT00B_TABLE, dtype=np.float64)
_NUT00B_MULT = _NUT00B_ARRAY[:, :5]
_NUT00B_COEF = _NUT00B_ARRAY[:, 5:]
