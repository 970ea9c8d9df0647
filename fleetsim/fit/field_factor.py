"""The field factor as a scale factor on the catalogue's own life model (fixed shape).

A scenario applies ``field_factor = k`` by multiplying every life of the
position's catalogue model: the life in units of the catalogue L10 is the
model ``WeibullShape(b, x0, s)`` with location and scale multiplied by k. So
the factor is fitted as exactly that, with the model's shape b held fixed:

    t / L10 ~ Weibull(shape b, location k·x0, scale k·s),

by maximum likelihood over k alone, with exact failures, suspensions and
failures found at inspection (the likelihood of
:func:`fleetsim.fit.likelihood.weibull_log_likelihood`). With x0 = 0, exact
failures and suspensions, this is the Weibayes estimate with a known slope:
(k·s·L10)^b = Σ t^b / r over all records, r failures (Nelson, *Applied Life
Data Analysis*, 1982, ch. 8; Abernethy, *The New Weibull Handbook*, ch. 6).
Each record is divided by its own catalogue L10, so one group may mix
positions of different catalogue lives.

The interval is the likelihood-ratio interval {k : 2[ℓ(k̂) − ℓ(k)] <= χ²₁(c)}
(one parameter, so the profile is the likelihood itself). A failure below
the scaled location has zero likelihood, so k stays below (first failure in
L10 units)/x0; an estimate pressed against that limit is flagged.

Beside it the free fit's B10 over L10 is kept (:mod:`fleetsim.fit.catalogue`):
when the field shape differs from the model's, the two disagree, and the
fixed-shape factor is the one that reproduces the records *inside the
scenario's life model*.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import optimize, stats

from fleetsim.errors import InputError
from fleetsim.fit.errors import FitError
from fleetsim.fit.likelihood import weibull_log_likelihood
from fleetsim.fit.sample import CensoredSample
from fleetsim.life import WeibullShape

METHOD = "fixed-shape maximum likelihood (Weibayes), likelihood-ratio interval"

#: Search range of the factor (a factor outside it means the records and model disagree).
_K_RANGE = (1e-4, 1e4)


@dataclass(frozen=True)
class FieldFactorFit:
    """A field factor fitted with the catalogue model's shape held fixed.

    Attributes
    ----------
    estimate, lower, upper
        The factor k and its likelihood-ratio bounds (dimensionless).
    confidence
        Two-sided level of the bounds.
    model
        The catalogue life model in units of L10 (its shape is held).
    catalogue_life_h
        The catalogue L10 in hours the factor multiplies (a_ISO·L10 when the
        scenario uses a_ISO); for a group mixing several, their geometric mean.
    n_failures, n_records
        Failures (exact or found at inspection) and records used.
    log_likelihood
        ln L at k̂ in units of L10 (for comparisons between factors only).
    notes
        Plain-words remarks (an estimate at its limit, a mixed group).
    """

    estimate: float
    lower: float
    upper: float
    confidence: float
    model: WeibullShape
    catalogue_life_h: float
    n_failures: int
    n_records: int
    log_likelihood: float
    notes: tuple[str, ...] = ()
    method: str = METHOD

    def as_dict(self) -> dict[str, object]:
        """``{estimate, lower, upper, method, catalogue_life_h, ...}`` for JSON."""
        return {
            "estimate": self.estimate,
            "lower": self.lower,
            "upper": self.upper,
            "method": self.method,
            "catalogue_life_h": self.catalogue_life_h,
            "confidence": self.confidence,
            "shape_held": self.model.shape,
            "life_model": self.model.name,
            "failures": self.n_failures,
            "records": self.n_records,
            "notes": list(self.notes),
        }


def scaled_sample(sample: CensoredSample, l10_h: float) -> CensoredSample:
    """The sample with every age divided by one catalogue L10 (hours → units of L10).

    For records of positions with different catalogue lives, divide record by
    record instead (:meth:`fleetsim.fit.records.FieldRecords.sample` with ``per_l10_h``).
    """
    return CensoredSample(
        failures_h=sample.failures_h / l10_h,
        suspensions_h=sample.suspensions_h / l10_h,
        interval_lower_h=sample.interval_lower_h / l10_h,
        interval_upper_h=sample.interval_upper_h / l10_h,
        label=sample.label,
    )


def _log_lik(sample_l10: CensoredSample, model: WeibullShape, k: float) -> float:
    return weibull_log_likelihood(sample_l10, model.shape, k * model.scale, k * model.location)


def fit_field_factor(
    sample_l10: CensoredSample,
    model: WeibullShape,
    confidence: float = 0.90,
    catalogue_life_h: float = math.nan,
) -> FieldFactorFit:
    """Fit the field factor k on a sample in units of the catalogue L10.

    Parameters
    ----------
    sample_l10
        Ages divided by each record's catalogue L10 (dimensionless).
    model
        The catalogue life model in units of L10 (``iso281``: shape 1.5,
        location 0.05, scale 0.95/0.1054^(2/3)); its shape is held fixed.
    confidence
        Two-sided level of the likelihood-ratio interval.
    catalogue_life_h
        The L10 in hours, for reporting.

    Raises
    ------
    FitError
        Without any failure, or when the likelihood has no maximum in
        10⁻⁴–10⁴.
    """
    if not (0.5 <= confidence < 1.0):
        raise InputError("confidence", f"expected a level in [0.5, 1), got {confidence}")
    if sample_l10.n_failures < 1:
        raise FitError(
            f"{sample_l10.label}: field factor",
            "needs at least one failure (with none, only a lower bound on the life is known)",
        )
    lo, hi = _K_RANGE
    notes: list[str] = []
    if model.location > 0:
        # a failure at or below the scaled location k·x0 has zero likelihood
        hi = min(hi, sample_l10.location_limit_h / model.location * (1.0 - 1e-9))
    ln_lo, ln_hi = math.log(lo), math.log(hi)
    closed = model.location == 0 and not sample_l10.has_intervals

    def neg(lk: float) -> float:
        v = _log_lik(sample_l10, model, math.exp(lk))
        return -v if math.isfinite(v) else 1e300

    if closed:  # Weibayes: (k s)^b = Σ u^b / r over all records
        u = np.concatenate([sample_l10.failures_h, sample_l10.suspensions_h])
        k_hat = float((np.sum(u**model.shape) / sample_l10.n_failures) ** (1 / model.shape))
        k_hat /= model.scale
        lk_hat = math.log(k_hat)
    else:
        grid = np.linspace(ln_lo, ln_hi, 81)
        vals = np.array([neg(g) for g in grid])
        i = int(np.argmin(vals))
        a, b = grid[max(i - 1, 0)], grid[min(i + 1, grid.size - 1)]
        res = optimize.minimize_scalar(
            neg, bounds=(a, b), method="bounded", options={"xatol": 1e-10}
        )
        lk_hat = float(res.x) if res.fun <= vals[i] else float(grid[i])
        k_hat = math.exp(lk_hat)
    best = -neg(lk_hat)
    if not math.isfinite(best) or best <= -1e299:
        raise FitError(f"{sample_l10.label}: field factor", "no factor gives a finite likelihood")
    at_top = lk_hat >= ln_hi - 1e-6
    if lk_hat <= ln_lo + 1e-6 or (at_top and model.location == 0):
        raise FitError(
            f"{sample_l10.label}: field factor",
            "the likelihood has no maximum for a factor in 1e-4–1e4: records and catalogue "
            "life do not fit together (check the hours and the scenario's loads)",
        )
    if at_top:
        notes.append(
            "the factor is pressed against its limit: the first failure sits at the scaled "
            "location (failure-free life) of the catalogue model"
        )
    cut = best - 0.5 * float(stats.chi2.ppf(confidence, 1))

    def excess(lk: float) -> float:
        return -neg(lk) - cut

    lower = math.exp(optimize.brentq(excess, ln_lo, lk_hat, xtol=1e-12)) if excess(
        ln_lo
    ) < 0 else lo
    if at_top or excess(ln_hi) >= 0:
        upper = math.exp(ln_hi)
        if not at_top:
            notes.append("the upper bound runs to the limit set by the first failure")
    else:
        upper = math.exp(optimize.brentq(excess, lk_hat, ln_hi, xtol=1e-12))
    return FieldFactorFit(
        estimate=k_hat,
        lower=lower,
        upper=upper,
        confidence=confidence,
        model=model,
        catalogue_life_h=float(catalogue_life_h),
        n_failures=sample_l10.n_failures,
        n_records=sample_l10.n_records,
        log_likelihood=best,
        notes=tuple(notes),
    )
