"""Add a catalogue entry to a target file without disturbing anything else in it.

The file is edited as a TOML document with ``tomlkit``, which keeps every comment, blank line and
layout of what is already there; the new ``[[target]]`` table is appended. The result is checked
(the old text is an exact prefix of the new one, and the whole file still loads as a target file)
before it replaces the old file atomically: a temporary file in the same directory, flushed and
fsynced, then renamed over the original, then the directory fsynced.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path
from typing import Any

from siderod.common.errors import ConfigErrors, SiderodError

__all__ = ["EnlistRefused", "add_target_text", "replace_file_atomically"]


class EnlistRefused(SiderodError):
    """The entry was not added; the file is unchanged. The message says why and what to do."""


def add_target_text(text: str, path: str, entry: Any, *, name: str | None = None, pin: bool = False) -> str:
    """The target file's text with one more ``[[target]]`` table for a catalogue entry.

    Args:
        text: the file's current text ("" for a new file).
        path: the file's name, for messages.
        entry: a :class:`siderod.files.catalogue.Entry`.
        name: the target's own name; the entry's label ("M 31") when None. A name other than the
            label gets a ``catalogue`` key naming the entry.
        pin: also write the entry's J2000 ``ra``/``dec``, so the file does not need the catalogue.

    Raises:
        EnlistRefused: the file is not valid TOML, already has a target of that name, or would
            not load afterwards.
    """
    import tomlkit
    from tomlkit.exceptions import TOMLKitError

    from siderod.astro.angles import format_dms, format_hms
    from siderod.files.targets import parse_targets_toml

    target_name = (name or entry.label).strip()
    if not target_name:
        raise EnlistRefused("the target name is empty; give one with --as or leave --as out")
    try:
        document = tomlkit.parse(text)
    except TOMLKitError as exc:
        raise EnlistRefused(f"{path} is not valid TOML ({exc}); nothing was changed. Fix it first "
                            "(`siderod check` shows every problem).") from None
    tables = document.get("target")
    if tables is not None and not isinstance(tables, tomlkit.items.AoT):
        raise EnlistRefused(f"{path}: `target` is not a list of [[target]] tables; nothing was changed")
    for number, table in enumerate(tables or [], start=1):
        if str(table.get("name", "")).strip() == target_name:
            raise EnlistRefused(f"{path} already has a target named {target_name!r} (target[{number}]); "
                                "nothing was changed. Pick another name with --as NAME.")
    table = tomlkit.table()
    if text.strip():
        table.trivia.indent = "\n"  # a blank line before the new table, as between the others
    table.add("name", target_name)
    if target_name != entry.label:
        table.add("catalogue", entry.label)
    also = ", ".join(([entry.designation] if entry.messier else []) + list(entry.common_names[:1]))
    note = f"{entry.type_text}{' in ' + entry.constellation if entry.constellation else ''}"
    note += f"; {also}" if also else ""
    if pin:
        dec = format_dms(entry.dec_deg, decimals=1, sign=True)
        table.add("ra", format_hms(entry.ra_deg / 15.0, decimals=2))
        table.add("dec", dec.replace("°", "d").replace("'", "m").replace('"', "s"))
        table["ra"].comment("J2000 (ICRS), from the deep-sky catalogue (OpenNGC)")
        table["ra"].trivia.comment_ws = "  "
    table["name"].comment(note)
    table["name"].trivia.comment_ws = "  "
    if tables is None:
        aot = tomlkit.aot()
        aot.append(table)
        document.append("target", aot)
    else:
        tables.append(table)
    new_text = tomlkit.dumps(document)
    if not new_text.startswith(text):
        raise EnlistRefused(f"{path}: adding the target would have changed the text already there; nothing "
                            "was changed (this is a bug in siderod; please report it with the file)")
    try:
        parse_targets_toml(new_text, path)
    except ConfigErrors as exc:
        raise EnlistRefused(f"{path} would not load after the addition, so nothing was changed:\n"
                            + "\n".join(f"  {e}" for e in exc.errors)) from None
    return new_text


def replace_file_atomically(path: Path, text: str) -> None:
    """Write ``text`` to ``path`` so that a crash leaves either the old file or the new one, whole.

    The new file keeps the old one's permission bits (0644-style default for a new file).
    """
    directory = path.parent
    mode = path.stat().st_mode & 0o7777 if path.exists() else 0o644
    handle, temporary = tempfile.mkstemp(dir=directory, prefix=f".{path.name}.", suffix=".tmp")
    try:
        with os.fdopen(handle, "w", encoding="utf-8", newline="") as fileobj:
            fileobj.write(text)
            fileobj.flush()
            os.fsync(fileobj.fileno())
        os.chmod(temporary, mode)
        os.replace(temporary, path)
    except BaseException:
        if os.path.exists(temporary):
            os.unlink(temporary)
        raise
    directory_fd = os.open(directory, os.O_RDONLY)
    try:
        os.fsync(directory_fd)
    finally:
        os.close(directory_fd)
