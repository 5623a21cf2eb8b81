"""Find the line of a key path in TOML text, and collect located errors while checking values.

The TOML parser (``tomli``, or the standard library's ``tomllib`` when tomli cannot be imported)
returns plain dicts without positions; this is a small, forgiving scanner over the same text. It is
only used to point at lines: when it cannot tell, it returns ``None`` or the line of the nearest
enclosing key, never an error. It runs only when a line is asked for that the quick index of
``[[name]]`` header lines cannot give (an error, in practice), so a valid file is never scanned.

The second half holds :class:`Problems`, which gathers every :class:`~siderod.common.errors.ConfigError`
of one file (with its line) so that a file is reported whole, and the ``read_*`` helpers that
check one value each for the configuration and target parsers.

Key paths are dotted names with 1-based indices for arrays and arrays of tables, spelled the way
messages show them to the user: ``site.latitude``, ``target[3].ra`` (the third ``[[target]]``
table), ``site.horizon[2]`` (the second element of the array), ``alerts.lead.flip-due``.
"""

from __future__ import annotations

import difflib
import json
import math
import re
from collections.abc import Callable, Collection, Mapping
from typing import Any

from siderod.common.errors import ConfigError, ConfigErrors

try:
    # tomli's wheels are compiled (mypyc): about 2.5 times as fast as the standard library's copy of
    # the same parser, which is most of the time `check` spends on a big target file (issue 13 item 4).
    import tomli as _toml
except ImportError:  # pragma: no cover - tomli is a plain dependency; this keeps a bare checkout working
    import tomllib as _toml

__all__ = [
    "MISSING",
    "Problems",
    "array_table_lines",
    "check_range",
    "key_lines",
    "locate_key",
    "parse_angle_value",
    "read_angle",
    "read_bool",
    "read_choice",
    "read_number",
    "read_string",
    "read_table",
    "show_value",
]


def locate_key(text: str, key_path: str) -> int | None:
    """Return the 1-based line where ``key_path`` is defined in ``text``, or None.

    When the exact path is not found (an array element on the same line as its key, a key that is
    missing altogether), the line of the nearest enclosing key or table is returned instead.

    Args:
        text: the TOML document.
        key_path: e.g. ``"target[3].ra"``, ``"site.horizon[2]"``, ``"alerts.lead.culmination"``.

    Returns:
        The line number, or None when not even the top-level key or table appears.

    >>> text = '[site]\\nname = "x"\\n\\n[[target]]\\nname = "a"\\n[[target]]\\nra = 1\\n'
    >>> locate_key(text, "target[2].ra")
    7
    """
    lines = key_lines(text)
    path = key_path
    while path:
        if path in lines:
            return lines[path]
        path = _parent(path)
    return None


def key_lines(text: str) -> dict[str, int]:
    """Map every key path defined in ``text`` to the 1-based line where it starts.

    Tables and arrays of tables map to their header line; array elements and inline-table keys
    to the line where they begin.
    """
    scanner = _Scanner(text)
    scanner.run()
    return scanner.lines


def array_table_lines(text: str, name: str, data: Mapping[str, Any]) -> list[int] | None:
    """The lines of the ``[[name]]`` headers of a top-level array of tables, in order, or None.

    A quick index for the commonest question about a big target file (the line of each
    ``[[target]]`` table), found with one regular expression instead of :func:`key_lines`'s scan.
    It answers only when it is sure to agree with the scan, else None:

    - ``data`` is the document as parsed, so the text is valid TOML. Then a line that starts with
      ``[[name]]`` (bare name) is a header unless it lies inside a multi-line string: a bare name
      is no TOML value, so such a line cannot be an element of a multi-line array either.
    - the text holds no multi-line string, and
    - the headers found are as many as the parsed array's tables (so none is spelled another way,
      e.g. ``[["name"]]``).

    >>> text = '[[target]]\\nname = "a"\\n\\n[[target]]  # two\\nname = "b"\\n'
    >>> array_table_lines(text, "target", {"target": [{"name": "a"}, {"name": "b"}]})
    [1, 4]
    """
    tables = data.get(name)
    if not isinstance(tables, list) or '"""' in text or "'''" in text:
        return None
    pattern = re.compile(rf"^[ \t]*\[\[[ \t]*{re.escape(name)}[ \t]*\]\]", re.MULTILINE)
    lines: list[int] = []
    line, last = 1, 0
    count = text.count
    for match in pattern.finditer(text):
        start = match.start()
        line += count("\n", last, start)
        last = start
        lines.append(line)
    return lines if len(lines) == len(tables) else None


