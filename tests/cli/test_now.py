"""`siderod now`: fields, sidereal time and one star's place against pyerfa (ERFA, test-only)."""

from __future__ import annotations

import json
import math
import subprocess
import sys

import erfa
import pytest

from siderod.cli.main import main
from siderod.cli.now import JSON_FIELDS

#: LAST vs ERFA gst06a: the issue's 0.1 ms of time, in hours.
LAST_TOL_HOURS = 1e-4 / 3600.0
#: LMST vs ERFA gmst06: the issue's 1 microsecond of time, in hours.
LMST_TOL_HOURS = 1e-6 / 3600.0
#: Refracted altitude vs atco13 above 15 deg: the issue's 5 arcsec (Bennett vs ERFA's refraction model).
REFRACTED_ALT_TOL_DEG = 5.0 / 3600.0
#: Azimuth (refraction does not change it) vs atco13: the issue's 1 arcsec, on the sky.
AZ_TOL_DEG = 1.0 / 3600.0
AT = "2026-12-14T23:00:00Z"


def _now_json(capsys, *extra):
    code = main(["now", "--at", AT, "--json", *extra])
    out, err = capsys.readouterr()
    assert code == 0, err
    return json.loads(out), err


def test_json_fields_are_the_documented_ones(capsys, demo_config_path):
    data, err = _now_json(capsys, "--config", str(demo_config_path))
    assert tuple(data) == JSON_FIELDS
    assert data["utc"] == AT and data["leap_table_known_good_until"] == "2027-06-28"
    assert set(data["site"]) == {"name", "latitude_deg", "longitude_deg", "elevation_m", "timezone"}
    target = data["targets"][0]
    assert set(target) >= {"name", "frame", "ra_hours", "dec_deg", "hour_angle_hours", "altitude_deg",
                           "azimuth_deg", "airmass", "rising"}
    below = [t for t in data["targets"] if t["altitude_deg"] < 0]
    assert below and all(t["airmass"] is None for t in below)
    assert all(-12 <= t["hour_angle_hours"] < 12 for t in data["targets"])
    assert "demo" not in err  # named explicitly: no demo notice


def test_sidereal_time_matches_erfa(capsys, demo_config_path):
    data, _ = _now_json(capsys, "--config", str(demo_config_path))
    utc1, utc2 = erfa.dtf2d("UTC", 2026, 12, 14, 23, 0, 0.0)
    tt1, tt2 = erfa.taitt(*erfa.utctai(utc1, utc2))
    ut11, ut12 = erfa.utcut1(utc1, utc2, data["dut1_seconds"])
    lon_hours = data["site"]["longitude_deg"] / 15.0
    assert data["jd_utc"] == pytest.approx(utc1 + utc2, abs=1e-9)
    assert abs(data["last_hours"] - (erfa.gst06a(ut11, ut12, tt1, tt2) * 12 / math.pi + lon_hours) % 24) \
        < LAST_TOL_HOURS
    assert abs(data["lmst_hours"] - (erfa.gmst06(ut11, ut12, tt1, tt2) * 12 / math.pi + lon_hours) % 24) \
        < LMST_TOL_HOURS


def test_one_demo_star_matches_atco13_with_refraction(capsys, demo_config, demo_config_path):
    from siderod.plan.positions import observer_for

    data, _ = _now_json(capsys, "--config", str(demo_config_path))
    (capella,) = [t for t in data["targets"] if t["name"] == "Capella"]
    (target,) = [t for t in demo_config.targets if t.name == "Capella"]
    site = demo_config.site
    utc1, utc2 = erfa.dtf2d("UTC", 2026, 12, 14, 23, 0, 0.0)
    pressure = observer_for(demo_config).effective_pressure_hpa
    # ERFA atco13, polar motion zero, same DUT1, same pressure and temperature, dry air, 0.55 um
    aob, zob, *_ = erfa.atco13(
        math.radians(target.ra_deg), math.radians(target.dec_deg), 0.0, 0.0, 0.0, 0.0, utc1, utc2,
        data["dut1_seconds"], math.radians(site.longitude_deg), math.radians(site.latitude_deg),
        site.elevation_m, 0.0, 0.0, pressure, site.temperature_c, 0.0, 0.55)
    alt = 90.0 - math.degrees(zob)
    assert alt > 15.0
    assert abs(capella["altitude_deg"] - alt) < REFRACTED_ALT_TOL_DEG
    assert abs(capella["azimuth_deg"] - math.degrees(aob)) * math.cos(math.radians(alt)) < AZ_TOL_DEG


