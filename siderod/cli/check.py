"""`siderod check [--doctor]`: validate the configuration and print a summary, or every error."""

from __future__ import annotations

import argparse
import os
import sys
from collections import Counter
from collections.abc import Mapping
from typing import Any

__all__ = ["register", "run", "format_summary", "format_doctor"]


def register(subparsers: argparse._SubParsersAction) -> None:
    """Add ``check`` to the command line."""
    parser = subparsers.add_parser(
        "check",
        help="validate the configuration and its target files; print a summary or every error",
        description="Read the configuration and every target file it names. Print a summary, or every "
        "problem found (file:line: key: expected ..., got ...) and exit 1.",
    )
    parser.add_argument("--doctor", action="store_true",
                        help="also report versions, where the configuration was found, leap-second table "
                        "dates, the control socket and the desktop bus")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """0 when the configuration is valid, 1 when it is not (every error printed)."""
    from siderod.common.errors import ConfigErrors
    from siderod.files.config import find_config, load_config

    env = os.environ
    explicit = getattr(args, "config", None)
    how = "?"
    path: Any = explicit
    try:
        path, how = find_config(explicit, env)
        config = load_config(explicit, env, check_push=True)
    except ConfigErrors as exc:
        config = None
        count = len(exc.errors)
        print(f"siderod check: {count} problem{'s' if count != 1 else ''} found; nothing was loaded:")
        for error in exc.errors:
            print(f"  {error}")
    else:
        print(format_summary(config, how))
    if getattr(args, "doctor", False):
        print()
        print(format_doctor(config, str(path) if path else "(none)", how, env))
    return 0 if config is not None else 1


def format_summary(config: Any, how_found: str) -> str:
    """A few lines describing a valid configuration: site, targets per frame, alerts, cautions."""
    from siderod.astro.angles import format_dms
    from siderod.common.model import EventKind, MountKind, Urgency

    site = config.site
    lines = [f"configuration: {config.path} ({how_found})" + ("  [demo]" if config.is_demo else "")]
    lat = format_dms(abs(site.latitude_deg)) + (" N" if site.latitude_deg >= 0 else " S")
    lon = format_dms(abs(site.longitude_deg)) + (" E" if site.longitude_deg >= 0 else " W")
    pressure = "standard for elevation" if site.pressure_hpa is None else f"{site.pressure_hpa:g} hPa"
    lines.append(f"site: {site.name}, {lat} {lon}, {site.elevation_m:g} m, {site.timezone}")
    lines.append(f"  air {pressure}, {site.temperature_c:g} °C; horizon profile: "
                 + (f"{len(site.horizon)} points" if site.horizon else "flat (0°)"))
    lines.append(f"time: DUT1 {config.time.dut1_seconds:+.4f} s ({config.time.dut1_source})")
    # Counted by member, spelled once per frame: an enum's .value per target cost 0.1 s at 200k.
    per_frame = Counter(target.frame for target in config.targets)
    frames = ", ".join(f"{count} {frame.value}" for frame, count in per_frame.items()) or "none"
    lines.append(f"targets: {len(config.targets)} ({frames}) from {len(config.target_files)} file(s)")
    for target in config.targets:
        if target.beam_ha_deg is None or not target.beam_sources:
            continue
        width = (f"{target.beam_ha_deg:g}°" if target.beam_ha_deg == target.beam_dec_deg
                 else f"{target.beam_ha_deg:g}° × {target.beam_dec_deg:g}° (HA × Dec)")
        lines.append(f"beam: {target.name}, {width}: {', '.join(target.beam_sources)}")
        if "sun" in target.beam_sources:
            lines.append(f"caution: {target.name} has the Sun as a source: radio only; never point "
                         "unfiltered optics at or near the Sun.")
    bodies = [t.name for t in config.targets if t.body is not None]
    orbits = [t for t in config.targets if t.orbit is not None]
    if bodies or orbits:
        from siderod.astro.timescales import datetime_from_unix

        def epoch(t):
            return datetime_from_unix((t.orbit.epoch_jd_tt - 2440587.5) * 86400.0).strftime("%Y-%m-%d")

        parts = ([f"{', '.join(bodies)} (JPL ephemeris)"] if bodies else []) + [
            f"{t.name} (elements of {epoch(t)})" for t in orbits]
        lines.append("  moving: " + "; ".join(parts))
    looked_up = [t for t in config.targets if t.catalogue_entry]
    if looked_up:
        lines.append(f"  places from the deep-sky catalogue: {len(looked_up)} ("
                     + ", ".join(t.name if t.name == t.catalogue_entry else f"{t.name} = {t.catalogue_entry}"
                                 for t in looked_up) + ")")
        lines.append(f"    {_catalogue_edition()}")
    silent = [t.name for t in config.targets if not t.alerts_enabled]
    if silent:
        lines.append(f"  no alerts for: {', '.join(silent)}")
    own = [t.name for t in config.targets if t.lead_minutes is not None and t.alerts_enabled]
    if own:
        lines.append(f"  own alert lead times: {', '.join(own)}")
    events = config.events
    marks = _list(events.hour_angles_hours, " h")
    lines.append(f"events: lowest usable altitude {events.min_altitude_deg:g}°, extra altitudes "
                 f"{_list(events.altitudes_deg, '°')}, hour-angle marks {marks}, "
                 f"refraction {'on' if events.refraction else 'off'}, window {events.window_hours:g} h")
    mount = config.mount
    mount_text = mount.kind.value
    if mount.kind is MountKind.GERMAN_EQUATORIAL:
        mount_text += (f", flip {mount.flip_after_minutes:g} min and limit {mount.limit_after_minutes:g} min "
                       "past the meridian")
    lines.append(f"mount: {mount_text}")
    alerts = config.alerts
    if alerts.lead_minutes:
        lines.append("alerts (minutes before the event; 0 = at it):")
        for kind, leads in alerts.lead_minutes.items():
            urgency = alerts.urgency.get(kind, Urgency.NORMAL).value
            lines.append(f"  {kind.value}: {', '.join(f'{m:g}' for m in leads)} ({urgency})")
    else:
        lines.append("alerts: none configured ([alerts.lead] is empty)")
    extras = [f"grace {alerts.grace_minutes:g} min", f"plan {alerts.horizon_hours:g} h ahead",
              f"re-plan every {alerts.replan_minutes:g} min"]
    lines.append("  " + ", ".join(extras))
    if alerts.hold_while_sun_above_deg is not None:
        lines.extend(_hold_lines(alerts))
    channels = ["log"] + (["desktop"] if config.notify.desktop else [])
    if config.notify.command:
        timeout = config.notify.command_timeout_seconds
        channels.append(f"command {config.notify.command[0]!r} (timeout {timeout:g} s)")
    lines.append(f"notify: {', '.join(channels)}")
    for push in config.notify.push:
        kinds = "every kind" if push.kinds is None else ", ".join(sorted(k.value for k in push.kinds))
        # Only the masked form: the URL itself holds tokens and passwords.
        lines.append(f"  push {push.name}: {push.masked_url} (from {push.source}; "
                     f"{push.min_urgency.value} and up; {kinds})")
    if config.notify.push:
        lines.append("  push URLs checked; nothing was sent (`siderod test-alert` sends one to each)")
    if alerts.repeat_minutes > 0:
        sound = config.notify.desktop and config.notify.critical_sound
        lines.append(f"critical alerts repeat every {alerts.repeat_minutes:g} min until acknowledged "
                     f"(`siderod ack`), at most {alerts.repeat_count} times where no next stage ends them"
                     + ("; the desktop plays a sound" if sound else ""))
    if mount.kind is MountKind.GERMAN_EQUATORIAL and EventKind.FLIP_DUE not in alerts.lead_minutes:
        lines.append("caution: a German equatorial mount with no flip-due alert: a missed flip can drive "
                     "the mount into its pier. Add flip-due = [10, 0] under [alerts.lead].")
    if mount.kind is MountKind.GERMAN_EQUATORIAL:
        lines.append("caution: flip and limit times come from this file; the mount's own limits always win.")
    lines.extend(_empty_file_cautions(config))
    lines.append("OK")
    return "\n".join(lines)


