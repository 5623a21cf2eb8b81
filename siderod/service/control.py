"""The control socket: a Unix socket only this user can reach, serving one JSON line per request.

Layers of protection, outermost first: the socket lives in a 0700 directory (normally the one systemd
makes for ``RuntimeDirectory=``), the socket file itself is 0600, and each connection's peer uid is
read with SO_PEERCRED and refused unless it is ours. Every read has a size limit and a timeout, and a
bad request only ever costs its own connection an error reply.

Ordering matters at start-up: the single-instance lock is taken *before* the socket is bound,
because binding replaces an existing socket file, which would silently steal the path from a live
service. Only the holder of the lock may remove or replace the socket file.
"""

from __future__ import annotations

import asyncio
import contextlib
import errno
import fcntl
import logging
import os
import socket
import stat
import struct
import time
from collections.abc import Awaitable, Callable, Mapping
from pathlib import Path
from typing import Any

from siderod.common.errors import ControlError, ServiceNotRunning, SiderodError
from siderod.service.protocol import (
    MAX_REPLY_BYTES,
    MAX_REQUEST_BYTES,
    BadReply,
    BadRequest,
    Request,
    encode_reply,
    encode_request,
    error_reply,
    ok_reply,
    parse_reply,
    parse_request,
)

__all__ = [
    "ControlServer",
    "ServiceAlreadyRunning",
    "UnsafeSocketPlace",
    "Handler",
    "request_once",
    "peer_uid",
    "READ_TIMEOUT_SECONDS",
    "WRITE_TIMEOUT_SECONDS",
    "HANDLER_TIMEOUT_SECONDS",
    "MAX_CONNECTIONS",
]

_log = logging.getLogger("siderod.control")

#: A request line must arrive completely within this long after the connection (or the previous
#: reply); a peer that dribbles bytes or says nothing is dropped.
READ_TIMEOUT_SECONDS = 5.0
#: A peer that does not read its reply within this long is dropped.
WRITE_TIMEOUT_SECONDS = 5.0
#: The longest the service may take over one request. ``test-alert`` waits for every channel, each
#: bounded by its own timeout (desktop 5 s, command hook 10 s by default), so this sits well above.
HANDLER_TIMEOUT_SECONDS = 60.0
#: Connections served at once. A new connection over the limit takes the slot of the one that has
#: waited longest without a request in progress (so clients that connect and idle cannot keep
#: ``status`` out); only when every slot is busy with a request is it answered "busy", so a flood
#: cannot pile up tasks.
MAX_CONNECTIONS = 16
#: sun_path holds 108 bytes on Linux including the terminating NUL.
_MAX_SOCKET_PATH_BYTES = 107

#: The service's side: an async function from a validated request to a result object. It may also
#: return a whole reply (a mapping with a boolean "ok") and may raise SiderodError for a refusal.
Handler = Callable[[Request], Awaitable[Mapping[str, Any]]]


class ServiceAlreadyRunning(SiderodError):
    """Another siderod service holds the single-instance lock."""


class UnsafeSocketPlace(SiderodError):
    """The socket directory is not private to this user, or the socket path cannot be used."""


