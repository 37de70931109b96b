"""Checks of the Lee–Kesler generalized model against sources outside the project.

Sources used: CoolProp 8 reference equations of state (its own critical constants and
acentric factors), the `chemicals` package (Lee–Kesler vapour pressure, Abbott second
virial coefficient), and hand arithmetic.
"""

import sys

import CoolProp.CoolProp as CP
import numpy as np
import pytest
from chemicals.vapor_pressure import Lee_Kesler as chemicals_lee_kesler_psat
from chemicals.virial import BVirial_Abbott
from hypothesis import given
from hypothesis import strategies as st

from screening.constants import R
from screening.errors import InputError, NotApplicable
from screening.physics.eos.generalized import (
    LK_REDUCED_PRESSURE_RANGE,
    LK_REDUCED_TEMPERATURE_RANGE,
    GeneralizedState,
    kay_pseudocritical,
    lee_kesler_density,
    lee_kesler_pressure,
    lee_kesler_vapour_pressure,
    lee_kesler_z,
    pseudocritical,
    quantum_effective_critical,
)


def critical(fluid):
    """Critical temperature [K], pressure [Pa] and acentric factor of CoolProp's EOS for fluid."""
    return (CP.PropsSI("Tcrit", fluid), CP.PropsSI("pcrit", fluid), CP.PropsSI("acentric", fluid))


# ---------------------------------------------------------------- independent sources


def test_n_butane_at_a_moderate_reduced_pressure_against_its_reference_equation():
    # n-butane at 510 K and 25 bar (T_r = 1.20, P_r = 0.659), a gas state of the model's middle range: its Z
    # against CoolProp's n-butane equation of state (PropsSI, evaluated here; Z = 0.8744 there), with the
    # fluid's constants as CoolProp gives them. Tolerance 1 %: the two differ by 0.24 % here.
    tc, pc, om = critical("n-Butane")
    z_ref = CP.PropsSI("Z", "T", 510.0, "P", 25e5, "n-Butane")
    z = float(lee_kesler_z(510.0 / tc, 25e5 / pc, om))
    assert z == pytest.approx(z_ref, rel=0.01)


def test_simple_fluid_low_pressure_against_abbott_second_virial():
    # chemicals.virial.BVirial_Abbott (Abbott's B0/B1 correlation, Smith, Van Ness & Abbott
    # eq. for B P_c/(R T_c)): at P_r = 0.01 Z = 1 + B P/(R T) to within the virial truncation
    # (~(B P/RT)^2 ~ 1e-5) and the difference between the two correlations' B (a few
    # percent of B P/RT ~ 5e-3 at T_r = 1, so ~2e-4).
    tc, pc = 100.0, 1.0e6
    tr = np.array([1.0, 1.5, 2.0, 3.0, 4.0])
    pr = 0.01
    z_lk = lee_kesler_z(tr, pr, 0.0)
    b = np.array([BVirial_Abbott(t * tc, tc, pc, 0.0) for t in tr])
    z_virial = 1.0 + b * pr * pc / (R * tr * tc)
    assert np.all(np.abs(z_lk - z_virial) < 2e-4)


def test_vapour_pressure_matches_chemicals():
    # chemicals.vapor_pressure.Lee_Kesler: the same LK vapour-pressure equation, independently coded.
    tc, pc = 369.83, 4.248e6
    for t, w in [(200.0, 0.152), (300.0, 0.152), (250.0, 0.0), (340.0, 0.3)]:
        expected = chemicals_lee_kesler_psat(t, tc, pc, w)
        assert float(lee_kesler_vapour_pressure(t / tc, w)) * pc == pytest.approx(expected, rel=1e-12)


# ---------------------------------------------------------------- CoolProp reference EOS

FILL_PRESSURE = 200e5 + 101325.0    # 200 bar gauge on a standard atmosphere [Pa]
FILL_T = 288.15                      # [K]
HOT_T = 338.15                       # [K]


@pytest.mark.parametrize("fluid", ["Nitrogen", "Methane", "Argon"])
def test_fill_density_and_hot_pressure_against_coolprop(fluid):
    tc, pc, w = critical(fluid)
    # CoolProp reference EOS for the fluid (Span et al. nitrogen, Setzmann–Wagner methane,
    # Tegeler et al. argon, as shipped in CoolProp 8).
    rho_ref = CP.PropsSI("Dmolar", "T", FILL_T, "P", FILL_PRESSURE, fluid)
    p_hot_ref = CP.PropsSI("P", "T", HOT_T, "Dmolar", rho_ref, fluid)

    fill = lee_kesler_density(FILL_PRESSURE, FILL_T, tc, pc, w).require()
    # Lee & Kesler (1975) report Z of simple, nonpolar gases to about 1-2 %; 1.5 % is used.
    assert float(fill.molar_density) == pytest.approx(rho_ref, rel=0.015)

    # Direct: LK pressure at CoolProp's density, same 1.5 % basis.
    direct = lee_kesler_pressure(rho_ref, HOT_T, tc, pc, w).require()
    assert float(direct.pressure) == pytest.approx(p_hot_ref, rel=0.015)

    # The screening's chain (fill by LK, heat by LK): the fill error largely cancels; ~1 % asked.
    hot = lee_kesler_pressure(fill.molar_density, HOT_T, tc, pc, w).require()
    assert float(hot.pressure) == pytest.approx(p_hot_ref, rel=0.01)


