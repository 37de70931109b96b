"""Text listing of the gas library (what `screening gases` prints)."""

from __future__ import annotations

import textwrap

from screening.physics.gases import citations, edition, library

_COLUMNS = ("name", "formula", "M g/mol", "Tc K", "Pc bar", "omega", "kind", "hazards", "reference EOS")


def _eos_key(gas) -> str:
    """Short source key of the gas's critical temperature (the EOS reference where CoolProp has one)."""
    full = gas.sources.get("critical_temperature", "")
    for k, v in citations().items():
        if v == full:
            return k if gas.coolprop_name else f"none ({k})"
    return "-"


def format_library() -> str:
    """The library as a plain-text table, followed by the list of sources."""
    rows = []
    for g in library().values():
        rows.append((
            g.name,
            g.formula,
            f"{g.molar_mass * 1e3:.4f}",
            f"{g.critical_temperature:.2f}",
            f"{g.critical_pressure / 1e5:.2f}",
            f"{g.acentric_factor:+.4f}",
            g.kind + (" (quantum)" if g.quantum else ""),
            ", ".join(g.hazards) or "-",
            _eos_key(g),
        ))
    widths = [max(len(c), *(len(r[i]) for r in rows)) for i, c in enumerate(_COLUMNS)]
    numeric = {2, 3, 4, 5}

    def line(cells):
        return "  ".join(c.rjust(w) if i in numeric else c.ljust(w)
                         for i, (c, w) in enumerate(zip(cells, widths))).rstrip()

    ed = edition()
    out = [f"Gas library, edition {ed['edition']} ({ed['date']})", ""]
    out.append(line(_COLUMNS))
    out.append(line(["-" * w for w in widths]))
    out.extend(line(r) for r in rows)
    out += ["", "M molar mass, Tc and Pc critical temperature and pressure, omega acentric factor.",
            "Dissolved gases cannot be screened by this method.", ""]
    out += _mixture_lines() + ["", "Sources:"]
    for k, v in citations().items():
        out.append(textwrap.fill(v, width=100, initial_indent=f"  [{k}] ", subsequent_indent="      "))
    return "\n".join(out) + "\n"


def _mixture_lines() -> list[str]:
    """The mixtures of the trade with the models that apply (physics.mixtures.trade_mixture_models)."""
    from screening.physics.eos.reference import citation
    from screening.physics.mixtures import trade_mixture_models

    out = ["Mixtures of the trade (any composition of library gases may be given) and their models; in",
           "brackets the sources of the fitted binary parameters, listed below:"]
    numbers: dict[str, int] = {}
    for row in trade_mixture_models():
        keys = sorted({k for _, _, k in row["pairs"] if k})
        refs = ", ".join(str(numbers.setdefault(k, len(numbers) + 1)) for k in keys)
        out.append(textwrap.fill(f"{row['label']}: {row['models']}" + (f" [{refs}]" if refs else ""),
                                 width=100, initial_indent="  ", subsequent_indent="      "))
    out.append("Sources of the fitted binary parameters:")
    for key, n in numbers.items():
        out.append(textwrap.fill(f"[{n}] {citation(key)}", width=100, initial_indent="  ",
                                 subsequent_indent="      "))
    return out
