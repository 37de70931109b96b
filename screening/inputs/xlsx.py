"""Reading an .xlsx workbook within stated bounds (python-calamine reads the cells).

An .xlsx file is a zip of XML parts, and a small file can unpack to gigabytes or declare cells at the
far corner of the sheet, which a reader would lay out as one dense grid. Before calamine opens a sheet,
the parts it will read are decompressed here as a stream and checked, so that a hostile workbook is
refused with a message before memory grows:

* every part read unpacks to at most :data:`MAX_PART_BYTES`, all of them together to :data:`MAX_TOTAL_BYTES`;
* the sheet's cells lie within :data:`MAX_ROWS` rows and :data:`MAX_COLUMNS` columns, and the grid they
  span holds at most :data:`MAX_CELLS` cells (what calamine allocates);
* no text run in the sheet or in the shared strings is longer than :data:`MAX_CELL_BYTES` (a cell of
  Excel's own limit, 32 767 characters, written as XML with entities, fits well within it).

Cells come back as Python values: text, float, bool, or a date/time (which the inventory refuses with a
located message).
"""

from __future__ import annotations

import re
import zipfile
from pathlib import Path, PurePosixPath
from xml.etree import ElementTree

from screening.errors import InputError

#: Largest unpacked size of one part of the workbook [bytes].
MAX_PART_BYTES = 512 * 1024 * 1024
#: Largest unpacked size of all the parts read [bytes].
MAX_TOTAL_BYTES = 1024 * 1024 * 1024
#: Rows and columns of a sheet (Excel's own grid: 1 048 576 rows; registers have tens of columns).
MAX_ROWS = 1_048_576
MAX_COLUMNS = 1000
#: Cells of the grid the sheet's cells span (calamine lays it out densely, about 32 bytes a cell).
MAX_CELLS = 16_000_000
#: Longest run of text between two XML tags [bytes].
MAX_CELL_BYTES = 256 * 1024

_CELL_REF = re.compile(rb'<c\b[^>]*?\br="([A-Z]{1,4})([0-9]{1,9})"')
_TAGS = {"main": "http://schemas.openxmlformats.org/spreadsheetml/2006/main",
         "rel": "http://schemas.openxmlformats.org/officeDocument/2006/relationships",
         "pkg": "http://schemas.openxmlformats.org/package/2006/relationships"}
_CHUNK = 1 << 20


def _column_number(letters: bytes) -> int:
    n = 0
    for ch in letters:
        n = n * 26 + (ch - 64)
    return n


class _Scan:
    def __init__(self, source: str) -> None:
        self.source = source
        self.total = 0

    def _fail(self, message: str, expected: str | None = None) -> InputError:
        return InputError(message, file=self.source, expected=expected)

    def read(self, zf: zipfile.ZipFile, name: str, cells: bool = False, keep: bool = False):
        """Stream one part: check its size and its text runs (and, with `cells`, the cell references);
        the bytes if `keep` (small parts only), else (max row, max column)."""
        try:
            fh = zf.open(name)
        except KeyError:
            raise self._fail(f"the workbook has no part '{name}'", "an .xlsx workbook as Excel or "
                             "LibreOffice writes it") from None
        size = 0
        run = 0                      # length of the text run still open at the end of the last chunk
        max_row = max_col = 0
        kept = []
        tail = b""
        with fh:
            while True:
                try:
                    chunk = fh.read(_CHUNK)
                except (zipfile.BadZipFile, OSError, EOFError, ValueError) as exc:
                    raise self._fail(f"the workbook's part '{name}' cannot be unpacked ({exc})") from None
                if not chunk:
                    break
                size += len(chunk)
                self.total += len(chunk)
                if size > MAX_PART_BYTES:
                    raise self._fail(f"the workbook's part '{name}' unpacks to more than "
                                     f"{MAX_PART_BYTES // 2**20} MiB", "a register of at most about a "
                                     "million rows; for more, a CSV file")
                if self.total > MAX_TOTAL_BYTES:
                    raise self._fail(f"the workbook unpacks to more than {MAX_TOTAL_BYTES // 2**20} MiB",
                                     "a register of at most about a million rows; for more, a CSV file")
                first = chunk.find(b"<")
                if first < 0:
                    run += len(chunk)
                else:
                    run += first
                    if run > MAX_CELL_BYTES:
                        raise self._cell_too_long(name)
                    last = chunk.rfind(b">")
                    run = len(chunk) - last - 1
                    longest = max((len(s) for s in re.findall(rb">[^<]{%d,}<" % MAX_CELL_BYTES, chunk)), default=0)
                    if longest:
                        raise self._cell_too_long(name)
                if run > MAX_CELL_BYTES:
                    raise self._cell_too_long(name)
                if cells:
                    data = tail + chunk
                    for col, row in set(_CELL_REF.findall(data)):
                        max_row = max(max_row, int(row))
                        max_col = max(max_col, _column_number(col))
                    tail = data[-64:]
                if keep:
                    kept.append(chunk)
        if keep:
            return b"".join(kept)
        return max_row, max_col

    def _cell_too_long(self, name: str) -> InputError:
        return self._fail(f"a cell in the workbook's part '{name}' holds more than {MAX_CELL_BYTES // 1024} KiB "
                          "of text", "cells of at most 32 767 characters (Excel's limit)")


