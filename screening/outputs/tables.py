"""The batch's tables: CSV, XLSX and JSON Lines, written row by row as the batch streams.

Each output row is the input row as read (every column, the user's own included, in the original
order), then the results as numbers with the unit in the header (``peak_pressure [bar(g)]``,
``margin [%]``). The units of a file are those of the first screened row; every row's values are
converted to them (a gauge pressure with that row's atmospheric pressure). The CSV starts with a
UTF-8 byte-order mark and uses the input's separator and decimal mark, so that a spreadsheet opens it
as numbers. The XLSX has numeric cells, a frozen header row, a filter, the verdict column shaded by
severity (and written out), and a second sheet with the counts and the cautions.

A view only: it formats finished results, never computes physics.
"""

from __future__ import annotations

import csv
import io
import json
import math
import re

import orjson

from screening.cautions import ASSUMPTIONS, CAUTION
from screening.constants import P_STANDARD_ATMOSPHERE
from screening.units import format_pressure, format_temperature, pressure_in, temperature_in
from screening.verdicts import LISTING_ORDER

#: The verdicts from the most severe to the least (the order of `--sort severity` and of the counts).
SEVERITY = tuple(str(v) for v in LISTING_ORDER)
#: XLSX fill of the verdict cell, by verdict (light tints, so that the words stay readable).
SHADES = {"input-error": "D9D9D9", "over": "F4B6B6", "out-of-scope": "F8D7A8", "low-margin": "FFF2A8",
          "within": "CFE8C9"}
#: Excel's rows per sheet, less the header.
XLSX_MAX_ROWS = 1_048_575


def file_units(result: dict | None) -> tuple[str, str]:
    """(pressure label, temperature label) of an output file: those of its first screened row."""
    return units_of((result or {}).get("display_units"))


def units_of(display_units: dict | None) -> tuple[str, str]:
    """(pressure label, temperature label) of a row's display units (see :func:`file_units`)."""
    du = display_units or {}
    return du.get("pressure") or "bar(g)", du.get("temperature") or "degC"


def result_headers(pu: str, tu: str) -> list[str]:
    p = format_pressure(P_STANDARD_ATMOSPHERE, pu, P_STANDARD_ATMOSPHERE).split(" ", 1)[1]   # the unit's label
    t = format_temperature(300.0, tu).split(" ", 1)[1]
    return [f"peak_pressure [{p}]", "governing_model", "margin [%]", "verdict", "reasons",
            f"max_gas_temperature [{t}]", f"max_fill_pressure [{p}]", "warnings"]


def _num(x: float | None) -> float | None:
    if type(x) is float:        # the common case, as below: a finite float to six significant digits
        return float(f"{x:.6g}") if x - x == 0.0 else None
    if x is None or not isinstance(x, (int, float)) or not math.isfinite(x):
        return None
    return float(f"{x:.6g}")


def result_values(r: dict, pu: str, tu: str) -> list:
    """The result columns of one row: numbers (None where there is none) and texts."""
    warnings = r.get("warnings")
    warnings = " ".join([w["message"] for w in warnings]) if warnings else ""
    reasons = r.get("reasons")
    reasons = " ".join(map(str, reasons)) if reasons else ""
    verdict = r["verdict"]
    if verdict == "input-error":
        return result_cells(verdict, reasons, warnings, None, None, None, None, None, None, pu, tu)
    lim = r["limits"]
    return result_cells(verdict, reasons, warnings, r["site"]["atmospheric_pressure_pa"], r["peak_pressure_pa"],
                        r["governing_model"], r["margin_fraction"], lim["max_gas_temperature_k"],
                        lim["max_fill_pressure_pa"], pu, tu)


def result_cells(verdict: str, reasons: str, warnings: str, atm: float | None, peak: float | None,
                 governing: str | None, m: float | None, t: float | None, p: float | None, pu: str, tu: str) -> list:
    """:func:`result_values` of a row given by its fields: verdict, reasons and warnings (each joined into one
    text), atmospheric pressure [Pa], peak pressure [Pa], governing model, margin [-], highest gas temperature [K]
    and highest fill pressure [Pa] (None where there is none)."""
    if verdict == "input-error":
        return [None, "", None, "input-error", reasons, None, None, warnings]
    return [None if peak is None else _num(pressure_in(peak, pu, atm)), governing or "",
            None if m is None else _num(100.0 * m), verdict, reasons,
            None if t is None else _num(temperature_in(t, tu)), None if p is None else _num(pressure_in(p, pu, atm)),
            warnings]


