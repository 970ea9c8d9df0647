"""The HTML page of a report: one self-contained file, rendered with Jinja2.

Figures are embedded as base64 PNG data URIs and the style sheet is inline,
so the page needs no network and no other file; a print style sheet lays it
out for A4 or Letter paper (tables wrap, figures are never split across pages). Autoescaping is on for the whole template: every name the
user wrote (study, machines, positions, bearings, groups, variant labels,
extra results) reaches the page as text, never as markup.
"""

from __future__ import annotations

import base64
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from importlib import resources
from typing import Any

import jinja2

import fleetsim
from fleetsim import numbers as fmt
from fleetsim.report import extra_tables, inputs
from fleetsim.report.headline import headline_figures
from fleetsim.scenario.model import HOURS_PER_YEAR, Scenario
from fleetsim.study.result import StudyResult

TEMPLATE = "report.html.j2"


@dataclass(frozen=True)
class FigureImage:
    """A rendered figure of the report.

    Attributes
    ----------
    name
        File stem under ``figures/`` (e.g. ``"cost_per_year"``).
    title
        Heading shown above the figure.
    caption
        What the figure shows, in plain words.
    png
        The PNG bytes.
    view
        ``"budget"``, ``"policy"`` or ``"life"`` (the life model, not simulated).
    """

    name: str
    title: str
    caption: str
    png: bytes
    view: str = ""

    @property
    def data_uri(self) -> str:
        """``data:image/png;base64,...`` for an ``<img src>``."""
        return "data:image/png;base64," + base64.b64encode(self.png).decode("ascii")


def _template() -> jinja2.Template:
    text = resources.files("fleetsim.report").joinpath("templates", TEMPLATE).read_text("utf-8")
    env = jinja2.Environment(
        autoescape=True, undefined=jinja2.StrictUndefined, trim_blocks=True, lstrip_blocks=True
    )
    return env.from_string(text)


#: Headline figures where lower is better; ``HIGHER`` where higher is; the rest are not judged.
LOWER = ("cost_per_year", "failures_per_year", "downtime_", "missed_defects_per_year")
HIGHER = ("availability", "fleet_no_down", "group_no_down:")
#: Most variant columns in one headline table; more variants give further tables.
COLUMNS_PER_TABLE = 4


def _direction(figure: str) -> int:
    if figure.startswith(LOWER):
        return -1
    if figure.startswith(HIGHER):
        return 1
    return 0


def headline_rows(results: Sequence[StudyResult]) -> list[dict[str, Any]]:
    """Rows of the headline table: figure name and one cell per variant.

    Each cell has its ``mean`` and ``ci`` text and a ``mark``: ``"best"`` or
    ``"worst"`` in its row, for figures where lower (cost, failures, downtime)
    or higher (availability, no down event) is better and the variants differ.
    """
    order: list[str] = []
    names: dict[str, str] = {}
    cells: dict[tuple[str, int], dict[str, str]] = {}
    means: dict[str, dict[int, float]] = {}
    for k, r in enumerate(results):
        for h in headline_figures(r):
            if h.figure not in names:
                order.append(h.figure)
                names[h.figure] = f"{h.label} ({'%' if h.is_share else h.unit})"
            mean, low, high = fmt.estimate_parts(h.mean, h.ci_low, h.ci_high, share=h.is_share)
            cells[(h.figure, k)] = {
                "mean": mean,
                "ci": "" if low is None else f"95 % CI {low} to {high}",
                "mark": "",
            }
            means.setdefault(h.figure, {})[k] = h.mean
    for f in order:
        sign = _direction(f)
        vals = {k: v for k, v in means[f].items() if v == v}
        if sign == 0 or len(vals) < 2 or len({cells[(f, k)]["mean"] for k in vals}) < 2:
            continue
        best = max(vals.values()) if sign > 0 else min(vals.values())
        worst = min(vals.values()) if sign > 0 else max(vals.values())
        for k, v in vals.items():
            cells[(f, k)]["mark"] = "best" if v == best else ("worst" if v == worst else "")
    empty = {"mean": "–", "ci": "", "mark": ""}
    return [
        {"name": names[f], "cells": [cells.get((f, k), empty) for k in range(len(results))]}
        for f in order
    ]


