"""Read target lists (TOML ``[[target]]`` tables or a plain name,ra,dec CSV) into Target records.

Every angle goes through :func:`siderod.astro.angles.parse_angle_deg`. Galactic and J2000 ecliptic
coordinates are turned into ICRS here, once; ecliptic-of-date targets and fixed hour-angle
pointings are resolved per instant by :mod:`siderod.plan.positions`.
"""

from __future__ import annotations

import csv
import io
import re
from collections.abc import Iterator, Mapping
from typing import Any

import numpy as np

from siderod.common.model import EventKind, Frame, Target
from siderod.files.elements import ORBIT_KEYS, orbit_target, read_orbit_entry
from siderod.files.tomlpos import (
    Problems,
    parse_angle_value,
    read_angle,
    read_choice,
    read_number,
    read_string,
    show_value,
)

__all__ = [
    "FRAME_CHOICES",
    "TARGET_KEYS",
    "parse_lead_minutes",
    "parse_targets_csv",
    "parse_targets_toml",
]

#: The ``frame`` values a target file accepts, and the coordinate keys each one takes.
FRAME_CHOICES: Mapping[str, tuple[str, str]] = {
    "icrs": ("ra", "dec"),
    "galactic": ("l", "b"),
    "ecliptic": ("lon", "lat"),
    "ecliptic-of-date": ("lon", "lat"),  # the same as "ecliptic" with equinox = "date"
    "fixed-pointing": ("ha", "dec"),
}
#: Frame names that were renamed: old spelling -> new one (refused with a message naming it).
RENAMED_FRAMES: Mapping[str, str] = {"hadec": "fixed-pointing"}
_COORD_KEYS = {"ra", "dec", "l", "b", "lon", "lat", "ha"}
_MOTION_KEYS = ("pm_ra", "pm_dec", "parallax", "rv", "epoch")
#: Every key a ``[[target]]`` table may hold.
TARGET_KEYS = frozenset(
    {"name", "catalogue", "frame", "equinox", "min_altitude", "alerts", "tags", *_COORD_KEYS, *_MOTION_KEYS,
     "body", "elements", *ORBIT_KEYS, "hour_angles", "beam", "sources"}
)
#: A beam's full width at half power is accepted in this range (degrees, exclusive of 0).
BEAM_WIDTH_RANGE_DEG = (0.0, 180.0)
#: ``body`` values: the planets, Pluto and the Moon (the Sun is never a target).
BODY_CHOICES = ("mercury", "venus", "mars", "jupiter", "saturn", "uranus", "neptune", "pluto", "moon")
#: Lowest usable altitudes are accepted in this range (degrees): a little below the horizon
#: (refraction and dip from a hill top) up to the zenith.
MIN_ALTITUDE_RANGE_DEG = (-5.0, 90.0)
#: Lead times are accepted up to one day ahead (minutes).
MAX_LEAD_MINUTES = 1440.0
_JULIAN_YEAR_DAYS = 365.25
_J2000_JD = 2451545.0


def parse_targets_toml(text: str, path: str) -> tuple[Target, ...]:
    """Parse a TOML target file of ``[[target]]`` tables.

    Args:
        text: the file's text.
        path: the file name used in messages and in each target's ``source``.

    Returns:
        The targets, in file order.

    Raises:
        ConfigErrors: every problem in the file, each with its line and key path
            (``target[3].ra``: the third ``[[target]]`` table, counting from 1).
    """
    problems = Problems(path, text)
    targets = collect_targets_toml(problems)
    problems.raise_if_any()
    return targets


def parse_targets_csv(text: str, path: str) -> tuple[Target, ...]:
    """Parse a plain CSV catalogue: ``name,ra,dec`` per line, header line optional.

    RA takes any angle form (sexagesimal means hours, a bare decimal degrees); Dec is degrees.
    Blank lines and lines starting with ``#`` are skipped.

    Raises:
        ConfigErrors: every problem in the file, each with its line.
    """
    problems = Problems(path, text)
    targets = collect_targets_csv(problems)
    problems.raise_if_any()
    return targets


