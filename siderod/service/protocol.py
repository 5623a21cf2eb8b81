"""Control requests and replies as records, carried as newline-delimited JSON over the control socket.

One request is one line of UTF-8 JSON: an object with an ``"op"`` and that op's fields, nothing else.
One reply is one line: ``{"ok": true, "result": {...}}`` or ``{"ok": false, "error": "text"}``.
Everything a peer sends is validated strictly; any problem becomes a :class:`BadRequest` whose
message says what was wrong and what would have been accepted, and the server sends that message
back as an error reply. Nothing here does I/O.
"""

from __future__ import annotations

import enum
import json
import math
from collections.abc import Mapping
from dataclasses import dataclass
from datetime import UTC, datetime
from typing import Any

from siderod.common.errors import SiderodError
from siderod.common.model import (
    ChannelHealth,
    ClockHealth,
    Delivery,
    Event,
    EventKind,
    MountView,
    PlannedAlert,
    ServiceSnapshot,
    Site,
    Urgency,
)

__all__ = [
    "MAX_REQUEST_BYTES",
    "MAX_REPLY_BYTES",
    "MAX_TARGET_CHARS",
    "MAX_MUTE_SECONDS",
    "Op",
    "Request",
    "BadRequest",
    "BadReply",
    "parse_request",
    "request_from_json",
    "request_to_json",
    "encode_request",
    "ok_reply",
    "error_reply",
    "encode_reply",
    "parse_reply",
    "snapshot_to_json",
    "snapshot_from_json",
    "format_iso_z",
    "parse_iso_z",
]

#: Largest request line accepted, newline included. Real requests are under 1 KiB; the limit only
#: bounds what a confused or hostile peer can make the service buffer.
MAX_REQUEST_BYTES = 64 * 1024
#: Largest reply line a client accepts. A snapshot with a few thousand planned alerts fits easily.
MAX_REPLY_BYTES = 16 * 1024 * 1024
#: Longest target name accepted in a request (target names in the configuration are far shorter).
MAX_TARGET_CHARS = 200
#: Longest mute accepted: one year. Longer means "until unmuted", which is ``for_seconds: null``.
MAX_MUTE_SECONDS = 366 * 86400.0


class Op(enum.StrEnum):
    """The requests the service understands. ``.value`` is the ``"op"`` spelling on the wire."""

    STATUS = "status"
    MUTE = "mute"
    UNMUTE = "unmute"
    RELOAD = "reload"
    TEST_ALERT = "test-alert"
    USE = "use"  # set the target in use (null target: none)
    ACK = "ack"


# The fields each op takes besides "op", with whether each one is required.
_OP_FIELDS: dict[Op, dict[str, bool]] = {
    Op.STATUS: {},
    Op.MUTE: {"target": True, "for_seconds": False},
    Op.UNMUTE: {"target": True},
    Op.RELOAD: {},
    Op.TEST_ALERT: {},
    Op.USE: {"target": True},
    Op.ACK: {"target": False},  # no target (or null): every critical alert still repeating
}


@dataclass(frozen=True, slots=True)
class Request:
    """One validated control request.

    Attributes:
        op: what to do. A ``StrEnum``, so ``request.op == "mute"`` also works.
        target: the target name (``mute`` and ``unmute``; optional for ``ack``), else None.
        for_seconds: how long to mute, seconds > 0; None means until unmuted (``mute`` only).
    """

    op: Op
    target: str | None = None
    for_seconds: float | None = None


class BadRequest(SiderodError):
    """A request line could not be accepted; the message is sent back to the peer as is."""


class BadReply(SiderodError):
    """A reply (or a snapshot inside one) did not have the agreed shape."""


# -- requests --------------------------------------------------------------------------------------


