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
file and its ``*.result.json``); more or fewer are named in the message. A file that is not a PDF, a
directory, a PDF without a result attachment or with two raise InputError.

A batch report carries the inventory, the defaults file (if one was used) and a run record
``*.batch.json`` (see ``screening.outputs.batch_report``). Its three statements: the attachments are the
ones a batch report carries (missing, extra and second copies named); the attached inventory screens again,
through ``screening.batch`` in a temporary folder with the recorded options, to the recorded counts and
listing (rows, ids and verdicts, worst first); the pages are the ones this version renders from them (at
the recorded report date; the folder written before the inventory's name is not compared). A batch report
without a run record, or with a single report's attachments, is said to be so and does not agree.

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
import unicodedata
from pathlib import Path
from typing import Callable

from screening.errors import InputError
from screening.result import Result

RELATIVE_TOLERANCE = 1e-9
RESULT_SUFFIX = ".result.json"
#: The attachments a single-vessel report carries: the case file as entered and its result.
EXPECTED_ATTACHMENTS = 2
#: The title a batch report carries in its metadata.
BATCH_TITLE = "Batch pressure screening"
#: A batch report's run record ends so (beside it: the inventory and, if one was used, the defaults file).
RUN_SUFFIX = ".batch.json"
#: Differences of the listing shown one by one; beyond this, counted.
LISTING_SHOWN = 5

_NOT_A_SIGNATURE = ("verify is not a signature: it shows that the pages and the attached result follow from "
                    "the attached case through this tool version, not who made the document or that the "
                    "case describes the real vessel.")

_NOT_A_SIGNATURE_BATCH = ("verify is not a signature: it shows that the counts, the listing and the pages follow "
                          "from the attached inventory through this tool version, not who made the document or "
                          "that the inventory describes the real vessels.")


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


def _shown(p, unit: object, atm: object) -> str:
    """A pressure [Pa, absolute] in the case's own unit (gauge against the site's atmosphere `atm` [Pa]),
    with the exact SI value that was compared; in bar(a) where the unit or the atmosphere is not usable
    (an attached result is read as it is, whatever it holds)."""
    if p is None:
        return "none"
    if not isinstance(p, (int, float)) or not math.isfinite(p):
        return repr(p)
    from screening.units import format_pressure

    try:
        if not isinstance(atm, (int, float)) or not math.isfinite(atm):
            raise ValueError("no atmospheric pressure")
        text = format_pressure(p, unit if isinstance(unit, str) and unit else "bar(g)", atm, digits=3)
    except (KeyError, TypeError, ValueError):
        text = format_pressure(p, "bar(a)", 0.0, digits=3)   # absolute: the atmosphere plays no part
    return f"{text} [{p!r} Pa absolute]"


def _attached_units(attached: dict) -> tuple[object, object]:
    """(pressure unit, atmospheric pressure) as an attached result dict states them (None where it does not)."""
    units = attached.get("display_units")
    site = attached.get("site")
    return (units.get("pressure") if isinstance(units, dict) else None,
            site.get("atmospheric_pressure_pa") if isinstance(site, dict) else None)


def report_date(created: str) -> _dt.date | None:
    """The report date from a PDF date ('D:20261201000000Z'), or None."""
    m = re.match(r"^D:(\d{4})(\d{2})(\d{2})", created or "")
    if not m:
        return None
    try:
        return _dt.date(int(m.group(1)), int(m.group(2)), int(m.group(3)))
    except ValueError:
        return None


def _pages_check(pdf: _Pdf, case_text: str, fresh: Result, attached: dict) -> tuple[bool | None, str]:
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
    return _compare_pages(_page_texts(PdfReader(io.BytesIO(fresh_pdf))), pdf.page_texts(), date)


def _compare_pages(mine: list[str], theirs: list[str], date) -> tuple[bool, str]:
    """(True/False, detail) comparing the document's page texts (`theirs`) with a new render's."""
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


def _listed(pdf: _Pdf) -> str:
    return ", ".join(repr(n) for n, copies in pdf.copies.items() for _ in copies) or "none"


def _batch_message(pdf: _Pdf, pdf_path) -> str:
    return "\n".join([
        f"CANNOT VERIFY: {Path(pdf_path).name} is a batch report ({pdf.title or 'batch'}).",
        f"  It carries no attached inventory and no run record '*{RUN_SUFFIX}' (attachments: {_listed(pdf)}),",
        "  so nothing can be re-run: neither the counts and the vessel listing nor the pages are checked.",
        "  (A batch report written by an earlier version, by the web page, or with its attachments removed.)",
        "  Screen the inventory again with 'screening batch' and compare.",
    ])


def _single_in_batch_message(pdf: _Pdf, pdf_path) -> str:
    return "\n".join([
        f"DISAGREES: {Path(pdf_path).name} is a batch report ({pdf.title}), but it carries a single "
        f"report's attachments (attachments: {_listed(pdf)}).",
        f"  A batch report carries its inventory and a run record '*{RUN_SUFFIX}'; these attachments "
        "are not what its pages were made from. Nothing is checked.",
        f"  ({_NOT_A_SIGNATURE})",
    ])


def verify_report(pdf_path: str | Path, *, run_batch: Callable[[object], int] | None = None) -> tuple[bool, str]:
    """Re-run the case attached to `pdf_path` and render its pages again; (True, message) if both agree.

    `run_batch` is the batch command (`screening.batch.run`, given by the command layer: outputs import
    nothing above them); a batch report needs it to screen its inventory again."""
    pdf = _open(pdf_path)
    if any(n.endswith(RUN_SUFFIX) for n in pdf.copies):
        if run_batch is None:
            raise TypeError("verifying a batch report needs the batch command (run_batch)")
        return _verify_batch(pdf, pdf_path, run_batch)
    has_result = any(n.endswith(RESULT_SUFFIX) for n in pdf.copies)
    if has_result and pdf.title.startswith(BATCH_TITLE):
        return False, "\n".join(map(_visible, _single_in_batch_message(pdf, pdf_path).split("\n")))
    if not has_result and (
            pdf.title.startswith(BATCH_TITLE) or any("INVENTORY" in t[:200] for t in pdf.page_texts()[:1])):
        return False, "\n".join(map(_visible, _batch_message(pdf, pdf_path).split("\n")))
    case_name, case_text, attached, notes = _case_and_result(pdf, pdf_path)

    from screening import __version__
    from screening.engine import screen_text

    source = attached.get("source") if isinstance(attached.get("source"), str) else case_name
    fresh = screen_text(case_text, source)

    sha = hashlib.sha256(case_text.encode("utf-8")).hexdigest()
    fresh_unit = fresh.display_units.get("pressure", "bar(g)")
    checks = [
        ("case text SHA-256", attached.get("input_sha256"), sha, attached.get("input_sha256") == sha),
        ("verdict", attached.get("verdict"), fresh.verdict.value, attached.get("verdict") == fresh.verdict),
        ("peak pressure", _shown(attached.get("peak_pressure_pa"), *_attached_units(attached)),
         _shown(fresh.peak_pressure_pa, fresh_unit, fresh.site.atmospheric_pressure_pa),
         _same_pressure(attached.get("peak_pressure_pa"), fresh.peak_pressure_pa)),
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


# ----------------------------------------------------------------------------- batch reports

def _run_record(pdf: _Pdf, pdf_path) -> tuple[str, dict]:
    """(name, parsed run record) of a batch report; InputError where it cannot be read."""
    runs = [n for n, copies in pdf.copies.items() if n.endswith(RUN_SUFFIX) for _ in copies]
    if len(runs) > 1:
        raise InputError(f"the batch report carries {len(runs)} run records ({', '.join(map(repr, runs))}); "
                         "it cannot tell which one its pages show", given=str(pdf_path),
                         expected=f"exactly one attachment named '*{RUN_SUFFIX}'")
    name = runs[0]
    try:
        record = json.loads(pdf.copies[name][0].decode("utf-8"))
    except (UnicodeDecodeError, ValueError) as exc:
        raise InputError(f"the attached run record is not JSON: {exc}", given=name) from None
    inv = record.get("inventory") if isinstance(record, dict) else None
    if not isinstance(inv, dict) or not isinstance(inv.get("name"), str) or not isinstance(record.get("listing"),
                                                                                           list):
        raise InputError("the attached run record does not name its inventory and listing", given=name,
                         expected="a run record written by 'screening batch --pdf'")
    return name, record


def _counts_text(counts) -> str:
    from screening.outputs.listing import ORDER

    if not isinstance(counts, dict):
        return repr(counts)
    return ", ".join(f"{v} {counts.get(v, 0)}" for v in ORDER)


def _visible(text) -> str:
    """`text` with control and format characters (ANSI escapes, bidirectional overrides) as visible escapes."""
    return "".join(c if unicodedata.category(c) not in ("Cc", "Cf") else f"\\u{ord(c):04x}" for c in str(text))


def _row_name(row, ident) -> str:
    return f"row {_visible(row)} (id {_visible(ident) if ident not in (None, '') else '-'})"


def _row_text(entry) -> str:
    if not (isinstance(entry, list) and len(entry) == 3):
        return repr(entry)
    return f"{_row_name(entry[0], entry[1])} {_visible(entry[2])}"


def _listing_diff(attached: list, again: list) -> list[str]:
    """Lines saying where the attached listing and the re-run's differ (none when they are the same): the
    rows whose verdict changed, rows only in one of them, then (where those agree) places out of order."""
    if attached == again:
        return []

    def by_row(listing: list) -> dict:
        return {(e[0], e[1]): e[2] for e in listing if isinstance(e, list) and len(e) == 3
                and isinstance(e[0], int) and (e[1] is None or isinstance(e[1], str))}

    was, now = by_row(attached), by_row(again)
    lines = []
    if len(attached) != len(again):
        lines.append(f"the attached listing has {len(attached)} rows, the re-run {len(again)}")
    changed = [f"{_row_name(*k)}: attached {_visible(was[k])}; re-run {now[k]}"
               for k in was if k in now and was[k] != now[k]]
    gone = [f"{_row_text([k[0], k[1], was[k]])}: in the attached listing only" for k in was if k not in now]
    new = [f"{_row_text([k[0], k[1], now[k]])}: in the re-run only" for k in now if k not in was]
    differing = changed + gone + new
    if not differing:               # the same rows and verdicts, in another order (or entries unreadable)
        places = [k for k in range(max(len(attached), len(again)))
                  if k >= len(attached) or k >= len(again) or attached[k] != again[k]]
        differing = [f"place {k + 1}: attached {_row_text(attached[k]) if k < len(attached) else 'nothing'}; "
                     f"re-run {_row_text(again[k]) if k < len(again) else 'nothing'}" for k in places]
    lines += differing[:LISTING_SHOWN]
    if len(differing) > LISTING_SHOWN:
        lines.append(f"... and {len(differing) - LISTING_SHOWN} more")
    return lines


def _without_folders(text: str, names: list[str]) -> str:
    """`text` with the folder removed wherever a path ends in one of `names` ('cases/inv.csv' -> 'inv.csv'):
    the document names its inventory as it was typed, the re-run by its name alone."""
    for name in names:
        text = re.sub(r"[^\s,;:()'\"]*[/\\](?=" + re.escape(name) + ")", "", text)
    return text


def _safe_name(name: str, fallback: str) -> str:
    """A file name for a temporary folder from an attachment's name (no folders, nothing hidden)."""
    base = Path(name.replace("\\", "/")).name.lstrip(".")
    return base[:200] or fallback


def _rerun_batch(record: dict, inv_bytes: bytes, defaults_bytes: bytes | None, date, render: bool, run_batch):
    """Screen the attached inventory again through `screening batch` in a temporary folder:
    (results, fresh PDF bytes or None)."""
    import contextlib
    import io
    import tempfile
    import types

    options = record.get("options") if isinstance(record.get("options"), dict) else {}
    with tempfile.TemporaryDirectory(prefix="screening-verify-") as tmp:
        folder = Path(tmp)
        inv = folder / _safe_name(record["inventory"]["name"], "inventory.csv")
        inv.write_bytes(inv_bytes)
        defaults = None
        if defaults_bytes is not None:
            defaults = folder / "defaults" / _safe_name(record["defaults"]["name"], "defaults.toml")
            defaults.parent.mkdir()
            defaults.write_bytes(defaults_bytes)
        sort = options.get("sort") if options.get("sort") in ("input", "severity") else "input"
        decimal = options.get("decimal") if options.get("decimal") in (".", ",") else None
        sheet = options.get("sheet") if isinstance(options.get("sheet"), str) else None
        site = options.get("site") if isinstance(options.get("site"), str) else None
        # run from the folder, with the names relative to it: messages that name the inventory (an
        # input-error row's reason) then print its name, not the temporary folder
        args = types.SimpleNamespace(
            inventory=inv.name, sheet=sheet, decimal=decimal,
            defaults=str(defaults.relative_to(folder)) if defaults else None,
            json=str(folder / "again.json"), jsonl=None, csv=None, xlsx=None,
            pdf=str(folder / "again.pdf") if render else None, sort=sort,
            all_details=bool(options.get("all_details")), site=site, date=date, quiet=True)
        with contextlib.chdir(folder), contextlib.redirect_stdout(io.StringIO()):
            run_batch(args)
        results = json.loads((folder / "again.json").read_text(encoding="utf-8"))["results"]
        fresh = (folder / "again.pdf").read_bytes() if render else None
    return results, fresh


def _verify_batch(pdf: _Pdf, pdf_path, run_batch) -> tuple[bool, str]:
    """Verify a batch report: its attachments, a re-run of its inventory, and its pages."""
    import io

    from pypdf import PdfReader

    from screening import __version__
    from screening.outputs.batch_report import run_listing

    run_name, record = _run_record(pdf, pdf_path)
    inv_name = record["inventory"]["name"]
    d = record.get("defaults")
    d_name = d.get("name") if isinstance(d, dict) and isinstance(d.get("name"), str) else None

    # 1. the attachments are the ones a batch report of this tool carries
    expected = [inv_name] + ([d_name] if d_name else []) + [run_name]
    missing = [n for n in expected if n not in pdf.copies]
    extra = [n for n in pdf.copies if n not in expected]
    extra += [f"{n} (a second copy)" for n in expected if len(pdf.copies.get(n, ())) > 1]
    attach_ok = not missing and not extra
    what = f"the inventory {inv_name!r}" + (f", the defaults file {d_name!r}" if d_name else "") + \
        f" and the run record {run_name!r}"
    attach_lines = [f"    expected {len(expected)}: {what}; carried {pdf.count}: {_listed(pdf)}"]
    for n in missing:
        attach_lines.append(f"    MISSING: {n!r} (named by the run record, not attached)")
    if extra:
        attach_lines.append("    NOT ACCOUNTED FOR: " + ", ".join(repr(n) for n in extra))

    # 2. the attached inventory screens again to the same counts and listing
    version = record.get("tool_version")
    record_date = record.get("report_date")
    pdf_date = report_date(pdf.created)
    # the batch PDF's report date: in its metadata where it has one, else the run record's
    date = pdf_date or report_date("D:" + record_date.replace("-", "") if isinstance(record_date, str) else "")
    rerun_lines: list[str] = []
    pages_ok: bool | None = None
    pages_detail = ""
    if inv_name in missing or (d_name is not None and d_name in missing):
        rerun_ok = None
        rerun_lines.append(f"    not checked: {' and '.join(repr(n) for n in missing if n != run_name)} "
                           "missing, so the inventory cannot be screened again")
        pages_detail = "not checked: nothing to render them from"
    else:
        inv_bytes = pdf.copies[inv_name][0]
        d_bytes = pdf.copies[d_name][0] if d_name else None
        checks = [("inventory SHA-256", record["inventory"].get("sha256"), hashlib.sha256(inv_bytes).hexdigest())]
        if d_name:
            checks.append(("defaults SHA-256", d.get("sha256"), hashlib.sha256(d_bytes).hexdigest()))
        if pdf_date is not None and record_date != pdf_date.isoformat():
            checks.append(("report date", record_date, f"{date.isoformat()} (the PDF's date)"))
        render = version == __version__ and date is not None
        try:
            results, fresh = _rerun_batch(record, inv_bytes, d_bytes, date, render, run_batch)
        except InputError as exc:
            results, fresh = None, None
            rerun_lines.append(f"    the attached inventory cannot be screened again: {exc}")
        rerun_ok = all(a == b for _, a, b in checks) and results is not None
        for label, was, now in checks:
            rerun_lines.append(f"    {label:<18} run record: {was}")
            rerun_lines.append(f"    {'':<18} attached:   {now}   {'same' if was == now else 'DIFFERENT'}")
        if results is not None:
            again = run_listing(results)
            same_rows = record.get("rows") == again["rows"]
            same_counts = record.get("counts") == again["counts"]
            diff = _listing_diff(record["listing"], again["listing"])
            rerun_ok = rerun_ok and same_rows and same_counts and not diff
            rerun_lines.append(f"    {'rows':<18} run record: {record.get('rows')}")
            rerun_lines.append(f"    {'':<18} re-run:     {again['rows']}   {'same' if same_rows else 'DIFFERENT'}")
            rerun_lines.append(f"    {'counts':<18} run record: {_counts_text(record.get('counts'))}")
            rerun_lines.append(f"    {'':<18} re-run:     {_counts_text(again['counts'])}   "
                               f"{'same' if same_counts else 'DIFFERENT'}")
            if diff:
                rerun_lines.append(f"    {'listing':<18} DIFFERENT (worst first, as in the document):")
                rerun_lines += [f"      {line}" for line in diff]
            else:
                rerun_lines.append(f"    {'listing':<18} the same {len(again['listing'])} rows with the same ids "
                                   "and verdicts in the same order (worst first, as in the document)")
        # 3. the pages are the ones this version renders from them
        if version != __version__:
            pages_detail = (f"not checked: the document was written by screening {version}, this is "
                            f"{__version__}; run verify with version {version} to compare the pages")
        elif date is None:
            pages_detail = "not checked: neither the PDF nor its run record carries a report date to render it with"
        elif fresh is None:
            pages_detail = "not checked: the inventory could not be screened again"
        else:
            names = [n for n in (inv_name, d_name) if n]
            pages_ok, pages_detail = _compare_pages(
                [_without_folders(t, names) for t in _page_texts(PdfReader(io.BytesIO(fresh)))],
                [_without_folders(t, names) for t in pdf.page_texts()], date)
            pages_detail += "; the folder shown before the inventory's name is not compared"

    def said(ok) -> str:
        return "yes" if ok is True else "NOT CHECKED" if ok is None else "NO"

    agree = attach_ok and rerun_ok is True and pages_ok is True
    failed = not attach_ok or rerun_ok is False or pages_ok is False
    head = "AGREES" if agree else "DISAGREES" if failed else "NOT VERIFIED"
    lines = [f"{head}: {Path(pdf_path).name} (batch report of the inventory {inv_name}; document written by "
             f"screening {version}, checked with screening {__version__})",
             f"  the attachments are the ones a batch report carries: {said(attach_ok)}", *attach_lines,
             f"  the attached inventory screens again to the same counts and listing: {said(rerun_ok)}",
             *rerun_lines,
             f"  pages are the ones this version renders from them: {said(pages_ok)}",
             f"    {pages_detail}",
             f"  ({_NOT_A_SIGNATURE_BATCH})"]
    return agree, "\n".join(_visible(line) for line in lines)  # what the attachments say is shown, never obeyed
