"""The verdict never says `within` where the vessel is not: every state the method considers (the fill, the worst
case, every tolerance corner, every scenario) goes through the same rules.

Check values come from CoolProp's reference equations through ``PropsSI`` (an independent call path from the
``AbstractState`` the tool uses), evaluated inside each test.
"""

from __future__ import annotations

import CoolProp.CoolProp as CP
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from screening.engine import screen_text
from screening.screen import (
    CRITICAL_BAND_FRACTION,
    SATURATION_BAND_FRACTION,
    percent_pair,
    screen_states,
)

ATM = 101325.0
RANK = {"within": 0, "low-margin": 1, "over": 2, "out-of-scope": 3}


def _case(gas: str, fill: str, exposure: str, vessel: str = "", extra: str = "") -> str:
    vessel = vessel or 'water_capacity = "50 L"\nrated_pressure = "300 bar(g)"'
    return f'id = "t"\n[vessel]\n{vessel}\n[fill]\ngas = "{gas}"\n{fill}\n[exposure]\n{exposure}\n{extra}'


def _bar_g(p_abs: float) -> float:
    return (p_abs - ATM) / 1e5


# ----------------------------------------------------------------------------- cooling never hides an over-fill

def test_overfilled_vessel_is_over_even_when_the_worst_case_is_colder_than_the_fill():
    r = screen_text(_case("nitrogen", 'pressure = "330 bar(g)"\ntemperature = "40 degC"',
                          'ambient_max = "-40 degC"')).to_json()
    assert r["verdict"] == "over"
    # the fill state itself: 330 bar(g) at 40 °C, the pressure the vessel held then
    assert r["peak_pressure_pa"] == pytest.approx(330e5 + ATM, rel=1e-9)
    assert r["worst_case_temperature_k"] == pytest.approx(313.15)
    assert any(w["code"] == "fill-state-governs" for w in r["warnings"])
    # no temperature limit below the fill: the limits say the fill itself is over
    assert r["limits"]["max_gas_temperature_k"] is None
    assert "fill itself" in r["limits"]["note"]
    assert r["limits"]["max_fill_pressure_pa"] <= r["rated_pressure_pa"]
    assert r["reasons"][0].startswith("The peak pressure exceeds the rated pressure")


def test_cold_worst_case_screens_the_fill_state_with_the_reference_pressure():
    # nitrogen filled to 200 bar(g) at 30 °C, worst case 0 °C: the vessel held 200 bar(g) at fill
    r = screen_text(_case("nitrogen", 'pressure = "200 bar(g)"\ntemperature = "30 degC"', 'ambient_max = "0 degC"')).to_json()
    ref = r["models"]["reference"]["peak_pressure_pa"]
    # CoolProp PropsSI: nitrogen at the fill density, evaluated back at the fill temperature
    rho = CP.PropsSI("Dmolar", "P", 200e5 + ATM, "T", 303.15, "Nitrogen")
    assert ref == pytest.approx(CP.PropsSI("P", "Dmolar", rho, "T", 303.15, "Nitrogen"), rel=1e-7)
    assert r["peak_pressure_pa"] >= 200e5 + ATM - 1.0


# ----------------------------------------------------------------------------- relief

def test_a_relief_device_set_just_above_the_peak_is_not_within():
    # CoolProp PropsSI: nitrogen filled to 200 bar(g) at 15 °C and heated to 65 °C
    rho = CP.PropsSI("Dmolar", "P", 200e5 + ATM, "T", 288.15, "Nitrogen")
    peak = CP.PropsSI("P", "Dmolar", rho, "T", 338.15, "Nitrogen")
    relief = _bar_g(peak) + 1.0
    r = screen_text(_case("nitrogen", 'pressure = "200 bar(g)"\ntemperature = "15 degC"',
                          'gas_temperature = "65 degC"',
                          f'water_capacity = "50 L"\nrated_pressure = "300 bar(g)"\nrelief_set_pressure = "{relief:.3f} bar(g)"')).to_json()
    assert r["verdict"] == "low-margin"
    assert "relief device may open" in r["reasons"][0]
    assert r["relief_margin_fraction"] < r["required_margin_fraction"]


# ----------------------------------------------------------------------------- saturation and critical bands

@pytest.mark.parametrize("fraction", [1.0 - SATURATION_BAND_FRACTION * 0.9, 0.995, 1.0, 1.01,
                                      1.0 + SATURATION_BAND_FRACTION * 0.9])
