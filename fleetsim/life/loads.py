"""Equivalent dynamic load P from radial and axial loads.

P = X·V·Fr + Y·Fa when Fa/(V·Fr) > e, and P = X1·V·Fr + Y1·Fa otherwise, with
X1 = 1, Y1 = 0 for single-row bearings; double-row bearings (and pairs acting
as one) give their own Y1 (ISO 281:2007, Tables 3 and 4).

* Radial (deep-groove) ball bearings take e and Y from the widely published
  table indexed by Fa/C0 (:data:`RADIAL_BALL_TABLE`, X2 = 0.56), interpolated
  linearly between rows and clamped at its ends with a warning.
* Cylindrical roller bearings take radial load only: an axial load is an error.
* Angular-contact ball and tapered roller bearings take e, X and Y from the
  user's catalogue entry (:class:`LoadFactors`).

The application (load) factor multiplies the result; it is reported separately
so the user can see the bare P.

All forces are in newtons.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass
from enum import StrEnum

import numpy as np

from fleetsim.errors import InputError, LifeModelWarning


class BearingType(StrEnum):
    """Kinds of rolling bearing fleetsim can rate.

    ``BALL`` is a radial deep-groove ball bearing, ``ROLLER`` a cylindrical
    roller bearing. The two contact-angle kinds need e, X and Y from the
    bearing maker's catalogue.
    """

    BALL = "ball"
    ROLLER = "roller"
    ANGULAR_CONTACT_BALL = "angular-contact-ball"
    TAPERED_ROLLER = "tapered-roller"

    @property
    def life_exponent(self) -> float:
        """Exponent p of the rating-life equation: 3 for ball, 10/3 for roller bearings."""
        if self in (BearingType.BALL, BearingType.ANGULAR_CONTACT_BALL):
            return 3.0
        return 10.0 / 3.0

    @property
    def is_roller(self) -> bool:
        """True for line-contact bearings (roller formulas of ISO 281)."""
        return self in (BearingType.ROLLER, BearingType.TAPERED_ROLLER)

    @property
    def needs_catalogue_factors(self) -> bool:
        """True when e, X and Y must come from the user's catalogue entry."""
        return self in (BearingType.ANGULAR_CONTACT_BALL, BearingType.TAPERED_ROLLER)


#: Radial ball bearings: columns Fa/C0, e, Y2 (X2 = 0.56 for every row).
#: The widely published table, e.g. Budynas & Nisbett, *Shigley's Mechanical
#: Engineering Design*, Table 11-1 (from memory).
RADIAL_BALL_TABLE: np.ndarray = np.array(
    [
        [0.014, 0.19, 2.30],
        [0.021, 0.21, 2.15],
        [0.028, 0.22, 1.99],
        [0.042, 0.24, 1.85],
        [0.056, 0.26, 1.71],
        [0.070, 0.27, 1.63],
        [0.084, 0.28, 1.55],
        [0.110, 0.30, 1.45],
        [0.170, 0.34, 1.31],
        [0.280, 0.38, 1.15],
        [0.420, 0.42, 1.04],
        [0.560, 0.44, 1.00],
    ]
)
RADIAL_BALL_X2 = 0.56


@dataclass(frozen=True)
class LoadFactors:
    """The e, X, Y factors that apply to one load case.

    Attributes
    ----------
    e
        Limit of Fa/(V·Fr) between the two sets of factors.
    X, Y
        Radial and axial factors used when Fa/(V·Fr) > e (X2, Y2 of a
        double-row bearing).
    X1, Y1
        Factors used when Fa/(V·Fr) <= e: 1 and 0 for single-row bearings.
    X0, Y0
        Static factors of the catalogue (None: the ISO 76 values, see
        :mod:`fleetsim.life.static`).
    induced_thrust_factor
        Induced axial force per unit radial load of a contact-angle bearing
        (None: 1/(2Y) for tapered roller bearings, the handbook value by
        contact angle for angular-contact ball bearings; see
        :mod:`fleetsim.life.arrangement`).
    """

    e: float
    X: float
    Y: float
    X1: float = 1.0
    Y1: float = 0.0
    X0: float | None = None
    Y0: float | None = None
    induced_thrust_factor: float | None = None


@dataclass(frozen=True)
class EquivalentLoad:
    """Result of an equivalent-load calculation.

    Attributes
    ----------
    load_N
        Equivalent dynamic load P including the application factor, in N.
    bare_load_N
        P before the application factor, in N.
    e, X, Y
        The factors used. X and Y are the ones applied: (X1, Y1) when
        Fa/(V·Fr) <= e.
    """

    load_N: float
    bare_load_N: float
    e: float
    X: float
    Y: float


