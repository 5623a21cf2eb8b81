"""Targets named only: places from the deep-sky catalogue, and the errors when a name is wrong."""

from __future__ import annotations

import pytest

from siderod.common.errors import ConfigErrors
from siderod.common.model import Frame
from siderod.files.catalogue import open_catalogue
from siderod.files.targets import parse_targets_toml


def _errors(text):
    with pytest.raises(ConfigErrors) as info:
        parse_targets_toml(text, "t.toml")
    return info.value.errors


def test_a_name_alone_takes_the_catalogue_place():
    (target,) = parse_targets_toml('[[target]]\nname = "M 31"\ntags = ["galaxy"]\n', "t.toml")
    entry = open_catalogue().find("M31")
    assert (target.frame, target.ra_deg, target.dec_deg) == (Frame.ICRS, entry.ra_deg, entry.dec_deg)
    assert target.catalogue_entry == "M 31" and target.name == "M 31" and target.source == "t.toml:1"
    # J2000 catalogue place, epoch J2000: nothing of date slips in at load time
    assert target.epoch_jd_tt == 2451545.0 and target.pm_ra_cosdec_mas_per_year == 0.0


def test_catalogue_key_names_the_entry_of_a_nickname():
    (target,) = parse_targets_toml('[[target]]\nname = "America"\ncatalogue = "NGC 7000"\n', "t.toml")
    assert target.name == "America" and target.catalogue_entry == "NGC 7000"
    assert target.ra_deg == open_catalogue().find("North America Nebula").ra_deg


def test_coordinates_in_the_file_win():
    text = '[[target]]\nname = "M31"\ncatalogue = "M 42"\nra = "10d"\ndec = 20\n'
    (target,) = parse_targets_toml(text, "t.toml")
    assert (target.ra_deg, target.dec_deg, target.catalogue_entry) == (10.0, 20.0, "")


def test_unknown_and_ambiguous_names_are_located_errors():
    errors = _errors('[[target]]\nname = "Vega"\nra = 279.2\ndec = 38.8\n\n'
                     '[[target]]\nname = "Andromeda Galxy"\n\n'
                     '[[target]]\nname = "Pet"\ncatalogue = "zzzz"\n')
    assert [(e.line, e.key) for e in errors] == [(7, "target[2].name"), (11, "target[3].catalogue")]
    assert "closest: M 31 (NGC 224, Andromeda Galaxy)" in errors[0].expected
    assert errors[0].got == '"Andromeda Galxy"'
    assert str(errors[1]).startswith("t.toml:11: target[3].catalogue: expected a name the deep-sky catalogue")


def test_a_half_given_place_is_not_filled_from_the_catalogue():
    (error,) = _errors('[[target]]\nname = "M31"\nra = "10d"\n')
    assert error.key == "target[1].dec"


def test_other_frames_still_need_their_coordinates():
    errors = _errors('[[target]]\nname = "M31"\nframe = "galactic"\n')
    assert [e.key for e in errors] == ["target[1].l", "target[1].b"]


def test_demo_targets_named_only_have_events_and_alerts(demo_config):
    from conftest import DEMO_NIGHT_UTC

    from siderod.common.model import EventKind
    from siderod.plan.agenda import compute_agenda

    named = {t.name for t in demo_config.targets if t.catalogue_entry}
    assert named == {"M42", "M31", "M45", "North America", "Crab Nebula"}
    agenda = compute_agenda(demo_config, DEMO_NIGHT_UTC, 24.0)
    culminating = {e.target for e in agenda.events if e.kind is EventKind.CULMINATION}
    assert named <= culminating
    flips = {e.target for e in agenda.events if e.kind is EventKind.FLIP_DUE}
    assert {"M42", "M45", "Crab Nebula"} <= flips  # flip-due alerts are configured in the demo


def test_an_ambiguous_name_is_an_error_listing_each_entry():
    (error,) = _errors('[[target]]\nname = "Eagle Nebula"\n')
    assert (error.line, error.key) == (2, "target[1].name")
    assert "means several: IC 4703 (Eagle Nebula); M 16 (NGC 6611, Eagle Nebula)" in error.expected
    assert 'catalogue = "..."' in error.expected
