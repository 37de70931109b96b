"""Phase along the isochore of pure fluids, checked against CoolProp PropsSI and `chemicals` correlations."""

import CoolProp.CoolProp as CP
import pytest
from chemicals import Zc
from chemicals.critical import Pc, Tc
from chemicals.volume import Rackett
from hypothesis import given
from hypothesis import strategies as st

from screening.errors import NotApplicable
from screening.physics.eos.reference import reference_fluid
from screening.physics.isochore import (
    isochore_phases,
    max_liquid_density,
    temperature_at_pressure_on_isochore,
)


def pure(name):
    return reference_fluid((name,), (1.0,))


# fill densities [kg/L]; liquid-full temperatures computed by this module are printed in the report
CASES = [("CarbonDioxide", 0.75), ("Propane", 0.42), ("Ammonia", 0.53), ("SulfurHexafluoride", 1.04)]


@pytest.mark.parametrize("name, kg_per_l", CASES)
def test_liquid_full_temperature(name, kg_per_l):
    f = pure(name)
    rho = kg_per_l * 1000.0 / f.molar_mass
    r = isochore_phases(f, rho, 288.15, 338.15)
    t = r.liquid_full_temperature
    assert t is not None and r.dry_out_temperature is None
    # source: PropsSI('Dmass','T',t,'Q',0,name) — saturated liquid equals the fill density
    assert CP.PropsSI("Dmass", "T", t, "Q", 0, name) == pytest.approx(kg_per_l * 1000.0, rel=1e-7)
    # source: PropsSI('P','T',t,'Q',0,name)
    assert r.crossing_pressure == pytest.approx(CP.PropsSI("P", "T", t, "Q", 0, name), rel=1e-7)
    cas = CP.get_fluid_param_string(name, "CAS")
    # source: chemicals.volume.Rackett saturated-liquid volume with chemicals' Tc, Pc, Zc; Rackett is
    # typically within ~2 % away from Tc (observed up to 1.6 % for CO2, 1.3 % for NH3) -> 3 % tolerance
    rho_rackett = 1.0 / Rackett(t, Tc(cas), Pc(cas), Zc(cas)) * f.molar_mass
    assert rho_rackett == pytest.approx(kg_per_l * 1000.0, rel=0.03)
    # compressed liquid above liquid-full: steep rise, many bar per kelvin
    assert r.dp_dt_after_liquid_full > 1e5
    assert r.fill_phase == "two-phase"


def test_co2_075_liquid_full_near_22C():
    # source: CoolProp PropsSI, the temperature at which saturated liquid CO2 has a density of 750 kg/m3
    t_lf = CP.PropsSI("T", "Dmass", 750.0, "Q", 0, "CO2")
    r = isochore_phases(pure("CarbonDioxide"), 750.0 / 0.0440098, 288.15, 338.15)
    assert 290.0 < r.liquid_full_temperature < 300.0
    assert r.liquid_full_temperature == pytest.approx(t_lf, abs=0.05)
    assert r.peak_phase == "supercritical"


def test_dp_dt_after_liquid_full_matches_propssi():
    f = pure("Propane")
    rho = 420.0 / f.molar_mass
    r = isochore_phases(f, rho, 288.15, 338.15)
    T = r.liquid_full_temperature + 0.01
    h = 1e-3
    # source: central difference of PropsSI('P','Dmolar',rho,'T',T,'Propane')
    slope = (CP.PropsSI("P", "Dmolar", rho, "T", T + h, "Propane")
             - CP.PropsSI("P", "Dmolar", rho, "T", T - h, "Propane")) / (2 * h)
    assert r.dp_dt_after_liquid_full == pytest.approx(slope, rel=1e-3)


def test_nitrogen_isochore_no_liquid_full():
    n2 = pure("Nitrogen")
    rho = n2.density(200e5 + 101325.0, 288.15)
    r = isochore_phases(n2, rho, 288.15, 338.15)
    assert r.liquid_full_temperature is None and r.dp_dt_after_liquid_full is None
    assert r.fill_phase == "supercritical" and r.peak_phase == "supercritical"
    # source: PropsSI('Dmolar','T',t,'Q',1,'Nitrogen') at the dry-out temperature equals the fill density
    assert CP.PropsSI("Dmolar", "T", r.dry_out_temperature, "Q", 1, "Nitrogen") == pytest.approx(rho, rel=1e-7)


def test_max_liquid_density_and_overfill():
    f = pure("CarbonDioxide")
    # source: PropsSI('Dmolar','T',Ttriple,'Q',0,'CarbonDioxide')
    ref = CP.PropsSI("Dmolar", "T", CP.PropsSI("Ttriple", "CarbonDioxide"), "Q", 0, "CarbonDioxide")
    assert max_liquid_density(f) == pytest.approx(ref, rel=1e-8)
    with pytest.raises(NotApplicable):
        isochore_phases(f, max_liquid_density(f) * 1.01, 288.15, 338.15)


def test_near_critical_flagged():
    f = pure("CarbonDioxide")
    # 0.1 K below Tc: saturated liquid density there as fill
    rho = f.saturated_liquid_density(f.critical_temperature - 0.1)
    r = isochore_phases(f, rho, 288.15, 338.15)
    assert r.near_critical and r.note


def test_mixture_refused():
    mix = reference_fluid(("Argon", "CarbonDioxide"), (0.82, 0.18))
    with pytest.raises(NotApplicable):
        isochore_phases(mix, 9000.0, 288.15, 338.15)


def test_temperature_at_pressure_across_kink():
    f = pure("CarbonDioxide")
    rho = 750.0 / f.molar_mass
    t_lf = isochore_phases(f, rho, 288.15, 338.15).liquid_full_temperature
    for p_target in (f.vapour_pressure(285.0), f.pressure(rho, 320.0)):
        t = temperature_at_pressure_on_isochore(f, rho, p_target, 280.0, 338.15)
        assert f.pressure(rho, t) == pytest.approx(p_target, rel=1e-8)
    assert temperature_at_pressure_on_isochore(f, rho, f.pressure(rho, 320.0), 280.0, 338.15) > t_lf
    with pytest.raises(NotApplicable):
        temperature_at_pressure_on_isochore(f, rho, 1e9 / 2, 280.0, 338.15)


@given(st.floats(0.30, 0.50), st.floats(240.0, 350.0), st.floats(0.5, 10.0))
def test_propane_isochore_monotonic(kg_per_l, T, dT):
    f = pure("Propane")
    rho = kg_per_l * 1000.0 / f.molar_mass
    try:
        p1, p2 = f.pressure(rho, T), f.pressure(rho, T + dT)
    except NotApplicable:
        return
    assert p2 > p1