def headline_tables(
    rows: list[dict[str, Any]], labels: Sequence[str], recommended: int
) -> list[dict[str, Any]]:
    """The headline table split into tables of at most :data:`COLUMNS_PER_TABLE` variants.

    A printed page holds about five columns; the figure names repeat in each part.
    """
    out = []
    n = len(labels)
    for start in range(0, n, COLUMNS_PER_TABLE):
        idx = list(range(start, min(n, start + COLUMNS_PER_TABLE)))
        out.append(
            {
                "columns": [
                    {"label": labels[k], "baseline": k == 0 and n > 1,
                     "recommended": k == recommended and n > 1}
                    for k in idx
                ],
                "rows": [{"name": r["name"], "cells": [r["cells"][k] for k in idx]} for r in rows],
            }
        )
    return out


def group_rows(rows: list[dict[str, Any]], key: str, join: str = ", ") -> list[dict[str, Any]]:
    """Rows equal but for ``key`` merged into one, their ``key`` values joined, in first-seen order."""
    merged: dict[tuple[Any, ...], dict[str, Any]] = {}
    for row in rows:
        rest = tuple((k, v) for k, v in row.items() if k != key)
        if rest in merged:
            merged[rest][key] += join + str(row[key])
        else:
            merged[rest] = dict(row)
    return list(merged.values())


def plan_rows(today: Scenario, chosen: Scenario) -> list[dict[str, Any]]:
    """What to do at each position: today's policy and the recommended one, in words.

    Positions of the same name, bearing and policies on several machines share a row.
    """
    now = {(m.id, p.id): p for m in today.machines for p in m.positions}
    rows = []
    for m in chosen.machines:
        for p in m.positions:
            before = now.get((m.id, p.id))
            rows.append(
                {
                    "position": p.id,
                    "bearing": p.bearing_id,
                    "today": inputs.policy_text(before.policy, before.pf_interval)
                    if before is not None
                    else "–",
                    "do": inputs.policy_text(p.policy, p.pf_interval),
                    "changed": before is None
                    or before.policy != p.policy
                    or before.bearing_id != p.bearing_id,
                    "machines": m.id,
                }
            )
    return group_rows(rows, "machines")


def stock_rows(
    summary: Mapping[str, Any] | None, recommended_stock: Mapping[str, float] | None
) -> list[dict[str, str]]:
    """Stock levels to set, per bearing, from the summary's advice when it has it.

    Reads ``stock_advice`` records (``bearing, reorder_point, order_up_to,
    target_fill_rate, simulated_fill_rate{mean, ci_low, ci_high},
    sized_for_variant``) when the summary carries them, else the recommended
    base-stock levels by bearing.
    """
    advice = (summary or {}).get("stock_advice")
    if isinstance(advice, list) and advice:
        rows = []
        for a in advice:
            sim = a.get("simulated_fill_rate") or {}
            levels = f"s = {a.get('reorder_point', '–')}, S = {a.get('order_up_to', '–')}"
            if a.get("planned_demand"):
                levels += ("; planned changes ordered ahead" if a.get("order_ahead")
                           else "; planned changes not ordered ahead")
            alt = a.get("alternative")
            if isinstance(alt, Mapping):
                way = "ordered ahead" if alt.get("order_ahead") else "not ordered ahead"
                levels += (f" (with them {way}: s = {alt.get('reorder_point', '–')}, "
                           f"S = {alt.get('order_up_to', '–')})")
            target = fmt.percent(a.get("target_fill_rate"))
            if a.get("target_shown_met") is False:
                target += f", not shown met at {a.get('replications', '–')} replications"
            rows.append(
                {
                    "bearing": str(a.get("bearing", "")),
                    "levels": levels,
                    "fill": fmt.estimate(sim.get("mean"), sim.get("ci_low"), sim.get("ci_high"),
                                         share=True)
                    if sim else "–",
                    "target": target,
                    "variant": str(a.get("sized_for_variant", "")),
                }
            )
        return rows
    return [
        {"bearing": b, "levels": f"S = {fmt.number(float(v))} (on hand + on order)", "fill": "–",
         "target": "95.0 %", "variant": ""}
        for b, v in (recommended_stock or {}).items()
    ]


