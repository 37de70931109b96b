"""Read an inventory table (CSV or XLSX) into one case per row.

Columns are case keys; fill keys carry the prefix ``fill_`` (``fill_pressure`` → ``fill.pressure``).
A header may carry a default unit for its column, ``fill_pressure [bar(g)]``, used where a cell is a
bare number. ``--defaults CASE.toml`` fills missing columns and empty cells.

File-level problems (missing, unreadable, empty, no header, unknown column) raise InputError: the
caller exits 2. A row that cannot be read is not an exception here: :func:`row_case` raises an
InputError located at the row and the column, and the batch records it and goes on.
"""

from __future__ import annotations

import csv
import io
import re
import tomllib
from dataclasses import dataclass
from pathlib import Path

from screening.errors import InputError
from screening.inputs.case import Case, parse_case_data

#: Column name -> case key (table.key, or a top-level key).
COLUMNS: dict[str, str] = {
    "id": "id", "description": "description", "pressure_basis": "pressure_basis",
    "site": "site.name", "site_name": "site.name", "atmospheric_pressure": "site.atmospheric_pressure",
    "elevation": "site.elevation",
    "gas": "fill.gas", "water_capacity": "vessel.water_capacity", "rated_pressure": "vessel.rated_pressure",
    "rated_pressure_kind": "vessel.rated_pressure_kind", "relief_set_pressure": "vessel.relief_set_pressure",
    "max_filling_ratio": "vessel.max_filling_ratio", "outside_diameter": "vessel.outside_diameter",
    "length": "vessel.length",
    "fill_pressure": "fill.pressure", "fill_temperature": "fill.temperature", "fill_mass": "fill.mass",
    "ambient_max": "exposure.ambient_max", "gas_temperature": "exposure.gas_temperature",
    "solar": "exposure.solar", "irradiance": "exposure.irradiance", "absorptivity": "exposure.absorptivity",
    "finish": "exposure.finish", "emissivity": "exposure.emissivity", "wind_speed": "exposure.wind_speed",
    "orientation": "exposure.orientation",
    "required_margin": "criteria.required_margin",
}
#: Case key -> column name (for messages); "site" wins over "site_name".
KEY_TO_COLUMN = {}
for _c, _k in COLUMNS.items():
    KEY_TO_COLUMN.setdefault(_k, _c)
#: Keys that hold text, not quantities (a header unit does not apply to them).
_TEXT_KEYS = {"id", "description", "pressure_basis", "site.name", "fill.gas", "vessel.rated_pressure_kind",
              "exposure.solar", "exposure.finish", "exposure.orientation"}

_HEADER = re.compile(r"^\s*([^\[\]]*?)\s*(?:\[\s*([^\[\]]*?)\s*\])?\s*$")
_BARE_NUMBER = re.compile(r"^\s*[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d{1,4})?\s*$")


@dataclass(frozen=True)
class Column:
    header: str          # as written
    name: str            # without the unit
    key: str             # case key
    unit: str | None     # default unit of the column


@dataclass
class Inventory:
    source: str
    columns: list[Column]
    rows: list[tuple[int, list[str]]]     # (spreadsheet row number, cells)


def _fail(message: str, source: str, **kw) -> InputError:
    return InputError(message, file=source, **kw)


def _columns(header: list[str], source: str) -> list[Column]:
    cols: list[Column] = []
    seen: dict[str, str] = {}
    for h in header:
        m = _HEADER.match(h or "")
        name = (m.group(1) if m else h).strip().lower().replace(" ", "_") if h else ""
        unit = m.group(2) if m and m.group(2) else None
        if not name:
            raise _fail("a column has no name", source, row=1, given=h,
                        expected="a name on every column of the header row")
        if name not in COLUMNS:
            raise _fail("unknown column", source, row=1, column=h, given=name,
                        expected="columns: " + ", ".join(COLUMNS))
        key = COLUMNS[name]
        if key in seen:
            raise _fail("column given twice", source, row=1, column=h, given=h,
                        expected=f"one column for {key} (already '{seen[key]}')")
        seen[key] = h
        cols.append(Column(h, name, key, unit))
    if "id" not in {c.name for c in cols}:
        raise _fail("the header has no 'id' column", source, row=1, given=", ".join(header),
                    expected="an 'id' column naming each vessel")
    return cols


def _read_csv(raw: bytes, source: str) -> list[list[str]]:
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        raise _fail("the inventory is not UTF-8 text", source, expected="a UTF-8 CSV file or an .xlsx workbook") \
            from None
    if "\x00" in text:
        raise _fail("the inventory is not a CSV text file", source, expected="a UTF-8 CSV file or an .xlsx workbook")
    first = text.split("\n", 1)[0]
    delimiter = ";" if first.count(";") > first.count(",") else ","
    try:
        return [row for row in csv.reader(io.StringIO(text, newline=""), delimiter=delimiter, strict=True)]
    except csv.Error as exc:
        raise _fail(f"not a readable CSV file: {exc}", source) from None


