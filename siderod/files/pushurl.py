"""Push destination URLs (apprise): check one without sending, and show it without its secrets.

A push URL such as ``ntfys://tk_abc123@push.example.org/telescope`` carries a token or password.
Everything siderod prints about one goes through apprise's own privacy form
(``plugin.url(privacy=True)``: passwords become ``****``, tokens keep their first and last
character), and any text that came from apprise itself (its log lines, exception texts) goes
through :func:`redact`, which removes every piece of the URL that the privacy form hides.

apprise is imported on first use only: loading its ~200 plugins takes a tenth of a second,
which the quick verbs should not pay when no push destination is configured.
"""

from __future__ import annotations

import logging
import re
import threading
import warnings
from collections.abc import Iterable
from dataclasses import dataclass
from typing import Any
from urllib.parse import unquote

__all__ = [
    "CheckedUrl",
    "check_url",
    "hidden_url",
    "redact",
    "load_apprise",
    "capture_apprise_log",
]

_log = logging.getLogger("siderod.push")

# Shown in place of a URL that apprise could not read at all (so it has no privacy form).
_HIDDEN = "(hidden)"
# Pieces of a URL shorter than this are not treated as secrets on their own: they would match
# ordinary words in messages, and no real token or password is that short.
_MIN_SECRET_CHARS = 4
_SPLIT = re.compile(r"[/:@?&=#,;+\s]+")


@dataclass(frozen=True, slots=True)
class CheckedUrl:
    """What checking a push URL found.

    Attributes:
        masked: the URL as apprise's privacy form shows it, without its query string: safe to print.
        secrets: the pieces of the raw URL that the privacy form hides (for :func:`redact`).
        service: apprise's name for the service ("ntfy", "JSON", "E-Mail"...), or "" if unusable.
        ok: True when apprise can send to it.
    """

    masked: str
    secrets: frozenset[str]
    service: str
    ok: bool


def check_url(url: str) -> CheckedUrl:
    """Ask apprise whether it can send to ``url``, without sending anything.

    Args:
        url: an apprise URL (``json://``, ``ntfy://``, ``mailto://``, ...), secrets included.

    Returns:
        A :class:`CheckedUrl`; ``ok`` is False when apprise does not know the scheme or cannot
        use the URL (a missing token, a bad host...).
    """
    plugin = instantiate(url)
    if plugin is None:
        scheme = _scheme(url)
        masked = f"{scheme}://{_HIDDEN}" if scheme else _HIDDEN
        return CheckedUrl(masked=masked, secrets=_secret_pieces(url, masked), service="", ok=False)
    privacy = str(plugin.url(privacy=True))
    masked = privacy.split("?", 1)[0]
    return CheckedUrl(masked=masked, secrets=_secret_pieces(url, privacy),
                      service=str(getattr(plugin, "service_name", "") or ""), ok=True)


def hidden_url(url: str) -> str:
    """The privacy form of ``url`` (see :func:`check_url`)."""
    return check_url(url).masked


def instantiate(url: str) -> Any:
    """An apprise plugin object for ``url``, or None when apprise cannot use it."""
    apprise = load_apprise()
    with capture_apprise_log():  # "could not load" lines: the caller reports the problem itself
        try:
            return apprise.Apprise.instantiate(url, suppress_exceptions=True)
        except Exception:  # apprise promises None for bad URLs; be safe against a plugin bug
            return None


def redact(text: str, secrets: Iterable[str]) -> str:
    """``text`` with every secret piece replaced by ``****`` (longest pieces first)."""
    for piece in sorted(set(secrets), key=len, reverse=True):
        if piece:
            text = text.replace(piece, "****")
    return text


def load_apprise() -> Any:
    """Import apprise, load its plugins and route its log through siderod's capture (once)."""
    with _LOADING:
        if _LOADED:
            return _LOADED[0]
        # apprise loads its plugins on first use; on Python 3.11 one of them imports the
        # deprecated `imghdr` module. That warning is about apprise's own code, not ours.
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", DeprecationWarning)
            import apprise

            _route_apprise_log()
            apprise.Apprise.instantiate("json://localhost")  # loads every plugin module now
        _LOADED.append(apprise)
        return apprise


class capture_apprise_log:  # noqa: N801 -- used like a function: `with capture_apprise_log() as lines:`
    """Collect what apprise logs (WARNING and up) in this thread while the block runs.

    apprise reports a failed send only through its logger; this turns those lines into the one
    error text that ``status`` shows. The lines are not redacted here: callers pass them through
    :func:`redact` with the destination's secrets.
    """

    def __init__(self) -> None:
        self.lines: list[str] = []
        self._outer: list[str] | None = None

    def __enter__(self) -> capture_apprise_log:
        ident = threading.get_ident()
        self._outer = _ROUTER.captures.get(ident)  # nested captures: the inner one wins, then the outer
        _ROUTER.captures[ident] = self.lines
        return self

    def __exit__(self, *exc: object) -> None:
        ident = threading.get_ident()
        if self._outer is None:
            _ROUTER.captures.pop(ident, None)
        else:
            _ROUTER.captures[ident] = self._outer


# -- helpers ----------------------------------------------------------------------------------


def _scheme(url: str) -> str:
    head, sep, _ = url.partition("://")
    return head if sep and re.fullmatch(r"[A-Za-z][A-Za-z0-9+.-]{0,31}", head) else ""


def _pieces(text: str) -> set[str]:
    out = set()
    for piece in _SPLIT.split(text):
        out.add(piece)
        out.add(unquote(piece))
    return out


def _secret_pieces(url: str, shown: str) -> frozenset[str]:
    # What the raw URL has and its privacy form does not show is what apprise considers secret.
    # Some pieces it merely rewrites (a default it drops, a parameter it reorders) are caught
    # too: hiding those in an error message costs nothing.
    visible = _pieces(shown)
    raw = {p for p in _pieces(url) if len(p) >= _MIN_SECRET_CHARS and p not in visible}
    return frozenset(raw | {url})


class _Router(logging.Handler):
    """The one handler on the ``apprise`` logger: per-thread capture, nothing to the journal.

    Records from a thread inside :class:`capture_apprise_log` are kept for that thread's error
    message; all others are dropped. apprise's own lines are never passed on as they are, since
    some plugins put response bodies or parts of the URL in them.
    """

    def __init__(self) -> None:
        super().__init__(logging.WARNING)
        self.captures: dict[int, list[str]] = {}

    def emit(self, record: logging.LogRecord) -> None:
        lines = self.captures.get(record.thread or 0)
        if lines is None:
            return
        try:
            lines.append(record.getMessage())
        except Exception:  # a malformed record must not break a send
            lines.append(str(record.msg))


_ROUTER = _Router()
_ROUTED = threading.Lock()
_LOADING = threading.Lock()
_LOADED: list[Any] = []


def _route_apprise_log() -> None:
    with _ROUTED:
        logger = logging.getLogger("apprise")
        if _ROUTER not in logger.handlers:
            logger.addHandler(_ROUTER)
            logger.propagate = False