def collect_targets_toml(problems: Problems) -> tuple[Target, ...]:
    """Like :func:`parse_targets_toml`, but records problems in ``problems`` instead of raising."""
    data = problems.parse_toml()
    if data is None:
        return ()
    problems.unknown_keys(data, ("target",), "")
    entries = data.get("target", [])
    if not isinstance(entries, list) or not all(isinstance(e, dict) for e in entries):
        problems.add("target", show_value(entries), "[[target]] tables, one per target")
        return ()
    targets: list[Target] = []
    first_use: dict[str, int] = {}  # name -> number of the table that used it first
    path = problems.path
    headers = problems.header_lines("target")  # the table's line is each target's source
    for number, entry in enumerate(entries, start=1):
        prefix = f"target[{number}]"
        line = headers[number - 1] if headers is not None else problems.line_of(prefix)
        source = f"{path}:{line}"
        # Each table is let go once read, so the parsed document and the targets are not both
        # held whole at the peak (about a third less memory for a big file).
        entries[number - 1] = None
        target = _plain_target(entry, source)
        if target is None:
            target = _one_target(problems, entry, prefix, source)
        if target is None:
            continue
        first = first_use.setdefault(target.name, number)
        if first != number:
            problems.add(f"{prefix}.name", show_value(target.name),
                         f"a unique name (already used by target[{first}] at line "
                         f"{problems.line_of(f'target[{first}]')})")
            continue
        targets.append(target)
    return tuple(targets)


def collect_targets_csv(problems: Problems) -> tuple[Target, ...]:
    """Like :func:`parse_targets_csv`, but records problems in ``problems`` instead of raising."""
    plain = _plain_csv(problems)
    if plain is not None:
        return plain
    targets: list[Target] = []
    seen: dict[str, int] = {}
    first_row = True
    for line, row in _csv_rows(problems):
        cells = [c.strip() for c in row]
        if not any(cells) or cells[0].startswith("#"):
            continue
        if first_row and [c.lower() for c in cells[:3]] == ["name", "ra", "dec"] and len(cells) == 3:
            first_row = False
            continue
        first_row = False
        if len(cells) != 3:
            problems.add("row", show_value(",".join(row)), "three columns: name,ra,dec", line=line)
            continue
        name, ra_text, dec_text = cells
        ra_deg = _plain_angle(ra_text, "ra")
        dec_deg = _plain_angle(dec_text, "dec")
        if ra_deg is None or dec_deg is None:  # anything but the plain forms: the full parser decides
            sub = Problems(problems.path, "")  # so each cell's problem gets this row's line
            ra_deg = parse_angle_value(sub, "ra", ra_text, kind="ra", what="a right ascension")
            dec_deg = parse_angle_value(sub, "dec", dec_text, kind="dec", what="a declination")
            for error in sub.errors:
                problems.add(error.key, error.got, error.expected, line=line)
        if not name:
            problems.add("name", '""', "a target name in the first column", line=line)
            continue
        if name in seen:
            problems.add("name", show_value(name), f"a unique name (already used on line {seen[name]})",
                         line=line)
            continue
        if ra_deg is None or dec_deg is None:
            continue
        seen[name] = line
        targets.append(Target(name=name, frame=Frame.ICRS, lon_deg=ra_deg, lat_deg=dec_deg,
                              ra_deg=ra_deg, dec_deg=dec_deg, source=f"{problems.path}:{line}"))
    return tuple(targets)


