"""Loopback receivers for push tests: an HTTP server and an SMTP server that record what arrives.

Both listen on 127.0.0.1 on a free port chosen by the kernel and are started and stopped by the
test that uses them. The HTTP receiver can be switched to answer 500 or to never answer, to
play a broken or hung push server; the SMTP receiver is aiosmtpd's own server.
"""

from __future__ import annotations

import json
import socket
import threading
import time
from dataclasses import dataclass, field
from http.server import BaseHTTPRequestHandler, ThreadingHTTPServer
from typing import Any

__all__ = ["HttpReceiver", "SmtpReceiver", "Received"]


@dataclass
class Received:
    """One request as the receiver saw it."""

    path: str
    headers: dict[str, str]
    body: bytes
    answered: int  # the status sent back (0: never answered)
    arrived_unix: float = 0.0  # real time it arrived (time.time())

    def json(self) -> Any:
        return json.loads(self.body.decode("utf-8"))

    def text(self) -> str:
        return self.body.decode("utf-8", "replace")


class _QuietServer(ThreadingHTTPServer):
    def handle_error(self, request: Any, client_address: Any) -> None:
        # A client killed mid-request (the kill -9 tests) resets its connection: not a failure here.
        import sys

        if not isinstance(sys.exc_info()[1], ConnectionError):
            super().handle_error(request, client_address)


@dataclass
class HttpReceiver:
    """A recording HTTP server on the loopback.

    ``mode`` is "ok" (answer 200), "error" (answer 500) or "hang" (read the request, then never
    answer until ``mode`` changes or the receiver stops). Only answered requests count as
    delivered in ``delivered()``; ``requests`` holds every one that arrived.
    """

    mode: str = "ok"
    requests: list[Received] = field(default_factory=list)
    _server: ThreadingHTTPServer | None = None
    _thread: threading.Thread | None = None
    _lock: threading.Lock = field(default_factory=threading.Lock)
    _changed: threading.Condition | None = None

    def start(self) -> HttpReceiver:
        receiver = self
        self._changed = threading.Condition(self._lock)

        class Handler(BaseHTTPRequestHandler):
            protocol_version = "HTTP/1.1"

            def do_POST(self) -> None:  # noqa: N802 -- http.server's naming
                length = int(self.headers.get("Content-Length") or 0)
                body = self.rfile.read(length)
                record = Received(self.path, dict(self.headers.items()), body, 0, time.time())
                status = receiver._answer_for(record)
                if status == 0:
                    self.close_connection = True
                    return
                payload = b'{"ok": true}' if status == 200 else b'{"error": "receiver told to fail"}'
                self.send_response(status)
                self.send_header("Content-Type", "application/json")
                self.send_header("Content-Length", str(len(payload)))
                self.end_headers()
                self.wfile.write(payload)

            def log_message(self, *args: Any) -> None:
                return None

        self._server = _QuietServer(("127.0.0.1", 0), Handler)
        self._server.daemon_threads = True
        self._thread = threading.Thread(target=self._server.serve_forever, args=(0.02,), name="http-receiver",
                                        daemon=True)
        self._thread.start()
        return self

    @property
    def port(self) -> int:
        assert self._server is not None
        return int(self._server.server_address[1])

    def set_mode(self, mode: str) -> None:
        assert mode in ("ok", "error", "hang")
        assert self._changed is not None
        with self._changed:
            self.mode = mode
            self._changed.notify_all()

    def delivered(self) -> list[Received]:
        """Requests answered with 200."""
        with self._lock:
            return [r for r in self.requests if r.answered == 200]

    def wait_for(self, count: int, timeout_seconds: float = 10.0) -> list[Received]:
        """Wait until ``count`` requests were answered with 200 (bounded; raises on timeout)."""
        deadline = time.monotonic() + timeout_seconds
        while time.monotonic() < deadline:
            got = self.delivered()
            if len(got) >= count:
                return got
            time.sleep(0.01)
        raise AssertionError(f"expected {count} delivered requests, got {len(self.delivered())}")

    def stop(self) -> None:
        if self._server is None:
            return
        assert self._changed is not None
        with self._changed:
            self.mode = "stopped"
            self._changed.notify_all()
        self._server.shutdown()
        self._server.server_close()
        self._server = None

    def __enter__(self) -> HttpReceiver:
        return self.start()

    def __exit__(self, *exc: object) -> None:
        self.stop()

    def _answer_for(self, record: Received) -> int:
        assert self._changed is not None
        with self._changed:
            self.requests.append(record)
            # A hung server: hold the request until told otherwise (or stopped); the client's own
            # timeout is what ends it from the other side.
            while self.mode == "hang":
                self._changed.wait(0.5)
            if self.mode == "stopped":
                return 0
            record.answered = 200 if self.mode == "ok" else 500
            return record.answered


class SmtpReceiver:
    """aiosmtpd's SMTP server on the loopback, keeping every message it accepts."""

    def __init__(self) -> None:
        self.messages: list[dict[str, Any]] = []
        self.logins: list[str] = []
        self.port = 0
        self._controller: Any = None

    def start(self) -> SmtpReceiver:
        from aiosmtpd.controller import Controller

        receiver = self

        class Handler:
            async def handle_DATA(self, server: Any, session: Any, envelope: Any) -> str:  # noqa: N802
                receiver.messages.append({
                    "from": envelope.mail_from,
                    "to": list(envelope.rcpt_tos),
                    "data": envelope.content.decode("utf-8", "replace"),
                })
                return "250 Message accepted for delivery"

        # aiosmtpd checks that its server is up by connecting to the port it was given, so it needs
        # a real port number: take a free one from the kernel first.
        with socket.socket() as probe:
            probe.bind(("127.0.0.1", 0))
            self.port = int(probe.getsockname()[1])
        def accept_login(server: Any, session: Any, envelope: Any, mechanism: str, auth_data: Any) -> Any:
            from aiosmtpd.smtp import AuthResult

            receiver.logins.append(getattr(auth_data, "login", b"").decode("utf-8", "replace"))
            return AuthResult(success=True)

        # Log-in over plain SMTP is allowed here only because it never leaves the loopback.
        self._controller = Controller(Handler(), hostname="127.0.0.1", port=self.port,
                                      authenticator=accept_login, auth_require_tls=False)
        self._controller.start()
        return self

    def stop(self) -> None:
        if self._controller is not None:
            self._controller.stop()
            self._controller = None

    def __enter__(self) -> SmtpReceiver:
        return self.start()

    def __exit__(self, *exc: object) -> None:
        self.stop()
