"""Sweep benchmark: age replacement at 20 intervals on a fleet of 10,000 positions.

Run on purpose (``python benchmarks/bench_sweep.py [--replications N] [--json FILE]``).
The target of the scale issue: 20 intervals × 1,000 replications × 10,000
positions × 20 years in under 2 minutes on 2 cores, under 1 GB of memory.

The sweep is what ``fleetsim sweep`` computes, without the report: 20
variants of the benchmark fleet (four positions a unit, Weibull 1.5 / 40,000 h
/ 2,000 h, 8 h repairs and planned changes) on common random numbers through
:func:`fleetsim.study.compare`, vectorised engine, 2 worker processes. It
prints the wall time and CPU time of this process and of the workers, the
position-years simulated per second, the time the full 1,000-replication
sweep takes (measured when ``--replications 1000``, the default; scaled
linearly from a smaller run otherwise, and said so) and the peak resident
memory of this process and of the largest worker.
"""

from __future__ import annotations

import argparse
import dataclasses
import json
import resource
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "benchmarks"))

from run_benchmarks import HOURS_PER_YEAR, fleet, position_years  # noqa: E402

from fleetsim.scenario.model import Policy  # noqa: E402
from fleetsim.study import compare  # noqa: E402

POSITIONS = 10_000
YEARS = 20
INTERVALS_H = tuple(10_000.0 + 5_000.0 * i for i in range(20))  # 10,000 .. 105,000 h
FULL_REPLICATIONS = 1000
WORKERS = 2
TARGET_S = 120.0
TARGET_MIB = 1024.0


def variants() -> dict[str, object]:
    """The 20 age-replacement variants of the benchmark fleet over 20 years."""
    out = {}
    for interval in INTERVALS_H:
        sc = fleet(POSITIONS, Policy("age", interval), repair_h=8.0)
        out[f"age {interval:,.0f} h"] = dataclasses.replace(
            sc, study=dataclasses.replace(sc.study, horizon_h=YEARS * HOURS_PER_YEAR))
    return out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--replications", type=int, default=FULL_REPLICATIONS,
                    help=f"replications per variant (default {FULL_REPLICATIONS}, the target's)")
    ap.add_argument("--json", type=Path, help="also write the figures to this file")
    args = ap.parse_args()
    if args.replications < 1:
        ap.error("--replications: expected a whole number >= 1")

    runs = variants()
    py = sum(position_years(sc) for sc in runs.values()) * args.replications  # type: ignore[arg-type]
    print(f"Sweep: {len(runs)} age intervals × {args.replications:,} replications × "
          f"{POSITIONS:,} positions × {YEARS} years = {py:,.0f} position-years, "
          f"vectorised engine, {WORKERS} workers")
    wall = time.perf_counter()
    cpu = time.process_time()
    results = compare(runs, replications=args.replications, seed=1, engine="vector",
                      workers=WORKERS, keep_events=False)
    wall = time.perf_counter() - wall
    cpu = time.process_time() - cpu
    children = resource.getrusage(resource.RUSAGE_CHILDREN)
    peak_self = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    peak_child = children.ru_maxrss / 1024
    assert len(results) == len(runs)

    full_s = wall * FULL_REPLICATIONS / args.replications
    measured = args.replications == FULL_REPLICATIONS
    figures = {
        "variants": len(runs), "replications": args.replications, "positions": POSITIONS,
        "years": YEARS, "workers": WORKERS, "wall_s": wall, "cpu_parent_s": cpu,
        "cpu_workers_s": children.ru_utime + children.ru_stime,
        "position_years_per_s": py / wall, "full_sweep_s": full_s,
        "full_sweep_measured": measured, "peak_parent_MiB": peak_self,
        "peak_worker_MiB": peak_child, "peak_total_MiB": peak_self + WORKERS * peak_child,
    }
    print(f"wall {wall:.1f} s (CPU: this process {cpu:.1f} s, workers "
          f"{figures['cpu_workers_s']:.1f} s); {py / wall:,.0f} position-years per second")
    how = "measured" if measured else f"scaled from {args.replications:,} replications"
    print(f"The full sweep ({FULL_REPLICATIONS:,} replications): {full_s:.0f} s ({how}); "
          f"target < {TARGET_S:.0f} s: {'met' if full_s < TARGET_S else 'not met'}")
    print(f"Peak memory: this process {peak_self:.0f} MiB, largest worker {peak_child:.0f} MiB, "
          f"at most {figures['peak_total_MiB']:.0f} MiB together; target < {TARGET_MIB:.0f} MiB: "
          f"{'met' if figures['peak_total_MiB'] < TARGET_MIB else 'not met'}")
    if args.json:
        args.json.write_text(json.dumps(figures, indent=2))


if __name__ == "__main__":
    main()
