"""Build tests/reference/event_reference.json: brute-force event times from ERFA and astropy.

Run:  /work/venv/bin/python tests/reference/builders/build_event_reference.py

Method (deliberately naive, independent of siderod's engine):
* stars: ``erfa.atco13`` (pressure 0 = no refraction, polar motion 0, the same DUT1) on a 1-minute
  grid; every sign change of (altitude - threshold) or of the observed hour angle (culmination),
  or of the hour angle shifted by 12 h (lower culmination), is bisected to 1 ms;
* Sun: astropy ``get_sun`` -> ``AltAz`` (pressure 0), same grid and bisection, thresholds -0.8333,
  -6, -12, -18 deg; Moon: astropy ``get_body("moon")`` -> ``AltAz`` with the upper limb at -34'
  (topocentric centre + asin(1737.4 km / distance) + 34').
The JSON header names this script and the library versions.
"""

from __future__ import annotations

import json
import pathlib
import sys
from datetime import UTC, datetime

import erfa
import numpy as np

OUT = pathlib.Path(__file__).resolve().parents[1] / "event_reference.json"
GRID_SECONDS = 60.0
BISECT_TO_SECONDS = 1e-3

# Sites: the invented demo site, an invented southern site and an invented Arctic site.
SITES = {
    "corrie-hill": (56.0 + 12 / 60 + 30 / 3600, -(3.0 + 41 / 60 + 15 / 3600), 212.0),
    "southern": (-33.93, 18.47, 30.0),
    "arctic": (69.65, 18.96, 20.0),
}
# (name, site, window start ISO, hours, dut1)
CASES = [
    ("demo-night", "corrie-hill", "2026-12-14T12:00:00Z", 24.0, -0.1),
    ("southern", "southern", "2026-06-20T06:00:00Z", 24.0, 0.0),
    ("arctic-winter", "arctic", "2026-12-20T00:00:00Z", 24.0, 0.0),
    ("arctic-summer", "arctic", "2026-06-21T00:00:00Z", 24.0, 0.0),
    ("leap-second", "corrie-hill", "2016-12-31T12:00:00Z", 24.0, 0.4),
]
THRESHOLDS_DEG = (0.0, 30.0)


def stars_for(lat: float) -> tuple[np.ndarray, np.ndarray]:
    """40 seeded random stars, plus near-pole and grazing ones for the site's latitude."""
    rng = np.random.default_rng(20261214)
    ra = rng.uniform(0.0, 360.0, 40)
    dec = np.degrees(np.arcsin(rng.uniform(-1.0, 1.0, 40)))
    extra_dec = [89.2, -89.2, 85.0, -85.0,
                 # grazing: greatest altitude 0.2 deg above 0 (and 30) deg; least altitude 0.2 deg below 0
                 lat - 90.0 + 0.2 if lat > 0 else lat + 90.0 - 0.2,
                 lat - 60.0 + 0.2 if lat > 0 else lat + 60.0 - 0.2,
                 90.0 - lat - 0.2 if lat > 0 else -90.0 - lat + 0.2]
    extra_ra = [37.95, 200.0, 123.0, 300.0, 80.0, 150.0, 250.0]
    return np.concatenate([ra, extra_ra]), np.concatenate([dec, np.clip(extra_dec, -89.9, 89.9)])


def utc_parts(unix: np.ndarray):
    """ERFA two-part quasi-JD UTC via dtf2d (correct on leap-second days)."""
    unix = np.atleast_1d(np.asarray(unix, dtype=float))
    days = np.floor(unix / 86400.0)
    u1, u2 = np.empty(unix.shape), np.empty(unix.shape)
    for d in np.unique(days):
        m = days == d
        date = datetime.fromtimestamp(d * 86400.0, UTC)
        secs = unix[m] - d * 86400.0
        h = np.floor(secs / 3600.0)
        mi = np.floor((secs - h * 3600.0) / 60.0)
        s = secs - h * 3600.0 - mi * 60.0
        u1[m], u2[m] = erfa.dtf2d("UTC", date.year, date.month, date.day, h.astype(int), mi.astype(int), s)
    return u1, u2


def star_observed(ra_deg, dec_deg, unix, site, dut1):
    lat, lon, elev = site
    u1, u2 = utc_parts(unix)
    aob, zob, hob, _, _, _ = erfa.atco13(np.radians(ra_deg), np.radians(dec_deg), 0.0, 0.0, 0.0, 0.0, u1, u2,
                                         dut1, np.radians(lon), np.radians(lat), elev, 0.0, 0.0, 0.0, 10.0,
                                         0.0, 0.55)
    return 90.0 - np.degrees(zob), np.degrees(hob) / 15.0


def bisect(fun, lo, hi):
    f_lo = fun(lo)
    while lo.size and np.max(hi - lo) > BISECT_TO_SECONDS:
        mid = 0.5 * (lo + hi)
        f_mid = fun(mid)
        same = (f_mid > 0) == (f_lo > 0)
        lo = np.where(same, mid, lo)
        f_lo = np.where(same, f_mid, f_lo)
        hi = np.where(same, hi, mid)
    return 0.5 * (lo + hi)


