"""Plain-text helpers of the report: variant labels and safe figure text.

Numbers are formatted by :mod:`fleetsim.report.numbers`.
"""

from __future__ import annotations

from collections.abc import Sequence

from fleetsim.study.result import StudyResult


def variant_labels(results: Sequence[StudyResult]) -> list[str]:
    """One unique, non-empty label per result, in order.

    An empty label becomes the study name (or ``"variant k"``); repeated
    labels get `` (2)``, `` (3)``, ... appended.
    """
    out: list[str] = []
    for k, r in enumerate(results, start=1):
        base = r.label.strip() or r.scenario.study.name.strip() or f"variant {k}"
        label, n = base, 2
        while label in out:
            label, n = f"{base} ({n})", n + 1
        out.append(label)
    return out


def mpl_text(text: str) -> str:
    """Text safe to give matplotlib: no mathtext from ``$``, no hidden ``_`` legend labels."""
    safe = text.replace("$", r"\$")
    if safe.startswith("_"):
        safe = " " + safe
    return safe
