"""The allocator setting of the vectorised engine (fleetsim/sim/allocator.py).

Its effect is speed, measured by the benchmarks, not here; this test checks
that the setting is made where it can be (GNU libc on Linux: ``mallopt``
returns 1 on success, per its manual page).
"""

from __future__ import annotations

import platform
import sys

import pytest

from fleetsim.sim import allocator


@pytest.mark.skipif(not (sys.platform.startswith("linux") and platform.libc_ver()[0] == "glibc"),
                    reason="the setting exists in GNU libc only")
def test_the_setting_is_in_force_on_glibc(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(allocator, "_done", None)  # ask libc again
    assert allocator.keep_freed_memory() is True
    assert allocator.keep_freed_memory() is True  # once per process: the first answer

