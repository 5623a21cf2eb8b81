"""siderod.plan.table (events as columns) and the agenda's array-level summaries."""

from __future__ import annotations

from datetime import UTC, datetime

import numpy as np
import pytest

from siderod.astro import events as ev
from siderod.common.model import Event, EventKind
from siderod.plan.agenda import _dark_spans
from siderod.plan.table import EventTable


def _event(t, kind, target, **extra):
    return Event(datetime.fromtimestamp(t, UTC), kind, target, 10.0, 180.0, **extra)


def test_records_and_back_keep_every_field():
    events = (
        _event(1_800_000_000.25, EventKind.CULMINATION, "M31", hour_angle_hours=0.0, usable=True),
        _event(1_800_000_100.5, EventKind.SUNSET, None, threshold_deg=-0.8333),
        _event(1_800_000_200.0, EventKind.MOONRISE, None, moon_illuminated_fraction=0.28),
        _event(1_800_000_300.0, EventKind.FLIP_DUE, "M42", hour_angle_hours=0.17, mark_hours=0.1667,
               usable=False),
    )
    table = EventTable.from_records(events)
    assert table.records() == events
    assert table.event(3) == events[3]
    assert table.target_names() == ["M31", None, None, "M42"]


def test_sorted_orders_by_time_then_kind_then_name():
    t = 1_800_000_000.0
    events = [_event(t, EventKind.RISE, "b"), _event(t, EventKind.CULMINATION, "c"),
              _event(t, EventKind.RISE, "a"), _event(t - 1, EventKind.SET, "z"),
              _event(t, EventKind.SUNSET, None)]
    got = EventTable.from_records(events).sorted().records()
    expected = sorted(events, key=lambda e: (e.time_utc, list(EventKind).index(e.kind), e.target or ""))
    assert list(got) == expected


def test_concat_sorted_is_concat_then_sorted_with_ties_across_parts():
    t = 1_800_000_000.0
    parts = [[_event(t, EventKind.RISE, "b"), _event(t + 2, EventKind.SET, "a")],
             [_event(t, EventKind.RISE, "a"), _event(t - 1, EventKind.CULMINATION, "c")],
             [_event(t, EventKind.SUNSET, None), _event(t + 2, EventKind.SET, "c")]]
    tables = [EventTable.from_records(p) for p in parts]
    names = ("a", "b", "c")
    # from_records numbers names per table; put every part's targets on the one name list.
    remapped = []
    for table in tables:
        index = np.array([names.index(n) for n in table.names] + [-1], dtype=np.int32)
        columns = {f: getattr(table, f) for f in table.__dataclass_fields__ if f != "names"}
        remapped.append(EventTable(**columns | {"target": index[table.target]}, names=names))
    want = EventTable.concat(remapped, names).sorted().records()
    assert EventTable.concat_sorted(remapped, names).records() == want
    assert [e.target for e in want[:4]] == ["c", "a", "b", None]  # rise comes before sunset (enum order)


@pytest.mark.parametrize("seed", range(5))
def test_dark_spans_match_the_per_target_reference(seed):
    # Reference: siderod.astro.events.intervals_from_crossings and intersect_intervals, one target at
    # a time (the loop the vectorised version replaces), on random crossings that need not alternate.
    rng = np.random.default_rng(seed)
    n, start, end = 40, 0.0, 100.0
    up_at_start = rng.random(n) < 0.5
    idx = np.sort(rng.integers(0, n, 150))
    t = np.empty(idx.size)
    for j in range(n):
        sel = idx == j
        t[sel] = np.sort(rng.uniform(start, end, sel.sum()).round(0))  # round: some equal times
    rising = rng.random(idx.size) < 0.5
    night = np.array([[10.0, 35.0], [60.0, 100.0]])
    target, begin, finish = _dark_spans(up_at_start, idx, t, rising, start, end, night, offset=0)
    for j in range(n):
        sel = idx == j
        up = ev.intervals_from_crossings(up_at_start[j], t[sel], rising[sel], start, end)
        expected = ev.intersect_intervals(up, night)
        mine = np.stack([begin[target == j], finish[target == j]], axis=1).reshape(-1, 2)
        np.testing.assert_array_equal(mine, expected)
