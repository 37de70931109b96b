"""The screening engine: a table of cases in, one typed Result per case out (:func:`screen_cases`). One vessel is
a table of one row (:func:`screen_case`); the batch, the terminal summary, JSON, CSV, both PDFs, `verify` and the
web page all consume its Result. Plot data are added by :func:`with_plot_data` (screen.plot_data) for the views
that draw them.

Rows are grouped by gas. For a pure permanent gas filled by pressure (or hydrogen, helium, neon or air filled by
mass: the fill density given, each model's fill pressure at it, no fill-pressure limit), with one exposure (in the
sun or not) and no tolerances, both temperatures above the critical temperature (the "vectorised path"):

* a row in the sun gets its worst case from :func:`screening.screen.worst_case_temperature` (the energy
  balance, :func:`screening.screen.sun_balance`, solved once per distinct exposure among the rows screened
  together), with its basis, balance and warnings; the rest of the row runs on the arrays (an inventory's
  plain rows in the sun too, :func:`_plain_sun_rows`);

* the ideal and generalized models run as numpy arrays over every row of the group (no Python loop
  per row; the Lee–Kesler functions of :mod:`screening.physics.eos.generalized` are array functions);
* the reference model uses one cached :class:`ReferenceFluid` per fluid, reused across rows (its
  ``pressures()`` loop, and ``density()`` for the fill state);
* the limits are solved without the per-row scalar scan: on the generalized model by inverting the
  isochore at the target pressure (a vectorised secant on T, and density-at-pressure for the fill
  limit), on the reference model by a bracketed solve (Illinois) through ``pressures()`` inside the
  equation's range, with screen._root's scan where the range ends inside its bracket, and only where the
  reference limit can be the lower one;
* the dry-out temperature (where the isochore meets the saturation dome) by a per-fluid table of the
  saturated-vapour density and a few secant steps;
* verdicts through :func:`screening.screen.decide`, the one place that decides a verdict;
* rows with input tolerances or several exposure scenarios (each in the sun or not): every scenario is a
  row of the table and every state of the tolerance analysis (the nominal state, the central differences of
  the sensitivities, the corners) an extra row whose models alone are computed; the steps are
  :func:`screening.screen.tolerance_steps`, driven for many vessels at once, and the scenarios are folded by
  :func:`screening.screen.fold_scenarios`, as the single screening does (:func:`_screen_expanded`).

A pure liquefied gas (carbon dioxide, propane, ammonia, the refrigerants: a pure fluid with a saturation dome)
filled by mass or by pressure, or a pure permanent gas with a dome and fixed critical constants filled by mass
(:func:`_mass_fill_gas`), at a stated fill temperature, with one exposure and no tolerances, runs on
:func:`_liquefied_columns`: the saturation and critical bands (such rows are refused as the single screening
refuses them), the fill density and the phases at fill and at the worst case on the reference equation, the
dome crossings, the liquid-full rule, the ideal and generalized models where the contents are a gas at both,
and the limits, each root as screen._root finds it; the verdict through the same rules of screen.py
(:func:`_liquefied_verdict`). Such rows with several scenarios, and those filled by mass with input tolerances,
run on the same columns with every scenario and every state of the tolerance analysis a row of a table
(:func:`_screen_liquefied_scenarios`).

Everything else takes the state-by-state route, :func:`screening.screen.screen_states`, one row at a time, on purpose: dissolved gases
and mixtures (their phase is checked per row by two routes, see physics.mixtures),
fills of a permanent gas near its critical temperature, liquefied gases filled by pressure with tolerances (the
tolerances widen their saturation and critical bands), a permanent-gas row any of whose scenario or tolerance states falls outside this path, and any row where a
vectorised step is not sure of itself (a root next to the edge of a model's range, a solve that did not
settle, a state the reference equation refuses). Both routes give the same result: the
same keys, and numbers that agree to the solve tolerance (about 1e-9 relative; the state-by-state route stops its
limit solves there). ``curves`` and ``phase_diagram`` are None until :func:`with_plot_data` adds them.
"""

from __future__ import annotations

import functools
import math
import threading
from dataclasses import dataclass, replace
from typing import Callable, Iterable

import numpy as np
import orjson

from screening import screen as _screen
from screening.constants import R
from screening.errors import InputError, NotApplicable
from screening.inputs.case import Case, load_case, parse_case_text
from screening.inputs.columns import CaseRow, PlainRows
from screening.physics.eos.generalized import (
    GENERALIZED_FIELDS,
    LK_REDUCED_PRESSURE_RANGE,
    LK_REDUCED_TEMPERATURE_RANGE,
    SRK_QUANTUM_TEMPERATURE_RANGE,
    GeneralizedState,
    lee_kesler_density,
    lee_kesler_density_valid,
    lee_kesler_pressure,
    lee_kesler_pressure_valid,
    lee_kesler_vapour_pressure,
    pseudocritical,
    srk_quantum_density,
    srk_quantum_pressure,
)
from screening.physics.eos.reference import ReferenceFluid, reference_fluid
from screening.physics.gases import Mixture
from screening.physics.isochore import LIQUID_FULL_STEP
from screening.result import (
    Curves,
    Fill,
    Limits,
    PhaseDiagram,
    Result,
    ResultData,
    json_record,
    summary_record,
)

#: Number of scan points screen._limits uses (kept equal so the bracket checks agree).
_SCAN_N = 40
#: Relative step at which the vectorised secant solves stop.
_SECANT_RTOL = 1e-13
_SECANT_MAX = 30
#: Rows closer than this to the edge of the Lee–Kesler range at a limit go the per-row way.
_LK_PR_EDGE = 9.5
_LK_TR_EDGE = 3.95
#: Highest reduced temperature of the Lee–Kesler range.
_LK_TR_HI = LK_REDUCED_TEMPERATURE_RANGE[1]
#: Highest temperature [K] of the quantum-gas SRK model's range.
_SRK_T_HI = SRK_QUANTUM_TEMPERATURE_RANGE[1]
#: Highest reduced pressure of the Lee–Kesler range.
_LK_PR_HI = LK_REDUCED_PRESSURE_RANGE[1]


# ----------------------------------------------------------------------------- eligibility

def vectorisable(case: Case) -> bool:
    """Whether the vectorised path covers this row (see the module doc); the rest go per row."""
    if not _vector_gas(case.gas):
        return False
    if (case.fill_pressure_pa is None) == (case.fill_mass_kg is None) or case.fill_temperature_k is None:
        return False
    if getattr(case, "tolerance", None) is not None:
        return False
    scenarios = getattr(case, "scenarios", ())
    if len(scenarios) > 1 or any(getattr(s, "solar", "none") not in ("none", "sun") for s in scenarios):
        return False
    return True


@dataclass
class SunRow:
    """A row in the sun: its worst case as screen._worst_case_temperature finds it (the energy balance is per
    row and cheap), so that the rest of the row runs on the arrays: the basis in words, the balance and the
    warnings of that step (in the single screening's order)."""

    basis: str
    balance: dict
    warnings: list
    t_exposure: float       # the highest exposure temperature [K] (before the fill state is considered)


def _sun_row(case: Case, balances: dict | None = None) -> SunRow | None:
    """The worst case of a row with one scenario in the sun; None for other rows. Raises InputError as the
    single screening does (the row then goes per row, which raises it again in its place). `balances`: the
    energy balances already solved for the cases screened together (:func:`_worst_case`)."""
    sc = case.scenarios[0] if getattr(case, "scenarios", ()) else None
    if sc is None or getattr(sc, "solar", "none") != "sun":
        return None
    basis, balance, warnings = _worst_case(case, sc, balances)
    return _sun_row_of(sc, basis, balance, warnings)


def _worst_case(case: Case, sc, balances: dict | None) -> tuple[str, dict | None, list]:
    """(basis, energy balance or None, warnings) of scenario `sc` of `case`, as screen._worst_case_temperature
    finds them. A scenario in the sun takes its balance from `balances` where the cases screened together
    already solved it for the same inputs (every input of screen.sun_balance is in the key, which is a pure
    function of them: the same numbers and words, each row its own copy), else solves it and keeps it there."""
    sun = None
    if sc.solar == "sun":
        key = (sc.ambient_max_k, sc.irradiance_w_m2, sc.absorptivity, sc.emissivity, sc.finish, sc.wind_speed_m_s,
               sc.orientation, sc.name, sc.key, case.outside_diameter_m, case.length_m, case.water_capacity_m3,
               case.source)
        sun = balances.get(key) if balances is not None else None
        if sun is None:
            sun = _screen.sun_balance(sc, case.outside_diameter_m, case.length_m, case.water_capacity_m3,
                                      case.source)
            if balances is not None:
                balances[key] = sun
    warnings: list = []
    _t, basis, balance = _screen.worst_case_temperature(sc, case.fill_temperature_k, sun, warnings)
    return basis, balance, warnings


def _sun_row_of(sc, basis: str, balance: dict, warnings: list) -> SunRow:
    """A SunRow from the worst-case step's answer for scenario `sc`."""
    t_exposure = max(t for t in (sc.gas_temperature_k, sc.ambient_max_k, balance["wall_temperature_k"])
                     if t is not None)
    return SunRow(basis, balance, warnings, t_exposure)


def _plain_sun_rows(plain: PlainRows, rows: Iterable[int]) -> dict[int, SunRow]:
    """{j: the worst case of the j-th plain row in the sun} for the rows given, as _sun_row finds it from the
    row's Case (screen.worst_case_temperature). A plain row's balance depends on its ambient maximum, water
    capacity and the balance's inputs it gives (finish or absorptivity, emissivity, irradiance, wind speed,
    orientation, outside diameter and length; the tool's defaults for the rest), so rows that share them share
    one balance (screen.sun_balance is a pure function; each row gets a copy). A row whose balance raises is
    left out: the per-row path raises it again, in its place."""
    out: dict[int, SunRow] = {}
    balances: dict[tuple, tuple | None] = {}
    t_fill, cap = plain.fill_temperature_k.tolist(), plain.water_capacity_m3.tolist()
    for j in rows:
        sc = plain.exposure(j)
        x = plain.sun_values(j)
        d, length = x["vessel.outside_diameter"], x["vessel.length"]
        # every input of screen.sun_balance that can differ between plain rows
        key = (sc.ambient_max_k, cap[j], sc.finish, sc.irradiance_w_m2, sc.absorptivity, sc.emissivity,
               sc.wind_speed_m_s, sc.orientation, d, length)
        if key not in balances:
            try:
                balances[key] = _screen.sun_balance(sc, d, length, cap[j], plain.inv.source)
            except InputError:
                balances[key] = None
        sun = balances[key]
        if sun is None:
            continue
        warnings: list = []
        _t, basis, balance = _screen.worst_case_temperature(sc, t_fill[j], sun, warnings)
        out[j] = _sun_row_of(sc, basis, balance, warnings)
    return out


#: The warnings of the columns' verdict a row in the sun keeps after its worst-case step's (whose own replace
#: the columns' exposure warnings), as screen.screen_states orders them: permanent gases, liquefied gases.
_SUN_KEEPS = ("models-disagree",)
_SUN_KEEPS_LIQUEFIED = ("near-critical", "near-saturation", "models-disagree")


def _sun_warnings(warnings: list, sun: SunRow, keep: tuple[str, ...]) -> list:
    """A sun row's warnings: its worst-case step's, then those of `warnings` (the columns' verdict) in `keep`."""
    return list(sun.warnings) + [w for w in warnings if w["code"] in keep]


# ----------------------------------------------------------------------------- helpers

def _linspace_bracket(lo: np.ndarray, hi: np.ndarray, root: np.ndarray, n: int = _SCAN_N):
    """Ends of the scan interval of np.linspace(lo, hi, n) that holds `root` (as screen._root scans)."""
    step = (hi - lo) / (n - 1)
    k = np.clip(np.floor((root - lo) / step), 0, n - 2)

    def at(j):
        return np.where(j >= n - 1, hi, j * step + lo)

    for _ in range(3):
        k = np.where((at(k + 1) < root) & (k < n - 2), k + 1, k)
        k = np.where((at(k) > root) & (k > 0), k - 1, k)
    return at(k), at(k + 1)


def _secant(f: Callable[[np.ndarray, np.ndarray], np.ndarray], x0, f0, x1, idx: np.ndarray):
    """Vectorised secant on f(x, idx) = 0 from (x0, f0) and x1; returns (root, converged)."""
    x0, f0, x1 = (np.array(a, dtype=float) for a in (x0, f0, x1))
    root = np.full(x0.shape, np.nan)
    ok = np.zeros(x0.shape, dtype=bool)
    active = np.arange(x0.size)
    for _ in range(_SECANT_MAX):
        if active.size == 0:
            break
        f1 = f(x1, idx[active])
        with np.errstate(divide="ignore", invalid="ignore"):
            x2 = x1 - f1 * (x1 - x0) / (f1 - f0)
        bad = ~np.isfinite(x2) | ~np.isfinite(f1)
        done = ~bad & ((np.abs(x2 - x1) <= _SECANT_RTOL * np.abs(x2)) | (f1 == 0.0))
        x2 = np.where(f1 == 0.0, x1, x2)
        root[active[done]] = x2[done]
        ok[active[done]] = True
        keep = ~done & ~bad
        active, x0, f0, x1 = active[keep], x1[keep], f1[keep], x2[keep]
    return root, ok


