"""Critical alerts that insist: the repeat rule (plan.insist) and the planner's repeats.

The expected repeat times are worked out by hand from the rule stated in ``siderod.plan.insist``
and the README (every ``repeat`` minutes from the first configured alert; a configured alert
takes the place of a repeat and restarts the series; the next stage stops it).
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from datetime import UTC, datetime, timedelta

from siderod.common.model import (
    AlertRules,
    Config,
    Event,
    EventKind,
    Frame,
    Mount,
    MountKind,
    Site,
    Target,
    Urgency,
)
from siderod.plan.insist import MAX_REPEATS, event_id, repeat_times
from siderod.plan.planner import parse_alert_key, plan_alerts, plan_repeats

SITE = Site("Corrie Hill Observatory", 56.208333, -3.6875, 212.0, "Europe/London")
FLIP_UTC = datetime(2026, 12, 14, 22, 0, tzinfo=UTC)
LIMIT_UTC = FLIP_UTC + timedelta(minutes=15)
NOW = FLIP_UTC - timedelta(hours=1)


def _minutes(times, origin=FLIP_UTC):
    return [round((t - origin).total_seconds() / 60, 6) for t in times]


def test_repeats_run_until_the_count_without_a_next_stage():
    assert _minutes(repeat_times([FLIP_UTC], repeat_minutes=2, repeat_count=4)) == [2, 4, 6, 8]


def test_a_configured_alert_takes_a_repeats_place_and_restarts_the_series():
    dues = [FLIP_UTC - timedelta(minutes=5), FLIP_UTC]
    times = repeat_times(dues, repeat_minutes=2, repeat_count=2)
    # -5 -> -3, -1; then -1 + 2 = +1 would come later than half a period before 0: 0 restarts it.
    assert _minutes(times) == [-3, -1, 2, 4]


def test_the_next_stage_stops_the_repeats():
    times = repeat_times([FLIP_UTC], repeat_minutes=2, repeat_count=0, next_stage_utc=LIMIT_UTC)
    assert _minutes(times) == [2, 4, 6, 8, 10, 12, 14]
    assert repeat_times([FLIP_UTC], repeat_minutes=2, repeat_count=5, next_stage_utc=FLIP_UTC) == ()


def test_no_repeats_when_switched_off_and_never_more_than_the_cap():
    assert repeat_times([FLIP_UTC], repeat_minutes=0, repeat_count=5) == ()
    assert len(repeat_times([FLIP_UTC], repeat_minutes=1, repeat_count=10_000)) == MAX_REPEATS


@dataclass
class _Agenda:
    events: tuple[Event, ...]


def _config(**rules) -> Config:
    alerts = AlertRules(
        lead_minutes={EventKind.FLIP_DUE: (10.0, 0.0), EventKind.TRACKING_LIMIT: (0.0,),
                      EventKind.CULMINATION: (0.0,)},
        **rules,
    )
    target = Target(name="M42", frame=Frame.ICRS, lon_deg=83.8, lat_deg=-5.4, ra_deg=83.8, dec_deg=-5.4)
    return Config(path="t.toml", site=SITE, targets=(target,), alerts=alerts,
                  mount=Mount(MountKind.GERMAN_EQUATORIAL, 0.0, 15.0))


def _agenda():
    flip = Event(FLIP_UTC, EventKind.FLIP_DUE, "M42", 30.0, 180.0, hour_angle_hours=0.0)
    limit = Event(LIMIT_UTC, EventKind.TRACKING_LIMIT, "M42", 29.0, 184.0, hour_angle_hours=0.25)
    culmination = Event(FLIP_UTC, EventKind.CULMINATION, "M42", 30.0, 180.0, hour_angle_hours=0.0)
    return _Agenda((flip, limit, culmination))


def test_flip_repeats_stop_at_the_tracking_limit_and_limit_repeats_count():
    repeats = plan_repeats(_agenda(), _config(repeat_count=3), muted={}, now_utc=NOW)
    flips = [a for a in repeats if a.event.kind is EventKind.FLIP_DUE]
    limits = [a for a in repeats if a.event.kind is EventKind.TRACKING_LIMIT]
    # flip alerts at -10 and 0; repeats -8 .. -2, then 2 .. 14 (the limit alert is at +15)
    assert _minutes(a.due_utc for a in flips) == [-8, -6, -4, -2, 2, 4, 6, 8, 10, 12, 14]
    assert _minutes((a.due_utc for a in limits), LIMIT_UTC) == [2, 4, 6]
    assert all(a.urgency is Urgency.CRITICAL for a in repeats)  # culminations are not critical
    assert [a.repeat_number for a in flips] == list(range(1, 12))
    assert flips[4].title.endswith(" now (repeat 5)")
    assert flips[0].title.endswith(" in 8 min (repeat 1)")
    assert "siderod ack" in flips[0].body


def test_repeat_keys_are_their_own_and_share_the_event_id():
    configured = plan_alerts(_agenda(), _config(), muted={}, now_utc=NOW)
    repeats = plan_repeats(_agenda(), _config(), muted={}, now_utc=NOW)
    keys = [a.key for a in configured + repeats]
    assert len(set(keys)) == len(keys)
    flip_id = event_id(configured[0].key)
    after = [a for a in repeats if a.due_utc > FLIP_UTC and event_id(a.key) == flip_id]
    assert parse_alert_key(after[0].key)[3] == -2.0  # two minutes after the event: lead -2
    assert parse_alert_key(after[0].key)[:3] == parse_alert_key(configured[0].key)[:3]


def test_acknowledged_events_get_no_repeats_and_others_keep_theirs():
    flip_id = "M42|flip-due|2026-12-14T22:00:00Z"
    repeats = plan_repeats(_agenda(), _config(), muted={}, now_utc=NOW, acknowledged={flip_id})
    assert repeats and all(a.event.kind is EventKind.TRACKING_LIMIT for a in repeats)


def test_repeats_stay_owed_after_their_first_alert_is_past_its_grace():
    late = FLIP_UTC + timedelta(minutes=11)  # the flip's alerts are past the 10 min grace
    configured = plan_alerts(_agenda(), _config(), muted={}, now_utc=late)
    assert all(a.event.kind is not EventKind.FLIP_DUE for a in configured)
    repeats = plan_repeats(_agenda(), _config(), muted={}, now_utc=late)
    flips = [a.due_utc for a in repeats if a.event.kind is EventKind.FLIP_DUE]
    assert _minutes(flips) == [2, 4, 6, 8, 10, 12, 14]


def test_muted_targets_and_repeat_zero_give_no_repeats():
    assert plan_repeats(_agenda(), _config(), muted={"M42": None}, now_utc=NOW) == ()
    assert plan_repeats(_agenda(), _config(repeat_minutes=0.0), muted={}, now_utc=NOW) == ()
    normal = _config(urgency={EventKind.FLIP_DUE: Urgency.NORMAL, EventKind.TRACKING_LIMIT: Urgency.NORMAL})
    assert plan_repeats(_agenda(), normal, muted={}, now_utc=NOW) == ()


def test_a_limit_with_no_alerts_still_ends_the_flip_repeats():
    config = _config()
    config = replace(config, alerts=replace(config.alerts, lead_minutes={EventKind.FLIP_DUE: (0.0,)}))
    repeats = plan_repeats(_agenda(), config, muted={}, now_utc=NOW)
    assert _minutes(a.due_utc for a in repeats) == [2, 4, 6, 8, 10, 12, 14]


def test_repeats_after_the_end_of_the_stretch_are_left_to_a_later_plan():
    # The service plans repeats only up to the end of its stretch (the next re-plan and a margin):
    # the same repeats, with the same keys and numbers, as the whole series, cut at until_utc.
    whole = plan_repeats(_agenda(), _config(repeat_count=3), muted={}, now_utc=NOW)
    cut_utc = FLIP_UTC + timedelta(minutes=5)
    stretch = plan_repeats(_agenda(), _config(repeat_count=3), muted={}, now_utc=NOW, until_utc=cut_utc)
    assert stretch == tuple(a for a in whole if a.due_utc <= cut_utc)
    assert _minutes(a.due_utc for a in stretch) == [-8, -6, -4, -2, 2, 4]
    later = plan_repeats(_agenda(), _config(repeat_count=3), muted={}, now_utc=cut_utc,
                         until_utc=LIMIT_UTC + timedelta(hours=1))
    grace = timedelta(minutes=_config().alerts.grace_minutes)
    assert later == tuple(a for a in whole if a.due_utc >= cut_utc - grace)  # numbered as in the series