def scan(fun_grid, fun_flat, start, end):
    """All sign changes of fun on the grid, bisected: (column, unix, rising)."""
    grid = np.arange(start, end + 0.5 * GRID_SECONDS, GRID_SECONDS)
    values = fun_grid(grid)  # (M, C)
    above = values > 0
    i, c = np.nonzero(above[1:] != above[:-1])
    # Ignore the jump of a wrapped hour angle (from +12 to -12), which is not a root.
    real = np.abs(values[i + 1, c] - values[i, c]) < 6.0
    i, c = i[real], c[real]
    t = bisect(lambda x: fun_flat(x, c), grid[i], grid[i + 1])
    return c.tolist(), t.tolist(), above[i + 1, c].tolist()


def star_case(site, start, end, dut1):
    ra, dec = stars_for(site[0])
    out = {"ra_deg": ra.tolist(), "dec_deg": dec.tolist()}

    def grid_alt(h0):
        return (lambda g: star_observed(ra[None, :], dec[None, :], g[:, None], site, dut1)[0] - h0,
                lambda x, c: star_observed(ra[c], dec[c], x, site, dut1)[0] - h0)

    for h0 in THRESHOLDS_DEG:
        out[f"crossings_{h0:g}"] = scan(*grid_alt(h0), start, end)

    def ha_fun(shift):
        def wrap(h):
            return h + shift - 24.0 * np.floor((h + shift + 12.0) / 24.0)
        return (lambda g: wrap(star_observed(ra[None, :], dec[None, :], g[:, None], site, dut1)[1]),
                lambda x, c: wrap(star_observed(ra[c], dec[c], x, site, dut1)[1]))

    col, t, rising = scan(*ha_fun(0.0), start, end)
    out["culminations"] = [[c, x] for c, x, r in zip(col, t, rising, strict=True) if r]
    col, t, rising = scan(*ha_fun(12.0), start, end)
    out["lower_culminations"] = [[c, x] for c, x, r in zip(col, t, rising, strict=True) if r]
    return out


def body_case(site, start, end, dut1):
    import astropy.units as u
    from astropy.coordinates import AltAz, EarthLocation, get_body, get_sun
    from astropy.time import Time
    from astropy.utils import iers

    iers.conf.auto_download = False  # offline and reproducible: UT1 - UTC is set explicitly below
    iers.conf.auto_max_age = None

    location = EarthLocation.from_geodetic(site[1] * u.deg, site[0] * u.deg, site[2] * u.m)

    def times(unix):
        t = Time(unix, format="unix", scale="utc")
        t.delta_ut1_utc = np.full(np.shape(unix), dut1)
        return t

    def sun_alt(unix):
        t = times(unix)
        frame = AltAz(obstime=t, location=location, pressure=0 * u.hPa)
        return get_sun(t).transform_to(frame).alt.deg

    def moon_margin(unix):
        t = times(unix)
        frame = AltAz(obstime=t, location=location, pressure=0 * u.hPa)
        moon = get_body("moon", t, location).transform_to(frame)
        semi = np.degrees(np.arcsin(1737.4 / moon.distance.to(u.km).value))
        return moon.alt.deg + semi + 34.0 / 60.0

    thresholds = np.array([-0.8333, -6.0, -12.0, -18.0])
    sun = scan(lambda g: sun_alt(g)[:, None] - thresholds[None, :],
               lambda x, c: sun_alt(x) - thresholds[c], start, end)
    moon = scan(lambda g: moon_margin(g)[:, None], lambda x, c: moon_margin(x), start, end)
    return {"sun_thresholds_deg": thresholds.tolist(), "sun": sun, "moon": moon}


def main() -> int:
    import astropy

    result = {
        "header": {
            "builder": "tests/reference/builders/build_event_reference.py",
            "libraries": {"pyerfa": erfa.__version__, "astropy": astropy.__version__,
                          "numpy": np.__version__},
            "method": __doc__.strip().splitlines()[0],
            "grid_seconds": GRID_SECONDS, "bisected_to_seconds": BISECT_TO_SECONDS,
            "star_model": "erfa.atco13, phpa=0 (geometric), xp=yp=0, tc=10, rh=0, wl=0.55",
            "sites": SITES,
        },
        "cases": {},
    }
    for name, site_name, iso, hours, dut1 in CASES:
        site = SITES[site_name]
        start = datetime.fromisoformat(iso.replace("Z", "+00:00")).timestamp()
        end = start + hours * 3600.0
        case = {"site": site_name, "start_unix": start, "end_unix": end, "dut1_seconds": dut1}
        case.update(star_case(site, start, end, dut1))
        case.update(body_case(site, start, end, dut1))
        result["cases"][name] = case
        print(name, "done", file=sys.stderr)
    OUT.write_text(json.dumps(result, indent=1) + "\n")
    print(f"wrote {OUT}", file=sys.stderr)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
