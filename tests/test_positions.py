"""siderod.plan.positions: one vectorised sky state, checked against pyerfa (ERFA, test-only reference)."""

from __future__ import annotations

import math
from dataclasses import replace

import erfa
import numpy as np
import pytest

from siderod.common.model import Frame, Site, Target, TimeSettings
from siderod.plan.positions import compute_sky, horizon_altitude_deg, target_stars, twilight_name

#: LMST vs ERFA gmst06: the issue's 1 microsecond of time, in hours.
LMST_TOL_HOURS = 1e-6 / 3600.0
#: LAST vs ERFA gst06a: the issue's 0.1 ms of time (IAU 2000B vs 2000A nutation), in hours.
LAST_TOL_HOURS = 1e-4 / 3600.0
#: Alt/az vs ERFA atco13 with refraction off: the issue's 1 arcsec, in degrees.
GEOMETRIC_TOL_DEG = 1.0 / 3600.0
#: Hour angle vs atco13: 1 arcsec of angle expressed in hours.
HA_TOL_HOURS = 1.0 / 3600.0 / 15.0
#: Instant used throughout: 2026-12-14 23:00 UTC, the demo night.
AT_UNIX = 1797289200.0
DUT1_SECONDS = -0.1


def _utc_parts():
    return erfa.dtf2d("UTC", 2026, 12, 14, 23, 0, 0.0)


@pytest.fixture
def config(demo_config):
    return replace(demo_config, time=TimeSettings(dut1_seconds=DUT1_SECONDS, dut1_source="config"))


def test_sidereal_times_match_erfa(config):
    sky = compute_sky(config, AT_UNIX)
    utc1, utc2 = _utc_parts()
    tai1, tai2 = erfa.utctai(utc1, utc2)
    tt1, tt2 = erfa.taitt(tai1, tai2)
    ut11, ut12 = erfa.utcut1(utc1, utc2, DUT1_SECONDS)
    lon_hours = config.site.longitude_deg / 15.0
    lmst = (erfa.gmst06(ut11, ut12, tt1, tt2) * 12 / math.pi + lon_hours) % 24.0
    last = (erfa.gst06a(ut11, ut12, tt1, tt2) * 12 / math.pi + lon_hours) % 24.0
    assert abs(sky.lmst_hours - lmst) < LMST_TOL_HOURS
    assert abs(sky.last_hours - last) < LAST_TOL_HOURS


def test_star_with_proper_motion_matches_atco13_without_refraction(config):
    config = replace(config, events=replace(config.events, refraction=False))
    sky = compute_sky(config, AT_UNIX)
    (sirius,) = [t for t in config.targets if t.name == "Sirius"]
    i = sky.names.index("Sirius")
    utc1, utc2 = _utc_parts()
    mas = math.radians(1.0 / 3.6e6)
    dec = math.radians(sirius.dec_deg)
    # ERFA atco13: ICRS at J2000 with proper motion (RA rate is not multiplied by cos dec), polar
    # motion zero, pressure 0 (no refraction).
    aob, zob, hob, dob, _rob, _eo = erfa.atco13(
        math.radians(sirius.ra_deg), dec, sirius.pm_ra_cosdec_mas_per_year * mas / math.cos(dec),
        sirius.pm_dec_mas_per_year * mas, sirius.parallax_mas / 1000.0, sirius.radial_velocity_km_s,
        utc1, utc2, DUT1_SECONDS, math.radians(config.site.longitude_deg),
        math.radians(config.site.latitude_deg), config.site.elevation_m, 0.0, 0.0,
        0.0, config.site.temperature_c, 0.0, 0.55)
    assert abs(sky.alt_deg[i] - (90.0 - math.degrees(zob))) < GEOMETRIC_TOL_DEG
    assert abs(sky.az_deg[i] - math.degrees(aob)) * math.cos(math.radians(sky.alt_deg[i])) < GEOMETRIC_TOL_DEG
    assert abs(sky.ha_hours[i] - math.degrees(hob) / 15.0) < HA_TOL_HOURS
    assert abs(sky.dec_deg[i] - math.degrees(dob)) < GEOMETRIC_TOL_DEG


def test_fixed_pointing_uses_erfa_hd2ae_geometry(config):
    config = replace(config, events=replace(config.events, refraction=False))
    sky = compute_sky(config, AT_UNIX)
    i = sky.names.index("Drift scan +41")
    az, el = erfa.hd2ae(0.0, math.radians(41.0), math.radians(config.site.latitude_deg))
    assert abs(sky.alt_deg[i] - math.degrees(el)) < 1e-9
    assert abs(sky.az_deg[i] - math.degrees(az)) < 1e-9
    assert sky.ha_hours[i] == 0.0 and not sky.rising[i]
    assert sky.ra_hours[i] == pytest.approx(sky.last_hours, abs=1e-12)


