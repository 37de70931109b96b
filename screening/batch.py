"""`screening batch INVENTORY`: screen every row of an inventory, lose none, in bounded memory.

The batch streams: it reads a window of rows (:data:`WINDOW_CHUNKS` chunks), sorts it by gas (a site's
register lists its gases interleaved, and the engine screens the rows of one gas in a chunk as one table, so
rows of one gas side by side make a few large tables instead of many small ones), screens it in chunks of
:data:`CHUNK_ROWS` (where there are several cores and enough rows, in worker processes of one-process
``concurrent.futures`` pools, a mixture's chunks of one composition each in the process that screened its
first one: :func:`_chunk_cuts`, :func:`screening.parallel.routed`), puts the rows back in input order, writes
their lines to every output and drops them. Only the counts, the worst rows (for the terminal) and, for a PDF,
each row's short result are kept. Windows and chunks are fixed by the input alone, and every row is screened on
its own, so the outputs are the same whatever the number of workers and wherever a chunk runs.

Every input row appears in every output, in input order (or, with ``--sort severity``, worst first),
with its spreadsheet row number (header = row 1). A row that cannot be read is an ``input-error`` row
naming the row, the column, the value and what was expected; the others go on. Exit 0 only if every
row is ``within``; 2 only if the file itself cannot be read; else 1.
"""

from __future__ import annotations

import bisect
import contextlib
import functools
import heapq
import itertools
import json
import mmap
import os
import pickle
import sys
import tempfile
from collections import deque
from dataclasses import replace
from itertools import chain, repeat
from typing import Iterator

from screening.cautions import ASSUMPTIONS, CAUTION, SHORT_CAUTION
from screening.errors import InputError
from screening.inputs.inventory import (
    Inventory,
    check_pressure_bases,
    load_defaults,
    open_inventory,
    read_inventory,
    row_case,
)
from screening.outputs.files import atomic_writer, check_target
from screening.outputs.listing import ORDER, cells, ranked, severity_key, severity_key_of, summary
from screening.outputs.tables import (
    CsvTable,
    XlsxTable,
    file_units,
    json_bytes,
    json_line,
    result_cells,
    result_headers,
    result_values,
    units_of,
)
from screening.outputs.text import visible
from screening.result import Result, ResultData, ScreeningWarning
from screening.verdicts import EXIT_INPUT, EXIT_NOT_WITHIN, EXIT_WITHIN, Verdict

#: Keys of a result left out of the JSON outputs (shared or bulky parts).
_DROP = ("curves", "cautions")
#: Rows screened as one piece of work (the unit of the worker pool).
CHUNK_ROWS = 5000
#: Chunks read and sorted by gas together (the unit of streaming): the rows held at once are a window's.
WINDOW_CHUNKS = 4
#: A mixture's row counted as this many rows of a pure gas when a window is cut into chunks (measured with
#: benchmarks/kinds.py and benchmarks/mix.py: a mixture's row takes some 4-40 ms, a pure gas's 0.06-0.15 ms).
MIXTURE_WORK = 100
#: Chunks in flight per worker process (screening.parallel.routed).
CHUNKS_AHEAD = 3
#: Worst rows kept for the terminal table (all rows where there are at most this many).
TERMINAL_ROWS = 200
#: Bytes of JSON lines gathered before they are written to their output.
_WRITE_BYTES = 1 << 20
#: Rows sorted in memory before they are spilled to a temporary file (--sort severity).
SORT_RUN_ROWS = 100_000


# ----------------------------------------------------------------------------- one chunk

def error_row(row: int, exc: InputError, case_id: str | None) -> dict:
    return {"row": row, "id": case_id, "verdict": "input-error", "reasons": [str(exc)], "warnings": [],
            "error": {"message": exc.message, "row": exc.row, "column": exc.column,
                      "given": None if exc.given is None else str(exc.given), "expected": exc.expected},
            "peak_pressure_pa": None, "margin_fraction": None, "governing_model": None, "limits": None}


def _id_column(inv: Inventory) -> int:
    return next(i for i, c in enumerate(inv.columns) if c.key == "id")


