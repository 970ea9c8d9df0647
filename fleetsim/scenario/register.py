"""An asset register (CSV or XLSX) and a bearing catalogue → a commented scenario file.

Plants keep their machines in a spreadsheet: one row per machine position.
:func:`import_register` turns such a register, the bearing catalogue (the
CSV of ``fleetsim size --catalog``, with an optional ``lead_time_d``
column) and, optionally, a settings file (the scenario's other sections:
``[study]``, ``[costs]``, ``[life]``, ``[policy]``, ``[stores]``,
``[crews]``, ``[[group]]``, ``[[variant]]``) into the text of a scenario
and of its ages file. It writes no file itself.

Register columns (header in the first row; names are case-insensitive; the
unit is in the name):

``machine``, ``position`` (required)
    Machine id and position id, as the scenario will call them.
``bearing``
    Bearing designation, one of the catalogue's (required on every row that
    defines a position).
``count``
    Identical positions (``carry-idler`` with count 96 → ``carry-idler#1 … #96``).
``radial_load_kn``, ``axial_load_kn``, ``speed_rpm``, ``application_factor``
    Loads and speed; several rows of one machine and position with a
    ``duty_share`` each are the steps of a duty cycle.
``arrangement``, ``radial_load_b_kn``
    A bearing arrangement (``face-to-face``, ...) and the radial load of its
    bearing B, as in the scenario.
``life_shape``, ``life_scale_h``, ``life_location_h``
    An explicit life (a field fit) instead of loads and speed.
``policy``
    A policy kind (``run-to-failure``) or a policy in the scenario's inline
    form (``{ kind = "block", interval = "3 years" }``); empty: the default.
``field_factor``
    As in the scenario.
``operating_hours_per_year``
    Running hours per year of the machine (one value per machine).
``hours_since_change``
    Operating hours of the bearing now fitted (goes to the ages file). A row
    whose position names one copy (``carry-idler#17``) and gives only this
    column sets that copy's age.
``note``
    Kept as a comment.

Every error is one line naming the file, sheet, row and column.
"""

from __future__ import annotations

import csv
import io
import math
import re
from dataclasses import dataclass
from os import PathLike
from pathlib import Path
from typing import Any

from fleetsim.errors import InputError
from fleetsim.life.sizing import CatalogueEntry, read_catalogue
from fleetsim.scenario.loader import parse_toml, read_text
from fleetsim.spreadsheet import read_table, where

REQUIRED = ("machine", "position")
OPTIONAL = (
    "bearing",
    "count",
    "radial_load_kn",
    "radial_load_b_kn",
    "axial_load_kn",
    "speed_rpm",
    "duty_share",
    "application_factor",
    "arrangement",
    "life_shape",
    "life_scale_h",
    "life_location_h",
    "policy",
    "field_factor",
    "operating_hours_per_year",
    "hours_since_change",
    "note",
)
#: Columns that define a position (a row with none of them only sets an age).
_DEFINING = tuple(
    c for c in OPTIONAL if c not in ("operating_hours_per_year", "hours_since_change", "note")
)
_SETTINGS_FORBIDDEN = ("bearing", "machine")


@dataclass(frozen=True)
class ImportedScenario:
    """The text of an imported scenario and of its ages file.

    Attributes
    ----------
    scenario_toml
        The scenario, commented.
    ages_csv
        The ages file (``unit, position, hours``), or None when the register
        gives no ages.
    ages_name
        The ages file's name as the scenario refers to it.
    machines, positions
        Counts for the summary line.
    """

    scenario_toml: str
    ages_csv: str | None
    ages_name: str
    machines: int
    positions: int


def _number(src: str, sheet: str | None, row: int, col: str, raw: str, *, positive: bool) -> str:
    """The cell's text after checking it is a number (> 0 or >= 0)."""
    try:
        value = float(raw.replace("_", ""))
    except ValueError:
        raise InputError(where(src, row, col, sheet), f"expected a number, got {raw!r}") from None
    if not math.isfinite(value) or value < 0 or (positive and value == 0):
        bound = "> 0" if positive else ">= 0"
        raise InputError(where(src, row, col, sheet), f"expected a number {bound}, got {raw!r}")
    return raw.replace("_", "")


