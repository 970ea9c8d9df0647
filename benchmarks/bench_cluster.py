"""Dask benchmark: a small sweep with ``cluster="local"``, one cluster per variant or per study.

Run on purpose (``python benchmarks/bench_cluster.py [--quick] [--json FILE]``);
prints, in one run and in alternated rounds (medians):

* the sweep with a local Dask cluster started for each variant (what
  ``--cluster local`` did before: ``run_study(..., cluster="local")`` per
  variant);
* the same sweep on one local cluster for the whole study (what
  ``fleetsim sweep --cluster local`` does now: :func:`fleetsim.study.compare`);
* the same sweep in a local process pool (``--workers 2``, no Dask) and in
  this process (``--workers 1``), as yardsticks;
* the time of the whole command ``fleetsim sweep ... --cluster local``
  (report included) in a child process.

Every way gives the same replications (checked here): only the time differs.
"""

from __future__ import annotations

import argparse
import json
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from fleetsim.scenario import load_scenario  # noqa: E402
from fleetsim.scenario.model import Policy  # noqa: E402
from fleetsim.study import compare, run_study, with_policy  # noqa: E402

SCENARIO = ROOT / "scenarios" / "pump_stations.toml"
INTERVALS_H = (20_000.0, 40_000.0, 60_000.0, 80_000.0)
WORKERS = 2


def sweep() -> dict[str, object]:
    base = load_scenario(SCENARIO)
    return {f"age {t:.0f} h": with_policy(base, Policy("age", interval_h=t)) for t in INTERVALS_H}


def per_variant(variants: dict, replications: int) -> list:
    return [run_study(sc, replications=replications, workers=WORKERS, cluster="local",
                      keep_events=False, label=name) for name, sc in variants.items()]


def per_study(variants: dict, replications: int) -> list:
    return compare(variants, replications=replications, workers=WORKERS, cluster="local",
                   keep_events=False)


def pool(variants: dict, replications: int) -> list:
    return compare(variants, replications=replications, workers=WORKERS, keep_events=False)


def one_process(variants: dict, replications: int) -> list:
    return compare(variants, replications=replications, workers=1, keep_events=False)


def cli_sweep(replications: int) -> float:
    """Seconds of ``fleetsim sweep --cluster local`` as a user runs it (child process)."""
    with tempfile.TemporaryDirectory() as d:
        cmd = [str(Path(sys.executable).with_name("fleetsim")), "sweep", str(SCENARIO), "--vary",
               "policy.interval=" + ",".join(f"{t:.0f} h" for t in INTERVALS_H),
               "--replications", str(replications), "--workers", str(WORKERS),
               "--cluster", "local", "--quiet", "--out", str(Path(d) / "r")]
        start = time.perf_counter()
        subprocess.run(cmd, check=True, cwd=ROOT, stdout=subprocess.DEVNULL)
        return time.perf_counter() - start


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="one round, fewer replications")
    parser.add_argument("--rounds", type=int, default=3)
    parser.add_argument("--json", type=Path, help="also write the figures to this JSON file")
    args = parser.parse_args()
    reps = 10 if args.quick else 40
    rounds = 1 if args.quick else args.rounds
    variants = sweep()
    ways = {"local cluster per variant (before)": per_variant,
            "one local cluster per study (now)": per_study,
            "process pool, 2 workers (no Dask)": pool,
            "this process, 1 worker": one_process}
    times: dict[str, list[float]] = {k: [] for k in ways}
    reference = None
    for _ in range(rounds):
        for name, fn in ways.items():
            start = time.perf_counter()
            results = fn(variants, reps)
            times[name].append(time.perf_counter() - start)
            tables = [r.replications for r in results]
            if reference is None:
                reference = tables
            assert all(a.equals(b) for a, b in zip(tables, reference, strict=True)), name
    cli = [cli_sweep(reps) for _ in range(rounds)]
    print(f"Sweep of {len(variants)} variants x {reps} replications of {SCENARIO.name}, "
          f"{WORKERS} workers, {rounds} round(s), medians:")
    out: dict[str, float] = {}
    before = statistics.median(times["local cluster per variant (before)"])
    for name, ts in times.items():
        m = statistics.median(ts)
        out[name] = m
        print(f"  {name:<38} {m:7.2f} s   ({m / before:.2f} of before)")
    m = statistics.median(cli)
    out["fleetsim sweep --cluster local (command)"] = m
    print(f"  {'fleetsim sweep --cluster local (command)':<38} {m:7.2f} s")
    if args.json:
        args.json.write_text(json.dumps(out, indent=2) + "\n")


if __name__ == "__main__":
    main()
