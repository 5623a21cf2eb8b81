"""Clock health: the pure timex interpretation with fixed inputs, and the live read against C.

References: the constants and the struct layout are checked against the installed Linux UAPI
header /usr/include/linux/timex.h and glibc's <sys/timex.h>, by parsing the one and compiling a
small C program against the other (skipped where no header or compiler is present).
"""

from __future__ import annotations

import re
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from siderod.common.model import ClockHealth
from siderod.service.clockhealth import (
    LST_CLOCK_TOLERANCE_SECONDS,
    STA_UNSYNC,
    TIME_ERROR,
    clock_health_from_timex,
    format_clock_warning,
    read_clock_health,
)

TIME_OK = 0  # adjtimex return value, from include/uapi/linux/timex.h
STA_PLL = 0x0001  # status bit, same header
#: The kernel reports errors in whole microseconds; converting to seconds must be exact to 1 us.
MICROSECOND_TOLERANCE_SECONDS = 1e-6


def test_synchronised_clock():
    health = clock_health_from_timex(TIME_OK, STA_PLL, esterror_us=512, maxerror_us=12_345)
    assert health.state == "synchronised"
    assert health.estimated_error_seconds == pytest.approx(512e-6, abs=MICROSECOND_TOLERANCE_SECONDS)
    assert health.max_error_seconds == pytest.approx(0.012345, abs=MICROSECOND_TOLERANCE_SECONDS)
    assert "512 us" in health.detail and "12.3 ms" in health.detail
    assert format_clock_warning(health) is None


def test_unsync_bit_means_unsynchronised_even_when_state_is_ok():
    health = clock_health_from_timex(TIME_OK, STA_UNSYNC | STA_PLL, 1000, 2000)
    assert health.state == "unsynchronised"
    assert "STA_UNSYNC" in health.detail and "time daemon" in health.detail


def test_time_error_state_means_unsynchronised():
    # what an undisciplined kernel reports: TIME_ERROR, STA_UNSYNC, both errors at the 16 s cap
    health = clock_health_from_timex(TIME_ERROR, STA_UNSYNC, 16_000_000, 16_000_000)
    assert health.state == "unsynchronised"
    assert health.max_error_seconds == 16.0
    assert "the kernel's cap" in health.detail
    assert "not synchronised" in format_clock_warning(health)


def test_large_estimated_error_warns():
    health = clock_health_from_timex(TIME_OK, STA_PLL, 1_500_000, 2_000_000)
    warning = format_clock_warning(health)
    assert warning is not None and "1.5 s" in warning
    assert format_clock_warning(health, tolerance_seconds=2.0) is None


def test_error_at_the_tolerance_does_not_warn():
    at_limit = int(LST_CLOCK_TOLERANCE_SECONDS * 1e6)
    assert format_clock_warning(clock_health_from_timex(TIME_OK, 0, at_limit, at_limit)) is None


def test_unknown_gives_no_warning():
    assert format_clock_warning(ClockHealth(state="unknown", detail="not Linux")) is None


def test_negative_kernel_values_are_clamped():
    health = clock_health_from_timex(TIME_OK, 0, -5, -7)
    assert health.estimated_error_seconds == 0.0 and health.max_error_seconds == 0.0


def test_read_clock_health_never_raises():
    health = read_clock_health()
    assert health.state in {"synchronised", "unsynchronised", "unknown"}
    assert health.detail


@pytest.mark.skipif(
    not Path("/usr/include/linux/timex.h").exists(), reason="Linux UAPI headers not installed"
)
def test_constants_match_the_linux_header():
    text = Path("/usr/include/linux/timex.h").read_text()
    defines = dict(re.findall(r"#define\s+(\w+)\s+(0x[0-9a-fA-F]+|\d+)", text))
    assert int(defines["STA_UNSYNC"], 0) == STA_UNSYNC
    assert int(defines["TIME_ERROR"], 0) == TIME_ERROR
    assert int(defines["TIME_OK"], 0) == TIME_OK


_C_PROBE = r"""
#include <stdio.h>
#include <stddef.h>
#include <sys/timex.h>
int main(void) {
    struct timex t = {0};
    int state = adjtimex(&t);
    printf("%d %d %ld %ld %zu %zu\n", state, t.status, t.esterror, t.maxerror,
           offsetof(struct timex, status), offsetof(struct timex, tai));
    return 0;
}
"""


@pytest.mark.skipif(
    not sys.platform.startswith("linux") or shutil.which("cc") is None, reason="needs Linux and cc"
)
def test_live_read_matches_a_c_program(tmp_path):
    from siderod.service.clockhealth import _Timex

    source = tmp_path / "probe.c"
    source.write_text(_C_PROBE)
    subprocess.run(["cc", "-o", str(tmp_path / "probe"), str(source)], check=True, capture_output=True)
    out = subprocess.run([str(tmp_path / "probe")], check=True, capture_output=True, text=True).stdout
    state, status, esterror, maxerror, status_offset, tai_offset = map(int, out.split())
    # layout of struct timex as glibc compiles it
    assert (_Timex.status.offset, _Timex.tai.offset) == (status_offset, tai_offset)
    # The kernel state can change between the two reads only if a time daemon adjusts the clock in
    # between; the state and flags are stable, errors move by microseconds.
    expected = clock_health_from_timex(state, status, esterror, maxerror)
    ours = read_clock_health()
    assert ours.state == expected.state
    if expected.estimated_error_seconds is not None:
        assert ours.estimated_error_seconds == pytest.approx(expected.estimated_error_seconds, abs=0.01)
