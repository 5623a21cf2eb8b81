"""`siderod check` and `siderod check --doctor`."""

from __future__ import annotations

import subprocess
import sys

import pytest

from siderod.cli.main import main


def test_demo_summary(capsys, demo_config_path):
    code = main(["check", "--config", str(demo_config_path)])
    out, _ = capsys.readouterr()
    assert code == 0
    assert "Corrie Hill Observatory" in out
    assert ("targets: 20 (11 icrs, 2 galactic, 1 ecliptic, 1 ecliptic-of-date, 2 fixed-pointing, 2 body, "
            "1 orbit)" in out)
    assert "beam: Drift scan +41, 5°: M31, Cygnus X, Vega" in out
    assert "beam: Solar horn, 12° × 4° (HA × Dec): sun" in out
    assert "caution: Solar horn has the Sun as a source: radio only; never point" in out
    assert "flip-due: 10, 0 (critical)" in out
    assert "moving: Jupiter, Moon (JPL ephemeris); Comet Corrie Hill (elements of 2026-12-01)" in out
    assert "mount's own limits always win" in out
    assert out.rstrip().endswith("OK")


def test_every_error_is_printed_and_exit_is_1(capsys, tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text('[site]\nname = "x"\nlatitude = 95\nlongitude = 0\ntimezone = "Mars/Olympus"\n'
                   '[mount]\nkind = "german-equatorial"\n')
    code = main(["check", "--config", str(bad)])
    out, _ = capsys.readouterr()
    assert code == 1
    assert "2 problems found; nothing was loaded" in out
    assert f"{bad}:3: site.latitude:" in out and f"{bad}:5: site.timezone:" in out


def test_german_mount_without_flip_alert_is_cautioned(capsys, tmp_path):
    cfg = tmp_path / "c.toml"
    cfg.write_text('[site]\nname = "x"\nlatitude = 50\nlongitude = 0\n[mount]\nkind = "german-equatorial"\n')
    assert main(["check", "--config", str(cfg)]) == 0
    out, _ = capsys.readouterr()
    assert "no flip-due alert" in out and "pier" in out


def test_doctor_reports_environment(capsys, demo_config_path, monkeypatch, tmp_path):
    monkeypatch.delenv("DBUS_SESSION_BUS_ADDRESS", raising=False)
    code = main(["check", "--doctor", "--config", str(demo_config_path)])
    out, _ = capsys.readouterr()
    assert code == 0
    assert "versions: siderod" in out and "numpy" in out
    assert f"configuration: {demo_config_path} (given with --config)" in out
    assert "known good 1960-01-01 .. 2027-06-28" in out
    assert "control socket:" in out
    assert "service: not answering" in out or "service: unknown" in out
    assert "DBUS_SESSION_BUS_ADDRESS is not set" in out


@pytest.mark.slow
def test_check_end_to_end_in_a_fresh_process(tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text("[site]\nname = \n")
    result = subprocess.run([sys.executable, "-m", "siderod", "check", "--config", str(bad)],
                            capture_output=True, text=True, timeout=60, check=False)
    assert result.returncode == 1
    assert f"{bad}:2:" in result.stdout and "valid TOML" in result.stdout


def test_check_says_which_kinds_the_sun_hold_covers(capsys, tmp_path):
    cfg = tmp_path / "c.toml"
    base = ('[site]\nname = "x"\nlatitude = 50\nlongitude = 0\n[mount]\nkind = "german-equatorial"\n'
            '[alerts]\nhold_while_sun_above = -6\n')
    cfg.write_text(base)
    assert main(["check", "--config", str(cfg)]) == 0
    out, _ = capsys.readouterr()
    covered = next(line for line in out.splitlines() if "Sun hold:" in line)
    assert "culmination" in covered and "flip-due" not in covered and "tracking-limit" not in covered
    never = next(line for line in out.splitlines() if "never held:" in line)
    assert "flip-due" in never and "tracking-limit" in never
    cfg.write_text(base + 'hold_kinds = ["culmination", "flip-due"]\n')
    assert main(["check", "--config", str(cfg)]) == 0
    out, _ = capsys.readouterr()
    assert "no alerts for culmination, flip-due (as named in hold_kinds)" in out
    assert "caution: the Sun hold silences flip-due" in out


def test_config_and_log_level_are_accepted_before_the_verb_too(capsys, demo_config_path):
    assert main(["--config", str(demo_config_path), "--log-level", "DEBUG", "check"]) == 0
    assert f"configuration: {demo_config_path} (given with --config)" in capsys.readouterr().out


def test_an_empty_target_file_gets_a_caution(capsys, tmp_path):
    (tmp_path / "t.toml").write_text("# nothing yet\n")
    cfg = tmp_path / "c.toml"
    cfg.write_text('[site]\nname = "x"\nlatitude = 50\nlongitude = 0\n[targets]\nfiles = ["t.toml"]\n')
    assert main(["check", "--config", str(cfg)]) == 0
    out = capsys.readouterr().out
    assert "caution: " in out and "t.toml has no targets" in out


def test_doctor_names_the_version_of_every_runtime_dependency(capsys, demo_config_path, monkeypatch):
    # Found following the README: --doctor left out pyongc, tomlkit, icalendar and indipyclient,
    # which a bug report needs as much as the others. The list is pyproject.toml's dependencies.
    import re
    import tomllib
    from pathlib import Path

    pyproject = tomllib.loads((Path(__file__).resolve().parents[2] / "pyproject.toml").read_text())
    names = [re.split(r"[<>=;!~ \[]", dep, maxsplit=1)[0] for dep in pyproject["project"]["dependencies"]]
    monkeypatch.delenv("DBUS_SESSION_BUS_ADDRESS", raising=False)
    assert main(["check", "--doctor", "--config", str(demo_config_path)]) == 0
    line = next(line for line in capsys.readouterr().out.splitlines() if "versions:" in line)
    missing = [n for n in names if n != "tzdata" and f" {n} " not in line.replace(",", " ") + " "]
    assert not missing, line