class BatchRun:
    """Every row of an inventory (or of one chunk of it) screened, in input order.

    ``result(i)`` is row i's slim record with its "row": the part the table, CSV and counts use (see
    :func:`screening.engine.slim`), or the ``input-error`` record; a row that ran on the columns gets a new one
    on each call (the batch lays a chunk's records out one at a time, as it writes them). ``results`` holds
    every row's, laid out once. ``full(i)`` gives row i's full :class:`~screening.result.Result` (built on
    demand; the input-error record for such a row)."""

    def __init__(self, inv: Inventory, defaults: dict | None = None, quiet: bool = True, plain=None) -> None:
        from screening.engine import PlainScreening, screen_cases
        from screening.inputs.columns import read_plain

        self.inv = inv
        self.defaults = defaults
        id_col = _id_column(inv)
        if plain is None:
            plain = read_plain(inv, defaults)
        self._plain = PlainScreening(plain)
        slots: list[dict | None] = [None] * len(inv.rows)
        self._plain_at: dict[int, int] = {}
        self._fulls: dict[int, Result | ResultData] = {}
        screened = self._plain
        for j, pos in enumerate(plain.index.tolist()):
            self._plain_at[pos] = j
            if screened.failed(j):
                slots[pos] = self._placed(pos, screened.summary(j), plain.case(j).id)
        cases, where = [], []
        for pos, (n, row_cells) in enumerate(inv.rows):
            if slots[pos] is not None or pos in self._plain_at:
                continue
            try:
                cases.append(row_case(inv, n, row_cells, defaults))
                where.append(pos)
            except InputError as exc:
                cid = row_cells[id_col].strip() if id_col < len(row_cells) and row_cells[id_col].strip() else None
                slots[pos] = error_row(n, exc, cid)
        for pos, case, r in zip(where, cases, screen_cases(cases, data=True)):
            slots[pos] = self._placed(pos, r, case.id)
        self._slots = slots

    def __len__(self) -> int:
        return len(self._slots)

    def result(self, i: int) -> dict:
        """Row i's slim record with its "row" (see the class)."""
        r = self._slots[i]
        if r is None:       # a plain row screened on the columns (or per row), numbered as _placed numbers it
            r = self._plain.summary(self._plain_at[i])
            r["row"] = self.inv.rows[i][0]
        return r

    def fields(self, i: int) -> tuple | None:
        """Row i's number followed by its fields (:meth:`screening.engine.PlainScreening.fields`) where it ran on the
        columns outside the sun, for :func:`_lean_summary`; else None."""
        if self._slots[i] is not None:
            return None
        f = self._plain.fields(self._plain_at[i])
        return None if f is None else (self.inv.rows[i][0], *f)

    @functools.cached_property
    def results(self) -> list[dict]:
        """Every row's :meth:`result`, in order (laid out once, kept)."""
        return [self.result(i) for i in range(len(self._slots))]

    def _placed(self, pos: int, r: Result | ResultData | dict, case_id: str | None) -> dict:
        n = self.inv.rows[pos][0]
        if isinstance(r, ResultData):       # its Result made only where full(i) asks for it
            r.data["row"] = n
            self._fulls[pos] = r
            r = r.summary_record()
        elif isinstance(r, Result):
            from screening.engine import slim

            self._fulls[pos] = replace(r, row=n)
            r = slim(r)
        elif r["verdict"] == "input-error":
            exc = r["error"]
            located = InputError(exc.message, file=self.inv.source, row=n, key=exc.key, given=exc.given,
                                 expected=exc.expected)
            return error_row(n, located, case_id)
        r["row"] = n
        return r

    def detail(self, i: int) -> Result | dict:
        """Row i's full result with its plot curves (for a PDF's detail section)."""
        return _with_curves(self.full(i), self.inv, i, self.defaults)

    def full(self, i: int) -> Result | dict:
        """Row i's full result (with its "row" and the batch's warnings); its input-error record for a
        row that could not be screened."""
        if i in self._fulls:
            f = self._fulls[i]
            return f.result() if isinstance(f, ResultData) else f
        r = self.result(i)
        j = self._plain_at.get(i)
        if j is None or r["verdict"] == "input-error":
            return r
        f = self._plain.full(j)
        if not isinstance(f, Result):
            return r
        return replace(f, row=r["row"], warnings=_warnings(r["warnings"]))

    def full_json(self, i: int, warnings: list[dict], line: bool = False) -> dict:
        """``full(i)`` as JSON (:func:`_json`) with the given warnings, built without the Result where the
        row ran on the columns (:meth:`screening.engine.PlainScreening.full_json`; with `line`, as a line of the
        JSON output holds it, to be written at once: maybe without the curves and cautions, sharing parts)."""
        j = self._plain_at.get(i)
        if i in self._fulls or j is None or self._plain.failed(j):
            f = self._fulls.get(i)
            if isinstance(f, ResultData):       # laid out from its data, without its Result
                return f.to_json(warnings)
            f = self.full(i)
            return _json(replace(f, warnings=_warnings(warnings)) if isinstance(f, Result) else f)
        f = self._plain.full_json(j, line)
        if f is None:
            return self.result(i)
        f["warnings"] = [ScreeningWarning.json_layout(w) for w in warnings]
        f["row"] = self.inv.rows[i][0]
        return f


def _warnings(records: list[dict]) -> tuple[ScreeningWarning, ...]:
    return tuple(ScreeningWarning.from_json(w) for w in records)


def _screened(inv: Inventory, defaults: dict | None) -> tuple[int, object, object, object, object]:
    """(rows, result, full, full_json, fields) of a chunk (see BatchRun); a row whose screening raises is screened
    alone, and if it still raises, it becomes an input-error row: a bad row never takes its chunk with it."""
    try:
        run = BatchRun(inv, defaults)
        return len(run), run.result, run.full, run.full_json, run.fields
    except (InputError, ArithmeticError, ValueError):
        if len(inv.rows) == 1:
            raise
    results, fulls = [], []
    id_col = _id_column(inv)
    for n, row_cells in inv.rows:
        one = Inventory(inv.source, inv.columns, [(n, row_cells)], inv.delimiter, inv.decimal, inv.sheet)
        try:
            run = BatchRun(one, defaults)
            results.append(run.result(0))
            fulls.append(run.full(0))
        except (InputError, ArithmeticError, ValueError) as exc:
            cid = row_cells[id_col].strip() if id_col < len(row_cells) and row_cells[id_col].strip() else None
            msg = exc.message if isinstance(exc, InputError) else f"the values cannot be screened ({exc})"
            err = InputError(msg, file=inv.source, row=n, column=getattr(exc, "column", None),
                             given=getattr(exc, "given", None), expected=getattr(exc, "expected", None)
                             or "values of a real vessel")
            results.append(error_row(n, err, cid))
            fulls.append(results[-1])

    def full_json(i: int, warnings: list[dict], line: bool = False) -> dict:
        f = fulls[i]
        return _json(replace(f, warnings=_warnings(warnings)) if isinstance(f, Result) else f)
    return len(results), results.__getitem__, fulls.__getitem__, full_json, lambda i: None


def screen_chunk(job: tuple) -> list[tuple]:
    """Screen one chunk (run in a worker): per row (short result, JSON line as UTF-8 bytes or None, full result
    or None); with ``want["compact"]``, per row only what the batch writes and counts (:func:`_compact`).

    `job` = (inventory chunk, defaults, {row: first row of its id} for duplicate ids, want) where `want`
    holds "json" (a JSON line per row), "full" (None, "not-within" or "all": full results for a PDF) and
    "compact"."""
    if job[3].get("compact"):
        if job[3].get("spool"):
            got = _spooled(job, job[3]["spool"])
            if got is not None:
                return got
        return _compact(_chunk_rows(job))
    return list(_chunk_rows(job))


