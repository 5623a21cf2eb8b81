"""MPC one-line element formats and explicit TOML elements (siderod.files.elements, targets).

The test lines are built field by field from the MPC's published column layouts (the tables in
siderod/files/elements.py's docstring, written from memory of the MPC format notes [from memory]),
so a column read one place off fails here.
"""

import io

import pytest

from siderod.common.errors import ConfigErrors
from siderod.common.model import Frame
from siderod.files.elements import (
    collect_elements_file,
    jd_from_calendar,
    parse_mpc_line,
    parse_packed_date,
    read_mpc_records,
    unpack_minor_planet_designation,
)
from siderod.files.targets import parse_targets_toml
from siderod.files.tomlpos import Problems

#: Element values survive the fixed-column round trip to the printed decimals.
COLUMN_TOL = 1e-9


def _columns(width, fields):
    """A line of ``width`` blanks with each (first_column, text) written at its 1-based column."""
    chars = [" "] * width
    for first, text in fields:
        chars[first - 1:first - 1 + len(text)] = text
    return "".join(chars).rstrip()


def _comet_line(name="C/2031 K4 (Invented)"):
    return _columns(160, [
        (1, "    "), (5, "C"), (6, "K31K040"), (15, "2031"), (20, "05"), (23, "17.3456"),
        (31, " 0.812345"), (42, "0.999500"), (52, "123.4567"), (62, " 45.6789"), (72, " 98.7654"),
        (82, "2031"), (86, "06"), (88, "01"), (92, " 7.5"), (97, " 3.2"), (103, name),
    ])


def _minor_planet_line():
    return _columns(202, [
        (1, "A0345"), (9, "15.35"), (15, " 0.25"), (21, "K2555"), (27, "123.45678"), (38, "234.56789"),
        (49, " 45.67891"), (60, " 12.34567"), (71, "0.1234567"), (81, " 0.21234567"), (93, "  2.7654321"),
        (167, "(100345) Invented"),
    ])


def test_comet_line_fields_come_from_their_columns():
    spec, name = parse_mpc_line(_comet_line())
    assert name == "C/2031 K4 (Invented)"
    assert spec.kind == "comet"
    assert abs(spec.q_au - 0.812345) < COLUMN_TOL and abs(spec.e - 0.9995) < COLUMN_TOL
    assert (spec.peri_deg, spec.node_deg, spec.i_deg) == (123.4567, 45.6789, 98.7654)
    assert abs(spec.tp_jd_tt - jd_from_calendar(2031, 5, 17.3456)) < COLUMN_TOL
    assert spec.epoch_jd_tt == jd_from_calendar(2031, 6, 1.0)
    assert (spec.h_mag, spec.slope) == (7.5, 3.2)


def test_minor_planet_line_fields_come_from_their_columns():
    spec, name = parse_mpc_line(_minor_planet_line())
    assert name == "(100345) Invented"
    assert spec.kind == "asteroid"
    assert (spec.h_mag, spec.slope) == (15.35, 0.25)
    assert spec.epoch_jd_tt == jd_from_calendar(2025, 5, 5.0)
    assert abs(spec.q_au - 2.7654321 * (1 - 0.1234567)) < COLUMN_TOL
    assert (spec.peri_deg, spec.node_deg, spec.i_deg) == (234.56789, 45.67891, 12.34567)
    # M = 123.45678 deg at the epoch: perihelion lies M / n days earlier.
    n_deg = 0.01720209895 / 2.7654321 ** 1.5 * 57.29577951308232
    assert abs(spec.tp_jd_tt - (spec.epoch_jd_tt - 123.45678 / n_deg)) < 1e-6


def test_packed_dates_and_designations():
    # MPC packed forms (format notes [from memory]): century letter I/J/K, months and days 1-9 then A-V.
    assert parse_packed_date("J9611") == (1996, 1, 1)
    assert parse_packed_date("K01AM") == (2001, 10, 22)
    assert unpack_minor_planet_designation("00001") == "(1)"
    assert unpack_minor_planet_designation("z9999") == "(619999)"
    assert unpack_minor_planet_designation("~0000") == "(620000)"
    assert unpack_minor_planet_designation("J95X00A") == "1995 XA"
    with pytest.raises(ValueError, match="packed date"):
        parse_packed_date("Q2555")


def test_records_read_from_a_file_object():
    text = "# invented orbits for tests\n" + _comet_line() + "\n\n" + _minor_planet_line() + "\n"
    records = read_mpc_records(io.StringIO(text))
    assert [name for _, name in records] == ["C/2031 K4 (Invented)", "(100345) Invented"]


def test_bad_line_is_a_file_line_error_and_the_rest_is_read():
    text = _comet_line() + "\n" + _comet_line("C/2032 A1 (Other)").replace("0.812345", "0.8x2345") + "\n"
    problems = Problems("comets.txt", text)
    targets = collect_elements_file(problems)
    assert [t.name for t in targets] == ["C/2031 K4 (Invented)"]
    assert str(problems.errors[0]).startswith("comets.txt:2: elements:")
    assert "columns 31-39" in str(problems.errors[0])
    assert targets[0].frame is Frame.ORBIT


def test_body_and_explicit_elements_in_a_target_file():
    text = """
[[target]]
name = "Jupiter"
body = "jupiter"
min_altitude = 15

[[target]]
name = "Invented asteroid"
epoch = 2031-06-01
a = 2.5
e = 0.1
i = 10.0
node = 80.0
peri = 70.0
M = 15.0
H = 12.0
G = 0.15

[[target]]
name = "Invented comet"
q = 0.9
e = 1.0
i = 120.0
node = 10.0
peri = 20.0
tp = 2031-05-17T06:00:00
H = 8.0
K = 4.0
"""
    jupiter, rock, comet = parse_targets_toml(text, "t.toml")
    assert jupiter.frame is Frame.BODY and jupiter.body == "jupiter" and jupiter.min_altitude_deg == 15.0
    assert rock.frame is Frame.ORBIT and rock.orbit.kind == "asteroid" and abs(rock.orbit.q_au - 2.25) < 1e-12
    assert comet.orbit.kind == "comet" and comet.orbit.tp_jd_tt == jd_from_calendar(2031, 5, 17.25)
    assert comet.orbit.epoch_jd_tt == comet.orbit.tp_jd_tt


def test_element_mistakes_are_file_line_key_errors():
    text = """
[[target]]
name = "Sun"
body = "sun"

[[target]]
name = "Half an orbit"
e = 0.5
i = 10.0
node = 80.0
peri = 70.0
tp = 2031-05-17
"""
    with pytest.raises(ConfigErrors) as caught:
        parse_targets_toml(text, "t.toml")
    messages = [str(e) for e in caught.value.errors]
    assert any(m.startswith("t.toml:4: target[1].body:") and "never a target" in m for m in messages)
    assert any(m.startswith("t.toml:") and "target[2].q" in m and "exactly one of q" in m for m in messages)
