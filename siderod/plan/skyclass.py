"""The trade's fixed classes of a star for a site: circumpolar, rises and sets, never rises.

These depend only on the site's latitude, the declination and the lowest usable altitude, never
on a time window: a star is circumpolar when even its lower culmination stays above the usable
altitude, and never rises when even its upper culmination stays below it. (The agenda's window
state, "up the whole window", is a different thing and has a name of its own.)
"""

from __future__ import annotations

import numpy as np

__all__ = ["SKY_CLASSES", "culmination_altitudes_deg", "sky_class", "sky_class_codes"]

#: The classes by code, as spelled in JSON.
SKY_CLASSES = ("rises-and-sets", "circumpolar", "never-rises")


def culmination_altitudes_deg(latitude_deg, dec_deg):
    """Geometric altitudes at upper and lower culmination, degrees (any shape; broadcasts).

    Spherical astronomy (common practice): upper = 90 - |lat - dec|, lower = |lat + dec| - 90.
    No refraction, and the declination is taken as fixed (a star, not a moving body).
    """
    lat = np.asarray(latitude_deg, dtype=float)
    dec = np.asarray(dec_deg, dtype=float)
    return 90.0 - np.abs(lat - dec), np.abs(lat + dec) - 90.0


def sky_class_codes(latitude_deg, dec_deg, usable_deg) -> np.ndarray:
    """Codes into :data:`SKY_CLASSES` for arrays of declinations and usable altitudes (degrees)."""
    upper, lower = culmination_altitudes_deg(latitude_deg, dec_deg)
    usable = np.asarray(usable_deg, dtype=float)
    return np.where(lower >= usable, 1, np.where(upper < usable, 2, 0)).astype(np.int8)


def sky_class(latitude_deg: float, dec_deg: float, usable_deg: float) -> str:
    """The class of one star: "circumpolar", "rises-and-sets" or "never-rises".

    >>> sky_class(56.2, 46.0, 10.0)
    'circumpolar'
    """
    return SKY_CLASSES[int(sky_class_codes(latitude_deg, dec_deg, usable_deg))]
