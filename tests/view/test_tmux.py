"""`siderod watch` in a real terminal: a private tmux server, a fixed pane size, capture-pane.

These run real processes, so they poll the pane (every 50 ms, with deadlines) instead of using the
fake clock; they are marked slow. The LST shown is checked against pyerfa's gst06a.
"""

from __future__ import annotations

import math
import os
import re
import shutil
import sys
from datetime import UTC, datetime
from pathlib import Path

import erfa  # reference: pyerfa, from the test extra
import pytest
from helpers.tmux_pane import TmuxPane, tmux_env

pytestmark = [
    pytest.mark.slow,
    pytest.mark.needs_tmux,
    pytest.mark.skipif(shutil.which("tmux") is None, reason="tmux is not installed"),
]

REPO = Path(__file__).resolve().parents[2]
DEMO_CONFIG = REPO / "config" / "demo.toml"
PROMPT = "siderod-test$ "
AT_UTC = datetime(2026, 12, 14, 22, 30, 0, tzinfo=UTC)

#: --once --at: the instant is exact, so only the display truncation (0.1 s of time) and
#: siderod's GAST model error (0.1 ms promised against ERFA) separate the two.
ONCE_LST_TOLERANCE_SECONDS = 0.1 + 1e-4
#: Live: the UTC shown is truncated to the second, so the frame's instant lies up to 1 s after it,
#: which is 1.0027379 s of sidereal time; plus the 0.1 s LST truncation and model error.
LIVE_LST_EARLY_SECONDS = 0.1 + 1e-4
LIVE_LST_LATE_SECONDS = 1.0027379 + 1e-4
#: How long a frame may take to appear (Python start-up, numpy, the agenda of the demo targets).
FRAME_DEADLINE_SECONDS = 20.0


@pytest.fixture(autouse=True)
def _plain_terminal_environment(monkeypatch):
    for name in ("NO_COLOR", "FORCE_COLOR", "COLUMNS", "LINES"):
        monkeypatch.delenv(name, raising=False)


@pytest.fixture
def tmux(tmp_path):
    server = TmuxPane(tmux_env(tmp_path, PS1=PROMPT), deadline_seconds=FRAME_DEADLINE_SECONDS)
    try:
        yield server
    finally:
        server.kill()


def watch_command(*options: str) -> str:
    return f"{sys.executable} -m siderod watch --config {DEMO_CONFIG} " + " ".join(options)


def erfa_last_seconds(when_utc: datetime, dut1_seconds: float, lon_deg: float) -> float:
    """Local apparent sidereal time in seconds of time: pyerfa gst06a (IAU 2006/2000A) + longitude."""
    seconds = when_utc.second + when_utc.microsecond / 1e6
    utc1, utc2 = erfa.dtf2d("UTC", when_utc.year, when_utc.month, when_utc.day, when_utc.hour,
                            when_utc.minute, seconds)
    tt1, tt2 = erfa.taitt(*erfa.utctai(utc1, utc2))
    ut11, ut12 = erfa.utcut1(utc1, utc2, dut1_seconds)
    hours = (math.degrees(erfa.gst06a(ut11, ut12, tt1, tt2)) + lon_deg) / 15.0 % 24.0
    return hours * 3600.0


def shown_lst_and_utc(text: str) -> tuple[float, datetime]:
    lst = re.search(r"apparent (\d\d)h(\d\d)m(\d\d\.\d)s", text)
    utc = re.search(r"UTC\s+(\d{4}-\d\d-\d\d \d\d:\d\d:\d\d)", text)
    assert lst and utc, text
    seconds = int(lst[1]) * 3600 + int(lst[2]) * 60 + float(lst[3])
    return seconds, datetime.strptime(utc[1], "%Y-%m-%d %H:%M:%S").replace(tzinfo=UTC)


def wrapped_difference(a_seconds: float, b_seconds: float) -> float:
    return (a_seconds - b_seconds + 43200.0) % 86400.0 - 43200.0


