"""Hot reload on a file change and on SIGHUP: an invalid file keeps the last good configuration,
with one alert and one log line."""

from __future__ import annotations

import asyncio
import logging
import os
import signal
import tomllib
from dataclasses import replace
from datetime import timedelta
from pathlib import Path

import pytest
from helpers import service_fakes as fakes

from siderod.common.clock import FakeClock
from siderod.common.errors import ConfigError, ConfigErrors
from siderod.common.model import ClockHealth, Event, EventKind
from siderod.service.scheduling import ClockScheduler

FILE_POLL_SECONDS = 5.0


def _loader(path: Path):
    """A small stand-in for config.load_config: TOML with a target list and a grace."""

    def load():
        text = path.read_text()
        try:
            data = tomllib.loads(text)
        except tomllib.TOMLDecodeError as exc:
            raise ConfigErrors([ConfigError(str(path), None, "", "", f"valid TOML ({exc})")]) from None
        grace = data.get("grace_minutes", 10)
        if not isinstance(grace, int | float) or grace < 0:
            raise ConfigErrors([ConfigError(str(path), 1, "grace_minutes", repr(grace), "minutes >= 0")])
        config = fakes.make_config(tuple(data["targets"]), grace_minutes=float(grace), horizon_hours=12.0)
        return replace(config, path=str(path))

    return load


def _events():
    base = fakes.NIGHT_START_UTC
    return [Event(base + timedelta(hours=h), EventKind.CULMINATION, name, 60.0, 180.0, hour_angle_hours=0.0)
            for h, name in ((1, "NGC 1001"), (2, "NGC 1002"), (3, "NGC 1001"), (4, "NGC 1002"))]


def _service(tmp_path, config_file, clock, recorder, *, file_poll_seconds=FILE_POLL_SECONDS):
    from siderod.service.daemon import Service

    return Service(
        _loader(config_file), clock, lambda on_due: ClockScheduler(on_due, clock), [recorder],
        ledger_path=tmp_path / "ledger.sqlite3", agenda_source=fakes.FixedAgendaSource(_events()),
        control=False, env={}, offload_planning=False, file_poll_seconds=file_poll_seconds,
        clock_health_reader=lambda: ClockHealth(state="unknown"),
    )


def _write(path: Path, text: str) -> None:
    path.write_text(text)
    st = path.stat()
    os.utime(path, ns=(st.st_atime_ns, st.st_mtime_ns + 1_000_000_000))  # a visible mtime change


def _reload_lines(caplog):
    return [r for r in caplog.records if "configuration not reloaded" in r.getMessage()]


@pytest.mark.slow
async def test_invalid_file_keeps_last_good_config_one_alert_one_line(tmp_path, caplog):
    config_file = tmp_path / "config.toml"
    config_file.write_text('targets = ["NGC 1001"]\n')
    clock = FakeClock(fakes.NIGHT_START_UTC)
    recorder = fakes.RecordingChannel(clock)
    service = _service(tmp_path, config_file, clock, recorder)
    with caplog.at_level(logging.INFO, logger="siderod"):
        task = await fakes.run_service_until(service, clock, fakes.NIGHT_START_UTC + timedelta(minutes=10))
        _write(config_file, 'targets = ["NGC 1001", "NGC 1002"]\ngrace_minutes = -3\n')
        await clock.advance(3 * FILE_POLL_SECONDS)  # several polls see the same bad file
        assert len(_reload_lines(caplog)) == 1
        assert len(recorder.service_messages) == 1
        message = recorder.service_messages[0]
        assert message.title == "siderod: configuration not reloaded"
        assert "grace_minutes: expected minutes >= 0, got -3" in message.body
        assert service.snapshot().config_error
        # Still on the last good configuration: NGC 1001 alerts only.
        await clock.advance(3 * 3600)  # to 19:10: NGC 1001 at 17:00 and 19:00, not NGC 1002 at 18:00
        assert all(k.startswith("NGC 1001|") for k in recorder.alert_keys) and len(recorder.alert_keys) == 2

        _write(config_file, 'targets = ["NGC 1001", "NGC 1002"]\n')  # fixed: swapped in whole
        await clock.advance(2 * FILE_POLL_SECONDS)
        assert service.snapshot().config_error == ""
        await clock.advance(3600)
        await fakes.stop_service(service, task)
    assert recorder.alert_keys[-1].startswith("NGC 1002|culmination|2026-12-14T20:00:00Z")
    assert len(recorder.service_messages) == 1


@pytest.mark.slow
async def test_sighup_reloads_and_reports_an_invalid_file(tmp_path, caplog):
    config_file = tmp_path / "config.toml"
    config_file.write_text('targets = ["NGC 1001"]\n')
    clock = FakeClock(fakes.NIGHT_START_UTC)
    recorder = fakes.RecordingChannel(clock)
    service = _service(tmp_path, config_file, clock, recorder, file_poll_seconds=0)
    with caplog.at_level(logging.INFO, logger="siderod"):
        task = asyncio.get_running_loop().create_task(service.run(install_signal_handlers=True))
        await fakes.wait_ready(service, task)
        config_file.write_text("targets = [\n")  # broken TOML
        os.kill(os.getpid(), signal.SIGHUP)
        for _ in range(1000):  # the signal arrives through the loop's self-pipe
            if service.config_error and recorder.service_messages:
                break
            await asyncio.sleep(0)
        assert "valid TOML" in service.config_error
        assert len(_reload_lines(caplog)) == 1 and len(recorder.service_messages) == 1
        assert [t.name for t in service.config.targets] == ["NGC 1001"]

        config_file.write_text('targets = ["NGC 1002"]\n')
        os.kill(os.getpid(), signal.SIGHUP)
        for _ in range(1000):
            if not service.config_error:
                break
            await asyncio.sleep(0)
        assert [t.name for t in service.config.targets] == ["NGC 1002"]
        await fakes.stop_service(service, task)
