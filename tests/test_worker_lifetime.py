"""Pool workers exit when the study's process dies, even by SIGKILL (issue 17)."""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]

pytestmark = pytest.mark.skipif(not Path("/proc/self/stat").exists(), reason="needs /proc")


def _children(pid: int) -> list[int]:
    out = []
    for entry in Path("/proc").iterdir():
        if entry.name.isdigit():
            try:
                fields = (entry / "stat").read_text().rsplit(")", 1)[1].split()
            except OSError:
                continue
            if int(fields[1]) == pid:
                out.append(int(entry.name))
    return out


def _running(pid: int) -> bool:
    """True while the process exists and is not a zombie (exited, not yet reaped)."""
    try:
        state = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()[0]
    except OSError:
        return False
    return state not in ("Z", "X")


def test_sigkill_of_run_leaves_no_worker_behind(tmp_path: Path) -> None:
    code = ("import sys; from fleetsim.cli import main; "
            "sys.exit(main(sys.argv[1:]))")
    args = [sys.executable, "-c", code, "run", str(ROOT / "scenarios" / "pump_stations.toml"),
            "-n", "5000", "--workers", "2", "--quiet", "--out", str(tmp_path / "r")]
    parent = subprocess.Popen(args, cwd=tmp_path, stdout=subprocess.DEVNULL,
                              stderr=subprocess.DEVNULL, start_new_session=True)
    try:
        deadline = time.monotonic() + 60
        workers: list[int] = []
        while time.monotonic() < deadline and len(workers) < 2:
            assert parent.poll() is None, "the study ended before its workers started"
            time.sleep(0.2)
            workers = [p for p in _children(parent.pid) if _running(p)]
        assert len(workers) >= 2, "the pool workers never started"
        time.sleep(1.0)  # let them get to work
        os.kill(parent.pid, signal.SIGKILL)
        parent.wait()
        deadline = time.monotonic() + 10
        while time.monotonic() < deadline and any(_running(p) for p in workers):
            time.sleep(0.1)
        assert not [p for p in workers if _running(p)], "workers outlived their parent"
    finally:
        if parent.poll() is None:
            os.killpg(parent.pid, signal.SIGKILL)
            parent.wait()
