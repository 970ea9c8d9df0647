"""``fleetsim check``: validate a scenario file and show each position's life model."""

from __future__ import annotations

import json
import re
from collections.abc import Sequence
from typing import Any

import click
import numpy as np

from fleetsim import SAFETY_CAUTION
from fleetsim.cli.common import echo_json, fmt, table
from fleetsim.numbers import plural
from fleetsim.scenario import (
    HOURS_PER_YEAR,
    Duration,
    Machine,
    Policy,
    Position,
    Scenario,
)
from fleetsim.study.variants import Variant

_COPY = re.compile(r"^(?P<base>.+)#(?P<k>\d+)$")


def describe_duration(d: Duration | None) -> str:
    """A short text for a fixed or random duration."""
    if d is None:
        return "—"
    if d.kind == "fixed":
        return f"{d.value_h:g} h"
    if d.kind == "exponential":
        return f"exponential, mean {d.value_h:g} h"
    if d.kind == "lognormal":
        return f"lognormal, median {d.value_h:g} h, p90 {d.p90_h:g} h"
    return f"Weibull, shape {d.shape:g}, scale {d.value_h:g} h"


def describe_policy(p: Policy, pf_interval: Duration | None = None) -> str:
    """A short text for a maintenance policy (with the position's P-F interval)."""
    if p.kind == "run-to-failure":
        return "run to failure"
    if p.kind == "age":
        text = f"age {p.interval_h:,.0f} h"
    elif p.kind == "block":
        text = f"block {p.interval_h:,.0f} h calendar ({p.block_scope})"
    else:
        text = (
            f"inspect every {p.inspection_every_h:,.0f} h, P-F {describe_duration(pf_interval)}, "
            f"detection {p.detection:g}"
        )
    if p.opportunistic_share is not None:
        text += f", opportunistic ≥ {p.opportunistic_share:g}·interval"
    return text


def _policy_dict(p: Policy, pf_interval: Duration | None = None) -> dict[str, Any]:
    return {
        "kind": p.kind,
        "interval_h": p.interval_h,
        "block_scope": p.block_scope if p.kind == "block" else None,
        "inspection_every_h": p.inspection_every_h,
        "pf_interval_mean_h": None if pf_interval is None else pf_interval.mean_h,
        "detection": p.detection if p.kind == "condition" else None,
        "respond_within_h": p.respond_within_h if p.kind == "condition" else None,
        "opportunistic_share": p.opportunistic_share,
    }


#: Reliability of the remaining life shown by ``check``: the remaining L10.
REMAINING_RELIABILITY = 0.9


def position_ages(machine: Machine, index: int) -> tuple[list[float], list[float]]:
    """Starting age and remaining L10 of position ``index`` on each unit, hours.

    The remaining L10 is the life the bearing outlives with 90 % probability
    given that it has survived its starting age: R(a + t) / R(a) = 0.9.
    """
    ages = [machine.age_h(u, index) for u in range(machine.count)]
    life = machine.positions[index].life
    remaining = np.atleast_1d(life.remaining_life_at_reliability(REMAINING_RELIABILITY, np.array(ages)))
    return ages, remaining.tolist()


def position_row(
    scenario: Scenario, machine: Machine, pos: Position, index: int | None = None
) -> dict[str, Any]:
    """The derived life model of one position, as a JSON-ready dict.

    ``index`` is the position's index in ``machine.positions`` (looked up when
    None). ``starting_age_h`` and ``remaining_l10_h`` are lists with one value
    per unit, in the order of the machine's ``units``.
    """
    d = pos.derived
    j = machine.positions.index(pos) if index is None else index
    ages, remaining = position_ages(machine, j)
    return {
        "machine": machine.id,
        "units": machine.count,
        "position": pos.id,
        "bearing": pos.bearing_id,
        "bearing_type": scenario.bearings[pos.bearing_id].bearing_type.value,
        "life_source": "ratings" if d is not None else "given",
        "equivalent_load_N": None if d is None else d.equivalent_load_N,
        "speed_rpm": None if d is None else d.speed_rpm,
        "rating_life_h": None if d is None else d.rating_life_h,
        "a_iso": None if d is None else d.a_iso,
        "modified_life_h": None if d is None else d.modified_life_h,
        "static_safety": None if d is None else d.static_safety,
        "static_equivalent_load_N": None if d is None else d.static_equivalent_load_N,
        "arrangement": None if d is None else d.arrangement.value,
        "field_factor": pos.field_factor,
        "life": pos.life.as_dict(),
        "life_mean_h": pos.life.mean_h,
        "starting_age_h": ages,
        "remaining_l10_h": remaining,
        "policy": _policy_dict(pos.policy, pos.pf_interval),
    }


