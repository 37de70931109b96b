"""Streaming batch: time and peak memory of `screening batch` on large inventories, CSV and JSON Lines out.

Run from the repository root:  python benchmarks/batch_streaming.py [N ...]   (default: 100000 1000000)

For each N it writes a synthetic inventory of N permanent-gas rows (invented; the same generator as
benchmarks/batch_inventory.py, plus a column of the user's own), then runs in a fresh process
* `screening batch INV.csv --csv OUT.csv --quiet`
* `screening batch INV.csv --jsonl OUT.jsonl --quiet`
and prints the wall time, the rows per second, the peak resident memory of the whole process tree
(the command and its workers, sampled from /proc every 0.1 s), the CPU time of them all and of its largest process, and the
output size. Memory that does not grow from 100 000 to 1 000 000 rows is what "bounded" means here;
the projection to 10^7 rows is time x 10 at the same memory. Target: 10 million rows in no more
memory than 100 000. Plain Python, Linux (/proc).
"""

from __future__ import annotations

import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(Path(__file__).resolve().parent))
from batch_inventory import inventory  # noqa: E402

ENV = dict(os.environ, PYTHONPATH=str(ROOT))


def _rss_kib(pid: int) -> int:
    try:
        with open(f"/proc/{pid}/status") as fh:
            for line in fh:
                if line.startswith("VmRSS:"):
                    return int(line.split()[1])
    except OSError:
        pass
    return 0


def _tree(pid: int) -> list[int]:
    out, todo = [], [pid]
    while todo:
        p = todo.pop()
        out.append(p)
        try:
            with open(f"/proc/{p}/task/{p}/children") as fh:
                todo += [int(c) for c in fh.read().split()]
        except OSError:
            pass
    return out


def measure(args: list[str]) -> tuple[float, float, float, float]:
    """(wall time [s], CPU time of the command and its workers [s], peak RSS of the process tree [MiB],
    peak RSS of one process [MiB])."""
    ru = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu0 = ru.ru_utime + ru.ru_stime
    t0 = time.perf_counter()
    proc = subprocess.Popen([sys.executable, "-m", "screening.cli", *args], cwd=ROOT, env=ENV,
                            stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    peak_tree = peak_one = 0
    while proc.poll() is None:
        sizes = [_rss_kib(p) for p in _tree(proc.pid)]
        peak_tree = max(peak_tree, sum(sizes))
        peak_one = max(peak_one, max(sizes, default=0))
        time.sleep(0.1)
    dt = time.perf_counter() - t0
    err = proc.stderr.read().decode()
    if proc.returncode not in (0, 1):
        raise SystemExit(f"batch failed ({proc.returncode}): {err[-2000:]}")
    ru = resource.getrusage(resource.RUSAGE_CHILDREN)
    return dt, ru.ru_utime + ru.ru_stime - cpu0, peak_tree / 1024.0, peak_one / 1024.0


def main() -> None:
    sizes = [int(a) for a in sys.argv[1:]] or [100_000, 1_000_000]
    print(f"{'rows':>9} {'output':>6} {'time [s]':>9} {'CPU [s]':>8} {'rows/s':>8} {'tree RSS [MiB]':>15} "
          f"{'largest [MiB]':>14} {'out [MB]':>9}")
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        for n in sizes:
            inv = tmp / f"inv{n}.csv"
            inventory(n, inv)
            for kind, flag in (("csv", "--csv"), ("jsonl", "--jsonl")):
                out = tmp / f"out.{kind}"
                dt, cpu, tree, one = measure(["batch", str(inv), flag, str(out), "--quiet"])
                size = out.stat().st_size / 1e6
                print(f"{n:>9} {kind:>6} {dt:>9.1f} {cpu:>8.1f} {n / dt:>8.0f} {tree:>15.0f} {one:>14.0f} {size:>9.0f}",
                      flush=True)
                out.unlink()
            inv.unlink()


if __name__ == "__main__":
    main()
