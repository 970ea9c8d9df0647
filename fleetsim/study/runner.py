"""Running replications: in this process, in a process pool, with checkpoints.

Each replication is reduced to a flat mapping of figures (``{name: float}``)
as soon as it finishes, so memory stays bounded whatever the number of
replications. Replication ``i`` always gets the seed
:func:`~fleetsim.study.seeds.replication_seed` ``(seed, i)``, so the result
is the same whatever the number of workers.

A checkpoint file (JSON lines, one replication per line, appended and flushed
as replications finish) lets an interrupted study resume: replications already
in the file are not run again, and the final table is identical to an
uninterrupted run.
"""

from __future__ import annotations

import json
import math
import os
import signal
import sys
import threading
import time
from collections.abc import Callable, Iterable, Mapping
from concurrent.futures import FIRST_COMPLETED, Future, ProcessPoolExecutor, wait
from pathlib import Path
from typing import Any

import pandas as pd

from fleetsim.errors import InputError
from fleetsim.study.cluster import DaskCluster, check_cluster, study_cluster
from fleetsim.study.seeds import check_seed, replication_seed

#: ``task(payload, seed_sequence) -> {figure: value}``; must be a module-level function.
ReplicationTask = Callable[[Any, Any], Mapping[str, float]]
Progress = Callable[[int, int], None]


def _run_chunk(task: ReplicationTask, payload: Any, seed: int, indexes: list[int]) -> list[dict]:
    out = []
    for i in indexes:
        row = dict(task(payload, replication_seed(seed, i)))
        row["replication"] = i
        out.append(row)
    return out


_WORKER: dict[str, Any] = {}

#: How often a pool worker checks that the process that started it still runs, seconds.
PARENT_POLL_S = 0.5


def watch_parent(parent_pid: int, poll_s: float = PARENT_POLL_S) -> None:
    """Make this process exit as soon as ``parent_pid`` is gone, whatever killed it.

    On Linux the kernel sends SIGKILL when the parent dies (``PR_SET_PDEATHSIG``);
    everywhere, a daemon thread checks every ``poll_s`` seconds that the parent
    is still this process's parent (a worker whose parent died is re-parented)
    and ends the process with ``os._exit`` otherwise. So a pool worker never
    outlives a study killed with SIGKILL, and never holds the caller's standard
    output and error open.
    """
    if sys.platform.startswith("linux"):
        try:
            import ctypes

            libc = ctypes.CDLL(None, use_errno=True)
            libc.prctl(1, signal.SIGKILL, 0, 0, 0)  # PR_SET_PDEATHSIG = 1
        except (OSError, AttributeError):
            pass
    # With the fork and spawn start methods the parent is the study's process;
    # with forkserver it is the fork server, which exits when the study's does.
    watched = os.getppid()
    if watched == 1 or not _alive(parent_pid):  # the study died before the watch started
        os._exit(1)

    def poll() -> None:
        while True:
            time.sleep(poll_s)
            if os.getppid() != watched:
                os._exit(1)

    threading.Thread(target=poll, name="fleetsim-parent-watch", daemon=True).start()


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


def _init_worker(task: ReplicationTask, payload: Any, seed: int, parent_pid: int) -> None:
    """Process-pool initializer: watch the parent; receive the task and its payload once."""
    watch_parent(parent_pid)
    _WORKER.update(task=task, payload=payload, seed=seed)


def _run_chunk_in_worker(indexes: list[int]) -> list[dict]:
    return _run_chunk(_WORKER["task"], _WORKER["payload"], _WORKER["seed"], indexes)


def _chunks(indexes: list[int], size: int) -> Iterable[list[int]]:
    for k in range(0, len(indexes), size):
        yield indexes[k : k + size]


def _guided_chunks(indexes: list[int], workers: int) -> Iterable[list[int]]:
    """Chunks that shrink as the work runs out (a quarter of each worker's share of what
    is left, at least one), so the workers finish close together."""
    k, n = 0, len(indexes)
    while k < n:
        size = max(1, math.ceil((n - k) / (4 * workers)))
        yield indexes[k : k + size]
        k += size


def _read_checkpoint(path: Path, key: str) -> dict[int, dict]:
    rows: dict[int, dict] = {}
    if not path.exists():
        return rows
    with path.open(encoding="utf-8") as fh:
        header = fh.readline()
        try:
            if json.loads(header).get("study_key") != key:
                raise InputError(
                    str(path), "the checkpoint belongs to another study (scenario, seed or settings differ)"
                )
        except json.JSONDecodeError:
            raise InputError(str(path), "expected a fleetsim checkpoint file") from None
        for line in fh:
            try:
                row = json.loads(line)
            except json.JSONDecodeError:
                break  # a line cut by the interruption: run that replication again
            rows[int(row["replication"])] = row
    return rows


