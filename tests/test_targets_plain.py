"""The plain-angle shortcut of the CSV reader gives exactly what the full angle parser gives."""

from __future__ import annotations

import random

import pytest

from siderod.astro.angles import AngleParseError, parse_angle_deg
from siderod.files.targets import _plain_angle


def _full(text, kind):
    try:
        return parse_angle_deg(text, kind=kind)
    except AngleParseError:
        return None


@pytest.mark.parametrize("kind", ["ra", "dec"])
def test_plain_forms_match_the_full_parser_bit_for_bit(kind):
    rng = random.Random(7)
    texts = []
    for _ in range(3000):
        value = rng.uniform(-400, 400)
        digits = rng.choice([0, 1, 3, 5, 8])
        texts.append(f"{value:.{digits}f}{rng.choice(['', 'd', 'h'])}")
    texts += ["0", "-0", "+5.5h", "24h", "23.99999h", "360d", "359.9d", "90", "-90", "90.0001", "5.", "1e3"]
    for text in texts:
        fast = _plain_angle(text, kind)
        if fast is not None:  # the shortcut answers only when it is sure; otherwise the full parser reads it
            assert fast == _full(text, kind), text


def test_plain_toml_tables_give_the_same_targets_as_the_full_reader():
    # Reference: _one_target, the full reader, on the same tables.
    from siderod.files.targets import _one_target, _plain_target
    from siderod.files.tomlpos import Problems

    rng = random.Random(8)
    lines = []
    for i in range(400):
        ra = rng.choice([f'"{rng.uniform(0, 24):.5f}h"', f'"{rng.uniform(0, 360):.4f}d"', '"05h35m17.3s"',
                         f'"{rng.uniform(0, 24):.3f}"', f"{rng.uniform(24, 360):.3f}"])
        dec = rng.choice([f"{rng.uniform(-90, 90):.4f}", f'"{rng.uniform(-90, 90):.2f}"', "91", '"-05 23 28"',
                          str(rng.randint(-90, 90))])
        lines.append(f'[[target]]\nname = "T{i}"\nra = {ra}\ndec = {dec}\n')
    text = "\n".join(lines)
    import tomllib

    entries = tomllib.loads(text)["target"]
    fast_count = 0
    for number, entry in enumerate(entries, start=1):
        prefix = f"target[{number}]"
        source = f"t.toml:{Problems('t.toml', text).line_of(prefix)}"
        fast = _plain_target(entry, source)
        if fast is None:
            continue
        fast_count += 1
        problems = Problems("t.toml", text)
        assert fast == _one_target(problems, entry, prefix, source), entry
        assert not problems.errors
    assert fast_count > 50  # the shortcut is used for a good share of them


def _row_by_row(monkeypatch, text):
    """Targets and problems from the row-by-row CSV reader alone (the column reader switched off)."""
    from siderod.files import targets
    from siderod.files.tomlpos import Problems

    problems = Problems("cat.csv", text)
    with monkeypatch.context() as m:
        m.setattr(targets, "_plain_csv", lambda p: None)
        return targets.collect_targets_csv(problems), [str(e) for e in problems.errors]


def test_plain_csv_columns_give_the_row_by_row_targets(monkeypatch):
    # Reference: the row-by-row reader (csv module, _plain_angle per cell) on the same text; the
    # column reader must answer (not fall back) and give equal Target records, sources included.
    from siderod.files.targets import _plain_csv, collect_targets_csv
    from siderod.files.tomlpos import Problems

    rng = random.Random(9)
    rows = []
    for i in range(2000):
        ra = rng.choice([f"{rng.uniform(0, 24):.{rng.choice([0, 3, 6])}f}h", f"{rng.uniform(0, 360):.4f}d",
                         "+5.5h", "0h", "359.99999d", "12.h", "-0.0d", "23.999999h"])
        dec = rng.choice([f"{rng.uniform(-90, 90):.4f}", f"{rng.uniform(-90, 90):.2f}d", "-0", "+90",
                          "-90.0d", "5.", "0.000001"])
        rows.append(f"{rng.choice(['N', 'ε Eri ', 'x#y'])}{i}é,{ra},{dec}")
    for text in ("name,ra,dec\n" + "\n".join(rows) + "\n", " Name , RA,dec\n" + "\n".join(rows),
                 "\n".join(rows)):
        assert _plain_csv(Problems("cat.csv", text)) is not None
        problems = Problems("cat.csv", text)
        assert (collect_targets_csv(problems), []) == _row_by_row(monkeypatch, text)
        assert not problems.errors


@pytest.mark.parametrize("text", [
    "name,ra,dec\nA,5.5h,10\nA,6h,11\n",            # a repeated name
    "A,5.5h,10\n\nB,6h,11\n",                         # a blank line
    "A,5.5h,10\n# comment,6h,11\n",                   # a comment
    "A,24h,10\n", "A,5h,91\n", "A,5h,5h\n", "A,5,10\n",  # out of range, Dec in hours, a bare RA
    "A ,5h,10\n", "A,5h,10,extra\nB,5h\n",             # a space around a cell; too many and too few cells
    '"A, B",5h,10\n', "A,5h,10\r\nB,6h,11\r\n",        # quotes; carriage returns
    "A,05h35m17s,10\n",                                # sexagesimal
])
def test_other_csv_files_are_left_to_the_row_by_row_reader(monkeypatch, text):
    from siderod.files.targets import _plain_csv, collect_targets_csv
    from siderod.files.tomlpos import Problems

    assert _plain_csv(Problems("cat.csv", text)) is None
    problems = Problems("cat.csv", text)
    got = (collect_targets_csv(problems), [str(e) for e in problems.errors])
    assert got == _row_by_row(monkeypatch, text)
