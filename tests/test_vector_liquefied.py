"""Liquefied gases on the batch's array path: the same results as the single-case screening, checked against CoolProp."""

import json
import random

import CoolProp.CoolProp as CP
import pytest

from screening import engine
from screening.cli import run
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
    from screening import batch, parallel

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
    inv = tmp_path / "inv.csv"
    inv.write_text("\n".join(lines) + "\n", encoding="utf-8")
    monkeypatch.setattr(batch, "CHUNK_ROWS", 10)
    outs = {}
    for n in ("1", "2"):
        monkeypatch.setenv(parallel.WORKERS_ENV, n)
        monkeypatch.setattr(parallel, "workers", lambda n=n: int(n))
        names = [tmp_path / f"o{n}.{ext}" for ext in ("csv", "json")]
        run(["batch", str(inv), "--csv", str(names[0]), "--json", str(names[1]), "--quiet"])
        outs[n] = [p.read_bytes() for p in names]
    assert outs["1"] == outs["2"]
    assert len(json.loads(outs["1"][1])["results"]) == 40
