"""`siderod run`: start the alert service in the foreground (systemd runs exactly this).

With a terminal on stdout the live board is shown above the log; under systemd, or with
``--no-view``, it only logs, one line per event on stderr.
"""

from __future__ import annotations

import argparse

from siderod.cli.main import EXIT_FAILURE, EXIT_OK

__all__ = ["register", "run"]


def register(subparsers: argparse._SubParsersAction) -> None:
    parser = subparsers.add_parser(
        "run",
        help="run the alert service in the foreground",
        description=(
            "Plan and deliver alerts until stopped (SIGTERM or Ctrl-C); SIGHUP reloads the "
            "configuration. Alerts are advisory: set the mount's own limits, and never point "
            "unfiltered optics at or near the Sun."
        ),
    )
    parser.add_argument(
        "--no-view", action="store_true", help="do not show the live board, even on a terminal"
    )
    parser.add_argument(
        "--log-level",
        default="info",
        choices=["debug", "info", "warning", "error"],
        help="how much to log on stderr (default: info)",
    )
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    import asyncio
    import logging
    import os
    import sys

    from siderod.common.clock import SystemClock
    from siderod.files.paths import resolve_paths
    from siderod.service.anomaly import linux_boot_seconds
    from siderod.service.control import ServiceAlreadyRunning
    from siderod.service.daemon import Service
    from siderod.service.loading import ConfigLoad

    log = logging.getLogger("siderod.run")
    level = getattr(logging, str(args.log_level).upper())
    logging.getLogger().setLevel(level)
    # APScheduler logs every job at INFO; our own lines already say what happened.
    logging.getLogger("apscheduler").setLevel(max(level, logging.WARNING))
    env = os.environ
    _export_session_bus(env)
    paths = resolve_paths(env)
    clock = SystemClock()
    explicit = getattr(args, "config", None)
    service = Service(
        # Reloads run in a child process (a big target file would hold this one's interpreter);
        # DUT1 from IERS tables is taken for the moment of loading, on the service's clock.
        # check_push: read and check every push URL and refuse secrets others can read.
        ConfigLoad(explicit, dict(os.environ), check_push=True),
        clock,
        None,
        None,
        paths,
        env=env,
        boot_seconds=linux_boot_seconds(),
        load_config_in_child=True,
    )
    with_view = not args.no_view and sys.stdout.isatty()

    async def main() -> None:
        if not with_view:
            await service.run(install_signal_handlers=True)
            return
        service_task = asyncio.create_task(service.run(install_signal_handlers=True))
        ready = asyncio.create_task(service.wait_ready())
        await asyncio.wait({service_task, ready}, return_when=asyncio.FIRST_COMPLETED)
        if service_task.done():
            ready.cancel()
            service_task.result()
            return
        view_task = asyncio.create_task(_run_view(service, clock))
        await asyncio.wait({service_task, view_task}, return_when=asyncio.FIRST_COMPLETED)
        if view_task.done() and not service_task.done():
            if view_task.exception() is not None:
                log.error("the live view stopped (%s); the service logs only", view_task.exception())
            await service_task
        else:
            view_task.cancel()
            await asyncio.gather(view_task, return_exceptions=True)
            service_task.result()

    try:
        asyncio.run(main())
    except KeyboardInterrupt:
        return EXIT_OK
    except ServiceAlreadyRunning as exc:
        print(f"siderod: {exc}", file=sys.stderr)
        return EXIT_FAILURE
    except (Exception, BaseExceptionGroup) as exc:  # noqa: B036 -- a TaskGroup raises a group
        from siderod.common.errors import ConfigErrors

        if isinstance(exc, ConfigErrors):
            raise  # invalid at start-up: main prints it and exits 1
        # Anything else stops the service loudly, with the traceback; systemd restarts it.
        log.critical("the service stopped on an unexpected error", exc_info=exc)
        return EXIT_FAILURE
    return EXIT_OK


async def _run_view(service, clock) -> None:
    import os

    from siderod.astro.leapseconds import BUILTIN_LEAP_TABLE
    from siderod.view.live import BoardFeed, run_live
    from siderod.view.theme import make_console

    console = make_console(os.environ)
    feed = BoardFeed(
        lambda: service.config,
        get_snapshot=service.snapshot,
        leap_known_good_until=BUILTIN_LEAP_TABLE.known_good_until_utc,
        source="this service",
    )
    try:
        # Keys on the board: A acknowledges every critical alert that is repeating; U picks the
        # target in use (nearest the meridian first, then the next, then none).
        await run_live(clock, feed.inputs_at, console, min(service.config.view.refresh_hz, 10.0),
                       keys={"a": lambda: service.acknowledge(via="board"),
                             "u": service.cycle_target_in_use})
    finally:
        await feed.close()


def _export_session_bus(env) -> None:
    """dbus-fast does not look in $XDG_RUNTIME_DIR/bus; point it there when nothing else says where."""
    import os

    if env.get("DBUS_SESSION_BUS_ADDRESS"):
        return
    runtime = env.get("XDG_RUNTIME_DIR", "")
    if runtime and os.path.exists(os.path.join(runtime, "bus")):
        os.environ["DBUS_SESSION_BUS_ADDRESS"] = f"unix:path={os.path.join(runtime, 'bus')}"
