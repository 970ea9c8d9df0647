"""Censored log-likelihoods and their maximisation, with scipy only.

The ``reliability`` package fits right-censored data but has no interval
censoring ("found failed at inspection between a and b"). This module
maximises the full likelihood itself:

    ln L = Σ_exact ln f(t) + Σ_suspended ln R(t) + Σ_intervals ln[R(a) − R(b)]

(Meeker & Escobar, *Statistical Methods for Reliability Data*, ch. 2 and 8),
for the Weibull (with a fixed location) and the lognormal. It also serves the
location profile of the three-parameter Weibull.

Parameters are optimised on an unconstrained scale, (ln η, ln β) for the
Weibull and (μ, ln σ) for the lognormal: Nelder–Mead from a regression-free
start, then damped Newton steps with a central-difference Hessian. The fit
counts as converged only when the Hessian of −ln L is positive definite and
the Newton decrement gᵀH⁻¹g is below 1e-8 (the log-likelihood is within
about 1e-8 of its maximum); otherwise :class:`FitError` is raised. The
covariance is the inverse observed information, mapped to the natural
parameters by the delta method.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from scipy import optimize, special

from fleetsim.fit.errors import FitError
from fleetsim.fit.sample import CensoredSample

_SHAPE_RANGE = (0.02, 100.0)  # Weibull shapes outside this are not bearing lives
_LN2PI_HALF = 0.5 * math.log(2.0 * math.pi)


# --- log-likelihoods -----------------------------------------------------------------------
def _logsumexp(a: np.ndarray) -> float:
    """ln Σ exp(a), without overflow (a plain version: scipy's has a large overhead)."""
    m = float(a.max())
    return m + math.log(float(np.exp(a - m).sum()))


def _log_interval(log_sf_a: np.ndarray, log_sf_b: np.ndarray) -> np.ndarray:
    """ln[R(a) − R(b)] from ln R(a) >= ln R(b), accurate in both tails."""
    with np.errstate(divide="ignore", invalid="ignore"):
        return log_sf_a + np.log(-np.expm1(log_sf_b - log_sf_a))


def weibull_log_likelihood(
    sample: CensoredSample, shape: float, scale_h: float, location_h: float = 0.0
) -> float:
    """Log-likelihood of a Weibull (shape β, scale η, location γ; hours) for a sample.

    Densities are per hour. A failure at or below the location has zero
    likelihood (−inf); a suspension at or below it contributes 0.
    """
    if not (shape > 0 and scale_h > 0):
        return -math.inf
    if sample.location_limit_h <= location_h:
        return -math.inf
    b, eta = shape, scale_h
    x = (sample.failures_h - location_h) / eta
    lx = np.log(x)
    ll = np.sum(math.log(b / eta) + (b - 1.0) * lx - np.exp(b * lx))
    xs = np.maximum(sample.suspensions_h - location_h, 0.0) / eta
    ll -= np.sum(xs**b)
    if sample.has_intervals:
        za = (np.maximum(sample.interval_lower_h - location_h, 0.0) / eta) ** b
        zb = ((sample.interval_upper_h - location_h) / eta) ** b
        ll += np.sum(_log_interval(-za, -zb))
    return float(ll) if math.isfinite(ll) else -math.inf


def weibull_log_likelihood_grad(
    sample: CensoredSample, log_scale: float, log_shape: float
) -> tuple[float, np.ndarray]:
    """Two-parameter Weibull ln L and its gradient in (ln η, ln β), for fast searches.

    With z = (t/η)^β and w = ln z, the terms are: exact failures
    ∂/∂lnη = β(z − 1), ∂/∂lnβ = 1 + w(1 − z); suspensions βz and −zw;
    intervals (−∂z_a + q·∂z_b)/(1 − q) with q = exp(z_a − z_b),
    ∂z/∂lnη = −βz, ∂z/∂lnβ = zw.
    """
    b = math.exp(log_shape)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        w = b * (np.log(sample.failures_h) - log_scale)
        z = np.exp(w)
        # ln f = ln β − ln η + (β − 1)(ln t − ln η) − z = ln β + w − ln t − z
        ll = np.sum(log_shape + w - np.log(sample.failures_h) - z)
        g_u = np.sum(b * (z - 1.0))
        g_v = np.sum(1.0 + w * (1.0 - z))
        s = sample.suspensions_h[sample.suspensions_h > 0]
        ws = b * (np.log(s) - log_scale)
        zs = np.exp(ws)
        ll -= np.sum(zs)
        g_u += np.sum(b * zs)
        g_v -= np.sum(zs * ws)
        if sample.has_intervals:
            a = sample.interval_lower_h
            wa = np.where(a > 0, b * (np.log(np.where(a > 0, a, 1.0)) - log_scale), -np.inf)
            za = np.exp(wa)
            wb = b * (np.log(sample.interval_upper_h) - log_scale)
            zb = np.exp(wb)
            ll += np.sum(_log_interval(-za, -zb))
            q = np.exp(za - zb)
            d = -np.expm1(za - zb)
            dza_u, dzb_u = -b * za, -b * zb
            dza_v = np.where(a > 0, za * np.where(np.isfinite(wa), wa, 0.0), 0.0)
            dzb_v = zb * wb
            g_u += np.sum((-dza_u + q * dzb_u) / d)
            g_v += np.sum((-dza_v + q * dzb_v) / d)
    ll = float(ll)
    if not math.isfinite(ll):
        return -math.inf, np.full(2, np.nan)
    return ll, np.array([g_u, g_v])


def best_weibull_log_likelihood(
    sample: CensoredSample, theta0: np.ndarray
) -> tuple[float, np.ndarray]:
    """Maximum two-parameter Weibull ln L from a start (ln η, ln β), by BFGS with gradient.

    Fast and without standard errors: for profiles. Returns (ln L, θ); ln L
    is −inf when the search fails.
    """

    def neg(t: np.ndarray) -> tuple[float, np.ndarray]:
        v, g = weibull_log_likelihood_grad(sample, t[0], t[1])
        if not math.isfinite(v) or not np.all(np.isfinite(g)):
            return 1e300, np.zeros(2)
        return -v, -g

    res = optimize.minimize(neg, theta0, jac=True, method="BFGS", options={"gtol": 1e-6})
    theta = np.asarray(res.x, dtype=float)
    v, _ = weibull_log_likelihood_grad(sample, theta[0], theta[1])
    return v, theta


def lognormal_log_likelihood(sample: CensoredSample, mu: float, sigma: float) -> float:
    """Log-likelihood of a lognormal (μ, σ of ln hours) for a sample; densities per hour."""
    if not sigma > 0:
        return -math.inf
    lt = np.log(sample.failures_h)
    z = (lt - mu) / sigma
    ll = np.sum(-lt - math.log(sigma) - _LN2PI_HALF - 0.5 * z * z)
    s = sample.suspensions_h[sample.suspensions_h > 0]
    ll += np.sum(special.log_ndtr(-(np.log(s) - mu) / sigma))
    if sample.has_intervals:
        with np.errstate(divide="ignore"):
            za = (np.log(sample.interval_lower_h) - mu) / sigma
        zb = (np.log(sample.interval_upper_h) - mu) / sigma
        ll += np.sum(_log_interval(special.log_ndtr(-za), special.log_ndtr(-zb)))
    return float(ll) if math.isfinite(ll) else -math.inf


# --- numerical derivatives -------------------------------------------------------------------
def numerical_gradient(
    f: Callable[[np.ndarray], float], x: np.ndarray, h: float = 1e-5
) -> np.ndarray:
    """Central-difference gradient of ``f`` at ``x`` (step ``h`` on every coordinate)."""
    g = np.empty(x.size)
    for i in range(x.size):
        e = np.zeros(x.size)
        e[i] = h
        g[i] = (f(x + e) - f(x - e)) / (2.0 * h)
    return g


def numerical_hessian(
    f: Callable[[np.ndarray], float], x: np.ndarray, h: float = 1e-3
) -> np.ndarray:
    """Central-difference Hessian of ``f`` at ``x`` (step ``h`` on every coordinate)."""
    n = x.size
    hess = np.empty((n, n))
    f0 = f(x)
    for i in range(n):
        ei = np.zeros(n)
        ei[i] = h
        hess[i, i] = (f(x + ei) - 2.0 * f0 + f(x - ei)) / (h * h)
        for j in range(i):
            ej = np.zeros(n)
            ej[j] = h
            v = (f(x + ei + ej) - f(x + ei - ej) - f(x - ei + ej) + f(x - ei - ej)) / (4 * h * h)
            hess[i, j] = hess[j, i] = v
    return hess


@dataclass(frozen=True)
class Maximum:
    """The maximum of a log-likelihood on the optimiser's scale.

    Attributes
    ----------
    theta
        Parameters at the maximum (unconstrained scale).
    log_likelihood
        ln L at the maximum.
    information
        Observed information: the Hessian of −ln L at the maximum.
    """

    theta: np.ndarray
    log_likelihood: float
    information: np.ndarray


def maximise(
    loglik: Callable[[np.ndarray], float],
    theta0: np.ndarray,
    what: str,
    newton_steps: int = 30,
    nelder_mead: bool = True,
) -> Maximum:
    """Maximise ``loglik`` from ``theta0``; raise :class:`FitError` unless converged.

    Parameters
    ----------
    loglik
        Log-likelihood of the unconstrained parameters; −inf where impossible.
    theta0
        Starting point.
    what
        The model's name for messages, e.g. ``"Weibull 2P"``.
    newton_steps
        Maximum number of damped Newton steps after Nelder–Mead.
    nelder_mead
        False to skip the Nelder–Mead search when ``theta0`` is already
        close to the maximum.
    """

    def neg(t: np.ndarray) -> float:
        v = loglik(t)
        return -v if math.isfinite(v) else 1e300

    if not math.isfinite(loglik(theta0)):
        raise FitError(what, "no finite likelihood at the starting point; check the records")
    theta = np.asarray(theta0, dtype=float)
    if nelder_mead:
        res = optimize.minimize(
            neg,
            theta0,
            method="Nelder-Mead",
            options={"xatol": 1e-9, "fatol": 1e-11, "maxiter": 4000, "maxfev": 8000},
        )
        theta = np.asarray(res.x, dtype=float)
    ll = loglik(theta)
    decrement = math.inf
    info = np.full((theta.size, theta.size), math.nan)
    for _ in range(newton_steps):
        info = -numerical_hessian(loglik, theta)
        grad = numerical_gradient(loglik, theta)
        if not np.all(np.isfinite(info)) or not np.all(np.isfinite(grad)):
            break
        try:
            step = np.linalg.solve(info, grad)
        except np.linalg.LinAlgError:
            break
        decrement = float(grad @ step)
        if 0.0 <= decrement < 1e-8:
            break
        if decrement < 0:  # not concave here: gradient ascent step instead
            step = grad / max(np.abs(np.diag(info)).max(), 1.0)
        t = 1.0
        while t > 1e-6:
            cand = theta + t * step
            lc = loglik(cand)
            if math.isfinite(lc) and lc >= ll - 1e-12:
                theta, ll = cand, lc
                break
            t *= 0.5
        else:
            break
    if not (0.0 <= decrement < 1e-8):
        raise FitError(
            what,
            "the maximum-likelihood fit did not converge (the likelihood has no clear maximum "
            "for these records; more failures are needed)",
        )
    eig = np.linalg.eigvalsh(info)
    if not (np.all(np.isfinite(eig)) and eig.min() > 0):
        raise FitError(
            what,
            "the information matrix is singular at the fit, so standard errors are undefined "
            "(the records do not determine every parameter)",
        )
    return Maximum(theta=theta, log_likelihood=float(ll), information=info)


# --- fits -----------------------------------------------------------------------------------
@dataclass(frozen=True, eq=False)
class MLEFit:
    """A maximum-likelihood fit in natural parameters.

    Attributes
    ----------
    family
        ``"weibull"`` or ``"lognormal"``.
    params
        Weibull: ``scale_h``, ``shape``, ``location_h`` (the location fixed
        unless fitted); lognormal: ``mu``, ``sigma`` (of ln hours).
    cov_names
        The free parameters, in the order of ``covariance``.
    covariance
        Inverse observed information of the free parameters.
    log_likelihood
        ln L at the fit (densities per hour).
    method
        How it was fitted, for the summary.
    """

    family: str
    params: dict[str, float]
    cov_names: tuple[str, ...]
    covariance: np.ndarray
    log_likelihood: float
    method: str


def require_failures(sample: CensoredSample, needed: int, what: str) -> None:
    """Raise :class:`FitError` when the sample has fewer than ``needed`` failures."""
    if sample.n_failures < needed:
        got = {0: "no failures", 1: "a single failure"}.get(
            sample.n_failures, f"{sample.n_failures} failures"
        )
        raise FitError(
            f"{sample.label}: {what}",
            f"needs at least {needed} failures to fit, the records hold {got}",
        )


def weibull_shape_profile(
    failures_h: np.ndarray, suspensions_h: np.ndarray
) -> tuple[float, float, float]:
    """Two-parameter Weibull MLE for exact failures and suspensions (no intervals).

    For a fixed shape β the scale has the closed form η^β = Σ t^β / r (sum
    over all records, r failures), so the likelihood is maximised over β
    alone (Lawless, *Statistical Models and Methods for Lifetime Data*).

    Returns
    -------
    (shape, scale_h, log_likelihood)
    """
    r = failures_h.size
    lx_f = np.log(failures_h)
    s = suspensions_h[suspensions_h > 0]
    lx_all = np.concatenate([lx_f, np.log(s)])
    sum_lx_f = float(lx_f.sum())
    ln_r = math.log(r)

    def neg_profile(lb: float) -> float:
        b = math.exp(lb)
        ls = _logsumexp(b * lx_all)
        return -(r * lb - r * (ls - ln_r) + (b - 1.0) * sum_lx_f - r)

    lo, hi = math.log(_SHAPE_RANGE[0]), math.log(_SHAPE_RANGE[1])
    res = optimize.minimize_scalar(
        neg_profile, bounds=(lo, hi), method="bounded", options={"xatol": 1e-10}
    )
    lb = float(res.x)
    b = math.exp(lb)
    eta = math.exp((_logsumexp(b * lx_all) - ln_r) / b)
    return b, eta, -float(res.fun)


def _weibull_start(sample: CensoredSample) -> np.ndarray:
    """Start (ln η, ln β): interval failures taken at their midpoints, closed-form profile."""
    b, eta, _ = weibull_shape_profile(sample.failure_midpoints_h(), sample.suspensions_h)
    b = min(max(b, 0.2), 20.0)
    return np.array([math.log(eta), math.log(b)])


def fit_weibull(sample: CensoredSample, location_h: float = 0.0) -> MLEFit:
    """Weibull MLE of shape and scale with the location fixed at ``location_h`` hours.

    Handles exact, right- and interval-censored records.

    Raises
    ------
    FitError
        With fewer than 2 failures, when the fit does not converge, or when
        the shape runs outside 0.02–100.
    """
    require_failures(sample, 2, "Weibull fit")
    x = sample.shifted(location_h)
    if not x.has_intervals:
        b, eta, _ = weibull_shape_profile(x.failures_h, x.suspensions_h)
        theta0 = np.array([math.log(eta), math.log(b)])
        searched = True  # theta0 is already the maximum (closed-form profile)
    else:
        ll_bfgs, theta0 = best_weibull_log_likelihood(x, _weibull_start(x))
        searched = math.isfinite(ll_bfgs)
        if not searched:
            theta0 = _weibull_start(x)

    def ll(t: np.ndarray) -> float:
        return weibull_log_likelihood(x, math.exp(t[1]), math.exp(t[0]))

    # Newton polish (and the convergence check) after the search; Nelder–Mead if it failed
    m = maximise(ll, theta0, "Weibull fit", nelder_mead=not searched)
    eta, b = math.exp(m.theta[0]), math.exp(m.theta[1])
    _check_shape(b, "Weibull fit")
    jac = np.diag([eta, b])
    cov = jac @ np.linalg.inv(m.information) @ jac
    return MLEFit(
        family="weibull",
        params={"scale_h": eta, "shape": b, "location_h": location_h},
        cov_names=("scale_h", "shape"),
        covariance=cov,
        log_likelihood=weibull_log_likelihood(sample, b, eta, location_h),
        method="MLE (fleetsim, scipy)",
    )


def fit_lognormal(sample: CensoredSample) -> MLEFit:
    """Lognormal MLE of μ and σ (of ln hours) for exact, right- and interval-censored records."""
    require_failures(sample, 2, "lognormal fit")
    lt = np.log(sample.failure_midpoints_h())
    sd = float(lt.std()) if lt.size > 1 else 1.0
    theta0 = np.array([float(lt.mean()) + 0.5 * sd, math.log(max(sd, 0.1))])

    def ll(t: np.ndarray) -> float:
        return lognormal_log_likelihood(sample, t[0], math.exp(t[1]))

    m = maximise(ll, theta0, "lognormal fit")
    mu, sigma = float(m.theta[0]), math.exp(m.theta[1])
    jac = np.diag([1.0, sigma])
    cov = jac @ np.linalg.inv(m.information) @ jac
    return MLEFit(
        family="lognormal",
        params={"mu": mu, "sigma": sigma},
        cov_names=("mu", "sigma"),
        covariance=cov,
        log_likelihood=m.log_likelihood,
        method="MLE (fleetsim, scipy)",
    )


def _check_shape(shape: float, what: str) -> None:
    lo, hi = _SHAPE_RANGE
    if not (lo * 1.001 < shape < hi * 0.999):
        raise FitError(
            what,
            f"the Weibull shape runs off to {shape:.3g}, outside {lo:g}–{hi:g}: the records do "
            "not determine it (for example all failures at the same age)",
        )
