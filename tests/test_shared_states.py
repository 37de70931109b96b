"""What a vessel's scenarios and tolerance states share on the engine's columns, and the plot data drawn on whole
grids: each shortcut gives the numbers of the full computation, and the physics stays that of CoolProp."""

import random

import CoolProp.CoolProp as CP
import numpy as np
import pytest
from helpers import result_differences

from screening import engine
from screening import screen as _screen
from screening.inputs.case import parse_case_data
from screening.physics.eos.generalized import lee_kesler_density
from screening.physics.eos.reference import reference_fluid


def _case(scenarios: int = 3, tolerance: bool = True, gas: str = "nitrogen", fill: float = 200.0,
          rated: float = 300.0) -> object:
    d = {"id": "S", "vessel": {"water_capacity": "50 L", "rated_pressure": f"{rated} bar(g)",
                               "outside_diameter": "229 mm", "length": "1.45 m"},
         "fill": {"gas": gas, "pressure": f"{fill} bar(g)", "temperature": "15 degC"},
         "scenario": [{"name": "store", "ambient_max": "38 degC"},
                      {"name": "yard", "ambient_max": "38 degC", "solar": "sun", "finish": "medium grey paint"},
                      {"name": "van", "ambient_max": "38 degC", "gas_temperature": "65 degC"}][:scenarios]}
    if tolerance:
        d["tolerance"] = {"fill_pressure": "1.6 % of 400 bar", "fill_temperature": "2 K", "gas_temperature": "3 K"}
    return parse_case_data(d, "t.toml", "x")


def test_shared_lee_kesler_fills_are_the_full_calls_numbers_and_match_coolprop():
    # repeated fills (a vessel's scenarios and tolerance states) solved once give every row the full call's numbers
    rnd = random.Random(11)
    base = [(rnd.uniform(20e5, 300e5), rnd.uniform(253.0, 313.0)) for _ in range(6)]
    rows = [base[rnd.randrange(6)] for _ in range(30)]
    p, t = (np.array(v) for v in zip(*rows))
    tc, pc, om = (np.full(p.size, v) for v in (126.192, 3395800.0, 0.0372))
    full = lee_kesler_density(p, t, tc, pc, om)
    shared = engine._lk_density_shared(p, t, tc, pc, om, True)
    for f in ("pressure", "molar_density", "z", "reduced_temperature", "reduced_pressure", "valid", "reason"):
        assert np.array_equal(getattr(shared, f), getattr(full, f)), f
    # nitrogen, Span et al. (2000) equation of state through CoolProp's PropsSI: Lee–Kesler within 1 % here
    for (pk, tk), rho in zip(rows[:5], shared.molar_density[:5]):
        assert rho == pytest.approx(CP.PropsSI("Dmolar", "P", pk, "T", tk, "Nitrogen"), rel=0.01)


def test_fill_states_handed_from_table_to_table_are_the_numbers_each_table_solves():
    # a vessel's fill states solved by one table and read again by the next (the nominal table, then its tolerance
    # states): the reference density and the Lee–Kesler fill are those of a table that solves them itself
    rnd = random.Random(12)
    base = [(rnd.uniform(20e5, 300e5), rnd.uniform(253.0, 313.0)) for _ in range(8)]
    first = [base[rnd.randrange(4)] for _ in range(10)]          # fills of the first table
    second = [base[rnd.randrange(8)] for _ in range(30)]         # the next: some met before, some new
    fluid = reference_fluid(("Nitrogen",), (1.0,))
    fills_ref, fills_lk = {}, {}
    for rows in (first, second):
        p, t = (np.array(v) for v in zip(*rows))
        tc, pc, om = (np.full(p.size, v) for v in (126.192, 3395800.0, 0.0372))
        rho, ok = engine._density_once(fluid, p, t, fills_ref)
        want_rho, want_ok = engine._density_once(fluid, p, t)
        assert np.array_equal(rho, want_rho) and np.array_equal(ok, want_ok)
        got = engine._lk_density_shared(p, t, tc, pc, om, True, fills_lk)
        full = lee_kesler_density(p, t, tc, pc, om)
        for f in ("pressure", "molar_density", "z", "reduced_temperature", "reduced_pressure", "valid", "reason"):
            assert np.array_equal(getattr(got, f), getattr(full, f)), f
            assert getattr(got, f).dtype == getattr(full, f).dtype, f
    assert len(fills_ref) == len(set(first) | set(second))
    # nitrogen, Span et al. (2000) equation of state through CoolProp's PropsSI
    for (pk, tk), r in zip(second[:5], rho[:5]):
        assert r == pytest.approx(CP.PropsSI("Dmolar", "P", pk, "T", tk, "Nitrogen"), rel=1e-9)