class Spooled:
    """A chunk's compact rows whose JSON lines wait in a file of the batch's spool folder (``path``: the lines one
    after the other, each row's line replaced by its length): one write and one read instead of a pickled bytes
    object per row through the worker's pipe, which cost the batch's process more than the lines' writing."""

    def __init__(self, path: str, rows: list[tuple]) -> None:
        self.path = path
        self.rows = rows


def _spooled(job: tuple, folder: str) -> Spooled | None:
    """The chunk's compact rows (:func:`_compact`) as :class:`Spooled` in `folder`: each row's JSON line written to
    the file as soon as it is laid out, through a buffer of a megabyte (the chunk's lines, some 30 MB, are never
    held: fresh memory for them cost more in page faults than their write); None where the file cannot be written
    (the caller screens the chunk again, its lines then going through the pipe)."""
    try:
        fd, path = tempfile.mkstemp(suffix=".jsonl", dir=folder)
    except OSError:
        return None
    try:
        with os.fdopen(fd, "wb", buffering=_WRITE_BYTES) as fh:
            rows = _compact(_lines_written(_chunk_rows(job), fh.write))
    except OSError:
        with contextlib.suppress(OSError):
            os.unlink(path)
        return None
    return Spooled(path, rows)


def _lines_written(rows: Iterator[tuple], write) -> Iterator[tuple]:
    """_chunk_rows' rows with each JSON line given to `write` and its length in its place (see :class:`Spooled`)."""
    for r, line, f in rows:
        if line is not None:
            write(line)
            line = len(line)
        yield r, line, f


def _unspooled(got: Spooled | list[tuple]) -> tuple[list[tuple], list]:
    """(a chunk's compact rows, their JSON lines in the same order: None for a row without one). The lines of a
    :class:`Spooled` chunk are taken from its file (then removed) as slices of its bytes (:func:`_whole_file`),
    without copying them and without making its rows anew (each row's line field then holds its length); other
    rows hold their lines."""
    if not isinstance(got, Spooled):
        return got, [x[_LINE] for x in got]
    with open(got.path, "rb") as fh:
        view = _whole_file(fh)
    os.unlink(got.path)
    sizes = [x[_LINE] for x in got.rows]
    if None in sizes:
        ends = list(itertools.accumulate(0 if n is None else n for n in sizes))
        return got.rows, [None if n is None else view[b - n:b] for n, b in zip(sizes, ends)]
    ends = list(itertools.accumulate(sizes))
    return got.rows, [view[a:b] for a, b in zip([0, *ends], ends)]


def _whole_file(fh) -> memoryview:
    """The bytes of a file opened for reading: mapped into memory where the platform can map it with its pages read
    at once (MAP_POPULATE: no copy, and no page faults one page at a time, as a fresh buffer of its size takes);
    else read. The mapping stays as long as a slice of it does (a removed file's pages then go)."""
    populate = getattr(mmap, "MAP_POPULATE", None)
    if populate is not None:
        try:
            return memoryview(mmap.mmap(fh.fileno(), 0, flags=mmap.MAP_SHARED | populate, prot=mmap.PROT_READ))
        except (OSError, ValueError):       # an empty file, a file system that does not map
            pass
    return memoryview(fh.read())


def _chunk_rows(job: tuple) -> Iterator[tuple]:
    """screen_chunk's rows, one by one: (short result, JSON line or None, full result or None). With
    ``want["compact"]`` and neither JSON lines nor full results wanted, a row that ran on the columns outside the sun
    and whose id is not a duplicate comes as (its fields, None, a function giving its short result) instead: its
    fields (:meth:`BatchRun.fields`) are what :func:`_compact` lays it out from, without its short result."""
    inv, defaults, dups, want = job
    rows, result, full, full_json, fields = _screened(inv, defaults)
    headers = [c.header for c in inv.columns]
    width = len(headers)
    full_kind, json_on = want.get("full"), want.get("json")
    lean = want.get("compact") and not json_on and not full_kind
    for i in range(rows):
        if lean:
            x = fields(i)
            if x is not None and x[0] not in dups:
                yield x, None, functools.partial(result, i)
                continue
        r = result(i)
        n = r["row"]
        if n in dups:
            r = dict(r)
            r["warnings"] = list(r.get("warnings") or []) + [
                {"code": "duplicate-id", "message": f"The id '{r.get('id')}' is also used on row {dups[n]}."}]
        f = None
        detail = full_kind == "all" or (full_kind == "not-within" and r["verdict"] != "within")
        if detail:
            f = full(i)
            if isinstance(f, Result):
                f = replace(f, warnings=_warnings(r["warnings"]))
        line = None
        if json_on:
            cells = inv.rows[i][1]
            # the full result's JSON: from the Result where the PDF needs it anyway, else built directly (a new
            # dict either way, but for an input-error record: the row's short result itself)
            rec = _json(f) if f is not None else full_json(i, r["warnings"], True)
            if rec is r or rec.get("verdict") == "input-error":
                rec = dict(rec)
            if "cautions" in rec or "curves" in rec:      # a full result's (a row's line has neither)
                for k in _DROP:
                    rec.pop(k, None)
            rec["row"] = n
            # every header, "" past the cells
            rec["input"] = dict(zip(headers, map(str, cells) if len(cells) >= width else
                                    chain(map(str, cells), repeat(""))))
            line = json_bytes(rec)
        keep_full = _with_curves(f, inv, i, defaults) if detail else None
        yield r, line, keep_full


