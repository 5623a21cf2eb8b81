"""End to end: a real ``python -m siderod run`` process, driven by the real CLI verbs.

The service runs on the wall clock against a copy of the demo configuration (desktop off, a command
hook that appends each alert's title to a file), with ``NOTIFY_SOCKET`` bound by the test, so the
sd_notify messages systemd would see are checked too. Real processes mean real time: every wait polls
(every 50 ms) up to a deadline and never sleeps for correctness.
"""

from __future__ import annotations

import json
import os
import re
import signal
import socket
import subprocess
import sys
from datetime import UTC, datetime, timedelta
from pathlib import Path

import pytest
from helpers import real_service
from helpers.tmux_pane import TmuxPane

pytestmark = pytest.mark.slow

REPO = Path(__file__).resolve().parents[2]
DEMO_DIR = REPO / "siderod" / "demo"
#: Python start-up, numpy, the IERS table and the first 36-hour agenda of the demo targets, and one
#: configuration file poll (5 s in the service) on a shared two-core machine.
DEADLINE_SECONDS = 20.0
#: WATCHDOG_USEC given to the service: it pings every half of it (systemd's advice).
WATCHDOG_USEC = 2_000_000
#: The mute is for 1 h; the service's clock read and ours differ by the CLI's run time only.
MUTE_SLACK_SECONDS = 60.0
#: The hook: append argv[2] (the title) as one line to argv[1]. No braces: the argv is a template.
HOOK_CODE = 'import sys; f = open(sys.argv[1], "a"); f.write(sys.argv[2].replace(chr(10), " ") + chr(10))'
#: The first target of demo-targets.toml that gives its own RA (Betelgeuse, the sixth) and that line.
GOOD_RA_LINE = 'ra = "05 55 10.31"'
GOOD_RA_KEY = "target[6].ra"
BAD_RA_LINE = 'ra = "5h61m"'  # 61 minutes: invalid
PROMPT = "siderod-e2e$ "


@pytest.fixture
def short_dir():
    with real_service.short_dir("sde2e") as directory:
        yield directory


def wait_until(predicate, what: str, deadline_seconds: float = DEADLINE_SECONDS):
    return real_service.wait_until(predicate, what, deadline_seconds)


def toml_string(text: str) -> str:
    return json.dumps(text)  # a JSON string is a valid TOML basic string


def write_demo_copy(directory: Path, hook_file: Path) -> tuple[Path, Path]:
    """The demo configuration and targets, copied, with desktop off and the command hook on."""
    text = (DEMO_DIR / "demo.toml").read_text()
    hook = ", ".join(toml_string(a) for a in (sys.executable, "-c", HOOK_CODE, str(hook_file), "{title}"))
    assert text.count("\ndesktop = true\n") == 1
    text = text.replace("\ndesktop = true\n", f"\ndesktop = false\ncommand = [{hook}]\n")
    config = directory / "config.toml"
    config.write_text(text)
    targets = directory / "demo-targets.toml"
    targets.write_text((DEMO_DIR / "demo-targets.toml").read_text())
    assert targets.read_text().count(GOOD_RA_LINE) == 1
    return config, targets


def siderod(env: dict[str, str], *args: str, timeout: float = 30.0) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "siderod", *args], env=env, cwd=REPO, capture_output=True,
                          text=True, timeout=timeout, check=False)


def status_json(env: dict[str, str]) -> dict:
    done = siderod(env, "status", "--json")
    log_file = Path(env["HOME"]) / "service.log"
    assert done.returncode == 0, done.stderr + (log_file.read_text() if log_file.exists() else "")
    return json.loads(done.stdout)


def hook_lines(hook_file: Path) -> list[str]:
    return hook_file.read_text().splitlines() if hook_file.exists() else []


