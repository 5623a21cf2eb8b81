"""`siderod service install|uninstall`: write or remove the systemd user unit that runs the service."""

from __future__ import annotations

import argparse
import os
import shutil
import sys
from collections.abc import Mapping, Sequence
from pathlib import Path

__all__ = [
    "UNIT_NAME",
    "DEFAULT_EXEC_START",
    "register",
    "run",
    "render_unit",
    "format_exec_start",
    "find_entry_point",
    "user_unit_dir",
]

UNIT_NAME = "siderod.service"
#: The ExecStart of the unit kept in the repository (systemd/siderod.service); `install` writes the
#: absolute path of the siderod that runs it instead.
DEFAULT_EXEC_START = "%h/.local/bin/siderod run --no-view"

_UNIT_TEMPLATE = """\
# siderod: sidereal clock and observing alerts, as a systemd user service.
# Written by `siderod service install`; remove with `siderod service uninstall`.
[Unit]
Description=siderod sidereal clock and observing alerts
# Harmless when there is no graphical session (a headless PC with lingering enabled).
After=graphical-session.target
StartLimitIntervalSec=300
StartLimitBurst=5

[Service]
# READY=1 is sent once the first alert plan is made; WATCHDOG=1 pings come from the event loop.
Type=notify
NotifyAccess=main
ExecStart={exec_start}
ExecReload=/bin/kill -HUP $MAINPID
Environment=PYTHONUNBUFFERED=1
# numpy's OpenBLAS would otherwise start one thread per core for nothing.
Environment=OPENBLAS_NUM_THREADS=1
# Desktop notifications need the session bus, and dbus-fast does not look for %t/bus by itself.
Environment=DBUS_SESSION_BUS_ADDRESS=unix:path=%t/bus
WatchdogSec=30
Restart=on-failure
RestartSec=5
TimeoutStopSec=15
# The control socket and the single-instance lock live in %t/siderod, private to this user.
RuntimeDirectory=siderod
RuntimeDirectoryMode=0700
# systemd up to 253 puts a user unit's state directory under $XDG_CONFIG_HOME, later ones under
# $XDG_STATE_HOME; siderod itself keeps its ledger in $XDG_STATE_HOME/siderod and creates it.
StateDirectory=siderod
NoNewPrivileges=yes

[Install]
WantedBy=default.target
"""


