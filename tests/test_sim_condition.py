"""Condition monitoring in the engine: the delay-time model and its limits.

Fixed seeds; tolerances of Z = 4 binomial standard errors (see
tests/test_sim_closed_forms.py for the choice of Z).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import integrate

from fleetsim.life import LifeDistribution
from fleetsim.scenario.model import (
    Bearing,
    Costs,
    Crews,
    Duration,
    Machine,
    Policy,
    Position,
    Scenario,
    Study,
)
from fleetsim.sim import simulate

Z = 4.0
B = "FB-1"
LIFE = LifeDistribution(shape=1.5, scale_h=3_000.0, location_h=200.0)


def fleet(policy: Policy, *, units: int, positions: int, horizon: float, life=LIFE,
          pf: Duration | None = None) -> Scenario:
    pos = tuple(Position(f"p{j}", B, life, policy, pf_interval=pf) for j in range(positions))
    return Scenario(
        study=Study("condition", horizon, 1, 0),
        costs=Costs(inspection=10.0),
        bearings={B: Bearing(B, "ball", 10_000.0)},
        machines=(Machine("M", units, 1.0, 0.0, pos),),
        crews=Crews(None, Duration.fixed(0.0), Duration.fixed(0.0)),
    )


def failure_share(pf: Duration, every_h: float, detection: float) -> float:
    """Share of defects that become failures, inspections every Δ, detection probability p.

    Christer's delay-time model: a defect arising at a uniformly distributed time
    within an inspection interval, with delay h ~ F_h to failure, fails before a
    perfect inspection with probability b(Δ) = (1/Δ)∫₀^Δ F_h(Δ − y) dy.

    Imperfect inspection (each inspection inside the window finds the defect with
    probability p, independently): let s = Δ − y ~ U(0, Δ) be the time from the
    defect to the next inspection. The inspections inside the window are at
    s, s + Δ, s + 2Δ, ... before h; the defect fails iff all of them miss, so
    P(fail | s, h) = (1 − p)^N with N = #{n ≥ 0 : s + nΔ < h}. Summing by parts,
    (1 − p)^N = 1 − p Σ_{n≥0} (1 − p)^n·1{s + nΔ < h}, and averaging over s and h,

        b_p(Δ) = 1 − p Σ_{n≥0} (1 − p)^n (1/Δ) ∫_{nΔ}^{(n+1)Δ} S_h(t) dt,

    with S_h = 1 − F_h; for p = 1 only n = 0 remains and b_1 = (1/Δ)∫₀^Δ F_h.
    """
    total, n, weight = 0.0, 0, 1.0
    while weight > 1e-12 and n < 10_000:
        chunk = integrate.quad(lambda t: 1.0 - pf.cdf(t), n * every_h, (n + 1) * every_h)[0]
        total += weight * chunk / every_h
        weight *= 1.0 - detection
        n += 1
        if chunk < 1e-14 * every_h:
            break
    return 1.0 - detection * total


@pytest.mark.parametrize(
    ("pf", "detection"),
    [
        (Duration("exponential", 100.0), 1.0),
        (Duration("weibull", 150.0, shape=2.0), 1.0),
        (Duration("exponential", 100.0), 0.6),
        (Duration("weibull", 150.0, shape=2.0), 0.6),
    ],
)
def test_share_of_defects_that_fail_follows_the_delay_time_model(pf: Duration, detection: float) -> None:
    """The delay-time formula needs the defect's arrival uniform within the inspection
    interval. Exponential arrivals with a mean much longer than Δ approximate that;
    here lives uniform on (0, 2Δ) make it exact: (φ + X) mod Δ is uniform for any
    fitting time φ, so every defect's phase is uniform and independent."""
    every = 100.0
    rng = np.random.default_rng(np.random.SeedSequence(2024))

    def uniform_life(unit: str, position: str, k: int) -> float:
        return float(rng.uniform(0.0, 2.0 * every))

    policy = Policy("condition", inspection_every_h=every, detection=detection)
    sc = fleet(policy, units=4, positions=25, horizon=30_000.0, pf=pf)
    r = simulate(sc, np.random.SeedSequence(7), keep_events=False, life_sampler=uniform_life)
    fails, found = r.counts["failures"], r.counts["detections"]
    n = fails + found
    assert n > 15_000
    ref = failure_share(pf, every, detection)
    share = fails / n
    assert abs(share - ref) <= Z * math.sqrt(ref * (1 - ref) / n), (share, ref)
    assert r.counts["missed_defects"] == fails  # no failure after a detection: respond in 0 h


def test_failure_share_reference_is_the_closed_form_for_exponential_delay() -> None:
    # Exponential delay with mean m and perfect inspection: b = 1 − (m/Δ)(1 − e^{−Δ/m}).
    m, every = 100.0, 250.0
    assert failure_share(Duration("exponential", m), every, 1.0) == pytest.approx(
        1 - m / every * (1 - math.exp(-every / m)), rel=1e-9)
    # No detection at all: every defect fails.
    assert failure_share(Duration("exponential", m), every, 0.0) == pytest.approx(1.0)


def _failures(result) -> list[tuple[float, str, str, str]]:
    return [e for e in result.event_log() if e[3] == "failure"]


def test_run_to_failure_is_the_limit_of_blind_or_absent_inspection() -> None:
    """Same seed, same lives and P-F intervals: with detection probability 0, or an
    inspection interval beyond the horizon, the failures are exactly those of
    run-to-failure."""
    pf = Duration("lognormal", 500.0, 1500.0)
    horizon = 60_000.0
    rtf = fleet(Policy("run-to-failure"), units=3, positions=4, horizon=horizon, pf=pf)
    blind = fleet(Policy("condition", inspection_every_h=200.0, detection=0.0),
                  units=3, positions=4, horizon=horizon, pf=pf)
    never = fleet(Policy("condition", inspection_every_h=8_766_000.0, detection=0.9),
                  units=3, positions=4, horizon=horizon, pf=pf)
    seed = np.random.SeedSequence(99)
    base = simulate(rtf, seed)
    assert len(_failures(base)) > 30
    for other in (blind, never):
        r = simulate(other, seed)
        assert _failures(r) == _failures(base)
        assert r.counts["detections"] == 0 and r.counts["planned"] == 0
    # The blind inspections still cost money.
    r = simulate(blind, seed)
    assert r.counts["inspections"] > 0
    assert r.costs["inspection"] == 10.0 * r.counts["inspections"]


def test_monitoring_prevents_failures_on_the_same_lives() -> None:
    """With a good technology (P-F 600 h, inspection every 150 h, p = 0.9) most defects
    are found, on the same seed, and the defects themselves are unchanged until the
    first replacement differs."""
    pf = Duration.fixed(600.0)
    horizon = 60_000.0
    rtf = fleet(Policy("run-to-failure"), units=3, positions=4, horizon=horizon, pf=pf)
    cbm = fleet(Policy("condition", inspection_every_h=150.0, detection=0.9),
                units=3, positions=4, horizon=horizon, pf=pf)
    seed = np.random.SeedSequence(5)
    a, b = simulate(rtf, seed), simulate(cbm, seed)
    # Every window holds at least 3 inspections (600 h / 150 h), so a defect is
    # missed only if all of them miss: share ≤ 0.1³ = 0.001.
    assert b.counts["failures"] <= 2 and b.counts["detections"] >= a.counts["failures"] - 5
    first = lambda r: [e for e in r.event_log() if e[3] == "defect"][0]  # noqa: E731
    assert first(a) == first(b)
