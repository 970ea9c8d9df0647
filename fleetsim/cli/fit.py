"""``fleetsim fit``: fit life distributions to a plant's bearing records."""

from __future__ import annotations

import contextlib
import math
import os
import tempfile
import warnings
from datetime import date
from pathlib import Path
from typing import Any

import click

from fleetsim import SAFETY_CAUTION
from fleetsim.cli.common import echo_json, fmt, positive, quantity, table
from fleetsim.errors import InputError
from fleetsim.fit import (
    B_LIVES,
    CandidateFit,
    CatalogueComparison,
    CensoredSample,
    FieldFactorFit,
    FitError,
    FitResult,
    FitWarning,
    GroupCalibration,
    calibrate,
    compare_with_catalogue,
    field_factor_snippet,
    fit_field_factor,
    fit_records,
    fitted_life_entry,
    fitted_life_snippet,
    probability_plot,
    read_records,
    scaled_sample,
)
from fleetsim.fit.catalogue import verdict
from fleetsim.fit.records import DateRule
from fleetsim.life import life_shape
from fleetsim.scenario import load_scenario

_PARAM_LABELS = {
    "weibull": {"shape": "shape β", "scale_h": "scale η", "location_h": "location γ"},
    "lognormal": {"shape": "σ (of ln h)", "scale_h": "median e^μ", "location_h": "location"},
}


def _hours(v: float) -> str:
    if v is None or not math.isfinite(v):
        return "—"
    return f"{v:,.0f} h" if abs(v) >= 100 else f"{v:.3g} h"


def _life_dict(dist: Any) -> dict[str, Any] | None:
    """The fitted life as fleetsim's life model, or None when its shape is outside its bounds."""
    try:
        return dict(dist.to_life_distribution().as_dict())
    except InputError:
        return None


def _bounds(lo: float, hi: float, hours: bool) -> str:
    if not (math.isfinite(lo) and math.isfinite(hi)):
        return "[no bounds]"
    if hours:
        return f"[{_hours(lo)[:-2]} – {_hours(hi)}]"
    return f"[{fmt(lo)} – {fmt(hi)}]"


def _candidate_block(c: CandidateFit, recommended: bool) -> str:
    labels = _PARAM_LABELS[c.distribution.family]
    rows = []
    for p in c.parameters:
        hours = p.name.endswith("_h")
        value = _hours(p.estimate) if hours else fmt(p.estimate)
        rows.append((labels[p.name], f"{value:>12}  {_bounds(p.lower, p.upper, hours)}"))
    for pc in B_LIVES:
        b = c.b_life(pc)
        rows.append((b.name, f"{_hours(b.estimate):>12}  {_bounds(b.lower, b.upper, True)}"))
    for note in c.notes:
        rows.append(("note", note))
    title = f"{c.label}{' (recommended)' if recommended else ''} — {c.method}"
    return table([(f"  {k}", v) for k, v in rows], title=title)


def _records_line(s: CensoredSample) -> str:
    found = f" ({s.n_intervals} found at inspection)" if s.n_intervals else ""
    return (
        f"{s.n_records} records: {s.n_failures} failures{found}, "
        f"{s.n_suspensions} removed while good or still running"
    )


def _factor_block(
    result: FitResult,
    comparison: CatalogueComparison,
    factor: FieldFactorFit | None,
    calibration: GroupCalibration | None,
) -> str:
    if calibration is not None:
        cat = calibration.catalogue
        kind = "basic rating life" if cat.a_iso is None else f"a_ISO·L10, a_ISO {fmt(cat.a_iso, '.3g')}"
        n = len(cat.positions)
        where = ", ".join(cat.positions[:2]) + (f", … ({n} positions)" if n > 2 else "")
        l10 = f"{_hours(comparison.catalog_l10_h)} ({kind}; from the scenario: {where})"
    else:
        l10 = f"{_hours(comparison.catalog_l10_h)} (given)"
    rows = [("Catalogue L10", l10)]
    if factor is not None:
        rows.append(
            (
                "Field factor",
                f"{fmt(factor.estimate, '.3g')} {_bounds(factor.lower, factor.upper, False)}  "
                f"(shape {fmt(factor.model.shape, '.4g')} of the {factor.model.name} model held; "
                "use as field_factor)",
            )
        )
        rows += [("note", n) for n in factor.notes]
    rows += [
        (
            "Free fit B10 / L10",
            f"{fmt(comparison.factor, '.3g')} "
            f"{_bounds(comparison.factor_lower, comparison.factor_upper, False)}  "
            f"(B10 {_hours(comparison.field_b10.estimate)} of the {result.recommended.label})",
        ),
        (
            "Characteristic life",
            f"{fmt(comparison.characteristic_factor, '.3g')} "
            f"{_bounds(comparison.characteristic_factor_lower, comparison.characteristic_factor_upper, False)}"
            f"  (field B63.2 / catalogue {_hours(comparison.catalog_characteristic_h)})",
        ),
    ]
    if factor is not None:
        rows.append(
            ("Verdict", verdict(factor.estimate, factor.lower, factor.upper, factor.confidence))
        )
    else:
        rows.append(("Verdict", comparison.verdict))
    return table(rows)