def _empty_file_cautions(config: Any) -> list[str]:
    # An empty target file is valid, but almost always a mistake (a wrong file, an unsaved edit).
    counts: dict[str, int] = {}
    for target in config.targets:
        path = target.source.rpartition(":")[0]
        counts[path] = counts.get(path, 0) + 1
    lines = [f"caution: {path} has no targets (is it the file you meant?)"
             for path in config.target_files if not counts.get(path)]
    if not config.targets:
        lines.append("caution: no targets at all: only Sun, Moon and twilight events will be computed")
    return lines


def _hold_lines(alerts: Any) -> list[str]:
    from siderod.common.model import EventKind
    from siderod.plan.planner import SKY_KINDS, held_kinds

    held = held_kinds(alerts)
    never = [k.value for k in EventKind if k not in SKY_KINDS and k not in held]
    how = "every target kind that is not critical"
    if alerts.hold_kinds is not None:
        how = "as named in hold_kinds"
    lines = [f"  Sun hold: while the Sun is above {alerts.hold_while_sun_above_deg:g}°, no alerts for "
             f"{', '.join(k.value for k in held) or 'no kind'} ({how})",
             f"  never held: {', '.join(never) + ', ' if never else ''}Sun, Moon and twilight alerts"]
    critical_held = [k.value for k in held if k in (EventKind.FLIP_DUE, EventKind.TRACKING_LIMIT)]
    if critical_held:
        lines.append(f"caution: the Sun hold silences {', '.join(critical_held)} alerts in daylight "
                     "(named in hold_kinds): a missed flip can drive the mount into its pier.")
    return lines


