"""Three-parameter Weibull by profiling the likelihood over the location γ.

Joint maximisation over (η, β, γ) is fragile: the likelihood is often flat in
γ, and when the shape falls below 1 it grows without bound as γ approaches
the first failure (Lawless, *Statistical Models and Methods for Lifetime
Data*, sec. 4.5; Meeker & Escobar, *Statistical Methods for Reliability
Data*, sec. 11.7). So the location is profiled instead:

1. γ runs over a grid from 0 up to just below the first failure (the
   smallest exact failure age or ``hours_to`` of a failure found at
   inspection), denser near that limit;
2. at each γ the two-parameter Weibull of the ages beyond γ is fitted
   (closed-form scale and a one-dimensional search for the shape when there
   are no interval-censored records, the full fit otherwise);
3. the best grid point is refined by a bounded scalar search;
4. the likelihood-ratio interval for γ is {γ : 2[ℓ_max − ℓ_p(γ)] <= χ²₁(c)}.

The location is flagged **not identifiable** when the profile is flat — the
interval covers 0 and reaches the top of the grid — or when the profile keeps
rising up to the first failure (no interior maximum).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import optimize, stats

from fleetsim.fit.errors import FitError
from fleetsim.fit.likelihood import (
    MLEFit,
    best_weibull_log_likelihood,
    fit_weibull,
    maximise,
    require_failures,
    weibull_log_likelihood,
    weibull_shape_profile,
)
from fleetsim.fit.sample import CensoredSample

#: Grid of γ as fractions of the location limit: 0, then denser towards the limit.
_GRID = 1.0 - np.geomspace(1.0, 1e-3, 36)


@dataclass(frozen=True, eq=False)
class LocationProfile:
    """The profile log-likelihood of the Weibull location.

    Attributes
    ----------
    location_h
        Grid of locations γ, hours.
    log_likelihood
        Profile log-likelihood ℓ_p(γ) on the grid (shape and scale maximised).
    limit_h
        The location must stay below this age (the first failure), hours.
    estimate_h
        γ at the maximum of the profile, hours.
    max_log_likelihood
        ℓ_p at ``estimate_h``.
    lower_h, upper_h
        Likelihood-ratio interval for γ at ``confidence``, hours.
    confidence
        Two-sided confidence level of the interval.
    identifiable
        False when the profile is flat or has no interior maximum.
    reason
        Plain-words explanation when not identifiable, else ``""``.
    """

    location_h: np.ndarray
    log_likelihood: np.ndarray
    limit_h: float
    estimate_h: float
    max_log_likelihood: float
    lower_h: float
    upper_h: float
    confidence: float
    identifiable: bool
    reason: str


def profile_log_likelihood(
    sample: CensoredSample, location_h: float, start: np.ndarray | None = None
) -> tuple[float, np.ndarray]:
    """ℓ_p(γ): the two-parameter Weibull log-likelihood maximised at fixed location γ.

    Returns ``(ℓ_p, θ)`` with θ = (ln η, ln β) at the maximum, a warm start
    for the next γ. ``start`` is used only with interval-censored records.
    """
    x = sample.shifted(location_h)
    if x.has_intervals and start is not None:
        return best_weibull_log_likelihood(x, start)
    b, eta, ll = weibull_shape_profile(
        x.failures_h if not x.has_intervals else x.failure_midpoints_h(), x.suspensions_h
    )
    theta = np.array([math.log(eta), math.log(b)])
    if not x.has_intervals:
        return ll, theta
    return best_weibull_log_likelihood(x, theta)


def profile_location(sample: CensoredSample, confidence: float = 0.90) -> LocationProfile:
    """Profile the likelihood over the Weibull location between 0 and the first failure.

    Parameters
    ----------
    sample
        Records with at least 3 failures.
    confidence
        Two-sided level of the likelihood-ratio interval for γ.
    """
    require_failures(sample, 3, "Weibull 3P fit")
    limit = sample.location_limit_h
    grid = _GRID * limit
    prof = np.empty(grid.size)
    theta = None
    for i, g in enumerate(grid):
        prof[i], theta = profile_log_likelihood(sample, g, theta)
        if not math.isfinite(prof[i]):
            theta = None
    if not np.any(np.isfinite(prof)):
        raise FitError(f"{sample.label}: Weibull 3P fit", "no location gives a finite likelihood")
    k = int(np.nanargmax(np.where(np.isfinite(prof), prof, -np.inf)))
    est, best = float(grid[k]), float(prof[k])
    if 0 < k < grid.size - 1:
        res = optimize.minimize_scalar(
            lambda g: -profile_log_likelihood(sample, g)[0],
            bounds=(grid[k - 1], grid[k + 1]),
            method="bounded",
            options={"xatol": 1e-7 * limit},
        )
        if -res.fun > best:
            est, best = float(res.x), float(-res.fun)
    drop = 0.5 * float(stats.chi2.ppf(confidence, 1))
    cut = best - drop

    def excess(g: float) -> float:
        return profile_log_likelihood(sample, g)[0] - cut

    def crossing(a: float, fa: float, b: float, fb: float) -> float:
        """Where ℓ_p crosses the cut between a and b; linear if the root search fails."""
        try:
            return float(optimize.brentq(excess, a, b, xtol=1e-6 * limit))
        except (ValueError, RuntimeError):
            if not (math.isfinite(fa) and math.isfinite(fb)) or fa == fb:
                return a if fa < fb else b  # the outer end: the wider, safer interval
            return a + (b - a) * (cut - fa) / (fb - fa)

    inside = prof >= cut
    below = np.nonzero((grid < est) & ~inside)[0]
    if below.size == 0:
        lower = 0.0
    else:
        i = int(below.max())
        lower = crossing(float(grid[i]), float(prof[i]), est, best)
    above = np.nonzero((grid > est) & ~inside)[0]
    if above.size == 0:
        upper = limit  # the interval runs up to the first failure
        reaches_top = True
    else:
        j = int(above.min())
        upper = crossing(est, best, float(grid[j]), float(prof[j]))
        reaches_top = False
    identifiable, reason = True, ""
    if k == grid.size - 1:
        identifiable = False
        reason = (
            "the likelihood keeps rising as the location approaches the first failure "
            f"({limit:.4g} h): no three-parameter maximum (shape below 1)"
        )
    elif lower == 0.0 and reaches_top:
        identifiable = False
        reason = (
            f"the profile likelihood of the location is flat: its {100 * confidence:g} % interval "
            f"covers the whole range from 0 to the first failure ({limit:.4g} h)"
        )
    return LocationProfile(
        location_h=grid,
        log_likelihood=prof,
        limit_h=limit,
        estimate_h=est,
        max_log_likelihood=best,
        lower_h=lower,
        upper_h=upper,
        confidence=confidence,
        identifiable=identifiable,
        reason=reason,
    )


def fit_weibull_3p(
    sample: CensoredSample, confidence: float = 0.90
) -> tuple[MLEFit, LocationProfile]:
    """Three-parameter Weibull at the maximum of the location profile.

    The covariance of (scale_h, shape, location_h) is the inverse observed
    information of the full three-parameter likelihood when the maximum is
    interior and the information is positive definite. Otherwise (location at
    0 or at the limit, or a flat profile) only (scale_h, shape) get a
    covariance, conditional on the location; the location's bounds then come
    from the profile alone.

    Returns
    -------
    (fit, profile)
    """
    prof = profile_location(sample, confidence)
    gamma = prof.estimate_h
    fit2 = fit_weibull(sample, gamma)
    limit = prof.limit_h
    cov, names = fit2.covariance, fit2.cov_names
    method = "profile likelihood over the location (fleetsim, scipy)"
    if prof.identifiable and gamma > 0:
        eta, b = fit2.params["scale_h"], fit2.params["shape"]

        def ll(t: np.ndarray) -> float:
            return weibull_log_likelihood(sample, math.exp(t[1]), math.exp(t[0]), t[2] * limit)

        theta0 = np.array([math.log(eta), math.log(b), gamma / limit])
        try:
            m = maximise(ll, theta0, "Weibull 3P fit", newton_steps=8, nelder_mead=False)
        except FitError:
            m = None
        if m is not None and abs(m.theta[2] * limit - gamma) < 1e-3 * limit:
            jac = np.diag([math.exp(m.theta[0]), math.exp(m.theta[1]), limit])
            cov = jac @ np.linalg.inv(m.information) @ jac
            names = ("scale_h", "shape", "location_h")
    return (
        MLEFit(
            family="weibull",
            params={**fit2.params, "location_h": gamma},
            cov_names=names,
            covariance=cov,
            log_likelihood=fit2.log_likelihood,
            method=method,
        ),
        prof,
    )