def test_a_fill_pressure_near_the_vapour_pressure_is_refused_and_asks_for_the_mass(fraction):
    # CoolProp PropsSI: vapour pressure of carbon dioxide at 15 °C
    psat = CP.PropsSI("P", "T", 288.15, "Q", 0, "CO2")
    r = screen_text(_case("carbon dioxide", f'pressure = "{psat * fraction / 1e5:.4f} bar(a)"\ntemperature = "15 degC"',
                          'ambient_max = "45 degC"', 'water_capacity = "40 L"\nrated_pressure = "250 bar(g)"')).to_json()
    assert r["verdict"] == "out-of-scope"
    assert r["peak_pressure_pa"] is None
    assert "fill mass" in r["reasons"][0]
    assert any(w["code"] == "near-saturation" for w in r["warnings"])


def test_a_co2_cylinder_that_holds_0_75_kg_per_litre_cannot_be_screened_by_its_gauge():
    # CoolProp PropsSI: 0.75 kg/L of carbon dioxide at 15 °C is two-phase, so its gauge reads the vapour pressure
    psat = CP.PropsSI("P", "T", 288.15, "Q", 0, "CO2")
    reading = psat - 0.8e5                      # within 1 bar of it, inside ordinary gauge error
    r = screen_text(_case("carbon dioxide", f'pressure = "{reading / 1e5:.3f} bar(a)"\ntemperature = "15 degC"',
                          'ambient_max = "45 degC"', 'water_capacity = "40 L"\nrated_pressure = "250 bar(g)"')).to_json()
    assert r["verdict"] != "within"
    # the same cylinder screened by its mass is liquid-full before 45 °C (CoolProp PropsSI saturated liquid density)
    assert CP.PropsSI("Dmass", "T", 318.15 - 15.0, "Q", 0, "CO2") < 750.0
    by_mass = screen_text(_case("carbon dioxide", 'mass = "30 kg"\ntemperature = "15 degC"', 'ambient_max = "45 degC"',
                                'water_capacity = "40 L"\nrated_pressure = "250 bar(g)"')).to_json()
    assert by_mass["verdict"] != "within"


def test_a_near_critical_fill_is_refused_with_a_warning_naming_the_critical_point():
    # CoolProp PropsSI: critical point of carbon dioxide
    tc, pc = CP.PropsSI("Tcrit", "CO2"), CP.PropsSI("pcrit", "CO2")
    r = screen_text(_case("carbon dioxide", f'pressure = "{(pc + 0.5e5) / 1e5:.3f} bar(a)"\n'
                                            f'temperature = "{tc + 0.5:.3f} K"',
                          'ambient_max = "45 degC"', 'water_capacity = "40 L"\nrated_pressure = "250 bar(g)"')).to_json()
    assert r["verdict"] == "out-of-scope"
    warning = next(w for w in r["warnings"] if w["code"] == "near-critical")
    assert f"{tc - 273.15:.1f} °C" in warning["message"]
    assert CRITICAL_BAND_FRACTION > 0.0


# ----------------------------------------------------------------------------- liquid mixtures, ideal gas

def test_a_liquid_mixture_fill_is_not_screened_as_within():
    # CoolProp PropsSI: carbon dioxide 80 % + argon 20 % at 200 bar(g) and 15 °C is a dense, liquid-like fluid
    rho = CP.PropsSI("Dmass", "P", 200e5 + ATM, "T", 288.15, "HEOS::CO2[0.8]&Argon[0.2]")
    assert rho > 600.0
    r = screen_text(_case("carbon dioxide 80% + argon 20%", 'pressure = "200 bar(g)"\ntemperature = "15 degC"',
                          'ambient_max = "45 degC"')).to_json()
    assert r["verdict"] == "out-of-scope"
    assert r["peak_pressure_pa"] is None


def test_the_ideal_gas_governs_nothing_and_a_dense_fill_is_not_a_false_over():
    # ethylene at 0.3 kg/L heated to 40 °C: CoolProp PropsSI gives the real peak far below the ideal gas's
    peak_ref = CP.PropsSI("P", "T", 313.15, "Dmass", 300.0, "Ethylene")
    r = screen_text(_case("ethylene", 'mass = "15 kg"\ntemperature = "15 degC"', 'ambient_max = "40 degC"',
                          'water_capacity = "50 L"\nrated_pressure = "250 bar(g)"')).to_json()
    assert r["models"]["reference"]["peak_pressure_pa"] == pytest.approx(peak_ref, rel=1e-6)
    assert r["models"]["ideal"]["peak_pressure_pa"] > 250e5
    assert r["governing_model"] != "ideal"
    assert r["verdict"] != "over"
    assert r["models"]["ideal"]["off_governing_fraction"] > 0.0


