"""Parse and format sexagesimal and decimal angles, and wrap angles into standard ranges.

Everything here is plain text handling and floor-based wrapping; no astronomy model is involved.
"""

import math
import re
from typing import Literal

import numpy as np

__all__ = [
    "ANGLE_KINDS",
    "AngleParseError",
    "format_clock_hms",
    "format_dms",
    "format_hms",
    "parse_angle_deg",
    "wrap_deg_180",
    "wrap_deg_360",
    "wrap_hours_12",
    "wrap_hours_24",
    "wrap_rad_2pi",
]

AngleKind = Literal["ra", "dec", "lat", "lon", "angle", "hour_angle"]
#: The ``kind`` values that :func:`parse_angle_deg` accepts.
ANGLE_KINDS: tuple[str, ...] = ("ra", "dec", "lat", "lon", "angle", "hour_angle")


class AngleParseError(ValueError):
    """An angle given as text could not be read.

    Attributes:
        text: the text as given (or ``repr`` of a non-text value).
        kind: the kind of angle that was expected (one of :data:`ANGLE_KINDS`).
        reason: what was wrong, in a few words.
    """

    def __init__(self, text: str, kind: str, reason: str) -> None:
        self.text = text
        self.kind = kind
        self.reason = reason
        super().__init__(f"cannot read {text!r} as {_KIND_NAMES.get(kind, kind)}: {reason}; "
                         f"accepted forms: {_ACCEPTED.get(kind, _ACCEPTED['angle'])}")


def parse_angle_deg(text: str | float, *, kind: AngleKind) -> float:
    """Read an angle written as text (or a plain number) and return it in degrees.

    How units are chosen:

    * ``"05h35m17.3s"``, ``"5h35m"``, ``"5.5h"``: hours (``kind`` "ra" or "hour_angle" only).
    * ``"-05°23'28\\""``, ``"-5d23m28s"``, ``"83.8°"``, ``"83.8d"``: degrees, for every kind.
    * ``"05:35:17.3"``, ``"5 35 17.3"``, ``"-5:23"`` (sexagesimal without a unit): hours for
      "ra" and "hour_angle", degrees for the others.
    * a bare decimal (``"83.822"`` or a number): degrees, except for "hour_angle" where it is hours.
      For "ra" a bare number in (0, 24) is refused as ambiguous (hours or degrees?): write
      ``"5.58h"`` or ``"5.58d"``.
    * "lat" and "dec" may end in N or S, "lon" in E or W (W and S are negative). Longitude is
      east positive. A "+" sign may go with N or E; any other sign with a letter is refused
      (``"-32 22 40 N"`` disagrees with itself, ``"-32 S"`` could be a double negative).

    The sign applies to the whole value (``"-0 30"`` is -0.5). Minutes and seconds must be below 60;
    "dec"/"lat" must lie in [-90, 90], "ra" in [0, 360) degrees (24 h), "lon" in [-180, 360).

    Args:
        text: the angle, as text or as an int/float.
        kind: one of "ra", "dec", "lat", "lon", "angle", "hour_angle".

    Returns:
        The angle in degrees (float).

    Raises:
        AngleParseError: the text is not an accepted form or is out of range; the message quotes
            the text and lists the accepted forms.

    >>> parse_angle_deg("05h35m17.3s", kind="ra")
    83.82208333333332
    >>> parse_angle_deg("-05:23:28", kind="dec")
    -5.391111111111111
    >>> parse_angle_deg("1.5", kind="hour_angle")
    22.5
    """
    if kind not in ANGLE_KINDS:
        raise ValueError(f"kind must be one of {', '.join(ANGLE_KINDS)}; got {kind!r}")
    if isinstance(text, bool) or not isinstance(text, (str, int, float, np.integer, np.floating)):
        raise AngleParseError(repr(text), kind, f"expected text or a number, got {type(text).__name__}")
    if isinstance(text, str):
        value_deg = _parse_text_deg(text, kind)
        shown = text
    else:
        try:
            value = float(text)
        except OverflowError:  # an integer too large for a float, as TOML allows
            value = math.inf
        if not math.isfinite(value):
            raise AngleParseError(repr(text)[:40], kind, "the number is not finite")
        if kind == "ra":
            _refuse_ambiguous_ra(repr(text), value)
        value_deg = value * 15.0 if kind == "hour_angle" else value
        shown = repr(text)
    _check_range(value_deg, shown, kind)
    return value_deg


