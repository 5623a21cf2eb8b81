"""Event finders for a site and a time window: transits, hour-angle marks, altitude crossings
(flat or against a horizon profile), and the Sun's and Moon's standard-altitude crossings.

Arrays in, arrays out; no records (``siderod/plan/agenda.py`` turns these arrays into ``Event`` records).
Times are POSIX seconds (UTC); hour angles are hours, positive west; altitudes are **geometric**
(airless) degrees unless a name says ``observed`` -- the conversion of an observed threshold into a
geometric one is :class:`AltitudeLimit`'s job, so refraction is applied exactly once (either the
altitude is refracted or the threshold is lowered, never both).

Method for stars (closed form first, then refinement against the full apparent-place model):

* the apparent place of date of every target is fitted across the window by a polynomial in time
  through a few exact evaluations of :func:`siderod.astro.places.apparent_radec`
  (:class:`TargetTrack`); local apparent sidereal time comes from
  :class:`siderod.astro.sidereal.FastSidereal` (any callable ``unix -> LAST hours`` will do);
* an hour-angle mark H is first placed with the mean sidereal rate from the hour angle at the window
  start, then moved by ``wrap(H - H(t)) / rate`` once with the full model (the step removes the
  error of the guess by a factor of about 1e5, since only the target's own drift is left);
* a crossing of a flat altitude ``h0`` is the hour-angle mark ``H = -/+ acos((sin h0 - sin phi sin d)
  / (cos phi cos d))`` with ``d`` re-evaluated at each refinement step (a fixed-point iteration that
  converges to the crossing of the model, even for grazing targets);
* a crossing of a horizon profile (the limit depends on azimuth) is found from the profile's side:
  the profile is a closed curve in the sky, cut once into pieces along which the declination of
  its points is monotone, so a target crosses it exactly where a piece reaches the target's
  declination -- nothing is sampled along the target's path and no feature is too narrow
  (:func:`find_limit_events` gives the argument); the points are then polished in time with two
  Newton steps on the full model;
* the Sun and the Moon use the generic grid scan of :func:`siderod.astro.search.find_crossings`.

Diurnal aberration (the observer's eastward motion, up to 0.32") is applied everywhere a target's
direction is used: hour-angle marks (it moves a near-polar culmination by up to 0.7 s), altitude
crossings (it moves a crossing at 30 deg by about 0.01 s; none at the horizon, where the apex
lies) and the altitudes and azimuths of :func:`target_altaz`. Polar motion (<= 0.5") is not applied.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass, field

import numpy as np

from siderod.astro.constants import DEG_RAD, HOUR_RAD, SIDEREAL_PER_SOLAR
from siderod.astro.leapseconds import BUILTIN_LEAP_TABLE, LeapTable
from siderod.astro.places import Observer, Stars, apparent_radec
from siderod.astro.refraction import (
    BELOW_HORIZON_TAPER_DEG,
    refraction_deg,
    refraction_from_true_deg,
    refraction_slope,
)
from siderod.astro.search import find_crossings
from siderod.astro.sunmoon import moon_apparent_radec, observe_moon, observe_sun
from siderod.astro.timescales import instants_from_unix

__all__ = [
    "AltitudeLimit",
    "EDGE_TOLERANCE_SECONDS",
    "MOON_STANDARD_ALTITUDE_OFFSET_DEG",
    "SIDEREAL_DAY_SECONDS",
    "SIDEREAL_RATE_HOURS_PER_SECOND",
    "SUN_THRESHOLDS_DEG",
    "TargetTrack",
    "build_track",
    "moving_sample_unix",
    "track_from_apparent",
    "find_altitude_events",
    "find_body_crossings",
    "find_hour_angle_events",
    "find_limit_events",
    "find_moon_events",
    "find_sun_events",
    "in_window",
    "intervals_from_crossings",
    "intersect_intervals",
    "moon_altitude_margin_deg",
    "observed_hour_angle_hours",
    "sun_altitude_deg",
    "target_altaz",
    "track_from_samples",
]

#: Mean sidereal rate in hours of hour angle per second of time (UT1 runs at the UTC rate).
SIDEREAL_RATE_HOURS_PER_SECOND = SIDEREAL_PER_SOLAR * 24.0 / 86400.0
#: One mean sidereal day in seconds: 23 h 56 m 4.0905 s (common practice).
SIDEREAL_DAY_SECONDS = 86400.0 / SIDEREAL_PER_SOLAR
#: Standard altitudes of the Sun's centre for sunset/sunrise and the three twilights, degrees,
#: geometric: -50' (34' horizon refraction + 16' semidiameter) and -6/-12/-18 (astro-references §4i).
SUN_THRESHOLDS_DEG = (-0.8333, -6.0, -12.0, -18.0)
#: Moonrise/moonset: the upper limb at the standard horizon, i.e. the topocentric geometric centre at
#: -34' minus the Moon's semidiameter (Meeus ch. 15's h0 = 0.7275 pi - 34', moved from geocentric
#: to topocentric; astro-references §4i).
MOON_STANDARD_ALTITUDE_OFFSET_DEG = -34.0 / 60.0

#: Events closer than this to a window edge count as at the edge: an event at the start belongs to
#: the window, one at the end to the next window, so back-to-back windows list it exactly once.
EDGE_TOLERANCE_SECONDS = 1e-3
#: Diurnal aberration at the equator, radians: Earth rotation rate x equatorial radius / c
#: (7.292115e-5 rad/s x 6378.137 km / 299792.458 km/s; IERS Conventions constants).
_DIURNAL_ABERRATION_RAD = 7.292115e-5 * 6378.137 / 299792.458
_MOON_RADIUS_KM = 1737.4  # IAU mean radius
_GRID_STEP_SUN_SECONDS = 1200.0  # Sun/Moon altitude grid: extrema are >= ~10 h apart
_CANDIDATE_MARGIN_SECONDS = 120.0
#: Geometric altitudes above which refraction can be non-zero (it is exactly zero under the taper).
_REFRACTED_ABOVE_DEG = BELOW_HORIZON_TAPER_DEG - 0.5
#: A moving body's crossing counts as found when the last refinement step is below this (hours;
#: 3.6 ms of time): a Dec that turns back before the crossing leaves the steps large instead.
_CONVERGED_HOURS = 1e-6
#: Earth's equatorial radius in au (6378.137 km / 149 597 870.7 km): the parallax of a body at
#: distance D au is asin(_EARTH_RADIUS_AU / D).
_EARTH_RADIUS_AU = 6378.137 / 149597870.7
#: Horizon-profile crossings (see find_limit_events and _profile_curve):
#: Polishing: a Newton step longer than the first bound, or a last step longer than the second, means
#: the crossing vanished in the window (a grazing pair merged). The first guess is off by the
#: declination's drift from the window centre: seconds, a few minutes for a grazing crossing at
#: the end of a 48-hour piece; a converging second step is then a fraction of a second.
_POLISH_FIRST_STEP_SECONDS = 900.0
_POLISH_LAST_STEP_SECONDS = 0.5
_POLISH_CONVERGED_SECONDS = 1e-3  # a second step this short leaves microseconds: no third one
_CURVE_NODE_SPACING_DEG = 1.0  # first nodes along each segment (azimuth + altitude travelled)
_CURVE_SPLIT = 8  # uncertain spans are cut into this many
_CURVE_MAX_LEVELS = 16  # 8**16 spans per coarse span: far below any width the bound needs
#: Bounds of Bennett refraction's first and second derivatives at 1010 hPa, 10 degC (scaled with the
#: weather): |dR/dh| <= 0.2185 and |d2R/dh2| <= 0.108 per degree for apparent h in (0, 89.1] deg (zero
#: curvature on the linear taper below 0 deg); measured on a 5e-4 deg grid, checked in
#: tests/astro/test_events.py.
_REFRACTION_SLOPE_MAX = 0.22
_REFRACTION_CURVATURE_MAX_PER_DEG = 0.12
_REFRACTION_CURVATURE_MAX_PER_RAD = _REFRACTION_CURVATURE_MAX_PER_DEG / DEG_RAD


# ---------------------------------------------------------------------------------------------
# target places across a window


@dataclass(frozen=True, eq=False)
class TargetTrack:
    """Apparent geocentric RA/Dec of date of N targets across a window, as polynomials in time.

    Attributes:
        mid_unix: centre of the fitted span, POSIX seconds.
        half_seconds: half the fitted span, seconds (the polynomial variable is
            ``tau = (t - mid_unix) / half_seconds`` in [-1, 1]).
        ra_coeffs_hours: (D+1, N) polynomial coefficients in ``tau``, highest power first; RA is
            unwrapped (continuous), so values may leave [0, 24).
        dec_coeffs_deg: (D+1, N) same for declination.
        parallax_coeffs: (D+1, N) same for the horizontal parallax ``sin(pi) = a_earth / distance``
            (dimensionless), or None for targets too far for parallax to matter (stars). With it,
            every position the finders use is topocentric: the site's geocentric vector
            ``site_rho`` is taken off in the hour-angle frame (the Moon's parallax is about 1 deg).
        site_rho: ``(rho cos phi', rho sin phi')`` of the site, Earth equatorial radii (WGS84).
        refine_steps: refinement steps the finders take per event; 1 is ample for targets that
            drift slowly against the stars, a target as fast as the Moon (0.5 deg an hour) needs a
            few more, since each step removes all but a few percent of the error left.
    """

    mid_unix: float
    half_seconds: float
    ra_coeffs_hours: np.ndarray
    dec_coeffs_deg: np.ndarray
    parallax_coeffs: np.ndarray | None = None
    site_rho: tuple[float, float] = (0.0, 0.0)
    refine_steps: int = 1

    def __len__(self) -> int:
        return self.ra_coeffs_hours.shape[1]

    def ra_rate_at(self, unix_seconds, index=None):
        """d(RA)/dt, hours per second (the derivative of the fitted polynomial)."""
        tau = (np.asarray(unix_seconds, dtype=float) - self.mid_unix) * (1.0 / self.half_seconds)
        ra_c = self.ra_coeffs_hours if index is None else np.take(self.ra_coeffs_hours, index, axis=1)
        degree = ra_c.shape[0] - 1
        rate = np.zeros(np.broadcast_shapes(np.shape(tau), ra_c.shape[1:]))
        for k in range(degree):
            rate = rate * tau + (degree - k) * ra_c[k]
        return rate * (1.0 / self.half_seconds)

    def hadec_at(self, unix_seconds, last_hours_at, index=None, *, radec=None):
        """Topocentric hour angle (hours, [-12, 12)) and declination (degrees) at the site.

        Without parallax coefficients the geocentric place stands (stars); with them the site's
        geocentric vector is subtracted (topocentric parallax). ``radec``: the
        :meth:`radec_at` of the same arguments, when the caller has it already.
        """
        t = np.asarray(unix_seconds, dtype=float)
        ra, dec = self.radec_at(t, index) if radec is None else radec
        ha = _wrap12(last_hours_at(t) - ra)
        if self.parallax_coeffs is None:
            return ha, dec
        p = _poly(self.parallax_coeffs, (t - self.mid_unix) * (1.0 / self.half_seconds), index)
        return _topocentric(ha, dec, p, self.site_rho)

    def dec_range(self, index=None):
        """(low, high) declination over the fitted span, degrees, widened by the parallax."""
        taus = np.linspace(-1.0, 1.0, 9)[:, None]
        t = self.mid_unix + self.half_seconds * taus
        _, dec = self.radec_at(t, index)
        low, high = dec.min(axis=0), dec.max(axis=0)
        if self.parallax_coeffs is not None:
            p = np.abs(_poly(self.parallax_coeffs, taus, index)).max(axis=0)
            reach = np.degrees(np.arcsin(np.clip(p * 1.001, 0.0, 1.0))) + 1e-6
            low, high = low - reach, high + reach
        return low, high

    def ra_at(self, unix_seconds, index=None):
        """Apparent RA of date only (hours, unwrapped); arguments as for :meth:`radec_at`."""
        tau = (np.asarray(unix_seconds, dtype=float) - self.mid_unix) * (1.0 / self.half_seconds)
        ra_c = self.ra_coeffs_hours if index is None else np.take(self.ra_coeffs_hours, index, axis=1)
        ra = ra_c[0] * tau
        for k in range(1, ra_c.shape[0] - 1):
            ra += ra_c[k]
            ra *= tau
        ra += ra_c[-1]
        return ra

    def radec_at(self, unix_seconds, index=None):
        """Apparent RA (hours, unwrapped) and Dec (degrees) of date.

        Args:
            unix_seconds (array_like): POSIX seconds inside the fitted span. Without ``index`` it
                broadcasts against (N,) (targets along the last axis); with ``index`` it broadcasts
                against ``index``.
            index (array_like of int, optional): which target each time belongs to.

        Returns:
            tuple: ``(ra_hours, dec_deg)`` of the broadcast shape.
        """
        tau = (np.asarray(unix_seconds, dtype=float) - self.mid_unix) * (1.0 / self.half_seconds)
        ra_c, dec_c = self.ra_coeffs_hours, self.dec_coeffs_deg
        if index is not None:
            ra_c = np.take(ra_c, index, axis=1)
            dec_c = np.take(dec_c, index, axis=1)
        ra = ra_c[0] * tau
        dec = dec_c[0] * tau
        for k in range(1, ra_c.shape[0] - 1):
            ra += ra_c[k]
            ra *= tau
            dec += dec_c[k]
            dec *= tau
        ra += ra_c[-1]
        dec += dec_c[-1]
        return ra, dec


def track_from_samples(sample_unix, ra_hours, dec_deg) -> TargetTrack:
    """Fit a :class:`TargetTrack` through exact apparent places at a few instants.

    Args:
        sample_unix (array_like): S >= 1 instants, POSIX seconds, increasing.
        ra_hours (array_like): (S, N) apparent RA of date, hours (any branch; unwrapped here).
        dec_deg (array_like): (S, N) apparent Dec of date, degrees.

    Returns:
        TargetTrack: the polynomial of degree S-1 through the samples (constant for S = 1).
    """
    t = np.atleast_1d(np.asarray(sample_unix, dtype=float))
    ra = np.atleast_2d(np.asarray(ra_hours, dtype=float)).copy()
    dec = np.atleast_2d(np.asarray(dec_deg, dtype=float))
    ra[1:] = ra[0] + _wrap12(ra[1:] - ra[0])  # unwrap: apparent RA moves far less than 12 h in a window
    if t.size == 1:
        return TargetTrack(float(t[0]), 1.0, ra, dec.copy())
    mid = 0.5 * (t[0] + t[-1])
    half = 0.5 * (t[-1] - t[0])
    tau = (t - mid) / half
    vander = np.vander(tau, t.size)  # highest power first
    ra_c = np.linalg.solve(vander, ra)
    dec_c = np.linalg.solve(vander, dec)
    return TargetTrack(mid, half, ra_c, dec_c)


def track_from_apparent(sample_unix, unit_xyz, distance_au, site_rho, *,
                        refine_steps: int = 5) -> TargetTrack:
    """Fit a topocentric-capable :class:`TargetTrack` through geocentric apparent places of moving bodies.

    Args:
        sample_unix (array_like): S instants, POSIX seconds, increasing.
        unit_xyz (array_like): (3, S, N) geocentric apparent directions of date.
        distance_au (array_like): (S, N) geocentric distances, au.
        site_rho: ``(rho cos phi', rho sin phi')`` of the site, Earth equatorial radii.
        refine_steps: see :class:`TargetTrack`.

    Returns:
        TargetTrack: with parallax coefficients.
    """
    x, y, z = np.asarray(unit_xyz, dtype=float)
    ra = np.arctan2(y, x) / HOUR_RAD
    dec = np.arctan2(z, np.hypot(x, y)) / DEG_RAD
    # Unwrap RA step by step: a fast body may move far in RA near a pole across the window.
    ra = ra[0] + np.cumsum(np.concatenate([np.zeros_like(ra[:1]), _wrap12(np.diff(ra, axis=0))]), axis=0)
    parallax = _EARTH_RADIUS_AU / np.asarray(distance_au, dtype=float)
    base = track_from_samples(sample_unix, ra, dec)
    t = np.atleast_1d(np.asarray(sample_unix, dtype=float))
    tau = (t - base.mid_unix) / base.half_seconds
    coeffs = np.linalg.solve(np.vander(tau, t.size), parallax)
    return TargetTrack(base.mid_unix, base.half_seconds, base.ra_coeffs_hours, base.dec_coeffs_deg,
                       parallax_coeffs=coeffs, site_rho=(float(site_rho[0]), float(site_rho[1])),
                       refine_steps=refine_steps)


def moving_sample_unix(start_unix: float, end_unix: float):
    """Instants at which to evaluate moving bodies for :func:`track_from_apparent` (POSIX seconds).

    Chebyshev nodes with the ends on the span (padded by two minutes): 4 nodes plus 3 per day,
    which fits the Moon's geocentric place over a day to a few milliarcseconds (its longitude's
    largest periodic terms have periods of two weeks and longer).
    """
    lo = float(start_unix) - _CANDIDATE_MARGIN_SECONDS
    hi = float(end_unix) + _CANDIDATE_MARGIN_SECONDS
    n = 4 + int(math.ceil(3.0 * (hi - lo) / 86400.0))
    k = np.arange(n)
    nodes = np.cos((2 * k + 1) * np.pi / (2 * n))[::-1]
    nodes = nodes / nodes[-1]
    return 0.5 * (lo + hi) + 0.5 * (hi - lo) * nodes


def build_track(stars: Stars, start_unix: float, end_unix: float, *, dut1_seconds: float = 0.0,
                leap_table: LeapTable = BUILTIN_LEAP_TABLE) -> TargetTrack:
    """Apparent places of a catalogue across a window (padded by two minutes each side).

    Evaluates :func:`siderod.astro.places.apparent_radec` at Chebyshev nodes (3 nodes plus one per
    day of window) and fits the polynomial through them. The fastest terms of the apparent place
    are the 13.7-day nutation term and the annual aberration, so over a day a quadratic reproduces
    the exact model to a few milliarcseconds.

    Args:
        stars: catalogue, shape (N,).
        start_unix, end_unix: the window, POSIX seconds (UTC).
        dut1_seconds: UT1 - UTC, seconds.
        leap_table: TAI - UTC table.

    Returns:
        TargetTrack: for the N stars.
    """
    lo = float(start_unix) - _CANDIDATE_MARGIN_SECONDS
    hi = float(end_unix) + _CANDIDATE_MARGIN_SECONDS
    n = 3 + int(math.ceil((hi - lo) / 86400.0)) - 1
    k = np.arange(n)
    nodes = np.cos((2 * k + 1) * np.pi / (2 * n))[::-1]
    # Put the end nodes on the span ends so the fit interpolates rather than extrapolates there.
    nodes = nodes / nodes[-1]
    sample = 0.5 * (lo + hi) + 0.5 * (hi - lo) * nodes
    instants = instants_from_unix(sample[:, None], dut1_seconds=dut1_seconds, leap_table=leap_table)
    ra_hours, dec_deg = apparent_radec(stars, instants)
    return track_from_samples(sample, ra_hours, dec_deg)


# ---------------------------------------------------------------------------------------------
# altitude limits


@dataclass(frozen=True, eq=False)
class AltitudeLimit:
    """Each target's lowest usable altitude, which may depend on azimuth (a horizon profile).

    The limit for target j at azimuth A is ``max(profile(A), min_alt_deg[j])`` where the profile is
    interpolated linearly between its points and wraps through azimuth 0; an empty profile is a
    flat horizon at -90 deg (so only the minimum counts). Limits are *observed* altitudes; with
    ``refraction`` on they are turned into geometric ones by subtracting Bennett refraction
    (:func:`siderod.astro.refraction.refraction_deg`), with it off they are used as geometric.

    Attributes:
        min_alt_deg: (N,) per-target minimum altitude, degrees.
        profile_az_deg: (K,) azimuths of the profile points, degrees, increasing (may be empty).
        profile_alt_deg: (K,) lowest usable altitude at those azimuths, degrees.
        refraction: compare refracted altitudes with the limit (True) or geometric ones (False).
        pressure_hpa, temperature_c: weather for refraction.
    """

    min_alt_deg: np.ndarray
    profile_az_deg: np.ndarray = field(default_factory=lambda: np.zeros(0))
    profile_alt_deg: np.ndarray = field(default_factory=lambda: np.zeros(0))
    refraction: bool = True
    pressure_hpa: float = 1010.0
    temperature_c: float = 10.0

    def observed_deg(self, az_deg, index=None):
        """The limit (observed altitude, degrees) at ``az_deg`` for targets ``index`` (broadcasting)."""
        floor = self.min_alt_deg if index is None else self.min_alt_deg[index]
        if self.profile_az_deg.size == 0:
            return np.broadcast_to(floor, np.broadcast_shapes(np.shape(az_deg), np.shape(floor))).copy()
        profile = np.interp(az_deg, self.profile_az_deg, self.profile_alt_deg, period=360.0)
        return np.maximum(profile, floor)

    def geometric_deg(self, az_deg, index=None):
        """The limit as a geometric altitude, degrees (see :meth:`to_geometric_deg`)."""
        return self.to_geometric_deg(self.observed_deg(az_deg, index))

    def to_geometric_deg(self, observed_deg):
        """Observed altitude -> geometric altitude (identity with refraction off)."""
        observed = np.asarray(observed_deg, dtype=float)
        if not self.refraction:
            return observed
        return observed - refraction_deg(observed, self.pressure_hpa, self.temperature_c)

    def to_observed_deg(self, geometric_deg):
        """Geometric altitude -> the altitude to report (refracted when refraction is on)."""
        geometric = np.asarray(geometric_deg, dtype=float)
        if not self.refraction:
            return geometric
        if geometric.size < 256:
            return geometric + refraction_from_true_deg(geometric, self.pressure_hpa, self.temperature_c)
        # Refraction is exactly zero below the taper (refraction.BELOW_HORIZON_TAPER_DEG): many
        # events (lower culminations, marks under the horizon) are there, so skip the formula for them.
        out = geometric.copy()
        near = geometric > _REFRACTED_ABOVE_DEG
        out[near] += refraction_from_true_deg(geometric[near], self.pressure_hpa, self.temperature_c)
        return out

    def band_geometric_deg(self):
        """(low, high): per target, the lowest and highest geometric limit over all azimuths, (N,)."""
        floor = np.asarray(self.min_alt_deg, dtype=float)
        if self.profile_az_deg.size == 0:
            g = self.to_geometric_deg(floor)
            return g, g.copy()
        low = np.maximum(floor, self.profile_alt_deg.min())
        high = np.maximum(floor, self.profile_alt_deg.max())
        return self.to_geometric_deg(low), self.to_geometric_deg(high)

    def depends_on_azimuth(self):
        """(N,) bool: True where the profile rises above the target's minimum somewhere."""
        if self.profile_az_deg.size == 0:
            return np.zeros(np.shape(self.min_alt_deg), dtype=bool)
        return np.asarray(self.min_alt_deg) < self.profile_alt_deg.max()


