"""The event engine against brute-force references, and its edge cases.

References (tests/reference/event_reference.json, built by
tests/reference/builders/build_event_reference.py; its header names pyerfa/astropy versions):
stars by bisection to 1 ms on ``erfa.atco13`` (no refraction, polar motion 0, same DUT1) from a
1-minute grid; Sun and Moon by the same bisection on astropy ``AltAz``.
"""

import json
import math
import pathlib

import erfa
import numpy as np
import pytest

from siderod.astro import events as ev
from siderod.astro.places import Observer, stars_from_radec
from siderod.astro.refraction import refraction_deg, refraction_slope
from siderod.astro.sidereal import FastSidereal

REFERENCE = json.loads((pathlib.Path(__file__).parents[1] / "reference" / "event_reference.json").read_text())
SITES = REFERENCE["header"]["sites"]

#: Star events: the issue's requirement (within 1 s of a bisection on erfa.atco13).
STAR_EVENT_TOLERANCE_SECONDS = 1.0
#: What the engine reaches on culminations (measured <= 0.075 s): a regression guard well inside
#: the requirement.
STAR_EVENT_EXPECTED_SECONDS = 0.1
#: Altitude crossings with diurnal aberration included (measured <= 0.016 s, the largest at grazing
#: and near-polar stars, where a 0.05" model difference takes longest to cross): a regression guard.
CROSSING_EXPECTED_SECONDS = 0.025
#: 99th percentile of the altitude crossings of the 40 random stars per case (measured 0.007 s; it
#: was 0.014 s, with a steady 0.005 s bias, before diurnal aberration was applied to crossings).
#: The reference is itself bisected to 1 ms.
CROSSING_P99_SECONDS = 0.01
#: Stars per case drawn at random by the reference builder; the rest are near-polar or grazing.
RANDOM_STARS_PER_CASE = 40
#: Sun and Moon: the issue's requirement against astropy (our Sun/Moon are low-precision series).
SUN_MOON_TOLERANCE_SECONDS = 30.0
CASES = sorted(REFERENCE["cases"])


def _engine(case):
    lat, lon, _ = SITES[case["site"]]
    start, end, dut1 = case["start_unix"], case["end_unix"], case["dut1_seconds"]
    stars = stars_from_radec(case["ra_deg"], case["dec_deg"])
    sidereal = FastSidereal(start - 600, end + 600, dut1_seconds=dut1)
    track = ev.build_track(stars, start, end, dut1_seconds=dut1)

    def last(unix):
        return sidereal.last_hours(unix, lon)

    return track, last, lat, start, end


def _match(ref_idx, ref_t, ref_rising, idx, t, rising, count=True):
    """Pair each reference event with ours (same star, same direction, nearest); return |dt| array."""
    if count:
        assert len(t) == len(ref_t), f"event count differs: ours {len(t)}, reference {len(ref_t)}"
    diffs = []
    for j, time, r in zip(ref_idx, ref_t, ref_rising, strict=True):
        mine = t[(idx == j) & (rising == r)]
        assert mine.size, f"no event for star {j} near {time}"
        diffs.append(np.min(np.abs(mine - time)))
    return np.array(diffs)


@pytest.mark.parametrize("name", CASES)
def test_culminations_match_erfa_atco13_bisection(name):
    # Reference: erfa.atco13 observed hour angle through 0 (upper) and 12 h (lower), bisected to 1 ms.
    case = REFERENCE["cases"][name]
    track, last, lat, start, end = _engine(case)
    for key, ha in (("culminations", 0.0), ("lower_culminations", 12.0)):
        ref = np.array(case[key]).reshape(-1, 2)
        idx, t, _ = ev.find_hour_angle_events(track, last, ha, start, end, latitude_deg=lat)
        d = _match(ref[:, 0].astype(int), ref[:, 1], np.ones(len(ref), bool), idx, t, np.ones(len(t), bool))
        assert d.max() < STAR_EVENT_TOLERANCE_SECONDS
        assert d.max() < STAR_EVENT_EXPECTED_SECONDS


