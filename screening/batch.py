"""`screening batch INVENTORY`: screen every row of an inventory, lose none.

Every input row appears in every output, in input order, with its spreadsheet row number (header =
row 1). A row that cannot be read is an ``input-error`` row naming the row, the column, the value and
what was expected; the others go on. Exit 0 only if every row is ``within``; 2 only if the file itself
cannot be read; else 1.
"""

from __future__ import annotations

import contextlib
import csv
import io
import json
import math
import os
import sys
import tempfile
from pathlib import Path

from screening.errors import InputError
from screening.inputs.inventory import Inventory, load_defaults, read_inventory, row_case
from screening.units import format_percent, format_pressure, format_temperature

EXIT_WITHIN, EXIT_NOT_WITHIN, EXIT_INPUT = 0, 1, 2
ORDER = ("input-error", "out-of-scope", "over", "low-margin", "within")
_RANK = {v: i for i, v in enumerate(ORDER)}
#: Keys of a result kept in the JSON output (the result's shared or bulky parts are left out).
_DROP = ("curves", "cautions")
#: Rows above which a progress bar is shown (on a terminal).
PROGRESS_MIN_ROWS = 2000


# ----------------------------------------------------------------------------- running

def error_row(row: int, exc: InputError, case_id: str | None) -> dict:
    return {"row": row, "id": case_id, "verdict": "input-error", "reasons": [str(exc)], "warnings": [],
            "error": {"message": exc.message, "row": exc.row, "column": exc.column,
                      "given": None if exc.given is None else str(exc.given), "expected": exc.expected},
            "peak_pressure_pa": None, "margin_fraction": None, "governing_model": None, "limits": None}


def _progress(total: int, quiet: bool, desc: str):
    if quiet or total < PROGRESS_MIN_ROWS or not sys.stderr.isatty():
        return None
    from tqdm import tqdm

    return tqdm(total=total, desc=desc, unit="row", file=sys.stderr, leave=False)


class BatchRun:
    """Every row of an inventory screened, in input order.

    ``results[i]`` is row i's result with its "row": the slim part the table, CSV and counts use for rows
    of the vectorised path (see :func:`screening.vector.slim`), the full result for the rest and the
    ``input-error`` rows. ``full(i)`` gives row i's full result dict (built on demand)."""

    def __init__(self, inv: Inventory, defaults: dict | None = None, quiet: bool = True,
                 plain=None) -> None:
        from screening.inputs.columns import read_plain
        from screening.vector import PlainScreening, screen_cases

        self.inv = inv
        id_col = next(i for i, c in enumerate(inv.columns) if c.name == "id")
        if plain is None:       # (else read already: see _early_reader)
            plain = read_plain(inv, defaults)
        bar = _progress(len(inv.rows), quiet, "screening")
        self._plain = PlainScreening(plain, progress=(bar.update if bar else None))
        slots: list[dict | None] = [None] * len(inv.rows)
        self._plain_at: dict[int, int] = {}
        for j, pos in enumerate(plain.index):
            pos = int(pos)
            r = self._plain.summaries[j]
            self._plain_at[pos] = j
            slots[pos] = self._placed(pos, r, plain.case(j).id if r.get("verdict") == "input-error" else None)
        cases, where = [], []
        for pos, (n, cells) in enumerate(inv.rows):
            if slots[pos] is not None:
                continue
            try:
                cases.append(row_case(inv, n, cells, defaults))
                where.append(pos)
            except InputError as exc:
                cid = cells[id_col].strip() if id_col < len(cells) and cells[id_col].strip() else None
                slots[pos] = error_row(n, exc, cid)
            if bar:
                bar.update(1)
        self._rest: dict[int, dict] = {}
        for pos, case, r in zip(where, cases, screen_cases(cases, progress=(bar.update if bar else None))):
            slots[pos] = self._placed(pos, r, case.id)
            if r.get("verdict") != "input-error":
                self._rest[pos] = slots[pos]
        if bar:
            bar.close()
        self.results: list[dict] = slots  # type: ignore[assignment]
        _duplicates(self.results)

    def _placed(self, pos: int, r: dict, case_id: str | None) -> dict:
        n = self.inv.rows[pos][0]
        if r.get("verdict") == "input-error":
            exc = r["error"]
            located = InputError(exc.message, file=self.inv.source, row=n, key=exc.key, given=exc.given,
                                 expected=exc.expected)
            return error_row(n, located, case_id)
        r["row"] = n
        return r

    def full(self, i: int) -> dict:
        """Row i's full result dict (with its "row" and the batch's warnings)."""
        r = self.results[i]
        j = self._plain_at.get(i)
        if j is None or r["verdict"] == "input-error":
            return r
        f = self._plain.full(j)
        if f is r:
            return r
        f = dict(f)
        f["row"] = r["row"]
        f["warnings"] = r["warnings"]
        return f


