"""Drift scans end to end: a fixed pointing's beam and sources in the configuration, the agenda and
the planned alerts.

References (test-only): ERFA (pyerfa) for a star's observed hour angle and declination (the
``erfa.atco13`` chain of tests/helpers/horizon_reference.py: topocentric, diurnal aberration, no
refraction) and its angular separation from the beam's axis (``erfa.seps``); astropy 8 (offline,
builtin ephemeris) ``get_sun`` transformed to its topocentric ``HADec`` frame for the Sun. Each
reference scans the separation every 2 s and interpolates the crossing of the beam's radius.
"""

import math
import warnings
from datetime import UTC, datetime, timedelta

import erfa
import numpy as np
import pytest

from siderod.common.errors import ConfigErrors
from siderod.common.model import EventKind
from siderod.files.config import parse_config
from siderod.plan.agenda import compute_agenda, event_to_json
from siderod.plan.planner import parse_alert_key, plan_alerts
from tests.helpers.horizon_reference import ErfaStar, Site

#: The issue's requirement: enter, centre and leave within 1 s of the brute-force reference.
BEAM_EVENT_TOLERANCE_SECONDS = 1.0
#: Measured: the star within 1 ms, the Sun within 0.26 s (its low-precision theory, ~0.01 deg).
#: The closest approach is flat in time (the separation changes to second order), so the
#: reference's minimum is found less sharply: a parabola through 2 s samples is good to ~0.1 s.
CENTRE_TOLERANCE_SECONDS = 1.0
#: The offset at the centre is the source's declination minus the axis's: 0.001 deg as printed.
OFFSET_TOLERANCE_DEG = 0.002
SCAN_SECONDS = 2.0
LAT, LON, HEIGHT = 56.2083, -3.6875, 212.0  # the demo site, Corrie Hill Observatory (invented)
START = datetime(2026, 12, 14, 12, 0, tzinfo=UTC)  # the demo night

SITE_TEXT = f"""[site]
name = "Test site"
latitude = {LAT}
longitude = {LON}
elevation = {HEIGHT}
timezone = "UTC"
[time]
dut1 = 0.0
[targets]
files = ["t.toml"]
"""

TARGETS = """[[target]]
name = "Vega"
ra = "18h36m56.34s"
dec = "+38 47 01.3"

[[target]]
name = "Dish"
frame = "fixed-pointing"
ha = "0h30m"
dec = "+38.5"
beam = 3
sources = ["Vega", "sun"]
alerts = { beam-enter = [5, 0], beam-leave = [0] }

[[target]]
name = "Horn"
frame = "fixed-pointing"
ha = "-2h"
dec = "-23.3"
beam = 4
sources = ["sun"]
"""


def _config(targets_text=TARGETS):
    files = {"t.toml": targets_text}
    return parse_config(SITE_TEXT, "/cfg/config.toml", read_file=lambda p: files[p.rsplit("/", 1)[-1]],
                        at_unix=START.timestamp(), env={})


def _errors(targets_text):
    with pytest.raises(ConfigErrors) as info:
        _config(targets_text)
    return info.value.errors


def _crossings(times, separation_deg, radius_deg):
    """Reference (enter, centre, leave) times from a scan: crossings interpolated, minimum by parabola."""
    v = separation_deg - radius_deg
    i = np.flatnonzero((v[1:] > 0) != (v[:-1] > 0))
    edges = times[i] + SCAN_SECONDS * v[i] / (v[i] - v[i + 1])
    k = int(np.argmin(separation_deg))
    a, b, c = separation_deg[k - 1:k + 2]
    centre = times[k] + 0.5 * SCAN_SECONDS * (a - c) / (a - 2 * b + c)
    return edges, centre


def _beam_rows(agenda, pointing, source):
    table = agenda.table
    names = list(table.names)
    rows = np.flatnonzero((table.target == names.index(pointing))
                          & (table.beam_source == names.index(source)))
    return table.take(rows)


