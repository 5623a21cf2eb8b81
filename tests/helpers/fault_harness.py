"""A reusable fault harness: a real ``siderod run --no-view`` under a schedule of faults.

The service runs as its own process on a private D-Bus session bus with the recording
notification service (notify_server.py) and a command hook, its state directory on a small tmpfs
(so the disk can fill and be freed), and a configuration whose targets culminate one after
another every few seconds. Faults are applied on a schedule (kill -9 and restart, SIGSTOP and
SIGCONT of the service, a hung and a vanished notification service, a disk that fills and
frees); afterwards what each channel received and what the ledger says are compared with what
was owed, and a table per channel gives owed / delivered / late-and-marked / missed-and-reported /
duplicated / lost.

Used by tests/service/test_fault_harness.py; it can be run alone for the figures:

    PYTHONPATH=. python -m pytest tests/service/test_fault_harness.py -s
"""

from __future__ import annotations

import json
import os
import re
import shutil
import signal
import sqlite3
import subprocess
import sys
import tempfile
import time
from collections.abc import Callable
from dataclasses import dataclass, field
from datetime import UTC, datetime, timedelta
from pathlib import Path

from helpers.session_bus import BUS_CONFIG, read_first_line, start_notify_server
from helpers.smalldisk import fill, free

REPO = Path(__file__).resolve().parents[2]
LATE_MARK_SECONDS = 30.0  # siderod.service.daemon.LATE_MARK_SECONDS
# A receiver notes the time a little after the service decided "late" or not: the log line and
# the hook's own start-up (a Python process) sit between the two.
RECEIVE_SLACK_SECONDS = 3.0
START_TIMEOUT_SECONDS = 60.0  # Python, numpy and the first agenda on a loaded two-core machine
POLL_SECONDS = 0.05


HOOK_CODE = ("import json, sys, time; f = open(sys.argv[1], 'a'); "
             "f.write(json.dumps([sys.argv[2], sys.argv[3], time.time()]) + chr(10))")
CONFIG = """[site]
name = "Corrie Hill Observatory"
latitude = "+56 12 30"
longitude = "-3 41 15"
elevation = 212
timezone = "UTC"

[time]
dut1 = 0

[targets]
files = ["targets.toml"]

[events]
min_altitude = 0
window_hours = 2

[mount]
kind = "german-equatorial"
flip_after = 30
limit_after = 45

[alerts]
grace = {grace_minutes}
horizon_hours = 1
replan = 60

[alerts.lead]
culmination = [0]
flip-due = []
tracking-limit = []

[notify]
desktop = true
command = {command}
command_timeout = 10
"""


@dataclass
class Received:
    key: str
    title: str
    when_unix: float


@dataclass
class ChannelFigures:
    owed: int = 0
    delivered: int = 0
    late_and_marked: int = 0
    late_unmarked: int = 0
    marked_early: int = 0
    missed_and_reported: int = 0
    duplicated: int = 0
    lost: int = 0
    duplicate_keys: list[str] = field(default_factory=list)
    lost_keys: list[str] = field(default_factory=list)


