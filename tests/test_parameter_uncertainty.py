"""Parameter uncertainty carried into the fleet: nested replications over fitted field factors.

Known answer: with exponential lives (Weibull shape 1) a run-to-failure
position is a Poisson process, so its expected number of failures over H is
H/θ exactly (renewal theory: M(t) = t/θ for exponential lives, e.g. Karlin &
Taylor, *A First Course in Stochastic Processes*). The whole procedure — fit
the factor from 10 failures, draw factors, replicate on common random
numbers, form the nested interval — is repeated on fresh records, and its
coverage of H/θ is compared with its level within 3 binomial standard errors.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest

from fleetsim.errors import InputError
from fleetsim.fit import CensoredSample, fit_field_factor
from fleetsim.life import WeibullShape
from fleetsim.scenario import load_scenario
from fleetsim.study import run_study
from fleetsim.study.summary import estimate
from fleetsim.study.uncertainty import (
    FactorUncertainty,
    draw_factors,
    nested_interval,
    run_parameter_uncertainty,
)
from fleetsim.study.variants import read_document

EXPONENTIAL = WeibullShape(shape=1.0, location=0.0, scale=1.0)


def _poisson_counts(theta: np.ndarray, unit_exp: np.ndarray, horizon: float) -> np.ndarray:
    """Failures in (0, horizon] of renewal processes with exponential lives of mean theta.

    ``unit_exp`` (replications × lives) is shared by every theta: common random numbers.
    """
    arrivals = np.cumsum(unit_exp, axis=1)[None, :, :] * theta[:, None, None]
    return (arrivals <= horizon).sum(axis=2)


def test_nested_interval_covers_the_known_answer() -> None:
    theta_true, horizon, n_fail = 10_000.0, 30_000.0, 10
    truth = horizon / theta_true  # expected failures M(H) = H/θ
    level, reps, hits = 0.90, 200, 0
    for i in range(reps):
        rng = np.random.default_rng(np.random.SeedSequence(77, spawn_key=(i,)))
        # lives in units of a reference life of 10,000 h: the factor k is θ / 10,000 h
        records = CensoredSample.from_arrays(theta_true * rng.exponential(size=n_fail) / 1e4)
        fit = fit_field_factor(records, EXPONENTIAL, 0.90)
        z = 1.6448536269514722  # normal 95 % point: the bounds are two-sided 90 %
        unc = FactorUncertainty(0, "test", fit.estimate, (math.log(fit.upper) - math.log(fit.lower)) / (2 * z))
        theta = 1e4 * draw_factors([unc], 40, seed=1000 + i)[:, 0]
        unit = rng.exponential(size=(30, 40))
        ci = nested_interval(_poisson_counts(theta, unit, horizon), level)
        hits += ci.low <= truth <= ci.high
    se = math.sqrt(level * (1 - level) / reps)
    assert abs(hits / reps - level) < 3 * se, hits / reps


def test_nested_interval_without_parameter_spread_is_the_monte_carlo_interval() -> None:
    rng = np.random.default_rng(np.random.SeedSequence(5))
    y = rng.normal(10.0, 2.0, size=(1, 400))
    ci = nested_interval(np.repeat(y, 5, axis=0), 0.95)
    assert ci.between_sd == 0.0
    assert ci.high - ci.mean == pytest.approx(1.959964 * y.std(ddof=1) / 20, rel=1e-5)


SCENARIO = """
include = ["factors.toml"]

[study]
name = "one fitted position"
horizon = "10 years"
replications = 12
seed = 3

[costs]
planned_replacement = 500
failure = 4000
downtime_per_hour = 100

[[bearing]]
id = "DB-1"
type = "ball"
dynamic_rating = "30 kN"
static_rating = "18 kN"

[policy]
kind = "run-to-failure"

[[machine]]
id = "fan"
count = 20
operating_hours_per_year = "8000 h"

  [[machine.position]]
  id = "drive-end"
  bearing = "DB-1"
  radial_load = "3 kN"
  speed = "1480 rpm"

