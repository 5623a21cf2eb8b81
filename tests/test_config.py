"""siderod.files.config: finding, reading and checking configuration files; one test per kind of message."""

from __future__ import annotations

import os
import tomllib
from pathlib import Path

import pytest

from siderod.common.errors import ConfigErrors
from siderod.common.model import EventKind, MountKind, Urgency
from siderod.files.config import (
    FOUND_BUNDLED_DEMO,
    FOUND_ENV,
    FOUND_OPTION,
    FOUND_USER,
    demo_config_path,
    dut1_at,
    find_config,
    load_config,
    parse_config,
)

REPO = Path(__file__).resolve().parent.parent

SITE = """\
[site]
name = "Test site"
latitude = "+56 12 30"
longitude = "-3 41 15"
elevation = 212
timezone = "Europe/London"
"""
TARGETS = '[[target]]\nname = "Vega"\nra = "18h36m56.34s"\ndec = "+38 47 01.3"\n'


def _parse(text: str, files: dict[str, str] | None = None):
    files = files or {}

    def read_file(path: str) -> str:
        name = os.path.basename(path)
        if name not in files:
            raise FileNotFoundError(2, "No such file or directory", path)
        return files[name]

    return parse_config(text, "/cfg/site.toml", read_file=read_file)


def _errors(text: str, files: dict[str, str] | None = None):
    with pytest.raises(ConfigErrors) as info:
        _parse(text, files)
    return info.value.errors


def _one_error(text: str, files: dict[str, str] | None = None):
    errors = _errors(text, files)
    assert len(errors) == 1, [str(e) for e in errors]
    return errors[0]


# --- a good file ---------------------------------------------------------------------------------


def test_minimal_file_gets_documented_defaults():
    config = _parse(SITE)
    assert config.site.latitude_deg == pytest.approx(56 + 12 / 60 + 30 / 3600, abs=1e-12)
    assert config.site.longitude_deg == -3.6875
    assert config.site.pressure_hpa is None and config.site.temperature_c == 10.0
    assert config.time.dut1_seconds == 0.0 and config.time.dut1_source.startswith("default")
    assert config.events.min_altitude_deg == 0.0 and config.events.refraction is True
    assert config.mount.kind is MountKind.NONE
    assert config.alerts.lead_minutes == {}
    assert config.alerts.urgency[EventKind.FLIP_DUE] is Urgency.CRITICAL
    assert config.alerts.urgency[EventKind.CULMINATION] is Urgency.NORMAL
    assert config.targets == ()


def test_every_section_is_read():
    text = SITE + """\
pressure = 990
temperature = -2.5
horizon = [[270, 6], [0, "3d"], [90, 18]]
[time]
dut1 = -0.1
[targets]
files = ["t.toml"]
[events]
min_altitude = "10 30"
altitudes = [45, 30, 30]
hour_angles = ["-3h", "+2h", 1.5]
refraction = false
window_hours = 12
[mount]
kind = "german-equatorial"
flip_after = 10
limit_after = 25
[alerts]
grace = 5
horizon_hours = 24
replan = 30
hold_while_sun_above = -6
[alerts.lead]
flip-due = [0, 10, 10]
astronomical-dusk = [15]
[alerts.urgency]
culmination = "low"
[notify]
desktop = false
command = ["notify-send", "{title}", "{body} at {time_local} ({lead_minutes} min)"]
command_timeout = 3
[view]
refresh_hz = 2
"""
    config = _parse(text, {"t.toml": TARGETS})
    assert config.site.horizon == ((0.0, 3.0), (90.0, 18.0), (270.0, 6.0))  # sorted by azimuth
    assert config.site.pressure_hpa == 990.0 and config.site.temperature_c == -2.5
    assert (config.time.dut1_seconds, config.time.dut1_source) == (-0.1, "config")
    assert config.target_files == ("/cfg/t.toml",)
    assert [t.name for t in config.targets] == ["Vega"]
    assert config.events.min_altitude_deg == 10.5
    assert config.events.altitudes_deg == (30.0, 45.0)
    assert config.events.hour_angles_hours == (-3.0, 1.5, 2.0)
    assert config.events.refraction is False and config.events.window_hours == 12.0
    assert (config.mount.flip_after_minutes, config.mount.limit_after_minutes) == (10.0, 25.0)
    assert config.alerts.lead_minutes[EventKind.FLIP_DUE] == (10.0, 0.0)  # largest first, no repeats
    assert config.alerts.urgency[EventKind.CULMINATION] is Urgency.LOW
    assert config.alerts.hold_while_sun_above_deg == -6.0
    assert (config.alerts.grace_minutes, config.alerts.horizon_hours, config.alerts.replan_minutes) == (
        5.0, 24.0, 30.0)
    assert config.notify.desktop is False and config.notify.command[0] == "notify-send"
    assert config.notify.command_timeout_seconds == 3.0
    assert config.view.refresh_hz == 2.0