#: The fields of a row as the batch writes and counts it (:func:`_row_summary`), one flat tuple a row: its severity
#: key (three fields: rank, margin, row), verdict, duplicate id or not, the units of its result columns, JSON line,
#: short result, then its result columns.
_KEY, _VERDICT, _DUP, _UNITS, _LINE, _SHORT, _RESULT = slice(0, 3), 3, 4, 5, 6, 7, 8


def _compact(rows: Iterator[tuple]) -> list[tuple]:
    """A chunk's rows as the batch writes and counts them, without their short results (which cost more to send
    back to the batch's process than everything else): per row :func:`_row_summary` with the short result only
    for the chunk's TERMINAL_ROWS worst rows, the only ones that can be among the inventory's worst (the keys are
    distinct: they end with the row)."""
    units: dict[tuple, tuple] = {}      # one tuple of units per chunk, pickled once
    out: list[tuple] = []
    # the TERMINAL_ROWS worst rows so far, by key, and their short results: a row not among them when it is
    # screened is not among the chunk's, and its short result is let go at once
    worst: list[tuple] = []
    short: dict[int, dict] = {}
    for i, (r, line, f) in enumerate(rows):
        lean = type(r) is tuple         # a row's fields (see _chunk_rows), `f` giving its short result
        x = _lean_summary(r, None, units) if lean else _row_summary(r, line, None, units)
        out.append(x)
        key = (*x[_KEY], i)
        if len(worst) < TERMINAL_ROWS or key < worst[-1]:
            bisect.insort(worst, key)
            short[i] = f() if lean else r
            if len(worst) > TERMINAL_ROWS:
                del short[worst.pop()[-1]]
    for i, r in short.items():
        out[i] = (*out[i][:_SHORT], r, *out[i][_SHORT + 1:])
    return out


def _expanded(got: list[tuple]) -> list[tuple]:
    """screen_chunk's rows without ``compact`` as _compact's rows, each with its short result."""
    return [_lean_summary(r, f()) if type(r) is tuple else _row_summary(r, line, r) for r, line, f in got]


def _row_summary(r: dict, line: bytes | int | None, short: dict | None, units: dict | None = None) -> tuple:
    """A screened row as the batch writes and counts it, as one flat tuple (see _KEY...): its severity key's three
    fields, verdict, duplicate id or not, the units of its result columns (None for an input error; the one equal
    tuple of `units` where given), JSON line or None, `short`, then its result columns in those units
    (result_values). One tuple of numbers and texts a row: no work for the garbage collector once it has seen it."""
    verdict = r["verdict"]
    if verdict == "input-error":
        u = None
        pu, tu = "bar(g)", "degC"
    else:
        u = pu, tu = file_units(r)
        if units is not None:
            u = units.setdefault(u, u)
    warnings = r.get("warnings")
    dup = bool(warnings) and any(w.get("code") == "duplicate-id" for w in warnings)
    return (*severity_key(r), verdict, dup, u, line, short, *result_values(r, pu, tu))


def _lean_summary(fields: tuple, short: dict | None, units: dict | None = None) -> tuple:
    """:func:`_row_summary` of a row given by its number and fields (:meth:`BatchRun.fields`: screened on the
    columns, not an input error, its id no duplicate) rather than its short result, without a JSON line."""
    row, verdict, margin, governing, peak, reasons, warnings, atm, t, p, display_units = fields
    u = pu, tu = units_of(display_units)
    if units is not None:
        u = units.setdefault(u, u)
    return (*severity_key_of(verdict, margin, row), verdict, False, u, None, short,
            *result_cells(verdict, " ".join(map(str, reasons)) if reasons else "",
                          " ".join(warnings[1::2]) if warnings else "", atm, peak, governing, margin, t, p, pu, tu))


def _with_curves(f: Result | dict | None, inv: Inventory, i: int, defaults: dict | None) -> Result | dict | None:
    """A detail row's full result with its isochore curves, computed here by the engine (in the worker, by the
    one function that computes a single screening's curves, :func:`screening.engine.with_plot_data`) so that
    the PDF only draws them; a row whose curves cannot be computed keeps its numbers, without a plot."""
    if not isinstance(f, Result) or f.curves is not None or f.verdict == Verdict.INPUT_ERROR:
        return f
    from screening.engine import with_plot_data

    n, cells = inv.rows[i]
    try:
        return replace(f, curves=with_plot_data(row_case(inv, n, cells, defaults), f).curves)
    except (ValueError, RuntimeError):      # InputError and NotApplicable are ValueErrors; CoolProp raises either
        return f


def _json(r: Result | dict) -> dict:
    """A full result, or an input-error record, as JSON-ready data."""
    return r.to_json() if isinstance(r, Result) else r


# ----------------------------------------------------------------------------- counts, order, table

def exit_code(results: list[dict]) -> int:
    return EXIT_WITHIN if results and all(r["verdict"] == "within" for r in results) else EXIT_NOT_WITHIN


class Tally:
    """What the batch keeps of the rows it has written: the counts and the worst rows."""

    def __init__(self, keep: int | None = None) -> None:
        self.counts = {v: 0 for v in ORDER}
        self.rows = 0
        self.duplicates = 0
        self.keep = TERMINAL_ROWS if keep is None else keep
        self._worst: list = []          # heap of (negated key, row result): the worst `keep` rows

    def add(self, r: dict) -> None:
        self.add_row(severity_key(r), r["verdict"], any(w.get("code") == "duplicate-id"
                                                        for w in r.get("warnings") or []), r)

    def add_row(self, key: tuple, verdict: str, duplicate: bool, r: dict | None) -> None:
        """A row by its severity key, verdict and duplicate-id warning; its short result `r` may be left out
        (None) only where it cannot be among the worst rows kept (see batch._compact)."""
        self.rows += 1
        self.counts[verdict] = self.counts.get(verdict, 0) + 1
        if duplicate:
            self.duplicates += 1
        if r is None:
            return
        item = (tuple(-x if isinstance(x, (int, float)) else x for x in key), r)
        if len(self._worst) < self.keep:
            heapq.heappush(self._worst, item)
        elif item[0] > self._worst[0][0]:
            heapq.heapreplace(self._worst, item)

    def worst(self) -> list[dict]:
        return ranked([r for _, r in self._worst])

    def summary(self) -> dict:
        return {"rows": self.rows, "counts": dict(self.counts), "duplicate_ids": self.duplicates}

    def exit_code(self) -> int:
        return EXIT_WITHIN if self.rows and self.counts["within"] == self.rows else EXIT_NOT_WITHIN


