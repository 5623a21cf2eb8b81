"""The pure planner: stable keys, lead times, overrides, mutes, the Sun hold, the text of alerts."""

from __future__ import annotations

from dataclasses import dataclass, replace
from datetime import UTC, datetime, timedelta

import pytest

from siderod.common.model import (
    AlertRules,
    Config,
    Event,
    EventKind,
    Frame,
    Site,
    Target,
    Urgency,
)
from siderod.plan.planner import alert_key, format_alert, format_missed_summary, parse_alert_key, plan_alerts

SITE = Site("Corrie Hill Observatory", 56.208333, -3.6875, 212.0, "Europe/London")
NOW = datetime(2026, 12, 14, 18, 0, tzinfo=UTC)


@dataclass
class _Agenda:
    events: tuple[Event, ...]


def _target(name, **kw):
    return Target(name=name, frame=Frame.ICRS, lon_deg=10.0, lat_deg=41.0, ra_deg=10.0, dec_deg=41.0, **kw)


def _config(**rules) -> Config:
    alerts = AlertRules(
        lead_minutes={EventKind.FLIP_DUE: (10.0, 0.0), EventKind.CULMINATION: (0.0,)},
        **rules,
    )
    return Config(path="t.toml", site=SITE, targets=(_target("M31"), _target("M42")), alerts=alerts)


def _event(kind=EventKind.FLIP_DUE, target="M31", at=NOW + timedelta(hours=2), **kw):
    return Event(at, kind, target, 70.25, 181.5, hour_angle_hours=kw.pop("ha", 5 / 60), **kw)


def test_key_is_target_kind_time_to_the_second_and_lead():
    e = _event(at=datetime(2026, 12, 14, 21, 3, 7, 499_000, tzinfo=UTC))
    assert alert_key(e, 10) == "M31|flip-due|2026-12-14T21:03:07Z|10"
    assert alert_key(replace(e, time_utc=e.time_utc + timedelta(milliseconds=2)), 10).endswith("21:03:08Z|10")
    assert alert_key(_event(EventKind.SUNSET, None), 2.5).startswith("sky|sunset|")
    when = datetime(2026, 12, 14, 21, 3, 7, tzinfo=UTC)
    assert parse_alert_key(alert_key(e, 10)) == ("M31", "flip-due", when, 10.0)
    with pytest.raises(ValueError, match="not an alert key"):
        parse_alert_key("nonsense")


def test_each_lead_gives_one_alert_due_that_many_minutes_before():
    plan = plan_alerts(_Agenda((_event(),)), _config(), muted={}, now_utc=NOW)
    assert [a.lead_minutes for a in plan] == [10.0, 0.0]
    assert [a.due_utc for a in plan] == [NOW + timedelta(minutes=110), NOW + timedelta(hours=2)]
    assert all(a.urgency is Urgency.CRITICAL for a in plan)  # flips are critical by default


def test_plan_is_sorted_deduplicated_and_stable():
    events = (_event(target="M42"), _event(EventKind.CULMINATION, "M31", NOW + timedelta(hours=1)), _event())
    config = _config()
    first = plan_alerts(_Agenda(events), config, muted={}, now_utc=NOW)
    again = plan_alerts(_Agenda(events + events[:1]), config, muted={}, now_utc=NOW)
    assert first == again
    assert [a.due_utc for a in first] == sorted(a.due_utc for a in first)


def test_per_target_override_and_alerts_off():
    config = _config()
    config = replace(config, targets=(
        _target("M31", lead_minutes={EventKind.FLIP_DUE: (3.0,)}),
        _target("M42", alerts_enabled=False),
    ))
    plan = plan_alerts(_Agenda((_event(), _event(target="M42"))), config, muted={}, now_utc=NOW)
    assert [(a.event.target, a.lead_minutes) for a in plan] == [("M31", 3.0)]


def test_kinds_without_leads_and_unknown_targets_do_not_alert():
    events = (_event(EventKind.RISE), _event(target="not-configured"))
    assert plan_alerts(_Agenda(events), _config(), muted={}, now_utc=NOW) == ()


def test_mutes_until_unmuted_and_until_a_time():
    events = (_event(at=NOW + timedelta(hours=1)), _event(at=NOW + timedelta(hours=3)), _event(target="M42"))
    plan = plan_alerts(_Agenda(events), _config(), muted={"M31": NOW + timedelta(hours=2)}, now_utc=NOW)
    assert {(a.event.target, a.event.time_utc) for a in plan} == {
        ("M31", NOW + timedelta(hours=3)), ("M42", NOW + timedelta(hours=2))}
    plan = plan_alerts(_Agenda(events), _config(), muted={"M31": None}, now_utc=NOW)
    assert {a.event.target for a in plan} == {"M42"}
    expired = plan_alerts(_Agenda(events), _config(), muted={"M31": NOW - timedelta(minutes=1)}, now_utc=NOW)
    assert len(expired) == 6


