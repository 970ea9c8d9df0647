"""Tables of a study: the headline table, a plain-text summary and the CSV files.

CSV files have one leading ``variant`` column so that several variants fit in
one file:

``replications.csv``
    One row per variant and replication, one column per figure.
``summary.csv``
    One row per variant and figure: mean, std, sem, ci_low, ci_high, p05,
    p50, p95, n.
``headline.csv``
    The headline figures with their 95 % intervals (per-year figures already
    divided by the horizon in years).
``year_plan.csv``
    The year-by-year plan (budget view): per variant, calendar year and
    quantity (failures, planned changes, inspections, spares issued and bought
    per bearing, crew hours, machine hours down, cost), P10, P50, P90 and the
    mean over the replications; the means add up to the horizon totals.
``events.csv``
    The event log of the first replication (only when a study kept one).

Text cells that a spreadsheet would read as a formula (starting with ``=``,
``+``, ``-``, ``@``, a tab or a carriage return: a unit or variant named by a
user, say) are written with a leading apostrophe, the usual defence against
formula injection through CSV files (OWASP, from memory).
"""

from __future__ import annotations

import csv
import io
import textwrap
from collections.abc import Sequence
from pathlib import Path

import pandas as pd

from fleetsim import numbers as fmt
from fleetsim.report.headline import Headline, headline_figures
from fleetsim.report.text import variant_labels
from fleetsim.sim.event_log import EVENT_COLUMNS, spreadsheet_text
from fleetsim.study.result import StudyResult
from fleetsim.study.year_plan import year_plan

HEADLINE_COLUMNS = (
    "variant",
    "figure",
    "label",
    "unit",
    "mean",
    "ci_low",
    "ci_high",
    "n",
    "method",
)


def _labels(results: Sequence[StudyResult], labels: Sequence[str] | None) -> list[str]:
    return list(labels) if labels is not None else variant_labels(results)


def headline_table(
    results: Sequence[StudyResult], labels: Sequence[str] | None = None
) -> pd.DataFrame:
    """The headline figures of every variant, one row per variant and figure.

    Returns
    -------
    pandas.DataFrame
        Columns ``variant, figure, label, unit, mean, ci_low, ci_high, n, method``.
    """
    rows = []
    for r, label in zip(results, _labels(results, labels), strict=True):
        for h in headline_figures(r):
            rows.append({"variant": label, **h.as_dict()})
    return pd.DataFrame(rows, columns=list(HEADLINE_COLUMNS))


#: Short row names of the terminal table.
SHORT_NAMES: dict[str, str] = {
    "cost_per_year": "Cost",
    "availability": "Availability",
    "failures_per_year": "Failures",
    "planned_replacements_per_year": "Planned changes",
    "downtime_crew_h_per_year": "Down: crew",
    "downtime_spares_h_per_year": "Down: spares",
    "downtime_repair_h_per_year": "Down: repair",
    "downtime_planned_h_per_year": "Down: planned",
    "inspections_per_year": "Inspections",
    "detections_per_year": "Detections",
    "missed_defects_per_year": "Missed defects",
    "fleet_no_down": "No fleet down event",
}
_COUNTS = {"failures", "changes", "inspections", "detections", "defects", "count"}


def _short_unit(unit: str) -> str:
    if unit == "share":
        return "%"
    head, sep, _ = unit.rpartition("/year")
    if not sep:
        return unit
    return "/yr" if head in _COUNTS else f"{head}/yr"


def short_name(h: Headline, horizon_years: float) -> str:
    """Compact row name of a headline figure, with its unit."""
    prefix, _, key = h.figure.partition(":")
    if prefix == "spares_per_year":
        name = f"Spares {key}"
    elif prefix == "group_no_down":
        name = f"No down event, {key}"
    else:
        name = SHORT_NAMES.get(h.figure, h.label)
    if h.method == "clopper-pearson":
        name += f", {horizon_years:.3g} y"
    return f"{name} ({_short_unit(h.unit)})"


