"""The strict front door for quantities with units.

Input strings such as ``"50 L"``, ``"200 bar(g)"`` or ``"15 degC"`` are split into a number and a
unit by a fixed pattern; the number must be finite and the unit must be on an allowlist of what a
user of this trade writes. Only then does pint (one registry for the whole package) convert the
number, using a unit name that comes from the allowlist, never from the raw input. Input text never
reaches pint's expression parser and is never evaluated.

Pressures carry a basis: gauge or absolute. ``bar(g)``, ``barg``, ``psig`` … are gauge;
``bar(a)``, ``bara``, ``psia`` … absolute. A bare ``bar`` takes the case's ``pressure_basis``
when the case sets one; otherwise it is an input error.
"""

from __future__ import annotations

import math
import re
import threading
from dataclasses import dataclass
from functools import lru_cache

from screening.constants import (
    G0,
    LAPSE_RATE_STANDARD_ATMOSPHERE,
    M_AIR_STANDARD_ATMOSPHERE,
    P_STANDARD_ATMOSPHERE,
    T0_STANDARD_ATMOSPHERE,
    R,
)
from screening.errors import InputError


class _RegistryOnFirstUse:
    """Stands in for the unit registry until something converts a unit, then builds it.

    Importing pint and parsing its definitions takes a good part of a second, which a process that
    only screens an already-read case (the report commands' child process) does not need to spend. On
    first use the module's ``ureg`` is replaced by the real registry, so later conversions go to it
    directly.
    """

    def __getattr__(self, name: str):
        return getattr(_registry(), name)


_BUILDING = threading.Lock()

#: The units (and prefixes) of pint's own definition files that the allowlist below uses, with those
#: they are defined through. The registry holds these definitions only, taken from pint's files as they
#: are: building pint's whole registry (about 1 000 definitions) takes about 0.17 s of CPU, this one
#: about 0.01 s, and each conversion is the same arithmetic on the same definitions, so the same number
#: to the last bit (tests/test_units.py compares every allowlisted unit with pint's full registry).
PINT_DEFINITIONS = frozenset({
    "milli-", "centi-", "deci-", "kilo-", "mega-",
    "meter", "second", "gram", "kelvin", "percent", "minute", "hour",
    "degree_Celsius", "degree_Fahrenheit", "liter", "newton", "joule", "watt", "pascal", "bar",
    "standard_gravity", "standard_atmosphere", "pound_force_per_square_inch", "force_pound",
    "inch", "foot", "yard", "mile", "grain", "pound",
})


def _pint_definitions() -> list[str] | None:
    """The lines of pint's definition files (default_en.txt, constants_en.txt) that define the units of
    PINT_DEFINITIONS, each exactly once; None where pint's files do not have them so (the whole registry
    is built then)."""
    from importlib import resources

    found: dict[str, list[str]] = {}
    try:
        for name in ("default_en.txt", "constants_en.txt"):
            text = resources.files("pint").joinpath(name).read_text(encoding="utf-8")
            block = None
            for raw in text.splitlines():
                line = raw.split("#", 1)[0].strip()
                if line.startswith("@"):
                    word = line.split()[0]
                    if word in ("@defaults", "@system") or word.startswith("@context"):
                        block = word
                    elif word in ("@end", "@group"):              # a group holds definitions
                        block = None
                    continue                                    # @import, @alias: one line
                if block is not None or "=" not in line:    # @defaults, @system, @context: not definitions
                    continue
                unit = line.split("=", 1)[0].strip()
                if unit in PINT_DEFINITIONS:
                    found.setdefault(unit, []).append(line)
    except (OSError, UnicodeError, ModuleNotFoundError):
        return None
    if set(found) != PINT_DEFINITIONS or any(len(lines) != 1 for lines in found.values()):
        return None
    return [lines[0] for lines in found.values()]


def _registry():
    """The one real registry, built once (under a lock: two registries' quantities do not mix)."""
    global ureg
    with _BUILDING:
        if isinstance(ureg, _RegistryOnFirstUse):
            import pint

            # "" (no lines found) builds pint's whole default registry
            ureg = pint.UnitRegistry(_pint_definitions() or "", autoconvert_offset_to_baseunit=False)
    return ureg


#: The package's one unit registry (built on first use, see _RegistryOnFirstUse).
ureg = _RegistryOnFirstUse()