def _plain_csv(problems: Problems) -> tuple[Target, ...] | None:
    """The targets of a catalogue whose every row is ``name,<plain RA>,<plain Dec>``, read as whole
    columns; None for any other file (quotes, comments, blank lines, carriage returns, spaces around
    a cell, a value out of range, a repeated name...), which the row-by-row reader then reads or
    reports in full.

    The angles are computed with the same operations as :func:`_plain_angle`, so the targets are
    the ones the row-by-row reader makes (tests compare both); the checks and the numbers take a
    few hundredths of a second for 1e5 rows, and building the ``Target`` records is most of the rest.
    """
    text = problems.text
    if '"' in text or "\r" in text or "\0" in text:
        return None
    header = text.split("\n", 1)[0]
    start = 0
    if [c.strip().lower() for c in header.split(",")] == ["name", "ra", "dec"]:
        start = len(header) + 1
    body = text[start:]
    if body.endswith("\n"):
        body = body[:-1]
    rows = body.count("\n") + 1
    if not body or body.count(",") != 2 * rows:
        return None
    cells = body.replace("\n", ",").split(",")
    if len(cells) != 3 * rows:  # a line with too many commas and one with too few
        return None
    names = cells[0::3]
    joined = "\n" + "\n".join(names)
    # No empty name, none with a space around it (the reader strips cells), none starting a comment.
    if "\n\n" in joined or "\n#" in joined or joined.endswith("\n") \
            or [n.strip() for n in names] != names or len(set(names)) != len(names):
        return None
    ra_texts, dec_texts = cells[1::3], cells[2::3]
    if _PLAIN_RA.fullmatch("\n".join(ra_texts)) is None or _PLAIN_DEC.fullmatch("\n".join(dec_texts)) is None:
        return None
    ra = _plain_degrees(ra_texts, ra=True)
    dec = _plain_degrees(dec_texts, ra=False)
    if not (np.all((ra >= 0.0) & (ra < 360.0)) and np.all((dec >= -90.0) & (dec <= 90.0))):
        return None
    first_line = 2 if start else 1
    path = problems.path
    icrs = Frame.ICRS
    return tuple(Target(name=name, frame=icrs, lon_deg=a, lat_deg=d, ra_deg=a, dec_deg=d,
                        source=f"{path}:{line}")
                 for line, name, a, d in zip(range(first_line, first_line + rows), names, ra.tolist(),
                                             dec.tolist(), strict=True))


# The plain RA (decimal with an "h" or "d") and Dec (decimal, "d" optional) of :func:`_plain_angle`,
# one per line. Possessive quantifiers (no backtracking: each part can only end one way) make the
# match of 1e5 lines about twice as fast.
_PLAIN_RA = re.compile(r"(?:[+-]?+\d++(?:\.\d*+)?+[hd]\n)*+[+-]?+\d++(?:\.\d*+)?+[hd]")
_PLAIN_DEC = re.compile(r"(?:[+-]?+\d++(?:\.\d*+)?+d?+\n)*+[+-]?+\d++(?:\.\d*+)?+d?+")


def _plain_degrees(texts: list[str], *, ra: bool) -> np.ndarray:
    """Degrees from plain decimal texts, as :func:`_plain_angle` computes them, for a whole column."""
    # First and last characters of every text, as bytes (numpy.char would cost 20 ms to import).
    last = np.frombuffer("".join([t[-1] for t in texts]).encode(), dtype=np.uint8)
    negative = np.frombuffer("".join([t[0] for t in texts]).encode(), dtype=np.uint8) == ord("-")
    hours = last == ord("h")
    has_unit = hours | (last == ord("d"))
    # The number without its unit letter (one at most: the pattern), parsed as float() parses it.
    number = np.array([t[:-1] if t[-1] in "hd" else t for t in texts], dtype=float)
    value = np.abs(number)  # float(digits): the digits without their sign
    if ra:
        magnitude = value * 3600.0 / 3600.0 * np.where(hours, 15.0, 1.0)
    else:
        magnitude = np.where(has_unit, value * 3600.0 / 3600.0, value)
    return np.where(negative, -magnitude, magnitude)


_PLAIN_KEYS = frozenset({"name", "ra", "dec"})


def _plain_target(entry: dict[str, Any], source: str) -> Target | None:
    """The target of a table holding only a name, a plain RA and a plain Dec; None for any other
    table (which :func:`_one_target` then reads and checks in full). Built exactly as
    ``_one_target`` builds it; a big TOML catalogue is mostly such tables (issue 13 item 4).
    ``source`` is ``file:line`` of the table."""
    if entry.keys() != _PLAIN_KEYS:
        return None
    name, ra, dec = entry["name"], entry["ra"], entry["dec"]
    if not isinstance(name, str) or not name.strip() or not isinstance(ra, str):
        return None
    ra_deg = _plain_angle(ra, "ra")
    if isinstance(dec, str):
        dec_deg = _plain_angle(dec, "dec")
    elif isinstance(dec, (int, float)) and not isinstance(dec, bool) and -90.0 <= dec <= 90.0:
        dec_deg = float(dec)
    else:
        dec_deg = None
    if ra_deg is None or dec_deg is None:
        return None
    return Target(name=name, frame=Frame.ICRS, lon_deg=ra_deg, lat_deg=dec_deg, ra_deg=ra_deg,
                  dec_deg=dec_deg, source=source)


