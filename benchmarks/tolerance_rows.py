"""The engine alone on vessels with input tolerances and several scenarios: `engine.screen_cases` CPU per vessel.

Run from the repository root:  python benchmarks/tolerance_rows.py [VESSELS] [--repeat N]

Three tables of invented vessels (as `benchmarks/kinds.py` draws its rows: nitrogen fills 20-300 bar(g) rated 1.1
to 2 times the fill, propane by mass at filling ratios 0.05-0.42 kg/L rated 24-55 bar(g); fill temperatures
-20...40 degC, ambient maxima -40...85 degC), each vessel with two scenarios ("as listed" and a closed van at
65 degC):
* nitrogen with input tolerances (fill pressure 2 bar, fill temperature 2 K, gas temperature 3 K);
* propane by mass, no tolerances;
* propane by mass with a gas-temperature tolerance of 3 K.
The cases are read before timing (no register, no output written); each table is screened once to warm the
process, then N times (default 5), and the best CPU time per vessel (`time.process_time`) is printed. Plain
Python; to compare with another checkout run it with PYTHONPATH=THAT_CHECKOUT (the script prints which package it
timed).
"""

from __future__ import annotations

import argparse
import random
import time
from pathlib import Path

import screening
from screening import engine
from screening.inputs.case import parse_case_text

SCENARIOS = '[[scenario]]\nname = "as listed"\n[[scenario]]\nname = "closed van"\ngas_temperature = "65 degC"\n'


def nitrogen(n: int, seed: int = 5) -> list:
    rnd = random.Random(seed)
    out = []
    for i in range(n):
        p = rnd.uniform(20, 300)
        rated = p * rnd.uniform(1.1, 2.0)
        out.append(parse_case_text(
            f'id = "N{i}"\n[vessel]\nwater_capacity = "50 L"\nrated_pressure = "{rated:.2f} bar(g)"\n'
            f'[fill]\ngas = "nitrogen"\npressure = "{p:.2f} bar(g)"\ntemperature = "{rnd.uniform(-20, 40):.2f} degC"\n'
            f'[exposure]\nambient_max = "{rnd.uniform(-40, 85):.2f} degC"\n' + SCENARIOS
            + '[tolerance]\nfill_pressure = "2 bar"\nfill_temperature = "2 K"\ngas_temperature = "3 K"\n', "<n>"))
    return out


def propane(n: int, tolerance: bool, seed: int = 9) -> list:
    rnd = random.Random(seed)
    out = []
    for i in range(n):
        cap = rnd.uniform(10, 60)
        out.append(parse_case_text(
            f'id = "P{i}"\n[vessel]\nwater_capacity = "{cap:.2f} L"\n'
            f'rated_pressure = "{rnd.uniform(24, 55):.2f} bar(g)"\n'
            f'[fill]\ngas = "propane"\nmass = "{cap * rnd.uniform(0.05, 0.42):.3f} kg"\n'
            f'temperature = "{rnd.uniform(-20, 40):.2f} degC"\n'
            f'[exposure]\nambient_max = "{rnd.uniform(-40, 85):.2f} degC"\n' + SCENARIOS
            + ('[tolerance]\ngas_temperature = "3 K"\n' if tolerance else ""), "<p>"))
    return out


def main() -> None:
    ap = argparse.ArgumentParser(description="screen_cases CPU per vessel with tolerances and scenarios.")
    ap.add_argument("vessels", nargs="?", type=int, default=400)
    ap.add_argument("--repeat", type=int, default=5)
    a = ap.parse_args()
    print(f"# {time.strftime('%Y-%m-%d %H:%M')}, {Path(screening.__file__).parent}, {a.vessels} vessels, "
          f"best of {a.repeat}, CPU ms per vessel")
    tables = [("nitrogen, tolerances and two scenarios", nitrogen(a.vessels)),
              ("propane by mass, two scenarios", propane(a.vessels, False)),
              ("propane by mass, tolerances and two scenarios", propane(a.vessels, True))]
    for label, cases in tables:
        engine.screen_cases(cases[:2])
        best = float("inf")
        for _ in range(a.repeat):
            t0 = time.process_time()
            engine.screen_cases(cases)
            best = min(best, time.process_time() - t0)
        print(f"{label:46s} {best / len(cases) * 1e3:7.3f}   ({engine.STATS['vectorised']} of {len(cases)} on the "
              "columns)", flush=True)


if __name__ == "__main__":
    main()
