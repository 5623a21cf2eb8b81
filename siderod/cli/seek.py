"""`siderod seek`: look objects up in the deep-sky catalogue by name, part of a name or filters.

Prints each entry, its place in every frame siderod reads (J2000/ICRS, apparent of date, galactic,
ecliptic of J2000 and of date, and as seen from the configured site), and the lines to paste into
a target file.
"""

from __future__ import annotations

import argparse
import json
import sys
from typing import Any

__all__ = ["DEFAULT_LIMIT", "JSON_FIELDS", "ENTRY_JSON_FIELDS", "register", "run", "entry_places",
           "format_target_lines"]

_WIDTH = 80  # the one-entry text wraps here, so it reads at 80 columns
#: At most this many entries unless --limit says otherwise.
DEFAULT_LIMIT = 20
#: Top-level fields of ``siderod seek --json`` (stable; documented in the README).
JSON_FIELDS = ("utc", "site", "query", "count", "entries")
#: Fields of each entry in ``siderod seek --json``.
ENTRY_JSON_FIELDS = ("label", "designation", "messier", "common_names", "kind", "type", "constellation",
                     "magnitude_v", "magnitude_b", "major_arcmin", "minor_arcmin", "other_ids", "notes",
                     "places", "target_lines")


def register(subparsers: argparse._SubParsersAction) -> None:
    """Add ``seek`` to the command line."""
    from siderod.files.catalogue import KIND_GROUPS

    parser = subparsers.add_parser(
        "seek",
        help="look objects up in the deep-sky catalogue; print places and lines for a target file",
        description="Find deep-sky objects by name (M 31, NGC 7000, \"Crab Nebula\"), by part of a name, "
        "or by filters. Each entry is printed with its place in every frame siderod reads and the lines "
        "to paste into a target file. Catalogue: OpenNGC (CC-BY-SA-4.0), offline.",
    )
    parser.add_argument("name", nargs="?", metavar="NAME",
                        help="a name or part of one, any case and spacing (optional with filters)")
    parser.add_argument("--kind", action="append", choices=sorted(KIND_GROUPS), metavar="KIND",
                        help=f"only this kind (repeatable): {', '.join(KIND_GROUPS)}")
    parser.add_argument("--brighter", type=float, metavar="MAG",
                        help="only objects of this magnitude or brighter (V, else B)")
    parser.add_argument("--larger", type=float, metavar="ARCMIN",
                        help="only objects at least this large (major axis, arcminutes)")
    parser.add_argument("--within", metavar="CON",
                        help="only objects in this constellation (IAU abbreviation, e.g. Cyg)")
    parser.add_argument("--limit", type=int, default=DEFAULT_LIMIT, metavar="N",
                        help=f"at most N entries (default {DEFAULT_LIMIT}; 0 for all)")
    parser.add_argument("--at", metavar="ISO-8601", help="the instant for places of date and from the site "
                        "(default: now)")
    parser.add_argument("--json", action="store_true", help="print one JSON object (fields in the README)")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """0 when something was found, 1 when nothing was (or the input was bad)."""
    import os

    from siderod.astro.timescales import format_iso_utc, parse_iso_datetime, unix_from_datetime
    from siderod.common.errors import CatalogueNameError
    from siderod.files.catalogue import open_catalogue
    from siderod.files.config import load_config

    filters = bool(args.kind or args.brighter is not None or args.larger is not None or args.within)
    if not args.name and not filters:
        print("siderod seek: give a name (or part of one) or at least one filter (--kind, --brighter, "
              "--larger, --within)", file=sys.stderr)
        return 2
    if args.limit < 0:
        print(f"siderod seek: --limit: expected 0 or more, got {args.limit}", file=sys.stderr)
        return 2
    if args.at:
        try:
            unix_seconds = unix_from_datetime(parse_iso_datetime(args.at))
        except ValueError as exc:
            print(f"siderod seek: --at: {exc}", file=sys.stderr)
            return 1
    else:
        from siderod.common.clock import SystemClock

        unix_seconds = SystemClock().now_utc().timestamp()  # the one read of the wall clock
    config = load_config(getattr(args, "config", None), os.environ, at_unix=unix_seconds)
    catalogue = open_catalogue()
    entries = []
    problem = None
    if args.name and not filters:
        try:
            entries = [catalogue.find(args.name)]
        except CatalogueNameError as exc:
            problem = exc
    if not entries:
        entries = catalogue.search(part=args.name, kinds=tuple(args.kind or ()), brighter_than=args.brighter,
                                   larger_than_arcmin=args.larger, constellation=args.within,
                                   limit=args.limit or None)
    places = entry_places(entries, config, unix_seconds)
    data = {
        "utc": format_iso_utc(unix_seconds),
        "site": config.site.name,
        "query": {"name": args.name, "kind": args.kind or [], "brighter": args.brighter,
                  "larger_arcmin": args.larger, "within": args.within, "limit": args.limit},
        "count": len(entries),
        "entries": [_entry_json(e, p) for e, p in zip(entries, places, strict=True)],
    }
    if args.json:
        sys.stdout.write(json.dumps(data, indent=2, ensure_ascii=False, allow_nan=False) + "\n")
        return 0 if entries else 1
    if not entries:
        if problem is not None:
            print(f"siderod seek: {problem}", file=sys.stderr)
        else:
            print("siderod seek: nothing in the catalogue matches", file=sys.stderr)
        return 1
    if len(entries) == 1:
        print(_format_one(entries[0], places[0], data["utc"], config.site.name))
    else:
        _print_list(entries, places, data["utc"], config.site.name, args.limit)
    print("catalogue: OpenNGC (CC-BY-SA-4.0, Mattia Verga and contributors), via pyongc")
    return 0


