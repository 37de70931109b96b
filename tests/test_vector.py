"""The vectorised batch engine against the single-case screening and against CoolProp."""


import CoolProp.CoolProp as CP
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from screening import engine
from screening.inputs.case import parse_case_data
from screening.screen import P_TOL, screen_states

GASES = ["nitrogen", "argon", "methane", "oxygen", "air", "hydrogen", "helium"]
NUMBERS = ("peak_pressure_pa", "margin_fraction", "relief_margin_fraction")
LIMITS = ("max_gas_temperature_k", "max_fill_pressure_pa", "target_peak_pressure_pa", "dry_out_temperature_k",
          "max_fill_mass_kg", "phase_boundary_pressure_pa")


def data(gas, cap, rated, p, t, amb, hot=None, relief=None):
    d = {"id": "V", "vessel": {"water_capacity": f"{cap:.2f} L", "rated_pressure": f"{rated:.2f} bar(g)"},
         "fill": {"gas": gas, "pressure": f"{p:.2f} bar(g)", "temperature": f"{t:.2f} degC"},
         "exposure": {"ambient_max": f"{amb:.2f} degC"}}
    if hot is not None:
        d["exposure"]["gas_temperature"] = f"{hot:.2f} degC"
    if relief is not None:
        d["vessel"]["relief_set_pressure"] = f"{relief:.2f} bar(g)"
    return d


#: The limits are roots. screen_case stops its Brent solves when the bracket is below xtol + rtol |x| with
#: both at P_TOL (1e-9), so its root is within 2 P_TOL of the true one; the vectorised solves go to 1e-13.
#: Two correct solvers can therefore differ by up to 2 P_TOL; peaks and margins are compared at 1e-9.
LIMIT_RTOL = 2 * P_TOL + 1e-12


def close(a, b, rel=1e-9):
    if a is None or b is None:
        return a is b
    return a == b or abs(a - b) <= rel * max(abs(a), abs(b))


rows = st.lists(st.tuples(st.sampled_from(GASES), st.floats(1, 80), st.floats(150, 350), st.floats(20, 250),
                          st.floats(-10, 35), st.floats(30, 60), st.one_of(st.none(), st.floats(40, 75))),
                min_size=30, max_size=40)


