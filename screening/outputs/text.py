"""Text helpers shared by the views: units as the user wrote them, text from a case made safe to show.

Formatting only; no physics. Every view (terminal, PDF, batch PDF) shows text that came from a case
file (ids, descriptions, site names) through :func:`visible`, so a control character, an ANSI escape
or a bidirectional override can neither drive the terminal nor reorder what a reviewer reads.
"""

from __future__ import annotations

import re
import unicodedata

from screening.constants import P_STANDARD_ATMOSPHERE
from screening.result import Result
from screening.units import (
    format_temperature,
    percent_pair,  # noqa: F401  (views import it from here)
    pressure_in,
)

#: Bidirectional formatting characters (Unicode Bidirectional Algorithm, UAX #9, Table 4): embeddings,
#: overrides, isolates and the implicit marks. Shown as visible escapes, never passed on.
BIDI_CONTROLS = frozenset("\u202a\u202b\u202c\u202d\u202e\u2066\u2067\u2068\u2069\u200e\u200f\u061c")

_ESCAPE_RE = re.compile(r"[\x00-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069\u200e\u200f\u061c]")


def _escape(ch: str) -> str:
    code = ord(ch)
    return f"\\x{code:02x}" if code < 0x100 else f"\\u{code:04x}"


def visible(text: object, *, keep_newlines: bool = False) -> str:
    """`text` with control characters (C0, DEL, C1, so also ANSI escapes) and bidirectional formatting
    characters replaced by visible escapes (``\\x1b``, ``\\u202e``). Newlines and tabs are kept where
    `keep_newlines` is set (the case file as entered)."""
    s = str(text)

    def sub(m: re.Match) -> str:
        ch = m.group(0)
        if keep_newlines and ch in "\n\t":
            return ch
        if keep_newlines and ch == "\r":
            return ""
        return _escape(ch)

    return _ESCAPE_RE.sub(sub, s)


def shorten(text: str, width: int) -> str:
    """`text` cut to at most `width` characters, an ellipsis marking the cut."""
    if width < 1:
        return ""
    return text if len(text) <= width else text[: width - 1].rstrip() + "\u2026"


def display_width(text: str) -> int:
    """Terminal columns of `text`: East Asian wide and full-width characters take two."""
    return sum(2 if unicodedata.east_asian_width(c) in ("W", "F") else 0 if unicodedata.combining(c) else 1
               for c in text)


def _entered_unit(entered: str) -> str:
    m = re.match(r"\s*[-+]?[0-9][0-9_.,eE+-]*\s*(.*?)\s*$", str(entered))
    return m.group(1) if m else ""


def pressure_unit(result: Result) -> str:
    """The pressure unit as the user wrote it in the case ('psig' stays 'psig', 'bar(g)' stays 'bar(g)'):
    the unit of the first pressure among the inputs, where the unit table knows it; the result's display
    unit otherwise."""
    for item in result.inputs:
        if str(item.si_unit).startswith("Pa"):
            unit = _entered_unit(item.entered)
            try:
                pressure_in(P_STANDARD_ATMOSPHERE, unit, P_STANDARD_ATMOSPHERE)   # a unit the table knows?
            except (KeyError, ValueError, TypeError):
                continue
            return unit
    return result.display_units.get("pressure", "bar(g)")


def fmt_pressure(result: Result, p_abs_pa: float | None, digits: int | None = None) -> str:
    """A pressure of the result in the unit the user wrote ('2764.6 psig'); '—' for None."""
    if p_abs_pa is None:
        return "\u2014"
    unit = pressure_unit(result)
    atm = result.site.atmospheric_pressure_pa
    v = pressure_in(p_abs_pa, unit, atm)
    if digits is None:
        digits = 1 if abs(v) >= 10 else 2 if abs(v) >= 1 else 3
    return f"{v:.{digits}f} {unit}"


def fmt_temperature(result: Result, t_k: float | None) -> str:
    """A temperature of the result in the user's scale ('65.0 °C'); '—' for None."""
    return format_temperature(t_k, result.display_units.get("temperature", "degC"))


def reasons_shown(result: Result) -> list[str]:
    """The result's reasons as a reader sees them: made visible (see :func:`visible`). Their percentages come
    from the engine already rounded so that they never contradict each other (units.percent_pair)."""
    return [visible(reason) for reason in result.reasons]


def phase_words(result: Result, phase: object) -> str:
    """A phase name as a reader understands it. CoolProp calls every state above the critical temperature
    'supercritical'; below the critical pressure that is plainly a gas (10 bar(g) air), above it a dense
    gas above its critical point. The critical pressure is the generalized model's (pseudo)critical one."""
    if phase is None:
        return "\u2014"
    text = str(phase)
    if text not in ("supercritical", "supercritical_gas", "supercritical gas"):
        return visible(text.replace("_", " "))
    pc = result.models["generalized"].pseudocritical_pressure_pa
    p_fill = result.fill.pressure_pa
    if text != "supercritical" or (pc is not None and p_fill is not None and p_fill < pc):
        return "gas (above its critical temperature)"
    return "supercritical (dense gas above its critical point)"
