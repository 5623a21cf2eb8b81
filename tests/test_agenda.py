"""compute_agenda: records, filters, window edges, classifications and dark intervals."""

import math
from datetime import UTC, datetime, timedelta

import numpy as np
import pytest

from siderod.common.model import (
    Config,
    EventKind,
    EventSettings,
    Frame,
    Mount,
    MountKind,
    Site,
    Target,
)
from siderod.plan.agenda import compute_agenda, event_to_json
from siderod.plan.positions import observer_for
from tests.helpers.horizon_reference import TIME_TOLERANCE_SECONDS, ErfaStar, Limit, reference_crossings
from tests.helpers.horizon_reference import Site as ReferenceSite

#: The demo site (invented; RULES.md): Corrie Hill Observatory.
SITE = Site("Corrie Hill Observatory", 56.0 + 12 / 60 + 30 / 3600, -(3.0 + 41 / 60 + 15 / 3600), 212.0,
            "Europe/London", horizon=((0.0, 3.0), (90.0, 18.0), (205.0, 12.0), (225.0, 24.0), (315.0, 3.0)))
DEMO_NIGHT = datetime(2026, 12, 14, 12, tzinfo=UTC)
#: Events recomputed in a shifted window may move by round-off only.
SAME_EVENT_SECONDS = 0.01


def _target(name, ra_deg, dec_deg, **extra):
    return Target(name=name, frame=Frame.ICRS, lon_deg=ra_deg, lat_deg=dec_deg, ra_deg=ra_deg,
                  dec_deg=dec_deg, **extra)


TARGETS = (
    _target("Betelgeuse", 88.7929, 7.4071),   # rises and sets
    _target("Capella", 79.1723, 45.9980),     # circumpolar above 10 deg at 56 N
    _target("Sirius", 101.2872, -16.7161),    # low in the south, behind the 12-24 deg roof for a while
    _target("Deep south", 100.0, -50.0),      # never rises
    Target(name="Parked", frame=Frame.HADEC, lon_deg=0.0, lat_deg=41.0, ra_deg=None, dec_deg=41.0,
           ha_hours=0.0),
)


def _config(**changes):
    values = dict(path="test.toml", site=SITE, targets=TARGETS,
                  events=EventSettings(min_altitude_deg=10.0, altitudes_deg=(30.0,),
                                       hour_angles_hours=(-3.0,)),
                  mount=Mount(MountKind.GERMAN_EQUATORIAL, flip_after_minutes=10.0, limit_after_minutes=25.0))
    values.update(changes)
    return Config(**values)


def test_demo_night_has_every_kind_sorted_with_classifications():
    agenda = compute_agenda(_config(), DEMO_NIGHT)
    times = [e.time_utc for e in agenda.events]
    assert times == sorted(times)
    kinds = {e.kind for e in agenda.events}
    assert {EventKind.CULMINATION, EventKind.LOWER_CULMINATION, EventKind.RISE, EventKind.SET,
            EventKind.ALTITUDE_UP, EventKind.HOUR_ANGLE, EventKind.FLIP_DUE, EventKind.TRACKING_LIMIT,
            EventKind.SUNSET, EventKind.SUNRISE, EventKind.ASTRONOMICAL_DUSK,
            EventKind.ASTRONOMICAL_DAWN} <= kinds
    assert agenda.classification == {"Betelgeuse": "normal", "Capella": "up-whole-window", "Sirius": "normal",
                                     "Deep south": "down-whole-window", "Parked": "up-whole-window"}
    assert not any(e.target == "Parked" for e in agenda.events)
    assert not any(e.target == "Deep south" and e.kind in (EventKind.RISE, EventKind.SET)
                   for e in agenda.events)
    # The night is one stretch: parked (always usable) gets exactly it; Capella too.
    assert len(agenda.dark_intervals["Parked"]) == 1
    assert agenda.dark_intervals["Capella"] == agenda.dark_intervals["Parked"]
    assert agenda.dark_intervals["Deep south"] == ()


