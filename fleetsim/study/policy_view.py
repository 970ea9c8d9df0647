"""The policy view of cost: a long-run rate free of end-of-horizon effects.

A study from today's fleet over a horizon (the *budget view*) answers "what
will the plant spend"; it is a poor judge of policies, because a fleet that is
not renewed near the end of the horizon leaves its debt beyond it, which
rewards deferring replacement. The *policy view* estimates instead the
long-run cost per year of running the policy for ever, by simulation:

* **Stationary start.** Every position starts from the stationary
  (equilibrium) age distribution of its own renewal process: with
  inter-renewal times of survival R_c, the age of the item in service at a
  random time has density R_c(a)/E[cycle] (Cox, *Renewal Theory*, 1962, §5.2;
  Ross, *Stochastic Processes*, 2nd ed., 1996, §3.4: the equilibrium
  distribution). Under age replacement at T the cycle is min(life, T), so the
  age has density R(a)/∫₀ᵀR on [0, T); under run to failure R(a)/μ. The
  bearing in service then draws its life conditional on that age, so for
  independent positions the renewal process is stationary from time zero
  (the *equilibrium renewal process*, whose expected count is exactly t/μ_c)
  and cost/horizon is an unbiased estimate of the renewal-reward rate
  C(T) for any horizon. Block-replaced positions start new just after a
  block, which is a regeneration point of theirs.
* **Warm-up (replication/deletion).** What does not start stationary (stock
  on hand, open orders, crew queues, the P-F window of a condition-monitored
  bearing, opportunistic coupling; block positions, whose phase the engines
  start at zero) is let settle for a warm-up period W, and only the window
  (W, W + H] is counted (Law & Kelton, *Simulation Modeling and Analysis*,
  3rd ed., 2000, §9.5.1, the replication/deletion approach). The window is
  the difference of two runs of the same replication seed, to W and to
  W + H: the engines' draws are keyed by purpose, so the shorter run is the
  prefix of the longer one. Block intervals: W and H are whole numbers of
  the (longest) block interval, so the window holds whole blocks.
* **Undiscounted.** The policy view is the long-run *average* cost per year
  (the renewal-reward criterion of Barlow & Proschan); a discount rate, if
  any, applies to the budget view only.

Each replication draws its starting ages from its own stream (a child of the
replication seed that no engine stream uses), by inverse transform of the same
uniforms in every variant, so variants stay on common random numbers.
"""

from __future__ import annotations

import dataclasses
import functools
import math
import time
from typing import Any

import numpy as np

from fleetsim.bounds import MAX_TIME_H
from fleetsim.errors import InputError
from fleetsim.life import LifeDistribution
from fleetsim.plan.lifelike import integrated_reliability
from fleetsim.scenario.model import HOURS_PER_YEAR, Machine, Policy, Scenario
from fleetsim.study.cluster import DaskCluster
from fleetsim.study.engines import choose_engine, replicate
from fleetsim.study.figures import YEAR_FAMILIES, split, unit_of
from fleetsim.study.result import StudyResult
from fleetsim.study.runner import Progress, run_replications

#: Spawn-key element of the starting-age stream, below the replication's key.
AGE_STREAM = 0x51A7
#: Warm-up of a coupled fleet: at least a year and four of the longest lead time
#: (common practice: a few lead times let stock and orders forget their start).
WARMUP_MIN_H = HOURS_PER_YEAR
WARMUP_LEAD_TIMES = 4.0
_GRID = 4001
_TAIL = 1e-12

#: Figures that add up over time (differences of two runs give the window's).
_ADDITIVE_UNITS = ("count", "unit-hours", "currency")
#: Figures that cannot be taken over a window of a longer run: left out of the policy view.
_NOT_WINDOWED = ("fleet_down", "fleet_first_down_h", "group_down", "group_first_down_h",
                 "fill_rate", *YEAR_FAMILIES)  # the year-by-year plan is the budget view's


@dataclasses.dataclass(frozen=True)
class PolicyWindow:
    """Warm-up and counted window of the policy view, hours (calendar)."""

    warmup_h: float
    horizon_h: float
    exact: bool
    reason: str


def equilibrium_ages(life: LifeDistribution, policy: Policy, u: np.ndarray) -> np.ndarray:
    """Starting ages (operating hours) drawn from the stationary age distribution.

    Parameters
    ----------
    life
        Life distribution of the position (operating hours).
    policy
        Its policy: age replacement at T gives the density R(a)/∫₀ᵀR on [0, T);
        block gives age 0 (just after a block); run to failure and condition
        R(a)/μ (for condition monitoring an approximation: the cycle ends a
        little after the defect, within the P-F window).
    u
        Uniforms in [0, 1), any shape.

    Returns
    -------
    numpy.ndarray
        Ages shaped like ``u``.
    """
    u = np.asarray(u, dtype=float)
    if policy.kind == "block":
        return np.zeros_like(u)
    top = float(policy.interval_h) if policy.kind == "age" and policy.interval_h else None
    grid, cum = _age_grid(life, top)
    return np.interp(u * cum[-1], cum, grid)


