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


def _limit_problem(fluid, rho, t_fill, t_peak, rated):
    """The temperature-limit problem of the rows as the columns pose it: the rows the equation evaluates at the
    worst case, each row's dome boundary, the function whose root is the limit, and its bracket."""
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
    return live, rc, boundary, f_t, t_lo, t_hi, f_mid


@pytest.mark.parametrize("cp,tf_lo,tf_hi,tp_lo,tp_hi", FLUIDS)
def test_temperature_limit_by_newton_steps_equals_the_bracketed_solve(cp, tf_lo, tf_hi, tp_lo, tp_hi):
    fluid, rho, t_fill, t_peak, rated = _rows(cp, tf_lo, tf_hi, tp_lo, tp_hi, 300, seed=len(cp))
    live, rc, boundary, f_t, t_lo, t_hi, f_mid = _limit_problem(fluid, rho, t_fill, t_peak, rated)
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


def _vapour_and_liquid_inventory(path, gas, cp, rows, seed):
    """An invented register of `gas` filled by pressure: half the rows vapour (0.2 to 0.85 of the vapour pressure
    at the fill temperature), half liquid (1.3 to 3 times it), rated 2.5 times the vapour pressure at 25 °C."""
    rnd = np.random.default_rng(seed)
    # CoolProp's reference equation through PropsSI: vapour pressures for the invented fills and rating
    rated = 2.5 * (CP.PropsSI("P", "T", 298.15, "Q", 0, cp) - 101325.0) / 1e5
    lines = ["id,gas,water_capacity [L],rated_pressure [bar(g)],fill_pressure [bar(a)],fill_temperature [degC],"
             "ambient_max [degC]"]
    for i in range(rows):
        t = rnd.uniform(-20.0, 25.0)
        ps = CP.PropsSI("P", "T", t + 273.15, "Q", 0, cp)
        p = ps * (rnd.uniform(0.2, 0.85) if i % 2 else rnd.uniform(1.3, 3.0))
        lines.append(f"R{i},{gas},40,{rated:.2f},{p / 1e5:.4f},{t:.2f},{rnd.uniform(-40.0, 85.0):.2f}")
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")


@pytest.mark.parametrize("gas,cp", [("n-butane", "n-Butane"), ("propane", "Propane"), ("chlorine", "Chlorine")])
def test_generalized_limits_solved_only_where_lower_give_the_limits_of_solving_them_all(tmp_path, monkeypatch, gas,
                                                                                      cp):
    from screening.inputs.columns import read_plain
    from screening.inputs.inventory import read_inventory

    monkeypatch.setenv("SCREENING_WORKERS", "1")
    path = tmp_path / "register.csv"
    _vapour_and_liquid_inventory(path, gas, cp, 300, seed=len(gas))
    plain = read_plain(read_inventory(path), None)
    solve_all = engine._lk_limits
    shown = []

    def counted(rows, out, lk, t_ref, pk, p_ref):
        shown.append(int(np.isfinite(t_ref).sum() + np.isfinite(p_ref).sum()))
        return solve_all(rows, out, lk, t_ref, pk, p_ref)

    monkeypatch.setattr(engine, "_lk_limits", counted)
    fast = engine.PlainScreening(plain).summaries
    assert sum(shown) > 0           # some rows had a reference root to start from

    def every_row(rows, out, lk, t_ref, pk, p_ref):
        # the full computation: no reference root known, every generalized limit solved
        return solve_all(rows, out, lk, np.full(lk.size, np.nan), pk, np.full(pk.size, np.nan))

    monkeypatch.setattr(engine, "_lk_limits", every_row)
    full = engine.PlainScreening(plain).summaries
    for j, (a, b) in enumerate(zip(fast, full)):
        assert a["verdict"] == b["verdict"] and a["reasons"] == b["reasons"]
        for key in ("max_gas_temperature_k", "max_fill_pressure_pa"):
            x, y = a["limits"][key], b["limits"][key]
            assert (x is None) == (y is None)
            if x is not None:
                assert x == pytest.approx(y, rel=2e-9)
        t_max = a["limits"]["max_gas_temperature_k"]
        if t_max is not None and t_max < CP.PropsSI("Tmax", cp):
            # CoolProp's reference equation through PropsSI: the fill's density, and the pressure on its isochore
            # at the temperature limit (the lower of the two models' limits) is at most the rating
            rho = CP.PropsSI("Dmolar", "P", plain.fill_pressure_pa[j], "T", plain.fill_temperature_k[j], cp)
            assert CP.PropsSI("P", "Dmolar", rho, "T", t_max, cp) <= a["rated_pressure_pa"] * (1.0 + 1e-6)


