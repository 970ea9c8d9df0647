"""The recommended model: parsimony (Burnham & Anderson 2002), the boundary test (Self & Liang 1987).

References: the AICc values of the reliability package's Fit_Everything; the
½χ²₀ + ½χ²₁ boundary mixture of Self & Liang (JASA 1987, case 1) through
scipy's χ² law; Akaike weights by their defining formula (Burnham & Anderson,
*Model Selection and Multimodel Inference*, 2002, sec. 2.9); Monte Carlo with
fixed seeds.
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import stats

from fleetsim.fit import CensoredSample, fit_records
from fleetsim.fit.adapter import _fitters
from fleetsim.fit.choice import akaike_weights, location_test
from fleetsim.life import LifeDistribution


@pytest.mark.parametrize("censored", [False, True], ids=["complete", "censored"])
def test_two_parameter_weibull_samples_recommend_the_two_parameter_model(censored: bool) -> None:
    # Issue 15, done-when: over repeated samples of 30 from a Weibull 2P the
    # recommended model is the Weibull 2P in at least 90 % of samples. Censoring:
    # uniform on (0, 2η), about 40 % of lives censored.
    rng = np.random.default_rng(np.random.SeedSequence(1515 + censored))
    n_samples, kept, lowest_aicc_2p = 60, 0, 0
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        for _ in range(n_samples):
            life = 30_000.0 * rng.weibull(1.5, 30)
            if censored:
                c = rng.uniform(0.0, 60_000.0, 30)
                sample = CensoredSample.from_arrays(life[life <= c], c[life > c])
            else:
                sample = CensoredSample.from_arrays(life)
            res = fit_records(sample)
            kept += res.recommended.model == "weibull_2p"
            lowest_aicc_2p += min(res.candidates, key=lambda c: c.aicc).model == "weibull_2p"
            # a location whose interval reaches 0 is never the recommended life model
            w = res.best_weibull
            if w is not None and w.model == "weibull_3p":
                assert w.parameter("location_h").lower > 0
    assert kept >= 0.9 * n_samples, (kept, n_samples)
    # and the rule does better than the lowest AICc on the same samples
    assert kept > lowest_aicc_2p


def test_clear_location_is_recommended() -> None:
    true = LifeDistribution(shape=1.5, scale_h=20_000.0, location_h=8_000.0)
    rng = np.random.default_rng(np.random.SeedSequence(404))
    res = fit_records(CensoredSample.from_arrays(true.sample(rng, 400)))
    assert res.choice is not None and res.choice.location is not None
    assert res.choice.location.rejects and res.choice.location.p_value < 1e-6
    assert res.best_weibull is not None and res.best_weibull.model == "weibull_3p"
    assert res.recommended.model == "weibull_3p"


def test_boundary_mixture_p_value() -> None:
    # Self & Liang (1987), case 1: one parameter on the boundary, D ~ ½χ²₀ + ½χ²₁, so the
    # 5 % critical value is the χ²₁ 90 % point, 2.706 (scipy), not the χ²₁ 95 % point 3.841.
    crit = float(stats.chi2.ppf(0.90, 1))
    assert_allclose(crit, 2.7055, atol=1e-4)  # χ²₁ table, 0.90 point (from memory)
    at = location_test(crit / 2.0, 0.0, confidence=0.90)
    assert_allclose(at.p_value, 0.05, rtol=1e-12) and at.level == pytest.approx(0.05)
    assert location_test(crit / 2.0 + 1e-6, 0.0, 0.90).rejects
    assert not location_test(3.841 / 2.0 - 0.6, 0.0, 0.90).rejects
    # no improvement at all: p = 1 (the χ²₀ half of the mixture)
    assert location_test(-5.0, -5.0, 0.90).p_value == 1.0


@pytest.mark.parametrize("seed", [3, 17, 29, 404])
def test_location_test_agrees_with_the_location_interval(seed: int) -> None:
    # At 90 % bounds the 5 % boundary test rejects exactly when the 90 % likelihood-ratio
    # interval of the location excludes 0 (both compare ℓ_p(0) with ℓ_max − χ²₁(0.9)/2).
    rng = np.random.default_rng(np.random.SeedSequence(seed))
    loc = 8_000.0 if seed == 404 else 2_000.0
    life = loc + 20_000.0 * rng.weibull(1.5, 60)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        res = fit_records(CensoredSample.from_arrays(life))
    c3 = res.candidate("weibull_3p")
    assert res.choice is not None and res.choice.location is not None
    if c3.identifiable:
        assert res.choice.location.rejects == (c3.parameter("location_h").lower > 0)


def test_akaike_weights_defining_formula() -> None:
    rng = np.random.default_rng(np.random.SeedSequence(8))
    res = fit_records(CensoredSample.from_arrays(30_000.0 * rng.weibull(1.5, 40)))
    w = akaike_weights(res.candidates)
    a = np.array([c.aicc for c in res.candidates])
    ref = np.exp(-(a - a.min()) / 2)
    ref /= ref.sum()
    assert_allclose([w[c.model] for c in res.candidates], ref, rtol=1e-12)
    # Δ = 0, 2, 4 gives 1 : e^-1 : e^-2 (Burnham & Anderson 2002, sec. 2.9)
    assert_allclose(ref.sum(), 1.0)
    assert_allclose(np.exp(-np.array([0, 2, 4]) / 2) / np.exp(-np.array([0, 2, 4]) / 2).sum(),
                    [0.6652, 0.2447, 0.0900], atol=1e-4)  # fmt: skip


def test_aicc_matches_reliability_fit_everything() -> None:
    rng = np.random.default_rng(np.random.SeedSequence(61))
    life = 30_000.0 * rng.weibull(1.5, 40)
    cens = rng.uniform(0.0, 60_000.0, 40)
    f, s = life[life <= cens], cens[life > cens]
    res = fit_records(CensoredSample.from_arrays(f, s))
    with np.errstate(all="ignore"):
        ref = _fitters().Fit_Everything(
            failures=f, right_censored=s, exclude=["Gamma_2P", "Gamma_3P", "Exponential_1P",
            "Exponential_2P", "Lognormal_3P", "Normal_2P", "Gumbel_2P", "Weibull_Mixture",
            "Weibull_CR", "Weibull_DS", "Loglogistic_2P", "Loglogistic_3P", "Beta_2P"],
            print_results=False, show_histogram_plot=False, show_PP_plot=False,
            show_probability_plot=False, show_best_distribution_probability_plot=False,
        )  # fmt: skip
    assert_allclose(res.candidate("weibull_2p").aicc, ref.Weibull_2P_AICc, rtol=1e-6)
    assert_allclose(res.candidate("lognormal_2p").aicc, ref.Lognormal_2P_AICc, rtol=1e-6)
    # our profile maximum of the 3P likelihood is at least as high as the package's
    assert res.candidate("weibull_3p").aicc <= ref.Weibull_3P_AICc + 1e-6
    assert math.isfinite(res.candidate("weibull_3p").aicc)
