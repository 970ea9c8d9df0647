"""``fleetsim run`` and ``fleetsim sweep``: simulate a fleet, compare variants, write the report."""

from __future__ import annotations

import os
import sys
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import TYPE_CHECKING, Any

import click

from fleetsim import SAFETY_CAUTION
from fleetsim.bounds import MAX_REPLICATIONS
from fleetsim.cli.common import echo_json, fit_lines, paragraphs, slug, terminal_width
from fleetsim.errors import InputError
from fleetsim.seed import check_seed

if TYPE_CHECKING:
    from fleetsim.study.decision import Decision
    from fleetsim.study.result import StudyResult
    from fleetsim.study.variants import Variant

ENGINE_CHOICE = click.Choice(["auto", "des", "vector"])
#: --objective choices (their figures and directions live in fleetsim.study.decision).
OBJECTIVE_NAMES = ["cost", "availability", "reliability"]


class _Progress:
    """A tqdm bar on standard error when it is a terminal (and not --quiet)."""

    def __init__(self, quiet: bool, label: str) -> None:
        self.bar: Any = None
        self.label = label
        self.enabled = not quiet and sys.stderr.isatty()

    def __call__(self, done: int, total: int) -> None:
        if not self.enabled:
            return
        if self.bar is None:
            from tqdm import tqdm

            self.bar = tqdm(total=total, desc=self.label, unit="rep", file=sys.stderr, leave=False)
        self.bar.n = done
        self.bar.refresh()

    def close(self) -> None:
        if self.bar is not None:
            self.bar.close()


def _note(quiet: bool, text: str) -> None:
    if not quiet:
        click.echo(text, err=True)


def _common(fn: Callable[..., Any]) -> Callable[..., Any]:
    options = [
        click.option("--replications", "-n", type=int, default=None,
                     help="Replications (default: the scenario's)."),
        click.option("--seed", type=int, default=None, help="Study seed (default: the scenario's)."),
        click.option("--out", "out", type=click.Path(file_okay=False), default=None,
                     help="Report directory (default: reports/<study name>)."),
        click.option("--engine", type=ENGINE_CHOICE, default="auto", show_default=True,
                     help="des (discrete-event: any fleet), vector (numpy: independent positions, or "
                          "coupled ones all run-to-failure) or auto."),
        click.option("--workers", type=int, default=1, show_default=True,
                     help="Processes for the replications (0 = all cores)."),
        click.option("--cluster", default=None,
                     help="Dask scheduler address tcp://HOST:PORT, or 'local' for a local cluster."),
        click.option("--resume", is_flag=True,
                     help="Continue an interrupted run from its checkpoint in the report directory."),
        click.option("--quiet", "-q", is_flag=True, help="No progress bar or notes on standard error."),
        click.option("--json", "as_json", is_flag=True, help="Print one JSON object."),
        click.option("--objective", type=click.Choice(OBJECTIVE_NAMES), default="cost",
                     show_default=True,
                     help="What the recommendation optimises: cost per year, availability or "
                          "reliability (no fleet down event over the horizon)."),
        click.option("--baseline", default=None,
                     help="Variant that savings are measured against (default: the file's "
                          "base case, simulated on the same seed)."),
        click.option("--pdf", is_flag=True,
                     help="Also print the report to report.pdf (needs Chromium installed)."),
        click.option("--until-resolved", is_flag=True,
                     help="Add replications in batches, on common random numbers, until the best "
                          "variant is resolved to the indifference zone or the budget is spent."),
        click.option("--indifference-zone", default="1 %", show_default=True,
                     help="With --until-resolved: differences smaller than this do not matter "
                          "(a share of the best, '1 %', or an amount in the objective's unit)."),
        click.option("--replication-budget", type=int, default=None,
                     help="With --until-resolved: replications per variant at most "
                          "(default: 8 x the replications)."),
    ]
    for opt in reversed(options):
        fn = opt(fn)
    return fn


def _check_options(replications: int | None, seed: int | None, workers: int,
                   cluster: str | None, out: str | None = None) -> None:
    """Refuse bad options before any work starts."""
    from fleetsim.report.folder import check_report_folder

    if replications is not None and not 1 <= replications <= MAX_REPLICATIONS:
        raise InputError("--replications",
                         f"expected 1 to {MAX_REPLICATIONS:,}, got {replications}")
    if seed is not None:
        check_seed(seed, "--seed")
    if out is not None:
        check_report_folder(out, "--out")
    _workers(workers)
    if cluster is not None:
        from fleetsim.study.cluster import check_cluster

        check_cluster(cluster, "--cluster")


