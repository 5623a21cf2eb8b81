"""The open deep-sky catalogue (OpenNGC, shipped by the ``pyongc`` package), read offline.

OpenNGC lists the NGC and IC objects, the Messier objects and some others, with common names,
cross-identifications, types, magnitudes, sizes and J2000 (ICRS) places. We read its SQLite file
directly (read-only, no network) rather than through pyongc's API: one query per name instead of
a Python object per row, and no import of the library itself. The file is found once per process,
on first use, and a missing package is a clear :class:`CatalogueMissing` error.

Names are matched case- and space-insensitively: ``M31``, ``m 31``, ``Messier 31``, ``NGC 224``,
``NGC0224``, ``IC 434``, ``C 20``, ``PGC 2557``, and common names such as ``Andromeda Galaxy``
(a leading "the" is ignored). Duplicate records in the catalogue lead to their main entry.
"""

from __future__ import annotations

import importlib.util
import math
import re
import threading
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

from siderod.common.errors import CatalogueMissing, CatalogueNameError

if TYPE_CHECKING:
    import numpy as np

__all__ = [
    "CATALOGUE_CREDIT",
    "KIND_GROUPS",
    "Catalogue",
    "CatalogueArrays",
    "CatalogueInfo",
    "Entry",
    "catalogue_info",
    "format_designation",
    "normalise_name",
    "open_catalogue",
    "place_from_catalogue",
]

#: What the catalogue's licence (CC-BY-SA-4.0) asks us to say wherever its data is used.
CATALOGUE_CREDIT = (
    "OpenNGC, the open database of NGC, IC and Messier objects, by Mattia Verga and contributors "
    "(https://github.com/mattiaverga/OpenNGC), licensed CC-BY-SA-4.0; read through the pyongc "
    "package (MIT)"
)

#: Our own kind names for the catalogue's type codes, for filters and tables.
KIND_GROUPS: dict[str, tuple[str, ...]] = {
    "galaxy": ("G", "GPair", "GTrpl", "GGroup"),
    "open-cluster": ("OCl", "*Ass"),
    "globular": ("GCl",),
    "planetary": ("PN",),
    "nebula": ("HII", "EmN", "Neb", "RfN", "Cl+N", "DrkN"),
    "remnant": ("SNR",),
    "star": ("*", "**", "Nova"),
    "other": ("Other",),
}
# Rows that are not objects to look at: duplicates of another record and "nonexistent" entries.
_HIDDEN_TYPES = ("Dup", "NonEx")
_PREFIX_ALIASES = {"MESSIER": "M", "CALDWELL": "C", "MELOTTE": "MEL", "COLLINDER": "CR"}
_PADDED_WIDTH_MAX = 6
_SUGGESTIONS = 6
_PACKAGE = "pyongc"  # the package that ships the catalogue file (ongc.db)


@dataclass(frozen=True, slots=True)
class CatalogueInfo:
    """Where the catalogue was found and which edition it is."""

    path: str
    package_version: str
    data_date: str  # "2026-05-01", from pyongc's DBDATE, or "" when unknown


@dataclass(frozen=True, slots=True)
class Entry:
    """One catalogue object, as the catalogue gives it.

    ``ra_deg``/``dec_deg`` are J2000 (ICRS) places in degrees. Magnitudes and sizes are None
    when the catalogue has no value. ``kind`` is our group name (see :data:`KIND_GROUPS`),
    ``type_code``/``type_text`` the catalogue's own.
    """

    designation: str  # the catalogue's main identifier, spaced: "NGC 224", "Mel 22"
    messier: str  # "M 31", or ""
    common_names: tuple[str, ...]
    type_code: str
    type_text: str
    kind: str
    ra_deg: float
    dec_deg: float
    constellation: str  # IAU abbreviation, "" when the catalogue has none
    magnitude_v: float | None
    magnitude_b: float | None
    major_arcmin: float | None
    minor_arcmin: float | None
    other_ids: tuple[str, ...]
    notes: str

    @property
    def label(self) -> str:
        """The name observers use first: the Messier number when there is one."""
        return self.messier or self.designation

    @property
    def magnitude(self) -> float | None:
        """V magnitude, else B, else None."""
        return self.magnitude_v if self.magnitude_v is not None else self.magnitude_b


