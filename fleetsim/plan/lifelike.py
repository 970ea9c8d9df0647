"""The small life-distribution interface the planning models are written against.

Anything with ``sf``, ``cdf``, ``pdf`` (vectorised, hours) and a ``mean_h``
property will do; :class:`fleetsim.life.LifeDistribution` is the usual one.
A frozen ``scipy.stats`` distribution is adapted by :class:`ScipyLife`
(``as_life`` wraps it automatically), so any scipy life model works too.

The helpers here add what the models need beyond the four primitives: the
variance, a quantile or a far-tail time, and the integrated reliability
∫₀ᵀ R(t) dt (the mean time to replacement under age replacement), in closed
form for the three-parameter Weibull and by adaptive quadrature otherwise.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any, Protocol, runtime_checkable

import numpy as np
from scipy import integrate, special

from fleetsim.errors import InputError
from fleetsim.life.distribution import LifeDistribution


@runtime_checkable
class LifeLike(Protocol):
    """A life distribution in hours: survival, cdf, density and mean."""

    def sf(self, hours: Any) -> Any:
        """R(t) = P(life > t)."""
        ...

    def cdf(self, hours: Any) -> Any:
        """F(t) = P(life <= t)."""
        ...

    def pdf(self, hours: Any) -> Any:
        """Density per hour."""
        ...

    @property
    def mean_h(self) -> float:
        """Mean life in hours."""
        ...


@dataclass(frozen=True)
class ScipyLife:
    """Adapter giving a frozen ``scipy.stats`` distribution the :class:`LifeLike` interface.

    Attributes
    ----------
    frozen
        A frozen continuous scipy distribution of life in hours, for example
        ``scipy.stats.gamma(a=2, scale=500)``.
    """

    frozen: Any

    def sf(self, hours: Any) -> Any:
        """R(t) = P(life > t)."""
        return self.frozen.sf(hours)

    def cdf(self, hours: Any) -> Any:
        """F(t) = P(life <= t)."""
        return self.frozen.cdf(hours)

    def pdf(self, hours: Any) -> Any:
        """Density per hour."""
        return self.frozen.pdf(hours)

    def ppf(self, q: Any) -> Any:
        """Life in hours with F(life) = q."""
        return self.frozen.ppf(q)

    @property
    def mean_h(self) -> float:
        """Mean life in hours."""
        return float(self.frozen.mean())

    @property
    def variance_h2(self) -> float:
        """Variance of life in hours²."""
        return float(self.frozen.var())


def as_life(dist: Any, where: str = "life") -> Any:
    """Return ``dist`` if it is :class:`LifeLike`, wrap a frozen scipy distribution.

    Raises
    ------
    InputError
        If ``dist`` has neither the :class:`LifeLike` methods nor scipy's.
    """
    if all(hasattr(dist, name) for name in ("sf", "cdf", "pdf", "mean_h")):
        return dist
    if all(hasattr(dist, name) for name in ("sf", "cdf", "pdf", "mean", "ppf")):
        return ScipyLife(dist)
    raise InputError(
        where,
        "expected a life distribution with sf, cdf, pdf and mean_h (for example "
        f"fleetsim.life.LifeDistribution) or a frozen scipy distribution, got {type(dist).__name__}",
    )


def mean_h(dist: Any) -> float:
    """Mean life in hours, checked to be positive and finite."""
    mu = float(dist.mean_h)
    if not (mu > 0 and math.isfinite(mu)):
        raise InputError("life", f"expected a positive, finite mean life, got {mu} h")
    return mu


def variance_h2(dist: Any) -> float:
    """Variance of life in hours², from ``variance_h2`` or by integration.

    Without a ``variance_h2`` attribute it uses E[X²] = 2∫₀^∞ t·R(t) dt.
    """
    if hasattr(dist, "variance_h2"):
        return float(dist.variance_h2)
    mu = mean_h(dist)
    second, _ = integrate.quad(lambda t: 2.0 * t * float(dist.sf(t)), 0.0, np.inf, limit=200)
    return float(second - mu * mu)


def tail_time_h(dist: Any, tail: float) -> float:
    """A time in hours beyond which the survival probability is at most ``tail``.

    Uses ``ppf(1 − tail)`` when the distribution has one, else doubles a time
    from the mean until ``sf`` falls to ``tail``.
    """
    if hasattr(dist, "ppf"):
        t = float(dist.ppf(1.0 - tail))
        if math.isfinite(t):
            return t
    t = mean_h(dist)
    for _ in range(200):
        if float(dist.sf(t)) <= tail:
            return t
        t *= 2.0
    raise InputError("life", f"could not find a time where the survival falls to {tail}")


def integrated_reliability(dist: Any, hours: Any) -> Any:
    """∫₀ᵀ R(t) dt in hours for each T in ``hours`` (the mean of min(life, T)).

    Closed form for :class:`LifeDistribution` (three-parameter Weibull):
    min(T, x0) + η·Γ(1 + 1/b)·P(1/b, ((T − x0)/η)^b) with P the regularised lower
    incomplete gamma function; otherwise Gauss–Legendre between the sorted
    times, with adaptive quadrature where it is not accurate enough.
    """
    t = np.asarray(hours, dtype=float)
    if isinstance(dist, LifeDistribution) and dist.is_weibull:
        b, eta, x0 = dist.shape, dist.scale_h, dist.location_h
        z = np.maximum(t - x0, 0.0) / eta
        out = np.minimum(t, x0) + eta * math.gamma(1.0 + 1.0 / b) * special.gammainc(1.0 / b, z**b)
    else:
        flat = np.maximum(t.ravel(), 0.0)
        order = np.argsort(flat)
        ends = flat[order]
        starts = np.concatenate(([0.0], ends[:-1]))
        pieces = _segment_integrals(dist, starts, ends)
        acc = np.empty_like(flat)
        acc[order] = np.cumsum(pieces)
        out = acc.reshape(t.shape)
    return float(out) if out.ndim == 0 else out


_GL_X, _GL_W = np.polynomial.legendre.leggauss(20)


def _gauss_legendre(dist: Any, starts: np.ndarray, widths: np.ndarray) -> np.ndarray:
    nodes = starts[:, None] + 0.5 * (_GL_X[None, :] + 1.0) * widths[:, None]
    values = np.asarray(dist.sf(nodes), dtype=float)
    return 0.5 * widths * (values * _GL_W[None, :]).sum(axis=1)


def _segment_integrals(dist: Any, starts: np.ndarray, ends: np.ndarray) -> np.ndarray:
    """∫ R over each [start, end]: Gauss–Legendre on one and on two panels, vectorised;
    adaptive quadrature where the two disagree (a kink, or a long segment)."""
    widths = ends - starts
    one = _gauss_legendre(dist, starts, widths)
    half = 0.5 * widths
    two = _gauss_legendre(dist, starts, half) + _gauss_legendre(dist, starts + half, half)
    bad = np.nonzero(np.abs(one - two) > 1e-12 * np.maximum(widths, 1e-300))[0]
    for i in bad:
        two[i], _ = integrate.quad(
            lambda x: float(dist.sf(x)),
            float(starts[i]),
            float(ends[i]),
            limit=200,
            epsabs=0.0,
            epsrel=1e-12,
        )
    return two


def is_weibull_with_non_rising_hazard(dist: Any) -> bool:
    """True for a :class:`LifeDistribution` with shape b <= 1 (hazard never rises)."""
    return isinstance(dist, LifeDistribution) and dist.is_weibull and dist.shape <= 1.0
