"""Parse the fill gas of an input file into a Mixture.

Accepted forms (nothing is ever evaluated):

* a text with one gas name: ``"nitrogen"``, ``"CO2"`` (pure gas);
* a text of terms joined by ``+``, each term ``<gas name> <percent>%``, percent of moles:
  ``"argon 82% + carbon dioxide 18%"``. The percent is a plain decimal number
  (digits, optional decimal point; no sign, no exponent), 0 < percent <= 100.
  Every term must have its percentage, and they must sum to 100 % within 0.5 %.
  Fractions without a percent sign (``"0.82 argon"``) are rejected;
* a table (dict) ``{gas name: value}`` where a value is either a number, the mole
  fraction [-] with 0 < x <= 1, or a text ``"<percent> %"`` (``"82 %"``, ``"82%"``).

Numbers must be finite: NaN and infinity are rejected.
"""

from __future__ import annotations

import math
import re

from screening.errors import InputError
from screening.physics.gases import Mixture, make_mixture, pure

GRAMMAR = "a gas name, or '<gas> <percent>% + <gas> <percent>% ...' (e.g. 'argon 82% + carbon dioxide 18%')"
TABLE_VALUE = "a mole fraction 0 < x <= 1, or a text '<percent> %'"

_NUMBER = r"(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)"
_TERM = re.compile(r"^(?P<name>\S(?:.*?\S)?)\s+(?P<pct>" + _NUMBER + r")\s*%$")
_PERCENT_TEXT = re.compile(r"^\s*(?P<pct>" + _NUMBER + r")\s*%\s*$")


def _percent_to_fraction(pct_text: str, *, file, key, given) -> float:
    pct = float(pct_text)
    if not math.isfinite(pct) or pct <= 0.0 or pct > 100.0:
        raise InputError("percentage out of range", file=file, key=key, given=given,
                         expected="0 < percent <= 100")
    return pct / 100.0


def _parse_text(text: str, *, file, key) -> dict[str, float] | str:
    """A pure name (returned as str) or {name: fraction}."""
    s = text.strip()
    if not s:
        raise InputError("empty gas", file=file, key=key, given=text, expected=GRAMMAR)
    if "+" not in s and "%" not in s:
        return s
    out: dict[str, float] = {}
    for raw in s.split("+"):
        term = raw.strip()
        m = _TERM.match(term)
        if not m:
            raise InputError(f"cannot read the term '{term}'", file=file, key=key, given=text, expected=GRAMMAR)
        name = m.group("name")
        if name in out:
            raise InputError(f"'{name}' is given twice", file=file, key=key, given=text, expected="each gas once")
        out[name] = _percent_to_fraction(m.group("pct"), file=file, key=key, given=text)
    return out


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