def test_json_names_the_catalogue_entry_of_catalogue_named_targets(capsys, demo_config_path):
    # The demo's first five targets are placed from the deep-sky catalogue (see demo-targets.toml);
    # the others give their coordinates, so they have no catalogue entry.
    data, _ = _now_json(capsys, "--config", str(demo_config_path))
    entries = {t["name"]: t["catalogue_entry"] for t in data["targets"]}
    assert entries["M42"] == "M 42" and entries["North America"] == "NGC 7000"
    assert entries["Crab Nebula"] == "M 1"
    assert entries["Vega"] is None and entries["Jupiter"] is None and entries["Drift scan +41"] is None


def test_bundled_demo_is_announced_on_stderr(capsys):
    data, err = _now_json(capsys)  # conftest points XDG at empty directories
    assert "bundled demo" in err and data["site"]["name"] == "Corrie Hill Observatory"


def test_past_the_leap_table_a_warning_is_printed(capsys, demo_config_path):
    code = main(["now", "--at", "2028-01-01T00:00:00Z", "--json", "--config", str(demo_config_path)])
    _, err = capsys.readouterr()
    assert code == 0 and "known good only until 2027-06-28" in err


def test_bad_instant_is_a_usage_problem(capsys, demo_config_path):
    code = main(["now", "--at", "2026-12-14 23:00", "--config", str(demo_config_path)])
    _, err = capsys.readouterr()
    assert code == 2 and "--at" in err  # a malformed command line


def test_table_lists_every_target(capsys, demo_config, demo_config_path):
    code = main(["now", "--at", AT, "--config", str(demo_config_path)])
    out, _ = capsys.readouterr()
    assert code == 0
    assert "LMST" in out and "LAST" in out and "DUT1" in out
    for target in demo_config.targets:
        assert target.name.split()[0] in out


@pytest.mark.slow
def test_end_to_end_json_in_a_fresh_process_imports_only_what_it_needs(demo_config_path):
    # A real `python -m siderod now` run; then the same in-process to list what got imported.
    result = subprocess.run([sys.executable, "-m", "siderod", "now", "--at", AT, "--json", "--config",
                             str(demo_config_path)], capture_output=True, text=True, timeout=60, check=False)
    assert result.returncode == 0, result.stderr
    assert json.loads(result.stdout)["site"]["name"] == "Corrie Hill Observatory"
    probe = ("import sys, io, contextlib\nfrom siderod.cli.main import main\n"
             "with contextlib.redirect_stdout(io.StringIO()):\n"
             f"    main(['now', '--at', '{AT}', '--config', {str(demo_config_path)!r}])\n"
             "heavy = {'asyncio', 'apscheduler', 'desktop_notifier', 'erfa', 'astropy'}\n"
             "print(sorted(heavy & set(sys.modules)))\n")
    result = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, timeout=60,
                            check=False)
    assert result.returncode == 0, result.stderr
    assert result.stdout.strip() == "[]"


def test_piped_table_has_every_target_with_its_values_and_says_below_limit_in_words(capsys, demo_config_path):
    # issue 13 item 6: piped output prints every row, fast (formatted as columns), and says in
    # words what a terminal shows by dimming. Reference: the --json values, rounded as displayed.
    data, _ = _now_json(capsys, "--config", str(demo_config_path))
    assert main(["now", "--at", AT, "--config", str(demo_config_path)]) == 0
    lines = capsys.readouterr().out.splitlines()
    rule = next(i for i, line in enumerate(lines) if line.startswith(" ─"))
    rows = lines[rule + 1:rule + 1 + len(data["targets"])]
    for target, row in zip(data["targets"], rows, strict=True):
        assert row[1:].startswith(target["name"])
        assert f"{target['altitude_deg']:+.1f}°" in row
        assert f"{target['azimuth_deg']:.1f}°" in row
        below = target["altitude_deg"] < target["min_altitude_deg"]
        assert row.endswith("below limit") == below, row
    assert not any("dim rows" in line for line in lines)


def test_table_on_a_terminal_shows_what_fits(capsys, demo_config_path, monkeypatch):
    import os
    import shutil

    monkeypatch.setattr(shutil, "get_terminal_size", lambda *a, **k: os.terminal_size((100, 20)))
    monkeypatch.setattr("sys.stdout.isatty", lambda: True)
    assert main(["now", "--at", AT, "--config", str(demo_config_path)]) == 0
    out = capsys.readouterr().out
    assert "more targets" in out and len(out.splitlines()) <= 20


def test_an_instant_before_utc_began_gets_its_own_warning(capsys, demo_config_path):
    # Before 1960 there is no UTC; the warning said the table was good "only until 2027".
    assert main(["now", "--at", "1950-06-01T00:00:00Z", "--config", str(demo_config_path)]) == 0
    err = capsys.readouterr().err
    assert "before 1960-01-01" in err and "only until" not in err
    assert main(["agenda", "--from", "1950-06-01T00:00:00Z", "--hours", "1", "--json",
                 "--config", str(demo_config_path)]) == 0
    assert "before 1960-01-01" in capsys.readouterr().err
