"""Read an inventory table (CSV or XLSX) as it is kept on site, one case per row.

The header is read by meaning (:mod:`screening.inputs.headers`): accepted spellings per key, case and
punctuation ignored, the column's unit in brackets or parentheses, used where a cell is a bare number.
Columns the tool does not use are kept and carried through to every output. ``--defaults CASE.toml``
fills missing columns and empty cells (the column's unit applies to a bare number there too).

Only a file that cannot be read at all is an error of the file (InputError, exit 2): missing,
unreadable, no header row, a header with problems (all reported at once), beyond the stated bounds. A
row that cannot be read is not an exception here: :func:`row_case` raises an InputError located at the
row and the column, and the batch records it and goes on.

Reading is bounded and streamed: a CSV is read row by row (:meth:`Register.chunks`), cells up to
:data:`MAX_FIELD_CHARS` (a longer one stops the file, as its memory would), and a cell over
:data:`MAX_CELL_CHARS` makes its row an ``input-error`` row; an .xlsx is checked part by part before it
is opened (:mod:`screening.inputs.xlsx`).
"""

from __future__ import annotations

import codecs
import csv
import datetime as _dt
import math
import re
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Iterator

from screening.errors import InputError
from screening.inputs.case import Case, parse_case_data
from screening.inputs.headers import (
    KEY_TO_NAME,
    KINDS,
    NAME_TO_KEY,
    TEXT_KEYS,
    Column,
    is_header,
    match_header,
    split_header,
)

__all__ = ["Column", "Inventory", "Register", "check_pressure_bases", "open_inventory", "read_inventory",
           "load_defaults", "row_case"]

#: Column name -> case key (every accepted spelling), kept for callers that look a name up.
COLUMNS: dict[str, str] = dict(NAME_TO_KEY)
#: Case key -> column name (for messages).
KEY_TO_COLUMN = dict(KEY_TO_NAME)
#: A cell longer than this [characters] makes its row an input-error row (Excel's own cell limit).
MAX_CELL_CHARS = 32_767
#: A CSV field longer than this [characters] stops the reading of the file (bounded memory).
MAX_FIELD_CHARS = 16 * 1024 * 1024
#: Rows and columns of a register.
MAX_ROWS = 20_000_000
MAX_COLUMNS = 1000

_BARE_NUMBER = re.compile(r"^\s*[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d{1,4})?\s*$")
_SURROGATE = re.compile("[\udc80-\udcff]")
_DECIMAL_COMMA = re.compile(r"^(\s*[+-]?\d*),(\d+(?:[eE][+-]?\d{1,4})?)(?=$|[^\d.,])")


class Unreadable(str):
    """A cell the tool cannot take as a value (a date cell, text that is not UTF-8, a cell too long): its
    text as shown, and what was expected. Carried through as text; a row that uses it for a key is an
    input-error row."""

    def __new__(cls, text: str, expected: str = "", in_any_column: bool = False):
        self = super().__new__(cls, text)
        self.expected = expected
        self.in_any_column = in_any_column   # refused in a column of the user's own too (a cell too long)
        return self

    def __reduce__(self):
        return (Unreadable, (str(self), self.expected, self.in_any_column))


@dataclass
class Inventory:
    """The header and some rows of an inventory: (spreadsheet row number, cells), header = row 1."""

    source: str
    columns: list[Column]
    rows: list[tuple[int, list[str]]]
    delimiter: str = ","
    decimal: str = "."
    sheet: str | None = None
    header_row: int = 1
    problems: list[str] = field(default_factory=list)


def _fail(message: str, source: str, **kw) -> InputError:
    return InputError(message, file=source, **kw)


def _cell_text(v) -> str:
    """A spreadsheet cell as text: numbers as the shortest text that reads back the same float."""
    if v is None:
        return ""
    if isinstance(v, bool):
        return str(v)
    if isinstance(v, float):
        if not math.isfinite(v):
            return Unreadable(repr(v), "a finite number")
        return str(int(v)) if v.is_integer() and abs(v) < 1e16 else repr(v)
    if isinstance(v, int):
        return str(v)
    if isinstance(v, (_dt.date, _dt.time, _dt.timedelta)):
        return Unreadable(v.isoformat() if hasattr(v, "isoformat") else str(v),
                          "a number or text; this cell is formatted as a date or time in the workbook")
    return str(v)


