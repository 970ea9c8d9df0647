"""A fuzz layer over the command line: malformed scenarios, records files and options.

Each generated case runs the ``fleetsim`` entry point in-process
(:func:`cli_cases.run_cli`) and must end in one of two ways: success (exit 0),
or exit 2 with exactly one ``fleetsim: error:`` line on standard error, the
last line — never a traceback, never past the time limit. Warnings printed on
the way must be fleetsim's own (naming a key or a quantity), never a bare
numpy message such as "overflow encountered in power".

Hypothesis draws the cases; the profile ``fixed`` (``tests/conftest.py``)
draws the same ones on every run, so CI is reproducible. The numbers of
examples below give 300 scenario cases through ``check``, 30 through ``run``,
90 records files through ``fit``, 150 option sets through ``life`` and
``size`` and the 29 distinct bad options of ``run`` and ``sweep``: 599 in all.
"""

from __future__ import annotations

import contextlib
import re
import tempfile
from collections.abc import Iterator, Sequence
from pathlib import Path

from cli_cases import PUMPS, ROOT, TINY, run_cli
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st


def fuzz(examples: int) -> settings:
    """Settings of one fuzz test: this many cases, no per-case deadline (a limit is in run_cli)."""
    return settings(max_examples=examples, deadline=None,
                    suppress_health_check=[HealthCheck.too_slow])

#: Hostile values as TOML text: wrong types, bad units, absurd sizes, expressions.
TOML_VALUES = [
    '"9**9**9 h"', '"9**9**9"', '"30,7 kN"', '"9,5 kN"', '"1,000 h"', '"1e999 h"', '"1e308 years"',
    '"1e-300 h"', '"1e-300 rpm"', '"1e-300 N"', '"1e300 kN"', '"-5 h"', '"-1 kN"', '"0 h"',
    '"0 rpm"', '"0 N"', '"nan h"', '"inf h"', '"NaN"', '"4.5 KN"', '"4.5 kN/h"', '"2*8 h"',
    '"(8) h"', '"8"', '"h"', '""', '" "', '"\\u0000"', '"x"', '"' + "y" * 300 + '"',
    '"1 lightyear"', '"20000 rpm"', '"3 m"', '"5 kg"', '"%"', '"1_000 h"',
    "0", "-1", "1", "2", "0.5", "1e308", "-1e308", "1e-300", "inf", "-inf", "nan", "1e999",
    "9223372036854775808", "-9223372036854775809", "true", "false", "[]", "{}", "[1, 2]",
    '["a"]', "[{}]", '{ kind = "x" }', '{ kind = "lognormal", median = "1 h", p90 = "1e30 h" }',
    '{ kind = "weibull", shape = 1e-6, scale = "5 d" }', '{ kind = "exponential", mean = "0 h" }',
    '{ shape = 0.001, scale = "1 h" }', '{ shape = 1e300, scale = "1 h", location = 0 }',
    "1979-05-27", "1979-05-27T07:32:00Z", "07:32:00",
    "[" * 40 + "]" * 40,
]

#: Text mutations of a whole file.
_LINE = re.compile(r'^(?P<lead>\s*)(?P<key>[A-Za-z_"][A-Za-z0-9_."-]*)\s*=\s*(?P<value>.*)$')


def _value_lines(text: str) -> list[int]:
    return [i for i, line in enumerate(text.splitlines()) if _LINE.match(line)]


TEXTS = {"tiny": TINY, "pumps": PUMPS.read_text(encoding="utf-8")}
LINES = {name: _value_lines(text) for name, text in TEXTS.items()}
SECTION_LINES = {name: [i for i, ln in enumerate(t.splitlines()) if ln.strip().startswith("[")]
                 for name, t in TEXTS.items()}


