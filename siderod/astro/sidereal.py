"""Earth rotation angle and sidereal time: ERA, GMST, GAST, local sidereal time and its inverse.

Methods (each named beside its formula below):

* ERA: IAU 2000 Earth rotation angle (IERS Conventions 2010 eq. 5.15), in the operation order of ERFA
  ``era00`` so that two-part UT1 dates keep full precision;
* GMST: IAU 2006 (Capitaine et al. 2005; ERFA ``gmst06``): ERA plus a polynomial in TT centuries;
* equation of the equinoxes: nutation in longitude times cos(IAU 2006 mean obliquity), as ERFA ``ee00``
  forms it, plus the IERS 2003 complementary terms (ERFA ``eect00``). The nutation is IAU 2000A with the
  IAU 2006 adjustments (ERFA ``nut06a``, :mod:`siderod.astro.nutation2000a`) by default; the 77-term
  IAU 2000B series (ERFA ``nut00b``) stays available with ``nutation="2000B"``;
* GAST: IAU 2006 GMST + equation of the equinoxes from IAU 2000A nutation (IAU 2006-adjusted) +
  complementary terms. This equinox-based sum and ERFA's CIO-based ``gst06a`` (ERA minus the equation
  of the origins) are two forms of the same IAU 2006/2000A model: over 1900-2100 they agree within
  4.4e-12 rad, 0.06 microseconds of time (measured with pyerfa 2.0.1.5 at 150 001 epochs).

Why 2000A by default: siderod promises LAST within 0.1 ms of time of ``gst06a`` over 1900-2100, and
IAU 2000B's dpsi departs from 2000A by up to 2.8 mas there (0.17 ms of time in the equation of the
equinoxes). The full series costs about 50 microseconds per instant, so callers with many instants use
:class:`FastSidereal`, which evaluates it at a few nodes per day of the window. ``nutation="2000B"``
(about 5 microseconds per instant, within 0.2 ms of time of ``gst06a``) suits places where a
millisecond of time does not matter.

LMST/LAST here are GMST/GAST plus the east-positive longitude. They leave out the TIO locator s'
(-47 microarcsec per century) and polar motion (up to ~0.5 arcsec of longitude), as most clocks do.
"""

import math
from typing import Literal

import numpy as np

from .constants import ARCSEC_RAD, DAY_SECONDS, J2000_JD, SIDEREAL_PER_SOLAR, TAU
from .leapseconds import BUILTIN_LEAP_TABLE, LeapTable
from .nutation2000a import _iers2003_arguments_rad, nutation_2000a_rad
from .precession import julian_centuries_tt, mean_obliquity_rad, nutation_rad
from .timescales import Instants, instants_from_unix

__all__ = [
    "FastSidereal",
    "NutationModel",
    "SIDEREAL_DAY_SECONDS",
    "complementary_terms_rad",
    "equation_of_equinoxes_rad",
    "era_rad",
    "find_lst_unix",
    "gast_rad",
    "gmst_rad",
    "last_hours",
    "lmst_hours",
    "sidereal_to_solar_seconds",
    "solar_to_sidereal_seconds",
]

#: Names of the nutation models the apparent sidereal time can use: "2000A" (IAU 2000A with the IAU 2006
#: adjustments, ERFA ``nut06a``; the default) or "2000B" (77-term IAU 2000B, ERFA ``nut00b``).
NutationModel = Literal["2000A", "2000B"]

#: Mean sidereal day in mean solar (UT1) seconds: 86400 / 1.00273790935 = 86164.0905 s,
#: i.e. 23 h 56 m 4.0905 s (common practice).
SIDEREAL_DAY_SECONDS = DAY_SECONDS / SIDEREAL_PER_SOLAR


