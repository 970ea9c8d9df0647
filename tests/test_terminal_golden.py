"""Golden output: the pump demo's terminal summary at ``COLUMNS=100``.

The stored text, ``tests/golden/pump_run_columns100.txt``, was read by a
person before it was stored, and checked for what a user needs from it:

* the recommendation (policy view), its saving and the variants that cannot
  be told apart from it come first, before any table, and say what they are
  measured against (the baseline);
* no line is longer than 100 characters (the table's variant columns go to a
  second block that repeats the figure names, headings wrap in their column);
* money has thousands separators and no scientific notation; every mean and
  its interval carry the same digits, set by the interval's width (e.g.
  ``0.110 [0.062, 0.158]``, ``10,500 [9,900, 11,200]``); shares near 100 %
  keep the digits their interval supports and are not rounded to 100 (``99.9925``);
* stock advice gives the reorder point s and order-up-to level S to set;
* the policy/budget table's notes that would pass 100 characters continue on
  an indented line;
* the safety caution closes the output.

The numbers come from the simulation with a fixed seed and 20 replications,
so a change to the engines or the random streams changes them: look at the
new output, then store it with ``FLEETSIM_UPDATE_GOLDEN=1``.
"""

from __future__ import annotations

import os
from pathlib import Path

from fleetsim.cli import main

ROOT = Path(__file__).resolve().parents[1]
GOLDEN = Path(__file__).parent / "golden" / "pump_run_columns100.txt"


def test_pump_demo_terminal_summary_at_100_columns(tmp_path: Path, capsys, monkeypatch) -> None:
    monkeypatch.setenv("COLUMNS", "100")
    out = tmp_path / "report"
    argv = ["run", str(ROOT / "scenarios" / "pump_stations.toml"), "-n", "20", "--out", str(out),
            "--quiet"]
    assert main(argv) == 0
    text = capsys.readouterr().out.replace(str(out / "report.html"), "<report>/report.html")
    assert all(len(line) <= 100 for line in text.splitlines())
    if os.environ.get("FLEETSIM_UPDATE_GOLDEN"):
        GOLDEN.write_text(text, encoding="utf-8")
    assert text == GOLDEN.read_text(encoding="utf-8")
