"""Benchmark: how soon a fresh `siderod run --no-view` is ready on a big target list, whole process.

Run:  python tests/benchmarks/bench_run_ready.py [--targets 10000 100000] [--previous PATH]

Each case starts a fresh ``python -m siderod run --no-view --config X`` (what the systemd unit and the
README run) on the demo configuration with N random targets at the demo site (the catalogue of
``bench_commands.make_catalogue``), desktop notifications off (the log channel only), private
XDG_STATE_HOME / XDG_RUNTIME_DIR / XDG_CONFIG_HOME and a fresh ledger, and ``NOTIFY_SOCKET`` pointing at
a datagram socket this script listens on. It prints, from process start:

- ``READY=1``: when the service's READY=1 datagram arrived (the first plan is made and written);
- ``status``: when a ``status`` request on the real control socket first showed planned alerts;
- CPU seconds and peak RSS (VmHWM from /proc) at that point;
- ``whole``: when the plan of the whole horizon was made (the service plans its first stretch before
  READY=1 and the rest right after, and logs "(start: the whole horizon)"), with CPU seconds, peak
  RSS and ``planned_count`` then. A checkout that plans everything before READY=1 shows the same
  figures twice.

``--previous PATH`` runs the same cases against another checkout (e.g. a ``git worktree`` of the commit
before a change) and prints the ratios. The machine is shared: the load average is printed, and CPU
seconds beside the wall clock. Aims (issue 8): 10,000 targets ready within 1.5 s and at most 150 MB;
100,000 targets within 10 s.
"""

from __future__ import annotations

import argparse
import json
import os
import pathlib
import socket
import subprocess
import sys
import tempfile
import time

ROOT = pathlib.Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT / "tests" / "benchmarks"))
sys.path.insert(0, str(ROOT / "tests"))

from bench_commands import make_catalogue  # noqa: E402
from helpers.real_service import stop_service_process  # noqa: E402

CLOCK_TICKS = os.sysconf("SC_CLK_TCK")


def measure(code_root: pathlib.Path, count: int, limit_seconds: float) -> dict[str, float]:
    """One fresh service on ``count`` targets, importing siderod from ``code_root``."""
    with tempfile.TemporaryDirectory(prefix="siderod-ready-") as name:
        home = pathlib.Path(name)
        config = make_catalogue(home, count)
        text = config.read_text().replace("desktop = true", "desktop = false")
        config.write_text(text)
        notify_path = home / "notify.sock"
        listener = socket.socket(socket.AF_UNIX, socket.SOCK_DGRAM)
        listener.bind(str(notify_path))
        listener.setblocking(False)
        env = dict(os.environ, PYTHONPATH=str(code_root), XDG_STATE_HOME=f"{home}/state",
                   XDG_RUNTIME_DIR=f"{home}/run", XDG_CONFIG_HOME=f"{home}/config",
                   NOTIFY_SOCKET=str(notify_path), OPENBLAS_NUM_THREADS="1")
        (home / "run").mkdir(mode=0o700)
        control_path = home / "run" / "siderod" / "control.sock"
        argv = [sys.executable, "-m", "siderod", "run", "--no-view", "--config", str(config)]
        start = time.perf_counter()
        process = subprocess.Popen(argv, stdout=subprocess.DEVNULL, stderr=open(home / "log", "wb"),
                                   env=env, cwd=home)
        ready = status = whole = float("nan")
        planned = whole_planned = 0
        ready_mb = ready_cpu = float("nan")
        try:
            while time.perf_counter() - start < limit_seconds:
                if process.poll() is not None:
                    raise SystemExit(f"service ended ({process.returncode}):\n{(home / 'log').read_text()}")
                try:
                    while True:
                        if b"READY=1" in listener.recv(65536) and ready != ready:
                            ready = time.perf_counter() - start
                except BlockingIOError:
                    pass
                if status != status and control_path.exists():
                    planned = _planned_count(control_path)
                    if planned:
                        status = time.perf_counter() - start
                        ready_mb, ready_cpu = _peak_rss_mb(process.pid), _cpu_seconds(process.pid)
                elif status == status and ready == ready:
                    log_text = (home / "log").read_text(errors="replace")
                    if "first stretch" not in log_text or "(start: the whole horizon)" in log_text:
                        whole = time.perf_counter() - start
                        whole_planned = _planned_count(control_path)
                        break
                time.sleep(0.01)
            peak_mb, cpu_seconds = _peak_rss_mb(process.pid), _cpu_seconds(process.pid)
            if "first stretch" not in (home / "log").read_text(errors="replace"):
                whole, peak_mb, cpu_seconds = status, ready_mb, ready_cpu  # the first plan was whole
        finally:
            stop_service_process(process)
            listener.close()
        return {"ready": ready, "status": status, "ready_mb": ready_mb, "ready_cpu": ready_cpu,
                "planned": planned, "whole": whole, "peak_mb": peak_mb, "cpu": cpu_seconds,
                "whole_planned": whole_planned}


