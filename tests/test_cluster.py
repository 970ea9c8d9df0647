"""Studies on Dask: a real scheduler with two worker processes, one cluster per study.

The scheduler and its two workers are started here as separate processes
(``dask scheduler`` and ``dask worker``, on 127.0.0.1 only), exactly as a
user would point a study at an existing cluster. Replication ``i`` always
gets ``replication_seed(seed, i)``, so the results must be identical, row
for row, to the same study in this process with one worker.
"""

from __future__ import annotations

import json
import os
import shutil
import subprocess
import sys
import time
from collections.abc import Iterator
from pathlib import Path

import pytest

from fleetsim.cli import main
from fleetsim.errors import InputError
from fleetsim.scenario import load_scenario
from fleetsim.study import compare, run_replications, run_study
from fleetsim.study.cluster import check_cluster

SMALL = """
[study]
name = "Cluster check"
horizon = "4 years"
replications = 10
seed = 21

[costs]
planned_replacement = 300
failure = 2000

[[bearing]]
id = "QB-1"
type = "ball"
dynamic_rating = "30 kN"
static_rating = "18 kN"
price = 60

[[machine]]
id = "fan"
count = 3
  [[machine.position]]
  id = "de"
  bearing = "QB-1"
  radial_load = "4 kN"
  speed = "1500 rpm"

[policy]
kind = "age"
interval = "12000 h"

[crews]
count = 1
planned_repair = "4 h"
unplanned_repair = "10 h"

[[variant]]
name = "Run to failure"
set = { policy = { kind = "run-to-failure" } }
"""


def _dask_command() -> list[str]:
    exe = Path(sys.executable).with_name("dask")
    if exe.exists():
        return [str(exe)]
    found = shutil.which("dask")
    assert found is not None, "the dask command comes with dask[distributed] (test extra)"
    return [found]


def _stop(procs: list[subprocess.Popen]) -> None:
    for p in procs:
        if p.poll() is None:
            p.terminate()
    for p in procs:
        try:
            p.wait(timeout=30)
        except subprocess.TimeoutExpired:
            p.kill()
            p.wait(timeout=10)


@pytest.fixture(scope="module")
def scheduler(tmp_path_factory: pytest.TempPathFactory) -> Iterator[str]:
    """Address of a Dask scheduler on 127.0.0.1 with two single-threaded worker processes."""
    from distributed import Client

    d = tmp_path_factory.mktemp("dask")
    info = d / "scheduler.json"
    dask = _dask_command()
    # The workers import this module too (for _pid_task), as a user's workers import theirs.
    path = os.pathsep.join(filter(None, [str(Path(__file__).parent), os.environ.get("PYTHONPATH")]))
    env = dict(os.environ, PYTHONPATH=path)
    logs = [(d / f"{name}.log").open("w") for name in ("scheduler", "worker-1", "worker-2")]
    procs = [subprocess.Popen(
        [*dask, "scheduler", "--host", "127.0.0.1", "--port", "0", "--no-dashboard",
         "--scheduler-file", str(info)],
        stdout=logs[0], stderr=subprocess.STDOUT, env=env, cwd=d,
    )]
    try:
        deadline = time.monotonic() + 60
        while not info.exists() or not info.read_text().strip():
            assert procs[0].poll() is None, (d / "scheduler.log").read_text()
            assert time.monotonic() < deadline, "the scheduler did not start in 60 s"
            time.sleep(0.2)
        address = json.loads(info.read_text())["address"]
        for k in (1, 2):
            procs.append(subprocess.Popen(
                [*dask, "worker", "--scheduler-file", str(info), "--host", "127.0.0.1",
                 "--nthreads", "1", "--no-nanny", "--no-dashboard", "--name", f"worker-{k}",
                 "--local-directory", str(d / f"w{k}"), "--death-timeout", "60"],
                stdout=logs[k], stderr=subprocess.STDOUT, env=env, cwd=d,
            ))
        with Client(address, timeout="30s") as client:
            client.wait_for_workers(2, timeout=120)
        yield address
    finally:
        _stop(procs[:0:-1] + procs[:1])  # workers first, then the scheduler
        for f in logs:
            f.close()


