"""Control socket on a real Unix socket: permissions, round trips, bad peers, single instance, cleanup."""

from __future__ import annotations

import asyncio
import contextlib
import json
import logging
import os
import socket
import stat
import tempfile
from pathlib import Path

import pytest

from siderod.common.errors import ControlError, ServiceNotRunning, SiderodError
from siderod.service.control import (
    MAX_CONNECTIONS,
    ControlServer,
    ServiceAlreadyRunning,
    UnsafeSocketPlace,
    peer_uid,
    request_once,
)
from siderod.service.protocol import MAX_REQUEST_BYTES, Op, Request

#: Read timeout for the slow-client tests: long enough for a loaded 2-core box to deliver a
#: written line, short enough that the test stays quick.
SHORT_TIMEOUT_SECONDS = 0.1
#: uid of "nobody" on Debian; any uid other than ours would do.
OTHER_UID = 65534


class FakeService:
    """Stands in for Service.handle_request: records requests and answers from a small state."""

    def __init__(self) -> None:
        self.requests: list[Request] = []
        self.muted: dict[str, float | None] = {}
        self.hold: asyncio.Event | None = None  # when set, each request waits for it

    async def handle_request(self, request: Request) -> dict:
        self.requests.append(request)
        if self.hold is not None:
            await self.hold.wait()
        if request.op == Op.STATUS:
            return {"uptime_seconds": 12.5, "muted": sorted(self.muted)}
        if request.op == Op.MUTE:
            if request.target == "Unknown Object":
                raise SiderodError(f"no target named {request.target!r} in the configuration")
            self.muted[request.target] = request.for_seconds
            return {"message": f"muted {request.target}"}
        if request.op == Op.RELOAD:
            return {"ok": False, "error": "config.toml:3: site.latitude: expected a latitude"}
        if request.op == Op.TEST_ALERT:
            raise RuntimeError("boom")
        return {}


@pytest.fixture
def run_dir(tmp_path):
    return tmp_path / "run" / "siderod"


@pytest.fixture
def service():
    return FakeService()


def make_server(run_dir: Path, service: FakeService, **kwargs) -> ControlServer:
    return ControlServer(run_dir / "control.sock", service.handle_request, run_dir / "service.lock", **kwargs)


async def ask(path: Path, request: dict, timeout_seconds: float = 3.0) -> dict:
    # request_once blocks, as it does in the CLI; run it off the loop that serves it.
    return await asyncio.to_thread(request_once, path, request, timeout_seconds)


async def raw_exchange(path: Path, payload: bytes, *, half_close: bool = False) -> list[dict]:
    reader, writer = await asyncio.open_unix_connection(os.fspath(path))
    writer.write(payload)
    await writer.drain()
    if half_close:
        writer.write_eof()
    lines = []
    while line := await reader.readline():
        lines.append(json.loads(line))
    writer.close()
    await writer.wait_closed()
    return lines


async def test_socket_is_0600_in_a_0700_directory_and_answers(run_dir, service):
    async with make_server(run_dir, service) as server:
        assert stat.S_IMODE(os.stat(run_dir).st_mode) == 0o700
        mode = os.stat(server.socket_path).st_mode
        assert stat.S_ISSOCK(mode) and stat.S_IMODE(mode) == 0o600
        result = await ask(server.socket_path, {"op": "status"})
    assert result == {"uptime_seconds": 12.5, "muted": []}
    assert service.requests == [Request(Op.STATUS)]


async def test_existing_loose_directory_is_tightened(run_dir, service):
    run_dir.mkdir(parents=True, mode=0o755)
    os.chmod(run_dir, 0o755)
    async with make_server(run_dir, service):
        assert stat.S_IMODE(os.stat(run_dir).st_mode) == 0o700


async def test_mute_round_trip_and_refusals(run_dir, service):
    async with make_server(run_dir, service) as server:
        path = server.socket_path
        assert await ask(path, {"op": "mute", "target": "Demo Nebula B", "for_seconds": 5400}) == {
            "message": "muted Demo Nebula B"
        }
        with pytest.raises(ControlError, match="no target named 'Unknown Object'"):
            await ask(path, {"op": "mute", "target": "Unknown Object"})
        # a handler may return a whole error reply
        with pytest.raises(ControlError, match="site.latitude"):
            await ask(path, {"op": "reload"})
    assert service.muted == {"Demo Nebula B": 5400.0}


