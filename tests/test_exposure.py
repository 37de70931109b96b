"""Solar exposure of a cylinder: correlations, air properties, energy balance, bad inputs."""

import doctest
import math

import CoolProp.CoolProp as CP
import pytest
from hypothesis import given
from hypothesis import strategies as st

from screening.errors import InputError, NotApplicable
from screening.physics import exposure
from screening.physics.exposure import (
    DEFAULT_IRRADIANCE,
    air_properties,
    estimate_dimensions,
    finish,
    finishes,
    forced_nusselt,
    mixed_nusselt,
    natural_nusselt,
    sky_temperature,
    solar_wall_temperature,
)

C = 273.15
SIGMA = 5.670374419e-8  # CODATA 2018 Stefan-Boltzmann constant [W/(m2 K4)]


def test_doctests():
    result = doctest.testmod(exposure)
    assert result.attempted > 0 and result.failed == 0


# ----------------------------------------------------------------------------- finishes


def test_finish_table_complete_and_sourced():
    table = finishes()
    for name in ("white_paint", "light_grey_paint", "aluminium_paint", "medium_grey_paint",
                 "dark_green_paint", "red_paint", "black_paint", "galvanised_steel_new"):
        assert name in table
    for f in table.values():
        assert 0.0 <= f.absorptivity <= 1.0 and 0.0 <= f.emissivity <= 1.0
        assert f.source.strip()


def test_finish_values_from_incropera():
    # Incropera, DeWitt, Bergman & Lavine, 6th ed., Table A.12 (not independently checked here): white acrylic paint 0.26 / 0.90
    assert (finish("white_paint").absorptivity, finish("white_paint").emissivity) == (0.26, 0.90)
    # Incropera et al. 6th ed., Table A.12 (not independently checked here): black paint (Parsons) 0.98 / 0.98
    assert (finish("black_paint").absorptivity, finish("black_paint").emissivity) == (0.98, 0.98)


def test_unknown_finish_names_close_ones():
    with pytest.raises(InputError) as err:
        finish("black_pant")
    assert err.value.given == "black_pant"
    assert err.value.expected and "black_paint" in err.value.expected
    assert "black_paint" in str(err.value)


# ----------------------------------------------------------------------------- correlations


def test_churchill_chu_horizontal_by_hand():
    # Churchill & Chu (1975), Int. J. Heat Mass Transfer 18, 1049, as Incropera et al. 6th ed. eq. 9.34:
    # Nu = [0.60 + 0.387 Ra^(1/6) / (1 + (0.559/Pr)^(9/16))^(8/27)]^2, by hand at Ra = 1e7, Pr = 0.7:
    # Ra^(1/6) = 14.678; (0.559/0.7)^(9/16) = 0.88116; 1.88116^(8/27) = 1.20590;
    # 0.387*14.678/1.20590 = 4.7105; (0.6 + 4.7105)^2 = 28.201
    assert natural_nusselt(1e7, 0.7, "horizontal") == pytest.approx(28.201, rel=2e-4)


def test_churchill_chu_vertical_plate_by_hand():
    # Churchill & Chu (1975), Int. J. Heat Mass Transfer 18, 1323, as Incropera et al. 6th ed. eq. 9.26:
    # Nu = [0.825 + 0.387 Ra^(1/6) / (1 + (0.492/Pr)^(9/16))^(8/27)]^2, by hand at Ra = 1e9, Pr = 0.7:
    # Ra^(1/6) = 31.623; (0.492/0.7)^(9/16) = 0.82009; 1.82009^(8/27) = 1.19417;
    # 0.387*31.623/1.19417 = 10.248; (0.825 + 10.248)^2 = 122.61
    assert natural_nusselt(1e9, 0.7, "vertical") == pytest.approx(122.61, rel=2e-4)


