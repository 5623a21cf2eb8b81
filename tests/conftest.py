"""Fixtures shared by the whole suite: a clean environment, a fake clock, the demo configuration."""

from __future__ import annotations

import os
from datetime import UTC, datetime
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parent.parent
DEMO_CONFIG = REPO / "siderod" / "demo" / "demo.toml"
DEMO_NIGHT_UTC = datetime(2026, 12, 14, 18, 0, tzinfo=UTC)  # the invented demo evening


@pytest.fixture(autouse=True)
def _clean_environment(monkeypatch, tmp_path_factory):
    """Keep the user's terminal settings and real XDG directories out of every test."""
    for name in ("NO_COLOR", "FORCE_COLOR", "COLUMNS", "LINES", "SIDEROD_CONFIG", "NOTIFY_SOCKET",
                 "WATCHDOG_USEC", "WATCHDOG_PID"):
        monkeypatch.delenv(name, raising=False)
    home = tmp_path_factory.mktemp("home")
    for name, sub in (("XDG_CONFIG_HOME", "config"), ("XDG_STATE_HOME", "state"), ("XDG_RUNTIME_DIR", "run")):
        path = home / sub
        path.mkdir(mode=0o700)
        monkeypatch.setenv(name, str(path))
    monkeypatch.setenv("HOME", str(home))


@pytest.fixture
def fake_clock():
    from siderod.common.clock import FakeClock

    return FakeClock(DEMO_NIGHT_UTC)


@pytest.fixture
def demo_config_path() -> Path:
    return DEMO_CONFIG


@pytest.fixture
def demo_config():
    from siderod.files.config import load_config

    return load_config(str(DEMO_CONFIG), env=dict(os.environ))


def require_tool(name: str) -> str:
    """Path of a system tool a real-part test needs; skip without it, unless CI demands it.

    ``.ci/run`` installs the tools and sets SIDEROD_REQUIRE_SYSTEM_TOOLS=1, so there a missing
    tool fails the test instead of quietly skipping it.
    """
    import shutil

    path = shutil.which(name)
    if path is None:
        if os.environ.get("SIDEROD_REQUIRE_SYSTEM_TOOLS") == "1":
            pytest.fail(f"{name} is required here (SIDEROD_REQUIRE_SYSTEM_TOOLS=1) but not on PATH")
        pytest.skip(f"{name} not installed (Debian: see .ci/run for the package)")
    return path


@pytest.fixture
def tool():
    """``tool("tmux")`` -> path of the tool, with require_tool's skip-or-fail rule."""
    return require_tool