# ---------------------------------------------------------------------------------------------
# targets: positions at given instants


def target_altaz(track: TargetTrack, last_hours_at, latitude_deg: float, unix_seconds, index=None, *,
                 radec=None):
    """Geometric altitude, azimuth and hour angle of targets at given instants (full model).

    Args:
        track: apparent places across the window.
        last_hours_at: callable ``unix -> LAST hours`` at the site (e.g. ``FastSidereal.last_hours``
            with the site longitude bound).
        latitude_deg: site latitude, degrees, north positive.
        unix_seconds (array_like): instants, POSIX seconds; broadcasts as in
            :meth:`TargetTrack.radec_at`.
        index (array_like of int, optional): target of each instant.
        radec (tuple, optional): ``track.radec_at(unix_seconds, index)``, when the caller has it.

    Returns:
        tuple: ``(alt_deg, az_deg, ha_hours)``: geometric altitude, azimuth (N through E, [0, 360)),
        hour angle in [-12, 12).
    """
    t = np.asarray(unix_seconds, dtype=float)
    ha, dec = track.hadec_at(t, last_hours_at, index, radec=radec)
    alt, az = _altaz(ha, dec, latitude_deg, aberration=True)
    return alt, az, ha


def observed_hour_angle_hours(ha_hours, dec_deg, latitude_deg: float):
    """Hour angle with diurnal aberration applied (what the marks of
    :func:`find_hour_angle_events` refer to): ``H - k cos H / cos d``, k <= 0.32"."""
    ha = np.asarray(ha_hours, dtype=float)
    k_hours = _DIURNAL_ABERRATION_RAD * math.cos(latitude_deg * DEG_RAD) / HOUR_RAD
    return ha - k_hours * np.cos(ha * HOUR_RAD) / np.maximum(np.cos(np.asarray(dec_deg) * DEG_RAD), 1e-3)