@dataclass(frozen=True, eq=False)
class CatalogueArrays:
    """The whole catalogue as arrays of shape (N,), for filtering and ranking without a row object each.

    Attributes:
        labels: the observer's name of each object ("M 31", "NGC 7000").
        kinds: our group name of each object.
        ra_deg, dec_deg: J2000 (ICRS) places, degrees.
        magnitude: V, else B magnitude; nan when unknown.
        major_arcmin: major axis, arcminutes; nan when unknown.
        constellations: IAU abbreviations.
    """

    labels: np.ndarray
    kinds: np.ndarray
    ra_deg: np.ndarray
    dec_deg: np.ndarray
    magnitude: np.ndarray
    major_arcmin: np.ndarray
    constellations: np.ndarray


def open_catalogue() -> Catalogue:
    """The process's catalogue, opened on first use.

    Raises:
        CatalogueMissing: the pyongc package (which ships the data) is not installed.
    """
    global _OPENED
    with _LOCK:
        if _OPENED is None:
            _OPENED = Catalogue(catalogue_info())
        return _OPENED


def catalogue_info() -> CatalogueInfo:
    """Find the catalogue file without importing pyongc (its import costs more than our query).

    Raises:
        CatalogueMissing: pyongc is not installed, or its data file is missing.
    """
    spec = importlib.util.find_spec(_PACKAGE)
    if spec is None or not spec.submodule_search_locations:
        raise CatalogueMissing("the deep-sky catalogue is not installed: siderod reads it from the pyongc "
                               "package, a dependency of siderod; install it with `pip install pyongc` "
                               "(or reinstall siderod)")
    folder = Path(next(iter(spec.submodule_search_locations)))
    path = folder / "ongc.db"
    if not path.is_file():
        raise CatalogueMissing(f"the pyongc package has no catalogue file ({path} is missing); reinstall "
                               "it with `pip install --force-reinstall pyongc`")
    # The version from the wheel's dist-info folder name beside the package: importlib.metadata
    # would scan every installed distribution, which costs more than the whole look-up.
    found_dist = sorted(folder.parent.glob("[Pp]y[Oo]ngc-*.dist-info"))
    if found_dist:
        version = found_dist[-1].name[len("pyongc-"):-len(".dist-info")]
    else:
        from importlib import metadata

        try:
            version = metadata.version("PyOngc")
        except metadata.PackageNotFoundError:
            version = "?"
    data_date = ""
    try:
        found = re.search(r"DBDATE\s*=\s*(\d{8})", (folder / "__init__.py").read_text(encoding="utf-8"))
    except OSError:
        found = None
    if found:
        digits = found[1]
        data_date = f"{digits[:4]}-{digits[4:6]}-{digits[6:]}"
    return CatalogueInfo(path=str(path), package_version=version, data_date=data_date)


def normalise_name(text: str) -> str:
    """The form names are compared in: upper case, no spaces or punctuation, no leading "the".

    >>> normalise_name(" the  Andromeda galaxy ")
    'ANDROMEDAGALAXY'
    >>> normalise_name("h & chi Persei")
    'H&CHIPERSEI'
    """
    text = re.sub(r"^\s*the\s+", "", text, flags=re.IGNORECASE)
    return re.sub(r"[\s'’.,_]+", "", text).upper()


def format_designation(name: str) -> str:
    """The catalogue's main identifier with a space and without padding: "NGC0224" -> "NGC 224".

    >>> [format_designation(n) for n in ("NGC0224", "IC0434", "Mel022", "ESO056-115", "NGC0224A")]
    ['NGC 224', 'IC 434', 'Mel 22', 'ESO 56-115', 'NGC 224A']
    """
    match = _DESIGNATION.fullmatch(name)
    if not match:
        return name
    return f"{match[1]} {int(match[2])}{match[3]}"


