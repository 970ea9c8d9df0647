"""The quantity grammar: one number, one unit name, nothing evaluated."""

from __future__ import annotations

import math
import re

import pytest
from hypothesis import given
from hypothesis import strategies as st

from fleetsim.errors import InputError
from fleetsim.units import UNITS, parse_quantity

# Conversion factors: the international pound 0.45359237 kg and standard
# gravity 9.80665 m/s², both exact by definition (NIST SP 811, appendix B);
# the Julian year of 365.25 d (IAU).
GOOD = [
    ("4.5 kN", "force", 4500.0),
    ("4.5kN", "force", 4500.0),
    ("  1100 lbf ", "force", 1100 * 4.4482216152605),
    ("1 kip", "force", 4448.2216152605),
    ("1 kgf", "force", 9.80665),
    ("1e3 N", "force", 1000.0),
    ("+2.5E-1 kN", "force", 250.0),
    (".5 kN", "force", 500.0),
    ("5. kN", "force", 5000.0),
    ("1480 rpm", "speed", 1480.0),
    ("25 Hz", "speed", 1500.0),  # revolutions per second
    ("1500 1/min", "speed", 1500.0),
    ("2 rev/s", "speed", 120.0),
    ("6.283185307179586 rad/s", "speed", 60.0),
    ("2 weeks", "time", 336.0),
    ("1 year", "time", 8766.0),
    ("10 years", "time", 87660.0),
    ("21 d", "time", 504.0),
    ("90 min", "time", 1.5),
    ("3600 s", "time", 1.0),
    ("1 month", "time", 730.5),
    ("1 mN", "force", 1e-3),  # not read as 'MN' (1e6 N)
]


@pytest.mark.parametrize(("text", "kind", "value"), GOOD)
def test_reads_quantities(text: str, kind: str, value: float) -> None:
    assert math.isclose(parse_quantity(text, kind, "x"), value, rel_tol=1e-12)  # type: ignore[arg-type]


BAD = [
    # (text, kind, words the one-line message must contain)
    ("30,7 kN", "force", "use a decimal point"),
    ("9,5 kN", "force", "use a decimal point"),
    ("1,000 h", "time", "use a decimal point"),
    (",5 kN", "force", "use a decimal point"),
    ("9**9**9 h", "time", "unknown time unit"),
    ("9**9**9", "time", "unknown time unit"),
    ("2*8 h", "time", "unknown time unit"),
    ("(8) h", "time", "number and a unit"),
    ("h", "time", "number and a unit"),
    ("", "time", "number and a unit"),
    ("8", "time", "missing unit"),
    ("4.5 KN", "force", "did you mean 'kN'"),
    ("4.5 kN/h", "force", "unknown force unit"),
    ("4.5 kN", "time", "(a force, a different kind of unit)"),
    ("1480 rpm", "force", "(a speed, a different kind of unit)"),
    ("1 000 h", "time", "unknown time unit"),
    ("1_000 h", "time", "unknown time unit"),
    ("nan h", "time", "number and a unit"),
    ("inf h", "time", "number and a unit"),
    ("0x10 h", "time", "unknown time unit"),
    ("1" * 100 + " h", "time", "102 characters"),
    ("4.5 kN\n", "force", "4500"),  # surrounding white space is fine: see below
]


@pytest.mark.parametrize(("text", "kind", "words"), BAD[:-1])
def test_refuses_with_one_line(text: str, kind: str, words: str) -> None:
    with pytest.raises(InputError) as info:
        parse_quantity(text, kind, "machine[0].position[0].speed")  # type: ignore[arg-type]
    message = str(info.value)
    assert message.startswith("machine[0].position[0].speed: ")
    assert words in message
    assert "\n" not in message


def test_surrounding_white_space() -> None:
    assert parse_quantity("4.5 kN\n", "force", "x") == 4500.0


@pytest.mark.parametrize("value", [8, 8.0, True, None, [1], {"a": 1}])
def test_bare_values_are_refused(value: object) -> None:
    with pytest.raises(InputError):
        parse_quantity(value, "time", "x")  # type: ignore[arg-type]


@pytest.mark.parametrize(
    ("text", "kind", "words"),
    [
        ("1e999 h", "time", "finite"),
        ("1e308 years", "time", "finite"),
        ("1001 years", "time", "1000 years"),
        ("0.5 s", "time", "from 1 s"),
        ("1e-300 h", "time", "from 1 s"),
        ("2e9 N", "force", "to 1e+09 N"),
        ("1e-300 N", "force", "from 0.001 N"),
        ("1e-300 rpm", "speed", "from 0.01"),
        ("2e6 rpm", "speed", "1,000,000 rpm"),
    ],
)
def test_bounds_of_each_kind(text: str, kind: str, words: str) -> None:
    with pytest.raises(InputError, match=re.escape(words)):
        parse_quantity(text, kind, "x")  # type: ignore[arg-type]


def test_bounds_are_inclusive() -> None:
    assert parse_quantity("1000 years", "time", "x") == 8_766_000.0
    assert parse_quantity("1 s", "time", "x") == 1 / 3600
    assert parse_quantity("0 h", "time", "x") == 0.0
    assert parse_quantity("1e9 N", "force", "x") == 1e9


@given(st.text(max_size=80))
def test_any_text_is_a_number_or_one_input_error(text: str) -> None:
    for kind in ("force", "speed", "time"):
        try:
            value = parse_quantity(text, kind, "x")  # type: ignore[arg-type]
        except InputError as exc:
            assert "\n" not in str(exc)
        else:
            assert isinstance(value, float)


@given(
    st.floats(min_value=0, max_value=1e5, allow_nan=False),
    st.sampled_from(sorted(UNITS)),
)
def test_round_trip_of_formatted_numbers(x: float, unit: str) -> None:
    kind, factor = UNITS[unit]
    try:
        value = parse_quantity(f"{x!r} {unit}", kind, "x")
    except InputError as exc:  # outside the bounds of its kind
        assert "expected a" in str(exc)
    else:
        assert value == x * factor
