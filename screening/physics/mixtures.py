"""Phase of a gas mixture at a state (pressure, temperature), by two independent routes, in bounded time.

A closed rigid vessel filled with a mixture may be screened with gas models only where the contents are
one phase at every state considered. Whether a state of known overall composition is one phase is a
stability question (Michelsen's tangent-plane-distance test); two routes answer it here:

* **reference route**: CoolProp's pressure–temperature flash on the multiparameter mixture model (GERG-type
  Helmholtz-energy mixture with the fitted binary departure functions), whose mixture PT flash runs a
  stability analysis before it accepts one phase. Its answer is a phase code and a density; the caller
  (:class:`screening.physics.eos.reference.ReferenceFluid`) checks that the density comes back.
* **cubic route**: ``thermo``'s vapour–liquid flash (``thermo.FlashVL``) with the Peng–Robinson equation
  of state (Peng & Robinson, Ind. Eng. Chem. Fundam. 15 (1976) 59–64, doi:10.1021/i160057a011), van der
  Waals one-fluid mixing rules with the ChemSep binary interaction parameters k_ij that ``thermo`` ships
  (``IPDB 'ChemSep PR'``; k_ij = 0 where a pair is not listed), and its stability test.

The two answers are combined conservatively (:func:`combine`): a state is single-phase only if no route
finds two phases; a state that neither route can establish is refused with the plain reason "the phase
cannot be established". Where only one route answers, its answer is used and the other route's failure is
noted.

**Time bound.** Every state check has a budget of :data:`PHASE_TIME_BOUND` seconds, and all the checks of
one screening together :data:`CASE_TIME_BOUND` seconds (:func:`case_budget`), checked between the steps
(each route, each flash); a check that runs over is abandoned and the phase is "cannot be established". No step that can run unbounded is called: CoolProp's phase-envelope construction is not
used at all (in CoolProp 8.0.0 it did not finish within 900 s for argon 70 % + helium 30 %, and for argon
+ 8 % CO2 it returned a maximum envelope temperature of 20 738 K), nor its critical-point search. A single CoolProp or thermo flash took at most about 0.05 s in the mixtures of the
trade (measured on this project's machine, 2026-12-03).

**Along an isochore.** At fixed overall composition and fixed density the two-phase region lies below a
boundary temperature (the envelope in the temperature–density plane): a state found one-phase at T on an
isochore is one-phase at every higher temperature on the same isochore. This is the reading used to carry
an established state up the isochore without new flashes (:class:`IsochoreMemo`), and, with a bound on the
slope of that boundary, over to nearby isochores from a few shared nodes (:meth:`IsochoreMemo.record_node`).

Units: SI — pressure [Pa], temperature [K], molar density [mol/m3].
"""

from __future__ import annotations

import bisect
import contextlib
import contextvars
import math
import threading
import time
from dataclasses import dataclass, field
from functools import lru_cache

#: Wall-clock budget [s] of one state's phase check (both routes together; a single flash of a
#: five-component natural gas takes up to about 1 s on a loaded two-core machine).
PHASE_TIME_BOUND = 5.0

#: The phase words a state check returns.
SINGLE_PHASES = ("gas", "supercritical", "liquid")

CANNOT = "the phase cannot be established"


@dataclass(frozen=True)
class RouteAnswer:
    """One route's answer at one state: ``phases`` 1 or 2, or None with ``failure`` in plain words."""

    route: str
    phases: int | None
    failure: str = ""


@dataclass(frozen=True)
class PhaseAnswer:
    """The combined answer: ``single`` True (one phase), False (two phases), None (cannot be established)."""

    single: bool | None
    routes: tuple[RouteAnswer, ...] = field(default_factory=tuple)
    reason: str = ""


#: Most phase checks (states flashed) one screening may run: a deterministic bound, so that the same case
#: gives the same result on a fast or a loaded machine (a screening of the trade's mixtures needs 35-75).
CASE_CHECK_BOUND = 200

#: Wall-clock budget [s] of all the phase checks of one screening together: a last-resort net
#: (see :func:`case_budget`); the count above is what normally bounds a screening.
CASE_TIME_BOUND = 60.0

