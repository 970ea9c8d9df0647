"""Scenario files: TOML with units → validated, frozen fleet model.

>>> from fleetsim.scenario import load_scenario
>>> scenario = load_scenario("scenarios/pump_stations.toml")  # doctest: +SKIP

The format is described in ``docs/scenario-format.md``.
"""

from fleetsim.scenario.loader import build_scenario, load_scenario, parse_scenario
from fleetsim.scenario.machines import MAX_COUNT
from fleetsim.scenario.model import (
    HOURS_PER_YEAR,
    Bearing,
    Costs,
    Crews,
    Duration,
    Group,
    Machine,
    Policy,
    Position,
    Scenario,
    Stock,
    Study,
)

__all__ = [
    "HOURS_PER_YEAR",
    "MAX_COUNT",
    "Bearing",
    "Costs",
    "Crews",
    "Duration",
    "Group",
    "Machine",
    "Policy",
    "Position",
    "Scenario",
    "Stock",
    "Study",
    "build_scenario",
    "load_scenario",
    "parse_scenario",
]