def test_helium_is_governed_by_a_real_gas_model():
    r = screen_text(_case("helium", 'pressure = "200 bar(g)"\ntemperature = "15 degC"', 'ambient_max = "65 degC"')).to_json()
    assert r["governing_model"] in ("reference", "generalized")


# ----------------------------------------------------------------------------- tolerance corners

def test_a_tolerance_corner_that_is_liquid_full_makes_the_vessel_not_within():
    # CoolProp PropsSI: temperature at which saturated liquid carbon dioxide has a density of 700 kg/m3
    t_lf = CP.PropsSI("T", "Dmass", 700.0, "Q", 0, "CO2")
    t_worst = t_lf - 1.0
    text = _case("carbon dioxide", 'mass = "28 kg"\ntemperature = "10 degC"', f'gas_temperature = "{t_worst:.3f} K"',
                 'water_capacity = "40 L"\nrated_pressure = "250 bar(g)"')
    nominal = screen_text(text).to_json()
    assert nominal["verdict"] == "within"
    widened = screen_text(text + '[tolerance]\ngas_temperature = "3 K"\n').to_json()
    assert widened["verdict"] == "low-margin"
    assert any("corner of the input tolerances" in x for x in widened["reasons"])


# ----------------------------------------------------------------------------- reasons and rounding

def test_the_deciding_reason_comes_first_for_an_overfilled_liquefied_gas():
    r = screen_text(_case("propane", 'mass = "20 kg"\ntemperature = "15 degC"', 'ambient_max = "30 degC"',
                          'water_capacity = "47 L"\nrated_pressure = "30 bar(g)"\nmax_filling_ratio = "0.40 kg/L"')).to_json()
    assert r["verdict"] == "over"
    assert r["reasons"][0].startswith("The filling ratio")


def test_percentages_that_differ_never_read_the_same():
    assert percent_pair(0.0996, 0.10) == ("9.96 %", "10.00 %")
    assert percent_pair(0.134, 0.10) == ("13.4 %", "10.0 %")
    assert percent_pair(0.10, 0.10) == ("10.0 %", "10.0 %")


# ----------------------------------------------------------------------------- monotonic properties

SLOW = settings(max_examples=12, deadline=None, suppress_health_check=[HealthCheck.too_slow])
GASES_BY_MASS = [("carbon dioxide", 0.30, 0.80), ("propane", 0.20, 0.45), ("ethylene", 0.10, 0.35)]


def _rank(r: dict) -> tuple:
    return RANK[r["verdict"]], -(r["margin_fraction"] if r["margin_fraction"] is not None else -1e9)


def _mass_case(gas: str, ratio: float, t_fill_c: float, t_worst_c: float, tol: str = "") -> str:
    return _case(gas, f'mass = "{ratio * 40:.4f} kg"\ntemperature = "{t_fill_c:.3f} degC"',
                 f'gas_temperature = "{t_worst_c:.3f} degC"', 'water_capacity = "40 L"\nrated_pressure = "250 bar(g)"',
                 tol)


@SLOW
@given(st.sampled_from(GASES_BY_MASS), st.floats(0.0, 1.0), st.floats(-10.0, 40.0), st.floats(0.0, 70.0),
       st.floats(0.5, 30.0))
def test_a_hotter_worst_case_never_gives_a_better_verdict(gas, share, t_fill, t1, dt):
    name, lo, hi = gas
    ratio = lo + share * (hi - lo)
    cold = screen_text(_mass_case(name, ratio, t_fill, t1)).to_json()
    hot = screen_text(_mass_case(name, ratio, t_fill, t1 + dt)).to_json()
    assert _rank(hot) >= _rank(cold)


@SLOW
@given(st.sampled_from(GASES_BY_MASS), st.floats(0.0, 0.9), st.floats(0.01, 0.1), st.floats(-10.0, 40.0),
       st.floats(0.0, 80.0))
def test_more_fill_mass_never_gives_a_better_verdict(gas, share, more, t_fill, t_worst):
    name, lo, hi = gas
    ratio = lo + share * (hi - lo)
    less = screen_text(_mass_case(name, ratio, t_fill, t_worst)).to_json()
    more_r = screen_text(_mass_case(name, ratio * (1.0 + more), t_fill, t_worst)).to_json()
    assert _rank(more_r) >= _rank(less)


@SLOW
@given(st.sampled_from(["nitrogen", "methane", "argon", "hydrogen"]), st.floats(20.0, 280.0), st.floats(1.0, 40.0),
       st.floats(-20.0, 40.0), st.floats(-40.0, 85.0))