def test_a_real_service_under_sd_notify_answers_the_cli_reloads_and_stops_cleanly(short_dir):
    hook_file = short_dir / "hook.txt"
    config, targets = write_demo_copy(short_dir, hook_file)
    env = real_service.service_env(short_dir)
    receiver = real_service.NotifyReceiver(short_dir / "notify.sock")
    env.update(NOTIFY_SOCKET=str(receiver.path), WATCHDOG_USEC=str(WATCHDOG_USEC))
    socket_path = short_dir / "run" / "siderod" / "control.sock"
    assert len(os.fsencode(socket_path)) < 108
    log_file = short_dir / "service.log"
    with open(log_file, "w") as log:
        process = subprocess.Popen(
            [sys.executable, "-m", "siderod", "run", "--no-view", "--config", str(config)],
            env=env, cwd=REPO, stdin=subprocess.DEVNULL, stdout=log, stderr=subprocess.STDOUT,
        )
    try:
        # READY=1 comes once the first plan (of the first stretch) is made: with it, a STATUS= naming
        # the next alert, or saying none falls in the stretch while the rest is planned (then a later
        # STATUS= names it), and a STATUS= from the plan itself before it. Pings start after READY.
        messages = wait_until(lambda: (m := receiver.messages) and any("READY=1" in x for x in m) and m,
                              "READY=1")
        ready_index = next(i for i, m in enumerate(messages) if "READY=1" in m)
        assert any(m.startswith("STATUS=") for m in messages[:ready_index]), messages
        next_alert = re.compile(r"^STATUS=next alert \d\d:\d\d:\d\d UTC: (.+)$", re.M)
        if not next_alert.search(messages[ready_index]):
            assert re.fullmatch(r"READY=1\nSTATUS=no alert before \d\d:\d\d:\d\d UTC; planning the rest of"
                                r" the horizon", messages[ready_index]), messages[ready_index]
        ready_status = wait_until(
            lambda: next(filter(None, map(next_alert.search, receiver.messages[ready_index:])), None),
            "a STATUS= naming the next alert")
        wait_until(lambda: sum("WATCHDOG=1" in m for m in receiver.messages) >= 2, "two WATCHDOG=1 pings",
                   deadline_seconds=4 * WATCHDOG_USEC / 1e6)
        assert not any("WATCHDOG=1" in m for m in receiver.messages[:ready_index])

        status = status_json(env)
        assert status["site"]["name"] == "Corrie Hill Observatory"
        assert status["config_path"] == str(config)
        assert status["uptime_seconds"] > 0
        assert status["planned_count"] > 0 and status["next_alerts"]
        assert status["config_error"] == ""
        # The alert READY named is planned, or has gone out since (its title then may carry a
        # "[late N min]" mark, and for a moment it may be on its way: hence the poll).
        wait_until(lambda: ready_status[1] in [a["title"] for a in status_json(env)["next_alerts"]]
                   or any(line.endswith(ready_status[1]) for line in hook_lines(hook_file)),
                   f"the alert named by READY ({ready_status[1]}) planned or delivered")

        done = siderod(env, "mute", "M42", "--for", "1h")
        assert done.returncode == 0, done.stderr
        muted = status_json(env)["muted"]
        assert set(muted) == {"M42"}
        until_utc = datetime.fromisoformat(muted["M42"].replace("Z", "+00:00"))
        expected_utc = datetime.now(UTC) + timedelta(hours=1)
        assert abs(until_utc - expected_utc) < timedelta(seconds=MUTE_SLACK_SECONDS)

        before = len(hook_lines(hook_file))
        done = siderod(env, "test-alert")
        assert done.returncode == 0, done.stdout + done.stderr
        assert "command: ok" in done.stdout
        assert "siderod test alert" in hook_lines(hook_file)[before:]

        # An invalid target file: the service stays on the last good configuration and says where.
        good_text = targets.read_text()
        bad_line = good_text.splitlines().index(GOOD_RA_LINE) + 1
        targets.write_text(good_text.replace(GOOD_RA_LINE, BAD_RA_LINE))
        error = wait_until(lambda: status_json(env)["config_error"], "config_error after the bad edit")
        assert f"{targets}:{bad_line}: {GOOD_RA_KEY}:" in error, error
        assert '"5h61m"' in error
        assert process.poll() is None
        wait_until(lambda: any("configuration not reloaded" in line for line in hook_lines(hook_file)),
                   "the alert about the bad configuration")
        still = status_json(env)
        assert still["site"]["name"] == "Corrie Hill Observatory" and still["planned_count"] > 0

        targets.write_text(good_text)
        wait_until(lambda: status_json(env)["config_error"] == "", "config_error cleared after the fix")
        assert sum("configuration not reloaded" in line for line in hook_lines(hook_file)) == 1
        log_lines = log_file.read_text().splitlines()
        assert sum("ERROR siderod.service: configuration not reloaded" in line for line in log_lines) == 1
        alert_lines = [line for line in log_lines if "ALERT service|" in line]
        assert sum("configuration not reloaded" in line for line in alert_lines) == 1

        done = siderod(env, "watch", "--once")  # stdout is a pipe here, not a terminal
        assert done.returncode == 0, done.stderr
        assert "from the service" in done.stdout, done.stdout
        assert "Corrie Hill Observatory" in done.stdout
        # unmute of a name that is neither muted nor configured is refused (it exited 0), and a
        # near miss gets a "did you mean" (issue 13, item 15).
        done = siderod(env, "unmute", "Nothing")
        assert done.returncode == 1 and "no target named 'Nothing'" in done.stderr, done.stderr
        done = siderod(env, "mute", "Betelguese")
        assert done.returncode == 1 and 'did you mean "Betelgeuse"' in done.stderr, done.stderr
        # Tags do something: mute and unmute take one (issue 13, item 15).
        done = siderod(env, "mute", "--tag", "nebula", "--for", "1h")
        assert done.returncode == 0, done.stderr
        muted = status_json(env)["muted"]
        assert {"M42", "North America", "Crab Nebula"} <= set(muted) and "M31" not in muted
        assert siderod(env, "unmute", "--tag", "nebula").returncode == 0
        assert not {"M42", "North America", "Crab Nebula"} & set(status_json(env)["muted"])
        done = siderod(env, "mute", "--tag", "nebulae")
        assert done.returncode == 1 and 'did you mean "nebula"' in done.stderr, done.stderr
        # Naming the service's own file is no mix; naming another one must never put that file's
        # targets beside the service's alerts without a word (issue 13, item 10).
        done = siderod(env, "watch", "--once", "--config", str(config))
        assert "from the service" in done.stdout and "differs" not in done.stderr
        other = short_dir / "other.toml"
        renamed = config.read_text().replace('name = "Corrie Hill Observatory"', 'name = "Other Site"')
        other.write_text(renamed)
        done = siderod(env, "watch", "--once", "--config", str(other))
        assert done.returncode == 0, done.stderr
        assert f"{other}" in done.stderr and f"{config}" in done.stderr and "differs" in done.stderr
        assert "Other Site" in done.stdout and "from the service" not in done.stdout
        assert "computed here from" in done.stdout

        process.send_signal(signal.SIGTERM)
        assert process.wait(timeout=DEADLINE_SECONDS) == 0, log_file.read_text()
        wait_until(lambda: any("STOPPING=1" in m for m in receiver.messages), "STOPPING=1")
        if socket_path.exists():
            with socket.socket(socket.AF_UNIX, socket.SOCK_STREAM) as probe, pytest.raises(OSError):
                probe.connect(str(socket_path))
        assert siderod(env, "status").returncode == 3  # EXIT_NO_SERVICE
        assert "Traceback" not in log_file.read_text()
    finally:
        if process.poll() is None:
            process.kill()
            process.wait(timeout=10)
        receiver.close()