_CASE_DEADLINE: contextvars.ContextVar[list | None] = contextvars.ContextVar(
    "screening_phase_case_deadline", default=None)


@contextlib.contextmanager
def case_budget(seconds: float | None = None, checks: int | None = None):
    """Within the block, every phase check also stops at a common deadline ``seconds`` from now (default
    :data:`CASE_TIME_BOUND`), and at most ``checks`` states are flashed (default :data:`CASE_CHECK_BOUND`):
    one screening's phase checks together, per thread and per task (a context variable)."""
    seconds = CASE_TIME_BOUND if seconds is None else float(seconds)
    checks = CASE_CHECK_BOUND if checks is None else int(checks)
    token = _CASE_DEADLINE.set([time.monotonic() + seconds, seconds, checks])
    try:
        yield
    finally:
        _CASE_DEADLINE.reset(token)


def take_check() -> str | None:
    """Count one phase check against the enclosing :func:`case_budget`; the reason (plain words) when the
    screening has used all its checks, else None."""
    case = _CASE_DEADLINE.get()
    if case is None:
        return None
    if case[2] <= 0:
        return f"{CANNOT}: this screening needed more than its {CASE_CHECK_BOUND} phase checks"
    case[2] -= 1
    return None


def checks_left() -> int | None:
    """Phase checks the enclosing :func:`case_budget` has left (None outside one)."""
    case = _CASE_DEADLINE.get()
    return None if case is None else int(case[2])


class Budget:
    """A wall-clock deadline checked between steps (``time.monotonic``): ``seconds`` from now, or the
    deadline of the enclosing :func:`case_budget`, whichever comes first."""

    def __init__(self, seconds: float = PHASE_TIME_BOUND) -> None:
        self.seconds = float(seconds)
        self.deadline = time.monotonic() + self.seconds
        self.scope = "the phase check"
        case = _CASE_DEADLINE.get()
        if case is not None and case[0] < self.deadline:
            self.deadline, self.seconds = case[0], case[1]
            self.scope = "the phase checks of this screening"

    def left(self) -> float:
        return self.deadline - time.monotonic()

    def expired(self) -> bool:
        return time.monotonic() > self.deadline


def combine(answers: list[RouteAnswer], budget: Budget | None = None) -> PhaseAnswer:
    """Keep the conservative answer of the routes.

    Two phases from any route → two-phase. Otherwise, a check that ran over its time budget → the phase
    cannot be established. One phase from at least one route (and two from none) → one phase. No route
    answered → the phase cannot be established (one plain reason).
    """
    routes = tuple(answers)
    if any(a.phases == 2 for a in routes):
        who = ", ".join(a.route for a in routes if a.phases == 2)
        return PhaseAnswer(False, routes, f"two phases (found by the {who} route)")
    if budget is not None and budget.expired():
        return PhaseAnswer(None, routes, f"{CANNOT}: {budget.scope} did not finish within {budget.seconds:g} s")
    if any(a.phases == 1 for a in routes):
        failed = [a for a in routes if a.phases is None]
        note = ("; ".join(f"the {a.route} route did not answer ({a.failure})" for a in failed)) if failed else ""
        return PhaseAnswer(True, routes, note)
    why = "; ".join(f"{a.route}: {a.failure}" for a in routes if a.failure)
    return PhaseAnswer(None, routes, f"{CANNOT} (neither route converged: {why})" if why else CANNOT)


# --------------------------------------------------------------------------------------------------
# cubic route (thermo, Peng–Robinson)

#: Mixing rule of the cubic route, as stated in results.
CUBIC_MIXING_RULE = ("Peng–Robinson with van der Waals one-fluid mixing (a: sqrt(a_i a_j)(1 - k_ij), "
                     "b: mole-fraction average), k_ij from the ChemSep table shipped with thermo, 0 where "
                     "a pair is not listed")

_CUBIC_LOCK = threading.Lock()


@dataclass(frozen=True)
class CubicComponent:
    """Constants of one component for the cubic route: CAS, Tc [K], Pc [Pa], acentric factor [-],
    molar mass [kg/mol]."""

    cas: str
    tc: float
    pc: float
    omega: float
    molar_mass: float


