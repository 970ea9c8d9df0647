"""Helpers for the command-line tests of hostile input: run, time-limit, check one line."""

from __future__ import annotations

import contextlib
import faulthandler
import io
import signal
import traceback
import warnings
from collections.abc import Sequence
from pathlib import Path

from fleetsim.cli import main

ROOT = Path(__file__).resolve().parents[1]
PUMPS = ROOT / "scenarios" / "pump_stations.toml"
CONVEYOR = ROOT / "scenarios" / "conveyor.toml"

#: Seconds one command may take before the case counts as a hang.
TIME_LIMIT_S = 20.0


class Hang(Exception):
    """A command did not return within the time limit."""


def _alarm(signum, frame):  # type: ignore[no-untyped-def]
    raise Hang(f"no answer within {TIME_LIMIT_S:g} s")


def run_cli(args: Sequence[str], cwd: Path, limit_s: float = TIME_LIMIT_S) -> tuple[int, str, str]:
    """Run ``fleetsim ARGS`` in-process in ``cwd``: (exit code, stdout, stderr).

    An exception that escapes the entry point (a traceback for the user) or a
    run longer than ``limit_s`` fails the calling test with the command line.
    """
    out, err = io.StringIO(), io.StringIO()
    old = signal.signal(signal.SIGALRM, _alarm)
    signal.setitimer(signal.ITIMER_REAL, limit_s)
    # A hang inside C code (no Python signal handler runs there) ends the test run
    # with the tracebacks of every thread instead of hanging it.
    faulthandler.dump_traceback_later(3 * limit_s + 30, exit=True)
    try:
        with (
            contextlib.chdir(cwd),
            contextlib.redirect_stdout(out),
            contextlib.redirect_stderr(err),
            warnings.catch_warnings(),
        ):
            code = main(list(args))
    except Hang:
        raise AssertionError(f"fleetsim {' '.join(args)}: hangs (over {limit_s:g} s)") from None
    except BaseException as exc:  # what the user would see as a traceback
        tb = "".join(traceback.format_exception(exc)[-3:])
        raise AssertionError(f"fleetsim {' '.join(args)}: traceback\n{tb}") from None
    finally:
        faulthandler.cancel_dump_traceback_later()
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, old)
    return code, out.getvalue(), err.getvalue()


def expect_one_line_error(args: Sequence[str], cwd: Path) -> str:
    """Run and assert exit 2 with one ``fleetsim: error:`` line on stderr; return its text."""
    code, _, err = run_cli(args, cwd)
    lines = err.splitlines()
    errors = [line for line in lines if line.startswith("fleetsim: error: ")]
    assert code == 2, f"fleetsim {' '.join(args)}: exit {code}, stderr {err!r}"
    assert len(errors) == 1 and lines[-1] == errors[0], (
        f"fleetsim {' '.join(args)}: expected one error line, got {err!r}"
    )
    assert "Traceback" not in err
    return errors[0][len("fleetsim: error: "):]


def edited(tmp: Path, source: Path, edits: Sequence[tuple[str, str]], name: str = "") -> Path:
    """A copy of ``source`` in ``tmp`` with text replacements (each must apply)."""
    text = source.read_text(encoding="utf-8")
    for old, new in edits:
        assert old in text, f"{old!r} not in {source.name}"
        text = text.replace(old, new, 1)
    path = tmp / (name or source.name)
    path.write_text(text, encoding="utf-8")
    return path


#: A small scenario that runs in well under a second (two replications).
TINY = """\
[study]
name = "tiny"
horizon = "2 years"
replications = 2
seed = 1

[costs]
planned_replacement = 100
failure = 1000
downtime_per_hour = 10

[[bearing]]
id = "B1"
type = "ball"
dynamic_rating = "30 kN"
static_rating = "20 kN"
price = 50
lead_time = "5 d"

[policy]
kind = "age"
interval = "20000 h"

[[machine]]
id = "pump"
count = 2
operating_hours_per_year = "6000 h"

  [[machine.position]]
  id = "de"
  bearing = "B1"
  radial_load = "3 kN"
  speed = "1480 rpm"
"""


def tiny(tmp: Path, edits: Sequence[tuple[str, str]] = (), extra: str = "",
         name: str = "tiny.toml") -> Path:
    """The small scenario in ``tmp`` with text replacements and extra text appended."""
    text = TINY
    for old, new in edits:
        assert old in text, f"{old!r} not in the tiny scenario"
        text = text.replace(old, new, 1)
    path = tmp / name
    path.write_text(text + extra, encoding="utf-8")
    return path
