"""The shortcuts of the liquefied-gas columns give what the full computations give, checked against CoolProp."""

import CoolProp.CoolProp as CP
import numpy as np
import pytest

from screening import engine
from screening.physics.eos.reference import reference_fluid

#: (CoolProp name, temperatures of the fills [K], worst cases [K], ratings as multiples of the vapour pressure at
#: the worst case or 40 bar above the critical temperature)
FLUIDS = [("CO2", 250.0, 300.0, 260.0, 360.0), ("Propane", 253.0, 313.0, 233.0, 358.0),
          ("Ammonia", 253.0, 313.0, 233.0, 358.0), ("n-Butane", 253.0, 298.0, 233.0, 358.0),
          ("Chlorine", 253.0, 298.0, 233.0, 358.0), ("R134a", 253.0, 313.0, 233.0, 358.0)]


def _rows(cp, tf_lo, tf_hi, tp_lo, tp_hi, n, seed):
    """Invented rows: fill densities from 0.02 to 0.98 of the saturated liquid at the lower fill temperature,
    fill and worst-case temperatures, ratings from 0.5 to 4 times the vapour pressure at the worst case."""
    rnd = np.random.default_rng(seed)
    fluid = reference_fluid((cp,), (1.0,))
    rho_l = fluid.saturated_liquid_density(tf_lo)
    rho = rho_l * rnd.uniform(0.02, 0.98, n)
    t_fill = rnd.uniform(tf_lo, tf_hi, n)
    t_peak = rnd.uniform(tp_lo, tp_hi, n)
    tc = fluid.critical_temperature
    p_ref = np.array([fluid.vapour_pressure(min(t, tc - 1.0)) for t in t_peak])
    rated = p_ref * rnd.uniform(0.5, 4.0, n)
    return fluid, rho, t_fill, t_peak, rated


@pytest.mark.parametrize("cp,tf_lo,tf_hi,tp_lo,tp_hi", FLUIDS)
def test_temperature_limit_by_newton_steps_equals_the_bracketed_solve(cp, tf_lo, tf_hi, tp_lo, tp_hi):
    fluid, rho, t_fill, t_peak, rated = _rows(cp, tf_lo, tf_hi, tp_lo, tp_hi, 300, seed=len(cp))
    peak, _v, _r = fluid.pressures(rho, t_peak)
    live = np.flatnonzero(np.isfinite(peak))
    rc = fluid.critical_molar_density
    boundary = np.full(rho.size, np.nan)
    for side, sel in (("vapour", rho <= rc), ("liquid", rho > rc)):
        k = np.flatnonzero(sel)
        boundary[k], _ok = engine._dome(fluid, side).boundary(rho[k])

    def f_t(t, ix):
        p, _v, _r = fluid.pressures(rho[ix], t)
        return p / rated[ix] - 1.0

    t_lo, t_hi = np.minimum(t_fill, t_peak)[live], (np.maximum(t_fill, t_peak) + 300.0)[live]
    f_mid = peak[live] / rated[live] - 1.0
    fast, ok_fast = engine._temperature_limit(fluid, f_t, rho, rated, live, t_lo, t_peak[live], f_mid, t_hi,
                                              boundary[live])
    # the full computation: the bracketed solve of the whole bracket (Illinois), scanned where an end is past
    # the equation's range
    full, ok_full = engine._increasing_root(f_t, live, t_lo, t_peak[live], f_mid, t_hi, fluid.t_max, stepwise=True)
    assert np.array_equal(ok_fast, ok_full)
    assert np.array_equal(np.isnan(fast), np.isnan(full))
    found = np.isfinite(full)
    assert found.sum() > 100
    assert np.allclose(fast[found], full[found], rtol=2e-9, atol=0.0)
    # CoolProp's reference equation through PropsSI (an independent call path): the rating at the root
    for r, t in zip(live[found][:40], fast[found][:40]):
        p = CP.PropsSI("P", "Dmolar", rho[r], "T", t, cp)
        assert p == pytest.approx(rated[r], rel=1e-9)


