"""The board's mount panel: what the linked mount reports, and the target in use. Pure.

Shown only when the service has a mount link configured or a target in use. Three lines:

    mount  linked  RA 05h35m17s  Dec -05°23'  alt 31.2°  az 178.4°  HA -0h12m  pier west  tracking
           flip in 0h22m  limit in 0h37m  on NGC 1976 (0.08°)  in use: NGC 1976 (link)
           advisory: the mount's own limits stay on; siderod never moves the mount

The layout is our own; the words are the trade's (hour angle, pier side, counterweight).
"""

from __future__ import annotations

from rich.text import Text

from siderod.common.model import MountView

__all__ = ["mount_panel_lines", "format_pointing_ra", "format_pointing_dec"]

_STATE_WORDS = {
    "linked": ("linked", "siderod.ok"),
    "connecting": ("connecting", "siderod.warn"),
    "no-device": ("no telescope", "siderod.warn"),
    "lost": ("LINK LOST", "siderod.danger"),
    "off": ("no link", "siderod.dim"),
}


def mount_panel_lines(mount: MountView | None, width: int) -> list[Text]:
    """The panel's lines (empty when there is no link and no target in use)."""
    if mount is None or (mount.link_state == "off" and mount.in_use is None):
        return []
    word, style = _STATE_WORDS.get(mount.link_state, (mount.link_state, "siderod.warn"))
    first = Text(no_wrap=True, overflow="ellipsis")
    first.append("mount  ", "siderod.label")
    first.append(word, style)
    if mount.ra_hours is not None and mount.dec_deg is not None:
        first.append(f"  RA {format_pointing_ra(mount.ra_hours)}  Dec {format_pointing_dec(mount.dec_deg)}",
                     "siderod.value")
        if mount.alt_deg is not None and mount.az_deg is not None:
            first.append(f"  alt {mount.alt_deg:.1f}°  az {mount.az_deg:.1f}°", "siderod.value")
        if mount.ha_hours is not None:
            first.append(f"  HA {_format_ha(mount.ha_hours)}", "siderod.value")
        side = {"west": "pier west", "east": "pier east"}.get(mount.pier_side, "pier side ?")
        first.append(f"  {side}", "siderod.value")
        if mount.counterweight_up:
            first.append("  COUNTERWEIGHT UP", "siderod.danger")
        if mount.slewing:
            first.append("  slewing", "siderod.warn")
        elif mount.parked:
            first.append("  parked", "siderod.dim")
        elif mount.tracking is False:
            first.append("  NOT TRACKING", "siderod.danger")
        elif mount.tracking:
            first.append("  tracking", "siderod.ok")
    elif mount.link_detail and mount.link_state != "off":
        first.append(f"  {mount.link_detail}", "siderod.dim")
    lines = [first]

    second = Text(no_wrap=True, overflow="ellipsis")
    second.append("       ", "")
    if mount.ra_hours is not None:
        second.append("flip " + _format_in(mount.seconds_to_flip), "siderod.countdown")
        second.append("  limit " + _format_in(mount.seconds_to_limit), "siderod.countdown")
        if mount.nearest_target is not None and mount.nearest_distance_deg is not None:
            on = f"  on {mount.nearest_target} ({mount.nearest_distance_deg:.2f}°)"
            second.append(on, "siderod.target")
        else:
            second.append("  on no listed target", "siderod.dim")
    if mount.in_use is not None:
        sources = {"link": "from the mount", "command": "set by you", "board": "set by you"}
        how = sources.get(mount.in_use_source, mount.in_use_source)
        second.append(f"  in use: {mount.in_use} ({how})", "siderod.value")
    else:
        second.append("  in use: none (U picks one)", "siderod.dim")
    lines.append(second)
    if mount.link_state != "off":
        third = Text(no_wrap=True, overflow="ellipsis")
        third.append("       ", "")
        if mount.ra_hours is not None and mount.pier_side == "unknown":
            third.append("driver gives no pier side: flip times from the hour angle alone; ", "siderod.warn")
        third.append("advisory: keep the mount's own limits and the driver's safety settings on; "
                     "siderod never moves the mount", "siderod.dim")
        lines.append(third)
    for line in lines:
        if line.cell_len > width:
            line.truncate(width, overflow="ellipsis")
    return lines


def format_pointing_ra(ra_hours: float) -> str:
    """``05h35m17s`` (hours of RA, rounded to the second)."""
    total = round((ra_hours % 24.0) * 3600) % 86400
    h, rest = divmod(total, 3600)
    m, s = divmod(rest, 60)
    return f"{h:02d}h{m:02d}m{s:02d}s"


def format_pointing_dec(dec_deg: float) -> str:
    """``-05°23'`` (degrees and arcminutes)."""
    sign = "-" if dec_deg < 0 else "+"
    total = round(abs(dec_deg) * 60)
    d, m = divmod(total, 60)
    return f"{sign}{d:02d}°{m:02d}'"


def _format_ha(hours: float) -> str:
    sign = "-" if hours < 0 else "+"
    total = round(abs(hours) * 60)
    h, m = divmod(total, 60)
    return f"{sign}{h}h{m:02d}m"


def _format_in(seconds: float | None) -> str:
    if seconds is None:
        return "-"
    if seconds <= 0:
        return "NOW"
    total = round(seconds / 60)
    h, m = divmod(total, 60)
    return f"in {h}h{m:02d}m"
