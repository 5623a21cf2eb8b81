"""Time scales and leap seconds (siderod.astro.timescales, siderod.astro.leapseconds).

References, named beside each check:
- ERFA's test program, liberfa/erfa src/t_erfa_c.c (ERFA 2.0.1 / SOFA 20231011), functions t_dat,
  t_utctai, t_taitt, t_utcut1 (values and tolerances copied from there);
- pyerfa 2.0.1.5 (erfa.dat, erfa.utctai, erfa.taitt, erfa.utcut1, erfa.dtf2d), test-only;
- IERS Leap_Second.dat and finals2000A.all as shipped by astropy-iers-data 0.2026.11.2.0.34.55 (real files,
  read through our parsers); astropy 8.0.2 IERS_A for the DUT1 interpolation cross-check.
"""

import datetime as dt
import io
import math
import warnings
from pathlib import Path

import erfa
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from siderod.astro.leapseconds import BUILTIN_LEAP_TABLE, LeapTableExpired, parse_leap_second_file
from siderod.astro.timescales import (
    Instants,
    NaiveDatetimeError,
    datetime_from_unix,
    format_iso_utc,
    instants_from_datetime,
    instants_from_jd,
    instants_from_unix,
    parse_iers_finals,
    parse_iso_datetime,
    unix_from_datetime,
)

UTC = dt.UTC
IERS_DATA = Path(__import__("astropy_iers_data").__file__).parent / "data"

#: ERFA t_erfa_c.c tolerance for utctai/taitt/utcut1 date fractions (days).
ERFA_FRACTION_TOL_DAYS = 1e-12
#: POSIX seconds near 2e9 have a float64 resolution of 0.24 microseconds; allow a few ulps.
CHAIN_TOL_SECONDS = 1e-6
#: TAI - UTC is exact in the leap-second era; before 1972 our drift term rounds like ERFA's.
DAT_TOL_SECONDS = 1e-9
#: IERS finals UT1-UTC values are printed to 1e-7 s; interpolation adds float noise only.
DUT1_TOL_SECONDS = 1e-9


