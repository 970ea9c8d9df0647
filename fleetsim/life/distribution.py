"""Life distribution of a bearing position, in hours: three-parameter Weibull or lognormal.

A Weibull life is ``scipy.stats.weibull_min(c=shape, loc=location_h,
scale=scale_h)``; a lognormal one (``family="lognormal"``, as ``fleetsim fit``
ranks it) is ``scipy.stats.lognorm(s=shape, loc=location_h, scale=scale_h)``:
σ of ln(life − location) and its median. Both engines draw lives through one
inverse transform, :meth:`LifeDistribution.lives_from_uniform`, written with
``log1p``/``expm1`` and the normal tails of ``scipy.special`` so it stays
accurate for cumulative probabilities far below 1e-12. This module adds the bearing vocabulary (life at a
reliability, reliability at a life, the reliability factor a1) and the two
presets expressed in units of the rating life L10:

``iso281``
    shape 1.5, location 0.05·L10, scale chosen so that F(L10) = 0.10. Its
    life at reliability R over L10 is the ISO 281:2007 reliability factor
    a1 = 0.95·(ln(1/R)/ln(1/0.9))^(1/1.5) + 0.05.
``textbook``
    x0 = 0.02, θ = 4.459, b = 1.483 (scale θ − x0 = 4.439), the widely quoted
    fit to ball-bearing test data (Budynas & Nisbett, *Shigley's Mechanical
    Engineering Design*, from memory).

A life in these units is multiplied by L10 in hours to give hours.
"""

from __future__ import annotations

import math
import numbers
import warnings
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy import special, stats

from fleetsim.bounds import LOGNORMAL_SIGMA, WEIBULL_SHAPE
from fleetsim.errors import InputError, LifeModelWarning


def _positive(value: float, where: str, what: str, zero: bool = False) -> None:
    """A finite number > 0 (>= 0 with ``zero``), else an :class:`InputError`."""
    ok = (not isinstance(value, bool) and isinstance(value, numbers.Real)
          and math.isfinite(value) and (value >= 0 if zero else value > 0))
    if not ok:
        raise InputError(where, f"expected {what}, got {value!r}")


@dataclass(frozen=True)
class WeibullShape:
    """A three-parameter Weibull in units of L10 (dimensionless).

    Attributes
    ----------
    shape
        Weibull slope b (> 0).
    location
        Failure-free life x0 as a multiple of L10 (>= 0).
    scale
        Characteristic life θ − x0 as a multiple of L10 (> 0).
    name
        Preset name, or ``"custom"``.
    """

    shape: float
    location: float
    scale: float
    name: str = "custom"

    def __post_init__(self) -> None:
        WEIBULL_SHAPE.check(self.shape, "WeibullShape.shape")
        _positive(self.scale, "WeibullShape.scale", "a scale (in units of L10) > 0")
        _positive(self.location, "WeibullShape.location", "a location (in units of L10) >= 0",
                  zero=True)

    def life_ratio(self, reliability: float | np.ndarray) -> float | np.ndarray:
        """Life at reliability R as a multiple of L10 (the reliability factor a1)."""
        r = np.asarray(reliability, dtype=float)
        out = self.location + self.scale * (-np.log(r)) ** (1.0 / self.shape)
        return float(out) if out.ndim == 0 else out

    def failure_at_l10(self) -> float:
        """F(L10): the fraction failed at the rating life (0.10 for a consistent model)."""
        z = max(1.0 - self.location, 0.0) / self.scale
        return float(-math.expm1(-(z**self.shape)))


def _iso281_shape() -> WeibullShape:
    shape, location = 1.5, 0.05
    scale = (1.0 - location) / math.log(1.0 / 0.9) ** (1.0 / shape)
    return WeibullShape(shape=shape, location=location, scale=scale, name="iso281")


#: The life model presets, in units of L10.
PRESETS: dict[str, WeibullShape] = {
    "iso281": _iso281_shape(),
    "textbook": WeibullShape(shape=1.483, location=0.02, scale=4.459 - 0.02, name="textbook"),
}


