"""Liquefied gases filled by mass: vapour pressure, liquid-full temperature and the verdict around it.

Independent checks: the reference EOS through CoolProp's PropsSI (a separate call path from the
AbstractState the tool uses), the Ambrose–Walton vapour-pressure correlation and the Rackett
saturated-liquid density as implemented in the `chemicals` package.
"""

import textwrap

import CoolProp.CoolProp as CP
import pytest
from chemicals.vapor_pressure import Ambrose_Walton
from chemicals.volume import Rackett
from scipy.optimize import brentq

from screening.cli import main
from screening.engine import screen_text
from screening.physics.gases import lookup


def mass_case(gas, litres, kg, hot, rated="250 bar(g)", extra=""):
    return textwrap.dedent(f"""\
        id = "L"
        [vessel]
        water_capacity = "{litres} L"
        rated_pressure = "{rated}"
        {extra}
        [fill]
        gas = "{gas}"
        mass = "{kg} kg"
        temperature = "15 degC"
        [exposure]
        gas_temperature = "{hot}"
        """)


def propssi_liquid_full(fluid, rho_kg_m3):
    """Temperature where the saturated-liquid density equals rho (CoolProp PropsSI, independent path)."""
    tt = CP.PropsSI("Ttriple", fluid) + 0.5
    tc = CP.PropsSI("Tcrit", fluid) - 0.01
    return brentq(lambda t: CP.PropsSI("D", "T", t, "Q", 0, fluid) - rho_kg_m3, tt, tc, xtol=1e-8)


# gas, CoolProp fluid, fill ratio [kg/L], a worst case inside the dome [degC]
LIQUEFIED = [
    ("carbon dioxide", "CarbonDioxide", 0.75, 20.0),
    ("propane", "Propane", 0.42, 50.0),
    ("ammonia", "Ammonia", 0.53, 50.0),
    ("sulfur hexafluoride", "SulfurHexafluoride", 1.04, 30.0),
]


@pytest.mark.parametrize("gas, fluid, ratio, hot", LIQUEFIED)
def test_liquid_full_temperature_matches_the_reference_eos(gas, fluid, ratio, hot):
    r = screen_text(mass_case(gas, 40, ratio * 40, f"{hot} degC")).to_json()
    # the gas's reference EOS through CoolProp PropsSI (Span & Wagner 1996 for CO2, Lemmon 2009 propane,
    # Gao 2020 ammonia, Guder & Wagner 2009 SF6)
    assert r["limits"]["liquid_full_temperature_k"] == pytest.approx(propssi_liquid_full(fluid, ratio * 1000),
                                                                      abs=0.02)


@pytest.mark.parametrize("gas, fluid, ratio, hot", LIQUEFIED)
def test_liquid_full_density_agrees_with_rackett(gas, fluid, ratio, hot):
    r = screen_text(mass_case(gas, 40, ratio * 40, f"{hot} degC")).to_json()
    g = lookup(gas)
    t_lf = r["limits"]["liquid_full_temperature_k"]
    # Rackett saturated-liquid volume (Rackett, J. Chem. Eng. Data 15 (1970) 514) via `chemicals`;
    # a corresponding-states estimate good to a few per cent away from the critical point
    v = Rackett(t_lf, g.critical_temperature, g.critical_pressure, g.critical_compressibility)
    assert g.molar_mass / v == pytest.approx(ratio * 1000, rel=0.04)