def _max_workers() -> int:
    return max(64, 4 * (os.cpu_count() or 1))


def _check_pdf(pdf: bool) -> None:
    """With --pdf, a browser to print with must be there before any work is done."""
    if pdf:
        from fleetsim.report.pdf import find_browser

        if find_browser() is None:
            raise InputError("--pdf", "expected Chromium to be installed (e.g. apt-get install "
                             "chromium) to print the report")


def _workers(n: int) -> int:
    if not 0 <= n <= _max_workers():
        raise InputError("--workers", f"expected 0 (all cores) to {_max_workers()}, got {n}")
    return n or (os.cpu_count() or 1)


#: The first variant's event log, written there as the replication runs (then copied
#: into the report's events.csv).
EVENTS_NAME = "events-0.csv"


def _run_variants(variants: Sequence[Variant], *, replications: int | None, seed: int | None,
                  engine: str | None, workers: int, cluster: Any, quiet: bool, resume: bool,
                  out_dir: Path) -> tuple[list[StudyResult], Path]:
    from fleetsim.study import run_study
    from fleetsim.study.cluster import study_cluster

    ck_dir = out_dir.parent / f".{out_dir.name}.checkpoints"
    results: list[StudyResult] = []
    with study_cluster(cluster, workers, "--cluster") as dask:  # one cluster for all variants
        if not resume and ck_dir.exists():
            for f in ck_dir.glob("*.jsonl"):
                f.unlink()
        ck_dir.mkdir(parents=True, exist_ok=True)
        for k, v in enumerate(variants):
            bar = _Progress(quiet, v.name[:30])
            try:
                results.append(run_study(
                    v.scenario, replications=replications, seed=seed, engine=engine,
                    workers=workers, cluster=dask, progress=bar, label=v.name,
                    checkpoint=ck_dir / f"variant-{k}.jsonl", keep_events=(k == 0),
                    events_file=ck_dir / EVENTS_NAME if k == 0 else None,
                ))
            finally:
                bar.close()
    return results, ck_dir


def _until(until_resolved: bool, zone: str, budget: int | None, replications: int) -> Any:
    """The --until-resolved settings (checked before any work), or None."""
    if not until_resolved:
        return None
    from fleetsim.study.sequential import settings

    return settings(zone, 8 * replications if budget is None else budget, replications)


def _decide(results: list[StudyResult], *, objective: str, baseline: int, workers: int,
            cluster: Any, quiet: bool, cost_settings: Sequence[str | None] | None = None,
            sensitivity_keys: Sequence[str] = (), until: Any = None) -> Decision:
    from fleetsim.study.decision import study_decision

    _note(quiet, "policy view (stationary start) of every variant, then stock sized by simulation")
    bar = _Progress(quiet, "policy view, stock")
    try:
        return study_decision(results, objective=objective, baseline=baseline, workers=workers,
                              cluster=cluster, progress=bar, cost_settings=cost_settings,
                              sensitivity_keys=sensitivity_keys, until=until)
    finally:
        bar.close()


def _finish(results: list[StudyResult], decision: Decision, out_dir: Path, ck_dir: Path,
            title: str, as_json: bool, quiet: bool, extra: dict[str, Any],
            evidence: Sequence[str] = (), **report_kw: Any) -> None:
    import json

    from fleetsim.report import summary_table, write_report

    stock = {a.bearing: a.order_up_to for a in decision.stock}
    extra = dict(extra)
    rate = results[0].scenario.costs.discount_rate_per_year
    discounted = (f"costs discounted at {100 * rate:.4g} % a year to present values at the start; "
                  "cost per year is the equivalent annual cost (budget view; the policy view "
                  "is the undiscounted long-run average)") if rate > 0 else ""
    if discounted:
        extra["cost_basis"] = discounted
    paths = write_report(results, out_dir, title=title, extra=extra,
                         recommended_stock=stock or None, decision=decision, **report_kw)
    for f in [*ck_dir.glob("*.jsonl"), *ck_dir.glob(EVENTS_NAME)]:
        f.unlink()
    try:
        ck_dir.rmdir()
    except OSError:
        pass
    summary = json.loads(Path(paths.summary_json).read_text())
    if as_json:
        summary["report"] = str(paths.html)
        summary["elapsed_s"] = sum(r.elapsed_s for r in results)
        echo_json(summary)
        return
    # The recommendation and its evidence first, then the tables, within the terminal's width.
    width = terminal_width()
    click.echo(paragraphs([*decision.lines(), *evidence], width))
    click.echo("")
    click.echo("\n".join(fit_lines(decision.table_lines(), width)))
    click.echo("\nBudget view (from today's fleet over the horizon):")
    click.echo(summary_table(results, width=width).rstrip())
    if discounted:
        click.echo(paragraphs([f"({discounted[0].upper()}{discounted[1:]}.)"], width))
    click.echo(f"\nReport: {paths.html}")
    click.echo("\n" + paragraphs([SAFETY_CAUTION], width))
    _note(quiet, f"{sum(len(r.replications) for r in results)} replications in "
                 f"{sum(r.elapsed_s for r in results):.1f} s (budget view)")


