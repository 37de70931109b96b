"""The isochore plot of a finished result: pressure against gas temperature, one line per model.

A view only: it draws the curves the screening already computed (``result.curves``) and the
pressures already in the result; it calls no equation of state. Axis values are in the units the
user wrote (``result.display_units``), converted with :mod:`screening.units`.

The drawing is meant to survive black-and-white printing: models differ by line style and marker,
the margin band is hatched, the reference lines are labelled in words beside the lines.

Output is SVG text, deterministic for a given result: no date or creator metadata, fixed hash salt,
a fixed font family.
"""

from __future__ import annotations

import base64
import io
import math

from screening.result import Result
from screening.units import pressure_in, temperature_in


def _matplotlib():
    """(matplotlib, Figure, FigureCanvasSVG), imported on the first drawing with the Agg backend.

    The rest of this module (which models are drawn, the reference lines) needs no matplotlib, and a
    report command whose plots were drawn in its screening worker (screening.cli, report.report_plots)
    does not import it at all: about a third of a second less on the way to the layout."""
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib.backends.backend_svg import FigureCanvasSVG
    from matplotlib.figure import Figure

    return matplotlib, Figure, FigureCanvasSVG

#: Line style, marker and legend name of each model (black on white).
MODEL_STYLE = {
    "reference": dict(linestyle="-", linewidth=2.0, marker="o", label="Reference (Helmholtz EOS)"),
    "generalized": dict(linestyle="--", linewidth=1.6, marker="s", label="Generalized (Lee\u2013Kesler)"),
    "ideal": dict(linestyle=":", linewidth=1.6, marker="^", label="Ideal gas"),
}
MODEL_ORDER = ("reference", "generalized", "ideal")
#: The generalized model's legend name where it is the quantum-gas Soave–Redlich–Kwong model (its ``method``).
SRK_LABEL = "Generalized (SRK, quantum-gas constants)"


def model_label(result: Result, name: str) -> str:
    """The legend name of model `name` in `result`: the generalized model's by the equation it used."""
    if name == "generalized" and result.models["generalized"].method:
        return SRK_LABEL
    return MODEL_STYLE[name]["label"]

_RC = {
    "svg.hashsalt": "screening-report",
    "svg.fonttype": "none",
    "font.family": "DejaVu Sans",
    "font.size": 8.5,
    "axes.linewidth": 0.8,
    "hatch.linewidth": 0.6,
    "hatch.color": "#555555",
}


_LABEL_BOX = dict(boxstyle="square,pad=0.15", facecolor="white", edgecolor="none")


def _temp_label(label: str) -> str:
    return {"degC": "°C", "degF": "°F"}.get(label, label)


def margin_line_pa(result: Result) -> float | None:
    """Absolute pressure [Pa] of rated × (1 − required margin), the margin taken on gauge pressure.

    The result's own ``limits.target_peak_pressure_pa`` when it gives one; otherwise display
    arithmetic on two numbers of the result, with the definition ``margin_fraction`` uses
    (1 − peak_gauge / rated_gauge).
    """
    target = result.limits.target_peak_pressure_pa
    if target is not None:
        return target
    rated = result.rated_pressure_pa
    m = result.required_margin_fraction
    if rated is None or m is None:
        return None
    atm = result.site.atmospheric_pressure_pa
    return atm + (rated - atm) * (1.0 - m)


def _finite(x) -> bool:
    return x is not None and isinstance(x, (int, float)) and math.isfinite(x)


#: The rated pressure: a wide mid-grey line, unlike every black model curve.
RATED_GREY = "#5a5a5a"
#: Dash pattern of the bounding-corner isochore (long dashes, thinner than the model lines).
BOUNDING_STYLE = (0, (9, 2.5))
#: The vapour-pressure curve on the phase diagram: a wide light-grey band with a thin dashed black
#: centre line, so that an isochore running along it (two-phase fill) stays visible on top of it.
SATURATION_GREY = "#b4b4b4"
SATURATION_STYLE = (0, (4, 2))

