"""Variants of a scenario: key-path overrides of its document, for comparisons and sweeps.

A scenario file may list variants to compare with the base case ("today's
practice")::

    [[variant]]
    name = "Run to failure"
    set = { policy = { kind = "run-to-failure" } }

    [[variant]]
    name = "Vibration route every 4 weeks"
    set = { "policy" = { kind = "condition", inspection_every = "4 weeks",
            detection = 0.8, respond_within = "3 d" } }

Each key of ``set`` is a *key path* into the document: dotted names, with
``[i]`` for the i-th entry of an array of tables or ``[id]`` for the entry
whose ``id`` is ``id`` — ``policy.interval``, ``stores.WB-50.initial``,
``machine[north-pump-1].position[pump-radial].policy``. The value replaces
whatever was there. ``fleetsim sweep --vary KEY=VALUES`` uses the same paths.
"""

from __future__ import annotations

import copy
import dataclasses
import itertools
import math
import re
import tomllib
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from fleetsim.errors import InputError
from fleetsim.scenario import build_scenario
from fleetsim.scenario.loader import parse_toml, read_text
from fleetsim.scenario.model import Scenario
from fleetsim.scenario.reader import show

#: Name of a scenario file's base case (the file as it is).
BASE_NAME = "Today's practice"

BASE_CASE_WORDS = "the file's base case"

_STEP = re.compile(r"^([^\[\]]+)((?:\[[^\]]+\])*)$")


@dataclass(frozen=True)
class Variant:
    """A named set of overrides and the scenario it gives."""

    name: str
    overrides: tuple[tuple[str, Any], ...]
    scenario: Scenario
    description: str = ""


def read_document(path: str | Path) -> tuple[dict[str, Any], str]:
    """The parsed TOML document of a scenario file and its text."""
    text = read_text(path)
    return parse_toml(text, str(path)), text


def _steps(path: str, where: str) -> list[str | int]:
    out: list[str | int] = []
    for part in path.split("."):
        m = _STEP.match(part.strip())
        if not m:
            raise InputError(where, f"expected a key path like policy.interval or "
                                    f"machine[0].position[drive-end].policy, got {path!r}")
        out.append(m.group(1))
        for idx in re.findall(r"\[([^\]]+)\]", m.group(2)):
            idx = idx.strip()
            if re.fullmatch(r"[-+]\d+", idx):
                raise InputError(where, f"expected an index >= 0 (arrays count from 0) or an id, "
                                        f"got [{idx}] in {path!r}")
            out.append(int(idx) if idx.isdigit() else idx)
    return out


def set_path(document: Mapping[str, Any], path: str, value: Any, where: str = "") -> dict[str, Any]:
    """A deep copy of ``document`` with the value at ``path`` replaced.

    Raises
    ------
    InputError
        When the path does not lead into the document (an index or id that is
        not there, a name under a value that is not a table).
    """
    where = where or path
    doc = copy.deepcopy(dict(document))
    steps = _steps(path, where)
    node: Any = doc
    for i, step in enumerate(steps):
        last = i == len(steps) - 1
        if isinstance(step, int):
            if not isinstance(node, list) or not 0 <= step < len(node):
                raise InputError(where, f"no entry [{step}] at {path!r}")
            if last:
                node[step] = value
            else:
                node = node[step]
            continue
        if isinstance(node, list):  # an id among an array of tables
            matches = [j for j, item in enumerate(node) if isinstance(item, dict) and item.get("id") == step]
            if not matches:
                ids = [item.get("id") for item in node if isinstance(item, dict)]
                raise InputError(where, f"no entry with id {step!r} at {path!r} (ids: {ids})")
            if last:
                node[matches[0]] = value
            else:
                node = node[matches[0]]
            continue
        if not isinstance(node, dict):
            raise InputError(where, f"{path!r} goes below a value that is not a table")
        if last:
            node[step] = value
        else:
            nxt = node.get(step)
            if nxt is None:
                nxt = node[step] = {}
            node = nxt
    return doc


