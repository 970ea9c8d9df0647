"""The HTML page of a report: one self-contained file, rendered with Jinja2.

Figures are embedded as base64 PNG data URIs and the style sheet is inline,
so the page needs no network and no other file; a print style sheet lays it
out for A4 paper. Autoescaping is on for the whole template: every name the
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
from fleetsim.report.headline import headline_figures
from fleetsim.scenario.model import HOURS_PER_YEAR, Duration, Policy, Scenario
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
    """

    name: str
    title: str
    caption: str
    png: bytes

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


def policy_text(policy: Policy, pf_interval: Duration | None = None) -> str:
    """A maintenance policy in a few plain words (with the position's P-F interval)."""
    if policy.kind == "age" and policy.interval_h:
        return f"age replacement at {fmt.number(policy.interval_h)} operating h"
    if policy.kind == "block" and policy.interval_h:
        return f"block replacement every {fmt.number(policy.interval_h)} h ({policy.block_scope})"
    if policy.kind == "condition" and policy.inspection_every_h:
        pf = f", P-F {fmt.number(pf_interval.mean_h)} h mean" if pf_interval else ""
        return (
            f"inspect every {fmt.number(policy.inspection_every_h)} h{pf}, "
            f"detection {100 * policy.detection:g} %"
        )
    return "run to failure" if policy.kind == "run-to-failure" else policy.kind


def fleet_rows(scenario: Scenario) -> list[dict[str, str]]:
    """One row per machine position: names, units, lives and policy, as display text."""
    rows = []
    for m in scenario.machines:
        for p in m.positions:
            basic = p.derived.rating_life_h if p.derived is not None else None
            rows.append(
                {
                    "machine": m.id,
                    "units": str(m.count),
                    "share": f"{100 * m.operating_share:.0f} %",
                    "position": p.id,
                    "bearing": p.bearing_id,
                    "basic_l10": fmt.number(basic) if basic is not None else "given life",
                    "life_l10": fmt.number(float(p.life.life_at_reliability(0.9))),
                    "shape": f"{p.life.shape:.3g}",
                    "policy": policy_text(p.policy, p.pf_interval),
                }
            )
    return rows


def headline_rows(results: Sequence[StudyResult]) -> list[dict[str, Any]]:
    """Rows of the headline table: figure name and one cell per variant."""
    order: list[str] = []
    names: dict[str, str] = {}
    cells: dict[tuple[str, int], dict[str, str]] = {}
    for k, r in enumerate(results):
        for h in headline_figures(r):
            if h.figure not in names:
                order.append(h.figure)
                names[h.figure] = f"{h.label} ({'%' if h.is_share else h.unit})"
            # Shares are in percent; the row name carries the sign.
            mean, low, high = fmt.estimate_parts(h.mean, h.ci_low, h.ci_high, share=h.is_share)
            cells[(h.figure, k)] = {
                "mean": mean,
                "ci": "" if low is None else f"95 % CI {low} to {high}",
            }
    empty = {"mean": "–", "ci": ""}
    return [
        {"name": names[f], "cells": [cells.get((f, k), empty) for k in range(len(results))]}
        for f in order
    ]


def flatten(data: Any, prefix: str = "") -> list[tuple[str, str]]:
    """Nested JSON-like data as ``(key path, text)`` rows for a two-column table."""
    if isinstance(data, Mapping):
        rows: list[tuple[str, str]] = []
        for k, v in data.items():
            rows += flatten(v, f"{prefix}.{k}" if prefix else str(k))
        return rows
    if isinstance(data, list) and data and all(isinstance(v, Mapping | list) for v in data):
        rows = []
        for i, v in enumerate(data):
            rows += flatten(v, f"{prefix}[{i}]")
        return rows
    if isinstance(data, float):
        return [(prefix, fmt.number(data))]
    return [(prefix, "–" if data is None else str(data))]


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
) -> str:
    """The report page as HTML text.

    Parameters
    ----------
    results, labels
        The studies and their variant names; the first is today's practice.
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
        JSON-like further results, shown as a key/value table.
    generated
        Date text shown in the header (empty for none).
    """
    template = _template()
    first = results[0].scenario
    variants = [
        {
            "label": lab,
            "study": r.scenario.study.name,
            "digest": r.scenario.digest[:16] or "n/a",
            "seed": r.seed,
            "engine": r.engine,
            "replications": len(r.replications),
            "horizon": f"{r.horizon_h / HOURS_PER_YEAR:.3g} years ({fmt.number(r.horizon_h)} h)",
            "workers": r.workers,
            "elapsed": f"{r.elapsed_s:.1f} s",
            "recommended": k == recommended,
        }
        for k, (r, lab) in enumerate(zip(results, labels, strict=True))
    ]
    return template.render(
        title=title,
        caution=fleetsim.SAFETY_CAUTION,
        version=fleetsim.__version__,
        generated=generated,
        executive=list(executive_summary),
        labels=list(labels),
        recommended=recommended,
        headline=headline_rows(results),
        figures=list(figures),
        variants=variants,
        currency=first.costs.currency,
        fleet=fleet_rows(first),
        groups=[
            {"id": g.id, "machines": ", ".join(g.machines), "need": g.need} for g in first.groups
        ],
        bearings=[
            {
                "id": b.id,
                "type": str(b.bearing_type),
                "c": fmt.number(b.dynamic_rating_N),
                "price": fmt.number(b.price),
            }
            for b in first.bearings.values()
        ],
        extra=flatten(extra) if extra else [],
        files=list(files),
    )
