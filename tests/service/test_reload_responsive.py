"""A reload of a big target file never stops the service from answering (real process, real socket).

The service is a real ``python -m siderod run`` on the wall clock with a big TOML target file. While
it reloads (SIGHUP), the test asks for ``status`` over the real control socket again and again and
reads the sd_notify datagrams systemd would see: the replies must keep the issue's 100 ms (issue 13
item 5), and every watchdog ping must keep coming.
"""

from __future__ import annotations

import os
import random
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest
from helpers import real_service

from siderod.service.control import request_once

pytestmark = pytest.mark.slow

REPO = Path(__file__).resolve().parents[2]
DEMO_DIR = REPO / "siderod" / "demo"
#: Targets with alerts: the re-plan's work, enough for a reload of a second or more on this
#: machine (1,500 once silenced the service for seconds; since repeats are planned per stretch and
#: the scheduler holds one job, 1,500 reload in under one).
TARGET_COUNT = 5_000
#: More targets, with ``alerts = false``: each is parsed and checked in full, so loading takes a
#: while (and loaded on a thread, the compiled parser alone held the interpreter ~0.1 s).
SILENT_COUNT = 20_000
#: The promise: `status` answers within 100 ms during any reload.
STATUS_LIMIT_SECONDS = 0.1
#: The share of replies that must keep it: the 99th percentile. The machine running the tests is
#: shared (2 cores, load average 2-4 while this was written), where a service that is ready to
#: answer can still wait for a CPU; 1 % of replies may. Measured there with this file (load
#: average 1-2.6, seven runs): p99 25-64 ms, slowest 32-276 ms (the slowest with no loop callback
#: over 50 ms and no collection: the re-plan's thread holding the lock); before the configuration
#: was loaded in a child process and collections were paused during reloads, p99 148-236 ms,
#: 90.8-96.6 % within 100 ms (this test failed three times out of three).
STATUS_SHARE_WITHIN_LIMIT = 0.99
#: No reply, and no gap between watchdog pings beyond their interval, may take longer than this:
#: a few of the scheduler's time slices on a busy machine, far below the 3 s after which
#: `siderod status` says no service is running.
STALL_LIMIT_SECONDS = 0.5
#: The watchdog pings every half of WATCHDOG_USEC (0.5 s); systemd's own limit is the whole
#: WATCHDOG_USEC (the unit uses 30 s).
WATCHDOG_USEC = 1_000_000
WATCHDOG_INTERVAL_SECONDS = WATCHDOG_USEC / 2e6
#: CPUs that other processes used during the reload (on average: the machine's busy time from
#: /proc/stat less the CPU time of this test and of the service and its children) above which the
#: 2-core machine counts as oversubscribed: the service (a loop, and a planning thread that shares
#: the interpreter lock with it) and this test then get less than 3/4 of a CPU, and the loop waits
#: for CPUs it cannot get whenever the planning thread is preempted holding the lock. Two
#: CPU-bound benchmarks beside it gave 97 % within 100 ms and 0.5-0.7 s stalls, with or without
#: this item's changes (with one, about 1 CPU used by others, it passed: p99 19-21 ms). Then only
#: the bounds the test had before are asked: OVERSUBSCRIBED_SHARE within 100 ms, none beyond
#: OVERSUBSCRIBED_STALL_SECONDS (a blocked loop or a lost SIGHUP still fails). CI runs the suite
#: alone on its machine.
OTHERS_CPU_LIMIT = 1.25
OVERSUBSCRIBED_SHARE = 0.9
OVERSUBSCRIBED_STALL_SECONDS = 2.0
#: Python start-up, loading 20,000 targets and the first 36-hour plan, on a shared 2-core machine.
DEADLINE_SECONDS = 120.0


def _big_target_file(path: Path, count: int, silent: int) -> None:
    """``count`` targets with alerts (the re-plan's work) and ``silent`` more with ``alerts = false``
    (the loading's: each is parsed and checked in full, and costs the planner little)."""
    rng = random.Random(13)  # invented targets, spread over the sky
    tables = []
    for index in range(count + silent):
        ra_s = rng.randrange(86400)
        tables.append(f'[[target]]\nname = "T{index:05d}"\n'
                      f'ra = "{ra_s // 3600:02d}:{ra_s % 3600 // 60:02d}:{ra_s % 60:02d}"\n'
                      f"dec = {rng.uniform(-30, 89):+.4f}\n" + ("alerts = false\n" if index >= count else ""))
    path.write_text("\n".join(tables))


