"""k-out-of-n groups and the finite-source machine-repair queue.

Sources: the binomial sum for k-out-of-n groups (any reliability text, e.g.
Rausand & Høyland, *System Reliability Theory*, from memory), checked against
scipy.stats.binom and full enumeration; the M/M/c//N machine-repair model of
Gross & Harris, *Fundamentals of Queueing Theory* (from memory), checked
against its product-form probabilities, a hand-worked case and the single
machine's availability μ/(λ + μ).
"""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy import stats

from fleetsim.errors import InputError
from fleetsim.plan import (
    k_out_of_n_reliability,
    k_out_of_n_reliability_mixed,
    machine_repair_queue,
    units_up_distribution,
)


@pytest.mark.parametrize("n", [1, 2, 3, 5, 10, 25])
def test_binomial_sum_against_scipy(n: int) -> None:
    r = np.linspace(0.0, 1.0, 41)
    for k in range(0, n + 1):
        assert_allclose(k_out_of_n_reliability(k, n, r), stats.binom.sf(k - 1, n, r), atol=1e-13)


def test_two_out_of_three_hand_case() -> None:
    # 2-out-of-3: 3r² − 2r³; r = 0.9 → 0.972 (any reliability text)
    assert k_out_of_n_reliability(2, 3, 0.9) == pytest.approx(0.972, abs=1e-15)
    # series and parallel as the two ends
    assert k_out_of_n_reliability(3, 3, 0.9) == pytest.approx(0.729)
    assert k_out_of_n_reliability(1, 3, 0.9) == pytest.approx(0.999)


def test_non_identical_units_against_enumeration() -> None:
    r = [0.95, 0.7, 0.88, 0.5, 0.99, 0.6]
    up = np.zeros(len(r) + 1)
    for state in itertools.product([0, 1], repeat=len(r)):
        prob = math.prod(ri if s else 1 - ri for ri, s in zip(r, state, strict=True))
        up[sum(state)] += prob
    assert_allclose(units_up_distribution(r), up, atol=1e-15)
    for k in range(len(r) + 1):
        assert k_out_of_n_reliability_mixed(k, r) == pytest.approx(up[k:].sum(), abs=1e-14)


@settings(max_examples=40, deadline=None)
@given(n=st.integers(1, 12), r=st.floats(0.0, 1.0), data=st.data())
def test_mixed_with_equal_units_is_binomial(n: int, r: float, data: st.DataObject) -> None:
    k = data.draw(st.integers(0, n))
    assert k_out_of_n_reliability_mixed(k, [r] * n) == pytest.approx(
        k_out_of_n_reliability(k, n, r), abs=1e-12
    )


def test_single_machine_availability() -> None:
    # N = 1, c = 1: availability μ/(λ + μ)
    lam, mu = 1 / 5000.0, 1 / 8.0
    res = machine_repair_queue(1, 1, lam, mu)
    assert res.availability == pytest.approx(mu / (lam + mu), rel=1e-12)
    assert res.mean_wait_h == pytest.approx(0.0, abs=1e-15)
    assert res.mean_down_time_h == pytest.approx(8.0, rel=1e-12)


def test_hand_worked_two_machines_one_crew() -> None:
    # N = 2, c = 1, λ = 1, μ = 2: p ∝ 1 : 2λ/μ : 2λ²/μ² = 1 : 1 : 0.5 → (0.4, 0.4, 0.2);
    # L = 0.8, L_q = 0.2, λ_eff = λ(N − L) = 1.2, W_q = 1/6, W = 2/3 = W_q + 1/μ.
    res = machine_repair_queue(2, 1, 1.0, 2.0)
    assert_allclose(res.probabilities, [0.4, 0.4, 0.2], rtol=1e-12)
    assert res.mean_down == pytest.approx(0.8)
    assert res.mean_waiting == pytest.approx(0.2)
    assert res.effective_failure_rate_per_h == pytest.approx(1.2)
    assert res.mean_wait_h == pytest.approx(1 / 6)
    assert res.mean_down_time_h == pytest.approx(2 / 3)
    assert res.availability == pytest.approx(0.6)
    assert res.crew_utilisation == pytest.approx(0.6)
    assert res.group_availability(1) == pytest.approx(0.8)  # at least one up


@pytest.mark.parametrize("machines, crews", [(5, 2), (12, 3), (8, 1)])
def test_product_form(machines: int, crews: int) -> None:
    # Gross & Harris: p_n ∝ C(N,n) r^n (n <= c), C(N,n) n!/(c! c^{n−c}) r^n (n >= c)
    lam, mu = 0.02, 0.3
    r = lam / mu
    w = []
    for n in range(machines + 1):
        if n <= crews:
            w.append(math.comb(machines, n) * r**n)
        else:
            w.append(
                math.comb(machines, n)
                * math.factorial(n)
                / (math.factorial(crews) * crews ** (n - crews))
                * r**n
            )
    p = np.array(w) / sum(w)
    res = machine_repair_queue(machines, crews, lam, mu)
    assert_allclose(res.probabilities, p, rtol=1e-11)
    # Little's law: W = W_q + 1/μ
    assert res.mean_down_time_h == pytest.approx(res.mean_wait_h + 1 / mu, rel=1e-10)


def test_enough_crews_gives_independent_machines() -> None:
    # c >= N: each machine alternates independently; machines down ~ Binomial(N, λ/(λ+μ))
    lam, mu, n = 0.01, 0.2, 6
    res = machine_repair_queue(n, n, lam, mu)
    assert_allclose(
        res.probabilities, stats.binom.pmf(range(n + 1), n, lam / (lam + mu)), atol=1e-14
    )
    a = mu / (lam + mu)
    for need in range(n + 1):
        assert res.group_availability(need) == pytest.approx(
            k_out_of_n_reliability(need, n, a), abs=1e-13
        )


def test_bad_inputs() -> None:
    with pytest.raises(InputError):
        k_out_of_n_reliability(4, 3, 0.9)
    with pytest.raises(InputError):
        k_out_of_n_reliability(2, 3, 1.2)
    with pytest.raises(InputError):
        k_out_of_n_reliability_mixed(1, [])
    with pytest.raises(InputError):
        machine_repair_queue(3, 0, 0.1, 1.0)
    with pytest.raises(InputError):
        machine_repair_queue(3, 1, 0.0, 1.0)
    with pytest.raises(InputError):
        machine_repair_queue(3, 1, 0.1, 1.0).group_availability(4)
