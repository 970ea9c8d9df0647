"""Reading records files, the adapter's containment of ``reliability``, and the catalogue factor."""

from __future__ import annotations

import math
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from fleetsim.errors import InputError
from fleetsim.fit import (
    CensoredSample,
    FitError,
    adapter,
    compare_with_catalogue,
    fit_records,
    probability_plot,
    read_records,
)
from fleetsim.life import LifeDistribution

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "scenarios" / "records" / "pump_bearings.csv"

GOOD = """# a comment line
position,bearing,machine,hours,outcome,hours_from,hours_to
DE,WB-50,M-1,12000,failed,,
DE,WB-50,M-2,,failed,7200,7920
DE,WB-50,M-3,30000,removed-while-good,,
NDE,WB-36,M-1,25000,Still_Running,,
NDE,WB-36,M-2,9000,failed,,
"""


def _write(tmp_path: Path, text: str, name: str = "rec.csv") -> Path:
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def test_read_records_kinds_and_groups(tmp_path: Path) -> None:
    recs = read_records(_write(tmp_path, GOOD))
    s = recs.sample()
    assert list(s.failures_h) == [12000.0, 9000.0]
    assert list(s.suspensions_h) == [30000.0, 25000.0]
    assert list(s.interval_lower_h) == [7200.0] and list(s.interval_upper_h) == [7920.0]
    assert (s.n_failures, s.n_intervals, s.n_records) == (3, 1, 5)
    assert list(recs.table["row"]) == [3, 4, 5, 6, 7]  # line numbers as a spreadsheet shows them
    groups = recs.groups("position")
    assert list(groups) == ["DE", "NDE"]
    assert groups["DE"].n_failures == 2 and groups["NDE"].n_suspensions == 1
    assert list(recs.groups("bearing")) == ["WB-50", "WB-36"]


@pytest.mark.parametrize(
    "line, where, words",
    [
        ("DE,WB-50,M-9,-5,failed,,", "row 8, column hours", ">= 0"),
        ("DE,WB-50,M-9,abc,failed,,", "row 8, column hours", "number"),
        ("DE,WB-50,M-9,100,broken,,", "row 8, column outcome", "failed, removed-while-good"),
        ("DE,WB-50,M-9,100,faild,,", "row 8, column outcome", "did you mean 'failed'"),
        ("DE,WB-50,M-9,,failed,7000,", "row 8, column hours_to", "both hours_from and hours_to"),
        ("DE,WB-50,M-9,,failed,7000,6000", "row 8, column hours_to", "hours_to > hours_from"),
        ("DE,WB-50,M-9,500,still-running,100,200", "row 8, column hours_from", "only for outcome"),
        ("DE,WB-50,M-9,900,failed,100,200", "row 8, column hours", "equal to hours_to"),
        ("DE,WB-50,M-9,0,failed,,", "row 8, column hours", "> 0 h"),
        ("DE,WB-50,M-9,100,failed", "row 8", "7 values"),
        ("DE,WB-50,M-9,,failed,,", "row 8, column hours", "empty cell"),
    ],
)
def test_bad_row_names_file_row_and_column(tmp_path: Path, line: str, where: str, words: str) -> None:
    p = _write(tmp_path, GOOD + line + "\n")
    with pytest.raises(InputError) as exc:
        read_records(p)
    msg = str(exc.value)
    assert msg.startswith(f"{p}: {where}"), msg
    assert words in msg and "\n" not in msg


@pytest.mark.parametrize(
    "text, words",
    [
        ("position,hours\nDE,100\n", "missing column(s) outcome"),
        ("position,hours,outcome,hours_form,hours_to\n", "did you mean 'hours_from'"),
        ("hours,outcome,hours,\n", "unknown column ''"),
        ("hours,outcome,hours\n1,failed,2\n", "appears twice"),
        ("hours,outcome,hours_to\n1,failed,2\n", "both hours_from and hours_to columns"),
        ("hours,outcome\n", "no records"),
        ("# only a comment\n", "header line"),
    ],
)
def test_bad_header(tmp_path: Path, text: str, words: str) -> None:
    with pytest.raises(InputError, match="rec.csv") as exc:
        read_records(_write(tmp_path, text))
    assert words in str(exc.value)


def test_missing_file_and_group_column(tmp_path: Path) -> None:
    with pytest.raises(InputError, match="cannot read"):
        read_records(tmp_path / "nope.csv")
    recs = read_records(_write(tmp_path, "hours,outcome\n100,failed\n200,failed\n"))
    with pytest.raises(InputError, match="no 'position' column"):
        recs.groups("position")


@pytest.mark.parametrize(
    "failures, words", [([], "no failures"), ([5_000.0], "a single failure")]
)
def test_too_few_failures_is_a_clear_error(failures: list[float], words: str) -> None:
    s = CensoredSample.from_arrays(failures, [1_000.0, 8_000.0, 9_000.0])
    with pytest.raises(FitError, match=words):
        fit_records(s)


