"""The vessel form: its fields, the case file text it writes, and the way back.

The form never checks a value itself. It writes a case file's TOML text from what was entered (each
quantity as "<number as typed> <unit chosen>") and the project's case reader
(:func:`screening.inputs.case.parse_case_text`) reads it, so units, checks and messages stay in one
place. An :class:`~screening.errors.InputError` names a case key; :func:`field_for_key` maps it back to
the form field, and :func:`message_for_field` words the message with the field's label.

:func:`values_from_case_text` goes the other way: a case file uploaded into the form.
"""

from __future__ import annotations

import json
import re
import tomllib
from dataclasses import dataclass

# Units offered per kind: those the case reader accepts (screening.units), every pressure with its basis.
PRESSURE_UNITS = ("bar(g)", "bar(a)", "MPa(g)", "MPa(a)", "kPa(g)", "kPa(a)", "psig", "psia")
ATM_UNITS = ("kPa(a)", "bar(a)", "mbar(a)", "psia")
TEMPERATURE_UNITS = ("degC", "degF", "K")
VOLUME_UNITS = ("L", "m3", "ft3")
MASS_UNITS = ("kg", "lb", "g")
LENGTH_UNITS = ("m", "ft")
SIZE_UNITS = ("mm", "cm", "m", "in")
DENSITY_UNITS = ("kg/L", "kg/m3", "lb/ft3")
SPEED_UNITS = ("m/s", "km/h", "mph")
IRRADIANCE_UNITS = ("W/m2",)
UNIT_WORDS = {"degC": "°C", "degF": "°F", "m3": "m³", "ft3": "ft³", "kg/m3": "kg/m³", "lb/ft3": "lb/ft³",
              "W/m2": "W/m²"}

#: Rows offered for mixture components and for exposure scenarios.
COMPONENT_ROWS = 4
SCENARIO_ROWS = 3
#: Longest text accepted in one field (the case reader refuses quantities over 64 characters anyway).
MAX_FIELD = 200


@dataclass(frozen=True)
class Field:
    name: str            # form field name (and element id)
    label: str           # the words of its label
    key: str | None      # case key it writes ("vessel.rated_pressure"), None for form-only fields
    units: tuple = ()    # unit choices; () for text
    unit_default: str = ""
    hint: str = ""


def _f(name, label, key, units=(), unit_default="", hint=""):
    return Field(name, label, key, tuple(units), unit_default or (units[0] if units else ""), hint)


