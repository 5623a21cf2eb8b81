"""Brute-force reference for crossings of a horizon profile, and the comparison used by the
property test (tests/astro/test_horizon_property.py) and its larger run
(tests/benchmarks/bench_horizon_property.py).

Reference: the star's observed place from ERFA (pyerfa, test-only): ``erfa.apco13`` every
``NODE_SECONDS`` and, for every second in between, ``erfa.aper`` (the Earth rotation angle of that
second, from ``erfa.era00``) then ``erfa.atciq`` + ``erfa.atioq``. That is ``erfa.atco13``
evaluated the way ERFA's documentation recommends for many instants (``atco13`` itself calls
``apco13``, ``atciq`` and ``atioq``); refreshing everything but the rotation only every 10 minutes
moves a star by under 0.01" (measured: 0.005" in altitude against per-second ``atco13``).
Pressure 0: geometric altitudes.

The limit at each azimuth is the one under test, ``max(profile(A), floor)`` with the profile's
points joined by straight lines through north. With refraction on it is turned into a geometric
altitude by siderod's Bennett refraction: that conversion is the *definition* of the limit being
tested, not something the reference could supply. A 1 s scan of altitude minus limit, then
bisection to 1 ms.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import erfa
import numpy as np

from siderod.astro.refraction import refraction_deg

#: ERFA's astrometry context is rebuilt this often; in between only the Earth rotation moves.
NODE_SECONDS = 600.0
#: The reference scan step (the issue's brute force: 1 s).
SCAN_SECONDS = 1.0
#: Bisection stops at this bracket width.
BISECT_SECONDS = 1e-3
#: The engine and ERFA place a star within ~0.05" of each other (tests/astro/test_places.py); the
#: reference's 10-minute nodes add < 0.005". A crossing whose timing hinges on less than this
#: much altitude, or a dip shallower than this, is decided by that disagreement, not by the finder.
POSITION_AGREEMENT_DEG = 0.2 / 3600.0
#: The issue's requirement for every other crossing: within 1 s of the reference.
TIME_TOLERANCE_SECONDS = 1.0


@dataclass(frozen=True)
class Site:
    latitude_deg: float
    longitude_deg: float
    elevation_m: float = 0.0


@dataclass(frozen=True)
class Limit:
    """The limit under test: profile points (sorted, distinct azimuths), one floor, refraction."""

    profile_az_deg: tuple[float, ...]
    profile_alt_deg: tuple[float, ...]
    floor_deg: float
    refraction: bool = False
    pressure_hpa: float = 1010.0
    temperature_c: float = 10.0

    def geometric_deg(self, az_deg):
        az = np.asarray(az_deg, dtype=float) % 360.0
        pts_az = np.asarray(self.profile_az_deg, dtype=float)
        pts_alt = np.asarray(self.profile_alt_deg, dtype=float)
        # Explicit wrap (points repeated a turn either side), independent of the engine's np.interp.
        prof = np.interp(az, np.concatenate([pts_az - 360.0, pts_az, pts_az + 360.0]), np.tile(pts_alt, 3))
        observed = np.maximum(prof, self.floor_deg)
        if not self.refraction:
            return observed
        return observed - refraction_deg(observed, self.pressure_hpa, self.temperature_c)


class ErfaStar:
    """Observed (geometric) altitude and azimuth of one ICRS star at any POSIX seconds, from ERFA."""

    def __init__(self, ra_deg, dec_deg, site: Site, start_unix, end_unix, dut1_seconds=0.0):
        self.start = float(start_unix) - NODE_SECONDS
        nodes = np.arange(self.start, float(end_unix) + 2 * NODE_SECONDS, NODE_SECONDS)
        u1, u2 = _jd_pair(nodes)
        self.astrom, _ = erfa.apco13(u1, u2, dut1_seconds, math.radians(site.longitude_deg),
                                     math.radians(site.latitude_deg), site.elevation_m, 0.0, 0.0,
                                     0.0, 10.0, 0.0, 0.55)
        self.ri, self.di = erfa.atciq(math.radians(ra_deg), math.radians(dec_deg), 0.0, 0.0, 0.0, 0.0,
                                      self.astrom)
        self.dut1 = dut1_seconds

    def altaz(self, unix):
        aob, zob, _, _ = self._observed(unix, None)
        return 90.0 - np.degrees(zob), np.degrees(aob) % 360.0

    def hadec(self, unix, node_unix=None):
        """Observed (topocentric, diurnal aberration, no refraction) hour angle and Dec, degrees.

        ``node_unix`` picks the astrometry node (default: the node of each instant); differences
        of nearby instants should share one, or the 0.005" step between nodes shows in them.
        """
        _, _, hob, dob = self._observed(unix, node_unix)
        return np.degrees(hob), np.degrees(dob)

    def _observed(self, unix, node_unix=None):
        t = np.asarray(unix, dtype=float)
        at = t if node_unix is None else np.asarray(node_unix, dtype=float)
        node = np.clip(np.floor((at - self.start) / NODE_SECONDS).astype(int), 0, self.astrom.size - 1)
        u1, u2 = _jd_pair(t + self.dut1)  # UT1 for the rotation angle
        astrom = erfa.aper(erfa.era00(u1, u2), self.astrom[node])
        aob, zob, hob, dob, _ = erfa.atioq(self.ri[node], self.di[node], astrom)
        return aob, zob, hob, dob


def reference_crossings(star: ErfaStar, limit: Limit, start_unix, end_unix):
    """Crossings of the limit from a 1 s scan refined by bisection: ``(times, rising, rate_deg_s)``.

    ``rate_deg_s`` is how fast altitude minus limit changes there (for the agreement tolerance).
    """
    def margin(t):
        alt, az = star.altaz(t)
        return alt - limit.geometric_deg(az)

    grid = np.append(np.arange(float(start_unix), float(end_unix), SCAN_SECONDS), float(end_unix))
    v = margin(grid)
    i = np.flatnonzero((v[1:] > 0.0) != (v[:-1] > 0.0))
    lo, hi = grid[i], grid[i + 1]
    lo_above = v[i] > 0.0
    while lo.size and np.max(hi - lo) > BISECT_SECONDS:
        mid = 0.5 * (lo + hi)
        same = (margin(mid) > 0.0) == lo_above
        lo = np.where(same, mid, lo)
        hi = np.where(same, hi, mid)
    t = 0.5 * (lo + hi)
    rising = ~lo_above
    # The window is half-open with the engine's 1 ms edge rule (siderod.astro.events.in_window).
    inside = t < float(end_unix) - 1e-3
    t, rising = t[inside], rising[inside]
    rate = (margin(t + 0.5) - margin(t - 0.5)) if t.size else np.zeros(0)
    return t, rising, np.abs(rate)


def compare(star: ErfaStar, limit: Limit, start_unix, end_unix, times, rising):
    """Problems (strings) between the engine's crossings and the reference's; [] when they agree.

    First each list drops the pairs of crossings that bound a stretch the two models cannot
    judge: shorter than two scan steps (the reference scan cannot see it) or shallower than
    :data:`POSITION_AGREEMENT_DEG` on the reference model (a graze decided by the models'
    disagreement). What is left must match one to one: same direction, times within
    :data:`TIME_TOLERANCE_SECONDS` (or, where the margin changes so slowly that the models'
    agreement means more than that, the time it takes to change by the agreement).
    """
    def margin(t):
        alt, az = star.altaz(t)
        return alt - limit.geometric_deg(az)

    start, end = float(start_unix), float(end_unix)
    ref_t, ref_rising, ref_rate = reference_crossings(star, limit, start, end)
    ref_t, ref_rising, ref_rate = _judgeable(margin, ref_t, ref_rising, ref_rate)
    times, rising = np.asarray(times, dtype=float), np.asarray(rising, dtype=bool)
    ours_t, ours_rising, _ = _judgeable(margin, times, rising, np.zeros(times.size))
    if ref_t.size != ours_t.size or np.any(ref_rising != ours_rising):
        return [f"reference crossings {_show(ref_t, ref_rising)} but engine {_show(ours_t, ours_rising)}"]
    tolerance = np.maximum(TIME_TOLERANCE_SECONDS, POSITION_AGREEMENT_DEG / np.maximum(ref_rate, 1e-12))
    bad = np.flatnonzero(np.abs(ours_t - ref_t) > tolerance)
    return [f"crossing at {ref_t[k]:.3f} ({'rise' if ref_rising[k] else 'set'}): engine {ours_t[k]:.3f}"
            for k in bad]


def _judgeable(margin, times, rising, rate):
    """Drop pairs of consecutive opposite crossings that bound a stretch too short (under two scan
    steps) or too shallow (under the models' agreement) to judge, the shortest stretch first (so a
    blip inside a slightly longer dip goes before the dip)."""
    keep = np.ones(times.size, dtype=bool)
    judged = {}
    while True:
        live = np.flatnonzero(keep)
        candidates = []
        for a, b in zip(live[:-1], live[1:], strict=True):
            if rising[a] == rising[b]:
                continue
            if (a, b) not in judged:
                samples = margin(np.linspace(times[a], times[b], 41)[1:-1])
                # rising[a]: above in between, else below.
                deep = np.max(samples if rising[a] else -samples) >= POSITION_AGREEMENT_DEG
                judged[a, b] = deep and times[b] - times[a] >= 2 * SCAN_SECONDS
            if not judged[a, b]:
                candidates.append((times[b] - times[a], a, b))
        if not candidates:
            return times[keep], rising[keep], rate[keep]
        _, a, b = min(candidates)
        keep[a] = keep[b] = False


def _show(times, rising):
    shown = [(round(float(t), 3), "rise" if r else "set") for t, r in zip(times, rising, strict=True)]
    return shown or "none"


def _jd_pair(unix):
    days = np.asarray(unix, dtype=float) / 86400.0
    whole = np.floor(days)
    return 2440587.5 + whole, days - whole
