"""siderod.cli.ics: the streaming calendar writer gives the same bytes as the icalendar library."""

from __future__ import annotations

import io
from datetime import UTC, datetime

import icalendar
import pytest

from siderod.cli import ics
from siderod.files.config import load_config
from siderod.plan.agenda import compute_agenda

START_UTC = datetime(2026, 12, 14, 12, tzinfo=UTC)  # the demo night

# Names that exercise escaping (, ; \), non-ASCII text and lines long enough to fold more than once.
AWKWARD_NAMES = ["Mira (ο Cet)", "A, B; C\\D", "Demo field " + "x" * 70, "Pair\\" + "y" * 55]


def _config(tmp_path, site="Corrie Hill; test, site", names=AWKWARD_NAMES):
    targets = "".join(f'[[target]]\nname = {name!r}\nra = "{2 + 3 * i}h"\ndec = {20 + 10 * i}\n\n'
                      .replace("'", '"').replace('"A, B; C\\D"', "'A, B; C\\D'").replace(
                          f'"Pair\\{"y" * 55}"', f"'Pair\\{'y' * 55}'")
                      for i, name in enumerate(names))
    (tmp_path / "targets.toml").write_text(targets, encoding="utf-8")
    (tmp_path / "config.toml").write_text(
        f'[site]\nname = "{site}"\nlatitude = "+56 12 30"\nlongitude = "-3 41 15"\n'
        'timezone = "Europe/London"\n[targets]\nfiles = ["targets.toml"]\n'
        '[mount]\nkind = "german-equatorial"\nflip_after = 10\nlimit_after = 25\n'
        '[events]\naltitudes = [30]\nhour_angles = ["-3h"]\n', encoding="utf-8")
    return load_config(str(tmp_path / "config.toml"), {})


@pytest.mark.slow
@pytest.mark.parametrize("source", ["demo", "awkward", "non-ASCII site", "ASCII with a line break"])
def test_streaming_writer_matches_the_library_byte_for_byte(source, tmp_path, monkeypatch):
    # Reference: icalendar's own Calendar/Event components, escaping and folding (calendar_for).
    # The non-ASCII site's LOCATION line is long enough to fold: a constant line the library
    # writes once, beside rows whose own lines are folded from the columns.
    if source == "demo":
        config = load_config(None, {})
    elif source == "awkward":
        config = _config(tmp_path)
    elif source == "non-ASCII site":
        config = _config(tmp_path, site="Observatoire du Pic; tést, " + "é" * 40)
    else:  # every name plain ASCII but one holding a line break, which must still be escaped
        config = _config(tmp_path, names=["Plain", "Line\nbreak"])
    if source in ("awkward", "non-ASCII site"):
        assert {t.name for t in config.targets} == set(AWKWARD_NAMES)
    agenda = compute_agenda(config, START_UTC, 48)
    reference = ics.calendar_for(agenda, config, stamp_utc=START_UTC)
    monkeypatch.setattr(ics, "LIBRARY_MAX_EVENTS", 0)  # force the streaming writer
    monkeypatch.setattr(ics, "_BLOCK", 50)  # and several blocks
    out = io.BytesIO()
    ics.write_ics(agenda, config, out, stamp_utc=START_UTC)
    assert out.getvalue() == reference
    calendar = icalendar.Calendar.from_ical(out.getvalue())
    assert len([c for c in calendar.walk() if c.name == "VEVENT"]) == len(agenda.table)
    assert all(len(line) <= 75 for line in out.getvalue().split(b"\r\n"))