class Harness:
    """One service under faults. Use as a context manager; see ``test_fault_harness.py``."""

    def __init__(self, count: int, spacing_seconds: float, first_offset_seconds: float, *,
                 disk_dir: Path | None, grace_minutes: float = 2.0) -> None:
        self.count = count
        self.spacing_seconds = spacing_seconds
        self.first_offset_seconds = first_offset_seconds
        self.grace_minutes = grace_minutes
        self.work = Path(tempfile.mkdtemp(prefix="siderod-faults-", dir="/tmp"))
        self.disk_dir = disk_dir
        self.state_base = (disk_dir or self.work) / "state"
        self.log_path = self.work / "service.log"
        self.hook_path = self.work / "hook.jsonl"
        self.records: list[Path] = []
        self.bus: subprocess.Popen | None = None
        self.notify: subprocess.Popen | None = None
        self._notifies: list[subprocess.Popen] = []
        self._runtime_dirs: list[Path] = []
        self.bus_dir = self.work / "bus"  # replaced by a short directory when the bus starts
        self.service: subprocess.Popen | None = None
        self.events: list[tuple[float, str]] = []
        self.kill_times: list[float] = []
        self.t0 = 0.0
        self.expected: list = []  # PlannedAlert, owed from the first start on

    # -- set-up -------------------------------------------------------------------------------
    def __enter__(self) -> Harness:
        self._write_config()
        self._start_bus()
        self.start_notify()
        return self

    def __exit__(self, *exc: object) -> None:
        for process in (self.service, *self._notifies, self.bus):
            if process is None:
                continue
            if process.poll() is None:
                process.send_signal(signal.SIGCONT)
                process.kill()
                process.wait()
            if process.stdout is not None:
                process.stdout.close()
        if self.disk_dir is not None:
            free(self.disk_dir)
        for directory in (self.work, self.bus_dir, *self._runtime_dirs):
            shutil.rmtree(directory, ignore_errors=True)

    def _write_config(self) -> None:
        from siderod.files.config import load_config
        from siderod.plan.agenda import compute_agenda
        from siderod.plan.planner import plan_alerts

        command = json.dumps([sys.executable, "-c", HOOK_CODE, str(self.hook_path), "{key}", "{title}"])
        text = CONFIG.format(grace_minutes=self.grace_minutes, command=command)
        (self.work / "config.toml").write_text(text)
        self.t0 = time.time() + 8.0  # the first start takes a few seconds
        start = datetime.fromtimestamp(self.t0, UTC)
        wanted = [start + timedelta(seconds=self.first_offset_seconds + i * self.spacing_seconds)
                  for i in range(self.count)]
        # Place each target so that it culminates at its wanted time: a first guess from mean
        # sidereal time, then one correction by what the planner itself finds (precession etc.).
        shift_seconds = 0.0
        for _ in range(2):
            self._write_targets(wanted, shift_seconds)
            config = load_config(str(self.work / "config.toml"), env={"HOME": str(self.work)})
            agenda = compute_agenda(config, start - timedelta(minutes=5), 1.0)
            planned = sorted(plan_alerts(agenda, config, muted={}, now_utc=start), key=lambda a: a.due_utc)
            planned = [a for a in planned if a.event.target and a.event.target.startswith("H")]
            by_target = {a.event.target: a for a in planned}
            first = by_target["H00"]
            shift_seconds += (first.due_utc - wanted[0]).total_seconds()
        self.expected = [by_target[f"H{i:02d}"] for i in range(self.count)]

    def _write_targets(self, wanted: list[datetime], shift_seconds: float) -> None:
        lines = []
        longitude_deg = -(3 + 41 / 60 + 15 / 3600)
        for i, when in enumerate(wanted):
            lst_hours = _mean_lst_hours(when - timedelta(seconds=shift_seconds), longitude_deg)
            lines += ["[[target]]", f'name = "H{i:02d}"', f'ra = "{lst_hours:.7f}h"', "dec = 60.0", ""]
        (self.work / "targets.toml").write_text("\n".join(lines))

    def _start_bus(self) -> None:
        self.bus_dir = Path(tempfile.mkdtemp(prefix="sfb", dir="/tmp"))
        (self.bus_dir / "bus.conf").write_text(BUS_CONFIG.format(dir=self.bus_dir))
        self.bus = subprocess.Popen(
            ["dbus-daemon", f"--config-file={self.bus_dir / 'bus.conf'}", "--nofork", "--print-address=1"],
            stdout=subprocess.PIPE, stderr=subprocess.DEVNULL)
        self.bus_address = read_first_line(self.bus, "dbus-daemon")

    # -- the parts ----------------------------------------------------------------------------
    def start_notify(self) -> None:
        record = self.work / f"notify-{len(self.records)}.jsonl"
        self.records.append(record)
        self.notify = start_notify_server(record, self.bus_address)
        self._notifies.append(self.notify)

    def start_service(self) -> None:
        runs_before = self._runs()
        runtime = Path(tempfile.mkdtemp(prefix="sfr", dir="/tmp"))
        self._runtime_dirs.append(runtime)
        env = dict(os.environ, HOME=str(self.work), XDG_STATE_HOME=str(self.state_base),
                   XDG_RUNTIME_DIR=str(runtime), XDG_CONFIG_HOME=str(self.work / "cfg"), TZ="UTC",
                   DBUS_SESSION_BUS_ADDRESS=self.bus_address, PYTHONPATH=str(REPO), PYTHONUNBUFFERED="1")
        env.pop("NOTIFY_SOCKET", None)
        with open(self.log_path, "ab") as log:
            self.service = subprocess.Popen(
                [sys.executable, "-m", "siderod", "run", "--no-view", "--config",
                 str(self.work / "config.toml")],
                stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL, stderr=log, env=env, cwd=self.work)
        deadline = time.monotonic() + START_TIMEOUT_SECONDS
        while self._runs() == runs_before:
            assert self.service.poll() is None, self.log_path.read_text()[-3000:]
            assert time.monotonic() < deadline, "the service did not start"
            time.sleep(POLL_SECONDS)

    def _runs(self) -> int:
        return self.log_path.read_text().count("siderod service running") if self.log_path.exists() else 0

    def note(self, what: str) -> None:
        self.events.append((time.time() - self.t0, what))

    # -- faults -------------------------------------------------------------------------------
    def kill_service(self) -> None:
        self.note("kill -9 the service")
        self.kill_times.append(time.time())
        self.service.kill()
        self.service.wait()

    def stop_service(self) -> None:
        self.note("SIGSTOP the service")
        self.service.send_signal(signal.SIGSTOP)

    def continue_service(self) -> None:
        self.note("SIGCONT the service")
        self.service.send_signal(signal.SIGCONT)

    def hang_notify(self) -> None:
        self.note("SIGSTOP the notification service")
        self.notify.send_signal(signal.SIGSTOP)

    def unhang_notify(self) -> None:
        self.note("SIGCONT the notification service")
        self.notify.send_signal(signal.SIGCONT)

    def vanish_notify(self) -> None:
        self.note("kill the notification service")
        self.notify.kill()
        self.notify.wait()

    def replace_notify(self) -> None:
        self.note("start a new notification service")
        self.start_notify()

    def fill_disk(self) -> None:
        if self.disk_dir is not None:
            self.note("fill the disk")
            fill(self.disk_dir)

    def free_disk(self) -> None:
        if self.disk_dir is not None:
            self.note("free the disk")
            free(self.disk_dir)

    def run_schedule(self, schedule: list[tuple[float, Callable[[], None]]]) -> None:
        """Start the service at t0 and apply each fault at its offset (seconds after t0)."""
        while time.time() < self.t0 - 7.5:
            time.sleep(POLL_SECONDS)
        self.start_service()
        self.note("service running")
        for offset, action in sorted(schedule, key=lambda pair: pair[0]):
            while time.time() < self.t0 + offset:
                time.sleep(POLL_SECONDS)
            action()

    def finish(self, settle_seconds: float) -> None:
        """Wait until every channel has every owed alert (bounded), then SIGTERM the service."""
        last_due = self.expected[-1].due_utc.timestamp()
        deadline = max(time.time(), last_due) + settle_seconds
        while time.time() < deadline:
            got = self.received()
            if all(set(a.key for a in self.expected) <= {r.key for r in got[c]} for c in got):
                break
            time.sleep(0.25)
        self.disk_at_stop = _disk_usage(self.disk_dir) if self.disk_dir is not None else ""
        self.service.send_signal(signal.SIGTERM)
        self.service.wait(timeout=30)

    # -- what arrived --------------------------------------------------------------------------
    def received(self) -> dict[str, list[Received]]:
        title_key = {a.title: a.key for a in self.expected}
        out: dict[str, list[Received]] = {"log": [], "desktop": [], "command": []}
        if self.log_path.exists():
            for line in self.log_path.read_text().splitlines():
                m = _ALERT_LINE.match(line)
                if m:
                    when = datetime.strptime(m["when"], "%Y-%m-%d %H:%M:%S,%f").replace(tzinfo=UTC)
                    out["log"].append(Received(m["key"], m["title"], when.timestamp()))
        for record in self.records:
            if record.exists():
                for line in record.read_text().splitlines():
                    data = json.loads(line)
                    key = title_key.get(_unmarked(data["summary"]))
                    if key is not None:
                        out["desktop"].append(Received(key, data["summary"], data["received_unix"]))
        if self.hook_path.exists():
            for line in self.hook_path.read_text().splitlines():
                key, title, when = json.loads(line)
                out["command"].append(Received(key, title, when))
        return out

    def figures(self) -> dict[str, ChannelFigures]:
        due = {a.key: a.due_utc.timestamp() for a in self.expected}
        summaries = "\n".join(line for line in self.log_path.read_text().splitlines() if "missed" in line)
        with sqlite3.connect(self.state_base / "siderod" / "ledger.sqlite3") as db:
            missed = {(k, c) for k, c in db.execute("SELECT key, channel FROM owed WHERE state = 'missed'")}
        out = {}
        for channel, got in self.received().items():
            fig = ChannelFigures(owed=len(due))
            copies: dict[str, int] = {}
            for r in got:
                if r.key not in due:
                    continue
                copies[r.key] = copies.get(r.key, 0) + 1
                late = r.when_unix - due[r.key]
                marked = r.title.startswith("[late ")
                if marked:
                    fig.late_and_marked += 1
                    if late < LATE_MARK_SECONDS - RECEIVE_SLACK_SECONDS:
                        fig.marked_early += 1
                elif late > LATE_MARK_SECONDS + RECEIVE_SLACK_SECONDS:
                    fig.late_unmarked += 1
            fig.delivered = len(copies)
            fig.duplicated = sum(n - 1 for n in copies.values())
            fig.duplicate_keys = sorted(k for k, n in copies.items() if n > 1)
            for key in due:
                if key in copies:
                    continue
                title = next(a.title for a in self.expected if a.key == key)
                if (key, channel) in missed and title in summaries:
                    fig.missed_and_reported += 1
                else:
                    fig.lost_keys.append(key)
            fig.lost = len(fig.lost_keys)
            out[channel] = fig
        return out

    def ledger_states(self) -> dict[str, str]:
        with sqlite3.connect(self.state_base / "siderod" / "ledger.sqlite3") as db:
            return dict(db.execute("SELECT key, state FROM alerts"))

    def table(self, figures: dict[str, ChannelFigures]) -> str:
        head = f"{'channel':<9} {'owed':>5} {'delivered':>9} {'late+marked':>11} {'missed+reported':>15}" \
               f" {'duplicated':>10} {'lost':>5} {'late unmarked':>13}"
        rows = [head]
        for name, f in figures.items():
            rows.append(f"{name:<9} {f.owed:>5} {f.delivered:>9} {f.late_and_marked:>11}"
                        f" {f.missed_and_reported:>15} {f.duplicated:>10} {f.lost:>5} {f.late_unmarked:>13}")
        rows.append("faults: " + "; ".join(f"{t:+.0f} s {what}" for t, what in self.events))
        return "\n".join(rows)