#: Values a key that holds a quantity ("4.5 kN", "10 years") must refuse, whatever its kind:
#: expressions, decimal commas, non-finite or out-of-bounds numbers, unknown units, no unit.
MUST_REFUSE_AS_QUANTITY = {
    '"9**9**9 h"', '"9**9**9"', '"30,7 kN"', '"9,5 kN"', '"1,000 h"', '"1e999 h"',
    '"1e308 years"', '"1e300 kN"', '"-5 h"', '"-1 kN"', '"nan h"', '"inf h"', '"NaN"', '"4.5 KN"',
    '"4.5 kN/h"', '"2*8 h"', '"(8) h"', '"8"', '"h"', '""', '" "', '"x"', '"1 lightyear"',
    '"3 m"', '"5 kg"', '"%"', '"1_000 h"', "0", "-1", "1", "1e308", "inf", "nan", "true", "[]",
}
_QUANTITY_TEXT = re.compile(r'^"[-+]?[0-9][0-9.eE+-]* *[A-Za-z/]+"\s*(#.*)?$')


def _quantity_keys() -> set[str]:
    """Keys that hold a quantity string wherever they appear in the base texts."""
    quantity, other = set(), set()
    for text in TEXTS.values():
        for line in text.splitlines():
            m = _LINE.match(line)
            if m:
                (quantity if _QUANTITY_TEXT.match(m["value"].strip()) else other).add(m["key"])
    return quantity - other


QUANTITY_KEYS = _quantity_keys()


@st.composite
def hostile_scenarios(draw: st.DrawFn, base: str | None = None) -> tuple[str, bool]:
    """A demo or the tiny scenario with one to three hostile edits of its text.

    Also says whether the result must be refused: a key that held a quantity
    now holds a value of :data:`MUST_REFUSE_AS_QUANTITY`, and that line is
    still in the file.
    """
    name = base or draw(st.sampled_from(sorted(TEXTS)))
    lines = TEXTS[name].splitlines()
    refused: set[str] = set()
    for _ in range(draw(st.integers(1, 3))):
        op = draw(st.sampled_from(["value", "value", "value", "drop", "key", "section", "raw"]))
        i = draw(st.sampled_from(LINES[name]))
        m = _LINE.match(lines[i])
        if op == "value" and m:
            value = draw(st.sampled_from(TOML_VALUES))
            lines[i] = f"{m['lead']}{m['key']} = {value}"
            if m["key"] in QUANTITY_KEYS and value in MUST_REFUSE_AS_QUANTITY:
                refused.add(lines[i])
        elif op == "drop":
            lines[i] = ""
        elif op == "key" and m:
            key = draw(st.sampled_from(["intervall", "horizon", "id", "count", "kind", "x",
                                        "machine[-1]", "set", "description"]))
            lines.insert(i + 1, f"{m['lead']}{key} = {draw(st.sampled_from(TOML_VALUES))}")
        elif op == "section":
            j = draw(st.sampled_from(SECTION_LINES[name]))
            lines[j] = draw(st.sampled_from(
                ["[study]", "[[study]]", "[costs]", "[[bearing]]", "[[machine]]", "[policy]",
                 "[[variant]]", "[stores.B1]", "[crews]", "[life]", "[[group]]", "[x]", "[["]))
        elif op == "raw":
            lines.insert(i, draw(st.sampled_from(
                ["\ufeff", "= 1", "x = ", "[", "'''", '"""', "\t\x00", "a.b.c.d = 1",
                 '[[variant]]\nname = "v"\nset = { "machine[-1].count" = 2 }',
                 '[[variant]]\nname = "v"\nset = { "policy.interval" = "-3 h" }',
                 '[[variant]]\nname = "v"\nset = { "nope.nope" = 1 }',
                 '[[variant]]\nname = "v"\ndescription = 7\nset = { "costs.failure" = 1 }'])))
    return "\n".join(lines) + "\n", bool(refused & set(lines))


def _assert_promise(args: Sequence[str], cwd: Path) -> tuple[int, str]:
    """Exit 0, or exit 2 with one error line last; no bare numpy warnings either way."""
    code, _, err = run_cli(args, cwd)
    lines = err.splitlines()
    assert code in (0, 2), f"fleetsim {' '.join(args)}: exit {code}: {err[-500:]!r}"
    for line in lines:
        assert not re.search(r"encountered in|RuntimeWarning|Traceback", line), (
            f"fleetsim {' '.join(args)}: a bare warning or traceback on stderr: {line!r}")
    if code == 2:
        errors = [ln for ln in lines if ln.startswith("fleetsim: error: ")]
        assert len(errors) == 1 and lines[-1] == errors[0], (
            f"fleetsim {' '.join(args)}: expected one error line, got {err[-800:]!r}")
    return code, err


