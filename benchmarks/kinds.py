"""Screening CPU per row by kind of row, against a naive PropsSI loop, on inventories that do not flatter the engine.

Run from the repository root:  python benchmarks/kinds.py [ROWS_PER_KIND] [KIND_FILTER]   (default 2000; mixtures
a tenth; KIND_FILTER: only the kinds whose label contains one of its |-separated parts, e.g. "sun|tolerances")

For every kind below it writes an invented inventory over realistic random ranges (fills 20-300 bar(g), hydrogen
to 875, fill temperatures -20...40 degC, worst-case temperatures -40...85 degC, rated pressures 1.1 to 2 times the
fill, a quarter of the rows partly used cylinders at 3-30 % of their rating; liquefied gases by mass over their
filling ratios and by pressure as vapour or liquid away from the saturation band; mixtures; a tenth of the
nitrogen rows in the sun, a nitrogen inventory with input tolerances and two scenarios from a defaults file),
then measures in one run:

* tool: `screening batch INV --csv OUT` in a fresh process with one worker; the child's CPU time (user + system)
  minus that of the same command on a one-row inventory of the same kind (imports and process start excluded);
* naive: one PropsSI density at the fill and one pressure at the worst case per row, in this process (CPU).

It prints CPU per row for both and their ratio (tool / naive: at most 1 is the target for every kind).
"""

from __future__ import annotations

import math
import os
import random
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
ENV = dict(os.environ, PYTHONPATH=str(ROOT), SCREENING_WORKERS="1")
HEADER = ("id,gas,water_capacity [L],rated_pressure [bar(g)],fill_pressure [bar(g)],fill_mass [kg],"
          "fill_temperature [degC],ambient_max [degC],solar")
ATM = 101325.0


def _fill_rated(rnd: random.Random, top: float = 300.0) -> tuple[float, float]:
    rated = rnd.uniform(40.0, top * 1.5)
    if rnd.random() < 0.25:                        # a partly used cylinder
        return rated * rnd.uniform(0.03, 0.30), rated
    fill = rnd.uniform(20.0, top)
    return fill, fill * rnd.uniform(1.1, 2.0)


def _pressure_rows(gas: str, top: float = 300.0, sun_share: float = 0.0):
    def make(rnd: random.Random, i: int):
        p, rated = _fill_rated(rnd, top)
        sun = "sun" if rnd.random() < sun_share else ""
        return (f"R{i},{gas},50,{rated:.2f},{p:.2f},,{rnd.uniform(-20, 40):.2f},{rnd.uniform(-40, 85):.2f},{sun}",
                ("P", p * 1e5 + ATM))
    return make


def _mass_rows(gas: str, ratio_lo: float, ratio_hi: float, rated_lo: float, rated_hi: float):
    def make(rnd: random.Random, i: int):
        cap = rnd.uniform(10, 60)
        mass = cap * rnd.uniform(ratio_lo, ratio_hi)
        return (f"R{i},{gas},{cap:.2f},{rnd.uniform(rated_lo, rated_hi):.2f},,{mass:.3f},{rnd.uniform(-20, 40):.2f},"
                f"{rnd.uniform(-40, 85):.2f},", ("D", mass / cap * 1000.0))
    return make


def _vapour_or_liquid_rows(gas: str, cp: str, rated: float):
    import CoolProp.CoolProp as CP

    def make(rnd: random.Random, i: int):
        t = rnd.uniform(-20, 25)
        psat = CP.PropsSI("P", "T", t + 273.15, "Q", 0, cp)
        p = psat * (rnd.uniform(0.2, 0.85) if rnd.random() < 0.5 else rnd.uniform(1.3, 3.0))
        return (f"R{i},{gas},40,{rated:.2f},{(p - ATM) / 1e5:.3f},,{t:.2f},{rnd.uniform(-40, 85):.2f},",
                ("P", p))
    return make


#: A defaults file giving every row input tolerances and two exposure scenarios (the worst governs).
TOLERANCES_AND_SCENARIOS = """[tolerance]
fill_pressure = "2 bar"
fill_temperature = "2 K"
gas_temperature = "3 K"

[[scenario]]
name = "as listed"

[[scenario]]
name = "closed van"
gas_temperature = "65 degC"
"""