def radial_ball_factors(axial_load_N: float, static_rating_N: float) -> LoadFactors:
    """e and Y of a radial ball bearing from Fa/C0, X = 0.56.

    Linear interpolation between the rows of :data:`RADIAL_BALL_TABLE`; outside
    the table (Fa/C0 < 0.014 or > 0.56) the end row is used and a
    :class:`~fleetsim.errors.LifeModelWarning` is issued.
    """
    if static_rating_N <= 0:
        raise InputError("static rating", f"expected a positive force, got {static_rating_N} N")
    ratio = axial_load_N / static_rating_N
    lo, hi = RADIAL_BALL_TABLE[0, 0], RADIAL_BALL_TABLE[-1, 0]
    if ratio < lo or ratio > hi:
        warnings.warn(
            f"Fa/C0 = {ratio:.4g} is outside the X/Y table ({lo}–{hi}); using the end row",
            LifeModelWarning,
            stacklevel=2,
        )
    r = float(np.clip(ratio, lo, hi))
    e = float(np.interp(r, RADIAL_BALL_TABLE[:, 0], RADIAL_BALL_TABLE[:, 1]))
    y = float(np.interp(r, RADIAL_BALL_TABLE[:, 0], RADIAL_BALL_TABLE[:, 2]))
    return LoadFactors(e=e, X=RADIAL_BALL_X2, Y=y)


def equivalent_load(
    bearing_type: BearingType | str,
    radial_load_N: float,
    axial_load_N: float = 0.0,
    *,
    static_rating_N: float | None = None,
    factors: LoadFactors | None = None,
    rotation_factor: float = 1.0,
    application_factor: float = 1.0,
) -> EquivalentLoad:
    """Equivalent dynamic load P of one load case.

    Parameters
    ----------
    bearing_type
        Kind of bearing (:class:`BearingType` or its string value).
    radial_load_N, axial_load_N
        Radial load Fr and axial load Fa, in N (non-negative, not both zero).
    static_rating_N
        Basic static load rating C0 in N; needed for radial ball bearings
        carrying an axial load.
    factors
        e, X, Y from the catalogue; required for angular-contact ball and
        tapered roller bearings, ignored otherwise.
    rotation_factor
        V: 1 when the inner ring rotates (default), 1.2 for a rotating outer
        ring in the older convention.
    application_factor
        Load (application) factor a_f >= 1 multiplying P for shock and vibration.

    Returns
    -------
    EquivalentLoad
    """
    kind = BearingType(bearing_type)
    if radial_load_N < 0:
        raise InputError("radial load", f"expected a load >= 0, got {radial_load_N:g} N")
    if axial_load_N < 0:
        raise InputError("axial load", f"expected a load >= 0, got {axial_load_N:g} N")
    if radial_load_N == 0 and axial_load_N == 0:
        raise InputError("radial load", "expected a positive radial or axial load, got both zero")
    if rotation_factor <= 0:
        raise InputError("rotation factor", f"expected V > 0, got {rotation_factor:g}")
    if application_factor <= 0:
        raise InputError("application factor", f"expected a_f > 0, got {application_factor:g}")

    vfr = rotation_factor * radial_load_N
    if kind is BearingType.ROLLER:
        if axial_load_N > 0:
            raise InputError(
                "axial load",
                "a cylindrical roller bearing takes radial load only; expected no axial load",
            )
        lf = LoadFactors(e=float("inf"), X=1.0, Y=0.0)
    elif kind is BearingType.BALL:
        if axial_load_N > 0:
            if static_rating_N is None:
                raise InputError(
                    "static rating", "a ball bearing with axial load needs its static rating C0"
                )
            lf = radial_ball_factors(axial_load_N, static_rating_N)
        else:
            lf = LoadFactors(e=RADIAL_BALL_TABLE[0, 1], X=RADIAL_BALL_X2, Y=RADIAL_BALL_TABLE[0, 2])
    else:
        if factors is None:
            raise InputError(
                "bearing", f"a {kind.value} bearing needs e, X and Y from its catalogue entry"
            )
        lf = factors

    if vfr > 0 and axial_load_N / vfr <= lf.e:
        x, y = lf.X1, lf.Y1
    else:
        x, y = lf.X, lf.Y
    bare = x * vfr + y * axial_load_N
    return EquivalentLoad(
        load_N=application_factor * bare, bare_load_N=bare, e=lf.e, X=x, Y=y
    )
