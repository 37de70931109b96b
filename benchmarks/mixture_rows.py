"""Mixture rows measured inside one process: CPU per row and phase checks per row, against the naive PropsSI loop.

Run from the repository root:  python benchmarks/mixture_rows.py [ROWS ...]   (default: 33 200)

For each mixture of benchmarks/kinds.py and each number of rows, in a fresh process (so that no node or settled
answer of an earlier run is reused): the rows of kinds.py's inventory (same seed), the first one screened alone as
a warm-up (imports, the fluid, the cubic route's set-up), then `screening batch` of the others in the same
process with one worker, its CPU time (time.process_time) divided by the rows; and the naive loop (one PropsSI
density at the fill, one pressure at the worst case per row) on the same rows in the same process. It prints
both, their ratio, and the reference flashes (phase checks by CoolProp's PT flash) per row with their CPU.
33 rows of one composition are about what a 20 000-row mixed inventory holds (few rows share a node); 200 rows
are kinds.py's mixtures. Measured inside the process, the figures are steadier than kinds.py's difference of two
processes for a few dozen rows.
"""

from __future__ import annotations

import contextlib
import io
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(Path(__file__).resolve().parent))


def one(label: str, rows: int) -> None:
    import kinds as K

    from screening import cli
    from screening.physics.eos import reference as R

    flashes = {"n": 0, "cpu": 0.0}
    route = R.ReferenceFluid._reference_route

    def counted(self, *args):
        c0 = time.thread_time()
        try:
            return route(self, *args)
        finally:
            flashes["n"] += 1
            flashes["cpu"] += time.thread_time() - c0

    R.ReferenceFluid._reference_route = counted
    _label, _gas, fluid, make, *_ = next(k for k in K.MIXTURES if k[0] == label)
    with tempfile.TemporaryDirectory() as tmp:
        tmp_path = Path(tmp)
        inv, first = tmp_path / "inv.csv", tmp_path / "first.csv"
        states = K.write(inv, make, rows + 1, seed=sum(label.encode()) + 1)
        lines = inv.read_text(encoding="utf-8").splitlines()
        first.write_text(lines[0] + "\n" + lines[1] + "\n", encoding="utf-8")
        inv.write_text("\n".join([lines[0]] + lines[2:]) + "\n", encoding="utf-8")
        with contextlib.redirect_stdout(io.StringIO()):
            cli.run(["batch", str(first), "--csv", str(tmp_path / "o.csv"), "--quiet"])
            flashes.update(n=0, cpu=0.0)
            c0 = time.process_time()
            cli.run(["batch", str(inv), "--csv", str(tmp_path / "o.csv"), "--quiet"])
            tool = time.process_time() - c0
    loop = K.naive(fluid, states[1:])
    print(f"{label:44s} {rows:5d} {tool / rows * 1e3:12.2f} {loop / rows * 1e3:13.2f} {tool / loop:7.2f} "
          f"{flashes['n'] / rows:10.2f} {flashes['cpu'] / rows * 1e3:16.2f}", flush=True)


def main() -> None:
    if len(sys.argv) > 2 and sys.argv[1] == "--one":
        one(sys.argv[2], int(sys.argv[3]))
        return
    import kinds as K

    counts = [int(a) for a in sys.argv[1:]] or [33, 200]
    print(f"# {time.strftime('%Y-%m-%d %H:%M')}, CPU inside one process per mixture and row count, one worker")
    print(f"{'kind':44s} {'rows':>5s} {'tool ms/row':>12s} {'naive ms/row':>13s} {'ratio':>7s} "
          f"{'flashes/row':>10s} {'flash ms/row':>16s}")
    # SCREENING_CODE: another checkout's root, to measure its code with the same rows (default: this one)
    env = dict(os.environ, PYTHONPATH=os.environ.get("SCREENING_CODE", str(ROOT)), SCREENING_WORKERS="1")
    for n in counts:
        for label, *_ in K.MIXTURES:
            subprocess.run([sys.executable, __file__, "--one", label, str(n)], env=env, check=False,
                           stderr=subprocess.DEVNULL)


if __name__ == "__main__":
    main()
