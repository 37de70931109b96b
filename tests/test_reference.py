"""Reference model (CoolProp HEOS via AbstractState) checked against independent paths.

Independent paths: CoolProp's high-level PropsSI (separate call path from the cached AbstractState),
the `chemicals` package correlations (Lee-Kesler vapour pressure), and handbook values (named).
"""

import math

import CoolProp
import CoolProp.CoolProp as CP
import numpy as np
import pytest
from chemicals.acentric import omega
from chemicals.critical import Pc, Tc
from chemicals.vapor_pressure import Lee_Kesler
from hypothesis import given
from hypothesis import strategies as st

from screening.errors import NotApplicable
from screening.physics.eos.reference import ReferenceFluid, reference_fluid


def pure(name):
    return reference_fluid((name,), (1.0,))


def test_cached_one_instance_per_fluid():
    assert pure("Nitrogen") is pure("Nitrogen")
    assert pure("Nitrogen")._state is pure("Nitrogen")._state
    assert isinstance(pure("Nitrogen"), ReferenceFluid)


def test_constants_nitrogen():
    n2 = pure("Nitrogen")
    # source: PropsSI trivial outputs for Nitrogen (independent call path)
    assert n2.critical_temperature == pytest.approx(CP.PropsSI("Tcrit", "Nitrogen"), rel=1e-9)
    assert n2.critical_pressure == pytest.approx(CP.PropsSI("pcrit", "Nitrogen"), rel=1e-9)
    # source: the chemicals package's molar mass of nitrogen (CAS 7727-37-9), from IUPAC atomic weights
    from chemicals import MW, Tc

    assert n2.molar_mass == pytest.approx(MW("7727-37-9") / 1000.0, rel=1e-5)
    # source: the chemicals package's critical temperature of nitrogen (its IUPAC critical-data table);
    # the reference equation's critical point lies within 0.05 K of it
    assert n2.critical_temperature == pytest.approx(Tc("7727-37-9"), abs=0.05)
    assert n2.label == "Nitrogen" and not n2.is_mixture


def test_eos_references_are_readable():
    refs = pure("Nitrogen").eos_references()
    # source: CoolProp's bibliography entry for its nitrogen equation (Span, Lemmon, Jacobsen, Wagner and
    # Yokozeki, J. Phys. Chem. Ref. Data 29 (2000)), which the citation is built from
    assert "Span" in refs[0] and "2000" in refs[0] and "Nitrogen" in refs[0]
    mix = reference_fluid(("Argon", "CarbonDioxide"), (0.82, 0.18))
    assert len(mix.eos_references()) == 3


@pytest.mark.parametrize("name", ["CarbonDioxide", "Propane", "Ammonia", "SulfurHexafluoride", "NitrousOxide"])
def test_vapour_pressure_20C(name):
    f = pure(name)
    T = 293.15
    # source: PropsSI('P','T',293.15,'Q',0,name) — independent call path
    assert f.vapour_pressure(T) == pytest.approx(CP.PropsSI("P", "T", T, "Q", 0, name), rel=1e-8)
    cas = CP.get_fluid_param_string(name, "CAS")
    # source: chemicals.vapor_pressure.Lee_Kesler with chemicals' Tc, Pc, omega; corresponding-states
    # correlation, typically within ~1-2 % at reduced temperatures 0.7-1 -> 2 % tolerance
    assert f.vapour_pressure(T) == pytest.approx(Lee_Kesler(T, Tc(cas), Pc(cas), omega(cas)), rel=0.02)


def test_co2_vapour_pressure_against_the_ambrose_walton_correlation():
    # source: chemicals.vapor_pressure.Ambrose_Walton with chemicals' Tc, Pc and omega of CO2 (CAS 124-38-9):
    # a corresponding-states correlation within about 1 % of measured vapour pressures of simple fluids at
    # reduced temperatures 0.9-1 -> 1.5 % tolerance
    from chemicals.vapor_pressure import Ambrose_Walton

    cas = "124-38-9"
    expected = Ambrose_Walton(293.15, Tc(cas), Pc(cas), omega(cas))
    assert pure("CarbonDioxide").vapour_pressure(293.15) == pytest.approx(expected, rel=0.015)


