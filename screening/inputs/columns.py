"""Column-wise reading of the plain rows of an inventory, for the batch engine.

An inventory of thousands of cylinders repeats its values: a few gases, capacities and ratings, fill
pressures and temperatures written to a tenth. Reading every row through the case validator costs far
more than screening it, so the rows that hold only the plain keys below are read column by column:
each distinct cell text is parsed once, with the same unit parser (:func:`screening.units.parse`) and
the same gas parser as a case file, and the row's values are gathered into arrays in SI. The bare numbers of a
quantity column with a unit in its header are read at once (:func:`_bare_column`), to the same values.

What a plain row is: every non-empty cell (or default) belongs to :data:`PLAIN_KEYS`; the fill is given
by pressure and temperature, or by mass and temperature; a row in the sun (``solar`` "sun" with its ambient
maximum, and any of the balance's inputs: finish or absorptivity, emissivity, irradiance, wind speed, orientation,
the vessel's outside diameter and length) is plain; and every check of :func:`screening.inputs.case.parse_case_data` that
applies to these keys passes. Anything else, or any doubt, leaves the row to
:func:`screening.inputs.inventory.row_case`, the authoritative reader, which also writes the located
message of a bad row. This module never writes an error message of its own: a row it cannot accept is
simply not plain. ``tests/test_columns.py`` checks that every plain row gives exactly the values the
case reader gives.
"""

from __future__ import annotations

import hashlib
import math
import re
from dataclasses import dataclass
from itertools import chain
from operator import itemgetter

import numpy as np

from screening import __version__
from screening.constants import P_STANDARD_ATMOSPHERE
from screening.errors import InputError
from screening.inputs.case import ATMOSPHERIC_PRESSURE_RANGE_PA, DEFAULT_REQUIRED_MARGIN, Case, Exposure, Site
from screening.inputs.gas_spec import parse_gas
from screening.inputs.headers import TEXT_KEYS
from screening.inputs.inventory import Inventory, Unreadable, cell_value, default_text, row_case
from screening.physics.gases import Mixture
from screening.units import (
    MAX_TEXT,
    parse,
    si_array,
    si_many,
    standard_atmosphere_pressure,
    unit_after_number,
)

#: The energy balance's quantity inputs a plain row may give: (case key, quantity kind as units.parse names it).
#: Each is read one text at a time by units.parse with its key (whose range is the key's, not the kind's), then
#: held to the case reader's rule: above zero (the dimensions), zero or more (irradiance, wind speed), or 0 to 1
#: (absorptivity and emissivity, read without a unit label or an input record, as the case reader reads them).
SUN_QUANTITIES = (("vessel.outside_diameter", "length"), ("vessel.length", "length"),
                  ("exposure.irradiance", "irradiance"), ("exposure.absorptivity", "fraction"),
                  ("exposure.emissivity", "fraction"), ("exposure.wind_speed", "speed"))
_NON_NEGATIVE = {"exposure.irradiance", "exposure.wind_speed"}
_UNIT_FRACTIONS = {"exposure.absorptivity", "exposure.emissivity"}

#: Case keys a plain row may hold (as columns or defaults).
PLAIN_KEYS = frozenset({
    "id", "description", "pressure_basis", "site.name", "site.atmospheric_pressure", "site.elevation",
    "fill.gas", "vessel.water_capacity", "vessel.rated_pressure", "vessel.rated_pressure_kind",
    "vessel.relief_set_pressure", "vessel.max_filling_ratio", "fill.pressure", "fill.temperature", "fill.mass",
    "exposure.ambient_max", "exposure.gas_temperature", "exposure.solar", "exposure.finish",
    "criteria.required_margin", *(k for k, _ in (SUN_QUANTITIES + (("exposure.orientation", None),))),
})
_TEXT = {"id", "description", "site.name", "vessel.rated_pressure_kind", "exposure.finish"}
_PRESSURES = ("vessel.rated_pressure", "vessel.relief_set_pressure", "fill.pressure")


class _NotPlain(Exception):
    """A value the column reader does not accept; the row goes to the case reader."""


