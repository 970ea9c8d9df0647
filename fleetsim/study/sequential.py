"""Replications added until the best variant is resolved to an indifference zone.

A fixed number of replications may leave several variants that cannot be told
apart (:mod:`fleetsim.study.selection`). Here replications are added in
batches, on common random numbers (replication r of every variant on the same
seed), and variants are screened out by the fully sequential procedure of
Kim & Nelson (2001, "A fully sequential procedure for indifference-zone
selection in simulation", *ACM Transactions on Modeling and Computer
Simulation* 11(3), 251–273; constants below from memory), which allows common
random numbers because it works on the variance of each pair's differences:

* First stage: n0 replications of every variant; S²_il is the sample
  variance of the paired differences X_i − X_l over them.
* η = ½ [(2α / (k − 1))^(−2/(n0 − 1)) − 1],  h² = 2η(n0 − 1).
* After r replications, with X̄ the means over them (an objective to be
  maximised; a cost is negated), variant i stays while for every other
  survivor l

      X̄_i(r) ≥ X̄_l(r) − W_il(r),   W_il(r) = max(0, δ/(2r) · (h² S²_il / δ² − r)).

* It stops when one variant is left, or at r = 1 + max N_il with
  N_il = ⌊h² S²_il / δ²⌋ (then the best mean of the survivors is taken), or
  when the replication budget is spent.

With probability at least 1 − α the variant it selects is the best whenever
the best is better than every other by at least the indifference zone δ.
Checking the continuation region only after each batch (not after every
replication) can only screen out less often, so the guarantee holds
(from memory: Kim & Nelson note this for batched screening). When the budget
runs out with several survivors, the result says so: they are not resolved
to δ at that many replications.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

from fleetsim.errors import InputError

PROCEDURE = ("fully sequential indifference-zone screening on common random numbers "
             "(Kim & Nelson 2001), checked after each batch")


@dataclass(frozen=True)
class Screening:
    """The outcome of :func:`until_resolved`.

    Attributes
    ----------
    survivors
        Indexes of the variants not screened out (best mean first).
    replications
        Replications of every variant at the end.
    budget
        The replication budget per variant.
    indifference
        δ in the objective's unit.
    confidence
        1 − α.
    resolved
        True when the procedure stopped on its own rule (one survivor, or
        the last stage N reached); False when the budget ran out first.
    """

    survivors: tuple[int, ...]
    replications: int
    budget: int
    indifference: float
    confidence: float
    resolved: bool

    def as_dict(self, labels: Sequence[str]) -> dict[str, object]:
        """The ``sequential`` record of ``summary.json``."""
        return {"procedure": PROCEDURE, "survivors": [labels[i] for i in self.survivors],
                "replications": self.replications, "replication_budget": self.budget,
                "indifference_zone": self.indifference, "confidence": self.confidence,
                "resolved": self.resolved}

    def sentence(self, labels: Sequence[str], zone: str) -> str:
        """One honest sentence on the outcome (``zone``: δ in words, e.g. ``"500 EUR/year"``)."""
        names = [labels[i] for i in self.survivors]
        level = f"{100 * self.confidence:.0f} %"
        if self.resolved and len(names) == 1:
            return (f"Added replications until resolved: {names[0]} is the best to within "
                    f"{zone} ({level}, {self.replications:,} replications per variant; "
                    "Kim & Nelson 2001 screening).")
        listed = ", ".join(names[:-1]) + f" and {names[-1]}"
        if self.resolved:
            return (f"Added replications until resolved: {listed} are within {zone} of each "
                    f"other ({level}, {self.replications:,} replications per variant); the best "
                    f"mean, {names[0]}, is taken.")
        return (f"Not resolved to {zone} within the budget of {self.budget:,} replications per "
                f"variant: {listed} are still in contention.")


def constants(k: int, n0: int, confidence: float) -> float:
    """h² of Kim & Nelson's procedure for k variants, n0 first-stage replications."""
    if n0 < 2:
        raise InputError("replications", f"expected at least 2 first-stage replications, got {n0}")
    alpha = 1.0 - confidence
    eta = 0.5 * ((2.0 * alpha / max(k - 1, 1)) ** (-2.0 / (n0 - 1)) - 1.0)
    return 2.0 * eta * (n0 - 1)


