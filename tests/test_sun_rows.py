"""Inventory rows in the sun (a `solar` column reading "sun") run on the batch's columns with their worst case from
the energy balance: the same results as the single-case screening, the same bytes whatever the number of workers,
and the reference peak at the worst-case temperature the balance gives checked against CoolProp."""

import json
import random

import CoolProp.CoolProp as CP
import pytest
from helpers import result_differences

from screening import engine
from screening.errors import InputError
from screening.inputs.columns import read_plain
from screening.inputs.inventory import read_inventory, row_case
from screening.screen import P_TOL

HEAD = ("id,gas,water_capacity,rated_pressure [bar(g)],fill_pressure [bar(g)],fill_mass [kg],fill_temperature [degC],"
        "ambient_max [degC],gas_temperature [degC],solar,finish,absorptivity,emissivity,irradiance [W/m2],"
        "wind_speed [m/s],orientation,outside_diameter [mm],length [m]\n")
#: Numbers at 1e-9 relative and limits at 2e-9, as the golden corpus compares them.
RTOL, RTOL_LIMITS = 1e-9, 2 * P_TOL
#: Keys the batch's JSON lines add or leave out.
BATCH_ONLY = ("row", "input", "curves", "cautions")
ATM = 101325.0


def _row(rnd: random.Random, i: int) -> tuple[str, str, dict]:
    """One invented row (CSV line, CoolProp fluid, fill: {"p": Pa absolute} or {"dmass": kg/m3}): permanent and
    quantum gases by pressure, a permanent gas by mass, liquefied gases by mass and by pressure (vapour)."""
    kind = rnd.choice(["nitrogen", "argon", "hydrogen", "helium", "nitrogen by mass", "propane by mass",
                       "carbon dioxide by mass", "propane by pressure"])
    # ambients shared by many rows (one balance for them) and ambients of their own, some above the sky
    # correlation's range (sky at ambient)
    amb = rnd.choice([30.0, 40.0, 45.0]) if rnd.random() < 0.5 else round(rnd.uniform(-20.0, 55.0), 2)
    hot = f"{rnd.uniform(-20.0, 85.0):.2f}" if rnd.random() < 0.3 else ""
    t_fill = rnd.uniform(-10.0, 40.0)
    sun = "sun" if rnd.random() < 0.8 else ""
    cap = rnd.choice([10.0, 50.0]) if rnd.random() < 0.5 else round(rnd.uniform(5.0, 80.0), 2)
    if kind in ("nitrogen", "argon", "hydrogen", "helium"):
        rated = rnd.uniform(100.0, 450.0)
        p = rated * rnd.choice([rnd.uniform(0.05, 0.3), rnd.uniform(0.5, 1.02)])
        fluid = {"nitrogen": "Nitrogen", "argon": "Argon", "hydrogen": "Hydrogen", "helium": "Helium"}[kind]
        cells = (kind, f"{rated:.2f}", f"{p:.2f}", "")
        fill = {"p": round(p, 2) * 1e5 + ATM}
    elif kind == "propane by pressure":
        t_fill = rnd.uniform(-10.0, 25.0)
        psat = CP.PropsSI("P", "T", round(t_fill, 2) + 273.15, "Q", 0, "Propane")
        p_gauge = (psat * rnd.uniform(0.2, 0.8) - ATM) / 1e5
        if p_gauge <= 0.2:
            p_gauge = 0.5
        cells, fluid, fill = ("propane", "30.00", f"{p_gauge:.3f}", ""), "Propane", {"p": round(p_gauge, 3) * 1e5 + ATM}
    else:
        gas, ratio, rated = {"nitrogen by mass": ("nitrogen", rnd.uniform(0.02, 0.25), rnd.uniform(300, 600)),
                             "propane by mass": ("propane", rnd.uniform(0.05, 0.42), rnd.uniform(24, 55)),
                             "carbon dioxide by mass": ("carbon dioxide", rnd.uniform(0.1, 0.75),
                                                        rnd.uniform(150, 250))}[kind]
        mass = round(cap * ratio, 3)
        fluid = {"nitrogen": "Nitrogen", "propane": "Propane", "carbon dioxide": "CO2"}[gas]
        cells, fill = (gas, f"{rated:.2f}", "", f"{mass:.3f}"), {"dmass": mass / (cap / 1000.0)}
    gas, rated, p, mass = cells
    finish = rnd.choice(["", "", "white paint", "black_paint"])
    # the balance's other inputs on some rows (an absorptivity only where no finish is given)
    absorptivity = f"{rnd.uniform(0.2, 1.0):.2f}" if not finish and rnd.random() < 0.3 else ""
    extra = [f"{rnd.uniform(0.1, 1.0):.2f}" if rnd.random() < 0.2 else "",
             rnd.choice(["", "", "", "600", "1100"]), rnd.choice(["", "", "", "0", "1.5", "6"]),
             rnd.choice(["", "", "", "vertical", "horizontal"])]
    dims = [f"{rnd.uniform(100, 400):.0f}", f"{rnd.uniform(0.5, 2.0):.2f}"] if rnd.random() < 0.2 else ["", ""]
    line = ",".join([f"S{i},{gas},{cap} L,{rated},{p},{mass},{t_fill:.2f},{amb},{hot},{sun},{finish}",
                     absorptivity, *extra, *dims]) + "\n"
    return line, fluid, fill


