"""Run a scenario for many replications, and compare variants on common random numbers.

This is the notebook-facing entry point::

    from fleetsim.scenario import load_scenario
    from fleetsim.study import run_study
    result = run_study(load_scenario("scenarios/pump_stations.toml"), replications=200)
    result.summary.loc[["cost_per_year", "availability"]]
"""

from __future__ import annotations

import dataclasses
import hashlib
import json
import time
from collections.abc import Mapping
from pathlib import Path
from typing import Any

import pandas as pd

from fleetsim.errors import InputError
from fleetsim.scenario.model import Policy, Scenario
from fleetsim.study.cluster import DaskCluster, check_cluster, study_cluster
from fleetsim.study.engines import choose_engine, replicate
from fleetsim.study.result import StudyResult
from fleetsim.study.runner import Progress, run_replications
from fleetsim.study.seeds import check_seed, replication_seed


def study_key(scenario: Scenario, seed: int, replications: int, engine: str, horizon_h: float) -> str:
    """A short hash naming a study for checkpoints: scenario digest, seed, engine, horizon."""
    text = json.dumps([scenario.digest, scenario.source, seed, engine, horizon_h, scenario.study.name])
    return hashlib.sha256(text.encode()).hexdigest()[:16]


def run_study(
    scenario: Scenario,
    *,
    replications: int | None = None,
    seed: int | None = None,
    engine: str | None = None,
    workers: int = 1,
    cluster: str | DaskCluster | None = None,
    progress: Progress | None = None,
    checkpoint: str | Path | None = None,
    horizon_h: float | None = None,
    keep_events: bool = True,
    label: str = "",
    events_file: str | Path | None = None,
    start: int = 0,
) -> StudyResult:
    """Simulate ``scenario`` for many replications and summarise.

    Parameters
    ----------
    scenario
        The validated fleet.
    replications, seed, horizon_h
        Override the scenario's study settings.
    engine
        ``"des"``, ``"vector"`` or None for automatic choice.
    workers
        Processes (1 = this process).
    cluster
        Dask scheduler address, ``"local"``, or an open
        :class:`~fleetsim.study.cluster.DaskCluster` (see :func:`run_replications`).
    progress
        ``progress(done, total)`` callback.
    checkpoint
        File to checkpoint finished replications to and resume from.
    keep_events
        Also keep the event log of the first replication (discrete-event
        engine), in memory (its first
        :data:`~fleetsim.sim.records.MAX_EVENTS_KEPT` events) or in ``events_file``.
    events_file
        Write that event log to this CSV file as it happens, every event in
        bounded memory (:class:`~fleetsim.sim.event_log.EventFile`), instead
        of holding it.
    label
        Name of this variant in comparisons.
    start
        Run only replications ``start`` to ``replications − 1`` (see
        :func:`~fleetsim.study.runner.run_replications`); join the results
        with :meth:`StudyResult.extended`.

    Returns
    -------
    StudyResult
    """
    reps = scenario.study.replications if replications is None else replications
    s = check_seed(scenario.study.seed if seed is None else seed)
    horizon = scenario.study.horizon_h if horizon_h is None else horizon_h
    if not horizon > 0:
        raise InputError("horizon", f"expected a horizon > 0, got {horizon} h")
    chosen, _why = choose_engine(scenario, engine)
    key = study_key(scenario, s, reps, chosen, horizon)
    started = time.perf_counter()
    table = run_replications(
        replicate,
        (scenario, chosen, horizon),
        replications=reps,
        seed=s,
        workers=workers,
        cluster=cluster,
        progress=progress,
        checkpoint=checkpoint,
        study_key=key,
        start=start,
    )
    events = None
    if keep_events and start == 0:
        from fleetsim.sim import simulate

        first = simulate(scenario, replication_seed(s, 0), horizon_h=horizon,
                         events_to=events_file)
        events = None if events_file is not None else first.events
    return StudyResult(
        scenario=scenario,
        replications=table,
        seed=s,
        engine=chosen,
        elapsed_s=time.perf_counter() - started,
        workers=workers,
        events=events,
        events_file=(Path(events_file) if events_file is not None and keep_events and start == 0
                     else None),
        label=label or scenario.study.name,
    )


def with_policy(scenario: Scenario, policy: Policy, machines: list[str] | None = None) -> Scenario:
    """The scenario with every position (of ``machines``, or all) on ``policy``."""
    new_machines = []
    for m in scenario.machines:
        if machines is None or m.id in machines:
            positions = tuple(dataclasses.replace(p, policy=policy) for p in m.positions)
            m = dataclasses.replace(m, positions=positions)
        new_machines.append(m)
    return dataclasses.replace(scenario, machines=tuple(new_machines))


def compare(
    variants: Mapping[str, Scenario], **kwargs: Any
) -> list[StudyResult]:
    """Run several variants on the same seed (common random numbers).

    Every variant gets the same replication seeds, so each replication's
    positions see the same lives in every variant and the paired differences
    have small variance. Keyword arguments go to :func:`run_study`; a
    ``cluster`` is opened once for all the variants
    (:func:`~fleetsim.study.cluster.study_cluster`).
    """
    results: list[StudyResult] = []
    cluster = kwargs.pop("cluster", None)
    if isinstance(cluster, str):  # settings checked before a cluster is started
        check_cluster(cluster)
        if kwargs.get("seed") is not None:
            check_seed(kwargs["seed"])
    with study_cluster(cluster, kwargs.get("workers", 1)) as dask:
        for name, sc in variants.items():
            results.append(run_study(sc, label=name, cluster=dask, **kwargs))
    return results


def paired_table(results: list[StudyResult], figure: str = "cost_per_year") -> pd.DataFrame:
    """Each variant's mean and its paired difference from the first, with 95 % intervals."""
    from fleetsim.study.summary import figure_estimate, paired_difference

    base = results[0].figure(figure)
    rows = []
    for r in results:
        est = figure_estimate(r.figure(figure), figure)
        diff = paired_difference(r.figure(figure), base)
        rows.append({
            "variant": r.label,
            "mean": est.mean, "ci_low": est.low, "ci_high": est.high,
            "diff_vs_first": diff.mean, "diff_low": diff.low, "diff_high": diff.high,
        })
    return pd.DataFrame(rows).set_index("variant")
