"""`siderod status|mute|unmute|reload|test-alert` against a real control socket with a fake service."""

from __future__ import annotations

import argparse
import asyncio
import json
import math
import os
from datetime import UTC, datetime, timedelta

import pytest

from siderod.cli import control
from siderod.cli.control import format_duration, parse_duration_seconds
from siderod.common.errors import SiderodError
from siderod.common.model import (
    ChannelHealth,
    ClockHealth,
    Event,
    EventKind,
    PlannedAlert,
    ServiceSnapshot,
    Site,
    Urgency,
)
from siderod.service.control import ControlServer
from siderod.service.protocol import Op, Request, snapshot_to_json

TAKEN_UTC = datetime(2026, 12, 14, 21, 3, 7, tzinfo=UTC)
# Demo scenario (invented): Corrie Hill Observatory, +56 12 30, -3 41 15 (west), 212 m.
CORRIE_HILL = Site("Corrie Hill Observatory", 56.208333333333336, -3.6875, 212.0, "Europe/London")
#: The status LST goes through the astronomy core (checked against ERFA gst06a to 0.1 ms in its own
#: tests); here only the plumbing is checked (longitude sign, DUT1, the snapshot's time), so
#: 1 ms of time is plenty and still catches any of those going wrong.
LST_PLUMBING_TOLERANCE_HOURS = 1e-3 / 3600
DUT1_SECONDS = 0.1  # an invented DUT1, large enough that dropping it would show


def demo_snapshot() -> ServiceSnapshot:
    event = Event(
        datetime(2026, 12, 14, 23, 41, tzinfo=UTC),
        EventKind.FLIP_DUE,
        "Demo Cluster A",
        48.2,
        181.5,
        hour_angle_hours=0.25,
        mark_hours=0.25,
    )
    alert = PlannedAlert(
        "k",
        event,
        10.0,
        event.time_utc - timedelta(minutes=10),
        Urgency.CRITICAL,
        "Demo Cluster A: flip due in 10 min",
        "body",
    )
    return ServiceSnapshot(
        taken_utc=TAKEN_UTC,
        started_utc=TAKEN_UTC - timedelta(hours=3, minutes=5),
        config_path="/home/observer/.config/siderod/config.toml",
        site=CORRIE_HILL,
        dut1_seconds=DUT1_SECONDS,
        dut1_source="config",
        clock_health=ClockHealth("unsynchronised", 16.0, 16.0, "kernel: clock not synchronised"),
        next_alerts=(alert,),
        channels=(ChannelHealth("desktop", False, "no session bus"), ChannelHealth("log", True)),
        muted={"Demo Nebula B": TAKEN_UTC + timedelta(minutes=90), "Demo Pair C": None},
        missed_count=1,
        planned_count=14,
    )


class FakeService:
    """Answers as Service.handle_request does (shapes taken from siderod/service/daemon.py)."""

    def __init__(self) -> None:
        self.requests: list[Request] = []
        self.config_ok = False

    async def handle_request(self, request: Request) -> dict:
        self.requests.append(request)
        if request.op == Op.STATUS:
            return snapshot_to_json(demo_snapshot())
        if request.op == Op.MUTE:
            if request.target == "Unknown Object":
                raise SiderodError("no target named 'Unknown Object' in the configuration")
            until = None if request.for_seconds is None else "2026-12-14T22:33:07Z"
            return {"target": request.target, "until_utc": until}
        if request.op == Op.UNMUTE:
            return {"target": request.target, "was_muted": request.target == "Demo Nebula B"}
        if request.op == Op.RELOAD:
            error = "" if self.config_ok else "config.toml:3: site.latitude: expected a latitude like 56.2"
            return {"reloaded": self.config_ok, "config_path": "/cfg/config.toml", "error": error}
        if request.op == Op.TEST_ALERT:
            return {"channels": {"desktop": "no session bus", "log": "ok"}}
        if request.op == Op.ACK:
            given = request.target in (None, "Demo Cluster A")
            return {"acknowledged": ["Demo Cluster A|flip-due|2026-12-14T23:41:00Z"] if given else []}
        return {}


@pytest.fixture
async def fake():
    return FakeService()


@pytest.fixture
async def socket_path(tmp_path, fake):
    run_dir = tmp_path / "run" / "siderod"
    async with ControlServer(
        run_dir / "control.sock", fake.handle_request, run_dir / "service.lock"
    ) as server:
        yield os.fspath(server.socket_path)