class ControlServer:
    """Serve control requests on a private Unix socket, one instance per user.

    Use as ``async with ControlServer(socket_path, handler, lock_path) as server:``, or call
    :meth:`start` and :meth:`close` yourself.

    Args:
        socket_path: where to bind; its directory is created 0700 if missing.
        handler: async function turning a :class:`Request` into a result mapping
            (``Service.handle_request`` in the daemon).
        lock_path: the single-instance lock file, normally beside the socket.
        read_timeout_seconds, write_timeout_seconds, handler_timeout_seconds: per-connection limits.
        max_connections: connections served at once.
        allowed_uid: the one uid allowed to talk to us; our own by default.
    """

    def __init__(
        self,
        socket_path: str | os.PathLike[str],
        handler: Handler,
        lock_path: str | os.PathLike[str],
        *,
        read_timeout_seconds: float = READ_TIMEOUT_SECONDS,
        write_timeout_seconds: float = WRITE_TIMEOUT_SECONDS,
        handler_timeout_seconds: float = HANDLER_TIMEOUT_SECONDS,
        max_connections: int = MAX_CONNECTIONS,
        allowed_uid: int | None = None,
    ) -> None:
        self.socket_path = Path(socket_path)
        self.lock_path = Path(lock_path)
        self._handler = handler
        self._read_timeout = read_timeout_seconds
        self._write_timeout = write_timeout_seconds
        self._handler_timeout = handler_timeout_seconds
        self._max_connections = max_connections
        self._allowed_uid = os.getuid() if allowed_uid is None else allowed_uid
        self._lock_fd: int | None = None
        self._closing = False
        self._server: asyncio.AbstractServer | None = None
        self._socket_ino: tuple[int, int] | None = None
        self._connections: dict[asyncio.Task[Any], asyncio.StreamWriter] = {}
        # For each connection waiting for a request line: since when (monotonic); absent while busy.
        self._idle_since: dict[asyncio.Task[Any], float] = {}
        #: Counters for tests and the log: served, refused_peers, bad_requests, busy, timeouts.
        self.counts: dict[str, int] = dict.fromkeys(
            ("served", "refused_peers", "bad_requests", "busy", "timeouts", "handler_errors", "evicted"), 0
        )

    async def __aenter__(self) -> ControlServer:
        await self.start()
        return self

    async def __aexit__(self, *exc_info: object) -> None:
        await self.close()

    async def start(self) -> None:
        """Take the lock, then bind and listen.

        Raises:
            ServiceAlreadyRunning: another instance holds the lock (nothing was touched).
            UnsafeSocketPlace: the directory belongs to someone else, or the path is too long.
        """
        path_bytes = len(os.fsencode(self.socket_path))
        if path_bytes > _MAX_SOCKET_PATH_BYTES:
            raise UnsafeSocketPlace(
                f"control socket path {self.socket_path} is {path_bytes} bytes; Unix sockets allow "
                f"{_MAX_SOCKET_PATH_BYTES}. Set XDG_RUNTIME_DIR to a shorter directory"
            )
        _make_private_dir(self.socket_path.parent)
        if self.lock_path.parent != self.socket_path.parent:
            _make_private_dir(self.lock_path.parent)
        self._lock_fd = _take_lock(self.lock_path)
        try:
            sock = self._bind()
            self._server = await asyncio.start_unix_server(
                self._serve_connection, sock=sock, limit=MAX_REQUEST_BYTES
            )
        except BaseException:
            self._remove_socket_file()
            self._release_lock()
            raise
        _log.info("control socket listening on %s", self.socket_path)

    def _bind(self) -> socket.socket:
        # We hold the lock, so a socket file still here is left over from a crash: remove it.
        with contextlib.suppress(FileNotFoundError):
            self.socket_path.unlink()
        sock = socket.socket(socket.AF_UNIX, socket.SOCK_STREAM)
        # The umask is process-wide; it is narrowed only for the bind() call so the socket file is
        # born 0600 with no window in which another user could connect. chmod afterwards is belt
        # and braces (and the 0700 directory already shuts everyone else out).
        old_umask = os.umask(0o177)
        try:
            sock.bind(os.fspath(self.socket_path))
        except BaseException:
            sock.close()
            raise
        finally:
            os.umask(old_umask)
        os.chmod(self.socket_path, 0o600)
        st = os.stat(self.socket_path)
        self._socket_ino = (st.st_dev, st.st_ino)
        sock.setblocking(False)
        return sock

    async def close(self) -> None:
        """Stop listening, drop open connections, remove the socket file, release the lock."""
        self._closing = True
        if self._server is not None:
            self._server.close()
            # Abort each transport as well as cancelling its task: the abort ends any read at once,
            # even if the cancellation lands as an await completes and is lost (a wait_for race
            # in Python 3.11).
            for task, writer in list(self._connections.items()):
                writer.transport.abort()
                task.cancel()
            if self._connections:
                await asyncio.gather(*self._connections, return_exceptions=True)
            await self._server.wait_closed()
            self._server = None
        self._remove_socket_file()
        self._release_lock()

    def _remove_socket_file(self) -> None:
        # Only remove the file we bound: never a socket some other process made after us.
        if self._socket_ino is None:
            return
        with contextlib.suppress(OSError):
            st = os.stat(self.socket_path)
            if (st.st_dev, st.st_ino) == self._socket_ino:
                self.socket_path.unlink()
        self._socket_ino = None

    def _release_lock(self) -> None:
        # The lock file itself stays: unlinking it would let a waiting opener lock a dead inode
        # while a third process creates and locks a fresh file, and two services would run.
        if self._lock_fd is not None:
            os.close(self._lock_fd)
            self._lock_fd = None

    # -- one connection ----------------------------------------------------------------------------

    async def _serve_connection(self, reader: asyncio.StreamReader, writer: asyncio.StreamWriter) -> None:
        task = asyncio.current_task()
        assert task is not None
        self._connections[task] = writer
        try:
            await self._converse(reader, writer)
        except asyncio.CancelledError:
            if not self._closing:
                raise
            # Cancelled by close(): end normally, because on 3.11 asyncio's stream callback logs
            # a spurious "Exception in callback" for a connection task that ends cancelled.
        except (ConnectionError, OSError) as e:
            _log.debug("control connection ended early: %s", e)
        finally:
            self._connections.pop(task, None)
            self._idle_since.pop(task, None)
            writer.close()
            with contextlib.suppress(Exception):
                await writer.wait_closed()

    async def _converse(self, reader: asyncio.StreamReader, writer: asyncio.StreamWriter) -> None:
        sock = writer.get_extra_info("socket")
        uid = peer_uid(sock) if sock is not None else None
        if uid != self._allowed_uid:
            self.counts["refused_peers"] += 1
            _log.warning("control socket: refused a peer with uid %s (only uid %s may connect)",
                         uid, self._allowed_uid)
            await self._reply(writer, error_reply("refused: this siderod service belongs to another user"))
            return
        if len(self._connections) > self._max_connections and not self._evict_longest_idle():
            self.counts["busy"] += 1
            await self._reply(writer, error_reply("busy: too many control connections; try again"))
            return
        task = asyncio.current_task()
        assert task is not None
        served_here = 0
        while True:
            self._idle_since[task] = time.monotonic()
            line = await self._read_line(reader, writer, first=served_here == 0)
            self._idle_since.pop(task, None)
            if line is None:
                return
            try:
                request = parse_request(line)
            except BadRequest as e:
                self.counts["bad_requests"] += 1
                await self._reply(writer, error_reply(str(e)))
                continue
            except Exception as e:  # a parser bug must still get the peer an answer
                self.counts["bad_requests"] += 1
                _log.exception("control request could not be read")
                await self._reply(writer, error_reply(f"request could not be read: {type(e).__name__}"))
                continue
            await self._reply(writer, await self._dispatch(request))
            served_here += 1
            self.counts["served"] += 1

    def _evict_longest_idle(self) -> bool:
        """Close the connection that has waited longest for a request; False if none is idle."""
        me = asyncio.current_task()
        idle = [(since, task) for task, since in self._idle_since.items() if task is not me]
        if not idle:
            return False
        _, task = min(idle, key=lambda pair: pair[0])
        self._idle_since.pop(task, None)
        writer = self._connections.get(task)
        if writer is not None:
            writer.transport.abort()
        self.counts["evicted"] += 1
        return True

    async def _read_line(
        self, reader: asyncio.StreamReader, writer: asyncio.StreamWriter, *, first: bool
    ) -> bytes | None:
        """The next request line, or None when the conversation is over (replying first if useful)."""
        # asyncio.timeout rather than wait_for: on 3.11 wait_for can swallow a cancellation.
        try:
            async with asyncio.timeout(self._read_timeout):
                return await reader.readuntil(b"\n")
        except asyncio.IncompleteReadError as e:
            # EOF. A last request without its newline is still a request.
            return e.partial if e.partial.strip() else None
        except asyncio.LimitOverrunError:
            self.counts["bad_requests"] += 1
            # The rest of the line is unread, so there is no way back into step: reply and hang up.
            await self._reply(
                writer,
                error_reply(f"request too long: the limit is {MAX_REQUEST_BYTES} bytes per line"),
            )
            await self._discard_rest(reader, writer)
            return None
        except TimeoutError:
            self.counts["timeouts"] += 1
            # Peeking at the buffer is the only way to tell an idle kept-open connection (close
            # quietly) from a peer stalled in the middle of a line (tell it why).
            if first or reader._buffer:
                await self._reply(
                    writer,
                    error_reply(
                        f"no complete request line within {self._read_timeout:g} s; "
                        'send one JSON object ended by a newline, e.g. {"op": "status"}'
                    ),
                )
            return None

    async def _discard_rest(self, reader: asyncio.StreamReader, writer: asyncio.StreamWriter) -> None:
        """Read and drop what the peer is still sending, so closing does not reset its connection.

        Closing a Unix socket with unread data resets the peer, which then loses the error reply
        it has not read yet. So: say we are done writing, then swallow input until the peer hangs
        up, for at most the read timeout and a few request sizes.
        """
        with contextlib.suppress(OSError, RuntimeError):
            writer.write_eof()
        budget = 16 * MAX_REQUEST_BYTES
        with contextlib.suppress(TimeoutError, ConnectionError):
            async with asyncio.timeout(self._read_timeout):
                while budget > 0 and (chunk := await reader.read(65536)):
                    budget -= len(chunk)

    async def _dispatch(self, request: Request) -> dict[str, Any]:
        try:
            async with asyncio.timeout(self._handler_timeout):
                result = await self._handler(request)
        except SiderodError as e:
            return error_reply(str(e))
        except TimeoutError:
            self.counts["handler_errors"] += 1
            _log.error("control request %r took longer than %g s", request, self._handler_timeout)
            limit = self._handler_timeout
            return error_reply(f"the service did not finish {request.op!s} within {limit:g} s")
        except Exception:
            # A crash in the handler is a bug in the service, not the peer's fault: log it loudly
            # with the traceback, tell the peer, and keep the socket serving.
            self.counts["handler_errors"] += 1
            _log.exception("control request %r failed", request)
            return error_reply(
                f"the service failed while handling {request.op!s} -- this is a bug in siderod; "
                "please report it with the log"
            )
        if isinstance(result, Mapping) and isinstance(result.get("ok"), bool):
            return dict(result)
        return ok_reply(result)

    async def _reply(self, writer: asyncio.StreamWriter, reply: Mapping[str, Any]) -> None:
        writer.write(encode_reply(reply))
        try:
            async with asyncio.timeout(self._write_timeout):
                await writer.drain()
        except TimeoutError:
            self.counts["timeouts"] += 1
            raise ConnectionError("peer did not read its reply") from None


