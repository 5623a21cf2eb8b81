"""The alert ledger: an SQLite file (WAL mode) that makes every alert happen exactly once.

Each planned alert is one row keyed by ``planner.alert_key`` and moves through

    planned -> sending -> delivered          (or planned/sending -> missed)

``claim`` is the single atomic step from planned to sending, and in the same transaction it writes
one ``owed`` row per channel: the channel's debt for that alert. Each channel settles its own
debt: ``record_delivery`` of a success marks it ``delivered`` in the same commit that logs the
delivery; a channel that gives up past grace marks it ``missed`` (``channel_missed``); a channel
removed from the configuration marks it ``dropped``. The alert row closes only when no channel owes
it any more (``delivered`` if any channel delivered, else ``missed``). After a crash or a stop,
``owed()`` lists exactly what each channel still owes, so a restart resumes it. The one window in
which a repeat can happen is between a channel accepting an alert and the ledger commit that
follows it (one small SQLite write, typically well under a millisecond).

Commits use ``synchronous=NORMAL``: in WAL mode that survives a killed process (the data is in the
kernel's page cache) but not a power cut, which may lose the last few transactions.
"""

from __future__ import annotations

import contextlib
import json
import logging
import os
import sqlite3
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path

from siderod.common.errors import LedgerUnusable
from siderod.common.model import Delivery, PlannedAlert
from siderod.plan.planner import SKY_TARGET_NAME

__all__ = ["Ledger", "LedgerRow", "OwedRow", "EVENT_MATCH_SECONDS", "open_ledger", "LedgerUnusable"]

log = logging.getLogger("siderod.ledger")

# Two agenda runs can place the same event a little apart (a different search window); rows
# whose target, kind and lead agree and whose event times are this close are the same alert.
# 5 s is far below the spacing of two real events of one kind for one target (hours).
EVENT_MATCH_SECONDS = 5.0

_SCHEMA_VERSION = "2"
# The write-ahead log: checkpointed every this many pages (4 KiB each), and cut back to this size.
WAL_CHECKPOINT_PAGES = 100
WAL_SIZE_LIMIT_BYTES = 1 << 20


@dataclass(frozen=True, slots=True)
class LedgerRow:
    """One alert as the ledger knows it."""

    key: str
    target: str
    kind: str
    event_utc: datetime
    lead_minutes: float
    due_utc: datetime
    title: str
    body: str
    urgency: str
    state: str  # "planned" | "sending" | "delivered" | "missed"
    late_seconds: float | None


@dataclass(frozen=True, slots=True)
class OwedRow:
    """One channel's open debt: ``alert`` (state ``sending``) not yet delivered on ``channel``.

    ``started_utc`` is when the channel last began trying (None: never tried), so a restart can
    tell a hook that may already have run from one that never did.
    """

    alert: LedgerRow
    channel: str
    started_utc: datetime | None


