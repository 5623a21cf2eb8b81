"""Where every target, the Sun and the Moon are for one site at one instant: one vectorised call.

Pure: a :class:`~siderod.common.model.Config` and POSIX seconds in, a :class:`SkyState` of arrays out.
No clock, no files (DUT1 comes from ``config.time.dut1_seconds``; the CLI looks it up for the
instant with :func:`siderod.files.config.dut1_at` first).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from operator import attrgetter

import numpy as np

from siderod.astro.angles import wrap_hours_12, wrap_hours_24
from siderod.astro.events import AltitudeLimit
from siderod.astro.places import Observer, Stars, hadec_to_altaz, observe, stars_from_radec
from siderod.astro.refraction import airmass, refraction_from_true_deg
from siderod.astro.sidereal import last_hours, lmst_hours
from siderod.astro.sunmoon import moon_illuminated_fraction, observe_moon, observe_sun, sun_separation_deg
from siderod.astro.timescales import instants_from_unix
from siderod.common.model import Config, Frame, Site, Target

__all__ = [
    "TWILIGHT_LIMITS_DEG",
    "SkyState",
    "altitude_limit",
    "compute_sky",
    "horizon_altitude_deg",
    "observer_for",
    "target_stars",
    "twilight_name",
]

#: Sun altitude (geometric, centre) at which each part of the night begins, degrees: sunset and
#: sunrise at -0.833 deg (16' semi-diameter plus 34' refraction), then the civil, nautical and
#: astronomical limits at -6, -12 and -18 deg (common practice).
TWILIGHT_LIMITS_DEG = (("day", -0.833), ("civil", -6.0), ("nautical", -12.0), ("astronomical", -18.0))


@dataclass(frozen=True, eq=False)
class SkyState:
    """The sky over one site at one instant.

    Per-target arrays have shape (N,), in the order of the targets given.

    Attributes:
        names: target names.
        frames: each target's frame (``Frame.value``).
        ra_hours: apparent topocentric RA of date, hours [0, 24).
        dec_deg: apparent topocentric Dec of date, degrees.
        ha_hours: local hour angle, hours [-12, 12), positive west of the meridian.
        alt_deg: altitude, degrees (refracted when ``[events] refraction`` is on).
        az_deg: azimuth from north through east, degrees [0, 360).
        airmass: Pickering (2002) airmass; nan below the horizon.
        rising: True while the altitude is increasing (east of the meridian); False for fixed
            hour-angle pointings, whose altitude does not change.
        min_alt_deg: the lowest usable altitude here and now: the larger of the target's (or the
            global) ``min_altitude`` and the horizon profile at the target's azimuth (without a
            profile, the ``min_altitude`` alone) -- :func:`altitude_limit`, the agenda's definition.
            A target is usable when ``alt_deg >= min_alt_deg`` and below its limit otherwise.
        sun_separation_deg: angular distance from the Sun's centre, degrees.
        unix_seconds, jd_utc, dut1_seconds: the instant, and the DUT1 used.
        lmst_hours, last_hours: local mean and apparent sidereal time, hours [0, 24).
        sun_alt_deg, sun_az_deg, moon_alt_deg, moon_az_deg: topocentric, refracted like targets.
        moon_illuminated_fraction: 0 (new) to 1 (full).
        twilight: "day", "civil", "nautical", "astronomical" or "night" (see TWILIGHT_LIMITS_DEG).
        magnitude: estimated visual magnitude of comets and asteroids with H given; nan otherwise.
        distance_au: geocentric distance of moving targets, au; nan for fixed ones.
        elements_epoch_jd_tt: osculation epoch of orbital-element targets (JD, TT); nan otherwise.
    """

    names: tuple[str, ...]
    frames: tuple[str, ...]
    ra_hours: np.ndarray
    dec_deg: np.ndarray
    ha_hours: np.ndarray
    alt_deg: np.ndarray
    az_deg: np.ndarray
    airmass: np.ndarray
    rising: np.ndarray
    min_alt_deg: np.ndarray
    sun_separation_deg: np.ndarray
    unix_seconds: float
    jd_utc: float
    dut1_seconds: float
    lmst_hours: float
    last_hours: float
    sun_alt_deg: float
    sun_az_deg: float
    moon_alt_deg: float
    moon_az_deg: float
    moon_illuminated_fraction: float
    twilight: str
    magnitude: np.ndarray | None = None
    distance_au: np.ndarray | None = None
    elements_epoch_jd_tt: np.ndarray | None = None


def compute_sky(config: Config, unix_seconds: float, *, targets: Sequence[Target] | None = None) -> SkyState:
    """Positions of the targets, Sun and Moon for ``config.site`` at one instant.

    Args:
        config: the configuration (site, targets, refraction switch, DUT1).
        unix_seconds: the instant, POSIX seconds (UTC).
        targets: the targets to place; ``config.targets`` when None.

    Returns:
        A :class:`SkyState`.
    """
    targets = tuple(config.targets if targets is None else targets)
    columns = _target_columns(targets)
    site = config.site
    observer = observer_for(config)
    instants = instants_from_unix(float(unix_seconds), dut1_seconds=config.time.dut1_seconds)
    n = len(targets)
    ra = np.zeros(n)
    dec = np.zeros(n)
    ha = np.zeros(n)
    alt = np.zeros(n)
    az = np.zeros(n)
    rising = np.zeros(n, dtype=bool)
    last = float(last_hours(instants, site.longitude_deg))

    sky_index, moving_index, fixed_index = columns.sky_index, columns.moving_index, columns.fixed_index
    magnitude = np.full(n, np.nan)
    distance_au = np.full(n, np.nan)
    if moving_index.size:
        # Imported only when a target moves, so star-only runs stay as quick to start as before.
        from siderod.astro.ephemeris import observe_apparent
        from siderod.plan.moving import ephemeris_for, moving_places

        ephemeris = ephemeris_for(config)
        places = moving_places(ephemeris, [targets[i] for i in moving_index],
                               instants_from_unix(np.array([[float(unix_seconds)]]),
                                                  dut1_seconds=config.time.dut1_seconds))
        seen = observe_apparent(places.unit_xyz[:, 0, :], places.distance_au[0], instants, observer)
        ra[moving_index], dec[moving_index] = seen.ra_hours, seen.dec_deg
        ha[moving_index], alt[moving_index], az[moving_index] = seen.ha_hours, seen.alt_deg, seen.az_deg
        rising[moving_index] = np.asarray(seen.ha_hours) < 0.0
        magnitude[moving_index] = places.magnitude[0]
        distance_au[moving_index] = places.distance_au[0]
    if sky_index.size:
        jd_tt = float(instants.tt_whole) + float(instants.tt_frac)
        stars = columns.stars
        if stars is None:  # ecliptic-of-date places move with the equinox: made for this instant
            stars = target_stars([targets[i] for i in sky_index], jd_tt)
        seen = observe(stars, instants, observer)
        ra[sky_index], dec[sky_index] = seen.ra_hours, seen.dec_deg
        ha[sky_index], alt[sky_index], az[sky_index] = seen.ha_hours, seen.alt_deg, seen.az_deg
        rising[sky_index] = np.asarray(seen.ha_hours) < 0.0
    if fixed_index.size:
        # A fixed hour-angle pointing is already topocentric and of date: only the horizon
        # transform and refraction apply.
        ha_fixed, dec_fixed = columns.ha_fixed_hours, columns.dec_fixed_deg
        alt_true, az_fixed = hadec_to_altaz(ha_fixed, dec_fixed, site.latitude_deg)
        if observer.refraction:
            alt_true = alt_true + refraction_from_true_deg(alt_true, observer.effective_pressure_hpa,
                                                           site.temperature_c)
        ha[fixed_index] = wrap_hours_12(ha_fixed)
        dec[fixed_index] = dec_fixed
        alt[fixed_index], az[fixed_index] = alt_true, az_fixed
        ra[fixed_index] = wrap_hours_24(last - ha_fixed)

    sun = observe_sun(instants, observer)
    moon = observe_moon(instants, observer)
    sun_geometric = float(sun.alt_geometric_deg)
    return SkyState(
        names=columns.names,
        frames=columns.frames,
        ra_hours=ra,
        dec_deg=dec,
        ha_hours=ha,
        alt_deg=alt,
        az_deg=az,
        airmass=np.asarray(airmass(alt), dtype=float).reshape(n),
        rising=rising,
        min_alt_deg=np.asarray(_limit_from_floor(config, np.where(np.isnan(columns.min_altitude_deg),
                                                                  config.events.min_altitude_deg,
                                                                  columns.min_altitude_deg))
                               .observed_deg(az), dtype=float).reshape(n),
        sun_separation_deg=np.asarray(sun_separation_deg(ra, dec, instants), dtype=float).reshape(n),
        unix_seconds=float(unix_seconds),
        jd_utc=float(instants.utc_whole) + float(instants.utc_frac),
        dut1_seconds=float(config.time.dut1_seconds),
        lmst_hours=float(lmst_hours(instants, site.longitude_deg)),
        last_hours=last,
        sun_alt_deg=float(sun.alt_deg),
        sun_az_deg=float(sun.az_deg),
        moon_alt_deg=float(moon.alt_deg),
        moon_az_deg=float(moon.az_deg),
        moon_illuminated_fraction=float(moon_illuminated_fraction(instants)),
        twilight=twilight_name(sun_geometric),
        magnitude=magnitude,
        distance_au=distance_au,
        elements_epoch_jd_tt=columns.elements_epoch_jd_tt.copy(),
    )


@dataclass(frozen=True, eq=False)
class _TargetColumns:
    """What :func:`compute_sky` reads from the target records, as arrays, once per target list."""

    names: tuple[str, ...]
    frames: tuple[str, ...]
    sky_index: np.ndarray  # catalogue places
    moving_index: np.ndarray  # planets, the Moon, orbital elements
    fixed_index: np.ndarray  # fixed hour-angle pointings
    stars: Stars | None  # of the catalogue places; None when one is ecliptic-of-date (made per instant)
    ha_fixed_hours: np.ndarray
    dec_fixed_deg: np.ndarray
    min_altitude_deg: np.ndarray  # each target's own, NaN where the [events] one applies
    elements_epoch_jd_tt: np.ndarray


_COLUMNS_MEMO: tuple[tuple[Target, ...] | None, _TargetColumns | None] = (None, None)


def _target_columns(targets: tuple[Target, ...]) -> _TargetColumns:
    # Memoised on the identity of the targets tuple (the configuration's own, unchanged between
    # reloads), so that the live board's positions each second cost no loop over 5,000 records.
    # One tuple assignment publishes it, so threads computing positions at once never see half.
    global _COLUMNS_MEMO  # noqa: PLW0603 -- a one-entry memo
    memo_targets, memo = _COLUMNS_MEMO
    if memo_targets is targets and memo is not None:
        return memo
    frames = [t.frame for t in targets]
    fixed = np.array([f is Frame.HADEC for f in frames], dtype=bool)
    moving = np.array([f in (Frame.BODY, Frame.ORBIT) for f in frames], dtype=bool)
    sky_index = np.flatnonzero(~fixed & ~moving)
    fixed_index = np.flatnonzero(fixed)
    stars = None
    if sky_index.size and not any(frames[i] is Frame.ECLIPTIC_OF_DATE for i in sky_index.tolist()):
        stars = target_stars([targets[i] for i in sky_index], 0.0)  # jd_tt unused without ecliptic places
    columns = _TargetColumns(
        names=tuple(t.name for t in targets),
        frames=tuple(f.value for f in frames),
        sky_index=sky_index,
        moving_index=np.flatnonzero(moving),
        fixed_index=fixed_index,
        stars=stars,
        ha_fixed_hours=np.array([targets[i].ha_hours for i in fixed_index], dtype=float),
        dec_fixed_deg=np.array([targets[i].dec_deg for i in fixed_index], dtype=float),
        min_altitude_deg=_floats(targets, "min_altitude_deg"),  # None (the [events] one) reads as NaN
        elements_epoch_jd_tt=np.array([t.orbit.epoch_jd_tt if t.orbit is not None else np.nan
                                       for t in targets], dtype=float),
    )
    _COLUMNS_MEMO = (targets, columns)
    return columns


def observer_for(config: Config) -> Observer:
    """The :class:`~siderod.astro.places.Observer` for the configured site and refraction switch."""
    site = config.site
    return Observer(latitude_deg=site.latitude_deg, longitude_deg=site.longitude_deg,
                    elevation_m=site.elevation_m, pressure_hpa=site.pressure_hpa,
                    temperature_c=site.temperature_c, refraction=config.events.refraction)


def altitude_limit(config: Config, targets: Sequence[Target]) -> AltitudeLimit:
    """Each target's lowest usable altitude: the one definition ``now``, the board and the agenda use.

    ``max(horizon profile at the azimuth, the target's min_altitude or the [events] one)``; without a
    profile only the min_altitude counts. Limits are observed altitudes; the refraction settings
    say how :class:`~siderod.astro.events.AltitudeLimit` turns them into geometric ones.
    """
    floor = _floats(targets, "min_altitude_deg")  # None (the [events] one) reads as NaN
    floor[np.isnan(floor)] = config.events.min_altitude_deg
    return _limit_from_floor(config, floor)


def _limit_from_floor(config: Config, floor: np.ndarray) -> AltitudeLimit:
    profile = np.array(config.site.horizon, dtype=float).reshape(-1, 2)
    observer = observer_for(config)
    return AltitudeLimit(min_alt_deg=floor, profile_az_deg=profile[:, 0], profile_alt_deg=profile[:, 1],
                         refraction=bool(config.events.refraction and observer.effective_pressure_hpa > 0),
                         pressure_hpa=observer.effective_pressure_hpa, temperature_c=observer.temperature_c)


def horizon_altitude_deg(site: Site, az_deg):
    """Lowest usable altitude of the site's horizon profile at azimuth ``az_deg``.

    The profile's points are joined by straight lines in azimuth, wrapping through north; with no
    profile the horizon is flat at 0 deg.

    Args:
        site: the site (``site.horizon``: (azimuth_deg, altitude_deg) points, sorted by azimuth).
        az_deg (array_like): azimuth, degrees from north through east, any shape.

    Returns:
        ndarray: altitude in degrees, same shape as ``az_deg``.

    >>> site = Site("x", 0.0, 0.0, horizon=((0.0, 10.0), (90.0, 20.0)))
    >>> horizon_altitude_deg(site, [45.0, 225.0, 315.0]).round(3).tolist()
    [15.0, 15.0, 11.667]
    """
    az = np.asarray(az_deg, dtype=float) % 360.0
    if not site.horizon:
        return np.zeros_like(az)
    points = np.array(site.horizon, dtype=float)
    az_points = np.concatenate([points[:, 0] - 360.0, points[:, 0], points[:, 0] + 360.0])
    alt_points = np.tile(points[:, 1], 3)
    return np.interp(az, az_points, alt_points)


def target_stars(targets: Sequence[Target], jd_tt: float) -> Stars:
    """Catalogue places (ICRS + space motion) of sky targets, for :func:`siderod.astro.places.observe`.

    Ecliptic-of-date targets are converted with the mean ecliptic and equinox of ``jd_tt``; the
    others use their ICRS place from load time.

    Args:
        targets: targets of any frame except ``Frame.HADEC`` (fixed pointings have no catalogue place).
        jd_tt: Julian date (TT) for ecliptic-of-date conversion (one float is ample: the ecliptic
            moves 50"/year).

    Returns:
        :class:`~siderod.astro.places.Stars` of shape (N,).

    Raises:
        ValueError: a fixed hour-angle target was given.
    """
    frames = list(map(attrgetter("frame"), targets))
    if Frame.HADEC in frames:
        target = targets[frames.index(Frame.HADEC)]
        raise ValueError(f"target {target.name!r} is a fixed hour-angle pointing; it has no catalogue "
                         "place (place it with hadec_to_altaz instead)")
    # One column per attribute, not a loop per target: 1e5 targets take milliseconds.
    ra = _floats(targets, "ra_deg")
    dec = _floats(targets, "dec_deg")
    of_date = ([i for i, f in enumerate(frames) if f is Frame.ECLIPTIC_OF_DATE]
               if Frame.ECLIPTIC_OF_DATE in frames else [])
    if of_date:
        from siderod.astro.frames import ecliptic_of_date_to_icrs_deg

        whole = np.floor(jd_tt - 0.5) + 0.5
        lon = np.array([targets[i].lon_deg for i in of_date])
        lat = np.array([targets[i].lat_deg for i in of_date])
        ra[of_date], dec[of_date] = ecliptic_of_date_to_icrs_deg(lon, lat, whole, jd_tt - whole)
    return stars_from_radec(
        ra, dec,
        pm_ra_cosdec_mas_per_year=_floats(targets, "pm_ra_cosdec_mas_per_year"),
        pm_dec_mas_per_year=_floats(targets, "pm_dec_mas_per_year"),
        parallax_mas=_floats(targets, "parallax_mas"),
        radial_velocity_km_s=_floats(targets, "radial_velocity_km_s"),
        epoch_jd_tt=_floats(targets, "epoch_jd_tt"),
    )


def _floats(targets: Sequence[Target], name: str) -> np.ndarray:
    """One attribute of every target as a float64 column (None reads as NaN)."""
    try:
        return np.fromiter(map(attrgetter(name), targets), dtype=float, count=len(targets))
    except TypeError:  # a None among them
        return np.array(list(map(attrgetter(name), targets)), dtype=float).reshape(len(targets))


def twilight_name(sun_alt_geometric_deg: float) -> str:
    """"day", "civil", "nautical", "astronomical" or "night" for a geometric Sun altitude."""
    for name, limit in TWILIGHT_LIMITS_DEG:
        if sun_alt_geometric_deg > limit:
            return name
    return "night"
