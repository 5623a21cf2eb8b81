"""Angle parsing, formatting and wrapping (siderod.astro.angles).

References: the sexagesimal conversions are arithmetic facts (1 h = 15 deg, 60 minutes to the hour or
degree); expected values are worked by hand beside each case.
"""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from siderod.astro.angles import (
    AngleParseError,
    format_clock_hms,
    format_dms,
    format_hms,
    parse_angle_deg,
    wrap_deg_180,
    wrap_deg_360,
    wrap_hours_12,
    wrap_hours_24,
    wrap_rad_2pi,
)

#: Parsing sums at most three fields and divides once: a few ulps of a 360-degree value.
PARSE_TOL_DEG = 1e-12


@pytest.mark.parametrize(
    ("text", "kind", "expected_deg"),
    [
        ("05h35m17.3s", "ra", (5 + 35 / 60 + 17.3 / 3600) * 15),  # by hand: 83.822083...
        ("05:35:17.3", "ra", (5 + 35 / 60 + 17.3 / 3600) * 15),
        ("5 35 17.3", "ra", (5 + 35 / 60 + 17.3 / 3600) * 15),
        ("5.5h", "ra", 82.5),
        ("83.822", "ra", 83.822),  # bare decimal RA is degrees
        ("83°49'19\"", "ra", 83 + 49 / 60 + 19 / 3600),
        ("-05°23'28\"", "dec", -(5 + 23 / 60 + 28 / 3600)),
        ("-5d23m28s", "dec", -(5 + 23 / 60 + 28 / 3600)),
        ("-5:23:28", "dec", -(5 + 23 / 60 + 28 / 3600)),
        ("\u22125 23 28", "dec", -(5 + 23 / 60 + 28 / 3600)),  # typographic minus
        ("-0 30", "dec", -0.5),  # sign applies to the whole value
        ("+56 12 30", "lat", 56.208333333333336),  # demo site (Corrie Hill)
        ("56 12 30 N", "lat", 56.208333333333336),
        ("3 41 15 W", "lon", -3.6875),
        ("-3°41′15″", "lon", -3.6875),
        ("1.5", "hour_angle", 22.5),  # bare decimal hour angle is hours
        ("-01h30m", "hour_angle", -22.5),
        ("12.5", "angle", 12.5),
        (83.822, "ra", 83.822),
        (-2, "hour_angle", -30.0),
    ],
)
def test_parse_angle_accepts_documented_forms(text, kind, expected_deg):
    assert parse_angle_deg(text, kind=kind) == pytest.approx(expected_deg, abs=PARSE_TOL_DEG)


@pytest.mark.parametrize(
    ("text", "kind", "fragment"),
    [
        ("5h61m", "ra", "minutes must be below 60"),
        ("5 30 60", "dec", "seconds must be below 60"),
        ("95", "dec", "out of range"),
        ("-91:00", "lat", "out of range"),
        ("24h00m00s", "ra", "out of range"),
        ("05h35m", "dec", "only accepted for RA and hour angle"),
        ("abc", "angle", "unrecognised format"),
        ("", "angle", "empty"),
        ("5.5 30", "dec", "only the last field"),
        ("-3 41 15 W", "lon", "not both"),
    ],
)
def test_parse_angle_errors_quote_text_and_list_forms(text, kind, fragment):
    with pytest.raises(AngleParseError) as info:
        parse_angle_deg(text, kind=kind)
    message = str(info.value)
    assert fragment in message
    assert repr(text) in message
    assert "accepted forms" in message
    assert isinstance(info.value, ValueError)


def test_parse_angle_rejects_unknown_kind_and_non_numbers():
    with pytest.raises(ValueError, match="kind must be one of"):
        parse_angle_deg("1", kind="azimuth")
    with pytest.raises(AngleParseError):
        parse_angle_deg(True, kind="angle")
    with pytest.raises(AngleParseError, match="not finite"):
        parse_angle_deg(float("nan"), kind="angle")
    with pytest.raises(AngleParseError, match="not finite"):  # TOML integers have no size limit
        parse_angle_deg(10**400, kind="dec")


def test_format_hms_and_dms_examples():
    assert format_hms(5.588138888888889) == "05h35m17.3s"
    assert format_hms(-1.0341666666666667, decimals=0, sign=True) == "-01h02m03s"
    assert format_hms(1.5, sign=True) == "+01h30m00.0s"
    assert format_hms(23.99999999) == "00h00m00.0s"  # a clock reading wraps at 24 h
    assert format_hms(25.0, decimals=0) == "25h00m00s"  # outside [0, 24) nothing is wrapped
    assert format_dms(-5.391111111111111) == "-05°23'28\""
    assert format_dms(56.208333333333336, sign=True) == "+56°12'30\""
    assert format_dms(-0.5, decimals=1) == "-00°30'00.0\""
    assert format_clock_hms(5.588138888888889) == "05:35:17"
    assert format_clock_hms(24.0) == "00:00:00"
    assert format_clock_hms(-0.5) == "23:30:00"


@settings(max_examples=60, deadline=None, database=None)
@given(st.floats(min_value=0.0, max_value=23.99, allow_nan=False))
def test_format_then_parse_round_trips_ra(hours):
    text = format_hms(hours, decimals=3)
    assert parse_angle_deg(text, kind="ra") == pytest.approx(hours * 15.0, abs=0.0005 * 15 / 3600 + 1e-12)