def test_no_generalized_gas_above_its_vapour_pressure_so_no_fill_pressure_limit_is_skipped_wrongly():
    from screening.physics.eos.generalized import lee_kesler_density_valid, lee_kesler_vapour_pressure
    from screening.physics.gases import library

    g = next(x for x in library().values() if x.name == "n-butane")
    tc, pc, om = g.critical_temperature, g.critical_pressure, g.acentric_factor
    t = np.linspace(250.0, 275.0, 26)
    psat = lee_kesler_vapour_pressure(t / tc, om) * pc
    for tf, ps in zip(t, psat):
        # every fill pressure from just above the model's own vapour pressure up: no gas state, as the skip assumes
        p = np.linspace(ps * (1.0 + 1e-8), 40.0 * ps, 60)
        _rho, ok = lee_kesler_density_valid(p, tf, tc, pc, om)
        assert not ok.any()
        # and below it a gas (the rule is not vacuous)
        assert lee_kesler_density_valid(np.array([0.9 * ps]), tf, tc, pc, om)[1].all()
    # the model's vapour pressure is near the reference equation's (CoolProp through PropsSI), so that rows of a
    # register filled below 1 atm are the ones the skip concerns
    assert psat[0] == pytest.approx(CP.PropsSI("P", "T", 250.0, "Q", 0, "n-Butane"), rel=0.05)


@pytest.mark.parametrize("cp", ["CO2", "Propane", "Ammonia", "R134a"])
def test_dome_boundary_by_newton_steps_from_the_table_equals_the_bracketed_solve(cp, monkeypatch):
    fluid = reference_fluid((cp,), (1.0,))
    rc = fluid.critical_molar_density
    rnd = np.random.default_rng(3)
    vapour = engine._dome(fluid, "vapour")
    liquid = engine._dome(fluid, "liquid")
    rho_v = rnd.uniform(vapour.rho_tt, rc, 200)
    rho_l = rnd.uniform(rc, liquid.rho_tt, 200)
    fast = [vapour.boundary(rho_v), liquid.boundary(rho_l)]

    def unsettled(g, a, fa, b, fb, x0, idx):
        return np.full(a.size, np.nan), np.zeros(a.size, dtype=bool)

    # the full computation: the bracketed solve of the table interval (Illinois) for every row
    monkeypatch.setattr(engine, "_newton_in_bracket", unsettled)
    full = [vapour.boundary(rho_v), liquid.boundary(rho_l)]
    for (t_fast, ok_fast), (t_full, ok_full) in zip(fast, full):
        assert np.array_equal(ok_fast, ok_full) and ok_fast.all()
        assert np.allclose(t_fast, t_full, rtol=1e-11, atol=0.0)
    # CoolProp's reference equation through PropsSI: the saturated densities at the boundary temperatures
    for (t, _ok), rho, q in ((fast[0], rho_v, 1), (fast[1], rho_l, 0)):
        for k in range(0, 200, 10):
            if t[k] < fluid.critical_temperature - 1e-3:
                assert CP.PropsSI("Dmolar", "T", t[k], "Q", q, cp) == pytest.approx(rho[k], rel=1e-9)


