"""fleetsim benchmarks: throughput of both engines against bare yardsticks.

Run on purpose (``make bench`` or ``python benchmarks/run_benchmarks.py``);
prints, in one run:

* position-years simulated per CPU second (of this process: robust to other
  load on a shared machine) for each engine and policy at several fleet sizes;
* yardsticks on the same run-to-failure fleet — a bare SimPy model (one
  process per position, nothing else), the same with the garbage collector
  paused as the DES pauses it, and a bare numpy renewal sampler — and
  fleetsim's figures as ratios to them; the vectorised engine with 8 h repairs
  against a bare numpy sampler whose cycles are life + 8 h; a run-to-failure fleet
  coupled by 2 crews and one shared (s, S) store against a bare SimPy model of
  the same fleet (at 1,000 and 10,000 positions);
* the speed-up of the vectorised engine over the discrete-event engine, and
  where it crosses 1 for small fleets and few-unit machine types (the figures
  behind ``fleetsim.study.engines.choose_engine``);
* the scaling of a 200-replication study from one to two workers, beside
  what two processes give on this machine in the same rounds;
* the peak memory of a 1,000-replication study of 10,000 positions
  (in a child process, so the figure is that study's alone);
* the time of 200 replications of the pump-station demo.

``--quick`` runs smaller sizes (a smoke test of the script itself).
"""

from __future__ import annotations

import argparse
import dataclasses
import json
import resource
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import simpy

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from fleetsim.life import BearingType, LifeDistribution  # noqa: E402
from fleetsim.scenario.model import (  # noqa: E402
    HOURS_PER_YEAR,
    Bearing,
    Costs,
    Crews,
    Duration,
    Machine,
    Policy,
    Position,
    Scenario,
    Stock,
    Study,
)

LIFE = LifeDistribution(shape=1.5, scale_h=40_000.0, location_h=2_000.0)
HORIZON_H = 10 * HOURS_PER_YEAR
POSITIONS_PER_UNIT = 4
#: Rounds of alternated yardstick timings (medians are reported).
YARDSTICK_ROUNDS = 7


CONDITION_PF = Duration("exponential", 1_500.0)