# -- the live board and the service in one real terminal --------------------------------------------


def board_is_whole(text: str) -> bool:
    """One title, the clock right under it, the table header once, and no log text inside the board."""
    lines = text.splitlines()
    titles = [i for i, line in enumerate(lines) if line.startswith("siderod Corrie Hill Observatory")]
    if len(titles) != 1 or titles[0] + 1 >= len(lines):
        return False
    board = lines[titles[0]:]
    return ("apparent " in board[1] and sum(line.startswith("target ") for line in board) == 1
            and not any(re.search(r"\b(INFO|WARNING|ERROR)\b|ALERT ", line) for line in board))


@pytest.mark.needs_tmux
def test_run_with_the_board_in_tmux_keeps_it_whole_under_log_lines_and_ctrl_c_leaves_a_prompt(
        short_dir, tool):
    tool("tmux")
    hook_file = short_dir / "hook.txt"
    config, _ = write_demo_copy(short_dir, hook_file)
    env = real_service.service_env(short_dir)
    env.update(TERM="xterm-256color", LANG="C.UTF-8", PS1=PROMPT)
    tmux = TmuxPane(env, deadline_seconds=DEADLINE_SECONDS)
    try:
        tmux.start(100, 30, PROMPT)
        tmux.type(f"{sys.executable} -m siderod run --config {config}")
        wait_until(lambda: "this service" in (t := tmux.capture()) and re.search(r"apparent \d\dh", t),
                   "the board with its apparent LST")
        # Log lines while the board is up: the test alert's ALERT line and the mute's line.
        assert siderod(env, "test-alert").returncode == 0
        assert siderod(env, "mute", "M42", "--for", "1h").returncode == 0
        text = wait_until(lambda: "siderod test alert" in (t := tmux.steady_capture()) and board_is_whole(t)
                          and t, "the board redrawn whole after the log lines")
        assert "siderod test alert" in text.split("siderod Corrie Hill Observatory")[1]  # in "last sent"
        assert all(len(line) <= 100 for line in text.splitlines())

        tmux("send-keys", "-t", "ui", "C-c")
        text = wait_until(lambda: (t := tmux.capture()).rstrip().endswith(PROMPT.rstrip()) and t,
                          "the prompt after Ctrl-C")
        assert "Traceback" not in text
        tmux.type("echo exit-status-$?")
        wait_until(lambda: "\nexit-status-0" in tmux.capture(), "exit status 0")
        assert tmux("display-message", "-p", "-t", "ui", "#{alternate_on} #{cursor_flag}").strip() == "0 1"
        assert siderod(env, "status").returncode == 3  # the service went with the view
    finally:
        tmux.kill()