@pytest.fixture()
def small(tmp_path: Path) -> Path:
    p = tmp_path / "small.toml"
    p.write_text(SMALL)
    return p


def _pid_task(payload, seed_seq) -> dict[str, float]:
    time.sleep(payload)  # long enough that both workers take chunks
    return {"pid": float(os.getpid())}


def test_existing_cluster_gives_the_one_worker_result(scheduler: str, small: Path) -> None:
    scenario = load_scenario(small)
    one = run_study(scenario, workers=1, keep_events=False)
    on_dask = run_study(scenario, workers=2, cluster=scheduler, keep_events=False)
    assert on_dask.replications.equals(one.replications)
    # Both worker processes ran replications (and neither is this process).
    pids = run_replications(_pid_task, 0.05, replications=16, seed=1, chunk_size=1,
                            cluster=scheduler)
    assert len(set(pids["pid"])) == 2 and float(os.getpid()) not in set(pids["pid"])


def test_compare_on_an_existing_cluster(scheduler: str, small: Path) -> None:
    scenario = load_scenario(small)
    other = run_study(scenario, horizon_h=2 * 8766.0, keep_events=False)
    a, b = compare({"four years": scenario, "again": scenario}, cluster=scheduler,
                   workers=2, keep_events=False)
    assert a.replications.equals(b.replications)
    assert not a.replications.equals(other.replications)
    assert a.replications.equals(run_study(scenario, keep_events=False).replications)


def test_cli_local_cluster_is_started_once_per_study(small: Path, tmp_path: Path, capsys,
                                                    monkeypatch) -> None:
    """Two variants, one LocalCluster (before, one was started per variant).

    The cluster is made in-process here (threads) to keep the test short; the
    worker processes are exercised against the real scheduler above and in
    tests/test_study_runner.py.
    """
    import distributed

    started: list[dict] = []
    real = distributed.LocalCluster

    def counting(*args, **kwargs):
        started.append(kwargs)
        return real(n_workers=kwargs["n_workers"], threads_per_worker=1, processes=False,
                    dashboard_address=None)

    monkeypatch.setattr(distributed, "LocalCluster", counting)
    out = tmp_path / "local"
    assert main(["run", str(small), "--out", str(out), "--quiet", "--workers", "2",
                 "--cluster", "local", "--json"]) == 0
    variants = json.loads(capsys.readouterr().out)["variants"]
    assert len(variants) == 2
    assert [(k["n_workers"], k["processes"]) for k in started] == [(2, True)]


@pytest.mark.parametrize("value", ["local", "tcp://127.0.0.1:8786", "tls://sched.example:1",
                                   "10.1.2.3:8786", "tcp://[::1]:8786", "scheduler-1:65535"])
def test_cluster_settings_accepted(value: str) -> None:
    assert check_cluster(value) == value


@pytest.mark.parametrize("value", ["", "bogus", "Local", "tcp://", "tcp://host", "host:0",
                                   "host:65536", "http://host:8786", "tcp://host:87a6",
                                   " local", None, 8786])
def test_cluster_settings_refused(value) -> None:
    with pytest.raises(InputError) as info:
        check_cluster(value, "--cluster")
    assert info.value.where == "--cluster"
    assert info.value.expected.startswith("expected 'local' or a Dask scheduler address")


@pytest.mark.parametrize("value", ["bogus", ""])
def test_cli_bad_cluster_is_one_line(value: str, small: Path, tmp_path: Path, capsys,
                                     monkeypatch) -> None:
    monkeypatch.chdir(tmp_path)
    for cmd in (["run", str(small)], ["sweep", str(small), "--vary", "policy.interval=9000 h"]):
        code = main([*cmd, "--cluster", value, "--quiet"])
        err = capsys.readouterr().err
        assert code == 2
        assert err.startswith("fleetsim: error: --cluster: expected 'local'")
        assert err.count("\n") == 1 and repr(value) in err
    assert not (tmp_path / "reports").exists()  # refused before anything ran