def era_rad(ut1_whole, ut1_frac):
    """Earth rotation angle, IAU 2000 (IERS Conventions 2010 eq. 5.15; ERFA ``era00`` operation order).

    ERA = 2 pi (0.7790572732640 + 1.00273781191135448 Du), Du = JD(UT1) - 2451545.0, evaluated as
    2 pi (frac(d1) + frac(d2) + 0.7790572732640 + 0.00273781191135448 Du) so that the whole turns of
    the day count drop out exactly.

    Args:
        ut1_whole, ut1_frac: two-part Julian date (UT1), days, broadcastable shapes.

    Returns:
        radians in [0, 2 pi), broadcast shape.

    >>> round(float(era_rad(2400000.5, 54388.0)), 12)
    0.402283724003
    """
    a = np.asarray(ut1_whole, dtype=np.float64)
    b = np.asarray(ut1_frac, dtype=np.float64)
    a, b = np.broadcast_arrays(a, b)
    swap = a >= b  # ERFA puts the smaller part first
    d1 = np.where(swap, b, a)
    d2 = np.where(swap, a, b)
    t = d1 + (d2 - J2000_JD)
    f = np.fmod(d1, 1.0) + np.fmod(d2, 1.0)
    return _anp(TAU * (f + 0.7790572732640 + 0.00273781191135448 * t))


def gmst_rad(ut1_whole, ut1_frac, tt_whole, tt_frac):
    """Greenwich mean sidereal time, IAU 2006 (Capitaine et al. 2005; ERFA ``gmst06``).

    GMST = ERA(UT1) + (0.014506 + 4612.156534 t + 1.3915817 t^2 - 0.00000044 t^3 - 0.000029956 t^4
    - 0.0000000368 t^5) arcsec, t in Julian centuries of TT from J2000. Agrees with ``gmst06`` to
    about 1e-15 rad.

    Args:
        ut1_whole, ut1_frac: two-part Julian date (UT1), days.
        tt_whole, tt_frac: two-part Julian date (TT), days; all four broadcast together.

    Returns:
        radians in [0, 2 pi), broadcast shape.
    """
    t = julian_centuries_tt(tt_whole, tt_frac)
    poly = (0.014506 + (4612.156534 + (1.3915817 + (-0.00000044 + (-0.000029956 + (-0.0000000368)
            * t) * t) * t) * t) * t) * ARCSEC_RAD
    return _anp(era_rad(ut1_whole, ut1_frac) + poly)


def equation_of_equinoxes_rad(tt_whole, tt_frac, *, nutation: NutationModel = "2000A"):
    """Equation of the equinoxes: dpsi cos(eps_A) plus complementary terms (ERFA ``ee00`` form).

    dpsi is the nutation in longitude: IAU 2000A with the IAU 2006 adjustments (ERFA ``nut06a``) by
    default, or IAU 2000B (ERFA ``nut00b``); eps_A is the IAU 2006 mean obliquity (ERFA ``obl06``); the
    complementary terms are the IERS 2003 series (ERFA ``eect00``). Size up to about 1.1 s of time.
    With "2000A" it is within 4.4e-12 rad (0.06 microseconds of time) of ERFA ``ee06a`` over 1900-2100;
    with "2000B" within about 2.8 mas (0.17 ms of time).

    Args:
        tt_whole, tt_frac: two-part Julian date (TT), days, broadcastable shapes.
        nutation: "2000A" (default; about 50 microseconds per instant) or "2000B" (about 5).

    Returns:
        radians, broadcast shape.

    Raises:
        ValueError: ``nutation`` is not one of the two model names.
    """
    dpsi = _dpsi_rad(tt_whole, tt_frac, nutation)
    return (dpsi * np.cos(mean_obliquity_rad(tt_whole, tt_frac)) + complementary_terms_rad(tt_whole, tt_frac))


