"""A liquefied gas (or a permanent gas filled by mass) with several exposure scenarios runs on the liquefied-gas
columns, each scenario a row of one table, and folds into the same result as the state-by-state route.

Check values: the state-by-state route (screen.screen_states, itself checked against CoolProp in
tests/test_scenarios.py and tests/test_verdict_rules.py) and CoolProp's reference equations evaluated here
(PropsSI). The rows are random draws (inputs, not check values)."""

from __future__ import annotations

import random

import CoolProp.CoolProp as CP
import pytest
from helpers import random_scenarios, result_differences

from screening import engine, screen
from screening.inputs.case import parse_case_text

RTOL, RTOL_LIMITS = 1e-9, 2 * screen.P_TOL
#: gas -> (filling ratios drawn [kg/L], rated pressures drawn [bar(g)])
GASES = {"propane": (0.05, 0.45, 15, 40), "carbon dioxide": (0.05, 0.75, 100, 250), "ammonia": (0.05, 0.55, 15, 40),
         "R-134a": (0.1, 1.1, 15, 40), "nitrogen": (0.01, 0.25, 200, 450)}


def _text(i: int, gas: str, rnd: random.Random) -> str:
    lo, hi, rlo, rhi = GASES[gas]
    cap = rnd.uniform(10, 60)
    by_pressure = rnd.random() < 0.3 and gas != "nitrogen"
    fill = (f'pressure = "{rnd.uniform(1, 8):.2f} bar(g)"' if by_pressure
            else f'mass = "{cap * rnd.uniform(lo, hi):.3f} kg"')
    text = (f'id = "S{i}"\n[vessel]\nwater_capacity = "{cap:.2f} L"\n'
            f'rated_pressure = "{rnd.uniform(rlo, rhi):.2f} bar(g)"\n'
            f'[fill]\ngas = "{gas}"\n{fill}\ntemperature = "{rnd.uniform(-20, 40):.2f} degC"\n'
            f'[exposure]\nambient_max = "{rnd.uniform(-30, 50):.2f} degC"\n')
    text += random_scenarios(rnd, [2, 3])
    return text


def test_liquefied_rows_with_several_scenarios_get_the_state_by_state_answer_on_the_columns():
    rnd = random.Random(1)
    cases = [parse_case_text(_text(i, g, rnd), f"<{g}>") for g in GASES for i in range(20)]
    got = engine.screen_cases(cases)
    assert engine.STATS["vectorised"] >= 0.95 * len(cases)
    for case, r in zip(cases, got):
        assert not isinstance(r, dict), case.id
        want = screen.screen_states(case, curves=False).to_json()
        assert result_differences(want, r.to_json(), RTOL, RTOL_LIMITS) == [], (case.gas.name, case.id)


def test_the_hotter_scenario_of_a_propane_cylinder_governs_at_its_reference_pressure():
    case = parse_case_text('id = "P"\n[vessel]\nwater_capacity = "26 L"\nrated_pressure = "30 bar(g)"\n'
                           '[fill]\ngas = "propane"\nmass = "10.5 kg"\ntemperature = "15 degC"\n'
                           '[exposure]\nambient_max = "35 degC"\n'
                           '[[scenario]]\nname = "store"\n'
                           '[[scenario]]\nname = "closed van"\ngas_temperature = "55 degC"\n')
    r = engine.screen_case(case, curves=False)
    assert engine.STATS == {"vectorised": 1, "per_row": 0}
    assert r.governing_scenario == "closed van" and [s.name for s in r.scenarios] == ["store", "closed van"]
    # Lemmon et al. (2009) propane through CoolProp's PropsSI: 10.5 kg in 26 L at 55 degC (liquid and vapour, so
    # the vapour pressure)
    assert r.peak_pressure_pa == pytest.approx(CP.PropsSI("P", "Dmass", 10.5 / 0.026, "T", 328.15, "Propane"),
                                               rel=1e-9)
