"""``fleetsim run --parameter-uncertainty DRAWS``: nested replications over fitted factors."""

from __future__ import annotations

import math
from typing import Any

import click

from fleetsim import SAFETY_CAUTION
from fleetsim.cli.common import echo_json
from fleetsim.numbers import number
from fleetsim.study.uncertainty import run_parameter_uncertainty
from fleetsim.study.variants import Variant

FIGURES = ("cost_per_year", "failures", "availability")


def run_uncertain(
    document: dict[str, Any],
    source: str,
    digest: str,
    draws: int,
    variants: list[Variant],
    as_json: bool,
    *,
    include_base: bool = True,
    objective: str = "cost_per_year",
    highest: bool = False,
    **study_kwargs: Any,
) -> None:
    """Run the base case and ``variants`` under ``draws`` parameter draws and print the figures.

    ``objective`` (highest best when ``highest``) picks the recommended variant.
    """
    res = run_parameter_uncertainty(
        document, source, digest, draws, variants, include_base=include_base, **study_kwargs
    )
    known = [f for f in dict.fromkeys((objective, *FIGURES)) if f in res.results[0][0].replications]
    table = res.summary(known)
    best, share = res.recommendation(objective, highest)
    if as_json:
        echo_json(
            {
                "scenario": source,
                "parameter_draws": draws,
                "uncertain_factors": [
                    {"entry": u.index, "label": u.label, "estimate": u.estimate, "log_se": u.log_se}
                    for u in res.uncertain
                ],
                "uncertain_lives": [
                    {"entry": u.index, "label": u.label, "scale_h": u.scale_h, "shape": u.shape,
                     "log_covariance": [list(r) for r in u.log_covariance]}
                    for u in res.lives
                ],
                "figures": table.to_dict(orient="records"),
                "recommended": {"variant": best, "share_of_draws": share,
                                "objective": objective},  # fmt: skip
                "caution": SAFETY_CAUTION,
            }
        )
        return
    lines = [
        f"Parameter uncertainty: {draws} draws of {len(res.uncertain)} fitted field factor(s) "
        f"and {len(res.lives)} fitted life(s), "
        f"{res.results[0][0].replications.shape[0]} replications each on common random numbers",
    ]
    for u in res.uncertain:
        lines.append(f"  {u.label}: factor {u.estimate:.3g}, SE of its log {u.log_se:.3g}")
    for lu in res.lives:
        lines.append(
            f"  {lu.label}: shape {lu.shape:.3g}, scale {number(lu.scale_h)} h, SE of ln scale "
            f"{math.sqrt(lu.log_covariance[0][0]):.3g}, of ln shape {math.sqrt(lu.log_covariance[1][1]):.3g}"
        )
    lines.append("")
    lines.append(f"{'variant':<34}{'figure':<20}{'mean':>12}  95 % interval (parameters + Monte "
                 "Carlo)   parameter sd")  # fmt: skip
    for row in table.itertuples():
        lines.append(
            f"{row.variant[:33]:<34}{row.figure:<20}{number(row.mean):>12}  "
            f"{'[' + number(row.low) + ' – ' + number(row.high) + ']':<42}{number(row.between_sd)}"
        )
    lines.append("")
    lines.append(
        f"Best on {objective}: {best} — the same in {100 * share:.0f} % of plausible parameter sets."
    )
    lines.append("(No HTML report for a parameter-uncertainty run yet.)")
    click.echo("\n".join(lines))
    click.echo(f"\n{SAFETY_CAUTION}")