def complementary_terms_rad(tt_whole, tt_frac):
    """Complementary terms of the equation of the equinoxes, IERS Conventions 2003 (ERFA ``eect00``).

    33 terms of order t^0 and one of order t^1, microarcsec; about 2.6 mas at most.

    Args:
        tt_whole, tt_frac: two-part Julian date (TT), days, broadcastable shapes.

    Returns:
        radians, broadcast shape.
    """
    t = np.asarray(julian_centuries_tt(tt_whole, tt_frac))
    phase = _fundamental_arguments_2003(t) @ _EECT00_MULT.T     # (..., 34)
    terms = _EECT00_SIN * np.sin(phase) + _EECT00_COS * np.cos(phase)
    s0 = np.sum(terms[..., :-1], axis=-1)
    s1 = terms[..., -1]
    return ((s0 + s1 * t) * ARCSEC_RAD)[()]


def gast_rad(ut1_whole, ut1_frac, tt_whole, tt_frac, *, nutation: NutationModel = "2000A"):
    """Greenwich apparent sidereal time: IAU 2006 GMST + equation of the equinoxes.

    The equation of the equinoxes uses IAU 2000A nutation (IAU 2006-adjusted) plus the complementary
    terms; the result is within 0.06 microseconds of time of ERFA ``gst06a`` (IAU 2006/2000A, CIO
    based) over 1900-2100. With ``nutation="2000B"`` it is within 0.2 ms of time.

    Args:
        ut1_whole, ut1_frac: two-part Julian date (UT1), days.
        tt_whole, tt_frac: two-part Julian date (TT), days; all four broadcast together.
        nutation: "2000A" (default) or "2000B"; see :func:`equation_of_equinoxes_rad`.

    Returns:
        radians in [0, 2 pi), broadcast shape.

    Raises:
        ValueError: ``nutation`` is not one of the two model names.
    """
    ee = equation_of_equinoxes_rad(tt_whole, tt_frac, nutation=nutation)
    return _anp(gmst_rad(ut1_whole, ut1_frac, tt_whole, tt_frac) + ee)


def lmst_hours(instants: Instants, lon_deg):
    """Local mean sidereal time: IAU 2006 GMST + longitude.

    Args:
        instants: the instants (any shape).
        lon_deg: longitude in degrees, east positive; broadcast against ``instants.shape``.

    Returns:
        hours in [0, 24), broadcast shape.
    """
    gmst = gmst_rad(instants.ut1_whole, instants.ut1_frac, instants.tt_whole, instants.tt_frac)
    return _hours_24(gmst * _RAD_TO_HOURS + np.asarray(lon_deg, dtype=np.float64) / 15.0)


def last_hours(instants: Instants, lon_deg, *, nutation: NutationModel = "2000A"):
    """Local apparent sidereal time: GAST (:func:`gast_rad`) + longitude.

    Within 0.06 microseconds of time of ERFA ``gst06a`` + longitude over 1900-2100 (with
    ``nutation="2000B"``, within 0.2 ms). About 50 microseconds per instant: for many instants in one
    window, use :class:`FastSidereal`.

    Args:
        instants: the instants (any shape).
        lon_deg: longitude in degrees, east positive; broadcast against ``instants.shape``.
        nutation: "2000A" (default) or "2000B"; see :func:`equation_of_equinoxes_rad`.

    Returns:
        hours in [0, 24), broadcast shape.

    Raises:
        ValueError: ``nutation`` is not one of the two model names.
    """
    gast = gast_rad(instants.ut1_whole, instants.ut1_frac, instants.tt_whole, instants.tt_frac,
                    nutation=nutation)
    return _hours_24(gast * _RAD_TO_HOURS + np.asarray(lon_deg, dtype=np.float64) / 15.0)


