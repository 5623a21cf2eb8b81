"""Load the configuration in a child process, so that a reload never holds the service's interpreter.

A worker thread was not enough: the TOML parser is compiled and holds the interpreter lock for a
whole parse (about a second for 200,000 targets), and checking the targets is pure Python that
competes with the event loop for the lock, so `status` replies and watchdog pings waited behind it
(issue 13 item 5). A child process has an interpreter of its own.

The child is a fresh interpreter (``python -c``, the same executable and import path), never a
fork of the service: forking a process that runs threads and an event loop copies locks in
whatever state they are. It reads a picklable :class:`ConfigLoad` on stdin, writes the pickled
result on its own stdout (anything the loading code prints goes to stderr instead), and exits; it
is killed when it takes longer than ``timeout_seconds`` or when the service stops meanwhile, so no
process outlives a load. The result is unpickled on a worker thread, off the event loop.
"""

from __future__ import annotations

import asyncio
import contextlib
import os
import pickle
import sys
import traceback
from collections.abc import Callable, Mapping
from contextlib import AbstractContextManager
from dataclasses import dataclass, field
from typing import Any

from siderod.common.errors import ConfigLoadFailed, SiderodError
from siderod.common.model import Config

__all__ = ["LOAD_TIMEOUT_SECONDS", "ConfigLoad", "load_in_child"]

#: A load taking longer is stopped and the last good configuration kept. 200,000 TOML targets load
#: in about 3 s of CPU here; a busy 2-core machine can stretch that several times, and a deep-sky
#: catalogue look-up per target costs more, so the bound is generous. It only exists so that a hung
#: load (a file on a dead network share) cannot block every later reload.
LOAD_TIMEOUT_SECONDS = 300.0

# The child's first statements: take the parent's import path (which may hold entries added at run
# time, such as a test suite's helpers), then hand over to child_main().
_BOOTSTRAP = (
    "import pickle, sys; sys.path[:] = pickle.load(sys.stdin.buffer); "
    "from siderod.service.loading import child_main; child_main()"
)


@dataclass(frozen=True)
class ConfigLoad:
    """A picklable ``load_config`` call: what the service runs, in a child process, on each reload.

    Args:
        explicit: a ``--config`` path, or None to search as ``load_config`` does.
        env: the environment to resolve paths and push URLs in (a plain dict, so it pickles).
        check_push: read and check every push destination's URL, as ``siderod check`` does.
    """

    explicit: str | None
    env: Mapping[str, str] = field(default_factory=dict)
    check_push: bool = False

    def __call__(self, at_unix: float | None = None) -> Config:
        """Load, with DUT1 looked up for ``at_unix`` (POSIX seconds; now when None)."""
        from siderod.files.config import load_config

        return load_config(self.explicit, dict(self.env), at_unix=at_unix, check_push=self.check_push)


async def load_in_child(load: Any, at_unix: float | None, *,
                        timeout_seconds: float = LOAD_TIMEOUT_SECONDS,
                        unpickling: Callable[[], AbstractContextManager[Any]] = contextlib.nullcontext,
                        ) -> Config:
    """Run ``load(at_unix)`` in a fresh child interpreter and return its Config.

    Args:
        load: a picklable callable (module level, such as :class:`ConfigLoad`) returning a Config.
        at_unix: passed to ``load``.
        timeout_seconds: monotonic seconds before the child is killed.
        unpickling: a context manager factory entered while the result is unpickled (on a worker
            thread); the service pauses garbage collection with it.

    Raises:
        SiderodError: the configuration was refused (the message is the loader's own, so every
            problem is listed as ``siderod check`` lists it), or ConfigLoadFailed when the child
            crashed, was killed or took too long. Either way nothing was loaded.
    """
    payload = pickle.dumps(sys.path) + pickle.dumps((load, at_unix))
    process = await asyncio.create_subprocess_exec(
        sys.executable, "-c", _BOOTSTRAP, stdin=asyncio.subprocess.PIPE, stdout=asyncio.subprocess.PIPE)
    try:
        try:
            out, _ = await asyncio.wait_for(process.communicate(payload), timeout_seconds)
        except TimeoutError:
            raise ConfigLoadFailed(
                f"loading the configuration took more than {timeout_seconds:g} s and was stopped "
                "(is a file on a slow or hung disk?)") from None
    finally:
        if process.returncode is None:  # timed out, or the service is stopping: no child outlives it
            with contextlib.suppress(ProcessLookupError):
                process.kill()
            await asyncio.shield(process.wait())
    if not out:
        raise ConfigLoadFailed(f"the process loading the configuration stopped (exit code "
                               f"{process.returncode}) before it gave a result")
    with unpickling():
        outcome, value = await asyncio.to_thread(pickle.loads, out)
    if outcome == "loaded":
        return value
    if outcome == "refused":
        raise SiderodError(value)
    raise ConfigLoadFailed(f"loading the configuration failed unexpectedly; this is a bug in siderod, "
                           f"please report it with the log:\n{value}")


def child_main() -> None:
    """The child's side of :func:`load_in_child` (run by its bootstrap, never in the service)."""
    result = os.fdopen(os.dup(sys.stdout.fileno()), "wb")
    os.dup2(sys.stderr.fileno(), sys.stdout.fileno())  # stray prints must not corrupt the result
    _pickle_targets_as_arguments()
    try:
        load, at_unix = pickle.load(sys.stdin.buffer)
        data = pickle.dumps(("loaded", load(at_unix)), protocol=pickle.HIGHEST_PROTOCOL)
    except (SiderodError, OSError) as exc:  # what the service reports as a refused configuration
        data = pickle.dumps(("refused", str(exc)))
    except BaseException:  # noqa: B036 -- anything else is a bug; its traceback goes to the service
        data = pickle.dumps(("crashed", traceback.format_exc()))
    result.write(data)
    result.close()


def _pickle_targets_as_arguments() -> None:
    """Pickle each Target as its constructor's arguments (in the child only).

    A frozen dataclass with slots pickles through a Python-level ``__getstate__``/``__setstate__``
    that walks ``fields()`` for every object: 200,000 targets took 1.6 s to pickle and as long
    again to unpickle. As ``Target(*values)`` they take about a third of that on each side; the
    service unpickles them with the class's own constructor, so nothing changes there.
    """
    import copyreg
    import dataclasses
    import operator

    from siderod.common.model import Target

    values = operator.attrgetter(*(f.name for f in dataclasses.fields(Target)))
    copyreg.pickle(Target, lambda target: (Target, values(target)))