def _inventory(tmp_path, n: int = 160, seed: int = 20261204):
    rnd = random.Random(seed)
    rows = [_row(rnd, i) for i in range(n)]
    # a row whose ambient is below the sky correlation's range and one of an unknown finish: input errors on
    # both routes
    rows.append(("E,nitrogen,50 L,300,200,,15,-60,,sun,,,,,,,,\n", "Nitrogen", {"p": 200e5 + ATM}))
    rows.append(("F,nitrogen,50 L,300,200,,15,30,,sun,chrome,,,,,,,\n", "Nitrogen", {"p": 200e5 + ATM}))
    path = tmp_path / "sun.csv"
    path.write_text(HEAD + "".join(line for line, _, _ in rows), encoding="utf-8")
    return path, rows


def _batch_lines(tmp_path, monkeypatch, path, workers: str) -> tuple[bytes, bytes]:
    from screening import batch, parallel
    from screening.cli import run

    monkeypatch.setattr(batch, "CHUNK_ROWS", 23)
    monkeypatch.setenv(parallel.WORKERS_ENV, workers)
    monkeypatch.setattr(parallel, "workers", lambda: int(workers))
    out = [tmp_path / f"w{workers}.{ext}" for ext in ("jsonl", "csv")]
    run(["batch", str(path), "--jsonl", str(out[0]), "--csv", str(out[1]), "--quiet"])
    return out[0].read_bytes(), out[1].read_bytes()


