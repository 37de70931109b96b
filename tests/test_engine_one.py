"""One vessel is the engine on a table of one: the same route as a batch row, the same plot data everywhere.

Check values come from CoolProp's reference equations evaluated here (PropsSI) or from the state-by-state route
(screen.screen_states) that the engine keeps for rows its columns do not take; both routes are also checked
against PropsSI in tests/test_vector.py and tests/test_vector_liquefied.py.
"""

from __future__ import annotations

import math
from pathlib import Path

import CoolProp.CoolProp as CP
import pytest
from helpers import result_differences

from screening import engine, screen
from screening.inputs.case import load_case

ROOT = Path(__file__).resolve().parents[1]
DEMO = sorted((ROOT / "cases").glob("*.toml"))
#: as the golden corpus compares: numbers 1e-9 relative, limits 2e-9 (two solves, each to P_TOL of its root)
RTOL, RTOL_LIMITS = 1e-9, 2 * screen.P_TOL


def _close(a, b) -> list[str]:
    return result_differences(a, b, RTOL, RTOL_LIMITS)


@pytest.mark.parametrize("path", DEMO, ids=lambda p: p.name)
def test_a_demo_vessel_gets_the_same_answer_from_the_engine_and_from_the_state_by_state_route(path):
    case = load_case(path)
    one = engine.screen_case(case, curves=False).to_json()
    states = screen.screen_states(case, curves=False).to_json()
    assert _close(one, states) == []


@pytest.mark.parametrize("name", ["kq-n2-014.toml", "kq-ch4-003.toml", "kq-he-007.toml", "kq-co2-002.toml",
                                  "kq-c3h8-009.toml", "kq-n2-031.toml"])
def test_a_single_vessel_of_a_pure_gas_runs_on_the_array_route(name):
    engine.screen_case(load_case(ROOT / "cases" / name), curves=False)
    assert engine.STATS == {"vectorised": 1, "per_row": 0}


def test_the_single_vessel_peak_is_the_reference_equation_at_the_fill_density():
    case = load_case(ROOT / "cases" / "kq-n2-014.toml")
    r = engine.screen_case(case)
    # CoolProp's reference equation for nitrogen (Span et al. 2000), evaluated here
    rho = CP.PropsSI("Dmolar", "P", case.fill_pressure_pa, "T", case.fill_temperature_k, "Nitrogen")
    peak = CP.PropsSI("P", "Dmolar", rho, "T", r.worst_case_temperature_k, "Nitrogen")
    assert r.models["reference"].peak_pressure_pa == pytest.approx(peak, rel=1e-9)
    # the plot data come with a single screening: the reference isochore passes through the peak
    grid = r.curves.temperature_k
    ref = [p for p in r.curves.reference if p is not None]
    assert len(ref) == len(grid) and min(ref) < peak < max(ref)


@pytest.mark.parametrize("path", DEMO, ids=lambda p: p.name)
def test_plot_data_are_those_of_the_state_by_state_route(path):
    case = load_case(path)
    one = engine.screen_case(case)
    states = screen.screen_states(case)
    assert (one.phase_diagram is None) == (states.phase_diagram is None)
    a, b = one.curves.to_json(), states.curves.to_json()
    assert a.keys() == b.keys()
    for key in a:
        if key in ("temperature_k", "bounding_model"):
            continue
        assert (a[key] is None) == (b[key] is None), key
    # the grid reaches 10 K past the highest gas temperature, a limit both routes solve to P_TOL; the
    # isochores are then evaluated at temperatures that agree to that tolerance
    for t1, t2 in zip(a["temperature_k"], b["temperature_k"]):
        assert math.isclose(t1, t2, rel_tol=RTOL_LIMITS)


def test_a_batch_detail_row_draws_the_models_a_single_report_draws(tmp_path):
    from screening.batch import BatchRun
    from screening.inputs.inventory import read_inventory, row_case

    inv_path = tmp_path / "van.csv"
    inv_path.write_text("id,gas,water_capacity [L],rated_pressure [bar(g)],fill_pressure [bar(g)],"
                        "fill_temperature [degC],gas_temperature [degC]\n"
                        "V1,argon 82% + carbon dioxide 18%,20,300,200,15,60\n", encoding="utf-8")
    inv = read_inventory(inv_path)
    detail = BatchRun(inv).detail(0)
    single = engine.screen_case(row_case(inv, *inv.rows[0], None))
    assert detail.curves is not None
    assert detail.curves.to_json() == single.curves.to_json()
    drawn = [k for k in ("ideal", "generalized", "reference") if getattr(detail.curves, k) is not None]
    assert len(drawn) >= 2, drawn