class FastSidereal:
    """Sidereal time for many instants inside one time window, fast.

    Over each segment of at most one day, sidereal time in turns is a constant plus the ERA rate
    times the elapsed seconds plus a slowly varying remainder (precession and nutation). The remainder
    is fitted, per segment, by a cubic polynomial through 8 Chebyshev nodes where the exact model
    (:func:`gast_rad`, :func:`gmst_rad`) is evaluated, all segments in one call, so the full IAU 2000A
    series costs 9 evaluations per day of window (about 1 ms of build time a day). The largest nutation
    term it has to follow has a 13.66-day period, so the fit error stays below a microsecond of time
    (0.55 us at worst, measured), and LAST is within a microsecond of time of ERFA ``gst06a`` (within
    0.2 ms with ``nutation="2000B"``). DUT1 is one value for the window.

    Outside the window the polynomial of the nearest segment is extrapolated; accuracy then degrades
    (about 1 ms of time a day away), so build the window to cover the instants you ask about.

    Args:
        start_unix, end_unix: window, POSIX seconds (UTC), start < end.
        dut1_seconds: UT1 - UTC for the window, seconds.
        leap_table: TAI - UTC table.
        nutation: "2000A" (default) or "2000B", for LAST; see :func:`equation_of_equinoxes_rad`.

    Raises:
        ValueError: the window is empty or not finite, or ``nutation`` is not one of the two model names.
    """

    _SEGMENT_SECONDS = DAY_SECONDS
    _CHUNK = 32768  # elements per pass: keeps scratch arrays in cache (perf-baselines.md, lesson 4)

    def __init__(self, start_unix: float, end_unix: float, *, dut1_seconds: float = 0.0,
                 leap_table: LeapTable = BUILTIN_LEAP_TABLE, nutation: NutationModel = "2000A") -> None:
        start = float(start_unix)
        end = float(end_unix)
        if not (math.isfinite(start) and math.isfinite(end) and end > start):
            raise ValueError(f"FastSidereal needs finite start_unix < end_unix; "
                             f"got {start_unix!r}, {end_unix!r}")
        _check_nutation(nutation)
        self.start_unix = start
        self.end_unix = end
        self.dut1_seconds = float(dut1_seconds)
        self.leap_table = leap_table
        self.nutation = nutation
        n_seg = max(1, math.ceil((end - start) / self._SEGMENT_SECONDS))
        self._segment_seconds = (end - start) / n_seg
        self._apparent, self._mean = self._fit(n_seg)

    def last_hours(self, unix_seconds, lon_deg=0.0):
        """Local apparent sidereal time at the instants.

        Args:
            unix_seconds: POSIX seconds (UTC), any shape, inside the window.
            lon_deg: longitude, degrees east positive, broadcast against ``unix_seconds``.

        Returns:
            hours in [0, 24), broadcast shape.
        """
        return self._evaluate(self._apparent, unix_seconds, lon_deg)

    def lmst_hours(self, unix_seconds, lon_deg=0.0):
        """Local mean sidereal time at the instants (same arguments as :meth:`last_hours`)."""
        return self._evaluate(self._mean, unix_seconds, lon_deg)

    def _fit(self, n_seg: int) -> tuple[np.ndarray, np.ndarray]:
        """Per segment, for LAST and for LMST: cubic coefficients (highest power first), shape (n_seg, 4),
        turns vs seconds from segment start.

        All segments' nodes go through the exact model in one call, so the nutation series is evaluated
        once per window (as an (n_seg, 9) array of instants), not once per segment.
        """
        k = np.arange(8)
        cheb = 0.5 - 0.5 * np.cos((2 * k + 1) * math.pi / 16)   # Chebyshev nodes in (0, 1)
        seg = self._segment_seconds
        dt = cheb * seg
        seg_start = self.start_unix + np.arange(n_seg)[:, None] * seg
        inst = instants_from_unix(seg_start + np.concatenate(([0.0], dt)),   # (n_seg, 9)
                                  dut1_seconds=self.dut1_seconds, leap_table=self.leap_table)
        tt = (inst.tt_whole, inst.tt_frac)
        gmst = gmst_rad(inst.ut1_whole, inst.ut1_frac, *tt)
        # gast_rad's sum, sharing the GMST already computed.
        gast = _anp(gmst + equation_of_equinoxes_rad(*tt, nutation=self.nutation))
        fits = []
        for model in (gast, gmst):
            turns = model / TAU
            c0 = turns[:, 0]
            resid = turns[:, 1:] - (c0[:, None] + _ERA_TURNS_PER_SECOND * dt)
            resid -= np.floor(resid + 0.5)                       # unwrap to [-0.5, 0.5) turns
            c3, c2, c1, r0 = np.polyfit(dt, resid.T, 3)          # one cubic per segment (column)
            fits.append(np.stack([c3, c2, c1 + _ERA_TURNS_PER_SECOND, c0 + r0], axis=-1))
        return fits[0], fits[1]

    def _evaluate(self, coefs: np.ndarray, unix_seconds, lon_deg):
        unix = np.asarray(unix_seconds, dtype=np.float64)
        lon_turns = np.asarray(lon_deg, dtype=np.float64) / 360.0
        if lon_turns.ndim:
            unix, lon_turns = np.broadcast_arrays(unix, lon_turns)
        flat = unix.reshape(-1)
        out = np.empty(flat.shape)
        lon_flat = lon_turns.reshape(-1) if lon_turns.ndim else None
        seg = self._segment_seconds
        last_seg = coefs.shape[0] - 1
        buf = np.empty(min(flat.size, self._CHUNK))
        columns = [np.ascontiguousarray(coefs[:, j]) for j in range(4)]
        for lo in range(0, flat.size, self._CHUNK):
            hi = min(lo + self._CHUNK, flat.size)
            x = flat[lo:hi]
            o = out[lo:hi]
            dt = buf[: hi - lo]
            np.subtract(x, self.start_unix, out=dt)
            if last_seg == 0:
                c3, c2, c1, c0 = coefs[0]
                shift = c0 + (lon_turns if lon_flat is None else 0.0)
                np.multiply(dt, c3, out=o)
                o += c2
                o *= dt
                o += c1
                o *= dt
                o += shift
            else:
                idx = np.floor(dt / seg).astype(np.intp)
                np.clip(idx, 0, last_seg, out=idx)
                dt -= idx * seg
                np.multiply(dt, columns[0].take(idx), out=o)
                o += columns[1].take(idx)
                o *= dt
                o += columns[2].take(idx)
                o *= dt
                o += columns[3].take(idx)
                if lon_flat is None:
                    o += lon_turns
            if lon_flat is not None:
                o += lon_flat[lo:hi]
            # Wrap turns to [0, 1) with floor (np.mod costs as much as a sine), then to hours.
            np.floor(o, out=dt)
            o -= dt
            o *= 24.0
        out = out.reshape(unix.shape)
        out[out >= 24.0] = 0.0
        return out[()]


