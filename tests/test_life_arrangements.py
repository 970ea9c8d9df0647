"""Arrangements, static load and duty-cycle modified life against published rules.

Each check names its source; values recalled rather than read from the
document at hand are marked "(from memory)". Hand calculations apply the
named formula to round numbers.
"""

from __future__ import annotations

import math
import warnings

import pytest
from numpy.testing import assert_allclose

from fleetsim.errors import InputError, LifeModelWarning
from fleetsim.life import (
    Arrangement,
    BearingRating,
    BearingType,
    DutyStep,
    LoadFactors,
    Lubrication,
    WeibullShape,
    bearing_loads,
    duty_cycle,
    life_modification_factor,
    opposed_axial_loads,
    position_life,
    series_rating_life,
    static_equivalent_load,
    static_factors,
    warn_reliability_range,
)

TAPERED = LoadFactors(e=0.37, X=0.4, Y=1.6)
# ISO 281:2007 Table 3, single-row angular-contact ball bearings, α = 40°:
# e = 1.14, X = 0.35, Y = 0.57 (from memory).
ANGULAR_40 = LoadFactors(e=1.14, X=0.35, Y=0.57)
# A model without location, so that series lives have the closed form.
NO_LOCATION = WeibullShape(shape=1.5, location=0.0, scale=1.0 / math.log(1 / 0.9) ** (1 / 1.5))


def _quiet(fn, *args, **kwargs):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", LifeModelWarning)
        return fn(*args, **kwargs)


# --- opposed pairs --------------------------------------------------------------------------
def test_opposed_tapered_pair_induced_and_external_thrust() -> None:
    # Tapered roller bearings: induced thrust Fi = Fr/(2Y) (the standard rule, e.g.
    # Budynas & Nisbett, Shigley's Mechanical Engineering Design, tapered roller
    # bearings; from memory). Opposed pair, external thrust Ka on bearing A:
    # FiB + Ka >= FiA → FaA = FiB + Ka, FaB = FiB.
    loads = bearing_loads("face-to-face", "tapered-roller", TAPERED, 14_000, 5_000, 11_000)
    fi_a, fi_b = 14_000 / 3.2, 11_000 / 3.2  # 4375 N, 3437.5 N
    assert [b.name for b in loads] == ["A", "B"]
    assert_allclose([loads[0].axial_load_N, loads[1].axial_load_N], [fi_b + 5_000, fi_b])
    # The other case: a small thrust does not overcome A's own induced force:
    # FaA = FiA, FaB = FiA − Ka.
    loads = bearing_loads("back-to-back", "tapered-roller", TAPERED, 14_000, 500, 4_000)
    assert_allclose([loads[0].axial_load_N, loads[1].axial_load_N], [fi_a, fi_a - 500])
    # Life of each bearing from its own P: A has Fa/Fr = 8437.5/14000 > e →
    # P = 0.4·14000 + 1.6·8437.5 = 19100 N; B has 3437.5/11000 = 0.3125 <= e → P = Fr.
    res = position_life(BearingRating(BearingType.TAPERED_ROLLER, 160_000, 190_000, factors=TAPERED),
                        [DutyStep(1, 14_000, 5_000, 380, 11_000)], arrangement="face-to-face",
                        model=NO_LOCATION)
    a, b = res.bearings
    assert_allclose([a.equivalent_load_N, b.equivalent_load_N], [19_100, 11_000])
    hours = 1e6 / (60 * 380)
    assert_allclose(a.rating_life_h, (160 / 19.1) ** (10 / 3) * hours)
    assert_allclose(b.rating_life_h, (160 / 11.0) ** (10 / 3) * hours)
    # The pair in series: with location 0, L = (L_A^−b + L_B^−b)^(−1/b)
    # (Lundberg–Palmgren system life; any bearing text).
    series = (a.rating_life_h**-1.5 + b.rating_life_h**-1.5) ** (-1 / 1.5)
    assert_allclose(res.rating_life_h, series, rtol=1e-9)


