"""Rows with input tolerances, several exposure scenarios or the sun's energy balance on the batch's array path:
the same answers as the single-case screening, and the reference peaks against CoolProp."""

import random

import CoolProp.CoolProp as CP
import pytest
from helpers import TOLERANCES_AND_SCENARIOS, batch_on_one_and_two_workers, result_differences

from screening import engine
from screening.inputs.case import parse_case_data
from screening.result import Result
from screening.screen import P_TOL, screen_states
from screening.verdicts import Verdict


def _as_json(r):
    """A batch row's result as its JSON layout (an input-error row stays the record it is)."""
    return r.to_json() if isinstance(r, Result) else r

GASES = ["nitrogen", "argon", "oxygen", "air", "methane", "hydrogen", "helium", "neon"]
FINISHES = ["white_paint", "aluminium_paint", "red_paint", "black_paint"]

#: Numbers are compared at 1e-9 relative and limits at 2e-9, as the golden corpus compares them (the fill-mass
#: limit too: the state-by-state solve stops at P_TOL of the root, not of its density range).
RTOL = 1e-9
RTOL_LIMITS = 2 * P_TOL


def _case(rnd: random.Random, i: int) -> dict:
    gas = rnd.choice(GASES)
    rated = rnd.uniform(40.0, 450.0)
    # partly used cylinders, ordinary fills and fills close to or above the rating (every verdict)
    p = rated * rnd.choice([rnd.uniform(0.03, 0.3), rnd.uniform(0.5, 0.8), rnd.uniform(0.8, 1.05)])
    d = {"id": f"V{i}", "vessel": {"water_capacity": f"{rnd.uniform(5, 80):.2f} L",
                                   "rated_pressure": f"{rated:.2f} bar(g)"},
         "fill": {"gas": gas, "pressure": f"{p:.2f} bar(g)", "temperature": f"{rnd.uniform(-20, 40):.2f} degC"}}
    if rnd.random() < 0.3:
        d["vessel"]["relief_set_pressure"] = f"{rated * rnd.uniform(0.8, 1.1):.2f} bar(g)"
    scenarios = []
    for j in range(rnd.choice([1, 2, 3])):
        sc = {"name": f"scenario {j}", "ambient_max": f"{rnd.uniform(-40, 85):.2f} degC"}
        if rnd.random() < 0.3:
            sc["gas_temperature"] = f"{rnd.uniform(-40, 85):.2f} degC"
        if rnd.random() < 0.3:
            sc["solar"] = "sun"
            sc["ambient_max"] = f"{rnd.uniform(10, 45):.2f} degC"
            if rnd.random() < 0.5:
                sc["finish"] = rnd.choice(FINISHES)
        scenarios.append(sc)
    d["scenario"] = scenarios
    if len(scenarios) == 1 or rnd.random() < 0.7:
        tol = {}
        if rnd.random() < 0.8:
            tol["fill_pressure"] = f"{rnd.uniform(0, 10):.2f} bar"
        if rnd.random() < 0.8:
            tol["fill_temperature"] = f"{rnd.uniform(0, 5):.2f} K"
        if rnd.random() < 0.8:
            tol["gas_temperature"] = f"{rnd.uniform(0, 8):.2f} K"
        d["tolerance"] = tol
    return d


def _differences(a, b) -> list[str]:
    return result_differences(a, b, RTOL, RTOL_LIMITS)


def test_rows_with_tolerances_scenarios_and_sun_equal_the_single_case_screening():
    # a seeded random sample of every pure permanent and quantum gas, one to three scenarios (some in the sun,
    # some with a stated gas temperature), with and without tolerances
    rnd = random.Random(20261203)
    cases = [parse_case_data(_case(rnd, i), "t.csv", "x") for i in range(90)]
    got = [_as_json(r) for r in engine.screen_cases(cases)]
    assert engine.STATS["vectorised"] >= 70           # the array path takes them (not the per-row fallback)
    verdicts = set()
    for c, r in zip(cases, got):
        s = screen_states(c, curves=False).to_json()
        assert r["verdict"] == s["verdict"], c.id
        assert r["reasons"] == s["reasons"], c.id
        assert r["warnings"] == s["warnings"], c.id
        assert _differences(s, r) == [], c.id
        verdicts.add(r["verdict"])
    assert {Verdict.WITHIN.value, Verdict.LOW_MARGIN.value, Verdict.OVER.value} <= verdicts
    assert any(r["tolerance"] is not None and r["tolerance"]["corners_evaluated"] == 1 for r in got)
    assert any(len(r["scenarios"]) == 3 and r["reasons"][0].startswith("Scenario '") for r in got)
    assert any(r["exposure"] is not None for r in got)


