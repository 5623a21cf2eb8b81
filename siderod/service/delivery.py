"""Where alerts go: the desktop (D-Bus notifications), the log, and an optional command hook.

A channel's ``send`` either returns (the alert was accepted) or raises ``ChannelFailed``; it
never hangs, because every outside call is bounded by a timeout. Each channel runs on its own
``ChannelWorker`` (one asyncio task, one queue of what that channel owes, in due order), so a slow
or hung channel delays only itself. The worker marks a message late at the moment it sends it,
retries a failed channel every ``retry_seconds`` and gives an alert up once past its grace; every
outcome goes to a ``DeliverySink`` (the service, which writes it to the ledger). Health
bookkeeping lives in ``ChannelHealthBook`` so that a failed channel shows in ``siderod status``.
"""

from __future__ import annotations

import asyncio
import heapq
import itertools
import logging
import os
import signal
import string
from collections.abc import Callable, Collection, Mapping, Sequence
from dataclasses import dataclass, field, replace
from datetime import datetime, timedelta
from typing import Any, Protocol
from zoneinfo import ZoneInfo

from siderod.common.model import COMMAND_PLACEHOLDERS, ChannelHealth, Config, PlannedAlert, Urgency

__all__ = [
    "ACKNOWLEDGE_BUTTON",
    "CRITICAL_SOUND_NAME",
    "channel_accepts",
    "Channel",
    "ChannelFailed",
    "AlertMessage",
    "message_for_alert",
    "DesktopChannel",
    "LogChannel",
    "CommandChannel",
    "ChannelHealthBook",
    "ChannelWorker",
    "DeliverySink",
    "OwedDelivery",
    "mark_late",
    "build_channels",
    "COMMAND_PLACEHOLDERS",
]

log = logging.getLogger("siderod.delivery")

#: The label of the button on a critical desktop notification that acknowledges it.
ACKNOWLEDGE_BUTTON = "Acknowledge"
#: The freedesktop sound-theme name played with a critical desktop notification (an alarm that
#: has gone off; desktops without that sound fall back to their own).
CRITICAL_SOUND_NAME = "alarm-clock-elapsed"
alert_log = logging.getLogger("siderod.alert")


class ChannelFailed(Exception):
    """A channel could not deliver; the message says why and what to check."""


@dataclass(frozen=True, slots=True)
class AlertMessage:
    """What a channel shows: one alert, or a service message (missed summary, config error, test)."""

    key: str
    title: str
    body: str
    urgency: Urgency
    late_seconds: float = 0.0
    target: str = ""
    kind: str = ""
    event_utc: datetime | None = None
    due_utc: datetime | None = None
    lead_minutes: float | None = None
    # When an earlier try of this alert on this channel began (this run or one before a restart),
    # or None for a first try: a hook that may have run already can tell, and stay idempotent.
    previous_try_utc: datetime | None = None


def message_for_alert(alert: PlannedAlert, late_seconds: float, *, late_mark_seconds: float) -> AlertMessage:
    """The message for a planned alert; a late one says so in its title and body."""
    message = AlertMessage(
        key=alert.key,
        title=alert.title,
        body=alert.body,
        urgency=alert.urgency,
        target=alert.event.target or "",
        kind=alert.event.kind.value,
        event_utc=alert.event.time_utc,
        due_utc=alert.due_utc,
        lead_minutes=alert.lead_minutes,
    )
    return mark_late(message, late_seconds, late_mark_seconds=late_mark_seconds)


def mark_late(message: AlertMessage, late_seconds: float, *, late_mark_seconds: float) -> AlertMessage:
    """``message`` (unmarked) as sent ``late_seconds`` after due: past the mark its title and body say so."""
    title, body = message.title, message.body
    if late_seconds > late_mark_seconds:
        late_text = _format_late(late_seconds)
        title = f"[late {late_text}] {title}"
        body = (
            f"Delivered {late_text} after it was due "
            f"(the service was stopped, the computer slept, a channel failed, or the clock moved).\n{body}"
        )
    return replace(message, title=title, body=body, late_seconds=late_seconds)