def test_churchill_bernstein_by_hand():
    # Churchill & Bernstein (1977), J. Heat Transfer 99, 300, as Incropera et al. 6th ed. eq. 7.54:
    # Nu = 0.3 + 0.62 Re^0.5 Pr^(1/3) / [1 + (0.4/Pr)^(2/3)]^(1/4) * [1 + (Re/282000)^(5/8)]^(4/5),
    # by hand at Re = 1e4, Pr = 0.7: 62*0.88790 = 55.050; 1.68863^(1/4) = 1.13994; 55.050/1.13994 = 48.292;
    # (1e4/282000)^(5/8) = 0.12404; 1.12404^(4/5) = 1.09806; 0.3 + 48.292*1.09806 = 53.33
    assert forced_nusselt(1e4, 0.7) == pytest.approx(53.33, rel=3e-4)


def test_churchill_bernstein_textbook_example():
    # Bergman, Lavine, Incropera & DeWitt, Fundamentals of Heat and Mass Transfer, cylinder-in-cross-flow
    # worked example of chapter 7 (Example 7.3/7.4 depending on edition; not independently checked here): D = 12.7 mm in air,
    # Re_D = 6071, Pr = 0.70, Churchill-Bernstein gives Nu_D = 40.6
    assert forced_nusselt(6071, 0.70) == pytest.approx(40.6, abs=0.1)


def test_mixed_rule():
    # Churchill (1977), AIChE J. 23, 10: Nu^n = Nu_F^n + Nu_N^n; n = 4 for transverse flow over cylinders
    # (Incropera et al. 6th ed. Sec. 9.9); by hand (3^4 + 4^4)^(1/4) = 337^(1/4) = 4.28457
    assert mixed_nusselt(3.0, 4.0) == pytest.approx(4.28457, rel=1e-5)
    # equal parts: 2^(1/4) times either (same source, algebra)
    assert mixed_nusselt(10.0, 10.0) == pytest.approx(10.0 * 2**0.25, rel=1e-12)
    # one part zero leaves the other unchanged (same source, algebra)
    assert mixed_nusselt(0.0, 7.0) == pytest.approx(7.0, rel=1e-12)


def test_correlations_outside_range_not_applicable():
    # Churchill & Chu (1975) / Incropera et al. 6th ed. eq. 9.34: horizontal cylinder Ra_D <= 1e12
    with pytest.raises(NotApplicable):
        natural_nusselt(1e13, 0.7, "horizontal")
    # Incropera et al. 6th ed. eq. 7.54: Churchill-Bernstein for Re*Pr > 0.2
    with pytest.raises(NotApplicable):
        forced_nusselt(0.1, 0.7)


def test_tall_vertical_vessel_outside_rayleigh_range():
    # Churchill & Chu (1975) vertical plate Ra_L <= 1e12: a 100 m tall hot cylinder is far beyond it
    with pytest.raises(NotApplicable):
        solar_wall_temperature(313.15, absorptivity=0.98, emissivity=0.98, outside_diameter_m=1.0,
                               length_m=100.0, orientation="vertical")


# ----------------------------------------------------------------------------- air, sky, geometry


def test_air_properties_against_incropera_table():
    a = air_properties(300.0)
    # Incropera et al. 6th ed., Table A.4, air at 300 K (not independently checked here): k = 26.3e-3 W/(m K)
    assert a.conductivity_w_mk == pytest.approx(26.3e-3, rel=0.02)
    # Incropera et al. 6th ed., Table A.4, air at 300 K (not independently checked here): nu = 15.89e-6 m2/s
    assert a.kinematic_viscosity_m2_s == pytest.approx(15.89e-6, rel=0.02)
    # Incropera et al. 6th ed., Table A.4, air at 300 K (not independently checked here): Pr = 0.707
    assert a.prandtl == pytest.approx(0.707, rel=0.01)
    # ideal-gas expansion coefficient beta = 1/T (Incropera et al. 6th ed., Sec. 9.1)
    assert a.expansion_1_k == pytest.approx(1.0 / 300.0)


