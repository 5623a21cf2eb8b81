"""Picklable configuration loaders for the service's child-process reload (module level, so that a
child interpreter can import them by name): a small TOML stand-in, and ones that crash or hang in
the child."""

from __future__ import annotations

import os
import time
import tomllib
from dataclasses import dataclass, replace
from pathlib import Path

from helpers import service_fakes as fakes
from siderod.common.errors import ConfigError, ConfigErrors


@dataclass(frozen=True)
class ListLoad:
    """``targets = [...]`` in a TOML file -> a synthetic Config (as tests/service/test_reload.py's)."""

    path: str

    def __call__(self, at_unix: float | None = None):
        text = Path(self.path).read_text()
        try:
            data = tomllib.loads(text)
        except tomllib.TOMLDecodeError as exc:
            raise ConfigErrors([ConfigError(self.path, None, "", "", f"valid TOML ({exc})")]) from None
        return replace(fakes.make_config(tuple(data["targets"]), horizon_hours=12.0), path=self.path)


@dataclass(frozen=True)
class FailingInChildLoad:
    """Loads like ListLoad in the process that made it; in any other (the reload's child) it writes
    its pid to ``pid_file`` and then exits with ``exit_code``, or hangs when ``exit_code`` is None."""

    path: str
    pid_file: str
    exit_code: int | None
    parent_pid: int

    def __call__(self, at_unix: float | None = None):
        if os.getpid() == self.parent_pid:
            return ListLoad(self.path)(at_unix)
        Path(self.pid_file).write_text(str(os.getpid()))
        if self.exit_code is None:
            time.sleep(600)
        os._exit(self.exit_code)
