"""How far the plant's bearings are from their catalogue life: the field life factor.

The catalogue (rating) life L10 is the age 90 % of bearings reach under
catalogue conditions; the same age from field records is the fitted B10. The
**field factor** is

    field factor = field B10 / catalogue L10,

with bounds from the B10 bounds (the catalogue L10 taken as exact). A
scenario applies it as ``field_factor``: every life of the catalogue model is
multiplied by it, so the scaled model's B10 equals the field B10 — the
catalogue's own reference point.

The ratio of characteristic lives (the age 63.2 % of bearings fail by) is
reported beside it, field B63.2 over the catalogue model's characteristic life
(``iso281``: (0.05 + 4.259)·L10), with bounds from the B63.2 bounds. When the
field shape equals the catalogue shape the two ratios agree; when they differ,
the comparison of both says where the field distribution departs from the
catalogue one.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from fleetsim.errors import InputError
from fleetsim.fit.candidates import CandidateFit, Estimate
from fleetsim.fit.fitting import FitResult
from fleetsim.life import WeibullShape, life_shape


@dataclass(frozen=True)
class CatalogueComparison:
    """Field B10 against catalogue L10.

    Attributes
    ----------
    catalog_l10_h
        Catalogue rating life L10, hours.
    field_b10
        Fitted B10 with bounds, hours.
    factor, factor_lower, factor_upper
        Field factor B10/L10 and its bounds (NaN when B10 has none).
    confidence
        Two-sided level of the bounds.
    model
        The candidate the field B10 comes from.
    verdict
        One sentence in plain words.
    """

    catalog_l10_h: float
    field_b10: Estimate
    factor: float
    factor_lower: float
    factor_upper: float
    confidence: float
    model: str
    verdict: str
    characteristic_factor: float = math.nan
    characteristic_factor_lower: float = math.nan
    characteristic_factor_upper: float = math.nan
    catalog_characteristic_h: float = math.nan

    def as_dict(self) -> dict[str, object]:
        """A JSON-ready mapping."""
        return {
            "catalog_l10_h": self.catalog_l10_h,
            "field_b10_h": self.field_b10.as_dict(),
            "field_factor": self.factor,
            "field_factor_lower": self.factor_lower,
            "field_factor_upper": self.factor_upper,
            "confidence": self.confidence,
            "model": self.model,
            "verdict": self.verdict,
            "catalog_characteristic_life_h": self.catalog_characteristic_h,
            "characteristic_life_factor": self.characteristic_factor,
            "characteristic_life_factor_lower": self.characteristic_factor_lower,
            "characteristic_life_factor_upper": self.characteristic_factor_upper,
        }


def _percent(x: float) -> str:
    """A share as percent: whole numbers from 10 %, two significant figures below."""
    return f"{100 * x:.0f}" if x >= 0.1 else f"{100 * x:.2g}"


def verdict(factor: float, lower: float, upper: float, confidence: float) -> str:
    """A plain-words sentence for a field factor and its bounds."""
    if factor >= 1.0:
        head = f"these bearings outlast their catalogue life: field B10 is about {factor:.2g} × L10"
    else:
        head = f"these bearings reach about {_percent(factor)} % of their catalogue life"
    if math.isfinite(lower) and math.isfinite(upper):
        rng = f"{_percent(lower)}–{_percent(upper)} %"
        tail = f" ({100 * confidence:g} % bounds {rng} of L10"
        tail += "; the catalogue life lies within them)" if lower <= 1.0 <= upper else ")"
    else:
        tail = " (no bounds: see the fit notes)"
    return head + tail


def compare_with_catalogue(
    fit: FitResult | CandidateFit, catalog_l10_h: float,
    catalog_model: str | WeibullShape = "iso281",
) -> CatalogueComparison:
    """Field factor of a fit (its recommended candidate) against the catalogue L10 in hours.

    ``catalog_model`` (a life-model preset) gives the catalogue characteristic life.

    Raises
    ------
    InputError
        When ``catalog_l10_h`` is not a positive number of hours.
    """
    if not (
        isinstance(catalog_l10_h, (int, float))
        and catalog_l10_h > 0
        and math.isfinite(catalog_l10_h)
    ):
        raise InputError("catalogue L10", f"expected hours > 0, got {catalog_l10_h!r}")
    cand = fit.recommended if isinstance(fit, FitResult) else fit
    b10 = cand.b_life(10.0)
    k = b10.estimate / catalog_l10_h
    lo, hi = b10.lower / catalog_l10_h, b10.upper / catalog_l10_h
    theta_cat = float(life_shape(catalog_model).life_ratio(math.exp(-1.0))) * catalog_l10_h
    b63 = cand.b_life(100.0 * (1.0 - math.exp(-1.0)))
    return CatalogueComparison(
        catalog_characteristic_h=theta_cat,
        characteristic_factor=b63.estimate / theta_cat,
        characteristic_factor_lower=b63.lower / theta_cat,
        characteristic_factor_upper=b63.upper / theta_cat,
        catalog_l10_h=float(catalog_l10_h),
        field_b10=b10,
        factor=k,
        factor_lower=lo,
        factor_upper=hi,
        confidence=cand.confidence,
        model=cand.model,
        verdict=verdict(k, lo, hi, cand.confidence),
    )
