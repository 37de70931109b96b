"""The batch PDF: a summary page (counts, a margin chart, the table), then a detail section for every
vessel that is not within rating (all of them with ``--all-details``). A view of finished results.

It reuses the single report's safe Jinja environment, local-only URL fetcher and number helpers, and
takes its cautions from the same module. Long tables are laid out one table per page of rows so the
layout engine never has to break one long table.

The document is a sequence of units, each starting on a new page: the summary, each page of the
table, each detail section, the assumptions. A long document is laid out in a few parts of
consecutive units, in forked workers where the machine has several cores, and the parts' PDFs are
joined in order. Each part is told the page number it starts at and the document's page count,
predicted as one page per unit; after the layout each part's real page count is compared with the
prediction and, where they differ, every part is laid out again with the counted numbers, so the
footers' "page N of M" always hold. The partition depends on the input alone, never on the number
of cores, so the same input gives the same bytes on any machine.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import io
import json
import os
from pathlib import PurePath

import numpy as np

from screening import parallel
from screening.cautions import ASSUMPTIONS, CAUTION, SHORT_CAUTION, ceiling_name
from screening.outputs.actions import action_line
from screening.outputs.listing import ranked
from screening.outputs.plot import drawable_models, plot_png, png_data_uri, svg_data_uri
from screening.outputs.report import (
    VERDICTS,
    ReportRenderError,
    _environment,
    _make_fetcher,
    _source_date_epoch,
    model_title,
    templates_dir,
    tolerance_bands,
)
from screening.outputs.text import fmt_pressure, reasons_shown, visible
from screening.result import Result
from screening.units import format_percent, format_pressure, format_temperature

TEMPLATE = "batch.html.j2"
#: The vessel listing: lines of body per page, and its width in characters (7.2 pt DejaVu Sans Mono,
#: 4.33 pt a character, on the 176 mm text width of an A4 page with the report's margins: 115).
LINES_PER_PAGE = 60
LISTING_WIDTH = 115
#: Listing columns: key in the row's cells, header (two lines), alignment; the id and the gas name
#: may wrap onto continuation lines when the listing would be wider than LISTING_WIDTH.
_COLUMNS = (("row", ("", "Row"), ">"), ("id", ("", "Id"), "<"), ("description", ("", "Description"), "<"),
            ("location", ("", "Location"), "<"), ("verdict", ("", "Verdict"), "<"),
            ("gas", ("", "Gas"), "<"), ("peak", ("Peak", "pressure"), ">"), ("rated", ("Rated", "pressure"), ">"),
            ("margin", ("", "Margin"), ">"), ("t_max", ("Highest gas", "temperature"), ">"))
#: Columns that may wrap onto continuation lines, the first narrowed first.
_WRAPPING = ("description", "location", "gas", "id")
#: Narrowest width a wrapping column is narrowed to [characters].
_NARROWEST = {"description": 14, "location": 10, "gas": 8, "id": 8}
_GAP = "  "
#: Above this many units (pages, as predicted) the document is laid out in PARTS parts.
SPLIT_ABOVE = 24
#: Number of parts of a long document: a few per core of a two-core machine, so that parts of unequal
#: cost still share the cores well; every part also pays a fixed cost (its fonts, ~0.7 s).
PARTS = 4
#: Above this many rows the margin chart is a histogram rather than one bar per vessel.
BAR_CHART_MAX = 150


def _margin_chart(results: list[dict]) -> str:
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib.backends.backend_svg import FigureCanvasSVG
    from matplotlib.figure import Figure

    rows = [r for r in results if r.get("margin_fraction") is not None]
    rc = {"svg.hashsalt": "screening-batch", "svg.fonttype": "none", "font.family": "DejaVu Sans",
          "font.size": 8, "hatch.color": "#000000"}
    with matplotlib.rc_context(rc):
        fig = Figure(figsize=(7.0, 2.8), dpi=100)
        FigureCanvasSVG(fig)
        ax = fig.add_subplot(1, 1, 1)
        if not rows:
            ax.text(0.5, 0.5, "no screened vessel has a margin", ha="center", va="center", transform=ax.transAxes)
            ax.set_axis_off()
        elif len(rows) <= BAR_CHART_MAX:
            rows = ranked(rows)         # the listing's order: by severity, then by margin
            m = np.array([100 * r["margin_fraction"] for r in rows])
            req = np.array([100 * (r.get("required_margin_fraction") or 0.0) for r in rows])
            hatch = {"over": "xxxx", "low-margin": "////", "within": ""}
            for i, r in enumerate(rows):
                ax.bar(i, m[i], color="white", edgecolor="black", linewidth=0.6, hatch=hatch.get(r["verdict"], ".."))
            ax.step(np.arange(len(rows)) + 0.5, req, where="pre", color="black", linestyle="--", linewidth=0.8,
                    label="required margin")
            ax.set_xticks(range(len(rows)))
            ax.set_xticklabels([str(r.get("id"))[:10] for r in rows], rotation=90, fontsize=5 if len(rows) > 40 else 7)
            ax.legend(loc="upper left", frameon=False)
            ax.set_xlabel("vessel (cross-hatched: over; hatched: low margin; plain: within)")
        else:
            m = np.array([100 * r["margin_fraction"] for r in rows])
            ax.hist(m, bins=50, color="white", edgecolor="black", linewidth=0.6, hatch="////")
            ax.set_xlabel("margin to rated pressure [%] (negative: over the rating)")
            ax.set_ylabel("vessels")
        ax.axhline(0.0, color="black", linewidth=0.8) if len(rows) <= BAR_CHART_MAX else ax.axvline(0.0, color="black")
        if rows and len(rows) <= BAR_CHART_MAX:
            ax.set_ylabel("margin to rated [%]")
        fig.tight_layout()
        buf = io.StringIO()
        fig.savefig(buf, format="svg", metadata={"Date": None, "Creator": None})
    return buf.getvalue()


def _detail(r: Result | dict, location: str = "") -> dict:
    """One row's detail section: a full result, or an input-error record (a plain dict)."""
    if not isinstance(r, Result):
        code = r["verdict"]
        v = VERDICTS.get(code, dict(mark="?", label="Input error: the row could not be read", line=""))
        return dict(row=str(r["row"]), id=visible(r["id"] or "—"), code=code, label=v["label"], mark=v["mark"],
                    css="v-" + (code if code in VERDICTS else "unknown"),
                    reasons=[visible(x) for x in r["reasons"]],
                    description=visible(r.get("description") or ""), location=visible(location),
                    action=None, warnings=[visible(w["message"]) for w in r["warnings"]], figures=[], models=[],
                    plot=None)
    code = r.verdict
    v = VERDICTS.get(code, dict(mark="?", label="Input error: the row could not be read", line=""))
    d = dict(row=str(r.row), id=visible(r.id or "—"), code=str(code), label=v["label"], mark=v["mark"],
             css="v-" + (code if code in VERDICTS else "unknown"), reasons=reasons_shown(r),
             description=visible(r.description or ""), location=visible(location),
             action=action_line(r), warnings=[visible(w.message) for w in r.warnings], figures=[], models=[],
             plot=None)
    pu = r.display_units.get("pressure", "bar(g)")
    tu = r.display_units.get("temperature", "degC")
    atm = r.site.atmospheric_pressure_pa
    P = lambda p: fmt_pressure(r, p) if r.inputs else format_pressure(p, pu, atm)  # noqa: E731
    lim, fill = r.limits, r.fill
    d["figures"] = [
        ("Gas", visible(r.gas.name)),
        ("Fill", f"{P(fill.pressure_pa)} at {format_temperature(fill.temperature_k, tu)}"
         if fill.pressure_pa is not None else f"{fill.mass_kg or 0:.3f} kg"),
        ("Worst-case gas temperature", f"{format_temperature(r.worst_case_temperature_k, tu)} "
                                       f"({r.worst_case_basis})"),
    ]
    bands = tolerance_bands(r)
    if bands:
        d["figures"] += [("Reading tolerances", bands),
                         ("Peak pressure, bounding the tolerances", P(r.peak_pressure_pa)),
                         ("Nominal peak pressure", P(r.nominal_peak_pressure_pa))]
    else:
        d["figures"].append(("Peak pressure", P(r.peak_pressure_pa)))
    d["figures"] += [("Rated pressure", P(r.rated_pressure_pa))]
    if r.relief_set_pressure_pa is not None:
        d["figures"].append(("Relief set pressure", P(r.relief_set_pressure_pa)))
    d["figures"] += [
        ("Margin to rated", format_percent(r.margin_fraction)),
    ]
    if r.relief_set_pressure_pa is not None:
        d["figures"].append(("Margin to relief set pressure", format_percent(r.relief_margin_fraction)))
    d["figures"] += [
        ("Required margin", format_percent(r.required_margin_fraction)),
        ("Governing model", model_title(r, r.governing_model)),
        (f"Highest gas temperature ({ceiling_name(r.relief_set_pressure_pa, r.rated_pressure_pa)} reached"
         + (", tolerances taken off)" if bands else ")"), format_temperature(lim.max_gas_temperature_k, tu)),
        ("Highest fill pressure" + (" (tolerances taken off)" if bands else ""), P(lim.max_fill_pressure_pa)),
    ]
    d["models"] = [(model_title(r, n), P(m.peak_pressure_pa) if m.applicable else "not applicable: " + m.note)
                   for n, m in r.models.items()]
    # the curves come with the result (the batch computes them for the detail rows); without them the section
    # keeps its numbers and has no plot
    if r.curves and drawable_models(r):
        d["plot"] = png_data_uri(plot_png(r))
    return d


