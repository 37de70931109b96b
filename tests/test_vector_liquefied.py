"""Liquefied gases on the batch's array path: the same results as the single-case screening, checked against CoolProp."""

import json
import random

import CoolProp.CoolProp as CP
import numpy as np
import pytest
from helpers import batch_on_one_and_two_workers

from screening import engine
from screening.inputs.case import parse_case_data
from screening.result import Result
from screening.screen import P_TOL, screen_states


def _as_json(r):
    """A batch row's result as its JSON layout (an input-error row stays the record it is)."""
    return r.to_json() if isinstance(r, Result) else r

#: Limits are roots: screen_case stops its Brent solves within 2 P_TOL of the root (see tests/test_vector.py).
LIMIT_RTOL = 2 * P_TOL + 1e-12
ATM = 101325.0

#: (gas, CoolProp name for the test's own vapour pressures, rated pressure range [bar(g)])
FLUIDS = [("carbon dioxide", "CO2", 150, 300), ("propane", "Propane", 25, 40), ("ammonia", "Ammonia", 25, 40),
          ("R-134a", "R134a", 20, 40), ("isobutane", "IsoButane", 10, 30), ("sulfur hexafluoride", "SF6", 70, 250)]


def close(a, b, rel):
    return a == b or abs(a - b) <= rel * max(abs(a), abs(b))


def differences(a, b, path="", rel=1e-9):
    """Where two results differ: keys, words, or numbers beyond rel (limits: LIMIT_RTOL)."""
    out = []
    if isinstance(a, dict) and isinstance(b, dict):
        if set(a) != set(b):
            out.append((path, sorted(set(a) ^ set(b))))
        for k in set(a) & set(b):
            out += differences(a[k], b[k], f"{path}.{k}", LIMIT_RTOL if k == "limits" else rel)
    elif isinstance(a, list) and isinstance(b, list) and len(a) == len(b):
        for i, (x, y) in enumerate(zip(a, b)):
            out += differences(x, y, f"{path}[{i}]", rel)
    elif all(isinstance(x, (int, float)) and not isinstance(x, bool) for x in (a, b)):
        if not close(a, b, rel):
            out.append((path, a, b))
    elif a != b:
        out.append((path, a, b))
    return out


def random_row(rnd, i):
    """An invented row of a liquefied gas: by mass over filling ratios from 0.03 to 0.85 kg/L, or by pressure as
    vapour or liquid around the vapour pressure (some rows inside the saturation band, refused)."""
    gas, cp, rated_lo, rated_hi = rnd.choice(FLUIDS)
    t = rnd.uniform(-20, 30)
    cap = rnd.uniform(5, 60)
    d = {"id": f"L{i}", "vessel": {"water_capacity": f"{cap:.2f} L",
                                  "rated_pressure": f"{rnd.uniform(rated_lo, rated_hi):.2f} bar(g)"},
         "fill": {"gas": gas, "temperature": f"{t:.2f} degC"},
         "exposure": {"ambient_max": f"{rnd.uniform(-30, 85):.2f} degC"}}
    if rnd.random() < 0.3:
        d["exposure"]["gas_temperature"] = f"{rnd.uniform(-30, 85):.2f} degC"
    if rnd.random() < 0.2:
        d["vessel"]["max_filling_ratio"] = f"{rnd.uniform(0.3, 0.8):.3f} kg/L"
    if rnd.random() < 0.2:
        d["vessel"]["relief_set_pressure"] = f"{rnd.uniform(rated_lo, rated_hi) * 0.9:.2f} bar(g)"
    if rnd.random() < 0.5:
        d["fill"]["mass"] = f"{cap * rnd.uniform(0.03, 0.85):.3f} kg"
    else:
        psat = CP.PropsSI("P", "T", t + 273.15, "Q", 0, cp)
        p = psat * (rnd.uniform(0.2, 0.9) if rnd.random() < 0.3 else rnd.uniform(0.93, 3.0))
        d["fill"]["pressure"] = f"{(p - ATM) / 1e5:.3f} bar(g)"
    return d