def _cpu_seconds(service_pid: int) -> tuple[float, float]:
    """(CPU seconds the machine has been busy, CPU seconds of this test and of the service with its
    reaped children), from /proc."""
    tick = os.sysconf("SC_CLK_TCK")
    with open("/proc/stat") as fileobj:
        jiffies = [int(x) for x in fileobj.readline().split()[1:]]
    busy = sum(jiffies[:3]) + sum(jiffies[5:8])  # user, nice, system; irq, softirq, steal
    ours = 0
    for pid in (os.getpid(), service_pid):
        with open(f"/proc/{pid}/stat") as fileobj:
            fields = fileobj.read().rpartition(")")[2].split()
        ours += sum(int(x) for x in fields[11:15])  # utime, stime, cutime, cstime
    return busy / tick, ours / tick


@pytest.fixture
def short_dir():
    with real_service.short_dir("sdrl") as directory:
        yield directory


def wait_until(predicate, what: str):
    return real_service.wait_until(predicate, what, DEADLINE_SECONDS)


def test_status_and_watchdog_keep_answering_during_a_big_reload(short_dir):
    config = short_dir / "config.toml"
    text = (DEMO_DIR / "demo.toml").read_text().replace("\ndesktop = true\n", "\ndesktop = false\n")
    text = text.replace('files = ["demo-targets.toml"]', 'files = ["big.toml"]')
    assert 'files = ["big.toml"]' in text
    config.write_text(text)
    _big_target_file(short_dir / "big.toml", TARGET_COUNT, SILENT_COUNT)
    env = real_service.service_env(short_dir)
    receiver = real_service.NotifyReceiver(short_dir / "notify.sock")
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
            return any("READY=1" in m for m in receiver.messages)

        wait_until(ready, "READY=1 after the first plan")
        before = len(receiver.messages)
        sent_mono = time.monotonic()
        process.send_signal(signal.SIGHUP)
        latencies: list[float] = []
        cpu_before = _cpu_seconds(process.pid)

        def reload_done() -> bool:
            later = receiver.messages[before:]
            reloading = [i for i, m in enumerate(later) if "RELOADING=1" in m]
            return bool(reloading) and any("READY=1" in m for m in later[reloading[0]:])

        while not reload_done():
            assert process.poll() is None, log_path.read_text()
            asked = time.monotonic()
            request_once(socket_path, {"op": "status"}, timeout_seconds=5.0)
            latencies.append(time.monotonic() - asked)
            assert asked - sent_mono < DEADLINE_SECONDS, "the reload never finished (a lost SIGHUP?)"
            time.sleep(real_service.POLL_SECONDS)
        reload_seconds = time.monotonic() - sent_mono
        busy = [b - a for a, b in zip(cpu_before, _cpu_seconds(process.pid), strict=True)]
        others = (busy[0] - busy[1]) / reload_seconds
        pings = [t for t, m in receiver.timed_messages if "WATCHDOG=1" in m and t >= sent_mono]
        gaps = [b - a for a, b in zip([sent_mono, *pings], pings, strict=False)]
        within = sum(1 for seconds in latencies if seconds < STATUS_LIMIT_SECONDS) / len(latencies)
        ordered = sorted(latencies)
        p99 = ordered[min(len(ordered) - 1, int(STATUS_SHARE_WITHIN_LIMIT * len(ordered)))]
        print(f"reload {reload_seconds:.2f} s; {len(latencies)} status replies, {within:.1%} within "
              f"{STATUS_LIMIT_SECONDS * 1000:g} ms, p99 {p99 * 1000:.1f} ms, slowest "
              f"{max(latencies) * 1000:.1f} ms; watchdog gaps up to {max(gaps, default=0):.2f} s; "
              f"other processes used {others:.2f} CPUs")
        assert reload_seconds > 1.0, "the reload was too quick to show anything; use more targets"
        share, stall = STATUS_SHARE_WITHIN_LIMIT, STALL_LIMIT_SECONDS
        if others > OTHERS_CPU_LIMIT:
            share, stall = OVERSUBSCRIBED_SHARE, OVERSUBSCRIBED_STALL_SECONDS
        assert within >= share, ordered[-10:]
        assert max(latencies) < stall, ordered[-5:]
        assert max(gaps, default=0) < WATCHDOG_INTERVAL_SECONDS + stall, gaps
        assert "configuration reloaded" in log_path.read_text()
    finally:
        real_service.stop_service_process(process)
        receiver.close()
