"""sd_notify: datagrams reach a real SOCK_DGRAM receiver, on a path and in the abstract namespace.

Reference for the wire format: systemd's sd_notify(3) man page (systemd 252): one datagram of
newline-separated KEY=VALUE assignments; a NOTIFY_SOCKET starting with "@" is an abstract socket.
"""

from __future__ import annotations

import os
import socket
import uuid

import pytest

from siderod.service.sdnotify import notify, watchdog_interval_seconds


@pytest.fixture
def path_receiver(tmp_path):
    sock = socket.socket(socket.AF_UNIX, socket.SOCK_DGRAM)
    path = tmp_path / "notify.sock"
    sock.bind(os.fspath(path))
    sock.settimeout(2.0)
    yield sock, os.fspath(path)
    sock.close()


@pytest.fixture
def abstract_receiver():
    sock = socket.socket(socket.AF_UNIX, socket.SOCK_DGRAM)
    name = f"siderod-test-{uuid.uuid4().hex}"
    sock.bind("\0" + name)
    sock.settimeout(2.0)
    yield sock, "@" + name
    sock.close()


def test_a_manager_that_stops_reading_never_blocks_the_sender(path_receiver):
    """The kernel queues only net.unix.max_dgram_qlen datagrams (10 by default); past that a
    blocking send would hang the service's event loop. Sends must fail quickly instead."""
    import threading

    _, address = path_receiver  # bound, never read
    results: list[bool] = []
    sender = threading.Thread(
        target=lambda: results.extend(notify("WATCHDOG=1", {"NOTIFY_SOCKET": address}) for _ in range(200)),
        daemon=True,
    )
    sender.start()
    sender.join(timeout=5.0)
    assert not sender.is_alive(), "notify() blocked on a full queue"
    assert results[0] is True and results[-1] is False  # the first ones queue, the rest are refused


@pytest.mark.parametrize("receiver", ["path_receiver", "abstract_receiver"])
def test_messages_arrive_in_order(receiver, request):
    sock, address = request.getfixturevalue(receiver)
    env = {"NOTIFY_SOCKET": address}
    messages = [
        "READY=1\nSTATUS=next alert: Demo Cluster A flip due 23:31 UTC",
        "WATCHDOG=1",
        "RELOADING=1",
        "READY=1",
        "STOPPING=1",
    ]
    for message in messages:
        assert notify(message, env) is True
    assert [sock.recv(4096).decode() for _ in messages] == messages


def test_sender_credentials_name_this_process(path_receiver):
    # systemd's NotifyAccess=main checks the sender pid from SCM_CREDENTIALS; make sure it is ours.
    sock, address = path_receiver
    sock.setsockopt(socket.SOL_SOCKET, socket.SO_PASSCRED, 1)
    assert notify("WATCHDOG=1", {"NOTIFY_SOCKET": address})
    data, ancdata, _flags, _addr = sock.recvmsg(4096, socket.CMSG_SPACE(12))
    assert data == b"WATCHDOG=1"
    level, kind, creds = ancdata[0]
    assert (level, kind) == (socket.SOL_SOCKET, socket.SCM_CREDENTIALS)
    assert int.from_bytes(creds[:4], "little") == os.getpid()


@pytest.mark.parametrize("address", ["", "relative/path", "/nonexistent/dir/notify.sock"])
def test_no_or_broken_notify_socket_is_a_quiet_no(address):
    assert notify("READY=1", {"NOTIFY_SOCKET": address} if address else {}) is False


@pytest.mark.parametrize(
    ("env", "pid", "expected"),
    [
        ({"WATCHDOG_USEC": "30000000"}, 42, 15.0),  # WatchdogSec=30 -> ping every 15 s
        ({"WATCHDOG_USEC": "30000000", "WATCHDOG_PID": "42"}, 42, 15.0),
        ({"WATCHDOG_USEC": "30000000", "WATCHDOG_PID": "43"}, 42, None),  # meant for another process
        ({"WATCHDOG_USEC": "0"}, 42, None),
        ({"WATCHDOG_USEC": "thirty"}, 42, None),
        ({}, 42, None),
    ],
)
def test_watchdog_interval(env, pid, expected):
    assert watchdog_interval_seconds(env, pid=pid) == expected


def test_watchdog_pid_defaults_to_our_own():
    env = {"WATCHDOG_USEC": "2000000", "WATCHDOG_PID": str(os.getpid())}
    assert watchdog_interval_seconds(env) == 1.0