def test_liquefied_rows_by_mass_and_by_pressure_equal_the_single_case_screening():
    rnd = random.Random(20261203)
    cases = [parse_case_data(random_row(rnd, i), "t.csv", "x") for i in range(300)]
    got = [_as_json(r) for r in engine.screen_cases(cases)]
    on_array_path = sum(engine.liquefied_vectorisable(c) for c in cases) - engine.STATS["per_row"]
    assert on_array_path > 150
    for c, r in zip(cases, got):
        try:
            s = screen_states(c, curves=False).to_json()
        except ValueError:            # a mass fill denser than the liquid at the triple point
            assert r["verdict"] == "input-error"
            continue
        assert r["verdict"] == s["verdict"] and r["reasons"] == s["reasons"] and r["warnings"] == s["warnings"]
        assert differences(r, s) == [], (c.id, c.gas.name, differences(r, s)[:5])


def test_two_phase_mass_fill_peaks_at_the_vapour_pressure_on_the_array_path():
    # carbon dioxide, 0.5 kg/L at 15 degC heated to 25 degC: two-phase at the worst case, so the peak is the
    # vapour pressure there (Span & Wagner (1996) through CoolProp's PropsSI)
    d = {"id": "C", "vessel": {"water_capacity": "40 L", "rated_pressure": "250 bar(g)"},
         "fill": {"gas": "carbon dioxide", "mass": "20 kg", "temperature": "15 degC"},
         "exposure": {"ambient_max": "25 degC"}}
    case = parse_case_data(d, "t.csv", "x")
    assert engine.liquefied_vectorisable(case)
    r = _as_json(engine.screen_cases([case])[0])
    assert engine.STATS["vectorised"] == 1
    psat = CP.PropsSI("P", "T", 298.15, "Q", 0, "CO2")
    assert r["peak_pressure_pa"] == pytest.approx(psat, rel=1e-7)
    assert r["models"]["reference"]["phase_peak"] == "two-phase" and r["governing_model"] == "reference"
    # the liquid-full temperature: the saturated-liquid density equals the fill's 500 kg/m3 (PropsSI)
    assert CP.PropsSI("Dmass", "T", r["limits"]["liquid_full_temperature_k"], "Q", 0, "CO2") == pytest.approx(500.0,
                                                                                                             rel=1e-7)


def test_liquid_fill_by_pressure_near_saturation_is_refused_on_the_array_path_as_in_the_single_case():
    # propane at 15 degC and its own vapour pressure (PropsSI): the pressure cannot fix the contents
    psat = CP.PropsSI("P", "T", 288.15, "Q", 0, "Propane")
    d = {"id": "P", "vessel": {"water_capacity": "40 L", "rated_pressure": "30 bar(g)"},
         "fill": {"gas": "propane", "pressure": f"{(psat - ATM) / 1e5:.3f} bar(g)", "temperature": "15 degC"},
         "exposure": {"ambient_max": "40 degC"}}
    case = parse_case_data(d, "t.csv", "x")
    r = _as_json(engine.screen_cases([case])[0])
    assert engine.STATS["vectorised"] == 1
    assert r["verdict"] == "out-of-scope" and r["warnings"][-1]["code"] == "near-saturation"
    assert differences(r, screen_states(case, curves=False).to_json()) == []