[[variant]]
name = "Age replacement at 8,000 h"
set = { policy = { kind = "age", interval = "8000 h" } }
"""


def _scenario(tmp_path: Path) -> Path:
    # a factor fitted from 10 failures (invented records), written as fit --factors-out does
    rng = np.random.default_rng(np.random.SeedSequence(12))
    l10 = (30.0 / 3.0) ** 3 * 1e6 / (60 * 1480)  # ISO 281 basic rating life, hours
    from fleetsim.life import life_shape

    iso = life_shape("iso281")
    life = l10 * 0.5 * (iso.location + iso.scale * rng.weibull(1.5, 10))
    fit = fit_field_factor(CensoredSample.from_arrays(life / l10), iso, 0.90)
    (tmp_path / "factors.toml").write_text(
        f'[[field_factor]]\nposition = "drive-end"\nfactor = {fit.estimate:.4g}\n'
        f"lower = {fit.lower:.4g}\nupper = {fit.upper:.4g}\nconfidence = 0.9\nfailures = 10\n"
    )
    path = tmp_path / "fan.toml"
    path.write_text(SCENARIO, encoding="utf-8")
    return path


def test_parameter_uncertainty_widens_the_cost_interval(tmp_path: Path) -> None:
    # issue 15, done-when: a life from a fit of about 10 failures gives a wider cost
    # interval with parameter uncertainty than without
    path = _scenario(tmp_path)
    doc, text = read_document(path)
    plain = run_study(load_scenario(path), keep_events=False)
    mc = estimate(plain.figure("cost_per_year"))
    from fleetsim.study.variants import file_variants

    variants = file_variants(doc, str(path), "")[1:]
    res = run_parameter_uncertainty(doc, str(path), "", draws=8, variants=variants)
    ci = res.interval("cost_per_year")
    assert ci.draws == 8 and ci.replications == 12
    assert ci.high - ci.low > 1.5 * (mc.high - mc.low), (ci, mc)
    assert ci.between_sd > 0
    # the draws ran on common random numbers: the first draw at the fitted factor itself
    # would reproduce the plain study; the factors drawn straddle the estimate
    k = res.factors[:, 0]
    assert k.min() < res.uncertain[0].estimate < k.max()
    name, share = res.recommendation()
    assert name in res.variant_names and 0.0 < share <= 1.0
    table = res.summary(["cost_per_year"])
    assert list(table["variant"]) == list(res.variant_names)


def test_no_bounds_is_a_clear_error(tmp_path: Path) -> None:
    path = _scenario(tmp_path)
    (tmp_path / "factors.toml").write_text('[[field_factor]]\nposition = "drive-end"\nfactor = 0.5\n')
    doc, _ = read_document(path)
    with pytest.raises(InputError, match="no \\[\\[field_factor\\]\\] entry with lower and upper"):
        run_parameter_uncertainty(doc, str(path), "", draws=4)


def test_run_with_parameter_uncertainty_cli(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    import json

    from fleetsim.cli import main

    path = _scenario(tmp_path)
    code = main(["run", str(path), "--parameter-uncertainty", "3", "-n", "4", "-q", "--json"])
    out = capsys.readouterr().out
    assert code == 0
    obj = json.loads(out)
    assert obj["parameter_draws"] == 3 and len(obj["uncertain_factors"]) == 1
    rows = [r for r in obj["figures"] if r["figure"] == "cost_per_year"]
    assert len(rows) == 2 and all(r["low"] < r["mean"] < r["high"] for r in rows)
    assert 0 < obj["recommended"]["share_of_draws"] <= 1
    code = main(["run", str(path), "--parameter-uncertainty", "1", "-q"])
    err = capsys.readouterr().err
    assert code == 2 and "--parameter-uncertainty" in err and err.count("\n") == 1


def test_sweep_with_parameter_uncertainty(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    from fleetsim.cli import main

    path = _scenario(tmp_path)
    code = main(["sweep", str(path), "--vary", "policy.kind=age", "--vary",
                 "policy.interval=6000,12000 h", "--parameter-uncertainty", "3", "-n", "4", "-q"])  # fmt: skip
    out = capsys.readouterr().out
    assert code == 0
    assert "replace at 6,000\u00a0h" in out  # variant in words
    assert "of plausible parameter sets" in out


def test_nested_interval_is_cut_to_the_figure_range() -> None:
    y = np.array([[0.0, 0.0, 1.0, 0.0], [0.0, 2.0, 0.0, 0.0]])
    ci = nested_interval(y, 0.95, (0.0, math.inf))
    assert ci.low == 0.0 and ci.high > ci.mean > 0


def test_parameter_uncertainty_on_one_local_cluster(tmp_path: Path, capsys, monkeypatch) -> None:
    # every draw and variant runs on one --cluster local (in-process here, to stay short)
    import json

    import distributed

    from fleetsim.cli import main

    started: list[dict] = []
    real = distributed.LocalCluster

    def counting(*args, **kwargs):
        started.append(kwargs)
        return real(n_workers=kwargs["n_workers"], threads_per_worker=1, processes=False,
                    dashboard_address=None)

    monkeypatch.setattr(distributed, "LocalCluster", counting)
    path = _scenario(tmp_path)
    args = ["run", str(path), "--parameter-uncertainty", "3", "-n", "4", "-q", "--json"]
    assert main(args) == 0
    plain = json.loads(capsys.readouterr().out)["figures"]
    assert main([*args, "--cluster", "local", "--workers", "2"]) == 0
    on_dask = json.loads(capsys.readouterr().out)["figures"]
    assert len(started) == 1 and on_dask == plain


def test_fitted_life_with_covariance_is_drawn(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    # fit --life-out: the recommended Weibull of about 10 failures with the covariance of
    # (ln scale, ln shape); its variances are the reliability package's SE² / estimate²
    # (Fit_Weibull_2P alpha_SE, beta_SE: the delta method for the logarithm)
    from fleetsim.cli import main
    from fleetsim.fit.adapter import _fitters

    rng = np.random.default_rng(np.random.SeedSequence(21))
    life = 40_000.0 * rng.weibull(1.6, 14)
    cens = rng.uniform(0.0, 60_000.0, 14)
    rec = tmp_path / "r.csv"
    rows = [f"drive-end,DB-1,{min(t, c):.1f},{'failed' if t <= c else 'still-running'}"
            for t, c in zip(life, cens, strict=True)]  # fmt: skip
    rec.write_text("position,bearing,hours,outcome\n" + "\n".join(rows) + "\n", encoding="utf-8")
    out = tmp_path / "lives.toml"
    code = main(["fit", str(rec), "--group-by", "position", "--life-out", str(out), "--json"])
    capsys.readouterr()
    assert code == 0
    import tomllib

    entry = tomllib.loads(out.read_text())["fitted_life"][0]
    f, s = life[life <= cens], cens[life > cens]
    with np.errstate(all="ignore"):
        ref = _fitters().Fit_Weibull_2P(failures=f, right_censored=s, show_probability_plot=False,
                                        print_results=False)  # fmt: skip
    assert entry["model"] == "weibull_2p"
    np.testing.assert_allclose(entry["covariance"][0][0], (ref.alpha_SE / ref.alpha) ** 2, rtol=1e-4)
    np.testing.assert_allclose(entry["covariance"][1][1], (ref.beta_SE / ref.beta) ** 2, rtol=1e-4)
    # the fan scenario takes the fitted life instead of its derived one
    path = _scenario(tmp_path)
    (tmp_path / "factors.toml").write_text(out.read_text())
    sc = load_scenario(path)
    pos = sc.machines[0].positions[0]
    assert pos.derived is None and pos.life.shape == pytest.approx(entry["shape"])
    doc, _ = read_document(path)
    res = run_parameter_uncertainty(doc, str(path), "", draws=6)
    assert len(res.lives) == 1 and not res.uncertain
    assert res.life_values is not None and np.ptp(res.life_values[:, 0, 1]) > 0
    plain = estimate(run_study(sc, keep_events=False).figure("cost_per_year"))
    ci = res.interval("cost_per_year")
    assert ci.high - ci.low > 1.5 * (plain.high - plain.low), (ci, plain)
