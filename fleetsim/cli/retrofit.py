"""``fleetsim size --scenario``: a reliability target → ratings → a new selection, simulated."""

from __future__ import annotations

import hashlib
from pathlib import Path
from typing import Any

import click

from fleetsim import SAFETY_CAUTION
from fleetsim.cli.common import echo_json, fmt, quantity, slug, terminal_width
from fleetsim.errors import InputError


def size_scenario(scenario_path: str, catalog: str, life: str, target: float,
                  machines: tuple[str, ...], replications: int | None, out: str | None,
                  quiet: bool, as_json: bool, bore: str | float = "keep",
                  allocation: str = "equal", pdf: bool = False) -> None:
    """Plan the retrofit, simulate both selections, print and write the report."""
    from fleetsim import numbers
    from fleetsim.life import read_catalogue
    from fleetsim.report import summary_table, write_report
    from fleetsim.report.retrofit_table import retrofit_table
    from fleetsim.scenario import build_scenario
    from fleetsim.study import compare, paired_table
    from fleetsim.study.retrofit import machine_reliability, plan_retrofit
    from fleetsim.study.variants import read_document

    period_h = quantity(life, "time", "--life")
    assert period_h is not None
    if replications is not None and replications < 1:
        raise InputError("--replications", f"expected at least 1, got {replications}")
    try:
        entries = read_catalogue(catalog)
    except InputError as exc:
        raise InputError(f"--catalog {exc.where}", exc.expected) from None
    document, text = read_document(scenario_path)
    digest = hashlib.sha256(text.encode("utf-8", "surrogatepass")).hexdigest()
    today = build_scenario({k: v for k, v in document.items() if k != "variant"},
                           source=scenario_path, digest=digest)
    plan = plan_retrofit(today, document, entries, target, period_h, list(machines) or None,
                         bore=bore, allocation=allocation)
    doc = {k: v for k, v in plan.document.items() if k != "variant"}
    new = build_scenario(doc, source=f"{scenario_path} [new selection]", digest=digest)
    rel_now = machine_reliability(today, period_h)
    rel_new = machine_reliability(new, period_h)
    if not quiet:
        click.echo(f"Simulating today's bearings and the new selection "
                   f"({today.study.replications if replications is None else replications} "
                   f"replications each)...", err=True)
    results = compare({"Today's bearings": today, "New selection": new},
                      replications=replications, keep_events=False)
    from fleetsim.study.decision import study_decision

    decision = study_decision(results, stock_target=None)
    out_dir = Path(out) if out else Path("reports") / (slug(today.study.name) + "-retrofit")
    years = period_h / 8766.0
    rows = [
        {"machine": c.machine, "position": c.position, "current_bearing": c.current_bearing,
         "required_reliability": c.required_reliability, "required_rating_N": c.required_rating_N,
         "selected": c.selected, "selected_rating_N": c.selected_rating_N, "note": c.note,
         "reliability_today": c.reliability_today, "reliability_selected": c.reliability_selected}
        for c in plan.choices
    ]
    machines_out = {
        m: {"today": rel_now[m], "new": rel_new[m], "target": target,
            "meets_target": rel_new[m] >= target * (1 - 1e-12)}
        for m in rel_now if not machines or m in machines
    }
    diffs = paired_table(results)
    table = retrofit_table(today, new, plan.choices, period_h, target)
    paths = write_report(results, out_dir, title=f"{today.study.name}: bearings for "
                         f"{numbers.percent(target)} machine reliability over "
                         f"{numbers.number(years)} years",
                         subtitle="Today's bearings against a selection sized for the target, "
                         "simulated on the same random lives",
                         extra={"target": target, "period_h": period_h, "positions": rows,
                                "machine_reliability": machines_out},
                         decision=decision, decisions=[table], pdf=pdf)
    if as_json:
        obj: dict[str, Any] = {
            "target": target, "period_h": period_h, "positions": rows,
            "machine_reliability": machines_out,
            "cost_per_year": {v: {"mean": r["mean"], "ci_low": r["ci_low"], "ci_high": r["ci_high"],
                                  "diff_vs_today": r["diff_vs_first"], "diff_low": r["diff_low"],
                                  "diff_high": r["diff_high"]}
                              for v, r in diffs.iterrows()},
            "report": str(paths.html), "caution": SAFETY_CAUTION,
        }
        contract = decision.as_json()
        obj.update({k: contract[k] for k in ("baseline", "recommended",
                                             "indistinguishable_from_best")})
        obj["policy_view"] = {decision.labels[k]: decision.variant_json(k)["policy_view"]
                              for k in range(len(results))}
        echo_json(obj)
        return
    how = ("the target shared equally by the positions that can change"
           if allocation == "equal" else "the cheapest combination of bearings that meets it")
    for m, v in machines_out.items():
        click.echo(f"{m}: reliability over the period {v['today']:.4f} today → {v['new']:.4f} "
                   f"with the new selection ({'meets' if v['meets_target'] else 'misses'} "
                   f"{target:.4g})")
    click.echo("\n".join(decision.lines()))
    click.echo("")
    click.echo(f"Target: each machine {target:.4g} reliable over {years:.3g} years "
               f"(positions in series; {how})\n")
    w = max(len(f"{r['machine']}/{r['position']}") for r in rows)
    click.echo(f"{'position':<{w}}  {'today':<10} {'needs C':>9}  {'selected':<10} note")
    for c in plan.choices:
        need = fmt(None if c.required_rating_N is None else c.required_rating_N / 1e3, ".4g", "kN")
        click.echo(f"{c.machine + '/' + c.position:<{w}}  {c.current_bearing:<10} "
                   f"{need:>9}  {c.selected or '—':<10} {c.note}")
    click.echo("")
    click.echo(summary_table(results, width=terminal_width()).rstrip())
    click.echo(f"\nReport: {paths.html}\n\n{SAFETY_CAUTION}")
