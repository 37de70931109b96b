"""Check a report against its own attachments, and its pages against what this version renders from them.

``verify_report(pdf_path) -> (agree, message)``. Two statements are checked and reported separately:

1. **The attachments re-run to the same verdict and peak**: the attached case text still hashes to the
   attached result's ``input_sha256``, and screening it again gives the attached verdict and peak pressure
   (relative difference at most 1e-9, or both absent).
2. **The pages are the ones this version renders from them**: the report is rendered again from the
   attached case (screened again), the report date of the document and this tool version, and the text
   of every page (pypdf) is compared with the document's. Only possible when the document names this
   tool version and a report date; otherwise it is said that the pages were not checked.

``agree`` is True only when both hold. A report of this tool carries exactly two attachments (the case
file and its ``*.result.json``); more or fewer are named in the message. A batch report carries no
attachment to re-run: the message says what cannot be checked. A file that is not a PDF, a directory,
a PDF without a result attachment or with two raise InputError.

What this proves: the document's numbers follow from the attached case through this version of the tool,
and its pages say what this version would print. What it does not: who made the document, or that the
case describes the real vessel; anyone with the tool can make a document that verifies. It is not a
signature.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import json
import logging
import math
import re
from pathlib import Path

from screening.errors import InputError

RELATIVE_TOLERANCE = 1e-9
RESULT_SUFFIX = ".result.json"
#: The attachments a single-vessel report carries: the case file as entered and its result.
EXPECTED_ATTACHMENTS = 2
#: The title a batch report carries in its metadata.
BATCH_TITLE = "Batch pressure screening"

_NOT_A_SIGNATURE = ("verify is not a signature: it shows that the pages and the attached result follow from "
                    "the attached case through this tool version, not who made the document or that the "
                    "case describes the real vessel.")


class _Pdf:
    """What verify reads of a PDF: every attachment (all copies), the page texts, the metadata."""

    def __init__(self, path: Path) -> None:
        from pypdf import PdfReader
        from pypdf.errors import PdfReadError

        log = logging.getLogger("pypdf")
        level = log.level
        log.setLevel(logging.ERROR)  # pypdf's repair chatter is not the user's business; failures still raise
        try:
            reader = PdfReader(str(path), strict=False)
            self.copies: dict[str, list[bytes]] = {name: [bytes(c) for c in copies]
                                                   for name, copies in reader.attachments.items()}
            meta = reader.metadata or {}
            self.title = str(meta.get("/Title") or "")
            self.creator = str(meta.get("/Creator") or "")
            self.created = str(meta.get("/CreationDate") or "")
            self._reader = reader
        except (PdfReadError, OSError, ValueError, KeyError, TypeError, AttributeError) as exc:
            raise InputError(f"cannot read the report as a PDF: {exc}", given=str(path)) from None
        finally:
            log.setLevel(level)

    def page_texts(self) -> list[str]:
        return _page_texts(self._reader)

    @property
    def count(self) -> int:
        return sum(len(c) for c in self.copies.values())


def _page_texts(reader) -> list[str]:
    log = logging.getLogger("pypdf")
    level = log.level
    log.setLevel(logging.ERROR)
    try:
        return [" ".join((p.extract_text() or "").split()) for p in reader.pages]
    finally:
        log.setLevel(level)


def _open(pdf_path: str | Path) -> _Pdf:
    path = Path(pdf_path)
    if path.is_dir():
        raise InputError("this is a directory, not a report file", given=str(path),
                         expected="a PDF written by 'screening report' or 'screening check --pdf'")
    if not path.exists():
        raise InputError("no such report file", given=str(path), expected="a PDF written by this tool")
    if not path.is_file():
        raise InputError("not a regular file", given=str(path), expected="a PDF written by this tool")
    try:
        with path.open("rb") as fh:
            head = fh.read(5)
    except OSError as exc:
        raise InputError(f"cannot read the report: {exc.strerror or exc}", given=str(path)) from None
    if head != b"%PDF-":
        raise InputError("not a PDF file", given=str(path), expected="a PDF written by this tool")
    return _Pdf(path)


def read_attachments(pdf_path: str | Path) -> dict[str, bytes]:
    """The embedded files of the PDF, by name (first copy of each name)."""
    return {name: copies[0] for name, copies in _open(pdf_path).copies.items() if copies}


def _case_and_result(pdf: _Pdf, pdf_path) -> tuple[str, str, dict, list[str]]:
    """(case file name, case text, result dict, notes on unexpected attachments)."""
    names = [n for n, copies in pdf.copies.items() for _ in copies]
    listed = ", ".join(repr(n) for n in names) or "none"
    results = [n for n in names if n.endswith(RESULT_SUFFIX)]
    if not results:
        raise InputError(f"the report carries no attached result (attachments: {listed})", given=str(pdf_path),
                         expected=f"one attachment named '*{RESULT_SUFFIX}' beside the case file")
    if len(results) > 1:
        raise InputError(f"the report carries {len(results)} result attachments ({', '.join(map(repr, results))});"
                         " it cannot tell which one its pages show", given=str(pdf_path),
                         expected=f"exactly one attachment named '*{RESULT_SUFFIX}'")
    result_name = results[0]
    try:
        result = json.loads(pdf.copies[result_name][0].decode("utf-8"))
    except (UnicodeDecodeError, ValueError) as exc:
        raise InputError(f"the attached result is not JSON: {exc}", given=result_name) from None
    if not isinstance(result, dict):
        raise InputError("the attached result is not a JSON object", given=result_name)
    source = result.get("source")
    source_name = Path(source.replace("\\", "/")).name if isinstance(source, str) else None
    if source_name and source_name in pdf.copies:
        case_name = source_name
    else:
        others = [n for n in pdf.copies if n != result_name]
        if len(others) != 1:
            raise InputError(f"the report carries no attached case file it can tell (attachments: {listed})",
                             given=str(pdf_path), expected="the case file as entered, attached beside the result")
        case_name = others[0]
    try:
        case_text = pdf.copies[case_name][0].decode("utf-8")
    except UnicodeDecodeError as exc:
        raise InputError(f"the attached case file is not UTF-8 text: {exc}", given=case_name) from None
    notes = []
    if len(names) != EXPECTED_ATTACHMENTS:
        extra = [n for n in names if n not in (case_name, result_name)]
        extra += [n for n in (case_name, result_name) if len(pdf.copies[n]) > 1]
        notes.append(f"the PDF carries {len(names)} attachments, not the {EXPECTED_ATTACHMENTS} a report of this "
                     f"tool carries (the case file and its result); not accounted for: "
                     + ", ".join(repr(n) for n in extra))
    return case_name, case_text, result, notes


def attached_case_and_result(pdf_path: str | Path) -> tuple[str, str, dict]:
    """(case file name, case text, result dict) attached to a report."""
    name, text, result, _ = _case_and_result(_open(pdf_path), pdf_path)
    return name, text, result


def _same_pressure(a, b) -> bool:
    if a is None or b is None:
        return a is None and b is None
    if not (isinstance(a, (int, float)) and isinstance(b, (int, float))):
        return False
    if not (math.isfinite(a) and math.isfinite(b)):
        return False
    return abs(a - b) <= RELATIVE_TOLERANCE * max(abs(a), abs(b))


def _shown(p, result: dict) -> str:
    """A pressure [Pa, absolute] in the case's own unit, with the exact SI value that was compared."""
    if p is None:
        return "none"
    if not isinstance(p, (int, float)) or not math.isfinite(p):
        return repr(p)
    from screening.units import format_pressure

    unit = (result.get("display_units") or {}).get("pressure") or "bar(g)"
    atm = (result.get("site") or {}).get("atmospheric_pressure_pa") or 101325.0
    try:
        text = format_pressure(p, unit, atm, digits=3)
    except (KeyError, TypeError, ValueError):
        text = format_pressure(p, "bar(a)", atm, digits=3)
    return f"{text} [{p!r} Pa absolute]"