class Ledger:
    """Planned and delivered alerts, by key, in one SQLite file.

    Args:
        path: the database file (created with its directory if missing), e.g.
            ``paths.resolve_paths(os.environ).ledger_path``; ``":memory:"`` for a throwaway one.

    Use from one thread (the service's event loop). Every method is one short transaction.
    """

    def __init__(self, path: str | os.PathLike[str]) -> None:
        self.path = str(path)
        if self.path != ":memory:":
            Path(self.path).parent.mkdir(parents=True, exist_ok=True)
        # isolation_level=None: autocommit; multi-statement writes use an explicit BEGIN IMMEDIATE.
        self._db = sqlite3.connect(self.path, isolation_level=None, timeout=5.0)
        self._db.execute("PRAGMA journal_mode=WAL")
        self._db.execute("PRAGMA synchronous=NORMAL")
        self._db.execute("PRAGMA busy_timeout=5000")
        # Keep the write-ahead log small: checkpointed every WAL_CHECKPOINT_PAGES pages (SQLite's
        # default, 1000, lets it reach 4 MB before the database file gets a page) and cut back to
        # WAL_SIZE_LIMIT_BYTES after. On a nearly full disk a big log was what still failed the
        # writes after space was freed (the fault harness: 3.6 MB of log, a 4 KiB database file).
        self._db.execute(f"PRAGMA wal_autocheckpoint={WAL_CHECKPOINT_PAGES}")
        self._db.execute(f"PRAGMA journal_size_limit={WAL_SIZE_LIMIT_BYTES}")
        self._db.executescript(_SCHEMA)
        # A ledger that has never held a schema row is brand new: no earlier run could have left
        # alerts owing, so the service does not "catch up" on anything due before it started.
        cursor = self._db.execute(
            "INSERT OR IGNORE INTO meta(name, value) VALUES ('schema_version', ?)", (_SCHEMA_VERSION,)
        )
        self.is_new = cursor.rowcount == 1

    def catch_up_floor(self, now_utc: datetime) -> datetime | None:
        """Alerts due before this instant were never owed: the first start of this ledger.

        A brand-new ledger stores ``now_utc`` as its floor; later opens return the stored one.
        None for a ledger started before floors were stored (it may owe anything within grace).
        """
        if self.is_new:
            self._db.execute("INSERT OR REPLACE INTO meta(name, value) VALUES ('catch_up_floor_unix', ?)",
                             (repr(now_utc.timestamp()),))
        row = self._db.execute("SELECT value FROM meta WHERE name = 'catch_up_floor_unix'").fetchone()
        return None if row is None else datetime.fromtimestamp(float(row[0]), UTC)

    # -- lifecycle -------------------------------------------------------------------------
    def close(self) -> None:
        self._db.close()

    def record_claim(self, alert: PlannedAlert, now_utc: datetime, channels: Iterable[str]) -> bool:
        """A claim made while the ledger could not be written, written now (reconciling).

        The alert row is added if the failed plan never wrote it; then it is claimed as usual.
        """
        with self._transaction():
            self._insert_planned(alert, now_utc, ignore=True)
            return self.claim(alert.key, now_utc, channels, body=alert.body or None)

    def _insert_planned(self, alert: PlannedAlert, now_utc: datetime, *, ignore: bool = False) -> None:
        sql = _INSERT_PLANNED_SQL.replace("INSERT", "INSERT OR IGNORE", 1) if ignore else _INSERT_PLANNED_SQL
        self._db.execute(sql, _plan_row(alert, now_utc.timestamp()))

    def settled_keys(self, alerts: Iterable[PlannedAlert]) -> frozenset[str]:
        """The keys of ``alerts`` the ledger already holds as sent, delivered or missed (read only)."""
        rows = [_plan_row(a, 0.0) for a in alerts]
        settled = self._settled_near(rows)
        return frozenset(row[0] for row in rows if _matches_settled(row, settled))

    def __enter__(self) -> Ledger:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    @property
    def journal_mode(self) -> str:
        return str(self._db.execute("PRAGMA journal_mode").fetchone()[0])

    # -- planning --------------------------------------------------------------------------
    def replace_planned(self, alerts: Iterable[PlannedAlert], now_utc: datetime, *,
                        keep_after_utc: datetime | None = None) -> frozenset[str]:
        """Make the plan the ledger holds equal to ``alerts``; return the keys still open.

        Rows still ``planned`` that are not in ``alerts`` are dropped (the event moved, the target
        was removed or muted); rows already sending, delivered or missed are never touched, and an
        alert that matches one of them (same key, or same target, kind and lead with the event
        within ``EVENT_MATCH_SECONDS``) is not planned again. Sweep overdue rows with
        ``sweep_missed`` *before* calling this, or they vanish instead of being counted missed.

        Args:
            keep_after_utc: ``alerts`` is the plan up to this instant only (the service's first
                stretch): planned rows due after it are kept until a plan of the whole horizon.

        Returns:
            The keys of ``alerts`` that are open (state ``planned``): the ones to schedule.
        """
        now_unix = now_utc.timestamp()
        alerts = list(alerts)
        rows = [_plan_row(alert, now_unix) for alert in alerts]
        # One transaction, a handful of statements: the settled rows near the plan's events are
        # read once and matched in memory (a query per alert took seconds for 30,000 alerts, and
        # a service writing from a worker thread holds SQLite's write lock for all of it).
        with self._transaction():
            settled = self._settled_near(rows)
            fresh = [row for row in rows if not _matches_settled(row, settled)]
            if keep_after_utc is None:
                self._db.execute("DELETE FROM alerts WHERE state = 'planned'")
                self._db.executemany(_INSERT_PLANNED_SQL, fresh)
            else:
                self._db.execute("DELETE FROM alerts WHERE state = 'planned' AND due_unix <= ?",
                                 (keep_after_utc.timestamp(),))
                # A kept row may share a key with a fresh one (its due time a fraction of a second
                # apart, across the cut): the fresh one replaces it (never a settled row: those
                # were matched above).
                self._db.executemany(_INSERT_PLANNED_SQL.replace("INSERT", "INSERT OR REPLACE", 1), fresh)
        return frozenset(row[0] for row in fresh)

    def sweep_missed(self, before_utc: datetime, now_utc: datetime) -> tuple[LedgerRow, ...]:
        """Mark every still-planned alert due before ``before_utc`` as missed and return them."""
        with self._transaction():
            rows = self._rows(
                "WHERE state = 'planned' AND due_unix < ? ORDER BY due_unix, key", (before_utc.timestamp(),)
            )
            self._db.execute(
                "UPDATE alerts SET state = 'missed', updated_unix = ?"
                " WHERE state = 'planned' AND due_unix < ?",
                (now_utc.timestamp(), before_utc.timestamp()),
            )
        return rows

    # -- delivering ------------------------------------------------------------------------
    def claim(self, key: str, now_utc: datetime, channels: Iterable[str] = (), *,
              body: str | None = None) -> bool:
        """Atomically move a planned alert to ``sending`` and make each channel owe it.

        True for exactly one caller, ever; only that caller's ``channels`` owe the alert.
        ``body``: the alert's body, written now (a plan's rows may be written without one, and a
        restart resends what the row holds).
        """
        now_unix = now_utc.timestamp()
        with self._transaction(nested_ok=True):
            cursor = self._db.execute(
                "UPDATE alerts SET state = 'sending', updated_unix = ?, body = coalesce(?, body)"
                " WHERE key = ? AND state = 'planned'",
                (now_unix, body, key),
            )
            if cursor.rowcount != 1:
                return False
            self._db.executemany(
                "INSERT OR IGNORE INTO owed(key, channel, state, updated_unix) VALUES (?, ?, 'owed', ?)",
                [(key, channel, now_unix) for channel in channels],
            )
        return True

    def record_delivery(self, delivery: Delivery) -> bool:
        """Write one channel's outcome at once (the commit that closes the repeat window).

        A success also settles that channel's debt, in the same transaction.

        Returns:
            True if this closed the alert (no channel owes it any more).
        """
        with self._transaction():
            self._db.execute(
                "INSERT INTO deliveries(key, channel, delivered_unix, late_seconds, ok, error, title)"
                " VALUES (?,?,?,?,?,?,?)",
                (
                    delivery.key,
                    delivery.channel,
                    delivery.delivered_utc.timestamp(),
                    delivery.late_seconds,
                    1 if delivery.ok else 0,
                    delivery.error,
                    delivery.title,
                ),
            )
            if not delivery.ok:
                self._db.execute(
                    "UPDATE owed SET error = ? WHERE key = ? AND channel = ? AND state = 'owed'",
                    (delivery.error, delivery.key, delivery.channel),
                )
                return False
            return self._settle(delivery.key, delivery.channel, "delivered", delivery.delivered_utc,
                                late_seconds=delivery.late_seconds)

    def channel_missed(self, key: str, channel: str, now_utc: datetime, reason: str = "") -> bool:
        """``channel`` gave up on ``key`` (past its grace): a recorded miss. True if the alert closed."""
        with self._transaction():
            if reason:
                self._db.execute("UPDATE owed SET error = ? WHERE key = ? AND channel = ? AND state = 'owed'",
                                 (reason, key, channel))
            return self._settle(key, channel, "missed", now_utc)

    def drop_channel(self, channel: str, now_utc: datetime) -> tuple[str, ...]:
        """Cancel what a channel removed from the configuration still owes; return the keys closed."""
        with self._transaction():
            keys = [r[0] for r in self._db.execute(
                "SELECT key FROM owed WHERE channel = ? AND state = 'owed'", (channel,))]
            closed = tuple(k for k in keys if self._settle(k, channel, "dropped", now_utc))
        return closed

    def mark_started(self, key: str, channel: str, now_utc: datetime) -> None:
        """Note that ``channel`` begins a try for ``key`` (a hook can be told it may be a repeat)."""
        self._db.execute("UPDATE owed SET started_unix = ? WHERE key = ? AND channel = ? AND state = 'owed'",
                         (now_utc.timestamp(), key, channel))

    def owed(self) -> tuple[OwedRow, ...]:
        """Every open debt, in due order: what each channel still has to deliver."""
        cursor = self._db.execute(
            "SELECT a.key, a.target, a.kind, a.event_unix, a.lead_minutes, a.due_unix, a.title, a.body,"
            " a.urgency, a.state, a.late_seconds, o.channel, o.started_unix FROM owed o"
            " JOIN alerts a ON a.key = o.key WHERE o.state = 'owed' ORDER BY a.due_unix, a.key, o.channel"
        )
        return tuple(
            OwedRow(alert=_row(r[:11]), channel=r[11],
                    started_utc=None if r[12] is None else datetime.fromtimestamp(r[12], UTC))
            for r in cursor.fetchall()
        )

    def adopt_unowned(self, channels: Iterable[str], now_utc: datetime) -> int:
        """Give a debt row to claimed alerts that have none (a ledger written before debts existed).

        Each channel that has no successful delivery of such an alert owes it. Returns the alerts.
        """
        names = tuple(channels)
        with self._transaction():
            keys = [r[0] for r in self._db.execute(
                "SELECT key FROM alerts WHERE state = 'sending'"
                " AND NOT EXISTS (SELECT 1 FROM owed WHERE owed.key = alerts.key)")]
            for key in keys:
                done = {r[0] for r in self._db.execute(
                    "SELECT channel FROM deliveries WHERE key = ? AND ok = 1", (key,))}
                owing = [c for c in names if c not in done]
                self._db.executemany(
                    "INSERT OR IGNORE INTO owed(key, channel, state, updated_unix) VALUES (?, ?, 'owed', ?)",
                    [(key, c, now_utc.timestamp()) for c in owing],
                )
                if not owing:  # every channel had it: the old run died just before closing the row
                    self._db.execute("UPDATE alerts SET state = 'delivered', updated_unix = ? WHERE key = ?",
                                     (now_utc.timestamp(), key))
        return len(keys)

    def channel_counts(self) -> dict[str, dict[str, int]]:
        """Per channel, the number of debts in each state (owed, delivered, missed, dropped)."""
        out: dict[str, dict[str, int]] = {}
        for channel, state, n in self._db.execute("SELECT channel, state, COUNT(*) FROM owed GROUP BY 1, 2"):
            out.setdefault(channel, {})[state] = n
        return out

    def finish(self, key: str, now_utc: datetime, late_seconds: float) -> None:
        """Close a claimed alert as delivered, whatever its channels still owe (tests, old callers)."""
        self._db.execute(
            "UPDATE alerts SET state = 'delivered', updated_unix = ?, late_seconds = ? WHERE key = ?",
            (now_utc.timestamp(), late_seconds, key),
        )

    def mark_missed(self, key: str, now_utc: datetime) -> None:
        """Close an alert as missed on every channel (past grace before any channel took it)."""
        with self._transaction():
            self._db.execute(
                "UPDATE alerts SET state = 'missed', updated_unix = ?"
                " WHERE key = ? AND state IN ('planned', 'sending')",
                (now_utc.timestamp(), key),
            )
            self._db.execute(
                "UPDATE owed SET state = 'missed', updated_unix = ? WHERE key = ? AND state = 'owed'",
                (now_utc.timestamp(), key),
            )

    def channels_done(self, key: str) -> frozenset[str]:
        """The channels that have accepted this alert."""
        rows = self._db.execute("SELECT channel FROM deliveries WHERE key = ? AND ok = 1", (key,))
        return frozenset(r[0] for r in rows)

    def unfinished(self) -> tuple[LedgerRow, ...]:
        """Alerts claimed but not closed: a previous run stopped while sending them."""
        return self._rows("WHERE state = 'sending' ORDER BY due_unix, key", ())

    # -- reading ---------------------------------------------------------------------------
    def row(self, key: str) -> LedgerRow | None:
        rows = self._rows("WHERE key = ?", (key,))
        return rows[0] if rows else None

    def rows(self, state: str | None = None) -> tuple[LedgerRow, ...]:
        if state is None:
            return self._rows("ORDER BY due_unix, key", ())
        return self._rows("WHERE state = ? ORDER BY due_unix, key", (state,))

    def recent_deliveries(self, limit: int = 20) -> tuple[Delivery, ...]:
        """The latest channel outcomes, newest first."""
        rows = self._db.execute(
            "SELECT key, channel, delivered_unix, late_seconds, ok, error, title FROM deliveries"
            " ORDER BY delivered_unix DESC, rowid DESC LIMIT ?",
            (limit,),
        ).fetchall()
        return tuple(
            Delivery(
                key=r[0],
                channel=r[1],
                delivered_utc=datetime.fromtimestamp(r[2], UTC),
                late_seconds=r[3],
                ok=bool(r[4]),
                error=r[5],
                title=r[6],
            )
            for r in rows
        )

    def counts(self) -> Mapping[str, int]:
        """Number of alerts in each state."""
        return {s: n for s, n in self._db.execute("SELECT state, COUNT(*) FROM alerts GROUP BY state")}

    def prune(self, before_utc: datetime) -> int:
        """Forget closed alerts and deliveries older than ``before_utc``; return rows removed."""
        cutoff = before_utc.timestamp()
        with self._transaction():
            n = self._db.execute(
                "DELETE FROM alerts WHERE state IN ('delivered', 'missed') AND due_unix < ?", (cutoff,)
            ).rowcount
            self._db.execute("DELETE FROM deliveries WHERE delivered_unix < ?", (cutoff,))
            self._db.execute("DELETE FROM owed WHERE state != 'owed' AND updated_unix < ?", (cutoff,))
            self._db.execute("DELETE FROM acks WHERE acked_unix < ?", (cutoff,))
        return n

    # -- mutes (kept here so a restart remembers them) -------------------------------------
    def set_mute(self, target: str, until_utc: datetime | None) -> None:
        until = None if until_utc is None else until_utc.timestamp()
        self._db.execute("INSERT OR REPLACE INTO mutes(target, until_unix) VALUES (?, ?)", (target, until))

    def clear_mute(self, target: str) -> bool:
        return self._db.execute("DELETE FROM mutes WHERE target = ?", (target,)).rowcount > 0

    def mutes(self, now_utc: datetime) -> dict[str, datetime | None]:
        """Mutes still in force at ``now_utc`` (expired ones are removed when the ledger can be written)."""
        now_unix = now_utc.timestamp()
        with contextlib.suppress(sqlite3.OperationalError):  # a full disk: read them all the same
            self._db.execute("DELETE FROM mutes WHERE until_unix IS NOT NULL AND until_unix <= ?",
                             (now_unix,))
        return {
            t: None if u is None else datetime.fromtimestamp(u, UTC)
            for t, u in self._db.execute(
                "SELECT target, until_unix FROM mutes WHERE until_unix IS NULL OR until_unix > ?"
                " ORDER BY target",
                (now_unix,),
            )
        }

    # -- the target in use (kept here so a restart remembers it; cleared at dawn) -------------
    def set_in_use(self, target: str | None, source: str = "", until_utc: datetime | None = None) -> None:
        """Remember the target in use (None forgets it) and who set it, until ``until_utc``."""
        if target is None:
            self._db.execute("DELETE FROM meta WHERE name = 'in_use'")
            return
        value = json.dumps({"target": target, "source": source,
                            "until_unix": None if until_utc is None else until_utc.timestamp()})
        self._db.execute("INSERT OR REPLACE INTO meta(name, value) VALUES ('in_use', ?)", (value,))

    def in_use(self, now_utc: datetime) -> tuple[str, str, datetime | None] | None:
        """(target, source, until) of the target in use, or None (an expired one is forgotten)."""
        row = self._db.execute("SELECT value FROM meta WHERE name = 'in_use'").fetchone()
        if row is None:
            return None
        try:
            data = json.loads(row[0])
            until = data.get("until_unix")
            until_utc = None if until is None else datetime.fromtimestamp(float(until), UTC)
            target, source = str(data["target"]), str(data.get("source", ""))
        except (ValueError, KeyError, TypeError):
            self.set_in_use(None)
            return None
        if until_utc is not None and until_utc <= now_utc:
            self.set_in_use(None)
            return None
        return target, source, until_utc
    # -- acknowledgements of critical alerts (plan.insist) -----------------------------------
    def acknowledge(self, event_ids: Iterable[str], now_utc: datetime, via: str) -> tuple[str, ...]:
        """Record that the user acknowledged these events; return the ones not acknowledged before.

        Args:
            event_ids: ``plan.insist.event_id`` of an alert key (``target|kind|time``).
            via: how ("command", "board", "desktop"), for the log and status.
        """
        fresh = []
        with self._transaction():
            for event in dict.fromkeys(event_ids):
                cursor = self._db.execute(
                    "INSERT OR IGNORE INTO acks(event, acked_unix, via) VALUES (?, ?, ?)",
                    (event, now_utc.timestamp(), via),
                )
                if cursor.rowcount == 1:
                    fresh.append(event)
        return tuple(fresh)

    def drop_owed_of_events(self, event_ids: Iterable[str], now_utc: datetime) -> tuple[str, ...]:
        """Cancel every debt still owed for alerts of these events (acknowledged: nothing more to
        tell); the debts become ``dropped``. Returns the alert keys that had debts cancelled."""
        keys: list[str] = []
        with self._transaction():
            for event in dict.fromkeys(event_ids):
                prefix = event + "|"
                rows = self._db.execute(
                    "SELECT key, channel FROM owed WHERE state = 'owed' AND substr(key, 1, ?) = ?",
                    (len(prefix), prefix),
                ).fetchall()
                for key, channel in rows:
                    self._settle(key, channel, "dropped", now_utc)
                    keys.append(key)
        return tuple(dict.fromkeys(keys))

    def acknowledged(self) -> frozenset[str]:
        """Every acknowledged event id (kept as long as the ledger keeps alerts)."""
        return frozenset(r[0] for r in self._db.execute("SELECT event FROM acks"))

    def given(self, event_id: str) -> bool:
        """Whether any alert of the event has been claimed for sending (it has started to insist)."""
        prefix = event_id + "|"
        row = self._db.execute(
            "SELECT 1 FROM alerts WHERE substr(key, 1, ?) = ? AND state IN ('sending', 'delivered') LIMIT 1",
            (len(prefix), prefix),
        ).fetchone()
        return row is not None

    def given_events(self) -> frozenset[str]:
        """The events (``target|kind|time``) any of whose alerts has been claimed for sending.

        One query for all of them: ``status`` asks about every event with repeats planned, and
        a query per event (each a full scan) took seconds with thousands of targets.
        """
        rows = self._db.execute("SELECT key FROM alerts WHERE state IN ('sending', 'delivered')")
        return frozenset(key.rpartition("|")[0] for (key,) in rows)

    # -- helpers ---------------------------------------------------------------------------
    def _transaction(self, *, nested_ok: bool = False) -> contextlib.AbstractContextManager[None]:
        if nested_ok and self._db.in_transaction:
            return contextlib.nullcontext()
        return _Transaction(self._db)

    def _settle(self, key: str, channel: str, state: str, now_utc: datetime,
                late_seconds: float | None = None) -> bool:
        """Close one channel's debt (inside a transaction); True if that closed the alert."""
        self._db.execute(
            "UPDATE owed SET state = ?, updated_unix = ?, late_seconds = ? WHERE key = ? AND channel = ?"
            " AND state = 'owed'",
            (state, now_utc.timestamp(), late_seconds, key, channel),
        )
        return self._close_if_settled(key, now_utc)

    def _close_if_settled(self, key: str, now_utc: datetime) -> bool:
        debts, open_debts, delivered, late = self._db.execute(
            "SELECT COUNT(*), SUM(state = 'owed'), SUM(state = 'delivered'), MAX(late_seconds) FROM owed"
            " WHERE key = ?",
            (key,),
        ).fetchone()
        if open_debts or not debts:  # still owed, or claimed without debts (left to adopt_unowned)
            return False
        cursor = self._db.execute(
            "UPDATE alerts SET state = ?, updated_unix = ?, late_seconds = ?"
            " WHERE key = ? AND state = 'sending'",
            ("delivered" if delivered else "missed", now_utc.timestamp(), late, key),
        )
        return cursor.rowcount == 1

    def _settled_near(self, rows: list[tuple]) -> _Settled:
        """Keys and (target, kind, lead) -> event times of settled rows near the given events."""
        keys: set[str] = set()
        times: dict[tuple[str, str, float], list[float]] = {}
        if not rows:
            return keys, times
        low = min(row[3] for row in rows) - EVENT_MATCH_SECONDS
        high = max(row[3] for row in rows) + EVENT_MATCH_SECONDS
        cursor = self._db.execute(
            "SELECT key, target, kind, lead_minutes, event_unix FROM alerts"
            " WHERE state != 'planned' AND event_unix BETWEEN ? AND ?",
            (low, high),
        )
        for key, target, kind, lead, event_unix in cursor:
            keys.add(key)
            times.setdefault((target, kind, lead), []).append(event_unix)
        return keys, times

    def _rows(self, where: str, params: tuple[object, ...]) -> tuple[LedgerRow, ...]:
        cursor = self._db.execute(
            "SELECT key, target, kind, event_unix, lead_minutes, due_unix, title, body, urgency, state,"
            " late_seconds FROM alerts " + where,
            params,
        )
        return tuple(_row(r) for r in cursor.fetchall())