@click.command()
@click.argument("scenario", type=click.Path(dir_okay=False))
@_common
@click.option("--parameter-uncertainty", "param_draws", type=int, default=None, metavar="DRAWS",
              help="Draw the fitted field factors (with bounds) DRAWS times and run the "
                   "replications under each, on common random numbers.")  # fmt: skip
def run(scenario: str, replications: int | None, seed: int | None, out: str | None, engine: str,
        workers: int, cluster: str | None, resume: bool, quiet: bool, as_json: bool,
        objective: str, baseline: str | None, param_draws: int | None = None,
        pdf: bool = False, until_resolved: bool = False, indifference_zone: str = "1 %",
        replication_budget: int | None = None) -> None:
    """Simulate SCENARIO (and its [[variant]]s on the same seed) and write the report."""
    _check_options(replications, seed, workers, cluster, out)
    _check_pdf(pdf)
    from fleetsim.scenario.loader import text_digest
    from fleetsim.study.engines import choose_engines
    from fleetsim.study.variants import file_variants, read_document, with_baseline

    document, text = read_document(scenario)
    digest = text_digest(text)
    variants, base_index = with_baseline(document, file_variants(document, scenario, digest),
                                         scenario, digest, baseline)
    base = variants[0].scenario
    until = _until(until_resolved, indifference_zone, replication_budget,
                   replications or base.study.replications)
    chosen, why = choose_engines([(v.name, v.scenario) for v in variants], engine)
    _note(quiet, f"{base.study.name}: {len(variants)} variant(s), engine {chosen} ({why})")
    if param_draws is not None:
        from fleetsim.cli.uncertainty import run_uncertain

        run_uncertain(document, scenario, digest, param_draws, variants[1:], as_json,
                      replications=replications, seed=seed, engine=engine,
                      workers=_workers(workers), cluster=cluster)  # fmt: skip
        return
    out_dir = Path(out) if out else Path("reports") / slug(base.study.name)
    from fleetsim.study.cluster import study_cluster

    with study_cluster(cluster, _workers(workers), "--cluster") as dask:  # one for the study
        results, ck = _run_variants(variants, replications=replications, seed=seed,
                                    engine=engine, workers=_workers(workers), cluster=dask,
                                    quiet=quiet, resume=resume, out_dir=out_dir)
        decision = _decide(results, objective=objective, baseline=base_index,
                           workers=_workers(workers), cluster=dask, quiet=quiet, until=until)
    extra: dict[str, Any] = {"scenario_file": Path(scenario).name, "engine_choice": why}
    described = {v.name: v.description for v in variants if v.description}
    if described:
        extra["variant_descriptions"] = described
    _finish(results, decision, out_dir, ck, base.study.name, as_json, quiet, extra, pdf=pdf)


def _parse_vary(items: tuple[str, ...]) -> list[tuple[str, list[Any]]]:
    from fleetsim.study.variants import parse_values

    out = []
    for item in items:
        key, sep, values = item.partition("=")
        if not sep or not key.strip():
            raise InputError("--vary", f"expected KEY=VALUES such as policy.interval=20000 h,30000 h, got {item!r}")
        out.append((key.strip(), parse_values(values, f"--vary {key.strip()}")))
    return out


