"""The engine's bracketed array solve (engine._illinois) against scipy.optimize.elementwise.find_root, same
brackets, same relative tolerance, on 1, 1 000 and 20 000 rows: CPU per call.

Run from the repository root:  python benchmarks/roots.py

The function is an increasing cubic (a stand-in with the shape of an isochore against temperature); the point is
the solvers' own cost per iteration and per call, which dominates a table of one row.
"""

from __future__ import annotations

import time

import numpy as np
from scipy.optimize import elementwise

from screening.engine import _SECANT_RTOL, _illinois


def f(x: np.ndarray, idx: np.ndarray) -> np.ndarray:
    return x ** 3 - idx - 1.0


def cpu_per_call(fn, seconds: float = 1.0) -> float:
    t, k = time.process_time(), 0
    while time.process_time() - t < seconds:
        fn()
        k += 1
    return (time.process_time() - t) / k


def main() -> None:
    for n in (1, 1000, 20000):
        idx = np.arange(float(n))
        lo, hi = np.zeros(n), np.full(n, 40.0)
        scipy_s = cpu_per_call(lambda lo=lo, hi=hi, idx=idx: elementwise.find_root(f, (lo, hi), args=(idx,),
                                                             tolerances=dict(xrtol=_SECANT_RTOL, xatol=1e-300)))
        own_s = cpu_per_call(lambda lo=lo, hi=hi, idx=idx: _illinois(f, lo, hi, f(lo, idx), f(hi, idx), idx))
        print(f"{n:6d} rows: find_root {scipy_s * 1e3:7.2f} ms   engine._illinois {own_s * 1e3:7.2f} ms   "
              f"ratio {scipy_s / own_s:.1f}")


if __name__ == "__main__":
    main()
