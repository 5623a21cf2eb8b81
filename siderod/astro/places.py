"""Apparent and observed places of stars: catalogue (ICRS) -> apparent RA/Dec of date -> hour angle
-> altitude/azimuth, parallactic angle, refraction and airmass.

The chain, and what each step is worth (sizes are upper bounds for 1900-2100):

1. **Space motion** from the catalogue epoch (proper motion, parallax, radial velocity), in the
   vector form of ERFA ``pmpx``: ``p(t) = p0 + dt (mu_alpha* e_alpha + mu_delta e_delta + w p0)
   - parallax * E``, with ``E`` the Earth's heliocentric position (au) from the low-precision solar
   orbit below.  The Roemer light-time correction of ``dt`` is left out (< 1e-5 yr of motion).
2. **Annual aberration**, first order, ``u = p + V/c`` with ``V`` the Earth's velocity from a Keplerian
   orbit with Meeus' mean elements (ch. 25): heliocentric, not barycentric (the Sun's reflex motion,
   about 13 m/s, and the Earth's motion about the Earth-Moon barycentre, 12.6 m/s, are left out:
   together <= 0.02"); the second-order terms left out are <= 0.002".
3. **Frame bias + IAU 2006 precession + IAU 2000B nutation**, the matrix from
   :mod:`siderod.astro.precession` (pole good to 1 mas against IAU 2000A).
4. **Gravitational light deflection by the Sun is omitted**: 0.004" at 90 deg from the Sun,
   0.5" at 1 deg, 1.75" at the limb; it matters only for objects next to the Sun.
5. **Hour angle** ``H = LAST - RA`` (LAST = GAST + longitude, :mod:`siderod.astro.sidereal`).
   Diurnal aberration (up to 0.32" at the equator) is included, at no per-star cost.  Diurnal
   parallax of stars is negligible (Earth radius / distance of the nearest star: 4e-5").
   Polar motion (<= 0.5") and s' are not applied.
6. **Altitude/azimuth** (azimuth from north through east) with ERFA ``hd2ae`` geometry, the
   **parallactic angle** with ERFA ``hd2pa`` geometry, and **Bennett refraction** and **Pickering
   airmass** from :mod:`siderod.astro.refraction`.

Measured against ``erfa.atco13`` (polar motion zero, same DUT1, refraction off) the result is
within about 0.05" above the horizon except near the Sun (see ``tests/astro/test_places.py``).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from siderod.astro.angles import wrap_hours_24
from siderod.astro.constants import ARCSEC_RAD, DEG_RAD, HOUR_RAD, J2000_JD, JULIAN_CENTURY_DAYS
from siderod.astro.leapseconds import BUILTIN_LEAP_TABLE
from siderod.astro.precession import bias_precession_nutation_matrix, mean_obliquity_rad
from siderod.astro.refraction import _refraction_from_true_table_deg, _scale, airmass, standard_pressure_hpa
from siderod.astro.sidereal import gast_rad
from siderod.astro.timescales import Instants, instants_from_unix

__all__ = [
    "ApparentWindow",
    "Observer",
    "Positions",
    "Stars",
    "altaz_to_hadec",
    "apparent_radec",
    "hadec_to_altaz",
    "observe",
    "parallactic_angle_deg",
    "stars_from_radec",
]


# ---------------------------------------------------------------------------------------------
# records


@dataclass(frozen=True, eq=False)
class Stars:
    """A catalogue of N stars (ICRS, at a catalogue epoch), as arrays of shape (N,).

    Scalars are accepted and broadcast to the common length.  Unit vectors and the space-motion
    vectors are computed once at construction and cached (private attributes), so repeated
    :func:`observe` calls need no trigonometry per star.

    Attributes:
        ra_deg: ICRS right ascension at the catalogue epoch, degrees [0, 360).
        dec_deg: ICRS declination, degrees [-90, 90].
        pm_ra_cosdec_mas_per_year: proper motion in RA times cos(Dec), mas per Julian year.
        pm_dec_mas_per_year: proper motion in Dec, mas per Julian year.
        parallax_mas: annual parallax, mas (0 = very distant).
        radial_velocity_km_s: radial velocity, km/s, positive receding (used only with parallax).
        epoch_jd_tt: catalogue epoch, Julian date (TT), default J2000.0 = 2451545.0.
    """

    ra_deg: np.ndarray
    dec_deg: np.ndarray
    pm_ra_cosdec_mas_per_year: np.ndarray = 0.0
    pm_dec_mas_per_year: np.ndarray = 0.0
    parallax_mas: np.ndarray = 0.0
    radial_velocity_km_s: np.ndarray = 0.0
    epoch_jd_tt: np.ndarray = J2000_JD

    def __post_init__(self):
        names = ("ra_deg", "dec_deg", "pm_ra_cosdec_mas_per_year", "pm_dec_mas_per_year", "parallax_mas",
                 "radial_velocity_km_s", "epoch_jd_tt")
        arrays = [np.atleast_1d(np.asarray(getattr(self, n), dtype=float)) for n in names]
        if any(a.ndim != 1 for a in arrays):
            raise ValueError("Stars needs one-dimensional arrays (shape (N,)) or scalars; got shapes "
                             + ", ".join(f"{n}={a.shape}" for n, a in zip(names, arrays, strict=True))
                             + ". Flatten the catalogue with .ravel() first.")
        try:
            arrays = [a.copy() for a in np.broadcast_arrays(*arrays)]
        except ValueError:
            raise ValueError("Stars arrays must share one length N (or be scalars); got lengths "
                             + ", ".join(f"{n}={a.shape[0]}" for n, a in zip(names, arrays, strict=True))
                             ) from None
        if np.any(np.abs(arrays[1]) > 90.0):
            raise ValueError(f"dec_deg must lie in [-90, 90]; got values up to {np.abs(arrays[1]).max()}")
        for n, a in zip(names, arrays, strict=True):
            a.flags.writeable = False
            object.__setattr__(self, n, a)
        ra, dec = np.radians(arrays[0]), np.radians(arrays[1])
        sa, ca, sd, cd = np.sin(ra), np.cos(ra), np.sin(dec), np.cos(dec)
        p = np.stack([ca * cd, sa * cd, sd])
        mas = ARCSEC_RAD / 1000.0
        pmr, pmd, plx = arrays[2] * mas, arrays[3] * mas, arrays[4] * mas
        # Radial motion as a fractional change of distance per year (ERFA pmpx): rv * year / distance.
        w = arrays[5] * _KM_S_TO_AU_PER_YEAR * plx
        pm = np.stack([-pmr * sa - pmd * ca * sd + w * p[0],
                       pmr * ca - pmd * sa * sd + w * p[1],
                       pmd * cd + w * p[2]])
        object.__setattr__(self, "_unit_xyz", p)
        object.__setattr__(self, "_pm_xyz_rad_per_year", pm if np.any(pm) else None)
        object.__setattr__(self, "_parallax_rad", plx if np.any(plx) else None)

    def __len__(self) -> int:
        return self.ra_deg.shape[0]


def stars_from_radec(ra_deg, dec_deg, **optional) -> Stars:
    """Build :class:`Stars` from ICRS RA/Dec (degrees) and optional keyword arrays.

    Args:
        ra_deg (array_like): ICRS RA, degrees, shape (N,) or scalar.
        dec_deg (array_like): ICRS Dec, degrees in [-90, 90], shape (N,) or scalar.
        **optional: any of ``pm_ra_cosdec_mas_per_year``, ``pm_dec_mas_per_year``, ``parallax_mas``,
            ``radial_velocity_km_s``, ``epoch_jd_tt`` (arrays of shape (N,) or scalars).

    Returns:
        Stars: the catalogue.

    Raises:
        TypeError: for an unknown keyword (the message lists the accepted ones).

    >>> len(stars_from_radec([10.0, 20.0], 5.0))
    2
    """
    allowed = ("pm_ra_cosdec_mas_per_year", "pm_dec_mas_per_year", "parallax_mas", "radial_velocity_km_s",
               "epoch_jd_tt")
    unknown = sorted(set(optional) - set(allowed))
    if unknown:
        raise TypeError(f"stars_from_radec got unknown keyword(s) {unknown}; accepted: {', '.join(allowed)}")
    return Stars(ra_deg, dec_deg, **optional)


@dataclass(frozen=True)
class Observer:
    """An observing site and its weather.

    Attributes:
        latitude_deg: geodetic latitude (WGS84), degrees in [-90, 90], north positive.
        longitude_deg: longitude, degrees, **east positive** (west of Greenwich is negative).
        elevation_m: height above sea level, metres.
        pressure_hpa: air pressure, hPa; ``None`` uses the standard atmosphere at ``elevation_m``
            (:func:`~siderod.astro.refraction.standard_pressure_hpa`); 0 turns refraction off.
        temperature_c: air temperature, degC.
        refraction: apply refraction to ``alt_deg`` (the geometric altitude is always returned too).
    """

    latitude_deg: float
    longitude_deg: float
    elevation_m: float = 0.0
    pressure_hpa: float | None = None
    temperature_c: float = 10.0
    refraction: bool = True

    def __post_init__(self):
        if not -90.0 <= float(self.latitude_deg) <= 90.0:
            raise ValueError(f"latitude_deg must lie in [-90, 90] (north positive); got {self.latitude_deg}")
        if self.pressure_hpa is not None and float(self.pressure_hpa) < 0.0:
            raise ValueError(f"pressure_hpa must be >= 0 (or None for the standard atmosphere); "
                             f"got {self.pressure_hpa}")

    @property
    def effective_pressure_hpa(self) -> float:
        """The pressure used for refraction: the given one, or the standard atmosphere."""
        if self.pressure_hpa is None:
            return float(standard_pressure_hpa(self.elevation_m))
        return float(self.pressure_hpa)


@dataclass(frozen=True, eq=False)
class Positions:
    """Observed positions, all arrays of one broadcast shape.

    Attributes:
        ra_hours: apparent topocentric RA of date (true equator and equinox), hours [0, 24).
        dec_deg: apparent topocentric Dec of date, degrees [-90, 90].
        ha_hours: local hour angle, hours [-12, 12), positive west of the meridian.
        alt_deg: altitude, degrees; refracted when the observer asks for refraction.
        alt_geometric_deg: altitude without refraction, degrees.
        az_deg: azimuth from north through east, degrees [0, 360).
        parallactic_deg: parallactic angle, degrees (-180, 180]; negative east of the meridian.
        airmass: Pickering (2002) airmass of ``alt_deg``; ``nan`` below the horizon.
    """

    ra_hours: np.ndarray
    dec_deg: np.ndarray
    ha_hours: np.ndarray
    alt_deg: np.ndarray
    alt_geometric_deg: np.ndarray
    az_deg: np.ndarray
    parallactic_deg: np.ndarray
    airmass: np.ndarray


# ---------------------------------------------------------------------------------------------
# apparent place


def apparent_radec(stars: Stars, instants: Instants):
    """Geocentric apparent RA/Dec of date (true equator and equinox of date).

    Space motion, frame bias + IAU 2006 precession + IAU 2000B nutation, and first-order annual
    aberration from a low-precision Earth velocity; light deflection omitted (module docstring).

    Args:
        stars: catalogue, shape (N,).
        instants: times; shape () gives (N,) results, shape (M, 1) gives (M, N); numpy broadcasting
            of ``instants.shape`` against (N,) in general.

    Returns:
        tuple: ``(ra_hours, dec_deg)``; RA in [0, 24) hours, Dec in degrees.
    """
    x, y, z = _apparent_xyz(stars, instants)
    ra_hours = np.arctan2(y, x) / HOUR_RAD
    ra_hours = np.where(ra_hours < 0.0, ra_hours + 24.0, ra_hours)
    dec_deg = np.arctan2(z, np.hypot(x, y)) / DEG_RAD
    return ra_hours, dec_deg


def observe(stars: Stars, instants: Instants, observer: Observer) -> Positions:
    """Observed (topocentric) positions of stars: hour angle, alt/az, parallactic angle, airmass.

    Per instant, the bias-precession-nutation matrix, the aberration vector and the rotation to the
    local meridian are folded into one 3x3 matrix; per star the cost is one matrix-vector product,
    a handful of ``arctan2`` and the refraction lookup (no sin/cos), about 0.2 us per star.

    Args:
        stars: catalogue, shape (N,).
        instants: times; shape () gives (N,) results, (M, 1) gives (M, N) (numpy broadcasting).
        observer: site and weather.

    Returns:
        Positions: see :class:`Positions` (accuracy in the module docstring).
    """
    tt_w, tt_f = np.asarray(instants.tt_whole), np.asarray(instants.tt_frac)
    npb = bias_precession_nutation_matrix(tt_w, tt_f)
    v_date = _aberration_vector_date(tt_w, tt_f)
    # The hour angle is LAST minus an RA of date built with the IAU 2000B matrix; taking the
    # equation of the equinoxes from the same nutation makes the nutation in RA cancel exactly in
    # the hour angle, and costs a few microseconds instead of the full 2000A series.
    last_rad = (gast_rad(instants.ut1_whole, instants.ut1_frac, tt_w, tt_f, nutation="2000B")
                + observer.longitude_deg * DEG_RAD)
    cl, sl = np.cos(last_rad), np.sin(last_rad)
    # Rows of the date -> hour-angle-frame rotation: x_h = cos H cos d, y_h = sin H cos d, z_h = sin d.
    rot = np.zeros(np.shape(last_rad) + (3, 3))
    rot[..., 0, 0], rot[..., 0, 1] = cl, sl
    rot[..., 1, 0], rot[..., 1, 1] = sl, -cl
    rot[..., 2, 2] = 1.0
    a = rot @ npb
    v_h = np.einsum("...ij,...j->...i", rot, v_date)
    # Diurnal aberration: the site moves east (towards -y_h) at omega * distance from the axis.
    rho_cos, _ = _geocentric_site(observer)
    v_h[..., 1] -= _EARTH_ROTATION_RAD_S * rho_cos * _EARTH_RADIUS_KM / _C_KM_S
    px, py, pz = _catalogue_xyz_at(stars, tt_w, tt_f)
    xh = a[..., 0, 0] * px + a[..., 0, 1] * py + a[..., 0, 2] * pz + v_h[..., 0]
    yh = a[..., 1, 0] * px + a[..., 1, 1] * py + a[..., 1, 2] * pz + v_h[..., 1]
    zh = a[..., 2, 0] * px + a[..., 2, 1] * py + a[..., 2, 2] * pz + v_h[..., 2]
    return _positions_from_ha_frame(xh, yh, zh, last_rad, observer)


# ---------------------------------------------------------------------------------------------
# horizon geometry


def hadec_to_altaz(ha_hours, dec_deg, lat_deg):
    """Hour angle and declination to altitude and azimuth (ERFA ``hd2ae`` geometry).

    Args:
        ha_hours (array_like): hour angle, hours, positive west, any shape.
        dec_deg (array_like): declination, degrees in [-90, 90]; broadcasts.
        lat_deg (array_like): latitude, degrees in [-90, 90]; broadcasts.

    Returns:
        tuple: ``(alt_deg, az_deg)``, azimuth from north through east in [0, 360); 0 at the zenith.

    >>> [round(float(v), 6) for v in hadec_to_altaz(0.0, 20.0, 52.0)]
    [58.0, 180.0]
    """
    h = np.asarray(ha_hours, dtype=float) * HOUR_RAD
    d = np.asarray(dec_deg, dtype=float) * DEG_RAD
    phi = np.asarray(lat_deg, dtype=float) * DEG_RAD
    cd = np.cos(d)
    xh, yh, zh = np.cos(h) * cd, np.sin(h) * cd, np.sin(d)
    sp, cp = np.sin(phi), np.cos(phi)
    north = cp * zh - sp * xh
    up = cp * xh + sp * zh
    az = _wrap_deg_0_360(np.arctan2(-yh, north) / DEG_RAD)
    alt = np.arctan2(up, np.hypot(north, yh)) / DEG_RAD
    return alt, az


def altaz_to_hadec(alt_deg, az_deg, lat_deg):
    """Altitude and azimuth to hour angle and declination (ERFA ``ae2hd`` geometry).

    Args:
        alt_deg (array_like): altitude, degrees, any shape.
        az_deg (array_like): azimuth from north through east, degrees; broadcasts.
        lat_deg (array_like): latitude, degrees in [-90, 90]; broadcasts.

    Returns:
        tuple: ``(ha_hours, dec_deg)``, hour angle in [-12, 12).

    >>> [round(float(v), 6) + 0.0 for v in altaz_to_hadec(58.0, 180.0, 52.0)]
    [0.0, 20.0]
    """
    el = np.asarray(alt_deg, dtype=float) * DEG_RAD
    az = np.asarray(az_deg, dtype=float) * DEG_RAD
    phi = np.asarray(lat_deg, dtype=float) * DEG_RAD
    ce = np.cos(el)
    north, east, up = np.cos(az) * ce, np.sin(az) * ce, np.sin(el)
    sp, cp = np.sin(phi), np.cos(phi)
    xh = -sp * north + cp * up
    zh = cp * north + sp * up
    ha = _wrap_hours_pm12(np.arctan2(-east, xh) / HOUR_RAD)
    dec = np.arctan2(zh, np.hypot(xh, east)) / DEG_RAD
    return ha, dec


def parallactic_angle_deg(ha_hours, dec_deg, lat_deg):
    """Parallactic angle q (ERFA ``hd2pa``; Smart, *Spherical Astronomy*, p. 49).

    ``q = atan2(cos phi sin H, sin phi cos d - cos phi sin d cos H)``: the position angle of the
    zenith seen from the object, measured from north through east; 0 on the meridian south of
    the zenith, 180 between the pole and the zenith, negative east of the meridian; 0 at a pole.

    Args:
        ha_hours (array_like): hour angle, hours, any shape.
        dec_deg (array_like): declination, degrees; broadcasts.
        lat_deg (array_like): latitude, degrees; broadcasts.

    Returns:
        ndarray: q in degrees, (-180, 180].

    >>> round(float(parallactic_angle_deg(1.0, 20.0, 52.0)), 6)
    16.52455
    """
    h = np.asarray(ha_hours, dtype=float) * HOUR_RAD
    d = np.asarray(dec_deg, dtype=float) * DEG_RAD
    phi = np.asarray(lat_deg, dtype=float) * DEG_RAD
    cp = np.cos(phi)
    return np.arctan2(cp * np.sin(h), np.sin(phi) * np.cos(d) - cp * np.sin(d) * np.cos(h)) / DEG_RAD


# ---------------------------------------------------------------------------------------------
# fast path for the event engine


class ApparentWindow:
    """Apparent places of a catalogue over a time window, by interpolation (fast path for events).

    The apparent place (unit vector of date, :func:`apparent_radec`) is computed at Chebyshev
    nodes across ``[start_unix, end_unix]`` (3 nodes plus one per day of window) and interpolated
    with the Lagrange polynomial through them.  Inside the window this reproduces
    :func:`apparent_radec` to about 1 mas (the fastest terms are the 13.7-day nutation term and
    the annual aberration); outside it the polynomial extrapolates and degrades quickly.

    Args:
        stars: catalogue, shape (N,).
        start_unix, end_unix: the window, POSIX seconds (end > start).
        dut1_seconds: UT1 - UTC, seconds.
        leap_table: TAI - UTC table.
    """

    def __init__(self, stars: Stars, start_unix: float, end_unix: float, dut1_seconds: float = 0.0,
                 leap_table=BUILTIN_LEAP_TABLE):
        start_unix, end_unix = float(start_unix), float(end_unix)
        if not end_unix > start_unix:
            raise ValueError(f"ApparentWindow needs end_unix > start_unix; got {start_unix} .. {end_unix}")
        days = (end_unix - start_unix) / 86400.0
        n = min(3 + math.ceil(days), 64)
        k = np.arange(n)
        self._nodes = np.cos((2 * k + 1) * np.pi / (2 * n))[::-1].copy()  # in (-1, 1), ascending
        self._mid_unix = 0.5 * (start_unix + end_unix)
        self._half_seconds = 0.5 * (end_unix - start_unix)
        self.stars = stars
        self.start_unix, self.end_unix = start_unix, end_unix
        node_instants = instants_from_unix((self._mid_unix + self._half_seconds * self._nodes)[:, None],
                                           dut1_seconds=dut1_seconds, leap_table=leap_table)
        x, y, z = _apparent_xyz(stars, node_instants)
        self._xyz = np.stack([x, y, z])  # (3, n, N)
        self._denominators = np.array([np.prod([self._nodes[i] - self._nodes[j] for j in range(n) if j != i])
                                       for i in range(n)])

    def unit_vectors_at(self, unix_seconds):
        """Interpolated apparent direction of date (not exactly unit length), components x, y, z.

        Args:
            unix_seconds (array_like): POSIX seconds inside the window; numpy broadcasting of its
                shape against (N,): () -> (N,), (M, 1) -> (M, N), (N,) -> one time per star.

        Returns:
            tuple: ``(x, y, z)`` arrays of the broadcast shape (true equator and equinox of date).
        """
        tau = (np.asarray(unix_seconds, dtype=float) - self._mid_unix) / self._half_seconds
        n = self._nodes.shape[0]
        diffs = [tau - self._nodes[j] for j in range(n)]
        out = [0.0, 0.0, 0.0]
        for i in range(n):
            w = np.ones_like(tau)
            for j in range(n):
                if j != i:
                    w = w * diffs[j]
            w = w / self._denominators[i]
            for c in range(3):
                out[c] = out[c] + w * self._xyz[c, i]
        return tuple(out)

    def radec_at(self, unix_seconds):
        """Interpolated apparent RA/Dec of date.

        Args:
            unix_seconds (array_like): POSIX seconds inside the window (broadcasting as in
                :meth:`unit_vectors_at`).

        Returns:
            tuple: ``(ra_hours, dec_deg)``, RA in [0, 24).
        """
        x, y, z = self.unit_vectors_at(unix_seconds)
        ra_hours = np.arctan2(y, x) / HOUR_RAD
        ra_hours = np.where(ra_hours < 0.0, ra_hours + 24.0, ra_hours)
        return ra_hours, np.arctan2(z, np.hypot(x, y)) / DEG_RAD


# ---------------------------------------------------------------------------------------------
# helpers: apparent direction


def _apparent_xyz(stars: Stars, instants: Instants):
    """Apparent direction of date (x, y, z), first-order aberrated (length 1 + O(1e-4))."""
    tt_w, tt_f = np.asarray(instants.tt_whole), np.asarray(instants.tt_frac)
    npb = bias_precession_nutation_matrix(tt_w, tt_f)
    v = _aberration_vector_date(tt_w, tt_f)
    px, py, pz = _catalogue_xyz_at(stars, tt_w, tt_f)
    x = npb[..., 0, 0] * px + npb[..., 0, 1] * py + npb[..., 0, 2] * pz + v[..., 0]
    y = npb[..., 1, 0] * px + npb[..., 1, 1] * py + npb[..., 1, 2] * pz + v[..., 1]
    z = npb[..., 2, 0] * px + npb[..., 2, 1] * py + npb[..., 2, 2] * pz + v[..., 2]
    return x, y, z


def _catalogue_xyz_at(stars: Stars, tt_w, tt_f):
    """ICRS (BCRS) direction at the given TT, seen from the geocentre: space motion and parallax."""
    px, py, pz = stars._unit_xyz
    pm = stars._pm_xyz_rad_per_year
    if pm is not None:
        dt_years = ((tt_w - stars.epoch_jd_tt) + tt_f) / 365.25
        px, py, pz = px + dt_years * pm[0], py + dt_years * pm[1], pz + dt_years * pm[2]
    plx = stars._parallax_rad
    if plx is not None:
        earth = _earth_position_icrs_au(tt_w, tt_f)
        px = px - plx * earth[..., 0]
        py = py - plx * earth[..., 1]
        pz = pz - plx * earth[..., 2]
    if pm is not None or plx is not None:
        # Renormalise (as ERFA pmpx does) so that aberration, added next, keeps its size: the
        # radial-velocity term alone changes the length by up to ~1e-3 over a century.
        inv = 1.0 / np.sqrt(px * px + py * py + pz * pz)
        px, py, pz = px * inv, py * inv, pz * inv
    return px, py, pz


def _sun_orbit(tt_w, tt_f):
    """Low-precision solar orbit, Meeus ch. 25 [from memory; reference notes §3d].

    Returns:
        tuple: (t centuries TT from J2000, Sun's true geometric longitude rad (mean ecliptic and
        equinox of date), distance au, the Earth's heliocentric velocity in the ecliptic of date
        (vx, vy) au/day).  Longitude good to about 0.005 deg (measured, 1900-2100); velocity (pure
        Kepler motion, the perturbations are left out of it) to about 1e-3 relative.
    """
    t = ((np.asarray(tt_w, dtype=float) - J2000_JD) + tt_f) / JULIAN_CENTURY_DAYS
    l0 = 280.46646 + t * (36000.76983 + t * 0.0003032)
    m = (357.52911 + t * (35999.05029 - t * 0.0001537)) * DEG_RAD
    e = 0.016708634 - t * (0.000042037 + t * 0.0000001267)
    c = ((1.914602 - t * (0.004817 + t * 0.000014)) * np.sin(m) + (0.019993 - 0.000101 * t) * np.sin(2 * m)
         + 0.000289 * np.sin(3 * m))
    nu = m + c * DEG_RAD
    a = 1.000001018
    one_e2 = 1.0 - e * e
    r = a * one_e2 / (1.0 + e * np.cos(nu))
    # Perturbations by Venus (A, B), Jupiter (C), the Moon (D: the Earth's offset from the
    # Earth-Moon barycentre) and a long-period term (E), Meeus, *Astronomical Formulae for
    # Calculators* (1979), ch. 18 [from memory]; arguments use centuries from JD 2415020.0.
    # They halve the worst longitude error against astropy (0.009 -> 0.005 deg, 1900-2100); each
    # term alone was checked to reduce the residual, which confirms its sign and phase.
    t0 = t + (J2000_JD - 2415020.0) / JULIAN_CENTURY_DAYS
    pa = (153.23 + 22518.7541 * t0) * DEG_RAD
    pb = (216.57 + 45037.5082 * t0) * DEG_RAD
    pc = (312.69 + 32964.3577 * t0) * DEG_RAD
    pd = (350.74 + t0 * (445267.1142 - 0.00144 * t0)) * DEG_RAD
    pe = (231.19 + 20.20 * t0) * DEG_RAD
    ph = (353.40 + 65928.7155 * t0) * DEG_RAD
    lon = (l0 + c + 0.00134 * np.cos(pa) + 0.00154 * np.cos(pb) + 0.00200 * np.cos(pc)
           + 0.00179 * np.sin(pd) + 0.00178 * np.sin(pe)) * DEG_RAD
    r = r + (0.00000543 * np.sin(pa) + 0.00001575 * np.sin(pb) + 0.00001627 * np.sin(pc)
             + 0.00003076 * np.cos(pd) + 0.00000927 * np.sin(ph))
    # Kepler motion: dr/dt = a e n sin(nu)/sqrt(1-e^2), r dnu/dt = a n (1 + e cos nu)/sqrt(1-e^2).
    n = 35999.05029 * DEG_RAD / JULIAN_CENTURY_DAYS
    k = a * n / np.sqrt(one_e2)
    rdot, rlondot = k * e * np.sin(nu), k * (1.0 + e * np.cos(nu))
    cl, sl = np.cos(lon), np.sin(lon)
    # The Sun's geocentric velocity is (rdot cl - rlondot sl, rdot sl + rlondot cl); the Earth's
    # heliocentric velocity is its negative.
    vx = -(rdot * cl - rlondot * sl)
    vy = -(rdot * sl + rlondot * cl)
    return t, lon, r, vx, vy


def _aberration_vector_date(tt_w, tt_f):
    """Earth's velocity / c in the (mean ~ true) equator of date, shape instants + (3,)."""
    _, _, _, vx, vy = _sun_orbit(tt_w, tt_f)
    eps = mean_obliquity_rad(tt_w, tt_f)
    v = np.stack([vx, vy * np.cos(eps), vy * np.sin(eps)], axis=-1)
    return v / _C_AU_PER_DAY


