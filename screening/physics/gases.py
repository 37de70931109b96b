"""The gas library: pure gases with their critical constants, and mixtures of them.

Data live in `data/gases.toml` (one table per gas, every number with its source).
This module is physics layer: it imports nothing from screening.inputs/outputs/cli.
"""

from __future__ import annotations

import difflib
import math
import tomllib
from dataclasses import dataclass
from functools import cached_property, lru_cache
from pathlib import Path

from screening.errors import InputError, UnknownGas

DATA_FILE = Path(__file__).parent / "data" / "gases.toml"

HAZARD_WORDS = ("flammable", "oxidizing", "toxic", "corrosive", "asphyxiant")
KINDS = ("permanent", "liquefiable", "dissolved")

#: Largest accepted |sum of mole fractions - 1| [-] before renormalising (0.5 %).
FRACTION_SUM_TOLERANCE = 0.005


@dataclass(frozen=True)
class Gas:
    """One pure gas (or pseudo-pure air) of the library. SI units."""

    name: str
    aliases: tuple[str, ...]
    formula: str
    cas: str
    molar_mass: float  # [kg/mol]
    critical_temperature: float  # [K]
    critical_pressure: float  # [Pa]
    acentric_factor: float  # [-]
    critical_volume: float  # [m3/mol]
    critical_compressibility: float  # [-]
    coolprop_name: str | None
    hazards: tuple[str, ...]
    kind: str  # "permanent" | "liquefiable" | "dissolved"
    quantum: bool
    classical_critical_temperature: float | None  # [K]
    classical_critical_pressure: float | None  # [Pa]
    sources: dict[str, str]  # field -> full citation text
    note: str


def _fold(text: str) -> str:
    """Lookup key: lower case, without spaces, hyphens or underscores."""
    return "".join(ch for ch in text.strip().lower() if ch not in " -_\t")


_FLOAT_FIELDS = (
    "molar_mass", "critical_temperature", "critical_pressure", "acentric_factor",
    "critical_volume", "critical_compressibility",
)


def _gas_from_table(t: dict, citations: dict[str, str], file: str) -> Gas:
    name = t.get("name")
    where = dict(file=file, key=f"gas.{name}")

    def need(field: str):
        if field not in t:
            raise InputError(f"missing field '{field}'", expected="every gas field", **where)
        return t[field]

    floats = {}
    for f in _FLOAT_FIELDS:
        v = need(f)
        if not isinstance(v, (int, float)) or isinstance(v, bool) or not math.isfinite(v):
            raise InputError(f"field '{f}' is not a finite number", given=v, expected="a finite number", **where)
        floats[f] = float(v)
    for f in ("molar_mass", "critical_temperature", "critical_pressure", "critical_volume",
              "critical_compressibility"):
        if floats[f] <= 0:
            raise InputError(f"field '{f}' must be positive", given=floats[f], expected="> 0", **where)
    hazards = tuple(need("hazards"))
    bad = [h for h in hazards if h not in HAZARD_WORDS]
    if bad:
        raise InputError("unknown hazard word", given=bad, expected=", ".join(HAZARD_WORDS), **where)
    kind = need("kind")
    if kind not in KINDS:
        raise InputError("unknown kind", given=kind, expected=", ".join(KINDS), **where)
    quantum = bool(need("quantum"))
    tc0 = t.get("classical_critical_temperature")
    pc0 = t.get("classical_critical_pressure")
    if quantum and (tc0 is None or pc0 is None):
        raise InputError("a quantum gas needs classical_critical_temperature and classical_critical_pressure",
                         **where)
    src_keys = t.get("sources", {})
    sources = {}
    for field, key in src_keys.items():
        if key not in citations:
            raise InputError(f"source key '{key}' of field '{field}' is not in [sources]", **where)
        sources[field] = citations[key]
    missing = [f for f in _FLOAT_FIELDS if f not in sources]
    if quantum:
        missing += [f for f in ("classical_critical_temperature", "classical_critical_pressure") if f not in sources]
    if missing:
        raise InputError("numbers without a source", given=missing, expected="a source key for every number",
                         **where)
    cp = need("coolprop_name") or None
    return Gas(
        name=str(name),
        aliases=tuple(need("aliases")),
        formula=str(need("formula")),
        cas=str(need("cas")),
        coolprop_name=cp,
        hazards=hazards,
        kind=kind,
        quantum=quantum,
        classical_critical_temperature=None if tc0 is None else float(tc0),
        classical_critical_pressure=None if pc0 is None else float(pc0),
        sources=sources,
        note=str(t.get("note", "")),
        **floats,
    )