def test_east_longitude_above_180_is_folded_to_negative():
    config = _parse(SITE.replace('"-3 41 15"', "356.3125"))
    assert config.site.longitude_deg == pytest.approx(-3.6875)


# --- one test per message -------------------------------------------------------------------------


def test_toml_syntax_error_has_the_parser_line():
    error = _one_error(SITE + "[events]\nmin_altitude = \n")
    assert error.line == 8
    assert "valid TOML" in error.expected and "Invalid value" in error.expected


def test_unknown_key_suggests_the_close_one():
    error = _one_error(SITE + "elevaton = 3\n")
    assert (error.line, error.key) == (7, "site.elevaton")
    assert 'did you mean "elevation"' in error.expected
    assert "latitude" in error.expected  # the valid keys are listed


def test_unknown_section_is_an_error():
    error = _one_error(SITE + "[alert]\ngrace = 1\n")
    assert error.key == "alert" and 'did you mean "alerts"' in error.expected


def test_missing_site_table():
    error = _one_error("[view]\nrefresh_hz = 1\n")
    assert error.key == "site" and "[site] table" in error.expected


def test_missing_required_key_points_at_its_table():
    error = _one_error(SITE.replace('name = "Test site"\n', ""))
    assert (error.key, error.line) == ("site.name", 1)
    assert "missing" in error.got


def test_bad_angle_repeats_the_text_and_lists_forms():
    error = _one_error(SITE.replace('"+56 12 30"', '"56 61 00"'))
    assert (error.key, error.line, error.got) == ("site.latitude", 3, '"56 61 00"')
    assert "minutes must be below 60" in error.expected and "56:12:30" in error.expected
    assert str(error).startswith("/cfg/site.toml:3: site.latitude: expected a latitude")


def test_bad_timezone_suggests_a_zone():
    error = _one_error(SITE.replace("Europe/London", "Europe/Londn"))
    assert error.key == "site.timezone" and 'did you mean "Europe/London"' in error.expected


def test_number_out_of_range():
    error = _one_error(SITE.replace("212", "12000"))
    assert error.key == "site.elevation" and "[-500, 9000]" in error.expected and error.got == "12000"


def test_number_given_as_text_is_refused():
    error = _one_error(SITE + 'pressure = "990"\n')
    assert error.key == "site.pressure" and error.got == '"990"'


def test_horizon_point_errors_name_the_element():
    errors = _errors(SITE + 'horizon = [\n  [0, 3],\n  [360, 5],\n  [90],\n  [10, 95],\n]\n')
    keys = [(e.key, e.line) for e in errors]
    assert keys == [("site.horizon[2][1]", 9), ("site.horizon[3]", 10), ("site.horizon[4][2]", 11)]
    assert "[0, 360)" in errors[0].expected


def test_dut1_out_of_range():
    error = _one_error(SITE + "[time]\ndut1 = 0.95\n")
    assert error.key == "time.dut1" and "(-0.9, 0.9)" in error.expected and '"iers"' in error.expected


def test_clock_tolerance_is_read_and_checked():
    assert _parse(SITE).time.clock_tolerance_seconds == 1.0
    assert _parse(SITE + "[time]\nclock_tolerance = 0.05\n").time.clock_tolerance_seconds == 0.05
    error = _one_error(SITE + "[time]\ndut1 = 0.1\nclock_tolerance = -2\n")
    assert error.key == "time.clock_tolerance" and error.line == 9 and "seconds" in error.expected


