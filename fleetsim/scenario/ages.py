"""Current ages of a fleet's bearing positions, read from a records file (CSV).

A fleet is rarely new. A ``[[machine]]`` may take the operating age of each of
its positions at the start of the study from a CSV file::

    [[machine]]
    id = "conveyor"
    starting_age = "8000 h"              # positions without a row
    ages = "records/conveyor_ages.csv"   # relative to the scenario file

Columns (header in the first non-comment line; names are case-insensitive):

``unit`` (required)
    A unit id (``pump#2``), or the machine id: the unit itself when
    ``count = 1``, every unit of the machine otherwise.
``position`` (required)
    A position id; for a position with ``count``, one copy (``idler#17``) or
    the base id (``idler``) for every copy.
``hours`` (required)
    Operating hours of the bearing now in that position since it was fitted,
    a bare number (``12000``): the same convention as the records of
    ``fleetsim fit``. No unit is taken, because these are operating hours,
    never calendar time.
``note`` (optional)
    Kept for the reader, not used.

Lines starting with ``#`` are comments; any other column is an error. A row
about one unit or one copy overrides a row about every unit or every copy,
whatever their order (the unit counts before the position); the same unit and
position given twice is an error. Positions without a row keep the machine's
``starting_age``. Several machines may read the same file: each takes the rows
of its own units, and a row about a unit of a machine that does not read the
file is an error. Errors name the file, the row (its line number, as a
spreadsheet shows it) and the column.
"""

from __future__ import annotations

import dataclasses
import math
import re
from dataclasses import dataclass
from os import PathLike
from pathlib import Path

import numpy as np

from fleetsim.csvtable import read_rows
from fleetsim.errors import InputError
from fleetsim.scenario.model import Machine
from fleetsim.scenario.reader import Table, suggest

AGE_COLUMNS = ("unit", "position", "hours")
OPTIONAL_AGE_COLUMNS = ("note",)
_LABEL = re.compile(r" \[")


@dataclass(frozen=True)
class AgeRecord:
    """One row of an ages file: ``hours`` operating hours of ``position`` on ``unit``."""

    row: int
    unit: str
    position: str
    hours: float


def scenario_folder(source: str, base_dir: str | PathLike[str] | None = None) -> Path:
    """The folder that file names inside a scenario are relative to.

    ``base_dir`` when given; else the folder of ``source`` when it names a file,
    also when a label follows it (``"plant.toml [variant]"``, as
    :mod:`fleetsim.study.variants` names its scenarios); else the working folder.
    """
    if base_dir is not None:
        return Path(base_dir)
    if source.startswith("<"):
        return Path(".")
    candidates = [source] + [source[: m.start()] for m in _LABEL.finditer(source)]
    for name in candidates:
        try:
            if Path(name).is_file():
                return Path(name).parent
        except (OSError, ValueError):
            continue
    return Path(source).parent


def read_age_records(path: str | PathLike[str]) -> list[AgeRecord]:
    """Read an ages CSV (see the module docstring for the columns).

    Raises
    ------
    InputError
        One line naming the file, row and column of the first problem:
        unreadable file, missing, unknown or repeated column, an empty unit or
        position, hours that are not a bare number or are negative.
    """
    src = str(path)
    _header, _row, rows = read_rows(
        path, AGE_COLUMNS, OPTIONAL_AGE_COLUMNS, what="ages", header_hint="unit, position, hours"
    )
    out: list[AgeRecord] = []
    for line_no, rec in rows:
        for col in ("unit", "position"):
            if not rec[col]:
                raise InputError(f"{src}: row {line_no}, column {col}", f"expected a {col} id")
        out.append(AgeRecord(line_no, rec["unit"], rec["position"], _hours(src, line_no, rec)))
    if not out:
        raise InputError(src, "has a header but no rows")
    return out


def _hours(src: str, row: int, rec: dict[str, str]) -> float:
    raw = rec["hours"]
    where = f"{src}: row {row}, column hours"
    if raw == "":
        raise InputError(where, "expected operating hours, got an empty cell")
    try:
        value = float(raw.replace("_", ""))
    except ValueError:
        hint = " (a bare number of operating hours, no unit)" if re.match(r"^[-+.\d]", raw) else ""
        raise InputError(where, f"expected a number of operating hours{hint}, got {raw!r}") from None
    if not math.isfinite(value) or value < 0:
        raise InputError(where, f"expected operating hours >= 0, got {raw!r}")
    return value