# A plain decimal, with an "h" or "d" unit or none: most rows of a big catalogue.
_PLAIN_ANGLE = re.compile(r"([+-]?)(\d+(?:\.\d*)?)([hd]?)")


def _plain_angle(text: str, kind: str) -> float | None:
    """Degrees for the commonest spellings (RA "83.82d" or "5.588h", Dec "-5.39"), computed exactly
    as :func:`siderod.astro.angles.parse_angle_deg` computes them; None for anything else
    (sexagesimal, a bare RA, out of range...), which the full parser then reads or reports.

    A big CSV catalogue is read about five times faster this way (issue 13 item 4).
    """
    match = _PLAIN_ANGLE.fullmatch(text)
    if match is None:
        return None
    sign, digits, unit = match.groups()
    value = float(digits)
    if kind == "ra":
        if not unit:
            return None  # a bare decimal RA may be refused as ambiguous: the full parser says so
        magnitude = value * 3600.0 / 3600.0 * (15.0 if unit == "h" else 1.0)  # as parse_angle_deg's sum
        deg = -magnitude if sign == "-" else magnitude
        return deg if 0.0 <= deg < 360.0 else None
    if unit == "h":
        return None
    magnitude = value * 3600.0 / 3600.0 if unit else value
    deg = -magnitude if sign == "-" else magnitude
    return deg if -90.0 <= deg <= 90.0 else None


def parse_lead_minutes(
    problems: Problems, table: Any, prefix: str
) -> dict[EventKind, tuple[float, ...]] | None:
    """Check a ``{<event-kind> = [minutes, ...]}`` table; returns None after recording problems.

    Lead times are minutes before the event (0 = at the event), returned largest first, without
    repeats.
    """
    if not isinstance(table, dict):
        problems.add(prefix, show_value(table), "a table of <event-kind> = [minutes, ...]")
        return None
    kinds = {kind.value: kind for kind in EventKind}
    result: dict[EventKind, tuple[float, ...]] = {}
    ok = True
    problems.unknown_keys(table, kinds, prefix)
    for key, value in table.items():
        if key not in kinds:
            ok = False
            continue
        path = f"{prefix}.{key}"
        if not isinstance(value, list):
            problems.add(path, show_value(value), "a list of lead times in minutes, like [10, 0]")
            ok = False
            continue
        minutes: list[float] = []
        for index, item in enumerate(value, start=1):
            got = read_number(problems, {"m": item}, "m", "", low=0.0, high=MAX_LEAD_MINUTES,
                              what="a lead time in minutes")
            if got is None:
                # re-file the problem under the element's own key path
                error = problems.errors.pop()
                problems.add(f"{path}[{index}]", error.got, error.expected)
                ok = False
            else:
                minutes.append(got)
        result[kinds[key]] = tuple(sorted(set(minutes), reverse=True))
    return result if ok else None


# ---------------------------------------------------------------------------------------------
# helpers


def _csv_rows(problems: Problems) -> Iterator[tuple[int, list[str]]]:
    """(line, cells) per CSV row; a row the csv module cannot read is recorded and ends the file."""
    # newline="": the csv module reads line ends itself, so a stray carriage return is not an error.
    reader = csv.reader(io.StringIO(problems.text, newline=""))
    while True:
        try:
            row = next(reader)
        except StopIteration:
            return
        except csv.Error as exc:
            problems.add("row", "", f"CSV text, name,ra,dec on each line ({exc})", line=reader.line_num or 1)
            return
        yield reader.line_num, row