def test_sun_hold_applies_to_target_events_only():
    config = _config(hold_while_sun_above_deg=-12.0)
    config = replace(config, alerts=replace(config.alerts, lead_minutes={
        **config.alerts.lead_minutes, EventKind.SUNSET: (0.0,)}))
    daylight_until = NOW + timedelta(hours=1, minutes=30)

    def sun_alt_deg(moments_utc):  # a stand-in Sun: up until 19:30, then deep down
        return [10.0 if when_utc < daylight_until else -30.0 for when_utc in moments_utc]

    events = (_event(EventKind.CULMINATION, at=NOW + timedelta(hours=1)),
              _event(EventKind.CULMINATION, at=NOW + timedelta(hours=3)),
              _event(EventKind.SUNSET, None, NOW + timedelta(minutes=30)))
    plan = plan_alerts(_Agenda(events), config, muted={}, now_utc=NOW, sun_altitude_deg=sun_alt_deg)
    assert [(a.event.kind, a.due_utc) for a in plan] == [
        (EventKind.SUNSET, NOW + timedelta(minutes=30)),
        (EventKind.CULMINATION, NOW + timedelta(hours=3)),
    ]


def test_alerts_past_their_grace_are_left_out():
    events = (_event(at=NOW - timedelta(minutes=5)), _event(at=NOW - timedelta(minutes=30)))
    plan = plan_alerts(_Agenda(events), _config(grace_minutes=10.0), muted={}, now_utc=NOW)
    assert [a.due_utc for a in plan] == [NOW - timedelta(minutes=5)]


def test_alert_text_names_target_event_and_gives_local_and_utc_time_ha_and_altitude():
    # 2026-12-14 is winter in Europe/London: local time = UTC (GMT), from the tz database.
    e = _event(at=datetime(2026, 12, 14, 21, 3, 7, tzinfo=UTC))
    title, body = format_alert(e, 10, SITE)
    assert title == "M31: meridian flip due in 10 min"
    assert "21:03:07 GMT on Mon 14 Dec" in body and "(21:03:07 UTC)" in body
    assert "Hour angle +0h05m00s" in body and "Altitude 70.2°" in body
    assert "mount's own limits" in body
    summer = replace(e, time_utc=datetime(2026, 7, 1, 21, 3, 7, tzinfo=UTC), kind=EventKind.CULMINATION)
    title, body = format_alert(summer, 0, SITE)
    assert title == "M31 culminates now" and "22:03:07 BST" in body  # BST = UTC+1 (tz database)
    title, _ = format_alert(_event(EventKind.RISE, threshold_deg=30.0), 5, SITE)
    assert title == "M31 rises above 30° in 5 min"


def test_missed_summary_counts_and_truncates():
    title, body = format_missed_summary([f"alert {i}" for i in range(20)], 10.0)
    assert title == "20 alerts missed (more than 10 min late)"
    assert "alert 0" in body and "... and 8 more" in body


def test_sun_hold_never_silences_flip_or_limit_alerts_unless_named():
    # Equipment protection first (common practice: a missed flip can drive the mount into its
    # pier): the hold keeps daytime quiet for ordinary target alerts only.
    config = _config(hold_while_sun_above_deg=-12.0)
    config = replace(config, alerts=replace(config.alerts, lead_minutes={
        EventKind.FLIP_DUE: (0.0,), EventKind.TRACKING_LIMIT: (0.0,), EventKind.CULMINATION: (0.0,)}))

    def sun_up(moments_utc):  # a stand-in Sun that is always up
        return [10.0 for _ in moments_utc]

    events = (_event(EventKind.FLIP_DUE), _event(EventKind.TRACKING_LIMIT), _event(EventKind.CULMINATION))
    plan = plan_alerts(_Agenda(events), config, muted={}, now_utc=NOW, sun_altitude_deg=sun_up)
    assert sorted(a.event.kind.value for a in plan) == ["flip-due", "tracking-limit"]
    # A kind made critical in [alerts.urgency] is exempt as well.
    urgent = replace(config, alerts=replace(config.alerts, urgency={EventKind.CULMINATION: Urgency.CRITICAL}))
    plan = plan_alerts(_Agenda(events), urgent, muted={}, now_utc=NOW, sun_altitude_deg=sun_up)
    assert len(plan) == 3
    # Named explicitly in hold_kinds, a critical kind is held too.
    both = (EventKind.FLIP_DUE, EventKind.CULMINATION)
    named = replace(config, alerts=replace(config.alerts, hold_kinds=both))
    plan = plan_alerts(_Agenda(events), named, muted={}, now_utc=NOW, sun_altitude_deg=sun_up)
    assert [a.event.kind.value for a in plan] == ["tracking-limit"]


@dataclass
class _RecordsOnly:
    events: tuple


def test_planning_from_the_agenda_columns_equals_planning_from_every_record(demo_config):
    # The planner makes records only of the rows whose kind can have an alert; the result must be
    # exactly what planning over every record gives (the demo night, its flips repeating).
    from siderod.plan.agenda import compute_agenda
    from siderod.plan.planner import near_sun_targets, plan_repeats

    start = datetime(2026, 12, 14, 16, 0, tzinfo=UTC)
    agenda = compute_agenda(demo_config, start, 14.0)
    records = _RecordsOnly(agenda.events)
    assert len({e.kind for e in records.events}) > len(demo_config.alerts.lead_minutes)  # some kinds skipped
    now = start + timedelta(hours=3)
    until = now + timedelta(hours=3)
    for plan in (plan_alerts, lambda a, c, **kw: plan_repeats(a, c, until_utc=until, **kw)):
        from_columns = plan(agenda, demo_config, muted={}, now_utc=now)
        assert from_columns and from_columns == plan(records, demo_config, muted={}, now_utc=now)
    near = replace(demo_config.alerts, sun_separation_min_deg=120.0)  # some demo targets by day
    assert near_sun_targets(agenda, near) == near_sun_targets(records, near) != []
