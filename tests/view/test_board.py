"""The sky board, rendered through rich's recording console and read back as text."""

from __future__ import annotations

import io
import math
import re
from dataclasses import replace
from datetime import UTC, date, datetime, timedelta
from types import SimpleNamespace

import numpy as np
import pytest
from rich.console import Console, Group

from siderod.common.model import (
    ChannelHealth,
    ClockHealth,
    Config,
    Delivery,
    Event,
    EventKind,
    Frame,
    Mount,
    MountKind,
    PlannedAlert,
    ServiceSnapshot,
    Site,
    Target,
    Urgency,
)
from siderod.view.board import (
    DEMO_INSTANT_UTC,
    DIGIT_PIXELS,
    BoardInputs,
    compose_board,
    format_countdown,
    format_sidereal,
    render_board,
    render_clock,
    sidereal_hours_at,
)
from siderod.view.columns import choose_columns
from siderod.view.theme import STYLES, build_theme, make_console

NOW_UTC = datetime(2026, 12, 14, 22, 30, tzinfo=UTC)
SITE = Site("Corrie Hill Observatory", 56.208333, -3.6875, 212.0, "Europe/London")
GEM = Mount(MountKind.GERMAN_EQUATORIAL, flip_after_minutes=10.0, limit_after_minutes=25.0)

#: The board truncates the LST it shows to 0.1 s of time; a reading is that much below the truth at most.
DISPLAY_TRUNCATION_SECONDS = 0.1
#: Carrying the clock forward at the mean sidereal rate for seconds: far below a microsecond of error.
EXTRAPOLATION_TOLERANCE_SECONDS = 1e-6
#: pyerfa gst06a (IAU 2006/2000A) against siderod's GAST: the astro layer promises 0.1 ms of time;
#: that plus the display truncation above.
ERFA_LST_TOLERANCE_SECONDS = DISPLAY_TRUNCATION_SECONDS + 1e-4


@pytest.fixture(autouse=True)
def _plain_terminal_environment(monkeypatch):
    """rich reads these; a developer's own terminal settings must not change what is recorded."""
    for name in ("NO_COLOR", "FORCE_COLOR", "COLUMNS", "LINES"):
        monkeypatch.delenv(name, raising=False)


def record(renderable, width: int = 80, height: int = 24) -> str:
    console = Console(file=io.StringIO(), width=width, height=height, color_system=None, record=True,
                      theme=build_theme())
    console.print(renderable)
    return console.export_text()


def fake_sky(names, *, ha, alt, rising, sun_sep=None, sun_alt=-40.0, last_hours=3.5, lmst_hours=3.49972):
    n = len(names)
    alt_array = np.array(alt, float)
    return SimpleNamespace(
        names=tuple(names), ha_hours=np.array(ha, float), dec_deg=np.linspace(-20, 60, n),
        alt_deg=np.array(alt, float), az_deg=np.linspace(10, 350, n),
        airmass=np.where(alt_array > 0, 1 / np.sin(np.radians(np.maximum(alt_array, 1))), np.nan),
        rising=np.array(rising, bool), frames=("icrs",) * n, min_alt_deg=np.full(n, 10.0),
        sun_separation_deg=np.array(sun_sep if sun_sep is not None else [90.0] * n, float),
        lmst_hours=lmst_hours, last_hours=last_hours, sun_alt_deg=sun_alt, sun_az_deg=0.0, moon_alt_deg=20.0,
        moon_az_deg=90.0, moon_illuminated_fraction=0.25, twilight="night",
    )


