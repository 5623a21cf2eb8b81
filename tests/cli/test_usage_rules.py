"""One rule for the command line: anything wrong in it exits 2 and says what would be accepted."""

from __future__ import annotations

import pytest

from siderod.cli.control import parse_duration_seconds
from siderod.cli.main import EXIT_USAGE, main


@pytest.mark.parametrize("words", [
    ["agenda", "--hours", "0"],
    ["agenda", "--hours", "-3"],
    ["agenda", "--kind", "culminaton"],
    ["agenda", "--from", "yesterday"],
    ["watch", "--once", "--at", "soon"],
    ["watch", "--hz", "0"],
    ["now", "--at", "soon"],
    ["mute", "M42", "--for", "400d"],
    ["mute", "M42", "--for", "-5m"],
    ["mute", "M42", "--for", "soon"],
])
def test_a_malformed_command_line_exits_2(words, demo_config_path, capsys):
    with pytest.raises(SystemExit) as raised:  # argparse's own exit, or ours through main
        raise SystemExit(main([*words, "--config", str(demo_config_path)]))
    assert raised.value.code == EXIT_USAGE, capsys.readouterr().err
    err = capsys.readouterr().err
    assert "for_seconds" not in err  # no internal field names


def test_kind_names_in_any_case_and_a_did_you_mean(demo_config_path, capsys):
    args = ["agenda", "--from", "2026-12-14T20:00:00Z", "--hours", "1", "--config", str(demo_config_path)]
    assert main([*args, "--kind", "Culmination", "--json"]) == 0
    capsys.readouterr()
    assert main([*args, "--kind", "culminaton"]) == EXIT_USAGE
    assert 'did you mean "culmination"' in capsys.readouterr().err


def test_durations_say_what_is_wrong():
    with pytest.raises(ValueError, match="at most 365 days"):
        parse_duration_seconds("400d")
    with pytest.raises(ValueError, match="negative"):
        parse_duration_seconds("-5m")


def test_an_unknown_target_name_gets_a_did_you_mean(demo_config_path, capsys):
    args = ["agenda", "--from", "2026-12-14T20:00:00Z", "--hours", "1", "--config", str(demo_config_path)]
    assert main([*args, "--target", "Betelguese"]) == 1  # a name the configuration lacks: exit 1
    assert 'did you mean "Betelgeuse"' in capsys.readouterr().err


def test_the_readme_usage_table_names_every_verb():
    # Found following the README: its Usage table had no row for `sidereal`, `ack` or `use`.
    import argparse
    import re
    from pathlib import Path

    from siderod.cli.main import build_parser

    readme = (Path(__file__).resolve().parents[2] / "README.md").read_text(encoding="utf-8")
    table = readme.split("## Usage", 1)[1].split("\n\n", 2)[1]
    named = set(re.findall(r"(?:`siderod |, `)([a-z-]+)", table))
    subparsers = next(a for a in build_parser()._actions if isinstance(a, argparse._SubParsersAction))
    verbs = {name for name, sub in subparsers.choices.items()
             if name == sub.prog.split()[-1]}  # aliases (`ack`) share their verb's parser
    assert verbs - named == set()