def _planned_count(path: pathlib.Path) -> int:
    """``planned_count`` from one ``status`` request on the control socket (0 if not answering yet)."""
    try:
        with socket.socket(socket.AF_UNIX, socket.SOCK_STREAM) as sock:
            sock.settimeout(5.0)
            sock.connect(str(path))
            sock.sendall(b'{"op": "status"}\n')
            data = b""
            while not data.endswith(b"\n"):
                chunk = sock.recv(1 << 20)
                if not chunk:
                    break
                data += chunk
    except OSError:
        return 0
    reply = json.loads(data or b"{}")
    if not reply.get("ok"):
        return 0
    result = reply["result"]
    return int(result.get("planned_count", 0)) if result.get("next_alerts") else 0


def _peak_rss_mb(pid: int) -> float:
    for line in pathlib.Path(f"/proc/{pid}/status").read_text().splitlines():
        if line.startswith("VmHWM:"):
            return int(line.split()[1]) / 1024.0
    return float("nan")


def _cpu_seconds(pid: int) -> float:
    fields = pathlib.Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()
    return (int(fields[11]) + int(fields[12])) / CLOCK_TICKS


def _commit(root: pathlib.Path) -> str:
    try:
        return subprocess.run(["git", "-C", str(root), "log", "-1", "--format=%h"], capture_output=True,
                              text=True, check=True).stdout.strip()
    except (OSError, subprocess.CalledProcessError):
        return "?"


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--targets", type=int, nargs="+", default=[10_000, 100_000])
    parser.add_argument("--previous", type=pathlib.Path, default=None,
                        help="a checkout of the previous approach (e.g. a git worktree of an older commit)")
    parser.add_argument("--previous-label", default=None,
                        help="what the previous checkout is (default: its git commit, when it is a checkout)")
    parser.add_argument("--limit", type=float, default=240.0, help="give up on one case after this long")
    args = parser.parse_args()
    print(f"load average before: {' '.join(f'{x:.2f}' for x in os.getloadavg())}; "
          f"{os.cpu_count()} cores; this checkout {_commit(ROOT)}"
          + (f", previous {args.previous} at {args.previous_label or _commit(args.previous)}"
             if args.previous else ""))
    print(f"{'targets':>8} {'code':>8} {'READY=1 s':>10} {'status s':>9} {'CPU s':>7} {'peak MB':>8} "
          f"{'planned':>8} | {'whole s':>8} {'CPU s':>7} {'peak MB':>8} {'planned':>8}")
    for count in args.targets:
        rows = [("now", measure(ROOT, count, args.limit))]
        if args.previous is not None:
            rows.append(("previous", measure(args.previous, count, args.limit)))
        for label, r in rows:
            print(f"{count:>8} {label:>8} {r['ready']:>10.2f} {r['status']:>9.2f} {r['ready_cpu']:>7.2f} "
                  f"{r['ready_mb']:>8.0f} {r['planned']:>8} | {r['whole']:>8.2f} {r['cpu']:>7.2f} "
                  f"{r['peak_mb']:>8.0f} {r['whole_planned']:>8}")
        if len(rows) == 2:
            now, before = rows[0][1], rows[1][1]
            ratio = {name: before[name] / now[name] for name in now if name != "planned"}
            print(f"{count:>8} {'ratio':>8} {ratio['ready']:>9.1f}x {ratio['status']:>8.1f}x "
                  f"{ratio['ready_cpu']:>6.1f}x {ratio['ready_mb']:>7.1f}x {'':>8} | {ratio['whole']:>7.1f}x "
                  f"{ratio['cpu']:>6.1f}x {ratio['peak_mb']:>7.1f}x   (previous / now)")
    print(f"load average after: {' '.join(f'{x:.2f}' for x in os.getloadavg())}")


if __name__ == "__main__":
    main()