# ---------------------------------------------------------------------------------------------
# targets: hour-angle marks


def find_hour_angle_events(track: TargetTrack, last_hours_at, ha_hours, start_unix: float,
                           end_unix: float, *, latitude_deg: float | None = None, index=None):
    """Every instant in the window at which targets reach given hour angles.

    Culmination is ``ha_hours=0``, lower culmination ``12``; a meridian flip due 10 minutes past
    the meridian is ``10/60``.

    Args:
        track: apparent places of the N targets across the window.
        last_hours_at: callable ``unix -> LAST hours`` at the site.
        ha_hours (array_like): hour angle to reach, hours, scalar or one per mark (shape of ``index``,
            or (N,) without ``index``).
        start_unix, end_unix: the window, POSIX seconds; half-open ``[start, end)`` (events within
            1 ms of an edge count as on it).
        latitude_deg: site latitude; when given, diurnal aberration is applied so the mark is reached
            by the *observed* hour angle (it moves a culmination at Dec 89 deg by about 0.7 s).
        index (array_like of int, optional): the target of each mark (default: every target once).

    Returns:
        tuple: ``(index, unix_seconds, mark)``: flat arrays sorted by time; ``mark`` is the position
        of the mark in the flattened ``ha_hours`` (for telling several marks of one target apart).
    """
    idx = np.arange(len(track)) if index is None else np.asarray(index, dtype=np.intp)
    ha = np.broadcast_to(np.asarray(ha_hours, dtype=float), idx.shape).astype(float)
    mark = np.arange(idx.size)
    if latitude_deg is not None and idx.size:
        _, dec0 = track.radec_at(track.mid_unix, idx)
        k_hours = (_DIURNAL_ABERRATION_RAD * math.cos(latitude_deg * DEG_RAD) / HOUR_RAD)
        ha = ha + k_hours * np.cos(ha * HOUR_RAD) / np.maximum(np.cos(dec0 * DEG_RAD), 1e-3)
    cand_idx, cand_t, cand_mark = _mark_candidates(track, last_hours_at, idx, ha, mark, start_unix, end_unix)
    target = ha[cand_mark]
    # For stars one step suffices: the first guess is off only by the target's own drift in RA
    # over the window (<= ~1 s of time near the pole), and a step leaves that error times ~1e-5.
    # Moving bodies take ``track.refine_steps`` steps at their own hour-angle rate.
    for _ in range(track.refine_steps):
        if track.parallax_coeffs is None:
            ra = track.ra_at(cand_t, cand_idx)
            cand_t = cand_t + _wrap12(target - (last_hours_at(cand_t) - ra)) * (
                1.0 / SIDEREAL_RATE_HOURS_PER_SECOND)
        else:
            h, _ = track.hadec_at(cand_t, last_hours_at, cand_idx)
            rate = SIDEREAL_RATE_HOURS_PER_SECOND - track.ra_rate_at(cand_t, cand_idx)
            cand_t = cand_t + _wrap12(target - h) / rate
    keep = in_window(cand_t, start_unix, end_unix)
    found = _sorted(cand_idx[keep], cand_t[keep], cand_mark[keep])
    return found if track.parallax_coeffs is None else _dedupe(*found)


# ---------------------------------------------------------------------------------------------
# targets: flat altitude crossings


