"""`siderod shortlist`: which targets suit a night, ranked, with a small altitude chart for each.

Ranks the configured targets, or a filtered slice of the whole deep-sky catalogue, by the figures
of :mod:`siderod.plan.nightlist` (definitions there and in the README).
"""

from __future__ import annotations

import argparse
import json
import math
import sys
from typing import Any

__all__ = ["DEFAULT_ROWS", "JSON_FIELDS", "ROW_JSON_FIELDS", "SORT_KEYS", "DEFINITIONS", "register", "run"]

#: Rows shown unless --limit says otherwise.
DEFAULT_ROWS = 15
#: Top-level fields of ``siderod shortlist --json`` (stable; documented in the README).
JSON_FIELDS = ("site", "timezone", "night", "source", "definitions", "considered", "count", "targets")
#: Fields of each ranked target.
ROW_JSON_FIELDS = (
    "name",
    "catalogue_entry",
    "kind",
    "magnitude",
    "usable_hours",
    "top_altitude_deg",
    "top_utc",
    "moon_separation_deg",
    "moon_hours",
    "moon_lit_fraction",
    "flip_utc",
    "flip_while_usable",
)
#: What each figure means, word for word in --json and the README.
DEFINITIONS = {
    "night": "from the Sun's centre sinking through -18 deg (geometric) to its rising through -18 deg; where "
    "the Sun does not get that low, the first of -12, -6 and -0.8333 deg it reaches; where it does "
    "not set, the two hours either side of its lowest point",
    "usable_hours": "hours of the night with the target at or above its lowest usable altitude (the larger "
    "of its min_altitude, or the global one, and the horizon profile at its azimuth; refracted "
    "altitude when refraction is on); 5-minute grid, crossings interpolated",
    "top_altitude_deg": "the greatest altitude during the night, usable or not: at the upper culmination if "
    "it falls in the night, else at dusk or dawn; top_utc is when",
    "moon_separation_deg": "the smallest angle between the target and the Moon's centre while the target is "
    "usable and the Moon is above the horizon; null when the Moon is down all that time",
    "moon_hours": "of the usable hours, those with the Moon above the horizon",
    "moon_lit_fraction": "the Moon's mean illuminated fraction over those hours; null when there are none",
    "flip_utc": "German equatorial mount: when the target reaches flip_after past the meridian during the "
    "night; null when it does not; flip_while_usable says whether it is usable then",
}
#: --sort keys and how each orders (best first).
SORT_KEYS = ("hours", "top", "moon", "transit", "flip", "name")