class _Ids:
    """Ids seen so far, for duplicate-id warnings on any number of rows in bounded memory: each id's
    64-bit hash and first row in a temporary SQLite table on disk (sqlite3 of the standard library; a
    page cache of a few MB). Two different ids share a hash with a chance of about n²/2⁶⁵."""

    def __init__(self) -> None:
        import sqlite3

        self._dir = tempfile.TemporaryDirectory(prefix="screening-ids-")
        self._db = sqlite3.connect(os.path.join(self._dir.name, "ids.sqlite"))
        self._db.execute("PRAGMA journal_mode=OFF")
        self._db.execute("PRAGMA synchronous=OFF")
        self._db.execute("CREATE TABLE ids (h INTEGER PRIMARY KEY, row INTEGER NOT NULL)")

    def first_rows(self, rows: list[tuple[int, str]]) -> dict[int, int]:
        """{row: first row with the same id} for the rows (row, id) of a chunk; then remembers them."""
        out: dict[int, int] = {}
        local: dict[int, int] = {}
        hashes = [(n, hash(cid)) for n, cid in rows if cid]
        known: dict[int, int] = {}
        uniq = list({h for _, h in hashes})
        for k in range(0, len(uniq), 500):
            part = uniq[k:k + 500]
            known.update(self._db.execute(f"SELECT h, row FROM ids WHERE h IN ({','.join('?' * len(part))})",
                                          part).fetchall())
        for n, h in hashes:
            first = known.get(h, local.get(h))
            if first is not None:
                out[n] = first
            else:
                local[h] = n
        if local:
            self._db.executemany("INSERT INTO ids (h, row) VALUES (?, ?)", local.items())
        return out

    def close(self) -> None:
        self._db.close()
        self._dir.cleanup()


# ----------------------------------------------------------------------------- display helpers

def _counts_line(s: dict) -> str:
    return "  ".join(f"{v}: {s['counts'][v]}" for v in ORDER) + f"  (rows: {s['rows']})"


def _clip(text: str, width: int) -> str:
    """`text` in at most `width` characters, a cut one ending in an ellipsis."""
    return text if len(text) <= width else text[:width - 1] + "\u2026"


def terminal_table(results: list[dict], s: dict | None = None) -> str:
    """The counts, then the rows worst first (`results`: all rows, or the worst kept of them), each row that is not
    within with the first of its reasons; then the caution."""
    s = s or summary(results)
    lines = [_counts_line(s)]
    head = f"{'row':>6}  {'id':<18} {'verdict':<12} {'gas':<14} {'peak':>16} {'rated':>16} {'margin':>9}"
    lines += ["", head, "-" * len(head)]
    shown = ranked(results)
    for r in shown:
        c = cells(r)
        lines.append(f"{r['row']:>6}  {_clip(visible(str(r.get('id') or '')), 18):<18} {r['verdict']:<12} "
                     f"{_clip(c['gas'], 14):<14} {c['peak']:>16} {c['rated']:>16} {c['margin']:>9}")
        if r["verdict"] != "within" and r.get("reasons"):
            lines.append(f"{'':>8}{visible(str(r['reasons'][0]))}")
        for w in r.get("warnings", []):
            if w.get("code") == "duplicate-id":
                lines.append(f"{'':>8}warning: {w['message']}")
    if s["rows"] > len(shown):
        lines.append(f"... the {len(shown)} worst rows of {s['rows']:,} shown; every row is in the output files")
    lines += ["", "CAUTION: " + SHORT_CAUTION]
    return "\n".join(lines)


# ----------------------------------------------------------------------------- whole-inventory helpers

def run_inventory(inv: Inventory, defaults: dict | None = None, quiet: bool = True) -> list[dict]:
    """Full results of every row of the inventory, in input order, each with its "row" and warnings
    (in memory: for tests and small inventories; the command streams)."""
    ids = _Ids()
    id_col = _id_column(inv)
    out = []
    try:
        for k in range(0, len(inv.rows), CHUNK_ROWS):
            part = Inventory(inv.source, inv.columns, inv.rows[k:k + CHUNK_ROWS], inv.delimiter, inv.decimal,
                             inv.sheet)
            dups = ids.first_rows([(n, c[id_col].strip() if id_col < len(c) else "") for n, c in part.rows])
            out += [f for _, _, f in screen_chunk((part, defaults, dups, {"full": "all"}))]
    finally:
        ids.close()
    return out


#: The cautions block of the batch's JSON document, after its summary (as a single result's JSON carries it).
_JSON_CAUTIONS = ',\n "cautions": ' + json.dumps({"caution": CAUTION, "short_caution": SHORT_CAUTION,
                                                  "assumptions": list(ASSUMPTIONS)}, ensure_ascii=False)


def write_json(results: list[dict], path, full=None) -> None:
    """A JSON document of finished results: {"results": [...], "summary": {...}, "cautions": {...}}."""
    with atomic_writer(path, "JSON output") as fh:
        fh.write('{"results": [\n')
        for i, r in enumerate(results):
            if full is not None:
                r = full(i)
            fh.write(("  " if i == 0 else ",\n  ") + json_line({k: v for k, v in _json(r).items() if k not in _DROP}))
        fh.write('\n],\n "summary": ' + json.dumps(summary(results)) + _JSON_CAUTIONS + "}\n")


# ----------------------------------------------------------------------------- the command

