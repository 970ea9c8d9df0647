"""Inspection visits counted in bulk between a lane's events (``fleetsim.sim.visits``).

The vectorised engine steps only at the visit that finds a defect; the visits
before it are counted by arithmetic. Each function is held here to a plain
visit-by-visit loop that tests the window the way the discrete-event engine
does at each visit (defect age <= clock < failure age, the clock then being
age + share · (visit − now)), on generated lanes; the engines are held to each
other on condition-monitored fleets in ``tests/test_engine_identity.py``.
"""

from __future__ import annotations

import math

import numpy as np
from hypothesis import event, given, settings
from hypothesis import strategies as st

from fleetsim.sim.visits import detection_times, visits_before, window_index, window_visits

hours = st.floats(0.0, 5e4, allow_nan=False)


def _visits(next_visit: float, every: float, limit: float) -> list[float]:
    out, v, j = [], next_visit, 0
    while v < limit:
        out.append(v)
        j += 1
        v = next_visit + j * every
    return out


@settings(max_examples=300, deadline=None)
@given(nv=hours, every=st.floats(0.5, 5e3), span=st.floats(-100.0, 6e4))
def test_visits_before_counts_the_visits_of_a_loop(nv: float, every: float, span: float) -> None:
    limit = nv + span
    n = visits_before(np.array([nv]), every, np.array([limit]))
    assert n[0] == len(_visits(nv, every, limit))


@settings(max_examples=300, deadline=None)
@given(t=hours, lead=st.floats(0.0, 3e3), every=st.floats(1.0, 2e3), age=st.floats(0.0, 3e4),
       to_defect=st.floats(-2e4, 3e4), pf=st.floats(0.0, 2e4), share=st.floats(0.05, 1.0),
       looks=st.integers(0, 5), needed=st.integers(1, 12), span=st.floats(0.0, 6e4))
def test_windows_and_detections_are_those_of_a_visit_by_visit_loop(
        t: float, lead: float, every: float, age: float, to_defect: float, pf: float,
        share: float, looks: int, needed: int, span: float) -> None:
    nv = t + lead
    defect = max(age + to_defect, 0.0)
    fail = max(defect + pf, age + 1e-3)  # (a position inside the horizon has not failed)
    lanes = np.array([t]), np.array([nv])
    j_in, j_out = window_index(lanes[0], lanes[1], every, np.array([[defect]]),
                               np.array([[fail]]), np.array([[age]]), share)
    # the loop: every visit up to a limit, the window tested on the clock at the visit
    limit = nv + span
    seen, found_at, k = 0, math.inf, looks
    for v in _visits(nv, every, limit):
        clock = age + share * (v - t)
        if defect <= clock < fail:
            seen += 1
            k += 1
            if k >= needed and found_at == math.inf:
                found_at = v
    n = visits_before(lanes[1], every, np.array([limit]))
    got = window_visits(n, j_in, j_out)[0, 0]
    # (a visit within rounding of a window's edge may fall either side)
    edge = min(abs(age + share * (v - t) - x) for v in _visits(nv, every, limit) or [math.inf]
               for x in (defect, fail)) if n[0] else math.inf
    if edge > 1e-6:
        assert got == seen
    det = detection_times(lanes[1], every, j_in, j_out, np.array([[float(looks)]]),
                          np.array([[float(needed)]]), np.array([[True]]))[0]
    event("found" if found_at < math.inf else "not found")
    if found_at < math.inf and edge > 1e-6:
        assert det == found_at
    elif edge > 1e-6:
        assert det >= limit  # not found before the limit (maybe later)
