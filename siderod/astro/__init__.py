"""siderod's astronomy core: pure functions of numpy arrays, with no clock, file or network access.

Times are two-part Julian dates carried by ``Instants``; angles carry their unit in their names
(``_deg``, ``_rad``, ``_hours``); longitude is east positive and azimuth runs from north through
east. Submodules are loaded on first use, so importing one of them stays cheap.

Layout, in the order a reader meets the ideas: ``constants``, ``angles``, ``leapseconds`` and
``timescales`` (time), ``sidereal`` (ERA, GMST, GAST, LST), ``nutation2000a`` (the full IAU 2000A
series), ``precession`` (bias, precession and IAU 2000B nutation), ``places`` (apparent places,
alt/az), ``refraction``, ``frames`` (galactic, ecliptic), ``sunmoon`` (low-precision Sun and Moon),
``ephemeris`` (planets and the Moon from a JPL kernel passed in), ``orbits`` (comets and asteroids),
and ``search``/``events`` (event finding).
"""

from __future__ import annotations

import importlib
from typing import Any

_EXPORTS: dict[str, str] = {
    "ARCSEC_RAD": "constants",
    "DAY_SECONDS": "constants",
    "DEG_RAD": "constants",
    "HOUR_RAD": "constants",
    "J2000_JD": "constants",
    "JULIAN_CENTURY_DAYS": "constants",
    "MJD_ZERO_JD": "constants",
    "SIDEREAL_PER_SOLAR": "constants",
    "TAU": "constants",
    "TT_MINUS_TAI_SECONDS": "constants",
    "UNIX_EPOCH_JD": "constants",
    "UNIX_EPOCH_MJD": "constants",
    "BODY_NAMES": "ephemeris",
    "Ephemeris": "ephemeris",
    "EphemerisRangeError": "ephemeris",
    "apparent_geocentric": "ephemeris",
    "body_apparent_radec": "ephemeris",
    "ephemeris_from_segments": "ephemeris",
    "observe_apparent": "ephemeris",
    "observe_body": "ephemeris",
    "OrbitalElements": "orbits",
    "asteroid_magnitude": "orbits",
    "comet_magnitude": "orbits",
    "elements_from_state": "orbits",
    "heliocentric_position_au": "orbits",
    "minor_body_apparent": "orbits",
    "orbital_elements": "orbits",
    "ANGLE_KINDS": "angles",
    "AngleParseError": "angles",
    "format_clock_hms": "angles",
    "format_dms": "angles",
    "format_hms": "angles",
    "parse_angle_deg": "angles",
    "wrap_deg_180": "angles",
    "wrap_deg_360": "angles",
    "wrap_hours_12": "angles",
    "wrap_hours_24": "angles",
    "wrap_rad_2pi": "angles",
    "BUILTIN_LEAP_TABLE": "leapseconds",
    "LeapTable": "leapseconds",
    "LeapTableExpired": "leapseconds",
    "parse_leap_second_file": "leapseconds",
    "Dut1Table": "timescales",
    "Instants": "timescales",
    "NaiveDatetimeError": "timescales",
    "datetime_from_unix": "timescales",
    "format_iso_utc": "timescales",
    "instants_from_datetime": "timescales",
    "instants_from_jd": "timescales",
    "instants_from_unix": "timescales",
    "parse_iers_finals": "timescales",
    "parse_iso_datetime": "timescales",
    "unix_from_datetime": "timescales",
    "FastSidereal": "sidereal",
    "SIDEREAL_DAY_SECONDS": "sidereal",
    "complementary_terms_rad": "sidereal",
    "equation_of_equinoxes_rad": "sidereal",
    "era_rad": "sidereal",
    "find_lst_unix": "sidereal",
    "gast_rad": "sidereal",
    "NutationModel": "sidereal",
    "nutation_2000a_rad": "nutation2000a",
    "gmst_rad": "sidereal",
    "last_hours": "sidereal",
    "lmst_hours": "sidereal",
    "sidereal_to_solar_seconds": "sidereal",
    "solar_to_sidereal_seconds": "sidereal",
    "bias_precession_matrix": "precession",
    "bias_precession_nutation_matrix": "precession",
    "fw_angles_rad": "precession",
    "fw_matrix": "precession",
    "julian_centuries_tt": "precession",
    "mean_obliquity_rad": "precession",
    "nutation_rad": "precession",
    "ApparentWindow": "places",
    "Observer": "places",
    "Positions": "places",
    "Stars": "places",
    "altaz_to_hadec": "places",
    "apparent_radec": "places",
    "hadec_to_altaz": "places",
    "observe": "places",
    "parallactic_angle_deg": "places",
    "stars_from_radec": "places",
    "BELOW_HORIZON_TAPER_DEG": "refraction",
    "airmass": "refraction",
    "refraction_deg": "refraction",
    "refraction_from_true_deg": "refraction",
    "standard_pressure_hpa": "refraction",
    "ecliptic_j2000_to_icrs_deg": "frames",
    "ecliptic_of_date_to_icrs_deg": "frames",
    "galactic_to_icrs_deg": "frames",
    "icrs_to_ecliptic_j2000_deg": "frames",
    "icrs_to_ecliptic_of_date_deg": "frames",
    "icrs_to_galactic_deg": "frames",
    "moon_apparent_radec": "sunmoon",
    "moon_illuminated_fraction": "sunmoon",
    "observe_moon": "sunmoon",
    "observe_sun": "sunmoon",
    "sun_apparent_radec": "sunmoon",
    "sun_separation_deg": "sunmoon",
}

__all__ = sorted(_EXPORTS)


def __getattr__(name: str) -> Any:
    try:
        module_name = _EXPORTS[name]
    except KeyError:
        raise AttributeError(f"module 'siderod.astro' has no attribute {name!r}") from None
    value = getattr(importlib.import_module(f"siderod.astro.{module_name}"), name)
    globals()[name] = value  # later look-ups skip this function
    return value


def __dir__() -> list[str]:
    return __all__
