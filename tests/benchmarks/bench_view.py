"""CPU cost of the live view with 500 targets: ours (rows that fit, cached body) vs a naive full table.

Run:  /work/venv/bin/python tests/benchmarks/bench_view.py [--seconds 10]

Ours runs the real live loop (``run_live`` + ``BoardFeed``, positions for all 500 targets computed
in one vectorised call each second) on a 120x50 terminal console writing to /dev/null, and reports
process CPU time over wall time, as % of one core, at 1 Hz and at 10 Hz. The naive approach
computes the same positions and prints one rich Table of all 500 rows per frame; its cost per frame
is its CPU % at 1 Hz. The 500 targets are invented (fixed random seed), at the demo site. The agenda
is computed once beforehand (the view recomputes it in a worker thread every 6 h); its one-off cost
is printed separately.
"""

from __future__ import annotations

import argparse
import asyncio
import os
import statistics
import time
from dataclasses import replace
from datetime import UTC, datetime

import numpy as np

from siderod.common.clock import SystemClock
from siderod.common.model import Frame, Target
from siderod.files.config import load_config
from siderod.view.live import BoardFeed, run_live
from siderod.view.theme import make_console

TARGET_COUNT = 500
WIDTH, HEIGHT = 120, 50


def invented_config():
    base = load_config(None, env={})
    rng = np.random.default_rng(20261214)
    ra_deg = rng.uniform(0.0, 360.0, TARGET_COUNT)
    dec_deg = np.degrees(np.arcsin(rng.uniform(-0.5, 1.0, TARGET_COUNT)))  # mostly the visible sky
    targets = tuple(
        Target(f"bench-{i:03d}", Frame.ICRS, float(ra), float(dec), float(ra), float(dec))
        for i, (ra, dec) in enumerate(zip(ra_deg, dec_deg, strict=True))
    )
    return replace(base, targets=targets)


def measure_ours(config, agenda, hz: float, seconds: float) -> float:
    devnull = open(os.devnull, "w")  # noqa: SIM115 -- closed below
    console = make_console({}, file=devnull, width=WIDTH, height=HEIGHT, force_terminal=True,
                           color_system="truecolor")
    feed = BoardFeed(lambda: config, get_agenda=lambda: agenda, source="benchmark")

    async def main():
        stop = asyncio.Event()
        clock = SystemClock()
        task = asyncio.ensure_future(run_live(clock, feed.inputs_at, console, hz, stop=stop,
                                              capture_logging=False))
        await asyncio.sleep(1.5)  # warm-up: first frame, caches
        cpu0, wall0 = time.process_time(), time.perf_counter()
        await asyncio.sleep(seconds)
        cpu1, wall1 = time.process_time(), time.perf_counter()
        stop.set()
        await task
        return (cpu1 - cpu0) / (wall1 - wall0)

    try:
        return 100.0 * asyncio.run(main())
    finally:
        devnull.close()


def measure_naive(config, frames: int) -> float:
    from rich.table import Table

    from siderod.plan.positions import compute_sky

    devnull = open(os.devnull, "w")  # noqa: SIM115 -- closed below
    console = make_console({}, file=devnull, width=WIDTH, height=HEIGHT, force_terminal=True,
                           color_system="truecolor")
    costs = []
    for _ in range(frames):
        cpu0 = time.process_time()
        sky = compute_sky(config, time.time())
        table = Table("target", "HA", "Dec", "alt", "az", "X", "trend", "culm in", "next event")
        for i, name in enumerate(sky.names):
            table.add_row(name, f"{sky.ha_hours[i]:+.2f}", f"{sky.dec_deg[i]:+.1f}", f"{sky.alt_deg[i]:.1f}",
                          f"{sky.az_deg[i]:.1f}", f"{sky.airmass[i]:.2f}", "↑" if sky.rising[i] else "↓",
                          "1h00m", "culminates 1h00m")
        console.print(table)
        costs.append(time.process_time() - cpu0)
    devnull.close()
    return 100.0 * statistics.median(costs)  # seconds of CPU per 1 s frame = fraction of a core at 1 Hz


def main() -> None:
    global TARGET_COUNT, WIDTH, HEIGHT  # noqa: PLW0603 -- the cases read these module settings
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seconds", type=float, default=10.0, help="measuring time per case (default 10)")
    parser.add_argument("--naive-frames", type=int, default=3)
    parser.add_argument("--targets", type=int, default=TARGET_COUNT, help="catalogue size (e.g. 500, 5000)")
    parser.add_argument("--size", default=f"{WIDTH}x{HEIGHT}", help="terminal COLSxROWS (e.g. 80x24, 200x60)")
    args = parser.parse_args()
    TARGET_COUNT = args.targets
    WIDTH, HEIGHT = (int(v) for v in args.size.lower().split("x"))

    from siderod.plan.agenda import compute_agenda

    config = invented_config()
    t0 = time.perf_counter()
    agenda = compute_agenda(config, datetime.now(UTC))
    agenda_seconds = time.perf_counter() - t0

    naive = measure_naive(config, args.naive_frames)
    ours_1 = measure_ours(config, agenda, 1.0, args.seconds)
    ours_10 = measure_ours(config, agenda, 10.0, args.seconds)
    print(f"{TARGET_COUNT} targets, {WIDTH}x{HEIGHT} terminal, {len(agenda.events)} agenda events")
    print(f"agenda (one-off, worker thread, every 6 h): {agenda_seconds:.2f} s")
    print(f"naive full-table render at 1 Hz:  {naive:6.1f} % of one core")
    print(f"ours at 1 Hz:                     {ours_1:6.2f} % of one core  (goal: at most 5 %)")
    print(f"ours at 10 Hz:                    {ours_10:6.2f} % of one core")
    print(f"naive / ours at 1 Hz:             {naive / ours_1:6.1f}x")


if __name__ == "__main__":
    main()
