"""`siderod agenda` end to end on the bundled demo configuration: table, --json, --ics, errors."""

import json

import icalendar
import pytest

from siderod.cli.main import main

DEMO_FROM = "2026-12-14T12:00:00Z"  # the demo night (RULES.md)


@pytest.fixture(autouse=True)
def _demo_config(monkeypatch, tmp_path):
    # No user configuration anywhere: the bundled demo is used.
    monkeypatch.delenv("SIDEROD_CONFIG", raising=False)
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path / "config"))


def test_json_has_the_documented_fields(capsys):
    assert main(["agenda", "--from", DEMO_FROM, "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert {"site", "start_utc", "end_utc", "events", "classification", "dark_intervals"} <= set(data)
    assert data["start_utc"] == DEMO_FROM
    kinds = {e["kind"] for e in data["events"]}
    assert {"culmination", "rise", "set", "flip-due", "sunset", "astronomical-dusk"} <= kinds
    for event in data["events"]:
        assert event["time_utc"].endswith("Z")
        assert {"target", "altitude_deg", "azimuth_deg", "hour_angle_hours"} <= set(event)
        if event["kind"] in ("sunset", "sunrise", "moonrise", "moonset"):
            assert event["target"] is None
    times = [e["time_utc"] for e in data["events"]]
    assert times == sorted(times)


def test_ics_parses_back_with_the_icalendar_library(tmp_path, capsys):
    # Reference: the general-purpose `icalendar` package (PyPI) reads our hand-written RFC 5545 text.
    path = tmp_path / "night.ics"
    assert main(["agenda", "--from", DEMO_FROM, "--hours", "12", "--ics", str(path), "--json"]) == 0
    events = json.loads(capsys.readouterr().out)["events"]
    calendar = icalendar.Calendar.from_ical(path.read_bytes())
    vevents = [c for c in calendar.walk() if c.name == "VEVENT"]
    assert len(vevents) == len(events)
    uids = {str(v["UID"]) for v in vevents}
    assert len(uids) == len(vevents)
    first = vevents[0]
    assert first.decoded("DTSTART").strftime("%Y-%m-%dT%H:%M:%SZ") == events[0]["time_utc"][:19] + "Z"
    assert "Corrie Hill Observatory" in str(first["LOCATION"])
    raw = path.read_bytes()
    assert b"\r\n" in raw and all(len(line) <= 75 for line in raw.split(b"\r\n"))


def test_ics_dash_writes_only_the_calendar_to_standard_output(capsysbinary):
    # Reference: the `icalendar` package reads it back; no table row is mixed into it.
    assert main(["agenda", "--from", DEMO_FROM, "--hours", "12", "--ics", "-"]) == 0
    out = capsysbinary.readouterr().out
    assert out.startswith(b"BEGIN:VCALENDAR\r\n") and out.endswith(b"END:VCALENDAR\r\n")
    calendar = icalendar.Calendar.from_ical(out)
    assert [c for c in calendar.walk() if c.name == "VEVENT"]


def test_ics_dash_with_json_is_a_usage_error(capsys):
    assert main(["agenda", "--from", DEMO_FROM, "--ics", "-", "--json"]) == 2
    assert "--ics -" in capsys.readouterr().err


def test_table_shows_local_time_across_the_dst_change(capsys):
    # Europe/London leaves BST at 2026-10-25 01:00 UTC: the table shows both BST and GMT times.
    assert main(["agenda", "--from", "2026-10-24T12:00:00Z", "--hours", "24", "--kind", "culmination"]) == 0
    out = capsys.readouterr().out
    assert "BST" in out and "GMT" in out and "culmination" in out


def test_filters_by_target_and_kind(capsys):
    assert main(["agenda", "--from", DEMO_FROM, "--json", "--target", "Vega", "--kind", "culmination",
                 "--kind", "sunset"]) == 0
    events = json.loads(capsys.readouterr().out)["events"]
    assert {(e["target"], e["kind"]) for e in events} == {("Vega", "culmination"), (None, "sunset")}


@pytest.mark.parametrize("argv, message", [
    (["--from", "2026-12-14 12:00"], "--from"),
    (["--kind", "transit"], "unknown kind 'transit'"),
    (["--hours", "-2"], "--hours"),
])
def test_a_bad_option_value_exits_2_with_a_message(argv, message, capsys):
    assert main(["agenda", *argv]) == 2  # a malformed command line (one rule, issue 13 item 15)
    assert message in capsys.readouterr().err


def test_unknown_target_exits_1_listing_the_configured_ones(capsys):
    assert main(["agenda", "--from", DEMO_FROM, "--target", "Nope"]) == 1
    assert "configured targets" in capsys.readouterr().err


@pytest.mark.slow
def test_streamed_json_events_equal_the_record_form(capsys):
    # The fast writer formats columns of numbers; the reference is event_to_json on each Event
    # record of the same agenda (Python's own rounding), value by value.
    from datetime import UTC, datetime

    from siderod.files.config import load_config
    from siderod.plan.agenda import compute_agenda, event_to_json

    assert main(["agenda", "--from", DEMO_FROM, "--hours", "30", "--json"]) == 0
    text = capsys.readouterr().out
    data = json.loads(text)
    start_utc = datetime(2026, 12, 14, 12, tzinfo=UTC)
    config = load_config(None, {}, at_unix=start_utc.timestamp())  # DUT1 for the night, as the verb does
    agenda = compute_agenda(config, start_utc, 30)
    expected = [event_to_json(e) for e in agenda.events]
    assert len(data["events"]) == len(expected)
    for got, want in zip(data["events"], expected, strict=True):
        assert got.keys() == want.keys()
        for key, value in want.items():
            if isinstance(value, float):
                assert got[key] == pytest.approx(value, abs=ROUNDING_TIE), key
            else:
                assert got[key] == value, key
    assert data["classification"] == agenda.classification
    assert data["sky_class"] == dict(agenda.sky_classes)
    dark = {n: [[a.strftime("%Y-%m-%dT%H:%M:%SZ"), b.strftime("%Y-%m-%dT%H:%M:%SZ")] for a, b in spans]
            for n, spans in agenda.dark_intervals.items()}
    assert data["dark_intervals"] == dark
    # The per-target objects are written as columns, text for text as json.dumps writes them.
    assert f'"classification": {json.dumps(dict(agenda.classification))},' in text
    assert f'"sky_class": {json.dumps(dict(agenda.sky_classes))},' in text
    assert f'"dark_intervals": {json.dumps(dark)}' in text


# The writer rounds the scaled value with np.rint; Python's round() can differ by one unit in the
# last place on exact binary ties, so values may differ by at most 1e-5 (the finest field, hours).
ROUNDING_TIE = 1.1e-5


@pytest.mark.parametrize("hours", ["100000", "240.5", "inf"])
def test_hours_beyond_the_window_cap_is_a_usage_error(hours, capsys):
    # issue 13 item 7: --hours 100000 ran for 511 s and took 4 GB. The cap is the one the
    # configuration puts on [events] window_hours; a malformed command line exits 2.
    assert main(["agenda", "--from", DEMO_FROM, "--hours", hours]) == 2
    err = capsys.readouterr().err
    assert "--hours" in err and "at most 240 hours" in err


def test_hours_cap_is_the_configuration_cap(tmp_path):
    from siderod.cli.agenda import MAX_HOURS
    from siderod.common.errors import ConfigErrors
    from siderod.files.config import parse_config

    assert MAX_HOURS == 240.0
    text = '[site]\nname = "x"\nlatitude = 10\nlongitude = 10\n[events]\nwindow_hours = {}\n'
    parse_config(text.format(MAX_HOURS), str(tmp_path / "c.toml"))
    with pytest.raises(ConfigErrors):
        parse_config(text.format(MAX_HOURS + 0.5), str(tmp_path / "c.toml"))


def _event_lines(text):
    return [line for line in text.splitlines() if line.startswith(" ") and line[1:4] in
            ("Mon", "Tue", "Wed", "Thu", "Fri", "Sat", "Sun")]


def test_table_on_a_terminal_shows_what_fits_and_says_how_many_more(capsys, monkeypatch):
    # issue 13 item 6: a table for a terminal shows what fits (the rest is one line away with a
    # pipe), instead of rendering every row of a big agenda.
    import os
    import shutil

    monkeypatch.setattr(shutil, "get_terminal_size", lambda *a, **k: os.terminal_size((100, 24)))
    monkeypatch.setattr("sys.stdout.isatty", lambda: True)
    assert main(["agenda", "--from", DEMO_FROM, "--hours", "48"]) == 0
    out = capsys.readouterr().out
    shown = _event_lines(out)
    assert 0 < len(shown) <= 24 and len(out.splitlines()) <= 24
    assert "more events" in out and "| less" in out


def test_piped_table_has_every_event(capsys):
    assert main(["agenda", "--from", DEMO_FROM, "--hours", "48", "--json"]) == 0
    events = json.loads(capsys.readouterr().out)["events"]
    assert main(["agenda", "--from", DEMO_FROM, "--hours", "48"]) == 0
    shown = _event_lines(capsys.readouterr().out)
    assert len(shown) == len(events)
    assert [line.split()[4] for line in shown] == [e["kind"] for e in events]  # after local time and UTC


def test_no_output_calls_a_window_state_circumpolar(capsys, demo_config_path):
    # A one-hour window: the window's state has words of its own; "circumpolar" and "never rises"
    # appear only in their trade meaning (latitude, declination, usable altitude).
    import json

    from siderod.cli.main import main

    args = ["agenda", "--config", str(demo_config_path), "--from", "2026-12-14T22:00:00Z", "--hours", "1"]
    assert main(args + ["--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert set(data["classification"].values()) <= {"normal", "up-whole-window", "down-whole-window"}
    assert data["sky_class"]["M45"] == "rises-and-sets"  # dips to -9.7 deg at 56 N
    assert data["sky_class"]["Capella"] == "circumpolar"
    assert main(args) == 0
    out = capsys.readouterr().out
    assert "Up the whole window:" in out
    circumpolar = [line for line in out.splitlines() if "ircumpolar" in line]
    assert circumpolar and all(line.startswith("Circumpolar here") for line in circumpolar)
    assert "M45" not in circumpolar[0]


def test_header_columns_line_up_with_the_rows_when_only_short_kinds_are_shown(capsys):
    # Found on the README's second example: with only short kinds (no 17-letter kind in the window)
    # the header's Target column started 6 characters left of the rows' target names.
    assert main(["agenda", "--from", DEMO_FROM, "--target", "Jupiter", "--kind", "culmination",
                 "--kind", "rise", "--kind", "set"]) == 0
    out = capsys.readouterr().out
    header = next(line for line in out.splitlines() if "Event" in line and "Target" in line)
    rows = _event_lines(out)
    assert rows
    for row in rows:
        assert row.index("Jupiter") == header.index("Target")
        assert row[:header.index("Target")].rstrip().split()[-1] in ("culmination", "rise", "set")