FIELDS: tuple[Field, ...] = (
    _f("id", "Vessel identifier", "id", hint="required; e.g. the cylinder's serial or asset number"),
    _f("description", "Description", "description"),
    _f("site_name", "Site name", "site.name"),
    _f("elevation", "Site elevation", "site.elevation", LENGTH_UNITS,
       hint="or the atmospheric pressure below; leave both empty for sea level (101.325 kPa(a))"),
    _f("atmospheric_pressure", "Atmospheric pressure at the site", "site.atmospheric_pressure", ATM_UNITS),
    _f("gas", "Gas", "fill.gas", hint="type to filter the gas library"),
    *(f for i in range(1, COMPONENT_ROWS + 1) for f in (
        _f(f"mix{i}_gas", f"Component {i}", None),
        _f(f"mix{i}_pct", f"Component {i}, mole percent", None, ("%",)))),
    _f("water_capacity", "Water capacity", "vessel.water_capacity", VOLUME_UNITS),
    _f("rated_pressure", "Rated pressure", "vessel.rated_pressure", PRESSURE_UNITS,
       hint="gauge (g) or absolute (a): choose with the unit"),
    _f("rated_pressure_kind", "The rated pressure is the vessel's", "vessel.rated_pressure_kind",
       hint="optional label, e.g. test pressure"),
    _f("relief_set_pressure", "Relief set pressure", "vessel.relief_set_pressure", PRESSURE_UNITS, hint="optional"),
    _f("max_filling_ratio", "Largest filling ratio allowed", "vessel.max_filling_ratio", DENSITY_UNITS,
       hint="optional, for liquefied gases"),
    _f("outside_diameter", "Outside diameter", "vessel.outside_diameter", SIZE_UNITS, hint="optional, for the sun"),
    _f("length", "Length", "vessel.length", ("m", "mm", "cm", "in", "ft"), hint="optional, for the sun"),
    _f("fill_pressure", "Fill pressure", "fill.pressure", PRESSURE_UNITS),
    _f("fill_temperature", "Fill temperature", "fill.temperature", TEMPERATURE_UNITS,
       hint="the temperature at which the fill pressure was read"),
    _f("fill_mass", "Fill mass", "fill.mass", MASS_UNITS, hint="mass of gas in the vessel"),
    _f("ambient_max", "Highest air temperature", "exposure.ambient_max", TEMPERATURE_UNITS),
    _f("gas_temperature", "Worst-case gas temperature", "exposure.gas_temperature", TEMPERATURE_UNITS),
    _f("finish", "Outside finish", "exposure.finish"),
    _f("absorptivity", "Solar absorptivity", "exposure.absorptivity", hint="0 to 1, instead of a finish"),
    _f("emissivity", "Emissivity", "exposure.emissivity", hint="0 to 1, optional"),
    _f("irradiance", "Solar irradiance", "exposure.irradiance", IRRADIANCE_UNITS, hint="optional; the tool's default otherwise"),
    _f("wind_speed", "Wind speed", "exposure.wind_speed", SPEED_UNITS, hint="optional; still air otherwise"),
    _f("orientation", "Vessel lies or stands", "exposure.orientation"),
    _f("required_margin", "Required margin", "criteria.required_margin", ("%",), hint="optional; tool default 10 %"),
    *(f for i in range(1, SCENARIO_ROWS + 1) for f in (
        _f(f"sc{i}_name", f"Scenario {i}, name", f"scenario[{i}].name"),
        _f(f"sc{i}_ambient_max", f"Scenario {i}, highest air temperature", f"scenario[{i}].ambient_max",
           TEMPERATURE_UNITS),
        _f(f"sc{i}_gas_temperature", f"Scenario {i}, worst-case gas temperature", f"scenario[{i}].gas_temperature",
           TEMPERATURE_UNITS),
        _f(f"sc{i}_solar", f"Scenario {i}, in the sun", f"scenario[{i}].solar"),
        _f(f"sc{i}_finish", f"Scenario {i}, outside finish", f"scenario[{i}].finish"))),
    _f("tol_fill_pressure", "Fill pressure tolerance", "tolerance.fill_pressure",
       hint="e.g. 2 bar, 1 % (of the reading) or 1.6 % of 400 bar (of full scale)"),
    _f("tol_fill_temperature", "Fill temperature tolerance", "tolerance.fill_temperature", ("K",)),
    _f("tol_gas_temperature", "Gas temperature tolerance", "tolerance.gas_temperature", ("K",)),
)
BY_NAME = {f.name: f for f in FIELDS}
BY_KEY = {f.key: f for f in FIELDS if f.key}

#: Choices of the form's radio groups (value, words).
GAS_MODES = (("single", "One gas"), ("mixture", "A mixture"))
FILL_MODES = (("pressure", "By pressure and temperature"), ("mass", "By mass (liquefied gases)"))
EXPOSURE_MODES = (("stated", "A stated temperature"), ("sun", "In the sun: the tool balances the wall's heat"))
ORIENTATIONS = (("horizontal", "lying (horizontal)"), ("vertical", "standing (vertical)"))
RATED_KINDS = ("test pressure", "working pressure", "design pressure", "maximum allowable working pressure")


#: Values the reader takes, put in place of a refused required field while the form's other fields are checked
#: (web.engine.form_errors): the value and its unit.
STAND_INS = {"id": ("V", None), "gas": ("nitrogen", None), "water_capacity": ("50", "L"),
             "rated_pressure": ("300", "bar(g)"), "fill_pressure": ("200", "bar(g)"), "fill_mass": ("10", "kg"),
             "fill_temperature": ("15", "degC"), "ambient_max": ("45", "degC"), "gas_temperature": ("65", "degC")}


def stand_in(name: str) -> dict:
    """Form values that take a refused field `name` out of the way: a value the reader takes for a required
    field (STAND_INS), else empty."""
    value, unit = STAND_INS.get(name, ("", None))
    return {name: value, **({name + "_unit": unit} if unit else {})}


def blank() -> dict:
    """Form values of an empty form, with the default units and choices."""
    v = {f.name: "" for f in FIELDS}
    v.update({f.name + "_unit": f.unit_default for f in FIELDS if f.units})
    v.update(gas_mode="single", fill_by="pressure", exposure_by="stated", orientation="")
    return v


_CONTROL = re.compile(r"[\x00-\x08\x0b-\x1f\x7f]")


def clean(text) -> str:
    """Field text: control characters dropped, surrounding blanks trimmed, length capped."""
    return _CONTROL.sub("", str(text or ""))[:MAX_FIELD].strip()