def _checked(cells: list, width: int, kind: type = list) -> list[str] | tuple[str, ...]:
    """A row's cells as texts (each as read, or Unreadable), in a `kind` (list or tuple)."""
    if len(cells) <= MAX_COLUMNS:
        try:        # the common row: short ASCII texts, kept as they are (checked at C speed)
            if max(map(len, cells), default=0) <= MAX_CELL_CHARS and "".join(cells).isascii():
                return kind(cells)
        except TypeError:           # a cell that is not text (a spreadsheet's number): one by one
            pass
    out = []
    for c in cells[:MAX_COLUMNS]:
        if not isinstance(c, str):
            c = _cell_text(c)
        if len(c) > MAX_CELL_CHARS:
            c = Unreadable(c[:40] + "…", f"a cell of at most {MAX_CELL_CHARS} characters "
                           f"(this one has {len(c):,})", True)
        elif not c.isascii() and _SURROGATE.search(c):
            c = Unreadable(c.encode("utf-8", "surrogateescape").decode("utf-8", "replace"), "UTF-8 text")
        out.append(c)
    return kind(out)


class Register:
    """An inventory file opened for reading row by row: its columns, then its rows in chunks."""

    def __init__(self, path: str | Path, sheet: str | None = None, decimal: str | None = None) -> None:
        self.path = Path(path)
        self.source = str(path)
        p = self.path
        if p.is_dir():
            raise _fail("expected an inventory file, got a directory", self.source)
        try:
            with open(p, "rb") as fh:
                head = fh.read(65536)
        except FileNotFoundError:
            raise _fail("inventory file not found", self.source) from None
        except OSError as exc:
            raise _fail(f"cannot read the inventory file: {exc.strerror}", self.source) from None
        if not head.strip(b" \t\r\n\xef\xbb\xbf"):
            raise _fail("the inventory file is empty", self.source, expected="a header row and one row per vessel")
        self.sheet = None
        self._xlsx_rows = None
        if head[:4] == b"PK\x03\x04" or p.suffix.lower() in (".xlsx", ".xlsm"):
            self.kind = "xlsx"
            self.delimiter = ","
            self.decimal = decimal or "."
            self._read_commas = self.decimal == ","
            header_n, header = self._open_xlsx(sheet)
        else:
            if sheet is not None:
                raise _fail("--sheet applies to .xlsx workbooks only", self.source, given=sheet)
            if b"\x00" in head:
                raise _fail("the inventory is not a CSV text file", self.source,
                            expected="a UTF-8 CSV file or an .xlsx workbook")
            try:
                codecs.getincrementaldecoder("utf-8")().decode(head[:-4] if len(head) == 65536 else head)
            except UnicodeDecodeError:
                raise _fail("the inventory is not UTF-8 text", self.source,
                            expected="a UTF-8 CSV file or an .xlsx workbook") from None
            self.kind = "csv"
            first = head.decode("utf-8-sig", "replace").split("\n", 1)[0]
            counts = {d: first.count(d) for d in (",", ";", "\t")}
            self.delimiter = max(counts, key=lambda d: (counts[d], d == ","))
            self.decimal = decimal or self._sniff_decimal(head.decode("utf-8-sig", "replace"))
            self._read_commas = decimal == "," or (decimal is None and self.delimiter == ";")
            self._csv = self._csv_rows()
            header_n, header = None, None
            for n, row in self._csv:
                if any((c or "").strip() for c in row):
                    header_n, header = n, row
                    break
            if header is None:
                raise _fail("the inventory has no header row", self.source,
                            expected="a header row and one row per vessel")
        while header and not str(header[-1] if header[-1] is not None else "").strip():
            header = header[:-1]
        if len(header) > MAX_COLUMNS:
            raise _fail(f"the header has {len(header):,} columns", self.source, row=header_n,
                        expected=f"at most {MAX_COLUMNS} columns")
        self.header_row = header_n
        self.columns, problems = match_header([_cell_text(h) for h in header], self._read_commas)
        if problems:
            where = f" (sheet '{self.sheet}')" if self.sheet else ""
            raise _fail(f"the header row{where} has {len(problems)} problem{'s' if len(problems) > 1 else ''}: "
                        + "; ".join(problems), self.source, row=header_n,
                        expected="column names as listed in the README (accepted spellings), units in "
                        "brackets: 'Water capacity (L)'")

    def _sniff_decimal(self, head: str) -> str:
        """The decimal mark of a CSV whose `--decimal` is not given: "." unless the separator is ";" and
        the first rows write numbers with a decimal comma (or no decimal numbers at all)."""
        if self.delimiter != ";":
            return "."
        commas = len(re.findall(r"(?:^|;)\s*[+-]?\d+,\d", head, re.M))
        points = len(re.findall(r"(?:^|;)\s*[+-]?\d+\.\d", head, re.M))
        return "." if points > commas else ","

    # -- reading
    def _csv_rows(self) -> Iterator[tuple[int, list[str]]]:
        csv.field_size_limit(MAX_FIELD_CHARS)
        try:
            fh = open(self.path, encoding="utf-8-sig", errors="surrogateescape", newline="")
        except OSError as exc:
            raise _fail(f"cannot read the inventory file: {exc.strerror}", self.source) from None
        with fh:
            reader = csv.reader(fh, delimiter=self.delimiter, strict=True)
            n = 0
            while True:
                try:
                    row = next(reader)
                except StopIteration:
                    return
                except csv.Error as exc:
                    text = str(exc)
                    if "field larger" in text:
                        expected = f"cells of at most {MAX_FIELD_CHARS // 2**20} MiB"
                    elif "end of data" in text or "expected after" in text:
                        text += " (a quoted cell that is never closed?)"
                        expected = "every opening quote closed in the same cell"
                    else:
                        expected = "a CSV file"
                    raise _fail(f"not a readable CSV file: {text}", self.source, row=n + 1,
                                expected=expected) from None
                n += 1
                if n > MAX_ROWS + 1:
                    raise _fail(f"more than {MAX_ROWS:,} rows", self.source,
                                expected=f"at most {MAX_ROWS:,} rows; split the register")
                yield n, row

    def _open_xlsx(self, sheet: str | None):
        from screening.inputs.xlsx import Workbook

        wb = Workbook(self.path, self.source)
        try:
            if sheet is not None:
                if sheet not in wb.names:
                    raise _fail("no such sheet", self.source, given=sheet, expected="one of: " + ", ".join(wb.names))
                order = [sheet]
            else:
                order = list(wb.names)
            for name in order:
                rows = wb.rows(name)
                for i, row in enumerate(rows):
                    if any(c is not None and str(c).strip() for c in row):
                        if sheet is not None or is_header(row):
                            self.sheet = name
                            self._xlsx_rows = (rows, i + 1)
                            self._wb = wb
                            return i + 1, row
                        break
            if sheet is not None:
                raise _fail(f"the sheet '{sheet}' is empty", self.source, expected="a header row and one row per vessel")
            raise _fail("no sheet has a header row", self.source, given=", ".join(wb.names),
                        expected="a sheet whose first row names the columns, with an 'id' column; "
                        "choose it with --sheet NAME")
        except BaseException:
            wb.close()
            raise

    def rows(self, tuples: bool = False) -> Iterator[tuple[int, list[str]]]:
        """The rows after the header that hold anything, with their spreadsheet row numbers (the cells in a list, or
        with `tuples` in a tuple: a tuple of texts is no work for the garbage collector once it has seen it)."""
        kind = tuple if tuples else list
        width = len(self.columns)
        if self.kind == "xlsx":
            rows, n = self._xlsx_rows
            self._xlsx_rows = None
            try:
                for row in rows:
                    n += 1
                    if any(c is not None and str(c).strip() for c in row):
                        yield n, _checked(row, width, kind)
            finally:
                self._wb.close()
            return
        for n, row in self._csv:
            if "".join(row).strip():        # a cell that holds anything (at C speed: no generator per row)
                yield n, _checked(row, width, kind)

    def chunks(self, size: int, tuples: bool = False) -> Iterator[Inventory]:
        """The rows in Inventories of at most `size` rows each (the cells in tuples with `tuples`: see rows)."""
        batch: list = []
        for item in self.rows(tuples):
            batch.append(item)
            if len(batch) >= size:
                yield self.part(batch)
                batch = []
        if batch:
            yield self.part(batch)

    def part(self, rows: list) -> Inventory:
        return Inventory(self.source, self.columns, rows, self.delimiter, self.decimal, self.sheet, self.header_row)