def _detail_positions(results: list[dict], all_details: bool) -> list[int]:
    """Positions in `results` of the rows that get a detail section, worst first."""
    from screening.outputs.listing import ranked

    position = {id(r): i for i, r in enumerate(results)}
    return [position[id(r)] for r in ranked(results) if all_details or r["verdict"] != "within"]


def _units(results: list[dict], common: dict, all_details: bool) -> list[tuple]:
    """The document's units in order: ("summary",), ("table", page index), ("detail", position of the
    row in `results`, first detail?), ("assumptions",)."""
    details = _detail_positions(results, all_details)
    return ([("summary",)] + [("table", k) for k in range(len(common["pages"]))]
            + [("detail", j, k == 0) for k, j in enumerate(details)] + [("assumptions",)])


def _listing(rows: list[dict]) -> tuple[list[str], list[tuple[str, list[str]]]]:
    """The vessel listing of `rows` (dicts of cell texts) as fixed-width text: its two header lines and
    a rule, and for each row its class and its lines (one, or more where a long id or gas name wraps)."""
    import textwrap

    columns = [c for c in _COLUMNS if c[0] not in ("location", "description") or any(r.get(c[0]) for r in rows)]
    keys = [k for k, _, _ in columns]
    width = {k: max([len(h) for h in head] + [len(r[k]) for r in rows]) for k, head, _ in columns}
    over = sum(width.values()) + len(_GAP) * (len(keys) - 1) - LISTING_WIDTH
    while over > 0:                      # narrow the widest wrapping column, one character at a time
        narrowable = [c for c in _WRAPPING if c in width and width[c] > _NARROWEST[c]]
        if not narrowable:
            break
        k = max(narrowable, key=lambda c: (width[c] - _NARROWEST[c], -_WRAPPING.index(c)))
        width[k] -= 1
        over -= 1

    def line(values: dict) -> str:
        return _GAP.join(values[k].rjust(width[k]) if a == ">" else values[k].ljust(width[k])
                         for k, _, a in columns).rstrip()

    head = [line({k: h[i] for k, h, _ in columns}) for i in (0, 1)]
    head.append("\u2500" * (sum(width.values()) + len(_GAP) * (len(keys) - 1)))
    body = []
    for r in rows:
        parts = {k: (textwrap.wrap(r[k], width[k], break_long_words=True, break_on_hyphens=False) or [""])
                 if k in _WRAPPING else [r[k]] for k in keys}
        n = max(len(v) for v in parts.values())
        body.append(("vr-" + r["verdict"], [line({k: (parts[k][i] if i < len(parts[k]) else "") for k in keys})
                                            for i in range(n)]))
    return head, body


