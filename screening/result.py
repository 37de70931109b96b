"""The result of a screening, typed: what the engine returns and every output reads.

`engine.screen_case` and the batch's full result per row return a :class:`Result`. Views read its
attributes; a JSON output calls :meth:`Result.to_json` once (the documented JSON layout, SI, pressures
absolute); a reader of such JSON (`verify`, the web page) calls :meth:`Result.from_json`.

Every part is a frozen dataclass; lists are tuples. A field typed ``X | None`` is None where the engine has
no value for it (the docstring or comment beside it says when). Nothing falls back to a number: the site's
atmospheric pressure is always in :attr:`Site.atmospheric_pressure_pa`.

The JSON layout is fixed by the field order: ``to_json`` writes the fields of each part in the order they
are declared (see DEVELOPERS.md, "The result type"), so a new field goes where its key belongs.

>>> r = ScreeningWarning("fill-state-governs", "the fill state is screened")
>>> r.to_json()
{'code': 'fill-state-governs', 'message': 'the fill state is screened'}
>>> ScreeningWarning.from_json(r.to_json()) == r
True
"""

from __future__ import annotations

import dataclasses
import functools
from dataclasses import dataclass
from typing import Any, Callable, ClassVar

from screening.verdicts import Verdict

_frozen = dataclass(frozen=True, slots=True)


#: Types a part's JSON holds as they are (the common case, checked first).
_SCALARS = frozenset({str, float, int, bool, type(None)})


def _dump(value: Any) -> Any:
    """A part of a result as JSON-ready data (dataclasses → dicts, tuples → lists, enums → their word)."""
    if type(value) in _SCALARS:
        return value
    if isinstance(value, _Part):
        return value.to_json()
    if isinstance(value, Verdict):
        return value.value
    if isinstance(value, (tuple, list)):
        return [_dump(v) for v in value]
    if isinstance(value, dict):
        return {k: _dump(v) for k, v in value.items()}
    return value


def _tuple(value: Any) -> Any:
    """Lists (nested) as tuples; None stays None."""
    if isinstance(value, list):
        return tuple([_tuple(v) if isinstance(v, list) else v for v in value])   # leaves without a call each
    return value


class _Part:
    """What every part shares: `to_json` in field order, `from_json` through each field's reader.

    `_READ` maps a field name to how its JSON value is read: a part class (a nested object), ``(cls,)``
    (a list of them), ``{cls}`` (a mapping of name → part), or ``tuple`` (a list of plain values)."""

    __slots__ = ()
    _READ: ClassVar[dict] = {}

    def to_json(self) -> dict:
        return _codec(type(self))[0](self)

    @classmethod
    def json_layout(cls, data: dict) -> dict:
        """``cls.from_json(data).to_json()`` without building the parts: the JSON of the part that `data`
        describes, its keys in the layout's order (a key it does not know is the same error)."""
        return _codec(cls)[1](data)

    @classmethod
    def from_json(cls, data: dict):
        """The part from its JSON object (a key it does not know is an error: the layout is fixed)."""
        return _decoder(cls)(data)

    @classmethod
    def _from_json_read(cls, data: dict):
        """:meth:`from_json` field by field through each field's reader (what the compiled decoder,
        :func:`_decoder`, does in one call; its errors where the keys are not the layout's)."""
        names, known, required, readers = _layout(cls)
        if not known.issuperset(data):
            raise KeyError(f"{cls.__name__}: unknown keys {sorted(set(data) - known)}")
        if not required.issubset(data):
            raise KeyError(f"{cls.__name__}: missing keys {[n for n in names if n in required and n not in data]}")
        values = {}
        for n, read in readers:
            if n in data:
                v = data[n]
                values[n] = v if read is None or v is None else read(v)
        return cls(**values)


def _reader(how: Any):
    """How one field's JSON value is read (see _Part): a function of the value, or None (taken as it is)."""
    if how is None:
        return None
    if how is tuple:
        return _tuple
    if isinstance(how, tuple):
        part = how[0]
        return lambda value: tuple(part.from_json(v) for v in value)
    if isinstance(how, set):
        (part,) = how
        return lambda value: {k: part.from_json(v) for k, v in value.items()}
    if how is Verdict:
        return Verdict
    return how.from_json


