"""Fit the candidate life distributions to a censored sample and rank them.

Candidates: two-parameter Weibull, three-parameter Weibull (location by
profile likelihood) and two-parameter lognormal, all by maximum likelihood.
With only exact failures and suspensions the two-parameter fits come from the
``reliability`` package (through :mod:`fleetsim.fit.adapter`); when some
failures were found at inspection (interval censoring, which that package
does not support) fleetsim maximises the full likelihood itself
(:mod:`fleetsim.fit.likelihood`).

Candidates are ranked by AICc (or BIC): smaller is better (Burnham &
Anderson, *Model Selection and Multimodel Inference*). A candidate whose
location is not identifiable is ranked after the others. The *recommended*
model is not simply the lowest: :mod:`fleetsim.fit.choice` prefers the
simplest model the records support (ΔAICc > 2 needed for a richer one, and a
boundary-corrected likelihood-ratio test for a Weibull location).
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import pandas as pd

from fleetsim.errors import InputError
from fleetsim.fit import adapter
from fleetsim.fit.candidates import B_LIVES, MODELS, CandidateFit, candidate_from_mle
from fleetsim.fit.choice import ModelChoice, choose_model
from fleetsim.fit.errors import FitError, FitWarning
from fleetsim.fit.likelihood import MLEFit, fit_lognormal, fit_weibull, require_failures
from fleetsim.fit.location import LocationProfile, fit_weibull_3p
from fleetsim.fit.sample import CensoredSample

RANK_BY = ("AICc", "BIC")


@dataclass(frozen=True, eq=False)
class FitResult:
    """The ranked candidate fits of one sample.

    Attributes
    ----------
    sample
        The records fitted.
    confidence
        Two-sided level of every bound.
    rank_by
        ``"AICc"`` or ``"BIC"``.
    candidates
        Fitted candidates, best first.
    not_fitted
        ``(model, reason)`` for each candidate that could not be fitted.
    summary
        One row per candidate, best first: rank, model, best, identifiable,
        log_likelihood, AICc, BIC, delta (to the best), akaike_weight,
        recommended, shape, scale_h,
        location_h, B1_h, B10_h, each estimate with ``_lower``/``_upper``
        bounds, method and notes. For the lognormal, shape is σ (of ln
        hours) and scale_h the median e^μ.
    location_profile
        The Weibull location profile, when the 3P model was fitted.
    choice
        The recommended model, the Akaike weights and the location test
        (:mod:`fleetsim.fit.choice`).
    """

    sample: CensoredSample
    confidence: float
    rank_by: str
    candidates: tuple[CandidateFit, ...]
    not_fitted: tuple[tuple[str, str], ...]
    summary: pd.DataFrame
    location_profile: LocationProfile | None = None
    choice: ModelChoice | None = None

    @property
    def best(self) -> CandidateFit:
        """The lowest-ranked candidate (identifiable candidates rank before the others).

        This is the ranking, not the advice: use :attr:`recommended`.
        """
        return self.candidates[0]

    @property
    def recommended(self) -> CandidateFit:
        """The recommended candidate: the simplest the records support."""
        assert self.choice is not None
        return self.candidate(self.choice.recommended)

    @property
    def best_weibull(self) -> CandidateFit | None:
        """The recommended Weibull candidate (for fleetsim's life model), or None."""
        assert self.choice is not None
        model = self.choice.recommended_weibull
        return self.candidate(model) if model is not None else None

    def candidate(self, model: str) -> CandidateFit:
        """The fitted candidate ``model`` (``weibull_2p``, ``weibull_3p``, ``lognormal_2p``)."""
        for c in self.candidates:
            if c.model == model:
                return c
        reason = dict(self.not_fitted).get(model, "not asked for")
        raise KeyError(f"{model}: {reason}")


def _criterion(c: CandidateFit, rank_by: str) -> float:
    return c.aicc if rank_by == "AICc" else c.bic


def _fit_one(
    model: str, sample: CensoredSample, confidence: float
) -> tuple[CandidateFit, LocationProfile | None]:
    n = sample.n_records
    if model == "weibull_3p":
        fit3, prof = fit_weibull_3p(sample, confidence)
        if not prof.identifiable:
            notes: tuple[str, ...] = (f"location not identifiable: {prof.reason}",)
        elif prof.lower_h == 0.0:
            notes = (
                f"the location is not significantly above 0 (its {100 * confidence:g} % "
                "interval reaches 0)",
            )
        else:
            notes = ()
        cand = candidate_from_mle(
            model,
            fit3,
            n,
            confidence,
            location_bounds_h=(prof.lower_h, prof.upper_h),
            identifiable=prof.identifiable,
            notes=notes,
        )
        return cand, prof
    fit: MLEFit
    if model == "weibull_2p":
        fit = (
            fit_weibull(sample)
            if sample.has_intervals
            else adapter.weibull_2p(sample.failures_h, sample.suspensions_h)
        )
    else:
        fit = (
            fit_lognormal(sample)
            if sample.has_intervals
            else adapter.lognormal_2p(sample.failures_h, sample.suspensions_h)
        )
    return candidate_from_mle(model, fit, n, confidence), None


def fit_records(
    sample: CensoredSample,
    confidence: float = 0.90,
    models: tuple[str, ...] = tuple(MODELS),
    rank_by: str = "AICc",
) -> FitResult:
    """Fit the candidate models to the records and rank them.

    Parameters
    ----------
    sample
        Failures, suspensions and failures found at inspection, hours
        (:meth:`fleetsim.fit.records.FieldRecords.sample` gives one).
    confidence
        Two-sided level of the bounds, in (0, 1); 0.90 by default.
    models
        Any of ``weibull_2p``, ``weibull_3p``, ``lognormal_2p``.
    rank_by
        ``"AICc"`` (default) or ``"BIC"``.

    Returns
    -------
    FitResult

    Raises
    ------
    FitError
        With fewer than 2 failures, or when no candidate could be fitted.
    InputError
        For a bad confidence, model name or criterion.

    Warns
    -----
    FitWarning
        For each candidate that could not be fitted (the others are kept).
    """
    if not (0.5 <= confidence < 1.0):
        raise InputError("confidence", f"expected a level in [0.5, 1), got {confidence}")
    if rank_by not in RANK_BY:
        raise InputError("rank by", f"expected one of {', '.join(RANK_BY)}, got {rank_by!r}")
    unknown = [m for m in models if m not in MODELS]
    if unknown or not models:
        raise InputError("models", f"expected some of {', '.join(MODELS)}, got {list(models)}")
    require_failures(sample, 2, "fit")
    fitted: list[CandidateFit] = []
    failed: list[tuple[str, str]] = []
    profile = None
    for model in models:
        try:
            cand, prof = _fit_one(model, sample, confidence)
        except FitError as exc:
            failed.append((model, exc.expected))
            warnings.warn(
                f"{sample.label}: {MODELS[model]} not fitted: {exc.expected}",
                FitWarning,
                stacklevel=2,
            )
            continue
        fitted.append(cand)
        profile = prof or profile
    if not fitted:
        reasons = "; ".join(f"{MODELS[m]}: {r}" for m, r in failed)
        raise FitError(f"{sample.label}", f"no model could be fitted ({reasons})")
    fitted.sort(key=lambda c: (not c.identifiable, _criterion(c, rank_by), c.n_params))
    choice = choose_model(fitted, rank_by, confidence)
    return FitResult(
        sample=sample,
        confidence=confidence,
        rank_by=rank_by,
        candidates=tuple(fitted),
        not_fitted=tuple(failed),
        summary=_summary(fitted, rank_by, choice),
        location_profile=profile,
        choice=choice,
    )


def _summary(ranked: list[CandidateFit], rank_by: str, choice: ModelChoice) -> pd.DataFrame:
    best = _criterion(ranked[0], rank_by)
    rows = []
    for i, c in enumerate(ranked, start=1):
        row: dict[str, object] = {
            "rank": i,
            "model": c.model,
            "best": i == 1,
            "identifiable": c.identifiable,
            "log_likelihood": c.log_likelihood,
            "AICc": c.aicc,
            "BIC": c.bic,
            f"delta_{rank_by}": _criterion(c, rank_by) - best,
            "akaike_weight": choice.akaike_weights[c.model],
            "recommended": c.model == choice.recommended,
        }
        for name in ("shape", "scale_h", "location_h"):
            try:
                p = c.parameter(name)
                row.update({name: p.estimate, f"{name}_lower": p.lower, f"{name}_upper": p.upper})
            except KeyError:
                row.update({name: 0.0 if name == "location_h" else math.nan})
                row.update({f"{name}_lower": math.nan, f"{name}_upper": math.nan})
        for pc in B_LIVES:
            b = c.b_life(pc)
            key = f"B{pc:g}_h"
            row.update({key: b.estimate, f"{key}_lower": b.lower, f"{key}_upper": b.upper})
        row["method"] = c.method
        row["notes"] = "; ".join(c.notes)
        rows.append(row)
    return pd.DataFrame(rows)