def test_demo_file_is_reproducible_and_fits(tmp_path: Path) -> None:
    # The demo records are generated with a fixed seed by the script beside them.
    sys.path.insert(0, str(DEMO.parent))
    try:
        import make_pump_bearings as gen
    finally:
        sys.path.pop(0)
    rows = gen._rows(np.random.default_rng(np.random.SeedSequence(gen.SEED)))
    recs = read_records(DEMO)
    assert len(recs.table) == len(rows)
    assert list(recs.table["hours"]) == [float(r["hours"]) for r in rows]
    groups = recs.groups("position")
    assert set(groups) == {"motor-de", "motor-nde"}
    assert groups["motor-de"].n_intervals > 0 and groups["motor-nde"].n_intervals == 0


# --- the adapter keeps the reliability package contained ---------------------------------------
def test_numpy_error_state_and_pandas_options_unchanged(monkeypatch: pytest.MonkeyPatch) -> None:
    # Force a fresh import of the package: its import sets np.seterr("ignore") and
    # pandas display options, which the adapter must undo.
    for name in [m for m in sys.modules if m == "reliability" or m.startswith("reliability.")]:
        monkeypatch.delitem(sys.modules, name)
    monkeypatch.setattr(adapter, "_FITTERS", None)
    before_err = np.geterr()
    before_pd = {k: pd.get_option(k) for k in adapter._PANDAS_OPTIONS}
    rng = np.random.default_rng(np.random.SeedSequence(9))
    t = 1_000.0 * rng.weibull(1.5, 40)
    with np.errstate(divide="raise", over="warn", invalid="raise", under="ignore"):
        inner = np.geterr()
        fit_records(CensoredSample.from_arrays(t[:30], t[30:]))
        assert np.geterr() == inner
    assert np.geterr() == before_err
    assert {k: pd.get_option(k) for k in adapter._PANDAS_OPTIONS} == before_pd


def test_adapter_prints_nothing(capsys: pytest.CaptureFixture[str]) -> None:
    t = np.array([120.0, 340.0, 560.0, 800.0, 1_000.0])
    adapter.weibull_2p(t, np.array([900.0, 1_500.0]))
    adapter.lognormal_2p(t, np.array([]))
    out = capsys.readouterr()
    assert out.out == "" and out.err == ""


class _FakeFit:
    def __init__(self, se: float, optimizer: str | None, printed: str = "") -> None:
        if printed:
            print(printed)
        self.alpha, self.beta, self.alpha_SE, self.beta_SE = 100.0, 1.5, se, se
        self.Cov_alpha_beta, self.loglik, self.optimizer = 0.0, -10.0, optimizer


@pytest.mark.parametrize(
    "se, optimizer, printed, words",
    [
        (0.0, "TNC", "", "standard error"),
        (math.nan, "TNC", "", "standard error"),
        (1.0, None, "WARNING: MLE estimates failed for Weibull_2P.", "did not converge"),
    ],
)
def test_adapter_refuses_zero_se_and_non_convergence(
    monkeypatch: pytest.MonkeyPatch, se: float, optimizer: str | None, printed: str, words: str
) -> None:
    class FakeModule:
        @staticmethod
        def Fit_Weibull_2P(**kwargs: object) -> _FakeFit:  # noqa: N802 - the package's name
            assert kwargs["show_probability_plot"] is False and kwargs["print_results"] is False
            return _FakeFit(se, optimizer, printed)

    monkeypatch.setattr(adapter, "_fitters", lambda: FakeModule)
    with pytest.raises(FitError, match=words):
        adapter.weibull_2p(np.array([1.0, 2.0, 3.0]), np.array([]))


def test_adapter_turns_package_errors_into_fit_error() -> None:
    # the package needs two distinct failures
    with pytest.raises(FitError, match="reliability package could not fit"):
        adapter.weibull_2p(np.array([5.0, 5.0]), np.array([10.0]))


# --- life model, catalogue comparison, plot --------------------------------------------------
def test_best_weibull_converts_to_life_distribution_and_field_factor() -> None:
    rng = np.random.default_rng(np.random.SeedSequence(12))
    t = 20_000.0 * rng.weibull(1.5, 80)
    res = fit_records(CensoredSample.from_arrays(t), models=("weibull_2p",))
    life = res.best.distribution.to_life_distribution()
    assert isinstance(life, LifeDistribution) and life.location_h == 0.0
    b10 = res.best.b_life(10)
    # B10 of the converted model is the fit's B10 (the life at reliability 0.9)
    assert math.isclose(float(life.life_at_reliability(0.9)), b10.estimate, rel_tol=1e-12)
    comp = compare_with_catalogue(res, 2 * b10.estimate)
    assert math.isclose(comp.factor, 0.5, rel_tol=1e-12)
    assert comp.factor_lower < 0.5 < comp.factor_upper
    assert "reach about 50 % of their catalogue life" in comp.verdict
    # a catalogue model scaled by the factor has the field B10
    cat = LifeDistribution.from_rating_life(2 * b10.estimate, "iso281").scaled(comp.factor)
    assert math.isclose(float(cat.life_at_reliability(0.9)), b10.estimate, rel_tol=1e-9)
    with pytest.raises(InputError):
        compare_with_catalogue(res, -1.0)


