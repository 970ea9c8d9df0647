"""The maintenance plan of one machine type, compiled once and read by both engines.

:func:`compile_plan` turns the validated policies of a machine type's
positions into arrays, one entry per position, and into the calendar jobs
shared by the positions (block dates and inspection rounds). The
discrete-event engine (:mod:`fleetsim.sim.unit`, :mod:`fleetsim.sim.policies`)
and the vectorised engine (:mod:`fleetsim.sim.vector`) read the same plan, so
a rule is written here once:

* **Age replacement** at ``age_due_h`` operating hours since fitting.
* **Block replacement** on calendar dates ``interval, 2·interval, ...``;
  positions with the same interval form one job (block scope ``machine``), or
  each position has its own (scope ``position``). At a block date a position
  fitted less than ``skip_younger_h`` calendar hours before is skipped
  (modified block replacement, see :class:`~fleetsim.scenario.model.Policy`).
* **Opportunistic changes**: when the unit stops, a position whose age has
  reached ``opportunistic_age_h`` is changed too. The age is on the
  interval's own clock (``opportunistic_calendar``): operating hours under
  age replacement, calendar hours since fitting under block replacement.
* **Inspections**: condition-monitored positions with the same inspection
  interval are inspected in one visit (one ``costs.inspection``), every that
  many calendar hours from the start. A visit while the unit is stopped is
  skipped. Each inspection inside the P-F window finds the defect with
  probability ``detection``, independently; the number of inspections a
  defect needs is drawn once per life (:func:`inspections_to_detect`, a
  geometric variate from one uniform), so both engines see the same draw.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from fleetsim.scenario.model import Machine

INF = math.inf


@dataclass(frozen=True)
class CalendarJob:
    """A calendar job of a machine type: block dates or an inspection round.

    Attributes
    ----------
    every_h
        Calendar hours between occurrences (the first at ``every_h``).
    positions
        Indexes of the positions it covers.
    """

    every_h: float
    positions: tuple[int, ...]


@dataclass(frozen=True)
class MaintenancePlan:
    """What the policies of one machine type's positions ask for, per position.

    Arrays have one entry per position; ``INF`` means "never".
    """

    kinds: tuple[str, ...]
    age_due_h: np.ndarray
    block_every_h: np.ndarray
    skip_younger_h: np.ndarray
    opportunistic_age_h: np.ndarray
    opportunistic_calendar: np.ndarray
    inspected: np.ndarray
    detection: np.ndarray
    respond_h: np.ndarray
    blocks: tuple[CalendarJob, ...]
    rounds: tuple[CalendarJob, ...]
    pf_given: bool

    @property
    def opportunistic(self) -> bool:
        """True when some position can be changed in another job's stop."""
        return bool(np.isfinite(self.opportunistic_age_h).any())

    @property
    def round_of(self) -> np.ndarray:
        """Index of the inspection round of each position (-1: not inspected)."""
        out = np.full(len(self.kinds), -1, dtype=np.int64)
        for r, job in enumerate(self.rounds):
            out[list(job.positions)] = r
        return out


#: Plans compiled, by id of their machine (with the machine, so a reused id is not a hit).
_PLANS: dict[int, tuple[Machine, MaintenancePlan]] = {}


def compile_plan(machine: Machine) -> MaintenancePlan:
    """The :class:`MaintenancePlan` of ``machine`` (its policies are already validated).

    Compiled once per machine and kept (a frozen machine has one plan): every
    replication of a study asks again. The plan's arrays are read-only.
    """
    hit = _PLANS.get(id(machine))
    if hit is not None and hit[0] is machine:
        return hit[1]
    plan = _compile(machine)
    for a in (plan.age_due_h, plan.block_every_h, plan.skip_younger_h, plan.opportunistic_age_h,
              plan.opportunistic_calendar, plan.inspected, plan.detection, plan.respond_h):
        a.flags.writeable = False
    if len(_PLANS) > 256:
        _PLANS.clear()
    _PLANS[id(machine)] = (machine, plan)
    return plan