def test_flip_and_limit_only_while_usable_and_only_for_a_german_mount():
    agenda = compute_agenda(_config(), DEMO_NIGHT)
    flips = [e for e in agenda.events if e.kind in (EventKind.FLIP_DUE, EventKind.TRACKING_LIMIT)]
    assert flips and all(e.usable and e.altitude_deg > 10.0 for e in flips)
    assert not any(e.target == "Deep south" for e in flips)
    other = compute_agenda(_config(mount=Mount(MountKind.FORK)), DEMO_NIGHT)
    assert not any(e.kind in (EventKind.FLIP_DUE, EventKind.TRACKING_LIMIT) for e in other.events)


def test_rise_and_set_meet_the_profile_and_refraction_moves_them():
    on = compute_agenda(_config(), DEMO_NIGHT, targets=["Sirius"], kinds={EventKind.RISE, EventKind.SET})
    for e in on.events:
        # Reported (refracted) altitude equals the usable limit at that azimuth.
        assert e.altitude_deg == pytest.approx(e.threshold_deg, abs=0.002)
    off = compute_agenda(_config(events=EventSettings(min_altitude_deg=10.0, refraction=False)), DEMO_NIGHT,
                         targets=["Sirius"], kinds={EventKind.RISE, EventKind.SET})
    assert len(on.events) == len(off.events) >= 2
    first_on, first_off = on.events[0], off.events[0]
    # Refraction lifts the star by ~5' near 10 deg: it reaches the limit earlier when rising (minutes).
    assert first_on.kind is EventKind.RISE
    assert timedelta(seconds=10) < first_off.time_utc - first_on.time_utc < timedelta(minutes=5)


