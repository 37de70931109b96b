"""The batch PDF: a summary page (counts, a margin chart, the table), then a detail section for every
vessel that is not within rating (all of them with ``--all-details``). A view of finished results.

It reuses the single report's safe Jinja environment, local-only URL fetcher and number helpers, and
takes its cautions from the same module. Long tables are laid out one table per page of rows so the
layout engine never has to break one long table.
"""

from __future__ import annotations

import datetime as _dt
import io
import os

import numpy as np

from screening import parallel
from screening.cautions import ASSUMPTIONS, CAUTION, SHORT_CAUTION
from screening.outputs.plot import drawable_models, plot_png, png_data_uri, svg_data_uri
from screening.outputs.report import (
    MODEL_TITLES,
    VERDICTS,
    ReportRenderError,
    _environment,
    _make_fetcher,
    templates_dir,
)
from screening.units import format_percent, format_pressure, format_temperature

TEMPLATE = "batch.html.j2"
ROWS_PER_PAGE = 40
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
            rows = sorted(rows, key=lambda r: r["margin_fraction"])
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


def _curves(r: dict) -> dict | None:
    """Isochore curves of a detail row from its result (grid as the single screening draws it)."""
    from screening.physics.eos.generalized import lee_kesler_pressure
    from screening.physics.eos.reference import reference_fluid

    t_fill, t_peak = r["fill"]["temperature_k"], r["worst_case_temperature_k"]
    t_lo = max(min(t_fill, t_peak) - 30.0, 1.0)
    t_top = max(t_peak, t_fill) + 25.0
    tmax = (r.get("limits") or {}).get("max_gas_temperature_k")
    if tmax is not None and tmax < t_peak + 80.0:
        t_top = max(t_top, tmax + 10.0)
    grid = np.linspace(t_lo, t_top, 61)
    out: dict = {"temperature_k": [float(t) for t in grid]}
    models = r["models"]
    ide = models.get("ideal") or {}
    out["ideal"] = ([float(ide["fill_molar_density_mol_m3"] * 8.314462618 * t) for t in grid]
                    if ide.get("applicable") else None)
    gen = models.get("generalized") or {}
    out["generalized"] = None
    if gen.get("applicable") and not gen.get("quantum_correction") and not gen.get("mixing_rule"):
        s = lee_kesler_pressure(gen["fill_molar_density_mol_m3"], grid, gen["pseudocritical_temperature_k"],
                                gen["pseudocritical_pressure_pa"], gen["acentric_factor"])
        out["generalized"] = [float(p) if v else None for p, v in zip(s.pressure, s.valid)]
    ref = models.get("reference") or {}
    out["reference"] = None
    comps = r["gas"]["components"]
    if ref.get("applicable") and len(comps) == 1 and comps[0].get("coolprop_name"):
        fluid = reference_fluid((comps[0]["coolprop_name"],), (1.0,))
        p, v, _ = fluid.pressures(np.full(grid.shape, ref["fill_molar_density_mol_m3"]), grid)
        out["reference"] = [float(x) if ok else None for x, ok in zip(p, v)]
    return out


