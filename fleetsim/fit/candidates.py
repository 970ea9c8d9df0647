"""One fitted model: parameters with confidence bounds, B-lives, information criteria.

Bounds are Wald bounds from the inverse observed information (Meeker &
Escobar, *Statistical Methods for Reliability Data*, sec. 8.4), on the log
scale for positive quantities so that they stay positive:

* Weibull scale η and shape β, lognormal σ and median e^μ:
  ``p·exp(±z·SE/p)``;
* B-lives (the age by which a fraction p has failed, t_p): the delta method
  on ln t_p, ``t_p·exp(±z·SE(ln t_p))``, with SE(ln t_p)² = gᵀ Σ g / t_p² and
  g the gradient of t_p in the fitted parameters;
* the Weibull location γ: the likelihood-ratio interval of its profile
  (:mod:`fleetsim.fit.location`).

A bound that cannot be computed is NaN and the candidate's ``notes`` say why;
a standard error is never silently 0.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy import stats

from fleetsim.fit.errors import FitError
from fleetsim.fit.likelihood import MLEFit
from fleetsim.life.distribution import LifeDistribution

#: Models fleetsim fits, in the order they are tried.
MODELS: dict[str, str] = {
    "weibull_2p": "Weibull 2P",
    "weibull_3p": "Weibull 3P",
    "lognormal_2p": "lognormal 2P",
}

#: B-lives reported for every candidate, percent failed.
B_LIVES: tuple[float, ...] = (1.0, 10.0)


@dataclass(frozen=True)
class FittedDistribution:
    """A fitted life distribution in hours.

    Attributes
    ----------
    family
        ``"weibull"`` or ``"lognormal"``.
    shape
        Weibull shape β, or lognormal σ (of ln hours).
    scale_h
        Weibull scale η, or lognormal median e^μ, hours.
    location_h
        Weibull location γ, hours (0 for two-parameter models).
    """

    family: str
    shape: float
    scale_h: float
    location_h: float = 0.0

    @property
    def frozen(self) -> Any:
        """The equivalent frozen scipy distribution (scipy ships no type information)."""
        if self.family == "weibull":
            return stats.weibull_min(c=self.shape, loc=self.location_h, scale=self.scale_h)
        return stats.lognorm(s=self.shape, loc=self.location_h, scale=self.scale_h)

    def cdf(self, hours: float | np.ndarray) -> float | np.ndarray:
        """Fraction failed by ``hours``."""
        out = self.frozen.cdf(hours)
        return float(out) if np.ndim(out) == 0 else out

    def ppf(self, q: float | np.ndarray) -> float | np.ndarray:
        """Age in hours by which a fraction ``q`` has failed."""
        out = self.frozen.ppf(q)
        return float(out) if np.ndim(out) == 0 else out

    def b_life_h(self, percent: float) -> float:
        """B-life: age in hours by which ``percent`` % have failed (B10 = L10)."""
        return float(self.ppf(percent / 100.0))

    def to_life_distribution(self) -> LifeDistribution:
        """The fleetsim life model of this fit (Weibull or lognormal; both engines take either)."""
        return LifeDistribution(shape=self.shape, scale_h=self.scale_h, location_h=self.location_h,
                                family=self.family)

    def as_dict(self) -> dict[str, float | str]:
        """``{family, shape, scale_h, location_h}`` for JSON output."""
        return {
            "family": self.family,
            "shape": self.shape,
            "scale_h": self.scale_h,
            "location_h": self.location_h,
        }


@dataclass(frozen=True)
class Estimate:
    """A point estimate with its standard error and two-sided confidence bounds.

    ``std_error`` is NaN where only a likelihood-ratio interval exists (the
    Weibull location) or where no bound could be computed (see the notes).
    """

    name: str
    estimate: float
    std_error: float
    lower: float
    upper: float

    def as_dict(self) -> dict[str, float]:
        """``{estimate, std_error, lower, upper}``."""
        return {
            "estimate": self.estimate,
            "std_error": self.std_error,
            "lower": self.lower,
            "upper": self.upper,
        }


#: Bounds wider than a factor exp(this) either way mean the records do not determine
#: the quantity (for example all failures inside one inspection interval).
_MAX_LOG_HALF_WIDTH = 20.0


def _log_bounds(name: str, value: float, se: float, z: float) -> Estimate:
    if not (math.isfinite(se) and se > 0):
        return Estimate(name, value, math.nan, math.nan, math.nan)
    half = z * se / value
    if half > _MAX_LOG_HALF_WIDTH:
        label = name.removesuffix("_h")
        raise FitError(
            label,
            f"the records do not determine the {label}: its bounds would span a factor of "
            f"e^{2 * half:.0f}",
        )
    f = math.exp(half)
    return Estimate(name, value, se, value / f, value * f)


@dataclass(frozen=True, eq=False)
class CandidateFit:
    """One fitted model with bounds, B-lives and information criteria.

    Attributes
    ----------
    model
        ``"weibull_2p"``, ``"weibull_3p"`` or ``"lognormal_2p"``.
    distribution
        The fitted distribution.
    parameters
        ``shape``, ``scale_h`` and (Weibull 3P) ``location_h`` with bounds.
    b_lives
        B1 and B10 in hours with bounds, named ``"B1"``, ``"B10"``.
    log_likelihood
        ln L at the fit (densities per hour).
    n_params, n_records
        Number of fitted parameters and of records (the n of AICc and BIC).
    confidence
        Two-sided level of the bounds.
    method
        How it was fitted.
    identifiable
        False when a parameter is not determined by the records (a flat
        location profile); such a candidate is never the best.
    notes
        Plain-words remarks (why a bound is missing, why not identifiable).
    covariance, cov_names
        Covariance of the free parameters used for the bounds.
    """

    model: str
    distribution: FittedDistribution
    parameters: tuple[Estimate, ...]
    b_lives: tuple[Estimate, ...]
    log_likelihood: float
    n_params: int
    n_records: int
    confidence: float
    method: str
    identifiable: bool = True
    notes: tuple[str, ...] = ()
    covariance: np.ndarray | None = None
    cov_names: tuple[str, ...] = ()

    @property
    def label(self) -> str:
        """Plain name of the model, e.g. ``"Weibull 2P"``."""
        return MODELS[self.model]

    @property
    def aicc(self) -> float:
        """Corrected Akaike criterion −2 ln L + 2k + 2k(k+1)/(n−k−1); inf when n <= k+1."""
        k, n = self.n_params, self.n_records
        if n - k - 1 <= 0:
            return math.inf
        return -2.0 * self.log_likelihood + 2 * k + 2 * k * (k + 1) / (n - k - 1)

    @property
    def bic(self) -> float:
        """Bayesian criterion −2 ln L + k ln n."""
        return -2.0 * self.log_likelihood + self.n_params * math.log(self.n_records)

    def parameter(self, name: str) -> Estimate:
        """The estimate called ``name`` (``shape``, ``scale_h``, ``location_h``)."""
        for p in self.parameters:
            if p.name == name:
                return p
        raise KeyError(name)

    def b_life(self, percent: float) -> Estimate:
        """The B-life estimate for ``percent`` (1 or 10)."""
        return _b_life(self.distribution, self.covariance, self.cov_names, percent, self.confidence)


def _b_life(
    dist: FittedDistribution,
    cov: np.ndarray | None,
    names: tuple[str, ...],
    percent: float,
    confidence: float,
) -> Estimate:
    name = f"B{percent:g}"
    p = percent / 100.0
    t = dist.b_life_h(percent)
    if cov is None:
        return Estimate(name, t, math.nan, math.nan, math.nan)
    if dist.family == "weibull":
        w = -math.log1p(-p)
        r = w ** (1.0 / dist.shape)
        grads = {
            "scale_h": r,
            "shape": -dist.scale_h * r * math.log(w) / dist.shape**2,
            "location_h": 1.0,
        }
    else:
        zp = float(stats.norm.ppf(p))
        grads = {"mu": t, "sigma": t * zp}  # d t / d mu, d t / d sigma (t = exp(mu + zp sigma))
    g = np.array([grads[n] for n in names])
    var = float(g @ cov @ g)
    if not (math.isfinite(var) and var > 0):
        return Estimate(name, t, math.nan, math.nan, math.nan)
    z = float(stats.norm.ppf(0.5 + confidence / 2.0))
    return _log_bounds(name, t, math.sqrt(var), z)


def candidate_from_mle(
    model: str,
    fit: MLEFit,
    n_records: int,
    confidence: float,
    *,
    location_bounds_h: tuple[float, float] | None = None,
    identifiable: bool = True,
    notes: tuple[str, ...] = (),
) -> CandidateFit:
    """Turn an :class:`MLEFit` into a :class:`CandidateFit` with bounds and B-lives."""
    z = float(stats.norm.ppf(0.5 + confidence / 2.0))
    cov = fit.covariance
    names = fit.cov_names
    se = {n: math.sqrt(cov[i, i]) if cov[i, i] > 0 else math.nan for i, n in enumerate(names)}
    notes_out = list(notes)
    if fit.family == "weibull":
        dist = FittedDistribution(
            "weibull", fit.params["shape"], fit.params["scale_h"], fit.params.get("location_h", 0.0)
        )
        params = [
            _log_bounds("shape", dist.shape, se["shape"], z),
            _log_bounds("scale_h", dist.scale_h, se["scale_h"], z),
        ]
        if model == "weibull_3p":
            lo, hi = location_bounds_h if location_bounds_h else (math.nan, math.nan)
            params.append(
                Estimate("location_h", dist.location_h, se.get("location_h", math.nan), lo, hi)
            )
            if "location_h" not in names:
                notes_out.append(
                    "bounds on shape, scale and B-lives hold the location fixed at its estimate"
                )
    else:
        mu, sigma = fit.params["mu"], fit.params["sigma"]
        dist = FittedDistribution("lognormal", sigma, math.exp(mu), 0.0)
        se_median = dist.scale_h * se["mu"]  # delta method: d e^mu / d mu = e^mu
        params = [
            _log_bounds("shape", sigma, se["sigma"], z),
            _log_bounds("scale_h", dist.scale_h, se_median, z),
        ]
    for p in params:
        if p.name != "location_h" and not math.isfinite(p.std_error):
            raise FitError(
                MODELS[model],
                f"the standard error of {p.name} is undefined (singular information matrix)",
            )
    b_lives = tuple(_b_life(dist, cov, names, pc, confidence) for pc in B_LIVES)
    return CandidateFit(
        model=model,
        distribution=dist,
        parameters=tuple(params),
        b_lives=b_lives,
        log_likelihood=fit.log_likelihood,
        n_params=3 if model == "weibull_3p" else 2,
        n_records=n_records,
        confidence=confidence,
        method=fit.method,
        identifiable=identifiable,
        notes=tuple(notes_out),
        covariance=cov,
        cov_names=names,
    )
