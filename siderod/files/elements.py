"""Read orbital elements of comets and asteroids: the Minor Planet Center's one-line formats and
explicit elements in a target table.

Both MPC formats are fixed-column text (columns counted from 1, as the MPC's format notes count
them). The column layouts below are written from memory of the MPC's published format
descriptions ("Export Format for Minor-Planet Orbits" and the comet orbit format of its element
files) [from memory]; only the columns listed are read, the rest (references, observation counts,
residuals, perturber flags) are ignored.

Minor planets (``MPCORB.DAT`` lines)::

    1-7    packed designation            (number "00433", "A0345", "~0000" or provisional "K24A01B")
    9-13   H, absolute magnitude          (blank: unknown)
    15-19  G, slope parameter             (blank: 0.15)
    21-25  epoch, packed date (TT)        ("K2555" = 2025 May 5)
    27-35  M, mean anomaly at the epoch, degrees
    38-46  argument of perihelion, J2000, degrees
    49-57  longitude of the ascending node, J2000, degrees
    60-68  inclination, J2000, degrees
    71-79  e, eccentricity
    93-103 a, semi-major axis, au
    167-194 readable designation           (used as the name when present)

Comets::

    1-4    periodic number                ("0001" for 1P; blank for others)
    5      orbit type                     (C, P, D, X, I or A)
    6-12   packed provisional designation ("K25A010" = 2025 A1; last character a fragment or 0)
    15-18  perihelion year (TT)
    20-21  perihelion month
    23-29  perihelion day, with decimals
    31-39  q, perihelion distance, au
    42-49  e
    52-59  argument of perihelion, J2000, degrees
    62-69  longitude of the ascending node, J2000, degrees
    72-79  inclination, J2000, degrees
    82-85, 86-87, 88-89  epoch year, month, day (blank: the perihelion date stands in)
    92-95  H, absolute magnitude
    97-100 K, slope parameter (the total-magnitude law m = H + 5 log delta + 2.5 K log r)
    103-158 designation and name          (used as the name)
"""

from __future__ import annotations

import datetime as _dt
import io
import math
from collections.abc import Iterable, Mapping
from typing import Any, TextIO

from siderod.common.model import Frame, OrbitSpec, Target
from siderod.files.tomlpos import Problems, show_value

__all__ = [
    "DEFAULT_MAX_ELEMENT_AGE_DAYS",
    "ORBIT_KEYS",
    "collect_elements_file",
    "element_age_days",
    "jd_from_calendar",
    "parse_mpc_line",
    "parse_packed_date",
    "read_orbit_entry",
    "unpack_minor_planet_designation",
]

#: Elements older than this (days between their epoch and the night) get a warning: two-body
#: motion from the epoch drifts as the planets pull (common practice: the MPC republishes
#: elements at a fresh epoch every 200 days, and observers refresh comet elements monthly).
DEFAULT_MAX_ELEMENT_AGE_DAYS = 60.0
#: The keys of explicit elements in a ``[[target]]`` table (also ``elements`` for one MPC line).
ORBIT_KEYS = frozenset({"epoch", "q", "a", "e", "i", "node", "peri", "tp", "M", "H", "G", "K"})
_PACKED_CENTURY = {"I": 1800, "J": 1900, "K": 2000, "L": 2100}
_COMET_TYPES = "CPDXIA"
_BASE62 = "0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz"


# ---------------------------------------------------------------------------------------------
# one-line records


def collect_elements_file(problems: Problems) -> tuple[Target, ...]:
    """Targets from a file of MPC one-line records (comets and minor planets may be mixed).

    Blank lines and lines starting with ``#`` are skipped. Each bad line is recorded in
    ``problems`` as ``file:line: elements: ...`` and the rest of the file is still read.
    """
    targets: list[Target] = []
    seen: dict[str, int] = {}
    for number, raw in enumerate(io.StringIO(problems.text), start=1):
        line = raw.rstrip("\r\n")
        if not line.strip() or line.lstrip().startswith("#"):
            continue
        try:
            spec, name = parse_mpc_line(line)
        except ValueError as exc:
            problems.add("elements", show_value(line.strip()[:60]), str(exc), line=number)
            continue
        if name in seen:
            problems.add("elements", show_value(name), f"a unique name (already used on line {seen[name]})",
                         line=number)
            continue
        seen[name] = number
        targets.append(orbit_target(name, spec, source=f"{problems.path}:{number}"))
    return tuple(targets)