def test_swinbank_by_hand():
    # Swinbank (1963), Q. J. R. Meteorol. Soc. 89, 339: T_sky = 0.0552 T_a^1.5;
    # by hand 0.0552 * 300^1.5 = 286.83 K
    assert sky_temperature(300.0) == pytest.approx(286.83, abs=0.01)
    # same source, by hand 0.0552 * 313.15^1.5 = 305.89 K
    assert sky_temperature(313.15) == pytest.approx(305.89, abs=0.01)
    with pytest.raises(NotApplicable):
        sky_temperature(400.0)
    # by hand from the same formula: 0.0552 T^1.5 = T at T = (1/0.0552)^2 = 328.2 K, above which the clear
    # sky would be warmer than the air; the correlation is refused there
    assert (1 / 0.0552) ** 2 == pytest.approx(328.18, abs=0.01)
    with pytest.raises(NotApplicable):
        sky_temperature(328.5)


def test_hot_air_needs_a_given_sky():
    with pytest.raises(NotApplicable):
        _balance(ambient_k=333.15)
    b = _balance(ambient_k=333.15, sky_temperature_k=320.0)
    assert b.sky_temperature_k == 320.0 and b.wall_temperature_k > 333.15


def test_estimate_dimensions():
    D, L = estimate_dimensions(0.050)
    # common practice (not independently checked here): a 50 L cylinder is about 0.23 m OD x 1.4 m
    assert D == pytest.approx(0.23, abs=0.01) and L == pytest.approx(1.4, abs=0.05)
    # the inside volume recovers the water capacity (geometry of the stated reading)
    f = exposure.WALL_ALLOWANCE_FRACTION
    d = D / (1 + 2 * f)
    assert math.pi / 4 * d**2 * (L - 2 * f * d) == pytest.approx(0.050, rel=1e-12)


# ----------------------------------------------------------------------------- energy balance


def _balance(ambient_k=313.15, **kw):
    args = dict(absorptivity=0.98, emissivity=0.98, outside_diameter_m=0.23, length_m=1.4)
    args.update(kw)
    return solar_wall_temperature(ambient_k, **args)


def test_worked_example_band():
    # Common practice (engineering experience, no named text): a dark-painted steel cylinder in full sun in
    # still air at 35 degC ambient runs at about 55-70 degC
    for name in ("black_paint", "dark_green_paint"):
        f = finish(name)
        b = solar_wall_temperature(35.0 + C, absorptivity=f.absorptivity, emissivity=f.emissivity,
                                   outside_diameter_m=0.23, length_m=1.4)
        assert 55.0 <= b.wall_temperature_k - C <= 70.0


def test_balance_rechecked_with_coolprop_and_published_formula():
    b = _balance()
    tw, ta = b.wall_temperature_k, b.ambient_k
    tf = 0.5 * (tw + ta)
    # CoolProp "Air" at the film temperature, 1 atm
    k = CP.PropsSI("L", "T", tf, "P", 101325.0, "Air")
    nu = CP.PropsSI("V", "T", tf, "P", 101325.0, "Air") / CP.PropsSI("D", "T", tf, "P", 101325.0, "Air")
    pr = CP.PropsSI("Prandtl", "T", tf, "P", 101325.0, "Air")
    ra = 9.80665 * (1.0 / tf) * (tw - ta) * 0.23**3 / nu**2 * pr
    # Churchill & Chu (1975), Incropera et al. 6th ed. eq. 9.34, retyped here as an outside check
    nu_d = (0.6 + 0.387 * ra ** (1 / 6) / (1 + (0.559 / pr) ** (9 / 16)) ** (8 / 27)) ** 2
    h = nu_d * k / 0.23
    # Swinbank (1963) sky, half the surface to sky, half to ground at ambient (the module's stated reading)
    tsky = 0.0552 * ta**1.5
    rad = 0.98 * SIGMA * (0.5 * (tw**4 - tsky**4) + 0.5 * (tw**4 - ta**4))
    # absorbed on the projected area D*L, per m2 of the lateral surface pi*D*L
    absorbed = 0.98 * DEFAULT_IRRADIANCE / math.pi
    assert b.h_convection_w_m2k == pytest.approx(h, rel=1e-6)
    assert absorbed == pytest.approx(h * (tw - ta) + rad, rel=1e-3)
    assert b.projected_to_surface_ratio == pytest.approx(1 / math.pi)
    assert b.regime == "natural" and b.reynolds == 0.0


