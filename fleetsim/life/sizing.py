"""Design inverse: the rating a position needs, series systems, catalogue choice.

For a design life x_D (in units of the rating basis, 10^6 revolutions) at
reliability R under load F, the required basic dynamic rating is

    C10 = a_f·F·[x_D / q(R)]^(1/p),

where q(R) is the life at reliability R in units of L10 for the chosen life
model. With the ``textbook`` preset q(R) = x0 + (θ − x0)(ln 1/R)^(1/b), the
familiar form (Budynas & Nisbett, *Shigley's Mechanical Engineering Design*);
with ``iso281`` q(R) is the ISO 281:2007 reliability factor a1.
"""

from __future__ import annotations

import csv
import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from fleetsim.errors import InputError
from fleetsim.life.distribution import WeibullShape, _check_reliability, life_shape
from fleetsim.life.loads import BearingType, LoadFactors
from fleetsim.life.rating import hours_to_revolutions


def required_dynamic_rating(
    load_N: float,
    speed_rpm: float,
    life_h: float,
    reliability: float,
    *,
    bearing_type: BearingType | str = BearingType.BALL,
    model: str | Mapping[str, Any] | WeibullShape = "iso281",
    application_factor: float = 1.0,
    a_iso: float = 1.0,
) -> float:
    """Basic dynamic rating C in N needed for a life at a reliability.

    Parameters
    ----------
    load_N
        Equivalent dynamic load P (without the application factor), N.
    speed_rpm
        Speed, rev/min.
    life_h
        Design life, operating hours.
    reliability
        Required reliability at the design life, in (0, 1).
    bearing_type
        Gives the life exponent p.
    model
        Life model in units of L10.
    application_factor
        a_f multiplying the load.
    a_iso
        Life modification factor credited to the design (1 for the basic rating).
    """
    _check_reliability(reliability, "reliability")
    if not load_N > 0:
        raise InputError("load", f"expected a load > 0, got {load_N} N")
    if not life_h > 0:
        raise InputError("life", f"expected a design life > 0, got {life_h} h")
    if not a_iso > 0:
        raise InputError("a_iso", f"expected a_ISO > 0, got {a_iso}")
    kind = BearingType(bearing_type)
    x_d = hours_to_revolutions(life_h, speed_rpm)
    q = float(life_shape(model).life_ratio(reliability)) * a_iso
    return application_factor * load_N * (x_d / q) ** (1.0 / kind.life_exponent)


def series_reliability(reliabilities: Iterable[float]) -> float:
    """Reliability of positions in series (the machine fails with its first position)."""
    out = 1.0
    for r in reliabilities:
        if not 0.0 <= r <= 1.0:
            raise InputError("reliability", f"expected values in [0, 1], got {r}")
        out *= r
    return out


def allocate_reliability(target: float, positions: int) -> float:
    """Equal allocation: each of ``positions`` in series needs R_target^(1/n)."""
    _check_reliability(target, "reliability target")
    if positions < 1:
        raise InputError("positions", f"expected at least one position, got {positions}")
    return target ** (1.0 / positions)


@dataclass(frozen=True)
class CatalogueEntry:
    """One bearing of a user catalogue.

    Attributes
    ----------
    designation
        The user's name for the bearing.
    bearing_type
        Kind of bearing.
    dynamic_rating_N, static_rating_N, fatigue_limit_N
        C, C0, Cu in N (C0 and Cu may be None).
    bore_mm
        Bore diameter, mm (None if not given).
    price
        Unit price in the plant's currency (None if not given).
    factors
        e, X, Y for contact-angle bearings.
    """

    designation: str
    bearing_type: BearingType
    dynamic_rating_N: float
    static_rating_N: float | None = None
    fatigue_limit_N: float | None = None
    bore_mm: float | None = None
    price: float | None = None
    factors: LoadFactors | None = None


_REQUIRED_COLUMNS = ("designation", "type", "dynamic_rating_kN")


def read_catalogue(path: str | Path) -> list[CatalogueEntry]:
    """Read a bearing catalogue CSV.

    Columns: ``designation, type, dynamic_rating_kN`` (required) and
    ``static_rating_kN, fatigue_limit_kN, bore_mm, price, e, X, Y`` (optional).
    The unit is in the column name.

    Raises
    ------
    InputError
        Naming the file, row and column of the first bad value.
    """
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as exc:
        raise InputError(str(path), f"cannot read the catalogue ({exc.strerror})") from None
    rows = list(csv.DictReader(text.splitlines()))
    if not rows:
        raise InputError(str(path), "expected a header line and at least one bearing")
    missing = [c for c in _REQUIRED_COLUMNS if c not in rows[0]]
    if missing:
        raise InputError(str(path), f"missing column(s) {', '.join(missing)}")
    out = []
    for i, row in enumerate(rows, start=2):

        def num(col: str, scale: float = 1.0, row: dict[str, Any] = row, i: int = i) -> float | None:
            raw = (row.get(col) or "").strip()
            if not raw:
                return None
            try:
                value = float(raw) * scale
            except ValueError:
                raise InputError(f"{path}:{i}: {col}", f"expected a number, got {raw!r}") from None
            if not (value > 0 and math.isfinite(value)) and col not in ("e", "X", "Y"):
                raise InputError(f"{path}:{i}: {col}", f"expected a positive number, got {raw!r}")
            return value

        try:
            kind = BearingType(row["type"].strip())
        except ValueError:
            kinds = ", ".join(k.value for k in BearingType)
            raise InputError(f"{path}:{i}: type", f"expected one of {kinds}, got {row['type']!r}") from None
        c = num("dynamic_rating_kN", 1e3)
        if c is None:
            raise InputError(f"{path}:{i}: dynamic_rating_kN", "expected a value")
        e, x, y = num("e"), num("X"), num("Y")
        factors = LoadFactors(e, x, y) if e is not None and x is not None and y is not None else None
        out.append(
            CatalogueEntry(
                designation=row["designation"].strip(),
                bearing_type=kind,
                dynamic_rating_N=c,
                static_rating_N=num("static_rating_kN", 1e3),
                fatigue_limit_N=num("fatigue_limit_kN", 1e3),
                bore_mm=num("bore_mm"),
                price=num("price"),
                factors=factors,
            )
        )
    return out


def select_bearing(
    catalogue: Sequence[CatalogueEntry],
    required_dynamic_rating_N: float,
    bearing_type: BearingType | str,
    *,
    bore_mm: float | None = None,
) -> CatalogueEntry | None:
    """The smallest adequate bearing: least C >= the requirement, then lowest price.

    Only bearings of ``bearing_type`` (and of ``bore_mm`` when given) count.
    Returns None when none is adequate.
    """
    kind = BearingType(bearing_type)
    fits = [
        b
        for b in catalogue
        if b.bearing_type is kind
        and b.dynamic_rating_N >= required_dynamic_rating_N
        and (bore_mm is None or b.bore_mm == bore_mm)
    ]
    if not fits:
        return None
    return min(fits, key=lambda b: (b.dynamic_rating_N, b.price if b.price is not None else 0.0))