def test_pressure_array_against_coolprop_nitrogen():
    # CoolProp nitrogen reference EOS at 300 K over a density sweep (P_r up to ~8.5).
    tc, pc, w = critical("Nitrogen")
    rho = np.linspace(50.0, 9000.0, 25)
    expected = np.array([CP.PropsSI("P", "T", 300.0, "Dmolar", r, "Nitrogen") for r in rho])
    state = lee_kesler_pressure(rho, 300.0, tc, pc, w).require()
    # Lee & Kesler (1975) accuracy of ~1-2 % for simple gases: 1.5 %.
    np.testing.assert_allclose(state.pressure, expected, rtol=0.015)


def test_carbon_dioxide_hot_supercritical_against_coolprop():
    # CoolProp CO2 reference EOS (Span–Wagner) at 338.15 K, T_r = 1.11 (near-critical, harder).
    tc, pc, w = critical("CarbonDioxide")
    rho = np.array([500.0, 2000.0, 5000.0])
    expected = np.array([CP.PropsSI("P", "T", 338.15, "Dmolar", r, "CarbonDioxide") for r in rho])
    state = lee_kesler_pressure(rho, 338.15, tc, pc, w).require()
    # 2 %: the deviation Lee & Kesler (1975) state for nonpolar fluids near the critical region (not
    # independently checked against the paper here).
    np.testing.assert_allclose(state.pressure, expected, rtol=0.02)


# ---------------------------------------------------------------- solver properties


def test_round_trip_density_pressure():
    # Identity of the model itself: density at P, then pressure at that density, gives P back.
    tc, pc, w = critical("Methane")
    p = np.array([1e5, 5e6, 2e7, 3e7, 4.5e7])
    t = np.array([200.0, 250.0, 288.15, 338.15, 400.0])
    d = lee_kesler_density(p, t, tc, pc, w).require()
    back = lee_kesler_pressure(d.molar_density, t, tc, pc, w).require()
    np.testing.assert_allclose(back.pressure, p, rtol=1e-9)
    np.testing.assert_allclose(back.z, d.z, rtol=1e-9)


def test_round_trip_low_reduced_temperature_high_pressure():
    # T_r = 1.2 at P_r up to 10, omega of a heavier gas: the solve must still converge.
    tc, pc, w = 300.0, 4.0e6, 0.25
    pr = np.array([0.5, 2.0, 5.0, 8.0, 10.0])
    d = lee_kesler_density(pr * pc, 1.2 * tc, tc, pc, w).require()
    back = lee_kesler_pressure(d.molar_density, 1.2 * tc, tc, pc, w).require()
    np.testing.assert_allclose(back.reduced_pressure, pr, rtol=1e-9)


@given(tr=st.floats(0.5, 4.0), omega=st.floats(-0.1, 0.6))
def test_ideal_limit(tr, omega):
    # Z -> 1 as P_r -> 0; below ~10 kPa gases behave ideally (common practice, no source):
    # at P_r = 1e-4 the second-virial term is |B P/RT| < 1e-3 for T_r >= 0.5.
    pr = 1e-4
    if tr < 1.0 and pr > float(lee_kesler_vapour_pressure(tr, omega)):
        return
    assert abs(float(lee_kesler_z(tr, pr, omega)) - 1.0) < 1e-3
    assert abs(float(lee_kesler_z(tr, 1e-8, omega)) - 1.0) < 1e-6


@given(rho=st.floats(10.0, 8000.0), t=st.floats(250.0, 450.0), dt=st.floats(1.0, 50.0))
def test_pressure_rises_with_temperature_at_fixed_density(rho, t, dt):
    # Physical requirement for a gas: (dP/dT) at fixed density is positive.
    tc, pc, w = critical("Nitrogen")
    s = lee_kesler_pressure([rho, rho], [t, t + dt], tc, pc, w)
    if not np.all(s.valid):
        return
    assert s.pressure[1] > s.pressure[0]


@given(st.lists(st.tuples(st.floats(20.0, 12000.0), st.floats(150.0, 500.0), st.floats(-0.05, 0.5)),
                min_size=1, max_size=12))
def test_vectorised_equals_elementwise(rows):
    tc, pc = 190.0, 4.6e6
    rho, t, w = (np.array(c) for c in zip(*rows))
    whole = lee_kesler_pressure(rho, t, tc, pc, w)
    for i in range(len(rows)):
        one = lee_kesler_pressure(rho[i:i + 1], t[i:i + 1], tc, pc, w[i:i + 1])
        assert bool(one.valid[0]) == bool(whole.valid[i])
        assert one.reason[0] == whole.reason[i]
        if one.valid[0]:
            assert one.pressure[0] == pytest.approx(whole.pressure[i], rel=1e-12)


def test_shapes_broadcast():
    s = lee_kesler_pressure(np.full((2, 3), 1000.0), np.array([300.0, 320.0, 340.0]), 126.2, 3.4e6, 0.037)
    for field in ("pressure", "molar_density", "z", "reduced_temperature", "reduced_pressure", "valid",
                  "reason"):
        assert getattr(s, field).shape == (2, 3)


