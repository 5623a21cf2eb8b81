"""Planets and the Moon from a JPL development ephemeris: apparent places of date, geocentric and
topocentric, with the same chain that minor bodies from orbital elements go through.

The core stays pure: it never opens a file. The caller (an edge module) opens the kernel with a
reader such as ``jplephem`` and passes its segments in; each segment needs ``center``, ``target``,
``start_jd``, ``end_jd`` and ``compute_and_differentiate(tdb_whole, tdb_frac)`` returning position
(km) and velocity (km/day) of shape (3, ...), which is the ``jplephem.spk.Segment`` interface.

The chain (what each step is worth; checked against astropy with the same kernel file and against
ERFA ``plan94``/``moon98`` in ``tests/astro/test_ephemeris.py``):

1. **Barycentric states** from the kernel's Chebyshev segments. TDB is taken equal to TT (they differ
   by at most 1.7 ms: 50 m of the Earth's motion, far below 1 mas).
2. **Light time**, iterated twice: the body at ``t - tau`` seen from the Earth's centre at ``t``
   (each pass shrinks the error by the body's speed over c, about 1e-4: the second leaves under
   1 ms of a main-belt asteroid's light time, a few metres of its motion).
3. **Annual aberration** in ERFA ``ab`` form (special-relativistic, with the Sun's potential term),
   from the Earth's barycentric velocity taken from the kernel.
4. **Gravitational deflection by the Sun** in ERFA ``ld`` form (body at its finite distance; 1.75" at
   the limb, 0.004" at 90 deg). Deflection by the planets is left out (under 0.02" except within
   arcseconds of Jupiter's limb).
5. **Frame bias + IAU 2006 precession + IAU 2000B nutation** as for stars
   (:func:`siderod.astro.precession.bias_precession_nutation_matrix`, 1 mas).
6. **Topocentric parallax** (the Moon's is up to 1 deg): the site's WGS84 geocentric vector is
   subtracted in the hour-angle frame from the geocentric apparent vector, and diurnal aberration is
   added as for stars. Applying the parallax after the annual aberration errs by the parallax
   times the aberration, under 0.35" for the Moon and under 1 mas for the planets.

Pluto and the outer planets are the kernel's system barycentres (the planet's own centre is not in
DE421); the offset is under 0.02" as seen from the Earth.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable
from dataclasses import dataclass

import numpy as np

from siderod.astro.constants import DEG_RAD, HOUR_RAD
from siderod.astro.places import (
    _C_KM_S,
    _EARTH_RADIUS_KM,
    _EARTH_ROTATION_RAD_S,
    Observer,
    Positions,
    _geocentric_site,
    _positions_from_ha_frame,
)
from siderod.astro.precession import bias_precession_nutation_matrix
from siderod.astro.sidereal import gast_rad
from siderod.astro.timescales import Instants

__all__ = [
    "AU_KM",
    "BODY_NAMES",
    "Ephemeris",
    "EphemerisRangeError",
    "apparent_geocentric",
    "body_apparent_radec",
    "body_position_fn",
    "ephemeris_from_segments",
    "geocentric_site_rho",
    "observe_apparent",
    "observe_body",
]

#: Astronomical unit, km (IAU 2012 Resolution B2).
AU_KM = 149597870.7
#: Speed of light, au/day.
C_AU_PER_DAY = _C_KM_S * 86400.0 / AU_KM
#: Schwarzschild radius of the Sun, au (ERFA ``ERFA_SRS``): the Sun's potential term of ERFA ``ab``.
_SRS_AU = 1.97412574336e-8

#: Bodies a target may name, with the NAIF ids of the chain from the solar-system barycentre.
#: Mercury, Venus and Mars are taken to their own centres when the kernel has the segment; the outer
#: planets and Pluto are their system barycentres (DE421 carries no planet centres for them).
BODY_NAMES = ("mercury", "venus", "mars", "jupiter", "saturn", "uranus", "neptune", "pluto", "moon")
_BODY_CHAINS = {
    "mercury": ((0, 1), (1, 199)),
    "venus": ((0, 2), (2, 299)),
    "mars": ((0, 4), (4, 499)),
    "jupiter": ((0, 5), (5, 599)),
    "saturn": ((0, 6), (6, 699)),
    "uranus": ((0, 7), (7, 799)),
    "neptune": ((0, 8), (8, 899)),
    "pluto": ((0, 9), (9, 999)),
    "moon": ((0, 3), (3, 301)),
    "earth": ((0, 3), (3, 399)),
    "sun": ((0, 10),),
}
_LIGHT_TIME_ITERATIONS = 2
#: Floor of ``q . (q + e)`` in ERFA ``ld`` (its ``dlim``), keeping the deflection finite behind the Sun.
_DEFLECTION_LIMIT = 1e-6


class EphemerisRangeError(ValueError):
    """An instant lies outside the span the ephemeris covers.

    Attributes:
        start_jd_tdb, end_jd_tdb: the span covered (Julian dates, TDB).
        asked_jd_tdb: the earliest or latest instant asked for.
    """

    def __init__(self, name: str, start_jd_tdb: float, end_jd_tdb: float, asked_jd_tdb: float):
        self.start_jd_tdb, self.end_jd_tdb, self.asked_jd_tdb = start_jd_tdb, end_jd_tdb, asked_jd_tdb
        super().__init__(
            f"the ephemeris {name} covers JD {start_jd_tdb:.1f} to {end_jd_tdb:.1f} "
            f"({_year(start_jd_tdb):.1f} to {_year(end_jd_tdb):.1f}); JD {asked_jd_tdb:.1f} "
            f"({_year(asked_jd_tdb):.1f}) is outside it, so planets, the Moon and minor bodies cannot "
            "be placed then")


@dataclass(frozen=True, eq=False)
class Ephemeris:
    """An opened JPL ephemeris: its segments by (centre, target) NAIF id.

    Attributes:
        name: a label for messages (e.g. the kernel's file name).
        segments: mapping ``(center, target) -> segment`` (see the module docstring for the interface).
        start_jd_tdb, end_jd_tdb: the span every segment covers (the intersection), Julian dates TDB.
    """

    name: str
    segments: dict
    start_jd_tdb: float
    end_jd_tdb: float

    def check_span(self, jd_tdb) -> None:
        """Raise :class:`EphemerisRangeError` when any of ``jd_tdb`` (days, any shape) is outside."""
        jd = np.asarray(jd_tdb, dtype=float)
        if jd.size == 0:
            return
        lo, hi = float(jd.min()), float(jd.max())
        if lo < self.start_jd_tdb:
            raise EphemerisRangeError(self.name, self.start_jd_tdb, self.end_jd_tdb, lo)
        if hi > self.end_jd_tdb:
            raise EphemerisRangeError(self.name, self.start_jd_tdb, self.end_jd_tdb, hi)

    def state_au(self, body: str, tdb_whole, tdb_frac):
        """Barycentric position (au) and velocity (au/day), each of shape (3, *time shape).

        Args:
            body: one of :data:`BODY_NAMES`, ``"earth"`` or ``"sun"``.
            tdb_whole, tdb_frac: two-part Julian date (TDB ~ TT), broadcastable arrays.
        """
        w, f = np.broadcast_arrays(np.asarray(tdb_whole, dtype=float), np.asarray(tdb_frac, dtype=float))
        pos = np.zeros((3,) + w.shape)
        vel = np.zeros((3,) + w.shape)
        for pair in _BODY_CHAINS[body]:
            segment = self.segments.get(pair)
            if segment is None:
                if pair[0] == 0:
                    raise KeyError(f"the ephemeris {self.name} has no segment {pair[0]} -> {pair[1]} "
                                   f"needed for {body}")
                continue  # planet centre missing: the system barycentre stands for it
            p, v = segment.compute_and_differentiate(w.ravel(), f.ravel())
            pos += np.reshape(p, (3,) + w.shape)
            vel += np.reshape(v, (3,) + w.shape)
        return pos / AU_KM, vel / AU_KM


def ephemeris_from_segments(segments: Iterable, name: str) -> Ephemeris:
    """Index an opened kernel's segments (e.g. ``jplephem.spk.SPK(...).segments``).

    Args:
        segments: objects with ``center``, ``target``, ``start_jd``, ``end_jd`` and
            ``compute_and_differentiate``.
        name: label for messages.

    Returns:
        Ephemeris: covering the span common to all segments.
    """
    table = {}
    for segment in segments:
        table[(int(segment.center), int(segment.target))] = segment
    if not table:
        raise ValueError(f"the ephemeris {name} has no segments")
    start = max(float(s.start_jd) for s in table.values())
    end = min(float(s.end_jd) for s in table.values())
    return Ephemeris(name=name, segments=table, start_jd_tdb=start, end_jd_tdb=end)


def body_position_fn(ephemeris: Ephemeris, body: str) -> Callable:
    """``(tdb_whole, tdb_frac) -> (3, *shape)`` barycentric position (au) of a named body."""
    if body not in _BODY_CHAINS or body in ("earth", "sun"):
        raise ValueError(f"unknown body {body!r}; choose one of {', '.join(BODY_NAMES)}")

    def position(tdb_whole, tdb_frac):
        return ephemeris.state_au(body, tdb_whole, tdb_frac)[0]

    return position


def apparent_geocentric(ephemeris: Ephemeris, position_fn: Callable, instants: Instants):
    """Geocentric apparent direction of date and geometric distance of bodies.

    Args:
        ephemeris: gives the Earth and the Sun.
        position_fn: ``(tdb_whole, tdb_frac) -> (3, *shape)`` barycentric position, au, of the
            bodies at the given instants (shape of the instants broadcast against the bodies'
            own shape, e.g. (M, 1) instants and N bodies give (3, M, N)).
        instants: observation times (TT stands for TDB), any shape.

    Returns:
        tuple: ``(unit_xyz, distance_au)``: unit vectors (3, *shape), true equator and equinox of
        date; distance from the geocentre at the retarded time, au, of the same shape.

    Raises:
        EphemerisRangeError: an instant is outside the kernel's span.
    """
    tt_w, tt_f = np.asarray(instants.tt_whole, dtype=float), np.asarray(instants.tt_frac, dtype=float)
    ephemeris.check_span(tt_w + tt_f)
    earth, earth_vel = ephemeris.state_au("earth", tt_w, tt_f)
    sun = ephemeris.state_au("sun", tt_w, tt_f)[0]
    body = position_fn(tt_w, tt_f)
    shape = body.shape[1:]
    earth_b = earth.reshape(earth.shape + (1,) * (len(shape) - len(tt_w.shape)))
    tau = np.zeros(shape)
    extra = (None,) * (len(shape) - len(tt_w.shape))
    expand = (slice(None), Ellipsis) + extra  # (3, *time shape) -> (3, *shape)
    expand_scalar = (Ellipsis,) + extra  # time shape -> shape
    for _ in range(_LIGHT_TIME_ITERATIONS):
        p = body - earth_b
        tau = np.sqrt(np.einsum("i...,i...->...", p, p)) / C_AU_PER_DAY
        w_b = np.broadcast_to(tt_w.reshape(tt_w.shape + (1,) * (len(shape) - len(tt_w.shape))), shape)
        f_b = np.broadcast_to(tt_f.reshape(tt_f.shape + (1,) * (len(shape) - len(tt_f.shape))), shape)
        body = position_fn(w_b, f_b - tau)
    p = body - earth_b
    distance = np.sqrt(np.einsum("i...,i...->...", p, p))
    u = p / distance
    # Light deflection by the Sun, ERFA ``ld`` (the body at its finite distance): q from the Sun to
    # the body at the retarded time, e from the Sun to the Earth.
    sun_earth = earth - sun
    em = np.sqrt(np.einsum("i...,i...->...", sun_earth, sun_earth))
    e_b = (sun_earth / em)[expand]
    em_b = em[expand_scalar]
    sun_body = body - sun[expand]
    q = sun_body / np.sqrt(np.einsum("i...,i...->...", sun_body, sun_body))
    qpe = q + e_b
    qdqpe = np.maximum(np.einsum("i...,i...->...", q, qpe), _DEFLECTION_LIMIT)
    w = _SRS_AU / em_b / qdqpe
    eq = np.cross(e_b, q, axis=0)
    u = u + w * np.cross(u, eq, axis=0)
    # Annual aberration, ERFA ab form (relativistic, with the Sun's potential term).
    v = earth_vel / C_AU_PER_DAY
    v2 = np.einsum("i...,i...->...", v, v)
    bm1 = np.sqrt(1.0 - v2)
    vb = v[expand]
    bm1_b = bm1[expand_scalar]
    w2 = (_SRS_AU / em)[expand_scalar]
    pdv = np.einsum("i...,i...->...", u, vb)
    w1 = 1.0 + pdv / (1.0 + bm1_b)
    q = u * bm1_b + w1 * vb + w2 * (vb - pdv * u)
    q = q / np.sqrt(np.einsum("i...,i...->...", q, q))
    npb = bias_precession_nutation_matrix(tt_w, tt_f)  # (*time shape, 3, 3)
    npb_b = npb.reshape(npb.shape[:-2] + (1,) * (len(shape) - len(tt_w.shape)) + (3, 3))
    date = np.einsum("...ij,j...->i...", npb_b, q)
    return date, distance


def body_apparent_radec(ephemeris: Ephemeris, body: str, instants: Instants):
    """Geocentric apparent RA/Dec of date and distance of a planet, Pluto or the Moon.

    Args:
        ephemeris: the opened kernel.
        body: one of :data:`BODY_NAMES`.
        instants: times, any shape.

    Returns:
        tuple: ``(ra_hours, dec_deg, distance_au)``; RA in [0, 24).
    """
    xyz, distance = apparent_geocentric(ephemeris, body_position_fn(ephemeris, body), instants)
    ra, dec = _radec(xyz)
    return ra, dec, distance


def observe_apparent(unit_xyz, distance_au, instants: Instants, observer: Observer) -> Positions:
    """Topocentric positions from geocentric apparent directions of date and distances.

    Args:
        unit_xyz (ndarray): (3, *shape) geocentric apparent unit vectors of date.
        distance_au (ndarray): distances, au, of ``shape`` (``inf`` for a star).
        instants: times, broadcastable against ``shape``.
        observer: the site.

    Returns:
        Positions: topocentric apparent RA/Dec of date, hour angle, alt/az, etc.
    """
    tt_w, tt_f = np.asarray(instants.tt_whole), np.asarray(instants.tt_frac)
    last_rad = (gast_rad(instants.ut1_whole, instants.ut1_frac, tt_w, tt_f, nutation="2000B")
                + observer.longitude_deg * DEG_RAD)
    cl, sl = np.cos(last_rad), np.sin(last_rad)
    x, y, z = unit_xyz
    # To the hour-angle frame (x towards the meridian, y west, z the pole), then scale to Earth radii.
    xh = cl * x + sl * y
    yh = sl * x - cl * y
    zh = z
    d = np.asarray(distance_au, dtype=float) * (AU_KM / _EARTH_RADIUS_KM)
    rho_cos, rho_sin = _geocentric_site(observer)
    xh = xh - rho_cos / d
    zh = zh - rho_sin / d
    norm = np.sqrt(xh * xh + yh * yh + zh * zh)
    xh, yh, zh = xh / norm, yh / norm, zh / norm
    # Diurnal aberration, as for stars: the site moves east (towards -y) at omega times its distance
    # from the axis.
    yh = yh - _EARTH_ROTATION_RAD_S * rho_cos * _EARTH_RADIUS_KM / _C_KM_S
    return _positions_from_ha_frame(xh, yh, zh, last_rad, observer)


def observe_body(ephemeris: Ephemeris, body: str, instants: Instants, observer: Observer) -> Positions:
    """Topocentric apparent place, hour angle and alt/az of a planet, Pluto or the Moon.

    Args:
        ephemeris: the opened kernel.
        body: one of :data:`BODY_NAMES`.
        instants: times, any shape.
        observer: the site.

    Returns:
        Positions: as for stars (:func:`siderod.astro.places.observe`).
    """
    xyz, distance = apparent_geocentric(ephemeris, body_position_fn(ephemeris, body), instants)
    return observe_apparent(xyz, distance, instants, observer)


def geocentric_site_rho(observer: Observer) -> tuple[float, float]:
    """``(rho cos phi', rho sin phi')``: the site's geocentric vector in Earth equatorial radii (WGS84)."""
    rho_cos, rho_sin = _geocentric_site(observer)
    return float(rho_cos), float(rho_sin)


def _radec(xyz):
    x, y, z = xyz
    ra = np.arctan2(y, x) / HOUR_RAD
    ra = np.where(ra < 0.0, ra + 24.0, ra)
    return ra, np.arctan2(z, np.hypot(x, y)) / DEG_RAD


def _year(jd: float) -> float:
    return 2000.0 + (jd - 2451545.0) / 365.25

