"""A siderod service in a child process on a fast clock, for the kill -9 restart test.

    python restart_child.py LEDGER SENT_LOG EPOCH_UNIX SPEED COUNT

Simulated time is ``NIGHT_START_UTC + (time.time() - EPOCH_UNIX) * SPEED``, so it runs on while
the process is dead, as real time would. COUNT alerts (culminations, lead 0) fall due every
``SPACING_SECONDS`` simulated seconds from ``FIRST_DUE_SECONDS``. The one channel appends each
alert key to SENT_LOG (one write(2) with O_APPEND), which is what the test counts.
"""

from __future__ import annotations

import asyncio
import os
import sys
from datetime import timedelta

FIRST_DUE_SECONDS = 30.0
SPACING_SECONDS = 10.0


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
    import service_fakes as fakes  # this script's folder is first on sys.path

    from siderod.common.model import EventKind
    from siderod.service.daemon import Service
    from siderod.service.scheduling import ClockScheduler

    clock = fakes.ScaledClock(fakes.NIGHT_START_UTC, epoch, speed)
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
