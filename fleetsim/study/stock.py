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
   bearing at its level (shelf full at the start). A level *meets* the
   target when the lower bound of the 95 % interval of its simulated fill
   rate is at or above the target, and *misses* it when the upper bound is
   below. When an interval straddles the target, replications are added on
   the same seeds (common random numbers), doubling the count, up to a
   replication budget; a level still undecided then counts as missing —
   unless every simulated demand was met (more stock cannot show more), in
   which case it is kept and said to be *not shown* to meet the target.
   A bearing that misses goes up a level; one that meets is tried lower, by
   steps that double (1, 2, 4, ...) and then by bisection, until the lowest
   level that meets the target is found next to one that does not (or the
   round budget is spent).
3. **Confirm.** The advised levels' run (with its added replications) is
   what is reported: the fill rate with its interval, the target, whether
   the interval shows the target met, and at how many replications.
4. **Ordering ahead.** A bearing with planned demand (age or block
   replacement in the variant) is sized twice: with the scenario's stores
   as (s, S) alone, and with ``order_ahead`` (planned changes ordered one
   lead time ahead, :mod:`fleetsim.sim.stores`), which starts from Palm's
   level on the unplanned rest. Both meet the target; the advice keeps the
   one with the lower simulated cost per year of the variant (holding,
   parts, waiting for spares and all; mean over the replications both runs
   share, on common random numbers; a tie keeps the scenario's own
   setting) for all those bearings together, says which one it assumes, and
   reports the other beside it. Ordering ahead needs less stock for the same fill rate, but
   the fill rate counts planned demand, which its own spare meets: the
   failures left to the smaller stock may wait longer, and the cost says
   which way that nets out (the fill rate compared with the target is that of the
   demand the stock serves, see below).

The simulated fill rate is the share of the demands the (s, S) stock serves
that it meets from the shelf at once (without ordering ahead: all demands;
with it, planned changes met by their own spare are left out, so a stock
sized to the target serves the failures that well), pooled over replications: a ratio estimator Σ met / Σ demands with its
standard error by the delta method (Cochran, *Sampling Techniques*, 3rd ed.,
1977, §6.4), so replications without demand do not count as "filled".
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

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
#: Replication budget of one level, as a multiple of the study's replications.
BUDGET_FACTOR = 8

#: ``simulate(scenario, start, stop)``: replications ``start`` to ``stop − 1`` of
#: ``scenario`` on the study's seed (replication i always has the same seed).
Simulate = Callable[[Scenario, int, int], StudyResult]


def study_simulator(seed: int, *, engine: str | None = None, workers: int = 1, cluster: Any = None,
                    label: str = "") -> Simulate:
    """A :data:`Simulate` running :func:`fleetsim.study.run_study` on ``seed``."""
    from fleetsim.study.study import run_study

    def simulate(sc: Scenario, start: int, stop: int) -> StudyResult:
        return run_study(sc, replications=stop, seed=seed, engine=engine, workers=workers,
                         cluster=cluster, keep_events=False, label=label, start=start)

    return simulate


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
    target_shown_met
        True when the lower bound of the fill rate's interval is at or above
        the target; False when the replication budget was spent first.
    replications
        Replications behind ``simulated_fill_rate``.
    order_ahead
        True when the levels assume planned changes ordered ahead
        (``order_ahead = true`` in the bearing's stores).
    planned_demand
        True when the variant has age or block replacement on this bearing.
    alternative
        The advice with ``order_ahead`` the other way (bearings with planned
        demand), or None.
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
    target_shown_met: bool = True
    replications: int = 0
    order_ahead: bool = False
    planned_demand: bool = False
    alternative: SimulatedStock | None = None

    def as_dict(self) -> dict[str, object]:
        """The JSON record (``stock_advice`` entries of ``summary.json``)."""
        out = self._record()
        if self.alternative is not None:
            out["alternative"] = self.alternative._record()
        return out

    def _record(self) -> dict[str, Any]:
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
            "target_shown_met": self.target_shown_met,
            "replications": self.replications,
            "order_ahead": self.order_ahead,
            "planned_demand": self.planned_demand,
            "view": "budget",
        }


def pooled_fill_rate(result: StudyResult, bearing: str, confidence: float = 0.95, *,
                     stock: bool = False) -> Estimate:
    """Share of all demands for ``bearing`` met from the shelf, pooled over replications.

    Ratio estimator Σ f_r·d_r / Σ d_r with d_r the spares issued in
    replication r and f_r its fill rate; interval from the delta-method
    standard error (module docstring); when every demand was met, the exact
    binomial bound instead. No demand at all gives 1 with no interval. With
    ``stock``, only the demands the (s, S) stock serves (planned changes met
    by their own spare ordered ahead left out; the same without ordering ahead).
    """
    if stock and f"stock_demands:{bearing}" in result.replications:
        d = result.figure(f"stock_demands:{bearing}").to_numpy(dtype=float)
        met = result.figure(f"stock_fill_rate:{bearing}").to_numpy(dtype=float) * d
    else:
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


