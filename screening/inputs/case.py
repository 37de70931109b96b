"""Read and validate a single-vessel case file (TOML) into a plain `Case` in SI units.

Every failure is an `InputError` naming the file, the key, what was given and what was expected.
"""

from __future__ import annotations

import hashlib
import re
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

from screening.constants import P_STANDARD_ATMOSPHERE
from screening.errors import InputError
from screening.inputs.gas_spec import parse_gas
from screening.physics.gases import Mixture
from screening.units import Reading, parse, standard_atmosphere_pressure, to_absolute_pressure

#: The default required margin: a tool default, not a code requirement.
DEFAULT_REQUIRED_MARGIN = 0.10
#: Range accepted for a stated atmospheric pressure [Pa] (absolute): from high mountain sites to a deep
#: low-lying site in a high; anything outside is taken for a typing error.
ATMOSPHERIC_PRESSURE_RANGE_PA = (30e3, 110e3)
#: Largest case file [bytes] read (a case file is a few kilobytes); a larger file, or a device that
#: never ends (/dev/zero), is refused before it fills the memory.
MAX_CASE_BYTES = 10 * 1024 * 1024
#: Most [[scenario]] tables in one case: each is screened with every model, and more than this is
#: taken for a generated or mistaken file rather than a set of exposures someone means.
MAX_SCENARIOS = 20

# Allowed keys per table: anything else is an input error (a misspelt key must not be ignored).
_SCHEMA: dict[str, set[str]] = {
    "": {"id", "description", "pressure_basis", "site", "vessel", "fill", "exposure", "criteria", "scenario",
         "tolerance"},
    "site": {"name", "atmospheric_pressure", "elevation"},
    "vessel": {"water_capacity", "rated_pressure", "rated_pressure_kind", "relief_set_pressure",
               "max_filling_ratio", "outside_diameter", "length"},
    "fill": {"gas", "pressure", "temperature", "mass"},
    "exposure": set(),  # EXPOSURE_KEYS, below
    "criteria": {"required_margin"},
    "tolerance": {"fill_pressure", "fill_temperature", "gas_temperature"},
}
EXPOSURE_KEYS = {"ambient_max", "gas_temperature", "solar", "irradiance", "absorptivity", "finish", "emissivity",
                 "wind_speed", "orientation"}
_SCHEMA["exposure"] = EXPOSURE_KEYS
_SCENARIO_KEYS = EXPOSURE_KEYS | {"name"}
_TABLES = {"site", "vessel", "fill", "exposure", "criteria", "tolerance"}
_SOLAR = ("none", "sun")
_ORIENTATIONS = ("horizontal", "vertical")
_FULL_SCALE = re.compile(r"^\s*(.+?%)\s+of\s+(.+?)\s*$")


@dataclass(frozen=True)
class Site:
    name: str | None
    atmospheric_pressure_pa: float          # [Pa]
    elevation_m: float | None               # [m]


@dataclass(frozen=True)
class Exposure:
    """One exposure scenario: how hot the gas can get. Temperatures [K], irradiance [W/m2], wind [m/s]."""

    name: str
    ambient_max_k: float | None
    gas_temperature_k: float | None
    solar: str = "none"                      # "none" | "sun"
    irradiance_w_m2: float | None = None     # None: the tool's stated default
    absorptivity: float | None = None
    emissivity: float | None = None
    finish: str | None = None
    wind_speed_m_s: float = 0.0
    orientation: str = "horizontal"
    key: str = "exposure"                    # where it came from, for messages


@dataclass(frozen=True)
class Tolerance:
    """Input tolerances, each a half-band (difference) in SI: [Pa], [K], [K]."""

    fill_pressure_pa: float = 0.0
    fill_temperature_k: float = 0.0
    gas_temperature_k: float = 0.0
    entered: dict = field(default_factory=dict)
    #: a fill-pressure band given as a share of the reading ('1 %'): (the share [-], the offset [Pa] of the reading
    #: as shown: the atmospheric pressure for a gauge reading, 0 for an absolute one), so that the band at another
    #: reading R [Pa, absolute] is share * (R - offset); None for a band in pressure or of a gauge's full scale
    fill_pressure_share: tuple[float, float] | None = None