def _compile(machine: Machine) -> MaintenancePlan:
    pols = [p.policy for p in machine.positions]
    n = len(pols)
    age_due = np.full(n, INF)
    block_every = np.full(n, INF)
    skip = np.zeros(n)
    opp = np.full(n, INF)
    opp_cal = np.zeros(n, dtype=bool)
    blocks: dict[tuple[float, str], list[int]] = {}
    rounds: dict[float, list[int]] = {}
    for j, (pos, pol) in enumerate(zip(machine.positions, pols, strict=True)):
        if pol.kind == "age":
            assert pol.interval_h is not None
            age_due[j] = pol.interval_h
        elif pol.kind == "block":
            assert pol.interval_h is not None
            block_every[j] = pol.interval_h
            skip[j] = pol.skip_younger_than_h
            opp_cal[j] = True
            key = (pol.interval_h, "" if pol.block_scope == "machine" else pos.id)
            blocks.setdefault(key, []).append(j)
        elif pol.kind == "condition":
            assert pol.inspection_every_h is not None
            rounds.setdefault(pol.inspection_every_h, []).append(j)
        opp[j] = pol.opportunistic_age_h
    return MaintenancePlan(
        kinds=tuple(p.kind for p in pols),
        age_due_h=age_due,
        block_every_h=block_every,
        skip_younger_h=skip,
        opportunistic_age_h=opp,
        opportunistic_calendar=opp_cal,
        inspected=np.array([p.kind == "condition" for p in pols], dtype=bool),
        detection=np.array([p.detection for p in pols], dtype=float),
        respond_h=np.array([p.respond_within_h for p in pols], dtype=float),
        blocks=tuple(CalendarJob(every, tuple(js)) for (every, _), js in blocks.items()),
        rounds=tuple(CalendarJob(every, tuple(js)) for every, js in rounds.items()),
        pf_given=any(p.pf_interval is not None for p in machine.positions),
    )


#: Up to this many draws, :func:`inspections_to_detect` calls :func:`inspection_count`
#: per draw (cheaper than the array expressions for a handful of values).
_FEW = 8
_log1p = np.log1p


def inspections_to_detect(u: float | np.ndarray, detection: float | np.ndarray) -> np.ndarray:
    """How many inspections inside the P-F window a defect needs before one finds it.

    Each inspection finds the defect with probability ``detection``
    independently, so the count N is geometric: P(N = n) = (1 − p)^(n−1) p,
    n >= 1. It is drawn by inversion from one uniform ``u`` per life:
    N = 1 + floor(ln(1 − u) / ln(1 − p)). p = 1 gives 1, p = 0 gives inf.

    Parameters
    ----------
    u
        Uniform(0, 1) draws.
    detection
        Detection probability per inspection, in [0, 1].

    Returns
    -------
    numpy.ndarray
        Counts as floats (inf when the defect is never found).
    """
    u = np.asarray(u, dtype=float)
    p = np.broadcast_to(np.asarray(detection, dtype=float), u.shape)
    if u.size <= _FEW:  # a few lives (a lane's renewals): the scalar twin, value for value
        return np.array([inspection_count(a, b) for a, b in zip(u.ravel().tolist(),
                                                                p.ravel().tolist(), strict=True)]
                        ).reshape(u.shape)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):  # inf: never found
        n = 1.0 + np.floor(np.log1p(-u) / np.log1p(-np.minimum(p, 1.0)))
    n = np.where(p >= 1.0, 1.0, n)
    return np.where(p <= 0.0, INF, n)


def inspection_count(u: float, detection: float) -> float:
    """:func:`inspections_to_detect` for one uniform and one probability, without arrays
    (the discrete-event engine draws one per life); the same formula, value for value.

    The logarithms are numpy's ``log1p`` on scalars, the routine the array formula
    runs: ``math.log1p`` can differ from it by one unit in the last place, which
    changes the count where the quotient is within that of a whole number (every
    quotient above 2**52, i.e. a detection probability below about 1e-16).
    """
    if detection >= 1.0:
        return 1.0
    if detection <= 0.0:
        return INF
    q = float(_log1p(-u)) / float(_log1p(-detection))
    return INF if q == INF else 1.0 + math.floor(q)
