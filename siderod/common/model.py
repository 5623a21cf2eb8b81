"""Plain records shared by the planner, the service, the view and the command line.

Every record is a frozen dataclass with units in its field names. Enum values are the stable
spellings used in configuration files and in ``--json`` output.
"""

from __future__ import annotations

import enum
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from datetime import datetime
from typing import Any

__all__ = [
    "EventKind",
    "Frame",
    "MountKind",
    "Urgency",
    "Site",
    "OrbitSpec",
    "Target",
    "EventSettings",
    "Mount",
    "MountLink",
    "AlertRules",
    "NotifySettings",
    "PushDestination",
    "ViewSettings",
    "TimeSettings",
    "Config",
    "Event",
    "PlannedAlert",
    "Delivery",
    "ClockHealth",
    "ChannelHealth",
    "ServiceSnapshot",
    "MountView",
    "TARGET_EVENT_KINDS",
    "SKY_EVENT_KINDS",
    "BEAM_EVENT_KINDS",
    "SUN_SOURCE",
    "COMMAND_PLACEHOLDERS",
]

# What a `[notify] command` argument may contain, each filled per alert by the command channel
# and checked by the configuration loader. Times are ISO 8601; `time_*` is the event's time.
COMMAND_PLACEHOLDERS = (
    "title",
    "body",
    "target",
    "kind",
    "urgency",
    "time_utc",
    "time_local",
    "due_utc",
    "lead_minutes",
    "late_seconds",
    "key",
)


class EventKind(enum.Enum):
    """What happens at an event. ``.value`` is the stable spelling in files and JSON."""

    CULMINATION = "culmination"  # upper transit, hour angle 0
    LOWER_CULMINATION = "lower-culmination"  # hour angle 12 h
    RISE = "rise"  # climbs through the target's lowest usable altitude
    SET = "set"  # sinks through it
    ALTITUDE_UP = "altitude-up"  # climbs through an extra configured altitude
    ALTITUDE_DOWN = "altitude-down"  # sinks through it
    HOUR_ANGLE = "hour-angle"  # reaches a configured hour angle
    FLIP_DUE = "flip-due"  # German equatorial mount: time to flip
    TRACKING_LIMIT = "tracking-limit"  # German equatorial mount: limit reached
    SUNSET = "sunset"
    SUNRISE = "sunrise"
    CIVIL_DUSK = "civil-dusk"  # Sun sinks through -6 deg: civil twilight ends
    NAUTICAL_DUSK = "nautical-dusk"  # -12 deg going down
    ASTRONOMICAL_DUSK = "astronomical-dusk"  # -18 deg going down: astronomical night begins
    ASTRONOMICAL_DAWN = "astronomical-dawn"  # -18 deg going up: astronomical night ends
    NAUTICAL_DAWN = "nautical-dawn"
    CIVIL_DAWN = "civil-dawn"
    MOONRISE = "moonrise"
    MOONSET = "moonset"
    BEAM_ENTER = "beam-enter"  # a source enters a fixed pointing's beam (drift scan)
    BEAM_CENTRE = "beam-centre"  # passes closest to the beam's axis
    BEAM_LEAVE = "beam-leave"  # leaves the beam


TARGET_EVENT_KINDS = frozenset(
    {
        EventKind.CULMINATION,
        EventKind.LOWER_CULMINATION,
        EventKind.RISE,
        EventKind.SET,
        EventKind.ALTITUDE_UP,
        EventKind.ALTITUDE_DOWN,
        EventKind.HOUR_ANGLE,
        EventKind.FLIP_DUE,
        EventKind.TRACKING_LIMIT,
        EventKind.BEAM_ENTER,
        EventKind.BEAM_CENTRE,
        EventKind.BEAM_LEAVE,
    }
)
#: The drift-scan kinds: their event's ``target`` is the fixed pointing, ``beam_source`` the source.
BEAM_EVENT_KINDS = frozenset({EventKind.BEAM_ENTER, EventKind.BEAM_CENTRE, EventKind.BEAM_LEAVE})
#: The name that means the Sun in a pointing's ``sources`` (allowed there only, never as a target).
SUN_SOURCE = "sun"
SKY_EVENT_KINDS = frozenset(set(EventKind) - TARGET_EVENT_KINDS)