# ---------------------------------------------------------------- validity


def test_ranges_are_the_published_table_range():
    # Lee & Kesler (1975) tables span T_r 0.3-4 and P_r 0.01-10 (not independently checked against the
    # paper here; the span the module docstring states).
    assert LK_REDUCED_TEMPERATURE_RANGE == (0.3, 4.0)
    assert LK_REDUCED_PRESSURE_RANGE == (0.0, 10.0)


def test_helium_hot_is_not_applicable():
    # Helium, classical T_c0 = 10.47 K, P_c0 = 6.76 bar (the gas library's quantum constants, source
    # 'gcp-quantum' in gases.toml),
    # at 338 K: effective T_c ~ 10.3 K, T_r ~ 33 > 4.
    tc, pc = quantum_effective_critical(10.47, 6.76e5, 4.0026e-3, 338.0)
    s = lee_kesler_pressure(8000.0, 338.0, tc, pc, 0.0)
    assert not s.valid[()] if s.valid.ndim == 0 else not s.valid[0]
    assert np.isnan(s.pressure).all()
    assert "reduced temperature 3" in str(s.reason.reshape(-1)[0])
    assert "above the Lee–Kesler range (0.3 to 4)" in str(s.reason.reshape(-1)[0])
    with pytest.raises(NotApplicable) as err:
        s.require()
    assert err.value.valid_range == "reduced temperature 0.3 to 4"
    assert err.value.value == pytest.approx(338.0 / float(tc))


def test_pressure_above_range_is_flagged_with_value():
    tc, pc, w = critical("Nitrogen")
    s = lee_kesler_density(np.array([2e7, 4e7]), 300.0, tc, pc, w)   # P_r 5.9 and 11.8
    assert list(s.valid) == [True, False]
    assert s.reason[0] == ""
    assert s.reason[1] == "reduced pressure 11.78 is above the Lee–Kesler range (0 to 10)"
    assert np.isnan(s.z[1]) and np.isnan(s.molar_density[1])
    with pytest.raises(NotApplicable, match="reduced pressure 11.78"):
        s.require()
    # and from the fixed-density side, the reduced pressure reached is named
    hot = lee_kesler_pressure(14000.0, 300.0, tc, pc, w)
    assert not hot.valid[()]
    assert "above the Lee–Kesler range (0 to 10)" in str(hot.reason[()])


def test_liquid_like_states_are_flagged():
    # CO2 at 288.15 K and 200 bar is a compressed liquid (CoolProp Span–Wagner: density > 800 kg/m3).
    tc, pc, w = critical("CarbonDioxide")
    assert CP.PropsSI("D", "T", 288.15, "P", FILL_PRESSURE, "CarbonDioxide") > 800.0
    s = lee_kesler_density(FILL_PRESSURE, 288.15, tc, pc, w)
    assert not s.valid[()]
    assert "liquid" in str(s.reason[()])
    # Fixed density inside the two-phase dome at 280 K (CoolProp: saturated vapour ~ 3.0 kmol/m3,
    # saturated liquid ~ 20 kmol/m3), 10 kmol/m3 is two-phase: not a gas state.
    assert CP.PropsSI("Dmolar", "T", 280.0, "Q", 1, "CarbonDioxide") < 10000.0
    assert CP.PropsSI("Dmolar", "T", 280.0, "Q", 0, "CarbonDioxide") > 10000.0
    two_phase = lee_kesler_pressure(10000.0, 280.0, tc, pc, w)
    assert not two_phase.valid[()]
    assert "liquid-like or two-phase" in str(two_phase.reason[()])
    with pytest.raises(NotApplicable):
        lee_kesler_z(0.8, 5.0, 0.2)


def test_metastable_vapour_above_vapour_pressure_is_flagged():
    # T_r = 0.7, omega = 0: LK vapour pressure P_r = 0.1 (definition of omega); P_r = 0.12 is
    # above it, so the stable state is liquid even if the equation has a vapour-like root there.
    with pytest.raises(NotApplicable, match="vapour pressure"):
        lee_kesler_z(0.7, 0.12, 0.0)
    assert float(lee_kesler_z(0.7, 0.08, 0.0)) < 1.0


def test_bad_inputs_raise_input_error():
    with pytest.raises(InputError):
        lee_kesler_pressure(-1.0, 300.0, 126.2, 3.4e6, 0.04)
    with pytest.raises(InputError):
        lee_kesler_density(1e5, float("nan"), 126.2, 3.4e6, 0.04)
    with pytest.raises(InputError):
        lee_kesler_z(1.5, 0.0, 0.0)


def test_state_require_returns_self_when_valid():
    s = lee_kesler_density(1e6, 300.0, 126.2, 3.4e6, 0.04)
    assert isinstance(s, GeneralizedState)
    assert s.require() is s


# ---------------------------------------------------------------- pseudocriticals