def report_date(created: str) -> _dt.date | None:
    """The report date from a PDF date ('D:20261201000000Z'), or None."""
    m = re.match(r"^D:(\d{4})(\d{2})(\d{2})", created or "")
    if not m:
        return None
    try:
        return _dt.date(int(m.group(1)), int(m.group(2)), int(m.group(3)))
    except ValueError:
        return None


def _pages_check(pdf: _Pdf, case_text: str, fresh: dict, attached: dict) -> tuple[bool | None, str]:
    """(True/False, detail) comparing the pages with a new render; (None, why) when it cannot be done."""
    from screening import __version__

    version = attached.get("tool_version")
    if version != __version__:
        return None, (f"not checked: the document was written by screening {version}, this is {__version__}; "
                      f"run verify with version {version} to compare the pages")
    date = report_date(pdf.created)
    if date is None:
        return None, "not checked: the PDF carries no report date to render it again with"
    import io

    from pypdf import PdfReader

    from screening.outputs.report import render_pdf_bytes

    fresh_pdf = render_pdf_bytes(fresh, case_text, report_date=date)
    mine = _page_texts(PdfReader(io.BytesIO(fresh_pdf)))
    theirs = pdf.page_texts()
    differing = [k + 1 for k, (a, b) in enumerate(zip(mine, theirs)) if a != b]
    if len(mine) != len(theirs):
        first = f"; the first page that differs is page {differing[0]}" if differing else ""
        return False, (f"the document has {len(theirs)} pages; rendered from its attachments on {date} it has "
                       f"{len(mine)}{first}")
    if differing:
        return False, (f"the text of page{'s' if len(differing) > 1 else ''} "
                       f"{', '.join(map(str, differing))} of {len(theirs)} differs from the pages rendered from "
                       f"the attachments (report date {date})")
    return True, f"the text of all {len(theirs)} pages is the same as rendered from the attachments (report date {date})"


