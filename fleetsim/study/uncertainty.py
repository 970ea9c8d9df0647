"""Parameter uncertainty carried into the fleet: nested replications over fitted factors.

A field factor fitted from a handful of failures is uncertain, and a study
that takes it as exact gives intervals of Monte Carlo noise only. Here the
uncertainty is carried through at the scenario layer, without touching the
engines:

1. **Sampling distribution.** Each ``[[field_factor]]`` entry that gives its
   bounds (``lower``, ``upper``, ``confidence``, as ``fleetsim fit
   --factors-out`` writes them) has ln k ~ Normal(ln k̂, se²) with
   se = (ln upper − ln lower) / (2 z), z the normal quantile of the bounds'
   level: the asymptotic normal of the log-parameter, whose likelihood-ratio
   interval the bounds are (Meeker & Escobar, *Statistical Methods for
   Reliability Data*, sec. 8.3). Each ``[[fitted_life]]`` entry with a
   ``covariance`` (``fleetsim fit --life-out``) has (ln scale, ln shape)
   ~ Normal((ln η̂, ln β̂), Σ), Σ the fit's inverse observed information on
   the log scale (its location held). Entries are drawn independently.
2. **Outer draws.** Draw ``d`` of ``draws`` sets every factor from its
   distribution (seeded by ``SeedSequence(seed, spawn_key=(PARAMETER_STREAM, d))``,
   apart from the replications' own streams) and builds that draw's scenario
   from the document (:func:`fleetsim.study.variants.build_variant`).
3. **Inner replications** run on the study's own seed, the same for every
   draw (common random numbers): each draw's bearings see the same uniforms,
   so the draws differ by their parameters, not by noise.
4. **Interval.** With Ȳ_d the mean of draw d over R replications, the point
   estimate is the grand mean and the interval is
   Ȳ ± z·sqrt(s²_between + s²_within / R): s²_between, the variance of the
   Ȳ_d across draws, measures how far plausible parameters move the expected
   figure; s²_within / R is the Monte Carlo variance of a draw's mean, which
   common random numbers leave common to all draws (so it is not divided by
   the number of draws). With a single exact parameter set the interval falls
   back to the Monte Carlo interval. As everywhere in fleetsim, an interval
   is cut to the values its figure can take (no negative count, no share
   above 1).

The share of draws whose best variant (lowest mean of the objective) is the
overall best says how robust a recommendation is to the parameters: "the
same in 87 % of plausible parameter sets".
"""

from __future__ import annotations

import copy
import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd
from scipy import stats

from fleetsim.errors import InputError
from fleetsim.scenario.ages import scenario_folder
from fleetsim.scenario.field_factors import resolve_includes
from fleetsim.seed import check_seed
from fleetsim.study.figures import range_of
from fleetsim.study.result import StudyResult
from fleetsim.study.variants import Variant, build_variant

#: spawn_key of the parameter draws, apart from the replication seeds (0, 1, 2, ...).
PARAMETER_STREAM = 2**31 - 15


@dataclass(frozen=True)
class FactorUncertainty:
    """The sampling distribution of one fitted field factor: ln k ~ N(ln estimate, log_se²).

    Attributes
    ----------
    index
        Position of the entry in the document's ``[[field_factor]]`` list.
    label
        ``"position motor-de, bearing WB-50"``, for the summary.
    estimate
        The fitted factor k̂.
    log_se
        Standard error of ln k̂.
    """

    index: int
    label: str
    estimate: float
    log_se: float


@dataclass(frozen=True)
class LifeUncertainty:
    """The sampling distribution of one fitted life: (ln scale, ln shape) ~ N(mean, covariance).

    Attributes
    ----------
    index
        Position of the entry in the document's ``[[fitted_life]]`` list.
    label
        ``"position motor-de, bearing WB-50"``.
    scale_h, shape
        The fitted scale (hours) and shape.
    log_covariance
        2 × 2 covariance of (ln scale, ln shape).
    """

    index: int
    label: str
    scale_h: float
    shape: float
    log_covariance: tuple[tuple[float, float], tuple[float, float]]


def life_uncertainties(doc: Mapping[str, Any], source: str) -> list[LifeUncertainty]:
    """The ``[[fitted_life]]`` entries of a resolved document that carry a covariance."""
    from fleetsim.units import parse_quantity

    out = []
    for i, e in enumerate(doc.get("fitted_life", []) or []):
        if not (isinstance(e, dict) and "covariance" in e):
            continue
        where = f"{source}: fitted_life[{i}]"
        try:
            cov = np.array(e["covariance"], dtype=float).reshape(2, 2)
            scale = parse_quantity(str(e["scale"]), "time", f"{where}.scale")
            shape = float(e["shape"])
        except (KeyError, TypeError, ValueError):
            raise InputError(where, "expected shape, scale and a 2 × 2 covariance") from None
        try:
            np.linalg.cholesky(cov)
        except np.linalg.LinAlgError:
            raise InputError(f"{where}.covariance", "expected a positive definite matrix") from None
        label = ", ".join(f"{key} {e[key]}" for key in ("position", "bearing") if key in e)
        out.append(
            LifeUncertainty(
                i, label, scale, shape, ((cov[0, 0], cov[0, 1]), (cov[1, 0], cov[1, 1]))
            )
        )
    return out


