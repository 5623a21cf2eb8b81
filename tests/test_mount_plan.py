"""Pure mount planning: hour angle, time to the flip and limit marks, pier side, target in use."""

from __future__ import annotations

from datetime import UTC, datetime, timedelta

import erfa
import numpy as np
import pytest

from siderod.common.model import EventKind, Mount, MountKind, Urgency
from siderod.plan.mount import (
    SIDEREAL_RATE,
    PierSide,
    Pointing,
    angular_distance_deg,
    counterweight_up,
    hour_angle_hours,
    nearest_target,
    plan_pointing_alerts,
    seconds_to_mark,
    urgency_for_target,
)

# Corrie Hill Observatory (the invented demo site): east-positive longitude.
LON_DEG = -(3 + 41 / 60 + 15 / 3600)
NOW_UTC = datetime(2026, 12, 14, 21, 0, tzinfo=UTC)
# The planned instant may be off by the drift of the sidereal rate (nutation, precession) over
# at most 12 h of planning: far below a millisecond; 10 ms leaves room for float rounding.
EVENT_TOLERANCE_SECONDS = 0.01
# Two separations of the same pair from Vincenty's formula and ERFA: float rounding only.
SEPARATION_TOLERANCE_DEG = 1e-9
MOUNT = Mount(MountKind.GERMAN_EQUATORIAL, flip_after_minutes=10.0, limit_after_minutes=25.0)
LEADS = {EventKind.FLIP_DUE: (10.0, 0.0), EventKind.TRACKING_LIMIT: (0.0,)}


def _erfa_last_hours(when_utc: datetime) -> float:
    """LAST from ERFA gst06a (UT1 = UTC here, DUT1 = 0) plus longitude: the independent check."""
    unix = when_utc.timestamp()
    d1, d2 = 2440587.5, unix / 86400.0
    u1, u2 = erfa.utctai(d1, d2)
    t1, t2 = erfa.taitt(u1, u2)
    return float(np.degrees(erfa.gst06a(d1, d2, t1, t2)) + LON_DEG) / 15.0 % 24.0


def test_planned_flip_instant_puts_the_erfa_hour_angle_on_the_mark():
    # The mount points at RA_of_date = LAST - HA for HA = -2 h, on the pre-flip side.
    ra = (_erfa_last_hours(NOW_UTC) + 2.0) % 24.0
    ha = hour_angle_hours(_erfa_last_hours(NOW_UTC), ra)
    assert ha == pytest.approx(-2.0, abs=1e-12)
    pointing = Pointing(ra, 30.0, PierSide.WEST, tracking=True)
    planned = plan_pointing_alerts(NOW_UTC, ha, pointing, MOUNT, LEADS)
    assert [(d.kind, d.lead_minutes) for d in planned] == [
        (EventKind.FLIP_DUE, 10.0), (EventKind.FLIP_DUE, 0.0), (EventKind.TRACKING_LIMIT, 0.0)]
    for due in planned:
        # ERFA's hour angle of the same pointing at the planned instant is the mark.
        ha_then = hour_angle_hours(_erfa_last_hours(due.event_utc), ra)
        error_seconds = (ha_then - due.mark_hours) * 3600.0 / SIDEREAL_RATE
        assert abs(error_seconds) < EVENT_TOLERANCE_SECONDS, due
        assert due.due_utc == due.event_utc - timedelta(minutes=due.lead_minutes)


def test_east_side_parked_or_stopped_mount_has_no_flip_ahead():
    for pointing in (Pointing(1.0, 20.0, PierSide.EAST, tracking=True),
                     Pointing(1.0, 20.0, PierSide.WEST, tracking=False),
                     Pointing(1.0, 20.0, PierSide.WEST, tracking=True, parked=True)):
        assert plan_pointing_alerts(NOW_UTC, -1.0, pointing, MOUNT, LEADS) == ()