#: Phases in which only the reference equation of state can describe the contents.
CONDENSED_PHASES = ("liquid", "two-phase")


def tolerance_band(result: Result) -> dict | None:
    """The worst-case temperature band of the input tolerances [K], when the result carries one."""
    tol = result.tolerance
    if not tol or tol.bounding_peak_pressure_pa is None:
        return None
    t_wc = result.worst_case_temperature_k
    band = tol.gas_temperature_band_k or 0.0
    if not _finite(t_wc) or not _finite(band):
        return None
    return {"low_k": t_wc - band, "high_k": t_wc + band, "band_text": f"{band:g} K"}


def worst_case_point_temperature(result: Result) -> float | None:
    """Temperature [K] at which the result's peak pressure is reached: the bounding corner's under
    tolerances (the peak is then the bounding peak), otherwise the worst-case temperature."""
    tol = result.tolerance
    if tol and tol.bounding_peak_pressure_pa is not None:
        corner = tol.bounding_corner
        if _finite(corner.worst_case_temperature_k):
            return corner.worst_case_temperature_k
    return result.worst_case_temperature_k


def phase_diagram_wanted(result: Result) -> bool:
    """Whether the report should show the phase diagram: a liquid or two-phase state at fill or at the
    worst case, or a liquid-full temperature on the heating path (at or above the fill
    temperature). A gas far above its critical temperature, whose liquid-full point lies far below the
    fill (hydrogen's at about -240 degC), gets none."""
    ref = result.models["reference"]
    phases = (result.fill.phase, ref.phase_fill, ref.phase_peak)
    t_full = result.limits.liquid_full_temperature_k
    t_fill = result.fill.temperature_k
    return (any(p in CONDENSED_PHASES for p in phases)
            or (_finite(t_full) and _finite(t_fill) and t_full >= t_fill))


def phase_diagram_drawable(result: Result) -> bool:
    """Wanted, and the result carries a vapour-pressure curve with at least two points."""
    pd = result.phase_diagram
    if not pd or not phase_diagram_wanted(result):
        return False
    sat = pd.saturation
    pts = [1 for t, p in zip(sat.temperature_k, sat.pressure_pa) if _finite(t) and _finite(p)]
    return len(pts) >= 2


def liquid_full_marked(result: Result) -> bool:
    """Whether the phase diagram marks a liquid-full point: one is reported and it is not the critical
    point itself (which the diagram marks anyway)."""
    t_full = result.limits.liquid_full_temperature_k
    pd = result.phase_diagram
    tc = pd.critical_temperature_k if pd is not None else None
    return _finite(t_full) and _finite(tc) and abs(t_full - tc) > 0.05 and _finite(saturation_reading(result, t_full))


def _read_on(points: list[tuple[float, float]], x: float) -> float | None:
    """Straight-line reading of a plotted curve at x (a drawing aid: where to put a marker)."""
    for (xa, ya), (xb, yb) in zip(points, points[1:]):
        if xa <= x <= xb and xb > xa:
            return ya + (yb - ya) * (x - xa) / (xb - xa)
    return None


def saturation_reading(result: Result, t_k: float) -> float | None:
    """Pressure [Pa] read off the result's vapour-pressure curve at t_k (straight line between its points)."""
    pd = result.phase_diagram
    if pd is None:
        return None
    sat = pd.saturation
    pts = [(t, p) for t, p in zip(sat.temperature_k, sat.pressure_pa)
           if _finite(t) and _finite(p)]
    return _read_on(pts, t_k) if _finite(t_k) else None


def fill_point_pressure(result: Result, model: str | None = None) -> float | None:
    """The fill pressure [Pa] to mark: the stated one, or (fill by mass) a reading of the model's plotted
    isochore at the fill temperature."""
    fill = result.fill
    if fill.pressure_pa is not None:
        return fill.pressure_pa
    model = model or result.governing_model
    curves = result.curves
    if not model or not curves.series(model) or not _finite(fill.temperature_k):
        return None
    pts = [(t, p) for t, p in zip(curves.temperature_k, curves.series(model)) if _finite(t) and _finite(p)]
    return _read_on(pts, fill.temperature_k)


