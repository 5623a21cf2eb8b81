"""A siderod service with two real push destinations, in a child process on a fast clock.

    python push_child.py STATE_DIR PORT EPOCH_UNIX SPEED COUNT

For the kill -9 night test (tests/service/test_push_restart.py). Simulated time is
``NIGHT_START_UTC + (time.time() - EPOCH_UNIX) * SPEED``, so it runs on while the process is dead,
as real time would. COUNT targets each have a flip (``flip_time(i)``) and, ``LIMIT_AFTER_SECONDS``
later, a tracking limit; both are critical, alert at the event and repeat every
``REPEAT_MINUTES`` until acknowledged. The two destinations are apprise's json:// (path ``/a``)
and ntfy:// (topic ``b``) on the test's loopback HTTP receiver at PORT. The control socket,
lock and ledger are in STATE_DIR, so the test can send ``ack``.
"""

from __future__ import annotations

import asyncio
import importlib.util
import sys
from datetime import timedelta
from pathlib import Path
from types import SimpleNamespace

FIRST_FLIP_SECONDS = 60.0
FLIP_SPACING_SECONDS = 90.0
LIMIT_AFTER_SECONDS = 600.0
REPEAT_MINUTES = 2.0
REPEAT_COUNT = 2
GRACE_MINUTES = 30.0  # 15 real seconds at the test's speed: room for a slow restart under load


def load_fakes():
    path = Path(__file__).resolve().parent / "service_fakes.py"
    spec = importlib.util.spec_from_file_location("siderod_test_helpers_service_fakes", path)
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module
    spec.loader.exec_module(module)
    return module


def events(fakes, count: int):
    from siderod.common.model import Event, EventKind

    out = []
    for i in range(count):
        flip = fakes.NIGHT_START_UTC + timedelta(seconds=FIRST_FLIP_SECONDS + i * FLIP_SPACING_SECONDS)
        out.append(Event(flip, EventKind.FLIP_DUE, f"T{i:03d}", 40.0, 180.0, hour_angle_hours=0.0))
        out.append(Event(flip + timedelta(seconds=LIMIT_AFTER_SECONDS), EventKind.TRACKING_LIMIT, f"T{i:03d}",
                         39.0, 185.0, hour_angle_hours=LIMIT_AFTER_SECONDS / 3600.0))
    return out


def config(fakes, count: int):
    from siderod.common.model import EventKind

    return fakes.make_config(
        targets=tuple(f"T{i:03d}" for i in range(count)),
        lead_minutes={EventKind.FLIP_DUE: (0.0,), EventKind.TRACKING_LIMIT: (0.0,)},
        grace_minutes=GRACE_MINUTES, horizon_hours=2.0,
        repeat_minutes=REPEAT_MINUTES, repeat_count=REPEAT_COUNT,
    )


def main(argv: list[str]) -> int:
    state_dir, port = Path(argv[1]), int(argv[2])
    epoch, speed, count = float(argv[3]), float(argv[4]), int(argv[5])
    import logging

    logging.basicConfig(level=logging.INFO, stream=sys.stderr, format="%(name)s %(levelname)s %(message)s")
    fakes = load_fakes()
    from siderod.common.model import ClockHealth, PushDestination
    from siderod.files.pushurl import check_url
    from siderod.service.daemon import Service
    from siderod.service.push import PushChannel
    from siderod.service.scheduling import ClockScheduler

    channels = []
    for name, url in (("a", f"json://127.0.0.1:{port}/a"), ("b", f"ntfy://127.0.0.1:{port}/b")):
        channels.append(PushChannel(PushDestination(name=name, url=url, masked_url=check_url(url).masked,
                                                    timeout_seconds=5.0)))
    clock = fakes.ScaledClock(fakes.NIGHT_START_UTC, epoch, speed)
    paths = SimpleNamespace(ledger_path=state_dir / "ledger.sqlite3", socket_path=state_dir / "control.sock",
                            lock_path=state_dir / "service.lock")
    service = Service(
        lambda: config(fakes, count), clock, lambda on_due: ClockScheduler(on_due, clock), channels, paths,
        agenda_source=fakes.FixedAgendaSource(events(fakes, count)), env={}, offload_planning=False,
        file_poll_seconds=0, anomaly_period_seconds=60.0, retry_seconds=10.0,
        clock_health_reader=lambda: ClockHealth(state="unknown"),
    )

    async def run() -> None:
        task = asyncio.create_task(service.run(install_signal_handlers=True))
        ready = asyncio.create_task(service.wait_ready())
        await asyncio.wait({task, ready}, return_when=asyncio.FIRST_COMPLETED)
        print("child up", flush=True)
        await task

    asyncio.run(run())
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