def draw_lives(uncertain: Sequence[LifeUncertainty], draws: int, seed: int) -> np.ndarray:
    """``draws`` × ``len(uncertain)`` × 2 array of (scale_h, shape), one row per outer draw."""
    out = np.empty((draws, len(uncertain), 2))
    for d in range(draws):
        key = (PARAMETER_STREAM, d, 1)
        rng = np.random.default_rng(np.random.SeedSequence(seed, spawn_key=key))
        for n, u in enumerate(uncertain):
            z = rng.multivariate_normal(
                [math.log(u.scale_h), math.log(u.shape)], np.array(u.log_covariance)
            )
            out[d, n] = np.exp(z)
    return out


def factor_uncertainties(
    document: Mapping[str, Any], source: str
) -> tuple[dict[str, Any], list[FactorUncertainty]]:
    """The document with its includes resolved, and the field factors that carry bounds.

    Raises
    ------
    InputError
        For bounds that do not bracket the factor.
    """
    doc, _ = resolve_includes(document, source, scenario_folder(source))
    out = []
    for i, e in enumerate(doc.get("field_factor", []) or []):
        if not (isinstance(e, dict) and "lower" in e and "upper" in e):
            continue
        where = f"{source}: field_factor[{i}]"
        try:
            k, lo, hi = float(e["factor"]), float(e["lower"]), float(e["upper"])
            level = float(e.get("confidence", 0.90))
        except (KeyError, TypeError, ValueError):
            raise InputError(where, "expected numbers factor, lower, upper, confidence") from None
        if not (0 < lo <= k <= hi and 0.5 <= level < 1):
            raise InputError(
                where, f"expected 0 < lower <= factor <= upper and a level in [0.5, 1), got "
                f"{lo:g} <= {k:g} <= {hi:g} at {level:g}",
            )
        z = float(stats.norm.ppf(0.5 + level / 2.0))
        label = ", ".join(f"{key} {e[key]}" for key in ("position", "bearing") if key in e)
        out.append(FactorUncertainty(i, label, k, (math.log(hi) - math.log(lo)) / (2.0 * z)))
    return doc, out


def draw_factors(uncertain: Sequence[FactorUncertainty], draws: int, seed: int) -> np.ndarray:
    """``draws`` × ``len(uncertain)`` factors, one row per outer draw (log-normal)."""
    rows = []
    for d in range(draws):
        rng = np.random.default_rng(np.random.SeedSequence(seed, spawn_key=(PARAMETER_STREAM, d)))
        z = rng.standard_normal(len(uncertain))
        rows.append([u.estimate * math.exp(u.log_se * zi) for u, zi in zip(uncertain, z, strict=True)])
    return np.array(rows, dtype=float).reshape(draws, len(uncertain))


def draw_document(
    document: Mapping[str, Any],
    uncertain: Sequence[FactorUncertainty],
    factors: np.ndarray,
    lives: Sequence[LifeUncertainty] = (),
    life_values: np.ndarray | None = None,
) -> dict[str, Any]:
    """The document with the uncertain factors (and fitted lives) set to one draw's values."""
    doc = copy.deepcopy(dict(document))
    for u, k in zip(uncertain, factors, strict=True):
        doc["field_factor"][u.index]["factor"] = float(k)
    if life_values is not None:
        for lu, (scale_h, shape) in zip(lives, life_values, strict=True):
            entry = doc["fitted_life"][lu.index]
            entry["scale"] = f"{float(scale_h)!r} h"
            entry["shape"] = float(shape)
    return doc


@dataclass(frozen=True)
class NestedInterval:
    """A figure's mean and interval over parameter draws and replications.

    Attributes
    ----------
    mean
        Grand mean over draws and replications.
    low, high
        mean ∓ z·sqrt(between + within / R).
    between_sd
        Standard deviation of the draws' means (parameter uncertainty).
    mc_se
        Monte Carlo standard error of one draw's mean, sqrt(within / R).
    draws, replications
        J and R.
    """

    mean: float
    low: float
    high: float
    between_sd: float
    mc_se: float
    draws: int
    replications: int

    def as_dict(self) -> dict[str, float | int]:
        """All fields, for JSON."""
        return dict(self.__dict__)


def nested_interval(
    values: np.ndarray, confidence: float = 0.95, within: tuple[float, float] | None = None
) -> NestedInterval:
    """The interval of this module's step 4 from a draws × replications array of a figure.

    ``within = (low, high)``: the values the figure can take; the interval is cut to them.
    """
    y = np.asarray(values, dtype=float)
    if y.ndim != 2 or y.shape[1] < 2:
        raise InputError("parameter uncertainty", "expected at least 2 replications per draw")
    j, r = y.shape
    means = y.mean(axis=1)
    bounds = within
    within_var = float(y.var(axis=1, ddof=1).mean())
    between = float(means.var(ddof=1)) if j > 1 else 0.0
    z = float(stats.norm.ppf(0.5 + confidence / 2.0))
    half = z * math.sqrt(between + within_var / r)
    m = float(means.mean())
    lo, hi = m - half, m + half
    if bounds is not None:
        lo, hi = max(lo, bounds[0]), min(hi, bounds[1])
    return NestedInterval(m, lo, hi, math.sqrt(between), math.sqrt(within_var / r), j, r)


