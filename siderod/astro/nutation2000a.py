"""IAU 2000A nutation in longitude and obliquity, with the IAU 2006 adjustments (ERFA ``nut06a``).

Why it is here: sidereal time must follow ERFA ``gst06a`` to well under 0.1 ms of time over 1900-2100.
The 77-term IAU 2000B series (:func:`siderod.astro.precession.nutation_rad`) leaves up to 2.8 mas in
dpsi there, i.e. up to 0.17 ms of time in the equation of the equinoxes; the full series below brings
the equinox-based GAST of :mod:`siderod.astro.sidereal` to within 0.06 microseconds of ``gst06a``.
The precession-nutation matrix used for places (:mod:`siderod.astro.precession`) keeps IAU 2000B:
1 mas on the pole is far below anything an alert depends on.

Method, each step named beside its code:

* IAU 2000A nutation (MHB2000, Mathews, Herring & Buffett 2002; IERS Conventions 2003 Tables 5.3a and
  5.3b): 678 luni-solar terms and 687 planetary terms, free core nutation omitted, evaluated as ERFA
  ``nut00a`` does, including its mix of IERS 2003 and MHB2000 fundamental arguments;
* IAU 2006 adjustments (Wallace & Capitaine 2006 eq. 5, as in ERFA ``nut06a``):
  dpsi *= 1 + 0.4697e-6 + f and deps *= 1 + f, with f = -2.7774e-6 t (secular change of J2).

The result reproduces ERFA ``nut06a`` to about 1e-18 rad (round-off). The model itself is good to a
few tenths of a mas at current epochs (the unpredictable free core nutation is left out, as in ERFA).

Cost: about 1 365 sines and cosines per instant (a few tens of microseconds); evaluate it once per
window, as :class:`siderod.astro.sidereal.FastSidereal` does, not once per instant. The coefficient
tables (about 80 kB of text) are parsed into numpy arrays on the first call only, so importing this
module stays cheap.

Dates are TT two-part Julian dates (TDB would be strictly right; the difference is negligible here).
Angles are radians.
"""

import functools
from dataclasses import dataclass

import numpy as np

from .constants import ARCSEC_RAD, TAU
from .precession import julian_centuries_tt

__all__ = ["nutation_2000a_rad"]


def nutation_2000a_rad(tt_whole, tt_frac):
    """Nutation in longitude and obliquity, IAU 2000A with the IAU 2006 adjustments (ERFA ``nut06a``).

    Args:
        tt_whole, tt_frac: two-part Julian date (TT), days, any broadcastable shapes; any split of the
            date works, as in ERFA.

    Returns:
        (dpsi, deps) in radians, each of the broadcast shape (numpy scalars for scalar input); dpsi is
        within +-20 arcsec, deps within +-10 arcsec.

    >>> dpsi, deps = nutation_2000a_rad(2400000.5, 53736.0)   # ERFA t_erfa_c.c, t_nut06a
    >>> round(float(dpsi), 16), round(float(deps), 16)
    (-9.6309120258e-06, 4.06323849689e-05)
    """
    t = np.asarray(julian_centuries_tt(tt_whole, tt_frac))
    dpsi, deps = _nutation_2000a_from_t(t)
    # IAU 2006 adjustments (Wallace & Capitaine 2006 eq. 5; ERFA nut06a, same operation order):
    # 0.4697e-6 rescales dpsi to the IAU 2006 precession; fj2 follows the secular decrease of J2.
    fj2 = -2.7774e-6 * t
    dpsi = dpsi + dpsi * (0.4697e-6 + fj2)
    deps = deps + deps * fj2
    return dpsi[()], deps[()]


# ---------------------------------------------------------------------------------------------
# helpers, in the order they are called


