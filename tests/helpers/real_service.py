"""Scaffolding for tests that run a real `siderod run` process: systemd's notify socket, a short
state directory, a clean environment, and a bounded wait.

Used by tests/service/test_end_to_end.py and test_reload_responsive.py.
"""

from __future__ import annotations

import contextlib
import os
import shutil
import signal
import socket
import subprocess
import tempfile
import threading
import time
from collections.abc import Iterator
from pathlib import Path

#: How often the receiver's thread wakes to see whether it should stop, and how often waits poll.
POLL_SECONDS = 0.02


class NotifyReceiver:
    """The systemd side of sd_notify: a datagram socket, read promptly by a thread, as systemd does.

    Reading promptly matters: Linux queues only ``net.unix.max_dgram_qlen`` (often 10) datagrams,
    and the service's send blocks once the queue is full. Each datagram is kept with its arrival
    time (``time.monotonic()``).
    """

    def __init__(self, path: Path) -> None:
        self.path = path
        self.sock = socket.socket(socket.AF_UNIX, socket.SOCK_DGRAM)
        self.sock.bind(str(path))
        self.sock.settimeout(POLL_SECONDS)
        self._timed: list[tuple[float, str]] = []
        self._lock = threading.Lock()
        self._stop = threading.Event()
        self._thread = threading.Thread(target=self._read, name="notify-receiver", daemon=True)
        self._thread.start()

    def _read(self) -> None:
        while not self._stop.is_set():
            try:
                data = self.sock.recv(4096)
            except TimeoutError:
                continue
            except OSError:
                return
            with self._lock:
                self._timed.append((time.monotonic(), data.decode()))

    @property
    def timed_messages(self) -> list[tuple[float, str]]:
        """Every datagram so far with its arrival time (monotonic seconds), in order."""
        with self._lock:
            return list(self._timed)

    @property
    def messages(self) -> list[str]:
        """Every datagram so far, in order."""
        return [text for _, text in self.timed_messages]

    def close(self) -> None:
        self._stop.set()
        self._thread.join(timeout=5)
        self.sock.close()


@contextlib.contextmanager
def short_dir(prefix: str) -> Iterator[Path]:
    """A directory under /tmp, removed after: unix socket paths are limited to 107 bytes, and
    pytest's tmp_path can be longer."""
    directory = Path(tempfile.mkdtemp(prefix=prefix, dir="/tmp"))
    try:
        yield directory
    finally:
        shutil.rmtree(directory, ignore_errors=True)


def service_env(directory: Path) -> dict[str, str]:
    """This process's environment with the service's own state (XDG directories, HOME) in
    ``directory``, and nothing inherited that would steer it (notify socket, watchdog, config,
    terminal size, session bus)."""
    env = dict(os.environ)
    for name in ("NOTIFY_SOCKET", "WATCHDOG_USEC", "WATCHDOG_PID", "SIDEROD_CONFIG", "COLUMNS", "LINES",
                 "DBUS_SESSION_BUS_ADDRESS"):
        env.pop(name, None)
    for name, sub in (("XDG_RUNTIME_DIR", "run"), ("XDG_STATE_HOME", "state"), ("XDG_CONFIG_HOME", "config")):
        (directory / sub).mkdir(mode=0o700, exist_ok=True)
        env[name] = str(directory / sub)
    env["HOME"] = str(directory)
    return env


def wait_until(predicate, what: str, deadline_seconds: float):
    """Poll ``predicate`` until it returns something truthy and return that; fail after the deadline."""
    end = time.monotonic() + deadline_seconds
    while not (value := predicate()):
        if time.monotonic() > end:
            raise AssertionError(f"timed out after {deadline_seconds:g} s waiting for {what}")
        time.sleep(POLL_SECONDS)
    return value


def stop_service_process(process: subprocess.Popen, timeout_seconds: float = 30.0) -> None:
    """SIGTERM a ``siderod run`` process and wait for its graceful stop; kill it if it overruns."""
    process.send_signal(signal.SIGTERM)
    try:
        process.wait(timeout=timeout_seconds)
    except subprocess.TimeoutExpired:
        process.kill()
        process.wait()
