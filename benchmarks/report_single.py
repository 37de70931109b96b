"""One case from process start: `screening check` and `screening report`, each a fresh process.

Run from the repository root:  python benchmarks/report_single.py [--repeat N] [--case STEM] [--baseline DIR]

`--baseline DIR` runs the same commands from another copy of the project as well (e.g. the commit before
a change: `git archive COMMIT | tar -x -C DIR`), with the same interpreter, taking turns with this one, so
that before and after are measured in the same run under the same load.

Times, best of N (default 5) fresh processes each, from process start to exit (wall seconds):
* `screening check CASE` (terminal summary; target 1.0 s);
* `screening report CASE -o OUT --date D` (target 2.5 s), the command as a user runs it: the case is
  screened and its plots drawn in a concurrent.futures worker while the process imports the layout engine;
* the same report with no worker (everything in one process, one after the other), to tell whether the
  overlap still pays;
* `import CoolProp.CoolProp` alone (CPU seconds): the whole library, as any process but a one-case
  command loads it; and the lean load a one-case command makes (screening.physics.eos.coolprop_library,
  without the superancillaries) with one fluid (nitrogen) added back whole.
Beside the wall times, the CPU seconds of each process with its worker: on a busy machine the wall time
measures the others as much as this program, the CPU time much less so.
The runs take turns, so that a machine getting busier or quieter weighs on each alike. Every line says
how much CPU other processes used meanwhile (cores, from /proc/stat; Linux only): on the shared 2-core
machine a figure taken while others use more than a few tenths of a core is not a measurement of this
program. Plain Python: no benchmark framework needed.
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
DATE = "2026-12-01"
TARGETS = {"check": 1.0, "report": 2.5}

NO_WORKER = ("import sys\n"
             "from screening import cli\n"
             "cli._worker_helps = lambda: False\n"
             "cli.main(sys.argv[1:])\n")
IMPORT_COOLPROP = ("import time\n"
                   "t = time.process_time()\n"
                   "import CoolProp.CoolProp\n"
                   "print(time.process_time() - t)\n")
IMPORT_COOLPROP_LEAN = ("import time\n"
                        "t = time.process_time()\n"
                        "from screening.physics.eos import coolprop_library\n"
                        "coolprop_library.load_lean()\n"
                        "coolprop_library.use(['Nitrogen'])\n"
                        "print(time.process_time() - t)\n")


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


def timed(argv: list[str], cwd: Path = ROOT) -> tuple[float, float | None, subprocess.CompletedProcess, float]:
    """(wall seconds, cores used by other processes meanwhile, the finished process, its CPU seconds
    with its workers')."""
    tick = os.sysconf("SC_CLK_TCK")
    busy0, own0 = _busy_ticks(), _own_cpu()
    t = time.perf_counter()
    done = subprocess.run([sys.executable, *argv], cwd=str(cwd), capture_output=True, text=True)
    wall = time.perf_counter() - t
    busy1, own1 = _busy_ticks(), _own_cpu()
    others = None
    if busy0 is not None and busy1 is not None:
        others = max(0.0, ((busy1 - busy0) / tick - (own1 - own0)) / wall)
    return wall, others, done, own1 - own0


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=5, help="fresh processes per way (default 5)")
    ap.add_argument("--case", default="kq-n2-014", help="demo case (stem in cases/, default kq-n2-014)")
    ap.add_argument("--baseline", metavar="DIR", type=Path,
                    help="another copy of the project whose check and report are timed alongside")
    args = ap.parse_args()
    if args.baseline is not None and not (args.baseline / "screening" / "cli.py").is_file():
        print(f"no copy of the project in {args.baseline}", file=sys.stderr)
        return 2
    case = ROOT / "cases" / f"{args.case}.toml"
    if not case.is_file():
        print(f"no demo case {case}", file=sys.stderr)
        return 2
    import CoolProp

    print(f"{time.strftime('%Y-%m-%d %H:%M')}, {os.cpu_count()} cores, load average "
          + " ".join(f"{x:.2f}" for x in os.getloadavg()) + f", CoolProp {CoolProp.__version__}, case {case.name}")
    with tempfile.TemporaryDirectory() as tmp_name:
        out = Path(tmp_name) / "out.pdf"
        commands = {
            "check": ["-m", "screening.cli", "check", str(case)],
            "report": ["-m", "screening.cli", "report", str(case), "-o", str(out), "--date", DATE],
            "report, no worker": ["-c", NO_WORKER, "report", str(case), "-o", str(out), "--date", DATE],
        }
        ways: dict[str, tuple[list[str], Path]] = {w: (argv, ROOT) for w, argv in commands.items()}
        if args.baseline is not None:
            ways.update({f"{w} [baseline]": (argv, args.baseline.resolve()) for w, argv in commands.items()})
        ways["import CoolProp (CPU)"] = (["-c", IMPORT_COOLPROP], ROOT)
        ways["CoolProp lean + N2 (CPU)"] = (["-c", IMPORT_COOLPROP_LEAN], ROOT)
        runs: dict[str, list[tuple[float, float | None]]] = {w: [] for w in ways}
        cpu: dict[str, list[float]] = {w: [] for w in ways}
        for _ in range(args.repeat):
            for way, (argv, cwd) in ways.items():
                wall, others, done, used = timed(argv, cwd)
                cpu[way].append(used)
                if done.returncode not in (0, 1):
                    print(f"{way}: failed\n{done.stderr}", file=sys.stderr)
                    return 1
                value = float(done.stdout.split()[-1]) if way.endswith("(CPU)") else wall
                runs[way].append((value, others))
    print(f"\n{'from process start':<30}{'best s':>8}{'median s':>10}{'worst s':>9}{'others, cores':>15}{'target':>8}"
          f"{'CPU s, best':>13}")
    missed = []
    for way, rs in runs.items():
        times = [t for t, _ in rs]
        load = [o for _, o in rs if o is not None]
        target = TARGETS.get(way.removesuffix(" [baseline]"))
        if target is not None and min(times) > target and not way.endswith("[baseline]"):
            missed.append(way)
        print(f"{way:<30}{min(times):>8.2f}{statistics.median(times):>10.2f}{max(times):>9.2f}"
              f"{(f'{statistics.median(load):.2f}' if load else 'n/a'):>15}"
              f"{(f'{target:.1f}' if target else ''):>8}{min(cpu[way]):>13.2f}")
    print("\nbest of", args.repeat, ": " + ("every target met" if not missed else "missed: " + ", ".join(missed)))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