def parse_request(line: bytes) -> Request:
    """Turn one request line from the socket into a :class:`Request`.

    Args:
        line: the raw bytes of one request, with or without its trailing newline.

    Returns:
        The validated request.

    Raises:
        BadRequest: for anything else (too long, not UTF-8, not JSON, unknown op or field, wrong
            type or range). The message teaches the fix and is safe to send back to the peer.
    """
    if len(line) > MAX_REQUEST_BYTES:
        raise BadRequest(f"request is {len(line)} bytes; the limit is {MAX_REQUEST_BYTES} bytes per line")
    text_bytes = line[:-1] if line.endswith(b"\n") else line
    if b"\n" in text_bytes:
        raise BadRequest("send exactly one JSON object per line; this request has a newline inside it")
    try:
        text = text_bytes.decode("utf-8")
    except UnicodeDecodeError as e:
        raise BadRequest(f"request is not UTF-8 text (bad byte at offset {e.start})") from None
    if not text.strip():
        raise BadRequest('empty request; send one JSON object per line, e.g. {"op": "status"}')
    data = _loads_strict(text, BadRequest, "request")
    return request_from_json(data)


def request_from_json(data: Any) -> Request:
    """Validate a decoded JSON value as a request (see :func:`parse_request`)."""
    if not isinstance(data, dict):
        raise BadRequest(f'a request is a JSON object like {{"op": "status"}}, got {_json_kind(data)}')
    if "op" not in data:
        raise BadRequest(f'request has no "op"; expected one of {_ops_text()}')
    op_text = data["op"]
    try:
        op = Op(op_text) if isinstance(op_text, str) else None
    except ValueError:
        op = None
    if op is None:
        raise BadRequest(f'unknown "op" {_show(op_text)}; expected one of {_ops_text()}')
    fields = _OP_FIELDS[op]
    unknown = sorted(k for k in data if k != "op" and k not in fields)
    if unknown:
        allowed = ", ".join(f'"{k}"' for k in fields) or "no other fields"
        raise BadRequest(f'"{op}" request has unknown field {_show(unknown[0])}; it takes {allowed}')
    missing = [k for k, required in fields.items() if required and k not in data]
    if missing:
        raise BadRequest(f'"{op}" request needs "{missing[0]}"')
    target = None
    # "use" and "ack" take a null target ("none" and "every one"); mute and unmute need a name.
    if "target" in data and not (op in (Op.USE, Op.ACK) and data["target"] is None):
        target = _valid_target(data["target"])
    for_seconds = _valid_for_seconds(data.get("for_seconds")) if op is Op.MUTE else None
    return Request(op=op, target=target, for_seconds=for_seconds)


def request_to_json(request: Request) -> dict[str, Any]:
    """The JSON object for a request (only the fields its op takes)."""
    data: dict[str, Any] = {"op": request.op.value}
    if "target" in _OP_FIELDS[request.op]:
        data["target"] = request.target
    if request.op is Op.MUTE:
        data["for_seconds"] = request.for_seconds
    return data


def encode_request(request: Request | Mapping[str, Any]) -> bytes:
    """One request line, validated first so that a client finds its own mistakes before sending.

    Raises:
        BadRequest: if ``request`` is a mapping that is not a valid request.
    """
    record = request if isinstance(request, Request) else request_from_json(dict(request))
    return _dump_line(request_to_json(record))


# -- replies ---------------------------------------------------------------------------------------


def ok_reply(result: Mapping[str, Any] | None = None) -> dict[str, Any]:
    """A success reply carrying ``result`` (an object; empty when None)."""
    return {"ok": True, "result": dict(result or {})}


def error_reply(message: str) -> dict[str, Any]:
    """A failure reply carrying a message for the user."""
    return {"ok": False, "error": str(message)}


def encode_reply(reply: Mapping[str, Any]) -> bytes:
    """One reply line. A reply that cannot be encoded becomes an error reply saying so.

    Args:
        reply: as built by :func:`ok_reply` or :func:`error_reply`.
    """
    try:
        return _dump_line(dict(reply))
    except (TypeError, ValueError) as e:
        return _dump_line(error_reply(f"the service built a reply it could not encode ({e}); this is a bug"))