def test_kay_rule_two_components():
    # Hand arithmetic: 0.25*100 + 0.75*200 = 175 K; 0.25*1e6 + 0.75*3e6 = 2.5e6 Pa;
    # 0.25*0.0 + 0.75*0.2 = 0.15.
    tc, pc, w = kay_pseudocritical([0.25, 0.75], [100.0, 200.0], [1e6, 3e6], [0.0, 0.2])
    assert tc == pytest.approx(175.0, rel=1e-15)
    assert pc == pytest.approx(2.5e6, rel=1e-15)
    assert w == pytest.approx(0.15, rel=1e-15)
    with pytest.raises(InputError):
        kay_pseudocritical([0.3, 0.3], [100.0, 200.0], [1e6, 3e6], [0.0, 0.2])


def test_quantum_correction_hydrogen_300k():
    # Hand arithmetic from the Gunn–Chueh–Prausnitz formula with the classical hydrogen
    # constants T_c0 = 43.6 K, P_c0 = 20.5 bar (the gas library's source 'gcp-quantum'), M = 2.016:
    # M T = 604.8; T_c = 43.6/(1 + 21.8/604.8) = 43.6/1.0360450 = 42.08315 K;
    # P_c = 20.5/(1 + 44.2/604.8) = 20.5/1.0730820 = 19.10384 bar.
    tc, pc = quantum_effective_critical(43.6, 20.5e5, 2.016e-3, 300.0)
    assert float(tc) == pytest.approx(42.08315, rel=1e-6)
    assert float(pc) == pytest.approx(19.10384e5, rel=1e-6)


def test_pseudocritical_mixture_with_quantum_component():
    # 50 % hydrogen (quantum) + 50 % nitrogen at 300 K: Kay's rule on (42.08315 K, 19.10384 bar,
    # omega 0) and nitrogen (126.192 K, 33.958 bar, 0.0372), hand arithmetic:
    # T = 84.137575 K, P = 26.53092 bar, omega = 0.0186.
    t = np.array([300.0, 300.0])  # two identical rows: temperature broadcasts over the leading axis
    tc, pc, w = pseudocritical(
        fractions=[0.5, 0.5], tc=[33.145, 126.192], pc=[12.964e5, 33.958e5], omega=[-0.219, 0.0372],
        molar_mass=[2.016e-3, 28.0134e-3], quantum=[True, False],
        tc_classical=[43.6, np.nan], pc_classical=[20.5e5, np.nan], temperature=t)
    np.testing.assert_allclose(tc, 84.137575, rtol=1e-6)
    np.testing.assert_allclose(pc, 26.53092e5, rtol=1e-6)
    np.testing.assert_allclose(w, 0.0186, rtol=1e-12)


# ---------------------------------------------------------------- quantum gases above the Lee–Kesler range

from screening.physics.eos.generalized import (  # noqa: E402
    SRK_QUANTUM_Z_ERROR,
    srk_quantum_density,
    srk_quantum_pressure,
)

# classical constants of Gunn, Chueh & Prausnitz as in the gas library (gcp-quantum source)
QUANTUM = {"hydrogen": ("Hydrogen", 43.6, 2077162.5, 2.01588e-3),
           "helium": ("Helium", 10.47, 675837.75, 4.002602e-3),
           "neon": ("Neon", 45.5, 2766172.5, 20.1797e-3)}


@pytest.mark.parametrize("gas", sorted(QUANTUM))
@given(t=st.floats(233.15, 423.15), p_bar=st.floats(1.0, 1000.0))
def test_quantum_gas_srk_z_is_within_its_stated_bound(gas, t, p_bar):
    fluid, tc0, pc0, m = QUANTUM[gas]
    s = srk_quantum_density(p_bar * 1e5, t, tc0, pc0, m)
    assert bool(s.valid[()])
    # source: CoolProp PropsSI, the reference equation of the gas (Leachman 2009, Ortiz-Vega 2019, Katti 1986)
    z_ref = CP.PropsSI("Z", "P", p_bar * 1e5, "T", t, fluid)
    assert float(s.z[()]) == pytest.approx(z_ref, rel=SRK_QUANTUM_Z_ERROR[gas])


@pytest.mark.parametrize("gas", sorted(QUANTUM))
def test_quantum_gas_srk_matches_thermo_srk_with_the_same_constants(gas):
    from thermo import SRK
    _, tc0, pc0, m = QUANTUM[gas]
    t, p = 300.0, 700e5
    tc, pc = quantum_effective_critical(tc0, pc0, m, t)
    # source: thermo's SRK class (an independent implementation of Soave 1972) with omega = 0
    eos = SRK(Tc=float(tc), Pc=float(pc), omega=0.0, T=t, P=p)
    s = srk_quantum_density(p, t, tc0, pc0, m)
    v = eos.V_g if hasattr(eos, "V_g") else eos.V_l   # one root above the critical temperature
    assert float(s.molar_density[()]) == pytest.approx(1.0 / v, rel=1e-9)
    back = srk_quantum_pressure(s.molar_density, t, tc0, pc0, m)
    assert float(back.pressure[()]) == pytest.approx(p, rel=1e-10)