@lru_cache(maxsize=1)
def _load() -> tuple[dict[str, Gas], dict[str, str], dict[str, str], dict[str, str]]:
    """(gases by name, folded name/alias -> name, source key -> citation, header)."""
    file = str(DATA_FILE)
    with open(DATA_FILE, "rb") as fh:
        data = tomllib.load(fh)
    citations = {str(k): str(v) for k, v in data.get("sources", {}).items()}
    # a gas table may carry the citations of its own new source keys (tables appended after [sources])
    for t in data.get("gas", []):
        for k, v in t.get("citations", {}).items():
            if citations.setdefault(str(k), str(v)) != str(v):
                raise InputError(f"source key '{k}' is cited twice with different texts", file=file,
                                 key=f"gas.{t.get('name')}.citations")
    gases: dict[str, Gas] = {}
    index: dict[str, str] = {}
    for t in data.get("gas", []):
        g = _gas_from_table(t, citations, file)
        if g.name in gases:
            raise InputError("gas listed twice", file=file, key=f"gas.{g.name}", given=g.name)
        gases[g.name] = g
        for label in (g.name, *g.aliases):
            k = _fold(label)
            if k in index and index[k] != g.name:
                raise InputError(f"name '{label}' is used by both '{index[k]}' and '{g.name}'",
                                 file=file, key=f"gas.{g.name}.aliases")
            index[k] = g.name
    header = {"edition": str(data.get("edition", "")), "date": str(data.get("date", ""))}
    return gases, index, citations, header


def library() -> dict[str, Gas]:
    """All gases, keyed by canonical name, in file order (a fresh dict; the Gas objects are shared)."""
    return dict(_load()[0])


def citations() -> dict[str, str]:
    """Source key -> full citation, in file order."""
    return dict(_load()[2])


def edition() -> dict[str, str]:
    """Library edition and date: {'edition': ..., 'date': ...}."""
    return dict(_load()[3])


def lookup(name: str) -> Gas:
    """The gas called `name`: canonical name or alias, case-insensitive, ignoring spaces/hyphens/underscores.

    Raises UnknownGas with the closest names (difflib over names and aliases).
    """
    gases, index, _, _ = _load()
    if not isinstance(name, str):
        raise InputError("a gas name must be text", given=name, expected="a gas name")
    key = _fold(name)
    if key in index:
        return gases[index[key]]
    labels = {}
    for g in gases.values():
        for label in (g.name, *g.aliases):
            labels.setdefault(_fold(label), label)
    close = difflib.get_close_matches(key, list(labels), n=5, cutoff=0.6)
    suggestions: list[str] = []
    for k in close:
        canonical = gases[index[k]].name
        if canonical not in suggestions:
            suggestions.append(canonical)
    raise UnknownGas(name, suggestions[:3])


def _percent(x: float) -> str:
    """Mole fraction as a percentage with sensible rounding (as few digits as keep it exact to 1e-9)."""
    p = 100.0 * x
    for digits in range(0, 7):
        r = round(p, digits)
        if abs(r - p) < 1e-9:
            return f"{r:.{digits}f}%"
    return f"{p:.6g}%"


