"""``summary.json``: the machine-readable record of a report.

It holds what is needed to reproduce and audit the numbers: the seed, the
library versions, the scenario digest, the engine, the replications, every
headline figure with its confidence interval for every variant, the
recommendation and its saving, and the safety caution. It holds no
timestamps, elapsed times, worker counts or paths, so the same inputs give
the same bytes.
"""

from __future__ import annotations

import dataclasses
import json
import math
from collections.abc import Mapping, Sequence
from pathlib import PurePath
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd

import fleetsim
from fleetsim.errors import InputError
from fleetsim.report.headline import difference, headline_figures, recommended_index
from fleetsim.study.result import StudyResult

if TYPE_CHECKING:
    from fleetsim.study.decision import Decision

#: Written into every summary; also how the writer recognises a report directory.
REPORT_FORMAT = "fleetsim-report/1"


def library_versions() -> dict[str, str]:
    """Versions of fleetsim and the numerical libraries behind the numbers."""
    import scipy
    import simpy

    return {
        "fleetsim": fleetsim.__version__,
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "simpy": getattr(simpy, "__version__", "unknown"),
        "pandas": pd.__version__,
    }


def jsonable(value: Any, where: str = "extra") -> Any:
    """``value`` as plain JSON types; NaN and infinities become None.

    Mappings, sequences, numpy scalars and arrays, pandas tables and series,
    dataclasses and paths are converted; anything else raises
    :class:`~fleetsim.errors.InputError` (its text form might not be stable).
    """
    if value is None or isinstance(value, bool | str):
        return value
    if isinstance(value, int | np.integer):
        return int(value)
    if isinstance(value, float | np.floating):
        v = float(value)
        return v if math.isfinite(v) else None
    if isinstance(value, np.bool_):
        return bool(value)
    if isinstance(value, pd.DataFrame):
        return [jsonable(row, where) for row in value.to_dict(orient="records")]
    if isinstance(value, pd.Series):
        return {str(k): jsonable(v, where) for k, v in value.items()}
    if isinstance(value, np.ndarray):
        return [jsonable(v, where) for v in value.tolist()]
    if isinstance(value, Mapping):
        return {str(k): jsonable(v, f"{where}.{k}") for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [jsonable(v, where) for v in value]
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return jsonable(dataclasses.asdict(value), where)
    if isinstance(value, PurePath):
        return str(value)
    raise InputError(
        where,
        f"expected JSON-like data (numbers, text, lists, mappings, tables), got {type(value).__name__}",
    )


def _variant(result: StudyResult, label: str, first: StudyResult | None) -> dict[str, Any]:
    out: dict[str, Any] = {
        "variant": label,
        "study": result.scenario.study.name,
        "scenario_digest": result.scenario.digest,
        "seed": int(result.seed),
        "engine": result.engine,
        "replications": len(result.replications),
        "horizon_h": float(result.horizon_h),
        "currency": result.scenario.costs.currency,
        "view": result.view,  # of the headline figures (budget: from today's fleet)
        "headline": [h.as_dict() for h in headline_figures(result)],
    }
    if (
        first is not None
        and "cost_per_year" in result.replications
        and "cost_per_year" in first.replications
    ):
        est, method = difference(first, result, "cost_per_year")
        out["saving_per_year_against_first"] = {
            "mean": jsonable(est.mean),
            "ci_low": jsonable(est.low),
            "ci_high": jsonable(est.high),
            "n": est.n,
            "method": method,
            "view": result.view,
        }
    return out


def summary_document(
    results: Sequence[StudyResult],
    labels: Sequence[str],
    *,
    title: str,
    executive_summary: Sequence[str],
    recommended_stock: Mapping[str, float] | None = None,
    sweep: pd.DataFrame | None = None,
    extra: Mapping[str, Any] | None = None,
    decision: Decision | None = None,
) -> dict[str, Any]:
    """The content of ``summary.json`` as plain JSON types.

    With a ``decision`` (:mod:`fleetsim.study.decision`) the document carries
    the JSON contract of a decision: ``baseline``, ``recommended`` (``variant,
    objective, view``), ``indistinguishable_from_best``, ``stock_advice``, and
    in every ``variants[]`` entry ``policy_view``. Without one, the
    recommendation is the lowest mean cost per year.
    """
    best = recommended_index(results)
    if decision is not None:
        best = decision.baseline if decision.recommended is None else decision.recommended
    doc: dict[str, Any] = {
        "report_format": REPORT_FORMAT,
        "title": title,
        "safety_caution": fleetsim.SAFETY_CAUTION,
        "versions": library_versions(),
        "recommended": {
            "index": best,
            "variant": labels[best],
            "rule": "lowest mean cost per year",
        },
        "executive_summary": list(executive_summary),
        "variants": [
            _variant(r, lab, results[0] if k > 0 else None)
            for k, (r, lab) in enumerate(zip(results, labels, strict=True))
        ],
    }
    if decision is not None:
        for k, entry in enumerate(doc["variants"]):
            entry.update(jsonable(decision.variant_json(k), "decision"))
        doc.update(jsonable(decision.as_json(), "decision"))
    if recommended_stock:
        doc["recommended_stock"] = jsonable(dict(recommended_stock), "recommended_stock")
    if sweep is not None:
        doc["sweep"] = jsonable(sweep, "sweep")
    if extra:
        doc["extra"] = jsonable(dict(extra), "extra")
    return doc


def dumps(doc: Mapping[str, Any]) -> str:
    """Stable JSON text: two-space indent, UTF-8 characters kept, final newline."""
    return json.dumps(doc, indent=2, ensure_ascii=False, allow_nan=False) + "\n"