def read_mpc_records(fileobj: TextIO | Iterable[str]) -> list[tuple[OrbitSpec, str]]:
    """Parse every record of a text file object of MPC one-line elements; raises on the first bad one."""
    out = []
    for raw in fileobj:
        line = raw.rstrip("\r\n")
        if line.strip() and not line.lstrip().startswith("#"):
            out.append(parse_mpc_line(line))
    return out


def parse_mpc_line(line: str) -> tuple[OrbitSpec, str]:
    """Parse one MPC one-line record, comet or minor planet (told apart by their columns).

    Returns:
        tuple: ``(OrbitSpec, name)``.

    Raises:
        ValueError: with a message naming the column that could not be read.
    """
    if len(line) >= 80 and line[4:5] in tuple(_COMET_TYPES) and line[14:18].strip().isdigit():
        return _comet_line(line)
    if len(line) >= 103 and line[20:25].strip() and line[20] in _PACKED_CENTURY:
        return _minor_planet_line(line)
    raise ValueError("an MPC one-line element record (comet: orbit type C/P/D/X/I/A in column 5 and "
                     "the perihelion year in columns 15-18; minor planet: 103+ columns with a packed "
                     "epoch such as K2555 in columns 21-25)")


def parse_packed_date(text: str) -> tuple[int, int, int]:
    """MPC packed date ``K2555`` -> (2025, 5, 5): century letter, year, month and day as 1-9, A-V.

    >>> parse_packed_date("K107N")
    (2010, 7, 23)
    """
    text = text.strip()
    if len(text) != 5 or text[0] not in _PACKED_CENTURY or not text[1:3].isdigit():
        raise ValueError(f"a packed date like K2555 (century letter, year, month, day), got {text!r}")
    year = _PACKED_CENTURY[text[0]] + int(text[1:3])
    month, day = _packed_small(text[3]), _packed_small(text[4])
    if not 1 <= month <= 12 or not 1 <= day <= 31:
        raise ValueError(f"a packed date with month 1-C and day 1-V, got {text!r}")
    return year, month, day


def unpack_minor_planet_designation(packed: str) -> str:
    """Readable form of a packed minor-planet designation.

    >>> unpack_minor_planet_designation("00433"), unpack_minor_planet_designation("A0345")
    ('(433)', '(100345)')
    >>> unpack_minor_planet_designation("K07Tf8A")
    '2007 TA418'
    """
    packed = packed.strip()
    if len(packed) == 5 and packed[0] == "~":
        value = 0
        for ch in packed[1:]:
            value = value * 62 + _BASE62.index(ch)
        return f"({620000 + value})"
    if len(packed) == 5 and packed[1:].isdigit() and packed[0] in _BASE62:
        return f"({_BASE62.index(packed[0]) * 10000 + int(packed[1:])})"
    if len(packed) == 7 and packed[0] in _PACKED_CENTURY and packed[1:3].isdigit():
        year = _PACKED_CENTURY[packed[0]] + int(packed[1:3])
        cycle = _BASE62.index(packed[4]) * 10 + int(packed[5]) if packed[5].isdigit() else 0
        return f"{year} {packed[3]}{packed[6]}{cycle if cycle else ''}"
    raise ValueError(f"a packed designation (5-digit number, letter+4 digits, ~+4 or 7-character "
                     f"provisional), got {packed!r}")