class Catalogue:
    """Name look-ups, searches and whole-catalogue arrays over one read-only catalogue file.

    Use :func:`open_catalogue` rather than building one: the file is opened once per process.
    """

    def __init__(self, info: CatalogueInfo) -> None:
        import sqlite3

        self.info = info
        uri = Path(info.path).resolve().as_uri() + "?mode=ro&immutable=1"
        # Read-only and immutable: no journal, no lock files, nothing written next to the package.
        self._db = sqlite3.connect(uri, uri=True, check_same_thread=False)
        self._db_lock = threading.Lock()
        self._types: dict[str, str] | None = None
        self._common: list[tuple[str, str, str]] | None = None  # (normalised, as written, object name)
        self._arrays: CatalogueArrays | None = None

    # -- names -------------------------------------------------------------------------------

    def find(self, name: str) -> Entry:
        """The one entry a name means.

        Raises:
            CatalogueNameError: no entry, or several, go by that name; ``.suggestions`` lists the
                closest matches ("M 101 (NGC 5457)").
        """
        names = self._object_names_for(name)
        if len(names) == 1:
            return self._entry(next(iter(names)))
        if names:
            entries = sorted((self._entry(n) for n in names), key=lambda e: e.label)
            raise CatalogueNameError(name, "ambiguous", tuple(_describe(e) for e in entries))
        return self._raise_unknown(name)

    def entries_named(self, object_names: list[str]) -> list[Entry]:
        """Entries for catalogue main identifiers (as stored, e.g. "NGC0224"), in the order given."""
        return [self._entry(n) for n in object_names]

    def search(self, *, part: str | None = None, kinds: tuple[str, ...] = (),
               brighter_than: float | None = None, larger_than_arcmin: float | None = None,
               constellation: str | None = None, limit: int | None = None) -> list[Entry]:
        """Entries matching every filter given, brightest first (unknown magnitudes last).

        Args:
            part: part of any name (identifier, cross-identification or common name), any case and spacing.
            kinds: our kind names (:data:`KIND_GROUPS`); any of them matches.
            brighter_than: magnitude limit (V, else B); entries without a magnitude are left out.
            larger_than_arcmin: major axis at least this, arcminutes.
            constellation: IAU abbreviation ("Cyg") or, case-insensitively, the catalogue's spelling.
            limit: at most this many entries.
        """
        where = [f"o.type NOT IN ({','.join('?' * len(_HIDDEN_TYPES))})", "o.ra IS NOT NULL"]
        params: list[Any] = list(_HIDDEN_TYPES)
        if kinds:
            codes = [code for kind in kinds for code in KIND_GROUPS[kind]]
            where.append(f"o.type IN ({','.join('?' * len(codes))})")
            params.extend(codes)
        if brighter_than is not None:
            where.append("COALESCE(o.vmag, o.bmag) <= ?")
            params.append(float(brighter_than))
        if larger_than_arcmin is not None:
            where.append("o.majax >= ?")
            params.append(float(larger_than_arcmin))
        if constellation:
            where.append("lower(o.const) = lower(?)")
            params.append(constellation.strip())
        names: list[str]
        sql = ("SELECT o.name FROM objects o WHERE " + " AND ".join(where)
               + " ORDER BY COALESCE(o.vmag, o.bmag) IS NULL, COALESCE(o.vmag, o.bmag), o.name")
        rows = [r[0] for r in self._query(sql, params)]
        if part:
            wanted = set(self._object_names_containing(part))
            rows = [r for r in rows if r in wanted]
        names = rows[:limit] if limit else rows
        return self.entries_named(names)

    # -- arrays --------------------------------------------------------------------------------

    def arrays(self) -> CatalogueArrays:
        """Every object with a place (duplicates and nonexistent entries left out), as arrays."""
        if self._arrays is None:
            import numpy as np  # here, not at the top: `siderod --help` and quick verbs import this module

            rows = self._query(
                "SELECT name, messier, type, ra, dec, COALESCE(vmag, bmag), majax, const FROM objects "
                f"WHERE type NOT IN ({','.join('?' * len(_HIDDEN_TYPES))}) AND ra IS NOT NULL ORDER BY id",
                list(_HIDDEN_TYPES))
            kind_of = {code: kind for kind, codes in KIND_GROUPS.items() for code in codes}
            names, messier, types, ra, dec, mag, size, const = zip(*rows, strict=True)
            labels = [f"M {int(m)}" if m else format_designation(n)
                      for n, m in zip(names, messier, strict=True)]
            self._arrays = CatalogueArrays(
                labels=np.array(labels, dtype=object),
                kinds=np.array([kind_of.get(t, "other") for t in types], dtype=object),
                ra_deg=np.degrees(np.array(ra, dtype=float)),
                dec_deg=np.degrees(np.array(dec, dtype=float)),
                magnitude=np.array(mag, dtype=float),
                major_arcmin=np.array(size, dtype=float),
                constellations=np.array(const, dtype=object),
            )
        return self._arrays

    # -- helpers -------------------------------------------------------------------------------

    def _query(self, sql: str, params: list[Any] | tuple[Any, ...] = ()) -> list[tuple]:
        with self._db_lock:
            return self._db.execute(sql, params).fetchall()

    def _object_names_for(self, name: str) -> set[str]:
        """Main identifiers of the objects ``name`` exactly means (duplicates resolved)."""
        key = normalise_name(name)
        if not key:
            return set()
        key = _apply_prefix_alias(key)
        found: set[str] = set()
        messier = re.fullmatch(r"M0*(\d{1,3})", key)
        if messier:
            number = f"{int(messier[1]):03d}"
            found.update(r[0] for r in self._query(
                "SELECT name FROM objects WHERE messier = ? AND type != 'Dup'", (number,)))
            if found:
                return found
        candidates = _padded_forms(key)
        rows = self._query(f"SELECT DISTINCT name FROM objIdentifiers WHERE identifier IN "
                           f"({','.join('?' * len(candidates))})", candidates)
        found.update(self._main_name(r[0]) for r in rows)
        for normalised, _, object_name in self._common_names():
            if normalised == key:
                found.add(self._main_name(object_name))
        found.discard("")
        return found

    def _main_name(self, object_name: str) -> str:
        """Follow a duplicate record to the entry it duplicates."""
        row = self._query("SELECT type, ngc, ic, messier FROM objects WHERE name = ?", (object_name,))
        if not row or row[0][0] != "Dup":
            return object_name
        _, ngc, ic, messier = row[0]
        if ngc:
            target = f"NGC{ngc}"
        elif ic:
            target = f"IC{ic}"
        elif messier:
            main = self._query("SELECT name FROM objects WHERE messier = ? AND type != 'Dup'", (messier,))
            return main[0][0] if main else ""
        else:
            return ""
        main = self._query("SELECT name FROM objIdentifiers WHERE identifier = ?", (target,))
        return main[0][0] if main else ""

    def _common_names(self) -> list[tuple[str, str, str]]:
        if self._common is None:
            rows = self._query("SELECT name, commonnames FROM objects WHERE commonnames != ''")
            self._common = [(normalise_name(c), c.strip(), n) for n, names in rows for c in names.split(",")
                            if c.strip()]
        return self._common

    def _object_names_containing(self, part: str) -> list[str]:
        """Main identifiers of objects with ``part`` in any of their names."""
        key = normalise_name(part)
        if not key:
            return []
        exact = self._object_names_for(part)
        like = f"%{key}%"
        rows = self._query("SELECT DISTINCT name FROM objIdentifiers WHERE identifier LIKE ?", (like,))
        found = [*exact, *(self._main_name(r[0]) for r in rows)]
        found += [self._main_name(n) for normalised, _, n in self._common_names() if key in normalised]
        return [n for n in dict.fromkeys(found) if n]

    def _raise_unknown(self, name: str) -> Entry:
        key = normalise_name(name)
        suggestions: list[str] = []
        if len(key) >= 3:
            for object_name in self._object_names_containing(name)[:_SUGGESTIONS]:
                suggestions.append(_describe(self._entry(object_name)))
        if len(suggestions) < _SUGGESTIONS:
            import difflib

            common = self._common_names()
            close = difflib.get_close_matches(key, [c[0] for c in common], n=_SUGGESTIONS, cutoff=0.6)
            for normalised in close:
                object_name = next(n for c, _, n in common if c == normalised)
                text = _describe(self._entry(self._main_name(object_name)))
                if text not in suggestions:
                    suggestions.append(text)
        raise CatalogueNameError(name, "unknown", tuple(suggestions[:_SUGGESTIONS]))

    def _type_texts(self) -> dict[str, str]:
        if self._types is None:
            self._types = dict(self._query("SELECT type, typedesc FROM objTypes"))
        return self._types

    def _entry(self, object_name: str) -> Entry:
        row = self._query(
            "SELECT name, messier, commonnames, type, ra, dec, const, vmag, bmag, majax, minax, ngc, ic, "
            "identifiers, ongcnotes FROM objects WHERE name = ?", (object_name,))[0]
        name, messier, common, type_code, ra, dec, const, vmag, bmag, majax, minax, ngc, ic, ids, notes = row
        kind_of = {code: kind for kind, codes in KIND_GROUPS.items() for code in codes}
        others = [f"NGC {int(n)}" for n in ngc.split(",") if n.strip().isdigit()] if ngc else []
        others += [f"IC {int(n)}" for n in ic.split(",") if n.strip().isdigit()] if ic else []
        others += [i.strip() for i in ids.split(",") if i.strip()] if ids else []
        return Entry(
            designation=format_designation(name),
            messier=f"M {int(messier)}" if messier else "",
            common_names=tuple(c.strip() for c in common.split(",") if c.strip()) if common else (),
            type_code=type_code,
            type_text=self._type_texts().get(type_code, type_code),
            kind=kind_of.get(type_code, "other"),
            ra_deg=math.degrees(ra) if ra is not None else math.nan,
            dec_deg=math.degrees(dec) if dec is not None else math.nan,
            constellation=const or "",
            magnitude_v=vmag,
            magnitude_b=bmag,
            major_arcmin=majax,
            minor_arcmin=minax,
            other_ids=tuple(others),
            notes=notes or "",
        )


