"""The decision a study backs: which variant, measured against what, on which view, and stock.

One objective drives everything a user reads (terminal, report, JSON):
:func:`decide` takes the budget-view studies of the variants (from today's
fleet over the horizon), runs their policy views
(:mod:`fleetsim.study.policy_view`), selects on common random numbers
(:mod:`fleetsim.study.selection`) and sizes the stock of the recommended
variant by simulation (:mod:`fleetsim.study.stock`).

* **View.** Cost and availability are decided on the policy view (free of
  end-of-horizon effects); the probability of no fleet down event is a
  horizon figure and is decided on the budget view.
* **Baseline.** Savings are measured against the baseline: the file's base
  case simulated on the same seed, unless the user names another variant.
* **Sensitivity.** A sweep of a cost or price input is a sensitivity study:
  no variant is recommended (a price is not a choice); for every value of the
  swept inputs the best of the other swept keys is reported instead.
* **Intervals never reached.** A variant whose age or block interval no
  position reaches within the horizon is, over the horizon, run to failure:
  it is flagged.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from typing import Any

from fleetsim import numbers as fmt
from fleetsim.errors import InputError
from fleetsim.scenario.model import Scenario
from fleetsim.study.result import StudyResult
from fleetsim.study.selection import Selection, select_best, wording
from fleetsim.study.sequential import Screening, Settings, until_resolved
from fleetsim.study.stock import (
    DEFAULT_TARGET,
    Simulate,
    SimulatedStock,
    advise_stock,
    study_simulator,
)
from fleetsim.study.summary import Estimate, figure_estimate, paired_difference

#: --objective name → (figure, minimise, words).
OBJECTIVES: dict[str, tuple[str, bool, str]] = {
    "cost": ("cost_per_year", True, "cost per year"),
    "availability": ("availability", False, "availability"),
    "reliability": ("fleet_down", True, "probability of a fleet down event within the horizon"),
}
#: Objectives decided on the policy view (the rest on the budget view).
POLICY_OBJECTIVES = ("cost", "availability")

RunView = Callable[[Scenario, str, int], StudyResult]


def is_cost_input(path: str) -> bool:
    """True for a key path of a cost or price input (``costs.failure``, ``bearing[WB-50].price``)."""
    head = path.split(".")[0].split("[")[0]
    return head == "costs" or path.rsplit(".", 1)[-1] == "price"


def interval_never_reached(scenario: Scenario) -> bool:
    """True when the scenario has age or block intervals and none falls due within the horizon.

    An age interval T of a position falls due within the horizon H when its
    oldest unit reaches T: T − starting age ≤ H × operating share. A block
    interval falls due when T < H (the block at H itself is outside the horizon).
    """
    horizon = scenario.study.horizon_h
    has_interval = False
    for m in scenario.machines:
        ages = m.ages_h()
        for j, p in enumerate(m.positions):
            pol = p.policy
            if not pol.interval_h or pol.kind not in ("age", "block"):
                continue
            has_interval = True
            if pol.kind == "age" and pol.interval_h - ages[:, j].max() <= horizon * m.operating_share:
                return False
            if pol.kind == "block" and pol.interval_h < horizon:
                return False
    return has_interval


def _fill_words(a: SimulatedStock) -> str:
    f = a.simulated_fill_rate
    shown = (f"meets the target of {fmt.percent(a.target_fill_rate)} "
             f"({a.replications:,} replications)" if a.target_shown_met else
             f"target of {fmt.percent(a.target_fill_rate)} not shown met at "
             f"{a.replications:,} replications")
    return (f"simulated fill rate {fmt.estimate(f.mean, f.low, f.high, share=True)}, {shown}")


def stock_sentence(a: SimulatedStock) -> str:
    """The stock advice of one bearing in words (terminal and report)."""
    ahead = ""
    if a.planned_demand:
        ahead = (" with planned changes ordered ahead (order_ahead = true)" if a.order_ahead else
                 " without ordering planned changes ahead")
    text = (f"Stock {a.bearing}: reorder point s = {a.reorder_point}, order-up-to S = "
            f"{a.order_up_to}{ahead} (now s = {a.current_reorder_point}, "
            f"S = {a.current_order_up_to}); {_fill_words(a)}; sized for {a.sized_for_variant} "
            "(budget view)"
            + ("" if a.settled else " (search not settled: more rounds needed, or more stock "
                                    "did not raise the fill rate)") + ".")
    alt = a.alternative
    if alt is not None:
        way = "With planned changes ordered ahead" if alt.order_ahead else "Without ordering ahead"
        text += (f" {way}: s = {alt.reorder_point}, S = {alt.order_up_to} "
                 f"({_fill_words(alt)}).")
    return text


@dataclass(frozen=True)
class SensitivityRow:
    """The best variant for one setting of the swept cost inputs."""

    setting: str
    best: int
    indistinguishable: tuple[int, ...]
    estimate: Estimate


@dataclass(frozen=True)
class Decision:
    """What a study recommends, and the evidence.

    Attributes
    ----------
    labels
        Variant names, in the order of the studies.
    objective
        ``"cost"``, ``"availability"`` or ``"reliability"``.
    view
        ``"policy"`` or ``"budget"``: the view the objective is decided on.
    baseline
        Index of the variant savings are measured against.
    recommended
        Index of the recommended variant; None for a sensitivity study.
    selection
        Multiple comparisons with the best over every variant, on ``view``.
    budget, policy
        The studies of both views (``policy`` empty when not run).
    never_reached
        Indexes of variants whose intervals never fall due within the horizon.
    sensitivity_keys
        The cost or price inputs swept (a sensitivity study when not empty).
    sensitivity
        Per setting of those inputs, the best variant.
    stock
        Stock advice for the recommended variant (the baseline in a sensitivity study).
    notes
        How the views were obtained.
    sequential
        The outcome of adding replications until resolved (``--until-resolved``), or None.
    """

    labels: tuple[str, ...]
    objective: str
    view: str
    baseline: int
    recommended: int | None
    selection: Selection
    budget: tuple[StudyResult, ...]
    policy: tuple[StudyResult, ...] = ()
    never_reached: tuple[int, ...] = ()
    sensitivity_keys: tuple[str, ...] = ()
    sensitivity: tuple[SensitivityRow, ...] = ()
    stock: tuple[SimulatedStock, ...] = ()
    notes: tuple[str, ...] = field(default=())
    sequential: Screening | None = None

    @property
    def figure(self) -> str:
        """The objective's figure column."""
        return OBJECTIVES[self.objective][0]

    def decided_on(self) -> tuple[StudyResult, ...]:
        """The studies of the view the objective is decided on."""
        return self.policy if self.view == "policy" else self.budget

    def estimate(self, k: int, view: str | None = None) -> Estimate:
        """The objective of variant ``k`` on ``view`` (default: the decision's)."""
        results = self.policy if (view or self.view) == "policy" else self.budget
        return figure_estimate(results[k].figure(self.figure), self.figure)

    def against_baseline(self, k: int) -> Estimate:
        """Paired difference baseline − variant ``k`` of the objective, on the decision's view."""
        results = self.decided_on()
        return paired_difference(results[self.baseline].figure(self.figure),
                                 results[k].figure(self.figure))

    def lines(self) -> list[str]:
        """The recommendation and its evidence, as plain sentences (terminal and report)."""
        fig, minimise, words = OBJECTIVES[self.objective]
        currency = self.budget[0].scenario.costs.currency
        share = fig != "cost_per_year"
        unit = f"{currency}/year" if not share else ""
        view_words = ("policy view: long-run, free of end-of-horizon effects"
                      if self.view == "policy" else
                      f"budget view: from today's fleet over {self.budget[0].horizon_years:.3g} years")
        out: list[str] = []

        def est(e: Estimate) -> str:
            return fmt.estimate(e.mean, e.low, e.high, share=share, unit=unit)

        base = self.labels[self.baseline]
        if self.recommended is None:
            keys = ", ".join(self.sensitivity_keys)
            out.append(f"Sensitivity study of {keys}: a cost or price is not a choice, so no "
                       f"variant is recommended. How the best on {words} moves ({view_words}):")
            for row in self.sensitivity:
                names = [self.labels[i] for i in row.indistinguishable]
                tie = f" (cannot be told apart from: {', '.join(names[1:])})" if len(names) > 1 else ""
                out.append(f"  {row.setting}: {self.labels[row.best]} — {est(row.estimate)}{tie}")
        else:
            k = self.recommended
            out.append(f"Recommended on {words} ({view_words}): {self.labels[k]} — "
                       f"{est(self.estimate(k))}.")
            if k != self.baseline:
                d = self.against_baseline(k)  # baseline − recommended
                better = (d.mean > 0) == minimise
                if d.mean < 0:  # shown as a magnitude, the verb gives the direction
                    d = Estimate(-d.mean, -d.high, -d.low, d.sem, d.n)
                verb = ("saves" if better else "costs") if not share else (
                    "gains" if better else "loses")
                tail = "" if better or share else " more"
                out.append(f"Against the baseline, {base}, it {verb} {est(d)}{tail} "
                           "(paired on common random numbers).")
            else:
                out.append(f"It is the baseline ({base}).")
            out.append(wording(self.selection, self.labels, words, unit, share=share))
            if self.sequential is not None:
                delta = self.sequential.indifference
                zone = (f"{fmt.number(100 * delta, sig=2)} percentage points" if share else
                        fmt.with_unit(fmt.number(delta), unit))
                out.append(self.sequential.sentence(self.labels, zone))
        for i in self.never_reached:
            out.append(f"{self.labels[i]}: its interval never falls due within the "
                       f"{self.budget[i].horizon_years:.3g}-year horizon, so over the horizon it "
                       "is run to failure.")
        for a in self.stock:
            out.append(stock_sentence(a))
        return out

    def table_lines(self) -> list[str]:
        """One plain row per variant: cost per year in both views (95 % CI) and the marks."""
        currency = self.budget[0].scenario.costs.currency
        width = max(len(n) for n in self.labels)
        head = f"{'':<{width}}  {'policy view':<28}  {'budget view':<28}"
        out = [f"Cost per year, {currency} (95 % CI):", head]
        keep = set(self.selection.indistinguishable)
        for k, name in enumerate(self.labels):
            cells = []
            for results in (self.policy, self.budget):
                if results:
                    e = figure_estimate(results[k].figure("cost_per_year"), "cost_per_year")
                    cells.append(fmt.estimate(e.mean, e.low, e.high, style="brackets"))
                else:
                    cells.append("n/a")
            marks = []
            if k == self.recommended:
                marks.append("recommended")
            elif k in keep and self.recommended is not None:
                marks.append("cannot be told apart from the best")
            if k == self.baseline:
                marks.append("baseline")
            if k in self.never_reached:
                marks.append("interval never reached: run to failure over the horizon")
            out.append(f"{name:<{width}}  {cells[0]:<28}  {cells[1]:<28}  {'; '.join(marks)}".rstrip())
        return out

    def variant_json(self, k: int) -> dict[str, Any]:
        """Per-variant additions to ``summary.json``: the policy view and the flags."""
        out: dict[str, Any] = {"interval_reached_within_horizon": k not in self.never_reached}
        if self.policy:
            e = figure_estimate(self.policy[k].figure("cost_per_year"), "cost_per_year")
            out["policy_view"] = {"cost_per_year": {"mean": e.mean, "ci_low": e.low,
                                                    "ci_high": e.high},
                                  "horizon_h": self.policy[k].horizon_h,
                                  "method": list(self.policy[k].notes)}
            if "availability" in self.policy[k].replications:
                a = figure_estimate(self.policy[k].figure("availability"), "availability")
                out["policy_view"]["availability"] = {"mean": a.mean, "ci_low": a.low,
                                                      "ci_high": a.high}
        if k != self.baseline:
            d = self.against_baseline(k)
            out["saving_against_baseline"] = {"figure": self.figure, "view": self.view,
                                              "mean": d.mean, "ci_low": d.low, "ci_high": d.high}
        return out

    def as_json(self) -> dict[str, Any]:
        """The top-level ``summary.json`` entries of the JSON contract."""
        sel = self.selection
        rec = None if self.recommended is None else self.labels[self.recommended]
        rule = ("sensitivity study of " + ", ".join(self.sensitivity_keys) + ": no recommendation"
                if rec is None else
                f"best mean {OBJECTIVES[self.objective][2]} on the {self.view} view")
        return {
            "baseline": self.labels[self.baseline],
            "recommended": {"variant": rec, "objective": self.objective, "view": self.view,
                            "index": self.recommended, "rule": rule},
            "indistinguishable_from_best": [self.labels[i] for i in sel.indistinguishable],
            "selection": {
                "method": "multiple comparisons with the best on paired differences "
                          "(Nelson & Matejcik 1995; Hsu 1984), Bonferroni",
                "confidence": sel.confidence, "replications": sel.replications,
                "figure": self.figure, "view": self.view,
                "worse_than_best_upper": {self.labels[i]: sel.upper[i] for i in range(len(sel.upper))},
            },
            "stock_advice": [a.as_dict() for a in self.stock],
            "sensitivity": [{"setting": r.setting, "best": self.labels[r.best],
                             "indistinguishable_from_best": [self.labels[i] for i in r.indistinguishable],
                             "mean": r.estimate.mean, "ci_low": r.estimate.low,
                             "ci_high": r.estimate.high} for r in self.sensitivity],
            "never_reached_within_horizon": [self.labels[i] for i in self.never_reached],
            "sequential": (None if self.sequential is None
                           else self.sequential.as_dict(self.labels)),
            "policy_view_method": list(self.notes),
        }


