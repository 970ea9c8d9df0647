"""A random (or fixed) duration in hours: repair times, lead times, P-F intervals."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

import numpy as np

from fleetsim.bounds import MAX_LOGNORMAL_SPREAD, WEIBULL_SHAPE, check_time
from fleetsim.errors import InputError

DurationKind = Literal["fixed", "exponential", "lognormal", "weibull"]


@dataclass(frozen=True)
class Duration:
    """A random (or fixed) duration in hours: repair times, lead times, P-F intervals.

    Every value is checked on construction against :mod:`fleetsim.bounds`
    (times 0 or 1 s to 1,000 years, a lognormal p90 at most 1,000 × its
    median, a Weibull shape from 0.1 to 20): an :class:`~fleetsim.errors.InputError`
    names the field (``Duration.shape``).

    Attributes
    ----------
    kind
        ``"fixed"`` (``value_h``), ``"exponential"`` (mean ``value_h``),
        ``"lognormal"`` (median ``value_h`` and 90th percentile ``p90_h``) or
        ``"weibull"`` (``shape`` and scale ``value_h``).
    value_h
        The fixed value, mean, median or scale in hours.
    p90_h
        90th percentile in hours (lognormal only).
    shape
        Weibull shape (weibull only).
    """

    kind: DurationKind
    value_h: float
    p90_h: float | None = None
    shape: float | None = None

    def __post_init__(self) -> None:
        kinds = ("fixed", "exponential", "lognormal", "weibull")
        if self.kind not in kinds:
            raise InputError("Duration.kind", f"expected one of {', '.join(kinds)}, got {self.kind!r}")
        check_time(self.value_h, "Duration.value_h", positive=self.kind != "fixed")
        if self.kind == "lognormal":
            if self.p90_h is None:
                raise InputError("Duration.p90_h", "a lognormal duration needs its p90, got None")
            p90 = check_time(self.p90_h, "Duration.p90_h", positive=True)
            if not p90 > self.value_h:
                raise InputError("Duration.p90_h",
                                 f"expected p90 > median ({self.value_h:g} h), got {p90:g} h")
            if p90 > MAX_LOGNORMAL_SPREAD * self.value_h:
                raise InputError("Duration.p90_h",
                                 f"expected p90 at most {MAX_LOGNORMAL_SPREAD:g} × the median "
                                 f"({self.value_h:g} h), got {p90:g} h")
        if self.kind == "weibull":
            if self.shape is None:
                raise InputError("Duration.shape", "a Weibull duration needs its shape, got None")
            WEIBULL_SHAPE.check(self.shape, "Duration.shape")

    @classmethod
    def fixed(cls, hours: float) -> Duration:
        """A fixed duration of ``hours``."""
        return cls("fixed", float(hours))

    @property
    def sigma(self) -> float:
        """Lognormal σ of ln(duration), from the median and p90 (z_0.9 = 1.2816)."""
        assert self.p90_h is not None
        return math.log(self.p90_h / self.value_h) / 1.2815515655446004

    @property
    def mean_h(self) -> float:
        """Mean duration in hours."""
        if self.kind == "fixed":
            return self.value_h
        if self.kind == "exponential":
            return self.value_h
        if self.kind == "lognormal":
            return self.value_h * math.exp(0.5 * self.sigma**2)
        assert self.shape is not None
        return self.value_h * math.gamma(1.0 + 1.0 / self.shape)

    def sample(self, rng: np.random.Generator) -> float:
        """Draw one duration in hours (always one uniform from ``rng``, for common random numbers)."""
        u = rng.random()
        return self.quantile(u)

    def quantile(self, u: float) -> float:
        """Duration in hours with cumulative probability ``u``."""
        if self.kind == "fixed":
            return self.value_h
        if self.kind == "exponential":
            return -self.value_h * math.log1p(-u)
        if self.kind == "lognormal":
            from scipy.special import ndtri

            return self.value_h * math.exp(self.sigma * float(ndtri(u)))
        assert self.shape is not None
        return self.value_h * (-math.log1p(-u)) ** (1.0 / self.shape)

    def quantiles(self, u: np.ndarray) -> np.ndarray:
        """Durations in hours for an array of cumulative probabilities (vectorised :meth:`quantile`)."""
        u = np.asarray(u, dtype=float)
        if self.kind == "fixed":
            return np.full_like(u, self.value_h)
        if self.kind == "exponential":
            return -self.value_h * np.log1p(-u)
        if self.kind == "lognormal":
            from scipy.special import ndtri

            return self.value_h * np.exp(self.sigma * ndtri(u))
        assert self.shape is not None
        return self.value_h * (-np.log1p(-u)) ** (1.0 / self.shape)

    def cdf(self, hours: float | np.ndarray) -> float | np.ndarray:
        """P(duration <= hours)."""
        t = np.asarray(hours, dtype=float)
        if self.kind == "fixed":
            out = (t >= self.value_h).astype(float)
        elif self.kind == "exponential":
            out = -np.expm1(-np.maximum(t, 0.0) / self.value_h)
        elif self.kind == "lognormal":
            from scipy.special import ndtr

            with np.errstate(divide="ignore"):
                out = np.where(t > 0, ndtr(np.log(np.maximum(t, 1e-300) / self.value_h) / self.sigma), 0.0)
        else:
            assert self.shape is not None
            out = -np.expm1(-((np.maximum(t, 0.0) / self.value_h) ** self.shape))
        return float(out) if out.ndim == 0 else out
