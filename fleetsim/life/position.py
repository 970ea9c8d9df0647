"""The life of one bearing position: ratings + duty → L10, a_ISO, P0, life distribution.

This is the one place where the pieces of :mod:`fleetsim.life` are put
together; the command line and the scenario loader both call
:func:`position_life`.

For each bearing of the position's arrangement
(:mod:`fleetsim.life.arrangement`) and each duty step:

* the equivalent dynamic load P_i, and the basic rating life L10 from the
  revolution-weighted mean load (ISO 281:2007, variable operating conditions);
* the modified life by damage summation (Palmgren–Miner, ISO 281:2007 for
  variable conditions, from memory): a_ISO is evaluated at each step's load
  and κ, L_nm,i = a_ISO,i·L10,i at that step's speed, and
  L_nm = 1 / Σ (t_i / L_nm,i) in hours with t_i the shares of time;
* the static equivalent load P0 = max(Fr, X0·Fr + Y0·Fa) (ISO 76), the
  application factor included, and s0 = C0/max P0.

The arrangement's life is that of its bearings in series
(:func:`~fleetsim.life.arrangement.series_rating_life`); the position's life
distribution is the life model scaled by it. With a location parameter the
series of two three-parameter Weibulls is not exactly Weibull: the
distribution is exact at L10 and an approximation elsewhere.

Warnings (:class:`~fleetsim.errors.LifeModelWarning`) when P > 0.5·C (the
rating-life equation is not meant for such loads, ISO 281:2007) and when s0 is
below the common-practice minimum (:data:`~fleetsim.life.static.MINIMUM_S0`).
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from fleetsim.bounds import check_force
from fleetsim.errors import InputError, LifeModelWarning
from fleetsim.life.arrangement import Arrangement, bearing_loads, series_rating_life
from fleetsim.life.distribution import LifeDistribution, WeibullShape, life_shape
from fleetsim.life.loads import BearingType, LoadFactors
from fleetsim.life.modified import life_modification_factor
from fleetsim.life.rating import (
    DutyStep,
    duty_cycle,
    hours_to_revolutions,
    rating_life_Mrev,
    revolutions_to_hours,
)
from fleetsim.life.static import MINIMUM_S0, static_equivalent_load


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
        e, X, Y (and X1, Y1, X0, Y0) from the catalogue (angular-contact ball,
        tapered roller).
    """

    bearing_type: BearingType
    dynamic_rating_N: float
    static_rating_N: float | None = None
    fatigue_limit_N: float | None = None
    factors: LoadFactors | None = None

    def __post_init__(self) -> None:
        # the force bounds of fleetsim.bounds (1 mN to 1e9 N): L10 = (C/P)^p stays finite
        check_force(self.dynamic_rating_N, "dynamic rating", positive=True)
        if self.static_rating_N is not None:
            check_force(self.static_rating_N, "static rating", positive=True)
        if self.fatigue_limit_N is not None:
            check_force(self.fatigue_limit_N, "fatigue limit", positive=True)


@dataclass(frozen=True)
class Lubrication:
    """Inputs of the life modification factor a_ISO.

    Attributes
    ----------
    viscosity_ratio
        κ = ν/ν1 (a duty step's own κ takes precedence).
    contamination
        e_C in [0, 1].
    """

    viscosity_ratio: float
    contamination: float


@dataclass(frozen=True)
class PositionInputs:
    """What a position's life was derived from, besides the bearing's ratings.

    Kept so that another bearing can be rated for the same position
    (``position_life(other, **inputs.as_kwargs())``).
    """

    duty: tuple[DutyStep, ...]
    model: WeibullShape
    rotation_factor: float
    application_factor: float
    lubrication: Lubrication | None
    arrangement: Arrangement

    def as_kwargs(self) -> dict[str, Any]:
        """Keyword arguments of :func:`position_life`."""
        return {
            "duty": self.duty,
            "model": self.model,
            "rotation_factor": self.rotation_factor,
            "application_factor": self.application_factor,
            "lubrication": self.lubrication,
            "arrangement": self.arrangement,
        }


@dataclass(frozen=True)
class BearingLife:
    """One bearing of a position's arrangement.

    Attributes
    ----------
    name
        ``"bearing"`` for a single or double-row bearing, ``"A"``/``"B"`` for an
        opposed pair, ``"1"``/``"2"`` for a tandem pair.
    radial_load_N, axial_load_N
        Its radial and axial load (induced thrust included), N; the largest
        over the duty steps.
    equivalent_load_N
        Its equivalent dynamic load over the duty, application factor included, N.
    rating_life_h
        Its basic rating life L10, hours.
    a_iso
        Its life modification factor L_nm/L10 (damage summation over the
        steps), or None.
    modified_life_h
        Its L_nm in hours (a1 = 1), or None.
    static_equivalent_load_N
        Its largest static equivalent load P0 over the steps, N (None when
        the static factors are unknown).
    """

    name: str
    radial_load_N: float
    axial_load_N: float
    equivalent_load_N: float
    rating_life_h: float
    a_iso: float | None
    modified_life_h: float | None
    static_equivalent_load_N: float | None


