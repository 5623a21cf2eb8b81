"""CPU cost of the live view at 1 Hz: ours (arrays, records for rows shown) vs the previous per-target table.

Run:  python tests/benchmarks/bench_view.py [--targets 500,5000] [--size 80x24,200x60] [--seconds 10]

For each catalogue size and terminal size it runs the real live loop (``run_live`` + ``BoardFeed``,
positions for every target computed in one vectorised call each second) on a console of that size
writing to /dev/null, and reports process CPU time over wall time, as % of one core:

- ours at 1 Hz and at 10 Hz: the board as it is (per-target work on numpy arrays; ``Event`` and row
  records made only for the rows that fit);
- previous at 1 Hz: the same loop with the target table built the way the board built it before,
  one target at a time (``tests/helpers/board_reference.py``: a row record and bisections for every
  target, one sort of them all, from ``Event`` records of the whole agenda);
- one frame's body, CPU ms (median of repeated frames, no loop): positions (``compute_sky``), the
  board's body ours vs previous, and rich's rendering of the lines;
- naive: one rich ``Table`` of every target printed per frame (what a simple view would do); its
  CPU per frame is its CPU % at 1 Hz.

The targets are invented (fixed random seed) at the demo site; the agenda is computed once beforehand
(the view recomputes it in a worker thread every 6 h) and its one-off cost is printed. The machine
is shared: CPU time, not wall time, is measured, and the load average is printed beside the figures.
"""

from __future__ import annotations

import argparse
import asyncio
import os
import statistics
import sys
import time
from dataclasses import replace
from datetime import UTC, datetime, timedelta
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from siderod.common.clock import SystemClock  # noqa: E402
from siderod.common.model import Frame, Target  # noqa: E402
from siderod.files.config import load_config  # noqa: E402
from siderod.view import board  # noqa: E402
from siderod.view.board import BoardInputs, agenda_events, compose_board  # noqa: E402
from siderod.view.live import BoardFeed, _Lines, run_live  # noqa: E402
from siderod.view.theme import make_console  # noqa: E402
from tests.helpers.board_reference import event_index, reference_target_rows  # noqa: E402


def invented_config(count: int):
    base = load_config(None, env={})
    rng = np.random.default_rng(20261214)
    ra_deg = rng.uniform(0.0, 360.0, count)
    dec_deg = np.degrees(np.arcsin(rng.uniform(-0.5, 1.0, count)))  # mostly the visible sky
    targets = tuple(
        Target(f"bench-{i:04d}", Frame.ICRS, float(ra), float(dec), float(ra), float(dec))
        for i, (ra, dec) in enumerate(zip(ra_deg, dec_deg, strict=True))
    )
    return replace(base, targets=targets)


_PREVIOUS_INDEX: list = [None, None]  # the previous board kept its event index per events tuple too


class previous_table:  # noqa: N801 -- used as a context manager, like a function
    """While inside, the board builds its table one target at a time, as it did before."""

    def __enter__(self):
        self.saved = board._target_rows

        def rows(inputs, count=None):
            if _PREVIOUS_INDEX[0] is not inputs.events:
                _PREVIOUS_INDEX[:] = [inputs.events, event_index(tuple(inputs.events))]
            every = reference_target_rows(inputs, _PREVIOUS_INDEX[1])
            return every if count is None else every[:count]

        board._target_rows = rows
        return self

    def __exit__(self, *exc):
        board._target_rows = self.saved


def open_console(width: int, height: int, devnull):
    return make_console({}, file=devnull, width=width, height=height, force_terminal=True,
                        color_system="truecolor")


def measure_live(config, agenda, hz: float, seconds: float, width: int, height: int, *,
                 previous: bool = False) -> float:
    """CPU % of one core of the real live loop over ``seconds`` (after a warm-up)."""
    with open(os.devnull, "w") as devnull:
        console = open_console(width, height, devnull)
        feed = BoardFeed(lambda: config, get_agenda=lambda: agenda, source="benchmark")
        if previous:  # the previous feed handed the board the agenda's records
            feed_inputs = feed.inputs_at

            async def inputs_at(now_utc):
                inputs = await feed_inputs(now_utc)
                return replace(inputs, events=agenda.events)
        else:
            inputs_at = feed.inputs_at

        async def main():
            stop = asyncio.Event()
            task = asyncio.ensure_future(run_live(SystemClock(), inputs_at, console, hz, stop=stop,
                                                  capture_logging=False))
            await asyncio.sleep(1.5)  # warm-up: first frame, caches
            cpu0, wall0 = time.process_time(), time.perf_counter()
            await asyncio.sleep(seconds)
            cpu1, wall1 = time.process_time(), time.perf_counter()
            stop.set()
            await task
            return (cpu1 - cpu0) / (wall1 - wall0)

        if previous:
            with previous_table():
                return 100.0 * asyncio.run(main())
        return 100.0 * asyncio.run(main())