#: The runtime dependencies in pyproject.toml (tzdata, Windows only, aside), for --doctor's versions line.
_RUNTIME_DISTRIBUTIONS = ("numpy", "jplephem", "skyfield-data", "apscheduler", "rich", "desktop-notifier",
                          "icalendar", "pyongc", "indipyclient", "tomlkit", "tomli", "apprise")


def format_doctor(config: Any, path: str, how_found: str, env: Mapping[str, str]) -> str:
    """Environment report: versions, configuration source, leap table, socket and bus."""
    import platform
    from importlib import metadata

    from siderod import __version__
    from siderod.astro.leapseconds import BUILTIN_LEAP_TABLE
    from siderod.files.config import find_iers_finals
    from siderod.files.paths import resolve_paths

    lines = ["doctor:"]
    versions = [f"siderod {__version__}", f"python {platform.python_version()}"]
    for dist in _RUNTIME_DISTRIBUTIONS:
        try:
            versions.append(f"{dist} {metadata.version(dist)}")
        except metadata.PackageNotFoundError:
            versions.append(f"{dist} (not installed)")
    lines.append("  versions: " + ", ".join(versions))
    lines.append(f"  configuration: {path} ({how_found})")
    table = BUILTIN_LEAP_TABLE
    lines.append(f"  leap seconds: built-in table known good {table.known_good_from_utc} .. "
                 f"{table.known_good_until_utc} ({table.source})")
    finals = find_iers_finals()
    lines.append(f"  deep-sky catalogue: {_catalogue_edition()}")
    from siderod.files.catalogue import CATALOGUE_CREDIT

    lines.append(f"    credit: {CATALOGUE_CREDIT}")
    lines.append(f"  IERS finals2000A.all (astropy-iers-data): {finals or 'not installed'}")
    lines.append(f"  planetary ephemeris: {_ephemeris_report()}")
    if config is not None:
        lines.append(f"  DUT1 in use: {config.time.dut1_seconds:+.4f} s ({config.time.dut1_source})")
    paths = resolve_paths(env)
    runtime_note = " (XDG_RUNTIME_DIR unset: using the state directory)" if paths.runtime_is_fallback else ""
    lines.append(f"  control socket: {paths.socket_path}{runtime_note}")
    lines.append(f"  service: {_service_state(paths.socket_path)}")
    lines.append(f"  ledger: {paths.ledger_path}")
    bus = env.get("DBUS_SESSION_BUS_ADDRESS")
    if bus:
        lines.append(f"  desktop bus: DBUS_SESSION_BUS_ADDRESS={bus}")
    else:
        runtime = env.get("XDG_RUNTIME_DIR")
        candidate = os.path.join(runtime, "bus") if runtime else None
        exists = candidate is not None and os.path.exists(candidate)
        hint = f"; {candidate} exists: export DBUS_SESSION_BUS_ADDRESS=unix:path={candidate}" * exists
        lines.append(f"  desktop bus: DBUS_SESSION_BUS_ADDRESS is not set (desktop alerts will fail){hint}")
    return "\n".join(lines)


def _service_state(socket_path: Any) -> str:
    try:
        from siderod.service.control import request_once
    except ImportError:
        return "unknown (this build has no control client)"
    from siderod.common.errors import SiderodError

    try:
        result = request_once(socket_path, {"op": "status"}, timeout_seconds=1.0)
    except SiderodError as exc:
        return f"not answering ({exc})"
    except OSError as exc:
        return f"unknown ({exc})"
    started = result.get("started_utc", "?") if isinstance(result, dict) else "?"
    return f"running (started {started})"


def _ephemeris_report() -> str:
    """Which JPL kernel places planets, the Moon and minor bodies, its span, and where it is."""
    from siderod.astro.timescales import datetime_from_unix
    from siderod.files.ephemeris import KERNEL_NAME, kernel_path, load_ephemeris

    try:
        eph = load_ephemeris()
    except (OSError, ImportError, ValueError) as exc:
        return f"{KERNEL_NAME} not available ({exc}); planets, the Moon and comets cannot be placed"

    def date(jd: float) -> str:
        return datetime_from_unix((jd - 2440587.5) * 86400.0).strftime("%Y-%m-%d")

    return (f"JPL {KERNEL_NAME.removesuffix('.bsp').upper()} covering {date(eph.start_jd_tdb)} .. "
            f"{date(eph.end_jd_tdb)} (from skyfield-data): {kernel_path()}")


def _catalogue_edition() -> str:
    """Which catalogue edition is in use and where it was found, or why there is none."""
    from siderod.common.errors import CatalogueMissing
    from siderod.files.catalogue import catalogue_info

    try:
        info = catalogue_info()
    except CatalogueMissing as exc:
        return f"not available: {exc}"
    return f"OpenNGC {info.data_date or '(date unknown)'} from pyongc {info.package_version}: {info.path}"


def _list(values: tuple[float, ...], unit: str) -> str:
    return ", ".join(f"{v:g}{unit}" for v in values) or "none"


if __name__ == "__main__":  # pragma: no cover
    sys.exit("run this as `siderod check`")
