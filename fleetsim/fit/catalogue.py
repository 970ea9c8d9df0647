"""How far the plant's bearings are from their catalogue life: the field life factor.

The catalogue (rating) life L10 is the age 90 % of bearings reach under
catalogue conditions; the same age from field records is the fitted B10. The
**field factor** is

    field factor = field B10 / catalogue L10,

with bounds from the B10 bounds (the catalogue L10 taken as exact). A
scenario applies it as ``field_factor``: every life of the catalogue model is
multiplied by it, so the scaled model's B10 equals the field B10.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from fleetsim.errors import InputError
from fleetsim.fit.candidates import CandidateFit, Estimate
from fleetsim.fit.fitting import FitResult


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
    fit: FitResult | CandidateFit, catalog_l10_h: float
) -> CatalogueComparison:
    """Field factor of a fit (its best candidate) against the catalogue L10 in hours.

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
    cand = fit.best if isinstance(fit, FitResult) else fit
    b10 = cand.b_life(10.0)
    k = b10.estimate / catalog_l10_h
    lo, hi = b10.lower / catalog_l10_h, b10.upper / catalog_l10_h
    return CatalogueComparison(
        catalog_l10_h=float(catalog_l10_h),
        field_b10=b10,
        factor=k,
        factor_lower=lo,
        factor_upper=hi,
        confidence=cand.confidence,
        model=cand.model,
        verdict=verdict(k, lo, hi, cand.confidence),
    )