def measure_frame_parts(config, agenda, width: int, height: int, frames: int) -> dict[str, float]:
    """Median CPU ms per frame of: positions, the board's body (ours, previous), rendering the lines."""
    from siderod.plan.positions import compute_sky

    now = datetime.now(UTC)
    instants = [now + timedelta(seconds=i) for i in range(frames + 1)]
    parts: dict[str, list[float]] = {"sky": [], "ours": [], "previous": [], "render": []}
    skies, texts = [], []
    with open(os.devnull, "w") as devnull:
        console = open_console(width, height, devnull)
        options = console.options.update(width=width)
        for t in instants:  # the first frame of each run builds the caches (event index, name ranks)
            c0 = time.process_time()
            skies.append(compute_sky(config, t.timestamp()))
            c1 = time.process_time()
            ours = compose_board(BoardInputs(t, config, skies[-1], t, agenda_events(agenda)), width, height)
            c2 = time.process_time()
            console.render_lines(_Lines(ours.header + ours.body), options, pad=True)
            c3 = time.process_time()
            texts.append([line.plain for line in ours.body])
            for key, value in (("sky", c1 - c0), ("ours", c2 - c1), ("render", c3 - c2)):
                parts[key].append(1e3 * value)
        with previous_table():
            for t, sky, text in zip(instants, skies, texts, strict=True):
                c0 = time.process_time()
                previous = compose_board(BoardInputs(t, config, sky, t, agenda.events), width, height)
                parts["previous"].append(1e3 * (time.process_time() - c0))
                if [line.plain for line in previous.body] != text:
                    raise SystemExit("the two tables differ: this is a bug in the board")
    return {key: statistics.median(values[1:]) for key, values in parts.items()}


def measure_naive(config, frames: int, width: int, height: int) -> float:
    from rich.table import Table

    from siderod.plan.positions import compute_sky

    costs = []
    with open(os.devnull, "w") as devnull:
        console = open_console(width, height, devnull)
        for _ in range(frames):
            cpu0 = time.process_time()
            sky = compute_sky(config, time.time())
            table = Table("target", "HA", "Dec", "alt", "az", "X", "trend", "culm in", "next event")
            for i, name in enumerate(sky.names):
                table.add_row(name, f"{sky.ha_hours[i]:+.2f}", f"{sky.dec_deg[i]:+.1f}",
                              f"{sky.alt_deg[i]:.1f}", f"{sky.az_deg[i]:.1f}", f"{sky.airmass[i]:.2f}",
                              "↑" if sky.rising[i] else "↓", "1h00m", "culminates 1h00m")
            console.print(table)
            costs.append(time.process_time() - cpu0)
    return 100.0 * statistics.median(costs)  # seconds of CPU per 1 s frame = fraction of a core at 1 Hz


def load_average() -> str:
    return "load average " + " ".join(f"{x:.2f}" for x in os.getloadavg())


def run_case(count: int, width: int, height: int, args) -> str:
    from siderod.plan.agenda import compute_agenda

    config = invented_config(count)
    t0 = time.perf_counter()
    agenda = compute_agenda(config, datetime.now(UTC))
    agenda_seconds = time.perf_counter() - t0
    t0 = time.perf_counter()
    records = len(agenda.events)  # the previous view made a record of every event, once per agenda
    records_seconds = time.perf_counter() - t0
    before = load_average()
    parts = measure_frame_parts(config, agenda, width, height, args.frames)
    naive = measure_naive(config, args.naive_frames, width, height)
    ours_1 = measure_live(config, agenda, 1.0, args.seconds, width, height)
    previous_1 = measure_live(config, agenda, 1.0, args.seconds, width, height, previous=True)
    ours_10 = measure_live(config, agenda, 10.0, args.seconds, width, height)
    goal = 5.0 if count > 500 else 2.0
    return "\n".join([
        f"== {count} targets, {width}x{height} terminal, {records} agenda events "
        f"({before}; after: {load_average()[13:]})",
        f"agenda (one-off, worker thread, every 6 h): {agenda_seconds:.2f} s; "
        f"records of all its events (previous view, once per agenda): {records_seconds:.2f} s",
        f"one frame, CPU ms: positions {parts['sky']:.2f}, board body ours {parts['ours']:.2f} vs previous "
        f"{parts['previous']:.2f} ({parts['previous'] / parts['ours']:.1f}x), "
        f"rendering {parts['render']:.2f}",
        f"live view at 1 Hz, ours:      {ours_1:6.2f} % of one core  (goal: at most {goal:g} %)",
        f"live view at 1 Hz, previous:  {previous_1:6.2f} % of one core  "
        f"(previous / ours {previous_1 / ours_1:.1f}x)",
        f"live view at 10 Hz, ours:     {ours_10:6.2f} % of one core",
        f"naive full table at 1 Hz:     {naive:6.1f} % of one core  (naive / ours {naive / ours_1:.0f}x)",
    ])


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--targets", default="500,5000",
                        help="catalogue sizes, comma-separated (default 500,5000)")
    parser.add_argument("--size", default="80x24,200x60",
                        help="terminal sizes COLSxROWS, comma-separated (default 80x24,200x60)")
    parser.add_argument("--seconds", type=float, default=10.0,
                        help="measuring time per live run (default 10)")
    parser.add_argument("--frames", type=int, default=20, help="frames timed one by one (default 20)")
    parser.add_argument("--naive-frames", type=int, default=2)
    args = parser.parse_args()
    sizes = [tuple(int(v) for v in size.lower().split("x")) for size in args.size.split(",")]
    for count in (int(v) for v in args.targets.split(",")):
        for width, height in sizes:
            print(run_case(count, width, height, args), flush=True)


if __name__ == "__main__":
    main()
