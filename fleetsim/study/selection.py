"""Which variants cannot be told apart from the best: multiple comparisons with the best.

Variants run on common random numbers share their replication seeds, so the
replications pair up and the paired differences D_ij = X_i − X_j have a small
variance. Following Nelson & Matejcik (1995, "Using common random numbers for
indifference-zone selection and multiple comparisons in simulation",
*Management Science* 41(12)), whose CRN procedure replaces the common variance
of Hsu's multiple comparisons with the best (Hsu 1984, "Constrained
simultaneous confidence intervals for multiple comparisons with the best",
*Annals of Statistics* 12(3)) by the variance of each pair and a Bonferroni
critical value, with k variants and n paired replications:

    w_ij = t_{1−α/(k−1), n−1} · S_ij / √n,   S_ij² the sample variance of D_ij,

and, for an objective to be minimised, with probability at least 1 − α
simultaneously for all i,

    μ_i − min_{j≠i} μ_j ∈ [ min(0, max_{j≠i}(X̄_i − X̄_j − w_ij)),
                            max(0, max_{j≠i}(X̄_i − X̄_j + w_ij)) ].

A variant whose lower bound is not above zero may be the best: the set of
such variants is :attr:`Selection.indistinguishable` (it contains the best
with probability ≥ 1 − α; it is the subset of Nelson, Swann, Goldsman & Song
2001, "Simple procedures for selecting the best simulated system when the
number of alternatives is large", *Operations Research* 49(6), with the
Bonferroni value for CRN). The upper bound says how much worse than the best
a variant can be: the basis of "these are within 1 % of each other".
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from scipy import stats

from fleetsim import numbers as fmt
from fleetsim.errors import InputError


@dataclass(frozen=True)
class Selection:
    """Multiple comparisons with the best of k variants on paired replications.

    Attributes
    ----------
    means
        Mean of the objective per variant.
    best
        Index of the best mean (the first on ties).
    indistinguishable
        Indexes of the variants that may be the best (best first, then in order).
    lower, upper
        Simultaneous bounds of how much worse than the best of the others each
        variant is (in the objective's unit, worse > 0); NaN with fewer than two
        replications.
    minimise
        True when lower values of the objective are better.
    confidence
        Simultaneous confidence level 1 − α.
    replications
        Paired replications n.
    """

    means: tuple[float, ...]
    best: int
    indistinguishable: tuple[int, ...]
    lower: tuple[float, ...]
    upper: tuple[float, ...]
    minimise: bool
    confidence: float
    replications: int

    @property
    def resolved(self) -> bool:
        """True when one variant alone may be the best."""
        return len(self.indistinguishable) == 1

    def within(self) -> float:
        """How much worse than the best any indistinguishable variant can be (upper bound)."""
        ups = [self.upper[i] for i in self.indistinguishable]
        return max(ups) if ups else 0.0


def _paired(values: Sequence[np.ndarray]) -> np.ndarray:
    rows = [np.asarray(v, dtype=float) for v in values]
    if not rows:
        raise InputError("variants", "expected at least one variant to select from")
    n = rows[0].size
    if any(r.size != n for r in rows):
        raise InputError("variants", "expected the same replications in every variant "
                                     "(common random numbers) to compare them")
    return np.vstack(rows)


def select_best(
    values: Sequence[np.ndarray], *, minimise: bool = True, confidence: float = 0.95
) -> Selection:
    """Multiple comparisons with the best on paired replications (see the module docstring).

    Parameters
    ----------
    values
        Per variant, the objective of each replication, in replication order
        (replication r of every variant ran on the same seed).
    minimise
        True for a cost, False for an availability.
    confidence
        Simultaneous confidence level.

    Returns
    -------
    Selection
    """
    if not 0.0 < confidence < 1.0:
        raise InputError("confidence", f"expected a level between 0 and 1, got {confidence}")
    x = _paired(values)
    if not minimise:
        x = -x
    k, n = x.shape
    finite = np.all(np.isfinite(x), axis=0)
    x = x[:, finite]
    n = x.shape[1]
    means = x.mean(axis=1) if n else np.full(k, math.nan)
    best = int(np.nanargmin(means)) if n else 0
    shown = tuple(float(m) if minimise else float(-m) for m in means)
    if k == 1 or n < 2:
        nan = (math.nan,) * k
        everyone = (best, *(i for i in range(k) if i != best))
        return Selection(shown, best, everyone, nan, nan, minimise, confidence, n)
    t = float(stats.t.ppf(1.0 - (1.0 - confidence) / (k - 1), n - 1))
    lower: list[float] = []
    upper: list[float] = []
    keep: list[int] = []
    for i in range(k):
        others = [j for j in range(k) if j != i]
        d = x[i] - x[others]                      # (k − 1, n) paired differences
        gap = d.mean(axis=1)
        w = t * d.std(axis=1, ddof=1) / math.sqrt(n)
        lo, hi = float(np.max(gap - w)), float(np.max(gap + w))
        lower.append(min(0.0, lo))
        upper.append(max(0.0, hi))
        if lo <= 0.0:
            keep.append(i)
    order = (best, *(i for i in keep if i != best))
    return Selection(shown, best, order, tuple(lower), tuple(upper), minimise, confidence, n)


def wording(selection: Selection, labels: Sequence[str], what: str, unit: str,
            share: bool = False) -> str:
    """One honest sentence on the selection, e.g. "A and B cannot be told apart ...".

    Parameters
    ----------
    selection
        The selection.
    labels
        Variant names.
    what
        The objective in words (``"cost per year"``).
    unit
        Its unit (``"EUR/year"``).
    share
        The objective is a share (0–1), shown in percentage points.
    """
    names = [labels[i] for i in selection.indistinguishable]
    level = f"{100 * selection.confidence:.0f} %"
    if selection.replications < 2:
        return f"With {selection.replications} replication the variants cannot be compared."
    if selection.resolved:
        return (f"{names[0]} is the best on {what} ({level} multiple comparisons with the best, "
                f"paired on common random numbers).")
    best = selection.means[selection.best]
    gap = selection.within()
    if share:
        amount, relative = f"{fmt.number(100 * gap, sig=2)} percentage points", ""
    else:
        amount = fmt.with_unit(fmt.number(gap), unit)
        relative = f" ({fmt.percent(gap / abs(best))} of the best)" if best else ""
    listed = ", ".join(names[:-1]) + f" and {names[-1]}"
    return (f"{listed} cannot be told apart on {what} ({level} multiple comparisons with the "
            f"best, paired on common random numbers): none is more than {amount}{relative} "
            "worse than the best.")
