"""Benchmark: the commands people run on big catalogues, whole process, against the record-by-record way.

Run:  python tests/benchmarks/bench_commands.py [--targets 100000] [--now-targets 10000] [--skip-previous]
      [--repeat 3] [--toml-targets 200000] [--toml-only]

Each case is a fresh interpreter, timed from start to exit (wall and CPU seconds, the median of
``--repeat`` runs by CPU), with its peak resident memory (from ``wait4``); output goes to a file.
The catalogue is invented (random RA/Dec, a fixed seed), watched from the demo site with the demo's
horizon profile, mount and every event kind, over the demo night.

The "previous approach" of each case runs the same computation the way the commands did before the
events were kept as columns: one ``Event`` record per event and ``event_to_json`` per record, written
with ``json.dump(indent=2)``; a rich table of every row; one icalendar component per event (the
library's own writer). Its ratio is printed beside each case. Aims (issue 8): agenda --json for 1e5
targets <= 2.5 s and <= 400 MB; the table and --ics no slower than --json (``--ics -``, the calendar
alone on stdout, is the like-for-like case; ``--ics FILE`` also prints the table); `now` for 10,000 targets
<= 1 s as JSON and as a piped table.

The TOML case (issue 13 item 4: 200,000 targets in at most 3 s, memory in proportion) prints CPU
seconds, and compares `check` with the same command at the commit before tomli and the quick header
index (extracted from git), and with each TOML parser alone reading the file.
"""

from __future__ import annotations

import argparse
import os
import pathlib
import random
import subprocess
import sys
import tempfile
import time

ROOT = pathlib.Path(__file__).resolve().parents[2]
DEMO = ROOT / "siderod" / "demo"
FROM = "2026-12-14T12:00:00Z"


def make_catalogue(folder: pathlib.Path, count: int) -> pathlib.Path:
    """The demo configuration with ``count`` random targets in a CSV file; returns the config path."""
    rng = random.Random(20261214)
    rows = ["name,ra,dec"] + [f"T{i:06d},{rng.uniform(0, 360):.5f}d,{rng.uniform(-89, 89):.4f}"
                              for i in range(count)]
    (folder / "targets.csv").write_text("\n".join(rows) + "\n")
    text = (DEMO / "demo.toml").read_text()
    text = text.replace('files = ["demo-targets.toml"]', 'files = ["targets.csv"]')
    text = text.replace('dut1 = "iers"', "dut1 = 0.1")
    (folder / "config.toml").write_text(text)
    return folder / "config.toml"


def make_toml_catalogue(folder: pathlib.Path, count: int) -> pathlib.Path:
    """The demo configuration with ``count`` random ``[[target]]`` tables; returns the config path."""
    rng = random.Random(20261214)
    tables = [f'[[target]]\nname = "T{i:06d}"\nra = "{rng.uniform(0, 24):.5f}h"\n'
              f"dec = {rng.uniform(-89, 89):.4f}\n" for i in range(count)]
    (folder / "targets.toml").write_text("\n".join(tables))
    text = (DEMO / "demo.toml").read_text()
    text = text.replace('files = ["demo-targets.toml"]', 'files = ["targets.toml"]')
    (folder / "config.toml").write_text(text.replace('dut1 = "iers"', "dut1 = 0.1"))
    return folder / "config.toml"


def run(argv: list[str], out_path: pathlib.Path,
        limit_seconds: float | None = None) -> tuple[float, float, float]:
    """Wall seconds, CPU seconds (user + system) and peak RSS (MB) of one fresh process (``inf``
    seconds if it ran past the limit). On a shared machine the CPU time is the steadier figure."""
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    start = time.perf_counter()
    with open(out_path, "wb") as out:
        process = subprocess.Popen(argv, stdout=out, stderr=subprocess.DEVNULL, env=env, cwd=ROOT)
        while limit_seconds is not None:
            pid, status, usage = os.wait4(process.pid, os.WNOHANG)
            if pid:
                break
            if time.perf_counter() - start > limit_seconds:
                process.kill()
                os.wait4(process.pid, 0)
                return float("inf"), float("inf"), float("nan")
            time.sleep(0.05)
        else:
            _, status, usage = os.wait4(process.pid, 0)
    seconds = time.perf_counter() - start
    code = os.waitstatus_to_exitcode(status)
    if code != 0:
        raise SystemExit(f"failed ({code}): {' '.join(argv)}")
    return seconds, usage.ru_utime + usage.ru_stime, usage.ru_maxrss / 1024.0


