"""What the page's worker processes run: one vessel's answer, a report, an inventory.

These functions run in the warm process pools of :mod:`screening.web.runner` (the engine and its
equation-of-state objects are not shared between threads; each worker process has its own). They call
the project's own reader, engine and views and return plain, picklable data: every number shown on the
page comes from the engine's result, formatted by the report's view (:func:`report.build_view`).
"""

from __future__ import annotations

import base64
import datetime as _dt
import json
import os
import time

from screening.errors import InputError
from screening.result import Result

#: A small case screened once by every worker as it starts, so that the first answer finds the
#: equations of state, the plot and the report's view loaded. (A warm-up only; nothing is shown.)
WARM_CASE = """id = "warm-up"
[vessel]
water_capacity = "50 L"
rated_pressure = "300 bar(g)"
[fill]
gas = "nitrogen"
pressure = "200 bar(g)"
temperature = "15 degC"
[exposure]
gas_temperature = "65 degC"
"""


def warm() -> float:
    """Import and exercise the engine and the views (the fork server does this once, see
    `screening.web.warmed`); return the seconds taken."""
    t0 = time.perf_counter()
    import screening.batch  # noqa: F401
    import screening.engine  # noqa: F401

    answer(WARM_CASE, "warm-up.toml")
    return time.perf_counter() - t0


def started(inventory: bool = False) -> int:
    """A worker's first task (it starts the process); an inventory worker leaves the other core to the
    vessel answers (the batch would otherwise fork a worker per core for a large inventory)."""
    if inventory:
        os.environ["SCREENING_WORKERS"] = "1"
    return os.getpid()


def _svg_of(uri: str | None) -> str | None:
    if not uri:
        return None
    head, _, data = uri.partition(",")
    return base64.b64decode(data).decode("utf-8") if head.endswith(";base64") else None


def answer(text: str, source: str) -> dict:
    """One vessel: {"result", "view", "plot_svg", "phase_svg", "seconds"} or {"error": InputError}."""
    from screening.engine import screen_text
    from screening.outputs.report import build_view

    t0 = time.perf_counter()
    try:
        result = screen_text(text, source)
    except InputError as exc:
        return {"error": _error_fields(exc)}
    view = build_view(result, text, _dt.date.today())
    # the plots travel as SVG text and are served from this server (no data: URIs under the page's
    # content security policy)
    plot_svg = _svg_of(view.pop("plot_uri", None))
    phase = view.get("phase")
    phase_svg = _svg_of(phase.pop("plot_uri", None)) if phase else None
    return {"result": result, "view": view, "plot_svg": plot_svg, "phase_svg": phase_svg,
            "seconds": time.perf_counter() - t0}


def _error_fields(exc: InputError) -> dict:
    """An InputError as its fields (a subclass such as UnknownGas need not survive pickling on its own)."""
    return dict(message=exc.message, file=exc.file, key=exc.key, row=exc.row, column=exc.column,
                given=None if exc.given is None else str(exc.given), expected=exc.expected)


#: At most this many messages for one form (one a field).
FORM_ERRORS_MAX = 8


def form_errors(values: dict, source: str) -> list[dict]:
    """Every field of a form that the case reader refuses, each with its first message, so that one round trip
    shows them all: the form's case read, the field its message names taken out of the way (form.stand_in: a
    value the reader takes where the field is required, else empty), read again, until it reads, a message names
    no field or a field named before, or FORM_ERRORS_MAX messages. Each as InputError fields
    (:func:`_error_fields`)."""
    from screening.inputs.case import parse_case_text
    from screening.web import form

    values = dict(values)
    got: list[dict] = []
    seen: set[str] = set()
    while len(got) < FORM_ERRORS_MAX:
        try:
            parse_case_text(form.case_text(values), source)
        except InputError as exc:
            field = form.field_for_key(exc.key, values)
            if field is not None and field.name in seen:
                break
            got.append(_error_fields(exc))
            if field is None:
                break
            seen.add(field.name)
            values.update(form.stand_in(field.name))
            continue
        break
    return got


def report_pdf(result: Result, text: str, date_iso: str) -> bytes:
    """The PDF report of a screened vessel (the same bytes `screening check --pdf` writes that day)."""
    from screening.outputs.report import render_pdf_bytes

    return render_pdf_bytes(result, text, report_date=_dt.date.fromisoformat(date_iso))


# ----------------------------------------------------------------------------- inventories

