"""`siderod now`: sidereal time and where every target is, once, as a table or as JSON."""

from __future__ import annotations

import argparse
import math
import sys
from typing import Any

__all__ = ["JSON_FIELDS", "SUN_CAUTION_DEG", "register", "run", "sky_to_json"]

#: The top-level fields of ``siderod now --json`` (stable; documented in the README).
JSON_FIELDS = (
    "utc", "jd_utc", "dut1_seconds", "dut1_source", "lmst_hours", "last_hours",
    "leap_table_known_good_until", "site", "sun", "moon", "twilight", "targets",
)
#: Targets closer than this to the Sun, while the Sun is up, are flagged in the table: never point
#: unfiltered optics at or near the Sun (common practice; a margin, not a safe limit).
SUN_CAUTION_DEG = 20.0


def register(subparsers: argparse._SubParsersAction) -> None:
    """Add ``now`` to the command line."""
    parser = subparsers.add_parser(
        "now",
        help="show sidereal time and where every target is, now or at --at",
        description="Print UTC, site time, Julian date, DUT1, LMST and LAST, and a table of targets with "
        "hour angle, declination, altitude, azimuth, airmass and whether each is rising or setting.",
    )
    parser.add_argument("--at", metavar="ISO-8601",
                        help='the instant to show, with "Z" or an offset, e.g. 2026-12-14T21:00:00Z '
                        "(default: now)")
    parser.add_argument("--json", action="store_true", help="print one JSON object (fields in the README)")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Compute and print; 0 on success, 1 for a bad --at or configuration."""
    import os

    from siderod.astro.leapseconds import BUILTIN_LEAP_TABLE
    from siderod.astro.timescales import parse_iso_datetime, unix_from_datetime
    from siderod.files.config import load_config
    from siderod.plan.positions import compute_sky

    if args.at:
        try:
            unix_seconds = unix_from_datetime(parse_iso_datetime(args.at))
        except ValueError as exc:
            print(f"siderod now: --at: {exc}", file=sys.stderr)
            return 2  # a malformed command line (siderod.cli.main.EXIT_USAGE)
    else:
        from siderod.common.clock import SystemClock

        unix_seconds = SystemClock().now_utc().timestamp()  # the one read of the wall clock

    config = load_config(getattr(args, "config", None), os.environ, at_unix=unix_seconds)
    if config.is_demo:
        from siderod.cli import DEMO_NOTICE

        print(DEMO_NOTICE, file=sys.stderr)
    until = BUILTIN_LEAP_TABLE.known_good_until_utc
    warning = format_time_scale_warning(unix_seconds)
    if warning:
        print(f"siderod: warning: {warning}", file=sys.stderr)
    sky = compute_sky(config, unix_seconds)
    data = sky_to_json(sky, config, leap_until=until.isoformat())
    if args.json:
        import json

        try:
            sys.stdout.write(json.dumps(data, indent=2, ensure_ascii=False, allow_nan=False) + "\n")
            sys.stdout.flush()
        except BrokenPipeError:  # e.g. piped into `head`; not an error of ours
            sys.stdout = open(os.devnull, "w")  # noqa: SIM115 -- keeps the interpreter's exit flush quiet
        return 0
    _print_table(sky, config, data)
    return 0


def format_time_scale_warning(unix_seconds: float) -> str:
    """Why times at this instant may be off, or "" when the leap-second table covers it."""
    from datetime import UTC, datetime

    from siderod.astro.leapseconds import BUILTIN_LEAP_TABLE

    table = BUILTIN_LEAP_TABLE
    if bool(table.is_known_good(unix_seconds)):
        return ""
    day = datetime.fromtimestamp(unix_seconds, UTC).date()
    if day < table.known_good_from_utc:
        return (f"{day} is before {table.known_good_from_utc}, when UTC began: the time given is taken as "
                "UT (plus DUT1) with TAI - UTC = 0, so TT-based places and event times can be off by "
                "tens of seconds")
    return (f"the built-in leap-second table is known good only until {table.known_good_until_utc}; "
            "UTC-based times after that may be off by a whole second if a leap second was added "
            "(update siderod)")


def sky_to_json(sky: Any, config: Any, *, leap_until: str) -> dict[str, Any]:
    """The ``--json`` object for one :class:`~siderod.plan.positions.SkyState` (fields in the README)."""
    from siderod.astro.timescales import format_iso_utc

    site = config.site
    # The sky is computed for config.targets in file order (compute_sky); names are unique.
    entries = {t.name: t.catalogue_entry for t in config.targets}
    targets = []
    for i, name in enumerate(sky.names):
        airmass = float(sky.airmass[i])
        targets.append({
            "name": name,
            "frame": sky.frames[i],
            "catalogue_entry": entries.get(name) or None,
            "ra_hours": float(sky.ra_hours[i]),
            "dec_deg": float(sky.dec_deg[i]),
            "hour_angle_hours": float(sky.ha_hours[i]),
            "altitude_deg": float(sky.alt_deg[i]),
            "azimuth_deg": float(sky.az_deg[i]),
            "airmass": None if math.isnan(airmass) else airmass,
            "rising": bool(sky.rising[i]),
            "min_altitude_deg": float(sky.min_alt_deg[i]),
            "sun_separation_deg": float(sky.sun_separation_deg[i]),
            **_moving_fields(sky, config, i),
        })
    return {
        "utc": format_iso_utc(sky.unix_seconds),
        "jd_utc": sky.jd_utc,
        "dut1_seconds": sky.dut1_seconds,
        "dut1_source": config.time.dut1_source,
        "lmst_hours": sky.lmst_hours,
        "last_hours": sky.last_hours,
        "leap_table_known_good_until": leap_until,
        "site": {
            "name": site.name,
            "latitude_deg": site.latitude_deg,
            "longitude_deg": site.longitude_deg,
            "elevation_m": site.elevation_m,
            "timezone": site.timezone,
        },
        "sun": {"altitude_deg": sky.sun_alt_deg, "azimuth_deg": sky.sun_az_deg},
        "moon": {"altitude_deg": sky.moon_alt_deg, "azimuth_deg": sky.moon_az_deg,
                 "illuminated_fraction": sky.moon_illuminated_fraction},
        "twilight": sky.twilight,
        "targets": targets,
    }


# ---------------------------------------------------------------------------------------------
# helpers


def _moving_fields(sky: Any, config: Any, i: int) -> dict[str, Any]:
    """Magnitude, distance and the elements' epoch and age (null where they do not apply)."""
    def number(values):
        if values is None or math.isnan(float(values[i])):
            return None
        return float(values[i])

    epoch_jd = number(getattr(sky, "elements_epoch_jd_tt", None))
    age = None if epoch_jd is None else abs(sky.jd_utc - epoch_jd)
    return {
        "magnitude": number(getattr(sky, "magnitude", None)),
        "distance_au": number(getattr(sky, "distance_au", None)),
        "elements_epoch": None if epoch_jd is None else _date_of_jd(epoch_jd),
        "elements_age_days": age,
        "elements_old": None if age is None else bool(age > config.max_element_age_days),
    }


