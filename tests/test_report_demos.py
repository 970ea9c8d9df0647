"""The report of each shipped demo scenario: every figure present and decodable."""

from __future__ import annotations

import base64
import io
import json
from html.parser import HTMLParser
from pathlib import Path

import matplotlib.image as mpimg
import pytest

from fleetsim.cli import main


class _Images(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.srcs: list[str] = []

    def handle_starttag(self, tag, attrs):  # type: ignore[no-untyped-def]
        if tag == "img":
            self.srcs.append(dict(attrs).get("src") or "")


@pytest.mark.parametrize(
    "demo, figures",
    [
        ("scenarios/pump_stations.toml",
         {"life", "cost_per_year", "downtime_by_machine", "downtime_by_cause", "spares",
          "inspections"}),
        ("scenarios/conveyor.toml",
         {"life", "cost_per_year", "downtime_by_machine", "downtime_by_cause", "spares"}),
    ],
)
def test_demo_report_is_complete(demo: str, figures: set[str], tmp_path: Path, capsys) -> None:
    out = tmp_path / "report"
    assert main(["run", demo, "--replications", "6", "--out", str(out), "--quiet"]) == 0
    capsys.readouterr()
    written = {p.stem for p in (out / "figures").glob("*.png")}
    assert figures <= written
    parser = _Images()
    html = (out / "report.html").read_text(encoding="utf-8")
    parser.feed(html)
    assert len(parser.srcs) == len(written)
    for src in parser.srcs:
        assert src.startswith("data:image/png;base64,")
        image = mpimg.imread(io.BytesIO(base64.b64decode(src.split(",", 1)[1])), format="png")
        assert image.shape[0] > 100 and image.shape[1] > 100
    assert "qualified, licensed engineer" in html
    summary = json.loads((out / "summary.json").read_text())
    assert "qualified, licensed engineer" in json.dumps(summary)


def test_life_figure_shows_catalogue_and_field_life() -> None:
    # The pump demo's hill-station pump-side positions carry field_factor = 0.7: the
    # figure draws their catalogue life (dashed) beside the field life, whose
    # reliability at any age is lower (the field curve is the catalogue one
    # stretched by 0.7 in time).
    import numpy as np

    from fleetsim.report import plot_life_distributions
    from fleetsim.scenario import load_scenario

    sc = load_scenario("scenarios/pump_stations.toml")
    ax = plot_life_distributions(sc)
    dashed = [ln for ln in ax.get_lines() if ln.get_gid() == "catalogue"]
    assert dashed
    field_positions = [p for m in sc.machines for p in m.positions if p.field_factor != 1.0]
    life = field_positions[0].life
    catalogue = life.scaled(1 / field_positions[0].field_factor)
    t = np.array([20_000.0, 60_000.0])
    assert np.all(catalogue.reliability(t) > life.reliability(t))
    labels = [t.get_text() for t in ax.get_legend().get_texts()]
    assert any("catalogue life" in s for s in labels)
