"""Figures of the fleet's availability, downtime by cause, spares and inspections.

Same conventions as :mod:`fleetsim.report.figures`: ``ax=None`` draws on new
axes, every function returns its axes, units are on the axes, the report
style applies only during the call, and user-written names are plain text.
Means carry the Student-t 95 % interval of the study summary; counts over the
horizon are shown per year.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from fleetsim.errors import InputError
from fleetsim.report.figures import error_bars, new_axes
from fleetsim.report.headline import CAUSES, has_inspections, mean_ci, per_year
from fleetsim.report.palette import CAUSE_COLOURS, COLOURS, report_style, series_colour
from fleetsim.report.text import mpl_text, variant_labels
from fleetsim.study.result import StudyResult

if TYPE_CHECKING:
    from matplotlib.axes import Axes

#: Most replications drawn as dots per box (the boxes use every replication).
STRIP_POINTS = 250


def _labels(results: Sequence[StudyResult], labels: Sequence[str] | None) -> list[str]:
    if not results:
        raise InputError("results", "expected at least one study result")
    return list(labels) if labels is not None else variant_labels(results)


def union_keys(results: Sequence[StudyResult], prefix: str) -> list[str]:
    keys: list[str] = []
    for r in results:
        keys += [k for k in r.keys(prefix) if k not in keys]
    return keys


def plot_availability(
    results: Sequence[StudyResult],
    ax: Axes | None = None,
    *,
    labels: Sequence[str] | None = None,
) -> Axes:
    """Availability of the fleet and of each machine type, per variant, with 95 % intervals.

    Parameters
    ----------
    results
        One study per variant.
    ax
        Axes to draw on (new axes when None).
    labels
        Variant names (default: :func:`~fleetsim.report.text.variant_labels`).

    Returns
    -------
    matplotlib.axes.Axes
    """
    labels = _labels(results, labels)
    rows = [("whole fleet", "availability")] + [
        (m, f"availability:{m}") for m in union_keys(results, "availability")
    ]
    n = len(results)
    step = 0.8 / max(n, 1)
    with report_style():
        ax = new_axes(ax, (7.5, 1.4 + 0.32 * len(rows) * max(n, 1.5)))
        for k, (r, label) in enumerate(zip(results, labels, strict=True)):
            ys, vals = [], []
            for j, (_, column) in enumerate(rows):
                est = mean_ci(r, column)
                if est is None:
                    continue
                ys.append(j - 0.4 + step * (k + 0.5))
                vals.append((100 * est.mean, 100 * est.ci_low, 100 * est.ci_high))
            if not vals:
                continue
            ax.errorbar(
                [v[0] for v in vals],
                ys,
                xerr=error_bars(vals),
                fmt="o",
                color=series_colour(k),
                capsize=3,
                markersize=5,
                label=mpl_text(label),
            )
        ax.set_yticks(np.arange(len(rows)), [mpl_text(name) for name, _ in rows])
        ax.invert_yaxis()
        ax.set_xlabel("Availability (% of calendar time up)")
        ax.set_title("Availability (95 % CI)")
        ax.legend(loc="best")
    return ax


#: Most variants drawn side by side in the per-machine figure; beyond, the baseline and the best.
MAX_VARIANTS_PER_MACHINE = 4


def shown_variants(n: int, recommended: int) -> list[int]:
    """Variants drawn per machine: all of a few, else the baseline (first) and the recommended."""
    if n <= MAX_VARIANTS_PER_MACHINE:
        return list(range(n))
    return sorted({0, recommended})


def plot_downtime_by_machine(
    results: Sequence[StudyResult],
    ax: Axes | None = None,
    *,
    labels: Sequence[str] | None = None,
    variants: Sequence[int] | None = None,
) -> Axes:
    """Hours down per year of each machine type, per variant, with 95 % intervals.

    Downtime hours read at a glance where availabilities near 1 do not
    (99.97 % against 99.99 % is 2.6 against 0.9 hours a year).

    Parameters
    ----------
    results
        One study per variant.
    ax
        Axes to draw on (new axes when None).
    labels
        Variant names (default: :func:`~fleetsim.report.text.variant_labels`).
    variants
        Indices of the variants to draw (default: all).

    Returns
    -------
    matplotlib.axes.Axes
    """
    labels = _labels(results, labels)
    chosen = list(range(len(results))) if variants is None else list(variants)
    machines = union_keys([results[k] for k in chosen], "downtime_h")
    n = len(chosen)
    step = 0.8 / max(n, 1)
    with report_style():
        ax = new_axes(ax, (7.5, 1.3 + 0.22 * len(machines) * max(n, 1.5)))
        for j, k in enumerate(chosen):
            r = results[k]
            ys, vals = [], []
            for i, m in enumerate(machines):
                est = per_year(r, f"downtime_h:{m}")
                if est is None:
                    continue
                ys.append(i - 0.4 + step * (j + 0.5))
                vals.append((est.mean, est.ci_low, est.ci_high))
            if not vals:
                continue
            ax.barh(ys, [v[0] for v in vals], height=step * 0.9, color=series_colour(j),
                    label=mpl_text(labels[k]))
            ax.errorbar([v[0] for v in vals], ys, xerr=error_bars(vals), fmt="none",
                        ecolor=COLOURS["ink"], capsize=2.5, lw=0.9)
        ax.set_yticks(np.arange(len(machines)), [mpl_text(m) for m in machines])
        ax.invert_yaxis()
        ax.set_xlim(left=0.0)
        ax.set_xlabel("Downtime (machine-unit hours per year)")
        ax.set_title("Downtime by machine (95 % CI)")
        ax.grid(axis="y", visible=False)
        ax.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0))
    return ax


def plot_downtime_by_cause(
    results: Sequence[StudyResult],
    ax: Axes | None = None,
    *,
    labels: Sequence[str] | None = None,
) -> Axes:
    """Mean downtime per year split by cause (stacked bars), one bar per variant.

    Causes: waiting for a crew, waiting for a spare, unplanned repair, planned
    work. The whisker at the end of each bar is the 95 % interval of the
    total downtime.

    Parameters
    ----------
    results
        One study per variant.
    ax
        Axes to draw on (new axes when None).
    labels
        Variant names (default: :func:`~fleetsim.report.text.variant_labels`).

    Returns
    -------
    matplotlib.axes.Axes
    """
    labels = _labels(results, labels)
    y = np.arange(len(results))
    with report_style():
        ax = new_axes(ax, (7.5, 1.6 + 0.45 * len(results)))
        left = np.zeros(len(results))
        for column, name in CAUSES:
            widths = []
            for r in results:
                est = per_year(r, column)
                widths.append(est.mean if est is not None and math.isfinite(est.mean) else 0.0)
            ax.barh(y, widths, left=left, height=0.6, color=CAUSE_COLOURS[column], label=name)
            left = left + np.array(widths)
        totals = [per_year(r, "downtime_h") for r in results]
        if all(t is not None for t in totals):
            vals = [(t.mean, t.ci_low, t.ci_high) for t in totals if t is not None]
            ax.errorbar(
                [v[0] for v in vals],
                y,
                xerr=error_bars(vals),
                fmt="none",
                ecolor=COLOURS["ink"],
                capsize=4,
                lw=1.1,
            )
        ax.set_yticks(y, [mpl_text(s) for s in labels])
        ax.invert_yaxis()
        ax.set_xlabel("Downtime (machine-unit hours per year)")
        ax.set_title("Downtime by cause")
        ax.grid(axis="y", visible=False)
        ax.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0))
    return ax


def plot_spares(
    results: Sequence[StudyResult],
    ax: Axes | None = None,
    *,
    labels: Sequence[str] | None = None,
    recommended_stock: Mapping[str, float] | None = None,
) -> Axes:
    """Spares of each bearing issued per year across replications (box and dots).

    Parameters
    ----------
    results
        One study per variant.
    ax
        Axes to draw on (new axes when None).
    labels
        Variant names (default: :func:`~fleetsim.report.text.variant_labels`).
    recommended_stock
        Recommended stock level (units on hand) by bearing id, drawn as a
        dashed mark over the bearing's boxes.

    Returns
    -------
    matplotlib.axes.Axes
    """
    import seaborn as sns

    labels = _labels(results, labels)
    bearings = union_keys(results, "spares_per_year")
    frames = []
    for r, label in zip(results, labels, strict=True):
        for b in r.keys("spares_per_year"):
            values = r.replications[f"spares_per_year:{b}"].to_numpy(float)
            frames.append(
                pd.DataFrame({"bearing": mpl_text(b), "variant": mpl_text(label), "spares": values})
            )
    with report_style():
        ax = new_axes(ax, (7.5, 4.0))
        if not frames:
            ax.text(
                0.5, 0.5, "no spares figures in this study", ha="center", transform=ax.transAxes
            )
            return ax
        data = pd.concat(frames, ignore_index=True)
        order = [mpl_text(b) for b in bearings]
        hue_order = [mpl_text(s) for s in labels]
        palette = {h: series_colour(k) for k, h in enumerate(hue_order)}
        with warnings.catch_warnings():
            # seaborn 0.13 passes matplotlib's deprecated ``vert`` to boxplot; not ours to fix.
            warnings.filterwarnings("ignore", message="vert: bool", category=DeprecationWarning)
            sns.boxplot(
                data=data,
                x="bearing",
                y="spares",
                hue="variant",
                order=order,
                hue_order=hue_order,
                palette=palette,
                showfliers=False,
                width=0.7,
                boxprops={"alpha": 0.55},
                ax=ax,
            )
        dots = data.groupby(["bearing", "variant"], sort=False).head(STRIP_POINTS)
        sns.stripplot(
            data=dots,
            x="bearing",
            y="spares",
            hue="variant",
            order=order,
            hue_order=hue_order,
            palette=palette,
            dodge=True,
            size=2.2,
            alpha=0.45,
            jitter=0.18,
            legend=False,
            ax=ax,
        )
        if recommended_stock:
            first = True
            for i, b in enumerate(bearings):
                if b in recommended_stock:
                    ax.hlines(
                        float(recommended_stock[b]),
                        i - 0.42,
                        i + 0.42,
                        colors=COLOURS["ink"],
                        linestyles="--",
                        lw=1.6,
                        label="recommended stock (units on hand)" if first else "_nolegend_",
                    )
                    first = False
        ax.set_xlabel("Bearing")
        ax.set_ylabel("Spares issued per year (count/year)")
        ax.set_title("Spares issued per year")
        ax.legend(loc="best")
    return ax


#: Inspection figures: (column, label).
INSPECTION_BARS: tuple[tuple[str, str], ...] = (
    ("detections", "defects detected"),
    ("missed_defects", "defects missed"),
    ("failures", "failures"),
)


def plot_inspections(
    results: Sequence[StudyResult],
    ax: Axes | None = None,
    *,
    labels: Sequence[str] | None = None,
) -> Axes:
    """Detections, missed defects and failures per year of the variants that inspect.

    Parameters
    ----------
    results
        One study per variant; variants without inspections are left out.
    ax
        Axes to draw on (new axes when None).
    labels
        Variant names (default: :func:`~fleetsim.report.text.variant_labels`).

    Returns
    -------
    matplotlib.axes.Axes
    """
    labels = _labels(results, labels)
    chosen = [(r, lab) for r, lab in zip(results, labels, strict=True) if has_inspections(r)]
    x = np.arange(len(INSPECTION_BARS))
    width = 0.8 / max(len(chosen), 1)
    with report_style():
        ax = new_axes(ax)
        if not chosen:
            ax.text(0.5, 0.5, "no inspections in this study", ha="center", transform=ax.transAxes)
            return ax
        for k, (r, label) in enumerate(chosen):
            vals = []
            for column, _ in INSPECTION_BARS:
                est = per_year(r, column)
                vals.append((est.mean, est.ci_low, est.ci_high) if est else (0.0, 0.0, 0.0))
            pos = x - 0.4 + width * (k + 0.5)
            ax.bar(
                pos,
                [v[0] for v in vals],
                width=width * 0.92,
                color=series_colour(k),
                label=mpl_text(label),
            )
            ax.errorbar(
                pos,
                [v[0] for v in vals],
                yerr=error_bars(vals),
                fmt="none",
                ecolor=COLOURS["ink"],
                capsize=3,
                lw=1.0,
            )
        ax.set_xticks(x, [name for _, name in INSPECTION_BARS])
        ax.set_ylabel("Events per year (count/year)")
        ax.set_title("Inspections, defects and failures (95 % CI)")
        ax.grid(axis="x", visible=False)
        ax.legend(loc="best")
    return ax
