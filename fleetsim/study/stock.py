"""Stock advice that holds: reorder levels sized by simulation of the variant they serve.

Palm's theorem (:mod:`fleetsim.plan.spares`) assumes one-at-a-time Poisson
demand. Block replacement asks for a whole batch at once, and age
replacement spread over units is more regular than Poisson, so a level sized
by the formula alone can fall far short or waste stock. Here the formula only
gives the starting point:

1. **Start.** Demand splits into the planned batches of block replacement
   (b bearings at every block) and the rest, taken as Poisson at the
   simulated rate λ: the start is the order-up-to level S = b + S_Palm(λ, L)
   with S_Palm the smallest base stock whose fill rate meets the target —
   a compound-Poisson estimate in its simplest form (batches fully stocked,
   Feeney & Sherbrooke 1966 for the Poisson rest). The order quantity
   Q = S − s of the scenario is kept (at least one), so s = S − Q.
2. **Adjust by simulation.** The variant is simulated with every stocked
   bearing at its level (shelf full at the start). A bearing whose simulated
   fill rate is below the target goes up one level; one at or above it is
   tried lower, by steps that double (1, 2, 4, ...) and then by bisection,
   until the lowest level that meets the target is found next to one that
   does not (or the round budget is spent).
3. **Confirm.** The variant is simulated once more with every bearing at its
   advised level; that run's fill rate, with its interval, is what is
   reported beside the target.

The simulated fill rate is the share of all demands met from the shelf at
once, pooled over replications: a ratio estimator Σ met / Σ demands with its
standard error by the delta method (Cochran, *Sampling Techniques*, 3rd ed.,
1977, §6.4), so replications without demand do not count as "filled".
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from scipy import stats

from fleetsim.plan.spares import base_stock_for_fill_rate
from fleetsim.scenario.model import HOURS_PER_YEAR, Scenario, Stock
from fleetsim.study.result import StudyResult
from fleetsim.study.summary import Estimate

#: Fill-rate target of the advice (spare-parts practice: 90–95 %, common practice).
DEFAULT_TARGET = 0.95
#: Simulation rounds of the adjustment (each simulates the variant once).
MAX_ROUNDS = 12

Simulate = Callable[[Scenario], StudyResult]


@dataclass(frozen=True)
class SimulatedStock:
    """Advised reorder levels of one bearing, with the simulated fill rate that backs them.

    Attributes
    ----------
    bearing
        Bearing id.
    reorder_point, order_up_to
        s and S to set (S is also the stock to start with).
    target_fill_rate
        The target share of demands met from the shelf.
    simulated_fill_rate
        Pooled fill rate of the confirming simulation, with its 95 % interval.
    sized_for_variant
        The variant whose demand the levels were sized on.
    start_reorder_point, start_order_up_to
        The closed-form start (planned batches + Palm).
    current_reorder_point, current_order_up_to
        The scenario's levels.
    demand_per_year
        Simulated spares issued per year (today's levels).
    batch
        Largest planned batch (block replacement) of this bearing, units.
    spare_wait_h_per_year
        Fleet unit-hours a year waiting for any spare in the confirming run.
    settled
        True when the level is the lowest meeting the target next to one that
        does not; False when the round budget ran out first.
    """

    bearing: str
    reorder_point: int
    order_up_to: int
    target_fill_rate: float
    simulated_fill_rate: Estimate
    sized_for_variant: str
    start_reorder_point: int
    start_order_up_to: int
    current_reorder_point: int
    current_order_up_to: int
    demand_per_year: float
    batch: int
    spare_wait_h_per_year: float
    settled: bool

    def as_dict(self) -> dict[str, object]:
        """The JSON record (``stock_advice`` entries of ``summary.json``)."""
        f = self.simulated_fill_rate
        return {
            "bearing": self.bearing,
            "reorder_point": self.reorder_point,
            "order_up_to": self.order_up_to,
            "target_fill_rate": self.target_fill_rate,
            "simulated_fill_rate": {"mean": f.mean, "ci_low": f.low, "ci_high": f.high},
            "sized_for_variant": self.sized_for_variant,
            "start": {"reorder_point": self.start_reorder_point,
                      "order_up_to": self.start_order_up_to,
                      "method": "planned batches + Palm's theorem on the rest"},
            "current": {"reorder_point": self.current_reorder_point,
                        "order_up_to": self.current_order_up_to},
            "demand_per_year": self.demand_per_year,
            "planned_batch": self.batch,
            "spare_wait_h_per_year": self.spare_wait_h_per_year,
            "settled": self.settled,
        }


def pooled_fill_rate(result: StudyResult, bearing: str, confidence: float = 0.95) -> Estimate:
    """Share of all demands for ``bearing`` met from the shelf, pooled over replications.

    Ratio estimator Σ f_r·d_r / Σ d_r with d_r the spares issued in
    replication r and f_r its fill rate; interval from the delta-method
    standard error (module docstring); when every demand was met, the exact
    binomial bound instead. No demand at all gives 1 with no interval.
    """
    d = result.figure(f"spares_issued:{bearing}").to_numpy(dtype=float)
    met = result.figure(f"fill_rate:{bearing}").to_numpy(dtype=float) * d
    n = d.size
    total = d.sum()
    if total <= 0:
        return Estimate(1.0, math.nan, math.nan, math.nan, n)
    ratio = float(met.sum() / total)
    if met.sum() >= total:
        # Every demand met: the delta-method interval has zero width. Give the exact
        # binomial bound for N demands all met instead, ((1 − c)/2)^(1/N) (Clopper &
        # Pearson 1934), counting demands as independent trials; batch demand makes
        # them less so, so this lower bound is, if anything, optimistic.
        low = float(((1.0 - confidence) / 2.0) ** (1.0 / total))
        return Estimate(1.0, low, 1.0, math.nan, n)
    if n < 2:
        return Estimate(ratio, math.nan, math.nan, math.nan, n)
    resid = met - ratio * d
    sem = float(math.sqrt(np.sum(resid**2) / (n * (n - 1))) / d.mean())
    half = float(stats.t.ppf(0.5 + confidence / 2, n - 1)) * sem
    return Estimate(ratio, max(0.0, ratio - half), min(1.0, ratio + half), sem, n)


def planned_batch(scenario: Scenario, bearing: str) -> int:
    """Largest number of ``bearing`` asked for at one block date (0 without block policies)."""
    batches: dict[tuple[float, str, str], int] = {}
    for m in scenario.machines:
        for p in m.positions:
            if p.bearing_id != bearing or p.policy.kind != "block" or not p.policy.interval_h:
                continue
            scope = "" if p.policy.block_scope == "machine" else p.id
            key = (float(p.policy.interval_h), m.id, scope)
            batches[key] = batches.get(key, 0) + 1
    # Units of a machine type share the calendar: all of them are changed at once.
    sizes: dict[float, int] = {}
    for (interval, machine, _scope), k in batches.items():
        sizes[interval] = sizes.get(interval, 0) + k * scenario.machine(machine).count
    return max(sizes.values(), default=0)


def _batch_per_year(scenario: Scenario, bearing: str) -> float:
    out = 0.0
    for m in scenario.machines:
        for p in m.positions:
            if p.bearing_id == bearing and p.policy.kind == "block" and p.policy.interval_h:
                blocks = math.floor(scenario.study.horizon_h / p.policy.interval_h - 1e-9)
                out += m.count * blocks / (scenario.study.horizon_h / HOURS_PER_YEAR)
    return out


def _with_levels(scenario: Scenario, levels: dict[str, tuple[int, int]]) -> Scenario:
    stores = dict(scenario.stores)
    for b, (s, big_s) in levels.items():
        stores[b] = dataclasses.replace(stores[b], initial=big_s, reorder_point=s,
                                        order_up_to=big_s)
    return dataclasses.replace(scenario, stores=stores)


def start_levels(result: StudyResult, target: float = DEFAULT_TARGET) -> dict[str, tuple[int, int]]:
    """The closed-form start (s, S) of every stocked bearing (step 1 of the module docstring)."""
    sc = result.scenario
    out = {}
    for b, stock in sc.stores.items():
        col = f"spares_per_year:{b}"
        if col not in result.replications:
            continue
        batch = planned_batch(sc, b)
        rest = max(0.0, float(result.replications[col].mean()) - _batch_per_year(sc, b))
        palm = (int(base_stock_for_fill_rate(rest / HOURS_PER_YEAR, stock.lead_time.mean_h,
                                             target).base_stock) if rest > 0 else 0)
        q = _batch(stock)
        big_s = max(batch + palm, q - 1)
        out[b] = (big_s - q, big_s)
    return out


def _batch(stock: Stock) -> int:
    return max(1, stock.order_up_to - stock.reorder_point)


def _next_level(good: int | None, bad: int | None, lowest: int, step: int = 1) -> int | None:
    """The next order-up-to level to try, or None when settled at ``good``.

    Settled: ``good`` meets the target and the level below misses it (or is
    below ``lowest``). Otherwise bisect between the two when both are known,
    else step away from the known one by ``step`` (doubled by the caller on
    every step in the same direction: an exponential search).
    """
    if good is not None and (good - 1 < lowest or (bad is not None and bad >= good - 1)):
        return None
    if good is not None and bad is not None:
        return (good + bad) // 2
    if good is not None:
        return max(lowest, good - step)
    assert bad is not None
    return bad + step


def advise_stock(result: StudyResult, simulate: Simulate, *, target: float = DEFAULT_TARGET,
                 max_rounds: int = MAX_ROUNDS) -> list[SimulatedStock]:
    """Reorder levels of every stocked bearing of ``result``'s variant, backed by simulation.

    Parameters
    ----------
    result
        The (budget-view) study of the variant to size for: its demand gives the start.
    simulate
        Runs a scenario on the study's seed and replications, e.g.
        ``lambda sc: run_study(sc, replications=n, seed=s, keep_events=False)``.
    target
        Fill-rate target.
    max_rounds
        Simulation rounds of the adjustment.

    Returns
    -------
    list of SimulatedStock
        One per stocked bearing with demand figures, in the scenario's order.
    """
    sc = result.scenario
    levels = start_levels(result, target)
    if not levels:
        return []
    start = dict(levels)
    batch = {b: big_s - s for b, (s, big_s) in levels.items()}
    good: dict[str, int] = {}   # lowest S known to meet the target
    bad: dict[str, int] = {}    # highest S known to miss it
    step = dict.fromkeys(levels, 1)
    for _round in range(max_rounds):
        run = simulate(_with_levels(sc, levels))
        moved = False
        for b, (_s, big_s) in levels.items():
            if pooled_fill_rate(run, b).mean >= target:
                good[b] = min(good.get(b, big_s), big_s)
            else:
                bad[b] = max(bad.get(b, big_s), big_s)
            nxt = _next_level(good.get(b), bad.get(b), batch[b] - 1, step[b])
            step[b] *= 2
            if nxt is not None and nxt != big_s:
                levels[b] = (nxt - batch[b], nxt)
                moved = True
        if not moved:
            break
    final = {b: (good[b] - batch[b], good[b]) if b in good else levels[b] for b in levels}
    confirm = simulate(_with_levels(sc, final))
    wait = float(confirm.figure("downtime_spares_h").mean()) / confirm.horizon_years
    out = []
    for b, (s, big_s) in final.items():
        stock = sc.stores[b]
        settled = _next_level(good.get(b), bad.get(b), batch[b] - 1) is None
        out.append(SimulatedStock(
            bearing=b, reorder_point=s, order_up_to=big_s, target_fill_rate=target,
            simulated_fill_rate=pooled_fill_rate(confirm, b), sized_for_variant=result.label,
            start_reorder_point=start[b][0], start_order_up_to=start[b][1],
            current_reorder_point=stock.reorder_point, current_order_up_to=stock.order_up_to,
            demand_per_year=float(result.replications[f"spares_per_year:{b}"].mean()),
            batch=planned_batch(sc, b), spare_wait_h_per_year=wait, settled=settled,
        ))
    return out