def small_inputs(**changes) -> BoardInputs:
    names = ["M42", "M45", "Rosette", "M31", "Polaris"]
    targets = tuple(Target(n, Frame.ICRS, 0.0, 0.0, 0.0, 0.0) for n in names)
    config = Config("demo.toml", SITE, targets, mount=GEM)
    sky = fake_sky(names, ha=[-1.5, 0.25, -2.8, 3.0, 5.0], alt=[25, 57, 22, 50, 56],
                   rising=[True, False, True, False, False])
    after = NOW_UTC.__add__
    events = tuple(sorted([
        Event(after(timedelta(minutes=90, seconds=7)), EventKind.CULMINATION, "M42", 28.0, 180.0,
              usable=True),
        Event(after(timedelta(minutes=100)), EventKind.FLIP_DUE, "M42", 28.0, 182.0, mark_hours=1 / 6),
        Event(after(timedelta(minutes=115)), EventKind.TRACKING_LIMIT, "M42", 28.0, 184.0, mark_hours=5 / 12),
        Event(after(timedelta(minutes=10)), EventKind.TRACKING_LIMIT, "M45", 56.0, 186.0, mark_hours=5 / 12),
        Event(NOW_UTC + timedelta(minutes=30, seconds=1), EventKind.ALTITUDE_UP, "Rosette", 30.0, 130.0,
              threshold_deg=30.0),
        Event(NOW_UTC + timedelta(hours=6), EventKind.ASTRONOMICAL_DAWN, None, -18.0, 120.0),
    ], key=lambda e: e.time_utc))
    inputs = BoardInputs(NOW_UTC, config, sky, NOW_UTC, events)
    return replace(inputs, **changes)


def snapshot(**changes) -> ServiceSnapshot:
    base = ServiceSnapshot(
        taken_utc=NOW_UTC, started_utc=NOW_UTC - timedelta(hours=2), config_path="demo.toml", site=SITE,
        dut1_seconds=-0.092, dut1_source="config", clock_health=ClockHealth("synchronised", 0.001, 0.05),
        channels=(ChannelHealth("desktop", True), ChannelHealth("log", True)),
    )
    return replace(base, **changes)


def table_rows(text: str) -> list[str]:
    lines = text.splitlines()
    start = next(i for i, line in enumerate(lines) if line.startswith("target "))
    rows = []
    for line in lines[start + 1:]:
        if line.startswith(("would alert", "next alerts", "last sent", "  ...")):
            break
        rows.append(line)
    return rows


# -- layout ----------------------------------------------------------------------------------------


def test_frame_fits_80_by_24_with_many_targets():
    names = [f"Target {i:03d}" for i in range(60)]
    inputs = small_inputs(sky=fake_sky(names, ha=np.linspace(-11, 11, 60), alt=np.linspace(-30, 80, 60),
                                       rising=[i % 2 == 0 for i in range(60)]))
    text = record(render_board(inputs, 80, 24))
    lines = text.splitlines()
    assert len(lines) == 24
    assert max(len(line) for line in lines) <= 80
    assert re.search(r"\.\.\. \d+ more targets", text)
    assert len(table_rows(text)) >= 3


@pytest.mark.parametrize("width", [40, 50, 60, 72, 80, 100, 140])
def test_no_line_is_wider_than_the_terminal(width):
    text = record(render_board(small_inputs(snapshot=snapshot()), width, 30), width=width, height=30)
    assert max(len(line) for line in text.splitlines()) <= width


def test_columns_drop_in_order_as_the_terminal_narrows():
    at = {w: [c.key for c in choose_columns(w, german_equatorial=True)[0]] for w in (120, 80, 60, 40)}
    assert "dec" in at[120] and "dec" not in at[80]
    for width in (80, 60, 40):
        assert {"name", "alt", "flip", "next"} <= set(at[width])  # never dropped
    assert at[40] == ["name", "alt", "flip", "next"]
    plain = [c.key for c in choose_columns(80, german_equatorial=False)[0]]
    assert "flip" not in plain and "limit" not in plain and "dec" in plain


def test_big_digits_spell_the_apparent_lst_shown_beside_them():
    inputs = small_inputs()
    text = record(render_board(inputs, 80, 24))
    shown = re.search(r"apparent (\d\d)h(\d\d)m(\d\d)\.\d", text)
    assert shown
    assert decode_big_digits(text.splitlines()[1:4]) == ":".join(shown.groups())


def decode_big_digits(rows: list[str]) -> str:
    """Read the block digits back: two cells per pixel, a half block per pair of pixel rows."""
    halves = {"█": ("#", "#"), "▀": ("#", "."), "▄": (".", "#"), " ": (".", ".")}
    out, pos = [], 0
    for kind in "dd:dd:dd":
        cells = 6 if kind == "d" else 2
        pixel_rows = ["", "", "", "", "", ""]
        for r, row in enumerate(rows):
            for ch in row[pos:pos + cells:2]:
                top, bottom = halves[ch]
                pixel_rows[2 * r] += top
                pixel_rows[2 * r + 1] += bottom
        glyph = tuple(pixel_rows[:5])
        found = [k for k, v in DIGIT_PIXELS.items() if v == glyph]
        assert found, f"no glyph matches {glyph}"
        out.append(found[0])
        pos += cells + 1
    return "".join(out)