def test_quantum_gas_srk_refuses_outside_its_checked_range():
    _, tc0, pc0, m = QUANTUM["hydrogen"]
    s = srk_quantum_density(np.array([500e5, 1200e5, 500e5]), np.array([300.0, 300.0, 500.0]), tc0, pc0, m)
    assert list(s.valid) == [True, False, False]
    assert "up to 1000 bar" in s.reason[1] and "233.15 K to 423.15 K" in s.reason[2]
    assert np.isnan(s.molar_density[1:]).all()


@pytest.mark.parametrize("gas, fluid, fill", [("hydrogen", "Hydrogen", 700.0), ("hydrogen", "Hydrogen", 200.0),
                                               ("helium", "Helium", 300.0), ("neon", "Neon", 200.0)])
def test_quantum_gas_cylinder_has_two_real_gas_models(gas, fluid, fill):
    from screening.engine import screen_text
    from screening.screen import MODEL_DISAGREEMENT_WARNING
    text = (f'id = "Q"\n[vessel]\nwater_capacity = "50 L"\nrated_pressure = "1050 bar(g)"\n'
            f'[fill]\ngas = "{gas}"\npressure = "{fill} bar(g)"\ntemperature = "15 degC"\n'
            '[exposure]\ngas_temperature = "65 degC"\n')
    r = screen_text(text).to_json()
    gen, ref = r["models"]["generalized"], r["models"]["reference"]
    assert gen["applicable"] and ref["applicable"], gen["note"]
    assert gen["method"].startswith("Soave–Redlich–Kwong")
    # source: CoolProp PropsSI, the gas's reference equation (fill density, then the peak on its isochore)
    rho = CP.PropsSI("Dmolar", "P", fill * 1e5 + 101325.0, "T", 288.15, fluid)
    p_ref = CP.PropsSI("P", "Dmolar", rho, "T", 338.15, fluid)
    # the peak follows from two Z values, each within the model's measured bound
    assert gen["peak_pressure_pa"] == pytest.approx(p_ref, rel=2.5 * SRK_QUANTUM_Z_ERROR[gas])
    diff = abs(gen["peak_pressure_pa"] - ref["peak_pressure_pa"]) / ref["peak_pressure_pa"]
    warned = any(w["code"] == "models-disagree" for w in r["warnings"])
    assert warned == (diff > MODEL_DISAGREEMENT_WARNING)


def test_results_do_not_depend_on_how_many_states_share_a_call():
    # A state's Lee–Kesler numbers are the same, bit for bit, whether it is solved alone (small arrays run
    # element by element) or among 500 others (the array loop): a batch's output cannot depend on its chunks.
    import screening.physics.eos.generalized as gen

    rng = np.random.default_rng(20261203)
    t = rng.uniform(100.0, 650.0, 500)
    p = rng.uniform(1e4, 4.5e7, 500)
    # nitrogen's critical constants and acentric factor as CoolProp gives them
    tc, pc, om = CP.PropsSI("Tcrit", "Nitrogen"), CP.PropsSI("pcrit", "Nitrogen"), CP.PropsSI("acentric", "Nitrogen")
    together = lee_kesler_density(p, t, tc, pc, om)
    rho = np.where(together.valid, together.molar_density, 2000.0)
    peak_together = lee_kesler_pressure(rho, 1.2 * t, tc, pc, om)
    assert gen._SCALAR_MAX < 500
    for i in range(0, 500, 7):
        alone = lee_kesler_density(p[i:i + 3], t[i:i + 3], tc, pc, om)
        peak_alone = lee_kesler_pressure(rho[i:i + 3], 1.2 * t[i:i + 3], tc, pc, om)
        for a, b in ((alone, together), (peak_alone, peak_together)):
            for f in ("pressure", "molar_density", "z", "valid"):
                np.testing.assert_array_equal(getattr(a, f), getattr(b, f)[i:i + 3])
            assert list(a.reason) == list(b.reason[i:i + 3])


def test_density_without_reasons_is_the_density_with_them():
    from screening.physics.eos.generalized import lee_kesler_density_valid

    rng = np.random.default_rng(7)
    t = rng.uniform(60.0, 700.0, 400)
    p = rng.uniform(1e4, 6e7, 400)
    # methane's critical constants and acentric factor as CoolProp gives them
    tc, pc, om = CP.PropsSI("Tcrit", "Methane"), CP.PropsSI("pcrit", "Methane"), CP.PropsSI("acentric", "Methane")
    full = lee_kesler_density(p, t, tc, pc, om)
    rho, valid = lee_kesler_density_valid(p, t, tc, pc, om)
    assert 0 < valid.sum() < valid.size            # both valid and refused states are compared
    np.testing.assert_array_equal(valid, full.valid)
    np.testing.assert_array_equal(rho, full.molar_density)


def _fields_equal(a, b, sel):
    for f in ("pressure", "molar_density", "z", "reduced_temperature", "reduced_pressure", "valid"):
        np.testing.assert_array_equal(getattr(a, f), getattr(b, f)[sel])
    assert list(a.reason) == list(b.reason[sel])


