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
* a crossing of a horizon profile (the limit depends on azimuth) is bracketed on a grid of hour angle
  across the part of each rising and setting branch where the altitude lies inside the profile's
  altitude band, refined with :func:`siderod.astro.search.refine_roots`, then polished in time with
  two Newton steps on the full model;
* the Sun and the Moon use the generic grid scan of :func:`siderod.astro.search.find_crossings`.

Diurnal aberration (the observer's eastward motion, up to 0.32") is applied to hour-angle marks,
where it moves a near-polar culmination by up to 0.7 s; it changes altitude crossings by under 0.05 s
and is left out there. Polar motion (<= 0.5") is not applied.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from siderod.astro.constants import DEG_RAD, HOUR_RAD, SIDEREAL_PER_SOLAR
from siderod.astro.leapseconds import BUILTIN_LEAP_TABLE, LeapTable
from siderod.astro.places import Observer, Stars, apparent_radec
from siderod.astro.refraction import refraction_deg, refraction_from_true_deg
from siderod.astro.search import find_crossings, refine_roots
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
_GRID_CHUNK_ROWS = 4096  # rows per grid pass: keeps scratch arrays in cache (perf-baselines.md)
#: A moving body's crossing counts as found when the last refinement step is below this (hours;
#: 3.6 ms of time): a Dec that turns back before the crossing leaves the steps large instead.
_CONVERGED_HOURS = 1e-6
#: Earth's equatorial radius in au (6378.137 km / 149 597 870.7 km): the parallax of a body at
#: distance D au is asin(_EARTH_RADIUS_AU / D).
_EARTH_RADIUS_AU = 6378.137 / 149597870.7


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

    def hadec_at(self, unix_seconds, last_hours_at, index=None):
        """Topocentric hour angle (hours, [-12, 12)) and declination (degrees) at the site.

        Without parallax coefficients the geocentric place stands (stars); with them the site's
        geocentric vector is subtracted (topocentric parallax).
        """
        t = np.asarray(unix_seconds, dtype=float)
        ra, dec = self.radec_at(t, index)
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

    Chebyshev nodes with the ends on the span (padded by two minutes): 5 nodes plus 3 per day,
    which fits the Moon's geocentric place over a day to a few milliarcseconds (its longitude's
    largest periodic terms have periods of two weeks and longer).
    """
    lo = float(start_unix) - _CANDIDATE_MARGIN_SECONDS
    hi = float(end_unix) + _CANDIDATE_MARGIN_SECONDS
    n = 5 + 3 * int(math.ceil((hi - lo) / 86400.0))
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
        return geometric + refraction_from_true_deg(geometric, self.pressure_hpa, self.temperature_c)

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


def target_altaz(track: TargetTrack, last_hours_at, latitude_deg: float, unix_seconds, index=None):
    """Geometric altitude, azimuth and hour angle of targets at given instants (full model).

    Args:
        track: apparent places across the window.
        last_hours_at: callable ``unix -> LAST hours`` at the site (e.g. ``FastSidereal.last_hours``
            with the site longitude bound).
        latitude_deg: site latitude, degrees, north positive.
        unix_seconds (array_like): instants, POSIX seconds; broadcasts as in
            :meth:`TargetTrack.radec_at`.
        index (array_like of int, optional): target of each instant.

    Returns:
        tuple: ``(alt_deg, az_deg, ha_hours)``: geometric altitude, azimuth (N through E, [0, 360)),
        hour angle in [-12, 12).
    """
    t = np.asarray(unix_seconds, dtype=float)
    ha, dec = track.hadec_at(t, last_hours_at, index)
    alt, az = _altaz(ha, dec, latitude_deg)
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
    for _ in range(track.refine_steps + 1):
        ha, dec = track.hadec_at(cand_t, last_hours_at, cand_idx)
        c = _cos_crossing(s_h0, dec, sp, cp)
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
                      start_unix: float, end_unix: float, *, index=None, samples_per_branch: int = 16):
    """Every instant in the window at which targets cross their azimuth-dependent limit.

    The limit ``limit.geometric_deg(az, j)`` lies in a band ``[low_j, high_j]``
    (:meth:`AltitudeLimit.band_geometric_deg`); a crossing can only happen while the target's
    altitude is inside that band, which on each rising or setting branch is one interval of hour
    angle known in closed form. That interval is sampled at ``samples_per_branch`` hour angles
    (Dec at the window centre), sign changes of ``altitude - limit`` are refined in hour angle, and
    each root is placed in time and polished by two Newton steps on the full model. Profile features
    narrower than about 1/15 of the branch's azimuth span can be missed (documented limitation).

    Args:
        track, last_hours_at, latitude_deg: as for :func:`find_altitude_events`.
        limit: the per-target, per-azimuth limit.
        start_unix, end_unix: the window (half-open).
        index (array_like of int, optional): targets to search (default all).
        samples_per_branch: grid size per branch.

    Returns:
        tuple: ``(index, unix_seconds, rising)`` flat arrays sorted by time.
    """
    idx = np.arange(len(track)) if index is None else np.asarray(index, dtype=np.intp)
    sp, cp = math.sin(latitude_deg * DEG_RAD), max(math.cos(latitude_deg * DEG_RAD), 1e-12)
    _, dec_mid = track.radec_at(track.mid_unix, idx)
    low, high = limit.band_geometric_deg()
    low, high = low[idx], high[idx]
    max_alt = 90.0 - np.abs(latitude_deg - dec_mid)
    min_alt = np.abs(latitude_deg + dec_mid) - 90.0
    if track.parallax_coeffs is not None:
        # A body's Dec moves across the window: search the band of altitudes its whole Dec range
        # can reach at the branch's hour angles (the crossing is then placed on the full model).
        dec_lo, dec_hi = track.dec_range(idx)
        reach = np.maximum(dec_hi - dec_mid, dec_mid - dec_lo)
        low, high = low - reach, high + reach
        max_alt, min_alt = max_alt + reach, min_alt - reach
    lo_alt = np.maximum(low, min_alt) - 1e-9
    hi_alt = np.minimum(high, max_alt) + 1e-9
    sub = np.flatnonzero((max_alt > low) & (min_alt < high))
    if sub.size == 0:
        return _empty_crossings()
    # |H| range of each branch inside the band: from H_b (top of the band) to H_a (bottom).
    h_a = np.arccos(np.clip(_cos_crossing(np.sin(lo_alt[sub] * DEG_RAD), dec_mid[sub], sp, cp), -1, 1))
    h_b = np.arccos(np.clip(_cos_crossing(np.sin(hi_alt[sub] * DEG_RAD), dec_mid[sub], sp, cp), -1, 1))
    # Rising branch: H from -H_a up to -H_b; setting branch: from H_b up to H_a (radians).
    first_h = np.concatenate([-h_a, h_b])
    step_h = np.concatenate([h_a - h_b, h_a - h_b]) / (samples_per_branch - 1)
    col = np.concatenate([idx[sub], idx[sub]])
    dec_of = np.zeros(len(track))
    dec_of[idx] = dec_mid
    table = _LimitTable(limit)
    rows, cols, lo_h, hi_h, lo_v, hi_v = [], [], [], [], [], []
    for a in range(0, col.size, _GRID_CHUNK_ROWS):
        b = min(a + _GRID_CHUNK_ROWS, col.size)
        values = _branch_grid(first_h[a:b], step_h[a:b], dec_of[col[a:b]], col[a:b], sp, cp,
                              samples_per_branch, table)
        above = values > 0.0
        r, k = np.nonzero(above[:, 1:] != above[:, :-1])
        rows.append(r + a)
        cols.append(col[a:b][r])
        lo_h.append(first_h[a:b][r] + k * step_h[a:b][r])
        hi_h.append(first_h[a:b][r] + (k + 1) * step_h[a:b][r])
        lo_v.append(values[r, k])
        hi_v.append(values[r, k + 1])
    root_col = np.concatenate(cols)
    if root_col.size == 0:
        return _empty_crossings()
    f_lo, f_hi = np.concatenate(lo_v), np.concatenate(hi_v)
    rising = f_hi > 0.0

    def f_hour_angle(h_rad, column):
        return _sin_margin(h_rad, dec_of[column], column, sp, cp, table)

    roots_h = refine_roots(f_hour_angle, np.concatenate(lo_h), np.concatenate(hi_h), f_lo, f_hi, root_col,
                           tolerance_seconds=1e-6)
    eps = 1e-5
    slope = (f_hour_angle(roots_h + eps, root_col) - f_hour_angle(roots_h - eps, root_col)) / (2 * eps)
    mark = np.arange(root_col.size)
    cand_idx, cand_t, cand_mark = _mark_candidates(track, last_hours_at, root_col, roots_h / HOUR_RAD, mark,
                                                   start_unix, end_unix)
    # Newton in time on the full model; d(margin)/dt = d(margin)/dH * dH/dt.
    rate = slope[cand_mark] * (SIDEREAL_RATE_HOURS_PER_SECOND * HOUR_RAD)
    moving = track.parallax_coeffs is not None
    if moving:
        # The grid used the mid-window Dec; a body may be minutes away from it. Re-measure the
        # slope of the margin in time on the full model and take Newton steps from there.
        cand_t = _limit_newton(track, last_hours_at, latitude_deg, limit, cand_t, cand_idx)
    else:
        for _ in range(2):
            alt, az, _ = target_altaz(track, last_hours_at, latitude_deg, cand_t, cand_idx)
            margin = np.sin(alt * DEG_RAD) - np.sin(limit.geometric_deg(az, cand_idx) * DEG_RAD)
            with np.errstate(divide="ignore", invalid="ignore"):
                step = np.where(rate != 0.0, -margin / rate, 0.0)
            cand_t = cand_t + np.clip(step, -60.0, 60.0)
    keep = in_window(cand_t, start_unix, end_unix) & np.isfinite(cand_t)
    out_idx, out_t, out_mark = _sorted(cand_idx[keep], cand_t[keep], cand_mark[keep])
    if moving:
        out_idx, out_t, out_mark = _dedupe(out_idx, out_t, out_mark, by_mark=False)
    return out_idx, out_t, rising[out_mark]


def _limit_newton(track, last_hours_at, latitude_deg, limit, cand_t, cand_idx):
    """Newton steps in time on ``sin(alt) - sin(limit(az))`` with a numerical slope; nan if not converged."""
    def margin(t):
        alt, az, _ = target_altaz(track, last_hours_at, latitude_deg, t, cand_idx)
        return np.sin(alt * DEG_RAD) - np.sin(limit.geometric_deg(az, cand_idx) * DEG_RAD)

    step = np.zeros(cand_t.shape)
    for _ in range(track.refine_steps + 3):
        m0 = margin(cand_t)
        slope = (margin(cand_t + 1.0) - m0) / 1.0
        with np.errstate(divide="ignore", invalid="ignore"):
            step = np.where(slope != 0.0, -m0 / slope, 0.0)
        cand_t = cand_t + np.clip(step, -1800.0, 1800.0)
    return np.where(np.abs(step) < 0.01, cand_t, np.nan)


class _LimitTable:
    """sin(geometric limit) tabulated against a cheap pseudo-angle of azimuth, for grid scans.

    The pseudo-angle ("diamond angle") of a horizontal direction (north, east) is
    ``east / (|north| + |east|)`` folded onto [0, 4): monotonic in azimuth, with no arctangent.
    Only brackets come from this table; roots are polished against the exact limit.
    """

    SIZE = 8192

    def __init__(self, limit: AltitudeLimit):
        d = (np.arange(self.SIZE + 1) + 0.0) * (4.0 / self.SIZE)
        north, east = _diamond_direction(d)
        az = np.arctan2(east, north) / DEG_RAD
        az = az - 360.0 * np.floor(az / 360.0)
        if limit.profile_az_deg.size:
            observed = np.interp(az, limit.profile_az_deg, limit.profile_alt_deg, period=360.0)
            self.profile_sin = np.sin(limit.to_geometric_deg(observed) * DEG_RAD)
        else:
            self.profile_sin = np.full(az.shape, -1.0)
        self.min_sin = np.sin(limit.to_geometric_deg(limit.min_alt_deg) * DEG_RAD)

    def sin_limit(self, north, east, column):
        """sin(geometric limit) for directions (north, east) of targets ``column``."""
        s = np.abs(north) + np.abs(east)
        with np.errstate(divide="ignore", invalid="ignore"):
            p = np.where(s > 0.0, east / s, 0.0)
        d = np.where(north >= 0.0, p, 2.0 - p)
        d = np.where(d < 0.0, d + 4.0, d) * (self.SIZE / 4.0)
        i = np.minimum(d.astype(np.intp), self.SIZE - 1)
        w = d - i
        value = self.profile_sin[i] * (1.0 - w) + self.profile_sin[i + 1] * w
        return np.maximum(value, self.min_sin[column])


def _diamond_direction(d):
    """Inverse of the pseudo-angle: a (north, east) direction for each d in [0, 4]."""
    d = np.asarray(d, dtype=float)
    p = np.where(d <= 1.0, d, np.where(d >= 3.0, d - 4.0, 2.0 - d))  # east / (|n| + |e|)
    north = np.where((d <= 1.0) | (d >= 3.0), 1.0 - np.abs(p), -(1.0 - np.abs(p)))
    return north, p


def _branch_grid(first_h, step_h, dec_deg, column, sin_lat, cos_lat, samples, table):
    """(rows, samples) sin(altitude) - sin(limit) along each branch, by a rotation recurrence."""
    d = dec_deg * DEG_RAD
    sd, cd = np.sin(d), np.cos(d)
    c, s = np.cos(first_h), np.sin(first_h)
    cs, ss = np.cos(step_h), np.sin(step_h)
    out = np.empty((first_h.size, samples))
    up_const = sin_lat * sd
    north_const = cos_lat * sd
    for k in range(samples):
        xh = c * cd
        north = north_const - sin_lat * xh
        up = up_const + cos_lat * xh
        east = s * cd  # -y_h with y_h = sin H cos d... azimuth = atan2(-y_h, north)
        out[:, k] = up - table.sin_limit(north, -east, column)
        c, s = c * cs - s * ss, s * cs + c * ss
    return out


def _sin_margin(h_rad, dec_deg, column, sin_lat, cos_lat, table):
    """sin(altitude) - sin(limit) at hour angle ``h_rad`` (no time dependence; Dec fixed)."""
    d = dec_deg * DEG_RAD
    sd, cd = np.sin(d), np.cos(d)
    xh = np.cos(h_rad) * cd
    yh = np.sin(h_rad) * cd
    north = cos_lat * sd - sin_lat * xh
    up = sin_lat * sd + cos_lat * xh
    return up - table.sin_limit(north, -yh, column)


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
        rate = SIDEREAL_RATE_HOURS_PER_SECOND - track.ra_rate_at(t0, idx)
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


def _altaz(ha_hours, dec_deg, latitude_deg):
    """Geometric altitude and azimuth (ERFA hd2ae geometry), degrees."""
    h = np.asarray(ha_hours) * HOUR_RAD
    d = np.asarray(dec_deg) * DEG_RAD
    sp, cp = math.sin(latitude_deg * DEG_RAD), math.cos(latitude_deg * DEG_RAD)
    cd = np.cos(d)
    sd = np.sin(d)
    xh = np.cos(h) * cd
    yh = np.sin(h) * cd
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
    order = np.argsort(t, kind="stable")
    return idx[order], t[order], mark[order]


def _empty_crossings():
    return np.zeros(0, dtype=np.intp), np.zeros(0), np.zeros(0, dtype=bool)