def drawable_models(result: Result) -> list[str]:
    """Models with an applicable result and at least two finite points on their curve."""
    curves = result.curves
    temps = list(curves.temperature_k)
    out = []
    for name in MODEL_ORDER:
        series = curves.series(name)
        if not series or not result.models[name].applicable:
            continue
        if sum(1 for t, p in zip(temps, series) if _finite(t) and _finite(p)) >= 2:
            out.append(name)
    return out


#: Two lines closer than this fraction of their value everywhere (curves) or of the axis span (vertical
#: lines) cannot be told apart on the printed plot: drawn once and named together.
COINCIDE_FRACTION = 0.004


def coinciding_groups(result: Result) -> list[list[str]]:
    """The drawable models grouped where their curves coincide (every common point within
    COINCIDE_FRACTION of each other): each group is drawn as one line, named by all its models."""
    curves = result.curves
    temps = list(curves.temperature_k)
    groups: list[list[str]] = []
    for name in drawable_models(result):
        series = curves.series(name)
        for group in groups:
            other = curves.series(group[0])
            pairs = [(a, b) for t, a, b in zip(temps, series, other) if _finite(t) and _finite(a) and _finite(b)]
            n_own = sum(1 for t, a in zip(temps, series) if _finite(t) and _finite(a))
            n_other = sum(1 for t, b in zip(temps, other) if _finite(t) and _finite(b))
            if pairs and len(pairs) == n_own == n_other and all(
                    abs(a - b) <= COINCIDE_FRACTION * abs(b) for a, b in pairs):
                group.append(name)
                break
        else:
            groups.append([name])
    return groups


def text_boxes(fig) -> list[tuple[str, tuple[float, float, float, float]]]:
    """(text, (x0, y0, x1, y1)) in display units of every text a drawn figure shows: the tick labels
    inside the axis limits, the axis labels, the legend entries, any annotation."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    FigureCanvasAgg(fig)
    renderer = fig.canvas.get_renderer()
    fig.draw(renderer)
    texts = list(fig.texts)
    for ax in fig.axes:
        for axis in (ax.xaxis, ax.yaxis):
            lo, hi = sorted(axis.get_view_interval())
            eps = 1e-9 * max(abs(lo), abs(hi), 1.0)
            texts += [tick.label1 for tick in axis.get_major_ticks() if lo - eps <= tick.get_loc() <= hi + eps]
            texts.append(axis.label)
        texts += list(ax.texts)
        legend = ax.get_legend()
        if legend is not None:
            texts += list(legend.get_texts())
    out = []
    for artist in texts:
        if not artist.get_visible() or not artist.get_text().strip():
            continue
        bb = artist.get_window_extent(renderer)
        out.append((artist.get_text(), (bb.x0, bb.y0, bb.x1, bb.y1)))
    return out


def _converters(result: Result):
    """Functions from absolute Pa and from K into the result's display units."""
    units = result.display_units
    p_unit, t_unit = units["pressure"], units["temperature"]
    atm = result.site.atmospheric_pressure_pa
    return (lambda pa: pressure_in(pa, p_unit, atm)), (lambda k: temperature_in(k, t_unit))


def plot_png(result: Result, dpi: int = 130) -> bytes:
    """PNG bytes of the isochore plot of `result` (the batch report's many detail plots: a raster image
    lays out and draws far faster than an SVG of the same plot)."""
    return plot_svg(result, png_dpi=dpi)


