"""The batch's JSON per row, in one process: what `--json` adds to a worker's chunk and to the parent's writing.

Run from the repository root:  python benchmarks/json_rows.py [ROWS] [--reps N]   (default 20000 rows, 3 repeats)

It writes the invented mixed inventory of benchmarks/mix.py (ROWS rows of every kind but the one with a defaults
file), reads it, and for each chunk of the batch (screening.batch.CHUNK_ROWS rows) measures the process CPU time
(time.process_time, the best of N repeats, one worker: SCREENING_WORKERS=1) of

* a worker's chunk without JSON: ``screen_chunk((chunk, None, {}, {"json": False, "full": None}))``;
* the same chunk with a JSON line per row (``"json": True``): the difference is the JSON's own cost in a worker;
* the parent writing those lines into a JSON output, as the batch does (``batch._Outputs.write``, to a
  temporary file);
* with ``--lines``, the JSON lines alone, as a worker's chunk makes them (``batch._chunk_rows``), on the rows sorted
  by gas as the batch sorts a window, each repeat on a chunk screened anew and not timed (so the first call's work,
  the liquefied gases' fill-mass limits, is counted): the JSON's own cost without the noise of the screening's.

It prints each per row, and the JSON's share of the worker's time. The whole-process figure (wall time of
`screening batch --csv` with and without `--json`) is benchmarks/mix.py's.
"""

from __future__ import annotations

import argparse
import contextlib
import os
import sys
import tempfile
import time
from pathlib import Path
from types import SimpleNamespace

os.environ["SCREENING_WORKERS"] = "1"
sys.path.insert(0, str(Path(__file__).resolve().parent))

import kinds as K  # noqa: E402  (the row makers of the benchmark by kind)
import mix  # noqa: E402  (the mixed inventory)


def best(fn, reps: int) -> tuple[float, object]:
    """(least process CPU time [s] of `reps` calls, the last call's result)."""
    least, got = float("inf"), None
    for _ in range(reps):
        t0 = time.process_time()
        got = fn()
        least = min(least, time.process_time() - t0)
    return least, got


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("rows", nargs="?", type=int, default=20_000)
    ap.add_argument("--reps", type=int, default=3)
    ap.add_argument("--lines", action="store_true", help="only the JSON lines of chunks sorted by gas (see above)")
    a = ap.parse_args()
    from screening import batch
    from screening.inputs.inventory import Inventory, read_inventory

    chosen = [k for k in K.kinds() if len(k) == 5]
    print(f"# {time.strftime('%Y-%m-%d %H:%M')}, {a.rows} mixed rows, chunks of {batch.CHUNK_ROWS}, best of {a.reps}")
    with tempfile.TemporaryDirectory() as tmp:
        tmp_path = Path(tmp)
        inv_path = tmp_path / "mix.csv"
        mix.write_mix(inv_path, tmp_path / "states.tsv", chosen, a.rows)
        inv = read_inventory(inv_path)
        if a.lines:
            lines_only(inv, a.reps)
            return
        batch.screen_chunk((Inventory(inv.source, inv.columns, inv.rows[:50], inv.delimiter, inv.decimal, inv.sheet),
                            None, {}, {"json": True, "full": None}))      # warm: fluids, codecs
        plain = with_json = writing = 0.0
        for start in range(0, len(inv.rows), batch.CHUNK_ROWS):
            chunk = Inventory(inv.source, inv.columns, inv.rows[start:start + batch.CHUNK_ROWS], inv.delimiter,
                              inv.decimal, inv.sheet)
            dt, _ = best(lambda c=chunk: batch.screen_chunk((c, None, {}, {"json": False, "full": None})), a.reps)
            plain += dt
            dt, got = best(lambda c=chunk: batch.screen_chunk((c, None, {}, {"json": True, "full": None})), a.reps)
            with_json += dt
            lines = [line for _s, line, _f in got]

            def write(lines=lines):
                args = SimpleNamespace(csv=None, xlsx=None, jsonl=None, json=str(tmp_path / "o.json"))
                with contextlib.ExitStack() as stack:
                    out = batch._Outputs(args, inv, stack)
                    out.open(None)
                    for line in lines:
                        out.write(None, line)
                    out.finish(batch.Tally())
            dt, _ = best(write, a.reps)
            writing += dt
    n = len(inv.rows)
    us = 1e6 / n
    print(f"worker, chunk without JSON     {plain * us:7.1f} us/row")
    print(f"worker, chunk with JSON        {with_json * us:7.1f} us/row")
    print(f"worker, the JSON's own part    {(with_json - plain) * us:7.1f} us/row "
          f"({100 * (with_json / plain - 1):.0f} % of the chunk without JSON)")
    print(f"parent, writing the lines      {writing * us:7.1f} us/row")


def lines_only(inv, reps: int) -> None:
    """The CPU per row of the JSON lines of the inventory's chunks, sorted by gas as the batch sorts a window: per
    repeat, each chunk screened anew (not timed), then its lines made as ``batch._chunk_rows`` makes them."""
    import inspect
    from itertools import chain, repeat

    from screening import batch
    from screening.inputs.inventory import Inventory

    rows = [inv.rows[i] for i in batch._gas_order(inv)]
    chunks = [Inventory(inv.source, inv.columns, rows[s:s + batch.CHUNK_ROWS], inv.delimiter, inv.decimal, inv.sheet)
              for s in range(0, len(rows), batch.CHUNK_ROWS)]
    # the code before the line layout (its full_json has no `line`) is measured the same way
    line = ("line",) if "line" in inspect.signature(batch.BatchRun.full_json).parameters else ()
    least = float("inf")
    for _ in range(reps):
        runs = [(c, batch._screened(c, None)) for c in chunks]
        t0 = time.process_time()
        for c, (results, _full, full_json) in runs:
            headers = [x.header for x in c.columns]
            for i, r in enumerate(results):
                rec = full_json(i, r["warnings"], *(True for _ in line))
                if rec is r or rec.get("verdict") == "input-error":
                    rec = dict(rec)
                for k in batch._DROP:
                    rec.pop(k, None)
                rec["row"] = r["row"]
                rec["input"] = dict(zip(headers, chain(map(str, c.rows[i][1]), repeat(""))))
                batch.json_bytes(rec)
        least = min(least, time.process_time() - t0)
    print(f"worker, the JSON lines alone    {least * 1e6 / len(rows):7.1f} us/row (chunks sorted by gas)")


if __name__ == "__main__":
    main()