@dataclass
class PlainRows:
    """Plain rows of an inventory as arrays in SI (pressures absolute [Pa], temperatures [K], [m3], [-]).

    ``index[j]`` is the position in ``inv.rows`` of the j-th plain row; NaN marks an absent optional value
    (each row has a fill pressure or a fill mass [kg], the other NaN); ``sun[j]``: the row's exposure is in
    the sun (``solar = "sun"``; its ambient maximum is then given).
    """

    inv: Inventory
    defaults: dict | None
    index: np.ndarray
    ids: list[str]
    gases: list[Mixture]
    atmospheric_pa: np.ndarray
    water_capacity_m3: np.ndarray
    rated_pa: np.ndarray
    relief_pa: np.ndarray
    max_filling_ratio_kg_m3: np.ndarray
    fill_pressure_pa: np.ndarray
    fill_temperature_k: np.ndarray
    ambient_max_k: np.ndarray
    gas_temperature_k: np.ndarray
    required_margin: np.ndarray
    required_margin_is_default: np.ndarray
    display_units: list[dict]
    fill_mass_kg: np.ndarray
    #: [m] the site's elevation where the row gives it (NaN otherwise)
    elevation_m: np.ndarray | None = None
    #: per key, the text the case reader reads for it per plain row (cell or default; _MISSING where neither)
    entered: dict[str, list] | None = None
    #: (header, cell text as the case reader reads it, per plain row) of every column of a case key
    cell_texts: list[tuple[str, list[str]]] | None = None
    #: whether each plain row is in the sun (None: no row is)
    sun: np.ndarray | None = None
    #: each plain row's surface finish as entered (None where not given; the list None: no row gives one)
    finishes: list | None = None
    #: the other inputs of the sun's balance given (SUN_QUANTITIES [SI, NaN where absent], and
    #: "exposure.orientation" [text or None]): {key: per plain row}, only the keys some row gives
    sun_inputs: dict | None = None

    def __len__(self) -> int:
        return len(self.ids)

    def case(self, j: int) -> Case:
        """The j-th plain row's full Case (for a report or a JSON result), built from the values the columns
        read: the same Case, field for field and input record for input record, as the case reader gives
        (:meth:`read_case`; tests/test_columns.py checks it). Built anew on each call, so that a large batch
        does not keep a Case per row."""
        if self.entered is None:
            return self.read_case(j)
        si = self._si_values()
        texts = {k: v[j] for k, v in self.entered.items() if v[j] is not _MISSING}
        inputs = tuple({"key": key, "entered": t if type(t := texts[key]) is str else default_text(None, t),
                        "si_value": si[key][j], "si_unit": unit} for key, unit in _RECORDS if key in texts)
        lines = [f"{header} = {values[j]!r}" for header, values in self.cell_texts if values[j]]

        def opt(key: str) -> float | None:
            v = si[key][j]
            return None if math.isnan(v) else v
        ambient, hot = opt("exposure.ambient_max"), opt("exposure.gas_temperature")
        extra = self.sun_values(j)
        return Case(
            id=self.ids[j], description=texts.get("description"), source=self.inv.source,
            text="\n".join(lines) + "\n",
            site=Site(texts.get("site.name"), si["site.atmospheric_pressure"][j], opt("site.elevation")),
            gas=self.gases[j], water_capacity_m3=si["vessel.water_capacity"][j],
            rated_pressure_pa=si["vessel.rated_pressure"][j], rated_pressure_kind=texts.get("vessel.rated_pressure_kind"),
            relief_set_pressure_pa=opt("vessel.relief_set_pressure"),
            max_filling_ratio_kg_m3=opt("vessel.max_filling_ratio"), fill_pressure_pa=opt("fill.pressure"),
            fill_temperature_k=si["fill.temperature"][j], fill_mass_kg=opt("fill.mass"),
            ambient_max_k=ambient, gas_temperature_k=hot, required_margin=si["criteria.required_margin"][j],
            required_margin_is_default=bool(self.required_margin_is_default[j]),
            inputs=inputs, display_units=dict(self.display_units[j]),
            scenarios=(self.exposure(j),),
            outside_diameter_m=extra["vessel.outside_diameter"], length_m=extra["vessel.length"])

    def case_row(self, j: int, gas_part: dict) -> CaseRow:
        """The j-th plain row's :class:`CaseRow`: what :meth:`case` gives, for laying out the row's result as a
        line of JSON, without building the Case (`gas_part`: its gas's part, screen.gas_part, which the caller
        may share between the rows of one gas). tests/test_batch_json.py keeps it equal to :meth:`case`."""
        si = self._si_values()
        records, description, site_name, rated_kind = self._record_columns()
        inputs = [{"key": key, "entered": t if type(t := texts[j]) is str else default_text(None, t),
                   "si_value": values[j], "si_unit": unit} for key, unit, texts, values in records
                  if texts[j] is not _MISSING]
        relief, ratio = si["vessel.relief_set_pressure"][j], si["vessel.max_filling_ratio"][j]
        fill_p, fill_m = si["fill.pressure"][j], si["fill.mass"][j]
        elevation = si["site.elevation"][j]
        row = CaseRow()
        row.gas = self.gases[j]
        row.atmospheric_pressure_pa = atm = si["site.atmospheric_pressure"][j]
        row.water_capacity_m3 = water = si["vessel.water_capacity"][j]
        row.rated_pressure_pa = rated = si["vessel.rated_pressure"][j]
        row.relief_set_pressure_pa = relief = None if relief != relief else relief
        row.max_filling_ratio_kg_m3 = ratio = None if ratio != ratio else ratio
        row.fill_pressure_pa = None if fill_p != fill_p else fill_p
        row.fill_temperature_k = si["fill.temperature"][j]
        row.fill_mass_kg = None if fill_m != fill_m else fill_m
        row.required_margin = si["criteria.required_margin"][j]
        row.required_margin_is_default = bool(self.required_margin_is_default[j])
        row.parts = {
            "id": self.ids[j], "description": _entered(description, j), "source": self.inv.source,
            "tool_version": __version__, "input_sha256": self._input_hashes()[j],
            "site": {"name": _entered(site_name, j), "atmospheric_pressure_pa": atm,
                     "elevation_m": None if elevation != elevation else elevation},
            "gas": gas_part,
            "vessel": {"water_capacity_m3": water, "rated_pressure_pa": rated,
                       "rated_pressure_kind": _entered(rated_kind, j),
                       "relief_set_pressure_pa": relief,
                       "max_filling_ratio_kg_per_l": ratio / 1000.0 if ratio is not None else None},
            "inputs": inputs, "display_units": self.display_units[j]}
        return row

    def _input_hashes(self) -> list[str]:
        """For :meth:`case_row`, worked out once for every plain row: the SHA-256 of each row's case text (what
        :meth:`case` gives as its ``text``, whose ``input_sha256`` it is), the text laid out column by column."""
        got = self.__dict__.get("_hashes")
        if got is None:
            pieces = [[f"{header} = {v!r}" if v else "" for v in values] for header, values in self.cell_texts]
            sha = hashlib.sha256
            # the texts of the columns a row fills, one a line ("" where it fills none: left out)
            got = self.__dict__["_hashes"] = (
                [sha(("\n".join(filter(None, row)) + "\n").encode("utf-8")).hexdigest() for row in zip(*pieces)]
                if pieces else [sha(b"\n").hexdigest()] * len(self))
        return got

    def _record_columns(self) -> tuple:
        """For :meth:`case_row`, worked out once: the input records' (key, SI unit, entered texts, SI values) of
        the keys some row enters, in :data:`_RECORDS`' order, and the entered texts of the description, the
        site's name and the rated pressure's kind (None where no row enters one)."""
        got = self.__dict__.get("_records")
        if got is None:
            si = self._si_values()
            entered = self.entered
            got = self.__dict__["_records"] = (
                tuple((key, unit, entered[key], si[key]) for key, unit in _RECORDS if key in entered),
                entered.get("description"), entered.get("site.name"), entered.get("vessel.rated_pressure_kind"))
        return got

    def exposure(self, j: int) -> Exposure:
        """The j-th plain row's one exposure scenario, as the case reader makes it."""
        ambient, hot = self.ambient_max_k[j].item(), self.gas_temperature_k[j].item()
        x = self.sun_values(j)
        return Exposure("exposure", None if math.isnan(ambient) else ambient, None if math.isnan(hot) else hot,
                        "sun" if self.in_sun(j) else "none", x["exposure.irradiance"], x["exposure.absorptivity"],
                        x["exposure.emissivity"], self.finish(j), x["exposure.wind_speed"] or 0.0,
                        x["exposure.orientation"] or "horizontal", key="exposure")

    def sun_values(self, j: int) -> dict:
        """The j-th plain row's inputs of the sun's balance besides its ambient and finish: {key: SI value or
        orientation text, None where not given} for every key of SUN_QUANTITIES and "exposure.orientation"."""
        got = dict.fromkeys([k for k, _ in SUN_QUANTITIES] + ["exposure.orientation"])
        for k, values in (self.sun_inputs or {}).items():
            v = values[j]
            got[k] = None if v is None or (isinstance(v, float) and math.isnan(v)) else v
        return got

    def in_sun(self, j: int) -> bool:
        """Whether the j-th plain row is in the sun."""
        return self.sun is not None and bool(self.sun[j])

    def finish(self, j: int) -> str | None:
        """The j-th plain row's surface finish as entered (None where not given)."""
        return self.finishes[j] if self.finishes is not None else None

    def _si_values(self) -> dict[str, list[float]]:
        """Each key's SI values per plain row as Python floats (NaN where absent), listed once."""
        got = self.__dict__.get("_si")
        if got is None:
            got = self.__dict__["_si"] = {
                "site.atmospheric_pressure": self.atmospheric_pa, "site.elevation": self.elevation_m,
                "vessel.water_capacity": self.water_capacity_m3, "vessel.rated_pressure": self.rated_pa,
                "vessel.relief_set_pressure": self.relief_pa, "vessel.max_filling_ratio": self.max_filling_ratio_kg_m3,
                "fill.pressure": self.fill_pressure_pa, "fill.temperature": self.fill_temperature_k,
                "fill.mass": self.fill_mass_kg, "exposure.ambient_max": self.ambient_max_k,
                "exposure.gas_temperature": self.gas_temperature_k, "criteria.required_margin": self.required_margin}
            for k, a in got.items():
                got[k] = a.tolist()
            for k, _kind in SUN_QUANTITIES:
                values = (self.sun_inputs or {}).get(k)
                got[k] = list(values) if values is not None else [math.nan] * len(self)
        return got

    def read_case(self, j: int) -> Case:
        """The j-th plain row read again by the case reader, the authoritative one."""
        n, cells = self.inv.rows[int(self.index[j])]
        return row_case(self.inv, n, cells, self.defaults)