@dataclass(frozen=True)
class Case:
    """One vessel's screening input, validated, in SI (pressures absolute)."""

    id: str
    description: str | None
    source: str                              # file name as given
    text: str                                # the case file as entered
    site: Site
    gas: Mixture
    water_capacity_m3: float                 # [m3]
    rated_pressure_pa: float                 # [Pa] absolute
    rated_pressure_kind: str | None
    relief_set_pressure_pa: float | None     # [Pa] absolute
    max_filling_ratio_kg_m3: float | None    # [kg/m3] of water capacity
    fill_pressure_pa: float | None           # [Pa] absolute
    fill_temperature_k: float | None         # [K]
    fill_mass_kg: float | None               # [kg]
    ambient_max_k: float | None              # [K]
    gas_temperature_k: float | None          # [K]
    required_margin: float                   # [-]
    required_margin_is_default: bool
    inputs: tuple[dict, ...] = ()            # key, entered, si_value, si_unit (for reports)
    display_units: dict = field(default_factory=dict)
    scenarios: tuple[Exposure, ...] = ()     # at least one; the first mirrors [exposure] without [[scenario]]
    tolerance: Tolerance | None = None
    outside_diameter_m: float | None = None  # [m]
    length_m: float | None = None            # [m]

    @property
    def input_sha256(self) -> str:
        return hashlib.sha256(self.text.encode("utf-8")).hexdigest()

    @property
    def worst_case_temperature_k(self) -> float:
        """The worst-case gas temperature [K]: the stated gas temperature, else the ambient maximum;
        the higher of the two when both are given (conservative)."""
        values = [t for t in (self.gas_temperature_k, self.ambient_max_k) if t is not None]
        return max(values)

    @property
    def worst_case_basis(self) -> str:
        if self.gas_temperature_k is not None and (self.ambient_max_k is None
                                                   or self.gas_temperature_k >= self.ambient_max_k):
            return "gas temperature stated in the case"
        return "ambient maximum"


class _Reader:
    """Reads keys from the parsed TOML with the file name attached to every error."""

    def __init__(self, data: dict, source: str) -> None:
        self.data = data
        self.source = source
        self.inputs: list[dict] = []
        self.labels: dict[str, str] = {}
        self.extra: dict[str, dict] = {}     # scenario tables by their key, e.g. "scenario[2]"
        self.basis: str | None = None        # the case's pressure_basis
        self.p_atm: float = P_STANDARD_ATMOSPHERE   # the site's, once read

    def err(self, message: str, key: str, **kw) -> InputError:
        return InputError(message, file=self.source, key=key, **kw)

    def table(self, name: str) -> dict:
        if name in self.extra:
            return self.extra[name]
        value = self.data.get(name, {})
        if not isinstance(value, dict):
            raise self.err("expected a table", name, given=value, expected=f"a [{name}] table")
        return value

    def raw(self, table: str, key: str, required: bool = False):
        value = self.table(table).get(key) if table else self.data.get(key)
        full = f"{table}.{key}" if table else key
        if value is None and required:
            raise self.err("required key is missing", full, expected=f"'{key}' in the [{table}] table"
                           if table else f"'{key}' at the top of the case")
        return value

    def text(self, table: str, key: str, required: bool = False) -> str | None:
        value = self.raw(table, key, required)
        if value is None:
            return None
        if not isinstance(value, str) or not value.strip():
            raise self.err("expected a non-empty text", f"{table}.{key}" if table else key, given=value,
                           expected="a quoted text")
        return value

    def quantity(self, table: str, key: str, kind: str, required: bool = False,
                 pressure_basis: str | None = None) -> Reading | None:
        value = self.raw(table, key, required)
        if value is None:
            return None
        full = f"{table}.{key}"
        reading = parse(value, kind, pressure_basis=pressure_basis, file=self.source, key=full)
        self.labels.setdefault(kind, reading.unit.label)
        return reading

    def record(self, key: str, reading: Reading | None, si_value: float | None, si_unit: str) -> None:
        if reading is not None and all(item["key"] != key for item in self.inputs):
            self.inputs.append({"key": key, "entered": reading.text, "si_value": si_value, "si_unit": si_unit})

    def pressure(self, table: str, key: str, required: bool = False) -> float | None:
        """An absolute pressure [Pa] on the case's pressure basis and the site's atmosphere (set first)."""
        reading = self.quantity(table, key, "pressure", required, pressure_basis=self.basis)
        if reading is None:
            return None
        p_abs = to_absolute_pressure(reading, self.p_atm)
        if p_abs <= 0.0:
            raise self.err("absolute pressure must be above zero", f"{table}.{key}", given=reading.text,
                           expected="an absolute pressure above 0")
        self.record(f"{table}.{key}", reading, p_abs, "Pa (absolute)")
        return p_abs

    def temperature(self, table: str, key: str, required: bool = False) -> float | None:
        reading = self.quantity(table, key, "temperature", required)
        if reading is None:
            return None
        t = reading.si()
        if t <= 0.0:
            raise self.err("temperature at or below absolute zero", f"{table}.{key}", given=reading.text,
                           expected="a temperature above 0 K")
        self.record(f"{table}.{key}", reading, t, "K")
        return t

    def positive(self, table: str, key: str, kind: str, si_unit: str, required: bool = False) -> float | None:
        reading = self.quantity(table, key, kind, required)
        if reading is None:
            return None
        v = reading.si()
        if v <= 0.0:
            raise self.err(f"{kind} must be above zero", f"{table}.{key}", given=reading.text,
                           expected=f"a positive {kind}")
        self.record(f"{table}.{key}", reading, v, si_unit)
        return v