def fleet(positions: int, policy: Policy, repair_h: float = 0.0) -> Scenario:
    """A fleet of ``positions`` bearing positions, four per unit, all on ``policy``."""
    # the condition fleet's bearings have a P-F interval (it belongs to the position)
    pf = CONDITION_PF if policy.kind == "condition" else None
    pos = tuple(Position(f"p{j}", "B", LIFE, policy, pf_interval=pf)
                for j in range(POSITIONS_PER_UNIT))
    units = max(1, positions // POSITIONS_PER_UNIT)
    rep = Duration.fixed(repair_h)
    return Scenario(
        Study("bench", HORIZON_H, 1, 1),
        Costs(planned_replacement=500.0, failure=3000.0, downtime_per_hour=50.0),
        {"B": Bearing("B", BearingType.BALL, 50_000.0, price=100.0)},
        (Machine("m", units, 1.0, 0.0, pos),),
        crews=Crews(None, rep, rep),
    )


def on_policy(scenario: Scenario, policy: Policy) -> Scenario:
    """``scenario`` (one machine type) with every position on ``policy``; under condition
    monitoring the bearings get :data:`CONDITION_PF`, as in :func:`fleet`."""
    pf = CONDITION_PF if policy.kind == "condition" else None
    m = scenario.machines[0]
    return dataclasses.replace(scenario, machines=(dataclasses.replace(m, positions=tuple(
        dataclasses.replace(p, policy=policy, pf_interval=pf) for p in m.positions)),))


def position_years(scenario: Scenario) -> float:
    return scenario.position_count * HORIZON_H / HOURS_PER_YEAR


def timed(fn, min_seconds: float = 1.0, max_runs: int = 200) -> float:  # type: ignore[no-untyped-def]
    """CPU seconds of this process per call (at least one call, repeated up to ``min_seconds``).

    CPU time rather than wall time: on a shared machine other processes change
    the wall time of a run far more than its CPU time, and every figure here is
    single-threaded (the worker-scaling rounds time the wall clock themselves).
    """
    runs, start = 0, time.process_time()
    while True:
        fn(runs)
        runs += 1
        elapsed = time.process_time() - start
        if elapsed >= min_seconds or runs >= max_runs:
            return elapsed / runs


# --- yardsticks -------------------------------------------------------------------------
def bare_simpy(positions: int, seed: int) -> int:
    """Run-to-failure with one SimPy process per position and nothing else."""
    env = simpy.Environment()
    rng = np.random.default_rng(seed)
    failures = [0]
    b, eta, x0 = LIFE.shape, LIFE.scale_h, LIFE.location_h

    def position():  # type: ignore[no-untyped-def]
        while True:
            yield env.timeout(x0 + eta * rng.weibull(b))
            failures[0] += 1

    for _ in range(positions):
        env.process(position())
    env.run(until=HORIZON_H)
    return failures[0]


def bare_simpy_paused(positions: int, seed: int) -> int:
    """:func:`bare_simpy` with the cyclic garbage collector paused, as the DES does."""
    from fleetsim.sim.gcpause import gc_paused

    with gc_paused():
        return bare_simpy(positions, seed)


def bare_numpy(positions: int, seed: int, repair_h: float = 0.0) -> int:
    """Run-to-failure renewal counts by cumulative sums of sampled lives (+ a repair each)."""
    rng = np.random.default_rng(seed)
    t = np.zeros(positions)
    failures = 0
    active = np.ones(positions, dtype=bool)
    while active.any():
        t[active] += LIFE.location_h + LIFE.scale_h * rng.weibull(LIFE.shape, int(active.sum()))
        active &= t < HORIZON_H
        failures += int(active.sum())
        t[active] += repair_h
    return failures


#: The coupled fleet: this many crews and one shared store of the bearing, sized per
#: 1,000 positions (about 230 failures a year) so that units wait now and then for both.
COUPLED_CREWS = 2
COUPLED_LEAD_H = 720.0


def coupled_stock(positions: int) -> Stock:
    """The shared store of the coupled fleet: (s, S) = (25, 60) per 1,000 positions."""
    k = max(1, positions // 1000)
    return Stock(initial=40 * k, reorder_point=25 * k, order_up_to=60 * k,
                 lead_time=Duration.fixed(COUPLED_LEAD_H))


def coupled_fleet(positions: int, repair_h: float = 8.0) -> Scenario:
    """:func:`fleet` on run-to-failure with :data:`COUPLED_CREWS` crews and one shared store."""
    sc = fleet(positions, Policy(), repair_h)
    rep = Duration.fixed(repair_h)
    return dataclasses.replace(sc, stores={"B": coupled_stock(positions)},
                               crews=Crews(COUPLED_CREWS, rep, rep))


def bare_simpy_coupled(positions: int, seed: int, repair_h: float = 8.0) -> int:
    """The coupled fleet by hand in SimPy: one process per unit of four positions, a
    ``simpy.Resource`` of crews and a ``simpy.Container`` store with (s, S) reordering.

    A failure stops its unit (the other positions do not age), takes a spare (waiting
    if the shelf is empty; the store reviews its inventory position after each demand),
    then a crew for ``repair_h`` hours, and the unit runs again: what the engines do.
    """
    env = simpy.Environment()
    rng = np.random.default_rng(seed)
    stock = coupled_stock(positions)
    s, big_s, lead = stock.reorder_point, stock.order_up_to, COUPLED_LEAD_H
    crews = simpy.Resource(env, COUPLED_CREWS)
    shelf = simpy.Container(env, init=stock.initial)
    on_order = [0]
    failures = [0]
    b, eta, x0 = LIFE.shape, LIFE.scale_h, LIFE.location_h

    def deliver(qty):  # type: ignore[no-untyped-def]
        yield env.timeout(lead)
        on_order[0] -= qty
        yield shelf.put(qty)

    def unit():  # type: ignore[no-untyped-def]
        left = x0 + eta * rng.weibull(b, POSITIONS_PER_UNIT)  # operating hours to failure
        while True:
            i = int(left.argmin())
            run = float(left[i])
            yield env.timeout(run)
            left -= run
            failures[0] += 1
            spare = shelf.get(1)
            position = shelf.level + on_order[0] - len(shelf.get_queue)
            if position <= s:
                on_order[0] += big_s - position
                env.process(deliver(big_s - position))
            yield spare
            with crews.request() as crew:
                yield crew
                yield env.timeout(repair_h)
            left[i] = x0 + eta * rng.weibull(b)

    for _ in range(max(1, positions // POSITIONS_PER_UNIT)):
        env.process(unit())
    env.run(until=HORIZON_H)
    return failures[0]


def des_run(scenario: Scenario, seed: int) -> None:
    from fleetsim.sim import simulate

    simulate(scenario, np.random.SeedSequence(seed), keep_events=False)


def vector_run(scenario: Scenario, seed: int) -> None:
    from fleetsim.sim.vector import simulate_vector

    simulate_vector(scenario, np.random.SeedSequence(seed))


POLICIES = {
    "run-to-failure": Policy(),
    "age": Policy("age", 30_000.0),
    "block": Policy("block", 30_000.0),
    "condition": Policy("condition", inspection_every_h=720.0, detection=0.8),
}


def _cell(row: dict, key: str, width: int = 12, spec: str = ",.0f") -> str:
    return f"{row[key]:>{width}{spec}}" if key in row else f"{'—':>{width}}"


def _ratio(runs: dict[str, list[float]], a: str, b: str) -> float:
    """Median over rounds of the ratio a/b (each round times a and b back to back)."""
    return float(np.median(np.array(runs[a]) / np.array(runs[b])))


def throughput(sizes: list[int], des_max: int, coupled_sizes: list[int]) -> dict:
    out: dict = {"engines": {}, "yardsticks": {}}
    for policy in POLICIES.values():  # warm up: the first run of each pays for imports and caches
        vector_run(fleet(8, policy, repair_h=8.0), 0)
        des_run(fleet(8, policy, repair_h=8.0), 0)
    print("\nThroughput (position-years per second; repair 8 h, zero for yardstick runs)")
    print(f"{'engine':<8} {'policy':<15} {'positions':>9} {'pos-yr/s':>12}")
    for n in sizes:
        for name, policy in POLICIES.items():
            sc = fleet(n, policy, repair_h=8.0)
            py = position_years(sc)
            v = py / timed(lambda i, sc=sc: vector_run(sc, i))
            out["engines"][f"vector/{name}/{n}"] = v
            print(f"{'vector':<8} {name:<15} {n:>9} {v:>12,.0f}")
            if n <= des_max:
                d = py / timed(lambda i, sc=sc: des_run(sc, i))
                out["engines"][f"des/{name}/{n}"] = d
                print(f"{'des':<8} {name:<15} {n:>9} {d:>12,.0f}")
    print("\nRun-to-failure against the yardsticks (zero repair time, same fleet; medians of "
          f"{YARDSTICK_ROUNDS} alternated rounds)")
    print("The DES pauses Python's cyclic garbage collector during a replication; 'simpy*' is the "
          "bare SimPy model with it paused too (like for like)")
    print(f"{'positions':>9} {'bare simpy':>12} {'simpy*':>12} {'des':>12} {'des/simpy':>10} "
          f"{'des/simpy*':>10} {'bare numpy':>12} {'vector':>12} {'vec/numpy':>10} {'vec/des':>8}")
    for n in sizes:
        sc = fleet(n, Policy())
        py = position_years(sc)
        # Alternate each engine with its yardsticks and take medians of the per-round
        # ratios: the speed of this machine drifts by ±20 % over minutes.
        runs: dict[str, list[float]] = {k: [] for k in
                                        ("vector", "bare_numpy", "des", "bare_simpy", "simpy_paused")}
        for _ in range(YARDSTICK_ROUNDS):
            runs["vector"].append(py / timed(lambda i, sc=sc: vector_run(sc, i), 0.3))
            runs["bare_numpy"].append(py / timed(lambda i, n=n: bare_numpy(n, i), 0.3))
            if n <= des_max:
                runs["bare_simpy"].append(py / timed(lambda i, n=n: bare_simpy(n, i), 0.3))
                runs["des"].append(py / timed(lambda i, sc=sc: des_run(sc, i), 0.3))
                runs["simpy_paused"].append(py / timed(lambda i, n=n: bare_simpy_paused(n, i), 0.3))
        med = {k: float(np.median(v)) for k, v in runs.items() if v}

        row = {"bare_numpy": med["bare_numpy"], "vector": med["vector"],
               "vector_over_numpy": _ratio(runs, "vector", "bare_numpy")}
        if n <= des_max:
            row.update(bare_simpy=med["bare_simpy"], bare_simpy_paused=med["simpy_paused"],
                       des=med["des"], des_over_simpy=_ratio(runs, "des", "bare_simpy"),
                       des_over_simpy_paused=_ratio(runs, "des", "simpy_paused"),
                       vector_over_des=_ratio(runs, "vector", "des"))
        out["yardsticks"][n] = row
        print(f"{n:>9} {_cell(row, 'bare_simpy')} {_cell(row, 'bare_simpy_paused')} {_cell(row, 'des')} "
              f"{_cell(row, 'des_over_simpy', 10, '.2f')} {_cell(row, 'des_over_simpy_paused', 10, '.2f')} "
              f"{_cell(row, 'bare_numpy')} {_cell(row, 'vector')} "
              f"{_cell(row, 'vector_over_numpy', 10, '.2f')} {_cell(row, 'vector_over_des', 8, '.2f')}")
    print("\nRun-to-failure with 8 h repairs (four positions a unit: a repair stops the unit) "
          "against a bare numpy sampler whose cycles are life + 8 h; medians of "
          f"{YARDSTICK_ROUNDS} alternated rounds")
    print(f"{'positions':>9} {'bare numpy':>12} {'vector':>12} {'vec/numpy':>10}")
    out["repairs"] = {}
    for n in sizes:
        sc = fleet(n, Policy(), repair_h=8.0)
        py = position_years(sc)
        runs = {"vector": [], "bare_numpy": []}
        for _ in range(YARDSTICK_ROUNDS):
            runs["vector"].append(py / timed(lambda i, sc=sc: vector_run(sc, i), 0.3))
            runs["bare_numpy"].append(py / timed(lambda i, n=n: bare_numpy(n, i, 8.0), 0.3))
        row = {"bare_numpy": float(np.median(runs["bare_numpy"])),
               "vector": float(np.median(runs["vector"])),
               "vector_over_numpy": _ratio(runs, "vector", "bare_numpy")}
        out["repairs"][n] = row
        print(f"{n:>9} {_cell(row, 'bare_numpy')} {_cell(row, 'vector')} "
              f"{_cell(row, 'vector_over_numpy', 10, '.2f')}")
    print("\nRun-to-failure fleet coupled by 2 crews and one shared store (8 h repairs) against "
          f"a bare SimPy model of the same fleet; medians of {YARDSTICK_ROUNDS} alternated rounds")
    print(f"{'positions':>9} {'bare simpy':>12} {'des':>12} {'vector':>12} {'des/simpy':>10} "
          f"{'vec/simpy':>10}")
    out["coupled"] = {}
    for n in coupled_sizes:
        sc = coupled_fleet(n)
        py = position_years(sc)
        runs = {"vector": [], "des": [], "bare_simpy": []}
        for _ in range(YARDSTICK_ROUNDS):
            runs["bare_simpy"].append(py / timed(lambda i, n=n: bare_simpy_coupled(n, i), 0.3))
            runs["vector"].append(py / timed(lambda i, sc=sc: vector_run(sc, i), 0.3))
            runs["des"].append(py / timed(lambda i, sc=sc: des_run(sc, i), 0.3))
        row = {k: float(np.median(v)) for k, v in runs.items()}
        row.update(des_over_simpy=_ratio(runs, "des", "bare_simpy"),
                   vector_over_simpy=_ratio(runs, "vector", "bare_simpy"))
        out["coupled"][n] = row
        print(f"{n:>9} {_cell(row, 'bare_simpy')} {_cell(row, 'des')} {_cell(row, 'vector')} "
              f"{_cell(row, 'des_over_simpy', 10, '.2f')} {_cell(row, 'vector_over_simpy', 10, '.2f')}")
    return out


def lean_loop(sizes: list[int], rounds: int = YARDSTICK_ROUNDS) -> dict:
    """The discrete-event engine on its lean event loop against the same engine on SimPy
    (``engine.LEAN``), on the coupled fleet with planned work (which only the DES runs)."""
    import fleetsim.sim.engine as engine

    print("\nPlanned work under 2 crews and one shared store (8 h stops; only the DES runs it): "
          f"the DES on its lean event loop against the DES on SimPy; medians of {rounds} "
          "alternated rounds (the two give the same run, bit for bit)")
    print(f"{'policy':<15} {'positions':>9} {'on simpy':>12} {'lean':>12} {'lean/simpy':>10}")
    out: dict = {}
    for name in ("age", "block", "condition"):
        for n in sizes:
            sc = on_policy(coupled_fleet(n), POLICIES[name])
            py = position_years(sc)
            runs: dict[str, list[float]] = {"simpy": [], "lean": []}
            for _ in range(rounds):
                for key, lean in (("simpy", False), ("lean", True)):
                    engine.LEAN = lean
                    runs[key].append(py / timed(lambda i, sc=sc: des_run(sc, i), 0.3))
            engine.LEAN = True
            row = {k: float(np.median(v)) for k, v in runs.items()}
            row["lean_over_simpy"] = _ratio(runs, "lean", "simpy")
            out[f"{name}/{n}"] = row
            print(f"{name:<15} {n:>9} {_cell(row, 'simpy')} {_cell(row, 'lean')} "
                  f"{_cell(row, 'lean_over_simpy', 10, '.2f')}")
    return out


def _shaped(units: int, positions: int, policy: Policy, coupled: bool = False) -> Scenario:
    """The benchmark fleet reshaped: ``units`` units of ``positions`` positions."""
    sc = coupled_fleet(1_000) if coupled else fleet(4, policy, repair_h=8.0)
    m = sc.machines[0]
    pos = tuple(dataclasses.replace(m.positions[0], id=f"p{j}") for j in range(positions))
    return dataclasses.replace(sc, machines=(dataclasses.replace(m, count=units, positions=pos),))


def crossings(rounds: int = 3) -> dict:
    """Vectorised over discrete-event speed on small fleets and few-unit machine types."""
    shapes = [(2, 4), (5, 4), (12, 4), (16, 4), (8, 8), (1, 64)]
    print("\nVectorised engine ÷ discrete-event engine speed (CPU time, medians of "
          f"{rounds} alternated rounds; above 1 the vectorised engine is faster)")
    print(f"{'units×positions':<16}" + "".join(f"{name:>16}" for name in POLICIES)
          + f"{'coupled r-t-f':>16}")
    out: dict = {}
    for units, n_pos in shapes:
        row = []
        for name, policy in [*POLICIES.items(), ("coupled", Policy())]:
            sc = _shaped(units, n_pos, policy, coupled=name == "coupled")
            vector_run(sc, 0)
            des_run(sc, 0)
            r = [timed(lambda i, sc=sc: des_run(sc, i), 0.15)
                 / timed(lambda i, sc=sc: vector_run(sc, i), 0.15) for _ in range(rounds)]
            out[f"{name}/{units}x{n_pos}"] = float(np.median(r))
            row.append(f"{np.median(r):>16.2f}")
        print(f"{f'{units}×{n_pos}':<16}" + "".join(row))
    return out


def _spin(n: int) -> int:
    x = 0
    for i in range(n):
        x += i
    return x


def _half_study(replications: int) -> float:
    """A study of ``replications`` DES replications in this process (seconds)."""
    from fleetsim.study.engines import replicate
    from fleetsim.study.runner import run_replications

    sc = fleet(200, Policy("age", 30_000.0), repair_h=8.0)
    start = time.perf_counter()
    run_replications(replicate, (sc, "des", HORIZON_H), replications=replications, seed=1,
                     workers=1)
    return time.perf_counter() - start


def _ceiling_round(pool, n: int = 6_000_000) -> float:  # type: ignore[no-untyped-def]
    """One measurement of what two processes give over one for plain Python work."""
    start = time.perf_counter()
    _spin(n)
    _spin(n)
    one = time.perf_counter() - start
    start = time.perf_counter()
    list(pool.map(_spin, [n, n]))
    return one / (time.perf_counter() - start)


def worker_scaling(replications: int, repeats: int = 5) -> dict:
    """One against two workers on a DES study, with the machine's own ceiling measured in
    the same rounds: this machine's speed (and what its second core gives) drifts over
    minutes, so each round times the ceiling and both studies back to back, and the
    medians of the per-round figures are reported."""
    from concurrent.futures import ProcessPoolExecutor

    from fleetsim.study.engines import replicate
    from fleetsim.study.runner import run_replications

    sc = fleet(200, Policy("age", 30_000.0), repair_h=8.0)
    rounds: dict[str, list[float]] = {"one_s": [], "two_s": [], "speedup": [], "ceiling": [],
                                      "spin_ceiling": []}
    with ProcessPoolExecutor(max_workers=2) as pool:
        list(pool.map(_half_study, [2, 2]))  # start both workers, imports done
        for _ in range(repeats):
            rounds["spin_ceiling"].append(_ceiling_round(pool))
            times = {}
            for w in (1, 2):
                start = time.perf_counter()
                run_replications(replicate, (sc, "des", HORIZON_H), replications=replications,
                                 seed=1, workers=w)
                times[w] = time.perf_counter() - start
            # the same study as two independent halves, one per process: what two
            # processes can give on this workload here, whatever the pool does
            start = time.perf_counter()
            list(pool.map(_half_study, [replications // 2, replications - replications // 2]))
            rounds["ceiling"].append(times[1] / (time.perf_counter() - start))
            rounds["one_s"].append(times[1])
            rounds["two_s"].append(times[2])
            rounds["speedup"].append(times[1] / times[2])
    med = {k: float(np.median(v)) for k, v in rounds.items()}
    share = float(np.median(np.array(rounds["speedup"]) / np.array(rounds["ceiling"])))

    def listed(key: str) -> str:
        return ", ".join(f"{x:.2f}" for x in rounds[key])

    print(f"\nWorkers: {replications} DES replications of 200 positions, {repeats} rounds: "
          f"1 worker {med['one_s']:.2f} s, 2 workers {med['two_s']:.2f} s, speed-up "
          f"{med['speedup']:.2f}× (rounds: {listed('speedup')})")
    print(f"Machine, same rounds: the study as two independent halves in two processes gives "
          f"{med['ceiling']:.2f}× ({listed('ceiling')}); plain Python spinning gives "
          f"{med['spin_ceiling']:.2f}× ({listed('spin_ceiling')}). The pool reaches {share:.0%} "
          "of the first, the ceiling for any worker speed-up here")
    return {**med, "of_ceiling": share, "rounds": rounds}


def _memory_child(replications: int, positions: int) -> None:
    from fleetsim.study.engines import replicate
    from fleetsim.study.runner import run_replications

    sc = fleet(positions, Policy(), repair_h=8.0)
    start = time.perf_counter()
    table = run_replications(replicate, (sc, "vector", HORIZON_H), replications=replications,
                             seed=1, workers=1)
    elapsed = time.perf_counter() - start
    peak_kib = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    print(json.dumps({"peak_MiB": peak_kib / 1024, "seconds": elapsed, "rows": len(table)}))


def peak_memory(replications: int, positions: int) -> dict:
    proc = subprocess.run(
        [sys.executable, __file__, "--memory-child", str(replications), str(positions)],
        capture_output=True, text=True, check=True,
    )
    res = json.loads(proc.stdout.strip().splitlines()[-1])
    print(f"\nMemory: {replications} replications × {positions:,} positions (vector engine): "
          f"peak {res['peak_MiB']:.0f} MiB, {res['seconds']:.1f} s")
    return res


def pump_demo(replications: int) -> dict:
    from fleetsim.scenario import load_scenario
    from fleetsim.study import run_study

    sc = load_scenario(ROOT / "scenarios" / "pump_stations.toml")
    out = {}
    for w in (1, 2):
        start = time.perf_counter()
        run_study(sc, replications=replications, workers=w, keep_events=False)
        out[w] = time.perf_counter() - start
    print(f"\nPump-station demo: {replications} replications, {sc.position_count} positions, "
          f"{sc.study.horizon_h / HOURS_PER_YEAR:.0f} years: {out[1]:.1f} s on 1 worker, "
          f"{out[2]:.1f} s on 2 workers")
    return out


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="small sizes only")
    parser.add_argument("--memory-child", nargs=2, type=int, help=argparse.SUPPRESS)
    parser.add_argument("--json", type=Path, help="also write the figures to this JSON file")
    args = parser.parse_args()
    if args.memory_child:
        _memory_child(*args.memory_child)
        return
    print(f"fleetsim benchmarks — Python {sys.version.split()[0]}, numpy {np.__version__}, "
          f"simpy {simpy.__version__}")
    if args.quick:
        figures = {"throughput": throughput([100, 1_000], des_max=1_000, coupled_sizes=[1_000])}
        figures["crossings"] = crossings(1)
        figures["lean_loop"] = lean_loop([1_000], rounds=3)
        figures["workers"] = worker_scaling(20, repeats=3)
        figures["memory"] = peak_memory(20, 1_000)
        figures["pump_demo"] = pump_demo(20)
    else:
        figures = {"throughput": throughput([100, 1_000, 10_000], des_max=10_000,
                                             coupled_sizes=[1_000, 10_000])}
        figures["crossings"] = crossings()
        figures["lean_loop"] = lean_loop([1_000, 10_000], rounds=3)
        figures["workers"] = worker_scaling(200)
        figures["memory"] = peak_memory(1_000, 10_000)
        figures["pump_demo"] = pump_demo(200)
    if args.json:
        args.json.write_text(json.dumps(figures, indent=2, default=float))


if __name__ == "__main__":
    main()