def _one_target(problems: Problems, entry: dict[str, Any], prefix: str, source: str) -> Target | None:
    before = len(problems.errors)
    problems.unknown_keys(entry, TARGET_KEYS, prefix)
    if "body" in entry or "elements" in entry or (ORBIT_KEYS - {"epoch"}) & entry.keys():
        return _moving_target(problems, entry, prefix, before, source)
    name = read_string(problems, entry, "name", prefix, what="a target name in quotes")
    if isinstance(entry.get("frame"), str) and entry["frame"] in RENAMED_FRAMES:
        new = RENAMED_FRAMES[entry["frame"]]
        problems.add(f"{prefix}.frame", show_value(entry["frame"]),
                     f'frame = "{new}" (the frame of a fixed hour angle and declination was renamed '
                     f'in siderod 0.1.0: write frame = "{new}"; ha and dec stay as they are)')
        frame_text = None
    else:
        frame_text = read_choice(problems, entry, "frame", prefix, tuple(FRAME_CHOICES), default="icrs")
    equinox = read_choice(problems, entry, "equinox", prefix, ("J2000", "date"), default="J2000")
    if frame_text == "ecliptic-of-date":
        frame_text, equinox = "ecliptic", "date"
        if "equinox" in entry:
            problems.add(f"{prefix}.equinox", show_value(entry["equinox"]),
                         'no equinox with frame = "ecliptic-of-date" (it says "date" already)')
    if "equinox" in entry and frame_text not in (None, "ecliptic"):
        problems.add(f"{prefix}.equinox", show_value(entry["equinox"]),
                     'no equinox: it is only used with frame = "ecliptic"')
    looked_up = None
    if frame_text == "icrs" and not _COORD_KEYS & entry.keys() and ("catalogue" in entry or name is not None):
        # No coordinates: the place comes from the deep-sky catalogue (coordinates given always win).
        from siderod.files.catalogue import place_from_catalogue

        looked_up = place_from_catalogue(problems, entry, prefix)
        coords = None if looked_up is None else looked_up[:2]
    else:
        coords = _coordinates(problems, entry, prefix, frame_text)
        read_string(problems, entry, "catalogue", prefix, default=None, what="a catalogue name in quotes")
    motion = _motion(problems, entry, prefix, frame_text)
    min_alt = read_angle(problems, entry, "min_altitude", prefix, kind="angle", default=None,
                         low=MIN_ALTITUDE_RANGE_DEG[0], high=MIN_ALTITUDE_RANGE_DEG[1],
                         what="a lowest usable altitude")
    alerts_enabled, lead = _alerts(problems, entry, prefix)
    _check_own_kinds(problems, lead, prefix, fixed=frame_text == "fixed-pointing")
    tags = _tags(problems, entry, prefix)
    marks = _hour_angles(problems, entry, prefix)
    beam = _beam(problems, entry, prefix, frame_text)
    if len(problems.errors) > before or coords is None or name is None or frame_text is None:
        return None
    frame = Frame.ECLIPTIC_OF_DATE if frame_text == "ecliptic" and equinox == "date" else Frame(frame_text)
    lon_deg, lat_deg = coords
    ra_deg, dec_deg, ha_hours = _to_icrs(frame, lon_deg, lat_deg)
    return Target(
        name=name, frame=frame, lon_deg=lon_deg, lat_deg=lat_deg, ra_deg=ra_deg, dec_deg=dec_deg,
        ha_hours=ha_hours, min_altitude_deg=min_alt, lead_minutes=lead, alerts_enabled=alerts_enabled,
        source=source, tags=tags,
        catalogue_entry=looked_up[2] if looked_up else "", hour_angles_hours=marks, **motion, **beam,
    )