_ALERT_LINE = re.compile(r"^(?P<when>\d{4}-\d\d-\d\d \d\d:\d\d:\d\d,\d+) \w+ siderod\.alert: ALERT "
                         r"(?P<key>\S+): (?P<title>.*?) -- ")


def _unmarked(title: str) -> str:
    return re.sub(r"^\[late [^\]]*\] ", "", title)


def _mean_lst_hours(when: datetime, longitude_deg: float) -> float:
    """Local mean sidereal time, hours: GMST from erfa.gmst06 (IAU 2006). UT1 = UTC and
    TT = UTC + 69.184 s are close enough: the planner's own answer corrects the placement."""
    import erfa

    jd = when.timestamp() / 86400.0 + 2440587.5
    gmst = erfa.gmst06(jd, 0.0, jd + 69.184 / 86400.0, 0.0)
    return ((gmst * 12.0 / 3.141592653589793) + longitude_deg / 15.0) % 24.0


def _disk_usage(directory: Path) -> str:
    """Free bytes and every file's size under ``directory`` (for a failure message)."""
    stat = os.statvfs(directory)
    files = ", ".join(f"{p.relative_to(directory)} {p.stat().st_size}" for p in sorted(directory.rglob("*"))
                      if p.is_file())
    return f"{stat.f_bavail * stat.f_frsize} bytes free; {files}"