@pytest.mark.parametrize("name", CASES)
@pytest.mark.parametrize("threshold", [0.0, 30.0])
def test_altitude_crossings_match_erfa_atco13_bisection(name, threshold):
    # Reference: erfa.atco13 geometric altitude (phpa = 0) through the threshold, bisected to 1 ms.
    # Includes grazing stars (greatest altitude 0.2 deg above the threshold) and Dec +-85/89.2.
    case = REFERENCE["cases"][name]
    track, last, lat, start, end = _engine(case)
    col, t_ref, r_ref = case[f"crossings_{threshold:g}"]
    idx, t, rising = ev.find_altitude_events(track, last, lat, threshold, start, end)
    d = _match(np.array(col), np.array(t_ref), np.array(r_ref), idx, t, rising)
    assert d.max() < STAR_EVENT_TOLERANCE_SECONDS
    assert d.max() < CROSSING_EXPECTED_SECONDS


@pytest.mark.slow
def test_altitude_crossings_p99_with_diurnal_aberration():
    # Reference: as above (erfa.atco13 altitude bisected to 1 ms), every case, both thresholds,
    # the random stars only (grazing ones turn any tiny place difference into time).
    diffs = []
    for name in CASES:
        case = REFERENCE["cases"][name]
        track, last, lat, start, end = _engine(case)
        for threshold in (0.0, 30.0):
            col, t_ref, r_ref = (np.array(v) for v in case[f"crossings_{threshold:g}"])
            random = col < RANDOM_STARS_PER_CASE
            idx, t, rising = ev.find_altitude_events(track, last, lat, threshold, start, end)
            diffs.append(_match(col[random], t_ref[random], r_ref[random], idx, t, rising, count=False))
    assert np.percentile(np.concatenate(diffs), 99) < CROSSING_P99_SECONDS


@pytest.mark.parametrize("name", CASES)
def test_flat_profile_path_agrees_with_closed_form(name):
    # The horizon-profile finder with a profile that is flat at 0 deg must find the same events
    # as the closed form (and hence as erfa.atco13).
    case = REFERENCE["cases"][name]
    track, last, lat, start, end = _engine(case)
    n = len(track)
    limit = ev.AltitudeLimit(np.full(n, -90.0), np.array([0.0, 180.0]), np.array([0.0, 0.0]),
                             refraction=False)
    idx, t, rising = ev.find_limit_events(track, last, lat, limit, start, end)
    col, t_ref, r_ref = case["crossings_0"]
    d = _match(np.array(col), np.array(t_ref), np.array(r_ref), idx, t, rising)
    assert d.max() < CROSSING_EXPECTED_SECONDS


@pytest.mark.parametrize("name", CASES)
def test_sun_events_match_astropy_bisection(name):
    # Reference: astropy get_sun -> AltAz (pressure 0) through -0.8333/-6/-12/-18, bisected to 1 ms.
    # Covers midnight sun and polar night (arctic cases: some thresholds never crossed).
    case = REFERENCE["cases"][name]
    lat, lon, elev = SITES[case["site"]]
    observer = Observer(lat, lon, elev, refraction=False)
    col, t, rising = ev.find_sun_events(observer, case["start_unix"], case["end_unix"],
                                        dut1_seconds=case["dut1_seconds"])
    ref_col, ref_t, ref_r = case["sun"]
    d = _match(np.array(ref_col), np.array(ref_t), np.array(ref_r), col, t, rising)
    assert d.size == 0 or d.max() < SUN_MOON_TOLERANCE_SECONDS


@pytest.mark.parametrize("name", CASES)
def test_moon_events_match_astropy_bisection(name):
    # Reference: astropy get_body("moon") -> AltAz, upper limb at -34', bisected to 1 ms.
    case = REFERENCE["cases"][name]
    lat, lon, elev = SITES[case["site"]]
    observer = Observer(lat, lon, elev, refraction=False)
    t, rising = ev.find_moon_events(observer, case["start_unix"], case["end_unix"],
                                    dut1_seconds=case["dut1_seconds"])
    _, ref_t, ref_r = case["moon"]
    d = _match(np.zeros(len(ref_t), int), np.array(ref_t), np.array(ref_r), np.zeros(len(t), int), t, rising)
    assert d.size == 0 or d.max() < SUN_MOON_TOLERANCE_SECONDS