def _text(
    name: str | None,
    result: FitResult,
    comparison: Any,
    factor: FieldFactorFit | None = None,
    calibration: GroupCalibration | None = None,
) -> str:
    s = result.sample
    crit = result.rank_by
    rows = [
        ("Records", s.label),
        ("Data", _records_line(s)),
        (
            "Bounds",
            f"two-sided {100 * result.confidence:g} %; ranked by {crit} (smaller is better)",
        ),
    ]
    bw = result.best_weibull
    if bw is not None:
        d = bw.distribution
        rows.append(
            (
                "Life model",
                f"{bw.label}: shape {fmt(d.shape)}, scale {_hours(d.scale_h)}, "
                f"location {_hours(d.location_h)} (recommended Weibull)",
            )
        )
    choice = result.choice
    assert choice is not None
    rows.append(("Recommended", result.recommended.label))
    if choice.location is not None:
        t = choice.location
        rows.append(
            (
                "Location test",
                f"D = {fmt(t.statistic, '.2f')}, p = {fmt(t.p_value, '.2g')} "
                f"(½χ²₀ + ½χ²₁, level {fmt(t.level, '.3g')}): "
                + ("rejects location 0" if t.rejects else "location 0 not rejected"),
            )
        )
    head = table(rows)
    deltas = [float(d) for d in result.summary[f"delta_{crit}"]]
    lines = [
        f"{'rank':<6}{'model':<14}{'AICc':>11}{'BIC':>11}{'Δ' + crit:>10}{'weight':>8}  "
        "ln L      why"
    ]
    for i, (c, delta) in enumerate(zip(result.candidates, deltas, strict=True), start=1):
        mark = "*" if c.model == choice.recommended else (" " if c.identifiable else "!")
        lines.append(
            f"{str(i) + ' ' + mark:<6}{c.label:<14}{fmt(c.aicc, '.1f'):>11}{fmt(c.bic, '.1f'):>11}"
            f"{fmt(delta, '.2f'):>10}{fmt(choice.akaike_weights[c.model], '.2f'):>8}  "
            f"{fmt(c.log_likelihood, '.2f'):<9} {choice.reasons.get(c.model, '')}"
        )
    for model, reason in result.not_fitted:
        lines.append(f"{'-':<6}{model:<14}  not fitted: {reason}")
    lines.append("(* recommended; ! not identifiable; weight = Akaike weight from AICc)")
    lines.append(f"Rule: {choice.rule}.")
    blocks = [head, "\n".join(lines)]
    blocks += [
        _candidate_block(c, c.model == choice.recommended) for c in result.candidates
    ]
    if comparison is not None:
        blocks.append(_factor_block(result, comparison, factor, calibration))
    return "\n\n".join(blocks)


