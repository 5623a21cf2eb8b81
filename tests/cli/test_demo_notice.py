"""Every verb that falls back to the bundled demo says so on stderr in one wording, with the way out."""

import pytest

from siderod.cli.main import main


@pytest.fixture(autouse=True)
def _no_user_configuration(monkeypatch, tmp_path):
    monkeypatch.delenv("SIDEROD_CONFIG", raising=False)
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path / "config"))


@pytest.mark.parametrize("argv", [
    ["now", "--at", "2026-12-14T22:30:00Z"],
    ["agenda", "--from", "2026-12-14T17:00:00Z", "--hours", "1"],
    ["sidereal", "reach", "05h34m", "--from", "2026-12-14T12:00:00Z", "--hours", "24"],
])
def test_the_demo_notice_is_the_same_and_names_the_way_out(argv, capsys):
    # Found following the README: `now` said "pass --config FILE or write ~/.config/...", `agenda`
    # and `sidereal` "see `siderod check`", and none named `siderod init`, the starter command.
    assert main(argv) == 0
    err = capsys.readouterr().err
    notices = [line for line in err.splitlines() if "bundled demo" in line]
    assert len(notices) == 1
    assert "Corrie Hill Observatory, an invented site" in notices[0]
    assert "siderod init" in notices[0] and "--config FILE" in notices[0]