def register(subparsers: argparse._SubParsersAction) -> None:
    """Add ``shortlist`` to the command line."""
    from siderod.files.catalogue import KIND_GROUPS

    parser = subparsers.add_parser(
        "shortlist",
        help="rank the targets (or the deep-sky catalogue) by how well they suit a night",
        description="For the configured site and one night (dusk to dawn at the Sun's -18 deg), rank the "
        "targets by usable hours in the dark, top altitude, the Moon and the meridian flip, with an "
        "altitude chart for each. Figures are defined in the README and in --json.",
    )
    parser.add_argument(
        "--night",
        metavar="YYYY-MM-DD",
        help="the night that begins on this local evening (default: the night in progress or the next one)",
    )
    parser.add_argument(
        "--at", metavar="ISO-8601", help='"now" for choosing the night (default: the clock)'
    )
    parser.add_argument(
        "--catalogue",
        action="store_true",
        help="rank the whole deep-sky catalogue (narrow it with --kind, --brighter, --larger, "
        "--within) instead of the configured targets",
    )
    parser.add_argument(
        "--kind",
        action="append",
        choices=sorted(KIND_GROUPS),
        metavar="KIND",
        help=f"with --catalogue: only this kind (repeatable): {', '.join(KIND_GROUPS)}",
    )
    parser.add_argument("--brighter", type=float, metavar="MAG", help="with --catalogue: magnitude limit")
    parser.add_argument("--larger", type=float, metavar="ARCMIN", help="with --catalogue: least major axis")
    parser.add_argument("--within", metavar="CON", help="with --catalogue: IAU constellation abbreviation")
    parser.add_argument(
        "--sort",
        choices=SORT_KEYS,
        default="hours",
        help="hours (most usable first, the default), top (highest first), moon (farthest "
        "from the Moon first), transit (earliest top first), flip (earliest flip first), name",
    )
    parser.add_argument("--min-hours", type=float, metavar="H", help="only targets usable at least H hours")
    parser.add_argument(
        "--min-top", type=float, metavar="DEG", help="only targets that reach this altitude"
    )
    parser.add_argument(
        "--moon-away",
        type=float,
        metavar="DEG",
        help="only targets never closer than DEG to the Moon while usable (or with it down)",
    )
    parser.add_argument(
        "--no-flip",
        action="store_true",
        help="only targets that need no meridian flip while usable tonight",
    )
    parser.add_argument(
        "--limit",
        type=int,
        default=DEFAULT_ROWS,
        metavar="N",
        help=f"at most N rows (default {DEFAULT_ROWS}; 0 for all)",
    )
    parser.add_argument("--no-chart", action="store_true", help="leave out the altitude charts")
    parser.add_argument("--json", action="store_true", help="print one JSON object (fields in the README)")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """0 on success (even when nothing suits the night), 1 for bad input, 2 for a bad command line."""
    import os

    from siderod.astro.timescales import parse_iso_datetime, unix_from_datetime
    from siderod.common.model import MountKind
    from siderod.files.config import load_config
    from siderod.plan.nightlist import find_dark_window, rank_night
    from siderod.plan.positions import observer_for

    if args.limit < 0:
        print(f"siderod shortlist: --limit: expected 0 or more, got {args.limit}", file=sys.stderr)
        return 2
    catalogue_filters = args.kind or args.brighter is not None or args.larger is not None or args.within
    if catalogue_filters and not args.catalogue:
        print(
            "siderod shortlist: --kind, --brighter, --larger and --within narrow the catalogue: "
            "add --catalogue",
            file=sys.stderr,
        )
        return 2
    try:
        if args.at:
            now_unix = unix_from_datetime(parse_iso_datetime(args.at))
        else:
            from siderod.common.clock import SystemClock

            now_unix = SystemClock().now_utc().timestamp()  # the one read of the wall clock
    except ValueError as exc:
        print(f"siderod shortlist: --at: {exc}", file=sys.stderr)
        return 1
    config = load_config(getattr(args, "config", None), os.environ, at_unix=now_unix)
    if args.night:
        try:
            after_unix = _local_noon_unix(args.night, config.site.timezone)
        except ValueError:
            print(
                f"siderod shortlist: --night: expected a date like 2026-12-14, got {args.night!r}",
                file=sys.stderr,
            )
            return 1
    else:
        after_unix = now_unix
    observer = observer_for(config)
    dut1 = config.time.dut1_seconds
    window = find_dark_window(observer, after_unix, dut1_seconds=dut1)
    rows = _candidates(args, config, window)
    flip = config.mount.flip_after_minutes if config.mount.kind is MountKind.GERMAN_EQUATORIAL else None
    figures = rank_night(
        rows["stars"],
        rows["min_altitude_deg"],
        window,
        observer,
        config.site,
        dut1_seconds=dut1,
        flip_after_minutes=flip,
    )
    order = _order(args, rows, figures, catalogue=args.catalogue)
    considered = len(rows["names"])
    shown = order[: args.limit] if args.limit else order
    data = _to_json(config, window, rows, figures, shown, considered, args.catalogue, observer, dut1)
    if args.json:
        sys.stdout.write(json.dumps(data, indent=2, ensure_ascii=False, allow_nan=False) + "\n")
        return 0
    _print_table(config, window, rows, figures, shown, len(order), considered, args, observer, dut1, flip)
    return 0


# ---------------------------------------------------------------------------------------------
# helpers