def peer_uid(sock: socket.socket) -> int | None:
    """The uid of the process at the other end of a connected Unix socket (Linux SO_PEERCRED).

    Returns None where SO_PEERCRED is not available, which the server treats as "refuse".
    """
    so_peercred = getattr(socket, "SO_PEERCRED", None)
    if so_peercred is None:
        return None
    try:
        creds = sock.getsockopt(socket.SOL_SOCKET, so_peercred, struct.calcsize("3i"))
    except OSError:
        return None
    _pid, uid, _gid = struct.unpack("3i", creds)
    return uid


def request_once(
    socket_path: str | os.PathLike[str], request: Request | Mapping[str, Any], timeout_seconds: float = 3.0
) -> dict[str, Any]:
    """Send one request to the service and return its result (blocking; for the CLI and the viewer).

    Args:
        socket_path: the service's control socket.
        request: a :class:`Request` or its JSON form, e.g. ``{"op": "status"}``.
        timeout_seconds: for the whole exchange, connect to reply.

    Returns:
        The reply's ``result`` object.

    Raises:
        BadRequest: the request itself is invalid (nothing was sent).
        ServiceNotRunning: nothing answers on the socket, or it did not answer in time.
        ControlError: the service answered with an error, or with something unreadable.
    """
    line = encode_request(request)
    path = os.fspath(socket_path)
    deadline = time.monotonic() + timeout_seconds
    sock = socket.socket(socket.AF_UNIX, socket.SOCK_STREAM)
    try:
        sock.settimeout(timeout_seconds)
        try:
            sock.connect(path)
        except (FileNotFoundError, ConnectionRefusedError):
            raise ServiceNotRunning(
                f"no siderod service is running (nothing answers on {path}); start it with "
                "`siderod run` or `systemctl --user start siderod`"
            ) from None
        except PermissionError:
            raise ServiceNotRunning(
                f"cannot reach the control socket {path}: permission denied; it belongs to another "
                "user, and only its owner may control that service"
            ) from None
        reply_line = _exchange(sock, line, deadline, path)
    except TimeoutError:
        raise ServiceNotRunning(
            f"the siderod service at {path} did not answer within {timeout_seconds:g} s; it may be "
            "stuck: see `journalctl --user -u siderod`"
        ) from None
    except OSError as e:
        raise ServiceNotRunning(f"lost the connection to the siderod service at {path}: {e}") from None
    finally:
        sock.close()
    try:
        reply = parse_reply(reply_line)
    except BadReply as e:
        raise ControlError(f"the service sent a reply siderod cannot read: {e}") from None
    if not reply["ok"]:
        raise ControlError(reply["error"])
    return reply["result"]