def _units(scenario: Scenario, member: str) -> int:
    """Units a group member stands for: a machine type's count, or one named unit."""
    try:
        return scenario.machine(member).count
    except KeyError:
        return 1


def render_page(
    results: Sequence[StudyResult],
    labels: Sequence[str],
    *,
    title: str,
    executive_summary: Sequence[str],
    recommended: int,
    figures: Sequence[FigureImage],
    files: Sequence[str],
    extra: Any = None,
    generated: str = "",
    summary: Mapping[str, Any] | None = None,
    recommended_stock: Mapping[str, float] | None = None,
    subtitle: str = "",
    decisions: Sequence[Any] = (),
    year_tables: Sequence[Any] = (),
) -> str:
    """The report page as HTML text.

    The page reads in the order a manager does: the executive summary (what
    to do, the saving, how sure), the inputs that drive it, the evidence
    (headline table and figures), then the appendix.

    Parameters
    ----------
    results, labels
        The studies and their variant names; the first is the baseline.
    title
        Page title.
    executive_summary
        Paragraphs shown at the top.
    recommended
        Index of the recommended variant.
    figures
        Rendered figures, in page order.
    files
        Names of the report's other files (CSV, PNG, JSON), listed at the end.
    extra
        JSON-like further results, shown as titled tables in the appendix.
    generated
        Date text shown in the header (empty for none).
    summary
        The ``summary.json`` document; its ``baseline``, ``recommended``
        (``variant``, ``objective``, ``view``), ``indistinguishable_from_best``
        and ``stock_advice`` are shown when present.
    recommended_stock
        Recommended base stock by bearing (used when the summary has no advice).
    subtitle
        A line under the title (what was swept, what was sized).
    decisions
        Tables shown in the executive summary
        (:class:`~fleetsim.report.retrofit_table.DecisionTable`: a retrofit's before and after).
    year_tables
        Year-by-year plans shown with the results (:mod:`fleetsim.report.year_table`).
    """
    template = _template()
    first = results[0].scenario
    chosen = results[recommended].scenario
    variants = [
        {
            "label": lab,
            "study": r.scenario.study.name,
            "digest": r.scenario.digest[:16] or "n/a",
            "seed": r.seed,
            "engine": r.engine,
            "replications": fmt.number(len(r.replications)),
            "horizon": f"{fmt.number(r.horizon_h / HOURS_PER_YEAR)} years",
            "workers": r.workers,
            "elapsed": f"{r.elapsed_s:.1f} s",
            "recommended": k == recommended,
        }
        for k, (r, lab) in enumerate(zip(results, labels, strict=True))
    ]
    summary = summary or {}
    found = summary.get("recommended")
    rec: Mapping[str, Any] = found if isinstance(found, Mapping) else {}
    decision = {
        "variant": labels[recommended],
        "baseline": str(summary.get("baseline") or labels[0]),
        "objective": str(rec.get("objective") or rec.get("rule") or "lowest mean cost per year"),
        "view": str(rec.get("view") or ""),
        "tied": [str(v) for v in summary.get("indistinguishable_from_best") or []],
    }
    return template.render(
        title=title,
        subtitle=subtitle,
        decisions=list(decisions),
        year_tables=list(year_tables),
        caution=fleetsim.SAFETY_CAUTION,
        version=fleetsim.__version__,
        generated=generated,
        executive=list(executive_summary),
        decision=decision,
        several=len(results) > 1,
        plan=plan_rows(first, chosen),
        stock=stock_rows(summary, recommended_stock),
        headline_tables=headline_tables(headline_rows(results), labels, recommended),
        figures=list(figures),
        variants=variants,
        currency=first.costs.currency,
        costs=inputs.cost_rows(first),
        study_inputs=inputs.study_rows(first),
        crews=inputs.crew_rows(first),
        fleet=group_rows(inputs.position_rows(first), "machine"),
        bearings=inputs.bearing_rows(first),
        groups=[
            {"id": g.id, "machines": ", ".join(g.machines), "need": g.need,
             "of": sum(_units(first, m) for m in g.machines),
             "hold": "yes" if g.hold_planned_work else "no"}
            for g in first.groups
        ],
        extra=extra_tables.blocks(extra),
        files=list(files),
    )
