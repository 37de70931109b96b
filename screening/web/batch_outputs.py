"""The inventory page's downloads, written by the batch's own writers.

The one place the page asks which files a batch can write: the CSV and JSON of `screening batch`, its
PDF report, and an XLSX workbook where the batch module offers one (``write_xlsx``). Switching to a
new writer means changing this module only.
"""

from __future__ import annotations

import datetime as _dt

#: Download kinds in the order the page lists them, with their media types.
MEDIA = {
    "csv": "text/csv; charset=utf-8",
    "xlsx": "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet",
    "json": "application/json",
    "pdf": "application/pdf",
}


def formats() -> list[str]:
    """The kinds this installation writes: csv, xlsx (where the batch has a writer for it), json, pdf."""
    from screening import batch

    return [k for k in MEDIA if k != "xlsx" or hasattr(batch, "write_xlsx")]


def write(kind: str, inv, run, path: str, date_iso: str) -> None:
    """Write the `kind` output of the screened inventory `inv` (`run`: its batch.BatchRun) to `path`."""
    from screening import batch

    if kind == "csv":
        batch.write_csv(inv, run.results, path)
    elif kind == "json":
        batch.write_json(run.results, path, full=run.full)
    elif kind == "xlsx":
        batch.write_xlsx(inv, run.results, path)  # type: ignore[attr-defined]
    elif kind == "pdf":
        from screening.outputs.batch_report import render_batch_report, row_texts

        # the inventory as uploaded (the page works in its folder) travels in the PDF, so that
        # `screening verify` can screen it again
        render_batch_report(run.results, path, source=inv.source, report_date=_dt.date.fromisoformat(date_iso),
                            quiet=True, full=run.detail, texts=row_texts(inv, None),
                            inputs={"inventory": inv.source, "sheet": inv.sheet})
    else:
        raise ValueError(f"unknown output kind {kind!r}")
