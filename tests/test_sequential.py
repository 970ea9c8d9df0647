"""Sequential replications until the best is resolved (Kim & Nelson 2001, from memory).

Fixed-seed synthetic variants on common random numbers: each replication has a
shared component (the common random numbers) plus each variant's own noise, so
the paired differences are precise. The constants of the procedure are checked
against their closed form.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from fleetsim.errors import InputError
from fleetsim.study.sequential import constants, until_resolved


def _variants(means: list[float], sd_own: float = 1.0, sd_common: float = 5.0, seed: int = 3):
    """values(start, stop): replications start..stop−1 of every variant (replication r on seed r)."""

    def values(start: int, stop: int) -> list[np.ndarray]:
        out = [np.empty(stop - start) for _ in means]
        for r in range(start, stop):
            rng = np.random.default_rng([seed, r])
            common = sd_common * rng.standard_normal()
            own = sd_own * rng.standard_normal(len(means))
            for i, m in enumerate(means):
                out[i][r - start] = m + common + own[i]
        return out

    return values


def test_constants_match_the_closed_form() -> None:
    # k = 3, n0 = 10, alpha = 0.05: eta = ((2 * 0.05 / 2) ** (-2 / 9) - 1) / 2, h2 = 2 * eta * 9.
    eta = 0.5 * ((0.05) ** (-2.0 / 9.0) - 1.0)
    assert constants(3, 10, 0.95) == pytest.approx(2.0 * eta * 9.0, rel=1e-12)
    with pytest.raises(InputError):
        constants(3, 1, 0.95)


def test_a_clear_winner_resolves_before_the_budget() -> None:
    # Costs 10, 11, 12 (minimised), own noise sd 1, delta 0.5: variant 0 is better than the
    # others by at least delta, so the procedure must stop on its own with it alone.
    values = _variants([10.0, 11.0, 12.0])
    rows, s = until_resolved(values(0, 10), values, indifference=0.5, budget=2_000)
    assert s.resolved and s.survivors == (0,)
    assert 10 < s.replications < 2_000
    assert all(r.size == s.replications for r in rows)
    # The values are the same replications as running them at once (common random numbers).
    np.testing.assert_array_equal(rows[1], values(0, s.replications)[1])


def test_two_equal_variants_stay_together_and_the_budget_is_said_so() -> None:
    # Variants 0 and 1 are equal; 2 is worse by 3. With delta 0.05 the equal pair cannot be
    # resolved within 80 replications: both survive and the outcome says it is not resolved.
    values = _variants([10.0, 10.0, 13.0])
    _rows, s = until_resolved(values(0, 10), values, indifference=0.05, budget=80)
    assert not s.resolved and set(s.survivors) == {0, 1} and s.replications == 80
    text = s.sentence(["A", "B", "C"], "0.05 EUR/year")
    assert text.startswith("Not resolved to 0.05 EUR/year") and "80 replications" in text


def test_equal_variants_within_a_wide_zone_end_as_a_tie_on_the_last_stage() -> None:
    # A zone wider than the noise: the procedure reaches its last stage N + 1 with both
    # equal variants left and takes the better mean — resolved to within the zone.
    values = _variants([10.0, 10.0, 13.0])
    _rows, s = until_resolved(values(0, 10), values, indifference=2.0, budget=10_000)
    assert s.resolved and 2 not in s.survivors
    assert math.isfinite(s.indifference)


def test_bad_settings_are_input_errors() -> None:
    values = _variants([1.0, 2.0])
    with pytest.raises(InputError, match="indifference-zone"):
        until_resolved(values(0, 5), values, indifference=0.0, budget=10)
    with pytest.raises(InputError, match="replication-budget"):
        until_resolved(values(0, 5), values, indifference=1.0, budget=4)
