"""Off-loop work runs without garbage-collection pauses, and collections resume after (issue 13
item 5: full collections held the interpreter lock for 100-250 ms during each re-plan)."""

from __future__ import annotations

import asyncio
import contextlib
import gc
import os
import time

import pytest
from helpers import service_fakes as fakes
from helpers.loaders import FailingInChildLoad

from siderod.common.clock import FakeClock

#: A child interpreter starts and imports siderod in well under a second; this bounds the wait on a
#: loaded shared 2-core machine.
CHILD_WAIT_SECONDS = 60.0


def _service(tmp_path):
    from siderod.service.daemon import Service

    return Service(lambda: fakes.make_config(), FakeClock(fakes.NIGHT_START_UTC),
                   ledger_path=tmp_path / "ledger.sqlite3", control=False, env={})


async def test_off_loop_work_runs_with_collections_paused_and_the_heap_frozen(tmp_path):
    service = _service(tmp_path)
    assert gc.isenabled() and gc.get_freeze_count() == 0
    enabled, frozen = await service._off_loop(lambda: (gc.isenabled(), gc.get_freeze_count()))
    assert not enabled and frozen > 0
    assert gc.isenabled() and gc.get_freeze_count() == 0


async def test_overlapping_works_resume_collections_only_after_the_last(tmp_path):
    service = _service(tmp_path)
    release = asyncio.Event()
    loop = asyncio.get_running_loop()

    def slow():
        asyncio.run_coroutine_threadsafe(release.wait(), loop).result()
        return gc.isenabled()

    first = asyncio.create_task(service._off_loop(slow))
    assert not await service._off_loop(gc.isenabled)  # the second ends while the first still runs
    assert not gc.isenabled()
    release.set()
    assert not await first
    assert gc.isenabled() and gc.get_freeze_count() == 0


@pytest.mark.slow  # starts a Python interpreter
async def test_collections_stay_on_while_a_reload_waits_for_its_child(tmp_path):
    # A hung load (a file on a dead network share) may keep the reload waiting for minutes: the
    # service must not go without collections that long.
    from siderod.service.daemon import Service

    config_file = tmp_path / "config.toml"
    config_file.write_text('targets = ["NGC 1001"]\n')
    pid_file = tmp_path / "child.pid"
    service = Service(FailingInChildLoad(str(config_file), str(pid_file), None, os.getpid()),
                      FakeClock(fakes.NIGHT_START_UTC), ledger_path=tmp_path / "ledger.sqlite3",
                      control=False, env={}, load_config_in_child=True)
    load = asyncio.create_task(service._load_config())
    end = time.monotonic() + CHILD_WAIT_SECONDS
    while not (pid_file.exists() and pid_file.read_text()):
        assert time.monotonic() < end and not load.done(), "the child never started"
        await asyncio.sleep(0.02)
    assert gc.isenabled() and gc.get_freeze_count() == 0
    load.cancel()
    with contextlib.suppress(asyncio.CancelledError):
        await load
    with pytest.raises(ProcessLookupError):
        os.kill(int(pid_file.read_text()), 0)  # and cancelling the load ended its child


async def test_a_timer_replan_writes_its_plan_with_collections_paused(tmp_path, monkeypatch):
    # The plan's ledger write makes a row object per alert on a worker thread; a full collection
    # meanwhile would hold the interpreter lock as it did during reloads.
    from siderod.service.daemon import Service
    from siderod.service.ledger import Ledger
    from siderod.service.scheduling import ClockScheduler

    clock = FakeClock(fakes.NIGHT_START_UTC)
    service = Service(lambda: fakes.make_config(), clock, lambda on_due: ClockScheduler(on_due, clock),
                      [fakes.RecordingChannel(clock)], ledger_path=tmp_path / "ledger.sqlite3",
                      agenda_source=fakes.FixedAgendaSource(fakes.synthetic_night()), control=False, env={},
                      offload_planning=True, file_poll_seconds=0,
                      clock_health_reader=fakes.synchronised_health)
    task = asyncio.create_task(service.run())
    # Real worker threads plan here: wait in real time, bounded for a loaded machine.
    await asyncio.wait_for(service._whole_plan.wait(), CHILD_WAIT_SECONDS)
    seen: list[bool] = []
    original = Ledger.replace_planned

    def recording(self, *args, **kwargs):
        seen.append(gc.isenabled())
        return original(self, *args, **kwargs)

    monkeypatch.setattr(Ledger, "replace_planned", recording)
    await service.replan("timer")
    await fakes.stop_service(service, task)
    assert seen == [False]
    assert gc.isenabled() and gc.get_freeze_count() == 0