def test_a_lognormal_fit_becomes_a_lognormal_life_model() -> None:
    """Any family fit ranks can be a position's life: the converted lognormal is
    scipy's lognorm with the fit's σ, median and location (reference: scipy.stats)."""
    rng = np.random.default_rng(np.random.SeedSequence(13))
    res = fit_records(CensoredSample.from_arrays(np.exp(9 + rng.standard_normal(30))),
                      models=("lognormal_2p",))  # fmt: skip
    d = res.best.distribution
    life = d.to_life_distribution()
    assert life.family == "lognormal" and res.best_weibull is None
    ref = stats.lognorm(s=d.shape, loc=d.location_h, scale=d.scale_h)
    for q in (1e-13, 0.1, 0.5, 0.9):
        assert math.isclose(float(life.ppf(q)), float(ref.ppf(q)), rel_tol=1e-10)
    assert math.isclose(float(life.life_at_reliability(0.9)), res.best.b_life(10).estimate,
                        rel_tol=1e-9)


def test_probability_plot_has_no_pyplot_side_effect() -> None:
    import matplotlib.pyplot as plt

    recs = read_records(DEMO).groups("position")["motor-de"]
    res = fit_records(recs, models=("weibull_2p",))
    figs_before = plt.get_fignums()
    ax = probability_plot(res)
    assert plt.get_fignums() == figs_before
    xs = np.concatenate([ln.get_xdata() for ln in ax.get_lines()])
    assert xs.min() > 0 and ax.get_xscale() == "log"
    # one marker per failure, exact and found at inspection
    markers = [ln for ln in ax.get_lines() if ln.get_linestyle() == "None"]
    assert sum(len(m.get_xdata()) for m in markers) == recs.n_failures


def test_records_that_determine_nothing_give_a_clear_error() -> None:
    # Every failure found in the same first inspection interval: the shape is not
    # determined by the records.
    s = CensoredSample.from_arrays([], [50.0], [(0.0, 100.0)] * 3)
    with pytest.raises(FitError, match="no model could be fitted"), pytest.warns(Warning):
        fit_records(s)


def test_two_records_fit_without_numerical_warnings() -> None:
    # n = 2 leaves AICc undefined (n - k - 1 = -1): reported as inf, ranking falls back
    # on fewer parameters, and no floating-point warning escapes.
    import warnings

    s = CensoredSample.from_arrays([100.0, 200.0])
    with warnings.catch_warnings():
        warnings.simplefilter("error", RuntimeWarning)
        res = fit_records(s, models=("weibull_2p", "lognormal_2p"))
    assert math.isinf(res.best.aicc) and math.isfinite(res.best.bic)


def test_characteristic_life_factor_equals_b10_factor_for_the_catalogue_shape() -> None:
    # A field sample from a two-parameter catalogue model (shape 1.5, F(L10) = 0.10)
    # scaled by 0.4: both the B10/L10 ratio and the ratio of characteristic lives
    # (B63.2 over the model's η) estimate 0.4, within 3 standard errors taken from
    # the 90 % bounds (half-width / 1.645).
    import numpy as np

    from fleetsim.fit import CensoredSample, fit_records
    from fleetsim.life import LifeDistribution, WeibullShape

    shape = WeibullShape(1.5, 0.0, 1.0 / math.log(1 / 0.9) ** (1 / 1.5))
    l10 = 30_000.0
    field = LifeDistribution.from_rating_life(l10, shape).scaled(0.4)
    rng = np.random.default_rng(np.random.SeedSequence(20261201))
    res = fit_records(CensoredSample.from_arrays(failures_h=field.sample(rng, 2_000)))
    comp = compare_with_catalogue(res.best_weibull, l10, shape)
    assert math.isclose(comp.catalog_characteristic_h, shape.scale * l10, rel_tol=1e-12)
    for k, lo, hi in [(comp.factor, comp.factor_lower, comp.factor_upper),
                      (comp.characteristic_factor, comp.characteristic_factor_lower,
                       comp.characteristic_factor_upper)]:
        se = (hi - lo) / (2 * 1.6449)
        assert abs(k - 0.4) < 3 * se, (k, lo, hi)