def _local_noon_unix(date_text: str, timezone: str) -> float:
    from datetime import date, datetime, time
    from zoneinfo import ZoneInfo

    day = date.fromisoformat(date_text)
    return datetime.combine(day, time(12, 0), ZoneInfo(timezone)).timestamp()


def _candidates(args: argparse.Namespace, config: Any, window: Any) -> dict[str, Any]:
    """Names, places and lowest usable altitudes of what is being ranked, as arrays."""
    import numpy as np

    from siderod.astro.places import stars_from_radec
    from siderod.common.model import Frame
    from siderod.plan.positions import target_stars

    if args.catalogue:
        from siderod.files.catalogue import KIND_GROUPS, open_catalogue

        arrays = open_catalogue().arrays()
        keep = np.ones(arrays.labels.size, dtype=bool)
        if args.kind:
            keep &= np.isin(arrays.kinds, [k for k in args.kind if k in KIND_GROUPS])
        if args.brighter is not None:
            keep &= arrays.magnitude <= args.brighter  # nan (unknown) compares False: left out
        if args.larger is not None:
            keep &= arrays.major_arcmin >= args.larger
        if args.within:
            keep &= np.char.lower(arrays.constellations.astype(str)) == args.within.strip().lower()
        index = np.flatnonzero(keep)
        return {
            "names": arrays.labels[index],
            "catalogue_entry": arrays.labels[index],
            "kinds": arrays.kinds[index],
            "magnitude": arrays.magnitude[index],
            "stars": stars_from_radec(arrays.ra_deg[index], arrays.dec_deg[index]),
            "min_altitude_deg": np.full(index.size, config.events.min_altitude_deg),
        }
    # Fixed hour-angle pointings have no place on the sky to rank, and bodies and orbits move;
    # only targets with a catalogue place are ranked (the README says so).
    fixed_places = (Frame.ICRS, Frame.GALACTIC, Frame.ECLIPTIC, Frame.ECLIPTIC_OF_DATE)
    targets = [t for t in config.targets if t.frame in fixed_places]
    mid_jd_tt = 2440587.5 + 0.5 * (window.start_unix + window.end_unix) / 86400.0 + 69.184 / 86400.0
    global_min = config.events.min_altitude_deg
    return {
        "names": np.array([t.name for t in targets], dtype=object),
        "catalogue_entry": np.array([t.catalogue_entry or None for t in targets], dtype=object),
        "kinds": np.array([None] * len(targets), dtype=object),
        "magnitude": np.full(len(targets), np.nan),
        "stars": target_stars(targets, mid_jd_tt),
        "min_altitude_deg": np.array(
            [global_min if t.min_altitude_deg is None else t.min_altitude_deg for t in targets], dtype=float
        ),
    }


def _order(args: argparse.Namespace, rows: dict[str, Any], figures: Any, *, catalogue: bool) -> list[int]:
    import numpy as np

    hours = figures.usable_hours
    keep = np.ones(hours.size, dtype=bool)
    if catalogue:
        keep &= hours > 0.0  # never usable tonight: not a candidate
    if args.min_hours is not None:
        keep &= hours >= args.min_hours
    if args.min_top is not None:
        keep &= figures.top_altitude_deg >= args.min_top
    if args.moon_away is not None:
        keep &= ~(figures.moon_separation_deg < args.moon_away)  # nan (Moon down) passes
    if args.no_flip:
        keep &= ~figures.flip_while_usable
    index = np.flatnonzero(keep)
    top = figures.top_altitude_deg[index]
    names = rows["names"][index].astype(str)
    magnitude = np.nan_to_num(rows["magnitude"][index].astype(float), nan=99.0)  # unknown: faintest
    if args.sort == "hours":
        # Hours to the nearest 0.1 h (circumpolar objects all tie at the whole night), then the
        # brighter, then the higher.
        key = np.lexsort((names, -top, magnitude, -np.round(hours[index], 1)))
    elif args.sort == "top":
        key = np.lexsort((names, -hours[index], -top))
    elif args.sort == "moon":
        separation = np.nan_to_num(figures.moon_separation_deg[index], nan=181.0)  # Moon down: best
        key = np.lexsort((names, -hours[index], -separation))
    elif args.sort == "transit":
        key = np.lexsort((names, figures.top_unix[index]))
    elif args.sort == "flip":
        key = np.lexsort((names, np.nan_to_num(figures.flip_unix[index], nan=np.inf)))
    else:
        key = np.argsort(names, kind="stable")
    return index[key].tolist()


