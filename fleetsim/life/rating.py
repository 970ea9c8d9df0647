"""Basic rating life L10 and duty cycles.

L10 = (C/P)^p millions of revolutions, p = 3 for ball and 10/3 for roller
bearings; in hours L10h = 10^6·L10 / (60·n) with n in rev/min.

A duty cycle of steps (share of time t_i, loads, speed n_i) has the equivalent
load weighted by revolutions, P_eq = (Σ P_i^p n_i t_i / Σ n_i t_i)^(1/p), and the
mean speed n_m = Σ n_i t_i / Σ t_i (ISO 281:2007, variable operating conditions).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

from fleetsim.errors import InputError
from fleetsim.life.loads import BearingType, EquivalentLoad, LoadFactors, equivalent_load


def rating_life_Mrev(dynamic_rating_N: float, load_N: float, life_exponent: float) -> float:
    """Basic rating life L10 = (C/P)^p in millions of revolutions."""
    if dynamic_rating_N <= 0:
        raise InputError("dynamic rating", f"expected C > 0, got {dynamic_rating_N:g} N")
    if load_N <= 0:
        raise InputError("equivalent load", f"expected P > 0, got {load_N:g} N")
    try:
        return (dynamic_rating_N / load_N) ** life_exponent
    except OverflowError:
        raise InputError(
            "equivalent load",
            f"C/P = {dynamic_rating_N:g} N / {load_N:g} N gives a rating life beyond any float",
        ) from None


def revolutions_to_hours(life_Mrev: float, speed_rpm: float) -> float:
    """Convert millions of revolutions to operating hours at ``speed_rpm``."""
    if speed_rpm <= 0:
        raise InputError("speed", f"expected a speed > 0, got {speed_rpm:g} rpm")
    return life_Mrev * 1e6 / (60.0 * speed_rpm)


def hours_to_revolutions(life_h: float, speed_rpm: float) -> float:
    """Convert operating hours at ``speed_rpm`` to millions of revolutions."""
    if speed_rpm <= 0:
        raise InputError("speed", f"expected a speed > 0, got {speed_rpm:g} rpm")
    return life_h * 60.0 * speed_rpm / 1e6


@dataclass(frozen=True)
class DutyStep:
    """One step of a duty cycle.

    Attributes
    ----------
    share
        Share of operating time spent in this step (> 0; shares are normalised).
    radial_load_N, axial_load_N
        Loads in N.
    speed_rpm
        Speed in rev/min (> 0).
    radial_load_b_N
        Radial load of bearing B of a face-to-face or back-to-back pair, N
        (None otherwise); ``axial_load_N`` is then the external thrust.
    viscosity_ratio
        κ of this step for a_ISO (None: the position's κ).
    """

    share: float
    radial_load_N: float
    axial_load_N: float
    speed_rpm: float
    radial_load_b_N: float | None = None
    viscosity_ratio: float | None = None


@dataclass(frozen=True)
class DutyResult:
    """Equivalent load and mean speed of a duty cycle.

    Attributes
    ----------
    load_N
        Equivalent load P_eq over the cycle (application factor included), N.
    speed_rpm
        Time-weighted mean speed, rev/min.
    steps
        The equivalent load of each step.
    """

    load_N: float
    speed_rpm: float
    steps: tuple[EquivalentLoad, ...]


def duty_cycle(
    bearing_type: BearingType | str,
    steps: Sequence[DutyStep],
    *,
    static_rating_N: float | None = None,
    factors: LoadFactors | None = None,
    rotation_factor: float = 1.0,
    application_factor: float = 1.0,
) -> DutyResult:
    """Equivalent load weighted by revolutions and mean speed of a duty cycle.

    Each step's P_i comes from :func:`~fleetsim.life.loads.equivalent_load`;
    P_eq = (Σ P_i^p n_i t_i / Σ n_i t_i)^(1/p) with p the life exponent.
    """
    kind = BearingType(bearing_type)
    if not steps:
        raise InputError("duty", "expected at least one step")
    p = kind.life_exponent
    loads = []
    num = den = time = 0.0
    for i, st in enumerate(steps):
        if not (st.share > 0 and math.isfinite(st.share)):
            raise InputError(f"duty[{i}].share", f"expected a share of time > 0, got {st.share}")
        if not (st.speed_rpm > 0):
            raise InputError(f"duty[{i}].speed", f"expected a speed > 0, got {st.speed_rpm} rpm")
        eq = equivalent_load(
            kind,
            st.radial_load_N,
            st.axial_load_N,
            static_rating_N=static_rating_N,
            factors=factors,
            rotation_factor=rotation_factor,
            application_factor=application_factor,
        )
        loads.append(eq)
        revs = st.speed_rpm * st.share
        try:
            num += eq.load_N**p * revs
        except OverflowError:
            raise InputError(
                f"duty[{i}].radial_load", f"the equivalent load {eq.load_N:g} N is out of range"
            ) from None
        den += revs
        time += st.share
    return DutyResult(load_N=(num / den) ** (1.0 / p), speed_rpm=den / time, steps=tuple(loads))
