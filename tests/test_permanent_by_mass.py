"""A permanent gas filled by mass runs on the engine's columns, for one vessel and in a batch: nitrogen, oxygen,
argon, carbon monoxide, methane and krypton on the liquefied-gas columns, hydrogen, helium, neon and air on the
permanent-gas columns. The same answer as the state-by-state route, row by row, and the peak on the reference
equation at the fill density.

Check values: CoolProp's reference equations evaluated here (PropsSI) and the state-by-state route
(screen.screen_states), itself checked against PropsSI in tests/test_screen.py and tests/test_verdict_rules.py.
The rows are random draws over the ranges a site fills (inputs, not check values).
"""

from __future__ import annotations

import random

import CoolProp.CoolProp as CP
import pytest
from helpers import result_differences

from screening import engine, screen
from screening.batch import BatchRun
from screening.constants import R
from screening.inputs.case import parse_case_text
from screening.inputs.inventory import read_inventory
from screening.physics.eos.generalized import lee_kesler_pressure

#: as the golden corpus compares: numbers 1e-9 relative, limits 2e-9 (two solves, each to P_TOL of its root)
RTOL, RTOL_LIMITS = 1e-9, 2 * screen.P_TOL
#: gas -> (CoolProp name, highest filling ratio drawn [kg/L]: about a 300 bar(g) fill at 15 degC, krypton and
#: argon denser)
GASES = {"nitrogen": ("Nitrogen", 0.3), "oxygen": ("Oxygen", 0.35), "argon": ("Argon", 0.5),
         "carbon monoxide": ("CarbonMonoxide", 0.3), "methane": ("Methane", 0.18), "krypton": ("Krypton", 1.0)}


#: gas -> highest filling ratio drawn [kg/L] (about 300 bar(g) at 15 degC; hydrogen about 700 bar(g))
QUANTUM_AND_AIR = {"hydrogen": 0.04, "helium": 0.045, "neon": 0.25, "air": 0.3}


def _case_text(i: int, gas: str, rnd: random.Random) -> str:
    hi = GASES[gas][1] if gas in GASES else QUANTUM_AND_AIR[gas]
    cap, rated = rnd.uniform(10, 60), rnd.uniform(40, 500)
    # a few fills past the top of the usual range (liquid-full or past the rating at fill)
    ratio = rnd.uniform(0.005, hi) if rnd.random() > 0.05 else rnd.uniform(hi, 3 * hi)
    text = (f'id = "M{i}"\n[vessel]\nwater_capacity = "{cap:.2f} L"\nrated_pressure = "{rated:.2f} bar(g)"\n')
    if rnd.random() < 0.3:
        text += f'relief_set_pressure = "{rated * 1.1:.1f} bar(g)"\n'
    if rnd.random() < 0.2:
        text += f'max_filling_ratio = "{0.8 * hi:.3f} kg/L"\n'
    text += (f'[fill]\ngas = "{gas}"\nmass = "{cap * ratio:.3f} kg"\ntemperature = "{rnd.uniform(-20, 40):.2f} degC"\n'
             f'[exposure]\nambient_max = "{rnd.uniform(-40, 85):.2f} degC"\n')
    if rnd.random() < 0.1:
        text += 'solar = "sun"\n'
    return text


def _cases(gases, n: int, seed: int):
    rnd = random.Random(seed)
    return [parse_case_text(_case_text(i, gas, rnd), f"<{gas}>") for gas in gases for i in range(n)]


def _as_json(r):
    return r.to_json() if not isinstance(r, dict) else repr(r["error"])


def _states_json(case):
    try:
        return screen.screen_states(case, curves=False).to_json()
    except ValueError as exc:
        return repr(exc)


def _assert_the_columns_answer_as_the_states(cases) -> None:
    got = engine.screen_cases(cases)
    # nearly every row on the columns (a root at the edge of a model's range may still go per row)
    assert engine.STATS["vectorised"] >= 0.95 * len(cases)
    for case, r in zip(cases, got):
        want = _states_json(case)
        one = _as_json(r)
        if isinstance(want, str) or isinstance(one, str):
            assert one == want, case.id
        else:
            assert result_differences(want, one, RTOL, RTOL_LIMITS) == [], (case.gas.name, case.id)


def test_permanent_gases_filled_by_mass_get_the_state_by_state_answer_on_the_columns():
    _assert_the_columns_answer_as_the_states(_cases(GASES, 40, seed=11))


def test_hydrogen_helium_neon_and_air_filled_by_mass_get_the_state_by_state_answer_on_the_columns():
    # their generalized model (the quantum-gas SRK model; Lee–Kesler for air) and, for air, no dome: on the
    # permanent-gas columns
    _assert_the_columns_answer_as_the_states(_cases(QUANTUM_AND_AIR, 40, seed=5))