_NUMBER = r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d{1,4})?"
_PATTERN = re.compile(rf"^\s*({_NUMBER})\s*(.*?)\s*$")
_MAX_TEXT = 64
#: The longest quantity text read [characters] (a longer one is refused).
MAX_TEXT = _MAX_TEXT


@dataclass(frozen=True)
class UnitSpec:
    """One allowlisted unit: its label for display, its dimension kind and its pint name."""

    label: str
    kind: str            # pressure | temperature | volume | mass | fraction | density | length | speed | irradiance
    pint_name: str
    basis: str | None = None   # pressure only: "gauge", "absolute" or None (unstated)


def _pressure_units() -> dict[str, UnitSpec]:
    table: dict[str, UnitSpec] = {}
    for base, pint_name in (("bar", "bar"), ("mbar", "millibar"), ("Pa", "pascal"), ("kPa", "kilopascal"),
                            ("MPa", "megapascal"), ("psi", "psi")):
        table[base] = UnitSpec(base, "pressure", pint_name, None)
        for suffix, basis in (("(g)", "gauge"), ("(a)", "absolute"), ("g", "gauge"), ("a", "absolute")):
            if base == "Pa" and suffix in ("g", "a"):
                continue  # "Pag"/"Paa" are not written in practice
            table[base + suffix] = UnitSpec(f"{base}({suffix.strip('()')})", "pressure", pint_name, basis)
    table["atm"] = UnitSpec("atm", "pressure", "standard_atmosphere", "absolute")
    return table


_UNITS: dict[str, UnitSpec] = {
    **_pressure_units(),
    # temperatures (absolute or on a scale with an offset; converted to kelvin before any arithmetic)
    "K": UnitSpec("K", "temperature", "kelvin"),
    "degC": UnitSpec("degC", "temperature", "degree_Celsius"),
    "°C": UnitSpec("°C", "temperature", "degree_Celsius"),
    "C": UnitSpec("°C", "temperature", "degree_Celsius"),
    "degF": UnitSpec("degF", "temperature", "degree_Fahrenheit"),
    "°F": UnitSpec("°F", "temperature", "degree_Fahrenheit"),
    "F": UnitSpec("°F", "temperature", "degree_Fahrenheit"),
    # volumes
    "L": UnitSpec("L", "volume", "liter"),
    "l": UnitSpec("L", "volume", "liter"),
    "litre": UnitSpec("L", "volume", "liter"),
    "liter": UnitSpec("L", "volume", "liter"),
    "mL": UnitSpec("mL", "volume", "milliliter"),
    "dm3": UnitSpec("dm3", "volume", "decimeter**3"),
    "m3": UnitSpec("m3", "volume", "meter**3"),
    "m³": UnitSpec("m³", "volume", "meter**3"),
    "ft3": UnitSpec("ft3", "volume", "foot**3"),
    "ft³": UnitSpec("ft³", "volume", "foot**3"),
    "cu ft": UnitSpec("ft3", "volume", "foot**3"),
    "in3": UnitSpec("in3", "volume", "inch**3"),
    # masses
    "kg": UnitSpec("kg", "mass", "kilogram"),
    "g": UnitSpec("g", "mass", "gram"),
    "lb": UnitSpec("lb", "mass", "pound"),
    "lbm": UnitSpec("lb", "mass", "pound"),
    # fractions
    "%": UnitSpec("%", "fraction", "percent"),
    "": UnitSpec("", "fraction", "dimensionless"),
    # fill densities / filling ratios
    "kg/L": UnitSpec("kg/L", "density", "kilogram/liter"),
    "kg/l": UnitSpec("kg/L", "density", "kilogram/liter"),
    "kg/m3": UnitSpec("kg/m3", "density", "kilogram/meter**3"),
    "g/L": UnitSpec("g/L", "density", "gram/liter"),
    "lb/ft3": UnitSpec("lb/ft3", "density", "pound/foot**3"),
    # lengths, speeds, irradiance (exposure)
    "m": UnitSpec("m", "length", "meter"),
    "mm": UnitSpec("mm", "length", "millimeter"),
    "cm": UnitSpec("cm", "length", "centimeter"),
    "in": UnitSpec("in", "length", "inch"),
    "ft": UnitSpec("ft", "length", "foot"),
    "m/s": UnitSpec("m/s", "speed", "meter/second"),
    "km/h": UnitSpec("km/h", "speed", "kilometer/hour"),
    "mph": UnitSpec("mph", "speed", "mile/hour"),
    "W/m2": UnitSpec("W/m2", "irradiance", "watt/meter**2"),
    "W/m²": UnitSpec("W/m²", "irradiance", "watt/meter**2"),
}

