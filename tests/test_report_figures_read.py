"""Figures that read in seconds: the life figure's range, axis and tick labels."""

from __future__ import annotations

import numpy as np

from fleetsim.report.figures import life_range, plot_life_distributions
from fleetsim.scenario import load_scenario


def test_life_range_ends_at_the_longest_median_life_and_goes_log_when_lives_differ() -> None:
    sc = load_scenario("scenarios/conveyor.toml")
    lives = [p.life for m in sc.machines for p in m.positions]
    start, end, log_axis = life_range(lives)
    l10 = [float(x.life_at_reliability(0.9)) for x in lives]
    l50 = [float(x.life_at_reliability(0.5)) for x in lives]
    assert end == max(l50)
    # The axis is logarithmic exactly when the L10 lives differ by more than a factor of 4.
    assert log_axis == (max(l10) > 4 * min(l10))
    assert start == (min(l10) / 5 if log_axis else 0.0)


def test_life_figure_tick_labels_do_not_run_together() -> None:
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    sc = load_scenario("scenarios/pump_stations.toml")
    fig = Figure(figsize=(8.5, 4.2), layout="constrained")
    ax = plot_life_distributions(sc, fig.add_subplot())
    canvas = FigureCanvasAgg(fig)
    canvas.draw()
    renderer = canvas.get_renderer()
    boxes = [t.get_window_extent(renderer) for t in ax.get_xticklabels()
             if t.get_text() and t.get_visible()]
    lo, hi = ax.get_xlim()
    boxes = [b for b, t in zip(boxes, ax.get_xticks(), strict=False) if lo <= t <= hi] or boxes
    boxes.sort(key=lambda b: b.x0)
    assert len(boxes) >= 3
    assert all(a.x1 < b.x0 for a, b in zip(boxes, boxes[1:], strict=False))
    assert np.isfinite(lo) and hi < 700_000  # not the 700,000 h of the old figure


def test_a_flat_system_reliability_is_left_out_and_a_falling_one_drawn() -> None:
    import pandas as pd

    from fleetsim.report.figures import reliability_informative

    class _Result:  # the two attributes reliability_curves reads
        horizon_h = 1000.0

        def __init__(self, first_down: list[float]) -> None:
            self.replications = pd.DataFrame({"fleet_first_down_h": first_down})

        def keys(self, prefix: str) -> list[str]:
            return []

    assert not reliability_informative(_Result([float("nan")] * 20))  # no down event at all
    assert reliability_informative(_Result([float("nan")] * 19 + [500.0]))  # 1 in 20 went down
