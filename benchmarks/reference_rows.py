"""The reference model's array methods on pure fluids: CPU per state of `pressures`, `states` and `isochore_slopes`,
against the same states evaluated one by one through the checked path (`ReferenceFluid._evaluate`, what the array
methods called for every state before their fast path).

Run from the repository root:  python benchmarks/reference_rows.py [STATES] [--repeat N]

Random states of krypton (molar densities 100-15 000 mol/m3, 230-360 K) and nitrogen (the same densities,
200-360 K), seeded, all of them good states (the fast path's case, as nearly every state of a screening's tables); best
and median CPU (`time.process_time`) of N runs (default 7) per method, in microseconds a state. To compare with
another checkout run it with PYTHONPATH=THAT_CHECKOUT (the script prints which package it timed).
"""

from __future__ import annotations

import argparse
import statistics
import time

import numpy as np

import screening
from screening.errors import NotApplicable
from screening.physics.eos.reference import reference_fluid

FLUIDS = (("Krypton", 230.0, 360.0), ("Nitrogen", 200.0, 360.0))


def _checked_loop(f, rho: np.ndarray, T: np.ndarray) -> None:
    evaluate = f._evaluate
    with f._lock:
        for r, t in zip(rho.tolist(), T.tolist()):
            try:
                evaluate(r, t)
            except NotApplicable:
                pass


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("states", nargs="?", type=int, default=20000)
    ap.add_argument("--repeat", type=int, default=7)
    args = ap.parse_args()
    print(f"# {screening.__file__}, {args.states} states a fluid, best and median of {args.repeat}")
    print(f"{'fluid':10s} {'method':28s} {'best us/state':>14s} {'median':>8s}  valid")
    for name, t_lo, t_hi in FLUIDS:
        f = reference_fluid((name,), (1.0,))
        rng = np.random.default_rng(1)
        rho = rng.uniform(100.0, 15000.0, args.states)
        T = rng.uniform(t_lo, t_hi, args.states)
        share = f.pressures(rho, T)[1].mean()
        for label, run in (("pressures", f.pressures), ("states", f.states),
                           ("isochore_slopes", f.isochore_slopes),
                           ("_evaluate state by state", lambda r, t, f=f: _checked_loop(f, r, t))):
            run(rho, T)
            times = []
            for _ in range(args.repeat):
                t0 = time.process_time()
                run(rho, T)
                times.append((time.process_time() - t0) / args.states * 1e6)
            print(f"{name:10s} {label:28s} {min(times):14.3f} {statistics.median(times):8.3f}  {share:.2f}")


if __name__ == "__main__":
    main()
