"""Control protocol: strict request validation, clear errors for any bytes, snapshot JSON round trip."""

from __future__ import annotations

import json
import math
from dataclasses import replace
from datetime import UTC, datetime, timedelta

import pytest
from helpers import service_fakes as fakes
from hypothesis import given, settings
from hypothesis import strategies as st

from siderod.common.model import (
    ChannelHealth,
    ClockHealth,
    Delivery,
    Event,
    EventKind,
    PlannedAlert,
    ServiceSnapshot,
    Urgency,
)
from siderod.service.protocol import (
    MAX_REQUEST_BYTES,
    BadReply,
    BadRequest,
    Op,
    Request,
    encode_reply,
    encode_request,
    error_reply,
    format_iso_z,
    ok_reply,
    parse_iso_z,
    parse_reply,
    parse_request,
    snapshot_from_json,
    snapshot_to_json,
)

# Demo scenario (invented): Corrie Hill Observatory, evening of 14 December 2026, with a horizon
# profile so that the round trip covers it too.
CORRIE_HILL = replace(fakes.CORRIE_HILL, horizon=((0.0, 5.0), (180.0, 12.5)))
TAKEN_UTC = datetime(2026, 12, 14, 21, 3, 7, tzinfo=UTC)


def demo_snapshot() -> ServiceSnapshot:
    event = Event(
        time_utc=datetime(2026, 12, 14, 23, 41, 0, tzinfo=UTC),
        kind=EventKind.FLIP_DUE,
        target="Demo Cluster A",
        altitude_deg=48.25,
        azimuth_deg=181.5,
        hour_angle_hours=0.25,
        mark_hours=0.25,
        moon_illuminated_fraction=0.31,
    )
    alert = PlannedAlert(
        key="Demo Cluster A|flip-due|2026-12-14T23:41:00Z|10",
        event=event,
        lead_minutes=10.0,
        due_utc=event.time_utc - timedelta(minutes=10),
        urgency=Urgency.CRITICAL,
        title="Demo Cluster A: flip due in 10 min",
        body="23:41 GMT (23:41 UTC), HA +0h15m, alt 48.2 deg",
    )
    return ServiceSnapshot(
        taken_utc=TAKEN_UTC,
        started_utc=TAKEN_UTC - timedelta(hours=3, seconds=0.5),
        config_path="/home/observer/.config/siderod/config.toml",
        site=CORRIE_HILL,
        dut1_seconds=0.0,
        dut1_source="default (0 s)",
        clock_health=ClockHealth("synchronised", 0.0005, 0.012, "kernel: clock synchronised"),
        next_alerts=(alert,),
        recent_deliveries=(
            Delivery(
                key="k1", channel="desktop", delivered_utc=TAKEN_UTC, late_seconds=0.2, ok=False,
                error="no session bus", title="Demo Nebula B culminates",
            ),
        ),
        channels=(
            ChannelHealth("desktop", healthy=False, last_error="no session bus"),
            ChannelHealth("log", healthy=True, last_ok_utc=TAKEN_UTC),
        ),
        muted={"Demo Nebula B": TAKEN_UTC + timedelta(minutes=90), "Demo Pair C": None},
        config_error="",
        missed_count=1,
        planned_count=14,
    )


# -- requests ----------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("line", "expected"),
    [
        (b'{"op": "status"}\n', Request(Op.STATUS)),
        (b'{"op":"reload"}', Request(Op.RELOAD)),
        (b'{"op": "test-alert"}\n', Request(Op.TEST_ALERT)),
        (b'{"op": "mute", "target": "Demo Nebula B", "for_seconds": 5400}\n',
         Request(Op.MUTE, "Demo Nebula B", 5400.0)),
        (b'{"op": "mute", "target": "Demo Nebula B", "for_seconds": null}\n',
         Request(Op.MUTE, "Demo Nebula B")),
        (b'{"op": "mute", "target": "Demo Nebula B"}\n', Request(Op.MUTE, "Demo Nebula B")),
        (b'{"op": "unmute", "target": "  Demo Pair C "}\n', Request(Op.UNMUTE, "Demo Pair C")),
    ],
)
def test_parse_request_accepts_each_op(line, expected):
    assert parse_request(line) == expected


def test_op_compares_equal_to_its_wire_spelling():
    assert parse_request(b'{"op": "test-alert"}').op == "test-alert"