def _plain(src: str, sheet: str | None, row: int, col: str, raw: str) -> str:
    """An id or word written into the scenario in quotes: no quote, backslash or control character."""
    if re.search(r'["\\\x00-\x1f\x7f]', raw):
        raise InputError(
            where(src, row, col, sheet), f"expected a name without quotes or line breaks, got {raw!r}"
        )
    return raw


def _policy(src: str, sheet: str | None, row: int, raw: str) -> str:
    text = raw.strip()
    cell = where(src, row, "policy", sheet)
    if not text.startswith("{"):
        if not re.fullmatch(r"[A-Za-z][A-Za-z-]*", text):
            raise InputError(
                cell, f"expected a policy kind or an inline table {{ kind = ... }}, got {raw!r}"
            )
        return f'{{ kind = "{text}" }}'
    doc = parse_toml(f"p = {text}\n", cell)
    if not isinstance(doc.get("p"), dict) or len(doc) != 1:
        raise InputError(cell, f"expected one inline table {{ kind = ... }}, got {raw!r}")
    return text


def _catalogue(path: str | PathLike[str]) -> tuple[dict[str, CatalogueEntry], dict[str, str]]:
    """The catalogue by designation, and lead times in days where the file gives them."""
    entries = {e.designation: e for e in read_catalogue(Path(path))}
    leads: dict[str, str] = {}
    text = Path(path).read_text(encoding="utf-8")
    for i, row in enumerate(csv.DictReader(io.StringIO(text)), start=2):
        raw = (row.get("lead_time_d") or "").strip()
        if raw:
            leads[row["designation"].strip()] = _number(
                str(path), None, i, "lead_time_d", raw, positive=True
            )
    return entries, leads


def _kn(value: float | None) -> str:
    return f"{value / 1e3:.15g} kN" if value is not None else ""


def _bearing_block(e: CatalogueEntry, lead_d: str | None) -> list[str]:
    lines = ["[[bearing]]", f'id = "{e.designation}"', f'type = "{e.bearing_type.value}"']
    lines.append(f'dynamic_rating = "{_kn(e.dynamic_rating_N)}"')
    if e.static_rating_N is not None:
        lines.append(f'static_rating = "{_kn(e.static_rating_N)}"')
    if e.fatigue_limit_N is not None:
        lines.append(f'fatigue_limit = "{_kn(e.fatigue_limit_N)}"')
    if e.factors is not None:
        lines += [f"e = {e.factors.e:.15g}", f"X = {e.factors.X:.15g}", f"Y = {e.factors.Y:.15g}"]
    if e.price is not None:
        lines.append(f"price = {e.price:.15g}")
    if lead_d is not None:
        lines.append(f'lead_time = "{lead_d} d"')
    return lines


@dataclass
class _Position:
    machine: str
    id: str
    row: int
    bearing: str
    fields: dict[str, str]
    duty: list[dict[str, str]]
    note: str