def _entered(texts: list | None, j: int):
    """The j-th row's entered text of a key (None where neither the row nor a default gives one)."""
    if texts is None:
        return None
    t = texts[j]
    return None if t is _MISSING else t


class _Exposure:
    """A plain row's exposure scenario as far as its result's layout reads it: its name."""

    __slots__ = ()
    name = "exposure"


class CaseRow:
    """A plain row's Case as far as the layout of its result as a line of JSON reads it
    (:meth:`PlainRows.case_row`): the Case's fields the columns' layout reads (``engine._row_dict``), ``site``
    (the row itself: its ``atmospheric_pressure_pa``), one scenario named "exposure", and ``parts``, the case's
    parts of the result (screen.case_parts) without the cautions, which a batch's JSON leaves out."""

    __slots__ = ("gas", "atmospheric_pressure_pa", "water_capacity_m3", "rated_pressure_pa", "relief_set_pressure_pa",
                 "max_filling_ratio_kg_m3", "fill_pressure_pa", "fill_temperature_k", "fill_mass_kg",
                 "required_margin", "required_margin_is_default", "parts")
    scenarios = (_Exposure(),)

    @property
    def site(self) -> CaseRow:
        return self


#: The input records of a plain row's Case, in the order the case reader makes them (key, SI unit).
_RECORDS = (("site.atmospheric_pressure", "Pa (absolute)"), ("site.elevation", "m"),
            ("vessel.water_capacity", "m3"), ("vessel.rated_pressure", "Pa (absolute)"),
            ("vessel.relief_set_pressure", "Pa (absolute)"), ("vessel.max_filling_ratio", "kg/m3"),
            ("fill.pressure", "Pa (absolute)"), ("fill.temperature", "K"), ("fill.mass", "kg"),
            ("vessel.outside_diameter", "m"), ("vessel.length", "m"),
            ("exposure.ambient_max", "K"), ("exposure.gas_temperature", "K"), ("exposure.irradiance", "W/m2"),
            ("exposure.wind_speed", "m/s"),
            ("criteria.required_margin", "(fraction)"))


