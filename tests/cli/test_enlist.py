"""`siderod enlist`: a catalogue entry appended to a target file, everything else kept byte for byte."""

from __future__ import annotations

import os
import stat

from conftest import REPO

from siderod.cli.main import main
from siderod.files.catalogue import open_catalogue
from siderod.files.targets import parse_targets_toml

DEMO_TARGETS = REPO / "siderod" / "demo" / "demo-targets.toml"


def _copy_demo(tmp_path, mode=0o600):
    path = tmp_path / "targets.toml"
    path.write_bytes(DEMO_TARGETS.read_bytes())
    path.chmod(mode)
    return path


def test_rest_of_the_file_is_kept_byte_for_byte(tmp_path, capsys):
    path = _copy_demo(tmp_path)
    before = path.read_bytes()
    assert main(["enlist", "north america nebula", "--into", str(path), "--as", "Cygnus wall"]) == 0
    after = path.read_bytes()
    assert after.startswith(before)  # comments, blank lines, alignment: all untouched
    added = after[len(before):].decode()
    assert added.startswith("\n[[target]]\nname = \"Cygnus wall\"")
    assert 'catalogue = "NGC 7000"' in added
    targets = parse_targets_toml(after.decode(), str(path))
    new = targets[-1]
    assert (new.name, new.catalogue_entry) == ("Cygnus wall", "NGC 7000")
    assert new.ra_deg == open_catalogue().find("NGC 7000").ra_deg
    assert stat.S_IMODE(path.stat().st_mode) == 0o600  # permissions kept
    assert sorted(os.listdir(tmp_path)) == ["targets.toml"]  # no temporary file left behind
    out, _ = capsys.readouterr()
    assert "added to" in out


def test_pinned_place_round_trips(tmp_path):
    path = _copy_demo(tmp_path)
    assert main(["enlist", "M 57", "--into", str(path), "--pin"]) == 0
    new = parse_targets_toml(path.read_text(), str(path))[-1]
    entry = open_catalogue().find("M 57")
    assert new.catalogue_entry == ""  # coordinates in the file win
    assert abs(new.ra_deg - entry.ra_deg) < 0.01 * 15 / 3600 and abs(new.dec_deg - entry.dec_deg) < 0.1 / 3600


def test_a_name_already_in_the_file_is_refused_and_nothing_changes(tmp_path, capsys):
    path = _copy_demo(tmp_path)
    before = path.read_bytes()
    stamp = path.stat().st_mtime_ns
    assert main(["enlist", "M 42", "--into", str(path), "--as", "Capella"]) == 1
    _, err = capsys.readouterr()
    assert "already has a target named 'Capella'" in err and "--as" in err
    assert path.read_bytes() == before and path.stat().st_mtime_ns == stamp


def test_bad_toml_and_unknown_names_are_refused(tmp_path, capsys):
    path = tmp_path / "broken.toml"
    path.write_text("[[target]\nname = 'x'\n")
    assert main(["enlist", "M 1", "--into", str(path)]) == 1
    assert "not valid TOML" in capsys.readouterr().err
    assert path.read_text() == "[[target]\nname = 'x'\n"
    assert main(["enlist", "Andromeda Galxy", "--into", str(path)]) == 1
    assert "closest: M 31" in capsys.readouterr().err


def test_a_new_file_is_created(tmp_path):
    path = tmp_path / "new.toml"
    assert main(["enlist", "crab nebula", "--into", str(path)]) == 0
    (target,) = parse_targets_toml(path.read_text(), str(path))
    assert target.name == "M 1" and target.catalogue_entry == "M 1"
