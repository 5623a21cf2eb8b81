"""Service figures: idle CPU and RSS with 1,000 targets, and alert latency.

    /work/venv/bin/python tests/benchmarks/bench_service.py [--idle-seconds 60] [--targets 1000]

1. Idle: a child process runs the real service (SystemClock, APScheduler, the real agenda over the
   configured horizon, log channel, control socket) for the demo site with N synthetic targets.
   After its whole first plan the child is left alone for --idle-seconds; CPU is the child's utime+stime
   over that span (from /proc), RSS is VmRSS at the end.
2. Latency, real clock: 60 alerts due 0.25 s apart through the APScheduler adapter and the whole
   delivery path (ledger claim, log channel, ledger writes); due -> channel call, wall clock.
3. Latency, simulated night: the demo night under FakeClock (the scheduling logic only; the
   figure is exact by construction of the fake clock and shows that nothing is late or early).
Aims from the issue: idle CPU <= 0.5 % of one core, RSS <= 120 MB.
"""

from __future__ import annotations

import argparse
import asyncio
import os
import random
import statistics
import subprocess
import sys
import tempfile
import time
from dataclasses import replace
from datetime import UTC, datetime, timedelta
from pathlib import Path

REPO = Path(__file__).resolve().parents[2]
DEMO = REPO / "siderod" / "demo" / "demo.toml"
CLOCK_TICKS = os.sysconf("SC_CLK_TCK")


def _config_with_targets(count: int):
    from siderod.common.model import Frame, Target
    from siderod.files.config import load_config

    config = load_config(str(DEMO), env=dict(os.environ))
    rng = random.Random(1000)
    targets = []
    for i in range(count):
        ra = rng.uniform(0, 360)
        dec = rng.uniform(-30, 89)
        targets.append(Target(name=f"BENCH {i:04d}", frame=Frame.ICRS, lon_deg=ra, lat_deg=dec,
                              ra_deg=ra, dec_deg=dec))
    return replace(config, targets=tuple(targets), target_files=(),
                   notify=replace(config.notify, desktop=False, command=()))


def child(count: int) -> None:
    import logging

    logging.basicConfig(level=logging.WARNING, stream=sys.stderr)
    from siderod.common.clock import SystemClock
    from siderod.files.paths import resolve_paths
    from siderod.service.daemon import Service

    config = _config_with_targets(count)
    service = Service(lambda: config, SystemClock(), None, None, resolve_paths(os.environ))

    async def main():
        task = asyncio.create_task(service.run(install_signal_handlers=True))
        await service.wait_ready()
        # READY=1 comes after the first stretch's plan; the whole horizon is planned right after,
        # and that is start-up work, not idling.
        await service.wait_whole_plan()
        print(f"ready planned={len(service._plan)}", flush=True)
        await task

    asyncio.run(main())


def _cpu_seconds(pid: int) -> float:
    fields = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()
    return (int(fields[11]) + int(fields[12])) / CLOCK_TICKS


def _rss_mb(pid: int) -> float:
    for line in Path(f"/proc/{pid}/status").read_text().splitlines():
        if line.startswith("VmRSS:"):
            return int(line.split()[1]) / 1024
    return float("nan")


def bench_idle(count: int, idle_seconds: float) -> None:
    with tempfile.TemporaryDirectory(prefix="sdb", dir="/tmp") as home:
        env = dict(os.environ, XDG_STATE_HOME=f"{home}/state", XDG_RUNTIME_DIR=f"{home}/run",
                   XDG_CONFIG_HOME=f"{home}/config", OPENBLAS_NUM_THREADS="1")
        os.makedirs(f"{home}/run", mode=0o700)
        started = time.monotonic()
        process = subprocess.Popen([sys.executable, __file__, "--child", str(count)],
                                   stdout=subprocess.PIPE, env=env)
        line = process.stdout.readline().decode().strip()
        startup = time.monotonic() - started
        cpu0 = _cpu_seconds(process.pid)
        time.sleep(idle_seconds)
        cpu1 = _cpu_seconds(process.pid)
        rss = _rss_mb(process.pid)
        process.terminate()
        process.wait(timeout=30)
        process.stdout.close()
    print(f"idle, {count} targets: start-up to first plan {startup:.1f} s ({line});"
          f" idle CPU {100 * (cpu1 - cpu0) / idle_seconds:.3f} % of one core over {idle_seconds:g} s;"
          f" RSS {rss:.0f} MB")