def _status(folder: str, **state) -> None:
    """The job's state for the page's progress poll, written whole (replace, never a partial file)."""
    path = os.path.join(folder, "status.json")
    tmp = path + ".part"
    with open(tmp, "w", encoding="utf-8") as fh:
        json.dump(state, fh)
    os.replace(tmp, path)


#: Inventories up to this many rows get their batch PDF at once; a larger one on request (its PDF
#: details every vessel that is not within its rating: thousands of pages take minutes).
PDF_AT_ONCE_ROWS = 2000


def inventory(folder: str, filename: str, sheet: str | None, date_iso: str, pdf: bool | None = None) -> dict:
    """Screen the inventory file `folder/filename` with the batch engine and write its outputs.

    Progress goes to `folder/status.json` as stages; the counts and the ranked list of the vessels
    (worst first, every row kept) to `folder/rows.json`; the downloads beside them. The batch PDF is
    written when `pdf` is true, or (None) for an inventory of up to PDF_AT_ONCE_ROWS rows; otherwise it
    is offered ("pdf": "offered"). `pdf` alone (with the files already there) writes only the PDF.
    Returns the final status. An unreadable file is a final status with its one message.
    """
    from screening import batch
    from screening.inputs.inventory import check_pressure_bases, read_inventory
    from screening.web import batch_outputs

    t0 = time.perf_counter()
    only_pdf = bool(pdf) and os.path.exists(os.path.join(folder, "rows.json"))
    previous = {}
    if only_pdf:
        with open(os.path.join(folder, "status.json"), encoding="utf-8") as fh:
            previous = json.load(fh)
    made = list(previous.get("made") or [])
    _status(folder, **dict(previous, stage="reading", message="Reading the file", seconds=0.0))
    cwd = os.getcwd()
    try:
        os.chdir(folder)   # messages name the file as uploaded, not the server's folder
        try:
            inv = read_inventory(filename, sheet=sheet)
            check_pressure_bases(inv.columns, None, inv.source)
        except InputError as exc:
            state = dict(stage="failed", message=str(exc), seconds=time.perf_counter() - t0)
            _status(folder, **state)
            return state
        _status(folder, **dict(previous, stage="screening", message=f"Screening {len(inv.rows)} rows",
                               rows=len(inv.rows), seconds=time.perf_counter() - t0))
        run = batch.BatchRun(inv, None, quiet=True)
        results = run.results
        s = batch.summary(results)
        stem = os.path.splitext(filename)[0]
        if not only_pdf:
            listing = [dict(row=r["row"], id=r.get("id"), verdict=r["verdict"], **batch.cells(r),
                            reason=(r.get("reasons") or [""])[0] if r["verdict"] != "within" else "",
                            warnings=[w["message"] for w in r.get("warnings") or []])
                       for r in batch.ranked(results)]
            with open(os.path.join(folder, "rows.json"), "w", encoding="utf-8") as fh:
                json.dump({"summary": s, "rows": listing}, fh, ensure_ascii=False)
            for kind in batch_outputs.formats():
                if kind == "pdf":
                    continue
                _status(folder, stage="writing", message=f"Writing the {kind.upper()} file", rows=len(results),
                        summary=s, made=made, seconds=time.perf_counter() - t0)
                name = f"{stem}.result.{kind}"
                batch_outputs.write(kind, inv, run, name, date_iso)
                made.append(name)
        want_pdf = pdf if pdf is not None else len(results) <= PDF_AT_ONCE_ROWS
        offered = None
        if want_pdf:
            _status(folder, stage="writing", message="Writing the PDF report", rows=len(results), summary=s,
                    made=made, seconds=time.perf_counter() - t0)
            name = f"{stem}.report.pdf"
            batch_outputs.write("pdf", inv, run, name, date_iso)
            made.append(name)
        else:
            offered = "offered"
    finally:
        os.chdir(cwd)
    state = dict(stage="done", message="Done", rows=len(results), summary=s, made=made,
                 seconds=time.perf_counter() - t0 + float(previous.get("seconds") or 0.0), pdf=offered)
    _status(folder, **state)
    return state


def labels() -> dict:
    """Words the pages show that live with the engine and the report: the finishes of the exposure data
    (value for the case file, words) and the verdict words of the report."""
    from screening.outputs.report import VERDICTS
    from screening.physics.exposure import finishes

    return {"finishes": [(f.name.replace("_", " "), f.label or f.name.replace("_", " ")) for f in finishes().values()],
            "verdicts": {code: w["label"] for code, w in VERDICTS.items()}}
