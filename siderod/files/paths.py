"""Where siderod keeps its files: XDG directories, resolved once from an environment mapping.

Nothing here touches the disk; the caller creates directories when it needs them.
"""

from __future__ import annotations

import os
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path

__all__ = ["APP_DIR_NAME", "Paths", "resolve_paths"]

#: The directory name used under each XDG base directory.
APP_DIR_NAME = "siderod"


@dataclass(frozen=True, slots=True)
class Paths:
    """The files and directories one siderod user works with.

    Attributes:
        config_dir: ``$XDG_CONFIG_HOME/siderod`` (default ``~/.config/siderod``).
        state_dir: ``$XDG_STATE_HOME/siderod`` (default ``~/.local/state/siderod``).
        runtime_dir: ``$XDG_RUNTIME_DIR/siderod``; the state directory when that is unset.
        ledger_path: the SQLite alert ledger, in the state directory.
        socket_path: the control socket, in the runtime directory.
        lock_path: the single-instance lock file, in the runtime directory.
        user_config_file: ``config.toml`` in the config directory (may not exist).
        runtime_is_fallback: True when ``$XDG_RUNTIME_DIR`` was unset or invalid.
    """

    config_dir: Path
    state_dir: Path
    runtime_dir: Path
    ledger_path: Path
    socket_path: Path
    lock_path: Path
    user_config_file: Path
    runtime_is_fallback: bool = False


def resolve_paths(env: Mapping[str, str]) -> Paths:
    """Work out siderod's directories from an environment mapping (XDG Base Directory rules).

    The XDG specification says relative values are invalid and must be ignored; they are.

    Args:
        env: the environment to read, usually ``os.environ`` (tests pass a dict).

    Returns:
        A :class:`Paths` record.
    """
    home = Path(env["HOME"]) if env.get("HOME") else Path(os.path.expanduser("~"))
    config_base = _xdg_dir(env, "XDG_CONFIG_HOME") or home / ".config"
    state_base = _xdg_dir(env, "XDG_STATE_HOME") or home / ".local" / "state"
    runtime_base = _xdg_dir(env, "XDG_RUNTIME_DIR")
    config_dir = config_base / APP_DIR_NAME
    state_dir = state_base / APP_DIR_NAME
    runtime_dir = runtime_base / APP_DIR_NAME if runtime_base else state_dir
    return Paths(
        config_dir=config_dir,
        state_dir=state_dir,
        runtime_dir=runtime_dir,
        ledger_path=state_dir / "ledger.sqlite3",
        socket_path=runtime_dir / "control.sock",
        lock_path=runtime_dir / "service.lock",
        user_config_file=config_dir / "config.toml",
        runtime_is_fallback=runtime_base is None,
    )


def _xdg_dir(env: Mapping[str, str], name: str) -> Path | None:
    value = env.get(name, "")
    if not value or not os.path.isabs(value):
        return None
    return Path(value)