class _Dome:
    """One side of a pure fluid's saturation dome as a table, for where many isochores meet it.

    ``side`` "vapour": the saturated-vapour density, rising with T (the dry-out temperature of a fill below
    the critical density); "liquid": the saturated-liquid density, falling with T (the liquid-full
    temperature of a fill above it). Roots as :func:`screening.physics.isochore._boundary` finds them.
    """

    def __init__(self, fluid: ReferenceFluid, side: str) -> None:
        self.fluid = fluid
        self.side = side
        tt, tc = fluid.triple_temperature, fluid.critical_temperature
        self.t_hi = tc - 1e-4                   # isochore._TC_GAP
        u = np.linspace(0.0, 1.0, 600)
        ts = tt + (self.t_hi - tt) * (1.0 - (1.0 - u) ** 2)  # denser towards Tc
        self.t = ts
        self.sat = fluid.saturated_vapour_density if side == "vapour" else fluid.saturated_liquid_density
        self.rho = np.array([self.sat(float(t)) for t in ts])
        self.rho_tt = self.rho[0]
        self.rho_hi = self.rho[-1]

    def _cubic_inverse(self, k: np.ndarray, r: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """A starting point for the root in table interval k of density r: the temperature [K] of the cubic
        through the four table points around the interval (T as a function of the density, Lagrange), and the
        slope of this side's function (the saturated density less r, taken rising) there [mol/m3/K]."""
        j0 = np.clip(k - 1, 0, self.t.size - 4)[:, None] + np.arange(4)
        xs, ys = self.rho[j0], self.t[j0]
        t = np.zeros(r.size)
        dt = np.zeros(r.size)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            for i in range(4):
                others = [j for j in range(4) if j != i]
                den = np.prod([xs[:, i] - xs[:, j] for j in others], axis=0)
                d0, d1, d2 = (r - xs[:, j] for j in others)
                t += ys[:, i] * d0 * d1 * d2 / den
                dt += ys[:, i] * (d1 * d2 + d0 * d2 + d0 * d1) / den
            slope = (1.0 if self.side == "vapour" else -1.0) / dt
        return t, slope

    def boundary(self, rho: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Temperature [K] where the isochore meets this side of the dome (NaN: never) and whether the
        solve settled (False also where the single-case analysis refuses the density)."""
        out = np.full(rho.shape, np.nan)
        ok = np.ones(rho.shape, dtype=bool)
        rising = self.side == "vapour"
        # vapour: the vapour at the triple point is already denser, never in the dome;
        # liquid: denser than the liquid at the triple point, refused by the single-case analysis
        never = rho < self.rho_tt if rising else rho > self.rho_tt
        ok[never & (not rising)] = False
        at_hi = rho == self.rho_hi
        critical = rho > self.rho_hi if rising else rho < self.rho_hi   # root in the last gap below Tc
        out[at_hi] = self.t_hi
        out[critical & ~at_hi] = self.fluid.critical_temperature
        solve = np.flatnonzero(~never & ~critical & ~at_hi)
        if solve.size:
            r = rho[solve]
            # the table interval that holds the crossing brackets the root
            if rising:
                k = np.clip(np.searchsorted(self.rho, r, side="right") - 1, 0, self.t.size - 2)
            else:
                k = np.clip(self.t.size - 1 - np.searchsorted(self.rho[::-1], r, side="left"), 0, self.t.size - 2)
            q = 1.0 if rising else 0.0

            def f(t, ix):       # self.sat(t) - rho, NaN where it raises NotApplicable
                return self.fluid.saturation_states(t, q)[1] - rho[ix]

            t0, t1 = self.t[k], self.t[k + 1]
            f0, f1 = self.rho[k] - r, self.rho[k + 1] - r
            exact0, exact1 = f0 == 0.0, f1 == 0.0
            root = np.where(exact0, t0, np.where(exact1, t1, np.nan))
            go = ~exact0 & ~exact1 & (f0 * f1 < 0.0)
            g = np.flatnonzero(go)
            if g.size:
                # Newton steps inside the table interval (:func:`_newton_in_bracket`, which shows the root by a
                # closed bracket) from the table's cubic through the four points around it, inverted, with that
                # cubic's slope; where they do not settle, the bracketed solve of the whole interval
                x0, slope = self._cubic_inverse(k[g], r[g])
                sign = 1.0 if rising else -1.0

                def fg(t, ix):
                    return sign * f(t, solve[g[ix]]), slope[ix]

                sg = sign * f0[g], sign * f1[g]
                got, settled = _newton_in_bracket(fg, t0[g], sg[0], t1[g], sg[1], x0, np.arange(g.size))
                root[g[settled]] = got[settled]
                go[g[settled]] = False
            root[go] = _illinois(f, t0[go], t1[go], f0[go], f1[go], solve[go])
            out[solve] = root
            ok[solve] = np.isfinite(root)
        return out, ok


_DOMES: dict[tuple[str, str], _Dome] = {}
_TOPS: dict[str, float] = {}


def _rho_top(fluid: ReferenceFluid, pure: bool) -> float:
    """Upper end of screen._mass_limit's density scan [mol/m3]."""
    if fluid.label not in _TOPS:
        from screening.physics.isochore import max_liquid_density
        if pure:
            _TOPS[fluid.label] = max_liquid_density(fluid)
        elif fluid.critical_molar_density:
            _TOPS[fluid.label] = 3.0 * fluid.critical_molar_density
        else:
            raise NotApplicable("reference", "no density scale for the mass limit")
    return _TOPS[fluid.label]


def _dome(fluid: ReferenceFluid, side: str) -> _Dome:
    if (fluid.label, side) not in _DOMES:
        _DOMES[(fluid.label, side)] = _Dome(fluid, side)
    return _DOMES[(fluid.label, side)]


def _densities(fluid: ReferenceFluid, p: np.ndarray, t: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """fluid.density of a pure fluid at each row's (p [Pa], t [K]) [mol/m3] and whether it applies (NaN and
    False where it raises NotApplicable), through its array method (:meth:`ReferenceFluid.densities`)."""
    rho, _p, _phases, valid = fluid.densities(p, t, np.full(np.shape(p), np.nan))
    return rho, valid


def _loop(fn, *arrays) -> tuple[np.ndarray, np.ndarray, list]:
    """fn over rows of arrays; (values, valid, reasons) with NaN/False/reason where it raises NotApplicable."""
    n = arrays[0].size
    out = np.full(n, np.nan)
    valid = np.zeros(n, dtype=bool)
    reasons = [""] * n
    for i in range(n):
        try:
            out[i] = fn(*(float(a[i]) for a in arrays))
            valid[i] = True
        except NotApplicable as exc:
            reasons[i] = exc.reason
    return out, valid, reasons


def _illinois(f: Callable[[np.ndarray, np.ndarray], np.ndarray], x0: np.ndarray, x1: np.ndarray, f0: np.ndarray,
              f1: np.ndarray, idx: np.ndarray) -> np.ndarray:
    """Roots of f(x, idx) = 0 inside brackets [x0, x1] with f0, f1 of opposite signs (Illinois regula falsi,
    vectorised, to _SECANT_RTOL); NaN where f cannot be evaluated on the way."""
    out = np.full(np.shape(x0), np.nan)
    live = np.arange(out.size)
    x0, x1, f0, f1 = (np.array(a, dtype=float) for a in (x0, x1, f0, f1))
    side = np.zeros(live.size)
    prev = np.full(live.size, np.nan)
    for _ in range(200):
        if live.size == 0:
            break
        x = (x0 * f1 - x1 * f0) / (f1 - f0)
        fx = f(x, idx[live])
        bad = ~np.isfinite(fx)
        done = ~bad & ((fx == 0.0) | (np.abs(x - prev) <= _SECANT_RTOL * np.abs(x))
                       | (np.abs(x1 - x0) <= _SECANT_RTOL * np.abs(x)))
        out[live[done]] = x[done]
        left = fx * f0 > 0.0                                   # the root is in [x, x1]
        f1 = np.where(left & (side == 1), 0.5 * f1, f1)        # Illinois: halve the end that stays twice
        f0 = np.where(~left & (side == -1), 0.5 * f0, f0)
        x0, f0 = np.where(left, x, x0), np.where(left, fx, f0)
        x1, f1 = np.where(left, x1, x), np.where(left, f1, fx)
        side = np.where(left, 1, -1)
        keep = ~done & ~bad
        live, x0, x1, f0, f1, side, prev = live[keep], x0[keep], x1[keep], f0[keep], f1[keep], side[keep], x[keep]
    return out


#: A root this close (relative) to an end of screen._limits' range is settled by the sign of the function at
#: that end, as screen._root settles it (its first look is at the two ends).
_EDGE_RTOL = 1e-8


def _settle_edges(f: Callable[[np.ndarray, np.ndarray], np.ndarray], root: np.ndarray, ok: np.ndarray,
                  lo: np.ndarray, hi: np.ndarray) -> np.ndarray:
    """Roots of an increasing f next to lo or hi decided as screen._root decides them: no root where f(lo) > 0
    or f(hi) < 0, the end itself where f is zero there. Roots elsewhere are returned as they are."""
    root = np.array(root, dtype=float)
    for end, sign in ((lo, 1.0), (hi, -1.0)):
        near = np.flatnonzero(ok & np.isfinite(root) & (np.abs(root - end) <= _EDGE_RTOL * np.abs(end)))
        if near.size == 0:
            continue
        fe = f(end[near], near)
        zero = fe == 0.0
        none = ~np.isfinite(fe) | (sign * fe > 0.0)
        root[near[zero]] = end[near[zero]]
        root[near[none & ~zero]] = np.nan
        keep = near[~zero & ~none]      # inside: clamp a round-off step past the end back onto it
        root[keep] = np.clip(root[keep], lo[keep], hi[keep])
    return root


def _scan_root(f: Callable[[np.ndarray, np.ndarray], np.ndarray], lo: np.ndarray, hi: np.ndarray,
               n: int = _SCAN_N) -> np.ndarray:
    """Per row, the root screen._root finds for an increasing f(x, rows) on [lo, hi] (NaN: none).

    As there: the first scan interval of np.linspace(lo, hi, n) whose two ends can be evaluated and
    bracket a sign change, then a bracketed solve inside it (here a vectorised Illinois regula falsi to
    _SECANT_RTOL). f returns NaN where the model does not apply; a solve that meets such a point gives
    no root, as screen._root's Brent does when its function raises.
    """
    m = lo.size
    out = np.full(m, np.nan)
    if m == 0:
        return out
    rows = np.arange(m)
    grid = np.linspace(lo, hi, n, axis=1)                      # (m, n)
    fv = f(grid.ravel(), np.repeat(rows, n)).reshape(m, n)
    a_f, b_f = fv[:, :-1], fv[:, 1:]
    ok = np.isfinite(a_f) & np.isfinite(b_f) & (((a_f <= 0.0) & (b_f >= 0.0)) | ((a_f >= 0.0) & (b_f <= 0.0)))
    has = ok.any(axis=1)
    k = np.argmax(ok, axis=1)
    at_b = has & (b_f[rows, k] == 0.0)
    out[at_b] = grid[rows, k + 1][at_b]
    at_a = has & ~at_b & (a_f[rows, k] == 0.0)
    out[at_a] = grid[rows, k][at_a]
    live = np.flatnonzero(has & ~at_b & ~at_a)
    out[live] = _illinois(f, grid[live, k[live]], grid[live, k[live] + 1], a_f[live, k[live]], b_f[live, k[live]],
                          live)
    return out


def _above_lk_pressures(p: np.ndarray, pc: np.ndarray) -> np.ndarray:
    """Where the pressure p [Pa] is above every pressure the Lee–Kesler model gives (reduced pressure above the
    top of its range, with a margin for the rounding of P_r pc): a function "model pressure minus p" is below zero
    wherever it can be evaluated, and a scan of it finds no root."""
    return p / pc > _LK_PR_HI * (1.0 + 1e-9)


def _below_at_range_top(f: Callable[[np.ndarray, np.ndarray], np.ndarray], lo: np.ndarray, hi: np.ndarray,
                        inside: Callable[[np.ndarray], np.ndarray]) -> np.ndarray:
    """Rows where screen._root's scan of an increasing f(x, rows) on np.linspace(lo, hi, _SCAN_N) certainly finds
    no root, known from one evaluation instead of the scan. `inside(grid)` says which scan points (rows x points)
    lie inside the model's range in x, a prefix of each row (the model refuses the points above, as its range test
    does). Where f is below zero at the highest point inside (or no point is inside), f is below zero at every
    point under it that can be evaluated and the points above cannot be: no scan interval brackets a sign change.
    Elsewhere (f zero or above there, or not evaluable) False: the caller scans. Used for isochores, whose
    pressure rises with the temperature."""
    grid = np.linspace(lo, hi, _SCAN_N, axis=1)                        # the scan's points, as _scan_root has them
    k = inside(grid).sum(axis=1) - 1
    out = k < 0                                                        # no point inside: nothing to evaluate
    rows = np.flatnonzero(~out)
    if rows.size:
        fx = f(grid[rows, k[rows]], rows)
        out[rows] = np.isfinite(fx) & (fx < 0.0)
    return out


def _root_in_interval(f: Callable[[np.ndarray, np.ndarray], np.ndarray], lo: np.ndarray, hi: np.ndarray,
                      x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Per row, the root :func:`_scan_root` finds for an increasing f(x, rows) on [lo, hi], settled from the scan
    interval [a, b] of np.linspace(lo, hi, _SCAN_N) that holds x (the root found another way) instead of the whole
    scan, where that interval decides: f(a) < 0 and f(b) > 0, the scan's root (Illinois on [a, b], as there); f(a)
    < 0 and f(b) not evaluable (the model's range ends inside the interval), none. f increasing, every scan point
    below a has f < 0 where it can be evaluated and every point above b has f > 0: no other interval brackets a
    sign change. Returns (root, settled); settled False (x not finite, f(a) not below zero, f(b) zero): the
    caller scans."""
    m = lo.size
    root = np.full(m, np.nan)
    settled = np.zeros(m, dtype=bool)
    live = np.flatnonzero(np.isfinite(x))
    if live.size == 0:
        return root, settled
    grid = np.linspace(lo[live], hi[live], _SCAN_N, axis=1)           # the scan's points, as _scan_root has them
    k = np.clip((grid <= x[live, None]).sum(axis=1) - 1, 0, _SCAN_N - 2)
    rows = np.arange(live.size)
    a, b = grid[rows, k], grid[rows, k + 1]
    fa, fb = f(np.concatenate([a, b]), np.concatenate([live, live])).reshape(2, -1)
    below = np.isfinite(fa) & (fa < 0.0)
    none = below & ~np.isfinite(fb)
    settled[live[none]] = True
    solve = np.flatnonzero(below & np.isfinite(fb) & (fb > 0.0))
    if solve.size:
        root[live[solve]] = _illinois(f, a[solve], b[solve], fa[solve], fb[solve], live[solve])
        settled[live[solve]] = True
    return root, settled


def _monotone_root(f: Callable[[np.ndarray, np.ndarray], np.ndarray], lo: np.ndarray, hi: np.ndarray,
                   n: int = _SCAN_N) -> np.ndarray:
    """Per row, the root screen._root finds for a monotonic f(x, rows) on [lo, hi] (NaN: none), looking first
    where it looks first: f evaluable at both ends with a sign change, the root inside the whole bracket
    (Illinois, to _SECANT_RTOL); the same sign at both ends, none; lo where f(lo) = 0. Where an end cannot be
    evaluated, or the solve meets a point it cannot evaluate, screen._root's scan (:func:`_scan_root`)."""
    m = lo.size
    out = np.full(m, np.nan)
    if m == 0:
        return out
    rows = np.arange(m)
    f_lo, f_hi = f(lo, rows), f(hi, rows)
    both = np.isfinite(f_lo) & np.isfinite(f_hi)
    at_lo = both & (f_lo == 0.0)
    out[at_lo] = lo[at_lo]
    go = np.flatnonzero(both & ~at_lo & (f_lo * f_hi < 0.0))
    at_hi = both & ~at_lo & (f_hi == 0.0)          # the scan's last point
    out[at_hi] = hi[at_hi]
    if go.size:
        out[go] = _illinois(f, lo[go], hi[go], f_lo[go], f_hi[go], go)
    scan = np.flatnonzero(~both | np.isin(rows, go[~np.isfinite(out[go])]))
    if scan.size:
        out[scan] = _scan_root(lambda x, ix: f(x, scan[ix]), lo[scan], hi[scan], n)
    return out


def _first_at_or_above(x: np.ndarray, lo: np.ndarray, hi: np.ndarray, n: int = _SCAN_N) -> np.ndarray:
    """Per row, the index (as a float) of the first point of np.linspace(lo, hi, n) at or above x (n: none), as
    the scan's points are computed (k * step + lo, hi the last)."""
    step = (hi - lo) / (n - 1)
    with np.errstate(invalid="ignore", divide="ignore"):
        k = np.clip(np.ceil((x - lo) / step), 0.0, float(n))
    k = np.where(np.isnan(x), float(n), k)

    def at(j):
        return np.where(j >= n - 1, hi, j * step + lo)

    for _ in range(3):      # the rounding of the division: one step either way
        k = np.where((k > 0) & (at(k - 1) >= x), k - 1, k)
        k = np.where((k < n) & (at(np.minimum(k, n - 1)) < x), k + 1, k)
    return k


def _scan_up(f: Callable[[np.ndarray, np.ndarray], np.ndarray], rows: np.ndarray, lo: np.ndarray, mid: np.ndarray,
             f_mid: np.ndarray, hi: np.ndarray, n: int = _SCAN_N, nan_from: np.ndarray | None = None,
             guess: np.ndarray | None = None, top_first: bool = False) -> np.ndarray:
    """Per row, the root screen._root's scan of np.linspace(lo, hi, n) finds (NaN: none) for an increasing
    f(x, rows) with f(mid) = f_mid < 0 (lo <= mid < hi) that can be evaluated from lo up to some point and nowhere
    above it (a model's range: an equation's temperature range and highest pressure). The scan's intervals below
    mid then hold no sign change, and its outcome is settled by the first scan point above mid where f >= 0 or f
    cannot be evaluated (every point under it has f < 0, every point above it cannot change the outcome): the root
    lies between the last point below zero (mid where there is none above it) and that point (Illinois, to
    _SECANT_RTOL), or there is none (f not evaluable there, or below zero at every point).

    That point is searched for over the scan's index rather than stepped to: each round evaluates, in one call
    over the rows still open, the scan points on either side of a predicted root (regula falsi between the
    nearest points known on either side, else the secant through the two highest points below zero, else
    `guess`), or, without a prediction, the first scan point above mid first (where the stepwise scan starts;
    `top_first`: the highest point not known to be past the model's range, for rows that mostly have no root)
    and then the middle of the open index range (a bisection, also after a few rounds that did not settle a
    row). The points it settles on, their values and the bracket are those of a scan stepping up from mid one
    point at a time, so the root is the same, bit for bit. `nan_from`: per row, where f is known not to be
    evaluable from (scan points at or above it are not evaluated; NaN: not known); `guess`: a predicted root
    (NaN: none).
    """
    m = rows.size
    root = np.full(m, np.nan)
    if m == 0:
        return root
    step = (hi - lo) / (n - 1)
    _a, b = _linspace_bracket(lo, hi, mid, n)
    nf = float(n)

    def at(k, r):
        return np.where(k >= n - 1, hi[r], k * step[r] + lo[r])

    # L: the highest scan index known below zero (k1 - 1, mid itself, at first); H: the lowest index known to
    # stop the scan (n: none known), with f there (NaN: not evaluable); L2: the second highest below zero
    lo_k = np.rint((b - lo) / step) - 1.0
    x_lo, f_lo = np.array(mid, dtype=float), np.array(f_mid, dtype=float)
    x_lo2, f_lo2 = np.full(m, np.nan), np.full(m, np.nan)
    hi_k = np.full(m, nf)
    if nan_from is not None:
        hi_k = np.maximum(_first_at_or_above(nan_from, lo, hi, n), lo_k + 1.0)
    x_hi, f_hi = np.full(m, np.nan), np.full(m, np.nan)
    rounds = np.zeros(m, dtype=int)
    edge = np.zeros(m, dtype=bool)                  # a point that cannot be evaluated was met
    has_guess = np.zeros(m, dtype=bool) if guess is None else np.isfinite(guess)
    live = np.flatnonzero((b > mid) & (hi_k - lo_k > 1.0))
    while live.size:
        lk, hk, xl, fl = lo_k[live], hi_k[live], x_lo[live], f_lo[live]
        with np.errstate(divide="ignore", invalid="ignore"):
            bracket = np.isfinite(f_hi[live])
            xp = np.where(bracket, xl - fl * (x_hi[live] - xl) / (f_hi[live] - fl), np.nan)
            ext = ~bracket & ~edge[live] & np.isfinite(f_lo2[live]) & (fl > f_lo2[live])
            xp = np.where(ext, xl - fl * (xl - x_lo2[live]) / (fl - f_lo2[live]), xp)
        first = rounds[live] == 0
        use_guess = first & ~bracket & ~ext & has_guess[live]
        if use_guess.any():
            xp[use_guess] = guess[live[use_guess]]
        predicted = np.isfinite(xp) & (rounds[live] < 3) & (hk - lk >= 3.0)
        j = _first_at_or_above(np.where(predicted, xp, lo[live]), lo[live], hi[live], n)
        j = np.clip(j, lk + 2.0, hk - 1.0)
        single = np.where(first, lk + 1.0, np.floor(0.5 * (lk + hk)))
        if top_first:                                # the highest point not known to be past the range
            single = np.where(first & (hk < nf), hk - 1.0, single)
        upper = np.where(predicted, j, single)
        pair = np.flatnonzero(predicted)
        probe_r = np.concatenate([live[pair], live])
        probe_k = np.concatenate([j[pair] - 1.0, upper])
        fx = f(at(probe_k, probe_r), rows[probe_r])
        xk = at(probe_k, probe_r)
        for sel in (slice(0, pair.size), slice(pair.size, None)):     # the lower points of the pairs first
            r, k, x, v = probe_r[sel], probe_k[sel], xk[sel], fx[sel]
            below = np.isfinite(v) & (v < 0.0) & (k > lo_k[r]) & (k < hi_k[r])
            rb = r[below]
            x_lo2[rb], f_lo2[rb] = x_lo[rb], f_lo[rb]
            lo_k[rb], x_lo[rb], f_lo[rb] = k[below], x[below], v[below]
            stop = ~(np.isfinite(v) & (v < 0.0)) & (k < hi_k[r]) & (k > lo_k[r])
            rs = r[stop]
            hi_k[rs], x_hi[rs], f_hi[rs] = k[stop], x[stop], v[stop]
            edge[r[~np.isfinite(v)]] = True
        rounds[live] += 1
        live = live[hi_k[live] - lo_k[live] > 1.0]
    found = (hi_k < nf) & np.isfinite(f_hi)
    zero = found & (f_hi == 0.0)
    root[zero] = x_hi[zero]
    go = np.flatnonzero(found & ~zero)
    if go.size:
        root[go] = _illinois(f, x_lo[go], x_hi[go], f_lo[go], f_hi[go], rows[go])
    return root


def _upward_root(f: Callable[[np.ndarray, np.ndarray], np.ndarray], lo: np.ndarray, mid: np.ndarray,
                 hi: np.ndarray, f_mid: np.ndarray | None = None, nan_from: np.ndarray | None = None,
                 guess: np.ndarray | None = None, top_first: bool = False) -> np.ndarray:
    """Per row, what :func:`_monotone_root` finds (the root screen._root finds, NaN: none) for an increasing
    f(x, rows) on [lo, hi] that, where it can be evaluated at mid, can be evaluated from mid up to some point and
    nowhere above it (a model that holds up to the end of its range): solved from mid (:func:`_increasing_root`,
    an end past the range scanned upwards from mid, :func:`_scan_up`) instead of scanning the whole bracket; rows
    where f cannot be evaluated at mid, or the solve is not sure, by :func:`_monotone_root`. `f_mid`: f at mid
    where the caller knows it (NaN: evaluated here); `nan_from`, `guess`, `top_first`: as :func:`_scan_up` takes
    them (where f is known not to be evaluable from, NaN: not known; a predicted root; the top point first)."""
    ix = np.arange(lo.size)
    if f_mid is None:
        f_mid = f(mid, ix)
    else:
        f_mid = np.array(f_mid, dtype=float)
        ask = np.flatnonzero(np.isnan(f_mid))
        if ask.size:
            f_mid[ask] = f(mid[ask], ask)
    known = np.isfinite(f_mid)
    root = np.full(lo.size, np.nan)
    if known.any():
        k = ix[known]
        root[k], ok = _increasing_root(f, k, lo[k], mid[k], f_mid[k], hi[k], math.inf, stepwise=True,
                                       nan_from=None if nan_from is None else nan_from[k],
                                       guess=None if guess is None else guess[k], top_first=top_first)
        known[k[~ok]] = False
    rest = ix[~known]
    if rest.size:
        root[rest] = _monotone_root(lambda x, i: f(x, rest[i]), lo[rest], hi[rest])
    return root


def _increasing_root(f: Callable[[np.ndarray, np.ndarray], np.ndarray], rows: np.ndarray, lo: np.ndarray,
                     mid: np.ndarray, f_mid: np.ndarray, hi: np.ndarray, top: float,
                     stepwise: bool = False, nan_from: np.ndarray | None = None,
                     guess: np.ndarray | None = None, top_first: bool = False) -> tuple[np.ndarray, np.ndarray]:
    """Per row, the root screen._root finds for an increasing f(x, rows) on [lo, hi] (NaN: none), where f is
    known at an inside point mid (f_mid) and can be evaluated only up to `top` (a model's range).

    As there: where hi <= top, the root is the one inside [lo, hi] (none where f(lo) > 0 or f(hi) < 0); where
    hi > top, screen._root scans np.linspace(lo, hi, _SCAN_N) and finds the root only inside a scan interval
    whose ends it can evaluate, so a root in the interval that holds `top` is none as well. The solve is
    bracketed on [mid, min(hi, top)] or [lo, mid] (Illinois, to _SECANT_RTOL); where f cannot be evaluated at
    that bracket's end, by screen._root's scan (:func:`_scan_root`; `stepwise`: upwards from mid, :func:`_scan_up`,
    for an f that can be evaluated on one interval from lo; `nan_from`, `guess`, `top_first`: as _scan_up takes
    them, an end
    at or above `nan_from` is not evaluated). Returns (root, ok): ok False where the bracketed solve met a point it
    could not evaluate (those rows go per row).
    """
    m = rows.size
    root = np.full(m, np.nan)
    ok = np.ones(m, dtype=bool)
    end = np.minimum(hi, top)
    root[f_mid == 0.0] = mid[f_mid == 0.0]
    for up in (True, False):
        k = np.flatnonzero((f_mid < 0.0) if up else (f_mid > 0.0))
        if k.size == 0:
            continue
        x_end = end[k] if up else lo[k]
        f_end = np.full(k.size, np.nan)
        ask = np.ones(k.size, dtype=bool) if nan_from is None or not up else ~(x_end >= nan_from[k])
        if ask.any():
            f_end[ask] = f(x_end[ask], rows[k[ask]])
        bad = ~np.isfinite(f_end)
        if bad.any():   # an end outside the model's range (e.g. above its highest pressure): screen._root scans
            kb = k[bad]
            if stepwise and up:
                # the points from the end up cannot be evaluated either (f can be evaluated on one interval)
                known_nan = x_end[bad] if nan_from is None else np.fmin(x_end[bad], nan_from[kb])
                root[kb] = _scan_up(f, rows[kb], lo[kb], mid[kb], f_mid[kb], hi[kb], nan_from=known_nan,
                                    guess=None if guess is None else guess[kb], top_first=top_first)
            else:
                root[kb] = _scan_root(lambda x, ix, sub=rows[kb]: f(x, sub[ix]), lo[kb], hi[kb])
        at_end = ~bad & (f_end == 0.0)
        root[k[at_end]] = x_end[at_end]
        go = ~bad & ((f_end > 0.0) if up else (f_end < 0.0))
        g = k[go]
        if g.size:
            a, b = (mid[g], x_end[go]) if up else (x_end[go], mid[g])
            fa, fb = (f_mid[g], f_end[go]) if up else (f_end[go], f_mid[g])
            r = _illinois(f, a, b, fa, fb, rows[g])
            ok[g[~np.isfinite(r)]] = False
            root[g] = r
    # beyond `top` screen._root scans: a root in a scan interval that reaches past `top` is not found
    past = np.flatnonzero(ok & np.isfinite(root) & (hi > top))
    if past.size:
        _a, b = _linspace_bracket(lo[past], hi[past], root[past])
        root[past[b > top]] = np.nan
    return root, ok


# ----------------------------------------------------------------------------- one gas group

@dataclass
class Rows:
    """The inputs of rows of one gas, as arrays in SI: pressures absolute [Pa], temperatures [K], [-].
    NaN marks an absent ambient maximum or stated gas temperature."""

    gas: Mixture
    p_fill: np.ndarray
    t_fill: np.ndarray
    ambient_max: np.ndarray
    gas_temperature: np.ndarray
    rated: np.ndarray
    atm: np.ndarray
    margin_req: np.ndarray
    relief: np.ndarray

    @property
    def ceiling(self) -> np.ndarray:
        """The pressure [Pa] the limits solve to: the rated pressure, or the relief set pressure where that is
        lower (screen.limit_ceiling); NaN relief: none."""
        return np.fmin(self.rated, self.relief)

    @staticmethod
    def of_cases(cases: list[Case], sun: list[SunRow | None] | None = None) -> "Rows":
        """The rows of cases; a row in the sun (``sun[k]``) enters with its highest exposure temperature as
        the gas temperature and no ambient (its basis and warnings are the SunRow's)."""
        sc = [c.scenarios[0] if getattr(c, "scenarios", ()) else c for c in cases]
        sun = sun or [None] * len(cases)
        nan = math.nan
        return Rows(cases[0].gas, np.array([c.fill_pressure_pa for c in cases], dtype=float),
                    np.array([c.fill_temperature_k for c in cases], dtype=float),
                    np.array([nan if (s.ambient_max_k is None or u is not None) else s.ambient_max_k
                              for s, u in zip(sc, sun)], dtype=float),
                    np.array([u.t_exposure if u is not None else nan if s.gas_temperature_k is None
                              else s.gas_temperature_k for s, u in zip(sc, sun)], dtype=float),
                    np.array([c.rated_pressure_pa for c in cases], dtype=float),
                    np.array([c.site.atmospheric_pressure_pa for c in cases], dtype=float),
                    np.array([c.required_margin for c in cases], dtype=float),
                    np.array([nan if c.relief_set_pressure_pa is None else c.relief_set_pressure_pa for c in cases],
                             dtype=float))

    def take(self, idx: np.ndarray) -> "Rows":
        return Rows(self.gas, *(getattr(self, k)[idx] for k in ("p_fill", "t_fill", "ambient_max", "gas_temperature",
                                                               "rated", "atm", "margin_req", "relief")))


@dataclass
class PlainPart(Rows):
    """Rows of one gas from an inventory's plain rows, with what their verdicts need besides: the maximum
    filling ratio [kg/m3] (NaN: none); for a liquefied gas, the
    fill mass per water capacity [kg/m3] (NaN where the fill is given by pressure, whose ``p_fill`` is NaN
    where it is given by mass; None: every row by pressure); ``liquefied``: the part runs on
    :func:`_liquefied_columns` (a liquefied gas, or a permanent gas filled by mass)."""

    ratio: np.ndarray
    rho_mass: np.ndarray | None = None
    liquefied: bool = False

    def take(self, idx: np.ndarray) -> "PlainPart":
        return PlainPart(self.gas, *(getattr(self, k)[idx] for k in (
            "p_fill", "t_fill", "ambient_max", "gas_temperature", "rated", "atm", "margin_req", "relief", "ratio")),
            rho_mass=None if self.rho_mass is None else self.rho_mass[idx], liquefied=self.liquefied)


def _plain_columns(part: PlainPart) -> dict:
    """_columns of the part plus each vectorised row's :func:`_verdict` (:func:`_verdict_columns`; None on
    fallback rows),
    so that forked workers decide the verdicts of their own rows (a liquefied gas, or ``part.liquefied``:
    :func:`_liquefied_plain_columns`)."""
    if part.liquefied or _liquefied_gas(part.gas):
        return _liquefied_plain_columns(part)
    cols = _columns(part)
    molar_mass = part.gas.molar_mass
    rated, atm, margin_req = part.rated.tolist(), part.atm.tolist(), part.margin_req.tolist()
    relief, ratio = part.relief.tolist(), part.ratio.tolist()
    # the columns _verdict reads, as lists (indexing a list is cheaper than making a numpy scalar)
    listed = {key: cols[key].tolist() for key in ("gas_below_ambient", "peak_ideal", "peak_ref", "lk_ok", "lk_peak",
                                                  "rho_molar", "fill_governs", "t_exposure", "t_peak", "fill_over")}
    _verdict_columns(cols, part.p_fill.size, (
        (k, _verdict(listed, k, molar_mass, rated[k], None if math.isnan(relief[k]) else relief[k], atm[k],
                     margin_req[k], None if math.isnan(ratio[k]) else ratio[k], "exposure"))
        for k in np.flatnonzero(~cols["fallback"]).tolist()))
    return cols


def worst_case(ambient_max: np.ndarray, gas_temperature: np.ndarray,
               t_fill: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Screened temperature [K] (screen.screened_temperature of the higher exposure temperature given and the
    fill temperature), whether the stated gas temperature is the basis (as screen._worst_case_temperature
    ranks them, the stated gas temperature first on a tie), whether the fill state governs, and the exposure
    temperature [K]."""
    stated = ~np.isnan(gas_temperature) & (np.isnan(ambient_max) | (gas_temperature >= ambient_max))
    t_exposure = np.fmax(ambient_max, gas_temperature)
    t = _screen.screened_temperature(t_exposure, t_fill)
    return t, stated, t > t_exposure, t_exposure


def _lk_density_shared(p: np.ndarray, t: np.ndarray, tc: np.ndarray, pc: np.ndarray, omega: np.ndarray,
                       shared: bool, fills: dict | None = None) -> GeneralizedState:
    """lee_kesler_density of rows; `shared`: each distinct (p, t, tc, pc, omega) solved once and handed to every
    row that has it (the fill of a vessel's scenarios and of most of its tolerance states). Each element is
    solved on its own, whatever the size of its call (physics.eos.generalized), so the rows get the very numbers
    of the full call. `fills` (with `shared`): {state: its fields} of the states solved by an earlier table of the
    same screening (a vessel's nominal fill, met again among its tolerance states), read and added to."""
    if shared and fills is not None and p.size:
        keys = list(zip(p.tolist(), t.tolist(), tc.tolist(), pc.tolist(), omega.tolist()))
        todo = [key for key in dict.fromkeys(keys) if key not in fills]
        if todo:
            a = np.array(todo, dtype=float)
            s = lee_kesler_density(a[:, 0], a[:, 1], a[:, 2], a[:, 3], a[:, 4])
            values = list(zip(*(getattr(s, f).tolist() for f in GENERALIZED_FIELDS)))
            fills.update(zip(todo, values))
        got = [fills[key] for key in keys]
        return GeneralizedState(*(np.array([g[j] for g in got], dtype=bool if f == "valid" else
                                           object if f == "reason" else float)
                                  for j, f in enumerate(GENERALIZED_FIELDS)))
    if shared and p.size > 1:
        key = np.stack([p, t, tc, pc, omega], axis=1)
        _u, first, back = np.unique(key, axis=0, return_index=True, return_inverse=True)
        if first.size < p.size:
            s = lee_kesler_density(p[first], t[first], tc[first], pc[first], omega[first])
            back = back.ravel()
            return GeneralizedState(*(getattr(s, f)[back] for f in GENERALIZED_FIELDS))
    return lee_kesler_density(p, t, tc, pc, omega)


def _generalized_columns(gas: Mixture, p_fill: np.ndarray, t_fill: np.ndarray, t_peak: np.ndarray,
                         rho_given: np.ndarray | None = None, shared_fills: bool = False,
                         fills: dict | None = None) -> dict:
    """The generalized model of rows of one gas as arrays (screen._generalized, screen._quantum_generalized): the
    Lee–Kesler fill and peak states, the pseudocritical constants at both, and for pure hydrogen, helium or neon
    where the Lee–Kesler tables end, the quantum-gas SRK model. A row's fill is its pressure, or where
    ``rho_given`` [mol/m3] is finite (a mass fill), that density; `shared_fills`: rows that repeat a fill (the
    scenarios and tolerance states of one vessel) solve it once (:func:`_lk_density_shared`, with `fills`).
    Keys starting with "_" are for the limits."""
    n = t_fill.size
    fr = np.array(gas.fractions)
    comps = gas.components
    by_density = np.zeros(n, dtype=bool) if rho_given is None else np.isfinite(rho_given)

    def consts(t):
        return pseudocritical(fr, np.array([c.critical_temperature for c in comps]),
                              np.array([c.critical_pressure for c in comps]),
                              np.array([c.acentric_factor for c in comps]),
                              np.array([c.molar_mass for c in comps]), np.array([c.quantum for c in comps]),
                              np.array([c.classical_critical_temperature or c.critical_temperature for c in comps]),
                              np.array([c.classical_critical_pressure or c.critical_pressure for c in comps]),
                              np.asarray(t, dtype=float))

    if n and gas.is_pure and not comps[0].quantum:
        # the component's own constants at every temperature (Kay's rule of one component, no quantum correction):
        # worked out once
        tcf, pcf, omf = (np.full(n, float(np.asarray(a, dtype=float).ravel()[0])) for a in consts(t_fill[:1]))
        tcp, pcp, omp = tcf.copy(), pcf.copy(), omf.copy()
    else:
        tcf, pcf, omf = (np.array(np.broadcast_to(np.asarray(a, dtype=float), (n,))) for a in consts(t_fill))
        tcp, pcp, omp = (np.array(np.broadcast_to(np.asarray(a, dtype=float), (n,))) for a in consts(t_peak))
    gf = _lk_density_shared(np.where(by_density, 1e5, p_fill), t_fill, tcf, pcf, omf, shared_fills, fills)
    if by_density.any():
        gd = lee_kesler_pressure(np.where(by_density, rho_given, 1.0), t_fill, tcf, pcf, omf)
        gf = GeneralizedState(*(np.where(by_density, getattr(gd, f), getattr(gf, f)) for f in GENERALIZED_FIELDS))
    rho_lk = np.where(gf.valid, gf.molar_density, 1.0)
    gp = lee_kesler_pressure(rho_lk, t_peak, tcp, pcp, omp)
    lk_ok = gf.valid & gp.valid
    lk_reason = np.where(gf.valid, gp.reason, gf.reason).astype(object)
    # pure hydrogen, helium or neon where the Lee–Kesler tables end: the quantum-gas SRK model, as
    # screen._quantum_generalized has it
    q_srk = np.zeros(n, dtype=bool)
    kq = None
    if gas.is_pure and comps[0].quantum and not lk_ok.all():
        kq = (comps[0].classical_critical_temperature, comps[0].classical_critical_pressure, comps[0].molar_mass)
        qf = srk_quantum_density(np.where(by_density, 1e5, p_fill), t_fill, *kq)
        if by_density.any():      # a mass fill: the model's pressure at the given density
            qd = srk_quantum_pressure(np.where(by_density, rho_given, 1.0), t_fill, *kq)
            qf = GeneralizedState(*(np.where(by_density, getattr(qd, f), getattr(qf, f)) for f in GENERALIZED_FIELDS))
        qp = srk_quantum_pressure(np.where(qf.valid, qf.molar_density, 1.0), t_peak, *kq)
        q_srk = ~lk_ok & qf.valid & qp.valid
        q_reason = np.where(qf.valid, qp.reason, qf.reason).astype(object)
        failed = ~lk_ok & ~q_srk
        lk_reason[failed] = [f"{a}; quantum-gas model: {b}" for a, b in zip(lk_reason[failed], q_reason[failed])]
        gf = GeneralizedState(*(np.where(q_srk, getattr(qf, f), getattr(gf, f)) for f in GENERALIZED_FIELDS))
        gp = GeneralizedState(*(np.where(q_srk, getattr(qp, f), getattr(gp, f)) for f in GENERALIZED_FIELDS))
        rho_lk = np.where(gf.valid, gf.molar_density, 1.0)
        lk_ok = lk_ok | q_srk
    return dict(tcf=tcf, pcf=pcf, tcp=tcp, pcp=pcp, omp=omp, lk_ok=lk_ok, q_srk=q_srk, lk_reason=lk_reason,
                lk_rho_fill=gf.molar_density, lk_z_fill=gf.z, lk_tr_fill=gf.reduced_temperature,
                lk_pr_fill=gf.reduced_pressure, lk_p_fill=gf.pressure, lk_peak=np.where(lk_ok, gp.pressure, np.nan),
                lk_z_peak=gp.z, lk_tr_peak=gp.reduced_temperature, lk_pr_peak=gp.reduced_pressure,
                _omf=omf, _rho_lk=rho_lk, _kq=kq)


def _generalized_target_density(gas: Mixture, out: dict, rows: np.ndarray) -> np.ndarray:
    """The generalized model's molar density [mol/m3] at each row's target pressure and worst-case temperature
    (screen.generalized_density), for rows `rows` where the model applies (``lk_ok``; the quantum-gas SRK model
    where ``q_srk``); NaN where it does not apply or does not apply at that state."""
    out_rho = np.full(rows.size, np.nan)
    target, t_peak = out["target"][rows], out["t_peak"][rows]
    lk = out["lk_ok"][rows] & ~out["q_srk"][rows]
    if lk.any():
        r = rows[lk]
        st = lee_kesler_density(target[lk], t_peak[lk], out["tcp"][r], out["pcp"][r], out["omp"][r])
        out_rho[lk] = np.where(st.valid, st.molar_density, np.nan)
    q = out["q_srk"][rows]
    if q.any():
        g = gas.components[0]
        st = srk_quantum_density(target[q], t_peak[q], g.classical_critical_temperature,
                                 g.classical_critical_pressure, g.molar_mass)
        out_rho[q] = np.where(st.valid, st.molar_density, np.nan)
    return out_rho


#: Columns a group computes per row (floats; NaN for none) besides the masks.
_FLOAT_COLUMNS = ("t_peak", "rho_molar", "peak_ref", "rho_ideal", "peak_ideal", "lk_rho_fill", "lk_z_fill",
                  "lk_tr_fill", "lk_pr_fill", "lk_peak", "lk_z_peak", "lk_tr_peak", "lk_pr_peak", "tcf", "pcf",
                  "tcp", "pcp", "omp", "dry", "liquid_full", "dpdt_liquid_full", "max_t", "max_p", "target",
                  "mass_rho", "crossing", "p_fill_ref")


def _reference_fill_columns(rows: Rows, fluid: ReferenceFluid, out: dict, fallback: np.ndarray,
                            given: np.ndarray | None = None, fills: dict | None = None) -> np.ndarray:
    """The reference fill state of permanent-gas rows: the density at the fill (PT flash, checked; where `given`
    [kg/m3] is finite, a fill by mass, that density and the pressure it has at the fill temperature,
    ``p_fill_ref``) and the peak on the same isochore (``rho_molar``, ``peak_ref``). Returns the fill's molar
    density as the flash gives it (a fill by mass: as given). `fills`: see :func:`_density_once`."""
    n = rows.p_fill.size
    gas, p_fill, t_fill, t_peak = rows.gas, rows.p_fill, rows.t_fill, out["t_peak"]
    by_mass = np.zeros(n, dtype=bool) if given is None else np.isfinite(given)
    rho_molar = np.full(n, np.nan)
    live = np.flatnonzero(~fallback & ~by_mass)
    rho_molar[live], ok_fill = _density_once(fluid, p_fill[live], t_fill[live], fills)
    fallback[live[~ok_fill]] = True
    # the single screening takes the fill's mass density and divides by the molar mass again: so here
    rho_ref = (rho_molar * gas.molar_mass) / gas.molar_mass
    mass = np.flatnonzero(by_mass)
    if mass.size:
        rho_molar[mass] = rho_ref[mass] = given[mass] / gas.molar_mass
        if not fluid.is_pseudo_pure:
            # a fill denser than the liquid at the triple point is an input error: per row, where it is raised
            fallback[mass[rho_ref[mass] > _rho_top(fluid, True)]] = True
        live = np.flatnonzero(~fallback & by_mass)
        if live.size:
            p, v, _rs = fluid.pressures(rho_ref[live], t_fill[live])
            out["p_fill_ref"][live] = p
            fallback[live[~v]] = True
    out["rho_molar"] = rho_ref
    peak_ref = out["peak_ref"]
    live = np.flatnonzero(~fallback)
    if live.size:
        p, v, _rs = fluid.pressures(rho_ref[live], t_peak[live])
        peak_ref[live] = p
        # a reference failure at the peak is rare on this path; leave such rows to the per-row path
        fallback[live[~v]] = True
    return rho_molar


def _generalized_limits(rows: Rows, out: dict, gen: dict, fallback: np.ndarray, t_lo: np.ndarray, t_hi: np.ndarray,
                        p_lo: np.ndarray, p_hi: np.ndarray,
                        vessels: np.ndarray | None = None) -> tuple[np.ndarray, np.ndarray]:
    """The generalized model's limits of permanent-gas rows (screen._limits): the gas temperature at which the
    isochore reaches the rating and the fill pressure whose peak is the target, by the model's inverse where it
    is sure of itself and by screen._root's scan (:func:`_scan_root`) where a root lies at the edge of the range;
    the quantum-gas SRK rows by the scan. Returns (temperatures [K], fill pressures [Pa]), NaN for none.

    `vessels` (each row's vessel, or None): the rows of one vessel (its scenarios) with the same isochore and
    rating share the model's inverse for the gas temperature at the rating (the one root of the same function,
    solved from the first such row's start; each row then decides on it within its own scan range, as before).
    The root is the same to the solve's tolerance (_SECANT_RTOL), far inside the solve tolerance of the limits
    (screen.P_TOL)."""
    n = rows.p_fill.size
    ceiling, t_fill, t_peak, target = rows.ceiling, rows.t_fill, out["t_peak"], out["target"]
    by_mass = out["by_mass"]
    lk_ok, q_srk, rho_lk, kq = gen["lk_ok"], gen["q_srk"], gen["_rho_lk"], gen["_kq"]
    tcf, pcf, omf, tcp, pcp, omp = (gen[k] for k in ("tcf", "pcf", "_omf", "tcp", "pcp", "omp"))
    peak_lk = out["lk_peak"]
    rows_lk = np.flatnonzero(lk_ok & ~fallback & ~q_srk)
    t_lk = np.full(n, np.nan)
    max_p_lk = np.full(n, np.nan)
    rows_q = np.flatnonzero(q_srk & ~fallback)
    if rows_q.size:
        # the quantum-gas model's limits, scanned as screen._root scans them
        def iso_q(t, ix):
            r = rows_q[ix]
            st = srk_quantum_pressure(rho_lk[r], t, *kq)
            return np.where(st.valid, st.pressure - ceiling[r], np.nan)

        rows_qp = rows_q[~by_mass[rows_q]]      # a fill by mass has no fill-pressure limit

        def fill_q(p, ix):
            r = rows_qp[ix]
            s1 = srk_quantum_density(p, t_fill[r], *kq)
            s2 = srk_quantum_pressure(np.where(s1.valid, s1.molar_density, 1.0), t_peak[r], *kq)
            return np.where(s1.valid & s2.valid, s2.pressure - target[r], np.nan)

        # above the model's temperature range the isochore cannot be evaluated: where it is below the rating at the
        # last scan point inside, no root; elsewhere the whole bracket first, then the scan (screen._root's order)
        none = _below_at_range_top(iso_q, t_lo[rows_q], t_hi[rows_q], lambda grid: grid <= _SRK_T_HI)
        rest = np.flatnonzero(~none)
        if rest.size:
            t_lk[rows_q[rest]] = _monotone_root(lambda t, ix: iso_q(t, rest[ix]), t_lo[rows_q[rest]],
                                                t_hi[rows_q[rest]])
        if rows_qp.size:
            max_p_lk[rows_qp] = _monotone_root(fill_q, p_lo[rows_qp], p_hi[rows_qp])
    if rows_lk.size:
        i = rows_lk

        def f_t(t, ix):
            rho, valid = lee_kesler_density_valid(ceiling[ix], t, tcp[ix], pcp[ix], omp[ix])
            return np.where(valid, rho / rho_lk[ix] - 1.0, np.nan)

        # generalized: T on the isochore at the ceiling pressure (density at the ceiling pressure = fill density)
        reach = ceiling[i] / pcp[i] <= 10.0
        x0 = np.minimum(t_peak[i] * np.clip(ceiling[i] / peak_lk[i], 0.2, 5.0), 3.9 * tcp[i])
        one = None
        if vessels is not None and i.size > 1:
            key = np.stack([vessels[i], ceiling[i], rho_lk[i], tcp[i], pcp[i], omp[i]], axis=1)
            _u, one, back = np.unique(key, axis=0, return_index=True, return_inverse=True)
            if one.size == i.size:
                one = None
        if one is None:
            root, conv = _secant(f_t, x0, f_t(x0, i), x0 * (1.0 + 1e-4), i)
        else:       # one solve per vessel and isochore (its first row's start), handed to its other rows
            root, conv = _secant(f_t, x0[one], f_t(x0[one], i[one]), x0[one] * (1.0 + 1e-4), i[one])
            root, conv = root[back.ravel()], conv[back.ravel()]

        def isochore_over_rating(rows_: np.ndarray):
            """T -> generalized isochore pressure minus the rating, for the rows rows_ (NaN out of range)."""
            def f(t, ix):
                r = rows_[ix]
                p, ok = lee_kesler_pressure_valid(rho_lk[r], t, tcp[r], pcp[r], omp[r])
                return np.where(ok, p - ceiling[r], np.nan)
            return f

        root = _settle_edges(isochore_over_rating(i), root, reach & conv, t_lo[i], t_hi[i])
        has = reach & conv & (root >= t_lo[i]) & (root <= t_hi[i])
        a, b = _linspace_bracket(t_lo[i], t_hi[i], root)
        edge = has & ((b / tcp[i] > _LK_TR_EDGE) | (ceiling[i] * b / root / pcp[i] > _LK_PR_EDGE))
        # a root beyond the range or a bracket at its edge: the scan decides, as screen._limits scans
        unsure = (~reach & (ceiling[i] / pcp[i] < 10.5)) | edge | (reach & ~conv)
        unsure |= reach & ~has & conv & (root > t_lo[i]) & (b / tcp[i] > _LK_TR_EDGE)
        t_lk[i[has & ~unsure]] = root[has & ~unsure]
        # the rating above the highest pressure of the Lee–Kesler range: no state the model gives reaches it, so
        # the scan finds no root (NaN stays)
        unsure &= ~_above_lk_pressures(ceiling[i], pcp[i])
        u = i[unsure]
        if u.size:     # the scan interval that holds the secant's root decides where it can; else the scan
            got, settled = _root_in_interval(isochore_over_rating(u), t_lo[u], t_hi[u],
                                             np.where(conv[unsure], root[unsure], np.nan))
            t_lk[u[settled]] = got[settled]
            u = u[~settled]
            none = _below_at_range_top(isochore_over_rating(u), t_lo[u], t_hi[u],
                                       lambda grid, tc=tcp[u]: grid / tc[:, None] <= _LK_TR_HI)
            scan = u[~none]
            if scan.size:
                t_lk[scan] = _scan_root(isochore_over_rating(scan), t_lo[scan], t_hi[scan])

        # generalized: the fill pressure whose peak is the target: density at the target and the peak
        # temperature, then the pressure of that density at the fill temperature
        sd = lee_kesler_density(target[i], t_peak[i], tcp[i], pcp[i], omp[i])
        rho_star = np.where(sd.valid, sd.molar_density, 1.0)
        sp = lee_kesler_pressure(rho_star, t_fill[i], tcf[i], pcf[i], omf[i])
        pstar = np.where(sd.valid & sp.valid, sp.pressure, np.nan)
        hasp = np.isfinite(pstar) & (pstar >= p_lo[i]) & (pstar <= p_hi[i])
        a, b = _linspace_bracket(p_lo[i], p_hi[i], pstar)
        edgep = hasp & ((b / pcf[i] > _LK_PR_EDGE) | (target[i] * b / pstar / pcp[i] > _LK_PR_EDGE))
        unsure = (edgep | (~np.isfinite(pstar) & (target[i] / pcp[i] < 10.5))) & ~by_mass[i]
        ok = hasp & ~unsure
        max_p_lk[i[ok]] = pstar[ok]
        unsure &= ~_above_lk_pressures(target[i], pcp[i])   # a target no peak of the model reaches: none
        u = i[unsure]
        if u.size:
            def fill_over_target(rows_: np.ndarray):
                """p -> generalized peak of the fill pressure p minus the target, for the rows rows_ (NaN where
                the model does not apply)."""
                def f(p, ix):
                    r = rows_[ix]
                    rho1, ok1 = lee_kesler_density_valid(p, t_fill[r], tcf[r], pcf[r], omf[r])
                    p2, ok2 = lee_kesler_pressure_valid(np.where(ok1, rho1, 1.0), t_peak[r], tcp[r], pcp[r], omp[r])
                    return np.where(ok1 & ok2, p2 - target[r], np.nan)
                return f

            root, settled = _root_in_interval(fill_over_target(u), p_lo[u], p_hi[u], pstar[unsure])
            max_p_lk[u[settled]] = root[settled]
            scan = u[~settled]
            if scan.size:
                max_p_lk[scan] = _scan_root(fill_over_target(scan), p_lo[scan], p_hi[scan])
    return t_lk, max_p_lk


def _reference_limits(rows: Rows, fluid: ReferenceFluid, pure: bool, out: dict, fallback: np.ndarray,
                      t_lk: np.ndarray, max_p_lk: np.ndarray, t_lo: np.ndarray, t_hi: np.ndarray, p_lo: np.ndarray,
                      p_hi: np.ndarray) -> None:
    """The reference model's limits of permanent-gas rows, and with the generalized ones (t_lk, max_p_lk) the
    lowest: the highest gas temperature (solved only where it can be below the generalized one), the highest
    fill pressure and the fill density whose peak is the target (screen._limits, screen._mass_limit)."""
    n = rows.p_fill.size
    ceiling, t_fill, t_peak, target = rows.ceiling, rows.t_fill, out["t_peak"], out["target"]
    rho_ref, peak_ref = out["rho_molar"], out["peak_ref"]
    # reference: max temperature, solved only where it can be below the generalized one
    live = np.flatnonzero(~fallback)
    t_ref = np.full(n, np.nan)
    if live.size:
        need = live.copy()
        top = np.minimum(t_hi, fluid.t_max)     # the reference equation's range caps the scan
        with_lk = np.isfinite(t_lk[live]) & (t_lk[live] <= top[live])
        if with_lk.any():
            j = live[with_lk]
            pj, vj, _ = fluid.pressures(rho_ref[j], t_lk[j])
            fallback[j[~vj]] = True
            below = vj & (pj < ceiling[j])         # reference still under the ceiling there: its root is higher
            need = np.setdiff1d(live, j[below])
        need = need[~fallback[need]]
        if need.size:
            def f_ref(t, ix):
                p, _v, _r = fluid.pressures(rho_ref[ix], t)
                return p / ceiling[ix] - 1.0

            root, ok = _increasing_root(f_ref, need, t_lo[need], t_peak[need], peak_ref[need] / ceiling[need] - 1.0,
                                        t_hi[need], fluid.t_max)
            fallback[need[~ok]] = True
            t_ref[need[ok]] = root[ok]
    out["max_t"] = np.fmin(t_lk, t_ref)

    # reference: max fill pressure, density at the target on the peak isochore, then its fill pressure
    live = np.flatnonzero(~fallback)
    max_p_ref = np.full(n, np.nan)
    rho_star_ref = np.full(n, np.nan)
    if live.size:
        rs, vs = _densities(fluid, target[live], t_peak[live])
        rho_star_ref[live] = rs
        ps = np.full(live.size, np.nan)
        vp = np.zeros(live.size, dtype=bool)
        if vs.any():
            ps[vs], vp[vs], _r = fluid.pressures(rs[vs], t_fill[live][vs])
        fallback[live[~(vs & vp)]] = True
        hasp = vs & vp & (ps >= p_lo[live]) & (ps <= p_hi[live])
        max_p_ref[live[hasp]] = ps[hasp]
    out["max_p"] = np.fmin(max_p_lk, max_p_ref)

    # mass limit (screen._mass_limit): the reference density at the target on the peak isochore, inside
    # the scan range screen uses (peaks near the critical temperature went per row above)
    try:
        rho_top = _rho_top(fluid, pure)
    except NotApplicable:
        rho_top = None
    if rho_top is not None:
        live = np.flatnonzero(~fallback)
        r = rho_star_ref[live]
        inside = np.isfinite(r) & (r >= 1e-6 * rho_top) & (r <= 0.999 * rho_top)
        # the generalized model's density at the target where it is lower (screen._mass_limit)
        got = live[inside]
        out["mass_rho"][got] = np.fmin(r[inside], _generalized_target_density(rows.gas, out, got))


def _columns(rows: Rows, limits: bool = True, shared_fills: bool = False, vessels: np.ndarray | None = None,
             fills: dict | None = None, limit_rows: np.ndarray | None = None) -> dict:
    """Every model, the phase boundary and the limits for rows of one pure permanent gas, as arrays
    (`limits` False: the models alone, for the states of tolerance corners, see :func:`_corner_peaks`;
    `limit_rows`: where given, the rows whose limits are solved, the others' NaN (a vessel with tolerances, whose
    limits are its expected corner's, see :func:`_screen_expanded`);
    `shared_fills`: rows repeat fills, each solved once, see :func:`_generalized_columns`, and each distinct
    fill density meets the dome once; `vessels`: each row's vessel, where a vessel has several rows (its
    scenarios), which then share the solve of the one limit that does not depend on the scenario, see
    :func:`_generalized_limits`; `fills`: {"reference": {}, "generalized": {}}, the fill states solved by the
    tables of one screening so far, see :func:`_density_once` and :func:`_lk_density_shared`).

    A row filled by mass (rows with ``rho_mass`` [kg/m3], finite for such a row; its ``p_fill`` is NaN) starts from
    that density: its fill pressure on each model is that model's pressure at the fill temperature, and it has no
    fill-pressure limit (screen._limits).

    Returns a dict of the arrays named in _FLOAT_COLUMNS plus ``stated`` (the stated gas temperature is the
    worst-case basis), ``lk_ok``, ``lk_reason``, ``by_mass``, ``fill_over`` (the fill itself at or above the rating
    on a real-gas model) and ``fallback`` (rows that must go per row)."""
    n = rows.p_fill.size
    gas = rows.gas
    g = gas.components[0]
    p_fill, t_fill, rated, atm, margin_req = rows.p_fill, rows.t_fill, rows.rated, rows.atm, rows.margin_req
    given = getattr(rows, "rho_mass", None)
    by_mass = np.zeros(n, dtype=bool) if given is None else np.isfinite(given)
    by_pressure = ~by_mass
    t_peak, stated, fill_governs, t_exposure = worst_case(rows.ambient_max, rows.gas_temperature, t_fill)
    fallback = np.zeros(n, dtype=bool)
    nan = np.full(n, np.nan)
    out = {k: nan.copy() for k in _FLOAT_COLUMNS}
    out.update(t_peak=t_peak, stated=stated, fill_governs=fill_governs, t_exposure=t_exposure, fallback=fallback, lk_ok=np.zeros(n, dtype=bool),
               lk_reason=np.full(n, "", dtype=object),
               gas_below_ambient=~np.isnan(rows.gas_temperature) & (rows.gas_temperature < rows.ambient_max),
               by_mass=by_mass, fill_over=np.zeros(n, dtype=bool))
    try:
        fluid = reference_fluid((g.coolprop_name,), (1.0,))
    except NotApplicable:
        fallback[:] = True
        return out
    tc_ref = fluid.critical_temperature
    # both temperatures above the critical temperature: a single-phase fluid, no saturation checks
    fallback |= ~(np.minimum(t_fill, t_peak) > max(tc_ref, g.critical_temperature))
    fallback |= (t_fill < fluid.t_min) | (t_peak > fluid.t_max)
    pure = not fluid.is_pseudo_pure
    if pure:
        # fills near the critical temperature (the liquid-like rule, the mass limit capped at the critical
        # density): per row
        fallback |= t_fill <= _screen.LIQUID_LIKE_TEMPERATURE_RATIO * tc_ref

    # --- reference fill state: density at the fill (PT flash, checked), peak on the same isochore
    rho_molar = _reference_fill_columns(rows, fluid, out, fallback, given,
                                        None if fills is None else fills["reference"])

    # --- where the isochore meets the dome (pure fluids; the pseudo-pure air has no phase analysis)
    if pure and limits:
        _dome_columns(fluid, rho_molar, out, fallback, shared=shared_fills)

    # --- ideal
    out["rho_ideal"] = rho_ideal = np.where(by_mass, out["rho_molar"], p_fill / (R * t_fill))
    out["peak_ideal"] = rho_ideal * R * t_peak

    # --- generalized, as arrays
    gen = _generalized_columns(gas, p_fill, t_fill, t_peak,
                               None if not by_mass.any() else np.where(by_mass, out["rho_molar"], np.nan),
                               shared_fills=shared_fills, fills=None if fills is None else fills["generalized"])
    out.update({k: v for k, v in gen.items() if not k.startswith("_")})
    lk_ok, q_srk = gen["lk_ok"], gen["q_srk"]
    # the vectorised limits assume constant critical constants (not the quantum correction)
    if any(c.quantum for c in gas.components):
        fallback |= lk_ok & ~q_srk
    if not limits:
        return out

    # --- the fill itself at or above the rating (screen._fill_over_rating): the fill pressure, or for a mass fill
    # each applicable real-gas model's pressure at the fill
    with np.errstate(invalid="ignore"):
        out["fill_over"] = np.where(by_pressure, p_fill >= rated,
                                    ~(out["p_fill_ref"] < rated) | (lk_ok & (out["lk_p_fill"] >= rated)))

    # --- limits: targets and scan ranges as screen._limits has them
    out["target"] = target = atm + (rows.ceiling - atm) * (1.0 - margin_req)
    t_lo = np.minimum(t_fill, t_peak)
    t_hi = np.maximum(t_peak, t_fill) + 300.0
    p_lo = atm * 1.01
    p_hi = np.maximum(target, p_fill) * np.maximum(1.0, t_fill / t_peak) * 1.05

    # rows left out of the limits count as fallen back for their solves, and only for those
    skip = fallback if limit_rows is None else fallback | ~limit_rows
    t_lk, max_p_lk = _generalized_limits(rows, out, gen, skip, t_lo, t_hi, p_lo, p_hi, vessels)

    _reference_limits(rows, fluid, pure, out, skip, t_lk, max_p_lk, t_lo, t_hi, p_lo, p_hi)
    if limit_rows is not None:
        fallback |= skip & limit_rows
    # a fill by mass: no fill-pressure limit, and no temperature limit where the fill itself is over the rating
    out["max_p"][by_mass] = np.nan
    out["max_t"][by_mass & out["fill_over"]] = np.nan

    # vapour pressure where the isochore leaves the dome (isochore.isochore_phases: crossing_pressure)
    _crossing_columns(fluid, out, fallback)
    return out


def _opt(x) -> float | None:
    return None if x != x else float(x)     # NaN: None (x != x only for NaN)


def _exposure_warnings(cols: dict, k: int, name: str | None) -> list[dict]:
    """Row k's warnings of the worst-case step (a stated gas temperature below the ambient maximum, the fill
    state governing), in the single screening's order."""
    warnings: list[dict] = []
    if cols["gas_below_ambient"][k]:
        warnings.append(_screen.gas_below_ambient_warning(name))
    if cols["fill_governs"][k]:
        warnings.append(_screen.fill_state_warning(name or "exposure", float(cols["t_exposure"][k]),
                                                   float(cols["t_peak"][k])))
    return warnings


def _verdict(cols: dict, k: int, molar_mass: float, rated: float, relief: float | None, atm: float,
             required_margin: float, max_ratio: float | None, name: str | None, bounding: float | None = None) -> dict:
    """One row's verdict, reasons, margins, governing model and warnings (through screen.decide); `bounding`:
    the bounding peak under the input tolerances [Pa], decided on where it is higher (as screen._screen_at)."""
    warnings = _exposure_warnings(cols, k, name)
    peak_ref = float(cols["peak_ref"][k])
    peak_gen = float(cols["lk_peak"][k]) if cols["lk_ok"][k] else None
    gov_name, peak = _highest(peak_gen, peak_ref)
    if bounding is not None:
        peak = max(peak, bounding)
    disagree = _screen.models_disagree(peak_gen, peak_ref)
    if disagree:
        warnings.append(disagree)
    ratio_reason = _screen.filling_ratio_reason(float(cols["rho_molar"][k]) * molar_mass, max_ratio)
    verdict, reasons, margin, relief_margin = _screen.decide(
        peak=peak, rated=rated, relief=relief, atm=atm, required_margin=required_margin, any_real_model=True,
        out_of_scope_reason=None, liquid_full_reason=None, filling_ratio_reason=ratio_reason,
        fill_over=bool(cols["fill_over"][k]))
    return {"verdict": verdict, "reasons": reasons, "warnings": warnings, "margin_fraction": margin,
            "relief_margin_fraction": relief_margin, "governing_model": gov_name, "peak_pressure_pa": peak,
            "applicable": _APPLICABLE[True, peak_gen is not None]}


#: The names of a row's applicable models, keyed by (the ideal gas applies, the generalized model applies): one
#: tuple shared by the rows (read only), in the order the models are listed; the reference model always applies.
_APPLICABLE = {(ideal, gen): ("ideal",) * ideal + ("generalized",) * gen + ("reference",)
               for ideal in (False, True) for gen in (False, True)}


def _verdict_columns(cols: dict, n: int, verdicts: Iterable[tuple[int, dict]]) -> None:
    """Rows' verdicts ((row, :func:`_verdict` or :func:`_liquefied_verdict`) pairs) into the columns as a batch's
    plain rows keep them until their chunk is written: ``verdict`` (its word, margins, governing model, peak and
    applicable models, one tuple a row), ``verdict_reasons`` and ``verdict_warnings`` (tuples of texts), each in its
    own object array (None on the other rows; :func:`_verdict_of` gives a row's back). A tuple of numbers and texts
    held by an array alone leaves the garbage collector's lists at its first look, where a dict of lists a row
    (or a tuple holding a tuple) would be traced by its collections as long as the chunk lives."""
    word, reasons, warnings = (np.full(n, None, dtype=object) for _ in range(3))
    for k, v in verdicts:
        word[k] = (v["verdict"], v["margin_fraction"], v["relief_margin_fraction"], v["governing_model"],
                   v["peak_pressure_pa"], tuple(v["applicable"]))
        reasons[k] = tuple(v["reasons"])
        # each warning's code and message, one after the other (a warning is a code and its sentence,
        # result.ScreeningWarning; a tuple holding dicts would stay in the collector's lists)
        ws = v["warnings"]
        warnings[k] = tuple(x for w in ws for x in (w["code"], w["message"])) if ws else ()
    cols["verdict"], cols["verdict_reasons"], cols["verdict_warnings"] = word, reasons, warnings


def _warnings_of(flat: tuple) -> list[dict]:
    """The warnings :func:`_verdict_columns` keeps one after the other, as dicts again."""
    return [{"code": flat[i], "message": flat[i + 1]} for i in range(0, len(flat), 2)] if flat else []


def _verdict_of(cols: dict, k: int) -> dict:
    """Row k's verdict kept by :func:`_verdict_columns`, as :func:`_verdict` gives it (its lists as tuples; the
    layouts copy them)."""
    word, margin, relief_margin, governing, peak, applicable = cols["verdict"][k]
    return {"verdict": word, "reasons": cols["verdict_reasons"][k],
            "warnings": _warnings_of(cols["verdict_warnings"][k]), "margin_fraction": margin,
            "relief_margin_fraction": relief_margin, "governing_model": governing, "peak_pressure_pa": peak,
            "applicable": applicable}


def _highest(peak_gen: float | None, peak_ref: float) -> tuple[str, float]:
    """(name, peak) of the governing model: the highest real-gas peak (screen._governing), the generalized model's
    where the two tie or the generalized model does not apply; the ideal gas governs nothing."""
    if peak_gen is None or peak_ref > peak_gen:
        return "reference", peak_ref
    return "generalized", peak_gen


def _generalized_model(cols: dict, k: int, gas: Mixture) -> dict:
    """Row k's generalized model as screen._generalized (or screen._quantum_generalized) lays it out."""
    if cols["lk_ok"][k]:
        gen = {"applicable": True, "peak_pressure_pa": float(cols["lk_peak"][k]),
               "note": _screen.QUANTUM_SRK_NOTE if cols["q_srk"][k] else "Lee–Kesler corresponding states",
               "fill_molar_density_mol_m3": float(cols["lk_rho_fill"][k]),
               "z_fill": float(cols["lk_z_fill"][k]), "z_peak": float(cols["lk_z_peak"][k]),
               "reduced_temperature_fill": float(cols["lk_tr_fill"][k]),
               "reduced_pressure_fill": float(cols["lk_pr_fill"][k]),
               "reduced_temperature_peak": float(cols["lk_tr_peak"][k]),
               "reduced_pressure_peak": float(cols["lk_pr_peak"][k]),
               "pseudocritical_temperature_k": float(cols["tcp"][k]), "pseudocritical_pressure_pa": float(cols["pcp"][k]),
               "pseudocritical_temperature_fill_k": float(cols["tcf"][k]),
               "pseudocritical_pressure_fill_pa": float(cols["pcf"][k]),
               "acentric_factor": float(cols["omp"][k]), "mixing_rule": None,
               "quantum_correction": any(c.quantum for c in gas.components)}
        if cols["q_srk"][k]:
            gen["method"] = _screen.QUANTUM_SRK_METHOD
    else:
        gen = {"applicable": False, "peak_pressure_pa": None,
               "note": f"Lee–Kesler correlation outside its range: {cols['lk_reason'][k]}",
               "fill_molar_density_mol_m3": None}
    return gen


def _assemble(case: Case, cols: dict, k: int, v: dict | None = None, sun: SunRow | None = None) -> Result:
    """One row's result, laid out as screen.screen_states lays out a single-scenario result."""
    return Result.from_json(_row_dict(case, cols, k, v, sun))


def _one_scenario(case: Case, result: dict, sun: SunRow | None) -> dict:
    """A one-scenario row's result with its scenario listed beside it, folded as screen_case folds it
    (screen.fold_scenarios)."""
    if not hasattr(case, "scenarios"):
        return result
    name = case.scenarios[0].name if case.scenarios else "exposure"
    balance = sun.balance if sun is not None else None
    if type(case) is CaseRow:   # a line of the batch's JSON: fold_scenarios of one scenario, in place
        result["scenarios"] = [_screen.scenario_summary(name, result, balance, True)]
        result["governing_scenario"], result["exposure"] = name, balance
        return result
    return _screen.fold_scenarios([(name, result, balance)])[1]


def _row_dict(case: Case, cols: dict, k: int, v: dict | None = None, sun: SunRow | None = None,
              fold: bool = True) -> dict:
    """One row's result as its JSON layout (:func:`_assemble`; the tolerance and scenario fold works on it).
    `fold` False: one scenario's result of a vessel screened with several (see :func:`_layout`)."""
    if cols.get("kind") == "liquefied":
        return _assemble_liquefied(case, cols, k, v, sun, fold)
    gas = case.gas
    fluid = reference_fluid((gas.components[0].coolprop_name,), (1.0,))
    atm = case.site.atmospheric_pressure_pa
    sc = case.scenarios[0] if getattr(case, "scenarios", ()) else case
    if v is None:
        v = _verdict(cols, k, gas.molar_mass, case.rated_pressure_pa, case.relief_set_pressure_pa, atm, case.required_margin,
                     case.max_filling_ratio_kg_m3, getattr(sc, "name", None))
    if sun is not None:   # the worst-case step's warnings (screen._worst_case_temperature), then the models'
        v = {**v, "warnings": _sun_warnings(v["warnings"], sun, _SUN_KEEPS)}
    t_fill, t_peak = float(case.fill_temperature_k), float(cols["t_peak"][k])
    rho_molar = float(cols["rho_molar"][k])
    rho_mass = rho_molar * gas.molar_mass
    by_pressure = case.fill_pressure_pa is not None
    # the reference equation's fill pressure: as filled, or for a fill by mass, at its density
    p_fill_ref = case.fill_pressure_pa if by_pressure else float(cols["p_fill_ref"][k])
    peak_ref, peak_ideal, rho_ideal = float(cols["peak_ref"][k]), float(cols["peak_ideal"][k]), float(cols["rho_ideal"][k])
    phase = "supercritical"   # both temperatures above the critical temperature, single phase
    ideal = {"applicable": True, "peak_pressure_pa": peak_ideal,
             "note": "ideal-gas law; shown for comparison, it ignores real-gas behaviour",
             "fill_molar_density_mol_m3": rho_ideal, "equation": "P v = R T, so at fixed density P2 = P1 T2 / T1"}
    gen = _generalized_model(cols, k, gas)
    ref = {"applicable": True, "peak_pressure_pa": peak_ref,
           "note": "multiparameter Helmholtz-energy equation of state (CoolProp)",
           "fill_molar_density_mol_m3": rho_molar, "fluid": fluid.label, "phase_fill": phase, "phase_peak": phase,
           "z_fill": p_fill_ref / (rho_molar * 8.314462618 * t_fill),
           "z_peak": peak_ref / (rho_molar * R * t_peak),
           "eos_references": _line_references(fluid) if type(case) is CaseRow else fluid.eos_references()}
    models = {"ideal": ideal, "generalized": gen, "reference": ref}
    gov_name, peak = v["governing_model"], v["peak_pressure_pa"]
    others = [nm for nm in v["applicable"] if nm not in (gov_name, "ideal")]
    governing_reason = _screen.governing_text(gov_name, others)
    ideal["off_governing_fraction"] = peak_ideal / peak - 1.0
    mass_limit = _mass_limit_of(case, cols, k)
    fill_over = case.fill_pressure_pa >= case.rated_pressure_pa if by_pressure else bool(cols["fill_over"][k])
    limits = _LIMITS(*mass_limit, None if fill_over else _opt(cols["max_t"][k]), _opt(cols["max_p"][k]),
                     float(cols["target"][k]), _screen.limits_note(True, fill_over, case), _opt(cols["liquid_full"][k]),
                     _opt(cols["dry"][k]), _opt(cols["crossing"][k]), _opt(cols["dpdt_liquid_full"][k]))
    mass = (rho_mass if by_pressure else case.fill_mass_kg / case.water_capacity_m3) * case.water_capacity_m3
    return _layout(case, cols, k, v, sun, (rho_mass, rho_molar, mass, phase, None), models, peak, gov_name,
                   governing_reason, 1.0 - (peak - atm) / (case.rated_pressure_pa - atm), limits, fold)


#: The JSON objects of a result and of its parts laid out from their fields given by position, in these orders
#: (result.json_record: the keys' order is result.py's); a row's "row" is the batch's to add. A result's: the case's
#: parts (screen.case_parts) in a dict, then its outcome.
_CASE_PARTS = ("id", "description", "source", "tool_version", "input_sha256", "site", "gas", "vessel", "inputs",
               "display_units")
_OUTCOME = ("verdict", "reasons", "warnings", "fill", "worst_case_temperature_k", "worst_case_basis", "models",
            "peak_pressure_pa", "nominal_peak_pressure_pa", "tolerance", "governing_model", "governing_reason",
            "rated_pressure_pa", "relief_set_pressure_pa", "required_margin_fraction", "required_margin_is_default",
            "margin_fraction", "relief_margin_fraction", "nominal_margin_fraction", "limits", "phase_diagram",
            "scenarios", "governing_scenario", "exposure")
_RESULT = json_record(Result, ("row",), _OUTCOME, _CASE_PARTS + ("curves", "cautions"))
#: A result's JSON object as a batch's JSON line holds it: without the curves and the cautions (a CaseRow's layout).
_LINE = json_record(Result, ("row", "curves", "cautions"), _OUTCOME, _CASE_PARTS)
_FILL = json_record(Fill, (), ("pressure_pa", "temperature_k", "temperature_given", "density_kg_m3",
                               "molar_density_mol_m3", "mass_kg", "phase", "filling_ratio_kg_per_l",
                               "vapour_pressure_pa", "given"))
_LIMITS = json_record(Limits, (), ("max_fill_mass_kg", "max_filling_ratio_kg_per_l", "max_fill_mass_basis",
                                   "max_gas_temperature_k", "max_fill_pressure_pa", "target_peak_pressure_pa", "note",
                                   "liquid_full_temperature_k", "dry_out_temperature_k", "phase_boundary_pressure_pa",
                                   "dp_dt_after_liquid_full_pa_k"))
#: (max_fill_mass_kg, max_filling_ratio_kg_per_l, max_fill_mass_basis) where there is no fill-mass limit.
_NO_MASS_LIMIT = (None, None, None)


def _mass_limit_of(case: Case, cols: dict, k: int) -> tuple:
    """Row k's fill-mass limit (max_fill_mass_kg, max_filling_ratio_kg_per_l, max_fill_mass_basis) as
    screen._mass_limit gives it: the target's density (``mass_rho``), on liquefied-gas columns capped by the
    liquid-full density (``lf_density``; none where that is not known), then by the vessel's filling ratio."""
    mass_rho = _opt(cols["mass_rho"][k])
    basis = "the required margin at the worst-case temperature"
    if cols.get("kind") == "liquefied":
        lf_density = _opt(cols["lf_density"][k])
        if lf_density is None:
            return _NO_MASS_LIMIT
        if mass_rho is not None and lf_density < mass_rho:
            mass_rho, basis = lf_density, "the liquid-full point at the worst-case temperature"
    if mass_rho is None:
        return _NO_MASS_LIMIT
    rm = mass_rho * case.gas.molar_mass
    if case.max_filling_ratio_kg_m3 is not None and case.max_filling_ratio_kg_m3 < rm:
        rm, basis = case.max_filling_ratio_kg_m3, "the vessel's maximum filling ratio"
    return (rm * case.water_capacity_m3, rm / 1000.0, basis)


def _corner_limit_values(case: Case, cols: dict, k: int) -> dict:
    """The limits of row k of a table of tolerance corners, as screen._limits names them (for
    screen.take_off_tolerances)."""
    mass = _mass_limit_of(case, cols, k)
    return {"max_fill_mass_kg": mass[0], "max_filling_ratio_kg_per_l": mass[1], "max_fill_mass_basis": mass[2],
            "max_gas_temperature_k": _opt(cols["max_t"][k]), "max_fill_pressure_pa": _opt(cols["max_p"][k])}


def _layout(case: Case, cols: dict, k: int, v: dict, sun: SunRow | None, fill: tuple, models: dict,
            peak: float | None, governing_model: str | None, governing_reason: str, nominal_margin: float | None,
            limits: dict, fold: bool = True) -> dict:
    """Row k's one-scenario result laid out as screen.screen_states lays it out (both column kinds), as the JSON
    object ``Result.to_json`` writes (the same keys in the same order, JSON values; tests/test_batch_json.py):
    `fill` is (density [kg/m3], molar density [mol/m3], mass [kg], phase, vapour pressure at fill [Pa]), each
    None where not established. `fold` False: the result as it is, its "scenarios", "governing_scenario" and
    "exposure" None (one scenario of several, which the caller folds with the others by screen.fold_scenarios),
    instead of folded as the vessel's only scenario (:func:`_one_scenario`)."""
    rho_mass, rho_molar, mass, phase, vapour_pressure = fill
    if type(case) is CaseRow:   # a line of the batch's JSON: its case's parts laid out by the column reader
        record, parts = _LINE, case.parts
    else:
        record, parts = _RESULT, _screen.case_parts(case)
        parts["curves"] = None
    p_fill = case.fill_pressure_pa
    # in _OUTCOME's order; scenarios, governing_scenario and exposure are folded in by _one_scenario
    result = record(
        parts, v["verdict"], list(v["reasons"]), list(v["warnings"]),
        _FILL(p_fill, float(case.fill_temperature_k), True, rho_mass, rho_molar, mass, phase,
              rho_mass / 1000.0 if rho_mass else None, vapour_pressure, "pressure" if p_fill is not None else "mass"),
        float(cols["t_peak"][k]),
        (sun.basis if sun is not None else _screen.FILL_STATE_BASIS if cols["fill_governs"][k] else
         "gas temperature stated in the case" if cols["stated"][k] else "ambient maximum"),
        models, peak, peak, None, governing_model, governing_reason, case.rated_pressure_pa,
        case.relief_set_pressure_pa, case.required_margin, case.required_margin_is_default, v["margin_fraction"],
        v["relief_margin_fraction"], nominal_margin, limits, None, None, None, None)
    return _one_scenario(case, result, sun) if fold else result


# ----------------------------------------------------------------------------- tolerances and scenarios as rows

def _density_once(fluid: ReferenceFluid, p: np.ndarray, t: np.ndarray,
                  fills: dict | None = None) -> tuple[np.ndarray, np.ndarray]:
    """fluid.density at each row's (p, t) [mol/m3] and whether it applies, each distinct state solved once (the
    states of tolerance corners repeat across scenarios, and an inventory repeats its fills). `fills`: {(p, t):
    (density, applies)} of the states solved by an earlier table of the same screening (a vessel's nominal fill,
    met again among its tolerance states), read and added to: each state is solved on its own, so a state's
    density is the same number whichever table solved it."""
    if p.size == 0:
        return np.empty(0), np.zeros(0, dtype=bool)
    if fills is not None:
        keys = list(zip(p.tolist(), t.tolist()))
        todo = [key for key in dict.fromkeys(keys) if key not in fills]
        if todo:
            a = np.array(todo, dtype=float)
            values, valid = _densities(fluid, a[:, 0], a[:, 1])
            fills.update(zip(todo, zip(values.tolist(), valid.tolist())))
        got = [fills[key] for key in keys]
        return np.array([g[0] for g in got], dtype=float), np.array([g[1] for g in got], dtype=bool)
    if p.size == 1:             # nothing to share (np.unique's cost is then most of the row's)
        return _densities(fluid, p, t)
    uniq, back = np.unique(np.stack([p, t], axis=1), axis=0, return_inverse=True)
    values, valid = _densities(fluid, uniq[:, 0], uniq[:, 1])
    back = back.ravel()
    return values[back], valid[back]


def expandable(case: Case) -> bool:
    """Whether a row with input tolerances or several scenarios goes on the array path, its scenarios and
    tolerance corners as extra rows of the table (:func:`_screen_expanded`)."""
    scenarios = getattr(case, "scenarios", ())
    if getattr(case, "tolerance", None) is None and len(scenarios) <= 1:
        return False
    return (_vector_gas(case.gas) and case.fill_pressure_pa is not None and case.fill_temperature_k is not None
            and bool(scenarios) and all(getattr(s, "solar", "none") in ("none", "sun") for s in scenarios))


def _scenario_rows(cases: list[Case], balances: dict | None = None) -> tuple[dict[int, list[SunRow]],
                                                                            list[tuple[int, int]]]:
    """({case index: its scenarios' worst cases (:func:`_exposure_row`)}, [(case index, scenario index)], the rows
    of a table with a row per scenario). A case whose worst case raises is left out: the per-row path raises it
    again, in its place. `balances`: see :func:`_worst_case`."""
    exposures: dict[int, list[SunRow]] = {}
    balances = {} if balances is None else balances
    for i, c in enumerate(cases):
        try:
            exposures[i] = [_exposure_row(c, sc, balances) for sc in c.scenarios]
        except (InputError, ValueError):
            continue
    return exposures, [(i, j) for i, rows in exposures.items() for j in range(len(rows))]


def _exposure_row(case: Case, sc, balances: dict | None = None) -> SunRow:
    """One scenario's worst case as screen._worst_case_temperature finds it (basis, energy balance, warnings),
    with its highest exposure temperature. Raises InputError as the single screening does. `balances`: see
    :func:`_worst_case`."""
    basis, balance, warnings = _worst_case(case, sc, balances)
    t_exposure = max(t for t in (sc.gas_temperature_k, sc.ambient_max_k,
                                 balance["wall_temperature_k"] if balance is not None else None) if t is not None)
    return SunRow(basis, balance, warnings, t_exposure)


def _state_rows(gas: Mixture, states: list[tuple[float, float, float]]) -> Rows:
    """Rows of states (fill pressure [Pa], fill temperature [K], worst-case temperature [K]) for their models
    alone: the worst case enters as the stated gas temperature, so that the row's screened temperature is
    screen.screened_temperature of it and the fill temperature, as at a tolerance corner (screen._corner_state)."""
    a = np.array(states, dtype=float).reshape(-1, 3)
    nan, one = np.full(a.shape[0], np.nan), np.ones(a.shape[0])
    return Rows(gas, a[:, 0], a[:, 1], nan, a[:, 2], 2.0 * a[:, 0], one, 0.0 * one, nan)


def _corner_peaks(gas: Mixture, states: list[tuple[float, float, float]], fills: dict | None = None) -> dict:
    """{state: its corner peaks as screen._corner_peak gives them, or None where the row must go per row}, every
    state a row of one table. On this path (single phase, away from the critical and dense-fluid regions) no
    state is out of scope or liquid-full: a state where that cannot be shown falls back. `fills`: see
    :func:`_columns`."""
    if not states:
        return {}
    cols = _Listed(_columns(_state_rows(gas, states), limits=False, shared_fills=True, fills=fills))
    fallback = cols["fallback"]
    return {s: None if fallback[k] else _state_peaks(cols, k) for k, s in enumerate(states)}


def _state_peaks(cols: dict, k: int) -> dict:
    """Row k's peaks as screen._corner_peak gives them (the row did not fall back)."""
    peaks = {"ideal": float(cols["peak_ideal"][k]),
             "generalized": float(cols["lk_peak"][k]) if cols["lk_ok"][k] else None,
             "reference": float(cols["peak_ref"][k])}
    peaks["governing"] = _screen.governing_peak(peaks)
    peaks["_out_of_scope"] = peaks["_liquid_full"] = None
    return peaks


def _drive(gas: Mixture, steps: dict, known: dict | None = None, fills: dict | None = None) -> dict:
    """Run the tolerance generators (screen.tolerance_steps) of many vessels of a permanent gas in lockstep: each
    round's states of every vessel are rows of one table (:func:`_corner_peaks`); `known` gives the peaks of
    states already evaluated (each vessel's nominal state and its expected corner, screen.expected_corner: rows of
    its nominal table, the same numbers; the second round then costs no table of its own where every vessel's
    expected corner is confirmed); `fills`: the fill states solved so far (:func:`_columns`). Returns {key:
    tolerance block or None (per row)}."""
    return _drive_states(steps, lambda todo: _corner_peaks(gas, todo, fills), known)


def _drive_states(steps: dict, corner_peaks: Callable[[list], dict], known: dict | None = None,
                  tags: dict | None = None) -> dict:
    """:func:`_drive` with the table of a round's states given (`corner_peaks`: {state: its corner peaks or None}
    of a list of states). `tags`: {key: a value put in front of each of that vessel's states}, where the states
    the generator yields do not fix the state alone (a fill by mass: the fill density); `known` then holds tagged
    states."""
    done: dict = {}
    peaks = dict(known or {})
    if tags is None:
        asked = {key: next(gen) for key, gen in steps.items()}
    else:
        asked = {key: [(tags[key], *s) for s in next(gen)] for key, gen in steps.items()}
    while asked:
        todo = [s for s in dict.fromkeys(s for states in asked.values() for s in states) if s not in peaks]
        peaks.update(corner_peaks(todo))
        nxt = {}
        for key, states in asked.items():
            got = [peaks[s] for s in states]
            if any(g is None for g in got):
                done[key] = None
                continue
            try:
                states = steps[key].send(got)
            except StopIteration as stop:
                done[key] = stop.value
                continue
            nxt[key] = states if tags is None else [(tags[key], *s) for s in states]
        asked = nxt
    return done


def _screen_expanded(cases: list[Case], balances: dict | None = None) -> list[ResultData | None]:
    """Rows of one pure permanent gas with input tolerances and/or several scenarios, on the arrays: every
    scenario a row of the table, every tolerance corner (and the states of its sensitivities) an extra row; the
    rows folded back into one result per vessel as screen.screen_states gives it (tolerance block, scenarios, the
    governing scenario by screen.fold_scenarios). None where a row must go per row (a row of its table fell
    back, or its worst case raises)."""
    out: list[Result | None] = [None] * len(cases)
    gas = cases[0].gas
    exposures, keys = _scenario_rows(cases, balances)
    if not keys:
        return out
    # each scenario of each vessel a row, then the expected bounding corner of each one with tolerances
    # (screen.expected_corner, at its screened temperature as the row's column has it): its peaks serve the
    # tolerance analysis and its limits, with its vessel's rating, are the vessel's with the tolerances taken off
    # (screen._corner_limits)
    corner_of = {}
    for i, j in keys:
        c = cases[i]
        if c.tolerance is not None:
            t_fill = float(c.fill_temperature_k)
            corner_of[(i, j)] = _screen.expected_corner(
                c, t_fill, _screen.screened_temperature(exposures[i][j].t_exposure, t_fill))
    table = [(cases[i].fill_pressure_pa, cases[i].fill_temperature_k, exposures[i][j].t_exposure, i) for i, j in keys]
    table += [(p_c, tf_c, tg_c, i) for (i, _j), (p_c, tf_c, tg_c) in corner_of.items()]
    nominal = Rows(gas, *(np.array(v, dtype=float) for v in zip(*(
        (p, tf, math.nan, tg, cases[i].rated_pressure_pa, cases[i].site.atmospheric_pressure_pa,
         cases[i].required_margin,
         math.nan if cases[i].relief_set_pressure_pa is None else cases[i].relief_set_pressure_pa)
        for p, tf, tg, i in table))))
    # the fill states each table solves, for the tables after it (a vessel's nominal fill is among the states of
    # its tolerance analysis)
    fills: dict = {"reference": {}, "generalized": {}}
    # the columns read as lists (a row's values as Python numbers, without a numpy scalar per value)
    # a vessel with tolerances takes its limits from its expected corner's row: its own rows' are not solved
    cols = _Listed(_columns(nominal, shared_fills=True, vessels=np.array([i for *_s, i in table], dtype=float),
                            fills=fills, limit_rows=np.array([cases[i].tolerance is None for i, _j in keys]
                                                             + [True] * len(corner_of), dtype=bool)))
    fallback = cols["fallback"]
    bad = {i for (*_s, i), f in zip(table, fallback) if f}
    row_of = {key: k for k, key in enumerate(keys)}
    corner_row = {key: len(keys) + n for n, key in enumerate(corner_of)}
    steps, known = {}, {}
    for k, (i, j) in enumerate(keys):
        c = cases[i]
        if i in bad or c.tolerance is None:
            continue
        names = ["ideal"] + (["generalized"] if cols["lk_ok"][k] else []) + ["reference"]
        steps[(i, j)] = _screen.tolerance_steps(c, float(c.fill_temperature_k), float(cols["t_peak"][k]), names)
        # the nominal state (the steps' first) and the expected corner: the peaks of their rows of this table
        known[(c.fill_pressure_pa, float(c.fill_temperature_k), float(cols["t_peak"][k]))] = _state_peaks(cols, k)
        known[corner_of[(i, j)]] = _state_peaks(cols, corner_row[(i, j)])
    tolerances = _drive(gas, steps, known, fills=fills)
    bad |= {i for (i, _j), t in tolerances.items() if t is None}
    for i, rows in exposures.items():
        if i in bad:
            continue
        c = cases[i]
        per = []
        for j, (sc, ex) in enumerate(zip(c.scenarios, rows)):
            k = row_of[(i, j)]
            args = (cols, k, gas.molar_mass, c.rated_pressure_pa, c.relief_set_pressure_pa,
                    c.site.atmospheric_pressure_pa, c.required_margin, c.max_filling_ratio_kg_m3, sc.name)
            tol = tolerances.get((i, j))
            if tol is None:
                r = _row_dict(c, cols, k, _verdict(*args), sun=ex, fold=False)
            else:
                findings = tol.pop("_findings")
                if tol["bounding_peak_pressure_pa"] is None or findings["out_of_scope"] or findings["liquid_full"]:
                    break               # not on this path (see _corner_peaks): per row
                # decided once, on the bounding peak; the row's nominal figures from the nominal peak (the
                # tolerance block's, the governing peak of this very row: the same number)
                b = tol["bounding_corner"]
                if (b["fill_pressure_pa"], b["fill_temperature_k"], b["worst_case_temperature_k"]) \
                        != corner_of[(i, j)]:
                    break               # another corner bounds: its limits per row
                v = _verdict(*args, bounding=tol["bounding_peak_pressure_pa"])
                r = _row_dict(c, cols, k, {**v, "peak_pressure_pa": tol["nominal_peak_pressure_pa"]}, sun=ex,
                              fold=False)
                r.update(peak_pressure_pa=v["peak_pressure_pa"], tolerance=tol,
                         limits=_screen.take_off_tolerances(r["limits"],
                                                            _corner_limit_values(c, cols, corner_row[(i, j)]), c,
                                                            c.fill_pressure_pa >= c.rated_pressure_pa))
            for key in ("scenarios", "governing_scenario", "exposure"):
                r.pop(key, None)
            per.append((sc.name, r, ex.balance))
        else:
            out[i] = ResultData(_screen.fold_scenarios(per)[1])
    return out


# ----------------------------------------------------------------------------- the batch

class _RouteCounts:
    """Rows of the calling thread's last :func:`screen_cases` call on each route ("vectorised": the columns,
    "per_row": state by state), for the tests and benchmarks; per thread, so that concurrent requests of the
    web page never see each other's counts."""

    def __init__(self) -> None:
        self._local = threading.local()

    def set(self, vectorised: int, per_row: int) -> None:
        self._local.counts = {"vectorised": vectorised, "per_row": per_row}

    def _counts(self) -> dict:
        return getattr(self._local, "counts", {"vectorised": 0, "per_row": 0})

    def __getitem__(self, key: str) -> int:
        return self._counts()[key]

    def __eq__(self, other: object) -> bool:
        return self._counts() == other

    def __repr__(self) -> str:
        return repr(self._counts())


STATS = _RouteCounts()


def single(case: Case) -> Result:
    """One row through the state-by-state route (screen.screen_states), without plot data."""
    return _screen.screen_states(case, curves=False)


def _vector_gas(gas: Mixture) -> bool:
    return gas.is_pure and gas.kind == "permanent" and gas.components[0].coolprop_name is not None


def _run_columns(parts: list[Rows], fn: Callable[[Rows], dict] = _columns) -> list[dict]:
    """fn (_columns or _plain_columns) of every part; on two or more cores and enough rows, parts run in
    forked workers."""
    from screening import parallel

    return parallel.map_rows(fn, parts)


def screen_cases(cases: list[Case], progress: Callable[[int], None] | None = None, *,
                 data: bool = False) -> list[Result | ResultData | dict]:
    """Screen every case; results in the input order. `progress(n)` is told of rows done.

    A row whose screening raises InputError (e.g. a fill denser than any liquid) comes back as
    ``{"verdict": "input-error", "error": InputError}`` for the caller to place. With `data`, the rows folded from
    several scenarios or tolerance corners come back as :class:`~screening.result.ResultData` (their Result made
    where one is asked for); else every screened row as a Result.
    """
    results: list[dict | None] = [None] * len(cases)
    # groups by gas and by the columns that take them (a permanent gas: by pressure on _columns, by mass on
    # _liquefied_columns)
    groups: dict[tuple[str, bool], list[int]] = {}
    rest: list[int] = []
    sun: dict[int, SunRow | None] = {}
    balances: dict = {}             # the energy balances solved so far (_worst_case)
    expanded: dict[str, list[int]] = {}
    liquefied_scenarios: dict[str, list[int]] = {}
    for i, c in enumerate(cases):
        if expandable(c):
            expanded.setdefault(c.gas.name, []).append(i)
            continue
        if liquefied_expandable(c):
            liquefied_scenarios.setdefault(c.gas.name, []).append(i)
            continue
        liquefied = liquefied_vectorisable(c)
        if liquefied or vectorisable(c):
            try:
                sun[i] = _sun_row(c, balances)
            except InputError:
                rest.append(i)      # the per-row path raises it again, in its place
                continue
            groups.setdefault((c.gas.name, liquefied), []).append(i)
        else:
            rest.append(i)
    names = list(groups)
    all_cols = _run_columns([(LiquefiedRows if nm[1] or any(cases[i].fill_mass_kg is not None for i in groups[nm])
                              else Rows).of_cases([cases[i] for i in groups[nm]], [sun[i] for i in groups[nm]])
                             for nm in names], _group_columns)
    for nm, cols in zip(names, all_cols):
        idx = groups[nm]
        done = 0
        for k, i in enumerate(idx):
            if cols["fallback"][k]:
                rest.append(i)
            else:
                results[i] = _assemble(cases[i], cols, k, sun=sun[i])
                done += 1
        if progress:
            progress(done)
    for idx, screen_them in [(idx, _screen_expanded) for idx in expanded.values()] + [
            (idx, _screen_liquefied_scenarios) for idx in liquefied_scenarios.values()]:
        done = 0
        for i, r in zip(idx, screen_them([cases[i] for i in idx], balances)):
            if r is None:
                rest.append(i)
            else:
                results[i] = r
                done += 1
        if progress:
            progress(done)
    STATS.set(len(cases) - len(rest), len(rest))
    if not data:
        results = [r.result() if isinstance(r, ResultData) else r for r in results]
    for i in sorted(rest):
        try:
            results[i] = single(cases[i])
        except InputError as exc:
            results[i] = {"verdict": "input-error", "error": exc}
        if progress:
            progress(1)
    return results  # type: ignore[return-value]


def screen_case(case: Case, *, curves: bool = True) -> Result:
    """Screen one vessel: the engine on a table of one row (:func:`screen_cases`). The governing scenario's
    result (SI, pressures absolute; `Result.to_json()` is the JSON layout) with every scenario side by side.
    `curves`: add the plot data (:func:`with_plot_data`). Raises InputError where the case cannot be screened
    (e.g. a fill denser than any liquid)."""
    r = screen_cases([case])[0]
    if not isinstance(r, Result):
        raise r["error"]
    return with_plot_data(case, r) if curves else r


def with_plot_data(case: Case, r: Result) -> Result:
    """`r` with its curves and phase diagram (:func:`screening.screen.plot_data`, the one place they are
    computed), for the views that draw them."""
    c, pd = _screen.plot_data(case, r)
    return replace(r, curves=Curves.from_json(c) if c is not None else None,
                   phase_diagram=PhaseDiagram.from_json(pd) if pd is not None else None)


def screen_text(text: str, source: str = "<case>") -> Result:
    """Parse a TOML case text and screen it. Raises InputError on bad input."""
    return screen_case(parse_case_text(text, source))


def screen_file(path) -> Result:
    """Read a case file and screen it. Raises InputError on bad input."""
    return screen_case(load_case(path))


def slim(r: Result) -> dict:
    """The part of a result the batch table, CSV and counts use."""
    return r.summary_record()


class PlainScreening:
    """The screening of an inventory's plain rows: a slim result per row at once, the full result on demand.

    ``summaries[j]`` holds what the batch table, CSV and counts need (see :func:`slim`); ``full(j)`` gives
    the full Result of :func:`screen_cases` for the row (read again through the case reader for the
    row's own texts). Rows the vectorised path does not cover are screened per row, in full, here.
    """

    def __init__(self, plain: PlainRows, progress: Callable[[int], None] | None = None) -> None:
        self.plain = plain
        n = len(plain)
        self._slim: dict[int, dict] = {}         # {plain row: its summary} where the row went per row
        self._parts: dict[int, _SummaryParts] = {}   # {id of a group's columns: what its rows' summaries read}
        self._full: dict[int, dict] = {}
        self._where: dict[int, int] = {}         # {plain row: its index in its group's columns} ...
        self._group: dict[int, dict] = {}       # ... and those columns, where the row ran on the columns
        self._listed: dict[int, _Listed] = {}
        self._gas_parts: dict[int, orjson.Fragment] = {}    # {id of a gas: its result part's JSON} for the lines
        groups: dict[tuple[str, bool], list[int]] = {}
        rest: list[int] = []
        by_mass = ~np.isnan(plain.fill_mass_kg)
        on_columns = []
        routes: dict[tuple[int, bool], tuple[bool, bool]] = {}    # {(id of a gas, by mass): the row's route}
        for j, (gas, mass) in enumerate(zip(plain.gases, by_mass.tolist())):
            # a permanent gas with a dome filled by mass on the liquefied-gas columns; hydrogen, helium, neon and
            # air filled by mass on the permanent-gas columns with their fills by pressure
            route = routes.get((id(gas), mass))
            if route is None:       # the gases live as long as `plain`
                liquefied = _on_liquefied_columns(gas, mass)
                route = routes[id(gas), mass] = (liquefied, liquefied or _vector_gas(gas))
            liquefied, columns = route
            on_columns.append(columns)
            if columns:
                groups.setdefault((gas.name, liquefied), []).append(j)
            else:
                rest.append(j)
        # rows in the sun: their worst case from the energy balance (screen.worst_case_temperature), entering the
        # columns as Rows.of_cases enters them (the highest exposure temperature as the gas temperature, no
        # ambient); a row whose balance raises goes per row
        self._sun: dict[int, SunRow] = {}
        ambient, hot = plain.ambient_max_k, plain.gas_temperature_k
        if plain.sun is not None and plain.sun.any():
            in_sun = [j for j in np.flatnonzero(plain.sun).tolist() if on_columns[j]]
            self._sun = _plain_sun_rows(plain, in_sun)
            failed = set(in_sun) - set(self._sun)
            if failed:
                rest.extend(sorted(failed))
                groups = {nm: kept for nm, idx in groups.items() if (kept := [j for j in idx if j not in failed])}
            if self._sun:
                at = np.array(list(self._sun), dtype=np.int64)
                ambient, hot = ambient.copy(), hot.copy()
                ambient[at] = np.nan
                hot[at] = [u.t_exposure for u in self._sun.values()]
        names = list(groups)
        parts = []
        for nm in names:
            idx = np.array(groups[nm], dtype=np.int64)
            # the fill mass per water capacity as LiquefiedRows.of_cases divides it
            rho_mass = plain.fill_mass_kg[idx] / plain.water_capacity_m3[idx] if by_mass[idx].any() else None
            parts.append(PlainPart(plain.gases[idx[0]], plain.fill_pressure_pa[idx], plain.fill_temperature_k[idx],
                                   ambient[idx], hot[idx], plain.rated_pa[idx],
                                   plain.atmospheric_pa[idx], plain.required_margin[idx], plain.relief_pa[idx],
                                   plain.max_filling_ratio_kg_m3[idx], rho_mass, liquefied=nm[1]))
        where, group = self._where, self._group
        for nm, cols in zip(names, _run_columns(parts, _plain_columns)):
            done = 0
            fallback = cols["fallback"].tolist()
            for k, j in enumerate(groups[nm]):
                if fallback[k]:
                    rest.append(j)
                    continue
                where[j] = k
                group[j] = cols
                done += 1
            if done:
                self._parts[id(cols)] = _SummaryParts(plain, groups[nm], cols)
            if progress:
                progress(done)
        self.vectorised = n - len(rest)
        self.per_row = len(rest)
        for j in sorted(rest):
            try:
                r = single(plain.case(j))
            except InputError as exc:
                r = {"verdict": "input-error", "error": exc}
            self._full[j] = r
            self._slim[j] = slim(r) if isinstance(r, Result) else r
            if progress:
                progress(1)

    def summary(self, j: int) -> dict:
        """What the batch table, CSV and counts need of the j-th plain row (see :func:`slim`); the input-error
        record where it could not be screened. Where the row ran on the columns, laid out from them on each call,
        a new dict (the chunk's rows hold nothing for the garbage collector to trace while they wait to be
        written); else the one record kept for the row."""
        r = self._slim.get(j)
        if r is not None:
            return r
        cols = self._group[j]
        return self._parts[id(cols)].summary(self.plain, j, self._where[j], self._sun.get(j))

    def fields(self, j: int) -> tuple | None:
        """The j-th plain row's fields (:meth:`_SummaryParts.fields`) followed by its display units, where it ran on
        the columns outside the sun (what its summary's result columns, severity and units read, without laying the
        summary out); else None."""
        cols = self._group.get(j)
        if cols is None or j in self._sun:
            return None
        return (*self._parts[id(cols)].fields(self._where[j]), self.plain.display_units[j])

    @functools.cached_property
    def summaries(self) -> list[dict]:
        """:meth:`summary` of every plain row, in order (laid out once, kept)."""
        return [self.summary(j) for j in range(len(self.plain))]

    def failed(self, j: int) -> bool:
        """Whether the j-th plain row could not be screened (its summary is an input-error record)."""
        r = self._slim.get(j)
        return r is not None and r["verdict"] == "input-error"

    def full(self, j: int) -> Result | dict:
        """The full result of the j-th plain row (the input-error record where it could not be screened)."""
        if j in self._full:
            return self._full[j]
        cols, k = self._group[j], self._where[j]
        if cols.get("kind") == "liquefied" and not _mass_limit_settled(cols, k, self.plain.gases[j]):
            try:
                return single(self.plain.case(j))
            except InputError as exc:
                return {"verdict": "input-error", "error": exc}
        return _assemble(self.plain.case(j), cols, k, sun=self._sun.get(j))

    def full_json(self, j: int, line: bool = False) -> dict | None:
        """``full(j).to_json()``, laid out directly without the Result where the row ran on the columns
        (:func:`_row_dict`; tests/test_batch_json.py keeps the two equal, byte for byte); None where the row could
        not be screened (:meth:`full` gives its input-error record). A new dict on each call, sharing none of
        its parts with another row's (the governing scenario's summary shares the result's limits and reasons).

        With `line`, for a line of the batch's JSON, to be written at once: where the row ran on the columns,
        without its curves and cautions, laid out from the row's :class:`~screening.inputs.columns.CaseRow`
        rather than its Case, sharing its display units with other rows, and holding its gas's part and its reference
        model's sources as their JSON, written once per gas and fluid (orjson.Fragment: ``json_bytes`` writes it)."""
        if j in self._full or j not in self._where:
            r = self.full(j)
            return r.to_json() if isinstance(r, Result) else None
        cols, k = self._group[j], self._where[j]
        # the row's columns as lists, once per group and column (a liquefied gas's fill-mass limit settled first,
        # for every row of the group at once), and the verdict its columns decided
        listed = self._listed.get(id(cols))
        if listed is None:
            settled = cols.get("kind") != "liquefied" or _mass_limit_settled(cols, k, self.plain.gases[j])
            listed = self._listed[id(cols)] = _Listed(cols)
        else:   # as _mass_limit_settled tells, the group settled
            settled = (unsettled := listed.get("mass_unsettled")) is None or not unsettled[k]
        if not settled:
            r = self.full(j)
            return r.to_json() if isinstance(r, Result) else None
        if line and self.plain.entered is not None:
            gas = self.plain.gases[j]
            part = self._gas_parts.get(id(gas))
            if part is None:    # its JSON, written once per gas (the gases live as long as self.plain)
                part = self._gas_parts[id(gas)] = orjson.Fragment(orjson.dumps(_screen.gas_part(gas)))
            case = self.plain.case_row(j, part)
        else:
            case = self.plain.case(j)
        return _row_dict(case, listed, k, _verdict_of(listed, k), sun=self._sun.get(j))


class _SummaryParts:
    """What the summaries of a group's plain rows read (:meth:`PlainScreening.summary`): its columns as lists, each
    listed once, and the parts every row of the group reads alike, shared by its summaries (read only): the gas's
    name, the site of each atmospheric pressure."""

    def __init__(self, plain: PlainRows, rows: list[int], cols: dict) -> None:
        self.keep = _SUN_KEEPS_LIQUEFIED if cols.get("kind") == "liquefied" else _SUN_KEEPS
        self.verdicts, self.reasons, self.warnings = (cols[key].tolist() for key in (
            "verdict", "verdict_reasons", "verdict_warnings"))
        self.max_t, self.max_p = cols["max_t"].tolist(), cols["max_p"].tolist()
        self.rated, self.margin_req, self.atm, self.p_fill = (a[rows].tolist() for a in (
            plain.rated_pa, plain.required_margin, plain.atmospheric_pa, plain.fill_pressure_pa))
        self.gas_name = {"name": plain.gases[rows[0]].name}
        self.sites: dict[float, dict] = {}

    def fields(self, k: int) -> tuple:
        """Row k's fields as its summary holds them: (verdict, margin, governing model, peak pressure, reasons (a tuple
        of texts), warnings (codes and messages one after the other, see :func:`_verdict_columns`; without those of
        the sun), atmospheric pressure, highest gas temperature, highest fill pressure) (None where there is none)."""
        word, margin, _relief_margin, governing, peak, _applicable = self.verdicts[k]
        t, p = self.max_t[k], self.max_p[k]
        return (word, margin, governing, peak, self.reasons[k], self.warnings[k], self.atm[k],
                None if t != t or self.p_fill[k] >= self.rated[k] else t, None if p != p else p)

    def summary(self, plain: PlainRows, j: int, k: int, sun: SunRow | None) -> dict:
        """The summary of plain row j, row k of the group's columns; `sun`: its worst case in the sun, if any."""
        word, margin, governing, peak, reasons, flat, atm, t, p = self.fields(k)
        warnings = _warnings_of(flat)
        if sun is not None:
            warnings = _sun_warnings(warnings, sun, self.keep)
        site = self.sites.get(atm)
        if site is None:
            site = self.sites[atm] = {"atmospheric_pressure_pa": atm}
        return summary_record(plain.ids[j], word, reasons, warnings, peak, self.rated[k], margin, self.margin_req[k],
                              governing, t, p, self.gas_name, plain.display_units[j], site)


class _Listed(dict):
    """Columns (:func:`_columns`, :func:`_liquefied_columns`) read as lists, each array listed on first use: a
    row's values as Python numbers, without making a numpy scalar per value (for laying out many rows' results;
    the columns must be final)."""

    def __init__(self, cols: dict) -> None:
        super().__init__()
        self._cols = cols

    def __missing__(self, key: str):
        value = self._cols[key]
        self[key] = value = value.tolist() if isinstance(value, np.ndarray) else value
        return value

    def get(self, key: str, default=None):
        return self[key] if key in self._cols else default


def iter_chunks(items: list, size: int) -> Iterable[list]:
    for k in range(0, len(items), size):
        yield items[k:k + size]


# ----------------------------------------------------------------------------- liquefied gases

def _dome_gas(gas: Mixture) -> bool:
    """A pure gas whose reference equation has a saturation dome (not a mixture, not the pseudo-pure air)."""
    if not (gas.is_pure and gas.components[0].coolprop_name):
        return False
    try:
        fluid = reference_fluid((gas.components[0].coolprop_name,), (1.0,))
    except NotApplicable:
        return False
    return _screen._is_pure(fluid)


def _liquefied_gas(gas: Mixture) -> bool:
    """A pure liquefiable gas whose reference equation has a saturation dome (carbon dioxide, propane, ammonia,
    the refrigerants…): its rows by mass and by pressure run on :func:`_liquefied_columns`."""
    return gas.kind == "liquefiable" and _dome_gas(gas)


def _mass_fill_gas(gas: Mixture) -> bool:
    """A pure permanent gas with a saturation dome and fixed critical constants (nitrogen, oxygen, argon, carbon
    monoxide, methane, krypton; not the quantum gases, whose generalized model corrects its constants with the
    temperature, nor air, which has no dome: those run on :func:`_columns`): its rows filled by mass run on
    :func:`_liquefied_columns` too. Those columns are the
    closed-tank analysis of any pure fluid with a dome, which screen.screen_states applies alike to a permanent
    and a liquefiable gas; tests/test_permanent_by_mass.py compares both routes row by row."""
    return gas.kind == "permanent" and not gas.components[0].quantum and _dome_gas(gas)


def _on_liquefied_columns(gas: Mixture, by_mass: bool) -> bool:
    """Whether a row of this gas (filled by mass where `by_mass`) runs on :func:`_liquefied_columns`."""
    return _liquefied_gas(gas) or (by_mass and _mass_fill_gas(gas))


def liquefied_vectorisable(case: Case) -> bool:
    """Whether the liquefied-gas columns cover this row: a pure liquefied gas filled by mass or by pressure, or a
    pure permanent gas filled by mass (:func:`_mass_fill_gas`), at a stated fill temperature, with one exposure (in
    the sun or not) and no tolerances. Rows those columns are not sure of (a gas at fill and at the worst case,
    where the gas models apply; a state the reference equation refuses) still go per row."""
    if not _on_liquefied_columns(case.gas, case.fill_mass_kg is not None) or case.fill_temperature_k is None:
        return False
    if (case.fill_pressure_pa is None) == (case.fill_mass_kg is None):
        return False
    if getattr(case, "tolerance", None) is not None:
        return False
    scenarios = getattr(case, "scenarios", ())
    return not (len(scenarios) > 1 or any(getattr(s, "solar", "none") not in ("none", "sun") for s in scenarios))


def liquefied_expandable(case: Case) -> bool:
    """Whether a row the liquefied-gas columns take (:func:`liquefied_vectorisable`, but with several exposure
    scenarios, each in the sun or not, or with input tolerances on a fill by mass) runs on them with each scenario
    and each state of its tolerance analysis a row of a table (:func:`_screen_liquefied_scenarios`). A fill by
    pressure with tolerances stays per row: its saturation and critical bands are widened by them."""
    scenarios = getattr(case, "scenarios", ())
    tolerance = getattr(case, "tolerance", None)
    if not scenarios or (len(scenarios) <= 1 and tolerance is None) or case.fill_temperature_k is None:
        return False
    if (case.fill_pressure_pa is None) == (case.fill_mass_kg is None):
        return False
    if tolerance is not None and case.fill_pressure_pa is not None:
        return False
    return (_on_liquefied_columns(case.gas, case.fill_mass_kg is not None)
            and all(getattr(s, "solar", "none") in ("none", "sun") for s in scenarios))


def _screen_liquefied_scenarios(cases: list[Case], balances: dict | None = None) -> list[ResultData | None]:
    """Rows of one gas on the liquefied-gas columns with several scenarios or with input tolerances on a fill by
    mass: every scenario a row of one table (its worst case as screen._worst_case_temperature finds it,
    :func:`_exposure_row`), each scenario's result laid out as for a row of one scenario, its tolerance block from
    screen.tolerance_steps driven for every vessel at once (each round's states rows of one table,
    :func:`_liquefied_corner_peaks`), then folded into one result per vessel by screen.fold_scenarios, as
    screen.screen_states folds them. None where a row must go per row (one of its scenarios or tolerance states
    fell back or is out of scope, or its worst case raises)."""
    out: list[Result | None] = [None] * len(cases)
    exposures, keys = _scenario_rows(cases, balances)
    if not keys:
        return out
    rows = LiquefiedRows.of_cases([cases[i] for i, _j in keys], [exposures[i][j] for i, j in keys])
    # then the expected bounding corner of each scenario of a vessel with tolerances (a fill by mass: its worst case
    # alone moves), rows of the same table with their vessel's rating: its peaks serve the tolerance analysis and
    # its limits are the vessel's with the tolerances taken off (see _screen_expanded)
    corner_of, tags = {}, {}
    for i, j in keys:
        c = cases[i]
        if c.tolerance is not None:
            t_fill = float(c.fill_temperature_k)
            tags[(i, j)] = c.fill_mass_kg / c.water_capacity_m3     # as LiquefiedRows.of_cases divides it
            corner_of[(i, j)] = (tags[(i, j)], *_screen.expected_corner(
                c, t_fill, _screen.screened_temperature(exposures[i][j].t_exposure, t_fill)))
    if corner_of:
        a = np.array([(tag, tf, tg, cases[i].rated_pressure_pa, cases[i].site.atmospheric_pressure_pa,
                       cases[i].required_margin, math.nan if cases[i].relief_set_pressure_pa is None
                       else cases[i].relief_set_pressure_pa)
                      for (i, _j), (tag, _p, tf, tg) in corner_of.items()], dtype=float)
        nan = np.full(a.shape[0], np.nan)
        rows = LiquefiedRows(rows.gas, *(np.concatenate([getattr(rows, name), more]) for name, more in (
            ("p_fill", nan), ("t_fill", a[:, 1]), ("ambient_max", nan), ("gas_temperature", a[:, 2]),
            ("rated", a[:, 3]), ("atm", a[:, 4]), ("margin_req", a[:, 5]), ("relief", a[:, 6]),
            ("rho_mass", a[:, 0]))))
    # a vessel with tolerances takes its limits from its expected corner's row: its own rows' are not solved
    cols = _Listed(_liquefied_columns(rows, limit_rows=np.array([cases[i].tolerance is None for i, _j in keys]
                                                                + [True] * len(corner_of), dtype=bool)))
    # read as lists (see _screen_expanded)
    stop = [f or r or u for f, r, u in zip(cols["fallback"], cols["refused"], cols["unreachable"])]
    bad = {i for (i, _j), f in zip(keys, cols["fallback"]) if f}
    row_of = {key: k for k, key in enumerate(keys)}
    corner_row = {key: len(keys) + n for n, key in enumerate(corner_of)}
    bad |= {key[0] for key, kc in corner_row.items() if stop[kc]}     # a corner not on this path: per row
    steps, known = {}, {}
    for k, (i, j) in enumerate(keys):
        c = cases[i]
        if i in bad or c.tolerance is None:
            continue
        if cols["refused"][k] or cols["unreachable"][k]:
            bad.add(i)          # no model applies at the nominal state: per row
            continue
        t_fill, t_peak = float(c.fill_temperature_k), float(cols["t_peak"][k])
        peaks = _liquefied_state_peaks(cols, k)
        # the models applicable at the nominal state, in the models' order (screen._screen_at)
        names = [nm for nm in ("ideal", "generalized", "reference") if peaks[nm] is not None]
        tag = tags[(i, j)]
        steps[(i, j)] = _screen.tolerance_steps(c, t_fill, t_peak, names)
        # the nominal state (the steps' first) and the expected corner: the peaks of their rows of this table
        known[(tag, c.fill_pressure_pa, t_fill, t_peak)] = peaks
        known[corner_of[(i, j)]] = _liquefied_state_peaks(cols, corner_row[(i, j)])
    tolerances = _drive_states(steps, lambda todo: _liquefied_corner_peaks(cases[0].gas, todo), known,
                               tags) if steps else {}
    bad |= {i for (i, _j), t in tolerances.items() if t is None}
    for i, ex_rows in exposures.items():
        if i in bad:
            continue
        c = cases[i]
        per = []
        for j, (sc, ex) in enumerate(zip(c.scenarios, ex_rows)):
            k = row_of[(i, j)]
            args = (cols, k, c.rated_pressure_pa, c.relief_set_pressure_pa, c.site.atmospheric_pressure_pa,
                    c.required_margin, c.max_filling_ratio_kg_m3, sc.name)
            tol = tolerances.get((i, j))
            if tol is None:
                r = _assemble_liquefied(c, cols, k, _liquefied_verdict(*args), sun=ex, fold=False)
            else:
                findings = tol.pop("_findings")
                if tol["bounding_peak_pressure_pa"] is None or findings["out_of_scope"]:
                    break               # not on this path (see _liquefied_corner_peaks): per row
                # decided once, on the bounding peak and the corners' liquid-full findings; the row's nominal
                # figures from the nominal peak (the tolerance block's, the governing peak of this very row)
                b = tol["bounding_corner"]
                if (tags[(i, j)], b["fill_pressure_pa"], b["fill_temperature_k"], b["worst_case_temperature_k"]) \
                        != corner_of[(i, j)]:
                    break               # another corner bounds: its limits per row
                v = _liquefied_verdict(*args, bounding=tol["bounding_peak_pressure_pa"],
                                       liquid_full_more=findings["liquid_full"])
                r = _assemble_liquefied(c, cols, k, {**v, "peak_pressure_pa": tol["nominal_peak_pressure_pa"]},
                                        sun=ex, fold=False)
                r.update(peak_pressure_pa=v["peak_pressure_pa"], tolerance=tol,
                         limits=_screen.take_off_tolerances(r["limits"],
                                                            _corner_limit_values(c, cols, corner_row[(i, j)]), c,
                                                            bool(cols["fill_over"][k])))
            for key in ("scenarios", "governing_scenario", "exposure"):
                r.pop(key, None)
            per.append((sc.name, r, ex.balance))
        else:
            out[i] = ResultData(_screen.fold_scenarios(per)[1])
    return out


def _liquefied_state_peaks(cols: dict, k: int) -> dict:
    """Row k of liquefied-gas columns as screen._corner_peak gives a state (the row neither fell back nor is
    refused or out of scope): the peak of each model (None where it does not apply), the governing peak, and the
    liquid-full rule's finding in the words of a tolerance corner."""
    gas_ok = bool(cols["gas_ok"][k])
    peaks = {"ideal": float(cols["peak_ideal"][k]) if gas_ok else None,
             "generalized": float(cols["lk_peak"][k]) if gas_ok and cols["lk_ok"][k] else None,
             "reference": float(cols["peak_ref"][k])}
    peaks["governing"] = _screen.governing_peak(peaks)
    peaks["_out_of_scope"] = None
    peaks["_liquid_full"] = None
    if cols["liquid_full_applies"][k]:
        fs = _screen.FillState(liquid_full_temperature=_opt(cols["liquid_full"][k]),
                               dp_dt_after_liquid_full=_opt(cols["dpdt_liquid_full"][k]))
        peaks["_liquid_full"] = _screen.liquid_full_text(fs, float(cols["t_peak"][k]), corner=True)
    return peaks


def _liquefied_corner_peaks(gas: Mixture, states: list[tuple]) -> dict:
    """{state: its corner peaks as screen._corner_peak gives them (:func:`_liquefied_state_peaks`), or None where
    the vessel must go per row}, for states (fill density [kg/m3], None, fill temperature [K], worst-case
    temperature [K]) of fills by mass, every state a row of one table of the liquefied-gas columns without their
    limits. The worst case enters as the stated gas temperature, so that the row's screened temperature is
    screen.screened_temperature of it and the fill temperature, as at a tolerance corner (screen._corner_state).
    A state refused, out of the reference equation's range or not settled falls back."""
    if not states:
        return {}
    a = np.array([(s[0], s[2], s[3]) for s in states], dtype=float).reshape(-1, 3)
    nan = np.full(a.shape[0], np.nan)
    rows = LiquefiedRows(gas, nan, a[:, 1], nan, a[:, 2], nan, nan, nan, nan, rho_mass=a[:, 0])
    arrays = _liquefied_columns(rows, mass_limit=False, limits=False)
    stop = (arrays["fallback"] | arrays["refused"] | arrays["unreachable"]).tolist()
    cols = _Listed(arrays)
    return {s: None if stop[k] else _liquefied_state_peaks(cols, k) for k, s in enumerate(states)}


@dataclass
class LiquefiedRows(Rows):
    """Rows of one liquefied gas: besides :class:`Rows`, the fill mass per water capacity [kg/m3] (NaN where the
    fill is given by pressure; ``p_fill`` is then NaN)."""

    rho_mass: np.ndarray

    @staticmethod
    def of_cases(cases: list[Case], sun: list[SunRow | None] | None = None) -> "LiquefiedRows":
        base = Rows.of_cases(cases, sun)
        base.p_fill = np.array([math.nan if c.fill_pressure_pa is None else c.fill_pressure_pa for c in cases],
                               dtype=float)
        rho_mass = np.array([math.nan if c.fill_mass_kg is None else c.fill_mass_kg / c.water_capacity_m3
                             for c in cases], dtype=float)
        return LiquefiedRows(**{k: getattr(base, k) for k in ("gas", "p_fill", "t_fill", "ambient_max",
                                                              "gas_temperature", "rated", "atm", "margin_req", "relief")},
                             rho_mass=rho_mass)

    def take(self, idx: np.ndarray) -> "LiquefiedRows":
        base = Rows.take(self, idx)
        return LiquefiedRows(**{k: getattr(base, k) for k in ("gas", "p_fill", "t_fill", "ambient_max",
                                                              "gas_temperature", "rated", "atm", "margin_req", "relief")},
                             rho_mass=self.rho_mass[idx])


def _group_columns(rows: Rows) -> dict:
    """The columns of one group: :func:`_liquefied_columns` for a liquefied gas and for a permanent gas with a dome
    filled by mass (:func:`_mass_fill_gas`, in LiquefiedRows), else :func:`_columns` (which takes the fill masses of
    LiquefiedRows too)."""
    if _liquefied_gas(rows.gas) or (isinstance(rows, LiquefiedRows) and _mass_fill_gas(rows.gas)):
        return _liquefied_columns(rows)
    return _columns(rows)


def _known_scan_root(f: Callable[[np.ndarray, np.ndarray], np.ndarray], x: np.ndarray, lo: np.ndarray,
                     hi: np.ndarray, n: int) -> tuple[np.ndarray, np.ndarray]:
    """(root, ok): what screen._root(f, lo, hi, n) finds for an increasing f(x, rows) whose only sign change is at
    x (found another way; NaN: not known), where f can be evaluated on one interval of [lo, hi] (a model's range).

    screen._root takes the root inside the whole bracket where f is evaluable at both ends, else inside the first
    interval of its scan (np.linspace(lo, hi, n)) whose two ends are evaluable and bracket a sign change. For such
    an f both come to this: x where the scan interval that holds it has both ends evaluable (each then on its
    side of zero), none where x lies outside [lo, hi] or that interval reaches past the range (screen._root meets
    no other sign change). Two evaluations a row; ok False where x is not known or the ends contradict it (those
    rows go another way)."""
    m = x.size
    root = np.full(m, np.nan)
    ok = np.ones(m, dtype=bool)
    known = np.isfinite(x)
    ok[~known] = False
    s = np.flatnonzero(known & (x > lo) & (x < hi))
    if s.size:
        a, b = _linspace_bracket(lo[s], hi[s], x[s], n)
        fa, fb = f(a, s), f(b, s)
        good = np.isfinite(fa) & np.isfinite(fb) & (fa < 0.0) & (fb > 0.0)
        root[s[good]] = x[s[good]]
        # one end out of the range: the scan passes over it and meets no later sign change (none);
        # anything else is not the shape assumed here
        past = (np.isfinite(fa) & (fa < 0.0) & ~np.isfinite(fb)) | (~np.isfinite(fa) & np.isfinite(fb) & (fb > 0.0))
        ok[s[~good & ~past]] = False
    return root, ok


#: A mass-limit density below this fraction of the top of screen._mass_limit's range is solved as it solves it.
_SMALL_ROOT = 0.35

#: Columns of the liquefied-gas path per row (floats; NaN for none), besides _FLOAT_COLUMNS' shared names.
_LIQUEFIED_FLOAT_COLUMNS = ("t_peak", "rho_molar", "rho_fill_mass", "peak_ref", "p_fill_ref", "vapour_pressure",
                            "liquid_fill_sat", "vapour_pressure_peak", "liquid_peak_sat", "dry", "liquid_full",
                            "dpdt_liquid_full", "crossing", "max_t", "max_p", "target", "mass_rho", "lf_density")


def _liquefied_fill(rows: Rows, fluid: ReferenceFluid, out: dict, fallback: np.ndarray) -> None:
    """Fill state of liquefied-gas rows (screen._fill_state): the vapour pressure at a pressure fill, the
    saturation and critical bands (screen.band_reason: such rows are refused), the fill density (given by mass,
    or the reference equation's at the fill pressure), the phases and pressures at fill and at the worst case."""
    gas = rows.gas
    molar_mass = gas.molar_mass
    n = rows.t_fill.size
    t_fill, t_peak = rows.t_fill, out["t_peak"]
    given_mass = getattr(rows, "rho_mass", None)
    if given_mass is None:      # plain rows: filled by pressure
        given_mass = np.full(n, np.nan)
    by_pressure = np.isnan(given_mass)
    out["by_pressure"] = by_pressure
    band = np.full(n, None, dtype=object)
    tc = fluid.critical_temperature
    ip = np.flatnonzero(by_pressure)
    below = ip[t_fill[ip] < tc]
    if below.size:
        # the vapour pressure and, from the same flash, the saturated liquid's density (what vapour_pressure and
        # saturated_liquid_density give; NaN where they raise), kept for _no_fill_reaches
        out["vapour_pressure"][below], out["liquid_fill_sat"][below] = _saturation_states(fluid, t_fill[below],
                                                                                           0.0)
    name = gas.name
    p_fill, atm = rows.p_fill.tolist(), rows.atm.tolist()
    tf = t_fill.tolist()
    # the vapour pressure at the fill, worked out once for the bands and the fill density
    vap = out["vapour_pressure"]
    psat = [None if math.isnan(x) else x for x in vap.tolist()]
    # the vapour pressures at the ends of the saturation band of each fill below the critical temperature, the
    # rows' flashes in one call each (NaN where vapour_pressure raises; the critical pressure where the upper end
    # is at or above the critical temperature)
    ends = [_screen.saturation_band_ends(tf[k], fluid) for k in below.tolist()]
    t_lo = np.array([e[0] for e in ends], dtype=float)
    t_hi = np.array([math.nan if e[1] is None else e[1] for e in ends], dtype=float)
    p_lo = _saturation_states(fluid, t_lo, 0.0)[0]
    p_hi = np.full(below.size, fluid.critical_pressure)
    has_hi = np.flatnonzero(np.isfinite(t_hi))
    p_hi[has_hi] = _saturation_states(fluid, t_hi[has_hi], 0.0)[0]
    psat_ends: list = [None] * n
    for k, lo_k, hi_k in zip(below.tolist(), p_lo.tolist(), p_hi.tolist()):
        psat_ends[k] = (lo_k, hi_k)
    for k in ip.tolist():
        band[k] = _screen.band_reason(p_fill[k], tf[k], fluid, name, atm[k], psat=psat[k], psat_ends=psat_ends[k])
    refused = np.array([b is not None for b in band], dtype=bool)
    out["band"], out["refused"] = band, refused
    rho_molar = np.full(n, np.nan)
    # the pressure and phase of the fill density's own check (its state at the fill temperature)
    p_check = np.full(n, np.nan)
    phase_check = np.full(n, None, dtype=object)
    live = np.flatnonzero(by_pressure & ~refused)
    if live.size:
        rho_molar[live], p_check[live], phase_check[live], ok = fluid.densities(rows.p_fill[live], t_fill[live],
                                                                                vap[live])
        fallback[live[~ok]] = True
    mass = np.flatnonzero(~by_pressure)
    fill_mass = np.full(n, np.nan)
    fill_mass[live] = rho_molar[live] * molar_mass
    fill_mass[mass] = given_mass[mass]
    rho_molar[mass] = given_mass[mass] / molar_mass
    # a mass fill denser than the liquid at the triple point is an input error: per row, where it is raised
    fallback[mass[rho_molar[mass] > _rho_top(fluid, True)]] = True
    out["rho_fill_mass"] = fill_mass
    # every model takes the fill's mass density divided by the molar mass again (screen._molar): so here
    out["rho_molar"] = rho = fill_mass / molar_mass
    live = np.flatnonzero(~refused & ~fallback)
    # where that gives the fill density back bit for bit, the fill state is the one the density's check evaluated
    checked = np.zeros(n, dtype=bool)
    checked[live] = by_pressure[live] & (rho[live] == rho_molar[live])
    phases = {}
    unreachable = np.zeros(n, dtype=bool)
    out["unreachable_reason"] = np.full(n, None, dtype=object)
    why = np.full(n, None, dtype=object)
    # a fill by mass mostly lies inside the saturation dome at the fill temperature, and often at the worst case:
    # those states are first looked at through the saturation flash (the same numbers, fewer full evaluations)
    for key, t in (("fill", t_fill), ("peak", t_peak)):
        if key == "fill":
            p, ph, ok = p_check[live], phase_check[live], np.ones(live.size, dtype=bool)
            e = np.flatnonzero(~checked[live])
            if e.size:
                p[e], ph[e], ok[e] = fluid.states(rho[live[e]], t[live[e]], dome=~by_pressure[live[e]])
        else:
            p, ph, ok = fluid.states(rho[live], t[live], dome=~by_pressure[live])
        phases[key] = np.full(n, None, dtype=object)
        phases[key][live] = ph
        out["p_fill_ref" if key == "fill" else "peak_ref"][live] = p
        if key == "peak":
            # the fill established, the worst case beyond the reference equation's range (a liquid heated until
            # its pressure is above the equation's highest pressure): screen._fill_state's isochore analysis
            # stops at that state, below the gas's critical temperature the gas models are then not confirmed,
            # and screen._reference refuses the same state with the same reason: no model applies
            off = live[~ok & (np.minimum(t_fill, t_peak)[live] <= gas.components[0].critical_temperature)]
            if off.size:
                _p, _v, reasons = _loop(fluid.pressure, rho[off], t_peak[off])
                for k, r in zip(off.tolist(), reasons):
                    out["unreachable_reason"][k] = r
                    why[k] = f"the gas phase cannot be confirmed: {r}"
                unreachable[off] = True
                phases["fill"][off] = phases["peak"][off] = None
                ok = ok | unreachable[live]
        fallback[live[~ok]] = True
        live = live[ok]
    out["phase_fill"], out["phase_peak"] = phases["fill"], phases["peak"]
    out["unreachable"] = unreachable
    for k in np.flatnonzero(~refused & ~fallback & ~unreachable).tolist():
        why[k] = _screen.condensed_reason(phases["fill"][k], phases["peak"][k])
    out["why_not_gas"] = why
    # a gas at fill and at the worst case: the ideal and generalized models apply as well
    out["gas_ok"] = (why == None) & ~refused & ~fallback   # noqa: E711  (an object array)


def _liquefied_gas_models(rows: Rows, out: dict, fallback: np.ndarray) -> None:
    """The ideal and generalized models of the liquefied-gas rows that are a gas at fill and at the worst case
    (screen._ideal, screen._generalized). The generalized model's limits are solved by :func:`_lk_limits`, once
    the reference model's are known, only where they can be the lower ones."""
    n = rows.t_fill.size
    gas_ok = out["gas_ok"]
    by_pressure = out["by_pressure"]
    t_fill, t_peak = rows.t_fill, out["t_peak"]
    rho = out["rho_molar"]
    out["rho_ideal"] = rho_ideal = np.where(by_pressure, rows.p_fill / (R * t_fill), rho)
    out["peak_ideal"] = rho_ideal * R * t_peak
    g = np.flatnonzero(gas_ok)
    gen = {k: np.full(n, np.nan) for k in ("tcf", "pcf", "tcp", "pcp", "omp", "lk_rho_fill", "lk_z_fill",
                                           "lk_tr_fill", "lk_pr_fill", "lk_p_fill", "lk_peak", "lk_z_peak",
                                           "lk_tr_peak", "lk_pr_peak")}
    gen.update(lk_ok=np.zeros(n, dtype=bool), q_srk=np.zeros(n, dtype=bool), lk_reason=np.full(n, "", dtype=object))
    if g.size:
        part = _generalized_columns(rows.gas, rows.p_fill[g], t_fill[g], t_peak[g],
                                    np.where(by_pressure[g], np.nan, rho[g]))
        for k in gen:
            gen[k][g] = part[k]
    out.update(gen)
    out["max_t_lk"] = np.full(n, np.nan)
    out["max_p_lk"] = np.full(n, np.nan)


def _lk_limits(rows: Rows, out: dict, lk: np.ndarray, t_ref: np.ndarray, pk: np.ndarray,
               p_ref: np.ndarray) -> None:
    """The generalized model's limits of liquefied-gas rows, as screen._limits finds them (each as screen._root
    finds it, :func:`_upward_root`): the gas temperature at which its isochore reaches the rating (rows `lk`), the
    fill pressure whose peak is the target (rows `pk`, filled by pressure), into ``max_t_lk`` and ``max_p_lk``.

    Only the lower of each limit and the reference model's (t_ref, p_ref of the same rows: NaN for none) is
    given, so a row whose generalized function is below zero at the reference root needs no solve: both rise
    (the isochore with the temperature, the peak with the fill pressure), so any root of the generalized model
    lies above the reference's and the lower one is the reference's (its entry stays NaN)."""
    t_fill, t_peak, ceiling, atm, target = rows.t_fill, out["t_peak"], rows.ceiling, rows.atm, out["target"]
    # a pure liquefied gas: the component's own constants, at fill as at the worst case
    tcf, pcf, omf, tcp, pcp, omp, rho_lk = (out[k] for k in ("tcf", "pcf", "omp", "tcp", "pcp", "omp", "lk_rho_fill"))

    def isochore(t, r):
        p, ok = lee_kesler_pressure_valid(rho_lk[r], t, tcp[r], pcp[r], omp[r])
        return np.where(ok, p - ceiling[r], np.nan)

    def fill(p, r):
        rho1, ok1 = lee_kesler_density_valid(p, t_fill[r], tcf[r], pcf[r], omf[r])
        p2, ok2 = lee_kesler_pressure_valid(np.where(ok1, rho1, 1.0), t_peak[r], tcp[r], pcp[r], omp[r])
        return np.where(ok1 & ok2, p2 - target[r], np.nan)

    # a rating above every pressure of the model: the isochore stays below it wherever it can be evaluated (none)
    sel = ~_above_lk_pressures(ceiling[lk], pcp[lk])
    lk, t_ref = lk[sel], t_ref[sel]
    # the model's pressure at the worst case is its peak (the same call on the same state)
    f_mid = out["lk_peak"][lk] - ceiling[lk]
    guess = t_peak[lk] * ceiling[lk] / out["lk_peak"][lk]     # as if the pressure rose in proportion to T
    known = np.flatnonzero(np.isfinite(t_ref))
    if known.size:
        f_ref = isochore(t_ref[known], lk[known])
        # a root above the reference's: the lower limit is the reference's, no solve
        keep = np.ones(lk.size, dtype=bool)
        keep[known[f_ref < 0.0]] = False
        # where the model is above zero at the reference root, the root lies between the worst case and it
        tr, fr = t_ref[known], f_ref
        inside = np.isfinite(fr) & (fr >= 0.0) & (tr > t_peak[lk[known]]) & (f_mid[known] < 0.0)
        j = known[inside]
        guess[j] = t_peak[lk[j]] - f_mid[j] * (tr[inside] - t_peak[lk[j]]) / (fr[inside] - f_mid[j])
        lk, f_mid, guess = lk[keep], f_mid[keep], guess[keep]
    if lk.size:
        t_lo, t_hi = np.minimum(t_fill, t_peak)[lk], (np.maximum(t_peak, t_fill) + 300.0)[lk]
        # the isochore rises with temperature and the model holds from the worst case (a gas there) up to the top
        # of its tables (no temperature above _LK_TR_HI T_c can be evaluated): the solve starts from the worst case
        # (:func:`_upward_root`)
        out["max_t_lk"][lk] = _upward_root(lambda t, ix: isochore(t, lk[ix]), t_lo, t_peak[lk], t_hi, f_mid=f_mid,
                                           nan_from=_LK_TR_HI * tcp[lk] * (1.0 + 1e-9), guess=guess)
    sel = ~_above_lk_pressures(target[pk], pcp[pk])     # a target above every peak of the model: none
    pk, p_ref = pk[sel], p_ref[sel]
    known = np.isfinite(p_ref)
    if known.any():
        below = fill(p_ref[known], pk[known]) < 0.0
        keep = np.ones(pk.size, dtype=bool)
        keep[np.flatnonzero(known)[below]] = False
        pk = pk[keep]
    if pk.size:
        # below its critical temperature the model has no gas above its own vapour pressure at the fill
        # temperature: where the lowest fill pressure of the bracket is already above it (with a margin for
        # rounding), no fill pressure of the bracket can be evaluated and the solve finds none
        tr = t_fill[pk] / tcf[pk]
        sub = tr < 1.0
        psat_r = np.full(pk.size, np.inf)
        psat_r[sub] = lee_kesler_vapour_pressure(tr[sub], omf[pk][sub])
        keep = ~((atm[pk] * 1.01) / pcf[pk] > psat_r * (1.0 + 1e-9))
        pk, psat_r = pk[keep], psat_r[keep]
    if pk.size:
        p_lo = atm[pk] * 1.01
        p_hi = np.maximum(target[pk], rows.p_fill[pk]) * np.maximum(1.0, t_fill[pk] / t_peak[pk]) * 1.05
        mid = np.clip(rows.p_fill[pk], p_lo, p_hi)
        # at the row's own fill the model's peak is known (the same calls on the same states)
        f_mid = np.where(mid == rows.p_fill[pk], out["lk_peak"][pk] - target[pk], np.nan)
        # the peak rises with the fill pressure, and the model holds from the row's own fill up to where the gas
        # condenses at the fill temperature or its reduced pressure leaves the tables (no fill pressure from there
        # up can be evaluated): the solve starts from that fill (:func:`_upward_root`)
        # (rows of gases filled as liquids by pressure, the model's gas fills of them mostly find no target: the
        # highest fill pressure the model holds is looked at first)
        root = _upward_root(lambda p, ix: fill(p, pk[ix]), p_lo, mid, p_hi, f_mid=f_mid,
                            nan_from=pcf[pk] * np.minimum(_LK_PR_HI, psat_r) * (1.0 + 1e-9), top_first=True)
        # screen._limits keeps a fill-pressure root only where its peak is the target (not a jump of the model)
        at = np.flatnonzero(np.isfinite(root))
        hit = np.abs(fill(root[at], pk[at])) <= 1e-6 * target[pk[at]]
        root[at[~hit]] = np.nan
        out["max_p_lk"][pk] = root


def _stopped(out: dict, fallback: np.ndarray) -> np.ndarray:
    """Rows whose isochore analysis goes no further than the dome's boundary: those that fall back, and the
    liquefied-gas rows whose worst case lies beyond the reference equation's range (``unreachable``)."""
    unreachable = out.get("unreachable")
    return fallback if unreachable is None else fallback | unreachable


def _dome_columns(fluid: ReferenceFluid, rho_molar: np.ndarray, out: dict, fallback: np.ndarray,
                  shared: bool = False) -> None:
    """Where each row's isochore meets the saturation dome (isochore.isochore_phases): the dry-out temperature
    below the critical density, the liquid-full temperature above it with the slope just past it, and the
    vapour pressure where the isochore leaves the dome. Rows the table solve is not sure of fall back.
    `shared`: rows repeat densities (a vessel's scenarios): each distinct density solved once (each row's solve
    is its own, so the numbers are those of the full call)."""
    rc = fluid.critical_molar_density
    for side, key in (("vapour", "dry"), ("liquid", "liquid_full")):
        d_rows = np.flatnonzero(~fallback & np.isfinite(rho_molar) & ((rho_molar <= rc) if side == "vapour"
                                                                      else (rho_molar > rc)))
        if d_rows.size > 1 and shared:
            u, back = np.unique(rho_molar[d_rows], return_inverse=True)
            t_u, ok_u = _dome(fluid, side).boundary(u)
            t_b, ok_b = t_u[back.ravel()], ok_u[back.ravel()]
        elif d_rows.size:
            t_b, ok_b = _dome(fluid, side).boundary(rho_molar[d_rows])
        if d_rows.size:
            out[key][d_rows] = t_b
            fallback[d_rows[~ok_b]] = True
    lf = np.flatnonzero(~_stopped(out, fallback) & np.isfinite(out["liquid_full"]))
    if lf.size:
        out["dpdt_liquid_full"][lf], ok = _isochore_slopes(fluid, rho_molar[lf],
                                                           out["liquid_full"][lf] + LIQUID_FULL_STEP)
        fallback[lf[~ok]] = True


def _isochore_slopes(fluid: ReferenceFluid, rho: np.ndarray, t: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """fluid.dp_dt_at_constant_density per row (the same evaluation and slope), over the rows at once; returns
    (slopes, valid) with NaN and False where it raises NotApplicable (and where CoolProp fails on the slope,
    which that method does not catch)."""
    _p, d = fluid.isochore_slopes(rho, t)
    ok = np.isfinite(d)
    return np.where(ok, d, np.nan), ok


def _crossing_columns(fluid: ReferenceFluid, out: dict, fallback: np.ndarray) -> None:
    """The vapour pressure where each row's isochore leaves the dome (isochore.isochore_phases:
    crossing_pressure); the critical pressure where it leaves at the critical point."""
    crossing = out["crossing"]
    boundary = np.fmin(out["dry"], out["liquid_full"])
    ks = np.flatnonzero(~_stopped(out, fallback) & np.isfinite(boundary))
    critical = boundary[ks] >= fluid.critical_temperature
    crossing[ks[critical]] = fluid.critical_pressure
    below = ks[~critical]
    if below.size:
        try:
            p, _rho = fluid.saturation_states(boundary[below], 0.0)      # NaN where vapour_pressure raises
        except NotApplicable:       # not a pure fluid: vapour_pressure raises for every row
            p = np.full(below.size, np.nan)
        ok = np.isfinite(p)
        crossing[below[ok]] = p[ok]
        fallback[below[~ok]] = True


def _liquid_full_columns(rows: Rows, fluid: ReferenceFluid, out: dict, fallback: np.ndarray) -> None:
    """The liquid-full rule per row (screen.liquid_full_density and screen._liquid_full_applies, the rule the
    verdict and the mass limit share): the density at which the vessel counts as liquid-full at the worst case
    (NaN where it cannot be evaluated) and whether the fill reaches it."""
    n = rows.t_fill.size
    applies = np.zeros(n, dtype=bool)
    fs = _screen.FillState(fluid=fluid)
    gas = rows.gas
    tf, tp, rho = rows.t_fill.tolist(), out["t_peak"].tolist(), out["rho_molar"].tolist()
    lfd = out["lf_density"]
    live = np.flatnonzero(~fallback & ~out["refused"] & ~out["unreachable"])
    # the vapour pressure and the saturated liquid at the worst case below the critical temperature, from one
    # flash a row (what vapour_pressure and saturated_liquid_density give; NaN where they raise): the liquid-full
    # density here, the target's density's flash in _liquefied_limits
    below = live[out["t_peak"][live] < fluid.critical_temperature]
    if below.size:
        out["vapour_pressure_peak"][below], out["liquid_peak_sat"][below] = _saturation_states(
            fluid, out["t_peak"][below], 0.0)
    sat = out["liquid_peak_sat"].tolist()
    for k in live.tolist():
        try:
            lfd[k] = _screen.liquid_full_density(fluid, tf[k], tp[k], gas, sat[k])
        except NotApplicable:
            lfd[k] = np.nan
            applies[k] = True       # screen._liquid_full_applies: the liquid side not shown to be away from it
            continue
        # screen._liquid_full_applies on the density just worked out
        applies[k] = _screen._liquid_full_applies(fs, rho[k], tf[k], tp[k], gas, lfd[k])
    out["liquid_full_applies"] = applies


#: The fill-to-peak function's jump at the vapour pressure counts as clear of the target beyond this fraction of it.
_JUMP_CLEAR = 1e-5


def _saturation_states(fluid: ReferenceFluid, t: np.ndarray, q: float) -> tuple[np.ndarray, np.ndarray]:
    """fluid.saturation_states(t, q): NaN in both for every row where the fluid has no saturation states."""
    try:
        return fluid.saturation_states(t, q)
    except NotApplicable:       # not a pure fluid: vapour_pressure raises for every row
        return np.full(t.size, np.nan), np.full(t.size, np.nan)


def _no_fill_reaches(fluid: ReferenceFluid, t_fill: np.ndarray, t_peak: np.ndarray, target: np.ndarray,
                     rho_liquid: np.ndarray | None = None) -> np.ndarray:
    """Whether screen._limits finds no fill pressure whose peak is the target (rows whose target density at t_peak
    lies inside the dome at t_fill), shown so: the fills below the vapour pressure at t_fill are vapour, no denser
    than the saturated vapour there, and those above it liquid, no lighter than the saturated liquid; the
    reference isochore's pressure does not fall with density, so the peaks of the vapour fills stay below the
    target and those of the liquid fills above it (or beyond the equation's range). The only sign change
    screen._root can meet is that jump; the point it settles on there is rejected by the check |peak - target| <=
    1e-6 target, unless the jump ends next to the target: True where both ends are clear of it by _JUMP_CLEAR
    (a liquid end beyond the range counts as clear), False where that is not shown. `rho_liquid`: the saturated
    liquid's density at t_fill where the caller has it (NaN: none, where saturated_liquid_density raises).
    The saturated states and pressures are those of saturated_vapour_density, saturated_liquid_density and
    pressure, each evaluated over the rows at once."""
    if t_fill.size == 0:
        return np.zeros(0, dtype=bool)
    _pv, rho_v = _saturation_states(fluid, t_fill, 1.0)
    if rho_liquid is None:
        _pl, rho_liquid = _saturation_states(fluid, t_fill, 0.0)
    known = np.isfinite(rho_v) & np.isfinite(rho_liquid)
    p_v, _v, _r = fluid.pressures(rho_v, t_peak)
    p_l, ok_l, _r = fluid.pressures(rho_liquid, t_peak)
    vapour_end = p_v - target
    liquid_end = np.where(ok_l, p_l - target, np.inf)
    return known & (vapour_end < -_JUMP_CLEAR * target) & (liquid_end > _JUMP_CLEAR * target)


#: Relative width of the bracket within which :func:`_newton_in_bracket` settles a root (the root solves of
#: screen._root stop at about 1e-13; the golden corpus holds limits to 2e-9).
_NEWTON_BRACKET_RTOL = 4e-12
_NEWTON_MAX = 40


def _newton_in_bracket(g: Callable[[np.ndarray, np.ndarray], tuple[np.ndarray, np.ndarray]], a: np.ndarray,
                       fa: np.ndarray, b: np.ndarray, fb: np.ndarray, x0: np.ndarray,
                       idx: np.ndarray, f_only: Callable[[np.ndarray, np.ndarray], np.ndarray] | None = None
                       ) -> tuple[np.ndarray, np.ndarray]:
    """Per row, the root of an increasing f inside [a, b] (f(a) < 0 < f(b)), where g(x, idx) gives f and its
    derivative at once: Newton steps from x0 kept inside the bracket (a bisection where a step leaves it or
    the derivative is not positive), each evaluation narrowing the bracket, until the bracket is narrower than
    _NEWTON_BRACKET_RTOL of the root. The root is therefore shown, not estimated: a sign change of f within
    that width; once a Newton step has converged the next point is set just past it, on the other side, to
    close the bracket. Returns (root, settled); settled False where f could not be evaluated on the way or
    the bracket did not close (those rows are solved another way). `f_only`: f alone (the same numbers as g's f,
    for less), asked at the points set just past a converged step, where the bracket is expected to close and the
    derivative is not used; where it does not close, g is asked there for the derivative."""
    m = a.size
    root = np.full(m, np.nan)
    settled = np.zeros(m, dtype=bool)
    a, fa, b, fb = (np.array(v, dtype=float) for v in (a, fa, b, fb))
    x = np.array(x0, dtype=float)
    bad0 = ~((x > a) & (x < b))
    x[bad0] = 0.5 * (a[bad0] + b[bad0])
    cand = x.copy()                 # the point the row's root is taken to be once its bracket closes
    pushed = np.zeros(m, dtype=bool)   # x is a point set just past a converged step
    live = np.arange(m)
    for _ in range(_NEWTON_MAX):
        if live.size == 0:
            break
        xl = x[live]
        pu = np.flatnonzero(pushed[live]) if f_only is not None else live[:0]
        if pu.size:
            f, df = np.empty(live.size), np.full(live.size, np.nan)
            full = np.flatnonzero(~pushed[live])
            if full.size:
                f[full], df[full] = g(xl[full], idx[live[full]])
            f[pu] = f_only(xl[pu], idx[live[pu]])
        else:
            f, df = g(xl, idx[live])
        bad = ~np.isfinite(f)
        zero = ~bad & (f == 0.0)
        root[live[zero]] = xl[zero]
        settled[live[zero]] = True
        neg, pos = ~bad & (f < 0.0), ~bad & (f > 0.0)
        al, bl = np.where(neg, xl, a[live]), np.where(pos, xl, b[live])
        a[live], b[live] = al, bl
        closed = ~bad & ~zero & (bl - al <= _NEWTON_BRACKET_RTOL * np.abs(xl))
        c = np.clip(cand[live], al, bl)
        root[live[closed]] = c[closed]
        settled[live[closed]] = True
        go = ~bad & ~zero & ~closed
        if pu.size:     # a pushed point that did not close the bracket: its derivative from g
            ask = pu[go[pu]]
            if ask.size:
                f_ask, df[ask] = g(xl[ask], idx[live[ask]])
                bad_ask = ~np.isfinite(f_ask)
                go[ask[bad_ask]] = False
        with np.errstate(divide="ignore", invalid="ignore"):
            step = -f / df
        xn = xl + step
        usable = go & np.isfinite(xn) & (df > 0.0)
        # a converged step (possibly below the resolution of x): the next point just past it, on the other side
        # of the root, so that the bracket closes around it
        tiny = usable & (np.abs(step) <= 0.25 * _NEWTON_BRACKET_RTOL * np.abs(xl))
        push = xl + (np.abs(step) + 0.25 * _NEWTON_BRACKET_RTOL * np.abs(xl)) * np.where(f < 0.0, 1.0, -1.0)
        newton = usable & ~tiny & (xn > al) & (xn < bl)
        nxt = np.where(tiny, np.clip(push, al, bl), np.where(newton, xn, 0.5 * (al + bl)))
        cand[live] = np.where(tiny | newton, np.clip(xn, al, bl), nxt)
        x[live] = nxt
        pushed[live] = tiny
        live = live[go]
    return root, settled


#: The temperature step [K] of the vapour-pressure slope that betters a guess inside the dome (_newton_guess).
_GUESS_DT = 1e-3


def _newton_guess(fluid: ReferenceFluid, rho: np.ndarray, ceiling: np.ndarray, rows: np.ndarray,
                  guess: np.ndarray, boundary: np.ndarray | None = None) -> np.ndarray:
    """A guess of the temperature at which the isochores of rows `rows` reach the ceiling, bettered by one Newton
    step on the isochore's own slope at it (the guess kept where the isochore cannot be evaluated there or does
    not rise). A starting point only (:func:`_scan_up` settles on the same points whatever it is guessed).
    `boundary`: per row, where its isochore leaves the dome; below it the isochore is the vapour pressure, whose
    slope is taken from two saturation flashes _GUESS_DT apart (cheaper than the slope of a two-phase state)."""
    out = np.array(guess, dtype=float)
    g = np.flatnonzero(np.isfinite(out))
    if g.size:
        r = rows[g]
        p, d = np.full(g.size, np.nan), np.full(g.size, np.nan)
        sat = np.zeros(g.size, dtype=bool) if boundary is None else out[g] < boundary[g]
        ks = np.flatnonzero(sat)
        if ks.size:
            ps = _saturation_states(fluid, np.concatenate([out[g[ks]], out[g[ks]] + _GUESS_DT]), 0.0)[0]
            p[ks], d[ks] = ps[:ks.size], (ps[ks.size:] - ps[:ks.size]) / _GUESS_DT
        kf = np.flatnonzero(~sat)
        if kf.size:
            p[kf], d[kf] = fluid.isochore_slopes(rho[r[kf]], out[g[kf]])
        with np.errstate(invalid="ignore", divide="ignore"):
            step = out[g] - (p - ceiling[r]) / d
        use = np.isfinite(step) & (d > 0.0)
        out[g[use]] = step[use]
    return out


def _temperature_limit(fluid: ReferenceFluid, f_t: Callable[[np.ndarray, np.ndarray], np.ndarray],
                       rho: np.ndarray, ceiling: np.ndarray, rows: np.ndarray, lo: np.ndarray, mid: np.ndarray,
                       f_mid: np.ndarray, hi: np.ndarray, boundary: np.ndarray,
                       guess: np.ndarray | None = None) -> tuple[np.ndarray, np.ndarray]:
    """What :func:`_increasing_root` (stepwise) finds for the gas temperature at which the reference isochore
    f_t(T, rows) = p(rho, T) / ceiling - 1 of rows `rows` reaches the ceiling (the rating, or a lower relief
    setting: Rows.ceiling), in fewer evaluations: where f_t can be evaluated at both ends of the bracket that
    _increasing_root solves in ([mid, min(hi, t_max)] or [lo, mid]),
    the root inside it is the one it finds (f_t increasing), and it is solved here by Newton steps on the
    isochore's own slope (:func:`_newton_in_bracket`), starting from the saturation temperature at the ceiling where
    that lies on the dome part of the isochore (below `boundary`, where the isochore leaves the dome: there the
    isochore's pressure is the vapour pressure), else from the regula-falsi point of the bracket. An end past the
    equation's range is scanned upwards from mid as there (:func:`_scan_up`); rows this does not settle go through
    _increasing_root itself. Returns (root, ok) as it does."""
    m = rows.size
    top = fluid.t_max
    root = np.full(m, np.nan)
    ok = np.ones(m, dtype=bool)
    done = np.zeros(m, dtype=bool)
    end = np.minimum(hi, top)
    at_mid = f_mid == 0.0
    root[at_mid] = mid[at_mid]
    done[at_mid] = True
    up = np.flatnonzero(f_mid < 0.0)
    down = np.flatnonzero(f_mid > 0.0)
    a, fa, b, fb = (np.full(m, np.nan) for _ in range(4))
    solve = np.zeros(m, dtype=bool)
    if up.size:
        f_end = f_t(end[up], rows[up])
        nan = ~np.isfinite(f_end)
        if nan.any():      # an end outside the equation's range: screen._root scans (as _increasing_root does)
            s = up[nan]
            # f_t cannot be evaluated at `end`, so nowhere above it either (the range is one interval from lo)
            root[s] = _scan_up(f_t, rows[s], lo[s], mid[s], f_mid[s], hi[s], nan_from=end[s],
                               guess=None if guess is None else _newton_guess(fluid, rho, ceiling, rows[s], guess[s],
                                                                             boundary[s]))
            done[s] = True
        below = ~nan & (f_end < 0.0)
        done[up[below]] = True                      # no root
        zero = ~nan & (f_end == 0.0)
        root[up[zero]] = end[up[zero]]
        done[up[zero]] = True
        g = ~nan & (f_end > 0.0)
        k = up[g]
        a[k], fa[k], b[k], fb[k] = mid[k], f_mid[k], end[k], f_end[g]
        solve[k] = True
    if down.size:
        f_lo = f_t(lo[down], rows[down])
        fin = np.isfinite(f_lo)
        none = fin & (f_lo > 0.0)
        done[down[none]] = True
        zero = fin & (f_lo == 0.0)
        root[down[zero]] = lo[down[zero]]
        done[down[zero]] = True
        g = fin & (f_lo < 0.0)
        k = down[g]
        a[k], fa[k], b[k], fb[k] = lo[k], f_lo[g], mid[k], f_mid[k]
        solve[k] = True
    s = np.flatnonzero(solve)
    if s.size:
        with np.errstate(invalid="ignore", divide="ignore"):
            x0 = (a[s] * fb[s] - b[s] * fa[s]) / (fb[s] - fa[s])
        t_sat = fluid.saturation_temperatures(ceiling[rows[s]])
        on_dome = np.isfinite(t_sat) & (t_sat > a[s]) & (t_sat < b[s]) & (t_sat < boundary[s])
        x0[on_dome] = t_sat[on_dome]

        def g(t, ix):
            r = rows[s[ix]]
            p, d = fluid.isochore_slopes(rho[r], t)
            return p / ceiling[r] - 1.0, d / ceiling[r]

        def f_only(t, ix):      # the same pressures without the slope (inside the dome: one saturation flash)
            r = rows[s[ix]]
            p, _v, _r = fluid.pressures(rho[r], t, dome=t < boundary[s[ix]], why=False)
            return p / ceiling[r] - 1.0

        r, settled = _newton_in_bracket(g, a[s], fa[s], b[s], fb[s], x0, np.arange(s.size), f_only)
        root[s[settled]] = r[settled]
        done[s[settled]] = True
    # beyond `top` screen._root scans: a root in a scan interval that reaches past `top` is not found
    past = np.flatnonzero(done & np.isfinite(root) & (hi > top))
    if past.size:
        _a, bb = _linspace_bracket(lo[past], hi[past], root[past])
        root[past[bb > top]] = np.nan
    rest = np.flatnonzero(~done)
    if rest.size:
        root[rest], ok[rest] = _increasing_root(f_t, rows[rest], lo[rest], mid[rest], f_mid[rest], hi[rest], top,
                                                stepwise=True)
    return root, ok


def _liquefied_limits(rows: Rows, fluid: ReferenceFluid, out: dict, fallback: np.ndarray,
                      mass_limit: bool = True) -> None:
    """Limits of liquefied-gas rows on the reference model (screen._limits, screen._mass_limit): the highest
    gas temperature (none where the fill itself is at or above the rating), the highest fill pressure of a
    pressure fill, the highest fill density (capped by the liquid-full rule); each as screen._root finds it.
    `mass_limit` False: the fill-density limit is left for :func:`_mass_limit_settled` to solve when a full
    result is asked for (the batch's table and CSV do not show it); ``mass_pending`` marks its rows."""
    n = rows.t_fill.size
    t_fill, t_peak, rated, ceiling, atm = rows.t_fill, out["t_peak"], rows.rated, rows.ceiling, rows.atm
    rho, peak = out["rho_molar"], out["peak_ref"]
    out["target"] = target = atm + (ceiling - atm) * (1.0 - rows.margin_req)
    by_pressure = out["by_pressure"]
    # the fill itself at or above the rating (screen._fill_over_rating): the fill pressure, or for a mass fill
    # each applicable real-gas model's pressure at the fill
    with np.errstate(invalid="ignore"):
        fill_over = np.where(by_pressure, rows.p_fill >= rated,
                             ~(out["p_fill_ref"] < rated) | (out["lk_ok"] & (out["lk_p_fill"] >= rated)))
    out["fill_over"] = fill_over
    # no limits where no real-gas model applies: the fill refused, the worst case beyond the reference range
    screened_out = out["refused"] | out["unreachable"]
    t_lo = np.minimum(t_fill, t_peak)
    t_hi = np.maximum(t_peak, t_fill) + 300.0
    live = np.flatnonzero(~fallback & ~screened_out)
    if live.size == 0:
        return

    # below the temperature where a row's isochore leaves the dome its states are two-phase: looked at through the
    # saturation flash first (the same numbers, fewer full evaluations); a refused state's reason is not asked for
    leaves = np.fmin(out["dry"], out["liquid_full"])

    def f_t(t, ix):
        p, _v, _r = fluid.pressures(rho[ix], t, dome=t < leaves[ix], why=False)
        return p / ceiling[ix] - 1.0

    # the reference isochore can be evaluated from the lower temperature up to the equation's range (its
    # temperature range, its highest pressure): an end past it is scanned upwards from the worst case
    # a guess of the root for the upward scan (which settles on the same scan points whatever it is guessed): the
    # liquid isochore past the liquid-full point, in proportion to its slope just past it
    lf, slope = out["liquid_full"][live], out["dpdt_liquid_full"][live]
    with np.errstate(invalid="ignore", divide="ignore"):
        guess = np.where(t_peak[live] > lf, t_peak[live] + (ceiling[live] - peak[live]) / slope,
                         lf + (ceiling[live] - out["crossing"][live]) / slope)
    root, ok = _temperature_limit(fluid, f_t, rho, ceiling, live, t_lo[live], t_peak[live], peak[live] / ceiling[live] - 1.0,
                                  t_hi[live], leaves[live], guess)
    fallback[live[~ok]] = True
    max_t = out["max_t"]
    max_t[live[ok]] = root[ok]
    # the generalized model's temperature limit where it can be the lower one (none is given where the fill is
    # over the rating)
    none = np.array([], dtype=np.int64)
    lk = np.flatnonzero(out["lk_ok"] & ~fallback & ~fill_over)
    if lk.size:
        _lk_limits(rows, out, lk, max_t[lk], none, none.astype(float))
    max_t[:] = np.fmin(max_t, out["max_t_lk"])
    max_t[fill_over] = np.nan

    # the density at the target on the worst-case isochore (the PT flash), for the fill-pressure and mass limits
    live = np.flatnonzero(~fallback & ~screened_out)
    rho_star = out["rho_star"] = np.full(n, np.nan)
    first = live if mass_limit else live[by_pressure[live]]
    rho_star[first] = _target_densities(fluid, target[first], t_peak[first], out["vapour_pressure_peak"][first])

    # fill pressure whose peak is the target: the pressure of that density at the fill temperature, where that
    # state is one phase there (inside the dome no fill pressure gives that density: no limit)
    pr = live[by_pressure[live]]
    if pr.size:
        p_lo = atm[pr] * 1.01
        p_hi = np.maximum(target[pr], rows.p_fill[pr]) * np.maximum(1.0, t_fill[pr] / t_peak[pr]) * 1.05
        have = np.isfinite(rho_star[pr])
        p_star = np.full(pr.size, np.nan)
        in_dome = np.zeros(pr.size, dtype=bool)
        if have.any():
            # about half of these states lie inside the dome: looked at through the saturation flash first, except
            # those known to be denser than the saturated liquid at the fill temperature (the same numbers)
            rs = rho_star[pr][have]
            with np.errstate(invalid="ignore"):
                liquid = (rs > fluid.critical_molar_density) & ~(rs < out["liquid_fill_sat"][pr][have])
            p, ph, v = fluid.states(rs, t_fill[pr][have], dome=~liquid)
            p_star[have] = np.where(v & (ph != "two-phase"), p, np.nan)
            in_dome[have] = v & (ph == "two-phase")

        vap_fill = out["vapour_pressure"]

        def f_p(p, ix):
            r = pr[ix]
            return _fill_peak_offsets(fluid, p, t_fill[r], t_peak[r], target[r], vap_fill[r])

        # screen._root first looks at both ends: a fill at the top of the range may be a liquid heated past the
        # equation's range; only those rows need the look (a vapour fill there stays far inside it)
        vap = np.full(pr.size, np.inf)
        below = t_fill[pr] < fluid.critical_temperature
        vap[below] = out["vapour_pressure"][pr][below]
        risky = np.flatnonzero(p_hi > vap)
        p_max = np.full(pr.size, np.nan)
        inside = np.isfinite(p_star) & (p_star > p_lo) & (p_star < p_hi)
        p_max[inside] = p_star[inside]
        miss = ~np.isfinite(rho_star[pr])
        fallback[pr[miss]] = True
        if risky.size:
            # the target's density inside the dome at the fill temperature: no limit (above), where the peak's
            # jump at the vapour pressure is clear of the target (_no_fill_reaches); else per row
            d = risky[in_dome[risky]]
            fallback[pr[d[~_no_fill_reaches(fluid, t_fill[pr[d]], t_peak[pr[d]], target[pr[d]],
                                            out["liquid_fill_sat"][pr[d]])]]] = True
            risky = risky[~in_dome[risky]]
        if risky.size:
            f_hi = f_p(p_hi[risky], risky)
            bad = ~np.isfinite(f_hi)
            if bad.any():
                b = risky[bad]
                r, okb = _known_scan_root(lambda x, ix, b=b: f_p(x, b[ix]), p_star[b], p_lo[b], p_hi[b], 40)
                p_max[b] = r
                fallback[pr[b[~okb]]] = True
        lkp = np.flatnonzero(out["lk_ok"][pr] & ~fallback[pr])
        if lkp.size:
            _lk_limits(rows, out, none, none.astype(float), pr[lkp], p_max[lkp])
        out["max_p"][pr] = np.fmin(p_max, out["max_p_lk"][pr])

    # fill density whose peak is the target (screen._mass_limit), then the liquid-full cap
    live = np.flatnonzero(~fallback & ~screened_out)
    out["mass_pending"] = np.zeros(n, dtype=bool)
    if not mass_limit:
        out["mass_pending"][live] = True
    elif live.size:
        fallback[live[~_liquefied_mass_limit(rows.gas, fluid, out, live, live[:0])]] = True


def _target_densities(fluid: ReferenceFluid, target: np.ndarray, t_peak: np.ndarray,
                      vapour: np.ndarray) -> np.ndarray:
    """The density of the target pressure at the worst case per row (fluid.density: the PT flash; NaN where it
    raises NotApplicable), the rows' flashes in one call; `vapour`: the vapour pressure at t_peak where it is
    known (what vapour_pressure gives), the rest below the critical temperature worked out in one call before
    the flashes (NaN where vapour_pressure raises: density works it out again and raises)."""
    ps = np.array(vapour, dtype=float)
    ask = np.flatnonzero(np.isnan(ps) & (t_peak < fluid.critical_temperature))
    if ask.size:
        ps[ask] = _saturation_states(fluid, t_peak[ask], 0.0)[0]
    return fluid.densities(target, t_peak, ps)[0]


def _fill_peak_offsets(fluid: ReferenceFluid, p: np.ndarray, t_fill: np.ndarray, t_peak: np.ndarray,
                       target: np.ndarray, vapour: np.ndarray) -> np.ndarray:
    """fluid.pressure(fluid.density(p, t_fill), t_peak) - target per row (the worst-case peak of a fill pressure
    p, less the target; NaN where either raises NotApplicable), over the rows at once; `vapour`: the vapour
    pressure at t_fill where it is known (what vapour_pressure gives; NaN: density works it out)."""
    rho, _p, _phase, _ok = fluid.densities(p, t_fill, vapour)
    peak, _v, _r = fluid.pressures(rho, t_peak)
    return peak - target


def _liquefied_mass_limit(gas: Mixture, fluid: ReferenceFluid, out: dict, live: np.ndarray,
                          star: np.ndarray) -> np.ndarray:
    """The fill density whose peak is the target (screen._mass_limit's root, the lower of the reference and the
    generalized model's, before the liquid-full cap) of rows `live` of `gas` into ``out["mass_rho"]``, the target's density first solved for rows `star`; returns whether each
    row's root is settled (False: the row needs the single screening)."""
    t_peak, target, rho_star = out["t_peak"], out["target"], out["rho_star"]
    if star.size:
        rho_star[star] = _target_densities(fluid, target[star], t_peak[star], out["vapour_pressure_peak"][star])
    top = _rho_top(fluid, True)
    lo, hi = np.full(live.size, 1e-6 * top), np.full(live.size, top * 0.999)

    def f_r(r, ix):
        p, _v, _r = fluid.pressures(r, t_peak[live[ix]])
        return p - target[live[ix]]

    r, ok = _known_scan_root(f_r, rho_star[live], lo, hi, 60)
    out["mass_rho"][live] = r
    # screen._mass_limit's solve stops within 1e-9 of the whole density range: a root far below the range's
    # top (a vapour-side density) is known there only to a few 1e-8 of itself, so such rows take that same
    # solve, row by row, for the same number
    small = np.flatnonzero(ok & np.isfinite(r) & (r < _SMALL_ROOT * hi))
    for j in small.tolist():
        i = int(live[j])
        tp, tg = float(t_peak[i]), float(target[i])
        out["mass_rho"][i] = _screen._root(lambda x, tp=tp, tg=tg: fluid.pressure(x, tp) - tg, float(lo[j]),
                                           float(hi[j]), n=60) or np.nan
    # the generalized model's density at the target where it is lower (screen._mass_limit)
    out["mass_rho"][live] = np.fmin(out["mass_rho"][live], _generalized_target_density(gas, out, live))
    return ok


def _mass_limit_settled(cols: dict, k: int, gas: Mixture) -> bool:
    """Whether row k of liquefied-gas columns of `gas` has its fill-density limit (solved here, for every row of
    those columns at once, on the first call where :func:`_liquefied_limits` left it pending); False where that
    solve is not sure of it (the row's full result then comes from the single screening)."""
    pending = np.flatnonzero(cols["mass_pending"])
    if pending.size:
        fluid = reference_fluid((gas.components[0].coolprop_name,), (1.0,))
        unsettled = np.zeros(cols["t_peak"].size, dtype=bool)
        ok = _liquefied_mass_limit(gas, fluid, cols, pending, pending[~cols["by_pressure"][pending]])
        unsettled[pending[~ok]] = True
        cols["mass_unsettled"] = unsettled
        cols["mass_pending"] = np.zeros(cols["t_peak"].size, dtype=bool)
    unsettled = cols.get("mass_unsettled")
    return unsettled is None or not unsettled[k]


def _liquefied_columns(rows: Rows, mass_limit: bool = True, limits: bool = True,
                       limit_rows: np.ndarray | None = None) -> dict:
    """Fill state, phases, the reference model, the liquid-full rule and the limits of rows of one pure liquefied
    gas, as arrays (the liquefied-gas counterpart of :func:`_columns`). Rows where the contents are a gas at fill
    and at the worst case (the gas models apply), and rows a step is not sure of, are marked ``fallback``.
    `limits` False: the models alone, for the states of tolerance corners (:func:`_liquefied_corner_peaks`);
    `limit_rows`: as for :func:`_columns`."""
    n = rows.t_fill.size
    t_peak, stated, fill_governs, t_exposure = worst_case(rows.ambient_max, rows.gas_temperature, rows.t_fill)
    fallback = np.zeros(n, dtype=bool)
    out: dict = {k: np.full(n, np.nan) for k in _LIQUEFIED_FLOAT_COLUMNS}
    out.update(kind="liquefied", t_peak=t_peak, stated=stated, fill_governs=fill_governs, t_exposure=t_exposure,
               fallback=fallback,
               gas_below_ambient=~np.isnan(rows.gas_temperature) & (rows.gas_temperature < rows.ambient_max))
    fluid = reference_fluid((rows.gas.components[0].coolprop_name,), (1.0,))
    fallback |= ~(rows.t_fill >= fluid.t_min) | ~(t_peak <= fluid.t_max)
    _liquefied_fill(rows, fluid, out, fallback)
    _liquefied_gas_models(rows, out, fallback)
    live = ~out["refused"]
    rho = np.where(live, out["rho_molar"], np.nan)
    _dome_columns(fluid, rho, out, fallback)
    _crossing_columns(fluid, out, fallback)
    _liquid_full_columns(rows, fluid, out, fallback)
    if limits:
        # rows left out of the limits count as fallen back for their solves, and only for those
        skip = fallback if limit_rows is None else fallback | ~limit_rows
        _liquefied_limits(rows, fluid, out, skip, mass_limit)
        if limit_rows is not None:
            fallback |= skip & limit_rows
    return out


def _unreachable_reason(reason: str) -> str:
    """The out-of-scope reason of a row whose worst case lies beyond the reference equation's range, as
    screen._screen_at words it from its three models' notes (each that reason)."""
    return f"No real-gas model applies to this vessel (ideal, generalized, reference: {reason}), so it cannot be screened."


def _liquefied_verdict(cols: dict, k: int, rated: float, relief: float | None, atm: float, required_margin: float,
                       max_ratio: float | None, name: str | None, bounding: float | None = None,
                       liquid_full_more: Iterable[str] = ()) -> dict:
    """One liquefied-gas row's verdict, reasons, margins, governing model and warnings (through screen.decide and
    the rules of screen.py), as :func:`_verdict` gives them for a permanent gas. `bounding`: the bounding peak
    under the input tolerances [Pa], decided on where it is higher, and `liquid_full_more`: the liquid-full
    findings at their corners, each added once after the row's own (as screen._screen_at)."""
    warnings = _exposure_warnings(cols, k, name)
    band = cols["band"][k]
    if band is not None:
        code, reason, warning = band
        warnings.append({"code": code, "message": warning})
        verdict, reasons, margin, relief_margin = _screen.decide(
            peak=None, rated=rated, relief=relief, atm=atm, required_margin=required_margin, any_real_model=False,
            out_of_scope_reason=reason)
        return {"verdict": verdict, "reasons": reasons, "warnings": warnings, "margin_fraction": margin,
                "relief_margin_fraction": relief_margin, "governing_model": None, "peak_pressure_pa": None,
                "applicable": []}
    if cols["unreachable"][k]:
        verdict, reasons, margin, relief_margin = _screen.decide(
            peak=None, rated=rated, relief=relief, atm=atm, required_margin=required_margin, any_real_model=False,
            out_of_scope_reason=_unreachable_reason(cols["unreachable_reason"][k]))
        return {"verdict": verdict, "reasons": reasons, "warnings": warnings, "margin_fraction": margin,
                "relief_margin_fraction": relief_margin, "governing_model": None, "peak_pressure_pa": None,
                "applicable": []}
    peak_ref = float(cols["peak_ref"][k])
    gas_ok = bool(cols["gas_ok"][k])
    peak_gen = float(cols["lk_peak"][k]) if gas_ok and cols["lk_ok"][k] else None
    gov_name, peak = _highest(peak_gen, peak_ref)
    if bounding is not None:
        peak = max(peak, bounding)
    disagree = _screen.models_disagree(peak_gen, peak_ref)
    if disagree:
        warnings.append(disagree)
    liquid_full = None
    if cols["liquid_full_applies"][k]:
        fs = _screen.FillState(liquid_full_temperature=_opt(cols["liquid_full"][k]),
                               dp_dt_after_liquid_full=_opt(cols["dpdt_liquid_full"][k]))
        liquid_full = _screen.liquid_full_text(fs, float(cols["t_peak"][k]))
    liquid_full = _screen.liquid_full_reason(liquid_full, liquid_full_more)
    ratio_reason = _screen.filling_ratio_reason(float(cols["rho_fill_mass"][k]), max_ratio)
    verdict, reasons, margin, relief_margin = _screen.decide(
        peak=peak, rated=rated, relief=relief, atm=atm, required_margin=required_margin, any_real_model=True,
        out_of_scope_reason=None, liquid_full_reason=liquid_full, filling_ratio_reason=ratio_reason,
        fill_over=bool(cols["fill_over"][k]))
    return {"verdict": verdict, "reasons": reasons, "warnings": warnings, "margin_fraction": margin,
            "relief_margin_fraction": relief_margin, "governing_model": gov_name, "peak_pressure_pa": peak,
            "applicable": _APPLICABLE[gas_ok, peak_gen is not None]}


def _liquefied_plain_columns(part: PlainPart) -> dict:
    """_liquefied_columns of a part of plain rows plus each row's ``verdict``; the fill-density limit is solved
    only where a full result is asked for (:func:`_mass_limit_settled`)."""
    cols = _liquefied_columns(part, mass_limit=False)
    rated, atm, margin_req = part.rated.tolist(), part.atm.tolist(), part.margin_req.tolist()
    relief, ratio = part.relief.tolist(), part.ratio.tolist()
    # the columns _liquefied_verdict reads, each listed once (indexing a list is cheaper than making a numpy scalar)
    listed = _Listed(cols)
    _verdict_columns(cols, part.p_fill.size, (
        (k, _liquefied_verdict(listed, k, rated[k], None if math.isnan(relief[k]) else relief[k], atm[k],
                               margin_req[k], None if math.isnan(ratio[k]) else ratio[k], "exposure"))
        for k in np.flatnonzero(~cols["fallback"]).tolist()))
    return cols


@functools.lru_cache(maxsize=256)
def _line_references(fluid: ReferenceFluid) -> orjson.Fragment:
    """The reference model's "eos_references" as a line of the batch's JSON holds them: their JSON, written once
    per fluid (an orjson.Fragment, written into each line as it is; the fluids live as long as the process)."""
    return orjson.Fragment(orjson.dumps(fluid.eos_references()))


@functools.lru_cache(maxsize=64)
def _line_not_applicable(why: str, equation: str) -> tuple[dict, dict]:
    """The ideal and generalized models' parts where the gas models do not apply (`why`), as
    :func:`_assemble_liquefied` lays them out, shared by the lines of the batch's JSON that hold them (each line
    is written at once and never changed)."""
    return (_screen.not_applicable("ideal", why, equation=equation).as_dict(),
            _screen.not_applicable("generalized", why).as_dict())


def _assemble_liquefied(case: Case, cols: dict, k: int, v: dict | None = None, sun: SunRow | None = None,
                        fold: bool = True) -> dict:
    """One liquefied-gas row's result dict, laid out as screen.screen_states lays out a single-scenario result
    (`fold`: see :func:`_layout`)."""
    gas = case.gas
    fluid = reference_fluid((gas.components[0].coolprop_name,), (1.0,))
    atm = case.site.atmospheric_pressure_pa
    sc = case.scenarios[0] if getattr(case, "scenarios", ()) else case
    if v is None:
        v = _liquefied_verdict(cols, k, case.rated_pressure_pa, case.relief_set_pressure_pa, atm,
                               case.required_margin, case.max_filling_ratio_kg_m3, getattr(sc, "name", None))
    if sun is not None:   # the worst-case step's warnings (screen._worst_case_temperature), then the fill state's
        v = {**v, "warnings": _sun_warnings(v["warnings"], sun, _SUN_KEEPS_LIQUEFIED)}
    t_fill, t_peak = float(case.fill_temperature_k), float(cols["t_peak"][k])
    by_pressure = case.fill_pressure_pa is not None
    refused = bool(cols["refused"][k])
    # the limits' liquid-full temperature, dry-out temperature, phase-boundary pressure and slope after liquid-full
    lim_extra = (_opt(cols["liquid_full"][k]), _opt(cols["dry"][k]), _opt(cols["crossing"][k]),
                 _opt(cols["dpdt_liquid_full"][k]))
    if refused:
        na = "the fill state cannot be established (see the verdict's reason)"
        models = {nm: _screen.not_applicable(nm, na).as_dict() for nm in ("ideal", "generalized", "reference")}
        limits = _LIMITS(None, None, None, None, None, None, _screen.limits_note(False, False), *lim_extra)
        fill_rho_molar = rho_mass = mass = None
        phase = None
        peak = None
        governing_reason = _screen.governing_text(None, [])
        nominal_margin = None
    elif cols["unreachable"][k]:
        # the worst case beyond the reference equation's range: screen._fill_state keeps the fill density and
        # nothing of the isochore analysis; every model says why it does not apply
        why = cols["why_not_gas"][k]
        models = {"ideal": _screen.not_applicable("ideal", why, equation="P v = R T, so at fixed density P2 = P1 "
                                                  "T2 / T1").as_dict(),
                  "generalized": _screen.not_applicable("generalized", why).as_dict(),
                  "reference": _screen.not_applicable(
                      "reference", f"reference equation of state not applicable: {cols['unreachable_reason'][k]}",
                      fluid=fluid.label).as_dict()}
        limits = _LIMITS(None, None, None, None, None, None, _screen.limits_note(False, False), None, None, None, None)
        rho_fill_mass = float(cols["rho_fill_mass"][k])
        fill_rho_molar = rho_fill_mass / gas.molar_mass
        rho_mass = fill_rho_molar * gas.molar_mass
        mass = rho_fill_mass * case.water_capacity_m3
        phase = None
        peak = None
        governing_reason = _screen.governing_text(None, [])
        nominal_margin = None
    else:
        why = cols["why_not_gas"][k]
        rho_fill_mass = float(cols["rho_fill_mass"][k])
        rho = rho_fill_mass / gas.molar_mass
        p_fill_ref = float(cols["p_fill_ref"][k])
        phase = cols["phase_fill"][k]
        peak = v["peak_pressure_pa"]
        equation = "P v = R T, so at fixed density P2 = P1 T2 / T1"
        if why is None:     # a gas at fill and at the worst case
            peak_ideal = float(cols["peak_ideal"][k])
            ideal = {"applicable": True, "peak_pressure_pa": peak_ideal,
                     "note": "ideal-gas law; shown for comparison, it ignores real-gas behaviour",
                     "fill_molar_density_mol_m3": float(cols["rho_ideal"][k]), "equation": equation,
                     "off_governing_fraction": peak_ideal / peak - 1.0}
            gen = _generalized_model(cols, k, gas)
            governing_reason = _screen.governing_text(v["governing_model"], [
                nm for nm in v["applicable"] if nm not in (v["governing_model"], "ideal")])
        else:
            if type(case) is CaseRow:   # a line of the batch's JSON: the same two parts for every row given this why
                ideal, gen = _line_not_applicable(why, equation)
            else:
                ideal = _screen.not_applicable("ideal", why, equation=equation).as_dict()
                gen = _screen.not_applicable("generalized", why).as_dict()
            governing_reason = _screen.governing_text("reference", [])
        peak_ref = float(cols["peak_ref"][k])
        models = {
            "ideal": ideal, "generalized": gen,
            "reference": {"applicable": True, "peak_pressure_pa": peak_ref,
                          "note": "multiparameter Helmholtz-energy equation of state (CoolProp)",
                          "fill_molar_density_mol_m3": rho, "fluid": fluid.label, "phase_fill": phase,
                          "phase_peak": cols["phase_peak"][k],
                          "z_fill": (case.fill_pressure_pa or p_fill_ref) / (rho * 8.314462618 * t_fill),
                          "z_peak": peak_ref / (rho * R * t_peak),
                          "eos_references": (_line_references(fluid) if type(case) is CaseRow
                                             else fluid.eos_references())}}
        mass_limit = _mass_limit_of(case, cols, k)
        fill_over = bool(cols["fill_over"][k])
        limits = _LIMITS(*mass_limit, None if fill_over else _opt(cols["max_t"][k]),
                         _opt(cols["max_p"][k]) if by_pressure else None, float(cols["target"][k]),
                         _screen.limits_note(True, fill_over, case), *lim_extra)
        fill_rho_molar = rho
        rho_mass = rho * gas.molar_mass
        mass = rho_fill_mass * case.water_capacity_m3
        nominal_margin = 1.0 - (peak - atm) / (case.rated_pressure_pa - atm)
    vap = _opt(cols["vapour_pressure"][k]) if by_pressure else None
    return _layout(case, cols, k, v, sun, (rho_mass, fill_rho_molar, mass, phase, vap), models, peak,
                   v["governing_model"], governing_reason, nominal_margin, limits, fold)
