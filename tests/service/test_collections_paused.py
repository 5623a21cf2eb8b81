"""Off-loop work runs without garbage-collection pauses, and collections resume after (issue 13
item 5: full collections held the interpreter lock for 100-250 ms during each re-plan)."""

from __future__ import annotations

import asyncio
import gc

from helpers import service_fakes as fakes

from siderod.common.clock import FakeClock


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
