"""Check a report against its own attachments: re-run the attached case, compare with the attached result.

``verify_report(pdf_path) -> (agree, message)``. Agreement means: the attached case text still hashes to
the result's ``input_sha256``, and re-running it gives the same verdict and the same peak pressure
(relative difference at most 1e-9, or both absent). A PDF that cannot be read, or that lacks the two
attachments, raises InputError.
"""

from __future__ import annotations

import hashlib
import json
import logging
import math
from pathlib import Path

from screening.errors import InputError

RELATIVE_TOLERANCE = 1e-9
RESULT_SUFFIX = ".result.json"


def read_attachments(pdf_path: str | Path) -> dict[str, bytes]:
    """The embedded files of the PDF, by name (first copy of each name)."""
    from pypdf import PdfReader
    from pypdf.errors import PdfReadError

    path = Path(pdf_path)
    if not path.is_file():
        raise InputError("no such report file", given=str(path), expected="a PDF written by this tool")
    try:
        with path.open("rb") as fh:
            head = fh.read(5)
    except OSError as exc:
        raise InputError(f"cannot read the report: {exc.strerror or exc}", given=str(path)) from None
    if head != b"%PDF-":
        raise InputError("not a PDF file", given=str(path), expected="a PDF written by this tool")
    log = logging.getLogger("pypdf")
    level = log.level
    log.setLevel(logging.ERROR)  # pypdf's repair chatter is not the user's business; failures still raise
    try:
        reader = PdfReader(str(path), strict=False)
        found = reader.attachments
        return {name: bytes(copies[0]) for name, copies in found.items() if copies}
    except (PdfReadError, OSError, ValueError, KeyError, TypeError, AttributeError) as exc:
        raise InputError(f"cannot read the report as a PDF: {exc}", given=str(path)) from None
    finally:
        log.setLevel(level)


def attached_case_and_result(pdf_path: str | Path) -> tuple[str, str, dict]:
    """(case file name, case text, result dict) attached to a report."""
    files = read_attachments(pdf_path)
    results = [n for n in files if n.endswith(RESULT_SUFFIX)]
    if len(results) != 1:
        raise InputError("the report carries no attached result", given=str(pdf_path),
                         expected=f"one attachment named '*{RESULT_SUFFIX}'")
    try:
        result = json.loads(files[results[0]].decode("utf-8"))
    except (UnicodeDecodeError, ValueError) as exc:
        raise InputError(f"the attached result is not JSON: {exc}", given=results[0]) from None
    if not isinstance(result, dict):
        raise InputError("the attached result is not a JSON object", given=results[0])
    source = result.get("source")
    if isinstance(source, str) and Path(source.replace("\\", "/")).name in files:
        case_name = Path(source.replace("\\", "/")).name
    else:
        others = [n for n in files if n != results[0]]
        if len(others) != 1:
            raise InputError("the report carries no attached case file", given=str(pdf_path),
                             expected="the case file as entered, attached beside the result")
        case_name = others[0]
    try:
        case_text = files[case_name].decode("utf-8")
    except UnicodeDecodeError as exc:
        raise InputError(f"the attached case file is not UTF-8 text: {exc}", given=case_name) from None
    return case_name, case_text, result


def _same_pressure(a, b) -> bool:
    if a is None or b is None:
        return a is None and b is None
    if not (isinstance(a, (int, float)) and isinstance(b, (int, float))):
        return False
    if not (math.isfinite(a) and math.isfinite(b)):
        return False
    return abs(a - b) <= RELATIVE_TOLERANCE * max(abs(a), abs(b))


def _pa(x) -> str:
    return "none" if x is None else f"{x!r} Pa (absolute)"


def verify_report(pdf_path: str | Path) -> tuple[bool, str]:
    """Re-run the case attached to `pdf_path`; (True, message) if it agrees with the attached result."""
    from screening.screen import screen_text

    case_name, case_text, attached = attached_case_and_result(pdf_path)
    fresh = screen_text(case_text, case_name)

    sha = hashlib.sha256(case_text.encode("utf-8")).hexdigest()
    checks = [
        ("case text SHA-256", attached.get("input_sha256"), sha, attached.get("input_sha256") == sha),
        ("verdict", attached.get("verdict"), fresh["verdict"], attached.get("verdict") == fresh["verdict"]),
        ("peak pressure", _pa(attached.get("peak_pressure_pa")), _pa(fresh["peak_pressure_pa"]),
         _same_pressure(attached.get("peak_pressure_pa"), fresh["peak_pressure_pa"])),
    ]
    agree = all(ok for *_, ok in checks)
    lines = [f"{'AGREES' if agree else 'DISAGREES'}: {Path(pdf_path).name} (case {case_name}; "
             f"attached result of tool {attached.get('tool_version')}, re-run with {fresh['tool_version']})"]
    for label, was, now, ok in checks:
        lines.append(f"  {label:<18} attached: {was}")
        lines.append(f"  {'':<18} re-run:   {now}   {'same' if ok else 'DIFFERENT'}")
    return agree, "\n".join(lines)
