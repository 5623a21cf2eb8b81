"""The mount watch under FakeClock: a whole night of reports, without a server.

The reports are what the INDI link hands the watch (pointing of date, pier side, tracking); the
astronomy they are checked against is ERFA's (gst06a for the apparent sidereal time).
"""

from __future__ import annotations

import asyncio
from dataclasses import replace
from datetime import UTC, datetime, timedelta

import erfa
import numpy as np
import pytest
from helpers import service_fakes as fakes

from siderod.common.clock import FakeClock
from siderod.common.model import EventKind, Mount, MountKind, MountLink, Urgency
from siderod.plan.mount import SIDEREAL_RATE, LinkState, PierSide, hour_angle_hours
from siderod.service.mount import MountWatch, next_dawn_utc

# The requirement: a flip alert within 1 s of the hour angle ERFA gives.
ON_TIME_SECONDS = 1.0
EVENING_UTC = datetime(2026, 12, 14, 20, 0, tzinfo=UTC)  # the demo night, Sun far below


def _erfa_last_hours(when_utc: datetime, lon_deg: float) -> float:
    unix = when_utc.timestamp()
    d1, d2 = 2440587.5, unix / 86400.0
    t1, t2 = erfa.taitt(*erfa.utctai(d1, d2))
    return float(np.degrees(erfa.gst06a(d1, d2, t1, t2)) + lon_deg) / 15.0 % 24.0


def _config(**mount_changes):
    leads = {EventKind.FLIP_DUE: (10.0, 0.0), EventKind.TRACKING_LIMIT: (0.0,)}
    config = fakes.make_config(lead_minutes=leads)
    mount = Mount(MountKind.GERMAN_EQUATORIAL, flip_after_minutes=10.0, limit_after_minutes=25.0,
                  link=MountLink(enabled=True))
    return replace(config, mount=replace(mount, **mount_changes))


class _Recorder:
    def __init__(self, clock):
        self.clock = clock
        self.sent = []

    async def __call__(self, message):
        self.sent.append((message, self.clock.now_utc()))

    def kinds(self):
        return [m.kind for m, _ in self.sent]


async def _start(config, clock):
    recorder = _Recorder(clock)
    acks = []
    watch = MountWatch(config, clock, recorder, on_acknowledge=lambda keys, why: acks.append((keys, why)))
    task = asyncio.get_running_loop().create_task(watch.run())
    await clock.settle()
    return watch, recorder, acks, task


async def _stop(task):
    task.cancel()
    with pytest.raises(asyncio.CancelledError):
        await task


async def _advance_to(clock, when_utc, step_seconds=30.0):
    while clock.now_utc() < when_utc:
        await clock.advance(min(step_seconds, (when_utc - clock.now_utc()).total_seconds()))


def _ra_for_ha(when_utc, ha_hours):
    return (_erfa_last_hours(when_utc, fakes.CORRIE_HILL.longitude_deg) - ha_hours) % 24.0


