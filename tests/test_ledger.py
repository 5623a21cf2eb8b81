"""The SQLite ledger: WAL, exactly-once claims across connections, plan replacement, recovery."""

from __future__ import annotations

from datetime import UTC, datetime, timedelta

from siderod.common.model import Delivery, Event, EventKind, PlannedAlert, Urgency
from siderod.plan.planner import alert_key
from siderod.service.ledger import EVENT_MATCH_SECONDS, Ledger

NOW = datetime(2026, 12, 14, 20, 0, tzinfo=UTC)


def _alert(minutes: float, target="M31", kind=EventKind.CULMINATION, lead=0.0, jitter_seconds=0.0):
    event = Event(NOW + timedelta(minutes=minutes, seconds=jitter_seconds), kind, target, 50.0, 180.0)
    return PlannedAlert(alert_key(event, lead), event, lead, event.time_utc - timedelta(minutes=lead),
                        Urgency.NORMAL, f"{target} {kind.value}", "body")


def test_wal_mode_and_reopen(tmp_path):
    path = tmp_path / "state" / "ledger.sqlite3"
    with Ledger(path) as ledger:
        assert ledger.journal_mode == "wal"
        ledger.replace_planned([_alert(10)], NOW)
    with Ledger(path) as ledger:
        assert [r.state for r in ledger.rows()] == ["planned"]


def test_claim_is_exactly_once_across_connections(tmp_path):
    path = tmp_path / "ledger.sqlite3"
    a, b = Ledger(path), Ledger(path)
    try:
        a.replace_planned([_alert(10)], NOW)
        key = _alert(10).key
        assert [a.claim(key, NOW), b.claim(key, NOW), a.claim(key, NOW)] == [True, False, False]
        assert not a.claim("unknown-key", NOW)
    finally:
        a.close()
        b.close()


def test_replace_planned_drops_stale_rows_and_keeps_settled_ones(tmp_path):
    with Ledger(tmp_path / "l.sqlite3") as ledger:
        first, second = _alert(10), _alert(20, "M42")
        assert ledger.replace_planned([first, second], NOW) == {first.key, second.key}
        assert ledger.claim(first.key, NOW)
        ledger.finish(first.key, NOW, 0.0)
        # Re-plan: the delivered one is not open again, and a moved event replaces its old row.
        moved = _alert(25, "M42")
        assert ledger.replace_planned([first, moved], NOW) == {moved.key}
        assert {r.key: r.state for r in ledger.rows()} == {first.key: "delivered", moved.key: "planned"}


def test_a_plan_of_the_first_stretch_keeps_the_planned_rows_after_it(tmp_path):
    # The service's first plan covers only its first stretch (to be ready soon); the plan of the
    # whole horizon follows. Until then, rows a previous run planned after the stretch stay, so a
    # stop in between still leaves them to be swept as missed, and nothing is lost.
    with Ledger(tmp_path / "l.sqlite3") as ledger:
        near, moved, far = _alert(10), _alert(20, "M42"), _alert(300, "M33")
        ledger.replace_planned([near, moved, far], NOW)
        cut_utc = NOW + timedelta(hours=3)
        again = _alert(25, "M42")  # the event moved: the old row within the stretch goes
        assert ledger.replace_planned([near, again], NOW, keep_after_utc=cut_utc) == {near.key, again.key}
        assert {r.key for r in ledger.rows("planned")} == {near.key, again.key, far.key}
        assert ledger.replace_planned([near, again], NOW) == {near.key, again.key}  # the whole plan
        assert {r.key for r in ledger.rows("planned")} == {near.key, again.key}


def test_an_event_found_a_little_apart_is_the_same_alert(tmp_path):
    with Ledger(tmp_path / "l.sqlite3") as ledger:
        original = _alert(10, jitter_seconds=0.49)
        ledger.replace_planned([original], NOW)
        ledger.claim(original.key, NOW)
        ledger.finish(original.key, NOW, 0.0)
        nudged = _alert(10, jitter_seconds=0.51)  # rounds to the next second: a different key
        assert nudged.key != original.key
        assert ledger.replace_planned([nudged], NOW) == frozenset()
        far = _alert(10, jitter_seconds=EVENT_MATCH_SECONDS + 1)
        assert ledger.replace_planned([far], NOW) == {far.key}