def _expression(how: Any, value: str, names: dict, n: str, to_json: bool) -> str:
    """Python source of one field's JSON from `value` (the source of its value): the field of a part
    (`to_json`), or the field's value in the JSON object `from_json` reads (`json_layout`). `names` gathers
    what the source refers to."""
    if how is None or how is tuple:         # a plain value, or a list of them: as _dump gives it
        return f"({value} if type({value}) in _SCALARS else _dump({value}))"
    if how is Verdict:
        return f"(None if {value} is None else {value}.value)" if to_json else \
            f"(None if {value} is None else Verdict({value}).value)"
    if to_json:                             # parts (or lists, mappings of parts): each its own to_json
        if isinstance(how, (tuple, set)):
            return f"_dump({value})"
        return f"({value}.to_json() if isinstance({value}, _Part) else _dump({value}))"
    part = how[0] if isinstance(how, tuple) else next(iter(how)) if isinstance(how, set) else how
    # the part's compiled function itself, unless the part has its own json_layout
    names[f"_layout_{n}"] = part.json_layout if "json_layout" in vars(part) else _codec(part)[1]
    if isinstance(how, tuple):
        return f"(None if {value} is None else [_layout_{n}(x) for x in {value}])"
    if isinstance(how, set):
        return f"(None if {value} is None else {{k: _layout_{n}(x) for k, x in {value}.items()}})"
    return f"(None if {value} is None else _layout_{n}({value}))"


@functools.cache
def _codec(cls: type) -> tuple:
    """(to_json, json_layout) of a part class, compiled once from its fields and `_READ`: one dict display
    per class, each field written by the expression its type needs (the same values as `_dump` and
    `from_json` give, without looking up each field's reader per value)."""
    fields = dataclasses.fields(cls)
    names, known, required, _readers = _layout(cls)
    scope: dict = {"_SCALARS": _SCALARS, "_dump": _dump, "_Part": _Part, "Verdict": Verdict, "cls": cls,
                   "known": known, "required": required}
    dump, read = [], []
    for f in fields:
        how = cls._READ.get(f.name)
        dump.append(f"{f.name!r}: {_expression(how, f'self.{f.name}', scope, f.name, True)}")
        if f.default is dataclasses.MISSING:
            got = f"data[{f.name!r}]"
        else:
            scope[f"_default_{f.name}"] = f.default
            got = f"data.get({f.name!r}, _default_{f.name})"
        read.append(f"{f.name!r}: {_expression(how, got, scope, f.name, False)}")
    # the keys checked as from_json checks them (its error where they differ): all of them where every
    # field is required, else none unknown and every required one there
    check = "data.keys() == known" if known == required else "known.issuperset(data) and required.issubset(data)"
    source = ("def to_json(self):\n    return {" + ", ".join(dump) + "}\n"
              "def json_layout(data):\n"
              f"    if not ({check}):\n"
              "        cls.from_json(data)\n"
              "    return {" + ", ".join(read) + "}\n")
    exec(compile(source, f"<{cls.__name__} JSON codec>", "exec"), scope)   # noqa: S102  (source built above)
    return scope["to_json"], scope["json_layout"]


@functools.cache
def _decoder(cls: type) -> Callable[[dict], Any]:
    """A part class's from_json, compiled once from its fields and `_READ`: one call of the class with each
    field read by the expression its reader needs (the same values as :meth:`_Part._from_json_read` gives,
    without looking up each field's reader per value); where the keys are not the layout's, that method
    raises its error."""
    names, known, required, _readers = _layout(cls)
    scope: dict = {"cls": cls, "known": known, "required": required, "_tuple": _tuple, "Verdict": Verdict,
                   "_read": cls._from_json_read}
    args = []
    for f in dataclasses.fields(cls):
        how = cls._READ.get(f.name)
        got = f"data[{f.name!r}]"
        if how is None:
            expr = got
        elif how is tuple:
            expr = f"_tuple({got})"
        elif how is Verdict:
            expr = f"(None if (v := {got}) is None else Verdict(v))"
        else:
            part = how[0] if isinstance(how, tuple) else next(iter(how)) if isinstance(how, set) else how
            scope[f"_part_{f.name}"] = part
            if isinstance(how, tuple):
                expr = f"(None if (v := {got}) is None else tuple(_part_{f.name}.from_json(x) for x in v))"
            elif isinstance(how, set):
                expr = f"(None if (v := {got}) is None else {{k: _part_{f.name}.from_json(x) for k, x in v.items()}})"
            else:
                expr = f"(None if (v := {got}) is None else _part_{f.name}.from_json(v))"
        if f.default is not dataclasses.MISSING:      # an absent key: the field's default, as it is
            scope[f"_default_{f.name}"] = f.default
            expr = f"({expr} if {f.name!r} in data else _default_{f.name})"
        args.append(f"{f.name}={expr}")
    check = "data.keys() == known" if known == required else "known.issuperset(data) and required.issubset(data)"
    source = ("def from_json(data):\n"
              f"    if not ({check}):\n"
              "        return _read(data)\n"
              "    return cls(" + ", ".join(args) + ")\n")
    exec(compile(source, f"<{cls.__name__} JSON decoder>", "exec"), scope)   # noqa: S102  (source built above)
    return scope["from_json"]