# air temperatures where the Swinbank (1963) sky applies (see SWINBANK_RANGE_K), -23 degC .. +50 degC
ambients = st.floats(min_value=250.0, max_value=323.15)
irradiances = st.floats(min_value=50.0, max_value=1200.0)
fractions = st.floats(min_value=0.05, max_value=1.0)
winds = st.floats(min_value=0.1, max_value=15.0)
diameters = st.floats(min_value=0.05, max_value=1.0)
lengths = st.floats(min_value=0.2, max_value=3.0)
orientations = st.sampled_from(["horizontal", "vertical"])


@given(ambients, st.floats(min_value=0.0, max_value=1200.0), fractions, fractions,
       st.one_of(st.just(0.0), winds), diameters, lengths, orientations)
def test_energy_balance_closes(ta, g, a, e, w, d, length, o):
    # requirement of the energy balance (first law): absorbed = convected + radiated within 0.1 %
    b = solar_wall_temperature(ta, irradiance_w_m2=g, absorptivity=a, emissivity=e, wind_speed_m_s=w,
                               outside_diameter_m=d, length_m=length, orientation=o)
    assert b.residual_fraction() <= 1e-3
    assert b.wall_temperature_k >= ta


@given(ambients, fractions, fractions, st.one_of(st.just(0.0), winds), diameters, lengths, orientations)
def test_no_sun_gives_ambient(ta, a, e, w, d, length, o):
    # no absorbed energy: the solved wall is at or below ambient (sky colder), the screening floor is ambient
    b = solar_wall_temperature(ta, irradiance_w_m2=0.0, absorptivity=a, emissivity=e, wind_speed_m_s=w,
                               outside_diameter_m=d, length_m=length, orientation=o)
    assert b.wall_temperature_k == ta
    assert b.solved_wall_temperature_k <= ta
    assert any("floor" in n for n in b.notes)


@given(ambients, irradiances, st.one_of(st.just(0.0), winds), diameters, lengths, orientations)
def test_black_hotter_than_white(ta, g, w, d, length, o):
    # Incropera et al. 6th ed. Table A.12 (not independently checked here): black paint absorbs more (0.98 vs 0.26) at similar
    # emissivity: its balance is hotter; the screening value (floored at ambient) is never cooler
    res = {}
    for name in ("black_paint", "white_paint"):
        f = finish(name)
        res[name] = solar_wall_temperature(ta, irradiance_w_m2=g, absorptivity=f.absorptivity,
                                           emissivity=f.emissivity, wind_speed_m_s=w, outside_diameter_m=d,
                                           length_m=length, orientation=o)
    black, white = res["black_paint"], res["white_paint"]
    assert black.solved_wall_temperature_k > white.solved_wall_temperature_k
    assert black.wall_temperature_k >= white.wall_temperature_k
    if g >= 300.0:
        # with real sun both are above ambient, so the screening values differ too
        assert black.wall_temperature_k > white.wall_temperature_k


@given(ambients, irradiances, fractions, fractions, winds, winds, diameters, lengths, orientations)
def test_wind_lowers_temperature(ta, g, a, e, w1, w2, d, length, o):
    # more wind, more forced convection (Churchill-Bernstein Nu rises with Re), never a hotter wall
    lo, hi = sorted((w1, w2))
    args = dict(irradiance_w_m2=g, absorptivity=a, emissivity=e, outside_diameter_m=d, length_m=length,
                orientation=o)
    still = solar_wall_temperature(ta, **args).wall_temperature_k
    t_lo = solar_wall_temperature(ta, wind_speed_m_s=lo, **args).wall_temperature_k
    t_hi = solar_wall_temperature(ta, wind_speed_m_s=hi, **args).wall_temperature_k
    assert t_hi <= t_lo + 1e-9 and t_lo <= still + 1e-9


