"""Life models against published references.

Each check names its source. Values recalled rather than read from the
document at hand are marked "(from memory)".
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import stats

from fleetsim.errors import InputError, LifeModelWarning
from fleetsim.life import (
    PRESETS,
    RADIAL_BALL_TABLE,
    BearingRating,
    BearingType,
    DutyStep,
    LifeDistribution,
    LoadFactors,
    duty_cycle,
    equivalent_load,
    life_modification_factor,
    position_life,
    radial_ball_factors,
    rating_life_Mrev,
    reliability_factor_a1,
    required_dynamic_rating,
    revolutions_to_hours,
)

# ISO 281:2007, Table 12 — life modification factor for reliability a1
# (reliability %, a1), as printed to two significant figures (from memory).
ISO281_A1_TABLE = [
    (90, 1.0),
    (95, 0.64),
    (96, 0.55),
    (97, 0.47),
    (98, 0.37),
    (99, 0.25),
    (99.2, 0.22),
    (99.4, 0.19),
    (99.6, 0.16),
    (99.8, 0.12),
    (99.9, 0.093),
    (99.92, 0.087),
    (99.94, 0.080),
    (99.95, 0.077),
]


@pytest.mark.parametrize("percent, a1", ISO281_A1_TABLE)
def test_iso_preset_reproduces_iso281_a1_table(percent: float, a1: float) -> None:
    # The table is printed to two significant figures: agree within half a unit
    # in the last printed digit.
    value = reliability_factor_a1(percent / 100, "iso281")
    digits = 2 if a1 < 0.1 else (2 if a1 < 1 else 1)
    half_ulp = 0.5 * 10 ** (math.floor(math.log10(a1)) - digits + 1)
    assert abs(value - a1) <= half_ulp + 1e-12


def test_iso_preset_matches_iso281_a1_formula() -> None:
    # ISO 281:2007, 6.2: a1 = 0.95·(ln(100/R)/ln(100/90))^(2/3) + 0.05 (from memory).
    for r in np.linspace(0.90, 0.9995, 25):
        formula = 0.95 * (math.log(1 / r) / math.log(1 / 0.9)) ** (2 / 3) + 0.05
        assert_allclose(reliability_factor_a1(float(r)), formula, rtol=1e-12)


def test_textbook_preset_parameters_and_f_at_l10() -> None:
    # Budynas & Nisbett, Shigley's Mechanical Engineering Design, sec. 11-4:
    # x0 = 0.02, θ = 4.459, b = 1.483 for ball bearings (from memory); the fit
    # puts about 10 % failed at the rating life.
    tb = PRESETS["textbook"]
    assert (tb.location, tb.location + tb.scale, tb.shape) == (0.02, pytest.approx(4.459), 1.483)
    assert_allclose(tb.failure_at_l10(), 0.10, atol=0.002)
    assert_allclose(PRESETS["iso281"].failure_at_l10(), 0.10, rtol=1e-12)


def test_textbook_required_rating_closed_form() -> None:
    # Budynas & Nisbett, Eq. (11-9): C10 = a_f F [x_D / (x0 + (θ−x0)(ln 1/R)^(1/b))]^(1/a)
    # with x_D the design life in units of the rating life (10^6 rev).
    a_f, f, life_h, n, r = 1.2, 2.0e3, 30_000.0, 1725.0, 0.99
    x_d = life_h * 60 * n / 1e6
    expected = a_f * f * (x_d / (0.02 + 4.439 * math.log(1 / r) ** (1 / 1.483))) ** (1 / 3)
    got = required_dynamic_rating(
        f, n, life_h, r, bearing_type="ball", model="textbook", application_factor=a_f
    )
    assert_allclose(got, expected, rtol=1e-12)
    # And the inverse: a bearing of exactly that rating has reliability r at the life.
    rating = BearingRating(BearingType.BALL, got)
    res = position_life(rating, [DutyStep(1, f, 0, n)], model="textbook", application_factor=a_f)
    assert_allclose(res.distribution.reliability(life_h), r, rtol=1e-10)


@pytest.mark.parametrize("row", range(len(RADIAL_BALL_TABLE)))
def test_radial_ball_table_rows(row: int) -> None:
    # Radial ball bearing e/X/Y table indexed by Fa/C0, X2 = 0.56, e.g.
    # Budynas & Nisbett, Shigley's Mechanical Engineering Design, Table 11-1
    # (from memory). At a tabulated Fa/C0 the factors equal the row.
    ratio, e, y = RADIAL_BALL_TABLE[row]
    lf = radial_ball_factors(ratio * 10_000.0, 10_000.0)
    assert_allclose((lf.e, lf.X, lf.Y), (e, 0.56, y), rtol=1e-12)


def test_radial_ball_table_published_values() -> None:
    # Spot values of the same published table, typed here independently of the
    # module's copy (from memory): Fa/C0 = 0.014 → e 0.19, Y 2.30;
    # 0.110 → e 0.30, Y 1.45; 0.56 → e 0.44, Y 1.00.
    for ratio, e, y in [(0.014, 0.19, 2.30), (0.110, 0.30, 1.45), (0.56, 0.44, 1.00)]:
        lf = radial_ball_factors(ratio, 1.0)
        assert_allclose((lf.e, lf.Y), (e, y))


def test_radial_ball_interpolation_and_clamping() -> None:
    # Linear interpolation halfway between the rows 0.056 (e .26, Y 1.71) and 0.070 (e .27, Y 1.63).
    lf = radial_ball_factors(0.063, 1.0)
    assert_allclose((lf.e, lf.Y), (0.265, 1.67))
    with pytest.warns(LifeModelWarning, match="outside"):
        lo = radial_ball_factors(0.001, 1.0)
    assert_allclose((lo.e, lo.Y), (0.19, 2.30))
    with pytest.warns(LifeModelWarning):
        hi = radial_ball_factors(0.9, 1.0)
    assert_allclose((hi.e, hi.Y), (0.44, 1.00))


def test_equivalent_load_hand_calculation() -> None:
    # Fr = 4 kN, Fa = 1.68 kN, C0 = 30 kN: Fa/C0 = 0.056 → e = 0.26, Y = 1.71;
    # Fa/Fr = 0.42 > e so P = 0.56·4000 + 1.71·1680 = 5112.8 N (hand arithmetic).
    eq = equivalent_load("ball", 4000.0, 1680.0, static_rating_N=30_000.0)
    assert_allclose(eq.load_N, 0.56 * 4000 + 1.71 * 1680)
    # Small axial load: Fa/Fr <= e → P = Fr.
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", LifeModelWarning)
        small = equivalent_load("ball", 4000.0, 300.0, static_rating_N=30_000.0)
    assert (small.load_N, small.X, small.Y) == (4000.0, 1.0, 0.0)
    # Rotation factor and application factor.
    eq2 = equivalent_load(
        "ball", 4000.0, 1680.0, static_rating_N=30_000.0, rotation_factor=1.2,
        application_factor=1.5,
    )
    assert_allclose(eq2.bare_load_N, 0.56 * 1.2 * 4000 + 1.71 * 1680)
    assert_allclose(eq2.load_N, 1.5 * eq2.bare_load_N)


def test_roller_and_contact_angle_bearings() -> None:
    assert equivalent_load("roller", 5000.0).load_N == 5000.0
    with pytest.raises(InputError, match="radial load only"):
        equivalent_load("roller", 5000.0, 100.0)
    with pytest.raises(InputError, match="e, X and Y"):
        equivalent_load("tapered-roller", 5000.0, 2000.0)
    tr = equivalent_load("tapered-roller", 5000.0, 2000.0, factors=LoadFactors(0.35, 0.4, 1.7))
    assert_allclose(tr.load_N, 0.4 * 5000 + 1.7 * 2000)
    assert BearingType.ROLLER.life_exponent == pytest.approx(10 / 3)
    assert BearingType.BALL.life_exponent == 3.0


def test_rating_life_closed_form() -> None:
    # L10 = (C/P)^p 10^6 rev; L10h = 10^6 L10 / (60 n) (ISO 281:2007, 6.1).
    assert_allclose(rating_life_Mrev(30_000, 3_000, 3.0), 1000.0)
    assert_allclose(rating_life_Mrev(30_000, 3_000, 10 / 3), 10 ** (10 / 3))
    assert_allclose(revolutions_to_hours(1000.0, 1000.0), 1e9 / 60_000)


def test_duty_cycle_published_example() -> None:
    # Mott, Machine Elements in Mechanical Design, 4th ed., Example Problem 14-6:
    # a deep-groove ball bearing carries 650 lb for 30 min, 750 lb for 10 min and
    # 250 lb for 20 min at 600 rpm; the mean effective load is 597 lb.
    lbf = 4.4482216152605
    steps = [
        DutyStep(30, 650 * lbf, 0, 600),
        DutyStep(10, 750 * lbf, 0, 600),
        DutyStep(20, 250 * lbf, 0, 600),
    ]
    res = duty_cycle("ball", steps)
    assert_allclose(res.load_N / lbf, 597, atol=0.5)
    assert res.speed_rpm == pytest.approx(600)


def test_duty_cycle_weights_by_revolutions() -> None:
    # ISO 281:2007 variable conditions: P = (Σ P_i^p n_i t_i / Σ n_i t_i)^(1/p);
    # n_m = Σ n_i t_i / Σ t_i. Hand arithmetic for two steps.
    steps = [DutyStep(0.25, 4000, 0, 3000), DutyStep(0.75, 2000, 0, 1000)]
    res = duty_cycle("roller", steps)
    p = 10 / 3
    expected = ((4000**p * 3000 * 0.25 + 2000**p * 1000 * 0.75) / (3000 * 0.25 + 1000 * 0.75)) ** (1 / p)
    assert_allclose(res.load_N, expected)
    assert_allclose(res.speed_rpm, 1500.0)


@pytest.mark.parametrize("model", ["iso281", "textbook"])
def test_distribution_matches_scipy_weibull_min(model: str) -> None:
    # scipy.stats.weibull_min(c, loc, scale) is the reference three-parameter Weibull.
    d = LifeDistribution.from_rating_life(20_000.0, model)
    ref = stats.weibull_min(c=d.shape, loc=d.location_h, scale=d.scale_h)
    t = np.array([0.0, 100.0, 500.0, 5_000.0, 20_000.0, 80_000.0, 300_000.0])
    assert_allclose(d.cdf(t), ref.cdf(t), rtol=1e-12, atol=1e-300)
    assert_allclose(d.reliability(t), ref.sf(t), rtol=1e-12)
    assert_allclose(d.pdf(t), ref.pdf(t), rtol=1e-12)
    q = np.array([1e-6, 0.01, 0.1, 0.5, 0.9, 0.999])
    assert_allclose(d.ppf(q), ref.ppf(q), rtol=1e-10)
    assert_allclose(d.mean_h, ref.mean(), rtol=1e-12)
    assert_allclose(d.variance_h2, ref.var(), rtol=1e-10)
    assert_allclose(d.hazard(t[1:]), ref.pdf(t[1:]) / ref.sf(t[1:]), rtol=1e-8)
    assert_allclose(d.life_at_reliability(0.9), 20_000.0, rtol=0.01 if model == "textbook" else 1e-12)


def test_sampling_follows_the_distribution() -> None:
    # Kolmogorov–Smirnov against scipy's cdf with a fixed seed (scipy.stats.kstest).
    d = LifeDistribution.from_rating_life(10_000.0, "iso281")
    rng = np.random.default_rng(np.random.SeedSequence(20261201))
    x = d.sample(rng, 20_000)
    assert stats.kstest(x, d.frozen.cdf).pvalue > 0.001
    # Residual life of a unit aged 20,000 h: conditional distribution
    # P(T - a > s | T > a) = R(a + s) / R(a).
    r = d.residual_sample(rng, 20_000.0, 20_000)
    cond = lambda s: 1 - d.reliability(20_000.0 + s) / d.reliability(20_000.0)  # noqa: E731
    assert stats.kstest(r, cond).pvalue > 0.001


def test_a_iso_limits_and_monotonicity() -> None:
    # ISO 281:2007 a_ISO: capped at 50; larger with cleaner oil (e_C) and
    # thicker film (κ); and the three κ bands join without a jump at 0.4 only
    # approximately (the standard's bands are separate fits), so only order is checked.
    assert life_modification_factor(4.0, 1.0, 5_000.0, 1_000.0, roller=False) == 50.0
    base = life_modification_factor(1.0, 0.5, 1_000.0, 5_000.0, roller=False)
    cleaner = life_modification_factor(1.0, 0.8, 1_000.0, 5_000.0, roller=False)
    thicker = life_modification_factor(2.0, 0.5, 1_000.0, 5_000.0, roller=False)
    assert base < cleaner and base < thicker
    # With no load term (e_C = 0) the ball formula gives a_ISO = 0.1.
    assert_allclose(life_modification_factor(0.5, 0.0, 1_000.0, 5_000.0, roller=False), 0.1)
    assert_allclose(life_modification_factor(0.5, 0.0, 1_000.0, 5_000.0, roller=True), 0.1)


def test_a_iso_formula_value() -> None:
    # ISO 281:2007, Eq. for radial ball bearings, 1 <= κ <= 4 (from memory):
    # a_ISO = 0.1 [1 − (2.5671 − 1.9987/κ^0.071739)^0.83 (e_C Cu/P)^(1/3)]^−9.3
    kappa, ec, cu, p = 1.5, 0.5, 800.0, 3661.0
    inner = 1 - (2.5671 - 1.9987 / kappa**0.071739) ** 0.83 * (ec * cu / p) ** (1 / 3)
    assert_allclose(
        life_modification_factor(kappa, ec, cu, p, roller=False), 0.1 * inner**-9.3, rtol=1e-12
    )
    # Radial roller, 0.4 <= κ < 1 (from memory):
    # a_ISO = 0.1 [1 − (1.5859 − 1.2348/κ^0.19087)(e_C Cu/P)^0.4]^−9.185
    kappa = 0.6
    inner = 1 - (1.5859 - 1.2348 / kappa**0.19087) * (ec * cu / p) ** 0.4
    assert_allclose(
        life_modification_factor(kappa, ec, cu, p, roller=True), 0.1 * inner**-9.185, rtol=1e-12
    )


def test_kappa_outside_range_warns_and_clips() -> None:
    with pytest.warns(LifeModelWarning, match="clipped"):
        a = life_modification_factor(10.0, 0.5, 800.0, 3000.0, roller=False)
    assert a == life_modification_factor(4.0, 0.5, 800.0, 3000.0, roller=False)


def test_load_above_static_rating_warns() -> None:
    with pytest.warns(LifeModelWarning, match="static rating"):
        position_life(BearingRating(BearingType.ROLLER, 50_000, 20_000), [DutyStep(1, 25_000, 0, 100)])