@functools.lru_cache(maxsize=256)
def _age_grid(life: LifeDistribution, top_h: float | None) -> tuple[np.ndarray, np.ndarray]:
    """Ages on [0, top] (None: the life's 1 − 1e-12 quantile) and ∫₀ᵃ R at each: the
    inverse-transform table of :func:`equilibrium_ages`, made once per life and interval
    in a process (every replication of a variant draws from the same one)."""
    top = float(life.ppf(1.0 - _TAIL)) if top_h is None else top_h
    grid = np.linspace(0.0, top, _GRID)
    if life.location_h < top:  # the bend of R at the location is a grid point
        grid = np.unique(np.append(grid, life.location_h))
    cum = np.asarray(integrated_reliability(life, grid), dtype=float)
    grid.flags.writeable = False
    cum.flags.writeable = False
    return grid, cum


def stationary_scenario(scenario: Scenario, rng: np.random.Generator) -> Scenario:
    """``scenario`` with every position at an age drawn from its stationary distribution.

    The draw is one uniform per position of every unit, machine by machine in
    order, whatever the policies: two variants given the same generator get
    the same uniforms (common random numbers).
    """
    machines: list[Machine] = []
    for m in scenario.machines:
        u = rng.random((m.count, len(m.positions)))
        ages = np.empty_like(u)
        for j, p in enumerate(m.positions):
            ages[:, j] = equilibrium_ages(p.life, p.policy, u[:, j])
        machines.append(dataclasses.replace(
            m, position_ages_h=tuple(map(tuple, ages.tolist())),  # Python floats, row by row
            ages_source="stationary ages (policy view)"))
    costs = dataclasses.replace(scenario.costs, discount_rate_per_year=0.0)
    return dataclasses.replace(scenario, machines=tuple(machines), costs=costs)


def _lead_times_h(scenario: Scenario) -> list[float]:
    out = []
    for stock in scenario.stores.values():
        out.append(stock.lead_time.mean_h)
        if stock.emergency_lead_time is not None:
            out.append(stock.emergency_lead_time.mean_h)
    return out


def policy_window(scenario: Scenario, horizon_h: float | None = None) -> PolicyWindow:
    """Warm-up and window of the policy view for ``scenario``.

    No warm-up when every position is an independent age-replaced or
    run-to-failure renewal process (the stationary start is exact); otherwise
    ``max(1 year, 4 × the longest lead time)``. With block policies both are
    rounded to whole numbers of the longest block interval (at least one).
    """
    horizon = scenario.study.horizon_h if horizon_h is None else float(horizon_h)
    if not horizon > 0:
        raise InputError("horizon", f"expected a horizon > 0, got {horizon} h")
    positions = [p for m in scenario.machines for p in m.positions]
    policies = [p.policy for p in positions]
    blocks = [float(p.interval_h) for p in policies if p.kind == "block" and p.interval_h]
    # the P-F interval belongs to the position: with one, the life to F is not the life model
    renewal_only = all(p.policy.kind in ("age", "run-to-failure")
                       and p.policy.opportunistic_share is None and p.pf_interval is None
                       for p in positions if p.policy.kind != "block")
    coupled = (not scenario.independent_positions
               or bool(scenario.holding_groups))
    if renewal_only and not coupled:
        warmup, reason = 0.0, "independent renewal processes start stationary: no warm-up"
    else:
        warmup = max(WARMUP_MIN_H, WARMUP_LEAD_TIMES * max(_lead_times_h(scenario), default=0.0))
        why = "stores, crews or groups couple the positions" if coupled else (
            "condition monitoring or opportunistic changes do not start stationary")
        reason = f"{why}: warm-up {warmup / HOURS_PER_YEAR:.3g} years deleted"
    exact = renewal_only and not coupled
    if blocks:
        t_b = max(blocks)
        warmup = t_b * max(1, math.ceil(warmup / t_b - 1e-9))
        blocks_in = max(1, round(horizon / t_b))
        if blocks_in * t_b > MAX_TIME_H:  # within the horizon's bound (t_b is within it)
            blocks_in = max(1, math.floor(MAX_TIME_H / t_b))
        horizon = t_b * blocks_in
        exact = exact and len(set(blocks)) == 1
        reason += (f"; block positions start new after a block, warm-up and window are "
                   f"whole blocks of {t_b:,.0f} h")
    return PolicyWindow(warmup, horizon, exact, reason)


