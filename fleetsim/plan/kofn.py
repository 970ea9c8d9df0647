"""k-out-of-n groups and the finite-source machine-repair queue.

k-out-of-n. A group of n independent units is up while at least k are up. For
identical units with reliability (or availability) r, the binomial sum

    R_group = Σ_{i=k}^{n} C(n, i)·r^i·(1 − r)^{n−i}

(any reliability text, e.g. Rausand & Høyland, *System Reliability Theory*,
from memory). For units with different r_j, the distribution of the number up
follows from the recursion P_j(i) = r_j·P_{j−1}(i − 1) + (1 − r_j)·P_{j−1}(i),
adding one unit at a time (Barlow & Heidtmann, 1984, *IEEE Trans. Reliability*
R-33, from memory).

Machine-repair queue M/M/c//N (Gross & Harris, *Fundamentals of Queueing
Theory*, finite-source model, from memory). N machines each fail at rate λ per
hour while up; c crews each repair at rate μ per hour. With n machines down,
the birth-death rates are λ_n = (N − n)·λ and μ_n = min(n, c)·μ, so

    p_n = p_0·C(N, n)·r^n                          for 0 <= n <= c,
    p_n = p_0·C(N, n)·n!/(c!·c^{n−c})·r^n          for c <= n <= N,   r = λ/μ.

Mean down L = Σ n p_n, mean waiting for a crew L_q = Σ (n − c)⁺ p_n; the
effective failure rate λ_eff = λ·(N − L), and by Little's law the mean wait
for a crew W_q = L_q/λ_eff and the mean time down per failure W = L/λ_eff.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from fleetsim.errors import InputError


def _check_k_n(k: int, n: int) -> None:
    if int(k) != k or int(n) != n or n < 1 or not (0 <= k <= n):
        raise InputError(
            "k-out-of-n", f"expected whole numbers with 0 <= k <= n, n >= 1, got k={k}, n={n}"
        )


def k_out_of_n_reliability(k: int, n: int, unit_reliability: Any) -> Any:
    """Probability that at least ``k`` of ``n`` identical independent units are up.

    Parameters
    ----------
    k, n
        Units needed and units in the group.
    unit_reliability
        Reliability (or availability) of one unit; scalar or array (e.g. R(t) over time).

    Returns
    -------
    float or numpy.ndarray
        The binomial sum, shaped like ``unit_reliability``.
    """
    _check_k_n(k, n)
    r = np.asarray(unit_reliability, dtype=float)
    if np.any((r < 0) | (r > 1)) or not np.all(np.isfinite(r)):
        raise InputError("unit_reliability", "expected probabilities in [0, 1]")
    out = np.zeros_like(r)
    for i in range(int(k), int(n) + 1):
        out = out + math.comb(int(n), i) * r**i * (1.0 - r) ** (int(n) - i)
    out = np.clip(out, 0.0, 1.0)
    return float(out) if out.ndim == 0 else out


def units_up_distribution(unit_reliabilities: Sequence[float]) -> np.ndarray:
    """P(exactly i units up), i = 0..n, for independent units with different reliabilities."""
    r = np.asarray(unit_reliabilities, dtype=float)
    if r.ndim != 1 or r.size == 0:
        raise InputError("unit_reliabilities", "expected a non-empty list of probabilities")
    if np.any((r < 0) | (r > 1)) or not np.all(np.isfinite(r)):
        raise InputError("unit_reliabilities", "expected probabilities in [0, 1]")
    dist = np.zeros(r.size + 1)
    dist[0] = 1.0
    for j, rj in enumerate(r, start=1):
        dist[1 : j + 1] = rj * dist[0:j] + (1.0 - rj) * dist[1 : j + 1]
        dist[0] *= 1.0 - rj
    return dist


def k_out_of_n_reliability_mixed(k: int, unit_reliabilities: Sequence[float]) -> float:
    """Probability that at least ``k`` of independent, non-identical units are up (recursion)."""
    dist = units_up_distribution(unit_reliabilities)
    _check_k_n(k, dist.size - 1)
    return float(min(max(dist[int(k) :].sum(), 0.0), 1.0))


@dataclass(frozen=True)
class MachineRepairResult:
    """Stationary figures of the finite-source machine-repair queue M/M/c//N.

    Attributes
    ----------
    machines, crews
        N and c.
    failure_rate_per_h, repair_rate_per_h
        λ per machine while up, μ per crew while repairing.
    probabilities
        p_n, n = 0..N machines down.
    mean_down
        L, mean machines down (waiting or in repair).
    mean_waiting
        L_q, mean machines waiting for a crew.
    mean_in_repair
        L − L_q, mean busy crews.
    availability
        (N − L)/N, mean share of machines up.
    crew_utilisation
        (L − L_q)/c.
    effective_failure_rate_per_h
        λ·(N − L), failures per hour of the whole group.
    mean_wait_h
        W_q, mean wait for a crew per failure (Little's law).
    mean_down_time_h
        W, mean time down per failure, W_q + 1/μ.
    """

    machines: int
    crews: int
    failure_rate_per_h: float
    repair_rate_per_h: float
    probabilities: tuple[float, ...]
    mean_down: float
    mean_waiting: float
    mean_in_repair: float
    availability: float
    crew_utilisation: float
    effective_failure_rate_per_h: float
    mean_wait_h: float
    mean_down_time_h: float

    def group_availability(self, need: int) -> float:
        """Long-run share of time with at least ``need`` machines up (a need-of-N group)."""
        _check_k_n(need, self.machines)
        max_down = self.machines - int(need)
        return float(min(sum(self.probabilities[: max_down + 1]), 1.0))


def machine_repair_queue(
    machines: int, crews: int, failure_rate_per_h: float, repair_rate_per_h: float
) -> MachineRepairResult:
    """Solve the finite-source machine-repair queue M/M/c//N (Gross & Harris).

    Parameters
    ----------
    machines
        N >= 1 machines.
    crews
        c >= 1 repair crews.
    failure_rate_per_h
        λ > 0, failures per hour of one running machine.
    repair_rate_per_h
        μ > 0, repairs per hour of one crew (1 / mean repair time).
    """
    if int(machines) != machines or machines < 1:
        raise InputError("machines", f"expected a whole number >= 1, got {machines}")
    if int(crews) != crews or crews < 1:
        raise InputError("crews", f"expected a whole number >= 1, got {crews}")
    lam, mu = float(failure_rate_per_h), float(repair_rate_per_h)
    if not (lam > 0 and math.isfinite(lam)):
        raise InputError("failure_rate_per_h", f"expected a rate > 0 per hour, got {lam}")
    if not (mu > 0 and math.isfinite(mu)):
        raise InputError("repair_rate_per_h", f"expected a rate > 0 per hour, got {mu}")
    big_n, c = int(machines), int(crews)
    # log p_n up to a constant, by the birth-death product (N - j) lam / (min(j+1, c) mu)
    log_w = np.zeros(big_n + 1)
    for n in range(1, big_n + 1):
        log_w[n] = log_w[n - 1] + math.log((big_n - n + 1) * lam) - math.log(min(n, c) * mu)
    w = np.exp(log_w - log_w.max())
    p = w / w.sum()
    n_arr = np.arange(big_n + 1)
    mean_down = float(np.dot(n_arr, p))
    mean_waiting = float(np.dot(np.maximum(n_arr - c, 0), p))
    lam_eff = lam * (big_n - mean_down)
    return MachineRepairResult(
        machines=big_n,
        crews=c,
        failure_rate_per_h=lam,
        repair_rate_per_h=mu,
        probabilities=tuple(float(x) for x in p),
        mean_down=mean_down,
        mean_waiting=mean_waiting,
        mean_in_repair=mean_down - mean_waiting,
        availability=(big_n - mean_down) / big_n,
        crew_utilisation=(mean_down - mean_waiting) / c,
        effective_failure_rate_per_h=lam_eff,
        mean_wait_h=mean_waiting / lam_eff if lam_eff > 0 else math.inf,
        mean_down_time_h=mean_down / lam_eff if lam_eff > 0 else math.inf,
    )
