"""Reloading the configuration in a child process: the result, a refusal, a crash, a hang and a stop
mid-load, each with a real child interpreter (issue 13 item 5)."""

from __future__ import annotations

import asyncio
import os
import time
from pathlib import Path

import pytest
from helpers import service_fakes as fakes
from helpers.loaders import FailingInChildLoad, ListLoad

from siderod.common.clock import FakeClock
from siderod.common.errors import SiderodError
from siderod.common.model import ClockHealth
from siderod.files.config import load_config
from siderod.service.loading import ConfigLoad, load_in_child
from siderod.service.scheduling import ClockScheduler

pytestmark = pytest.mark.slow  # each starts a Python interpreter

DEMO = Path(__file__).resolve().parents[2] / "siderod" / "demo" / "demo.toml"
#: A child interpreter starts, imports siderod and loads a small file in well under a second; this
#: bounds the wait for one on a loaded shared 2-core machine.
CHILD_WAIT_SECONDS = 60.0
#: The hang test's own load timeout: long enough for the child to start and write its pid.
SHORT_TIMEOUT_SECONDS = 4.0


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    return True


async def _wait_for_file(path: Path) -> int:
    end = time.monotonic() + CHILD_WAIT_SECONDS
    while not (path.exists() and path.read_text()):
        assert time.monotonic() < end, f"no child wrote {path}"
        await asyncio.sleep(0.02)
    return int(path.read_text())


async def test_the_demo_loads_in_a_child_exactly_as_in_this_process():
    # Reference: load_config in this process, at the same instant.
    at_unix = 1797000000.0
    load = ConfigLoad(str(DEMO), dict(os.environ))
    assert await load_in_child(load, at_unix) == load_config(str(DEMO), dict(os.environ), at_unix=at_unix)


async def test_a_refused_configuration_reports_every_problem(tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text(DEMO.read_text().replace('[site]', '[site]\nlatitud = 3', 1))
    with pytest.raises(SiderodError) as caught:
        await load_in_child(ConfigLoad(str(bad), dict(os.environ)), None)
    assert f"{bad}:" in str(caught.value) and 'did you mean "latitude"' in str(caught.value)


def _service(tmp_path, loader, **kwargs):
    from siderod.service.daemon import Service

    clock = FakeClock(fakes.NIGHT_START_UTC)
    return Service(
        loader, clock, lambda on_due: ClockScheduler(on_due, clock), [fakes.RecordingChannel(clock)],
        ledger_path=tmp_path / "ledger.sqlite3", agenda_source=fakes.FixedAgendaSource(()), control=False,
        env={}, offload_planning=False, file_poll_seconds=0, load_config_in_child=True,
        clock_health_reader=lambda: ClockHealth(state="unknown"), **kwargs)


async def _started(service):
    task = asyncio.get_running_loop().create_task(service.run())
    await fakes.wait_ready(service, task)
    return task


async def test_a_reload_in_a_child_swaps_the_configuration_in_or_keeps_the_last_good_one(tmp_path):
    config_file = tmp_path / "config.toml"
    config_file.write_text('targets = ["NGC 1001"]\n')
    service = _service(tmp_path, ListLoad(str(config_file)))
    task = await _started(service)
    config_file.write_text('targets = ["NGC 1001", "NGC 1002"]\n')
    assert await service.reload("test")
    assert [t.name for t in service.config.targets] == ["NGC 1001", "NGC 1002"]
    config_file.write_text("targets = [\n")
    assert not await service.reload("test")
    assert "valid TOML" in service.config_error
    assert [t.name for t in service.config.targets] == ["NGC 1001", "NGC 1002"]
    await fakes.stop_service(service, task)


async def test_a_crashed_load_keeps_the_last_good_configuration(tmp_path):
    config_file = tmp_path / "config.toml"
    config_file.write_text('targets = ["NGC 1001"]\n')
    pid_file = tmp_path / "child.pid"
    service = _service(tmp_path, FailingInChildLoad(str(config_file), str(pid_file), 3, os.getpid()))
    task = await _started(service)
    assert not await service.reload("test")
    assert "stopped (exit code 3) before it gave a result" in service.config_error
    assert [t.name for t in service.config.targets] == ["NGC 1001"]
    assert not _alive(await _wait_for_file(pid_file))
    await fakes.stop_service(service, task)


async def test_a_hung_load_is_stopped_after_the_timeout_and_leaves_no_process(tmp_path):
    config_file = tmp_path / "config.toml"
    config_file.write_text('targets = ["NGC 1001"]\n')
    pid_file = tmp_path / "child.pid"
    service = _service(tmp_path, FailingInChildLoad(str(config_file), str(pid_file), None, os.getpid()),
                       load_timeout_seconds=SHORT_TIMEOUT_SECONDS)
    task = await _started(service)
    assert not await service.reload("test")
    assert f"took more than {SHORT_TIMEOUT_SECONDS:g} s and was stopped" in service.config_error
    assert [t.name for t in service.config.targets] == ["NGC 1001"]
    assert not _alive(await _wait_for_file(pid_file))
    await fakes.stop_service(service, task)


async def test_stopping_the_service_during_a_load_leaves_no_process(tmp_path):
    config_file = tmp_path / "config.toml"
    config_file.write_text('targets = ["NGC 1001"]\n')
    pid_file = tmp_path / "child.pid"
    service = _service(tmp_path, FailingInChildLoad(str(config_file), str(pid_file), None, os.getpid()))
    task = await _started(service)
    service.request_reload()  # as SIGHUP does: the reload task of the service's own task group
    pid = await _wait_for_file(pid_file)
    assert _alive(pid)
    service.request_stop()
    await asyncio.wait_for(task, CHILD_WAIT_SECONDS)
    assert not _alive(pid)
