"""Reference model: multiparameter Helmholtz-energy equations of state through CoolProp's HEOS backend.

One low-level ``CoolProp.AbstractState("HEOS", ...)`` per fluid or mixture, created once (cached by
:func:`reference_fluid`) and reused for every state. No ``PropsSI`` calls here.

Every state is checked before a number is handed out:

* temperature within the equation's range [t_min, t_max] (CoolProp extrapolates silently, e.g. nitrogen
  at 5000 K; we refuse);
* pressure finite and not above p_max;
* for single-phase states, (dP/drho)_T > 0 (mechanically stable root);
* mixtures: the homogeneous state at (density, temperature) is accepted only if the reverse
  pressure–temperature flash gives the density back and the state is one phase by both routes of
  :mod:`screening.physics.mixtures` (CoolProp's flash with its stability analysis, and thermo's
  Peng–Robinson flash with its stability test), each state checked within a stated time bound. Two-phase
  mixture states are not screened.

Pseudo-pure fluids (CoolProp's "Air", whose parameter ``pure`` is "false") are treated as a pure fluid
above their maxcondentherm (the ``T_critical`` CoolProp reports, 132.53 K for air). Below it the
pseudo-pure equation does not represent the vapour-liquid equilibrium of the real mixture, so states
there are refused (NotApplicable) rather than given a "saturation" pressure.

Units: SI throughout — pressure [Pa], temperature [K], molar density [mol/m3], molar mass [kg/mol].
"""

from __future__ import annotations

import functools
import math
import os
import re
import threading
import time
from functools import lru_cache

import CoolProp
import CoolProp.CoolProp as CP
import numpy as np

from screening.errors import NotApplicable
from screening.physics import mixtures as _mix
from screening.physics.eos import coolprop_library
from screening.physics.roots import brentq as _brentq

MODEL = "reference"

#: Relative tolerance of the mixture round trip rho -> p(rho, T) -> rho(p, T).
ROUND_TRIP_RTOL = 1e-6

#: Relative band around the vapour pressure where a pure-fluid PT flash is refused (phase undecidable).
SATURATION_BAND = 1e-9

_TWO_PHASE = CoolProp.iphase_twophase
#: The saturation flash looks at states below this fraction of the critical temperature (`_evaluate_rows`, ``dome``),
#: where the saturated densities stand well apart from the critical density.
_DOME_T_MAX = 0.999
#: A density inside the dome by more than this fraction of the saturated density is taken as two-phase from the
#: saturation flash; closer to the boundary the density-temperature evaluation decides.
_DOME_MARGIN = 1e-6

#: Most settled phase answers one mixture keeps (oldest dropped first).
_ANSWERS_KEPT = 4096


# --------------------------------------------------------------------------------------------------
# Bibliography (CoolProp ships its BibTeX library next to the extension module)
# --------------------------------------------------------------------------------------------------

def _bib_path() -> str:
    return os.path.join(os.path.dirname(CoolProp.__file__), "CoolPropBibTeXLibrary.bib")


@lru_cache(maxsize=1)
def _bib_text() -> str:
    try:
        with open(_bib_path(), encoding="utf-8", errors="replace") as fh:
            return fh.read()
    except OSError:
        return ""


def _bib_entry(key: str) -> dict[str, str] | None:
    """Fields of one BibTeX entry (lower-case names, braces stripped), or None when not found."""
    text = _bib_text()
    m = re.search(r"@\w+\s*\{\s*" + re.escape(key) + r"\s*,", text)
    if not m:
        return None
    # walk to the brace that closes the entry
    depth, i = 1, m.end()
    while i < len(text) and depth:
        depth += {"{": 1, "}": -1}.get(text[i], 0)
        i += 1
    body = text[m.end():i - 1]
    fields: dict[str, str] = {}
    for fm in re.finditer(r"(\w+)\s*=\s*\{", body):
        depth, j = 1, fm.end()
        while j < len(body) and depth:
            depth += {"{": 1, "}": -1}.get(body[j], 0)
            j += 1
        value = body[fm.end():j - 1].replace("{", "").replace("}", "")
        fields[fm.group(1).lower()] = " ".join(value.split())
    return fields


def citation(key: str) -> str:
    """Readable citation for a CoolProp bibliography key (author, year, title, journal, DOI); read once
    per key (`_citation` is cached)."""
    return _citation(key)


@lru_cache(maxsize=None)
def _citation(key: str) -> str:
    """Readable citation for a CoolProp bibliography key; the key itself when the entry is not there.
    A comma-separated list of keys (oxygen's 'Schmidt-FPE-1985,Stewart-JPCRD-1991') gives each citation."""
    if "," in key:
        return "; ".join(_citation(k.strip()) for k in key.split(",") if k.strip())
    f = _bib_entry(key) if key else None
    if not f or "title" not in f:
        return f"{key} (CoolProp bibliography key)"
    parts = [f.get("author", "?"), f"({f.get('year', 'n.d.')}).", f["title"] + "."]
    where = f.get("journal") or f.get("booktitle") or f.get("school") or f.get("publisher") or ""
    if f.get("volume"):
        where += f" {f['volume']}"
    if f.get("pages"):
        where += f", {f['pages']}"
    if where:
        parts.append(where.strip() + ".")
    if f.get("doi"):
        parts.append(f"doi:{f['doi']}")
    return " ".join(parts) + f" [{key}]"


# --------------------------------------------------------------------------------------------------
# The fluid
# --------------------------------------------------------------------------------------------------

#: What CoolProp's look-up functions raise for a name or binary pair they do not know: ValueError
#: (CoolProp 8), RuntimeError (CoolProp 6 and 7; for a pair also when it is stored in the other order).
#: Either way the fluid or pair is taken as missing, and the mixture is refused (NotApplicable), never screened.
_LOOKUP_ERRORS = (ValueError, RuntimeError)


def _binary_pair_missing(cas1: str, cas2: str) -> bool:
    # the pair's source key is listed for every fitted pair (the refrigerant pairs of Lemmon 2004 carry no
    # "betaT": their reducing parameters are named differently)
    return _binary_pair_key(cas1, cas2) is None


def _binary_pair_key(cas1: str, cas2: str) -> str | None:
    for a, b in ((cas1, cas2), (cas2, cas1)):
        try:
            return CP.get_mixture_binary_pair_data(a, b, "BibTeX")
        except _LOOKUP_ERRORS:
            continue
    return None


def _holding_the_state(method):
    """Run a method that updates and reads the fluid's one AbstractState while holding the fluid's lock.

    The cached fluid (one per process, see :func:`reference_fluid`) is shared by every thread, and an
    evaluation is several CoolProp calls in a row (update, then pressure, phase, derivatives): another
    thread updating the same state between them would hand out its numbers. A re-entrant lock per fluid
    (methods call one another) costs well under a microsecond per call (DEVELOPERS.md); one state per
    thread would have to build a mixture's phase envelope again in every thread."""
    @functools.wraps(method)
    def locked(self, *args, **kwargs):
        with self._lock:
            return method(self, *args, **kwargs)
    return locked


def pair_source(name1: str | None, name2: str | None) -> str | None:
    """CoolProp's source key of the fitted binary parameters of two CoolProp fluids, None where it has none."""
    if not name1 or not name2:
        return None
    try:
        return _binary_pair_key(CP.get_fluid_param_string(name1, "CAS"), CP.get_fluid_param_string(name2, "CAS"))
    except _LOOKUP_ERRORS:
        return None


