"""Liquefied gases filled by mass: blends (propane/butane, refrigerant blends) and the new pure gases."""

from __future__ import annotations

import CoolProp.CoolProp as CP
import pytest
from chemicals import MW

from screening.engine import screen_text
from screening.inputs.gas_spec import parse_gas
from screening.physics.eos.reference import liquefied_blend

CASE = '''id = "LIQ"
[vessel]
water_capacity = "{v} L"
rated_pressure = "{rated}"
[fill]
gas = "{gas}"
mass = "{m} kg"
temperature = "15 degC"
[exposure]
gas_temperature = "{hot} degC"
'''


def _heos(names, fractions) -> str:
    return "HEOS::" + "&".join(f"{n}[{x!r}]" for n, x in zip(names, fractions))


def _names_fractions(gas: str):
    m = parse_gas(gas)
    return tuple(g.coolprop_name for g in m.components), tuple(m.fractions), m.molar_mass


@pytest.mark.parametrize("gas", ["propane 60 % + n-butane 40 % by mass", "propane 30 % + n-butane 70 % by mass",
                                 "R-410A", "R-407C", "R-404A"])
def test_two_phase_blend_peak_is_its_bubble_pressure(gas):
    names, z, M = _names_fractions(gas)
    t_peak = 323.15
    # half the bubble-point liquid density at the worst case: two phases from fill to worst case
    # source: CoolProp PropsSI on the mixture string (bubble point, Q = 0)
    rho_l = CP.PropsSI("Dmolar", "T", t_peak, "Q", 0, _heos(names, z))
    mass = 0.5 * rho_l * M * 0.020
    r = screen_text(CASE.format(v=20, rated="60 bar(g)", gas=gas, m=f"{mass:.6f}", hot=50)).to_json()
    ref = r["models"]["reference"]
    assert ref["applicable"], ref["note"]
    assert ref["phase_fill"] == "two-phase" and ref["phase_peak"] == "two-phase"
    assert not r["models"]["ideal"]["applicable"] and not r["models"]["generalized"]["applicable"]
    # source: CoolProp PropsSI on the mixture string, bubble pressure at the worst case
    p_bubble = CP.PropsSI("P", "T", t_peak, "Q", 0, _heos(names, z))
    # the higher of the reference and the Peng–Robinson bubble pressures is taken: never below the reference
    assert ref["peak_pressure_pa"] >= p_bubble * (1 - 1e-6)
    assert ref["peak_pressure_pa"] == pytest.approx(p_bubble, rel=0.06)


def test_zeotropic_glide_is_seen_between_dew_and_bubble():
    names, z, _ = _names_fractions("R-407C")
    blend = liquefied_blend(names, z)
    p_bubble, rho_liquid, rho_vapour = blend._saturation(293.15)
    # source: CoolProp PropsSI on the mixture string: R-407C glides by about 1.5 bar at 20 degC
    p_dew = CP.PropsSI("P", "T", 293.15, "Q", 1, _heos(names, z))
    assert p_bubble - p_dew > 0.5e5
    assert rho_vapour < rho_liquid


def test_blend_liquid_full_temperature_where_the_bubble_liquid_density_meets_the_fill():
    gas = "propane 60 % + n-butane 40 % by mass"
    names, z, M = _names_fractions(gas)
    r = screen_text(CASE.format(v=26, rated="30 bar(g)", gas=gas, m="12.5", hot=65)).to_json()
    t_lf = r["limits"]["liquid_full_temperature_k"]
    assert t_lf is not None and 288.15 < t_lf < 338.15
    rho_fill = 12.5 / 0.026 / M
    # source: CoolProp PropsSI on the mixture string: bubble-point liquid density at that temperature
    assert CP.PropsSI("Dmolar", "T", t_lf, "Q", 0, _heos(names, z)) == pytest.approx(rho_fill, rel=1e-5)
    assert r["verdict"] != "within"
    assert any("liquid fills the whole vessel" in x for x in r["reasons"])