def entry_places(entries: list[Any], config: Any, unix_seconds: float) -> list[dict[str, Any]]:
    """Each entry's place in every frame siderod reads, at one instant, for the configured site.

    One vectorised call for all entries: J2000/ICRS as given, geocentric apparent RA/Dec of date
    (IAU 2006 precession, IAU 2000B nutation, annual aberration), galactic (IAU 1958 in ICRS),
    ecliptic of J2000 and of date, and topocentric hour angle, altitude (refracted when configured)
    and azimuth from :func:`siderod.plan.positions.compute_sky`.
    """
    import numpy as np

    from siderod.astro import frames
    from siderod.astro.places import apparent_radec, stars_from_radec
    from siderod.astro.timescales import instants_from_unix
    from siderod.common.model import Frame, Target
    from siderod.plan.positions import compute_sky

    if not entries:
        return []
    ra = np.array([e.ra_deg for e in entries], dtype=float)
    dec = np.array([e.dec_deg for e in entries], dtype=float)
    instants = instants_from_unix(float(unix_seconds), dut1_seconds=config.time.dut1_seconds)
    app_ra_hours, app_dec = apparent_radec(stars_from_radec(ra, dec), instants)
    gal_l, gal_b = frames.icrs_to_galactic_deg(ra, dec)
    ecl_lon, ecl_lat = frames.icrs_to_ecliptic_j2000_deg(ra, dec)
    tt_whole, tt_frac = np.asarray(instants.tt_whole), np.asarray(instants.tt_frac)
    date_lon, date_lat = frames.icrs_to_ecliptic_of_date_deg(ra, dec, tt_whole, tt_frac)
    targets = [Target(name=f"#{i}", frame=Frame.ICRS, lon_deg=float(r), lat_deg=float(d), ra_deg=float(r),
                      dec_deg=float(d)) for i, (r, d) in enumerate(zip(ra, dec, strict=True))]
    sky = compute_sky(config, unix_seconds, targets=targets)
    out = []
    for i in range(len(entries)):
        out.append({
            "icrs": {"ra_hours": float(ra[i]) / 15.0, "dec_deg": float(dec[i])},
            "apparent_of_date": {"ra_hours": float(app_ra_hours[i]), "dec_deg": float(app_dec[i])},
            "galactic": {"l_deg": float(gal_l[i]), "b_deg": float(gal_b[i])},
            "ecliptic_j2000": {"lon_deg": float(ecl_lon[i]), "lat_deg": float(ecl_lat[i])},
            "ecliptic_of_date": {"lon_deg": float(date_lon[i]), "lat_deg": float(date_lat[i])},
            "site": {"hour_angle_hours": float(sky.ha_hours[i]), "altitude_deg": float(sky.alt_deg[i]),
                     "azimuth_deg": float(sky.az_deg[i])},
        })
    return out


def format_target_lines(entry: Any) -> str:
    """The ``[[target]]`` table for an entry: its name and its J2000 (ICRS) place pinned in the file."""
    from siderod.astro.angles import format_dms, format_hms

    # "d m s" rather than the degree sign and quotes, which would need escaping inside a TOML string.
    dec = format_dms(entry.dec_deg, decimals=1, sign=True)
    dec = dec.replace("°", "d").replace("'", "m").replace('"', "s")
    return "\n".join([
        "[[target]]",
        f'name = "{entry.label}"',
        f'ra = "{format_hms(entry.ra_deg / 15.0, decimals=2)}"',
        f'dec = "{dec}"',
    ])


# ---------------------------------------------------------------------------------------------
# helpers


def _entry_json(entry: Any, places: dict[str, Any]) -> dict[str, Any]:
    return {
        "label": entry.label,
        "designation": entry.designation,
        "messier": entry.messier or None,
        "common_names": list(entry.common_names),
        "kind": entry.kind,
        "type": entry.type_text,
        "constellation": entry.constellation or None,
        "magnitude_v": entry.magnitude_v,
        "magnitude_b": entry.magnitude_b,
        "major_arcmin": entry.major_arcmin,
        "minor_arcmin": entry.minor_arcmin,
        "other_ids": list(entry.other_ids),
        "notes": entry.notes or None,
        "places": places,
        "target_lines": format_target_lines(entry),
    }


