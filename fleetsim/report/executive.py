"""The executive summary: the recommendation and what it saves, in plain words.

The recommended variant is the one with the lowest expected cost per year;
the first variant is taken as today's practice. Savings carry a 95 %
confidence interval (paired when both variants share the seed and
replications, see :func:`fleetsim.report.headline.difference`), and the text
says so when the interval includes zero.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence

import pandas as pd

from fleetsim import numbers as fmt
from fleetsim.report.headline import Headline, difference, headline_figures, recommended_index
from fleetsim.report.text import variant_labels
from fleetsim.study.result import StudyResult


def _find(result: StudyResult, figure: str) -> Headline | None:
    for h in headline_figures(result):
        if h.figure == figure:
            return h
    return None


def _est(h: Headline | None, unit: str = "") -> str:
    if h is None:
        return "n/a"
    return fmt.estimate(h.mean, h.ci_low, h.ci_high, share=h.is_share, unit=unit)


def _today(label: str) -> str:
    """``today's practice (label)``, without repeating a label that already says so."""
    return "today's practice" if label.strip().lower() == "today's practice" else (
        f"today's practice ({label})"
    )


def _saving_sentences(
    first: StudyResult, best: StudyResult, first_label: str, best_label: str, currency: str
) -> list[str]:
    if "cost_per_year" not in first.replications or "cost_per_year" not in best.replications:
        return []
    est, method = difference(first, best, "cost_per_year")
    base = _find(first, "cost_per_year")
    share = (
        f", {fmt.percent(est.mean / base.mean)} of today's cost"
        if base is not None and base.mean > 0 and math.isfinite(est.mean)
        else ""
    )
    how = (
        "paired comparison over the same random lives"
        if method == "paired"
        else "comparison of independent runs"
    )
    text = (
        f"Expected saving against {first_label}: {fmt.estimate(est.mean, est.low, est.high, unit=currency + ' per year')}"
        f"{share} ({how})."
    )
    out = [text]
    if not (math.isfinite(est.low) and est.low > 0):
        out.append(
            f"The saving of {best_label} is not statistically clear at the 95 % level: the interval "
            "includes no saving. Run more replications before acting on it."
        )
    return out


def default_executive_summary(
    results: Sequence[StudyResult],
    *,
    labels: Sequence[str] | None = None,
    recommended_stock: Mapping[str, float] | None = None,
    sweep: pd.DataFrame | None = None,
) -> list[str]:
    """Paragraphs of plain text summarising the study for a decision maker.

    Parameters
    ----------
    results
        One study per variant; the first is today's practice.
    labels
        Variant names (default: :func:`~fleetsim.report.text.variant_labels`).
    recommended_stock
        Recommended stock level (units on hand) by bearing id, if worked out.
    sweep
        Interval sweep (``interval_h, mean, ci_low, ci_high``), if run.

    Returns
    -------
    list of str
    """
    labels = list(labels) if labels is not None else variant_labels(results)
    if not results:
        return []
    best = recommended_index(results)
    r0, rb = results[0], results[best]
    currency = r0.scenario.costs.currency
    per_year = f"{currency}/year"
    out: list[str] = []
    if len(results) == 1:
        out.append(
            f"{labels[0]}: over {rb.horizon_years:.3g} years ({len(rb.replications)} replications) "
            f"the fleet is expected to cost {_est(_find(rb, 'cost_per_year'), per_year)}."
        )
    elif best == 0:
        others = [k for k in range(1, len(results)) if "cost_per_year" in results[k].replications]
        out.append(
            f"Keep {_today(labels[0])}: it has the lowest expected cost of the "
            f"{len(results)} variants studied, {_est(_find(r0, 'cost_per_year'), per_year)}."
        )
        if others:
            nxt = min(others, key=lambda k: float(results[k].summary.loc["cost_per_year", "mean"]))
            est, _ = difference(results[nxt], r0, "cost_per_year")
            out.append(
                f"The next best, {labels[nxt]}, costs "
                f"{fmt.estimate(est.mean, est.low, est.high, unit=currency + ' per year')} more."
            )
    else:
        out.append(
            f"Recommended: {labels[best]}. It has the lowest expected cost of the {len(results)} "
            f"variants studied, {_est(_find(rb, 'cost_per_year'), per_year)}, against "
            f"{_est(_find(r0, 'cost_per_year'), per_year)} for {_today(labels[0])}."
        )
        out += _saving_sentences(r0, rb, labels[0], labels[best], currency)
    details = []
    for figure, words in (
        ("availability", "availability"),
        ("failures_per_year", "failures per year"),
    ):
        h = _find(rb, figure)
        if h is not None:
            text = f"{words} {_est(h)}"
            h0 = _find(r0, figure)
            if best != 0 and h0 is not None:
                text += f" (today: {fmt.percent(h0.mean) if h0.is_share else fmt.number(h0.mean, sig=2)})"
            details.append(text)
    if details:
        out.append(f"With {labels[best]}: " + "; ".join(details) + ".")
    rel = _find(rb, "fleet_no_down")
    if rel is not None:
        out.append(
            f"Probability that the fleet gets through the {rb.horizon_years:.3g}-year horizon without "
            f"a down event: {_est(rel)}."
        )
    if recommended_stock:
        stock = ", ".join(f"{b}: {fmt.number(float(v))}" for b, v in recommended_stock.items())
        out.append(f"Recommended base stock S (on hand plus on order): {stock}.")
    rates = {r.scenario.costs.discount_rate_per_year for r in results}
    if any(rate > 0 for rate in rates):
        text = ", ".join(fmt.with_unit(fmt.number(100 * rate, sig=2), "%") for rate in sorted(rates))
        out.append(
            f"Costs are present values at the start of the study, discounted at {text} a year; "
            "a cost per year is the equivalent annual cost (the level yearly amount with the "
            "same present value)."
        )
    if sweep is not None and not sweep.empty and {"interval_h", "mean"} <= set(sweep.columns):
        row = sweep.loc[sweep["mean"].astype(float).idxmin()]
        cost = fmt.estimate(
            float(row["mean"]),
            float(row.get("ci_low", math.nan)),
            float(row.get("ci_high", math.nan)),
            unit=per_year,
        )
        at = str(row["interval"]) if "interval" in sweep.columns else fmt.hours(float(row["interval_h"]))
        out.append(f"Over the intervals swept, the lowest simulated cost rate is at {at}: {cost}.")
    return out