# ---------------------------------------------------------------------------------------------
# helpers

_ARRAY_TABLE_PATH = re.compile(r"([A-Za-z0-9_-]+)\[(\d+)\]")
_BARE_KEY = re.compile(r"[A-Za-z0-9_-]+")
_INDEX = re.compile(r"\[\d+\]$")


def _parent(path: str) -> str:
    if _INDEX.search(path):
        return path[: path.rindex("[")]
    return path.rpartition(".")[0]


def _join(prefix: str, key: str) -> str:
    return f"{prefix}.{key}" if prefix else key


class _Scanner:
    def __init__(self, text: str) -> None:
        self.text = text
        self.lines: dict[str, int] = {}
        self.array_tables: dict[str, int] = {}  # resolved path of an array of tables -> count
        # Line numbers are counted on from the last recorded position, not from the start of the
        # text each time (which made a 20k-target file take 28 s: quadratic in its length).
        self._line_pos = 0
        self._line = 1

    def _line_at(self, pos: int) -> int:
        if pos >= self._line_pos:
            self._line += self.text.count("\n", self._line_pos, pos)
        else:  # a rare step back (a key recorded after a value inside it): count the difference
            self._line -= self.text.count("\n", pos, self._line_pos)
        self._line_pos = pos
        return self._line

    def record(self, path: str, pos: int) -> None:
        line = self._line_at(pos)
        if path not in self.lines:
            self.lines[path] = line

    def run(self) -> None:
        text = self.text
        pos = 0
        prefix = ""
        while pos < len(text):
            pos = self._skip_blank(pos, newlines=True)
            if pos >= len(text):
                break
            if text.startswith("[[", pos):
                end = text.find("]]", pos)
                if end < 0:
                    return
                parts = self._read_dotted(text[pos + 2 : end])
                parent = self._resolve(parts[:-1])
                name = _join(parent, parts[-1]) if parts else parent
                count = self.array_tables[name] = self.array_tables.get(name, 0) + 1
                prefix = f"{name}[{count}]"
                self.record(name, pos)
                self.record(prefix, pos)
                pos = self._next_line(end)
            elif text[pos] == "[":
                end = text.find("]", pos)
                if end < 0:
                    return
                prefix = self._resolve(self._read_dotted(text[pos + 1 : end]))
                self.record(prefix, pos)
                pos = self._next_line(end)
            else:
                pos = self._key_value(pos, prefix)
                pos = self._next_line(pos)

    def _resolve(self, parts: list[str]) -> str:
        """Resolve a table name, stepping into the latest element of any array of tables."""
        path = ""
        for part in parts:
            path = _join(path, part)
            if path in self.array_tables:
                path = f"{path}[{self.array_tables[path]}]"
        return path

    def _read_dotted(self, key_text: str) -> list[str]:
        parts = []
        for piece in re.findall(r'"(?:[^"\\]|\\.)*"|\'[^\']*\'|[^.]+', key_text):
            piece = piece.strip()
            if piece[:1] in "\"'":
                piece = piece[1:-1]
            if piece:
                parts.append(piece)
        return parts

    def _key_value(self, pos: int, prefix: str) -> int:
        """Read ``key = value`` at pos; record it and what is inside; return the end position."""
        key_end = self._key_end(pos)
        if key_end is None:
            return pos
        key = ".".join(self._read_dotted(self.text[pos:key_end]))
        path = _join(prefix, key)
        self.record(path, pos)
        value_pos = self._skip_blank(key_end + 1, newlines=False)
        return self._value(value_pos, path)

    def _key_end(self, pos: int) -> int | None:
        """Position of the ``=`` ending the key that starts at pos (quote-aware), or None."""
        text = self.text
        i = pos
        while i < len(text) and text[i] != "\n":
            c = text[i]
            if c in "\"'":
                i = self._skip_string(i)
                continue
            if c == "=":
                return i
            if c == "#":
                return None
            i += 1
        return None

    def _value(self, pos: int, path: str) -> int:
        text = self.text
        if pos >= len(text):
            return pos
        c = text[pos]
        if c == "[":
            return self._array(pos, path)
        if c == "{":
            return self._inline_table(pos, path)
        if c in "\"'":
            return self._skip_string(pos)
        while pos < len(text) and text[pos] not in ",]}\n#":
            pos += 1
        return pos

    def _array(self, pos: int, path: str) -> int:
        text = self.text
        pos += 1
        count = 0
        expecting = True
        while pos < len(text):
            pos = self._skip_blank(pos, newlines=True)
            if pos >= len(text):
                break
            c = text[pos]
            if c == "]":
                return pos + 1
            if c == ",":
                expecting = True
                pos += 1
                continue
            if expecting:
                count += 1
                element = f"{path}[{count}]"
                self.record(element, pos)
                expecting = False
                pos = self._value(pos, element)
            else:
                pos += 1  # malformed: keep going so later lines are still indexed
        return pos

    def _inline_table(self, pos: int, path: str) -> int:
        text = self.text
        pos += 1
        while pos < len(text):
            pos = self._skip_blank(pos, newlines=True)
            if pos >= len(text):
                break
            c = text[pos]
            if c == "}":
                return pos + 1
            if c == ",":
                pos += 1
                continue
            key_end = self._key_end(pos)
            if key_end is None:
                return pos
            key = ".".join(self._read_dotted(text[pos:key_end]))
            member = _join(path, key)
            self.record(member, pos)
            pos = self._value(self._skip_blank(key_end + 1, newlines=False), member)
        return pos

    def _skip_blank(self, pos: int, *, newlines: bool) -> int:
        """Skip spaces, tabs, comments and (optionally) newlines."""
        text = self.text
        while pos < len(text):
            c = text[pos]
            if c in " \t\r" or (newlines and c == "\n"):
                pos += 1
            elif c == "#":
                end = text.find("\n", pos)
                pos = len(text) if end < 0 else (end + 1 if newlines else end)
            else:
                break
        return pos

    def _skip_string(self, pos: int) -> int:
        text = self.text
        for fence in ('"""', "'''"):
            if text.startswith(fence, pos):
                i = pos + 3
                while True:
                    j = text.find(fence, i)
                    if j < 0:
                        return len(text)
                    if fence == '"""' and _escaped(text, j):
                        i = j + 1
                        continue
                    end = j + 3
                    while end < len(text) and text[end] == fence[0]:  # up to two quotes may precede
                        end += 1
                    return end
        quote = text[pos]
        i = pos + 1
        while i < len(text) and text[i] != "\n":
            if text[i] == "\\" and quote == '"':
                i += 2
                continue
            if text[i] == quote:
                return i + 1
            i += 1
        return i

    def _next_line(self, pos: int) -> int:
        end = self.text.find("\n", pos)
        return len(self.text) if end < 0 else end + 1