@dataclass(frozen=True)
class PositionLife:
    """Everything derived for one bearing position.

    Attributes
    ----------
    equivalent_load_N
        Equivalent dynamic load P (application factor included), N; of the
        bearing with the shortest rating life for a pair.
    e, X, Y
        Load factors used (of the first duty step of that bearing).
    speed_rpm
        Speed, or the mean speed of the duty cycle, rev/min.
    rating_life_Mrev, rating_life_h
        Basic rating life L10 of the arrangement.
    a_iso
        Life modification factor of the arrangement (modified over basic life,
        damage summation over the duty steps), or None without lubrication inputs.
    modified_life_h
        L10m = a_ISO·L10 in hours, or None.
    distribution
        Life distribution in operating hours (scaled by a_ISO when given).
    model
        The Weibull model in units of L10.
    static_safety
        s0 = C0/P0 with the largest P0 of any bearing and step, or None when
        C0 or the static factors X0, Y0 are unknown.
    static_equivalent_load_N
        That largest P0, N (None when the static factors are unknown).
    arrangement
        How the position's bearings are mounted.
    bearings
        Each bearing of the arrangement.
    inputs
        The duty and settings the life was derived from.
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
    static_equivalent_load_N: float | None = None
    arrangement: Arrangement = Arrangement.SINGLE
    bearings: tuple[BearingLife, ...] = ()
    inputs: PositionInputs | None = None

    def life_at_reliability_h(self, reliability: float) -> float:
        """Life in hours at reliability R (a_ISO included when given)."""
        return float(self.distribution.life_at_reliability(reliability))


def _check_factors(kind: BearingType, factors: LoadFactors | None, arr: Arrangement) -> None:
    double = factors is not None and (factors.Y1 != 0.0 or factors.X1 != 1.0)
    if arr is Arrangement.DOUBLE_ROW and not double:
        raise InputError(
            "bearing",
            "a double-row arrangement needs the catalogue's X1 and Y1 (used for Fa/Fr <= e) "
            "beside e, X and Y of the double-row bearing",
        )
    if double and arr in (Arrangement.TANDEM, Arrangement.FACE_TO_FACE, Arrangement.BACK_TO_BACK):
        raise InputError(
            "bearing",
            f"X1/Y1 describe a double-row bearing; a {arr.value} pair is made of single-row "
            "bearings (X1 = 1, Y1 = 0)",
        )


def _static_load(
    kind: BearingType,
    factors: LoadFactors | None,
    arr: Arrangement,
    steps: Sequence[DutyStep],
    application_factor: float,
) -> float | None:
    """Largest P0 over the steps (a_f included), or None when X0/Y0 are unknown."""
    try:
        return max(
            application_factor * static_equivalent_load(
                kind, s.radial_load_N, s.axial_load_N, factors=factors,
                double_row=arr is Arrangement.DOUBLE_ROW)
            for s in steps
        )
    except InputError:
        return None  # an angular-contact bearing without Y0 off the table: s0 unknown


def position_life(
    bearing: BearingRating,
    duty: Sequence[DutyStep],
    *,
    model: str | Mapping[str, Any] | WeibullShape = "iso281",
    rotation_factor: float = 1.0,
    application_factor: float = 1.0,
    lubrication: Lubrication | None = None,
    arrangement: Arrangement | str = Arrangement.SINGLE,
) -> PositionLife:
    """Derive the life of a bearing position from its ratings and duty.

    Parameters
    ----------
    bearing
        Catalogue ratings (of each bearing of a pair; of the unit for a
        double-row bearing).
    duty
        One or more duty steps (one step for a constant load and speed).
    model
        Life model preset or custom shape, in units of L10.
    rotation_factor, application_factor
        V and a_f, see :func:`~fleetsim.life.loads.equivalent_load`; a_f also
        multiplies P0.
    lubrication
        κ and e_C; with the bearing's fatigue limit they give a_ISO.
    arrangement
        How the bearings are mounted (:class:`~fleetsim.life.arrangement.Arrangement`).

    Returns
    -------
    PositionLife
    """
    kind = bearing.bearing_type
    arr = Arrangement(arrangement)
    shape = life_shape(model)
    if not duty:
        raise InputError("duty", "expected at least one step")
    _check_factors(kind, bearing.factors, arr)
    if any(st.viscosity_ratio is not None for st in duty) and lubrication is None:
        raise InputError("contamination", "a step's viscosity ratio needs e_C for a_ISO")
    if lubrication is not None and bearing.fatigue_limit_N is None:
        raise InputError("fatigue limit", "a_ISO needs the bearing's fatigue load limit Cu")
    per_step = [
        bearing_loads(arr, kind, bearing.factors, st.radial_load_N, st.axial_load_N,
                      st.radial_load_b_N)
        for st in duty
    ]
    names = [b.name for b in per_step[0]]
    total_share = sum(st.share for st in duty)
    p = kind.life_exponent
    c = bearing.dynamic_rating_N
    lives: list[BearingLife] = []
    firsts = []
    speed_rpm = 0.0
    for j, name in enumerate(names):
        steps_j = [
            DutyStep(st.share, loads[j].radial_load_N, loads[j].axial_load_N, st.speed_rpm)
            for st, loads in zip(duty, per_step, strict=True)
        ]
        res = duty_cycle(
            kind,
            steps_j,
            static_rating_N=bearing.static_rating_N,
            factors=bearing.factors,
            rotation_factor=rotation_factor,
            application_factor=application_factor,
        )
        speed_rpm = res.speed_rpm
        l10h = revolutions_to_hours(rating_life_Mrev(c, res.load_N, p), res.speed_rpm)
        modified = None
        if lubrication is not None:
            assert bearing.fatigue_limit_N is not None
            damage = 0.0
            for st, eq in zip(duty, res.steps, strict=True):
                kappa = st.viscosity_ratio if st.viscosity_ratio is not None else (
                    lubrication.viscosity_ratio)
                a = life_modification_factor(kappa, lubrication.contamination,
                                             bearing.fatigue_limit_N, eq.load_N,
                                             roller=kind.is_roller)
                life_i = a * revolutions_to_hours(rating_life_Mrev(c, eq.load_N, p), st.speed_rpm)
                damage += (st.share / total_share) / life_i
            modified = 1.0 / damage
        p0 = _static_load(kind, bearing.factors, arr, steps_j, application_factor)
        peak = max(s.load_N for s in res.steps)
        if peak > 0.5 * c:
            where = "" if len(names) == 1 else f" on bearing {name}"
            warnings.warn(
                f"equivalent load {peak:.4g} N{where} exceeds 0.5·C = {0.5 * c:.4g} N, beyond "
                "the range the rating-life equation is meant for (ISO 281); ask the bearing maker",
                LifeModelWarning,
                stacklevel=2,
            )
        firsts.append(res.steps[0])
        lives.append(
            BearingLife(
                name=name,
                radial_load_N=max(s.radial_load_N for s in steps_j),
                axial_load_N=max(s.axial_load_N for s in steps_j),
                equivalent_load_N=res.load_N,
                rating_life_h=l10h,
                a_iso=None if modified is None else modified / l10h,
                modified_life_h=modified,
                static_equivalent_load_N=p0,
            )
        )
    l10h = series_rating_life([b.rating_life_h for b in lives], shape)
    modified_h = None
    if lubrication is not None:
        modified_h = series_rating_life([b.modified_life_h or 0.0 for b in lives], shape)
    dist = LifeDistribution.from_rating_life(modified_h if modified_h is not None else l10h, shape)
    weakest = min(range(len(lives)), key=lambda j: lives[j].rating_life_h)
    known = [b.static_equivalent_load_N for b in lives if b.static_equivalent_load_N is not None]
    p0_max = max(known) if len(known) == len(lives) else None
    s0 = None
    if bearing.static_rating_N is not None and p0_max is not None:
        s0 = bearing.static_rating_N / p0_max if p0_max > 0 else math.inf
        minimum = MINIMUM_S0[kind.is_roller]
        if s0 < minimum:
            warnings.warn(
                f"static safety factor s0 = C0/P0 = {s0:.3g} is below {minimum:g} (common "
                f"practice for {'roller' if kind.is_roller else 'ball'} bearings in normal "
                f"service): P0 = {p0_max:.4g} N against the static rating C0 = "
                f"{bearing.static_rating_N:.4g} N; check with the bearing maker",
                LifeModelWarning,
                stacklevel=2,
            )
    first = firsts[weakest]
    return PositionLife(
        equivalent_load_N=lives[weakest].equivalent_load_N,
        e=first.e,
        X=first.X,
        Y=first.Y,
        speed_rpm=speed_rpm,
        rating_life_Mrev=hours_to_revolutions(l10h, speed_rpm),
        rating_life_h=l10h,
        a_iso=None if modified_h is None else modified_h / l10h,
        modified_life_h=modified_h,
        distribution=dist,
        model=shape,
        static_safety=s0,
        static_equivalent_load_N=p0_max,
        arrangement=arr,
        bearings=tuple(lives),
        inputs=PositionInputs(
            duty=tuple(duty),
            model=shape,
            rotation_factor=rotation_factor,
            application_factor=application_factor,
            lubrication=lubrication,
            arrangement=arr,
        ),
    )
