"""Screening CPU per row of a mixed register, in process, chunk by chunk as the batch screens it.

Run from the repository root:  python benchmarks/mix_slices.py [ROWS] [--slices K]   (default 100000 rows, all)

It writes the invented mixed register of benchmarks/mix.py (`write_mix`: every kind of benchmarks/kinds.py
interleaved, each gas some 75 rows of a 5 000-row chunk), reads it, screens one 5 000-row slice as a warm-up and
then K slices one after the other through `batch.BatchRun` with one worker (SCREENING_WORKERS=1), and prints the
process CPU time per row of those slices (imports, reading and the warm-up excluded).
"""

from __future__ import annotations

import argparse
import os
import sys
import tempfile
import time
from pathlib import Path

os.environ["SCREENING_WORKERS"] = "1"
sys.path.insert(0, str(Path(__file__).resolve().parent))

import kinds as K  # noqa: E402
import mix  # noqa: E402

CHUNK = 5000


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("rows", nargs="?", type=int, default=100_000)
    ap.add_argument("--slices", type=int, default=0, help="slices to time (default: every slice of ROWS)")
    a = ap.parse_args()
    sys.path.insert(0, str(K.ROOT))
    from screening import batch
    from screening.inputs.inventory import Inventory, read_inventory

    with tempfile.TemporaryDirectory() as tmp:
        inv_path = Path(tmp) / "mix.csv"
        mix.write_mix(inv_path, Path(tmp) / "states.tsv", [k for k in K.kinds() if len(k) == 5], a.rows)
        inv = read_inventory(inv_path)
    slices = a.slices or a.rows // CHUNK

    def part(k: int) -> Inventory:
        return Inventory(inv.source, inv.columns, inv.rows[k * CHUNK:(k + 1) * CHUNK], inv.delimiter, inv.decimal,
                         inv.sheet)

    batch.BatchRun(part(0))                                 # warm-up
    t0 = time.process_time()
    n = 0
    for k in range(slices):
        n += len(batch.BatchRun(part(k)).results)
    cpu = time.process_time() - t0
    print(f"# {time.strftime('%Y-%m-%d %H:%M')}, {n} rows of a mixed register in {slices} slices of {CHUNK}, "
          "one worker, in process")
    print(f"screening CPU {cpu:.2f} s, {1e3 * cpu / n:.3f} ms a row")


if __name__ == "__main__":
    main()