def _escaped(text: str, j: int) -> bool:
    backslashes = 0
    while j - 1 - backslashes >= 0 and text[j - 1 - backslashes] == "\\":
        backslashes += 1
    return backslashes % 2 == 1


# ---------------------------------------------------------------------------------------------
# collecting located errors


class _Missing:
    def __repr__(self) -> str:
        return "MISSING"


#: Default for ``read_*`` helpers meaning "this key is required".
MISSING: Any = _Missing()


class Problems:
    """Every problem found in one file, each located by line.

    Args:
        path: the file as the user should see it in messages.
        text: the file's text (used to find lines of key paths).
    """

    def __init__(self, path: str, text: str) -> None:
        self.path = path
        self.text = text
        self.errors: list[ConfigError] = []
        self._lines: dict[str, int] | None = None
        self._data: dict[str, Any] | None = None
        self._headers: dict[str, list[int] | None] = {}

    def line_of(self, key_path: str) -> int | None:
        """The line of ``key_path`` (or of its nearest enclosing key)."""
        if self._lines is None:
            if (match := _ARRAY_TABLE_PATH.fullmatch(key_path)) is not None:
                headers = self.header_lines(match[1])
                number = int(match[2])
                if headers is not None and 0 < number <= len(headers):
                    return headers[number - 1]
            self._lines = key_lines(self.text)
        path = key_path
        while path:
            if path in self._lines:
                return self._lines[path]
            path = _parent(path)
        return None

    def header_lines(self, name: str) -> list[int] | None:
        """The lines of the document's ``[[name]]`` headers from the quick index
        (:func:`array_table_lines`), or None when it cannot be sure; call after :meth:`parse_toml`.
        The ``number``-th entry is ``line_of(f"{name}[{number}]")``."""
        if name not in self._headers:
            self._headers[name] = None if self._data is None else array_table_lines(
                self.text, name, self._data)
        return self._headers[name]

    def add(self, key: str, got: str, expected: str, *, line: int | None = None) -> None:
        """Record one problem; its line is looked up from ``key`` unless given."""
        if line is None and key:
            line = self.line_of(key)
        self.errors.append(ConfigError(self.path, line, key, got, expected))

    def parse_toml(self) -> dict[str, Any] | None:
        """Parse the text as TOML; on a syntax error record it (with its line) and return None."""
        try:
            self._data = _toml.loads(self.text)
            return self._data
        except _toml.TOMLDecodeError as exc:
            message = str(exc)
            line = None
            if match := re.search(r"\(at line (\d+), column (\d+)\)", message):
                line = int(match[1])
            elif "end of document" in message:
                # the last line that has text (tomli's and 3.14's lineno count the empty one after
                # a final newline): the same line whichever parser read the file
                line = self.text.count("\n") + (0 if self.text.endswith("\n") else 1)
            # tomli and Python 3.14 have exc.lineno; 3.11-3.13's tomllib puts it only in the message.
            line = line or getattr(exc, "lineno", None)
            reason = re.sub(r"\s*\(at (line \d+, column \d+|end of document)\)", "", message)
            shown = ""
            if line is not None:
                lines = self.text.splitlines()
                if 0 < line <= len(lines):
                    shown = json.dumps(lines[line - 1].strip(), ensure_ascii=False)
            self.add("", shown, f"valid TOML ({reason})", line=line)
            return None
        except ValueError as exc:
            # the parser lets int()'s digit limit (4300 digits) through as a plain ValueError.
            match = re.search(r"[0-9_]{4300,}", self.text)
            line = self.text.count("\n", 0, match.start()) + 1 if match else None
            self.add("", "an integer too long to read", f"valid TOML with shorter numbers ({exc})", line=line)
            return None

    def unknown_keys(self, table: Mapping[str, Any], allowed: Collection[str], prefix: str) -> None:
        """Record an error for every key of ``table`` not in ``allowed``, with a "did you mean"."""
        for key in table:
            if key in allowed:
                continue
            choices = ", ".join(sorted(allowed))
            close = difflib.get_close_matches(key, list(allowed), n=1, cutoff=0.6)
            hint = f' -- did you mean "{close[0]}"?' if close else ""
            where = f"in [{prefix}]" if prefix else "at the top level"
            self.add(_join(prefix, key), f'unknown key "{key}"', f"one of the keys {where}: {choices}{hint}")

    def sorted_errors(self) -> list[ConfigError]:
        """The errors in line order (errors without a line first, in the order found)."""
        return sorted(self.errors, key=lambda e: e.line or 0)

    def raise_if_any(self) -> None:
        if self.errors:
            raise ConfigErrors(self.sorted_errors())