def import_register(
    register: str | PathLike[str],
    catalogue: str | PathLike[str],
    *,
    settings: str | PathLike[str] | None = None,
    ages_name: str = "ages.csv",
    sheet: str | None = None,
) -> ImportedScenario:
    """Build a scenario's text from an asset register and a catalogue.

    Parameters
    ----------
    register
        The asset register, ``.csv`` or ``.xlsx`` (columns in the module docstring).
    catalogue
        The bearing catalogue CSV (``designation, type, dynamic_rating_kN, ...``,
        optionally ``lead_time_d``).
    settings
        A TOML file with the scenario's other sections, copied verbatim
        (comments kept); without it a ``[study]`` to edit is written.
    ages_name
        Name of the ages file, relative to the scenario.
    sheet
        The workbook's sheet (XLSX; default the first).

    Raises
    ------
    InputError
        Naming the file, sheet, row and column of the first problem.
    """
    src = str(register)
    _, _, rows, sheet_name = read_table(
        register, REQUIRED, OPTIONAL, what="asset register",
        header_hint="machine, position, bearing, ...", sheet=sheet,
    )  # fmt: skip
    if not rows:
        raise InputError(src, "has a header but no machine positions")
    cat, leads = _catalogue(catalogue)
    machines: dict[str, dict[str, Any]] = {}
    ages: list[tuple[str, str, str]] = []
    for row, rec in rows:
        mid, pid = rec["machine"], rec["position"]
        for col, val in (("machine", mid), ("position", pid)):
            if not val:
                raise InputError(where(src, row, col, sheet_name), "expected an id, got an empty cell")
            _plain(src, sheet_name, row, col, val)
        for col in ("bearing", "arrangement"):
            if rec.get(col):
                _plain(src, sheet_name, row, col, rec[col])
        if rec.get("note"):
            rec = {**rec, "note": " ".join(rec["note"].split())}
        m = machines.setdefault(mid, {"hours": None, "positions": {}, "row": row})
        if rec.get("operating_hours_per_year"):
            hours = _number(src, sheet_name, row, "operating_hours_per_year",
                            rec["operating_hours_per_year"], positive=True)  # fmt: skip
            if m["hours"] not in (None, hours):
                raise InputError(
                    where(src, row, "operating_hours_per_year", sheet_name),
                    f"machine {mid!r} already runs {m['hours']} h per year (row {m['row']})",
                )
            m["hours"] = hours
        if rec.get("hours_since_change"):
            h = _number(src, sheet_name, row, "hours_since_change", rec["hours_since_change"],
                        positive=False)  # fmt: skip
            ages.append((mid, pid, h))
        defining = any(rec.get(c) for c in _DEFINING)
        if not defining:
            if not rec.get("hours_since_change"):
                raise InputError(
                    where(src, row, None, sheet_name),
                    "expected a bearing and loads (or a life), or hours_since_change",
                )
            continue
        if "#" in pid:
            raise InputError(
                where(src, row, "position", sheet_name),
                f"{pid!r} names one copy: such a row may give only hours_since_change; "
                "define the position once with count",
            )
        bid = rec.get("bearing", "")
        if not bid:
            raise InputError(where(src, row, "bearing", sheet_name), "expected a bearing designation")
        if bid not in cat:
            raise InputError(
                where(src, row, "bearing", sheet_name),
                f"no bearing {bid!r} in the catalogue {catalogue}",
            )
        step = {
            c: rec[c]
            for c in ("radial_load_kn", "radial_load_b_kn", "axial_load_kn", "speed_rpm")
            if rec.get(c)
        }
        for c, v in step.items():
            _number(src, sheet_name, row, c, v, positive=c == "speed_rpm")
        pos: _Position | None = m["positions"].get(pid)
        if rec.get("duty_share"):
            share = _number(src, sheet_name, row, "duty_share", rec["duty_share"], positive=True)
            if pos is not None and not pos.duty:
                raise InputError(
                    where(src, row, "duty_share", sheet_name),
                    f"position {mid}/{pid} is already defined without a duty cycle (row {pos.row})",
                )
            if pos is None:
                pos = _Position(mid, pid, row, bid, {}, [], rec.get("note", ""))
                m["positions"][pid] = pos
            elif pos.bearing != bid:
                raise InputError(
                    where(src, row, "bearing", sheet_name),
                    f"the duty steps of {mid}/{pid} name bearings {pos.bearing!r} and {bid!r}",
                )
            pos.duty.append({"share": share, **step})
        else:
            if pos is not None:
                raise InputError(
                    where(src, row, "position", sheet_name),
                    f"position {mid}/{pid} is defined twice (row {pos.row}); duty steps need duty_share",
                )
            pos = _Position(mid, pid, row, bid, step, [], rec.get("note", ""))
            m["positions"][pid] = pos
        for c in ("count", "application_factor", "field_factor", "life_shape", "life_scale_h",
                  "life_location_h"):  # fmt: skip
            if rec.get(c):
                pos.fields[c] = _number(src, sheet_name, row, c, rec[c], positive=c != "life_location_h")
        if rec.get("policy"):
            pos.fields["policy"] = _policy(src, sheet_name, row, rec["policy"])
        if rec.get("arrangement"):
            pos.fields["arrangement"] = rec["arrangement"].strip()
    for mid, m in machines.items():
        if not m["positions"]:
            raise InputError(where(src, m["row"], "machine", sheet_name),
                             f"machine {mid!r} has no position defined")  # fmt: skip
    return _write(src, str(catalogue), settings, machines, ages, cat, leads, ages_name)