def _erfa_quiet(fn, *args):
    """Call a pyerfa routine with its 'dubious year' warning silenced (our warnings are errors)."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", erfa.ErfaWarning)
        return fn(*args)


def _unix(y, m, d, hh=0, mm=0, ss=0):
    return dt.datetime(y, m, d, hh, mm, ss, tzinfo=UTC).timestamp()


# --- ERFA test-program vectors (t_erfa_c.c) ---------------------------------------------------


@pytest.mark.parametrize(
    ("date", "expected"), [((2003, 6, 1), 32.0), ((2008, 1, 17), 33.0), ((2017, 9, 1), 37.0)]
)
def test_tai_minus_utc_matches_erfa_test_vectors_t_dat(date, expected):
    # t_erfa_c.c t_dat: exact values.
    assert BUILTIN_LEAP_TABLE.tai_minus_utc_seconds(_unix(*date)) == expected


def test_utc_to_tai_to_tt_matches_erfa_test_vectors_t_utctai_t_taitt():
    inst = instants_from_jd(2453750.5, 0.892100694, scale="utc")
    # t_utctai: TAI = (2453750.5, 0.8924826384444444444); t_taitt applies +32.184 s.
    tai_frac = float(inst.tt_frac) - 32.184 / 86400.0
    assert float(inst.tt_whole) == 2453750.5
    assert abs(tai_frac - 0.8924826384444444444) <= ERFA_FRACTION_TOL_DAYS
    # t_taitt: TT for TAI (2453750.5, 0.892482639) is 0.892855139.
    tt = instants_from_jd(2453750.5, 0.892482639 - 33.0 / 86400.0, scale="utc")
    assert abs(float(tt.tt_frac) - 0.892855139) <= ERFA_FRACTION_TOL_DAYS


def test_utc_to_ut1_matches_erfa_test_vector_t_utcut1():
    inst = instants_from_jd(2453750.5, 0.892100694, scale="utc", dut1_seconds=0.3341)
    # t_utcut1: UT1 = (2453750.5, 0.8921045608981481481).
    assert float(inst.ut1_whole) == 2453750.5
    assert abs(float(inst.ut1_frac) - 0.8921045608981481481) <= ERFA_FRACTION_TOL_DAYS


# --- leap-second table against erfa.dat ---------------------------------------------------------


def _table_starts():
    return [
        dt.date.fromordinal(int(m) + dt.date(1858, 11, 17).toordinal())
        for m in BUILTIN_LEAP_TABLE.start_mjd_utc
    ]


@pytest.mark.parametrize("start", _table_starts(), ids=str)
def test_tai_minus_utc_matches_erfa_dat_at_each_boundary(start):
    # pyerfa erfa.dat(iy, im, id, fd): at 00:00 of the first day, one second before, and mid-day before.
    day_before = start - dt.timedelta(days=1)
    at_start = _unix(start.year, start.month, start.day)
    for unix, (y, m, d), fd in [
        (at_start, (start.year, start.month, start.day), 0.0),
        (at_start - 1.0, (day_before.year, day_before.month, day_before.day), 86399.0 / 86400.0),
        (at_start - 43200.0, (day_before.year, day_before.month, day_before.day), 0.5),
    ]:
        expected = _erfa_quiet(erfa.dat, y, m, d, fd)
        assert abs(float(BUILTIN_LEAP_TABLE.tai_minus_utc_seconds(unix)) - expected) <= DAT_TOL_SECONDS


@pytest.mark.parametrize(
    "date",
    [(1960, 6, 15), (1965, 5, 1), (1971, 12, 31), (1985, 3, 3), (2016, 12, 31), (2026, 12, 14), (2029, 1, 1)],
)
def test_tai_minus_utc_matches_erfa_dat_between_boundaries(date):
    expected = _erfa_quiet(erfa.dat, *date, 0.25)
    unix = _unix(*date, 6)
    assert abs(float(BUILTIN_LEAP_TABLE.tai_minus_utc_seconds(unix)) - expected) <= DAT_TOL_SECONDS


def test_tai_minus_utc_is_zero_before_1960_like_erfa_dat():
    assert (
        BUILTIN_LEAP_TABLE.tai_minus_utc_seconds(_unix(1950, 1, 1))
        == _erfa_quiet(erfa.dat, 1950, 1, 1, 0.0)
        == 0.0
    )


def _erfa_utc_from_unix(unix):
    """UTC as an ERFA two-part quasi-JD, built from calendar fields with erfa.dtf2d (not our split)."""
    day = math.floor(unix / 86400.0)
    sec_of_day = unix - day * 86400.0
    date = dt.date(1970, 1, 1) + dt.timedelta(days=day)
    hour = int(sec_of_day // 3600)
    minute = int((sec_of_day - hour * 3600) // 60)
    sec = sec_of_day - hour * 3600 - minute * 60
    return _erfa_quiet(erfa.dtf2d, "UTC", date.year, date.month, date.day, hour, minute, sec)


@settings(max_examples=60, deadline=None, database=None)
@given(st.floats(min_value=_unix(1960, 1, 2), max_value=_unix(2030, 1, 1)), st.floats(-0.9, 0.9))
@pytest.mark.slow
def test_utc_to_tt_and_ut1_chain_matches_erfa_utctai_taitt_utcut1(unix, dut1):
    # Reference chain: erfa.dtf2d('UTC', calendar fields) -> utctai -> taitt, and utcut1, as two-part JDs.
    unix = round(unix, 6) + 0.0  # whole microseconds (and no -0.0 or 1e-300) keep the calendar split clean
    inst = instants_from_unix(unix, dut1_seconds=dut1)
    u1, u2 = _erfa_utc_from_unix(unix)
    tt1, tt2 = erfa.taitt(*_erfa_quiet(erfa.utctai, u1, u2))
    ours_tt = ((float(inst.tt_whole) - tt1) + (float(inst.tt_frac) - tt2)) * 86400.0
    assert abs(ours_tt) <= CHAIN_TOL_SECONDS
    if unix >= _unix(1972, 1, 1):
        # erfa.utcut1 takes TAI - UTC at 0h of the day, so before 1972 (drifting TAI - UTC) it departs
        # from UT1 = UTC + DUT1 by up to 2.6 ms; compare only in the leap-second era.
        ut1, ut2 = _erfa_quiet(erfa.utcut1, u1, u2, dut1)
        ours_ut1 = ((float(inst.ut1_whole) - ut1) + (float(inst.ut1_frac) - ut2)) * 86400.0
        assert abs(ours_ut1) <= CHAIN_TOL_SECONDS


def test_leap_second_day_tt_matches_erfa_utctai_taitt():
    # 2016-12-31 ended with a leap second; POSIX 23:59:59 on that day is still TAI - UTC = 36 s.
    unix = _unix(2016, 12, 31, 23, 59, 59)
    inst = instants_from_unix(unix)
    u1, u2 = erfa.dtf2d("UTC", 2016, 12, 31, 23, 59, 59.0)
    tt1, tt2 = erfa.taitt(*erfa.utctai(u1, u2))
    assert abs(((float(inst.tt_whole) - tt1) + (float(inst.tt_frac) - tt2)) * 86400.0) <= CHAIN_TOL_SECONDS
    after = instants_from_unix(unix + 1.0)  # 2017-01-01 00:00:00 UTC: TT advanced by 2 s
    gap = ((after.tt_whole - inst.tt_whole) + (after.tt_frac - inst.tt_frac)) * 86400.0
    assert gap == pytest.approx(2.0, abs=CHAIN_TOL_SECONDS)


# --- known-good span and strict mode ------------------------------------------------------------


def test_builtin_table_known_good_until_iers_expiry():
    # IERS Leap_Second.dat (astropy-iers-data): "File expires on 28 June 2027".
    assert BUILTIN_LEAP_TABLE.known_good_until_utc == dt.date(2027, 6, 28)
    assert bool(BUILTIN_LEAP_TABLE.is_known_good(_unix(2027, 6, 27, 23, 59, 59)))
    assert not bool(BUILTIN_LEAP_TABLE.is_known_good(_unix(2027, 6, 28)))
    assert not bool(BUILTIN_LEAP_TABLE.is_known_good(_unix(1959, 12, 31)))
    flags = BUILTIN_LEAP_TABLE.is_known_good(np.array([_unix(2026, 12, 14), _unix(2030, 1, 1)]))
    assert flags.tolist() == [True, False]


def test_strict_raises_leap_table_expired_with_date():
    late = _unix(2028, 1, 1)
    instants_from_unix(late)  # not strict: uses the last value, no error and no warning
    with pytest.raises(LeapTableExpired) as info:
        instants_from_unix(np.array([_unix(2026, 12, 14), late]), strict=True)
    assert info.value.valid_until_utc == dt.date(2027, 6, 28)
    assert isinstance(info.value, ValueError)
    assert "parse_leap_second_file" in str(info.value)


def test_parse_leap_second_file_matches_builtin_table():
    with open(IERS_DATA / "Leap_Second.dat") as fileobj:  # real IERS file, read through our parser
        table = parse_leap_second_file(fileobj)
    assert table.known_good_until_utc == dt.date(2027, 6, 28)
    assert table.start_mjd_utc == BUILTIN_LEAP_TABLE.start_mjd_utc
    assert table.base_seconds == BUILTIN_LEAP_TABLE.base_seconds
    assert "2027-06-28" in table.source


def test_parse_leap_second_file_small_sample_and_errors():
    text = (
        "#  File expires on 1 January 2030\n    41317.0    1  1 1972       10\n    41499.0    1  7 1972  11\n"
    )
    table = parse_leap_second_file(io.StringIO(text))
    assert table.known_good_until_utc == dt.date(2030, 1, 1)
    assert table.tai_minus_utc_seconds(_unix(1980, 1, 1)) == 11.0
    assert table.tai_minus_utc_seconds(_unix(1971, 12, 31, 12)) == pytest.approx(
        _erfa_quiet(erfa.dat, 1971, 12, 31, 0.5), abs=DAT_TOL_SECONDS
    )
    with pytest.raises(ValueError, match="File expires on"):
        parse_leap_second_file(io.StringIO("    41317.0    1  1 1972       10\n"))


# --- IERS finals (DUT1) -------------------------------------------------------------------------


@pytest.fixture(scope="module")
def finals_table():
    with open(IERS_DATA / "finals2000A.all", "rb") as fileobj:  # real sample file, parsed by us
        return parse_iers_finals(fileobj)


def _finals_rows():
    rows = {}
    with open(IERS_DATA / "finals2000A.all") as fileobj:
        for line in fileobj:
            if line[58:68].strip():
                rows[float(line[7:15])] = float(line[154:165].strip() or line[58:68])
    return rows


def test_finals_table_reproduces_file_rows(finals_table):
    rows = _finals_rows()
    for mjd in (41684.0, 51544.0, 57753.0, 57754.0, 61000.0):
        unix = (mjd - 40587.0) * 86400.0
        assert float(finals_table.dut1_seconds(unix)) == pytest.approx(rows[mjd], abs=DUT1_TOL_SECONDS)
    assert bool(finals_table.covers((51544.0 - 40587.0) * 86400.0))
    assert not bool(finals_table.covers(0.0))


def test_finals_interpolation_handles_leap_second_day(finals_table):
    rows = _finals_rows()
    # 2016-12-31 (MJD 57753) ends in a leap second: DUT1 jumps by +1 s at 2017-01-01 00:00.
    noon = (57753.5 - 40587.0) * 86400.0
    expected = 0.5 * (rows[57753.0] + rows[57754.0] - 1.0)  # interpolate UT1 - TAI, then add 36 s back
    assert float(finals_table.dut1_seconds(noon)) == pytest.approx(expected, abs=DUT1_TOL_SECONDS)
    assert abs(float(finals_table.dut1_seconds(noon))) < 0.9


@pytest.mark.slow
def test_finals_dut1_matches_astropy_iers_a():
    from astropy.time import Time
    from astropy.utils import iers

    with open(IERS_DATA / "finals2000A.all") as fileobj:
        ours = parse_iers_finals(fileobj)
    ref = iers.IERS_A.open(str(IERS_DATA / "finals2000A.all"))
    unix = np.array([_unix(1990, 3, 4, 5), _unix(2010, 7, 1, 12), _unix(2026, 12, 14, 21, 3, 7)])
    expected = ref.ut1_utc(Time(unix, format="unix")).to_value("s")
    # astropy 8.0.2 IERS_A, same file: it also prefers Bulletin B and interpolates linearly.
    np.testing.assert_allclose(ours.dut1_seconds(unix), expected, atol=1e-6)


# --- datetime, ISO and JD conversions -----------------------------------------------------------


def test_naive_datetime_is_refused_with_the_fix():
    with pytest.raises(NaiveDatetimeError, match="tzinfo=datetime.timezone.utc"):
        instants_from_datetime(dt.datetime(2026, 12, 14, 21, 3, 7))
    with pytest.raises(NaiveDatetimeError):
        unix_from_datetime(dt.datetime(2026, 12, 14))


def test_datetime_round_trip_and_zones():
    from zoneinfo import ZoneInfo

    local = dt.datetime(2026, 12, 14, 21, 3, 7, 250000, tzinfo=ZoneInfo("Europe/London"))
    unix = unix_from_datetime(local)
    assert unix == local.timestamp()
    assert datetime_from_unix(unix) == local
    inst = instants_from_datetime([local, local + dt.timedelta(hours=1)])
    assert inst.shape == (2,)
    assert inst.unix_seconds[1] - inst.unix_seconds[0] == 3600.0


def test_parse_and_format_iso():
    when = parse_iso_datetime("2026-12-14T21:03:07Z")
    assert when == dt.datetime(2026, 12, 14, 21, 3, 7, tzinfo=UTC)
    assert parse_iso_datetime("2026-12-14T22:03:07+01:00") == when
    assert format_iso_utc(when) == "2026-12-14T21:03:07Z"
    assert format_iso_utc(unix_from_datetime(when) + 0.9999) == "2026-12-14T21:03:07Z"
    with pytest.raises(ValueError, match="add 'Z' for UTC"):
        parse_iso_datetime("2026-12-14T21:03:07")
    with pytest.raises(ValueError, match="ISO 8601"):
        parse_iso_datetime("14/12/2026 21:03")


def test_instants_from_jd_keeps_given_parts_and_inverts():
    # t_erfa_c.c style split (2400000.5, MJD); the TT parts given are kept (renormalised) exactly.
    inst = instants_from_jd(2400000.5, 53736.0, scale="tt")
    assert (float(inst.tt_whole), float(inst.tt_frac)) == (2453736.5, 0.0)
    back = instants_from_unix(inst.unix_seconds)
    assert (
        abs(((back.tt_whole - inst.tt_whole) + (back.tt_frac - inst.tt_frac)) * 86400.0) <= CHAIN_TOL_SECONDS
    )
    ut1 = instants_from_jd(2461388.5, 0.25, scale="ut1", dut1_seconds=0.2)
    assert float(ut1.unix_seconds) == pytest.approx(_unix(2026, 12, 14, 6) - 0.2, abs=CHAIN_TOL_SECONDS)
    with pytest.raises(ValueError, match="scale must be"):
        instants_from_jd(2461388.5, 0.25, scale="tdb")


def test_instants_shapes_and_slicing():
    scalar = instants_from_unix(1797282187.0)
    assert scalar.shape == ()
    grid = instants_from_unix(np.full((3, 4), 1797282187.0), dut1_seconds=np.array([0.1, 0.2, 0.3, 0.4]))
    assert grid.shape == (3, 4)
    assert isinstance(grid[1], Instants) and grid[1].shape == (4,)
    assert grid[1, 2].dut1_seconds == pytest.approx(0.3)
    assert len(grid) == 3
    assert np.all((grid.utc_frac >= 0) & (grid.utc_frac < 1))
    assert np.all(np.fmod(grid.utc_whole, 1.0) == 0.5)
    assert math.isclose(float(scalar.jd_utc), 2440587.5 + 1797282187.0 / 86400.0, abs_tol=1e-8)