def jd_from_calendar(year: int, month: int, day: float) -> float:
    """Julian date of a Gregorian calendar date with a decimal day (0h = .0), any timescale.

    >>> jd_from_calendar(2000, 1, 1.5)
    2451545.0
    """
    return _dt.date(year, month, 1).toordinal() + 1721424.5 + (day - 1.0)


def element_age_days(orbit: OrbitSpec, jd: float) -> float:
    """Days between the elements' epoch and ``jd`` (absolute)."""
    return abs(jd - orbit.epoch_jd_tt)


# ---------------------------------------------------------------------------------------------
# explicit elements in a target table


def read_orbit_entry(problems: Problems, entry: Mapping[str, Any], prefix: str) -> OrbitSpec | None:
    """Elements from a ``[[target]]`` table: an MPC line in ``elements``, or the keys of ORBIT_KEYS.

    Explicit keys: ``epoch`` and ``tp`` are TOML dates/date-times (TT), Julian dates, or texts like
    "2025-03-14.25"; ``q`` or ``a`` (au), ``e``, ``i``, ``node``, ``peri`` (degrees, J2000 ecliptic),
    ``tp`` or ``M`` (mean anomaly at the epoch, degrees), and ``H`` with ``G`` (asteroid) or ``K``
    (comet). Returns None after recording problems.
    """
    if "elements" in entry:
        value = entry["elements"]
        for key in sorted(ORBIT_KEYS & entry.keys()):
            problems.add(f"{prefix}.{key}", show_value(entry[key]),
                         "either an MPC one-line record in elements or explicit element keys, not both")
        if not isinstance(value, str):
            problems.add(f"{prefix}.elements", show_value(value), "an MPC one-line element record in quotes")
            return None
        try:
            return parse_mpc_line(value)[0]
        except ValueError as exc:
            problems.add(f"{prefix}.elements", show_value(value[:60]), str(exc))
            return None
    before = len(problems.errors)
    numbers: dict[str, float | None] = {}
    ranges = {"q": (0.0, 1e6), "a": (-1e6, 1e6), "e": (0.0, 1e3), "i": (0.0, 180.0), "node": (-360.0, 360.0),
              "peri": (-360.0, 360.0), "M": (-360.0, 360.0), "H": (-10.0, 40.0), "G": (-1.0, 2.0),
              "K": (-10.0, 40.0)}
    for key, (low, high) in ranges.items():
        if key not in entry:
            numbers[key] = None
            continue
        value = entry[key]
        if isinstance(value, bool) or not isinstance(value, int | float) or not low <= value <= high:
            problems.add(f"{prefix}.{key}", show_value(value), f"a number from {low:g} to {high:g}"
                         + _UNITS.get(key, ""))
            numbers[key] = None
        else:
            numbers[key] = float(value)
    epoch = _read_date(problems, entry, "epoch", prefix)
    tp = _read_date(problems, entry, "tp", prefix)
    for needed in ("e", "i", "node", "peri"):
        if needed not in entry:
            problems.add(f"{prefix}.{needed}", "nothing (the key is missing)",
                         f"{needed} = {_WHAT[needed]} (orbital elements need e, i, node, peri, q or a, "
                         "tp or M)")
    if ("q" in entry) == ("a" in entry):
        problems.add(f"{prefix}.q", "both q and a" if "q" in entry else "neither q nor a",
                     "exactly one of q (perihelion distance, au) and a (semi-major axis, au)")
    if ("tp" in entry) == ("M" in entry):
        problems.add(f"{prefix}.tp", "both tp and M" if "tp" in entry else "neither tp nor M",
                     "exactly one of tp (perihelion time) and M (mean anomaly at the epoch, degrees)")
    if "M" in entry and "epoch" not in entry:
        problems.add(f"{prefix}.epoch", "nothing (the key is missing)", "epoch = the date M refers to")
    if "G" in entry and "K" in entry:
        problems.add(f"{prefix}.K", "both G and K", "G for an asteroid or K for a comet, not both")
    if len(problems.errors) > before:
        return None
    e = numbers["e"]
    a = numbers["a"]
    if a is not None:
        if e == 1.0 or (e < 1.0) != (a > 0.0):
            problems.add(f"{prefix}.a", show_value(entry["a"]),
                         "a > 0 with e < 1 or a < 0 with e > 1 (for e = 1 give q)")
            return None
        q = a * (1.0 - e)
    else:
        q = numbers["q"]
        if not q > 0.0:
            problems.add(f"{prefix}.q", show_value(entry["q"]), "a perihelion distance > 0 au")
            return None
    if tp is None:
        alpha = (1.0 - e) / q
        if e == 1.0:
            problems.add(f"{prefix}.M", show_value(entry["M"]), "tp for a parabolic orbit (e = 1)")
            return None
        n = 0.01720209895 * abs(alpha) ** 1.5  # Gaussian constant: mean motion, rad/day
        tp = epoch - math.radians(numbers["M"]) / n
    comet = "K" in entry or ("G" not in entry and e >= 0.98)
    return OrbitSpec(q_au=q, e=e, i_deg=numbers["i"], node_deg=numbers["node"] % 360.0,
                     peri_deg=numbers["peri"] % 360.0, tp_jd_tt=tp,
                     epoch_jd_tt=epoch if epoch is not None else tp,
                     kind="comet" if comet else "asteroid", h_mag=numbers["H"],
                     slope=numbers["K"] if comet else (numbers["G"] if numbers["G"] is not None else 0.15))