async def bench_real_latency(count: int = 60, spacing_seconds: float = 0.25) -> None:
    from siderod.common.clock import SystemClock
    from siderod.common.model import ClockHealth, Event, EventKind

    sys.path.insert(0, str(REPO / "tests" / "helpers"))
    import service_fakes as fakes  # noqa: E402

    from siderod.service.daemon import Service

    clock = SystemClock()
    first = datetime.now(UTC) + timedelta(seconds=2)
    events = [Event(first + timedelta(seconds=i * spacing_seconds), EventKind.CULMINATION, f"T{i:03d}",
                    60.0, 180.0, hour_angle_hours=0.0) for i in range(count)]
    config = fakes.make_config(tuple(f"T{i:03d}" for i in range(count)),
                               lead_minutes={EventKind.CULMINATION: (0.0,)}, horizon_hours=1.0)
    recorder = fakes.RecordingChannel(clock)
    with tempfile.TemporaryDirectory() as tmp:
        service = Service(lambda: config, clock, None, [recorder], ledger_path=f"{tmp}/l.sqlite3",
                          agenda_source=fakes.FixedAgendaSource(events), control=False, env={},
                          file_poll_seconds=0, clock_health_reader=lambda: ClockHealth(state="unknown"))
        task = asyncio.create_task(service.run())
        await asyncio.sleep((events[-1].time_utc - datetime.now(UTC)).total_seconds() + 1.0)
        service.request_stop()
        await task
    due = {e.target: e.time_utc for e in events}
    lat_ms = sorted(1000 * (r.when_utc - due[r.message.target]).total_seconds() for r in recorder.received)
    print(f"latency, real clock + APScheduler: {len(lat_ms)}/{count} delivered; due->channel median"
          f" {statistics.median(lat_ms):.1f} ms, p95 {lat_ms[int(0.95 * (len(lat_ms) - 1))]:.1f} ms,"
          f" max {lat_ms[-1]:.1f} ms")


async def bench_simulated_night() -> None:
    from siderod.common.clock import FakeClock
    from siderod.common.model import ClockHealth
    from siderod.files.config import load_config
    from siderod.plan.agenda import compute_agenda
    from siderod.service.daemon import Service
    from siderod.service.scheduling import ClockScheduler

    sys.path.insert(0, str(REPO / "tests" / "helpers"))
    import service_fakes as fakes  # noqa: E402

    config = load_config(str(DEMO), env=dict(os.environ))
    config = replace(config, notify=replace(config.notify, desktop=False))
    start = datetime(2026, 12, 14, 16, 0, tzinfo=UTC)
    clock = FakeClock(start)
    recorder = fakes.RecordingChannel(clock)
    with tempfile.TemporaryDirectory() as tmp:
        service = Service(lambda: config, clock, lambda f: ClockScheduler(f, clock), [recorder],
                          ledger_path=f"{tmp}/l.sqlite3", agenda_source=compute_agenda, control=False,
                          env={}, offload_planning=False, file_poll_seconds=0,
                          clock_health_reader=lambda: ClockHealth(state="unknown"))
        t0 = time.perf_counter()
        task = await fakes.run_service_until(service, clock, start + timedelta(hours=16), step_seconds=600)
        await fakes.stop_service(service, task)
        elapsed = time.perf_counter() - t0
    lat = [(r.when_utc - r.message.due_utc).total_seconds() for r in recorder.received if r.message.due_utc]
    print(f"latency, simulated demo night 16:00-08:00 UTC: {len(lat)} alerts, max |due->delivered|"
          f" {max(map(abs, lat)):.3f} s simulated; ran in {elapsed:.1f} s real")


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--child", type=int)
    parser.add_argument("--targets", type=int, default=1000)
    parser.add_argument("--idle-seconds", type=float, default=60.0)
    args = parser.parse_args()
    if args.child is not None:
        child(args.child)
        return
    asyncio.run(bench_simulated_night())
    asyncio.run(bench_real_latency())
    bench_idle(args.targets, args.idle_seconds)


if __name__ == "__main__":
    main()