def find_lst_unix(lst_hours: float, lon_deg: float, start_unix: float, end_unix: float, *,
                  apparent: bool = True, dut1_seconds: float = 0.0,
                  leap_table: LeapTable = BUILTIN_LEAP_TABLE) -> np.ndarray:
    """UTC instants in [start, end) at which the local sidereal time equals ``lst_hours``.

    Sidereal time advances by one turn per 86164.09 s, so the answers are one sidereal day apart.
    Each is found from a first guess at the mean sidereal rate and refined by Newton steps on the
    exact model (:func:`last_hours` or :func:`lmst_hours`) to well under a microsecond.

    Args:
        lst_hours: the sidereal time sought, hours (any real; wrapped to [0, 24)).
        lon_deg: longitude, degrees east positive (scalar).
        start_unix, end_unix: window, POSIX seconds (UTC).
        apparent: use LAST (True) or LMST (False).
        dut1_seconds: UT1 - UTC, seconds.
        leap_table: TAI - UTC table.

    Returns:
        1-D float array of POSIX seconds, increasing (empty if none).
    """
    if np.ndim(lst_hours) or np.ndim(lon_deg):
        raise ValueError("find_lst_unix takes one lst_hours and one lon_deg (scalars); "
                         "call it once per value")
    if not end_unix > start_unix:
        return np.empty(0)
    rate_hours_per_s = 24.0 * SIDEREAL_PER_SOLAR / DAY_SECONDS
    target = float(lst_hours)
    local = last_hours if apparent else lmst_hours

    def error_hours(unix: np.ndarray) -> np.ndarray:
        inst = instants_from_unix(unix, dut1_seconds=dut1_seconds, leap_table=leap_table)
        diff = target - local(inst, lon_deg)
        return diff - 24.0 * np.floor(diff / 24.0 + 0.5)   # to [-12, 12)

    first = start_unix + float((target - local(instants_from_unix(start_unix, dut1_seconds=dut1_seconds,
                                                                 leap_table=leap_table), lon_deg)) % 24.0
                               ) / rate_hours_per_s
    count = int(math.floor((end_unix - first) / SIDEREAL_DAY_SECONDS)) + 2
    guesses = first + SIDEREAL_DAY_SECONDS * np.arange(-1, max(count, 0) + 1)
    for _ in range(3):
        guesses = guesses + error_hours(guesses) / rate_hours_per_s
    keep = (guesses >= start_unix) & (guesses < end_unix)
    return np.unique(guesses[keep])