def _iso(unix: float) -> str | None:
    from siderod.astro.timescales import format_iso_utc

    return None if math.isnan(unix) else format_iso_utc(float(unix)).replace(".000Z", "Z")


def _number(value: float, digits: int) -> float | None:
    return None if math.isnan(value) else round(float(value), digits)


def _to_json(config, window, rows, figures, shown, considered, catalogue, observer, dut1) -> dict[str, Any]:
    from siderod.astro.sunmoon import moon_illuminated_fraction
    from siderod.astro.timescales import instants_from_unix

    mid = instants_from_unix(0.5 * (window.start_unix + window.end_unix), dut1_seconds=dut1)
    targets = []
    for i in shown:
        magnitude = float(rows["magnitude"][i])
        targets.append(
            {
                "name": str(rows["names"][i]),
                "catalogue_entry": rows["catalogue_entry"][i],
                "kind": rows["kinds"][i],
                "magnitude": None if math.isnan(magnitude) else magnitude,
                "usable_hours": round(float(figures.usable_hours[i]), 3),
                "top_altitude_deg": round(float(figures.top_altitude_deg[i]), 3),
                "top_utc": _iso(figures.top_unix[i]),
                "moon_separation_deg": _number(figures.moon_separation_deg[i], 2),
                "moon_hours": round(float(figures.moon_hours[i]), 3),
                "moon_lit_fraction": _number(figures.moon_lit_fraction[i], 3),
                "flip_utc": _iso(figures.flip_unix[i]),
                "flip_while_usable": bool(figures.flip_while_usable[i]),
            }
        )
    limit = window.sun_limit_deg
    return {
        "site": config.site.name,
        "timezone": config.site.timezone,
        "night": {
            "kind": window.kind,
            "sun_limit_deg": None if math.isnan(limit) else limit,
            "start_utc": _iso(window.start_unix),
            "end_utc": _iso(window.end_unix),
            "hours": round(window.hours, 3),
            "moon_illuminated_fraction": round(float(moon_illuminated_fraction(mid)), 3),
        },
        "source": "catalogue" if catalogue else "targets",
        "definitions": DEFINITIONS,
        "considered": considered,
        "count": len(targets),
        "targets": targets,
    }