def test_iers_file_without_iers_is_refused():
    error = _one_error(SITE + '[time]\ndut1 = 0.1\niers_file = "f.all"\n')
    assert error.key == "time.iers_file"


def test_missing_iers_file_is_an_error(tmp_path):
    error = _one_error(SITE + '[time]\ndut1 = "iers"\niers_file = "nowhere.all"\n')
    assert error.key == "time.iers_file" and error.got == '"nowhere.all"'


def test_unknown_event_kind_lists_the_valid_ones():
    error = _one_error(SITE + "[alerts.lead]\nflip-done = [10]\n")
    assert error.key == "alerts.lead.flip-done"
    assert 'did you mean "flip-due"' in error.expected
    assert all(kind.value in error.expected for kind in EventKind)


def test_negative_lead_time_names_the_element():
    error = _one_error(SITE + "[alerts.lead]\nculmination = [5, -1]\n")
    assert (error.key, error.got) == ("alerts.lead.culmination[2]", "-1")


def test_bad_urgency_lists_choices():
    error = _one_error(SITE + '[alerts.urgency]\nrise = "urgent"\n')
    assert error.key == "alerts.urgency.rise" and '"low" | "normal" | "critical"' in error.expected


def test_bad_mount_kind_lists_choices():
    error = _one_error(SITE + '[mount]\nkind = "german"\n')
    assert error.key == "mount.kind" and '"german-equatorial"' in error.expected


def test_limit_before_flip_is_refused():
    error = _one_error(SITE + "[mount]\nkind = \"fork\"\nflip_after = 20\nlimit_after = 5\n")
    assert error.key == "mount.limit_after" and "limit_after >= flip_after" in error.expected


def test_unknown_notify_placeholder():
    error = _one_error(SITE + '[notify]\ncommand = ["echo", "{title} {colour}"]\n')
    assert error.key == "notify.command[2]" and "{colour}" in error.expected and "{title}" in error.expected


def test_hour_angle_out_of_range_speaks_hours():
    error = _one_error(SITE + "[events]\nhour_angles = [13]\n")
    assert error.key == "events.hour_angles[1]"
    assert "[-12, 12]" in error.expected and "hours" in error.expected


def test_refresh_rate_range():
    error = _one_error(SITE + "[view]\nrefresh_hz = 50\n")
    assert error.key == "view.refresh_hz" and "[0.1, 10]" in error.expected


def test_missing_target_file():
    error = _one_error(SITE + '[targets]\nfiles = ["gone.toml"]\n')
    assert error.key == "targets.files[1]" and "no such file" in error.expected


def test_wrong_target_file_suffix():
    error = _one_error(SITE + '[targets]\nfiles = ["list.xlsx"]\n')
    assert ".toml or .csv" in error.expected and "MPC one-line orbital elements" in error.expected


def test_duplicate_names_across_target_files():
    errors = _errors(SITE + '[targets]\nfiles = ["a.toml", "b.csv"]\n',
                     {"a.toml": TARGETS, "b.csv": "Vega,18:36:56,+38:47:01\n"})
    (error,) = errors
    assert error.path == "/cfg/b.csv" and error.line == 1 and "a.toml:1" in error.expected


# --- whole-file collection and nothing half-loaded ------------------------------------------------


def test_every_error_in_every_file_is_reported_in_order():
    text = SITE.replace('"+56 12 30"', '"north"') + """\
colour = "red"
[events]
altitudes = [30, "high"]
[targets]
files = ["t.toml"]
"""
    bad_targets = TARGETS + '[[target]]\nname = "X"\nra = "25h"\ndec = 0\n'
    errors = _errors(text, {"t.toml": bad_targets})
    assert [(os.path.basename(e.path), e.line, e.key) for e in errors] == [
        ("site.toml", 3, "site.latitude"),
        ("site.toml", 7, "site.colour"),
        ("site.toml", 9, "events.altitudes[2]"),
        ("t.toml", 7, "target[2].ra"),
    ]