@dataclass(frozen=True)
class UncertainStudy:
    """Studies of every variant under every parameter draw.

    Attributes
    ----------
    uncertain
        The factors drawn.
    factors
        draws × factors array of the values used.
    results
        ``results[d][v]``: the study of variant v under draw d.
    variant_names
        Variant names, base case first.
    """

    uncertain: tuple[FactorUncertainty, ...]
    factors: np.ndarray
    results: tuple[tuple[StudyResult, ...], ...]
    variant_names: tuple[str, ...]
    lives: tuple[LifeUncertainty, ...] = ()
    life_values: np.ndarray | None = None

    def values(self, figure: str, variant: int = 0) -> np.ndarray:
        """draws × replications values of ``figure`` for one variant."""
        return np.array([r[variant].figure(figure).to_numpy(float) for r in self.results])

    def interval(self, figure: str, variant: int = 0, confidence: float = 0.95) -> NestedInterval:
        """The nested interval of ``figure`` for one variant, cut to the figure's range."""
        return nested_interval(self.values(figure, variant), confidence, range_of(figure))

    def recommendation(
        self, figure: str = "cost_per_year", highest: bool = False
    ) -> tuple[str, float]:
        """The best variant by grand mean (lowest, or ``highest``), and the share of draws
        where it is also the best."""
        means = np.array(
            [[r[v].figure(figure).mean() for v in range(len(self.variant_names))] for r in self.results]
        )
        if highest:
            means = -means
        best = int(np.argmin(means.mean(axis=0)))
        share = float(np.mean(np.argmin(means, axis=1) == best))
        return self.variant_names[best], share

    def summary(self, figures: Sequence[str], confidence: float = 0.95) -> pd.DataFrame:
        """One row per variant and figure: mean, low, high, between_sd, mc_se."""
        rows = []
        for v, name in enumerate(self.variant_names):
            for f in figures:
                rows.append({"variant": name, "figure": f, **self.interval(f, v, confidence).as_dict()})
        return pd.DataFrame(rows)


def run_parameter_uncertainty(
    document: Mapping[str, Any],
    source: str,
    digest: str,
    draws: int,
    variants: Sequence[Variant] = (),
    include_base: bool = True,
    **study_kwargs: Any,
) -> UncertainStudy:
    """Run the base case (and ``variants``) under ``draws`` parameter draws (module docstring).

    Parameters
    ----------
    document
        The scenario document (as read from TOML).
    source, digest
        The scenario's file name and text digest.
    draws
        Outer draws (>= 2).
    variants
        Variants whose overrides are applied on every draw (the base case is
        always run first; pass :func:`fleetsim.study.variants.file_variants`
        without its first entry to compare the file's variants).
    include_base
        Run the base case first (False for a sweep, whose grid is the variants).
    study_kwargs
        Passed to :func:`fleetsim.study.run_study` (replications, seed, engine, workers, ...).

    Raises
    ------
    InputError
        With fewer than 2 draws or no field factor with bounds.
    """
    from fleetsim.study.cluster import study_cluster
    from fleetsim.study.study import run_study

    if draws < 2:
        raise InputError("--parameter-uncertainty", f"expected 2 or more draws, got {draws}")
    doc, uncertain = factor_uncertainties(document, source)
    lives = life_uncertainties(doc, source)
    if not uncertain and not lives:
        raise InputError(
            f"{source}",
            "no [[field_factor]] entry with lower and upper bounds and no [[fitted_life]] with a "
            "covariance: nothing uncertain to draw (write them with fleetsim fit --factors-out "
            "or --life-out and include them)",
        )
    base = build_variant(doc, [], "base", source, digest).scenario
    seed = study_kwargs.pop("seed", None)
    seed = check_seed(base.study.seed if seed is None else seed)
    factors = draw_factors(uncertain, draws, seed)
    life_values = draw_lives(lives, draws, seed)
    cases = [(v.name, v.overrides) for v in variants]
    if include_base:
        cases.insert(0, ("Today's practice", ()))
    if not cases:
        raise InputError("parameter uncertainty", "expected at least one variant to run")
    names = tuple(name for name, _ in cases)
    results = []
    cluster = study_kwargs.pop("cluster", None)
    with study_cluster(cluster, study_kwargs.get("workers", 1)) as dask:  # one for every draw
        for d in range(draws):
            doc_d = draw_document(doc, uncertain, factors[d], lives, life_values[d])
            row = []
            for name, overrides in cases:
                sc = build_variant(doc_d, list(overrides), f"{name}, draw {d + 1}", source,
                                   digest).scenario
                row.append(run_study(sc, seed=seed, keep_events=False, label=name, cluster=dask,
                                     **study_kwargs))
            results.append(tuple(row))
    return UncertainStudy(
        tuple(uncertain), factors, tuple(results), names, tuple(lives), life_values
    )
