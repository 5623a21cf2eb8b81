"""Targets that move: planets, the Moon (from the ephemeris) and comets/asteroids (from elements).

Pure: the ephemeris comes in as an argument (``Config.ephemeris``, a loader set at the edge that
opens the kernel on first call), never from a file here. Arrays go out, one column per target.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from siderod.astro.ephemeris import Ephemeris, apparent_geocentric, body_position_fn
from siderod.astro.orbits import OrbitalElements, asteroid_magnitude, comet_magnitude, minor_body_apparent
from siderod.common.model import Config, Frame, Target

__all__ = ["MovingPlaces", "ephemeris_for", "is_moving", "moving_places"]


def is_moving(target: Target) -> bool:
    """True for a planet, the Moon, a comet or an asteroid."""
    return target.frame in (Frame.BODY, Frame.ORBIT)


def ephemeris_for(config: Config) -> Ephemeris:
    """The configuration's ephemeris (opened on first use by the loader the edge put in the config).

    Raises:
        ValueError: the configuration carries no ephemeris loader (built by hand without one).
    """
    loader = getattr(config, "ephemeris", None)
    if loader is None:
        raise ValueError("this configuration has moving targets (planets, the Moon, comets or asteroids) "
                         "but no ephemeris; build it with siderod.files.config or pass ephemeris=")
    return loader()


@dataclass(frozen=True, eq=False)
class MovingPlaces:
    """Geocentric apparent places of N moving targets at M instants.

    Attributes:
        unit_xyz: (3, M, N) apparent direction of date (true equator and equinox).
        distance_au: (M, N) geocentric distance, au.
        sun_distance_au: (M, N) heliocentric distance, au (nan for the Moon and planets: unused).
        magnitude: (M, N) estimated visual magnitude (nan when the target has no H).
    """

    unit_xyz: np.ndarray
    distance_au: np.ndarray
    sun_distance_au: np.ndarray
    magnitude: np.ndarray


def moving_places(ephemeris: Ephemeris, targets: Sequence[Target], instants) -> MovingPlaces:
    """Apparent places of moving targets.

    Args:
        ephemeris: the opened planetary ephemeris.
        targets: N targets, each a ``Frame.BODY`` or ``Frame.ORBIT`` target.
        instants: M instants, shape (M, 1).

    Returns:
        MovingPlaces.
    """
    m = np.shape(instants.tt_whole)[0]
    n = len(targets)
    xyz = np.zeros((3, m, n))
    delta = np.zeros((m, n))
    r = np.full((m, n), np.nan)
    mag = np.full((m, n), np.nan)
    flat = instants[:, 0] if np.ndim(instants.tt_whole) == 2 else instants
    for j, target in enumerate(targets):
        if target.frame is Frame.BODY:
            position = body_position_fn(ephemeris, target.body)
            xyz[:, :, j], delta[:, j] = apparent_geocentric(ephemeris, position, flat)
    orbit_index = [j for j, t in enumerate(targets) if t.frame is Frame.ORBIT]
    if orbit_index:
        specs = [targets[j].orbit for j in orbit_index]
        elements = OrbitalElements(
            q_au=[s.q_au for s in specs], e=[s.e for s in specs], i_deg=[s.i_deg for s in specs],
            node_deg=[s.node_deg for s in specs], peri_deg=[s.peri_deg for s in specs],
            tp_jd_tt=[s.tp_jd_tt for s in specs], epoch_jd_tt=[s.epoch_jd_tt for s in specs])
        u, d, rr = minor_body_apparent(ephemeris, elements, instants)
        xyz[:, :, orbit_index], delta[:, orbit_index], r[:, orbit_index] = u, d, rr
        # Phase angle Sun-body-Earth from the triangle's sides: r, delta and the Earth-Sun distance.
        earth = ephemeris.state_au("earth", flat.tt_whole, flat.tt_frac)[0]
        sun = ephemeris.state_au("sun", flat.tt_whole, flat.tt_frac)[0]
        big_r = np.linalg.norm(earth - sun, axis=0)[:, None]
        cos_phase = np.clip((rr * rr + d * d - big_r * big_r) / (2.0 * rr * d), -1.0, 1.0)
        phase_deg = np.degrees(np.arccos(cos_phase))
        for k, spec in enumerate(specs):
            if spec.h_mag is None:
                continue
            col = orbit_index[k]
            if spec.kind == "comet":
                slope = 4.0 if spec.slope is None else spec.slope  # K = 4 is the usual default
                mag[:, col] = comet_magnitude(spec.h_mag, slope, rr[:, k], d[:, k])
            else:
                slope = 0.15 if spec.slope is None else spec.slope
                mag[:, col] = asteroid_magnitude(spec.h_mag, slope, rr[:, k], d[:, k], phase_deg[:, k])
    return MovingPlaces(unit_xyz=xyz, distance_au=delta, sun_distance_au=r, magnitude=mag)