def test_saturation_densities_match_propssi():
    f = pure("Propane")
    # source: PropsSI('Dmolar','T',T,'Q',0/1,'Propane')
    assert f.saturated_liquid_density(300.0) == pytest.approx(CP.PropsSI("Dmolar", "T", 300.0, "Q", 0, "Propane"), rel=1e-8)
    assert f.saturated_vapour_density(300.0) == pytest.approx(CP.PropsSI("Dmolar", "T", 300.0, "Q", 1, "Propane"), rel=1e-8)
    with pytest.raises(NotApplicable):
        f.vapour_pressure(f.critical_temperature + 1.0)


def test_nitrogen_5000K_refused():
    with pytest.raises(NotApplicable) as e:
        pure("Nitrogen").pressure(8000.0, 5000.0)
    assert e.value.valid_range and "K" in e.value.valid_range


def test_nitrogen_200barg_15C_to_65C():
    n2 = pure("Nitrogen")
    p_fill = 200e5 + 101325.0
    rho = n2.density(p_fill, 288.15)
    # source: PropsSI('Dmolar','P',p,'T',288.15,'Nitrogen')
    assert rho == pytest.approx(CP.PropsSI("Dmolar", "P", p_fill, "T", 288.15, "Nitrogen"), rel=1e-8)
    p_peak = n2.pressure(rho, 338.15)
    # source: PropsSI('P','Dmolar',rho,'T',338.15,'Nitrogen')
    assert p_peak == pytest.approx(CP.PropsSI("P", "Dmolar", rho, "T", 338.15, "Nitrogen"), rel=1e-8)
    # the ideal-gas ratio 338.15/288.15 = 1.1735; nitrogen's compressibility at 200 bar rises with T, so the
    # real ratio is larger (a plausibility band; the exact value is checked against PropsSI just above)
    assert 1.17 * p_fill < p_peak < 1.30 * p_fill
    assert n2.phase(rho, 338.15) == "supercritical"


def test_two_phase_pressure_is_vapour_pressure():
    co2 = pure("CarbonDioxide")
    rho = 750.0 / co2.molar_mass
    # source: PropsSI('P','T',280,'Q',0,'CarbonDioxide')
    psat = CP.PropsSI("P", "T", 280.0, "Q", 0, "CarbonDioxide")
    assert co2.phase(rho, 280.0) == "two-phase"
    assert co2.pressure(rho, 280.0) == pytest.approx(psat, rel=1e-6)
    # dp/dT in the dome = dpsat/dT: central difference of PropsSI saturation pressure
    h = 0.01
    slope = (CP.PropsSI("P", "T", 280.0 + h, "Q", 0, "CarbonDioxide")
             - CP.PropsSI("P", "T", 280.0 - h, "Q", 0, "CarbonDioxide")) / (2 * h)
    assert co2.dp_dt_at_constant_density(rho, 280.0) == pytest.approx(slope, rel=1e-4)


def test_density_phase_by_vapour_pressure():
    p = pure("Propane")
    ps = p.vapour_pressure(293.15)
    rl = p.density(ps * 1.01, 293.15)
    rv = p.density(ps * 0.99, 293.15)
    # source: PropsSI PT flash for Propane away from saturation
    assert rl == pytest.approx(CP.PropsSI("Dmolar", "P", ps * 1.01, "T", 293.15, "Propane"), rel=1e-7)
    assert rv == pytest.approx(CP.PropsSI("Dmolar", "P", ps * 0.99, "T", 293.15, "Propane"), rel=1e-7)
    assert p.phase(rl, 293.15) == "liquid" and p.phase(rv, 293.15) == "gas"


