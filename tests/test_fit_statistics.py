"""Monte Carlo checks of the fits: recovery of known lives, coverage of the bounds, 3P flags.

Fixed seeds (numpy SeedSequence); tolerances are a few standard errors
computed in each test.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from fleetsim.fit import CensoredSample, FitWarning, fit_records, profile_location
from fleetsim.fit.candidates import candidate_from_mle
from fleetsim.fit.likelihood import fit_weibull
from fleetsim.life import LifeDistribution

TRUE = LifeDistribution(shape=1.4, scale_h=30_000.0)
TRUE_B10 = float(TRUE.life_at_reliability(0.9))


def _sample(rng: np.random.Generator, n: int, intervals: bool, dist=TRUE) -> CensoredSample:
    """Random right censoring; with ``intervals`` 70 % of failures found at a 3,000 h route."""
    life = dist.sample(rng, n)
    cens = rng.uniform(0.0, 60_000.0, n)
    failed = life <= cens
    if not intervals:
        return CensoredSample.from_arrays(life[failed], cens[~failed])
    lo = np.floor(life / 3_000.0) * 3_000.0
    exact = failed & (rng.random(n) < 0.3)
    found = failed & ~exact
    return CensoredSample(life[exact], cens[~failed], lo[found], lo[found] + 3_000.0)


@pytest.mark.parametrize("intervals", [False, True], ids=["right-censored", "interval-censored"])
def test_large_sample_recovers_known_weibull(intervals: bool) -> None:
    rng = np.random.default_rng(np.random.SeedSequence(101 + intervals))
    sample = _sample(rng, 3_000, intervals)
    res = fit_records(sample, models=("weibull_2p",))
    c = res.best
    assert ("reliability" in c.method) is (not intervals)
    for est, truth in (
        (c.parameter("shape"), TRUE.shape),
        (c.parameter("scale_h"), TRUE.scale_h),
        (c.b_life(10), TRUE_B10),
    ):
        assert math.isfinite(est.std_error) and est.std_error > 0
        assert abs(est.estimate - truth) < 3.5 * est.std_error, (est, truth)
    # the standard error of the shape is small for n = 3000 (about 2-3 %)
    assert c.parameter("shape").std_error < 0.05 * TRUE.shape


@pytest.mark.parametrize("intervals", [False, True], ids=["right-censored", "interval-censored"])
def test_coverage_of_90_percent_bounds(intervals: bool) -> None:
    # Repeated samples of 150 bearings: the 90 % bounds should hold the true shape,
    # scale and B10 in about 90 % of samples. Binomial SE of a coverage over 200
    # samples: sqrt(0.9 * 0.1 / 200) = 0.021; accept within 3 SE.
    # (fleetsim's own fitter: its information matrix equals the reliability package's,
    # see test_fit_reference; the bounds come from the same code for both.)
    reps = 200
    hits = np.zeros(3)
    for child in np.random.SeedSequence(202 + intervals).spawn(reps):
        s = _sample(np.random.default_rng(child), 150, intervals)
        c = candidate_from_mle("weibull_2p", fit_weibull(s), s.n_records, 0.90)
        sh, sc, b10 = c.parameter("shape"), c.parameter("scale_h"), c.b_life(10)
        hits += [
            sh.lower <= TRUE.shape <= sh.upper,
            sc.lower <= TRUE.scale_h <= sc.upper,
            b10.lower <= TRUE_B10 <= b10.upper,
        ]
    coverage = hits / reps
    tol = 3 * math.sqrt(0.9 * 0.1 / reps)
    assert np.all(np.abs(coverage - 0.90) < tol), coverage


def test_lognormal_recovered_and_preferred_for_lognormal_lives() -> None:
    rng = np.random.default_rng(np.random.SeedSequence(303))
    mu, sigma = math.log(20_000.0), 0.8
    life = np.exp(mu + sigma * rng.standard_normal(2_000))
    cens = rng.uniform(0.0, 80_000.0, 2_000)
    res = fit_records(CensoredSample.from_arrays(life[life <= cens], cens[life > cens]))
    assert res.best.model == "lognormal_2p"
    d = res.best
    assert abs(d.parameter("shape").estimate - sigma) < 3.5 * d.parameter("shape").std_error
    med = d.parameter("scale_h")
    assert abs(med.estimate - math.exp(mu)) < 3.5 * med.std_error


def test_weibull_3p_recovers_a_clear_location() -> None:
    true = LifeDistribution(shape=1.5, scale_h=20_000.0, location_h=8_000.0)
    rng = np.random.default_rng(np.random.SeedSequence(404))
    s = _sample(rng, 600, intervals=False, dist=true)
    res = fit_records(s)
    c = res.candidate("weibull_3p")
    assert c.identifiable and res.location_profile is not None
    assert res.best.model == "weibull_3p"
    gamma = c.parameter("location_h")
    assert 0 < gamma.lower < gamma.estimate < gamma.upper <= res.location_profile.limit_h
    # the location stays below the first failure
    assert gamma.estimate < s.failures_h.min()
    for name, truth in (("shape", 1.5), ("scale_h", 20_000.0), ("location_h", 8_000.0)):
        p = c.parameter(name)
        assert math.isfinite(p.std_error), name
        assert abs(p.estimate - truth) < 3.5 * p.std_error, (name, p)


def test_flat_location_profile_is_flagged_not_identifiable() -> None:
    # 30 complete lives from a two-parameter Weibull: the location cannot be told
    # apart from 0 and the profile is flat between 0 and the first failure.
    rng = np.random.default_rng(np.random.SeedSequence(7))
    s = CensoredSample.from_arrays(10_000.0 * rng.weibull(1.5, 30))
    prof = profile_location(s, confidence=0.90)
    assert not prof.identifiable and "flat" in prof.reason
    assert prof.lower_h == 0.0 and prof.upper_h == pytest.approx(prof.limit_h)
    res = fit_records(s)
    c3 = res.candidate("weibull_3p")
    assert not c3.identifiable and any("not identifiable" in n for n in c3.notes)
    assert res.best.model != "weibull_3p" and res.candidates[-1].model == "weibull_3p"
    assert res.best_weibull is not None and res.best_weibull.model == "weibull_2p"
    assert not bool(res.summary.loc[res.summary["model"] == "weibull_3p", "identifiable"].iloc[0])


def test_location_running_to_first_failure_is_flagged() -> None:
    # Shape below 1: the likelihood grows without bound as the location approaches the
    # first failure (Lawless, sec. 4.5) - no three-parameter maximum.
    rng = np.random.default_rng(np.random.SeedSequence(5))
    s = CensoredSample.from_arrays(10_000.0 * rng.weibull(0.7, 40))
    prof = profile_location(s)
    assert not prof.identifiable and "first failure" in prof.reason
    assert prof.estimate_h < prof.limit_h


def test_failed_candidate_is_reported_and_others_kept() -> None:
    # Two failures: enough for the 2P models, not for the three-parameter Weibull.
    s = CensoredSample.from_arrays([3_000.0, 9_000.0], [5_000.0, 12_000.0, 15_000.0])
    with pytest.warns(FitWarning, match="Weibull 3P not fitted"):
        res = fit_records(s)
    assert [m for m, _ in res.not_fitted] == ["weibull_3p"]
    assert "3 failures" in res.not_fitted[0][1]
    assert {c.model for c in res.candidates} == {"weibull_2p", "lognormal_2p"}