def row_texts(inv, defaults: dict | None = None) -> dict[int, dict[str, str]]:
    """Description, site name and location of every inventory row as written, by its row number: the
    rows screened as arrays keep no text, so the listing takes it from the inventory (a cell left empty
    takes the defaults file's value)."""
    default_site = str(((defaults or {}).get("site") or {}).get("name") or "")
    default_description = str((defaults or {}).get("description") or "")
    where = {}
    for i, col in enumerate(inv.columns):
        if col.key in ("description", "site.name") or col.name.strip().lower() == "location":
            where[i] = "location" if col.name.strip().lower() == "location" else col.key
    out = {}
    for number, cells in inv.rows:
        row = {"description": default_description, "site.name": default_site, "location": ""}
        for i, key in where.items():
            value = (cells[i] if i < len(cells) else "") or ""
            if value.strip():
                row[key] = value.strip()
        out[number] = row
    return out


def _with_texts(results: list[dict], texts: dict | None) -> list[dict]:
    """The rows with the inventory's description, site name and location added where the row lacks them."""
    if not texts:
        return results
    out = []
    for r in results:
        t = texts.get(r.get("row"))
        if t is None:
            out.append(r)
            continue
        r = dict(r)
        if not r.get("description") and t["description"]:
            r["description"] = t["description"]
        if not r.get("location") and t["location"]:
            r["location"] = t["location"]
        if t["site.name"] and not (r.get("site") or {}).get("name"):
            r["site"] = dict(r.get("site") or {}, name=t["site.name"])
        out.append(r)
    return out