@functools.cache
def json_record(cls: type, leave_out: tuple[str, ...] = (), args: tuple[str, ...] | None = None,
                parts: tuple[str, ...] = ()) -> Callable[..., dict]:
    """The function that lays out the JSON object of a part of class `cls` from its fields' JSON values, given
    by name: ``json_record(Fill)(pressure_pa=..., ...)`` gives the keys in the layout's order (the fields'
    declared order, as :meth:`_Part.to_json` writes them) and the values as they are given, already JSON-ready
    (lists, dicts, words); a missing or unknown field is a TypeError. `leave_out`: fields left out (the caller
    adds them where it has them, e.g. the batch's "row", the last key). For the writers that lay out a
    result's JSON directly, without building the result (the rows screened on the columns,
    :func:`screening.engine._row_dict`): the order stays defined here alone, and tests/test_batch_json.py
    checks that what they write is ``to_json``.

    With `args`, the fields are given by position instead (a call by keyword costs some 50 ns a field more,
    which a batch's JSON line pays for some 75 fields): first, where `parts` names fields, a dict that holds those
    fields by name, then the fields named in `args`, in that order. The keys are still laid out in the layout's
    order, whatever the order of `args`; `args` and `parts` must name every field not left out, each once (a
    TypeError naming the fields missing or unknown, when the function is made)."""
    fields = [f for f in dataclasses.fields(cls) if f.name not in leave_out]
    scope: dict = {}
    if args is not None:
        names = [f.name for f in fields]
        given = list(parts) + list(args)
        if sorted(given) != sorted(names):
            raise TypeError(f"{cls.__name__} JSON record: fields missing {sorted(set(names) - set(given))}, unknown "
                            f"or given twice {sorted(set(given) - set(names)) + sorted({n for n in given if given.count(n) > 1})}")
        params = (["_parts"] if parts else []) + [f"_{n}" for n in args]
        keys = [f"{n!r}: _parts[{n!r}]" if n in parts else f"{n!r}: _{n}" for n in names]
        source = f"def record({', '.join(params)}):\n    return {{{', '.join(keys)}}}\n"
    else:
        params, keys = [], []
        for f in fields:
            if f.default is dataclasses.MISSING:
                params.append(f.name)
            else:
                scope[f"_default_{f.name}"] = f.default
                params.append(f"{f.name}=_default_{f.name}")
            keys.append(f"{f.name!r}: {f.name}")
        source = f"def record(*, {', '.join(params)}):\n    return {{{', '.join(keys)}}}\n"
    exec(compile(source, f"<{cls.__name__} JSON record>", "exec"), scope)   # noqa: S102  (source built above)
    return scope["record"]


@functools.cache
def _layout(cls: type) -> tuple[tuple[str, ...], frozenset, frozenset, tuple]:
    """A part's field names in order, as a set, those without a default (the keys its JSON must hold), and
    (name, reader) per field in order (:func:`_reader` of its `_READ` entry), worked out once per class."""
    fields = dataclasses.fields(cls)
    names = tuple(f.name for f in fields)
    readers = tuple((n, _reader(cls._READ.get(n))) for n in names)
    return names, frozenset(names), frozenset(f.name for f in fields if f.default is dataclasses.MISSING), readers