def _print_table(
    config, window, rows, figures, shown, matching, considered, args, observer, dut1, flip
) -> None:
    import os
    from datetime import datetime
    from zoneinfo import ZoneInfo

    import numpy as np
    from rich import box
    from rich.table import Table
    from rich.text import Text

    from siderod.astro.sunmoon import moon_illuminated_fraction
    from siderod.astro.timescales import instants_from_unix
    from siderod.plan.nightlist import altitude_samples
    from siderod.view.nightchart import format_hour_ruler, format_night_row
    from siderod.view.theme import make_console

    console = make_console(os.environ)
    zone = ZoneInfo(config.site.timezone)

    def local(unix: float) -> str:
        return "—" if math.isnan(unix) else datetime.fromtimestamp(float(unix), zone).strftime("%H:%M")

    start_local = datetime.fromtimestamp(window.start_unix, zone)
    lit = float(
        moon_illuminated_fraction(
            instants_from_unix(0.5 * (window.start_unix + window.end_unix), dut1_seconds=dut1)
        )
    )
    what = {
        "astronomical": "Sun below -18°",
        "nautical": "no astronomical night; Sun below -12°",
        "civil": "no nautical night; Sun below -6°",
        "sunset": "only civil twilight; Sun below the horizon",
        "no-night": "the Sun does not set; 2 h either side of its lowest point",
    }[window.kind]
    console.print(
        f"[bold]{config.site.name}[/], night of {start_local:%Y-%m-%d}: dark {local(window.start_unix)} "
        f"→ {local(window.end_unix)} {start_local:%Z} ({window.hours:.1f} h, {what}); "
        f"Moon {lit:.0%} lit",
        highlight=False,
    )
    width = console.width
    chart_columns = 0 if args.no_chart else max(12, min(48, width - 54 - (5 if args.catalogue else 0)))
    table = Table(box=box.SIMPLE_HEAD, padding=(0, 1, 0, 0), pad_edge=False)
    table.add_column("Target", no_wrap=True, overflow="ellipsis", max_width=16)
    table.add_column("Usable", justify="right", no_wrap=True)
    table.add_column("Top", justify="right", no_wrap=True)
    table.add_column("at", no_wrap=True)
    if args.catalogue:
        table.add_column("Mag", justify="right", no_wrap=True)
    table.add_column("Moon", justify="right", no_wrap=True)
    if flip is not None:
        table.add_column("Flip", no_wrap=True)
    if chart_columns:
        ruler = format_hour_ruler(window.start_unix, window.end_unix, chart_columns, config.site.timezone)
        table.add_column(ruler, no_wrap=True)
        index = np.array(shown, dtype=int)
        stars = rows["stars"]
        from siderod.astro.places import stars_from_radec

        subset = (
            stars_from_radec(
                stars.ra_deg[index],
                stars.dec_deg[index],
                pm_ra_cosdec_mas_per_year=stars.pm_ra_cosdec_mas_per_year[index],
                pm_dec_mas_per_year=stars.pm_dec_mas_per_year[index],
                parallax_mas=stars.parallax_mas[index],
                radial_velocity_km_s=stars.radial_velocity_km_s[index],
                epoch_jd_tt=stars.epoch_jd_tt[index],
            )
            if index.size
            else None
        )
        if subset is not None:
            alt, limit = altitude_samples(
                subset,
                rows["min_altitude_deg"][index],
                window,
                observer,
                config.site,
                chart_columns,
                dut1_seconds=dut1,
            )
    slice_seconds = (window.end_unix - window.start_unix) / max(1, chart_columns)
    for row, i in enumerate(shown):
        moon = figures.moon_separation_deg[i]
        cells = [
            str(rows["names"][i]),
            f"{figures.usable_hours[i]:.1f} h",
            f"{figures.top_altitude_deg[i]:.0f}°",
            local(figures.top_unix[i]),
        ]
        if args.catalogue:
            magnitude = float(rows["magnitude"][i])
            cells.append("" if math.isnan(magnitude) else f"{magnitude:.1f}")
        cells.append("down" if math.isnan(moon) else f"{moon:.0f}°")
        flip_column = None
        if flip is not None:
            flip_unix = figures.flip_unix[i]
            mark = "" if math.isnan(flip_unix) else ("" if figures.flip_while_usable[i] else " low")
            cells.append(local(flip_unix) + mark)
            if not math.isnan(flip_unix):
                flip_column = min(chart_columns - 1, int((flip_unix - window.start_unix) / slice_seconds))
        if chart_columns:
            cells.append(
                Text(format_night_row(alt[row], limit[row], flip_column=flip_column), style="siderod.ok")
            )
        table.add_row(*cells)
    console.print(table)
    more = f"; {matching - len(shown)} more (--limit)" if matching > len(shown) else ""
    source = "catalogue objects" if args.catalogue else "targets"
    console.print(
        f"{len(shown)} of {considered} {source} shown{more}. Usable: hours above the lowest usable "
        "altitude in the dark; Top: highest altitude in the dark, and when; Moon: closest approach "
        "while both are up (down: the Moon is down meanwhile)"
        + ("; Flip: meridian flip during the night (low: below the usable altitude then)" if flip else "")
        + ".",
        highlight=False,
        style="siderod.label",
    )
    if chart_columns:
        console.print(
            "Chart: bars ▁..█ = usable altitude 0-90°, · = up but too low, | = flip.",
            highlight=False,
            style="siderod.label",
        )
