"""``[[field_factor]]`` and ``[[fitted_life]]`` entries, and the ``include`` list that brings them in.

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

``fleetsim fit RECORDS --life-out FILE.toml`` writes ``[[fitted_life]]``
entries instead: the recommended Weibull of each group (``shape``, ``scale``,
``location`` with units) with the ``covariance`` of (ln scale, ln shape) from
the fit. Such an entry replaces the life of the positions it names (their
loads, speed and lubrication no longer count); the covariance is used by
``run --parameter-uncertainty``.

An entry that names no position, two entries that name the same position, or
an entry for a position that has its own ``field_factor`` (or ``life``) are
errors: every factor and life comes from one place. An included file may hold
only these two kinds of entries.
"""

from __future__ import annotations

import copy
import hashlib
from collections.abc import Mapping
from pathlib import Path
from typing import Any

from fleetsim.errors import InputError
from fleetsim.scenario.reader import Table, join, show

#: Keys of a ``[[fitted_life]]`` entry (``fleetsim fit --life-out``).
FITTED_LIFE_KEYS = (
    "position", "bearing", "machines", "model", "shape", "scale", "location", "covariance",
    "failures",
)  # fmt: skip

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
    entries = {k: list(doc.get(k, []) or []) for k in ("field_factor", "fitted_life")}
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
        from fleetsim.scenario.loader import parse_toml  # the one TOML reader (loader uses us)

        included = parse_toml(text, str(path))
        other = sorted(set(included) - {"field_factor", "fitted_life"})
        if other:
            raise InputError(
                f"{path}: {other[0]}",
                "an included file may hold only [[field_factor]] and [[fitted_life]] entries",
            )
        for section in ("field_factor", "fitted_life"):
            more = included.get(section, [])
            if not isinstance(more, list):
                raise InputError(f"{path}: {section}", f"expected [[{section}]] entries")
            entries[section] += more
        prints.append(hashlib.sha256(text.encode()).hexdigest())
    for section, items in entries.items():
        if items:
            doc[section] = items
    return doc, "".join(prints)


def _names(p: Mapping[str, Any], entry: Table) -> bool:
    pid = p.get("id")
    position = entry.text("position")
    if not isinstance(pid, str) or pid.split("#", 1)[0] != position:
        return False
    return not (entry.has("bearing") and p.get("bearing") != entry.text("bearing"))


#: Position keys that a fitted life replaces (the life is no longer derived from them).
_DERIVATION_KEYS = (
    "radial_load", "radial_load_b", "axial_load", "speed", "duty", "application_factor",
    "rotation_factor", "viscosity_ratio", "contamination", "arrangement",
)  # fmt: skip


def _fitted_life(entry: Table) -> dict[str, Any]:
    """The position ``life`` table of a ``[[fitted_life]]`` entry, its values checked."""
    entry.number("shape", minimum=0.0, exclusive_minimum=True, what="a Weibull shape")
    life: dict[str, Any] = {"shape": entry.raw("shape")}
    for key in ("scale", "location"):
        if entry.has(key):
            entry.quantity(key, "time", positive=key == "scale")
            life[key] = entry.raw(key)
        elif key == "scale":
            raise entry.error("scale", "expected the fitted scale with a unit, e.g. \"75000 h\"")
    if entry.has("covariance"):
        cov = entry.raw("covariance")
        ok = (
            isinstance(cov, list) and len(cov) == 2
            and all(isinstance(r, list) and len(r) == 2 for r in cov)
            and all(isinstance(v, (int, float)) for r in cov for v in r)
        )  # fmt: skip
        if not ok or not (cov[0][0] > 0 and cov[1][1] > 0 and cov[0][1] == cov[1][0]):
            raise entry.error(
                "covariance",
                "expected [[var ln scale, cov], [cov, var ln shape]] with positive variances",
            )
    return life


def apply_field_factors(document: Mapping[str, Any], source: str) -> dict[str, Any]:
    """The document with each ``[[field_factor]]`` and ``[[fitted_life]]`` entry applied.

    A ``[[field_factor]]`` entry sets ``field_factor`` on the positions it
    names; a ``[[fitted_life]]`` entry sets their ``life`` to the fitted
    Weibull and drops the keys the life was derived from (loads, speed,
    duty, lubrication, arrangement).

    Raises
    ------
    InputError
        With the entry's key path: a bad value, no position named, a position
        named twice, a position with its own ``field_factor`` (or ``life``),
        or a position named by both kinds of entry.
    """
    sections = [k for k in ("fitted_life", "field_factor") if document.get(k)]
    doc = {k: v for k, v in document.items() if k not in ("field_factor", "fitted_life")}
    if not sections:
        return doc
    doc = copy.deepcopy(doc)
    claimed: dict[tuple[int, int], str] = {}
    machines = doc.get("machine", [])
    for section in sections:
        keys = FIELD_FACTOR_KEYS if section == "field_factor" else FITTED_LIFE_KEYS
        root = Table({section: document[section]}, "", source, (section,))
        for entry in root.tables(section, keys):
            if section == "field_factor":
                value: Any = entry.number(
                    "factor", minimum=0.0, exclusive_minimum=True, what="a field factor"
                )
                for key in ("lower", "upper"):
                    if entry.has(key):
                        entry.number(
                            key, minimum=0.0, exclusive_minimum=True, what="a bound of the factor"
                        )
                if entry.has("confidence"):
                    entry.number("confidence", minimum=0.5, maximum=1.0, what="a two-sided level")
                target = "field_factor"
            else:
                value, target = _fitted_life(entry), "life"
            _apply(entry, machines, claimed, target, value)
    return doc


def _apply(
    entry: Table, machines: Any, claimed: dict[tuple[int, int], str], target: str, value: Any
) -> None:
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
            if target in p:
                raise entry.error(
                    "position",
                    f"{where} ({m.get('id')}/{p.get('id')}) has its own {target}; "
                    f"remove it or this entry, so the {target} comes from one place",
                )
            if (i, j) in claimed:
                raise entry.error("position", f"{where} is already named by {claimed[(i, j)]}")
            claimed[(i, j)] = entry.path
            if target == "life":
                for key in _DERIVATION_KEYS:
                    p.pop(key, None)
            p[target] = value
            hits += 1
    if hits == 0:
        raise entry.error(
            "position",
            f"no position {entry.text('position')!r}"
            + (f" with bearing {entry.text('bearing')!r}" if entry.has("bearing") else "")
            + (f" in machines {only}" if only is not None else "")
            + " in the scenario",
        )