def site_name(results: list[dict], site: str | None = None) -> str | None:
    """The site the batch PDF is titled with: the one given (``--site``), otherwise the site name every
    screened row shares (from a column or the defaults file); None where the rows name none or several."""
    if site:
        return site
    names = {str((r.get("site") or {}).get("name") or "") for r in results if r.get("verdict") != "input-error"}
    names.discard("")
    return names.pop() if len(names) == 1 else None


def _common(results: list[dict], *, source: str, all_details: bool, report_date: _dt.date,
            site: str | None = None) -> dict:
    """What every part of the document shares: title, counts, the listing's pages, cautions."""
    from screening.outputs.listing import ORDER, cells, ranked, summary

    s = summary(results)
    rows = []
    for r in ranked(results):
        c = cells(r)
        rows.append(dict(row=str(r["row"]), id=visible(r.get("id") or "\u2014"),
                         description=visible(r.get("description") or ""), location=visible(r.get("location") or ""),
                         verdict=r["verdict"], gas=visible(c["gas"]),
                         peak=c["peak"], rated=c["rated"], margin=c["margin"], t_max=c["t_max"]))
    head, body = _listing(rows)
    pages: list[list[tuple[str, str]]] = []
    for cls, lines in body:              # a row's lines stay on one page
        if not pages or len(pages[-1]) + len(lines) > LINES_PER_PAGE:
            pages.append([])
        pages[-1] += [(cls, text) for text in lines]
    site = site_name(results, site)
    name = PurePath(str(source).replace("\\", "/")).name
    return dict(
        title=f"Batch pressure screening \u2014 {visible(site) if site else visible(name)}", source=visible(name),
        site=visible(site) if site else None,
        report_date=report_date.isoformat(), counts=[(v, s["counts"][v]) for v in ORDER], rows=s["rows"],
        duplicates=s["duplicate_ids"], listing_head=head, pages=pages,
        all_details=all_details, caution=CAUTION, short_caution=SHORT_CAUTION, assumptions=list(ASSUMPTIONS),
    )


def _part_view(units: list[tuple], common: dict, results: list[dict], full, *, first_page: int | None = None,
               total_pages: int | None = None) -> dict:
    """The template's view of consecutive units. `first_page` and `total_pages` number the footers of a
    part of a longer document (None: the document is this part alone and counts its own pages)."""
    items = []
    for k, u in enumerate(units):
        item = dict(kind=u[0], new_page=k > 0)
        if u[0] == "summary":
            item["chart"] = svg_data_uri(_margin_chart(results))
            bars = sum(1 for r in results if r.get("margin_fraction") is not None) <= BAR_CHART_MAX
            item["chart_caption"] = ("Margin to the rated pressure per vessel, worst first; dashed: the required "
                                     "margin." if bars else "How many vessels have each margin to the rated "
                                     "pressure; left of the zero line: over the rating.")
        elif u[0] == "table":
            item.update(lines=common["pages"][u[1]], continued=u[1] > 0)
        elif u[0] == "detail":
            row = results[u[1]]
            r = full(u[1]) if full is not None else row
            item.update(d=_detail(r, row.get("location") or ""), heading=u[2])
        items.append(item)
    return dict(common, units=items, first_page=first_page, total_pages=total_pages)


def build_view(results: list[dict], *, source: str, all_details: bool, report_date: _dt.date,
               full=None, site: str | None = None) -> dict:
    """The template's view of the whole document as one part. ``full(i)``, where given, gives row i's
    full result for its detail section (the batch keeps only what the table needs for most rows)."""
    results, full = _as_rows(results, full)
    common = _common(results, source=source, all_details=all_details, report_date=report_date, site=site)
    return _part_view(_units(results, common, all_details), common, results, full)


