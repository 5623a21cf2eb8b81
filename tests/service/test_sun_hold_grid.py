"""The Sun's altitude for the hold rule: a whole plan's due times from a fine time grid.

The reference is the exact evaluation at each instant by the same routine
(``siderod.astro.sunmoon.observe_sun``, itself checked against ERFA in tests/astro); the grid only
interpolates it.
"""

from __future__ import annotations

from dataclasses import replace
from datetime import UTC, datetime, timedelta

import numpy as np

# Linear interpolation over the 15 s grid step: the error is largest near the horizon, where the
# refraction's bend (and the kink where it is cut off) is not smooth (measured 1.1e-3 deg; 4e-3 deg
# with a 60 s step); 2e-3 deg is half a second of the Sun's motion at most.
GRID_TOLERANCE_DEG = 2e-3


def test_many_due_times_are_interpolated_from_a_grid_within_tolerance(demo_config):
    from siderod.astro.sunmoon import observe_sun
    from siderod.astro.timescales import instants_from_unix
    from siderod.plan.positions import observer_for
    from siderod.service.daemon import SUN_GRID_SECONDS, _sun_altitude_function

    config = replace(demo_config, alerts=replace(demo_config.alerts, hold_while_sun_above_deg=-6.0))
    sun_alt_deg = _sun_altitude_function(config)
    rng = np.random.default_rng(20261214)
    start = datetime(2026, 12, 14, 12, 0, tzinfo=UTC)
    when = [start + timedelta(seconds=float(s)) for s in np.sort(rng.uniform(0, 36 * 3600, 12_000))]
    got = np.asarray(sun_alt_deg(when))
    unix = [w.timestamp() for w in when]
    exact = observe_sun(instants_from_unix(unix, dut1_seconds=config.time.dut1_seconds),
                        observer_for(config)).alt_deg
    assert len(when) > 36 * 3600 / SUN_GRID_SECONDS  # more instants than grid points: the grid is used
    assert np.max(np.abs(got - exact)) < GRID_TOLERANCE_DEG
    few = when[:5]  # a handful is computed exactly
    assert np.allclose(sun_alt_deg(few), exact[:5], rtol=0, atol=1e-9)