def decide(
    budget: Sequence[StudyResult],
    *,
    objective: str = "cost",
    baseline: int = 0,
    policy: Sequence[StudyResult] = (),
    cost_settings: Sequence[str | None] | None = None,
    sensitivity_keys: Sequence[str] = (),
    stock: Sequence[SimulatedStock] = (),
) -> Decision:
    """The decision from the studies of both views (see the module docstring).

    Parameters
    ----------
    budget
        Budget-view studies of the variants, on the same seed.
    objective
        A key of :data:`OBJECTIVES`.
    baseline
        Index of the variant savings are measured against.
    policy
        Policy-view studies of the same variants (empty: budget view only).
    cost_settings
        Per variant, the text of its cost-input settings (``"costs.failure=2000"``),
        None for one that sets none; with ``sensitivity_keys`` it groups the sensitivity table.
    sensitivity_keys
        The cost or price inputs swept with more than one value.
    stock
        Stock advice already simulated (see :func:`stock_for`).
    """
    if objective not in OBJECTIVES:
        raise InputError("--objective", f"expected one of {', '.join(OBJECTIVES)}, got {objective!r}")
    budget = tuple(budget)
    policy = tuple(policy)
    labels = tuple(r.label for r in budget)
    if not 0 <= baseline < len(budget):
        raise InputError("--baseline", f"expected a variant index below {len(budget)}")
    fig, minimise, _ = OBJECTIVES[objective]
    view = "policy" if policy and objective in POLICY_OBJECTIVES else "budget"
    source = policy if view == "policy" else budget
    values = [r.figure(fig).to_numpy(dtype=float) for r in source]
    selection = select_best(values, minimise=minimise)
    rows: list[SensitivityRow] = []
    recommended: int | None = selection.best
    if sensitivity_keys:
        recommended = None
        groups: dict[str, list[int]] = {}
        for k, setting in enumerate(cost_settings or [None] * len(budget)):
            if setting is not None:
                groups.setdefault(setting, []).append(k)
        for setting, members in groups.items():
            sub = select_best([values[i] for i in members], minimise=minimise)
            best = members[sub.best]
            rows.append(SensitivityRow(setting, best, tuple(members[i] for i in sub.indistinguishable),
                                       figure_estimate(source[best].figure(fig), fig)))
    never = tuple(k for k, r in enumerate(budget) if interval_never_reached(r.scenario))
    notes = tuple(dict.fromkeys(n for r in policy for n in r.notes))
    return Decision(labels=labels, objective=objective, view=view, baseline=baseline,
                    recommended=recommended, selection=selection, budget=budget, policy=policy,
                    never_reached=never, sensitivity_keys=tuple(sensitivity_keys),
                    sensitivity=tuple(rows), stock=tuple(stock), notes=notes)