def _detail(r: dict) -> dict:
    pu = (r.get("display_units") or {}).get("pressure", "bar(g)")
    tu = (r.get("display_units") or {}).get("temperature", "degC")
    atm = (r.get("site") or {}).get("atmospheric_pressure_pa") or 101325.0
    code = r["verdict"]
    v = VERDICTS.get(code, dict(mark="?", label="Input error: the row could not be read", line=""))
    d = dict(row=str(r["row"]), id=str(r.get("id") or "—"), code=code, label=v["label"], mark=v["mark"],
             css="v-" + (code if code in VERDICTS else "unknown"), reasons=[str(x) for x in r.get("reasons") or []],
             warnings=[str(w["message"]) for w in r.get("warnings") or []], figures=[], models=[], plot=None)
    if code == "input-error":
        return d
    P = lambda p: format_pressure(p, pu, atm)  # noqa: E731
    lim = r.get("limits") or {}
    d["figures"] = [
        ("Gas", str(r["gas"]["name"])),
        ("Fill", f"{P(r['fill']['pressure_pa'])} at {format_temperature(r['fill']['temperature_k'], tu)}"
         if r["fill"].get("pressure_pa") is not None else f"{r['fill'].get('mass_kg') or 0:.3f} kg"),
        ("Worst-case gas temperature", f"{format_temperature(r['worst_case_temperature_k'], tu)} "
                                       f"({r['worst_case_basis']})"),
        ("Peak pressure", P(r["peak_pressure_pa"])),
        ("Rated pressure", P(r["rated_pressure_pa"])),
        ("Margin to rated", format_percent(r["margin_fraction"])),
        ("Required margin", format_percent(r["required_margin_fraction"])),
        ("Governing model", MODEL_TITLES.get(r.get("governing_model"), "none")),
        ("Highest gas temperature", format_temperature(lim.get("max_gas_temperature_k"), tu)),
        ("Highest fill pressure", P(lim.get("max_fill_pressure_pa"))),
    ]
    d["models"] = [(MODEL_TITLES[n], P(m["peak_pressure_pa"]) if m["applicable"] else "not applicable: " + m["note"])
                   for n, m in r["models"].items()]
    try:
        view = dict(r)
        if not view.get("curves"):
            view["curves"] = _curves(r)
        if view["curves"] and drawable_models(view):
            d["plot"] = png_data_uri(plot_png(view))
    except Exception:  # a missing curve leaves the section without its plot, never without its numbers
        d["plot"] = None
    return d


def build_view(results: list[dict], *, source: str, all_details: bool, report_date: _dt.date,
               full=None) -> dict:
    """The template's view. ``full(i)``, where given, gives row i's full result for its detail section
    (the batch keeps only what the table needs for most rows)."""
    from screening.batch import ORDER, cells, ranked, summary

    s = summary(results)
    table = []
    for r in ranked(results):
        c = cells(r)
        table.append(dict(row=str(r["row"]), id=str(r.get("id") or "—"), verdict=r["verdict"], gas=c["gas"],
                          peak=c["peak"], rated=c["rated"], margin=c["margin"], t_max=c["t_max"]))
    pages = [table[k:k + ROWS_PER_PAGE] for k in range(0, len(table), ROWS_PER_PAGE)]
    position = {id(r): i for i, r in enumerate(results)}
    detail_rows = [full(position[id(r)]) if full is not None else r
                   for r in ranked(results) if all_details or r["verdict"] != "within"]
    return dict(
        title=f"Batch pressure screening \u2014 {os.path.basename(source)}", source=str(source),
        report_date=report_date.isoformat(), counts=[(v, s["counts"][v]) for v in ORDER], rows=s["rows"],
        duplicates=s["duplicate_ids"], chart=svg_data_uri(_margin_chart(results)), pages=pages,
        details=parallel.map_items(_detail, detail_rows), all_details=all_details,
        caution=CAUTION, short_caution=SHORT_CAUTION, assumptions=list(ASSUMPTIONS),
    )


def render_batch_pdf_bytes(results: list[dict], *, source: str, all_details: bool = False,
                           report_date: _dt.date | None = None, full=None) -> bytes:
    import weasyprint
    from weasyprint.urls import FatalURLFetchingError

    report_date = report_date or _dt.date.today()
    folder = templates_dir()
    view = build_view(results, source=source, all_details=all_details, report_date=report_date, full=full)
    html_text = _environment(folder).get_template(TEMPLATE).render(v=view)
    fetcher = _make_fetcher(folder)
    try:
        doc = weasyprint.HTML(string=html_text, base_url=str(folder) + os.sep, url_fetcher=fetcher).render()
        return doc.write_pdf()
    except FatalURLFetchingError as exc:
        raise ReportRenderError(str(exc)) from exc.__cause__


def render_batch_report(results: list[dict], out_path, *, source: str, all_details: bool = False,
                        report_date: _dt.date | None = None, quiet: bool = True, full=None):
    """Write the batch PDF atomically (temporary file beside the target, then moved into place)."""
    from screening.batch import atomic_writer, check_target

    check_target(out_path, "PDF report")
    pdf = render_batch_pdf_bytes(results, source=source, all_details=all_details, report_date=report_date,
                                 full=full)
    with atomic_writer(out_path, "PDF report", binary=True) as fh:
        fh.write(pdf)
    return out_path