def parse(*words: str) -> argparse.Namespace:
    parser = argparse.ArgumentParser(prog="siderod")
    control.register(parser.add_subparsers(dest="verb", required=True))
    return parser.parse_args(list(words))


async def run_cli(*words: str) -> int:
    """The whole command line, as `siderod ...` runs it: exit codes come from the dispatcher too."""
    from siderod.cli.main import main

    return await asyncio.to_thread(main, list(words))


async def test_status_text(socket_path, capsys):
    assert await run_cli("status", "--socket", socket_path) == 0
    out = capsys.readouterr().out
    assert "running for 3h 05m" in out
    assert "Corrie Hill Observatory" in out and "+56°12'30\"" in out and "-03°41'15\"" in out
    assert "clock:   unsynchronised" in out and "WARNING: the system clock is not synchronised" in out
    assert "2026-12-14 23:31 GMT (23:31 UTC)" in out and "in 2h 27m" in out and "critical" in out
    assert "desktop    FAILING: no session bus" in out and "log        ok" in out
    assert "Demo Nebula B: until 2026-12-14 22:33 GMT" in out and "Demo Pair C: until unmuted" in out
    assert "(14 planned, 1 missed)" in out


async def test_status_json_fields(socket_path, capsys):
    assert await run_cli("status", "--json", "--socket", socket_path) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["uptime_seconds"] == 3 * 3600 + 5 * 60
    assert data["site"]["name"] == "Corrie Hill Observatory"
    assert data["next_alerts"][0]["event"]["kind"] == "flip-due"
    assert data["clock_warning"].startswith("the system clock is not synchronised")
    assert data["muted"] == {"Demo Nebula B": "2026-12-14T22:33:07Z", "Demo Pair C": None}
    assert data["lst"] is None or set(data["lst"]) == {"at_utc", "last_hours", "lmst_hours"}


async def test_status_lst_matches_erfa(socket_path, capsys):
    import erfa  # reference: pyerfa, from the test extra
    assert await run_cli("status", "--json", "--socket", socket_path) == 0
    lst = json.loads(capsys.readouterr().out)["lst"]
    assert lst["at_utc"] == "2026-12-14T21:03:07Z"
    # Reference: ERFA (pyerfa) dtf2d -> utctai -> taitt and utcut1, then gst06a / gmst06, plus longitude.
    utc1, utc2 = erfa.dtf2d("UTC", 2026, 12, 14, 21, 3, 7.0)
    tt1, tt2 = erfa.taitt(*erfa.utctai(utc1, utc2))
    ut11, ut12 = erfa.utcut1(utc1, utc2, DUT1_SECONDS)
    lon_hours = CORRIE_HILL.longitude_deg / 15.0
    last_ref = (math.degrees(erfa.gst06a(ut11, ut12, tt1, tt2)) / 15.0 + lon_hours) % 24.0
    lmst_ref = (math.degrees(erfa.gmst06(ut11, ut12, tt1, tt2)) / 15.0 + lon_hours) % 24.0
    assert lst["last_hours"] == pytest.approx(last_ref, abs=LST_PLUMBING_TOLERANCE_HOURS)
    assert lst["lmst_hours"] == pytest.approx(lmst_ref, abs=LST_PLUMBING_TOLERANCE_HOURS)


async def test_mute_for_a_duration_sends_seconds(socket_path, fake, capsys):
    assert await run_cli("mute", "Demo Nebula B", "--for", "1h30m", "--socket", socket_path) == 0
    assert capsys.readouterr().out.strip() == "muted Demo Nebula B for 1h 30m (until 2026-12-14T22:33:07Z)"
    assert await run_cli("mute", "Demo Pair C", "--socket", socket_path) == 0
    assert capsys.readouterr().out.strip() == "muted Demo Pair C until unmuted"
    assert fake.requests == [Request(Op.MUTE, "Demo Nebula B", 5400.0), Request(Op.MUTE, "Demo Pair C")]


async def test_mute_refused_exits_1_with_the_services_words(socket_path, capsys):
    assert await run_cli("mute", "Unknown Object", "--socket", socket_path) == 1
    err = capsys.readouterr().err
    assert "the service refused mute: no target named 'Unknown Object'" in err


async def test_unmute_says_whether_it_was_muted(socket_path, capsys):
    assert await run_cli("unmute", "Demo Nebula B", "--socket", socket_path) == 0
    assert capsys.readouterr().out.strip() == "unmuted Demo Nebula B"
    assert await run_cli("unmute", "Demo Pair D", "--socket", socket_path) == 0
    assert capsys.readouterr().out.strip() == "Demo Pair D was not muted"