def life_shape(model: str | Mapping[str, Any] | WeibullShape) -> WeibullShape:
    """Resolve a preset name, a ``{shape, location, scale}`` mapping or a shape.

    Raises
    ------
    InputError
        For an unknown preset or a mapping with missing or extra keys.
    """
    if isinstance(model, WeibullShape):
        return model
    if isinstance(model, str):
        try:
            return PRESETS[model]
        except KeyError:
            raise InputError(
                "model", f"expected one of {', '.join(PRESETS)}, got {model!r}"
            ) from None
    keys = set(model)
    if keys != {"shape", "location", "scale"}:
        raise InputError(
            "life", f"expected keys shape, location, scale (in units of L10), got {sorted(keys)}"
        )
    return WeibullShape(
        shape=float(model["shape"]),
        location=float(model["location"]),
        scale=float(model["scale"]),
    )


def reliability_factor_a1(reliability: float, model: str | WeibullShape = "iso281") -> float:
    """Reliability factor a1: life at reliability R over L10.

    With the ``iso281`` preset this equals the ISO 281:2007 a1 formula
    0.95·(ln(1/R)/ln(1/0.9))^(2/3) + 0.05.
    """
    _check_reliability(reliability, "reliability")
    return float(life_shape(model).life_ratio(reliability))


#: Range of reliability over which ISO 281:2007 gives the factor a1 (90–99.95 %).
A1_RANGE: tuple[float, float] = (0.90, 0.9995)


def warn_reliability_range(
    reliability: float, model: str | Mapping[str, Any] | WeibullShape = "iso281"
) -> None:
    """Warn when a life at reliability R leaves the range its model covers.

    The ISO 281 preset reproduces a1, which ISO 281:2007 gives for R from 90 %
    to 99.95 %; both presets were fitted to life tests read at 90 % reliability
    and above, so below 90 % they extrapolate. A custom model gets no warning.
    """
    shape = life_shape(model)
    lo, hi = A1_RANGE
    if shape.name == "custom":
        return
    if reliability < lo:
        warnings.warn(
            f"reliability {reliability:g} is below 0.90: the {shape.name} life model (and "
            "the a1 factor of ISO 281) is an extrapolation there",
            LifeModelWarning,
            stacklevel=2,
        )
    elif shape.name == "iso281" and reliability > hi:
        warnings.warn(
            f"reliability {reliability:g} is above 0.9995, beyond the range of the ISO 281 "
            "a1 factor (0.90–0.9995)",
            LifeModelWarning,
            stacklevel=2,
        )


def _check_reliability(r: float, where: str) -> None:
    if not (0.0 < r < 1.0):
        raise InputError(where, f"expected a reliability strictly between 0 and 1, got {r}")


def _check_age(age_h: float | np.ndarray) -> np.ndarray:
    a = np.asarray(age_h, dtype=float)
    if not np.all(np.isfinite(a) & (a >= 0)):
        raise InputError("age", f"expected operating ages >= 0 h, got {age_h}")
    return a