@settings(max_examples=60, deadline=None, database=None)
@given(st.floats(min_value=-90.0, max_value=90.0, allow_nan=False))
def test_format_then_parse_round_trips_dec(deg):
    text = format_dms(deg, decimals=2, sign=True)
    assert parse_angle_deg(text, kind="dec") == pytest.approx(deg, abs=0.005 / 3600 + 1e-12)


@settings(max_examples=100, deadline=None, database=None)
@given(st.floats(min_value=-1e7, max_value=1e7, allow_nan=False))
def test_wraps_stay_in_half_open_ranges(x):
    for fn, low, high, period in [
        (wrap_hours_24, 0.0, 24.0, 24.0),
        (wrap_hours_12, -12.0, 12.0, 24.0),
        (wrap_deg_360, 0.0, 360.0, 360.0),
        (wrap_deg_180, -180.0, 180.0, 360.0),
        (wrap_rad_2pi, 0.0, 2 * math.pi, 2 * math.pi),
    ]:
        value = float(fn(x))
        assert low <= value < high
        turns = (x - value) / period
        assert abs(turns - round(turns)) < 1e-6


def test_wraps_edge_values_and_shapes():
    assert float(wrap_hours_24(-1e-17)) == 0.0  # would round to 24.0 without the fold
    assert float(wrap_hours_24(24.0)) == 0.0
    assert float(wrap_hours_12(12.0)) == -12.0
    assert isinstance(wrap_deg_360(370.0), np.float64)  # scalar in, numpy scalar out
    out = wrap_deg_180(np.array([[190.0, -190.0], [180.0, -180.0]]))
    assert out.shape == (2, 2)
    np.testing.assert_allclose(out, [[-170.0, 170.0], [-180.0, -180.0]])


@pytest.mark.parametrize(
    ("text", "kind"),
    [
        ("-32 22 40 N", "lat"),  # the sign says south, the letter north
        ("+32 22 40 S", "lat"),
        ("-70 0 0 E", "lon"),
        ("+70 0 0 W", "lon"),
        ("-5 23 28 N", "dec"),
        ("+5 23 28 S", "dec"),
    ],
)
def test_a_sign_and_a_compass_letter_that_disagree_are_refused(text, kind):
    with pytest.raises(AngleParseError, match="disagree") as info:
        parse_angle_deg(text, kind=kind)
    assert repr(text) in str(info.value)


@pytest.mark.parametrize(("text", "kind"), [("N", "dec"), (" s ", "lat"), ("E", "lon"), ("W", "lon")])
def test_a_compass_letter_without_an_angle_is_refused(text, kind):
    # Found by tests/test_config_fuzz.py (a CSV Dec of "N"): the letter was taken off, and the empty
    # rest was read as if it began with a sign, an IndexError instead of a message.
    with pytest.raises(AngleParseError, match="no angle before the compass letter"):
        parse_angle_deg(text, kind=kind)


def test_compass_letters_that_agree_with_a_plus_sign_or_stand_alone():
    assert parse_angle_deg("+32 22 40 N", kind="lat") == pytest.approx(32 + 22 / 60 + 40 / 3600)
    assert parse_angle_deg("32 22 40 S", kind="lat") == pytest.approx(-(32 + 22 / 60 + 40 / 3600))
    assert parse_angle_deg("5 23 28 S", kind="dec") == pytest.approx(-(5 + 23 / 60 + 28 / 3600))
    assert parse_angle_deg("+5 23 28 N", kind="dec") == pytest.approx(5 + 23 / 60 + 28 / 3600)
    with pytest.raises(AngleParseError, match="not both"):  # "-" and S: a double negative?
        parse_angle_deg("-32 22 40 S", kind="lat")


@pytest.mark.parametrize("value", [5.58, "5.58", 10, "23.9", 0.5])
def test_a_bare_decimal_ra_below_24_is_ambiguous_and_refused(value):
    with pytest.raises(AngleParseError) as info:
        parse_angle_deg(value, kind="ra")
    message = str(info.value)
    assert "hours or degrees" in message
    shown = f"{float(value):g}"
    assert f'"{shown}h"' in message and f'"{shown}d"' in message


def test_ra_readings_shown_for_an_ambiguous_number():
    # 5.58 h = 5h34m48s; 5.58 deg = 0.372 h = 0h22m19.2s (by hand).
    with pytest.raises(AngleParseError) as info:
        parse_angle_deg(5.58, kind="ra")
    assert "05h34m48s" in str(info.value) and "00h22m19s" in str(info.value)


def test_unambiguous_ra_numbers_still_read_as_degrees():
    assert parse_angle_deg(79.17233, kind="ra") == 79.17233
    assert parse_angle_deg(0, kind="ra") == 0.0  # 0 h and 0 deg are the same direction
    assert parse_angle_deg("5.58h", kind="ra") == pytest.approx(83.7)
    assert parse_angle_deg("5.58d", kind="ra") == pytest.approx(5.58)


def test_the_s_of_seconds_is_not_read_as_south():
    # "56d12m30s" ends in the seconds unit; it was read as 56d12m30 S (south) before.
    assert parse_angle_deg("56d12m30s", kind="lat") == pytest.approx(56.208333333333336)
    assert parse_angle_deg("5d23m28s", kind="dec") == pytest.approx(5 + 23 / 60 + 28 / 3600)
    assert parse_angle_deg("56d12m30s S", kind="lat") == pytest.approx(-56.208333333333336)