def run_inventory(inv: Inventory, defaults: dict | None = None, quiet: bool = True) -> list[dict]:
    """Full results of every row of the inventory, in input order, each with its "row"."""
    run = BatchRun(inv, defaults, quiet)
    return [run.full(i) for i in range(len(run.results))]


def _duplicates(results: list[dict]) -> None:
    first: dict[str, int] = {}
    for r in results:
        cid = r.get("id")
        if cid is None:
            continue
        if cid in first:
            r.setdefault("warnings", []).append({"code": "duplicate-id", "message":
                                                 f"The id '{cid}' is also used on row {first[cid]}."})
        else:
            first[cid] = r["row"]


def summary(results: list[dict]) -> dict:
    counts = {v: 0 for v in ORDER}
    for r in results:
        counts[r["verdict"]] = counts.get(r["verdict"], 0) + 1
    dups = sum(1 for r in results for w in r.get("warnings", []) if w.get("code") == "duplicate-id")
    return {"rows": len(results), "counts": counts, "duplicate_ids": dups}


def exit_code(results: list[dict]) -> int:
    return EXIT_WITHIN if results and all(r["verdict"] == "within" for r in results) else EXIT_NOT_WITHIN


def ranked(results: list[dict]) -> list[dict]:
    """Worst first: input errors, out-of-scope, then by margin (lowest first); input order on ties."""
    def key(r):
        m = r.get("margin_fraction")
        return (_RANK.get(r["verdict"], 0) if r["verdict"] in ("input-error", "out-of-scope") else 2,
                m if m is not None else -math.inf, r["row"])
    return sorted(results, key=key)


# ----------------------------------------------------------------------------- display helpers

def _units(r: dict) -> tuple[str, str, float]:
    du = r.get("display_units") or {}
    atm = (r.get("site") or {}).get("atmospheric_pressure_pa") or 101325.0
    return du.get("pressure", "bar(g)"), du.get("temperature", "degC"), atm


def cells(r: dict) -> dict:
    """The row's figures as text in the user's units."""
    if r["verdict"] == "input-error":
        return {"peak": "", "rated": "", "margin": "", "t_max": "", "p_max": "", "gas": ""}
    pu, tu, atm = _units(r)
    lim = r.get("limits") or {}
    return {
        "peak": format_pressure(r["peak_pressure_pa"], pu, atm),
        "rated": format_pressure(r["rated_pressure_pa"], pu, atm),
        "margin": format_percent(r["margin_fraction"]),
        "t_max": format_temperature(lim.get("max_gas_temperature_k"), tu),
        "p_max": format_pressure(lim.get("max_fill_pressure_pa"), pu, atm),
        "gas": (r.get("gas") or {}).get("name", ""),
    }


def terminal_table(results: list[dict]) -> str:
    s = summary(results)
    lines = ["  ".join(f"{v}: {s['counts'][v]}" for v in ORDER) + f"  (rows: {s['rows']})"]
    head = f"{'row':>6}  {'id':<18} {'verdict':<12} {'gas':<14} {'peak':>16} {'rated':>16} {'margin':>9}"
    lines += ["", head, "-" * len(head)]
    for r in ranked(results):
        c = cells(r)
        lines.append(f"{r['row']:>6}  {str(r.get('id') or '')[:18]:<18} {r['verdict']:<12} {c['gas'][:14]:<14} "
                     f"{c['peak']:>16} {c['rated']:>16} {c['margin']:>9}")
        if r["verdict"] in ("input-error", "out-of-scope"):
            lines.append(f"{'':>8}{r['reasons'][0]}")
        for w in r.get("warnings", []):
            if w.get("code") == "duplicate-id":
                lines.append(f"{'':>8}warning: {w['message']}")
    return "\n".join(lines)


