"""Benchmark the beam finder: 100,000 catalogue stars against one fixed beam for a night.

Run:
    python tests/benchmarks/bench_beams.py

Prints the engine's time (track fitting included) for 1e5 random stars drifting through a 2 deg
meridian beam at Dec +20 over 24 h from the demo night (target: at most 0.5 s), how many sources
the declination test keeps, and, for comparison, the cost per source of the brute-force approach
of tests/astro/test_beams.py (ERFA's observed place every 2 s, bisection) and the ratio.
"""

from __future__ import annotations

import statistics
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from siderod.astro import beams as bm  # noqa: E402
from siderod.astro import events as ev  # noqa: E402
from siderod.astro.places import stars_from_radec  # noqa: E402
from siderod.astro.sidereal import FastSidereal  # noqa: E402
from tests.astro import test_beams as reference  # noqa: E402
from tests.helpers.horizon_reference import ErfaStar  # noqa: E402

START = 1797249600.0
END = START + 86400.0
SITE = reference.SITES["corrie-hill"]
POINTING = (0.0, 20.0, 1.0, None)  # a 2 deg beam on the meridian at Dec +20


def run_engine(ra, dec):
    sidereal = FastSidereal(START - 600, END + 600)
    track = ev.build_track(stars_from_radec(ra, dec), START, END)
    hp, dp, a, b = POINTING
    return bm.find_beam_events(track, lambda u: sidereal.last_hours(u, SITE.longitude_deg), SITE.latitude_deg,
                               hp, dp, a, START, END, half_width_dec_deg=b)


def main() -> int:
    rng = np.random.default_rng(3)
    n = 100_000
    ra = rng.uniform(0.0, 360.0, n)
    dec = np.degrees(np.arcsin(rng.uniform(-1.0, 1.0, n)))
    times = []
    for _ in range(3):
        t0 = time.perf_counter()
        idx, t, kind, _ = run_engine(ra, dec)
        times.append(time.perf_counter() - t0)
    engine = statistics.median(times)
    met = np.unique(idx).size
    t0 = time.perf_counter()
    for j in range(3):
        star = ErfaStar(ra[j], dec[j], SITE, START, END)
        reference._reference(star, POINTING, START, END)
    per_source = (time.perf_counter() - t0) / 3
    print(f"1e5 stars, one 2-deg beam, 24 h: engine {engine:.3f} s (median of 3; target <= 0.5 s); "
          f"{met} sources meet the beam, {t.size} events")
    print(f"brute force (ERFA every 2 s + bisection): {per_source:.3f} s per source, "
          f"{per_source * n:.0f} s for 1e5; ratio {per_source * n / engine:.0f}x")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