@_frozen
class ScreeningWarning(_Part):
    """A warning of the screening: a short code and its sentence."""

    code: str
    message: str


@_frozen
class Site(_Part):
    """Where the vessel stands."""

    name: str | None                 #: None where the case names no site
    atmospheric_pressure_pa: float   #: [Pa] the site's atmosphere (gauge readings are relative to it)
    elevation_m: float | None        #: [m] None where not given


@_frozen
class Component(_Part):
    """One component of the gas (a pure gas has one, fraction 1)."""

    name: str
    formula: str
    fraction: float                  #: [-] mole fraction
    molar_mass_kg_mol: float         #: [kg/mol]
    coolprop_name: str | None        #: None where the reference equation of state has no such fluid


@_frozen
class Gas(_Part):
    name: str
    kind: str                        #: permanent | liquefiable | dissolved
    hazards: tuple[str, ...]
    components: tuple[Component, ...]
    _READ: ClassVar[dict] = {"hazards": tuple, "components": (Component,)}


@_frozen
class Vessel(_Part):
    water_capacity_m3: float
    rated_pressure_pa: float                   #: [Pa] absolute
    rated_pressure_kind: str | None            #: what the rating is (test / working), None where not said
    relief_set_pressure_pa: float | None       #: [Pa] absolute; None: no relief device given
    max_filling_ratio_kg_per_l: float | None   #: None: no filling ratio given


@_frozen
class Fill(_Part):
    pressure_pa: float | None          #: [Pa] absolute; None for a fill given by mass
    temperature_k: float               #: [K] given, or the assumed one (see `temperature_given`)
    temperature_given: bool
    density_kg_m3: float | None        #: None where no model establishes the fill density
    molar_density_mol_m3: float | None
    mass_kg: float | None
    phase: str | None                  #: None where the phase is not established
    filling_ratio_kg_per_l: float | None
    vapour_pressure_pa: float | None   #: [Pa] at the fill temperature; None above the critical point
    given: str                         #: "pressure" or "mass"


@_frozen
class ModelResult(_Part):
    """One model's outcome. The common fields first; then the model's own quantities, present (in
    `detail_keys`, in that order) only where the model gives them: the ideal gas its `equation`, the
    generalized model its reduced and pseudocritical states, the reference equation its `fluid` and phases.
    A detail absent from `detail_keys` is None here and left out of the JSON."""

    applicable: bool
    peak_pressure_pa: float | None          #: [Pa] absolute; None where the model does not apply
    note: str
    fill_molar_density_mol_m3: float | None
    detail_keys: tuple[str, ...] = ()
    # the ideal gas
    equation: str | None = None
    off_governing_fraction: float | None = None   #: ideal peak / governing peak - 1
    # the generalized model
    z_fill: float | None = None
    z_peak: float | None = None
    reduced_temperature_fill: float | None = None
    reduced_pressure_fill: float | None = None
    reduced_temperature_peak: float | None = None
    reduced_pressure_peak: float | None = None
    pseudocritical_temperature_k: float | None = None
    pseudocritical_pressure_pa: float | None = None
    pseudocritical_temperature_fill_k: float | None = None
    pseudocritical_pressure_fill_pa: float | None = None
    acentric_factor: float | None = None
    mixing_rule: str | None = None
    quantum_correction: bool | None = None
    method: str | None = None          #: the equation used where it is not Lee–Kesler
    # the reference equation of state
    fluid: str | None = None
    phase_fill: str | None = None
    phase_peak: str | None = None
    eos_references: tuple[str, ...] | None = None

    _COMMON: ClassVar[tuple[str, ...]] = ("applicable", "peak_pressure_pa", "note", "fill_molar_density_mol_m3")

    def to_json(self) -> dict:
        out = {n: getattr(self, n) for n in self._COMMON}
        for k in self.detail_keys:
            out[k] = _dump(getattr(self, k))
        return out

    @classmethod
    def from_json(cls, data: dict) -> ModelResult:
        details = tuple(k for k in data if k not in cls._COMMON)
        if "detail_keys" in details:
            raise KeyError("ModelResult: unknown keys ['detail_keys']")
        values = {k: _tuple(v) if isinstance(v, list) else v for k, v in data.items()}   # _tuple of each value
        return cls(**values, detail_keys=details)

    @classmethod
    def json_layout(cls, data: dict) -> dict:
        if "detail_keys" in data or not _layout(cls)[1].issuperset(data) or not all(n in data for n in cls._COMMON):
            cls.from_json(data)             # its error
        out = {n: _tuple(data[n]) for n in cls._COMMON}
        for k, v in data.items():
            if k not in out:
                out[k] = _dump(v)
        return out


