"""Sources drifting through a fixed beam: enter, centre and leave against a brute-force reference.

Reference: the source's observed hour angle and declination from ERFA (pyerfa, test-only; the
``erfa.atco13`` chain of tests/helpers/horizon_reference.py: topocentric, diurnal aberration, no
refraction), scanned every 2 s over a day; the beam's edge is crossed where ``erfa.seps`` (angular
separation from the axis) equals the radius, or, for a fan beam, where the tangent-plane ellipse
function (the beam's definition, not a reference) equals 1; the centre is where the separation
stops falling. Each found by bisection to 1 ms.
"""

import math
import zlib

import erfa
import numpy as np
import pytest

from siderod.astro import beams as bm
from siderod.astro import events as ev
from siderod.astro.places import stars_from_radec
from siderod.astro.sidereal import FastSidereal
from tests.helpers.horizon_reference import ErfaStar, Site

#: The issue's requirement: within 1 s of the brute-force reference.
BEAM_EVENT_TOLERANCE_SECONDS = 1.0
#: What the engine reaches here, as a regression guard well inside the requirement: measured up to
#: 0.11 s over random draws of sources (near-pole pointings, where a source crosses the beam's edge
#: slowly and a tiny angle is many seconds), about 0.02 s elsewhere.
BEAM_EVENT_EXPECTED_SECONDS = 0.25
#: A source's apparent place drifts by well under 1" a day, so successive transits of one
#: source are one sidereal day apart (86164.09 s, common practice) to a few hundredths of a second.
SIDEREAL_DAY_SECONDS = 86164.0905
REPEAT_TOLERANCE_SECONDS = 0.1
SCAN_SECONDS = 2.0
START = 1797249600.0  # 2026-12-14T12:00:00Z, the demo night
SITES = {"corrie-hill": Site(56.2083, -3.6875, 212.0), "southern": Site(-33.93, 18.47, 30.0),
         "arctic": Site(72.5, 25.0, 50.0)}
#: (hour angle h, declination deg, half width deg, half width north-south deg or None)
POINTINGS = {"meridian": (0.0, 20.0, 1.5, None), "east": (-2.0, -10.0, 2.0, None),
             "west": (3.0, 45.0, 1.0, None), "near-pole": (0.0, 86.0, 2.5, None),
             "fan": (0.5, 5.0, 0.75, 6.0)}


def _beam_value(ha_deg, dec_deg, pointing):
    hp, dp, a, b = pointing
    h = np.radians(ha_deg) - hp * math.pi / 12.0
    d, p = np.radians(dec_deg), math.radians(dp)
    if b is None:  # circle: ERFA's angular separation against the radius
        return np.degrees(erfa.seps(hp * math.pi / 12.0, p, np.radians(ha_deg), d)) / a - 1.0
    cosc = np.sin(d) * math.sin(p) + np.cos(d) * math.cos(p) * np.cos(h)
    xi = np.cos(d) * np.sin(h) / cosc
    eta = (np.sin(d) * math.cos(p) - np.cos(d) * math.sin(p) * np.cos(h)) / cosc
    return np.where(cosc > 0, (xi / math.radians(a)) ** 2 + (eta / math.radians(b)) ** 2, np.inf) - 1.0


def _bisect(fun, lo, hi):
    f_lo = fun(lo)
    while np.max(hi - lo, initial=0.0) > 1e-3:
        mid = 0.5 * (lo + hi)
        f_mid = fun(mid)
        same = (f_mid > 0) == (f_lo > 0)
        lo, f_lo, hi = np.where(same, mid, lo), np.where(same, f_mid, f_lo), np.where(same, hi, mid)
    return 0.5 * (lo + hi)


def _reference(star: ErfaStar, pointing, start, end):
    """[(time, kind)] from the ERFA scan (kinds as in siderod.astro.beams)."""
    def value(t):
        return _beam_value(*star.hadec(t), pointing)

    def separation_slope(t):
        h, d = star.hadec(t + 0.05, node_unix=t)
        h0, d0 = star.hadec(t - 0.05, node_unix=t)
        hp, dp = pointing[0] * 15.0, pointing[1]
        return (erfa.seps(math.radians(hp), math.radians(dp), np.radians(h), np.radians(d))
                - erfa.seps(math.radians(hp), math.radians(dp), np.radians(h0), np.radians(d0)))

    grid = np.arange(start, end, SCAN_SECONDS)
    v = value(grid)
    out = []
    i = np.flatnonzero((v[1:] > 0) != (v[:-1] > 0))
    for t, entering in zip(_bisect(value, grid[i], grid[i + 1]), v[i] > 0, strict=True):
        out.append((float(t), bm.BEAM_ENTER if entering else bm.BEAM_LEAVE))
    s = separation_slope(grid)
    i = np.flatnonzero((s[:-1] < 0) & (s[1:] >= 0))
    met = [t for t, _ in out]
    for t in _bisect(separation_slope, grid[i], grid[i + 1]):
        # A closest approach counts where the source meets the beam on that pass (or is inside).
        if value(np.array([t]))[0] < 0 or any(abs(t - m) < 6 * 3600 for m in met):
            out.append((float(t), bm.BEAM_CENTRE))
    return sorted(out)