def sidereal_to_solar_seconds(sidereal_seconds):
    """Convert a sidereal-time interval to mean solar (UT1) seconds: divide by 1.00273790935.

    >>> round(float(sidereal_to_solar_seconds(86400.0)), 4)   # 23 h 56 m 4.0905 s (common practice)
    86164.0905
    """
    return (np.asarray(sidereal_seconds, dtype=np.float64) / SIDEREAL_PER_SOLAR)[()]


def solar_to_sidereal_seconds(solar_seconds):
    """Convert a mean solar (UT1) interval to sidereal seconds: multiply by 1.00273790935."""
    return (np.asarray(solar_seconds, dtype=np.float64) * SIDEREAL_PER_SOLAR)[()]


# ---------------------------------------------------------------------------------------------
# helpers and data

_RAD_TO_HOURS = 12.0 / math.pi
_ERA_TURNS_PER_SECOND = 1.00273781191135448 / DAY_SECONDS
_NUTATION_MODELS = ("2000A", "2000B")


def _check_nutation(nutation) -> None:
    if nutation not in _NUTATION_MODELS:
        raise ValueError(
            f"nutation must be \"2000A\" (IAU 2000A, IAU 2006-adjusted: the default, within 0.06 "
            f"microseconds of time of gst06a) or \"2000B\" (77-term IAU 2000B: faster, within 0.2 ms); "
            f"got {nutation!r}")


def _dpsi_rad(tt_whole, tt_frac, nutation):
    """Nutation in longitude of the chosen model, radians (validates ``nutation`` first)."""
    _check_nutation(nutation)
    if nutation == "2000A":
        return nutation_2000a_rad(tt_whole, tt_frac)[0]
    return nutation_rad(tt_whole, tt_frac)[0]


def _anp(a):
    """Angle to [0, 2 pi) the way ERFA ``anp`` does it (fmod, then add a turn if negative)."""
    w = np.fmod(a, TAU)
    return np.where(w < 0.0, w + TAU, w)[()]


def _hours_24(h):
    a = np.asarray(h, dtype=np.float64)
    r = a - 24.0 * np.floor(a / 24.0)
    return np.where(r >= 24.0, 0.0, r)[()]


def _fundamental_arguments_2003(t: np.ndarray) -> np.ndarray:
    """IERS Conventions 2003 fundamental arguments l, l', F, D, Omega, L_Venus, L_Earth, p_A (radians).

    The columns the complementary terms need, taken from the full IERS 2003 set of
    :mod:`siderod.astro.nutation2000a` (ERFA fal03, falp03, faf03, fad03, faom03, fave03, fae03, fapa03).
    """
    return _iers2003_arguments_rad(t)[..., _EECT00_ARGUMENT_COLUMNS]