def _age_seed(seed: np.random.SeedSequence) -> np.random.SeedSequence:
    return np.random.SeedSequence(seed.entropy, spawn_key=(*seed.spawn_key, AGE_STREAM))


def window_figures(to_warmup: dict[str, float], to_end: dict[str, float], scenario: Scenario,
                   horizon_h: float) -> dict[str, float]:
    """Figures of the window (W, W + H] from runs to W and to W + H on the same seed.

    Additive figures (counts, unit-hours, money) are differences; rates and
    availabilities are recomputed over the window; first-down times, down
    events and fill rates, which a window of a longer run cannot give, are
    left out.
    """
    out: dict[str, float] = {}
    for col, end in to_end.items():
        prefix, _key = split(col)
        if prefix in _NOT_WINDOWED:
            continue
        try:
            unit = unit_of(col)
        except KeyError:
            continue
        if unit in _ADDITIVE_UNITS or prefix == "group_downtime_h":
            out[col] = float(end) - float(to_warmup.get(col, 0.0))
    return finish_window(out, scenario, horizon_h)


def finish_window(out: dict[str, float], scenario: Scenario, horizon_h: float) -> dict[str, float]:
    """Add the per-year and availability figures of a window to its additive figures."""
    years = horizon_h / HOURS_PER_YEAR
    n_units = sum(m.count for m in scenario.machines)
    out["cost_per_year"] = out["cost_total"] / years
    out["availability"] = 1.0 - out["downtime_h"] / (n_units * horizon_h)
    for m in scenario.machines:
        if f"downtime_h:{m.id}" in out:
            out[f"availability:{m.id}"] = 1.0 - out[f"downtime_h:{m.id}"] / (m.count * horizon_h)
    for b in scenario.bearings:
        if f"spares_issued:{b}" in out:
            out[f"spares_per_year:{b}"] = out[f"spares_issued:{b}"] / years
    return out


def policy_replicate(payload: tuple[Scenario, str, float, float],
                     seed: np.random.SeedSequence) -> dict[str, float]:
    """One replication of the policy view. ``payload`` is ``(scenario, engine, warmup_h, horizon_h)``.

    A module-level function so that process pools and Dask can ship it.
    """
    scenario, engine, warmup_h, horizon_h = payload
    start = stationary_scenario(scenario, np.random.default_rng(_age_seed(seed)))
    to_end = replicate((start, engine, warmup_h + horizon_h), seed)  # type: ignore[arg-type]
    if warmup_h <= 0:
        out = {c: v for c, v in to_end.items() if split(c)[0] not in _NOT_WINDOWED}
        return finish_window(out, start, horizon_h)
    to_warmup = replicate((start, engine, warmup_h), seed)  # type: ignore[arg-type]
    return window_figures(to_warmup, to_end, start, horizon_h)


def run_policy_view(
    scenario: Scenario,
    *,
    replications: int | None = None,
    seed: int | None = None,
    engine: str | None = None,
    workers: int = 1,
    cluster: str | DaskCluster | None = None,
    progress: Progress | None = None,
    horizon_h: float | None = None,
    label: str = "",
    start: int = 0,
) -> StudyResult:
    """Simulate the policy view of ``scenario`` (see the module docstring).

    Parameters are those of :func:`fleetsim.study.run_study` (``start``: run
    only replications ``start`` to ``replications − 1``, to extend a view). The result's
    scenario carries the window as its horizon, its ``view`` is
    ``"policy"`` and its ``notes`` say how the window was chosen.
    """
    reps = scenario.study.replications if replications is None else replications
    s = scenario.study.seed if seed is None else seed
    window = policy_window(scenario, horizon_h)
    chosen, _why = choose_engine(scenario, engine)
    started = time.perf_counter()
    table = run_replications(
        policy_replicate, (scenario, chosen, window.warmup_h, window.horizon_h),
        replications=reps, seed=s, workers=workers, cluster=cluster, progress=progress,
        start=start,
    )
    shown = dataclasses.replace(scenario, study=dataclasses.replace(
        scenario.study, horizon_h=window.horizon_h))
    return StudyResult(
        scenario=shown, replications=table, seed=s, engine=chosen,
        elapsed_s=time.perf_counter() - started, workers=workers,
        label=label or scenario.study.name, view="policy",
        notes=(window.reason,),
    )


def describe(window: PolicyWindow) -> dict[str, Any]:
    """The window as plain data for reports."""
    return {"warmup_h": window.warmup_h, "horizon_h": window.horizon_h,
            "exact_for_independent_positions": window.exact, "method": window.reason}