def test_a_star_drifts_through_an_off_meridian_beam_as_erfa_says():
    config = _config()
    agenda = compute_agenda(config, START, 24.0)
    rows = _beam_rows(agenda, "Dish", "Vega")
    kinds = [e.kind for e in rows.records()]
    assert kinds == [EventKind.BEAM_ENTER, EventKind.BEAM_CENTRE, EventKind.BEAM_LEAVE]
    t = rows.time_unix
    star = ErfaStar(279.234750, 38.783694, Site(LAT, LON, HEIGHT), t[0] - 1200, t[2] + 1200)
    grid = np.arange(t[0] - 900, t[2] + 900, SCAN_SECONDS)
    ha_deg, dec_deg = star.hadec(grid)
    sep = np.degrees(erfa.seps(math.radians(7.5), math.radians(38.5), np.radians(ha_deg),
                               np.radians(dec_deg)))
    edges, centre = _crossings(grid, sep, 1.5)
    assert edges.size == 2
    assert abs(t[0] - edges[0]) < BEAM_EVENT_TOLERANCE_SECONDS
    assert abs(t[2] - edges[1]) < BEAM_EVENT_TOLERANCE_SECONDS
    assert abs(t[1] - centre) < CENTRE_TOLERANCE_SECONDS
    _, dec_at_centre = star.hadec(np.array([t[1]]))
    assert abs(rows.beam_offset_deg[1] - (dec_at_centre[0] - 38.5)) < OFFSET_TOLERANCE_DEG
    fields = event_to_json(rows.event(1))
    assert fields["target"] == "Dish" and fields["beam_source"] == "Vega" and fields["kind"] == "beam-centre"


@pytest.mark.slow
def test_the_sun_as_a_source_matches_astropy():
    # Near the December solstice the Sun crosses a beam at Dec -23.3, two hours east of the meridian.
    from astropy import units as u
    from astropy.coordinates import EarthLocation, HADec, get_sun
    from astropy.time import Time
    from astropy.utils import iers

    iers.conf.auto_download = False
    agenda = compute_agenda(_config(), START, 24.0)
    rows = _beam_rows(agenda, "Horn", "Sun")
    kinds = [e.kind for e in rows.records()]
    assert kinds == [EventKind.BEAM_ENTER, EventKind.BEAM_CENTRE, EventKind.BEAM_LEAVE]
    t = rows.time_unix
    grid = np.arange(t[0] - 900, t[2] + 900, SCAN_SECONDS)
    when = Time(grid, format="unix", scale="utc")
    when.delta_ut1_utc = 0.0
    place = EarthLocation.from_geodetic(LON * u.deg, LAT * u.deg, HEIGHT * u.m)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # astropy's IERS table may be older than the demo night
        seen = get_sun(when).transform_to(HADec(obstime=when, location=place, pressure=0 * u.hPa))
    sep = np.degrees(erfa.seps(math.radians(-30.0), math.radians(-23.3), seen.ha.rad, seen.dec.rad))
    edges, centre = _crossings(grid, sep, 2.0)
    assert edges.size == 2
    assert abs(t[0] - edges[0]) < BEAM_EVENT_TOLERANCE_SECONDS
    assert abs(t[2] - edges[1]) < BEAM_EVENT_TOLERANCE_SECONDS
    assert abs(t[1] - centre) < CENTRE_TOLERANCE_SECONDS