def parse_reply(line: bytes) -> dict[str, Any]:
    """Check one reply line and return it as ``{"ok": True, "result": {...}}`` or ``{"ok": False, ...}``.

    Raises:
        BadReply: if the line is not a reply of the agreed shape.
    """
    try:
        text = line.decode("utf-8")
    except UnicodeDecodeError:
        raise BadReply("the service's reply is not UTF-8 text") from None
    data = _loads_strict(text, BadReply, "reply")
    if not isinstance(data, dict) or not isinstance(data.get("ok"), bool):
        raise BadReply(f'a reply is an object with "ok": true or false, got {_json_kind(data)}')
    if data["ok"]:
        if not isinstance(data.get("result"), dict):
            raise BadReply('a successful reply carries a "result" object')
    elif not isinstance(data.get("error"), str):
        raise BadReply('a failed reply carries an "error" text')
    return data


# -- the snapshot ----------------------------------------------------------------------------------


def snapshot_to_json(snapshot: ServiceSnapshot) -> dict[str, Any]:
    """The JSON form of a service snapshot, as ``status`` sends it (times as ISO 8601 with "Z").

    Non-finite numbers become null, since JSON has no NaN.
    """
    return {
        "taken_utc": format_iso_z(snapshot.taken_utc),
        "started_utc": format_iso_z(snapshot.started_utc),
        "config_path": snapshot.config_path,
        "site": _site_to_json(snapshot.site),
        "dut1_seconds": _num(snapshot.dut1_seconds),
        "dut1_source": snapshot.dut1_source,
        "clock_health": {
            "state": snapshot.clock_health.state,
            "estimated_error_seconds": _num(snapshot.clock_health.estimated_error_seconds),
            "max_error_seconds": _num(snapshot.clock_health.max_error_seconds),
            "detail": snapshot.clock_health.detail,
        },
        "next_alerts": [_alert_to_json(a) for a in snapshot.next_alerts],
        "recent_deliveries": [_delivery_to_json(d) for d in snapshot.recent_deliveries],
        "channels": [
            {
                "name": c.name,
                "healthy": c.healthy,
                "last_error": c.last_error,
                "last_ok_utc": _iso_or_none(c.last_ok_utc),
                "owed_count": c.owed_count,
                "missed_count": c.missed_count,
            }
            for c in snapshot.channels
        ],
        "muted": {target: _iso_or_none(until) for target, until in snapshot.muted.items()},
        "config_error": snapshot.config_error,
        "missed_count": snapshot.missed_count,
        "planned_count": snapshot.planned_count,
        "partial_plan_until_utc": _iso_or_none(snapshot.partial_plan_until_utc),
        "clock_tolerance_seconds": snapshot.clock_tolerance_seconds,
        "ledger_error": snapshot.ledger_error,
        "mount": _mount_to_json(snapshot.mount),
        "awaiting_ack": list(snapshot.awaiting_ack),
    }


