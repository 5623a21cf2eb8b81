"""Median wall time of whole commands, each a fresh process: shared by the start-up benchmarks.

Imported by bench_startup.py and bench_push_config.py (run as scripts, so this folder is on
``sys.path``).
"""

from __future__ import annotations

import statistics
import subprocess
import time
from collections.abc import Mapping, Sequence


def median_wall_seconds(cases: Mapping[str, Sequence[str]], runs: int, *,
                        width: int = 55) -> dict[str, float]:
    """Run every command ``runs`` times (after one untimed run that warms the file cache); print
    each median with its min and max; return the medians in seconds by case name."""
    medians = {}
    for name, argv in cases.items():
        subprocess.run(argv, capture_output=True)
        samples = []
        for _ in range(runs):
            start = time.perf_counter()
            subprocess.run(argv, capture_output=True)
            samples.append(time.perf_counter() - start)
        medians[name] = statistics.median(samples)
        print(f"{name:{width}s} median {medians[name] * 1000:7.0f} ms  (min {min(samples) * 1000:.0f}, "
              f"max {max(samples) * 1000:.0f})")
    return medians