def _position_lines(p: _Position) -> list[str]:
    out = []
    if p.note:
        out.append(f"  # {p.note}")
    out += ["  [[machine.position]]", f'  id = "{p.id}"']
    if "count" in p.fields:
        out.append(f"  count = {p.fields['count']}")
    out.append(f'  bearing = "{p.bearing}"')
    if "life_shape" in p.fields:
        life = f"shape = {p.fields['life_shape']}"
        if "life_scale_h" in p.fields:
            life += f', scale = "{p.fields["life_scale_h"]} h"'
        if "life_location_h" in p.fields:
            life += f', location = "{p.fields["life_location_h"]} h"'
        out.append(f"  life = {{ {life} }}")
    if "arrangement" in p.fields:
        out.append(f'  arrangement = "{p.fields["arrangement"]}"')
    names = {"radial_load_kn": ("radial_load", "kN"), "radial_load_b_kn": ("radial_load_b", "kN"),
             "axial_load_kn": ("axial_load", "kN"), "speed_rpm": ("speed", "rpm")}  # fmt: skip
    if p.duty:
        out.append("  duty = [")
        for st in p.duty:
            parts = [f"share = {st['share']}"]
            parts += [f'{names[c][0]} = "{st[c]} {names[c][1]}"' for c in names if c in st]
            out.append("    { " + ", ".join(parts) + " },")
        out.append("  ]")
    else:
        out += [f'  {names[c][0]} = "{p.fields[c]} {names[c][1]}"' for c in names if c in p.fields]
    if "application_factor" in p.fields:
        out.append(f"  application_factor = {p.fields['application_factor']}")
    if "field_factor" in p.fields:
        out.append(f"  field_factor = {p.fields['field_factor']}")
    if "policy" in p.fields:
        out.append(f"  policy = {p.fields['policy']}")
    return out


def _write(
    src: str,
    catalogue: str,
    settings: str | PathLike[str] | None,
    machines: dict[str, dict[str, Any]],
    ages: list[tuple[str, str, str]],
    cat: dict[str, CatalogueEntry],
    leads: dict[str, str],
    ages_name: str,
) -> ImportedScenario:
    n_pos = sum(len(m["positions"]) for m in machines.values())
    head = [
        f"# Scenario imported by fleetsim from the asset register {src}",
        f"# and the bearing catalogue {catalogue}: {len(machines)} machine(s), {n_pos} position(s).",
        "# Check it with `fleetsim check` before use. Planning estimates only.",
        "",
    ]
    if settings is not None:
        text = _settings_text(settings)
        head += [f"# ---- settings from {settings} ----", text.rstrip(), ""]
    else:
        head += [
            "[study]                          # edit: horizon, replications and seed of the study",
            f'name = "{Path(src).stem}"',
            'horizon = "10 years"',
            "replications = 200",
            "seed = 1",
            "",
        ]
    used = list(dict.fromkeys(p.bearing for m in machines.values() for p in m["positions"].values()))
    lines = head + [f"# ---- bearings (from {catalogue}) ----"]
    for bid in used:
        lines += _bearing_block(cat[bid], leads.get(bid)) + [""]
    aged = {mid for mid, _, _ in ages}
    lines.append(f"# ---- machines (from {src}) ----")
    for mid, m in machines.items():
        lines += ["[[machine]]", f'id = "{mid}"']
        if m["hours"] is not None:
            lines.append(f'operating_hours_per_year = "{m["hours"]} h"')
        if mid in aged:
            lines.append(f'ages = "{ages_name}"            # hours of the bearings now fitted')
        lines.append("")
        for p in m["positions"].values():
            lines += _position_lines(p) + [""]
    ages_csv = None
    if ages:
        body = "\n".join(f"{mid},{pid},{h}" for mid, pid, h in ages)
        ages_csv = (
            f"# Ages of the bearings now fitted, from the asset register {src}.\n"
            f"unit,position,hours\n{body}\n"
        )
    return ImportedScenario(
        scenario_toml="\n".join(lines).rstrip() + "\n",
        ages_csv=ages_csv,
        ages_name=ages_name,
        machines=len(machines),
        positions=n_pos,
    )


def _settings_text(path: str | PathLike[str]) -> str:
    src = str(path)
    text = read_text(path).removeprefix("\ufeff")
    doc = parse_toml(text, src)
    for key in _SETTINGS_FORBIDDEN:
        if key in doc:
            raise InputError(
                f"{src}: {key}",
                "the settings file holds the scenario's other sections; bearings and machines "
                "come from the catalogue and the register",
            )
    return text