# -- the clock -------------------------------------------------------------------------------------


def test_clock_is_carried_forward_at_the_sidereal_rate():
    inputs = small_inputs()
    later = NOW_UTC + timedelta(seconds=10)
    last0, lmst0 = sidereal_hours_at(inputs, NOW_UTC)
    last1, lmst1 = sidereal_hours_at(inputs, later)
    # 10 s of UT1 is 10.0273791 s of sidereal time (24 h sidereal = 23h56m4.0905s: common practice).
    assert (last1 - last0) * 3600 == pytest.approx(10.0273791, abs=EXTRAPOLATION_TOLERANCE_SECONDS)
    assert (lmst1 - lmst0) * 3600 == pytest.approx(10.0273791, abs=EXTRAPOLATION_TOLERANCE_SECONDS)


def test_clock_lines_show_utc_site_time_and_julian_date():
    text = record(Group(*render_clock(small_inputs(), 80)))
    assert "UTC  2026-12-14 22:30:00" in text
    assert "site 22:30:00 GMT" in text
    # JD of 2026-12-14 22:30 UTC: 2440587.5 + unix/86400 (the POSIX epoch is JD 2440587.5, by definition).
    assert "JD 2461389.43750" in text


def test_sidereal_text_is_truncated_not_rounded():
    assert format_sidereal(23.9999999) == "23h59m59.9s"
    assert format_sidereal(24.0) == "00h00m00.0s"
    assert format_countdown(3599.2) == "1h00m"


# -- the table -------------------------------------------------------------------------------------


def test_due_flip_comes_first_and_says_due():
    text = record(render_board(small_inputs(), 100, 30), width=100, height=30)
    rows = table_rows(text)
    assert rows[0].startswith("M45")
    assert "DUE" in rows[0]


def test_rows_follow_the_next_event_and_show_its_countdown():
    text = record(render_board(small_inputs(), 100, 30), width=100, height=30)
    names = [row.split()[0] for row in table_rows(text)]
    assert names[:3] == ["M45", "Rosette", "M42"]
    rosette = next(r for r in table_rows(text) if r.startswith("Rosette"))
    assert "alt ↑30°" in rosette and "30m01s" in rosette
    m42 = next(r for r in table_rows(text) if r.startswith("M42"))
    assert "1h30m" in m42 and "1h40m" in m42 and "1h55m" in m42  # culmination, flip, limit


def test_muted_target_sorts_last_and_says_so():
    inputs = small_inputs(snapshot=snapshot(muted={"Rosette": None}))
    rows = table_rows(record(render_board(inputs, 100, 30), width=100, height=30))
    assert rows[-1].startswith("Rosette") and rows[-1].rstrip().endswith("yes")


# -- alerts, deliveries, warnings ------------------------------------------------------------------


def test_alerts_and_late_and_failed_deliveries():
    event = Event(NOW_UTC + timedelta(minutes=100), EventKind.FLIP_DUE, "M42", 28.0, 182.0)
    alert = PlannedAlert("M42|flip-due|x|10", event, 10.0, NOW_UTC + timedelta(minutes=90), Urgency.CRITICAL,
                         "M42: meridian flip due in 10 min", "")
    deliveries = (
        Delivery("a", "desktop", NOW_UTC - timedelta(minutes=5), 95.0, True, title="M31 culminates in 5 min"),
        Delivery("b", "command", NOW_UTC - timedelta(minutes=1), 0.0, False, error="exit 2", title="Vega"),
    )
    inputs = small_inputs(snapshot=snapshot(next_alerts=(alert,), recent_deliveries=deliveries))
    text = record(render_board(inputs, 100, 40), width=100, height=40)
    # 00:00 is tomorrow at the site (22:30 GMT now): the day is named (it read as today's 00:00).
    assert re.search(r"next alerts Tue 00:00 in 1h30m\s+! M42: meridian flip due in 10 min", text)
    assert "FAILED exit 2" in text
    assert "late 1m35s" in text
    assert "from the service" in text