def test_a_hydrogen_vessel_filled_by_mass_peaks_on_the_reference_isochore():
    case = parse_case_text('id = "H"\n[vessel]\nwater_capacity = "50 L"\nrated_pressure = "300 bar(g)"\n'
                           '[fill]\ngas = "hydrogen"\nmass = "0.75 kg"\ntemperature = "15 degC"\n'
                           '[exposure]\nambient_max = "65 degC"\n')
    r = engine.screen_case(case, curves=False)
    assert engine.STATS == {"vectorised": 1, "per_row": 0}
    # Leachman et al. (2009) normal-hydrogen equation through CoolProp's PropsSI: 15 kg/m3 at 65 degC
    assert r.models["reference"].peak_pressure_pa == pytest.approx(
        CP.PropsSI("P", "Dmass", 0.75 / 0.05, "T", 338.15, "Hydrogen"), rel=1e-9)
    assert r.models["generalized"].applicable and r.fill.given == "mass"
    assert r.limits.max_fill_pressure_pa is None


def test_a_nitrogen_vessel_filled_by_mass_peaks_on_the_reference_isochore():
    case = parse_case_text('id = "N"\n[vessel]\nwater_capacity = "50 L"\nrated_pressure = "300 bar(g)"\n'
                           '[fill]\ngas = "nitrogen"\nmass = "11.2 kg"\ntemperature = "15 degC"\n'
                           '[exposure]\nambient_max = "65 degC"\n')
    r = engine.screen_case(case, curves=False)
    assert engine.STATS == {"vectorised": 1, "per_row": 0}
    # Span et al. (2000) nitrogen equation through CoolProp's PropsSI: the pressure at 224 kg/m3 and 65 degC
    peak = CP.PropsSI("P", "Dmass", 11.2 / 0.05, "T", 338.15, "Nitrogen")
    assert r.models["reference"].peak_pressure_pa == pytest.approx(peak, rel=1e-9)
    # the fill pressure behind the compressibility factor shown (Z = p / (rho R T), R of CODATA 2018 as the tool
    # takes it), and the fill mass whose peak is the target (300 bar(g) less the 10 % margin, absolute): the
    # density at the target and 65 degC, times the water capacity (the same source)
    ref = r.models["reference"]
    assert ref.z_fill * ref.fill_molar_density_mol_m3 * R * 288.15 == pytest.approx(
        CP.PropsSI("P", "Dmass", 11.2 / 0.05, "T", 288.15, "Nitrogen"), rel=1e-9)
    target = 101325.0 + 300e5 * 0.9
    # the limit is the lower of the reference's and the generalized model's: here the generalized model reaches
    # the target first, so the reference (the same source) stays below it at the limit's density, and the
    # generalized model (the tool's Lee–Kesler, checked against CoolProp in test_generalized) is at the target
    rho_limit = r.limits.max_fill_mass_kg / 0.05
    assert rho_limit < CP.PropsSI("Dmass", "P", target, "T", 338.15, "Nitrogen")
    assert CP.PropsSI("P", "Dmass", rho_limit, "T", 338.15, "Nitrogen") < target
    n2 = case.gas.components[0]
    lk = lee_kesler_pressure(rho_limit / n2.molar_mass, 338.15, n2.critical_temperature, n2.critical_pressure,
                             n2.acentric_factor)
    assert float(lk.pressure[()]) == pytest.approx(target, rel=1e-8)


def test_a_batch_of_permanent_gases_by_mass_and_by_pressure_gets_the_state_by_state_answers(tmp_path):
    rnd = random.Random(7)
    lines = ["id,gas,water_capacity [L],rated_pressure [bar(g)],fill_pressure [bar(g)],fill_mass [kg],"
             "fill_temperature [degC],ambient_max [degC]"]
    ratios = {**{g: hi for g, (_cp, hi) in GASES.items()}, **QUANTUM_AND_AIR}
    for i in range(80):
        gas = rnd.choice(sorted(ratios))
        cap, rated = rnd.uniform(10, 60), rnd.uniform(60, 450)
        if i % 3 == 0:      # the same gases by pressure in the same inventory
            fill = f"{rnd.uniform(20, 0.8 * rated):.1f},"
        else:
            fill = f",{cap * rnd.uniform(0.01, ratios[gas]):.3f}"
        lines.append(f"B{i},{gas},{cap:.1f},{rated:.1f},{fill},{rnd.uniform(-20, 40):.1f},{rnd.uniform(-40, 85):.1f}")
    path = tmp_path / "inv.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    inv = read_inventory(path)
    run = BatchRun(inv)
    assert run._plain.per_row <= 3
    from screening.inputs.inventory import row_case

    for i, (n, cells) in enumerate(inv.rows):
        want = _states_json(row_case(inv, n, cells, None))
        full = run.full(i)
        one = _as_json(full) if not isinstance(full, dict) else repr(full.get("error"))
        if isinstance(want, str) or isinstance(one, str):
            assert one == want, n
            continue
        for key in ("row", "warnings"):     # the batch's own: its row number and batch warnings
            want.pop(key, None), one.pop(key, None)
        assert result_differences(want, one, RTOL, RTOL_LIMITS) == [], n
