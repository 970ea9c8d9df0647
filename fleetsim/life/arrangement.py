"""Bearing arrangements of angular-contact ball and tapered roller bearings.

A contact-angle bearing under radial load Fr pushes its rings apart axially
with an induced force Fi, so such bearings are mounted against each other.

``single``
    One bearing; the axial load given is its own.
``face-to-face``, ``back-to-back``
    Two bearings A and B, one at each end of a shaft, adjusted against each
    other to about zero clearance. Each carries its own radial load; the
    external thrust Ka (the position's ``axial_load``) is taken by bearing A.
    With the induced forces FiA and FiB the axial loads are (Budynas &
    Nisbett, *Shigley's Mechanical Engineering Design*, tapered roller bearings;
    the same cases appear in bearing-maker handbook tables for angular-contact
    pairs; from memory)

        FaA = max(FiA, FiB + Ka),  FaB = FaA − Ka,

    i.e. if FiB + Ka >= FiA then FaA = FiB + Ka and FaB = FiB, else FaA = FiA and
    FaB = FiA − Ka. The two mountings differ in stiffness and in where the load
    centres lie, not in this rule.
``tandem``
    Two identical bearings side by side sharing the radial and axial load
    equally; each bearing is rated with the single-row factors at half the load.
``double-row``
    One double-row bearing (or a matched pair acting as one) rated with its own
    catalogue C and its factors X1, Y1 (below e) and X, Y (= X2, Y2) above e.

Induced axial force (from memory): Fi = Fr/(2Y) for tapered roller bearings
(the standard rule, Y the catalogue's axial factor above e); Fi = R·Fr for
angular-contact ball bearings with R by contact angle from bearing-maker
handbook tables (0.50 at 20°, 0.57 at 25°, 0.66 at 30°, 0.88 at 40°). A
catalogue's own factor (``induced_thrust_factor``) takes precedence.

The bearings of a pair are in series: the arrangement fails with the first of
them (:func:`series_rating_life`).

All forces are in newtons.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from enum import StrEnum

from scipy import optimize

from fleetsim.errors import InputError
from fleetsim.life.distribution import WeibullShape
from fleetsim.life.loads import BearingType, LoadFactors


class Arrangement(StrEnum):
    """How the bearings of one position are mounted."""

    SINGLE = "single"
    FACE_TO_FACE = "face-to-face"
    BACK_TO_BACK = "back-to-back"
    TANDEM = "tandem"
    DOUBLE_ROW = "double-row"

    @property
    def opposed(self) -> bool:
        """True for two bearings adjusted against each other (face-to-face, back-to-back)."""
        return self in (Arrangement.FACE_TO_FACE, Arrangement.BACK_TO_BACK)

    @property
    def bearing_names(self) -> tuple[str, ...]:
        """Names of the bearings in the arrangement."""
        if self.opposed:
            return ("A", "B")
        if self is Arrangement.TANDEM:
            return ("1", "2")
        return ("bearing",)


@dataclass(frozen=True)
class BearingLoad:
    """Radial and axial load of one bearing of an arrangement, N."""

    name: str
    radial_load_N: float
    axial_load_N: float


def induced_thrust_factor(bearing_type: BearingType | str, factors: LoadFactors) -> float:
    """Induced axial force per unit radial load, Fi/Fr, of a contact-angle bearing.

    Raises
    ------
    InputError
        ("bearing") when no rule gives it (an angular-contact contact angle
        outside the handbook table and no catalogue value).
    """
    from fleetsim.life.static import angular_contact_row

    kind = BearingType(bearing_type)
    if factors.induced_thrust_factor is not None:
        return factors.induced_thrust_factor
    if kind is BearingType.TAPERED_ROLLER:
        if not factors.Y > 0:
            raise InputError("bearing", "the induced thrust Fr/(2Y) needs the catalogue's Y > 0")
        return 1.0 / (2.0 * factors.Y)
    if kind is BearingType.ANGULAR_CONTACT_BALL:
        row = angular_contact_row(factors.e)
        if row is None or row[3] is None:
            raise InputError(
                "bearing",
                f"no published induced-thrust factor for e = {factors.e:g}; give the "
                "catalogue's induced_thrust_factor",
            )
        return row[3]
    raise InputError("bearing", f"a {kind.value} bearing has no induced axial force")


def opposed_axial_loads(
    induced_a_N: float, induced_b_N: float, external_thrust_N: float
) -> tuple[float, float]:
    """Axial loads (FaA, FaB) of an opposed pair; the external thrust acts on bearing A."""
    if external_thrust_N < 0:
        raise InputError("axial load", "expected the external thrust >= 0 (towards bearing A)")
    fa_a = max(induced_a_N, induced_b_N + external_thrust_N)
    return fa_a, fa_a - external_thrust_N


def bearing_loads(
    arrangement: Arrangement | str,
    bearing_type: BearingType | str,
    factors: LoadFactors | None,
    radial_load_N: float,
    axial_load_N: float,
    radial_load_b_N: float | None = None,
) -> tuple[BearingLoad, ...]:
    """The load of each bearing of an arrangement under one load case.

    Parameters
    ----------
    arrangement
        See the module docstring.
    bearing_type, factors
        The bearing and its catalogue factors.
    radial_load_N
        Radial load of the position (of bearing A for an opposed pair), N.
    axial_load_N
        Axial load of the position (the external thrust Ka for an opposed pair), N.
    radial_load_b_N
        Radial load of bearing B of an opposed pair, N (required there, unused otherwise).
    """
    arr = Arrangement(arrangement)
    kind = BearingType(bearing_type)
    if arr is not Arrangement.SINGLE and not kind.needs_catalogue_factors:
        raise InputError(
            "arrangement",
            f"arrangements apply to angular-contact-ball and tapered-roller bearings, "
            f"not {kind.value}",
        )
    if arr.opposed:
        if radial_load_b_N is None:
            raise InputError("radial load b", f"a {arr.value} pair needs the radial load of bearing B")
        assert factors is not None
        k = induced_thrust_factor(kind, factors)
        fa_a, fa_b = opposed_axial_loads(k * radial_load_N, k * radial_load_b_N, axial_load_N)
        return (BearingLoad("A", radial_load_N, fa_a), BearingLoad("B", radial_load_b_N, fa_b))
    if radial_load_b_N is not None:
        raise InputError("radial load b", "only a face-to-face or back-to-back pair has a bearing B")
    if arr is Arrangement.TANDEM:
        half = BearingLoad("1", radial_load_N / 2.0, axial_load_N / 2.0)
        return (half, BearingLoad("2", half.radial_load_N, half.axial_load_N))
    return (BearingLoad("bearing", radial_load_N, axial_load_N),)


def series_rating_life(lives_h: Sequence[float], model: WeibullShape) -> float:
    """Life of bearings in series at the model's reliability at L10, hours.

    Each bearing's life is ``model`` scaled by its rating life; the series
    reliability is the product. The result t solves Π R(t/L_i) = R(1) (for a
    consistent model R(1) = 0.9). With location 0 this is the closed form
    (Σ L_i^−b)^(−1/b) (Lundberg–Palmgren system life; any bearing text).
    """
    lives = [float(v) for v in lives_h]
    if not lives or not all(v > 0 and math.isfinite(v) for v in lives):
        raise InputError("rating life", f"expected lives > 0 h, got {lives}")
    if len(lives) == 1:
        return lives[0]

    def hazard(x: float) -> float:
        z = max(x - model.location, 0.0) / model.scale
        return z**model.shape

    goal = hazard(1.0)
    lo = min(lives)
    if goal <= 0.0:  # a model with no failures by L10: the series keeps the shortest life
        return lo
    return float(
        optimize.brentq(lambda t: sum(hazard(t / v) for v in lives) - goal, 0.0, lo, xtol=1e-12 * lo)
    )