def test_expected_corner_is_a_row_of_the_nominal_table_and_the_states_need_one_table(monkeypatch):
    # the expected corner is screened as a row of the vessels' own table (its limits are the vessel's with the
    # tolerances taken off); the tolerance analysis then needs one table of states (the sensitivities'), and its
    # blocks are those of the state-by-state route
    cases = [_case(), _case(scenarios=2, fill=150.0), _case(scenarios=1, fill=30.0)]
    calls = []
    real = engine._corner_peaks

    def counted(gas, states, *more):
        calls.append(len(states))
        return real(gas, states, *more)

    monkeypatch.setattr(engine, "_corner_peaks", counted)
    got = [r.to_json() for r in engine._screen_expanded(cases)]
    assert len([n for n in calls if n]) == 1
    for case, r in zip(cases, got):
        one = _screen.screen_states(case, curves=False).to_json()
        assert not result_differences(one["tolerance"], r["tolerance"], 1e-9, 2e-9)
        assert not result_differences(one["limits"], r["limits"], 1e-9, 2e-9)
    # the bounding corner's reference peak, nitrogen through CoolProp's PropsSI (Span et al. 2000), evaluated here:
    # the bounding peak is the highest applicable real-gas model there, so at least this
    r = got[0]
    c = r["tolerance"]["bounding_corner"]
    rho = CP.PropsSI("Dmolar", "P", c["fill_pressure_pa"], "T", c["fill_temperature_k"], "Nitrogen")
    ref = CP.PropsSI("P", "Dmolar", rho, "T", c["worst_case_temperature_k"], "Nitrogen")
    assert r["tolerance"]["bounding_peak_pressure_pa"] >= ref * (1 - 1e-9)
    assert r["tolerance"]["expected_corner_confirmed"]


def test_expected_corner_is_the_corner_tolerance_steps_asks_for():
    # where every sensitivity has its expected sign, the one corner asked for is screen.expected_corner
    case = _case(scenarios=1)
    steps = _screen.tolerance_steps(case, 288.15, 311.15, ["ideal", "generalized", "reference"])
    states = next(steps)
    corner = steps.send([_screen._corner_peak(case, *s) for s in states])
    assert corner == [_screen.expected_corner(case, 288.15, 311.15)]


def test_scenarios_share_the_gas_temperature_limit_within_the_solve_tolerance():
    # a vessel's scenarios as rows of one table: with the shared solve and without it (every row its own secant)
    cases = [_case(tolerance=False), _case(tolerance=False, fill=250.0, rated=280.0),
             _case(tolerance=False, gas="argon", fill=180.0)]
    rows, vessels = [], []
    for i, c in enumerate(cases):
        for sc in c.scenarios:
            ex = engine._exposure_row(c, sc)
            rows.append((c.fill_pressure_pa, c.fill_temperature_k, np.nan, ex.t_exposure, c.rated_pressure_pa,
                         c.site.atmospheric_pressure_pa, c.required_margin, np.nan))
            vessels.append(i)

    def table(group):
        return engine.Rows(cases[group].gas, *(np.array(v) for v in zip(*[r for r, g in zip(rows, vessels)
                                                                           if g == group])))

    for g in range(len(cases)):
        n = sum(1 for v in vessels if v == g)
        shared = engine._columns(table(g), shared_fills=True, vessels=np.zeros(n))
        full = engine._columns(table(g))
        for key in engine._FLOAT_COLUMNS:
            if key == "max_t":
                # the same root from another start: equal to the secant's tolerance
                np.testing.assert_allclose(shared[key], full[key], rtol=1e-12)
            else:
                np.testing.assert_array_equal(shared[key], full[key], err_msg=key)
        assert np.array_equal(shared["fallback"], full["fallback"])
        # the limit itself: the reference isochore at the limit is at most the rating (the lower model governs),
        # nitrogen / argon through CoolProp's PropsSI (Span et al. 2000; Tegeler et al. 1999), evaluated here
        fluid = cases[g].gas.components[0].coolprop_name
        for k in np.flatnonzero(np.isfinite(shared["max_t"])):
            p = CP.PropsSI("P", "Dmolar", shared["rho_molar"][k], "T", shared["max_t"][k], fluid)
            assert p <= cases[g].rated_pressure_pa * (1 + 1e-9)


def test_dome_met_once_per_fill_density_is_the_full_calls_dry_out_and_coolprops():
    fluid = reference_fluid(("Nitrogen",), (1.0,))
    rho = np.array([9000.0, 3000.0, 9000.0, 3000.0, 7000.0])
    outs = []
    for shared in (True, False):
        out = {k: np.full(rho.size, np.nan) for k in ("dry", "liquid_full", "dpdt_liquid_full")}
        fallback = np.zeros(rho.size, dtype=bool)
        engine._dome_columns(fluid, rho, out, fallback, shared=shared)
        outs.append((out, fallback))
    for key in outs[0][0]:
        np.testing.assert_array_equal(outs[0][0][key], outs[1][0][key])
    assert np.array_equal(outs[0][1], outs[1][1])
    # the dry-out temperature: where the saturated vapour has the fill's density, nitrogen through CoolProp's
    # PropsSI (Span et al. 2000), evaluated here
    for r, t in zip(rho, outs[0][0]["dry"]):
        assert t == pytest.approx(CP.PropsSI("T", "Dmolar", r, "Q", 1, "Nitrogen"), rel=1e-6)