async def test_handler_crash_is_reported_and_logged_and_server_lives_on(run_dir, service, caplog):
    caplog.set_level(logging.ERROR, logger="siderod.control")
    async with make_server(run_dir, service) as server:
        with pytest.raises(ControlError, match="this is a bug in siderod"):
            await ask(server.socket_path, {"op": "test-alert"})
        assert await ask(server.socket_path, {"op": "status"})
    assert "boom" in caplog.text
    assert server.counts["handler_errors"] == 1


async def test_malformed_requests_get_error_replies_on_the_same_connection(run_dir, service):
    async with make_server(run_dir, service) as server:
        replies = await raw_exchange(
            server.socket_path,
            b"not json\n"
            b'{"op": "launch"}\n'
            b"\xff\xfe\n"
            b'{"op": "status"}\n'
            b'{"op": "unmute", "target": "Demo Pair C"}',  # last line without newline, then EOF
            half_close=True,
        )
    assert [r["ok"] for r in replies] == [False, False, False, True, True]
    assert "not valid JSON" in replies[0]["error"]
    assert 'unknown "op" "launch"' in replies[1]["error"]
    assert "UTF-8" in replies[2]["error"]
    assert server.counts["bad_requests"] == 3 and server.counts["served"] == 2


async def test_oversized_request_gets_an_error_and_server_lives_on(run_dir, service):
    async with make_server(run_dir, service) as server:
        huge = b'{"op": "status", "x": "' + b"y" * (4 * MAX_REQUEST_BYTES)
        replies = await raw_exchange(server.socket_path, huge)
        assert len(replies) == 1 and not replies[0]["ok"]
        assert "too long" in replies[0]["error"]
        assert await ask(server.socket_path, {"op": "status"})
    assert service.requests == [Request(Op.STATUS)]


async def test_silent_client_is_told_and_dropped(run_dir, service):
    async with make_server(run_dir, service, read_timeout_seconds=SHORT_TIMEOUT_SECONDS) as server:
        replies = await raw_exchange(server.socket_path, b"")
        assert len(replies) == 1 and "no complete request line" in replies[0]["error"]


async def test_stalled_half_line_is_told_and_dropped_while_others_are_served(run_dir, service):
    async with make_server(run_dir, service, read_timeout_seconds=SHORT_TIMEOUT_SECONDS) as server:
        stalled = asyncio.create_task(raw_exchange(server.socket_path, b'{"op": "sta'))
        # the server answers other peers while one stalls
        assert await ask(server.socket_path, {"op": "status"})
        replies = await stalled
    assert len(replies) == 1 and "no complete request line" in replies[0]["error"]
    assert server.counts["timeouts"] >= 1


async def test_idle_kept_open_connection_is_closed_quietly(run_dir, service):
    async with make_server(run_dir, service, read_timeout_seconds=SHORT_TIMEOUT_SECONDS) as server:
        replies = await raw_exchange(server.socket_path, b'{"op": "status"}\n')
    assert len(replies) == 1 and replies[0]["ok"]


async def test_too_many_connections_are_told_busy(run_dir, service):
    """Busy only when every slot is in the middle of a request (an idle one gives up its slot)."""
    async with make_server(run_dir, service, max_connections=1) as server:
        reader, writer = await asyncio.open_unix_connection(os.fspath(server.socket_path))
        service.hold = asyncio.Event()
        writer.write(b'{"op": "status"}\n')
        await writer.drain()
        while not service.requests:  # the first connection is being served
            await asyncio.sleep(0.001)
        with pytest.raises(ControlError, match="busy"):
            await ask(server.socket_path, {"op": "status"})
        service.hold.set()
        assert json.loads(await reader.readline())["ok"]
        writer.close()
        await writer.wait_closed()