def test_pressure_above_pmax_refused():
    sf6 = pure("SulfurHexafluoride")
    with pytest.raises(NotApplicable):
        sf6.density(sf6.p_max * 1.5, 300.0)


def test_unknown_fluid_and_missing_binary_pair():
    with pytest.raises(NotApplicable):
        reference_fluid(("NoSuchFluid",), (1.0,))
    # source: CoolProp.get_mixture_binary_pair_data raises for Ammonia/SF6 (no parameters in CoolProp 8.0.0)
    with pytest.raises(ValueError):
        CP.get_mixture_binary_pair_data("7664-41-7", "2551-62-4", "betaT")
    with pytest.raises(NotApplicable) as e:
        reference_fluid(("Ammonia", "SulfurHexafluoride"), (0.5, 0.5))
    assert "Ammonia" in e.value.reason and "SulfurHexafluoride" in e.value.reason


def test_air_pseudo_pure():
    air = pure("Air")
    assert air.is_pseudo_pure
    # source: PropsSI('P','Dmolar',10000,'T',300,'Air')
    assert air.pressure(10000.0, 300.0) == pytest.approx(CP.PropsSI("P", "Dmolar", 10000.0, "T", 300.0, "Air"), rel=1e-8)
    # below the maxcondentherm (about 132.5 K: CoolProp's 'Air' critical point, Lemmon et al. 2000) the
    # pseudo-pure model is refused
    with pytest.raises(NotApplicable):
        air.pressure(5000.0, 120.0)


def test_mixture_ar_co2_200bar():
    mix = reference_fluid(("Argon", "CarbonDioxide"), (0.82, 0.18))
    assert mix.label == "Argon[0.82]&CarbonDioxide[0.18]" and mix.is_mixture
    p = 200e5 + 101325.0
    rho = mix.density(p, 288.15)
    # source: PropsSI on the mixture string 'HEOS::Argon[0.82]&CarbonDioxide[0.18]'
    ref = CP.PropsSI("Dmolar", "P", p, "T", 288.15, "HEOS::Argon[0.82]&CarbonDioxide[0.18]")
    assert rho == pytest.approx(ref, rel=1e-6)
    p_peak = mix.pressure(rho, 338.15)
    assert p_peak == pytest.approx(
        CP.PropsSI("P", "Dmolar", rho, "T", 338.15, "HEOS::Argon[0.82]&CarbonDioxide[0.18]"), rel=1e-6)


@pytest.mark.parametrize("z, rho, T", [((0.9, 0.1), 15000.0, 250.0), ((0.8, 0.2), 2000.0, 250.0)])
def test_co2_n2_wrong_flash_is_not_applicable(z, rho, T):
    # The plain CoolProp DmolarT flash at this state returns a single-phase "liquid" whose reverse PT flash
    # does not give the density back — shown here on an independent AbstractState:
    a = CoolProp.AbstractState("HEOS", "CarbonDioxide&Nitrogen")
    a.set_mole_fractions(list(z))
    a.update(CoolProp.DmolarT_INPUTS, rho, T)
    p_wrong = a.p()
    a.update(CoolProp.QT_INPUTS, 0, T)
    p_bubble = a.p()
    a.update(CoolProp.PT_INPUTS, p_wrong, T)
    assert abs(a.rhomolar() / rho - 1) > 0.01
    mix = reference_fluid(("CarbonDioxide", "Nitrogen"), z)
    with pytest.raises(NotApplicable):
        mix.pressure(rho, T)
    r, ok, why = mix.pressures(np.array([rho]), np.array([T]))
    assert not ok[0] and math.isnan(r[0]) and why[0]
    assert p_bubble > 0


