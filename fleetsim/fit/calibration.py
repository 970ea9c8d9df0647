"""Field factors of record groups against a scenario, and the TOML snippet that carries them.

:func:`calibrate` takes a group of records, finds each record's catalogue
life in the scenario (:mod:`fleetsim.fit.scenario_lives`) and fits the
fixed-shape field factor (:mod:`fleetsim.fit.field_factor`).
:func:`field_factor_snippet` writes the factors as ``[[field_factor]]``
entries that the scenario takes with ``include = ["FILE.toml"]``
(:mod:`fleetsim.scenario.field_factors`).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

from fleetsim.fit.field_factor import FieldFactorFit, fit_field_factor
from fleetsim.fit.fitting import FitResult
from fleetsim.fit.records import FieldRecords
from fleetsim.fit.scenario_lives import CatalogueLife, catalogue_lives
from fleetsim.scenario.model import Scenario


@dataclass(frozen=True)
class GroupCalibration:
    """The field factor of one group of records against the scenario.

    Attributes
    ----------
    by, group
        The grouping column (``position`` or ``bearing``) and its value.
    catalogue
        The records' catalogue lives from the scenario.
    factor
        The fixed-shape field factor with its bounds.
    """

    by: str
    group: str
    catalogue: CatalogueLife
    factor: FieldFactorFit


def calibrate(
    records: FieldRecords, by: str, group: str, scenario: Scenario, confidence: float = 0.90
) -> GroupCalibration:
    """The field factor of ``records`` (one group) against ``scenario``'s catalogue lives.

    Raises
    ------
    InputError
        When a record matches no scenario position or is ambiguous (see
        :func:`fleetsim.fit.scenario_lives.catalogue_lives`).
    FitError
        When the factor cannot be fitted (no failure, no maximum).
    """
    cat = catalogue_lives(records, scenario, f"{by} {group}")
    sample = records.sample(label=f"{records.source} [{by} {group}]", per_l10_h=cat.l10_h)
    fit = fit_field_factor(sample, cat.model, confidence, cat.typical_l10_h)
    if cat.mixed:
        fit = FieldFactorFit(
            **{
                **fit.__dict__,
                "notes": fit.notes
                + ("records of several catalogue lives; catalogue_life_h is their geometric mean",),
            }
        )
    return GroupCalibration(by=by, group=group, catalogue=cat, factor=fit)


def _num(x: float) -> str:
    return f"{x:.3g}" if math.isfinite(x) else "nan"


def field_factor_snippet(
    calibrations: Sequence[GroupCalibration],
    scenario: Scenario,
    records_source: str,
    free_fits: dict[str, str] | None = None,
) -> str:
    """A TOML snippet of ``[[field_factor]]`` entries, commented, for ``include = [...]``.

    Each entry names the position, and the bearing when the group's scenario
    positions share one; ``machines`` is added when the records describe only
    some of the machines that have that position and bearing.
    ``free_fits`` maps a group to a one-line summary of its free fit (a comment).
    """
    lines = [
        f"# Field factors fitted by fleetsim from {records_source}",
        f"# against the catalogue lives of {scenario.source} (the life model's shape held fixed).",
        "# Take them into the scenario with a top-level line:",
        '#     include = ["<this file>"]',
        "# Each entry sets field_factor on the positions it names; a position that has its own",
        "# field_factor must lose it first. Planning estimates only.",
    ]
    for c in calibrations:
        for pos in sorted({w.split("/", 1)[1].split("#", 1)[0] for w in c.catalogue.positions}):
            lines += ["", *_entry(c, pos, scenario, free_fits)]
    return "\n".join(lines) + "\n"


def _entry(
    c: GroupCalibration, pos: str, scenario: Scenario, free_fits: dict[str, str] | None
) -> list[str]:
    f, cat = c.factor, c.catalogue
    here = [w for w in cat.positions if w.split("/", 1)[1].split("#", 1)[0] == pos]
    machines = tuple(dict.fromkeys(w.split("/", 1)[0] for w in here))
    lines = ["[[field_factor]]", f'position = "{pos}"']
    if len(cat.bearings) == 1:
        lines.append(f'bearing = "{cat.bearings[0]}"')
    same = [
        m.id
        for m in scenario.machines
        if any(p.id.split("#", 1)[0] == pos and p.bearing_id in cat.bearings for p in m.positions)
    ]
    if set(same) != set(machines):
        lines.append("machines = [" + ", ".join(f'"{m}"' for m in machines) + "]")
    lines += [
        f"factor = {_num(f.estimate)}",
        f"lower = {_num(f.lower)}",
        f"upper = {_num(f.upper)}",
        f"confidence = {f.confidence:g}",
        f"failures = {f.n_failures}",
    ]
    iso = "" if cat.a_iso is None else f", a_ISO {cat.a_iso:.3g} included"
    lines.append(
        f"# {c.by} {c.group}: {f.n_failures} failures in {f.n_records} records; catalogue L10 "
        f"{cat.typical_l10_h:,.0f} h{iso}; shape {f.model.shape:g} held ({f.model.name})"
    )
    if not math.isnan(cat.field_factor_now) and cat.field_factor_now != 1.0:
        lines.append(f"# the scenario has field_factor = {cat.field_factor_now:g} here today")
    if free_fits and c.group in free_fits:
        lines.append(f"# free fit: {free_fits[c.group]}")
    return lines


def fitted_life_entry(
    fit: FitResult, position: str, bearing: str | None = None
) -> list[str] | None:
    """A ``[[fitted_life]]`` entry of the recommended Weibull of one group, or None.

    The covariance is that of (ln scale, ln shape): the fit's covariance of
    (scale, shape) divided by the product of the two estimates (the delta
    method for the logarithm), so a draw ln θ ~ N(ln θ̂, Σ) keeps both positive.
    A three-parameter fit keeps its location fixed at the estimate.
    """
    w = fit.best_weibull
    if w is None or w.covariance is None:
        return None
    names = list(w.cov_names)
    i, j = names.index("scale_h"), names.index("shape")
    d = w.distribution
    cov = w.covariance
    p = (d.scale_h, d.shape)
    log_cov = [
        [float(cov[a, b]) / (p[x] * p[y]) for y, b in enumerate((i, j))] for x, a in enumerate((i, j))
    ]
    lines = ["[[fitted_life]]", f'position = "{position}"']
    if bearing:
        lines.append(f'bearing = "{bearing}"')
    lines += [
        f'model = "{w.model}"',
        f"shape = {d.shape:.6g}",
        f'scale = "{d.scale_h:.6g} h"',
        f'location = "{d.location_h:.6g} h"',
        f"covariance = [[{log_cov[0][0]:.6g}, {log_cov[0][1]:.6g}], [{log_cov[0][1]:.6g}, {log_cov[1][1]:.6g}]]",
        f"failures = {fit.sample.n_failures}",
        f"# the recommended Weibull ({w.label}) of {fit.sample.n_records} records; "
        "covariance of (ln scale, ln shape)",
    ]
    return lines


def fitted_life_snippet(entries: Sequence[list[str]], records_source: str) -> str:
    """A TOML snippet of ``[[fitted_life]]`` entries, commented, for ``include = [...]``."""
    head = [
        f"# Life distributions fitted by fleetsim from {records_source} (the recommended Weibull",
        "# of each group, with the covariance of its log-parameters). Take them into a scenario",
        '# with a top-level line  include = ["<this file>"]. Each entry replaces the life of the',
        "# positions it names (loads and speed no longer count). Planning estimates only.",
    ]
    body: list[str] = []
    for e in entries:
        body += ["", *e]
    return "\n".join(head + body) + "\n"