class Channel(Protocol):
    """One way of telling the user. See DEVELOPERS.md, "Channels", for the full contract.

    ``name`` is the channel's identity in the ledger (its debts are keyed by it) and in status;
    keep it stable across restarts and unique in a service. ``send`` is called by the channel's
    own worker only, one message at a time; it may be called again with the same ``key`` (a retry,
    or a resend after a restart inside the crash window), so a channel that can should make a
    repeat replace rather than duplicate (the desktop channel replaces by notification id).
    """

    name: str

    async def send(self, message: AlertMessage) -> None:
        """Deliver or raise ChannelFailed. Must return within a bounded time."""

    async def close(self) -> None:
        """Release connections and processes."""


class LogChannel:
    """Every alert as one log line (journald keeps it). Always on, never fails."""

    name = "log"

    async def send(self, message: AlertMessage) -> None:
        level = logging.WARNING if message.urgency is Urgency.CRITICAL else logging.INFO
        body = message.body.replace("\n", " | ")
        alert_log.log(level, "ALERT %s: %s -- %s", message.key, message.title, body)

    async def close(self) -> None:
        return None


class DesktopChannel:
    """Desktop notifications through desktop-notifier (D-Bus on Linux).

    desktop-notifier swallows every error (it logs a warning and returns), and its only success
    signal is ``on_dispatched``; an already-connected notifier can wait forever on a hung
    notification server. So each send is bounded by ``send_timeout_seconds``, success means
    ``on_dispatched`` fired, and after any failure the notifier is closed and rebuilt.

    A send that times out may still reach the screen: the server got the call and will show it
    once it runs again. So a timed-out send is not abandoned: it goes on in the background on the
    same connection, and the channel notes which server (its unique bus name) timed out on which
    alert key. A retry of that key first looks: if the earlier send has since been answered, the
    alert was shown and the retry succeeds without sending again; if the same server now answers
    a check, it has worked through its queue (the earlier call included), so likewise; if it
    still does not answer, the retry fails without queueing another copy; if another server has
    taken its place and the earlier send never got an answer, the copy went with the old server
    and the alert is sent anew. The user sees one notification per alert.

    A critical alert (one with an event kind) carries an Acknowledge button when
    ``on_acknowledge`` is given, and plays a sound unless ``critical_sound`` is False. The button
    works as long as this notifier stays connected: its press comes back as a D-Bus signal.

    Args:
        app_name: the application name the notification server shows.
        send_timeout_seconds: the longest one send may take.
        critical_sound: play :data:`CRITICAL_SOUND_NAME` with a critical alert.
        on_acknowledge: called with the alert's key when its Acknowledge button is pressed.
    """

    name = "desktop"

    def __init__(self, *, app_name: str = "siderod", send_timeout_seconds: float = 5.0,
                 critical_sound: bool = True, on_acknowledge: Callable[[str], Any] | None = None) -> None:
        self._app_name = app_name
        self._send_timeout_seconds = send_timeout_seconds
        self._critical_sound = critical_sound
        self.on_acknowledge = on_acknowledge  # the service sets it when it was built without one
        self._notifier: Any = None
        # Notifiers set aside while a send of theirs is still under way (closed with the channel).
        self._retired: list[Any] = []
        self._probe_bus: Any = None
        # alert key -> (unique bus name of the server that timed out on it, the send still under way,
        # its dispatched flag): the server may show it later
        self._unconfirmed: dict[str, tuple[str | None, asyncio.Future[Any], asyncio.Event]] = {}

    async def send(self, message: AlertMessage) -> None:
        owner = await self._server_owner()
        earlier = self._unconfirmed.pop(message.key, None)
        if earlier is not None:
            earlier_owner, pending, dispatched = earlier
            if pending.done() and dispatched.is_set():
                log.info("the notification server answered the earlier send of %s after all; not sent again",
                         message.key)
                return
        if earlier is not None and not pending.done() and owner is not None and owner == earlier_owner:
            if await self._server_answers(owner):
                log.info("the notification server came back and showed %s from before; not sent again",
                         message.key)
                return
            self._unconfirmed[message.key] = earlier
            raise ChannelFailed(
                f"the notification server did not answer within {self._send_timeout_seconds:g} s, and still"
                " does not (is it hung?); this alert waits in its queue, so it is not sent again"
            )
        if earlier is not None:
            # Its server is gone, or refused it: so is the copy it was sending. Start afresh.
            earlier[1].cancel()
            await self._drop_notifier()
        backend = getattr(self._notifier, "_backend", None)
        if backend is not None and getattr(backend, "interface", 1) is None \
                and getattr(backend, "bus", None) is not None:
            # Its connection is still being set up by a send that timed out (or that set-up failed):
            # desktop-notifier would set up a second one over it and leak the first. Set it aside;
            # a send still under way on it keeps it until the channel closes.
            if any(not p.done() for _, p, _ in self._unconfirmed.values()):
                self._retired.append(self._notifier)
                self._notifier = None
            else:
                await self._drop_notifier()
        try:
            await self._send_now(message)
        except _TimedOut as exc:
            pending, dispatched = exc.args[1], exc.args[2]
            self._unconfirmed[message.key] = (owner, pending, dispatched)
            raise ChannelFailed(str(exc.args[0])) from None

    async def _send_now(self, message: AlertMessage) -> None:
        from desktop_notifier import Button, DesktopNotifier, Sound
        from desktop_notifier import Urgency as NotifierUrgency

        if self._notifier is None:
            self._notifier = DesktopNotifier(app_name=self._app_name, app_icon=None)
        urgency = {
            Urgency.LOW: NotifierUrgency.Low,
            Urgency.NORMAL: NotifierUrgency.Normal,
            Urgency.CRITICAL: NotifierUrgency.Critical,
        }[message.urgency]
        extras: dict[str, Any] = {}
        if message.urgency is Urgency.CRITICAL and message.kind:
            if self.on_acknowledge is not None:
                on_acknowledge, key = self.on_acknowledge, message.key
                extras["buttons"] = (Button(ACKNOWLEDGE_BUTTON, on_pressed=lambda: on_acknowledge(key)),)
            if self._critical_sound:
                extras["sound"] = Sound(name=CRITICAL_SOUND_NAME)
        dispatched = asyncio.Event()
        captured = _CapturedWarnings()
        # desktop-notifier logs each failure with a full traceback; keep it for our one-line
        # error (ChannelFailed, shown in status) instead of letting it flood the journal.
        backend_log = logging.getLogger("desktop_notifier")
        backend_log.addHandler(captured)
        backend_log.propagate = False
        sending = asyncio.ensure_future(self._notifier.send(
            message.title, message.body, urgency=urgency, on_dispatched=dispatched.set, **extras
        ))
        try:
            # shield: on a timeout the call goes on, so a late answer still tells us it was shown
            await asyncio.wait_for(asyncio.shield(sending), self._send_timeout_seconds)
        except TimeoutError:
            sending.add_done_callback(_ignore_result)
            raise _TimedOut(
                f"the notification server did not answer within {self._send_timeout_seconds:g} s"
                " (is it hung? the alert went to the other channels)", sending, dispatched
            ) from None
        except Exception as exc:  # desktop-notifier normally swallows these; be safe if not
            await self._drop_notifier()
            raise ChannelFailed(f"desktop notification failed: {exc!r}") from exc
        finally:
            backend_log.removeHandler(captured)
            backend_log.propagate = True
        if not dispatched.is_set():
            await self._drop_notifier()
            reason = captured.text() or "no reason given"
            raise ChannelFailed(
                f"desktop notification not accepted: {reason} (check DBUS_SESSION_BUS_ADDRESS and that a"
                " notification server runs)"
            )

    async def close(self) -> None:
        for _, pending, _ in self._unconfirmed.values():
            pending.cancel()
        self._unconfirmed.clear()
        await self._drop_notifier()
        retired, self._retired = self._retired, []
        for notifier in retired:
            await _close_bus(getattr(getattr(notifier, "_backend", None), "bus", None))
        bus, self._probe_bus = self._probe_bus, None
        await _close_bus(bus)

    async def _probe(self, destination: str, path: str, interface: str, member: str,
                     body: Sequence[Any] = (), signature: str = "") -> Any:
        """One bounded D-Bus call on a connection of our own (None on any failure)."""
        from dbus_fast import Message, MessageType
        from dbus_fast.aio import MessageBus

        try:
            if self._probe_bus is None or not self._probe_bus.connected:
                self._probe_bus = await asyncio.wait_for(MessageBus().connect(), _PROBE_TIMEOUT_SECONDS)
            reply = await asyncio.wait_for(
                self._probe_bus.call(Message(destination=destination, path=path, interface=interface,
                                             member=member, signature=signature, body=list(body))),
                _PROBE_TIMEOUT_SECONDS,
            )
        except Exception:  # no bus, a hung server, a broken connection: we only learn "no answer"
            bus, self._probe_bus = self._probe_bus, None
            await _close_bus(bus)
            return None
        if reply is None or reply.message_type != MessageType.METHOD_RETURN:
            return None
        return reply.body

    async def _server_owner(self) -> str | None:
        """The unique bus name of the process that owns the notification service now (the bus answers)."""
        body = await self._probe("org.freedesktop.DBus", "/org/freedesktop/DBus", "org.freedesktop.DBus",
                                 "GetNameOwner", ["org.freedesktop.Notifications"], "s")
        return str(body[0]) if body else None

    async def _server_answers(self, owner: str) -> bool:
        """Does this server process answer now? It handles calls in order, so an answer means it
        has handled every call queued before it, the timed-out Notify included."""
        body = await self._probe(owner, "/org/freedesktop/Notifications", "org.freedesktop.Notifications",
                                 "GetServerInformation")
        return body is not None

    async def _drop_notifier(self) -> None:
        notifier, self._notifier = self._notifier, None
        bus = getattr(getattr(notifier, "_backend", None), "bus", None)
        if bus is not None:
            try:
                bus.disconnect()
                await asyncio.wait_for(bus.wait_for_disconnect(), 1.0)
            except Exception:  # a broken bus may fail to close; it is being thrown away anyway
                log.debug("closing the old D-Bus connection failed", exc_info=True)