_SI_UNIT = {
    "pressure": "pascal", "temperature": "kelvin", "volume": "meter**3", "mass": "kilogram",
    "fraction": "dimensionless", "density": "kilogram/meter**3", "length": "meter",
    "speed": "meter/second", "irradiance": "watt/meter**2",
}

_EXAMPLES = {
    "pressure": "a number and a pressure unit with its basis, e.g. '200 bar(g)', '3000 psig', '21 MPa(a)'",
    "temperature": "a number and a temperature unit, e.g. '15 degC', '59 degF', '288.15 K'",
    "volume": "a number and a volume unit, e.g. '50 L', '2.5 ft3', '0.05 m3'",
    "mass": "a number and a mass unit, e.g. '37.5 kg', '82 lb'",
    "fraction": "a percentage or a plain fraction, e.g. '10 %' or '0.1'",
    "density": "a number and a fill-density unit, e.g. '0.75 kg/L'",
    "length": "a number and a length unit, e.g. '229 mm', '1.4 m'",
    "speed": "a number and a speed unit, e.g. '2 m/s', '10 km/h'",
    "irradiance": "a number and an irradiance unit, e.g. '1000 W/m2'",
}


@dataclass(frozen=True)
class Range:
    """The accepted range of one input quantity, in SI as written (a pressure before its basis is
    applied; a temperature tolerance as a difference), and the same range in the words a user reads."""

    name: str
    low: float
    high: float
    text: str
    difference: bool = False   # the value is a difference (temperature tolerance: 2 degC = 2 K)
    message: str | None = None  # the message for a value outside, where not "<name> out of range"


_PRESSURE = Range("pressure", -3e8, 3e8, "at most 3 000 bar (300 MPa, about 43 500 psi) as written")
_TEMPERATURE = Range("temperature", 73.15, 1273.15, "-200 degC to 1 000 degC (73.15 K to 1 273.15 K)")

#: The range of every input quantity, by kind: the range of the quantity of that kind an inventory's
#: plain columns hold (and of every quantity of that kind not named in QUANTITY_RANGES). A value outside
#: is an input error naming the file, the key (or row and column) and the value; so no infinite or
#: overflowing number ever reaches the screening. Pressures must also be above zero absolute and
#: temperatures above 0 K; those checks, and the finer ones (a rating above the atmosphere, a relief
#: setting above it), are the case reader's.
KIND_RANGES: dict[str, Range] = {
    "pressure": _PRESSURE,
    "temperature": _TEMPERATURE,
    "volume": Range("water capacity", 1e-4, 100.0, "0.1 L to 100 m3"),
    "mass": Range("fill mass", 0.0, 2e5, "above 0 kg, at most 200 000 kg"),
    "density": Range("maximum filling ratio", 0.0, 5000.0, "above 0 kg/L, at most 5 kg/L"),
    "fraction": Range("required margin", 0.0, 0.9, "0 % to 90 %"),
    "length": Range("elevation", -500.0, 11000.0, "-500 m to 11 000 m"),
    "speed": Range("wind speed", 0.0, 100.0, "0 m/s to 100 m/s"),
    "irradiance": Range("irradiance", 0.0, 2000.0, "0 W/m2 to 2 000 W/m2"),
}

#: Quantities whose range is not their kind's, by (case key, kind). Keys of a [[scenario]] table are
#: those of [exposure].
QUANTITY_RANGES: dict[tuple[str, str], Range] = {
    ("vessel.outside_diameter", "length"): Range("outside diameter", 0.0, 5.0, "above 0 m, at most 5 m"),
    ("vessel.length", "length"): Range("vessel length", 0.0, 50.0, "above 0 m, at most 50 m"),
    ("exposure.absorptivity", "fraction"): Range("absorptivity", 0.0, 1.0, "a number from 0 to 1, e.g. 0.6",
                                                 message="absorptivity must lie between 0 and 1"),
    ("exposure.emissivity", "fraction"): Range("emissivity", 0.0, 1.0, "a number from 0 to 1, e.g. 0.9",
                                               message="emissivity must lie between 0 and 1"),
    # the case reader then asks for a band smaller than the reading
    ("tolerance.fill_pressure", "fraction"): Range("fill-pressure tolerance", -10.0, 10.0,
                                                   "at least 0 % and below 100 % of the reading"),
    ("tolerance.fill_pressure", "pressure"): _PRESSURE,
    ("tolerance.fill_temperature", "temperature"): Range("fill-temperature tolerance", -100.0, 100.0,
                                                        "0 K to 100 K", difference=True),
    ("tolerance.gas_temperature", "temperature"): Range("gas-temperature tolerance", -100.0, 100.0,
                                                       "0 K to 100 K", difference=True),
}
_SCENARIO_KEY = re.compile(r"^scenario\[\d+\]\.")