class Frame(enum.Enum):
    """The coordinate system a target was given in."""

    ICRS = "icrs"  # RA/Dec, ICRS ~ J2000 mean equator and equinox
    GALACTIC = "galactic"  # l/b, IAU 1958 system as realised in ICRS
    ECLIPTIC = "ecliptic"  # lon/lat, mean ecliptic and equinox of J2000
    ECLIPTIC_OF_DATE = "ecliptic-of-date"  # lon/lat, mean ecliptic and equinox of date
    HADEC = "fixed-pointing"  # a fixed hour angle and declination (a parked transit instrument)
    BODY = "body"  # a planet, Pluto or the Moon, placed from the JPL ephemeris
    ORBIT = "orbit"  # a comet or asteroid, placed from osculating orbital elements


class MountKind(enum.Enum):
    GERMAN_EQUATORIAL = "german-equatorial"
    FORK = "fork"
    ALT_AZ = "alt-az"
    NONE = "none"


class Urgency(enum.Enum):
    LOW = "low"
    NORMAL = "normal"
    CRITICAL = "critical"

    @property
    def rank(self) -> int:
        """0 for low, 1 for normal, 2 for critical: compare urgencies with it."""
        return _URGENCY_RANK[self.value]


_URGENCY_RANK = {"low": 0, "normal": 1, "critical": 2}


@dataclass(frozen=True, slots=True)
class Site:
    """Where the observer is.

    ``longitude_deg`` is east positive (west of Greenwich is negative).
    ``horizon`` is a tuple of (azimuth_deg, lowest_usable_altitude_deg) points, sorted by azimuth,
    interpolated linearly and wrapping through azimuth 0; empty means a flat horizon at 0 deg.
    """

    name: str
    latitude_deg: float
    longitude_deg: float
    elevation_m: float = 0.0
    timezone: str = "UTC"
    pressure_hpa: float | None = None  # None: standard atmosphere for the elevation
    temperature_c: float = 10.0
    horizon: tuple[tuple[float, float], ...] = ()


@dataclass(frozen=True, slots=True)
class OrbitSpec:
    """Osculating heliocentric elements of a comet or asteroid (mean ecliptic and equinox of J2000).

    ``kind`` is "comet" (magnitude ``H + 5 log delta + 2.5 K log r``) or "asteroid" (IAU H, G);
    ``slope`` is K for a comet and G for an asteroid; ``h_mag``/``slope`` None when not given.
    """

    q_au: float
    e: float
    i_deg: float
    node_deg: float
    peri_deg: float
    tp_jd_tt: float
    epoch_jd_tt: float
    kind: str = "asteroid"
    h_mag: float | None = None
    slope: float | None = None
    designation: str = ""