PREVIOUS_AGENDA = """
import json, os, sys
from datetime import datetime
from siderod.files.config import load_config
from siderod.plan.agenda import compute_agenda, event_to_json
start = datetime.fromisoformat(sys.argv[2].replace("Z", "+00:00"))
config = load_config(sys.argv[1], os.environ, at_unix=start.timestamp())
agenda = compute_agenda(config, start)
mode = sys.argv[3]
if mode == "json":
    json.dump({"events": [event_to_json(e) for e in agenda.events],
               "classification": dict(agenda.classification)}, sys.stdout, indent=2)
elif mode == "table":
    from rich.console import Console
    from rich.table import Table
    table = Table()
    for name in ("UTC", "Event", "Target", "Alt", "Az", "HA"):
        table.add_column(name)
    for e in agenda.events:
        ha = "" if e.hour_angle_hours is None else f"{e.hour_angle_hours:+.2f}"
        table.add_row(e.time_utc.strftime("%H:%M:%S"), e.kind.value, e.target or "", f"{e.altitude_deg:.1f}",
                      f"{e.azimuth_deg:.1f}", ha)
    Console(width=120).print(table)
else:
    from siderod.cli.ics import calendar_for
    sys.stdout.buffer.write(calendar_for(agenda, config, stamp_utc=start))
"""