def range_for(kind: str, key: str | None = None) -> Range:
    """The accepted range of the quantity `key` (a case key, e.g. 'vessel.water_capacity') of `kind`."""
    if key:
        found = QUANTITY_RANGES.get((_SCENARIO_KEY.sub("exposure.", key), kind))
        if found is not None:
            return found
    return KIND_RANGES[kind]


def _check_range(reading: "Reading", where: dict) -> None:
    rng = range_for(reading.kind, where.get("key"))
    value = reading.si_difference() if rng.difference else reading.si()
    if math.isfinite(value) and rng.low <= value <= rng.high:
        return
    if reading.kind == "temperature" and not rng.difference and math.isfinite(value) and value <= 0.0:
        raise InputError("temperature at or below absolute zero", given=reading.text,
                         expected="a temperature above 0 K; " + rng.text, **where)
    if rng.message is not None:
        raise InputError(rng.message, given=reading.text, expected=rng.text, **where)
    if rng.low >= 0.0 and math.isfinite(value) and value <= 0.0:
        if reading.kind in ("fraction", "speed", "irradiance"):
            raise InputError(f"{rng.name} cannot be negative", given=reading.text, expected=rng.text, **where)
        raise InputError(f"{reading.kind} must be above zero", given=reading.text,
                         expected=f"a positive {reading.kind}: {rng.text}", **where)
    raise InputError(f"{rng.name} out of range", given=reading.text, expected=rng.text, **where)


def expected_for(kind: str) -> str:
    """Plain words for what an input of `kind` should look like."""
    return _EXAMPLES[kind]


@dataclass(frozen=True)
class Reading:
    """A parsed input quantity: the text as entered, the number, and its allowlisted unit."""

    text: str
    number: float
    unit: UnitSpec

    @property
    def kind(self) -> str:
        return self.unit.kind

    def si(self) -> float:
        """Value in SI [Pa, K, m3, kg, -, kg/m3, m, m/s, W/m2]; for a pressure, as written (no basis applied)."""
        return _to_si(self.number, self.unit.pint_name, self.kind)

    def si_difference(self) -> float:
        """Value as a difference (temperature tolerances: 2 degC is a 2 K difference) [SI]."""
        if self.kind == "temperature":
            scale = {"kelvin": 1.0, "degree_Celsius": 1.0, "degree_Fahrenheit": 5.0 / 9.0}[self.unit.pint_name]
            return self.number * scale
        return self.si()


def _to_si(number: float, pint_name: str, kind: str) -> float:
    """pint's conversion of an allowlisted unit to SI, to the last bit: by the unit's own factor (and offset) where
    that is pint's arithmetic (:func:`_to_si_factor`), else by pint itself."""
    affine = _to_si_factor(pint_name, kind)
    if affine is None:
        return _pint_to_si(number, pint_name, kind)
    scale, offset = affine
    return number * scale if offset is None else number * scale + offset


@lru_cache(maxsize=65536)
def _pint_to_si(number: float, pint_name: str, kind: str) -> float:
    """pint conversion of an allowlisted unit to SI; cached, since an inventory repeats its values."""
    q = ureg.Quantity(number, ureg.Unit(pint_name))
    return float(q.to(ureg.Unit(_SI_UNIT[kind])).magnitude)


#: Numbers on which :func:`_to_si_factor` checks a unit's factor against pint before using it.
_PROBES = (0.0, 1.0, -1.0, 0.5, 2.0, 3.0, 7.0, 9.0, 15.0, 20.5, 45.0, 65.0, 100.0, 200.0, 273.15, 300.0, -40.0,
           -17.7777, 1e-3, 0.1, 0.3, 1.6, 12.34, 98.6, 123.456789, 1013.25, 4500.0, 123456.789, 1e6, 3.3e-7)