def open_inventory(path: str | Path, sheet: str | None = None, decimal: str | None = None) -> Register:
    """The inventory file opened: header read and checked (file-level problems raise InputError)."""
    return Register(path, sheet, decimal)


def read_inventory(path: str | Path, sheet: str | None = None, decimal: str | None = None) -> Inventory:
    """The header and every row of an inventory file. File-level problems raise InputError (exit 2)."""
    reg = open_inventory(path, sheet, decimal)
    return reg.part(list(reg.rows()))


def check_pressure_bases(columns: list[Column], defaults: dict | None, source: str) -> None:
    """Refuse, in one message naming the columns, an inventory whose pressure column gives a unit without its basis
    in its header ('rated_pressure [bar]') where nothing else gives one (no pressure_basis column, none in the
    defaults): every bare number of that column would be refused, row after row, for the header's sake."""
    from screening.units import parse

    if any(c.key == "pressure_basis" for c in columns) or (defaults or {}).get("pressure_basis"):
        return
    bad = []
    for pos, c in enumerate(columns):
        # the site's atmospheric pressure is absolute whatever its unit says
        if c.key is None or c.unit is None or KINDS.get(c.key) != "pressure" or c.key == "site.atmospheric_pressure":
            continue
        try:
            parse(f"1 {c.unit}", "pressure")
        except InputError:
            bad.append((pos, c))
    if bad:
        first = bad[0][1]
        name = split_header(first.header)[0]
        raise _fail("a pressure unit in a header must say whether it is gauge or absolute: "
                    + ", ".join(f"column {pos + 1} ('{c.header}')" for pos, c in bad), source,
                    given=f"[{first.unit}]",
                    expected=f"'{name} [{first.unit}(g)]' (gauge) or '{name} [{first.unit}(a)]' (absolute) in the "
                             "header, or pressure_basis in a defaults file or a column of its own")


