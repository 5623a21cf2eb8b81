"""The live view: the one module that drives ``rich.live.Live``, ticking from the injected clock.

Each tick redraws only the clock lines; the title and the body (table, alerts, warnings) are
rendered to segments once per second and replayed in between. The board works on arrays and makes
records only for the rows that fit, so 5,000 targets cost little more to draw than 15.
"""

from __future__ import annotations

import asyncio
import inspect
import logging
import math
import sys
from collections.abc import Awaitable, Callable, Iterator, Mapping
from contextlib import contextmanager
from dataclasses import replace
from datetime import date, datetime, timedelta
from typing import Any

from rich.console import Console, ConsoleOptions, RenderResult
from rich.live import Live
from rich.segment import Segment

from siderod.common.clock import Clock
from siderod.common.model import ClockHealth, Config, PlannedAlert, ServiceSnapshot
from siderod.view.board import BoardInputs, agenda_events, compose_board, render_clock

__all__ = ["MAX_REFRESH_HZ", "BoardFeed", "run_live", "log_to_console", "read_keys"]

#: Faster than this is pointless for a clock showing tenths of a second, and costs CPU over SSH.
MAX_REFRESH_HZ = 10.0
#: The title, table, alerts and warnings are rebuilt this often (countdowns show whole seconds).
BODY_REFRESH_SECONDS = 1.0

_log = logging.getLogger(__name__)

InputsGetter = Callable[[datetime], "BoardInputs | Awaitable[BoardInputs]"]


async def run_live(
    clock: Clock,
    get_inputs: InputsGetter,
    console: Console,
    refresh_hz: float = 1.0,
    *,
    stop: asyncio.Event | None = None,
    capture_logging: bool = True,
    keys: Mapping[str, Callable[[], Any]] | None = None,
    key_fd: int | None = None,
) -> None:
    """Show the board on ``console`` until ``stop`` is set or the task is cancelled (Ctrl-C).

    Args:
        clock: the only source of time (``SystemClock`` in use, ``FakeClock`` in tests).
        get_inputs: ``now_utc -> BoardInputs`` (plain or async), called once per body refresh.
        console: a terminal console (see ``siderod.view.theme.make_console``).
        refresh_hz: clock redraws per second, in (0, 10]. Ticks fall on whole multiples of the
            period, so the seconds shown change on the second.
        stop: set it to end the view; None runs until cancelled.
        capture_logging: while the view runs, send log records through a ``RichHandler`` on
            ``console`` instead of stream handlers that would garble the screen.
        keys: one-key actions, by lower-case key (``{"a": acknowledge}``); an action may return an
            awaitable. Read from ``key_fd`` (standard input when None) only if it is a terminal.

    Raises:
        ValueError: ``refresh_hz`` outside (0, 10].
    """
    if not 0.0 < refresh_hz <= MAX_REFRESH_HZ:
        raise ValueError(
            f"refresh rate must be more than 0 and at most {MAX_REFRESH_HZ:g} Hz, got {refresh_hz:g}"
        )
    period = 1.0 / refresh_hz
    body_period = max(period, BODY_REFRESH_SECONDS)
    stop = stop or asyncio.Event()
    handler_scope = log_to_console(console) if capture_logging else _nothing()
    live = Live(console=console, auto_refresh=False, transient=False, vertical_overflow="crop")
    key_scope = read_keys(sys.stdin.fileno() if key_fd is None else key_fd, keys) if keys else _nothing()
    with handler_scope, live, key_scope:
        cached: _Cached | None = None
        size = None
        while not stop.is_set():
            now_utc = clock.now_utc()
            if console.size != size:
                if size is not None:
                    console.clear()  # lines reflowed by the resize would be left behind otherwise
                size, cached = console.size, None
            width, height = size.width, size.height
            body_key = math.floor(now_utc.timestamp() / body_period)
            if cached is None or cached.key != body_key:
                inputs = await _maybe_await(get_inputs(now_utc))
                cached = _Cached.build(body_key, inputs, console, width, height)
            clock_lines = render_clock(replace(cached.inputs, now_utc=now_utc), width)
            clock_segments = console.render_lines(_Lines(clock_lines), console.options, pad=True)
            live.update(_Frame(cached, clock_segments), refresh=True)
            await _wait_for_tick(clock, stop, period)


