"""Comets and asteroids from osculating orbital elements: two-body propagation, apparent places
through the ephemeris's Earth and Sun, and magnitude estimates.

Method:

* **Two-body motion in universal variables** (Stumpff functions ``C(z)``, ``S(z)``; Battin,
  *An Introduction to the Mathematics and Methods of Astrodynamics*, sec. 4.5 [from memory]), counted
  from perihelion: with ``alpha = (1 - e) / q`` (the inverse semi-major axis, 0 for a parabola) the
  universal Kepler equation is ``sqrt(mu) (t - tp) = q chi + (1 - alpha q) chi^3 S(alpha chi^2)``.
  One formula covers ellipses, parabolas and hyperbolas with no special case at ``e = 1``; it is
  solved by Newton's method inside a bracket that always holds the root (the equation is monotonic
  in ``chi``), so it cannot diverge. Elliptic times are first reduced modulo the period.
* **Frames**: elements are referred to the mean ecliptic and equinox of J2000 (as the Minor Planet
  Center publishes them); positions are rotated to ICRS axes with the J2000 obliquity 84381.448"
  (the IAU 1976 value the element catalogues use). Heliocentric positions are made barycentric with
  the ephemeris's Sun at the same instant.
* **Apparent place**: :func:`siderod.astro.ephemeris.apparent_geocentric` (light time iterated, Sun's
  deflection, annual aberration, IAU 2006/2000B precession-nutation).
* **Perturbations are ignored**: two-body motion from the elements' epoch drifts from the real orbit
  by roughly (days from epoch / 100)^2 arcseconds for a main-belt asteroid (Jupiter's pull) and much
  more near a close planetary approach; elements more than a couple of months old are a warning
  sign (the element files in use say how old theirs are).
* **Magnitudes**: asteroids by the IAU H, G system (Bowell et al. 1989 two-parameter phase function
  [from memory]); comets by the total-magnitude law ``m = H + 5 log10(delta) + 2.5 K log10(r)``
  (the form the Minor Planet Center's comet elements give ``H`` and ``K`` for [from memory]).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from siderod.astro.constants import ARCSEC_RAD
from siderod.astro.ephemeris import Ephemeris, apparent_geocentric

__all__ = [
    "GAUSS_K",
    "OrbitalElements",
    "asteroid_magnitude",
    "comet_magnitude",
    "elements_from_state",
    "heliocentric_position_au",
    "minor_body_apparent",
    "minor_body_position_fn",
    "orbital_elements",
]

#: Gaussian gravitational constant, au^1.5 / day (IAU 1938/1976): mu_sun = k^2 au^3/day^2.
GAUSS_K = 0.01720209895
_MU = GAUSS_K * GAUSS_K
#: Obliquity of the J2000 ecliptic used by element catalogues, 84381.448" (IAU 1976).
_EPS_J2000_RAD = 84381.448 * ARCSEC_RAD
_NEWTON_ITERATIONS = 60


@dataclass(frozen=True, eq=False)
class OrbitalElements:
    """Osculating heliocentric elements of N bodies (mean ecliptic and equinox of J2000), shape (N,).

    Attributes:
        q_au: perihelion distance, au (> 0).
        e: eccentricity (>= 0; 1 is a parabola).
        i_deg: inclination, degrees.
        node_deg: longitude of the ascending node, degrees.
        peri_deg: argument of perihelion, degrees.
        tp_jd_tt: time of perihelion passage, Julian date (TT).
        epoch_jd_tt: osculation epoch, Julian date (TT) (for the elements' age; not used in motion).
    """

    q_au: np.ndarray
    e: np.ndarray
    i_deg: np.ndarray
    node_deg: np.ndarray
    peri_deg: np.ndarray
    tp_jd_tt: np.ndarray
    epoch_jd_tt: np.ndarray

    def __post_init__(self):
        names = ("q_au", "e", "i_deg", "node_deg", "peri_deg", "tp_jd_tt", "epoch_jd_tt")
        arrays = np.broadcast_arrays(*(np.atleast_1d(np.asarray(getattr(self, n), dtype=float))
                                       for n in names))
        if arrays[0].ndim != 1:
            raise ValueError("OrbitalElements needs one-dimensional arrays (shape (N,)) or scalars")
        if np.any(~(arrays[0] > 0.0)):
            raise ValueError(f"q_au must be > 0; got {arrays[0][~(arrays[0] > 0.0)][0]}")
        if np.any(~(arrays[1] >= 0.0)):
            raise ValueError(f"e must be >= 0; got {arrays[1][~(arrays[1] >= 0.0)][0]}")
        for n, a in zip(names, arrays, strict=True):
            a = a.copy()
            a.flags.writeable = False
            object.__setattr__(self, n, a)
        om, w, inc = (np.radians(arrays[3]), np.radians(arrays[4]), np.radians(arrays[2]))
        co, so, cw, sw, ci, si = np.cos(om), np.sin(om), np.cos(w), np.sin(w), np.cos(inc), np.sin(inc)
        p_ecl = np.stack([cw * co - sw * so * ci, cw * so + sw * co * ci, sw * si])
        q_ecl = np.stack([-sw * co - cw * so * ci, -sw * so + cw * co * ci, cw * si])
        object.__setattr__(self, "_p_icrs", _ecliptic_to_icrs(p_ecl))
        object.__setattr__(self, "_q_icrs", _ecliptic_to_icrs(q_ecl))

    def __len__(self) -> int:
        return self.q_au.shape[0]


def orbital_elements(*, e, i_deg, node_deg, peri_deg, epoch_jd_tt, q_au=None, a_au=None, tp_jd_tt=None,
                     mean_anomaly_deg=None) -> OrbitalElements:
    """Build :class:`OrbitalElements` from either ``q`` or ``a`` and either ``tp`` or ``M`` at the epoch.

    Args:
        e, i_deg, node_deg, peri_deg, epoch_jd_tt: as in :class:`OrbitalElements`.
        q_au: perihelion distance, au; or
        a_au: semi-major axis, au (elliptic or hyperbolic, a < 0 for hyperbolas; not for parabolas).
        tp_jd_tt: perihelion time, JD (TT); or
        mean_anomaly_deg: mean anomaly at ``epoch_jd_tt``, degrees (needs ``e != 1``).

    Returns:
        OrbitalElements.

    >>> el = orbital_elements(a_au=1.0, e=0.0, i_deg=0, node_deg=0, peri_deg=0, epoch_jd_tt=2451545.0,
    ...                       mean_anomaly_deg=90.0)
    >>> round(float(el.tp_jd_tt[0]), 3)  # a quarter of 365.2569 days earlier
    2451453.686
    """
    e = np.asarray(e, dtype=float)
    if (q_au is None) == (a_au is None):
        raise ValueError("give exactly one of q_au (perihelion distance) and a_au (semi-major axis)")
    if (tp_jd_tt is None) == (mean_anomaly_deg is None):
        raise ValueError("give exactly one of tp_jd_tt (perihelion time) and mean_anomaly_deg")
    if q_au is None:
        a = np.asarray(a_au, dtype=float)
        q = a * (1.0 - e)
    else:
        q = np.asarray(q_au, dtype=float)
    if tp_jd_tt is None:
        alpha = (1.0 - e) / q  # 1/a
        with np.errstate(divide="ignore", invalid="ignore"):
            n_rad_day = GAUSS_K * np.abs(alpha) ** 1.5
        if np.any(n_rad_day == 0.0):
            raise ValueError("a mean anomaly needs an elliptic or hyperbolic orbit (e != 1); give tp instead")
        tp = np.asarray(epoch_jd_tt, dtype=float) - np.radians(mean_anomaly_deg) / n_rad_day
    else:
        tp = tp_jd_tt
    return OrbitalElements(q, e, i_deg, node_deg, peri_deg, tp, epoch_jd_tt)


def heliocentric_position_au(elements: OrbitalElements, tt_whole, tt_frac):
    """Heliocentric position, ICRS axes, au, by two-body motion (universal variables).

    Args:
        elements: N bodies.
        tt_whole, tt_frac: two-part Julian date (TT), broadcastable against (N,) (e.g. (M, 1) or (M, N)).

    Returns:
        ndarray: (3, *shape) positions, au.
    """
    x, y = _perifocal(elements, tt_whole, tt_frac)
    lead = (1,) * (x.ndim - 1)
    p = elements._p_icrs.reshape((3,) + lead + (len(elements),))
    q = elements._q_icrs.reshape((3,) + lead + (len(elements),))
    return p * x + q * y


def minor_body_position_fn(ephemeris: Ephemeris, elements: OrbitalElements) -> Callable:
    """``(tdb_whole, tdb_frac) -> (3, *shape)`` barycentric positions (au): heliocentric plus the Sun."""

    def position(tdb_whole, tdb_frac):
        helio = heliocentric_position_au(elements, tdb_whole, tdb_frac)
        w, f = np.broadcast_arrays(np.asarray(tdb_whole, dtype=float), np.asarray(tdb_frac, dtype=float))
        sun = ephemeris.state_au("sun", w, f)[0]
        return helio + sun.reshape(sun.shape + (1,) * (helio.ndim - sun.ndim))

    return position


def minor_body_apparent(ephemeris: Ephemeris, elements: OrbitalElements, instants):
    """Geocentric apparent direction of date, distance and Sun distance of N minor bodies.

    Args:
        ephemeris: the Earth and the Sun.
        elements: N bodies.
        instants: times of shape (M, 1) (or any shape broadcasting against (N,)).

    Returns:
        tuple: ``(unit_xyz (3, M, N), delta_au (M, N), r_au (M, N))``: apparent direction of date,
        geocentric distance and heliocentric distance (at the retarded time), au.
    """
    xyz, delta = apparent_geocentric(ephemeris, minor_body_position_fn(ephemeris, elements), instants)
    tt_w = np.asarray(instants.tt_whole, dtype=float)
    tt_f = np.asarray(instants.tt_frac, dtype=float)
    from siderod.astro.ephemeris import C_AU_PER_DAY

    helio = heliocentric_position_au(elements, tt_w, tt_f - delta / C_AU_PER_DAY)
    r = np.sqrt(np.einsum("i...,i...->...", helio, helio))
    return xyz, delta, r


def elements_from_state(position_au, velocity_au_per_day, jd_tt: float, *, mu=_MU) -> OrbitalElements:
    """Osculating elements (ecliptic J2000) from one heliocentric ICRS state vector.

    Args:
        position_au (array_like): (3,) heliocentric position, au, ICRS axes.
        velocity_au_per_day (array_like): (3,) velocity, au/day.
        jd_tt: the instant of the state (becomes the epoch).
        mu: gravitational parameter, au^3/day^2 (default the Sun's, k^2).

    Returns:
        OrbitalElements: one body.
    """
    r = _icrs_to_ecliptic(np.asarray(position_au, dtype=float))
    v = _icrs_to_ecliptic(np.asarray(velocity_au_per_day, dtype=float))
    h = np.cross(r, v)
    rn = float(np.linalg.norm(r))
    e_vec = np.cross(v, h) / mu - r / rn
    e = float(np.linalg.norm(e_vec))
    hn = float(np.linalg.norm(h))
    inc = math.acos(h[2] / hn)
    node = math.atan2(h[0], -h[1])
    n_vec = np.array([math.cos(node), math.sin(node), 0.0])
    p = h @ h / mu
    q = p / (1.0 + e)
    peri = math.atan2(np.dot(np.cross(n_vec, e_vec), h) / hn, np.dot(n_vec, e_vec))
    # Time since perihelion from the universal anomaly of the true anomaly.
    nu = math.atan2(np.dot(np.cross(e_vec, r), h) / hn, np.dot(e_vec, r))
    alpha = (1.0 - e) / q
    if e < 1.0:
        ecc_anomaly = 2.0 * math.atan(math.sqrt((1 - e) / (1 + e)) * math.tan(nu / 2))
        dt = (ecc_anomaly - e * math.sin(ecc_anomaly)) / math.sqrt(mu * alpha ** 3)
    elif e > 1.0:
        hyp_anomaly = 2.0 * math.atanh(math.sqrt((e - 1) / (e + 1)) * math.tan(nu / 2))
        dt = (e * math.sinh(hyp_anomaly) - hyp_anomaly) / math.sqrt(mu * (-alpha) ** 3)
    else:
        d = math.tan(nu / 2)
        dt = math.sqrt(2 * q ** 3 / mu) * (d + d ** 3 / 3)
    return OrbitalElements(q, e, math.degrees(inc), math.degrees(node) % 360.0, math.degrees(peri) % 360.0,
                           jd_tt - dt, jd_tt)


def asteroid_magnitude(h_mag, g_slope, r_au, delta_au, phase_deg):
    """Apparent magnitude of an asteroid, IAU H, G system (Bowell et al. 1989 [from memory]).

    ``m = H + 5 log10(r delta) - 2.5 log10((1 - G) phi1 + G phi2)``, ``phi_i = exp(-A_i tan(a/2)^B_i)``
    with A = (3.33, 1.87), B = (0.63, 1.22). Good to a few tenths for phase angles under ~120 deg.

    Args:
        h_mag, g_slope: absolute magnitude and slope parameter.
        r_au, delta_au: heliocentric and geocentric distance, au.
        phase_deg: Sun-body-observer angle, degrees.

    Returns:
        ndarray: magnitude.

    >>> round(float(asteroid_magnitude(3.34, 0.12, 2.0, 1.0, 0.0)), 3)
    4.845
    """
    t = np.tan(np.radians(np.asarray(phase_deg, dtype=float)) / 2.0)
    phi1 = np.exp(-3.33 * t ** 0.63)
    phi2 = np.exp(-1.87 * t ** 1.22)
    g = np.asarray(g_slope, dtype=float)
    return (np.asarray(h_mag, dtype=float) + 5.0 * np.log10(np.asarray(r_au) * np.asarray(delta_au))
            - 2.5 * np.log10((1.0 - g) * phi1 + g * phi2))


def comet_magnitude(h_mag, k_slope, r_au, delta_au):
    """Total magnitude of a comet: ``H + 5 log10(delta) + 2.5 K log10(r)`` [from memory].

    >>> float(comet_magnitude(5.0, 4.0, 1.0, 1.0))
    5.0
    """
    return (np.asarray(h_mag, dtype=float) + 5.0 * np.log10(delta_au)
            + 2.5 * np.asarray(k_slope, dtype=float) * np.log10(r_au))


# ---------------------------------------------------------------------------------------------
# helpers


def _perifocal(elements: OrbitalElements, tt_whole, tt_frac):
    """Position in the orbital plane (x to perihelion, y along the motion there), au."""
    q, e = elements.q_au, elements.e
    dt = (np.asarray(tt_whole, dtype=float) - elements.tp_jd_tt) + np.asarray(tt_frac, dtype=float)
    alpha = (1.0 - e) / q
    sqrt_mu = GAUSS_K
    elliptic = alpha > 0.0
    with np.errstate(divide="ignore", invalid="ignore"):
        period = np.where(elliptic, 2.0 * np.pi / (sqrt_mu * np.where(elliptic, alpha, 1.0) ** 1.5), np.inf)
    safe_period = np.where(elliptic, period, 1.0)
    dt = np.where(elliptic, dt - safe_period * np.round(dt / safe_period), dt)
    dt, alpha, q, e = np.broadcast_arrays(dt, alpha, q, e)
    target = sqrt_mu * dt
    # Bracket: |chi| <= sqrt(mu)|dt|/q always (the other term has the sign of chi and grows it);
    # within half an elliptic period, |chi| <= pi / sqrt(alpha).
    bound = np.abs(target) / q
    with np.errstate(divide="ignore", invalid="ignore"):
        bound = np.where(alpha > 0.0, np.minimum(bound, np.pi / np.sqrt(np.where(alpha > 0, alpha, 1.0))),
                         bound) * (1.0 + 1e-12) + 1e-300
    lo, hi = -bound, bound.copy()
    one_aq = 1.0 - alpha * q
    chi = _first_guess(target, alpha, q, e, one_aq, lo, hi)
    for _ in range(_NEWTON_ITERATIONS):
        z = alpha * chi * chi
        c, s = _stumpff(z)
        f = q * chi + one_aq * chi ** 3 * s - target
        r = q + one_aq * chi * chi * c  # d f / d chi (the radius)
        # A hyperbolic guess far out overflows cosh: treat it as past the root and bisect.
        lost = ~np.isfinite(f)
        lo = np.where((f < 0.0) | (lost & (chi < 0.0)), chi, lo)
        hi = np.where((f > 0.0) | (lost & (chi > 0.0)), chi, hi)
        with np.errstate(invalid="ignore"):
            new = chi - f / r
        outside = lost | ~(new >= lo) | ~(new <= hi)  # (a converged step may land on a bound)
        new = np.where(outside, 0.5 * (lo + hi), new)
        # 1e-12 in chi is about 1e-12 au (15 cm) in position: far below anything observable.
        if np.all(np.abs(new - chi) <= 1e-12 * (np.abs(chi) + 1e-8)):
            chi = new
            break
        chi = new
    z = alpha * chi * chi
    c, s = _stumpff(z)
    # Lagrange f and g from perihelion (r0 = q, v0 = sqrt(mu (1 + e) / q) along y):
    f_coef = 1.0 - chi * chi * c / q
    g_coef = dt - chi ** 3 * s / sqrt_mu
    v0 = np.sqrt(_MU * (1.0 + e) / q)
    return q * f_coef, v0 * g_coef


def _first_guess(target, alpha, q, e, one_aq, lo, hi):
    """Start Newton from the best of three classical guesses (elliptic, hyperbolic, parabolic)."""
    abs_alpha = np.abs(alpha)
    root = np.sqrt(np.where(abs_alpha > 0.0, abs_alpha, 1.0))
    mean_anomaly = target * root * abs_alpha  # sqrt(mu |alpha|^3) dt
    # Ellipse: E0 = M + 0.85 e sign(sin M) (Danby); hyperbola: F0 = sign(M) ln(2|M|/e + 1.8).
    ell = (mean_anomaly + 0.85 * e * np.sign(np.sin(mean_anomaly))) / root
    hyp = np.sign(mean_anomaly) * np.log(2.0 * np.abs(mean_anomaly) / np.maximum(e, 1e-3) + 1.8) / root
    # Parabola (Barker): q chi + chi^3 / 6 = sqrt(mu) dt, solved by Cardano.
    half = 3.0 * target
    disc = np.sqrt(half * half + 8.0 * q ** 3)
    par = np.cbrt(half + disc) + np.cbrt(half - disc)
    best = np.clip(par, lo, hi)
    best_f = np.full(best.shape, np.inf)
    for guess in (par, np.where(alpha > 0.0, ell, par), np.where(alpha < 0.0, hyp, par)):
        guess = np.clip(guess, lo, hi)
        c, s = _stumpff(alpha * guess * guess)
        with np.errstate(invalid="ignore", over="ignore"):
            f = np.abs(q * guess + one_aq * guess ** 3 * s - target)
        better = f < best_f
        best = np.where(better, guess, best)
        best_f = np.where(better, f, best_f)
    return best


def _stumpff(z):
    """Stumpff functions C(z) = (1 - cos sqrt z) / z and S(z) = (sqrt z - sin sqrt z) / sqrt z^3."""
    z = np.asarray(z, dtype=float)
    small = np.abs(z) < 0.1
    zs = np.where(small, 1.0, z)
    with np.errstate(invalid="ignore", over="ignore"):
        sq = np.sqrt(np.abs(zs))
        c_big = np.where(zs > 0, (1.0 - np.cos(sq)) / zs, (np.cosh(sq) - 1.0) / -zs)
        s_big = np.where(zs > 0, (sq - np.sin(sq)) / sq ** 3, (np.sinh(sq) - sq) / sq ** 3)
    # Series: C = sum (-z)^k / (2k+2)!, S = sum (-z)^k / (2k+3)!; 8 terms leave < 1e-17 at |z| < 0.1.
    c_ser = np.zeros_like(z)
    s_ser = np.zeros_like(z)
    term = np.ones_like(z)
    for k in range(8):
        c_ser = c_ser + term / math.factorial(2 * k + 2)
        s_ser = s_ser + term / math.factorial(2 * k + 3)
        term = term * -z
    return np.where(small, c_ser, c_big), np.where(small, s_ser, s_big)


def _ecliptic_to_icrs(v):
    c, s = math.cos(_EPS_J2000_RAD), math.sin(_EPS_J2000_RAD)
    x, y, z = v
    return np.stack([x, c * y - s * z, s * y + c * z])


def _icrs_to_ecliptic(v):
    c, s = math.cos(_EPS_J2000_RAD), math.sin(_EPS_J2000_RAD)
    x, y, z = v
    return np.stack([x, c * y + s * z, -s * y + c * z])