PREVIOUS_NOW_TABLE = """
import os, sys
from rich.console import Console
from rich.table import Table
from siderod.astro.angles import format_dms, format_hms
from siderod.astro.timescales import parse_iso_datetime
from siderod.files.config import load_config
from siderod.plan.positions import compute_sky
unix = parse_iso_datetime(sys.argv[2]).timestamp()
sky = compute_sky(load_config(sys.argv[1], os.environ, at_unix=unix), unix)
table = Table()
for name in ("Target", "HA", "Dec", "Alt", "Az"):
    table.add_column(name)
for i, name in enumerate(sky.names):
    table.add_row(name, format_hms(float(sky.ha_hours[i]), decimals=0, sign=True),
                  format_dms(float(sky.dec_deg[i]), sign=True), f"{float(sky.alt_deg[i]):+.1f}",
                  f"{float(sky.az_deg[i]):.1f}")
Console(width=120).print(table)
"""


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--targets", type=int, default=100_000, help="agenda catalogue size")
    parser.add_argument("--now-targets", type=int, default=10_000, help="`now` catalogue size")
    parser.add_argument("--toml-targets", type=int, default=200_000,
                        help="`check` on a TOML catalogue (0: skip)")
    parser.add_argument("--skip-previous", action="store_true", help="do not run the previous approaches")
    parser.add_argument("--repeat", type=int, default=3,
                        help="runs of each case (the median by CPU time is shown)")
    parser.add_argument("--toml-only", action="store_true", help="run only the TOML `check` case")
    parser.add_argument("--previous-limit", type=float, default=300.0,
                        help="give up on a previous approach after this many seconds (printed as '>')")
    args = parser.parse_args()
    work = pathlib.Path(tempfile.mkdtemp(prefix="siderod-bench-"))
    if args.toml_only:
        bench_toml_check(args.toml_targets, work, skip_previous=args.skip_previous)
        return
    (work / "big").mkdir()
    (work / "small").mkdir()
    big = make_catalogue(work / "big", args.targets)
    small = make_catalogue(work / "small", args.now_targets)
    py = sys.executable
    agenda = [py, "-m", "siderod", "agenda", "--config", str(big), "--from", FROM]
    now = [py, "-m", "siderod", "now", "--config", str(small), "--at", FROM]
    n, m = f"{args.targets:,}", f"{args.now_targets:,}"
    cases = [
        (f"agenda --json, {n} targets", [*agenda, "--json"],
         [py, "-c", PREVIOUS_AGENDA, str(big), FROM, "json"]),
        (f"agenda table (piped), {n} targets", agenda, [py, "-c", PREVIOUS_AGENDA, str(big), FROM, "table"]),
        (f"agenda --ics -, {n} targets (calendar only)", [*agenda, "--ics", "-"],
         [py, "-c", PREVIOUS_AGENDA, str(big), FROM, "ics"]),
        (f"agenda --ics FILE, {n} targets (+ table)", [*agenda, "--ics", str(work / "night.ics")], None),
        (f"now --json, {m} targets", [*now, "--json"], None),
        (f"now table (piped), {m} targets", now, [py, "-c", PREVIOUS_NOW_TABLE, str(small), FROM]),
    ]
    load = os.getloadavg()
    print(f"load average {load[0]:.2f} {load[1]:.2f} {load[2]:.2f} on {os.cpu_count()} CPUs")
    print(f"{'case':50s} {'wall s':>7s} {'CPU s':>6s} {'MB':>5s}   "
          "previous approach (wall s, CPU s, MB, ratio)")
    for name, argv, previous in cases:
        repeats = []
        for _ in range(args.repeat):
            seconds, cpu, mb = run(argv, work / "out")
            repeats.append((cpu, seconds, mb))
        cpu, seconds, mb = sorted(repeats)[len(repeats) // 2]  # the median run by CPU time
        size = (work / "out").stat().st_size / 1e6
        line = f"{name:50s} {seconds:7.2f} {cpu:6.2f} {mb:5.0f}"
        if previous is not None and not args.skip_previous:
            p_seconds, p_cpu, p_mb = run(previous, work / "previous", args.previous_limit)
            if p_seconds == float("inf"):
                limit = args.previous_limit
                line += f"   > {limit:.0f} s (stopped)  > {limit / seconds:.0f}x faster"
            else:
                line += (f"   {p_seconds:7.2f} s {p_cpu:6.2f} s {p_mb:5.0f} MB  "
                         f"{p_seconds / seconds:5.1f}x faster (CPU {p_cpu / cpu:.1f}x)")
        print(line + f"   ({size:.0f} MB written to stdout)", flush=True)
    if args.toml_targets:
        bench_toml_check(args.toml_targets, work, skip_previous=args.skip_previous)


#: The code before tomli and the quick [[target]] header index (tomllib, and the full key-line scan of
#: every file): the "previous approach" of the TOML case, extracted from git into a scratch folder.
PREVIOUS_TOML_COMMIT = "c28c9f7119f7758dca83fa3a706478773831c449"


def bench_toml_check(count: int, work: pathlib.Path, *, skip_previous: bool) -> None:
    """`check` on ``count`` [[target]] tables: CPU seconds and peak RSS, now and at PREVIOUS_TOML_COMMIT,
    and the two parsers alone on the same file (aim, issue 13 item 4: <= 3 s, memory in proportion)."""
    (work / "toml").mkdir()
    config = make_toml_catalogue(work / "toml", count)
    targets = work / "toml" / "targets.toml"
    py = sys.executable
    check = [py, "-m", "siderod", "check", "--config", str(config)]
    rows = [(f"check, {count:,} TOML targets", check, ROOT)]
    if not skip_previous:
        previous = work / "previous"
        previous.mkdir()
        archive = subprocess.run(["git", "-C", str(ROOT), "archive", PREVIOUS_TOML_COMMIT, "siderod"],
                                 capture_output=True)
        if archive.returncode == 0:
            subprocess.run(["tar", "-x", "-C", str(previous)], input=archive.stdout, check=True)
            rows.append((f"  previous approach ({PREVIOUS_TOML_COMMIT[:7]}: tomllib)", check, previous))
        else:
            print(f"  (previous approach not run: {archive.stderr.decode().strip()})")
    for parser in ("tomli", "tomllib"):
        rows.append((f"  {parser} alone, parsing the file", [py, "-c", f"import {parser}; "
                     f"{parser}.load(open({str(targets)!r}, 'rb'))"], ROOT))
    print(f"\n{'case (whole process)':44s} {'CPU s':>8s} {'wall s':>7s} {'MB':>6s}  load average (1 min)")
    figures = {}
    for name, argv, root in rows:
        cpu, wall, mb = _run_cpu(argv, root)
        figures[name] = cpu
        print(f"{name:44s} {cpu:8.2f} {wall:7.2f} {mb:6.0f}  {os.getloadavg()[0]:.2f}", flush=True)
    now, before = figures[rows[0][0]], figures.get(rows[1][0]) if not skip_previous else None
    if before is not None and rows[1][2] != ROOT:
        print(f"previous approach / now: {before / now:.1f}x the CPU time")


def _run_cpu(argv: list[str], root: pathlib.Path) -> tuple[float, float, float]:
    """CPU seconds (user + system), wall seconds and peak RSS (MB) of one fresh process, imports from
    ``root``."""
    env = dict(os.environ, PYTHONPATH=str(root))
    start = time.perf_counter()
    process = subprocess.Popen(argv, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, env=env, cwd=root)
    _, status, usage = os.wait4(process.pid, 0)
    wall = time.perf_counter() - start
    if os.waitstatus_to_exitcode(status) != 0:
        raise SystemExit(f"failed: {' '.join(argv)}")
    return usage.ru_utime + usage.ru_stime, wall, usage.ru_maxrss / 1024.0


if __name__ == "__main__":
    main()