# ----------------------------------------------------------------------------- defaults

class Defaults(dict):
    """The values of a defaults file (case-shaped, no id), with the file's path."""

    def __init__(self, data: dict, source: str) -> None:
        super().__init__(data)
        self.source = source

    def __reduce__(self):
        return (Defaults, (dict(self), self.source))


def _flat(data: dict) -> dict[str, object]:
    out = {}
    for k, v in data.items():
        if isinstance(v, dict) and k not in ("scenario", "tolerance"):
            for k2, v2 in v.items():
                out[f"{k}.{k2}"] = v2
        else:
            out[k] = v
    return out


def load_defaults(path: str | Path, columns: list[Column] | None = None) -> Defaults:
    """Values for missing columns and empty cells, from a case-shaped TOML file (no id). Every value is
    checked here, once: a problem is an error of the defaults file (all of them in one message)."""
    p = Path(path)
    source = str(path)
    try:
        text = p.read_bytes().decode("utf-8-sig")
    except FileNotFoundError:
        raise InputError("defaults file not found", file=source) from None
    except IsADirectoryError:
        raise InputError("expected a defaults file, got a directory", file=source) from None
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"cannot read the defaults file ({exc.__class__.__name__})", file=source) from None
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"not valid TOML: {exc}", file=source) from None
    if "id" in data:
        raise InputError("a defaults file does not set an id", file=source, key="id", given=data["id"],
                         expected="the id in the inventory's 'id' column")
    defaults = Defaults(data, source)
    check_defaults(defaults, columns)
    return defaults


def check_defaults(defaults: Defaults, columns: list[Column] | None) -> None:
    """Each value of the defaults read as the case reader reads it (with the column's unit where the
    value is a bare number): every problem named in one InputError of the defaults file."""
    from screening.inputs.gas_spec import parse_gas
    from screening.units import parse

    units = {c.key: c for c in columns or [] if c.key}
    problems = []
    for key, value in _flat(defaults).items():
        if key in ("scenario", "tolerance", "pressure_basis") or key in TEXT_KEYS - {"fill.gas"}:
            continue
        if key not in KINDS and key != "fill.gas":
            problems.append(f"key '{key}': not a key of a case")
            continue
        text = default_text(units.get(key), value)
        if KINDS.get(key, "fraction") != "fraction" and _BARE_NUMBER.match(str(text)):
            problems.append(f"key '{key}': a number without its unit (given: {value!r}; expected: a text with "
                            f"the unit, e.g. \"{str(text).strip()} {_EXAMPLE_UNIT[KINDS[key]]}\", or the unit in "
                            "the inventory's header)")
            continue
        try:
            if key == "fill.gas":
                parse_gas(text)
            else:
                parse(text, KINDS[key], pressure_basis=defaults.get("pressure_basis") or "gauge")
        except InputError as exc:
            problems.append(f"key '{key}': {exc.message} (given: {value!r}; expected: {exc.expected})")
        except (TypeError, ValueError) as exc:
            problems.append(f"key '{key}': {exc} (given: {value!r})")
    if problems:
        raise InputError(f"{len(problems)} value{'s' if len(problems) > 1 else ''} of the defaults cannot be read: "
                         + "; ".join(problems), file=defaults.source)


