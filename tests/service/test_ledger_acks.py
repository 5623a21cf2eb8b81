"""Acknowledgements of critical alerts in the real SQLite ledger: kept across a reopen, once each."""

from __future__ import annotations

from datetime import UTC, datetime, timedelta

from siderod.common.model import Event, EventKind, PlannedAlert, Urgency
from siderod.plan.insist import event_id
from siderod.plan.planner import alert_key
from siderod.service.ledger import Ledger

NOW = datetime(2026, 12, 14, 20, 0, tzinfo=UTC)


def _flip(target: str, lead: float) -> PlannedAlert:
    event = Event(NOW + timedelta(minutes=30), EventKind.FLIP_DUE, target, 50.0, 180.0)
    return PlannedAlert(alert_key(event, lead), event, lead, event.time_utc - timedelta(minutes=lead),
                        Urgency.CRITICAL, f"{target} flip", "body")


def test_acknowledgements_survive_a_reopen_and_count_once(tmp_path):
    path = tmp_path / "ledger.sqlite3"
    flip = event_id(_flip("M42", 0).key)
    with Ledger(path) as ledger:
        assert ledger.acknowledge([flip, flip], NOW, "command") == (flip,)
        assert ledger.acknowledge([flip], NOW, "board") == ()
    with Ledger(path) as ledger:
        assert ledger.acknowledged() == {flip}
        assert ledger.prune(NOW + timedelta(days=1)) == 0
        assert ledger.acknowledged() == frozenset()


def test_an_event_has_been_given_once_any_of_its_alerts_was_claimed(tmp_path):
    with Ledger(tmp_path / "ledger.sqlite3") as ledger:
        early, on_time, other = _flip("M42", 10), _flip("M42", 0), _flip("m42", 0)
        ledger.replace_planned([early, on_time, other], NOW)
        assert not ledger.given(event_id(on_time.key))
        assert ledger.claim(early.key, NOW)
        assert ledger.given(event_id(on_time.key))
        assert not ledger.given(event_id(other.key))  # target names are case-sensitive
