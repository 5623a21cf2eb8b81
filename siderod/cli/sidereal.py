"""`siderod sidereal`: when the local sidereal time reaches a value, and sidereal <-> solar spans.

Drift-scan observers plan in sidereal time: a source crosses a fixed beam when the local sidereal
time equals its right ascension plus the beam's hour angle. ``reach`` lists every instant of a window
at which the site's sidereal time (apparent by default, ``--mean`` for mean) reaches a value, in UTC
and in the site's time; ``span`` turns an interval of one clock into the other (24 h sidereal =
23 h 56 m 4.0905 s mean solar, common practice).
"""

from __future__ import annotations

import argparse
import sys

__all__ = ["REACH_JSON_FIELDS", "SPAN_JSON_FIELDS", "register", "run_reach", "run_span"]

#: Top-level fields of ``siderod sidereal reach --json`` (stable; documented in the README).
REACH_JSON_FIELDS = ("site", "timezone", "longitude_deg", "sidereal_time", "lst_hours", "start_utc",
                     "end_utc", "dut1_seconds", "instants")
#: Fields of ``siderod sidereal span --json``.
SPAN_JSON_FIELDS = ("given", "sidereal_seconds", "solar_seconds", "sidereal", "solar")


def register(subparsers: argparse._SubParsersAction) -> None:
    """Add ``sidereal`` (with ``reach`` and ``span``) to the command line."""
    parser = subparsers.add_parser(
        "sidereal",
        help="when the local sidereal time reaches a value; sidereal <-> solar intervals",
        description="Sidereal-time helpers for planning drift scans and transits.",
    )
    verbs = parser.add_subparsers(title="questions", metavar="QUESTION")
    reach = verbs.add_parser(
        "reach",
        help="every instant of a window at which the local sidereal time equals LST",
        description="List every instant of a window at which the site's local sidereal time equals LST, "
        "in UTC and in the site's time.",
    )
    reach.add_argument("lst", metavar="LST",
                       help='sidereal time, e.g. "05h34m", "5:34:00" or "5.5667" (hours)')
    reach.add_argument("--from", dest="start", metavar="ISO-8601",
                       help='window start with "Z" or an offset, e.g. 2026-12-14T12:00:00Z (default: now)')
    reach.add_argument("--hours", type=float, default=24.0, metavar="N",
                       help="window length in hours (default 24)")
    reach.add_argument("--mean", action="store_true",
                       help="use local mean sidereal time (default: apparent, as the board shows)")
    reach.add_argument("--json", action="store_true", help="print one JSON object (fields in the README)")
    reach.set_defaults(func=run_reach)
    span = verbs.add_parser(
        "span",
        help="convert an interval between sidereal and mean solar time",
        description="Convert an interval of sidereal time into mean solar time, or the other way round "
        "(24 h sidereal = 23 h 56 m 4.0905 s mean solar).",
    )
    span.add_argument("interval", metavar="INTERVAL", help='e.g. "24h", "2h30m", "0:03:56" or "1.5" (hours)')
    span.add_argument("--of", dest="given", choices=("sidereal", "solar"), default="sidereal",
                      help="which clock INTERVAL is measured on (default: sidereal)")
    span.add_argument("--json", action="store_true", help="print one JSON object")
    span.set_defaults(func=run_span)
    # The common options may also follow the question (`siderod sidereal reach 5h --config x.toml`);
    # SUPPRESS keeps an absent one from overwriting what the parent parser read.
    for sub in (reach, span):
        sub.add_argument("--config", metavar="FILE", default=argparse.SUPPRESS,
                         help="configuration file (default: $SIDEROD_CONFIG, the user config directory, "
                         "then the demo)")
        sub.add_argument("--log-level", default=argparse.SUPPRESS,
                         choices=("debug", "info", "warning", "error"), help=argparse.SUPPRESS)
    parser.set_defaults(func=_no_question(parser))


