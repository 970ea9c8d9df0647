"""Writing a report directory, atomically.

A report directory holds::

    report.html          one self-contained page (figures embedded, inline CSS)
    report.pdf           the page printed by headless Chromium (only with ``pdf=True``)
    summary.json         seed, versions, scenario digest, headline figures with CIs
    replications.csv     one row per variant and replication
    summary.csv          mean, spread and CI of every figure, per variant
    headline.csv         the headline figures with their CIs
    year_plan.csv        the year-by-year plan: P10/P50/P90 per year and quantity
    events.csv           event log of the first replication (when kept)
    figures/*.png        every figure of the page

    .fleetsim-manifest.json   the list of the files above (what fleetsim owns)

Everything is built in a hidden sibling directory and swapped into place only
when complete (rename the old report away, rename the new one in, delete the
old one), so an interrupted run never leaves a half-written report and never
destroys the previous one. fleetsim replaces only what it wrote: any other
file or folder found in the old report (one not in its manifest — for a
report written before manifests, one not named above) is carried over into
the new one (hard-linked, or copied) before the swap, so a user's own notes
in a report folder survive every rewrite. Should a writer be killed outright, the next write
to the same place deletes its half-built directory and, if it died between
the two renames, first puts the previous report back. Figures are drawn on ``matplotlib.figure.Figure``
objects without pyplot, so writing a report changes no backend or global
setting.
"""

from __future__ import annotations

import io
import json
import os
import shutil
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from datetime import UTC, datetime
from functools import partial
from pathlib import Path
from typing import TYPE_CHECKING, Any

import pandas as pd

from fleetsim.errors import InputError
from fleetsim.report import figures, fleet_figures, summary_json, tables, year_table
from fleetsim.report.executive import default_executive_summary
from fleetsim.report.figures import DEFAULT_MARKED_RELIABILITY
from fleetsim.report.folder import (
    FIGURES_DIR,
    HTML_NAME,
    MANIFEST_NAME,
    SUMMARY_NAME,
    carry_over,
    check_target,
    recover,
    sibling,
    swap_in,
)
from fleetsim.report.headline import CAUSES, has_inspections, recommended_index
from fleetsim.report.page import FigureImage, render_page
from fleetsim.report.palette import report_style
from fleetsim.report.text import variant_labels
from fleetsim.study.result import StudyResult
from fleetsim.study.year_plan import year_plan

if TYPE_CHECKING:
    from matplotlib.axes import Axes

    from fleetsim.scenario.model import Scenario
    from fleetsim.study.decision import Decision

PDF_NAME = "report.pdf"
DEFAULT_DPI = 110
#: Width of every figure, inches (about the page width at the default dpi).
WIDTH_IN = 8.5


@dataclass(frozen=True)
class ReportPaths:
    """Where the files of a written report are.

    Attributes
    ----------
    root
        The report directory.
    html
        ``report.html``.
    summary_json
        ``summary.json``.
    figures
        PNG files by figure name.
    tables
        CSV files by table name (``replications``, ``summary``, ``headline``, ``events``).
    """

    root: Path
    html: Path
    summary_json: Path
    figures: dict[str, Path] = field(default_factory=dict)
    tables: dict[str, Path] = field(default_factory=dict)

    def files(self) -> list[Path]:
        """Every file of the report."""
        return [self.html, self.summary_json, *self.tables.values(), *self.figures.values()]


def _png(draw: Callable[[Axes], object], size_in: tuple[float, float], dpi: int,
         view: str = "") -> bytes:
    from matplotlib.figure import Figure

    with report_style():
        fig = Figure(figsize=size_in, layout="constrained")
        draw(fig.add_subplot())
        if view:  # the PNG on its own says which view it shows
            fig.suptitle(VIEW_WORDS[view], x=0.01, ha="left", fontsize=7.5, color="0.35")
        buf = io.BytesIO()
        fig.savefig(buf, format="png", dpi=dpi, metadata={"Software": None})
    return buf.getvalue()


#: What each view of a figure means, in words (its heading, caption and PNG say which).
VIEW_WORDS = {
    "budget": "Budget view: what the plant spends from today's fleet over the horizon",
    "policy": "Policy view: long-run, from a stationary start after a warm-up, free of "
              "end-of-horizon effects",
    "life": "Life model: computed from the ratings and duty, not simulated",
}
VIEW_TITLES = {"budget": "budget view", "policy": "policy view", "life": "life model"}