def _date_of_jd(jd: float) -> str:
    from datetime import UTC, datetime, timedelta

    return (datetime(2000, 1, 1, 12, tzinfo=UTC) + timedelta(days=jd - 2451545.0)).strftime("%Y-%m-%d")


def _print_table(sky: Any, config: Any, data: dict[str, Any]) -> None:
    import os
    import shutil
    from datetime import datetime
    from zoneinfo import ZoneInfo

    from rich import box
    from rich.console import Console
    from rich.table import Table

    from siderod.astro.angles import format_dms, format_hms

    site = config.site
    local = datetime.fromtimestamp(sky.unix_seconds, ZoneInfo(site.timezone))
    lat = format_dms(abs(site.latitude_deg)) + (" N" if site.latitude_deg >= 0 else " S")
    lon = format_dms(abs(site.longitude_deg)) + (" E" if site.longitude_deg >= 0 else " W")
    source = data["dut1_source"]
    if source.startswith("iers:"):  # the full path is in --json and `check --doctor`
        source = "IERS " + os.path.basename(source[5:].split(" (")[0]) + source[5:].partition(".all")[2]
    console = Console(highlight=False)
    console.print(f"[bold]{site.name}[/]  {lat}  {lon}  {site.elevation_m:g} m")
    console.print(f"UTC    {data['utc']}     JD {sky.jd_utc:.6f}")
    console.print(f"Local  {local:%Y-%m-%d %H:%M:%S %Z} ({site.timezone})")
    console.print(f"DUT1   {sky.dut1_seconds:+.4f} s [dim]({source})[/]")
    console.print(f"[bold]LMST   {format_hms(sky.lmst_hours)}     LAST   {format_hms(sky.last_hours)}[/]")
    console.print(f"Sun    {sky.sun_alt_deg:+.1f}° ({sky.twilight})     "
                  f"Moon {sky.moon_alt_deg:+.1f}°, {sky.moon_illuminated_fraction:.0%} lit")

    if not sys.stdout.isatty():
        # Piped or redirected: every row, formatted as columns (10,000 targets in a fraction of a
        # second; a rich table of them took seconds).
        console.file.flush()
        sys.stdout.flush()
        out = getattr(sys.stdout, "buffer", None)
        block = format_target_rows(sky, data)
        if out is not None:
            out.write(block)
            out.flush()
        else:
            sys.stdout.write(block.decode())
        if any(t["elements_old"] for t in data["targets"]):
            print(f"orbital elements older than {config.max_element_age_days:g} days: two-body motion drifts "
                  "from the real orbit as the planets pull; fetch fresh elements")
        return
    # A terminal: the rows that fit, the rest counted (pipe the output to see every row).
    room = max(1, shutil.get_terminal_size().lines - _NOW_FRAME_LINES)
    table = Table(box=box.SIMPLE_HEAD, padding=(0, 1), pad_edge=False)
    table.add_column("Target", overflow="fold", min_width=14)
    for heading in ("HA", "Dec", "Alt", "Az", "Airmass"):
        table.add_column(heading, justify="right", no_wrap=True)
    # Comets and asteroids add their estimated magnitude and their elements' epoch.
    with_elements = any(t["elements_epoch"] is not None for t in data["targets"])
    if with_elements:
        table.add_column("Mag", justify="right", no_wrap=True)
        table.add_column("Elements", overflow="fold", min_width=10)
    table.add_column("", overflow="fold", min_width=8)
    sun_up = sky.sun_alt_deg > 0.0
    for i, name in enumerate(sky.names[:room]):
        alt = float(sky.alt_deg[i])
        airmass = float(sky.airmass[i])
        usable = alt >= float(sky.min_alt_deg[i])
        if sky.frames[i] == "fixed-pointing":
            note = "fixed"
        else:
            note = "rising" if sky.rising[i] else "setting"
        extra = []
        if with_elements:
            moving = data["targets"][i]
            extra.append("" if moving["magnitude"] is None else f"{moving['magnitude']:.1f}")
            epoch = moving["elements_epoch"] or ""
            if moving["elements_old"]:
                epoch += f" [yellow]{moving['elements_age_days']:.0f} d old[/]"
            extra.append(epoch)
        if sun_up and float(sky.sun_separation_deg[i]) < SUN_CAUTION_DEG:
            note += " [bold red]NEAR SUN[/]"
        table.add_row(
            name,
            format_hms(float(sky.ha_hours[i]), decimals=0, sign=True),
            format_dms(float(sky.dec_deg[i]), sign=True),
            f"{alt:+.1f}°",
            f"{float(sky.az_deg[i]):.1f}°",
            "—" if math.isnan(airmass) else f"{airmass:.2f}",
            *extra,
            note,
            style=None if usable else "dim",
        )
    console.print(table)
    if len(sky.names) > room:
        console.print(f"... and {len(sky.names) - room} more targets: pipe the output (| less) or use --json "
                      "to see them all")
    console.print("[dim]dim rows: below the lowest usable altitude (horizon profile or min_altitude)[/]")
    if any(t["elements_old"] for t in data["targets"]):
        console.print(f"[yellow]orbital elements older than {config.max_element_age_days:g} days: two-body "
                      "motion drifts from the real orbit as the planets pull; fetch fresh elements[/]")


