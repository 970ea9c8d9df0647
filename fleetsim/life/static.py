"""Static equivalent load P0 and the static safety factor s0 (ISO 76).

P0 = max(Fr, X0·Fr + Y0·Fa) for radial bearings carrying a combined load,
and s0 = C0/P0. The factors X0 and Y0 are those of ISO 76 (from memory):

* radial (deep-groove) ball bearings: X0 = 0.6, Y0 = 0.5;
* cylindrical roller bearings (contact angle 0, radial load only): P0 = Fr;
* tapered roller bearings, single row: X0 = 0.5, Y0 = 0.22·cot α; double row
  (or a matched pair acting as one): X0 = 1, Y0 = 0.44·cot α. The contact angle
  follows from the catalogue's e through ISO 281's e = 1.5·tan α, so
  Y0 = 0.33/e (single) and 0.66/e (double);
* angular-contact ball bearings, single row: X0 = 0.5 and Y0 by contact angle
  (:data:`ANGULAR_CONTACT_TABLE`); double row: X0 = 1 and twice the single-row Y0.

A catalogue's own X0 and Y0 (:class:`~fleetsim.life.loads.LoadFactors`) take
precedence. The minimum values of s0 (:data:`MINIMUM_S0`) are common practice
for rotating bearings in normal service, not a standard: a lower s0 gives a
warning, never an error.

All forces are in newtons.
"""

from __future__ import annotations

import math

from fleetsim.errors import InputError
from fleetsim.life.loads import BearingType, LoadFactors

#: Angular-contact ball bearings by contact angle α (degrees): the single-row e
#: of ISO 281:2007 Table 3, the single-row Y0 of ISO 76 and the induced-thrust
#: factor R (induced axial force R·Fr of a bearing adjusted to zero clearance,
#: bearing-maker handbook tables; None where no value is published beside it).
#: Columns: α, e, Y0 (single row), R. All from memory.
ANGULAR_CONTACT_TABLE: tuple[tuple[float, float, float, float | None], ...] = (
    (20.0, 0.57, 0.42, 0.50),
    (25.0, 0.68, 0.38, 0.57),
    (30.0, 0.80, 0.33, 0.66),
    (35.0, 0.95, 0.29, None),
    (40.0, 1.14, 0.26, 0.88),
    (45.0, 1.34, 0.22, None),
)

#: Radial ball bearings, ISO 76 (from memory).
RADIAL_BALL_X0, RADIAL_BALL_Y0 = 0.6, 0.5

#: Minimum static safety factor for rotating bearings in normal service
#: (common practice: bearing-maker guidance, about 1 for ball and 1.5 for
#: roller bearings; quiet running or shock loads call for more).
MINIMUM_S0: dict[bool, float] = {False: 1.0, True: 1.5}


def angular_contact_row(e: float) -> tuple[float, float, float, float | None] | None:
    """The row of :data:`ANGULAR_CONTACT_TABLE` whose e matches (within 0.005), or None."""
    for row in ANGULAR_CONTACT_TABLE:
        if abs(row[1] - e) <= 0.005:
            return row
    return None


def static_factors(
    bearing_type: BearingType | str, factors: LoadFactors | None, *, double_row: bool = False
) -> tuple[float, float]:
    """X0 and Y0 of a bearing (single row, or double row / a pair acting as one).

    Raises
    ------
    InputError
        ("bearing") for an angular-contact ball bearing whose e matches no row of
        :data:`ANGULAR_CONTACT_TABLE` and whose catalogue entry gives no Y0.
    """
    kind = BearingType(bearing_type)
    if kind is BearingType.BALL:
        return RADIAL_BALL_X0, RADIAL_BALL_Y0
    if kind is BearingType.ROLLER:
        return 1.0, 0.0
    x0_default = 1.0 if double_row else 0.5
    if factors is not None and factors.Y0 is not None:
        return (factors.X0 if factors.X0 is not None else x0_default), factors.Y0
    if factors is None:
        raise InputError("bearing", f"a {kind.value} bearing needs e, X and Y from its catalogue")
    if kind is BearingType.TAPERED_ROLLER:
        y0 = 0.33 / factors.e
    else:
        row = angular_contact_row(factors.e)
        if row is None:
            raise InputError(
                "bearing",
                f"e = {factors.e:g} matches no contact angle of the angular-contact table; "
                "give the catalogue's Y0",
            )
        y0 = row[2]
    return (factors.X0 if factors.X0 is not None else x0_default), (2.0 * y0 if double_row else y0)


def static_equivalent_load(
    bearing_type: BearingType | str,
    radial_load_N: float,
    axial_load_N: float = 0.0,
    *,
    factors: LoadFactors | None = None,
    double_row: bool = False,
) -> float:
    """Static equivalent load P0 = max(Fr, X0·Fr + Y0·Fa), N (ISO 76)."""
    if radial_load_N < 0 or axial_load_N < 0:
        raise InputError("radial load", "expected loads >= 0")
    x0, y0 = static_factors(bearing_type, factors, double_row=double_row)
    return max(radial_load_N, x0 * radial_load_N + y0 * axial_load_N)


def static_safety_factor(static_rating_N: float, static_load_N: float) -> float:
    """s0 = C0/P0 (infinite when P0 = 0)."""
    if not static_rating_N > 0:
        raise InputError("static rating", f"expected C0 > 0, got {static_rating_N} N")
    return math.inf if static_load_N <= 0 else static_rating_N / static_load_N