def _flatten_defaults(defaults: dict | None) -> dict[str, object] | None:
    """Defaults as {case key: value}; None if they hold anything a plain row cannot (scenarios, tolerances…)."""
    flat: dict[str, object] = {}
    for k, v in (defaults or {}).items():
        if isinstance(v, dict):
            for k2, v2 in v.items():
                flat[f"{k}.{k2}"] = v2
        else:
            flat[k] = v
    if any(k not in PLAIN_KEYS or isinstance(v, (dict, list)) for k, v in flat.items()):
        return None
    return flat


_MISSING = object()


def _parser(key: str):
    """value -> parsed value for one key; raises for a value a plain row may not hold. Pressures take
    (value, basis) and give (SI value as written, gauge?, unit label)."""
    if key in _TEXT:
        def text(value):
            if not isinstance(value, str) or not value.strip():
                raise _NotPlain
            return value
        return text
    if key == "exposure.orientation":
        def orientation(value):     # as the case reader reads it: exactly "horizontal" or "vertical"
            if value not in ("horizontal", "vertical"):
                raise _NotPlain
            return value
        return orientation
    if key in _SUN_KINDS:
        sun_kind = _SUN_KINDS[key]

        def sun_quantity(value):
            reading = parse(value, sun_kind, key=key)
            v = reading.si()
            if key in _UNIT_FRACTIONS:
                good = 0.0 <= v <= 1.0
            elif key in _NON_NEGATIVE:
                good = 0.0 <= v < math.inf
            else:
                good = 0.0 < v < math.inf
            if not good:
                raise _NotPlain
            return v, reading.unit.label
        return sun_quantity
    if key == "exposure.solar":
        def solar(value):           # as the case reader reads it: exactly "none" or "sun"
            if value not in ("none", "sun"):
                raise _NotPlain
            return value == "sun"
        return solar
    if key == "pressure_basis":
        def basis(value):
            if value not in ("gauge", "absolute"):
                raise _NotPlain
            return value
        return basis
    if key == "fill.gas":
        return parse_gas
    if key in _PRESSURES:
        def pressure(arg):
            value, basis = arg
            reading = parse(value, "pressure", pressure_basis=basis)
            if not math.isfinite(reading.si()):
                raise _NotPlain
            return reading.si(), reading.unit.basis == "gauge", reading.unit.label
        return pressure
    if key == "site.atmospheric_pressure":
        def atmospheric(value):
            reading = parse(value, "pressure", pressure_basis="absolute")
            p = reading.si()
            lo, hi = ATMOSPHERIC_PRESSURE_RANGE_PA
            if reading.unit.basis == "gauge" or not lo <= p <= hi:
                raise _NotPlain
            return p, reading.unit.label
        return atmospheric
    if key == "site.elevation":
        def elevation(value):
            h = parse(value, "length").si()
            return standard_atmosphere_pressure(h), None, h
        return elevation
    kind = _KINDS[key]

    def quantity(value):
        reading = parse(value, kind)
        v = reading.si()
        if not math.isfinite(v):
            raise _NotPlain
        if kind == "fraction":
            if not 0.0 <= v < 1.0:
                raise _NotPlain
        elif not v > 0.0:
            raise _NotPlain
        return v, reading.unit.label
    return quantity


_KINDS = {"vessel.water_capacity": "volume", "vessel.max_filling_ratio": "density", "fill.mass": "mass",
          "fill.temperature": "temperature", "exposure.ambient_max": "temperature",
          "exposure.gas_temperature": "temperature", "criteria.required_margin": "fraction",
          **{k: "pressure" for k in _PRESSURES}}
_SUN_KINDS = dict(SUN_QUANTITIES)


def _accepted(key: str, kind: str, v: float, spec):
    """What `_parser(key)` gives for a text read by `si_many` as (v, spec); None where it must decide."""
    if kind == "pressure":
        return v, spec.basis == "gauge", spec.label
    if kind == "fraction":
        return (v, spec.label) if 0.0 <= v < 1.0 else None
    return (v, spec.label) if v > 0.0 else None