def _batch_message(pdf: _Pdf, pdf_path) -> str:
    names = ", ".join(repr(n) for n in pdf.copies) or "none"
    return "\n".join([
        f"CANNOT VERIFY: {Path(pdf_path).name} is a batch report ({pdf.title or 'batch'}).",
        f"  It carries no attached inventory and result (attachments: {names}), so nothing can be re-run:",
        "  neither the counts and the vessel listing nor the detail pages are checked. Screen the inventory "
        "again with 'screening batch' and compare.",
    ])


def verify_report(pdf_path: str | Path) -> tuple[bool, str]:
    """Re-run the case attached to `pdf_path` and render its pages again; (True, message) if both agree."""
    pdf = _open(pdf_path)
    if not any(n.endswith(RESULT_SUFFIX) for n in pdf.copies) and (
            pdf.title.startswith(BATCH_TITLE) or any("INVENTORY" in t[:200] for t in pdf.page_texts()[:1])):
        return False, _batch_message(pdf, pdf_path)
    case_name, case_text, attached, notes = _case_and_result(pdf, pdf_path)

    from screening import __version__
    from screening.screen import screen_text

    source = attached.get("source") if isinstance(attached.get("source"), str) else case_name
    fresh = screen_text(case_text, source)

    sha = hashlib.sha256(case_text.encode("utf-8")).hexdigest()
    checks = [
        ("case text SHA-256", attached.get("input_sha256"), sha, attached.get("input_sha256") == sha),
        ("verdict", attached.get("verdict"), fresh["verdict"], attached.get("verdict") == fresh["verdict"]),
        ("peak pressure", _shown(attached.get("peak_pressure_pa"), attached),
         _shown(fresh["peak_pressure_pa"], fresh),
         _same_pressure(attached.get("peak_pressure_pa"), fresh["peak_pressure_pa"])),
    ]
    rerun_ok = all(ok for *_, ok in checks)
    pages_ok, pages_detail = _pages_check(pdf, case_text, fresh, attached)
    agree = rerun_ok and pages_ok is True and not notes

    def said(ok) -> str:
        return "yes" if ok is True else "NOT CHECKED" if ok is None else "NO"

    head = "AGREES" if agree else "DISAGREES" if (not rerun_ok or pages_ok is False or notes) else "NOT VERIFIED"
    lines = [f"{head}: {Path(pdf_path).name} (case {case_name}; document written by screening "
             f"{attached.get('tool_version')}, checked with screening {__version__})",
             f"  attachments re-run to the same verdict and peak: {said(rerun_ok)}"]
    for label, was, now, ok in checks:
        lines.append(f"    {label:<18} attached: {was}")
        lines.append(f"    {'':<18} re-run:   {now}   {'same' if ok else 'DIFFERENT'}")
    lines.append(f"  pages are the ones this version renders from them: {said(pages_ok)}")
    lines.append(f"    {pages_detail}")
    for note in notes:
        lines.append(f"  attachments: {note}")
    lines.append(f"  ({_NOT_A_SIGNATURE})")
    return agree, "\n".join(lines)