def register(subparsers: argparse._SubParsersAction) -> None:
    """Add `siderod service install|uninstall [--dry-run]`."""
    parser = subparsers.add_parser(
        "service",
        help="install or remove the systemd user unit",
        description="Write or remove the systemd user unit that runs `siderod run` in the background.",
    )
    actions = parser.add_subparsers(dest="unit_action", metavar="ACTION", required=True)
    install = actions.add_parser(
        "install", help=f"write ~/.config/systemd/user/{UNIT_NAME} for this siderod"
    )
    uninstall = actions.add_parser("uninstall", help=f"remove {UNIT_NAME}")
    for sub in (install, uninstall):
        sub.add_argument("--dry-run", action="store_true", help="show what would be done; change nothing")
        sub.set_defaults(func=run)
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Install or uninstall the unit; print the systemctl commands to run next."""
    unit_dir = user_unit_dir(os.environ)
    unit_path = unit_dir / UNIT_NAME
    if args.unit_action == "install":
        return _install(unit_path, dry_run=args.dry_run, config_args=_config_args(args))
    return _uninstall(unit_path, dry_run=args.dry_run)


def render_unit(exec_start: str) -> str:
    """The unit file text for an ExecStart command line (already in systemd syntax)."""
    return _UNIT_TEMPLATE.format(exec_start=exec_start)


def format_exec_start(argv: Sequence[str]) -> str:
    """Quote an argv list for a systemd ExecStart= line.

    systemd expands ``%`` specifiers everywhere in ExecStart, so ``%`` is doubled; it expands ``$``
    variables in the arguments but not in the program path (checked with systemd-analyze 252:
    a doubled ``$`` in the path stays doubled), so ``$`` is doubled in arguments only. Words with
    spaces, quotes or backslashes are double-quoted with C-style escapes.
    """
    words = []
    for index, arg in enumerate(argv):
        word = arg.replace("%", "%%")
        if index > 0:
            word = word.replace("$", "$$")
        if not word or any(ch.isspace() or ch in "\"'\\;" for ch in word):
            word = '"' + word.replace("\\", "\\\\").replace('"', '\\"') + '"'
        words.append(word)
    return " ".join(words)


def find_entry_point(argv0: str, executable: str) -> list[str]:
    """The command that starts this same siderod, as absolute paths.

    Args:
        argv0: ``sys.argv[0]`` of this process.
        executable: ``sys.executable``.

    Returns:
        ``[<abs path of the siderod script>]`` when we were started through the installed script,
        else ``[<abs path of the interpreter>, "-m", "siderod"]``. Paths are made absolute but
        symlinks are NOT resolved: a venv's ``bin/python`` is a symlink to the base interpreter,
        and resolving it would start siderod outside its venv.
    """
    name = os.path.basename(argv0)
    if name.startswith("siderod") and not name.endswith(".py"):
        found = argv0 if os.sep in argv0 else shutil.which(argv0)
        if found and os.path.isfile(found) and os.access(found, os.X_OK):
            return [os.path.abspath(found)]
    return [os.path.abspath(executable), "-m", "siderod"]


def user_unit_dir(env: Mapping[str, str]) -> Path:
    """``$XDG_CONFIG_HOME/systemd/user`` (``~/.config/systemd/user`` when unset or not absolute)."""
    config_home = env.get("XDG_CONFIG_HOME", "")
    if not config_home or not os.path.isabs(config_home):
        home = env.get("HOME") or os.path.expanduser("~")
        config_home = os.path.join(home, ".config")
    return Path(config_home) / "systemd" / "user"


def _config_args(args: argparse.Namespace) -> list[str]:
    """``["--config", <absolute path>]`` for a configuration named by --config or $SIDEROD_CONFIG.

    The unit runs with systemd's environment and working directory, so a relative path or the
    variable would not reach it: the path is made absolute and written into ExecStart. A named
    file that does not exist is refused (ConfigErrors, exit 1) rather than written into a unit.
    """
    from siderod.files.config import FOUND_ENV, FOUND_OPTION, find_config

    path, how = find_config(getattr(args, "config", None), os.environ)
    if how in (FOUND_OPTION, FOUND_ENV):
        return ["--config", os.path.abspath(path)]
    return []


def _install(unit_path: Path, *, dry_run: bool, config_args: Sequence[str] = ()) -> int:
    argv = [*find_entry_point(sys.argv[0], sys.executable), "run", "--no-view", *config_args]
    text = render_unit(format_exec_start(argv))
    if dry_run:
        print(f"would write {unit_path}:\n")
        print(text)
    else:
        try:
            _write_atomically(unit_path, text)
        except OSError as e:
            print(f"siderod: could not write {unit_path}: {e.strerror or e}", file=sys.stderr)
            return 4
        print(f"wrote {unit_path}")
        print(f"  ExecStart={format_exec_start(argv)}")
    print(
        "\nThen start it, now and at every login:\n"
        "  systemctl --user daemon-reload\n"
        f"  systemctl --user enable --now {UNIT_NAME}\n"
        f"  systemctl --user status {UNIT_NAME}\n"
        "Logs: journalctl --user -u siderod -f\n"
        "\nTo keep it running while nobody is logged in (a headless observing PC):\n"
        f"  loginctl enable-linger {os.environ.get('USER', '$USER')}\n"
        "Desktop notifications then wait for a desktop session; the log always gets every alert."
    )
    return 0


def _uninstall(unit_path: Path, *, dry_run: bool) -> int:
    stop = f"  systemctl --user disable --now {UNIT_NAME}\n"
    if not unit_path.exists():
        print(f"nothing to remove: {unit_path} does not exist")
        return 0
    if dry_run:
        print(f"would remove {unit_path}\nFirst stop the service:\n{stop}")
        return 0
    print(f"Stop the service first, if it runs:\n{stop}")
    try:
        unit_path.unlink()
    except OSError as e:
        print(f"siderod: could not remove {unit_path}: {e.strerror or e}", file=sys.stderr)
        return 4
    print(f"removed {unit_path}\nThen tell systemd:\n  systemctl --user daemon-reload")
    return 0


def _write_atomically(path: Path, text: str) -> None:
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = path.with_name(f".{path.name}.{os.getpid()}.tmp")
    try:
        tmp.write_text(text, encoding="utf-8")
        os.replace(tmp, path)
    finally:
        tmp.unlink(missing_ok=True)
