"""A siderod service in a child process on a fast clock, for the kill -9 restart test.

    python restart_child.py LEDGER SENT_LOG EPOCH_UNIX SPEED COUNT

Simulated time is ``NIGHT_START_UTC + (time.time() - EPOCH_UNIX) * SPEED``, so it runs on while
the process is dead, as real time would. COUNT alerts (culminations, lead 0) fall due every
``SPACING_SECONDS`` simulated seconds from ``FIRST_DUE_SECONDS``. The one channel appends each
alert key to SENT_LOG (one write(2) with O_APPEND), which is what the test counts.
"""

from __future__ import annotations

import asyncio
import importlib.util
import os
import sys
import time
from datetime import timedelta
from pathlib import Path

FIRST_DUE_SECONDS = 30.0
SPACING_SECONDS = 10.0


def _load_fakes():
    path = Path(__file__).resolve().parent / "service_fakes.py"
    spec = importlib.util.spec_from_file_location("siderod_test_helpers_service_fakes", path)
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module
    spec.loader.exec_module(module)
    return module


class ScaledClock:
    def __init__(self, base_utc, epoch_unix: float, speed: float) -> None:
        self._base_utc = base_utc
        self._epoch_unix = epoch_unix
        self._speed = speed

    def now_utc(self):
        return self._base_utc + timedelta(seconds=(time.time() - self._epoch_unix) * self._speed)

    def monotonic(self) -> float:
        return time.monotonic() * self._speed

    async def sleep(self, seconds: float) -> None:
        await asyncio.sleep(max(0.0, seconds) / self._speed)


class FileChannel:
    name = "file"

    def __init__(self, path: str) -> None:
        self._path = path

    async def send(self, message) -> None:
        fd = os.open(self._path, os.O_WRONLY | os.O_APPEND | os.O_CREAT, 0o600)
        try:
            os.write(fd, f"{message.key}\n".encode())
        finally:
            os.close(fd)

    async def close(self) -> None:
        return None


def expected_events(fakes, count: int):
    from siderod.common.model import Event, EventKind

    return [
        Event(fakes.NIGHT_START_UTC + timedelta(seconds=FIRST_DUE_SECONDS + i * SPACING_SECONDS),
              EventKind.CULMINATION, f"T{i:03d}", 60.0, 180.0, hour_angle_hours=0.0)
        for i in range(count)
    ]


def main(argv: list[str]) -> int:
    ledger_path, sent_log = argv[1], argv[2]
    epoch, speed, count = float(argv[3]), float(argv[4]), int(argv[5])
    import logging

    logging.basicConfig(level=logging.INFO, stream=sys.stderr, format="%(name)s %(levelname)s %(message)s")
    fakes = _load_fakes()
    from siderod.common.model import EventKind
    from siderod.service.daemon import Service
    from siderod.service.scheduling import ClockScheduler

    clock = ScaledClock(fakes.NIGHT_START_UTC, epoch, speed)
    config = fakes.make_config(
        targets=tuple(f"T{i:03d}" for i in range(count)),
        lead_minutes={EventKind.CULMINATION: (0.0,)},
        grace_minutes=10.0,
        horizon_hours=2.0,
    )
    service = Service(
        lambda: config,
        clock,
        lambda on_due: ClockScheduler(on_due, clock),
        [FileChannel(sent_log)],
        ledger_path=ledger_path,
        agenda_source=fakes.FixedAgendaSource(expected_events(fakes, count)),
        control=False,
        env={},
        offload_planning=False,
        file_poll_seconds=0,
        anomaly_period_seconds=20.0,
        clock_health_reader=lambda: __import__(
            "siderod.common.model").common.model.ClockHealth(state="unknown"),
    )
    print("child up", flush=True)
    asyncio.run(service.run(install_signal_handlers=True))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
