"""Command line: `screening check`, `report`, `verify`, `gases`.

Exit codes: 0 within rating; 1 any other verdict (or a report that does not verify); 2 input error.

Each command imports only what it needs, inside its own function: the screening core (numpy, scipy,
CoolProp, which loads its whole fluid library at import) for `check`, `report` and `verify`; the report
layer (WeasyPrint, Matplotlib, Jinja2) only where a PDF is written or read.

Commands that write a PDF (`report`, `check --pdf`) from a fresh process read the case, then screen it
in a `concurrent.futures.ProcessPoolExecutor` worker: the worker imports the screening core, screens
the case and draws the report's plots (matplotlib) while this process imports the layout engine
(WeasyPrint, Jinja2), so the slow import chains run on two cores at once. The result and the plots come
back pickled (every value unchanged; an input error comes back as itself). Where no worker can be
started, or it dies, the case is screened and the plots drawn here.
"""

from __future__ import annotations

import argparse
import contextlib
import datetime as _dt
import os
import sys
from typing import TYPE_CHECKING

from screening import __version__
from screening.errors import InputError, OutputError
from screening.verdicts import EXIT_INPUT, EXIT_NOT_WITHIN, EXIT_WITHIN

if TYPE_CHECKING:
    from screening.result import Result

#: The exit codes of each command, as --help shows them (the README's table says the same).
EXIT_HELP = {
    "screening": "exit codes: 0 within rating; 1 any other verdict (or a report that does not verify);\n"
                 "2 input error; 130 interrupted. 'screening COMMAND --help' gives each command's.",
    "check": "exit codes: 0 within rating; 1 low-margin, over or out-of-scope (the summary, and the PDF\n"
             "with --pdf, are still written); 2 input error or a report that could not be written.",
    "report": "exit codes: 0 within rating; 1 the report was written but the verdict is low-margin, over or\n"
              "out-of-scope; 2 input error or a report that could not be written (nothing written).",
    "verify": "exit codes: 0 everything verify checks holds (the attachments re-run to the same answer and\n"
              "the pages are the ones this version renders); 1 any of it does not, or cannot be checked;\n"
              "2 not a readable report of this tool.",
    "gases": "exit codes: 0.",
    "batch": "exit codes: 0 every row within rating; 1 any row low-margin, over, out-of-scope or an\n"
             "input-error row (the outputs are still written); 2 the inventory, the defaults file or an\n"
             "output cannot be read or written (nothing written).",
}


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
                "pressure vessels exposed to heat. A screening aid only; see SAFETY.md.",
                epilog=EXIT_HELP["screening"], formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("--version", action="version", version=f"screening {__version__}")
    sub = p.add_subparsers(dest="command", required=True, parser_class=_Parser)

    c = sub.add_parser("check", help="screen one vessel from a case file (TOML)", epilog=EXIT_HELP["check"],
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    c.add_argument("case", help="case file (TOML)")
    c.add_argument("--json", action="store_true", help="print one JSON object instead of the summary")
    c.add_argument("--pdf", metavar="OUT.pdf", help="also write the screening report as PDF")
    c.add_argument("--date", type=_date, help="report date (YYYY-MM-DD; default today)")

    r = sub.add_parser("report", help="write the screening report (PDF) of one case", epilog=EXIT_HELP["report"],
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    r.add_argument("case", help="case file (TOML)")
    r.add_argument("-o", "--output", required=True, metavar="OUT.pdf", help="PDF to write")
    r.add_argument("--date", type=_date, help="report date (YYYY-MM-DD; default today)")

    v = sub.add_parser("verify", help="re-run what a report or batch report carries and compare", epilog=EXIT_HELP["verify"],
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    v.add_argument("report", help="a PDF written by 'screening check --pdf', 'screening report' or "
                   "'screening batch --pdf'")

    sub.add_parser("gases", help="list the gas library with its sources", epilog=EXIT_HELP["gases"],
                   formatter_class=argparse.RawDescriptionHelpFormatter)

    b = sub.add_parser("batch", help="screen every vessel of an inventory (CSV or XLSX)", epilog=EXIT_HELP["batch"],
                       formatter_class=argparse.RawDescriptionHelpFormatter)
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
    b.add_argument("--site", metavar="NAME", help="site name for the title of the PDF (default: the site "
                   "name the rows share, from their column or the defaults file)")
    b.add_argument("--all-details", action="store_true", help="detail every vessel in the PDF, not only those "
                   "that are not within rating")
    b.add_argument("--date", type=_date, help="report date (YYYY-MM-DD; default today)")
    b.add_argument("--quiet", action="store_true", help="no progress bar and no table; counts only")

    t = sub.add_parser("template", help="write a blank inventory or a commented case file to start from")
    t.add_argument("kind", choices=("inventory", "case"), help="inventory (CSV or XLSX) or case (TOML)")
    t.add_argument("-o", "--output", metavar="FILE", help="file to write (.csv or .xlsx for an inventory, "
                   ".toml for a case); default: print it")

    w = sub.add_parser("serve", help="start the local web page (vessel, inventory, gas library)")
    w.add_argument("--host", default="127.0.0.1", help="address to listen on (default 127.0.0.1: this "
                   "computer only; any other prints a warning)")
    w.add_argument("--port", type=int, default=8765, help="port to listen on (default 8765)")
    w.add_argument("--open", action="store_true", help="open the page in the web browser")
    return p


def _write_pdf(result: Result, case_text: str, out: str, date: _dt.date | None, plots: dict | None = None) -> str:
    from screening.outputs.report import render_report

    path = render_report(result, case_text, out, report_date=date or _dt.date.today(), plots=plots)
    return str(path)


def _lean_coolprop() -> None:
    """A one-case command loads CoolProp's library without every fluid's superancillaries and adds back
    the fluids it uses (screening.physics.eos.coolprop_library: same numbers, about 2 s less)."""
    from screening.physics.eos.coolprop_library import load_lean

    load_lean()


def _screened_here(path: str, curves: bool = True) -> tuple[Result, str]:
    """(result, case text as read) of the case file at `path`, screened in this process; with its plot data
    where `curves` (the outputs that show them: JSON and the PDF)."""
    from screening.inputs.case import load_case

    case = load_case(path)
    _lean_coolprop()
    from screening.engine import screen_case  # after the case reads cleanly: an input error comes sooner

    return screen_case(case, curves=curves), case.text


def _prepare_report_layer() -> None:
    """Import what laying out the PDF needs (not matplotlib: the worker draws the plots); only a head
    start, so a failure here is left for the render itself to raise, in its usual order after the
    screening."""
    try:
        import screening.outputs.report
        import screening.outputs.summary  # noqa: F401

        screening.outputs.report.prepare_layout()
    except Exception:
        pass


def _screen_in_worker(case) -> Result:
    """Run in the worker: the result of the case (an InputError raised here comes back as itself)."""
    _lean_coolprop()
    from screening.engine import screen_case

    return screen_case(case)


def _screen_and_plot_in_worker(case) -> tuple[Result, dict]:
    """Run in the worker: the result of the case and the report's plots drawn from it
    (outputs.report.report_plots), so that the parent, busy importing the layout engine meanwhile, need
    not import matplotlib nor draw."""
    result = _screen_in_worker(case)
    from screening.outputs.report import report_plots

    return result, report_plots(result)


def _worker_helps() -> bool:
    """A worker pays off in a fresh command only: a long-lived caller that has the screening core
    loaded already would only pay for the process. Where the platform cannot fork, a worker would
    import everything again from scratch, so the case is screened here."""
    return hasattr(os, "fork") and "screening.engine" not in sys.modules


def _worker_pool():
    """One forked worker process; the caller shuts it down."""
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor

    return ProcessPoolExecutor(max_workers=1, mp_context=multiprocessing.get_context("fork"))


def _screened_for_pdf(path: str, *, fork: bool | None = None) -> tuple[Result, str]:
    """(result, case text as read) for a command that goes on to write a PDF (see _screened_and_plotted)."""
    result, text, _ = _screened_and_plotted(path, fork=fork)
    return result, text


def _screened_and_plotted(path: str, *, fork: bool | None = None) -> tuple[Result, str, dict | None]:
    """(result, case text as read, the report's plots or None) for a command that goes on to write a PDF.

    The case is read here first, so an unreadable case is reported at once and starts no process.
    Then, with `fork` (default: `_worker_helps()`), one worker process (`_worker_pool`) imports the
    screening core, screens the case and draws the report's plots while this process imports the
    report layer; the plots come back with the result (None where the case was screened here: the
    report then draws them itself). The worker is
    handed the parsed Case (it never builds the unit registry); an InputError it finds is raised here as
    itself. Without a worker, or when it cannot be started, cannot be handed the case or dies, the case
    is screened here.
    """
    from screening.inputs.case import load_case

    case = load_case(path)
    if fork is None:
        fork = _worker_helps()
    if fork:
        pool = None
        try:
            pool = _worker_pool()
            job = pool.submit(_screen_and_plot_in_worker, case)
            _prepare_report_layer()
            result, plots = job.result()
            return result, case.text, plots
        except InputError:
            raise
        except Exception:  # noqa: BLE001
            # No process could be started (OSError), the worker died (BrokenProcessPool), or the case or
            # the answer could not be handed over (a pickling error): screened here. An error of the
            # screening itself is raised again by the screening here, with this process's traceback.
            pass
        finally:
            if pool is not None:
                pool.shutdown(wait=True, cancel_futures=True)
    _lean_coolprop()
    from screening.engine import screen_case

    return screen_case(case), case.text, None


#: Largest inventory file [bytes] a batch reads: a 10 000 000-row register is about 1 GB (the reader
#: itself streams in bounded memory and bounds rows, columns and cells).
MAX_INVENTORY_BYTES = 8 * 1024 ** 3


def _check_outputs(args) -> None:
    """Refuse a bad output target before any work: a directory, a device, a FIFO, an input file, the
    same file for two outputs, a missing or read-only folder (screening.outputs.files.check_target)."""
    from screening.outputs.files import check_target

    if args.command == "batch":
        inputs = (args.inventory, args.defaults)
        targets = [(p, what) for p, what in ((args.json, "JSON output"), (args.csv, "CSV output"),
                                             (args.xlsx, "XLSX output"), (args.jsonl, "JSON Lines output"),
                                             (args.pdf, "PDF report")) if p is not None]
    elif args.command in ("check", "report"):
        inputs = (args.case,)
        out = args.output if args.command == "report" else args.pdf
        targets = [(out, "report")] if out is not None else []
    else:
        return
    for k, (p, what) in enumerate(targets):
        check_target(p, what, inputs=inputs, others=[q for j, (q, _) in enumerate(targets) if j != k])


def _check_batch_inputs(args) -> None:
    """An inventory or defaults file must be a regular file of a stated size at most (a device such as
    /dev/zero, or a FIFO, would be read without end)."""
    import stat as _stat

    for path, what, limit in ((args.inventory, "inventory", MAX_INVENTORY_BYTES),
                              (args.defaults, "defaults file", None)):
        if path is None:
            continue
        try:
            st = os.stat(path)
        except OSError:
            continue                 # the reader says what is wrong (not found, unreadable)
        if _stat.S_ISDIR(st.st_mode):
            continue
        if not _stat.S_ISREG(st.st_mode):
            raise InputError(f"the {what} is not a regular file", file=str(path),
                             expected="a CSV or .xlsx file" if what == "inventory" else "a TOML file")
        if limit is None:
            from screening.inputs.case import MAX_CASE_BYTES

            limit = MAX_CASE_BYTES
        if st.st_size > limit:
            raise InputError(f"the {what} is larger than this tool reads", file=str(path),
                             given=f"{st.st_size} bytes", expected=f"at most {limit // (1024 * 1024)} MB")


def _exit_for(verdict: str) -> int:
    return EXIT_WITHIN if verdict == "within" else EXIT_NOT_WITHIN


def run(argv: list[str] | None = None) -> int:
    args = _build().parse_args(argv)
    _check_outputs(args)
    if args.command == "batch":
        _check_batch_inputs(args)
        _lean_coolprop()        # the fluids the register names are added back before the work (batch.run)
        from screening.batch import run as run_batch

        return run_batch(args)
    if args.command == "template":
        from screening.outputs.templates import write_template

        written = write_template(args.kind, args.output)
        if written:
            print(f"template written: {written}", file=sys.stderr)
        return 0
    if args.command == "serve":
        from screening.web.server import serve

        return serve(args.host, args.port, open_browser=args.open)
    if args.command == "gases":
        from screening.outputs.gases_listing import format_library

        print(format_library())
        return 0
    if args.command == "verify":
        _lean_coolprop()
        from screening.batch import run as run_batch
        from screening.outputs.verify import verify_report

        ok, message = verify_report(args.report, run_batch=run_batch)
        print(message)
        return EXIT_WITHIN if ok else EXIT_NOT_WITHIN

    plots = None
    if args.command == "report" or args.pdf:
        result, case_text, plots = _screened_and_plotted(args.case)
    else:
        result, case_text = _screened_here(args.case, curves=bool(args.json))
    if args.command == "report":
        written = _write_pdf(result, case_text, args.output, args.date, plots)
        print(f"report written: {written}")
        return _exit_for(result.verdict)
    if args.json:
        import json

        print(json.dumps(result.to_json(), indent=2, ensure_ascii=False, allow_nan=False))
    else:
        from screening.outputs.summary import format_summary

        print(format_summary(result))
    if args.pdf:
        written = _write_pdf(result, case_text, args.pdf, args.date, plots)
        print(f"report written: {written}", file=sys.stderr if args.json else sys.stdout)
    return _exit_for(result.verdict)


def _quiet_stdout() -> None:
    """After a broken pipe (`screening check … | head`): send what is left of stdout nowhere, so the
    interpreter's last flush does not complain either."""
    with contextlib.suppress(OSError, ValueError):
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())


def main(argv: list[str] | None = None) -> None:
    code = None
    try:
        code = run(argv)
        sys.stdout.flush()
    except BrokenPipeError:          # the reader of our output went away: end quietly
        _quiet_stdout()
        code = EXIT_NOT_WITHIN if code is None else code   # cut short before its verdict was out: not 0
    except OutputError as exc:
        print(f"screening: output error: {exc}", file=sys.stderr)
        code = EXIT_INPUT
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