def run_replications(
    task: ReplicationTask,
    payload: Any,
    *,
    replications: int,
    seed: int,
    workers: int = 1,
    progress: Progress | None = None,
    checkpoint: str | Path | None = None,
    study_key: str = "",
    chunk_size: int | None = None,
    cluster: str | DaskCluster | None = None,
    start: int = 0,
) -> pd.DataFrame:
    """Run ``replications`` independent replications of ``task``.

    Parameters
    ----------
    task
        Module-level function ``task(payload, seed_sequence)`` returning the
        figures of one replication.
    payload
        Passed to every call (a :class:`~fleetsim.scenario.model.Scenario`, or
        a tuple of it and settings); must be picklable for ``workers > 1``.
    replications
        Number of replications (>= 1).
    seed
        Study seed.
    workers
        Number of processes; 1 runs in this process.
    progress
        Called as ``progress(done, total)`` after each finished chunk.
    checkpoint
        JSON-lines file to append finished replications to and resume from.
    study_key
        Identifies the study in the checkpoint (scenario digest, seed, settings).
    chunk_size
        Replications per task sent to a worker (default: chunks that shrink from a
        quarter of each worker's share down to one replication).
    cluster
        Run on Dask instead of a local process pool: a scheduler address
        (``"tcp://host:8786"``), ``"local"`` for a ``LocalCluster`` of
        ``workers`` processes started for this call, or a
        :class:`~fleetsim.study.cluster.DaskCluster` already open (several
        studies on one cluster). Needs the ``cluster`` extra (dask.distributed).
    start
        Run only replications ``start`` to ``replications − 1`` (those below
        were run before: a sequential procedure adding replications on the
        same seeds). Replication i has the same seed whatever ``start`` is.

    Returns
    -------
    pandas.DataFrame
        One row per replication run (sorted by the ``replication`` column).
    """
    if replications < 1:
        raise InputError("replications", f"expected at least 1, got {replications}")
    if not 0 <= start < replications:
        raise InputError("replications", f"expected 0 <= start < {replications}, got {start}")
    seed = check_seed(seed)
    if isinstance(cluster, str):
        check_cluster(cluster)
    if workers < 1:
        raise InputError("workers", f"expected at least 1, got {workers}")
    done: dict[int, dict] = {}
    ck_file = None
    if checkpoint is not None:
        ck_path = Path(checkpoint)
        done = {i: r for i, r in _read_checkpoint(ck_path, study_key).items()
                if start <= i < replications}
        new_file = not ck_path.exists()
        ck_file = ck_path.open("a", encoding="utf-8")
        if new_file:
            ck_file.write(json.dumps({"study_key": study_key}) + "\n")
            ck_file.flush()
    todo = [i for i in range(start, replications) if i not in done]
    rows = dict(done)
    if progress is not None:
        progress(len(rows), replications)

    def record(chunk_rows: list[dict]) -> None:
        for row in chunk_rows:
            rows[row["replication"]] = row
            if ck_file is not None:
                ck_file.write(json.dumps(row) + "\n")
        if ck_file is not None:
            ck_file.flush()
            os.fsync(ck_file.fileno())
        if progress is not None:
            progress(len(rows), replications)

    chunks = list(_chunks(todo, chunk_size) if chunk_size else _guided_chunks(todo, workers))
    try:
        if cluster is not None:
            with study_cluster(cluster, workers) as dask:
                assert dask is not None
                _run_on_dask(task, payload, seed, chunks, dask, record)
        elif workers == 1 or len(todo) <= 1:
            size = chunk_size or max(1, min(25, math.ceil(len(todo) / 20) if todo else 1))
            for chunk in _chunks(todo, size):
                record(_run_chunk(task, payload, seed, chunk))
        else:
            _run_in_pool(task, payload, seed, chunks, workers, record)
    finally:
        if ck_file is not None:
            ck_file.close()
    table = pd.DataFrame([rows[i] for i in sorted(rows)])
    cols = ["replication"] + [c for c in table.columns if c != "replication"]
    return table[cols].reset_index(drop=True)


def _run_in_pool(
    task: ReplicationTask,
    payload: Any,
    seed: int,
    chunks: list[list[int]],
    workers: int,
    record: Callable[[list[dict]], None],
) -> None:
    """Run chunks in a local process pool, recording them in the order they finish."""
    pool = ProcessPoolExecutor(
        max_workers=workers, initializer=_init_worker,
        initargs=(task, payload, seed, os.getpid()),
    )
    try:
        pending: set[Future] = {pool.submit(_run_chunk_in_worker, chunk) for chunk in chunks}
        while pending:
            finished, pending = wait(pending, return_when=FIRST_COMPLETED)
            for fut in finished:
                record(fut.result())
    finally:
        # Every result is in (or the study failed): let the workers exit in the
        # background instead of waiting for their interpreters to shut down.
        pool.shutdown(wait=False, cancel_futures=True)


def _run_on_dask(
    task: ReplicationTask,
    payload: Any,
    seed: int,
    chunks: list[list[int]],
    cluster: DaskCluster,
    record: Callable[[list[dict]], None],
) -> None:
    """Run chunks on an open Dask cluster, recording them in the order they finish."""
    from distributed import as_completed

    client = cluster.client
    # A key of its own (hash=False): studies sharing a cluster may send the same
    # payload, and one study's release of it must not take it from the next.
    data = client.scatter(payload, broadcast=True, hash=False)
    futures = [client.submit(_run_chunk, task, data, seed, ch, pure=False) for ch in chunks]
    try:
        for fut in as_completed(futures):
            record(fut.result())
    except BaseException:
        client.cancel(futures)  # leave a shared cluster idle for the next study
        raise