def apply_ages(
    tables: list[Table], machines: tuple[Machine, ...], folder: Path
) -> tuple[Machine, ...]:
    """Give each machine whose table says ``ages = "file.csv"`` its per-position ages.

    Parameters
    ----------
    tables
        The ``[[machine]]`` tables, in the order of ``machines``.
    machines
        The machines read from them (with ``starting_age_h``, no ages yet).
    folder
        Folder the file names are relative to (see :func:`scenario_folder`).

    Raises
    ------
    InputError
        A missing or unreadable file at the machine's ``ages`` key; a bad row
        at the file, row and column.
    """
    files: dict[Path, list[int]] = {}
    for i, t in enumerate(tables):
        if not t.has("ages"):
            continue
        name = t.text("ages")
        if not name.strip():
            raise t.error("ages", "expected the name of a CSV file, got ''")
        path = folder / name
        try:
            ok = path.is_file()
        except (OSError, ValueError):
            ok = False
        if not ok:
            raise t.error(
                "ages", f"no such file {str(path)!r} (the name is relative to the scenario file)"
            )
        files.setdefault(path, []).append(i)
    if not files:
        return machines
    out = list(machines)
    for path, readers in files.items():
        records = read_age_records(path)
        for i, ages in _distribute(str(path), records, machines, readers).items():
            out[i] = dataclasses.replace(
                machines[i],
                position_ages_h=tuple(tuple(float(a) for a in row) for row in ages),
                ages_source=str(path),
            )
    return tuple(out)


def _distribute(
    src: str, records: list[AgeRecord], machines: tuple[Machine, ...], readers: list[int]
) -> dict[int, np.ndarray]:
    """The ages array of each machine in ``readers`` from the rows of one file."""
    # unit id → (machine index, unit number or None for every unit, specific?)
    units: dict[str, tuple[int, int | None]] = {}
    owner: dict[str, str] = {}
    for i, m in enumerate(machines):
        for unit_no, uid in enumerate(m.unit_ids()):
            owner[uid] = m.id
            if i in readers:
                units[uid] = (i, unit_no)
        owner.setdefault(m.id, m.id)
        if i in readers and m.id not in units:
            units[m.id] = (i, None)
    ages = {i: machines[i].ages_h() for i in readers}
    rank = {i: np.full(ages[i].shape, -1, dtype=int) for i in readers}
    positions = {i: _position_index(machines[i]) for i in readers}
    seen: dict[tuple[int, int | None, tuple[int, ...]], int] = {}
    for rec in records:
        if rec.unit not in units:
            raise InputError(f"{src}: row {rec.row}, column unit", _unknown_unit(rec, owner, units))
        i, u = units[rec.unit]
        m = machines[i]
        cols = positions[i].get(rec.position)
        if cols is None:
            raise InputError(
                f"{src}: row {rec.row}, column position",
                f"no position {rec.position!r} on machine {m.id!r}"
                f"{suggest(rec.position, positions[i])}",
            )
        key = (i, u, cols)
        if key in seen:
            raise InputError(
                f"{src}: row {rec.row}, column position",
                f"unit {rec.unit!r}, position {rec.position!r} is already given at row {seen[key]}",
            )
        seen[key] = rec.row
        level = 2 * (u is not None) + (len(cols) == 1)
        rows = [u] if u is not None else list(range(m.count))
        sub = np.ix_(rows, list(cols))
        better = rank[i][sub] < level
        ages[i][sub] = np.where(better, rec.hours, ages[i][sub])
        rank[i][sub] = np.where(better, level, rank[i][sub])
    return ages


def _position_index(machine: Machine) -> dict[str, tuple[int, ...]]:
    """Position ids and base ids of numbered copies → position indexes."""
    out: dict[str, tuple[int, ...]] = {}
    bases: dict[str, list[int]] = {}
    for j, p in enumerate(machine.positions):
        out[p.id] = (j,)
        if "#" in p.id:
            bases.setdefault(p.id.split("#")[0], []).append(j)
    for base, js in bases.items():
        out.setdefault(base, tuple(js))  # a position of its own with that id comes first
    return out


def _unknown_unit(
    rec: AgeRecord, owner: dict[str, str], units: dict[str, tuple[int, int | None]]
) -> str:
    if rec.unit in owner:
        return (
            f"unit {rec.unit!r} belongs to machine {owner[rec.unit]!r}, which does not take "
            "its ages from this file (give it the same ages = ... to use these rows)"
        )
    return f"no unit {rec.unit!r} among the machines that read this file{suggest(rec.unit, units)}"