class ReferenceFluid:
    """A pure fluid or mixture on CoolProp's HEOS backend, with checked state evaluations.

    Attributes: ``names`` (CoolProp fluid names), ``fractions`` (mole fractions [-]), ``is_mixture``,
    ``is_pseudo_pure`` (e.g. Air), ``label``, ``molar_mass`` [kg/mol], ``t_min``, ``t_max`` [K],
    ``p_max`` [Pa], ``critical_temperature`` [K], ``critical_pressure`` [Pa],
    ``critical_molar_density`` [mol/m3], ``triple_temperature`` [K] (pure fluids; None for mixtures).
    For a mixture the critical values are None (the mixture's critical point is not searched: CoolProp's
    search is not bounded in time); ``pseudo_critical_temperature`` [K] and
    ``pseudo_critical_molar_density`` [mol/m3] (Kay's rule over the components' reference-equation
    critical points) name its one-phase states, and the phase of each state is established by
    :mod:`screening.physics.mixtures` (two routes, bounded in time).
    """

    def __init__(self, names: tuple[str, ...], fractions: tuple[float, ...]) -> None:
        self._lock = threading.RLock()  # held around every use of self._state (_holding_the_state)
        names = tuple(str(n) for n in names)
        fractions = tuple(float(x) for x in fractions)
        if not names or len(names) != len(fractions):
            raise NotApplicable(MODEL, "need as many mole fractions as fluid names", value=(names, fractions))
        if any(not math.isfinite(x) or x <= 0.0 for x in fractions) or abs(sum(fractions) - 1.0) > 1e-6:
            raise NotApplicable(MODEL, "mole fractions must be positive and sum to 1", value=fractions,
                                valid_range="each in (0, 1], sum 1 +- 1e-6")
        coolprop_library.use(names)   # whole (superancillaries included) before any state of them
        cas = []
        for n in names:
            try:
                cas.append(CP.get_fluid_param_string(n, "CAS"))
            except _LOOKUP_ERRORS:
                raise NotApplicable(MODEL, f"fluid '{n}' is not known to CoolProp", value=n) from None
        self.names = names
        self.is_mixture = len(names) > 1
        if self.is_mixture:
            for i in range(len(names)):
                for j in range(i + 1, len(names)):
                    if _binary_pair_missing(cas[i], cas[j]):
                        raise NotApplicable(
                            MODEL,
                            f"CoolProp has no binary interaction parameters for the pair "
                            f"{names[i]} ({cas[i]}) / {names[j]} ({cas[j]}); the mixture is not modelled",
                            value=(names[i], names[j]))
            s = sum(fractions)
            fractions = tuple(x / s for x in fractions)
        else:
            fractions = (1.0,)
        self.fractions = fractions
        self._cas = tuple(cas)
        self.is_pseudo_pure = (not self.is_mixture) and CP.get_fluid_param_string(names[0], "pure") == "false"
        self.label = names[0] if not self.is_mixture else "&".join(
            f"{n}[{x:g}]" for n, x in zip(names, fractions))
        try:
            self._state = CP.AbstractState("HEOS", "&".join(names))
            if self.is_mixture:
                self._state.set_mole_fractions(list(fractions))
        except ValueError as exc:
            raise NotApplicable(MODEL, f"CoolProp cannot set up {self.label}: {exc}", value=self.label) from None
        a = self._state
        self.molar_mass = float(a.molar_mass())
        self.t_min = float(a.Tmin())
        self.t_max = float(a.Tmax())
        self.p_max = float(a.pmax())
        if not self.is_mixture:
            self.critical_temperature: float | None = float(a.T_critical())
            self.critical_pressure: float | None = float(a.p_critical())
            self.critical_molar_density: float | None = float(a.rhomolar_critical())
            self.triple_temperature: float | None = float(a.Ttriple())
        else:
            self._init_mixture()
        #: Whether the array methods recognise this fluid's good states on their fast path (`_evaluate_rows`):
        #: a pure or pseudo-pure fluid whose ranges are finite numbers (so that the fast path's plain
        #: comparisons refuse every non-finite value the checks refuse).
        self._rows_fast = (not self.is_mixture
                           and all(math.isfinite(x) for x in (self.t_min, self.t_max, self.p_max)))
        #: The lowest temperature [K] the fast path takes: a pseudo-pure fluid is refused below its
        #: maxcondentherm (:meth:`_check_temperature`), those states go to the checked path, which says so.
        self._rows_t_min = (max(self.t_min, self.critical_temperature) if self._rows_fast and self.is_pseudo_pure
                            else self.t_min)

    def __repr__(self) -> str:
        return f"ReferenceFluid({self.label})"

    # ---------------------------------------------------------------------------------------------
    def eos_references(self) -> list[str]:
        """Published sources of the equations of state used (components, then mixture departure functions).
        Read from CoolProp's bibliography once per fluid (a few milliseconds a citation), a new list each call."""
        refs = self.__dict__.get("_eos_references")
        if refs is None:
            refs = self._eos_references = self._read_eos_references()   # same text whichever thread writes it
        return list(refs)

    def _read_eos_references(self) -> tuple[str, ...]:
        refs = []
        for n in self.names:
            key = CP.get_fluid_param_string(n, "BibTeX-EOS")
            refs.append(f"{n}: {citation(key)}")
        if self.is_mixture:
            seen = set()
            for i in range(len(self.names)):
                for j in range(i + 1, len(self.names)):
                    key = _binary_pair_key(self._cas[i], self._cas[j])
                    if key and key not in seen:
                        seen.add(key)
                        refs.append(f"{self.names[i]}/{self.names[j]} interaction: {_citation(key)}")
        return tuple(refs)

    # ---------------------------------------------------------------------------------------------
    # range checks
    def _check_temperature(self, T: float) -> None:
        if not math.isfinite(T) or T < self.t_min or T > self.t_max:
            raise NotApplicable(MODEL, f"temperature {T!r} K is outside the range of the {self.label} equation",
                                value=T, valid_range=f"{self.t_min:g} K to {self.t_max:g} K")
        if self.is_pseudo_pure and T < self.critical_temperature:
            raise NotApplicable(
                MODEL, f"{self.label} is modelled as a pseudo-pure fluid; below its maxcondentherm "
                f"{self.critical_temperature:g} K the vapour-liquid equilibrium is not represented",
                value=T, valid_range=f"{self.critical_temperature:g} K to {self.t_max:g} K")

    def _check_pressure(self, p: float) -> None:
        if not math.isfinite(p) or p <= 0.0:
            if self.is_mixture:
                raise NotApplicable(MODEL, f"{_mix.CANNOT}: the homogeneous mixture has no positive pressure at "
                                    "this density and temperature (a state inside the two-phase region)",
                                    value=p, valid_range="finite, > 0 Pa")
            raise NotApplicable(MODEL, f"equation of state gave a non-physical pressure {p!r} Pa for {self.label}",
                                value=p, valid_range="finite, > 0 Pa")
        if p > self.p_max and self.is_mixture:
            raise NotApplicable(MODEL, f"the pressure, {p / 1e5:.6g} bar(a), is above the range of the mixture's "
                                "equations", value=p, valid_range=f"up to {self.p_max / 1e5:.6g} bar(a)")
        if p > self.p_max:
            raise NotApplicable(MODEL, f"pressure {p:.6g} Pa is above the range of the {self.label} equation",
                                value=p, valid_range=f"up to {self.p_max:.6g} Pa")

    def _check_density(self, rho: float) -> None:
        if not math.isfinite(rho) or rho <= 0.0:
            raise NotApplicable(MODEL, f"molar density must be finite and positive, got {rho!r} mol/m3",
                                value=rho, valid_range="> 0 mol/m3")

    def _check_stable(self, rho: float, T: float) -> None:
        """The state just evaluated at rho [mol/m3], T [K] is mechanically stable, (dP/drho)_T > 0."""
        dpdrho = self._state.first_partial_deriv(CoolProp.iP, CoolProp.iDmolar, CoolProp.iT)
        if not (math.isfinite(dpdrho) and dpdrho > 0.0):
            if self.is_mixture:
                raise NotApplicable(MODEL, f"{_mix.CANNOT} at {T - 273.15:.1f} °C: the homogeneous mixture is not "
                                    "mechanically stable at this density (a state inside the two-phase region)",
                                    value=dpdrho, valid_range="(dP/drho)_T > 0")
            what = f"{self.label} at rho={rho:.6g} mol/m3, T={T:.6g} K"
            raise NotApplicable(MODEL, f"{what}: (dP/drho)_T = {dpdrho!r} is not positive — not a stable "
                                "single-phase state", value=dpdrho, valid_range="(dP/drho)_T > 0")

    def _require_pure(self, what: str) -> None:
        if self.is_mixture:
            raise NotApplicable(MODEL, f"{what} is defined here for pure fluids only, not {self.label}",
                                value=self.label)
        if self.is_pseudo_pure:
            raise NotApplicable(MODEL, f"{what} is not defined for the pseudo-pure fluid {self.label}",
                                value=self.label)

    # ---------------------------------------------------------------------------------------------
    # core state evaluation at (rho, T); leaves self._state at that state. Returns (p, phase).
    # The checked path: every rule and every reason is written here and in the _check_* methods. The array
    # methods' fast path (_evaluate_rows) only recognises the states that pass all of them.
    def _evaluate(self, rho: float, T: float) -> tuple[float, str]:
        self._check_density(rho)
        self._check_temperature(T)
        if self.is_mixture:
            return self._evaluate_mixture(rho, T)
        a = self._state
        try:
            a.update(CoolProp.DmolarT_INPUTS, rho, T)
            p = a.p()
            iphase = a.phase()
        except ValueError as exc:
            raise NotApplicable(MODEL, f"CoolProp density-temperature flash failed for {self.label} at "
                                f"rho={rho:.6g} mol/m3, T={T:.6g} K: {exc}", value=(rho, T)) from None
        self._check_pressure(p)
        if iphase == _TWO_PHASE:
            return p, "two-phase"
        self._check_stable(rho, T)
        if T >= self.critical_temperature:
            return p, "supercritical"
        return p, "liquid" if rho > self.critical_molar_density else "gas"

    def _evaluate_rows(self, rho_f: list[float], T_f: list[float], slopes: bool = False,
                       dome: bool | np.ndarray = False, why: bool = True
                       ) -> tuple[list[float], list[str | None], list[str], bytearray, list[float] | None]:
        """:meth:`_evaluate` of many states (Python floats, lists of equal length), for the array methods; the
        caller holds the lock. Returns (pressures [Pa], phase words, reasons, valid (one byte a state, 1 where
        valid), slopes): a state that :meth:`_evaluate` refuses carries NaN, None, its NotApplicable reason and 0.
        With ``slopes``, each valid state's slope along the isochore [Pa/K] (in the dome dp_sat/dT, as
        :meth:`dp_dt_at_constant_density` takes it, unchecked), read right after its evaluation; a state where
        CoolProp raises ValueError (in the evaluation or the slope) is then skipped, without a reason, as NaN.

        Fast path (pure and pseudo-pure fluids, ``_rows_fast``; a pseudo-pure one from its maxcondentherm up,
        ``_rows_t_min``): the same CoolProp calls as
        :meth:`_evaluate`, in the same order, with its checks as plain comparisons on local names, which
        accept exactly the states the checks accept, and the same phase words. It only answers "every check
        passes, here are p and the phase": a state failing any comparison, or where CoolProp raises, goes
        through :meth:`_evaluate` itself, which evaluates it again (the same calls, so the state is left where
        it leaves it) and says why it is refused, so the rules and their reasons are written once, there
        (tests/test_reference_rows.py compares the two paths state by state). Other fluids take
        :meth:`_evaluate` for every state.

        ``dome`` (without ``slopes``; True for every state, or a mask of the states, for callers whose states
        mostly lie inside the saturation dome): such a state of the fast path between the triple point and
        _DOME_T_MAX of the critical temperature is first looked at through one saturation flash at its
        temperature (CoolProp's temperature-quality flash: the saturated liquid's density above the critical
        density, the saturated vapour's below it, and the vapour pressure). A density inside the dome by more than
        _DOME_MARGIN of that saturated density is a two-phase state, whose pressure is the vapour pressure: what
        the density-temperature evaluation gives there, bit for bit, at a fraction of its cost (it works out both
        saturated states in full). Any other state is evaluated as above (tests/test_dome_states.py compares
        the two, and PropsSI, state by state). The state is then left at the last flash made.

        ``why`` False (for callers that only ask whether a state can be evaluated): a state the fast path's
        comparisons refuse, without CoolProp raising, is given NaN, None, an empty reason and 0 without the
        checked path evaluating it again to say why (it refuses every such state); where CoolProp raised, the
        checked path answers as above."""
        n = len(rho_f)
        p_out = [math.nan] * n
        words: list[str | None] = [None] * n
        reasons = [""] * n
        valid = bytearray(n)
        d_out = [math.nan] * n if slopes else None
        evaluate, a = self._evaluate, self._state
        iP, iT, iD = CoolProp.iP, CoolProp.iT, CoolProp.iDmolar
        fast = self._rows_fast
        marked = None if isinstance(dome, bool) else np.asarray(dome, dtype=bool).tolist()
        dome = fast and not slopes and (dome if marked is None else any(marked))
        if fast:
            update, get_p, get_phase, dp_drho = a.update, a.p, a.phase, a.first_partial_deriv
            by_rho_T, two_phase, inf = CoolProp.DmolarT_INPUTS, _TWO_PHASE, math.inf
            t_min, t_max, p_max = self._rows_t_min, self.t_max, self.p_max
            t_c, rho_c = self.critical_temperature, self.critical_molar_density
            if dome:
                by_q_T, get_rho = CoolProp.QT_INPUTS, a.rhomolar
                t_sat_lo, t_sat_hi = max(self.triple_temperature, t_min), _DOME_T_MAX * t_c
                inner_l, inner_v = 1.0 - _DOME_MARGIN, 1.0 + _DOME_MARGIN
        for i in range(n):
            rho, T = rho_f[i], T_f[i]
            word = None
            # _check_density, _check_temperature (NaN fails every comparison)
            if dome and 0.0 < rho < inf and t_sat_lo <= T < t_sat_hi and (marked is None or marked[i]):
                try:        # the saturated density on the state's side of the critical density, the vapour pressure
                    update(by_q_T, 0.0 if rho > rho_c else 1.0, T)
                    ps, rs = get_p(), get_rho()
                    if (rho < rs * inner_l if rho > rho_c else rho > rs * inner_v) and 0.0 < ps <= p_max:
                        p_out[i] = ps
                        words[i] = "two-phase"
                        valid[i] = 1
                        continue
                except ValueError:
                    pass
            if fast:
                if not (0.0 < rho < inf and t_min <= T <= t_max):
                    if not why:
                        continue
                else:
                    try:
                        update(by_rho_T, rho, T)
                        p = get_p()
                        iphase = get_phase()
                        if 0.0 < p <= p_max:                            # _check_pressure
                            if iphase == two_phase:
                                word = "two-phase"
                            elif 0.0 < dp_drho(iP, iD, iT) < inf:       # _check_stable
                                word = "supercritical" if T >= t_c else "liquid" if rho > rho_c else "gas"
                        if word is None and not why:
                            continue
                    except ValueError:
                        pass
            if word is None:        # refused, or not on the fast path: the checked path answers, and says why
                try:
                    p, word = evaluate(rho, T)
                except NotApplicable as exc:
                    reasons[i] = exc.reason
                    continue
                except ValueError:
                    if not slopes:
                        raise
                    continue
            if slopes:
                try:
                    d_out[i] = (a.first_saturation_deriv(iP, iT) if word == "two-phase"
                                else a.first_partial_deriv(iP, iT, iD))
                except ValueError:
                    continue
            p_out[i] = p
            words[i] = word
            valid[i] = 1
        return p_out, words, reasons, valid, d_out

    # ---------------------------------------------------------------------------------------------
    # mixtures
    def _init_mixture(self) -> None:
        """Pseudo-critical values (Kay's rule) and the cubic route's constants, from the components'
        reference equations; no phase envelope and no critical-point search (neither is bounded in time)."""
        self.critical_temperature = self.critical_pressure = self.critical_molar_density = None
        self.triple_temperature = None
        comps, tcs, vcs = [], [], []
        for n, cas in zip(self.names, self._cas):
            tc = CP.PropsSI("Tcrit", n)
            pc = CP.PropsSI("pcrit", n)
            rc = CP.PropsSI("rhomolar_critical", n)
            comps.append(_mix.CubicComponent(cas, tc, pc, CP.PropsSI("acentric", n), CP.PropsSI("molar_mass", n)))
            tcs.append(tc)
            vcs.append(1.0 / rc)
        #: The highest critical temperature [K] of the components (where nodes may lie deeper, establish_isochore).
        self.critical_temperature_max = max(tcs)
        self.pseudo_critical_temperature = math.fsum(x * t for x, t in zip(self.fractions, tcs))
        self.pseudo_critical_molar_density = 1.0 / math.fsum(x * v for x, v in zip(self.fractions, vcs))
        self.cubic_components = tuple(comps)
        try:    # built here, once, so that no phase check's time budget pays for it
            _mix.cubic_kij(self.cubic_components)
        except Exception:  # the cubic route will say it did not answer
            pass
        pairs = []
        for i in range(len(self.names)):
            for j in range(i + 1, len(self.names)):
                key = _binary_pair_key(self._cas[i], self._cas[j]) or "?"
                pairs.append(f"{self.names[i]}/{self.names[j]} [{key}]")
        #: The mixing rules used, in words (shown in results and reports).
        self.mixing_rule = (
            "multi-fluid Helmholtz mixing (Kunz–Wagner GERG form): reducing functions with binary parameters "
            f"fitted for every pair ({', '.join(pairs)}); phase checked by CoolProp's flash and by "
            f"{_mix.CUBIC_MIXING_RULE}")
        self._memo = _mix.IsochoreMemo()
        #: The highest temperature [K] at which a node was not found one phase (establish_isochore), by region
        #: of density (node_region), and under None the highest at which a node's flashes were very slow: no node
        #: of the region (of any region) is tried at or below it again. A choice of what to flash, never an
        #: answer.
        self._node_failed: dict[int | None, float] = {}
        #: Settled phase answers (one phase or two) keyed by the exact state (rho, p, T): both routes are
        #: deterministic, so the same state asked again (a scenario, a tolerance corner, a repeated row, a
        #: warm screening) gets the same answer without a flash. Answers that could not be established (a
        #: route that failed or ran out of time) are not kept. Read and written under the fluid's lock.
        self._answers: dict[tuple[float, float, float], _mix.PhaseAnswer] = {}
        self.phase_time_bound = _mix.PHASE_TIME_BOUND

    def _homogeneous(self, rho: float, T: float) -> float:
        """Pressure [Pa] of the homogeneous mixture at (rho, T), straight from the Helmholtz energy (the
        mixture density–temperature flash is slow and can pick a wrong state); leaves the state there."""
        a = self._state
        a.specify_phase(CoolProp.iphase_gas)
        try:
            a.update(CoolProp.DmolarT_INPUTS, rho, T)
            return a.p()
        except ValueError:
            raise NotApplicable(MODEL, f"{_mix.CANNOT}: the mixture equation gives no state at "
                                f"{rho:.6g} mol/m3 and {T:.6g} K", value=(rho, T)) from None
        finally:
            a.unspecify_phase()

    def _evaluate_mixture(self, rho: float, T: float) -> tuple[float, str]:
        p = self._homogeneous(rho, T)
        self._check_pressure(p)
        self._check_stable(rho, T)
        label = _mix.single_phase_label(T, rho, self.pseudo_critical_temperature,
                                        self.pseudo_critical_molar_density)
        if self._memo.covers(rho, T):
            return p, label
        answer = self.mixture_phase(rho, p, T)
        where = f"at {T - 273.15:.1f} °C and {p / 1e5:.4g} bar(a)"
        if answer.single is None:
            raise NotApplicable(MODEL, f"{answer.reason} {where}", value=(rho, T))
        if not answer.single:
            return self._two_phase(rho, T, answer, where)
        self._memo.record(rho, T)
        self._homogeneous(rho, T)  # leave the state at (rho, T) for derivative calls
        return p, label

    def _two_phase(self, rho: float, T: float, answer: _mix.PhaseAnswer, where: str) -> tuple[float, str]:
        """A two-phase mixture state: refused here (see :class:`LiquefiedBlend` for blends filled as liquids)."""
        raise NotApplicable(MODEL, f"the mixture separates into {answer.reason} {where}; two-phase mixture "
                            "states are not screened", value=(rho, T))

    @_holding_the_state
    def mixture_phase(self, rho: float, p: float, T: float,
                      budget: _mix.Budget | None = None) -> _mix.PhaseAnswer:
        """Whether the homogeneous state (rho [mol/m3], p [Pa], T [K]) is one phase, by both routes
        (reference: CoolProp's PT flash with its stability analysis, the density checked on the way
        back; cubic: thermo's Peng–Robinson flash), within ``phase_time_bound`` seconds. A settled answer is
        kept for the exact state (see ``_answers``)."""
        key = (float(rho), float(p), float(T))
        known = self._answers.get(key)
        if known is not None:
            return known
        answer = self._mixture_phase(rho, p, T, budget)
        if answer.single is not None and not any(a.phases is None for a in answer.routes):
            if len(self._answers) >= _ANSWERS_KEPT:
                self._answers.pop(next(iter(self._answers)))
            self._answers[key] = answer
        return answer

    def _mixture_phase(self, rho: float, p: float, T: float, budget: _mix.Budget | None) -> _mix.PhaseAnswer:
        over = _mix.take_check()
        if over:
            return _mix.PhaseAnswer(None, (), over)
        budget = budget or _mix.Budget(self.phase_time_bound)
        # the cubic route first: about 1 ms, where the reference route's flash takes 0.05-1 s; two phases
        # found by it decide the answer (the conservative combination) without the slower route
        answers = [_mix.cubic_route(self.cubic_components, self.fractions, p, T, budget)]
        if answers[0].phases == 2:
            return _mix.combine(answers, budget)
        if budget.expired():
            answers.append(_mix.RouteAnswer("reference", None, "no time left"))
        else:
            answers.append(self._reference_route(rho, p, T, budget))
        return _mix.combine(answers, budget)

    def _reference_route(self, rho: float, p: float, T: float, budget: _mix.Budget) -> _mix.RouteAnswer:
        a = self._state
        try:
            a.update(CoolProp.PT_INPUTS, p, T)
            rho_back, iphase = a.rhomolar(), a.phase()
        except ValueError:
            return _mix.RouteAnswer("reference", None, "the reference flash did not converge")
        if iphase == _TWO_PHASE:
            return _mix.RouteAnswer("reference", 2)
        if not (math.isfinite(rho_back) and abs(rho_back - rho) <= ROUND_TRIP_RTOL * rho):
            # the stable state at this pressure is another one: this density is not a one-phase state
            return _mix.RouteAnswer("reference", 2, "another state is stable at this pressure")
        return _mix.RouteAnswer("reference", 1)

    # ---------------------------------------------------------------------------------------------
    # public scalar API
    @_holding_the_state
    def pressure(self, rho_molar: float, T: float) -> float:
        """Pressure [Pa] at molar density rho_molar [mol/m3] and temperature T [K].

        Pure fluid inside the saturation dome: the saturation pressure (a legitimate closed-tank state).
        """
        return self._evaluate(float(rho_molar), float(T))[0]

    @_holding_the_state
    def phase(self, rho_molar: float, T: float) -> str:
        """"gas" | "supercritical" | "two-phase" | "liquid" at rho_molar [mol/m3], T [K]."""
        return self._evaluate(float(rho_molar), float(T))[1]

    @_holding_the_state
    def dp_dt_at_constant_density(self, rho_molar: float, T: float) -> float:
        """(dP/dT) along the isochore [Pa/K]; in the pure-fluid dome this is dp_sat/dT."""
        _, phase = self._evaluate(float(rho_molar), float(T))
        a = self._state
        if phase == "two-phase":
            d = a.first_saturation_deriv(CoolProp.iP, CoolProp.iT)
        else:
            d = a.first_partial_deriv(CoolProp.iP, CoolProp.iT, CoolProp.iDmolar)
        if not math.isfinite(d):
            raise NotApplicable(MODEL, f"(dP/dT)_rho not finite for {self.label} at rho={rho_molar!r}, T={T!r}",
                                value=(rho_molar, T))
        return float(d)

    @_holding_the_state
    def density(self, p: float, T: float) -> float:
        """Molar density [mol/m3] at pressure p [Pa] and temperature T [K] (PT flash, checked).

        Pure fluid below Tc: liquid if p is above the vapour pressure, gas if below; refused at the
        vapour pressure itself (within a relative 1e-9).
        """
        p, T = float(p), float(T)
        if not self.is_mixture:
            return self._pure_density(p, T)[0]
        self._check_temperature(T)
        self._check_pressure(p)
        return self._mixture_density(p, T, self._evaluate)

    def _pure_density(self, p: float, T: float, ps: float | None = None) -> tuple[float, float, str]:
        """:meth:`density` of a pure fluid, with the pressure and phase of its check at (rho, T) (what
        :meth:`_evaluate` gives there); `ps`: the vapour pressure at T where the caller has it (what
        :meth:`vapour_pressure` gives). The caller holds the lock."""
        self._check_temperature(T)
        self._check_pressure(p)
        a = self._state
        imposed = None
        if T < self.critical_temperature:
            if ps is None:
                ps = self.vapour_pressure(T) if not self.is_pseudo_pure else None
            if ps is not None:
                if abs(p - ps) <= SATURATION_BAND * ps:
                    raise NotApplicable(MODEL, f"{self.label} at {T:.6g} K: p = {p:.6g} Pa is the vapour "
                                        "pressure; the density is not defined by (p, T) there",
                                        value=(p, T))
                imposed = CoolProp.iphase_liquid if p > ps else CoolProp.iphase_gas
        try:
            if imposed is not None:
                a.specify_phase(imposed)
            a.update(CoolProp.PT_INPUTS, p, T)
            rho = a.rhomolar()
        except ValueError as exc:
            raise NotApplicable(MODEL, f"CoolProp pressure-temperature flash failed for {self.label} at "
                                f"p={p:.6g} Pa, T={T:.6g} K: {exc}", value=(p, T)) from None
        finally:
            a.unspecify_phase()
        self._check_density(rho)
        # independent check of the root through the checked density-temperature path
        p_back, phase = self._evaluate(rho, T)
        if abs(p_back - p) > 1e-6 * p:
            raise NotApplicable(MODEL, f"{self.label}: PT flash at p={p:.6g} Pa, T={T:.6g} K gave "
                                f"{rho:.6g} mol/m3 which maps back to {p_back:.6g} Pa", value=(p, T))
        return float(rho), p_back, phase

    @_holding_the_state
    def densities(self, p: np.ndarray, T: np.ndarray, ps: np.ndarray) -> tuple[np.ndarray, ...]:
        """:meth:`density` of many rows of a pure fluid (1-D arrays of equal length), with the pressure [Pa] and
        phase that its check evaluates at (rho, T); `ps`: the vapour pressure [Pa] at T where the caller has it
        (NaN: not known, evaluated here as :meth:`density` does). Returns (densities [mol/m3], pressures, phases
        (an object array), valid); invalid rows carry NaN, NaN, None and False."""
        p_f, t_f, s_f = (np.asarray(v, dtype=float).tolist() for v in (p, T, ps))
        n = len(p_f)
        rho, p_back = np.full(n, np.nan), np.full(n, np.nan)
        phases = np.full(n, None, dtype=object)
        valid = np.zeros(n, dtype=bool)
        pure = self._pure_density
        # Fast path (as _evaluate_rows'), for states at or above the critical temperature, where _pure_density
        # needs no vapour pressure and imposes no phase, and below it where the caller gives the vapour pressure
        # and the state is off the saturation band: its CoolProp calls in its order (the phase imposed, the
        # flash, then the check at the density found), its checks as plain comparisons that accept exactly the
        # states it accepts, its phase words. A state failing any of them, or where CoolProp raises, goes through
        # _pure_density itself, which makes the same calls again and says why (tests/test_reference_rows.py).
        fast = self._rows_fast
        if fast:
            a = self._state
            update, get_rho, specify, unspecify, get_p, get_phase, dp_drho = (
                a.update, a.rhomolar, a.specify_phase, a.unspecify_phase, a.p, a.phase, a.first_partial_deriv)
            by_p_T, by_rho_T, two_phase, inf = CoolProp.PT_INPUTS, CoolProp.DmolarT_INPUTS, _TWO_PHASE, math.inf
            as_liquid, as_gas = CoolProp.iphase_liquid, CoolProp.iphase_gas
            iP, iT, iD = CoolProp.iP, CoolProp.iT, CoolProp.iDmolar
            t_min, t_max, p_max = self._rows_t_min, self.t_max, self.p_max
            t_c, rho_c, band = self.critical_temperature, self.critical_molar_density, SATURATION_BAND
        for i in range(n):
            pi, ti = p_f[i], t_f[i]
            # _check_temperature, _check_pressure (NaN fails every comparison)
            if fast and t_min <= ti <= t_max and 0.0 < pi <= p_max:
                word = None
                imposed = None
                if ti < t_c:        # a pseudo-pure fluid never comes here (t_min is its maxcondentherm)
                    ps = s_f[i]
                    # the vapour pressure as given (NaN: not known, asked by _pure_density), off its band
                    imposed = (as_liquid if pi > ps else as_gas) if 0.0 < ps < inf and abs(pi - ps) > band * ps \
                        else False
                if imposed is not False:
                    try:
                        if imposed is not None:
                            specify(imposed)
                        update(by_p_T, pi, ti)
                        r = get_rho()
                        unspecify()
                        if 0.0 < r < inf:                                   # _check_density
                            update(by_rho_T, r, ti)                         # _evaluate(r, T)
                            pb = get_p()
                            iphase = get_phase()
                            if 0.0 < pb <= p_max:                           # _check_pressure
                                if iphase == two_phase:
                                    word = "two-phase"
                                elif 0.0 < dp_drho(iP, iD, iT) < inf:       # _check_stable
                                    word = ("supercritical" if ti >= t_c else "liquid" if r > rho_c else "gas")
                    except ValueError:
                        word = None
                if word is not None and not abs(pb - pi) > 1e-6 * pi:  # the check maps back to p
                    rho[i], p_back[i], phases[i] = r, pb, word
                    valid[i] = True
                    continue
            try:
                rho[i], p_back[i], phases[i] = pure(pi, ti, s_f[i] if math.isfinite(s_f[i]) else None)
                valid[i] = True
            except NotApplicable:
                pass
        return rho, p_back, phases, valid

    def _mixture_density(self, p: float, T: float, evaluate) -> float:
        """A mixture's density [mol/m3] at (p [Pa], T [K]); ``evaluate(rho, T) -> (p, phase)`` re-checks the
        state found (:meth:`_evaluate`, or the homogeneous state alone for :meth:`homogeneous_density`)."""
        where = f"at {T - 273.15:.1f} °C and {p / 1e5:.4g} bar(a)"
        a = self._state
        # The homogeneous root at (p, T) with the phase imposed (no stability analysis: 0.1 ms instead of
        # 40-70 ms); whether it is the stable state is decided by both routes in the density-temperature path.
        rho = None
        for imposed in (CoolProp.iphase_supercritical_gas, CoolProp.iphase_gas, CoolProp.iphase_liquid):
            try:
                a.specify_phase(imposed)
                a.update(CoolProp.PT_INPUTS, p, T)
                rho = a.rhomolar()
            except ValueError:
                rho = None
            finally:
                a.unspecify_phase()
            if rho is not None and math.isfinite(rho) and rho > 0.0:
                break
        if rho is None or not (math.isfinite(rho) and rho > 0.0):
            # no root found that way: the cubic route's density as the starting point, checked
            # below on the reference equation's homogeneous state
            try:
                rho = self._density_from_cubic(p, T)
            except (ValueError, ArithmeticError):
                raise NotApplicable(MODEL, f"{_mix.CANNOT} {where}: neither the reference nor the cubic "
                                    "equation gives a density there", value=(p, T)) from None
        # the density-temperature path re-checks: stability, round trip and both phase routes
        p_back, _ = evaluate(rho, T)
        if abs(p_back - p) > ROUND_TRIP_RTOL * p:
            raise NotApplicable(MODEL, f"{_mix.CANNOT} {where}: the density found maps back to "
                                f"{p_back / 1e5:.6g} bar(a)", value=(p, T))
        return float(rho)

    # ---------------------------------------------------------------------------------------------
    # homogeneous states of a mixture, for root solving: the phase is established afterwards, at the root
    def _homogeneous_checked(self, rho: float, T: float) -> tuple[float, str]:
        """(p [Pa], "homogeneous") of a mixture at (rho, T): ranges and mechanical stability checked, the
        phase not established."""
        self._check_density(rho)
        self._check_temperature(T)
        p = self._homogeneous(rho, T)
        self._check_pressure(p)
        self._check_stable(rho, T)
        return p, "homogeneous"

    @_holding_the_state
    def establish_isochore(self, rho_molar: float, t_need: float) -> None:
        """Establish a mixture's isochore rho_molar [mol/m3] one-phase from ESTABLISH_BELOW_K under t_need [K],
        the lowest temperature a screening needs on it, for it and its neighbours within NEIGHBOUR_RTOL (see
        ``_isochore_from_below`` in screen.py); raises NotApplicable where that state is not one phase.

        Where a node (:func:`screening.physics.mixtures.node_density`) can stand for it, the node is flashed
        instead, deeper down (NODE_DEPTHS_K; first one of DEEP_NODE_DEPTHS_K where that lies above every component's
        critical temperature, deep_node_depth): one phase there by both routes (each answering) covers this
        isochore from ESTABLISH_BELOW_K under t_need on, and the isochores of later rows near it
        (:meth:`IsochoreMemo.record_node`), so that a batch of one composition flashes once per node rather
        than once per row. A node that is not found one phase
        (two phases, no state there, no answer) only costs its flash: the isochore itself is then flashed as
        without nodes, and no node of nearby densities is tried again at or below that temperature (of any
        density, after a node whose flashes were very slow)."""
        rho, t_need = float(rho_molar), float(t_need)
        if self._memo.covers(rho, t_need):    # established already (as the checks that follow will find)
            return
        region = _mix.node_region(rho)
        failed = max(self._node_failed.get(region, -math.inf), self._node_failed.get(None, -math.inf))
        left = _mix.checks_left()
        # a node may cost a flash more; not where the screening has used half of its phase checks
        depths = _mix.NODE_DEPTHS_K if left is None or left > _mix.CASE_CHECK_BOUND // 2 else ()
        deep = _mix.deep_node_depth(t_need, self.critical_temperature_max) if depths else None
        if deep is not None:    # above every component's critical temperature: a wider node first
            depths = (deep, *depths)
        for depth in depths:
            t_node = t_need - _mix.ESTABLISH_BELOW_K - depth
            if t_node <= failed or t_node < self.t_min:
                continue
            rho_node = _mix.node_density(rho, depth)
            started = time.thread_time()
            try:
                p_node = self._evaluate(rho_node, t_node)[0]
            except NotApplicable:
                failed = self._node_failed[region] = max(failed, t_node)
                continue
            settled = self._answers.get((rho_node, p_node, t_node))
            if (settled is None or not settled.single) and not self._memo.is_node(rho_node, t_node):
                # one phase by one route alone (the other did not answer), or carried over from another
                # isochore: a node stands for many rows' states, so it is made only of both routes' answer
                failed = self._node_failed[region] = max(failed, t_node)
                continue
            self._memo.record_node(rho_node, t_node)
            took = time.thread_time() - started
            if took > _mix.NODE_SLOW_S:
                # a node near the two-phase boundary, whose flashes are slow: none as deep again here, or
                # anywhere where they were very slow
                self._node_failed[region] = max(self._node_failed.get(region, -math.inf), t_node)
                if took > _mix.NODE_VERY_SLOW_S:
                    self._node_failed[None] = max(self._node_failed.get(None, -math.inf), t_node)
            return
        self._evaluate(rho, t_need - _mix.ESTABLISH_BELOW_K)

    def phase_established(self, rho_molar: float, T: float) -> bool:
        """Whether the state (rho_molar [mol/m3], T [K]) of a mixture is one phase by what this fluid has
        established already (its isochores, :class:`screening.physics.mixtures.IsochoreMemo`); no flash."""
        return self.is_mixture and self._memo.covers(float(rho_molar), float(T))

    @_holding_the_state
    def homogeneous_pressure(self, rho_molar: float, T: float) -> float:
        """Pressure [Pa] at rho_molar [mol/m3] and T [K] as :meth:`pressure`, but for a mixture *without*
        establishing its phase (ranges and (dP/drho)_T > 0 are checked): the same number :meth:`pressure`
        gives wherever that gives one, at no phase check's cost. For a pure fluid, :meth:`pressure` itself.

        For root solving only (the limits): the iterates of a solve are no state of any vessel, so their
        phase does not matter; the state kept (the root) must then be established by :meth:`pressure`,
        :meth:`density` or :meth:`phase`, which run both phase routes. Nothing else may use this number.
        """
        if not self.is_mixture:
            return self._evaluate(float(rho_molar), float(T))[0]
        return self._homogeneous_checked(float(rho_molar), float(T))[0]

    @_holding_the_state
    def homogeneous_density(self, p: float, T: float) -> float:
        """Molar density [mol/m3] at p [Pa] and T [K] as :meth:`density`, but for a mixture *without*
        establishing its phase (see :meth:`homogeneous_pressure`: for root solving only)."""
        p, T = float(p), float(T)
        if not self.is_mixture:
            return self.density(p, T)
        self._check_temperature(T)
        self._check_pressure(p)
        return self._mixture_density(p, T, self._homogeneous_checked)

    def _density_from_cubic(self, p: float, T: float) -> float:
        """Density [mol/m3] where the reference equation's homogeneous pressure is p [Pa] at T [K], started
        from the cubic route's density and solved by bounded Newton steps on the Helmholtz-energy state."""
        rho = _mix.cubic_density(self.cubic_components, self.fractions, p, T)
        a = self._state
        for _ in range(50):
            p_r = self._homogeneous(rho, T)
            d = a.first_partial_deriv(CoolProp.iP, CoolProp.iDmolar, CoolProp.iT)
            if not (math.isfinite(d) and d > 0.0):
                raise ValueError("no stable root")
            step = (p - p_r) / d
            rho_new = min(max(rho + step, 0.5 * rho), 2.0 * rho)
            if abs(rho_new - rho) <= 1e-12 * rho:
                return rho_new
            rho = rho_new
        if abs(self._homogeneous(rho, T) - p) <= ROUND_TRIP_RTOL * p:
            return rho
        raise ValueError("Newton iterations did not converge")

    # ---------------------------------------------------------------------------------------------
    # saturation (pure fluids)
    @_holding_the_state
    def _saturation(self, T: float, q: float) -> tuple[float, float]:
        self._require_pure("saturation")
        T = float(T)
        tt, tc = self.triple_temperature, self.critical_temperature
        if not math.isfinite(T) or T < tt or T >= tc:
            raise NotApplicable(MODEL, f"saturation of {self.label} asked at {T!r} K", value=T,
                                valid_range=f"{tt:g} K <= T < {tc:g} K (triple point to critical point)")
        a = self._state
        try:
            a.update(CoolProp.QT_INPUTS, q, T)
            p, rho = a.p(), a.rhomolar()
        except ValueError as exc:
            raise NotApplicable(MODEL, f"CoolProp saturation flash failed for {self.label} at {T:.6g} K: {exc}",
                                value=T) from None
        if not (math.isfinite(p) and math.isfinite(rho) and p > 0 and rho > 0):
            raise NotApplicable(MODEL, f"saturation of {self.label} at {T:.6g} K gave non-physical values",
                                value=(T, p, rho))
        return float(p), float(rho)

    @_holding_the_state
    def saturation_temperatures(self, p: np.ndarray) -> np.ndarray:
        """Saturation temperatures [K] of a pure fluid at pressures p [Pa] (CoolProp's pressure-quality flash);
        NaN where there is none (at or above the critical pressure, below the triple point, a failed flash).
        Unchecked: a starting point for solves that check their answer, never an answer itself."""
        self._require_pure("saturation")
        p_f = np.asarray(p, dtype=float).tolist()
        out = np.full(len(p_f), np.nan)
        a, pc = self._state, self.critical_pressure
        for i, pi in enumerate(p_f):
            if not (0.0 < pi < pc):
                continue
            try:
                a.update(CoolProp.PQ_INPUTS, pi, 0.0)
                out[i] = a.T()
            except ValueError:
                pass
        return out

    @_holding_the_state
    def saturation_states(self, T: np.ndarray, q: float) -> tuple[np.ndarray, np.ndarray]:
        """The vapour pressures [Pa] and the saturated-liquid (q = 0) or saturated-vapour (q = 1) molar densities
        [mol/m3] of many temperatures [K], each what :meth:`vapour_pressure` and :meth:`saturated_liquid_density`
        or :meth:`saturated_vapour_density` give (the same flash and checks, the lock held once); NaN in both
        where those raise NotApplicable."""
        self._require_pure("saturation")
        t_f = np.asarray(T, dtype=float).tolist()
        p_out, rho_out = np.full(len(t_f), np.nan), np.full(len(t_f), np.nan)
        tt, tc, a = self.triple_temperature, self.critical_temperature, self._state
        inf = math.inf
        for i, t in enumerate(t_f):
            if not tt <= t < tc:        # NaN fails the comparisons too
                continue
            try:
                a.update(CoolProp.QT_INPUTS, q, t)
                p, rho = a.p(), a.rhomolar()
            except ValueError:
                continue
            if 0.0 < p < inf and 0.0 < rho < inf:     # finite and positive (NaN fails)
                p_out[i], rho_out[i] = p, rho
        return p_out, rho_out

    def vapour_pressure(self, T: float) -> float:
        """Vapour pressure [Pa] at T [K], triple point ≤ T < Tc."""
        return self._saturation(T, 0.0)[0]

    def saturated_liquid_density(self, T: float) -> float:
        """Saturated-liquid molar density [mol/m3] at T [K], triple point ≤ T < Tc."""
        return self._saturation(T, 0.0)[1]

    def saturated_vapour_density(self, T: float) -> float:
        """Saturated-vapour molar density [mol/m3] at T [K], triple point ≤ T < Tc."""
        return self._saturation(T, 1.0)[1]

    # ---------------------------------------------------------------------------------------------
    @_holding_the_state
    def pressures(self, rho_molar: np.ndarray, T: np.ndarray, dome: bool | np.ndarray = False, why: bool = True
                  ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Vectorised :meth:`pressure` over rows (broadcast), looping the one cached AbstractState.

        Returns (pressures [Pa], valid mask [bool], reason [str, '' where valid]); invalid rows carry NaN,
        False and the reason in plain words. `dome`: the states (True: all; else a mask of the flattened states)
        that mostly lie inside the saturation dome (the same numbers; :meth:`_evaluate_rows`); `why` False: the
        reasons of refused states are not asked for (empty; the same pressures and valid flags).
        """
        rho_b, t_b = np.broadcast_arrays(np.asarray(rho_molar, dtype=float), np.asarray(T, dtype=float))
        shape = rho_b.shape
        # Python floats: cheaper per row
        if not isinstance(dome, bool):
            dome = np.broadcast_to(np.asarray(dome, dtype=bool), shape).ravel()
        p, _words, reasons, valid, _ = self._evaluate_rows(rho_b.ravel().tolist(), t_b.ravel().tolist(), dome=dome,
                                                           why=why)
        return (np.array(p, dtype=float).reshape(shape), np.frombuffer(valid, dtype=bool).reshape(shape),
                np.array(reasons, dtype=str).reshape(shape))


    @_holding_the_state
    def isochore_slopes(self, rho_molar: np.ndarray, T: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """:meth:`pressure` and :meth:`dp_dt_at_constant_density` of many rows of a pure fluid from one evaluation
        each (1-D arrays of equal length): the pressure [Pa] and its slope along the isochore [Pa/K] (in the dome
        dp_sat/dT). Rows that cannot be evaluated carry NaN in both."""
        p, _words, _reasons, _valid, d = self._evaluate_rows(np.asarray(rho_molar, dtype=float).tolist(),
                                                             np.asarray(T, dtype=float).tolist(), slopes=True)
        return np.array(p, dtype=float), np.array(d, dtype=float)

    @_holding_the_state
    def states(self, rho_molar: np.ndarray, T: np.ndarray, dome: bool | np.ndarray = False
               ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """:meth:`pressure` and :meth:`phase` of many rows in one evaluation each (1-D arrays of equal length).

        Returns (pressures [Pa], phases (object array of the words of :meth:`phase`), valid mask); invalid rows
        carry NaN, None and False. `dome`: the states (True: all; else a mask) that mostly lie inside the
        saturation dome (the same numbers; :meth:`_evaluate_rows`).
        """
        p, words, _reasons, valid, _ = self._evaluate_rows(np.asarray(rho_molar, dtype=float).tolist(),
                                                           np.asarray(T, dtype=float).tolist(), dome=dome)
        phases = np.empty(len(words), dtype=object)
        phases[:] = words
        return np.array(p, dtype=float), phases, np.frombuffer(valid, dtype=bool)


class LiquefiedBlend(ReferenceFluid):
    """A mixture of liquefiable gases filled by mass (propane/butane, refrigerant blends), whose closed vessel
    holds liquid and vapour.

    Inside the two-phase region the vessel's pressure lies between the dew and the bubble pressure of the
    overall composition at the temperature (zeotropic glide); it is taken as the bubble pressure, the upper
    end (conservative; exact for a vessel nearly full of liquid), the higher of the reference route
    (CoolProp's bubble-point flash on the multiparameter mixture model) and the cubic route (thermo's
    Peng–Robinson bubble point). The liquid-full temperature is where the bubble-point liquid density of
    the reference route falls to the fill density; above it the state is one liquid phase, checked like any
    mixture state. The cubic route's liquid density (no volume translation) is not used: it is several
    per cent low, which would move the liquid-full point by kelvins.
    """

    def _init_mixture(self) -> None:
        super()._init_mixture()
        self.mixing_rule += ("; two-phase states: the bubble pressure of the overall composition (upper end of "
                             "the glide), the higher of CoolProp's and the Peng–Robinson bubble points")

    def _evaluate_mixture(self, rho: float, T: float) -> tuple[float, str]:
        # two phases where the fill density lies between the dew-point vapour and the bubble-point liquid
        # densities of the overall composition at T
        try:
            p_bubble, rho_liquid, rho_vapour = self._saturation(T)
        except NotApplicable:
            p_bubble = None     # no bubble point (above the blend's critical region): one phase
        if p_bubble is not None and rho_vapour < rho < rho_liquid:
            return p_bubble, "two-phase"
        return super()._evaluate_mixture(rho, T)

    def _two_phase(self, rho: float, T: float, answer: _mix.PhaseAnswer, where: str) -> tuple[float, str]:
        raise NotApplicable(MODEL, f"{_mix.CANNOT} {where}: two phases were found outside the densities of the "
                            "blend's bubble and dew points", value=(rho, T))

    @_holding_the_state
    def _saturation(self, T: float) -> tuple[float, float, float]:
        """Bubble pressure [Pa] (higher of the two routes), bubble-point liquid and dew-point vapour molar
        densities [mol/m3] (reference route) at T [K]."""
        p, rho_liquid = self.bubble_point(T)
        a = self._state
        try:
            a.update(CoolProp.QT_INPUTS, 1.0, float(T))
            rho_vapour = float(a.rhomolar())
        except ValueError:
            raise NotApplicable(MODEL, f"{_mix.CANNOT} at {T - 273.15:.1f} °C: the dew point of the blend "
                                "was not found", value=T) from None
        return p, rho_liquid, rho_vapour

    @_holding_the_state
    def bubble_point(self, T: float) -> tuple[float, float]:
        """Bubble pressure [Pa] (the higher of the two routes) and the reference route's bubble-point liquid
        molar density [mol/m3] at T [K]. NotApplicable where the reference route finds none (above the
        mixture's critical region, or not converged)."""
        self._check_temperature(T)
        a = self._state
        try:
            a.update(CoolProp.QT_INPUTS, 0.0, float(T))
            p_ref, rho_liquid = float(a.p()), float(a.rhomolar())
        except ValueError:
            raise NotApplicable(MODEL, f"{_mix.CANNOT} at {T - 273.15:.1f} °C: the bubble point of the blend "
                                "was not found", value=T) from None
        if not (math.isfinite(p_ref) and p_ref > 0.0 and math.isfinite(rho_liquid) and rho_liquid > 0.0):
            raise NotApplicable(MODEL, f"{_mix.CANNOT} at {T - 273.15:.1f} °C: the bubble point of the blend "
                                "was not found", value=T)
        try:
            p_cubic, _ = _mix.cubic_bubble(self.cubic_components, self.fractions, T)
        except Exception:  # the cubic route did not converge: the reference route's answer stands
            p_cubic = float("nan")
        return (max(p_ref, p_cubic) if math.isfinite(p_cubic) else p_ref), rho_liquid

    def homogeneous_pressure(self, rho_molar: float, T: float) -> float:
        """:meth:`pressure` itself: a blend's two-phase states have their own pressure (the bubble point)."""
        return self.pressure(rho_molar, T)

    def homogeneous_density(self, p: float, T: float) -> float:
        """:meth:`density` itself (see :meth:`homogeneous_pressure`)."""
        return self.density(p, T)

    def vapour_pressure(self, T: float) -> float:
        """Bubble pressure [Pa] of the blend at T [K] (see :meth:`bubble_point`)."""
        return self.bubble_point(T)[0]

    @_holding_the_state
    def liquid_full_temperature(self, rho_molar: float, t_lo: float, t_hi: float, step: float = 2.0
                                ) -> float | None:
        """Temperature [K] in [t_lo, t_hi] where the bubble-point liquid density equals rho_molar [mol/m3]
        (the vessel fills with liquid), or None if it is not reached there. A scan in steps of ``step`` K
        (bounded: at most (t_hi - t_lo) / step + 1 bubble points), then Brent's method in the bracket."""
        rho = float(rho_molar)

        def f(T: float) -> float:
            return self.bubble_point(T)[1] - rho

        n = max(2, int(math.ceil((t_hi - t_lo) / step)) + 1)
        prev_t = None
        for T in np.linspace(t_lo, t_hi, n):
            try:
                fx = f(float(T))
            except NotApplicable:
                break               # past the blend's critical region: no bubble point beyond
            if fx <= 0.0:
                if prev_t is None:
                    return float(T)   # already liquid-full at t_lo
                return float(_brentq(f, prev_t, float(T), xtol=1e-6, maxiter=60))
            prev_t = float(T)
        return None


@lru_cache(maxsize=None)
def liquefied_blend(names: tuple[str, ...], fractions: tuple[float, ...]) -> LiquefiedBlend:
    """The cached :class:`LiquefiedBlend` for CoolProp fluid names and mole fractions (a mixture)."""
    return LiquefiedBlend(tuple(names), tuple(fractions))


@lru_cache(maxsize=None)
def reference_fluid(names: tuple[str, ...], fractions: tuple[float, ...]) -> ReferenceFluid:
    """The cached :class:`ReferenceFluid` for CoolProp fluid names and mole fractions.

    A pure fluid when ``len(names) == 1`` (fractions ``(1.0,)``). Raises NotApplicable for an unknown fluid
    or a mixture with a binary pair that CoolProp has no interaction parameters for.
    """
    return ReferenceFluid(tuple(names), tuple(fractions))