def has_planned_demand(scenario: Scenario, bearing: str) -> bool:
    """True when some position of ``bearing`` is age- or block-replaced (known in advance)."""
    return any(p.bearing_id == bearing and p.policy.kind in ("age", "block") and p.policy.interval_h
               for m in scenario.machines for p in m.positions)


def _with_levels(scenario: Scenario, levels: dict[str, tuple[int, int]],
                 ahead: frozenset[str]) -> Scenario:
    stores = dict(scenario.stores)
    for b, (s, big_s) in levels.items():
        stores[b] = dataclasses.replace(stores[b], initial=big_s, reorder_point=s,
                                        order_up_to=big_s, order_ahead=b in ahead)
    return dataclasses.replace(scenario, stores=stores)


def start_levels(result: StudyResult, target: float = DEFAULT_TARGET,
                 ahead: frozenset[str] = frozenset()) -> dict[str, tuple[int, int]]:
    """The closed-form start (s, S) of every stocked bearing (step 1 of the module docstring).

    A bearing in ``ahead`` has its planned changes ordered ahead: its block
    batches need no stock, and Palm's level covers the rest of its demand.
    """
    sc = result.scenario
    out = {}
    for b, stock in sc.stores.items():
        col = f"spares_per_year:{b}"
        if col not in result.replications:
            continue
        batch = 0 if b in ahead else planned_batch(sc, b)
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


MET, MISSED, OPEN = "met", "missed", "open"


def verdict(fill: Estimate, target: float) -> str:
    """``"met"`` when the fill rate's interval lies at or above ``target`` (its lower bound),
    ``"missed"`` when it lies below, ``"open"`` when it straddles the target.

    No demand at all meets any target (nothing was short).
    """
    if fill.n and math.isnan(fill.low) and fill.mean >= 1.0:
        return MET  # no demand simulated
    if fill.low >= target:
        return MET
    if fill.high < target:
        return MISSED
    return OPEN


class _Runs:
    """Simulations of one variant at given levels, extended by replications on demand."""

    def __init__(self, simulate: Simulate, first: int, budget: int) -> None:
        self.simulate = simulate
        self.first = first
        self.budget = max(budget, first)
        self.cache: dict[tuple[tuple[tuple[str, int, int], ...], frozenset[str]], StudyResult] = {}
        self.runs = 0

    def at(self, sc: Scenario, levels: dict[str, tuple[int, int]], ahead: frozenset[str],
           bearings: list[str], target: float) -> StudyResult:
        """The run at ``levels``, with replications added (doubling, up to the budget) while
        the fill rate of one of ``bearings`` is undecided."""
        key = (tuple(sorted((b, s, big_s) for b, (s, big_s) in levels.items())), ahead)
        run = self.cache.get(key)
        scenario = _with_levels(sc, levels, ahead)
        if run is None:
            run = self.simulate(scenario, 0, self.first)
            self.runs += 1
        n = len(run.replications)
        while n < self.budget and any(verdict(pooled_fill_rate(run, b, stock=True), target) == OPEN
                                      for b in bearings):
            more = min(2 * n, self.budget)
            run = run.extended(self.simulate(scenario, n, more))
            self.runs += 1
            n = more
        self.cache[key] = run
        return run


@dataclass
class _Search:
    """The result of one level search (one setting of ``order_ahead``)."""

    levels: dict[str, tuple[int, int]]
    start: dict[str, tuple[int, int]]
    settled: dict[str, bool]
    run: StudyResult
    ahead: frozenset[str]


def _good(fill: Estimate, target: float, at_budget: bool) -> bool:
    v = verdict(fill, target)
    return v == MET or (v == OPEN and at_budget and fill.mean >= 1.0)


