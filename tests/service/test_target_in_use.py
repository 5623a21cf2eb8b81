"""The target in use: set by a control request, shapes flip and limit urgency, kept across restarts."""

from __future__ import annotations

from dataclasses import replace
from datetime import timedelta

import pytest
from helpers import service_fakes as fakes

from siderod.common.clock import FakeClock
from siderod.common.model import EventKind, Urgency
from siderod.service.protocol import Op, Request, parse_request, snapshot_from_json, snapshot_to_json


def _flip_urgencies(service):
    return {a.event.target: a.urgency for a in service._plan.values() if a.event.kind is EventKind.FLIP_DUE}


@pytest.mark.slow
async def test_use_request_makes_one_target_critical_and_survives_a_restart(tmp_path):
    clock = FakeClock(fakes.NIGHT_START_UTC + timedelta(hours=2))
    config = fakes.make_config(horizon_hours=16.0)
    service = fakes.simulated_service(tmp_path, clock, config, [fakes.RecordingChannel(clock)])
    task = await fakes.run_service_until(service, clock, clock.now_utc())
    before = _flip_urgencies(service)
    assert set(before.values()) == {Urgency.CRITICAL}  # nothing in use: today's behaviour

    reply = await service.handle_request(parse_request(b'{"op": "use", "target": "NGC 1003"}'))
    assert reply == {"target": "NGC 1003"}
    after = _flip_urgencies(service)
    assert after["NGC 1003"] is Urgency.CRITICAL
    assert {after[name] for name in after if name != "NGC 1003"} == {Urgency.LOW}
    view = snapshot_from_json(snapshot_to_json(service.snapshot())).mount
    assert (view.in_use, view.in_use_source, view.link_state) == ("NGC 1003", "command", "off")
    await fakes.stop_service(service, task)

    # A restart remembers it (the ledger keeps it until dawn).
    config = replace(config, mount=replace(config.mount, other_targets="off"))
    service = fakes.simulated_service(tmp_path, clock, config, [fakes.RecordingChannel(clock)])
    task = await fakes.run_service_until(service, clock, clock.now_utc())
    assert service.snapshot().mount.in_use == "NGC 1003"
    assert set(_flip_urgencies(service)) == {"NGC 1003"}  # others "off"

    # Cleared with a null target.
    await service.handle_request(Request(op=Op.USE, target=None))
    assert service.snapshot().mount.in_use is None
    assert set(_flip_urgencies(service).values()) == {Urgency.CRITICAL} and len(_flip_urgencies(service)) > 1
    await fakes.stop_service(service, task)


@pytest.mark.slow
async def test_target_in_use_is_forgotten_at_dawn(tmp_path):
    clock = FakeClock(fakes.NIGHT_START_UTC + timedelta(hours=4))  # 20:00 UTC
    service = fakes.simulated_service(tmp_path, clock, fakes.make_config(), [fakes.RecordingChannel(clock)])
    task = await fakes.run_service_until(service, clock, clock.now_utc())
    await service.handle_request(Request(op=Op.USE, target="NGC 1001"))
    until = service._mount.in_use_until_utc
    assert until is not None and until.date() > clock.now_utc().date()
    while clock.now_utc() < until + timedelta(minutes=15):
        await clock.advance(300.0)
    assert service.snapshot().mount.in_use is None
    await fakes.stop_service(service, task)


@pytest.mark.slow
async def test_a_mount_alert_reaches_every_channel(tmp_path):
    from siderod.plan.mount import LinkState, PierSide

    clock = FakeClock(fakes.NIGHT_START_UTC + timedelta(hours=4))
    recorders = [fakes.RecordingChannel(clock, "one"), fakes.RecordingChannel(clock, "two")]
    service = fakes.simulated_service(tmp_path, clock, fakes.make_config(), recorders)
    task = await fakes.run_service_until(service, clock, clock.now_utc())
    await clock.settle()  # the service's tasks start (the link loop says "off": none configured)
    watch = service._mount.watch
    watch.set_link(LinkState.LINKED, "test")
    sky = watch._sky(with_sun_distance=False)
    # Two minutes before the flip mark (+5 min in the synthetic configuration), pre-flip side.
    watch.report(ra_hours=(sky.last_hours - 3 / 60) % 24, dec_deg=30.0, slewing=False)
    watch.report(pier_side=PierSide.WEST, tracking=True)
    for _ in range(18):
        await clock.advance(10.0)
    for recorder in recorders:
        kinds = [r.message.kind for r in recorder.received if r.message.key.startswith("mount|")]
        assert kinds == ["flip-due", "flip-due"]  # the 10-minute warning at once, then the flip
    # The service's acknowledgement (siderod ack, the board, the desktop) reaches the mount's own.
    events = service.awaiting_acknowledgement()
    assert len(events) == 1 and events[0].startswith("mount|flip-due|")
    assert await service.acknowledge(target="mount", via="command") == events
    assert service.awaiting_acknowledgement() == () and watch.awaiting() == ()
    await fakes.stop_service(service, task)


@pytest.mark.slow
async def test_the_board_key_cycles_through_targets_nearest_the_meridian_then_none(tmp_path):
    from siderod.common.model import Frame, Target
    from siderod.plan.positions import compute_sky

    clock = FakeClock(fakes.NIGHT_START_UTC + timedelta(hours=6))  # 22:00 UTC
    config = fakes.make_config()
    # Three real places (ICRS): an hour either side of the meridian and one near it.
    lst_deg = float(compute_sky(config, clock.now_utc().timestamp(), targets=()).last_hours) * 15.0
    targets = tuple(Target(name=n, frame=Frame.ICRS, lon_deg=ra, lat_deg=40.0, ra_deg=ra, dec_deg=40.0)
                    for n, ra in (("east", (lst_deg + 15) % 360), ("near", (lst_deg + 2) % 360),
                                  ("west", (lst_deg - 25) % 360)))
    config = replace(config, targets=targets)
    service = fakes.simulated_service(tmp_path, clock, config, [fakes.RecordingChannel(clock)])
    task = await fakes.run_service_until(service, clock, clock.now_utc())
    picked = [await service.cycle_target_in_use() for _ in range(4)]
    assert picked == ["near", "east", "west", None]
    assert service.snapshot().mount.in_use is None
    await fakes.stop_service(service, task)


@pytest.mark.slow
async def test_the_board_key_offers_a_planet_too(tmp_path):
    # A planetary imager's target: Jupiter (placed from the ephemeris) is a candidate like a star.
    from siderod.common.model import Frame, Target
    from siderod.files.ephemeris import load_ephemeris

    clock = FakeClock(fakes.NIGHT_START_UTC + timedelta(hours=8))  # 00:00 UTC: Jupiter is up in the east
    jupiter = Target(name="Jupiter", frame=Frame.BODY, lon_deg=0.0, lat_deg=0.0, ra_deg=None, dec_deg=0.0,
                     body="jupiter")
    config = replace(fakes.make_config(targets=()), targets=(jupiter,), ephemeris=load_ephemeris)
    service = fakes.simulated_service(tmp_path, clock, config, [fakes.RecordingChannel(clock)])
    task = await fakes.run_service_until(service, clock, clock.now_utc())
    assert [await service.cycle_target_in_use() for _ in range(2)] == ["Jupiter", None]
    await fakes.stop_service(service, task)
