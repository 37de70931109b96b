"""`make demo`: screen every demo case in cases/ and write a report for each into out/.

The demo cases are invented (see cases/README.md). Verdicts other than "within" are expected here;
the demo fails only if a case cannot be read or a report cannot be written.
"""

from __future__ import annotations

import datetime as _dt
import sys
from pathlib import Path

from screening.errors import InputError


def main(argv: list[str] | None = None) -> int:
    from screening.engine import screen_case
    from screening.inputs.case import load_case
    from screening.outputs.summary import format_summary

    root = Path(__file__).resolve().parent.parent
    cases = sorted((root / "cases").glob("*.toml"))
    out = root / "out"
    out.mkdir(exist_ok=True)
    try:
        from screening.outputs.report import render_report
    except ImportError:  # the report module is optional while it is being built
        render_report = None
    written = []
    for path in cases:
        try:
            case = load_case(path)
            result = screen_case(case)
        except InputError as exc:
            print(f"screening: input error: {exc}", file=sys.stderr)
            return 2
        print(format_summary(result))
        if render_report is not None:
            pdf = out / (path.stem + ".pdf")
            render_report(result, case.text, pdf, report_date=_dt.date.today())
            written.append(pdf)
        print("\n" + "=" * 92 + "\n")
    batch = root / "cases" / "inventory.csv"
    if batch.exists():
        from screening.cli import run

        run(["batch", str(batch), "--pdf", str(out / "inventory.pdf"), "--quiet"])
        written.append(out / "inventory.pdf")
    for pdf in written:
        print(f"report written: {pdf.relative_to(root)}")
    print("\nTo screen vessels in a web page instead: run `make serve` (or `.venv/bin/screening serve --open`); "
          "the page opens at http://127.0.0.1:8765/ and Ctrl-C stops it.")
    return 0


if __name__ == "__main__":
    sys.exit(main())
