"""Command line: `screening check`, `report`, `verify`, `gases`.

Exit codes: 0 within rating; 1 any other verdict (or a report that does not verify); 2 input error.

Commands that write a PDF (`report`, `check --pdf`) screen the case in a forked child process: the
child imports the screening core (CoolProp loads its whole fluid library) while this process reads the
case and imports the report layer (WeasyPrint, Matplotlib, Jinja2), so the two slow import chains run
on two cores at once. The child sends the result back as JSON, the same JSON the report attaches; where
fork is not available, or the child gives no answer, the case is screened here as before.
"""

from __future__ import annotations

import argparse
import datetime as _dt
import gc
import json
import os
import pickle
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


class _ScreeningChild:
    """A forked child that imports the screening core at once, then screens the one case it is sent.

    Parent to child: the parsed Case, pickled (the parent reads the case file itself, so the child never
    needs the unit registry). Child to parent: one JSON message, {"result": ...} or {"input_error":
    "the one-line message"}. A child that fails in any other way sends nothing, and the parent then
    screens the case itself, which shows the error exactly as the plain path would.
    """

    def __init__(self) -> None:
        sys.stdout.flush()
        sys.stderr.flush()
        to_child, self._to_child = os.pipe()
        self._from_child, from_child = os.pipe()
        try:
            self.pid = os.fork()
        except OSError:  # no memory, no more processes: the caller screens the case itself
            for fd in (to_child, self._to_child, self._from_child, from_child):
                os.close(fd)
            raise
        if self.pid == 0:
            os.close(self._to_child)
            os.close(self._from_child)
            self._run(to_child, from_child)  # does not return
        os.close(to_child)
        os.close(from_child)

    @staticmethod
    def _run(read_fd: int, write_fd: int) -> None:
        status = 1
        try:
            try:
                from screening.screen import screen_case  # the long import, beside the parent's work

                with os.fdopen(read_fd, "rb") as pipe:
                    data = pipe.read()
                if not data:  # the parent had no case to send (it reports why itself)
                    status = 0
                    return
                message = {"result": screen_case(pickle.loads(data))}
            except InputError as exc:
                message = {"input_error": str(exc)}
            # Default json settings (ASCII escapes, NaN allowed): every str and float comes back unchanged.
            out = memoryview(json.dumps(message).encode("ascii"))
            while out:
                out = out[os.write(write_fd, out):]
            status = 0
        except BaseException:  # whatever happens, the child must not go on to run the parent's code
            pass
        finally:
            try:  # anything a library printed (a warning) goes out as it would from one process
                sys.stdout.flush()
                sys.stderr.flush()
            finally:
                os._exit(status)

    def send(self, case) -> bool:
        """Hand the parsed case to the child; False if that fails (the child has died, say), and the
        caller then screens the case itself."""
        try:
            data = pickle.dumps(case, protocol=pickle.HIGHEST_PROTOCOL)
            with os.fdopen(self._to_child, "wb") as pipe:
                self._to_child = None
                pipe.write(data)
        except Exception:  # a broken pipe, or a case that does not pickle: the plain path still works
            return False
        return True

    def answer(self) -> dict | None:
        """The child's message, once it has finished; None if it gave none."""
        with os.fdopen(self._from_child, "rb") as pipe:
            self._from_child = None
            data = pipe.read()
        _, status = os.waitpid(self.pid, 0)
        self.pid = None
        if status != 0 or not data:
            return None
        try:
            return json.loads(data)
        except ValueError:
            return None

    def close(self) -> None:
        """Close the pipes; stop and reap the child if it is still there (an error or an interrupt here)."""
        for fd in (self._to_child, self._from_child):
            if fd is not None:
                os.close(fd)
        self._to_child = self._from_child = None
        if self.pid is not None:
            import signal

            try:
                os.kill(self.pid, signal.SIGTERM)
                os.waitpid(self.pid, 0)
            except OSError:
                pass
            self.pid = None


def _fork_helps() -> bool:
    """Fork where the platform has it and this process has not loaded the screening core yet (a fresh
    command; a long-lived caller that has it loaded would only pay for the fork)."""
    return hasattr(os, "fork") and "screening.screen" not in sys.modules


def _screened_for_pdf(path: str, *, fork: bool | None = None) -> tuple[dict, str]:
    """(result, case text as read) for a command that goes on to write a PDF.

    With `fork` (default: `_fork_helps()`), a child imports the screening core and screens the case
    while this process reads the case and imports the report layer. An InputError found by the child is
    raised here with the same message. Without a fork, or when the child gives no answer, the case is
    screened here.
    """
    if fork is None:
        fork = _fork_helps()
    child = None
    if fork:
        try:
            child = _ScreeningChild()
        except OSError:
            child = None
    try:
        from screening.inputs.case import load_case

        case = load_case(path)
        if child is not None and child.send(case):
            _prepare_report_layer()
            message = child.answer()
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

        code = run_batch(args)
        _ending(argv)
        return code
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