class BoardFeed:
    """Builds :class:`BoardInputs` at any instant: positions now, agenda in the background.

    Args:
        get_config: the configuration in use (called each refresh; a new object resets the agenda).
        get_snapshot: the service's state (plain or async); None computes everything here.
            Raising ``SiderodError`` or ``OSError`` means the service stopped answering.
        get_agenda: an agenda the caller already has (the service's own); None computes one.
        get_clock_health: read the system clock's state (used without a service).
        leap_known_good_until: last date the leap-second table is known good.
        source: the title's note on where the data comes from.
        snapshot_poll_seconds: how often to ask for a fresh snapshot.
        run_blocking: how to run slow pure work off the event loop (tests pass a direct call).
    """

    AGENDA_REFRESH_HOURS = 6.0  # recompute the agenda this often (it covers the configured window)
    CLOCK_HEALTH_SECONDS = 30.0

    def __init__(
        self,
        get_config: Callable[[], Config],
        *,
        get_snapshot: Callable[[], Any] | None = None,
        get_agenda: Callable[[], Any] | None = None,
        get_clock_health: Callable[[], ClockHealth] | None = None,
        leap_known_good_until: date | None = None,
        source: str = "",
        snapshot_poll_seconds: float = 2.0,
        run_blocking: Callable[..., Awaitable[Any]] = asyncio.to_thread,
    ) -> None:
        self._get_config = get_config
        self._get_snapshot = get_snapshot
        self._get_agenda = get_agenda
        self._get_clock_health = get_clock_health
        self._leap_known_good_until = leap_known_good_until
        self._source = source
        self._poll = timedelta(seconds=snapshot_poll_seconds)
        self._run_blocking = run_blocking
        self._config: Config | None = None
        self._agenda: Any = None
        self._agenda_start_utc: datetime | None = None
        self._agenda_task: asyncio.Task[Any] | None = None
        self._local_alerts: tuple[PlannedAlert, ...] = ()
        self._snapshot: ServiceSnapshot | None = None
        self._snapshot_utc: datetime | None = None
        self._lost_service_utc: datetime | None = None
        self._health: ClockHealth | None = None
        self._health_utc: datetime | None = None
        self._agenda_error = ""

    async def inputs_at(self, now_utc: datetime) -> BoardInputs:
        """Everything one frame needs at ``now_utc``."""
        from siderod.plan.positions import compute_sky

        config = self._get_config()
        if config is not self._config:
            self._config, self._agenda, self._agenda_start_utc = config, None, None
        await self._refresh_snapshot(now_utc)
        agenda = await self._current_agenda(config, now_utc)
        self._refresh_clock_health(now_utc)
        notices = []
        if self._lost_service_utc is not None:
            notices.append(f"the service stopped answering at {self._lost_service_utc:%H:%M:%S} UTC: "
                           "no alerts are being given; showing what it would plan")
        if self._agenda_error:
            notices.append(f"could not work out the events: {self._agenda_error}")
        return BoardInputs(
            now_utc=now_utc,
            config=config,
            sky=compute_sky(config, now_utc.timestamp()),
            sky_utc=now_utc,
            events=agenda_events(agenda) if agenda is not None else (),
            snapshot=self._snapshot,
            source=self._source if self._snapshot is not None or self._get_snapshot is None else "",
            local_alerts=self._local_alerts if self._snapshot is None else (),
            clock_health=self._health,
            leap_known_good_until=self._leap_known_good_until,
            notices=tuple(notices),
            agenda_pending=agenda is None,
        )

    async def close(self) -> None:
        """Cancel a background agenda computation, if one is running."""
        if self._agenda_task is not None:
            self._agenda_task.cancel()
            await asyncio.gather(self._agenda_task, return_exceptions=True)

    async def _refresh_snapshot(self, now_utc: datetime) -> None:
        from siderod.common.errors import SiderodError

        if self._get_snapshot is None:
            return
        if self._snapshot_utc is not None and abs(now_utc - self._snapshot_utc) < self._poll:
            return
        self._snapshot_utc = now_utc
        try:
            snapshot = await _maybe_await(self._get_snapshot())
        except (SiderodError, OSError) as exc:
            if self._lost_service_utc is None:
                _log.warning("the service stopped answering: %s", exc)
                self._lost_service_utc = now_utc
            self._snapshot = None
            return
        self._snapshot, self._lost_service_utc = snapshot, None

    async def _current_agenda(self, config: Config, now_utc: datetime) -> Any:
        if self._get_agenda is not None:
            agenda = self._get_agenda()
            if agenda is not None:
                return agenda
        stale = (
            self._agenda_start_utc is None
            or now_utc < self._agenda_start_utc
            or now_utc - self._agenda_start_utc > timedelta(hours=self.AGENDA_REFRESH_HOURS)
        )
        if stale and self._agenda_task is None:
            self._agenda_task = asyncio.ensure_future(self._compute_agenda(config, now_utc))
            if self._agenda is None:
                # The first one: wait a moment, so that a quick agenda shows in the first frame.
                await asyncio.wait({self._agenda_task}, timeout=0.5)
        return self._agenda

    async def _compute_agenda(self, config: Config, start_utc: datetime) -> None:
        from siderod.plan.agenda import compute_agenda
        from siderod.plan.planner import plan_alerts

        try:
            # Cover the refresh interval too, so that a full window ahead is known at every frame
            # (a target culminating 23 h from now still shows its flip countdown).
            hours = config.events.window_hours + self.AGENDA_REFRESH_HOURS

            def work() -> tuple[Any, tuple[PlannedAlert, ...]]:
                # The plan too, off the loop: 5,000 targets take most of a second to plan, which
                # would stop the clock.
                agenda = compute_agenda(config, start_utc, hours)
                return agenda, tuple(plan_alerts(agenda, config, muted={}, now_utc=start_utc))

            agenda, local_alerts = await self._run_blocking(work)
            if config is self._config:
                self._agenda, self._agenda_start_utc = agenda, start_utc
                self._local_alerts = local_alerts
                self._agenda_error = ""
        except Exception as exc:  # shown on the board and logged; the clock keeps running
            _log.exception("computing the agenda failed")
            self._agenda_error = str(exc) or type(exc).__name__
            self._agenda_start_utc = start_utc  # retry after the refresh interval, not every frame
        finally:
            self._agenda_task = None

    def _refresh_clock_health(self, now_utc: datetime) -> None:
        if self._get_clock_health is None:
            return
        recent = timedelta(seconds=self.CLOCK_HEALTH_SECONDS)
        if self._health_utc is not None and abs(now_utc - self._health_utc) < recent:
            return
        self._health_utc = now_utc
        self._health = self._get_clock_health()