@settings(max_examples=6, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(rows)
def test_batch_rows_equal_the_single_case_screening(items):
    # a few hundred random rows over the examples, on both the vectorised and the per-row path
    cases = [parse_case_data(data(*it), "t.csv", "x") for it in items]
    got = [r.to_json() for r in engine.screen_cases(cases)]
    for c, r in zip(cases, got):
        s = screen_states(c).to_json()
        assert set(r) == set(s)
        assert set(r["limits"]) == set(s["limits"])
        assert r["verdict"] == s["verdict"]
        assert r["governing_model"] == s["governing_model"]
        for k in NUMBERS:
            assert close(r[k], s[k]), (c.gas.name, k, r[k], s[k])
        for k in LIMITS:
            assert close(r["limits"].get(k), s["limits"].get(k), LIMIT_RTOL), (c.gas.name, k, r["limits"].get(k), s["limits"].get(k))
        for m in ("ideal", "generalized", "reference"):
            assert close(r["models"][m]["peak_pressure_pa"], s["models"][m]["peak_pressure_pa"])


def test_vectorised_reference_peak_matches_coolprop_propssi():
    # Span et al. (2000) nitrogen and Tegeler et al. (1999) argon EOS through CoolProp's PropsSI
    items = [("nitrogen", 50, 300, 200, 15, 45, 65), ("argon", 50, 300, 200, 15, 45, 60)]
    cases = [parse_case_data(data(*it), "t.csv", "x") for it in items]
    got = [r.to_json() for r in engine.screen_cases(cases)]
    assert engine.STATS["vectorised"] == 2
    for (gas, _c, _r, p, t, _a, hot), r in zip(items, got):
        fluid = {"nitrogen": "Nitrogen", "argon": "Argon"}[gas]
        d = CP.PropsSI("Dmolar", "P", p * 1e5 + 101325.0, "T", t + 273.15, fluid)
        ref = CP.PropsSI("P", "Dmolar", d, "T", hot + 273.15, fluid)
        assert r["models"]["reference"]["peak_pressure_pa"] == pytest.approx(ref, rel=1e-6)


def test_rows_outside_the_vectorised_path_go_per_row():
    items = [("carbon dioxide", 50, 250, 50, 15, 45, 55), ("argon 82% + carbon dioxide 18%", 20, 300, 200, 15, 45, 70)]
    cases = [parse_case_data(data(*it), "t.csv", "x") for it in items]
    assert not any(engine.vectorisable(c) for c in cases)
    got = [r.to_json() for r in engine.screen_cases(cases)]
    for c, r in zip(cases, got):
        s = screen_states(c).to_json()
        assert r["verdict"] == s["verdict"] and close(r["peak_pressure_pa"], s["peak_pressure_pa"], 0.0)


def test_dense_supercritical_methane_fill_stays_on_the_vectorised_path_with_its_liquid_full_point():
    # methane at 250 bar(g) and 5 degC is denser than critical: its isochore meets the saturated-liquid
    # curve below the critical temperature (the liquid-full point), which both paths report alike
    items = [("methane", 50, 300, 250, 5, 45, None), ("methane", 50, 300, 150, 25, 45, None)]
    cases = [parse_case_data(data(*it), "t.csv", "x") for it in items]
    got = [r.to_json() for r in engine.screen_cases(cases)]
    assert engine.STATS["vectorised"] == 2
    for c, r in zip(cases, got):
        s = screen_states(c).to_json()
        for k in LIMITS + ("liquid_full_temperature_k", "dp_dt_after_liquid_full_pa_k"):
            assert close(r["limits"].get(k), s["limits"].get(k), LIMIT_RTOL), (k, r["limits"].get(k), s["limits"].get(k))
    assert got[0]["limits"]["liquid_full_temperature_k"] is not None and got[0]["limits"]["dry_out_temperature_k"] is None
    assert got[1]["limits"]["liquid_full_temperature_k"] is None and got[1]["limits"]["dry_out_temperature_k"] is not None
    # the liquid-full point lies below methane's critical temperature, 190.564 K (Setzmann & Wagner 1991
    # through CoolProp)
    assert got[0]["limits"]["liquid_full_temperature_k"] < CP.PropsSI("Tcrit", "Methane")


def test_forked_workers_give_the_same_columns_as_one_process():
    items = [(g, 50, 300, 150 + 7 * i, -5 + i, 45 + i % 10, None) for i, g in enumerate(GASES * 6)]
    cases = [parse_case_data(data(*it), "t.csv", "x") for it in items]
    from screening import parallel

    by_gas = {}
    for c in cases:
        by_gas.setdefault(c.gas.name, []).append(c)
    parts = [engine.Rows.of_cases(cs) for cs in by_gas.values()]
    one = [engine._columns(p) for p in parts]
    forked = parallel.map_rows(engine._columns, parts, min_rows=0)
    for a, b in zip(one, forked):
        assert set(a) == set(b)
        for k in a:
            assert list(map(str, a[k])) == list(map(str, b[k])), k


def test_a_limit_at_the_edge_of_the_lee_kesler_range_is_settled_as_the_single_screening_scans():
    # nitrogen filled low and rated high: the generalized isochore reaches the rating only near
    # T_r = 4, the edge of the Lee–Kesler tables, where the vectorised path scans as screen_case does
    items = [("nitrogen", 50, 300, 150, 25, 45, None), ("nitrogen", 50, 300, 140, 30, 45, None),
             ("nitrogen", 50, 250, 120, 20, 40, None)]
    cases = [parse_case_data(data(*it), "t.csv", "x") for it in items]
    got = [r.to_json() for r in engine.screen_cases(cases)]
    assert engine.STATS["vectorised"] == 3
    for c, r in zip(cases, got):
        s = screen_states(c).to_json()
        for k in LIMITS:
            assert close(r["limits"].get(k), s["limits"].get(k), LIMIT_RTOL), (k, r["limits"].get(k), s["limits"].get(k))


@settings(max_examples=4, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.tuples(st.sampled_from(GASES), st.floats(1, 80), st.floats(150, 350), st.floats(20, 250),
                          st.floats(-10, 35), st.floats(30, 60), st.one_of(st.none(), st.floats(40, 75)),
                          st.one_of(st.none(), st.floats(200, 400))),
                min_size=20, max_size=30))
def test_inventory_rows_read_by_column_give_the_single_case_results(tmp_path_factory, items):
    # the batch command's own path: rows read column by column, slim results, full results on demand
    from screening.batch import BatchRun
    from screening.inputs.inventory import read_inventory, row_case

    path = tmp_path_factory.mktemp("inv") / "inv.csv"
    lines = ["id,gas,water_capacity [L],rated_pressure [bar(g)],fill_pressure [bar(g)],fill_temperature [degC],"
             "ambient_max [degC],gas_temperature [degC],relief_set_pressure [bar(g)]"]
    for i, (g, cap, rated, p, t, amb, hot, relief) in enumerate(items):
        lines.append(f"R{i},{g},{cap:.2f},{rated:.2f},{p:.2f},{t:.2f},{amb:.2f},"
                     f"{'' if hot is None else f'{hot:.2f}'},{'' if relief is None else f'{relief:.2f}'}")
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    inv = read_inventory(path)
    run = BatchRun(inv)
    for i, (n, cells) in enumerate(inv.rows):
        s = screen_states(row_case(inv, n, cells, None)).to_json()
        slim, full = run.results[i], run.full(i).to_json()
        assert full["row"] == slim["row"] == n
        assert set(full) - {"row"} == set(s)
        for r in (slim, full):
            assert r["verdict"] == s["verdict"] and r["governing_model"] == s["governing_model"]
            assert r["reasons"] == s["reasons"] and r["warnings"] == s["warnings"]
            for k in NUMBERS:
                assert close(r.get(k, s[k]), s[k]), (k, r.get(k), s[k])
            for k in ("max_gas_temperature_k", "max_fill_pressure_pa"):
                assert close(r["limits"][k], s["limits"][k], LIMIT_RTOL)
        for k in LIMITS:
            assert close(full["limits"].get(k), s["limits"].get(k), LIMIT_RTOL), k
        assert full["input_sha256"] == s["input_sha256"] and full["inputs"] == s["inputs"]
        assert full["display_units"] == s["display_units"] == slim["display_units"]