#: Lines of a terminal `now` leaves for its heading, the table's header and the notes below it.
_NOW_FRAME_LINES = 13


def format_target_rows(sky: Any, data: dict[str, Any]) -> bytes:
    """The target table as plain text, every row, formatted as numpy columns (UTF-8 bytes).

    The columns of the terminal table; a row below its lowest usable altitude (dimmed on a terminal)
    says "below limit" in words.
    """
    import numpy as np

    from siderod.cli import textcols as tc

    n = len(sky.names)
    sp = tc.SPACE
    c = tc.constant
    names = [str(name) for name in sky.names]
    name_width = max(14, max(map(len, names), default=0))
    alt = np.asarray(sky.alt_deg, dtype=float)
    airmass = np.asarray(sky.airmass, dtype=float)
    fixed = np.array([frame == "fixed-pointing" for frame in sky.frames], dtype=bool)
    state = np.where(fixed, 2, np.where(np.asarray(sky.rising, dtype=bool), 0, 1))
    usable = alt >= np.asarray(sky.min_alt_deg, dtype=float)
    sun_up = sky.sun_alt_deg > 0.0
    near = sun_up & (np.asarray(sky.sun_separation_deg, dtype=float) < SUN_CAUTION_DEG)
    notes = [b"rising", b"setting", b"fixed"]
    note = tc.text_table(notes)[state]
    tail = tc.text_table([b"", b", below limit", b" NEAR SUN", b", below limit NEAR SUN"])[
        (~usable).astype(np.int64) + 2 * near.astype(np.int64)]
    columns = [
        (b"Target", "<", tc.text_table([t.ljust(name_width).encode() for t in names] or [b""], pad=sp)),
        (b"HA", ">", tc.sexagesimal_column(sky.ha_hours, units=(b"h", b"m", b"s"))),
        (b"Dec", ">", tc.sexagesimal_column(sky.dec_deg, units=("°".encode(), b"'", b'"'))),
        (b"Alt", ">", np.concatenate([tc.decimal_column(alt, 1, pad=sp, plus=True), c("°".encode(), n)],
                                     axis=1)),
        (b"Az", ">", np.concatenate([tc.decimal_column(sky.az_deg, 1, pad=sp), c("°".encode(), n)], axis=1)),
        (b"Airmass", ">", tc.decimal_column(airmass, 2, pad=sp, null="—".encode())),
    ]
    with_elements = any(t["elements_epoch"] is not None for t in data["targets"])
    if with_elements:
        mags = np.array([np.nan if t["magnitude"] is None else t["magnitude"] for t in data["targets"]])
        epochs = [((t["elements_epoch"] or "") + (f" {t['elements_age_days']:.0f} d old" if t["elements_old"]
                                                     else "")).encode() for t in data["targets"]]
        columns += [(b"Mag", ">", tc.decimal_column(mags, 1, pad=sp, null=b"")),
                    (b"Elements", "<", tc.text_table(epochs, pad=sp))]
    # Display widths: "°" and "—" are one column wide but two or three bytes.
    head, rule_width, parts = [], 0, [c(b" ", n)]
    for title, align, col in columns:
        col = col if len(col) == n else np.zeros((n, 1), dtype=np.uint8)
        col = np.where(col == tc.NUL, np.uint8(sp), col)
        shown = _display_widths(col)
        width = max(len(title), int(shown.max()) if n else 0)
        # Spaces to fill each row to the column's width on screen; NUL (dropped) for the rest.
        room = np.arange(max(1, width - int(shown.min() if n else 0)))
        fill = np.where(room[None, :] < (width - shown)[:, None], np.uint8(sp), np.uint8(tc.NUL))
        parts += [col, fill] if align == "<" else [fill, col]
        parts.append(c(b"  ", n))
        head.append(title.decode().ljust(width) if align == "<" else title.decode().rjust(width))
        rule_width += width + 2
    parts += [note, tail, c(b"\n", n)]
    top = " " + "  ".join(head) + "\n " + "─" * (rule_width + 7) + "\n"
    body = tc.join_rows(parts) if n else b""
    return top.encode() + body


def _display_widths(col):
    """Terminal columns of each row of a UTF-8 byte column: continuation bytes take none."""
    import numpy as np

    return col.shape[1] - np.count_nonzero((col & 0xC0) == 0x80, axis=1)