def _search(result: StudyResult, runs: _Runs, target: float, max_rounds: int,
            ahead: frozenset[str]) -> _Search | None:
    sc = result.scenario
    levels = start_levels(result, target, ahead)
    if not levels:
        return None
    start = dict(levels)
    batch = {b: big_s - s for b, (s, big_s) in levels.items()}
    bearings = list(levels)
    good: dict[str, int] = {}   # lowest S known to meet the target
    bad: dict[str, int] = {}    # highest S known to miss it
    bad_fill: dict[str, float] = {}  # the fill rate there
    stuck: set[str] = set()     # more stock did not raise the fill rate: stop raising
    step = dict.fromkeys(levels, 1)
    for _round in range(max_rounds):
        run = runs.at(sc, levels, ahead, bearings, target)
        full = len(run.replications) >= runs.budget
        moved = False
        for b, (_s, big_s) in levels.items():
            if b in stuck:
                continue
            fill = pooled_fill_rate(run, b, stock=True)
            if _good(fill, target, full):
                good[b] = min(good.get(b, big_s), big_s)
            else:
                if b in bad and big_s > bad[b] and b not in good and fill.mean <= bad_fill[b]:
                    stuck.add(b)  # e.g. demand a level cannot serve faster than its lead time
                    continue
                if big_s >= bad.get(b, big_s):
                    bad_fill[b] = fill.mean
                bad[b] = max(bad.get(b, big_s), big_s)
            nxt = _next_level(good.get(b), bad.get(b), batch[b] - 1, step[b])
            step[b] *= 2
            if nxt is not None and nxt != big_s:
                levels[b] = (nxt - batch[b], nxt)
                moved = True
        if not moved:
            break
    final = {b: (good[b] - batch[b], good[b]) if b in good else
             (bad[b] - batch[b], bad[b]) if b in stuck else levels[b] for b in levels}
    settled = {b: b not in stuck and _next_level(good.get(b), bad.get(b), batch[b] - 1) is None
               for b in levels}
    return _Search(final, start, settled, runs.at(sc, final, ahead, bearings, target), ahead)


def _advice(result: StudyResult, search: _Search, run: StudyResult, b: str, target: float,
            planned: bool) -> SimulatedStock:
    sc = result.scenario
    stock = sc.stores[b]
    s, big_s = search.levels[b]
    fill = pooled_fill_rate(run, b, stock=True)
    wait = float(run.figure("downtime_spares_h").mean()) / run.horizon_years
    return SimulatedStock(
        bearing=b, reorder_point=s, order_up_to=big_s, target_fill_rate=target,
        simulated_fill_rate=fill, sized_for_variant=result.label,
        start_reorder_point=search.start[b][0], start_order_up_to=search.start[b][1],
        current_reorder_point=stock.reorder_point, current_order_up_to=stock.order_up_to,
        demand_per_year=float(result.replications[f"spares_per_year:{b}"].mean()),
        batch=planned_batch(sc, b), spare_wait_h_per_year=wait, settled=search.settled[b],
        target_shown_met=verdict(fill, target) == MET, replications=len(run.replications),
        order_ahead=b in search.ahead, planned_demand=planned,
    )


def _cost(one: StudyResult, other: StudyResult) -> tuple[float, float]:
    """Mean cost per year of two runs over the replications they share (common random numbers)."""
    n = min(len(one.replications), len(other.replications))
    return (float(one.figure("cost_per_year").iloc[:n].mean()),
            float(other.figure("cost_per_year").iloc[:n].mean()))


def advise_stock(result: StudyResult, simulate: Simulate, *, target: float = DEFAULT_TARGET,
                 max_rounds: int = MAX_ROUNDS,
                 max_replications: int | None = None) -> list[SimulatedStock]:
    """Reorder levels of every stocked bearing of ``result``'s variant, backed by simulation.

    Parameters
    ----------
    result
        The (budget-view) study of the variant to size for: its demand gives the start.
    simulate
        Runs replications of a scenario on the study's seed (:func:`study_simulator`).
    target
        Fill-rate target (the lower bound of the simulated fill rate's 95 %
        interval must reach it).
    max_rounds
        Simulation rounds of each level search.
    max_replications
        Replication budget of one level (default :data:`BUDGET_FACTOR` × the
        study's replications).

    Returns
    -------
    list of SimulatedStock
        One per stocked bearing with demand figures, in the scenario's order.
    """
    sc = result.scenario
    first = len(result.replications)
    runs = _Runs(simulate, first, max_replications or BUDGET_FACTOR * first)
    plain = _search(result, runs, target, max_rounds, frozenset())
    if plain is None:
        return []
    planned = frozenset(b for b in plain.levels if has_planned_demand(sc, b))
    if not planned:
        return [_advice(result, plain, plain.run, b, target, False) for b in plain.levels]
    ahead = _search(result, runs, target, max_rounds, planned)
    assert ahead is not None
    p, a = _cost(plain.run, ahead.run)
    ordered = bool(planned & {b for b, st in sc.stores.items() if st.order_ahead})
    chosen, other = (ahead, plain) if a < p or (a == p and ordered) else (plain, ahead)
    out = []
    for b in plain.levels:
        advice = _advice(result, chosen, chosen.run, b, target, b in planned)
        if b in planned:
            advice = dataclasses.replace(
                advice, alternative=_advice(result, other, other.run, b, target, True))
        out.append(advice)
    return out
