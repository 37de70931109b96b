"""How long one report takes, end to end: process start to PDF written, for each demo case.

Run from the repository root:  python benchmarks/report_single.py [--repeat N] [--compare] [--cases GLOB]

Each run is a fresh Python process running `screening report CASE.toml -o OUT.pdf`, the command a user
types (it screens the case in a forked child while the parent reads the case and imports the report layer).
With --compare, the same work done in one process without the fork is timed too, and split into its
phases (importing the screening core, importing the report layer, screening, rendering). A last table splits
one run of the command into its phases: the child (importing the screening core, screening) and the
parent (reading the case, importing the report layer, waiting for the result, rendering and writing).
Plain Python: no benchmark framework needed.

The machine may be shared: every table says how much CPU other processes used while it ran (in cores,
from /proc/stat, Linux only), so a slow figure can be told from a busy machine.
"""

from __future__ import annotations

import argparse
import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
BUDGET_S = 3.0
DATE = "2026-12-01"

COMMAND = ["-m", "screening.cli", "report"]

IN_PROCESS = r"""
import datetime, sys
from pathlib import Path
from screening.screen import screen_text
from screening.outputs.report import render_report
case = Path(sys.argv[1])
text = case.read_text(encoding="utf-8")
result = screen_text(text, case.name)
render_report(result, text, sys.argv[2], report_date=datetime.date(2026, 12, 1))
"""

# The in-process work split into its phases (--compare).
IN_PROCESS_PHASES = r"""
import datetime, sys, time
t0 = time.perf_counter()
from pathlib import Path
from screening.screen import screen_text
t1 = time.perf_counter()
from screening.outputs.report import render_report
import weasyprint  # noqa: F401
t2 = time.perf_counter()
case = Path(sys.argv[1])
text = case.read_text(encoding="utf-8")
result = screen_text(text, case.name)
t3 = time.perf_counter()
render_report(result, text, sys.argv[2], report_date=datetime.date(2026, 12, 1))
t4 = time.perf_counter()
print(f"{t1 - t0:.3f} {t2 - t1:.3f} {t3 - t2:.3f} {t4 - t3:.3f}")
"""

# The command, with clocks around its steps. The child inherits the clocks through fork; it unpickles
# the case right after importing the screening core, and encodes its answer right after screening.
PHASES = r"""
import json, os, pickle, sys, time, types
t0 = time.perf_counter()
from screening import cli
parent, marks = os.getpid(), {}
def note(name, start):
    if os.getpid() == parent:
        marks[name] = (start - t0, time.perf_counter() - t0)
    else:
        os.write(2, f"@child {name} {start - t0:.3f} {time.perf_counter() - t0:.3f}\n".encode())
def clocked(name, fn):
    def wrapped(*a, **k):
        start = time.perf_counter()
        try:
            return fn(*a, **k)
        finally:
            note(name, start)
    return wrapped
def child_mark(name, fn):
    def wrapped(*a, **k):
        if os.getpid() != parent:
            os.write(2, f"@child {name} {time.perf_counter() - t0:.3f}\n".encode())
        return fn(*a, **k)
    return wrapped
cli.pickle = types.SimpleNamespace(dumps=pickle.dumps, HIGHEST_PROTOCOL=pickle.HIGHEST_PROTOCOL,
                                   loads=child_mark("core", pickle.loads))
cli.json = types.SimpleNamespace(dumps=child_mark("screened", json.dumps), loads=json.loads)
cli._prepare_report_layer = clocked("prepare", cli._prepare_report_layer)
cli._ScreeningChild.answer = clocked("answer", cli._ScreeningChild.answer)
cli._write_pdf = clocked("render", cli._write_pdf)
code = cli.run()  # its own command line, as a user runs it
print(" ".join(f"{k} {a:.3f} {b:.3f}" for k, (a, b) in marks.items()))
"""


def _busy_ticks() -> int | None:
    """CPU ticks spent busy on the whole machine so far (all cores), or None off Linux."""
    try:
        fields = Path("/proc/stat").read_text().split("\n", 1)[0].split()[1:]
    except OSError:
        return None
    user, nice, system, idle, iowait, irq, softirq, steal = (int(x) for x in fields[:8])
    return user + nice + system + irq + softirq + steal


def _own_cpu() -> float:
    r = resource.getrusage(resource.RUSAGE_CHILDREN)
    return r.ru_utime + r.ru_stime


def timed(argv: list[str]) -> tuple[float, float | None, subprocess.CompletedProcess]:
    """(wall seconds, cores used by other processes meanwhile, the finished process)."""
    tick = os.sysconf("SC_CLK_TCK")
    busy0, own0 = _busy_ticks(), _own_cpu()
    t = time.perf_counter()
    done = subprocess.run([sys.executable, *argv], cwd=str(ROOT), capture_output=True, text=True)
    wall = time.perf_counter() - t
    busy1, own1 = _busy_ticks(), _own_cpu()
    others = None
    if busy0 is not None and busy1 is not None:
        others = max(0.0, ((busy1 - busy0) / tick - (own1 - own0)) / wall)
    return wall, others, done