def test_mark_already_passed_is_overdue_on_the_west_side_and_ignored_when_side_unknown():
    west_side = Pointing(1.0, 20.0, PierSide.WEST, tracking=True)
    west = plan_pointing_alerts(NOW_UTC, 0.3, west_side, MOUNT, LEADS)
    # HA +18 min: the flip (+10 min) is behind and overdue now; the limit (+25 min) is 7 min ahead.
    assert [(d.kind, d.overdue) for d in west] == [
        (EventKind.FLIP_DUE, True), (EventKind.TRACKING_LIMIT, False)]
    assert west[0].due_utc == NOW_UTC
    assert (west[1].due_utc - NOW_UTC).total_seconds() == pytest.approx(7 * 60 / SIDEREAL_RATE)
    unknown = plan_pointing_alerts(NOW_UTC, 0.3, Pointing(1.0, 20.0, tracking=None), MOUNT, LEADS)
    # flip (+10 min) passed: taken as a slew onto the other side; the limit (+25 min) is ahead.
    assert [d.kind for d in unknown] == [EventKind.TRACKING_LIMIT]


def test_a_lead_already_inside_the_window_is_due_at_once():
    ha = 5.0 / 60.0  # 5 minutes before the flip at +10 min: the 10-minute warning is due now
    planned = plan_pointing_alerts(NOW_UTC, ha, Pointing(1.0, 20.0, PierSide.WEST, tracking=True), MOUNT,
                                   {EventKind.FLIP_DUE: (10.0,)})
    assert len(planned) == 1 and planned[0].due_utc == NOW_UTC
    assert planned[0].event_utc - NOW_UTC == pytest.approx(timedelta(seconds=300 / SIDEREAL_RATE),
                                                           abs=timedelta(milliseconds=1))


def test_counterweight_rises_past_the_meridian_on_the_west_side():
    # Common practice geometry of a German equatorial mount.
    assert counterweight_up(0.5, PierSide.WEST) is True
    assert counterweight_up(-0.5, PierSide.WEST) is False
    assert counterweight_up(-0.5, PierSide.EAST) is True
    assert counterweight_up(0.5, PierSide.EAST) is False
    assert counterweight_up(0.5, PierSide.UNKNOWN) is None


def test_seconds_to_mark_wraps_through_12h():
    assert seconds_to_mark(11.9, -11.9) == pytest.approx(0.2 * 3600 / SIDEREAL_RATE)
    assert seconds_to_mark(0.2, 0.1) < 0


def test_separation_matches_erfa_seps():
    rng = np.random.default_rng(5)
    for _ in range(200):
        ra1, ra2 = rng.uniform(0, 24, 2)
        dec1, dec2 = rng.uniform(-90, 90, 2)
        ours = angular_distance_deg(ra1, dec1, ra2, dec2)
        ref = np.degrees(erfa.seps(np.radians(ra1 * 15), np.radians(dec1),
                                   np.radians(ra2 * 15), np.radians(dec2)))
        assert ours == pytest.approx(ref, abs=SEPARATION_TOLERANCE_DEG)


def test_nearest_target_within_tolerance_only():
    names = ("NGC 1001", "NGC 1002")
    found = nearest_target(1.0, 20.0, names, [1.0, 1.02], [20.5, 20.0])
    assert found is not None and found[0] == "NGC 1002" and found[1] < 0.5
    assert nearest_target(5.0, 20.0, names, [1.0, 1.02], [20.5, 20.0]) is None


def test_target_in_use_makes_its_flip_critical_and_others_low_or_off():
    flip = EventKind.FLIP_DUE
    assert urgency_for_target(flip, "A", "A", Urgency.NORMAL, "info") is Urgency.CRITICAL
    assert urgency_for_target(flip, "B", "A", Urgency.CRITICAL, "info") is Urgency.LOW
    assert urgency_for_target(flip, "B", "A", Urgency.CRITICAL, "off") is None
    assert urgency_for_target(flip, "B", None, Urgency.CRITICAL, "off") is Urgency.CRITICAL  # nothing in use
    assert urgency_for_target(EventKind.CULMINATION, "B", "A", Urgency.LOW, "off") is Urgency.LOW


def test_next_target_in_use_goes_nearest_the_meridian_first_then_none():
    from siderod.plan.mount import next_target_in_use

    names, ha, alt = ("A", "B", "C", "D"), (1.5, -0.2, 0.7, 0.1), (40.0, 50.0, 30.0, -5.0)
    picks, current = [], None
    for _ in range(4):
        current = next_target_in_use(names, ha, alt, current)
        picks.append(current)
    assert picks == ["B", "C", "A", None]  # D is below the horizon
    assert next_target_in_use(names, ha, alt, "gone") == "B"
    assert next_target_in_use((), (), (), None) is None