def format_hms(hours: float, *, decimals: int = 1, sign: bool = False) -> str:
    """Format an hour value as ``05h35m17.3s``, rounding the seconds to ``decimals`` places.

    Args:
        hours: hours (scalar). A value in [0, 24) that rounds up to 24 h is shown as 00h (a clock
            wraps); other values are never wrapped. Negative values get a "-" sign.
        decimals: digits after the decimal point of the seconds (0 drops the point).
        sign: always show a sign ("+" or "-"), as for hour angles.

    Returns:
        The text, e.g. ``"05h35m17.3s"`` or ``"-01h02m03s"``.

    >>> format_hms(5.588138888888889)
    '05h35m17.3s'
    >>> format_hms(-1.0341666666666667, decimals=0, sign=True)
    '-01h02m03s'
    """
    value = float(hours)
    negative = value < 0
    wrap = 86400 * 10**decimals if (not sign and 0.0 <= value < 24.0) else None
    parts = _split_sexagesimal(abs(value), decimals, wrap)
    return _sign_text(negative, sign) + f"{parts[0]:02d}h{parts[1]:02d}m{parts[2]}s"


def format_clock_hms(hours: float) -> str:
    """Format an hour value like a clock face, ``05:35:17``, wrapped to [0, 24).

    Seconds are truncated, not rounded: a clock shows 05:35:17 until 05:35:18 has begun
    (a tolerance of 1e-7 s absorbs float noise such as 17.99999999 s).

    >>> format_clock_hms(5.588138888888889)
    '05:35:17'
    >>> format_clock_hms(-0.5)
    '23:30:00'
    """
    total_s = math.floor(float(wrap_hours_24(hours)) * 3600.0 + 1e-7) % 86400
    return f"{total_s // 3600:02d}:{total_s // 60 % 60:02d}:{total_s % 60:02d}"


def format_dms(deg: float, *, decimals: int = 0, sign: bool = False) -> str:
    """Format degrees as ``-05°23'28"``, rounding the arcseconds to ``decimals`` places.

    Args:
        deg: degrees (scalar).
        decimals: digits after the decimal point of the arcseconds.
        sign: always show a sign ("+" or "-"), as for declinations.

    >>> format_dms(-5.391111111111111)
    '-05°23\\'28"'
    >>> format_dms(56.208333333333336, sign=True)
    '+56°12\\'30"'
    """
    value = float(deg)
    parts = _split_sexagesimal(abs(value), decimals, None)
    return _sign_text(value < 0, sign) + f"{parts[0]:02d}°{parts[1]:02d}'{parts[2]}\""


def wrap_hours_24(hours):
    """Wrap hours into [0, 24). Any shape; floor-based (faster than ``np.mod``)."""
    return _wrap(hours, 24.0, 0.0)


def wrap_hours_12(hours):
    """Wrap hours into [-12, 12). Any shape."""
    return _wrap(hours, 24.0, -12.0)


def wrap_deg_360(deg):
    """Wrap degrees into [0, 360). Any shape."""
    return _wrap(deg, 360.0, 0.0)


def wrap_deg_180(deg):
    """Wrap degrees into [-180, 180). Any shape."""
    return _wrap(deg, 360.0, -180.0)


def wrap_rad_2pi(rad):
    """Wrap radians into [0, 2*pi). Any shape."""
    return _wrap(rad, 2.0 * math.pi, 0.0)


# ---------------------------------------------------------------------------------------------
# helpers


def _wrap(x, period: float, low: float):
    """Return x reduced into [low, low + period) using floor; numpy scalar for scalar input.

    ``x - p*floor(x/p)`` can round to exactly ``low + p`` (tiny negative x) or just below ``low``
    (x just below a multiple of p); both are folded back so the half-open range always holds.
    """
    a = np.asarray(x, dtype=np.float64)
    r = a - period * np.floor((a - low) / period)
    high = low + period
    if r.ndim == 0:
        value = float(r)
        if value >= high:
            value -= period
        if value < low:
            value = low
        return np.float64(value)
    r[r >= high] -= period
    r[r < low] = low
    return r