def _split(units: list[tuple]) -> list[list[tuple]]:
    """Consecutive parts of near-equal length (one part for a short document)."""
    if len(units) <= SPLIT_ABOVE:
        return [units]
    bounds = [round(k * len(units) / PARTS) for k in range(PARTS + 1)]
    return [units[a:b] for a, b in zip(bounds, bounds[1:])]


#: The job the parts are laid out for; set before the workers are forked, which inherit it.
_JOB: dict = {}


def _pdf(view: dict, report_date: _dt.date, tag: str) -> tuple[bytes, int]:
    """(PDF bytes, page count) of a view. The dates in the PDF are the report date and its identifier
    is taken from the view's source, date and `tag`, so the same input gives the same bytes."""
    import weasyprint
    from weasyprint.urls import FatalURLFetchingError

    folder = templates_dir()
    html_text = _environment(folder).get_template(TEMPLATE).render(v=view)
    stamp = _dt.datetime(report_date.year, report_date.month, report_date.day, tzinfo=_dt.timezone.utc)
    identifier = hashlib.sha256(f"{view['source']}|{view['report_date']}|{tag}".encode()).hexdigest()[:32]
    try:
        with _source_date_epoch(int(stamp.timestamp())):
            doc = weasyprint.HTML(string=html_text, base_url=str(folder) + os.sep,
                                  url_fetcher=_make_fetcher(folder)).render()
            return doc.write_pdf(pdf_identifier=identifier.encode("ascii")), len(doc.pages)
    except FatalURLFetchingError as exc:
        raise ReportRenderError(str(exc)) from exc.__cause__


def _render_part(spec: tuple) -> tuple[bytes, int]:
    """(PDF bytes, page count) of part `k` of the job, its footers numbered from `first` of `total`."""
    k, first, total = spec
    job = _JOB
    view = _part_view(job["parts"][k], job["common"], job["results"], job["full"], first_page=first,
                      total_pages=total)
    return _pdf(view, job["date"], f"part {k}")


def _join(pdfs: list[bytes]) -> bytes:
    """The parts' PDFs as one document: pages and bookmarks in order, the first part's metadata."""
    from pypdf import PdfReader, PdfWriter

    readers = [PdfReader(io.BytesIO(b)) for b in pdfs]
    writer = PdfWriter()
    for r in readers:
        writer.append(r)
    writer.add_metadata(dict(readers[0].metadata or {}))
    out = io.BytesIO()
    writer.write(out)
    return out.getvalue()


def _as_rows(results: list, full):
    """(rows, full): the listing's rows and the accessor of the rows' full results. Where the results are
    full ones (a `Result`, or an input-error record), each row is the result's summary record with its
    row, description and site name, and `full` (unless given) gives the results themselves."""
    if not any(isinstance(r, Result) for r in results):
        return results, full
    rows = [dict(r.summary_record(), row=r.row, description=r.description,
                 site={"name": r.site.name, "atmospheric_pressure_pa": r.site.atmospheric_pressure_pa})
            if isinstance(r, Result) else r for r in results]
    return rows, full if full is not None else list(results).__getitem__


def render_batch_pdf_bytes(results: list[dict], *, source: str, all_details: bool = False,
                           report_date: _dt.date | None = None, full=None, site: str | None = None) -> bytes:
    results, full = _as_rows(results, full)
    report_date = report_date or _dt.date.today()
    common = _common(results, source=source, all_details=all_details, report_date=report_date, site=site)
    units = _units(results, common, all_details)
    parts = _split(units)
    if len(parts) == 1:
        return _pdf(_part_view(units, common, results, full), report_date, "whole")[0]
    _JOB.update(parts=parts, common=common, results=results, full=full, date=report_date)
    try:
        counts = [len(p) for p in parts]      # predicted: one page per unit
        for _ in range(3):
            firsts = [1 + sum(counts[:k]) for k in range(len(parts))]
            out = parallel.map_items(_render_part, [(k, firsts[k], sum(counts)) for k in range(len(parts))],
                                     min_items=2)
            got = [n for _, n in out]
            if got == counts:
                return _join([b for b, _ in out])
            counts = got                       # a unit ran over a page: number the pages again
    finally:
        _JOB.clear()
    # the counts would not settle (never seen): lay the document out as one part
    return _pdf(_part_view(units, common, results, full), report_date, "whole")[0]


def _detail_results(results: list[dict], all_details: bool, full) -> dict[int, Result | dict]:
    """Full results (with the plot curves the batch computed) of the rows that get a detail section, by
    position in `results`."""
    return {j: full(j) if full is not None else results[j] for j in _detail_positions(results, all_details)}