class _TimedOut(Exception):
    """A desktop send timed out (the server may still show it): (message, the send, dispatched)."""


async def _close_bus(bus: Any) -> None:
    if bus is None:
        return
    try:
        bus.disconnect()
        await asyncio.wait_for(bus.wait_for_disconnect(), _PROBE_TIMEOUT_SECONDS)
    except Exception:  # a broken bus may fail to close; it is being thrown away anyway
        log.debug("closing a D-Bus connection failed", exc_info=True)


def _ignore_result(future: asyncio.Future[Any]) -> None:
    if not future.cancelled():
        future.exception()  # retrieved, so asyncio does not log "exception never retrieved"


# How long the desktop channel waits for the bus or the server to answer a check.
_PROBE_TIMEOUT_SECONDS = 1.0


# Placeholders the command hook may use in its argv, e.g. ["notify-phone", "{title}", "{body}"].


class CommandChannel:
    """Run a user command for every alert: argv with ``{placeholders}``, no shell, a timeout.

    The command's output (stdout and stderr, first ``_OUTPUT_LIMIT_BYTES``) is logged. A
    non-zero exit, a timeout or a missing program is a failure.
    """

    name = "command"

    def __init__(self, argv: Sequence[str], *, timeout_seconds: float = 10.0, timezone: str = "UTC") -> None:
        if not argv:
            raise ValueError("CommandChannel needs a non-empty argv")
        self._argv = tuple(argv)
        self._timeout_seconds = timeout_seconds
        self._zone = ZoneInfo(timezone)

    def argv_for(self, message: AlertMessage) -> list[str]:
        """The argv with placeholders filled in (each element stays one argument)."""
        values = {
            "key": message.key,
            "title": message.title,
            "body": message.body,
            "urgency": message.urgency.value,
            "target": message.target,
            "kind": message.kind,
            "time_utc": _iso(message.event_utc),
            "time_local": _local_iso(message.event_utc, self._zone),
            "due_utc": _iso(message.due_utc),
            "lead_minutes": "" if message.lead_minutes is None else f"{message.lead_minutes:g}",
            "late_seconds": f"{message.late_seconds:.0f}",
        }
        out = []
        for part in self._argv:
            try:
                out.append(string.Formatter().vformat(part, (), values))
            except (KeyError, IndexError, ValueError) as exc:
                raise ChannelFailed(
                    f"command argument {part!r} has a bad placeholder ({exc}); use one of "
                    + ", ".join("{" + p + "}" for p in COMMAND_PLACEHOLDERS)
                    + " (double braces {{ }} for a literal brace)"
                ) from None
        return out

    def env_for(self, message: AlertMessage) -> dict[str, str]:
        """The hook's environment: ours, plus the alert key and when an earlier try began.

        ``SIDEROD_ALERT_KEY`` is the alert's stable key; ``SIDEROD_PREVIOUS_TRY_UTC`` is empty on a
        first try and otherwise the ISO time an earlier run of the hook for this alert began (it
        may have finished, or been cut off by a stop or a crash of the service), so a hook that
        must not act twice can check its own records for that key.
        """
        return dict(os.environ, SIDEROD_ALERT_KEY=message.key,
                    SIDEROD_PREVIOUS_TRY_UTC=_iso(message.previous_try_utc))

    async def send(self, message: AlertMessage) -> None:
        argv = self.argv_for(message)
        try:
            process = await asyncio.create_subprocess_exec(
                *argv,
                stdin=asyncio.subprocess.DEVNULL,
                stdout=asyncio.subprocess.PIPE,
                stderr=asyncio.subprocess.STDOUT,
                start_new_session=True,  # so a timeout can kill the command and its children
                env=self.env_for(message),
            )
        except OSError as exc:
            raise ChannelFailed(f"cannot run {argv[0]!r}: {exc.strerror or exc}") from None
        try:
            output, _ = await asyncio.wait_for(process.communicate(), self._timeout_seconds)
        except TimeoutError:
            _kill_group(process)
            await process.wait()
            raise ChannelFailed(
                f"{argv[0]!r} did not finish within {self._timeout_seconds:g} s; it was killed"
            ) from None
        text = output[:_OUTPUT_LIMIT_BYTES].decode("utf-8", "replace").strip()
        if text:
            log.info("command hook %s said: %s", argv[0], text.replace("\n", " | "))
        if process.returncode != 0:
            raise ChannelFailed(f"{argv[0]!r} exited with status {process.returncode}")

    async def close(self) -> None:
        return None