def stock_for(decision: Decision, simulate: Simulate,
              target: float = DEFAULT_TARGET) -> Decision:
    """``decision`` with stock advice for its recommended variant (the baseline if none)."""
    import dataclasses

    k = decision.baseline if decision.recommended is None else decision.recommended
    advice = advise_stock(decision.budget[k], simulate, target=target)
    return dataclasses.replace(decision, stock=tuple(advice))


def _until_resolved(decision: Decision, until: Settings, workers: int, cluster: Any,
                    cost_settings: Sequence[str | None] | None) -> Decision:
    """``decision`` decided again after replications added to its view until resolved."""
    import dataclasses

    from fleetsim.study.policy_view import run_policy_view
    from fleetsim.study.study import run_study

    fig, minimise, _ = OBJECTIVES[decision.objective]
    on_policy = decision.view == "policy"
    source = list(decision.decided_on())
    first = [r.figure(fig).to_numpy(dtype=float) for r in source]
    means = [float(v.mean()) for v in first]
    delta = until.amount(min(means) if minimise else max(means))

    def more(start: int, stop: int) -> list[Any]:
        out = []
        for k, b in enumerate(decision.budget):
            if on_policy:
                extra = run_policy_view(b.scenario, replications=stop, seed=b.seed, engine=b.engine,
                                        workers=workers, cluster=cluster, label=b.label,
                                        start=start)
            else:
                extra = run_study(b.scenario, replications=stop, seed=b.seed, engine=b.engine,
                                  workers=workers, cluster=cluster, keep_events=False,
                                  label=b.label, start=start)
            source[k] = source[k].extended(extra)
            out.append(extra.figure(fig).to_numpy(dtype=float))
        return out

    _values, screening = until_resolved(first, more, indifference=delta, budget=until.budget,
                                        minimise=minimise)
    budget = decision.budget if on_policy else tuple(source)
    policy = tuple(source) if on_policy else decision.policy
    again = decide(budget, objective=decision.objective, baseline=decision.baseline,
                   policy=policy, cost_settings=cost_settings)
    return dataclasses.replace(again, sequential=screening)


