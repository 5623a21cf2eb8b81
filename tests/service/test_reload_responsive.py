"""A reload of a big target file never stops the service from answering (real process, real socket).

The service is a real ``python -m siderod run`` on the wall clock with a 1,500-target file. While it
reloads (SIGHUP), the test asks for ``status`` over the real control socket again and again and reads
the sd_notify datagrams systemd would see: every answer and every watchdog ping must keep coming.
"""

from __future__ import annotations

import os
import random
import shutil
import signal
import socket
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

import pytest

from siderod.service.control import request_once

pytestmark = pytest.mark.slow

REPO = Path(__file__).resolve().parents[2]
DEMO_DIR = REPO / "siderod" / "demo"
#: Targets in the big file: enough for a reload of about a second or more on this machine (1,500
#: once silenced the service for seconds; since repeats are planned per stretch and the scheduler
#: holds one job, 1,500 reload in under one).
TARGET_COUNT = 5_000
#: The promise: `status` answers within 100 ms during a reload. The machine running the tests is
#: shared (2 cores, load average above 7 while this was written), so some replies wait for a CPU:
#: 90 % of them must keep the promise (96-97 % did under that load), and none may come later
#: than STALL_LIMIT_SECONDS, below the 3 s after which `siderod status` says no service is
#: running (before the fix: the SIGHUP was lost, or replies took 2.3 s).
STATUS_LIMIT_SECONDS = 0.1
STATUS_SHARE_WITHIN_LIMIT = 0.9
STALL_LIMIT_SECONDS = 2.0
#: The watchdog pings every half of WATCHDOG_USEC (0.5 s); no gap between pings may exceed
#: STALL_LIMIT_SECONDS (systemd's own limit is the whole WATCHDOG_USEC; the unit uses 30 s).
WATCHDOG_USEC = 1_000_000
#: Python start-up, loading 20,000 targets and the first 36-hour plan, on a shared 2-core machine.
DEADLINE_SECONDS = 120.0
POLL_SECONDS = 0.02


class _NotifyReceiver:
    """The systemd side of sd_notify, read promptly by a thread; each datagram with its arrival time."""

    def __init__(self, path: Path) -> None:
        self.sock = socket.socket(socket.AF_UNIX, socket.SOCK_DGRAM)
        self.sock.bind(str(path))
        self.sock.settimeout(POLL_SECONDS)
        self.path = path
        self._messages: list[tuple[float, str]] = []
        self._lock = threading.Lock()
        self._stop = threading.Event()
        self._thread = threading.Thread(target=self._read, daemon=True)
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
                self._messages.append((time.monotonic(), data.decode()))

    @property
    def messages(self) -> list[tuple[float, str]]:
        with self._lock:
            return list(self._messages)

    def close(self) -> None:
        self._stop.set()
        self._thread.join(timeout=5)
        self.sock.close()


def _wait_until(predicate, what: str):
    end = time.monotonic() + DEADLINE_SECONDS
    while not (value := predicate()):
        if time.monotonic() > end:
            raise AssertionError(f"timed out after {DEADLINE_SECONDS:g} s waiting for {what}")
        time.sleep(POLL_SECONDS)
    return value


def _big_target_file(path: Path, count: int) -> None:
    # CSV, so that reading the file is quick and the test measures the service, not the parser.
    rng = random.Random(13)  # invented targets, spread over the sky
    lines = ["name,ra,dec"]
    for index in range(count):
        ra_s = rng.randrange(86400)
        lines.append(f"T{index:05d},{ra_s // 3600:02d}:{ra_s % 3600 // 60:02d}:{ra_s % 60:02d},"
                     f"{rng.uniform(-30, 89):+.4f}")
    path.write_text("\n".join(lines) + "\n")


@pytest.fixture
def short_dir():
    directory = Path(tempfile.mkdtemp(prefix="sdrl", dir="/tmp"))  # socket paths are short
    try:
        yield directory
    finally:
        shutil.rmtree(directory, ignore_errors=True)