def find_altitude_events(track: TargetTrack, last_hours_at, latitude_deg: float, threshold_deg,
                         start_unix: float, end_unix: float, *, index=None):
    """Every instant in the window at which targets cross a fixed geometric altitude.

    Args:
        track: apparent places of the N targets.
        last_hours_at: callable ``unix -> LAST hours`` at the site.
        latitude_deg: site latitude, degrees.
        threshold_deg (array_like): geometric altitude to cross, degrees; scalar or one per target
            in ``index`` (or (N,)). Convert observed thresholds first with
            :meth:`AltitudeLimit.to_geometric_deg`.
        start_unix, end_unix: the window (half-open, as in :func:`find_hour_angle_events`).
        index (array_like of int, optional): targets to search (default all).

    Returns:
        tuple: ``(index, unix_seconds, rising)`` flat arrays sorted by time. Targets that never
        cross (circumpolar above the threshold, or never reaching it) contribute nothing; tell them
        apart with :func:`target_altaz` at any instant.
    """
    idx = np.arange(len(track)) if index is None else np.asarray(index, dtype=np.intp)
    h0 = np.broadcast_to(np.asarray(threshold_deg, dtype=float), idx.shape)
    sin_h0 = np.sin(h0 * DEG_RAD)
    sp, cp = math.sin(latitude_deg * DEG_RAD), max(math.cos(latitude_deg * DEG_RAD), 1e-12)
    _, dec_mid = track.radec_at(track.mid_unix, idx)
    cos_h = _cos_crossing(sin_h0, dec_mid, sp, cp)
    # Keep a small margin: the Dec drift over the window may turn a near-miss into a crossing.
    crosses = np.abs(cos_h) < 1.0 + 1e-6
    if track.parallax_coeffs is not None:
        # A body's Dec (and its parallax) move far more: it crosses unless it stays on one side of
        # the threshold's Dec limit over its whole Dec range.
        dec_lo, dec_hi = track.dec_range(idx)
        c_lo = _cos_crossing(sin_h0, dec_lo, sp, cp)
        c_hi = _cos_crossing(sin_h0, dec_hi, sp, cp)
        crosses = ~(((c_lo > 1.0) & (c_hi > 1.0) & (cos_h > 1.0))
                    | ((c_lo < -1.0) & (c_hi < -1.0) & (cos_h < -1.0)))
    sub = np.flatnonzero(crosses)
    hc = np.arccos(np.clip(cos_h[sub], -1.0, 1.0)) / HOUR_RAD
    both_idx = np.concatenate([idx[sub], idx[sub]])
    both_ha = np.concatenate([-hc, hc])
    both_sin = np.concatenate([sin_h0[sub], sin_h0[sub]])
    sign = np.concatenate([-np.ones(sub.size), np.ones(sub.size)])
    mark = np.arange(both_idx.size)
    cand_idx, cand_t, cand_mark = _mark_candidates(track, last_hours_at, both_idx, both_ha, mark,
                                                   start_unix, end_unix)
    s_h0, s = both_sin[cand_mark], sign[cand_mark]
    valid = np.ones(cand_t.shape, dtype=bool)
    step_hours = np.zeros(cand_t.shape)
    k = _DIURNAL_ABERRATION_RAD * cp
    for _ in range(track.refine_steps + 1):
        ha, dec = track.hadec_at(cand_t, last_hours_at, cand_idx)
        # Diurnal aberration: the seen altitude is asin(sin h / sqrt(1 - 2k y_h + k^2)), y_h =
        # cos d sin H (module docstring); its factor is taken at the current hour angle, which the
        # first guess already puts within seconds of the crossing.
        y_h = np.cos(dec * DEG_RAD) * np.sin(ha * HOUR_RAD)
        c = _cos_crossing(s_h0 * np.sqrt(1.0 - 2.0 * k * y_h + k * k), dec, sp, cp)
        valid = np.abs(c) <= 1.0
        target = s * np.arccos(np.clip(c, -1.0, 1.0)) / HOUR_RAD
        step_hours = _wrap12(target - ha)
        if track.parallax_coeffs is None:
            rate = SIDEREAL_RATE_HOURS_PER_SECOND
        else:
            rate = SIDEREAL_RATE_HOURS_PER_SECOND - track.ra_rate_at(cand_t, cand_idx)
        cand_t = cand_t + step_hours / rate
    if track.parallax_coeffs is not None:
        # A body whose Dec turns back may not cross after all; keep converged crossings only.
        valid &= np.abs(step_hours) < _CONVERGED_HOURS
    keep = valid & in_window(cand_t, start_unix, end_unix)
    out_idx, out_t, out_sign = _sorted(cand_idx[keep], cand_t[keep], sign[cand_mark[keep]])
    if track.parallax_coeffs is not None:
        out_idx, out_t, out_sign = _dedupe(out_idx, out_t, out_sign)
    return out_idx, out_t, out_sign < 0.0


# ---------------------------------------------------------------------------------------------
# targets: crossings of an azimuth-dependent limit (horizon profile)


def find_limit_events(track: TargetTrack, last_hours_at, latitude_deg: float, limit: AltitudeLimit,
                      start_unix: float, end_unix: float, *, index=None):
    """Every instant in the window at which targets cross their azimuth-dependent limit.

    The limit of target j is ``max(profile(A), floor_j)`` (:class:`AltitudeLimit`), so a target is
    below it exactly when it is below its floor *or* below the profile. Each crossing of the limit
    is therefore a crossing of one of the two while the target is above the other, and the two are
    found separately, each completely:

    * **the floor** is a flat altitude: its crossings come in closed form from
      :func:`find_altitude_events`; one is kept where the profile at that azimuth is below the floor;
    * **the profile** is a closed curve in the sky (straight segments in azimuth and observed
      altitude, turned into geometric altitude by the refraction of :class:`AltitudeLimit`). A
      target of declination d crosses it exactly where a point of the curve has declination d,
      once per sidereal day per such point (a star's declination does not change as it turns).
      The curve is cut into *pieces* along which the declination of its points is strictly
      monotone (:func:`_profile_curve`, computed once per profile, latitude and weather); on
      such a piece each declination occurs at most once, so a target crosses a piece at most once
      per sidereal day, and does cross it when its declination lies in the piece's range. The
      crossing's direction is the piece's: the stars rise where the curve's declination falls as
      the azimuth grows (the eastern half of a flat horizon), and set where it rises. Each
      matching (target, piece) gives the point (solved on the piece), its hour angle and so the
      times, which are then polished on the full model (two Newton steps in time against the
      piece's own segment, the target's declination moving with the fitted track). A crossing is
      kept where the profile there is above the target's floor.

    Nothing is sampled along a target's path, so no feature is too narrow: a notch or spike of any
    width, a wall of 200 points, points closer than 1 deg and segments through north all reduce to
    pieces of the same curve. What the proof rests on, and what it leaves out:

    * the monotone pieces are certified, not guessed: between two sampled points of a segment the
      derivative of the declination cannot vanish when it exceeds a bound on its own derivative
      times the spacing; uncertain spans are subdivided until certified, and any left (narrower
      than about 1e-8 of the segment) become pieces of their own, inside which sin(declination) can
      turn back by no more than about 1e-15 (a grazing dip far below a micro-arcsecond);
    * the declination used for matching is the track's at the window centre; its drift over a
      window (under 2" per day) is followed by the polishing, which only fails where a crossing pair
      on either side of a turning point of the curve merges and vanishes during the window (the
      target grazes the curve by less than its drift; such a pair is dropped together);
    * events closer than 1 ms to a window edge follow :data:`EDGE_TOLERANCE_SECONDS`.

    The argument is for targets with a fixed place (stars, catalogue objects): their declination
    drifts by arcseconds a day. A body whose declination moves (a track with parallax: the Moon, a
    planet, a comet) is matched to every piece its declination range over the window meets, and
    each candidate is followed in time (:func:`_follow_moving`: the body's declination at each step
    picks the point of the piece); a candidate whose declination leaves the piece is dropped.

    Args:
        track, last_hours_at, latitude_deg: as for :func:`find_altitude_events`.
        limit: the per-target, per-azimuth limit.
        start_unix, end_unix: the window (half-open).
        index (array_like of int, optional): targets to search (default all).

    Returns:
        tuple: ``(index, unix_seconds, rising)`` flat arrays sorted by time.
    """
    idx = np.arange(len(track)) if index is None else np.asarray(index, dtype=np.intp)
    if idx.size == 0:
        return _empty_crossings()
    floor_obs = np.asarray(limit.min_alt_deg, dtype=float)
    parts = []
    f_idx, f_t, f_rising = find_altitude_events(track, last_hours_at, latitude_deg,
                                                limit.to_geometric_deg(floor_obs[idx]), start_unix, end_unix,
                                                index=idx)
    if limit.profile_az_deg.size and f_idx.size:
        _, az, _ = target_altaz(track, last_hours_at, latitude_deg, f_t, f_idx)
        keep = _profile_observed_deg(limit, az) < floor_obs[f_idx]
        f_idx, f_t, f_rising = f_idx[keep], f_t[keep], f_rising[keep]
    parts.append((f_idx, f_t, f_rising))
    if limit.profile_az_deg.size:
        parts.append(_profile_crossings(track, last_hours_at, latitude_deg, limit, idx, start_unix, end_unix))
    out_idx = np.concatenate([p[0] for p in parts])
    out_t = np.concatenate([p[1] for p in parts])
    out_rising = np.concatenate([p[2] for p in parts])
    order = np.argsort(out_t)  # SIMD quicksort: several times a stable sort's speed; ties are harmless
    return out_idx[order], out_t[order], out_rising[order]