@dataclass(frozen=True)
class _Plan:
    name: str
    title: str
    caption: str
    draw: Callable[[Axes], object]
    size_in: tuple[float, float]
    view: str = "budget"

    @property
    def heading(self) -> str:
        """The title with the view it shows."""
        return f"{self.title} — {VIEW_TITLES[self.view]}"

    @property
    def text(self) -> str:
        """The caption, opened by the view it shows."""
        return f"{VIEW_WORDS[self.view]}. {self.caption}"


def _figure_plans(
    results: Sequence[StudyResult],
    labels: list[str],
    best: int,
    *,
    sweep: pd.DataFrame | None,
    sweep_analytic: pd.DataFrame | None,
    sweep_parameter: str,
    recommended_stock: Mapping[str, float] | None,
    life_reliability: float,
) -> list[_Plan]:
    n = len(results)
    r_best = results[best]
    currency = results[0].scenario.costs.currency
    life_caption = (
        "Share of bearings still free of a detectable defect against operating hours, for each "
        "bearing position (positions with the same life share a curve). Dots mark L10, the life "
        f"at 90 % reliability; diamonds mark the life at {100 * life_reliability:g} % reliability."
    )
    # Today's lives, and the recommended variant's when its bearings differ (a retrofit):
    # both on the same axis range, so that they compare at a glance.
    lives = [0] + ([best] if best != 0 and _bearings(results[best]) != _bearings(results[0]) else [])
    span = figures.life_range(
        [p.life for k in lives for m in results[k].scenario.machines for p in m.positions],
        [p.field_factor for k in lives for m in results[k].scenario.machines for p in m.positions],
    )
    plans = [
        _Plan(
            "life" if j == 0 else f"life_{labels[k]}".replace(" ", "_")[:40],
            "Life of each bearing position" + (f" ({labels[k]})" if len(lives) > 1 else ""),
            life_caption,
            partial(_draw_life, results[k].scenario, reliability=life_reliability, span=span),
            (WIDTH_IN, 4.2),
            "life",
        )
        for j, k in enumerate(lives)
    ]
    if all("cost_per_year" in r.replications for r in results):
        plans.append(
            _Plan(
                "cost_per_year",
                "Cost per year by variant",
                "Expected total cost per year of each variant over the horizon with its 95 % "
                "confidence interval; the recommended variant is green (chosen as the report's "
                "recommendation says, on the policy view for cost), today's practice blue.",
                lambda ax: figures.plot_cost_per_year(results, ax, labels=labels, recommended=best),
                (WIDTH_IN, 1.3 + 0.5 * n),
            )
        )
    if sweep is not None:
        plans.append(
            _Plan(
                "cost_rate_sweep",
                f"Cost rate against {sweep_parameter.lower()}",
                "Simulated cost rate at each interval with 95 % confidence intervals; the star marks the "
                "lowest simulated cost"
                + (
                    ", the dotted line the closed-form optimum."
                    if sweep_analytic is not None
                    else "."
                ),
                lambda ax: figures.plot_cost_rate_sweep(
                    sweep, ax, analytic=sweep_analytic, currency=currency,
                    parameter=sweep_parameter,
                ),
                (WIDTH_IN, 4.0),
                _sweep_view(sweep),
            )
        )
    machines = len(fleet_figures.union_keys(results, "downtime_h"))
    shown = fleet_figures.shown_variants(n, best)
    if machines:
        plans.append(
            _Plan(
                "downtime_by_machine",
                "Downtime by machine",
                "Hours each machine is down per year, with 95 % confidence intervals, for "
                + ("each variant." if len(shown) == n else "the baseline and the recommended variant.")
                + " Availability is one minus these hours over the hours of a year.",
                lambda ax: fleet_figures.plot_downtime_by_machine(
                    results, ax, labels=labels, variants=shown
                ),
                (WIDTH_IN, 1.3 + 0.22 * machines * max(len(shown), 1.5)),
            )
        )
    if any(c in r.replications for r in results for c, _ in CAUSES):
        plans.append(
            _Plan(
                "downtime_by_cause",
                "Downtime by cause",
                "Machine-unit hours down per year, split into waiting for a crew, waiting for a spare, "
                "unplanned repair and planned work; the whisker is the 95 % interval of the total.",
                lambda ax: fleet_figures.plot_downtime_by_cause(results, ax, labels=labels),
                (WIDTH_IN, 1.7 + 0.5 * n),
            )
        )
    if any(not year_plan(r).empty for r in results):
        plans.append(
            _Plan(
                "cost_by_year",
                "Cost by year",
                "What the plant spends in each calendar year from today's fleet (budget view): the "
                "mean over the replications and the band from P10 to P90, for "
                + ("the baseline and the recommended variant." if best != 0 else "the baseline."),
                partial(year_table.plot_cost_by_year, results, labels=labels,
                        variants=sorted({0, best})),
                (WIDTH_IN, 3.6),
            )
        )
    if any(r.keys("spares_per_year") for r in results):
        plans.append(
            _Plan(
                "spares",
                "Spares issued per bearing per year",
                "Spares of each bearing issued per year in each replication (dots) and their spread "
                "(boxes: quartiles, whiskers up to 1.5 × the interquartile range)"
                + (
                    "; the dashed marks are the recommended stock levels."
                    if recommended_stock
                    else "."
                ),
                lambda ax: fleet_figures.plot_spares(
                    results, ax, labels=labels, recommended_stock=recommended_stock
                ),
                (WIDTH_IN, 4.0),
            )
        )
    if figures.reliability_informative(r_best):
        plans.append(
            _Plan(
                "system_reliability",
                f"System reliability over the horizon ({labels[best]})",
                "Probability that the fleet, and each k-out-of-n group, has had no down event by each "
                "time, with the exact 95 % binomial band, for the recommended variant.",
                lambda ax: figures.plot_system_reliability(r_best, ax),
                (WIDTH_IN, 4.0),
            )
        )
    if any(has_inspections(r) for r in results):
        plans.append(
            _Plan(
                "inspections",
                "Inspections: detections, missed defects and failures",
                "Defects found by inspection, defects that reached failure although inspected inside "
                "their P-F window, and failures, per year, for the variants that inspect.",
                lambda ax: fleet_figures.plot_inspections(results, ax, labels=labels),
                (WIDTH_IN, 4.0),
            )
        )
    return plans


