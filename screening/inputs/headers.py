"""Inventory headers read by meaning: the accepted spellings of each column, and its unit.

A header names a case key in any of the spellings listed in :data:`SPELLINGS`, with case, spaces and
punctuation ignored (``Water capacity``, ``water-capacity`` and ``WATER_CAPACITY`` are one name), and may
carry the column's unit at its end in brackets or parentheses: ``Water capacity (L)``,
``fill pressure [bar g]``, ``rated_pressure [bar(g)]``. The unit is used where a cell is a bare number.

A header that names no key is a column of the user's own (a location, a serial number, an owner): it is
carried through unchanged to every output. One that nearly names a key (``fill_presure``) is taken for
a typing error and refused with a "did you mean"; so are a key given twice and a unit the tool does not
read. Every problem of the header is reported at once.

>>> normal_name("Water capacity")
'water_capacity'
>>> split_header("fill pressure [bar g]")
('fill pressure', 'bar g')
>>> split_header("Rated pressure (bar(g))")
('Rated pressure', 'bar(g)')
"""

from __future__ import annotations

import difflib
import re
from dataclasses import dataclass

#: Case key -> accepted header spellings (normalised: lower case, words joined by "_"). The first is the
#: name the tool writes (templates, messages).
SPELLINGS: dict[str, tuple[str, ...]] = {
    "id": ("id", "vessel_id", "cylinder_id", "asset_id", "tag", "tag_number"),
    "description": ("description", "desc"),
    "pressure_basis": ("pressure_basis", "basis"),
    "site.name": ("site", "site_name"),
    "site.atmospheric_pressure": ("atmospheric_pressure", "barometric_pressure", "ambient_pressure"),
    "site.elevation": ("elevation", "altitude", "site_elevation"),
    "fill.gas": ("gas", "fill_gas", "gas_name", "contents"),
    "vessel.water_capacity": ("water_capacity", "capacity", "water_volume", "wc"),
    "vessel.rated_pressure": ("rated_pressure", "rating", "pressure_rating"),
    "vessel.rated_pressure_kind": ("rated_pressure_kind", "rating_kind"),
    "vessel.relief_set_pressure": ("relief_set_pressure", "relief_pressure", "relief_setting",
                                   "relief_valve_set_pressure"),
    "vessel.max_filling_ratio": ("max_filling_ratio", "maximum_filling_ratio", "filling_ratio"),
    "vessel.outside_diameter": ("outside_diameter", "od"),
    "vessel.length": ("length",),
    "fill.pressure": ("fill_pressure", "filling_pressure", "pressure_at_fill"),
    "fill.temperature": ("fill_temperature", "filling_temperature", "temperature_at_fill", "fill_temp"),
    "fill.mass": ("fill_mass", "filled_mass", "gas_mass"),
    "exposure.ambient_max": ("ambient_max", "max_ambient", "maximum_ambient_temperature",
                             "max_ambient_temperature", "ambient_max_temperature"),
    "exposure.gas_temperature": ("gas_temperature", "worst_gas_temperature", "exposure_gas_temperature"),
    "exposure.solar": ("solar", "sun"),
    "exposure.irradiance": ("irradiance", "solar_irradiance"),
    "exposure.absorptivity": ("absorptivity", "solar_absorptivity"),
    "exposure.finish": ("finish", "surface_finish"),
    "exposure.emissivity": ("emissivity",),
    "exposure.wind_speed": ("wind_speed", "wind"),
    "exposure.orientation": ("orientation",),
    "criteria.required_margin": ("required_margin", "margin_required", "minimum_margin"),
}
#: Normalised spelling -> case key.
NAME_TO_KEY: dict[str, str] = {s: k for k, names in SPELLINGS.items() for s in names}
#: Case key -> the name the tool writes.
KEY_TO_NAME: dict[str, str] = {k: names[0] for k, names in SPELLINGS.items()}
#: Keys that hold text, not quantities (a header unit does not apply to them).
TEXT_KEYS = frozenset({"id", "description", "pressure_basis", "site.name", "fill.gas",
                       "vessel.rated_pressure_kind", "exposure.solar", "exposure.finish", "exposure.orientation"})