_Settled = tuple[set[str], dict[tuple[str, str, float], list[float]]]


#: One planned alert into ``alerts``; its values are a ``_plan_row``, in this order.
_INSERT_PLANNED_SQL = (
    "INSERT INTO alerts(key, target, kind, event_unix, lead_minutes, due_unix, title, body, urgency, state,"
    " updated_unix) VALUES (?,?,?,?,?,?,?,?,?, 'planned', ?)"
)


def _plan_row(alert: PlannedAlert, now_unix: float) -> tuple:
    """The ``alerts`` columns of a planned alert, in ``_INSERT_PLANNED_SQL``'s order."""
    return (
        alert.key,
        alert.event.target or SKY_TARGET_NAME,
        alert.event.kind.value,
        alert.event.time_utc.timestamp(),
        alert.lead_minutes,
        alert.due_utc.timestamp(),
        alert.title,
        alert.body,
        alert.urgency.value,
        now_unix,
    )


def _matches_settled(row: tuple, settled: _Settled) -> bool:
    # The same alert as a settled row: the same key, or the same target, kind and lead with the
    # event within EVENT_MATCH_SECONDS (two computations of one event).
    keys, times = settled
    if row[0] in keys:
        return True
    near = times.get((row[1], row[2], row[4]))
    return near is not None and any(abs(t - row[3]) <= EVENT_MATCH_SECONDS for t in near)