def test_load_failure_leaves_nothing_half_loaded(tmp_path):
    good = tmp_path / "c.toml"
    good.write_text(SITE)
    assert load_config(str(good), env={}).site.name == "Test site"
    good.write_text(SITE + "[mount]\nkind = 'none'\nflip_after = 'x'\n")
    with pytest.raises(ConfigErrors):
        load_config(str(good), env={})


# --- finding the file -----------------------------------------------------------------------------


def test_find_config_search_order(tmp_path):
    explicit = tmp_path / "x.toml"
    explicit.write_text(SITE)
    by_env = tmp_path / "env.toml"
    by_env.write_text(SITE)
    user = tmp_path / "xdg" / "siderod" / "config.toml"
    env = {"HOME": str(tmp_path), "XDG_CONFIG_HOME": str(tmp_path / "xdg"), "SIDEROD_CONFIG": str(by_env)}
    assert find_config(str(explicit), env) == (explicit, FOUND_OPTION)
    assert find_config(None, env) == (by_env, FOUND_ENV)
    del env["SIDEROD_CONFIG"]
    assert find_config(None, env) == (demo_config_path(), FOUND_BUNDLED_DEMO)
    user.parent.mkdir(parents=True)
    user.write_text(SITE)
    assert find_config(None, env) == (user, FOUND_USER)


def test_named_file_that_is_missing_never_falls_back(tmp_path):
    with pytest.raises(ConfigErrors) as info:
        find_config(None, {"HOME": str(tmp_path), "SIDEROD_CONFIG": str(tmp_path / "nope.toml")})
    assert "SIDEROD_CONFIG" in str(info.value) and "no such file" in str(info.value)
    with pytest.raises(ConfigErrors):
        find_config(str(tmp_path / "nope.toml"), {})


def test_bundled_demo_loads_and_is_marked(tmp_path):
    config = load_config(None, env={"HOME": str(tmp_path), "XDG_CONFIG_HOME": str(tmp_path)})
    assert config.is_demo
    assert config.site.name == "Corrie Hill Observatory"
    assert config.mount.kind is MountKind.GERMAN_EQUATORIAL
    assert (config.mount.flip_after_minutes, config.mount.limit_after_minutes) == (10.0, 25.0)
    assert config.alerts.lead_minutes[EventKind.FLIP_DUE] == (10.0, 0.0)
    assert {t.frame.value for t in config.targets} == {"icrs", "galactic", "ecliptic", "ecliptic-of-date",
                                                         "fixed-pointing", "body", "orbit"}


def test_repository_config_links_point_at_the_bundled_demo():
    for name in ("demo.toml", "demo-targets.toml"):
        link = REPO / "config" / name
        assert link.is_symlink() and link.resolve() == (REPO / "siderod" / "demo" / name).resolve()
    tomllib.loads((REPO / "config" / "demo.toml").read_text())


# --- DUT1 from IERS tables ------------------------------------------------------------------------

# A two-row finals2000A.all excerpt in the IERS fixed-width layout (ReadMe.finals2000A columns:
# MJD 8-15, UT1 flag 58, Bulletin A UT1-UTC 59-68). Values invented for the test.
_FINALS_ROW = "{:6s} {:8.2f} I  0.000000 0.000000  0.000000 0.000000  I{:10.7f} 0.0000000\n"


def _finals_text(rows):
    return "".join(_FINALS_ROW.format("261214", mjd, dut1) for mjd, dut1 in rows)


def test_dut1_from_an_iers_file_is_interpolated(tmp_path):
    finals = tmp_path / "finals2000A.all"
    finals.write_text(_finals_text([(61388.0, -0.10), (61389.0, -0.12)]))  # 2026-12-14 and -15
    cfg = tmp_path / "c.toml"
    cfg.write_text(SITE + '[time]\ndut1 = "iers"\niers_file = "finals2000A.all"\n')
    midday_unix = (61388.5 - 40587.0) * 86400.0
    config = load_config(str(cfg), env={}, at_unix=midday_unix)
    assert config.time.dut1_seconds == pytest.approx(-0.11, abs=1e-9)
    assert config.time.dut1_source == f"iers:{finals}"
    value, source = dut1_at(config, midday_unix + 6 * 3600)
    assert value == pytest.approx(-0.115, abs=1e-9) and source == f"iers:{finals}"
    value, source = dut1_at(config, midday_unix + 10 * 86400)
    assert value == pytest.approx(-0.12, abs=1e-9) and "outside the table" in source


