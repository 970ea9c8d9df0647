"""The life of one bearing position: ratings + duty → L10, a_ISO, life distribution.

This is the one place where the pieces of :mod:`fleetsim.life` are put
together; the command line and the scenario loader both call
:func:`position_life`.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from fleetsim.errors import InputError, LifeModelWarning
from fleetsim.life.distribution import LifeDistribution, WeibullShape, life_shape
from fleetsim.life.loads import BearingType, LoadFactors
from fleetsim.life.modified import life_modification_factor
from fleetsim.life.rating import DutyStep, duty_cycle, rating_life_Mrev, revolutions_to_hours


@dataclass(frozen=True)
class BearingRating:
    """Catalogue data of a bearing.

    Attributes
    ----------
    bearing_type
        Kind of bearing.
    dynamic_rating_N
        Basic dynamic load rating C, N.
    static_rating_N
        Basic static load rating C0, N (None if unknown; needed for ball
        bearings with axial load).
    fatigue_limit_N
        Fatigue load limit Cu, N (None if unknown; needed for a_ISO).
    factors
        e, X, Y from the catalogue (angular-contact ball, tapered roller).
    """

    bearing_type: BearingType
    dynamic_rating_N: float
    static_rating_N: float | None = None
    fatigue_limit_N: float | None = None
    factors: LoadFactors | None = None

    def __post_init__(self) -> None:
        if not (self.dynamic_rating_N > 0 and math.isfinite(self.dynamic_rating_N)):
            raise InputError("dynamic rating", f"expected C > 0, got {self.dynamic_rating_N} N")
        if self.static_rating_N is not None and not self.static_rating_N > 0:
            raise InputError("static rating", f"expected C0 > 0, got {self.static_rating_N} N")
        if self.fatigue_limit_N is not None and not self.fatigue_limit_N > 0:
            raise InputError("fatigue limit", f"expected Cu > 0, got {self.fatigue_limit_N} N")


@dataclass(frozen=True)
class Lubrication:
    """Inputs of the life modification factor a_ISO.

    Attributes
    ----------
    viscosity_ratio
        κ = ν/ν1.
    contamination
        e_C in [0, 1].
    """

    viscosity_ratio: float
    contamination: float


@dataclass(frozen=True)
class PositionLife:
    """Everything derived for one bearing position.

    Attributes
    ----------
    equivalent_load_N
        Equivalent dynamic load P (application factor included), N.
    e, X, Y
        Load factors used (of the first duty step when there is a cycle).
    speed_rpm
        Speed, or the mean speed of the duty cycle, rev/min.
    rating_life_Mrev, rating_life_h
        Basic rating life L10.
    a_iso
        Life modification factor, or None without lubrication inputs.
    modified_life_h
        L10m = a_ISO·L10 in hours, or None.
    distribution
        Life distribution in operating hours (scaled by a_ISO when given).
    model
        The Weibull model in units of L10.
    static_safety
        C0/P, or None when C0 is unknown (a value below 1 deserves a warning).
    """

    equivalent_load_N: float
    e: float
    X: float
    Y: float
    speed_rpm: float
    rating_life_Mrev: float
    rating_life_h: float
    a_iso: float | None
    modified_life_h: float | None
    distribution: LifeDistribution
    model: WeibullShape
    static_safety: float | None

    def life_at_reliability_h(self, reliability: float) -> float:
        """Life in hours at reliability R (a_ISO included when given)."""
        return float(self.distribution.life_at_reliability(reliability))


def position_life(
    bearing: BearingRating,
    duty: Sequence[DutyStep],
    *,
    model: str | Mapping[str, Any] | WeibullShape = "iso281",
    rotation_factor: float = 1.0,
    application_factor: float = 1.0,
    lubrication: Lubrication | None = None,
) -> PositionLife:
    """Derive the life of a bearing position from its ratings and duty.

    Parameters
    ----------
    bearing
        Catalogue ratings.
    duty
        One or more duty steps (one step for a constant load and speed).
    model
        Life model preset or custom shape, in units of L10.
    rotation_factor, application_factor
        V and a_f, see :func:`~fleetsim.life.loads.equivalent_load`.
    lubrication
        κ and e_C; with the bearing's fatigue limit they give a_ISO.

    Returns
    -------
    PositionLife
    """
    kind = bearing.bearing_type
    res = duty_cycle(
        kind,
        duty,
        static_rating_N=bearing.static_rating_N,
        factors=bearing.factors,
        rotation_factor=rotation_factor,
        application_factor=application_factor,
    )
    p = res.load_N
    l10 = rating_life_Mrev(bearing.dynamic_rating_N, p, kind.life_exponent)
    l10h = revolutions_to_hours(l10, res.speed_rpm)
    a_iso = None
    if lubrication is not None:
        if bearing.fatigue_limit_N is None:
            raise InputError("fatigue limit", "a_ISO needs the bearing's fatigue load limit Cu")
        a_iso = life_modification_factor(
            lubrication.viscosity_ratio,
            lubrication.contamination,
            bearing.fatigue_limit_N,
            p,
            roller=kind.is_roller,
        )
    shape = life_shape(model)
    dist = LifeDistribution.from_rating_life(l10h * (a_iso if a_iso is not None else 1.0), shape)
    first = res.steps[0]
    peak = max(s.load_N for s in res.steps)
    if bearing.static_rating_N is not None and peak > bearing.static_rating_N:
        warnings.warn(
            f"equivalent load {peak:.4g} N exceeds the static rating C0 = "
            f"{bearing.static_rating_N:.4g} N; check static safety with the bearing maker",
            LifeModelWarning,
            stacklevel=2,
        )
    return PositionLife(
        equivalent_load_N=p,
        e=first.e,
        X=first.X,
        Y=first.Y,
        speed_rpm=res.speed_rpm,
        rating_life_Mrev=l10,
        rating_life_h=l10h,
        a_iso=a_iso,
        modified_life_h=None if a_iso is None else a_iso * l10h,
        distribution=dist,
        model=shape,
        static_safety=None if bearing.static_rating_N is None else bearing.static_rating_N / peak,
    )
