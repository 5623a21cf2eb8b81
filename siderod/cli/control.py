"""`siderod status|mute|unmute|reload|test-alert|acknowledge`: talk to the running service over its socket."""

from __future__ import annotations

import argparse
import json
import math
import os
import re
import sys
from datetime import datetime
from typing import Any

from siderod.cli.main import EXIT_BAD_INPUT, EXIT_FAILURE, EXIT_OK

__all__ = [
    "register",
    "run",
    "parse_duration_seconds",
    "format_duration",
    "format_status",
    "status_to_json",
]

# The service answered with an error (unknown target, invalid configuration...): a problem the
# user can fix, so the same code as bad input.
EXIT_REFUSED = EXIT_BAD_INPUT

# How long each verb waits for the service. test-alert waits for every channel to finish (each
# bounded by its own timeout); reload parses and validates the whole configuration.
# ack re-plans without the acknowledged repeats, as mute does.
_TIMEOUT_SECONDS = {"status": 3.0, "mute": 3.0, "unmute": 3.0, "reload": 20.0, "test-alert": 60.0,
                    "ack": 20.0, "use": 20.0}

#: The longest timed mute (the service's own limit, siderod.service.protocol): one year.
_MAX_MUTE_SECONDS = 365 * 86400
_DURATION_RE = re.compile(r"(?:(\d+)d)?(?:(\d+)h)?(?:(\d+)m)?(?:(\d+)s)?")


def register(subparsers: argparse._SubParsersAction) -> None:
    """Add the control verbs: status, mute, unmute, reload, test-alert, acknowledge (alias ack)."""
    socket_help = "the service's control socket (default: $XDG_RUNTIME_DIR/siderod/control.sock)"

    status = subparsers.add_parser(
        "status", help="show what the running service is doing",
        description="Uptime, site, LST, clock health, next alerts, channel health and mutes.",
    )
    status.add_argument("--json", action="store_true", help="print one JSON object instead of text")
    mute = subparsers.add_parser(
        "mute", help="stop alerts for one target (for a while, or until unmuted)",
        description="Stop alerts for TARGET. Without --for it stays muted until `siderod unmute`.",
    )
    mute.add_argument("target", metavar="TARGET", nargs="?", help="a target name from the configuration")
    mute.add_argument("--tag", metavar="TAG",
                      help="mute every target with this tag in the service's configuration instead")
    mute.add_argument(
        "--for", dest="for_seconds", metavar="DURATION", type=_duration_arg,
        help="how long, e.g. 90m, 2h, 1h30m, 1d (units d, h, m, s)",
    )
    unmute = subparsers.add_parser("unmute", help="give alerts for a muted target again")
    unmute.add_argument("target", metavar="TARGET", nargs="?", help="a muted target's name")
    unmute.add_argument("--tag", metavar="TAG", help="unmute every target with this tag instead")
    reload = subparsers.add_parser(
        "reload", help="re-read the configuration now",
        description="Validate the configuration and target files and switch to them; on any error the "
        "service keeps its current configuration and this command prints the problems.",
    )
    test_alert = subparsers.add_parser(
        "test-alert", help="send one test alert through every channel and report each result",
        description="Send one test message through every channel, each push destination included "
        "(whatever its urgency and kind filters), and print each one's result.",
    )
    ack = subparsers.add_parser(
        "acknowledge", aliases=["ack"], help="stop a critical alert repeating (short form: ack)",
        description="Acknowledge the critical alerts that are repeating: they stop repeating, on every "
        "channel. Without TARGET, every one that has been given and not yet acknowledged.",
    )
    ack.add_argument("target", metavar="TARGET", nargs="?",
                     help="only this target's alerts (default: all of them)")
    use = subparsers.add_parser(
        "use", help="say which target the mount is on (its flip alerts become the critical ones)",
        description="Set the target in use: its flip-due and tracking-limit alerts stay critical, the "
        "other targets' become low urgency (or none, with [mount] other_targets = \"off\"). Kept until "
        "dawn or until changed; a linked mount sets it by itself. --none clears it.",
    )
    use.add_argument("target", metavar="TARGET", nargs="?", help="a target name from the configuration")
    use.add_argument("--none", action="store_true", help="no target in use: every target alerts as usual")
    for verb, parser in (
        ("status", status), ("mute", mute), ("unmute", unmute), ("reload", reload),
        ("test-alert", test_alert), ("ack", ack), ("use", use),
    ):
        parser.add_argument("--socket", metavar="PATH", help=socket_help)
        parser.set_defaults(func=run, control_verb=verb)


