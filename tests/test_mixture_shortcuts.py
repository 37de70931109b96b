"""The shortcuts a mixture screening takes give the numbers of the full computation they stand for, and those
numbers agree with CoolProp's mixture model evaluated here with PropsSI."""

from __future__ import annotations

import CoolProp.CoolProp as CP
import numpy as np
import pytest

from screening import screen as S
from screening.inputs.case import parse_case_text
from screening.physics.eos.generalized import lee_kesler_pressure, pseudocritical

CASE = '''id = "{name}"
[vessel]
water_capacity = "50 L"
rated_pressure = "{rated} bar(g)"
[fill]
gas = "{gas}"
pressure = "{fill} bar(g)"
temperature = "{t_fill} degC"
[exposure]
gas_temperature = "{t_gas} degC"
'''

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
