"""The vectorised engine: every unit of a machine type stepped at once with numpy.

For fleets whose positions are not coupled through finite stores or crews, a
replication is simulated without SimPy. The units of one machine type are
*lanes* of numpy arrays of shape (units, positions); each step takes, for every
lane still inside the horizon, its next event — a functional failure, an age
or block replacement due, a planned change after a detection, an inspection —
and processes all lanes together with masks. Positions of one unit stay
coupled exactly as in the discrete-event engine: a stop freezes the ageing of
the whole unit.

When every position of a machine type is run-to-failure or age-replaced and a
stop cannot delay another position (one position per unit, or zero stop
durations), each position is an ordinary renewal process and the fast path
:func:`_renewal_lanes` draws its cycles directly (cycle = min(life, T)/share +
stop duration).

Random numbers come from per-machine-type generators keyed by purpose
(``SeedSequence(entropy, spawn_key=replication key + (3, machine, purpose))``),
indexed by the renewal count of each position, so that two policies compared
on the same seed use the same k-th life of every position (common random
numbers). The engine agrees with :mod:`fleetsim.sim` in distribution, not
draw for draw.

Conventions are the discrete-event engine's (see :mod:`fleetsim.sim.records`):
a planned change costs ``planned_replacement`` + price, a failure
``planned_replacement`` + ``failure`` + price, plus downtime in both cases.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from fleetsim.scenario.model import Duration, Machine, Scenario
from fleetsim.sim.discount import discount_for, per_year
from fleetsim.sim.streams import UniformTable

_LIFE, _PF, _DET, _REPAIR_F, _REPAIR_P = 0, 1, 2, 3, 4
_EPS = 1e-9


def _duration_quantile(d: Duration | None, u: np.ndarray) -> np.ndarray:
    """Vectorised quantile of a Duration (0 for None)."""
    return np.zeros_like(u) if d is None else d.quantiles(u)


@dataclass
class _Tally:
    """Counts and sums of one machine type over a replication."""

    failures: np.ndarray  # per unit
    planned: np.ndarray  # per unit
    opportunistic: int = 0
    inspections: int = 0
    detections: int = 0
    missed: int = 0
    failed_after_detection: int = 0
    downtime_repair_h: float = 0.0
    downtime_planned_h: float = 0.0
    issued: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=np.int64))  # per position
    intervals: list[tuple[np.ndarray, np.ndarray, np.ndarray]] = field(default_factory=list)  # (unit, start, end)
    first_stop_h: float = math.inf  # first stop of any unit (for a fleet without groups)
    # With discounting (fleetsim.sim.discount), the engine's twins of the DES's sums:
    pv_failures: float = 0.0  # Σ v(t) over failures
    pv_changes: float = 0.0  # Σ v(t) over planned and opportunistic changes (end of the stop)
    pv_inspections: float = 0.0
    pv_down_h: float = 0.0  # ∫ v(t) dt over stopped hours
    pv_issued: np.ndarray = field(default_factory=lambda: np.zeros(0))  # Σ v(t) over spares issued, per position


def _life_params(machine: Machine) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    shape = np.array([p.life.shape for p in machine.positions])
    scale = np.array([p.life.scale_h for p in machine.positions])
    loc = np.array([p.life.location_h for p in machine.positions])
    return shape, scale, loc


class _Lanes:
    """State of all units of one machine type in one replication."""

    def __init__(self, machine: Machine, scenario: Scenario, rngs: list[np.random.Generator],
                 horizon_h: float) -> None:
        self.m = machine
        self.horizon_h = horizon_h
        self.discount = discount_for(scenario.costs.discount_rate_per_year)
        U, P = machine.count, len(machine.positions)
        self.U, self.P = U, P
        self.share = machine.operating_share
        self.shape, self.scale, self.loc = _life_params(machine)
        pol = [p.policy for p in machine.positions]
        inf = math.inf
        self.age_T = np.array([p.interval_h if p.kind == "age" else inf for p in pol], dtype=float)
        self.block_B = np.array([p.interval_h if p.kind == "block" else inf for p in pol], dtype=float)
        cond = [p for p in pol if p.kind == "condition"]
        self.is_cond = np.array([p.kind == "condition" for p in pol])
        self.insp_every = min((p.inspection_every_h or inf) for p in cond) if cond else inf
        self.detect_p = np.array([p.detection for p in pol], dtype=float)
        self.respond = np.array([p.respond_within_h for p in pol], dtype=float)
        self.pf = [p.pf_interval for p in pol]
        opp = [
            (p.opportunistic_share * p.interval_h)
            if (p.opportunistic_share is not None and p.interval_h is not None)
            else inf
            for p in pol
        ]
        self.opp_age = np.array(opp, dtype=float)
        self.crews = scenario.crews
        self.U_life = UniformTable(rngs[_LIFE], U, P)
        self.U_pf = UniformTable(rngs[_PF], U, P)
        self.rng_det = rngs[_DET]
        self.rng_fail = rngs[_REPAIR_F]
        self.rng_plan = rngs[_REPAIR_P]
        # state
        self.t = np.zeros(U)
        self.age = machine.ages_h()  # operating age of every position at the start
        self.k = np.zeros((U, P), dtype=np.int64)
        self.defect_age = np.empty((U, P))
        self.fail_age = np.empty((U, P))
        self.detected = np.zeros((U, P), dtype=bool)
        self.planned_at = np.full((U, P), inf)
        self.next_block = np.where(np.isfinite(self.block_B), self.block_B, inf) * np.ones((U, 1))
        self.next_insp = np.full(U, self.insp_every)
        uu, pp = np.indices((U, P))
        self._draw_life(uu.ravel(), pp.ravel(), residual_from=self.age.ravel())
        self.tally = _Tally(failures=np.zeros(U, dtype=np.int64), planned=np.zeros(U, dtype=np.int64),
                            issued=np.zeros(P, dtype=np.int64), intervals=[], pv_issued=np.zeros(P))

    # --- random draws ----------------------------------------------------------------
    def _draw_life(self, u: np.ndarray, p: np.ndarray,
                   residual_from: float | np.ndarray = 0.0) -> None:
        """Defect and failure ages for positions (u, p) starting their k-th life.

        ``residual_from``: operating age(s) the bearings have survived to (per (u, p) or one).
        """
        if u.size == 0:
            return
        k = self.k[u, p]
        x = self.U_life.take(k, u, p)
        b, eta, x0 = self.shape[p], self.scale[p], self.loc[p]
        z0 = (np.maximum(residual_from - x0, 0.0) / eta) ** b if np.any(residual_from) else 0.0
        z = (z0 - np.log1p(-x)) ** (1.0 / b)
        life = x0 + eta * z  # operating age at the defect
        self.defect_age[u, p] = life
        pf = np.zeros(u.size)
        up = self.U_pf.take(k, u, p)
        for j in np.unique(p):
            sel = p == j
            pf[sel] = _duration_quantile(self.pf[j], up[sel])
        self.fail_age[u, p] = life + pf  # the P-F interval runs in operating hours

    def _renew(self, mask: np.ndarray) -> None:
        u, p = np.nonzero(mask)
        self.k[u, p] += 1
        self.age[u, p] = 0.0
        self.detected[u, p] = False
        self.planned_at[u, p] = math.inf
        np.add.at(self.tally.issued, p, 1)
        if self.discount is not None:  # spares are issued as the stop starts
            np.add.at(self.tally.pv_issued, p, self.discount.factors(self.t[u]))
        self._draw_life(u, p)

    # --- stepping ----------------------------------------------------------------------
    def step(self) -> bool:
        """Process the next event of every active lane; False when all are done."""
        H = self.horizon_h
        active = self.t < H - _EPS
        if not active.any():
            return False
        inf = math.inf
        share = self.share
        t_fail_pos = self.t[:, None] + (self.fail_age - self.age) / share
        t_age_pos = self.t[:, None] + (self.age_T[None, :] - self.age) / share
        t_fail = t_fail_pos.min(axis=1)
        t_age = t_age_pos.min(axis=1) if np.isfinite(self.age_T).any() else np.full(self.U, inf)
        t_block = self.next_block.min(axis=1)
        t_plan = self.planned_at.min(axis=1)
        t_insp = self.next_insp
        t_next = np.minimum.reduce([t_fail, t_age, t_block, t_plan, t_insp, np.full(self.U, H)])
        t_next = np.where(active, np.maximum(t_next, self.t), self.t)
        self.age += share * (t_next - self.t)[:, None]
        self.t = t_next
        at_h = active & (t_next >= H - _EPS)
        live = active & ~at_h
        is_fail = live & (t_fail <= t_next + _EPS)
        is_plan = live & ~is_fail & (
            (t_age <= t_next + _EPS) | (t_block <= t_next + _EPS) | (t_plan <= t_next + _EPS)
        )
        is_insp = live & ~is_fail & ~is_plan & (t_insp <= t_next + _EPS)
        if is_insp.any():
            self._inspect(is_insp)
        if is_fail.any():
            self._stop(is_fail, t_fail_pos, failure=True)
        if is_plan.any():
            self._stop(is_plan, None, failure=False)
        return True

    def _inspect(self, lanes: np.ndarray) -> None:
        tl = self.tally
        tl.inspections += int(lanes.sum())
        if self.discount is not None:
            tl.pv_inspections += float(self.discount.factors(self.t[lanes]).sum())
        in_window = (
            lanes[:, None] & self.is_cond[None, :] & (self.age >= self.defect_age - _EPS)
            & ~self.detected
        )
        u, p = np.nonzero(in_window)
        if u.size:
            hit = self.rng_det.random(u.size) < self.detect_p[p]
            hu, hp = u[hit], p[hit]
            self.detected[hu, hp] = True
            self.planned_at[hu, hp] = self.t[hu] + self.respond[hp]
            tl.detections += int(hit.sum())
        self.next_insp = np.where(lanes, self.next_insp + self.insp_every, self.next_insp)

    def _stop(self, lanes: np.ndarray, t_fail_pos: np.ndarray | None, failure: bool) -> None:
        """A unit stops: failure repair or planned work, with opportunistic changes."""
        tl = self.tally
        t = self.t
        due = np.zeros((self.U, self.P), dtype=bool)
        if failure:
            assert t_fail_pos is not None
            fail_mask = lanes[:, None] & (t_fail_pos <= t[:, None] + _EPS)
            due |= fail_mask
            tl.failures += fail_mask.sum(axis=1)
            if self.discount is not None:
                tl.pv_failures += float((fail_mask.sum(axis=1) * self.discount.factors(t)).sum())
            tl.missed += int((fail_mask & self.is_cond[None, :] & ~self.detected).sum())
            tl.failed_after_detection += int((fail_mask & self.detected).sum())
        else:
            fail_mask = np.zeros_like(due)
        planned_due = lanes[:, None] & (
            (self.age >= self.age_T[None, :] - _EPS)
            | (self.next_block <= t[:, None] + _EPS)
            | (self.planned_at <= t[:, None] + _EPS)
        ) & ~fail_mask
        opp = lanes[:, None] & ~fail_mask & ~planned_due & (
            (self.age >= self.opp_age[None, :] - _EPS) | self.detected
        )
        tl.opportunistic += int(opp.sum())
        planned = planned_due | opp
        tl.planned += planned.sum(axis=1)
        due |= planned
        # block calendars of replaced block positions move on
        blk = lanes[:, None] & (self.next_block <= t[:, None] + _EPS)
        self.next_block = np.where(blk, self.next_block + self.block_B[None, :], self.next_block)
        self._renew(due)
        # stop duration: one draw per stop, from the failure or planned stream
        n = int(lanes.sum())
        u = np.nonzero(lanes)[0]
        if failure:
            d = _duration_quantile(self.crews.unplanned_repair, self.rng_fail.random(n))
            tl.downtime_repair_h += float(np.minimum(d, self.horizon_h - t[u]).sum())
        else:
            d = _duration_quantile(self.crews.planned_repair, self.rng_plan.random(n))
            tl.downtime_planned_h += float(np.minimum(d, self.horizon_h - t[u]).sum())
        tl.intervals.append((u, t[u].copy(), np.minimum(t[u] + d, self.horizon_h)))
        if self.discount is not None:
            disc = self.discount
            tl.pv_changes += float((planned.sum(axis=1)[u] * disc.factors(t[u] + d)).sum())
            tl.pv_down_h += float(disc.integrals(t[u], np.minimum(t[u] + d, self.horizon_h)).sum())
        tl.first_stop_h = min(tl.first_stop_h, float(t[u].min()))
        if np.any(d > 0):
            self.t[u] = t[u] + d
            # planned changes, block dates and inspections that fell in the stop happen after it
            late = self.next_insp[u] < self.t[u]
            if late.any():
                steps = np.ceil((self.t[u] - self.next_insp[u]) / self.insp_every)
                self.next_insp[u] = np.where(late, self.next_insp[u] + steps * self.insp_every,
                                             self.next_insp[u])


def _renewal_lanes(machine: Machine, scenario: Scenario, rngs: list[np.random.Generator],
                   horizon_h: float, need_intervals: bool) -> _Tally:
    """Fast path: each position an independent renewal process (run-to-failure/age).

    Every position still inside the horizon advances by exactly one renewal per
    round, so round k uses row k of the life matrix; positions that have passed
    the horizon are dropped from the working arrays after each round.
    """
    U, P = machine.count, len(machine.positions)
    n = U * P
    shape, scale, loc = _life_params(machine)
    T = np.array([p.policy.interval_h if p.policy.kind == "age" else math.inf
                  for p in machine.positions])
    share = machine.operating_share
    crews = scenario.crews
    stops_vary = not (crews.unplanned_repair.kind == "fixed" and crews.planned_repair.kind == "fixed")
    d_fail, d_plan = crews.unplanned_repair.value_h, crews.planned_repair.value_h
    timed_stops = stops_vary or d_fail > 0 or d_plan > 0
    lifeM, rf, rp = UniformTable(rngs[_LIFE], U, P), rngs[_REPAIR_F], rngs[_REPAIR_P]
    tally = _Tally(failures=np.zeros(U, dtype=np.int64), planned=np.zeros(U, dtype=np.int64),
                   issued=np.zeros(P, dtype=np.int64), intervals=[], pv_issued=np.zeros(P))
    disc = discount_for(scenario.costs.discount_rate_per_year)
    # working arrays over the positions still inside the horizon (flat index u·P + p)
    idx = np.arange(n)
    pos = np.tile(np.arange(P), U)
    b, inv_b, eta, x0, cut0 = shape[pos], 1.0 / shape[pos], scale[pos], loc[pos], T[pos]
    t = np.zeros(n)
    fails = np.zeros(n, dtype=np.int64)
    plans = np.zeros(n, dtype=np.int64)
    a0 = machine.ages_h().reshape(-1)  # flat index u·P + p, like idx
    first_stop = math.inf
    k = 0
    while idx.size:
        row = lifeM.row(k).reshape(-1)
        x = row if idx.size == n else row[idx]
        e = -np.log1p(-x)  # standard exponential
        if k == 0 and a0.any():
            z0 = (np.maximum(a0 - x0, 0.0) / eta) ** b
            life = x0 + eta * (z0 + e) ** inv_b - a0
            cut = np.maximum(cut0 - a0, 0.0)
        else:
            life = x0 + eta * e**inv_b
            cut = cut0
        failed = life < cut
        end = t + np.minimum(life, cut) / share
        inside = end < horizon_h
        f_in = inside & failed
        p_in = inside & ~failed
        fails[idx[f_in]] += 1
        plans[idx[p_in]] += 1
        ends = end[inside]
        if ends.size:
            first_stop = min(first_stop, float(ends.min()))
        if timed_stops:
            if stops_vary:
                d = np.zeros(idx.size)
                d[f_in] = _duration_quantile(crews.unplanned_repair, rf.random(int(f_in.sum())))
                d[p_in] = _duration_quantile(crews.planned_repair, rp.random(int(p_in.sum())))
            else:
                d = np.where(failed, d_fail, d_plan)
            dd = np.minimum(d, horizon_h - end)
            tally.downtime_repair_h += float(dd[f_in].sum())
            tally.downtime_planned_h += float(dd[p_in].sum())
            nxt = end + d
        else:
            dd = None
            nxt = end
        if disc is not None:
            v_end = disc.factors(end[inside])
            tally.pv_failures += float(v_end[failed[inside]].sum())
            done_at = (end + d)[p_in] if dd is not None else end[p_in]
            tally.pv_changes += float(disc.factors(done_at).sum())
            np.add.at(tally.pv_issued, idx[inside] % P, v_end)
            if dd is not None:
                tally.pv_down_h += float(disc.integrals(end[inside], (end + dd)[inside]).sum())
        if need_intervals:
            stop_len = dd[inside] if dd is not None else 0.0
            tally.intervals.append((idx[inside] // P, ends, ends + stop_len))
        idx, t = idx[inside], nxt[inside]
        b, inv_b, eta, x0, cut0 = b[inside], inv_b[inside], eta[inside], x0[inside], cut0[inside]
        k += 1
    per_unit = fails.reshape(U, P)
    tally.failures += per_unit.sum(axis=1)
    tally.planned += plans.reshape(U, P).sum(axis=1)
    tally.issued += (per_unit + plans.reshape(U, P)).sum(axis=0)
    tally.first_stop_h = first_stop
    return tally


def _renewal_exact(machine: Machine, scenario: Scenario) -> bool:
    kinds = {p.policy.kind for p in machine.positions}
    if not kinds <= {"run-to-failure", "age"}:
        return False
    if any(p.policy.pf_interval is not None or p.policy.opportunistic_share is not None
           for p in machine.positions):
        return False
    if len(machine.positions) == 1:
        return True
    c = scenario.crews
    return c.planned_repair.kind == "fixed" and c.planned_repair.value_h == 0 and \
        c.unplanned_repair.kind == "fixed" and c.unplanned_repair.value_h == 0


def simulate_machine(machine: Machine, machine_index: int, scenario: Scenario,
                     seed: np.random.SeedSequence, horizon_h: float) -> _Tally:
    """Simulate all units of one machine type for one replication."""
    rngs = [
        np.random.Generator(np.random.PCG64(np.random.SeedSequence(
            entropy=seed.entropy, spawn_key=tuple(seed.spawn_key) + (3, machine_index, purpose),
            pool_size=seed.pool_size)))
        for purpose in range(5)
    ]
    if _renewal_exact(machine, scenario):
        return _renewal_lanes(machine, scenario, rngs, horizon_h, bool(scenario.groups))
    lanes = _Lanes(machine, scenario, rngs, horizon_h)
    while lanes.step():
        pass
    return lanes.tally


def _group_rows(scenario: Scenario, intervals: list[tuple[np.ndarray, np.ndarray, np.ndarray]],
                horizon_h: float, first_stop_h: float) -> list[dict]:
    """Replay unit stops through the group tracker of the discrete-event engine."""
    from fleetsim.sim.groups import GroupTracker

    n = sum(m.count for m in scenario.machines)
    groups = [(g.id, g.need, scenario.group_members(g)) for g in scenario.groups]
    if not groups:
        # The fleet is down while any unit is down; only its first down event is reported.
        down = first_stop_h < horizon_h
        return [{"group": "fleet", "had_down": down,
                 "first_down_h": first_stop_h if down else math.nan, "down_h": math.nan}]
    tracker = GroupTracker(groups, n)
    members = np.zeros(n, dtype=bool)
    for _, _, m in groups:
        members[m] = True
    if intervals:
        unit = np.concatenate([iv[0] for iv in intervals])
        keep = members[unit]
        unit = unit[keep]
        start = np.concatenate([iv[1] for iv in intervals])[keep]
        end = np.concatenate([iv[2] for iv in intervals])[keep]
        # events: (time, code, unit, +1 down / -1 up); a stop of zero length restarts after
        # every stop of the same instant, so simultaneous instant stops overlap.
        zero = end <= start
        times = np.concatenate([start, end])
        codes = np.concatenate([np.ones(start.size), np.where(zero, 2, 0)])
        units = np.concatenate([unit, unit])
        kinds = np.concatenate([np.ones(start.size, dtype=int), -np.ones(end.size, dtype=int)])
        order = np.lexsort((codes, times))
        for i in order:
            if kinds[i] > 0:
                tracker.unit_down(int(units[i]), float(times[i]))
            else:
                tracker.unit_up(int(units[i]), float(times[i]))
    return tracker.finish(horizon_h)


def simulate_vector(scenario: Scenario, seed: np.random.SeedSequence,
                    horizon_h: float | None = None) -> dict[str, float]:
    """One replication with the vectorised engine, reduced to its figures.

    Parameters
    ----------
    scenario
        A scenario without finite stores or crews (:attr:`Scenario.independent_positions`).
    seed
        The replication's seed sequence.
    horizon_h
        Calendar horizon in hours (default: the study's).

    Returns
    -------
    dict
        The figures of :mod:`fleetsim.study.figures`.
    """
    from fleetsim.scenario.model import HOURS_PER_YEAR
    if not scenario.independent_positions:
        raise ValueError("the vectorised engine needs unlimited spares and crews")
    if any(g.hold_planned_work for g in scenario.groups):
        raise ValueError("groups that hold planned work back need the discrete-event engine")
    H = scenario.study.horizon_h if horizon_h is None else horizon_h
    years = H / HOURS_PER_YEAR
    out: dict[str, float] = {}
    tallies = [simulate_machine(m, i, scenario, seed, H) for i, m in enumerate(scenario.machines)]
    issued: dict[str, int] = {b: 0 for b in scenario.bearings}
    intervals: list = []
    offset = 0
    totals = dict(failures=0, planned=0, opp=0, insp=0, det=0, missed=0, fad=0, rep=0.0, pl=0.0)
    units_total = 0
    for m, tl in zip(scenario.machines, tallies, strict=True):
        assert tl.issued is not None and tl.intervals is not None
        for j, pos in enumerate(m.positions):
            issued[pos.bearing_id] += int(tl.issued[j])
        for u, s, e in tl.intervals:
            intervals.append((u + offset, s, e))
        down = tl.downtime_repair_h + tl.downtime_planned_h
        out[f"failures:{m.id}"] = float(tl.failures.sum())
        out[f"downtime_h:{m.id}"] = down
        out[f"availability:{m.id}"] = 1.0 - down / (m.count * H)
        totals["failures"] += int(tl.failures.sum())
        totals["planned"] += int(tl.planned.sum())
        totals["opp"] += tl.opportunistic
        totals["insp"] += tl.inspections
        totals["det"] += tl.detections
        totals["missed"] += tl.missed
        totals["fad"] += tl.failed_after_detection
        totals["rep"] += tl.downtime_repair_h
        totals["pl"] += tl.downtime_planned_h
        offset += m.count
        units_total += m.count
    down = totals["rep"] + totals["pl"]
    out.update(
        failures=totals["failures"], planned_replacements=totals["planned"],
        opportunistic_replacements=totals["opp"], inspections=totals["insp"],
        detections=totals["det"], missed_defects=totals["missed"],
        failures_after_detection=totals["fad"], downtime_h=down, downtime_crew_h=0.0,
        downtime_spares_h=0.0, downtime_repair_h=totals["rep"], downtime_planned_h=totals["pl"],
        availability=1.0 - down / (units_total * H), orders=0.0, emergency_orders=0.0,
        stockouts=0.0,
    )
    for b, count in issued.items():
        out[f"spares_issued:{b}"] = float(count)
        out[f"spares_per_year:{b}"] = count / years
        out[f"fill_rate:{b}"] = 1.0  # unlimited spares
    c = scenario.costs
    if c.discount_rate_per_year > 0.0:  # present values (fleetsim.sim.discount)
        changes, failures = sum(tl.pv_changes for tl in tallies), sum(tl.pv_failures for tl in tallies)
        inspections, down_cost_h = sum(tl.pv_inspections for tl in tallies), \
            sum(tl.pv_down_h for tl in tallies)
        parts_by_bearing: dict[str, float] = {b: 0.0 for b in scenario.bearings}
        for m, tl in zip(scenario.machines, tallies, strict=True):
            assert tl.pv_issued is not None
            for j, pos in enumerate(m.positions):
                parts_by_bearing[pos.bearing_id] += float(tl.pv_issued[j])
    else:
        changes, failures = totals["planned"], totals["failures"]
        inspections, down_cost_h = totals["insp"], down
        parts_by_bearing = {b: float(n) for b, n in issued.items()}
    costs = {
        "cost_parts": sum(n * scenario.bearings[b].price for b, n in parts_by_bearing.items()),
        "cost_planned": changes * c.planned_replacement,
        "cost_failure": failures * (c.planned_replacement + c.failure),
        "cost_downtime": down_cost_h * c.downtime_per_hour,
        "cost_inspection": inspections * c.inspection,
        "cost_holding": 0.0,
        "cost_emergency": 0.0,
    }
    costs["cost_total"] = sum(costs.values())
    costs["cost_per_year"] = per_year(costs["cost_total"], years, c.discount_rate_per_year)
    out.update(costs)
    first_stop = min((tl.first_stop_h for tl in tallies), default=math.inf)
    for row in _group_rows(scenario, intervals, H, first_stop):
        first = row["first_down_h"]
        first = H if (isinstance(first, float) and math.isnan(first)) else float(first)
        if row["group"] == "fleet":
            out["fleet_down"] = float(bool(row["had_down"]))
            out["fleet_first_down_h"] = first
        else:
            out[f"group_down:{row['group']}"] = float(bool(row["had_down"]))
            out[f"group_downtime_h:{row['group']}"] = float(row["down_h"])
            out[f"group_first_down_h:{row['group']}"] = first
    return {k: float(v) for k, v in out.items()}
