"""The isochore plot of a finished result: pressure against gas temperature, one line per model.

A view only: it draws the curves the screening already computed (``result["curves"]``) and the
pressures already in the result; it calls no equation of state. Axis values are in the units the
user wrote (``result["display_units"]``), converted with :mod:`screening.units`.

The drawing is meant to survive black-and-white printing: models differ by line style and marker,
the margin band is hatched, the reference lines are labelled in words beside the lines.

Output is SVG text, deterministic for a given result: no date or creator metadata, fixed hash salt,
a fixed font family.
"""

from __future__ import annotations

import base64
import io
import math

import matplotlib

matplotlib.use("Agg")

from matplotlib.backends.backend_svg import FigureCanvasSVG  # noqa: E402
from matplotlib.figure import Figure  # noqa: E402

from screening.units import pressure_in, temperature_in  # noqa: E402

#: Line style, marker and legend name of each model (black on white).
MODEL_STYLE = {
    "reference": dict(linestyle="-", linewidth=2.0, marker="o", label="Reference (Helmholtz EOS)"),
    "generalized": dict(linestyle="--", linewidth=1.6, marker="s", label="Generalized (Lee\u2013Kesler)"),
    "ideal": dict(linestyle=":", linewidth=1.6, marker="^", label="Ideal gas"),
}
MODEL_ORDER = ("reference", "generalized", "ideal")

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


def margin_line_pa(result: dict) -> float | None:
    """Absolute pressure [Pa] of rated × (1 − required margin), the margin taken on gauge pressure.

    The result's own ``limits.target_peak_pressure_pa`` when it gives one; otherwise display
    arithmetic on two numbers of the result, with the definition ``margin_fraction`` uses
    (1 − peak_gauge / rated_gauge).
    """
    target = (result.get("limits") or {}).get("target_peak_pressure_pa")
    if target is not None:
        return target
    atm = result["site"]["atmospheric_pressure_pa"]
    rated = result["rated_pressure_pa"]
    m = result["required_margin_fraction"]
    if rated is None or m is None:
        return None
    return atm + (rated - atm) * (1.0 - m)


def _finite(x) -> bool:
    return x is not None and isinstance(x, (int, float)) and math.isfinite(x)


def drawable_models(result: dict) -> list[str]:
    """Models with an applicable result and at least two finite points on their curve."""
    curves = result["curves"]
    temps = list(curves.get("temperature_k") or [])
    out = []
    for name in MODEL_ORDER:
        series = curves.get(name)
        if not series or not (result["models"].get(name) or {}).get("applicable"):
            continue
        if sum(1 for t, p in zip(temps, series) if _finite(t) and _finite(p)) >= 2:
            out.append(name)
    return out


