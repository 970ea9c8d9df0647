"""The fixed-shape field factor and ``fleetsim fit --scenario``.

References: the reliability package's Fit_Weibull_2P with ``force_beta``
(Weibayes with a known slope); a direct maximisation written here on scipy's
``weibull_min`` log-density and log-survival; the ISO 281:2007 basic rating
life L10 = (C/P)³ · 10⁶ / (60 n) for ball bearings; Monte Carlo coverage with
a tolerance of 3 binomial standard errors.
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import optimize, stats

from fleetsim.cli import main
from fleetsim.errors import InputError
from fleetsim.fit import CensoredSample, fit_field_factor, scaled_sample
from fleetsim.fit.adapter import _fitters
from fleetsim.life import WeibullShape, life_shape
from fleetsim.scenario import load_scenario

ROOT = Path(__file__).resolve().parents[1]
DEMO = str(ROOT / "scenarios" / "records" / "pump_bearings.csv")
PUMPS = ROOT / "scenarios" / "pump_stations.toml"
ISO = life_shape("iso281")


def run(args: list[str], capsys: pytest.CaptureFixture[str]) -> tuple[int, str, str]:
    code = main(args)
    out = capsys.readouterr()
    return code, out.out, out.err


def _censored(seed: int, n: int, life: WeibullShape, k: float, l10_h: float):
    rng = np.random.default_rng(np.random.SeedSequence(seed))
    t = l10_h * k * (life.location + life.scale * rng.weibull(life.shape, n))
    c = rng.uniform(0.0, 3.0 * k * l10_h, n)
    return CensoredSample.from_arrays(t[t <= c], c[t > c])


def test_weibayes_matches_reliability_force_beta() -> None:
    # zero-location model: the fixed-shape MLE is the reliability package's
    # Fit_Weibull_2P(force_beta=b) scale, divided by the model's scale in hours
    model = WeibullShape(shape=1.3, location=0.0, scale=5.6)
    l10 = 20_000.0
    s = _censored(5, 40, model, 0.6, l10)
    fit = fit_field_factor(scaled_sample(s, l10), model, 0.90, l10)
    with np.errstate(all="ignore"):
        ref = _fitters().Fit_Weibull_2P(
            failures=s.failures_h, right_censored=s.suspensions_h, force_beta=1.3,
            show_probability_plot=False, print_results=False,
        )  # fmt: skip
    assert_allclose(fit.estimate * model.scale * l10, ref.alpha, rtol=1e-5)
    assert fit.lower < fit.estimate < fit.upper


def test_fixed_shape_with_location_matches_direct_scipy_maximisation() -> None:
    # iso281: shape 1.5 and location 0.05·L10, both scaled by k; exact failures,
    # suspensions and failures found at inspection
    l10 = 30_000.0
    s0 = _censored(9, 60, ISO, 0.5, l10)
    lo = np.floor(s0.failures_h[:10] / 2_000.0) * 2_000.0
    s = CensoredSample(s0.failures_h[10:], s0.suspensions_h, lo, lo + 2_000.0)
    fit = fit_field_factor(scaled_sample(s, l10), ISO, 0.90, l10)

    def nll(lk: float) -> float:
        k = math.exp(lk)
        d = stats.weibull_min(ISO.shape, loc=k * ISO.location * l10, scale=k * ISO.scale * l10)
        v = d.logpdf(s.failures_h).sum() + d.logsf(s.suspensions_h).sum()
        v += np.log(d.cdf(s.interval_upper_h) - d.cdf(s.interval_lower_h)).sum()
        return -v if np.isfinite(v) else 1e300

    limit = math.log(s.location_limit_h / (ISO.location * l10))
    ref = optimize.minimize_scalar(nll, bounds=(math.log(0.05), limit - 1e-9), method="bounded",
                                   options={"xatol": 1e-10})  # fmt: skip
    assert_allclose(fit.estimate, math.exp(ref.x), rtol=1e-5)
    # the bounds are where ln L has dropped by χ²₁(0.90)/2 (scipy's χ² quantile)
    drop = 0.5 * stats.chi2.ppf(0.90, 1)
    for b in (fit.lower, fit.upper):
        assert_allclose(ref.fun + drop, nll(math.log(b)), rtol=1e-6)


def test_coverage_of_the_factor_interval() -> None:
    # 300 samples of 25 censored lives from the iso281 model with k = 0.6: the 90 % interval
    # should hold 0.6 in 90 % of samples; binomial SE sqrt(0.09/300) = 0.017, 3 SE accepted
    hits, n = 0, 300
    for i in range(n):
        s = _censored(1000 + i, 25, ISO, 0.6, 10_000.0)
        if s.n_failures == 0:
            continue
        f = fit_field_factor(scaled_sample(s, 10_000.0), ISO, 0.90)
        hits += f.lower <= 0.6 <= f.upper
    se = math.sqrt(0.9 * 0.1 / n)
    assert abs(hits / n - 0.9) < 3 * se, hits / n


def test_one_failure_is_enough_and_none_is_an_error() -> None:
    one = CensoredSample.from_arrays([0.4], [0.9, 1.2, 2.0])
    f = fit_field_factor(one, ISO)
    assert 0 < f.lower < f.estimate < f.upper
    with pytest.raises(InputError, match="at least one failure"):
        fit_field_factor(CensoredSample.from_arrays([], [1.0, 2.0]), ISO)


def test_readme_grouped_fit_with_scenario_gives_each_position_its_catalogue_life(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    # issue 15, done-when: each position gets its own catalogue life and factor
    snippet = tmp_path / "field_factors.toml"
    code, out, _ = run(["fit", DEMO, "--group-by", "position", "--scenario", str(PUMPS),
                        "--factors-out", str(snippet), "--json"], capsys)  # fmt: skip
    assert code == 0
    groups = {g["group"]: g for g in json.loads(out)["groups"]}
    de, nde = groups["motor-de"], groups["motor-nde"]
    # ISO 281 basic rating life of WB-50 (C = 48 kN) at P = 1.1 · 3.0 kN and 1480 rpm
    l10_de = (48.0 / 3.3) ** 3 * 1e6 / (60 * 1480)
    assert_allclose(de["field_factor"]["catalogue_life_h"], l10_de, rtol=1e-9)
    sc = load_scenario(PUMPS)
    nde_pos = sc.machine("north-pump-1").positions[1]
    assert nde_pos.id == "motor-nde" and nde_pos.derived is not None
    assert_allclose(nde["field_factor"]["catalogue_life_h"], nde_pos.derived.rating_life_h)
    for g in (de, nde):
        ff = g["field_factor"]
        assert set(ff) >= {"estimate", "lower", "upper", "method", "catalogue_life_h"}
        assert ff["lower"] < ff["estimate"] < ff["upper"] and ff["shape_held"] == 1.5
        assert len(g["scenario_positions"]) == 6 and g["a_iso"] is None
    assert de["field_factor"]["estimate"] != nde["field_factor"]["estimate"]
    # the snippet goes into the scenario through include, on exactly those positions
    scen = tmp_path / "pumps.toml"
    scen.write_text('include = ["field_factors.toml"]\n' + PUMPS.read_text(), encoding="utf-8")
    sc2 = load_scenario(scen)
    for m in sc2.machines:
        for p in m.positions:
            if p.bearing_id == "WB-50" and p.id == "motor-de":
                assert_allclose(p.field_factor, de["field_factor"]["estimate"], rtol=5e-3)
            elif p.bearing_id == "WB-36":
                assert_allclose(p.field_factor, nde["field_factor"]["estimate"], rtol=5e-3)
            elif p.id == "pump-thrust" and m.id.startswith("hill"):
                assert p.field_factor == 0.7
            else:
                assert p.field_factor == 1.0, (m.id, p.id)


def test_catalogue_life_includes_a_iso(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    text = PUMPS.read_text().replace('model = "iso281"', 'model = "iso281"\nviscosity_ratio = 2.0\ncontamination = 0.5')
    scen = tmp_path / "lubricated.toml"
    scen.write_text(text, encoding="utf-8")
    code, out, _ = run(["fit", DEMO, "--scenario", str(scen), "--json"], capsys)
    assert code == 0
    g = {g["group"]: g for g in json.loads(out)["groups"]}["motor-de"]
    pos = load_scenario(scen).machine("north-pump-1").positions[0]
    assert pos.derived is not None and pos.derived.a_iso is not None
    assert g["a_iso"] == pytest.approx(pos.derived.a_iso)
    assert_allclose(g["field_factor"]["catalogue_life_h"], pos.derived.a_iso * (48.0 / 3.3) ** 3 * 1e6 / (60 * 1480), rtol=1e-6)


def test_ambiguous_and_unmatched_records_are_errors(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    rec = tmp_path / "r.csv"
    # pump-radial is WB-50 at 2.2 kN on the hill pumps only; CR-60 elsewhere at other loads
    rec.write_text("position,hours,outcome\n" + "".join(f"pump-thrust,{h},failed\n" for h in (9000, 15000, 30000)), encoding="utf-8")
    code, _, err = run(["fit", str(rec), "--scenario", str(PUMPS)], capsys)
    assert code == 2 and "different catalogue lives" in err and "machine column" in err
    rec.write_text("position,hours,outcome\n" + "".join(f"gearbox,{h},failed\n" for h in (9000, 15000, 30000)), encoding="utf-8")
    code, _, err = run(["fit", str(rec), "--scenario", str(PUMPS)], capsys)
    assert code == 2 and "no position of the scenario" in err and "row 2" in err
    code, _, err = run(["fit", DEMO, "--scenario", str(PUMPS), "--catalog-l10", "30000 h"], capsys)
    assert code == 2 and "--catalog-l10" in err and err.count("\n") == 1


def test_field_factor_entries_conflict_with_a_positions_own_factor(tmp_path: Path) -> None:
    snippet = tmp_path / "ff.toml"
    snippet.write_text('[[field_factor]]\nposition = "pump-thrust"\nbearing = "AC-45"\nmachines = ["hill-pump-1"]\nfactor = 0.5\n')
    scen = tmp_path / "s.toml"
    scen.write_text('include = ["ff.toml"]\n' + PUMPS.read_text(), encoding="utf-8")
    with pytest.raises(InputError, match="has its own field_factor"):
        load_scenario(scen)
    snippet.write_text('[[field_factor]]\nposition = "motor-xx"\nfactor = 0.5\n')
    with pytest.raises(InputError, match="no position 'motor-xx'"):
        load_scenario(scen)
    snippet.write_text('[study]\nname = "x"\n')
    with pytest.raises(InputError, match="only \\[\\[field_factor\\]\\]"):
        load_scenario(scen)