# (label, gas name for the tool, CoolProp fluid string, row maker, share of the rows[, defaults file text])
KINDS = [
    ("nitrogen", "nitrogen", "Nitrogen", _pressure_rows("nitrogen"), 1.0),
    ("oxygen", "oxygen", "Oxygen", _pressure_rows("oxygen"), 1.0),
    ("argon", "argon", "Argon", _pressure_rows("argon"), 1.0),
    ("air", "air", "Air", _pressure_rows("air"), 1.0),
    ("methane", "methane", "Methane", _pressure_rows("methane"), 1.0),
    ("helium", "helium", "Helium", _pressure_rows("helium"), 1.0),
    ("neon", "neon", "Neon", _pressure_rows("neon"), 1.0),
    ("hydrogen to 875 bar(g)", "hydrogen", "Hydrogen", _pressure_rows("hydrogen", 875.0), 1.0),
    ("nitrogen, 10 % in the sun", "nitrogen", "Nitrogen", _pressure_rows("nitrogen", sun_share=0.1), 1.0),
    ("nitrogen, tolerances and two scenarios", "nitrogen", "Nitrogen", _pressure_rows("nitrogen"), 0.1,
     TOLERANCES_AND_SCENARIOS),
    ("carbon dioxide by mass", "carbon dioxide", "CO2", _mass_rows("carbon dioxide", 0.05, 0.80, 150, 300), 1.0),
    ("propane by mass", "propane", "Propane", _mass_rows("propane", 0.05, 0.45, 25, 40), 1.0),
    ("ammonia by mass", "ammonia", "Ammonia", _mass_rows("ammonia", 0.05, 0.55, 25, 40), 1.0),
    ("carbon dioxide by pressure", "carbon dioxide", "CO2", _vapour_or_liquid_rows("carbon dioxide", "CO2", 250), 1.0),
    ("propane by pressure", "propane", "Propane", _vapour_or_liquid_rows("propane", "Propane", 40), 1.0),
    ("argon 82 % + CO2 18 %", "argon 82% + carbon dioxide 18%", "HEOS::Argon[0.82]&CO2[0.18]",
     _pressure_rows("argon 82% + carbon dioxide 18%"), 0.1),
    ("nitrogen 79 % + oxygen 21 %", "nitrogen 79% + oxygen 21%", "HEOS::Nitrogen[0.79]&Oxygen[0.21]",
     _pressure_rows("nitrogen 79% + oxygen 21%"), 0.1),
    ("methane 90 % + ethane 6 % + nitrogen 4 %", "methane 90% + ethane 6% + nitrogen 4%",
     "HEOS::Methane[0.9]&Ethane[0.06]&Nitrogen[0.04]", _pressure_rows("methane 90% + ethane 6% + nitrogen 4%"), 0.1),
]


def write(path: Path, make, n: int, seed: int) -> list[tuple]:
    rnd = random.Random(seed)
    states = []
    with open(path, "w", encoding="utf-8") as fh:
        fh.write(HEADER + "\n")
        for i in range(n):
            line, fill = make(rnd, i)
            fh.write(line + "\n")
            cells = line.split(",")
            states.append((fill, float(cells[6]) + 273.15, float(cells[7]) + 273.15))
    return states


def child_cpu(inv: Path, out: Path, defaults: Path | None = None) -> float:
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    extra = ["--defaults", str(defaults)] if defaults is not None else []
    subprocess.run([sys.executable, "-m", "screening.cli", "batch", str(inv), "--csv", str(out)] + extra, env=ENV,
                   stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, check=False)
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    return (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)


def naive(fluid: str, states: list[tuple]) -> float:
    import CoolProp.CoolProp as CP

    t0 = time.process_time()
    for (kind, value), t_fill, t_peak in states:
        try:
            d = CP.PropsSI("Dmass", "P", value, "T", t_fill, fluid) if kind == "P" else value
            CP.PropsSI("P", "Dmass", d, "T", t_peak, fluid)
        except ValueError:
            pass
    return time.process_time() - t0


def main() -> None:
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 2000
    only = (sys.argv[2] if len(sys.argv) > 2 else "").split("|")
    print(f"# {time.strftime('%Y-%m-%d %H:%M')}, {n} rows per kind (mixtures and tolerances {max(1, n // 10)}), "
          "one worker")
    print(f"{'kind':44s} {'rows':>6s} {'tool ms/row':>12s} {'naive ms/row':>13s} {'ratio':>7s}")
    with tempfile.TemporaryDirectory() as tmp:
        tmp_path = Path(tmp)
        for k, (label, _gas, fluid, make, share, *more) in enumerate(KINDS):
            if not any(part in label for part in only):
                continue
            rows = max(1, int(n * share))
            inv, one, out = tmp_path / f"k{k}.csv", tmp_path / f"k{k}-1.csv", tmp_path / f"k{k}-out.csv"
            defaults = None
            if more:
                defaults = tmp_path / f"k{k}-defaults.toml"
                defaults.write_text(more[0], encoding="utf-8")
            states = write(inv, make, rows, seed=k + 1)
            write(one, make, 1, seed=k + 1)
            start = child_cpu(one, out, defaults)
            tool = max(child_cpu(inv, out, defaults) - start, 0.0)
            loop = naive(fluid, states)
            ratio = tool / loop if loop > 0 else math.inf
            print(f"{label:44s} {rows:6d} {tool / rows * 1e3:12.3f} {loop / rows * 1e3:13.3f} {ratio:7.1f}", flush=True)


if __name__ == "__main__":
    main()
