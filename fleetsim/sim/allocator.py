"""Keep freed memory for reuse: the vectorised engine's arrays without fresh pages each time.

A replication of the vectorised engine at 10,000 positions builds dozens of
arrays of about half a megabyte each, and frees them again. GNU libc returns
freed memory at the top of its heap to the system once more than a little is
free, so the next array of that size comes back as fresh pages that the
kernel must map and zero on first touch: about a third of such a
replication's time (13.6 → 9.1 ms per replication of 10,000 positions and
20 years, ``benchmarks/bench_sweep.py`` and the throughput benchmarks show
it). :func:`keep_freed_memory` sets libc's ``M_TOP_PAD`` so that
:data:`TOP_PAD_BYTES` of freed memory stay at the heap top for the next
arrays. Memory already in use is not changed (the peak resident size of a
study is the same); the process keeps up to that much more mapped after a
peak. Elsewhere than Linux with GNU libc it does nothing.
"""

from __future__ import annotations

import ctypes
import ctypes.util
import platform
import sys

#: Freed memory kept at the top of the heap (bytes).
TOP_PAD_BYTES = 64 << 20
#: ``mallopt`` parameter number of ``M_TOP_PAD`` in GNU libc's ``malloc.h``.
_M_TOP_PAD = -2

_done: bool | None = None


def keep_freed_memory() -> bool:
    """Set GNU libc's ``M_TOP_PAD`` to :data:`TOP_PAD_BYTES`, once per process.

    Returns True when the setting is in force (Linux with GNU libc), False
    elsewhere. Safe to call often: later calls only return the first answer.
    """
    global _done
    if _done is None:
        _done = False
        if sys.platform.startswith("linux") and platform.libc_ver()[0] == "glibc":
            try:
                libc = ctypes.CDLL(ctypes.util.find_library("c") or "libc.so.6")
                _done = bool(libc.mallopt(_M_TOP_PAD, TOP_PAD_BYTES))
            except (OSError, AttributeError):
                _done = False
    return _done
