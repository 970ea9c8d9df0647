"""Which fitted model to recommend: the simplest one the records support.

Ranking by the lowest AICc alone picks a richer model on a difference that
is noise: on samples of 30 from a two-parameter Weibull a three-parameter fit
often wins by about 1 AICc unit. The rule here starts from the two-parameter
Weibull (fleetsim's life model and the catalogue's own family, ISO 281) and
lets another model replace it only on clear evidence:

1. **A location only when the records show one.** The Weibull 3P replaces
   the Weibull 2P when both (a) its AICc is more than 2 below (candidates
   within 2 units are all substantially supported, so the simpler is kept:
   Burnham & Anderson, *Model Selection and Multimodel Inference*, 2nd ed.
   2002, sec. 2.6) and (b) the likelihood-ratio test of location 0 rejects
   at the level (1 − confidence)/2. Location 0 lies on the boundary of the
   parameter space, so D = 2(ℓ_3P − ℓ_2P) follows ½χ²₀ + ½χ²₁ under the
   null and p = ½·P(χ²₁ > D) (Self & Liang, JASA 82, 1987, case 1). At the
   default 90 % bounds that is a 5 % test, which rejects exactly when the
   location's 90 % likelihood-ratio interval excludes 0: a location whose
   interval reaches 0 is never recommended. A location that is not
   identifiable is never recommended either.
2. **Another family only on considerable evidence.** The lognormal (not
   nested with the Weibull, same number of parameters) replaces the Weibull
   chosen in step 1 when its AICc is more than 4 below: Burnham & Anderson
   (2002, sec. 2.6) read Δ of 4–7 as "considerably less support" for the
   worse model. (With the 2-unit threshold the lognormal would replace the
   Weibull in about 10 % of censored samples of 30 Weibull lives.)

With ``rank_by="BIC"`` the same thresholds apply to BIC differences (Kass &
Raftery, JASA 1995: 2–6 "positive", above 6 "strong" evidence).

Akaike weights w_i = exp(−Δ_i/2) / Σ_j exp(−Δ_j/2), from AICc, over every
fitted candidate with a finite AICc (Burnham & Anderson 2002, sec. 2.9),
say how the evidence is shared; they are reported, not used to average.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

from scipy import stats

from fleetsim.fit.candidates import CandidateFit

#: Criterion units by which a Weibull 3P must beat the 2P (Burnham & Anderson 2002).
LOCATION_DELTA = 2.0
#: Criterion units by which the lognormal must beat the Weibull (Burnham & Anderson 2002).
FAMILY_DELTA = 4.0

RULE = (
    "Weibull 2P unless a Weibull 3P is more than 2 AICc units lower and the boundary-corrected "
    "likelihood-ratio test of location 0 rejects (Burnham & Anderson 2002; Self & Liang 1987), "
    "then the lognormal only if more than 4 units lower still"
)


@dataclass(frozen=True)
class LocationTest:
    """Likelihood-ratio test of location 0 against a positive Weibull location.

    Attributes
    ----------
    statistic
        D = 2(ℓ_3P − ℓ_2P), >= 0.
    p_value
        ½·P(χ²₁ > D) for D > 0, else 1 (the boundary mixture ½χ²₀ + ½χ²₁).
    level
        Level of the test, (1 − confidence)/2.
    rejects
        True when p < level: the records support a location above 0.
    """

    statistic: float
    p_value: float
    level: float
    rejects: bool

    def as_dict(self) -> dict[str, float | bool]:
        """``{statistic, p_value, level, rejects}``."""
        return {
            "statistic": self.statistic,
            "p_value": self.p_value,
            "level": self.level,
            "rejects": self.rejects,
        }


def location_test(log_lik_3p: float, log_lik_2p: float, confidence: float) -> LocationTest:
    """The boundary-corrected likelihood-ratio test of location 0 (Self & Liang 1987)."""
    d = max(2.0 * (log_lik_3p - log_lik_2p), 0.0)
    p = 0.5 * float(stats.chi2.sf(d, 1)) if d > 0 else 1.0
    level = (1.0 - confidence) / 2.0
    return LocationTest(statistic=d, p_value=p, level=level, rejects=p < level)


@dataclass(frozen=True)
class ModelChoice:
    """The recommended model and why.

    Attributes
    ----------
    recommended
        Model name of the recommended candidate.
    recommended_weibull
        The same rule among Weibull candidates only (fleetsim's life model),
        or None when no Weibull candidate is eligible.
    akaike_weights
        ``{model: weight}`` from AICc; sums to 1 over candidates with a finite AICc.
    location
        The test of location 0, when both Weibull models were fitted.
    reasons
        ``{model: plain words}``: why each candidate is or is not recommended.
    rule
        The rule in one sentence, with its sources.
    """

    recommended: str
    recommended_weibull: str | None
    akaike_weights: dict[str, float]
    location: LocationTest | None
    reasons: dict[str, str]
    rule: str = RULE


def akaike_weights(candidates: Sequence[CandidateFit]) -> dict[str, float]:
    """Akaike weights from AICc (Burnham & Anderson 2002, sec. 2.9); NaN where AICc is inf."""
    finite = [c.aicc for c in candidates if math.isfinite(c.aicc)]
    if not finite:
        return {c.model: math.nan for c in candidates}
    best = min(finite)
    raw = {c.model: math.exp(-(c.aicc - best) / 2.0) for c in candidates if math.isfinite(c.aicc)}
    total = sum(raw.values())
    return {c.model: raw[c.model] / total if c.model in raw else math.nan for c in candidates}


def _criterion(c: CandidateFit, rank_by: str) -> float:
    return c.aicc if rank_by == "AICc" else c.bic


def _beats(challenger: CandidateFit, holder: CandidateFit, rank_by: str) -> float:
    """How many criterion units ``challenger`` is below ``holder`` (NaN when undefined)."""
    gap = _criterion(holder, rank_by) - _criterion(challenger, rank_by)
    return gap if math.isfinite(gap) else math.nan


def choose_model(
    candidates: Sequence[CandidateFit], rank_by: str, confidence: float
) -> ModelChoice:
    """Apply the rule of this module to fitted candidates.

    Parameters
    ----------
    candidates
        The fitted candidates (any order; at least one).
    rank_by
        ``"AICc"`` or ``"BIC"``: the criterion of the thresholds.
    confidence
        Two-sided level of the bounds; the location test has level (1 − confidence)/2.
    """
    by_model = {c.model: c for c in candidates}
    w2, w3, ln = (by_model.get(m) for m in ("weibull_2p", "weibull_3p", "lognormal_2p"))
    test = None
    if w3 is not None and w2 is not None:
        test = location_test(w3.log_likelihood, w2.log_likelihood, confidence)
    reasons: dict[str, str] = {}
    weibull = w2 if (w2 is not None and w2.identifiable) else None
    if w3 is not None:
        gap = _beats(w3, w2, rank_by) if w2 is not None else math.inf
        shown = (
            w3.identifiable
            and (test is None or test.rejects)
            and w3.parameter("location_h").lower > 0
        )
        if not w3.identifiable:
            reasons[w3.model] = "the location is not identifiable (see its notes)"
        elif not shown:
            p = f"p = {test.p_value:.2g}, " if test is not None else ""
            reasons[w3.model] = (
                f"no location shown above 0 (boundary likelihood-ratio test {p}level "
                f"{(1 - confidence) / 2:g}; its {100 * confidence:g} % interval reaches 0)"
            )
        elif weibull is not None and not gap > LOCATION_DELTA:
            reasons[w3.model] = (
                f"only {gap:.2f} {rank_by} units below the Weibull 2P (needs > {LOCATION_DELTA:g})"
            )
        else:
            weibull = w3
    chosen = weibull
    if ln is not None and ln.identifiable:
        gap = _beats(ln, weibull, rank_by) if weibull is not None else math.inf
        if weibull is None or gap > FAMILY_DELTA:
            chosen = ln
        else:
            reasons[ln.model] = (
                f"{fmt_gap(gap)} {rank_by} units below the {weibull.label} "
                f"(needs > {FAMILY_DELTA:g} to replace the Weibull)"
            )
    if chosen is None:  # nothing eligible: the simplest fitted candidate
        chosen = min(candidates, key=lambda c: (c.n_params, c.model != "weibull_2p"))
    if weibull is not None and weibull is not chosen:
        reasons[weibull.model] = f"recommended Weibull; the {chosen.label} fits clearly better"
    if w2 is not None and w2 is not weibull and w2.model not in reasons:
        better = chosen.label if weibull is None else weibull.label
        reasons[w2.model] = f"the {better} fits clearly better"
    reasons[chosen.model] = "recommended"
    return ModelChoice(
        recommended=chosen.model,
        recommended_weibull=weibull.model if weibull is not None else None,
        akaike_weights=akaike_weights(candidates),
        location=test,
        reasons=reasons,
    )


def fmt_gap(gap: float) -> str:
    """A criterion gap for the reasons: negative means the challenger is above."""
    return f"only {gap:.2f}" if gap >= 0 else f"{-gap:.2f} above, not"
