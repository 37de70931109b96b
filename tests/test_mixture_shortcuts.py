"""The shortcuts a mixture screening takes give the numbers of the full computation they stand for, and those
numbers agree with CoolProp's mixture model evaluated here with PropsSI."""

from __future__ import annotations

import math

import CoolProp.CoolProp as CP
import numpy as np
import pytest
from helpers import GAS_TEMPERATURE_CASE as CASE

from screening import screen as S
from screening.inputs.case import parse_case_text
from screening.physics.eos.generalized import lee_kesler_pressure, pseudocritical

AR_CO2 = ("argon 82% + carbon dioxide 18%", "HEOS::Argon[0.82]&CarbonDioxide[0.18]")
AIR = ("nitrogen 79% + oxygen 21%", "HEOS::Nitrogen[0.79]&Oxygen[0.21]")
NATURAL_GAS = ("methane 90% + ethane 6% + nitrogen 4%", "HEOS::Methane[0.9]&Ethane[0.06]&Nitrogen[0.04]")


def _case(gas: str, rated: float = 300.0, fill: float = 200.0, t_fill: float = 15.0, t_gas: float = 65.0):
    return parse_case_text(CASE.format(name="S", gas=gas, rated=rated, fill=fill, t_fill=t_fill, t_gas=t_gas),
                           "<test>")


def _full_constants(arrays: dict, ts: np.ndarray):
    """Kay's rule with the per-temperature quantum corrections, evaluated at every temperature (the full form)."""
    return pseudocritical(arrays["fractions"], arrays["tc"], arrays["pc"], arrays["omega"], arrays["molar_mass"],
                          arrays["quantum"], arrays["tc_classical"], arrays["pc_classical"], ts)


@pytest.mark.parametrize("gas", [AR_CO2[0], AIR[0], NATURAL_GAS[0]])
def test_kay_constants_of_a_mixture_without_quantum_gases_are_the_full_rule_at_every_temperature(gas):
    arrays = S._gas_arrays(_case(gas).gas)
    assert arrays["fixed"] is not None
    ts = np.linspace(150.0, 700.0, 23)
    for full, fixed in zip(_full_constants(arrays, ts), arrays["fixed"]):
        assert np.all(np.asarray(full) == fixed)     # bit for bit, at every temperature


def test_a_mixture_with_a_quantum_gas_keeps_its_temperature_dependent_constants():
    arrays = S._gas_arrays(_case("helium 79% + oxygen 21%").gas)
    assert arrays["fixed"] is None
    tc = _full_constants(arrays, np.array([250.0, 350.0]))[0]
    assert tc[0] != tc[1]


@pytest.mark.parametrize("gas, heos", [AR_CO2, AIR, NATURAL_GAS])
def test_generalized_peak_with_the_fixed_constants_is_the_full_computation_and_near_coolprop(gas, heos):
    case = _case(gas)
    t_fill, t_peak = 288.15, 338.15
    model = S._generalized(case, None, t_fill, t_peak, True, "")
    arrays = S._gas_arrays(case.gas)
    # the full computation: constants at each temperature, Lee–Kesler density at the fill, pressure at the peak
    from screening.physics.eos.generalized import lee_kesler_density
    tc, pc, om = (float(v) for v in _full_constants(arrays, np.array(t_fill)))
    rho = float(lee_kesler_density(case.fill_pressure_pa, t_fill, tc, pc, om).molar_density)
    tc, pc, om = (float(v) for v in _full_constants(arrays, np.array(t_peak)))
    peak = float(lee_kesler_pressure(rho, t_peak, tc, pc, om).pressure)
    assert model.peak_pa == pytest.approx(peak, rel=1e-12)
    # CoolProp's multi-fluid mixture model (GERG-type, fitted pairs), evaluated here with PropsSI: the
    # generalized model with Kay's rule stays within 3 % of it at 200 bar(g) (a wider band than the 2 % at which the screening warns that the models disagree)
    d = CP.PropsSI("Dmolar", "P", case.fill_pressure_pa, "T", t_fill, heos)
    ref_peak = CP.PropsSI("P", "Dmolar", d, "T", t_peak, heos)
    assert model.peak_pa == pytest.approx(ref_peak, rel=0.03)


# --- deep nodes where they lie above every component's critical temperature -----------------------------------

def _forget_every_fluid() -> None:
    from screening.physics.eos.reference import liquefied_blend, reference_fluid
    reference_fluid.cache_clear()
    liquefied_blend.cache_clear()