@pytest.mark.parametrize(
    "fr_a, fr_b, ka, fa_a, fa_b",
    [
        # Bearing-maker handbook table "axial loading of arrangements of two single-row
        # angular-contact ball bearings", bearing A taking Ka, R = 0.88 at 40° (from memory):
        (3.0, 5.0, 1.0, 0.88 * 5 + 1.0, 0.88 * 5),  # FrA <= FrB: FaB = R·FrB, FaA = FaB + Ka
        (5.0, 2.0, 3.0, 0.88 * 2 + 3.0, 0.88 * 2),  # FrA > FrB, Ka >= R(FrA − FrB)
        (5.0, 2.0, 1.0, 0.88 * 5, 0.88 * 5 - 1.0),  # FrA > FrB, Ka < R(FrA − FrB): FaA = R·FrA
    ],
)
def test_angular_contact_pair_cases(fr_a, fr_b, ka, fa_a, fa_b) -> None:
    loads = bearing_loads("back-to-back", "angular-contact-ball", ANGULAR_40, fr_a, ka, fr_b)
    assert_allclose([loads[0].axial_load_N, loads[1].axial_load_N], [fa_a, fa_b], rtol=1e-12)


def test_angular_contact_pair_equivalent_loads() -> None:
    # FrA = 3 kN, FrB = 5 kN, Ka = 1 kN: FaA = 5.4 kN, FaB = 4.4 kN (case above).
    # ISO 281 single-row factors: A has Fa/Fr = 1.8 > e → P = 0.35·3 + 0.57·5.4 = 4.128 kN;
    # B has 0.88 <= e → P = Fr = 5 kN.
    res = position_life(BearingRating(BearingType.ANGULAR_CONTACT_BALL, 52_000, 38_000,
                                      factors=ANGULAR_40),
                        [DutyStep(1, 3_000, 1_000, 1480, 5_000)], arrangement="back-to-back")
    assert_allclose([b.equivalent_load_N for b in res.bearings], [4_128, 5_000], rtol=1e-12)
    assert res.rating_life_h < min(b.rating_life_h for b in res.bearings)


def test_opposed_pair_needs_bearing_b_and_a_contact_angle_type() -> None:
    with pytest.raises(InputError, match="bearing B"):
        bearing_loads("face-to-face", "tapered-roller", TAPERED, 14_000, 5_000)
    with pytest.raises(InputError, match="arrangements apply"):
        bearing_loads("tandem", "ball", None, 1_000, 0)
    with pytest.raises(InputError, match="bearing B"):
        bearing_loads("single", "tapered-roller", TAPERED, 1_000, 0, 500)
    with pytest.raises(InputError, match="external thrust"):
        opposed_axial_loads(1.0, 1.0, -1.0)


def test_tandem_pair_shares_the_load() -> None:
    # Two bearings side by side share Fr and Fa equally; single-row factors
    # (ISO 281:2007, bearings in tandem). Each lives (C/(P/2))^p; two in series
    # with location 0 live 2^(−1/b) of one.
    one = position_life(BearingRating(BearingType.TAPERED_ROLLER, 160_000, factors=TAPERED),
                        [DutyStep(1, 7_000, 2_500, 380)], model=NO_LOCATION)
    pair = position_life(BearingRating(BearingType.TAPERED_ROLLER, 160_000, factors=TAPERED),
                         [DutyStep(1, 14_000, 5_000, 380)], model=NO_LOCATION,
                         arrangement="tandem")
    assert [b.name for b in pair.bearings] == ["1", "2"]
    assert_allclose(pair.bearings[0].rating_life_h, one.rating_life_h)
    assert_allclose(pair.rating_life_h, one.rating_life_h * 2 ** (-1 / 1.5), rtol=1e-9)


