"""Push destinations: one channel per ``[[notify.push]]`` entry, sending through apprise.

apprise is synchronous (requests, smtplib), so each send runs in a worker thread and the event
loop waits for it at most the destination's timeout. A thread cannot be cancelled: a send that
outlives its timeout keeps running in the background (its sockets carry the same timeout, so it
normally ends soon after), and until it has ended the channel refuses to start another one. So a
hung server costs at most one thread per destination, however long it hangs, and never blocks
the loop or the other channels.

Nothing here prints a destination's URL: messages use ``PushDestination.masked_url`` (apprise's
privacy form), and anything that came from apprise is passed through ``pushurl.redact``.
"""

from __future__ import annotations

import asyncio
import logging
import threading
import time
from collections.abc import Sequence
from typing import Any

from siderod.common.model import PushDestination, Urgency
from siderod.files.pushurl import capture_apprise_log, check_url, instantiate, load_apprise, redact
from siderod.service.delivery import AlertMessage, ChannelFailed

__all__ = ["PushChannel", "build_push_channels", "CHANNEL_PREFIX"]

log = logging.getLogger("siderod.push")

#: A push channel's name is this plus the destination's name ("push:phone").
CHANNEL_PREFIX = "push:"


class PushChannel:
    """Send alerts to one apprise URL, bounded in time, one send at a time.

    Args:
        destination: the checked ``[[notify.push]]`` entry (URL, filters, timeout).

    Attributes:
        name: ``"push:<destination name>"``, the channel's name in the ledger and in ``status``.
    """

    def __init__(self, destination: PushDestination) -> None:
        self.destination = destination
        self.name = CHANNEL_PREFIX + destination.name
        checked = check_url(destination.url)
        self._secrets = checked.secrets
        self._masked = checked.masked  # the same as destination.masked_url from a checked load
        self._plugin: Any = None
        self._worker_done = threading.Event()
        self._worker_done.set()
        self._worker_started_mono = 0.0
        # Keys whose send timed out here but then succeeded in its thread: the alert did arrive,
        # so the retry that the service makes for it must not send it a second time.
        self._arrived_late: set[str] = set()
        self._abandoned_key: str | None = None

    def accepts(self, message: AlertMessage) -> bool:
        """Whether this destination takes ``message``: its urgency and, if set, its kinds.

        A message that is not a planned alert (``kind`` empty: a missed-alert summary, a
        configuration problem) goes only to destinations that take every kind.
        """
        if message.urgency.rank < self.destination.min_urgency.rank:
            return False
        kinds = self.destination.kinds
        if kinds is None:
            return True
        return any(k.value == message.kind for k in kinds)

    @property
    def busy(self) -> bool:
        """True while an earlier send is still running in its worker thread."""
        return not self._worker_done.is_set()

    async def send(self, message: AlertMessage) -> None:
        """Send through apprise in a worker thread; return when it succeeded.

        Raises:
            ChannelFailed: apprise reported a failure (its reason, secrets removed), the send did
                not finish within the timeout, or an earlier send has still not finished.
        """
        timeout_seconds = self.destination.timeout_seconds
        masked = self._masked
        if message.key in self._arrived_late:
            self._arrived_late.discard(message.key)
            log.info("%s: %s arrived after its send had timed out; not sending it again",
                     self.name, message.key)
            return
        if self.busy:
            waited = time.monotonic() - self._worker_started_mono
            raise ChannelFailed(
                f"{masked}: the previous send has not finished after {waited:.0f} s (server hung?);"
                " not starting another until it does"
            )
        loop = asyncio.get_running_loop()
        done: asyncio.Future[tuple[bool, list[str]]] = loop.create_future()
        # A daemon thread per send, never a pool: a pool's threads are joined at interpreter exit,
        # so one stuck in a hung server's socket would hold up the service's stop.
        worker = threading.Thread(
            target=self._run_in_thread, args=(message, loop, done), name=self.name, daemon=True
        )
        self._worker_done.clear()
        self._abandoned_key = None
        self._worker_started_mono = time.monotonic()
        worker.start()
        try:
            ok, lines = await asyncio.wait_for(asyncio.shield(done), timeout_seconds)
        except TimeoutError:
            self._abandoned_key = message.key  # _finish notes it if the send succeeds after all
            raise ChannelFailed(
                f"{masked} did not answer within {timeout_seconds:g} s (server down or hung?)"
            ) from None
        if not ok:
            reason = "; ".join(dict.fromkeys(line.strip() for line in lines if line.strip()))
            raise ChannelFailed(redact(f"{masked}: {reason or 'apprise reported a failure'}", self._secrets))

    async def close(self) -> None:
        # A worker still running is a daemon thread stuck in a socket call with a timeout; it
        # cannot be interrupted and does not hold up the process's exit.
        return None

    # -- in the worker thread -----------------------------------------------------------------
    def _run_in_thread(
        self,
        message: AlertMessage,
        loop: asyncio.AbstractEventLoop,
        done: asyncio.Future[tuple[bool, list[str]]],
    ) -> None:
        with capture_apprise_log() as captured:
            try:
                ok = self._notify(message)
            except Exception as exc:  # a plugin bug must come back as a failure, not vanish
                ok = False
                captured.lines.append(f"{type(exc).__name__}: {exc}")
        result = (bool(ok), list(captured.lines))
        try:
            loop.call_soon_threadsafe(self._finish, done, result)
        except RuntimeError:  # the loop has closed (the service stopped while this send hung)
            self._worker_done.set()

    def _finish(self, done: asyncio.Future[tuple[bool, list[str]]], result: tuple[bool, list[str]]) -> None:
        # On the loop: the result (and a late success) is known before the channel counts as
        # free again, so a retry can never start between the two.
        if not done.done():
            done.set_result(result)
        if self._abandoned_key is not None and result[0]:
            self._arrived_late.add(self._abandoned_key)
        self._abandoned_key = None
        self._worker_done.set()

    def _notify(self, message: AlertMessage) -> bool:
        apprise = load_apprise()
        if self._plugin is None:
            plugin = instantiate(self.destination.url)
            if plugin is None:
                raise ValueError("apprise cannot use this URL any more")
            # Bound every socket call too, so that a hung server also releases this thread soon
            # after the loop has given up waiting for it. A little longer than the loop's own
            # timeout, so that the loop's "did not answer" is what status shows for a hung server.
            socket_timeout = self.destination.timeout_seconds + _SOCKET_GRACE_SECONDS
            plugin.socket_connect_timeout = socket_timeout
            plugin.socket_read_timeout = socket_timeout
            # apprise spaces sends to one service (5.5 s for ntfy) by sleeping inside notify().
            # Sends here are already one at a time and alerts are minutes apart; a sleep would
            # only eat into the timeout and turn a burst of due alerts into timeouts.
            plugin.request_rate_per_sec = 0
            self._plugin = plugin
        kind = apprise.NotifyType.WARNING if message.urgency is Urgency.CRITICAL else apprise.NotifyType.INFO
        return bool(self._plugin.notify(body=message.body or message.title, title=message.title,
                                        notify_type=kind))


def build_push_channels(destinations: Sequence[PushDestination]) -> list[PushChannel]:
    """One channel per destination, in configuration order."""
    return [PushChannel(d) for d in destinations]


# How much longer apprise's socket timeouts are than the destination's timeout (see _notify).
_SOCKET_GRACE_SECONDS = 2.0