@pytest.mark.parametrize("cp", ["CO2", "n-Butane", "Chlorine"])
def test_saturation_states_are_the_single_saturation_calls(cp):
    """ReferenceFluid.saturation_states gives, bit for bit, what vapour_pressure and the saturated densities give one
    temperature at a time (NaN where those raise), and CoolProp's PropsSI gives the same states."""
    from screening.errors import NotApplicable

    fluid = reference_fluid((cp,), (1.0,))
    tt, tc = fluid.triple_temperature, fluid.critical_temperature
    t = np.concatenate([np.linspace(tt, tc - 1e-3, 57), [tt - 1.0, tc, tc + 5.0, np.nan]])
    for q, single in ((0.0, fluid.saturated_liquid_density), (1.0, fluid.saturated_vapour_density)):
        p, rho = fluid.saturation_states(t, q)
        for i, ti in enumerate(t.tolist()):
            try:
                want_p, want_rho = fluid.vapour_pressure(ti), single(ti)
            except NotApplicable:
                assert np.isnan(p[i]) and np.isnan(rho[i])
                continue
            assert p[i] == want_p and rho[i] == want_rho
        inside = np.flatnonzero(np.isfinite(rho))
        assert inside.size == 57
        for i in inside[::8]:
            # CoolProp's saturation state through PropsSI (an independent call path)
            assert rho[i] == pytest.approx(CP.PropsSI("Dmolar", "T", t[i], "Q", q, cp), rel=1e-9)
            assert p[i] == pytest.approx(CP.PropsSI("P", "T", t[i], "Q", q, cp), rel=1e-9)


@pytest.mark.parametrize("cp,tf_lo,tf_hi,tp_lo,tp_hi", [f for f in FLUIDS if f[0] in ("n-Butane", "Chlorine", "R134a")])
def test_temperature_limit_does_not_depend_on_the_guess(cp, tf_lo, tf_hi, tp_lo, tp_hi):
    """The upward scan settles on the same scan points whatever it is guessed: the limits with the guess the
    columns give, with wild guesses and with none are the same numbers, bit for bit (fluids whose equation stops at a
    pressure a heated liquid reaches: n-butane 120 bar, chlorine 200, R-134a 700)."""
    fluid, rho, t_fill, t_peak, rated = _rows(cp, tf_lo, tf_hi, tp_lo, tp_hi, 300, seed=len(cp) + 1)
    rho = rho * 0.5 + 0.49 * fluid.saturated_liquid_density(tf_lo)    # mostly liquid fills: liquid-full on the way
    live, rc, boundary, f_t, t_lo, t_hi, f_mid = _limit_problem(fluid, rho, t_fill, t_peak, rated)
    args = (fluid, f_t, rho, rated, live, t_lo, t_peak[live], f_mid, t_hi, boundary[live])
    none, ok_none = engine._temperature_limit(*args)
    # rows the upward scan settles: below the rating at the worst case, past the equation's range at the end
    scanned = (f_mid < 0.0) & np.isnan(f_t(np.minimum(t_hi, fluid.t_max), live))
    assert scanned.sum() >= 20 and np.isfinite(none[scanned]).sum() >= 20
    lf, slope = np.full(rho.size, np.nan), np.full(rho.size, np.nan)
    full = np.flatnonzero(np.isfinite(boundary) & (rho > rc))
    lf[full] = boundary[full]
    slope[full] = [fluid.dp_dt_at_constant_density(r, t + 0.01) for r, t in zip(rho[full], lf[full])]
    columns_guess = lf[live] + (rated[live] - np.array([fluid.vapour_pressure(t) if np.isfinite(t) else np.nan
                                                        for t in lf[live]])) / slope[live]
    rnd = np.random.default_rng(7)
    for guess in (columns_guess, t_peak[live] + 40.0, t_hi, t_lo, rnd.uniform(200.0, 900.0, live.size), np.full(live.size, np.nan)):
        got, ok = engine._temperature_limit(*args, guess)
        assert np.array_equal(ok, ok_none)
        assert np.array_equal(got, none, equal_nan=True)
