"""Scenario keys for bearing arrangements, static factors, bores and per-step κ."""

from __future__ import annotations

import math
import warnings

import pytest

from fleetsim.errors import InputError, LifeModelWarning
from fleetsim.scenario import load_scenario, parse_scenario
from tests.test_scenario_loader import ANGULAR, BASE, DEMOS, edit


def _with_pair(position_lines: str, bearing: str = ANGULAR) -> str:
    text = edit(BASE, "[policy]", bearing + "\n[policy]")
    text = edit(text, '  radial_load = "3.2 kN"', position_lines)
    return edit(text, 'bearing = "TB-1"', 'bearing = "AC-9"')


def _load(text: str):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", LifeModelWarning)
        return parse_scenario(text, source="plant.toml")


def _error(text: str) -> InputError:
    with pytest.raises(InputError) as info:
        _load(text)
    assert "\n" not in str(info.value)
    return info.value


def test_back_to_back_pair_from_the_scenario() -> None:
    text = _with_pair('  arrangement = "back-to-back"\n  radial_load = "3 kN"\n'
                      '  radial_load_b = "5 kN"\n  axial_load = "1 kN"')
    d = _load(text).machine("fan").positions[0].derived
    assert d is not None and d.arrangement == "back-to-back"
    # Handbook case FrA <= FrB with R = 0.88 at 40° (from memory): FaB = 4.4 kN, FaA = 5.4 kN.
    assert [b.axial_load_N for b in d.bearings] == [pytest.approx(5400), pytest.approx(4400)]
    # ISO 76, single-row 40° angular contact: X0 = 0.5, Y0 = 0.26 (from memory).
    assert d.static_equivalent_load_N == pytest.approx(max(5000, 0.5 * 5000 + 0.26 * 4400))


@pytest.mark.parametrize(
    "lines, key",
    [
        ('  arrangement = "sideways"\n  radial_load = "3 kN"', "arrangement"),
        ('  radial_load = "3 kN"\n  radial_load_b = "2 kN"', "radial_load_b"),
        ('  arrangement = "face-to-face"\n  radial_load = "3 kN"', "radial_load_b"),
        ('  arrangement = "double-row"\n  radial_load = "3 kN"', "type"),
    ],
)
def test_arrangement_errors_name_the_key(lines: str, key: str) -> None:
    exc = _error(_with_pair(lines))
    assert key in exc.where


def test_factor_keys_only_on_contact_angle_bearings() -> None:
    text = edit(BASE, 'fatigue_limit = "0.8 kN"', 'fatigue_limit = "0.8 kN"\nY1 = 1.2')
    assert "Y1" in _error(text).where
    assert "arrangement" in _error(edit(BASE, '  radial_load = "3.2 kN"',
                                        '  radial_load = "3.2 kN"\n  arrangement = "tandem"')).where


def test_bore_and_static_factor_keys() -> None:
    bearing = ANGULAR + "Y0 = 0.3\nbore_mm = 45\ninduced_thrust_factor = 1.0\n"
    text = _with_pair('  arrangement = "face-to-face"\n  radial_load = "3 kN"\n'
                      '  radial_load_b = "5 kN"\n  axial_load = "1 kN"', bearing)
    s = _load(text)
    assert s.bearings["AC-9"].bore_mm == 45
    d = s.machine("fan").positions[0].derived
    assert d is not None
    # Catalogue factors win: Fi = 1.0·Fr, so FaA = 5 + 1 = 6 kN; P0 = max(Fr, 0.5 Fr + 0.3 Fa).
    assert d.bearings[0].axial_load_N == pytest.approx(6000)
    assert d.static_equivalent_load_N == pytest.approx(max(5000, 2500 + 0.3 * 5000))


def test_duty_step_viscosity_ratio_needs_contamination() -> None:
    step = ('  duty = [{ share = 1, radial_load = "3.2 kN", speed = "1480 rpm", '
            'viscosity_ratio = 2.0 }]')
    exc = _error(edit(BASE, '  radial_load = "3.2 kN"\n  speed = "1480 rpm"', step))
    assert "contamination" in exc.where
    ok = _load(edit(BASE, '  radial_load = "3.2 kN"\n  speed = "1480 rpm"',
                    step + "\n  contamination = 0.5"))
    d = ok.machine("fan").positions[0].derived
    assert d is not None and d.a_iso is not None


def test_conveyor_intermediate_shaft_is_an_opposed_pair() -> None:
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", LifeModelWarning)
        s = load_scenario(DEMOS[1])
    pos = next(p for p in s.machine("conveyor").positions if p.id == "gearbox-intermediate")
    d = pos.derived
    assert d is not None and d.arrangement == "face-to-face" and len(d.bearings) == 2
    # Loaded step: FiB + Ka = 11/3.2 + 5 kN on bearing A (Fr/(2Y) rule, Y = 1.6).
    assert d.bearings[0].axial_load_N == pytest.approx(11_000 / 3.2 + 5_000)
    assert d.rating_life_h < min(b.rating_life_h for b in d.bearings)
    assert math.isfinite(d.static_safety or math.nan)