@dataclass(frozen=True)
class Mixture:
    """A fill gas: components with mole fractions that sum exactly to 1.

    `given_fractions` keeps the fractions as given (before normalisation) for the name. Its derived
    properties (name, molar mass, hazards, kind) are worked out once per mixture (it is immutable): a batch
    reads them for every row of a gas.
    """

    components: tuple[Gas, ...]
    fractions: tuple[float, ...]  # [-] mole fractions, normalised
    given_fractions: tuple[float, ...] | None = None  # [-] as given
    given_basis: str = "mole"  # "mole" or "mass": what given_fractions are

    @property
    def is_pure(self) -> bool:
        return len(self.components) == 1

    @cached_property
    def name(self) -> str:
        """Pure gas name, or e.g. 'argon 82% + carbon dioxide 18%' (fractions as given)."""
        if self.is_pure:
            return self.components[0].name
        shown = self.given_fractions or self.fractions
        text = " + ".join(f"{g.name} {_percent(x)}" for g, x in zip(self.components, shown))
        return text + " by mass" if self.given_basis == "mass" and self.given_fractions else text

    @cached_property
    def molar_mass(self) -> float:
        """Mole-fraction-weighted molar mass [kg/mol]."""
        return math.fsum(x * g.molar_mass for g, x in zip(self.components, self.fractions))

    @cached_property
    def hazards(self) -> tuple[str, ...]:
        """Union of the components' hazards, in the library's hazard order."""
        present = {h for g in self.components for h in g.hazards}
        return tuple(h for h in HAZARD_WORDS if h in present)

    @cached_property
    def kind(self) -> str:
        """'dissolved' if any component is; else 'liquefiable' if any is; else 'permanent'."""
        kinds = {g.kind for g in self.components}
        for k in ("dissolved", "liquefiable"):
            if k in kinds:
                return k
        return "permanent"


def pure(name: str) -> Mixture:
    """A pure gas as a one-component Mixture."""
    return Mixture((lookup(name),), (1.0,), (1.0,))


def make_mixture(fractions: dict[str, float]) -> Mixture:
    """Mixture from {gas name: mole fraction [-]}.

    Each fraction must be a finite number with 0 < x <= 1; a gas may appear once
    (two aliases of the same gas count as a duplicate); the sum must be within
    0.5 % of 1 (|sum - 1| <= 0.005), and is then normalised to exactly 1.
    A one-entry dict is a pure gas (its fraction must still be within 0.5 % of 1).
    """
    if not isinstance(fractions, dict) or not fractions:
        raise InputError("a mixture needs at least one gas", given=fractions,
                         expected="{gas name: mole fraction}")
    gases: list[Gas] = []
    xs: list[float] = []
    seen: dict[str, str] = {}
    for label, x in fractions.items():
        g = lookup(label)
        if isinstance(x, bool) or not isinstance(x, (int, float)):
            raise InputError(f"mole fraction of '{label}' is not a number", given=x,
                             expected="a number with 0 < x <= 1")
        x = float(x)
        if not math.isfinite(x) or x <= 0.0 or x > 1.0:
            raise InputError(f"mole fraction of '{label}' is out of range", given=x,
                             expected="a finite number with 0 < x <= 1")
        if g.name in seen:
            raise InputError(f"'{label}' and '{seen[g.name]}' are the same gas ({g.name})", given=label,
                             expected="each gas once")
        seen[g.name] = label
        gases.append(g)
        xs.append(x)
    total = math.fsum(xs)
    if abs(total - 1.0) > FRACTION_SUM_TOLERANCE:
        raise InputError("mole fractions do not sum to 1", given=total,
                         expected=f"a sum within {FRACTION_SUM_TOLERANCE:.1%} of 1")
    norm = [x / total for x in xs]
    # Put the rounding remainder on the largest fraction so the sum is exactly 1.0.
    i = max(range(len(norm)), key=norm.__getitem__)
    norm[i] = 1.0 - math.fsum(norm[:i] + norm[i + 1:])
    return Mixture(tuple(gases), tuple(norm), tuple(xs))


def mixture_by_mass(mass_fractions: dict[str, float]) -> Mixture:
    """Mixture from {gas name: mass fraction [-]} (sum within 0.5 % of 1): mole fractions
    x_i = (w_i / M_i) / sum(w_j / M_j) with the library's molar masses; its name shows the mass fractions."""
    total = math.fsum(mass_fractions.values()) if mass_fractions else 0.0
    if not mass_fractions or abs(total - 1.0) > FRACTION_SUM_TOLERANCE:
        raise InputError("mass fractions do not sum to 100 %", given=total,
                         expected=f"a sum within {FRACTION_SUM_TOLERANCE:.1%} of 100 %")
    moles = {name: w / lookup(name).molar_mass for name, w in mass_fractions.items()}
    n = math.fsum(moles.values())
    m = make_mixture({name: v / n for name, v in moles.items()})
    if m.is_pure:
        return m
    return Mixture(m.components, m.fractions, tuple(mass_fractions.values()), "mass")