@lru_cache(maxsize=64)
def _cubic_flasher(components: tuple[CubicComponent, ...]):
    """thermo FlashVL with Peng–Robinson gas and liquid phases (cached per set of components)."""
    from thermo import PRMIX, CEOSGas, CEOSLiquid, ChemicalConstantsPackage, FlashVL, HeatCapacityGas
    from thermo.interaction_parameters import IPDB
    n = len(components)
    cas = [c.cas for c in components]
    tcs = [c.tc for c in components]
    pcs = [c.pc for c in components]
    omegas = [c.omega for c in components]
    constants = ChemicalConstantsPackage(Tcs=tcs, Pcs=pcs, omegas=omegas,
                                         MWs=[c.molar_mass * 1000.0 for c in components], CASs=cas)
    try:
        kijs = IPDB.get_ip_asymmetric_matrix("ChemSep PR", cas, "kij")
    except Exception:  # a lookup failure of the table: no listed k_ij, so 0
        kijs = [[0.0] * n for _ in range(n)]
    kw = dict(Tcs=tcs, Pcs=pcs, omegas=omegas, kijs=kijs)
    # The TP flash and its stability test need no heat capacity; thermo's phases want one, so a constant
    # 29.1 J/(mol K) stands in (it does not enter pressure, volume or phase equilibrium).
    cp = [HeatCapacityGas(poly_fit=(1.0, 10000.0, [0.0] * 8 + [29.1])) for _ in range(n)]
    gas = CEOSGas(PRMIX, eos_kwargs=kw, HeatCapacityGases=cp)
    liquid = CEOSLiquid(PRMIX, eos_kwargs=kw, HeatCapacityGases=cp)
    return FlashVL(constants, None, liquid=liquid, gas=gas), kijs


def cubic_kij(components: tuple[CubicComponent, ...]) -> list[list[float]]:
    """The k_ij matrix the cubic route uses (ChemSep, 0 where not listed)."""
    return _cubic_flasher(tuple(components))[1]


def cubic_route(components: tuple[CubicComponent, ...], fractions: tuple[float, ...], p: float, T: float,
                budget: Budget | None = None) -> RouteAnswer:
    """Number of phases at (p [Pa], T [K]) by thermo's Peng–Robinson flash with its stability test."""
    if budget is not None and budget.expired():
        return RouteAnswer("cubic", None, "no time left")
    try:
        flasher = _cubic_flasher(tuple(components))[0]
        with _CUBIC_LOCK:  # thermo's flasher keeps no state we rely on, but is not documented thread-safe
            res = flasher.flash(T=float(T), P=float(p), zs=list(fractions))
        count = int(res.phase_count)
    except Exception as exc:  # any failure of the library is "did not answer"
        return RouteAnswer("cubic", None, f"Peng–Robinson flash did not converge ({type(exc).__name__})")
    if count not in (1, 2):
        return RouteAnswer("cubic", None, f"Peng–Robinson flash gave {count} phases")
    return RouteAnswer("cubic", count)


def cubic_density(components: tuple[CubicComponent, ...], fractions: tuple[float, ...], p: float,
                  T: float) -> float:
    """Molar density [mol/m3] of the stable single phase at (p, T) by the cubic route (ValueError if two)."""
    flasher = _cubic_flasher(tuple(components))[0]
    with _CUBIC_LOCK:
        res = flasher.flash(T=float(T), P=float(p), zs=list(fractions))
    if res.phase_count != 1:
        raise ValueError("two phases")
    return 1.0 / float(res.V())


def cubic_bubble(components: tuple[CubicComponent, ...], fractions: tuple[float, ...], T: float
                 ) -> tuple[float, float]:
    """Bubble pressure [Pa] and saturated-liquid molar density [mol/m3] at T [K] by the cubic route."""
    flasher = _cubic_flasher(tuple(components))[0]
    with _CUBIC_LOCK:
        res = flasher.flash(T=float(T), VF=0.0, zs=list(fractions))
    liquid = res.liquid0 if res.liquid0 is not None else res
    return float(res.P), 1.0 / float(liquid.V())


# --------------------------------------------------------------------------------------------------
# labels and the isochore memo

