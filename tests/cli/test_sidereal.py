"""`siderod sidereal reach` and `span` against ERFA's sidereal time (pyerfa, test-only)."""

import json
import math
from datetime import datetime

import erfa
import pytest

from siderod.cli.main import main
from siderod.cli.sidereal import REACH_JSON_FIELDS, SPAN_JSON_FIELDS

DEMO_FROM = "2026-12-14T12:00:00Z"  # the demo night (RULES.md)
DEMO_LONGITUDE_DEG = -(3.0 + 41 / 60 + 15 / 3600)  # Corrie Hill Observatory (invented)
#: The JSON gives times to the millisecond; sidereal time moves 1.0027 ms per ms, so at most half of
#: that separates the printed instant from the exact one.
PRINTED_TIME_LST_HOURS = 0.51e-3 * 1.0027379 / 3600.0
#: 24 h of sidereal time in mean solar seconds: 23 h 56 m 4.0905 s (common practice).
SIDEREAL_DAY_SOLAR_SECONDS = 86164.0905
#: span rounds to 1 microsecond in JSON; ERFA's GMST rate over a day differs from the constant ratio
#: (1.00273790935) by its secular terms, about 1e-9 relative, i.e. under 0.1 ms a day.
SPAN_VS_ERFA_SECONDS = 1e-4


@pytest.fixture(autouse=True)
def _demo_config(monkeypatch, tmp_path):
    monkeypatch.delenv("SIDEROD_CONFIG", raising=False)
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path / "config"))


def _erfa_lst_hours(time_utc: str, dut1: float, longitude_deg: float, apparent: bool) -> float:
    """ERFA: UTC -> UT1 (utcut1, the same DUT1) and TT (utctai, taitt); gst06a or gmst06 + longitude."""
    when = datetime.fromisoformat(time_utc.replace("Z", "+00:00"))
    u1, u2 = erfa.dtf2d("UTC", when.year, when.month, when.day, when.hour, when.minute,
                        when.second + when.microsecond / 1e6)
    ut1 = erfa.utcut1(u1, u2, dut1)
    tt = erfa.taitt(*erfa.utctai(u1, u2))
    angle = erfa.gst06a(*ut1, *tt) if apparent else erfa.gmst06(*ut1, *tt)
    return math.degrees(angle + math.radians(longitude_deg)) / 15.0 % 24.0


@pytest.mark.parametrize("apparent", [True, False])
def test_reach_instants_have_that_sidereal_time_by_erfa(capsys, apparent):
    # Reference: erfa.gst06a (apparent) / erfa.gmst06 (mean) at each printed instant.
    args = ["sidereal", "reach", "05h34m", "--from", DEMO_FROM, "--hours", "100", "--json"]
    assert main(args + ([] if apparent else ["--mean"])) == 0
    data = json.loads(capsys.readouterr().out)
    assert set(REACH_JSON_FIELDS) <= set(data)
    assert data["sidereal_time"] == ("apparent" if apparent else "mean")
    instants = data["instants"]
    # 100 h hold 100 / 23.934 = 4.18 sidereal days: four or five passes; here four (first at 00:14).
    assert len(instants) == 4
    target = 5.0 + 34.0 / 60.0
    for item in instants:
        lst = _erfa_lst_hours(item["time_utc"], data["dut1_seconds"], DEMO_LONGITUDE_DEG, apparent)
        assert abs((lst - target + 12.0) % 24.0 - 12.0) < PRINTED_TIME_LST_HOURS
        assert item["time_local"].endswith("+00:00")  # Europe/London in December
    # One sidereal day apart, each returning 3 min 56 s earlier by the clock (common practice).
    stamps = [datetime.fromisoformat(i["time_utc"].replace("Z", "+00:00")).timestamp() for i in instants]
    for a, b in zip(stamps, stamps[1:], strict=False):
        assert abs((b - a) - SIDEREAL_DAY_SOLAR_SECONDS) < 0.01


def test_reach_table_gives_utc_and_site_time_in_summer(capsys):
    assert main(["sidereal", "reach", "18:00", "--from", "2026-06-21T00:00:00Z"]) == 0
    out = capsys.readouterr().out
    assert "local apparent sidereal time 18h00m00.0s" in out
    assert "+01:00 (Europe/London)" in out  # British Summer Time


def test_span_matches_common_practice_and_erfa_gmst_rate(capsys):
    assert main(["sidereal", "span", "24h", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert set(SPAN_JSON_FIELDS) <= set(data)
    assert data["solar_seconds"] == pytest.approx(SIDEREAL_DAY_SOLAR_SECONDS, abs=1e-4)
    assert data["solar"] == "23h 56m 04.0905s"
    # Reference: erfa.gmst06 advances by the sidereal interval over the printed solar interval.
    assert main(["sidereal", "span", "5h30m", "--of", "solar", "--json"]) == 0
    back = json.loads(capsys.readouterr().out)
    start = erfa.dtf2d("UTC", 2026, 12, 14, 12, 0, 0.0)
    ut1_a = erfa.utcut1(*start, 0.0)
    ut1_b = (ut1_a[0], ut1_a[1] + back["solar_seconds"] / 86400.0)
    tt = (ut1_a[0], ut1_a[1] + 69.2 / 86400.0)  # TT - UT1 of the day; GMST's TT terms are tiny
    advance = (erfa.gmst06(*ut1_b, tt[0], tt[1] + back["solar_seconds"] / 86400.0)
               - erfa.gmst06(*ut1_a, *tt)) % (2 * math.pi)
    advance_seconds = math.degrees(advance) / 15.0 * 3600.0
    assert advance_seconds == pytest.approx(back["sidereal_seconds"], abs=SPAN_VS_ERFA_SECONDS)
    assert main(["sidereal", "span", "1:00:00"]) == 0
    assert capsys.readouterr().out.strip() == "01h 00m 00.0000s sidereal = 00h 59m 50.1704s mean solar"


def test_bad_input_names_the_argument(capsys):
    assert main(["sidereal", "reach", "5h61m", "--from", DEMO_FROM]) == 1
    assert "LST" in capsys.readouterr().err
    assert main(["sidereal", "reach", "5h", "--from", DEMO_FROM, "--hours", "0"]) == 1
    assert "--hours" in capsys.readouterr().err
    assert main(["sidereal", "span", "soon"]) == 1
    assert "INTERVAL" in capsys.readouterr().err