def run(args: argparse.Namespace) -> int:
    """Send the verb's request, print the answer, and return the exit code."""
    from siderod.common.errors import ControlError
    from siderod.service.control import request_once
    from siderod.service.protocol import BadReply

    verb = args.control_verb
    request: dict[str, Any] = {"op": verb}
    if verb in ("mute", "unmute"):
        if bool(args.target) == bool(args.tag):
            print(f"siderod {verb}: give a TARGET or --tag TAG (one of the two)", file=sys.stderr)
            return 2  # a malformed command line (siderod.cli.main.EXIT_USAGE)
        if args.tag:
            try:
                return _by_tag(verb, args)
            except ControlError as e:
                print(f"siderod: the service refused {verb}: {e}", file=sys.stderr)
                return EXIT_REFUSED
    if verb == "mute":
        request.update(target=args.target, for_seconds=args.for_seconds)
    elif verb == "unmute":
        request["target"] = args.target
    elif verb == "ack" and args.target:
        request["target"] = args.target
    elif verb == "use":
        if bool(args.target) == bool(args.none):
            print("siderod use: give a TARGET, or --none to clear the target in use", file=sys.stderr)
            return 2  # a malformed command line, as argparse's own (siderod.cli.main.EXIT_USAGE)
        request["target"] = None if args.none else args.target
    try:
        result = request_once(_socket_path(args), request, timeout_seconds=_TIMEOUT_SECONDS[verb])
        if verb != "status":
            return _report_result(verb, args, result)
        _print_status(result, as_json=getattr(args, "json", False))
    except ControlError as e:
        print(f"siderod: the service refused {verb}: {e}", file=sys.stderr)
        return EXIT_REFUSED
    except BadReply as e:
        print(f"siderod: the service's status could not be read: {e}", file=sys.stderr)
        return EXIT_FAILURE
    return EXIT_OK


def _by_tag(verb: str, args: argparse.Namespace) -> int:
    """Mute or unmute every target carrying ``args.tag`` in the configuration the service runs.

    The tag is looked up in the service's own configuration file (its path comes from `status`),
    so the names match the targets it plans; each target is then one ordinary request.
    """
    import difflib

    from siderod.files.config import load_config
    from siderod.service.control import request_once

    socket_path = _socket_path(args)
    answer = request_once(socket_path, {"op": "status"}, timeout_seconds=_TIMEOUT_SECONDS["status"])
    status = _snapshot_json(answer)
    config = load_config(status.get("config_path") or None, os.environ)
    names = [t.name for t in config.targets if args.tag in t.tags]
    if not names:
        tags = sorted({tag for t in config.targets for tag in t.tags})
        close = difflib.get_close_matches(args.tag, tags, n=1, cutoff=0.6)
        hint = f' -- did you mean "{close[0]}"?' if close else ""
        print(f"siderod {verb}: no target has the tag {args.tag!r} in {config.path}{hint}; tags in use: "
              f"{', '.join(tags) or '(none)'}", file=sys.stderr)
        return EXIT_REFUSED
    for name in names:
        request: dict[str, Any] = {"op": verb, "target": name}
        if verb == "mute":
            request["for_seconds"] = args.for_seconds
        result = request_once(socket_path, request, timeout_seconds=_TIMEOUT_SECONDS[verb])
        args.target = name
        _report_result(verb, args, result)
    return EXIT_OK