def single_phase_label(T: float, rho: float, t_pseudo: float, rho_pseudo: float) -> str:
    """Name of a one-phase mixture state: 'supercritical' above the pseudo-critical temperature (Kay's
    rule), else 'liquid' above the pseudo-critical density and 'gas' below it.

    Reading chosen here: the mixture's true critical point is not computed (CoolProp's critical-point
    search is neither bounded in time nor always unique); Kay's pseudo-critical values name the state.
    A 'liquid' name only withdraws the gas models, so the reading errs on the safe side.
    """
    if T > t_pseudo:
        return "supercritical"
    return "liquid" if rho > rho_pseudo else "gas"


#: A neighbouring isochore [-, relative density] and the margin [K] above its established temperature within
#: which :class:`IsochoreMemo` carries an established state over to it (see there).
NEIGHBOUR_RTOL = 1e-4
NEIGHBOUR_MARGIN_K = 1.0
#: How far [K] below the lowest temperature it needs a screening establishes an isochore (fill, limits), so
#: that it covers its neighbours' states down to 1 K below that temperature too (the small steps of the
#: tolerance sensitivities, a limit solved in other variables on the same isochore).
ESTABLISH_BELOW_K = 2.0 * NEIGHBOUR_MARGIN_K

#: Slope [K per unit of ln(rho)] with which an established node covers other isochores
#: (:meth:`IsochoreMemo.record_node`): the bound |dT_b/d ln rho| <= 800 K argued in :class:`IsochoreMemo`,
#: with a factor 1.5 to spare.
NODE_SLOPE_K = 1200.0
#: How far [K] below the temperature a screening needs on an isochore (less ESTABLISH_BELOW_K) a node is
#: established instead of the isochore itself, deepest first (:func:`node_density`): a deeper node covers a
#: wider band of densities, so that the isochores of later rows of the same composition need no flash.
NODE_DEPTHS_K = (40.0, 20.0)
#: Deeper nodes [K], one of which is tried first, before NODE_DEPTHS_K: the deepest that lies above the critical
#: temperature of every component of the mixture (:func:`deep_node_depth`). There the flashes are fast (far from
#: any two-phase region of the trade's permanent-gas mixtures: 3-7 ms for air) and a node covers a band of
#: densities two to three times as wide as at 40 K, so that the sparse rows of one composition in a mixed
#: inventory share more nodes. Below it (argon + CO2, natural gas) a deep node lands near the two-phase
#: boundary, where a CoolProp flash takes 0.1-0.7 s: not tried there. A choice of what to flash, never an
#: answer (the node is established by both routes and covers only what :meth:`IsochoreMemo.record_node` allows).
DEEP_NODE_DEPTHS_K = (120.0, 80.0)


def deep_node_depth(t_need: float, t_critical_max: float) -> float | None:
    """The deepest of DEEP_NODE_DEPTHS_K whose node for a need at t_need [K] (ESTABLISH_BELOW_K and the depth
    further down) lies above t_critical_max [K], the highest critical temperature of the mixture's components;
    None where none does."""
    return next((d for d in DEEP_NODE_DEPTHS_K if t_need - ESTABLISH_BELOW_K - d > t_critical_max), None)


def node_spacing(depth: float) -> float:
    """Spacing in ln(rho) of the nodes established ``depth`` [K] below a need: the widest with which the node
    nearest any density covers that density and its neighbours within NEIGHBOUR_RTOL from the need's
    temperature less ESTABLISH_BELOW_K on (what establishing the isochore itself there covers)."""
    return 2.0 * ((depth - NEIGHBOUR_MARGIN_K) / NODE_SLOPE_K - 1.0001 * NEIGHBOUR_RTOL)


#: Width in ln(rho) of the regions of density within which a node that was not found one phase stops
#: other nodes from being tried at or below its temperature (a choice of what to flash, never an answer).
NODE_REGION = 0.25


#: CPU time [s] of a node's flashes above which no node of its region is tried at or below its temperature
#: again, and above which no node of any region is (the flashes near the two-phase boundary are the slow
#: ones: 0.3-0.7 s for argon + 18 % CO2 at 215-245 K, against 15-40 ms away from it, and 40-100 ms for a
#: natural gas). A choice of what to flash, never an answer.
NODE_SLOW_S = 0.08
NODE_VERY_SLOW_S = 0.25