@contextmanager
def log_to_console(console: Console) -> Iterator[logging.Handler]:
    """While inside, log records go through a ``RichHandler`` printing on ``console``.

    Handlers on the root logger that write to a terminal stream are taken off meanwhile: they hold
    the real stderr and would write over the live region.
    """
    root = logging.getLogger()
    removed = [h for h in root.handlers if isinstance(h, logging.StreamHandler)
               and not isinstance(h, logging.FileHandler)]
    handler = _ConsoleLogHandler(console)
    handler.setLevel(min((h.level for h in removed), default=logging.NOTSET))
    for h in removed:
        root.removeHandler(h)
    root.addHandler(handler)
    try:
        yield handler
    finally:
        root.removeHandler(handler)
        for h in removed:
            root.addHandler(h)


# -- helpers, in the order they are called ---------------------------------------------------------


class _ConsoleLogHandler(logging.Handler):
    """Log lines printed above the board, in the same format as on stderr (ISO dates)."""

    def __init__(self, console: Console) -> None:
        from siderod.common.logformat import LOG_FORMAT

        super().__init__()
        self.console = console
        self.setFormatter(logging.Formatter(LOG_FORMAT))

    def emit(self, record: logging.LogRecord) -> None:
        try:
            self.console.print(self.format(record), markup=False, highlight=False, emoji=False,
                               soft_wrap=True)
        except Exception:
            self.handleError(record)