def _profile_observed_deg(limit: AltitudeLimit, az_deg):
    """The profile alone (observed altitude, degrees) at ``az_deg``, without any target's floor."""
    return np.interp(az_deg, limit.profile_az_deg, limit.profile_alt_deg, period=360.0)


def _profile_crossings(track, last_hours_at, latitude_deg, limit, idx, start_unix, end_unix):
    """Crossings of the profile alone, kept where the profile is above each target's floor."""
    floor_obs = np.asarray(limit.min_alt_deg, dtype=float)
    # Targets whose floor is at or above the whole profile never meet it.
    idx = idx[floor_obs[idx] < float(np.max(limit.profile_alt_deg))]
    if idx.size == 0:
        return _empty_crossings()
    curve = _profile_curve(tuple(np.asarray(limit.profile_az_deg, dtype=float).tolist()),
                           tuple(np.asarray(limit.profile_alt_deg, dtype=float).tolist()),
                           float(latitude_deg), bool(limit.refraction), float(limit.pressure_hpa),
                           float(limit.temperature_c))
    _, dec_mid = track.radec_at(track.mid_unix, idx)
    z_mid = np.sin(dec_mid * DEG_RAD)
    moving = track.parallax_coeffs is not None
    if moving:
        # A body's declination moves across the window: every piece its declination range meets
        # is a candidate, followed in time below.
        dec_lo, dec_hi = track.dec_range(idx)
        piece, star = curve.match_range(np.sin(dec_lo * DEG_RAD), np.sin(dec_hi * DEG_RAD))
        z_guess = np.clip(z_mid[star], curve.piece_lo[piece], curve.piece_hi[piece])
    else:
        piece, star = curve.match(z_mid)
        z_guess = z_mid[star]
    if piece.size == 0:
        return _empty_crossings()
    alt_obs, ha_rad, seg = curve.solve(piece, z_guess)
    if not moving:
        keep = alt_obs > floor_obs[idx[star]]
        piece, star, ha_rad, seg = piece[keep], star[keep], ha_rad[keep], seg[keep]
    ha_hours = ha_rad / HOUR_RAD
    targets = idx[star]
    rising = curve.piece_rising[piece]
    mark = np.arange(targets.size)
    cand_idx, cand_t, cand_mark = _mark_candidates(track, last_hours_at, targets, ha_hours, mark,
                                                   start_unix, end_unix)
    if moving:
        cand_t, seg_c, ok = _follow_moving(track, last_hours_at, curve, piece[cand_mark], cand_idx, cand_t)
        alt_c, _, _ = curve.solve(piece[cand_mark], np.sin(track.hadec_at(cand_t, last_hours_at, cand_idx)[1]
                                                            * DEG_RAD))
        ok &= alt_c > floor_obs[cand_idx]
        cand_idx, cand_t, cand_mark, seg_c = cand_idx[ok], cand_t[ok], cand_mark[ok], seg_c[ok]
    else:
        # One hour-angle step as in find_hour_angle_events puts each guess on the crossing's hour
        # angle.
        ra = track.ra_at(cand_t, cand_idx)
        cand_t = cand_t + _wrap12(ha_hours[cand_mark] - (last_hours_at(cand_t) - ra)) \
            * (1.0 / SIDEREAL_RATE_HOURS_PER_SECOND)
        seg_c = seg[cand_mark]
    cand_t, ok = _polish_profile_crossings(track, last_hours_at, latitude_deg, curve, seg_c, cand_idx, cand_t,
                                           rising[cand_mark])
    keep = ok & in_window(cand_t, start_unix, end_unix)
    out_idx, out_t, out_mark = cand_idx[keep], cand_t[keep], cand_mark[keep]
    if moving:
        order = np.argsort(out_t, kind="stable")
        out_idx, out_t, out_mark = _dedupe(out_idx[order], out_t[order], out_mark[order], by_mark=False)
    return out_idx, out_t, rising[out_mark]


def _follow_moving(track, last_hours_at, curve, piece, idx, t):
    """Fixed-point steps in time for bodies whose declination moves: at each step the body's
    current topocentric declination picks the point of its piece, whose hour angle the body is
    then stepped to at its own hour-angle rate. Converged where the step is below
    ``_CONVERGED_HOURS`` with the declination inside the piece's range; returns ``(t, seg, ok)``."""
    step = np.zeros(t.shape)
    z = np.zeros(t.shape)
    for _ in range(track.refine_steps + 3):
        ha, dec = track.hadec_at(t, last_hours_at, idx)
        z = np.sin(dec * DEG_RAD)
        _, ha_point, seg = curve.solve(piece, np.clip(z, curve.piece_lo[piece], curve.piece_hi[piece]))
        rate = SIDEREAL_RATE_HOURS_PER_SECOND - track.ra_rate_at(t, idx)
        step = _wrap12(ha_point / HOUR_RAD - ha)
        t = t + np.clip(step / rate, -1800.0, 1800.0)
    ok = (np.abs(step) < _CONVERGED_HOURS) & (z >= curve.piece_lo[piece]) & (z <= curve.piece_hi[piece])
    return t, seg, ok


def _polish_profile_crossings(track, last_hours_at, latitude_deg, curve, seg, idx, t, rising):
    """Newton steps in time on the full model against each crossing's own segment.

    The margin is the target's altitude (track place, diurnal aberration) minus the segment's
    geometric altitude at the target's azimuth, the segment's straight line extended past its
    ends: a smooth function, whatever the neighbouring segments do (with points 0.01 deg apart a
    target passes several segments a second, so a difference quotient over the whole profile
    would straddle kinks). Its rate is exact: ``dh/dt = w cos(lat) sin A`` and ``dA/dt = w (sin(lat)
    - cos(lat) tan h cos A)``, w the sidereal rate. The first guesses are off only by the
    declination's drift since the window centre; a crossing that drifted onto the next segment
    is then placed on this one's extension, off by the drift's share of the bend (sub-millisecond).

    Returns the times and a flag that is False where the crossing vanished (a grazing pair that
    merged in the window: the rate has the wrong sign or a step is implausibly long).
    """
    if idx.size == 0:
        return t, np.zeros(0, dtype=bool)
    ok = np.ones(idx.shape, dtype=bool)
    sp, cp = math.sin(latitude_deg * DEG_RAD), math.cos(latitude_deg * DEG_RAD)
    omega = np.full(idx.shape, SIDEREAL_RATE_HOURS_PER_SECOND * HOUR_RAD)
    if track.parallax_coeffs is not None:  # a body turns at its own hour-angle rate
        omega = (SIDEREAL_RATE_HOURS_PER_SECOND - track.ra_rate_at(t, idx)) * HOUR_RAD

    def newton_step(sel):
        alt, az, _ = target_altaz(track, last_hours_at, latitude_deg, t[sel], idx[sel])
        limit_deg, slope_deg_per_deg = curve.line_deg(seg[sel], az)
        a, h = az * DEG_RAD, alt * DEG_RAD
        rate = omega[sel] * (cp * np.sin(a) - slope_deg_per_deg * (sp - cp * np.tan(h) * np.cos(a)))
        good = np.where(rising[sel], rate > 0.0, rate < 0.0)
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where(good, -(alt - limit_deg) * DEG_RAD / rate, np.inf)

    everyone = np.arange(idx.size)
    step = newton_step(everyone)
    ok &= np.abs(step) < _POLISH_FIRST_STEP_SECONDS
    t = t + np.where(ok, step, 0.0)
    step = newton_step(everyone)
    ok &= np.abs(step) < _POLISH_FIRST_STEP_SECONDS
    t = t + np.where(ok, step, 0.0)
    # A third step where the second was still long (a guess that started minutes away).
    again = np.flatnonzero(ok & (np.abs(step) > _POLISH_CONVERGED_SECONDS))
    if again.size:
        step = newton_step(again)
        good = np.abs(step) < _POLISH_LAST_STEP_SECONDS
        t[again] = t[again] + np.where(good, step, 0.0)
        ok[again] &= good
    return t, ok


@dataclass(frozen=True, eq=False)
class _CurvePoint:
    """Points of the profile curve (arrays of one shape)."""

    alt_obs_deg: np.ndarray  # observed altitude of the profile there
    z: np.ndarray  # sin(true declination) of the direction seen there
    dz_du: np.ndarray  # its derivative along the segment parameter u
    x_h: np.ndarray  # true direction in the hour-angle frame (unnormalised; H = atan2(y_h, x_h))
    y_h: np.ndarray


