"""Sources drifting through a beam fixed in hour angle and declination (drift scans, transits).

A dish, horn or transit telescope that does not track points at a fixed hour angle ``H_p`` and
declination ``d_p`` (topocentric, of date). The sky turns through it: a source *enters* the beam,
*centres* (passes closest to the beam's axis) and *leaves*. Arrays in, arrays out, as in
:mod:`siderod.astro.events`, whose fitted :class:`~siderod.astro.events.TargetTrack` gives each
source's apparent place of date.

Method (closed form first, then refinement, as for altitude crossings):

* the beam is an ellipse in the plane tangent to the sky at the beam's axis (gnomonic
  projection): ``(xi / a)^2 + (eta / b)^2 <= 1`` with ``xi`` the offset towards the west (along
  the hour angle), ``eta`` towards the north, ``a`` and ``b`` the half widths (a circular beam has
  ``a = b``, half the full width at half power);
* a source of declination d passes closest to the axis where its hour angle equals ``H_p`` (the
  angular distance ``cos s = sin d sin d_p + cos d cos d_p cos(H - H_p)`` is largest there), at
  the offset ``d - d_p``: the *centre* event is an hour-angle mark;
* it enters and leaves where the ellipse is crossed, at ``H_p -/+ dH``: for a circle ``cos dH =
  (cos r - sin d sin d_p) / (cos d cos d_p)``; for a fan beam ``dH`` comes from a scan of
  ``dH`` in [0, pi] (every crossing, not only the first) refined by bisection;
* each time is placed with the hour-angle machinery of the events module and refined twice with
  the source's own declination at that instant; positions include diurnal aberration (the
  pointing is taken as a seen, topocentric direction of date), but no refraction: the pointing's
  hour angle and declination are those of the instrument's axis, whatever the air does.

Sources whose declination stays outside the beam's declination span are removed at once.
"""

from __future__ import annotations

import math

import numpy as np

from siderod.astro.constants import DEG_RAD, HOUR_RAD
from siderod.astro.events import (
    _DIURNAL_ABERRATION_RAD,
    SIDEREAL_RATE_HOURS_PER_SECOND,
    TargetTrack,
    _mark_candidates,
    _wrap12,
    _wrap24,
    in_window,
)

__all__ = [
    "BEAM_CENTRE",
    "BEAM_ENTER",
    "BEAM_LEAVE",
    "find_beam_events",
]

#: Event codes in the ``kind`` array of :func:`find_beam_events`.
BEAM_ENTER, BEAM_CENTRE, BEAM_LEAVE = 0, 1, 2
_FAN_SCAN_POINTS = 720  # dH samples over [0, pi] for a fan beam: every 0.25 deg of hour angle
_POLE_COS = 1e-9  # a beam this close to a celestial pole is met at one distance all day: no events