#: Swept keys whose values are durations, drawn as a cost curve: key → axis label.
SWEEP_AXES = {"policy.interval": "Replacement interval",
              "policy.inspection_every": "Inspection interval"}


@click.command()
@click.argument("scenario", type=click.Path(dir_okay=False))
@click.option("--vary", multiple=True, required=True,
              help="KEY=V1,V2,... [UNIT] or KEY=START:STOP:STEP UNIT; several --vary make a grid.")
@_common
@click.option("--parameter-uncertainty", "param_draws", type=int, default=None, metavar="DRAWS",
              help="Draw the fitted field factors (with bounds) DRAWS times and run the grid "
                   "under each, on common random numbers.")  # fmt: skip
def sweep(scenario: str, vary: tuple[str, ...], objective: str, replications: int | None,
          seed: int | None, out: str | None, engine: str, workers: int, cluster: str | None,
          resume: bool, quiet: bool, as_json: bool, baseline: str | None,
          param_draws: int | None = None, pdf: bool = False, until_resolved: bool = False,
          indifference_zone: str = "1 %", replication_budget: int | None = None) -> None:
    """Run every combination of --vary values on common random numbers, beside the base case.

    Sweeping a cost or price input is a sensitivity study: no recommendation.
    """
    _check_options(replications, seed, workers, cluster, out)
    _check_pdf(pdf)
    import dataclasses

    import pandas as pd

    from fleetsim import numbers
    from fleetsim.report.settings_words import (
        sweep_title,
        user_unit,
        value_words,
        variant_words,
    )
    from fleetsim.scenario.loader import text_digest
    from fleetsim.study.advice import analytic_cost_curve
    from fleetsim.study.decision import is_cost_input
    from fleetsim.study.summary import figure_estimate
    from fleetsim.study.variants import grid_variants, read_document, value_label, with_baseline
    from fleetsim.units import parse_quantity

    document, text = read_document(scenario)
    digest = text_digest(text)
    varies = _parse_vary(vary)
    points = grid_variants(document, varies, scenario, digest)
    if len(points) > 200:
        raise InputError("--vary", f"the grid has {len(points)} variants; expected at most 200")
    # Variants named in words ("replace at 40,000 h"), by the keys that take several values.
    many = {k for k, vals in varies if len(vals) > 1}
    points = [dataclasses.replace(v, name=variant_words(
        [(k, x) for k, x in v.overrides if k in many] or list(v.overrides))) for v in points]
    variants, base_index = with_baseline(document, points, scenario, digest, baseline)
    offset = len(variants) - len(points)  # 1 when the base case was added in front
    base = variants[base_index].scenario
    until = _until(until_resolved, indifference_zone, replication_budget,
                   replications or base.study.replications)
    swept = [(k, vals) for k, vals in varies if len(vals) > 1]
    sensitivity_keys = [k for k, _vals in swept if is_cost_input(k)]
    cost_settings = [None] * offset + [
        "; ".join(f"{k}={value_label(val)}" for k, val in v.overrides if k in sensitivity_keys)
        or None for v in points]
    fixed = [(k, vals[0]) for k, vals in varies if len(vals) == 1]
    _note(quiet, f"{base.study.name}: sweeping {len(variants)} variant(s)")
    if fixed:
        _note(quiet, "  set for every variant: "
              + "; ".join(f"{k}={value_label(v)}" for k, v in fixed))
    if param_draws is not None:
        from fleetsim.cli.uncertainty import run_uncertain
        from fleetsim.study.decision import OBJECTIVES

        figure, minimise, _words = OBJECTIVES[objective]
        run_uncertain(document, scenario, digest, param_draws, list(points), as_json,
                      include_base=False, objective=figure, highest=not minimise,
                      replications=replications, seed=seed, engine=engine,
                      workers=_workers(workers), cluster=cluster)  # fmt: skip
        return
    out_dir = Path(out) if out else Path("reports") / sweep_folder(base.study.name, vary)
    from fleetsim.study.cluster import study_cluster

    with study_cluster(cluster, _workers(workers), "--cluster") as dask:  # one for the study
        results, ck = _run_variants(variants, replications=replications, seed=seed,
                                    engine=engine, workers=_workers(workers), cluster=dask,
                                    quiet=quiet, resume=resume, out_dir=out_dir)
        decision = _decide(results, objective=objective, baseline=base_index,
                           workers=_workers(workers), cluster=dask, quiet=quiet,
                           cost_settings=cost_settings, sensitivity_keys=sensitivity_keys,
                           until=until)
    best = decision.recommended
    shown = decision.decided_on()
    extra: dict[str, Any] = {
        "objective": decision.figure,
        "best_variant": None if best is None else variants[best].name,
        "varied": [{"key": k, "values": [str(v) for v in vals]} for k, vals in varies],
    }
    sweep_table = None
    analytic = None
    axis = SWEEP_AXES.get(swept[0][0]) if len(swept) == 1 else None
    if axis is not None:
        hours = [parse_quantity(v, "time", f"--vary {swept[0][0]}") for v in swept[0][1]]
        rows = []
        for h, r, b in zip(hours, shown[offset:], results[offset:], strict=True):
            est = figure_estimate(r.replications["cost_per_year"], "cost_per_year")
            bud = figure_estimate(b.replications["cost_per_year"], "cost_per_year")
            rows.append({"interval_h": h, "mean": est.mean, "ci_low": est.low, "ci_high": est.high,
                         "view": decision.view, "budget_mean": bud.mean,
                         "budget_ci_low": bud.low, "budget_ci_high": bud.high})
        sweep_table = pd.DataFrame(rows)
        age_sweep = swept[0][0] == "policy.interval"  # the closed form is age replacement's
        if age_sweep and base.costs.discount_rate_per_year > 0:
            extra["analytic_note"] = ("no closed-form curve: it is an undiscounted long-run rate, "
                                      "and this study discounts its costs")
        elif age_sweep:
            lo, hi = min(hours), max(hours)
            grid = [lo + (hi - lo) * k / 200 for k in range(201)]
            analytic = analytic_cost_curve(points[0].scenario, grid)
            if analytic is not None:
                i = int(analytic["cost_rate"].idxmin())
                extra["analytic_optimum_interval_h"] = float(analytic["interval_h"][i])
                extra["analytic_optimum_cost_per_year"] = float(analytic["cost_rate"][i])
                extra["analytic_optimum_at_edge"] = i in (0, len(analytic) - 1)
                extra["analytic_note"] = ("long-run cost rate of age replacement (Barlow & "
                                          "Proschan), without waiting for spares or crews")
    best_at_edge = (best is not None and len(points) > 2
                    and best - offset in (0, len(points) - 1))
    extra["best_at_edge_of_range"] = best_at_edge
    title = sweep_title(base.study.name, swept)
    if sweep_table is not None:
        sweep_table["interval"] = [value_words(v) for v in swept[0][1]]
    unit = user_unit(swept[0][1]) if len(swept) == 1 else None
    evidence = []
    if best_at_edge:
        evidence.append("It is at the edge of the swept range: the optimum may lie beyond it; "
                        "widen the range.")
    if "analytic_optimum_interval_h" in extra:
        edge = (" — at the edge of the range, so it may lie beyond"
                if extra["analytic_optimum_at_edge"] else "")
        t_h = extra["analytic_optimum_interval_h"]
        at = numbers.hours(t_h)
        if unit is not None and unit not in ("h", "hour", "hours"):
            per = parse_quantity(f"1 {unit}", "time", f"--vary {swept[0][0]}")
            at = f"{numbers.with_unit(numbers.number(t_h / per), unit)} ({at})"
        evidence.append(f"Closed-form optimum interval (long-run quick estimate, no waiting for "
                        f"spares or crews): {at} at "
                        f"{numbers.money(extra['analytic_optimum_cost_per_year'], base.costs.currency)}"
                        f" per year{edge}.")
    _finish(results, decision, out_dir, ck, title, as_json, quiet, extra,
            evidence=evidence, sweep=sweep_table, sweep_analytic=analytic,
            sweep_parameter=axis or "Interval", pdf=pdf,
            subtitle=f"Sweep of {base.study.name!r}; each variant on the same random lives")


def sweep_folder(study: str, vary: Sequence[str]) -> str:
    """A report folder of its own for each sweep: the study and what was varied, in the name."""
    import hashlib

    what = slug("-".join(vary))
    if len(what) > 60:
        digest = hashlib.sha256("\n".join(vary).encode("utf-8", "surrogatepass")).hexdigest()[:8]
        what = what[:50].rstrip("-._") + "-" + digest
    return f"{slug(study)}-sweep-{what}"