@contextlib.contextmanager
def _in_tmp(text: str, name: str = "fuzz.toml",
            data: bytes | None = None) -> Iterator[tuple[Path, Path]]:
    """A fresh folder holding the file; removed afterwards."""
    with tempfile.TemporaryDirectory(prefix="fleetsim-fuzz-") as folder:
        tmp = Path(folder)
        path = tmp / name
        if data is not None:
            path.write_bytes(data)
        else:
            path.write_text(text, encoding="utf-8", errors="surrogatepass")
        yield tmp, path


# --- scenarios ------------------------------------------------------------------------
@fuzz(300)
@given(hostile_scenarios())
def test_check_on_hostile_scenarios(case: tuple[str, bool]) -> None:
    text, must_refuse = case
    with _in_tmp(text) as (tmp, path):
        code, err = _assert_promise(["check", str(path)], tmp)
    assert code == 2 or not must_refuse, f"a bad quantity accepted:\n{text}"


@fuzz(30)
@given(hostile_scenarios(base="tiny"))
def test_run_on_hostile_scenarios(case: tuple[str, bool]) -> None:
    text, must_refuse = case
    with _in_tmp(text) as (tmp, path):
        code, _ = _assert_promise(
            ["run", str(path), "-n", "2", "--quiet", "--out", str(tmp / "r")], tmp)
    assert code == 2 or not must_refuse, f"a bad quantity accepted:\n{text}"


# --- records files --------------------------------------------------------------------
RECORDS = (ROOT / "scenarios" / "records" / "pump_bearings.csv").read_text(encoding="utf-8")
CELLS = ["", " ", "-1", "0", "nan", "inf", "-inf", "1e309", "1e-320", "x", "1,5", '"', '""',
         "failed", "removed-while-good", "in-service", "interval", "M-01", "\x00", "é",
         "9**9**9", "x" * 140_000, "1" * 400, "true"]


@st.composite
def hostile_records(draw: st.DrawFn) -> bytes:
    lines = RECORDS.splitlines()
    head = [i for i, ln in enumerate(lines) if not ln.startswith("#")][0]
    for _ in range(draw(st.integers(1, 3))):
        op = draw(st.sampled_from(["cell", "cell", "cell", "header", "drop", "extra", "cut"]))
        if len(lines) <= head + 1:
            break
        i = draw(st.integers(head + 1, len(lines) - 1))
        cells = lines[i].split(",")
        if op == "cell":
            cells[draw(st.integers(0, len(cells) - 1))] = draw(st.sampled_from(CELLS))
            lines[i] = ",".join(cells)
        elif op == "header":
            names = lines[head].split(",")
            names[draw(st.integers(0, len(names) - 1))] = draw(st.sampled_from(
                ["", "Hours", "hourz", "outcome", "x", "hours_from"]))
            lines[head] = ",".join(names)
        elif op == "drop":
            lines[i] = ""
        elif op == "extra":
            lines[i] += "," + draw(st.sampled_from(CELLS))
        else:
            lines = lines[: head + draw(st.integers(0, 3))]
    data = ("\n".join(lines) + "\n").encode("utf-8", "surrogatepass")
    prefix = draw(st.sampled_from([b"", b"", b"\xef\xbb\xbf", b"\xff\xfe", b"\x80"]))
    return prefix + data


@fuzz(90)
@given(hostile_records(), st.sampled_from([[], ["--group-by", "position"],
                                           ["--catalog-l10", "40000 h", "--group-by", "bearing"]]))
def test_fit_on_hostile_records(data: bytes, options: list[str]) -> None:
    with _in_tmp("", "records.csv", data) as (tmp, path):
        _assert_promise(["fit", str(path), *options], tmp)


# --- option sets ----------------------------------------------------------------------
OPTION_VALUES = ["30,7 kN", "9**9**9 kN", "1e300", "1e-300", "-1", "0", "inf", "nan", "", " ",
                 "1e999 kN", "1e-300 N", "1e300 N", "1480 rpm", "1e-300 rpm", "2e7 rpm", "3 kN",
                 "1 year", "1e308 h", "x", "1,5", "KN", "0.5", "2", "1e5"]
