"""`siderod init`: a starter configuration for the user's own site, never overwriting."""

from __future__ import annotations

from siderod.cli.main import main


def test_init_writes_a_starter_that_checks_out_for_a_southern_site(tmp_path, capsys):
    target = tmp_path / "mine"
    words = ["init", "--dir", str(target), "--latitude", "-32 22 40", "--longitude", "20 48 38 E",
             "--name", "Karoo Test Site", "--timezone", "Africa/Johannesburg", "--elevation", "1798"]
    assert main(words) == 0
    assert (target / "config.toml").is_file() and (target / "targets.toml").is_file()
    capsys.readouterr()
    assert main(["check", "--config", str(target / "config.toml")]) == 0
    out = capsys.readouterr().out
    assert "Karoo Test Site" in out and "32°22'40\" S" in out and "targets: 3" in out


def test_init_never_overwrites(tmp_path, capsys):
    (tmp_path / "targets.toml").write_text("# mine\n")
    assert main(["init", "--dir", str(tmp_path), "--latitude", "50", "--longitude", "0"]) == 1
    err = capsys.readouterr().err
    assert "already exist" in err and "targets.toml" in err
    assert (tmp_path / "targets.toml").read_text() == "# mine\n"
    assert not (tmp_path / "config.toml").exists()


def test_init_refuses_a_bad_latitude_before_writing(tmp_path, capsys):
    assert main(["init", "--dir", str(tmp_path), "--latitude", "-32 22 40 N", "--longitude", "0"]) == 1
    assert "--latitude" in capsys.readouterr().err
    assert not list(tmp_path.iterdir())


def test_the_readme_tells_a_new_user_to_run_init_not_to_copy_the_demo():
    # Copying demo.toml alone, as the README said, left its target file behind.
    from pathlib import Path

    readme = (Path(__file__).resolve().parents[2] / "README.md").read_text()
    assert "Copy `config/demo.toml`" not in readme
    assert "siderod init --latitude" in readme


def test_init_into_another_directory_says_how_to_use_what_it_wrote(tmp_path, capsys, monkeypatch):
    # Found trying it: with --dir the closing hint said to run `siderod check`, which would check
    # the bundled demo (or the user's other configuration), not the files just written.
    monkeypatch.delenv("SIDEROD_CONFIG", raising=False)
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path / "config-home"))
    target = tmp_path / "elsewhere"
    assert main(["init", "--dir", str(target), "--latitude", "50", "--longitude", "0"]) == 0
    out = capsys.readouterr().out
    assert f"siderod check --config {target / 'config.toml'}" in out


def test_init_into_the_usual_place_needs_no_config_option(tmp_path, capsys, monkeypatch):
    monkeypatch.delenv("SIDEROD_CONFIG", raising=False)
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path / "config-home"))
    assert main(["init", "--latitude", "50", "--longitude", "0"]) == 0
    out = capsys.readouterr().out
    assert "`siderod check`" in out and "--config" not in out
    assert (tmp_path / "config-home" / "siderod" / "config.toml").is_file()
