"""Benchmark: sidereal time for 1e6 instants over one night, ours against pyerfa.

Run:  /work/venv/bin/python tests/benchmarks/bench_sidereal.py
Prints wall times (median of a few runs) for 1e6 instants: our exact IAU 2006 GMST, our FastSidereal
LAST (IAU 2000A nutation, the default), pyerfa gmst06, and the per-instant apparent models -- pyerfa
gst06a, our exact GAST with IAU 2000A and with IAU 2000B nutation -- timed on 1e4 instants and scaled,
since they cost ~5-50 us per instant. Then their ratios and the largest errors against gst06a.
pyerfa is a test-only reference.
"""

import datetime as dt
import statistics
import time

import erfa
import numpy as np

from siderod.astro.sidereal import FastSidereal, gast_rad, gmst_rad
from siderod.astro.timescales import instants_from_unix

N = 1_000_000
N_GST06A = 10_000
US_OF_TIME_PER_RAD = 43200.0 / np.pi * 1e6
LON_DEG = -(3 + 41 / 60 + 15 / 3600)  # Corrie Hill Observatory (invented demo site)
START = dt.datetime(2026, 12, 14, 16, 0, tzinfo=dt.UTC).timestamp()
END = dt.datetime(2026, 12, 15, 9, 0, tzinfo=dt.UTC).timestamp()
DUT1 = 0.08


def _median_seconds(fn, repeat=5):
    fn()  # warm-up
    runs = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        runs.append(time.perf_counter() - t0)
    return statistics.median(runs)


def _abs_wrapped_rad(diff_rad):
    return np.abs((diff_rad + np.pi) % (2 * np.pi) - np.pi)


def main() -> None:
    rng = np.random.default_rng(1)
    unix = rng.uniform(START, END, N)
    inst = instants_from_unix(unix, dut1_seconds=DUT1)
    u1, u2, t1, t2 = inst.ut1_whole, inst.ut1_frac, inst.tt_whole, inst.tt_frac

    fast = FastSidereal(START, END, dut1_seconds=DUT1)
    t_build = _median_seconds(lambda: FastSidereal(START, END, dut1_seconds=DUT1))
    t_build_b = _median_seconds(lambda: FastSidereal(START, END, dut1_seconds=DUT1, nutation="2000B"))
    t_build_30d = _median_seconds(lambda: FastSidereal(START, START + 30 * 86400.0, dut1_seconds=DUT1),
                                  repeat=3)
    t_ours_gmst = _median_seconds(lambda: gmst_rad(u1, u2, t1, t2))
    t_fast = _median_seconds(lambda: fast.last_hours(unix, LON_DEG))
    t_fast_mean = _median_seconds(lambda: fast.lmst_hours(unix, LON_DEG))
    t_erfa_gmst = _median_seconds(lambda: erfa.gmst06(u1, u2, t1, t2))
    few = slice(0, N_GST06A)
    t_erfa_gst_few = _median_seconds(lambda: erfa.gst06a(u1[few], u2[few], t1[few], t2[few]), repeat=3)
    t_erfa_gst = t_erfa_gst_few * (N / N_GST06A)
    scale = N / N_GST06A
    t_gast_a = _median_seconds(lambda: gast_rad(u1[few], u2[few], t1[few], t2[few]), repeat=3) * scale
    t_gast_b = _median_seconds(lambda: gast_rad(u1[few], u2[few], t1[few], t2[few], nutation="2000B"),
                               repeat=3) * scale

    # Accuracy of FastSidereal LAST against pyerfa gst06a (+ longitude) on 2e4 instants of the night.
    check = rng.choice(N, 20_000, replace=False)
    c1, c2, c3, c4 = u1[check], u2[check], t1[check], t2[check]
    ref_rad = erfa.gst06a(c1, c2, c3, c4)
    ref_hours = ref_rad * 12 / np.pi + LON_DEG / 15
    diff_h = (fast.last_hours(unix[check], LON_DEG) - ref_hours + 12.0) % 24.0 - 12.0
    exact_err = np.abs(
        ((gmst_rad(u1, u2, t1, t2) - erfa.gmst06(u1, u2, t1, t2)) + np.pi) % (2 * np.pi) - np.pi
    )
    gast_a_us = _abs_wrapped_rad(gast_rad(c1, c2, c3, c4) - ref_rad) * US_OF_TIME_PER_RAD
    gast_b_us = _abs_wrapped_rad(gast_rad(c1, c2, c3, c4, nutation="2000B") - ref_rad) * US_OF_TIME_PER_RAD

    print(f"sidereal time for {N:,} instants over the night 2026-12-14 16:00 .. 2026-12-15 09:00 UTC")
    print(f"  FastSidereal build, night, 2000A        {t_build * 1e3:9.2f} ms")
    print(f"  FastSidereal build, night, 2000B        {t_build_b * 1e3:9.2f} ms")
    print(f"  FastSidereal build, 30 days, 2000A      {t_build_30d * 1e3:9.2f} ms")
    print(f"  ours: exact IAU 2006 GMST (gmst_rad)    {t_ours_gmst * 1e3:9.2f} ms")
    print(f"  ours: FastSidereal.last_hours           {t_fast * 1e3:9.2f} ms")
    print(f"  ours: FastSidereal.lmst_hours           {t_fast_mean * 1e3:9.2f} ms")
    print(f"  pyerfa gmst06                           {t_erfa_gmst * 1e3:9.2f} ms")
    print(f"  pyerfa gst06a (1e4 timed, x100)         {t_erfa_gst * 1e3:9.0f} ms")
    print(f"  ours: exact GAST 2000A (1e4, x100)      {t_gast_a * 1e3:9.0f} ms")
    print(f"  ours: exact GAST 2000B (1e4, x100)      {t_gast_b * 1e3:9.0f} ms")
    print("ratios")
    print(f"  erfa.gmst06 / ours exact GMST           {t_erfa_gmst / t_ours_gmst:9.2f} x")
    print(f"  erfa.gmst06 / FastSidereal LAST         {t_erfa_gmst / t_fast:9.2f} x")
    print(f"  erfa.gst06a / FastSidereal LAST         {t_erfa_gst / t_fast:9.0f} x")
    print(f"  erfa.gst06a / ours exact GAST 2000A     {t_erfa_gst / t_gast_a:9.2f} x")
    print("accuracy (against pyerfa, 2e4 instants of the night)")
    print(f"  FastSidereal LAST vs gst06a, max        {np.abs(diff_h).max() * 3.6e9:9.4f} us of time")
    print(f"  exact GAST 2000A vs gst06a, max         {gast_a_us.max():9.4f} us of time")
    print(f"  exact GAST 2000B vs gst06a, max         {gast_b_us.max():9.4f} us of time")
    print(f"  exact GMST vs gmst06, max               {exact_err.max():9.2e} rad")


if __name__ == "__main__":
    main()