def test_liquefied_batch_outputs_are_the_same_whatever_the_number_of_workers(tmp_path, monkeypatch):
    rnd = random.Random(5)
    lines = ["id,gas,water_capacity [L],rated_pressure [bar(g)],fill_pressure [bar(g)],fill_mass [kg],"
             "fill_temperature [degC],ambient_max [degC]"]
    for i in range(40):
        gas, cp, lo, hi = FLUIDS[i % len(FLUIDS)]
        t = rnd.uniform(-10, 25)
        if i % 2:
            p = CP.PropsSI("P", "T", t + 273.15, "Q", 0, cp) * rnd.choice((0.5, 1.5))
            lines.append(f"R{i},{gas},40,{rnd.uniform(lo, hi):.1f},{(p - ATM) / 1e5:.3f},,{t:.1f},{rnd.uniform(20, 70):.1f}")
        else:
            lines.append(f"R{i},{gas},40,{rnd.uniform(lo, hi):.1f},,{40 * rnd.uniform(0.05, 0.5):.2f},{t:.1f},"
                         f"{rnd.uniform(20, 70):.1f}")
    outs = batch_on_one_and_two_workers(tmp_path, monkeypatch, [line + "\n" for line in lines], chunk_rows=10)
    assert outs["1"] == outs["2"]
    assert len(json.loads(outs["1"][1])["results"]) == 40


#: Liquefied gases whose rows by pressure reach states at the edge of the reference equations: liquid fills heated
#: beyond the equation's highest pressure, targets whose density lies inside the dome at the fill temperature.
#: (gas, CoolProp name for the test's own vapour pressures)
EDGE_FLUIDS = [("n-butane", "n-Butane"), ("chlorine", "Chlorine"), ("sulfur dioxide", "SulfurDioxide"),
               ("R-1234ze(E)", "R1234ze(E)"), ("nitrous oxide", "NitrousOxide")]


def _edge_inventory(path, gas, cp, rows, seed):
    """An invented inventory of one gas by pressure: vapour (0.2-0.85 of the vapour pressure) or liquid (1.3-3
    times it) at -20...25 degC, worst cases -40...85 degC, rated 2.5 times the vapour pressure at 25 degC."""
    rnd = random.Random(seed)
    # vapour pressures: the gas's reference equation through CoolProp's PropsSI
    rated = 2.5 * (CP.PropsSI("P", "T", 298.15, "Q", 0, cp) - ATM) / 1e5
    lines = ["id,gas,water_capacity [L],rated_pressure [bar(g)],fill_pressure [bar(g)],fill_temperature [degC],"
             "ambient_max [degC]"]
    for i in range(rows):
        t = rnd.uniform(-20, 25)
        psat = CP.PropsSI("P", "T", t + 273.15, "Q", 0, cp)
        p = psat * (rnd.uniform(0.2, 0.85) if rnd.random() < 0.5 else rnd.uniform(1.3, 3.0))
        lines.append(f"E{i},{gas},40,{rated:.2f},{(p - ATM) / 1e5:.3f},{t:.2f},{rnd.uniform(-40, 85):.2f}")
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


@pytest.mark.parametrize("gas,cp", EDGE_FLUIDS)
def test_liquefied_rows_at_the_reference_range_edges_stay_on_the_arrays_with_the_single_case_answers(tmp_path, gas,
                                                                                                     cp):
    from screening.inputs.columns import read_plain
    from screening.inputs.inventory import read_inventory, row_case

    inv = read_inventory(_edge_inventory(tmp_path / "inv.csv", gas, cp, 60, seed=sum(gas.encode())))
    cases = [row_case(inv, n, cells, None) for n, cells in inv.rows]
    singles = [screen_states(c, curves=False).to_json() for c in cases]
    # both array layouts: cases (screen_cases) and the batch's plain rows (PlainScreening)
    got = [_as_json(r) for r in engine.screen_cases(cases)]
    assert engine.STATS["per_row"] == 0
    plain = read_plain(inv, None)
    screening = engine.PlainScreening(plain)
    assert screening.per_row == 0 and len(plain) == len(cases)
    for j, pos in enumerate(plain.index):
        s = singles[int(pos)]
        for r in (got[int(pos)], _as_json(screening.full(j))):
            assert r["verdict"] == s["verdict"] and r["reasons"] == s["reasons"] and r["warnings"] == s["warnings"]
            assert differences(r, s) == [], (s["id"], differences(r, s)[:5])
        assert screening.summaries[j]["verdict"] == s["verdict"]
    # the inventory holds both edges
    assert any(s["verdict"] == "out-of-scope" for s in singles)
    assert any(s["fill"]["phase"] == "gas" and s["limits"]["max_fill_pressure_pa"] is None for s in singles)