# ---------------------------------------------------------------------------------------------
# reading one checked value
#
# Each reader returns the value, the default when the key is absent, or None after recording a
# problem. Callers go on checking the rest of the file either way and raise at the end.


def show_value(value: Any) -> str:
    """A value as the user wrote it, near enough: TOML/JSON spelling (strings quoted)."""
    try:
        return json.dumps(value, ensure_ascii=False, default=str)
    except (TypeError, ValueError):
        return repr(value)


def read_table(problems: Problems, data: Mapping[str, Any], key: str, prefix: str,
               allowed: Collection[str]) -> dict[str, Any]:
    """Return the sub-table ``key`` (empty when absent), checking its keys against ``allowed``."""
    path = _join(prefix, key)
    value = data.get(key, {})
    if not isinstance(value, dict):
        problems.add(path, show_value(value), f"a table [{path}]")
        return {}
    problems.unknown_keys(value, allowed, path)
    return value


def read_number(problems: Problems, data: Mapping[str, Any], key: str, prefix: str, *,
                default: Any = MISSING, low: float | None = None, high: float | None = None,
                low_open: bool = False, high_open: bool = False, what: str = "a number") -> Any:
    """Read an int or float (not a bool, not text) within [low, high] (or open ends)."""
    path = _join(prefix, key)
    if key not in data:
        return _absent(problems, path, default, what)
    value = data[key]
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not _finite(value):
        problems.add(path, show_value(value), what + _range_text(low, high, low_open, high_open))
        return None
    return check_range(problems, path, float(value), show_value(value), what,
                       low, high, low_open, high_open)