def parse_value(text: str) -> Any:
    """A command-line value: a TOML value when it parses as one, else the string itself."""
    try:
        return tomllib.loads(f"v = {text}")["v"]
    except (tomllib.TOMLDecodeError, RecursionError):
        return text.strip()


_NUMBER = r"[-+]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][-+]?[0-9]+)?"


def parse_values(text: str, where: str) -> list[Any]:
    """``"a,b,c"`` or a range ``"START:STOP:STEP UNIT"`` (inclusive of STOP when it falls on a step).

    In a list of numbers whose last one carries a unit (``"8000, 16000 h"``) the
    unit applies to every number.
    """
    text = text.strip()
    rng = re.fullmatch(r"([-+0-9.eE]+):([-+0-9.eE]+):([-+0-9.eE]+)\s*(.*)", text)
    if rng:
        try:
            start, stop, step = (float(rng.group(k)) for k in (1, 2, 3))
        except ValueError:
            raise InputError(where, f"expected START:STOP:STEP [unit], got {text!r}") from None
        if not all(math.isfinite(x) for x in (start, stop, step)):
            raise InputError(where, f"expected finite START, STOP and STEP, got {text!r}")
        if step <= 0 or stop < start:
            raise InputError(where, f"expected STOP >= START and STEP > 0, got {text!r}")
        count = (stop - start) / step + 1e-9 + 1
        if not count <= 1000:
            raise InputError(where, f"the range gives {count:.4g} values; expected at most 1000")
        n = int(count)
        unit = rng.group(4).strip()
        values = [start + k * step for k in range(n)]
        return [f"{v:g} {unit}" if unit else (int(v) if float(v).is_integer() else v) for v in values]
    parts = [p for p in (s.strip() for s in _split_top(text)) if p]
    if not parts:
        raise InputError(where, "expected at least one value")
    last = re.fullmatch(rf"({_NUMBER})\s*([A-Za-z%µ°].*)", parts[-1])
    if last and len(parts) > 1 and all(re.fullmatch(_NUMBER, p) for p in parts[:-1]):
        parts = [f"{p} {last.group(2)}" for p in parts[:-1]] + [parts[-1]]
    return [parse_value(p) for p in parts]


def _split_top(text: str) -> list[str]:
    """Split on commas outside braces, brackets and quotes."""
    out: list[str] = []
    cur: list[str] = []
    depth, quote = 0, ""
    for ch in text:
        if quote:
            quote = "" if ch == quote else quote
        elif ch in "\"'":
            quote = ch
        elif ch in "{[":
            depth += 1
        elif ch in "}]":
            depth -= 1
        elif ch == "," and depth == 0:
            out.append("".join(cur))
            cur = []
            continue
        cur.append(ch)
    out.append("".join(cur))
    return out


def value_label(value: Any) -> str:
    """A short text for a --vary value: dicts as k=v lists, the rest as str()."""
    if isinstance(value, dict):
        return ", ".join(f"{k}={value_label(v)}" for k, v in value.items())
    return str(value)


def build_variant(document: Mapping[str, Any], overrides: Sequence[tuple[str, Any]], name: str,
                  source: str, digest: str, description: str = "") -> Variant:
    """Apply overrides to a document and validate the result."""
    doc = {k: v for k, v in document.items() if k != "variant"}
    for path, value in overrides:
        doc = set_path(doc, path, value, where=f"{source}: variant {name!r}: {path}")
    try:  # the base case (no overrides) is named as the file is
        label = f"{source} [{name}]" if overrides else source
        sc = build_scenario(doc, source=label, digest=digest)
    except InputError as exc:
        raise InputError(exc.where, exc.expected) from None
    return Variant(name=name, overrides=tuple(overrides), scenario=sc, description=description)


#: Longest variant description, characters.
MAX_DESCRIPTION = 2000