# ----------------------------------------------------------------------------- atomic writes

def check_target(path: str | os.PathLike, what: str) -> Path:
    target = Path(path)
    if target.is_dir():
        raise InputError(f"the {what} target is a directory", given=str(target), expected="a file path")
    parent = target.parent if str(target.parent) else Path(".")
    if not parent.is_dir():
        raise InputError(f"the folder for the {what} does not exist", given=str(target))
    if not os.access(parent, os.W_OK | os.X_OK):
        raise InputError(f"the {what}'s folder is not writable", given=str(target))
    return target


@contextlib.contextmanager
def atomic_writer(path: str | os.PathLike, what: str, binary: bool = False):
    """A file object writing into a temporary file beside `path`, moved into place on success only."""
    target = check_target(path, what)
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=target.parent)
    try:
        with os.fdopen(fd, "wb" if binary else "w", **({} if binary else {"encoding": "utf-8", "newline": ""})) as fh:
            yield fh
            fh.flush()
            os.fsync(fh.fileno())
        mode = 0o666 & ~_umask()
        with contextlib.suppress(OSError):
            mode = target.stat().st_mode & 0o777
        os.chmod(tmp, mode)
        os.replace(tmp, target)
        tmp = None
    finally:
        if tmp is not None:
            with contextlib.suppress(OSError):
                os.unlink(tmp)


def _umask() -> int:
    m = os.umask(0)
    os.umask(m)
    return m


def _json_safe(x):
    if isinstance(x, float) and not math.isfinite(x):
        return None
    if isinstance(x, dict):
        return {k: _json_safe(v) for k, v in x.items()}
    if isinstance(x, (list, tuple)):
        return [_json_safe(v) for v in x]
    return x


def write_json(results: list[dict], path, full=None) -> None:
    """The JSON output: the summary, then every row's result (``full(i)`` where given, else results[i])."""
    with atomic_writer(path, "JSON output") as fh:
        fh.write('{"summary": ' + json.dumps(summary(results)) + ',\n "results": [\n')
        for i, r in enumerate(results):
            if full is not None:
                r = full(i)
            slim = {k: v for k, v in r.items() if k not in _DROP}
            fh.write(("  " if i == 0 else ",\n  ") + json.dumps(_json_safe(slim), ensure_ascii=False, allow_nan=False))
        fh.write("\n]}\n")


#: Rows of the CSV output formatted per task; a large output is formatted in forked workers.
CSV_CHUNK = 5000
#: (results, cells by row number, number of input columns) of the CSV being written, read by the workers
#: that _csv_text forks (they inherit it; nothing of it is sent to them).
_CSV_JOB: tuple | None = None


def _csv_text(bounds: tuple[int, int]) -> str:
    """The CSV lines of results[lo:hi] of the CSV being written (see _CSV_JOB)."""
    results, cells_by_row, width = _CSV_JOB  # type: ignore[misc]
    buf = io.StringIO(newline="")
    w = csv.writer(buf)
    for r in results[bounds[0]:bounds[1]]:
        c = cells(r)
        raw = list(cells_by_row.get(r["row"], []))
        raw = (raw + [""] * width)[:width]
        w.writerow([r["row"]] + raw + [c["peak"], r.get("governing_model") or "", c["margin"], r["verdict"],
                                       " ".join(r.get("reasons") or []), c["t_max"], c["p_max"],
                                       " ".join(x["message"] for x in r.get("warnings") or [])])
    return buf.getvalue()


