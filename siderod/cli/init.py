"""`siderod init`: write a starter configuration and target file for the user's own site."""

from __future__ import annotations

import argparse
import json
import os
import sys
from pathlib import Path

__all__ = ["register", "run", "render_config", "STARTER_TARGETS"]

#: The starter target list: objects named only, placed from the bundled deep-sky catalogue.
STARTER_TARGETS = """\
# Your targets. A name the bundled deep-sky catalogue knows (M 42, NGC 7000, Crab Nebula) needs no
# coordinates; anything else gives its own (see "Target files" in the README).

[[target]]
name = "M42"

[[target]]
name = "M31"

[[target]]
name = "M45"

# [[target]]
# name = "My star"
# ra = "05h55m10.3s"          # hours; a bare number below 24 is refused (write "5.92h" or "88.79d")
# dec = "+07 24 25"
"""


def register(subparsers: argparse._SubParsersAction) -> None:
    """Add ``init`` to the command line."""
    parser = subparsers.add_parser(
        "init",
        help="write a starter configuration and target file for your own site",
        description="Write config.toml and targets.toml for your site into the user configuration "
        "directory (or --dir). Existing files are never overwritten.",
    )
    parser.add_argument("--latitude", required=True, help='north positive, e.g. "-32 22 40" or "32 22 40 S"')
    parser.add_argument("--longitude", required=True, help='east positive, e.g. "-3 41 15" or "3 41 15 W"')
    parser.add_argument("--name", default="My observatory", help="the site's name")
    parser.add_argument("--elevation", type=float, default=0.0, help="metres above sea level")
    parser.add_argument("--timezone", default="UTC", help='IANA time zone, e.g. "Europe/London"')
    parser.add_argument("--dir", metavar="DIR",
                        help="where to write (default: the user configuration directory, "
                        "~/.config/siderod)")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """0 when both files were written and check out; 1 for bad input or a file already there."""
    from siderod.astro.angles import AngleParseError, parse_angle_deg
    from siderod.files.config import find_iers_finals, load_config
    from siderod.files.paths import resolve_paths

    directory = Path(args.dir) if args.dir else resolve_paths(os.environ).config_dir
    config_path, targets_path = directory / "config.toml", directory / "targets.toml"
    problems = []
    for text, kind, option in ((args.latitude, "lat", "--latitude"), (args.longitude, "lon", "--longitude")):
        try:
            parse_angle_deg(text, kind=kind)
        except AngleParseError as exc:
            problems.append(f"{option}: {exc}")
    existing = [p for p in (config_path, targets_path) if p.exists()]
    if existing:
        problems.append(f"{' and '.join(map(str, existing))} already exist{'s' * (len(existing) == 1)}; "
                        "nothing was written (siderod init never overwrites: move them away, or use --dir)")
    if problems:
        for problem in problems:
            print(f"siderod init: {problem}", file=sys.stderr)
        return 1
    text = render_config(args.name, args.latitude, args.longitude, args.elevation, args.timezone,
                         iers_installed=find_iers_finals() is not None)
    directory.mkdir(parents=True, exist_ok=True)
    with open(targets_path, "x", encoding="utf-8") as out:  # "x": never overwrite, even in a race
        out.write(STARTER_TARGETS)
    try:
        with open(config_path, "x", encoding="utf-8") as out:
            out.write(text)
        load_config(str(config_path), {})  # the starter must pass its own check
    except BaseException:
        targets_path.unlink(missing_ok=True)
        if config_path.exists() and config_path.read_text(encoding="utf-8") == text:
            config_path.unlink()
        raise
    # The verbs find this file by themselves only where they look without --config (README "Configuration").
    found = (not os.environ.get("SIDEROD_CONFIG")
             and config_path.resolve() == (resolve_paths(os.environ).config_dir / "config.toml").resolve())
    option = "" if found else f" --config {config_path}"
    print(f"wrote {config_path}\nwrote {targets_path}\n"
          f"Next: edit them, then run `siderod check{option}`; `siderod now{option}` shows your sky.")
    return 0


def render_config(name: str, latitude: str, longitude: str, elevation_m: float, timezone: str, *,
                  iers_installed: bool) -> str:
    """The starter config.toml text (TOML strings written as JSON strings, which TOML accepts)."""
    if iers_installed:
        dut1 = 'dut1 = "iers"                 # read from the installed IERS tables (astropy-iers-data)'
    else:
        dut1 = ("dut1 = 0.0                    # UT1 - UTC, seconds: the value from IERS Bulletin A,\n"
                '                              # or install astropy-iers-data and write dut1 = "iers";\n'
                "                              # with 0, LST can be off by up to 0.9 s")
    return f"""\
# siderod configuration for {name}, written by `siderod init`. Every key is explained in the README.

[site]
name = {json.dumps(name)}
latitude = {json.dumps(latitude)}        # north positive
longitude = {json.dumps(longitude)}       # east positive: west of Greenwich is negative
elevation = {elevation_m:g}                 # metres
timezone = {json.dumps(timezone)}
# horizon = [[0, 5], [90, 15], [180, 5], [270, 10]]   # lowest usable altitude by azimuth

[time]
{dut1}

[targets]
files = ["targets.toml"]      # relative to this file

[events]
min_altitude = 10             # degrees

[mount]
kind = "none"                 # "german-equatorial" for flip alerts: then set flip_after and
# flip_after = 10             # limit_after from the mount's manual (a missed flip can drive the
# limit_after = 25            # mount into its pier; the mount's own limits always win)

[alerts.lead]                 # minutes before the event; 0 = at the event
culmination = [5]
flip-due = [10, 0]
tracking-limit = [0]

[notify]
desktop = true
"""