def _row(r: tuple) -> LedgerRow:
    return LedgerRow(
        key=r[0],
        target=r[1],
        kind=r[2],
        event_utc=datetime.fromtimestamp(r[3], UTC),
        lead_minutes=r[4],
        due_utc=datetime.fromtimestamp(r[5], UTC),
        title=r[6],
        body=r[7],
        urgency=r[8],
        state=r[9],
        late_seconds=r[10],
    )


class _Transaction:
    """``BEGIN IMMEDIATE`` ... ``COMMIT`` (or ``ROLLBACK`` on an exception)."""

    def __init__(self, db: sqlite3.Connection) -> None:
        self._db = db

    def __enter__(self) -> None:
        self._db.execute("BEGIN IMMEDIATE")

    def __exit__(self, exc_type: object, *rest: object) -> None:
        if exc_type is None:
            try:
                self._db.execute("COMMIT")
                return
            except sqlite3.Error:
                self._rollback()
                raise
        self._rollback()

    def _rollback(self) -> None:
        # SQLite may have rolled back already (a full disk, an I/O error): nothing left to undo.
        if self._db.in_transaction:
            with contextlib.suppress(sqlite3.Error):
                self._db.execute("ROLLBACK")


_SCHEMA = """
CREATE TABLE IF NOT EXISTS meta (name TEXT PRIMARY KEY, value TEXT NOT NULL);
CREATE TABLE IF NOT EXISTS alerts (
    key TEXT PRIMARY KEY,
    target TEXT NOT NULL,
    kind TEXT NOT NULL,
    event_unix REAL NOT NULL,
    lead_minutes REAL NOT NULL,
    due_unix REAL NOT NULL,
    title TEXT NOT NULL DEFAULT '',
    body TEXT NOT NULL DEFAULT '',
    urgency TEXT NOT NULL DEFAULT 'normal',
    state TEXT NOT NULL CHECK (state IN ('planned', 'sending', 'delivered', 'missed')),
    updated_unix REAL NOT NULL,
    late_seconds REAL
);
CREATE INDEX IF NOT EXISTS alerts_match ON alerts(target, kind, lead_minutes, event_unix);
CREATE INDEX IF NOT EXISTS alerts_state_due ON alerts(state, due_unix);
CREATE TABLE IF NOT EXISTS deliveries (
    key TEXT NOT NULL,
    channel TEXT NOT NULL,
    delivered_unix REAL NOT NULL,
    late_seconds REAL NOT NULL,
    ok INTEGER NOT NULL,
    error TEXT NOT NULL DEFAULT '',
    title TEXT NOT NULL DEFAULT ''
);
CREATE INDEX IF NOT EXISTS deliveries_key ON deliveries(key, channel);
CREATE TABLE IF NOT EXISTS mutes (target TEXT PRIMARY KEY, until_unix REAL);
CREATE TABLE IF NOT EXISTS owed (
    key TEXT NOT NULL,
    channel TEXT NOT NULL,
    state TEXT NOT NULL CHECK (state IN ('owed', 'delivered', 'missed', 'dropped')),
    updated_unix REAL NOT NULL,
    started_unix REAL,
    late_seconds REAL,
    error TEXT NOT NULL DEFAULT '',
    PRIMARY KEY (key, channel)
);
CREATE INDEX IF NOT EXISTS owed_state ON owed(state, channel);
CREATE TABLE IF NOT EXISTS acks (event TEXT PRIMARY KEY, acked_unix REAL NOT NULL, via TEXT NOT NULL);
"""