def find_beam_events(track: TargetTrack, last_hours_at, latitude_deg: float, beam_ha_hours: float,
                     beam_dec_deg: float, half_width_deg: float, start_unix: float, end_unix: float, *,
                     half_width_dec_deg: float | None = None, index=None):
    """Every instant in the window at which sources enter, centre in and leave a fixed beam.

    Args:
        track: apparent places of the N sources across the window (stars; see the module).
        last_hours_at: callable ``unix -> LAST hours`` at the site.
        latitude_deg: site latitude, degrees (for diurnal aberration).
        beam_ha_hours: the beam axis's hour angle, hours, positive west.
        beam_dec_deg: the beam axis's declination, degrees.
        half_width_deg: half the beam's width east-west (along the hour angle), degrees; with
            ``half_width_dec_deg`` None the beam is circular with this radius.
        start_unix, end_unix: the window, POSIX seconds, half-open (1 ms edge rule of the events
            module).
        half_width_dec_deg: half the beam's width north-south, degrees, for a fan beam.
        index (array_like of int, optional): sources to search (default all).

    Returns:
        tuple: ``(index, unix_seconds, kind, offset_dec_deg)`` flat arrays sorted by time; ``kind``
        is :data:`BEAM_ENTER`, :data:`BEAM_CENTRE` or :data:`BEAM_LEAVE`; ``offset_dec_deg`` is the
        source's declination minus the axis's at that instant (at the centre: its closest approach,
        north positive). A source whose path never meets the beam gives nothing.
    """
    idx = np.arange(len(track)) if index is None else np.asarray(index, dtype=np.intp)
    a = float(half_width_deg) * DEG_RAD
    b = a if half_width_dec_deg is None else float(half_width_dec_deg) * DEG_RAD
    if not (a > 0.0 and b > 0.0):
        raise ValueError(f"beam half widths must be positive degrees; got {half_width_deg!r} and "
                         f"{half_width_dec_deg!r}")
    dp = float(beam_dec_deg) * DEG_RAD
    if math.cos(dp) < _POLE_COS or idx.size == 0:
        return _empty()
    k = _DIURNAL_ABERRATION_RAD * math.cos(latitude_deg * DEG_RAD)
    if track.parallax_coeffs is None:
        _, dec_mid = track.radec_at(track.mid_unix, idx)
    else:
        # A moving body (the Moon: parallax ~1 deg, 5 deg a day in declination): its topocentric
        # declination seen at its first passage of the axis's hour angle in the window sets the
        # first guesses; the refinement below follows it from there. (A second passage in the
        # same piece starts from that guess too.)
        t0, t1 = float(start_unix), float(end_unix)
        h0, _ = track.hadec_at(np.full(idx.shape, t0), last_hours_at, idx)
        rate = np.maximum(SIDEREAL_RATE_HOURS_PER_SECOND - track.ra_rate_at(t0, idx),
                          0.1 * SIDEREAL_RATE_HOURS_PER_SECOND)
        passage = np.clip(t0 + _wrap24(float(beam_ha_hours) - h0) / rate, t0, t1)
        _, dec_mid = _seen_hadec(track, last_hours_at, passage, idx, k)
    # The declination test: only sources whose path reaches the beam's declination span (the
    # ellipse's north-south extent, plus the arcs a wide beam bulges by) can meet it.
    reach = max(b, a) if half_width_dec_deg is not None else a
    near = np.abs(dec_mid * DEG_RAD - dp) < reach + 1e-6
    idx, dec_mid = idx[near], dec_mid[near]
    delta = _half_crossings(dec_mid * DEG_RAD, dp, a, b)  # (M, C) dH of each crossing, radians or nan
    inside = _inside(dec_mid * DEG_RAD, dp, a, b)  # passes the axis's hour angle inside the beam
    parts_idx, parts_ha, parts_kind, parts_slot = [], [], [], []
    hp = float(beam_ha_hours)
    # Edges: slot 2c is the c-th crossing before the axis's hour angle, 2c + 1 its mirror after.
    for c in range(delta.shape[1]):
        sel = np.flatnonzero(np.isfinite(delta[:, c]))
        for side, sign in ((0, -1.0), (1, 1.0)):
            parts_idx.append(idx[sel])
            parts_ha.append(hp + sign * delta[sel, c] / HOUR_RAD)
            parts_kind.append(np.full(sel.size, BEAM_ENTER))  # settled after refinement
            parts_slot.append(np.full(sel.size, 2 * c + side))
    # The centre: for every source that meets the beam (a curved path near a pole may meet a fan
    # beam away from the axis's hour angle; its closest approach is still there).
    sel = np.flatnonzero(inside | np.isfinite(delta).any(axis=1))
    parts_idx.append(idx[sel])
    parts_ha.append(np.full(sel.size, hp))
    parts_kind.append(np.full(sel.size, BEAM_CENTRE))
    parts_slot.append(np.full(sel.size, -1))
    all_idx = np.concatenate(parts_idx)
    all_ha = np.concatenate(parts_ha)
    all_kind = np.concatenate(parts_kind)
    all_slot = np.concatenate(parts_slot)
    mark = np.arange(all_idx.size)
    cand_idx, cand_t, cand_mark = _mark_candidates(track, last_hours_at, all_idx, all_ha, mark,
                                                   start_unix, end_unix)
    slot = all_slot[cand_mark]
    for _ in range(2):
        h_seen, d_seen = _seen_hadec(track, last_hours_at, cand_t, cand_idx, k)
        target = np.full(cand_t.shape, hp)
        edge = slot >= 0
        if edge.any():
            column = slot[edge] // 2
            sign = np.where(slot[edge] % 2 == 0, -1.0, 1.0)
            d_now = _half_crossings(d_seen[edge] * DEG_RAD, dp, a, b, columns=column)
            target[edge] = hp + sign * d_now / HOUR_RAD
        cand_t = cand_t + _wrap12(target - h_seen) * (1.0 / SIDEREAL_RATE_HOURS_PER_SECOND)
    _, d_seen = _seen_hadec(track, last_hours_at, cand_t, cand_idx, k)
    kind = all_kind[cand_mark]
    # An edge before the axis's hour angle is an entry where the beam's function falls through 1
    # as the hour angle grows, i.e. where it rises with |dH|; the mirrored edge is the leaving.
    edge = slot >= 0
    d_edge = d_seen[edge] * DEG_RAD
    dh_edge = _half_crossings(d_edge, dp, a, b, columns=slot[edge] // 2)
    rising_with_dh = _rises_with_dh(d_edge, dp, a, b, dh_edge)
    before = slot[edge] % 2 == 0
    kind[edge] = np.where(before == rising_with_dh, BEAM_ENTER, BEAM_LEAVE)
    keep = in_window(cand_t, start_unix, end_unix) & np.isfinite(cand_t)
    out_idx, out_t, out_kind = cand_idx[keep], cand_t[keep], kind[keep]
    offset = d_seen[keep] - float(beam_dec_deg)
    order = np.lexsort((out_kind, out_t))
    return out_idx[order], out_t[order], out_kind[order], offset[order]


# ---------------------------------------------------------------------------------------------
# helpers


def _beam_function(d, dp, dh, a, b):
    """(xi/a)^2 + (eta/b)^2 in the tangent plane at the axis (inf behind it), radians in."""
    sd, cd = np.sin(d), np.cos(d)
    sp, cp = math.sin(dp), math.cos(dp)
    cosc = sd * sp + cd * cp * np.cos(dh)
    with np.errstate(divide="ignore", invalid="ignore"):
        xi = cd * np.sin(dh) / cosc
        eta = (sd * cp - cd * sp * np.cos(dh)) / cosc
        value = (xi / a) ** 2 + (eta / b) ** 2
    return np.where(cosc > 0.0, value, np.inf)


def _inside(d, dp, a, b):
    return _beam_function(d, dp, 0.0, a, b) < 1.0


def _half_crossings(d, dp, a, b, columns=None):
    """dH in (0, pi] at which a path of declination d crosses the beam's edge, radians.

    Without ``columns``: an (M, C) array of every crossing, in increasing dH, nan-padded. With
    ``columns`` (one per row): that crossing only, shape (M,), nan where it no longer exists.
    """
    d = np.asarray(d, dtype=float)
    if a == b:  # a circle: closed form, one crossing
        with np.errstate(divide="ignore", invalid="ignore"):
            c = (math.cos(a) - np.sin(d) * math.sin(dp)) / (np.cos(d) * math.cos(dp))
        dh = np.where(np.abs(c) <= 1.0, np.arccos(np.clip(c, -1.0, 1.0)), np.nan)
        return dh[:, None] if columns is None else np.where(np.asarray(columns) == 0, dh, np.nan)
    grid = np.linspace(0.0, math.pi, _FAN_SCAN_POINTS + 1)
    values = _beam_function(d[:, None], dp, grid[None, :], a, b) - 1.0
    values = np.where(np.isfinite(values), values, 1e300)
    change = (values[:, 1:] > 0.0) != (values[:, :-1] > 0.0)
    count = change.sum(axis=1)
    width = max(int(count.max()) if count.size else 0, 1)
    out = np.full((d.size, width), np.nan)
    rows, cols = np.nonzero(change)
    rank = np.arange(rows.size) - np.searchsorted(rows, rows)
    lo, hi = grid[cols].copy(), grid[cols + 1].copy()
    f_lo = values[rows, cols]
    for _ in range(48):  # bisection to ~1e-14 rad
        mid = 0.5 * (lo + hi)
        f_mid = _beam_function(d[rows], dp, mid, a, b) - 1.0
        same = (f_mid > 0.0) == (f_lo > 0.0)
        lo = np.where(same, mid, lo)
        f_lo = np.where(same, f_mid, f_lo)
        hi = np.where(same, hi, mid)
    out[rows, rank] = 0.5 * (lo + hi)
    if columns is None:
        return out
    columns = np.asarray(columns)
    picked = np.full(d.size, np.nan)
    ok = columns < width
    picked[ok] = out[np.flatnonzero(ok), columns[ok]]
    return picked


def _rises_with_dh(d, dp, a, b, dh):
    """True where the beam function grows with |dH| at the crossing (the path is leaving outwards)."""
    step = 1e-7
    return _beam_function(d, dp, dh + step, a, b) > _beam_function(d, dp, dh - step, a, b)


def _seen_hadec(track, last_hours_at, t, idx, k):
    """Hour angle (hours) and declination (deg) as seen: diurnal aberration shifts the direction
    by k towards the east point, ``(x, y - k, z)`` normalised in the hour-angle frame."""
    ha, dec = track.hadec_at(t, last_hours_at, idx)
    h, d = ha * HOUR_RAD, dec * DEG_RAD
    x, y, z = np.cos(d) * np.cos(h), np.cos(d) * np.sin(h) - k, np.sin(d)
    return np.arctan2(y, x) / HOUR_RAD, np.arctan2(z, np.hypot(x, y)) / DEG_RAD


def _empty():
    return np.zeros(0, dtype=np.intp), np.zeros(0), np.zeros(0, dtype=np.intp), np.zeros(0)