def study_decision(
    budget: Sequence[StudyResult],
    *,
    objective: str = "cost",
    baseline: int = 0,
    workers: int = 1,
    cluster: Any = None,
    progress: Callable[[int, int], None] | None = None,
    cost_settings: Sequence[str | None] | None = None,
    sensitivity_keys: Sequence[str] = (),
    stock_target: float | None = DEFAULT_TARGET,
    until: Settings | None = None,
) -> Decision:
    """Run the policy views of ``budget``'s variants, decide, and size the stock by simulation.

    Every policy view and stock simulation uses the seed, replications and
    engine of the budget study it belongs to (common random numbers).

    Parameters
    ----------
    budget
        Budget-view studies of the variants, on the same seed.
    objective, baseline, cost_settings, sensitivity_keys
        See :func:`decide`.
    workers, cluster
        See :func:`fleetsim.study.run_study`.
    progress
        ``progress(done, total)`` over the policy views and the stock rounds.
    stock_target
        Fill-rate target of the stock advice (None: no stock advice).
    until
        Add replications to the view decided on until the best is resolved
        (:mod:`fleetsim.study.sequential`); None: the budget studies' count.
    """
    from fleetsim.study.cluster import study_cluster

    with study_cluster(cluster, workers, "--cluster") as dask:  # one cluster for the whole study
        return _study_decision(tuple(budget), objective, baseline, workers, dask, progress,
                               cost_settings, sensitivity_keys, stock_target, until)