def values_from_form(form) -> dict:
    """The form's values (a Starlette FormData or a dict), cleaned, every field present."""
    v = blank()
    for name in list(v):
        if name in form:
            v[name] = clean(form.get(name))
    for f in FIELDS:
        if f.units and v[f.name + "_unit"] not in f.units:
            v[f.name + "_unit"] = f.unit_default if not v[f.name + "_unit"] else v[f.name + "_unit"]
    return v


def _q(text: str) -> str:
    """A TOML basic string (JSON's escapes are TOML's; control characters were dropped by clean())."""
    return json.dumps(text, ensure_ascii=False)


def _quantity(v: dict, name: str) -> str | None:
    value = v.get(name, "")
    if not value:
        return None
    unit = v.get(name + "_unit", "")
    return f"{value} {unit}".strip()


def mixture_text(v: dict) -> str:
    """The gas of a mixture as the case reader's text form: 'argon 82% + carbon dioxide 18%'."""
    terms = []
    for i in range(1, COMPONENT_ROWS + 1):
        gas, pct = v.get(f"mix{i}_gas", ""), v.get(f"mix{i}_pct", "")
        if gas or pct:
            terms.append(f"{gas} {pct}%".strip())
    return " + ".join(terms)


def case_text(v: dict) -> str:
    """The case file's TOML text of the form's values.

    Only what was entered is written (an empty optional field writes nothing, and the case reader's
    defaults apply, as in a case file). Fields of the choice not taken (fill by mass when filling by
    pressure; the sun's fields under a stated temperature) are left out.
    """
    lines: list[str] = []

    def put(key: str, value: str | None, quantity: bool = True) -> None:
        if value:
            lines.append(f"{key} = {_q(value)}")

    put("id", v["id"])
    put("description", v["description"])
    lines.append("")
    lines.append("[site]")
    put("name", v["site_name"])
    put("elevation", _quantity(v, "elevation"))
    put("atmospheric_pressure", _quantity(v, "atmospheric_pressure"))
    lines += ["", "[vessel]"]
    for name in ("water_capacity", "rated_pressure"):
        put(name, _quantity(v, name))
    put("rated_pressure_kind", v["rated_pressure_kind"])
    for name in ("relief_set_pressure", "max_filling_ratio", "outside_diameter", "length"):
        put(name, _quantity(v, name))
    lines += ["", "[fill]"]
    put("gas", mixture_text(v) if v["gas_mode"] == "mixture" else v["gas"])
    if v["fill_by"] == "mass":
        put("mass", _quantity(v, "fill_mass"))
        put("temperature", _quantity(v, "fill_temperature"))
    else:
        put("pressure", _quantity(v, "fill_pressure"))
        put("temperature", _quantity(v, "fill_temperature"))
    lines += ["", "[exposure]"]
    put("ambient_max", _quantity(v, "ambient_max"))
    if v["exposure_by"] == "sun":
        lines.append('solar = "sun"')
        put("finish", v["finish"])
        put("absorptivity", v["absorptivity"])
        put("emissivity", v["emissivity"])
        put("irradiance", _quantity(v, "irradiance"))
        put("wind_speed", _quantity(v, "wind_speed"))
        put("orientation", v["orientation"])
    else:
        put("gas_temperature", _quantity(v, "gas_temperature"))
    if v["required_margin"]:
        lines += ["", "[criteria]"]
        put("required_margin", _quantity(v, "required_margin"))
    for i in range(1, SCENARIO_ROWS + 1):
        p = f"sc{i}_"
        if not any(v[p + k] for k in ("name", "ambient_max", "gas_temperature", "solar", "finish")):
            continue
        lines += ["", "[[scenario]]"]
        put("name", v[p + "name"])
        put("ambient_max", _quantity(v, p + "ambient_max"))
        put("gas_temperature", _quantity(v, p + "gas_temperature"))
        if v[p + "solar"]:
            lines.append('solar = "sun"')
        put("finish", v[p + "finish"])
    tol = [(k, v["tol_" + k]) for k in ("fill_pressure", "fill_temperature", "gas_temperature") if v["tol_" + k]]
    if tol:
        lines += ["", "[tolerance]"]
        put("fill_pressure", v["tol_fill_pressure"])
        put("fill_temperature", _quantity(v, "tol_fill_temperature"))
        put("gas_temperature", _quantity(v, "tol_gas_temperature"))
    # drop tables left empty
    out: list[str] = []
    for i, line in enumerate(lines):
        if line.startswith("[") and (i + 1 >= len(lines) or lines[i + 1] == "" or lines[i + 1].startswith("[")):
            if out and out[-1] == "":
                out.pop()
            continue
        out.append(line)
    while out and out[0] == "":
        out.pop(0)
    return "\n".join(out).rstrip() + "\n"