def test_a_higher_fill_pressure_never_gives_a_better_verdict(gas, p, dp, t_fill, t_worst):
    def run(pressure):
        return screen_text(_case(gas, f'pressure = "{pressure:.4f} bar(g)"\ntemperature = "{t_fill:.3f} degC"',
                                 f'gas_temperature = "{t_worst:.3f} degC"')).to_json()
    assert _rank(run(p + dp)) >= _rank(run(p))


@SLOW
@given(st.sampled_from(GASES_BY_MASS), st.floats(0.0, 1.0), st.floats(-10.0, 40.0), st.floats(0.0, 70.0),
       st.floats(0.5, 5.0))
def test_adding_a_tolerance_never_gives_a_better_verdict(gas, share, t_fill, t_worst, band):
    name, lo, hi = gas
    ratio = lo + share * (hi - lo)
    plain = screen_text(_mass_case(name, ratio, t_fill, t_worst)).to_json()
    banded = screen_text(_mass_case(name, ratio, t_fill, t_worst, f'[tolerance]\ngas_temperature = "{band:.3f} K"\n')).to_json()
    assert _rank(banded) >= _rank(plain)


# ----------------------------------------------------------------------------- the batch applies the same rules

@settings(max_examples=4, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.tuples(st.sampled_from(["nitrogen", "argon", "methane", "hydrogen", "helium", "air"]),
                          st.floats(150, 350), st.floats(0.5, 1.2), st.floats(20, 40), st.floats(-40, 15),
                          st.one_of(st.none(), st.floats(1.0, 1.3))),
                min_size=20, max_size=30))
def test_batch_rows_with_a_cold_worst_case_get_the_single_case_verdict_and_limits(tmp_path_factory, items):
    from screening.batch import BatchRun
    from screening.inputs.inventory import read_inventory, row_case

    path = tmp_path_factory.mktemp("cold") / "inv.csv"
    lines = ["id,gas,water_capacity [L],rated_pressure [bar(g)],fill_pressure [bar(g)],fill_temperature [degC],"
             "ambient_max [degC],relief_set_pressure [bar(g)]"]
    for i, (g, rated, share, t, amb, relief) in enumerate(items):
        lines.append(f"R{i},{g},50,{rated:.2f},{rated * share:.2f},{t:.2f},{amb:.2f},"
                     f"{'' if relief is None else f'{rated * relief:.2f}'}")
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    inv = read_inventory(path)
    run = BatchRun(inv)
    for i, (n, cells) in enumerate(inv.rows):
        single = screen_states(row_case(inv, n, cells, None), curves=False).to_json()
        full = run.full(i).to_json()
        assert full["verdict"] == single["verdict"] and full["reasons"] == single["reasons"]
        assert full["warnings"] == single["warnings"] and full["worst_case_basis"] == single["worst_case_basis"]
        assert full["peak_pressure_pa"] == pytest.approx(single["peak_pressure_pa"], rel=1e-9)
        assert (full["limits"]["max_gas_temperature_k"] is None) == (single["limits"]["max_gas_temperature_k"] is None)
        assert full["limits"]["note"] == single["limits"]["note"]
        # the fill state is screened: never below the fill pressure
        assert full["peak_pressure_pa"] >= (single["fill"]["pressure_pa"] or 0.0) * (1 - 1e-12)
        if single["fill"]["pressure_pa"] > single["rated_pressure_pa"]:
            assert full["verdict"] == "over"


def test_a_liquefied_blend_that_is_liquid_full_at_the_worst_case_is_not_within():
    # CoolProp PropsSI on the mixture string: bubble-point liquid density of propane 60 % + n-butane 40 % by
    # mass at 40 °C; a fill at 98 % of it is liquid-full before 50 °C (the liquid expands as it warms)
    from screening.inputs.gas_spec import parse_gas

    m = parse_gas("propane 60 % + n-butane 40 % by mass")
    fluid = "HEOS::" + "&".join(f"{g.coolprop_name}[{x!r}]" for g, x in zip(m.components, m.fractions))
    rho_40 = CP.PropsSI("Dmass", "T", 313.15, "Q", 0, fluid)
    rho_50 = CP.PropsSI("Dmass", "T", 323.15, "Q", 0, fluid)
    fill = 0.98 * rho_40
    assert rho_50 < fill
    r = screen_text(_case("propane 60 % + n-butane 40 % by mass", f'mass = "{fill * 0.040:.4f} kg"\ntemperature = "15 degC"',
                          'gas_temperature = "50 degC"', 'water_capacity = "40 L"\nrated_pressure = "40 bar(g)"')).to_json()
    assert r["verdict"] != "within"
    assert any("fills the whole vessel" in x or "liquid-like" in x for x in r["reasons"])
    assert r["limits"]["max_fill_mass_kg"] <= rho_50 * 0.040 * (1 + 1e-6)