@pytest.mark.parametrize("size", [1, 2, 8, 9, 10, 40])
def test_small_calls_give_the_numbers_and_reasons_of_the_array_path(size):
    # Calls of up to 40 elements solve each element on floats and hand only the elements that are not valid (or
    # whose coupled Newton does not settle on the gas branch) to the array path; every number and reason must be
    # those of the same state solved among 600 others (the array path throughout), bit for bit, whatever the mix
    # of valid and refused elements and whether the constants come as floats or arrays.
    from screening.physics.eos.generalized import lee_kesler_density_valid

    rng = np.random.default_rng(size)
    n = 600
    # propane's critical constants and acentric factor as CoolProp gives them (states on both sides of T_c,
    # below the LK range, liquid-like, above P_r = 10)
    tc, pc, om = CP.PropsSI("Tcrit", "Propane"), CP.PropsSI("pcrit", "Propane"), CP.PropsSI("acentric", "Propane")
    t = rng.uniform(80.0, 1600.0, n)
    p = rng.uniform(1e4, 5e7, n)
    rho = rng.uniform(10.0, 12000.0, n)
    together_p = lee_kesler_pressure(rho, t, tc, pc, om)
    together_d = lee_kesler_density(p, t, tc, pc, om)
    rho_v, ok_v = lee_kesler_density_valid(p, t, tc, pc, om)
    assert 0 < together_p.valid.sum() < n and 0 < together_d.valid.sum() < n
    for i in range(0, n - size, max(size, 23)):
        sel = slice(i, i + size)
        for consts in ((tc, pc, om), (np.full(size, tc), np.full(size, pc), np.full(size, om))):
            _fields_equal(lee_kesler_pressure(rho[sel], t[sel], *consts), together_p, sel)
            _fields_equal(lee_kesler_density(p[sel], t[sel], *consts), together_d, sel)
            r, ok = lee_kesler_density_valid(p[sel], t[sel], *consts)
            np.testing.assert_array_equal(r, rho_v[sel])
            np.testing.assert_array_equal(ok, ok_v[sel])


def test_small_calls_check_every_argument():
    # The quick test of the arguments lets nothing through that the detailed checks refuse.
    from screening.physics.eos.generalized import lee_kesler_density_valid

    good = [np.array([5000.0, 6000.0]), np.array([300.0, 310.0]), 126.2, 3.4e6, 0.04]
    for k in range(5):
        for bad in (np.nan, np.inf, -np.inf, 0.0, -1.0):
            if k == 4 and bad in (0.0, -1.0):
                continue                       # an acentric factor may be zero or negative
            args = list(good)
            args[k] = np.array([bad, 1.0]) if k < 2 else bad
            for fn in (lee_kesler_pressure, lee_kesler_density, lee_kesler_density_valid):
                with pytest.raises(InputError):
                    fn(*args)
    assert bool(np.all(lee_kesler_pressure(*good).valid))


def test_quantum_srk_newton_of_a_few_elements_is_the_array_newton(monkeypatch):
    # The SRK density's Newton runs on floats for a few elements, in the same lockstep as the array loop:
    # the same Z bit for bit.
    import screening.physics.eos.generalized as gen

    rng = np.random.default_rng(3)
    for size in (1, 2, 5, gen._SCALAR_MAX_NEWTON):
        for _ in range(40):
            c1 = rng.uniform(-0.5, 3.0, size)
            c0 = -rng.uniform(0.0, 2.0, size)
            z = 1.0 + np.maximum(1.0, np.maximum(np.abs(c1), np.abs(c0))) + 1.0
            za, ca = gen._srk_newton(z, c1, c0)
            zf, cf = gen._srk_newton_few(z, c1, c0)
            np.testing.assert_array_equal(zf, za)
            np.testing.assert_array_equal(cf, ca)
    # and through the public function (helium, its classical constants from the gas library), in and out of
    # the model's checked range
    _fluid, tc0, pc0, m = QUANTUM["helium"]
    p = rng.uniform(1e5, 1.2e8, 60)
    t = rng.uniform(200.0, 450.0, 60)
    small = [srk_quantum_density(p[i:i + 3], t[i:i + 3], tc0, pc0, m) for i in range(0, 60, 3)]
    monkeypatch.setattr(gen, "_SCALAR_MAX_NEWTON", 0)        # the array loop for every size
    for i, s in zip(range(0, 60, 3), small):
        _fields_equal(s, srk_quantum_density(p[i:i + 3], t[i:i + 3], tc0, pc0, m), slice(None))


@pytest.mark.parametrize("size", [41, 300, 5001])
def test_both_fluids_gas_roots_in_one_loop_are_each_fluids_own(size, monkeypatch):
    # _gas_roots solves the simple and the reference fluid's gas roots of a call in one array loop (in blocks of
    # _BLOCK states, its last few open elements handed to the float loop); each element's numbers must be those of
    # its own fluid solved element by element on floats from the start (_gas_root_few), bit for bit: gas states on
    # both sides of T_c, near the critical point (slow to settle), liquid-like pressures (no gas root) and
    # elements left out (inactive).
    import screening.physics.eos.generalized as gen

    rng = np.random.default_rng(size)
    tr = rng.uniform(0.3, 4.0, size)
    pr = rng.uniform(1e-3, 12.0, size)
    near = rng.random(size) < 0.3
    tr[near] = rng.uniform(0.98, 1.02, near.sum())
    pr[near] = rng.uniform(0.9, 1.1, near.sum())
    active = rng.random(size) < 0.9
    continued = []
    one = gen._gas_root_one

    def count(*args):
        continued.append(len(args) > 4 and args[7] > 0)
        return one(*args)
    monkeypatch.setattr(gen, "_gas_root_one", count)
    simple, reference = gen._gas_roots(tr, pr, active)
    assert any(continued)                           # some elements went on on floats
    monkeypatch.setattr(gen, "_gas_root_one", one)
    assert (size > gen._BLOCK) == (size == 5001)
    for consts, got in ((gen._SIMPLE, simple), (gen._REFERENCE, reference)):
        want = gen._gas_root_few(consts, tr, pr, active, tr.shape)
        assert got[3].any() and got[4].any()        # both no-root and converged elements are compared
        for g, w in zip(got, want):
            assert g.tobytes() == w.tobytes()


