"""Benchmark: every event kind over 24 h for the eight planets, the Moon and 1,000 minor bodies.

Run:  python tests/benchmarks/bench_moving.py [--runs 5]

Times ``siderod.plan.agenda.compute_agenda`` (the engine and the record building) on the demo site
with a German equatorial mount, two extra altitudes and two hour-angle marks, for:

* 8 planets + the Moon + 1,000 minor bodies (invented main-belt asteroids, seeded), the aim of the
  moving-targets issue being <= 0.3 s;
* the same count of fixed stars, the previous engine path, as the reference for the ratio.

The ephemeris is opened before timing (the service opens it once per process).
"""

from __future__ import annotations

import argparse
import statistics
import time
from dataclasses import replace
from datetime import UTC, datetime

import numpy as np

from siderod.common.model import Frame, OrbitSpec, Target
from siderod.files.config import load_config
from siderod.plan.agenda import compute_agenda

PLANETS = ("mercury", "venus", "mars", "jupiter", "saturn", "uranus", "neptune", "pluto", "moon")
START = datetime(2026, 12, 14, 12, 0, tzinfo=UTC)


def moving_targets(count: int) -> tuple[Target, ...]:
    rng = np.random.default_rng(9)
    out = [Target(name=p, frame=Frame.BODY, lon_deg=0.0, lat_deg=0.0, ra_deg=None, dec_deg=0.0, body=p)
           for p in PLANETS]
    for k in range(count):
        a, e = rng.uniform(2.1, 3.3), rng.uniform(0.0, 0.3)
        spec = OrbitSpec(q_au=a * (1 - e), e=e, i_deg=rng.uniform(0, 30), node_deg=rng.uniform(0, 360),
                         peri_deg=rng.uniform(0, 360), tp_jd_tt=2461389.0 - rng.uniform(0, 365.25 * a ** 1.5),
                         epoch_jd_tt=2461389.0, h_mag=rng.uniform(10, 16), slope=0.15)
        out.append(Target(name=f"minor {k}", frame=Frame.ORBIT, lon_deg=0.0, lat_deg=0.0, ra_deg=None,
                          dec_deg=0.0, orbit=spec))
    return tuple(out)


def star_targets(count: int) -> tuple[Target, ...]:
    rng = np.random.default_rng(9)
    ra = rng.uniform(0, 360, count)
    dec = np.degrees(np.arcsin(rng.uniform(-1, 1, count)))
    return tuple(Target(name=f"star {k}", frame=Frame.ICRS, lon_deg=float(r), lat_deg=float(d),
                        ra_deg=float(r), dec_deg=float(d))
                 for k, (r, d) in enumerate(zip(ra, dec, strict=True)))


def timed(config, runs: int) -> tuple[float, int]:
    samples, count = [], 0
    for _ in range(runs):
        start = time.perf_counter()
        agenda = compute_agenda(config, START, 24.0)
        samples.append(time.perf_counter() - start)
        count = len(agenda.events)
    return statistics.median(samples), count


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=5)
    runs = parser.parse_args().runs
    demo = load_config(None, {})
    demo.ephemeris()  # opened once per process, before timing
    moving = replace(demo, targets=moving_targets(1000))
    stars = replace(demo, targets=star_targets(len(moving.targets)))
    t_moving, n_moving = timed(moving, runs)
    t_stars, n_stars = timed(stars, runs)
    t_sky, _ = timed(replace(demo, targets=()), runs)
    print(f"8 planets + Moon + 1,000 minor bodies: {t_moving * 1000:7.1f} ms, {n_moving} events "
          "(aim <= 300 ms)")
    print(f"{len(stars.targets)} fixed stars (previous path, reference): {t_stars * 1000:7.1f} ms, "
          f"{n_stars} events")
    print(f"Sun, Moon and twilight alone (in both): {t_sky * 1000:7.1f} ms")
    print(f"ratio moving / fixed: {t_moving / t_stars:.1f}x; target events alone: moving "
          f"{(t_moving - t_sky) * 1000:.1f} ms, fixed {(t_stars - t_sky) * 1000:.1f} ms")


if __name__ == "__main__":
    main()
