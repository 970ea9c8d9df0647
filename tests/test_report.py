"""The study report: files, images, reproducibility, atomic writes, escaping, figures, tables.

The studies are synthetic: a small invented fleet built from the model
dataclasses and per-replication figures drawn from a seeded generator, so the
report can be tested while the engine is written elsewhere.
"""

from __future__ import annotations

import base64
import io
import json
import math
import re
import subprocess
from html.parser import HTMLParser
from pathlib import Path

import matplotlib as mpl
import matplotlib.image as mpimg
import numpy as np
import pandas as pd
import pytest
from scipy import stats

import fleetsim
from fleetsim.errors import InputError
from fleetsim.life import BearingRating, BearingType, DutyStep, LifeDistribution, position_life
from fleetsim.report import (
    default_executive_summary,
    difference,
    fleet_figures,
    headline_figures,
    no_down_probability,
    plot_availability,
    plot_cost_per_year,
    plot_cost_rate_sweep,
    plot_downtime_by_cause,
    plot_inspections,
    plot_life_distributions,
    plot_spares,
    plot_system_reliability,
    reliability_curves,
    summary_table,
    write_report,
    write_tables,
)
from fleetsim.scenario.model import (
    HOURS_PER_YEAR,
    Bearing,
    Costs,
    Group,
    Machine,
    Policy,
    Position,
    Scenario,
    Study,
)
from fleetsim.study.result import StudyResult

DPI = 50
HORIZON_H = 5 * HOURS_PER_YEAR
CHROMIUM = Path("/usr/bin/chromium")


# --- synthetic studies --------------------------------------------------------------------


def make_scenario(
    name: str = "North pump station",
    *,
    machine: str = "pump-A",
    position: str = "drive-end",
    bearing: str = "FB-207",
    group: str = "station-1",
) -> Scenario:
    """An invented fleet: 3 pumps (one derived position, one given life) and 2 fans, one group."""
    derived = position_life(
        BearingRating(BearingType.BALL, 25_500.0), [DutyStep(1.0, 2_400.0, 0.0, 1_480.0)]
    )
    pumps = Machine(
        id=machine,
        count=3,
        operating_share=0.9,
        starting_age_h=0.0,
        positions=(
            Position(
                position, bearing, derived.distribution, Policy("age", interval_h=20_000.0), derived
            ),
            Position(
                "non-drive-end",
                bearing,
                LifeDistribution.from_rating_life(60_000.0, "iso281"),
                Policy("run-to-failure"),
            ),
        ),
    )
    fans = Machine(
        id="fan-B",
        count=2,
        operating_share=0.6,
        starting_age_h=5_000.0,
        positions=(
            Position(
                "fan-end",
                "FR-310",
                LifeDistribution.from_rating_life(45_000.0, "textbook"),
                Policy("condition", inspection_every_h=720.0, detection=0.8),
            ),
        ),
    )
    return Scenario(
        study=Study(name=name, horizon_h=HORIZON_H, replications=60, seed=11),
        costs=Costs(
            currency="EUR", planned_replacement=400.0, failure=2_500.0, downtime_per_hour=300.0
        ),
        bearings={
            bearing: Bearing(bearing, BearingType.BALL, 25_500.0, price=40.0),
            "FR-310": Bearing("FR-310", BearingType.ROLLER, 112_000.0, price=180.0),
        },
        machines=(pumps, fans),
        groups=(Group(group, tuple(pumps.unit_ids()), 2),),
        digest="0" * 48 + "feedc0de" * 2,
    )


