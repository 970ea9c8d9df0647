"""Figures of the life models, costs and system reliability of a study.

Every function draws on the axes it is given (or on new axes when ``ax`` is
None), labels the axes with units, and returns the axes. Nothing global is
changed: the report style is applied with :func:`~fleetsim.report.palette.report_style`
for the duration of the call. Names written by the user (machines, positions,
bearings, groups, variant labels) are shown as plain text, never as mathtext.

The figures of availability, downtime, spares and inspections are in
:mod:`fleetsim.report.fleet_figures`.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from fleetsim import numbers as fmt
from fleetsim.errors import InputError
from fleetsim.life import LifeDistribution
from fleetsim.report.headline import mean_ci, recommended_index
from fleetsim.report.palette import (
    COLOURS,
    OTHER,
    RECOMMENDED,
    SERIES,
    report_style,
    series_colour,
)
from fleetsim.report.text import mpl_text, variant_labels
from fleetsim.scenario.model import HOURS_PER_YEAR, Scenario
from fleetsim.study.result import StudyResult, survival_curve

if TYPE_CHECKING:
    from matplotlib.axes import Axes
    from matplotlib.axis import Axis

#: Reliability whose life is marked besides L10 unless the caller chooses another.
DEFAULT_MARKED_RELIABILITY = 0.95


def new_axes(ax: Axes | None, size_in: tuple[float, float] = (7.5, 4.0)) -> Axes:
    """``ax`` itself, or the axes of a new pyplot figure of ``size_in`` inches."""
    if ax is not None:
        return ax
    import matplotlib.pyplot as plt

    _, new = plt.subplots(figsize=size_in)
    return new


def thousands(axis: Axis) -> None:
    """Show an axis's tick labels with thousands separators (``12,000``)."""
    from matplotlib.ticker import FuncFormatter

    axis.set_major_formatter(FuncFormatter(lambda v, _pos: f"{v:,.0f}"))


#: Line styles that follow the colours once the palette's colours are used up.
LINE_STYLES = ("-", "-.", ":")


def hour_ticks(axis: object, log_axis: bool = False) -> None:
    """At most about six tick labels with thousands separators (``100,000``), never run together.

    On a log axis, the labels are at 1, 2 and 5 times the powers of ten.
    """
    from matplotlib.ticker import FuncFormatter, LogLocator, MaxNLocator, NullFormatter

    label = FuncFormatter(lambda v, _pos: fmt.number(v))
    if log_axis:
        axis.set_major_locator(LogLocator(base=10, subs=(1.0, 2.0, 5.0)))  # type: ignore[attr-defined]
        axis.set_minor_formatter(NullFormatter())  # type: ignore[attr-defined]
    else:
        axis.set_major_locator(MaxNLocator(nbins=6, steps=[1, 2, 2.5, 5, 10]))  # type: ignore[attr-defined]
    axis.set_major_formatter(label)  # type: ignore[attr-defined]


def life_range(
    lives: Sequence[LifeDistribution], factors: Sequence[float] = ()
) -> tuple[float, float, bool]:
    """Operating hours over which the life figure is drawn: (start, end, log axis).

    The range runs to the longest life at 50 % reliability (half the
    bearings have a defect by then; what lies beyond does not change a
    maintenance decision), extended to any catalogue life drawn beside a field
    life. When the L10 lives of the curves differ by more than a factor of 4 a
    linear axis would squeeze the short ones against zero, so the axis is
    logarithmic from a fifth of the shortest L10.
    """
    stretch = [1.0 / min(f, 1.0) for f in factors] or [1.0] * len(lives)
    l10 = [float(life.life_at_reliability(0.9)) for life in lives]
    end = max(float(life.life_at_reliability(0.5)) * s for life, s in zip(lives, stretch, strict=False))
    log_axis = max(l10) > 4.0 * min(l10)
    start = min(l10) / 5.0 if log_axis else 0.0
    return start, end, log_axis


def life_label(reliability: float) -> str:
    """Name of the life at a reliability, e.g. ``"L5"`` for R = 0.95."""
    return f"L{round(100.0 * (1.0 - reliability), 6):g}"