def _screen(x: np.ndarray, s2: np.ndarray, h2: float, delta: float,
            survivors: list[int]) -> list[int]:
    """One screening at r = x.shape[1] replications (x to be maximised)."""
    r = x.shape[1]
    mean = x.mean(axis=1)
    keep = []
    for i in survivors:
        ok = True
        for j in survivors:
            if j == i:
                continue
            w = max(0.0, delta / (2.0 * r) * (h2 * s2[i, j] / delta**2 - r))
            if mean[i] < mean[j] - w:
                ok = False
                break
        if ok:
            keep.append(i)
    return keep


def until_resolved(
    values: Sequence[np.ndarray],
    more: Callable[[int, int], Sequence[np.ndarray]],
    *,
    indifference: float,
    budget: int,
    minimise: bool = True,
    confidence: float = 0.95,
    batch: int | None = None,
) -> tuple[list[np.ndarray], Screening]:
    """Add replications in batches until the best is resolved to ``indifference`` or ``budget``.

    Parameters
    ----------
    values
        Per variant, the objective of its first n0 replications (same seeds).
    more
        ``more(start, stop)``: per variant, the objective of replications
        ``start`` to ``stop − 1`` (on the same seeds as every variant's).
    indifference
        δ > 0, in the objective's unit.
    budget
        Replications per variant at most (>= n0).
    minimise
        True for a cost.
    confidence
        1 − α.
    batch
        Replications added per step (default n0).

    Returns
    -------
    (values, Screening)
        Every variant's values over all replications run, and the outcome.
    """
    if not indifference > 0 or not math.isfinite(indifference):
        raise InputError("--indifference-zone", f"expected an amount > 0, got {indifference}")
    rows = [np.asarray(v, dtype=float) for v in values]
    k, n0 = len(rows), rows[0].size
    if budget < n0:
        raise InputError("--replication-budget",
                         f"expected at least the {n0} replications already run, got {budget}")
    sign = -1.0 if minimise else 1.0
    x0 = sign * np.vstack(rows)
    d = x0[:, None, :] - x0[None, :, :]
    s2 = d.var(axis=2, ddof=1) if n0 >= 2 else np.zeros((k, k))
    h2 = constants(k, n0, confidence)
    last = 1 + int(np.max(np.floor(h2 * s2 / indifference**2))) if k > 1 else n0
    survivors = list(range(k))
    step = batch or n0
    n = n0
    while True:
        x = sign * np.vstack(rows)
        survivors = _screen(x, s2, h2, indifference, survivors)
        if len(survivors) <= 1 or n >= last:
            resolved = True
            break
        if n >= budget:
            resolved = False
            break
        stop = min(n + step, budget, max(last, n + 1))
        extra = more(n, stop)
        rows = [np.concatenate([r, np.asarray(e, dtype=float)]) for r, e in zip(rows, extra, strict=True)]
        n = stop
    mean = (sign * np.vstack(rows)).mean(axis=1)
    order = tuple(sorted(survivors, key=lambda i: -mean[i]))
    return rows, Screening(order, n, budget, float(indifference), confidence, resolved)


@dataclass(frozen=True)
class Settings:
    """What ``--until-resolved`` asks for.

    Attributes
    ----------
    zone
        The indifference zone: an amount in the objective's unit, or a share
        of the best mean when ``relative``.
    relative
        True for a share (``"1 %"``).
    budget
        Replications per variant at most.
    """

    zone: float
    relative: bool
    budget: int

    def amount(self, best_mean: float) -> float:
        """δ in the objective's unit, given the best mean after the first stage."""
        return self.zone * abs(best_mean) if self.relative else self.zone


def settings(zone: str, budget: int, first: int) -> Settings:
    """Check ``--indifference-zone`` (``"1 %"``, ``"0.5%"`` or an amount) and ``--replication-budget``."""
    text = zone.strip()
    relative = text.endswith("%")
    try:
        value = float(text.rstrip("%").strip())
    except ValueError:
        raise InputError("--indifference-zone",
                         f"expected a share such as '1 %' or an amount such as 500, got {zone!r}") from None
    if relative:
        value /= 100.0
    if not (value > 0 and math.isfinite(value)) or (relative and value >= 1):
        raise InputError("--indifference-zone",
                         f"expected a share between 0 and 100 % or an amount > 0, got {zone!r}")
    if budget < max(first, 2):
        raise InputError("--replication-budget",
                         f"expected at least the {max(first, 2)} first-stage replications, got {budget}")
    return Settings(value, relative, int(budget))
