"""Results listed as a site reads them: counts by verdict, worst first, the figures of a row in the user's units.

Formatting of finished results only (no physics); shared by the batch, its files, the batch PDF and verify.
"""

from __future__ import annotations

import math

from screening.units import format_percent, format_pressure, format_temperature
from screening.verdicts import LISTING_ORDER

#: The verdict words, most severe first: the order of the counts, of the terminal table, of the batch PDF's
#: listing and of --sort severity.
ORDER = tuple(str(v) for v in LISTING_ORDER)
_RANK = {v: i for i, v in enumerate(ORDER)}


def severity_key(r: dict) -> tuple:
    """Worst first: input-error, over, out-of-scope, low-margin, within; then lowest margin; then row."""
    return severity_key_of(r["verdict"], r.get("margin_fraction"), r["row"])


def severity_key_of(verdict: str, m: float | None, row: int) -> tuple:
    """:func:`severity_key` of a row given by its verdict, margin [-] (or None) and row."""
    return (_RANK.get(verdict, 0), m if m is not None else -math.inf, row)


def ranked(results: list[dict]) -> list[dict]:
    """The results worst first (see severity_key)."""
    return sorted(results, key=severity_key)


def summary(results: list[dict]) -> dict:
    counts = {v: 0 for v in ORDER}
    for r in results:
        counts[r["verdict"]] = counts.get(r["verdict"], 0) + 1
    dups = sum(1 for r in results for w in r.get("warnings", []) if w.get("code") == "duplicate-id")
    return {"rows": len(results), "counts": counts, "duplicate_ids": dups}


def _units(r: dict) -> tuple[str, str, float]:
    """(pressure unit, temperature unit, the site's atmospheric pressure [Pa]) of a screened row's record."""
    du = r["display_units"]
    return du.get("pressure", "bar(g)"), du.get("temperature", "degC"), r["site"]["atmospheric_pressure_pa"]


def cells(r: dict) -> dict:
    """The row's figures as text in the user's units. `r` is a row's summary record
    (`Result.summary_record` with its "row") or its input-error record."""
    if r["verdict"] == "input-error":
        return {"peak": "", "rated": "", "margin": "", "t_max": "", "p_max": "", "gas": ""}
    pu, tu, atm = _units(r)
    lim = r["limits"]
    return {
        "peak": format_pressure(r["peak_pressure_pa"], pu, atm),
        "rated": format_pressure(r["rated_pressure_pa"], pu, atm),
        "margin": format_percent(r["margin_fraction"]),
        "t_max": format_temperature(lim["max_gas_temperature_k"], tu),
        "p_max": format_pressure(lim["max_fill_pressure_pa"], pu, atm),
        "gas": r["gas"]["name"],
    }
