"""CPU of one call of the Lee–Kesler pressure by its number of states (krypton's constants, hot gas states).

    python benchmarks/lk_calls.py [SIZES]          e.g. 64,400,1600,5000,20000 (the default)

Prints, per size, the best and the median of 9 calls (µs a call) of `lee_kesler_pressure` and of
`lee_kesler_pressure_valid` (where the checkout has it). PYTHONPATH=OTHER_CHECKOUT times another checkout.
"""

import sys
import time

import numpy as np

from screening.physics.eos import generalized as gen

TC, PC, OMEGA = 209.4796, 5525432.0, -0.00089      # krypton, as the gas library gives it


def _times(fn, args, reps: int = 9) -> tuple[float, float]:
    fn(*args)
    ts = []
    for _ in range(reps):
        t0 = time.process_time()
        fn(*args)
        ts.append(time.process_time() - t0)
    ts.sort()
    return ts[0] * 1e6, ts[len(ts) // 2] * 1e6


def main() -> None:
    sizes = [int(x) for x in (sys.argv[1] if len(sys.argv) > 1 else "64,400,1600,5000,20000").split(",")]
    rng = np.random.default_rng(1)
    print(gen.__file__)
    for n in sizes:
        rho, t = rng.uniform(2000.0, 9000.0, n), rng.uniform(260.0, 500.0, n)
        args = (rho, t, np.full(n, TC), np.full(n, PC), np.full(n, OMEGA))
        line = [f"{n:6d} states: lee_kesler_pressure best/median %.0f/%.0f µs" % _times(gen.lee_kesler_pressure, args)]
        if hasattr(gen, "lee_kesler_pressure_valid"):
            line.append("lee_kesler_pressure_valid %.0f/%.0f µs" % _times(gen.lee_kesler_pressure_valid, args))
        print(", ".join(line))


if __name__ == "__main__":
    main()
