"""Critical alerts that insist: when each repeat of an alert falls, until it is acknowledged.

The rule, in one place so that every kind of critical alert (the planner's flip-due and
tracking-limit alerts, and alerts computed from a linked mount's own pointing) repeats alike:

- An *event* (one target's flip, one limit) may have several configured alerts, one per lead
  time (10 min before, at the event...). Its repeats run from the due time of its first
  configured alert, every ``repeat_minutes``; each later configured alert restarts the series.
- A repeat that would fall later than half a period before the next configured alert of the
  same event is left out: that alert takes its place.
- Repeats stop at the event's *next stage* when it has one (a flip-due alert stops at the
  tracking limit of the same pass): no repeat falls at or after it. Without a next stage, at
  most ``repeat_count`` repeats follow the last configured alert.
- An acknowledged event gets no repeats at all (its configured alerts still come, once each).

Each repeat is an alert of its own with its own key (the event's key with the repeat's lead,
negative once past the event) and its number in the series; both follow from the event and the
configured alerts alone, so any plan that makes a repeat makes the same one. Acknowledgements are
kept by *event id*, the key without its lead, so that one acknowledgement silences every repeat.

How the service plans and gives them (``plan_repeats(until_utc=...)`` and the service's
``repeat_stretch_minutes``):

- Repeats are planned one *stretch* at a time: at each re-plan, those due up to the end of the
  stretch (twice the re-plan interval, at least 3 h and two repeat periods); the next re-plan
  plans the next stretch. A series longer than a stretch goes on unbroken across re-plans.
- A repeat is a *reminder*, not a debt. Within its grace it is given exactly once, like any
  alert: one that fell due while the service was stopped or suspended is given late (marked) at
  the restart, and a restart never gives one twice (it is written to the ledger when claimed).
  Past its grace it is dropped: not given, not counted or summarised as missed, because the
  next repeat of the same event reminds again. An unacknowledged event still before its next
  stage (or its last counted repeat) therefore *resumes* repeating after a restart; it does not
  replay the repeats it missed beyond the grace.
- Configured alerts (one per lead time) are unchanged: owed exactly once over the whole horizon,
  given late within their grace and counted and summarised as missed beyond it.

Pure: nothing here reads the clock or does I/O.
"""

from __future__ import annotations

from collections.abc import Sequence
from datetime import datetime, timedelta

__all__ = [
    "MAX_REPEATS",
    "event_id",
    "repeat_times",
    "format_repeat",
    "format_repeat_title",
]

#: A hard cap on the repeats of one event, whatever the settings: a stuck acknowledgement path
#: must not turn into thousands of alerts. 2 min x 120 = 4 h, longer than any flip-to-limit span.
MAX_REPEATS = 120


def event_id(key: str) -> str:
    """The event an alert key belongs to: the key without its lead (``target|kind|time``).

    >>> event_id("M42|flip-due|2026-12-14T22:03:08Z|10")
    'M42|flip-due|2026-12-14T22:03:08Z'
    """
    head, sep, _ = key.rpartition("|")
    return head if sep else key


def repeat_times(
    configured_due_utc: Sequence[datetime],
    *,
    repeat_minutes: float,
    repeat_count: int,
    next_stage_utc: datetime | None = None,
) -> tuple[datetime, ...]:
    """When the repeats of one unacknowledged critical event fall, in order.

    Args:
        configured_due_utc: the due times of the event's configured alerts (any order, at least
            one; aware UTC).
        repeat_minutes: minutes between repeats; 0 or less means no repeats.
        repeat_count: the most repeats after the last configured alert when there is no next
            stage.
        next_stage_utc: when the next stage arrives (the tracking limit of a flip); no repeat
            falls at or after it. None: the event has no next stage.

    Returns:
        The repeat due times, earliest first; at most :data:`MAX_REPEATS`.

    >>> from datetime import UTC
    >>> t = datetime(2026, 12, 14, 22, 0, tzinfo=UTC)
    >>> [r.strftime("%H:%M") for r in repeat_times([t], repeat_minutes=2, repeat_count=3)]
    ['22:02', '22:04', '22:06']
    >>> [r.strftime("%H:%M") for r in repeat_times([t - timedelta(minutes=5), t], repeat_minutes=2,
    ...                                             repeat_count=0, next_stage_utc=t + timedelta(minutes=5))]
    ['21:57', '21:59', '22:02', '22:04']
    """
    if repeat_minutes <= 0 or not configured_due_utc:
        return ()
    configured = sorted(configured_due_utc)
    period = timedelta(minutes=repeat_minutes)
    half = period / 2
    out: list[datetime] = []
    anchor, index, after_last = configured[0], 0, 0
    while len(out) < MAX_REPEATS:
        when = anchor + period
        following = configured[index + 1] if index + 1 < len(configured) else None
        if following is not None and when > following - half:
            # The next configured alert comes first (or about as soon): it takes this repeat's
            # place, and the series goes on from it.
            anchor, index = following, index + 1
            continue
        if next_stage_utc is not None and when >= next_stage_utc:
            break
        if following is None and next_stage_utc is None:
            if after_last >= repeat_count:
                break
            after_last += 1
        out.append(when)
        anchor = when
    return tuple(out)


def format_repeat(title: str, body: str, number: int, repeat_minutes: float) -> tuple[str, str]:
    """Title and body of the ``number``-th repeat (1-based) of an alert with ``title`` and ``body``."""
    title = format_repeat_title(title, number)
    body = (f"{body}\nRepeats every {repeat_minutes:g} min until acknowledged: `siderod ack`, the "
            "board's A key, or this notification's Acknowledge button.")
    return title, body


def format_repeat_title(title: str, number: int) -> str:
    """The title of the ``number``-th repeat (1-based) of an alert titled ``title``."""
    return f"{title} (repeat {number})"
