"""One mixture vessel: a warm `screen_case` against the naive PropsSI cost of the same peak.

Run from the repository root:  python benchmarks/mixture_screen.py

For each mixture of the trade (invented vessel: 50 L, 200 bar(g) at 15 °C, 65 °C worst case) it times, in
one process after CoolProp is imported:
* the first screening of the case (the fluid built, both phase routes run on every new state);
* a repeated screening of the same case (warm: the fluid and its established isochores are reused);
* the naive cost of the reference peak alone: two PropsSI calls on the mixture string (fill density, peak).
Targets: warm screen_case below 100 ms; the first screening no more than a few seconds. Plain Python.
Wall-clock times and the process's CPU times are both printed (on a shared machine the CPU time is the steadier).
"""

from __future__ import annotations

import statistics
import time

import CoolProp.CoolProp as CP

from screening.engine import screen_case
from screening.inputs.case import parse_case_text

MIXTURES = [
    ("argon + 8 % CO2", "Argon[0.92]&CarbonDioxide[0.08]"),
    ("CO2 18 % in argon", "Argon[0.82]&CarbonDioxide[0.18]"),
    ("argon + 30 % helium", "Argon[0.7]&Helium[0.3]"),
    ("nitrogen + 10 % CO2", "Nitrogen[0.9]&CarbonDioxide[0.1]"),
    ("helium + 21 % oxygen", "Helium[0.79]&Oxygen[0.21]"),
    ("nitrogen + 5 % hydrogen", "Nitrogen[0.95]&Hydrogen[0.05]"),
    ("methane 90 % + ethane 5 % + propane 2 % + nitrogen 2 % + carbon dioxide 1 %",
     "Methane[0.9]&Ethane[0.05]&Propane[0.02]&Nitrogen[0.02]&CarbonDioxide[0.01]"),
]

CASE = '''id = "BENCH"
[vessel]
water_capacity = "50 L"
rated_pressure = "300 bar(g)"
[fill]
gas = "{gas}"
pressure = "200 bar(g)"
temperature = "15 degC"
[exposure]
gas_temperature = "65 degC"
'''


def main() -> None:
    print(f"{'mixture':40s} {'first [s]':>10s} {'warm [ms]':>10s} {'naive PropsSI [ms]':>19s} "
          f"{'first CPU [s]':>14s} {'warm CPU [ms]':>14s}")
    for gas, heos in MIXTURES:
        case = parse_case_text(CASE.format(gas=gas), "<bench>")
        t0, c0 = time.perf_counter(), time.process_time()
        screen_case(case)
        first, first_cpu = time.perf_counter() - t0, time.process_time() - c0
        warm, warm_cpu = [], []
        for _ in range(5):
            t0, c0 = time.perf_counter(), time.process_time()
            screen_case(case)
            warm.append(time.perf_counter() - t0)
            warm_cpu.append(time.process_time() - c0)
        t0 = time.perf_counter()
        rho = CP.PropsSI("Dmolar", "P", 201.325e5, "T", 288.15, "HEOS::" + heos)
        CP.PropsSI("P", "Dmolar", rho, "T", 338.15, "HEOS::" + heos)
        naive = time.perf_counter() - t0
        print(f"{gas[:40]:40s} {first:10.2f} {statistics.median(warm) * 1e3:10.1f} {naive * 1e3:19.1f} "
              f"{first_cpu:14.2f} {statistics.median(warm_cpu) * 1e3:14.1f}", flush=True)


if __name__ == "__main__":
    main()