def snapshot_from_json(data: Any) -> ServiceSnapshot:
    """Rebuild a :class:`ServiceSnapshot` from :func:`snapshot_to_json` output.

    Unknown keys are ignored, so a newer service can add fields without breaking an older client.

    Raises:
        BadReply: naming the first field that is missing or of the wrong type.
    """
    r = _Reader(data, "snapshot")
    health = r.obj("clock_health")
    muted_raw = r.obj("muted")
    return ServiceSnapshot(
        taken_utc=r.time("taken_utc"),
        started_utc=r.time("started_utc"),
        config_path=r.text("config_path"),
        site=_site_from_json(r.obj("site")),
        dut1_seconds=r.number("dut1_seconds"),
        dut1_source=r.text("dut1_source"),
        clock_health=ClockHealth(
            state=health.text("state"),
            estimated_error_seconds=health.number("estimated_error_seconds", optional=True),
            max_error_seconds=health.number("max_error_seconds", optional=True),
            detail=health.text("detail", default=""),
        ),
        next_alerts=tuple(_alert_from_json(a) for a in r.objs("next_alerts")),
        recent_deliveries=tuple(_delivery_from_json(d) for d in r.objs("recent_deliveries")),
        channels=tuple(
            ChannelHealth(
                name=c.text("name"),
                healthy=c.flag("healthy"),
                last_error=c.text("last_error", default=""),
                last_ok_utc=c.time("last_ok_utc", optional=True),
                owed_count=c.integer("owed_count", default=0),
                missed_count=c.integer("missed_count", default=0),
            )
            for c in r.objs("channels")
        ),
        muted={key: muted_raw.time(key, optional=True) for key in muted_raw.keys()},
        config_error=r.text("config_error", default=""),
        missed_count=r.integer("missed_count", default=0),
        planned_count=r.integer("planned_count", default=0),
        partial_plan_until_utc=r.time("partial_plan_until_utc", optional=True),
        clock_tolerance_seconds=r.number("clock_tolerance_seconds", default=1.0),
        ledger_error=r.text("ledger_error", default=""),
        mount=_mount_from_json(r.obj("mount")) if "mount" in r.keys() else MountView(),
        awaiting_ack=tuple(_texts(r, "awaiting_ack")),
    )


_MOUNT_NUMBERS = ("ra_hours", "dec_deg", "ha_hours", "alt_deg", "az_deg", "seconds_to_flip",
                  "seconds_to_limit", "nearest_distance_deg", "sun_distance_deg")
_MOUNT_FLAGS = ("counterweight_up", "tracking", "parked")


def _mount_to_json(m: MountView) -> dict[str, Any]:
    data: dict[str, Any] = {
        "link_state": m.link_state,
        "link_detail": m.link_detail,
        "device": m.device,
        "pier_side": m.pier_side,
        "slewing": m.slewing,
        "nearest_target": m.nearest_target,
        "in_use": m.in_use,
        "in_use_source": m.in_use_source,
    }
    data.update({name: _num(getattr(m, name)) for name in _MOUNT_NUMBERS})
    data.update({name: getattr(m, name) for name in _MOUNT_FLAGS})
    return data


def _mount_from_json(r: _Reader) -> MountView:
    return MountView(
        link_state=r.text("link_state"),
        link_detail=r.text("link_detail", default=""),
        device=r.text("device", default=""),
        pier_side=r.text("pier_side", default="unknown"),
        slewing=bool(r.flag("slewing", optional=True)),
        nearest_target=r.text("nearest_target", optional=True),
        in_use=r.text("in_use", optional=True),
        in_use_source=r.text("in_use_source", default=""),
        **{name: r.number(name, optional=True) for name in _MOUNT_NUMBERS},
        **{name: r.flag(name, optional=True) for name in _MOUNT_FLAGS},
    )


def format_iso_z(when: datetime) -> str:
    """``2026-12-14T21:03:07Z`` (microseconds shown only when not zero). Needs an aware datetime."""
    if when.tzinfo is None:
        raise ValueError(f"cannot send a naive datetime ({when!r}); give it tzinfo=UTC")
    utc = when.astimezone(UTC)
    spec = "seconds" if utc.microsecond == 0 else "microseconds"
    return utc.replace(tzinfo=None).isoformat(timespec=spec) + "Z"


def parse_iso_z(text: str) -> datetime:
    """Parse an ISO 8601 time with "Z" or an offset into an aware UTC datetime.

    Raises:
        ValueError: for a time without a zone or not in ISO 8601 form.
    """
    if not isinstance(text, str):
        raise ValueError(f"expected an ISO 8601 time text like 2026-12-14T21:03:07Z, got {_show(text)}")
    when = datetime.fromisoformat(text[:-1] + "+00:00" if text.endswith(("Z", "z")) else text)
    if when.tzinfo is None:
        raise ValueError(f"expected a time with a zone, like 2026-12-14T21:03:07Z, got {_show(text)}")
    return when.astimezone(UTC)


# -- helpers, in the order they are used ------------------------------------------------------------


