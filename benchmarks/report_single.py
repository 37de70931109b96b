"""How long one report takes, end to end: process start to PDF written, for each demo case.

Run from the repository root:  python benchmarks/report_single.py [--repeat N]

Each run is a fresh Python process that reads one case, screens it and writes its PDF, the same
work `screening report CASE.toml -o OUT.pdf` does. A second table splits one in-process run into
import, screening and rendering time. Plain Python: no benchmark framework needed.
"""

from __future__ import annotations

import argparse
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
BUDGET_S = 3.0

CHILD = r"""
import datetime, sys
from pathlib import Path
from screening.screen import screen_text
from screening.outputs.report import render_report
case = Path(sys.argv[1])
text = case.read_text(encoding="utf-8")
result = screen_text(text, case.name)
render_report(result, text, sys.argv[2], report_date=datetime.date(2026, 12, 1))
"""

PHASES = r"""
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


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=3, help="fresh processes per case (default 3)")
    args = ap.parse_args()
    cases = sorted((ROOT / "cases").glob("*.toml"))
    if not cases:
        print("no demo cases in cases/", file=sys.stderr)
        return 2
    env_cwd = str(ROOT)
    worst = 0.0
    with tempfile.TemporaryDirectory() as tmp:
        print(f"end to end, fresh process each run ({args.repeat} runs), budget {BUDGET_S:.1f} s")
        print(f"{'case':<24}{'best s':>9}{'median s':>10}{'worst s':>9}")
        for case in cases:
            times = []
            for i in range(args.repeat):
                out = Path(tmp) / f"{case.stem}-{i}.pdf"
                t = time.perf_counter()
                done = subprocess.run([sys.executable, "-c", CHILD, str(case), str(out)], cwd=env_cwd,
                                      capture_output=True, text=True)
                elapsed = time.perf_counter() - t
                if done.returncode != 0 or not out.is_file():
                    print(f"{case.name}: failed\n{done.stderr}", file=sys.stderr)
                    return 1
                times.append(elapsed)
            worst = max(worst, max(times))
            print(f"{case.name:<24}{min(times):>9.2f}{statistics.median(times):>10.2f}{max(times):>9.2f}")

        print("\none run split by phase (seconds)")
        print(f"{'case':<24}{'import core':>12}{'import report':>14}{'screen':>8}{'render+write':>14}")
        for case in cases:
            out = Path(tmp) / f"{case.stem}-phases.pdf"
            done = subprocess.run([sys.executable, "-c", PHASES, str(case), str(out)], cwd=env_cwd,
                                  capture_output=True, text=True)
            if done.returncode != 0:
                print(f"{case.name}: failed\n{done.stderr}", file=sys.stderr)
                return 1
            a, b, c, d = (float(x) for x in done.stdout.split())
            print(f"{case.name:<24}{a:>12.2f}{b:>14.2f}{c:>8.2f}{d:>14.2f}")
    verdict = "within" if worst < BUDGET_S else "OVER"
    print(f"\nslowest end-to-end run: {worst:.2f} s ({verdict} the {BUDGET_S:.1f} s budget)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