def parse_duration_seconds(text: str) -> float:
    """``"90m"``, ``"2h"``, ``"1h30m"``, ``"1d"``, ``"45s"`` -> seconds (always > 0).

    Raises:
        ValueError: with the accepted forms, for anything else.
    """
    cleaned = text.strip().lower().replace(" ", "")
    if cleaned.startswith("-"):
        raise ValueError(f"a duration cannot be negative, got {text!r}; e.g. 90m, 2h, 1h30m or 1d")
    match = _DURATION_RE.fullmatch(cleaned)
    if not cleaned or match is None or not any(match.groups()):
        raise ValueError(f"expected a duration like 90m, 2h, 1h30m or 1d (units d, h, m, s), got {text!r}")
    days, hours, minutes, seconds = (int(g) if g else 0 for g in match.groups())
    total = ((days * 24 + hours) * 60 + minutes) * 60 + seconds
    if total <= 0:
        raise ValueError(f"a mute lasts more than 0 s; got {text!r} (leave out --for to mute until unmuted)")
    if total > _MAX_MUTE_SECONDS:
        raise ValueError(f"a timed mute lasts at most 365 days, got {text!r} (leave out --for to mute "
                         "until unmuted)")
    return float(total)


def format_duration(seconds: float) -> str:
    """``5400`` -> ``"1h 30m"``; under a minute shows seconds; days when over 48 h."""
    seconds = max(0, int(round(seconds)))
    days, rest = divmod(seconds, 86400)
    hours, rest = divmod(rest, 3600)
    minutes, secs = divmod(rest, 60)
    if days >= 2:
        return f"{days}d {hours}h"
    hours += days * 24
    if hours:
        return f"{hours}h {minutes:02d}m"
    return f"{minutes}m {secs:02d}s" if minutes else f"{secs}s"


def status_to_json(result: dict[str, Any]) -> dict[str, Any]:
    """The ``status --json`` object: the service's snapshot plus what this command works out locally.

    Added keys: ``uptime_seconds``, ``lst`` (``{"at_utc", "last_hours", "lmst_hours"}`` or null when
    the astronomy core is not importable) and ``clock_warning`` (text or null).
    """
    from dataclasses import replace

    from siderod.service.protocol import format_iso_z

    snapshot = _snapshot(result)
    # Whole seconds, as the README shows them; LST is worked out for the second that is shown.
    lst = _local_sidereal_hours(replace(snapshot, taken_utc=_whole_second(snapshot.taken_utc)))
    data = _whole_second_times(dict(_snapshot_json(result)))
    data["uptime_seconds"] = (snapshot.taken_utc - snapshot.started_utc).total_seconds()
    data["lst"] = (
        None if lst is None
        else {"at_utc": format_iso_z(_whole_second(snapshot.taken_utc)), "last_hours": lst[0],
              "lmst_hours": lst[1]}
    )
    data["clock_warning"] = _clock_warning(snapshot)
    return data


def _whole_second(when: datetime) -> datetime:
    from datetime import timedelta

    return (when + timedelta(microseconds=500_000)).replace(microsecond=0)


def _whole_second_times(value: Any, key: str = "") -> Any:
    """Every ``*_utc`` time in a status object to the whole second, except inside ``event`` objects,
    whose ``time_utc`` keeps the agenda's milliseconds (the same event fields as ``agenda --json``)."""
    from siderod.service.protocol import format_iso_z, parse_iso_z

    if key == "event":
        return value
    if isinstance(value, dict):  # under "muted" the keys are target names and the values times
        return {k: _whole_second_times(v, "until_utc" if key == "muted" else k) for k, v in value.items()}
    if isinstance(value, list):
        return [_whole_second_times(v, key) for v in value]
    if isinstance(value, str) and key.endswith("_utc") and "." in value:
        try:
            return format_iso_z(_whole_second(parse_iso_z(value)))
        except ValueError:
            return value
    return value


