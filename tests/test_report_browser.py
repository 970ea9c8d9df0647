"""The demo reports in a real browser: on screen and printed to PDF on A4 and Letter.

For the run, sweep and ``size --scenario`` report of each shipped demo, headless
Chromium (Debian's ``chromium`` package, driven through Playwright) opens the
page, and ``tests/browser_check.py`` checks that

* no image is broken (every ``<img>`` decodes),
* every table fits the printable width of the page (A4 and Letter less the
  12 mm print margins) and none scrolls sideways,
* no figure is split across pages in the PDF (each figure image is drawn on
  exactly one page).

The screenshots (screen, print A4, print Letter) and the PDFs are kept in
``reports/browser-check/<demo>-<kind>/browser/`` for a person to look at.

In CI (``CI`` set) the browser must be there and this test never skips; on a
developer's machine without Chromium it is skipped.
"""

from __future__ import annotations

import os
import shutil
import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).parent))
from browser_check import check_page, chromium_path  # noqa: E402

from fleetsim.cli import main  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
KEEP = ROOT / "reports" / "browser-check"

DEMOS = {
    "pump": ("scenarios/pump_stations.toml", "policy.interval=20000,40000 h"),
    "conveyor": ("scenarios/conveyor.toml", "policy.interval=25000,45000 h"),
}


def _commands(demo: str, out: Path) -> dict[str, list[str]]:
    scenario, vary = DEMOS[demo]
    scenario = str(ROOT / scenario)
    return {
        "run": ["run", scenario, "-n", "4", "--out", str(out / "run"), "--quiet", "--pdf"],
        "sweep": ["sweep", scenario, "--vary", vary, "-n", "4", "--out", str(out / "sweep"),
                  "--quiet"],
        "size": ["size", "--scenario", scenario, "--reliability", "0.9", "--life", "5 years",
                 "--catalog", str(ROOT / "scenarios" / "catalogue.csv"), "-n", "4",
                 "--out", str(out / "size"), "--quiet"],
    }


@pytest.fixture(scope="module")
def browser() -> None:
    if chromium_path() is None:
        if os.environ.get("CI"):
            pytest.fail("CI must have chromium installed (see .ci/); this test may not skip there")
        pytest.skip("chromium is not installed (apt-get install chromium)")
    if not os.environ.get("CI"):
        pytest.importorskip("playwright")


@pytest.mark.parametrize("demo", sorted(DEMOS))
def test_demo_reports_render_and_print(demo: str, browser: None, tmp_path: Path, capsys) -> None:
    commands = _commands(demo, tmp_path)
    for kind, argv in commands.items():
        assert main(argv) == 0, f"{demo} {kind}: {capsys.readouterr().err}"
    capsys.readouterr()
    # --pdf printed the run's report with the same browser
    assert (tmp_path / "run" / "report.pdf").read_bytes()[:5] == b"%PDF-"
    problems = []
    for kind in commands:
        report = tmp_path / kind
        keep = KEEP / f"{demo}-{kind}"
        shutil.rmtree(keep, ignore_errors=True)
        shutil.copytree(report, keep)
        result = check_page(keep / "report.html", keep / "browser", kind)
        assert result.images >= 3, f"{demo} {kind}: only {result.images} images"
        assert all(p.stat().st_size > 10_000 for p in result.screenshots)
        assert all(n >= 1 for n in result.pages.values())
        problems += [f"{demo} {kind}: {p}" for p in result.problems]
    assert not problems, "\n".join(problems)


def test_the_checker_sees_a_wide_table_a_broken_image_and_a_split_figure(
    browser: None, tmp_path: Path
) -> None:
    # The checks must be able to fail: a page with a table too wide for A4, an
    # image that does not decode and a figure taller than a page.
    import base64
    import io

    from matplotlib.figure import Figure

    fig = Figure(figsize=(4, 14))
    fig.add_subplot().plot([0, 1], [0, 1])
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=60)
    tall = base64.b64encode(buf.getvalue()).decode()
    cells = "".join(f"<td>{'x' * 40}{k}</td>" for k in range(8))
    html = tmp_path / "bad.html"
    html.write_text(
        "<html><head><style>@page { margin: 12mm } img { width: 100% }</style></head><body>"
        f"<table><tr>{cells}</tr></table>"
        "<img alt='broken' src='data:image/png;base64,AAAA'>"
        f"<figure><img alt='tall' src='data:image/png;base64,{tall}'></figure>"
        "</body></html>",
        encoding="utf-8",
    )
    result = check_page(html, tmp_path / "shots", "bad")
    assert result.broken_images == ["broken"]
    assert any("A4" in w for w in result.wide_tables)
    assert any("A4" in s for s in result.split_figures)
