"""Pause Python's cyclic garbage collector while a replication runs.

A replication allocates tens of thousands of small objects (events, unit and
position states) that live until it ends. Each allocation counts towards the
collector's thresholds, and every collection walks all live objects, so with
the collector on, a large fleet spends a sizeable share of its set-up in
collections that find nothing. The engine's own objects are freed by
reference counting as it goes; the few cycles (the environment, its
processes and the units) become garbage together at the end and are
collected once the collector is back on.

The switch is global to the interpreter; a counter under a lock keeps it off
while any thread is inside :func:`gc_paused` and restores it after the last
one leaves (only if it was on before the first one came in).
"""

from __future__ import annotations

import gc
import threading
from collections.abc import Iterator
from contextlib import contextmanager

_lock = threading.Lock()
_depth = 0
_was_enabled = False


@contextmanager
def gc_paused() -> Iterator[None]:
    """Run the ``with`` block with the cyclic garbage collector off."""
    global _depth, _was_enabled
    with _lock:
        if _depth == 0:
            _was_enabled = gc.isenabled()
            gc.disable()
        _depth += 1
    try:
        yield
    finally:
        with _lock:
            _depth -= 1
            if _depth == 0 and _was_enabled:
                gc.enable()
