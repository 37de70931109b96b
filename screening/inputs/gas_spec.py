"""Parse the fill gas of an input file into a Mixture.

Accepted forms (nothing is ever evaluated):

* a text with one gas name: ``"nitrogen"``, ``"CO2"`` (pure gas);
* a text of terms joined by ``+``, each term ``<gas name> <percent>%``, percent of moles:
  ``"argon 82% + carbon dioxide 18%"``. The percent is a plain decimal number
  (digits, optional decimal point; no sign, no exponent), 0 < percent <= 100.
  Every term must have its percentage, and they must sum to 100 % within 0.5 %.
  Fractions without a percent sign (``"0.82 argon"``) are rejected;
* the trade's short forms, with the carrier (balance) gas named without a number, first or after
  ``in``: ``"argon + 8 % CO2"``, ``"CO2 18 % in argon"``, ``"nitrogen + 50 ppm carbon monoxide"``; the
  amount may stand before or after the name. The balance is 100 % less the others (which must leave
  something for it);
* amounts in ``%`` (or ``mol %``, ``vol %``: mole and volume percent are taken as equal, an ideal-gas
  reading, common practice for gas mixtures) or ``ppm`` (parts per million by moles); mass percent when
  stated as such (``mass %``, ``wt %``, or the whole text ending in ``by mass``), converted to mole
  fractions with the library's molar masses. Mass and mole amounts cannot be mixed in one text;
* a refrigerant blend by its designation (``"R-410A"``, ``"R-407C"``, ``"R-404A"``): its nominal mass
  composition (:data:`NAMED_BLENDS`);
* a table (dict) ``{gas name: value}`` where a value is either a number, the mole
  fraction [-] with 0 < x <= 1, or a text ``"<percent> %"`` (``"82 %"``, ``"82%"``).

Numbers must be finite: NaN and infinity are rejected.
"""

from __future__ import annotations

import math
import re

from screening.errors import InputError
from screening.physics.gases import FRACTION_SUM_TOLERANCE, Mixture, make_mixture, mixture_by_mass, pure

GRAMMAR = ("a gas name, or '<gas> <percent>% + <gas> <percent>% ...' (e.g. 'argon 82% + carbon dioxide 18%', "
           "'argon + 8 % CO2', 'CO2 18 % in argon', 'nitrogen + 50 ppm carbon monoxide', "
           "'propane 60 % + n-butane 40 % by mass')")
TABLE_VALUE = "a mole fraction 0 < x <= 1, or a text '<percent> %'"

_NUMBER = r"(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)"
_UNIT = r"(?P<unit>(?:mol(?:e)?\s*|vol(?:ume)?\s*|mass\s*|wt\s*)?%|ppm(?:v|\s*mol)?)"
_AMOUNT = r"(?P<pct>" + _NUMBER + r")\s*" + _UNIT
_TERM = re.compile(r"^(?P<name>\S(?:.*?\S)?)\s+" + _AMOUNT + r"$", re.IGNORECASE)
_TERM_BEFORE = re.compile(r"^" + _AMOUNT + r"\s+(?P<name>\S(?:.*?\S)?)$", re.IGNORECASE)
_PERCENT_TEXT = re.compile(r"^\s*(?P<pct>" + _NUMBER + r")\s*%\s*$")
_BY_MASS = re.compile(r"\s*(?:,\s*)?by\s+mass\s*$", re.IGNORECASE)
_BY_MOLE = re.compile(r"\s*(?:,\s*)?by\s+(?:mole|moles|volume)\s*$", re.IGNORECASE)
_IN = re.compile(r"\s+in\s+", re.IGNORECASE)


def _percent_to_fraction(pct_text: str, *, file, key, given, unit: str = "%") -> float:
    pct = float(pct_text)
    if unit.lower().startswith("ppm"):
        if not math.isfinite(pct) or pct <= 0.0 or pct >= 1e6:
            raise InputError("ppm amount out of range", file=file, key=key, given=given,
                             expected="0 < ppm < 1 000 000")
        return pct * 1e-6
    if not math.isfinite(pct) or pct <= 0.0 or pct > 100.0:
        raise InputError("percentage out of range", file=file, key=key, given=given,
                         expected="0 < percent <= 100")
    return pct / 100.0


def _amount_term(term: str):
    """(name, amount text, unit) of a term with its amount after or before the name, else None."""
    m = _TERM.match(term) or _TERM_BEFORE.match(term)
    if not m:
        return None
    return m.group("name"), m.group("pct"), re.sub(r"\s+", "", m.group("unit").lower())


def _is_mass(unit: str) -> bool:
    return unit.startswith("mass") or unit.startswith("wt")


#: Refrigerant blends by their designation (ISO 817 / ANSI/ASHRAE Standard 34): nominal composition by mass,
#: a fact of the trade (common practice). Screened as mixtures of their components.
NAMED_BLENDS = {
    "R410A": "R-32 50 % + R-125 50 % by mass",
    "R407C": "R-32 23 % + R-125 25 % + R-134a 52 % by mass",
    "R404A": "R-125 44 % + R-143a 52 % + R-134a 4 % by mass",
}


def _blend_key(text: str) -> str:
    return "".join(ch for ch in text.upper() if ch not in " -_\t")


