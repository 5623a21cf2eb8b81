"""A real terminal for the board's tests: one pane of a private tmux server.

Used by tests/view/test_tmux.py, test_tmux_ack.py and tests/service/test_end_to_end.py. The server
has its own socket (``tmux -L``), so nobody's own sessions are ever touched.
"""

from __future__ import annotations

import os
import subprocess
import sys
import time
import uuid
from pathlib import Path

REPO = Path(__file__).resolve().parents[2]


def tmux_env(home: Path, **extra: str) -> dict[str, str]:
    """A small, fixed environment for the pane: this Python first on PATH, UTF-8, a 256-colour
    terminal, and XDG directories under ``home`` (its empty ``run`` directory is created)."""
    env = {
        "PATH": f"{Path(sys.executable).parent}:/usr/bin:/bin",
        "HOME": str(home),
        "LANG": "C.UTF-8",
        "TERM": "xterm-256color",
        "XDG_RUNTIME_DIR": str(home / "run"),
        "XDG_CONFIG_HOME": str(home / "config"),
        "XDG_STATE_HOME": str(home / "state"),
        **extra,
    }
    (home / "run").mkdir(mode=0o700, exist_ok=True)
    return env


class TmuxPane:
    """One pane ("ui") of a private tmux server, with ``env`` as its environment.

    ``deadline_seconds`` bounds every wait for the pane to show something (a loaded machine starts
    Python slowly).
    """

    def __init__(self, env: dict[str, str], *, deadline_seconds: float = 20.0) -> None:
        self.socket_name = f"siderod-test-{uuid.uuid4().hex[:12]}"
        self.env = env
        self.deadline_seconds = deadline_seconds

    def __call__(self, *args: str) -> str:
        if args[:1] == ("new-session",):
            # A clock moved by libfaketime (tests/clock_sweep.py) reaches the pane's programs; the
            # tmux server itself stays off it (its timers break under libfaketime).
            moved = [f"{k}={os.environ[k]}" for k in ("LD_PRELOAD", "FAKETIME") if k in os.environ]
            args = (args[0], *(option for v in moved for option in ("-e", v)), *args[1:])
        done = subprocess.run(["tmux", "-L", self.socket_name, "-f", "/dev/null", *args], env=self.env,
                              capture_output=True, text=True, timeout=10, check=True)
        return done.stdout

    def start(self, width: int, height: int, prompt: str) -> None:
        """A bash shell in a ``width`` x ``height`` pane, waiting at ``prompt``."""
        self("new-session", "-d", "-s", "ui", "-x", str(width), "-y", str(height), "-c", str(REPO),
             "bash --norc --noprofile")
        self.wait_for(lambda text: text.strip() != "", "a shell in the pane")
        # bash may not take PS1 from the environment (it does not here, running as root): set it.
        self.type(f"PS1='{prompt}'; clear")
        self.wait_for(lambda text: text.strip() == prompt.strip(), "the test prompt")

    def type(self, line: str) -> None:
        self("send-keys", "-t", "ui", "-l", line)
        self("send-keys", "-t", "ui", "Enter")

    def capture(self) -> str:
        return self("capture-pane", "-p", "-t", "ui")

    def steady_capture(self) -> str:
        """Two captures in a row with the same text: never a frame half drawn."""
        previous = self.capture()
        end = time.monotonic() + self.deadline_seconds
        while time.monotonic() < end:
            time.sleep(0.02)
            current = self.capture()
            if current == previous:
                return current
            previous = current
        raise AssertionError(f"the pane never held still for 20 ms; last capture:\n{previous}")

    def wait_for(self, predicate, what: str = "what was expected", *, deadline_seconds: float | None = None,
                 poll_seconds: float = 0.05) -> str:
        """The first capture for which ``predicate(text)`` holds; fail after the deadline."""
        end = time.monotonic() + (self.deadline_seconds if deadline_seconds is None else deadline_seconds)
        while True:
            text = self.capture()
            if predicate(text):
                return text
            if time.monotonic() > end:
                raise AssertionError(f"the pane never showed {what}; last capture:\n{text}")
            time.sleep(poll_seconds)

    def query(self, fmt: str) -> str:
        return self("display-message", "-p", "-t", "ui", fmt).strip()

    def kill(self) -> None:
        subprocess.run(["tmux", "-L", self.socket_name, "kill-server"], env=self.env, capture_output=True,
                       timeout=10, check=False)