@pytest.mark.parametrize(
    ("line", "fragment"),
    [
        (b"", "empty request"),
        (b"\n", "empty request"),
        (b"\xff\xfe{}", "not UTF-8"),
        (b"{op: status}", "not valid JSON"),
        (b"[1, 2]", "JSON object"),
        (b'"status"', "JSON object"),
        (b"{}", 'no "op"'),
        (b'{"op": "launch"}', 'unknown "op" "launch"'),
        (b'{"op": 7}', 'unknown "op" 7'),
        (b'{"op": "status", "extra": 1}', 'unknown field "extra"'),
        (b'{"op": "mute"}', 'needs "target"'),
        (b'{"op": "mute", "target": ""}', "is empty"),
        (b'{"op": "mute", "target": 12}', "target name (text)"),
        (b'{"op": "mute", "target": "a\\u0007b"}', "control characters"),
        (b'{"op": "mute", "target": "M", "for_seconds": "90m"}', "number of seconds"),
        (b'{"op": "mute", "target": "M", "for_seconds": true}', "number of seconds"),
        (b'{"op": "mute", "target": "M", "for_seconds": -5}', "more than 0"),
        (b'{"op": "mute", "target": "M", "for_seconds": NaN}', "NaN"),
        (b'{"op": "mute", "target": "M", "for_seconds": 1e300}', "one year"),
        (b'{"op": "status", "op": "reload"}', 'repeats the key "op"'),
        (b'{"op": "status"}\n{"op": "reload"}\n', "one JSON object per line"),
        (b"[" * 60_000, "nested too deeply"),
        (b'{"op": ' + b"9" * 5000 + b"}", "cannot be read"),
    ],
)
def test_parse_request_explains_what_is_wrong(line, fragment):
    with pytest.raises(BadRequest) as info:
        parse_request(line)
    assert fragment in str(info.value)


def test_parse_request_refuses_oversized_lines_before_decoding():
    line = b'{"op": "status", "pad": "' + b"x" * MAX_REQUEST_BYTES + b'"}\n'
    with pytest.raises(BadRequest, match="limit is 65536 bytes"):
        parse_request(line)


def test_parse_request_refuses_overlong_target_names():
    with pytest.raises(BadRequest, match="limit is 200"):
        parse_request(json.dumps({"op": "unmute", "target": "x" * 201}).encode())


@settings(max_examples=400, deadline=None, database=None)
@given(st.binary(max_size=512))
def test_any_bytes_give_a_request_or_a_clear_error(data):
    try:
        request = parse_request(data)
    except BadRequest as e:
        message = str(e)
        assert message and len(message) < 400 and "\n" not in message
        # the error must itself travel as one valid reply line
        assert parse_reply(encode_reply(error_reply(message)))["error"] == message
    else:
        assert isinstance(request, Request)


_json_values = st.recursive(
    st.none() | st.booleans() | st.integers() | st.floats(allow_nan=False) | st.text(max_size=20),
    lambda inner: st.lists(inner, max_size=4) | st.dictionaries(st.text(max_size=12), inner, max_size=4),
    max_leaves=12,
)


@pytest.mark.slow
@settings(max_examples=300, deadline=None, database=None)
@given(
    st.dictionaries(
        st.sampled_from(["op", "target", "for_seconds", "extra"]) | st.text(max_size=8),
        st.sampled_from(list(Op)).map(str) | _json_values,
        max_size=4,
    )
)
def test_any_json_object_gives_a_request_or_a_clear_error(obj):
    line = json.dumps(obj).encode() + b"\n"
    try:
        request = parse_request(line)
    except BadRequest as e:
        assert str(e)
    else:
        # what was accepted re-encodes to the same request
        assert parse_request(encode_request(request)) == request


def test_encode_request_validates_before_sending():
    assert encode_request({"op": "mute", "target": "Demo Pair C", "for_seconds": 60}) == (
        b'{"op":"mute","target":"Demo Pair C","for_seconds":60.0}\n'
    )
    with pytest.raises(BadRequest, match='unknown "op"'):
        encode_request({"op": "stauts"})


# -- replies ------------------------------------------------------------------------------------------


def test_replies_are_single_ascii_lines():
    line = encode_reply(ok_reply({"message": "muted Demo Nebula B \u2014 for 1h\nsecond line"}))
    assert line.endswith(b"\n") and line.count(b"\n") == 1
    assert line.isascii()
    assert parse_reply(line)["result"]["message"].endswith("second line")