def orbit_target(name: str, spec: OrbitSpec, *, source: str, **extra: Any) -> Target:
    """A Target record for a body on an orbit (no fixed place)."""
    return Target(name=name, frame=Frame.ORBIT, lon_deg=0.0, lat_deg=0.0, ra_deg=None, dec_deg=0.0,
                  source=source, orbit=spec, **extra)


# ---------------------------------------------------------------------------------------------
# helpers

_UNITS = {"q": " (au)", "a": " (au; negative for a hyperbola)", "i": " (degrees)", "node": " (degrees)",
          "peri": " (degrees)", "M": " (degrees)"}
_WHAT = {"e": "the eccentricity", "i": "the inclination in degrees", "node": "the ascending node in degrees",
         "peri": "the argument of perihelion in degrees"}


def _read_date(problems: Problems, entry: Mapping[str, Any], key: str, prefix: str) -> float | None:
    if key not in entry:
        return None
    value = entry[key]
    what = (f"{key} as a TOML date (2025-03-14), date-time (2025-03-14T06:00:00), Julian date "
            "(2460748.5) or text \"2025-03-14.25\" (TT)")
    if isinstance(value, _dt.datetime):
        seconds = value.hour * 3600 + value.minute * 60 + value.second + value.microsecond / 1e6
        day = value.day + seconds / 86400.0
        return jd_from_calendar(value.year, value.month, day)
    if isinstance(value, _dt.date):
        return jd_from_calendar(value.year, value.month, value.day)
    if isinstance(value, int | float) and not isinstance(value, bool) and 2e6 < value < 3e6:
        return float(value)
    if isinstance(value, str):
        try:
            y, m, d = value.strip().split("-")
            return jd_from_calendar(int(y), int(m), float(d))
        except ValueError:
            pass
    problems.add(f"{prefix}.{key}", show_value(value), what)
    return None


def _field(line: str, first: int, last: int, what: str, *, optional: bool = False) -> float | None:
    """Columns first..last (1-based, inclusive) as a number."""
    text = line[first - 1:last].strip()
    if not text:
        if optional:
            return None
        raise ValueError(f"{what} in columns {first}-{last}, found them blank")
    try:
        return float(text)
    except ValueError:
        raise ValueError(f"{what} in columns {first}-{last}, got {text!r}") from None