def make_replications(
    scenario: Scenario,
    *,
    seed: int,
    n: int,
    failure_rate: float,
    planned_rate: float,
    inspect: bool,
) -> pd.DataFrame:
    """Plausible per-replication figures (counts over the horizon) from a seeded generator."""
    rng = np.random.default_rng(np.random.SeedSequence(seed))
    years = scenario.study.horizon_h / HOURS_PER_YEAR
    units = sum(m.count for m in scenario.machines)
    failures = rng.poisson(failure_rate * years, n)
    planned = rng.poisson(planned_rate * years, n)
    cols: dict[str, np.ndarray] = {
        "replication": np.arange(n),
        "failures": failures,
        "planned_replacements": planned,
    }
    cols["downtime_crew_h"] = failures * rng.gamma(2.0, 1.5, n)
    cols["downtime_spares_h"] = failures * rng.gamma(1.0, 4.0, n)
    cols["downtime_repair_h"] = failures * 8.0 + rng.normal(0, 1, n)
    cols["downtime_planned_h"] = planned * 5.0
    cols["downtime_h"] = sum(
        cols[f"downtime_{c}_h"] for c in ("crew", "spares", "repair", "planned")
    )
    cols["availability"] = 1.0 - cols["downtime_h"] / (units * scenario.study.horizon_h)
    cols["inspections"] = rng.poisson(12 * years * 2, n) if inspect else np.zeros(n)
    cols["detections"] = rng.poisson(0.6 * years, n) if inspect else np.zeros(n)
    cols["missed_defects"] = rng.poisson(0.1 * years, n) if inspect else np.zeros(n)
    cols["cost_total"] = failures * 2_500.0 + planned * 400.0 + cols["downtime_h"] * 300.0
    cols["cost_per_year"] = cols["cost_total"] / years
    for b in scenario.bearings:
        issued = rng.poisson((failure_rate + planned_rate) * years / 2, n)
        cols[f"spares_issued:{b}"] = issued
        cols[f"spares_per_year:{b}"] = issued / years
    share = rng.dirichlet(np.ones(len(scenario.machines)), n)
    for j, m in enumerate(scenario.machines):
        cols[f"downtime_h:{m.id}"] = cols["downtime_h"] * share[:, j]
        cols[f"availability:{m.id}"] = 1.0 - cols[f"downtime_h:{m.id}"] / (
            m.count * scenario.study.horizon_h
        )
    first = np.full(n, scenario.study.horizon_h)
    for g in scenario.groups:
        t = rng.exponential(scenario.study.horizon_h / (0.2 + failure_rate / 8), n)
        t = np.where(
            t < scenario.study.horizon_h, t, scenario.study.horizon_h
        )  # horizon = no event
        cols[f"group_down:{g.id}"] = (t < scenario.study.horizon_h).astype(float)
        cols[f"group_first_down_h:{g.id}"] = t
        first = np.minimum(first, t)
    cols["fleet_first_down_h"] = first
    cols["fleet_down"] = (first < scenario.study.horizon_h).astype(float)
    return pd.DataFrame(
        {k: np.asarray(v, dtype=float) if k != "replication" else v for k, v in cols.items()}
    )


def make_results(
    scenario: Scenario | None = None,
    *,
    n: int = 60,
    label_prefix: str = "",
    elapsed_s: float = 3.0,
    workers: int = 1,
) -> list[StudyResult]:
    """Three variants with the same seed: today's run-to-failure, an age policy, inspections."""
    sc = scenario or make_scenario()
    specs = [
        ("run to failure", 6.0, 0.0, False),
        ("age 20,000 h", 2.0, 4.0, False),
        ("inspect monthly", 3.5, 2.0, True),
    ]
    out = []
    for label, f, p, insp in specs:
        reps = make_replications(sc, seed=11, n=n, failure_rate=f, planned_rate=p, inspect=insp)
        events = pd.DataFrame(
            {
                "time_h": [10.0, 250.0],
                "unit": ["pump-A#1", "fan-B#2"],
                "position": ["drive-end", "fan-end"],
                "kind": ["failure", "planned"],
            }
        )
        out.append(
            StudyResult(
                sc,
                reps,
                seed=11,
                engine="des",
                elapsed_s=elapsed_s,
                workers=workers,
                events=events if label.startswith("run") else None,
                label=label_prefix + label,
            )
        )
    return out


def make_sweep() -> tuple[pd.DataFrame, pd.DataFrame]:
    t = np.array([5_000.0, 10_000.0, 15_000.0, 20_000.0, 30_000.0, 40_000.0])
    mean = 80_000 + 2e-4 * (t - 16_000.0) ** 2
    sweep = pd.DataFrame(
        {"interval_h": t, "mean": mean, "ci_low": mean - 3_000, "ci_high": mean + 3_000}
    )
    ta = np.linspace(4_000.0, 42_000.0, 60)
    analytic = pd.DataFrame({"interval_h": ta, "cost_rate": 79_000 + 2e-4 * (ta - 17_000.0) ** 2})
    return sweep, analytic