def _describe(entry: Entry) -> str:
    """A suggestion's text: "M 101 (NGC 5457)", "NGC 7000 (North America Nebula)"."""
    extra = [entry.designation] if entry.messier else []
    extra += list(entry.common_names[:1])
    return entry.label + (f" ({', '.join(extra)})" if extra else "")


def _apply_prefix_alias(key: str) -> str:
    for long, short in _PREFIX_ALIASES.items():
        if key.startswith(long) and key[len(long):len(long) + 1].isdigit():
            return short + key[len(long):]
    return key


def _padded_forms(key: str) -> list[str]:
    """The identifier as typed plus every zero-padded form the catalogue may store it in."""
    match = re.fullmatch(r"([A-Z]+)0*(\d+)(.*)", key)
    if not match:
        return [key]
    prefix, digits, rest = match[1], str(int(match[2])), match[3]
    widths = range(len(digits), _PADDED_WIDTH_MAX + 1)
    forms = [key] + [f"{prefix}{digits.zfill(width)}{rest}" for width in widths]
    if rest:  # components are stored with a space: "IC0700 NED04"
        forms += [f"{prefix}{digits.zfill(width)} {rest}" for width in widths]
    return list(dict.fromkeys(forms))


_DESIGNATION = re.compile(r"([A-Za-z]+)0*(\d+)(.*)")  # compiled once: applied to every row by arrays()
_LOCK = threading.Lock()
_OPENED: Catalogue | None = None