class ChannelHealthBook:
    """The health of each channel, as ``ChannelHealth`` records for the snapshot."""

    def __init__(self) -> None:
        self._health: dict[str, ChannelHealth] = {}

    def ok(self, name: str, when_utc: datetime) -> None:
        self._health[name] = ChannelHealth(name=name, healthy=True, last_ok_utc=when_utc)

    def failed(self, name: str, error: str) -> bool:
        """Record a failure; return True if the channel was healthy until now (log it once)."""
        previous = self._health.get(name)
        was_healthy = previous is None or previous.healthy
        self._health[name] = ChannelHealth(
            name=name, healthy=False, last_error=error, last_ok_utc=previous.last_ok_utc if previous else None
        )
        return was_healthy

    def last_error(self, name: str) -> str:
        h = self._health.get(name)
        return "" if h is None else h.last_error

    def is_healthy(self, name: str) -> bool:
        h = self._health.get(name)
        return h is None or h.healthy

    def snapshot(self, names: Sequence[str]) -> tuple[ChannelHealth, ...]:
        return tuple(self._health.get(n, ChannelHealth(name=n, healthy=True)) for n in names)


# -- one worker per channel ------------------------------------------------------------------


@dataclass(frozen=True, slots=True)
class OwedDelivery:
    """One message a channel owes.

    ``message`` is unmarked; the worker marks it late when it sends it. An alert (``ledger`` True)
    has a due time and a give-up time and is retried until it is delivered or past ``give_up_utc``;
    a service message (missed summary, configuration error) is tried once and not in the ledger.
    ``started_utc`` is when a previous run began sending it on this channel (None: never).
    """

    message: AlertMessage
    due_utc: datetime
    give_up_utc: datetime | None = None
    ledger: bool = True
    started_utc: datetime | None = None
    tried: asyncio.Future[bool] | None = field(default=None, compare=False)  # set after the first try