def node_region(rho: float) -> int:
    """The region (an integer) of the density rho [mol/m3] (see NODE_REGION)."""
    return math.floor(math.log(rho) / NODE_REGION)


def node_density(rho: float, depth: float) -> float:
    """The node density [mol/m3] nearest rho [mol/m3] on the grid of :func:`node_spacing` (depth [K]): a fixed
    grid, exp(k * spacing) for integer k, the same in every process."""
    step = node_spacing(depth)
    return math.exp(round(math.log(rho) / step) * step)


class IsochoreMemo:
    """Lowest temperature [K] established one-phase on each isochore (keyed by the exact density), so a
    state higher up the same isochore needs no new flash (see the module doc). Thread-safe; bounded size.

    A neighbouring isochore is covered too: a state (rho, T) with an isochore rho' established one-phase from
    t0, |rho - rho'| <= NEIGHBOUR_RTOL rho' and T >= t0 + NEIGHBOUR_MARGIN_K. Argument: the boundary of the
    two-phase region in the temperature-density plane, T_b(rho), is continuous, with a slope |dT_b/d ln rho|
    of tens of kelvins on the dew side (about R T^2 / (heat of vaporisation)) and about 1/alpha on the bubble
    side, alpha the saturated liquid's thermal expansion; alpha is at least 1.27e-3 /K for every liquefiable
    gas of the library between its triple and critical points (n-butane at its triple point is the lowest;
    CoolProp's reference equations, isobaric expansion coefficient of the saturated liquid, 200 temperatures
    each), so |dT_b/d ln rho| <= 800 K and T_b(rho) <= t0 + 800 K x 1e-4 = t0 + 0.08 K, under the 1 K
    margin with a factor over 10 to spare (a mixture's liquid expands about as its components do). It
    carries an established state over to the sensitivity steps of the input tolerances (fill pressure and
    temperature moved by 1e-5 and 0.05 K) and from one limit solve to another of the same isochore solved
    in other variables (the fill pressure and the fill density that reach the same peak)."""

    def __init__(self, size: int = 4096) -> None:
        self._lock = threading.Lock()
        self._t: dict[float, float] = {}
        self._near: dict[int, list[float]] = {}   # densities by ln(rho) / NEIGHBOUR_RTOL, rounded down
        self._size = size
        self._node_ln: list[float] = []     # ln(rho) of the nodes (see record_node), ascending
        self._node_t: list[float] = []      # the lowest temperature [K] each node is established from
        self._node_t_min = math.inf

    @staticmethod
    def _bucket(rho: float) -> int:
        return math.floor(math.log(rho) / NEIGHBOUR_RTOL)

    def covers(self, rho: float, T: float) -> bool:
        with self._lock:
            t0 = self._t.get(rho)
            if t0 is not None and T >= t0:
                return True
            if not (rho > 0.0 and math.isfinite(rho)):
                return False
            b = self._bucket(rho)
            for k in (b - 1, b, b + 1):
                for r in self._near.get(k, ()):
                    if abs(rho - r) <= NEIGHBOUR_RTOL * r and T >= self._t[r] + NEIGHBOUR_MARGIN_K:
                        return True
            return self._node_covers(math.log(rho), T)

    def _node_covers(self, ln_rho: float, T: float) -> bool:
        """Whether a node covers (rho, T): T >= t_node + NODE_SLOPE_K |ln(rho / rho_node)| + NEIGHBOUR_MARGIN_K
        (see :meth:`record_node`). Nodes are searched outwards from ln(rho) only as far as any could reach."""
        reach = (T - NEIGHBOUR_MARGIN_K - self._node_t_min) / NODE_SLOPE_K
        if not self._node_ln or reach < 0.0:
            return False
        lns, ts = self._node_ln, self._node_t
        i = bisect.bisect_left(lns, ln_rho)
        j = i - 1
        while i < len(lns) and lns[i] - ln_rho <= reach:
            if T >= ts[i] + NODE_SLOPE_K * (lns[i] - ln_rho) + NEIGHBOUR_MARGIN_K:
                return True
            i += 1
        while j >= 0 and ln_rho - lns[j] <= reach:
            if T >= ts[j] + NODE_SLOPE_K * (ln_rho - lns[j]) + NEIGHBOUR_MARGIN_K:
                return True
            j -= 1
        return False

    def is_node(self, rho: float, T: float) -> bool:
        """Whether rho [mol/m3] is a node established one-phase from T [K] or lower."""
        ln = math.log(rho)
        with self._lock:
            i = bisect.bisect_left(self._node_ln, ln)
            return i < len(self._node_ln) and self._node_ln[i] == ln and self._node_t[i] <= T

    def record_node(self, rho: float, T: float) -> None:
        """Record the isochore rho [mol/m3] established one-phase from T [K] as a node: it then covers every
        state (rho', T') with T' >= T + NODE_SLOPE_K |ln(rho'/rho)| + NEIGHBOUR_MARGIN_K, by the bound on the
        two-phase boundary's slope argued in the class doc (|dT_b/d ln rho| <= 800 K; NODE_SLOPE_K takes it
        with a factor 1.5 to spare): T_b(rho') <= T_b(rho) + 800 K |ln(rho'/rho)| <= T + 800 K |ln(rho'/rho)|.
        Measured across whole envelopes, the slope is far below that: T_b(rho) found by bisection on CoolProp's
        density-temperature flash (with its stability analysis) on isochores 0.13-0.3 apart in ln(rho), from
        dilute gas to dense liquid, changes by at most 66 K per unit of ln(rho) for argon + 18 % CO2 (300 to
        24 000 mol/m3), 122 K for methane 90 % + ethane 6 % + nitrogen 4 % (300 to 28 000) and 114 K for
        nitrogen 79 % + oxygen 21 % (300 to 30 000) (CoolProp 8.0.0, 2026-12-03). That flash alone is not
        always right near the dense side of the boundary (argon + 18 % CO2 at 15 800 mol/m3: one phase at 200 K
        under two phases at 201.7 K); there the cubic route finds two phases, and the combined answer keeps them.
        Nodes sit on fixed densities (:func:`node_density`), so there are few of them: at most ``size``."""
        ln = math.log(rho)
        with self._lock:
            i = bisect.bisect_left(self._node_ln, ln)
            if i < len(self._node_ln) and self._node_ln[i] == ln:
                self._node_t[i] = min(self._node_t[i], T)
            elif len(self._node_ln) < self._size:
                self._node_ln.insert(i, ln)
                self._node_t.insert(i, T)
            else:
                return
            self._node_t_min = min(self._node_t_min, T)

    def record(self, rho: float, T: float) -> None:
        with self._lock:
            t0 = self._t.get(rho)
            if t0 is None and len(self._t) >= self._size:
                old = next(iter(self._t))
                self._t.pop(old)
                near = self._near[self._bucket(old)]
                near.remove(old)
                if not near:
                    del self._near[self._bucket(old)]
            if t0 is None:
                self._near.setdefault(self._bucket(rho), []).append(rho)
            if t0 is None or T < t0:
                self._t[rho] = T