def _grey_png(fig, dpi: int) -> bytes:
    """The figure as an 8-bit greyscale PNG without alpha (the plot is drawn in greys only). The PDF
    writer re-encodes a raster image and splits an alpha channel into a second image; one grey
    channel is a third of the RGB data and needs one encoding, not two."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from PIL import Image

    fig.set_dpi(dpi)
    canvas = FigureCanvasAgg(fig)
    canvas.draw()
    rgba = canvas.buffer_rgba()
    img = Image.frombuffer("RGBA", (int(rgba.shape[1]), int(rgba.shape[0])), rgba, "raw", "RGBA", 0, 1)
    white = Image.new("RGBA", img.size, (255, 255, 255, 255))
    grey = Image.alpha_composite(white, img).convert("L")
    raw = io.BytesIO()
    # light compression: the PDF writer compresses the image again
    grey.save(raw, format="PNG", compress_level=1)
    return raw.getvalue()


def png_data_uri(png: bytes) -> str:
    """A data: URI carrying PNG bytes (base64)."""
    return "data:image/png;base64," + base64.b64encode(png).decode("ascii")


def plot_svg(result: Result, png_dpi: int | None = None, return_figure: bool = False):
    """SVG text of the isochore plot of `result` (PNG bytes instead where `png_dpi` is given; the drawn
    matplotlib figure itself where `return_figure` is set, for measuring it)."""
    units = result.display_units
    p_unit, t_unit = units["pressure"], units["temperature"]
    curves = result.curves
    models = result.models

    P, T = _converters(result)

    matplotlib, Figure, FigureCanvasSVG = _matplotlib()
    with matplotlib.rc_context(_RC):
        fig = Figure(figsize=(6.6, 3.4), dpi=100)
        FigureCanvasSVG(fig)
        ax = fig.add_subplot(1, 1, 1)

        temps_k = list(curves.temperature_k)
        drawn = []
        groups = coinciding_groups(result)
        for group in groups:
            name = group[0]
            series = curves.series(name)
            xs, ys = [], []
            for t, p in zip(temps_k, series):
                if _finite(t) and _finite(p):
                    xs.append(T(t))
                    ys.append(P(p))
            style = MODEL_STYLE[name]
            # the governing model named as such, not the group (the ideal gas governs nothing)
            names = [model_label(result, n) + ("  \u2190 governs" if n == result.governing_model else "")
                     for n in group]
            label = "\n= ".join(names) + ("\n(coincide)" if len(group) > 1 else "")
            ax.plot(xs, ys, color="black", linestyle=style["linestyle"], linewidth=style["linewidth"],
                    label=label, zorder=3)
            drawn.extend(group)
        for name in drawn:
            style = MODEL_STYLE[name]
            model = models[name]
            peak = model.peak_pressure_pa
            if _finite(peak) and _finite(result.worst_case_temperature_k):
                ax.plot([T(result.worst_case_temperature_k)], [P(peak)], linestyle="none",
                        marker=style["marker"], markersize=6, markerfacecolor="white",
                        markeredgecolor="black", markeredgewidth=1.1, zorder=5)

        # Fill point: the stated fill pressure, or (fill by mass) the governing curve at the fill temperature.
        fill = result.fill
        t_fill = fill.temperature_k
        p_fill = fill.pressure_pa
        if p_fill is None and result.governing_model in drawn:
            # Fill by mass: place the marker on the governing curve (straight-line reading between its points).
            p_fill = fill_point_pressure(result)
        if _finite(p_fill) and _finite(t_fill):
            ax.plot([T(t_fill)], [P(p_fill)], linestyle="none", marker="D", markersize=6.5,
                    markerfacecolor="black", markeredgecolor="black", zorder=6, label="Fill state")

        peak = result.peak_pressure_pa
        t_wc = result.worst_case_temperature_k
        tol = tolerance_band(result)
        if tol is not None:
            # The bounding corner's isochore and the worst-case temperature band of the tolerances.
            series = curves.bounding or ()
            xs = [T(t) for t, p in zip(temps_k, series) if _finite(t) and _finite(p)]
            ys = [P(p) for t, p in zip(temps_k, series) if _finite(t) and _finite(p)]
            if len(xs) >= 2:
                name = (model_label(result, str(curves.bounding_model)) if str(curves.bounding_model) in MODEL_STYLE
                        else "governing model")
                ax.plot(xs, ys, color="black", linestyle=BOUNDING_STYLE, linewidth=1.1, zorder=3,
                        label=f"{name},\nfill at the bounding corner")
            lo, hi = tol["low_k"], tol["high_k"]
            ax.axvspan(T(lo), T(hi), facecolor="#dcdcdc", edgecolor="black", linewidth=0.5,
                       linestyle=(0, (1, 1.5)), zorder=0,
                       label=f"Worst-case temperature ± {tol['band_text']} (tolerance)")
        t_star = worst_case_point_temperature(result)
        if _finite(peak) and _finite(t_star):
            ax.plot([T(t_star)], [P(peak)], linestyle="none", marker="*", markersize=13,
                    markerfacecolor="black", markeredgecolor="white", markeredgewidth=0.6, zorder=7,
                    label="Bounding peak (verdict)" if tol is not None else "Worst case (governing model)")

        ax.autoscale(enable=True, axis="x", tight=True)
        x0, x1 = ax.get_xlim()
        if _finite(t_wc):
            x1 = max(x1, T(t_wc) + 0.02 * (x1 - x0 or 1.0))
        if tol is not None:
            x1 = max(x1, T(tol["high_k"]) + 0.02 * (x1 - x0 or 1.0))
        if _finite(t_fill):
            x0 = min(x0, T(t_fill) - 0.02 * (x1 - x0 or 1.0))
        ax.set_xlim(x0, x1)

        # Horizontal and vertical reference lines, named in the legend below the plot (no text inside the
        # axes, so no label can cover another or a line); lines that fall together are drawn once and named
        # together.
        rated = result.rated_pressure_pa
        relief = result.relief_set_pressure_pa
        m_line = margin_line_pa(result)
        same = lambda a, b: _finite(a) and _finite(b) and abs(P(a) - P(b)) <= COINCIDE_FRACTION * abs(P(b) or 1.0)  # noqa: E731
        if _finite(rated):
            label = "Vessel's rated pressure" + ("\n= relief set pressure" if same(relief, rated) else "")
            ax.axhline(P(rated), color=RATED_GREY, linewidth=2.8, linestyle="-", zorder=2, label=label)
        if _finite(m_line) and _finite(rated):
            pct = 100.0 * result.required_margin_fraction
            ax.axhline(P(m_line), color="black", linewidth=0.9, linestyle=(0, (2, 1.2)), zorder=2,
                       label=f"Rated \u00d7 (1 \u2212 {pct:g} %)")
            ax.axhspan(P(m_line), P(rated), facecolor="none", edgecolor="#777777", hatch="////",
                       linewidth=0, zorder=1)
        if _finite(relief) and not same(relief, rated):
            ax.axhline(P(relief), color="black", linewidth=1.2, linestyle=(0, (8, 2, 1.5, 2)), zorder=2,
                       label="Relief set pressure")
        t_full = result.limits.liquid_full_temperature_k
        full_shown = _finite(t_full) and x0 <= T(t_full) <= x1
        full_at_worst = full_shown and _finite(t_wc) and abs(T(t_full) - T(t_wc)) <= COINCIDE_FRACTION * (x1 - x0)
        if _finite(t_wc):
            ax.axvline(T(t_wc), color="black", linewidth=0.9, linestyle=(0, (1, 2)), zorder=2,
                       label="Worst-case temperature" + ("\n= liquid-full temperature" if full_at_worst else ""))
        if full_shown and not full_at_worst:
            ax.axvline(T(t_full), color="black", linewidth=0.9, linestyle=(0, (4, 1.5, 1, 1.5, 1, 1.5)), zorder=2,
                       label="Liquid fills the vessel")

        ax.margins(y=0.08)
        ax.set_xlabel(f"Gas temperature [{_temp_label(t_unit)}]")
        ax.set_ylabel(f"Pressure [{p_unit}]")
        ax.grid(True, color="#bbbbbb", linewidth=0.4, linestyle="-")
        ax.set_axisbelow(True)
        handles = ax.get_legend_handles_labels()[0]
        if handles:
            # the legend beside the axes, one entry a line: long entries never meet
            ax.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0), ncol=1, frameon=False,
                      fontsize=7, handlelength=3.0, borderaxespad=0.0, labelspacing=0.55)
        if png_dpi is None:
            fig.tight_layout(pad=0.4)
        else:
            # the batch report's many detail plots: fixed margins that hold the tick labels and the legend
            # beside the axes (the tight layout draws the figure an extra time to measure it)
            fig.subplots_adjust(left=0.1, right=0.6, top=0.97, bottom=0.13)
        if return_figure:
            return fig
        if png_dpi is not None:
            return _grey_png(fig, png_dpi)
        buf = io.StringIO()
        fig.savefig(buf, format="svg", metadata={"Date": None, "Creator": None, "Format": None, "Type": None})
    return buf.getvalue()


def phase_diagram_svg(result: Result, return_figure: bool = False):
    """SVG text of the pressure–temperature phase diagram of a pure fluid with a saturation dome.

    Draws, from the result only: the vapour-pressure curve up to the critical point (marked), the
    fill isochore of the reference model (``curves.reference``), the fill and worst-case points, the
    liquid-full point on the vapour-pressure curve, and the rated and relief pressures.
    """
    units = result.display_units
    p_unit, t_unit = units["pressure"], units["temperature"]
    pd = result.phase_diagram
    curves = result.curves

    P, T = _converters(result)

    temps_k = [t for t in (curves.temperature_k if curves else ()) if _finite(t)]
    t_fill = result.fill.temperature_k
    t_wc = worst_case_point_temperature(result)
    tc, pc = pd.critical_temperature_k, pd.critical_pressure_pa
    lows = [t for t in [min(temps_k) if temps_k else None, t_fill] if _finite(t)]
    t_left = max(pd.triple_temperature_k, min(lows + [tc]) - 15.0)
    highs = [t for t in [max(temps_k) if temps_k else None, t_wc, tc + 5.0] if _finite(t)]
    t_right = max(highs)

    matplotlib, Figure, FigureCanvasSVG = _matplotlib()
    with matplotlib.rc_context(_RC):
        fig = Figure(figsize=(6.6, 4.0), dpi=100)
        FigureCanvasSVG(fig)
        ax = fig.add_subplot(1, 1, 1)

        sat = pd.saturation
        pts = [(t, p) for t, p in zip(sat.temperature_k, sat.pressure_pa) if _finite(t) and _finite(p)]
        shown = [(t, p) for t, p in pts if t >= t_left]
        if len(shown) < 2:
            shown = pts
        ax.plot([T(t) for t, _ in shown], [P(p) for _, p in shown], color=SATURATION_GREY, linestyle="-",
                linewidth=5.0, solid_capstyle="butt", zorder=3, label="Vapour-pressure curve")
        ax.plot([T(t) for t, _ in shown], [P(p) for _, p in shown], color="black", linestyle=SATURATION_STYLE,
                linewidth=0.6, zorder=3)
        # Region words beside the curve, part of the way from its left end to the critical point.
        t_mid = max(shown[0][0], t_left) + 0.4 * (tc - max(shown[0][0], t_left))
        p_mid = _read_on(shown, t_mid)
        if _finite(p_mid) and tc - max(shown[0][0], t_left) >= 0.3 * (t_right - t_left):
            ax.annotate("liquid", xy=(T(t_mid), P(p_mid)), xytext=(-10, 12), textcoords="offset points",
                        ha="right", va="bottom", fontsize=8, fontstyle="italic", zorder=8)
            ax.annotate("vapour", xy=(T(t_mid), P(p_mid)), xytext=(10, -12), textcoords="offset points",
                        ha="left", va="top", fontsize=8, fontstyle="italic", zorder=8)

        ref = curves.reference if curves else None
        ref_ok = bool(ref) and result.models["reference"].applicable
        if ref_ok:
            iso = [(T(t), P(p)) for t, p in zip(curves.temperature_k, ref) if _finite(t) and _finite(p)]
            if len(iso) >= 2:
                ax.plot([x for x, _ in iso], [y for _, y in iso], color="black", linestyle="-", linewidth=1.6,
                        zorder=4, label="Fill isochore (reference EOS)")
            else:
                ref_ok = False

        ax.plot([T(tc)], [P(pc)], linestyle="none", marker="o", markersize=8, markerfacecolor="white",
                markeredgecolor="black", markeredgewidth=1.4, zorder=6, label="Critical point")
        ax.annotate(f"critical point\n{T(tc):.1f} {_temp_label(t_unit)}, {P(pc):.1f} {p_unit}",
                    xy=(T(tc), P(pc)), xytext=(7, -4), textcoords="offset points", ha="left", va="top",
                    fontsize=7.5, bbox=_LABEL_BOX, zorder=8)

        t_full = result.limits.liquid_full_temperature_k
        p_full = saturation_reading(result, t_full) if liquid_full_marked(result) else None
        if _finite(p_full):
            ax.plot([T(t_full)], [P(p_full)], linestyle="none", marker="s", markersize=7, markerfacecolor="white",
                    markeredgecolor="black", markeredgewidth=1.3, zorder=7, label="Liquid-full point")
            ax.annotate("liquid-full", xy=(T(t_full), P(p_full)), xytext=(-7, 4), textcoords="offset points",
                        ha="right", va="bottom", fontsize=7.5, bbox=_LABEL_BOX, zorder=8)

        p_fill = fill_point_pressure(result, "reference" if ref_ok else None)
        if _finite(p_fill) and _finite(t_fill):
            ax.plot([T(t_fill)], [P(p_fill)], linestyle="none", marker="D", markersize=6.5,
                    markerfacecolor="black", markeredgecolor="black", zorder=7, label="Fill state")
        peak = result.peak_pressure_pa
        if _finite(peak) and _finite(t_wc):
            ax.plot([T(t_wc)], [P(peak)], linestyle="none", marker="*", markersize=13, markerfacecolor="black",
                    markeredgecolor="white", markeredgewidth=0.6, zorder=7,
                    label="Bounding peak (verdict)" if tolerance_band(result) else "Worst case (governing model)")

        ax.set_xlim(T(t_left), T(t_right))
        rated, relief = result.rated_pressure_pa, result.relief_set_pressure_pa
        if _finite(rated):
            ax.axhline(P(rated), color=RATED_GREY, linewidth=2.8, linestyle="-", zorder=2, label="Vessel's rated pressure")
        if _finite(relief):
            ax.axhline(P(relief), color="black", linewidth=1.2, linestyle=(0, (8, 2, 1.5, 2)), zorder=2,
                       label="Relief set pressure")
        ax.margins(y=0.06)
        ax.set_xlabel(f"Temperature [{_temp_label(t_unit)}]")
        ax.set_ylabel(f"Pressure [{p_unit}]")
        ax.grid(True, color="#bbbbbb", linewidth=0.4, linestyle="-")
        ax.set_axisbelow(True)
        ax.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0), ncol=1, frameon=False, fontsize=7,
                  handlelength=3.0, borderaxespad=0.0, labelspacing=0.55)
        fig.tight_layout(pad=0.4)
        if return_figure:
            return fig

        buf = io.StringIO()
        fig.savefig(buf, format="svg", metadata={"Date": None, "Creator": None, "Format": None, "Type": None})
    return buf.getvalue()


def svg_data_uri(svg_text: str) -> str:
    """A data: URI carrying the SVG text (base64, so no character of it can leave the attribute)."""
    return "data:image/svg+xml;base64," + base64.b64encode(svg_text.encode("utf-8")).decode("ascii")