def _collapsed(machine: Machine) -> list[tuple[Position, int, str]]:
    """Positions with runs of identical ``id#k`` copies folded into one row."""
    out: list[tuple[Position, int, str]] = []
    for pos in machine.positions:
        m = _COPY.match(pos.id)
        if out and m:
            first, n, label = out[-1]
            m0 = _COPY.match(first.id)
            if (
                m0
                and m0["base"] == m["base"]
                and int(m["k"]) == int(m0["k"]) + n
                and (first.bearing_id, first.life, first.policy, first.field_factor)
                == (pos.bearing_id, pos.life, pos.policy, pos.field_factor)
            ):
                out[-1] = (first, n + 1, f"{m0['base']}#{m0['k']}–{m['k']}")
                continue
        out.append((pos, 1, pos.id))
    return out


def _span(values: list[float]) -> str:
    """One value, or the range ``low–high`` of several, in whole hours."""
    low, high = min(values), max(values)
    if fmt(low, ",.0f") == fmt(high, ",.0f"):
        return fmt(low, ",.0f")
    return f"{fmt(low, ',.0f')}–{fmt(high, ',.0f')}"


def _columns(rows: list[list[str]], right: set[int]) -> str:
    widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
    lines = []
    for j, r in enumerate(rows):
        cells = [
            c.rjust(w) if i in right else c.ljust(w)
            for i, (c, w) in enumerate(zip(r, widths, strict=True))
        ]
        lines.append("  ".join(cells).rstrip())
        if j == 0:
            lines.append("  ".join("-" * w for w in widths))
    return "\n".join(lines)


def check_report(scenario: Scenario, variants: Sequence[Variant] = ()) -> str:
    """The readable ``check`` output: a summary, one row per position kind, the variants."""
    s = scenario
    units = sum(m.count for m in s.machines)
    summary = [
        ("scenario", s.study.name),
        ("file", s.source),
        ("sha256", s.digest[:16] + "…" if s.digest else "—"),
        ("horizon", f"{s.study.horizon_h:,.0f} h ({s.study.horizon_h / HOURS_PER_YEAR:.3g} years)"),
        ("replications", f"{s.study.replications} (seed {s.study.seed})"),
        ("life model", s.life_model),
        (
            "fleet",
            f"{plural(len(s.machines), 'machine type')}, {plural(units, 'unit')}, "
            f"{plural(s.position_count, 'bearing position')}",
        ),
        (
            "groups",
            ", ".join(
                f"{g.id} ({g.need} of {sum(s.machine(m).count for m in g.machines)})"
                for g in s.groups
            )
            or "—",
        ),
        (
            "stores",
            ", ".join(
                f"{b} (s={st.reorder_point}, S={st.order_up_to})" for b, st in s.stores.items()
            )
            or "unlimited spares",
        ),
        ("crews", "unlimited" if s.crews.count is None else str(s.crews.count)),
        *(
            [("starting ages", ", ".join(f"{m.id}: {m.ages_source}" for m in s.machines
                                         if m.ages_source))]
            if any(m.ages_source for m in s.machines)
            else []
        ),
        ("unplanned repair", describe_duration(s.crews.unplanned_repair)),
        ("planned repair", describe_duration(s.crews.planned_repair)),
    ]
    header = [
        "machine",
        "units",
        "position",
        "bearing",
        "P N",
        "L10 h",
        "a_ISO",
        "field",
        "shape",
        "scale h",
        "location h",
        "age h",
        "rem. L10 h",
        "policy",
    ]
    rows = [header]
    for m in s.machines:
        index = {p.id: j for j, p in enumerate(m.positions)}
        for pos, n, label in _collapsed(m):
            d = pos.derived
            ages: list[float] = []
            remaining: list[float] = []
            for j in range(index[pos.id], index[pos.id] + n):
                a, r = position_ages(m, j)
                ages += a
                remaining += r
            rows.append(
                [
                    m.id,
                    str(m.count),
                    label,
                    pos.bearing_id,
                    "given" if d is None else fmt(d.equivalent_load_N, ",.0f"),
                    "—" if d is None else fmt(d.rating_life_h, ",.0f"),
                    "—" if d is None else fmt(d.a_iso, ".3g"),
                    fmt(pos.field_factor, "g"),
                    fmt(pos.life.shape, ".4g"),
                    fmt(pos.life.scale_h, ",.0f"),
                    fmt(pos.life.location_h, ",.0f"),
                    _span(ages),
                    _span(remaining),
                    describe_policy(pos.policy, pos.pf_interval),
                ]
            )
    notes = (
        "P: equivalent load (application factor included); L10: basic rating life; "
        "shape/scale/location: the three-parameter Weibull life in operating hours "
        "(a_ISO and field factor applied); age: operating age at the start (a range over "
        "units and copies); rem. L10: remaining life at 90 % reliability given that age, "
        "R(age + t) / R(age) = 0.9."
    )
    return "\n".join(
        [
            table(summary, "Scenario"),
            "",
            _columns(rows, right={1, 4, 5, 6, 7, 8, 9, 10, 11, 12}),
            "",
            notes,
            "",
            describe_variants(variants),
            "",
            SAFETY_CAUTION,
        ]
    )