def _beam(problems: Problems, entry: dict[str, Any], prefix: str, frame_text: str | None) -> dict[str, Any]:
    """A fixed pointing's ``beam`` (full width at half power, degrees, or ``{ ha = .., dec = .. }``
    for a fan beam) and ``sources`` (target names, or "sun"); checked here, names in config.py."""
    if "beam" not in entry and "sources" not in entry:
        return {}
    if frame_text != "fixed-pointing":
        for key in ("beam", "sources"):
            if key in entry:
                problems.add(f"{prefix}.{key}", show_value(entry[key]),
                             f'no {key} here: a beam and its sources belong to a fixed pointing '
                             '(frame = "fixed-pointing")')
        return {}
    low, high = BEAM_WIDTH_RANGE_DEG
    what = "a full width at half power in degrees"
    value = entry.get("beam")
    widths: list[float | None] = [None, None]
    if value is None:
        problems.add(f"{prefix}.beam", "nothing (the key is missing)",
                     "beam = a full width at half power in degrees (or { ha = 6, dec = 1.5 }) for the "
                     "sources")
    elif isinstance(value, dict):
        problems.unknown_keys(value, ("ha", "dec"), f"{prefix}.beam")
        for k, key in enumerate(("ha", "dec")):
            if key not in value:
                problems.add(f"{prefix}.beam.{key}", "nothing (the key is missing)",
                             f"{key} = the beam's full width along the "
                             f"{'hour angle' if key == 'ha' else 'declination'}, degrees")
                continue
            widths[k] = read_number(problems, value, key, f"{prefix}.beam", low=low, high=high, low_open=True,
                                    what=what)
    else:
        width = read_number(problems, entry, "beam", prefix, low=low, high=high, low_open=True, what=what)
        widths = [width, width]
    raw = entry.get("sources", [])
    names: list[str] = []
    if not isinstance(raw, list) or not all(isinstance(n, str) and n for n in raw):
        problems.add(f"{prefix}.sources", show_value(raw),
                     'a list of target names (or "sun"), like ["Cygnus X", "sun"]')
    else:
        for index, item in enumerate(raw, start=1):
            if item in names:
                problems.add(f"{prefix}.sources[{index}]", show_value(item), "each source once")
            names.append(item)
    if None in widths:
        return {}
    return {"beam_ha_deg": widths[0], "beam_dec_deg": widths[1], "beam_sources": tuple(dict.fromkeys(names))}


def _hour_angles(problems: Problems, entry: dict[str, Any], prefix: str) -> tuple[float, ...]:
    """This target's own hour-angle marks (``hour_angles = ["-1h", "0h30m"]``), hours, sorted."""
    value = entry.get("hour_angles", [])
    if not isinstance(value, list):
        problems.add(f"{prefix}.hour_angles", show_value(value), 'a list like ["-1h", "+0h30m", 2.5]')
        return ()
    marks = []
    for index, item in enumerate(value, start=1):
        deg = parse_angle_value(problems, f"{prefix}.hour_angles[{index}]", item, kind="hour_angle",
                                low=-12.0, high=12.0, what="an hour angle (bare numbers are hours)",
                                scale=15.0, unit="hours")
        if deg is not None:
            marks.append(round(deg / 15.0, 12))
    return tuple(sorted(set(marks)))


def _moving_target(problems: Problems, entry: dict[str, Any], prefix: str, before: int,
                   source: str) -> Target | None:
    """A planet, the Moon (``body``) or a comet/asteroid (``elements`` or explicit element keys)."""
    name = read_string(problems, entry, "name", prefix, what="a target name in quotes")
    for key in sorted((_COORD_KEYS | {"frame", "equinox", "catalogue", "pm_ra", "pm_dec", "parallax", "rv",
                       "beam", "sources"})
                      & entry.keys()):
        problems.add(f"{prefix}.{key}", show_value(entry[key]),
                     "no fixed coordinates for a moving target: its place comes from the ephemeris "
                     "(body) or its orbital elements")
    body = orbit = None
    if "body" in entry:
        body = read_choice(problems, entry, "body", prefix, BODY_CHOICES)
        if entry["body"] == "sun":
            problems.errors.pop()
            problems.add(f"{prefix}.body", show_value(entry["body"]),
                         "a planet, Pluto or the Moon: the Sun is never a target (never point unfiltered "
                         "optics at or near the Sun)")
        for key in sorted((ORBIT_KEYS | {"elements"}) & entry.keys()):
            problems.add(f"{prefix}.{key}", show_value(entry[key]),
                         "either body or orbital elements, not both")
    else:
        orbit = read_orbit_entry(problems, entry, prefix)
    min_alt = read_angle(problems, entry, "min_altitude", prefix, kind="angle", default=None,
                         low=MIN_ALTITUDE_RANGE_DEG[0], high=MIN_ALTITUDE_RANGE_DEG[1],
                         what="a lowest usable altitude")
    alerts_enabled, lead = _alerts(problems, entry, prefix)
    _check_own_kinds(problems, lead, prefix, fixed=False)
    tags = _tags(problems, entry, prefix)
    marks = _hour_angles(problems, entry, prefix)
    if len(problems.errors) > before or name is None or (body is None and orbit is None):
        return None
    extra = dict(min_altitude_deg=min_alt, lead_minutes=lead, alerts_enabled=alerts_enabled, tags=tags,
                 hour_angles_hours=marks)
    if orbit is not None:
        return orbit_target(name, orbit, source=source, **extra)
    return Target(name=name, frame=Frame.BODY, lon_deg=0.0, lat_deg=0.0, ra_deg=None, dec_deg=0.0,
                  source=source, body=body, **extra)