@pytest.mark.slow
def test_beam_alerts_are_planned_with_their_leads_and_muted_like_other_kinds():
    config = _config()
    agenda = compute_agenda(config, START, 24.0)
    alerts = [a for a in plan_alerts(agenda, config, muted={}, now_utc=START) if a.event.target == "Dish"]
    got = sorted((a.event.kind.value, a.lead_minutes, a.event.beam_source) for a in alerts)
    assert got == [("beam-enter", 0.0, "Vega"), ("beam-enter", 5.0, "Vega"), ("beam-leave", 0.0, "Vega")]
    enter = next(a for a in alerts if a.event.kind is EventKind.BEAM_ENTER and a.lead_minutes == 5.0)
    assert enter.title == "Vega enters the beam of Dish in 5 min"
    assert enter.due_utc == enter.event.time_utc - timedelta(minutes=5)
    assert "of the beam's axis" in enter.body
    muted = plan_alerts(agenda, config, muted={"Dish": None}, now_utc=START)
    assert not [a for a in muted if a.event.target == "Dish"]
    # The Sun's passage through the horn: alerted with the caution about optics, never held by day.
    sun_config = _config(TARGETS.replace('sources = ["sun"]',
                                         'sources = ["sun"]\nalerts = { beam-centre = [0] }'))
    sun_alerts = [a for a in plan_alerts(compute_agenda(sun_config, START, 24.0), sun_config, muted={},
                                         now_utc=START) if a.event.target == "Horn"]
    assert [a.event.kind for a in sun_alerts] == [EventKind.BEAM_CENTRE]
    assert "never point unfiltered optics at or near the Sun" in sun_alerts[0].body


def test_two_sources_centring_in_the_same_second_get_an_alert_each():
    """Two sources 1 deg apart in declination whose right ascensions differ by the 0.73 s that
    precession and aberration put between their apparent places, so that they cross the meridian
    beam's centre in the same second: each gets its own alert (the key names the source)."""
    twins = """[[target]]
name = "Twin A"
ra = "6h00m00s"
dec = "+20.0"

[[target]]
name = "Twin B"
ra = "5h59m59.27s"
dec = "+21.0"

[[target]]
name = "Meridian"
frame = "fixed-pointing"
ha = "0h"
dec = "+20.5"
beam = 4
sources = ["Twin A", "Twin B"]
alerts = { beam-centre = [0] }
"""
    config = _config(twins)
    agenda = compute_agenda(config, START, 24.0, targets=["Meridian"], kinds={EventKind.BEAM_CENTRE})
    centres = sorted((e.beam_source, e.time_utc) for e in agenda.events)
    assert [source for source, _ in centres] == ["Twin A", "Twin B"]
    assert abs((centres[0][1] - centres[1][1]).total_seconds()) < 0.2
    alerts = plan_alerts(agenda, config, muted={}, now_utc=START)
    assert sorted(a.event.beam_source for a in alerts) == ["Twin A", "Twin B"]
    assert len({a.key for a in alerts}) == 2
    assert {parse_alert_key(a.key)[:2] for a in alerts} == {("Meridian", "beam-centre")}


def test_the_kind_filter_and_a_source_filtered_out_of_the_window_still_work():
    config = _config()
    agenda = compute_agenda(config, START, 24.0, targets=["Dish"], kinds={EventKind.BEAM_CENTRE})
    assert {e.kind for e in agenda.events} == {EventKind.BEAM_CENTRE}
    assert {e.beam_source for e in agenda.events} == {"Vega"}  # the Sun never reaches Dec +38.5


def test_beam_and_sources_errors_name_file_line_and_key():
    errors = _errors(TARGETS.replace('sources = ["Vega", "sun"]', 'sources = ["Vega", "Deneb"]'))
    assert [(e.line, e.key) for e in errors] == [(12, "target[2].sources[2]")]
    assert '"sun"' in errors[0].expected and "Vega" in errors[0].expected
    errors = _errors(TARGETS.replace('ra = "18h36m56.34s"', 'ra = "18h36m56.34s"\nbeam = 2'))
    assert [(e.line, e.key) for e in errors] == [(4, "target[1].beam")]
    assert 'frame = "fixed-pointing"' in errors[0].expected
    errors = _errors(TARGETS.replace("beam = 3", "beam = 0"))
    assert [e.key for e in errors] == ["target[2].beam"]
    errors = _errors(TARGETS.replace("beam = 4", "beam = { ha = 12 }"))
    assert [e.key for e in errors] == ["target[3].beam.dec"]
    errors = _errors(TARGETS.replace("beam = 4\n", ""))
    assert [e.key for e in errors] == ["target[3].beam"]
    errors = _errors(TARGETS.replace('sources = ["Vega", "sun"]', 'sources = ["Horn"]'))
    assert [e.key for e in errors] == ["target[2].sources[1]"] and "fixed pointing" in errors[0].expected
    # The Sun is a source only: never an optical target.
    errors = _errors(TARGETS + '\n[[target]]\nname = "Sun"\nbody = "sun"\n')
    assert [e.key for e in errors] == ["target[4].body"]
    assert "never point unfiltered optics" in errors[0].expected