def test_sweep_missed_and_unfinished_claims(tmp_path):
    path = tmp_path / "l.sqlite3"
    with Ledger(path) as ledger:
        old, sending, later = _alert(-30, "A"), _alert(-2, "B"), _alert(30, "C")
        ledger.replace_planned([old, sending, later], NOW - timedelta(hours=1))
        assert ledger.claim(sending.key, NOW)
        ledger.record_delivery(Delivery(sending.key, "log", NOW, 120.0, True, title="B"))
        # The process dies here; a new one opens the file.
    with Ledger(path) as ledger:
        missed = ledger.sweep_missed(NOW - timedelta(minutes=10), NOW)
        assert [r.key for r in missed] == [old.key]
        unfinished = ledger.unfinished()
        assert [r.key for r in unfinished] == [sending.key]
        assert ledger.channels_done(sending.key) == {"log"}
        assert ledger.counts() == {"missed": 1, "sending": 1, "planned": 1}


def test_mutes_persist_and_expire(tmp_path):
    path = tmp_path / "l.sqlite3"
    with Ledger(path) as ledger:
        ledger.set_mute("M31", NOW + timedelta(hours=1))
        ledger.set_mute("sky", None)
    with Ledger(path) as ledger:
        assert ledger.mutes(NOW) == {"M31": NOW + timedelta(hours=1), "sky": None}
        assert ledger.mutes(NOW + timedelta(hours=2)) == {"sky": None}
        assert ledger.clear_mute("sky") and not ledger.clear_mute("sky")


def test_recent_deliveries_newest_first_and_prune(tmp_path):
    with Ledger(tmp_path / "l.sqlite3") as ledger:
        for i in range(3):
            when = NOW + timedelta(minutes=i)
            ledger.record_delivery(Delivery(f"k{i}", "log", when, 0.0, True, title=f"t{i}"))
        assert [d.key for d in ledger.recent_deliveries(2)] == ["k2", "k1"]
        ledger.prune(NOW + timedelta(minutes=1, seconds=30))
        assert [d.key for d in ledger.recent_deliveries()] == ["k2"]


def test_given_events_is_one_answer_for_every_event_and_agrees_with_given(tmp_path):
    # status asks about every event with repeats; a query per event took seconds at scale.
    from datetime import UTC, datetime

    from siderod.common.model import Event, EventKind, PlannedAlert, Urgency
    from siderod.plan.planner import alert_key
    from siderod.service.ledger import Ledger

    now = datetime(2026, 12, 14, 18, 0, tzinfo=UTC)
    alerts = []
    for minute, target in ((10, "M31"), (20, "M42")):
        event = Event(now.replace(minute=minute), EventKind.FLIP_DUE, target, 60.0, 180.0)
        alerts.append(PlannedAlert(key=alert_key(event, 0), event=event, lead_minutes=0.0,
                                   due_utc=event.time_utc, urgency=Urgency.CRITICAL, title=target, body=""))
    with Ledger(tmp_path / "l.sqlite3") as ledger:
        ledger.replace_planned(alerts, now)
        assert ledger.claim(alerts[0].key, now, ["log"])
        given = ledger.given_events()
        ids = [a.key.rpartition("|")[0] for a in alerts]
        assert given == {ids[0]}
        assert [ledger.given(i) for i in ids] == [True, False]


def test_the_write_ahead_log_stays_small_over_many_re_plans(tmp_path):
    # SQLite checkpoints the WAL every wal_autocheckpoint pages and, with journal_size_limit, cuts
    # the file back to that size when it starts over (sqlite.org/pragma.html, "journal_size_limit";
    # sqlite.org/wal.html, "Automatic Checkpoint"). At SQLite's default of 1000 pages the log of a
    # night of re-plans grew to 3.6 MB beside a 4 KiB database file, which filled a small disk.
    from siderod.service.ledger import WAL_CHECKPOINT_PAGES, WAL_SIZE_LIMIT_BYTES

    path = tmp_path / "ledger.sqlite3"
    with Ledger(path) as ledger:
        for night in range(40):  # 40 re-plans of 300 alerts, each moved a little
            ledger.replace_planned([_alert(i, f"T{i:03d}", jitter_seconds=night * 10.0) for i in range(300)],
                                   NOW)
        wal_bytes = (tmp_path / "ledger.sqlite3-wal").stat().st_size
    # At most the size limit plus one checkpoint interval written since the log last started over.
    assert wal_bytes <= WAL_SIZE_LIMIT_BYTES + WAL_CHECKPOINT_PAGES * 4096 * 2, wal_bytes