def _coordinates(problems: Problems, entry: dict[str, Any], prefix: str,
                 frame_text: str | None) -> tuple[float, float] | None:
    if frame_text is None:
        return None
    first, second = FRAME_CHOICES[frame_text]
    ok = True
    for key in sorted(_COORD_KEYS & entry.keys() - {first, second}):
        owners = [f'"{f}"' for f, keys in FRAME_CHOICES.items() if key in keys]
        problems.add(f"{prefix}.{key}", f"{key} = {show_value(entry[key])}",
                     f'{first} and {second} for frame = "{frame_text}" ({key} belongs to frame '
                     f"{' or '.join(owners)})")
        ok = False
    if frame_text == "icrs":
        lon = read_angle(problems, entry, "ra", prefix, kind="ra", what="a right ascension")
        lat = read_angle(problems, entry, "dec", prefix, kind="dec", what="a declination")
    elif frame_text == "fixed-pointing":
        # hour angles: sexagesimal or bare numbers are hours; kept in [-12 h, 12 h]
        lon = None
        if "ha" not in entry:
            problems.add(f"{prefix}.ha", "nothing (the key is missing)", "ha = an hour angle")
        else:
            lon = parse_angle_value(problems, f"{prefix}.ha", entry["ha"], kind="hour_angle", low=-12.0,
                                    high=12.0, what="an hour angle", scale=15.0, unit="hours")
        lat = read_angle(problems, entry, "dec", prefix, kind="dec", what="a declination")
    else:
        what = "a galactic" if frame_text == "galactic" else "an ecliptic"
        lon = read_angle(problems, entry, first, prefix, kind="angle", low=-360.0, high=360.0,
                         what=f"{what} longitude")
        lat = read_angle(problems, entry, second, prefix, kind="dec", what=f"{what} latitude")
        if lon is not None:
            lon = lon % 360.0
    if lon is None or lat is None or not ok:
        return None
    return lon, lat


def _motion(
    problems: Problems, entry: dict[str, Any], prefix: str, frame_text: str | None
) -> dict[str, float]:
    given = [k for k in _MOTION_KEYS if k in entry]
    if given and frame_text not in ("icrs", None):
        for key in given:
            problems.add(f"{prefix}.{key}", show_value(entry[key]),
                         f"no {key} for frame = \"{frame_text}\": proper motion, parallax and radial "
                         "velocity are taken with ra/dec (frame \"icrs\") only")
        return {}
    pm_ra = read_number(problems, entry, "pm_ra", prefix, default=0.0, low=-20000.0, high=20000.0,
                        what="a proper motion in RA, mas/yr including cos(dec),")
    pm_dec = read_number(problems, entry, "pm_dec", prefix, default=0.0, low=-20000.0, high=20000.0,
                         what="a proper motion in Dec, mas/yr,")
    parallax = read_number(problems, entry, "parallax", prefix, default=0.0, low=0.0, high=1000.0,
                           what="a parallax in mas")
    rv = read_number(problems, entry, "rv", prefix, default=0.0, low=-3000.0, high=3000.0,
                     what="a radial velocity in km/s")
    epoch = read_number(problems, entry, "epoch", prefix, default=2000.0, low=1800.0, high=2200.0,
                        what="a catalogue epoch as a Julian year (e.g. 2016.0)")
    if None in (pm_ra, pm_dec, parallax, rv, epoch):
        return {}
    return {
        "pm_ra_cosdec_mas_per_year": pm_ra,
        "pm_dec_mas_per_year": pm_dec,
        "parallax_mas": parallax,
        "radial_velocity_km_s": rv,
        "epoch_jd_tt": _J2000_JD + (epoch - 2000.0) * _JULIAN_YEAR_DAYS,
    }