def test_a_fan_beam_is_read_with_both_widths():
    config = _config(TARGETS.replace("beam = 4", "beam = { ha = 12, dec = 4 }"))
    horn = next(t for t in config.targets if t.name == "Horn")
    assert (horn.beam_ha_deg, horn.beam_dec_deg, horn.beam_sources) == (12.0, 4.0, ("sun",))


def test_the_board_shows_the_source_in_each_beam_and_the_next_with_its_countdown():
    from siderod.view.board import compose_board, format_countdown, inputs_from_config

    config = _config()
    agenda = compute_agenda(config, START, 24.0)
    rows = _beam_rows(agenda, "Dish", "Vega")
    enter, centre, leave = (e.time_utc for e in rows.records())

    def beam_lines(now):
        frame = compose_board(inputs_from_config(config, now, agenda=agenda), 120, 40)
        return [line.plain for line in frame.lines() if line.plain.startswith("◎")]

    before = beam_lines(enter - timedelta(minutes=3))
    assert before[0] == f"◎ Dish  beam empty  ·  next Vega in {format_countdown(180.0)}"
    during = beam_lines(centre)
    assert during[0].startswith("◎ Dish  in beam Vega leaves in ")
    assert f"leaves in {format_countdown((leave - centre).total_seconds())}" in during[0]
    assert beam_lines(enter - timedelta(minutes=3))[1].startswith("◎ Horn  beam empty  ·  next Sun in ")


@pytest.mark.slow
def test_the_moon_as_a_source_matches_astropy_topocentric():
    # A moving source with a parallax of about 1 deg: the Moon through a meridian beam at its
    # declination on the demo evening (it culminates near 16:30 UTC at about -14.2 deg).
    from astropy import units as u
    from astropy.coordinates import EarthLocation, HADec, get_body
    from astropy.time import Time
    from astropy.utils import iers

    iers.conf.auto_download = False
    text = ('[[target]]\nname = "Moon"\nbody = "moon"\n\n[[target]]\nname = "Dish"\n'
            'frame = "fixed-pointing"\nha = 0\ndec = "-14.2"\nbeam = 2\nsources = ["Moon"]\n')
    config = _config(text)
    rows = _beam_rows(compute_agenda(config, START, 12.0), "Dish", "Moon")
    kinds = [e.kind for e in rows.records()]
    assert kinds == [EventKind.BEAM_ENTER, EventKind.BEAM_CENTRE, EventKind.BEAM_LEAVE]
    t = rows.time_unix
    grid = np.arange(t[0] - 600, t[2] + 600, SCAN_SECONDS)
    when = Time(grid, format="unix", scale="utc")
    when.delta_ut1_utc = 0.0
    place = EarthLocation.from_geodetic(LON * u.deg, LAT * u.deg, HEIGHT * u.m)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # astropy's IERS table may be older than the demo night
        seen = get_body("moon", when).transform_to(HADec(obstime=when, location=place, pressure=0 * u.hPa))
    sep = np.degrees(erfa.seps(0.0, math.radians(-14.2), seen.ha.rad, seen.dec.rad))
    edges, centre = _crossings(grid, sep, 1.0)
    assert edges.size == 2
    assert abs(t[0] - edges[0]) < BEAM_EVENT_TOLERANCE_SECONDS
    assert abs(t[2] - edges[1]) < BEAM_EVENT_TOLERANCE_SECONDS
    assert abs(t[1] - centre) < CENTRE_TOLERANCE_SECONDS
