"""The systemd user unit: generated text, `systemd-analyze verify`, and `siderod service install|uninstall`.

Reference: systemd's own checker, `systemd-analyze --user verify --man=no` (systemd 252 here). It exits
0 on unknown keys and bad values and only prints a warning, so any output on stderr fails the test.
"""

from __future__ import annotations

import argparse
import os
import shutil
import stat
import subprocess
import sys
from pathlib import Path

import pytest

from siderod.cli import unit
from siderod.cli.unit import (
    DEFAULT_EXEC_START,
    UNIT_NAME,
    find_entry_point,
    format_exec_start,
    render_unit,
    user_unit_dir,
)

REPO_UNIT = Path(__file__).resolve().parents[1] / "systemd" / "siderod.service"

needs_systemd_analyze = pytest.mark.skipif(
    shutil.which("systemd-analyze") is None, reason="systemd-analyze not installed (apt-get install systemd)"
)


def verify(unit_path: Path, tmp_path: Path) -> subprocess.CompletedProcess:
    runtime = tmp_path / "xdg-runtime"
    runtime.mkdir(mode=0o700, exist_ok=True)
    env = {**os.environ, "XDG_RUNTIME_DIR": os.fspath(runtime)}
    return subprocess.run(
        ["systemd-analyze", "--user", "verify", "--man=no", os.fspath(unit_path)],
        capture_output=True, text=True, env=env, timeout=60,
    )


def assert_clean(result: subprocess.CompletedProcess) -> None:
    assert result.returncode == 0 and result.stderr == "", (
        f"systemd-analyze verify: rc={result.returncode}\nstdout:\n{result.stdout}\nstderr:\n{result.stderr}"
    )


def unit_keys(text: str) -> dict[str, list[str]]:
    keys: dict[str, list[str]] = {}
    section = ""
    for line in text.splitlines():
        if line.startswith("["):
            section = line.strip("[]")
        elif line and not line.startswith("#"):
            key, _, value = line.partition("=")
            keys.setdefault(f"{section}.{key}", []).append(value)
    return keys


def test_repository_unit_is_the_rendered_default():
    assert REPO_UNIT.read_text() == render_unit(DEFAULT_EXEC_START)


def test_unit_has_the_agreed_settings():
    keys = unit_keys(render_unit(DEFAULT_EXEC_START))
    assert keys["Service.Type"] == ["notify"]
    assert keys["Service.NotifyAccess"] == ["main"]
    assert keys["Service.ExecStart"] == ["%h/.local/bin/siderod run --no-view"]
    assert keys["Service.ExecReload"] == ["/bin/kill -HUP $MAINPID"]
    assert set(keys["Service.Environment"]) == {
        "PYTHONUNBUFFERED=1", "OPENBLAS_NUM_THREADS=1", "DBUS_SESSION_BUS_ADDRESS=unix:path=%t/bus",
    }
    assert keys["Service.WatchdogSec"] == ["30"]
    assert keys["Service.Restart"] == ["on-failure"]
    assert keys["Service.RestartSec"] == ["5"]
    assert keys["Service.RuntimeDirectory"] == ["siderod"]
    assert keys["Service.RuntimeDirectoryMode"] == ["0700"]
    assert keys["Service.StateDirectory"] == ["siderod"]
    assert keys["Service.NoNewPrivileges"] == ["yes"]
    assert keys["Install.WantedBy"] == ["default.target"]


@needs_systemd_analyze
def test_generated_unit_verifies_clean(tmp_path):
    path = tmp_path / UNIT_NAME
    path.write_text(render_unit(format_exec_start([sys.executable, "-m", "siderod", "run", "--no-view"])))
    assert_clean(verify(path, tmp_path))


@needs_systemd_analyze
def test_awkward_entry_point_path_is_quoted_so_systemd_finds_it(tmp_path):
    tools = tmp_path / "my tools 100%"
    tools.mkdir()
    script = tools / "siderod$x"
    script.write_text("#!/bin/sh\nexit 0\n")
    script.chmod(0o755)
    path = tmp_path / UNIT_NAME
    path.write_text(render_unit(format_exec_start([os.fspath(script), "run", "--no-view", "a$b c"])))
    assert_clean(verify(path, tmp_path))


@needs_systemd_analyze
def test_verify_check_does_catch_a_typo(tmp_path):
    # The checker's blind spot, shown: a misspelt key still exits 0, only stderr tells.
    text = render_unit(format_exec_start([sys.executable, "-m", "siderod"]))
    text = text.replace("WatchdogSec=", "WatchdogSecs=")
    path = tmp_path / UNIT_NAME
    path.write_text(text)
    result = verify(path, tmp_path)
    assert result.returncode == 0 and "WatchdogSecs" in result.stderr


# -- ExecStart ------------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("argv", "expected"),
    [
        (["/home/obs/.venv/bin/siderod", "run", "--no-view"], "/home/obs/.venv/bin/siderod run --no-view"),
        (["/opt/sky tools/siderod", "run"], '"/opt/sky tools/siderod" run'),
        (["/opt/100%/siderod"], "/opt/100%%/siderod"),
        (["/opt/$HOME/siderod", "--label=$5"], "/opt/$HOME/siderod --label=$$5"),
        (['/opt/a"b\\c/siderod'], '"/opt/a\\"b\\\\c/siderod"'),
    ],
)
def test_format_exec_start(argv, expected):
    assert format_exec_start(argv) == expected


