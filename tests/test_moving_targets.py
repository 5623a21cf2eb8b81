"""Planets, the Moon and a comet through positions, the agenda, the planner, `now` and the board."""

import io
import json
import math
from dataclasses import replace
from datetime import UTC, datetime

import numpy as np
import pytest
from rich.console import Console

from siderod.astro.ephemeris import observe_body
from siderod.astro.timescales import instants_from_unix
from siderod.common.model import Event, EventKind
from siderod.files.config import parse_config
from siderod.plan.agenda import compute_agenda
from siderod.plan.planner import plan_alerts, too_near_the_sun
from siderod.plan.positions import compute_sky, observer_for
from siderod.view.board import inputs_from_config, render_board

CONFIG = """
[site]
name = "Corrie Hill Observatory"
latitude = "+56 12 30"
longitude = "-3 41 15"
elevation = 212
timezone = "Europe/London"
[targets]
files = ["t.toml", "comets.txt"]
max_element_age = 30
[mount]
kind = "german-equatorial"
flip_after = 10
limit_after = 25
[alerts.lead]
culmination = [0]
"""
TARGETS = """
[[target]]
name = "Jupiter"
body = "jupiter"

[[target]]
name = "Moon"
body = "moon"
"""
# An invented comet record in the MPC comet format (columns as in siderod/files/elements.py).
COMET = ("    CK26X010  2026 12 20.5000  0.812345  0.999500  123.4567   45.6789   98.7654  20261201"
         "   7.5  4.0  C/2026 X1 (Invented)")
NIGHT = datetime(2026, 12, 14, 22, 0, tzinfo=UTC)
#: compute_sky and observe_body run the same chain: they agree to rounding.
SAME_CHAIN_TOL_DEG = 1e-9


@pytest.fixture(scope="module")
def config():
    files = {"/cfg/t.toml": TARGETS, "/cfg/comets.txt": COMET + "\n"}
    return parse_config(CONFIG, "/cfg/site.toml", read_file=files.__getitem__, at_unix=NIGHT.timestamp())


def test_now_places_bodies_like_the_core(config):
    sky = compute_sky(config, NIGHT.timestamp())
    eph = config.ephemeris()
    seen = observe_body(eph, "jupiter", instants_from_unix(NIGHT.timestamp()), observer_for(config))
    assert abs(float(sky.alt_deg[0]) - float(seen.alt_deg)) < SAME_CHAIN_TOL_DEG
    assert sky.frames == ("body", "body", "orbit")
    assert math.isnan(float(sky.magnitude[0])) and math.isfinite(float(sky.magnitude[2]))
    assert float(sky.elements_epoch_jd_tt[2]) == 2461375.5  # 2026-12-01


def test_agenda_has_every_kind_for_moving_targets(config):
    agenda = compute_agenda(config, NIGHT)
    kinds = {(e.target, e.kind) for e in agenda.events}
    for name in ("Jupiter", "Moon", "C/2026 X1 (Invented)"):
        assert (name, EventKind.CULMINATION) in kinds
        assert (name, EventKind.LOWER_CULMINATION) in kinds
    assert ("Jupiter", EventKind.FLIP_DUE) in kinds and ("Jupiter", EventKind.RISE) in kinds
    assert all(e.sun_separation_deg is not None for e in agenda.events if e.target)


def _event(sep):
    return Event(NIGHT, EventKind.CULMINATION, "Jupiter", 20.0, 180.0, hour_angle_hours=0.0,
                 sun_separation_deg=sep)


class _Agenda:
    def __init__(self, events):
        self.events = tuple(events)


def test_sun_caution_in_alert_bodies_and_close_targets_held(config):
    earlier = datetime(2026, 12, 14, 21, 0, tzinfo=UTC)
    near, close = _event(15.0), _event(5.0)
    planned = plan_alerts(_Agenda([near]), config, muted={}, now_utc=earlier)
    assert "15° from the Sun" in planned[0].body and "unfiltered" in planned[0].body
    assert too_near_the_sun(close, config.alerts)
    assert plan_alerts(_Agenda([close]), config, muted={}, now_utc=earlier) == ()
    looser = replace(config, alerts=replace(config.alerts, sun_separation_min_deg=2.0))
    assert len(plan_alerts(_Agenda([close]), looser, muted={}, now_utc=earlier)) == 1


def test_now_json_gives_magnitude_and_elements_age(config):
    from siderod.cli.now import sky_to_json

    data = sky_to_json(compute_sky(config, NIGHT.timestamp()), config, leap_until="2027-06-28")
    comet = data["targets"][2]
    assert comet["elements_epoch"] == "2026-12-01" and comet["elements_old"] is False
    assert abs(comet["elements_age_days"] - 13.917) < 0.001  # 1 Dec 0h to 14 Dec 22h
    assert data["targets"][0]["magnitude"] is None and data["targets"][0]["distance_au"] > 4.0
    json.dumps(data, allow_nan=False)


def test_board_shows_magnitude_epoch_and_old_elements(config):
    later = datetime(2027, 2, 14, 22, 0, tzinfo=UTC)
    inputs = inputs_from_config(config, later, agenda=_Agenda([]))
    console = Console(file=io.StringIO(), width=100, height=40, color_system=None, record=True)
    console.print(render_board(inputs, 100))
    text = console.export_text()
    line = next(line for line in text.splitlines() if line.startswith("C/2026 X1"))
    assert "elements 2026-12-01" in line and "76 d old" in line and "mag " in line
    assert np.isfinite(inputs.sky.magnitude[2])


@pytest.mark.slow
def test_demo_plans_alerts_for_jupiter_and_the_comet():
    # The bundled demo: Jupiter's and the comet's flips are planned like any target's (the Moon's
    # alerts are switched off in the demo file).
    from siderod.files.config import load_config

    demo = load_config(None, {})
    agenda = compute_agenda(demo, NIGHT)
    planned = plan_alerts(agenda, demo, muted={}, now_utc=NIGHT)
    flips = {a.event.target for a in planned if a.event.kind is EventKind.FLIP_DUE}
    assert {"Jupiter", "Comet Corrie Hill"} <= flips
    assert not any(a.event.target == "Moon" for a in planned)
