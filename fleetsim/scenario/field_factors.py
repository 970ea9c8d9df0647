"""``[[field_factor]]`` entries and the ``include`` list that brings them in.

``fleetsim fit RECORDS --scenario SCEN --factors-out FILE.toml`` writes the
fitted field factors as a TOML snippet of ``[[field_factor]]`` entries; the
scenario takes them with a top-level ``include = ["FILE.toml"]`` (names
relative to the scenario's folder). Entries may also be written in the
scenario itself. Each entry sets ``field_factor`` on the positions it names:

``position`` (required)
    Position id; ``"motor-de"`` also names the expanded ``"motor-de#2"``.
``bearing`` (optional)
    Only positions fitted with this bearing id.
``machines`` (optional)
    Only positions of these machine ids.
``factor`` (required)
    The field factor (> 0).
``lower``, ``upper``, ``confidence``, ``failures`` (optional)
    The factor's bounds, their two-sided level and the failures behind it, as
    fitted; kept for the reader and for parameter uncertainty.

An entry that names no position, two entries that name the same position, or
an entry for a position that has its own ``field_factor`` are errors: every
factor comes from one place. An included file may hold only
``[[field_factor]]`` entries.
"""

from __future__ import annotations

import copy
import hashlib
import tomllib
from collections.abc import Mapping
from pathlib import Path
from typing import Any

from fleetsim.errors import InputError
from fleetsim.scenario.reader import Table, join, show

FIELD_FACTOR_KEYS = (
    "position",
    "bearing",
    "machines",
    "factor",
    "lower",
    "upper",
    "confidence",
    "failures",
)


def resolve_includes(
    document: Mapping[str, Any], source: str, folder: Path
) -> tuple[dict[str, Any], str]:
    """The document with the ``[[field_factor]]`` entries of its ``include`` files appended.

    Returns the new document (without ``include``) and a fingerprint of the
    included texts ('' when there are none).

    Raises
    ------
    InputError
        For an include that is not a list of file names, a missing or
        unreadable file, bad TOML, or an included file with other sections.
    """
    doc = dict(document)
    names = doc.pop("include", None)
    if names is None:
        return doc, ""
    if not (isinstance(names, list) and all(isinstance(n, str) for n in names)):
        raise InputError(
            f"{source}: include", f"expected a list of file names, got {show(names)}"
        )
    entries = list(doc.get("field_factor", []) or [])
    prints = []
    for i, name in enumerate(names):
        where = f"{source}: {join('include', i)}"
        path = folder / name
        try:
            text = path.read_text(encoding="utf-8")
        except FileNotFoundError:
            raise InputError(where, f"file {str(path)!r} not found") from None
        except (OSError, UnicodeDecodeError) as exc:
            raise InputError(where, f"cannot read {str(path)!r} ({exc})") from None
        try:
            included = tomllib.loads(text)
        except tomllib.TOMLDecodeError as exc:
            raise InputError(str(path), f"TOML syntax error: {exc}") from None
        other = sorted(set(included) - {"field_factor"})
        if other:
            raise InputError(
                f"{path}: {other[0]}",
                "an included file may hold only [[field_factor]] entries",
            )
        more = included.get("field_factor", [])
        if not isinstance(more, list):
            raise InputError(f"{path}: field_factor", "expected [[field_factor]] entries")
        entries += more
        prints.append(hashlib.sha256(text.encode()).hexdigest())
    doc["field_factor"] = entries
    return doc, "".join(prints)


def _names(p: Mapping[str, Any], entry: Table) -> bool:
    pid = p.get("id")
    position = entry.text("position")
    if not isinstance(pid, str) or pid.split("#", 1)[0] != position:
        return False
    return not (entry.has("bearing") and p.get("bearing") != entry.text("bearing"))


def apply_field_factors(document: Mapping[str, Any], source: str) -> dict[str, Any]:
    """The document with each ``[[field_factor]]`` entry written onto the positions it names.

    Raises
    ------
    InputError
        With the entry's key path: a bad value, no position named, a position
        named twice, or a position with its own ``field_factor``.
    """
    raw = document.get("field_factor")
    if not raw:
        return {k: v for k, v in document.items() if k != "field_factor"}
    doc = copy.deepcopy({k: v for k, v in document.items() if k != "field_factor"})
    root = Table({"field_factor": raw}, "", source, ("field_factor",))
    claimed: dict[tuple[int, int], str] = {}
    machines = doc.get("machine", [])
    for entry in root.tables("field_factor", FIELD_FACTOR_KEYS):
        factor = entry.number("factor", minimum=0.0, exclusive_minimum=True, what="a field factor")
        for key in ("lower", "upper"):
            if entry.has(key):
                entry.number(key, minimum=0.0, exclusive_minimum=True, what="a bound of the factor")
        if entry.has("confidence"):
            entry.number("confidence", minimum=0.5, maximum=1.0, what="a two-sided level")
        only = None
        if entry.has("machines"):
            only = entry.raw("machines")
            if not (isinstance(only, list) and all(isinstance(m, str) for m in only)):
                raise entry.error("machines", f"expected a list of machine ids, got {show(only)}")
        hits = 0
        for i, m in enumerate(machines if isinstance(machines, list) else []):
            if not isinstance(m, Mapping) or (only is not None and m.get("id") not in only):
                continue
            for j, p in enumerate(m.get("position", []) or []):
                if not (isinstance(p, dict) and _names(p, entry)):
                    continue
                where = f"machine[{i}].position[{j}]"
                if "field_factor" in p:
                    raise entry.error(
                        "position",
                        f"{where} ({m.get('id')}/{p.get('id')}) has its own field_factor; "
                        "remove it or this entry, so the factor comes from one place",
                    )
                if (i, j) in claimed:
                    raise entry.error(
                        "position", f"{where} is already named by {claimed[(i, j)]}"
                    )
                claimed[(i, j)] = entry.path
                p["field_factor"] = factor
                hits += 1
        if hits == 0:
            raise entry.error(
                "position",
                f"no position {entry.text('position')!r}"
                + (f" with bearing {entry.text('bearing')!r}" if entry.has("bearing") else "")
                + (f" in machines {only}" if only is not None else "")
                + " in the scenario",
            )
    return doc