class _Cache:
    """Parses each distinct value of one key once; _NotPlain for a value that does not parse."""

    def __init__(self, key: str) -> None:
        self.key = key
        self.parse = _parser(key)
        self.seen: dict = {}

    def prime(self, values: list) -> None:
        """Read the distinct texts among `values` of a quantity key at once (units.si_many: one pint
        conversion per unit, the same numbers as one at a time); a text it does not accept is left to
        the one-by-one parser, which decides."""
        kind = _KINDS.get(self.key)
        if kind is None:
            return
        todo = set()
        for v in values:
            if v is _MISSING:
                continue
            try:
                if v not in self.seen:
                    todo.add(v)
            except TypeError:          # unhashable: __call__ refuses it
                continue
        if kind == "pressure":       # (text, basis) pairs, read per basis
            by_basis: dict = {}
            for text, basis in todo:
                by_basis.setdefault(basis, []).append(text)
            for basis, texts in by_basis.items():
                if basis not in (None, "gauge", "absolute"):
                    continue
                for text, v, spec in zip(texts, *si_many(texts, kind, pressure_basis=basis)):
                    got = None if v is None else _accepted(self.key, kind, v, spec)
                    if got is not None:
                        self.seen[(text, basis)] = got
            return
        texts = list(todo)
        for text, v, spec in zip(texts, *si_many(texts, kind)):
            got = None if v is None else _accepted(self.key, kind, v, spec)
            if got is not None:
                self.seen[text] = got

    def __call__(self, value):
        try:
            return self.seen[value]
        except KeyError:
            pass
        except TypeError:           # an unhashable default (a table): not plain
            return _NotPlain
        try:
            got = self.parse(value)
        except (InputError, _NotPlain, TypeError, ValueError):
            got = _NotPlain
        self.seen[value] = got
        return got


#: The characters of a bare number :func:`_bare_column` reads (a text of these alone that float() reads is one)
_BARE_CHARS = re.compile(r"[0-9.+-]*")
#: A bare number :func:`_bare_column` reads: ASCII digits, an optional sign and decimal point, no exponent
_BARE_FAST = re.compile(r"[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)")


@dataclass
class _Bare:
    """A quantity column's cells read by :func:`_bare_column`, per row."""

    #: whether the cell is a bare number of :data:`_BARE_FAST` (its text is f"{cell} {unit}"); None: every cell is
    numbered: np.ndarray | None
    #: whether the cell's value is read here (`si`); the others (and every empty cell) go to the cell's parser
    fast: np.ndarray
    #: [SI, as written] the value of each cell read here (NaN elsewhere)
    si: np.ndarray
    #: the header's unit as the unit parser reads it after a number
    spec: object


def _bare_column(col, cells: list) -> _Bare | None:
    r"""The cells of a quantity column with a unit in its header that are bare numbers, read at once (None: none read).

    What it reads: a cell that is exactly ``[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)`` (:data:`_BARE_FAST`: ASCII
    digits, an optional sign and point; no whitespace, no decimal comma, no exponent, no underscore, no other
    digits, no "inf" or "nan") and no longer than the unit parser takes with the unit after it. Such a cell's text
    as the case reader reads it is f"{cell} {unit}" (:func:`~screening.inputs.inventory.cell_value`: stripping
    changes nothing, there is no comma, and the cell is a bare number of ``_BARE_NUMBER``, a superset); in that
    text the unit pattern of :func:`screening.units.si_many` takes the cell as its number and the header's unit
    as its unit (:func:`~screening.units.unit_after_number`), so the number is ``float(cell)`` and the value is
    the same pint conversion of the numbers of that unit as one array (:func:`~screening.units.si_array`, which
    si_many calls), elementwise the same float whatever else is in the array. A value is taken where si_many
    and ``_accepted`` would take it: inside the kind's range, and above zero (in [0, 1) for a fraction; any
    pressure, whose basis is the header unit's or, for a unit of no stated basis, the row's
    ``pressure_basis``: :func:`read_plain` decides). Every other cell, and a bare number whose value is not
    taken, goes to the column's parser (:class:`_Cache`), which reads it as before; so what is accepted and
    refused is unchanged, and tests/test_bare_columns.py compares the two on random registers.

    A column whose every non-empty cell holds only the characters of :data:`_BARE_CHARS` is read by one
    ``float`` per cell (of those characters, float() reads exactly the texts of _BARE_FAST); any other column
    cell by cell with _BARE_FAST."""
    kind = _KINDS.get(col.key)
    spec = unit_after_number(col.unit, kind) if kind is not None and col.unit else None
    if spec is None:
        return None
    room = MAX_TEXT - 1 - len(col.unit)            # the longest cell whose text with its unit is read
    try:
        joined = "".join(cells)
    except TypeError:                              # a cell that is not a text
        return None
    if not joined:                                 # every cell empty
        return None
    numbers = None
    every = all(cells)
    if _BARE_CHARS.fullmatch(joined):
        sub = cells if every else [c for c in cells if c]
        if max(map(len, sub)) <= room:
            try:
                numbers, back = _floats(sub)
            except ValueError:                     # "1.2.3", "-", "+-1": not numbers, cell by cell
                pass
    if numbers is not None:
        numbered = None if every else np.fromiter(map(bool, cells), dtype=bool, count=len(cells))
    else:
        numbered = np.fromiter((len(c) <= room and _BARE_FAST.fullmatch(c) is not None for c in cells),
                               dtype=bool, count=len(cells))
        if not numbered.any():
            return None
        numbers, back = _floats([c for c, b in zip(cells, numbered.tolist()) if b])
        every = bool(numbered.all())
        if every:
            numbered = None
    si, taken = si_array(numbers, spec.pint_name, kind)
    if back is not None:
        si, taken = si[back], taken[back]
    with np.errstate(invalid="ignore"):
        if kind == "fraction":                      # as _accepted
            taken &= (si >= 0.0) & (si < 1.0)
        elif kind != "pressure":
            taken &= si > 0.0
    if numbered is None:
        return _Bare(None, taken, si, spec)
    fast = np.zeros(len(cells), dtype=bool)
    fast[numbered] = taken
    full = np.full(len(cells), np.nan)
    full[numbered] = si
    return _Bare(numbered, fast, full, spec)