def plot_life_distributions(
    scenario: Scenario,
    ax: Axes | None = None,
    *,
    reliability: float = DEFAULT_MARKED_RELIABILITY,
    max_curves: int = 10,
    span: tuple[float, float, bool] | None = None,
) -> Axes:
    """Reliability against operating hours of each bearing position.

    Positions with the same life distribution share one curve. Each curve
    carries a dot at its L10 (life at 90 % reliability) and a diamond at its
    life at ``reliability``; dashed lines mark both reliabilities. A position
    with a field factor also shows its catalogue life as a dashed curve of the
    same colour.

    Parameters
    ----------
    scenario
        The fleet model.
    ax
        Axes to draw on (new axes when None).
    reliability
        The second reliability to mark, strictly between 0 and 1.
    max_curves
        Most curves drawn; the rest are counted in a note.
    span
        Hours drawn ``(start, end, log axis)``, to give several figures one
        range (default: :func:`life_range` of the curves drawn).

    Returns
    -------
    matplotlib.axes.Axes
    """
    if not 0.0 < reliability < 1.0:
        raise InputError(
            "reliability", f"expected a value strictly between 0 and 1, got {reliability}"
        )
    curves: dict[tuple[str, float, float, float], tuple[LifeDistribution, list[str], float]] = {}
    for machine in scenario.machines:
        for pos in machine.positions:
            key = (pos.life.family, pos.life.shape, pos.life.scale_h, pos.life.location_h)
            entry = curves.setdefault(key, (pos.life, [], pos.field_factor))
            entry[1].append(f"{machine.id} / {pos.id} ({pos.bearing_id})")
    items = list(curves.values())
    shown, hidden = items[:max_curves], items[max_curves:]
    name_r = life_label(reliability)
    with report_style():
        ax = new_axes(ax, (9.5, 4.2))
        if not shown:
            ax.text(0.5, 0.5, "no bearing positions", ha="center", transform=ax.transAxes)
            return ax
        t_min, t_max, log_axis = span or life_range(
            [life for life, _, _ in shown], [factor for _, _, factor in shown]
        )
        t = np.geomspace(t_min, t_max, 400) if log_axis else np.linspace(0.0, t_max, 400)
        any_field = False
        for i, (life, names, factor) in enumerate(shown):
            colour = series_colour(i)
            style = LINE_STYLES[(i // len(SERIES)) % len(LINE_STYLES)]
            l10 = float(life.life_at_reliability(0.9))
            lr = float(life.life_at_reliability(reliability))
            more = f" and {len(names) - 1} more" if len(names) > 1 else ""
            label = f"{names[0]}{more}: L10 = {fmt.number(l10)} h"
            ax.plot(t, life.reliability(t), color=colour, linestyle=style, label=mpl_text(label))
            if factor != 1.0:
                # the catalogue life this position would have without its field factor
                any_field = True
                catalogue = life.scaled(1.0 / factor)
                ax.plot(t, catalogue.reliability(t), color=colour, linestyle="--", linewidth=1.0,
                        alpha=0.8, gid="catalogue")
            (dot,) = ax.plot([l10], [0.9], "o", color=colour, markersize=6)
            dot.set_gid("L10")
            (diamond,) = ax.plot([lr], [reliability], "D", color=colour, markersize=5)
            diamond.set_gid(name_r)
        ax.axhline(0.9, color=OTHER, linestyle="--", linewidth=0.9)
        ax.axhline(reliability, color=OTHER, linestyle=":", linewidth=0.9)
        if any_field:
            ax.plot([], [], "--", color=COLOURS["ink"], linewidth=1.0,
                    label="catalogue life (before the field factor)")
        ax.plot([], [], "o", color=COLOURS["ink"], label="L10: life at R = 90 %")
        ax.plot(
            [],
            [],
            "D",
            color=COLOURS["ink"],
            label=f"{name_r}: life at R = {100 * reliability:g} %",
        )
        if hidden:
            ax.text(
                0.99,
                0.02,
                f"{len(hidden)} more life curves not shown",
                ha="right",
                transform=ax.transAxes,
                fontsize=8,
                color=OTHER,
            )
        if log_axis:
            ax.set_xscale("log")
            ax.set_xlim(t_min, t_max)
        else:
            ax.set_xlim(0.0, t_max)
        ax.set_ylim(0.0, 1.02)
        hour_ticks(ax.xaxis, log_axis)
        ax.set_xlabel("Operating hours (h)" + (", log scale" if log_axis else ""))
        ax.set_ylabel("Reliability R(t) (share surviving)")
        ax.set_title("Life of each bearing position")
        ax.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0), fontsize=7.5)
    return ax


def _estimates(results: Sequence[StudyResult], column: str) -> list[tuple[float, float, float]]:
    out = []
    for r in results:
        est = mean_ci(r, column)
        if est is None:
            raise InputError(
                "results",
                f"the study {r.label or r.scenario.study.name!r} has no {column!r} figure",
            )
        out.append((est.mean, est.ci_low, est.ci_high))
    return out


def error_bars(values: list[tuple[float, float, float]]) -> np.ndarray:
    """Asymmetric error-bar lengths (2 × n), zero where the interval is undefined."""
    lo = [m - lo if math.isfinite(lo) else 0.0 for m, lo, _ in values]
    hi = [hi - m if math.isfinite(hi) else 0.0 for m, _, hi in values]
    return np.array([lo, hi])


