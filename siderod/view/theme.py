"""Every style the terminal view uses, by name, and the console that carries them.

Call sites say ``style="siderod.lst"``; only this module knows colours. Every state that a colour
marks is also spelled out in text (arrows, "late", "due"), so nothing is lost under ``NO_COLOR``.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import IO, Any

__all__ = ["STYLES", "build_theme", "make_console", "no_color_requested"]

#: Style name -> rich style definition. Colours are our own choice: warm amber for the sidereal
#: clock (kind to dark-adapted eyes), muted blue-grey for labels, red only for danger.
STYLES: Mapping[str, str] = {
    "siderod.title": "bold #d9c7a3",
    "siderod.site": "#d9c7a3",
    "siderod.source": "italic #8d99ae",
    "siderod.source.local": "italic #e0a458",
    "siderod.lst": "bold #f2b84b",
    "siderod.lst.label": "#b08a3c",
    "siderod.lst.mean": "#c9a25a",
    "siderod.time": "#d0d0c8",
    "siderod.label": "#8d99ae",
    "siderod.value": "#e6e6df",
    "siderod.ok": "#7fb685",
    "siderod.warn": "bold #e9a23b",
    "siderod.danger": "bold #f2f2f2 on #8c1c13",
    "siderod.sun": "#e9c46a",
    "siderod.moon": "#b8c4d6",
    "siderod.twilight.day": "#e9c46a",
    "siderod.twilight.civil": "#d8a657",
    "siderod.twilight.nautical": "#8fa3c8",
    "siderod.twilight.astronomical": "#6f7fb0",
    "siderod.twilight.night": "#5d6a94",
    "siderod.table.header": "bold #8d99ae",
    "siderod.target": "#e6e6df",
    "siderod.target.down": "dim",
    "siderod.target.muted": "dim italic",
    "siderod.rising": "#7fb685",
    "siderod.setting": "#d08770",
    "siderod.countdown": "#e6e6df",
    "siderod.countdown.soon": "bold #f2b84b",
    "siderod.flip.due": "bold reverse #e9a23b",
    "siderod.alert.low": "#8d99ae",
    "siderod.alert.normal": "#e6e6df",
    "siderod.alert.critical": "bold #e76f51",
    "siderod.delivery.ok": "#7fb685",
    "siderod.delivery.late": "bold #e9a23b",
    "siderod.delivery.failed": "bold #e76f51",
    "siderod.dim": "dim",
}


def build_theme() -> Any:
    """The rich ``Theme`` holding :data:`STYLES` (rich imported here, so importing us stays cheap)."""
    from rich.theme import Theme

    return Theme(dict(STYLES), inherit=True)


def no_color_requested(env: Mapping[str, str]) -> bool:
    """True when ``NO_COLOR`` is set to anything non-empty (https://no-color.org)."""
    return env.get("NO_COLOR", "") != ""


def make_console(
    env: Mapping[str, str],
    *,
    file: IO[str] | None = None,
    width: int | None = None,
    height: int | None = None,
    record: bool = False,
    **console_kwargs: Any,
) -> Any:
    """A rich ``Console`` with the siderod theme, honouring ``NO_COLOR`` from ``env``.

    Args:
        env: the environment to read ``NO_COLOR`` from (pass ``os.environ`` at the edge).
        file: where to write (default: stdout).
        width, height: fixed size in cells; None lets rich ask the terminal.
        record: keep what is printed, for ``export_text``/``export_svg``.
        **console_kwargs: passed on to ``rich.console.Console``.
    """
    from rich.console import Console

    console_kwargs.setdefault("no_color", no_color_requested(env))
    return Console(
        file=file, width=width, height=height, record=record, theme=build_theme(), **console_kwargs
    )