def _refused_without_solve(monkeypatch):
    """Counts the states lee_kesler_pressure_valid refuses without the bracketed solve."""
    import screening.physics.eos.generalized as gen

    counted = []
    original = gen._no_gas_state_up_to_cap

    def count(*args):
        out = original(*args)
        counted.append(int(out.sum()))
        return out
    monkeypatch.setattr(gen, "_no_gas_state_up_to_cap", count)
    return counted


@pytest.mark.parametrize("fluid", ["Krypton", "Argon", "Xenon", "Methane", "Propane", "Hydrogen"])
def test_pressure_without_reasons_is_the_pressure_with_them(fluid, monkeypatch):
    # lee_kesler_pressure_valid refuses states that have no gas state up to the highest pressure the model accepts
    # without solving for their pressure; its pressures and validity must be lee_kesler_pressure's, bit for bit,
    # on hot states above P_r = 10, near-critical states inside the dome, and calls of a few and of many elements.
    from screening.physics.eos.generalized import lee_kesler_pressure_valid

    refused = _refused_without_solve(monkeypatch)
    # the fluid's critical constants and acentric factor as CoolProp gives them
    tc, pc, om = critical(fluid)
    rho_c = CP.PropsSI("rhomolar_critical", fluid)
    rng = np.random.default_rng(len(fluid))
    for n in (1, 7, 40, 300, 2000):
        for t_lo, t_hi, r_lo, r_hi in ((0.3, 4.0, 0.01, 3.0), (0.95, 1.05, 0.3, 2.5), (1.5, 3.9, 0.5, 3.0)):
            t = rng.uniform(t_lo, t_hi, n) * tc
            rho = rng.uniform(r_lo, r_hi, n) * rho_c
            full = lee_kesler_pressure(rho, t, tc, pc, om)
            p, ok = lee_kesler_pressure_valid(rho, t, tc, pc, om)
            np.testing.assert_array_equal(ok, full.valid)
            assert p.tobytes() == full.pressure.tobytes()
    if fluid != "Hydrogen":         # a = omega / omega_r = -0.55: the gas volume's fall is not known there
        assert sum(refused) > 100


@pytest.mark.parametrize("fluid", ["Krypton", "Argon", "Methane", "Xenon"])
def test_states_refused_without_solve_are_above_the_range_by_the_reference_equation(fluid):
    # The hot dense states refused without a solve are those whose pressure is above P_r = 10: CoolProp's
    # reference equation puts them there too (within the model's few per cent).
    import screening.physics.eos.generalized as gen

    # the fluid's critical constants and acentric factor as CoolProp gives them
    tc, pc, om = critical(fluid)
    rng = np.random.default_rng(5)
    n = 600
    t = rng.uniform(1.1, 3.9, n) * tc
    rho = rng.uniform(0.3, 3.0, n) * CP.PropsSI("rhomolar_critical", fluid)
    sure = gen._no_gas_state_up_to_cap(t / tc, pc / (rho * R * tc), np.full(n, om), np.ones(n, dtype=bool))
    assert 50 < sure.sum() < n
    full = lee_kesler_pressure(rho, t, tc, pc, om)
    assert not full.valid[sure].any()
    assert not (full.reduced_pressure[sure] <= 10.0).any()     # above 10, or above the solve's cap of 40 (NaN)
    # source: CoolProp PropsSI, the fluid's reference equation at the same density and temperature
    p_ref = np.array([CP.PropsSI("P", "Dmolar", r, "T", x, fluid) for r, x in zip(rho[sure], t[sure])])
    assert (p_ref / pc > 9.0).all()


def test_gas_volume_falls_as_pressure_rises_where_states_are_refused_without_solve():
    # _no_gas_state_up_to_cap relies on (1 - a) V_0 + a V_ref falling as P_r rises at fixed T_r: true for
    # 0 <= a <= 1 (each gas volume falls), and for a < 0 where (1 - a) |dV_0/dP_r| > |a| |dV_ref/dP_r|, checked
    # here on a grid at the lowest a and T_r it is used for, up to P_r = 10 (the model's range).
    import screening.physics.eos.generalized as gen

    tr, pr = np.meshgrid(np.linspace(gen._MONOTONE_TR, 4.0, 291), np.geomspace(1e-4, 10.01, 400))
    tr, pr = tr.ravel(), pr.ravel()
    (r0, _z0, dp0, nr0, c0), (rr, _zr, dpr, nrr, cr) = gen._gas_roots(tr, pr, np.ones(tr.size, dtype=bool))
    assert (c0 & cr & ~nr0 & ~nrr).all()
    fall0, fallr = 1.0 / (r0 * r0 * dp0), 1.0 / (rr * rr * dpr)     # -dV_i/dP_r
    assert (fall0 > 0).all() and (fallr > 0).all()
    a = gen._MONOTONE_A
    # a margin: the slopes' ratio stays well inside the bound between the grid's points
    assert ((1.0 - a) * fall0 + 1.5 * a * fallr > 0.0).all()