def test_co2_n2_two_phase_not_screened():
    mix = reference_fluid(("CarbonDioxide", "Nitrogen"), (0.9, 0.1))
    with pytest.raises(NotApplicable):
        mix.pressure(10000.0, 270.0)
    # gas well below the dew pressure is accepted; source: PropsSI on 'HEOS::CarbonDioxide[0.9]&Nitrogen[0.1]'
    assert mix.pressure(500.0, 270.0) == pytest.approx(
        CP.PropsSI("P", "Dmolar", 500.0, "T", 270.0, "HEOS::CarbonDioxide[0.9]&Nitrogen[0.1]"), rel=1e-6)


def test_propane_butane_liquid():
    mix = reference_fluid(("Propane", "n-Butane"), (0.6, 0.4))
    with pytest.raises(NotApplicable):  # two-phase at 5 bar, 20 °C
        mix.density(5e5, 293.15)
    rho = mix.density(20e5, 293.15)
    assert mix.phase(rho, 293.15) == "liquid"
    # source: PropsSI on 'HEOS::Propane[0.6]&n-Butane[0.4]'
    assert rho == pytest.approx(CP.PropsSI("Dmolar", "P", 20e5, "T", 293.15, "HEOS::Propane[0.6]&n-Butane[0.4]"),
                                rel=1e-6)


def test_vectorised_equals_scalar():
    co2 = pure("CarbonDioxide")
    rng = np.random.default_rng(1)
    rho = rng.uniform(100.0, 25000.0, 400)
    T = rng.uniform(200.0, 500.0, 400)  # includes rows below the triple point (invalid)
    p, ok, why = co2.pressures(rho, T)
    assert (~ok).any() and ok.any()
    for i in range(rho.size):
        if ok[i]:
            assert p[i] == co2.pressure(rho[i], T[i]) and why[i] == ""
        else:
            assert math.isnan(p[i]) and why[i] != ""
            with pytest.raises(NotApplicable):
                co2.pressure(rho[i], T[i])


@given(st.floats(1000.0, 20000.0), st.floats(230.0, 295.0), st.floats(0.5, 20.0))
def test_pressure_rises_with_T_co2(rho, T, dT):
    co2 = pure("CarbonDioxide")
    try:
        p1, p2 = co2.pressure(rho, T), co2.pressure(rho, T + dT)
    except NotApplicable:
        return
    assert p2 > p1


@given(st.floats(2000.0, 15000.0), st.floats(250.0, 290.0), st.floats(0.5, 10.0))
def test_pressure_rises_with_T_two_phase(rho, T, dT):
    co2 = pure("CarbonDioxide")
    if co2.phase(rho, T) == "two-phase" and co2.phase(rho, T + dT) == "two-phase":
        assert co2.pressure(rho, T + dT) > co2.pressure(rho, T)


@given(st.floats(1000.0, 15000.0), st.floats(300.0, 900.0), st.floats(0.5, 50.0))
def test_pressure_rises_with_T_nitrogen_single_phase(rho, T, dT):
    n2 = pure("Nitrogen")
    assert n2.pressure(rho, T + dT) > n2.pressure(rho, T)
    assert n2.dp_dt_at_constant_density(rho, T) > 0


def test_a_binary_pair_lookup_that_raises_runtime_error_is_a_missing_pair(monkeypatch):
    # CoolProp 6 and 7 raise RuntimeError where 8 raises ValueError (CoolProp.get_mixture_binary_pair_data
    # for a pair it has no parameters for); either way the mixture is refused, never screened or a traceback.
    from screening.physics.eos import reference as ref

    def no_pair(cas1, cas2, key):
        raise RuntimeError(f"Could not match the binary pair [{cas1},{cas2}] - for now this is an error.")

    monkeypatch.setattr(ref.CP, "get_mixture_binary_pair_data", no_pair)
    with pytest.raises(NotApplicable) as e:
        ref.ReferenceFluid(("Argon", "CarbonDioxide"), (0.82, 0.18))
    assert "no binary interaction parameters" in e.value.reason