class _Outputs:
    """The output files of one run, each written atomically; rows go to all of them in one order."""

    def __init__(self, args, reg, stack) -> None:
        self.args = args
        self.reg = reg
        self.stack = stack
        self.csv = self.xlsx = None
        self.jsonl = self.json = None
        # the JSON outputs' lines gathered, written a megabyte at a time (a write per line costs more than its copy)
        self._jsonl_out, self._json_out = bytearray(), bytearray()
        self.headers = None
        self.n_json = 0
        self.width = len(reg.columns)

    def open(self, first: dict | None, units: tuple[str, str] | None = None) -> None:
        """Open every output, its units taken from the first screened row (or given: that row's units)."""
        pu, tu = units or file_units(first)
        self.pu, self.tu = pu, tu
        self.headers = ["row"] + [c.header for c in self.reg.columns] + result_headers(pu, tu)
        a = self.args
        if a.csv:
            fh = self.stack.enter_context(atomic_writer(a.csv, "CSV output"))
            self.csv = CsvTable(fh, self.headers, self.reg.delimiter, self.reg.decimal)
        if a.xlsx:
            self._xlsx_fh = self.stack.enter_context(atomic_writer(a.xlsx, "XLSX output", binary=True))
            self.xlsx = XlsxTable(self.headers, self.width, self.reg.decimal)
        # the JSON outputs take the lines as the workers made them, UTF-8 bytes
        if a.jsonl:
            self.jsonl = self.stack.enter_context(atomic_writer(a.jsonl, "JSON Lines output", binary=True))
        if a.json:
            self.json = self.stack.enter_context(atomic_writer(a.json, "JSON output", binary=True))
            self.json.write(b'{"results": [\n')

    def values(self, r: dict, cells: list[str]) -> list:
        row = (list(cells) + [""] * self.width)[:self.width]
        return [r["row"]] + [str(c) for c in row] + result_values(r, self.pu, self.tu)

    def row_values(self, n: int, cells: list[str], result_columns) -> list:
        """values() of row `n` whose result columns (a list or tuple) are already made (in this file's units)."""
        if len(cells) == self.width:        # the common row: no padding, no cut
            return [n, *map(str, cells), *result_columns]
        row = (list(cells) + [""] * self.width)[:self.width]
        return [n, *map(str, row), *result_columns]

    def write(self, values: list, line: bytes | memoryview | None) -> None:
        if self.csv:
            self.csv.write(values)
        if self.xlsx:
            self.xlsx.write(values)
        if self.jsonl:
            self._jsonl_out += line
            self._jsonl_out += b"\n"
            if len(self._jsonl_out) >= _WRITE_BYTES:
                self._flush()
        if self.json:
            self._json_out += b"  " if self.n_json == 0 else b",\n  "
            self._json_out += line
            self.n_json += 1
            if len(self._json_out) >= _WRITE_BYTES:
                self._flush()

    def _flush(self) -> None:
        for fh, pending in ((self.jsonl, self._jsonl_out), (self.json, self._json_out)):
            if fh and pending:
                fh.write(pending)
                pending.clear()

    def finish(self, tally: Tally) -> None:
        if self.csv:
            self.csv.close()
        if self.xlsx:
            self.xlsx.finish(self._xlsx_fh, tally.counts, tally.rows, tally.duplicates, self.reg.source)
        self._flush()
        if self.json:
            self.json.write(('\n],\n "summary": ' + json.dumps(tally.summary()) + _JSON_CAUTIONS + "}\n").encode())


class _Spill:
    """Records sorted by a key in bounded memory: sorted runs spilled to temporary files, then merged."""

    def __init__(self) -> None:
        self.buf: list = []
        self.files: list = []

    def add(self, key: tuple, record: tuple) -> None:
        self.buf.append((key, record))
        if len(self.buf) >= SORT_RUN_ROWS:
            self._spill()

    def _spill(self) -> None:
        self.buf.sort(key=lambda x: x[0])
        fh = tempfile.TemporaryFile()
        for item in self.buf:
            pickle.dump(item, fh, protocol=pickle.HIGHEST_PROTOCOL)
        fh.seek(0)
        self.files.append(fh)
        self.buf = []

    @staticmethod
    def _read(fh):
        while True:
            try:
                yield pickle.load(fh)
            except EOFError:
                return

    def merged(self):
        self.buf.sort(key=lambda x: x[0])
        streams = [self._read(f) for f in self.files] + [iter(self.buf)]
        try:
            for _, record in heapq.merge(*streams, key=lambda x: x[0]):
                yield record
        finally:
            for f in self.files:
                f.close()


def _progress(quiet: bool):
    if quiet or not sys.stderr.isatty():
        return None
    from tqdm import tqdm

    return tqdm(desc="screening", unit=" rows", file=sys.stderr, leave=False, unit_scale=True)


def _gas_order(inv: Inventory) -> list[int]:
    """The positions of a window's rows sorted by what they hold (the gas as written, then filled by mass or not),
    in input order within each: the engine's tables are per gas and kind of fill."""
    cols = {c.key: i for i, c in enumerate(inv.columns)}
    gas, mass = cols.get("fill.gas"), cols.get("fill.mass")

    rows = inv.rows
    gases = ([c[gas].strip().casefold() if gas < len(c) else "" for _n, c in rows] if gas is not None
             else [""] * len(rows))
    masses = ([mass < len(c) and c[mass].strip() != "" for _n, c in rows] if mass is not None
              else [False] * len(rows))
    keys = list(zip(gases, masses))
    return sorted(range(len(rows)), key=keys.__getitem__)


