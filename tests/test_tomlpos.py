"""siderod.files.tomlpos: locating key paths in TOML text, checked against tomllib's own reading."""

from __future__ import annotations

import tomllib

import pytest

from siderod.files.tomlpos import Problems, key_lines, locate_key

DOC = '''\
# a comment = not a key
[site]
name = "x # not a comment"
horizon = [
  [0, 12],   # first point
  [90, 8],
  [180, "20"],
]

[alerts.lead]
flip-due = [10, 0]
"altitude-up" = [5]

[[target]]
name = 'a'
alerts = { culmination = [5, 0], rise = [1] }

[[target]]
name = "b"
notes = """several
lines = 4
"""
ra = "1h"
'''


def test_document_is_valid_toml():
    # the scanner is only useful on text tomllib accepts; check the fixture is such text
    assert tomllib.loads(DOC)["target"][1]["ra"] == "1h"


@pytest.mark.parametrize(
    ("key_path", "line"),
    [
        ("site", 2),
        ("site.name", 3),
        ("site.horizon", 4),
        ("site.horizon[1]", 5),
        ("site.horizon[3][2]", 7),
        ("alerts.lead.flip-due", 11),
        ("alerts.lead.altitude-up", 12),
        ("target[1]", 14),
        ("target[1].alerts.rise", 16),
        ("target[2].name", 19),
        ("target[2].ra", 23),  # after a multi-line string holding "lines = 4"
    ],
)
def test_locate_key_finds_the_line(key_path, line):
    assert locate_key(DOC, key_path) == line


def test_missing_key_falls_back_to_its_table():
    assert locate_key(DOC, "target[2].dec") == 18
    assert locate_key(DOC, "site.horizon[9]") == 4


def test_unknown_top_level_key_is_none():
    assert locate_key(DOC, "mount.kind") is None


def test_multiline_string_contents_are_not_keys():
    assert "target[2].lines" not in key_lines(DOC)
    assert "lines" not in key_lines(DOC)


def test_dotted_keys_and_quoted_table_names():
    text = '[a."b.c"]\nx.y = 1\n'
    assert locate_key(text, "a.b.c.x.y") == 2


def test_syntax_error_gives_the_parser_line():
    problems = Problems("f.toml", "[site]\nname = \n")
    assert problems.parse_toml() is None
    (error,) = problems.errors
    assert error.line == 2
    assert "valid TOML" in error.expected
    assert error.got == '"name ="'


class _CountingText(str):
    """A str that adds up how many characters its ``count`` method is asked to scan."""

    scanned = 0

    def count(self, sub, start=0, end=None):
        stop = len(self) if end is None else end
        type(self).scanned += max(0, stop - start)
        return super().count(sub, start, end)


def test_key_lines_scans_the_text_a_bounded_number_of_times():
    # issue 13 item 4: line numbers were found by counting newlines from the start of the file for
    # every key, so a target file took quadratic time (20k targets: 28 s). Linear work means the
    # newline counting may look at each character a small, fixed number of times, whatever the size.
    entries = "".join(f'[[target]]\nname = "T{i}"\nra = "{i % 24}h"\ndec = 10\n\n' for i in range(2000))
    text = _CountingText(entries)
    _CountingText.scanned = 0
    lines = key_lines(text)
    assert lines["target[2000].dec"] == 5 * 1999 + 4  # cross-check: every entry is 5 lines
    assert _CountingText.scanned <= 2 * len(text)