def test_sun_rows_in_a_batch_equal_the_single_case_screening_and_coolprop_at_the_balance_temperature(
        tmp_path, monkeypatch):
    path, rows = _inventory(tmp_path)
    inv = read_inventory(path)
    plain = read_plain(inv, None)
    # every row is read as columns, the sun rows among them, and the sun rows are screened on the columns
    assert len(plain) == len(rows) and int(plain.sun.sum()) >= 100
    screened = engine.PlainScreening(plain)
    assert screened.per_row <= len(rows) // 10

    one, csv_one = _batch_lines(tmp_path, monkeypatch, path, "1")
    two, csv_two = _batch_lines(tmp_path, monkeypatch, path, "2")
    assert (one, csv_one) == (two, csv_two)
    lines = [json.loads(x) for x in one.splitlines()]
    assert len(lines) == len(rows)

    checked = {"sun": 0, "reference peaks": 0, "wall governs": 0, "fill state governs": 0, "sky at ambient": 0,
               "finish given": 0, "wind": 0, "vertical": 0, "dimensions given": 0, "input errors": 0}
    kinds = set()
    for (n, cells), got, (_line, fluid, fill) in zip(inv.rows, lines, rows):
        try:
            want = engine.screen_case(row_case(inv, n, cells, None), curves=False).to_json()
        except InputError as exc:
            assert got["verdict"] == "input-error" and got["error"]["message"] == exc.message, got
            checked["input errors"] += 1
            continue
        got = {k: v for k, v in got.items() if k not in BATCH_ONLY}
        want = {k: v for k, v in want.items() if k not in BATCH_ONLY}
        assert result_differences(want, got, RTOL, RTOL_LIMITS) == [], got["id"]
        bal = got["exposure"]
        if bal is None:
            continue
        checked["sun"] += 1
        kinds.add((got["gas"]["name"], got["fill"]["given"]))
        t_wc = got["worst_case_temperature_k"]
        stated = [s["worst_case_temperature_k"] for s in got["scenarios"]]
        assert stated == [t_wc]
        # the worst case is the highest of the wall, the ambient, a stated gas temperature and the fill temperature
        candidates = [bal["wall_temperature_k"], bal["ambient_k"], got["fill"]["temperature_k"]]
        hot = cells[8].strip()
        if hot:
            candidates.append(float(hot) + 273.15)
        assert t_wc == max(candidates)
        if got["worst_case_basis"] == "vessel wall temperature in the sun (energy balance)":
            checked["wall governs"] += 1
            assert t_wc == bal["wall_temperature_k"]
        elif "fill-state-governs" in {w["code"] for w in got["warnings"]}:
            checked["fill state governs"] += 1
        checked["sky at ambient"] += bal["sky_temperature_k"] == bal["ambient_k"]
        checked["finish given"] += any(note.startswith("Finish '") for note in bal["notes"])
        checked["wind"] += bal["wind_speed_m_s"] > 0.0
        checked["vertical"] += bal["orientation"] == "vertical"
        checked["dimensions given"] += not bal["dimensions_estimated"]
        ref = got["models"]["reference"]
        if not ref["applicable"] or ref["peak_pressure_pa"] is None:
            continue
        # the reference equation of state of the fluid through CoolProp's PropsSI, evaluated here: the fill
        # density (given by mass, or at the fill pressure and temperature), then the pressure at that density and
        # the worst-case temperature of the balance
        if "p" in fill:
            rho = CP.PropsSI("Dmolar", "P", fill["p"], "T", got["fill"]["temperature_k"], fluid)
        else:
            rho = CP.PropsSI("Dmolar", "Dmass", fill["dmass"], "T", got["fill"]["temperature_k"], fluid)
        assert ref["peak_pressure_pa"] == pytest.approx(CP.PropsSI("P", "Dmolar", rho, "T", t_wc, fluid), rel=1e-6)
        checked["reference peaks"] += 1
    assert checked["sun"] >= 100 and checked["reference peaks"] >= 80, checked
    assert min(checked.values()) >= 1 and checked["input errors"] == 2, checked
    assert {("nitrogen", "pressure"), ("helium", "pressure"), ("nitrogen", "mass"), ("propane", "mass"),
            ("carbon dioxide", "mass"), ("propane", "pressure")} <= kinds


def test_cases_sharing_a_sun_exposure_share_its_balance_and_each_gets_its_own_answer(monkeypatch):
    # one exposure (ambient, finish, wind, vessel) for many vessels of different fills, with tolerances and two
    # scenarios for some: every result as the state-by-state screening gives it, one case at a time
    from screening.inputs.case import parse_case_data
    from screening.screen import screen_states

    rnd = random.Random(5)
    cases = []
    for i in range(24):
        d = {"id": f"V{i}", "vessel": {"water_capacity": "50 L", "rated_pressure": "300 bar(g)"},
             "fill": {"gas": rnd.choice(["nitrogen", "argon", "propane"]), "temperature": f"{rnd.uniform(0, 30):.1f} degC"},
             "exposure": {"ambient_max": "38 degC", "solar": "sun", "finish": "red paint", "wind_speed": "1 m/s"}}
        if d["fill"]["gas"] == "propane":
            d["vessel"]["rated_pressure"] = "30 bar(g)"
            d["fill"]["mass"] = f"{rnd.uniform(2, 20):.2f} kg"
        else:
            d["fill"]["pressure"] = f"{rnd.uniform(20, 250):.1f} bar(g)"
            if i % 3 == 0:
                d["scenario"] = [{"name": "yard"}, {"name": "shade", "solar": "none"}]
                d["tolerance"] = {"fill_temperature": "2 K"}
        cases.append(parse_case_data(d, "t.csv", "x"))
    from screening import screen

    solved = []
    balance = screen.sun_balance
    monkeypatch.setattr(screen, "sun_balance", lambda *a: solved.append(a) or balance(*a))
    got = [r.to_json() for r in engine.screen_cases(cases)]
    monkeypatch.undo()
    # one balance per scenario name (its warning names it): "exposure" and "yard"
    assert len(solved) == 2, [(a[0].name, a[0].key) for a in solved]
    walls = {r["exposure"]["wall_temperature_k"] for r in got if r["exposure"] is not None}
    assert len(walls) == 1
    for c, r in zip(cases, got):
        want = screen_states(c, curves=False).to_json()
        assert result_differences(want, r, RTOL, RTOL_LIMITS) == [], c.id