@pytest.mark.parametrize("cp", ["CO2", "Propane", "Ammonia"])
def test_isochore_slopes_are_coolprops_pressure_and_its_temperature_derivative(cp):
    fluid = reference_fluid((cp,), (1.0,))
    tc, rc = fluid.critical_temperature, fluid.critical_molar_density
    rho = np.array([0.05, 0.3, 0.8, 1.6, 2.2]) * rc
    t = np.array([tc + 20.0, tc - 10.0, tc + 60.0, tc - 30.0, tc - 60.0])
    p, d = fluid.isochore_slopes(rho, t)
    for k in range(rho.size):
        # CoolProp's reference equation through PropsSI: the pressure and (dP/dT) at constant density
        assert p[k] == pytest.approx(CP.PropsSI("P", "Dmolar", rho[k], "T", t[k], cp), rel=1e-12)
        phase = CP.PhaseSI("Dmolar", rho[k], "T", t[k], cp)
        if phase == "twophase":
            # inside the dome: the slope of CoolProp's vapour-pressure curve (central difference, 1 mK)
            slope = (CP.PropsSI("P", "T", t[k] + 1e-3, "Q", 0, cp) - CP.PropsSI("P", "T", t[k] - 1e-3, "Q", 0, cp)) / 2e-3
            assert d[k] == pytest.approx(slope, rel=1e-5)
        else:
            assert d[k] == pytest.approx(CP.PropsSI("d(P)/d(T)|Dmolar", "Dmolar", rho[k], "T", t[k], cp), rel=1e-10)
    # a state the equation does not have: NaN, not an error
    p, d = fluid.isochore_slopes(np.array([rc]), np.array([fluid.t_max + 50.0]))
    assert np.isnan(p[0]) and np.isnan(d[0])


def test_saturation_temperatures_invert_coolprops_vapour_pressure():
    fluid = reference_fluid(("Propane",), (1.0,))
    t = np.array([240.0, 280.0, 320.0, 360.0])
    # CoolProp's reference equation through PropsSI: the vapour pressure at each temperature
    p = np.array([CP.PropsSI("P", "T", x, "Q", 0, "Propane") for x in t])
    assert np.allclose(fluid.saturation_temperatures(p), t, rtol=1e-9, atol=0.0)
    # none at or above the critical pressure
    assert np.isnan(fluid.saturation_temperatures(np.array([fluid.critical_pressure * 1.01]))[0])


def test_newton_in_bracket_closes_a_bracket_around_the_root():
    # an increasing function with a kink (the slope jumps by a factor of 20 at x = 2), its root at x = 3
    def g(x, ix):
        f = np.where(x < 2.0, 0.1 * (x - 2.0) - 2.0, 2.0 * (x - 2.0) - 2.0)
        return f, np.where(x < 2.0, 0.1, 2.0)

    a, b = np.array([0.0, 0.0]), np.array([10.0, 4.0])
    fa, fb = g(a, None)[0], g(b, None)[0]
    root, settled = engine._newton_in_bracket(g, a, fa, b, fb, np.array([0.5, 3.9]), np.arange(2))
    assert settled.all()
    assert np.allclose(root, 3.0, rtol=engine._NEWTON_BRACKET_RTOL, atol=0.0)


@pytest.mark.parametrize("cp", ["n-Butane", "Chlorine", "CO2"])
def test_fill_densities_with_their_check_state_equal_density_and_the_state_evaluated_again(cp):
    fluid = reference_fluid((cp,), (1.0,))
    rnd = np.random.default_rng(7)
    t = rnd.uniform(fluid.triple_temperature + 30.0, fluid.critical_temperature + 20.0, 200)
    ps = np.array([fluid.vapour_pressure(x) if x < fluid.critical_temperature else np.nan for x in t])
    scale = np.where(np.isfinite(ps), ps, fluid.critical_pressure)
    p = scale * np.where(rnd.random(200) < 0.5, rnd.uniform(0.2, 0.9, 200), rnd.uniform(1.1, 3.0, 200))
    t[:5] = fluid.critical_temperature - np.array([5.0, 10.0, 20.0, 30.0, 40.0])
    ps[:5] = [fluid.vapour_pressure(x) for x in t[:5]]
    p[:5] = ps[:5]                                                 # at the vapour pressure: refused
    known = np.where(rnd.random(200) < 0.5, ps, np.nan)            # the vapour pressure given for half the rows
    rho, p_back, phase, valid = fluid.densities(p, t, known)
    assert valid.sum() > 150 and not valid[:5].any()
    for k in range(200):
        try:
            expected = fluid.density(p[k], t[k])
        except ValueError:
            assert not valid[k]
            continue
        assert valid[k] and rho[k] == expected
        assert (p_back[k], phase[k]) == (fluid.pressure(rho[k], t[k]), fluid.phase(rho[k], t[k]))
        # CoolProp's reference equation through PropsSI: the density at the fill pressure and temperature
        assert rho[k] == pytest.approx(CP.PropsSI("Dmolar", "P", p[k], "T", t[k], cp), rel=1e-9)


def test_saturation_band_with_the_vapour_pressure_given_equals_the_band_worked_out():
    from screening.screen import band_reason

    fluid = reference_fluid(("Propane",), (1.0,))
    for t in (250.0, 280.0, 300.0, 330.0):
        # CoolProp's reference equation through PropsSI: the vapour pressure at the fill temperature
        ps = CP.PropsSI("P", "T", t, "Q", 0, "Propane")
        for f in (0.5, 0.97, 1.0, 1.02, 1.5):
            given = band_reason(ps * f, t, fluid, "propane", 101325.0, psat=fluid.vapour_pressure(t))
            assert given == band_reason(ps * f, t, fluid, "propane", 101325.0)