def _comet_line(line: str) -> tuple[OrbitSpec, str]:
    year = int(_field(line, 15, 18, "the perihelion year"))
    month = int(_field(line, 20, 21, "the perihelion month"))
    day = _field(line, 23, 29, "the perihelion day")
    if not 1 <= month <= 12 or not 0.0 <= day < 32.0:
        raise ValueError(f"a perihelion date in columns 15-29, got {line[14:29]!r}")
    tp = jd_from_calendar(year, month, day)
    q = _field(line, 31, 39, "the perihelion distance q (au)")
    e = _field(line, 42, 49, "the eccentricity e")
    peri = _field(line, 52, 59, "the argument of perihelion (degrees)")
    node = _field(line, 62, 69, "the ascending node (degrees)")
    inc = _field(line, 72, 79, "the inclination (degrees)")
    epoch = tp
    if line[81:89].strip():
        ey = int(_field(line, 82, 85, "the epoch year"))
        em = int(_field(line, 86, 87, "the epoch month"))
        ed = _field(line, 88, 89, "the epoch day")
        epoch = jd_from_calendar(ey, em, ed)
    h = _field(line, 92, 95, "the absolute magnitude H", optional=True)
    k = _field(line, 97, 100, "the slope parameter K", optional=True)
    if not q > 0.0 or e < 0.0:
        raise ValueError(f"q > 0 and e >= 0 in columns 31-49, got q={q}, e={e}")
    name = line[102:158].strip() if len(line) > 102 else ""
    if not name:
        number = line[0:4].strip()
        name = f"{int(number)}{line[4]}" if number.isdigit() else f"{line[4]}/{line[5:12].strip()}"
    spec = OrbitSpec(q_au=q, e=e, i_deg=inc, node_deg=node, peri_deg=peri, tp_jd_tt=tp, epoch_jd_tt=epoch,
                     kind="comet", h_mag=h, slope=k, designation=name)
    return spec, name


def _minor_planet_line(line: str) -> tuple[OrbitSpec, str]:
    h = _field(line, 9, 13, "the absolute magnitude H", optional=True)
    g = _field(line, 15, 19, "the slope parameter G", optional=True)
    try:
        y, m, d = parse_packed_date(line[20:25])
    except ValueError as exc:
        raise ValueError(f"the epoch in columns 21-25: {exc}") from None
    epoch = jd_from_calendar(y, m, d)
    mean_anomaly = _field(line, 27, 35, "the mean anomaly M (degrees)")
    peri = _field(line, 38, 46, "the argument of perihelion (degrees)")
    node = _field(line, 49, 57, "the ascending node (degrees)")
    inc = _field(line, 60, 68, "the inclination (degrees)")
    e = _field(line, 71, 79, "the eccentricity e")
    a = _field(line, 93, 103, "the semi-major axis a (au)")
    if not a > 0.0 or not 0.0 <= e < 1.0:
        raise ValueError(f"an elliptic orbit (a > 0, 0 <= e < 1) in columns 71-103, got a={a}, e={e}")
    n = 0.01720209895 / a ** 1.5  # rad/day (Gaussian constant)
    tp = epoch - math.radians(mean_anomaly) / n
    readable = line[166:194].strip() if len(line) > 166 else ""
    if not readable:
        try:
            readable = unpack_minor_planet_designation(line[0:7])
        except ValueError as exc:
            raise ValueError(f"the designation in columns 1-7: {exc}") from None
    spec = OrbitSpec(q_au=a * (1.0 - e), e=e, i_deg=inc, node_deg=node % 360.0, peri_deg=peri % 360.0,
                     tp_jd_tt=tp, epoch_jd_tt=epoch, kind="asteroid", h_mag=h,
                     slope=0.15 if g is None else g, designation=readable)
    return spec, readable


def _packed_small(ch: str) -> int:
    """1-9 then A=10 ... V=31 (packed months and days)."""
    if ch.isdigit():
        return int(ch)
    if "A" <= ch <= "V":
        return ord(ch) - ord("A") + 10
    raise ValueError(f"a packed month/day character 1-9 or A-V, got {ch!r}")