def run_reach(args: argparse.Namespace) -> int:
    """Print the instants; 0 on success, 1 for bad input."""
    import json
    import os
    from zoneinfo import ZoneInfo

    from siderod.astro.sidereal import find_lst_unix
    from siderod.astro.timescales import parse_iso_datetime
    from siderod.files.config import load_config

    lst_hours = _hours(args.lst, "LST")
    if lst_hours is None:
        return 1
    lst_hours %= 24.0
    if args.start:
        try:
            start_utc = parse_iso_datetime(args.start)
        except ValueError as exc:
            print(f"siderod sidereal reach: --from: {exc}", file=sys.stderr)
            return 1
    else:
        from siderod.common.clock import SystemClock

        start_utc = SystemClock().now_utc()  # the one read of the wall clock
    if not (args.hours > 0.0 and args.hours <= _MAX_HOURS):
        print(f"siderod sidereal reach: --hours: expected a number of hours in (0, {_MAX_HOURS:g}], "
              f"got {args.hours:g}", file=sys.stderr)
        return 1
    start_unix = start_utc.timestamp()
    end_unix = start_unix + args.hours * 3600.0
    config = load_config(getattr(args, "config", None), os.environ, at_unix=start_unix)
    if config.is_demo and not args.json:
        from siderod.cli import DEMO_NOTICE

        print(DEMO_NOTICE, file=sys.stderr)
    site = config.site
    dut1 = config.time.dut1_seconds
    times = find_lst_unix(lst_hours, site.longitude_deg, start_unix, end_unix, apparent=not args.mean,
                          dut1_seconds=dut1)
    zone = ZoneInfo(site.timezone)
    kind = "mean" if args.mean else "apparent"
    rows = [(_iso_utc(t), _utc(round(t, 3)).astimezone(zone).isoformat(timespec="milliseconds"))
            for t in times.tolist()]
    if args.json:
        json.dump({
            "site": site.name, "timezone": site.timezone, "longitude_deg": site.longitude_deg,
            "sidereal_time": kind, "lst_hours": round(lst_hours, 9), "start_utc": _iso_utc(start_unix),
            "end_utc": _iso_utc(end_unix), "dut1_seconds": dut1,
            "instants": [{"time_utc": u, "time_local": local} for u, local in rows],
        }, sys.stdout, indent=2)
        sys.stdout.write("\n")
        return 0
    from siderod.astro.angles import format_hms

    print(f"local {kind} sidereal time {format_hms(lst_hours, decimals=1)} at {site.name} "
          f"(longitude {site.longitude_deg:+.4f}°), {_iso_utc(start_unix)} to {_iso_utc(end_unix)}:")
    if not rows:
        print("  not reached in this window")
    for utc_text, local_text in rows:
        print(f"  {utc_text}   {local_text} ({site.timezone})")
    return 0


def run_span(args: argparse.Namespace) -> int:
    """Print the converted interval; 0 on success, 1 for bad input."""
    import json

    from siderod.astro.sidereal import sidereal_to_solar_seconds, solar_to_sidereal_seconds

    hours = _hours(args.interval, "INTERVAL")
    if hours is None:
        return 1
    seconds = hours * 3600.0
    if args.given == "sidereal":
        sidereal, solar = seconds, float(sidereal_to_solar_seconds(seconds))
    else:
        sidereal, solar = float(solar_to_sidereal_seconds(seconds)), seconds
    if args.json:
        json.dump({"given": args.given, "sidereal_seconds": round(sidereal, 6),
                   "solar_seconds": round(solar, 6), "sidereal": _span_text(sidereal),
                   "solar": _span_text(solar)}, sys.stdout, indent=2)
        sys.stdout.write("\n")
        return 0
    first, second = (("sidereal", sidereal), ("mean solar", solar))
    if args.given == "solar":
        first, second = second, first
    print(f"{_span_text(first[1])} {first[0]} = {_span_text(second[1])} {second[0]}")
    return 0


#: Longest window ``reach`` lists (a year: 366 answers).
_MAX_HOURS = 24.0 * 366


def _hours(text: str, what: str) -> float | None:
    from siderod.astro.angles import AngleParseError, parse_angle_deg

    try:
        return parse_angle_deg(text, kind="hour_angle") / 15.0
    except AngleParseError as exc:
        reason = str(exc).replace("an hour angle", "a time").replace("hour angle", "time")
        print(f"siderod sidereal: {what}: {reason}", file=sys.stderr)
        return None


def _span_text(seconds: float) -> str:
    """``-1d 02h 03m 04.0905s`` style: days only when needed, seconds to 0.1 ms."""
    sign = "-" if seconds < 0 else ""
    rest = round(abs(seconds), 4)
    days, rest = divmod(rest, 86400.0)
    hours, rest = divmod(rest, 3600.0)
    minutes, secs = divmod(rest, 60.0)
    text = f"{int(hours):02d}h {int(minutes):02d}m {secs:07.4f}s"
    return f"{sign}{int(days)}d {text}" if days else f"{sign}{text}"


def _utc(unix: float):
    from datetime import UTC, datetime

    return datetime.fromtimestamp(unix, UTC)


def _iso_utc(unix: float) -> str:
    when = _utc(round(unix, 3))  # rounded, not cut, to the millisecond shown
    return when.strftime("%Y-%m-%dT%H:%M:%S") + f".{when.microsecond // 1000:03d}Z"


def _no_question(parser: argparse.ArgumentParser):
    def run(args: argparse.Namespace) -> int:
        parser.print_help(sys.stderr)
        return 2
    return run
