"""A real small file system for disk-full and read-only tests: a tmpfs of a few hundred KiB.

Mounting needs root (CI runs as root). Elsewhere the tests that use it skip with a reason, unless
SIDEROD_REQUIRE_SYSTEM_TOOLS=1 says this machine must run them.
"""

from __future__ import annotations

import contextlib
import errno
import os
import subprocess
import tempfile
from pathlib import Path

import pytest

FILLER_NAME = "filler.bin"


@contextlib.contextmanager
def small_disk(size_kib: int = 512):
    """Mount a fresh tmpfs of ``size_kib`` KiB; yield its directory; unmount afterwards."""
    directory = Path(tempfile.mkdtemp(prefix="siderod-disk-", dir="/tmp"))
    result = subprocess.run(["mount", "-t", "tmpfs", "-o", f"size={size_kib}k,mode=0700", "tmpfs",
                             str(directory)], capture_output=True, text=True, check=False)
    if result.returncode != 0:
        directory.rmdir()
        reason = f"cannot mount a small tmpfs here ({result.stderr.strip() or 'not root'})"
        if os.environ.get("SIDEROD_REQUIRE_SYSTEM_TOOLS") == "1":
            pytest.fail(reason + "; CI must run this test as root")
        pytest.skip(reason)
    try:
        yield directory
    finally:
        subprocess.run(["umount", "-l", str(directory)], check=False)
        directory.rmdir()


def fill(directory: Path) -> int:
    """Write a filler file until the file system is full; return the bytes written."""
    written = 0
    chunk = b"\0" * 4096
    fd = os.open(directory / FILLER_NAME, os.O_WRONLY | os.O_CREAT | os.O_APPEND, 0o600)
    try:
        while True:
            try:
                written += os.write(fd, chunk)
            except OSError as exc:
                if exc.errno != errno.ENOSPC:
                    raise
                break
    finally:
        os.close(fd)
    return written


def free(directory: Path) -> None:
    """Remove the filler file again."""
    (directory / FILLER_NAME).unlink(missing_ok=True)


def remount(directory: Path, mode: str) -> None:
    """``mode`` "ro" or "rw"."""
    subprocess.run(["mount", "-o", f"remount,{mode}", str(directory)], check=True)