# ----------------------------------------------------------------------------- messages back to fields

_SCENARIO_KEY = re.compile(r"^scenario\[(\d+)\]\.(\w+)$")


def field_for_key(key: str | None, v: dict) -> Field | None:
    """The form field that wrote case key `key` (None when no field did: the message goes on top)."""
    if not key:
        return None
    if key == "fill.gas" and v.get("gas_mode") == "mixture":
        return BY_NAME["mix1_gas"]
    if key == "fill.mass":
        return BY_NAME["fill_mass"]
    m = _SCENARIO_KEY.match(key)
    if m and int(m.group(1)) > SCENARIO_ROWS:
        return None
    if m and m.group(2) not in ("name", "ambient_max", "gas_temperature", "solar", "finish"):
        key = f"exposure.{m.group(2)}"
    if key.startswith("exposure.") and key not in BY_KEY and v.get("exposure_by") == "sun":
        key = "exposure.finish"
    return BY_KEY.get(key)


#: Case keys and TOML words that may appear inside the reader's wording, in label words.
_KEY_WORDS = sorted(
    [(f"[{t}] {k}", BY_KEY[f"{t}.{k}"].label) for t, k in (("fill", "pressure"), ("fill", "mass"), ("fill", "temperature"))]
    + [(k, f.label) for k, f in BY_KEY.items() if "." in k]
    # a key without its table only where it cannot be an ordinary word ("ambient_max", not "pressure")
    + [(k.split(".", 1)[1], f.label) for k, f in BY_KEY.items()
       if "." in k and not k.startswith("scenario") and "_" in k.split(".", 1)[1]],
    key=lambda p: -len(p[0]))


def in_label_words(text: str) -> str:
    """The reader's text with case keys replaced by the form's label words (lower case)."""
    for word, label in _KEY_WORDS:
        text = re.sub(rf"(?<![\w.\[]){re.escape(word)}(?![\w\]])", label[0].lower() + label[1:], text)
    return text


def message_for_field(exc, field: Field | None) -> str:
    """The InputError's message, without its file and key, in the field's words (a required field left empty is
    said in the form's words, not the case file's)."""
    if field is not None and exc.message == "required key is missing":
        return f"{field.label}: required; enter a value"
    text = exc.message
    if exc.given is not None:
        text += f" (given: {exc.given!r}" + (f"; expected: {exc.expected})" if exc.expected else ")")
    elif exc.expected:
        text += f" (expected: {exc.expected})"
    text = in_label_words(text)
    return f"{field.label}: {text}" if field is not None else text


# ----------------------------------------------------------------------------- a case file into the form

_QTY = re.compile(r"^\s*([+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d{1,4})?)\s*(.*?)\s*$")


#: A pressure unit written without its basis, and how the form writes it on each basis.
_BARE_PRESSURE = {u: (f"{u}(g)", f"{u}(a)") for u in ("bar", "mbar", "kPa", "MPa", "Pa")}
_BARE_PRESSURE["psi"] = ("psig", "psia")


def _split(v: dict, name: str, value, basis: str | None = None) -> None:
    text = str(value)
    f = BY_NAME[name]
    m = _QTY.match(text)
    if f.units and m:
        v[name], unit = m.group(1), m.group(2)
        if basis in ("gauge", "absolute") and unit in _BARE_PRESSURE and f.units in (PRESSURE_UNITS, ATM_UNITS):
            # the case's pressure_basis, written into the unit as the form always does
            unit = _BARE_PRESSURE[unit][0 if basis == "gauge" else 1]
        v[name + "_unit"] = unit or ("" if "%" not in f.units else "%")
        if not unit and f.units == ("%",):
            v[name] = text
            v[name + "_unit"] = "%"
        if f.units == ("%",) and not unit:
            # a plain fraction (0.1) in a percent field: written as a percentage
            try:
                v[name] = f"{float(m.group(1)) * 100:g}"
            except ValueError:
                pass
    else:
        v[name] = text
        if f.units:
            v[name + "_unit"] = ""