def _cell(h: Headline) -> str:
    return fmt.estimate(h.mean, h.ci_low, h.ci_high, share=h.is_share, style="brackets")


#: Width of the terminal table when none is given (characters).
DEFAULT_WIDTH = 100
GAP = "  "


def _runs_lines(results: Sequence[StudyResult], labels: Sequence[str], width: int) -> list[str]:
    """How the variants were run: one line when they share the settings, else one per variant."""

    def settings(r: StudyResult) -> str:
        return (
            f"{fmt.number(r.horizon_years)} years, {fmt.plural(len(r.replications), 'replication')}, "
            f"seed {r.seed}"
        )

    first = results[0]
    if all(settings(r) == settings(first) for r in results):
        # the engines give the same figures on the same seed: a variant on the other
        # engine is named, the comparison stays on common random numbers
        engines = [r.engine for r in results]
        main = max(sorted(set(engines)), key=engines.count)
        others = [label for r, label in zip(results, labels, strict=True) if r.engine != main]
        engine = f"engine {main}" + (f" ({', '.join(others)}: "
                                     f"{next(e for e in engines if e != main)})" if others else "")
        text = f"Study {first.scenario.study.name!r}: {settings(first)}, {engine}"
        if len(results) > 1:
            text += f", {fmt.plural(len(results), 'variant')} on common random numbers"
        return textwrap.wrap(text + ".", width) or [""]
    return [
        line
        for r, label in zip(results, labels, strict=True)
        for line in textwrap.wrap(f"{label}: {settings(r)}, engine {r.engine}.", width,
                                  subsequent_indent="  ")
    ]


def _layout(header: list[str], body: list[list[str]], width: int) -> list[str]:
    """The table, its variant columns split into blocks that fit ``width`` characters.

    Column headings wrap onto several lines within their column; the first
    column (the figure names) repeats in every block.
    """
    name_w = max(len(row[0]) for row in [header, *body])
    cell_w = [max(len(row[c]) for row in body) for c in range(1, len(header))]
    # a heading may wrap to its column's width, but no narrower than its longest word
    col_w = [
        max(w, max((len(word) for word in header[c + 1].split()), default=0))
        for c, w in enumerate(cell_w)
    ]
    blocks: list[list[int]] = [[]]
    used = name_w
    for c, w in enumerate(col_w):
        if blocks[-1] and used + len(GAP) + w > width:
            blocks.append([])
            used = name_w
        blocks[-1].append(c)
        used += len(GAP) + w
    lines: list[str] = []
    for b, cols in enumerate(blocks):
        if b:
            lines.append("")
        heads = [textwrap.wrap(header[c + 1], col_w[c]) or [""] for c in cols]
        depth = max(len(h) for h in heads)
        for i in range(depth):
            first = header[0] if i == depth - 1 else ""
            parts = [first.ljust(name_w)]
            parts += [(h[i - depth + len(h)] if i >= depth - len(h) else "").ljust(col_w[c])
                      for h, c in zip(heads, cols, strict=True)]
            lines.append(GAP.join(parts).rstrip())
        lines.append(GAP.join(["-" * name_w] + ["-" * col_w[c] for c in cols]))
        for row in body:
            parts = [row[0].ljust(name_w)] + [row[c + 1].ljust(col_w[c]) for c in cols]
            lines.append(GAP.join(parts).rstrip())
    return lines


def summary_table(
    results: Sequence[StudyResult],
    labels: Sequence[str] | None = None,
    *,
    width: int | None = None,
) -> str:
    """A compact plain-text table of the headline figures, for the terminal.

    One column per variant; each cell is ``mean [95 % CI low, high]`` with
    the digits the interval supports; shares are in percent. The table fits
    ``width`` characters (default :data:`DEFAULT_WIDTH`): variant columns
    that do not fit go to a further block below, which repeats the figure
    names. Lines end without trailing spaces; the text ends with a newline.
    """
    labels = _labels(results, labels)
    width = DEFAULT_WIDTH if width is None else max(40, int(width))
    lines = _runs_lines(results, labels, width)
    order: list[str] = []
    names: dict[str, str] = {}
    cells: dict[tuple[str, int], str] = {}
    for k, r in enumerate(results):
        for h in headline_figures(r):
            if h.figure not in names:
                order.append(h.figure)
                names[h.figure] = short_name(h, r.horizon_years)
            cells[(h.figure, k)] = _cell(h)
    header = ["mean [95 % CI]", *labels]
    body = [[names[f]] + [cells.get((f, k), "-") for k in range(len(results))] for f in order]
    lines += [""] + _layout(header, body, width)
    return "\n".join(lines) + "\n"