def _engine(site, pointing, ra, dec, start, end):
    sidereal = FastSidereal(start - 600, end + 600)
    track = ev.build_track(stars_from_radec(ra, dec), start, end)
    hp, dp, a, b = pointing
    return bm.find_beam_events(track, lambda u: sidereal.last_hours(u, site.longitude_deg), site.latitude_deg,
                               hp, dp, a, start, end, half_width_dec_deg=b)


@pytest.mark.slow
@pytest.mark.parametrize("site_name", sorted(SITES))
@pytest.mark.parametrize("pointing_name", sorted(POINTINGS))
def test_enter_centre_leave_match_erfa_brute_force(site_name, pointing_name):
    site, pointing = SITES[site_name], POINTINGS[pointing_name]
    # crc32, not hash(): str hashes change with PYTHONHASHSEED, so each run drew other sources.
    rng = np.random.default_rng(zlib.crc32(f"{site_name}/{pointing_name}".encode()))
    hp, dp, a, b = pointing
    # Sources around the beam's declination, some just outside, at random right ascensions.
    dec = np.clip(dp + rng.uniform(-1.4, 1.4, 5) * max(a, b or a), -89.5, 89.5)
    ra = rng.uniform(0.0, 360.0, 5)
    end = START + 86400.0
    idx, t, kind, offset = _engine(site, pointing, ra, dec, START, end)
    compared = 0
    for j in range(ra.size):
        ref = _reference(ErfaStar(ra[j], dec[j], site, START, end), pointing, START, end)
        mine = sorted(zip(t[idx == j].tolist(), kind[idx == j].tolist(), strict=True))
        assert [k for _, k in mine] == [k for _, k in ref], (j, mine, ref)
        for (tm, _), (tr, _) in zip(mine, ref, strict=True):
            assert abs(tm - tr) < BEAM_EVENT_TOLERANCE_SECONDS
            assert abs(tm - tr) < BEAM_EVENT_EXPECTED_SECONDS
        compared += len(ref)
    assert compared > 0 or pointing_name == "near-pole"


def test_a_source_returns_one_sidereal_day_earlier_each_day():
    # Over a week, each pass through a meridian beam comes 3 m 56 s earlier by the clock (common
    # practice: 24 h - 23 h 56 m 4.09 s).
    site = SITES["corrie-hill"]
    idx, t, kind, offset = _engine(site, (0.0, 20.0, 1.5, None), np.array([101.0]), np.array([20.4]),
                                   START, START + 7 * 86400.0)
    for code in (bm.BEAM_ENTER, bm.BEAM_CENTRE, bm.BEAM_LEAVE):
        times = t[kind == code]
        assert times.size == 7
        assert np.all(np.abs(np.diff(times) - SIDEREAL_DAY_SECONDS) < REPEAT_TOLERANCE_SECONDS)
    assert np.allclose(offset, offset[0], atol=1e-3)  # the closest approach: 0.4 deg north of the axis


def test_sources_outside_the_beams_declination_give_nothing_and_a_pole_beam_none():
    site = SITES["corrie-hill"]
    idx, t, kind, offset = _engine(site, (0.0, 20.0, 1.5, None), np.array([10.0, 200.0]),
                                   np.array([22.0, 17.0]), START, START + 86400.0)
    assert t.size == 0
    idx, t, kind, offset = _engine(site, (0.0, 90.0, 5.0, None), np.array([10.0]), np.array([87.0]),
                                   START, START + 86400.0)
    assert t.size == 0  # always inside (separation 3 deg all day): nothing enters or leaves
    with pytest.raises(ValueError, match="half widths"):
        _engine(site, (0.0, 20.0, 0.0, None), np.array([10.0]), np.array([20.0]), START, START + 3600.0)