def _json(
    name: str | None,
    result: FitResult,
    comparison: Any,
    factor: FieldFactorFit | None = None,
    calibration: GroupCalibration | None = None,
) -> dict[str, Any]:
    s = result.sample
    crit = result.rank_by
    deltas = [float(d) for d in result.summary[f"delta_{crit}"]]
    choice = result.choice
    assert choice is not None
    cands = []
    for i, (c, delta) in enumerate(zip(result.candidates, deltas, strict=True), start=1):
        cands.append(
            {
                "rank": i,
                "model": c.model,
                "label": c.label,
                "best": i == 1,
                "recommended": c.model == choice.recommended,
                "akaike_weight": choice.akaike_weights[c.model],
                "why": choice.reasons.get(c.model, ""),
                "identifiable": c.identifiable,
                "log_likelihood": c.log_likelihood,
                "AICc": c.aicc,
                "BIC": c.bic,
                f"delta_{crit}": delta,
                "distribution": c.distribution.as_dict(),
                "parameters": {p.name: p.as_dict() for p in c.parameters},
                **{f"B{pc:g}_h": c.b_life(pc).as_dict() for pc in B_LIVES},
                "method": c.method,
                "notes": list(c.notes),
            }
        )
    bw = result.best_weibull
    prof = result.location_profile
    return {
        "group": name,
        "records": {
            "n": s.n_records,
            "failures": s.n_failures,
            "found_at_inspection": s.n_intervals,
            "suspensions": s.n_suspensions,
        },
        "best": result.best.model,
        "recommended": choice.recommended,
        "recommended_weibull": choice.recommended_weibull,
        "akaike_weights": dict(choice.akaike_weights),
        "choice_rule": choice.rule,
        "location_test": choice.location.as_dict() if choice.location is not None else None,
        "best_weibull": bw.model if bw else None,
        "life_distribution": _life_dict(bw.distribution) if bw else None,
        "candidates": cands,
        "not_fitted": [{"model": m, "reason": r} for m, r in result.not_fitted],
        "location_profile": None
        if prof is None
        else {
            "estimate_h": prof.estimate_h,
            "lower_h": prof.lower_h,
            "upper_h": prof.upper_h,
            "limit_h": prof.limit_h,
            "identifiable": prof.identifiable,
            "reason": prof.reason,
        },
        "catalogue": comparison.as_dict() if comparison is not None else None,
        "field_factor": factor.as_dict() if factor is not None else None,
        "scenario_positions": list(calibration.catalogue.positions) if calibration else None,
        "a_iso": calibration.catalogue.a_iso if calibration else None,
    }


def _plot_folder(path: str, option: str = "--plot") -> Path:
    """The folder an output file goes to; InputError when it does not exist."""
    parent = Path(path).parent
    if not parent.is_dir():
        raise InputError(option, f"the folder {str(parent)!r} does not exist")
    return parent


def _write_text(text: str, path: str, option: str) -> None:
    """Write a text file atomically (a temporary file beside it, then os.replace)."""
    target = Path(path)
    parent = _plot_folder(path, option)
    fd, tmp = tempfile.mkstemp(dir=parent, prefix=f".{target.name}.", suffix=".tmp")
    try:
        with os.fdopen(fd, "w", encoding="utf-8") as fh:
            fh.write(text)
        os.replace(tmp, target)
    except OSError as exc:
        raise InputError(option, f"cannot write {path!r} ({exc.strerror})") from None
    finally:
        with contextlib.suppress(FileNotFoundError):
            os.unlink(tmp)


def _free_summary(result: FitResult, comparison: CatalogueComparison | None) -> str:
    """One line on the free fit, for the snippet's comments."""
    c = result.recommended
    d = c.distribution
    line = f"{c.label}, shape {d.shape:.3g}, scale {d.scale_h:,.0f} h"
    if comparison is not None:
        line += f"; B10 / L10 = {comparison.factor:.3g}"
    return line


def _write_png(fig: Any, path: str) -> None:
    """Write a figure as PNG atomically: a temporary file beside it, then os.replace."""
    target = Path(path)
    parent = _plot_folder(path)
    fd, tmp = tempfile.mkstemp(dir=parent, prefix=f".{target.name}.", suffix=".png")
    os.close(fd)
    try:
        fig.savefig(tmp, format="png", dpi=150)
        os.replace(tmp, target)
    except OSError as exc:
        raise InputError("--plot", f"cannot write {path!r} ({exc.strerror})") from None
    finally:
        with contextlib.suppress(FileNotFoundError):
            os.unlink(tmp)


def _pairs(values: tuple[str, ...], option: str) -> dict[str, str]:
    """``("A=b", ...)`` → ``{"A": "b"}``; InputError naming the option otherwise."""
    out = {}
    for v in values:
        key, sep, val = v.partition("=")
        if not sep or not key.strip() or not val.strip():
            raise InputError(option, f"expected NAME=VALUE, got {v!r}")
        out[key.strip()] = val.strip()
    return out


