"""Screen many vessels at once: the batch engine.

Rows are grouped by gas. For a pure permanent gas filled by pressure, with one plain exposure and no
tolerances, both temperatures above the critical temperature (the "vectorised path"):

* the ideal and generalized models run as numpy arrays over every row of the group (no Python loop
  per row; the Lee–Kesler functions of :mod:`screening.physics.eos.generalized` are array functions);
* the reference model uses one cached :class:`ReferenceFluid` per fluid, reused across rows (its
  ``pressures()`` loop, and ``density()`` for the fill state);
* the limits are solved without the per-row scalar scan: on the generalized model by inverting the
  isochore at the target pressure (a vectorised secant on T, and density-at-pressure for the fill
  limit), on the reference model by a few vectorised secant steps through ``pressures()`` started from
  the generalized answer, and only where the reference limit can be the lower one;
* the dry-out temperature (where the isochore meets the saturation dome) by a per-fluid table of the
  saturated-vapour density and a few secant steps;
* verdicts through :func:`screening.screen.decide`, the one place that decides a verdict.

Everything else goes through :func:`screening.screen.screen_case` one row at a time, on purpose: liquefiable
and dissolved gases and mixtures (their reference state is checked per row against the phase envelope),
mass fills, fills denser than critical (liquid-full analysis), two-phase or near-critical fills,
tolerances and sun exposure, and any row where a vectorised step is not sure of itself (a root next to
the edge of a model's range, a solve that did not settle). Those rows give exactly the single-case result.

The result of a row has the keys of ``screen_case``; its numbers agree with it to the solve tolerance
(about 1e-9 relative; ``screen_case`` stops its limit solves there). ``curves`` and ``phase_diagram`` are None
(plot data): the batch report computes curves only for the rows it details.
"""

from __future__ import annotations

import math
from typing import Callable, Iterable

import numpy as np

from screening import __version__
from screening import screen as _screen
from screening.cautions import ASSUMPTIONS, CAUTION, SHORT_CAUTION
from screening.constants import R
from screening.errors import InputError, NotApplicable
from screening.inputs.case import Case
from screening.physics.eos.generalized import lee_kesler_density, lee_kesler_pressure, pseudocritical
from screening.physics.eos.reference import ReferenceFluid, reference_fluid

#: Number of scan points screen._limits uses (kept equal so the bracket checks agree).
_SCAN_N = 40
#: Relative step at which the vectorised secant solves stop.
_SECANT_RTOL = 1e-13
_SECANT_MAX = 30
#: Rows closer than this to the edge of the Lee–Kesler range at a limit go the per-row way.
_LK_PR_EDGE = 9.5
_LK_TR_EDGE = 3.95

_CAUTIONS = {"caution": CAUTION, "short_caution": SHORT_CAUTION, "assumptions": list(ASSUMPTIONS)}


# ----------------------------------------------------------------------------- eligibility

def vectorisable(case: Case) -> bool:
    """Whether the vectorised path covers this row (see the module doc); the rest go per row."""
    gas = case.gas
    if not gas.is_pure or gas.kind != "permanent" or gas.components[0].coolprop_name is None:
        return False
    if case.fill_pressure_pa is None or case.fill_temperature_k is None:
        return False
    if getattr(case, "tolerance", None) is not None:
        return False
    scenarios = getattr(case, "scenarios", ())
    if len(scenarios) > 1 or any(getattr(s, "solar", "none") != "none" for s in scenarios):
        return False
    return True


