"""Screening CPU per row by kind of row, against a naive PropsSI loop, on inventories that do not flatter the engine.

Run from the repository root:  python benchmarks/kinds.py [ROWS_PER_KIND]   (default 2000; mixtures a tenth)

For every kind below it writes an invented inventory over realistic random ranges (fills 20-300 bar(g), hydrogen
to 875, fill temperatures -20...40 degC, worst-case temperatures -40...85 degC, rated pressures 1.1 to 2 times the
fill, a quarter of the rows partly used cylinders at 3-30 % of their rating; liquefied gases by mass over their
filling ratios and by pressure as vapour or liquid away from the saturation band; mixtures; a tenth of the
nitrogen rows in the sun, a nitrogen inventory with input tolerances and two scenarios from a defaults file),
then measures in one run:

* tool: `screening batch INV --csv OUT` in a fresh process with one worker; the child's CPU time (user + system)
  minus that of the same command on a one-row inventory of the same kind, a row in the sun where the kind has
  some (imports and process start excluded);
* naive: one PropsSI density at the fill and one pressure at the worst case per row, in this process (CPU).

It prints CPU per row for both and their ratio (tool / naive: at most 1 is the target for every kind).
`--in-process` runs each batch in this process instead, after a one-row run of the same kind: no start-up to
subtract (whose noise is some 0.02 ms a row at 20 000 rows), but the imports are not counted either.
"""

from __future__ import annotations

import contextlib
import io
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


def _vapour_or_liquid_rows(gas: str, cp: str, rated: float, t_top: float = 25.0):
    import CoolProp.CoolProp as CP

    def make(rnd: random.Random, i: int):
        t = rnd.uniform(-20, t_top)
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

def _library_kinds() -> list[tuple]:
    """One kind per gas of the library: every permanent and quantum gas by pressure and by mass; every liquefied gas
    by mass (filling ratios up to 0.9 of its saturated liquid density at 50 degC or 5 K below its critical
    point, rated 1.1 to 2.5 times its vapour pressure at 65 degC or 1 K below its critical point) and by pressure (vapour or liquid away from
    the saturation band). The dissolved gas (acetylene) is not screened by this method."""
    import CoolProp.CoolProp as CP

    sys.path.insert(0, str(ROOT))
    from screening.physics.gases import library

    pure, by_mass, by_pressure = [], [], []
    for gas in library().values():
        cp = gas.coolprop_name
        if not cp or gas.kind == "dissolved":
            continue
        if gas.kind == "permanent":
            top = 875.0 if gas.name == "hydrogen" else 300.0
            label = gas.name if top == 300.0 else f"{gas.name} to 875 bar(g)"
            pure.append((label, gas.name, cp, _pressure_rows(gas.name, top), 1.0))
            # by mass: filling ratios from a few bar to the fill pressure's top at 15 degC, rated 1.1 to 2 times
            # that top (its peaks at the worst case over or under the rating)
            ratio_top = CP.PropsSI("Dmass", "P", top * 1e5 + ATM, "T", 288.15, cp) / 1000.0
            by_mass.append((f"{gas.name} by mass", gas.name, cp,
                            _mass_rows(gas.name, 0.01 * ratio_top, ratio_top, 1.1 * top, 2.0 * top), 1.0))
            continue
        rho_l = CP.PropsSI("Dmass", "T", min(323.15, gas.critical_temperature - 5.0), "Q", 0, cp)
        psat = (CP.PropsSI("P", "T", min(338.15, gas.critical_temperature - 1.0), "Q", 0, cp) - ATM) / 1e5
        by_mass.append((f"{gas.name} by mass", gas.name, cp,
                        _mass_rows(gas.name, 0.05, 0.9 * rho_l / 1000.0, 1.1 * psat, 2.5 * psat), 1.0))
        rated = 2.5 * (CP.PropsSI("P", "T", min(gas.critical_temperature - 1.0, 298.15), "Q", 0, cp) - ATM) / 1e5
        t_top = min(25.0, gas.critical_temperature - 273.15 - 3.0)
        by_pressure.append((f"{gas.name} by pressure", gas.name, cp,
                            _vapour_or_liquid_rows(gas.name, cp, rated, t_top), 1.0))
    return pure + by_mass + by_pressure


#: A defaults file giving every row two exposure scenarios (the worst governs).
TWO_SCENARIOS = TOLERANCES_AND_SCENARIOS[TOLERANCES_AND_SCENARIOS.index("[[scenario]]"):]

# (label, gas name for the tool, CoolProp fluid string, row maker, share of the rows[, defaults file text])
OPTIONS = [
    ("nitrogen, 10 % in the sun", "nitrogen", "Nitrogen", _pressure_rows("nitrogen", sun_share=0.1), 1.0),
    ("nitrogen, tolerances and two scenarios", "nitrogen", "Nitrogen", _pressure_rows("nitrogen"), 0.1,
     TOLERANCES_AND_SCENARIOS),
    # propane by mass over its filling ratios (to 0.9 of its saturated liquid density at 50 degC), rated 1.1 to 2.5
    # times its vapour pressure at 65 degC, as the library's "propane by mass" kind
    ("propane by mass, two scenarios", "propane", "Propane", _mass_rows("propane", 0.05, 0.42, 24.0, 55.0), 0.1,
     TWO_SCENARIOS),
    ("propane by mass, tolerances and two scenarios", "propane", "Propane", _mass_rows("propane", 0.05, 0.42, 24.0,
                                                                                       55.0), 0.1,
     TOLERANCES_AND_SCENARIOS),
]
MIXTURES = [
    ("argon 82 % + CO2 18 %", "argon 82% + carbon dioxide 18%", "HEOS::Argon[0.82]&CO2[0.18]",
     _pressure_rows("argon 82% + carbon dioxide 18%"), 0.1),
    ("nitrogen 79 % + oxygen 21 %", "nitrogen 79% + oxygen 21%", "HEOS::Nitrogen[0.79]&Oxygen[0.21]",
     _pressure_rows("nitrogen 79% + oxygen 21%"), 0.1),
    ("methane 90 % + ethane 6 % + nitrogen 4 %", "methane 90% + ethane 6% + nitrogen 4%",
     "HEOS::Methane[0.9]&Ethane[0.06]&Nitrogen[0.04]", _pressure_rows("methane 90% + ethane 6% + nitrogen 4%"), 0.1),
]


