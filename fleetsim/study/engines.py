"""The two engines behind one replication task, reduced to the figures of a study.

:func:`replicate` runs one replication with the discrete-event engine
(:func:`fleetsim.sim.simulate`) or the vectorised engine
(:func:`fleetsim.sim.vector.simulate_vector`) and returns the flat figures of
:mod:`fleetsim.study.figures`. :func:`choose_engine` picks the vectorised
engine when the scenario allows it (no finite stores or crews).
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING, Literal

import numpy as np

from fleetsim.errors import InputError
from fleetsim.scenario.model import Scenario
from fleetsim.sim.discount import per_year

if TYPE_CHECKING:
    from fleetsim.sim.records import ReplicationResult

EngineName = Literal["des", "vector"]
#: Below this many positions the discrete-event engine is about as fast (benchmarks/).
VECTOR_MIN_POSITIONS = 200


def choose_engine(scenario: Scenario, requested: str | None = None) -> tuple[EngineName, str]:
    """The engine to use and why.

    Parameters
    ----------
    scenario
        The scenario.
    requested
        ``"des"``, ``"vector"`` or None/``"auto"``.

    Returns
    -------
    (engine, reason)
    """
    independent = scenario.independent_positions
    holding = [g.id for g in scenario.groups if g.hold_planned_work]
    if holding:
        if requested == "vector":
            raise InputError("--engine", f"group {holding[0]!r} holds planned work back, which "
                                         "only the discrete-event engine models; use --engine des")
        return "des", f"group {holding[0]!r} holds planned work back: discrete-event engine"
    if requested in (None, "auto"):
        if independent and scenario.position_count >= VECTOR_MIN_POSITIONS:
            return "vector", "no finite stores or crews: positions are independent, vectorised engine"
        if independent:
            return "des", (f"positions are independent but fewer than {VECTOR_MIN_POSITIONS}: "
                           "the discrete-event engine is as fast here")
        why = "finite stores" if scenario.stores else "finite crews"
        return "des", f"{why} couple the positions: discrete-event engine"
    if requested == "vector":
        if not independent:
            raise InputError(
                "--engine", "the vectorised engine needs unlimited spares and crews; use --engine des"
            )
        return "vector", "requested"
    if requested == "des":
        return "des", "requested"
    raise InputError("--engine", f"expected des, vector or auto, got {requested!r}")


def des_figures(result: ReplicationResult, scenario: Scenario) -> dict[str, float]:
    """Reduce a :class:`fleetsim.sim.ReplicationResult` to the study's figures."""
    H = result.horizon_h
    years = result.years
    c = result.counts
    out: dict[str, float] = {
        "failures": c["failures"],
        "planned_replacements": c["planned"] + c["opportunistic"],
        "opportunistic_replacements": c["opportunistic"],
        "inspections": c["inspections"],
        "detections": c["detections"],
        "missed_defects": c["missed_defects"],
        "failures_after_detection": c["failures_after_detection"],
        "orders": c["orders"],
        "emergency_orders": c["emergency_orders"],
        "stockouts": c["stockouts"],
    }
    u = result.tables["units"]
    n_units = len(u["unit"])
    for fig, col in (("downtime_crew_h", "waiting_crew_h"), ("downtime_spares_h", "waiting_spare_h"),
                     ("downtime_repair_h", "repair_h"), ("downtime_planned_h", "planned_h")):
        out[fig] = float(sum(u[col]))
    out["downtime_h"] = float(sum(u["down_h"]))
    out["availability"] = 1.0 - out["downtime_h"] / (n_units * H)
    per_machine: dict[str, list[float]] = {m.id: [0.0, 0.0] for m in scenario.machines}
    for machine, fails, down in zip(u["machine"], u["failures"], u["down_h"], strict=True):
        acc = per_machine[machine]
        acc[0] += fails
        acc[1] += down
    for m in scenario.machines:
        fails, down = per_machine[m.id]
        out[f"failures:{m.id}"] = float(fails)
        out[f"downtime_h:{m.id}"] = float(down)
        out[f"availability:{m.id}"] = 1.0 - down / (m.count * H)
    costs = result.costs
    cost = {
        "cost_parts": costs.get("parts", 0.0),
        "cost_planned": costs.get("planned_labour", 0.0),
        "cost_failure": costs.get("failure_labour", 0.0),
        "cost_downtime": costs.get("downtime", 0.0),
        "cost_inspection": costs.get("inspection", 0.0),
        "cost_holding": costs.get("holding", 0.0),
        "cost_emergency": costs.get("emergency", 0.0),
    }
    cost["cost_total"] = sum(cost.values())
    cost["cost_per_year"] = per_year(cost["cost_total"], years,
                                     scenario.costs.discount_rate_per_year)
    out.update(cost)
    sp = result.tables["spares"]
    spares = {b: (float(sp["issued"][i]), float(sp["fill_rate"][i])) for i, b in enumerate(sp["bearing"])}
    for b in scenario.bearings:
        issued, fill = spares.get(b, (0.0, 1.0))
        out[f"spares_issued:{b}"] = issued
        out[f"spares_per_year:{b}"] = issued / years
        out[f"fill_rate:{b}"] = fill if math.isfinite(fill) else 1.0
    g = result.tables["groups"]
    for i, group in enumerate(g["group"]):
        first = float(g["first_down_h"][i])
        first = H if not math.isfinite(first) else first
        if group == "fleet":
            out["fleet_down"] = float(bool(g["had_down"][i]))
            out["fleet_first_down_h"] = first
        else:
            out[f"group_down:{group}"] = float(bool(g["had_down"][i]))
            out[f"group_downtime_h:{group}"] = float(g["down_h"][i])
            out[f"group_first_down_h:{group}"] = first
    return {k: float(v) for k, v in out.items()}


def replicate(payload: tuple[Scenario, EngineName, float], seed: np.random.SeedSequence) -> dict[str, float]:
    """One replication's figures. ``payload`` is ``(scenario, engine, horizon_h)``.

    A module-level function so that process pools and Dask can ship it.
    """
    scenario, engine, horizon_h = payload
    if engine == "vector":
        from fleetsim.sim.vector import simulate_vector

        return simulate_vector(scenario, seed, horizon_h)
    from fleetsim.sim import simulate

    result = simulate(scenario, seed, horizon_h=horizon_h, keep_events=False)
    return des_figures(result, scenario)