@lru_cache(maxsize=None)
def _to_si_factor(pint_name: str, kind: str) -> tuple[float, float | None] | None:
    """(scale, offset) with which ``x * scale (+ offset)`` is pint's conversion of `pint_name` to SI bit for bit:
    a multiplicative unit's factor (pint multiplies by it once), or an offset unit's scale and offset as pint's
    own converter holds them (it computes x * scale + offset); checked against pint on _PROBES here and on
    many more numbers in tests/test_units.py; None (pint then converts) where any differs or the converter
    cannot be read."""
    unit, si = ureg.Unit(pint_name), ureg.Unit(_SI_UNIT[kind])
    if float(ureg.Quantity(0.0, unit).to(si).magnitude) == 0.0:
        scale, offset = float(ureg.Quantity(1.0, unit).to(si).magnitude), None
    else:
        try:
            converter = ureg._units[pint_name].converter       # pint's own scale and offset of the unit
            scale, offset = float(converter.scale), float(converter.offset)
        except (AttributeError, KeyError, TypeError, ValueError):
            return None
    for x in _PROBES:
        fast = x * scale if offset is None else x * scale + offset
        if fast != _pint_to_si(x, pint_name, kind):
            return None
    return scale, offset


def _split(text: object, *, where: dict) -> tuple[float, str]:
    if isinstance(text, bool) or not isinstance(text, (str, int, float)):
        raise InputError("expected a quantity written as text", given=text, **where)
    raw = str(text)
    if len(raw) > _MAX_TEXT:
        raise InputError("the quantity is too long to be a number and a unit", given=raw[:_MAX_TEXT] + "…", **where)
    m = _PATTERN.match(raw)
    if not m:
        raise InputError("not a number followed by a unit", given=raw, **where)
    number = float(m.group(1))
    if not math.isfinite(number):
        raise InputError("the number is not finite", given=raw, **where)
    return number, m.group(2)


def parse(text: object, kind: str, *, pressure_basis: str | None = None, **where) -> Reading:
    """Parse `text` as a quantity of dimension `kind`; raise InputError naming `where` otherwise.

    >>> round(parse("50 L", "volume").si(), 12)
    0.05
    >>> parse("15 degC", "temperature").si()
    288.15
    >>> parse("200 bar(g)", "pressure").unit.basis
    'gauge'

    A text read before with the same kind, basis and key gives the same (immutable) reading again without being
    read anew (:func:`_parse_text`: a register repeats its values); a text that is not accepted is read here, so
    that the message names `where`.
    """
    if type(text) is str:
        try:
            return _parse_text(text, kind, pressure_basis, where.get("key"))
        except InputError:
            pass
    return _parse(text, kind, pressure_basis, where)


@lru_cache(maxsize=8192)
def _parse_text(text: str, kind: str, pressure_basis: str | None, key: str | None) -> Reading:
    """:func:`parse` of a text accepted with these arguments (the key chooses the accepted range), kept."""
    return _parse(text, kind, pressure_basis, {} if key is None else {"key": key})


def _parse(text: object, kind: str, pressure_basis: str | None, where: dict) -> Reading:
    """:func:`parse`, read anew."""
    expected = expected_for(kind)
    if kind == "fraction" and isinstance(text, (int, float)) and not isinstance(text, bool):
        text = repr(float(text))
    number, unit_text = _split(text, where={"expected": expected, **where})
    if not unit_text and kind != "fraction":
        raise InputError("a number without its unit", given=str(text), expected=expected, **where)
    spec = _UNITS.get(unit_text)
    if spec is None:
        raise InputError(f"unit '{unit_text}' is not one this tool reads", given=str(text), expected=expected,
                         **where)
    if spec.kind != kind:
        raise InputError(f"'{unit_text}' is a unit of {spec.kind or 'nothing'}, not of {kind}", given=str(text),
                         expected=expected, **where)
    if kind == "pressure" and spec.basis is None:
        if pressure_basis is None:
            raise InputError(
                "a pressure must say whether it is gauge or absolute",
                given=str(text), expected=f"e.g. '{number:g} {spec.label}(g)' or '{number:g} {spec.label}(a)', "
                "or set pressure_basis = \"gauge\" or \"absolute\" at the top of the case", **where)
        spec = UnitSpec(f"{spec.label}({pressure_basis[0]})", "pressure", spec.pint_name, pressure_basis)
    reading = Reading(str(text), number, spec)
    _check_range(reading, where)
    return reading


