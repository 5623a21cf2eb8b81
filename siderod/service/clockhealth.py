"""How far the computer's clock can be trusted: the kernel's time-synchronisation state (Linux adjtimex).

Every sidereal time siderod shows is computed from the system clock, so a clock that is off by
x seconds gives an LST off by about 1.0027 x seconds. On Linux the kernel keeps what the time
daemon (chrony, ntpd, systemd-timesyncd) told it: whether the clock is synchronised, and its
estimated and maximum error. Elsewhere, or when the call fails, the state is "unknown".
"""

from __future__ import annotations

import ctypes
import os
import sys

from siderod.common.model import ClockHealth

__all__ = [
    "STA_UNSYNC",
    "TIME_ERROR",
    "LST_CLOCK_TOLERANCE_SECONDS",
    "read_clock_health",
    "clock_health_from_timex",
    "format_clock_warning",
]

# Values from the Linux UAPI header include/uapi/linux/timex.h (checked against the installed
# /usr/include/linux/timex.h by tests/test_clockhealth.py).
STA_UNSYNC = 0x0040  # status bit: clock unsynchronised
TIME_ERROR = 5  # adjtimex() return value: clock not synchronised
#: The kernel stops growing maxerror at NTP_PHASE_LIMIT (16 s) and marks the clock unsynchronised.
_MAXERROR_LIMIT_US = 16_000_000

#: The clock error above which ``status`` warns. LST is shown to whole seconds of time, and a
#: clock error of x s moves LST by 1.0027 x s, so beyond about 1 s the shown second is wrong.
LST_CLOCK_TOLERANCE_SECONDS = 1.0


def read_clock_health() -> ClockHealth:
    """Ask the kernel about time synchronisation (read-only; needs no privilege).

    Returns:
        A :class:`ClockHealth`; state "unknown" off Linux or when the call fails, with the
        reason in ``detail``.
    """
    if not sys.platform.startswith("linux"):
        why = f"the kernel's clock state is read on Linux only (this is {sys.platform})"
        return ClockHealth(state="unknown", detail=why)
    try:
        libc = ctypes.CDLL(None, use_errno=True)
        adjtimex = libc.adjtimex
        adjtimex.argtypes = [ctypes.POINTER(_Timex)]
        adjtimex.restype = ctypes.c_int
        buf = _Timex()  # modes = 0: read only
        state = adjtimex(ctypes.byref(buf))
        if state < 0:
            err = ctypes.get_errno()
            return ClockHealth(state="unknown", detail=f"adjtimex failed: {os.strerror(err)}")
        return clock_health_from_timex(state, buf.status, buf.esterror, buf.maxerror)
    except (OSError, AttributeError, ValueError) as e:
        return ClockHealth(state="unknown", detail=f"adjtimex is not available: {e}")


def clock_health_from_timex(state: int, status: int, esterror_us: int, maxerror_us: int) -> ClockHealth:
    """Turn the raw adjtimex results into a :class:`ClockHealth` (pure).

    Args:
        state: adjtimex's return value (TIME_OK 0 ... TIME_ERROR 5).
        status: the ``status`` bit field of ``struct timex``.
        esterror_us: the kernel's estimated error, microseconds.
        maxerror_us: the kernel's maximum error, microseconds.

    Returns:
        "synchronised" unless the state is TIME_ERROR or STA_UNSYNC is set, when it is
        "unsynchronised". The errors are given in seconds either way (they mean little when
        unsynchronised: maxerror then only grows until the kernel's 16 s cap).
    """
    estimated_s = max(0, esterror_us) / 1e6
    max_s = max(0, maxerror_us) / 1e6
    errors = f"estimated error {_format_seconds(estimated_s)}, at most {_format_seconds(max_s)}"
    if state == TIME_ERROR or status & STA_UNSYNC:
        why = "STA_UNSYNC set" if status & STA_UNSYNC else "state TIME_ERROR"
        capped = " (the kernel's cap)" if maxerror_us >= _MAXERROR_LIMIT_US else ""
        return ClockHealth(
            state="unsynchronised",
            estimated_error_seconds=estimated_s,
            max_error_seconds=max_s,
            detail=f"kernel: clock not synchronised ({why}); {errors}{capped}. "
            "Is a time daemon (chrony, ntpd, systemd-timesyncd) running and reaching a server?",
        )
    return ClockHealth(
        state="synchronised",
        estimated_error_seconds=estimated_s,
        max_error_seconds=max_s,
        detail=f"kernel: clock synchronised; {errors}",
    )


def format_clock_warning(
    health: ClockHealth, tolerance_seconds: float = LST_CLOCK_TOLERANCE_SECONDS
) -> str | None:
    """A one-line warning when LST cannot be trusted to ``tolerance_seconds``, else None.

    "unknown" gives no warning: siderod cannot tell, and says so elsewhere.
    """
    if health.state == "unsynchronised":
        bound = (f" (the kernel allows an error of up to {_format_seconds(health.max_error_seconds)})"
                 if health.max_error_seconds is not None else "")
        return (
            f"the system clock is not synchronised{bound}, so LST and alert times are only as right as "
            "the clock; start a time daemon (chrony, ntpd or systemd-timesyncd)"
        )
    estimated = health.estimated_error_seconds
    if health.state == "synchronised" and estimated is not None and estimated > tolerance_seconds:
        return (
            f"the kernel estimates the clock error at {_format_seconds(estimated)}, more than the "
            f"{_format_seconds(tolerance_seconds)} LST needs; check the time daemon's servers"
        )
    return None


def _format_seconds(seconds: float) -> str:
    if seconds < 1e-3:
        return f"{seconds * 1e6:.0f} us"
    if seconds < 1.0:
        return f"{seconds * 1e3:.1f} ms"
    return f"{seconds:.1f} s"


class _Timeval(ctypes.Structure):
    _fields_ = [("tv_sec", ctypes.c_long), ("tv_usec", ctypes.c_long)]


class _Timex(ctypes.Structure):
    """``struct timex`` from <sys/timex.h> as on LP64 Linux (x86_64, aarch64) and classic 32-bit.

    The trailing reserve is larger than the kernel's own 11 ints of padding, so a kernel that
    writes a slightly longer struct can never write past our buffer.
    """

    _fields_ = [
        ("modes", ctypes.c_uint),
        ("offset", ctypes.c_long),
        ("freq", ctypes.c_long),
        ("maxerror", ctypes.c_long),
        ("esterror", ctypes.c_long),
        ("status", ctypes.c_int),
        ("constant", ctypes.c_long),
        ("precision", ctypes.c_long),
        ("tolerance", ctypes.c_long),
        ("time", _Timeval),
        ("tick", ctypes.c_long),
        ("ppsfreq", ctypes.c_long),
        ("jitter", ctypes.c_long),
        ("shift", ctypes.c_int),
        ("stabil", ctypes.c_long),
        ("jitcnt", ctypes.c_long),
        ("calcnt", ctypes.c_long),
        ("errcnt", ctypes.c_long),
        ("stbcnt", ctypes.c_long),
        ("tai", ctypes.c_int),
        ("_reserved", ctypes.c_int * 32),
    ]