def test_each_fluids_isotherm_rises_at_every_density_from_the_one_root_temperature():
    # lee_kesler_pressure_valid takes the coupled Newton's densities as the gas roots from _ONE_ROOT_TR up,
    # because there each LK fluid's isotherm P_r(rho) rises at every density (one root at any P_r): checked on a
    # grid of T_r up to the top of the tables and of densities far past any gas or liquid state, with a margin;
    # just below T_r = 1 (each fluid's critical point) the isotherm has its loop.
    import screening.physics.eos.generalized as gen

    rho = np.concatenate([np.linspace(1e-8, 12.0, 60001), np.geomspace(12.0, 1e4, 2001)])
    for consts in (gen._SIMPLE, gen._REFERENCE):
        for tr in np.linspace(gen._ONE_ROOT_TR, 4.0, 119):
            z, dz = gen._bwr(consts, gen._coefficients(consts, tr), rho)
            assert (tr * (z + rho * dz)).min() > 0.1
        z, dz = gen._bwr(consts, gen._coefficients(consts, 0.99), rho)
        assert (0.99 * (z + rho * dz)).min() < 0.0


@pytest.mark.parametrize("fluid", ["Krypton", "Methane", "Ethylene", "CO2"])
def test_pressures_without_the_gas_root_check_are_those_with_it(fluid, monkeypatch):
    # From _ONE_ROOT_TR up lee_kesler_pressure_valid does not solve the gas roots again at the coupled Newton's
    # pressure: its pressures and validity must still be lee_kesler_pressure's, bit for bit, on states around
    # that temperature and on hot dense ones, in calls of a few and of many elements.
    import screening.physics.eos.generalized as gen
    from screening.physics.eos.generalized import lee_kesler_pressure_valid

    asked = []
    original = gen._z_core

    def count(tr, pr, omega, active):       # the gas roots solved again at the settled pressures
        if sys._getframe(1).f_code.co_name == "_pressure_arrays":
            asked.append(int(np.count_nonzero(active)))
        return original(tr, pr, omega, active)
    monkeypatch.setattr(gen, "_z_core", count)
    # the fluid's critical constants and acentric factor as CoolProp gives them
    tc, pc, om = critical(fluid)
    rho_c = CP.PropsSI("rhomolar_critical", fluid)
    rng = np.random.default_rng(3)
    for n in (1, 9, 40, 2000):
        for t_lo, t_hi, r_lo, r_hi in ((1.0, 1.1, 0.01, 2.5), (1.04, 1.06, 0.05, 2.0), (1.1, 3.9, 0.01, 3.0)):
            t = rng.uniform(t_lo, t_hi, n) * tc
            rho = rng.uniform(r_lo, r_hi, n) * rho_c
            full = lee_kesler_pressure(rho, t, tc, pc, om)
            asked.clear()
            p, ok = lee_kesler_pressure_valid(rho, t, tc, pc, om)
            np.testing.assert_array_equal(ok, full.valid)
            assert p.tobytes() == full.pressure.tobytes()
            if n == 2000:       # the gas roots solved again only below _ONE_ROOT_TR (and where the Newton did not settle)
                assert sum(asked) <= np.count_nonzero(t < gen._ONE_ROOT_TR * tc) + 0.05 * n


def test_coupled_newton_of_both_fluids_in_one_array_is_each_states_own():
    # The coupled pressure Newton steps both fluids' densities of every state in one array; each state's P_r and
    # volumes must be those of the state solved alone (on floats: _newton_reduced_pressure_one), bit for bit,
    # whether it settles, leaves the gas region or goes above the model's pressures.
    import screening.physics.eos.generalized as gen

    rng = np.random.default_rng(11)
    n = gen._BLOCK + 300                # two blocks
    tr = rng.uniform(0.5, 4.0, n)
    vf = rng.uniform(0.05, 20.0, n)
    # krypton's and propane's acentric factors as CoolProp gives them
    omega = np.where(rng.random(n) < 0.5, CP.PropsSI("acentric", "Krypton"), CP.PropsSI("acentric", "Propane"))
    active = rng.random(n) < 0.95
    together = gen._newton_reduced_pressure(tr, vf, omega, active)
    assert 0 < together[3].sum() < active.sum()
    for i in range(0, n, 3):
        alone = gen._newton_reduced_pressure(tr[i:i + 1], vf[i:i + 1], omega[i:i + 1], active[i:i + 1])
        for a, b in zip(alone, together):
            assert a.tobytes() == b[i:i + 1].tobytes()