def file_variants(document: Mapping[str, Any], source: str, digest: str) -> list[Variant]:
    """The base case and the ``[[variant]]`` entries of a scenario document."""
    base_name = BASE_NAME
    raw = document.get("variant", [])
    if not isinstance(raw, list):
        raise InputError(f"{source}: variant", "expected [[variant]] tables")
    out = [build_variant(document, [], base_name, source, digest)]
    seen = {base_name}
    for i, entry in enumerate(raw):
        where = f"{source}: variant[{i}]"
        if not isinstance(entry, dict):
            raise InputError(where, "expected a table with name and set")
        extra = set(entry) - {"name", "set", "description"}
        if extra:
            raise InputError(f"{where}.{sorted(extra)[0]}", "expected only name, set and description")
        name = entry.get("name")
        if not isinstance(name, str) or not name.strip() or not name.isprintable():
            raise InputError(f"{where}.name", f"expected a non-empty printable name, "
                                              f"got {show(name)}")
        if name in seen:
            raise InputError(f"{where}.name", f"expected a unique name, {name!r} is used twice")
        seen.add(name)
        description = entry.get("description", "")
        if not isinstance(description, str):
            raise InputError(f"{where}.description", f"expected text, got {show(description)}")
        if len(description) > MAX_DESCRIPTION:
            raise InputError(f"{where}.description", f"expected at most {MAX_DESCRIPTION} "
                                                     f"characters, got {len(description)}")
        sets = entry.get("set", {})
        if not isinstance(sets, dict) or not sets:
            raise InputError(f"{where}.set", "expected a table of key paths and values")
        out.append(build_variant(document, list(sets.items()), name, source, digest,
                                 " ".join(description.split())))
    return out


def grid_variants(document: Mapping[str, Any], varies: Sequence[tuple[str, list[Any]]],
                  source: str, digest: str) -> list[Variant]:
    """Every combination of the ``--vary`` values (a grid), in order.

    A variant is named by the keys that take more than one value; a key given
    a single value is a setting of every variant and stays out of the names.
    """
    out = []
    keys = [k for k, _ in varies]
    named = [len(vals) > 1 for _, vals in varies]
    for combo in itertools.product(*[vals for _, vals in varies]):
        pairs = list(zip(keys, combo, strict=True))
        shown = [(k, v) for (k, v), n in zip(pairs, named, strict=True) if n] or pairs
        name = "; ".join(f"{k}={value_label(v)}" for k, v in shown)
        out.append(build_variant(document, pairs, name, source, digest))
    return out


def _same(a: Scenario, b: Scenario) -> bool:
    return dataclasses.replace(a, source="") == dataclasses.replace(b, source="")


def with_baseline(document: Mapping[str, Any], variants: Sequence[Variant], source: str,
                  digest: str, baseline: str | None = None) -> tuple[list[Variant], int]:
    """The variants with the file's base case among them, and the baseline's index.

    The base case (the file as it is, :data:`BASE_NAME`) is put first unless a
    variant already is the same scenario (then that variant is the base case,
    and its name says so).
    ``baseline`` names another variant to measure against instead.

    Raises
    ------
    InputError
        At ``--baseline`` when no variant has that name.
    """
    out = list(variants)
    base = build_variant(document, [], BASE_NAME, source, digest)
    same = [k for k, v in enumerate(out) if _same(v.scenario, base.scenario)]
    if same:
        index = same[0]
        if out[index].name != BASE_NAME:  # a swept value that is the file's own
            out[index] = dataclasses.replace(out[index],
                                             name=f"{out[index].name} ({BASE_CASE_WORDS})")
    else:
        out.insert(0, base)
        index = 0
    if baseline is None:
        return out, index
    names = [v.name for v in out]
    if baseline not in names:
        raise InputError("--baseline", f"expected a variant name, got {baseline!r} "
                                       f"(variants: {', '.join(names)})")
    return out, names.index(baseline)