def _alerts(problems: Problems, entry: dict[str, Any], prefix: str) -> tuple[bool, Any]:
    if "alerts" not in entry:
        return True, None
    value = entry["alerts"]
    if isinstance(value, bool):
        return value, None
    if isinstance(value, dict):
        return True, parse_lead_minutes(problems, value, f"{prefix}.alerts")
    problems.add(f"{prefix}.alerts", show_value(value),
                 "false (no alerts for this target), true, or a table like { culmination = [10, 0] }")
    return True, None


#: Kinds that belong to the Sun, the Moon and twilight: never a target's own.
_SKY_KINDS = frozenset({"sunset", "sunrise", "civil-dusk", "nautical-dusk", "astronomical-dusk",
                        "astronomical-dawn", "nautical-dawn", "civil-dawn", "moonrise", "moonset"})
#: A fixed pointing has a constant altitude and hour angle: the agenda finds none of these for it.
_MOVING_SKY_KINDS = frozenset({"culmination", "lower-culmination", "rise", "set", "altitude-up",
                               "altitude-down", "hour-angle", "flip-due", "tracking-limit"})


def _check_own_kinds(problems: Problems, lead: Any, prefix: str, *, fixed: bool) -> None:
    """Refuse per-target lead times for kinds that can never fire for the target (they were
    accepted and silently did nothing)."""
    for kind in (lead or {}):
        value = kind.value
        if value in _SKY_KINDS:
            problems.add(f"{prefix}.alerts.{value}", show_value(value),
                         f"a kind of this target's own; {value} is a Sun, Moon or twilight event: set its "
                         "lead times under [alerts.lead] in the configuration")
        elif fixed and value in _MOVING_SKY_KINDS:
            problems.add(f"{prefix}.alerts.{value}", show_value(value),
                         f"no {value} alerts for a fixed pointing: its hour angle and altitude never "
                         "change, so it has no such events")


def _tags(problems: Problems, entry: dict[str, Any], prefix: str) -> tuple[str, ...]:
    value = entry.get("tags", [])
    if not isinstance(value, list) or not all(isinstance(t, str) and t for t in value):
        problems.add(f"{prefix}.tags", show_value(value), 'a list of texts, like ["galaxy", "bright"]')
        return ()
    return tuple(value)


def _to_icrs(frame: Frame, lon_deg: float, lat_deg: float) -> tuple[float | None, float, float | None]:
    """(ra_deg, dec_deg, ha_hours) for a Target record."""
    if frame is Frame.ICRS:
        return lon_deg, lat_deg, None
    if frame is Frame.HADEC:
        return None, lat_deg, lon_deg / 15.0
    from siderod.astro import frames

    if frame is Frame.GALACTIC:
        ra, dec = frames.galactic_to_icrs_deg(lon_deg, lat_deg)
        return float(ra), float(dec), None
    # Ecliptic of J2000 -> ICRS. For ecliptic-of-date the RA is left None (resolved per instant by
    # siderod.plan.positions.target_stars); the J2000 Dec is kept as a close stand-in (precession moves
    # it by well under a degree per century) for anything that needs a rough declination.
    ra, dec = frames.ecliptic_j2000_to_icrs_deg(lon_deg, lat_deg)
    if frame is Frame.ECLIPTIC_OF_DATE:
        return None, float(dec), None
    return float(ra), float(dec), None