AIR_ROWS = [(300.0, 200.0, 15.0, 65.0), (60.0, 30.0, -10.0, 40.0), (310.0, 290.0, 40.0, -40.0),
            (250.0, 180.0, 20.0, 30.0), (120.0, 100.0, 5.0, 60.0), (450.0, 300.0, 35.0, 85.0),
            (90.0, 12.0, 25.0, 50.0)]


def test_a_deep_node_is_tried_only_above_every_components_critical_temperature():
    from screening.physics import mixtures as mix
    from screening.physics.eos.reference import reference_fluid

    air = reference_fluid(("Nitrogen", "Oxygen"), (0.79, 0.21))
    # source: CoolProp's oxygen equation (Schmidt & Wagner), its critical temperature read here with PropsSI
    assert air.critical_temperature_max == pytest.approx(CP.PropsSI("Tcrit", "Oxygen"), abs=1e-9)
    assert mix.deep_node_depth(300.0, air.critical_temperature_max) == 120.0
    assert mix.deep_node_depth(250.0, air.critical_temperature_max) == 80.0
    assert mix.deep_node_depth(230.0, air.critical_temperature_max) is None
    ar_co2 = reference_fluid(("Argon", "CarbonDioxide"), (0.82, 0.18))
    # above CO2's critical temperature (CoolProp, read here) only at temperatures no cylinder reaches
    assert ar_co2.critical_temperature_max == pytest.approx(CP.PropsSI("Tcrit", "CarbonDioxide"), abs=1e-9)
    assert mix.deep_node_depth(273.15 + 85.0, ar_co2.critical_temperature_max) is None


def test_screenings_through_deep_nodes_give_the_answers_without_nodes_and_their_states_are_one_phase(monkeypatch):
    import json

    from screening.engine import screen_text
    from screening.physics import mixtures as mix
    from screening.physics.eos import reference as ref

    texts = [(f"A{i}", CASE.format(name=f"A{i}", gas=AIR[0], rated=r, fill=p, t_fill=tf, t_gas=tg))
             for i, (r, p, tf, tg) in enumerate(AIR_ROWS)]
    flashes = {"n": 0}
    route = ref.ReferenceFluid._reference_route

    def counted(self, *args):
        flashes["n"] += 1
        return route(self, *args)

    def screen_all():
        return {n: json.dumps(screen_text(t, source=n).to_json(), sort_keys=True, allow_nan=False) for n, t in texts}

    monkeypatch.setattr(ref.ReferenceFluid, "_reference_route", counted)
    # the full computation: no node at all, every isochore flashed itself
    monkeypatch.setattr(mix, "NODE_DEPTHS_K", ())
    _forget_every_fluid()
    without = screen_all()
    n_without = flashes["n"]
    # nodes at 40 and 20 K only
    monkeypatch.setattr(mix, "NODE_DEPTHS_K", (40.0, 20.0))
    monkeypatch.setattr(mix, "DEEP_NODE_DEPTHS_K", ())
    _forget_every_fluid()
    flashes["n"] = 0
    shallow = screen_all()
    n_shallow = flashes["n"]
    # and deep nodes first where they lie above oxygen's and nitrogen's critical temperatures
    monkeypatch.setattr(mix, "DEEP_NODE_DEPTHS_K", (120.0, 80.0))
    _forget_every_fluid()
    flashes["n"] = 0
    deep = screen_all()
    n_deep = flashes["n"]
    fluid = ref.reference_fluid(("Nitrogen", "Oxygen"), (0.79, 0.21))
    nodes = [(math.exp(ln), t) for ln, t in zip(fluid._memo._node_ln, fluid._memo._node_t)]
    _forget_every_fluid()
    assert deep == without
    assert shallow == without
    assert n_deep < n_shallow < n_without
    assert any(t < 160.0 for _, t in nodes), "some node more than 80 K below the rows' temperatures"
    heos = AIR[1]
    for rho_node, t_node in nodes:
        for d_ln in (-0.09, -0.03, 0.0, 0.03, 0.09):
            r = rho_node * math.exp(d_ln)
            T = t_node + mix.NODE_SLOPE_K * abs(d_ln) + mix.NEIGHBOUR_MARGIN_K + 1e-6
            # source: CoolProp's mixture model evaluated here (its density-temperature flash runs a stability
            # analysis): each state the node covers, down to the edge of what it covers, is not two-phase
            assert CP.PhaseSI("Dmolar", r, "T", T, heos) != "twophase"
            # and the pressure-temperature flash there (PropsSI, with CoolProp's stability test) comes back to
            # the same density: the state is the stable one
            p = CP.PropsSI("P", "Dmolar", r, "T", T, heos)
            assert CP.PropsSI("Dmolar", "P", p, "T", T, heos) == pytest.approx(r, rel=1e-6)
