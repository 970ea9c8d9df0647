"""Malformed scenario documents yield a Scenario or one InputError — never anything else.

Starts from the demo plants and mutates them: deletes keys, inserts unknown
keys, replaces values with wrong types, wrong or missing units, negatives,
non-finite numbers and random text; and separately mangles the TOML text.
"""

from __future__ import annotations

import copy
import datetime as dt
import tomllib
import warnings
from pathlib import Path
from typing import Any

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from fleetsim.errors import InputError
from fleetsim.scenario import Scenario, build_scenario, parse_scenario

ROOT = Path(__file__).resolve().parents[1]
TEXTS = {
    name: (ROOT / "scenarios" / name).read_text(encoding="utf-8")
    for name in ("pump_stations.toml", "conveyor.toml")
}
DOCS = {name: tomllib.loads(text) for name, text in TEXTS.items()}

Path_ = tuple[str | int, ...]


def _paths(node: Any, prefix: Path_ = ()) -> list[Path_]:
    """Every key path and array index in a parsed document."""
    out: list[Path_] = []
    if isinstance(node, dict):
        for k, v in node.items():
            out.append((*prefix, k))
            out.extend(_paths(v, (*prefix, k)))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            out.append((*prefix, i))
            out.extend(_paths(v, (*prefix, i)))
    return out


PATHS = {name: _paths(doc) for name, doc in DOCS.items()}

UNITS = [
    "kN",
    "N",
    "lbf",
    "rpm",
    "Hz",
    "h",
    "d",
    "years",
    "weeks",
    "m",
    "kg",
    "%",
    "",
    "kN/h",
    "rpm*rpm",
]
numbers = st.one_of(
    st.integers(min_value=-(10**6), max_value=10**6),
    st.integers(),  # occasionally huge
    st.floats(allow_nan=True, allow_infinity=True),
)
quantities = st.builds(lambda x, u: f"{x} {u}".strip(), numbers, st.sampled_from(UNITS))
scalars = st.one_of(
    numbers,
    quantities,
    st.booleans(),
    st.text(max_size=12),
    st.sampled_from(["ball", "roller", "age", "block", "condition", "lognormal", "WB-50", "fan#2"]),
    st.datetimes(min_value=dt.datetime(2000, 1, 1), max_value=dt.datetime(2030, 1, 1)),
)
values = st.recursive(
    scalars,
    lambda inner: st.one_of(
        st.lists(inner, max_size=3),
        st.dictionaries(
            st.sampled_from(["kind", "shape", "scale", "mean", "x", "id"]), inner, max_size=3
        ),
    ),
    max_leaves=6,
)


def _parent(doc: Any, path: Path_) -> tuple[Any, str | int]:
    node = doc
    for key in path[:-1]:
        node = node[key]
    return node, path[-1]


@st.composite
def mutated_documents(draw: st.DrawFn) -> dict[str, Any]:
    name = draw(st.sampled_from(sorted(DOCS)))
    doc = copy.deepcopy(DOCS[name])
    for _ in range(draw(st.integers(min_value=1, max_value=3))):
        paths = _paths(doc)
        if not paths:
            break
        path = draw(st.sampled_from(paths))
        parent, key = _parent(doc, path)
        op = draw(st.sampled_from(["delete", "insert", "replace", "replace"]))
        if op == "delete":
            del parent[key]
        elif op == "insert" and isinstance(parent, dict):
            parent[draw(st.text(min_size=1, max_size=10))] = draw(values)
        else:
            parent[key] = draw(values)
    return doc


def _check(outcome: Scenario | InputError, source: str) -> None:
    if isinstance(outcome, InputError):
        assert outcome.where.startswith(source)
        assert "\n" not in str(outcome)
    else:
        assert isinstance(outcome, Scenario)


@settings(
    max_examples=150,
    deadline=2000,  # ms per example; a loader that hangs fails instead of stalling CI
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large],
    derandomize=True,
)
@given(mutated_documents())
def test_mutated_documents_give_a_scenario_or_an_input_error(doc: dict[str, Any]) -> None:
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            outcome: Scenario | InputError = build_scenario(doc, source="fuzz.toml")
        except InputError as exc:
            outcome = exc
    _check(outcome, "fuzz.toml")


@st.composite
def mangled_texts(draw: st.DrawFn) -> str:
    text = TEXTS[draw(st.sampled_from(sorted(TEXTS)))]
    lines = text.splitlines(keepends=True)
    for _ in range(draw(st.integers(min_value=1, max_value=3))):
        i = draw(st.integers(min_value=0, max_value=len(lines) - 1))
        action = draw(st.sampled_from(["drop", "garble", "insert"]))
        if action == "drop":
            lines.pop(i)
        elif action == "garble":
            line = lines[i]
            j = draw(st.integers(min_value=0, max_value=len(line)))
            lines[i] = line[:j] + draw(st.text(max_size=6)) + line[j:]
        else:
            lines.insert(
                i,
                draw(
                    st.sampled_from(
                        [
                            "x = 1\n",
                            "[[machine]]\n",
                            "[study]\n",
                            "count = -1\n",
                            'speed = "fast"\n',
                            '"a b" = "1 kN"\n',
                        ]
                    )
                ),
            )
        if not lines:
            break
    return "".join(lines)


@settings(
    max_examples=50,
    deadline=2000,
    suppress_health_check=[HealthCheck.too_slow],
    derandomize=True,
)
@given(mangled_texts())
def test_mangled_toml_text_gives_a_scenario_or_an_input_error(text: str) -> None:
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            outcome: Scenario | InputError = parse_scenario(text, source="fuzz.toml")
        except InputError as exc:
            outcome = exc
    _check(outcome, "fuzz.toml")


def test_paths_cover_nested_positions() -> None:
    # The mutation space reaches deep keys such as machine[3].position[3].duty[1].speed.
    assert ("machine", 3, "position", 3, "duty", 1, "speed") in PATHS["pump_stations.toml"]