def test_double_row_uses_x1_y1_below_e() -> None:
    # ISO 281:2007 Table 4, double-row tapered roller bearings: e = 1.5 tan α,
    # X1 = 1, Y1 = 0.45 cot α; X2 = 0.67, Y2 = 0.67 cot α (from memory). With
    # e = 0.37, cot α = 1.5/0.37.
    cot = 1.5 / 0.37
    f = LoadFactors(e=0.37, X=0.67, Y=0.67 * cot, X1=1.0, Y1=0.45 * cot)
    rating = BearingRating(BearingType.TAPERED_ROLLER, 300_000, 400_000, factors=f)
    below = position_life(rating, [DutyStep(1, 20_000, 5_000, 380)], arrangement="double-row")
    assert_allclose(below.equivalent_load_N, 20_000 + 0.45 * cot * 5_000)
    above = position_life(rating, [DutyStep(1, 20_000, 10_000, 380)], arrangement="double-row")
    assert_allclose(above.equivalent_load_N, 0.67 * 20_000 + 0.67 * cot * 10_000)
    # ISO 76, double row: X0 = 1, Y0 = 0.44 cot α (from memory).
    assert_allclose(above.static_equivalent_load_N, 20_000 + 0.44 * cot * 10_000, rtol=1e-12)
    with pytest.raises(InputError, match="X1 and Y1"):
        position_life(BearingRating(BearingType.TAPERED_ROLLER, 300_000, factors=TAPERED),
                      [DutyStep(1, 20_000, 5_000, 380)], arrangement="double-row")


def test_series_life_closed_form_and_one_bearing() -> None:
    # Lundberg–Palmgren: (Σ L_i^−b)^(−1/b) when the Weibull location is 0.
    lives = [30_000.0, 50_000.0, 80_000.0]
    assert_allclose(series_rating_life(lives, NO_LOCATION),
                    sum(v**-1.5 for v in lives) ** (-1 / 1.5), rtol=1e-9)
    assert series_rating_life([42_000.0], NO_LOCATION) == 42_000.0


# --- static load --------------------------------------------------------------------------
def test_static_equivalent_load_radial_ball() -> None:
    # ISO 76, radial ball bearings: P0 = 0.6 Fr + 0.5 Fa, and P0 = Fr when that is less
    # (from memory).
    assert_allclose(static_equivalent_load("ball", 3_200, 1_100), 3_200)
    assert_allclose(static_equivalent_load("ball", 2_000, 4_000), 0.6 * 2_000 + 0.5 * 4_000)
    res = position_life(BearingRating(BearingType.BALL, 30_700, 19_000),
                        [DutyStep(1, 2_000, 4_000, 1480)])
    assert_allclose(res.static_safety, 19_000 / 3_200)
    assert_allclose(res.static_equivalent_load_N, 3_200)


def test_static_factors_tapered_from_contact_angle() -> None:
    # ISO 76: single-row tapered roller X0 = 0.5, Y0 = 0.22 cot α; ISO 281: e = 1.5 tan α
    # and Y = 0.4 cot α (from memory). A catalogue row e = 0.37, Y = 1.6, Y0 = 0.9 (the
    # usual triplet of such bearings, from memory) agrees to its rounding.
    x0, y0 = static_factors("tapered-roller", TAPERED)
    assert x0 == 0.5
    assert_allclose(y0, 0.9, atol=0.01)
    assert_allclose(0.4 * 1.5 / 0.37, 1.6, atol=0.025)
    # ISO 76, angular-contact ball bearings at 40°: X0 = 0.5, Y0 = 0.26 (from memory).
    assert static_factors("angular-contact-ball", ANGULAR_40) == (0.5, 0.26)
    assert static_factors("angular-contact-ball", ANGULAR_40, double_row=True) == (1.0, 0.52)
    # A catalogue Y0 wins.
    assert static_factors("tapered-roller", LoadFactors(0.37, 0.4, 1.6, Y0=0.88)) == (0.5, 0.88)
    with pytest.raises(InputError, match="Y0"):
        static_factors("angular-contact-ball", LoadFactors(0.5, 0.4, 1.0))


def test_low_static_safety_warns() -> None:
    # s0 = C0/P0 below 1 for a ball bearing (common practice minimum in normal service).
    with pytest.warns(LifeModelWarning, match="s0 = C0/P0 = 0.8"):
        position_life(BearingRating(BearingType.BALL, 100_000, 8_000),
                      [DutyStep(1, 10_000, 0, 100)])