def _floats(texts) -> tuple[np.ndarray, np.ndarray | None]:
    """float() of each of `texts` (ValueError where one is not a number): (the numbers, None), or, for texts
    that repeat their values (a capacity, a rating, a temperature written to a tenth), (the numbers of the
    distinct texts, each text's position among them)."""
    if len(texts) > 64 and len(set(texts[:64])) <= 32:
        distinct = list(dict.fromkeys(texts))
        if 2 * len(distinct) <= len(texts):
            at = dict(zip(distinct, range(len(distinct))))
            return (np.array(list(map(float, distinct)), dtype=float),
                    np.fromiter(map(at.__getitem__, texts), dtype=np.intp, count=len(texts)))
    return np.array(list(map(float, texts)), dtype=float), None


def read_plain(inv: Inventory, defaults: dict | None) -> PlainRows:
    """The plain rows of ``inv.rows``, as arrays."""
    empty = {k: [] for k in ("index", "ids", "gases", "atm", "cap", "rated", "relief", "ratio", "p", "t", "amb",
                             "gas_t", "margin", "margin_default", "units", "mass", "elev", "sun", "finish",
                             "sun_inputs")}
    flat = _flatten_defaults(defaults)
    if flat is None:
        return _finish(inv, defaults, empty)
    n_rows, width = len(inv.rows), len(inv.columns)
    ok = np.ones(n_rows, dtype=bool)
    # the text of every key per row: the column's cell (with the header's unit), else the default, else missing
    texts: dict[str, list] = {}
    cell_texts: list[tuple[str, list[str]]] = []     # every case key's column, as the row's case text shows it
    bare: dict[str, _Bare] = {}                       # the quantity columns' bare numbers, read at once
    row_cells = [row for _, row in inv.rows]
    longest = max(map(len, row_cells), default=0)
    # the cells column by column, where every row has a cell in every column (a column at a time: zip(*rows) would
    # hold an iterator per row at once, which the garbage collector then traces as long-lived)
    by_column = ([list(map(itemgetter(j), row_cells)) for j in range(width)]
                 if n_rows and min(map(len, row_cells)) >= width else None)
    for j, col in enumerate(inv.columns):
        if col.key is None:              # a column of the user's own: carried through, not read
            continue
        cells = by_column[j] if by_column is not None else [(row[j] if j < len(row) else "") for row in row_cells]
        b = _bare_column(col, cells) if col.key in _KINDS else None
        if b is not None:
            bare[col.key] = b
        values = None
        if b is not None and b.numbered is None:        # every cell a bare number: its text, with the unit
            unit = " " + col.unit
            values = [c + unit for c in cells]
        elif col.key in TEXT_KEYS:                      # cell_value: the cell stripped
            try:
                values = list(map(str.strip, cells))
            except TypeError:                           # a cell that is not a text
                pass
        if values is None:
            seen: dict[str, str] = {}
            values = []
            if b is not None:
                unit = " " + col.unit
                for c, numbered in zip(cells, b.numbered.tolist()):
                    if numbered:
                        values.append(c + unit)
                        continue
                    v = seen.get(c)
                    if v is None:
                        v = seen[c] = cell_value(col, c)
                    values.append(v)
            else:
                for c in cells:
                    v = seen.get(c)
                    if v is None:
                        v = seen[c] = cell_value(col, c)
                    values.append(v)
        cell_texts.append((col.header, values))
        if col.key not in PLAIN_KEYS:
            ok &= np.array([not v for v in values], dtype=bool)
            continue
        if all(values):                                 # no empty cell: no default read
            texts[col.key] = values
            continue
        default = flat.get(col.key, _MISSING)
        if default is not _MISSING:
            default = default_text(col, default)
        texts[col.key] = [v if v else default for v in values] if any(values) else [default] * n_rows
    for k, v in flat.items():
        texts.setdefault(k, [v] * n_rows)
    # a cell the reader could not read is an Unreadable (a str subclass): none where every cell is a plain str
    plain_text = set(map(type, chain.from_iterable(row_cells))) <= {str}
    for pos, row in enumerate(row_cells) if longest > width or not plain_text else ():
        if len(row) > width and any((c or "").strip() for c in row[width:]):
            ok[pos] = False
        elif not plain_text and any(isinstance(c, Unreadable) and (c.in_any_column or (j < width and inv.columns[j].key))
                                    for j, c in enumerate(row)):
            ok[pos] = False

    def column(key: str) -> list:
        return texts.get(key) or [_MISSING] * n_rows

    def parsed(key: str, values: list, required: bool = False, rows: list | None = None) -> list:
        """Each of `values` (those of the rows `rows`, or of every row) read by the key's parser (None where
        missing or refused, and the row then not plain)."""
        if key not in texts:                                    # neither a column nor a default
            if required:
                ok[:] = False
            return [None] * n_rows
        if values and values[0] is _MISSING and values.count(_MISSING) == len(values):     # none given
            if required:
                ok[rows if rows is not None else slice(None)] = False
            return [None] * len(values)
        if key in _TEXT and set(map(type, values)) == {str} and all(map(str.strip, values)):
            return values                               # every one a text that is not blank: the text parser's own
        cache = _Cache(key)
        try:
            distinct = dict.fromkeys(values)
        except TypeError:                               # an unhashable default (a table): one by one below
            distinct = None
        if distinct is not None:                        # each distinct value read once, then given to its rows
            cache.prime(list(distinct))
            got = {v: None if v is _MISSING else cache(v) for v in distinct}
            refused = {v for v, g in got.items() if g is _NotPlain or (required and v is _MISSING)}
            out = list(map(got.__getitem__, values))
            if refused:
                bad = np.fromiter(map(refused.__contains__, values), dtype=bool, count=len(values))
                ok[np.asarray(rows, dtype=np.intp)[bad] if rows is not None else bad] = False
                if any(g is _NotPlain for g in got.values()):
                    out = [None if g is _NotPlain else g for g in out]
            return out
        cache.prime(values)
        out = []
        for i, v in zip(rows if rows is not None else range(len(values)), values):
            if v is _MISSING:
                if required:
                    ok[i] = False
                out.append(None)
                continue
            got = cache(v)
            if got is _NotPlain:
                ok[i] = False
                got = None
            out.append(got)
        return out

    ids = parsed("id", column("id"), required=True)
    for key in ("description", "site.name", "vessel.rated_pressure_kind"):
        parsed(key, column(key))
    bases = parsed("pressure_basis", column("pressure_basis"))
    atm_read = parsed("site.atmospheric_pressure", column("site.atmospheric_pressure"))
    elev_read = parsed("site.elevation", column("site.elevation"))
    atm = np.full(n_rows, P_STANDARD_ATMOSPHERE)
    elev = np.full(n_rows, np.nan)
    atm_label: list = [None] * n_rows
    elev_given = column("site.elevation")
    given = "site.atmospheric_pressure" in texts or "site.elevation" in texts
    for i, (a, e) in enumerate(zip(atm_read, elev_read) if given else ()):
        if a is not None:
            if elev_given[i] is not _MISSING:
                ok[i] = False                       # both given
            atm[i], atm_label[i] = a
        elif e is not None:
            atm[i], elev[i] = e[0], e[2]

    def pressures(key: str, required: bool = False) -> tuple[np.ndarray, list]:
        """[Pa, absolute] the key's pressures and their units: the bare numbers read at once taken as they are
        (:func:`bare_pressures`), the other cells read by the column's parser."""
        raw = texts.get(key)
        if raw is None:                         # neither a column nor a default
            parsed(key, [], required)
            return np.full(n_rows, np.nan), [None] * n_rows
        b = bare.get(key)
        if b is None:
            p_abs, labels, slow = np.full(n_rows, np.nan), [None] * n_rows, list(range(n_rows))
        else:
            p_abs, labels, slow = bare_pressures(b)
        if slow:
            got = parsed(key, [raw[i] if raw[i] is _MISSING else (raw[i], bases[i]) for i in slow], required,
                         None if b is None else slow)
            for i, g in zip(slow, got):
                if g is not None:
                    p_abs[i] = g[0] + atm[i] if g[1] else g[0]
                    labels[i] = g[2]
        with np.errstate(invalid="ignore"):
            ok[np.isfinite(p_abs) & ~(p_abs > 0.0)] = False
        return p_abs, labels

    def bare_pressures(b: _Bare) -> tuple[np.ndarray, list, list]:
        """The pressures [Pa, absolute] and units of the cells `b` read (NaN and None elsewhere), and the rows
        left to the column's parser."""
        spec = b.spec
        fast = b.fast
        if spec.basis is None:                  # the row's pressure_basis states it
            gauge = np.array([x == "gauge" for x in bases], dtype=bool)
            fast = fast & (gauge | np.array([x == "absolute" for x in bases], dtype=bool))
            named = {"gauge": f"{spec.label}(g)", "absolute": f"{spec.label}(a)"}
            labels = [named[x] if f else None for x, f in zip(bases, fast.tolist())]
        else:
            gauge = spec.basis == "gauge"
            labels = [spec.label] * n_rows if fast.all() else [spec.label if f else None for f in fast.tolist()]
        with np.errstate(invalid="ignore", over="ignore"):
            p_abs = np.where(fast, np.where(gauge, b.si + atm, b.si), np.nan)
        return p_abs, labels, np.flatnonzero(~fast).tolist()

    def quantities(key: str, required: bool = False) -> tuple[np.ndarray, list]:
        b = bare.get(key)
        if b is not None:
            values = np.where(b.fast, b.si, np.nan)
            label = b.spec.label
            labels = [label] * n_rows if b.fast.all() else [label if f else None for f in b.fast.tolist()]
            slow = np.flatnonzero(~b.fast).tolist()
            if slow:
                raw = column(key)
                for i, g in zip(slow, parsed(key, [raw[i] for i in slow], required, slow)):
                    if g is not None:
                        values[i], labels[i] = g
            return values, labels
        got = parsed(key, column(key), required)
        if got.count(None) == n_rows:                   # none given or read
            return np.full(n_rows, np.nan), got
        return (np.array([np.nan if g is None else g[0] for g in got], dtype=float),
                [None if g is None else g[1] for g in got])

    cap, cap_label = quantities("vessel.water_capacity", required=True)
    rated, rated_label = pressures("vessel.rated_pressure", required=True)
    relief, _ = pressures("vessel.relief_set_pressure")
    ratio, _ = quantities("vessel.max_filling_ratio")
    gases = parsed("fill.gas", column("fill.gas"), required=True)
    p_fill, _ = pressures("fill.pressure")
    mass, mass_label = quantities("fill.mass")
    t_fill, t_label = quantities("fill.temperature", required=True)
    amb, _ = quantities("exposure.ambient_max")
    hot, _ = quantities("exposure.gas_temperature")
    margin, _ = quantities("criteria.required_margin")
    sun = np.array([g is True for g in parsed("exposure.solar", column("exposure.solar"))], dtype=bool)
    finishes = parsed("exposure.finish", column("exposure.finish"))
    sun_read: dict[str, list] = {}
    for key, _kind in SUN_QUANTITIES:
        if key in texts:
            sun_read[key] = [None if g is None else g[0] for g in parsed(key, column(key))]
    if "exposure.orientation" in texts:
        sun_read["exposure.orientation"] = parsed("exposure.orientation", column("exposure.orientation"))
    if "exposure.absorptivity" in sun_read:       # a finish and an absorptivity: the case reader refuses both
        ok &= ~np.array([a is not None and f is not None
                         for a, f in zip(sun_read["exposure.absorptivity"], finishes)], dtype=bool)
    margin_default = np.array([v is _MISSING for v in column("criteria.required_margin")], dtype=bool)
    margin = np.where(margin_default, DEFAULT_REQUIRED_MARGIN, margin)
    with np.errstate(invalid="ignore"):
        ok &= rated > atm                                       # NaN (a refused rating) is not above
        ok &= np.isnan(relief) | (relief > atm)
        ok &= ~(np.isnan(amb) & np.isnan(hot))                 # the worst case needs one of them
        ok &= np.isnan(p_fill) != np.isnan(mass)               # the fill by pressure or by mass, not both
        ok &= ~(sun & np.isnan(amb))                            # the sun's balance needs the ambient air

    sel = np.flatnonzero(ok)
    rows = sel.tolist()
    if len(rows) == n_rows:
        def pick(values: list) -> list:     # the plain rows' items of a per-row list
            return list(values)
    else:
        def pick(values: list) -> list:
            return list(map(values.__getitem__, rows))
    # the display units: the first reading of each kind in the case reader's order
    ukeys = list(zip([a or r for a, r in zip(pick(atm_label), pick(rated_label))], pick(t_label), pick(cap_label),
                     pick(mass_label)))
    units_cache = {ukey: {"pressure": "bar(a)" if ukey[0] == "atm" else ukey[0], "temperature": ukey[1],
                          "volume": ukey[2], "mass": ukey[3] or "kg"} for ukey in dict.fromkeys(ukeys)}
    out = empty
    out["ids"], out["finish"], out["gases"] = pick(ids), pick(finishes), pick(gases)
    out["units"] = list(map(units_cache.__getitem__, ukeys))
    out["index"] = sel
    for name, arr in (("atm", atm), ("cap", cap), ("rated", rated), ("relief", relief), ("ratio", ratio),
                      ("p", p_fill), ("t", t_fill), ("amb", amb), ("gas_t", hot), ("margin", margin),
                      ("margin_default", margin_default), ("mass", mass), ("elev", elev), ("sun", sun)):
        out[name] = arr[sel]
    out["sun_inputs"] = {k: [math.nan if v[i] is None and k != "exposure.orientation" else v[i] for i in rows]
                         for k, v in sun_read.items()}
    entered = {k: pick(v) for k, v in texts.items()}
    return _finish(inv, defaults, out, entered, [(h, pick(v)) for h, v in cell_texts])


def _finish(inv: Inventory, defaults: dict | None, out: dict, entered: dict | None = None,
            cell_texts: list | None = None) -> PlainRows:
    f = lambda k: np.array(out[k], dtype=float)  # noqa: E731
    return PlainRows(inv, defaults, np.array(out["index"], dtype=np.int64), out["ids"], out["gases"], f("atm"),
                     f("cap"), f("rated"), f("relief"), f("ratio"), f("p"), f("t"), f("amb"), f("gas_t"),
                     f("margin"), np.array(out["margin_default"], dtype=bool), out["units"], f("mass"), f("elev"),
                     entered, cell_texts, np.array(out["sun"], dtype=bool),
                     out["finish"] if out["finish"].count(None) != len(out["finish"]) else None, out["sun_inputs"] or None)
