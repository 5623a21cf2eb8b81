"""The trade's fixed classes: circumpolar and never rises, from latitude, declination and usable altitude.

The window's own state ("up the whole window") is a different thing and has a name of our own;
"circumpolar" and "never rises" are used only in their fixed meaning.
"""

from __future__ import annotations

import math

import erfa
import pytest

from siderod.plan.skyclass import culmination_altitudes_deg, sky_class

#: erfa.hd2ae and the closed form agree to round-off.
ALTITUDE_TOL_DEG = 1e-9


@pytest.mark.parametrize("lat", [56.208333, -32.378, 78.2, 0.0, -89.9])
@pytest.mark.parametrize("dec", [38.78, 24.12, 0.0, -5.39, -50.0, 46.0, 89.0])
def test_culmination_altitudes_match_erfa_hd2ae(lat, dec):
    # Reference: erfa.hd2ae (SOFA iauHd2ae) at hour angle 0 and 12 h.
    upper, lower = culmination_altitudes_deg(lat, dec)
    _, alt0 = erfa.hd2ae(0.0, math.radians(dec), math.radians(lat))
    _, alt12 = erfa.hd2ae(math.pi, math.radians(dec), math.radians(lat))
    assert upper == pytest.approx(math.degrees(alt0), abs=ALTITUDE_TOL_DEG)
    assert lower == pytest.approx(math.degrees(alt12), abs=ALTITUDE_TOL_DEG)


def test_the_issue_examples_at_the_demo_site():
    lat = 56.208333  # Corrie Hill (invented site)
    assert sky_class(lat, 38.78, 10.0) == "rises-and-sets"  # Vega: lowest +5.0 deg, below 10
    assert sky_class(lat, 38.78, 0.0) == "circumpolar"  # ... but above a 0-deg limit
    assert sky_class(lat, 24.12, 10.0) == "rises-and-sets"  # M45 dips to -9.7 deg
    assert sky_class(lat, 0.0, 10.0) == "rises-and-sets"
    assert sky_class(lat, -5.39, 10.0) == "rises-and-sets"  # M42
    assert sky_class(lat, 46.0, 10.0) == "circumpolar"  # Capella: lowest +12.2 deg
    assert sky_class(lat, -50.0, 10.0) == "never-rises"