def _nutation_2000a_from_t(t: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """IAU 2000A nutation without the 2006 adjustments (ERFA ``nut00a``), radians, shape of ``t``.

    Both series are summed in one pass: the 5 luni-solar and 13 planetary arguments form one (n, 18)
    matrix, and a block multiplier matrix (18, 1365) turns it into all the term phases at once. The
    amplitude sums are two matrix products. Instants go through in chunks so that the (n, 1365) scratch
    arrays stay a few MB whatever the number of instants.
    """
    series = _series()
    flat = t.reshape(-1)
    dpsi = np.empty(flat.shape)
    deps = np.empty(flat.shape)
    for lo in range(0, flat.size, _CHUNK_INSTANTS):
        tc = flat[lo:lo + _CHUNK_INSTANTS]
        phase = _nut00a_arguments_rad(tc) @ series.multipliers      # (n, 1365)
        s = np.sin(phase) @ series.sin_coefs                         # (n, 3): psi sin, psi t sin, eps sin
        c = np.cos(phase) @ series.cos_coefs                         # (n, 3): psi cos, eps cos, eps t cos
        dpsi[lo:lo + tc.size] = (s[:, 0] + s[:, 1] * tc + c[:, 0]) * _U2R
        deps[lo:lo + tc.size] = (c[:, 1] + c[:, 2] * tc + s[:, 2]) * _U2R
    return dpsi.reshape(t.shape), deps.reshape(t.shape)


def _nut00a_arguments_rad(t: np.ndarray) -> np.ndarray:
    """The 18 arguments of ERFA ``nut00a``, radians, shape (n, 18), in the column order of the tables.

    Luni-solar (5): l, F, Omega from IERS 2003 (``fal03``, ``faf03``, ``faom03``), but l' and D from
    MHB2000's own polynomials. Planetary (13): MHB2000's linear l, F, D, Omega; IERS 2003 longitudes of
    Mercury to Uranus (``fame03`` ... ``faur03``); MHB2000's Neptune (not ``fane03``); and the general
    precession p_A (``fapa03``). ERFA keeps this mix to stay faithful to the MHB2000 code; using IERS
    2003 arguments throughout would change the result by well under 0.1 microarcsec.
    """
    fa = _iers2003_arguments_rad(t)
    # MHB2000 l' and D, arcsec reduced to one turn (ERFA nut00a).
    lp = np.fmod(1287104.79305 + t * (129596581.0481 + t * (-0.5532 + t * (0.000136 + t * (-0.00001149)))),
                 _TURN_ARCSEC) * ARCSEC_RAD
    d = np.fmod(1072260.70369 + t * (1602961601.2090 + t * (-6.3706 + t * (0.006593 + t * (-0.00003169)))),
                _TURN_ARCSEC) * ARCSEC_RAD
    return np.stack([
        fa[..., 0], lp, fa[..., 2], d, fa[..., 4],
        # MHB2000 linear Delaunay arguments for the planetary series, radians (ERFA nut00a).
        np.fmod(2.35555598 + 8328.6914269554 * t, TAU),      # l
        np.fmod(1.627905234 + 8433.466158131 * t, TAU),      # F
        np.fmod(5.198466741 + 7771.3771468121 * t, TAU),     # D
        np.fmod(2.18243920 - 33.757045 * t, TAU),            # Omega
        fa[..., 5], fa[..., 6], fa[..., 7], fa[..., 8], fa[..., 9], fa[..., 10], fa[..., 11],
        np.fmod(5.321159000 + 3.8127774000 * t, TAU),        # Neptune, MHB2000
        fa[..., 13],                                         # p_A
    ], axis=-1)


def _iers2003_arguments_rad(t) -> np.ndarray:
    """IERS Conventions 2003 fundamental arguments, radians, shape ``t.shape + (14,)``.

    Columns: l, l', F, D, Omega (Delaunay; Simon et al. 1994, arcsec polynomials, ERFA ``fal03``,
    ``falp03``, ``faf03``, ``fad03``, ``faom03``); mean longitudes of Mercury, Venus, Earth, Mars,
    Jupiter, Saturn, Uranus, Neptune (Souchay et al. 1999, ERFA ``fame03`` ... ``fane03``); general
    accumulated precession in longitude p_A (Kinoshita & Souchay 1990, ERFA ``fapa03``). Same
    formulas and operation order as ERFA, so the values agree to round-off.

    Args:
        t: Julian centuries of TDB (TT will do) since J2000.0, any shape.
    """
    t = np.asarray(t, dtype=np.float64)
    turn = _TURN_ARCSEC
    return np.stack([
        np.fmod(485868.249036 + t * (1717915923.2178 + t * (31.8792 + t * (0.051635 + t * (-0.00024470)))),
                turn) * ARCSEC_RAD,
        np.fmod(1287104.793048 + t * (129596581.0481 + t * (-0.5532 + t * (0.000136 + t * (-0.00001149)))),
                turn) * ARCSEC_RAD,
        np.fmod(335779.526232 + t * (1739527262.8478 + t * (-12.7512 + t * (-0.001037 + t * (0.00000417)))),
                turn) * ARCSEC_RAD,
        np.fmod(1072260.703692 + t * (1602961601.2090 + t * (-6.3706 + t * (0.006593 + t * (-0.00003169)))),
                turn) * ARCSEC_RAD,
        np.fmod(450160.398036 + t * (-6962890.5431 + t * (7.4722 + t * (0.007702 + t * (-0.00005939)))),
                turn) * ARCSEC_RAD,
        np.fmod(4.402608842 + 2608.7903141574 * t, TAU),     # Mercury
        np.fmod(3.176146697 + 1021.3285546211 * t, TAU),     # Venus
        np.fmod(1.753470314 + 628.3075849991 * t, TAU),      # Earth
        np.fmod(6.203480913 + 334.0612426700 * t, TAU),      # Mars
        np.fmod(0.599546497 + 52.9690962641 * t, TAU),       # Jupiter
        np.fmod(0.874016757 + 21.3299104960 * t, TAU),       # Saturn
        np.fmod(5.481293872 + 7.4781598567 * t, TAU),        # Uranus
        np.fmod(5.311886287 + 3.8133035638 * t, TAU),        # Neptune
        (0.024381750 + 0.00000538691 * t) * t,               # p_A
    ], axis=-1)


@dataclass(frozen=True, slots=True)
class _Series:
    """The IAU 2000A tables as arrays (read-only), luni-solar terms first, then planetary.

    Attributes:
        multipliers: (18, 1365) integer multipliers of the arguments of :func:`_nut00a_arguments_rad`;
            block diagonal (5 luni-solar arguments x 678 terms, 13 planetary arguments x 687 terms).
        sin_coefs: (1365, 3) coefficients of sin(phase): longitude, longitude x t, obliquity.
        cos_coefs: (1365, 3) coefficients of cos(phase): longitude, obliquity, obliquity x t.
            Units 0.1 microarcsec (and per Julian century for the x t columns); the planetary
            series has no x t columns (zeros).
    """

    multipliers: np.ndarray
    sin_coefs: np.ndarray
    cos_coefs: np.ndarray


@functools.cache
def _series() -> _Series:
    """Parse the coefficient text into arrays, once (first call), and keep them."""
    ls = np.array(_LUNI_SOLAR_ROWS.split(), dtype=np.float64).reshape(-1, 11)
    pl = np.array(_PLANETARY_ROWS.split(), dtype=np.float64).reshape(-1, 17)
    n_ls, n_pl = ls.shape[0], pl.shape[0]
    multipliers = np.zeros((18, n_ls + n_pl))
    multipliers[:5, :n_ls] = ls[:, :5].T
    multipliers[5:, n_ls:] = pl[:, :13].T
    zeros = np.zeros(n_pl)
    # Luni-solar columns: sp, spt, cp, ce, cet, se. Planetary columns: sp, cp, se, ce.
    sin_coefs = np.concatenate([ls[:, [5, 6, 10]], np.stack([pl[:, 13], zeros, pl[:, 15]], axis=-1)])
    cos_coefs = np.concatenate([ls[:, [7, 8, 9]], np.stack([pl[:, 14], pl[:, 16], zeros], axis=-1)])
    for a in (multipliers, sin_coefs, cos_coefs):
        a.setflags(write=False)
    return _Series(multipliers, sin_coefs, cos_coefs)


_TURN_ARCSEC = 1296000.0
_U2R = ARCSEC_RAD / 1e7  # series units are 0.1 microarcsecond
# Instants per pass: (n, 1365) float64 scratch arrays of ~11 MB each.
_CHUNK_INSTANTS = 1024

# IAU 2000A (MHB2000) nutation series: IERS Conventions 2003 Table 5.3a (luni-solar, 678 terms) and
# Table 5.3b (planetary, 687 terms), in the order and form of ERFA src/nut00a.c (ERFA 2.0.1, SOFA
# release 2023-10-11), copied as data from that file and checked against the liberfa/erfa repository
# copy and against pyerfa's nut00a (tests/astro/test_nutation2000a.py). One term per line, whitespace-
# separated integers (parsed by _series on first use); units 0.1 microarcsecond (per Julian century for
# the t columns). Several frequencies appear more than once, exactly as in MHB2000 and ERFA.
#
# Luni-solar columns: multipliers of l, l', F, D, Omega; then longitude sin, t*sin, cos;
# obliquity cos, t*cos, sin.
_LUNI_SOLAR_ROWS = """
 0  0  0  0 1 -172064161 -174666  33386 92052331  9086 15377
 0  0  2 -2 2  -13170906   -1675 -13696  5730336 -3015 -4587
 0  0  2  0 2   -2276413    -234   2796   978459  -485  1374
 0  0  0  0 2    2074554     207   -698  -897492   470  -291
 0  1  0  0 0    1475877   -3633  11817    73871  -184 -1924
 0  1  2 -2 2    -516821    1226   -524   224386  -677  -174
 1  0  0  0 0     711159      73   -872    -6750     0   358
 0  0  2  0 1    -387298    -367    380   200728    18   318
 1  0  2  0 2    -301461     -36    816   129025   -63   367
 0 -1  2 -2 2     215829    -494    111   -95929   299   132
 0  0  2 -2 1     128227     137    181   -68982    -9    39
-1  0  2  0 2     123457      11     19   -53311    32    -4
-1  0  0  2 0     156994      10   -168    -1235     0    82
 1  0  0  0 1      63110      63     27   -33228     0    -9
-1  0  0  0 1     -57976     -63   -189    31429     0   -75
-1  0  2  2 2     -59641     -11    149    25543   -11    66
 1  0  2  0 1     -51613     -42    129    26366     0    78
-2  0  2  0 1      45893      50     31   -24236   -10    20
 0  0  0  2 0      63384      11   -150    -1220     0    29
 0  0  2  2 2     -38571      -1    158    16452   -11    68
 0 -2  2 -2 2      32481       0      0   -13870     0     0
-2  0  0  2 0     -47722       0    -18      477     0   -25
 2  0  2  0 2     -31046      -1    131    13238   -11    59
 1  0  2 -2 2      28593       0     -1   -12338    10    -3
-1  0  2  0 1      20441      21     10   -10758     0    -3
 2  0  0  0 0      29243       0    -74     -609     0    13
 0  0  2  0 0      25887       0    -66     -550     0    11
 0  1  0  0 1     -14053     -25     79     8551    -2   -45
-1  0  0  2 1      15164      10     11    -8001     0    -1
 0  2  2 -2 2     -15794      72    -16     6850   -42    -5
 0  0 -2  2 0      21783       0     13     -167     0    13
 1  0  0 -2 1     -12873     -10    -37     6953     0   -14
 0 -1  0  0 1     -12654      11     63     6415     0    26
-1  0  2  2 1     -10204       0     25     5222     0    15
 0  2  0  0 0      16707     -85    -10      168    -1    10
 1  0  2  2 2      -7691       0     44     3268     0    19
-2  0  2  0 0     -11024       0    -14      104     0     2
 0  1  2  0 2       7566     -21    -11    -3250     0    -5
 0  0  2  2 1      -6637     -11     25     3353     0    14
 0 -1  2  0 2      -7141      21      8     3070     0     4
 0  0  0  2 1      -6302     -11      2     3272     0     4
 1  0  2 -2 1       5800      10      2    -3045     0    -1
 2  0  2 -2 2       6443       0     -7    -2768     0    -4
-2  0  0  2 1      -5774     -11    -15     3041     0    -5
 2  0  2  0 1      -5350       0     21     2695     0    12
 0 -1  2 -2 1      -4752     -11     -3     2719     0    -3
 0  0  0 -2 1      -4940     -11    -21     2720     0    -9
-1 -1  0  2 0       7350       0     -8      -51     0     4
 2  0  0 -2 1       4065       0      6    -2206     0     1
 1  0  0  2 0       6579       0    -24     -199     0     2
 0  1  2 -2 1       3579       0      5    -1900     0     1
 1 -1  0  0 0       4725       0     -6      -41     0     3
-2  0  2  0 2      -3075       0     -2     1313     0    -1
 3  0  2  0 2      -2904       0     15     1233     0     7
 0 -1  0  2 0       4348       0    -10      -81     0     2
 1 -1  2  0 2      -2878       0      8     1232     0     4
 0  0  0  1 0      -4230       0      5      -20     0    -2
-1 -1  2  2 2      -2819       0      7     1207     0     3
-1  0  2  0 0      -4056       0      5       40     0    -2
 0 -1  2  2 2      -2647       0     11     1129     0     5
-2  0  0  0 1      -2294       0    -10     1266     0    -4
 1  1  2  0 2       2481       0     -7    -1062     0    -3
 2  0  0  0 1       2179       0     -2    -1129     0    -2
-1  1  0  1 0       3276       0      1       -9     0     0
 1  1  0  0 0      -3389       0      5       35     0    -2
 1  0  2  0 0       3339       0    -13     -107     0     1
-1  0  2 -2 1      -1987       0     -6     1073     0    -2
 1  0  0  0 2      -1981       0      0      854     0     0
-1  0  0  1 0       4026       0   -353     -553     0  -139
 0  0  2  1 2       1660       0     -5     -710     0    -2
-1  0  2  4 2      -1521       0      9      647     0     4
-1  1  0  1 1       1314       0      0     -700     0     0
 0 -2  2 -2 1      -1283       0      0      672     0     0
 1  0  2  2 1      -1331       0      8      663     0     4
-2  0  2  2 2       1383       0     -2     -594     0    -2
-1  0  0  0 2       1405       0      4     -610     0     2
 1  1  2 -2 2       1290       0      0     -556     0     0
-2  0  2  4 2      -1214       0      5      518     0     2
-1  0  4  0 2       1146       0     -3     -490     0    -1
 2  0  2 -2 1       1019       0     -1     -527     0    -1
 2  0  2  2 2      -1100       0      9      465     0     4
 1  0  0  2 1       -970       0      2      496     0     1
 3  0  0  0 0       1575       0     -6      -50     0     0
 3  0  2 -2 2        934       0     -3     -399     0    -1
 0  0  4 -2 2        922       0     -1     -395     0    -1
 0  1  2  0 1        815       0     -1     -422     0    -1
 0  0 -2  2 1        834       0      2     -440     0     1
 0  0  2 -2 3       1248       0      0     -170     0     1
-1  0  0  4 0       1338       0     -5      -39     0     0
 2  0 -2  0 1        716       0     -2     -389     0    -1
-2  0  0  4 0       1282       0     -3      -23     0     1
-1 -1  0  2 1        742       0      1     -391     0     0
-1  0  0  1 1       1020       0    -25     -495     0   -10
 0  1  0  0 2        715       0     -4     -326     0     2
 0  0 -2  0 1       -666       0     -3      369     0    -1
 0 -1  2  0 1       -667       0      1      346     0     1
 0  0  2 -1 2       -704       0      0      304     0     0
 0  0  2  4 2       -694       0      5      294     0     2
-2 -1  0  2 0      -1014       0     -1        4     0    -1
 1  1  0 -2 1       -585       0     -2      316     0    -1
-1  1  0  2 0       -949       0      1        8     0    -1
-1  1  0  1 2       -595       0      0      258     0     0
 1 -1  0  0 1        528       0      0     -279     0     0
 1 -1  2  2 2       -590       0      4      252     0     2
-1  1  2  2 2        570       0     -2     -244     0    -1
 3  0  2  0 1       -502       0      3      250     0     2
 0  1 -2  2 0       -875       0      1       29     0     0
-1  0  0 -2 1       -492       0     -3      275     0    -1
 0  1  2  2 2        535       0     -2     -228     0    -1
-1 -1  2  2 1       -467       0      1      240     0     1
 0 -1  0  0 2        591       0      0     -253     0     0
 1  0  2 -4 1       -453       0     -1      244     0    -1
-1  0 -2  2 0        766       0      1        9     0     0
 0 -1  2  2 1       -446       0      2      225     0     1
 2 -1  2  0 2       -488       0      2      207     0     1
 0  0  0  2 2       -468       0      0      201     0     0
 1 -1  2  0 1       -421       0      1      216     0     1
-1  1  2  0 2        463       0      0     -200     0     0
 0  1  0  2 0       -673       0      2       14     0     0
 0 -1 -2  2 0        658       0      0       -2     0     0
 0  3  2 -2 2       -438       0      0      188     0     0
 0  0  0  1 1       -390       0      0      205     0     0
-1  0  2  2 0        639     -11     -2      -19     0     0
 2  1  2  0 2        412       0     -2     -176     0    -1
 1  1  0  0 1       -361       0      0      189     0     0
 1  1  2  0 1        360       0     -1     -185     0    -1
 2  0  0  2 0        588       0     -3      -24     0     0
 1  0 -2  2 0       -578       0      1        5     0     0
-1  0  0  2 2       -396       0      0      171     0     0
 0  1  0  1 0        565       0     -1       -6     0     0
 0  1  0 -2 1       -335       0     -1      184     0    -1
-1  0  2 -2 2        357       0      1     -154     0     0
 0  0  0 -1 1        321       0      1     -174     0     0
-1  1  0  0 1       -301       0     -1      162     0     0
 1  0  2 -1 2       -334       0      0      144     0     0
 1 -1  0  2 0        493       0     -2      -15     0     0
 0  0  0  4 0        494       0     -2      -19     0     0
 1  0  2  1 2        337       0     -1     -143     0    -1
 0  0  2  1 1        280       0     -1     -144     0     0
 1  0  0 -2 2        309       0      1     -134     0     0
-1  0  2  4 1       -263       0      2      131     0     1
 1  0 -2  0 1        253       0      1     -138     0     0
 1  1  2 -2 1        245       0      0     -128     0     0
 0  0  2  2 0        416       0     -2      -17     0     0
-1  0  2 -1 1       -229       0      0      128     0     0
-2  0  2  2 1        231       0      0     -120     0     0
 4  0  2  0 2       -259       0      2      109     0     1
 2 -1  0  0 0        375       0     -1       -8     0     0
 2  1  2 -2 2        252       0      0     -108     0     0
 0  1  2  1 2       -245       0      1      104     0     0
 1  0  4 -2 2        243       0     -1     -104     0     0
-1 -1  0  0 1        208       0      1     -112     0     0
 0  1  0  2 1        199       0      0     -102     0     0
-2  0  2  4 1       -208       0      1      105     0     0
 2  0  2  0 0        335       0     -2      -14     0     0
 1  0  0  1 0       -325       0      1        7     0     0
-1  0  0  4 1       -187       0      0       96     0     0
-1  0  4  0 1        197       0     -1     -100     0     0
 2  0  2  2 1       -192       0      2       94     0     1
 0  0  2 -3 2       -188       0      0       83     0     0
-1 -2  0  2 0        276       0      0       -2     0     0
 2  1  0  0 0       -286       0      1        6     0     0
 0  0  4  0 2        186       0     -1      -79     0     0
 0  0  0  0 3       -219       0      0       43     0     0
 0  3  0  0 0        276       0      0        2     0     0
 0  0  2 -4 1       -153       0     -1       84     0     0
 0 -1  0  2 1       -156       0      0       81     0     0
 0  0  0  4 1       -154       0      1       78     0     0
-1 -1  2  4 2       -174       0      1       75     0     0
 1  0  2  4 2       -163       0      2       69     0     1
-2  2  0  2 0       -228       0      0        1     0     0
-2 -1  2  0 1         91       0     -4      -54     0    -2
-2  0  0  2 2        175       0      0      -75     0     0
-1 -1  2  0 2       -159       0      0       69     0     0
 0  0  4 -2 1        141       0      0      -72     0     0
 3  0  2 -2 1        147       0      0      -75     0     0
-2 -1  0  2 1       -132       0      0       69     0     0
 1  0  0 -1 1        159       0    -28      -54     0    11
 0 -2  0  2 0        213       0      0       -4     0     0
-2  0  0  4 1        123       0      0      -64     0     0
-3  0  0  0 1       -118       0     -1       66     0     0
 1  1  2  2 2        144       0     -1      -61     0     0
 0  0  2  4 1       -121       0      1       60     0     0
 3  0  2  2 2       -134       0      1       56     0     1
-1  1  2 -2 1       -105       0      0       57     0     0
 2  0  0 -4 1       -102       0      0       56     0     0
 0  0  0 -2 2        120       0      0      -52     0     0
 2  0  2 -4 1        101       0      0      -54     0     0
-1  1  0  2 1       -113       0      0       59     0     0
 0  0  2 -1 1       -106       0      0       61     0     0
 0 -2  2  2 2       -129       0      1       55     0     0
 2  0  0  2 1       -114       0      0       57     0     0
 4  0  2 -2 2        113       0     -1      -49     0     0
 2  0  0 -2 2       -102       0      0       44     0     0
 0  2  0  0 1        -94       0      0       51     0     0
 1  0  0 -4 1       -100       0     -1       56     0     0
 0  2  2 -2 1         87       0      0      -47     0     0
-3  0  0  4 0        161       0      0       -1     0     0
-1  1  2  0 1         96       0      0      -50     0     0
-1 -1  0  4 0        151       0     -1       -5     0     0
-1 -2  2  2 2       -104       0      0       44     0     0
-2 -1  2  4 2       -110       0      0       48     0     0
 1 -1  2  2 1       -100       0      1       50     0     0
-2  1  0  2 0         92       0     -5       12     0    -2
-2  1  2  0 1         82       0      0      -45     0     0
 2  1  0 -2 1         82       0      0      -45     0     0
-3  0  2  0 1        -78       0      0       41     0     0
-2  0  2 -2 1        -77       0      0       43     0     0
-1  1  0  2 2          2       0      0       54     0     0
 0 -1  2 -1 2         94       0      0      -40     0     0
-1  0  4 -2 2        -93       0      0       40     0     0
 0 -2  2  0 2        -83       0     10       40     0    -2
-1  0  2  1 2         83       0      0      -36     0     0
 2  0  0  0 2        -91       0      0       39     0     0
 0  0  2  0 3        128       0      0       -1     0     0
-2  0  4  0 2        -79       0      0       34     0     0
-1  0 -2  0 1        -83       0      0       47     0     0
-1  1  2  2 1         84       0      0      -44     0     0
 3  0  0  0 1         83       0      0      -43     0     0
-1  0  2  3 2         91       0      0      -39     0     0
 2 -1  2  0 1        -77       0      0       39     0     0
 0  1  2  2 1         84       0      0      -43     0     0
 0 -1  2  4 2        -92       0      1       39     0     0
 2 -1  2  2 2        -92       0      1       39     0     0
 0  2 -2  2 0        -94       0      0        0     0     0
-1 -1  2 -1 1         68       0      0      -36     0     0
 0 -2  0  0 1        -61       0      0       32     0     0
 1  0  2 -4 2         71       0      0      -31     0     0
 1 -1  0 -2 1         62       0      0      -34     0     0
-1 -1  2  0 1        -63       0      0       33     0     0
 1 -1  2 -2 2        -73       0      0       32     0     0
-2 -1  0  4 0        115       0      0       -2     0     0
-1  0  0  3 0       -103       0      0        2     0     0
-2 -1  2  2 2         63       0      0      -28     0     0
 0  2  2  0 2         74       0      0      -32     0     0
 1  1  0  2 0       -103       0     -3        3     0    -1
 2  0  2 -1 2        -69       0      0       30     0     0
 1  0  2  1 1         57       0      0      -29     0     0
 4  0  0  0 0         94       0      0       -4     0     0
 2  1  2  0 1         64       0      0      -33     0     0
 3 -1  2  0 2        -63       0      0       26     0     0
-2  2  0  2 1        -38       0      0       20     0     0
 1  0  2 -3 1        -43       0      0       24     0     0
 1  1  2 -4 1        -45       0      0       23     0     0
-1 -1  2 -2 1         47       0      0      -24     0     0
 0 -1  0 -1 1        -48       0      0       25     0     0
 0 -1  0 -2 1         45       0      0      -26     0     0
-2  0  0  0 2         56       0      0      -25     0     0
-2  0 -2  2 0         88       0      0        2     0     0
-1  0 -2  4 0        -75       0      0        0     0     0
 1 -2  0  0 0         85       0      0        0     0     0
 0  1  0  1 1         49       0      0      -26     0     0
-1  2  0  2 0        -74       0     -3       -1     0    -1
 1 -1  2 -2 1        -39       0      0       21     0     0
 1  2  2 -2 2         45       0      0      -20     0     0
 2 -1  2 -2 2         51       0      0      -22     0     0
 1  0  2 -1 1        -40       0      0       21     0     0
 2  1  2 -2 1         41       0      0      -21     0     0
-2  0  0 -2 1        -42       0      0       24     0     0
 1 -2  2  0 2        -51       0      0       22     0     0
 0  1  2  1 1        -42       0      0       22     0     0
 1  0  4 -2 1         39       0      0      -21     0     0
-2  0  4  2 2         46       0      0      -18     0     0
 1  1  2  1 2        -53       0      0       22     0     0
 1  0  0  4 0         82       0      0       -4     0     0
 1  0  2  2 0         81       0     -1       -4     0     0
 2  0  2  1 2         47       0      0      -19     0     0
 3  1  2  0 2         53       0      0      -23     0     0
 4  0  2  0 1        -45       0      0       22     0     0
-2 -1  2  0 0        -44       0      0       -2     0     0
 0  1 -2  2 1        -33       0      0       16     0     0
 1  0 -2  1 0        -61       0      0        1     0     0
 0 -1 -2  2 1         28       0      0      -15     0     0
 2 -1  0 -2 1        -38       0      0       19     0     0
-1  0  2 -1 2        -33       0      0       21     0     0
 1  0  2 -3 2        -60       0      0        0     0     0
 0  1  2 -2 3         48       0      0      -10     0     0
 0  0  2 -3 1         27       0      0      -14     0     0
-1  0 -2  2 1         38       0      0      -20     0     0
 0  0  2 -4 2         31       0      0      -13     0     0
-2  1  0  0 1        -29       0      0       15     0     0
-1  0  0 -1 1         28       0      0      -15     0     0
 2  0  2 -4 2        -32       0      0       15     0     0
 0  0  4 -4 4         45       0      0       -8     0     0
 0  0  4 -4 2        -44       0      0       19     0     0
-1 -2  0  2 1         28       0      0      -15     0     0
-2  0  0  3 0        -51       0      0        0     0     0
 1  0 -2  2 1        -36       0      0       20     0     0
-3  0  2  2 2         44       0      0      -19     0     0
-3  0  2  2 1         26       0      0      -14     0     0
-2  0  2  2 0        -60       0      0        2     0     0
 2 -1  0  0 1         35       0      0      -18     0     0
-2  1  2  2 2        -27       0      0       11     0     0
 1  1  0  1 0         47       0      0       -1     0     0
 0  1  4 -2 2         36       0      0      -15     0     0
-1  1  0 -2 1        -36       0      0       20     0     0
 0  0  0 -4 1        -35       0      0       19     0     0
 1 -1  0  2 1        -37       0      0       19     0     0
 1  1  0  2 1         32       0      0      -16     0     0
-1  2  2  2 2         35       0      0      -14     0     0
 3  1  2 -2 2         32       0      0      -13     0     0
 0 -1  0  4 0         65       0      0       -2     0     0
 2 -1  0  2 0         47       0      0       -1     0     0
 0  0  4  0 1         32       0      0      -16     0     0
 2  0  4 -2 2         37       0      0      -16     0     0
-1 -1  2  4 1        -30       0      0       15     0     0
 1  0  0  4 1        -32       0      0       16     0     0
 1 -2  2  2 2        -31       0      0       13     0     0
 0  0  2  3 2         37       0      0      -16     0     0
-1  1  2  4 2         31       0      0      -13     0     0
 3  0  0  2 0         49       0      0       -2     0     0
-1  0  4  2 2         32       0      0      -13     0     0
 1  1  2  2 1         23       0      0      -12     0     0
-2  0  2  6 2        -43       0      0       18     0     0
 2  1  2  2 2         26       0      0      -11     0     0
-1  0  2  6 2        -32       0      0       14     0     0
 1  0  2  4 1        -29       0      0       14     0     0
 2  0  2  4 2        -27       0      0       12     0     0
 1  1 -2  1 0         30       0      0        0     0     0
-3  1  2  1 2        -11       0      0        5     0     0
 2  0 -2  0 2        -21       0      0       10     0     0
-1  0  0  1 2        -34       0      0       15     0     0
-4  0  2  2 1        -10       0      0        6     0     0
-1 -1  0  1 0        -36       0      0        0     0     0
 0  0 -2  2 2         -9       0      0        4     0     0
 1  0  0 -1 2        -12       0      0        5     0     0
 0 -1  2 -2 3        -21       0      0        5     0     0
-2  1  2  0 0        -29       0      0       -1     0     0
 0  0  2 -2 4        -15       0      0        3     0     0
-2 -2  0  2 0        -20       0      0        0     0     0
-2  0 -2  4 0         28       0      0        0     0    -2
 0 -2 -2  2 0         17       0      0        0     0     0
 1  2  0 -2 1        -22       0      0       12     0     0
 3  0  0 -4 1        -14       0      0        7     0     0
-1  1  2 -2 2         24       0      0      -11     0     0
 1 -1  2 -4 1         11       0      0       -6     0     0
 1  1  0 -2 2         14       0      0       -6     0     0
-3  0  2  0 0         24       0      0        0     0     0
-3  0  2  0 2         18       0      0       -8     0     0
-2  0  0  1 0        -38       0      0        0     0     0
 0  0 -2  1 0        -31       0      0        0     0     0
-3  0  0  2 1        -16       0      0        8     0     0
-1 -1 -2  2 0         29       0      0        0     0     0
 0  1  2 -4 1        -18       0      0       10     0     0
 2  1  0 -4 1        -10       0      0        5     0     0
 0  2  0 -2 1        -17       0      0       10     0     0
 1  0  0 -3 1          9       0      0       -4     0     0
-2  0  2 -2 2         16       0      0       -6     0     0
-2 -1  0  0 1         22       0      0      -12     0     0
-4  0  0  2 0         20       0      0        0     0     0
 1  1  0 -4 1        -13       0      0        6     0     0
-1  0  2 -4 1        -17       0      0        9     0     0
 0  0  4 -4 1        -14       0      0        8     0     0
 0  3  2 -2 2          0       0      0       -7     0     0
-3 -1  0  4 0         14       0      0        0     0     0
-3  0  0  4 1         19       0      0      -10     0     0
 1 -1 -2  2 0        -34       0      0        0     0     0
-1 -1  0  2 2        -20       0      0        8     0     0
 1 -2  0  0 1          9       0      0       -5     0     0
 1 -1  0  0 2        -18       0      0        7     0     0
 0  0  0  1 2         13       0      0       -6     0     0
-1 -1  2  0 0         17       0      0        0     0     0
 1 -2  2 -2 2        -12       0      0        5     0     0
 0 -1  2 -1 1         15       0      0       -8     0     0
-1  0  2  0 3        -11       0      0        3     0     0
 1  1  0  0 2         13       0      0       -5     0     0
-1  1  2  0 0        -18       0      0        0     0     0
 1  2  0  0 0        -35       0      0        0     0     0
-1  2  2  0 2          9       0      0       -4     0     0
-1  0  4 -2 1        -19       0      0       10     0     0
 3  0  2 -4 2        -26       0      0       11     0     0
 1  2  2 -2 1          8       0      0       -4     0     0
 1  0  4 -4 2        -10       0      0        4     0     0
-2 -1  0  4 1         10       0      0       -6     0     0
 0 -1  0  2 2        -21       0      0        9     0     0
-2  1  0  4 0        -15       0      0        0     0     0
-2 -1  2  2 1          9       0      0       -5     0     0
 2  0 -2  2 0        -29       0      0        0     0     0
 1  0  0  1 1        -19       0      0       10     0     0
 0  1  0  2 2         12       0      0       -5     0     0
 1 -1  2 -1 2         22       0      0       -9     0     0
-2  0  4  0 1        -10       0      0        5     0     0
 2  1  0  0 1        -20       0      0       11     0     0
 0  1  2  0 0        -20       0      0        0     0     0
 0 -1  4 -2 2        -17       0      0        7     0     0
 0  0  4 -2 4         15       0      0       -3     0     0
 0  2  2  0 1          8       0      0       -4     0     0
-3  0  0  6 0         14       0      0        0     0     0
-1 -1  0  4 1        -12       0      0        6     0     0
 1 -2  0  2 0         25       0      0        0     0     0
-1  0  0  4 2        -13       0      0        6     0     0
-1 -2  2  2 1        -14       0      0        8     0     0
-1  0  0 -2 2         13       0      0       -5     0     0
 1  0 -2 -2 1        -17       0      0        9     0     0
 0  0 -2 -2 1        -12       0      0        6     0     0
-2  0 -2  0 1        -10       0      0        5     0     0
 0  0  0  3 1         10       0      0       -6     0     0
 0  0  0  3 0        -15       0      0        0     0     0
-1  1  0  4 0        -22       0      0        0     0     0
-1 -1  2  2 0         28       0      0       -1     0     0
-2  0  2  3 2         15       0      0       -7     0     0
 1  0  0  2 2         23       0      0      -10     0     0
 0 -1  2  1 2         12       0      0       -5     0     0
 3 -1  0  0 0         29       0      0       -1     0     0
 2  0  0  1 0        -25       0      0        1     0     0
 1 -1  2  0 0         22       0      0        0     0     0
 0  0  2  1 0        -18       0      0        0     0     0
 1  0  2  0 3         15       0      0        3     0     0
 3  1  0  0 0        -23       0      0        0     0     0
 3 -1  2 -2 2         12       0      0       -5     0     0
 2  0  2 -1 1         -8       0      0        4     0     0
 1  1  2  0 0        -19       0      0        0     0     0
 0  0  4 -1 2        -10       0      0        4     0     0
 1  2  2  0 2         21       0      0       -9     0     0
-2  0  0  6 0         23       0      0       -1     0     0
 0 -1  0  4 1        -16       0      0        8     0     0
-2 -1  2  4 1        -19       0      0        9     0     0
 0 -2  2  2 1        -22       0      0       10     0     0
 0 -1  2  2 0         27       0      0       -1     0     0
-1  0  2  3 1         16       0      0       -8     0     0
-2  1  2  4 2         19       0      0       -8     0     0
 2  0  0  2 2          9       0      0       -4     0     0
 2 -2  2  0 2         -9       0      0        4     0     0
-1  1  2  3 2         -9       0      0        4     0     0
 3  0  2 -1 2         -8       0      0        4     0     0
 4  0  2 -2 1         18       0      0       -9     0     0
-1  0  0  6 0         16       0      0       -1     0     0
-1 -2  2  4 2        -10       0      0        4     0     0
-3  0  2  6 2        -23       0      0        9     0     0
-1  0  2  4 0         16       0      0       -1     0     0
 3  0  0  2 1        -12       0      0        6     0     0
 3 -1  2  0 1         -8       0      0        4     0     0
 3  0  2  0 0         30       0      0       -2     0     0
 1  0  4  0 2         24       0      0      -10     0     0
 5  0  2 -2 2         10       0      0       -4     0     0
 0 -1  2  4 1        -16       0      0        7     0     0
 2 -1  2  2 1        -16       0      0        7     0     0
 0  1  2  4 2         17       0      0       -7     0     0
 1 -1  2  4 2        -24       0      0       10     0     0
 3 -1  2  2 2        -12       0      0        5     0     0
 3  0  2  2 1        -24       0      0       11     0     0
 5  0  2  0 2        -23       0      0        9     0     0
 0  0  2  6 2        -13       0      0        5     0     0
 4  0  2  2 2        -15       0      0        7     0     0
 0 -1  1 -1 1          0       0  -1988        0     0 -1679
-1  0  1  0 3          0       0    -63        0     0   -27
 0 -2  2 -2 3         -4       0      0        0     0     0
 1  0 -1  0 1          0       0      5        0     0     4
 2 -2  0 -2 1          5       0      0       -3     0     0
-1  0  1  0 2          0       0    364        0     0   176
-1  0  1  0 1          0       0  -1044        0     0  -891
-1 -1  2 -1 2         -3       0      0        1     0     0
-2  2  0  2 2          4       0      0       -2     0     0
-1  0  1  0 0          0       0    330        0     0     0
-4  1  2  2 2          5       0      0       -2     0     0
-3  0  2  1 1          3       0      0       -2     0     0
-2 -1  2  0 2         -3       0      0        1     0     0
 1  0 -2  1 1         -5       0      0        2     0     0
 2 -1 -2  0 1          3       0      0       -1     0     0
-4  0  2  2 0          3       0      0        0     0     0
-3  1  0  3 0          3       0      0        0     0     0
-1  0 -1  2 0          0       0      5        0     0     0
 0 -2  0  0 2          0       0      0        1     0     0
 0 -2  0  0 2          4       0      0       -2     0     0
-3  0  0  3 0          6       0      0        0     0     0
-2 -1  0  2 2          5       0      0       -2     0     0
-1  0 -2  3 0         -7       0      0        0     0     0
-4  0  0  4 0        -12       0      0        0     0     0
 2  1 -2  0 1          5       0      0       -3     0     0
 2 -1  0 -2 2          3       0      0       -1     0     0
 0  0  1 -1 0         -5       0      0        0     0     0
-1  2  0  1 0          3       0      0        0     0     0
-2  1  2  0 2         -7       0      0        3     0     0
 1  1  0 -1 1          7       0      0       -4     0     0
 1  0  1 -2 1          0       0    -12        0     0   -10
 0  2  0  0 2          4       0      0       -2     0     0
 1 -1  2 -3 1          3       0      0       -2     0     0
-1  1  2 -1 1         -3       0      0        2     0     0
-2  0  4 -2 2         -7       0      0        3     0     0
-2  0  4 -2 1         -4       0      0        2     0     0
-2 -2  0  2 1         -3       0      0        1     0     0
-2  0 -2  4 0          0       0      0        0     0     0
 1  2  2 -4 1         -3       0      0        1     0     0
 1  1  2 -4 2          7       0      0       -3     0     0
-1  2  2 -2 1         -4       0      0        2     0     0
 2  0  0 -3 1          4       0      0       -2     0     0
-1  2  0  0 1         -5       0      0        3     0     0
 0  0  0 -2 0          5       0      0        0     0     0
-1 -1  2 -2 2         -5       0      0        2     0     0
-1  1  0  0 2          5       0      0       -2     0     0
 0  0  0 -1 2         -8       0      0        3     0     0
-2  1  0  1 0          9       0      0        0     0     0
 1 -2  0 -2 1          6       0      0       -3     0     0
 1  0 -2  0 2         -5       0      0        2     0     0
-3  1  0  2 0          3       0      0        0     0     0
-1  1 -2  2 0         -7       0      0        0     0     0
-1 -1  0  0 2         -3       0      0        1     0     0
-3  0  0  2 0          5       0      0        0     0     0
-3 -1  0  2 0          3       0      0        0     0     0
 2  0  2 -6 1         -3       0      0        2     0     0
 0  1  2 -4 2          4       0      0       -2     0     0
 2  0  0 -4 2          3       0      0       -1     0     0
-2  1  2 -2 1         -5       0      0        2     0     0
 0 -1  2 -4 1          4       0      0       -2     0     0
 0  1  0 -2 2          9       0      0       -3     0     0
-1  0  0 -2 0          4       0      0        0     0     0
 2  0 -2 -2 1          4       0      0       -2     0     0
-4  0  2  0 1         -3       0      0        2     0     0
-1 -1  0 -1 1         -4       0      0        2     0     0
 0  0 -2  0 2          9       0      0       -3     0     0
-3  0  0  1 0         -4       0      0        0     0     0
-1  0 -2  1 0         -4       0      0        0     0     0
-2  0 -2  2 1          3       0      0       -2     0     0
 0  0 -4  2 0          8       0      0        0     0     0
-2 -1 -2  2 0          3       0      0        0     0     0
 1  0  2 -6 1         -3       0      0        2     0     0
-1  0  2 -4 2          3       0      0       -1     0     0
 1  0  0 -4 2          3       0      0       -1     0     0
 2  1  2 -4 2         -3       0      0        1     0     0
 2  1  2 -4 1          6       0      0       -3     0     0
 0  1  4 -4 4          3       0      0        0     0     0
 0  1  4 -4 2         -3       0      0        1     0     0
-1 -1 -2  4 0         -7       0      0        0     0     0
-1 -3  0  2 0          9       0      0        0     0     0
-1  0 -2  4 1         -3       0      0        2     0     0
-2 -1  0  3 0         -3       0      0        0     0     0
 0  0 -2  3 0         -4       0      0        0     0     0
-2  0  0  3 1         -5       0      0        3     0     0
 0 -1  0  1 0        -13       0      0        0     0     0
-3  0  2  2 0         -7       0      0        0     0     0
 1  1 -2  2 0         10       0      0        0     0     0
-1  1  0  2 2          3       0      0       -1     0     0
 1 -2  2 -2 1         10       0     13        6     0    -5
 0  0  1  0 2          0       0     30        0     0    14
 0  0  1  0 1          0       0   -162        0     0  -138
 0  0  1  0 0          0       0     75        0     0     0
-1  2  0  2 1         -7       0      0        4     0     0
 0  0  2  0 2         -4       0      0        2     0     0
-2  0  2  0 2          4       0      0       -2     0     0
 2  0  0 -1 1          5       0      0       -2     0     0
 3  0  0 -2 1          5       0      0       -3     0     0
 1  0  2 -2 3         -3       0      0        0     0     0
 1  2  0  0 1         -3       0      0        2     0     0
 2  0  2 -3 2         -4       0      0        2     0     0
-1  1  4 -2 2         -5       0      0        2     0     0
-2 -2  0  4 0          6       0      0        0     0     0
 0 -3  0  2 0          9       0      0        0     0     0
 0  0 -2  4 0          5       0      0        0     0     0
-1 -1  0  3 0         -7       0      0        0     0     0
-2  0  0  4 2         -3       0      0        1     0     0
-1  0  0  3 1         -4       0      0        2     0     0
 2 -2  0  0 0          7       0      0        0     0     0
 1 -1  0  1 0         -4       0      0        0     0     0
-1  0  0  2 0          4       0      0        0     0     0
 0 -2  2  0 1         -6       0     -3        3     0     1
-1  0  1  2 1          0       0     -3        0     0    -2
-1  1  0  3 0         11       0      0        0     0     0
-1 -1  2  1 2          3       0      0       -1     0     0
 0 -1  2  0 0         11       0      0        0     0     0
-2  1  2  2 1         -3       0      0        2     0     0
 2 -2  2 -2 2         -1       0      3        3     0    -1
 1  1  0  1 1          4       0      0       -2     0     0
 1  0  1  0 1          0       0    -13        0     0   -11
 1  0  1  0 0          3       0      6        0     0     0
 0  2  0  2 0         -7       0      0        0     0     0
 2 -1  2 -2 1          5       0      0       -3     0     0
 0 -1  4 -2 1         -3       0      0        1     0     0
 0  0  4 -2 3          3       0      0        0     0     0
 0  1  4 -2 1          5       0      0       -3     0     0
 4  0  2 -4 2         -7       0      0        3     0     0
 2  2  2 -2 2          8       0      0       -3     0     0
 2  0  4 -4 2         -4       0      0        2     0     0
-1 -2  0  4 0         11       0      0        0     0     0
-1 -3  2  2 2         -3       0      0        1     0     0
-3  0  2  4 2          3       0      0       -1     0     0
-3  0  2 -2 1         -4       0      0        2     0     0
-1 -1  0 -2 1          8       0      0       -4     0     0
-3  0  0  0 2          3       0      0       -1     0     0
-3  0 -2  2 0         11       0      0        0     0     0
 0  1  0 -4 1         -6       0      0        3     0     0
-2  1  0 -2 1         -4       0      0        2     0     0
-4  0  0  0 1         -8       0      0        4     0     0
-1  0  0 -4 1         -7       0      0        3     0     0
-3  0  0 -2 1         -4       0      0        2     0     0
 0  0  0  3 2          3       0      0       -1     0     0
-1  1  0  4 1          6       0      0       -3     0     0
 1 -2  2  0 1         -6       0      0        3     0     0
 0  1  0  3 0          6       0      0        0     0     0
-1  0  2  2 3          6       0      0       -1     0     0
 0  0  2  2 2          5       0      0       -2     0     0
-2  0  2  2 2         -5       0      0        2     0     0
-1  1  2  2 0         -4       0      0        0     0     0
 3  0  0  0 2         -4       0      0        2     0     0
 2  1  0  1 0          4       0      0        0     0     0
 2 -1  2 -1 2          6       0      0       -3     0     0
 0  0  2  0 1         -4       0      0        2     0     0
 0  0  3  0 3          0       0    -26        0     0   -11
 0  0  3  0 2          0       0    -10        0     0    -5
-1  2  2  2 1          5       0      0       -3     0     0
-1  0  4  0 0        -13       0      0        0     0     0
 1  2  2  0 1          3       0      0       -2     0     0
 3  1  2 -2 1          4       0      0       -2     0     0
 1  1  4 -2 2          7       0      0       -3     0     0
-2 -1  0  6 0          4       0      0        0     0     0
 0 -2  0  4 0          5       0      0        0     0     0
-2  0  0  6 1         -3       0      0        2     0     0
-2 -2  2  4 2         -6       0      0        2     0     0
 0 -3  2  2 2         -5       0      0        2     0     0
 0  0  0  4 2         -7       0      0        3     0     0
-1 -1  2  3 2          5       0      0       -2     0     0
-2  0  2  4 0         13       0      0        0     0     0
 2 -1  0  2 1         -4       0      0        2     0     0
 1  0  0  3 0         -3       0      0        0     0     0
 0  1  0  4 1          5       0      0       -2     0     0
 0  1  0  4 0        -11       0      0        0     0     0
 1 -1  2  1 2          5       0      0       -2     0     0
 0  0  2  2 3          4       0      0        0     0     0
 1  0  2  2 2          4       0      0       -2     0     0
-1  0  2  2 2         -4       0      0        2     0     0
-2  0  4  2 1          6       0      0       -3     0     0
 2  1  0  2 1          3       0      0       -2     0     0
 2  1  0  2 0        -12       0      0        0     0     0
 2 -1  2  0 0          4       0      0        0     0     0
 1  0  2  1 0         -3       0      0        0     0     0
 0  1  2  2 0         -4       0      0        0     0     0
 2  0  2  0 3          3       0      0        0     0     0
 3  0  2  0 2          3       0      0       -1     0     0
 1  0  2  0 2         -3       0      0        1     0     0
 1  0  3  0 3          0       0     -5        0     0    -2
 1  1  2  1 1         -7       0      0        4     0     0
 0  2  2  2 2          6       0      0       -3     0     0
 2  1  2  0 0         -3       0      0        0     0     0
 2  0  4 -2 1          5       0      0       -3     0     0
 4  1  2 -2 2          3       0      0       -1     0     0
-1 -1  0  6 0          3       0      0        0     0     0
-3 -1  2  6 2         -3       0      0        1     0     0
-1  0  0  6 1         -5       0      0        3     0     0
-3  0  2  6 1         -3       0      0        2     0     0
 1 -1  0  4 1         -3       0      0        2     0     0
 1 -1  0  4 0         12       0      0        0     0     0
-2  0  2  5 2          3       0      0       -1     0     0
 1 -2  2  2 1         -4       0      0        2     0     0
 3 -1  0  2 0          4       0      0        0     0     0
 1 -1  2  2 0          6       0      0        0     0     0
 0  0  2  3 1          5       0      0       -3     0     0
-1  1  2  4 1          4       0      0       -2     0     0
 0  1  2  3 2         -6       0      0        3     0     0
-1  0  4  2 1          4       0      0       -2     0     0
 2  0  2  1 1          6       0      0       -3     0     0
 5  0  0  0 0          6       0      0        0     0     0
 2  1  2  1 2         -6       0      0        3     0     0
 1  0  4  0 1          3       0      0       -2     0     0
 3  1  2  0 1          7       0      0       -4     0     0
 3  0  4 -2 2          4       0      0       -2     0     0
-2 -1  2  6 2         -5       0      0        2     0     0
 0  0  0  6 0          5       0      0        0     0     0
 0 -2  2  4 2         -6       0      0        3     0     0
-2  0  2  6 1         -6       0      0        3     0     0
 2  0  0  4 1         -4       0      0        2     0     0
 2  0  0  4 0         10       0      0        0     0     0
 2 -2  2  2 2         -4       0      0        2     0     0
 0  0  2  4 0          7       0      0        0     0     0
 1  0  2  3 2          7       0      0       -3     0     0
 4  0  0  2 0          4       0      0        0     0     0
 2  0  2  2 0         11       0      0        0     0     0
 0  0  4  2 2          5       0      0       -2     0     0
 4 -1  2  0 2         -6       0      0        2     0     0
 3  0  2  1 2          4       0      0       -2     0     0
 2  1  2  2 1          3       0      0       -2     0     0
 4  1  2  0 2          5       0      0       -2     0     0
-1 -1  2  6 2         -4       0      0        2     0     0
-1  0  2  6 1         -4       0      0        2     0     0
 1 -1  2  4 1         -3       0      0        2     0     0
 1  1  2  4 2          4       0      0       -2     0     0
 3  1  2  2 2          3       0      0       -1     0     0
 5  0  2  0 1         -3       0      0        1     0     0
 2 -1  2  4 2         -3       0      0        1     0     0
 2  0  2  4 1         -3       0      0        2     0     0
"""

# Planetary columns: multipliers of l, F, D, Omega, L_Mercury, L_Venus, L_Earth, L_Mars, L_Jupiter,
# L_Saturn, L_Uranus, L_Neptune, p_A; then longitude sin, cos; obliquity sin, cos.
_PLANETARY_ROWS = """
 0  0  0 0  0   0   8 -16  4  5  0 0 0  1440    0     0    0
 0  0  0 0  0   0  -8  16 -4 -5  0 0 2    56 -117   -42  -40
 0  0  0 0  0   0   8 -16  4  5  0 0 2   125  -43     0  -54
 0  0  0 0  0   0   0   0  0  0 -1 2 2     0    5     0    0
 0  0  0 0  0   0  -4   8 -1 -5  0 0 2     3   -7    -3    0
 0  0  0 0  0   0   4  -8  3  0  0 0 1     3    0     0   -2
 0  1 -1 1  0   0   3  -8  3  0  0 0 0  -114    0     0   61
-1  0  0 0  0  10  -3   0  0  0  0 0 0  -219   89     0    0
 0  0  0 0  0   0   0   0 -2  6 -3 0 2    -3    0     0    0
 0  0  0 0  0   0   4  -8  3  0  0 0 0  -462 1604     0    0
 0  1 -1 1  0   0  -5   8 -3  0  0 0 0    99    0     0  -53
 0  0  0 0  0   0  -4   8 -3  0  0 0 1    -3    0     0    2
 0  0  0 0  0   0   4  -8  1  5  0 0 2     0    6     2    0
 0  0  0 0  0  -5   6   4  0  0  0 0 2     3    0     0    0
 0  0  0 0  0   0   0   0  2 -5  0 0 2   -12    0     0    0
 0  0  0 0  0   0   0   0  2 -5  0 0 1    14 -218   117    8
 0  1 -1 1  0   0  -1   0  2 -5  0 0 0    31 -481  -257  -17
 0  0  0 0  0   0   0   0  2 -5  0 0 0  -491  128     0    0
 0  1 -1 1  0   0  -1   0 -2  5  0 0 0 -3084 5123  2735 1647
 0  0  0 0  0   0   0   0 -2  5  0 0 1 -1444 2409 -1286 -771
 0  0  0 0  0   0   0   0 -2  5  0 0 2    11  -24   -11   -9
 2 -1 -1 0  0   0   3  -7  0  0  0 0 0    26   -9     0    0
 1  0 -2 0  0  19 -21   3  0  0  0 0 0   103  -60     0    0
 0  1 -1 1  0   2  -4   0 -3  0  0 0 0     0  -13    -7    0
 1  0 -1 1  0   0  -1   0  2  0  0 0 0   -26  -29   -16   14
 0  1 -1 1  0   0  -1   0 -4 10  0 0 0     9  -27   -14   -5
-2  0  2 1  0   0   2   0  0 -5  0 0 0    12    0     0   -6
 0  0  0 0  0   3  -7   4  0  0  0 0 0    -7    0     0    0
 0 -1  1 0  0   0   1   0  1 -1  0 0 0     0   24     0    0
-2  0  2 1  0   0   2   0 -2  0  0 0 0   284    0     0 -151
-1  0  0 0  0  18 -16   0  0  0  0 0 0   226  101     0    0
-2  1  1 2  0   0   1   0 -2  0  0 0 0     0   -8    -2    0
-1  1 -1 1  0  18 -17   0  0  0  0 0 0     0   -6    -3    0
-1  0  1 1  0   0   2  -2  0  0  0 0 0     5    0     0   -3
 0  0  0 0  0  -8  13   0  0  0  0 0 2   -41  175    76   17
 0  2 -2 2  0  -8  11   0  0  0  0 0 0     0   15     6    0
 0  0  0 0  0  -8  13   0  0  0  0 0 1   425  212  -133  269
 0  1 -1 1  0  -8  12   0  0  0  0 0 0  1200  598   319 -641
 0  0  0 0  0   8 -13   0  0  0  0 0 0   235  334     0    0
 0  1 -1 1  0   8 -14   0  0  0  0 0 0    11  -12    -7   -6
 0  0  0 0  0   8 -13   0  0  0  0 0 1     5   -6     3    3
-2  0  2 1  0   0   2   0 -4  5  0 0 0    -5    0     0    3
-2  0  2 2  0   3  -3   0  0  0  0 0 0     6    0     0   -3
-2  0  2 0  0   0   2   0 -3  1  0 0 0    15    0     0    0
 0  0  0 1  0   3  -5   0  2  0  0 0 0    13    0     0   -7
-2  0  2 0  0   0   2   0 -4  3  0 0 0    -6   -9     0    0
 0 -1  1 0  0   0   0   2  0  0  0 0 0   266  -78     0    0
 0  0  0 1  0   0  -1   2  0  0  0 0 0  -460 -435  -232  246
 0  1 -1 2  0   0  -2   2  0  0  0 0 0     0   15     7    0
-1  1  0 1  0   3  -5   0  0  0  0 0 0    -3    0     0    2
-1  0  1 0  0   3  -4   0  0  0  0 0 0     0  131     0    0
-2  0  2 0  0   0   2   0 -2 -2  0 0 0     4    0     0    0
-2  2  0 2  0   0  -5   9  0  0  0 0 0     0    3     0    0
 0  1 -1 1  0   0  -1   0  0  0 -1 0 0     0    4     2    0
 0  0  0 0  0   0   0   0  0  0  1 0 0     0    3     0    0
 0  1 -1 1  0   0  -1   0  0  0  0 2 0   -17  -19   -10    9
 0  0  0 0  0   0   0   0  0  0  0 2 1    -9  -11     6   -5
 0  0  0 0  0   0   0   0  0  0  0 2 2    -6    0     0    3
-1  0  1 0  0   0   3  -4  0  0  0 0 0   -16    8     0    0
 0 -1  1 0  0   0   1   0  0  2  0 0 0     0    3     0    0
 0  1 -1 2  0   0  -1   0  0  2  0 0 0    11   24    11   -5
 0  0  0 1  0   0  -9  17  0  0  0 0 0    -3   -4    -2    1
 0  0  0 2  0  -3   5   0  0  0  0 0 0     3    0     0   -1
 0  1 -1 1  0   0  -1   0 -1  2  0 0 0     0   -8    -4    0
 0  0  0 0  0   0   0   0  1 -2  0 0 0     0    3     0    0
 1  0 -2 0  0  17 -16   0 -2  0  0 0 0     0    5     0    0
 0  1 -1 1  0   0  -1   0  1 -3  0 0 0     0    3     2    0
-2  0  2 1  0   0   5  -6  0  0  0 0 0    -6    4     2    3
 0 -2  2 0  0   0   9 -13  0  0  0 0 0    -3   -5     0    0
 0  1 -1 2  0   0  -1   0  0  1  0 0 0    -5    0     0    2
 0  0  0 1  0   0   0   0  0  1  0 0 0     4   24    13   -2
 0 -1  1 0  0   0   1   0  0  1  0 0 0   -42   20     0    0
 0 -2  2 0  0   5  -6   0  0  0  0 0 0   -10  233     0    0
 0 -1  1 1  0   5  -7   0  0  0  0 0 0    -3    0     0    1
-2  0  2 0  0   6  -8   0  0  0  0 0 0    78  -18     0    0
 2  1 -3 1  0  -6   7   0  0  0  0 0 0     0    3     1    0
 0  0  0 2  0   0   0   0  1  0  0 0 0     0   -3    -1    0
 0 -1  1 1  0   0   1   0  1  0  0 0 0     0   -4    -2    1
 0  1 -1 1  0   0  -1   0  0  0  2 0 0     0   -8    -4   -1
 0  0  0 0  0   0   0   0  0  0  2 0 1     0   -5     3    0
 0  0  0 0  0   0   0   0  0  0  2 0 2    -7    0     0    3
 0  0  0 0  0   0  -8  15  0  0  0 0 2   -14    8     3    6
 0  0  0 0  0   0  -8  15  0  0  0 0 1     0    8    -4    0
 0  1 -1 1  0   0  -9  15  0  0  0 0 0     0   19    10    0
 0  0  0 0  0   0   8 -15  0  0  0 0 0    45  -22     0    0
 1 -1 -1 0  0   0   8 -15  0  0  0 0 0    -3    0     0    0
 2  0 -2 0  0   2  -5   0  0  0  0 0 0     0   -3     0    0
-2  0  2 0  0   0   2   0 -5  5  0 0 0     0    3     0    0
 2  0 -2 1  0   0  -6   8  0  0  0 0 0     3    5     3   -2
 2  0 -2 1  0   0  -2   0  3  0  0 0 0    89  -16    -9  -48
-2  1  1 0  0   0   1   0 -3  0  0 0 0     0    3     0    0
-2  1  1 1  0   0   1   0 -3  0  0 0 0    -3    7     4    2
-2  0  2 0  0   0   2   0 -3  0  0 0 0  -349  -62     0    0
-2  0  2 0  0   0   6  -8  0  0  0 0 0   -15   22     0    0
-2  0  2 0  0   0   2   0 -1 -5  0 0 0    -3    0     0    0
-1  0  1 0  0   0   1   0 -1  0  0 0 0   -53    0     0    0
-1  1  1 1  0 -20  20   0  0  0  0 0 0     5    0     0   -3
 1  0 -2 0  0  20 -21   0  0  0  0 0 0     0   -8     0    0
 0  0  0 1  0   0   8 -15  0  0  0 0 0    15   -7    -4   -8
 0  2 -2 1  0   0 -10  15  0  0  0 0 0    -3    0     0    1
 0 -1  1 0  0   0   1   0  1  0  0 0 0   -21  -78     0    0
 0  0  0 1  0   0   0   0  1  0  0 0 0    20  -70   -37  -11
 0  1 -1 2  0   0  -1   0  1  0  0 0 0     0    6     3    0
 0  1 -1 1  0   0  -1   0 -2  4  0 0 0     5    3     2   -2
 2  0 -2 1  0  -6   8   0  0  0  0 0 0   -17   -4    -2    9
 0 -2  2 1  0   5  -6   0  0  0  0 0 0     0    6     3    0
 0  0  0 0  0   0   0   0  0 -1  0 0 1    32   15    -8   17
 0  1 -1 1  0   0  -1   0  0 -1  0 0 0   174   84    45  -93
 0  0  0 0  0   0   0   0  0  1  0 0 0    11   56     0    0
 0  1 -1 1  0   0  -1   0  0  1  0 0 0   -66  -12    -6   35
 0  0  0 0  0   0   0   0  0  1  0 0 1    47    8     4  -25
 0  0  0 0  0   0   0   0  0  1  0 0 2     0    8     4    0
 0  2 -2 1  0   0  -9  13  0  0  0 0 0    10  -22   -12   -5
 0  0  0 1  0   0   7 -13  0  0  0 0 0    -3    0     0    2
-2  0  2 0  0   0   5  -6  0  0  0 0 0   -24   12     0    0
 0  0  0 0  0   0   9 -17  0  0  0 0 0     5   -6     0    0
 0  0  0 0  0   0  -9  17  0  0  0 0 2     3    0     0   -2
 1  0 -1 1  0   0  -3   4  0  0  0 0 0     4    3     1   -2
 1  0 -1 1  0  -3   4   0  0  0  0 0 0     0   29    15    0
 0  0  0 2  0   0  -1   2  0  0  0 0 0    -5   -4    -2    2
 0 -1  1 1  0   0   0   2  0  0  0 0 0     8   -3    -1   -5
 0 -2  2 0  1   0  -2   0  0  0  0 0 0     0   -3     0    0
 0  0  0 0  0   3  -5   0  2  0  0 0 0    10    0     0    0
-2  0  2 1  0   0   2   0 -3  1  0 0 0     3    0     0   -2
-2  0  2 1  0   3  -3   0  0  0  0 0 0    -5    0     0    3
 0  0  0 1  0   8 -13   0  0  0  0 0 0    46   66    35  -25
 0 -1  1 0  0   8 -12   0  0  0  0 0 0   -14    7     0    0
 0  2 -2 1  0  -8  11   0  0  0  0 0 0     0    3     2    0
-1  0  1 0  0   0   2  -2  0  0  0 0 0    -5    0     0    0
-1  0  0 1  0  18 -16   0  0  0  0 0 0   -68  -34   -18   36
 0  1 -1 1  0   0  -1   0 -1  1  0 0 0     0   14     7    0
 0  0  0 1  0   3  -7   4  0  0  0 0 0    10   -6    -3   -5
-2  1  1 1  0   0  -3   7  0  0  0 0 0    -5   -4    -2    3
 0  1 -1 2  0   0  -1   0 -2  5  0 0 0    -3    5     2    1
 0  0  0 1  0   0   0   0 -2  5  0 0 0    76   17     9  -41
 0  0  0 1  0   0  -4   8 -3  0  0 0 0    84  298   159  -45
 1  0  0 1  0 -10   3   0  0  0  0 0 0     3    0     0   -1
 0  2 -2 1  0   0  -2   0  0  0  0 0 0    -3    0     0    2
-1  0  0 1  0  10  -3   0  0  0  0 0 0    -3    0     0    1
 0  0  0 1  0   0   4  -8  3  0  0 0 0   -82  292   156   44
 0  0  0 1  0   0   0   0  2 -5  0 0 0   -73   17     9   39
 0 -1  1 0  0   0   1   0  2 -5  0 0 0    -9  -16     0    0
 2 -1 -1 1  0   0   3  -7  0  0  0 0 0     3    0    -1   -2
-2  0  2 0  0   0   2   0  0 -5  0 0 0    -3    0     0    0
 0  0  0 1  0  -3   7  -4  0  0  0 0 0    -9   -5    -3    5
-2  0  2 0  0   0   2   0 -2  0  0 0 0  -439    0     0    0
 1  0  0 1  0 -18  16   0  0  0  0 0 0    57  -28   -15  -30
-2  1  1 1  0   0   1   0 -2  0  0 0 0     0   -6    -3    0
 0  1 -1 2  0  -8  12   0  0  0  0 0 0    -4    0     0    2
 0  0  0 1  0  -8  13   0  0  0  0 0 0   -40   57    30   21
 0  0  0 0  0   0   1  -2  0  0  0 0 1    23    7     3  -13
 0  1 -1 1  0   0   0  -2  0  0  0 0 0   273   80    43 -146
 0  0  0 0  0   0   1  -2  0  0  0 0 0  -449  430     0    0
 0  1 -1 1  0   0  -2   2  0  0  0 0 0    -8  -47   -25    4
 0  0  0 0  0   0  -1   2  0  0  0 0 1     6   47    25   -3
-1  0  1 1  0   3  -4   0  0  0  0 0 0     0   23    13    0
-1  0  1 1  0   0   3  -4  0  0  0 0 0    -3    0     0    2
 0  1 -1 1  0   0  -1   0  0 -2  0 0 0     3   -4    -2   -2
 0  1 -1 1  0   0  -1   0  0  2  0 0 0   -48 -110   -59   26
 0  0  0 0  0   0   0   0  0  2  0 0 1    51  114    61  -27
 0  0  0 0  0   0   0   0  0  2  0 0 2  -133    0     0   57
 0  1 -1 0  0   3  -6   0  0  0  0 0 0     0    4     0    0
 0  0  0 1  0  -3   5   0  0  0  0 0 0   -21   -6    -3   11
 0  1 -1 2  0  -3   4   0  0  0  0 0 0     0   -3    -1    0
 0  0  0 1  0   0  -2   4  0  0  0 0 0   -11  -21   -11    6
 0  2 -2 1  0  -5   6   0  0  0  0 0 0   -18 -436  -233    9
 0 -1  1 0  0   5  -7   0  0  0  0 0 0    35   -7     0    0
 0  0  0 1  0   5  -8   0  0  0  0 0 0     0    5     3    0
-2  0  2 1  0   6  -8   0  0  0  0 0 0    11   -3    -1   -6
 0  0  0 1  0   0  -8  15  0  0  0 0 0    -5   -3    -1    3
-2  0  2 1  0   0   2   0 -3  0  0 0 0   -53   -9    -5   28
-2  0  2 1  0   0   6  -8  0  0  0 0 0     0    3     2    1
 1  0 -1 1  0   0  -1   0  1  0  0 0 0     4    0     0   -2
 0  0  0 0  0   0   0   0  3 -5  0 0 0     0   -4     0    0
 0  1 -1 1  0   0  -1   0 -1  0  0 0 0   -50  194   103   27
 0  0  0 0  0   0   0   0 -1  0  0 0 1   -13   52    28    7
 0  0  0 0  0   0   0   0  1  0  0 0 0   -91  248     0    0
 0  0  0 0  0   0   0   0  1  0  0 0 1     6   49    26   -3
 0  1 -1 1  0   0  -1   0  1  0  0 0 0    -6  -47   -25    3
 0  0  0 0  0   0   0   0  1  0  0 0 1     0    5     3    0
 0  0  0 0  0   0   0   0  1  0  0 0 2    52   23    10  -23
 0  1 -1 2  0   0  -1   0  0 -1  0 0 0    -3    0     0    1
 0  0  0 1  0   0   0   0  0 -1  0 0 0     0    5     3    0
 0 -1  1 0  0   0   1   0  0 -1  0 0 0    -4    0     0    0
 0  0  0 0  0   0  -7  13  0  0  0 0 2    -4    8     3    2
 0  0  0 0  0   0   7 -13  0  0  0 0 0    10    0     0    0
 2  0 -2 1  0   0  -5   6  0  0  0 0 0     3    0     0   -2
 0  2 -2 1  0   0  -8  11  0  0  0 0 0     0    8     4    0
 0  2 -2 1 -1   0   2   0  0  0  0 0 0     0    8     4    1
-2  0  2 0  0   0   4  -4  0  0  0 0 0    -4    0     0    0
 0  0  0 0  0   0   0   0  2 -2  0 0 0    -4    0     0    0
 0  1 -1 1  0   0  -1   0  0  3  0 0 0    -8    4     2    4
 0  0  0 0  0   0   0   0  0  3  0 0 1     8   -4    -2   -4
 0  0  0 0  0   0   0   0  0  3  0 0 2     0   15     7    0
-2  0  2 0  0   3  -3   0  0  0  0 0 0  -138    0     0    0
 0  0  0 2  0   0  -4   8 -3  0  0 0 0     0   -7    -3    0
 0  0  0 2  0   0   4  -8  3  0  0 0 0     0   -7    -3    0
 2  0 -2 1  0   0  -2   0  2  0  0 0 0    54    0     0  -29
 0  1 -1 2  0   0  -1   0  2  0  0 0 0     0   10     4    0
 0  1 -1 2  0   0   0  -2  0  0  0 0 0    -7    0     0    3
 0  0  0 1  0   0   1  -2  0  0  0 0 0   -37   35    19   20
 0 -1  1 0  0   0   2  -2  0  0  0 0 0     0    4     0    0
 0 -1  1 0  0   0   1   0  0 -2  0 0 0    -4    9     0    0
 0  2 -2 1  0   0  -2   0  0  2  0 0 0     8    0     0   -4
 0  1 -1 1  0   3  -6   0  0  0  0 0 0    -9  -14    -8    5
 0  0  0 0  0   3  -5   0  0  0  0 0 1    -3   -9    -5    3
 0  0  0 0  0   3  -5   0  0  0  0 0 0  -145   47     0    0
 0  1 -1 1  0  -3   4   0  0  0  0 0 0   -10   40    21    5
 0  0  0 0  0  -3   5   0  0  0  0 0 1    11  -49   -26   -7
 0  0  0 0  0  -3   5   0  0  0  0 0 2 -2150    0     0  932
 0  2 -2 2  0  -3   3   0  0  0  0 0 0   -12    0     0    5
 0  0  0 0  0  -3   5   0  0  0  0 0 2    85    0     0  -37
 0  0  0 0  0   0   2  -4  0  0  0 0 1     4    0     0   -2
 0  1 -1 1  0   0   1  -4  0  0  0 0 0     3    0     0   -2
 0  0  0 0  0   0   2  -4  0  0  0 0 0   -86  153     0    0
 0  0  0 0  0   0  -2   4  0  0  0 0 1    -6    9     5    3
 0  1 -1 1  0   0  -3   4  0  0  0 0 0     9  -13    -7   -5
 0  0  0 0  0   0  -2   4  0  0  0 0 1    -8   12     6    4
 0  0  0 0  0   0  -2   4  0  0  0 0 2   -51    0     0   22
 0  0  0 0  0  -5   8   0  0  0  0 0 2   -11 -268  -116    5
 0  2 -2 2  0  -5   6   0  0  0  0 0 0     0   12     5    0
 0  0  0 0  0  -5   8   0  0  0  0 0 2     0    7     3    0
 0  0  0 0  0  -5   8   0  0  0  0 0 1    31    6     3  -17
 0  1 -1 1  0  -5   7   0  0  0  0 0 0   140   27    14  -75
 0  0  0 0  0  -5   8   0  0  0  0 0 1    57   11     6  -30
 0  0  0 0  0   5  -8   0  0  0  0 0 0   -14  -39     0    0
 0  1 -1 2  0   0  -1   0 -1  0  0 0 0     0   -6    -2    0
 0  0  0 1  0   0   0   0 -1  0  0 0 0     4   15     8   -2
 0 -1  1 0  0   0   1   0 -1  0  0 0 0     0    4     0    0
 0  2 -2 1  0   0  -2   0  1  0  0 0 0    -3    0     0    1
 0  0  0 0  0   0  -6  11  0  0  0 0 2     0   11     5    0
 0  0  0 0  0   0   6 -11  0  0  0 0 0     9    6     0    0
 0  0  0 0 -1   0   4   0  0  0  0 0 2    -4   10     4    2
 0  0  0 0  1   0  -4   0  0  0  0 0 0     5    3     0    0
 2  0 -2 1  0  -3   3   0  0  0  0 0 0    16    0     0   -9
-2  0  2 0  0   0   2   0  0 -2  0 0 0    -3    0     0    0
 0  2 -2 1  0   0  -7   9  0  0  0 0 0     0    3     2   -1
 0  0  0 0  0   0   0   0  4 -5  0 0 2     7    0     0   -3
 0  0  0 0  0   0   0   0  2  0  0 0 0   -25   22     0    0
 0  0  0 0  0   0   0   0  2  0  0 0 1    42  223   119  -22
 0  1 -1 1  0   0  -1   0  2  0  0 0 0   -27 -143   -77   14
 0  0  0 0  0   0   0   0  2  0  0 0 1     9   49    26   -5
 0  0  0 0  0   0   0   0  2  0  0 0 2 -1166    0     0  505
 0  2 -2 2  0   0  -2   0  2  0  0 0 0    -5    0     0    2
 0  0  0 0  0   0   0   0  0  5  0 0 2    -6    0     0    3
 0  0  0 1  0   3  -5   0  0  0  0 0 0    -8    0     1    4
 0 -1  1 0  0   3  -4   0  0  0  0 0 0     0   -4     0    0
 0  2 -2 1  0  -3   3   0  0  0  0 0 0   117    0     0  -63
 0  0  0 1  0   0   2  -4  0  0  0 0 0    -4    8     4    2
 0  2 -2 1  0   0  -4   4  0  0  0 0 0     3    0     0   -2
 0  1 -1 2  0  -5   7   0  0  0  0 0 0    -5    0     0    2
 0  0  0 0  0   0   3  -6  0  0  0 0 0     0   31     0    0
 0  0  0 0  0   0  -3   6  0  0  0 0 1    -5    0     1    3
 0  1 -1 1  0   0  -4   6  0  0  0 0 0     4    0     0   -2
 0  0  0 0  0   0  -3   6  0  0  0 0 1    -4    0     0    2
 0  0  0 0  0   0  -3   6  0  0  0 0 2   -24  -13    -6   10
 0 -1  1 0  0   2  -2   0  0  0  0 0 0     3    0     0    0
 0  0  0 1  0   2  -3   0  0  0  0 0 0     0  -32   -17    0
 0  0  0 0  0   0  -5   9  0  0  0 0 2     8   12     5   -3
 0  0  0 0  0   0  -5   9  0  0  0 0 1     3    0     0   -1
 0  0  0 0  0   0   5  -9  0  0  0 0 0     7   13     0    0
 0 -1  1 0  0   0   1   0 -2  0  0 0 0    -3   16     0    0
 0  2 -2 1  0   0  -2   0  2  0  0 0 0    50    0     0  -27
-2  1  1 1  0   0   1   0  0  0  0 0 0     0   -5    -3    0
 0 -2  2 0  0   3  -3   0  0  0  0 0 0    13    0     0    0
 0  0  0 0  0  -6  10   0  0  0  0 0 1     0    5     3    1
 0  0  0 0  0  -6  10   0  0  0  0 0 2    24    5     2  -11
 0  0  0 0  0  -2   3   0  0  0  0 0 2     5  -11    -5   -2
 0  0  0 0  0  -2   3   0  0  0  0 0 1    30   -3    -2  -16
 0  1 -1 1  0  -2   2   0  0  0  0 0 0    18    0     0   -9
 0  0  0 0  0   2  -3   0  0  0  0 0 0     8  614     0    0
 0  0  0 0  0   2  -3   0  0  0  0 0 1     3   -3    -1   -2
 0  0  0 0  0   0   0   0  3  0  0 0 1     6   17     9   -3
 0  1 -1 1  0   0  -1   0  3  0  0 0 0    -3   -9    -5    2
 0  0  0 0  0   0   0   0  3  0  0 0 1     0    6     3   -1
 0  0  0 0  0   0   0   0  3  0  0 0 2  -127   21     9   55
 0  0  0 0  0   0   4  -8  0  0  0 0 0     3    5     0    0
 0  0  0 0  0   0  -4   8  0  0  0 0 2    -6  -10    -4    3
 0 -2  2 0  0   0   2   0 -2  0  0 0 0     5    0     0    0
 0  0  0 0  0   0  -4   7  0  0  0 0 2    16    9     4   -7
 0  0  0 0  0   0  -4   7  0  0  0 0 1     3    0     0   -2
 0  0  0 0  0   0   4  -7  0  0  0 0 0     0   22     0    0
 0  0  0 1  0  -2   3   0  0  0  0 0 0     0   19    10    0
 0  2 -2 1  0   0  -2   0  3  0  0 0 0     7    0     0   -4
 0  0  0 0  0   0  -5  10  0  0  0 0 2     0   -5    -2    0
 0  0  0 1  0  -1   2   0  0  0  0 0 0     0    3     1    0
 0  0  0 0  0   0   0   0  4  0  0 0 2    -9    3     1    4
 0  0  0 0  0   0  -3   5  0  0  0 0 2    17    0     0   -7
 0  0  0 0  0   0  -3   5  0  0  0 0 1     0   -3    -2   -1
 0  0  0 0  0   0   3  -5  0  0  0 0 0   -20   34     0    0
 0  0  0 0  0   1  -2   0  0  0  0 0 1   -10    0     1    5
 0  1 -1 1  0   1  -3   0  0  0  0 0 0    -4    0     0    2
 0  0  0 0  0   1  -2   0  0  0  0 0 0    22  -87     0    0
 0  0  0 0  0  -1   2   0  0  0  0 0 1    -4    0     0    2
 0  0  0 0  0  -1   2   0  0  0  0 0 2    -3   -6    -2    1
 0  0  0 0  0  -7  11   0  0  0  0 0 2   -16   -3    -1    7
 0  0  0 0  0  -7  11   0  0  0  0 0 1     0   -3    -2    0
 0 -2  2 0  0   4  -4   0  0  0  0 0 0     4    0     0    0
 0  0  0 0  0   0   2  -3  0  0  0 0 0   -68   39     0    0
 0  2 -2 1  0  -4   4   0  0  0  0 0 0    27    0     0  -14
 0 -1  1 0  0   4  -5   0  0  0  0 0 0     0   -4     0    0
 0  0  0 0  0   0   1  -1  0  0  0 0 0   -25    0     0    0
 0  0  0 0  0  -4   7   0  0  0  0 0 1   -12   -3    -2    6
 0  1 -1 1  0  -4   6   0  0  0  0 0 0     3    0     0   -1
 0  0  0 0  0  -4   7   0  0  0  0 0 2     3   66    29   -1
 0  0  0 0  0  -4   6   0  0  0  0 0 2   490    0     0 -213
 0  0  0 0  0  -4   6   0  0  0  0 0 1   -22   93    49   12
 0  1 -1 1  0  -4   5   0  0  0  0 0 0    -7   28    15    4
 0  0  0 0  0  -4   6   0  0  0  0 0 1    -3   13     7    2
 0  0  0 0  0   4  -6   0  0  0  0 0 0   -46   14     0    0
-2  0  2 0  0   2  -2   0  0  0  0 0 0    -5    0     0    0
 0  0  0 0  0   0   0   1  0  0  0 0 0     2    1     0    0
 0 -1  1 0  0   1   0   0  0  0  0 0 0     0   -3     0    0
 0  0  0 1  0   1  -1   0  0  0  0 0 0   -28    0     0   15
 0  0  0 0  0   0  -1   0  5  0  0 0 2     5    0     0   -2
 0  0  0 0  0   0   1  -3  0  0  0 0 0     0    3     0    0
 0  0  0 0  0   0  -1   3  0  0  0 0 2   -11    0     0    5
 0  0  0 0  0   0  -7  12  0  0  0 0 2     0    3     1    0
 0  0  0 0  0  -1   1   0  0  0  0 0 2    -3    0     0    1
 0  0  0 0  0  -1   1   0  0  0  0 0 1    25  106    57  -13
 0  1 -1 1  0  -1   0   0  0  0  0 0 0     5   21    11   -3
 0  0  0 0  0   1  -1   0  0  0  0 0 0  1485    0     0    0
 0  0  0 0  0   1  -1   0  0  0  0 0 1    -7  -32   -17    4
 0  1 -1 1  0   1  -2   0  0  0  0 0 0     0    5     3    0
 0  0  0 0  0   0  -2   5  0  0  0 0 2    -6   -3    -2    3
 0  0  0 0  0   0  -1   0  4  0  0 0 2    30   -6    -2  -13
 0  0  0 0  0   0   1   0 -4  0  0 0 0    -4    4     0    0
 0  0  0 1  0  -1   1   0  0  0  0 0 0   -19    0     0   10
 0  0  0 0  0   0  -6  10  0  0  0 0 2     0    4     2   -1
 0  0  0 0  0   0  -6  10  0  0  0 0 0     0    3     0    0
 0  2 -2 1  0   0  -3   0  3  0  0 0 0     4    0     0   -2
 0  0  0 0  0   0  -3   7  0  0  0 0 2     0   -3    -1    0
-2  0  2 0  0   4  -4   0  0  0  0 0 0    -3    0     0    0
 0  0  0 0  0   0  -5   8  0  0  0 0 2     5    3     1   -2
 0  0  0 0  0   0   5  -8  0  0  0 0 0     0   11     0    0
 0  0  0 0  0   0  -1   0  3  0  0 0 2   118    0     0  -52
 0  0  0 0  0   0  -1   0  3  0  0 0 1     0   -5    -3    0
 0  0  0 0  0   0   1   0 -3  0  0 0 0   -28   36     0    0
 0  0  0 0  0   2  -4   0  0  0  0 0 0     5   -5     0    0
 0  0  0 0  0  -2   4   0  0  0  0 0 1    14  -59   -31   -8
 0  1 -1 1  0  -2   3   0  0  0  0 0 0     0    9     5    1
 0  0  0 0  0  -2   4   0  0  0  0 0 2  -458    0     0  198
 0  0  0 0  0  -6   9   0  0  0  0 0 2     0  -45   -20    0
 0  0  0 0  0  -6   9   0  0  0  0 0 1     9    0     0   -5
 0  0  0 0  0   6  -9   0  0  0  0 0 0     0   -3     0    0
 0  0  0 1  0   0   1   0 -2  0  0 0 0     0   -4    -2   -1
 0  2 -2 1  0  -2   2   0  0  0  0 0 0    11    0     0   -6
 0  0  0 0  0   0  -4   6  0  0  0 0 2     6    0     0   -2
 0  0  0 0  0   0   4  -6  0  0  0 0 0   -16   23     0    0
 0  0  0 1  0   3  -4   0  0  0  0 0 0     0   -4    -2    0
 0  0  0 0  0   0  -1   0  2  0  0 0 2    -5    0     0    2
 0  0  0 0  0   0   1   0 -2  0  0 0 0  -166  269     0    0
 0  0  0 1  0   0   1   0 -1  0  0 0 0    15    0     0   -8
 0  0  0 0  0  -5   9   0  0  0  0 0 2    10    0     0   -4
 0  0  0 0  0   0   3  -4  0  0  0 0 0   -78   45     0    0
 0  0  0 0  0  -3   4   0  0  0  0 0 2     0   -5    -2    0
 0  0  0 0  0  -3   4   0  0  0  0 0 1     7    0     0   -4
 0  0  0 0  0   3  -4   0  0  0  0 0 0    -5  328     0    0
 0  0  0 0  0   3  -4   0  0  0  0 0 1     3    0     0   -2
 0  0  0 1  0   0   2  -2  0  0  0 0 0     5    0     0   -2
 0  0  0 1  0   0  -1   0  2  0  0 0 0     0    3     1    0
 0  0  0 0  0   0   1   0  0 -3  0 0 0    -3    0     0    0
 0  0  0 0  0   0   1   0  1 -5  0 0 0    -3    0     0    0
 0  0  0 0  0   0  -1   0  1  0  0 0 1     0   -4    -2    0
 0  0  0 0  0   0   1   0 -1  0  0 0 0 -1223  -26     0    0
 0  0  0 0  0   0   1   0 -1  0  0 0 1     0    7     3    0
 0  0  0 0  0   0   1   0 -3  5  0 0 0     3    0     0    0
 0  0  0 1  0  -3   4   0  0  0  0 0 0     0    3     2    0
 0  0  0 0  0   0   1   0  0 -2  0 0 0    -6   20     0    0
 0  0  0 0  0   0   2  -2  0  0  0 0 0  -368    0     0    0
 0  0  0 0  0   0   1   0  0 -1  0 0 0   -75    0     0    0
 0  0  0 1  0   0  -1   0  1  0  0 0 0    11    0     0   -6
 0  0  0 1  0   0  -2   2  0  0  0 0 0     3    0     0   -2
 0  0  0 0  0  -8  14   0  0  0  0 0 2    -3    0     0    1
 0  0  0 0  0   0   1   0  2 -5  0 0 0   -13  -30     0    0
 0  0  0 0  0   0   5  -8  3  0  0 0 0    21    3     0    0
 0  0  0 0  0   0   5  -8  3  0  0 0 2    -3    0     0    1
 0  0  0 0  0   0  -1   0  0  0  0 0 1    -4    0     0    2
 0  0  0 0  0   0   1   0  0  0  0 0 0     8  -27     0    0
 0  0  0 0  0   0   3  -8  3  0  0 0 0   -19  -11     0    0
 0  0  0 0  0   0  -3   8 -3  0  0 0 2    -4    0     0    2
 0  0  0 0  0   0   1   0 -2  5  0 0 2     0    5     2    0
 0  0  0 0  0  -8  12   0  0  0  0 0 2    -6    0     0    2
 0  0  0 0  0  -8  12   0  0  0  0 0 0    -8    0     0    0
 0  0  0 0  0   0   1   0  1 -2  0 0 0    -1    0     0    0
 0  0  0 0  0   0   1   0  0  1  0 0 2   -14    0     0    6
 0  0  0 0  0   0   0   2  0  0  0 0 0     6    0     0    0
 0  0  0 0  0   0   0   2  0  0  0 0 2   -74    0     0   32
 0  0  0 0  0   0   1   0  0  2  0 0 2     0   -3    -1    0
 0  2 -2 1  0  -5   5   0  0  0  0 0 0     4    0     0   -2
 0  0  0 0  0   0   1   0  1  0  0 0 0     8   11     0    0
 0  0  0 0  0   0   1   0  1  0  0 0 1     0    3     2    0
 0  0  0 0  0   0   1   0  1  0  0 0 2  -262    0     0  114
 0  0  0 0  0   3  -6   0  0  0  0 0 0     0   -4     0    0
 0  0  0 0  0  -3   6   0  0  0  0 0 1    -7    0     0    4
 0  0  0 0  0  -3   6   0  0  0  0 0 2     0  -27   -12    0
 0  0  0 0  0   0  -1   4  0  0  0 0 2   -19   -8    -4    8
 0  0  0 0  0  -5   7   0  0  0  0 0 2   202    0     0  -87
 0  0  0 0  0  -5   7   0  0  0  0 0 1    -8   35    19    5
 0  1 -1 1  0  -5   6   0  0  0  0 0 0     0    4     2    0
 0  0  0 0  0   5  -7   0  0  0  0 0 0    16   -5     0    0
 0  2 -2 1  0   0  -1   0  1  0  0 0 0     5    0     0   -3
 0  0  0 0  0   0  -1   0  1  0  0 0 0     0   -3     0    0
 0  0  0 0 -1   0   3   0  0  0  0 0 2     1    0     0    0
 0  0  0 0  0   0   1   0  2  0  0 0 2   -35  -48   -21   15
 0  0  0 0  0   0  -2   6  0  0  0 0 2    -3   -5    -2    1
 0  0  0 1  0   2  -2   0  0  0  0 0 0     6    0     0   -3
 0  0  0 0  0   0  -6   9  0  0  0 0 2     3    0     0   -1
 0  0  0 0  0   0   6  -9  0  0  0 0 0     0   -5     0    0
 0  0  0 0  0  -2   2   0  0  0  0 0 1    12   55    29   -6
 0  1 -1 1  0  -2   1   0  0  0  0 0 0     0    5     3    0
 0  0  0 0  0   2  -2   0  0  0  0 0 0  -598    0     0    0
 0  0  0 0  0   2  -2   0  0  0  0 0 1    -3  -13    -7    1
 0  0  0 0  0   0   1   0  3  0  0 0 2    -5   -7    -3    2
 0  0  0 0  0   0  -5   7  0  0  0 0 2     3    0     0   -1
 0  0  0 0  0   0   5  -7  0  0  0 0 0     5   -7     0    0
 0  0  0 1  0  -2   2   0  0  0  0 0 0     4    0     0   -2
 0  0  0 0  0   0   4  -5  0  0  0 0 0    16   -6     0    0
 0  0  0 0  0   1  -3   0  0  0  0 0 0     8   -3     0    0
 0  0  0 0  0  -1   3   0  0  0  0 0 1     8  -31   -16   -4
 0  1 -1 1  0  -1   2   0  0  0  0 0 0     0    3     1    0
 0  0  0 0  0  -1   3   0  0  0  0 0 2   113    0     0  -49
 0  0  0 0  0  -7  10   0  0  0  0 0 2     0  -24   -10    0
 0  0  0 0  0  -7  10   0  0  0  0 0 1     4    0     0   -2
 0  0  0 0  0   0   3  -3  0  0  0 0 0    27    0     0    0
 0  0  0 0  0  -4   8   0  0  0  0 0 2    -3    0     0    1
 0  0  0 0  0  -4   5   0  0  0  0 0 2     0   -4    -2    0
 0  0  0 0  0  -4   5   0  0  0  0 0 1     5    0     0   -2
 0  0  0 0  0   4  -5   0  0  0  0 0 0     0   -3     0    0
 0  0  0 0  0   0   1   1  0  0  0 0 2   -13    0     0    6
 0  0  0 0  0   0  -2   0  5  0  0 0 2     5    0     0   -2
 0  0  0 0  0   0   0   3  0  0  0 0 2   -18  -10    -4    8
 0  0  0 0  0   1   0   0  0  0  0 0 0    -4  -28     0    0
 0  0  0 0  0   1   0   0  0  0  0 0 2    -5    6     3    2
 0  0  0 0  0  -9  13   0  0  0  0 0 2    -3    0     0    1
 0  0  0 0  0   0  -1   5  0  0  0 0 2    -5   -9    -4    2
 0  0  0 0  0   0  -2   0  4  0  0 0 2    17    0     0   -7
 0  0  0 0  0   0   2   0 -4  0  0 0 0    11    4     0    0
 0  0  0 0  0   0  -2   7  0  0  0 0 2     0   -6    -2    0
 0  0  0 0  0   0   2   0 -3  0  0 0 0    83   15     0    0
 0  0  0 0  0  -2   5   0  0  0  0 0 1    -4    0     0    2
 0  0  0 0  0  -2   5   0  0  0  0 0 2     0 -114   -49    0
 0  0  0 0  0  -6   8   0  0  0  0 0 2   117    0     0  -51
 0  0  0 0  0  -6   8   0  0  0  0 0 1    -5   19    10    2
 0  0  0 0  0   6  -8   0  0  0  0 0 0    -3    0     0    0
 0  0  0 1  0   0   2   0 -2  0  0 0 0    -3    0     0    2
 0  0  0 0  0   0  -3   9  0  0  0 0 2     0   -3    -1    0
 0  0  0 0  0   0   5  -6  0  0  0 0 0     3    0     0    0
 0  0  0 0  0   0   5  -6  0  0  0 0 2     0   -6    -2    0
 0  0  0 0  0   0   2   0 -2  0  0 0 0   393    3     0    0
 0  0  0 0  0   0   2   0 -2  0  0 0 1    -4   21    11    2
 0  0  0 0  0   0   2   0 -2  0  0 0 2    -6    0    -1    3
 0  0  0 0  0  -5  10   0  0  0  0 0 2    -3    8     4    1
 0  0  0 0  0   0   4  -4  0  0  0 0 0     8    0     0    0
 0  0  0 0  0   0   4  -4  0  0  0 0 2    18  -29   -13   -8
 0  0  0 0  0  -3   3   0  0  0  0 0 1     8   34    18   -4
 0  0  0 0  0   3  -3   0  0  0  0 0 0    89    0     0    0
 0  0  0 0  0   3  -3   0  0  0  0 0 1     3   12     6   -1
 0  0  0 0  0   3  -3   0  0  0  0 0 2    54  -15    -7  -24
 0  0  0 0  0   0   2   0  0 -3  0 0 0     0    3     0    0
 0  0  0 0  0   0  -5  13  0  0  0 0 2     3    0     0   -1
 0  0  0 0  0   0   2   0 -1  0  0 0 0     0   35     0    0
 0  0  0 0  0   0   2   0 -1  0  0 0 2  -154  -30   -13   67
 0  0  0 0  0   0   2   0  0 -2  0 0 0    15    0     0    0
 0  0  0 0  0   0   2   0  0 -2  0 0 1     0    4     2    0
 0  0  0 0  0   0   3  -2  0  0  0 0 0     0    9     0    0
 0  0  0 0  0   0   3  -2  0  0  0 0 2    80  -71   -31  -35
 0  0  0 0  0   0   2   0  0 -1  0 0 2     0  -20    -9    0
 0  0  0 0  0   0  -6  15  0  0  0 0 2    11    5     2   -5
 0  0  0 0  0  -8  15   0  0  0  0 0 2    61  -96   -42  -27
 0  0  0 0  0  -3   9  -4  0  0  0 0 2    14    9     4   -6
 0  0  0 0  0   0   2   0  2 -5  0 0 2   -11   -6    -3    5
 0  0  0 0  0   0  -2   8 -1 -5  0 0 2     0   -3    -1    0
 0  0  0 0  0   0   6  -8  3  0  0 0 2   123 -415  -180  -53
 0  0  0 0  0   0   2   0  0  0  0 0 0     0    0     0  -35
 0  0  0 0  0   0   2   0  0  0  0 0 0    -5    0     0    0
 0  0  0 0  0   0   2   0  0  0  0 0 1     7  -32   -17   -4
 0  1 -1 1  0   0   1   0  0  0  0 0 0     0   -9    -5    0
 0  0  0 0  0   0   2   0  0  0  0 0 1     0   -4     2    0
 0  0  0 0  0   0   2   0  0  0  0 0 2   -89    0     0   38
 0  0  0 0  0   0  -6  16 -4 -5  0 0 2     0  -86   -19   -6
 0  0  0 0  0   0  -2   8 -3  0  0 0 2     0    0   -19    6
 0  0  0 0  0   0  -2   8 -3  0  0 0 2  -123 -416  -180   53
 0  0  0 0  0   0   6  -8  1  5  0 0 2     0   -3    -1    0
 0  0  0 0  0   0   2   0 -2  5  0 0 2    12   -6    -3   -5
 0  0  0 0  0   3  -5   4  0  0  0 0 2   -13    9     4    6
 0  0  0 0  0  -8  11   0  0  0  0 0 2     0  -15    -7    0
 0  0  0 0  0  -8  11   0  0  0  0 0 1     3    0     0   -1
 0  0  0 0  0  -8  11   0  0  0  0 0 2   -62  -97   -42   27
 0  0  0 0  0   0  11   0  0  0  0 0 2   -11    5     2    5
 0  0  0 0  0   0   2   0  0  1  0 0 2     0  -19    -8    0
 0  0  0 0  0   3  -3   0  2  0  0 0 2    -3    0     0    1
 0  2 -2 1  0   0   4  -8  3  0  0 0 0     0    4     2    0
 0  1 -1 0  0   0   1   0  0  0  0 0 0     0    3     0    0
 0  2 -2 1  0   0  -4   8 -3  0  0 0 0     0    4     2    0
 0  0  0 0  0   0   1   2  0  0  0 0 2   -85  -70   -31   37
 0  0  0 0  0   0   2   0  1  0  0 0 2   163  -12    -5  -72
 0  0  0 0  0  -3   7   0  0  0  0 0 2   -63  -16    -7   28
 0  0  0 0  0   0   0   4  0  0  0 0 2   -21  -32   -14    9
 0  0  0 0  0  -5   6   0  0  0  0 0 2     0   -3    -1    0
 0  0  0 0  0  -5   6   0  0  0  0 0 1     3    0     0   -2
 0  0  0 0  0   5  -6   0  0  0  0 0 0     0    8     0    0
 0  0  0 0  0   5  -6   0  0  0  0 0 2     3   10     4   -1
 0  0  0 0  0   0   2   0  2  0  0 0 2     3    0     0   -1
 0  0  0 0  0   0  -1   6  0  0  0 0 2     0   -7    -3    0
 0  0  0 0  0   0   7  -9  0  0  0 0 2     0   -4    -2    0
 0  0  0 0  0   2  -1   0  0  0  0 0 0     6   19     0    0
 0  0  0 0  0   2  -1   0  0  0  0 0 2     5 -173   -75   -2
 0  0  0 0  0   0   6  -7  0  0  0 0 2     0   -7    -3    0
 0  0  0 0  0   0   5  -5  0  0  0 0 2     7  -12    -5   -3
 0  0  0 0  0  -1   4   0  0  0  0 0 1    -3    0     0    2
 0  0  0 0  0  -1   4   0  0  0  0 0 2     3   -4    -2   -1
 0  0  0 0  0  -7   9   0  0  0  0 0 2    74    0     0  -32
 0  0  0 0  0  -7   9   0  0  0  0 0 1    -3   12     6    2
 0  0  0 0  0   0   4  -3  0  0  0 0 2    26  -14    -6  -11
 0  0  0 0  0   0   3  -1  0  0  0 0 2    19    0     0   -8
 0  0  0 0  0  -4   4   0  0  0  0 0 1     6   24    13   -3
 0  0  0 0  0   4  -4   0  0  0  0 0 0    83    0     0    0
 0  0  0 0  0   4  -4   0  0  0  0 0 1     0  -10    -5    0
 0  0  0 0  0   4  -4   0  0  0  0 0 2    11   -3    -1   -5
 0  0  0 0  0   0   2   1  0  0  0 0 2     3    0     1   -1
 0  0  0 0  0   0  -3   0  5  0  0 0 2     3    0     0   -1
 0  0  0 0  0   1   1   0  0  0  0 0 0    -4    0     0    0
 0  0  0 0  0   1   1   0  0  0  0 0 1     5  -23   -12   -3
 0  0  0 0  0   1   1   0  0  0  0 0 2  -339    0     0  147
 0  0  0 0  0  -9  12   0  0  0  0 0 2     0  -10    -5    0
 0  0  0 0  0   0   3   0 -4  0  0 0 0     5    0     0    0
 0  2 -2 1  0   1  -1   0  0  0  0 0 0     3    0     0   -1
 0  0  0 0  0   0   7  -8  0  0  0 0 2     0   -4    -2    0
 0  0  0 0  0   0   3   0 -3  0  0 0 0    18   -3     0    0
 0  0  0 0  0   0   3   0 -3  0  0 0 2     9  -11    -5   -4
 0  0  0 0  0  -2   6   0  0  0  0 0 2    -8    0     0    4
 0  0  0 0  0  -6   7   0  0  0  0 0 1     3    0     0   -1
 0  0  0 0  0   6  -7   0  0  0  0 0 0     0    9     0    0
 0  0  0 0  0   0   6  -6  0  0  0 0 2     6   -9    -4   -2
 0  0  0 0  0   0   3   0 -2  0  0 0 0    -4  -12     0    0
 0  0  0 0  0   0   3   0 -2  0  0 0 2    67  -91   -39  -29
 0  0  0 0  0   0   5  -4  0  0  0 0 2    30  -18    -8  -13
 0  0  0 0  0   3  -2   0  0  0  0 0 0     0    0     0    0
 0  0  0 0  0   3  -2   0  0  0  0 0 2     0 -114   -50    0
 0  0  0 0  0   0   3   0 -1  0  0 0 2     0    0     0   23
 0  0  0 0  0   0   3   0 -1  0  0 0 2   517   16     7 -224
 0  0  0 0  0   0   3   0  0 -2  0 0 2     0   -7    -3    0
 0  0  0 0  0   0   4  -2  0  0  0 0 2   143   -3    -1  -62
 0  0  0 0  0   0   3   0  0 -1  0 0 2    29    0     0  -13
 0  2 -2 1  0   0   1   0 -1  0  0 0 0    -4    0     0    2
 0  0  0 0  0  -8  16   0  0  0  0 0 2    -6    0     0    3
 0  0  0 0  0   0   3   0  2 -5  0 0 2     5   12     5   -2
 0  0  0 0  0   0   7  -8  3  0  0 0 2   -25    0     0   11
 0  0  0 0  0   0  -5  16 -4 -5  0 0 2    -3    0     0    1
 0  0  0 0  0   0   3   0  0  0  0 0 2     0    4     2    0
 0  0  0 0  0   0  -1   8 -3  0  0 0 2   -22   12     5   10
 0  0  0 0  0  -8  10   0  0  0  0 0 2    50    0     0  -22
 0  0  0 0  0  -8  10   0  0  0  0 0 1     0    7     4    0
 0  0  0 0  0  -8  10   0  0  0  0 0 2     0    3     1    0
 0  0  0 0  0   0   2   2  0  0  0 0 2    -4    4     2    2
 0  0  0 0  0   0   3   0  1  0  0 0 2    -5  -11    -5    2
 0  0  0 0  0  -3   8   0  0  0  0 0 2     0    4     2    0
 0  0  0 0  0  -5   5   0  0  0  0 0 1     4   17     9   -2
 0  0  0 0  0   5  -5   0  0  0  0 0 0    59    0     0    0
 0  0  0 0  0   5  -5   0  0  0  0 0 1     0   -4    -2    0
 0  0  0 0  0   5  -5   0  0  0  0 0 2    -8    0     0    4
 0  0  0 0  0   2   0   0  0  0  0 0 0    -3    0     0    0
 0  0  0 0  0   2   0   0  0  0  0 0 1     4  -15    -8   -2
 0  0  0 0  0   2   0   0  0  0  0 0 2   370   -8     0 -160
 0  0  0 0  0   0   7  -7  0  0  0 0 2     0    0    -3    0
 0  0  0 0  0   0   7  -7  0  0  0 0 2     0    3     1    0
 0  0  0 0  0   0   6  -5  0  0  0 0 2    -6    3     1    3
 0  0  0 0  0   7  -8   0  0  0  0 0 0     0    6     0    0
 0  0  0 0  0   0   5  -3  0  0  0 0 2   -10    0     0    4
 0  0  0 0  0   4  -3   0  0  0  0 0 2     0    9     4    0
 0  0  0 0  0   1   2   0  0  0  0 0 2     4   17     7   -2
 0  0  0 0  0  -9  11   0  0  0  0 0 2    34    0     0  -15
 0  0  0 0  0  -9  11   0  0  0  0 0 1     0    5     3    0
 0  0  0 0  0   0   4   0 -4  0  0 0 2    -5    0     0    2
 0  0  0 0  0   0   4   0 -3  0  0 0 2   -37   -7    -3   16
 0  0  0 0  0  -6   6   0  0  0  0 0 1     3   13     7   -2
 0  0  0 0  0   6  -6   0  0  0  0 0 0    40    0     0    0
 0  0  0 0  0   6  -6   0  0  0  0 0 1     0   -3    -2    0
 0  0  0 0  0   0   4   0 -2  0  0 0 2  -184   -3    -1   80
 0  0  0 0  0   0   6  -4  0  0  0 0 2    -3    0     0    1
 0  0  0 0  0   3  -1   0  0  0  0 0 0    -3    0     0    0
 0  0  0 0  0   3  -1   0  0  0  0 0 1     0  -10    -6   -1
 0  0  0 0  0   3  -1   0  0  0  0 0 2    31   -6     0  -13
 0  0  0 0  0   0   4   0 -1  0  0 0 2    -3  -32   -14    1
 0  0  0 0  0   0   4   0  0 -2  0 0 2    -7    0     0    3
 0  0  0 0  0   0   5  -2  0  0  0 0 2     0   -8    -4    0
 0  0  0 0  0   0   4   0  0  0  0 0 0     3   -4     0    0
 0  0  0 0  0   8  -9   0  0  0  0 0 0     0    4     0    0
 0  0  0 0  0   5  -4   0  0  0  0 0 2     0    3     1    0
 0  0  0 0  0   2   1   0  0  0  0 0 2    19  -23   -10    2
 0  0  0 0  0   2   1   0  0  0  0 0 1     0    0     0  -10
 0  0  0 0  0   2   1   0  0  0  0 0 1     0    3     2    0
 0  0  0 0  0  -7   7   0  0  0  0 0 1     0    9     5   -1
 0  0  0 0  0   7  -7   0  0  0  0 0 0    28    0     0    0
 0  0  0 0  0   4  -2   0  0  0  0 0 1     0   -7    -4    0
 0  0  0 0  0   4  -2   0  0  0  0 0 2     8   -4     0   -4
 0  0  0 0  0   4  -2   0  0  0  0 0 0     0    0    -2    0
 0  0  0 0  0   4  -2   0  0  0  0 0 0     0    3     0    0
 0  0  0 0  0   0   5   0 -4  0  0 0 2    -3    0     0    1
 0  0  0 0  0   0   5   0 -3  0  0 0 2    -9    0     1    4
 0  0  0 0  0   0   5   0 -2  0  0 0 2     3   12     5   -1
 0  0  0 0  0   3   0   0  0  0  0 0 2    17   -3    -1    0
 0  0  0 0  0  -8   8   0  0  0  0 0 1     0    7     4    0
 0  0  0 0  0   8  -8   0  0  0  0 0 0    19    0     0    0
 0  0  0 0  0   5  -3   0  0  0  0 0 1     0   -5    -3    0
 0  0  0 0  0   5  -3   0  0  0  0 0 2    14   -3     0   -1
 0  0  0 0  0  -9   9   0  0  0  0 0 1     0    0    -1    0
 0  0  0 0  0  -9   9   0  0  0  0 0 1     0    0     0   -5
 0  0  0 0  0  -9   9   0  0  0  0 0 1     0    5     3    0
 0  0  0 0  0   9  -9   0  0  0  0 0 0    13    0     0    0
 0  0  0 0  0   6  -4   0  0  0  0 0 1     0   -3    -2    0
 0  0  0 0  0   0   6   0  0  0  0 0 2     2    9     4    3
 0  0  0 0  0   0   6   0  0  0  0 0 0     0    0     0   -4
 0  0  0 0  0   0   6   0  0  0  0 0 0     8    0     0    0
 0  0  0 0  0   0   6   0  0  0  0 0 1     0    4     2    0
 0  0  0 0  0   0   6   0  0  0  0 0 2     6    0     0   -3
 0  0  0 0  0   0   6   0  0  0  0 0 0     6    0     0    0
 0  0  0 0  0   0   6   0  0  0  0 0 1     0    3     1    0
 0  0  0 0  0   0   6   0  0  0  0 0 2     5    0     0   -2
 0  0  0 0  0   0   0   0  0  0  0 0 2     3    0     0   -1
 1  0 -2 0  0   0   2   0 -2  0  0 0 0    -3    0     0    0
 1  0 -2 0  0   2  -2   0  0  0  0 0 0     6    0     0    0
 1  0 -2 0  0   0   1   0 -1  0  0 0 0     7    0     0    0
 1  0 -2 0  0   1  -1   0  0  0  0 0 0    -4    0     0    0
-1  0  0 0  0   3  -3   0  0  0  0 0 0     4    0     0    0
-1  0  0 0  0   0   2   0 -2  0  0 0 0     6    0     0    0
-1  0  2 0  0   0   4  -8  3  0  0 0 0     0   -4     0    0
 1  0 -2 0  0   0   4  -8  3  0  0 0 0     0   -4     0    0
-2  0  2 0  0   0   4  -8  3  0  0 0 0     5    0     0    0
-1  0  0 0  0   0   2   0 -3  0  0 0 0    -3    0     0    0
-1  0  0 0  0   0   1   0 -1  0  0 0 0     4    0     0    0
-1  0  0 0  0   1  -1   0  0  0  0 0 0    -5    0     0    0
-1  0  2 0  0   2  -2   0  0  0  0 0 0     4    0     0    0
 1 -1  1 0  0   0   1   0  0  0  0 0 0     0    3     0    0
-1  0  2 0  0   0   2   0 -3  0  0 0 0    13    0     0    0
-2  0  0 0  0   0   2   0 -3  0  0 0 0    21   11     0    0
 1  0  0 0  0   0   4  -8  3  0  0 0 0     0   -5     0    0
-1  1 -1 1  0   0  -1   0  0  0  0 0 0     0   -5    -2    0
 1  1 -1 1  0   0  -1   0  0  0  0 0 0     0    5     3    0
-1  0  0 0  0   0   4  -8  3  0  0 0 0     0   -5     0    0
-1  0  2 1  0   0   2   0 -2  0  0 0 0    -3    0     0    2
 0  0  0 0  0   0   2   0 -2  0  0 0 0    20   10     0    0
-1  0  2 0  0   0   2   0 -2  0  0 0 0   -34    0     0    0
-1  0  2 0  0   3  -3   0  0  0  0 0 0   -19    0     0    0
 1  0 -2 1  0   0  -2   0  2  0  0 0 0     3    0     0   -2
 1  2 -2 2  0  -3   3   0  0  0  0 0 0    -3    0     0    1
 1  2 -2 2  0   0  -2   0  2  0  0 0 0    -6    0     0    3
 1  0  0 0  0   1  -1   0  0  0  0 0 0    -4    0     0    0
 1  0  0 0  0   0   1   0 -1  0  0 0 0     3    0     0    0
 0  0 -2 0  0   2  -2   0  0  0  0 0 0     3    0     0    0
 0  0 -2 0  0   0   1   0 -1  0  0 0 0     4    0     0    0
 0  2  0 2  0  -2   2   0  0  0  0 0 0     3    0     0   -1
 0  2  0 2  0   0  -1   0  1  0  0 0 0     6    0     0   -3
 0  2  0 2  0  -1   1   0  0  0  0 0 0    -8    0     0    3
 0  2  0 2  0  -2   3   0  0  0  0 0 0     0    3     1    0
 0  0  2 0  0   0   2   0 -2  0  0 0 0    -3    0     0    0
 0  1  1 2  0   0   1   0  0  0  0 0 0     0   -3    -2    0
 1  2  0 2  0   0   1   0  0  0  0 0 0   126  -63   -27  -55
-1  2  0 2  0  10  -3   0  0  0  0 0 0    -5    0     1    2
 0  1  1 1  0   0   1   0  0  0  0 0 0    -3   28    15    2
 1  2  0 2  0   0   1   0  0  0  0 0 0     5    0     1   -2
 0  2  0 2  0   0   4  -8  3  0  0 0 0     0    9     4    1
 0  2  0 2  0   0  -4   8 -3  0  0 0 0     0    9     4   -1
-1  2  0 2  0   0  -4   8 -3  0  0 0 0  -126  -63   -27   55
 2  2 -2 2  0   0  -2   0  3  0  0 0 0     3    0     0   -1
 1  2  0 1  0   0  -2   0  3  0  0 0 0    21  -11    -6  -11
 0  1  1 0  0   0   1   0  0  0  0 0 0     0   -4     0    0
-1  2  0 1  0   0   1   0  0  0  0 0 0   -21  -11    -6   11
-2  2  2 2  0   0   2   0 -2  0  0 0 0    -3    0     0    1
 0  2  0 2  0   2  -3   0  0  0  0 0 0     0    3     1    0
 0  2  0 2  0   1  -1   0  0  0  0 0 0     8    0     0   -4
 0  2  0 2  0   0   1   0 -1  0  0 0 0    -6    0     0    3
 0  2  0 2  0   2  -2   0  0  0  0 0 0    -3    0     0    1
-1  2  2 2  0   0  -1   0  1  0  0 0 0     3    0     0   -1
 1  2  0 2  0  -1   1   0  0  0  0 0 0    -3    0     0    1
-1  2  2 2  0   0   2   0 -3  0  0 0 0    -5    0     0    2
 2  2  0 2  0   0   2   0 -3  0  0 0 0    24  -12    -5  -11
 1  2  0 2  0   0  -4   8 -3  0  0 0 0     0    3     1    0
 1  2  0 2  0   0   4  -8  3  0  0 0 0     0    3     1    0
 1  1  1 1  0   0   1   0  0  0  0 0 0     0    3     2    0
 0  2  0 2  0   0   1   0  0  0  0 0 0   -24  -12    -5   10
 2  2  0 1  0   0   1   0  0  0  0 0 0     4    0    -1   -2
-1  2  2 2  0   0   2   0 -2  0  0 0 0    13    0     0   -6
-1  2  2 2  0   3  -3   0  0  0  0 0 0     7    0     0   -3
 1  2  0 2  0   1  -1   0  0  0  0 0 0     3    0     0   -1
 0  2  2 2  0   0   2   0 -2  0  0 0 0     3    0     0   -1
"""