def si_many(texts: list, kind: str, pressure_basis: str | None = None) -> tuple[list, list]:
    """Many quantity texts of one kind read at once: (SI values as written, units), with None for both
    where a text is not accepted here (not a string, not a number and an allowlisted unit of `kind`, a
    pressure of no stated basis without `pressure_basis`, outside the kind's range in KIND_RANGES):
    :func:`parse` of such a text says why, or reads it. A value given here is exactly ``parse(text, kind,
    pressure_basis=...).si()`` and its unit that reading's: pint converts each unit's numbers as one
    numpy array, with the same arithmetic as one number at a time (tests/test_units.py checks it)."""
    import numpy as np

    values: list = [None] * len(texts)
    specs: list = [None] * len(texts)
    groups: dict[str, list[tuple[int, float]]] = {}
    found: dict[int, UnitSpec] = {}
    for i, text in enumerate(texts):
        if type(text) is not str or len(text) > _MAX_TEXT:
            continue
        m = _PATTERN.match(text)
        if not m:
            continue
        spec = _UNITS.get(m.group(2))
        if spec is None or spec.kind != kind:
            continue
        number = float(m.group(1))
        if not math.isfinite(number):
            continue
        if kind == "pressure" and spec.basis is None:
            if pressure_basis is None:
                continue
            spec = UnitSpec(f"{spec.label}({pressure_basis[0]})", "pressure", spec.pint_name, pressure_basis)
        found[i] = spec
        groups.setdefault(spec.pint_name, []).append((i, number))
    for pint_name, members in groups.items():
        si, inside = si_array(np.array([x for _, x in members], dtype=float), pint_name, kind)
        for (i, _), v, ok in zip(members, si.tolist(), inside.tolist()):
            if ok:
                values[i] = v
                specs[i] = found[i]
    return values, specs


def si_array(numbers, pint_name: str, kind: str):
    """pint's conversion of a numpy array of `numbers` [float] in the allowlisted unit `pint_name` to the SI unit of
    `kind`, as one array (the conversion :func:`si_many` makes of each unit's numbers), and whether each value lies
    in the kind's range (KIND_RANGES; an overflow is inf, outside): (SI values [array], inside [bool array])."""
    import numpy as np

    rng = KIND_RANGES[kind]
    with np.errstate(over="ignore", invalid="ignore"):
        si = np.asarray(ureg.Quantity(numbers, ureg.Unit(pint_name)).to(ureg.Unit(_SI_UNIT[kind])).magnitude,
                        dtype=float)
        inside = np.isfinite(si) & (si >= rng.low) & (si <= rng.high)
    return si, inside


def unit_after_number(unit: str, kind: str) -> UnitSpec | None:
    """The allowlisted unit of `kind` that :func:`parse` and :func:`si_many` read in a text ``f"{number} {unit}"``
    (a number of :data:`_NUMBER`'s form, whatever it is: the pattern splits the unit off after it the same way),
    None where they read none there. A pressure unit of no stated basis is given as it is (basis None)."""
    m = _PATTERN.match(f"0 {unit}")
    spec = _UNITS.get(m.group(2)) if m else None
    return spec if spec is not None and spec.kind == kind else None


def to_absolute_pressure(reading: Reading, atmospheric_pa: float) -> float:
    """Absolute pressure [Pa] of a pressure reading, adding the site's atmospheric pressure to gauge values."""
    p = reading.si()
    return p + atmospheric_pa if reading.unit.basis == "gauge" else p


def standard_atmosphere_pressure(elevation_m: float) -> float:
    """Atmospheric pressure [Pa] at `elevation_m` [m] by the standard-atmosphere barometric formula.

    p = p0 (1 - L h / T0) ** (g0 M / (R L))  (ISO 2533:1975, troposphere, valid up to 11 000 m).

    >>> round(standard_atmosphere_pressure(1000.0))
    89875
    """
    if not -500.0 <= elevation_m <= 11000.0:
        raise InputError("elevation outside the standard-atmosphere troposphere", given=elevation_m,
                         expected="-500 m to 11 000 m")
    exponent = G0 * M_AIR_STANDARD_ATMOSPHERE / (R * LAPSE_RATE_STANDARD_ATMOSPHERE)
    return P_STANDARD_ATMOSPHERE * (1.0 - LAPSE_RATE_STANDARD_ATMOSPHERE * elevation_m / T0_STANDARD_ATMOSPHERE) ** exponent