def plot_svg(result: dict) -> str:
    """SVG text of the isochore plot of `result`."""
    units = result["display_units"]
    p_unit, t_unit = units["pressure"], units["temperature"]
    atm = result["site"]["atmospheric_pressure_pa"]
    curves = result["curves"]
    models = result["models"]

    def P(pa: float) -> float:
        return pressure_in(pa, p_unit, atm)

    def T(k: float) -> float:
        return temperature_in(k, t_unit)

    with matplotlib.rc_context(_RC):
        fig = Figure(figsize=(6.6, 4.3), dpi=100)
        FigureCanvasSVG(fig)
        ax = fig.add_subplot(1, 1, 1)

        temps_k = list(curves.get("temperature_k") or [])
        drawn = []
        for name in MODEL_ORDER:
            series = curves.get(name)
            model = models.get(name) or {}
            if not series or not model.get("applicable"):
                continue
            xs, ys = [], []
            for t, p in zip(temps_k, series):
                if _finite(t) and _finite(p):
                    xs.append(T(t))
                    ys.append(P(p))
            if len(xs) < 2:
                continue
            style = MODEL_STYLE[name]
            label = style["label"] + ("  \u2190 governs" if name == result["governing_model"] else "")
            ax.plot(xs, ys, color="black", linestyle=style["linestyle"], linewidth=style["linewidth"],
                    label=label, zorder=3)
            drawn.append(name)
            peak = model.get("peak_pressure_pa")
            if _finite(peak) and _finite(result["worst_case_temperature_k"]):
                ax.plot([T(result["worst_case_temperature_k"])], [P(peak)], linestyle="none",
                        marker=style["marker"], markersize=6, markerfacecolor="white",
                        markeredgecolor="black", markeredgewidth=1.1, zorder=5)

        # Fill point: the stated fill pressure, or (fill by mass) the governing curve at the fill temperature.
        fill = result["fill"]
        t_fill = fill["temperature_k"]
        p_fill = fill.get("pressure_pa")
        if p_fill is None and result["governing_model"] in drawn and _finite(t_fill):
            # Fill by mass: place the marker on the governing curve (straight-line reading between its points).
            pts = [(t, p) for t, p in zip(temps_k, curves[result["governing_model"]]) if _finite(t) and _finite(p)]
            for (ta, pa), (tb, pb) in zip(pts, pts[1:]):
                if ta <= t_fill <= tb and tb > ta:
                    p_fill = pa + (pb - pa) * (t_fill - ta) / (tb - ta)
                    break
        if _finite(p_fill) and _finite(t_fill):
            ax.plot([T(t_fill)], [P(p_fill)], linestyle="none", marker="D", markersize=6.5,
                    markerfacecolor="black", markeredgecolor="black", zorder=6, label="Fill state")

        peak = result["peak_pressure_pa"]
        t_wc = result["worst_case_temperature_k"]
        if _finite(peak) and _finite(t_wc):
            ax.plot([T(t_wc)], [P(peak)], linestyle="none", marker="*", markersize=13,
                    markerfacecolor="black", markeredgecolor="white", markeredgewidth=0.6, zorder=7,
                    label="Worst case (governing model)")

        ax.autoscale(enable=True, axis="x", tight=True)
        x0, x1 = ax.get_xlim()
        if _finite(t_wc):
            x1 = max(x1, T(t_wc) + 0.02 * (x1 - x0 or 1.0))
        if _finite(t_fill):
            x0 = min(x0, T(t_fill) - 0.02 * (x1 - x0 or 1.0))
        ax.set_xlim(x0, x1)

        # Horizontal reference lines, labelled on the plot (no colour needed to tell them apart).
        rated = result["rated_pressure_pa"]
        relief = result["relief_set_pressure_pa"]
        m_line = margin_line_pa(result)
        if _finite(rated):
            ax.axhline(P(rated), color="black", linewidth=1.8, linestyle="-", zorder=2)
            ax.annotate("rated", xy=(0.005, P(rated)), xycoords=("axes fraction", "data"),
                        xytext=(2, 2), textcoords="offset points", ha="left", fontsize=7.5, fontweight="bold",
                        bbox=_LABEL_BOX)
        if _finite(m_line) and _finite(rated):
            ax.axhline(P(m_line), color="black", linewidth=1.0, linestyle=(0, (6, 2)), zorder=2)
            ax.axhspan(P(m_line), P(rated), facecolor="none", edgecolor="#777777", hatch="////",
                       linewidth=0, zorder=1)
            pct = 100.0 * result["required_margin_fraction"]
            ax.annotate(f"rated \u00d7 (1 \u2212 {pct:g} %)", xy=(0.005, P(m_line)),
                        xycoords=("axes fraction", "data"), xytext=(2, -3), textcoords="offset points",
                        ha="left", va="top", fontsize=7.5, bbox=_LABEL_BOX)
        if _finite(relief):
            ax.axhline(P(relief), color="black", linewidth=1.2, linestyle=(0, (8, 2, 1.5, 2)), zorder=2)
            ax.annotate("relief set", xy=(0.005, P(relief)), xycoords=("axes fraction", "data"),
                        xytext=(2, 2), textcoords="offset points", ha="left", fontsize=7.5, bbox=_LABEL_BOX)
        if _finite(t_wc):
            ax.axvline(T(t_wc), color="black", linewidth=0.9, linestyle=(0, (1, 2)), zorder=2)
            ax.annotate("worst-case\ntemperature", xy=(T(t_wc), 0.03), xycoords=("data", "axes fraction"),
                        xytext=(-4, 0), textcoords="offset points", ha="right", fontsize=7.5)

        t_full = (result.get("limits") or {}).get("liquid_full_temperature_k")
        if _finite(t_full) and x0 <= T(t_full) <= x1:
            ax.axvline(T(t_full), color="black", linewidth=0.9, linestyle=(0, (4, 1.5, 1, 1.5, 1, 1.5)), zorder=2)
            ax.annotate("liquid fills\nthe vessel", xy=(T(t_full), 0.97), xycoords=("data", "axes fraction"),
                        xytext=(-4, 0), textcoords="offset points", ha="right", va="top", fontsize=7.5,
                        bbox=_LABEL_BOX)

        ax.margins(y=0.08)
        ax.set_xlabel(f"Gas temperature [{_temp_label(t_unit)}]")
        ax.set_ylabel(f"Pressure [{p_unit}]")
        ax.grid(True, color="#bbbbbb", linewidth=0.4, linestyle="-")
        ax.set_axisbelow(True)
        if ax.get_legend_handles_labels()[0]:
            ax.legend(loc="upper center", bbox_to_anchor=(0.5, -0.16), ncol=3, frameon=False, fontsize=7.5,
                      handlelength=3.2, columnspacing=1.6)
        fig.tight_layout(pad=0.4)

        buf = io.StringIO()
        fig.savefig(buf, format="svg", metadata={"Date": None, "Creator": None, "Format": None, "Type": None})
    return buf.getvalue()


def svg_data_uri(svg_text: str) -> str:
    """A data: URI carrying the SVG text (base64, so no character of it can leave the attribute)."""
    return "data:image/svg+xml;base64," + base64.b64encode(svg_text.encode("utf-8")).decode("ascii")