def test_unencodable_reply_becomes_an_error_reply():
    reply = parse_reply(encode_reply(ok_reply({"value": math.nan})))
    assert reply["ok"] is False and "could not encode" in reply["error"]


@pytest.mark.parametrize(
    "line", [b"", b"nonsense", b"[]", b'{"ok": 1}', b'{"ok": true}', b'{"ok": false, "error": 3}']
)
def test_parse_reply_refuses_malformed_replies(line):
    with pytest.raises(BadReply):
        parse_reply(line)


# -- the snapshot ----------------------------------------------------------------------------------------


def test_snapshot_round_trips_through_json_text():
    snapshot = demo_snapshot()
    text = json.dumps(snapshot_to_json(snapshot), allow_nan=False)
    assert snapshot_from_json(json.loads(text)) == snapshot


def test_snapshot_times_are_iso_with_z():
    data = snapshot_to_json(demo_snapshot())
    assert data["taken_utc"] == "2026-12-14T21:03:07Z"
    assert data["started_utc"] == "2026-12-14T18:03:06.500000Z"
    assert data["next_alerts"][0]["due_utc"] == "2026-12-14T23:31:00Z"
    assert data["next_alerts"][0]["event"]["kind"] == "flip-due"
    assert data["muted"] == {"Demo Nebula B": "2026-12-14T22:33:07Z", "Demo Pair C": None}


def test_snapshot_nan_travels_as_null_and_comes_back_as_nan():
    snapshot = demo_snapshot()
    alert = snapshot.next_alerts[0]
    odd_event = Event(alert.event.time_utc, EventKind.SUNSET, None, math.nan, 231.0)
    odd = ServiceSnapshot(
        **{**{f: getattr(snapshot, f) for f in snapshot.__slots__},
           "next_alerts": (PlannedAlert(**{**{f: getattr(alert, f) for f in alert.__slots__},
                                           "event": odd_event}),)}
    )
    data = snapshot_to_json(odd)
    assert data["next_alerts"][0]["event"]["altitude_deg"] is None
    back = snapshot_from_json(json.loads(json.dumps(data, allow_nan=False)))
    assert math.isnan(back.next_alerts[0].event.altitude_deg)


def test_snapshot_from_json_ignores_unknown_keys():
    data = snapshot_to_json(demo_snapshot())
    data["from_a_newer_service"] = {"anything": 1}
    assert snapshot_from_json(data) == demo_snapshot()


@pytest.mark.parametrize(
    ("path", "value", "fragment"),
    [
        (("taken_utc",), "2026-12-14 21:03", "snapshot.taken_utc: expected an ISO 8601 time"),
        (("site", "latitude_deg"), "56N", "snapshot.site.latitude_deg: expected a number"),
        (("next_alerts", 0, "urgency"), "loud", "expected one of low, normal, critical"),
        (("next_alerts", 0, "event", "kind"), "zenith", "snapshot.next_alerts[0].event.kind"),
        (("channels", 1, "healthy"), "yes", "snapshot.channels[1].healthy: expected true or false"),
        (("missed_count",), 1.5, "expected a whole number"),
    ],
)
def test_snapshot_from_json_names_the_bad_field(path, value, fragment):
    data = snapshot_to_json(demo_snapshot())
    node = data
    for key in path[:-1]:
        node = node[key]
    node[path[-1]] = value
    with pytest.raises(BadReply) as info:
        snapshot_from_json(data)
    assert fragment in str(info.value)


def test_snapshot_from_json_refuses_a_missing_field():
    data = snapshot_to_json(demo_snapshot())
    del data["site"]
    with pytest.raises(BadReply, match="snapshot.site: missing"):
        snapshot_from_json(data)


def test_iso_z_helpers():
    assert parse_iso_z("2026-12-14T21:03:07Z") == TAKEN_UTC
    assert parse_iso_z("2026-12-14T21:03:07+00:00") == TAKEN_UTC
    assert format_iso_z(TAKEN_UTC.astimezone(datetime.now(UTC).astimezone().tzinfo)) == "2026-12-14T21:03:07Z"
    with pytest.raises(ValueError, match="with a zone"):
        parse_iso_z("2026-12-14T21:03:07")
    with pytest.raises(ValueError, match="naive"):
        format_iso_z(datetime(2026, 12, 14, 21, 3, 7))
