"""Command line: `screening check`, `report`, `verify`, `gases`.

Exit codes: 0 within rating; 1 any other verdict (or a report that does not verify); 2 input error.
"""

from __future__ import annotations

import argparse
import datetime as _dt
import json
import sys

from screening import __version__
from screening.errors import InputError

EXIT_WITHIN, EXIT_NOT_WITHIN, EXIT_INPUT = 0, 1, 2


class _Parser(argparse.ArgumentParser):
    def error(self, message: str):  # argparse's own usage errors: exit 2, one message
        self.print_usage(sys.stderr)
        print(f"screening: error: {message}", file=sys.stderr)
        raise SystemExit(EXIT_INPUT)


def _date(text: str) -> _dt.date:
    try:
        return _dt.date.fromisoformat(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"not a date: {text!r} (expected YYYY-MM-DD)") from None


def _build() -> argparse.ArgumentParser:
    p = _Parser(prog="screening", description="Peak-pressure screening of gas cylinders and small rigid "
                "pressure vessels exposed to heat. A screening aid only; see SAFETY.md.")
    p.add_argument("--version", action="version", version=f"screening {__version__}")
    sub = p.add_subparsers(dest="command", required=True, parser_class=_Parser)

    c = sub.add_parser("check", help="screen one vessel from a case file (TOML)")
    c.add_argument("case", help="case file (TOML)")
    c.add_argument("--json", action="store_true", help="print one JSON object instead of the summary")
    c.add_argument("--pdf", metavar="OUT.pdf", help="also write the screening report as PDF")
    c.add_argument("--date", type=_date, help="report date (YYYY-MM-DD; default today)")

    r = sub.add_parser("report", help="write the screening report (PDF) of one case")
    r.add_argument("case", help="case file (TOML)")
    r.add_argument("-o", "--output", required=True, metavar="OUT.pdf", help="PDF to write")
    r.add_argument("--date", type=_date, help="report date (YYYY-MM-DD; default today)")

    v = sub.add_parser("verify", help="re-run the case attached to a report and compare")
    v.add_argument("report", help="a PDF written by 'screening check --pdf' or 'screening report'")

    sub.add_parser("gases", help="list the gas library with its sources")

    b = sub.add_parser("batch", help="screen every vessel of an inventory (CSV or XLSX)")
    b.add_argument("inventory", help="inventory table: CSV (',' or ';') or .xlsx, one vessel per row")
    b.add_argument("--sheet", metavar="NAME", help="sheet of an .xlsx workbook (default: the first)")
    b.add_argument("--defaults", metavar="CASE.toml", help="values for missing columns and empty cells")
    b.add_argument("--json", metavar="OUT.json", help="write every row's result as JSON")
    b.add_argument("--csv", metavar="OUT.csv", help="write the inventory with the results as CSV")
    b.add_argument("--pdf", metavar="OUT.pdf", help="write the batch report as PDF")
    b.add_argument("--all-details", action="store_true", help="detail every vessel in the PDF, not only those "
                   "that are not within rating")
    b.add_argument("--date", type=_date, help="report date (YYYY-MM-DD; default today)")
    b.add_argument("--quiet", action="store_true", help="no progress bar and no table; counts only")
    return p


def _write_pdf(result: dict, case_text: str, out: str, date: _dt.date | None) -> str:
    from screening.outputs.report import render_report

    path = render_report(result, case_text, out, report_date=date or _dt.date.today())
    return str(path)


def _exit_for(verdict: str) -> int:
    return EXIT_WITHIN if verdict == "within" else EXIT_NOT_WITHIN


def run(argv: list[str] | None = None) -> int:
    args = _build().parse_args(argv)
    if args.command == "batch":
        from screening.batch import run as run_batch

        return run_batch(args)
    if args.command == "gases":
        from screening.outputs.gases_listing import format_library

        print(format_library())
        return 0
    if args.command == "verify":
        from screening.outputs.verify import verify_report

        ok, message = verify_report(args.report)
        print(message)
        return EXIT_WITHIN if ok else EXIT_NOT_WITHIN

    from screening.inputs.case import load_case
    from screening.screen import screen_case

    case = load_case(args.case)
    result = screen_case(case)
    if args.command == "report":
        written = _write_pdf(result, case.text, args.output, args.date)
        print(f"report written: {written}")
        return _exit_for(result["verdict"])
    if args.json:
        print(json.dumps(result, indent=2, ensure_ascii=False, allow_nan=False))
    else:
        from screening.outputs.summary import format_summary

        print(format_summary(result))
    if args.pdf:
        written = _write_pdf(result, case.text, args.pdf, args.date)
        print(f"report written: {written}", file=sys.stderr if args.json else sys.stdout)
    return _exit_for(result["verdict"])


def main(argv: list[str] | None = None) -> None:
    try:
        code = run(argv)
    except InputError as exc:
        print(f"screening: input error: {exc}", file=sys.stderr)
        code = EXIT_INPUT
    except RuntimeError as exc:  # the report layout failed (e.g. a missing template); nothing was written
        if type(exc).__name__ != "ReportRenderError":
            raise
        print(f"screening: report error: {exc}; no report was written", file=sys.stderr)
        code = EXIT_INPUT
    except KeyboardInterrupt:
        code = 130
    sys.exit(code)


if __name__ == "__main__":
    main()