def _worst(case: Case) -> tuple[float, str]:
    scenarios = getattr(case, "scenarios", ())
    sc = scenarios[0] if scenarios else case
    ambient, gas_t = sc.ambient_max_k, sc.gas_temperature_k
    values = [t for t in (gas_t, ambient) if t is not None]
    t = max(values)
    if gas_t is not None and (ambient is None or gas_t >= ambient):
        return t, "gas temperature stated in the case"
    return t, "ambient maximum"


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
    """Saturated-vapour density of a pure fluid as a table, for the dry-out temperature of many isochores."""

    def __init__(self, fluid: ReferenceFluid) -> None:
        self.fluid = fluid
        tt, tc = fluid.triple_temperature, fluid.critical_temperature
        self.t_hi = tc - 1e-4                   # isochore._TC_GAP
        u = np.linspace(0.0, 1.0, 600)
        ts = tt + (self.t_hi - tt) * (1.0 - (1.0 - u) ** 2)  # denser towards Tc
        self.t = ts
        self.rho = np.array([fluid.saturated_vapour_density(float(t)) for t in ts])
        self.rho_tt = self.rho[0]
        self.rho_hi = self.rho[-1]

    def dry_out(self, rho: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Dry-out temperature [K] (NaN: never meets the dome) and whether the solve settled."""
        out = np.full(rho.shape, np.nan)
        ok = np.ones(rho.shape, dtype=bool)
        never = rho < self.rho_tt                # vapour at the triple point already denser
        at_hi = rho == self.rho_hi
        critical = rho > self.rho_hi             # root in the last gap below Tc
        out[at_hi] = self.t_hi
        out[critical & ~at_hi] = self.fluid.critical_temperature
        solve = np.flatnonzero(~never & ~critical & ~at_hi)
        if solve.size:
            r = rho[solve]
            t0 = np.interp(np.log(r), np.log(self.rho), self.t)
            sat = self.fluid.saturated_vapour_density

            def f(t, ix):
                vals = np.empty(t.size)
                for j, (tj, i) in enumerate(zip(t, ix)):
                    try:
                        vals[j] = sat(float(min(max(tj, self.t[0]), self.t_hi))) - rho[i]
                    except NotApplicable:
                        vals[j] = np.nan
                return vals

            f0 = f(t0, solve)
            t1 = t0 + np.where(f0 > 0, -1e-3, 1e-3) * np.maximum(1.0, 1e-4 * t0)
            root, conv = _secant(f, t0, f0, t1, solve)
            out[solve] = root
            ok[solve] = conv & (root >= self.t[0]) & (root <= self.t_hi)
        return out, ok


_DOMES: dict[str, _Dome] = {}
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


def _dome(fluid: ReferenceFluid) -> _Dome:
    if fluid.label not in _DOMES:
        _DOMES[fluid.label] = _Dome(fluid)
    return _DOMES[fluid.label]


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


# ----------------------------------------------------------------------------- one gas group

def _group(cases: list[Case]) -> list[dict | None]:
    """Results of rows of one pure permanent gas on the vectorised path; None where a row must go per row."""
    n = len(cases)
    gas = cases[0].gas
    g = gas.components[0]
    M = gas.molar_mass
    p_fill = np.array([c.fill_pressure_pa for c in cases])
    t_fill = np.array([c.fill_temperature_k for c in cases])
    worst = [_worst(c) for c in cases]
    t_peak = np.array([w[0] for w in worst])
    rated = np.array([c.rated_pressure_pa for c in cases])
    atm = np.array([c.site.atmospheric_pressure_pa for c in cases])
    margin_req = np.array([c.required_margin for c in cases])
    fallback = np.zeros(n, dtype=bool)

    try:
        fluid = reference_fluid((g.coolprop_name,), (1.0,))
    except NotApplicable:
        return [None] * n
    tc_ref = fluid.critical_temperature
    # both temperatures above the critical temperature: a single-phase gas, no saturation checks
    fallback |= (np.minimum(t_fill, t_peak) <= max(tc_ref, g.critical_temperature))
    fallback |= (t_fill < fluid.t_min) | (t_peak > fluid.t_max)

    # --- reference fill state: density at the fill (PT flash, checked), peak on the same isochore
    rho_molar, ok_fill, _ = _loop(fluid.density, p_fill, t_fill)
    fallback |= ~ok_fill
    rho_mass = rho_molar * M
    pure = not fluid.is_pseudo_pure
    if pure:
        fallback |= ~(rho_molar < fluid.critical_molar_density)   # liquid-full analysis: per row
    rho_ref = rho_mass / M
    live = ~fallback
    peak_ref = np.full(n, np.nan)
    ok_ref = np.zeros(n, dtype=bool)
    reason_ref = [""] * n
    if live.any():
        idx = np.flatnonzero(live)
        p, v, rs = fluid.pressures(rho_ref[idx], t_peak[idx])
        peak_ref[idx], ok_ref[idx] = p, v
        for j, i in enumerate(idx):
            reason_ref[i] = str(rs[j])
    # a reference failure at the peak is rare on this path; leave such rows to the per-row path
    fallback |= live & ~ok_ref

    # --- dry-out temperature (pure fluids; the pseudo-pure air has no phase analysis)
    dry = np.full(n, np.nan)
    if pure:
        d_rows = np.flatnonzero(~fallback)
        if d_rows.size:
            t_dry, ok_dry = _dome(fluid).dry_out(rho_molar[d_rows])
            dry[d_rows] = t_dry
            fallback[d_rows[~ok_dry]] = True

    # --- ideal
    rho_ideal = p_fill / (R * t_fill)
    peak_ideal = rho_ideal * R * t_peak

    # --- generalized, as arrays
    fr = np.array(gas.fractions)
    comps = gas.components

    def consts(t):
        return pseudocritical(fr, np.array([c.critical_temperature for c in comps]),
                              np.array([c.critical_pressure for c in comps]),
                              np.array([c.acentric_factor for c in comps]),
                              np.array([c.molar_mass for c in comps]), np.array([c.quantum for c in comps]),
                              np.array([c.classical_critical_temperature or c.critical_temperature for c in comps]),
                              np.array([c.classical_critical_pressure or c.critical_pressure for c in comps]),
                              np.asarray(t, dtype=float))

    tcf, pcf, omf = (np.broadcast_to(np.asarray(a, dtype=float), (n,)) for a in consts(t_fill))
    tcp, pcp, omp = (np.broadcast_to(np.asarray(a, dtype=float), (n,)) for a in consts(t_peak))
    gf = lee_kesler_density(p_fill, t_fill, tcf, pcf, omf)
    rho_lk = np.where(gf.valid, gf.molar_density, 1.0)
    gp = lee_kesler_pressure(rho_lk, t_peak, tcp, pcp, omp)
    lk_ok = gf.valid & gp.valid
    lk_reason = np.where(gf.valid, gp.reason, gf.reason)
    peak_lk = np.where(lk_ok, gp.pressure, np.nan)
    quantum = any(c.quantum for c in comps)
    # the vectorised limits assume constant critical constants (not the quantum correction)
    if quantum:
        fallback |= lk_ok

    # --- limits: targets and scan ranges as screen._limits has them
    target = atm + (rated - atm) * (1.0 - margin_req)
    t_lo = np.minimum(t_fill, t_peak)
    t_hi = np.maximum(t_peak, t_fill) + 300.0
    p_lo = atm * 1.01
    p_hi = np.maximum(target, p_fill) * np.maximum(1.0, t_fill / t_peak) * 1.05

    max_t = np.full(n, np.nan)
    max_p = np.full(n, np.nan)
    rows_lk = np.flatnonzero(lk_ok & ~fallback)
    # generalized: T on the isochore at the rated pressure (density at the rated pressure = fill density)
    t_lk = np.full(n, np.nan)
    if rows_lk.size:
        i = rows_lk

        def f_t(t, ix):
            s = lee_kesler_density(rated[ix], t, tcp[ix], pcp[ix], omp[ix])
            return np.where(s.valid, s.molar_density / rho_lk[ix] - 1.0, np.nan)

        reach = rated[i] / pcp[i] <= 10.0
        x0 = np.minimum(t_peak[i] * np.clip(rated[i] / peak_lk[i], 0.2, 5.0), 3.9 * tcp[i])
        f0 = f_t(x0, i)
        root, conv = _secant(f_t, x0, f0, x0 * (1.0 + 1e-4), i)
        has = reach & conv & (root >= t_lo[i]) & (root <= t_hi[i])
        a, b = _linspace_bracket(t_lo[i], t_hi[i], root)
        edge = has & ((b / tcp[i] > _LK_TR_EDGE) | (rated[i] * b / root / pcp[i] > _LK_PR_EDGE))
        # a root beyond the range or a bracket at its edge: not sure what the scan finds -> per row
        unsure = (~reach & (rated[i] / pcp[i] < 10.5)) | edge | (reach & ~conv)
        unsure |= reach & ~has & conv & (root > t_lo[i]) & (b / tcp[i] > _LK_TR_EDGE)
        fallback[i[unsure]] = True
        t_lk[i[has & ~unsure]] = root[has & ~unsure]

        # generalized: the fill pressure whose peak is the target: density at the target and the peak
        # temperature, then the pressure of that density at the fill temperature
        sd = lee_kesler_density(target[i], t_peak[i], tcp[i], pcp[i], omp[i])
        rho_star = np.where(sd.valid, sd.molar_density, 1.0)
        sp = lee_kesler_pressure(rho_star, t_fill[i], tcf[i], pcf[i], omf[i])
        pstar = np.where(sd.valid & sp.valid, sp.pressure, np.nan)
        hasp = np.isfinite(pstar) & (pstar >= p_lo[i]) & (pstar <= p_hi[i])
        a, b = _linspace_bracket(p_lo[i], p_hi[i], pstar)
        edgep = hasp & ((b / pcf[i] > _LK_PR_EDGE) | (target[i] * b / pstar / pcp[i] > _LK_PR_EDGE))
        unsure = edgep | (~np.isfinite(pstar) & (target[i] / pcp[i] < 10.5))
        fallback[i[unsure]] = True
        ok = hasp & ~unsure
        max_p_lk = np.full(n, np.nan)
        max_p_lk[i[ok]] = pstar[ok]
    else:
        max_p_lk = np.full(n, np.nan)

    # reference: max temperature, solved only where it can be below the generalized one
    live = np.flatnonzero(~fallback)
    t_ref = np.full(n, np.nan)
    if live.size:
        need = live.copy()
        with_lk = np.isfinite(t_lk[live])
        if with_lk.any():
            j = live[with_lk]
            pj, vj, _ = fluid.pressures(rho_ref[j], t_lk[j])
            fallback[j[~vj]] = True
            below = vj & (pj < rated[j])           # reference still under the rating there: its root is higher
            need = np.setdiff1d(live, j[below])
        need = need[~fallback[need]]
        if need.size:
            def f_ref(t, ix):
                p, _v, _r = fluid.pressures(rho_ref[ix], t)
                return p / rated[ix] - 1.0

            x0 = t_peak[need]
            f0 = peak_ref[need] / rated[need] - 1.0
            x1 = np.where(np.isfinite(t_lk[need]), t_lk[need], t_peak[need] * rated[need] / peak_ref[need])
            x1 = np.where(np.abs(x1 - x0) < 1e-6 * x0, x0 * (1 + 1e-3), x1)
            root, conv = _secant(f_ref, x0, f0, x1, need)
            fallback[need[~conv]] = True
            inside = conv & (root >= t_lo[need]) & (root <= t_hi[need])
            _a, b = _linspace_bracket(t_lo[need], t_hi[need], root)
            fallback[need[inside & (b > fluid.t_max)]] = True
            t_ref[need[inside]] = root[inside]
    max_t = np.fmin(t_lk, t_ref)

    # reference: max fill pressure, density at the target on the peak isochore, then its fill pressure
    live = np.flatnonzero(~fallback)
    max_p_ref = np.full(n, np.nan)
    rho_star_ref = np.full(n, np.nan)
    if live.size:
        rs, vs, _ = _loop(fluid.density, target[live], t_peak[live])
        rho_star_ref[live] = rs
        ps = np.full(live.size, np.nan)
        vp = np.zeros(live.size, dtype=bool)
        if vs.any():
            ps[vs], vp[vs], _r = fluid.pressures(rs[vs], t_fill[live][vs])
        fallback[live[~(vs & vp)]] = True
        hasp = vs & vp & (ps >= p_lo[live]) & (ps <= p_hi[live])
        max_p_ref[live[hasp]] = ps[hasp]
    max_p = np.fmin(max_p_lk, max_p_ref)

    # mass limit (screen._mass_limit): the reference density at the target on the peak isochore, inside
    # the scan range screen uses, capped by the liquid-full density near the critical temperature
    try:
        rho_top = _rho_top(fluid, pure)
    except NotApplicable:
        rho_top = None
    mass_rho = np.full(n, np.nan)
    if rho_top is not None:
        live = np.flatnonzero(~fallback)
        r = rho_star_ref[live]
        inside = np.isfinite(r) & (r >= 1e-6 * rho_top) & (r <= 0.999 * rho_top)
        mass_rho[live[inside]] = r[inside]
        # near-critical peaks cap at the critical density: per row
        if pure:
            tc = fluid.critical_temperature
            fallback[live[(t_peak[live] <= _screen.DENSE_FLUID_TEMPERATURE_RATIO * tc) | (t_fill[live] < tc)]] = True

    # vapour pressure where the isochore leaves the dome (isochore.isochore_phases: crossing_pressure)
    crossing = np.full(n, np.nan)
    for k in np.flatnonzero(~fallback & np.isfinite(dry)):
        try:
            crossing[k] = (fluid.critical_pressure if dry[k] >= fluid.critical_temperature
                           else fluid.vapour_pressure(float(dry[k])))
        except NotApplicable:
            fallback[k] = True

    out: list[dict | None] = []
    eos_refs = fluid.eos_references()
    for k, case in enumerate(cases):
        if fallback[k]:
            out.append(None)
            continue
        out.append(_assemble(
            case, fluid, eos_refs, worst[k], float(t_fill[k]), float(t_peak[k]), float(rho_molar[k]),
            float(rho_mass[k]), float(rho_ref[k]), float(peak_ref[k]), float(rho_ideal[k]), float(peak_ideal[k]),
            gf, gp, k, bool(lk_ok[k]), str(lk_reason[k]), (float(tcf[k]), float(pcf[k])),
            (float(tcp[k]), float(pcp[k]), float(omp[k])),
            None if math.isnan(dry[k]) else float(dry[k]),
            None if math.isnan(max_t[k]) else float(max_t[k]),
            None if math.isnan(max_p[k]) else float(max_p[k]), float(target[k]), pure,
            None if math.isnan(mass_rho[k]) else float(mass_rho[k]),
            None if math.isnan(crossing[k]) else float(crossing[k])))
    return out


def _assemble(case, fluid, eos_refs, worst, t_fill, t_peak, rho_molar, rho_mass, rho_ref, peak_ref, rho_ideal,
              peak_ideal, gf, gp, k, lk_ok, lk_reason, consts_fill, consts_peak, dry, max_t, max_p, target,
              pure, mass_rho, crossing) -> dict:
    """One row's result dict, laid out as screen.screen_case lays out a single-scenario result."""
    atm = case.site.atmospheric_pressure_pa
    warnings: list[dict] = []
    sc = case.scenarios[0] if getattr(case, "scenarios", ()) else case
    if sc.gas_temperature_k is not None and sc.ambient_max_k is not None and sc.gas_temperature_k < sc.ambient_max_k:
        name = getattr(sc, "name", None)
        msg = ("the stated gas temperature is below the ambient maximum; the ambient maximum is used.")
        warnings.append({"code": "gas-below-ambient", "message": f"{name}: {msg}" if name else msg[0].upper() + msg[1:]})
    phase = "supercritical"   # both temperatures above the critical temperature, single phase
    ideal = {"applicable": True, "peak_pressure_pa": peak_ideal,
             "note": "ideal-gas law; shown for comparison, it ignores real-gas behaviour",
             "fill_molar_density_mol_m3": rho_ideal, "equation": "P v = R T, so at fixed density P2 = P1 T2 / T1"}
    if lk_ok:
        gen = {"applicable": True, "peak_pressure_pa": float(gp.pressure[k]),
               "note": "Lee–Kesler corresponding states", "fill_molar_density_mol_m3": float(gf.molar_density[k]),
               "z_fill": float(gf.z[k]), "z_peak": float(gp.z[k]),
               "reduced_temperature_fill": float(gf.reduced_temperature[k]),
               "reduced_pressure_fill": float(gf.reduced_pressure[k]),
               "reduced_temperature_peak": float(gp.reduced_temperature[k]),
               "reduced_pressure_peak": float(gp.reduced_pressure[k]),
               "pseudocritical_temperature_k": consts_peak[0], "pseudocritical_pressure_pa": consts_peak[1],
               "pseudocritical_temperature_fill_k": consts_fill[0],
               "pseudocritical_pressure_fill_pa": consts_fill[1],
               "acentric_factor": consts_peak[2], "mixing_rule": None,
               "quantum_correction": any(c.quantum for c in case.gas.components)}
    else:
        gen = {"applicable": False, "peak_pressure_pa": None,
               "note": f"Lee–Kesler correlation outside its range: {lk_reason}", "fill_molar_density_mol_m3": None}
    ref = {"applicable": True, "peak_pressure_pa": peak_ref,
           "note": "multiparameter Helmholtz-energy equation of state (CoolProp)",
           "fill_molar_density_mol_m3": rho_ref, "fluid": fluid.label, "phase_fill": phase, "phase_peak": phase,
           "z_fill": case.fill_pressure_pa / (rho_ref * 8.314462618 * t_fill), "z_peak": peak_ref / (rho_ref * R * t_peak),
           "eos_references": eos_refs}
    models = {"ideal": ideal, "generalized": gen, "reference": ref}
    order = [("ideal", peak_ideal), ("generalized", gen["peak_pressure_pa"]), ("reference", peak_ref)]
    applicable = [(nm, p) for nm, p in order if p is not None]
    gov_name, peak = max(applicable, key=lambda x: x[1])
    others = [nm for nm, _ in applicable if nm != gov_name]
    governing_reason = (f"The {gov_name} model gives the highest peak among the applicable models"
                        + (f" ({', '.join(others)})" if others else "")
                        + "; the highest is taken because it is the conservative choice.")
    if lk_ok and peak_ref:
        diff = abs(gen["peak_pressure_pa"] - peak_ref) / peak_ref
        if diff > _screen.MODEL_DISAGREEMENT_WARNING:
            warnings.append({"code": "models-disagree", "message":
                             f"The generalized and reference peaks differ by {diff * 100:.1f} % "
                             f"(more than {_screen.MODEL_DISAGREEMENT_WARNING * 100:.0f} %); the higher one governs."})
    ratio_reason = None
    if case.max_filling_ratio_kg_m3 is not None and rho_mass > case.max_filling_ratio_kg_m3:
        ratio_reason = (f"The filling ratio, {rho_mass / 1000.0:.3f} kg/L, is above the vessel's maximum filling "
                        f"ratio of {case.max_filling_ratio_kg_m3 / 1000:.3f} kg/L.")
    verdict, reasons, margin, relief_margin = _screen.decide(
        peak=peak, rated=case.rated_pressure_pa, relief=case.relief_set_pressure_pa, atm=atm,
        required_margin=case.required_margin, any_real_model=True, out_of_scope_reason=None,
        liquid_full_reason=None, filling_ratio_reason=ratio_reason)
    if mass_rho is None:
        mass_limit = {"max_fill_mass_kg": None, "max_filling_ratio_kg_per_l": None, "max_fill_mass_basis": None}
    else:
        rm, basis = mass_rho * case.gas.molar_mass, "the required margin at the worst-case temperature"
        if case.max_filling_ratio_kg_m3 is not None and case.max_filling_ratio_kg_m3 < rm:
            rm, basis = case.max_filling_ratio_kg_m3, "the vessel's maximum filling ratio"
        mass_limit = {"max_fill_mass_kg": rm * case.water_capacity_m3, "max_filling_ratio_kg_per_l": rm / 1000.0,
                      "max_fill_mass_basis": basis}
    limits = {**mass_limit, "max_gas_temperature_k": max_t, "max_fill_pressure_pa": max_p, "target_peak_pressure_pa": target,
              "note": "solved on each applicable real-gas model; the lowest (most conservative) value is given",
              "liquid_full_temperature_k": None, "dry_out_temperature_k": dry,
              "phase_boundary_pressure_pa": crossing, "dp_dt_after_liquid_full_pa_k": None}
    fill_rho_molar = rho_mass / case.gas.molar_mass
    mass = rho_mass * case.water_capacity_m3
    rho_m = fill_rho_molar * case.gas.molar_mass
    g = case.gas
    result = {
        "id": case.id, "description": case.description, "source": case.source,
        "tool_version": __version__, "input_sha256": case.input_sha256,
        "site": {"name": case.site.name, "atmospheric_pressure_pa": atm, "elevation_m": case.site.elevation_m},
        "verdict": verdict, "reasons": reasons, "warnings": warnings,
        "gas": {"name": g.name, "kind": g.kind, "hazards": list(g.hazards),
                "components": [{"name": c.name, "formula": c.formula, "fraction": x,
                                "molar_mass_kg_mol": c.molar_mass, "coolprop_name": c.coolprop_name}
                               for c, x in zip(g.components, g.fractions)]},
        "vessel": {"water_capacity_m3": case.water_capacity_m3, "rated_pressure_pa": case.rated_pressure_pa,
                   "rated_pressure_kind": case.rated_pressure_kind,
                   "relief_set_pressure_pa": case.relief_set_pressure_pa,
                   "max_filling_ratio_kg_per_l": (case.max_filling_ratio_kg_m3 / 1000.0
                                                  if case.max_filling_ratio_kg_m3 is not None else None)},
        "fill": {"pressure_pa": case.fill_pressure_pa, "temperature_k": t_fill, "temperature_given": True,
                 "density_kg_m3": rho_m, "molar_density_mol_m3": fill_rho_molar, "mass_kg": mass,
                 "phase": phase, "filling_ratio_kg_per_l": rho_m / 1000.0 if rho_m else None,
                 "vapour_pressure_pa": None, "given": "pressure"},
        "worst_case_temperature_k": t_peak, "worst_case_basis": worst[1],
        "models": models,
        "peak_pressure_pa": peak, "nominal_peak_pressure_pa": peak, "tolerance": None,
        "governing_model": gov_name, "governing_reason": governing_reason,
        "rated_pressure_pa": case.rated_pressure_pa, "relief_set_pressure_pa": case.relief_set_pressure_pa,
        "required_margin_fraction": case.required_margin,
        "required_margin_is_default": case.required_margin_is_default,
        "margin_fraction": margin, "relief_margin_fraction": relief_margin,
        "nominal_margin_fraction": 1.0 - (peak - atm) / (case.rated_pressure_pa - atm),
        "limits": limits, "curves": None, "phase_diagram": None,
        "inputs": list(case.inputs), "display_units": dict(case.display_units),
        "cautions": _CAUTIONS,
    }
    if hasattr(case, "scenarios"):
        name = case.scenarios[0].name if case.scenarios else "exposure"
        keys = ("verdict", "reasons", "worst_case_temperature_k", "worst_case_basis", "peak_pressure_pa",
                "nominal_peak_pressure_pa", "governing_model", "margin_fraction", "relief_margin_fraction",
                "limits", "tolerance")
        result["scenarios"] = [{"name": name, **{k2: result[k2] for k2 in keys}, "exposure": None,
                                "models": {nm: {"applicable": m["applicable"], "peak_pressure_pa": m["peak_pressure_pa"]}
                                           for nm, m in models.items()}, "governing": True}]
        result["governing_scenario"] = name
        result["exposure"] = None
    return result


# ----------------------------------------------------------------------------- the batch

#: Rows of the last screen_cases call on each path (for the batch summary and the tests).
STATS = {"vectorised": 0, "per_row": 0}


def single(case: Case) -> dict:
    """One row through the per-row path (screen.screen_case); curves dropped, as on the vectorised path."""
    r = _screen.screen_case(case)
    r["curves"] = None
    if "phase_diagram" in r:
        r["phase_diagram"] = None
    return r


def screen_cases(cases: list[Case], progress: Callable[[int], None] | None = None) -> list[dict]:
    """Screen every case; results in the input order. `progress(n)` is told of rows done.

    A row whose screening raises InputError (e.g. a fill denser than any liquid) comes back as
    ``{"verdict": "input-error", "error": InputError}`` for the caller to place.
    """
    results: list[dict | None] = [None] * len(cases)
    groups: dict[str, list[int]] = {}
    rest: list[int] = []
    for i, c in enumerate(cases):
        if vectorisable(c):
            groups.setdefault(c.gas.name, []).append(i)
        else:
            rest.append(i)
    for _name, idx in groups.items():
        got = _group([cases[i] for i in idx])
        for i, r in zip(idx, got):
            if r is None:
                rest.append(i)
            else:
                results[i] = r
        if progress:
            progress(sum(r is not None for r in got))
    STATS["vectorised"] = len(cases) - len(rest)
    STATS["per_row"] = len(rest)
    for i in sorted(rest):
        try:
            results[i] = single(cases[i])
        except InputError as exc:
            results[i] = {"verdict": "input-error", "error": exc}
        if progress:
            progress(1)
    return results  # type: ignore[return-value]


def iter_chunks(items: list, size: int) -> Iterable[list]:
    for k in range(0, len(items), size):
        yield items[k:k + size]
