"""siderod.files.catalogue: names resolved offline from the OpenNGC deep-sky catalogue.

References: the pyongc package's own API (``pyongc.ongc.Dso``), used here in tests only, must give
the same object and place as our direct reading of its data file; published places quoted from
memory (SIMBAD, J2000) check that the catalogue's places are J2000 and in degrees as we read them.
"""

from __future__ import annotations

import math

import pytest

from siderod.common.errors import CatalogueMissing, CatalogueNameError, ConfigErrors
from siderod.files import catalogue as catalogue_module
from siderod.files.catalogue import normalise_name, open_catalogue
from siderod.files.targets import parse_targets_toml

#: Our reading vs pyongc's own API: the same stored radians, so only float rounding differs.
SAME_DATA_TOL_DEG = 1e-9
#: Catalogue place vs a SIMBAD J2000 place quoted from memory to 0.1 s / 1": both round.
PUBLISHED_TOL_DEG = 5.0 / 3600.0


@pytest.fixture(scope="module")
def cat():
    return open_catalogue()


@pytest.mark.parametrize("spelling", ["M31", "M 31", "m31", "Messier 31", "NGC 224", "NGC0224", "ngc224",
                                      "  NGC   224 ", "Andromeda Galaxy", "the andromeda galaxy", "PGC 2557",
                                      "UGC 454"])
def test_every_spelling_of_m31_finds_ngc_224(cat, spelling):
    entry = cat.find(spelling)
    assert (entry.designation, entry.messier, entry.kind) == ("NGC 224", "M 31", "galaxy")


@pytest.mark.parametrize(("spelling", "label"), [
    ("IC 434", "IC 434"), ("IC0434", "IC 434"), ("C 20", "NGC 7000"), ("North America Nebula", "NGC 7000"),
    ("M45", "M 45"), ("Pleiades", "M 45"), ("Mel 22", "M 45"), ("M 1", "M 1"), ("Crab Nebula", "M 1"),
    ("IC 11", "NGC 281"),  # a duplicate record leads to its main entry
    ("M102", "M 101"),  # the catalogue follows NED in taking M 102 as a duplicate of M 101
])
def test_identifiers_cross_names_and_duplicates(cat, spelling, label):
    assert cat.find(spelling).label == label


@pytest.mark.parametrize("name", ["M31", "NGC 7000", "IC 434", "M45", "NGC 1976"])
def test_places_match_the_pyongc_api(cat, name):
    from pyongc.ongc import Dso  # reference: the library's own reader of the same data

    reference = Dso(name)
    ra_rad, dec_rad = reference.rad_coords
    entry = cat.find(name)
    assert entry.ra_deg == pytest.approx(math.degrees(ra_rad), abs=SAME_DATA_TOL_DEG)
    assert entry.dec_deg == pytest.approx(math.degrees(dec_rad), abs=SAME_DATA_TOL_DEG)
    assert catalogue_module.format_designation(reference.name) == entry.designation


@pytest.mark.parametrize(("name", "ra_deg", "dec_deg"), [
    ("M31", 10.684708, 41.268750),  # SIMBAD: 00 42 44.33 +41 16 07.5 (from memory)
    ("M42", 83.818662, -5.389679),  # SIMBAD: 05 35 16.48 -05 23 22.8 (from memory)
    ("M57", 283.396250, 33.029167),  # SIMBAD: 18 53 35.1 +33 01 45 (from memory)
])
def test_places_are_j2000_degrees(cat, name, ra_deg, dec_deg):
    entry = cat.find(name)
    assert entry.ra_deg == pytest.approx(ra_deg, abs=PUBLISHED_TOL_DEG / math.cos(math.radians(dec_deg)))
    assert entry.dec_deg == pytest.approx(dec_deg, abs=PUBLISHED_TOL_DEG)