def check_range(problems: Problems, path: str, value: float, shown: str, what: str,
                low: float | None, high: float | None, low_open: bool = False,
                high_open: bool = False) -> float | None:
    """Return ``value`` if it lies in the range, else record a problem and return None."""
    too_low = low is not None and (value <= low if low_open else value < low)
    too_high = high is not None and (value >= high if high_open else value > high)
    if too_low or too_high:
        problems.add(path, shown, what + _range_text(low, high, low_open, high_open))
        return None
    return value


def read_angle(problems: Problems, data: Mapping[str, Any], key: str, prefix: str, *, kind: str,
               default: Any = MISSING, low: float | None = None, high: float | None = None,
               low_open: bool = False, what: str = "an angle") -> Any:
    """Read an angle in any form :func:`siderod.astro.angles.parse_angle_deg` accepts; degrees."""
    path = _join(prefix, key)
    if key not in data:
        return _absent(problems, path, default, what)
    return parse_angle_value(problems, path, data[key], kind=kind, low=low, high=high,
                             low_open=low_open, what=what)


def parse_angle_value(problems: Problems, path: str, value: Any, *, kind: str,
                      low: float | None = None, high: float | None = None, low_open: bool = False,
                      high_open: bool = False, what: str = "an angle",
                      scale: float = 1.0, unit: str = "degrees") -> float | None:
    """Parse one angle value already taken from the document; degrees, or None after a problem.

    The range [low, high] is in degrees divided by ``scale`` (``scale=15, unit="hours"`` checks an
    hour angle in hours), so the message speaks the user's unit.
    """
    from siderod.astro.angles import AngleParseError, parse_angle_deg

    try:
        deg = parse_angle_deg(value, kind=kind)
    except AngleParseError as exc:
        problems.add(path, show_value(value), f"{what}: {exc.reason}; accepted forms: {_accepted(exc)}")
        return None
    except OverflowError:  # an integer too large for a float (TOML integers have no size limit)
        problems.add(path, show_value(value), f"{what}: a number of sensible size")
        return None
    checked = check_range(problems, path, deg / scale, show_value(value), f"{what} in {unit}", low, high,
                          low_open, high_open)
    return None if checked is None else deg


def read_bool(problems: Problems, data: Mapping[str, Any], key: str, prefix: str, *,
              default: Any = MISSING) -> Any:
    path = _join(prefix, key)
    if key not in data:
        return _absent(problems, path, default, "true or false")
    value = data[key]
    if not isinstance(value, bool):
        problems.add(path, show_value(value), "true or false (without quotes)")
        return None
    return value


def read_string(problems: Problems, data: Mapping[str, Any], key: str, prefix: str, *,
                default: Any = MISSING, what: str = "a non-empty text in quotes") -> Any:
    path = _join(prefix, key)
    if key not in data:
        return _absent(problems, path, default, what)
    value = data[key]
    if not isinstance(value, str) or not value.strip():
        problems.add(path, show_value(value), what)
        return None
    return value


def read_choice(problems: Problems, data: Mapping[str, Any], key: str, prefix: str,
                choices: Collection[str], *, default: Any = MISSING,
                convert: Callable[[str], Any] | None = None) -> Any:
    """Read one of a fixed set of strings; the message lists them all."""
    path = _join(prefix, key)
    listed = " | ".join(f'"{c}"' for c in choices)
    if key not in data:
        return _absent(problems, path, default, f"one of {listed}")
    value = data[key]
    if value not in choices or not isinstance(value, str):
        close = difflib.get_close_matches(str(value), list(choices), n=1, cutoff=0.6)
        hint = f' -- did you mean "{close[0]}"?' if close else ""
        problems.add(path, show_value(value), f"one of {listed}{hint}")
        return None
    return convert(value) if convert else value


def _finite(value: float) -> bool:
    """``math.isfinite`` that says False, not OverflowError, for an integer too large for a float."""
    try:
        return math.isfinite(value)
    except OverflowError:
        return False


def _absent(problems: Problems, path: str, default: Any, what: str) -> Any:
    if default is MISSING:
        problems.add(path, "nothing (the key is missing)", f"{path.rpartition('.')[2]} = {what}")
        return None
    return default


def _range_text(low: float | None, high: float | None, low_open: bool, high_open: bool) -> str:
    if low is None and high is None:
        return ""
    if high is None:
        return f" {'>' if low_open else '>='} {low:g}"
    if low is None:
        return f" {'<' if high_open else '<='} {high:g}"
    return f" in {'(' if low_open else '['}{low:g}, {high:g}{')' if high_open else ']'}"


def _accepted(exc: Exception) -> str:
    text = str(exc)
    return text.partition("accepted forms: ")[2] or "see the README"