# --- duty cycle with a_ISO at each step -----------------------------------------------------
def test_modified_life_by_damage_summation() -> None:
    # ISO 281:2007, variable operating conditions (from memory): a_ISO at each step's
    # load, L_nm,i = a_ISO,i·L10,i, combined by Palmgren–Miner: 1/L = Σ t_i/L_nm,i.
    # The basic rating life keeps the revolution-weighted (cube-mean) load.
    rating = BearingRating(BearingType.BALL, 30_700, 19_000, 800)
    lub = Lubrication(viscosity_ratio=1.0, contamination=0.5)
    steps = [DutyStep(0.9, 1_000, 0, 1480), DutyStep(0.1, 6_000, 0, 1480, viscosity_ratio=2.0)]
    res = _quiet(position_life, rating, steps, lubrication=lub)
    hours = 1e6 / (60 * 1480)
    lives = [
        life_modification_factor(1.0, 0.5, 800, 1_000, roller=False) * (30.7 / 1.0) ** 3 * hours,
        life_modification_factor(2.0, 0.5, 800, 6_000, roller=False) * (30.7 / 6.0) ** 3 * hours,
    ]
    expected = 1 / (0.9 / lives[0] + 0.1 / lives[1])
    assert_allclose(res.modified_life_h, expected, rtol=1e-12)
    cube = (0.9 * 1_000**3 + 0.1 * 6_000**3) ** (1 / 3)
    assert_allclose(res.rating_life_h, (30_700 / cube) ** 3 * hours, rtol=1e-12)
    assert_allclose(res.a_iso, expected / res.rating_life_h, rtol=1e-12)


def test_light_load_dominated_cycle_is_not_credited_at_the_mean_load() -> None:
    # 1 kN for 90 % of the time, 6 kN for 10 %: a_ISO at the cube-mean load credits
    # the cycle far more than the sum over the steps (the steps' a_ISO differ a lot).
    rating = BearingRating(BearingType.BALL, 30_700, 19_000, 800)
    lub = Lubrication(viscosity_ratio=1.0, contamination=0.5)
    steps = [DutyStep(0.9, 1_000, 0, 1480), DutyStep(0.1, 6_000, 0, 1480)]
    res = _quiet(position_life, rating, steps, lubrication=lub)
    at_mean = life_modification_factor(1.0, 0.5, 800, duty_cycle("ball", steps).load_N,
                                       roller=False)
    assert 2.0 < at_mean / res.a_iso < 4.0
    # One step: the sum is the single-step value.
    one = position_life(rating, [DutyStep(1, 3_000, 0, 1480)], lubrication=lub)
    assert_allclose(one.a_iso, life_modification_factor(1.0, 0.5, 800, 3_000, roller=False))


# --- validity warnings --------------------------------------------------------------------------
def test_load_above_half_c_warns() -> None:
    # ISO 281 rating life is meant for P up to about 0.5 C.
    with pytest.warns(LifeModelWarning, match="0.5·C"):
        position_life(BearingRating(BearingType.ROLLER, 50_000, 200_000),
                      [DutyStep(1, 26_000, 0, 100)])


def test_reliability_outside_a1_range_warns() -> None:
    # ISO 281:2007 gives a1 for 90 % to 99.95 % reliability.
    with pytest.warns(LifeModelWarning, match="below 0.90"):
        warn_reliability_range(0.5, "iso281")
    with pytest.warns(LifeModelWarning, match="above 0.9995"):
        warn_reliability_range(0.9999, "iso281")
    with pytest.warns(LifeModelWarning, match="textbook"):
        warn_reliability_range(0.8, "textbook")
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        warn_reliability_range(0.95, "iso281")
        warn_reliability_range(0.9999, "textbook")
        warn_reliability_range(0.5, {"shape": 1.2, "location": 0.0, "scale": 5.0})


def test_arrangement_names() -> None:
    assert {a.value for a in Arrangement} == {
        "single", "face-to-face", "back-to-back", "tandem", "double-row"}
