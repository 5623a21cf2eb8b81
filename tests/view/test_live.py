"""The live loop, driven by FakeClock: what is redrawn when, logging, and the input feed."""

from __future__ import annotations

import asyncio
import io
import logging
from datetime import UTC, datetime
from types import SimpleNamespace

import numpy as np
import pytest

from siderod.common.clock import FakeClock
from siderod.common.errors import ServiceNotRunning
from siderod.common.model import Config, Frame, Site, Target
from siderod.view.board import BoardInputs
from siderod.view.live import BoardFeed, log_to_console, run_live
from siderod.view.theme import make_console

START_UTC = datetime(2026, 12, 14, 22, 30, 0, 500000, tzinfo=UTC)
SITE = Site("Corrie Hill Observatory", 56.208333, -3.6875, 212.0, "Europe/London")
CONFIG = Config("demo.toml", SITE, (Target("M42", Frame.ICRS, 83.8, -5.4, 83.8, -5.4),))


@pytest.fixture(autouse=True)
def _plain_terminal_environment(monkeypatch):
    for name in ("NO_COLOR", "FORCE_COLOR", "COLUMNS", "LINES"):
        monkeypatch.delenv(name, raising=False)


def sky():
    return SimpleNamespace(
        names=("M42",), ha_hours=np.array([-1.0]), dec_deg=np.array([-5.4]), alt_deg=np.array([25.0]),
        az_deg=np.array([150.0]), airmass=np.array([2.3]), rising=np.array([True]), frames=("icrs",),
        min_alt_deg=np.array([10.0]), sun_separation_deg=np.array([120.0]), lmst_hours=3.5, last_hours=3.5,
        sun_alt_deg=-40.0, sun_az_deg=0.0, moon_alt_deg=10.0, moon_az_deg=90.0, moon_illuminated_fraction=0.3,
        twilight="night",
    )


def terminal_console(buffer):
    return make_console({}, file=buffer, width=80, height=24, force_terminal=True, color_system=None)


async def run_for(clock, seconds, get_inputs, console, hz):
    stop = asyncio.Event()

    async def stopper():
        await clock.sleep(seconds)
        stop.set()

    clock.start_autojump()
    try:
        await asyncio.gather(run_live(clock, get_inputs, console, hz, stop=stop, capture_logging=False),
                             stopper())
    finally:
        clock.stop_autojump()


async def test_body_is_rebuilt_once_a_second_and_the_clock_every_tick():
    clock = FakeClock(START_UTC)
    calls = []

    def get_inputs(now_utc):
        calls.append(now_utc)
        return BoardInputs(now_utc, CONFIG, sky(), now_utc)

    buffer = io.StringIO()
    await run_for(clock, 3.0, get_inputs, terminal_console(buffer), hz=10)
    frames = buffer.getvalue().count("apparent sidereal time")
    assert 29 <= frames <= 32  # ten a second for three seconds, plus the final one at stop
    assert 3 <= len(calls) <= 4  # the body: once per whole second
    assert all(c.microsecond < 1000 or c == START_UTC for c in calls)  # on the second


async def test_refresh_rate_is_checked():
    with pytest.raises(ValueError, match="at most 10 Hz"):
        await run_live(FakeClock(START_UTC), lambda now: None, terminal_console(io.StringIO()), 20)


def test_log_records_go_through_the_view_console_and_handlers_come_back():
    root = logging.getLogger()
    stream_handler = logging.StreamHandler(io.StringIO())
    root.addHandler(stream_handler)
    buffer = io.StringIO()
    try:
        with log_to_console(terminal_console(buffer)):
            assert stream_handler not in root.handlers
            logging.getLogger("siderod.test").warning("flip alert sent")
        assert stream_handler in root.handlers
    finally:
        root.removeHandler(stream_handler)
    assert "flip alert sent" in buffer.getvalue()
    assert stream_handler.stream.getvalue() == ""


class _FakeAgenda:
    events = ()


async def test_feed_says_when_the_service_stops_answering():
    def gone():
        raise ServiceNotRunning("nothing answers")

    feed = BoardFeed(lambda: CONFIG, get_snapshot=gone, get_agenda=_FakeAgenda, source="from the service")
    inputs = await feed.inputs_at(START_UTC)
    await feed.close()
    assert inputs.snapshot is None
    assert any("stopped answering" in n for n in inputs.notices)
    assert inputs.source == ""  # the title then says the board is computed here


async def test_one_key_actions_are_read_from_a_real_terminal():
    import os
    import termios

    from siderod.view.live import read_keys

    main_fd, terminal_fd = os.openpty()
    before = termios.tcgetattr(terminal_fd)
    pressed: list[str] = []

    async def acknowledge():
        pressed.append("ack")

    try:
        with read_keys(terminal_fd, {"a": acknowledge}):
            assert not termios.tcgetattr(terminal_fd)[3] & termios.ECHO  # cbreak: keys are not echoed
            os.write(main_fd, b"xA")  # an unbound key, then the ack key typed with shift
            for _ in range(400):  # real terminal I/O: bounded wait for the loop to read it
                if pressed:
                    break
                await asyncio.sleep(0.005)
        assert pressed == ["ack"]
        assert termios.tcgetattr(terminal_fd) == before  # the terminal is given back as it was
    finally:
        os.close(main_fd)
        os.close(terminal_fd)


async def test_keys_are_not_read_from_something_that_is_not_a_terminal(tmp_path):
    from siderod.view.live import read_keys

    with open(tmp_path / "not-a-tty", "w+") as f, read_keys(f.fileno(), {"a": lambda: None}):
        pass  # no termios call on a plain file, no reader added


def test_log_lines_keep_one_format_with_iso_dates_once_the_board_starts():
    # The board's handler switched to another style with a locale (month-first) date.
    import re

    root = logging.getLogger()
    old_level = root.level
    root.setLevel(logging.INFO)
    buffer = io.StringIO()
    try:
        with log_to_console(terminal_console(buffer)):
            logging.getLogger("siderod.test").warning("flip alert sent")
    finally:
        root.setLevel(old_level)
    line = next(x for x in buffer.getvalue().splitlines() if "flip alert sent" in x)
    iso = r"\d{4}-\d{2}-\d{2} \d{2}:\d{2}:\d{2},\d{3}"
    assert re.match(iso + r" WARNING siderod.test: flip alert sent", line), line
