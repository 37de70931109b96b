"""The terminal summary of one vessel's result: a view, in the units the user wrote.

Pressures and temperatures are shown in the units of the case (a pressure entered in psig stays in
psig); absolute SI values appear only in the JSON. Lines are wrapped at the terminal's width with
their continuation lines indented; text from the case is shown through
:func:`screening.outputs.text.visible`, so control characters, ANSI escapes and bidirectional
overrides in an id or a name are printed as visible escapes.
"""

from __future__ import annotations

import re
import shutil
import textwrap

from screening.cautions import TOLERANCES_TAKEN_OFF, ceiling_name
from screening.outputs.actions import action_line
from screening.outputs.text import (
    fmt_pressure,
    fmt_temperature,
    percent_pair,
    phase_words,
    pressure_unit,
    reasons_shown,
    shorten,
    visible,
)
from screening.result import Result, ScenarioSummary
from screening.units import format_percent, format_quantity, pressure_in

_VERDICT_WORDS = {
    "within": "WITHIN RATING",
    "low-margin": "LOW MARGIN",
    "over": "OVER RATING",
    "out-of-scope": "CANNOT BE SCREENED",
}

_SEVERITY = {"out-of-scope": 0, "over": 1, "low-margin": 2, "within": 3}


def verdict_words(verdict: str) -> str:
    return _VERDICT_WORDS[verdict]


def terminal_width() -> int:
    """Columns to wrap at: the terminal's width (COLUMNS or the terminal itself), 92 when not a terminal,
    kept between 50 and 140."""
    return max(50, min(140, shutil.get_terminal_size((92, 24)).columns))


_GLUE_RE = re.compile(r"(?<=[0-9]) (?=[%°A-Za-z\u00b5])")


class _Writer:
    def __init__(self, width: int) -> None:
        self.width = width
        self.lines: list[str] = []

    def blank(self) -> None:
        self.lines.append("")

    def add(self, text: str, indent: str = "", hang: str | None = None) -> None:
        """`text` wrapped at the width; continuation lines indented by `hang` (default: two more than `indent`)."""
        hang = indent + "  " if hang is None else hang
        # a number stays on the line of its unit: the space between them is held by a placeholder
        glued = _GLUE_RE.sub("\x07", text)
        wrapped = textwrap.wrap(glued, width=self.width, initial_indent=indent, subsequent_indent=hang,
                                break_on_hyphens=False, break_long_words=True) or [indent.rstrip()]
        self.lines.extend(line.replace("\x07", " ") for line in wrapped)


def _difference(result: Result, dp_pa: float) -> tuple[float, str]:
    """A pressure difference [Pa] in the user's pressure scale ('psi' for psig, 'bar' for bar(g))."""
    unit = pressure_unit(result)
    atm = result.site.atmospheric_pressure_pa
    value = pressure_in(atm + dp_pa, unit, atm) - pressure_in(atm, unit, atm)
    base = unit[:-3] if unit.endswith(("(g)", "(a)")) else unit[:-1] if unit[-1:] in "ga" and unit != "atm" else unit
    return value, base


def scenarios_worst_first(result: Result) -> list[ScenarioSummary]:
    """The scenarios, the most severe verdict first and among equals the smallest margin."""
    def key(sc):
        m = sc.margin_fraction
        return (_SEVERITY.get(sc.verdict, 0), m if m is not None else float("-inf"))
    return sorted(result.scenarios, key=key)