class _ProfileCurve:
    """A horizon profile as a closed curve, cut into pieces of monotone declination.

    Segments: the profile's straight segments (observed altitude linear in azimuth, the last one
    wrapping through north), further cut where the observed altitude passes a kink of the
    refraction formula. On segment s a point is ``A = a0 + u da``, ``P = p0 + u dp`` for u in
    [0, 1]; its geometric altitude is ``G = P - R(P)`` (or ``P`` with refraction off). Its
    direction seen at the site is turned into a true (unaberrated) hour angle and declination by
    removing diurnal aberration; ``z = sin(true declination)``.

    Pieces: maximal runs of a segment between break nodes. Break nodes are the segment ends and
    the ends of the spans that could not be certified free of turning points of z (see
    :func:`_profile_curve`); between them ``dz/du`` keeps one sign, so z is strictly monotone.
    """

    def __init__(self, lat_deg, aberration_rad, seg_a0, seg_da, seg_p0, seg_dp, refraction, pressure,
                 temperature):
        self.sin_lat = math.sin(lat_deg * DEG_RAD)
        self.cos_lat = math.cos(lat_deg * DEG_RAD)
        self.k = aberration_rad
        self.a0, self.da, self.p0, self.dp = seg_a0, seg_da, seg_p0, seg_dp
        self.refraction, self.pressure, self.temperature = refraction, pressure, temperature

    def geometric_deg(self, observed_deg):
        if not self.refraction:
            return observed_deg
        return observed_deg - refraction_deg(observed_deg, self.pressure, self.temperature)

    def point(self, seg, u) -> _CurvePoint:
        """Position, ``z`` and ``dz/du`` at parameter ``u`` of segments ``seg`` (arrays)."""
        da = self.da[seg]
        dp = self.dp[seg]
        a = (self.a0[seg] + u * da) * DEG_RAD
        p = self.p0[seg] + u * dp
        g = self.geometric_deg(p)
        if self.refraction:
            # dG/dP = 1 - dR/dP, taken just inside the segment: its ends may sit on a kink of R.
            inside = self.p0[seg] + np.clip(u, 1e-9, 1.0 - 1e-9) * dp
            g_slope = 1.0 - refraction_slope(inside, self.pressure, self.temperature)
        else:
            g_slope = np.ones_like(g)
        dg = g_slope * dp * DEG_RAD  # dG/du, radians
        da_rad = da * DEG_RAD
        g_rad = g * DEG_RAD
        sa, ca, sg, cg = np.sin(a), np.cos(a), np.sin(g_rad), np.cos(g_rad)
        sp, cp = self.sin_lat, self.cos_lat
        # Hour-angle frame (x towards the meridian's upper point of the equator, y west, z pole).
        north = cg * ca
        x_h = cp * sg - sp * north
        y_h = -cg * sa
        z_h = sp * sg + cp * north
        dz_h = sp * cg * dg + cp * (-sg * dg * ca - cg * sa * da_rad)
        dy_h = sg * dg * sa - cg * ca * da_rad
        # Seen direction = true direction shifted by k towards the east (-y): undo it.
        w = 1.0 / np.sqrt(1.0 + 2.0 * self.k * y_h + self.k * self.k)
        z = z_h * w
        dz = dz_h * w - z_h * self.k * dy_h * w ** 3
        return _CurvePoint(p, z, dz, x_h, y_h + self.k)

    def finish(self, node_seg, node_u, breaks):
        """Set the node table and pieces from nodes sorted by (segment, u) and break flags."""
        pt = self.point(node_seg, node_u)
        node_z = pt.z
        self.node_seg, self.node_u, self.node_z = node_seg, node_u, node_z
        self.node_alt, self.node_x, self.node_y = pt.alt_obs_deg, pt.x_h, pt.y_h
        first = np.flatnonzero(breaks)[:-1]
        last = np.flatnonzero(breaks)[1:]
        same = node_seg[first] == node_seg[last]
        first, last = first[same], last[same]
        self.piece_first, self.piece_last = first, last
        z_first, z_last = node_z[first], node_z[last]
        self.piece_lo = np.minimum(z_first, z_last)
        self.piece_hi = np.maximum(z_first, z_last)
        # Rising where the declination falls along the curve (see find_limit_events).
        self.piece_rising = z_last < z_first
        # Lookup table: each piece's nodes, keyed so that the keys increase through the table.
        length = last - first + 1
        piece_of = np.repeat(np.arange(first.size), length)
        node = np.arange(length.sum()) - np.repeat(np.cumsum(length) - length, length) + first[piece_of]
        orient = np.where(self.piece_rising, -1.0, 1.0)
        self.table_node = node
        self.table_key = 4.0 * piece_of + orient[piece_of] * node_z[node]
        self.table_start = np.cumsum(length) - length

    def match_range(self, z_low, z_high):
        """Every (piece, body) whose z range [z_low, z_high] meets the piece's (for moving bodies)."""
        meets = (z_low[None, :] <= self.piece_hi[:, None]) & (z_high[None, :] >= self.piece_lo[:, None])
        return np.nonzero(meets)

    def match(self, z_star):
        """Every (piece, star) with the star's z in the piece's half-open range [lo, hi)."""
        order = np.argsort(z_star)
        zs = z_star[order]
        lo = np.searchsorted(zs, self.piece_lo, side="left")
        hi = np.searchsorted(zs, self.piece_hi, side="left")
        count = hi - lo
        piece = np.repeat(np.arange(lo.size), count)
        pos = np.arange(count.sum()) - np.repeat(np.cumsum(count) - count, count) + np.repeat(lo, count)
        return piece, order[pos]

    def solve(self, piece, z_target):
        """Where each piece reaches ``z_target``: observed altitude (deg), true hour angle (rad), segment.

        Linear interpolation in the node table (nodes at most 1 deg apart along the curve), then
        one Newton step on the exact ``z(u)`` of the segment (z is monotone between the two nodes),
        and the point's hour angle from the exact model. Interpolating the hour angle itself is not
        enough near the celestial pole, where it turns by many degrees between two nodes.
        """
        orient = np.where(self.piece_rising[piece], -1.0, 1.0)
        key = 4.0 * piece + orient * z_target
        pos = np.searchsorted(self.table_key, key, side="right")
        lo_pos = self.table_start[piece]
        hi_pos = lo_pos + (self.piece_last[piece] - self.piece_first[piece])
        pos = np.clip(pos, lo_pos + 1, hi_pos)
        n0, n1 = self.table_node[pos - 1], self.table_node[pos]
        z0, z1 = self.node_z[n0], self.node_z[n1]
        u0, u1 = self.node_u[n0], self.node_u[n1]
        with np.errstate(divide="ignore", invalid="ignore"):
            w = np.clip(np.where(z1 != z0, (z_target - z0) / (z1 - z0), 0.5), 0.0, 1.0)
        u = u0 + w * (u1 - u0)
        seg = self.node_seg[n0]
        pt = self.point(seg, u)
        with np.errstate(divide="ignore", invalid="ignore"):
            step = np.where(pt.dz_du != 0.0, (z_target - pt.z) / pt.dz_du, 0.0)
        u = np.clip(u + step, np.minimum(u0, u1), np.maximum(u0, u1))
        pt = self.point(seg, u)
        return pt.alt_obs_deg, np.arctan2(pt.y_h, pt.x_h), seg

    def line_deg(self, seg, az_deg):
        """Segment ``seg``'s geometric altitude at ``az_deg`` (its line extended) and its slope dG/dA."""
        da, dp = self.da[seg], self.dp[seg]
        # Azimuth from the segment's start, measured within half a turn of the segment's middle.
        rel = az_deg - self.a0[seg] - 0.5 * da
        rel = rel - 360.0 * np.floor((rel + 180.0) / 360.0) + 0.5 * da
        with np.errstate(divide="ignore", invalid="ignore"):
            slope_obs = np.where(da > 0.0, dp / da, 0.0)
        observed = self.p0[seg] + rel * slope_obs
        g = self.geometric_deg(observed)
        g_slope = 1.0
        if self.refraction:
            g_slope = 1.0 - refraction_slope(observed, self.pressure, self.temperature)
        return g, g_slope * slope_obs