def _loads_strict(text: str, error: type[SiderodError], what: str) -> Any:
    """json.loads without NaN/Infinity and without duplicate keys; every failure becomes ``error``."""
    try:
        return json.loads(text, parse_constant=_refuse_constant, object_pairs_hook=_no_duplicates)
    except _Refused as e:
        raise error(f"{what} {e}") from None
    except json.JSONDecodeError as e:
        raise error(f"{what} is not valid JSON: {e.msg} at character {e.pos}") from None
    except RecursionError:
        raise error(f"{what} is nested too deeply to be a control {what}") from None
    except ValueError as e:  # e.g. an integer with more digits than Python will convert
        raise error(f"{what} has a value that cannot be read: {e}") from None


class _Refused(ValueError):
    pass


def _refuse_constant(name: str) -> Any:
    raise _Refused(f"uses {name}, which JSON does not allow; send a finite number or null")


def _no_duplicates(pairs: list[tuple[str, Any]]) -> dict[str, Any]:
    data: dict[str, Any] = {}
    for key, value in pairs:
        if key in data:
            raise _Refused(f"repeats the key {_show(key)}; give each key once")
        data[key] = value
    return data


def _valid_target(value: Any) -> str:
    if not isinstance(value, str):
        raise BadRequest(f'"target" must be a target name (text), got {_json_kind(value)}')
    name = value.strip()
    if not name:
        raise BadRequest('"target" is empty; give the name of a target from the configuration')
    if len(name) > MAX_TARGET_CHARS:
        raise BadRequest(f'"target" is {len(name)} characters long; the limit is {MAX_TARGET_CHARS}')
    if any(ord(ch) < 32 or ord(ch) == 127 for ch in name):
        raise BadRequest('"target" contains control characters; give a plain target name')
    return name


def _valid_for_seconds(value: Any) -> float | None:
    if value is None:
        return None
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise BadRequest(f'"for_seconds" must be a number of seconds or null, got {_json_kind(value)}')
    try:
        seconds = float(value)
    except OverflowError:  # an integer of hundreds of digits
        raise BadRequest(f'"for_seconds" is far too large: {_show(value)}; the longest timed mute is '
                         f"{MAX_MUTE_SECONDS:g} s (one year); send null to mute until unmuted") from None
    if not math.isfinite(seconds) or seconds <= 0:
        raise BadRequest(f'"for_seconds" must be more than 0 (null mutes until unmuted), got {_show(value)}')
    if seconds > MAX_MUTE_SECONDS:
        raise BadRequest(
            f'"for_seconds" is {seconds:g}; the longest timed mute is {MAX_MUTE_SECONDS:g} s (one year); '
            "send null to mute until unmuted"
        )
    return seconds


def _dump_line(data: Mapping[str, Any]) -> bytes:
    # ensure_ascii keeps every line pure ASCII, so no UTF-8 sequence can hide a newline byte.
    return json.dumps(data, allow_nan=False, separators=(",", ":"), ensure_ascii=True).encode() + b"\n"


def _ops_text() -> str:
    return ", ".join(f'"{op.value}"' for op in Op)


def _json_kind(value: Any) -> str:
    if value is None:
        return "null"
    if isinstance(value, bool):
        return "true" if value else "false"
    kinds = {dict: "an object", list: "an array", str: "text", int: "a number", float: "a number"}
    kind = kinds.get(type(value), type(value).__name__)
    return f"{kind} {_show(value)}" if isinstance(value, str | int | float) else kind


def _show(value: Any, limit: int = 60) -> str:
    """A short, printable rendering of a peer's value for an error message."""
    # Containers are only named, never printed: a hostile one may be huge or deeply nested.
    if isinstance(value, dict | list):
        return "an object" if isinstance(value, dict) else f"an array of {len(value)}"
    text = json.dumps(value, ensure_ascii=True) if isinstance(value, str | int | float) else repr(value)
    return text if len(text) <= limit else text[: limit - 3] + "..."


