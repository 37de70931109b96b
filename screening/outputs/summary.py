"""The terminal summary of one vessel's result: a view, in the units the user wrote."""

from __future__ import annotations

import textwrap

from screening.units import format_percent, format_pressure, format_quantity, format_temperature

_VERDICT_WORDS = {
    "within": "WITHIN RATING",
    "low-margin": "LOW MARGIN",
    "over": "OVER RATING",
    "out-of-scope": "CANNOT BE SCREENED",
}


def verdict_words(verdict: str) -> str:
    return _VERDICT_WORDS[verdict]


def _wrap(text: str, indent: str = "  ") -> str:
    return textwrap.fill(text, width=92, initial_indent=indent, subsequent_indent=indent, break_on_hyphens=False)


def format_summary(result: dict) -> str:
    """A short human summary of a result dict."""
    du = result["display_units"]
    atm = result["site"]["atmospheric_pressure_pa"]
    P = lambda p: format_pressure(p, du["pressure"], atm)  # noqa: E731
    T = lambda t: format_temperature(t, du["temperature"])  # noqa: E731
    lines: list[str] = []
    lines.append(f"Screening of {result['id']}" + (f" — {result['description']}" if result.get("description") else ""))
    lines.append("")
    lines.append(f"  Verdict: {verdict_words(result['verdict'])} ({result['verdict']})")
    for r in result["reasons"]:
        lines.append(_wrap("- " + r, "    "))
    lines.append("")
    lines.append("Inputs (as entered → converted)")
    for item in result["inputs"]:
        si = item["si_value"]
        conv = f"{si:.6g} {item['si_unit']}" if si is not None else ""
        lines.append(f"  {item['key']:<28} {item['entered']:<18} → {conv}")
    lines.append(f"  {'gas':<28} {result['gas']['name']}")
    fill = result["fill"]
    lines.append("")
    lines.append("Fill")
    if fill["pressure_pa"] is not None:
        lines.append(f"  pressure {P(fill['pressure_pa'])} at {T(fill['temperature_k'])}")
    lines.append(f"  phase {fill['phase'] or 'not established'}; density "
                 f"{format_quantity(fill['density_kg_m3'], 'kg/m3', 1)}; "
                 f"filling ratio {format_quantity(fill['density_kg_m3'], 'kg/L', 3)}; "
                 f"mass {format_quantity(fill['mass_kg'], du['mass'], 2)}")
    lines.append("")
    lines.append(f"Peak at {T(result['worst_case_temperature_k'])} ({result['worst_case_basis']})")
    for name, m in result["models"].items():
        val = P(m["peak_pressure_pa"]) if m["applicable"] else "not applicable"
        mark = "  ← governs" if name == result["governing_model"] else ""
        lines.append(f"  {name:<12} {val}{mark}")
        if not m["applicable"]:
            lines.append(_wrap(m["note"], "               "))
    tol = result.get("tolerance")
    if tol and tol.get("bounding_peak_pressure_pa") is not None:
        sens = tol["sensitivities"]
        lines.append(f"  bounding     {P(tol['bounding_peak_pressure_pa'])} with the input tolerances "
                     f"({', '.join(f'{k.replace(chr(95), chr(32))} ±{v}' for k, v in tol['entered'].items())}); "
                     "the verdict uses it")
        parts = [f"dP/dT {sens['dp_peak_dt_gas'] / 1e5:.2f} bar/K"]
        if sens.get("dp_peak_dp_fill") is not None:
            parts.append(f"dP/dP_fill {sens['dp_peak_dp_fill']:.3f}")
            parts.append(f"dP/dT_fill {sens['dp_peak_dt_fill'] / 1e5:.2f} bar/K")
        lines.append("               sensitivities: " + ", ".join(parts))
    lines.append(f"  rated        {P(result['rated_pressure_pa'])}"
                 + (f" ({result['vessel']['rated_pressure_kind']})" if result["vessel"]["rated_pressure_kind"] else ""))
    if result["relief_set_pressure_pa"] is not None:
        lines.append(f"  relief set   {P(result['relief_set_pressure_pa'])}")
    lines.append(f"  margin       {format_percent(result['margin_fraction'])} (required "
                 f"{format_percent(result['required_margin_fraction'])}"
                 + (", tool default" if result["required_margin_is_default"] else "") + ")")
    if result.get("exposure"):
        b = result["exposure"]
        lines.append(f"  sun: absorbed {b['absorbed_w_m2']:.0f} W/m2 = convected {b['convected_w_m2']:.0f} + radiated "
                     f"{b['radiated_w_m2']:.0f}; wall {T(b['wall_temperature_k'])} at ambient {T(b['ambient_k'])}"
                     + (" (dimensions estimated)" if b["dimensions_estimated"] else ""))
    if len(result.get("scenarios", [])) > 1:
        lines.append("")
        lines.append("Scenarios (worst first is marked *)")
        for sc in result["scenarios"]:
            mark = "*" if sc["governing"] else " "
            lines.append(f"  {mark} {sc['name'][:28]:<28} {T(sc['worst_case_temperature_k']):>10}  "
                         f"peak {P(sc['peak_pressure_pa']):>14}  margin {format_percent(sc['margin_fraction']):>8}  "
                         f"{sc['verdict']}")
    lim = result["limits"]
    lines.append("")
    lines.append("Limits")
    lines.append(f"  highest gas temperature before the rated pressure: {T(lim['max_gas_temperature_k'])}")
    if fill["given"] == "pressure":
        lines.append(f"  highest fill pressure at {T(fill['temperature_k'])} for the required margin: "
                     f"{P(lim['max_fill_pressure_pa'])}")
    if lim.get("max_fill_mass_kg") is not None:
        lines.append(f"  highest fill mass: {format_quantity(lim['max_fill_mass_kg'], du['mass'], 2)} "
                     f"({format_quantity(lim['max_filling_ratio_kg_per_l'] * 1000.0, 'kg/L', 3)}; limited by "
                     f"{lim['max_fill_mass_basis']})")
    if lim.get("liquid_full_temperature_k") is not None:
        lines.append(f"  liquid-full temperature: {T(lim['liquid_full_temperature_k'])}")
    if result["warnings"]:
        lines.append("")
        lines.append("Warnings")
        for w in result["warnings"]:
            lines.append(_wrap(f"- {w['message']}", "  "))
    lines.append("")
    lines.append(_wrap("CAUTION: " + result["cautions"]["caution"], ""))
    return "\n".join(lines)
