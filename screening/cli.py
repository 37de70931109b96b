"""Command line: `screening check`, `report`, `verify`, `gases`.

Exit codes: 0 within rating; 1 any other verdict (or a report that does not verify); 2 input error.

Commands that write a PDF (`report`, `check --pdf`) screen the case in a forked child process: the
child imports the screening core (CoolProp loads its whole fluid library) while this process reads the
case and imports the report layer (WeasyPrint, Matplotlib, Jinja2), so the two slow import chains run
on two cores at once (`parallel.Standby`). The child sends the result back pickled, so every value
comes back unchanged; where fork is not available, or the child gives no answer, the case is screened
here as before.
"""

from __future__ import annotations

import argparse
import datetime as _dt
import gc
import json
import os
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
    b.add_argument("inventory", help="inventory table: CSV (',', ';' or tab) or .xlsx, one vessel per row; "
                   "headers as listed in the README")
    b.add_argument("--sheet", metavar="NAME", help="sheet of an .xlsx workbook (default: the first sheet whose "
                   "first row is a header)")
    b.add_argument("--defaults", metavar="CASE.toml", help="values for missing columns and empty cells")
    b.add_argument("--json", metavar="OUT.json", help="write every row's result as one JSON document")
    b.add_argument("--jsonl", metavar="OUT.jsonl", help="write every row's full result as JSON Lines (one a line)")
    b.add_argument("--csv", metavar="OUT.csv", help="write the inventory with the results as CSV (numbers, units "
                   "in the headers, the input's separator and decimal mark)")
    b.add_argument("--xlsx", metavar="OUT.xlsx", help="write the inventory with the results as an .xlsx workbook")
    b.add_argument("--pdf", metavar="OUT.pdf", help="write the batch report as PDF")
    b.add_argument("--sort", choices=("input", "severity"), default="input",
                   help="order of the rows in the files: input order (default) or worst first (input-error, "
                   "over, out-of-scope, low-margin, within, then lowest margin)")
    b.add_argument("--decimal", choices=(".", ","), metavar="MARK", help="decimal mark of the inventory's numbers, "
                   "'.' or ',' (default: '.'; a ';'-separated CSV also reads decimal commas, and its outputs "
                   "use the mark its first rows use)")
    b.add_argument("--all-details", action="store_true", help="detail every vessel in the PDF, not only those "
                   "that are not within rating")
    b.add_argument("--date", type=_date, help="report date (YYYY-MM-DD; default today)")
    b.add_argument("--quiet", action="store_true", help="no progress bar and no table; counts only")

    t = sub.add_parser("template", help="write a blank inventory or a commented case file to start from")
    t.add_argument("kind", choices=("inventory", "case"), help="inventory (CSV or XLSX) or case (TOML)")
    t.add_argument("-o", "--output", metavar="FILE", help="file to write (.csv or .xlsx for an inventory, "
                   ".toml for a case); default: print it")
    return p


def _write_pdf(result: dict, case_text: str, out: str, date: _dt.date | None) -> str:
    from screening.outputs.report import render_report

    path = render_report(result, case_text, out, report_date=date or _dt.date.today())
    return str(path)


def _screened_here(path: str) -> tuple[dict, str]:
    """(result, case text as read) of the case file at `path`, screened in this process."""
    from screening.inputs.case import load_case

    case = load_case(path)
    from screening.screen import screen_case  # after the case reads cleanly: an input error comes sooner

    return screen_case(case), case.text


def _prepare_report_layer() -> None:
    """Import what writing the PDF needs; only a head start, so a failure here is left for the render
    itself to raise, in its usual order after the screening."""
    try:
        import weasyprint  # noqa: F401

        import screening.outputs.report  # noqa: F401
        import screening.outputs.summary  # noqa: F401
    except Exception:
        pass


