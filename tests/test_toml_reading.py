"""Reading TOML with tomli or the standard library's tomllib gives the same configuration, and a valid
target file is read without the full key-line scan (issue 13 item 4)."""

from __future__ import annotations

import tomllib
from pathlib import Path

import pytest
import tomli

from siderod.files import tomlpos
from siderod.files.config import parse_config
from siderod.files.targets import parse_targets_toml
from siderod.files.tomlpos import Problems, array_table_lines, key_lines

DEMO = Path(__file__).resolve().parents[1] / "siderod" / "demo"

# Every shape of key and value the README's "Target files" section allows that the demo's target file
# does not already hold, each spelled in several TOML ways (quoted and dotted keys, literal strings,
# inline and dotted tables, TOML dates, a header with spaces and a comment).
MORE_TARGETS = '''\
[[target]]
"name" = 'Quoted keys'
'ra' = "5.588h"
dec = "-05 23 28"
alerts.culmination = [10, 0]
alerts.flip-due = [15]
tags = ["a", 'b']

[[ target ]]   # spaces in the header
name = "Decimal degrees"
ra = "83.82d"
dec = -5.39
min_altitude = "10d30m"
hour_angles = ["-1h", "+0h30m", 2.5]
epoch = 2016.0

[[target]]
name = "Of date"
frame = "ecliptic-of-date"
lon = 10.5
lat = "-1d"

[[target]]
name = "Fan"
frame = "fixed-pointing"
ha = "+1h30m"
dec = 20
beam.ha = 8
beam.dec = 2
sources = ["Vega", "sun"]

[[target]]
name = "Comet key by key"
q = 0.7142
e = 0.99812
i = 60.0
node = 300.0
peri = 150.0
tp = 2026-12-26T10:20:38
epoch = 2026-12-01
H = 6.5
K = 4.0

[[target]]
name = "Asteroid key by key"
a = 2.7675
e = 0.0785
i = 10.59
node = 80.3
peri = 73.6
M = 60.1
epoch = 2461000.5
H = 3.3
G = 0.12
alerts = true

[[target]]
name = "Moon too"
body = "moon"
min_altitude = 3
'''


def _load(text_by_name: dict[str, str]) -> object:
    config_text = (DEMO / "demo.toml").read_text().replace(
        'files = ["demo-targets.toml"]', 'files = ["demo-targets.toml", "more.toml"]')
    return parse_config(config_text, str(DEMO / "demo.toml"), read_file=lambda p: text_by_name[Path(p).name],
                        at_unix=1797000000.0)


def test_tomli_and_tomllib_load_the_same_configuration(monkeypatch):
    # Reference: the standard library's tomllib, the parser siderod used before (tomli's own copy).
    texts = {"demo-targets.toml": (DEMO / "demo-targets.toml").read_text(), "more.toml": MORE_TARGETS}
    assert tomlpos._toml is tomli  # the compiled parser is the one in use
    with_tomli = _load(texts)
    monkeypatch.setattr(tomlpos, "_toml", tomllib)
    with_tomllib = _load(texts)
    assert with_tomli == with_tomllib
    names = [t.name for t in with_tomli.targets]
    assert "Quoted keys" in names and "Asteroid key by key" in names and "Barnard's Star" in names
    # each target's source line is that of its [[target]] header
    more = [t for t in with_tomli.targets if t.source.startswith(str(DEMO / "more.toml"))]
    headers = [n for n, line in enumerate(MORE_TARGETS.splitlines(), start=1) if line.startswith("[[")]
    assert [int(t.source.rpartition(":")[2]) for t in more] == headers


@pytest.mark.parametrize("text", [
    "[site]\nname = \n",
    "[[target]]\nname = 'a'\nname = 'b'\n",
    "[[target]]\nra = \"5h\n",
    "x = [1, 2\n\n",
    "a = 1\nb = ",
])
def test_syntax_errors_read_the_same_with_either_parser(monkeypatch, text):
    # Reference: tomllib again; the message and line must not depend on which parser is installed.
    first = Problems("f.toml", text)
    assert first.parse_toml() is None
    monkeypatch.setattr(tomlpos, "_toml", tomllib)
    second = Problems("f.toml", text)
    assert second.parse_toml() is None
    assert [str(e) for e in first.errors] == [str(e) for e in second.errors]


def test_a_valid_target_file_is_read_without_the_full_key_scan(monkeypatch):
    # issue 13 item 4: the character-by-character scan of every key (2.3 s of the 6.4 s that 200,000
    # targets took) ran for every file, only to find each [[target]] table's line.
    text = "".join(f'[[target]]\nname = "T{i}"\nra = "{i % 24}h"\ndec = {i % 90}\n\n' for i in range(300))
    text += '[[target]]\nname = "Full"\nframe = "galactic"\nl = 1\nb = 2\n'

    def refuse(text):
        raise AssertionError("the full key-line scan ran on a valid file")

    monkeypatch.setattr(tomlpos, "key_lines", refuse)
    targets = parse_targets_toml(text, "t.toml")
    assert [t.source for t in targets[:2]] == ["t.toml:1", "t.toml:6"]
    assert targets[-1].source == "t.toml:1501"


def test_errors_still_find_their_lines_after_the_quick_index():
    text = '[[target]]\nname = "A"\nra = "1h"\ndec = 1\n\n[[target]]\nname = "A"\nra = "5h61m"\ndec = 2\n'
    with pytest.raises(Exception) as caught:
        parse_targets_toml(text, "t.toml")
    assert [(e.line, e.key) for e in caught.value.errors] == [(8, "target[2].ra")]


TRICKY = [
    # a header-like line inside a multi-line string: the quick index declines
    '[[target]]\nname = "a"\nnote = """\n[[target]]\n"""\n[[target]]\nname = "b"\n',
    # a quoted header the quick pattern does not know: the counts differ, it declines
    '[[target]]\nname = "a"\n[["target"]]\nname = "b"\n',
    # indentation, comments, CRLF, nested arrays of tables and other arrays of tables
    '  [[target]]  # one\r\nname = "a"\r\n[[target.sub]]\r\nx = 1\r\n[[other]]\r\n\r\n'
    '[[target]]\r\nname = "b"\r\n',
    # arrays spanning lines, with brackets at the start of a line
    'h = [\n  [0, 1],\n  [2, 3],\n]\n[[target]]\nname = "a"\nv = [\n  "[[target]]",\n]\n',
]


@pytest.mark.parametrize("text", TRICKY)
def test_quick_header_index_agrees_with_the_full_scan_or_declines(text):
    # Reference: key_lines, the scan that follows the whole TOML grammar of keys and values.
    data = tomllib.loads(text)
    quick = array_table_lines(text, "target", data)
    full = key_lines(text)
    expected = [full[f"target[{n}]"] for n in range(1, len(data["target"]) + 1)]
    assert quick is None or quick == expected
    problems = Problems("t.toml", text)
    problems.parse_toml()
    assert [problems.line_of(f"target[{n}]") for n in range(1, len(expected) + 1)] == expected


def test_quick_header_index_answers_for_plain_files():
    text = '# cat\n[[target]]\nname = "a"\n\n  [[ target ]]\nname = "b"\n'
    assert array_table_lines(text, "target", tomllib.loads(text)) == [2, 5]
