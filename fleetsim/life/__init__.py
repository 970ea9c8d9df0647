"""Bearing life models: equivalent load, rating life, a1, a_ISO, Weibull life, sizing.

Knows nothing of simulation, files (except the catalogue reader) or printing.
"""

from fleetsim.life.arrangement import (
    Arrangement,
    BearingLoad,
    bearing_loads,
    induced_thrust_factor,
    opposed_axial_loads,
    series_rating_life,
)
from fleetsim.life.distribution import (
    PRESETS,
    LifeDistribution,
    WeibullShape,
    life_shape,
    reliability_factor_a1,
    warn_reliability_range,
)
from fleetsim.life.loads import (
    RADIAL_BALL_TABLE,
    BearingType,
    EquivalentLoad,
    LoadFactors,
    equivalent_load,
    radial_ball_factors,
)
from fleetsim.life.modified import life_modification_factor
from fleetsim.life.position import (
    BearingLife,
    BearingRating,
    Lubrication,
    PositionInputs,
    PositionLife,
    position_life,
)
from fleetsim.life.rating import (
    DutyResult,
    DutyStep,
    duty_cycle,
    hours_to_revolutions,
    rating_life_Mrev,
    revolutions_to_hours,
)
from fleetsim.life.sizing import (
    CatalogueEntry,
    allocate_reliability,
    read_catalogue,
    required_dynamic_rating,
    select_bearing,
    series_reliability,
)
from fleetsim.life.static import (
    MINIMUM_S0,
    static_equivalent_load,
    static_factors,
    static_safety_factor,
)

__all__ = [
    "static_safety_factor",
    "static_factors",
    "static_equivalent_load",
    "series_rating_life",
    "opposed_axial_loads",
    "induced_thrust_factor",
    "bearing_loads",
    "PositionInputs",
    "BearingLoad",
    "BearingLife",
    "Arrangement",
    "MINIMUM_S0",
    "PRESETS",
    "RADIAL_BALL_TABLE",
    "BearingRating",
    "BearingType",
    "CatalogueEntry",
    "DutyResult",
    "DutyStep",
    "EquivalentLoad",
    "LifeDistribution",
    "LoadFactors",
    "Lubrication",
    "PositionLife",
    "WeibullShape",
    "allocate_reliability",
    "duty_cycle",
    "equivalent_load",
    "hours_to_revolutions",
    "life_modification_factor",
    "life_shape",
    "position_life",
    "radial_ball_factors",
    "rating_life_Mrev",
    "read_catalogue",
    "reliability_factor_a1",
    "required_dynamic_rating",
    "revolutions_to_hours",
    "select_bearing",
    "series_reliability",
    "warn_reliability_range",
]