def test_blend_fill_limit_stops_at_the_liquid_full_point():
    gas = "propane 60 % + n-butane 40 % by mass"
    names, z, M = _names_fractions(gas)
    r = screen_text(CASE.format(v=26, rated="30 bar(g)", gas=gas, m="10", hot=50)).to_json()
    lim = r["limits"]
    # source: CoolProp PropsSI, bubble-point liquid density of the blend at the worst case
    rho_l = CP.PropsSI("D", "T", 323.15, "Q", 0, _heos(names, z))
    assert lim["max_filling_ratio_kg_per_l"] * 1000 <= rho_l * (1 + 1e-6)


def test_named_refrigerant_blends_are_their_mass_compositions():
    m = parse_gas("R-410A")
    # source: chemicals.MW molecular weights [g/mol] of R-32 (75-10-5) and R-125 (354-33-6); 50/50 by mass
    n32, n125 = 0.5 / MW("75-10-5"), 0.5 / MW("354-33-6")
    assert m.fractions == pytest.approx((n32 / (n32 + n125), n125 / (n32 + n125)), rel=1e-4)
    assert [g.name for g in parse_gas("R-404A").components] == ["R-125", "R-143a", "R-134a"]


# gas, CoolProp fluid
NEW_GASES = [("R-134a", "R134a"), ("R-32", "R32"), ("R-125", "R125"), ("R-1234yf", "R1234yf"),
             ("R-1234ze(E)", "R1234ze(E)"), ("R-744", "CarbonDioxide"), ("propylene", "Propylene"),
             ("dimethyl ether", "DimethylEther"), ("chlorine", "Chlorine"), ("hydrogen sulfide", "HydrogenSulfide"),
             ("sulfur dioxide", "SulfurDioxide"), ("hydrogen chloride", "HydrogenChloride")]


@pytest.mark.parametrize("gas, fluid", NEW_GASES, ids=[g for g, _ in NEW_GASES])
def test_new_liquefied_gas_by_mass_peaks_at_its_vapour_pressure(gas, fluid):
    t_peak = 298.15     # below every critical temperature here (CO2 304.13 K the lowest)
    # source: CoolProp PropsSI, saturated liquid density of the gas's reference equation at the worst case
    rho_l = CP.PropsSI("D", "T", t_peak, "Q", 0, fluid)
    mass = 0.5 * rho_l * 0.010
    r = screen_text(CASE.format(v=10, rated="250 bar(g)", gas=gas, m=f"{mass:.6f}", hot=25)).to_json()
    ref = r["models"]["reference"]
    assert ref["applicable"], ref["note"]
    # source: CoolProp PropsSI, vapour pressure of the reference equation
    assert ref["peak_pressure_pa"] == pytest.approx(CP.PropsSI("P", "T", t_peak, "Q", 0, fluid), rel=1e-6)


def test_new_gases_carry_their_hazards():
    # hazards as on suppliers' GHS safety data sheets (common practice for labels)
    assert set(parse_gas("chlorine").hazards) >= {"toxic", "oxidizing", "corrosive"}
    assert set(parse_gas("hydrogen sulfide").hazards) >= {"toxic", "flammable"}
    assert "flammable" in parse_gas("R-32").hazards and "flammable" in parse_gas("R-1234yf").hazards
    assert parse_gas("R-744").components[0].name == "carbon dioxide"


def test_blend_result_states_its_mixing_rules():
    r = screen_text(CASE.format(v=26, rated="30 bar(g)", gas="R-407C", m="10", hot=40)).to_json()
    rule = r["models"]["reference"]["mixing_rule"]
    # source: CoolProp.get_mixture_binary_pair_data names Lemmon (2004) for the HFC pairs (CoolProp 8.0.0)
    assert CP.get_mixture_binary_pair_data("354-33-6", "75-10-5", "BibTeX") == "Lemmon-JPCRD-2004"
    assert "Lemmon-JPCRD-2004" in rule and "bubble pressure" in rule and "Peng–Robinson" in rule