def _parse_text(text: str, *, file, key) -> dict[str, float] | str:
    """A pure name (returned as str) or {name: mole fraction}."""
    s = text.strip()
    if not s:
        raise InputError("empty gas", file=file, key=key, given=text, expected=GRAMMAR)
    if _blend_key(s) in NAMED_BLENDS:
        return _parse_text(NAMED_BLENDS[_blend_key(s)], file=file, key=key)
    by_mass = bool(_BY_MASS.search(s))
    s = _BY_MOLE.sub("", _BY_MASS.sub("", s))
    if "+" not in s and "%" not in s and "ppm" not in s.lower():
        return s
    balance: str | None = None
    parts = _IN.split(s)
    if len(parts) == 2 and "+" not in parts[1]:
        # "<gas> <amount> [+ ...] in <carrier>": the carrier is the balance
        s, balance = parts[0], parts[1].strip()
    elif len(parts) > 2:
        raise InputError("'in' may name one carrier gas only", file=file, key=key, given=text, expected=GRAMMAR)
    terms = [t.strip() for t in s.split("+")]
    amounts: dict[str, tuple[float, str]] = {}
    for i, term in enumerate(terms):
        parsed = _amount_term(term)
        if parsed is None:
            if i == 0 and balance is None and len(terms) > 1 and term and "%" not in term:
                balance = term      # "argon + 8 % CO2": the carrier named first without an amount
                continue
            raise InputError(f"cannot read the term '{term}'", file=file, key=key, given=text, expected=GRAMMAR)
        name, pct, unit = parsed
        if name in amounts or name == balance:
            raise InputError(f"'{name}' is given twice", file=file, key=key, given=text, expected="each gas once")
        amounts[name] = (_percent_to_fraction(pct, file=file, key=key, given=text, unit=unit), unit)
    units_mass = {_is_mass(u) or (by_mass and not u.startswith("ppm")) for _, u in amounts.values()}
    if len(units_mass) > 1:
        raise InputError("mass and mole amounts are mixed", file=file, key=key, given=text,
                         expected="all amounts by moles (%, mol %, vol %, ppm) or all by mass (mass %, wt %)")
    mass = units_mass == {True}
    out = {name: x for name, (x, _) in amounts.items()}
    if balance is not None:
        rest = 1.0 - math.fsum(out.values())
        if not rest > 1e-9:
            raise InputError(f"the amounts given leave nothing for the balance gas '{balance}'", file=file,
                             key=key, given=text, expected="amounts summing to less than 100 %")
        out = {balance: rest, **out}
    elif not mass:
        total = math.fsum(out.values())
        if abs(total - 1.0) > FRACTION_SUM_TOLERANCE:
            raise InputError(f"the amounts sum to {total * 100:.6g} %", file=file, key=key, given=text,
                             expected=f"100 % within {FRACTION_SUM_TOLERANCE:.1%}, or a balance gas named without "
                             "an amount ('argon + 8 % CO2')")
    if mass:
        return _MassFractions(out)
    return out


class _MassFractions(dict):
    """{gas name: mass fraction}: a composition stated by mass (converted by gases.mixture_by_mass)."""


def _parse_table(table: dict, *, file, key) -> dict[str, float]:
    out: dict[str, float] = {}
    for name, v in table.items():
        k = f"{key}.{name}"
        if not isinstance(name, str) or not name.strip():
            raise InputError("a gas name must be text", file=file, key=key, given=name, expected="a gas name")
        if isinstance(v, bool):
            raise InputError("not a number", file=file, key=k, given=v, expected=TABLE_VALUE)
        if isinstance(v, (int, float)):
            x = float(v)
            if not math.isfinite(x) or x <= 0.0 or x > 1.0:
                raise InputError("mole fraction out of range", file=file, key=k, given=v, expected=TABLE_VALUE)
        elif isinstance(v, str):
            m = _PERCENT_TEXT.match(v)
            if not m:
                raise InputError("cannot read the percentage", file=file, key=k, given=v, expected=TABLE_VALUE)
            x = _percent_to_fraction(m.group("pct"), file=file, key=k, given=v)
        else:
            raise InputError("not a number", file=file, key=k, given=v, expected=TABLE_VALUE)
        out[name.strip()] = x
    return out


def parse_gas(value: object, *, file: str | None = None, key: str = "fill.gas") -> Mixture:
    """Read the fill gas from an input value (text or table); see the module doc for the grammar.

    Errors are InputError (UnknownGas for a name not in the library) carrying `file` and `key`.
    """
    try:
        if isinstance(value, str):
            spec = _parse_text(value, file=file, key=key)
            if isinstance(spec, str):
                return pure(spec)
            if isinstance(spec, _MassFractions):
                return mixture_by_mass(dict(spec))
            return make_mixture(spec)
        if isinstance(value, dict):
            if not value:
                raise InputError("empty gas table", file=file, key=key, given=value, expected=GRAMMAR)
            return make_mixture(_parse_table(value, file=file, key=key))
        raise InputError("the gas must be a text or a table", file=file, key=key, given=value, expected=GRAMMAR)
    except InputError as err:
        if err.file is None or err.key is None:
            located = err.located(file=file, key=key)
            if hasattr(err, "suggestions"):
                err.file = err.file or file
                err.key = err.key or key
                err.args = (str(err),)
                raise err from None
            raise located from None
        raise
