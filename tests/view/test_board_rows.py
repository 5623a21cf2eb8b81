"""The target table worked out on arrays gives exactly what the per-target reference gives.

The reference is the board's former per-target loop, kept in ``tests/helpers/board_reference.py``.
Inputs are random: targets with and without events, events exactly now, ties in time (events on a
30 s grid) so that names decide the order, targets below their limit, fixed pointings, moving
bodies, targets near the Sun, muted ones (for ever, until later, until a moment already past),
names the agenda does not know, German equatorial mounts and others, and a sky a few seconds old.
The demo night, with the engine's own agenda and positions, is checked the same way.
"""

from __future__ import annotations

from dataclasses import replace
from datetime import UTC, datetime, timedelta
from types import SimpleNamespace

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from siderod.common.model import (
    Config,
    Event,
    EventKind,
    Frame,
    Mount,
    MountKind,
    ServiceSnapshot,
    Site,
    Target,
)
from siderod.plan.table import EventTable
from siderod.view import board
from siderod.view.board import BoardInputs
from tests.helpers.board_reference import (
    event_index,
    reference_beam_state,
    reference_next_sky_event,
    reference_target_rows,
)

NOW_UTC = datetime(2026, 12, 14, 22, 30, tzinfo=UTC)
SITE = Site("Corrie Hill Observatory", 56.208333, -3.6875, 212.0, "Europe/London")
FRAMES = ("icrs", "icrs", "icrs", "fixed-pointing", "body", "orbit")
TARGET_KINDS = (EventKind.CULMINATION, EventKind.FLIP_DUE, EventKind.TRACKING_LIMIT, EventKind.RISE,
                EventKind.SET, EventKind.ALTITUDE_UP, EventKind.HOUR_ANGLE, EventKind.LOWER_CULMINATION)
BEAM_KINDS = (EventKind.BEAM_ENTER, EventKind.BEAM_CENTRE, EventKind.BEAM_LEAVE)
SKY_KINDS = (EventKind.SUNSET, EventKind.ASTRONOMICAL_DUSK, EventKind.MOONRISE, EventKind.ASTRONOMICAL_DAWN)
SOURCES = ("Vega", "Deneb", "Sun", "Moon")