def test_dut1_iers_without_tables_falls_back_to_zero(monkeypatch):
    import siderod.files.config as config_module

    monkeypatch.setattr(config_module, "find_iers_finals", lambda: None)
    config = _parse(SITE + '[time]\ndut1 = "iers"\n')
    assert config.time.dut1_seconds == 0.0
    assert "no IERS finals2000A.all was found" in config.time.dut1_source


def test_hold_kinds_names_target_kinds_only_and_needs_the_hold():
    config = _parse(SITE + '[alerts]\nhold_while_sun_above = -6\nhold_kinds = ["culmination", "flip-due"]\n')
    assert config.alerts.hold_kinds == (EventKind.CULMINATION, EventKind.FLIP_DUE)
    assert _parse(SITE + "[alerts]\nhold_while_sun_above = -6\n").alerts.hold_kinds is None
    error = _one_error(SITE + '[alerts]\nhold_while_sun_above = -6\nhold_kinds = ["sunset"]\n')
    assert error.key == "alerts.hold_kinds[1]" and "never held" in str(error)
    error = _one_error(SITE + '[alerts]\nhold_kinds = ["culmination"]\n')
    assert error.key == "alerts.hold_kinds" and "only together with hold_while_sun_above" in str(error)


def test_a_latitude_whose_sign_and_letter_disagree_is_refused():
    for text in ('"-32 22 40 N"', '"+32 22 40 S"'):
        error = _one_error(SITE.replace('"+56 12 30"', text))
        assert error.key == "site.latitude" and error.line == 3 and "disagree" in str(error)


def test_the_demo_states_its_dut1_and_needs_no_iers_table(monkeypatch):
    # On a fresh install (no astropy-iers-data) every screen of the demo said "DUT1 +0.000 s via
    # default (0 s) ... install astropy-iers-data": a warning a new user cannot act on.
    import siderod.files.config as config_module

    monkeypatch.setattr(config_module, "find_iers_finals", lambda: None)
    config = load_config(str(demo_config_path()), {})
    assert config.time.dut1_source == "config"
    # The value stated is the IERS prediction for the demo night (astropy-iers-data's
    # finals2000A.all gives -0.0965 s to -0.0971 s over 14/15 December 2026), rounded.
    assert config.time.dut1_seconds == pytest.approx(-0.0967, abs=0.0005)


def test_a_target_file_listed_twice_is_named_as_such_not_as_duplicate_targets():
    errors = _errors(SITE + '[targets]\nfiles = ["t.toml", "t.toml"]\n', {"t.toml": TARGETS})
    assert len(errors) == 1, [str(e) for e in errors]
    assert errors[0].key == "targets.files[2]" and "listed twice" in str(errors[0])


def test_lead_times_for_kinds_a_target_can_never_have_are_refused():
    fixed = ('[[target]]\nname = "Dish"\nframe = "fixed-pointing"\nha = 0\ndec = 41\n'
             'alerts = { hour-angle = [5], culmination = [0] }\n')
    errors = _errors(SITE + '[targets]\nfiles = ["t.toml"]\n', {"t.toml": fixed})
    assert sorted(e.key for e in errors) == ["target[1].alerts.culmination", "target[1].alerts.hour-angle"]
    assert "a fixed pointing" in str(errors[0])
    sunny = TARGETS + 'alerts = { sunset = [0] }\n'
    (error,) = _errors(SITE + '[targets]\nfiles = ["t.toml"]\n', {"t.toml": sunny})
    assert error.key == "target[1].alerts.sunset" and "[alerts.lead]" in str(error)