class DeliverySink(Protocol):
    """Where a worker reports (the service, which writes to the ledger). Must not raise."""

    def started(self, channel: str, item: OwedDelivery, now_utc: datetime) -> None:
        """A try begins (written before the channel is called)."""

    def delivered(self, channel: str, item: OwedDelivery, sent: AlertMessage, now_utc: datetime) -> None:
        """The channel accepted ``sent`` (the late-marked message)."""

    def failed(
        self, channel: str, item: OwedDelivery, sent: AlertMessage, now_utc: datetime, error: str
    ) -> None:
        """The channel refused or timed out; the worker retries later."""

    def gave_up(self, channel: str, item: OwedDelivery, now_utc: datetime) -> None:
        """Past grace and still not delivered on this channel: a miss to record and report."""


class ChannelWorker:
    """The one task that sends on one channel: a queue in due order, retries, give-ups.

    Args:
        channel: the channel.
        clock: the service's clock.
        sink: gets every outcome.
        late_mark_seconds: a message sent later than this after due carries the late mark.
        retry_seconds: how long a failed channel waits before trying its first owed message again.
    """

    def __init__(self, channel: Channel, clock: Any, sink: DeliverySink, *, late_mark_seconds: float,
                 retry_seconds: float) -> None:
        self.channel = channel
        self._clock = clock
        self._sink = sink
        self._late_mark_seconds = late_mark_seconds
        self._retry_seconds = retry_seconds
        self._heap: list[tuple[float, int, OwedDelivery]] = []
        self._order = itertools.count()
        self._keys: set[str] = set()
        self._changed = asyncio.Event()
        self._idle = asyncio.Event()
        self._idle.set()
        self._stopping = False
        self._in_flight: OwedDelivery | None = None
        self._tried_utc: dict[str, datetime] = {}  # alert key -> when this run last began a try

    @property
    def name(self) -> str:
        return self.channel.name

    @property
    def owed_count(self) -> int:
        """Alerts (not service messages) this channel still owes."""
        return sum(1 for _, _, item in self._heap if item.ledger)

    def put(self, item: OwedDelivery) -> None:
        """Queue one message (a key already queued is ignored)."""
        if item.ledger:
            if item.message.key in self._keys:
                return
            self._keys.add(item.message.key)
        heapq.heappush(self._heap, (item.due_utc.timestamp(), next(self._order), item))
        self._changed.set()

    def queued_keys(self) -> frozenset[str]:
        """The keys of the alerts queued on this channel (not service messages)."""
        return frozenset(self._keys)

    def drop(self, keys: Collection[str]) -> int:
        """Forget queued alerts with these keys (not one being sent); return how many were queued.

        For debts the service cancels on purpose: the repeats of an alert just acknowledged.
        """
        in_flight = self._in_flight
        keep = [entry for entry in self._heap
                if entry[2] is in_flight or not (entry[2].ledger and entry[2].message.key in keys)]
        dropped = len(self._heap) - len(keep)
        if dropped:
            self._heap = keep
            heapq.heapify(self._heap)
            self._keys.difference_update(keys)
            self._changed.set()
        return dropped

    async def run(self) -> None:
        """Send until cancelled. Never raises for a channel's failure."""
        while True:
            if self._stopping or not self._heap:
                self._changed.clear()
                await self._changed.wait()
                continue
            now_utc = self._clock.now_utc()
            expired_items = [e[2] for e in self._heap
                             if e[2].give_up_utc is not None and now_utc > e[2].give_up_utc]
            for expired in expired_items:
                self._pop(expired)
                self._sink.gave_up(self.name, expired, now_utc)
            if not self._heap:
                continue
            item = self._heap[0][2]
            if await self._try(item):
                continue
            if not item.ledger:
                continue  # a service message is tried once (and already popped)
            await self._wait(self._retry_seconds)

    async def stop(self, timeout_seconds: float) -> bool:
        """Start no new send; wait up to ``timeout_seconds`` for the one in flight. True if idle."""
        self._stopping = True
        self._changed.set()
        try:
            await asyncio.wait_for(self._idle.wait(), timeout_seconds)
        except TimeoutError:
            return False
        return True

    async def _try(self, item: OwedDelivery) -> bool:
        now_utc = self._clock.now_utc()
        late_seconds = max(0.0, (now_utc - item.due_utc).total_seconds()) if item.ledger else 0.0
        sent = mark_late(item.message, late_seconds, late_mark_seconds=self._late_mark_seconds)
        if item.ledger:
            previous = self._tried_utc.get(item.message.key, item.started_utc)
            sent = replace(sent, previous_try_utc=previous)
            self._tried_utc[item.message.key] = now_utc
            self._sink.started(self.name, item, now_utc)
        self._idle.clear()
        error: str | None = None
        self._in_flight = item
        try:
            await self.channel.send(sent)
        except ChannelFailed as exc:
            error = str(exc)
        except Exception as exc:  # a bug in one channel must not stop it for good or the others
            log.exception("channel %s failed unexpectedly", self.name)
            error = f"unexpected {type(exc).__name__}: {exc}"
        else:
            self._pop(item)
            self._sink.delivered(self.name, item, sent, self._clock.now_utc())
            return True
        finally:
            self._in_flight = None
            self._idle.set()
            if item.tried is not None and not item.tried.done():
                item.tried.set_result(error is None)
        if not item.ledger:
            self._pop(item)
        self._sink.failed(self.name, item, sent, self._clock.now_utc(), error)
        return False

    def _pop(self, item: OwedDelivery | None = None) -> None:
        if item is None or (self._heap and self._heap[0][2] is item):
            _, _, popped = heapq.heappop(self._heap)
        else:  # re-queued ahead of it meanwhile: remove it where it is
            index = next(i for i, entry in enumerate(self._heap) if entry[2] is item)
            popped = self._heap.pop(index)[2]
            heapq.heapify(self._heap)
        if popped.ledger:
            self._keys.discard(popped.message.key)
            self._tried_utc.pop(popped.message.key, None)

    async def _wait(self, seconds: float) -> None:
        """Sleep ``seconds`` (clock time); a stop request cuts it short."""
        sleeper = asyncio.ensure_future(self._clock.sleep(seconds))
        try:
            while not sleeper.done() and not self._stopping:
                self._changed.clear()
                changed = asyncio.ensure_future(self._changed.wait())
                await asyncio.wait({sleeper, changed}, return_when=asyncio.FIRST_COMPLETED)
                changed.cancel()
        finally:
            if not sleeper.done():
                sleeper.cancel()
            await asyncio.gather(sleeper, return_exceptions=True)


