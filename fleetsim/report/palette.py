"""The report's colours and plotting style: a small named palette of our own.

Every figure of :mod:`fleetsim.report.figures` draws inside
:func:`report_style`, a context manager that sets the style for the figures
made inside it and restores everything on exit: the library never changes
matplotlib's or seaborn's global settings.
"""

from __future__ import annotations

from collections.abc import Iterator
from contextlib import contextmanager
from typing import TYPE_CHECKING, Any

import matplotlib as mpl
from cycler import cycler  # matplotlib's own dependency, the documented way to build one

if TYPE_CHECKING:
    from matplotlib.typing import RcKeyType

#: Named colours (hex sRGB), chosen for contrast on white and in greyscale print.
COLOURS: dict[str, str] = {
    "harbour": "#23658a",  # deep blue: the main series
    "kiln": "#c0532f",  # brick orange: failures, unplanned work
    "moss": "#5d8a2f",  # green: the recommended variant
    "amber": "#d99a1e",  # yellow-orange: spares
    "heather": "#76569f",  # purple: crews
    "lagoon": "#2a9588",  # blue-green
    "clay": "#9a6b4f",  # brown
    "pewter": "#7f8b96",  # grey: reference lines, other variants
    "ink": "#1e2833",  # near-black: text and markers
}

#: Order in which series take colours.
SERIES: tuple[str, ...] = (
    "harbour",
    "kiln",
    "lagoon",
    "amber",
    "heather",
    "clay",
    "moss",
    "pewter",
)

#: Colour of each downtime cause (keys are the figure names of the causes).
CAUSE_COLOURS: dict[str, str] = {
    "downtime_crew_h": COLOURS["heather"],
    "downtime_spares_h": COLOURS["amber"],
    "downtime_repair_h": COLOURS["kiln"],
    "downtime_planned_h": COLOURS["harbour"],
}

#: Colour that marks the recommended variant, and the colour of the others.
RECOMMENDED = COLOURS["moss"]
OTHER = COLOURS["pewter"]

_RC: dict[RcKeyType, Any] = {
    "figure.dpi": 100,
    "savefig.dpi": 110,
    "font.size": 9.5,
    "axes.titlesize": 10.5,
    "axes.labelsize": 9.5,
    "legend.fontsize": 8.5,
    "legend.frameon": False,
    "axes.edgecolor": COLOURS["pewter"],
    "axes.labelcolor": COLOURS["ink"],
    "xtick.color": COLOURS["ink"],
    "ytick.color": COLOURS["ink"],
    "text.color": COLOURS["ink"],
    "axes.titleweight": "bold",
    "axes.titlelocation": "left",
    "lines.linewidth": 1.8,
    "svg.hashsalt": "fleetsim",
}


def series_colour(index: int) -> str:
    """Colour of the ``index``-th series (cycles through :data:`SERIES`)."""
    return COLOURS[SERIES[index % len(SERIES)]]


@contextmanager
def report_style() -> Iterator[None]:
    """Apply the report's style to figures made inside the block, then restore it.

    Uses ``seaborn.axes_style`` and ``matplotlib.rc_context``; nothing global
    is left changed on exit.
    """
    import seaborn as sns

    rc = dict(_RC)
    rc["axes.prop_cycle"] = cycler(color=[COLOURS[n] for n in SERIES])
    with sns.axes_style("whitegrid", {"grid.color": "#e3e6ea"}), mpl.rc_context(rc):
        yield
