"""What the vectorised engine's paths share: per-machine sums and draws by family.

:class:`LaneSums` is what one machine type adds to a replication's tally (its
year book included); :func:`draw_lives` and :func:`draw_pf` turn uniforms of
the shared tables into lives and P-F intervals with one call per distinct
life or P-F interval of the machine type. Used by the lane path
(:mod:`fleetsim.sim.vector`) and the whole-cycle path (:mod:`fleetsim.sim.cycles`).
"""

from __future__ import annotations

import math

import numpy as np

from fleetsim.life import LifeDistribution
from fleetsim.scenario.model import Duration, Machine
from fleetsim.sim.tally import issued_key
from fleetsim.sim.years import YearBook

INF = math.inf


class LaneSums:
    """What one machine type adds to the replication's tally."""

    def __init__(self, machine: Machine, keep_intervals: bool, book: YearBook) -> None:
        self.keep_intervals = keep_intervals
        self.book = book
        self.bearing = [p.bearing_id for p in machine.positions]
        #: positions fitted with each bearing kind
        self.columns: dict[str, list[int]] = {}
        for j, b in enumerate(self.bearing):
            self.columns.setdefault(b, []).append(j)
        self._issued_keys = {b: issued_key(b) for b in self.columns}
        self.first_stop_h = INF
        self.failures = np.zeros(machine.count)
        self.planned = 0.0
        self.opportunistic = 0.0
        self.inspections = 0.0
        self.detections = 0.0
        self.missed_defects = 0.0
        self.failures_after_detection = 0.0
        self.down_repair_h = 0.0
        self.down_planned_h = 0.0
        self.issued = np.zeros(len(machine.positions))
        self.intervals: list[tuple[np.ndarray, np.ndarray, np.ndarray]] = []  # (unit, start, end)

    def issue(self, positions: np.ndarray, t_h: np.ndarray) -> None:
        """Spares issued (and, from unlimited supply, bought) for ``positions`` at ``t_h``."""
        if positions.size == 0:
            return
        self.issued += np.bincount(positions, minlength=self.issued.size)
        keys = self._issued_keys
        for bearing, key in keys.items():
            at = t_h if len(keys) == 1 else t_h[np.isin(positions, self.columns[bearing])]
            self.book.at_later(key, at)

    def stopped(self, units: np.ndarray, start_h: np.ndarray, end_h: np.ndarray) -> None:
        """Units ``units`` were down over [start_h, end_h) (kept for groups)."""
        if start_h.size:
            self.first_stop_h = min(self.first_stop_h, float(start_h.min()))
            if self.keep_intervals:
                self.intervals.append((units, start_h.copy(), end_h.copy()))


_FAMILIES: dict[int, tuple[Machine, dict[LifeDistribution, list[int]],
                            dict[Duration | None, list[int]]]] = {}


def life_families(machine: Machine) -> tuple[dict[LifeDistribution, list[int]],
                                         dict[Duration | None, list[int]]]:
    """Positions of ``machine`` by distinct life and by distinct P-F interval (cached)."""
    hit = _FAMILIES.get(id(machine))
    if hit is not None and hit[0] is machine:
        return hit[1], hit[2]
    lives: dict[LifeDistribution, list[int]] = {}
    pfs: dict[Duration | None, list[int]] = {}
    for j, p in enumerate(machine.positions):
        lives.setdefault(p.life, []).append(j)
        pfs.setdefault(p.pf_interval, []).append(j)
    if len(_FAMILIES) > 256:
        _FAMILIES.clear()
    _FAMILIES[id(machine)] = (machine, lives, pfs)
    return lives, pfs


def draw_lives(machine: Machine, u: np.ndarray, pos: np.ndarray, age: np.ndarray | float = 0.0
           ) -> np.ndarray:
    """Remaining lives to P (hours beyond ``age``) of positions ``pos``, from uniforms ``u``.

    One call of the life's inverse transform per distinct life of the machine type
    (usually one), not per position.
    """
    groups = life_families(machine)[0]
    if len(groups) == 1:
        return next(iter(groups)).lives_from_uniform(u, age)
    out = np.empty(u.shape)
    a = np.broadcast_to(np.asarray(age, dtype=float), u.shape)
    for dist, cols in groups.items():
        sel = np.isin(pos, cols)
        if sel.any():
            out[sel] = dist.lives_from_uniform(u[sel], a[sel])
    return out


def draw_pf(machine: Machine, u: np.ndarray | None, pos: np.ndarray) -> np.ndarray | float:
    """P-F intervals in operating hours of positions ``pos`` (0 where none is given)."""
    if u is None:
        return 0.0
    groups = life_families(machine)[1]
    if len(groups) == 1:
        d = next(iter(groups))
        return d.quantiles(u) if d is not None else 0.0
    out = np.zeros(u.shape)
    for dur, cols in groups.items():
        if dur is not None:
            sel = np.isin(pos, cols)
            out[sel] = dur.quantiles(u[sel])
    return out


def stop_hours(d: Duration, u: np.ndarray) -> np.ndarray | float:
    """Stop durations in hours for stop quantiles ``u`` (a fixed duration: one number)."""
    return d.value_h if d.kind == "fixed" else d.quantiles(u)