def _sheet_parts(zf: zipfile.ZipFile, scan: _Scan) -> list[tuple[str, str]]:
    """(sheet name, part path) of every worksheet, in the workbook's order."""
    try:
        book = ElementTree.fromstring(scan.read(zf, "xl/workbook.xml", keep=True))
        rels = ElementTree.fromstring(scan.read(zf, "xl/_rels/workbook.xml.rels", keep=True))
    except ElementTree.ParseError as exc:
        raise InputError(f"the workbook's index cannot be read ({exc})", file=scan.source) from None
    targets = {r.get("Id"): r.get("Target", "") for r in rels.iter(f"{{{_TAGS['pkg']}}}Relationship")}
    out = []
    for s in book.iter(f"{{{_TAGS['main']}}}sheet"):
        target = targets.get(s.get(f"{{{_TAGS['rel']}}}id"), "")
        path = target.lstrip("/") if target.startswith("/") else str(PurePosixPath("xl") / target)
        out.append((s.get("name", ""), path))
    return out


class Workbook:
    """An .xlsx workbook opened for bounded reading: its sheet names, and the rows of a sheet."""

    def __init__(self, path: Path, source: str) -> None:
        self.path = path
        self.source = source
        self._scan = _Scan(source)
        try:
            self._zip = zipfile.ZipFile(path)
        except (zipfile.BadZipFile, OSError, ValueError) as exc:
            raise InputError(f"not a readable .xlsx workbook ({exc.__class__.__name__})", file=source) from None
        self.parts = _sheet_parts(self._zip, self._scan)
        self.names = [n for n, _ in self.parts]
        self._strings_checked = False
        self._book = None

    def rows(self, name: str):
        """The rows of the sheet `name` as lists of Python values, from the sheet's first row (empty rows
        included, so that the n-th row is the sheet's row n), after the checks above. The cells stay in
        calamine's compact grid; each row becomes Python objects only as it is read."""
        part = dict(self.parts)[name]
        if not self._strings_checked:
            if "xl/sharedStrings.xml" in self._zip.namelist():
                self._scan.read(self._zip, "xl/sharedStrings.xml")
            self._strings_checked = True
        max_row, max_col = self._scan.read(self._zip, part, cells=True)
        if max_row > MAX_ROWS or max_col > MAX_COLUMNS or max_row * max_col > MAX_CELLS:
            raise InputError(f"the sheet '{name}' spans {max_row:,} rows by {max_col:,} columns",
                             file=self.source, expected=f"at most {MAX_ROWS:,} rows, {MAX_COLUMNS} columns and "
                             f"{MAX_CELLS:,} cells in all (for more, a CSV file)")
        from python_calamine import CalamineWorkbook

        try:
            if self._book is None:
                self._book = CalamineWorkbook.from_path(str(self.path))
            sheet = self._book.get_sheet_by_name(name)
            return sheet.iter_rows()
        except Exception as exc:  # calamine's own errors: a damaged workbook
            raise InputError(f"not a readable .xlsx workbook ({exc.__class__.__name__}: {exc})",
                             file=self.source) from None

    def close(self) -> None:
        self._zip.close()
        if self._book is not None:
            self._book.close()