# -- opening, with the faults a user can meet --------------------------------------------------

_DAMAGED_MARKERS = ("file is not a database", "malformed", "corrupt")
_READ_ONLY_MARKERS = ("readonly", "read-only", "unable to open", "disk i/o error", "permission")


def open_ledger(path: str | os.PathLike[str], now_utc: datetime) -> tuple[Ledger, str]:
    """Open the ledger for the service, dealing with what can be wrong with the file.

    A damaged file (not a database, or failing SQLite's ``quick_check``) is moved aside as
    ``NAME.damaged-YYYYmmddTHHMMSSZ`` (with its -wal and -shm files), never deleted, and a new
    ledger is started. A stale ``-shm`` file the service cannot write (left by another user or a
    copy) is moved aside too: it is only an index of the -wal file, rebuilt on open, and the
    caller holds the single-instance lock, so no other service has the ledger open.

    Returns:
        The ledger and a notice for the user ("" when nothing had to be done).

    Raises:
        LedgerUnusable: the file or its directory cannot be written (read-only, no permission,
            full): the message names the file and the fix.
    """
    path = Path(path)
    notices = []
    shm = Path(f"{path}-shm")
    if shm.exists() and not _writable(shm):
        aside = _move_aside(shm, "stale", now_utc)
        log.warning("moved a stale read-only %s aside to %s", shm, aside)
        notices.append(f"A stale read-only {shm.name} was moved aside to {aside.name}.")
    try:
        ledger = _open_checked(path)
    except sqlite3.DatabaseError as exc:
        text = str(exc).lower()
        if isinstance(exc, sqlite3.OperationalError) and any(m in text for m in _READ_ONLY_MARKERS) \
                or not any(m in text for m in _DAMAGED_MARKERS):
            raise _unusable(path, exc) from None
        aside = _move_aside(path, "damaged", now_utc)
        for suffix in ("-wal", "-shm"):
            side = Path(f"{path}{suffix}")
            if side.exists():
                _move_aside(side, "damaged", now_utc)
        log.error("the alert ledger %s was damaged (%s); moved aside to %s; starting a new one",
                  path, exc, aside)
        notices.append(
            f"The alert ledger {path} was damaged ({exc}). It was moved aside to {aside.name} (kept, not"
            " deleted) and a new ledger was started: alerts owed before this start are not known to it,"
            " and mutes were reset."
        )
        try:
            ledger = _open_checked(path)
        except sqlite3.DatabaseError as again:
            raise _unusable(path, again) from None
    except OSError as exc:
        raise _unusable(path, exc) from None
    return ledger, " ".join(notices)


