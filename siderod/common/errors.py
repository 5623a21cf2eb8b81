"""The exceptions siderod raises, in one tree, so callers can catch them by meaning."""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from siderod.astro.angles import AngleParseError
    from siderod.astro.leapseconds import LeapTableExpired
    from siderod.astro.timescales import NaiveDatetimeError

__all__ = [
    "SiderodError",
    "ConfigError",
    "ConfigErrors",
    "ConfigLoadFailed",
    "ServiceNotRunning",
    "ControlError",
    "InternalError",
    "CatalogueMissing",
    "CatalogueNameError",
    "AngleParseError",
    "LeapTableExpired",
    "NaiveDatetimeError",
]

# The astronomy core's own errors live beside the code that raises them, because siderod.astro
# depends on nothing else in the package. They derive from ValueError and are re-exported here,
# loaded on first use so that importing this module never pulls in numpy.
_ASTRO_ERRORS = {
    "AngleParseError": "siderod.astro.angles",
    "LeapTableExpired": "siderod.astro.leapseconds",
    "NaiveDatetimeError": "siderod.astro.timescales",
}


def __getattr__(name: str):
    if name in _ASTRO_ERRORS:
        import importlib

        return getattr(importlib.import_module(_ASTRO_ERRORS[name]), name)
    raise AttributeError(f"module 'siderod.common.errors' has no attribute {name!r}")


class SiderodError(Exception):
    """Base class of every error siderod raises on purpose."""


@dataclass(eq=False)
class ConfigError(SiderodError):
    """One problem in a configuration or target file.

    The message has the usual compiler shape, ``file:line: key: expected ..., got ...``, so an
    editor can jump to it and the user sees what to type instead.

    Attributes:
        path: the file, as the user named it (or as found on the search path).
        line: 1-based line number, or None when it cannot be located.
        key: dotted key path as the user spelled it, e.g. ``target[3].ra``.
        got: the offending text or value, repeated back.
        expected: what would have been accepted, phrased to teach the fix.
    """

    path: str
    line: int | None
    key: str
    got: str
    expected: str

    def __post_init__(self) -> None:
        super().__init__(str(self))

    def __str__(self) -> str:
        where = f"{self.path}:{self.line}" if self.line else self.path
        key = f" {self.key}:" if self.key else ""
        got = f", got {self.got}" if self.got else ""
        return f"{where}:{key} expected {self.expected}{got}"


class ConfigErrors(SiderodError):
    """Every problem found in one load; nothing from that load is used.

    Attributes:
        errors: the individual ConfigError records, in file and line order.
    """

    def __init__(self, errors: list[ConfigError]) -> None:
        self.errors = list(errors)
        count = len(self.errors)
        head = f"{count} problem{'s' if count != 1 else ''} in the configuration"
        super().__init__(head + ":\n" + "\n".join(f"  {e}" for e in self.errors))


class ConfigLoadFailed(SiderodError):
    """The service's loading of its configuration crashed, was stopped or took too long (a reload
    then keeps the last good configuration); the message says which."""


class LedgerUnusable(SiderodError):
    """The alert ledger cannot be opened for writing; the message names the file and the fix."""


class ServiceNotRunning(SiderodError):
    """No siderod service answers on the control socket."""


class ControlError(SiderodError):
    """The service answered a control request with an error."""


class InternalError(SiderodError):
    """A broken invariant: this is a bug in siderod."""

    def __init__(self, what: str) -> None:
        super().__init__(f"{what} -- this is a bug in siderod; please report it with the log")


class CatalogueMissing(SiderodError):
    """The deep-sky catalogue (the pyongc package's data) is not installed."""


class CatalogueNameError(SiderodError):
    """A name the deep-sky catalogue does not know, or knows for several objects.

    Attributes:
        name: the name as the user wrote it.
        reason: "unknown" or "ambiguous".
        suggestions: the closest matches, e.g. ("M 101 (NGC 5457)", ...).
    """

    def __init__(self, name: str, reason: str, suggestions: tuple[str, ...]) -> None:
        self.name = name
        self.reason = reason
        self.suggestions = suggestions
        super().__init__(self.describe())

    def describe(self) -> str:
        """One sentence: what was wrong and the closest matches."""
        if self.reason == "ambiguous":
            return f"{self.name!r} names several catalogue entries: {'; '.join(self.suggestions)}"
        tail = f"; closest: {'; '.join(self.suggestions)}" if self.suggestions else ""
        return f"{self.name!r} is not in the deep-sky catalogue{tail}"