def build_channels(config: Config, env: Mapping[str, str] | None = None, *,
                   on_acknowledge: Callable[[str], Any] | None = None) -> list[Channel]:
    """The channels ``[notify]`` asks for; the log channel is always first, push destinations last.

    Args:
        config: the configuration in use.
        env: unused (kept for callers that pass it).
        on_acknowledge: what the desktop's Acknowledge button calls, with the alert's key.
    """
    channels: list[Channel] = [LogChannel()]
    if config.notify.desktop:
        channels.append(DesktopChannel(send_timeout_seconds=config.notify.send_timeout_seconds,
                                       critical_sound=config.notify.critical_sound,
                                       on_acknowledge=on_acknowledge))
    if config.notify.command:
        channels.append(
            CommandChannel(
                config.notify.command,
                timeout_seconds=config.notify.command_timeout_seconds,
                timezone=config.site.timezone,
            )
        )
    if config.notify.push:
        from siderod.service.push import build_push_channels

        channels.extend(build_push_channels(config.notify.push))
    return channels


def channel_accepts(channel: Channel, message: AlertMessage) -> bool:
    """Whether ``channel`` takes ``message``: a channel with an ``accepts`` filter (a push
    destination's urgency and kinds) decides; every other channel takes everything."""
    accepts = getattr(channel, "accepts", None)
    return True if accepts is None else bool(accepts(message))