def _check_keys(data: dict, source: str) -> None:
    scenarios = data.get("scenario", [])
    if not isinstance(scenarios, list) or not all(isinstance(x, dict) for x in scenarios):
        raise InputError("expected a list of [[scenario]] tables", file=source, key="scenario",
                         given=scenarios, expected="[[scenario]] tables with a name and an exposure")
    for i, sc in enumerate(scenarios, 1):
        for key in sc:
            if key not in _SCENARIO_KEYS:
                raise InputError("unknown key", file=source, key=f"scenario[{i}].{key}", given=key,
                                 expected="[[scenario]] keys: " + ", ".join(sorted(_SCENARIO_KEYS)))
    for table, allowed in _SCHEMA.items():
        keys = data if table == "" else data.get(table, {})
        if table and not isinstance(keys, dict):
            raise InputError("expected a table", file=source, key=table, given=keys,
                             expected=f"a [{table}] table")
        for key in keys:
            if key not in allowed:
                full = f"{table}.{key}" if table else key
                hint = (f"[{table}] keys: " if table else "top-level keys: ") + ", ".join(sorted(allowed))
                raise InputError("unknown key", file=source, key=full, given=key, expected=hint)
            if table == "" and key in _TABLES and not isinstance(data[key], dict):
                raise InputError("expected a table", file=source, key=key, given=data[key],
                                 expected=f"a [{key}] table")