async def test_second_instance_is_refused_and_the_first_keeps_its_socket(run_dir, service):
    async with make_server(run_dir, service) as first:
        inode_before = os.stat(first.socket_path).st_ino
        second = make_server(run_dir, FakeService())
        with pytest.raises(ServiceAlreadyRunning, match=rf"already running \(pid {os.getpid()}\)"):
            await second.start()
        assert os.stat(first.socket_path).st_ino == inode_before
        assert await ask(first.socket_path, {"op": "status"})
        await second.close()  # closing a server that never started touches nothing
        assert os.stat(first.socket_path).st_ino == inode_before


async def test_close_removes_the_socket_and_releases_the_lock(run_dir, service):
    server = make_server(run_dir, service)
    await server.start()
    await server.close()
    assert not server.socket_path.exists()
    assert server.lock_path.exists()  # kept on purpose: see ControlServer._release_lock
    with pytest.raises(ServiceNotRunning, match="no siderod service is running"):
        await ask(server.socket_path, {"op": "status"})
    async with make_server(run_dir, service) as again:
        assert await ask(again.socket_path, {"op": "status"})


async def test_close_drops_open_connections(run_dir, service):
    server = make_server(run_dir, service)
    await server.start()
    reader, writer = await asyncio.open_unix_connection(os.fspath(server.socket_path))
    writer.write(b'{"op": "status"}\n')
    assert json.loads(await reader.readline())["ok"]
    await server.close()
    assert await reader.read() == b""
    writer.close()


async def test_stale_socket_from_a_crash_is_replaced(run_dir, service):
    run_dir.mkdir(parents=True, mode=0o700)
    stale = socket.socket(socket.AF_UNIX, socket.SOCK_STREAM)
    stale.bind(os.fspath(run_dir / "control.sock"))
    stale.close()  # the file stays, nobody listens: what a killed service leaves behind
    with pytest.raises(ServiceNotRunning, match="no siderod service is running"):
        await ask(run_dir / "control.sock", {"op": "status"})
    async with make_server(run_dir, service) as server:
        assert await ask(server.socket_path, {"op": "status"})


async def test_request_once_rejects_bad_requests_before_sending(run_dir, service):
    from siderod.service.protocol import BadRequest

    with pytest.raises(BadRequest, match='needs "target"'):
        request_once(run_dir / "control.sock", {"op": "mute"})


async def test_a_service_that_never_answers_is_reported_not_running(run_dir):
    run_dir.mkdir(parents=True, mode=0o700)
    listener = socket.socket(socket.AF_UNIX, socket.SOCK_STREAM)
    listener.bind(os.fspath(run_dir / "control.sock"))
    listener.listen()  # accepts (the kernel queues us) but never reads or answers
    try:
        with pytest.raises(ServiceNotRunning, match="did not answer within 0.1 s"):
            await ask(run_dir / "control.sock", {"op": "status"}, timeout_seconds=0.1)
    finally:
        listener.close()


def test_socket_path_too_long_is_explained(tmp_path, service):
    deep = tmp_path / ("d" * 120)
    server = ControlServer(deep / "control.sock", service.handle_request, deep / "service.lock")
    with pytest.raises(UnsafeSocketPlace, match="Set XDG_RUNTIME_DIR to a shorter directory"):
        asyncio.run(server.start())


@pytest.mark.skipif(os.geteuid() != 0, reason="needs root to make a directory owned by another uid")
async def test_directory_owned_by_another_user_is_refused(run_dir, service):
    run_dir.mkdir(parents=True, mode=0o700)
    os.chown(run_dir, OTHER_UID, OTHER_UID)
    with pytest.raises(UnsafeSocketPlace, match=f"belongs to uid {OTHER_UID}"):
        await make_server(run_dir, service).start()


def test_peer_uid_of_a_socketpair_is_ours():
    a, b = socket.socketpair(socket.AF_UNIX, socket.SOCK_STREAM)
    with a, b:
        assert peer_uid(a) == os.getuid()


# -- a peer of another uid ----------------------------------------------------------------------------

needs_root = pytest.mark.skipif(
    os.geteuid() != 0, reason="making a client of another uid needs root (os.setuid in a forked child)"
)