def _study_decision(budget: tuple[StudyResult, ...], objective: str, baseline: int, workers: int,
                    cluster: Any, progress: Callable[[int, int], None] | None,
                    cost_settings: Sequence[str | None] | None, sensitivity_keys: Sequence[str],
                    stock_target: float | None, until: Settings | None = None) -> Decision:
    from fleetsim.study.policy_view import run_policy_view

    total = len(budget) + (1 if stock_target is not None else 0)
    policy = []
    for k, r in enumerate(budget):
        policy.append(run_policy_view(r.scenario, replications=len(r.replications), seed=r.seed,
                                      engine=r.engine, workers=workers, cluster=cluster,
                                      label=r.label))
        if progress is not None:
            progress(k + 1, total)
    decision = decide(budget, objective=objective, baseline=baseline, policy=policy,
                      cost_settings=cost_settings, sensitivity_keys=sensitivity_keys)
    if until is not None and not sensitivity_keys and len(budget) > 1:
        decision = _until_resolved(decision, until, workers, cluster, cost_settings)
    if stock_target is None:
        return decision
    k = decision.baseline if decision.recommended is None else decision.recommended
    sized = budget[k]
    simulate = study_simulator(sized.seed, workers=workers, cluster=cluster, label=sized.label)
    decision = stock_for(decision, simulate, stock_target)
    if progress is not None:
        progress(total, total)
    return decision