#: Quantity kind of each quantity key (as :func:`screening.units.parse` names it).
KINDS: dict[str, str] = {
    "site.atmospheric_pressure": "pressure", "site.elevation": "length", "vessel.water_capacity": "volume",
    "vessel.rated_pressure": "pressure", "vessel.relief_set_pressure": "pressure",
    "vessel.max_filling_ratio": "density", "vessel.outside_diameter": "length", "vessel.length": "length",
    "fill.pressure": "pressure", "fill.temperature": "temperature", "fill.mass": "mass",
    "exposure.ambient_max": "temperature", "exposure.gas_temperature": "temperature",
    "exposure.irradiance": "irradiance", "exposure.absorptivity": "fraction", "exposure.emissivity": "fraction",
    "exposure.wind_speed": "speed", "criteria.required_margin": "fraction",
}
#: How close an unmatched header must be to an accepted spelling to be taken for a typing error
#: (difflib's ratio; "fill_presure" against "fill_pressure" is 0.96, "location" against "elevation" 0.71).
NEAR_MISS = 0.85


@dataclass(frozen=True)
class Column:
    """One column of an inventory: its header as written; for a column the tool reads, the case key and
    the unit of bare numbers; `key` None for a column of the user's own, carried through unchanged."""

    header: str
    name: str
    key: str | None
    unit: str | None = None
    decimal_comma: bool = False


def normal_name(text: str) -> str:
    """Lower case, every run of characters other than letters and digits one "_"."""
    return re.sub(r"[^0-9a-z]+", "_", text.strip().lower()).strip("_")


def split_header(header: str) -> tuple[str, str | None]:
    """(name, unit) of a header with an optional trailing unit in [...] or (...), nesting allowed."""
    h = (header or "").strip()
    if h and h[-1] in ")]":
        close = h[-1]
        open_ = "(" if close == ")" else "["
        depth = 0
        for i in range(len(h) - 1, -1, -1):
            if h[i] == close:
                depth += 1
            elif h[i] == open_:
                depth -= 1
                if depth == 0:
                    unit = h[i + 1:-1].strip()
                    name = h[:i].strip()
                    if name:
                        return name, unit or None
                    break
    return h, None


def unit_label(unit: str, kind: str) -> str | None:
    """The unit as the unit parser reads it ("bar g" -> "bar(g)"), or None if it reads none of the forms."""
    from screening.errors import InputError
    from screening.units import parse

    forms = [unit, unit.replace(" ", ""), re.sub(r"\s*[-_ ]\s*([ga])$", r"(\1)", unit), unit.replace("°", "deg")]
    for form in dict.fromkeys(forms):
        try:
            parse(f"1 {form}", kind, pressure_basis="gauge")
        except InputError:
            continue
        return form
    return None


def suggestion(name: str) -> str | None:
    """The accepted spelling an unmatched name is probably a typing error of, or None."""
    got = difflib.get_close_matches(name, list(NAME_TO_KEY), n=1, cutoff=NEAR_MISS)
    return got[0] if got else None


def match_header(header: list[str], decimal_comma: bool = False) -> tuple[list[Column], list[str]]:
    """The columns of a header row and the list of its problems (empty if it can be used)."""
    cols: list[Column] = []
    problems: list[str] = []
    seen: dict[str, str] = {}
    for pos, h in enumerate(header):
        text = "" if h is None else str(h)
        name_text, unit = split_header(text)
        name = normal_name(name_text)
        where = f"column {pos + 1} ('{text}')" if text.strip() else f"column {pos + 1}"
        if not name:
            cols.append(Column(text, "", None))     # a column without a name: carried through
            continue
        key = NAME_TO_KEY.get(name)
        if key is None:
            near = suggestion(name)
            if near is not None:
                problems.append(f"{where}: unknown column; did you mean '{near}'?")
            cols.append(Column(text, name, None))
            continue
        if key in seen:
            problems.append(f"{where}: a second column for {KEY_TO_NAME[key]} (already '{seen[key]}')")
            cols.append(Column(text, name, None))
            continue
        seen[key] = text
        label = None
        if unit is not None:
            if key in TEXT_KEYS:
                problems.append(f"{where}: a text column takes no unit")
            else:
                label = unit_label(unit, KINDS[key])
                if label is None:
                    problems.append(f"{where}: unit '{unit}' is not one this tool reads for a {KINDS[key]}")
        cols.append(Column(text, name, key, label, decimal_comma and key not in TEXT_KEYS))
    if "id" not in seen:
        problems.append("no column names the vessels: expected one headed "
                        + " or ".join(f"'{s}'" for s in SPELLINGS["id"][:3]))
    return cols, problems


def is_header(row: list) -> bool:
    """Whether a row reads as a header: it names the id and at least one other key."""
    keys = {NAME_TO_KEY.get(normal_name(split_header("" if c is None else str(c))[0])) for c in row}
    return "id" in keys and len(keys - {None}) >= 2


def accepted_spellings() -> str:
    """The documented list, one key a line (for the README and `screening template`)."""
    return "\n".join(f"{KEY_TO_NAME[k]:<22} {', '.join(v)}" for k, v in SPELLINGS.items())