def _runs(cases: list[Path], repeat: int, ways: dict, tmp: Path) -> dict | None:
    """Wall times and others' CPU per (way, case); the ways take turns run by run, so that a machine
    that gets busier or quieter meanwhile weighs on each of them alike."""
    runs: dict = {}
    for case in cases:
        for i in range(repeat):
            for way, argv_for in ways.items():
                out = tmp / f"{case.stem}-{way}-{i}.pdf"
                out.unlink(missing_ok=True)
                wall, others, done = timed(argv_for(case, out))
                if done.returncode not in (0, 1) or not out.is_file():
                    print(f"{case.name}: failed\n{done.stderr}", file=sys.stderr)
                    return None
                runs.setdefault((way, case.name), []).append((wall, others))
    return runs


def _table(title: str, cases: list[Path], way: str, runs: dict) -> float:
    print(title)
    print(f"{'case':<24}{'best s':>9}{'median s':>10}{'worst s':>9}{'others, cores':>15}")
    worst = 0.0
    for case in cases:
        times = [w for w, _ in runs[way, case.name]]
        load = [o for _, o in runs[way, case.name] if o is not None]
        worst = max(worst, max(times))
        others = f"{statistics.median(load):.2f}" if load else "n/a"
        print(f"{case.name:<24}{min(times):>9.2f}{statistics.median(times):>10.2f}{max(times):>9.2f}{others:>15}")
    return worst


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=3, help="fresh processes per case (default 3)")
    ap.add_argument("--compare", action="store_true", help="also time the same work in one process, no fork")
    ap.add_argument("--cases", default="*.toml", help="which demo cases (a glob in cases/, default *.toml)")
    args = ap.parse_args()
    cases = sorted((ROOT / "cases").glob(args.cases))
    if not cases:
        print("no demo cases in cases/", file=sys.stderr)
        return 2
    print(f"{time.strftime('%Y-%m-%d %H:%M')}, {os.cpu_count()} cores, load average "
          + " ".join(f"{x:.2f}" for x in os.getloadavg()))
    with tempfile.TemporaryDirectory() as tmp_name:
        tmp = Path(tmp_name)
        ways = {"command": lambda case, out: [*COMMAND, str(case), "-o", str(out), "--date", DATE]}
        if args.compare:
            ways["in-process"] = lambda case, out: ["-c", IN_PROCESS, str(case), str(out)]
        runs = _runs(cases, args.repeat, ways, tmp)
        if runs is None:
            return 1
        worst = _table(f"\n`screening report`, fresh process each run ({args.repeat} runs), budget {BUDGET_S:.1f} s",
                       cases, "command", runs)
        if args.compare:
            _table(f"\nthe same work in one process, no fork ({args.repeat} runs, taking turns with the command)",
                   cases, "in-process", runs)

        if args.compare:
            print("\none in-process run split by phase (seconds)")
            print(f"{'case':<24}{'import core':>12}{'import report':>14}{'screen':>8}{'render+write':>14}"
                  f"{'others':>8}")
            for case in cases:
                out = tmp / f"{case.stem}-in-process.pdf"
                wall, others, done = timed(["-c", IN_PROCESS_PHASES, str(case), str(out)])
                if done.returncode != 0:
                    print(f"{case.name}: failed\n{done.stderr}", file=sys.stderr)
                    return 1
                a, b, c, d = (float(x) for x in done.stdout.split())
                print(f"{case.name:<24}{a:>12.2f}{b:>14.2f}{c:>8.2f}{d:>14.2f}"
                      f"{'n/a' if others is None else f'{others:.2f}':>8}")

        print("\none run of the command split by phase: when the child has imported the screening core, how long"
              "\nit screens; when the parent has read the case and imported the report layer, when it has the"
              "\nresult; how long it renders and writes; when the process has ended (seconds from start)")
        print(f"{'case':<24}{'child: core':>12}{'screen':>8}{'parent: ready':>16}{'result':>9}"
              f"{'render+write':>13}{'end':>7}{'others':>8}")
        for case in cases:
            out = tmp / f"{case.stem}-phases.pdf"
            wall, others, done = timed(["-c", PHASES, "report", str(case), "-o", str(out), "--date", DATE])
            if done.returncode not in (0, 1):
                print(f"{case.name}: failed\n{done.stderr}", file=sys.stderr)
                return 1
            child = {}
            for line in done.stderr.splitlines():
                if line.startswith("@child "):
                    _, name, at = line.split()
                    child[name] = float(at)
            lines = done.stdout.splitlines()
            words = lines[-1].split() if lines else []
            parent = {words[i]: (float(words[i + 1]), float(words[i + 2])) for i in range(0, len(words), 3)}
            if "answer" not in parent or "core" not in child:
                print(f"{case.name}: the command did not fork\n{done.stderr}", file=sys.stderr)
                return 1
            print(f"{case.name:<24}{child['core']:>12.2f}{child['screened'] - child['core']:>8.2f}"
                  f"{parent['prepare'][1]:>16.2f}{parent['answer'][1]:>9.2f}"
                  f"{parent['render'][1] - parent['render'][0]:>13.2f}{wall:>7.2f}"
                  f"{'n/a' if others is None else f'{others:.2f}':>8}")
    verdict = "within" if worst < BUDGET_S else "OVER"
    print(f"\nslowest end-to-end run of the command: {worst:.2f} s ({verdict} the {BUDGET_S:.1f} s budget)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