def default_text(col: Column | None, value) -> object:
    """A default value as the case reads it: a bare number takes the column's unit."""
    if isinstance(value, bool) or not isinstance(value, (int, float, str)):
        return value
    text = value if isinstance(value, str) else repr(value)
    if col is not None and col.unit and col.key not in TEXT_KEYS and _BARE_NUMBER.match(text):
        return f"{text.strip()} {col.unit}"
    return value if isinstance(value, str) else text


# ----------------------------------------------------------------------------- rows

def cell_value(col: Column, cell: str | None) -> str:
    """A cell's text as the case reads it: stripped, a decimal comma read as a point, with the header's
    unit after a bare number."""
    value = (cell or "").strip()
    if not value or col.key is None or col.key in TEXT_KEYS:
        return value
    if col.decimal_comma and "," in value:
        value = _DECIMAL_COMMA.sub(r"\1.\2", value, count=1)
    if col.unit and _BARE_NUMBER.match(value):
        value = f"{value} {col.unit}"
    return value


def row_data(inv: Inventory, cells: list[str], defaults: dict | None) -> tuple[dict, str]:
    """The nested case data of one row (defaults first, then the row's non-empty cells) and its text."""
    data: dict = {}
    by_key = {c.key: c for c in inv.columns if c.key}
    for k, v in (defaults or {}).items():
        if isinstance(v, dict) and k not in ("scenario", "tolerance"):
            data[k] = {k2: default_text(by_key.get(f"{k}.{k2}"), v2) for k2, v2 in v.items()}
        elif isinstance(v, dict):
            data[k] = dict(v)
        else:
            data[k] = default_text(by_key.get(k), v)
    lines = []
    for col, cell in zip(inv.columns, [*cells, *[""] * (len(inv.columns) - len(cells))]):
        if isinstance(cell, Unreadable) and (col.key is not None or cell.in_any_column):
            raise InputError("the cell cannot be read", column=col.header, given=str(cell), expected=cell.expected)
        if col.key is None:
            continue
        value = cell_value(col, cell)
        if not value:
            continue
        if (col.key in KINDS and KINDS[col.key] != "fraction" and not col.unit
                and _BARE_NUMBER.match(value)):
            raise InputError("a number without its unit", column=col.header, given=value,
                             expected=f"a number and its unit, e.g. '{value} {_EXAMPLE_UNIT[KINDS[col.key]]}', "
                             f"or the unit in the header: '{col.header} [{_EXAMPLE_UNIT[KINDS[col.key]]}]'")
        lines.append(f"{col.header} = {value!r}")
        if "." in col.key:
            table, key = col.key.split(".", 1)
            data.setdefault(table, {})[key] = value
        else:
            data[col.key] = value
    extra = cells[len(inv.columns):]
    if any((c or "").strip() for c in extra):
        raise InputError("more cells than header columns", given=[c for c in extra if c.strip()][0],
                         expected=f"{len(inv.columns)} columns as in the header")
    _pressure_tolerance_for_pressure_fills(data)
    return data, "\n".join(lines) + "\n"


def _pressure_tolerance_for_pressure_fills(data: dict) -> None:
    """A fill-pressure tolerance of the defaults file (the one place a register's tolerances come from) is for
    the rows filled by pressure: a row filled by mass takes the defaults' other tolerances without it (its
    result's tolerance section lists the tolerances that applied)."""
    tol = data.get("tolerance")
    fill = data.get("fill")
    if not (isinstance(tol, dict) and "fill_pressure" in tol and isinstance(fill, dict)):
        return
    if "mass" in fill and "pressure" not in fill:
        data["tolerance"] = {k: v for k, v in tol.items() if k != "fill_pressure"}


_EXAMPLE_UNIT = {"pressure": "bar(g)", "temperature": "degC", "volume": "L", "length": "m", "mass": "kg",
                 "density": "kg/L", "irradiance": "W/m2", "speed": "m/s", "fraction": "%"}