async def _ask_as_other_uid(socket_path: Path) -> str:
    """Fork a child that drops to OTHER_UID and asks for status; return what it saw."""
    read_fd, write_fd = os.pipe()
    pid = os.fork()
    if pid == 0:  # child: no asyncio, no pytest, just a blocking client
        outcome = "no outcome"
        try:
            os.close(read_fd)
            os.setgid(OTHER_UID)
            os.setuid(OTHER_UID)
            result = request_once(socket_path, {"op": "status"}, 2.0)
            outcome = f"answered: {result}"
        except BaseException as e:  # everything must reach the parent
            outcome = f"{type(e).__name__}: {e}"
        finally:
            with contextlib.suppress(BaseException):
                os.write(write_fd, outcome.encode()[:4000])
            os._exit(0)
    os.close(write_fd)
    try:
        data = await asyncio.to_thread(_read_all, read_fd)
    finally:
        os.close(read_fd)
        await asyncio.to_thread(os.waitpid, pid, 0)
    return data.decode()


def _read_all(fd: int) -> bytes:
    chunks = []
    while chunk := os.read(fd, 4096):
        chunks.append(chunk)
    return b"".join(chunks)


@pytest.fixture
def shared_base():
    """A directory other users may traverse (tmp_path's parents are private to root)."""
    base = Path(tempfile.mkdtemp(prefix="siderod-ctl-", dir="/tmp"))
    os.chmod(base, 0o755)
    yield base
    for path in sorted(base.rglob("*"), reverse=True):
        path.unlink() if not path.is_dir() else path.rmdir()
    base.rmdir()


@needs_root
@pytest.mark.slow
async def test_other_user_cannot_even_reach_the_socket(shared_base, service):
    async with make_server(shared_base / "siderod", service) as server:
        outcome = await _ask_as_other_uid(server.socket_path)
    assert outcome.startswith("ServiceNotRunning") and "permission denied" in outcome
    assert service.requests == []


@needs_root
@pytest.mark.slow
async def test_other_user_is_refused_by_peer_credentials_even_if_permissions_are_loosened(
    shared_base, service
):
    async with make_server(shared_base / "siderod", service) as server:
        # Simulate a mistake that opens the directory and socket to everyone: SO_PEERCRED still says no.
        os.chmod(server.socket_path.parent, 0o755)
        os.chmod(server.socket_path, 0o666)
        outcome = await _ask_as_other_uid(server.socket_path)
        assert server.counts["refused_peers"] == 1
        # and the owner is still served
        assert await ask(server.socket_path, {"op": "status"})
    assert outcome.startswith("ControlError") and "belongs to another user" in outcome
    assert service.requests == [Request(Op.STATUS)]


async def test_an_integer_of_hundreds_of_digits_gets_an_error_reply(run_dir, service):
    """Issue 14 item 9: such a number overflowed float() inside the handler: no reply at all."""
    async with make_server(run_dir, service) as server:
        huge = "1" + "0" * 400
        replies = await raw_exchange(
            server.socket_path,
            b'{"op": "mute", "target": "Demo Pair C", "for_seconds": ' + huge.encode() + b"}\n"
            b'{"op": "mute", "target": "Demo Pair C", "for_seconds": -' + huge.encode() + b"}\n"
            b'{"op": "status"}\n',
            half_close=True,
        )
    assert [r["ok"] for r in replies] == [False, False, True]
    assert "for_seconds" in replies[0]["error"] and "for_seconds" in replies[1]["error"]


async def test_status_is_answered_while_idle_clients_hold_every_slot(run_dir, service):
    """Issue 14 item 10: clients that connect and wait held all slots; status got "busy"."""
    async with make_server(run_dir, service) as server:
        path = os.fspath(server.socket_path)
        held = [await asyncio.open_unix_connection(path) for _ in range(MAX_CONNECTIONS)]
        for reader, writer in held[:4]:  # some have asked once and keep the connection open
            writer.write(b'{"op": "status"}\n')
            assert json.loads(await reader.readline())["ok"]
        await asyncio.sleep(0.01)
        assert await ask(server.socket_path, {"op": "status"})
        assert await ask(server.socket_path, {"op": "status"})
        for _, writer in held:
            writer.close()
        await asyncio.gather(*(w.wait_closed() for _, w in held), return_exceptions=True)