_KIND_NAMES = {
    "ra": "a right ascension",
    "dec": "a declination",
    "lat": "a latitude",
    "lon": "a longitude (east positive)",
    "angle": "an angle",
    "hour_angle": "an hour angle",
}

_ACCEPTED = {
    "ra": '"05h35m17.3s", "5.5h", "05:35:17.3" or "5 35 17.3" (hours), "83.822", "5.58d" or "83°49\'19\\"" '
          '(degrees; a bare number below 24 is refused as ambiguous)',
    "hour_angle": '"-01h30m", "-1:30:00", "-1.5" (hours), "-22.5°" (degrees)',
    "dec": '"-05°23\'28\\"", "-5d23m28s", "-5:23:28", "-5 23 28", "5 23 28 S", "-5.391" (degrees)',
    "lat": '"+56°12\'30\\"", "56:12:30", "56 12 30 N", "56.2083" (degrees, north positive)',
    "lon": '"-3°41\'15\\"", "-3:41:15", "3 41 15 W", "-3.6875" (degrees, east positive)',
    "angle": '"12°30\'", "12:30:00", "12 30", "12.5" (degrees)',
}

_NUMBER = r"(?:\d+(?:\.\d*)?|\.\d+)"
_HMS_RE = re.compile(
    rf"^(?P<h>{_NUMBER})\s*h(?:\s*(?P<m>{_NUMBER})\s*m(?:\s*(?P<s>{_NUMBER})\s*s?)?)?$", re.IGNORECASE
)
_DMS_RE = re.compile(
    rf"^(?P<d>{_NUMBER})\s*[d°º](?:\s*(?P<m>{_NUMBER})\s*['′m](?:\s*(?P<s>{_NUMBER})\s*(?:\"|″|''|s)?)?)?$",
    re.IGNORECASE,
)
_COLON_RE = re.compile(rf"^(?P<a>{_NUMBER})(?::(?P<b>{_NUMBER}))(?::(?P<c>{_NUMBER}))?$")
_SPACE_RE = re.compile(rf"^(?P<a>{_NUMBER})\s+(?P<b>{_NUMBER})(?:\s+(?P<c>{_NUMBER}))?$")
_DECIMAL_RE = re.compile(rf"^{_NUMBER}$")


def _parse_text_deg(text: str, kind: str) -> float:
    body = text.strip().replace("\u2212", "-")  # accept the typographic minus sign
    if not body:
        raise AngleParseError(text, kind, "the text is empty")
    negative = False
    compass = body[-1].upper()
    letters = {"lat": "NS", "dec": "NS", "lon": "EW"}.get(kind, "")
    if compass == "S" and body[-2:-1].isdigit() and _DMS_RE.match(body.lstrip("+-").lstrip()):
        letters = ""  # the seconds of "56d12m30s", not south
    if letters and compass in letters:
        body = body[:-1].rstrip()
        negative = compass in "SW"
        if not body.lstrip("+-").strip():
            raise AngleParseError(text, kind,
                                  f'no angle before the compass letter (write it as "12 30 {compass}")')
        if body[:1] in "+-":
            sign = body[0]
            if sign == "-" and negative:
                # "-32 S" might mean south, or minus south (north): refuse rather than guess.
                raise AngleParseError(text, kind, f'give either a sign or a compass letter, not both '
                                      f'(write "{body[1:].lstrip()} {compass}")')
            if sign == "-" or negative:
                says = {"N": "north", "S": "south", "E": "east", "W": "west"}[compass]
                other = {"N": "south", "S": "north", "E": "west", "W": "east"}[compass]
                raise AngleParseError(text, kind, f'the sign "{sign}" and the letter {compass} disagree '
                                      f'(the sign says {other}, the letter {says}); drop the sign')
    if body[:1] in "+-":
        negative = negative or body[0] == "-"
        body = body[1:].lstrip()
    hours_kind = kind in ("ra", "hour_angle")

    if m := _HMS_RE.match(body):
        if not hours_kind:
            raise AngleParseError(text, kind, "hours (h m s) are only accepted for RA and hour angle")
        magnitude = _combine(text, kind, m["h"], m["m"], m["s"]) * 15.0
    elif m := _DMS_RE.match(body):
        magnitude = _combine(text, kind, m["d"], m["m"], m["s"])
    elif (m := _COLON_RE.match(body)) or (m := _SPACE_RE.match(body)):
        value = _combine(text, kind, m["a"], m["b"], m["c"])
        magnitude = 15.0 * value if hours_kind else value
    elif _DECIMAL_RE.match(body):
        value = float(body)
        if kind == "ra":
            _refuse_ambiguous_ra(text, -value if negative else value)
        magnitude = 15.0 * value if kind == "hour_angle" else value
    else:
        raise AngleParseError(text, kind, "unrecognised format")
    return -magnitude if negative else magnitude


