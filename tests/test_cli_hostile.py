"""Hostile and careless input through the command line: one line, exit 2, quickly.

Every case runs ``fleetsim.cli.main`` (the entry point of the ``fleetsim``
script) and asserts the promise of the README: exit code 2, exactly one line
on standard error that names the file, key or option, no traceback, and an
answer within a time limit. The fixed tables below are the cases found by
fuzzing (issue 17); ``test_cli_fuzz.py`` generates many more.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest
from cli_cases import PUMPS, ROOT, edited, expect_one_line_error, run_cli, tiny

# --- unit strings -------------------------------------------------------------------
LIFE = ["life", "--type", "ball", "--dynamic-rating", "30.7 kN", "--radial-load", "3.2 kN",
        "--speed", "1480 rpm"]


def _with(args: list[str], option: str, value: str) -> list[str]:
    out = list(args)
    if option in out:
        out[out.index(option) + 1] = value
    else:
        out += [option, value]
    return out


@pytest.mark.parametrize(
    ("option", "value", "words"),
    [
        ("--dynamic-rating", "30,7 kN", "use a decimal point"),
        ("--radial-load", "3,2 kN", "use a decimal point"),
        ("--dynamic-rating", "9**9**9 kN", "unknown force unit"),
        ("--speed", "9**9**9 rpm", "unknown speed unit"),
        ("--speed", "1480*2 rpm", "unknown speed unit"),
        ("--dynamic-rating", "30.7 KN", "did you mean 'kN'"),
    ],
)
def test_life_quantities(tmp_path: Path, option: str, value: str, words: str) -> None:
    message = expect_one_line_error(_with(LIFE, option, value), cwd=tmp_path)
    assert option in message and words in message


@pytest.mark.parametrize(
    ("old", "new", "key", "words"),
    [
        ('radial_load = "3.0 kN"', 'radial_load = "9,5 kN"', "radial_load", "use a decimal point"),
        ('horizon = "10 years"', 'horizon = "9**9**9 h"', "study.horizon", "unknown time unit"),
    ],
)
def test_scenario_quantities(tmp_path: Path, old: str, new: str, key: str, words: str) -> None:
    path = edited(tmp_path, PUMPS, [(old, new)])
    message = expect_one_line_error(["check", str(path)], cwd=tmp_path)
    assert re.search(rf"{re.escape(path.name)}: .*{re.escape(key)}", message), message
    assert words in message


def test_sweep_vary_is_not_evaluated(tmp_path: Path) -> None:
    message = expect_one_line_error(
        ["sweep", str(ROOT / "scenarios" / "pump_stations.toml"), "-n", "2", "--quiet",
         "--out", str(tmp_path / "r"), "--vary", "policy.interval=9**9**9 h"],
        cwd=tmp_path,
    )
    assert "policy.interval" in message and "unknown time unit" in message


# --- the cases of issue 17 ------------------------------------------------------------
def _deep_toml(tmp: Path) -> list[str]:
    path = tmp / "deep.toml"
    path.write_text("x = " + "[" * 500 + "]" * 500 + "\n", encoding="utf-8")
    return ["check", str(path)]


def _long_records_cell(tmp: Path) -> list[str]:
    path = tmp / "records.csv"
    path.write_text("hours,outcome,note\n1000,failed," + "x" * 140_000 + "\n", encoding="utf-8")
    return ["fit", str(path)]


def _long_ages_cell(tmp: Path) -> list[str]:
    (tmp / "ages.csv").write_text("unit,position,hours,note\npump#1,de,100," + "x" * 140_000
                                  + "\n", encoding="utf-8")
    return ["check", str(tiny(tmp, [('count = 2', 'count = 2\nages = "ages.csv"')]))]


def _out_below_a_file(tmp: Path) -> list[str]:
    (tmp / "afile").write_text("x")
    return ["run", str(tiny(tmp)), "--quiet", "--out", str(tmp / "afile" / "report")]


def _out_is_a_file(tmp: Path) -> list[str]:
    (tmp / "afile").write_text("x")
    return ["run", str(tiny(tmp)), "--quiet", "--out", str(tmp / "afile")]


def _run(*edits: tuple[str, str], extra: str = "", args: tuple[str, ...] = ()):  # type: ignore[no-untyped-def]
    def build(tmp: Path) -> list[str]:
        return ["run", str(tiny(tmp, edits, extra)), "--quiet", "--out", str(tmp / "r"), *args]
    return build


def _sweep(vary: str):  # type: ignore[no-untyped-def]
    def build(tmp: Path) -> list[str]:
        return ["sweep", str(tiny(tmp)), "--quiet", "--out", str(tmp / "r"), "--vary", vary]
    return build


def _check(*edits: tuple[str, str], extra: str = ""):  # type: ignore[no-untyped-def]
    def build(tmp: Path) -> list[str]:
        return ["check", str(tiny(tmp, edits, extra))]
    return build


def _life(*more: str):  # type: ignore[no-untyped-def]
    def build(tmp: Path) -> list[str]:
        return [*LIFE, *more]
    return build


def _bom(tmp: Path) -> list[str]:
    path = tiny(tmp, [('seed = 1', 'seed = -1')])
    path.write_bytes(b"\xef\xbb\xbf" + path.read_bytes())
    return ["check", str(path)]


VARIANT = '\n[[variant]]\nname = "{name}"\nset = {set}\n'

ISSUE_17 = {
    # (case, build(tmp) -> argv, words the error must contain)
    "deep-toml": (_deep_toml, "deep.toml"),
    "long-records-cell": (_long_records_cell, "records.csv"),
    "long-ages-cell": (_long_ages_cell, "ages.csv"),
    "seed-negative": (_run(args=("--seed", "-1")), "--seed"),
    "out-below-a-file": (_out_below_a_file, "--out"),
    "out-is-a-file": (_out_is_a_file, "--out"),
    "sweep-range-overflow": (_sweep("policy.interval=0:1e308:1e-308 h"), "--vary"),
    "sweep-range-infinite": (_sweep("policy.interval=1e999:1e999:1 h"), "--vary"),
    "application-factor-huge": (_life("--application-factor", "1e300"), "--application-factor"),
    "application-factor-inf": (_life("--application-factor", "inf"), "--application-factor"),
    "viscosity-ratio-inf": (_life("--viscosity-ratio", "inf"), "--viscosity-ratio"),
    "cluster-bogus": (_run(args=("--cluster", "bogus")), "--cluster"),
    "cluster-empty": (_run(args=("--cluster", "")), "--cluster"),
    "failure-cost-huge": (_run(("failure = 1000", "failure = 1e308")), "costs.failure"),
    "lognormal-lead-time-huge": (
        _run(('lead_time = "5 d"',
              'lead_time = { kind = "lognormal", median = "5 d", p90 = "1e30 h" }'),
             extra='\n[stores.B1]\nreorder_point = 0\norder_up_to = 1\n'),
        "lead_time.p90"),
    "weibull-lead-time-tiny-shape": (
        _run(('lead_time = "5 d"', 'lead_time = { kind = "weibull", shape = 1e-6, scale = "5 d" }'),
             extra='\n[stores.B1]\nreorder_point = 0\norder_up_to = 1\n'),
        "lead_time.shape"),
    "life-shape-tiny": (
        _run(('  radial_load = "3 kN"\n  speed = "1480 rpm"\n',
              '  life = { shape = 0.001, scale = "20000 h" }\n')),
        "life.shape"),
    "horizon-tiny": (_check(('horizon = "2 years"', 'horizon = "1e-300 h"')), "study.horizon"),
    "speed-tiny": (_check(('speed = "1480 rpm"', 'speed = "1e-300 rpm"')), "position[0].speed"),
    "catalogue-l10-tiny": (
        lambda tmp: ["fit", str(ROOT / "scenarios" / "records" / "pump_bearings.csv"),
                     "--group-by", "position", "--catalog-l10", "1e-300 h"],
        "--catalog-l10"),
    "bom-toml": (_bom, "seed"),
    "key-path-negative-index": (
        _run(extra=VARIANT.format(name="v", set='{ "machine[-1].count" = 3 }')), "machine[-1]"),
    "variant-duplicate-name": (
        _check(extra=VARIANT.format(name="v", set='{ "policy.interval" = "1000 h" }') * 2),
        "variant[1].name"),
    "variant-negative-interval": (
        _check(extra=VARIANT.format(name="v", set='{ "policy.interval" = "-1000 h" }')),
        "policy.interval"),
    "variant-unknown-key": (
        _check(extra=VARIANT.format(name="v", set='{ "policy.intervall" = "1000 h" }')),
        "intervall"),
    "variant-description-not-text": (
        _check(extra=VARIANT.format(name="v", set='{ "policy.interval" = "1000 h" }')
               + "description = 3\n"),
        "variant[0].description"),
}


@pytest.mark.parametrize("case", sorted(ISSUE_17))
def test_issue_17_cases(tmp_path: Path, case: str) -> None:
    build, words = ISSUE_17[case]
    message = expect_one_line_error(build(tmp_path), cwd=tmp_path)
    assert words in message, message


def test_a_long_study_name_gives_a_short_report_folder(tmp_path: Path) -> None:
    path = tiny(tmp_path, [('name = "tiny"', f'name = "{"n" * 245}"')])
    code, _, err = run_cli(["run", str(path), "--quiet"], cwd=tmp_path)
    assert code == 0, err
    assert [p.name for p in (tmp_path / "reports").iterdir()] == ["n" * 64]


# --- event storms ---------------------------------------------------------------------
STORMS = {
    "1 h lives, no repair time": [
        ('  radial_load = "3 kN"\n  speed = "1480 rpm"\n', '  life = { shape = 1.5, scale = "1 h" }\n'),
        ('kind = "age"\ninterval = "20000 h"', 'kind = "run-to-failure"'),
    ],
    "an inspection every minute": [
        ('kind = "age"\ninterval = "20000 h"',
         'kind = "condition"\ninspection_every = "1 min"\ndetection = 0.5'),
        ("[[bearing]]", '[life]\npf_interval = "30 d"\n\n[[bearing]]'),
    ],
}


@pytest.mark.parametrize("engine", ["des", "vector"])
@pytest.mark.parametrize("storm", sorted(STORMS))
def test_event_storms_stop_at_the_budget(tmp_path: Path, monkeypatch: pytest.MonkeyPatch,
                                         storm: str, engine: str) -> None:
    from fleetsim.sim import budget

    monkeypatch.setattr(budget, "MIN_EVENTS", 20_000)  # the storms exceed it in 2 years
    path = tiny(tmp_path, STORMS[storm])
    message = expect_one_line_error(
        ["run", str(path), "--quiet", "--engine", engine, "--out", str(tmp_path / "r")],
        cwd=tmp_path,
    )
    assert message.startswith(f"{path}: more than 20,000 events in one replication: "
                              "a life or inspection interval is far shorter than the horizon")
    assert not (tmp_path / "r").exists()


def test_the_budget_leaves_ordinary_studies_alone() -> None:
    from fleetsim.scenario import load_scenario
    from fleetsim.sim.budget import event_budget

    pumps = load_scenario(PUMPS)
    positions = sum(m.count * len(m.positions) for m in pumps.machines)
    # 1,000 events per position-year, at least a million
    assert event_budget(pumps, pumps.study.horizon_h) == max(
        1_000_000, int(1000 * positions * pumps.study.horizon_h / 8766))


# --- more cases of issue 17 ------------------------------------------------------------
MORE_17 = {
    "application-factor-inf-toml": (
        _check(('  speed = "1480 rpm"\n', '  speed = "1480 rpm"\n  application_factor = inf\n')),
        "position[0].application_factor"),
    "viscosity-ratio-inf-toml": (
        _check(('  speed = "1480 rpm"\n',
                '  speed = "1480 rpm"\n  viscosity_ratio = inf\n  contamination = 0.5\n')),
        "position[0].viscosity_ratio"),
    "size-application-factor-huge": (
        lambda tmp: ["size", "--type", "ball", "--load", "4 kN", "--speed", "1480 rpm", "--life",
                     "25000 h", "--reliability", "0.9", "--application-factor", "1e300"],
        "--application-factor"),
    "load-below-a-millinewton": (lambda tmp: _with(LIFE, "--radial-load", "1e-100 N"),
                                 "--radial-load"),
    "horizon-under-an-hour": (_check(('horizon = "2 years"', 'horizon = "30 min"')),
                              "study.horizon"),
    "lognormal-lead-time-spread": (
        _run(('lead_time = "5 d"',
              'lead_time = { kind = "lognormal", median = "1 h", p90 = "2000 h" }'),
             extra='\n[stores.B1]\nreorder_point = 0\norder_up_to = 1\n'),
        "lead_time.p90"),
    "rating-life-below-a-second": (
        _check(('dynamic_rating = "30 kN"', 'dynamic_rating = "0.001 N"'),
               ('radial_load = "3 kN"', 'radial_load = "1e9 N"')),
        "machine[0].position[0]: the loads and speed give a rating life"),
    "group-downtime-cost-huge": (
        _check(extra='\n[[group]]\nid = "g"\nmachines = ["pump"]\nneed = 1\n'
                     'downtime_per_hour = 1e308\n'),
        "group[0].downtime_per_hour"),
}


@pytest.mark.parametrize("case", sorted(MORE_17))
def test_more_issue_17_cases(tmp_path: Path, case: str) -> None:
    build, words = MORE_17[case]
    message = expect_one_line_error(build(tmp_path), cwd=tmp_path)
    assert words in message, message


def test_check_shows_a_variants_description(tmp_path: Path) -> None:
    path = tiny(tmp_path, extra='\n[[variant]]\nname = "longer"\ndescription = "replace later"\n'
                                'set = { "policy.interval" = "30000 h" }\n')
    code, out, err = run_cli(["check", str(path)], cwd=tmp_path)
    assert code == 0, err
    assert "longer — replace later" in out


# --- legal extreme values: a bounded run, never a bare numpy warning ----------------------
_LOADS = '  radial_load = "3 kN"\n  speed = "1480 rpm"\n'
EXTREMES = {
    # the ends of the bounds of fleetsim/bounds.py, alone and together
    "rating life beyond any horizon": [
        ('dynamic_rating = "30 kN"', 'dynamic_rating = "1e9 N"'),
        (_LOADS, '  radial_load = "0.001 N"\n  speed = "0.01 rpm"\n  field_factor = 1000\n')],
    "steep life far out, aged 1000 years": [
        (_LOADS, '  life = { shape = 20, scale = "1 s", location = "1000 years" }\n'),
        ('operating_hours_per_year = "6000 h"',
         'operating_hours_per_year = "6000 h"\nstarting_age = "1000 years"')],
    "shallow life of 1000 years": [
        (_LOADS, '  life = { shape = 0.1, scale = "1000 years" }\n')],
    "wide lognormal life": [
        (_LOADS, '  life = { family = "lognormal", shape = 10, scale = "1000 years" }\n')],
    "fastest shaft, heaviest shocks": [
        (_LOADS, '  radial_load = "30 N"\n  speed = "1000000 rpm"\n  application_factor = 10\n'
                 '  rotation_factor = 10\n')],
    "largest money, a horizon of an hour": [
        ("failure = 1000", "failure = 1e12\ndiscount_rate = 0.999\nholding_rate = 1"),
        ('horizon = "2 years"', 'horizon = "1 h"')],
}


@pytest.mark.parametrize("engine", ["des", "vector"])
@pytest.mark.parametrize("case", sorted(EXTREMES))
def test_legal_extremes_run_without_bare_numpy_warnings(tmp_path: Path, case: str,
                                                       engine: str) -> None:
    path = tiny(tmp_path, EXTREMES[case])
    code, _, err = run_cli(["run", str(path), "--quiet", "--engine", engine,
                            "--out", str(tmp_path / "r")], cwd=tmp_path)
    assert code == 0, err
    assert "RuntimeWarning" not in err and "encountered" not in err, err
    for line in err.splitlines():  # every warning names the file and the key it comes from
        assert line.startswith(f"fleetsim: warning: {path}: machine[0].position[0]"), err