def _cell_text(v) -> str:
    if v is None:
        return ""
    if isinstance(v, bool):
        return str(v)
    if isinstance(v, float) and v.is_integer():
        return str(int(v))
    return str(v)


def _read_xlsx(path: Path, source: str, sheet: str | None) -> list[list[str]]:
    import zipfile

    import openpyxl

    try:
        wb = openpyxl.load_workbook(path, read_only=True, data_only=True)
    except (zipfile.BadZipFile, KeyError, OSError, ValueError) as exc:
        raise _fail(f"not a readable .xlsx workbook ({exc.__class__.__name__})", source) from None
    try:
        if sheet is not None:
            if sheet not in wb.sheetnames:
                raise _fail("no such sheet", source, given=sheet, expected="one of: " + ", ".join(wb.sheetnames))
            ws = wb[sheet]
        else:
            ws = wb.worksheets[0]
        return [[_cell_text(v) for v in row] for row in ws.iter_rows(values_only=True)]
    finally:
        wb.close()


def read_inventory(path: str | Path, sheet: str | None = None) -> Inventory:
    """The header and rows of an inventory file. File-level problems raise InputError (exit 2)."""
    p = Path(path)
    source = str(path)
    if p.is_dir():
        raise _fail("expected an inventory file, got a directory", source)
    try:
        raw = p.read_bytes()
    except FileNotFoundError:
        raise _fail("inventory file not found", source) from None
    except OSError as exc:
        raise _fail(f"cannot read the inventory file: {exc.strerror}", source) from None
    if not raw.strip(b" \t\r\n\xef\xbb\xbf"):
        raise _fail("the inventory file is empty", source, expected="a header row and one row per vessel")
    if raw[:4] == b"PK\x03\x04" or p.suffix.lower() in (".xlsx", ".xlsm"):
        table = _read_xlsx(p, source, sheet)
    else:
        if sheet is not None:
            raise _fail("--sheet applies to .xlsx workbooks only", source, given=sheet)
        table = _read_csv(raw, source)
    # drop trailing empty cells and fully empty rows (but keep the row numbers)
    numbered = [(i + 1, row) for i, row in enumerate(table)]
    numbered = [(n, r) for n, r in numbered if any((c or "").strip() for c in r)]
    if not numbered:
        raise _fail("the inventory has no header row", source, expected="a header row and one row per vessel")
    head_n, header = numbered[0]
    while header and not (header[-1] or "").strip():
        header = header[:-1]
    cols = _columns(header, source)
    return Inventory(source, cols, numbered[1:])


def load_defaults(path: str | Path) -> dict:
    """Values for missing columns and empty cells, from a case-shaped TOML file (no id)."""
    p = Path(path)
    try:
        text = p.read_bytes().decode("utf-8-sig")
    except FileNotFoundError:
        raise InputError("defaults file not found", file=str(path)) from None
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"cannot read the defaults file ({exc.__class__.__name__})", file=str(path)) from None
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"not valid TOML: {exc}", file=str(path)) from None
    if "id" in data:
        raise InputError("a defaults file does not set an id", file=str(path), key="id", given=data["id"],
                         expected="the id in the inventory's 'id' column")
    return data


def cell_value(col: Column, cell: str | None) -> str:
    """A cell's text as the case reads it: stripped, with the header's unit after a bare number."""
    value = (cell or "").strip()
    if value and col.unit and col.key not in _TEXT_KEYS and _BARE_NUMBER.match(value):
        value = f"{value} {col.unit}"
    return value


def row_data(inv: Inventory, cells: list[str], defaults: dict | None) -> tuple[dict, str]:
    """The nested case data of one row (defaults first, then the row's non-empty cells) and its text."""
    data: dict = {}
    for k, v in (defaults or {}).items():
        data[k] = dict(v) if isinstance(v, dict) else v
    lines = []
    for col, cell in zip(inv.columns, cells + [""] * (len(inv.columns) - len(cells))):
        value = cell_value(col, cell)
        if not value:
            continue
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
    return data, "\n".join(lines) + "\n"


def row_case(inv: Inventory, row_number: int, cells: list[str], defaults: dict | None) -> Case:
    """The Case of one row; an InputError names the file, the row and the column (not the case key)."""
    try:
        data, text = row_data(inv, cells, defaults)
        return parse_case_data(data, inv.source, text)
    except InputError as exc:
        raise locate(exc, inv, row_number) from None


def locate(exc: InputError, inv: Inventory, row_number: int) -> InputError:
    """The error with the row and the column (header as written) in place of the case key."""
    column = None
    key = exc.key
    if key:
        headers = {c.key: c.header for c in inv.columns}
        base = key.split("[")[0]
        for k in (key, base, ".".join(base.split(".")[:2])):
            if k in headers:
                column = headers[k]
                break
        if column is None:
            column = KEY_TO_COLUMN.get(key) or KEY_TO_COLUMN.get(".".join(key.split(".")[:2]))
            if column is not None:
                column = f"{column} (missing; from the defaults or required)"
    err = InputError(exc.message, file=inv.source, row=row_number, column=column or exc.column,
                     key=None if column else key, given=exc.given, expected=exc.expected)
    return err