def _refuse_ambiguous_ra(text: str, value: float) -> None:
    """A bare number in (0, 24) could be hours or degrees: refuse it, showing both readings.

    Read silently as degrees, ``ra = 5.58`` (meant as hours) would put a target 5 h off and make
    every alert for it wrong; above 24 only degrees make sense, and 0 is the same either way.
    """
    if 0.0 < value < 24.0:
        shown = f"{value:g}"
        as_hours = format_hms(value, decimals=0)
        as_degrees = format_hms(value / 15.0, decimals=0)
        raise AngleParseError(text, "ra", f"a bare number below 24 could be hours or degrees ({shown} h = "
                              f"{as_hours}, {shown}° = {as_degrees}); write \"{shown}h\" for hours or "
                              f"\"{shown}d\" for degrees")


def _combine(text: str, kind: str, first: str, minutes: str | None, seconds: str | None) -> float:
    """Combine sexagesimal fields; only the last given field may have a fraction."""
    fields = [f for f in (first, minutes, seconds) if f is not None]
    if any("." in f for f in fields[:-1]):
        raise AngleParseError(text, kind, "only the last field may have a decimal fraction")
    values = [float(f) for f in fields]
    for name, v in zip(("minutes", "seconds"), values[1:], strict=False):
        if v >= 60.0:
            raise AngleParseError(text, kind, f"{name} must be below 60, got {v:g}")
    # Sum in units of the last field's sixtieths, then divide once: "3 41 15" gives 3.6875 exactly.
    total = sum(v * 60.0 ** (2 - i) for i, v in enumerate(values))
    return total / 3600.0


def _check_range(value_deg: float, shown: str, kind: str) -> None:
    limits = {"dec": (-90.0, 90.0, True), "lat": (-90.0, 90.0, True), "ra": (0.0, 360.0, False),
              "lon": (-180.0, 360.0, False)}
    if kind in limits:
        low, high, closed = limits[kind]
        if not (low <= value_deg <= high if closed else low <= value_deg < high):
            right = "]" if closed else ")"
            if kind == "ra":
                span = "[0h, 24h) = [0, 360) degrees"
            else:
                span = f"[{low:g}, {high:g}{right} degrees"
            raise AngleParseError(shown, kind, f"out of range: {value_deg:.6g} degrees is outside {span}")


def _split_sexagesimal(value: float, decimals: int, wrap_units: int | None) -> tuple[int, int, str]:
    """Split a non-negative value into (whole, minutes, seconds text), rounding once at the end."""
    if decimals < 0:
        raise ValueError(f"decimals must be >= 0, got {decimals}")
    scale = 10**decimals
    units = round(value * 3600.0 * scale)  # total in 1/scale seconds, rounded once
    if wrap_units is not None:
        units %= wrap_units
    whole, rest = divmod(units, 3600 * scale)
    minutes, sec_units = divmod(rest, 60 * scale)
    if decimals:
        sec_text = f"{sec_units // scale:02d}.{sec_units % scale:0{decimals}d}"
    else:
        sec_text = f"{sec_units:02d}"
    return int(whole), int(minutes), sec_text


def _sign_text(negative: bool, always: bool) -> str:
    if negative:
        return "-"
    return "+" if always else ""
