"""The two engines behind one replication task, reduced to the figures of a study.

:func:`replicate` runs one replication with the discrete-event engine
(:func:`fleetsim.sim.simulate`) or the vectorised engine
(:func:`fleetsim.sim.vector.simulate_vector`); both fill one
:class:`~fleetsim.sim.tally.Tally`, reduced by the one
:func:`fleetsim.study.figures.figures_of`. :func:`choose_engine` picks the vectorised
engine when the scenario allows it (no finite stores or crews, or, with them, every
position on run-to-failure: :mod:`fleetsim.sim.coupled`) and it is the faster one, as
``benchmarks/`` measures them: from :data:`VECTOR_MIN_POSITIONS` positions, unless
machine types it steps event by event with few units (:data:`LANE_MIN_UNITS`) hold
more than :data:`FEW_LANES_SHARE` of the positions.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Literal

import numpy as np

from fleetsim.errors import InputError
from fleetsim.scenario.model import Scenario
from fleetsim.sim.block_cycles import block_exact
from fleetsim.sim.coupled import coupled_exact
from fleetsim.sim.cycles import renewal_exact
from fleetsim.sim.tally import Tally
from fleetsim.study.figures import figures_of

EngineName = Literal["des", "vector"]
#: From this many positions the vectorised engine is the faster (benchmarks/, 2 cores:
#: 1.05-1.9x the discrete-event engine at 20 positions on its whole-cycle, block-period
#: and coupled paths; below, a replication takes a millisecond or two on either).
VECTOR_MIN_POSITIONS = 20
#: A machine type with condition monitoring or opportunistic changes is stepped event by
#: event in lanes of units (run-to-failure, age and block replacement run by whole
#: cycles); with fewer units than this its
#: lanes are slower than the discrete-event engine (condition monitoring: 0.2x with one
#: unit of 64 positions, 0.9x at 8 units of 8, 1.6x at 16 units of 4)...
LANE_MIN_UNITS = 16
#: ... which matters when such machine types hold more than this share of the positions.
FEW_LANES_SHARE = 0.1


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
    holding = scenario.holding_groups
    if holding:
        if requested == "vector":
            raise InputError("--engine", f"group {holding[0]!r} holds planned work back, which "
                                         "only the discrete-event engine models; use --engine des")
        return "des", f"group {holding[0]!r} holds planned work back: discrete-event engine"
    why = "finite stores" if scenario.stores else "finite crews"
    coupled = not independent and coupled_exact(scenario)
    if requested in (None, "auto"):
        few = [m for m in scenario.machines
               if m.count < LANE_MIN_UNITS
               and not (renewal_exact(m, scenario) or block_exact(m, scenario))]
        if independent and scenario.position_count < VECTOR_MIN_POSITIONS:
            return "des", (f"positions are independent but fewer than {VECTOR_MIN_POSITIONS}: "
                           "the discrete-event engine is as fast here")
        if independent and (sum(m.count * len(m.positions) for m in few)
                            > FEW_LANES_SHARE * scenario.position_count):
            m = few[0]
            return "des", (f"machine type {m.id!r} has {m.count} unit{'s' * (m.count != 1)} on "
                           "condition monitoring or opportunistic changes, which the "
                           "vectorised engine steps event by event: the discrete-event engine "
                           "is faster")
        if independent:
            return "vector", "no finite stores or crews: positions are independent, vectorised engine"
        if coupled and scenario.position_count >= VECTOR_MIN_POSITIONS:
            return "vector", (f"{why} couple the positions, every position run-to-failure: "
                              "vectorised engine")
        return "des", f"{why} couple the positions: discrete-event engine"
    if requested == "vector":
        if not (independent or coupled):
            raise InputError(
                "--engine", f"the vectorised engine needs unlimited spares and crews, or every "
                            f"position on run-to-failure ({why} here); use --engine des"
            )
        return "vector", "requested"
    if requested == "des":
        return "des", "requested"
    raise InputError("--engine", f"expected des, vector or auto, got {requested!r}")


def choose_engines(variants: Sequence[tuple[str, Scenario]], requested: str | None = None
                   ) -> tuple[EngineName, str]:
    """:func:`choose_engine` for a study's variants (the first is the base): the base's
    engine and why, and each variant that runs on the other engine named with its reason."""
    chosen, why = choose_engine(variants[0][1], requested)
    others = [f"{name}: {reason}" for name, sc in variants[1:]
              for engine, reason in [choose_engine(sc, requested)] if engine != chosen]
    return chosen, "; ".join([why, *others])


def replicate(payload: tuple[Scenario, EngineName, float], seed: np.random.SeedSequence) -> dict[str, float]:
    """One replication's figures. ``payload`` is ``(scenario, engine, horizon_h)``.

    A module-level function so that process pools and Dask can ship it.
    """
    scenario, engine, horizon_h = payload
    return figures_of(tally_of(scenario, engine, seed, horizon_h), scenario)


def tally_of(scenario: Scenario, engine: EngineName, seed: np.random.SeedSequence,
             horizon_h: float | None = None) -> Tally:
    """One replication's :class:`~fleetsim.sim.tally.Tally` from the named engine."""
    if engine == "vector":
        from fleetsim.sim.vector import simulate_vector

        return simulate_vector(scenario, seed, horizon_h)
    from fleetsim.sim import simulate

    result = simulate(scenario, seed, horizon_h=horizon_h, keep_events=False)
    assert result.tally is not None
    return result.tally
