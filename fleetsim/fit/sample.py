"""A censored life sample: failures, suspensions and failures found at inspection.

Field records of bearings give three kinds of observation, all in operating
hours since the bearing was fitted:

* an exact failure at ``t`` (the failure was seen when it happened);
* a suspension (right censoring) at ``t``: the bearing was removed while
  still good, or is still running, so its life is longer than ``t``;
* an interval-censored failure in ``(a, b]``: an inspection at ``b`` found
  it failed and the previous inspection at ``a`` found it good. ``a = 0``
  means it was found failed at its first inspection.

:class:`CensoredSample` holds these as arrays and checks them; it knows
nothing of files.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass, field

import numpy as np

from fleetsim.errors import InputError


def _array(values: Iterable[float] | np.ndarray, where: str) -> np.ndarray:
    out = np.asarray(list(values) if not isinstance(values, np.ndarray) else values, dtype=float)
    out = out.reshape(-1)
    if not np.all(np.isfinite(out)):
        raise InputError(where, "expected finite numbers of hours")
    return out


@dataclass(frozen=True, eq=False)
class CensoredSample:
    """Lives in operating hours with right and interval censoring.

    Attributes
    ----------
    failures_h
        Exact failure ages, hours (> 0).
    suspensions_h
        Ages of bearings removed while good or still running, hours (>= 0).
    interval_lower_h, interval_upper_h
        Failures found at inspection: the life lies in ``(lower, upper]``,
        hours, with ``0 <= lower < upper``.
    label
        A name for messages (the group or file).
    """

    failures_h: np.ndarray
    suspensions_h: np.ndarray = field(default_factory=lambda: np.empty(0))
    interval_lower_h: np.ndarray = field(default_factory=lambda: np.empty(0))
    interval_upper_h: np.ndarray = field(default_factory=lambda: np.empty(0))
    label: str = "records"

    def __post_init__(self) -> None:
        f = _array(self.failures_h, f"{self.label}: failures")
        s = _array(self.suspensions_h, f"{self.label}: suspensions")
        lo = _array(self.interval_lower_h, f"{self.label}: intervals")
        hi = _array(self.interval_upper_h, f"{self.label}: intervals")
        if np.any(f <= 0):
            raise InputError(f"{self.label}: failures", "expected failure ages > 0 h")
        if np.any(s < 0):
            raise InputError(f"{self.label}: suspensions", "expected ages >= 0 h")
        if lo.shape != hi.shape:
            raise InputError(f"{self.label}: intervals", "expected as many lower as upper ends")
        if np.any(lo < 0) or np.any(hi <= lo):
            raise InputError(
                f"{self.label}: intervals", "expected 0 <= hours_from < hours_to for every interval"
            )
        for name, arr in (
            ("failures_h", f),
            ("suspensions_h", s),
            ("interval_lower_h", lo),
            ("interval_upper_h", hi),
        ):
            arr.setflags(write=False)
            object.__setattr__(self, name, arr)

    @classmethod
    def from_arrays(
        cls,
        failures_h: Iterable[float],
        suspensions_h: Iterable[float] = (),
        intervals_h: Iterable[tuple[float, float]] = (),
        label: str = "records",
    ) -> CensoredSample:
        """Build a sample from failures, suspensions and ``(from, to)`` pairs, hours."""
        pairs = np.asarray(list(intervals_h), dtype=float).reshape(-1, 2)
        return cls(
            failures_h=np.asarray(list(failures_h), dtype=float),
            suspensions_h=np.asarray(list(suspensions_h), dtype=float),
            interval_lower_h=pairs[:, 0],
            interval_upper_h=pairs[:, 1],
            label=label,
        )

    # --- counts ---------------------------------------------------------------------------
    @property
    def n_exact(self) -> int:
        """Number of exact failures."""
        return int(self.failures_h.size)

    @property
    def n_intervals(self) -> int:
        """Number of failures found at inspection (interval censored)."""
        return int(self.interval_lower_h.size)

    @property
    def n_failures(self) -> int:
        """All failures: exact and found at inspection."""
        return self.n_exact + self.n_intervals

    @property
    def n_suspensions(self) -> int:
        """Number of suspensions (removed while good or still running)."""
        return int(self.suspensions_h.size)

    @property
    def n_records(self) -> int:
        """All observations; the n of AICc and BIC."""
        return self.n_failures + self.n_suspensions

    @property
    def has_intervals(self) -> bool:
        """True when some failures were found at inspection."""
        return self.n_intervals > 0

    @property
    def location_limit_h(self) -> float:
        """Upper limit of a Weibull location: the earliest age at which a failure is certain.

        The smallest exact failure age or the smallest ``hours_to`` of an
        interval; a location must stay strictly below it.
        """
        ends = np.concatenate([self.failures_h, self.interval_upper_h])
        return float(ends.min()) if ends.size else math.inf

    def failure_midpoints_h(self) -> np.ndarray:
        """Exact failures and interval midpoints, hours (for starting values and plots)."""
        mids = 0.5 * (self.interval_lower_h + self.interval_upper_h)
        return np.concatenate([self.failures_h, mids])

    def shifted(self, location_h: float) -> CensoredSample:
        """Ages measured from ``location_h``: for fitting with a fixed Weibull location.

        Suspensions at or below the location carry no information (the
        bearing could not have failed yet) and are dropped; interval lower
        ends below it become 0.
        """
        if not location_h < self.location_limit_h:
            raise InputError(
                "location",
                f"expected a location below the first failure ({self.location_limit_h:g} h), "
                f"got {location_h:g} h",
            )
        s = self.suspensions_h[self.suspensions_h > location_h] - location_h
        return CensoredSample(
            failures_h=self.failures_h - location_h,
            suspensions_h=s,
            interval_lower_h=np.maximum(self.interval_lower_h - location_h, 0.0),
            interval_upper_h=self.interval_upper_h - location_h,
            label=self.label,
        )
