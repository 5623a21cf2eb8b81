"""`siderod watch`: the live sky board in this terminal, from the running service or computed here."""

from __future__ import annotations

import argparse
import os
import sys
from typing import Any

from siderod.cli.main import EXIT_OK, EXIT_USAGE

__all__ = ["register", "run"]


def register(subparsers: argparse._SubParsersAction) -> None:
    """Add ``watch`` to the command line."""
    parser = subparsers.add_parser(
        "watch",
        help="live sidereal clock and target board in this terminal",
        description="Show a live board: apparent and mean LST, UTC, site time, the Sun, the Moon and "
        "every target ordered by what needs attention next, with the alerts the running service has "
        "planned and delivered. With no service running, the board is computed here from the "
        "configuration, and says so. Ctrl-C leaves.",
    )
    parser.add_argument("--once", action="store_true", help="print one frame and exit")
    parser.add_argument("--at", metavar="ISO-8601",
                        help='with --once: the instant to show, with "Z" or an offset, '
                        "e.g. 2026-12-14T22:30:00Z")
    parser.add_argument("--hz", type=float, metavar="N",
                        help="clock redraws per second, more than 0 and at most 10 "
                        "(default: [view] refresh_hz)")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Show the board; 0 when left with Ctrl-C or after --once, 1 for bad input, 2 for misuse."""
    import os

    if args.at and not args.once:
        print("siderod watch: --at needs --once (the live board always shows the present); "
              "try: siderod watch --once --at 2026-12-14T22:30:00Z", file=sys.stderr)
        return EXIT_USAGE
    if args.hz is not None and not 0.0 < args.hz <= 10.0:
        print(f"siderod watch: --hz must be more than 0 and at most 10, got {args.hz:g}", file=sys.stderr)
        return EXIT_USAGE

    from siderod.view.theme import make_console

    console = make_console(os.environ)
    if args.once or not console.is_terminal:
        if not args.once:
            print("siderod watch: standard output is not a terminal, so one frame is printed "
                  "(use --once to say so, or run it in a terminal for the live board)", file=sys.stderr)
        return _print_once(args, console)
    return _run_live(args, console)


def _print_once(args: argparse.Namespace, console: Any) -> int:
    import os
    from datetime import UTC

    from siderod.astro.leapseconds import BUILTIN_LEAP_TABLE
    from siderod.astro.timescales import parse_iso_datetime
    from siderod.common.clock import SystemClock
    from siderod.view.board import inputs_from_config, render_board

    snapshot = None
    if args.at:
        try:
            now_utc = parse_iso_datetime(args.at).astimezone(UTC)
        except ValueError as exc:
            print(f"siderod watch: --at: {exc}", file=sys.stderr)
            return EXIT_USAGE
        source = "computed here for --at"
    else:
        now_utc = SystemClock().now_utc()  # the one read of the wall clock
        snapshot, source = _ask_service(os.environ)
        snapshot, source = _same_config_or_none(args, snapshot, source)
    config = _load_config(args, snapshot, now_utc)
    from siderod.service.clockhealth import read_clock_health

    inputs = inputs_from_config(
        config,
        now_utc,
        snapshot=snapshot,
        source=source,
        clock_health=None if snapshot is not None or args.at else read_clock_health(),
        leap_known_good_until=BUILTIN_LEAP_TABLE.known_good_until_utc,
    )
    width = console.size.width
    # On a terminal, leave a line for the prompt; into a file or pipe, every target is printed.
    height = console.size.height - 1 if console.is_terminal else None
    console.print(render_board(inputs, width, height), crop=True)
    return EXIT_OK


def _run_live(args: argparse.Namespace, console: Any) -> int:
    import asyncio
    import os

    from siderod.astro.leapseconds import BUILTIN_LEAP_TABLE
    from siderod.common.clock import SystemClock
    from siderod.files.paths import resolve_paths
    from siderod.service.clockhealth import read_clock_health
    from siderod.service.control import request_once
    from siderod.service.protocol import snapshot_from_json
    from siderod.view.live import BoardFeed, run_live

    clock = SystemClock()
    snapshot, source = _ask_service(os.environ)
    snapshot, source = _same_config_or_none(args, snapshot, source)
    config = _load_config(args, snapshot, clock.now_utc())
    socket_path = resolve_paths(os.environ).socket_path

    async def get_snapshot() -> Any:
        result = await asyncio.to_thread(request_once, socket_path, {"op": "status"})
        return snapshot_from_json(result)

    feed = BoardFeed(
        lambda: config,
        get_snapshot=get_snapshot if snapshot is not None else None,
        get_clock_health=read_clock_health,
        leap_known_good_until=BUILTIN_LEAP_TABLE.known_good_until_utc,
        source=source,
    )
    hz = args.hz if args.hz is not None else config.view.refresh_hz

    async def acknowledge() -> None:
        # The board's A key: the same request as `siderod ack`. Without a service there is
        # nothing repeating, so the key does nothing.
        if snapshot is not None:
            await asyncio.to_thread(request_once, socket_path, {"op": "ack"}, timeout_seconds=20.0)

    def pick_target_in_use() -> None:
        # The board's U key: the next target in use (nearest the meridian first, then none),
        # chosen here from the same sky and sent as `siderod use` would.
        from siderod.plan.mount import next_target_in_use, pointable
        from siderod.plan.positions import compute_sky

        current = snapshot_from_json(request_once(socket_path, {"op": "status"})).mount.in_use
        targets = [t for t in config.targets if pointable(t)]
        choice = None
        if targets:
            sky = compute_sky(config, clock.now_utc().timestamp(), targets=targets)
            choice = next_target_in_use(sky.names, sky.ha_hours, sky.alt_deg, current)
        request_once(socket_path, {"op": "use", "target": choice}, timeout_seconds=20.0)

    async def use_next() -> None:
        if snapshot is not None:  # without a service there is nothing to tell
            await asyncio.to_thread(pick_target_in_use)

    async def main() -> None:
        try:
            await run_live(clock, feed.inputs_at, console, min(hz, 10.0),
                           keys={"a": acknowledge, "u": use_next})
        finally:
            await feed.close()

    try:
        asyncio.run(main())
    except KeyboardInterrupt:
        pass  # Ctrl-C is how one leaves; the view has already restored the terminal
    return EXIT_OK


def _ask_service(env: Any) -> tuple[Any, str]:
    """(snapshot, source note), or (None, why the board is computed here)."""
    from siderod.common.errors import ServiceNotRunning, SiderodError
    from siderod.files.paths import resolve_paths
    from siderod.service.control import request_once
    from siderod.service.protocol import snapshot_from_json

    socket_path = resolve_paths(env).socket_path
    try:
        return snapshot_from_json(request_once(socket_path, {"op": "status"})), "from the service"
    except ServiceNotRunning:
        return None, "computed here, no service"
    except SiderodError as exc:
        return None, f"computed here, service unreadable: {exc}"


def _same_config_or_none(args: argparse.Namespace, snapshot: Any, source: str) -> tuple[Any, str]:
    """Never mix two configurations on one board.

    With a service running one file and ``--config`` naming another, the board would show the
    other file's targets beside the service's alerts. Instead it is computed here from the file
    named, says so in its title line, and a warning on stderr names both files.
    """
    from siderod.files.config import find_config

    explicit = getattr(args, "config", None)
    if snapshot is None or not explicit or not snapshot.config_path:
        return snapshot, source
    named, _ = find_config(explicit, os.environ)
    if _same_file(named, snapshot.config_path):
        return snapshot, source
    print(f"siderod watch: {named} differs from the configuration the running service uses "
          f"({snapshot.config_path}); showing {named} computed here, without the service's alerts. "
          "Leave out --config to watch the service.", file=sys.stderr)
    return None, f"computed here from {os.path.basename(named)}; the service runs another file"


def _same_file(a: Any, b: Any) -> bool:
    try:
        return os.path.samefile(a, b)
    except OSError:
        return os.path.abspath(a) == os.path.abspath(b)


def _load_config(args: argparse.Namespace, snapshot: Any, now_utc: Any) -> Any:
    """The file given, else the one the running service uses, else the usual search."""
    from siderod.files.config import load_config

    explicit = getattr(args, "config", None)
    if explicit is None and snapshot is not None and snapshot.config_path:
        explicit = snapshot.config_path
    return load_config(explicit, None, at_unix=now_utc.timestamp())