def write_csv(inv: Inventory, results: list[dict], path) -> None:
    from screening import parallel

    global _CSV_JOB
    headers = [c.header for c in inv.columns]
    extra = ["peak_pressure", "governing_model", "margin", "verdict", "reasons", "max_gas_temperature",
             "max_fill_pressure", "warnings"]
    bounds = [(k, min(k + CSV_CHUNK, len(results))) for k in range(0, len(results), CSV_CHUNK)]
    with atomic_writer(path, "CSV output") as fh:
        csv.writer(fh).writerow(["row"] + headers + extra)
        _CSV_JOB = (results, {n: c for n, c in inv.rows}, len(headers))
        try:
            # chunks in order; on two or more cores and enough rows, formatted in forked workers
            texts = parallel.map_items(_csv_text, bounds, min_items=max(2, parallel.MIN_ROWS // CSV_CHUNK))
        finally:
            _CSV_JOB = None
        for text in texts:
            fh.write(text)


# ----------------------------------------------------------------------------- the command

def _fresh_process() -> bool:
    """A child forked at the start helps where the platform forks and this process has not loaded the
    screening core yet (a fresh command, not a long-lived caller that has it loaded)."""
    return hasattr(os, "fork") and "screening.screen" not in sys.modules


#: What a standby renderer imports while the batch screens: the layout engine and the batch report
#: (named here, so that this process need not import them to fork it).
RENDER_MODULES = ("weasyprint", "pypdf", "PIL.Image", "matplotlib.backends.backend_agg",
                  "screening.outputs.batch_report")


def _standby_renderer():
    """For a batch that writes a PDF, in a fresh process: a child that imports the layout engine now,
    while this process imports the equations of state and screens, and lays the PDF out later."""
    from screening import parallel

    if not _fresh_process() or "weasyprint" in sys.modules:
        return None
    try:
        return parallel.Standby(RENDER_MODULES)
    except OSError:
        return None


#: From this size of inventory file [bytes] on, a child forked at the start reads and parses the rows
#: while this process imports the equations of state (seconds, for CoolProp's fluid library).
EARLY_READ_BYTES = 256 * 1024


def _read_rows(path: str, sheet: str | None, defaults_path: str | None):
    """(inventory, its plain rows): what the early reader sends back."""
    from screening.inputs.columns import read_plain

    inv = read_inventory(path, sheet=sheet)
    defaults = load_defaults(defaults_path) if defaults_path else None
    return inv, read_plain(inv, defaults)


def _early_reader(args):
    """For a large inventory, in a fresh process: a child that reads and parses its rows now."""
    from screening import parallel

    if not _fresh_process():
        return None
    try:
        if os.path.getsize(args.inventory) < EARLY_READ_BYTES:
            return None
        reader = parallel.Standby(("screening.inputs.columns",))
    except OSError:
        return None
    try:
        reader.send(_read_rows, args.inventory, args.sheet, args.defaults)
    except parallel.StandbyGone:
        return None
    return reader


def run(args) -> int:
    standby = _standby_renderer() if args.pdf else None
    reader = _early_reader(args)
    try:
        plain = None
        if reader is not None:
            import screening.vector  # noqa: F401  (the long import, beside the reader's work)

            try:
                inv, plain = reader.answer()
            except Exception:  # whatever went wrong there is read here, and a bad file reported from here
                plain = None
        if plain is None:
            inv = read_inventory(args.inventory, sheet=args.sheet)
        defaults = load_defaults(args.defaults) if args.defaults else None
        targets = [(p, what) for p, what in ((args.json, "JSON output"), (args.csv, "CSV output"),
                                             (args.pdf, "PDF report")) if p]
        for p, what in targets:      # refuse a bad target before the work, not after it
            check_target(p, what)
        run_ = BatchRun(inv, defaults, quiet=args.quiet, plain=plain)
        results = run_.results
        if args.json:
            write_json(results, args.json, full=run_.full)
        if args.csv:
            write_csv(inv, results, args.csv)
        if args.pdf:
            from screening.outputs.batch_report import render_batch_report, row_texts

            render_batch_report(results, args.pdf, source=inv.source, all_details=args.all_details,
                                report_date=args.date, quiet=args.quiet, full=run_.full, standby=standby,
                                site=getattr(args, "site", None), texts=row_texts(inv, defaults))
    finally:
        for child in (standby, reader):
            if child is not None:
                child.close()
    if args.quiet:
        s = summary(results)
        print("  ".join(f"{v}: {s['counts'][v]}" for v in ORDER) + f"  (rows: {s['rows']})")
    else:
        print(terminal_table(results))
    return exit_code(results)