def test_status_and_watchdog_keep_answering_during_a_big_reload(short_dir):
    config = short_dir / "config.toml"
    text = (DEMO_DIR / "demo.toml").read_text().replace("\ndesktop = true\n", "\ndesktop = false\n")
    text = text.replace('files = ["demo-targets.toml"]', 'files = ["big.csv"]')
    assert 'files = ["big.csv"]' in text
    config.write_text(text)
    _big_target_file(short_dir / "big.csv", TARGET_COUNT)
    env = dict(os.environ)
    for name in ("NOTIFY_SOCKET", "WATCHDOG_PID", "SIDEROD_CONFIG", "DBUS_SESSION_BUS_ADDRESS"):
        env.pop(name, None)
    for name, sub in (("XDG_RUNTIME_DIR", "run"), ("XDG_STATE_HOME", "state"), ("XDG_CONFIG_HOME", "cfg")):
        (short_dir / sub).mkdir(mode=0o700)
        env[name] = str(short_dir / sub)
    env["HOME"] = str(short_dir)
    receiver = _NotifyReceiver(short_dir / "notify.sock")
    env.update(NOTIFY_SOCKET=str(receiver.path), WATCHDOG_USEC=str(WATCHDOG_USEC))
    socket_path = short_dir / "run" / "siderod" / "control.sock"
    log_path = short_dir / "service.log"
    with open(log_path, "w") as log:
        argv = [sys.executable, "-m", "siderod", "run", "--no-view", "--config", str(config)]
        process = subprocess.Popen(argv, env=env, cwd=REPO, stdin=subprocess.DEVNULL, stdout=log,
                                   stderr=subprocess.STDOUT)
    try:
        def ready() -> bool:
            assert process.poll() is None, log_path.read_text()
            return any("READY=1" in m for _, m in receiver.messages)

        _wait_until(ready, "READY=1 after the first plan")
        before = len(receiver.messages)
        sent_mono = time.monotonic()
        process.send_signal(signal.SIGHUP)
        latencies: list[float] = []

        def reload_done() -> bool:
            later = [m for _, m in receiver.messages[before:]]
            reloading = [i for i, m in enumerate(later) if "RELOADING=1" in m]
            return bool(reloading) and any("READY=1" in m for m in later[reloading[0]:])

        while not reload_done():
            assert process.poll() is None, log_path.read_text()
            asked = time.monotonic()
            request_once(socket_path, {"op": "status"}, timeout_seconds=5.0)
            latencies.append(time.monotonic() - asked)
            assert asked - sent_mono < DEADLINE_SECONDS, "the reload never finished (a lost SIGHUP?)"
            time.sleep(POLL_SECONDS)
        reload_seconds = time.monotonic() - sent_mono
        pings = [t for t, m in receiver.messages if "WATCHDOG=1" in m and t >= sent_mono]
        gaps = [b - a for a, b in zip([sent_mono, *pings], pings, strict=False)]
        within = sum(1 for seconds in latencies if seconds < STATUS_LIMIT_SECONDS) / len(latencies)
        print(f"reload {reload_seconds:.2f} s; {len(latencies)} status replies, {within:.0%} within "
              f"{STATUS_LIMIT_SECONDS * 1000:g} ms, slowest "
              f"{max(latencies) * 1000:.1f} ms; watchdog gaps up to {max(gaps, default=0):.2f} s")
        assert reload_seconds > 1.0, "the reload was too quick to show anything; use more targets"
        assert within >= STATUS_SHARE_WITHIN_LIMIT, sorted(latencies)[-10:]
        assert max(latencies) < STALL_LIMIT_SECONDS, sorted(latencies)[-5:]
        assert max(gaps, default=0) < STALL_LIMIT_SECONDS, gaps
        assert "configuration reloaded" in log_path.read_text()
    finally:
        process.send_signal(signal.SIGTERM)
        try:
            process.wait(timeout=30)
        except subprocess.TimeoutExpired:
            process.kill()
            process.wait()
        receiver.close()