@contextmanager
def read_keys(fd: int, keys: Mapping[str, Callable[[], Any]]) -> Iterator[None]:
    """While the block runs, call ``keys[key]()`` for each key typed on the terminal ``fd``.

    The terminal is put in cbreak mode (keys arrive one by one, not echoed; Ctrl-C still stops)
    and restored on the way out. Keys are matched case-blind; others are ignored. A file that is
    not a terminal (a pipe, /dev/null under systemd) is not read at all. Needs a running loop.
    """
    import os
    import termios
    import tty

    if not os.isatty(fd):
        yield
        return
    loop = asyncio.get_running_loop()
    saved = termios.tcgetattr(fd)
    tty.setcbreak(fd)
    tasks: set[asyncio.Task[Any]] = set()

    def readable() -> None:
        try:
            data = os.read(fd, 64)
        except OSError:
            return
        for char in data.decode("utf-8", "ignore").lower():
            action = keys.get(char)
            if action is None:
                continue
            result = action()
            if inspect.isawaitable(result):
                task = asyncio.ensure_future(result)
                tasks.add(task)
                task.add_done_callback(_key_action_done(tasks))

    loop.add_reader(fd, readable)
    try:
        yield
    finally:
        loop.remove_reader(fd)
        termios.tcsetattr(fd, termios.TCSADRAIN, saved)


def _key_action_done(tasks: set[asyncio.Task[Any]]) -> Callable[[asyncio.Task[Any]], None]:
    def done(task: asyncio.Task[Any]) -> None:
        tasks.discard(task)
        if not task.cancelled() and task.exception() is not None:
            _log.warning("that key's action failed: %s", task.exception())

    return done


@contextmanager
def _nothing() -> Iterator[None]:
    yield None


class _Cached:
    """The title and body of one second, rendered once to segment lines."""

    __slots__ = ("key", "inputs", "header", "body")

    def __init__(self, key: int, inputs: BoardInputs, header: list[list[Segment]], body: list[list[Segment]]):
        self.key, self.inputs, self.header, self.body = key, inputs, header, body

    @classmethod
    def build(cls, key: int, inputs: BoardInputs, console: Console, width: int, height: int) -> _Cached:
        frame = compose_board(inputs, width, height)
        options = console.options.update(width=width)
        return cls(
            key,
            inputs,
            console.render_lines(_Lines(frame.header), options, pad=True),
            console.render_lines(_Lines(frame.body), options, pad=True) if frame.body else [],
        )


class _Lines:
    """Renders a sequence of one-line renderables."""

    def __init__(self, lines: Any) -> None:
        self.lines = lines

    def __rich_console__(self, console: Console, options: ConsoleOptions) -> RenderResult:
        yield from self.lines


class _Frame:
    """A whole frame replayed from segment lines: cached title and body, fresh clock."""

    def __init__(self, cached: _Cached, clock_lines: list[list[Segment]]) -> None:
        self.lines = [*cached.header, *clock_lines, *cached.body]

    def __rich_console__(self, console: Console, options: ConsoleOptions) -> RenderResult:
        new_line = Segment.line()
        last = len(self.lines) - 1
        for i, line in enumerate(self.lines):
            yield from line
            if i != last:
                yield new_line


async def _maybe_await(value: Any) -> Any:
    return await value if inspect.isawaitable(value) else value


async def _wait_for_tick(clock: Clock, stop: asyncio.Event, period: float) -> None:
    now_seconds = clock.now_utc().timestamp()
    delay = (math.floor(now_seconds / period) + 1) * period - now_seconds
    if delay < 1e-3:  # on the boundary just drawn (float rounding): wait for the next one
        delay += period
    sleeper = asyncio.ensure_future(clock.sleep(delay))
    stopper = asyncio.ensure_future(stop.wait())
    try:
        await asyncio.wait({sleeper, stopper}, return_when=asyncio.FIRST_COMPLETED)
    finally:
        for task in (sleeper, stopper):
            task.cancel()
        await asyncio.gather(sleeper, stopper, return_exceptions=True)
