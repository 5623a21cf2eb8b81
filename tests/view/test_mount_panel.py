"""The board's mount panel and the status text of a linked mount (pure: records in, text out)."""

from __future__ import annotations

from dataclasses import replace

from siderod.common.model import MountView
from siderod.view.mountpanel import format_pointing_dec, format_pointing_ra, mount_panel_lines

LINKED = MountView(
    link_state="linked", link_detail="Telescope Simulator on 127.0.0.1:7624", device="Telescope Simulator",
    ra_hours=5.588, dec_deg=-5.39, ha_hours=-0.2, alt_deg=31.2, az_deg=171.4, pier_side="west",
    counterweight_up=False, tracking=True, parked=False, seconds_to_flip=1320.0, seconds_to_limit=2220.0,
    nearest_target="Demo Nebula B", nearest_distance_deg=0.08, in_use="Demo Nebula B", in_use_source="link",
)


def _text(lines) -> str:
    return "\n".join(line.plain for line in lines)


def test_no_link_and_nothing_in_use_shows_no_panel():
    assert mount_panel_lines(MountView(), 100) == []
    assert mount_panel_lines(None, 100) == []


def test_linked_panel_shows_pointing_side_tracking_times_target_and_the_caution():
    text = _text(mount_panel_lines(LINKED, 200))
    for part in ("linked", "RA 05h35m17s", "Dec -05°23'", "alt 31.2°", "az 171.4°", "HA -0h12m",
                 "pier west", "tracking", "flip in 0h22m", "limit in 0h37m", "on Demo Nebula B (0.08°)",
                 "in use: Demo Nebula B (from the mount)", "siderod never moves the mount"):
        assert part in text, part
    assert "COUNTERWEIGHT UP" not in text


def test_unknown_pier_side_is_said_and_a_lost_link_stands_out():
    text = _text(mount_panel_lines(replace(LINKED, pier_side="unknown", counterweight_up=None), 300))
    assert "pier side ?" in text and "hour angle alone" in text
    lost = _text(mount_panel_lines(MountView(link_state="lost", link_detail="server went away"), 200))
    assert "LINK LOST" in lost and "server went away" in lost


def test_panel_lines_fit_the_width():
    assert all(line.cell_len <= 60 for line in mount_panel_lines(LINKED, 60))


def test_pointing_formats():
    assert format_pointing_ra(23.99999) == "00h00m00s"
    assert format_pointing_dec(-0.5) == "-00°30'"


def test_status_text_carries_the_mount():
    from siderod.cli.control import _mount_status_lines

    text = "\n".join(_mount_status_lines(LINKED))
    for part in ("link linked", "RA 05h35m17s", "alt 31.2°", "pier side west", "tracking",
                 "flip in 22m 00s", "limit in 37m 00s", "on Demo Nebula B", "target in use: Demo Nebula B",
                 "never moves the mount"):
        assert part in text, part
    assert _mount_status_lines(MountView()) == []
    only_in_use = MountView(in_use="X", in_use_source="command")
    assert _mount_status_lines(only_in_use) == ["target in use: X (set by command)"]
