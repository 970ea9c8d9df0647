"""Quick closed-form answers beside a study: stock levels and the analytic cost curve.

* :func:`recommended_stock` sizes a base stock for every stocked bearing with
  Palm's theorem (Feeney & Sherbrooke, 1966): outstanding orders are
  Poisson(λL) with λ the simulated demand (failures and planned changes) and
  L the mean lead time; the base stock is the smallest level whose fill rate
  reaches the target.
* :func:`analytic_cost_curve` gives the closed-form fleet cost per year of
  age replacement at interval T for the positions on the default policy, and
  run-to-failure for the others (renewal-reward, Barlow & Proschan). It
  ignores waiting for spares and crews and group effects: it is the quick
  estimate that a sweep is compared with.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd

from fleetsim.plan.lifelike import integrated_reliability
from fleetsim.plan.spares import base_stock_for_fill_rate
from fleetsim.scenario.model import HOURS_PER_YEAR, Machine, Position, Scenario
from fleetsim.study.result import StudyResult


@dataclass(frozen=True)
class StockAdvice:
    """Recommended base stock of one bearing kind.

    Attributes
    ----------
    bearing
        Bearing id.
    demand_per_year
        Mean spares issued per year in the study.
    lead_time_h
        Mean normal lead time, hours.
    base_stock
        Smallest stock level with fill rate >= target.
    fill_rate
        Fill rate of that level (Palm's theorem).
    current_order_up_to
        The scenario's order-up-to level S.
    """

    bearing: str
    demand_per_year: float
    lead_time_h: float
    base_stock: int
    fill_rate: float
    current_order_up_to: int


def recommended_stock(result: StudyResult, target: float = 0.95) -> list[StockAdvice]:
    """Base-stock levels for a fill-rate target from the study's demand (Palm's theorem)."""
    out = []
    for bid, stock in result.scenario.stores.items():
        col = f"spares_per_year:{bid}"
        if col not in result.replications:
            continue
        demand = float(result.replications[col].mean())
        lead = stock.lead_time.mean_h
        if demand <= 0:
            out.append(StockAdvice(bid, 0.0, lead, 0, 1.0, stock.order_up_to))
            continue
        res = base_stock_for_fill_rate(demand / HOURS_PER_YEAR, lead, target)
        out.append(StockAdvice(bid, demand, lead, int(res.base_stock), float(res.fill_rate),
                               stock.order_up_to))
    return out


def _position_rate_per_h(scenario: Scenario, machine: Machine, pos: Position,
                         interval_h: np.ndarray) -> np.ndarray:
    """Long-run cost per calendar hour of one position under age replacement at T (inf = none)."""
    c = scenario.costs
    price = scenario.bearings[pos.bearing_id].price
    cp = c.planned_replacement + price + c.downtime_per_hour * scenario.crews.planned_repair.mean_h
    cf = (c.planned_replacement + c.failure + price
          + c.downtime_per_hour * scenario.crews.unplanned_repair.mean_h)
    dp, df = scenario.crews.planned_repair.mean_h, scenario.crews.unplanned_repair.mean_h
    life = pos.life
    share = machine.operating_share
    t = np.asarray(interval_h, dtype=float)
    finite = np.isfinite(t)
    r = np.where(finite, life.reliability(np.where(finite, t, 0.0)), 0.0)
    run = np.where(finite, integrated_reliability(life, np.where(finite, t, 1.0)), life.mean_h)
    cycle_h = run / share + dp * r + df * (1 - r)
    return (cp * r + cf * (1 - r)) / cycle_h


def analytic_cost_curve(scenario: Scenario, intervals_h: Sequence[float]) -> pd.DataFrame | None:
    """Closed-form fleet cost per year against the default age-replacement interval.

    Positions whose policy is the scenario's default age policy follow the
    interval; run-to-failure positions add their constant rate. Returns None
    when another policy (block, condition) is present: no closed form is
    summed for those.

    Returns
    -------
    pandas.DataFrame or None
        Columns ``interval_h, cost_rate`` (currency per year).
    """
    t = np.asarray(list(intervals_h), dtype=float)
    total = np.zeros_like(t)
    for m in scenario.machines:
        for pos in m.positions:
            kind = pos.policy.kind
            if kind == "age":
                rate = _position_rate_per_h(scenario, m, pos, t)
            elif kind == "run-to-failure":
                rate = _position_rate_per_h(scenario, m, pos, np.full_like(t, np.inf))
            else:
                return None
            total += m.count * rate
    return pd.DataFrame({"interval_h": t, "cost_rate": total * HOURS_PER_YEAR})