def _with_variant(frame: pd.DataFrame, label: str) -> pd.DataFrame:
    out = frame.copy()
    out.insert(0, "variant", label)
    return out


def spreadsheet_safe(frame: pd.DataFrame) -> pd.DataFrame:
    """A copy of ``frame`` whose text cells no spreadsheet reads as formulas (see above)."""
    out = frame.copy()
    for col in out.columns:
        if pd.api.types.is_object_dtype(out[col]) or pd.api.types.is_string_dtype(out[col]):
            out[col] = out[col].map(lambda v: spreadsheet_text(v) if isinstance(v, str) else v)
    return out


def write_events(results: Sequence[StudyResult], labels: Sequence[str], path: Path) -> bool:
    """Write the event logs of ``results`` (in memory or in files) to one CSV; False if none.

    A log written to a file during the run (``events_file``) is copied line by
    line with its variant in front, so memory stays bounded however long it is.
    """
    logs = [(r, lab) for r, lab in zip(results, labels, strict=True)
            if r.events_file is not None or (r.events is not None and not r.events.empty)]
    if not logs:
        return False
    with path.open("w", encoding="utf-8", newline="") as out:
        out.write("variant," + ",".join(EVENT_COLUMNS) + "\n")
        for r, lab in logs:
            cell = io.StringIO()
            csv.writer(cell, lineterminator="").writerow([spreadsheet_text(lab)])
            prefix = cell.getvalue() + ","
            if r.events_file is not None:
                with open(r.events_file, encoding="utf-8", newline="") as src:
                    next(src, None)  # its header
                    for line in src:
                        out.write(prefix + line)
            else:
                assert r.events is not None
                spreadsheet_safe(_with_variant(r.events, lab)).to_csv(
                    out, index=False, header=False, lineterminator="\n")
    return True


def write_tables(
    results: Sequence[StudyResult], directory: Path, labels: Sequence[str] | None = None
) -> dict[str, Path]:
    """Write the CSV tables of the module docstring into ``directory``.

    Returns
    -------
    dict
        ``{"replications": path, "summary": path, "headline": path}``,
        ``"year_plan"`` (the year-by-year plan, :mod:`fleetsim.study.year_plan`) and
        ``"events"`` when any study kept an event log.
    """
    labels = _labels(results, labels)
    directory = Path(directory)
    directory.mkdir(parents=True, exist_ok=True)
    frames = {
        "replications": [
            _with_variant(r.replications, lab) for r, lab in zip(results, labels, strict=True)
        ],
        "summary": [
            _with_variant(r.summary.rename_axis("figure").reset_index(), lab)
            for r, lab in zip(results, labels, strict=True)
        ],
        "year_plan": [
            _with_variant(plan, lab)
            for r, lab in zip(results, labels, strict=True)
            if not (plan := year_plan(r)).empty
        ],
    }
    paths: dict[str, Path] = {}
    for name, parts in frames.items():
        if parts:
            paths[name] = directory / f"{name}.csv"
            spreadsheet_safe(pd.concat(parts, ignore_index=True)).to_csv(
                paths[name], index=False, lineterminator="\n"
            )
    if write_events(results, labels, directory / "events.csv"):
        paths["events"] = directory / "events.csv"
    paths["headline"] = directory / "headline.csv"
    spreadsheet_safe(headline_table(results, labels)).to_csv(
        paths["headline"], index=False, lineterminator="\n"
    )
    return paths