def _sweep_view(sweep: pd.DataFrame) -> str:
    """The view of a sweep's cost-rate curve (its ``view`` column; budget without one)."""
    if "view" in sweep.columns and len(sweep) and str(sweep["view"].iloc[0]) in VIEW_WORDS:
        return str(sweep["view"].iloc[0])
    return "budget"


def _draw_life(
    scenario: Scenario, ax: Axes, *, reliability: float, span: tuple[float, float, bool]
) -> Axes:
    return figures.plot_life_distributions(scenario, ax, reliability=reliability, span=span)


def _bearings(result: StudyResult) -> list[tuple[str, str, str]]:
    return [(m.id, p.id, p.bearing_id) for m in result.scenario.machines for p in m.positions]


def write_report(
    results: Sequence[StudyResult],
    out_dir: str | Path,
    *,
    title: str,
    executive_summary: list[str] | None = None,
    extra: Mapping[str, Any] | None = None,
    sweep: pd.DataFrame | None = None,
    sweep_analytic: pd.DataFrame | None = None,
    sweep_parameter: str = "Replacement interval",
    recommended_stock: Mapping[str, float] | None = None,
    life_reliability: float = DEFAULT_MARKED_RELIABILITY,
    dpi: int = DEFAULT_DPI,
    decision: Decision | None = None,
    subtitle: str = "",
    decisions: Sequence[Any] = (),
    pdf: bool = False,
) -> ReportPaths:
    """Write the report of one or more study variants into ``out_dir``, atomically.

    Parameters
    ----------
    results
        One study per variant; the first is today's practice.
    out_dir
        The report directory (created, or replaced when it holds an earlier
        fleetsim report; any other non-empty directory is refused).
    title
        Title of the page.
    executive_summary
        Paragraphs for the top of the page (default: built from the results,
        see :func:`~fleetsim.report.executive.default_executive_summary`).
    extra
        Further JSON-like results (numbers, text, lists, mappings, tables) to
        store in ``summary.json`` and list on the page.
    sweep
        Interval sweep, columns ``interval_h, mean, ci_low, ci_high`` (cost per
        year): adds the cost-rate figure.
    sweep_analytic
        Closed-form cost curve for the sweep, columns ``interval_h, cost_rate``.
    sweep_parameter
        What was swept, for the figure's axis (``"Inspection interval"``).
    recommended_stock
        Recommended stock level (units on hand) by bearing id.
    life_reliability
        Reliability whose life is marked on the life figure besides L10.
    dpi
        Resolution of the figures.
    decision
        What the study recommends (:mod:`fleetsim.study.decision`): it sets
        the recommended variant, opens the executive summary with its
        sentences, and adds its JSON contract to ``summary.json``.
    subtitle
        A line under the title (what was swept, what was sized).
    decisions
        Tables for the executive summary (a retrofit's before and after).
    pdf
        Also print the page to ``report.pdf`` with headless Chromium
        (:func:`~fleetsim.report.pdf.print_pdf`; an error when none is installed).

    Returns
    -------
    ReportPaths
        The final paths of every file.

    Raises
    ------
    InputError
        For no results, a target that is a file or a foreign directory, or
        extra data that cannot be stored as JSON.
    """
    results = list(results)
    if not results:
        raise InputError("results", "expected at least one study result")
    out_dir = Path(os.path.abspath(out_dir))
    if out_dir.parent.is_dir():
        recover(out_dir)
    check_target(out_dir)
    labels = variant_labels(results)
    best = recommended_index(results)
    if decision is not None:
        best = decision.baseline if decision.recommended is None else decision.recommended
        if executive_summary is None:
            executive_summary = decision.lines()
    paragraphs = (
        list(executive_summary)
        if executive_summary is not None
        else default_executive_summary(
            results, labels=labels, recommended_stock=recommended_stock, sweep=sweep
        )
    )
    # Everything that can fail on bad input is checked before anything is written.
    doc = summary_json.summary_document(
        results,
        labels,
        title=title,
        executive_summary=paragraphs,
        recommended_stock=recommended_stock,
        sweep=sweep,
        extra=extra,
        decision=decision,
    )
    out_dir.parent.mkdir(parents=True, exist_ok=True)
    work = sibling(out_dir, "new")
    try:
        table_paths = tables.write_tables(results, work, labels)
        fig_dir = work / FIGURES_DIR
        fig_dir.mkdir()
        images = []
        for plan in _figure_plans(
            results,
            labels,
            best,
            sweep=sweep,
            sweep_analytic=sweep_analytic,
            sweep_parameter=sweep_parameter,
            recommended_stock=recommended_stock,
            life_reliability=life_reliability,
        ):
            png = _png(plan.draw, plan.size_in, dpi, plan.view)
            (fig_dir / f"{plan.name}.png").write_bytes(png)
            images.append(FigureImage(plan.name, plan.heading, plan.text, png, plan.view))
        doc["figures"] = [{"name": im.name, "title": im.title, "view": im.view,
                           "file": f"{FIGURES_DIR}/{im.name}.png"} for im in images]
        (work / SUMMARY_NAME).write_bytes(summary_json.dumps(doc).encode("utf-8"))
        files = [SUMMARY_NAME, *(p.name for p in table_paths.values())]
        files += [f"{FIGURES_DIR}/{im.name}.png" for im in images]
        if pdf:
            files.append(PDF_NAME)
        page = render_page(
            results,
            labels,
            title=title,
            executive_summary=paragraphs,
            recommended=best,
            figures=images,
            files=files,
            extra=doc.get("extra"),
            generated=datetime.now(UTC).strftime("%Y-%m-%d"),
            summary=doc,
            recommended_stock=recommended_stock,
            subtitle=subtitle,
            decisions=decisions,
            year_tables=[t for t in [year_table.year_table(results[best], labels[best])] if t],
        )
        (work / HTML_NAME).write_bytes(page.encode("utf-8"))
        if pdf:
            from fleetsim.report.pdf import print_pdf

            print_pdf(work / HTML_NAME, work / PDF_NAME)
        manifest = {"files": sorted([HTML_NAME, *files])}
        (work / MANIFEST_NAME).write_text(json.dumps(manifest, indent=1), encoding="utf-8")
        carry_over(out_dir, work)
        swap_in(work, out_dir)
    except BaseException:
        shutil.rmtree(work, ignore_errors=True)
        raise
    return ReportPaths(
        root=out_dir,
        html=out_dir / HTML_NAME,
        summary_json=out_dir / SUMMARY_NAME,
        figures={im.name: out_dir / FIGURES_DIR / f"{im.name}.png" for im in images},
        tables={name: out_dir / p.name for name, p in table_paths.items()},
    )