# Complementary terms of the equation of the equinoxes: IERS Conventions 2003 (Capitaine et al. 2003),
# transcribed from ERFA src/eect00.c (release 2023-10-11). Columns: multipliers of l, l', F, D, Omega,
# L_Venus, L_Earth, p_A; sine and cosine coefficients in microarcsec. Rows 1-33 are of order t^0;
# the last row is the single term of order t^1.
_EECT00_TABLE = (
    (0, 0, 0, 0, 1, 0, 0, 0, 2640.96, -0.39),
    (0, 0, 0, 0, 2, 0, 0, 0, 63.52, -0.02),
    (0, 0, 2, -2, 3, 0, 0, 0, 11.75, 0.01),
    (0, 0, 2, -2, 1, 0, 0, 0, 11.21, 0.01),
    (0, 0, 2, -2, 2, 0, 0, 0, -4.55, 0.00),
    (0, 0, 2, 0, 3, 0, 0, 0, 2.02, 0.00),
    (0, 0, 2, 0, 1, 0, 0, 0, 1.98, 0.00),
    (0, 0, 0, 0, 3, 0, 0, 0, -1.72, 0.00),
    (0, 1, 0, 0, 1, 0, 0, 0, -1.41, -0.01),
    (0, 1, 0, 0, -1, 0, 0, 0, -1.26, -0.01),
    (1, 0, 0, 0, -1, 0, 0, 0, -0.63, 0.00),
    (1, 0, 0, 0, 1, 0, 0, 0, -0.63, 0.00),
    (0, 1, 2, -2, 3, 0, 0, 0, 0.46, 0.00),
    (0, 1, 2, -2, 1, 0, 0, 0, 0.45, 0.00),
    (0, 0, 4, -4, 4, 0, 0, 0, 0.36, 0.00),
    (0, 0, 1, -1, 1, -8, 12, 0, -0.24, -0.12),
    (0, 0, 2, 0, 0, 0, 0, 0, 0.32, 0.00),
    (0, 0, 2, 0, 2, 0, 0, 0, 0.28, 0.00),
    (1, 0, 2, 0, 3, 0, 0, 0, 0.27, 0.00),
    (1, 0, 2, 0, 1, 0, 0, 0, 0.26, 0.00),
    (0, 0, 2, -2, 0, 0, 0, 0, -0.21, 0.00),
    (0, 1, -2, 2, -3, 0, 0, 0, 0.19, 0.00),
    (0, 1, -2, 2, -1, 0, 0, 0, 0.18, 0.00),
    (0, 0, 0, 0, 0, 8, -13, -1, -0.10, 0.05),
    (0, 0, 0, 2, 0, 0, 0, 0, 0.15, 0.00),
    (2, 0, -2, 0, -1, 0, 0, 0, -0.14, 0.00),
    (1, 0, 0, -2, 1, 0, 0, 0, 0.14, 0.00),
    (0, 1, 2, -2, 2, 0, 0, 0, -0.14, 0.00),
    (1, 0, 0, -2, -1, 0, 0, 0, 0.14, 0.00),
    (0, 0, 4, -2, 4, 0, 0, 0, 0.13, 0.00),
    (0, 0, 2, -2, 4, 0, 0, 0, -0.11, 0.00),
    (1, 0, -2, 0, -3, 0, 0, 0, 0.11, 0.00),
    (1, 0, -2, 0, -1, 0, 0, 0, 0.11, 0.00),
    (0, 0, 0, 0, 1, 0, 0, 0, -0.87, 0.00),  # order t^1
)
_EECT00_ARRAY = np.array(_EECT00_TABLE, dtype=np.float64)
# Where l, l', F, D, Omega, L_Venus, L_Earth, p_A sit among the 14 IERS 2003 arguments.
_EECT00_ARGUMENT_COLUMNS = [0, 1, 2, 3, 4, 6, 7, 13]
_EECT00_MULT = _EECT00_ARRAY[:, :8]
_EECT00_SIN = _EECT00_ARRAY[:, 8] * 1e-6   # microarcsec -> arcsec
_EECT00_COS = _EECT00_ARRAY[:, 9] * 1e-6