def place_from_catalogue(problems: Any, entry: dict[str, Any],
                         prefix: str) -> tuple[float, float, str] | None:
    """The J2000 (ICRS) place of a ``[[target]]`` table that has no coordinates, from the catalogue.

    The table's ``catalogue`` key names the entry when present, else its ``name``. Problems are
    recorded on that key, with the closest matches, and None is returned.

    Returns:
        ``(ra_deg, dec_deg, entry label)``, or None after recording a problem.
    """
    from siderod.files.tomlpos import read_string, show_value

    key = "catalogue" if "catalogue" in entry else "name"
    what = 'a catalogue name in quotes, like "NGC 7000"' if key == "catalogue" else "a target name in quotes"
    text = read_string(problems, entry, key, prefix, what=what)
    if text is None:
        return None
    path = f"{prefix}.{key}"
    try:
        found = open_catalogue().find(text)
    except CatalogueMissing as exc:
        problems.add(path, show_value(text), f"ra and dec: this target has no coordinates and {exc}")
        return None
    except CatalogueNameError as exc:
        if exc.reason == "ambiguous":
            problems.add(path, show_value(text), "a name that means one catalogue entry; it means several: "
                         f"{'; '.join(exc.suggestions)} (write catalogue = \"...\" with one of them)")
        else:
            close = f" (closest: {'; '.join(exc.suggestions)})" if exc.suggestions else ""
            hint = "" if key == "catalogue" else ", or coordinates ra and dec, or catalogue = \"...\""
            problems.add(path, show_value(text), f"a name the deep-sky catalogue knows{hint}{close}")
        return None
    return found.ra_deg, found.dec_deg, found.label