def test_state_shapes_and_ranges(config):
    sky = compute_sky(config, AT_UNIX)
    n = len(config.targets)
    for name in ("ra_hours", "dec_deg", "ha_hours", "alt_deg", "az_deg", "airmass", "rising", "min_alt_deg",
                 "sun_separation_deg"):
        assert getattr(sky, name).shape == (n,), name
    assert np.all((sky.ha_hours >= -12) & (sky.ha_hours < 12))
    assert np.all((sky.az_deg >= 0) & (sky.az_deg < 360))
    assert np.all(np.isnan(sky.airmass) == (sky.alt_deg < 0))
    assert np.all(sky.min_alt_deg >= config.events.min_altitude_deg - 5.0)
    assert sky.twilight == "night" and sky.sun_alt_deg < -18


def test_subset_of_targets_and_empty_list(config):
    sky = compute_sky(config, AT_UNIX, targets=config.targets[:2])
    assert sky.names == ("M42", "M31")
    empty = compute_sky(config, AT_UNIX, targets=())
    assert empty.names == () and empty.alt_deg.shape == (0,)


@pytest.mark.parametrize("ecliptic_of_date", [True, False], ids=["ecliptic-of-date", "fixed-places-only"])
def test_target_columns_kept_between_calls_never_go_stale(config, ecliptic_of_date):
    # compute_sky keeps what it reads from the target records for the last targets tuple it saw (the
    # live board asks every second). A later instant, another [events] min_altitude and another
    # tuple of equal targets must give exactly what a first call gives.
    if not ecliptic_of_date:
        targets = tuple(t for t in config.targets if t.frame is not Frame.ECLIPTIC_OF_DATE)
        config = replace(config, targets=targets)
    assert any(t.frame is Frame.ECLIPTIC_OF_DATE for t in config.targets) == ecliptic_of_date
    raised = replace(config, events=replace(config.events, min_altitude_deg=25.0))
    for later in (0.0, 3600.0, 6.5 * 3600.0):
        for cfg in (config, raised):
            kept = compute_sky(cfg, AT_UNIX + later)  # the configuration's own tuple: kept columns
            fresh = compute_sky(cfg, AT_UNIX + later, targets=list(cfg.targets))  # a new tuple
            assert kept.names == fresh.names and kept.frames == fresh.frames
            for name in ("ra_hours", "dec_deg", "ha_hours", "alt_deg", "az_deg", "airmass", "rising",
                         "min_alt_deg", "sun_separation_deg", "magnitude", "distance_au",
                         "elements_epoch_jd_tt"):
                np.testing.assert_array_equal(getattr(kept, name), getattr(fresh, name), err_msg=name)
    assert np.any(compute_sky(raised, AT_UNIX).min_alt_deg != compute_sky(config, AT_UNIX).min_alt_deg)
    # Another list of as many targets is read afresh, not taken for the last one.
    backwards = replace(config, targets=tuple(reversed(config.targets)))
    sky, sky_backwards = compute_sky(config, AT_UNIX), compute_sky(backwards, AT_UNIX)
    assert sky_backwards.names == sky.names[::-1]
    np.testing.assert_array_equal(sky_backwards.alt_deg, sky.alt_deg[::-1])


#: The mean equinox of date lies at RA 0 of the mean equator of date by definition; its apparent RA
#: differs by the equation of the equinoxes (about 1 s of time) and annual aberration (about 1.4 s):
#: 10 s of time is ample, and far below what the wrong equinox would give (50" of RA per year).
EQUINOX_OF_DATE_RA_TOL_HOURS = 10.0 / 3600.0


def test_ecliptic_of_date_places_follow_the_instant(config):
    (target,) = [t for t in config.targets if t.name == "Equinox of date"]
    config = replace(config, targets=(config.targets[0], target))  # one tuple: its columns are kept
    for years in (0.0, 30.0, 0.0):
        sky = compute_sky(config, AT_UNIX + years * 365.25 * 86400.0)
        ra = sky.ra_hours[sky.names.index(target.name)]
        assert abs((ra + 12.0) % 24.0 - 12.0) < EQUINOX_OF_DATE_RA_TOL_HOURS, years


def test_rising_follows_hour_angle(config):
    sky = compute_sky(config, AT_UNIX)
    sky_targets = np.array([f != "fixed-pointing" for f in sky.frames])
    assert np.array_equal(sky.rising[sky_targets], sky.ha_hours[sky_targets] < 0)


def test_horizon_profile_wraps_through_north():
    site = Site("x", 50.0, 0.0, horizon=((10.0, 20.0), (350.0, 10.0)))
    assert horizon_altitude_deg(site, [0.0, 10.0, 180.0, 355.0]).tolist() == [15.0, 20.0, 15.0, 12.5]
    assert horizon_altitude_deg(Site("flat", 0.0, 0.0), 123.0) == 0.0


def test_target_stars_refuses_fixed_pointings():
    scan = Target("s", Frame.HADEC, 0.0, 10.0, None, 10.0, ha_hours=0.0)
    with pytest.raises(ValueError, match="fixed hour-angle"):
        target_stars([scan], 2461389.5)


@pytest.mark.parametrize(("alt", "name"), [(10.0, "day"), (-3.0, "civil"), (-9.0, "nautical"),
                                           (-15.0, "astronomical"), (-30.0, "night")])
def test_twilight_names(alt, name):
    assert twilight_name(alt) == name