def plot_cost_per_year(
    results: Sequence[StudyResult],
    ax: Axes | None = None,
    *,
    labels: Sequence[str] | None = None,
    recommended: int | None = None,
) -> Axes:
    """Mean cost per year of each variant with its 95 % confidence interval.

    Parameters
    ----------
    results
        One study per variant (policy, interval, stock level); the first is
        today's practice.
    ax
        Axes to draw on (new axes when None).
    labels
        Variant names (default: :func:`~fleetsim.report.text.variant_labels`).
    recommended
        Index of the recommended variant, drawn in green (default: lowest cost).

    Returns
    -------
    matplotlib.axes.Axes
    """
    if not results:
        raise InputError("results", "expected at least one study result")
    labels = list(labels) if labels is not None else variant_labels(results)
    best = recommended_index(results) if recommended is None else recommended
    values = _estimates(results, "cost_per_year")
    currency = results[0].scenario.costs.currency
    with report_style():
        ax = new_axes(ax, (7.5, 1.2 + 0.45 * len(results)))
        y = np.arange(len(results))
        colours = [
            RECOMMENDED if k == best else (COLOURS["harbour"] if k == 0 else OTHER)
            for k in range(len(results))
        ]
        means = [v[0] for v in values]
        ax.barh(y, means, color=colours, height=0.6)
        ax.errorbar(
            means, y, xerr=error_bars(values), fmt="none", ecolor=COLOURS["ink"], capsize=4, lw=1.2
        )
        for k, (m, _, hi) in enumerate(values):
            x = hi if math.isfinite(hi) else m
            ax.text(x, k, f"  {fmt.number(m)}", va="center", fontsize=8.5)
        ax.set_yticks(y, [mpl_text(s) for s in labels])
        ax.invert_yaxis()
        ax.set_xlim(0.0, max(v[2] if math.isfinite(v[2]) else v[0] for v in values) * 1.18 or 1.0)
        thousands(ax.xaxis)
        ax.set_xlabel(f"Cost per year ({mpl_text(currency)}/year)")
        ax.set_title("Cost per year (95 % CI)")
        ax.grid(axis="y", visible=False)
    return ax


SWEEP_COLUMNS = ("interval_h", "mean", "ci_low", "ci_high")


def plot_cost_rate_sweep(
    sweep: pd.DataFrame,
    ax: Axes | None = None,
    *,
    analytic: pd.DataFrame | None = None,
    currency: str = "",
    rate_unit: str = "year",
    parameter: str = "Replacement interval",
) -> Axes:
    """Cost rate against the policy interval, with the optimum marked.

    Parameters
    ----------
    sweep
        Simulated points: columns ``interval_h, mean, ci_low, ci_high`` (cost
        per ``rate_unit``).
    ax
        Axes to draw on (new axes when None).
    analytic
        Optional closed-form curve: columns ``interval_h, cost_rate`` in the
        same units; its minimum is marked too.
    currency
        Currency label for the axis.
    rate_unit
        Time unit of the rate (``"year"`` or ``"h"``).
    parameter
        What the interval is, for the axis label.

    Returns
    -------
    matplotlib.axes.Axes
    """
    missing = [c for c in SWEEP_COLUMNS if c not in sweep.columns]
    if missing or sweep.empty:
        raise InputError(
            "sweep", f"expected a table with columns {', '.join(SWEEP_COLUMNS)}; missing {missing}"
        )
    if analytic is not None and not {"interval_h", "cost_rate"} <= set(analytic.columns):
        raise InputError("analytic", "expected a table with columns interval_h, cost_rate")
    data = sweep.sort_values("interval_h")
    x = data["interval_h"].to_numpy(float)
    values = list(zip(data["mean"], data["ci_low"], data["ci_high"], strict=True))
    best = int(np.nanargmin(data["mean"].to_numpy(float)))
    with report_style():
        ax = new_axes(ax)
        ax.errorbar(
            x,
            data["mean"],
            yerr=error_bars(values),
            fmt="o-",
            color=COLOURS["harbour"],
            capsize=3,
            label="simulated, 95 % CI",
            markersize=4,
        )
        (star,) = ax.plot(
            [x[best]],
            [values[best][0]],
            "*",
            color=RECOMMENDED,
            markersize=15,
            zorder=5,
            label=f"lowest simulated: {fmt.number(x[best])} h",
        )
        star.set_gid("simulated optimum")
        if analytic is not None and not analytic.empty:
            a = analytic.sort_values("interval_h")
            ax_x = a["interval_h"].to_numpy(float)
            ax_y = a["cost_rate"].to_numpy(float)
            ax.plot(ax_x, ax_y, "--", color=COLOURS["kiln"], lw=1.4, label="closed form")
            k = int(np.nanargmin(ax_y))
            line = ax.axvline(
                ax_x[k],
                color=COLOURS["kiln"],
                ls=":",
                lw=1.1,
                label=f"closed-form optimum: {fmt.number(ax_x[k])} h",
            )
            line.set_gid("closed-form optimum")
        unit = f"{mpl_text(currency)}/{rate_unit}" if currency else f"per {rate_unit}"
        thousands(ax.xaxis)
        thousands(ax.yaxis)
        ax.set_xlabel(f"{mpl_text(parameter)} (h)")
        ax.set_ylabel(f"Cost rate ({unit})")
        ax.set_title("Cost rate against interval")
        ax.legend(loc="best")
    return ax