def _exchange(sock: socket.socket, line: bytes, deadline: float, path: str) -> bytes:
    sock.settimeout(max(0.001, deadline - time.monotonic()))
    with contextlib.suppress(BrokenPipeError, ConnectionResetError):
        # A service that refuses us replies and hangs up at once; its reply is still there to read.
        sock.sendall(line)
    chunks: list[bytes] = []
    size = 0
    while True:
        sock.settimeout(max(0.001, deadline - time.monotonic()))
        chunk = sock.recv(65536)
        if not chunk:
            break
        chunks.append(chunk)
        size += len(chunk)
        if b"\n" in chunk:
            break
        if size > MAX_REPLY_BYTES:
            raise ControlError(f"the service's reply is over {MAX_REPLY_BYTES} bytes; this is a bug")
    data = b"".join(chunks)
    if not data:
        raise ServiceNotRunning(f"the siderod service at {path} closed the connection without a reply")
    return data.split(b"\n", 1)[0]


def _make_private_dir(directory: Path) -> None:
    """Create ``directory`` 0700 (parents as needed), or check that an existing one is ours and private."""
    directory.mkdir(mode=0o700, parents=True, exist_ok=True)
    st = os.lstat(directory)
    if not stat.S_ISDIR(st.st_mode):
        raise UnsafeSocketPlace(
            f"{directory} is not a directory; remove it or point XDG_RUNTIME_DIR elsewhere"
        )
    if st.st_uid != os.getuid():
        raise UnsafeSocketPlace(
            f"{directory} belongs to uid {st.st_uid}, not to you (uid {os.getuid()}); the control "
            "socket must live in a directory only you own. Set XDG_RUNTIME_DIR to your own runtime directory"
        )
    if stat.S_IMODE(st.st_mode) != 0o700:
        os.chmod(directory, 0o700)


def _take_lock(lock_path: Path) -> int:
    fd = os.open(lock_path, os.O_RDWR | os.O_CREAT | os.O_CLOEXEC, 0o600)
    try:
        fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
    except OSError as e:
        holder = _read_pid(fd)
        os.close(fd)
        if e.errno in (errno.EWOULDBLOCK, errno.EAGAIN, errno.EACCES):
            who = f" (pid {holder})" if holder else ""
            raise ServiceAlreadyRunning(
                f"another siderod service is already running{who}; it holds {lock_path}. Use "
                "`siderod status` to talk to it, or stop it first"
            ) from None
        raise
    os.ftruncate(fd, 0)
    os.write(fd, f"{os.getpid()}\n".encode())
    return fd


def _read_pid(fd: int) -> str:
    with contextlib.suppress(OSError):
        return os.pread(fd, 32, 0).decode("ascii", "replace").strip()
    return ""