def _windows(reg, defaults, want, ids: _Ids):
    """The register's windows: per window, (the window as an Inventory in input order, the positions of its rows
    in the order they are screened, the jobs (home, weight, job for screen_chunk) that screen them in that order:
    see :func:`_chunk_cuts` and :func:`screening.parallel.routed`)."""
    id_col = _id_column(reg)
    for window in reg.chunks(CHUNK_ROWS * WINDOW_CHUNKS, tuples=True):
        rows = window.rows
        dups = ids.first_rows([(n, c[id_col].strip() if id_col < len(c) else "") for n, c in rows])
        jobs, order = [], []
        for home, weight, k in _chunk_cuts(window, _gas_order(window)):
            part = [rows[i] for i in k]
            order += k
            jobs.append((home, weight, (replace(window, rows=part), defaults,
                                        {n: dups[n] for n, _ in part if n in dups}, want)))
        yield window, order, jobs


def _chunk_cuts(window: Inventory, order: list[int]) -> list[tuple[object, int, list[int]]]:
    """A sorted window's rows cut into chunks, as (home, work, positions): first the rows of each mixture, one
    composition to a chunk (its home: the composition, so that the process that holds its reference state and
    caches gets all its chunks), then the rest in `order`; a chunk is at most about CHUNK_ROWS rows of pure gases,
    a mixture's row counting as MIXTURE_WORK of them (its phase checks go state by state through the mixture's
    reference equation). The cuts depend on the window alone."""
    from screening.inputs.gas_spec import parse_gas

    col = next((i for i, c in enumerate(window.columns) if c.key == "fill.gas"), None)
    kind: dict[str, object] = {}

    def home(cells: list) -> object:
        text = cells[col].strip() if col is not None and col < len(cells) else ""
        h = kind.get(text, False)
        if h is False:
            try:
                gas = parse_gas(text)
                h = (tuple(sorted(zip((c.name for c in gas.components), gas.fractions)))
                     if len(gas.components) > 1 else None)
            except (InputError, ValueError):
                h = None
            kind[text] = h
        return h

    mixtures: dict[object, list[int]] = {}
    pure: list[int] = []
    for i in order:
        h = home(window.rows[i][1])
        if h is None:
            pure.append(i)
        else:
            mixtures.setdefault(h, []).append(i)
    cuts = []
    for h, rows in mixtures.items():
        step = max(1, CHUNK_ROWS // MIXTURE_WORK)
        for k in range(0, len(rows), step):
            cuts.append((h, MIXTURE_WORK * len(rows[k:k + step]), rows[k:k + step]))
    for k in range(0, len(pure), CHUNK_ROWS):
        cuts.append((None, len(pure[k:k + CHUNK_ROWS]), pure[k:k + CHUNK_ROWS]))
    return cuts


def _in_input_order(parts: list[list], order: list[int]) -> list:
    """The answers of a window's chunks (screened in `order`) back in input order."""
    out: list = [None] * len(order)
    for pos, item in zip(order, (x for got in parts for x in got)):
        out[pos] = item
    return out


def _load_fluids(inv: Inventory, defaults: dict | None) -> None:
    """Add the reference fluids of the gases a chunk names (and air, for rows in the sun) to CoolProp's library
    before any worker forks, so that the workers share them (screening.physics.eos.coolprop_library: the
    command loads the library lean; a fluid first named in a later chunk is added by the process that meets
    it). A gas that cannot be read is left for its row to report."""
    from screening.inputs.gas_spec import parse_gas
    from screening.physics.eos.coolprop_library import is_lean, use

    if not is_lean():
        return
    col = next((i for i, c in enumerate(inv.columns) if c.key == "fill.gas"), None)
    texts = {cells[col].strip() for _n, cells in inv.rows if col is not None and col < len(cells)}
    given = ((defaults or {}).get("fill") or {}).get("gas") if isinstance((defaults or {}).get("fill"), dict) else None
    if isinstance(given, str):
        texts.add(given.strip())
    names = {"Air"}
    for text in texts:
        try:
            gas = parse_gas(text)
        except (InputError, ValueError):
            continue
        names.update(c.coolprop_name for c in gas.components if c.coolprop_name)
    use(sorted(names))


def run(args) -> int:
    from screening import parallel

    reg = open_inventory(args.inventory, sheet=args.sheet, decimal=getattr(args, "decimal", None))
    defaults = load_defaults(args.defaults, reg.columns) if args.defaults else None
    check_pressure_bases(reg.columns, defaults, reg.source)
    targets = [(p, what) for p, what in ((args.json, "JSON output"), (args.csv, "CSV output"),
                                         (getattr(args, "xlsx", None), "XLSX output"),
                                         (getattr(args, "jsonl", None), "JSON Lines output"),
                                         (args.pdf, "PDF report")) if p]
    for p, what in targets:      # refuse a bad target before the work, not after it
        check_target(p, what)
    want = {"json": bool(args.json or getattr(args, "jsonl", None)),
            "full": ("all" if args.all_details else "not-within") if args.pdf else None,
            "compact": not args.pdf}
    by_severity = getattr(args, "sort", "input") == "severity"
    import screening.engine  # noqa: F401  (the equations of state, loaded once before any worker forks)

    tally = Tally()
    pdf_rows: list[dict] = []
    pdf_full: dict[int, dict] = {}
    pdf_cells: list[tuple[int, list[str]]] = []     # the rows' own texts for the PDF listing
    bar = _progress(args.quiet)
    spill = _Spill() if by_severity else None
    ids = _Ids()
    windows = _windows(reg, defaults, want, ids)
    first = next(windows, None)
    if first is not None:
        _load_fluids(first[0], defaults)
    n_workers = parallel.workers()
    pools = None
    try:
        with contextlib.ExitStack() as stack:
            outputs = _Outputs(args, reg, stack)
            if first is not None and len(first[0].rows) >= CHUNK_ROWS and n_workers > 1:
                pools = [stack.enter_context(p) for p in parallel.homes(n_workers)]
                if want["json"] and want["compact"]:
                    # the workers' JSON lines come back through files (Spooled); every job holds this `want`, none
                    # has been sent yet
                    want["spool"] = stack.enter_context(tempfile.TemporaryDirectory(
                        prefix="screening-batch-", ignore_cleanup_errors=True))
            opened: deque = deque()         # (window, order, jobs) of the windows whose jobs went out

            def all_jobs():
                for window, order, jobs in itertools.chain([first] if first is not None else [], windows):
                    opened.append((window, order, jobs))
                    yield from jobs

            parts: list[list] = []
            line_parts: list[list] = []     # the JSON lines of the compact rows of `parts`, in the same order
            for got in parallel.routed(pools, screen_chunk, all_jobs(), ahead=CHUNKS_AHEAD):
                if want["compact"]:
                    got, lines = _unspooled(got)
                    line_parts.append(lines)
                parts.append(got)
                if bar is not None:
                    bar.update(len(got))
                window, order, jobs = opened[0]
                if len(parts) < len(jobs):
                    continue
                opened.popleft()
                if want["compact"]:
                    done, fulls = _in_input_order(parts, order), repeat(None)
                    lines = _in_input_order(line_parts, order)
                else:
                    raw = _in_input_order(parts, order)
                    done, fulls = _expanded(raw), [f for _, _, f in raw]
                    lines = [x[_LINE] for x in done]
                parts, line_parts = [], []
                if outputs.headers is None:
                    outputs.open(None, next((x[_UNITS] for x in done if x[_VERDICT] != "input-error"), None))
                units = (outputs.pu, outputs.tu)
                if any(x[_UNITS] is not None and x[_UNITS] != units and x[_SHORT] is None for x in done):
                    # a row entered in other units than the file's first row: the window's short results, here
                    done = _expanded(_in_input_order([screen_chunk((*job[:3], dict(job[3], compact=False)))
                                                      for _h, _w, job in jobs], order))
                    lines = [x[_LINE] for x in done]
                for x, line, f, (_, cells_) in zip(done, lines, fulls, window.rows):
                    u, s = x[_UNITS], x[_SHORT]
                    res = x[_RESULT:] if u is None or u == units else result_values(s, *units)
                    key = x[_KEY]
                    tally.add_row(key, x[_VERDICT], x[_DUP], s)
                    values = outputs.row_values(key[2], cells_, res)
                    if spill is not None:
                        # a line read from a spool file is a slice of its buffer: kept as bytes of its own
                        spill.add(key, (values, line if line is None or type(line) is bytes else bytes(line)))
                    else:
                        outputs.write(values, line)
                    if args.pdf:
                        if f is not None:
                            pdf_full[len(pdf_rows)] = f
                        pdf_rows.append(s)
                        pdf_cells.append((s["row"], cells_))
            if tally.rows == 0:
                raise InputError("the inventory has a header but no rows", file=reg.source,
                                 row=(reg.header_row or 1) + 1, expected="one row per vessel under the header")
            if spill is not None:
                for values, line in spill.merged():
                    outputs.write(values, line)
            outputs.finish(tally)
            if args.pdf:
                from screening.outputs.batch_report import render_batch_report, row_texts

                texts = row_texts(Inventory(reg.source, reg.columns, pdf_cells), defaults)
                render_batch_report(pdf_rows, args.pdf, source=os.path.basename(reg.source), all_details=args.all_details,
                                    report_date=args.date, quiet=args.quiet,
                                    full=lambda i: pdf_full.get(i, pdf_rows[i]),
                                    site=getattr(args, "site", None), texts=texts,
                                    inputs=vars(args))
    except parallel.WorkerLost as exc:
        if bar is not None:
            bar.close()
        print(f"screening: batch stopped: {exc}", file=sys.stderr)
        return EXIT_INPUT
    finally:
        ids.close()
    if bar is not None:
        bar.close()
    s = tally.summary()
    if args.quiet:
        print(_counts_line(s) + "\nCAUTION: " + SHORT_CAUTION)
    else:
        print(terminal_table(tally.worst(), s))
    return tally.exit_code()


# ----------------------------------------------------------------------------- kept for callers

def write_csv(inv: Inventory, results: list[dict], path) -> None:
    """The CSV output of finished results of `inv` (in memory; the command streams)."""
    width = len(inv.columns)
    first = next((r for r in results if r["verdict"] != "input-error"), None)
    pu, tu = file_units(first)
    cells_by_row = {n: c for n, c in inv.rows}
    with atomic_writer(path, "CSV output") as fh:
        t = CsvTable(fh, ["row"] + [c.header for c in inv.columns] + result_headers(pu, tu), inv.delimiter,
                     inv.decimal)
        for r in results:
            row = (list(cells_by_row.get(r["row"], [])) + [""] * width)[:width]
            t.write([r["row"]] + [str(c) for c in row] + result_values(r, pu, tu))
        t.close()


def write_xlsx(inv: Inventory, results: list[dict], path) -> None:
    """The XLSX output of finished results of `inv` (in memory, for the web page; the command streams)."""
    width = len(inv.columns)
    first = next((r for r in results if r["verdict"] != "input-error"), None)
    pu, tu = file_units(first)
    cells_by_row = {n: c for n, c in inv.rows}
    s = summary(results)
    with atomic_writer(path, "XLSX output", binary=True) as fh:
        t = XlsxTable(["row"] + [c.header for c in inv.columns] + result_headers(pu, tu), width, inv.decimal)
        for r in results:
            row = (list(cells_by_row.get(r["row"], [])) + [""] * width)[:width]
            t.write([r["row"]] + [str(c) for c in row] + result_values(r, pu, tu))
        t.finish(fh, s["counts"], s["rows"], s["duplicate_ids"], inv.source)


__all__ = ["BatchRun", "ORDER", "Tally", "cells", "exit_code", "ranked", "read_inventory", "run",
           "run_inventory", "screen_chunk", "summary", "terminal_table", "write_csv", "write_json", "write_xlsx",
           "os"]
