"""`siderod seek`: catalogue look-up by name and filters, places in every frame, lines for a target file.

Frames are checked against pyerfa and astropy (test-only reference libraries), named beside each check.
"""

from __future__ import annotations

import json
import math

import erfa
import pytest

from siderod.cli.main import main
from siderod.cli.seek import ENTRY_JSON_FIELDS, JSON_FIELDS
from siderod.files.targets import parse_targets_toml

AT = "2026-12-14T22:00:00Z"
JD_UTC = (2461388.5, 22.0 / 24.0)
#: Apparent place of date vs ERFA atci13 - eo06a: light deflection (omitted by us; < 0.01" this far
#: from the Sun) plus IAU 2000B vs 2000A nutation (1 mas) and our low-precision Earth velocity.
APPARENT_TOL_ARCSEC = 0.1
#: Galactic and ecliptic vs astropy: the frames module's own 0.1" promise.
FRAME_TOL_ARCSEC = 0.1


def _seek_json(capsys, *args):
    code = main(["seek", *args, "--at", AT, "--json"])
    out, err = capsys.readouterr()
    return code, json.loads(out)


def test_one_name_prints_every_frame_and_pasteable_lines(capsys):
    code = main(["seek", "m 31", "--at", AT])
    out, _ = capsys.readouterr()
    assert code == 0
    assert out.startswith("M 31 — NGC 224, Andromeda Galaxy")
    for label in ("J2000 (ICRS)", "apparent, of date", "galactic", "ecliptic, J2000", "ecliptic, of date",
                  "from Corrie Hill Observatory"):
        assert label in out
    assert "CC-BY-SA-4.0" in out
    assert all(len(line) <= 80 for line in out.splitlines())
    lines = out[out.index("[[target]]"):].splitlines()[:4]
    (target,) = parse_targets_toml("\n".join(line.strip() for line in lines), "paste.toml")
    code, data = _seek_json(capsys, "M31")
    entry = data["entries"][0]
    # the pasted place is the catalogue's, rounded to 0.01 s of RA and 0.1" of Dec
    assert target.ra_deg == pytest.approx(entry["places"]["icrs"]["ra_hours"] * 15.0, abs=0.01 * 15 / 3600)
    assert target.dec_deg == pytest.approx(entry["places"]["icrs"]["dec_deg"], abs=0.1 / 3600)


@pytest.mark.slow  # imports astropy
def test_json_fields_and_frames_match_the_references(capsys):
    code, data = _seek_json(capsys, "NGC 7000")
    assert code == 0 and tuple(data) == JSON_FIELDS and data["count"] == 1
    entry = data["entries"][0]
    assert tuple(entry) == ENTRY_JSON_FIELDS
    assert entry["label"] == "NGC 7000" and entry["common_names"] == ["North America Nebula"]
    places = entry["places"]
    ra = math.radians(places["icrs"]["ra_hours"] * 15.0)
    dec = math.radians(places["icrs"]["dec_deg"])
    # Reference: ERFA atci13 (ICRS -> CIRS, geocentric) minus the equation of the origins eo06a gives
    # the equinox-based apparent RA of date. TT = UTC + 69.184 s.
    tt = (JD_UTC[0], JD_UTC[1] + 69.184 / 86400.0)
    ri, di, eo = erfa.atci13(ra, dec, 0.0, 0.0, 0.0, 0.0, *tt)
    eo = erfa.eo06a(*tt)
    apparent = places["apparent_of_date"]
    dra = ((apparent["ra_hours"] * 15.0 - math.degrees(ri - eo) + 180) % 360 - 180) * math.cos(di)
    assert abs(dra) * 3600 < APPARENT_TOL_ARCSEC
    assert abs(apparent["dec_deg"] - math.degrees(di)) * 3600 < APPARENT_TOL_ARCSEC
    # Reference: astropy's Galactic and BarycentricMeanEcliptic (equinox J2000: the mean ecliptic and
    # equinox of J2000, a direction-only rotation like ours) frames.
    from astropy import units as u
    from astropy.coordinates import BarycentricMeanEcliptic, SkyCoord

    coord = SkyCoord(ra=ra * u.rad, dec=dec * u.rad, frame="icrs")
    gal = coord.galactic
    assert abs(places["galactic"]["l_deg"] - gal.l.deg) * 3600 < FRAME_TOL_ARCSEC
    assert abs(places["galactic"]["b_deg"] - gal.b.deg) * 3600 < FRAME_TOL_ARCSEC
    ecl = coord.transform_to(BarycentricMeanEcliptic(equinox="J2000"))
    assert abs(places["ecliptic_j2000"]["lon_deg"] - ecl.lon.deg) * 3600 < FRAME_TOL_ARCSEC
    assert abs(places["ecliptic_j2000"]["lat_deg"] - ecl.lat.deg) * 3600 < FRAME_TOL_ARCSEC


def test_filters_list_brightest_first(capsys):
    code, data = _seek_json(capsys, "--kind", "galaxy", "--brighter", "9", "--within", "UMa")
    assert code == 0
    assert [e["label"] for e in data["entries"]] == ["M 81", "M 101", "M 82"]
    code = main(["seek", "--kind", "nebula", "--larger", "60", "--at", AT, "--limit", "5"])
    out, _ = capsys.readouterr()
    assert code == 0 and "5 entries (the first 5" in out
    assert all(len(line) <= 80 for line in out.splitlines())


def test_part_of_a_name_lists_the_matches(capsys):
    code, data = _seek_json(capsys, "pinwheel")
    assert code == 0 and {"M 33", "M 83", "M 99"} <= {e["label"] for e in data["entries"]}


def test_nothing_found_is_exit_1_with_a_message(capsys):
    code = main(["seek", "zzzq", "--at", AT])
    _, err = capsys.readouterr()
    assert code == 1 and "'zzzq' is not in the deep-sky catalogue" in err


def test_no_name_and_no_filter_is_a_usage_error(capsys):
    assert main(["seek"]) == 2


def test_building_the_command_line_imports_no_numpy():
    # seek and shortlist name the catalogue's kinds in their --help; that must not load numpy (or the
    # catalogue) for quick verbs such as `siderod status`. Reproduced failing before the fix.
    import subprocess
    import sys

    probe = ("import sys\nfrom siderod.cli.main import build_parser\nbuild_parser()\n"
             "print(sorted({'numpy', 'sqlite3'} & set(sys.modules)))\n")
    result = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, timeout=60,
                            check=False)
    assert result.returncode == 0, result.stderr
    assert result.stdout.strip() == "[]"