def format_status(result: dict[str, Any]) -> str:
    """The plain-text status report (no colour, so it reads the same in a pipe or a log)."""
    from siderod.astro.angles import format_dms, format_hms

    s = _snapshot(result)
    zone = _zone(s.site.timezone)
    uptime = (s.taken_utc - s.started_utc).total_seconds()
    lines = [
        f"siderod service: running for {format_duration(uptime)} (since {_utc(s.started_utc)})",
        f"site:    {s.site.name}  lat {format_dms(s.site.latitude_deg, sign=True)}  "
        f"lon {format_dms(s.site.longitude_deg, sign=True)} (east +)  {s.site.elevation_m:.0f} m  "
        f"{s.site.timezone}",
        f"config:  {s.config_path}",
    ]
    if s.config_error:
        lines.append(f"  last reload FAILED, still on the previous configuration: {s.config_error}")
    lst = _local_sidereal_hours(s)
    if lst is None:
        lines.append("LST:     not shown (the astronomy core is not importable here)")
    else:
        lines.append(
            f"LST:     {format_hms(lst[0], decimals=0)} apparent, {format_hms(lst[1], decimals=0)} mean, "
            f"at {_utc(s.taken_utc)}"
        )
    lines.append(f"DUT1:    {s.dut1_seconds:+.3f} s ({s.dut1_source})")
    clock = s.clock_health
    lines.append(f"clock:   {clock.state}" + (f" -- {clock.detail}" if clock.detail else ""))
    warning = _clock_warning(s)
    if warning:
        lines.append(f"  WARNING: {warning}")
    if s.ledger_error:
        lines.append(f"ledger:  WARNING: {s.ledger_error}")

    if s.awaiting_ack:
        lines.append("REPEATING until acknowledged (`siderod ack`, or A on the board):")
        for event in s.awaiting_ack:
            lines.append(f"  {_event_text(event, zone)}")
    lines.extend(_mount_status_lines(s.mount))
    lines.append(f"next alerts ({s.planned_count} planned, {s.missed_count} missed):")
    if s.partial_plan_until_utc is not None:
        lines.append(f"  (planned to {_local(s.partial_plan_until_utc, zone)} so far; the rest of the horizon"
                     " is being planned: ask again in a few seconds)")
    if not s.next_alerts:
        lines.append("  none planned" if s.partial_plan_until_utc is None else "  none yet")
    for alert in s.next_alerts:
        ahead = (alert.due_utc - s.taken_utc).total_seconds()
        when = f"in {format_duration(ahead)}" if ahead >= 0 else f"{format_duration(-ahead)} late"
        lines.append(
            f"  {_local(alert.due_utc, zone)}  {when:<12} {alert.urgency.value:<8}  {alert.title}"
        )
    lines.append("channels:")
    if not s.channels:
        lines.append("  none reported")
    for channel in s.channels:
        state = "ok" if channel.healthy else "FAILING"
        extra = f": {channel.last_error}" if channel.last_error and not channel.healthy else ""
        last_ok = f" (last ok {_utc(channel.last_ok_utc)})" if channel.last_ok_utc else ""
        debts = []
        if channel.owed_count:
            debts.append(f"{channel.owed_count} owed")
        if channel.missed_count:
            debts.append(f"{channel.missed_count} missed")
        debt_text = f" [{', '.join(debts)}]" if debts else ""
        lines.append(f"  {channel.name:<10} {state}{debt_text}{extra}{last_ok}")
    lines.append("muted:" + ("" if s.muted else " nothing"))
    for target, until in sorted(s.muted.items()):
        lines.append(f"  {target}: " + ("until unmuted" if until is None else f"until {_local(until, zone)}"))
    return "\n".join(lines)