def test_back_to_back_windows_list_each_event_once():
    whole = compute_agenda(_config(), DEMO_NIGHT, 24)
    middle = whole.events[len(whole.events) // 2].time_utc
    hours_a = (middle - DEMO_NIGHT).total_seconds() / 3600
    first = compute_agenda(_config(), DEMO_NIGHT, hours_a)
    second = compute_agenda(_config(), middle, 24 - hours_a)
    joined = first.events + second.events
    assert len(joined) == len(whole.events)
    for a, b in zip(joined, whole.events, strict=True):
        assert a.kind is b.kind and a.target == b.target
        assert abs((a.time_utc - b.time_utc).total_seconds()) < SAME_EVENT_SECONDS


def test_window_over_a_dst_change_is_plain_utc():
    # Europe/London leaves summer time at 2026-10-25 01:00 UTC; the agenda works in UTC throughout,
    # so a 24 h window has 24 real hours of events (one culmination per target, about).
    start = datetime(2026, 10, 24, 12, tzinfo=UTC)
    agenda = compute_agenda(_config(), start, 24, kinds={EventKind.CULMINATION})
    assert sorted(e.target for e in agenda.events).count("Betelgeuse") == 1
    assert all(start <= e.time_utc < start + timedelta(hours=24) for e in agenda.events)


def test_june_night_at_56_north_has_no_astronomical_night():
    # The Sun reaches only about -10.4 deg at midnight (56.2 + 23.4 - 90): no -12/-18 crossings.
    agenda = compute_agenda(_config(), datetime(2026, 6, 21, 12, tzinfo=UTC), 24)
    kinds = {e.kind for e in agenda.events}
    assert EventKind.CIVIL_DUSK in kinds
    assert not kinds & {EventKind.NAUTICAL_DUSK, EventKind.ASTRONOMICAL_DUSK, EventKind.ASTRONOMICAL_DAWN}
    assert all(spans == () for spans in agenda.dark_intervals.values())


def test_filters_and_errors():
    agenda = compute_agenda(_config(), DEMO_NIGHT, 6, targets=["Capella"], kinds={EventKind.CULMINATION})
    assert all(e.kind is EventKind.CULMINATION and e.target == "Capella" for e in agenda.events)
    with pytest.raises(ValueError, match="configured targets: Betelgeuse"):
        compute_agenda(_config(), DEMO_NIGHT, targets=["Nope"])
    with pytest.raises(ValueError, match="timezone-aware"):
        compute_agenda(_config(), datetime(2026, 12, 14, 12))
    with pytest.raises(ValueError, match="positive"):
        compute_agenda(_config(), DEMO_NIGHT, 0)


def test_event_to_json_fields():
    agenda = compute_agenda(_config(), DEMO_NIGHT, 12, targets=["Capella"],
                            kinds={EventKind.CULMINATION, EventKind.MOONSET})
    data = [event_to_json(e) for e in agenda.events]
    assert {"time_utc", "target", "kind", "altitude_deg", "azimuth_deg", "hour_angle_hours", "threshold_deg",
            "mark_hours", "usable", "moon_illuminated_fraction"} <= set(data[0])
    culm = next(d for d in data if d["kind"] == "culmination")
    assert culm["time_utc"].endswith("Z") and culm["target"] == "Capella" and culm["usable"] is True
    moon = [d for d in data if d["kind"] == "moonset"]
    assert all(d["target"] is None and 0 <= d["moon_illuminated_fraction"] <= 1 for d in moon)


#: A tree 8 deg wide at its foot (azimuth 196 to 204) and 45 deg tall, on an otherwise low horizon.
TREE_HORIZON = ((0.0, 3.0), (196.0, 3.0), (200.0, 45.0), (204.0, 3.0))


def test_star_behind_a_narrow_tree_sets_and_rises_and_splits_its_dark_interval():
    # Betelgeuse passes the tree's crown at about 39.7 deg after culminating (41.2 deg) and is
    # hidden for a few minutes around 01:38 UTC. The set and rise must be listed and the dark
    # interval cut in two. Reference for the two times: a 1 s scan of the erfa.atco13 chain's
    # altitude minus the same limit, bisected to 1 ms (tests/helpers/horizon_reference.py), within
    # its TIME_TOLERANCE_SECONDS (1 s, the requirement).
    site = Site(SITE.name, SITE.latitude_deg, SITE.longitude_deg, SITE.elevation_m, SITE.timezone,
                horizon=TREE_HORIZON)
    config = _config(site=site, targets=(TARGETS[0],))
    agenda = compute_agenda(config, DEMO_NIGHT)
    tree = [e for e in agenda.events if e.target == "Betelgeuse" and e.kind in (EventKind.SET, EventKind.RISE)
            and 196.0 < e.azimuth_deg < 204.0]
    assert [e.kind for e in tree] == [EventKind.SET, EventKind.RISE]
    hidden = (tree[1].time_utc - tree[0].time_utc).total_seconds()
    assert 60.0 < hidden < 15 * 60.0
    observer = observer_for(config)
    star = ErfaStar(88.7929, 7.4071, ReferenceSite(SITE.latitude_deg, SITE.longitude_deg, SITE.elevation_m),
                    tree[0].time_utc.timestamp() - 600, tree[1].time_utc.timestamp() + 600)
    limit = Limit(tuple(a for a, _ in TREE_HORIZON), tuple(h for _, h in TREE_HORIZON), 10.0, True,
                  observer.effective_pressure_hpa, observer.temperature_c)
    ref_t, ref_rising, _ = reference_crossings(star, limit, tree[0].time_utc.timestamp() - 300,
                                               tree[1].time_utc.timestamp() + 300)
    assert ref_rising.tolist() == [False, True]
    assert abs(ref_t[0] - tree[0].time_utc.timestamp()) < TIME_TOLERANCE_SECONDS
    assert abs(ref_t[1] - tree[1].time_utc.timestamp()) < TIME_TOLERANCE_SECONDS
    spans = agenda.dark_intervals["Betelgeuse"]
    assert any(abs((end - tree[0].time_utc).total_seconds()) < 1e-3 for _, end in spans)
    assert any(abs((begin - tree[1].time_utc).total_seconds()) < 1e-3 for begin, _ in spans)


#: `now` places a target with the full apparent-place model, the agenda with a fitted track: they
#: agree to ~0.05" (tests/astro/test_places.py), i.e. to a few ms of time at these crossings. An
#: instant closer than this to a rise or set is too close to call the same way in both.
NEAR_CROSSING_SECONDS = 0.05


@pytest.mark.slow
def test_now_board_and_agenda_agree_on_below_the_limit_around_a_narrow_tree():
    # "Below" is one definition (siderod.plan.positions.altitude_limit, usable when alt >= limit):
    # `siderod now` and the board both read SkyState.min_alt_deg and compare with >=; the agenda's
    # rise/set bound the same set. Checked every 5 s across the tree and at 60 instants over the
    # night, with and without refraction; and, with no profile at all, for a target whose own
    # min_altitude is below 0 deg (no 0 deg horizon is added then, in any of the three).
    from siderod.plan.positions import compute_sky

    tree = Site(SITE.name, SITE.latitude_deg, SITE.longitude_deg, SITE.elevation_m, SITE.timezone,
                horizon=TREE_HORIZON)
    flat = Site(SITE.name, SITE.latitude_deg, SITE.longitude_deg, SITE.elevation_m, SITE.timezone)
    low = _target("Low", 60.0, -31.0, min_altitude_deg=-2.0)  # culminates at 2.8 deg
    start = DEMO_NIGHT.timestamp()
    for site, target in ((tree, TARGETS[0]), (flat, low)):
        for refraction in (True, False):
            config = _config(site=site, targets=(target,),
                             events=EventSettings(min_altitude_deg=10.0, refraction=refraction))
            agenda = compute_agenda(config, DEMO_NIGHT)
            crossings = [(e.time_utc.timestamp(), e.kind is EventKind.SET) for e in agenda.events
                         if e.kind in (EventKind.SET, EventKind.RISE)]
            assert crossings
            instants = list(np.linspace(start + 60.0, start + 86000.0, 60))
            for t_set in (t for t, down in crossings if down):
                instants += list(np.arange(t_set - 60.0, t_set + 420.0, 5.0))
            for t in instants:
                if min(abs(t - c) for c, _ in crossings) < NEAR_CROSSING_SECONDS:
                    continue
                before = [down for c, down in crossings if c < t]
                below_agenda = before[-1] if before else not crossings[0][1]
                sky = compute_sky(config, float(t))
                below_now = bool(sky.alt_deg[0] < sky.min_alt_deg[0])
                assert below_now == below_agenda, (target.name, refraction, t)


#: Per-target hour-angle marks vs ERFA: the observed hour angle from the erfa.atco13 chain at the
#: listed instant (tests/helpers/horizon_reference.py) must be the mark; 0.05 s of time is the
#: engine's measured agreement on culminations (<= 0.075 s incl. polar stars) for these stars.
HOUR_ANGLE_MARK_SECONDS = 0.05


def test_a_targets_own_hour_angle_marks_are_listed_for_it_only():
    vega = _target("Vega", 279.2347, 38.7837, hour_angles_hours=(-1.0, 2.5))
    config = _config(targets=(vega, TARGETS[0]))
    agenda = compute_agenda(config, DEMO_NIGHT, kinds={EventKind.HOUR_ANGLE})
    marks = {(e.target, e.mark_hours) for e in agenda.events}
    # The global [events] hour_angles (-3 h) for both; -1 h and +2.5 h for Vega alone.
    assert marks == {("Vega", -3.0), ("Vega", -1.0), ("Vega", 2.5), ("Betelgeuse", -3.0)}
    star = ErfaStar(279.2347, 38.7837, ReferenceSite(SITE.latitude_deg, SITE.longitude_deg, SITE.elevation_m),
                    DEMO_NIGHT.timestamp(), DEMO_NIGHT.timestamp() + 86400.0)
    for event in agenda.events:
        if event.target == "Vega":
            ha_deg, _ = star.hadec(np.array([event.time_utc.timestamp()]))
            off_hours = (ha_deg[0] / 15.0 - event.mark_hours + 12.0) % 24.0 - 12.0
            assert abs(off_hours) * 3600.0 / 1.0027379 < HOUR_ANGLE_MARK_SECONDS


def test_the_window_state_never_borrows_the_trade_words():
    # A one-hour window: the trade's circumpolar/never-rises depend on latitude, declination and
    # usable altitude only, not on how long a window is. Vega (Dec +38.8) dips to +5 deg at 56 N.
    targets = (_target("Vega", 279.2347, 38.7837), _target("Equator", 90.0, 0.0),
               _target("M42", 83.8221, -5.3911), TARGETS[1], TARGETS[3])
    agenda = compute_agenda(_config(targets=targets), datetime(2026, 12, 14, 22, tzinfo=UTC), 1.0)
    values = set(agenda.classification.values())
    assert values <= {"normal", "up-whole-window", "down-whole-window"}
    assert agenda.sky_classes == {"Vega": "rises-and-sets", "Equator": "rises-and-sets",
                                  "M42": "rises-and-sets", "Capella": "circumpolar",
                                  "Deep south": "never-rises"}


@pytest.mark.parametrize("latitude_deg", [89.9, 78.2, 56.2, -32.4, -89.9])
def test_lower_culmination_is_plus_twelve_hours_everywhere_and_json_has_no_negative_zero(latitude_deg):
    # It was -12.00 h at the poles and +12.00 h elsewhere; JSON carried -0.0.
    site = Site("Test site (invented)", latitude_deg, 15.0, 0.0, "UTC")
    targets = (_target("North", 30.0, 60.0), _target("South", 200.0, -60.0), _target("Equator", 100.0, 0.0))
    agenda = compute_agenda(_config(site=site, targets=targets), DEMO_NIGHT, 24.0,
                            kinds={EventKind.LOWER_CULMINATION, EventKind.CULMINATION})
    lower = [e for e in agenda.events if e.kind is EventKind.LOWER_CULMINATION]
    assert lower and all(abs(e.hour_angle_hours - 12.0) < 1e-6 for e in lower)
    assert all(event_to_json(e)["hour_angle_hours"] == 12.0 for e in lower)
    for event in agenda.events:
        for value in event_to_json(event).values():
            assert not (isinstance(value, float) and value == 0.0 and math.copysign(1.0, value) < 0)


#: The Sun separation serves a 10-20 deg caution (``[alerts] sun_separation_min``, the planner's
#: Sun caution): arcminutes are plenty. The agenda takes each star's direction once per piece and the
#: Sun's from a polynomial through the low-precision solar formula (about 0.01 deg), so 0.05 deg
#: leaves room for that formula and nothing else.
SUN_SEPARATION_TOLERANCE_DEG = 0.05


@pytest.mark.slow
def test_sun_separation_of_every_target_event_matches_astropy():
    # Reference: astropy 8 get_sun (its own VSOP87-based solar ephemeris, geocentric apparent) and
    # SkyCoord.separation, at each event's instant, for random stars and the demo targets.
    import warnings

    from astropy import units as u
    from astropy.coordinates import SkyCoord, get_sun
    from astropy.time import Time
    from astropy.utils import iers

    iers.conf.auto_download = False
    rng = np.random.default_rng(8)
    ra = rng.uniform(0.0, 360.0, 40)
    dec = np.degrees(np.arcsin(rng.uniform(-1.0, 1.0, 40)))
    # Some stars a few degrees from the Sun (RA ~ 262 deg, Dec ~ -23 deg in mid-December).
    ra[:6] = 262.0 + rng.uniform(-8.0, 8.0, 6)
    dec[:6] = -23.2 + rng.uniform(-8.0, 8.0, 6)
    targets = tuple(_target(f"S{i}", float(a), float(d))
                    for i, (a, d) in enumerate(zip(ra, dec, strict=True)))
    agenda = compute_agenda(_config(targets=TARGETS[:4] + targets), DEMO_NIGHT, 30.0)
    table = agenda.table
    rows = np.flatnonzero(table.target >= 0)
    assert rows.size > 300 and np.all(np.isfinite(table.sun_separation_deg[rows]))
    names = [table.names[j] for j in table.target[rows]]
    by_name = {t.name: t for t in TARGETS[:4] + targets}
    when = Time(table.time_unix[rows], format="unix", scale="utc")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # astropy's IERS table may be older than the demo night
        sun = get_sun(when)
        stars = SkyCoord(ra=[by_name[n].ra_deg for n in names] * u.deg,
                         dec=[by_name[n].dec_deg for n in names] * u.deg)
        reference = sun.separation(stars).deg
    diff = np.abs(table.sun_separation_deg[rows] - reference)
    assert np.min(reference) < 10.0  # the close ones are there
    assert np.max(diff) < SUN_SEPARATION_TOLERANCE_DEG