def test_entry_point_is_the_installed_script_when_we_run_through_it(tmp_path):
    script = tmp_path / "bin" / "siderod"
    script.parent.mkdir()
    script.write_text("#!/bin/sh\n")
    script.chmod(0o755)
    assert find_entry_point(os.fspath(script), "/usr/bin/python3") == [os.fspath(script)]


def test_entry_point_keeps_the_venv_interpreter_path_unresolved(tmp_path):
    venv_python = tmp_path / "venv" / "bin" / "python"
    venv_python.parent.mkdir(parents=True)
    venv_python.symlink_to(sys.executable)
    main = "/src/siderod/siderod/__main__.py"  # what argv[0] is under `python -m siderod`
    assert find_entry_point(main, os.fspath(venv_python)) == [os.fspath(venv_python), "-m", "siderod"]


def test_entry_point_falls_back_when_the_script_is_missing(tmp_path):
    missing = os.fspath(tmp_path / "siderod")
    assert find_entry_point(missing, "/usr/bin/python3") == ["/usr/bin/python3", "-m", "siderod"]


def test_user_unit_dir_follows_xdg():
    assert user_unit_dir({"XDG_CONFIG_HOME": "/x/cfg", "HOME": "/h"}) == Path("/x/cfg/systemd/user")
    assert user_unit_dir({"XDG_CONFIG_HOME": "relative", "HOME": "/h"}) == Path("/h/.config/systemd/user")
    assert user_unit_dir({"HOME": "/h"}) == Path("/h/.config/systemd/user")


# -- install / uninstall -----------------------------------------------------------------------------


def run_verb(*words: str) -> int:
    parser = argparse.ArgumentParser(prog="siderod")
    unit.register(parser.add_subparsers(dest="verb", required=True))
    args = parser.parse_args(list(words))
    return args.func(args)


@pytest.fixture
def config_home(tmp_path, monkeypatch):
    home = tmp_path / "config"
    monkeypatch.setenv("XDG_CONFIG_HOME", os.fspath(home))
    monkeypatch.setattr(sys, "argv", ["/work/src/siderod/__main__.py"])
    return home


def test_dry_run_writes_nothing(config_home, capsys):
    assert run_verb("service", "install", "--dry-run") == 0
    out = capsys.readouterr().out
    assert "would write" in out and "Type=notify" in out and "loginctl enable-linger" in out
    assert not config_home.exists()


@needs_systemd_analyze
def test_install_writes_a_unit_that_verifies_then_uninstall_removes_it(config_home, tmp_path, capsys):
    assert run_verb("service", "install") == 0
    path = config_home / "systemd" / "user" / UNIT_NAME
    out = capsys.readouterr().out
    for command in (
        "systemctl --user daemon-reload", f"systemctl --user enable --now {UNIT_NAME}",
        f"systemctl --user status {UNIT_NAME}", "loginctl enable-linger",
    ):
        assert command in out
    assert stat.S_IMODE(path.stat().st_mode) & 0o022 == 0
    assert f"ExecStart={format_exec_start([sys.executable, '-m', 'siderod', 'run', '--no-view'])}\n" in (
        path.read_text()
    )
    assert_clean(verify(path, tmp_path))

    assert run_verb("service", "uninstall", "--dry-run") == 0
    assert path.exists()
    assert run_verb("service", "uninstall") == 0
    assert not path.exists()
    out = capsys.readouterr().out
    assert f"systemctl --user disable --now {UNIT_NAME}" in out and "daemon-reload" in out
    assert run_verb("service", "uninstall") == 0
    assert "nothing to remove" in capsys.readouterr().out


def test_install_failure_is_explained(config_home, capsys):
    config_home.mkdir()
    (config_home / "systemd").write_text("a file where a directory should be")
    assert run_verb("service", "install") == 4
    assert "could not write" in capsys.readouterr().err


@pytest.mark.parametrize("where", ["before the verb", "after the verb", "after the action"])
def test_install_carries_the_given_configuration_as_an_absolute_path(config_home, tmp_path, monkeypatch,
                                                                    capsys, where):
    # The unit ran the default configuration, quietly, whatever --config said.
    from siderod.cli.main import main

    cfg = tmp_path / "my site.toml"
    cfg.write_text('[site]\nname = "x"\nlatitude = 50\nlongitude = 0\n')
    monkeypatch.chdir(tmp_path)
    monkeypatch.delenv("SIDEROD_CONFIG", raising=False)
    words = {"before the verb": ["--config", cfg.name, "service", "install", "--dry-run"],
             "after the verb": ["service", "--config", cfg.name, "install", "--dry-run"],
             "after the action": ["service", "install", "--dry-run", "--config", cfg.name]}[where]
    assert main(words) == 0
    out = capsys.readouterr().out
    expected = format_exec_start([sys.executable, "-m", "siderod", "run", "--no-view", "--config", str(cfg)])
    assert f"ExecStart={expected}\n" in out


def test_install_refuses_a_configuration_that_does_not_exist(config_home, tmp_path, capsys):
    from siderod.cli.main import main

    assert main(["service", "install", "--dry-run", "--config", str(tmp_path / "missing.toml")]) == 1
    assert "missing.toml" in capsys.readouterr().err