@pytest.mark.parametrize("name", ["cases/kq-n2-014.toml", "cases/kq-n2-031.toml", "cases/kq-co2-002.toml",
                                  "cases/kq-he-007.toml"])
def test_plot_data_on_whole_grids_are_the_point_by_point_isochores(name):
    from pathlib import Path

    from screening.inputs.case import load_case

    case = load_case(Path(__file__).resolve().parents[1] / name)
    r = engine.screen_case(case, curves=False)
    curves, _pd = _screen.plot_data(case, r)
    fs, models, _ = _screen._evaluate(case, r.fill.temperature_k, r.worst_case_temperature_k, [])
    grid = np.array(curves["temperature_k"])
    for m in models:
        if not m.applicable or m.isochore is None:
            assert curves[m.name] is None
            continue
        # the full computation: the scalar isochore at every point, None where it raises
        points = []
        for t in grid:
            try:
                v = m.isochore(float(t))
                points.append(v if np.isfinite(v) else None)
            except Exception:                    # NotApplicable: the model does not apply at that point
                points.append(None)
        assert curves[m.name] == points, m.name
    ref = next(m for m in models if m.name == "reference")
    if ref.applicable:
        # the reference curve is CoolProp's pressure on the fill isochore (PropsSI, evaluated here)
        fluid = ref.extra["fluid"]
        for t, p in list(zip(grid, curves["reference"]))[::10]:
            if p is not None:
                assert p == pytest.approx(CP.PropsSI("P", "Dmolar", ref.fill_molar_density, "T", t, fluid),
                                          rel=1e-9)


def test_lee_kesler_curves_drawn_in_one_call_are_the_curves_drawn_one_by_one(monkeypatch):
    # vessels with tolerances whose bounding corner the generalized model governs: its curve and the generalized
    # model's nominal curve in one call of lee_kesler_pressure, and each in a call of its own
    cases = [_case(scenarios=s, gas=g, fill=f, rated=1.5 * f) for s, g, f in
             ((3, "nitrogen", 200.0), (1, "argon", 250.0), (2, "methane", 150.0), (1, "oxygen", 120.0),
              (2, "nitrogen", 40.0), (1, "hydrogen", 300.0))]
    joined_calls = []
    real = _screen._lk_isochores_joined

    def counted(models, grid):
        got = real(models, grid)
        joined_calls.append(len(got))
        return got

    monkeypatch.setattr(_screen, "_lk_isochores_joined", counted)
    results = [engine.screen_case(c, curves=False) for c in cases]
    together = [_screen.plot_data(c, r)[0] for c, r in zip(cases, results)]
    assert sum(1 for n in joined_calls if n == 2) >= 3      # the two curves joined for most of these vessels
    monkeypatch.setattr(_screen, "_lk_isochores_joined", lambda models, grid: {})
    one_by_one = [_screen.plot_data(c, r)[0] for c, r in zip(cases, results)]
    assert together == one_by_one
    # nitrogen, Span et al. (2000) through CoolProp's PropsSI: the generalized curve within 2 % of the reference
    # equation's isochore at the fill density of the nominal case (the Lee–Kesler model's accuracy here)
    c0, r0 = together[0], results[0]
    rho = r0.models["reference"].fill_molar_density_mol_m3
    for t, p in list(zip(c0["temperature_k"], c0["generalized"]))[::15]:
        assert p == pytest.approx(CP.PropsSI("P", "Dmolar", rho, "T", t, "Nitrogen"), rel=0.02)


def test_phase_diagram_from_one_computation_per_fluid_is_a_fresh_copy_and_coolprops():
    fluid = reference_fluid(("CarbonDioxide",), (1.0,))
    fs = _screen.FillState(fluid=fluid)
    first = _screen._phase_diagram(fs)
    first["saturation"]["pressure_pa"].append(-1.0)       # a caller's change does not reach the next one
    again = _screen._phase_diagram(fs)
    assert again == _screen._fluid_phase_diagram(fluid)
    # carbon dioxide, Span & Wagner (1996) through CoolProp's PropsSI, evaluated here
    for t, p in list(zip(again["saturation"]["temperature_k"], again["saturation"]["pressure_pa"]))[:-1:7]:
        assert p == pytest.approx(CP.PropsSI("P", "T", t, "Q", 0, "CarbonDioxide"), rel=1e-6)