def test_liquid_heated_past_the_reference_range_is_out_of_scope_on_the_array_path():
    # liquid n-butane filled at 2 bar(g) and -3 degC, heated to 45 degC at its fill density: the reference equation
    # (Buecker & Wagner 2006, through CoolProp's PropsSI) gives a pressure above its own highest pressure there
    d = {"id": "B", "vessel": {"water_capacity": "40 L", "rated_pressure": "6 bar(g)"},
         "fill": {"gas": "n-butane", "pressure": "2 bar(g)", "temperature": "-3 degC"},
         "exposure": {"ambient_max": "45 degC"}}
    case = parse_case_data(d, "t.csv", "x")
    rho = CP.PropsSI("Dmass", "P", 2e5 + ATM, "T", 270.15, "n-Butane")
    assert CP.PropsSI("P", "Dmass", rho, "T", 318.15, "n-Butane") > CP.PropsSI("pmax", "n-Butane")
    r = _as_json(engine.screen_cases([case])[0])
    assert engine.STATS["vectorised"] == 1
    assert r["verdict"] == "out-of-scope" and r["peak_pressure_pa"] is None
    assert r["fill"]["density_kg_m3"] == pytest.approx(rho, rel=1e-9)
    assert not any(m["applicable"] for m in r["models"].values())
    assert differences(r, screen_states(case, curves=False).to_json()) == []


def test_no_fill_pressure_limit_where_the_target_density_is_two_phase_at_the_fill_temperature():
    # chlorine vapour at 1.5 bar(g) and 0 degC, worst case 60 degC, rated 8 bar(g): the density at the target
    # (7.2 bar(g) at 60 degC) lies between the saturated vapour and liquid densities at 0 degC (CoolProp's
    # PropsSI), so no fill pressure at 0 degC reaches the target: vapour fills stay below it, liquid fills above
    d = {"id": "C", "vessel": {"water_capacity": "40 L", "rated_pressure": "8 bar(g)"},
         "fill": {"gas": "chlorine", "pressure": "1.5 bar(g)", "temperature": "0 degC"},
         "exposure": {"ambient_max": "60 degC"}}
    case = parse_case_data(d, "t.csv", "x")
    target = ATM + 8e5 * 0.9
    rho_target = CP.PropsSI("Dmass", "P", target, "T", 333.15, "Chlorine")
    assert (CP.PropsSI("Dmass", "T", 273.15, "Q", 1, "Chlorine") < rho_target
            < CP.PropsSI("Dmass", "T", 273.15, "Q", 0, "Chlorine"))
    r = _as_json(engine.screen_cases([case])[0])
    assert engine.STATS["vectorised"] == 1
    assert r["fill"]["phase"] == "gas" and r["limits"]["target_peak_pressure_pa"] == pytest.approx(target, rel=1e-12)
    assert r["limits"]["max_fill_pressure_pa"] is None
    assert differences(r, screen_states(case, curves=False).to_json()) == []


