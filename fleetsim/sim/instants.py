"""When two calendar instants are one: the engines' single tolerance for ties.

Both engines compute the same instants by different sums of the same hours
(the discrete-event engine adds the operating hours of every run between two
events, the vectorised engine those of its steps), so an instant that is a
whole hour in exact arithmetic can come out a few units in the last place on
either side of it: 8765.999999999998 in one engine, 8766.0 in the other. With
whole-hour stops, intervals and lead times this happens often enough to put a
visit, a restart or a year end on different sides of each other.

Every comparison of two computed instants that decides *which comes first*
(a visit or block date against a restart or the start of planned work, a
failure or due age against the clock, an age against an opportunistic or skip
threshold, an event against a year end or the horizon, two block dates)
therefore treats instants within :data:`TIE_H` of each other as equal, and
resolves the tie by the rule the comparison documents. :data:`TIE_H` (3.6
microseconds) is far below any duration a plan is written in, and well above
the rounding of the engines' sums over a planning horizon: a unit in the last
place is about 2e-12 h at 10,000 h and 1.2e-10 h at a century (876,600 h),
and a replication's sums add a few of those.
"""

from __future__ import annotations

#: Two calendar (or operating) instants closer than this, in hours, are the same instant.
TIE_H = 1e-9


def last_instant(horizon_h: float) -> float:
    """The instant from which events are at the horizon, in hours: ``horizon_h − TIE_H``.

    Neither engine processes an event at the horizon, nor one a rounding before
    it; what accrues over time (hours down, on the shelf, operating) still
    accrues up to the horizon itself.
    """
    return horizon_h - TIE_H
