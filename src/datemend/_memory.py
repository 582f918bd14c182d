"""Give freed memory back to the system promptly, for the command line and the window.

On Linux with glibc, a freed block of a few megabytes (a column's parsed values, a run of
export text) may stay in the process's heap, so a long job's resident size keeps the high
water mark of every step before it. Fixing the threshold above which blocks get their own
mapping (mallopt(3), M_MMAP_THRESHOLD; glibc otherwise raises it as the program runs) makes
such blocks go back to the system when freed. Elsewhere this does nothing.
"""

from __future__ import annotations

import ctypes
import sys

__all__ = ["return_freed_memory"]

_M_MMAP_THRESHOLD = -3  # from glibc's malloc.h
_THRESHOLD = 128 * 1024  # glibc's own starting value; fixing it stops the dynamic raise


def return_freed_memory() -> bool:
    """Ask the C library to map large blocks on their own; True if it took the setting."""
    if not sys.platform.startswith("linux"):
        return False
    try:
        libc = ctypes.CDLL("libc.so.6")
        return bool(libc.mallopt(_M_MMAP_THRESHOLD, _THRESHOLD))
    except (OSError, AttributeError):  # not glibc (musl has no mallopt)
        return False