@dataclass(frozen=True)
class LifeDistribution:
    """Life of a bearing position in operating hours: a three-parameter Weibull or lognormal.

    Attributes
    ----------
    shape
        Weibull shape b; for a lognormal, σ of ln(life − location).
    scale_h
        Weibull scale (θ − x0) in hours; for a lognormal, the median of
        (life − location) in hours.
    location_h
        Location (failure-free life) x0 in hours.
    family
        ``"weibull"`` (default) or ``"lognormal"``.

    Raises
    ------
    InputError
        On construction, naming the field (``LifeDistribution.shape``): a
        Weibull shape outside 0.1–20 or a lognormal σ outside 0.01–10
        (:mod:`fleetsim.bounds`), a scale not finite and > 0, a location not
        finite and >= 0.
    """

    shape: float
    scale_h: float
    location_h: float = 0.0
    family: str = "weibull"

    def __post_init__(self) -> None:
        # a plain attribute, not a field: the engines ask it at every draw
        object.__setattr__(self, "_weibull", self.family == "weibull")
        if self.family not in ("weibull", "lognormal"):
            raise InputError("LifeDistribution.family",
                             f"expected 'weibull' or 'lognormal', got {self.family!r}")
        shape = WEIBULL_SHAPE if self.family == "weibull" else LOGNORMAL_SIGMA
        shape.check(self.shape, "LifeDistribution.shape")
        _positive(self.scale_h, "LifeDistribution.scale_h", "a finite scale > 0 h")
        _positive(self.location_h, "LifeDistribution.location_h", "a finite location >= 0 h",
                  zero=True)

    @property
    def is_weibull(self) -> bool:
        """True for the Weibull family."""
        return self._weibull  # type: ignore[attr-defined]  # set in __post_init__

    @classmethod
    def from_rating_life(
        cls, l10_h: float, model: str | Mapping[str, Any] | WeibullShape = "iso281"
    ) -> LifeDistribution:
        """Scale a life model in units of L10 by the rating life ``l10_h`` (hours)."""
        if not (l10_h > 0 and math.isfinite(l10_h)):
            raise InputError("rating life", f"expected L10 > 0 h, got {l10_h}")
        s = life_shape(model)
        return cls(shape=s.shape, scale_h=s.scale * l10_h, location_h=s.location * l10_h)

    @property
    def frozen(self) -> Any:
        """The equivalent frozen ``scipy.stats`` distribution (weibull_min or lognorm)."""
        if self.is_weibull:
            return stats.weibull_min(c=self.shape, loc=self.location_h, scale=self.scale_h)
        return stats.lognorm(s=self.shape, loc=self.location_h, scale=self.scale_h)

    def scaled(self, factor: float) -> LifeDistribution:
        """The same distribution with every life multiplied by ``factor``."""
        return LifeDistribution(self.shape, self.scale_h * factor, self.location_h * factor,
                                self.family)

    # --- distribution functions (hours) -------------------------------------------------
    def _log_sf(self, hours: np.ndarray) -> np.ndarray:
        """ln R(t), accurate where R is tiny (−cumulative hazard)."""
        if self.is_weibull:
            return -self._z(hours)
        x = np.asarray(hours, dtype=float) - self.location_h
        with np.errstate(divide="ignore"):
            w = np.log(np.maximum(x, 0.0) / self.scale_h) / self.shape
        return np.where(x > 0, special.log_ndtr(-w), 0.0)

    def reliability(self, hours: float | np.ndarray) -> float | np.ndarray:
        """R(t) = P(life > t) at operating hours t."""
        out = np.exp(self._log_sf(np.asarray(hours, dtype=float)))
        return float(out) if out.ndim == 0 else out

    def cdf(self, hours: float | np.ndarray) -> float | np.ndarray:
        """F(t) = P(life <= t), computed as −expm1(ln R) for accuracy at small t."""
        out = -np.expm1(self._log_sf(np.asarray(hours, dtype=float)))
        return float(out) if out.ndim == 0 else out

    def sf(self, hours: float | np.ndarray) -> float | np.ndarray:
        """Survival function, the same as :meth:`reliability`."""
        return self.reliability(hours)

    def pdf(self, hours: float | np.ndarray) -> float | np.ndarray:
        """Probability density per hour."""
        out = self.frozen.pdf(hours)
        return float(out) if np.ndim(out) == 0 else out

    def hazard(self, hours: float | np.ndarray) -> float | np.ndarray:
        """Hazard rate per hour: (b/η)·z^(b−1) beyond the location for a Weibull, f/R otherwise."""
        t = np.asarray(hours, dtype=float)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            if self.is_weibull:
                z = np.maximum(t - self.location_h, 0.0) / self.scale_h
                out = np.where(
                    t > self.location_h, self.shape / self.scale_h * z ** (self.shape - 1.0), 0.0
                )
            else:
                out = np.where(t > self.location_h,
                               np.exp(self.frozen.logpdf(t) - self._log_sf(t)), 0.0)
        return float(out) if out.ndim == 0 else out

    def _from_log_sf(self, log_sf: np.ndarray) -> np.ndarray:
        """The life t with ln R(t) = ``log_sf`` (<= 0), in hours."""
        if self.is_weibull:
            return self.location_h + self.scale_h * (-log_sf) ** (1.0 / self.shape)
        # R = Φ(−w) ⇒ w = −Φ⁻¹(R); Φ⁻¹ of exp(log R) through ndtri_exp stays accurate in
        # both tails
        w = -special.ndtri_exp(log_sf)
        return self.location_h + self.scale_h * np.exp(self.shape * w)

    def life_at_reliability(self, reliability: float | np.ndarray) -> float | np.ndarray:
        """Life in hours that a fraction ``reliability`` of bearings exceeds (L_{100(1-R)})."""
        r = np.asarray(reliability, dtype=float)
        if np.any((r <= 0) | (r >= 1)):
            raise InputError("reliability", f"expected values strictly between 0 and 1, got {r}")
        out = self._from_log_sf(np.log(r))
        return float(out) if out.ndim == 0 else out

    def ppf(self, q: float | np.ndarray) -> float | np.ndarray:
        """Quantile function: life in hours with F(life) = q (accurate for q far below 1e-12)."""
        q = np.asarray(q, dtype=float)
        if np.any((q <= 0) | (q >= 1)) or np.any(np.isnan(q)):
            raise InputError("probability", f"expected values strictly between 0 and 1, got {q}")
        out = self._from_log_sf(np.log1p(-q))
        return float(out) if out.ndim == 0 else out

    @property
    def mean_h(self) -> float:
        """Mean life in hours: x0 + η·Γ(1 + 1/b), or x0 + m·exp(σ²/2) for a lognormal."""
        if not self.is_weibull:
            return self.location_h + self.scale_h * math.exp(0.5 * self.shape**2)
        return self.location_h + self.scale_h * math.gamma(1.0 + 1.0 / self.shape)

    @property
    def variance_h2(self) -> float:
        """Variance of life in hours²: η²·[Γ(1 + 2/b) − Γ(1 + 1/b)²], or m²·e^σ²·(e^σ² − 1)."""
        if not self.is_weibull:
            s2 = self.shape**2
            return self.scale_h**2 * math.exp(s2) * math.expm1(s2)
        g1 = math.gamma(1.0 + 1.0 / self.shape)
        g2 = math.gamma(1.0 + 2.0 / self.shape)
        return self.scale_h**2 * (g2 - g1 * g1)

    def sample(self, rng: np.random.Generator, size: int | tuple[int, ...] | None = None) -> Any:
        """Draw lives in hours with the given generator (inverse transform)."""
        u = rng.random(size)
        out = self.lives_from_uniform(np.asarray(u))
        return float(out) if np.ndim(out) == 0 else out

    def life_from_uniform(self, u: float, age_h: float = 0.0) -> float:
        """Life (remaining beyond ``age_h``) in hours for a uniform ``u`` in [0, 1).

        The inverse-transform draw of :meth:`sample` (``age_h = 0``) and
        :meth:`residual_sample`, for one scalar, without numpy overhead for a
        Weibull.
        """
        if not self._weibull:  # type: ignore[attr-defined]
            return float(self.lives_from_uniform(np.array([u]), age_h)[0])
        e = -math.log1p(-u)
        if age_h > 0.0:
            z0 = (max(age_h - self.location_h, 0.0) / self.scale_h) ** self.shape
            return self.location_h + self.scale_h * (z0 + e) ** (1.0 / self.shape) - age_h
        return self.location_h + self.scale_h * e ** (1.0 / self.shape)

    def lives_from_uniform(self, u: np.ndarray, age_h: np.ndarray | float = 0.0) -> np.ndarray:
        """:meth:`life_from_uniform` for arrays: remaining lives in hours beyond ``age_h``.

        The one inverse transform of both engines: the life t beyond the age a
        with R(a + t) / R(a) = 1 − u, i.e. ln R(a + t) = ln R(a) + ln(1 − u)
        (``log1p``), so neither tiny u nor a bearing aged far into its tail
        loses precision. ``u`` and ``age_h`` broadcast; a zero age gives the
        life of a new bearing.
        """
        uu = np.asarray(u, dtype=float)
        log_keep = np.log1p(-uu)
        if self.is_weibull:
            e = -log_keep
            a = np.asarray(age_h, dtype=float)
            if not (a > 0.0).any():
                # location + scale · e^(1/b), the same operations in place
                new = np.power(e, 1.0 / self.shape, out=e if e.ndim else None)
                new *= self.scale_h
                new += self.location_h
                return new
            new = self.location_h + self.scale_h * e ** (1.0 / self.shape)
            z0 = (np.maximum(a - self.location_h, 0.0) / self.scale_h) ** self.shape
            aged = self.location_h + self.scale_h * (z0 + e) ** (1.0 / self.shape) - a
            return np.where(a > 0.0, aged, new)
        a = np.asarray(age_h, dtype=float)
        out = self._from_log_sf(self._log_sf(a) + log_keep) - a
        return np.maximum(out, 0.0)

    # --- a bearing already in service (conditional on survival to its age) --------------
    def _z(self, hours: np.ndarray) -> np.ndarray:
        """Cumulative hazard at operating hours t: ((t − x0)⁺/η)^b for a Weibull, −ln R otherwise."""
        if not self.is_weibull:
            return -self._log_sf(hours)
        return (np.maximum(hours - self.location_h, 0.0) / self.scale_h) ** self.shape

    def conditional_reliability(
        self, hours: float | np.ndarray, age_h: float | np.ndarray
    ) -> float | np.ndarray:
        """R(t | a) = R(a + t) / R(a): a bearing aged ``age_h`` survives ``hours`` more.

        Computed as exp(−[z(a + t) − z(a)]) with z the cumulative hazard, so it
        stays accurate when R(a) itself is tiny. ``hours`` and ``age_h``
        broadcast; ``hours < 0`` gives 1.

        Raises
        ------
        InputError
            For an age that is negative or not finite.
        """
        a = _check_age(age_h)
        t = np.maximum(np.asarray(hours, dtype=float), 0.0)
        out = np.exp(-(self._z(a + t) - self._z(a)))
        return float(out) if out.ndim == 0 else out

    def remaining_life_at_reliability(
        self, reliability: float | np.ndarray, age_h: float | np.ndarray
    ) -> float | np.ndarray:
        """Remaining life in hours that a bearing aged ``age_h`` outlives with probability R.

        The t solving R(a + t) / R(a) = R (for a Weibull
        t = x0 + η·(z(a) + ln(1/R))^(1/b) − a, with z(a) = ((a − x0)⁺/η)^b).
        At age 0 it is :meth:`life_at_reliability`; R = 0.9 gives the remaining
        L10 of a bearing already in service. Arguments broadcast.

        Raises
        ------
        InputError
            For a reliability outside (0, 1) or an age that is negative or not finite.
        """
        r = np.asarray(reliability, dtype=float)
        if np.any((r <= 0) | (r >= 1)) or np.any(np.isnan(r)):
            raise InputError("reliability", f"expected values strictly between 0 and 1, got {r}")
        a = _check_age(age_h)
        out = self._from_log_sf(-self._z(a) + np.log(r)) - a
        out = np.maximum(out, 0.0)  # rounding when a is far beyond the location
        return float(out) if out.ndim == 0 else out

    def residual_sample(
        self, rng: np.random.Generator, age_h: float, size: int | None = None
    ) -> Any:
        """Remaining life in hours of a position already aged ``age_h`` without failing."""
        u = rng.random(size)
        out = self.lives_from_uniform(np.asarray(u), age_h)
        return float(out) if np.ndim(out) == 0 else out

    def as_dict(self) -> dict[str, float | str]:
        """``{shape, scale_h, location_h}`` for JSON output (and ``family`` for a lognormal)."""
        out: dict[str, float | str] = {"shape": self.shape, "scale_h": self.scale_h,
                                       "location_h": self.location_h}
        if not self.is_weibull:
            out["family"] = self.family
        return out