# ---------------------------------------------------------------- display (the edge going out)

@lru_cache(maxsize=None)
def _affine(from_unit: str, to_unit: str) -> tuple[float, float]:
    """(scale, offset) with value_to = scale * value_from + offset, taken from pint once per unit pair
    (every allowlisted unit is linear in SI, temperatures with an offset)."""
    zero = float(ureg.Quantity(0.0, ureg.Unit(from_unit)).to(ureg.Unit(to_unit)).magnitude)
    far = float(ureg.Quantity(1e6, ureg.Unit(from_unit)).to(ureg.Unit(to_unit)).magnitude)
    return (far - zero) / 1e6, zero


def from_si(value: float, label: str) -> float:
    """Convert an SI value into the allowlisted unit `label` (no pressure basis handling)."""
    spec = _UNITS[label] if label in _UNITS else _UNITS[label.replace("(g)", "").replace("(a)", "")]
    scale, offset = _affine(_SI_UNIT[spec.kind], spec.pint_name)
    return scale * value + offset


def pressure_in(p_abs_pa: float, label: str, atmospheric_pa: float) -> float:
    """An absolute pressure [Pa] expressed in the display unit `label` (e.g. 'bar(g)', 'psia')."""
    spec = _UNITS[label]
    p = p_abs_pa - atmospheric_pa if spec.basis == "gauge" else p_abs_pa
    scale, offset = _affine("pascal", spec.pint_name)
    return float(scale * p + offset)


def temperature_in(t_k: float, label: str) -> float:
    """A temperature [K] in the display unit `label` ('K', 'degC', '°C', 'degF', '°F')."""
    spec = _UNITS[label]
    scale, offset = _affine("kelvin", spec.pint_name)
    return float(scale * t_k + offset)


def _fmt(x: float, digits: int) -> str:
    return f"{x:,.{digits}f}".replace(",", "\u2009") if abs(x) >= 10000 else f"{x:.{digits}f}"


def format_pressure(p_abs_pa: float | None, label: str, atmospheric_pa: float, digits: int | None = None) -> str:
    """'250.6 bar(g)' from an absolute pressure [Pa]; '—' for None."""
    if p_abs_pa is None:
        return "—"
    v = pressure_in(p_abs_pa, label, atmospheric_pa)
    if digits is None:
        digits = 1 if abs(v) >= 10 else 2 if abs(v) >= 1 else 3
    return f"{_fmt(v, digits)} {_UNITS[label].label}"


def format_temperature(t_k: float | None, label: str, digits: int = 1) -> str:
    """'65.0 °C' from a temperature [K]; '—' for None."""
    if t_k is None:
        return "—"
    spec = _UNITS[label]
    shown = {"degC": "°C", "degF": "°F"}.get(spec.label, spec.label)
    return f"{temperature_in(t_k, label):.{digits}f} {shown}"


def format_quantity(value_si: float | None, label: str, digits: int = 2) -> str:
    """Any other allowlisted quantity from SI into `label`."""
    if value_si is None:
        return "—"
    return f"{_fmt(from_si(value_si, label), digits)} {_UNITS[label].label}".rstrip()


def format_percent(fraction: float | None, digits: int = 1) -> str:
    if fraction is None:
        return "—"
    return f"{100.0 * fraction:.{digits}f} %"


def percent_pair(value: float | None, reference: float | None) -> tuple[str, str]:
    """Two fractions as percentages rounded so that their order stays visible: one decimal, or more (up to
    four) while the rounded values would tie or invert the true order; a reason never says "10.0 % is below
    the required 10.0 %".

    >>> percent_pair(0.0996, 0.10)
    ('9.96 %', '10.00 %')
    >>> percent_pair(0.167, 0.10)
    ('16.7 %', '10.0 %')
    """
    if value is None or reference is None:
        return format_percent(value), format_percent(reference)
    for digits in (1, 2, 3, 4):
        a, b = round(100 * value, digits), round(100 * reference, digits)
        if (value < reference) == (a < b) and (value > reference) == (a > b):
            break
    return format_percent(value, digits), format_percent(reference, digits)