# -- helpers, in the order they are used ------------------------------------------------------------


def _event_text(event: str, zone: Any) -> str:
    """``M42|flip-due|2026-12-14T22:03:08Z`` -> ``M42 flip-due at 22:03 GMT (22:03 UTC)``."""
    from siderod.service.protocol import parse_iso_z

    parts = event.rsplit("|", 2)
    if len(parts) != 3:
        return event
    target, kind, when = parts
    try:
        return f"{target} {kind} at {_local(parse_iso_z(when), zone)}"
    except ValueError:
        return event


def _mount_status_lines(m: Any) -> list[str]:
    """The linked mount and the target in use, for ``status`` (nothing when neither is there)."""
    if m.link_state == "off" and m.in_use is None:
        return []
    from siderod.view.mountpanel import format_pointing_dec, format_pointing_ra

    lines = []
    if m.link_state != "off":
        lines.append(f"mount:   link {m.link_state}" + (f" ({m.link_detail})" if m.link_detail else ""))
    if m.ra_hours is not None and m.dec_deg is not None:
        where = f"  pointing RA {format_pointing_ra(m.ra_hours)} Dec {format_pointing_dec(m.dec_deg)}"
        where += " (of date)"
        if m.alt_deg is not None and m.az_deg is not None:
            where += f", alt {m.alt_deg:.1f}°, az {m.az_deg:.1f}°"
        lines.append(where)
        tracking = {True: "tracking", False: "NOT tracking", None: "tracking unknown"}[m.tracking]
        state = "slewing" if m.slewing else "parked" if m.parked else tracking
        counterweight = {True: ", counterweight UP", False: "", None: ""}[m.counterweight_up]
        side = m.pier_side if m.pier_side != "unknown" else "not reported (flip from the hour angle alone)"
        ha = "" if m.ha_hours is None else f"hour angle {m.ha_hours:+.3f} h, "
        lines.append(f"  {ha}pier side {side}{counterweight}, {state}")
        flip = "-" if m.seconds_to_flip is None else format_duration(max(0.0, m.seconds_to_flip))
        limit = "-" if m.seconds_to_limit is None else format_duration(max(0.0, m.seconds_to_limit))
        near = "no listed target within 1°" if m.nearest_target is None else \
            f"on {m.nearest_target} ({m.nearest_distance_deg:.2f}°)"
        lines.append(f"  flip in {flip}, limit in {limit}; {near}")
    if m.link_state != "off":
        lines.append("  advisory only: the mount's own limits stay on; siderod never moves the mount")
    in_use = "none" if m.in_use is None else f"{m.in_use} (set by {m.in_use_source})"
    lines.append(f"target in use: {in_use}")
    return lines


def _duration_arg(text: str) -> float:
    try:
        return parse_duration_seconds(text)
    except ValueError as e:
        raise argparse.ArgumentTypeError(str(e)) from None


def _socket_path(args: argparse.Namespace) -> str:
    if getattr(args, "socket", None):
        return args.socket
    from siderod.files.paths import resolve_paths

    return os.fspath(resolve_paths(os.environ).socket_path)


def _print_status(result: dict[str, Any], *, as_json: bool) -> None:
    if as_json:
        print(json.dumps(status_to_json(result), indent=2, allow_nan=False))
    else:
        print(format_status(result))