@click.command("fit")
@click.argument("records", metavar="RECORDS.(csv|xlsx)")
@click.option(
    "--group-by",
    type=click.Choice(["position", "bearing"]),
    help="Fit each position or each bearing designation separately.",
)
@click.option(
    "--catalog-l10",
    "catalog_l10",
    metavar="Q",
    help="Catalogue rating life L10 with a unit, e.g. '40000 h': gives the field factor B10/L10.",
)
@click.option(
    "--scenario",
    "scenario_path",
    metavar="SCEN.toml",
    help="Take each group's catalogue life (with its a_ISO) and life model from this scenario.",
)
@click.option(
    "--factors-out",
    "factors_out",
    metavar="FILE.toml",
    help="With --scenario: write the field factors as [[field_factor]] entries to include.",
)
@click.option(
    "--life-out",
    "life_out",
    metavar="FILE.toml",
    help="With --group-by position: write each group's recommended Weibull with the covariance "
    "of its log-parameters as [[fitted_life]] entries to include.",
)
@click.option("--sheet", metavar="NAME", help="Sheet of an .xlsx records file (default: the first).")
@click.option(
    "--column",
    "column_map",
    multiple=True,
    metavar="THEIRS=OURS",
    help="A column of a work-order export and the records column it holds, e.g. "
    "'Equipment=machine' (repeatable).",
)
@click.option(
    "--outcome-word",
    "outcome_map",
    multiple=True,
    metavar="THEIRS=OURS",
    help="An outcome word of the export and ours, e.g. 'Breakdown=failed' (repeatable).",
)
@click.option(
    "--running-share",
    type=click.FloatRange(0.0, 1.0, min_open=True),
    help="Share of calendar time the machines run, for records given by dates "
    "(default: each machine's share in --scenario).",
)
@click.option("--as-of", "as_of", metavar="DATE", help="Date still-running bearings count to.")
@click.option(
    "--confidence",
    type=click.FloatRange(0.5, 0.999),
    default=0.90,
    show_default=True,
    help="Two-sided level of the bounds.",
)
@click.option("--rank-by", type=click.Choice(["AICc", "BIC"]), default="AICc", show_default=True)
@click.option("--plot", "plot_path", metavar="PNG", help="Write a Weibull probability plot.")
@click.option("--json", "as_json", is_flag=True, help="Print one JSON object.")
def fit(
    records: str,
    group_by: str | None,
    catalog_l10: str | None,
    scenario_path: str | None,
    factors_out: str | None,
    life_out: str | None,
    sheet: str | None,
    column_map: tuple[str, ...],
    outcome_map: tuple[str, ...],
    running_share: float | None,
    as_of: str | None,
    confidence: float,
    rank_by: str,
    plot_path: str | None,
    as_json: bool,
) -> None:
    """Fit Weibull (2P, 3P) and lognormal lives to bearing records.

    RECORDS.csv has one row per bearing life with columns hours, outcome
    (failed, removed-while-good, still-running), optional position, bearing,
    machine, note, and hours_from/hours_to for failures found at an
    inspection. Candidates are ranked by AICc; the recommended model is the
    simplest the records support (a richer one needs ΔAICc > 2; a Weibull
    location needs a boundary-corrected likelihood-ratio test). Bounds are
    two-sided. With --scenario each group's catalogue life (with a_ISO) and
    life model come from the scenario, and the field factor is fitted with
    the model's shape held; --factors-out writes them for `include`.
    """
    l10_h = positive(quantity(catalog_l10, "time", "--catalog-l10"), "--catalog-l10", "life")
    if scenario_path and l10_h is not None:
        raise InputError(
            "--catalog-l10",
            "give either --catalog-l10 or --scenario (which gives each group its own catalogue life)",
        )
    if factors_out and not scenario_path:
        raise InputError("--factors-out", "needs --scenario (the factors are for its positions)")
    if factors_out:
        _plot_folder(factors_out, "--factors-out")
    if life_out:
        _plot_folder(life_out, "--life-out")
        if group_by not in (None, "position") or (group_by is None and scenario_path is None):
            raise InputError("--life-out", "needs --group-by position (an entry names a position)")
    if plot_path:
        _plot_folder(plot_path)
    scen = load_scenario(scenario_path) if scenario_path else None
    try:
        as_of_date = date.fromisoformat(as_of) if as_of else None
    except ValueError:
        raise InputError("--as-of", f"expected a date like 2024-03-01, got {as_of!r}") from None
    shares = {m.id: m.operating_share for m in scen.machines} if scen is not None else {}
    recs = read_records(
        records,
        sheet=sheet,
        columns={k: v for k, v in _pairs(column_map, "--column").items()},
        outcome_words=_pairs(outcome_map, "--outcome-word"),
        dates=DateRule(shares, running_share, as_of_date),
    )
    if scen is not None and group_by is None:
        group_by = "position" if "position" in recs.columns else "bearing"
    samples: dict[str | None, CensoredSample]
    if group_by:
        samples = {name: s for name, s in recs.groups(group_by).items()}
    else:
        samples = {None: recs.sample()}
    results: dict[str | None, FitResult] = {}
    errors: dict[str | None, str] = {}
    for name, sample in samples.items():
        try:
            results[name] = fit_records(sample, confidence=confidence, rank_by=rank_by)
        except FitError as exc:
            if group_by is None:
                raise
            errors[name] = str(exc)
            warnings.warn(f"not fitted: {exc}", FitWarning, stacklevel=1)
    if not results:
        raise InputError(records, "no group could be fitted: " + "; ".join(errors.values()))
    calibrations: dict[str | None, GroupCalibration] = {}
    factors: dict[str | None, FieldFactorFit | None] = {}
    comparisons: dict[str | None, CatalogueComparison | None] = {}
    if scen is not None:
        assert group_by is not None
        parts_by = recs.group_records(group_by)
        for name, r in results.items():
            assert name is not None
            try:
                cal = calibrate(parts_by[name], group_by, name, scen, confidence)
            except FitError as exc:
                warnings.warn(f"no field factor: {exc}", FitWarning, stacklevel=1)
                factors[name], comparisons[name] = None, None
                continue
            calibrations[name], factors[name] = cal, cal.factor
            comparisons[name] = compare_with_catalogue(
                r, cal.catalogue.typical_l10_h, cal.catalogue.model
            )
    for name, r in results.items():
        if l10_h is not None:
            model = life_shape("iso281")
            factors[name] = fit_field_factor(
                scaled_sample(r.sample, l10_h), model, confidence, l10_h
            )
            comparisons[name] = compare_with_catalogue(r, l10_h, model)
        comparisons.setdefault(name, None)
        factors.setdefault(name, None)
    if life_out:
        by_pos = recs.group_records("position")
        entries = []
        for name, r in results.items():
            assert name is not None
            bearings = sorted(set(by_pos[name].table["bearing"]) - {""})
            entry = fitted_life_entry(r, name, bearings[0] if len(bearings) == 1 else None)
            if entry is None:
                warnings.warn(f"position {name}: no Weibull to write", FitWarning, stacklevel=1)
            else:
                entries.append(entry)
        _write_text(fitted_life_snippet(entries, records), life_out, "--life-out")
    if factors_out and scen is not None:
        free = {
            str(n): _free_summary(results[n], comparisons[n]) for n in calibrations
        }
        snippet = field_factor_snippet(list(calibrations.values()), scen, records, free)
        _write_text(snippet, factors_out, "--factors-out")
    if plot_path:
        from matplotlib.figure import Figure

        fig = Figure(figsize=(7.5, 5.5), layout="constrained")
        ax = fig.add_subplot()
        for name, r in results.items():
            probability_plot(r, ax, label=f"{group_by} {name}" if name is not None else None)
        _write_png(fig, plot_path)
    if as_json:
        echo_json(
            {
                "records": records,
                "group_by": group_by,
                "confidence": confidence,
                "rank_by": rank_by,
                "scenario": scenario_path,
                "factors_out": factors_out,
                "groups": [
                    _json(n, r, comparisons[n], factors[n], calibrations.get(n))
                    for n, r in results.items()
                ]
                + [{"group": n, "error": e} for n, e in errors.items()],
                "plot": plot_path,
                "caution": SAFETY_CAUTION,
            }
        )
        return
    parts = [
        _text(n, r, comparisons[n], factors[n], calibrations.get(n)) for n, r in results.items()
    ]
    parts += [f"{group_by} {n}: not fitted: {e}" for n, e in errors.items()]
    if plot_path:
        parts.append(f"Probability plot written to {plot_path}")
    if factors_out:
        parts.append(
            f"Field factors written to {factors_out}; take them into the scenario with "
            f'include = ["{factors_out}"] (a name relative to the scenario\'s folder)'
        )
    click.echo(("\n\n" + "=" * 72 + "\n\n").join(parts))
    click.echo(f"\n{SAFETY_CAUTION}")
