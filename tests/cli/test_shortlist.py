"""`siderod shortlist`: the demo night ranked, filters and sorting, JSON fields, the chart at 80 columns."""

from __future__ import annotations

import json

import pytest

from siderod.cli.main import main
from siderod.cli.shortlist import DEFINITIONS, JSON_FIELDS, ROW_JSON_FIELDS
from siderod.view.nightchart import format_hour_ruler, format_night_row

AT = "2026-12-14T17:00:00Z"  # the demo evening, before dusk


def _json(capsys, *args):
    code = main(["shortlist", "--at", AT, "--json", *args])
    out, err = capsys.readouterr()
    assert code == 0, err
    return json.loads(out)


@pytest.mark.slow
def test_demo_targets_ranked_for_the_demo_night(capsys):
    data = _json(capsys)
    assert tuple(data) == JSON_FIELDS and data["source"] == "targets"
    assert set(data["definitions"]) == set(DEFINITIONS)
    night = data["night"]
    assert night["kind"] == "astronomical" and night["sun_limit_deg"] == -18.0
    assert night["start_utc"].startswith("2026-12-14T18:0") and night["end_utc"].startswith(
        "2026-12-15T06:"
    )
    rows = data["targets"]
    assert tuple(rows[0]) == ROW_JSON_FIELDS
    names = [r["name"] for r in rows]
    assert "Drift scan +41" not in names  # a fixed pointing has no place to rank
    hours = [round(r["usable_hours"], 1) for r in rows]
    assert hours == sorted(hours, reverse=True)
    m31 = next(r for r in rows if r["name"] == "M31")
    assert m31["catalogue_entry"] == "M 31" and m31["flip_utc"] is not None and m31["flip_while_usable"]
    never = next(r for r in rows if r["name"] == "Galactic centre")
    assert never["usable_hours"] == 0.0 and never["moon_separation_deg"] is None


@pytest.mark.slow  # a whole night for the demo targets, several times
def test_filters_and_sorting(capsys):
    high = _json(capsys, "--min-top", "60", "--sort", "top")
    tops = [r["top_altitude_deg"] for r in high["targets"]]
    assert tops and min(tops) >= 60 and tops == sorted(tops, reverse=True)
    no_flip = _json(capsys, "--no-flip")
    assert all(not r["flip_while_usable"] for r in no_flip["targets"])
    transit = _json(capsys, "--sort", "transit")
    times = [r["top_utc"] for r in transit["targets"]]
    assert times == sorted(times)
    away = _json(capsys, "--moon-away", "90")
    assert all(r["moon_separation_deg"] is None or r["moon_separation_deg"] >= 90 for r in away["targets"])


@pytest.mark.slow  # ranks the whole catalogue
def test_catalogue_slice(capsys):
    data = _json(capsys, "--catalogue", "--kind", "galaxy", "--brighter", "9", "--limit", "5")
    assert data["source"] == "catalogue" and data["count"] == 5
    assert all(
        r["kind"] == "galaxy" and r["magnitude"] <= 9 and r["usable_hours"] > 0 for r in data["targets"]
    )


@pytest.mark.slow
def test_table_and_chart_fit_80_columns_without_colour(capsys, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    code = main(["shortlist", "--at", AT, "--limit", "6"])
    out, _ = capsys.readouterr()
    assert code == 0
    lines = out.splitlines()
    assert all(len(line) <= 80 for line in lines)
    assert "\x1b[" not in out
    assert "Corrie Hill Observatory, night of 2026-12-14: dark 18:01" in lines[0]
    assert any("|" in line and "█" in line for line in lines)  # a flip and a bar near the zenith


def test_filters_need_catalogue(capsys):
    assert main(["shortlist", "--kind", "galaxy"]) == 2


def test_night_row_and_ruler():
    assert format_night_row([-1.0, 5.0, 45.0, 80.0], [10.0, 10.0, 10.0, 10.0], flip_column=3) == " ·▅|"
    ruler = format_hour_ruler(0.0, 6 * 3600.0, 24, "UTC")
    assert ruler.startswith("00") and "02" in ruler and len(ruler) == 24