def demo_config():
    from siderod.files.config import load_config

    return load_config(str(DEMO_CONFIG), env={}, at_unix=AT_UTC.timestamp())


def assert_table_fits(text: str, width: int) -> None:
    lines = text.splitlines()
    header = next(i for i, line in enumerate(lines) if line.startswith("target "))
    assert lines[header].rstrip().endswith(("mute", "next event")), lines[header]
    names = [t.name for t in demo_config().targets]
    for line in lines[header + 1:]:
        if line.startswith(("would alert", "next alerts", "  ...")) or not line.strip():
            break
        assert len(line) <= width
        assert any(line.startswith(name[: min(len(name), 8)]) for name in names), f"stray line: {line!r}"


def test_once_at_an_instant_shows_the_erfa_lst_and_fits_80_columns(tmux):
    tmux.start(80, 24, PROMPT)
    tmux.type(watch_command("--once", "--at", "2026-12-14T22:30:00Z"))
    text = tmux.wait_for(lambda t: "would alert" in t and t.rstrip().endswith(PROMPT.rstrip()))
    shown_seconds, shown_utc = shown_lst_and_utc(text)
    assert shown_utc == AT_UTC
    config = demo_config()
    reference = erfa_last_seconds(AT_UTC, config.time.dut1_seconds, config.site.longitude_deg)
    difference = wrapped_difference(shown_seconds, reference)
    assert -ONCE_LST_TOLERANCE_SECONDS <= difference <= 1e-4, difference
    assert "computed here" in text
    assert_table_fits(text, 80)


def test_live_ticks_survives_a_resize_and_ctrl_c_leaves_a_clean_prompt(tmux):
    tmux.start(80, 24, PROMPT)
    tmux.type(watch_command("--hz", "2"))
    first = tmux.wait_for(lambda t: "apparent sidereal time" in t and "target " in t)
    first_utc = shown_lst_and_utc(first)[1]
    text = tmux.wait_for(lambda t: "apparent sidereal time" in t and shown_lst_and_utc(t)[1] > first_utc,
                         deadline_seconds=5.0)
    text = tmux.steady_capture()
    shown_seconds, shown_utc = shown_lst_and_utc(text)
    config = demo_config()
    reference = erfa_last_seconds(shown_utc, config.time.dut1_seconds, config.site.longitude_deg)
    difference = wrapped_difference(shown_seconds, reference)
    assert -LIVE_LST_EARLY_SECONDS <= difference <= LIVE_LST_LATE_SECONDS, difference
    assert "computed here, no service" in text
    assert_table_fits(text, 80)
    assert text.count("siderod Corrie Hill") == 1  # the frame is redrawn in place

    tmux("resize-window", "-t", "ui", "-x", "60", "-y", "20")
    text = tmux.wait_for(lambda t: "apparent sidereal time" not in t and "target " in t and "mean " in t,
                         deadline_seconds=5.0)
    text = tmux.steady_capture()
    lines = text.splitlines()
    assert lines[0].startswith("siderod Corrie Hill"), text  # redrawn from the top, nothing left over
    assert text.count("siderod Corrie Hill") == 1 and text.count("target ") == 1, text
    assert_table_fits(text, 60)

    tmux("send-keys", "-t", "ui", "C-c")
    text = tmux.wait_for(lambda t: t.rstrip().endswith(PROMPT.rstrip()), deadline_seconds=5.0)
    assert "Traceback" not in text
    assert tmux.query("#{alternate_on}") == "0"
    assert tmux.query("#{cursor_flag}") == "1"  # the cursor is shown again
    tmux.type("echo clean-$((40+2))")
    text = tmux.wait_for(lambda t: "\nclean-42" in t, deadline_seconds=5.0)
    assert text.rstrip().endswith(PROMPT.rstrip())
    assert os.environ.get("NO_COLOR") is None