@functools.lru_cache(maxsize=32)
def _profile_curve(az_points, alt_points, lat_deg, refraction, pressure, temperature) -> _ProfileCurve:
    """The pieces of monotone declination of one horizon profile (cached: depends on no target).

    Turning points of ``z(u)`` are the zeros of ``dz/du``. On a span of width ``delta`` (in u)
    with ``|dz/du| > M delta + E`` at either end, M a bound on ``|d2z/du2|`` over the segment and
    E a bound on the error of the computed ``dz/du``, ``dz/du`` cannot vanish (from that end it
    would have to fall by more than ``M delta``): the span is certified. Uncertain spans are
    split in 8 until certified or narrower than ``max(1e-10, 4 E / M)``; the ends of those left are
    made break nodes. M comes from differentiating ``z = sin(lat) sin G + cos(lat) cos G cos A``
    twice: ``|sin lat| (G'^2 + |G''|) + cos(lat) ((|G'| + |A'|)^2 + |G''|)``, with
    ``|G'| <= (1 + max R') |P'|`` and ``|G''| <= max R'' P'^2`` (radians), enlarged for the
    aberration factor.
    """
    az = np.asarray(az_points, dtype=float)
    alt = np.asarray(alt_points, dtype=float)
    k = _DIURNAL_ABERRATION_RAD * math.cos(lat_deg * DEG_RAD)
    # Segments, the last wrapping through north (a single point gives one full-circle segment).
    a0 = az
    a1 = np.concatenate([az[1:], az[:1] + 360.0])
    p0 = alt
    p1 = np.concatenate([alt[1:], alt[:1]])
    scale = float(pressure / 1010.0 * 283.0 / (273.0 + temperature)) if refraction else 0.0
    if refraction:
        # Cut at the refraction formula's kinks so that G is smooth inside every segment.
        u_cut = []
        for kink in _refraction_kinks_deg():
            with np.errstate(divide="ignore", invalid="ignore"):
                u = (kink - p0) / (p1 - p0)
            u_cut.append(np.where((u > 0.0) & (u < 1.0), u, np.nan))
        u_all = np.concatenate([np.zeros((1, a0.size)), np.array(u_cut), np.ones((1, a0.size))])
        u_all = np.sort(u_all, axis=0)  # NaN last
        seg_a0, seg_da, seg_p0, seg_dp = [], [], [], []
        for s in range(a0.size):
            us = u_all[:, s]
            us = us[np.isfinite(us)]  # sorted already: drop repeats (np.unique would import numpy.ma, 20 ms)
            us = us[np.concatenate(([True], us[1:] != us[:-1]))]
            for ua, ub in zip(us[:-1], us[1:], strict=True):
                seg_a0.append(a0[s] + ua * (a1[s] - a0[s]))
                seg_da.append((ub - ua) * (a1[s] - a0[s]))
                seg_p0.append(p0[s] + ua * (p1[s] - p0[s]))
                seg_dp.append((ub - ua) * (p1[s] - p0[s]))
        seg_a0, seg_da = np.array(seg_a0), np.array(seg_da)
        seg_p0, seg_dp = np.array(seg_p0), np.array(seg_dp)
    else:
        seg_a0, seg_da, seg_p0, seg_dp = a0, a1 - a0, p0, p1 - p0
    curve = _ProfileCurve(lat_deg, k, seg_a0, seg_da, seg_p0, seg_dp, refraction, pressure, temperature)

    sp, cp = abs(math.sin(lat_deg * DEG_RAD)), math.cos(lat_deg * DEG_RAD)
    dp_rad = np.abs(seg_dp) * DEG_RAD
    da_rad = np.abs(seg_da) * DEG_RAD
    g1 = (1.0 + _REFRACTION_SLOPE_MAX * scale) * dp_rad
    g2 = _REFRACTION_CURVATURE_MAX_PER_RAD * scale * dp_rad ** 2
    bound = sp * (g1 ** 2 + g2) + cp * ((g1 + da_rad) ** 2 + g2)
    bound = bound * (1.0 + 1e-6) + 8.0 * k * ((g1 + da_rad) ** 2 + g2) + 1e-15
    # dz/du is computed in closed form: only rounding (a few ulp of its terms) is left.
    error = 1e-13 * (1.0 + g1 + da_rad)
    smallest = np.maximum(1e-10, 4.0 * error / bound)

    # Coarse nodes: about every degree of azimuth plus altitude along each segment.
    count = 4 + np.ceil((np.abs(seg_da) + np.abs(seg_dp)) / _CURVE_NODE_SPACING_DEG).astype(int)
    seg = np.repeat(np.arange(seg_a0.size), count + 1)
    u = np.arange(seg.size) - np.repeat(np.cumsum(count + 1) - (count + 1), count + 1)
    u = u / count[seg]
    pt = curve.point(seg, u)
    all_seg, all_u = [seg], [u]
    # Spans between consecutive nodes of one segment.
    inner = np.flatnonzero(seg[1:] == seg[:-1])
    span_seg, span_a, span_b = seg[inner], u[inner], u[inner + 1]
    span_da, span_db = pt.dz_du[inner], pt.dz_du[inner + 1]
    leftover_seg, leftover_a, leftover_b = [], [], []
    for _ in range(_CURVE_MAX_LEVELS):
        width = span_b - span_a
        certified = np.maximum(np.abs(span_da), np.abs(span_db)) > bound[span_seg] * width + error[span_seg]
        # A segment along which z does not change at all (a flat profile seen from a pole) has
        # no turning point to find: its z is constant and it can only be grazed, never crossed.
        constant = (np.abs(span_da) <= error[span_seg]) & (np.abs(span_db) <= error[span_seg]) \
            & (bound[span_seg] <= 1e-12)
        uncertain = ~(certified | constant)
        final = uncertain & (width <= smallest[span_seg] * _CURVE_SPLIT)
        leftover_seg.append(span_seg[final])
        leftover_a.append(span_a[final])
        leftover_b.append(span_b[final])
        split = np.flatnonzero(uncertain & ~final)
        if split.size == 0:
            break
        frac = np.arange(1, _CURVE_SPLIT) / _CURVE_SPLIT
        s_seg = np.repeat(span_seg[split], _CURVE_SPLIT - 1)
        s_u = (span_a[split, None] + (span_b - span_a)[split, None] * frac[None, :]).ravel()
        new = curve.point(s_seg, s_u)
        all_seg.append(s_seg)
        all_u.append(s_u)
        edges_u = np.concatenate([span_a[split, None], s_u.reshape(-1, _CURVE_SPLIT - 1),
                                  span_b[split, None]], axis=1)
        edges_d = np.concatenate([span_da[split, None], new.dz_du.reshape(-1, _CURVE_SPLIT - 1),
                                  span_db[split, None]], axis=1)
        span_seg = np.repeat(span_seg[split], _CURVE_SPLIT)
        span_a, span_b = edges_u[:, :-1].ravel(), edges_u[:, 1:].ravel()
        span_da, span_db = edges_d[:, :-1].ravel(), edges_d[:, 1:].ravel()
    else:
        leftover_seg.append(span_seg)
        leftover_a.append(span_a)
        leftover_b.append(span_b)
    node_seg = np.concatenate(all_seg)
    node_u = np.concatenate(all_u)
    order = np.lexsort((node_u, node_seg))
    node_seg, node_u = node_seg[order], node_u[order]
    breaks = np.zeros(node_seg.size, dtype=bool)
    breaks[0] = breaks[-1] = True
    breaks[1:] |= node_seg[1:] != node_seg[:-1]
    breaks[:-1] |= node_seg[1:] != node_seg[:-1]
    lo_seg, lo_a, lo_b = (np.concatenate(x) for x in (leftover_seg, leftover_a, leftover_b))
    if lo_seg.size:
        # Adjacent uncertain spans form one cluster around a turning point: break at its two ends.
        order = np.lexsort((lo_a, lo_seg))
        lo_seg, lo_a, lo_b = lo_seg[order], lo_a[order], lo_b[order]
        joined = (lo_seg[1:] == lo_seg[:-1]) & (lo_a[1:] == lo_b[:-1])
        first = np.concatenate([[True], ~joined])
        last = np.concatenate([~joined, [True]])
        key = node_seg.astype(float) * 2.0 + node_u  # u in [0, 1]: unique, increasing keys
        for seg_of, ends in ((lo_seg[first], lo_a[first]), (lo_seg[last], lo_b[last])):
            where = np.searchsorted(key, seg_of * 2.0 + ends)
            breaks[np.clip(where, 0, key.size - 1)] = True
    curve.finish(node_seg, node_u, breaks)
    return curve


@functools.cache
def _refraction_kinks_deg():
    """Observed altitudes at which the refraction formula has a kink: the foot and the top of the
    below-horizon taper, and where refined Bennett reaches zero near the zenith (found here)."""
    lo, hi = 80.0, 90.0
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        if float(refraction_deg(mid)) > 0.0:
            lo = mid
        else:
            hi = mid
    return (BELOW_HORIZON_TAPER_DEG, 0.0, hi)


# ---------------------------------------------------------------------------------------------
# Sun and Moon


def sun_altitude_deg(unix_seconds, observer: Observer, *, dut1_seconds: float = 0.0,
                     leap_table: LeapTable = BUILTIN_LEAP_TABLE):
    """Geometric topocentric altitude of the Sun's centre, degrees, any shape of ``unix_seconds``."""
    instants = instants_from_unix(unix_seconds, dut1_seconds=dut1_seconds, leap_table=leap_table)
    return observe_sun(instants, observer).alt_geometric_deg


def moon_altitude_margin_deg(unix_seconds, observer: Observer, *, dut1_seconds: float = 0.0,
                             leap_table: LeapTable = BUILTIN_LEAP_TABLE):
    """How far the Moon's upper limb is above the standard horizon, degrees (> 0: the Moon is up).

    Topocentric geometric altitude of the centre, plus the topocentric-ish semidiameter
    ``asin(1737.4 km / distance)``, minus the standard -34' horizon refraction.
    """
    instants = instants_from_unix(unix_seconds, dut1_seconds=dut1_seconds, leap_table=leap_table)
    alt = observe_moon(instants, observer).alt_geometric_deg
    distance_km = moon_apparent_radec(instants)[2]
    semidiameter = np.arcsin(_MOON_RADIUS_KM / distance_km) / DEG_RAD
    return alt + semidiameter - MOON_STANDARD_ALTITUDE_OFFSET_DEG


def find_body_crossings(altitude_fn, thresholds_deg, start_unix: float, end_unix: float, *,
                        step_seconds: float = _GRID_STEP_SUN_SECONDS, tolerance_seconds: float = 0.01):
    """Crossings of a single body's altitude through several thresholds (grid scan, then refine).

    Args:
        altitude_fn: callable ``unix -> altitude (deg)`` for any shape.
        thresholds_deg (sequence of float): C thresholds, degrees.
        start_unix, end_unix: the window (half-open).
        step_seconds: scan step; extrema are found and refined, so close pairs are not lost.
        tolerance_seconds: refinement tolerance.

    Returns:
        tuple: ``(threshold_index, unix_seconds, rising)`` sorted by time.
    """
    thresholds = np.asarray(thresholds_deg, dtype=float)

    def f(unix, column):
        return altitude_fn(unix) - thresholds[column]

    col, t, rising = find_crossings(f, float(start_unix) - step_seconds, float(end_unix) + step_seconds,
                                    step_seconds, columns=thresholds.size,
                                    tolerance_seconds=tolerance_seconds)
    keep = in_window(t, start_unix, end_unix)
    return col[keep], t[keep], rising[keep]


def find_sun_events(observer: Observer, start_unix: float, end_unix: float, *, dut1_seconds: float = 0.0,
                    leap_table: LeapTable = BUILTIN_LEAP_TABLE, thresholds_deg=SUN_THRESHOLDS_DEG):
    """Sunset/sunrise and twilight crossings: ``(threshold_index, unix_seconds, rising)``.

    Thresholds are geometric altitudes of the Sun's centre (:data:`SUN_THRESHOLDS_DEG` by default),
    independent of the refraction switch: -0.8333 deg already contains the horizon refraction.
    """
    def altitude(unix):
        return sun_altitude_deg(unix, observer, dut1_seconds=dut1_seconds, leap_table=leap_table)

    return find_body_crossings(altitude, thresholds_deg, start_unix, end_unix)