def parse_case_text(text: str, source: str = "<case>") -> Case:
    """Parse and validate a case file's text. Raises InputError on any problem."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"not valid TOML: {exc}", file=source) from None
    return parse_case_data(data, source, text)


def parse_case_data(data: dict, source: str, text: str) -> Case:
    """Validate a case given as nested tables (as TOML parses it) into a Case.

    `text` is the input as entered (hashed into the document id). Batch rows use this too, with
    their own text (the row as read)."""
    _check_keys(data, source)
    r = _Reader(data, source)
    case_id = r.text("", "id", required=True)
    description = r.text("", "description")
    basis = r.raw("", "pressure_basis")
    if basis is not None and basis not in ("gauge", "absolute"):
        raise r.err("pressure_basis must be gauge or absolute", "pressure_basis", given=basis,
                    expected='"gauge" or "absolute"')
    r.basis = basis
    site = _site(r)
    r.p_atm = site.atmospheric_pressure_pa
    water_capacity, rated, rated_kind, relief, max_ratio = _vessel(r)
    gas, fill_p, fill_t, fill_m = _fill(r)
    diameter = r.positive("vessel", "outside_diameter", "length", "m")     # for the solar balance
    length = r.positive("vessel", "length", "length", "m")
    scenarios = _scenarios(r)
    tolerance = _tolerance(r, fill_p, fill_t, scenarios) if "tolerance" in data else None
    margin, margin_default = _criteria(r)
    return Case(
        id=case_id, description=description, source=source, text=text,
        site=site, gas=gas,
        water_capacity_m3=water_capacity, rated_pressure_pa=rated, rated_pressure_kind=rated_kind,
        relief_set_pressure_pa=relief, max_filling_ratio_kg_m3=max_ratio,
        fill_pressure_pa=fill_p, fill_temperature_k=fill_t, fill_mass_kg=fill_m,
        ambient_max_k=scenarios[0].ambient_max_k, gas_temperature_k=scenarios[0].gas_temperature_k,
        required_margin=margin, required_margin_is_default=margin_default,
        inputs=tuple(r.inputs), display_units=_display_units(r),
        scenarios=scenarios, tolerance=tolerance, outside_diameter_m=diameter, length_m=length,
    )


def _site(r: _Reader) -> Site:
    """The [site] table: its name and the atmospheric pressure for gauge conversion (given, from the
    elevation, or the standard atmosphere)."""
    site_name = r.text("site", "name")
    p_atm_reading = r.quantity("site", "atmospheric_pressure", "pressure", pressure_basis="absolute")
    elev_reading = r.quantity("site", "elevation", "length")
    if p_atm_reading is not None and elev_reading is not None:
        raise r.err("give either atmospheric_pressure or elevation, not both", "site.elevation",
                    given=elev_reading.text, expected="one of the two")
    elevation = None
    if p_atm_reading is not None:
        if p_atm_reading.unit.basis == "gauge":
            raise r.err("atmospheric pressure is absolute by nature", "site.atmospheric_pressure",
                        given=p_atm_reading.text, expected="an absolute pressure, e.g. '101.3 kPa(a)'")
        p_atm = p_atm_reading.si()
        if not ATMOSPHERIC_PRESSURE_RANGE_PA[0] <= p_atm <= ATMOSPHERIC_PRESSURE_RANGE_PA[1]:
            raise r.err("atmospheric pressure out of range", "site.atmospheric_pressure",
                        given=p_atm_reading.text, expected="30 kPa(a) to 110 kPa(a)")
        r.record("site.atmospheric_pressure", p_atm_reading, p_atm, "Pa (absolute)")
    elif elev_reading is not None:
        elevation = elev_reading.si()
        try:
            p_atm = standard_atmosphere_pressure(elevation)
        except InputError as exc:
            raise exc.located(file=r.source, key="site.elevation") from None
        r.record("site.elevation", elev_reading, elevation, "m")
    else:
        p_atm = P_STANDARD_ATMOSPHERE
    return Site(site_name, p_atm, elevation)


def _vessel(r: _Reader) -> tuple:
    """The [vessel] table: water capacity, rated pressure and its kind, relief setting, filling ratio."""
    water_capacity = r.positive("vessel", "water_capacity", "volume", "m3", required=True)
    rated = r.pressure("vessel", "rated_pressure", required=True)
    if rated <= r.p_atm:
        raise r.err("rated pressure must be above atmospheric pressure", "vessel.rated_pressure",
                    given=r.raw("vessel", "rated_pressure"), expected="a gauge pressure above 0")
    rated_kind = r.text("vessel", "rated_pressure_kind")
    relief = r.pressure("vessel", "relief_set_pressure")
    if relief is not None and relief <= r.p_atm:
        raise r.err("relief set pressure must be above atmospheric pressure", "vessel.relief_set_pressure",
                    given=r.raw("vessel", "relief_set_pressure"), expected="a gauge pressure above 0")
    max_ratio = r.positive("vessel", "max_filling_ratio", "density", "kg/m3")
    return water_capacity, rated, rated_kind, relief, max_ratio


def _fill(r: _Reader) -> tuple:
    """The [fill] table: the gas and either pressure with temperature, or mass."""
    gas = parse_gas(r.raw("fill", "gas", required=True), file=r.source, key="fill.gas")
    fill_p = r.pressure("fill", "pressure")
    fill_t = r.temperature("fill", "temperature")
    fill_m = r.positive("fill", "mass", "mass", "kg")
    if fill_m is not None and fill_p is not None:
        raise r.err("give the fill as pressure and temperature, or as mass, not both", "fill.mass",
                    given=r.raw("fill", "mass"), expected="either [fill] pressure + temperature, or [fill] mass")
    if fill_m is None and fill_p is None:
        raise r.err("the fill needs a pressure (with temperature) or a mass", "fill.pressure",
                    expected="[fill] pressure + temperature, or [fill] mass")
    if fill_p is not None and fill_t is None:
        raise r.err("a fill pressure needs the temperature at which it was read", "fill.temperature",
                    expected="e.g. temperature = \"15 degC\" in [fill]")
    return gas, fill_p, fill_t, fill_m


def _scenarios(r: _Reader) -> tuple[Exposure, ...]:
    """The exposure scenarios: [[scenario]] tables, each inheriting what it does not set from [exposure];
    without them, the [exposure] table alone."""
    scenario_tables = r.data.get("scenario", [])
    if len(scenario_tables) > MAX_SCENARIOS:
        raise r.err("too many scenarios", "scenario", given=f"{len(scenario_tables)} [[scenario]] tables",
                    expected=f"at most {MAX_SCENARIOS} scenarios in one case")
    if not scenario_tables:
        return (_exposure(r, "exposure", "exposure"),)
    scenarios = []
    names = set()
    for i, sc in enumerate(scenario_tables, 1):
        key = f"scenario[{i}]"
        r.extra[key] = sc
        name = r.text(key, "name", required=True)
        if name in names:
            raise r.err("two scenarios have the same name", f"{key}.name", given=name, expected="distinct names")
        names.add(name)
        scenarios.append(_exposure(r, key, name))
    return tuple(scenarios)


def _exposure(r: _Reader, table: str, name: str) -> Exposure:
    """One exposure scenario read from `table`, each key falling back to [exposure]."""
    def pick(key):
        return table if key in r.table(table) else "exposure"
    ambient = r.temperature(pick("ambient_max"), "ambient_max")
    gas_t = r.temperature(pick("gas_temperature"), "gas_temperature")
    solar = r.raw(pick("solar"), "solar") or "none"
    if solar not in _SOLAR:
        raise r.err("unknown solar exposure", f"{pick('solar')}.solar", given=solar, expected='"none" or "sun"')
    if ambient is None and gas_t is None:
        raise r.err("the worst case needs ambient_max or gas_temperature", f"{table}.ambient_max",
                    expected=f"[{table}] ambient_max = \"45 degC\" or gas_temperature = \"65 degC\"")
    if solar == "sun" and ambient is None:
        raise r.err("a sun exposure needs the ambient air temperature", f"{table}.ambient_max",
                    expected="ambient_max = \"40 degC\" beside solar = \"sun\"")

    def non_negative(key: str, kind: str, si_unit: str, zero: str) -> float | None:
        reading = r.quantity(pick(key), key, kind)
        if reading is None:
            return None
        value = reading.si()
        if value < 0.0:
            raise r.err(f"{key.replace('_', ' ')} cannot be negative", f"{pick(key)}.{key}", given=reading.text,
                        expected=f"{zero} or more")
        r.record(f"{pick(key)}.{key}", reading, value, si_unit)
        return value
    irradiance = non_negative("irradiance", "irradiance", "W/m2", "0 W/m2")
    wind_speed = non_negative("wind_speed", "speed", "m/s", "0 m/s") or 0.0

    def unit_fraction(key):
        value = r.raw(pick(key), key)
        if value is None:
            return None
        v = parse(value, "fraction", file=r.source, key=f"{pick(key)}.{key}").si()
        if not 0.0 <= v <= 1.0:
            raise r.err(f"{key} must lie between 0 and 1", f"{pick(key)}.{key}", given=value,
                        expected="a number from 0 to 1, e.g. 0.6")
        return v
    absorptivity = unit_fraction("absorptivity")
    emissivity = unit_fraction("emissivity")
    finish = r.text(pick("finish"), "finish")
    if finish is not None and absorptivity is not None:
        raise r.err("give a finish or an absorptivity, not both", f"{pick('finish')}.finish", given=finish,
                    expected="one of the two")
    orientation = r.raw(pick("orientation"), "orientation") or "horizontal"
    if orientation not in _ORIENTATIONS:
        raise r.err("unknown orientation", f"{pick('orientation')}.orientation", given=orientation,
                    expected='"horizontal" (lying) or "vertical" (standing)')
    return Exposure(name, ambient, gas_t, solar, irradiance, absorptivity, emissivity, finish, wind_speed,
                    orientation, key=table)


def _tolerance(r: _Reader, fill_p: float | None, fill_t: float | None,
               scenarios: tuple[Exposure, ...]) -> Tolerance:
    """The [tolerance] table: the bands of the fill pressure and of the fill and gas temperatures."""
    entered = {}
    band_p = 0.0
    tp = r.raw("tolerance", "fill_pressure")
    if tp is not None:
        if fill_p is None:
            raise r.err("a fill-pressure tolerance needs a fill pressure", "tolerance.fill_pressure", given=tp,
                        expected="[fill] pressure, or no fill_pressure tolerance")
        band_p, share = _pressure_band(r, tp)
        entered["fill_pressure"] = tp

    def band_t(key, reading_k):
        value = r.raw("tolerance", key)
        if value is None:
            return 0.0
        band = parse(value, "temperature", file=r.source, key=f"tolerance.{key}").si_difference()
        if band < 0.0 or (reading_k is not None and band >= reading_k):
            raise r.err(f"the {key.replace('_', ' ')} tolerance must be at least zero and smaller than the "
                        "reading", f"tolerance.{key}", given=value, expected="e.g. '2 K' or '3 degC'")
        entered[key] = value
        return band
    return Tolerance(band_p, band_t("fill_temperature", fill_t),
                     band_t("gas_temperature", min(t for s in scenarios for t in
                                                   (s.gas_temperature_k, s.ambient_max_k) if t)),
                     entered, share if tp is not None else None)


def _pressure_band(r: _Reader, tp) -> tuple[float, tuple[float, float] | None]:
    """The fill-pressure band [Pa]: a pressure ('2 bar'), a share of the reading ('1 %') or of a gauge's
    full scale ('1.6 % of 400 bar'); and for a share of the reading, (the share, the reading's offset [Pa]:
    Tolerance.fill_pressure_share), else None."""
    source = r.source
    reading = parse(r.raw("fill", "pressure"), "pressure", pressure_basis=r.basis)
    reading_value = reading.si()  # as shown [Pa]
    share = None
    m = _FULL_SCALE.match(tp) if isinstance(tp, str) else None
    if m:
        pct = parse(m.group(1), "fraction", file=source, key="tolerance.fill_pressure").si()
        scale = parse(m.group(2), "pressure", pressure_basis="gauge", file=source,
                      key="tolerance.fill_pressure").si()
        band_p = pct * scale
    elif isinstance(tp, str) and tp.strip().endswith("%"):
        fraction = parse(tp, "fraction", file=source, key="tolerance.fill_pressure").si()
        band_p = fraction * reading_value
        share = (fraction, r.p_atm if reading.unit.basis == "gauge" else 0.0)
    else:
        band_p = parse(tp, "pressure", pressure_basis="gauge", file=source, key="tolerance.fill_pressure").si()
    if band_p < 0.0 or band_p >= reading_value:
        raise r.err("the fill-pressure tolerance must be at least zero and smaller than the reading",
                    "tolerance.fill_pressure", given=tp,
                    expected=f"below {r.raw('fill', 'pressure')}, e.g. '2 bar', '1 %' or '1.6 % of 400 bar'")
    return band_p, share


def _criteria(r: _Reader) -> tuple[float, bool]:
    """The [criteria] table: the required margin below the rating, and whether it is the default."""
    margin_reading = r.quantity("criteria", "required_margin", "fraction")
    if margin_reading is None:
        return DEFAULT_REQUIRED_MARGIN, True
    margin = margin_reading.si()
    if not 0.0 <= margin < 1.0:
        raise r.err("required margin out of range", "criteria.required_margin", given=margin_reading.text,
                    expected="0 % to below 100 %")
    r.record("criteria.required_margin", margin_reading, margin, "(fraction)")
    return margin, False


def _display_units(r: _Reader) -> dict[str, str]:
    """The units the case was entered in, for showing results back (atm is shown as bar(a))."""
    display = {
        "pressure": r.labels.get("pressure", "bar(g)"),
        "temperature": r.labels.get("temperature", "degC"),
        "volume": r.labels.get("volume", "L"),
        "mass": r.labels.get("mass", "kg"),
    }
    if display["pressure"] == "atm":
        display["pressure"] = "bar(a)"
    return display


def load_case(path: str | Path) -> Case:
    """Read a case file from disk. A missing or unreadable file is an InputError."""
    p = Path(path)
    try:
        with p.open("rb") as fh:
            raw = fh.read(MAX_CASE_BYTES + 1)
    except FileNotFoundError:
        raise InputError("case file not found", file=str(path)) from None
    except IsADirectoryError:
        raise InputError("expected a case file, got a directory", file=str(path)) from None
    except OSError as exc:
        raise InputError(f"cannot read the case file: {exc.strerror}", file=str(path)) from None
    if len(raw) > MAX_CASE_BYTES:
        raise InputError("the case file is larger than this tool reads", file=str(path),
                         given=f"more than {MAX_CASE_BYTES} bytes",
                         expected=f"a case file of at most {MAX_CASE_BYTES // (1024 * 1024)} MB")
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        raise InputError("the case file is not UTF-8 text", file=str(path)) from None
    return parse_case_text(text, source=str(path))