def _earth_position_icrs_au(tt_w, tt_f):
    """Earth's heliocentric position (au), ICRS axes to ~1e-3 rad (ample for parallax <= 0.77")."""
    t, lon, r, _, _ = _sun_orbit(tt_w, tt_f)
    # Mean ecliptic of date -> of J2000: remove the general precession in longitude (IAU 2006 p_A,
    # 5028.796195" t + 1.1054348" t^2); Earth = -Sun.
    lon_j2000 = lon - (5028.796195 + 1.1054348 * t) * t * ARCSEC_RAD
    ex, ey = -r * np.cos(lon_j2000), -r * np.sin(lon_j2000)
    return np.stack([ex, ey * _COS_EPS0, ey * _SIN_EPS0], axis=-1)


# ---------------------------------------------------------------------------------------------
# helpers: topocentric


def _positions_from_ha_frame(xh, yh, zh, last_rad, observer: Observer) -> Positions:
    """Positions from a direction in the hour-angle frame (x to the meridian, y west, z north pole).

    The vector need not be of unit length.  ``last_rad`` is the local apparent sidereal time.
    """
    phi = observer.latitude_deg * DEG_RAD
    sp, cp = math.sin(phi), math.cos(phi)
    rxy = np.hypot(xh, yh)
    ha_hours = _wrap_hours_pm12(np.arctan2(yh, xh) * (1.0 / HOUR_RAD))
    dec_deg = np.arctan2(zh, rxy) * (1.0 / DEG_RAD)
    ra_hours = wrap_hours_24(np.asarray(last_rad)[...] * (1.0 / HOUR_RAD) - ha_hours)
    north = cp * zh - sp * xh
    up = cp * xh + sp * zh
    az_deg = _wrap_deg_0_360(np.arctan2(-yh, north) * (1.0 / DEG_RAD))
    alt_geo = np.arctan2(up, np.hypot(north, yh)) * (1.0 / DEG_RAD)
    norm = np.hypot(rxy, zh)
    q_deg = np.arctan2(cp * yh, (sp * rxy * rxy - cp * zh * xh) / norm) * (1.0 / DEG_RAD)
    pressure = observer.effective_pressure_hpa
    if observer.refraction and pressure > 0.0:
        scale = float(_scale(pressure, observer.temperature_c))
        alt = alt_geo + _refraction_from_true_table_deg(alt_geo, scale)
    else:
        alt = alt_geo
    return Positions(ra_hours=ra_hours, dec_deg=dec_deg, ha_hours=ha_hours, alt_deg=alt,
                     alt_geometric_deg=alt_geo, az_deg=az_deg, parallactic_deg=q_deg, airmass=airmass(alt))


