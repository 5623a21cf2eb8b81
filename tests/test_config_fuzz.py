"""Fuzzed configuration and target files: a clear ConfigErrors every time, never another exception,
and a fuzzed reload never harms a running service.

The documents are built from strategies that know the real section and key names, so most examples
get past the TOML parser and reach the value checks: angle texts like "5h61m", huge and non-finite
numbers, negative elevations, wrong types. The property is the foundation issue's rule that every
problem comes back as a located, teaching ConfigError (path, key or line, non-empty "expected").
"""

from __future__ import annotations

import json
import math
from dataclasses import replace
from datetime import timedelta
from pathlib import Path

import pytest
from helpers import service_fakes as fakes
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from siderod.common.errors import ConfigErrors
from siderod.files.config import parse_config
from siderod.files.targets import parse_targets_csv, parse_targets_toml

DEMO_DIR = Path(__file__).resolve().parent.parent / "siderod" / "demo"
CONFIG_PATH = "/fuzz/config.toml"
#: A fixed instant for dut1 = "iers" look-ups (the demo evening), so runs do not depend on today.
AT_UNIX = 1_797_271_200.0
#: An existing file that is not an IERS table (this test itself), for iers_file.
NOT_AN_IERS_FILE = str(Path(__file__).resolve())

PARSE_SETTINGS = settings(max_examples=200, deadline=None, database=None,
                          suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])
RELOAD_SETTINGS = settings(max_examples=20, deadline=None, database=None,
                           suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])


# -- strategies ----------------------------------------------------------------------------------

_ANGLE_TEXTS = ["5h61m", "", "abc", "05h35m17.3s", "+56 12 30", "-3 41 15", "56:12:30", "56d12m30s",
                "-0 30", "+90", "-91", "24h", "23h59m60s", "1e400", "nan", "inf", "--5", "5h 5h",
                "12:60:00", "3h47m24s", "-12h", "+2h", "0x10", "٣", "5°", "\x00", " ", "1_000"]

#: Text without lone surrogates: json.dumps would escape them as \\udXXX, which TOML rejects, so
#: every such example would stop at the syntax check.
_texts = st.text(st.characters(blacklist_categories=("Cs",)), max_size=12)

_numbers = st.one_of(
    st.integers(min_value=-(10**30), max_value=10**30),
    st.sampled_from([10**19, -(10**19), 10**400, -(10**400), 0, -1, -500, 9001, 1441]),
    st.floats(allow_nan=True, allow_infinity=True),
)
_scalars = st.one_of(
    _numbers,
    st.booleans(),
    st.sampled_from(_ANGLE_TEXTS),
    _texts,
    st.sampled_from(["iers", "Europe/London", "../../etc/passwd", "UTC", "Mars/Olympus",
                     "german-equatorial", "fork", "alt-az", "none", "critical", "low", "normal",
                     "demo-targets.toml", "missing.csv", "t.csv", "t.toml", NOT_AN_IERS_FILE,
                     "{title}", "{nope}", "{", "}", "{0}", "notify-send"]),
)
_values = st.recursive(
    _scalars,
    lambda inner: st.one_of(st.lists(inner, max_size=4),
                            st.dictionaries(st.sampled_from(["a", "culmination", "flip-due", "x"]), inner,
                                            max_size=3)),
    max_leaves=8,
)

_SECTION_KEYS = {
    "site": ["name", "latitude", "longitude", "elevation", "timezone", "pressure", "temperature", "horizon"],
    "time": ["dut1", "iers_file"],
    "targets": ["files"],
    "events": ["min_altitude", "altitudes", "hour_angles", "refraction", "window_hours"],
    "mount": ["kind", "flip_after", "limit_after"],
    "alerts": ["grace", "horizon_hours", "replan", "hold_while_sun_above"],
    "alerts.lead": ["culmination", "flip-due", "tracking-limit", "altitude-up", "astronomical-dusk", "rise"],
    "alerts.urgency": ["culmination", "flip-due", "astronomical-dusk", "nope"],
    "notify": ["desktop", "command", "command_timeout"],
    "view": ["refresh_hz"],
    "wrong": ["x"],
}
_TARGET_KEYS = ["name", "frame", "equinox", "ra", "dec", "l", "b", "lon", "lat", "ha", "min_altitude",
                "alerts", "tags", "pm_ra", "pm_dec", "parallax", "rv", "epoch", "colour"]