def _size_text(entry: Any) -> str:
    if entry.major_arcmin is None:
        return "size unknown"
    if entry.minor_arcmin is None:
        return f"{entry.major_arcmin:g}′ across"
    return f"{entry.major_arcmin:g}′ × {entry.minor_arcmin:g}′"


def _format_one(entry: Any, places: dict[str, Any], utc: str, site_name: str) -> str:
    from siderod.astro.angles import format_dms, format_hms

    also = [entry.designation] if entry.messier else []
    also += list(entry.common_names)
    magnitude = entry.magnitude
    mag_text = "magnitude unknown" if magnitude is None else (
        f"magnitude {magnitude:g} {'V' if entry.magnitude_v is not None else 'B'}")
    lines = [entry.label + (f" — {', '.join(also)}" if also else "")]
    where = f" in {entry.constellation}" if entry.constellation else ""
    kind = "" if entry.type_text.lower() == entry.kind else f" ({entry.kind})"
    lines.append(f"  {entry.type_text}{kind}{where}; {mag_text}; {_size_text(entry)}")
    import textwrap

    if entry.other_ids:
        lines += textwrap.wrap(f"also known as: {', '.join(entry.other_ids)}", width=_WIDTH,
                               initial_indent="  ", subsequent_indent="    ", break_on_hyphens=False)
    if entry.notes:
        lines += textwrap.wrap(f"note: {entry.notes}", width=_WIDTH, initial_indent="  ",
                               subsequent_indent="    ")
    p = places
    site = p["site"]
    lines += [
        f"  where it is ({utc}):",
        f"    J2000 (ICRS)            RA {format_hms(p['icrs']['ra_hours'], decimals=2)}   "
        f"Dec {format_dms(p['icrs']['dec_deg'], decimals=1, sign=True)}",
        f"    apparent, of date       RA {format_hms(p['apparent_of_date']['ra_hours'], decimals=2)}   "
        f"Dec {format_dms(p['apparent_of_date']['dec_deg'], decimals=1, sign=True)}",
        f"    galactic                l {p['galactic']['l_deg']:9.4f}°    b {p['galactic']['b_deg']:+9.4f}°",
        f"    ecliptic, J2000         lon {p['ecliptic_j2000']['lon_deg']:9.4f}°  "
        f"lat {p['ecliptic_j2000']['lat_deg']:+9.4f}°",
        f"    ecliptic, of date       lon {p['ecliptic_of_date']['lon_deg']:9.4f}°  "
        f"lat {p['ecliptic_of_date']['lat_deg']:+9.4f}°",
        f"    from {site_name}:  HA {format_hms(site['hour_angle_hours'], decimals=0, sign=True)}  "
        f"alt {site['altitude_deg']:+.1f}°  az {site['azimuth_deg']:.1f}°",
        "  for a target file (the name line alone also works):",
    ]
    lines += ["    " + line for line in format_target_lines(entry).splitlines()]
    return "\n".join(lines)


def _print_list(entries: list[Any], places: list[dict[str, Any]], utc: str, site_name: str,
                limit: int) -> None:
    from rich import box
    from rich.console import Console
    from rich.table import Table

    console = Console(highlight=False)
    table = Table(box=box.SIMPLE_HEAD, padding=(0, 1, 0, 0), pad_edge=False)  # fits 80 columns
    table.add_column("Name", no_wrap=True, min_width=6)
    table.add_column("Also", overflow="ellipsis", no_wrap=True, max_width=14)
    table.add_column("Kind", no_wrap=True)
    table.add_column("Mag", justify="right", no_wrap=True)
    table.add_column("Size′", justify="right", no_wrap=True)
    table.add_column("In", no_wrap=True)
    table.add_column("RA J2000", justify="right", no_wrap=True)
    table.add_column("Dec", justify="right", no_wrap=True)
    table.add_column("Alt", justify="right", no_wrap=True)
    for entry, place in zip(entries, places, strict=True):
        also = ([entry.designation] if entry.messier else []) + list(entry.common_names)
        mag = entry.magnitude
        ra_minutes = round(entry.ra_deg / 15.0 * 600.0) % 14400  # tenths of a minute of time
        dec_minutes = round(abs(entry.dec_deg) * 60.0)
        table.add_row(
            entry.label, ", ".join(also), entry.kind, "" if mag is None else f"{mag:.1f}",
            "" if entry.major_arcmin is None else f"{entry.major_arcmin:.0f}",
            entry.constellation, f"{ra_minutes // 600:02d}h{ra_minutes % 600 / 10:04.1f}m",
            f"{'-' if entry.dec_deg < 0 else '+'}{dec_minutes // 60:02d}°{dec_minutes % 60:02d}′",
            f"{place['site']['altitude_deg']:+.0f}°",
        )
    console.print(table)
    more = f" (the first {limit}; --limit 0 for all)" if limit and len(entries) == limit else ""
    console.print(f"{len(entries)} entries{more}; Alt: from {site_name} at {utc}. "
                  "`siderod seek NAME` shows one in full.")