def find_moon_events(observer: Observer, start_unix: float, end_unix: float, *, dut1_seconds: float = 0.0,
                     leap_table: LeapTable = BUILTIN_LEAP_TABLE):
    """Moonrise/moonset (upper limb at the standard horizon): ``(unix_seconds, rising)``."""
    def margin(unix):
        return moon_altitude_margin_deg(unix, observer, dut1_seconds=dut1_seconds, leap_table=leap_table)

    _, t, rising = find_body_crossings(margin, [0.0], start_unix, end_unix, step_seconds=900.0)
    return t, rising


# ---------------------------------------------------------------------------------------------
# windows and intervals


def in_window(unix_seconds, start_unix: float, end_unix: float):
    """Half-open window test with the 1 ms edge rule (see ``EDGE_TOLERANCE_SECONDS``)."""
    t = np.asarray(unix_seconds, dtype=float)
    return (t >= float(start_unix) - EDGE_TOLERANCE_SECONDS) & (t < float(end_unix) - EDGE_TOLERANCE_SECONDS)


def intervals_from_crossings(up_at_start: bool, unix_seconds, rising, start_unix: float, end_unix: float):
    """Intervals during which something is "up", from its state at the start and its crossings.

    Args:
        up_at_start: whether it is up at ``start_unix``.
        unix_seconds (array_like): crossing times, sorted, inside the window.
        rising (array_like of bool): True for an upward crossing.
        start_unix, end_unix: the window.

    Returns:
        ndarray: (K, 2) array of [begin, end] POSIX seconds, in order, clipped to the window.
    """
    t = np.asarray(unix_seconds, dtype=float)
    up = bool(up_at_start)
    begin = float(start_unix) if up else None
    out = []
    for time, rises in zip(t.tolist(), np.asarray(rising, dtype=bool).tolist(), strict=True):
        if rises and not up:
            begin, up = time, True
        elif not rises and up:
            if time > begin:
                out.append((begin, time))
            up = False
    if up and float(end_unix) > begin:
        out.append((begin, float(end_unix)))
    return np.array(out, dtype=float).reshape(-1, 2)


def intersect_intervals(a, b):
    """Intersection of two sorted, disjoint interval lists ((K, 2) arrays) -> (L, 2) array."""
    a = np.asarray(a, dtype=float).reshape(-1, 2)
    b = np.asarray(b, dtype=float).reshape(-1, 2)
    out = []
    i = j = 0
    while i < len(a) and j < len(b):
        lo = max(a[i, 0], b[j, 0])
        hi = min(a[i, 1], b[j, 1])
        if hi > lo:
            out.append((lo, hi))
        if a[i, 1] < b[j, 1]:
            i += 1
        else:
            j += 1
    return np.array(out, dtype=float).reshape(-1, 2)


# ---------------------------------------------------------------------------------------------
# helpers


def _mark_candidates(track, last_hours_at, idx, ha_hours, mark, start_unix, end_unix):
    """First guesses of every time (within the window, plus a margin) each mark is reached."""
    t0, t1 = float(start_unix), float(end_unix)
    if idx.size == 0:
        return idx, np.zeros(0), mark
    if track.parallax_coeffs is None:
        ra0 = track.ra_at(t0, idx)
        h0 = last_hours_at(np.float64(t0)) - ra0
        rate = SIDEREAL_RATE_HOURS_PER_SECOND
        day = SIDEREAL_DAY_SECONDS
    else:
        # A body's own day (the Moon's is about 24 h 50 m) from its hour-angle rate at the start.
        h0, _ = track.hadec_at(np.full(idx.shape, t0), last_hours_at, idx)
        # Floor at a tenth of the sidereal rate: only a body passing within a few Earth radii
        # moves that fast in RA; it keeps the guesses finite and in order.
        rate = np.maximum(SIDEREAL_RATE_HOURS_PER_SECOND - track.ra_rate_at(t0, idx),
                          0.1 * SIDEREAL_RATE_HOURS_PER_SECOND)
        day = 24.0 / rate
    first = t0 + _wrap24(ha_hours - h0) / rate
    parts_idx, parts_t, parts_mark = [], [], []
    lo, hi = t0 - _CANDIDATE_MARGIN_SECONDS, t1 + _CANDIDATE_MARGIN_SECONDS
    rounds = int(math.ceil((t1 - t0) / np.min(day))) + 1
    for k in range(-1, rounds + 1):
        t = first + k * day
        if k == 0:
            keep = t < hi
            if keep.all():
                parts_idx.append(idx)
                parts_t.append(t)
                parts_mark.append(mark)
                continue
        else:
            keep = (t > lo) & (t < hi)
        sel = np.flatnonzero(keep)
        parts_idx.append(idx[sel])
        parts_t.append(t[sel])
        parts_mark.append(mark[sel])
    return np.concatenate(parts_idx), np.concatenate(parts_t), np.concatenate(parts_mark)


def _cos_crossing(sin_h0, dec_deg, sin_lat, cos_lat):
    """cos H at which a target of declination ``dec_deg`` has altitude asin(sin_h0)."""
    d = np.asarray(dec_deg) * DEG_RAD
    with np.errstate(divide="ignore", invalid="ignore"):
        return (sin_h0 - sin_lat * np.sin(d)) / (cos_lat * np.cos(d))


def _altaz(ha_hours, dec_deg, latitude_deg, *, aberration=False):
    """Geometric altitude and azimuth (ERFA hd2ae geometry), degrees.

    With ``aberration`` the direction is first shifted towards the east point by diurnal
    aberration (first order, as ERFA's ``apco``/``atioq`` do): the seen direction is
    ``(x_h, y_h - k, z_h)`` normalised, with ``k = omega R cos(lat) / c``.
    """
    h = np.asarray(ha_hours) * HOUR_RAD
    d = np.asarray(dec_deg) * DEG_RAD
    sp, cp = math.sin(latitude_deg * DEG_RAD), math.cos(latitude_deg * DEG_RAD)
    cd = np.cos(d)
    sd = np.sin(d)
    xh = np.cos(h) * cd
    yh = np.sin(h) * cd
    if aberration:
        k = _DIURNAL_ABERRATION_RAD * cp
        inv = 1.0 / np.sqrt(1.0 - 2.0 * k * yh + k * k)
        xh, yh, sd = xh * inv, (yh - k) * inv, sd * inv
    north = cp * sd - sp * xh
    up = cp * xh + sp * sd
    az = np.arctan2(-yh, north) * (1.0 / DEG_RAD)
    az = az - 360.0 * np.floor(az * (1.0 / 360.0))
    alt = np.arcsin(np.clip(up, -1.0, 1.0)) * (1.0 / DEG_RAD)
    return alt, az


def _wrap12(hours):
    """Hours into [-12, 12) by floor (faster than np.mod).

    Unlike ``angles.wrap_hours_12`` it skips the fold-back of the rare value that rounds onto the
    open end: in this hot path an hour angle of +12.0 instead of -12.0 changes no event time.
    """
    h = np.asarray(hours)
    return h - 24.0 * np.floor((h + 12.0) * (1.0 / 24.0))


def _poly(coeffs, tau, index=None):
    """Evaluate polynomial columns (highest power first) at ``tau``."""
    c = coeffs if index is None else np.take(coeffs, index, axis=1)
    out = c[0] * np.ones(np.shape(tau))
    for k in range(1, c.shape[0]):
        out = out * tau + c[k]
    return out


def _topocentric(ha_hours, dec_deg, parallax, site_rho):
    """Geocentric (H, d) -> topocentric, taking the site vector off in the hour-angle frame."""
    h = np.asarray(ha_hours) * HOUR_RAD
    d = np.asarray(dec_deg) * DEG_RAD
    cd = np.cos(d)
    x = cd * np.cos(h) - parallax * site_rho[0]
    y = cd * np.sin(h)
    z = np.sin(d) - parallax * site_rho[1]
    return np.arctan2(y, x) / HOUR_RAD, np.arctan2(z, np.hypot(x, y)) / DEG_RAD


def _dedupe(idx, t, mark, *, by_mark=True):
    """Drop repeats (two first guesses that refined onto the same event, within 1 s), sorted input."""
    if idx.size < 2:
        return idx, t, mark
    keep = np.ones(idx.size, dtype=bool)
    order = np.lexsort((t, mark, idx)) if by_mark else np.lexsort((t, idx))
    si, st, sm = idx[order], t[order], mark[order]
    same = (si[1:] == si[:-1]) & (np.abs(st[1:] - st[:-1]) < 1.0)
    if by_mark:
        same &= sm[1:] == sm[:-1]
    keep[order[1:][same]] = False
    return idx[keep], t[keep], mark[keep]


def _wrap24(hours):
    h = np.asarray(hours)
    return h - 24.0 * np.floor(h * (1.0 / 24.0))


def _sorted(idx, t, mark):
    # numpy's default sort (a vectorised quicksort) is ~6x a stable sort here; the order of events
    # at the very same instant is all it could change, and the agenda orders those itself.
    order = np.argsort(t)
    return idx[order], t[order], mark[order]


def _empty_crossings():
    return np.zeros(0, dtype=np.intp), np.zeros(0), np.zeros(0, dtype=bool)
