"""Hostile and careless input through the command line: one line, exit 2, quickly.

Every case runs ``fleetsim.cli.main`` (the entry point of the ``fleetsim``
script) and asserts the promise of the README: exit code 2, exactly one line
on standard error that names the file, key or option, no traceback, and an
answer within a time limit. The fixed tables below are the cases found by
fuzzing (issue 17); ``test_cli_fuzz.py`` generates many more.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest
from cli_cases import PUMPS, ROOT, edited, expect_one_line_error

# --- unit strings -------------------------------------------------------------------
LIFE = ["life", "--type", "ball", "--dynamic-rating", "30.7 kN", "--radial-load", "3.2 kN",
        "--speed", "1480 rpm"]


def _with(args: list[str], option: str, value: str) -> list[str]:
    out = list(args)
    if option in out:
        out[out.index(option) + 1] = value
    else:
        out += [option, value]
    return out


@pytest.mark.parametrize(
    ("option", "value", "words"),
    [
        ("--dynamic-rating", "30,7 kN", "use a decimal point"),
        ("--radial-load", "3,2 kN", "use a decimal point"),
        ("--dynamic-rating", "9**9**9 kN", "unknown force unit"),
        ("--speed", "9**9**9 rpm", "unknown speed unit"),
        ("--speed", "1480*2 rpm", "unknown speed unit"),
        ("--dynamic-rating", "30.7 KN", "did you mean 'kN'"),
    ],
)
def test_life_quantities(tmp_path: Path, option: str, value: str, words: str) -> None:
    message = expect_one_line_error(_with(LIFE, option, value), cwd=tmp_path)
    assert option in message and words in message


@pytest.mark.parametrize(
    ("old", "new", "key", "words"),
    [
        ('radial_load = "3.0 kN"', 'radial_load = "9,5 kN"', "radial_load", "use a decimal point"),
        ('horizon = "10 years"', 'horizon = "9**9**9 h"', "study.horizon", "unknown time unit"),
    ],
)
def test_scenario_quantities(tmp_path: Path, old: str, new: str, key: str, words: str) -> None:
    path = edited(tmp_path, PUMPS, [(old, new)])
    message = expect_one_line_error(["check", str(path)], cwd=tmp_path)
    assert re.search(rf"{re.escape(path.name)}: .*{re.escape(key)}", message), message
    assert words in message


def test_sweep_vary_is_not_evaluated(tmp_path: Path) -> None:
    message = expect_one_line_error(
        ["sweep", str(ROOT / "scenarios" / "pump_stations.toml"), "-n", "2", "--quiet",
         "--out", str(tmp_path / "r"), "--vary", "policy.interval=9**9**9 h"],
        cwd=tmp_path,
    )
    assert "policy.interval" in message and "unknown time unit" in message