@_frozen
class ModelPeak(_Part):
    """A model's peak in a scenario's summary."""

    applicable: bool
    peak_pressure_pa: float | None


@_frozen
class Limits(_Part):
    """What the vessel allows; each None where no model gives it (see `note`)."""

    max_fill_mass_kg: float | None
    max_filling_ratio_kg_per_l: float | None
    max_fill_mass_basis: str | None
    max_gas_temperature_k: float | None       #: the gas temperature at which the rating (or a lower relief setting) is reached
    max_fill_pressure_pa: float | None        #: [Pa] absolute; None for a mass fill or where not found
    target_peak_pressure_pa: float | None     #: the rating less the required margin; None: no model applies
    note: str
    liquid_full_temperature_k: float | None   #: where the liquid fills the vessel; None: never
    dry_out_temperature_k: float | None       #: where the liquid has evaporated; None: no liquid
    phase_boundary_pressure_pa: float | None
    dp_dt_after_liquid_full_pa_k: float | None


@_frozen
class Corner(_Part):
    fill_pressure_pa: float | None   #: None for a mass fill
    fill_temperature_k: float
    worst_case_temperature_k: float


@_frozen
class Sensitivities(_Part):
    """d(peak) per input at the nominal state [Pa/K, Pa/Pa]; None where not evaluated (mass fills)."""

    dp_peak_dt_gas: float | None
    dp_peak_dt_fill: float | None
    dp_peak_dp_fill: float | None


@_frozen
class Tolerance(_Part):
    """The input tolerances and the bounding peak they give."""

    fill_pressure_band_pa: float
    fill_temperature_band_k: float
    gas_temperature_band_k: float
    entered: dict                          #: the tolerances as entered (key → text)
    nominal_peak_pressure_pa: float | None
    bounding_peak_pressure_pa: float | None   #: None where no real-gas model applies at a corner
    bounding_corner: Corner
    corners_evaluated: int
    expected_corner_confirmed: bool
    sensitivities: Sensitivities
    #: per input, per model name (and "governing"): d(peak); an input's entry None where not evaluated
    sensitivities_by_model: dict
    _READ: ClassVar[dict] = {"bounding_corner": Corner, "sensitivities": Sensitivities}


@_frozen
class SunBalance(_Part):
    """The energy balance of the vessel wall in the sun."""

    wall_temperature_k: float
    ambient_k: float
    sky_temperature_k: float
    irradiance_w_m2: float
    absorptivity: float
    emissivity: float
    wind_speed_m_s: float
    absorbed_w_m2: float
    convected_w_m2: float
    radiated_w_m2: float
    h_convection_w_m2k: float
    regime: str
    orientation: str
    outside_diameter_m: float
    length_m: float
    dimensions_estimated: bool
    ground_albedo: float
    residual_fraction: float
    notes: tuple[str, ...]
    _READ: ClassVar[dict] = {"notes": tuple}


@_frozen
class Curves(_Part):
    """Isochores for the plot: pressures [Pa] per model at `temperature_k`, None where a model does not
    apply (the whole curve) or at a point where it does not; `bounding` (and its model) only with tolerances."""

    temperature_k: tuple[float, ...]
    ideal: tuple[float | None, ...] | None
    generalized: tuple[float | None, ...] | None
    reference: tuple[float | None, ...] | None
    bounding: tuple[float | None, ...] | None = None
    bounding_model: str | None = None
    _READ: ClassVar[dict] = {"temperature_k": tuple, "ideal": tuple, "generalized": tuple, "reference": tuple,
                             "bounding": tuple}

    def series(self, model: str) -> tuple[float | None, ...] | None:
        """The curve of one model ("ideal", "generalized", "reference"); None where it does not apply."""
        if model not in ("ideal", "generalized", "reference"):
            raise KeyError(f"no curve for a model named {model!r}")
        return getattr(self, model)

    def to_json(self) -> dict:
        out = _Part.to_json(self)
        if self.bounding_model is None:
            del out["bounding"], out["bounding_model"]
        return out

    @classmethod
    def json_layout(cls, data: dict) -> dict:
        out = _Part.json_layout.__func__(cls, data)
        if out["bounding_model"] is None:
            del out["bounding"], out["bounding_model"]
        return out


