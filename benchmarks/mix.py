"""A mixed inventory as whole processes: `screening batch` against a naive PropsSI loop, `--json` overhead, peak RSS.

Run from the repository root:  python benchmarks/mix.py [ROWS] [--kinds GROUPS]   (default 100000 rows, all kinds)

It writes one invented inventory of ROWS rows drawn from the kinds of benchmarks/kinds.py (`--kinds` chooses them
as there; each kind weighted by its share there, the rows shuffled), except the kind with tolerances and
scenarios, which comes from a defaults file for the whole inventory. Then it runs, each as a fresh process that
imports what it needs, one after the other:

* tool: `screening batch INV --csv OUT --quiet` (the default number of workers);
* tool with JSON: the same with `--json OUT.json` as well;
* naive: a Python process that imports CoolProp and makes one PropsSI density at the fill and one pressure at the
  worst case per row (nothing else).

It prints each one's wall time and peak resident memory (os.wait4 of that child), the ratio tool / naive (target
at most 0.5) and the JSON overhead (target at most 30 %). Targets: 100 000 rows within 1 GiB resident.
"""

from __future__ import annotations

import argparse
import os
import random
import subprocess
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

import kinds as K  # noqa: E402  (the row makers of the benchmark by kind)

NAIVE = r"""
import sys
import CoolProp.CoolProp as CP
for line in open(sys.argv[1], encoding="utf-8"):
    fluid, kind, value, t_fill, t_peak = line.rstrip("\n").split("\t")
    try:
        d = CP.PropsSI("Dmass", "P", float(value), "T", float(t_fill), fluid) if kind == "P" else float(value)
        CP.PropsSI("P", "Dmass", d, "T", float(t_peak), fluid)
    except ValueError:
        pass
"""


def write_mix(inv: Path, states: Path, chosen: list[tuple], n: int, seed: int = 7) -> None:
    """ROWS rows drawn from the chosen kinds by their shares; the naive loop's states beside them."""
    rnd = random.Random(seed)
    weights = [k[4] for k in chosen]
    with open(inv, "w", encoding="utf-8") as fh, open(states, "w", encoding="utf-8") as fs:
        fh.write(K.HEADER + "\n")
        for i in range(n):
            label, _gas, fluid, make, _share, *_ = rnd.choices(chosen, weights)[0]
            line, (kind, value) = make(rnd, i)
            fh.write(line + "\n")
            cells = line.split(",")
            fs.write(f"{fluid}\t{kind}\t{value!r}\t{float(cells[6]) + 273.15!r}\t{float(cells[7]) + 273.15!r}\n")


def timed(argv: list[str]) -> tuple[float, float, int]:
    """(wall time [s], peak resident memory [MiB], exit code) of one child process."""
    t0 = time.perf_counter()
    proc = subprocess.Popen(argv, cwd=K.ROOT, env=dict(os.environ, PYTHONPATH=str(K.ROOT)),
                            stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _pid, status, usage = os.wait4(proc.pid, 0)
    dt = time.perf_counter() - t0
    err = proc.stderr.read().decode(errors="replace") if proc.stderr else ""
    proc.stderr.close()
    code = os.waitstatus_to_exitcode(status)
    if code not in (0, 1):
        raise SystemExit(f"{argv[:4]} failed ({code}): {err[-2000:]}")
    return dt, usage.ru_maxrss / 1024.0, code


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("rows", nargs="?", type=int, default=100_000)
    ap.add_argument("--kinds", default="", help="as in benchmarks/kinds.py (default: every kind)")
    a = ap.parse_args()
    chosen = [k for k in K.chosen(K.kinds(), [w.strip() for w in a.kinds.split(",") if w.strip()]) if len(k) == 5]
    print(f"# {time.strftime('%Y-%m-%d %H:%M')}, {a.rows} rows of {len(chosen)} kinds, {os.cpu_count()} cores")
    with tempfile.TemporaryDirectory() as tmp:
        tmp_path = Path(tmp)
        inv, states = tmp_path / "mix.csv", tmp_path / "states.tsv"
        write_mix(inv, states, chosen, a.rows)
        py = sys.executable
        tool, tool_rss, _ = timed([py, "-m", "screening.cli", "batch", str(inv), "--csv", str(tmp_path / "o.csv"),
                                   "--quiet"])
        js, js_rss, _ = timed([py, "-m", "screening.cli", "batch", str(inv), "--csv", str(tmp_path / "o.csv"),
                               "--json", str(tmp_path / "o.json"), "--quiet"])
        naive, naive_rss, _ = timed([py, "-c", NAIVE, str(states)])
        json_mib = (tmp_path / "o.json").stat().st_size / 2**20
    print(f"{'process':28s} {'wall [s]':>9s} {'peak RSS [MiB]':>15s}")
    print(f"{'screening batch --csv':28s} {tool:9.2f} {tool_rss:15.0f}")
    print(f"{'  with --json as well':28s} {js:9.2f} {js_rss:15.0f}   (JSON {json_mib:.0f} MiB)")
    print(f"{'naive PropsSI loop':28s} {naive:9.2f} {naive_rss:15.0f}")
    print(f"tool / naive: {tool / naive:.2f} (target <= 0.5); --json adds {100 * (js / tool - 1):.0f} % "
          "(target <= 30 %)")


if __name__ == "__main__":
    main()