def _geocentric_site(observer: Observer):
    """(rho cos phi', rho sin phi') in Earth equatorial radii, WGS84 (Meeus ch. 11 form)."""
    phi = observer.latitude_deg * DEG_RAD
    b_a = 1.0 - _WGS84_FLATTENING
    c = 1.0 / math.sqrt(math.cos(phi) ** 2 + (b_a * math.sin(phi)) ** 2)
    s = b_a * b_a * c
    h = observer.elevation_m / 1000.0 / _EARTH_RADIUS_KM
    return (c + h) * math.cos(phi), (s + h) * math.sin(phi)


def _wrap_hours_pm12(hours):
    """[-12, 12] from arctan2 -> [-12, 12)."""
    return np.where(hours >= 12.0, hours - 24.0, hours)


def _wrap_deg_0_360(deg):
    """(-180, 180] from arctan2 -> [0, 360)."""
    out = np.where(deg < 0.0, deg + 360.0, deg)
    return np.where(out >= 360.0, out - 360.0, out)


# ---------------------------------------------------------------------------------------------
# constants

#: Speed of light, km/s (exact, SI) and au/day (au = 149 597 870.7 km, IAU 2012).
_C_KM_S = 299792.458
_C_AU_PER_DAY = _C_KM_S * 86400.0 / 149597870.7
#: km/s -> au per Julian year, for the radial-velocity term (ERFA pmpx).
_KM_S_TO_AU_PER_YEAR = 86400.0 * 365.25 / 149597870.7
#: WGS84 equatorial radius (km) and flattening.
_EARTH_RADIUS_KM = 6378.137
_WGS84_FLATTENING = 1.0 / 298.257223563
#: Earth rotation rate, rad/s (ERA rate 1.00273781191135448 turns per UT1 day).
_EARTH_ROTATION_RAD_S = 1.00273781191135448 * 2.0 * math.pi / 86400.0
#: Mean obliquity of J2000 (IAU 2006, 84381.406").
_COS_EPS0 = math.cos(84381.406 * ARCSEC_RAD)
_SIN_EPS0 = math.sin(84381.406 * ARCSEC_RAD)