def test_wind_strictly_cooler_and_regimes():
    still, breeze, gale = _balance(), _balance(wind_speed_m_s=0.3), _balance(wind_speed_m_s=10.0)
    assert gale.wall_temperature_k < breeze.wall_temperature_k < still.wall_temperature_k
    assert (still.regime, breeze.regime, gale.regime) == ("natural", "mixed", "forced")


def test_hot_ground_and_albedo_make_it_hotter():
    base = _balance()
    assert _balance(ground_temperature_k=333.15).wall_temperature_k > base.wall_temperature_k
    assert _balance(ground_albedo=0.2).wall_temperature_k > base.wall_temperature_k
    # absorbed with albedo 0.2: alpha*G*(1/pi + 0.2*0.5) (the module's stated reading)
    assert _balance(ground_albedo=0.2).absorbed_w_m2 == pytest.approx(0.98 * 1000 * (1 / math.pi + 0.1))


def test_notes_state_the_readings():
    text = " ".join(_balance().notes)
    for word in ("thermal mass", "adiabatic", "Swinbank", "perpendicular", "still air"):
        assert word in text


# ----------------------------------------------------------------------------- bad inputs


@pytest.mark.parametrize("key, value", [
    ("absorptivity", -0.1), ("absorptivity", 1.1), ("emissivity", 1.5), ("emissivity", -0.01),
    ("wind_speed_m_s", -1.0), ("irradiance_w_m2", -5.0), ("outside_diameter_m", 0.0),
    ("outside_diameter_m", -0.2), ("length_m", 0.0), ("length_m", -1.0), ("ground_albedo", 2.0),
    ("absorptivity", float("nan")), ("wind_speed_m_s", float("inf")), ("orientation", "diagonal"),
])
def test_bad_inputs_raise_input_error(key, value):
    args = dict(absorptivity=0.5, emissivity=0.9, outside_diameter_m=0.23, length_m=1.4)
    args[key] = value
    with pytest.raises(InputError) as err:
        solar_wall_temperature(313.15, **args)
    assert err.value.key == key
    assert err.value.given is not None and (err.value.given == value or value != value)
    assert err.value.expected


@pytest.mark.parametrize("ambient", [0.0, -10.0])
def test_bad_ambient(ambient):
    with pytest.raises(InputError) as err:
        _balance(ambient_k=ambient)
    assert err.value.given == ambient and err.value.expected


@pytest.mark.parametrize("capacity, aspect", [(0.0, 6.5), (-0.05, 6.5), (0.05, 0.0)])
def test_bad_dimensions_estimate(capacity, aspect):
    with pytest.raises(InputError) as err:
        estimate_dimensions(capacity, aspect)
    assert err.value.given is not None and err.value.expected


def test_stefan_boltzmann_constant_is_the_codata_2018_value():
    # CODATA 2018 through scipy.constants (an independent copy of the published table)
    import scipy.constants

    from screening.constants import STEFAN_BOLTZMANN
    assert STEFAN_BOLTZMANN == scipy.constants.sigma


@pytest.mark.parametrize("t", [233.15, 288.15, 301.7, 350.0, 405.25])
def test_air_properties_are_coolprops_propssi_values(t):
    # CoolProp "Air" (Lemmon et al. 2000; Lemmon & Jacobsen 2004 transport) through PropsSI, evaluated here
    a = air_properties(t)
    p = 101325.0
    assert a.conductivity_w_mk == CP.PropsSI("L", "T", t, "P", p, "Air")
    assert a.kinematic_viscosity_m2_s == CP.PropsSI("V", "T", t, "P", p, "Air") / CP.PropsSI("D", "T", t, "P", p, "Air")
    assert a.prandtl == CP.PropsSI("Prandtl", "T", t, "P", p, "Air")
