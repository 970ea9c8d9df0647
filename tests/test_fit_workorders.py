"""``fleetsim fit`` on work-order exports: XLSX, mapped columns and outcome words, dates → hours.

The check is an identity: the same bearing lives written once as operating
hours (CSV) and once as a work-order workbook with dates (calendar hours =
operating hours / running share, written by openpyxl) give the same fit.
"""

from __future__ import annotations

import json
from datetime import datetime, timedelta
from pathlib import Path

import numpy as np
import pytest
from numpy.testing import assert_allclose

from fleetsim.cli import main
from fleetsim.errors import InputError
from fleetsim.fit import read_records
from fleetsim.fit.records import DateRule

START = datetime(2019, 1, 1)
AS_OF = datetime(2026, 6, 30)
SHARE = 0.8
WORDS = {"failed": "Breakdown", "removed-while-good": "Planned", "still-running": "In service"}


def run(args: list[str], capsys: pytest.CaptureFixture[str]) -> tuple[int, str, str]:
    code = main(args)
    out = capsys.readouterr()
    return code, out.out, out.err


def _lives(seed: int = 3, n: int = 40) -> list[tuple[float, str]]:
    rng = np.random.default_rng(np.random.SeedSequence(seed))
    life = 25_000.0 * rng.weibull(1.4, n)
    cens = rng.uniform(0.0, 40_000.0, n)
    out = []
    for i, (t, c) in enumerate(zip(life, cens, strict=True)):
        if t <= c:
            out.append((float(t), "failed"))
        elif i % 2:
            out.append((float(c), "removed-while-good"))
        else:  # still running today: fitted so that it has run c operating hours by AS_OF
            out.append((float(c), "still-running"))
    return out


def _write(tmp: Path, lives: list[tuple[float, str]]) -> tuple[Path, Path]:
    from openpyxl import Workbook

    csv = tmp / "hours.csv"
    csv.write_text(
        "machine,position,hours,outcome\n"
        + "".join(f"P-1,DE,{h!r},{o}\n" for h, o in lives), encoding="utf-8"
    )
    wb = Workbook()
    ws = wb.active
    ws.title = "orders"
    ws.append(["Equipment", "Location", "Installed", "Closed", "Type"])
    for h, o in lives:
        cal = timedelta(hours=h / SHARE)
        if o == "still-running":
            ws.append(["P-1", "DE", AS_OF - cal, None, WORDS[o]])
        else:
            ws.append(["P-1", "DE", START, START + cal, WORDS[o]])
    xlsx = tmp / "orders.xlsx"
    wb.save(xlsx)
    return csv, xlsx


MAP = ["--column", "Equipment=machine", "--column", "Location=position",
       "--column", "Installed=fitted_on", "--column", "Closed=removed_on", "--column", "Type=outcome",
       "--outcome-word", "Breakdown=failed", "--outcome-word", "Planned=removed-while-good",
       "--outcome-word", "In service=still-running"]  # fmt: skip


def test_work_order_workbook_fits_like_the_hours(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    csv, xlsx = _write(tmp_path, _lives())
    code, out_h, _ = run(["fit", str(csv), "--json"], capsys)
    assert code == 0
    code, out_d, _ = run(["fit", str(xlsx), *MAP, "--running-share", str(SHARE),
                          "--as-of", AS_OF.date().isoformat(), "--json"], capsys)  # fmt: skip
    assert code == 0
    a, b = json.loads(out_h)["groups"][0], json.loads(out_d)["groups"][0]
    assert a["records"] == b["records"]
    for ca, cb in zip(a["candidates"], b["candidates"], strict=True):
        assert ca["model"] == cb["model"]
        assert_allclose(cb["distribution"]["scale_h"], ca["distribution"]["scale_h"], rtol=1e-6)
        assert_allclose(cb["distribution"]["shape"], ca["distribution"]["shape"], rtol=1e-6)


def test_dates_need_a_running_share_and_bad_cells_are_named(tmp_path: Path) -> None:
    _, xlsx = _write(tmp_path, _lives(n=8))
    cols = {"Equipment": "machine", "Location": "position", "Installed": "fitted_on",
            "Closed": "removed_on", "Type": "outcome"}  # fmt: skip
    words = {v: k for k, v in WORDS.items()}
    with pytest.raises(InputError, match=r"orders.xlsx: sheet 'orders', row 2, column fitted_on.*running share"):
        read_records(xlsx, columns=cols, outcome_words=words)
    recs = read_records(xlsx, columns=cols, outcome_words=words,
                        dates=DateRule({"P-1": SHARE}, None, AS_OF.date()))  # fmt: skip
    assert len(recs.table) == 8
    with pytest.raises(InputError, match="did you mean"):
        read_records(xlsx, columns={"Equipment": "machine"})