@dataclass(frozen=True, slots=True)
class Target:
    """One watched target, as the user gave it, plus its ICRS place when it has one.

    ``ra_deg``/``dec_deg`` are ICRS at ``epoch_jd_tt`` (computed at load time for galactic and
    J2000 ecliptic input; for ecliptic-of-date they are filled per window by the agenda).
    For ``Frame.HADEC`` targets ``ra_deg`` is None and ``ha_hours``/``dec_deg`` hold the pointing.
    Moving targets have no fixed place (``ra_deg`` None, ``dec_deg`` 0): ``Frame.BODY`` names the
    ephemeris ``body`` ("jupiter", "moon"), ``Frame.ORBIT`` carries its elements in ``orbit``.
    """

    name: str
    frame: Frame
    lon_deg: float  # the first coordinate as given: RA (deg), l, ecliptic lon, or HA (deg)
    lat_deg: float  # the second: Dec, b, ecliptic lat, or Dec
    ra_deg: float | None
    dec_deg: float
    ha_hours: float | None = None
    pm_ra_cosdec_mas_per_year: float = 0.0
    pm_dec_mas_per_year: float = 0.0
    parallax_mas: float = 0.0
    radial_velocity_km_s: float = 0.0
    epoch_jd_tt: float = 2451545.0
    min_altitude_deg: float | None = None  # None: the global [events] min_altitude
    lead_minutes: Mapping[EventKind, tuple[float, ...]] | None = None  # per-target alert override
    alerts_enabled: bool = True
    source: str = ""  # "file:line" where the target was defined, for messages
    tags: tuple[str, ...] = ()
    catalogue_entry: str = ""  # the deep-sky catalogue entry the place came from ("NGC 224"); "" if typed
    body: str | None = None  # Frame.BODY: "mercury" ... "pluto", "moon"
    orbit: OrbitSpec | None = None  # Frame.ORBIT: the elements
    hour_angles_hours: tuple[float, ...] = ()  # this target's own hour-angle marks (besides [events])
    # Frame.HADEC only: the beam's full widths at half power along the hour angle and the
    # declination, degrees (equal for a circular beam; None: no beam), and the names of the targets
    # (or "sun") whose passages through it are events.
    beam_ha_deg: float | None = None
    beam_dec_deg: float | None = None
    beam_sources: tuple[str, ...] = ()


@dataclass(frozen=True, slots=True)
class EventSettings:
    """Which events the agenda computes (``[events]``)."""

    min_altitude_deg: float = 0.0  # global lowest usable altitude
    altitudes_deg: tuple[float, ...] = ()  # extra altitude thresholds
    hour_angles_hours: tuple[float, ...] = ()  # hour-angle marks
    refraction: bool = True
    window_hours: float = 24.0


@dataclass(frozen=True, slots=True)
class MountLink:
    """``[mount.link]``: the read-only INDI link to the mount (siderod never moves it).

    ``device`` empty means the first device that reports a pointing (EQUATORIAL_EOD_COORD).
    """

    enabled: bool = False
    host: str = "127.0.0.1"
    port: int = 7624  # the INDI protocol's registered port
    device: str = ""
    match_within_deg: float = 1.0  # the configured target this near the pointing is "in use"


@dataclass(frozen=True, slots=True)
class Mount:
    """The telescope mount (``[mount]``). Flip and limit are minutes of time past the meridian.

    ``other_targets`` says what becomes of flip and limit alerts for targets other than the one
    in use: ``"info"`` (low urgency) or ``"off"``.
    """

    kind: MountKind = MountKind.NONE
    flip_after_minutes: float = 0.0
    limit_after_minutes: float = 15.0
    other_targets: str = "info"
    link: MountLink = field(default_factory=MountLink)


@dataclass(frozen=True, slots=True)
class AlertRules:
    """When to alert (``[alerts]``).

    ``lead_minutes`` maps an event kind to the lead times (minutes before the event; 0 = at it)
    at which to alert. Kinds not in the map do not alert.
    """

    lead_minutes: Mapping[EventKind, tuple[float, ...]] = field(default_factory=dict)
    urgency: Mapping[EventKind, Urgency] = field(default_factory=dict)
    hold_while_sun_above_deg: float | None = None
    # Target event kinds the Sun hold covers; None: every target kind that is not critical
    # (flip-due and tracking-limit by default), so the hold never hides an equipment alert
    # unless the user names that kind here.
    hold_kinds: tuple[EventKind, ...] | None = None
    grace_minutes: float = 10.0  # deliver late within this; beyond it the alert is "missed"
    horizon_hours: float = 36.0  # how far ahead the service plans
    replan_minutes: float = 60.0
    # Target alerts are held while the target is closer than this to the Sun (degrees): never point
    # unfiltered optics at or near the Sun.
    sun_separation_min_deg: float = 10.0
    # Critical alerts insist: repeated every ``repeat_minutes`` (0: never) from their due time
    # until acknowledged or the next stage (see siderod.plan.insist); at most ``repeat_count``
    # repeats where there is no next stage.
    repeat_minutes: float = 2.0
    repeat_count: int = 10


