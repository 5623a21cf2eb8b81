"""Physical and calendar constants used by the astro core, with units in their names.

Values follow the IAU/IERS conventions as used by ERFA (file ``erfam.h``) unless a comment says otherwise.
"""

import math

__all__ = [
    "ARCSEC_RAD",
    "DAY_SECONDS",
    "DEG_RAD",
    "HOUR_RAD",
    "J2000_JD",
    "JULIAN_CENTURY_DAYS",
    "MJD_ZERO_JD",
    "SIDEREAL_PER_SOLAR",
    "TAU",
    "TT_MINUS_TAI_SECONDS",
    "UNIX_EPOCH_JD",
    "UNIX_EPOCH_MJD",
]

#: Seconds in one day of 86400 SI seconds (a Julian-date day).
DAY_SECONDS = 86400.0
#: Julian date of the epoch J2000.0 (2000-01-01 12:00 TT).
J2000_JD = 2451545.0
#: Julian date of modified-Julian-date zero (1858-11-17 00:00).
MJD_ZERO_JD = 2400000.5
#: Days in one Julian century.
JULIAN_CENTURY_DAYS = 36525.0
#: TT - TAI, seconds, exact by definition (IAU 1991 resolution A4).
TT_MINUS_TAI_SECONDS = 32.184
#: Julian date (UTC) of the POSIX epoch 1970-01-01 00:00:00 UTC.
UNIX_EPOCH_JD = 2440587.5
#: Modified Julian date (UTC) of the POSIX epoch.
UNIX_EPOCH_MJD = 40587.0

#: A full turn in radians.
TAU = 2.0 * math.pi
#: One arcsecond in radians (ERFA ``ERFA_DAS2R``).
ARCSEC_RAD = 4.848136811095359935899141e-6
#: One degree in radians.
DEG_RAD = math.pi / 180.0
#: One hour of angle (15 degrees) in radians.
HOUR_RAD = math.pi / 12.0

#: Mean sidereal rate: GMST turns per UT1 day. IAU 2006 GMST rate at J2000: the ERA rate
#: 1.00273781191135448 (IERS Conventions 2010 eq. 5.15) plus the precession rate in RA,
#: 4612.156534 arcsec per Julian century (Capitaine et al. 2005, the linear term of ERFA gmst06),
#: giving 1.002737909345; rounded here to the conventional 1.00273790935 (the common-practice
#: figure for "24 h sidereal = 23 h 56 m 4.0905 s mean solar").
SIDEREAL_PER_SOLAR = 1.00273790935