def test_events_exactly_at_window_edges_belong_to_the_window_that_starts_there():
    case = REFERENCE["cases"]["demo-night"]
    track, last, lat, start, end = _engine(case)
    idx, t, _ = ev.find_hour_angle_events(track, last, 0.0, start, end, latitude_deg=lat)
    edge = float(t[len(t) // 2])
    j = idx[len(t) // 2]
    before = ev.find_hour_angle_events(track, last, 0.0, start, edge, latitude_deg=lat)
    after = ev.find_hour_angle_events(track, last, 0.0, edge, end, latitude_deg=lat)
    assert not np.any((before[0] == j) & (np.abs(before[1] - edge) < 1.0))
    assert np.any((after[0] == j) & (np.abs(after[1] - edge) < 1e-3))
    # Back to back, the two halves list every culmination exactly once.
    assert len(before[1]) + len(after[1]) == len(t)


def _erfa_profile_crossings(ra, dec, lat, lon, elev, start, end, profile_az, profile_alt):
    """Brute force: erfa.atco13 geometric altitude minus the profile (np.interp with explicit wrap)."""
    az_pts = np.concatenate([profile_az - 360, profile_az, profile_az + 360])
    alt_pts = np.tile(profile_alt, 3)

    def f(unix):
        u1 = 2440587.5 + np.floor(unix / 86400.0)
        u2 = unix / 86400.0 - np.floor(unix / 86400.0)
        aob, zob, *_ = erfa.atco13(math.radians(ra), math.radians(dec), 0, 0, 0, 0, u1, u2, 0.0,
                                   math.radians(lon), math.radians(lat), elev, 0, 0, 0, 10, 0, 0.55)
        return 90 - np.degrees(zob) - np.interp(np.degrees(aob) % 360, az_pts, alt_pts)

    grid = np.arange(start, end + 30, 30.0)
    v = f(grid)
    out = []
    for i in np.flatnonzero((v[1:] > 0) != (v[:-1] > 0)):
        lo, hi = grid[i], grid[i + 1]
        for _ in range(30):
            mid = 0.5 * (lo + hi)
            if (f(np.array([mid]))[0] > 0) == (v[i] > 0):
                lo = mid
            else:
                hi = mid
        out.append((0.5 * (lo + hi), bool(v[i + 1] > 0)))
    return out


@pytest.mark.slow
def test_horizon_profile_wrapping_through_north_matches_erfa_bisection():
    # A wall of 12 deg centred on azimuth 0 (points at 350 and 10 deg, wrapping), 2 deg elsewhere.
    # Stars crossing low in the north at the demo latitude meet it; reference: erfa.atco13 bisection.
    lat, lon, elev = SITES["corrie-hill"]
    start = 1797249600.0  # 2026-12-14T12:00:00Z
    end = start + 86400.0
    profile_az = np.array([10.0, 40.0, 320.0, 350.0])
    profile_alt = np.array([12.0, 2.0, 2.0, 12.0])
    ra = np.array([10.0, 100.0, 250.0])
    dec = np.array([30.0, 35.0, 40.0])  # lower culmination at 56.2 + dec - 90: -3.8 .. 6.2 deg
    stars = stars_from_radec(ra, dec)
    sidereal = FastSidereal(start - 600, end + 600)
    track = ev.build_track(stars, start, end)
    limit = ev.AltitudeLimit(np.full(3, -90.0), profile_az, profile_alt, refraction=False)
    idx, t, rising = ev.find_limit_events(track, lambda u: sidereal.last_hours(u, lon), lat, limit,
                                          start, end)
    for j in range(3):
        ref = _erfa_profile_crossings(ra[j], dec[j], lat, lon, elev, start, end, profile_az, profile_alt)
        mine = t[idx == j]
        assert len(mine) == len(ref) >= 2
        for (time, r), m, mr in zip(ref, mine, rising[idx == j], strict=True):
            assert abs(m - time) < STAR_EVENT_TOLERANCE_SECONDS and mr == r


def test_hadec_and_pole_inputs_do_not_break_the_finders():
    # Dec exactly +-90: constant altitude, so no crossings; hour-angle marks still exist.
    stars = stars_from_radec([0.0, 0.0], [90.0, -90.0])
    start = 1797249600.0
    sidereal = FastSidereal(start - 600, start + 87000)
    track = ev.build_track(stars, start, start + 86400)
    idx, t, _ = ev.find_altitude_events(track, lambda u: sidereal.last_hours(u, 0.0), 56.0, 0.0,
                                        start, start + 86400)
    assert t.size == 0
    assert np.all(np.isfinite(track.radec_at(start)[1]))


def test_intervals_and_intersection():
    up = ev.intervals_from_crossings(False, [10.0, 50.0, 70.0], [True, False, True], 0.0, 100.0)
    assert up.tolist() == [[10.0, 50.0], [70.0, 100.0]]
    night = ev.intervals_from_crossings(True, [30.0, 80.0], [False, True], 0.0, 100.0)
    assert night.tolist() == [[0.0, 30.0], [80.0, 100.0]]
    assert ev.intersect_intervals(up, night).tolist() == [[10.0, 30.0], [80.0, 100.0]]
    assert ev.intervals_from_crossings(True, [], [], 0.0, 5.0).tolist() == [[0.0, 5.0]]


def test_altitude_limit_interpolates_through_north_and_applies_refraction_once():
    limit = ev.AltitudeLimit(np.array([0.0, 20.0]), np.array([10.0, 350.0]), np.array([10.0, 30.0]))
    # Halfway between 350 (30 deg) and 10 (10 deg) through north: 20 deg.
    assert float(limit.observed_deg(np.array([0.0]), np.array([0]))[0]) == pytest.approx(20.0)
    assert float(limit.observed_deg(np.array([180.0]), np.array([1]))[0]) == pytest.approx(20.0)
    # Refraction on: geometric = observed - Bennett R(observed); R(20 deg) ~ 2.6' (Meeus ch. 16, from memory).
    geo = float(limit.geometric_deg(np.array([0.0]), np.array([0]))[0])
    assert 20.0 - geo == pytest.approx(2.6 / 60, abs=0.3 / 60)
    assert float(limit.to_observed_deg(geo)) == pytest.approx(20.0, abs=1e-6)


def test_refraction_derivative_bounds_used_by_the_profile_finder_hold():
    # The profile finder certifies its monotone pieces with bounds on Bennett's dR/dh and d2R/dh2
    # (siderod.astro.events constants); measured here on a fine grid at standard weather, where
    # the formula is smooth (between the kinks at 0 deg and the zenith clamp).
    h = np.linspace(0.0, 89.1, 178201)
    slope = refraction_slope(h)
    curvature = np.gradient(slope, h)
    assert np.abs(slope).max() <= ev._REFRACTION_SLOPE_MAX
    assert np.abs(curvature[1:-1]).max() <= ev._REFRACTION_CURVATURE_MAX_PER_DEG
    # The closed-form slope is the derivative of refraction_deg (central differences, 1e-6 deg).
    numeric = (refraction_deg(h[1:-1] + 1e-6) - refraction_deg(h[1:-1] - 1e-6)) / 2e-6
    assert np.abs(numeric - slope[1:-1]).max() < 1e-6
    below = np.linspace(-4.99, -0.01, 99)
    assert np.allclose((refraction_deg(below + 1e-6) - refraction_deg(below - 1e-6)) / 2e-6,
                       refraction_slope(below), atol=1e-6)


def test_profile_curve_pieces_are_monotone_in_declination():
    # The invariant the finder's completeness rests on: along each piece sin(declination) of the
    # curve's points never turns back (checked on 50 points per piece), at several latitudes,
    # for a profile with a 0.5-deg spike, close points and a wall through north.
    az = (0.0, 2.0, 2.25, 2.5, 40.0, 40.3, 40.6, 90.0, 200.0, 355.0)
    alt = (30.0, 3.0, 60.0, 3.0, 10.0, -2.0, 10.0, 18.0, 5.0, 30.0)
    for lat in (-89.0, -33.9, 0.0, 56.2, 78.0):
        for refraction in (False, True):
            curve = ev._profile_curve(az, alt, lat, refraction, 1010.0, 10.0)
            for first, last in zip(curve.piece_first, curve.piece_last, strict=True):
                seg = curve.node_seg[first]
                u = np.linspace(curve.node_u[first], curve.node_u[last], 50)
                z = curve.point(np.full(50, seg), u).z
                step = np.diff(z) * (1.0 if z[-1] >= z[0] else -1.0)
                assert step.min() >= -1e-15