def values_from_case_text(text: str) -> tuple[dict, list[str]]:
    """Form values from a case file's text, and the notes on what the form could not hold.

    Raises tomllib.TOMLDecodeError on text that is not TOML (the caller runs the case reader for the
    message)."""
    data = tomllib.loads(text)
    v = blank()
    notes: list[str] = []
    for key in ("id", "description"):
        if isinstance(data.get(key), str):
            v[key] = data[key]
    basis = data.get("pressure_basis")
    if basis:
        notes.append(f"The case file says its pressures are {basis}; the form writes each pressure with its basis "
                     "instead, (g) or (a) in its unit.")
    site = data.get("site") or {}
    if "name" in site:
        v["site_name"] = str(site["name"])
    for k in ("elevation", "atmospheric_pressure"):
        if k in site:
            _split(v, k, site[k])
    vessel = data.get("vessel") or {}
    for k in ("water_capacity", "rated_pressure", "relief_set_pressure", "max_filling_ratio", "outside_diameter",
              "length"):
        if k in vessel:
            _split(v, k, vessel[k], basis)
    if "rated_pressure_kind" in vessel:
        v["rated_pressure_kind"] = str(vessel["rated_pressure_kind"])
    fill = data.get("fill") or {}
    gas = fill.get("gas")
    if isinstance(gas, dict) or (isinstance(gas, str) and "+" in gas):
        v["gas_mode"] = "mixture"
        if isinstance(gas, dict):
            terms = []
            for name, x in gas.items():
                if isinstance(x, (int, float)):
                    terms.append((name, f"{x * 100:g}"))
                else:
                    terms.append((name, str(x).replace("%", "").strip()))
        else:
            terms = []
            for term in gas.split("+"):
                m = re.match(r"^\s*(.*?)\s+([0-9.]+)\s*%\s*$", term)
                terms.append((m.group(1), m.group(2)) if m else (term.strip(), ""))
        if len(terms) > COMPONENT_ROWS:
            notes.append(f"The mixture has {len(terms)} components; the form holds {COMPONENT_ROWS}.")
        for i, (name, pct) in enumerate(terms[:COMPONENT_ROWS], 1):
            v[f"mix{i}_gas"], v[f"mix{i}_pct"] = name, pct
    elif gas is not None:
        v["gas"] = str(gas)
    if "mass" in fill:
        v["fill_by"] = "mass"
        _split(v, "fill_mass", fill["mass"])
    if "pressure" in fill:
        v["fill_by"] = "pressure"
        _split(v, "fill_pressure", fill["pressure"], basis)
    if "temperature" in fill:
        _split(v, "fill_temperature", fill["temperature"])
    exp = data.get("exposure") or {}
    if exp.get("solar") == "sun":
        v["exposure_by"] = "sun"
    for k in ("ambient_max", "gas_temperature", "irradiance", "wind_speed"):
        if k in exp:
            _split(v, k, exp[k])
    for k in ("finish", "absorptivity", "emissivity", "orientation"):
        if k in exp:
            v[k] = str(exp[k])
    if v["exposure_by"] == "sun" and "gas_temperature" in exp:
        notes.append("The case states a gas temperature beside the sun; the form sends one of the two: "
                     "choose under Exposure.")
    crit = data.get("criteria") or {}
    if "required_margin" in crit:
        _split(v, "required_margin", crit["required_margin"])
    scen = data.get("scenario") or []
    if isinstance(scen, list):
        if len(scen) > SCENARIO_ROWS:
            notes.append(f"The case has {len(scen)} scenarios; the form holds {SCENARIO_ROWS}.")
        for i, sc in enumerate(scen[:SCENARIO_ROWS], 1):
            if not isinstance(sc, dict):
                continue
            v[f"sc{i}_name"] = str(sc.get("name", ""))
            for k in ("ambient_max", "gas_temperature"):
                if k in sc:
                    _split(v, f"sc{i}_{k}", sc[k])
            if sc.get("solar") == "sun":
                v[f"sc{i}_solar"] = "sun"
            if "finish" in sc:
                v[f"sc{i}_finish"] = str(sc["finish"])
            extra = set(sc) - {"name", "ambient_max", "gas_temperature", "solar", "finish"}
            if extra:
                notes.append(f"Scenario {i} sets {', '.join(sorted(extra))}; the form's scenarios take those "
                             "from the exposure.")
    tol = data.get("tolerance") or {}
    if "fill_pressure" in tol:
        v["tol_fill_pressure"] = str(tol["fill_pressure"])
    for k in ("fill_temperature", "gas_temperature"):
        if k in tol:
            _split(v, "tol_" + k, tol[k])
    return v, notes