def test_inventory_rows_by_mass_are_read_as_columns_with_the_single_case_answers(tmp_path):
    from screening.inputs.columns import read_plain
    from screening.inputs.inventory import read_inventory, row_case

    rnd = random.Random(11)
    lines = ["id,gas,water_capacity [L],rated_pressure [bar(g)],fill_mass [kg],fill_temperature [degC],"
             "ambient_max [degC],max_filling_ratio [kg/L]"]
    for i in range(60):
        gas, _cp, lo, hi = FLUIDS[i % len(FLUIDS)]
        cap = rnd.uniform(10, 60)
        ratio = f"{rnd.uniform(0.3, 0.8):.3f}" if i % 4 == 0 else ""
        lines.append(f"M{i},{gas},{cap:.2f},{rnd.uniform(lo, hi):.1f},{cap * rnd.uniform(0.03, 0.85):.3f},"
                     f"{rnd.uniform(-20, 30):.1f},{rnd.uniform(-30, 85):.1f},{ratio}")
    path = tmp_path / "inv.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    inv = read_inventory(path)
    plain = read_plain(inv, None)
    assert len(plain) == 60
    screening = engine.PlainScreening(plain)
    errors = 0
    for j, pos in enumerate(plain.index):
        try:
            s = screen_states(row_case(inv, *inv.rows[int(pos)], None), curves=False)
        except ValueError:            # a mass fill denser than the liquid at the triple point
            assert screening.summaries[j]["verdict"] == "input-error"
            errors += 1
            continue
        assert differences(_as_json(screening.full(j)), s.to_json()) == []
        assert differences(screening.summaries[j], s.summary_record()) == []
    # only the input errors go per row (where the single screening raises them)
    assert screening.per_row == errors < 10


def test_liquefied_columns_split_over_forked_workers_equal_one_process(tmp_path, monkeypatch):
    from screening import parallel

    monkeypatch.setattr(parallel, "workers", lambda: 2)
    from screening.inputs.columns import read_plain
    from screening.inputs.inventory import read_inventory

    inv = read_inventory(_edge_inventory(tmp_path / "inv.csv", "chlorine", "Chlorine", 40, seed=3))
    plain = read_plain(inv, None)
    idx = np.arange(len(plain))
    part = engine.PlainPart(plain.gases[0], *(a[idx] for a in (
        plain.fill_pressure_pa, plain.fill_temperature_k, plain.ambient_max_k, plain.gas_temperature_k, plain.rated_pa,
        plain.atmospheric_pa, plain.required_margin, plain.relief_pa, plain.max_filling_ratio_kg_m3)))
    one = engine._plain_columns(part)
    (forked,) = parallel.map_rows(engine._plain_columns, [part], min_rows=0)
    assert set(one) == set(forked) and forked["kind"] == "liquefied"
    for k in one:
        assert list(map(str, np.atleast_1d(one[k]))) == list(map(str, np.atleast_1d(forked[k]))), k


def test_liquid_fill_temperature_limit_found_below_the_reference_range_edge_on_the_array_path():
    # liquid n-butane filled at 3 bar(g) and 15 degC, rated 80 bar(g), worst case 20 degC: heated 300 K further its
    # isochore leaves the reference equation's range (above its highest pressure), so the temperature limit is
    # sought upwards from the worst case; at that temperature the fill density's pressure is the rating
    # (Buecker & Wagner 2006 through CoolProp's PropsSI)
    d = {"id": "B", "vessel": {"water_capacity": "40 L", "rated_pressure": "80 bar(g)"},
         "fill": {"gas": "n-butane", "pressure": "3 bar(g)", "temperature": "15 degC"},
         "exposure": {"ambient_max": "20 degC"}}
    case = parse_case_data(d, "t.csv", "x")
    r = _as_json(engine.screen_cases([case])[0])
    assert engine.STATS["vectorised"] == 1
    rho = CP.PropsSI("Dmass", "P", 3e5 + ATM, "T", 288.15, "n-Butane")
    assert CP.PropsSI("P", "Dmass", rho, "T", 400.0, "n-Butane") > CP.PropsSI("pmax", "n-Butane")
    t_max = r["limits"]["max_gas_temperature_k"]
    assert 293.15 < t_max < 310.0
    assert CP.PropsSI("P", "Dmass", rho, "T", t_max, "n-Butane") == pytest.approx(80e5 + ATM, rel=1e-7)
    assert differences(r, screen_states(case, curves=False).to_json()) == []
