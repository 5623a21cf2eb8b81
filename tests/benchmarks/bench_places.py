"""Benchmark: observe() for N stars at one instant against astropy's ICRS -> AltAz (refraction on).

Run:  /work/venv/bin/python tests/benchmarks/bench_places.py [--quick]

Prints median milliseconds per call, nanoseconds per star and the ratio astropy / siderod, plus the
largest alt/az difference between the two (astropy applies IERS polar motion and ERFA's refraction
model, so a few arcseconds of difference near 15-20 deg altitude are expected; the accuracy tests
live in tests/astro/test_places.py).  Scenario: the demo site (Corrie Hill Observatory), demo night
2026-12-14 21:00 UTC, seeded random stars uniform over the sphere.
"""

import statistics
import sys
import time
import warnings

import numpy as np

from siderod.astro.places import Observer, observe, stars_from_radec
from siderod.astro.timescales import instants_from_unix

SITE = dict(lat=56.2083, lon=-3.6875, height=212.0)
UNIX = 1797282000.0  # 2026-12-14T21:00:00Z
PRESSURE_HPA, TEMPERATURE_C = 1000.0, 2.0


def _median_seconds(fn, min_samples=5, min_total=0.2):
    fn()  # warm-up
    samples, start = [], time.perf_counter()
    while len(samples) < min_samples or time.perf_counter() - start < min_total:
        t0 = time.perf_counter()
        fn()
        samples.append(time.perf_counter() - t0)
        if len(samples) >= 50:
            break
    return statistics.median(samples)


def main(quick=False):
    from astropy import units as u
    from astropy.coordinates import AltAz, EarthLocation, SkyCoord
    from astropy.time import Time
    from astropy.utils import iers

    iers.conf.auto_download = False
    iers.conf.auto_max_age = None
    rng = np.random.default_rng(42)
    loc = EarthLocation.from_geodetic(SITE["lon"] * u.deg, SITE["lat"] * u.deg, SITE["height"] * u.m)
    obs = Observer(SITE["lat"], SITE["lon"], SITE["height"], PRESSURE_HPA, TEMPERATURE_C)
    print(f"{'N':>9} {'siderod ms':>11} {'ns/star':>8} {'astropy ms':>11} {'ns/star':>8} {'ratio':>7}"
          f" {'dalt_max_arcsec':>15}")
    for n in ([1_000, 100_000] if quick else [1_000, 100_000, 1_000_000]):
        ra, dec = rng.uniform(0, 360, n), np.degrees(np.arcsin(rng.uniform(-1, 1, n)))
        stars = stars_from_radec(ra, dec)
        coord = SkyCoord(ra * u.deg, dec * u.deg, frame="icrs")

        def ours(stars=stars):
            return observe(stars, instants_from_unix(UNIX), obs)

        def theirs(coord=coord):
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                frame = AltAz(obstime=Time(UNIX, format="unix"), location=loc,
                              pressure=PRESSURE_HPA * u.hPa, temperature=TEMPERATURE_C * u.deg_C,
                              relative_humidity=0.0, obswl=0.574 * u.micron)
                return coord.transform_to(frame)

        t_ours = _median_seconds(ours)
        t_theirs = _median_seconds(theirs, min_samples=3)
        pos, ref = ours(), theirs()
        high = ref.alt.deg > 15
        dalt = np.max(np.abs(pos.alt_deg - ref.alt.deg)[high]) * 3600
        print(f"{n:>9} {t_ours * 1e3:>11.2f} {t_ours / n * 1e9:>8.0f} {t_theirs * 1e3:>11.2f}"
              f" {t_theirs / n * 1e9:>8.0f} {t_theirs / t_ours:>6.1f}x {dalt:>15.2f}")


if __name__ == "__main__":
    main(quick="--quick" in sys.argv)