def test_every_warning_is_spelled_out():
    inputs = small_inputs(
        sky=replace_sky(sun_sep=[12.0, 90, 90, 90, 90], sun_alt=5.0),
        snapshot=snapshot(
            clock_health=ClockHealth("unsynchronised", None, 0.8),
            channels=(ChannelHealth("desktop", False, "no notification server"),
                      ChannelHealth("push:phone", False,
                                    "ntfys://t...n@push.example.org/scope did not answer")),
            config_error="targets.toml:4: target[1].ra: expected an angle",
        ),
        leap_known_good_until=date(2026, 6, 28),
        notices=("the service stopped answering",),
    )
    text = record(render_board(inputs, 140, 40), width=140, height=40)
    assert "never point unfiltered optics at or near the Sun" in text and "M42 within 20°" in text
    assert "system clock is not synchronised (the kernel allows an error of up to 800.0 ms)" in text
    assert "leap-second table known good only to 2026-06-28" in text
    assert "desktop notifications failing: no notification server" in text
    assert "push destination phone failing: ntfys://t...n@push.example.org/scope did not answer" in text
    assert "reload failed, last good configuration kept: targets.toml:4" in text
    assert "the service stopped answering" in text


def test_a_synchronised_clock_worse_than_the_configured_tolerance_is_a_warning():
    health = ClockHealth("synchronised", estimated_error_seconds=0.4, max_error_seconds=0.9)
    lenient = small_inputs(snapshot=snapshot(clock_health=health))
    assert "clock error" not in record(render_board(lenient, 140, 40), width=140, height=40)
    config = lenient.config
    strict_config = replace(config, time=replace(config.time, clock_tolerance_seconds=0.1))
    strict = small_inputs(config=strict_config, snapshot=snapshot(clock_health=health))
    text = record(render_board(strict, 140, 40), width=140, height=40)
    assert "the kernel estimates the clock error at 400.0 ms, more than the 100.0 ms LST needs" in text


def replace_sky(**changes):
    base = small_inputs().sky
    names = base.names
    return fake_sky(names, ha=base.ha_hours, alt=base.alt_deg, rising=base.rising, **changes)


def test_without_a_service_the_board_says_it_is_computed_here():
    text = record(render_board(small_inputs(), 80, 24))
    assert "computed here, no service" in text.splitlines()[0]
    assert "would alert" in text


# -- colour ----------------------------------------------------------------------------------------


def test_no_color_keeps_every_state_in_words_and_sends_no_colour_codes():
    buffer = io.StringIO()
    console = make_console({"NO_COLOR": "1"}, file=buffer, width=100, height=30, force_terminal=True,
                           color_system="truecolor")
    console.print(render_board(small_inputs(), 100, 30))
    out = buffer.getvalue()
    params = [int(p) for seq in re.findall(r"\x1b\[([0-9;]*)m", out) for p in seq.split(";") if p]
    colours = [p for p in params if 30 <= p <= 49 or 90 <= p <= 107]
    assert colours == [], "NO_COLOR must drop every foreground/background colour"
    assert "DUE" in out and "↓" in out


def test_with_colour_the_named_styles_are_used():
    buffer = io.StringIO()
    console = make_console({}, file=buffer, width=100, height=30, force_terminal=True,
                           color_system="truecolor")
    console.print(render_board(small_inputs(), 100, 30))
    assert "\x1b[1;38;2;242;184;75m" in buffer.getvalue()  # siderod.lst: bold #f2b84b
    assert STYLES["siderod.lst"] == "bold #f2b84b"


# -- against the event engine and ERFA (real positions and agenda) ---------------------------------


@pytest.fixture(scope="module")
def demo_frame():
    from siderod.files.config import load_config
    from siderod.plan.agenda import compute_agenda
    from siderod.view.board import inputs_from_config

    config = load_config(None, env={}, at_unix=DEMO_INSTANT_UTC.timestamp())
    agenda = compute_agenda(config, DEMO_INSTANT_UTC)
    inputs = inputs_from_config(config, DEMO_INSTANT_UTC, agenda=agenda)
    text = record(render_board(inputs, 140, None), width=140, height=200)
    return SimpleNamespace(config=config, agenda=agenda, inputs=inputs, text=text)