def check_json(scenario: Scenario) -> dict[str, Any]:
    """The ``check --json`` object."""
    s = scenario
    return {
        "scenario": s.study.name,
        "source": s.source,
        "sha256": s.digest,
        "study": {
            "horizon_h": s.study.horizon_h,
            "replications": s.study.replications,
            "seed": s.study.seed,
        },
        "life_model": s.life_model,
        "machines": [
            {
                "id": m.id,
                "count": m.count,
                "operating_share": m.operating_share,
                "operating_hours_per_year": m.operating_share * HOURS_PER_YEAR,
                "starting_age_h": m.starting_age_h,
                "ages_file": m.ages_source,
                "units": m.unit_ids(),
            }
            for m in s.machines
        ],
        "groups": [
            {
                "id": g.id,
                "need": g.need,
                "machines": list(g.machines),
                "units": sum(s.machine(m).count for m in g.machines),
            }
            for g in s.groups
        ],
        "positions": [
            position_row(s, m, p, j) for m in s.machines for j, p in enumerate(m.positions)
        ],
        "caution": SAFETY_CAUTION,
    }


@click.command()
@click.argument("scenario_file", metavar="SCENARIO", type=click.Path(dir_okay=False))
@click.option("--json", "as_json", is_flag=True, help="Print one JSON object.")
def check(scenario_file: str, as_json: bool) -> None:
    """Validate a scenario file and its [[variant]]s; show every position's life model."""
    from fleetsim.scenario.loader import text_digest
    from fleetsim.study.variants import file_variants, read_document

    document, text = read_document(scenario_file)
    variants = file_variants(document, scenario_file, text_digest(text))
    scenario = variants[0].scenario
    if as_json:
        echo_json({**check_json(scenario), "variants": variants_json(variants[1:])})
    else:
        click.echo(check_report(scenario, variants[1:]))


def variants_json(variants: Sequence[Variant]) -> list[dict[str, Any]]:
    """The ``variants`` list of ``check --json``: name, description and the values set."""
    return [
        {"name": v.name, "description": v.description,
         "set": {path: _plain(value) for path, value in v.overrides}}
        for v in variants
    ]


def _plain(value: Any) -> Any:
    """A TOML value as JSON (dates and times as text)."""
    if isinstance(value, dict):
        return {k: _plain(v) for k, v in value.items()}
    if isinstance(value, list):
        return [_plain(v) for v in value]
    if isinstance(value, (str, int, float, bool)):
        return value
    return str(value)


def _inline(value: Any) -> str:
    """A value as TOML would write it inline: ``{ kind = "age", interval = "20000 h" }``."""
    if isinstance(value, dict):
        return "{ " + ", ".join(f"{k} = {_inline(v)}" for k, v in value.items()) + " }"
    if isinstance(value, list):
        return "[" + ", ".join(_inline(v) for v in value) + "]"
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, str):
        return json.dumps(value, ensure_ascii=False)
    return str(value)


def describe_variants(variants: Sequence[Variant]) -> str:
    """The readable list of variants for ``check``: name, description, what it sets."""
    if not variants:
        return "Variants: none (the file as written is the only case)"
    lines = [f"Variants (each compared with the file as written, on the same seed): {len(variants)}"]
    for v in variants:
        lines.append(f"  {v.name}" + (f" — {v.description}" if v.description else ""))
        sets = "; ".join(f"{path} = {_inline(value)}" for path, value in v.overrides)
        lines.append(f"    sets {sets}")
    return "\n".join(lines)