# --------------------------------------------------------------------------------------------------
# the mixtures of the trade and the models that apply to them (listed by `screening gases`)

#: Mixtures of the trade: a label and the library names of their components.
TRADE_MIXTURES = (
    ("argon + carbon dioxide (shielding gas, 1-30 % CO2)", ("argon", "carbon dioxide")),
    ("argon + oxygen (shielding gas, 1-8 % O2)", ("argon", "oxygen")),
    ("argon + helium (10-75 % He)", ("argon", "helium")),
    ("helium + oxygen (heliox, 10-80 % O2)", ("helium", "oxygen")),
    ("nitrogen + oxygen (synthetic and enriched air)", ("nitrogen", "oxygen")),
    ("nitrogen + hydrogen (forming gas, 1-10 % H2)", ("nitrogen", "hydrogen")),
    ("carbon dioxide + nitrogen (beverage gas)", ("carbon dioxide", "nitrogen")),
    ("natural gas (methane, ethane, propane, nitrogen, CO2)",
     ("methane", "ethane", "propane", "nitrogen", "carbon dioxide")),
    ("propane + butanes (LPG, by mass)", ("propane", "n-butane", "isobutane")),
    ("R-410A (R-32 + R-125)", ("R-32", "R-125")),
    ("R-407C (R-32 + R-125 + R-134a)", ("R-32", "R-125", "R-134a")),
    ("R-404A (R-125 + R-143a + R-134a)", ("R-125", "R-143a", "R-134a")),
    ("calibration: carbon monoxide in nitrogen", ("nitrogen", "carbon monoxide")),
    ("calibration: hydrogen sulfide in nitrogen", ("nitrogen", "hydrogen sulfide")),
    ("calibration: methane in synthetic air", ("nitrogen", "oxygen", "methane")),
    ("calibration: sulfur dioxide in nitrogen", ("nitrogen", "sulfur dioxide")),
)


