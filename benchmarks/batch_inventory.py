"""Batch throughput: `screening batch` end to end against a naive PropsSI loop, and the batch PDF.

Run from the repository root:  python benchmarks/batch_inventory.py [N ...]   (default: 1000 10000 100000)

For each N it writes a synthetic inventory of N permanent-gas rows (invented), then times
* `screening batch INV.csv --csv OUT --quiet` in a fresh process (every model, verdicts and limits; no PDF),
  with the child's peak resident memory (resource.getrusage of the child);
* a naive loop of CoolProp's PropsSI, twice per row, for the reference peak only;
and prints both times and their ratio. It also times the generalized model alone (rows/s) and a
1 000-row batch PDF with 100 detail pages. Targets: batch < half the naive loop at 100 000 rows;
generalized >= 100 000 rows/s; the PDF under 30 s; 100 000 rows under 1 GiB resident. Plain Python.
"""

from __future__ import annotations

import os
import random
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
GASES = [("nitrogen", "Nitrogen"), ("argon", "Argon"), ("oxygen", "Oxygen"), ("methane", "Methane"),
         ("helium", "Helium"), ("hydrogen", "Hydrogen"), ("air", "Air")]
ENV = dict(os.environ, PYTHONPATH=str(ROOT))


def inventory(n: int, path: Path, seed: int = 1, over_every: int = 0) -> list[tuple]:
    rnd = random.Random(seed)
    rows = []
    with open(path, "w", encoding="utf-8") as fh:
        fh.write("id,gas,water_capacity [L],rated_pressure [bar(g)],fill_pressure [bar(g)],fill_temperature [degC],"
                 "ambient_max [degC]\n")
        for i in range(n):
            gas, cp = GASES[i % len(GASES)]
            p = round(rnd.uniform(150, 230), 1)
            if not over_every:
                rated = 300
            else:  # exactly every over_every-th row over its rating, every other row well within
                rated = 150 if i % over_every == 0 else 400
            t = round(rnd.uniform(5, 25), 1)
            amb = round(rnd.uniform(40, 60), 1)
            fh.write(f"B{i:06d},{gas},{rnd.choice((10, 20, 50))},{rated},{p},{t},{amb}\n")
            rows.append((cp, p * 1e5 + 101325.0, t + 273.15, amb + 273.15))
    return rows


def child(args: list[str]) -> tuple[float, float]:
    before = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    t0 = time.perf_counter()
    proc = subprocess.run([sys.executable, "-m", "screening.cli", *args], cwd=ROOT, env=ENV,
                          stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    dt = time.perf_counter() - t0
    if proc.returncode not in (0, 1):
        raise SystemExit(f"batch failed ({proc.returncode}): {proc.stderr[-2000:]}")
    rss = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    return dt, max(rss, before) / 1024.0


PHASES = r"""
import sys, time
t0 = time.perf_counter()
from screening.batch import BatchRun, write_csv
from screening.inputs.inventory import read_inventory
import screening.engine  # noqa: F401  (CoolProp)
t1 = time.perf_counter()
inv = read_inventory(sys.argv[1])
t2 = time.perf_counter()
run = BatchRun(inv)
t3 = time.perf_counter()
write_csv(inv, run.results, sys.argv[2])
t4 = time.perf_counter()
print(f"{t1 - t0:.2f} {t2 - t1:.2f} {t3 - t2:.2f} {t4 - t3:.2f}")
"""


def phases(inv: Path, out: Path) -> list[float]:
    """One in-process run split into import, file read, reading and screening the rows, CSV write [s]."""
    proc = subprocess.run([sys.executable, "-c", PHASES, str(inv), str(out)], cwd=ROOT, env=ENV,
                          stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    if proc.returncode != 0:
        raise SystemExit(f"phase run failed: {proc.stderr[-2000:]}")
    return [float(x) for x in proc.stdout.split()]


def naive(rows) -> float:
    import CoolProp.CoolProp as CP

    t0 = time.perf_counter()
    for cp, p, t1, t2 in rows:
        d = CP.PropsSI("Dmolar", "P", p, "T", t1, cp)
        CP.PropsSI("P", "Dmolar", d, "T", t2, cp)
    return time.perf_counter() - t0


def generalized_rate(n: int) -> float:
    import numpy as np

    sys.path.insert(0, str(ROOT))
    from screening.physics.eos.generalized import lee_kesler_density, lee_kesler_pressure

    rng = np.random.default_rng(0)
    p = rng.uniform(150e5, 230e5, n) + 101325.0
    t1 = rng.uniform(278, 298, n)
    t2 = rng.uniform(313, 333, n)
    t0 = time.perf_counter()
    d = lee_kesler_density(p, t1, 126.192, 3.3958e6, 0.0372)
    lee_kesler_pressure(d.molar_density, t2, 126.192, 3.3958e6, 0.0372)
    return n / (time.perf_counter() - t0)


def main() -> None:
    sizes = [int(a) for a in sys.argv[1:]] or [1000, 10000, 100000]
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        print(f"{'rows':>8} {'batch [s]':>10} {'naive PropsSI [s]':>18} {'ratio':>7} {'batch RSS [MiB]':>16}")
        for n in sizes:
            inv = tmp / f"inv{n}.csv"
            rows = inventory(n, inv)
            dt, rss = child(["batch", str(inv), "--csv", str(tmp / "out.csv"), "--quiet"])
            tn = naive(rows)
            print(f"{n:>8} {dt:>10.2f} {tn:>18.2f} {dt / tn:>7.2f} {rss:>16.0f}", flush=True)
            a, b, c, d = phases(inv, tmp / "phases.csv")
            print(f"{'':>8} of which: imports {a:.2f} s, file read {b:.2f} s, rows read and screened {c:.2f} s, "
                  f"CSV written {d:.2f} s (one in-process run)", flush=True)
        print(f"generalized model alone: {generalized_rate(100000):,.0f} rows/s (100 000 nitrogen rows)")
        inv = tmp / "pdf.csv"
        inventory(1000, inv, seed=2, over_every=10)
        dt, rss = child(["batch", str(inv), "--pdf", str(tmp / "b.pdf"), "--quiet"])
        print(f"1 000-row batch PDF with 100 detail pages: {dt:.1f} s (RSS {rss:.0f} MiB)")


if __name__ == "__main__":
    main()