@_frozen
class Saturation(_Part):
    temperature_k: tuple[float, ...]
    pressure_pa: tuple[float, ...]
    _READ: ClassVar[dict] = {"temperature_k": tuple, "pressure_pa": tuple}


@_frozen
class PhaseDiagram(_Part):
    """The vapour-pressure curve of a pure fluid, triple to critical point."""

    saturation: Saturation
    critical_temperature_k: float
    critical_pressure_pa: float
    critical_density_kg_m3: float
    triple_temperature_k: float
    _READ: ClassVar[dict] = {"saturation": Saturation}


@_frozen
class InputRecord(_Part):
    """One value as entered, and in SI."""

    key: str
    entered: str
    si_value: Any
    si_unit: str


@_frozen
class Cautions(_Part):
    caution: str
    short_caution: str
    assumptions: tuple[str, ...]
    _READ: ClassVar[dict] = {"assumptions": tuple}


@_frozen
class ScenarioSummary(_Part):
    """One exposure scenario's outcome, beside the others."""

    name: str
    verdict: Verdict
    reasons: tuple[str, ...]
    worst_case_temperature_k: float
    worst_case_basis: str
    peak_pressure_pa: float | None
    nominal_peak_pressure_pa: float | None
    governing_model: str | None
    margin_fraction: float | None
    relief_margin_fraction: float | None
    limits: Limits
    tolerance: Tolerance | None
    exposure: SunBalance | None
    models: dict[str, ModelPeak]
    governing: bool
    _READ: ClassVar[dict] = {"verdict": Verdict, "reasons": tuple, "limits": Limits, "tolerance": Tolerance,
                             "exposure": SunBalance, "models": {ModelPeak}}


@_frozen
class Result(_Part):
    """One vessel's screening: the governing scenario in full, every scenario side by side."""

    id: str | None
    description: str | None
    source: str | None
    tool_version: str
    input_sha256: str | None
    site: Site
    verdict: Verdict
    reasons: tuple[str, ...]
    warnings: tuple[ScreeningWarning, ...]
    gas: Gas
    vessel: Vessel
    fill: Fill
    worst_case_temperature_k: float
    worst_case_basis: str
    models: dict[str, ModelResult]          #: "ideal", "generalized", "reference", in that order
    peak_pressure_pa: float | None          #: [Pa] absolute, the governing peak (the bounding one with tolerances)
    nominal_peak_pressure_pa: float | None
    tolerance: Tolerance | None             #: None: no tolerances given
    governing_model: str | None             #: None where no real-gas model applies
    governing_reason: str
    rated_pressure_pa: float
    relief_set_pressure_pa: float | None
    required_margin_fraction: float
    required_margin_is_default: bool
    margin_fraction: float | None
    relief_margin_fraction: float | None
    nominal_margin_fraction: float | None
    limits: Limits
    curves: Curves | None                   #: None where not computed (batch rows, `curves=False`)
    phase_diagram: PhaseDiagram | None      #: None for mixtures and where not computed
    inputs: tuple[InputRecord, ...]
    display_units: dict                     #: quantity → the unit the case was entered in
    cautions: Cautions
    scenarios: tuple[ScenarioSummary, ...]
    governing_scenario: str
    exposure: SunBalance | None             #: the governing scenario's sun balance; None: no sun
    row: int | None = None                  #: the inventory row (batch results only; left out of the JSON if None)
    _READ: ClassVar[dict] = {"site": Site, "verdict": Verdict, "reasons": tuple, "warnings": (ScreeningWarning,),
                             "gas": Gas, "vessel": Vessel, "fill": Fill, "models": {ModelResult},
                             "tolerance": Tolerance, "limits": Limits, "curves": Curves,
                             "phase_diagram": PhaseDiagram, "inputs": (InputRecord,), "cautions": Cautions,
                             "scenarios": (ScenarioSummary,), "exposure": SunBalance}

    def to_json(self) -> dict:
        """The result as the documented JSON object (the output of `check --json`)."""
        out = _Part.to_json(self)
        if self.row is None:
            del out["row"]
        return out

    @classmethod
    def json_layout(cls, data: dict) -> dict:
        """:meth:`to_json` of ``Result.from_json(data)``, without building the result (the batch's JSON
        lines of the rows screened as columns)."""
        out = _Part.json_layout.__func__(cls, data)
        if out["row"] is None:
            del out["row"]
        return out

    def summary_record(self) -> dict:
        """The part of the result the batch table, CSV and counts use (JSON-ready; :func:`summary_record`)."""
        return summary_record(self.id, self.verdict.value, self.reasons, [w.to_json() for w in self.warnings],
                              self.peak_pressure_pa, self.rated_pressure_pa, self.margin_fraction,
                              self.required_margin_fraction, self.governing_model, self.limits.max_gas_temperature_k,
                              self.limits.max_fill_pressure_pa, {"name": self.gas.name}, self.display_units,
                              {"atmospheric_pressure_pa": self.site.atmospheric_pressure_pa})