def _censored(first_down_h: np.ndarray, horizon_h: float) -> np.ndarray:
    """First-down times with "no event by the horizon" (NaN, or a value >= horizon) as +inf."""
    x = np.asarray(first_down_h, dtype=float)
    return np.where(np.isnan(x) | (x >= horizon_h), np.inf, x)


def reliability_curves(result: StudyResult, points: int = 101) -> dict[str, pd.DataFrame]:
    """Probability of no down event against time for each group and the fleet.

    Returns
    -------
    dict
        ``{"fleet": curve, group: curve, ...}``; each curve has columns
        ``time_h, reliability, low, high`` (Clopper–Pearson band). A
        replication whose first-down time is at or beyond the horizon had no
        down event.
    """
    reps = result.replications
    out: dict[str, pd.DataFrame] = {}
    if "fleet_first_down_h" in reps.columns:
        out["fleet"] = survival_curve(
            _censored(reps["fleet_first_down_h"].to_numpy(), result.horizon_h),
            result.horizon_h,
            points,
        )
    for group in result.keys("group_first_down_h"):
        col = f"group_first_down_h:{group}"
        out[group] = survival_curve(
            _censored(reps[col].to_numpy(), result.horizon_h), result.horizon_h, points
        )
    return out


#: A no-down-event curve that never falls below this carries no information worth a figure.
INFORMATIVE_BELOW = 0.995


def reliability_informative(result: StudyResult) -> bool:
    """True when some group's (or the fleet's) chance of no down event falls visibly below 1.

    With no down event in any replication the curves are flat lines at 1;
    the headline table already gives that probability with its interval.
    """
    curves = reliability_curves(result)
    return any(float(c["reliability"].min()) < INFORMATIVE_BELOW for c in curves.values())


def plot_system_reliability(
    result: StudyResult,
    ax: Axes | None = None,
    *,
    groups: Sequence[str] | None = None,
    fleet: bool = True,
) -> Axes:
    """Probability of no down event against calendar time, with a 95 % band.

    Parameters
    ----------
    result
        One study.
    ax
        Axes to draw on (new axes when None).
    groups
        Groups to draw (default: every group of the study).
    fleet
        Also draw the whole fleet.

    Returns
    -------
    matplotlib.axes.Axes
    """
    curves = reliability_curves(result)
    wanted = list(result.keys("group_first_down_h")) if groups is None else list(groups)
    # Groups first, the fleet last and dashed, so that it stays visible when it equals a group.
    names = [g for g in wanted if g in curves] + (["fleet"] if fleet and "fleet" in curves else [])
    with report_style():
        ax = new_axes(ax)
        for i, name in enumerate(names):
            c = curves[name]
            years = c["time_h"].to_numpy(float) / HOURS_PER_YEAR
            is_fleet = name == "fleet"
            colour = COLOURS["ink"] if is_fleet else series_colour(i)
            label = "whole fleet" if is_fleet else f"group {name}"
            ax.step(
                years,
                c["reliability"],
                where="post",
                color=colour,
                label=mpl_text(label),
                linestyle="--" if is_fleet else "-",
            )
            ax.fill_between(
                years,
                c["low"],
                c["high"],
                step="post",
                color=colour,
                alpha=0.08 if is_fleet else 0.15,
                lw=0,
            )
        if not names:
            ax.text(
                0.5, 0.5, "no down-event times in this study", ha="center", transform=ax.transAxes
            )
        lowest = min((float(curves[n]["low"].min()) for n in names), default=0.0)
        ax.set_xlim(0.0, result.horizon_years)
        ax.set_ylim(max(0.0, math.floor(10.0 * lowest - 0.5) / 10.0), 1.02)
        ax.set_xlabel("Calendar time (years)")
        ax.set_ylabel("Probability of no down event (share)")
        ax.set_title("System reliability (95 % band)")
        if len(names) > 4:
            ax.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0), fontsize=7.5)
        elif names:
            ax.legend(loc="lower left")
    return ax