def _report_result(verb: str, args: argparse.Namespace, result: dict[str, Any]) -> int:
    """Print what the service did; the exit code says whether it did what was asked."""
    message = result.get("message")
    if verb == "mute":
        target = result.get("target") or args.target
        until = result.get("until_utc")
        how_long = "until unmuted" if args.for_seconds is None else f"for {format_duration(args.for_seconds)}"
        print(f"muted {target} {how_long}" + (f" (until {until})" if isinstance(until, str) else ""))
    elif verb == "unmute":
        target = result.get("target") or args.target
        print(f"{target} was not muted" if result.get("was_muted") is False else f"unmuted {target}")
    elif verb == "ack":
        events = result.get("acknowledged")
        events = [str(e) for e in events] if isinstance(events, list) else []
        if not events:
            which = f" for {args.target}" if args.target else ""
            print(f"nothing to acknowledge{which}: no critical alert is repeating")
        else:
            print(f"acknowledged {len(events)} alert{'s' if len(events) != 1 else ''}; "
                  "they repeat no more:")
            for event in events:
                print(f"  {_event_text(event, None)}")
    elif verb == "use":
        target = result.get("target")
        print(f"target in use: {target}" if target else "no target in use: every target alerts as usual")
    elif verb == "reload":
        if result.get("reloaded") is False:
            error = result.get("error") or "the configuration is invalid"
            print(f"siderod: reload failed; the service keeps its previous configuration:\n{error}",
                  file=sys.stderr)
            return EXIT_REFUSED
        where = result.get("config_path")
        print("configuration reloaded" + (f" from {where}" if where else ""))
    else:
        return _report_test_alert(result.get("channels"))
    if isinstance(message, str) and message:
        print(message)
    return EXIT_OK


def _report_test_alert(channels: Any) -> int:
    # The service reports {channel: "ok" or the error}; a list of {"channel", "ok", "error"} also works.
    outcomes: list[tuple[str, str]] = []
    if isinstance(channels, dict):
        outcomes = [(str(name), str(outcome)) for name, outcome in channels.items()]
    elif isinstance(channels, list):
        for item in channels:
            if isinstance(item, dict):
                ok = item.get("ok") is True
                outcomes.append((str(item.get("channel", "?")), "ok" if ok else str(item.get("error", ""))))
    print("test alert sent:")
    failed = 0
    for name, outcome in outcomes:
        if outcome == "ok":
            print(f"  {name}: ok")
        else:
            failed += 1
            print(f"  {name}: FAILED: {outcome}")
    if failed:
        print(f"siderod: {failed} channel{'s' if failed != 1 else ''} failed; see above", file=sys.stderr)
    return EXIT_FAILURE if failed else EXIT_OK


def _snapshot_json(result: dict[str, Any]) -> dict[str, Any]:
    # The service may send the snapshot as the result itself or under "snapshot".
    inner = result.get("snapshot")
    return inner if isinstance(inner, dict) else result


def _snapshot(result: dict[str, Any]):
    from siderod.service.protocol import snapshot_from_json

    return snapshot_from_json(_snapshot_json(result))


def _local_sidereal_hours(snapshot) -> tuple[float, float] | None:
    """(apparent, mean) LST at the snapshot's time for its site, or None without the astronomy core."""
    try:
        from siderod.astro.sidereal import last_hours, lmst_hours
        from siderod.astro.timescales import instants_from_unix
    except ImportError:
        return None
    instants = instants_from_unix(snapshot.taken_utc.timestamp(), dut1_seconds=snapshot.dut1_seconds)
    lon_deg = snapshot.site.longitude_deg
    apparent, mean = float(last_hours(instants, lon_deg)), float(lmst_hours(instants, lon_deg))
    if not (math.isfinite(apparent) and math.isfinite(mean)):
        return None
    return apparent, mean


def _clock_warning(snapshot) -> str | None:
    from siderod.service.clockhealth import format_clock_warning

    return format_clock_warning(snapshot.clock_health, snapshot.clock_tolerance_seconds)


def _zone(name: str):
    from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

    try:
        return ZoneInfo(name)
    except (ZoneInfoNotFoundError, ValueError):
        return None


def _utc(when: datetime) -> str:
    return when.strftime("%Y-%m-%d %H:%M:%S UTC")


def _local(when: datetime, zone) -> str:
    if zone is None:
        return _utc(when)
    return when.astimezone(zone).strftime("%Y-%m-%d %H:%M %Z") + f" ({when.strftime('%H:%M')} UTC)"
