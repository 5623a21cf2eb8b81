"""The configuration of the private D-Bus session bus that real-part tests start with dbus-daemon.

Anyone on the bus may own names and send anywhere, so the recording notification service can take
org.freedesktop.Notifications; the bus listens in a directory the test chooses.
"""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

#: The bus and the recording server each print one line when ready; a loaded CI machine needs seconds.
START_TIMEOUT_SECONDS = 10.0

#: The recording notification service (org.freedesktop.Notifications) the tests start on the bus.
NOTIFY_SERVER = Path(__file__).resolve().parent / "notify_server.py"

BUS_CONFIG = """<!DOCTYPE busconfig PUBLIC "-//freedesktop//DTD D-BUS Bus Configuration 1.0//EN"
 "http://www.freedesktop.org/standards/dbus/1.0/busconfig.dtd">
<busconfig>
  <type>session</type>
  <listen>unix:dir={dir}</listen>
  <auth>EXTERNAL</auth>
  <policy context="default">
    <allow send_destination="*" eavesdrop="true"/>
    <allow eavesdrop="true"/>
    <allow own="*"/>
  </policy>
</busconfig>
"""


def read_first_line(process: subprocess.Popen, what: str,
                    timeout_seconds: float = START_TIMEOUT_SECONDS) -> str:
    """The first line ``process`` prints on stdout (dbus-daemon's address, the server's "ready").

    Raises AssertionError naming ``what`` if the process exits or stays silent for ``timeout_seconds``.
    """
    os.set_blocking(process.stdout.fileno(), False)
    deadline = time.monotonic() + timeout_seconds
    data = b""
    while b"\n" not in data:
        if time.monotonic() > deadline or process.poll() is not None:
            raise AssertionError(f"{what} did not answer within {timeout_seconds:g} s")
        chunk = process.stdout.read()
        if chunk:
            data += chunk
        else:
            time.sleep(0.005)
    return data.split(b"\n", 1)[0].decode().strip()


def start_notify_server(record: Path, bus_address: str, *, commands: bool = False,
                        what: str = "notify_server") -> subprocess.Popen:
    """Start the recording notification service on the bus at ``bus_address``, writing what it is
    shown to ``record``; return once it owns its name. ``commands``: it also takes commands on stdin
    (to press a notification's button). Stop it with :func:`stop_process`."""
    process = subprocess.Popen(
        [sys.executable, str(NOTIFY_SERVER), str(record), *(["--commands"] if commands else [])],
        stdin=subprocess.PIPE if commands else None, stdout=subprocess.PIPE, stderr=subprocess.DEVNULL,
        env=dict(os.environ, DBUS_SESSION_BUS_ADDRESS=bus_address))
    try:
        assert read_first_line(process, what) == "ready"
    except BaseException:
        stop_process(process)
        raise
    return process


def stop_process(process: subprocess.Popen) -> None:
    """Kill a helper process (continued first, in case a test left it stopped) and close its pipes."""
    process.send_signal(signal.SIGCONT)
    process.kill()
    process.wait()
    for pipe in (process.stdin, process.stdout):
        if pipe:
            pipe.close()