def toml_value(value) -> str:
    """TOML spelling of a generated value (JSON strings are valid TOML basic strings)."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if math.isnan(value):
            return "nan"
        if math.isinf(value):
            return "inf" if value > 0 else "-inf"
        return repr(value)
    if isinstance(value, str):
        return json.dumps(value)
    if isinstance(value, list):
        return "[" + ", ".join(toml_value(v) for v in value) + "]"
    return "{ " + ", ".join(f"{json.dumps(k)} = {toml_value(v)}" for k, v in value.items()) + " }"


def _key_values(keys: list[str]):
    return st.dictionaries(st.one_of(st.sampled_from(keys), _texts.filter(bool)), _values,
                           max_size=len(keys))


@st.composite
def config_documents(draw) -> str:
    """A TOML-ish configuration: real sections and keys (and some wrong ones), random values."""
    names = sorted(_SECTION_KEYS)
    sections = draw(st.lists(st.sampled_from(names), unique=True, max_size=len(names)))
    lines = []
    for section in sections:
        lines.append(f"[{section}]")
        for key, value in draw(_key_values(_SECTION_KEYS[section])).items():
            lines.append(f"{json.dumps(key)} = {toml_value(value)}")
    return "\n".join(lines) + "\n"


@st.composite
def target_documents(draw) -> str:
    """A TOML-ish target file: [[target]] tables with random keys and values."""
    lines = []
    for _ in range(draw(st.integers(0, 4))):
        lines.append("[[target]]")
        for key, value in draw(_key_values(_TARGET_KEYS)).items():
            lines.append(f"{json.dumps(key)} = {toml_value(value)}")
    return "\n".join(lines) + "\n"


def _csv_cell():
    return st.one_of(st.sampled_from(_ANGLE_TEXTS), st.text(max_size=8), _numbers.map(str))


csv_documents = st.lists(st.lists(_csv_cell(), min_size=0, max_size=4).map(",".join),
                         max_size=6).map("\n".join)


@st.composite
def mutated_demo(draw) -> str:
    """The demo configuration with one value line replaced by a random value (often invalid)."""
    lines = (DEMO_DIR / "demo.toml").read_text().splitlines()
    candidates = [i for i, line in enumerate(lines) if " = " in line and not line.startswith("#")]
    index = draw(st.sampled_from(candidates))
    key = lines[index].split(" = ", 1)[0]
    lines[index] = f"{key} = {toml_value(draw(_values))}"
    return "\n".join(lines) + "\n"


# -- the property ---------------------------------------------------------------------------------


def assert_teaching_errors(exc: ConfigErrors) -> None:
    assert exc.errors, "ConfigErrors with no errors in it"
    for error in exc.errors:
        assert isinstance(error.path, str) and error.path, error
        assert isinstance(error.key, str), error
        # A located problem: a key path, or (TOML syntax errors, which have no key) a line.
        assert error.key or error.line is not None, repr(error)
        assert isinstance(error.expected, str) and error.expected.strip(), repr(error)
        assert isinstance(error.got, str), repr(error)
        assert str(error).startswith(error.path), str(error)


def parse_or_teach(parse, *args, **kwargs):
    """Run a parser: a result or a teaching ConfigErrors are fine; any other exception fails the test."""
    try:
        return parse(*args, **kwargs)
    except ConfigErrors as exc:
        assert_teaching_errors(exc)
        return None


def _reader(files: dict[str, str]):
    def read_file(path: str) -> str:
        name = Path(path).name
        if name in files:
            return files[name]
        raise FileNotFoundError(2, "No such file or directory", path)

    return read_file


@PARSE_SETTINGS
@given(text=st.text(max_size=300))
def test_arbitrary_text_gives_a_config_or_teaching_errors(text):
    parse_or_teach(parse_config, text, CONFIG_PATH, read_file=_reader({}), at_unix=AT_UNIX)
    parse_or_teach(parse_targets_toml, text, "/fuzz/targets.toml")
    parse_or_teach(parse_targets_csv, text, "/fuzz/targets.csv")


@pytest.mark.slow
@PARSE_SETTINGS
@given(text=config_documents(), targets_toml=target_documents(), targets_csv=csv_documents)
def test_fuzzed_documents_give_a_config_or_teaching_errors(text, targets_toml, targets_csv):
    files = {"t.toml": targets_toml, "t.csv": targets_csv, "demo-targets.toml": targets_toml}
    parse_or_teach(parse_config, text, CONFIG_PATH, read_file=_reader(files), at_unix=AT_UNIX)
    parse_or_teach(parse_targets_toml, targets_toml, "/fuzz/t.toml")
    parse_or_teach(parse_targets_csv, targets_csv, "/fuzz/t.csv")


@pytest.mark.slow
@PARSE_SETTINGS
@given(text=mutated_demo())
def test_one_bad_value_in_the_demo_gives_a_config_or_teaching_errors(text):
    files = {"demo-targets.toml": (DEMO_DIR / "demo-targets.toml").read_text()}
    parse_or_teach(parse_config, text, str(DEMO_DIR / "demo.toml"), read_file=_reader(files), at_unix=AT_UNIX)


@pytest.mark.parametrize("text", [
    "[site]\nelevation = 1" + "0" * 400 + "\n",  # an integer too large for a float
    "[alerts.lead]\nculmination = [1" + "0" * 400 + "]\n",
    "[site]\nhorizon = [[1" + "0" * 400 + ", 5]]\n",
    "[site]\nelevation = 1" + "0" * 5000 + "\n",  # beyond int()'s 4300-digit limit inside tomllib
])
def test_huge_integers_are_reported_not_raised(text):
    with pytest.raises(ConfigErrors) as caught:
        parse_config(text, CONFIG_PATH, read_file=_reader({}), at_unix=AT_UNIX)
    assert_teaching_errors(caught.value)


# -- a fuzzed reload keeps the service alive on its last good configuration -----------------------



#: Checked alone it is valid; the fuzzed documents below are parsed in its place.
_GOOD_TARGETS = '[[target]]\nname = "NGC 1001"\nra = "00h10m"\ndec = "+40"\n'


def _invalid(text: str, files: dict[str, str]) -> bool:
    try:
        parse_config(text, CONFIG_PATH, read_file=_reader(files), at_unix=AT_UNIX)
    except ConfigErrors:
        return True
    return False


@pytest.mark.slow
@RELOAD_SETTINGS
@given(bad_texts=st.lists(st.one_of(config_documents(), mutated_demo(), st.text(max_size=200)),
                          min_size=3, max_size=3))
async def test_fuzzed_invalid_reloads_leave_the_service_on_its_original_config(bad_texts, tmp_path_factory):
    from siderod.common.clock import FakeClock
    from siderod.common.model import ClockHealth, Event, EventKind
    from siderod.service.daemon import Service
    from siderod.service.scheduling import ClockScheduler

    files = {"demo-targets.toml": _GOOD_TARGETS, "t.toml": _GOOD_TARGETS, "t.csv": "NGC 1001,0h10m,+40\n"}
    bad_texts = [t for t in bad_texts if _invalid(t, files)]
    original = replace(fakes.make_config(("NGC 1001",), horizon_hours=12.0), path=CONFIG_PATH)
    pending: list[str] = []

    def loader():
        if pending:
            return parse_config(pending.pop(), CONFIG_PATH, read_file=_reader(files), at_unix=AT_UNIX)
        return original

    clock = FakeClock(fakes.NIGHT_START_UTC)
    recorder = fakes.RecordingChannel(clock)
    event = Event(fakes.NIGHT_START_UTC + timedelta(hours=2), EventKind.CULMINATION, "NGC 1001", 60.0, 180.0,
                  hour_angle_hours=0.0)
    service = Service(
        loader, clock, lambda on_due: ClockScheduler(on_due, clock), [recorder],
        ledger_path=tmp_path_factory.mktemp("ledger") / "ledger.sqlite3",
        agenda_source=fakes.FixedAgendaSource([event]), control=False, env={}, offload_planning=False,
        file_poll_seconds=0, clock_health_reader=lambda: ClockHealth(state="unknown"),
        anomaly_period_seconds=600.0,  # no clock anomalies here: fewer wake-ups, a quicker night
    )
    task = await fakes.run_service_until(service, clock, fakes.NIGHT_START_UTC + timedelta(minutes=1))
    try:
        for text in bad_texts:
            pending.append(text)
            assert await service.handle_request(_Request("reload")) == {
                "reloaded": False, "config_path": CONFIG_PATH, "error": service.config_error}
            assert service.config is original
            status = await service.handle_request(_Request("status"))
            assert status["config_path"] == CONFIG_PATH
            assert status["site"]["name"] == "Corrie Hill Observatory"
            assert status["config_error"].strip()
            assert [a["key"].split("|")[0] for a in status["next_alerts"]] == ["NGC 1001"]
            assert not task.done()
        assert len(recorder.service_messages) == len(bad_texts)  # one alert per failed reload
        await clock.advance(7200)  # to 18:01: the planned alert still fires on the original configuration
        assert recorder.alert_keys == ["NGC 1001|culmination|2026-12-14T18:00:00Z|0"]
    finally:
        await fakes.stop_service(service, task)


class _Request:
    def __init__(self, op: str) -> None:
        self.op, self.target, self.for_seconds = op, None, None