async def test_reload_with_a_bad_config_exits_1(socket_path, capsys):
    assert await run_cli("reload", "--socket", socket_path) == 1
    captured = capsys.readouterr()
    assert (
        "keeps its previous configuration" in captured.err and "config.toml:3: site.latitude" in captured.err
    )


async def test_reload_with_a_good_config(socket_path, fake, capsys):
    fake.config_ok = True
    assert await run_cli("reload", "--socket", socket_path) == 0
    assert capsys.readouterr().out.strip() == "configuration reloaded from /cfg/config.toml"


async def test_test_alert_lists_each_channel_and_exits_4_on_a_failure(socket_path, capsys):
    assert await run_cli("test-alert", "--socket", socket_path) == 4
    captured = capsys.readouterr()
    assert "desktop: FAILED: no session bus" in captured.out and "log: ok" in captured.out
    assert "1 channel failed" in captured.err


@pytest.mark.parametrize(
    "words",
    [
        ("status",),
        ("mute", "Demo Pair C"),
        ("unmute", "Demo Pair C"),
        ("reload",),
        ("test-alert",),
        ("status", "--json"),
    ],
)
async def test_no_service_exits_3_with_a_hint(tmp_path, capsys, words):
    missing = os.fspath(tmp_path / "nothing-here.sock")
    assert await run_cli(*words, "--socket", missing) == 3
    err = capsys.readouterr().err
    assert "no siderod service is running" in err and "siderod run" in err


def test_default_socket_comes_from_xdg_runtime_dir(tmp_path, monkeypatch, capsys):
    monkeypatch.setenv("XDG_RUNTIME_DIR", os.fspath(tmp_path))
    from siderod.cli.main import main

    assert main(["status"]) == 3
    assert os.fspath(tmp_path / "siderod" / "control.sock") in capsys.readouterr().err


@pytest.mark.parametrize(
    ("text", "seconds"),
    [
        ("90m", 5400),
        ("2h", 7200),
        ("1h30m", 5400),
        ("1d", 86400),
        ("45s", 45),
        ("1d2h3m4s", 93784),
        (" 2H ", 7200),
    ],
)
def test_parse_duration(text, seconds):
    assert parse_duration_seconds(text) == seconds


@pytest.mark.parametrize("text", ["", "90", "1.5h", "h", "30m1h", "-5m", "0m", "ten minutes"])
def test_parse_duration_refuses_with_the_accepted_forms(text):
    with pytest.raises(ValueError, match="90m|more than 0"):
        parse_duration_seconds(text)


def test_bad_duration_is_an_argparse_error(capsys):
    with pytest.raises(SystemExit) as info:
        parse("mute", "Demo Pair C", "--for", "soon")
    assert info.value.code == 2
    assert "expected a duration like 90m" in capsys.readouterr().err


@pytest.mark.parametrize(
    ("seconds", "text"),
    [(5, "5s"), (125, "2m 05s"), (5400, "1h 30m"), (26 * 3600, "26h 00m"), (3 * 86400, "3d 0h")],
)
def test_format_duration(seconds, text):
    assert format_duration(seconds) == text


async def test_ack_and_its_long_name_send_the_same_request(socket_path, fake, capsys):
    assert await run_cli("ack", "--socket", socket_path) == 0
    assert capsys.readouterr().out.splitlines() == [
        "acknowledged 1 alert; they repeat no more:", "  Demo Cluster A flip-due at 2026-12-14 23:41:00 UTC"]
    assert await run_cli("acknowledge", "Demo Pair C", "--socket", socket_path) == 0
    assert capsys.readouterr().out.strip() == (
        "nothing to acknowledge for Demo Pair C: no critical alert is repeating")
    assert fake.requests == [Request(Op.ACK), Request(Op.ACK, "Demo Pair C")]


def test_status_json_gives_whole_seconds_as_the_readme_shows():
    # The service's own clock has microseconds; status --json printed them.
    from dataclasses import replace

    from siderod.cli.control import status_to_json

    taken = TAKEN_UTC + timedelta(microseconds=734_512)
    shot = replace(demo_snapshot(), taken_utc=taken, started_utc=taken - timedelta(hours=1, microseconds=3))
    data = status_to_json(snapshot_to_json(shot))
    assert data["taken_utc"] == "2026-12-14T21:03:08Z" and data["started_utc"] == "2026-12-14T20:03:08Z"
    assert data["lst"] is None or data["lst"]["at_utc"] == "2026-12-14T21:03:08Z"
