"""Benchmark: the whole deep-sky catalogue ranked for one night, as a whole process and in parts.

Run:  python tests/benchmarks/bench_shortlist.py [--runs 5] [--sample 200]

1. ``siderod shortlist --catalogue --json`` on the demo night in a fresh interpreter (imports,
   configuration, catalogue load, ranking, output), median of --runs; the aim is at most 1 s.
2. The same work in one process, split into its parts, to show the catalogue load's share.
3. The brute-force reference: astropy ``AltAz`` (test-only; offline, bundled IERS tables) on the
   same 5-minute grid for a --sample of catalogue objects, scaled to the whole catalogue, and the
   ratio. Run it on a quiet machine: figures under load are inflated by the other processes.
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import time
import warnings
from pathlib import Path

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")  # as `siderod` itself sets before numpy loads
REPO = Path(__file__).resolve().parents[2]
AT = "2026-12-14T17:00:00Z"  # the demo evening
AT_UNIX = 1797267600.0


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=5)
    parser.add_argument("--sample", type=int, default=200)
    args = parser.parse_args()
    env = dict(os.environ, PYTHONPATH=str(REPO))
    argv = [sys.executable, "-m", "siderod", "shortlist", "--catalogue", "--at", AT, "--json",
            "--limit", "20"]
    subprocess.run(argv, capture_output=True, env=env, check=True)  # warm the file cache
    import resource

    walls, cpus = [], []
    for _ in range(args.runs):
        before = resource.getrusage(resource.RUSAGE_CHILDREN)
        start = time.perf_counter()
        subprocess.run(argv, capture_output=True, env=env, check=True)
        walls.append(time.perf_counter() - start)
        after = resource.getrusage(resource.RUSAGE_CHILDREN)
        cpus.append(after.ru_utime - before.ru_utime + after.ru_stime - before.ru_stime)
    floor = []
    for _ in range(args.runs):
        start = time.perf_counter()
        subprocess.run([sys.executable, "-c", "pass"], capture_output=True, check=True)
        floor.append(time.perf_counter() - start)
    whole = statistics.median(walls)
    print(f"whole process, siderod shortlist --catalogue --json: {whole:.3f} s median of {args.runs} "
          f"(interpreter floor {statistics.median(floor):.3f} s); aim <= 1 s")
    print(f"  CPU time of that process (user + system, unaffected by other load): "
          f"{statistics.median(cpus):.3f} s; load average now {os.getloadavg()[0]:.1f}")

    parts = {}
    t0 = time.perf_counter()
    from siderod.astro.places import stars_from_radec
    from siderod.files.catalogue import open_catalogue
    from siderod.files.config import load_config
    from siderod.plan.nightlist import GRID_STEP_SECONDS, find_dark_window, rank_night
    from siderod.plan.positions import observer_for

    parts["imports (numpy, siderod)"] = time.perf_counter() - t0
    t0 = time.perf_counter()
    config = load_config(str(REPO / "siderod" / "demo" / "demo.toml"), {})
    observer = observer_for(config)
    window = find_dark_window(observer, AT_UNIX)
    parts["configuration and dark window"] = time.perf_counter() - t0
    t0 = time.perf_counter()
    arrays = open_catalogue().arrays()
    parts["catalogue load (SQLite -> arrays)"] = time.perf_counter() - t0
    t0 = time.perf_counter()
    stars = stars_from_radec(arrays.ra_deg, arrays.dec_deg)
    rank_night(stars, config.events.min_altitude_deg, window, observer, config.site, flip_after_minutes=10.0)
    parts[f"ranking {arrays.ra_deg.size} objects over {window.hours:.1f} h"] = time.perf_counter() - t0
    total = sum(parts.values())
    print(f"in one process: {total:.3f} s")
    for name, seconds in parts.items():
        print(f"  {name:45s} {seconds:7.3f} s  {seconds / total:5.1%}")
    ranking = list(parts.values())[-1]

    import numpy as np
    from astropy import units as u
    from astropy.coordinates import AltAz, EarthLocation, SkyCoord
    from astropy.time import Time
    from astropy.utils import iers

    iers.conf.auto_download = False
    site = config.site
    location = EarthLocation.from_geodetic(site.longitude_deg * u.deg, site.latitude_deg * u.deg,
                                           site.elevation_m * u.m)
    count = int(np.ceil((window.end_unix - window.start_unix) / GRID_STEP_SECONDS)) + 1
    times = Time(np.linspace(window.start_unix, window.end_unix, count), format="unix", scale="utc")
    pick = np.random.default_rng(1).choice(arrays.ra_deg.size, args.sample, replace=False)
    t0 = time.perf_counter()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        coords = SkyCoord(ra=arrays.ra_deg[pick, None] * u.deg, dec=arrays.dec_deg[pick, None] * u.deg)
        coords.transform_to(AltAz(obstime=times[None, :], location=location))
    reference = (time.perf_counter() - t0) * arrays.ra_deg.size / args.sample
    print(f"astropy AltAz on the same grid, {args.sample} objects scaled to {arrays.ra_deg.size}: "
          f"{reference:.1f} s (altitudes only); ours, every figure: {ranking:.3f} s; "
          f"ratio {reference / ranking:.0f}x")


if __name__ == "__main__":
    main()