#: The run record a batch PDF carries beside its inventory ends so (a single report's result: ".result.json").
RUN_SUFFIX = ".batch.json"
#: The command options recorded in the run record, as the batch reads them from its arguments.
RUN_OPTIONS = ("sheet", "decimal", "sort", "all_details", "site")


def run_listing(results: list[dict]) -> dict:
    """What the run record says of the results: row count, counts by verdict, and the listing (row, id,
    verdict) in the document's order, worst first."""
    from screening.outputs.listing import ranked, summary

    s = summary(results)
    return dict(rows=s["rows"], counts=s["counts"],
                listing=[[r["row"], r.get("id"), r["verdict"]] for r in ranked(results)])


def _batch_attachments(results: list[dict], inputs: dict, all_details: bool,
                       report_date: _dt.date) -> list[tuple[str, bytes, str]]:
    """(name, bytes, description) of what the batch PDF was made from: the inventory file, the defaults
    file if one was given (each under its file name only), and the run record (JSON)."""
    from pathlib import Path

    from screening import __version__
    from screening.errors import InputError

    def name_of(path) -> str:
        return Path(str(path).replace("\\", "/")).name

    def read(path, what: str) -> bytes:
        try:
            return Path(path).read_bytes()
        except OSError as exc:
            raise InputError(f"cannot read the {what} again to attach it to the PDF: {exc.strerror or exc}",
                             file=str(path)) from None

    inv = Path(inputs["inventory"])
    inv_bytes = read(inv, "inventory")
    out = [(name_of(inv), inv_bytes, "Inventory as entered")]
    defaults = None
    if inputs.get("defaults"):
        d_bytes = read(inputs["defaults"], "defaults file")
        d_name = name_of(inputs["defaults"])
        if d_name == out[0][0]:
            d_name = "defaults-" + d_name
        out.append((d_name, d_bytes, "Defaults file as entered"))
        defaults = dict(name=d_name, sha256=hashlib.sha256(d_bytes).hexdigest())
    options = {k: inputs.get(k) for k in RUN_OPTIONS}
    options["all_details"] = bool(all_details)
    record = dict(record="screening batch run", tool_version=__version__, report_date=report_date.isoformat(),
                  inventory=dict(name=out[0][0], sha256=hashlib.sha256(inv_bytes).hexdigest()),
                  defaults=defaults, options=options, **run_listing(results))
    text = json.dumps(record, ensure_ascii=False, allow_nan=False, separators=(",", ":"))
    out.append((Path(out[0][0]).stem + RUN_SUFFIX, text.encode("utf-8"),
                "Batch run: tool version, report date, options, counts and listing (JSON)"))
    return out


def _attach(pdf: bytes, attachments: list[tuple[str, bytes, str]]) -> bytes:
    """The PDF with the attachments added as an incremental update (its pages untouched)."""
    from pypdf import PdfReader, PdfWriter
    from pypdf.generic import TextStringObject

    writer = PdfWriter(PdfReader(io.BytesIO(pdf)), incremental=True)
    for name, data, description in attachments:
        writer.add_attachment(name, data).description = TextStringObject(description)
    out = io.BytesIO()
    writer.write(out)
    return out.getvalue()


def render_batch_report(results: list[dict], out_path, *, source: str, all_details: bool = False,
                        report_date: _dt.date | None = None, quiet: bool = True, full=None,
                        site: str | None = None, texts: dict | None = None, inputs: dict | None = None):
    """Write the batch PDF atomically (temporary file beside the target, then moved into place).

    `inputs`, where given, are the batch's arguments (``inventory``, ``defaults`` paths and the options in
    RUN_OPTIONS): the PDF then carries the inventory, the defaults file and a run record, so that
    `screening verify` can screen the inventory again and compare."""
    from screening.outputs.files import atomic_writer, check_target

    check_target(out_path, "PDF report")
    results, full = _as_rows(results, full)
    results = _with_texts(results, texts)
    report_date = report_date or _dt.date.today()
    pdf = render_batch_pdf_bytes(results, source=source, all_details=all_details, report_date=report_date,
                                 full=full, site=site)
    if inputs is not None:
        pdf = _attach(pdf, _batch_attachments(results, inputs, all_details, report_date))
    with atomic_writer(out_path, "PDF report", binary=True) as fh:
        fh.write(pdf)
    return out_path
