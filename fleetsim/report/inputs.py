"""The inputs of a study as display tables: costs, policies, stores, crews, life model.

A recommendation is only as good as the numbers it was driven by, so the
report shows them: what each cost is, the policy at each position, the store
levels (s, S) and lead times, the crews and repair times, and where each
position's life came from. Every function returns plain display text (rows of
strings); the page template lays them out.
"""

from __future__ import annotations

from fleetsim import numbers as fmt
from fleetsim.scenario.model import HOURS_PER_YEAR, Duration, Policy, Scenario

#: Names of the life presets, in words.
LIFE_MODELS = {
    "iso281": "ISO 281:2007 reliability-factor form (shape 1.5, location 0.05 × L10)",
    "textbook": "widely quoted three-parameter fit (x0 = 0.02, θ = 4.459, b = 1.483, in L10)",
}


def duration_text(d: Duration | None) -> str:
    """A fixed or random duration in words, e.g. ``"lognormal, median 6 h, 90 % within 14 h"``."""
    if d is None:
        return "–"

    def h(x: float) -> str:
        text = fmt.hours(x)
        return f"{text} ({fmt.number(x / 24.0, sig=2)} d)" if x >= 72 else text

    if d.kind == "fixed":
        return h(d.value_h)
    if d.kind == "exponential":
        return f"exponential, mean {h(d.value_h)}"
    if d.kind == "lognormal":
        assert d.p90_h is not None
        return f"lognormal, median {h(d.value_h)}, 90 % within {h(d.p90_h)}"
    return f"Weibull, shape {fmt.number(d.shape or 0.0)}, scale {h(d.value_h)}"


def policy_text(policy: Policy, pf_interval: Duration | None = None) -> str:
    """A maintenance policy in a few plain words (with the position's P-F interval)."""
    if policy.kind == "age" and policy.interval_h:
        text = f"replace at {fmt.hours(policy.interval_h)} operating"
    elif policy.kind == "block" and policy.interval_h:
        text = f"replace all every {fmt.hours(policy.interval_h)} ({policy.block_scope})"
    elif policy.kind == "condition" and policy.inspection_every_h:
        pf = f", P-F {fmt.hours(pf_interval.mean_h)} mean" if pf_interval else ""
        text = (
            f"inspect every {fmt.hours(policy.inspection_every_h)}{pf}, "
            f"detection {fmt.percent(policy.detection, decimals=0)}"
        )
    else:
        text = "run to failure" if policy.kind == "run-to-failure" else policy.kind
    if policy.opportunistic_share:
        text += f"; opportunistic change past {fmt.percent(policy.opportunistic_share, decimals=0)} of the interval"
    return text


def cost_rows(scenario: Scenario) -> list[tuple[str, str]]:
    """(item, value) rows of the cost inputs."""
    c = scenario.costs
    cur = c.currency
    rows = [
        ("Planned replacement (labour and parts, each)", fmt.money(c.planned_replacement, cur)),
        ("Failure (each, besides downtime)", fmt.money(c.failure, cur)),
        ("Downtime, per machine-unit hour", fmt.money(c.downtime_per_hour, cur)),
        ("Inspection (each)", fmt.money(c.inspection, cur)),
        ("Holding cost of stock, per year", fmt.percent(c.holding_rate_per_year) + " of its price"),
    ]
    if c.discount_rate_per_year > 0:
        rows.append(("Discount rate, per year", fmt.percent(c.discount_rate_per_year)))
    return rows


def position_rows(scenario: Scenario) -> list[dict[str, str]]:
    """One row per machine position: units, bearing, lives, where the life came from, policy."""
    rows = []
    for m in scenario.machines:
        for p in m.positions:
            basic = p.derived.rating_life_h if p.derived is not None else None
            if p.derived is None:
                source = "given distribution"
            elif p.field_factor != 1.0:
                source = f"catalogue life × field factor {fmt.number(p.field_factor)}"
            else:
                source = "catalogue rating and load"
            rows.append(
                {
                    "machine": m.id if m.count == 1 else f"{m.id} ({m.count} units)",
                    "share": fmt.percent(m.operating_share, decimals=0),
                    "position": p.id,
                    "bearing": p.bearing_id,
                    "basic_l10": fmt.number(basic) if basic is not None else "–",
                    "life_l10": fmt.number(float(p.life.life_at_reliability(0.9))),
                    "shape": fmt.number(p.life.shape),
                    "source": source,
                    "policy": policy_text(p.policy, p.pf_interval),
                }
            )
    return rows


def bearing_rows(scenario: Scenario) -> list[dict[str, str]]:
    """One row per bearing kind: type, ratings, price, stock levels and lead times."""
    cur = scenario.costs.currency
    rows = []
    for b in scenario.bearings.values():
        s = scenario.stores.get(b.id)
        rows.append(
            {
                "id": b.id,
                "type": str(b.bearing_type),
                "c": fmt.load(b.dynamic_rating_N),
                "c0": fmt.load(b.static_rating_N) if b.static_rating_N else "–",
                "price": fmt.money(b.price, cur),
                "stock": f"{s.initial} at start; s = {s.reorder_point}, S = {s.order_up_to}"
                + ("; planned changes ordered ahead" if s.order_ahead else "")
                if s is not None
                else "unlimited",
                "lead": duration_text(s.lead_time) if s is not None else "–",
                "emergency": (
                    f"{duration_text(s.emergency_lead_time)}, +{fmt.money(s.emergency_premium, cur)}"
                    if s is not None and s.emergency_lead_time is not None
                    else "–"
                ),
            }
        )
    return rows


def crew_rows(scenario: Scenario) -> list[tuple[str, str]]:
    """(item, value) rows of the crews and repair times."""
    c = scenario.crews
    return [
        ("Crews", "unlimited" if c.count is None else fmt.number(c.count)),
        ("Planned replacement takes", duration_text(c.planned_repair)),
        ("Unplanned repair takes", duration_text(c.unplanned_repair)),
    ]


def study_rows(scenario: Scenario) -> list[tuple[str, str]]:
    """(item, value) rows of the study settings and the life model."""
    s = scenario.study
    return [
        ("Horizon", f"{fmt.number(s.horizon_h / HOURS_PER_YEAR)} years ({fmt.hours(s.horizon_h)})"),
        ("Replications", f"{fmt.number(s.replications)} (seed {s.seed})"),
        ("Life model", LIFE_MODELS.get(scenario.life_model, scenario.life_model)),
        ("Scenario file", scenario.source),
    ]