def summary_record(id_: str | None, verdict: str, reasons, warnings: list[dict], peak: float | None, rated: float,
                   margin: float | None, required_margin: float, governing: str | None, max_t: float | None,
                   max_p: float | None, gas: dict, display_units: dict, site: dict) -> dict:
    """The part of a result the batch table, CSV and counts use (JSON-ready), from its fields: the verdict's word,
    its reasons (texts), its warnings (JSON objects), pressures [Pa] absolute, the margins, the governing model, the
    limits (the highest gas temperature [K] and fill pressure [Pa]), and the dicts it holds as they are given: the
    gas ({"name": ...}), the display units and the site ({"atmospheric_pressure_pa": ...}), which many rows of a
    batch may share (read only). The one layout of :meth:`Result.summary_record`, :func:`summary_record_of` and the
    batch's rows screened as columns."""
    return {"id": id_, "verdict": verdict, "reasons": list(reasons), "warnings": warnings, "peak_pressure_pa": peak,
            "rated_pressure_pa": rated, "margin_fraction": margin, "required_margin_fraction": required_margin,
            "governing_model": governing,
            "limits": {"max_gas_temperature_k": max_t, "max_fill_pressure_pa": max_p},
            "gas": gas, "display_units": display_units, "site": site}


def summary_record_of(data: dict) -> dict:
    """:meth:`Result.summary_record` of the result whose JSON data (the layout of :meth:`Result.to_json`) is `data`,
    without making the Result."""
    lim = data["limits"]
    return summary_record(data["id"], data["verdict"], data["reasons"],
                          [ScreeningWarning.json_layout(w) for w in data["warnings"]], data["peak_pressure_pa"],
                          data["rated_pressure_pa"], data["margin_fraction"], data["required_margin_fraction"],
                          data["governing_model"], lim["max_gas_temperature_k"], lim["max_fill_pressure_pa"],
                          {"name": data["gas"]["name"]}, data["display_units"],
                          {"atmospheric_pressure_pa": data["site"]["atmospheric_pressure_pa"]})


class ResultData:
    """A result held as its JSON data (the layout of :meth:`Result.to_json`), made a :class:`Result` only where one
    is asked for (:meth:`result`, once): a batch lays most rows out from their summaries alone
    (:meth:`summary_record`), and a Result of many parts (scenarios, tolerance corners) costs more to make than its
    rows cost to screen. Not shared between threads (a batch's chunk holds it)."""

    __slots__ = ("data", "_result")

    def __init__(self, data: dict) -> None:
        self.data = data
        self._result: Result | None = None

    def result(self) -> Result:
        if self._result is None:
            self._result = Result.from_json(self.data)
        return self._result

    def summary_record(self) -> dict:
        return summary_record_of(self.data)

    def to_json(self, warnings: list[dict] | None = None) -> dict:
        """:meth:`Result.to_json` of the result, with `warnings` (JSON objects) in place of its own where given,
        laid out from the data (:meth:`Result.json_layout`) without making the Result."""
        return Result.json_layout(self.data if warnings is None else {**self.data, "warnings": warnings})