class CsvTable:
    """The CSV output, opened on a file object of the atomic writer."""

    def __init__(self, fh, headers: list[str], delimiter: str = ",", decimal: str = ".") -> None:
        self.fh = fh
        self.decimal = decimal
        self.buf = io.StringIO(newline="")
        self.w = csv.writer(self.buf, delimiter=delimiter)
        self.delimiter = delimiter
        # a row whose texts hold none of these is written as the csv module writes it, joined by the delimiter, a
        # text that holds the delimiter in quotes (QUOTE_MINIMAL quotes a text only for one of them or the
        # delimiter); other rows by the csv module
        self._joined = delimiter not in ' "\r\n\0' and len(delimiter) == 1
        fh.write("\ufeff")
        self.w.writerow(headers)

    def _text(self, v) -> str:
        if v is None:
            return ""
        if isinstance(v, float):
            text = repr(v) if not v.is_integer() else str(int(v)) if abs(v) < 1e16 else repr(v)
            return text.replace(".", ",") if self.decimal == "," else text
        return str(v)

    def write(self, values: list) -> None:
        text = self._text
        texts = [v if type(v) is str else text(v) for v in values]   # the input's cells are texts
        d = self.delimiter
        line = d.join(texts)
        if (self._joined and len(texts) > 1 and '"' not in line and "\n" not in line and "\r" not in line
                and "\0" not in line):
            if line.count(d) != len(texts) - 1:     # a text holding the separator: quoted, as QUOTE_MINIMAL quotes it
                line = d.join([f'"{t}"' if d in t else t for t in texts])
            self.buf.write(line + "\r\n")
        else:
            self.w.writerow(texts)
        if self.buf.tell() > 1 << 16:
            self.flush()

    def flush(self) -> None:
        self.fh.write(self.buf.getvalue())
        self.buf.seek(0)
        self.buf.truncate()

    def close(self) -> None:
        self.flush()


class XlsxTable:
    """The XLSX output (openpyxl, write-only: rows go to disk as they come)."""

    def __init__(self, headers: list[str], n_input: int, decimal: str = ".") -> None:
        from openpyxl import Workbook
        from openpyxl.cell import WriteOnlyCell
        from openpyxl.styles import Font, PatternFill

        self._Cell = WriteOnlyCell
        self.wb = Workbook(write_only=True)
        self.ws = self.wb.create_sheet("results")
        self.ws.freeze_panes = "A2"
        self.width = len(headers)
        self.n_input = n_input
        self._number = re.compile(r"^-?(?:0|[1-9]\d{0,14})(?:[%s]\d{1,15})?$" % re.escape(decimal))
        self.verdict_col = headers.index("verdict")
        self.fills = {v: PatternFill("solid", start_color=c, end_color=c) for v, c in SHADES.items()}
        bold = Font(bold=True)
        head = []
        for h in headers:
            c = WriteOnlyCell(self.ws, value=h)
            c.font = bold
            head.append(c)
        self.ws.append(head)
        self.rows = 0

    def write(self, values: list) -> None:
        self.rows += 1
        if self.rows > XLSX_MAX_ROWS:
            from screening.errors import InputError

            raise InputError("the XLSX output holds at most 1 048 575 rows", given="more rows",
                             expected="--csv or --jsonl for a register of this size")
        out = list(values)
        for j in range(1, self.n_input + 1):      # the input's plain numbers as numbers
            c = out[j]
            if isinstance(c, str) and c and self._number.match(c):
                out[j] = float(c.replace(",", "."))
        v = out[self.verdict_col]
        cell = self._Cell(self.ws, value=v)
        if v in self.fills:
            cell.fill = self.fills[v]
        out[self.verdict_col] = cell
        self.ws.append(out)

    def finish(self, fh, counts: dict, rows: int, duplicates: int, source: str) -> None:
        from openpyxl.utils import get_column_letter

        self.ws.auto_filter.ref = f"A1:{get_column_letter(self.width)}{self.rows + 1}"
        s = self.wb.create_sheet("summary")
        s.append(["inventory", source])
        s.append(["rows", rows])
        for v in SEVERITY:
            s.append([v, counts.get(v, 0)])
        s.append(["duplicate ids", duplicates])
        s.append([])
        s.append(["caution", CAUTION])
        for a in ASSUMPTIONS:
            s.append(["assumption", a])
        self.wb.save(fh)


def json_line(result: dict) -> str:
    """One JSON Lines record: the full result, on one line without spaces (non-finite numbers as null)."""
    return json_bytes(result).decode()


def json_bytes(result: dict) -> bytes:
    """:func:`json_line` as UTF-8 bytes (the batch's workers send these, and its outputs write them as they are).

    orjson writes it (a tenth of the time of the standard library's json, which matters at thousands of
    rows of several kilobytes); it writes a non-finite number as null as well. A value orjson does not
    take (a numpy number, a key that is not a text, an integer past 64 bits) goes to the standard
    library's writer, which gives the same content. A part already written as JSON (an orjson.Fragment, which
    the batch's lines hold for the parts many rows share) is written as it is (by the standard library's writer:
    its content)."""
    try:
        return orjson.dumps(result)
    except TypeError:
        pass
    try:
        text = json.dumps(result, ensure_ascii=False, allow_nan=False, separators=(",", ":"), default=_fragment)
    except ValueError:          # a non-finite number somewhere: written as null
        text = json.dumps(_json_safe(result), ensure_ascii=False, allow_nan=False, separators=(",", ":"),
                          default=_fragment)
    return text.encode()


def _fragment(x):
    """The content of an orjson.Fragment for the standard library's writer (anything else it cannot write: its
    TypeError)."""
    if isinstance(x, orjson.Fragment):      # its content is what orjson writes of it
        return json.loads(orjson.dumps(x))
    raise TypeError(f"Object of type {type(x).__name__} is not JSON serializable")


def _json_safe(x):
    if isinstance(x, float) and not math.isfinite(x):
        return None
    if isinstance(x, dict):
        return {k: _json_safe(v) for k, v in x.items()}
    if isinstance(x, (list, tuple)):
        return [_json_safe(v) for v in x]
    return x
