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

import glob
import io
import json
import os
import secrets
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

HTML_NAME = "report.html"
PDF_NAME = "report.pdf"
SUMMARY_NAME = "summary.json"
FIGURES_DIR = "figures"
MANIFEST_NAME = ".fleetsim-manifest.json"
#: What a report written before manifests owned (its top-level names).
_LEGACY_OWNED = frozenset(
    {HTML_NAME, SUMMARY_NAME, FIGURES_DIR, "replications.csv", "summary.csv", "headline.csv",
     "events.csv"}
)
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


def _is_report_dir(path: Path) -> bool:
    try:
        doc = json.loads((path / SUMMARY_NAME).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return False
    return isinstance(doc, dict) and doc.get("report_format") == summary_json.REPORT_FORMAT


def check_report_folder(out_dir: str | Path, where: str | None = None) -> None:
    """Refuse a report folder that cannot be one: a file, or a path below a file.

    Checked by the command line before any work starts; ``where`` names the
    option in the message (default: the path).
    """
    out_dir = Path(out_dir)
    where = where or str(out_dir)
    if out_dir.exists() and not out_dir.is_dir():
        raise InputError(where, f"expected a folder for the report, {str(out_dir)!r} is a file")
    for parent in out_dir.parents:
        if parent.exists():
            if not parent.is_dir():
                raise InputError(
                    where, f"expected a folder for the report, {str(parent)!r} is a file"
                )
            break


def _check_target(out_dir: Path) -> None:
    check_report_folder(out_dir)
    if out_dir.is_dir() and any(out_dir.iterdir()) and not _is_report_dir(out_dir):
        raise InputError(
            str(out_dir),
            "the directory exists and is not a fleetsim report; refusing to replace it "
            "(choose an empty or new directory)",
        )


def _sibling(out_dir: Path, kind: str) -> Path:
    while True:
        path = out_dir.parent / f".{out_dir.name}.{kind}-{os.getpid()}-{secrets.token_hex(4)}"
        try:
            path.mkdir()
        except FileExistsError:
            continue
        return path


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


def _recover(out_dir: Path) -> None:
    """Clean up after a writer that was killed: restore its old report, drop its half-built one.

    Only siblings left by processes that no longer run are touched.
    """
    prefix = f".{out_dir.name}."
    for path in sorted(out_dir.parent.glob(glob.escape(prefix) + "*-*-*")):
        kind, _, rest = path.name[len(prefix) :].partition("-")
        pid = rest.partition("-")[0]
        if kind not in ("new", "old") or not pid.isdigit() or not path.is_dir():
            continue
        if int(pid) == os.getpid() or _alive(int(pid)):
            continue
        if kind == "old" and not out_dir.exists():
            path.rename(out_dir)
        else:
            shutil.rmtree(path, ignore_errors=True)


def _owned(out_dir: Path) -> set[str]:
    """Relative paths of the files fleetsim wrote into an existing report (its manifest)."""
    try:
        doc = json.loads((out_dir / MANIFEST_NAME).read_text(encoding="utf-8"))
        files = doc["files"]
        if isinstance(files, list) and all(isinstance(f, str) for f in files):
            return set(files) | {MANIFEST_NAME}
    except (OSError, ValueError, KeyError, TypeError):
        pass
    owned = {MANIFEST_NAME, *_LEGACY_OWNED}
    figures_dir = out_dir / FIGURES_DIR
    if figures_dir.is_dir():
        owned |= {f"{FIGURES_DIR}/{p.name}" for p in figures_dir.iterdir() if p.suffix == ".png"}
    return owned


def _link_or_copy(src: str, dst: str) -> None:
    try:
        os.link(src, dst, follow_symlinks=False)
    except OSError:
        shutil.copy2(src, dst, follow_symlinks=False)


def _carry_over(out_dir: Path, work: Path) -> None:
    """Bring the user's own files and folders of the old report ``out_dir`` into ``work``."""
    if not out_dir.is_dir():
        return
    owned = _owned(out_dir)
    for path in sorted(out_dir.rglob("*")):
        rel = path.relative_to(out_dir).as_posix()
        target = work / rel
        if rel in owned or target.exists() or target.is_symlink():
            continue  # fleetsim's own, or a name fleetsim writes now: the new one wins
        if path.is_dir() and not path.is_symlink():
            if not any(path.iterdir()):
                target.mkdir(parents=True)
            continue
        target.parent.mkdir(parents=True, exist_ok=True)
        if path.is_symlink():
            os.symlink(os.readlink(path), target)
        else:
            _link_or_copy(str(path), str(target))


def _swap_in(new: Path, out_dir: Path) -> None:
    """Replace ``out_dir`` by ``new``: rename the old away, rename the new in, delete the old."""
    if not out_dir.exists():
        new.rename(out_dir)
        return
    old = _sibling(out_dir, "old")
    old.rmdir()
    out_dir.rename(old)
    try:
        new.rename(out_dir)
    except BaseException:
        old.rename(out_dir)
        raise
    shutil.rmtree(old, ignore_errors=True)


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
        _recover(out_dir)
    _check_target(out_dir)
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
    work = _sibling(out_dir, "new")
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
        _carry_over(out_dir, work)
        _swap_in(work, out_dir)
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
