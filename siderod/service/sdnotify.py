"""Tell systemd how the service is doing (the sd_notify datagram protocol), with the standard library only.

systemd passes ``NOTIFY_SOCKET`` to a ``Type=notify`` unit; each message is one datagram of
newline-separated ``KEY=VALUE`` lines: ``READY=1``, ``STATUS=...``, ``WATCHDOG=1``, ``STOPPING=1``,
``RELOADING=1``. A leading ``@`` in the address names a socket in the abstract namespace. Outside
systemd there is no ``NOTIFY_SOCKET`` and every call is a cheap no-op.

Send ``WATCHDOG=1`` from a task on the event loop itself, so a wedged loop stops the pings and
systemd restarts the service.
"""

from __future__ import annotations

import os
import socket
from collections.abc import Mapping

__all__ = ["notify", "watchdog_interval_seconds"]


def notify(message: str, env: Mapping[str, str] | None = None) -> bool:
    """Send one notification to systemd, e.g. ``notify("READY=1\\nSTATUS=next alert 21:10 UTC")``.

    Args:
        message: newline-separated ``KEY=VALUE`` lines.
        env: the environment to read ``NOTIFY_SOCKET`` from; ``os.environ`` when None.

    Returns:
        True if the datagram was sent; False when not under systemd or the send failed (a
        notification is advice to the manager, never a reason for the service to fail).
    """
    address = (os.environ if env is None else env).get("NOTIFY_SOCKET", "")
    if not address or address[0] not in "@/":
        return False
    target = "\0" + address[1:] if address[0] == "@" else address
    try:
        # Non-blocking: a manager that stops reading fills the kernel queue (net.unix.max_dgram_qlen),
        # and a blocking send would then freeze the whole event loop.
        kind = socket.SOCK_DGRAM | socket.SOCK_CLOEXEC | socket.SOCK_NONBLOCK
        with socket.socket(socket.AF_UNIX, kind) as sock:
            sock.sendto(message.encode("utf-8", "replace"), target)
    except OSError:
        return False
    return True


def watchdog_interval_seconds(env: Mapping[str, str] | None = None, pid: int | None = None) -> float | None:
    """How often to send ``WATCHDOG=1``: half of ``WATCHDOG_USEC``, as systemd recommends.

    Args:
        env: the environment; ``os.environ`` when None.
        pid: our process id (``os.getpid()`` when None). If ``WATCHDOG_PID`` is set and names another
            process, the watchdog is not ours and None is returned.

    Returns:
        Seconds between pings, or None when no watchdog is asked for.
    """
    env = os.environ if env is None else env
    watchdog_pid = env.get("WATCHDOG_PID", "")
    if watchdog_pid and watchdog_pid != str(os.getpid() if pid is None else pid):
        return None
    try:
        usec = int(env.get("WATCHDOG_USEC", ""))
    except ValueError:
        return None
    return usec / 2e6 if usec > 0 else None