def trade_mixture_models() -> list[dict]:
    """For each of :data:`TRADE_MIXTURES`: ``label``, ``reference`` (True where CoolProp has fitted
    binary parameters for every pair), ``pairs`` [(a, b, source key or None)], ``models`` (text)."""
    from screening.physics.eos.reference import pair_source
    from screening.physics.gases import lookup

    rows = []
    for label, names in TRADE_MIXTURES:
        gases = [lookup(n) for n in names]
        pairs = []
        for i in range(len(gases)):
            for j in range(i + 1, len(gases)):
                pairs.append((gases[i].name, gases[j].name,
                              pair_source(gases[i].coolprop_name, gases[j].coolprop_name)))
        fitted = all(k is not None for _, _, k in pairs)
        liquefied = all(g.kind == "liquefiable" for g in gases)
        models = ["reference (multi-fluid Helmholtz mixing with fitted pairs)" if fitted else
                  "no reference model (no fitted parameters for "
                  + ", ".join(f"{a}/{b}" for a, b, k in pairs if k is None) + ")"]
        if liquefied:
            models.append("liquid and two-phase fills: bubble pressure and liquid-full point")
        elif fitted:
            models.append("generalized (Lee–Kesler, Kay's rule); ideal gas for comparison")
        else:
            models.append("the phase is taken as gas only above every component's critical temperature, "
                          "then generalized (Lee–Kesler, Kay's rule) and ideal gas")
        rows.append({"label": label, "reference": fitted, "pairs": pairs, "models": "; ".join(models)})
    return rows


def cubic_phase_on_isochore(components: tuple[CubicComponent, ...], fractions: tuple[float, ...],
                            t_low: float, *, p: float | None = None, t_p: float | None = None,
                            rho: float | None = None, budget: Budget | None = None) -> PhaseAnswer:
    """Whether a fill is one phase from ``t_low`` [K] upwards on its isochore, by the cubic route alone
    (for mixtures without a reference model). The fill is given by its pressure ``p`` [Pa] at ``t_p`` [K]
    (its density then from the Peng–Robinson flash there) or by its molar density ``rho`` [mol/m3].
    The state at t_low on the isochore is flashed; one phase there means one phase above it (module doc)."""
    from thermo import PRMIX

    budget = budget or Budget()
    flasher, kijs = _cubic_flasher(tuple(components))
    z = list(fractions)
    try:
        if rho is None:
            first = cubic_route(components, fractions, p, t_p, budget)
            if first.phases != 1:
                return combine([first], budget)
            rho = cubic_density(components, fractions, p, t_p)
        eos = PRMIX(Tcs=[c.tc for c in components], Pcs=[c.pc for c in components],
                    omegas=[c.omega for c in components], kijs=kijs, zs=z, T=float(t_low), V=1.0 / float(rho))
        p_low = float(eos.P)
    except Exception as exc:  # any failure of the library is "did not answer"
        return combine([RouteAnswer("cubic", None, f"Peng–Robinson state not found ({type(exc).__name__})")], budget)
    if not (math.isfinite(p_low) and p_low > 0.0):
        return combine([RouteAnswer("cubic", 2, "no positive pressure on the isochore")], budget)
    return combine([cubic_route(components, fractions, p_low, t_low, budget)], budget)