def column_cell(header: str, row: str, label: str, width: int, *, left: bool = False) -> str:
    """The text of one cell, found from where its heading sits (left- or right-aligned)."""
    start = header.index(label)
    end = start + width if left else start + len(label)
    return row[end - width:end].strip()


@pytest.mark.slow
def test_demo_countdowns_match_the_agenda(demo_frame):
    """Each row's culmination, flip, limit and next-event countdowns against compute_agenda's events."""
    header = next(line for line in demo_frame.text.splitlines() if line.startswith("target "))
    rows = {row[:20].rstrip(): row for row in table_rows(demo_frame.text)}
    assert len(rows) == len(demo_frame.config.targets)
    now = DEMO_INSTANT_UTC
    checked = 0
    for name, row in rows.items():
        ahead = [e for e in demo_frame.agenda.events if e.target == name and e.time_utc >= now]
        next_cell = column_cell(header, row, "next event", 17, left=True)
        if not ahead:
            assert next_cell == ""
            continue
        wanted = format_countdown((ahead[0].time_utc - now).total_seconds())
        assert next_cell.endswith(" " + wanted), (name, row)
        checked += 1
        for kind, label, width in ((EventKind.CULMINATION, "culm in", 7), (EventKind.FLIP_DUE, "flip in", 7),
                                   (EventKind.TRACKING_LIMIT, "limit in", 8)):
            of_kind = [e for e in ahead if e.kind is kind]
            shown = column_cell(header, row, label, width)
            if of_kind and shown not in ("DUE", "PAST"):
                wanted = format_countdown((of_kind[0].time_utc - now).total_seconds())
                assert shown == wanted, (name, kind, row)
                checked += 1
            elif not of_kind:
                assert shown == "", (name, kind, row)
    assert checked >= 2 * len(rows)


@pytest.mark.slow
def test_fixed_pointings_are_neither_rising_nor_setting(demo_frame):
    header = next(line for line in demo_frame.text.splitlines() if line.startswith("target "))
    rows = {row[:20].rstrip(): row for row in table_rows(demo_frame.text)}
    drift = next(row for name, row in rows.items() if name.startswith("Drift scan"))
    m42 = rows["M42"]
    trend_at = header.index("X") + 2  # the arrow column follows the airmass column
    assert m42[trend_at:trend_at + 2].strip() in {"↑", "↓"}
    assert drift[trend_at:trend_at + 2].strip() == ""


@pytest.mark.slow
def test_demo_rows_are_ordered_by_what_needs_attention_next(demo_frame):
    names = [row[:20].rstrip() for row in table_rows(demo_frame.text)]
    now = DEMO_INSTANT_UTC

    def next_seconds(name):
        ahead = [e for e in demo_frame.agenda.events if e.target == name and e.time_utc >= now]
        return (ahead[0].time_utc - now).total_seconds() if ahead else math.inf

    rows = dict(zip(names, table_rows(demo_frame.text), strict=True))
    urgent = [n for n in names if re.search(r"\b(DUE|PAST)\b", rows[n])]
    rest = [n for n in names if n not in urgent]
    assert names[: len(urgent)] == urgent
    assert [next_seconds(n) for n in rest] == sorted(next_seconds(n) for n in rest)


@pytest.mark.slow
def test_demo_lst_matches_erfa_gst06a(demo_frame):
    """Apparent LST shown vs pyerfa gst06a (IAU 2006/2000A GAST) + site longitude, at the demo instant."""
    import erfa  # reference: pyerfa, from the test extra
    shown = re.search(r"apparent (\d\d)h(\d\d)m(\d\d\.\d)s", demo_frame.text)
    shown_seconds = int(shown[1]) * 3600 + int(shown[2]) * 60 + float(shown[3])
    t = DEMO_INSTANT_UTC
    utc1, utc2 = erfa.dtf2d("UTC", t.year, t.month, t.day, t.hour, t.minute, t.second)
    tai1, tai2 = erfa.utctai(utc1, utc2)
    tt1, tt2 = erfa.taitt(tai1, tai2)
    ut11, ut12 = erfa.utcut1(utc1, utc2, demo_frame.config.time.dut1_seconds)
    gast_rad = erfa.gst06a(ut11, ut12, tt1, tt2)
    last_hours = (math.degrees(gast_rad) + demo_frame.config.site.longitude_deg) / 15.0 % 24.0
    difference = shown_seconds - last_hours * 3600.0
    difference = (difference + 43200.0) % 86400.0 - 43200.0
    assert -ERFA_LST_TOLERANCE_SECONDS <= difference <= 1e-4, difference


