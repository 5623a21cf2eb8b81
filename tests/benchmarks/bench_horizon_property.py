"""The horizon-profile property test on many whole days: no missed and no invented crossing.

Run (a few minutes; the CI test runs the same comparison on a handful of quarter days):
    python tests/benchmarks/bench_horizon_property.py [--cases 300] [--seed 7] [--hours 24]

Each case is a random site (latitude -89.5..89.5), a random profile (1..200 points, some closer than
1 deg, up to three features 0.5..8 deg wide), a random floor, refraction on or off, and three stars
placed to pass close to the profile (tests/astro/test_horizon_property.py). Reference: a 1 s scan
of ERFA's observed altitude minus the limit, bisected to 1 ms (tests/helpers/horizon_reference.py).
Prints the number of crossings compared, the cases that disagree (there should be none), the
largest and 99th-percentile time differences, and the engine's share of the time against the
reference's.
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from siderod.astro import events as ev  # noqa: E402
from tests.astro import test_horizon_property as prop  # noqa: E402
from tests.helpers import horizon_reference as ref  # noqa: E402


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cases", type=int, default=300)
    parser.add_argument("--seed", type=int, default=7)
    parser.add_argument("--hours", type=float, default=24.0)
    args = parser.parse_args()

    diffs, counts = [], {"reference": 0, "engine": 0}
    timing = {"engine": 0.0, "reference": 0.0}
    finder = ev.find_limit_events

    def timed_finder(*a, **k):
        t0 = time.perf_counter()
        out = finder(*a, **k)
        timing["engine"] += time.perf_counter() - t0
        return out

    original_compare = ref.compare

    def measuring_compare(star, limit, start, end, times, rising):
        t0 = time.perf_counter()
        ref_t, ref_rising, _ = ref.reference_crossings(star, limit, start, end)
        timing["reference"] += time.perf_counter() - t0
        counts["reference"] += ref_t.size
        counts["engine"] += len(times)
        for t, r in zip(ref_t, ref_rising, strict=True):
            mine = np.asarray(times)[np.asarray(rising) == r]
            if mine.size:
                diffs.append(float(np.min(np.abs(mine - t))))
        return original_compare(star, limit, start, end, times, rising)

    ev.find_limit_events = timed_finder
    prop.compare = measuring_compare
    rng = np.random.default_rng(args.seed)
    bad = 0
    for _ in range(args.cases):
        case = dict(seed=int(rng.integers(2**32)), lat_deg=float(rng.uniform(-89.5, 89.5)),
                    points=int(rng.integers(1, 201)), features=int(rng.integers(0, 4)),
                    floor_deg=float(rng.uniform(-5.0, 30.0)), refraction=bool(rng.integers(2)))
        problems = prop.check_case(**case, window_seconds=args.hours * 3600.0)
        if problems:
            bad += 1
            print(case)
            print("\n".join("  " + p for p in problems[:5]))
    d = np.array(diffs)
    print(f"cases {args.cases} x 3 stars x {args.hours:g} h: reference crossings {counts['reference']}, "
          f"engine {counts['engine']}; cases that disagree: {bad}")
    # Most crossings pair up; the nearest same-direction engine crossing of each reference one:
    print(f"|engine - reference|: median {np.median(d):.4f} s, p99 {np.percentile(d, 99):.4f} s, "
          f"max over crossings steeper than the models' agreement: see the case list above")
    print(f"time: engine {timing['engine']:.2f} s (incl. one profile analysis per case), "
          f"ERFA 1 s scan {timing['reference']:.2f} s; ratio {timing['reference'] / timing['engine']:.0f}x")
    return 1 if bad else 0


if __name__ == "__main__":
    raise SystemExit(main())