def _screen_message(case) -> dict:
    """Run in the forked child: {"result": ...} or {"input_error": "the one-line message"}."""
    from screening.screen import screen_case

    try:
        return {"result": screen_case(case)}
    except InputError as exc:
        return {"input_error": str(exc)}


def _fork_helps() -> bool:
    """Fork where the platform has it and this process has not loaded the screening core yet (a fresh
    command; a long-lived caller that has it loaded would only pay for the fork)."""
    return hasattr(os, "fork") and "screening.screen" not in sys.modules


def _screened_for_pdf(path: str, *, fork: bool | None = None) -> tuple[dict, str]:
    """(result, case text as read) for a command that goes on to write a PDF.

    With `fork` (default: `_fork_helps()`), a child (`parallel.Standby`) imports the screening core and
    screens the case while this process reads the case and imports the report layer. The parent sends
    it the parsed Case (so the child never needs the unit registry); an InputError found by the child is
    raised here with the same message. Without a fork, or when the child gives no answer, the case is
    screened here.
    """
    from screening import parallel

    if fork is None:
        fork = _fork_helps()
    child = None
    if fork:
        try:
            child = parallel.Standby(("screening.screen",))
        except OSError:  # no memory, no more processes: screened here
            child = None
    try:
        from screening.inputs.case import load_case

        case = load_case(path)
        if child is not None:
            try:
                child.send(_screen_message, case)
                _prepare_report_layer()
                message = child.answer()
            except parallel.StandbyGone:
                message = None
            if message is not None:
                if "input_error" in message:
                    raise InputError(message["input_error"])
                return message["result"], case.text
    finally:
        if child is not None:
            child.close()
    from screening.screen import screen_case

    return screen_case(case), case.text


def _ending(argv: list[str] | None) -> None:
    """When this process runs its own command line (`argv` None), it ends after this: move every object
    into the garbage collector's permanent generation. Interpreter shutdown still runs every exit
    handler and closes every file, but its final collections no longer walk the hundreds of thousands
    of objects the libraries created only to free memory the system reclaims anyway (about half a second
    of a report command's run). A caller that passes `argv` lives on, and is left as it is.

    Not where this process has loaded CoolProp: its binding library counts the objects still alive at
    shutdown, and frozen ones never die, so it would print a page of "leaked" notices on the way out."""
    if argv is None and "CoolProp.CoolProp" not in sys.modules:
        gc.freeze()


def _exit_for(verdict: str) -> int:
    return EXIT_WITHIN if verdict == "within" else EXIT_NOT_WITHIN


def run(argv: list[str] | None = None) -> int:
    args = _build().parse_args(argv)
    if args.command == "batch":
        from screening.batch import run as run_batch

        return run_batch(args)
    if args.command == "template":
        from screening.outputs.templates import write_template

        written = write_template(args.kind, args.output)
        if written:
            print(f"template written: {written}", file=sys.stderr)
        return 0
    if args.command == "gases":
        from screening.outputs.gases_listing import format_library

        print(format_library())
        return 0
    if args.command == "verify":
        from screening.outputs.verify import verify_report

        ok, message = verify_report(args.report)
        print(message)
        _ending(argv)
        return EXIT_WITHIN if ok else EXIT_NOT_WITHIN

    if args.command == "report" or args.pdf:
        result, case_text = _screened_for_pdf(args.case)
    else:
        result, case_text = _screened_here(args.case)
    if args.command == "report":
        written = _write_pdf(result, case_text, args.output, args.date)
        print(f"report written: {written}")
        _ending(argv)
        return _exit_for(result["verdict"])
    if args.json:
        print(json.dumps(result, indent=2, ensure_ascii=False, allow_nan=False))
    else:
        from screening.outputs.summary import format_summary

        print(format_summary(result))
    if args.pdf:
        written = _write_pdf(result, case_text, args.pdf, args.date)
        print(f"report written: {written}", file=sys.stderr if args.json else sys.stdout)
    _ending(argv)
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