def _num(value: float | None) -> float | None:
    if value is None or not math.isfinite(value):
        return None
    return float(value)


def _iso_or_none(when: datetime | None) -> str | None:
    return None if when is None else format_iso_z(when)


def _site_to_json(site: Site) -> dict[str, Any]:
    return {
        "name": site.name,
        "latitude_deg": site.latitude_deg,
        "longitude_deg": site.longitude_deg,
        "elevation_m": site.elevation_m,
        "timezone": site.timezone,
        "pressure_hpa": _num(site.pressure_hpa),
        "temperature_c": site.temperature_c,
        "horizon": [[az, alt] for az, alt in site.horizon],
    }


def _site_from_json(r: _Reader) -> Site:
    horizon = []
    for i, point in enumerate(r.list("horizon", default=[])):
        if not (isinstance(point, list) and len(point) == 2 and all(_is_number(v) for v in point)):
            expected = "[azimuth_deg, altitude_deg]"
            raise BadReply(f"{r.where}.horizon[{i}]: expected {expected}, got {_show(point)}")
        horizon.append((float(point[0]), float(point[1])))
    return Site(
        name=r.text("name"),
        latitude_deg=r.number("latitude_deg"),
        longitude_deg=r.number("longitude_deg"),
        elevation_m=r.number("elevation_m", default=0.0),
        timezone=r.text("timezone", default="UTC"),
        pressure_hpa=r.number("pressure_hpa", optional=True),
        temperature_c=r.number("temperature_c", default=10.0),
        horizon=tuple(horizon),
    )


def _texts(r: _Reader, key: str) -> list[str]:
    items = r.list(key, default=[])
    if not all(isinstance(item, str) for item in items):
        raise BadReply(f"{r.where}.{key}: expected an array of texts")
    return items


def _alert_to_json(alert: PlannedAlert) -> dict[str, Any]:
    e = alert.event
    return {
        "key": alert.key,
        "due_utc": format_iso_z(alert.due_utc),
        "lead_minutes": alert.lead_minutes,
        "repeat_number": alert.repeat_number,
        "urgency": alert.urgency.value,
        "title": alert.title,
        "body": alert.body,
        "event": {
            "time_utc": format_iso_z(e.time_utc),
            "target": e.target,
            "kind": e.kind.value,
            "altitude_deg": _num(e.altitude_deg),
            "azimuth_deg": _num(e.azimuth_deg),
            "hour_angle_hours": _num(e.hour_angle_hours),
            "threshold_deg": _num(e.threshold_deg),
            "mark_hours": _num(e.mark_hours),
            "usable": e.usable,
            "moon_illuminated_fraction": _num(e.moon_illuminated_fraction),
            "beam_source": e.beam_source,
            "beam_offset_deg": _num(e.beam_offset_deg),
        },
    }


def _alert_from_json(r: _Reader) -> PlannedAlert:
    e = r.obj("event")
    event = Event(
        time_utc=e.time("time_utc"),
        kind=e.choice("kind", EventKind),
        target=e.text("target", optional=True),
        altitude_deg=e.number("altitude_deg", nan_for_null=True),
        azimuth_deg=e.number("azimuth_deg", nan_for_null=True),
        hour_angle_hours=e.number("hour_angle_hours", optional=True),
        threshold_deg=e.number("threshold_deg", optional=True),
        mark_hours=e.number("mark_hours", optional=True),
        usable=e.flag("usable", optional=True),
        moon_illuminated_fraction=e.number("moon_illuminated_fraction", optional=True),
        beam_source=e.text("beam_source", optional=True),
        beam_offset_deg=e.number("beam_offset_deg", optional=True),
    )
    return PlannedAlert(
        key=r.text("key"),
        event=event,
        lead_minutes=r.number("lead_minutes"),
        repeat_number=r.integer("repeat_number", default=0),
        due_utc=r.time("due_utc"),
        urgency=r.choice("urgency", Urgency),
        title=r.text("title"),
        body=r.text("body", default=""),
    )