def random_case(seed: int, mode: int):
    """(inputs, pointing names) drawn from ``seed``; ``mode`` picks the mount and the agenda's state."""
    rng = np.random.default_rng(seed)
    n = int(rng.integers(1, 40))
    # Names with shared prefixes and mixed case, so that the name order is not the list order.
    names = [f"{rng.choice(['M', 'NGC ', 'ic', 'Sh2-'])}{int(k)}" for k in rng.permutation(200)[:n]]
    frames = tuple(str(rng.choice(FRAMES)) for _ in range(n))
    alt = rng.uniform(-40.0, 89.0, n)
    min_alt = rng.choice([0.0, 10.0, 30.0], n)
    at_limit = rng.random(n) < 0.1
    alt[at_limit] = min_alt[at_limit]  # exactly at the limit counts as up
    ha = rng.uniform(-12.0, 12.0, n)
    if rng.random() < 0.3:  # exactly on the flip and limit marks of the mounts below
        ha = rng.choice([-12.0, 0.0, 1 / 6, 0.25, 5 / 12, 17 / 12], n)
    sky = SimpleNamespace(
        names=tuple(names), frames=frames, ha_hours=ha,
        dec_deg=rng.uniform(-60.0, 89.0, n), alt_deg=alt, az_deg=rng.uniform(0.0, 360.0, n),
        airmass=np.where(alt > 0, 1 / np.sin(np.radians(np.maximum(alt, 1))), np.nan),
        rising=rng.random(n) < 0.5, min_alt_deg=min_alt,
        sun_separation_deg=rng.uniform(0.0, 60.0, n), sun_alt_deg=float(rng.choice([-40.0, -10.0, 5.0])),
        lmst_hours=3.0, last_hours=3.0, sun_az_deg=0.0, moon_alt_deg=10.0, moon_az_deg=90.0,
        moon_illuminated_fraction=0.5, twilight="night",
    )
    events: list[Event] = []
    if mode != 2:  # mode 2: the agenda is still being worked out
        known = [name for name in names if rng.random() < 0.8] + ["not-a-target"]
        for name in known:
            for _ in range(int(rng.integers(0, 7))):
                kind = TARGET_KINDS[int(rng.integers(len(TARGET_KINDS)))]
                when = NOW_UTC + timedelta(seconds=30.0 * int(rng.integers(-240, 240)))
                usable = rng.choice([True, True, False, None]) if kind is EventKind.CULMINATION else None
                events.append(Event(when, kind, name, float(rng.uniform(-10, 80)), float(rng.uniform(0, 360)),
                                    usable=usable,
                                    threshold_deg=30.0 if kind is EventKind.ALTITUDE_UP else None,
                                    mark_hours=1.5 if kind is EventKind.HOUR_ANGLE else None))
        for _ in range(int(rng.integers(0, 6))):
            when = NOW_UTC + timedelta(seconds=30.0 * int(rng.integers(-240, 240)))
            events.append(Event(when, SKY_KINDS[int(rng.integers(len(SKY_KINDS)))], None, -18.0, 100.0))
    pointings = [name for name, frame in zip(names, frames, strict=True) if frame == "fixed-pointing"]
    for name in pointings:
        for _ in range(int(rng.integers(0, 40))):
            when = NOW_UTC + timedelta(seconds=30.0 * int(rng.integers(-60, 120)))
            events.append(Event(when, BEAM_KINDS[int(rng.integers(3))], name, 20.0, 180.0,
                                beam_source=SOURCES[int(rng.integers(len(SOURCES)))], beam_offset_deg=0.5))
    events.sort(key=lambda e: e.time_utc)
    muted = {}
    for name in names:
        if rng.random() < 0.15:
            muted[name] = rng.choice([None, NOW_UTC + timedelta(hours=1), NOW_UTC - timedelta(seconds=1)])
    snapshot = ServiceSnapshot(taken_utc=NOW_UTC, started_utc=NOW_UTC, config_path="demo.toml", site=SITE,
                               dut1_seconds=0.0, dut1_source="config", clock_health=None, muted=muted)
    mount = (Mount(MountKind.GERMAN_EQUATORIAL, flip_after_minutes=float(rng.choice([0.0, 10.0])),
                   limit_after_minutes=float(rng.choice([15.0, 25.0]))) if mode != 1 else Mount())
    targets = tuple(Target(name, Frame.ICRS, 0.0, 0.0, 0.0, 0.0) for name in names)
    config = Config("demo.toml", SITE, targets, mount=mount)
    now_utc = NOW_UTC + timedelta(microseconds=int(rng.choice([0, 0, 250_000, 999_999])))
    sky_utc = now_utc - timedelta(seconds=float(rng.choice([0.0, 0.4, 3.0])))
    inputs = BoardInputs(now_utc, config, sky, sky_utc, tuple(events),
                         snapshot=snapshot if rng.random() < 0.7 else None)
    return inputs, pointings


def shown(rows) -> list[str]:
    return [repr(row) for row in rows]  # repr: NaN airmass compares equal to itself