def full_report(tmp: Path, results: list[StudyResult] | None = None, **kw) -> object:
    sweep, analytic = make_sweep()
    return write_report(
        results or make_results(),
        tmp,
        title="Pump station bearing study",
        sweep=sweep,
        sweep_analytic=analytic,
        recommended_stock={"FB-207": 3, "FR-310": 1},
        extra={"recommended_interval_h": 16_000.0, "note": "demo"},
        dpi=DPI,
        **kw,
    )


class _Html(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.tags: list[str] = []
        self.imgs: list[dict[str, str | None]] = []
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        if tag == "img":
            self.imgs.append(dict(attrs))

    def handle_data(self, data):
        self.text.append(data)


def parse(path: Path) -> _Html:
    p = _Html()
    p.feed(path.read_text(encoding="utf-8"))
    return p


def decode_png(data: bytes) -> np.ndarray:
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    return mpimg.imread(io.BytesIO(data), format="png")


# --- the whole report --------------------------------------------------------------------


@pytest.fixture(scope="module")
def full(tmp_path_factory):
    """The report of three variants with a sweep, stock levels and extra results (written once)."""
    return full_report(tmp_path_factory.mktemp("full") / "reports" / "north")


@pytest.fixture
def fast_png(monkeypatch):
    """Draw every figure but skip the PNG encoding (for tests about files, not pictures)."""
    from matplotlib.figure import Figure

    from fleetsim.report import writer

    buf = io.BytesIO()
    Figure(figsize=(1, 1)).savefig(buf, format="png", dpi=10)

    def draw_only(draw, size_in, dpi, view=""):
        draw(Figure(figsize=size_in).add_subplot())
        return buf.getvalue()

    monkeypatch.setattr(writer, "_png", draw_only)


def test_report_writes_every_file_and_every_image_decodes(full) -> None:
    paths = full
    out = paths.root
    expected = {
        "report.html",
        "summary.json",
        "replications.csv",
        "summary.csv",
        "headline.csv",
        "events.csv",
    }
    assert expected <= {p.name for p in out.iterdir()}
    assert set(paths.figures) == {
        "life",
        "cost_per_year",
        "cost_rate_sweep",
        "downtime_by_machine",
        "downtime_by_cause",
        "spares",
        "system_reliability",
        "inspections",
    }
    for p in paths.files():
        assert p.is_file() and p.stat().st_size > 0, p
    page = parse(paths.html)
    assert len(page.imgs) == len(paths.figures)
    on_disk = {p.read_bytes() for p in paths.figures.values()}
    for img in page.imgs:
        src = img["src"] or ""
        assert src.startswith("data:image/png;base64,")
        data = base64.b64decode(src.split(",", 1)[1], validate=True)
        pixels = decode_png(data)
        assert pixels.ndim == 3 and pixels.shape[0] > 100 and pixels.shape[1] > 200
        assert data in on_disk
    raw = paths.html.read_text(encoding="utf-8")
    # Self-contained: no scripts, no external style sheets, fonts or images.
    assert "script" not in page.tags and "link" not in page.tags
    assert "http://" not in raw and "https://" not in raw and "@media print" in raw
    assert fleetsim.SAFETY_CAUTION in " ".join(page.text)
    doc = json.loads(paths.summary_json.read_text(encoding="utf-8"))
    assert doc["safety_caution"] == fleetsim.SAFETY_CAUTION
    # CSV tables: one block of rows per variant.
    reps = pd.read_csv(paths.tables["replications"])
    assert list(reps.columns[:2]) == ["variant", "replication"] and len(reps) == 3 * 60
    assert pd.read_csv(paths.tables["events"])["variant"].unique().tolist() == ["run to failure"]


def test_every_figure_says_which_view_it_shows(full) -> None:
    """Budget view, policy view or the life model: in the page's heading and caption of every
    figure, and in summary.json's list of figures (the PNG carries the same words)."""
    doc = json.loads(full.summary_json.read_text(encoding="utf-8"))
    views = {f["name"]: f["view"] for f in doc["figures"]}
    assert set(views) == set(full.figures)
    assert views["life"] == "life"
    assert views["cost_rate_sweep"] == "budget"  # the test sweep has no view column
    assert all(views[n] == "budget" for n in views if n not in ("life", "cost_rate_sweep"))
    words = {"budget": "budget view", "policy": "policy view", "life": "life model"}
    text = " ".join(parse(full.html).text)
    for f in doc["figures"]:
        assert f["title"].endswith(" — " + words[f["view"]])
        assert f["title"] in text
    assert text.count("Budget view: what the plant spends from today's fleet") >= 6
    assert all(v["view"] == "budget" for v in doc["variants"])


def test_a_sweep_on_the_policy_view_says_so_on_its_figure(tmp_path, fast_png) -> None:
    sweep, analytic = make_sweep()
    sweep["view"] = "policy"
    paths = write_report(make_results(), tmp_path / "r", title="t", sweep=sweep,
                         sweep_analytic=analytic, dpi=DPI)
    doc = json.loads(paths.summary_json.read_text(encoding="utf-8"))
    assert {f["name"]: f["view"] for f in doc["figures"]}["cost_rate_sweep"] == "policy"
    assert "Policy view: long-run" in paths.html.read_text(encoding="utf-8")


def test_summary_json_content_and_byte_identical_for_the_same_inputs(
    full, tmp_path, fast_png
) -> None:
    a = full  # elapsed 3.0 s, 1 worker, real figures
    before, backend = dict(mpl.rcParams), mpl.get_backend()
    b = full_report(tmp_path / "b", make_results(elapsed_s=97.5, workers=4))
    assert dict(mpl.rcParams) == before and mpl.get_backend() == backend
    assert a.summary_json.read_bytes() == b.summary_json.read_bytes()
    assert "97.5 s" in b.html.read_text(encoding="utf-8")  # elapsed time only in the page
    doc = json.loads(a.summary_json.read_text(encoding="utf-8"))
    assert set(doc["versions"]) == {"fleetsim", "numpy", "scipy", "simpy", "pandas"}
    assert doc["versions"]["numpy"] == np.__version__
    v0 = doc["variants"][0]
    assert v0["seed"] == 11 and v0["engine"] == "des" and v0["replications"] == 60
    assert v0["scenario_digest"] == make_scenario().digest
    figures = {h["figure"]: h for h in v0["headline"]}
    assert {
        "cost_per_year",
        "availability",
        "failures_per_year",
        "planned_replacements_per_year",
        "downtime_crew_h_per_year",
        "downtime_spares_h_per_year",
        "downtime_repair_h_per_year",
        "downtime_planned_h_per_year",
        "spares_per_year:FB-207",
        "spares_per_year:FR-310",
        "fleet_no_down",
        "group_no_down:station-1",
    } <= set(figures)
    for h in figures.values():
        assert h["ci_low"] <= h["mean"] <= h["ci_high"]
    assert doc["recommended"]["variant"] == "age 20,000 h"
    assert doc["variants"][1]["saving_per_year_against_first"]["method"] == "paired"
    assert doc["extra"] == {"recommended_interval_h": 16_000.0, "note": "demo"}


def test_failed_write_keeps_the_previous_report_and_leaves_no_temporary_directory(
    tmp_path, monkeypatch, fast_png
) -> None:
    out = tmp_path / "north"
    first = full_report(out)
    before = {p.relative_to(out): p.read_bytes() for p in out.rglob("*") if p.is_file()}

    def broken(*args, **kwargs):
        raise RuntimeError("disk on fire")

    monkeypatch.setattr(fleet_figures, "plot_spares", broken)
    with pytest.raises(RuntimeError, match="disk on fire"):
        full_report(out, make_results(label_prefix="new "))
    after = {p.relative_to(out): p.read_bytes() for p in out.rglob("*") if p.is_file()}
    assert after == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["north"]
    # A successful rewrite replaces the report and leaves nothing else behind.
    monkeypatch.setattr(fleet_figures, "plot_spares", plot_spares)
    second = full_report(out, make_results(label_prefix="new "))
    assert sorted(p.name for p in tmp_path.iterdir()) == ["north"]
    assert "new age 20,000 h" in second.summary_json.read_text(encoding="utf-8")
    assert first.html == second.html


def test_refuses_to_replace_a_directory_that_is_not_a_report(tmp_path) -> None:
    out = tmp_path / "mine"
    out.mkdir()
    (out / "thesis.txt").write_text("precious")
    with pytest.raises(InputError, match="not a fleetsim report"):
        write_report(make_results(), out, title="t", dpi=DPI)
    assert (out / "thesis.txt").read_text() == "precious"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["mine"]
    with pytest.raises(InputError, match="JSON-like"):
        write_report(make_results(), tmp_path / "x", title="t", extra={"f": object()}, dpi=DPI)
    assert not (tmp_path / "x").exists()


def test_user_strings_are_escaped_in_the_html(tmp_path) -> None:
    evil, bold = "<script>alert(1)</script>", "<b>x</b>"
    sc = make_scenario(
        name=f"study {evil}",
        machine=f"pump {bold}",
        position=f"pos {evil}",
        bearing=f"FB-{bold}$x$",
        group=f"_grp {evil}",
    )
    results = make_results(sc, label_prefix=f"{bold} ")[:2]
    paths = write_report(
        results,
        tmp_path / "r",
        title=f"Title {evil}",
        executive_summary=[f"Plain words {bold}"],
        extra={"k": evil},
        dpi=DPI,
    )
    page = parse(paths.html)
    assert "script" not in page.tags and "b" not in page.tags
    raw = paths.html.read_text(encoding="utf-8")
    assert "<script>" not in raw and "<b>" not in raw
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in raw and "&lt;b&gt;x&lt;/b&gt;" in raw
    text = "".join(page.text)
    for planted in (
        f"study {evil}",
        f"pump {bold}",
        f"pos {evil}",
        f"FB-{bold}$x$",
        f"Title {evil}",
        f"{bold} age 20,000 h",
        f"Plain words {bold}",
    ):
        assert planted in text
    assert len(page.imgs) == len(paths.figures)  # "$x$" and "_grp" did not break a figure
    # No inspections and no sweep in these variants: those figures are left out.
    assert set(paths.figures) == {
        "life",
        "cost_per_year",
        "downtime_by_machine",
        "downtime_by_cause",
        "spares",
        "system_reliability",
    }


@pytest.mark.skipif(not CHROMIUM.exists(), reason="chromium is not installed")
def test_report_renders_in_headless_chromium(full, tmp_path) -> None:
    paths = full
    flags = [
        str(CHROMIUM),
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        "--no-first-run",
        f"--user-data-dir={tmp_path / 'profile'}",
    ]
    shot = tmp_path / "shot.png"
    subprocess.run(
        [*flags, "--window-size=1100,1600", f"--screenshot={shot}", paths.html.as_uri()],
        check=True,
        capture_output=True,
        timeout=90,
    )
    pixels = decode_png(shot.read_bytes())
    assert pixels.shape[:2] == (1600, 1100) and pixels[..., :3].std() > 0.05
    # Every image decoded in the browser: a copy of the page counts them after load.
    probe = tmp_path / "probe.html"
    check = (
        "<script>window.addEventListener('load',()=>{const i=[...document.images];"
        "document.body.setAttribute('data-ok',i.filter(x=>x.complete&&x.naturalWidth>0).length+'/'+i.length)})"
        "</script></body>"
    )
    probe.write_text(
        paths.html.read_text(encoding="utf-8").replace("</body>", check), encoding="utf-8"
    )
    dom = subprocess.run(
        [*flags, "--virtual-time-budget=5000", "--dump-dom", probe.as_uri()],
        check=True,
        capture_output=True,
        text=True,
        timeout=90,
    ).stdout
    n = len(paths.figures)
    assert f'data-ok="{n}/{n}"' in dom


# --- headline figures and comparisons -------------------------------------------------------


def test_no_down_probability_is_the_clopper_pearson_interval() -> None:
    # Clopper & Pearson (1934): exact limits are beta quantiles B(α/2; k, n−k+1), B(1−α/2; k+1, n−k).
    down = np.array([0] * 37 + [1] * 13, dtype=float)
    est = no_down_probability(down)
    assert est.mean == pytest.approx(37 / 50, abs=1e-15)
    assert est.low == pytest.approx(stats.beta.ppf(0.025, 37, 14), rel=1e-9)
    assert est.high == pytest.approx(stats.beta.ppf(0.975, 38, 13), rel=1e-9)
    # All 20 survive: lower limit (α/2)^(1/n) in closed form.
    est = no_down_probability(np.zeros(20))
    assert est.low == pytest.approx(0.025 ** (1 / 20), rel=1e-9) and est.high == 1.0


def test_differences_match_scipy_paired_and_welch_intervals() -> None:
    a, b = make_results()[:2]
    est, method = difference(a, b, "cost_per_year")
    ref = stats.ttest_rel(a.replications["cost_per_year"], b.replications["cost_per_year"])
    ci = ref.confidence_interval(0.95)  # scipy.stats.ttest_rel: paired Student t
    assert method == "paired"
    assert (est.low, est.high) == pytest.approx((ci.low, ci.high), rel=1e-9)
    other = StudyResult(b.scenario, b.replications.iloc[:40], seed=99, engine="des", label="x")
    est, method = difference(a, other, "cost_per_year")
    ref = stats.ttest_ind(
        a.replications["cost_per_year"], other.replications["cost_per_year"], equal_var=False
    )
    ci = ref.confidence_interval(0.95)  # scipy.stats.ttest_ind(equal_var=False): Welch
    assert method == "welch"
    assert (est.low, est.high) == pytest.approx((ci.low, ci.high), rel=1e-9)


def test_per_year_headlines_are_the_horizon_figures_over_the_years() -> None:
    r = make_results()[0]
    h = {x.figure: x for x in headline_figures(r)}
    years = HORIZON_H / HOURS_PER_YEAR
    fails = r.replications["failures"] / years
    half = stats.t.ppf(0.975, len(fails) - 1) * fails.std(ddof=1) / math.sqrt(len(fails))
    assert h["failures_per_year"].mean == pytest.approx(fails.mean(), rel=1e-12)
    assert h["failures_per_year"].ci_high - h["failures_per_year"].mean == pytest.approx(
        half, rel=1e-9
    )
    assert "inspections_per_year" not in h  # today's practice does not inspect
    assert "detections_per_year" in {x.figure for x in headline_figures(make_results()[2])}


def test_default_executive_summary_recommends_the_cheapest_and_states_the_saving() -> None:
    results = make_results()
    text = default_executive_summary(results)
    means = [r.replications["cost_per_year"].mean() for r in results]
    best = int(np.argmin(means))
    assert text[0].startswith(f"Recommended: {results[best].label}.")
    saving = means[0] - means[best]
    # The saving is rounded to the second significant digit of its interval's width.
    m = re.search(r"against [^:]+: ([\d,]+)\xa0EUR per year \(95\xa0% CI ([\d,]+) to ([\d,]+)\)",
                  text[1])
    assert m, text[1]
    shown, low, high = (float(g.replace(",", "")) for g in m.groups())
    step = 10.0 ** (math.floor(math.log10(high - low)) - 1)
    assert abs(shown - saving) <= step / 2 + 1e-9
    assert "run to failure" in text[1]
    single = default_executive_summary(results[:1])
    assert single[0].startswith("run to failure: over 5 years")
    keep = default_executive_summary([results[1], results[0]])
    assert keep[0].startswith("Keep today's practice (age 20,000 h)")


def test_summary_table_is_plain_text_with_every_headline() -> None:
    text = summary_table(make_results())
    lines = text.splitlines()
    assert all(line == line.rstrip() for line in lines) and text.endswith("\n")
    for words in (
        "Cost (EUR/yr)",
        "Availability (%)",
        "Failures (/yr)",
        "Planned changes (/yr)",
        "Down: crew (unit-h/yr)",
        "Down: spares (unit-h/yr)",
        "Down: repair (unit-h/yr)",
        "Down: planned (unit-h/yr)",
        "Spares FB-207 (/yr)",
        "No fleet down event, 5 y (%)",
        "Detections (/yr)",
        "run to failure",
        "inspect monthly",
        "mean [95 % CI]",
    ):
        assert words in text
    # The cost cell is the mean and its Student-t interval, as in the summary.
    s = make_results()[0].summary.loc["cost_per_year"]
    # Digits follow the interval: the last shown is the width's second significant digit.
    step = 10.0 ** (math.floor(math.log10(s["ci_high"] - s["ci_low"])) - 1)
    assert step >= 1  # so the cell has no decimals
    mean, low, high = (round(s[k] / step) * step for k in ("mean", "ci_low", "ci_high"))
    assert f"{mean:,.0f} [{low:,.0f}, {high:,.0f}]" in text
    assert max(len(line) for line in lines) < 120
    assert "<" not in text


def test_write_tables_without_events(tmp_path) -> None:
    results = make_results()[1:]
    paths = write_tables(results, tmp_path)
    assert set(paths) == {"replications", "summary", "headline"}
    summary = pd.read_csv(paths["summary"])
    assert list(summary.columns[:2]) == ["variant", "figure"] and len(summary) == 2 * (
        results[0].replications.shape[1] - 1
    )


def test_csv_text_cells_are_not_read_as_formulas(tmp_path) -> None:
    from fleetsim.report.tables import spreadsheet_safe

    frame = pd.DataFrame({"unit": ["=SUM(A1:A9)", "+1", "-2", "@cmd", "pump-A", "\tx"],
                          "value": [-3.0, 1.0, 2.0, 3.0, 4.0, 5.0]})
    safe = spreadsheet_safe(frame)
    assert list(safe["unit"]) == ["'=SUM(A1:A9)", "'+1", "'-2", "'@cmd", "pump-A", "'\tx"]
    assert safe["value"].equals(frame["value"])  # numbers, negative ones too, are left alone
    assert frame["unit"][0] == "=SUM(A1:A9)"  # the caller's frame is not changed
    results = make_results()[1:]
    paths = write_tables(results, tmp_path, labels=["=HYPERLINK(1)"] * len(results))
    for name in ("replications", "summary", "headline"):
        text = paths[name].read_text(encoding="utf-8")
        assert "'=HYPERLINK(1)" in text and "\n=HYPERLINK" not in text


# --- figures ------------------------------------------------------------------------------------


def test_life_figure_marks_l10_and_the_iso281_life_at_95_percent() -> None:
    import matplotlib.pyplot as plt

    sc = make_scenario()
    ax = plot_life_distributions(sc, reliability=0.95)
    dots = {round(line.get_xdata()[0]) for line in ax.get_lines() if line.get_gid() == "L10"}
    diamonds = sorted(line.get_xdata()[0] for line in ax.get_lines() if line.get_gid() == "L5")
    # The iso281 preset puts F(L10) = 0.10: the dot of the given-life position is at its L10.
    assert 60_000 in dots
    # The textbook fit x0 = 0.02, θ − x0 = 4.439, b = 1.483 (Budynas & Nisbett, Shigley's
    # Mechanical Engineering Design, from memory) reaches R = 0.9 at x0 + (θ − x0)(ln 1/0.9)^(1/b).
    assert round(45_000 * (0.02 + 4.439 * math.log(1 / 0.9) ** (1 / 1.483))) in dots
    # ISO 281:2007 Table 12 (from memory): a1 = 0.64 at 95 % reliability (rounded to 0.01).
    assert any(abs(x / 60_000.0 - 0.64) < 0.005 for x in diamonds)
    assert "h" in ax.get_xlabel() and "Reliability" in ax.get_ylabel()
    plt.close(ax.figure)


def test_sweep_figure_marks_the_minimum_of_each_curve() -> None:
    import matplotlib.pyplot as plt

    sweep, analytic = make_sweep()
    ax = plot_cost_rate_sweep(sweep, analytic=analytic, currency="EUR")
    star = next(line for line in ax.get_lines() if line.get_gid() == "simulated optimum")
    vline = next(line for line in ax.get_lines() if line.get_gid() == "closed-form optimum")
    assert star.get_xdata()[0] == sweep["interval_h"].iloc[int(np.argmin(sweep["mean"]))]
    assert (
        vline.get_xdata()[0] == analytic["interval_h"].iloc[int(np.argmin(analytic["cost_rate"]))]
    )
    assert ax.get_ylabel() == "Cost rate (EUR/year)"
    with pytest.raises(InputError, match="interval_h"):
        plot_cost_rate_sweep(sweep.drop(columns="ci_low"))
    plt.close(ax.figure)


def test_reliability_curve_counts_first_down_at_the_horizon_as_no_event() -> None:
    r = make_results()[0]
    curves = reliability_curves(r)
    assert set(curves) == {"fleet", "station-1"}
    survived = 1.0 - r.replications["fleet_down"].mean()
    assert curves["fleet"]["reliability"].iloc[-1] == pytest.approx(survived, abs=1e-12)
    assert curves["fleet"]["reliability"].iloc[0] == 1.0


def test_figure_functions_label_units_and_leave_global_state_alone() -> None:
    import matplotlib.pyplot as plt

    results = make_results()
    before = dict(mpl.rcParams)
    backend = mpl.get_backend()
    calls = [
        (plot_cost_per_year, (results,), "EUR/year"),
        (plot_availability, (results,), "%"),
        (plot_downtime_by_cause, (results,), "hours per year"),
        (plot_spares, (results,), "count/year"),
        (plot_system_reliability, (results[0],), "years"),
        (plot_inspections, (results,), "count/year"),
    ]
    for fn, args, unit in calls:
        fig, ax = plt.subplots()
        assert fn(*args, ax=ax) is ax
        assert unit in ax.get_xlabel() + ax.get_ylabel()
        plt.close(fig)
    ax = plot_spares(results, recommended_stock={"FB-207": 3})
    assert any(c.get_label().startswith("recommended stock") for c in ax.collections)
    plt.close(ax.figure)
    assert dict(mpl.rcParams) == before and mpl.get_backend() == backend


def test_inspections_figure_without_inspections_says_so() -> None:
    import matplotlib.pyplot as plt

    ax = plot_inspections(make_results()[:2])
    assert "no inspections" in ax.texts[0].get_text()
    plt.close(ax.figure)


def _dead_pid() -> int:
    pid = 4_000_000
    while Path(f"/proc/{pid}").exists():
        pid += 1
    return pid


@pytest.mark.skipif(not Path("/proc/self").exists(), reason="needs /proc to find a dead process id")
def test_a_killed_writer_is_cleaned_up_and_its_old_report_restored(tmp_path, fast_png) -> None:
    out = tmp_path / "north"
    full_report(out)
    pid = _dead_pid()
    # Killed between the two renames: the previous report sits in its ".old" sibling.
    out.rename(tmp_path / f".north.old-{pid}-0000")
    half = tmp_path / f".north.new-{pid}-1111"
    half.mkdir()
    (half / "replications.csv").write_text("half")
    with pytest.raises(InputError):  # a bad call still recovers first, then refuses
        write_report(make_results(), out, title="t", extra={"bad": object()})
    assert sorted(p.name for p in tmp_path.iterdir()) == ["north"]
    assert json.loads((out / "summary.json").read_text())["title"] == "Pump station bearing study"


def test_a_users_own_files_in_a_report_folder_survive_a_rewrite(tmp_path, fast_png) -> None:
    out = tmp_path / "north"
    first = full_report(out)
    manifest = json.loads((out / ".fleetsim-manifest.json").read_text())["files"]
    assert sorted(manifest) == sorted(p.relative_to(out).as_posix() for p in first.files())
    (out / "notes.txt").write_text("my notes")
    (out / "mine").mkdir()
    (out / "mine" / "photo.jpg").write_bytes(b"\xff\xd8")
    (out / "empty").mkdir()
    (out / "figures" / "sketch.png").write_bytes(b"mine")
    # a file fleetsim wrote last time and does not write now is removed
    (out / "figures" / "retired.png").write_bytes(b"stale")
    manifest.append("figures/retired.png")
    (out / ".fleetsim-manifest.json").write_text(json.dumps({"files": manifest}))
    second = full_report(out, make_results(label_prefix="new "))
    assert (out / "notes.txt").read_text() == "my notes"
    assert (out / "mine" / "photo.jpg").read_bytes() == b"\xff\xd8"
    assert (out / "empty").is_dir()
    assert (out / "figures" / "sketch.png").read_bytes() == b"mine"
    assert not (out / "figures" / "retired.png").exists()
    assert "new age 20,000 h" in second.summary_json.read_text(encoding="utf-8")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["north"]
