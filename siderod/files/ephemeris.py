"""Open the bundled JPL ephemeris (DE421 from the ``skyfield-data`` package) once per process.

This is an edge module: it finds the kernel file with ``importlib.resources`` and opens it with
``jplephem``; the pure core (:mod:`siderod.astro.ephemeris`) only ever sees the opened segments.
Nothing is downloaded: the kernel ships inside the installed package. Opening is lazy and cached,
so a configuration with only fixed targets never reads the file.
"""

from __future__ import annotations

import functools
from pathlib import Path

from siderod.astro.ephemeris import Ephemeris, ephemeris_from_segments

__all__ = ["KERNEL_NAME", "kernel_path", "load_ephemeris"]

#: The kernel used: JPL DE421 (1900-2050), as shipped by the skyfield-data package.
KERNEL_NAME = "de421.bsp"


def kernel_path() -> Path:
    """Where the bundled kernel file is (inside the installed ``skyfield_data`` package)."""
    import importlib.resources

    return Path(str(importlib.resources.files("skyfield_data") / "data" / KERNEL_NAME))


@functools.cache
def load_ephemeris() -> Ephemeris:
    """The bundled ephemeris, opened on first use and kept for the life of the process.

    Raises:
        FileNotFoundError: the kernel is missing (the ``skyfield-data`` package is not installed).
    """
    from jplephem.spk import SPK

    path = kernel_path()
    if not path.exists():
        raise FileNotFoundError(f"the planetary ephemeris {path} is missing; reinstall siderod so that its "
                                "dependency skyfield-data is installed (pip install skyfield-data)")
    kernel = SPK.open(str(path))
    import atexit

    atexit.register(kernel.close)  # kept open for the process's life; closed quietly at exit
    return ephemeris_from_segments(kernel.segments, KERNEL_NAME)