def kinds() -> list[tuple]:
    """Every kind: the library's gases, then the options on nitrogen, then the mixtures."""
    return _library_kinds() + OPTIONS + MIXTURES


def chosen(all_kinds: list[tuple], words: list[str]) -> list[tuple]:
    """The kinds named: a group ("pure", "liquefied", "by-mass", "by-pressure", "options", "mixtures", "all")
    or a kind's label ("argon": that kind alone), or else any text found in labels ("by mass")."""
    if not words:
        return all_kinds
    groups = {
        "all": lambda k: True,
        "pure": lambda k: k[4] == 1.0 and "by " not in k[0] and "," not in k[0] and "%" not in k[0],
        "liquefied": lambda k: k[0].endswith((" by mass", " by pressure")),
        "by-mass": lambda k: k[0].endswith(" by mass"),
        "by-pressure": lambda k: k[0].endswith(" by pressure"),
        "options": lambda k: "," in k[0],
        "mixtures": lambda k: "%" in k[0] and "," not in k[0],
    }
    labels = {k[0] for k in all_kinds}

    def named(w: str, k: tuple) -> bool:
        if w in groups:
            return groups[w](k)
        return k[0] == w if w in labels else w in k[0]

    return [k for k in all_kinds if any(named(w, k) for w in words)]


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


def in_process_cpu(inv: Path, out: Path, defaults: Path | None = None) -> float:
    """CPU of `screening batch INV --csv OUT` run in this process (one worker; imports already done)."""
    from screening import cli

    os.environ["SCREENING_WORKERS"] = "1"
    extra = ["--defaults", str(defaults)] if defaults is not None else []
    t0 = time.process_time()
    with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):
        try:
            cli.main(["batch", str(inv), "--csv", str(out), "--quiet"] + extra)
        except SystemExit:
            pass
    return time.process_time() - t0


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
    import argparse

    ap = argparse.ArgumentParser(description="Screening CPU per row by kind against a naive PropsSI loop.")
    ap.add_argument("rows", nargs="?", type=int, default=2000, help="rows per kind (mixtures and tolerances a "
                    "tenth; default 2000)")
    ap.add_argument("--kinds", default="", help="comma-separated groups (pure, liquefied, by-mass, by-pressure, "
                    "options, mixtures, all) or texts of kind labels, e.g. 'pure' or 'nitrogen,argon'")
    ap.add_argument("--list", action="store_true", help="list the kinds and stop")
    ap.add_argument("--in-process", action="store_true", help="run each batch in this process after a one-row run "
                    "of the same kind (no start-up to subtract: less noise, the imports not counted)")
    a = ap.parse_args()
    n = a.rows
    todo = chosen(kinds(), [w.strip() for w in a.kinds.split(",") if w.strip()])
    if a.list:
        for label, *_ in todo:
            print(label)
        return
    print(f"# {time.strftime('%Y-%m-%d %H:%M')}, {n} rows per kind (mixtures and tolerances {max(1, n // 10)}), "
          "one worker")
    print(f"{'kind':44s} {'rows':>6s} {'tool ms/row':>12s} {'naive ms/row':>13s} {'ratio':>7s}")
    with tempfile.TemporaryDirectory() as tmp:
        tmp_path = Path(tmp)
        for k, (label, _gas, fluid, make, share, *more) in enumerate(todo):
            rows = max(1, int(n * share))
            inv, one, out = tmp_path / f"k{k}.csv", tmp_path / f"k{k}-1.csv", tmp_path / f"k{k}-out.csv"
            defaults = None
            if more:
                defaults = tmp_path / f"k{k}-defaults.toml"
                defaults.write_text(more[0], encoding="utf-8")
            seed = sum(label.encode()) + 1           # the same rows for a kind whatever else is chosen
            states = write(inv, make, rows, seed=seed)
            lines = inv.read_text(encoding="utf-8").splitlines()
            # the one-row baseline: a row in the sun where the kind has some, so that what only such rows import
            # (the heat-transfer correlations, the root finder) is start-up, not CPU per row
            first = next((line for line in lines[1:] if line.endswith(",sun")), lines[1])
            one.write_text(lines[0] + "\n" + first + "\n", encoding="utf-8")
            if a.in_process:
                sys.path.insert(0, str(ROOT))
                in_process_cpu(one, out, defaults)
                tool = in_process_cpu(inv, out, defaults)
            else:
                start = child_cpu(one, out, defaults)
                tool = max(child_cpu(inv, out, defaults) - start, 0.0)
            loop = naive(fluid, states)
            ratio = tool / loop if loop > 0 else math.inf
            print(f"{label:44s} {rows:6d} {tool / rows * 1e3:12.3f} {loop / rows * 1e3:13.3f} {ratio:7.2f}", flush=True)


if __name__ == "__main__":
    main()