def row_case(inv: Inventory, row_number: int, cells: list[str], defaults: dict | None) -> Case:
    """The Case of one row; an InputError names the file, the row and the column (not the case key)."""
    try:
        data, text = row_data(inv, cells, defaults)
        case = parse_case_data(data, inv.source, text)
        _check_finite(case, data)
        return case
    except InputError as exc:
        raise locate(exc, inv, row_number, defaults) from None
    except (OverflowError, ArithmeticError) as exc:     # a value beyond the range of numbers
        raise InputError(f"a value is out of range ({exc})", file=inv.source, row=row_number,
                         expected="values of a real vessel") from None


#: Case fields in SI and the key they are read from.
_FIELDS = {"water_capacity_m3": "vessel.water_capacity", "rated_pressure_pa": "vessel.rated_pressure",
           "relief_set_pressure_pa": "vessel.relief_set_pressure", "max_filling_ratio_kg_m3": "vessel.max_filling_ratio",
           "fill_pressure_pa": "fill.pressure", "fill_temperature_k": "fill.temperature", "fill_mass_kg": "fill.mass",
           "ambient_max_k": "exposure.ambient_max", "gas_temperature_k": "exposure.gas_temperature",
           "outside_diameter_m": "vessel.outside_diameter", "length_m": "vessel.length"}


def _check_finite(case: Case, data: dict) -> None:
    """A value whose number is finite as written but not once converted (1e308 psia) is refused here."""
    for name, key in _FIELDS.items():
        v = getattr(case, name, None)
        if isinstance(v, float) and not math.isfinite(v):
            table, k = key.split(".")
            raise InputError("the value is out of range once converted to SI units", key=key,
                             given=(data.get(table) or {}).get(k), expected="a value of a real vessel")


def locate(exc: InputError, inv: Inventory, row_number: int, defaults: dict | None = None) -> InputError:
    """The error with the row and the column (header as written) in place of the case key."""
    column = None
    key = exc.key
    if exc.column:
        column = exc.column
    elif key:
        headers = {c.key: c.header for c in inv.columns if c.key}
        base = key.split("[")[0]
        for k in (key, base, ".".join(base.split(".")[:2])):
            if k in headers:
                column = headers[k]
                break
        if column is None:
            name = KEY_TO_COLUMN.get(key) or KEY_TO_COLUMN.get(".".join(base.split(".")[:2]))
            if name is not None:
                src = getattr(defaults, "source", None)
                k2 = ".".join(base.split(".")[:2])
                if src and (k2 in _flat(defaults) or key in _flat(defaults)):
                    column = f"{name} (from the defaults file {src})"
                else:
                    column = f"{name} (no such column, and no default)"
    message, expected = _register_words(exc, inv, column)
    return InputError(message, file=inv.source, row=row_number, column=column,
                      key=None if column else key, given=exc.given, expected=expected)


#: A number written with a decimal comma, as a cell of a comma-separated file holds it ("200,5").
_COMMA_NUMBER = re.compile(r"^\s*[+-]?\d+,\d+\b")


def _register_words(exc: InputError, inv: Inventory, column: str | None) -> tuple[str, str | None]:
    """The message and the expectation of an error of the case reader in the words of a register (its cells,
    columns and headers rather than a case file's keys and tables)."""
    message, expected = exc.message, exc.expected
    in_column = column is not None and not column.endswith(")")      # a column of the register itself
    if message == "required key is missing":
        if in_column:
            return "the cell is empty", "a value in this column, or a default for it in a defaults file"
        return "a value the screening needs is missing", "a column for it, or a default in a defaults file"
    if message.startswith("a fill pressure needs the temperature"):
        return message, "the fill temperature in this row, e.g. 15 in the header's unit, or '15 degC'"
    if message == "a pressure must say whether it is gauge or absolute":
        return message, ("a unit with its basis, e.g. '200 bar(g)' or '21 MPa(a)', in the cell or in the header "
                         "('fill_pressure [bar(g)]'), or pressure_basis in a defaults file")
    if (message.startswith("unit '") and inv.delimiter == "," and isinstance(exc.given, str)
            and _COMMA_NUMBER.match(exc.given)):
        return ("a decimal comma in a comma-separated file",
                "a decimal point ('200.5'), or the file saved with ';' as its separator, or the cell quoted "
                "('\"200,5\"') with --decimal ,")
    return message, expected