@pytest.mark.slow
async def test_whole_night_flip_slew_flip_stop_and_lost_link():
    clock = FakeClock(EVENING_UTC)
    config = _config()
    watch, recorder, acks, task = await _start(config, clock)
    lon = config.site.longitude_deg

    # 20:00: linked, on the pre-flip side, tracking, one hour east of the meridian.
    watch.set_link(LinkState.LINKED, "test")
    ra1 = _ra_for_ha(clock.now_utc(), -1.0)
    watch.report(ra_hours=ra1, dec_deg=30.0, slewing=False)
    watch.report(pier_side=PierSide.WEST, tracking=True)
    view = watch.view()
    assert view.ha_hours == pytest.approx(-1.0, abs=1e-4)
    assert view.seconds_to_flip == pytest.approx((1 + 10 / 60) * 3600 / SIDEREAL_RATE, abs=1.0)
    assert view.counterweight_up is False

    # The ten-minute warning, then the flip itself, each when ERFA's hour angle says.
    await _advance_to(clock, EVENING_UTC + timedelta(hours=1, minutes=12))
    flips = [(m, t) for m, t in recorder.sent if m.kind == "flip-due"]
    assert [m.lead_minutes for m, _ in flips] == [10.0, 0.0]
    for message, when in flips:
        ha = hour_angle_hours(_erfa_last_hours(when, lon), ra1)
        expected_ha = (10.0 - message.lead_minutes * SIDEREAL_RATE) / 60.0
        assert abs(ha - expected_ha) * 3600 / SIDEREAL_RATE < ON_TIME_SECONDS
        assert message.urgency is Urgency.CRITICAL
        assert "hour angle alone" not in message.body
    assert watch.view().counterweight_up is True

    # 21:12: the observer slews to a new place 30 minutes east: everything is planned afresh.
    watch.report(slewing=True)
    ra2 = _ra_for_ha(clock.now_utc(), -0.5)
    watch.report(ra_hours=ra2, dec_deg=45.0, slewing=False)
    watch.report(pier_side=PierSide.WEST)
    # Slewed to where no flip is due: the two flip alerts given have nothing left to warn of.
    # One event (the flip), given twice (10 min before and at it).
    assert [(len(keys), why) for keys, why in acks] == [(1, "the mount slewed away from the flip")]
    slewed_utc = clock.now_utc()
    await _advance_to(clock, slewed_utc + timedelta(minutes=41))
    new_flips = [(m, t) for m, t in recorder.sent[len(flips):] if m.kind == "flip-due"]
    assert [m.lead_minutes for m, _ in new_flips] == [10.0, 0.0]
    for message, when in new_flips:
        ha = hour_angle_hours(_erfa_last_hours(when, lon), ra2)
        expected_ha = (10.0 - message.lead_minutes * SIDEREAL_RATE) / 60.0
        assert abs(ha - expected_ha) * 3600 / SIDEREAL_RATE < ON_TIME_SECONDS

    # The flip happens: the pier side changes, the given flip alerts are acknowledged, no limit.
    watch.report(slewing=True)
    watch.report(pier_side=PierSide.EAST)
    watch.report(ra_hours=ra2, dec_deg=45.0, slewing=False)
    assert len(acks) == 2
    keys, why = acks[1]
    assert [k.split("|")[:2] for k in keys] == [["mount", "flip-due"]]
    assert "west to east" in why
    await _advance_to(clock, clock.now_utc() + timedelta(hours=1))
    assert "tracking-limit" not in recorder.kinds()
    assert "flip-noticed" in recorder.kinds()

    # Tracking stops in the dark, then resumes.
    watch.report(tracking=False)
    await clock.advance(5.0)
    watch.report(tracking=True)  # a moment off (a slew on many drivers): no alert
    assert "tracking-stopped" not in recorder.kinds()
    watch.report(tracking=False)
    await clock.advance(11.0)
    watch.report(tracking=True)
    # The link is lost, then comes back.
    watch.set_link(LinkState.LOST, "server went away")
    assert watch.view().ra_hours is None
    watch.set_link(LinkState.LINKED, "test")
    await clock.advance(1.0)
    tail = recorder.kinds()[-4:]
    assert tail == ["tracking-stopped", "tracking-back", "link-lost", "link-back"]
    urgencies = {m.kind: m.urgency for m, _ in recorder.sent}
    assert urgencies["tracking-stopped"] is Urgency.CRITICAL and urgencies["link-lost"] is Urgency.CRITICAL
    assert all("never moves the mount" in m.body for m, _ in recorder.sent)
    await _stop(task)


async def test_without_pier_side_the_alert_says_it_uses_the_hour_angle_alone():
    clock = FakeClock(EVENING_UTC)
    watch, recorder, _, task = await _start(_config(), clock)
    watch.set_link(LinkState.LINKED, "test")
    watch.report(ra_hours=_ra_for_ha(clock.now_utc(), 9.0 / 60.0), dec_deg=20.0, slewing=False)
    watch.report(tracking=True)
    assert watch.view().pier_side == "unknown" and watch.view().counterweight_up is None
    await clock.advance(120.0)
    flip = [m for m, _ in recorder.sent if m.kind == "flip-due"]
    assert flip and "hour angle alone" in flip[-1].body
    await _stop(task)


async def test_pointing_near_the_sun_while_tracking_is_critical():
    from siderod.astro.sunmoon import sun_apparent_radec
    from siderod.astro.timescales import instants_from_unix

    noon = datetime(2026, 12, 14, 12, 0, tzinfo=UTC)
    clock = FakeClock(noon)
    watch, recorder, _, task = await _start(_config(), clock)
    ra, dec, _ = sun_apparent_radec(instants_from_unix(noon.timestamp()))
    watch.set_link(LinkState.LINKED, "test")
    watch.report(ra_hours=float(ra) + 0.3, dec_deg=float(dec), slewing=False)  # ~4.5 deg away
    watch.report(tracking=True, pier_side=PierSide.EAST)
    await clock.advance(1.0)
    sun = [m for m, _ in recorder.sent if m.kind == "sun"]
    assert len(sun) == 1 and sun[0].urgency is Urgency.CRITICAL and "Never point" in sun[0].body
    # Tracking stopping in daylight is not a night alert.
    watch.report(tracking=False)
    await clock.advance(1.0)
    assert "tracking-stopped" not in recorder.kinds()
    await _stop(task)