def _open_checked(path: Path) -> Ledger:
    ledger = Ledger(path)
    try:
        row = ledger._db.execute("PRAGMA quick_check").fetchone()
        if row is None or row[0] != "ok":
            raise sqlite3.DatabaseError(f"database disk image is malformed (quick_check: {row and row[0]})")
        if not ledger.is_new:  # a write, so a read-only file shows now rather than at the first alert
            ledger._db.execute("UPDATE meta SET value = value WHERE name = 'schema_version'")
    except BaseException:
        ledger.close()
        raise
    return ledger


def _unusable(path: Path, exc: BaseException) -> LedgerUnusable:
    return LedgerUnusable(
        f"cannot write the alert ledger {path}: {exc}. The file or its folder is read-only, not this"
        " user's, or on a full or read-only disk. Fix: make both writable by this user"
        f" (ls -l {path.parent}; chmod u+w {path} {path.parent}), free some space, or give the service"
        " another state directory with XDG_STATE_HOME (the ledger is $XDG_STATE_HOME/siderod/ledger.sqlite3)."
    )


def _writable(path: Path) -> bool:
    try:
        fd = os.open(path, os.O_RDWR)
    except OSError:
        return False
    os.close(fd)
    return True


def _move_aside(path: Path, why: str, now_utc: datetime) -> Path:
    stamp = now_utc.astimezone(UTC).strftime("%Y%m%dT%H%M%SZ")
    aside = path.with_name(f"{path.name}.{why}-{stamp}")
    n = 1
    while aside.exists():
        n += 1
        aside = path.with_name(f"{path.name}.{why}-{stamp}-{n}")
    os.replace(path, aside)
    return aside