@dataclass(frozen=True, slots=True)
class PushDestination:
    """One ``[[notify.push]]`` destination: an apprise URL and which alerts it takes.

    ``url`` carries secrets (tokens, passwords): it is left out of ``repr`` and must never be
    printed or logged; ``masked_url`` is apprise's own privacy form of it, safe to show.
    ``kinds`` None means every kind (service messages such as a missed-alert summary included);
    otherwise only alerts of those kinds, and no service messages.
    """

    name: str
    url: str = field(repr=False)
    masked_url: str
    min_urgency: Urgency = Urgency.NORMAL
    kinds: frozenset[EventKind] | None = None
    source: str = ""  # where the URL came from, for messages: "secrets.toml:3", "$NAME", "config.toml:12"
    timeout_seconds: float = 10.0


@dataclass(frozen=True, slots=True)
class NotifySettings:
    """Where alerts go (``[notify]``). The log channel is always on."""

    desktop: bool = True
    command: tuple[str, ...] = ()  # argv with {placeholders}; empty: no command hook
    command_timeout_seconds: float = 10.0
    send_timeout_seconds: float = 5.0
    push: tuple[PushDestination, ...] = ()
    critical_sound: bool = True  # the desktop notification of a critical alert plays a sound


@dataclass(frozen=True, slots=True)
class ViewSettings:
    refresh_hz: float = 1.0


@dataclass(frozen=True, slots=True)
class TimeSettings:
    """``[time]``: DUT1 = UT1 - UTC and where it came from."""

    dut1_seconds: float = 0.0
    dut1_source: str = "default (0 s)"  # "config", "iers:<file>", "default (0 s)"
    iers_path: str | None = None  # set when dut1 = "iers": the finals file found
    # Warn when the kernel's estimated clock error exceeds this: LST is shown to 0.1 s and
    # alerts are given to the second, so 1 s is the default trust limit.
    clock_tolerance_seconds: float = 1.0


@dataclass(frozen=True, slots=True)
class Config:
    """A whole, validated configuration. Loaded all at once or not at all."""

    path: str
    site: Site
    targets: tuple[Target, ...]
    target_files: tuple[str, ...] = ()
    time: TimeSettings = field(default_factory=TimeSettings)
    events: EventSettings = field(default_factory=EventSettings)
    mount: Mount = field(default_factory=Mount)
    alerts: AlertRules = field(default_factory=AlertRules)
    notify: NotifySettings = field(default_factory=NotifySettings)
    view: ViewSettings = field(default_factory=ViewSettings)
    is_demo: bool = False
    max_element_age_days: float = 60.0  # [targets] max_element_age: older orbital elements get a warning
    # Opens the planetary ephemeris on first call (set by the loader at the edge, cached per
    # process); the pure layers call it only when a target moves. None: no ephemeris available.
    ephemeris: Callable[[], Any] | None = field(default=None, compare=False, repr=False)


@dataclass(frozen=True, slots=True)
class Event:
    """Something that happens at one instant: a target's culmination, the Sun at -18 deg...

    ``target`` is None for Sun, Moon and twilight events. ``threshold_deg`` is the altitude
    crossed (rise/set/altitude/twilight events); ``mark_hours`` is the hour angle reached
    (hour-angle, flip-due and tracking-limit events); ``usable`` says whether a culmination is
    above the target's lowest usable altitude.
    """

    time_utc: datetime
    kind: EventKind
    target: str | None
    altitude_deg: float
    azimuth_deg: float
    hour_angle_hours: float | None = None
    threshold_deg: float | None = None
    mark_hours: float | None = None
    usable: bool | None = None
    moon_illuminated_fraction: float | None = None
    sun_separation_deg: float | None = None  # the target's distance from the Sun's centre at the event
    beam_source: str | None = None  # beam events: the source ("Sun" for the Sun); target is the pointing
    beam_offset_deg: float | None = None  # beam events: source's Dec minus the axis's, deg, north positive


