"""Bearing life models: equivalent load, rating life, a1, a_ISO, Weibull life, sizing.

Knows nothing of simulation, files (except the catalogue reader) or printing.
"""

from fleetsim.life.distribution import (
    PRESETS,
    LifeDistribution,
    WeibullShape,
    life_shape,
    reliability_factor_a1,
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
from fleetsim.life.position import BearingRating, Lubrication, PositionLife, position_life
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

__all__ = [
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
]
