"""One vessel in a warm process: `engine.screen_case` (curves included) of the pure-gas demo cases, best of N.

Run from the repository root:  python benchmarks/warm_case.py [--repeat N] [CASE ...]

Each case is read once, screened once to warm the process (imports, the fluid's state, the first states), then
screened N times (default 15); the best and the median CPU time of the process (`time.process_time`) are
printed, with the same split into the screening itself (`screen_case(curves=False)`) and the plot data
(`engine.with_plot_data`). Target: at most 5 ms for a pure gas, curves included. Plain Python; to compare with
another checkout run it with PYTHONPATH=THAT_CHECKOUT (the script prints which package it timed).
"""

from __future__ import annotations

import argparse
import statistics
import time
from pathlib import Path

import screening
from screening.engine import screen_case, with_plot_data
from screening.inputs.case import load_case

ROOT = Path(__file__).resolve().parents[1]
CASES = ["kq-n2-014.toml", "kq-ch4-003.toml", "kq-he-007.toml", "kq-n2-031.toml"]


def _times(fn, n: int) -> list[float]:
    out = []
    for _ in range(n):
        c0 = time.process_time()
        fn()
        out.append(time.process_time() - c0)
    return out


def main() -> None:
    ap = argparse.ArgumentParser(description="Warm screen_case CPU time of one vessel, best of N.")
    ap.add_argument("cases", nargs="*", help="case files (default: the pure-gas demo cases)")
    ap.add_argument("--repeat", type=int, default=15)
    a = ap.parse_args()
    paths = [Path(p) for p in a.cases] or [ROOT / "cases" / name for name in CASES]
    print(f"# {time.strftime('%Y-%m-%d %H:%M')}, {Path(screening.__file__).parent}, best / median of {a.repeat}, "
          "CPU ms")
    print(f"{'case':24s} {'screen_case':>16s} {'without curves':>16s} {'plot data':>16s}")
    for path in paths:
        case = load_case(path)
        r = screen_case(case)                 # warm: imports, the fluid, its first states
        whole = _times(lambda c=case: screen_case(c), a.repeat)
        bare = _times(lambda c=case: screen_case(c, curves=False), a.repeat)
        plain = screen_case(case, curves=False)
        plots = _times(lambda c=case, p=plain: with_plot_data(c, p), a.repeat)
        assert r.verdict is not None

        def cell(t: list[float]) -> str:
            return f"{min(t) * 1e3:6.2f} / {statistics.median(t) * 1e3:6.2f}"

        print(f"{path.name:24s} {cell(whole):>16s} {cell(bare):>16s} {cell(plots):>16s}", flush=True)


if __name__ == "__main__":
    main()