def test_target_in_use_is_cleared_at_the_next_dawn():
    config = _config()
    dawn = next_dawn_utc(config, EVENING_UTC)
    # Civil dawn at 56 N in mid-December is near 07:50 UTC (from memory); the Sun climbs through
    # -6 deg then.
    assert datetime(2026, 12, 15, 7, 0, tzinfo=UTC) < dawn < datetime(2026, 12, 15, 8, 30, tzinfo=UTC)
    from siderod.astro.sunmoon import observe_sun
    from siderod.astro.timescales import instants_from_unix
    from siderod.plan.positions import observer_for

    alt = float(observe_sun(instants_from_unix(dawn.timestamp()), observer_for(config)).alt_deg)
    assert alt == pytest.approx(-6.0, abs=0.01)


async def test_an_unacknowledged_mount_flip_repeats_by_the_insist_rule_until_acknowledged():
    from siderod.plan.insist import repeat_times

    clock = FakeClock(EVENING_UTC)
    config = _config()
    config = replace(config, alerts=replace(config.alerts, repeat_minutes=2.0, repeat_count=3))
    watch, recorder, _, task = await _start(config, clock)
    watch.set_link(LinkState.LINKED, "test")
    watch.report(ra_hours=_ra_for_ha(clock.now_utc(), -11.0 / 60.0), dec_deg=30.0, slewing=False)
    watch.report(pier_side=PierSide.WEST, tracking=True)
    await _advance_to(clock, EVENING_UTC + timedelta(minutes=27), step_seconds=20.0)
    given = [(m, t) for m, t in recorder.sent if m.kind == "flip-due"]
    configured = [t for m, t in given if m.lead_minutes is not None]
    repeats = [(m, t) for m, t in given if m.lead_minutes is None]
    assert len(configured) == 2
    # The same times the planner's rule gives; the limit (15 min of hour angle after the flip)
    # is the next stage, so the repeats run on to it rather than stopping after three.
    limit_utc = configured[1] + timedelta(minutes=15 / SIDEREAL_RATE)
    expected = repeat_times(configured, repeat_minutes=2.0, repeat_count=3, next_stage_utc=limit_utc)
    expected = [t for t in expected if t <= clock.now_utc()]
    assert len(repeats) == len(expected) > 3
    for (_, got), want in zip(repeats, expected, strict=True):
        assert abs((got - want).total_seconds()) < 0.001
    assert all("(repeat" in m.title and m.urgency is Urgency.CRITICAL for m, _ in repeats)
    assert watch.awaiting() == (configured and (repeats[0][0].key.rsplit("|", 1)[0],))

    watch.user_acknowledged(watch.awaiting())
    count = len(recorder.sent)
    await clock.advance(600.0)
    assert len([m for m, _ in recorder.sent[count:] if m.kind == "flip-due"]) == 0
    await _stop(task)


async def test_the_link_names_the_target_in_use_only_while_tracking_on_it():
    from siderod.common.model import Frame, Target
    from siderod.plan.positions import compute_sky

    clock = FakeClock(EVENING_UTC)
    target = Target(name="Demo Cluster A", frame=Frame.ICRS, lon_deg=30.0, lat_deg=35.0, ra_deg=30.0,
                    dec_deg=35.0)
    config = replace(_config(), targets=(target,))
    sky = compute_sky(config, clock.now_utc().timestamp())
    changes = []

    async def on_in_use(name, source):
        changes.append((name, source))

    watch = MountWatch(config, clock, _Recorder(clock), on_in_use=on_in_use)
    task = asyncio.get_running_loop().create_task(watch.run())
    watch.set_link(LinkState.LINKED, "test")
    # Parked on the target's place, not tracking: nothing is in use.
    watch.report(ra_hours=float(sky.ra_hours[0]), dec_deg=float(sky.dec_deg[0]) + 0.3, slewing=False)
    watch.report(tracking=False, parked=True)
    await clock.advance(1.0)
    assert changes == [] and watch.nearest is not None
    watch.report(parked=False, tracking=True)
    await clock.advance(1.0)
    assert changes == [("Demo Cluster A", "link")]
    watch.report(ra_hours=float(sky.ra_hours[0]) + 1.0, dec_deg=30.0, slewing=False)  # moved off it
    await clock.advance(1.0)
    assert changes[-1] == (None, "link")
    await _stop(task)