def test_tolerance_block_on_the_array_path_matches_coolprop_at_its_states():
    # nitrogen, Span et al. (2000) equation of state through CoolProp's PropsSI, evaluated here
    d = {"id": "N", "vessel": {"water_capacity": "50 L", "rated_pressure": "300 bar(g)"},
         "fill": {"gas": "nitrogen", "pressure": "200 bar(g)", "temperature": "15 degC"},
         "scenario": [{"name": "yard", "ambient_max": "45 degC"}, {"name": "van", "ambient_max": "30 degC",
                                                                    "gas_temperature": "65 degC"}],
         "tolerance": {"fill_pressure": "5 bar", "fill_temperature": "2 K", "gas_temperature": "3 K"}}
    case = parse_case_data(d, "t.csv", "x")
    r = _as_json(engine.screen_cases([case])[0])
    assert engine.STATS["vectorised"] == 1
    assert r["governing_scenario"] == "van"
    tol = r["tolerance"]
    p, tf, tg = 200e5 + 101325.0, 288.15, 338.15

    def reference_peak(p_fill, t_fill, t_peak):
        rho = CP.PropsSI("Dmolar", "P", p_fill, "T", t_fill, "Nitrogen")
        return CP.PropsSI("P", "Dmolar", rho, "T", t_peak, "Nitrogen")

    assert r["models"]["reference"]["peak_pressure_pa"] == pytest.approx(reference_peak(p, tf, tg), rel=1e-6)
    assert tol["expected_corner_confirmed"] and tol["corners_evaluated"] == 1
    assert tol["bounding_corner"]["fill_pressure_pa"] == pytest.approx(p + 5e5)
    corner = reference_peak(p + 5e5, tf - 2.0, tg + 3.0)
    # the bounding peak is the highest applicable real-gas model at the corner: at least the reference one
    assert tol["bounding_peak_pressure_pa"] >= corner * (1 - 1e-6)
    assert r["peak_pressure_pa"] == tol["bounding_peak_pressure_pa"]
    # the reference sensitivity to the gas temperature, by the same central difference on PropsSI
    h = 0.05
    slope = (reference_peak(p, tf, tg + h) - reference_peak(p, tf, tg - h)) / (2 * h)
    assert tol["sensitivities_by_model"]["dp_peak_dt_gas"]["reference"] == pytest.approx(slope, rel=1e-4)


HEAD = "id,gas,water_capacity,rated_pressure,fill_pressure,fill_temperature,ambient_max,solar\n"


def test_batch_with_tolerances_and_scenarios_is_the_same_whatever_the_number_of_workers(tmp_path, monkeypatch):
    rnd = random.Random(7)
    lines = [HEAD]
    for i in range(40):
        gas = rnd.choice(GASES)
        rated = rnd.uniform(100, 400)
        lines.append(f"R{i},{gas},50 L,{rated:.1f} bar(g),{rated * rnd.uniform(0.1, 1.0):.1f} bar(g),"
                     f"{rnd.uniform(-20, 40):.1f} degC,{rnd.uniform(-40, 85):.1f} degC,"
                     f"{'sun' if rnd.random() < 0.2 else ''}\n")
    outs = batch_on_one_and_two_workers(tmp_path, monkeypatch, lines, TOLERANCES_AND_SCENARIOS)
    assert outs["1"] == outs["2"]
    assert outs["1"][1].count(b"closed van") >= 40