LIFE_OPTIONS = ["--dynamic-rating", "--static-rating", "--radial-load", "--axial-load",
                "--speed", "--reliability", "--at", "--application-factor",
                "--rotation-factor", "--viscosity-ratio", "--contamination", "--fatigue-limit"]
LIFE_BASE = ["life", "--type", "ball", "--dynamic-rating", "30.7 kN", "--static-rating",
             "19 kN", "--radial-load", "3.2 kN", "--speed", "1480 rpm"]
SIZE_BASE = ["size", "--type", "ball", "--load", "3 kN", "--speed", "1480 rpm", "--life",
             "20000 h", "--reliability", "0.9"]
SIZE_OPTIONS = ["--load", "--speed", "--life", "--reliability", "--application-factor"]
RUN_OPTIONS = {
    "--replications": ["-1", "0", "1e3", "9999999999", "x"],
    "--seed": ["-1", "1.5", "x", "-99999999999999999999999"],
    "--workers": ["-1", "100000", "x"],
    "--cluster": ["", "bogus", "tcp://", "tcp://host", "local:1", "tcp://a b:1"],
    "--engine": ["x", ""],
    "--vary": ["policy.interval=0:1e308:1e-308 h", "policy.interval=1e999:1e999:1 h",
               "policy.interval=9**9**9 h", "machine[-1].count=2",
               "=", "policy.interval=", "nope.nope=1", "policy.interval=1:0:1 h",
               "policy.interval=" + "[" * 60 + "]" * 60],
}


QUANTITY_OPTIONS = {"--dynamic-rating", "--static-rating", "--radial-load", "--axial-load",
                    "--speed", "--at", "--fatigue-limit", "--load", "--life"}
#: Option values that are a valid quantity of some kind (the rest must be refused).
VALID_QUANTITIES = {"1480 rpm", "3 kN", "1 year", "1e-300 N"}


def _must_refuse(args: list[str]) -> bool:
    """A quantity option holds a value that is no quantity of any kind."""
    bad = set(OPTION_VALUES) - VALID_QUANTITIES
    return any(a in QUANTITY_OPTIONS and v in bad for a, v in zip(args, args[1:], strict=False))


def _with(args: list[str], option: str, value: str) -> list[str]:
    out = list(args)
    if option in out:
        out[out.index(option) + 1] = value
    else:
        out += [option, value]
    return out


@fuzz(100)
@given(st.lists(st.tuples(st.sampled_from(LIFE_OPTIONS), st.sampled_from(OPTION_VALUES)),
                min_size=1, max_size=3))
def test_life_with_hostile_options(changes: list[tuple[str, str]]) -> None:
    args = LIFE_BASE
    for option, value in changes:
        args = _with(args, option, value)
    code, _ = _assert_promise(args, Path(tempfile.gettempdir()))
    assert code == 2 or not _must_refuse(args), f"accepted: fleetsim {' '.join(args)}"


@fuzz(50)
@given(st.lists(st.tuples(st.sampled_from(SIZE_OPTIONS), st.sampled_from(OPTION_VALUES)),
                min_size=1, max_size=3))
def test_size_with_hostile_options(changes: list[tuple[str, str]]) -> None:
    args = SIZE_BASE
    for option, value in changes:
        args = _with(args, option, value)
    code, _ = _assert_promise(args, Path(tempfile.gettempdir()))
    assert code == 2 or not _must_refuse(args), f"accepted: fleetsim {' '.join(args)}"


@fuzz(40)
@given(st.sampled_from(sorted(RUN_OPTIONS)).flatmap(
    lambda o: st.tuples(st.just(o), st.sampled_from(RUN_OPTIONS[o]))))
def test_run_and_sweep_with_hostile_options(change: tuple[str, str]) -> None:
    option, value = change
    command = "sweep" if option == "--vary" else "run"
    with _in_tmp(TINY) as (tmp, path):
        args = [command, str(path), "-n", "2", "--quiet", "--out", str(tmp / "r"), option, value]
        code, _ = _assert_promise(args, tmp)
    assert code == 2, f"fleetsim {' '.join(args)}: accepted"