# -- helpers ---------------------------------------------------------------------------------


def _local_iso(when_utc: datetime | None, zone: ZoneInfo) -> str:
    return "" if when_utc is None else _whole_second(when_utc).astimezone(zone).isoformat(timespec="seconds")


def _whole_second(when: datetime) -> datetime:
    # Rounded, as the alert's title, body and key round it (siderod.plan.planner), so that every
    # placeholder and the text of one alert name the same second.
    return (when + timedelta(microseconds=500_000)).replace(microsecond=0)


class _CapturedWarnings(logging.Handler):
    def __init__(self) -> None:
        super().__init__(logging.WARNING)
        self.records: list[logging.LogRecord] = []

    def emit(self, record: logging.LogRecord) -> None:
        self.records.append(record)

    def text(self) -> str:
        for record in self.records:
            if record.exc_info and record.exc_info[1] is not None:
                exc = record.exc_info[1]
                return f"{type(exc).__name__}: {exc}"
        return "; ".join(r.getMessage() for r in self.records)


def _format_late(seconds: float) -> str:
    if seconds < 90:
        return f"{seconds:.0f} s"
    return f"{seconds / 60:.0f} min"


def _iso(when: datetime | None) -> str:
    return "" if when is None else _whole_second(when).strftime("%Y-%m-%dT%H:%M:%SZ")


def _kill_group(process: asyncio.subprocess.Process) -> None:
    try:
        os.killpg(process.pid, signal.SIGKILL)
    except (ProcessLookupError, PermissionError):
        pass


_OUTPUT_LIMIT_BYTES = 4096  # enough for a useful log line; a chatty hook cannot flood the journal
