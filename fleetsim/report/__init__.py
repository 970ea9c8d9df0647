"""The study report: figures, tables, the HTML page and the machine-readable summary.

Reads :class:`~fleetsim.study.result.StudyResult` objects and knows nothing of
the simulation's internals. Figure functions draw on the axes they are given
(``ax=None`` makes new ones) and return them; :func:`write_report` writes a
whole report directory atomically. Every report carries
:data:`fleetsim.SAFETY_CAUTION`.
"""

from fleetsim.report.executive import default_executive_summary
from fleetsim.report.figures import (
    plot_cost_per_year,
    plot_cost_rate_sweep,
    plot_life_distributions,
    plot_system_reliability,
    reliability_curves,
)
from fleetsim.report.fleet_figures import (
    plot_availability,
    plot_downtime_by_cause,
    plot_inspections,
    plot_spares,
)
from fleetsim.report.headline import (
    Headline,
    difference,
    has_inspections,
    headline_figures,
    no_down_probability,
    recommended_index,
)
from fleetsim.report.palette import CAUSE_COLOURS, COLOURS, report_style
from fleetsim.report.tables import headline_table, summary_table, write_tables
from fleetsim.report.writer import ReportPaths, write_report

__all__ = [
    "CAUSE_COLOURS",
    "COLOURS",
    "Headline",
    "ReportPaths",
    "default_executive_summary",
    "difference",
    "has_inspections",
    "headline_figures",
    "headline_table",
    "no_down_probability",
    "plot_availability",
    "plot_cost_per_year",
    "plot_cost_rate_sweep",
    "plot_downtime_by_cause",
    "plot_inspections",
    "plot_life_distributions",
    "plot_spares",
    "plot_system_reliability",
    "recommended_index",
    "reliability_curves",
    "report_style",
    "summary_table",
    "write_report",
    "write_tables",
]