@pytest.mark.parametrize("gas, fluid, ratio, hot", LIQUEFIED)
def test_two_phase_peak_is_the_vapour_pressure(gas, fluid, ratio, hot):
    r = screen_text(mass_case(gas, 40, ratio * 40, f"{hot} degC")).to_json()
    t = hot + 273.15
    assert r["fill"]["phase"] == "two-phase"
    assert r["models"]["reference"]["phase_peak"] == "two-phase"
    # saturation pressure through CoolProp PropsSI
    assert r["peak_pressure_pa"] == pytest.approx(CP.PropsSI("P", "T", t, "Q", 0, fluid), rel=1e-6)
    # Ambrose–Walton corresponding-states vapour pressure (Ambrose & Walton 1989) via `chemicals`: ~2 %
    g = lookup(gas)
    assert r["peak_pressure_pa"] == pytest.approx(
        Ambrose_Walton(t, g.critical_temperature, g.critical_pressure, g.acentric_factor), rel=0.03)
    assert not r["models"]["ideal"]["applicable"] and not r["models"]["generalized"]["applicable"]
    assert "liquid" in r["models"]["generalized"]["note"]


@pytest.mark.parametrize("gas, fluid, ratio, hot", LIQUEFIED)
def test_verdict_flips_as_the_worst_case_crosses_the_liquid_full_point(gas, fluid, ratio, hot):
    t_lf = propssi_liquid_full(fluid, ratio * 1000) - 273.15   # CoolProp PropsSI
    below = screen_text(mass_case(gas, 40, ratio * 40, f"{t_lf - 1.0:.3f} degC", rated="500 bar(g)")).to_json()
    above = screen_text(mass_case(gas, 40, ratio * 40, f"{t_lf + 0.5:.3f} degC", rated="500 bar(g)")).to_json()
    assert below["verdict"] == "within"
    assert above["verdict"] != "within"
    assert any("liquid fills the whole vessel" in x for x in above["reasons"])
    # above the liquid-full point the pressure rises by many bar per kelvin
    assert any("bar per kelvin" in x for x in above["reasons"])


def test_fill_above_the_maximum_filling_ratio_is_over():
    r = screen_text(mass_case("carbon dioxide", 40, 32, "10 degC", extra='max_filling_ratio = "0.75 kg/L"')).to_json()
    assert r["verdict"] == "over"
    assert any("maximum filling ratio" in x for x in r["reasons"])


def test_mass_limit_keeps_the_vessel_off_the_liquid_full_point():
    r = screen_text(mass_case("propane", 40, 16.8, "70 degC", rated="30 bar(g)")).to_json()
    lim = r["limits"]
    assert r["verdict"] != "within"
    # at the limit the fill density is no more than the saturated liquid at 70 degC (CoolProp PropsSI)
    assert lim["max_filling_ratio_kg_per_l"] * 1000 <= CP.PropsSI("D", "T", 343.15, "Q", 0, "Propane") * (1 + 1e-6)
    again = screen_text(mass_case("propane", 40, lim["max_fill_mass_kg"] * 0.995, "70 degC", rated="30 bar(g)")).to_json()
    assert again["verdict"] == "within"


def test_propane_butane_mixture_is_never_screened_as_a_gas():
    text = mass_case("propane 60% + n-butane 40%", 26, 11, "50 degC", rated="30 bar(g)")
    r = screen_text(text).to_json()
    assert not r["models"]["ideal"]["applicable"] and not r["models"]["generalized"]["applicable"]
    assert r["verdict"] != "within" or r["models"]["reference"]["applicable"]


@pytest.mark.parametrize("old, new, key, words", [
    ('mass = "31.5 kg"', 'mass = "-3 kg"', "fill.mass", "above zero"),
    ('mass = "31.5 kg"', 'mass = "80 kg"', "fill.mass", "triple point"),
    ('mass = "31.5 kg"', 'mass = "31.5 kg"\npressure = "50 bar(g)"', "fill.mass", "not both"),
])
def test_bad_mass_fills_exit_2(tmp_path, capsys, old, new, key, words):
    text = mass_case("carbon dioxide", 40, 31.5, "40 degC").replace(old, new)
    path = tmp_path / "c.toml"
    path.write_text(text)
    with pytest.raises(SystemExit) as exc:
        main(["check", str(path)])
    err = capsys.readouterr().err
    assert exc.value.code == 2
    assert f"'{key}'" in err and words in err and str(path) in err
