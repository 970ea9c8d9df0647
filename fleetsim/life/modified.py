"""Life modification factor a_ISO of ISO 281:2007 (systems approach).

a_ISO depends on the viscosity ratio κ, the contamination factor e_C and the
ratio Cu/P of fatigue load limit to equivalent load. The formulas below are the
ISO 281:2007 ones for radial ball and radial roller bearings (reproduced from
memory); κ is clipped to [0.1, 4] (the formulas' range) and a_ISO is capped
at 50. The modified rating life is L_nm = a1·a_ISO·L10.
"""

from __future__ import annotations

import math
import warnings

from fleetsim.errors import InputError, LifeModelWarning

A_ISO_MAX = 50.0
KAPPA_MIN, KAPPA_MAX = 0.1, 4.0

# (constant, coefficient, exponent of κ) for the bands κ < 0.4, 0.4 <= κ < 1, κ >= 1.
_BALL = ((2.5671, 2.2649, 0.054381), (2.5671, 1.9987, 0.190870), (2.5671, 1.9987, 0.071739))
_ROLLER = ((1.5859, 1.3993, 0.054381), (1.5859, 1.2348, 0.190870), (1.5859, 1.2348, 0.071739))


def life_modification_factor(
    viscosity_ratio: float,
    contamination: float,
    fatigue_limit_N: float,
    load_N: float,
    *,
    roller: bool,
) -> float:
    """a_ISO for a radial ball (``roller=False``) or radial roller bearing.

    Parameters
    ----------
    viscosity_ratio
        κ = ν/ν1, clipped to [0.1, 4] with a warning.
    contamination
        e_C in [0, 1] (1 = extreme cleanliness).
    fatigue_limit_N
        Fatigue load limit Cu in N.
    load_N
        Equivalent dynamic load P in N.
    roller
        Use the roller-bearing formula.

    Returns
    -------
    float
        a_ISO in (0, 50].
    """
    if not (viscosity_ratio > 0):
        raise InputError("viscosity ratio", f"expected κ > 0, got {viscosity_ratio}")
    if not (0.0 <= contamination <= 1.0):
        raise InputError("contamination", f"expected e_C between 0 and 1, got {contamination}")
    if not (fatigue_limit_N > 0):
        raise InputError("fatigue limit", f"expected Cu > 0, got {fatigue_limit_N} N")
    if not (load_N > 0):
        raise InputError("equivalent load", f"expected P > 0, got {load_N} N")
    kappa = viscosity_ratio
    if not (KAPPA_MIN <= kappa <= KAPPA_MAX):
        warnings.warn(
            f"viscosity ratio κ = {kappa:g} is outside 0.1–4; clipped for a_ISO",
            LifeModelWarning,
            stacklevel=2,
        )
        kappa = min(max(kappa, KAPPA_MIN), KAPPA_MAX)
    band = 0 if kappa < 0.4 else (1 if kappa < 1.0 else 2)
    const, coef, expo = (_ROLLER if roller else _BALL)[band]
    base = const - coef / kappa**expo
    load_term = contamination * fatigue_limit_N / load_N
    if roller:
        inner = 1.0 - base * load_term**0.4
        power = -9.185
    else:
        inner = 1.0 - base**0.83 * load_term ** (1.0 / 3.0)
        power = -9.3
    if inner <= 0.0:
        return A_ISO_MAX
    try:
        value = 0.1 * inner**power
    except OverflowError:  # inner just above 0: a_ISO is at its cap
        return A_ISO_MAX
    return float(min(value, A_ISO_MAX)) if math.isfinite(value) else A_ISO_MAX