@dataclass(frozen=True, slots=True)
class PlannedAlert:
    """One alert the service intends to give.

    ``key`` is stable across restarts and re-plans: target, kind, event time (to the second)
    and lead. The ledger and the scheduler's job id both use it.
    """

    key: str
    event: Event
    lead_minutes: float
    due_utc: datetime
    urgency: Urgency
    title: str
    body: str
    repeat_number: int = 0  # 0: a configured alert; n: the n-th repeat of a critical one (plan.insist)


@dataclass(frozen=True, slots=True)
class Delivery:
    """The outcome of giving one alert on one channel."""

    key: str
    channel: str
    delivered_utc: datetime
    late_seconds: float
    ok: bool
    error: str = ""
    title: str = ""


@dataclass(frozen=True, slots=True)
class ClockHealth:
    """What the kernel says about time synchronisation (Linux adjtimex), or 'unknown'."""

    state: str  # "synchronised", "unsynchronised", "unknown"
    estimated_error_seconds: float | None = None
    max_error_seconds: float | None = None
    detail: str = ""


@dataclass(frozen=True, slots=True)
class ChannelHealth:
    """One channel as status shows it: working or not, and its open and missed debts."""

    name: str
    healthy: bool
    last_error: str = ""
    last_ok_utc: datetime | None = None
    owed_count: int = 0  # alerts this channel still has to deliver (within their grace)
    missed_count: int = 0  # alerts this channel gave up past grace (kept LEDGER_KEEP_DAYS)


@dataclass(frozen=True, slots=True)
class MountView:
    """The mount as the service sees it through its read-only link, for ``status`` and the board.

    ``link_state`` is ``siderod.plan.mount.LinkState`` spelled as its value; pointing fields are
    None while nothing has been reported. ``ra_hours``/``dec_deg`` are apparent, of date.
    ``seconds_to_flip``/``seconds_to_limit`` are None when no flip or limit is ahead (not
    tracking, parked, already on the east side of the pier). ``in_use`` is the target in use,
    set by the link (``in_use_source == "link"``) or by a control command (``"command"``).
    """

    link_state: str = "off"
    link_detail: str = ""
    device: str = ""
    ra_hours: float | None = None
    dec_deg: float | None = None
    ha_hours: float | None = None
    alt_deg: float | None = None
    az_deg: float | None = None
    pier_side: str = "unknown"
    counterweight_up: bool | None = None
    tracking: bool | None = None
    parked: bool | None = None
    slewing: bool = False
    seconds_to_flip: float | None = None
    seconds_to_limit: float | None = None
    nearest_target: str | None = None
    nearest_distance_deg: float | None = None
    sun_distance_deg: float | None = None
    in_use: str | None = None
    in_use_source: str = ""


@dataclass(frozen=True, slots=True)
class ServiceSnapshot:
    """Everything ``siderod status`` and the live view show about the running service.

    Built fresh by the service each time it is asked; never mutated afterwards.
    """

    taken_utc: datetime
    started_utc: datetime
    config_path: str
    site: Site
    dut1_seconds: float
    dut1_source: str
    clock_health: ClockHealth
    next_alerts: tuple[PlannedAlert, ...] = ()
    recent_deliveries: tuple[Delivery, ...] = ()
    channels: tuple[ChannelHealth, ...] = ()
    # target -> muted until (None: until unmuted)
    muted: Mapping[str, datetime | None] = field(default_factory=dict)
    config_error: str = ""  # the last failed reload, if any
    missed_count: int = 0
    planned_count: int = 0
    # Set while only the first stretch is planned (just after start): the plan reaches this far,
    # and the rest of the horizon is being planned. None once the whole horizon is.
    partial_plan_until_utc: datetime | None = None
    clock_tolerance_seconds: float = 1.0  # from [time] clock_tolerance
    ledger_error: str = ""  # why the alert ledger cannot be written now ("" when it can)
    mount: MountView = field(default_factory=MountView)
    # Event ids (target|kind|time) of critical alerts given and repeating until acknowledged.
    awaiting_ack: tuple[str, ...] = ()