def format_summary(result: Result, width: int | None = None) -> str:
    """A short human summary of a result, wrapped at `width` columns (default: the terminal's)."""
    w = _Writer(width or terminal_width())
    P = lambda p: fmt_pressure(result, p)  # noqa: E731
    T = lambda t: fmt_temperature(result, t)  # noqa: E731
    du = result.display_units
    head = f"Screening of {visible(result.id)}"
    if result.description:
        head += f" \u2014 {visible(result.description)}"
    w.add(head, "", "  ")
    w.blank()
    w.add(f"Verdict: {verdict_words(result.verdict)} ({result.verdict})", "  ")
    for r in reasons_shown(result):
        w.add("- " + r, "    ", "      ")
    action = action_line(result)
    if action:
        w.add("\u2192 " + action, "    ", "      ")
    w.blank()
    w.add("Inputs (as entered)")
    key_width = min(28, max([len(str(i.key)) for i in result.inputs] + [3]))
    for item in result.inputs:
        w.add(f"{shorten(visible(item.key), key_width):<{key_width}}  {visible(item.entered)}", "  ",
              "  " + " " * (key_width + 2))
    w.add(f"{'gas':<{key_width}}  {visible(result.gas.name)}", "  ", "  " + " " * (key_width + 2))
    fill = result.fill
    w.blank()
    w.add("Fill")
    if fill.pressure_pa is not None:
        w.add(f"pressure {P(fill.pressure_pa)} at {T(fill.temperature_k)}", "  ")
    w.add(f"phase {phase_words(result, fill.phase) if fill.phase else 'not established'}; density "
          f"{format_quantity(fill.density_kg_m3, 'kg/m3', 1)}; "
          f"filling ratio {format_quantity(fill.density_kg_m3, 'kg/L', 3)}; "
          f"mass {format_quantity(fill.mass_kg, du['mass'], 2)}", "  ")
    w.blank()
    w.add(f"Peak at {T(result.worst_case_temperature_k)} ({result.worst_case_basis})")
    for name, m in result.models.items():
        val = P(m.peak_pressure_pa) if m.applicable else "not applicable"
        mark = "  \u2190 governs" if name == result.governing_model else ""
        w.add(f"{name:<12} {val}{mark}", "  ")
        if not m.applicable:
            w.add(visible(m.note), " " * 15, " " * 15)
    tol = result.tolerance
    if tol and tol.bounding_peak_pressure_pa is not None:
        sens = tol.sensitivities
        bands = ", ".join(f"{k.replace('_', ' ')} \u00b1{visible(v)}" for k, v in tol.entered.items())
        w.add(f"{'bounding':<12} {P(tol.bounding_peak_pressure_pa)} with the input tolerances ({bands}); "
              "the verdict uses it", "  ", " " * 15)
        dpdt, dunit = _difference(result, sens.dp_peak_dt_gas)
        parts = [f"dP/dT {dpdt:.2f} {dunit}/K"]
        if sens.dp_peak_dp_fill is not None:
            parts.append(f"dP/dP_fill {sens.dp_peak_dp_fill:.3f}")
            parts.append(f"dP/dT_fill {_difference(result, sens.dp_peak_dt_fill)[0]:.2f} {dunit}/K")
        w.add("sensitivities: " + ", ".join(parts), " " * 15, " " * 17)
    w.add(f"{'rated':<12} {P(result.rated_pressure_pa)}"
          + (f" ({visible(result.vessel.rated_pressure_kind)})" if result.vessel.rated_pressure_kind
             else ""), "  ")
    if result.relief_set_pressure_pa is not None:
        w.add(f"{'relief set':<12} {P(result.relief_set_pressure_pa)}", "  ")
    margin, required = percent_pair(result.margin_fraction, result.required_margin_fraction)
    w.add(f"{'margin':<12} {margin} (required {required}"
          + (", tool default" if result.required_margin_is_default else "") + ")", "  ")
    if result.exposure:
        b = result.exposure
        w.add(f"sun: absorbed {b.absorbed_w_m2:.0f} W/m2 = convected {b.convected_w_m2:.0f} + radiated "
              f"{b.radiated_w_m2:.0f}; wall {T(b.wall_temperature_k)} at ambient {T(b.ambient_k)}"
              + (" (dimensions estimated)" if b.dimensions_estimated else ""), "  ", " " * 7)
    if len(result.scenarios) > 1:
        w.blank()
        w.add("Scenarios, worst first (* governs)")
        name_width = min(28, max(len(visible(sc.name)) for sc in result.scenarios))
        for sc in scenarios_worst_first(result):
            mark = "*" if sc.governing else " "
            w.add(f"{mark} {shorten(visible(sc.name), name_width):<{name_width}}  "
                  f"{T(sc.worst_case_temperature_k):>9}  peak {P(sc.peak_pressure_pa):>14}  "
                  f"margin {format_percent(sc.margin_fraction):>7}  {sc.verdict}", "  ",
                  " " * (name_width + 6))
    lim = result.limits
    w.blank()
    w.add("Limits")
    w.add(f"highest gas temperature before {ceiling_name(result.relief_set_pressure_pa, result.rated_pressure_pa)}: "
          f"{T(lim.max_gas_temperature_k)}", "  ")
    if fill.given == "pressure":
        w.add(f"highest fill pressure at {T(fill.temperature_k)} for the required margin: "
              f"{P(lim.max_fill_pressure_pa)}", "  ")
    if lim.max_fill_mass_kg is not None:
        w.add(f"highest fill mass: {format_quantity(lim.max_fill_mass_kg, du['mass'], 2)} "
              f"({format_quantity(lim.max_filling_ratio_kg_per_l * 1000.0, 'kg/L', 3)}; limited by "
              f"{lim.max_fill_mass_basis})", "  ")
    t_full = lim.liquid_full_temperature_k
    if t_full is not None and t_full >= fill.temperature_k:
        w.add(f"liquid-full temperature: {T(t_full)}", "  ")
    if result.tolerance is not None:
        w.add(f"In these limits {TOLERANCES_TAKEN_OFF}.", "  ", "  ")
    if result.warnings:
        w.blank()
        w.add("Warnings")
        for item in result.warnings:
            w.add(f"- {visible(item.message)}", "  ", "    ")
    w.blank()
    w.add("CAUTION: " + result.cautions.caution, "", "  ")
    return "\n".join(w.lines)