def test_board_parts_keep_their_heights():
    frame = compose_board(small_inputs(), 80, 24)
    assert len(frame.header) == 1 and len(frame.clock) == 4
    assert len(frame.lines()) <= 24


@pytest.mark.slow
def test_demo_picture_command_writes_an_svg(tmp_path):
    from siderod.view.board import _main

    out = tmp_path / "demo-view.svg"
    assert _main(["--svg", str(out), "--width", "100", "--height", "32"]) == 0
    svg = out.read_text(encoding="utf-8")
    assert svg.startswith("<svg") and "Corrie" in svg and "late" in svg


def test_an_alert_repeating_until_acknowledged_says_which_key_stops_it():
    inputs = small_inputs(snapshot=snapshot(awaiting_ack=("M42|flip-due|2026-12-14T22:03:08Z",)))
    text = record(render_board(inputs, 100, 30), width=100, height=30)
    assert "REPEATING M42 flip-due  press A to acknowledge" in text
    assert "REPEATING" not in record(render_board(small_inputs(snapshot=snapshot()), 100, 30), width=100,
                                     height=30)


@pytest.mark.slow
def test_the_readme_picture_has_our_own_frame_and_fetches_nothing(tmp_path):
    # The terminal library's default frame drew window buttons in one desktop system's colours
    # and fetched a font from the network whenever the picture was viewed.
    import re
    from pathlib import Path

    from siderod.view.board import _main

    out = tmp_path / "demo-view.svg"
    assert _main(["--svg", str(out)]) == 0
    svg = out.read_text(encoding="utf-8")
    assert "@font-face" not in svg and "url(" not in svg.replace("url(#", "")
    assert re.findall(r"https?://[^\"' )]+", svg) == ["http://www.w3.org/2000/svg"]
    assert "<circle" not in svg  # no window buttons
    assert "siderod watch" in svg and "Corrie Hill Observatory" in svg
    # The committed picture was made by the same command (python -m siderod.view.board --svg
    # config/demo-view.svg); its frame, not its board content, is what is checked here, so a
    # change to the board does not fail this test before the picture is regenerated.
    committed = (Path(__file__).resolve().parents[2] / "config" / "demo-view.svg").read_text(encoding="utf-8")
    assert 'class="siderod-board"' in committed
    assert "@font-face" not in committed and "<circle" not in committed


@pytest.mark.slow
def test_culmination_and_flip_countdowns_are_shown_beyond_a_short_window():
    # With window_hours = 2 the next culmination of most targets lies beyond the agenda, and the
    # "culm in" and "flip in" cells were blank.
    from dataclasses import replace

    from siderod.files.config import load_config
    from siderod.plan.agenda import compute_agenda
    from siderod.view.board import inputs_from_config

    config = load_config(None, env={}, at_unix=DEMO_INSTANT_UTC.timestamp())
    config = replace(config, events=replace(config.events, window_hours=2.0))
    agenda = compute_agenda(config, DEMO_INSTANT_UTC, 2.0)
    text = record(render_board(inputs_from_config(config, DEMO_INSTANT_UTC, agenda=agenda), 140, None),
                  width=140, height=200)
    header = next(line for line in text.splitlines() if "culm in" in line)
    vega = next(line for line in text.splitlines() if line.startswith("Vega"))
    # Vega is at HA +9h11m: its culmination is 14h45m away (24 h - 9h11m of sidereal time, by hand).
    assert column_cell(header, vega, "culm in", 7).strip() == "14h45m"
    assert column_cell(header, vega, "flip in", 7).strip() == "14h55m"
