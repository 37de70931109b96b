"""The action line: one plain sentence of what would make a vessel pass, for every verdict but `within`.

Formatting only. Every number comes from the finished result: the limits the screening solved
(``limits.max_fill_pressure_pa`` and ``limits.max_fill_mass_kg`` keep the required margin at the
worst case; ``limits.max_gas_temperature_k`` is where the rated pressure, or a lower relief set pressure,
is reached) and the
verdicts of its scenarios. The terminal summary, the PDF report and the batch PDF all take the
sentence from :func:`action_line`.
"""

from __future__ import annotations

from screening.cautions import ceiling_name
from screening.outputs.text import fmt_pressure, fmt_temperature, visible
from screening.result import Result
from screening.units import format_quantity


def _scenario_hint(result: Result) -> str | None:
    """'move it out of the sun …' where a scenario without sun is within and the governing one is in
    the sun; otherwise '… as in scenario X' where some scenario is within."""
    scenarios = result.scenarios
    if len(scenarios) < 2:
        return None
    governing = next((sc for sc in scenarios if sc.governing), None)
    passing = [sc for sc in scenarios if sc.verdict == "within"]
    if not passing:
        return None
    shaded = [sc for sc in passing if not sc.exposure]
    if governing is not None and governing.exposure and shaded:
        return f"move it out of the sun (scenario \u2018{visible(shaded[0].name)}\u2019 is within)"
    return f"keep it as in scenario \u2018{visible(passing[0].name)}\u2019, which is within"


def action_line(result: Result) -> str | None:
    """What would make the vessel pass, as one sentence in the user's units; None for `within`."""
    verdict = result.verdict
    if verdict == "within":
        return None
    if verdict not in ("low-margin", "over"):
        return ("No limit can be given: this method does not cover the vessel as described; have it assessed "
                "by other means (the reasons say why).")
    fill = result.fill
    limits = result.limits
    parts = []
    hint = _scenario_hint(result)
    if hint:
        parts.append(hint)
    p_max, m_max = limits.max_fill_pressure_pa, limits.max_fill_mass_kg
    p_fill, m_fill = fill.pressure_pa, fill.mass_kg
    mass_unit = result.display_units.get("mass", "kg")
    if fill.given == "pressure" and p_max is not None and p_fill is not None and p_max < p_fill:
        text = f"fill to at most {fmt_pressure(result, p_max)} at {fmt_temperature(result, fill.temperature_k)}"
        if m_max is not None:
            text += f" (at most {format_quantity(m_max, mass_unit, 2)})"
        parts.append(text)
    elif m_max is not None and m_fill is not None and m_max < m_fill:
        parts.append(f"fill at most {format_quantity(m_max, mass_unit, 2)}")
    t_max = limits.max_gas_temperature_k
    t_worst = result.worst_case_temperature_k
    ceiling = ceiling_name(result.relief_set_pressure_pa, result.rated_pressure_pa)
    keep_below = (f"keep the gas below {fmt_temperature(result, t_max)}, "
                  + (f"where it reaches {ceiling}" if result.tolerance is None else
                     f"which keeps it below {ceiling} within the reading tolerances")
                  if t_max is not None else None)
    if not parts:
        if keep_below and t_worst is not None and t_worst >= t_max:
            return "To pass: " + keep_below + "."
        return ("No limit of this screening removes the reason by itself; the reasons above say what must "
                "change.")
    line = "To pass: " + "; or ".join(parts) + "."
    if keep_below:
        line += " In any case " + keep_below + "."
    return line
