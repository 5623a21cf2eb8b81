"""The configuration of the private D-Bus session bus that real-part tests start with dbus-daemon.

Anyone on the bus may own names and send anywhere, so the recording notification service can take
org.freedesktop.Notifications; the bus listens in a directory the test chooses.
"""

from __future__ import annotations

import os
import subprocess
import time

#: The bus and the recording server each print one line when ready; a loaded CI machine needs seconds.
START_TIMEOUT_SECONDS = 10.0

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