def test_unknown_name_lists_the_closest(cat):
    with pytest.raises(CatalogueNameError) as info:
        cat.find("Andromeda Galxy")
    assert info.value.reason == "unknown"
    assert info.value.suggestions[0] == "M 31 (NGC 224, Andromeda Galaxy)"


def test_part_of_a_name_is_not_taken_as_the_name(cat):
    with pytest.raises(CatalogueNameError) as info:
        cat.find("Pinwheel")
    assert any("M 33" in s for s in info.value.suggestions)
    assert any("M 83" in s for s in info.value.suggestions)


def test_nothing_close_says_so(cat):
    with pytest.raises(CatalogueNameError, match="not in the deep-sky catalogue$"):
        cat.find("NGC 99999")


def test_search_filters(cat):
    found = cat.search(kinds=("galaxy",), brighter_than=9.0, constellation="uma")
    assert [e.label for e in found] == ["M 81", "M 101", "M 82"]  # brightest first
    assert all(e.constellation == "UMa" for e in found)
    large = cat.search(kinds=("nebula",), larger_than_arcmin=100.0)
    assert large and all(e.major_arcmin >= 100.0 and e.kind == "nebula" for e in large)
    assert "NGC 7000" in {e.label for e in cat.search(part="america")}


def test_arrays_hold_every_object_with_a_place(cat):
    arrays = cat.arrays()
    assert 13000 < len(arrays.labels) < 15000  # about 14,000 (the catalogue's own count, less duplicates)
    index = list(arrays.labels).index("M 31")
    assert arrays.ra_deg[index] == pytest.approx(cat.find("M31").ra_deg)
    assert set(arrays.kinds) <= set(catalogue_module.KIND_GROUPS)


def test_normalise_name():
    assert normalise_name("The  Pleiades") == normalise_name("pleiades") == "PLEIADES"


def test_missing_package_is_a_clear_error(monkeypatch):
    monkeypatch.setattr(catalogue_module, "_PACKAGE", "siderod_no_such_catalogue_package")
    monkeypatch.setattr(catalogue_module, "_OPENED", None)
    with pytest.raises(CatalogueMissing, match="pip install pyongc"):
        open_catalogue()
    with pytest.raises(ConfigErrors) as info:
        parse_targets_toml('[[target]]\nname = "M 31"\n', "t.toml")
    (error,) = info.value.errors
    assert (error.line, error.key) == (2, "target[1].name")
    assert "ra and dec" in error.expected and "pip install pyongc" in error.expected


def test_a_common_name_shared_by_two_entries_is_ambiguous(cat):
    # OpenNGC gives "Eagle Nebula" both to NGC 6611 (M 16, the cluster) and to IC 4703 (the nebula).
    with pytest.raises(CatalogueNameError) as info:
        cat.find("Eagle Nebula")
    assert info.value.reason == "ambiguous"
    assert [s.split()[0:2] for s in info.value.suggestions] == [["IC", "4703"], ["M", "16"]]


@pytest.mark.slow  # every Messier number, several spellings each
def test_every_messier_number_in_every_spelling(cat):
    for number in range(1, 111):
        expected = cat.find(f"M{number}")
        for spelling in (f"m {number}", f"Messier {number:03d}", f"  M{number:03d} "):
            assert cat.find(spelling) == expected, spelling
        if expected.designation.startswith(("NGC ", "IC ")):
            prefix, digits = expected.designation.split()[:2]
            if digits.isdigit():  # the main entry's own number, padded and spaced any way
                assert cat.find(f"{prefix.lower()}{int(digits):04d}") == expected
    assert cat.find("M 102") == cat.find("M 101")


@pytest.mark.slow
def test_every_ngc_ic_name_round_trips_through_its_designation(cat):
    arrays = cat.arrays()
    sample = [label for label in arrays.labels[::97] if label.startswith(("NGC ", "IC "))]
    assert len(sample) > 50
    for label in sample:
        assert cat.find(label).label == label
        assert cat.find(label.replace(" ", "").lower()).label == label