@pytest.mark.slow
@settings(max_examples=150, deadline=None, database=None)
@given(seed=st.integers(0, 2**32 - 1), mode=st.sampled_from([0, 0, 1, 2]), table=st.booleans())
def test_rows_and_their_order_match_the_per_target_reference(seed, mode, table):
    inputs, _ = random_case(seed, mode)
    expected = shown(reference_target_rows(inputs))
    if table:  # what the live view passes: the agenda's columns, records made only for rows shown
        inputs = BoardInputs(inputs.now_utc, inputs.config, inputs.sky, inputs.sky_utc,
                             EventTable.from_records(inputs.events), snapshot=inputs.snapshot)
    n = len(inputs.sky.names)
    assert shown(board._target_rows(inputs)) == expected
    for count in sorted({0, 1, 3, n // 2, n - 1, n, n + 2}):
        if count >= 0:
            assert shown(board._target_rows(inputs, count)) == expected[:count], count


@pytest.mark.slow
@settings(max_examples=60, deadline=None, database=None)
@given(seed=st.integers(0, 2**32 - 1))
def test_beams_and_the_next_sky_event_match_the_per_target_reference(seed):
    inputs, pointings = random_case(seed, 0)
    reference = event_index(inputs.events)
    now_unix = inputs.now_utc.timestamp()
    for events in (inputs.events, EventTable.from_records(inputs.events)):
        index = board._event_index(events)
        for name in pointings:
            expected = reference_beam_state(reference.get(name), now_unix)
            assert board._beam_state(index, name, now_unix) == expected
        assert index.next_sky_event(now_unix) == reference_next_sky_event(inputs.events, inputs.now_utc)


def test_a_huge_catalogue_makes_records_only_for_the_rows_shown():
    # 20,000 targets with an event each: the frame asks the table for a record per row shown only.
    n = 20_000
    names = tuple(f"T{i:05d}" for i in range(n))
    times = NOW_UTC.timestamp() + np.arange(1, n + 1) * 7.0
    # The last target's event comes first, the first target's last.
    table = EventTable.build(names, times, 0, target=np.arange(n)[::-1], altitude_deg=np.zeros(n),
                             azimuth_deg=np.zeros(n))
    calls = []

    class CountingTable(EventTable):
        def event(self, row):
            calls.append(row)
            return super().event(row)

    counting = CountingTable(**{f: getattr(table, f) for f in table.__dataclass_fields__})
    sky = SimpleNamespace(
        names=names, frames=("icrs",) * n, ha_hours=np.zeros(n), dec_deg=np.zeros(n),
        alt_deg=np.full(n, 45.0), az_deg=np.zeros(n), airmass=np.ones(n), rising=np.ones(n, bool),
        min_alt_deg=np.zeros(n), sun_separation_deg=np.full(n, 90.0), sun_alt_deg=-40.0,
    )
    config = Config("demo.toml", SITE, (), mount=Mount())
    rows = board._target_rows(BoardInputs(NOW_UTC, config, sky, NOW_UTC, counting), 15)
    assert [r.name for r in rows] == [f"T{i:05d}" for i in range(n - 1, n - 16, -1)]
    assert len(calls) == 15


@pytest.mark.slow
def test_the_demo_night_gives_the_reference_rows_all_night():
    # The real thing: the demo configuration (stars, the galactic and ecliptic frames, planets, the
    # Moon, a comet, fixed pointings with beams, a German equatorial mount), its agenda and positions
    # from the engine, through the night, with one target muted.
    from siderod.files.config import load_config
    from siderod.plan.agenda import compute_agenda
    from siderod.plan.positions import compute_sky
    from siderod.view.board import DEMO_INSTANT_UTC, compose_board

    start = DEMO_INSTANT_UTC - timedelta(hours=6)
    config = load_config(None, env={}, at_unix=start.timestamp())
    assert config.mount.kind is MountKind.GERMAN_EQUATORIAL
    agenda = compute_agenda(config, start, 14.0)
    muted = {config.targets[1].name: None}
    snapshot = ServiceSnapshot(taken_utc=start, started_utc=start, config_path="demo.toml", site=config.site,
                               dut1_seconds=0.0, dut1_source="config", clock_health=None, muted=muted)
    reference = event_index(agenda.events)
    for minutes in range(0, 12 * 60, 47):
        sky_utc = start + timedelta(minutes=minutes)
        now = sky_utc + timedelta(seconds=0.5)  # the sky of the last whole second, carried forward
        sky = compute_sky(config, sky_utc.timestamp())
        as_records = BoardInputs(now, config, sky, sky_utc, agenda.events, snapshot=snapshot)
        as_table = replace(as_records, events=agenda.table)
        expected = shown(reference_target_rows(as_records, reference))
        assert shown(board._target_rows(as_table)) == expected
        assert shown(board._target_rows(as_table, 7)) == expected[:7]
        lines = [line.plain for line in compose_board(as_table, 120, 40).lines()]
        assert lines == [line.plain for line in compose_board(as_records, 120, 40).lines()]