def _delivery_to_json(d: Delivery) -> dict[str, Any]:
    return {
        "key": d.key,
        "channel": d.channel,
        "delivered_utc": format_iso_z(d.delivered_utc),
        "late_seconds": _num(d.late_seconds),
        "ok": d.ok,
        "error": d.error,
        "title": d.title,
    }


def _delivery_from_json(r: _Reader) -> Delivery:
    return Delivery(
        key=r.text("key"),
        channel=r.text("channel"),
        delivered_utc=r.time("delivered_utc"),
        late_seconds=r.number("late_seconds", nan_for_null=True),
        ok=r.flag("ok"),
        error=r.text("error", default=""),
        title=r.text("title", default=""),
    )


def _is_number(value: Any) -> bool:
    return isinstance(value, int | float) and not isinstance(value, bool)


_MISSING = object()


class _Reader:
    """Typed access to one JSON object, raising BadReply with the field's path on any mismatch."""

    def __init__(self, data: Any, where: str) -> None:
        if not isinstance(data, dict):
            raise BadReply(f"{where}: expected an object, got {_json_kind(data)}")
        self._data = data
        self.where = where

    def keys(self) -> list[str]:
        return list(self._data)

    def _get(self, key: str, default: Any) -> Any:
        value = self._data.get(key, _MISSING)
        if value is _MISSING:
            if default is _MISSING:
                raise BadReply(f"{self.where}.{key}: missing")
            return default
        return value

    def _bad(self, key: str, expected: str, value: Any) -> BadReply:
        return BadReply(f"{self.where}.{key}: expected {expected}, got {_json_kind(value)}")

    def text(self, key: str, *, default: Any = _MISSING, optional: bool = False) -> Any:
        value = self._get(key, None if optional else default)
        if value is None and optional:
            return None
        if not isinstance(value, str):
            raise self._bad(key, "text", value)
        return value

    def number(
        self, key: str, *, default: Any = _MISSING, optional: bool = False, nan_for_null: bool = False
    ) -> Any:
        value = self._get(key, None if (optional or nan_for_null) else default)
        if value is None and (optional or nan_for_null):
            return math.nan if nan_for_null else None
        if not _is_number(value):
            raise self._bad(key, "a number", value)
        return float(value)

    def integer(self, key: str, *, default: Any = _MISSING) -> int:
        value = self._get(key, default)
        if isinstance(value, bool) or not isinstance(value, int):
            raise self._bad(key, "a whole number", value)
        return value

    def flag(self, key: str, *, optional: bool = False) -> Any:
        value = self._get(key, None if optional else _MISSING)
        if value is None and optional:
            return None
        if not isinstance(value, bool):
            raise self._bad(key, "true or false", value)
        return value

    def time(self, key: str, *, optional: bool = False) -> Any:
        value = self._get(key, None if optional else _MISSING)
        if value is None and optional:
            return None
        try:
            return parse_iso_z(value)
        except ValueError:
            raise self._bad(key, "an ISO 8601 time like 2026-12-14T21:03:07Z", value) from None

    def choice(self, key: str, kind: type[enum.Enum]) -> Any:
        value = self._get(key, _MISSING)
        try:
            return kind(value)
        except (ValueError, TypeError):
            choices = ", ".join(str(m.value) for m in kind)  # type: ignore[attr-defined]
            raise self._bad(key, f"one of {choices}", value) from None

    def obj(self, key: str) -> _Reader:
        return _Reader(self._get(key, _MISSING), f"{self.where}.{key}")

    def list(self, key: str, *, default: Any = _MISSING) -> list[Any]:
        value = self._get(key, default)
        if not isinstance(value, list):
            raise self._bad(key, "an array", value)
        return value

    def objs(self, key: str) -> list[_Reader]:
        items = self.list(key, default=[])
        return [_Reader(item, f"{self.where}.{key}[{i}]") for i, item in enumerate(items)]
