"""A liquefied gas (or a permanent gas with a saturation dome) filled by mass with input tolerances runs on the
liquefied-gas columns, each scenario and each state of its tolerance analysis a row of a table, and folds into the
same result as the state-by-state route.

Check values: the state-by-state route (screen.screen_states, itself checked against CoolProp in
tests/test_scenarios.py and tests/test_verdict_rules.py) and CoolProp's reference equations evaluated here
(PropsSI). The rows are random draws (inputs, not check values)."""

from __future__ import annotations

import random

import CoolProp.CoolProp as CP
import pytest
from helpers import (
    TOLERANCES_AND_SCENARIOS,
    batch_on_one_and_two_workers,
    random_scenarios,
    result_differences,
)

from screening import engine, screen
from screening.inputs.case import parse_case_text

RTOL, RTOL_LIMITS = 1e-9, 2 * screen.P_TOL
#: gas -> (filling ratios drawn [kg/L], rated pressures drawn [bar(g)])
GASES = {"propane": (0.05, 0.45, 15, 40), "carbon dioxide": (0.05, 0.75, 100, 250), "ammonia": (0.05, 0.55, 15, 40),
         "R-134a": (0.1, 1.1, 15, 40), "n-butane": (0.05, 0.55, 5, 20), "nitrogen": (0.01, 0.25, 200, 450)}


def _text(i: int, gas: str, rnd: random.Random) -> str:
    lo, hi, rlo, rhi = GASES[gas]
    cap = rnd.uniform(10, 60)
    text = (f'id = "T{i}"\n[vessel]\nwater_capacity = "{cap:.2f} L"\n'
            f'rated_pressure = "{rnd.uniform(rlo, rhi):.2f} bar(g)"\n'
            f'[fill]\ngas = "{gas}"\nmass = "{cap * rnd.uniform(lo, hi):.3f} kg"\n'
            f'temperature = "{rnd.uniform(-20, 40):.2f} degC"\n'
            f'[exposure]\nambient_max = "{rnd.uniform(-30, 60):.2f} degC"\n')
    text += random_scenarios(rnd, [1, 2, 3])
    text += f'[tolerance]\ngas_temperature = "{rnd.uniform(0.5, 8):.2f} K"\n'
    if rnd.random() < 0.5:        # a fill by mass: the fill temperature's band does not change the contents
        text += f'fill_temperature = "{rnd.uniform(0.5, 4):.2f} K"\n'
    return text


def _peaks_and_tolerances(r: dict) -> list:
    """What the tolerance analysis decides from: the peaks, the tolerance blocks, the verdicts and reasons."""
    return [r["verdict"], r["reasons"], r["warnings"], r["peak_pressure_pa"], r["nominal_peak_pressure_pa"],
            r["margin_fraction"], r["tolerance"],
            [(s["peak_pressure_pa"], s["tolerance"], s["verdict"], s["models"]) for s in r["scenarios"]]]


def test_rows_by_mass_with_tolerances_get_the_state_by_state_answer_on_the_columns():
    rnd = random.Random(20261204)
    cases = [parse_case_text(_text(i, g, rnd), f"<{g}>") for g in GASES for i in range(15)]
    assert all(engine.liquefied_expandable(c) for c in cases)
    got = engine.screen_cases(cases)
    assert engine.STATS["vectorised"] >= 0.95 * len(cases)
    corners, liquid_full = set(), 0
    for case, r in zip(cases, got):
        assert not isinstance(r, dict), case.id
        want = screen.screen_states(case, curves=False).to_json()
        have = r.to_json()
        assert result_differences(want, have, RTOL, RTOL_LIMITS) == [], (case.gas.name, case.id)
        # the peaks and tolerance blocks are the same states of the same equation: equal bit for bit
        assert _peaks_and_tolerances(have) == _peaks_and_tolerances(want), (case.gas.name, case.id)
        corners |= {s["tolerance"]["corners_evaluated"] for s in have["scenarios"]}
        liquid_full += any("liquid fills the whole vessel" in s for s in have["reasons"])
    assert 1 in corners and corners <= {1, 2}    # a fill by mass: the worst case's band alone, one or two corners
    assert liquid_full >= 1


def test_a_propane_cylinder_with_a_gas_temperature_tolerance_matches_coolprop():
    case = parse_case_text('id = "P"\n[vessel]\nwater_capacity = "26 L"\nrated_pressure = "30 bar(g)"\n'
                           '[fill]\ngas = "propane"\nmass = "10.5 kg"\ntemperature = "15 degC"\n'
                           '[exposure]\nambient_max = "35 degC"\n'
                           '[[scenario]]\nname = "store"\n'
                           '[[scenario]]\nname = "closed van"\ngas_temperature = "55 degC"\n'
                           '[tolerance]\ngas_temperature = "3 K"\n', "<propane>")
    r = engine.screen_case(case, curves=False)
    assert engine.STATS == {"vectorised": 1, "per_row": 0}
    assert r.governing_scenario == "closed van"
    # Lemmon et al. (2009) propane through CoolProp's PropsSI: 10.5 kg in 26 L (liquid and vapour at 55 and 58 degC,
    # so the vapour pressure)
    rho = 10.5 / 0.026

    def p(t):
        return CP.PropsSI("P", "Dmass", rho, "T", t, "Propane")

    tol = r.tolerance
    assert tol.expected_corner_confirmed and tol.corners_evaluated == 1
    assert tol.bounding_corner.worst_case_temperature_k == pytest.approx(331.15)
    assert r.nominal_peak_pressure_pa == pytest.approx(p(328.15), rel=1e-9)
    assert tol.bounding_peak_pressure_pa == pytest.approx(p(331.15), rel=1e-9)
    assert r.peak_pressure_pa == tol.bounding_peak_pressure_pa
    h = 0.05
    assert tol.sensitivities.dp_peak_dt_gas == pytest.approx((p(328.15 + h) - p(328.15 - h)) / (2 * h), rel=1e-6)
    assert r.margin_fraction == pytest.approx(1 - (p(331.15) - 101325.0) / 30e5, rel=1e-9)


HEAD = "id,gas,water_capacity,rated_pressure,fill_mass,fill_temperature,ambient_max,solar\n"


def test_batch_by_mass_with_tolerances_is_the_same_whatever_the_number_of_workers(tmp_path, monkeypatch):
    rnd = random.Random(11)
    lines = [HEAD]
    for i in range(40):
        gas = rnd.choice(["propane", "propane", "ammonia", "nitrogen"])
        lo, hi, rlo, rhi = GASES[gas]
        cap = rnd.uniform(10, 60)
        lines.append(f"R{i},{gas},{cap:.2f} L,{rnd.uniform(rlo, rhi):.1f} bar(g),{cap * rnd.uniform(lo, hi):.3f} kg,"
                     f"{rnd.uniform(-20, 40):.1f} degC,{rnd.uniform(-40, 60):.1f} degC,"
                     f"{'sun' if rnd.random() < 0.2 else ''}\n")
    outs = batch_on_one_and_two_workers(tmp_path, monkeypatch, lines, TOLERANCES_AND_SCENARIOS)
    assert outs["1"] == outs["2"]
    assert outs["1"][1].count(b"closed van") >= 40
    assert outs["1"][1].count(b'"bounding_peak_pressure_pa"') >= 40
