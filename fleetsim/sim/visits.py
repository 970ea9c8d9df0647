"""Inspection visits between a lane's events, taken in bulk by the vectorised engine.

An inspection round visits a unit every ``every_h`` calendar hours; a visit
that finds nothing changes only counters (the visit itself, and one more
look at each defect inside its P-F window). Between two events of a lane
(a failure, a due date, planned work, a detection) the unit runs, so its
operating clock is a straight line in calendar time and which visits fall
inside a position's window is arithmetic: visit j (j = 0 at the lane's next
visit, at ``next_visit + j · every_h``) is inside when the clock then is at
least the defect's age and below the failure's, as the discrete-event
engine tests it visit by visit.

So the engine makes a step only at the visit that finds a defect
(:func:`detection_times`) and counts the visits before it in bulk
(:func:`visits_before`, :func:`window_visits`).
"""

from __future__ import annotations

import numpy as np

INF = np.inf


def window_index(t: np.ndarray, next_visit: np.ndarray, every_h: float, defect_age: np.ndarray,
                 fail_age: np.ndarray, age: np.ndarray, share: float
                 ) -> tuple[np.ndarray, np.ndarray]:
    """Per position, the visit index at which it enters its P-F window and the one at
    which it has left it (first visit at or past the failure), for a unit that runs
    from calendar hour ``t`` (per lane) at ``share`` operating hours an hour.

    ``defect_age``, ``fail_age`` and ``age`` are operating hours, shape (lanes,
    positions); ``next_visit`` is the calendar hour of visit 0 of each lane
    (not before ``t``). Both indexes are at least 0.
    """
    back = (t - next_visit)[:, None]  # hours from visit 0 back to now (<= 0)
    j_in = np.ceil((back + (defect_age - age) / share) / every_h)
    j_out = np.ceil((back + (fail_age - age) / share) / every_h)
    return np.maximum(j_in, 0.0), np.maximum(j_out, 0.0)


def detection_times(next_visit: np.ndarray, every_h: float, j_in: np.ndarray, j_out: np.ndarray,
                    looks: np.ndarray, looks_needed: np.ndarray, watched: np.ndarray
                    ) -> np.ndarray:
    """Calendar hour of the first visit that finds a defect, per lane (inf: none).

    A ``watched`` position (inspected by this round, not yet detected) is found at the
    visit that brings its looks inside the window to ``looks_needed``, if that
    visit is still inside the window.
    """
    need = np.maximum(looks_needed - looks, 1.0)
    j_found = j_in + need - 1.0
    hit = watched & (j_found < j_out)
    at = np.where(hit, next_visit[:, None] + j_found * every_h, INF)
    return at.min(axis=1) if at.shape[1] else np.full(at.shape[0], INF)


def visits_before(next_visit: np.ndarray, every_h: float, limit: np.ndarray) -> np.ndarray:
    """How many visits ``next_visit + j · every_h`` (j = 0, 1, ...) fall before ``limit``."""
    with np.errstate(invalid="ignore"):
        n = np.maximum(np.ceil((limit - next_visit) / every_h), 0.0)
    n = np.where(np.isfinite(n), n, 0.0)
    # (the division rounds: make the count exact for the visit times as computed)
    n -= (n > 0) & (next_visit + (n - 1.0) * every_h >= limit)
    n += next_visit + n * every_h < limit
    return n


def window_visits(n: np.ndarray, j_in: np.ndarray, j_out: np.ndarray) -> np.ndarray:
    """Of the first ``n`` visits (per lane), how many fall inside each position's window."""
    return np.maximum(np.minimum(n[:, None], j_out) - j_in, 0.0)
