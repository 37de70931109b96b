"""Screen one vessel: models → governing peak → margins, verdict, reasons, limits → result (plain data).

This is the only place that decides a verdict. The result is a JSON-ready dict in SI with pressures
absolute [Pa] and temperatures [K]; summaries and reports are views of it.
"""

from __future__ import annotations

import functools
import math
import threading
from dataclasses import dataclass, field, replace
from typing import Callable, Iterable

import numpy as np

from screening import __version__
from screening.cautions import ASSUMPTIONS, CAUTION, SHORT_CAUTION, TOLERANCES_TAKEN_OFF
from screening.errors import InputError, NotApplicable
from screening.inputs.case import Case, Exposure
from screening.physics.eos.generalized import (
    _SCALAR_MAX as _LK_SCALAR_MAX,
)
from screening.physics.eos.generalized import (
    lee_kesler_density,
    lee_kesler_density_valid,
    lee_kesler_pressure,
    lee_kesler_pressure_valid,
    pseudocritical,
    quantum_effective_critical,
    srk_quantum_density,
    srk_quantum_pressure,
)
from screening.physics.eos.ideal import ideal_gas_density, ideal_gas_pressure
from screening.physics.eos.reference import LiquefiedBlend, ReferenceFluid, liquefied_blend, reference_fluid
from screening.physics.exposure import (
    DEFAULT_ASPECT_RATIO,
    DEFAULT_IRRADIANCE,
    estimate_dimensions,
    finish,
    solar_wall_temperature,
)
from screening.physics.gases import Mixture
from screening.physics.isochore import isochore_phases, max_liquid_density
from screening.physics.mixtures import CubicComponent, case_budget, cubic_phase_on_isochore
from screening.physics.roots import brentq
from screening.result import Result, ScenarioSummary, json_record
from screening.units import percent_pair
from screening.verdicts import Verdict

#: Basis named for the worst case where the fill temperature is above every exposure temperature.
FILL_STATE_BASIS = "fill temperature (above the exposure: the fill state governs)"


#: Relative difference between the generalized and reference peaks above which a warning is given.
MODEL_DISAGREEMENT_WARNING = 0.02
#: Saturation band of a fill given by pressure. Within this fraction of the vapour pressure at the fill
#: temperature, or within SATURATION_BAND_K of the saturation temperature at the fill pressure, the pressure
#: cannot fix the density: the contents may be vapour, liquid or both, and an ordinary gauge cannot tell
#: (a class 1.6 gauge on a 0–100 bar dial reads within 1.6 bar, about 3 % of a carbon dioxide cylinder's
#: 57 bar; a fill temperature read off the ambient is good to a couple of kelvin: common practice, no
#: source). Where the stated tolerance is wider, the tolerance is the band.
SATURATION_BAND_FRACTION = 0.05
SATURATION_BAND_K = 2.0
#: Critical band of a fill given by pressure: within CRITICAL_BAND_K of the critical temperature and within
#: CRITICAL_BAND_FRACTION of the critical pressure the density changes by tens of percent for a bar or a
#: kelvin (carbon dioxide at 31–32 °C and 72–74 bar(g), CoolProp's reference equation), so the pressure cannot
#: fix it. Bands chosen here on the conservative side; the stated tolerance widens them.
CRITICAL_BAND_K = 5.0
CRITICAL_BAND_FRACTION = 0.15
#: Fill temperature assumed for a mass fill that gives none [K]; it only describes the fill state.
DEFAULT_MASS_FILL_TEMPERATURE_K = 288.15

P_TOL = 1e-9  # relative tolerance of the root solves


@dataclass
class Model:
    """One model's outcome for one vessel."""

    name: str
    applicable: bool
    note: str
    peak_pa: float | None = None
    fill_molar_density: float | None = None
    isochore: Callable[[float], float] | None = None      # T [K] -> p [Pa] at the fill density
    fill_to_peak: Callable[[float], float] | None = None   # p_fill [Pa] -> p_peak [Pa]
    extra: dict = field(default_factory=dict)
    #: T array [K] -> p array [Pa], NaN where the model does not apply (a vectorised isochore, if any)
    isochore_array: Callable[[np.ndarray], np.ndarray] | None = None
    #: p_fill array [Pa] -> p_peak array [Pa], NaN where the model does not apply
    fill_to_peak_array: Callable[[np.ndarray], np.ndarray] | None = None
    #: p_peak [Pa] -> the fill pressure [Pa] whose peak it is (the inverse of fill_to_peak), None where the model
    #: does not apply there
    fill_for_peak: Callable[[float], float | None] | None = None
    #: p [Pa] -> the temperature [K] at which the isochore reaches it (the inverse of isochore), None where not found
    temperature_at: Callable[[float], float | None] | None = None
    #: the model's pressure [Pa] at the fill density and temperature (the isochore at the fill), where computed
    fill_pa: float | None = None
    #: T array [K] -> p array [Pa] of `isochore` at every point, NaN where it raises: for drawing a curve, where
    #: no isochore_array is given (the limits' scans stop at their first sign change instead)
    isochore_points: Callable[[np.ndarray], np.ndarray] | None = None

    def isochore_values(self, temperatures: np.ndarray) -> list[float | None]:
        """The isochore at many temperatures; None where the model does not apply."""
        whole = self.isochore_array if self.isochore_array is not None else self.isochore_points
        if whole is not None:
            # Python floats from one tolist (the same values as float() of each numpy scalar)
            return [v if math.isfinite(v) else None for v in np.asarray(whole(temperatures), dtype=float).tolist()]
        values: list[float | None] = []
        for t in temperatures:
            try:
                v = self.isochore(float(t))
                values.append(float(v) if math.isfinite(v) else None)
            except NotApplicable:
                values.append(None)
        return values

    def as_dict(self) -> dict:
        return {"applicable": self.applicable, "peak_pressure_pa": self.peak_pa, "note": self.note,
                "fill_molar_density_mol_m3": self.fill_molar_density, **self.extra}


def not_applicable(name: str, note: str, **extra) -> Model:
    return Model(name, False, note, extra=extra)


# ----------------------------------------------------------------------------- the three models

def _ideal(case: Case, rho_mass: float | None, t_fill: float, t_peak: float, gas_ok: bool, why: str) -> Model:
    note_eq = "P v = R T, so at fixed density P2 = P1 T2 / T1"
    if not gas_ok:
        return not_applicable("ideal", why, equation=note_eq)
    if case.fill_pressure_pa is not None:
        rho = float(ideal_gas_density(case.fill_pressure_pa, t_fill))
    else:
        rho = rho_mass / case.gas.molar_mass
    peak = float(ideal_gas_pressure(rho, t_peak))
    return Model("ideal", True, "ideal-gas law; shown for comparison, it ignores real-gas behaviour",
                 peak, rho, isochore=lambda t: float(ideal_gas_pressure(rho, t)),
                 fill_to_peak=lambda p: p * t_peak / t_fill, extra={"equation": note_eq},
                 isochore_array=_ideal_isochore_array(rho))


def _ideal_isochore_array(rho: float) -> Callable[[np.ndarray], np.ndarray]:
    """T array [K] -> the ideal gas's pressure [Pa] at molar density rho [mol/m3]: the same product per element
    as the scalar isochore (rho R T), on a whole grid at once."""
    return lambda ts: ideal_gas_pressure(rho, ts)


def _gas_arrays(gas: Mixture) -> dict:
    c = gas.components
    arrays = dict(
        fractions=np.array(gas.fractions), tc=np.array([g.critical_temperature for g in c]),
        pc=np.array([g.critical_pressure for g in c]), omega=np.array([g.acentric_factor for g in c]),
        molar_mass=np.array([g.molar_mass for g in c]), quantum=np.array([g.quantum for g in c]),
        tc_classical=np.array([g.classical_critical_temperature or g.critical_temperature for g in c]),
        pc_classical=np.array([g.classical_critical_pressure or g.critical_pressure for g in c]),
        # a pure gas without quantum correction: its own constants at every temperature
        fixed=((float(c[0].critical_temperature), float(c[0].critical_pressure), float(c[0].acentric_factor))
               if gas.is_pure and not c[0].quantum else None),
    )
    if arrays["fixed"] is None and not any(g.quantum for g in c):
        # a mixture without quantum components: Kay's rule over constants that do not depend on the temperature,
        # so the same three numbers at every temperature (pseudocritical evaluated once, here)
        arrays["fixed"] = _lk_constants(arrays, 300.0)
    return arrays


def _lk_constants(arrays: dict, t: float) -> tuple[float, float, float]:
    if arrays["fixed"] is not None:
        return arrays["fixed"]
    tc, pc, om = pseudocritical(arrays["fractions"], arrays["tc"], arrays["pc"], arrays["omega"],
                                arrays["molar_mass"], arrays["quantum"], arrays["tc_classical"],
                                arrays["pc_classical"], np.asarray(t, dtype=float))
    return float(np.asarray(tc).ravel()[0]), float(np.asarray(pc).ravel()[0]), float(np.asarray(om).ravel()[0])


def _lk_density(arrays: dict, p: float, t: float):
    tc, pc, om = _lk_constants(arrays, t)
    return lee_kesler_density(np.array([p]), np.array([t]), tc, pc, om).require(), (tc, pc, om)


def _lk_pressure(arrays: dict, rho: float, t: float):
    tc, pc, om = _lk_constants(arrays, t)
    return lee_kesler_pressure(np.array([rho]), np.array([t]), tc, pc, om).require(), (tc, pc, om)


def _generalized(case: Case, rho_mass: float | None, t_fill: float, t_peak: float, gas_ok: bool,
                 why: str) -> Model:
    if not gas_ok:
        return not_applicable("generalized", why)
    arrays = _gas_arrays(case.gas)
    try:
        if case.fill_pressure_pa is not None:
            fill, consts_fill = _lk_density(arrays, case.fill_pressure_pa, t_fill)
            rho = float(fill.molar_density[0])
        else:
            rho = rho_mass / case.gas.molar_mass
            fill, consts_fill = _lk_pressure(arrays, rho, t_fill)
        peak, consts_peak = _lk_pressure(arrays, rho, t_peak)
    except NotApplicable as exc:
        if case.gas.is_pure and case.gas.components[0].quantum:
            return _quantum_generalized(case, rho_mass, t_fill, t_peak, exc.reason)
        return not_applicable("generalized", f"Lee–Kesler correlation outside its range: {exc.reason}")
    extra = {
        "z_fill": float(fill.z[0]), "z_peak": float(peak.z[0]),
        "reduced_temperature_fill": float(fill.reduced_temperature[0]),
        "reduced_pressure_fill": float(fill.reduced_pressure[0]),
        "reduced_temperature_peak": float(peak.reduced_temperature[0]),
        "reduced_pressure_peak": float(peak.reduced_pressure[0]),
        "pseudocritical_temperature_k": consts_peak[0], "pseudocritical_pressure_pa": consts_peak[1],
        "pseudocritical_temperature_fill_k": consts_fill[0], "pseudocritical_pressure_fill_pa": consts_fill[1],
        "acentric_factor": consts_peak[2],
        "mixing_rule": "Kay's rule (mole-fraction average)" if not case.gas.is_pure else None,
        "quantum_correction": any(g.quantum for g in case.gas.components),
    }

    def isochore(t: float) -> float:
        return float(_lk_pressure(arrays, rho, t)[0].pressure[0])

    def fill_to_peak(p: float) -> float:
        r = float(_lk_density(arrays, p, t_fill)[0].molar_density[0])
        return float(_lk_pressure(arrays, r, t_peak)[0].pressure[0])

    def constants_at(ts: np.ndarray):
        return _constants_at(arrays, ts)

    isochore_array = _lk_isochore_array(arrays, rho)

    def fill_to_peak_array(ps: np.ndarray) -> np.ndarray:
        ps = np.asarray(ps, dtype=float)
        t1, t2 = np.full_like(ps, t_fill), np.full_like(ps, t_peak)
        rho_fill, fill_ok = lee_kesler_density_valid(ps, t1, *constants_at(t1))
        p2, ok2 = lee_kesler_pressure_valid(np.where(fill_ok, rho_fill, 1.0), t2, *constants_at(t2))
        return np.where(fill_ok & ok2, p2, np.nan)

    def fill_for_peak(p_peak: float) -> float | None:
        # the density at the peak pressure and temperature, then the pressure of that density at the fill;
        # below the critical temperature at fill that density may be liquid-like, whose pressure solve is slow
        # to fail: the caller's scan decides there
        if t_fill < consts_fill[0]:
            return None
        t2 = np.array([t_peak])
        at_peak = lee_kesler_density(np.array([p_peak]), t2, *constants_at(t2))
        if not at_peak.valid[0]:
            return None
        t1 = np.array([t_fill])
        at_fill = lee_kesler_pressure(at_peak.molar_density, t1, *constants_at(t1))
        return float(at_fill.pressure[0]) if at_fill.valid[0] else None

    def temperature_at(p: float) -> float | None:
        # secant on T for the density at (p, T) equal to the fill density, from the ideal-gas estimate
        def g(t: float) -> float:
            ts = np.array([t])
            rho_t, ok = lee_kesler_density_valid(np.array([p]), ts, *constants_at(ts))
            return float(rho_t[0]) / rho - 1.0 if ok[0] else math.nan

        x0 = t_peak * p / float(peak.pressure[0])
        if not (math.isfinite(x0) and x0 > 0.0):
            return None
        x1 = x0 * (1.0 + 1e-4)
        f0 = g(x0)
        if not math.isfinite(f0):
            return None
        for _ in range(40):
            f1 = g(x1)
            if not math.isfinite(f1):       # a step out of the model's range: halve it
                x1 = 0.5 * (x0 + x1)
                continue
            if f1 == f0:
                return x1 if f1 == 0.0 else None
            x0, f0, x1 = x1, f1, x1 - f1 * (x1 - x0) / (f1 - f0)
            if not (math.isfinite(x1) and x1 > 0.0):
                return None         # a step out of the physical range: the caller scans
            if abs(x1 - x0) <= 1e-13 * abs(x1):
                return x1
        return None

    return Model("generalized", True, "Lee–Kesler corresponding states"
                 + (" with Kay's rule" if not case.gas.is_pure else ""),
                 float(peak.pressure[0]), rho, isochore, fill_to_peak, extra, isochore_array, fill_to_peak_array,
                 fill_for_peak, temperature_at, float(fill.pressure[0]))


def _constants_at(arrays: dict, ts: np.ndarray):
    """The Lee–Kesler constants (pseudocritical temperature [K], pressure [Pa], acentric factor [-]) of a gas
    (_gas_arrays) at each temperature of ts [K]."""
    if arrays["fixed"] is not None:
        return tuple(np.full(np.shape(ts), c) for c in arrays["fixed"])
    return pseudocritical(arrays["fractions"], arrays["tc"], arrays["pc"], arrays["omega"],
                          arrays["molar_mass"], arrays["quantum"], arrays["tc_classical"],
                          arrays["pc_classical"], ts)


def _lk_isochore_array(arrays: dict, rho: float) -> Callable[[np.ndarray], np.ndarray]:
    """T array [K] -> the Lee–Kesler pressure [Pa] at molar density rho [mol/m3] (NaN where the model does not
    apply), for a gas given by _gas_arrays."""
    def isochore_array(ts: np.ndarray) -> np.ndarray:
        ts = np.asarray(ts, dtype=float)
        p, ok = lee_kesler_pressure_valid(np.full_like(ts, rho), ts, *_constants_at(arrays, ts))
        return np.where(ok, p, np.nan)
    isochore_array.lee_kesler = (arrays, rho)       # type: ignore[attr-defined]  (see _lk_isochores_joined)
    return isochore_array


def _lk_isochores_joined(models: list[Model], grid: np.ndarray) -> dict[int, list[float | None]]:
    """{index in `models`: its isochore_values(grid)} for the models whose isochore is a Lee–Kesler isochore of
    one gas with constant (pseudo)critical constants (:func:`_lk_isochore_array`), where two or more are, each
    on a grid longer than the Lee–Kesler functions' element-by-element threshold: their grids in one call of
    lee_kesler_pressure instead of one call each (on such arrays every element is solved on its own, so each
    value is the one a call of its own gives, bit for bit; tests/test_shared_states.py)."""
    if grid.size <= _LK_SCALAR_MAX:
        return {}
    joined = [(k, m.isochore_array.lee_kesler) for k, m in enumerate(models)
              if m.isochore_array is not None and getattr(m.isochore_array, "lee_kesler", None) is not None
              and m.isochore_array.lee_kesler[0]["fixed"] is not None]
    if len(joined) < 2 or len({a["fixed"] for _k, (a, _r) in joined}) != 1:
        return {}
    n = grid.size
    ts = np.tile(np.asarray(grid, dtype=float), len(joined))
    rho = np.repeat(np.array([r for _k, (_a, r) in joined], dtype=float), n)
    p, ok = lee_kesler_pressure_valid(rho, ts, *_constants_at(joined[0][1][0], ts))
    values = np.where(ok, p, np.nan)
    return {k: [v if math.isfinite(v) else None for v in values[j * n:(j + 1) * n].tolist()]
            for j, (k, _lk) in enumerate(joined)}


def _srk_isochore_array(k: tuple, rho: float) -> Callable[[np.ndarray], np.ndarray]:
    """T array [K] -> the quantum-gas SRK pressure [Pa] at molar density rho [mol/m3] (NaN where the model does
    not apply); k = (classical critical temperature [K], pressure [Pa], molar mass [kg/mol])."""
    def isochore_array(ts: np.ndarray) -> np.ndarray:
        st = srk_quantum_pressure(rho, np.asarray(ts, dtype=float), *k)
        return np.where(st.valid, st.pressure, np.nan)
    return isochore_array


#: The generalized model's note and method for pure H2, He, Ne above the Lee–Kesler tables.
QUANTUM_SRK_NOTE = ("Soave–Redlich–Kwong with the Gunn–Chueh–Prausnitz quantum-gas constants (the Lee–Kesler "
                    "tables end at reduced temperature 4)")
QUANTUM_SRK_METHOD = "Soave–Redlich–Kwong with the Gunn–Chueh–Prausnitz constants"


def _quantum_generalized(case: Case, rho_mass: float | None, t_fill: float, t_peak: float, lk_reason: str) -> Model:
    """Pure hydrogen, helium or neon where the Lee–Kesler tables end: the quantum-gas SRK model
    (physics.eos.generalized.srk_quantum_*), within its checked range."""
    g = case.gas.components[0]
    k = (g.classical_critical_temperature, g.classical_critical_pressure, g.molar_mass)
    try:
        if case.fill_pressure_pa is not None:
            fill = srk_quantum_density(case.fill_pressure_pa, t_fill, *k).require()
            rho = float(fill.molar_density[()])
        else:
            rho = rho_mass / g.molar_mass
            fill = srk_quantum_pressure(rho, t_fill, *k).require()
        peak = srk_quantum_pressure(rho, t_peak, *k).require()
    except NotApplicable as exc:
        return not_applicable("generalized", f"Lee–Kesler correlation outside its range: {lk_reason}; "
                              f"quantum-gas model: {exc.reason}")
    tc_p, pc_p = (float(x) for x in quantum_effective_critical(*k[:2], k[2], t_peak))
    tc_f, pc_f = (float(x) for x in quantum_effective_critical(*k[:2], k[2], t_fill))
    extra = {
        "z_fill": float(fill.z[()]), "z_peak": float(peak.z[()]),
        "reduced_temperature_fill": float(fill.reduced_temperature[()]),
        "reduced_pressure_fill": float(fill.reduced_pressure[()]),
        "reduced_temperature_peak": float(peak.reduced_temperature[()]),
        "reduced_pressure_peak": float(peak.reduced_pressure[()]),
        "pseudocritical_temperature_k": tc_p, "pseudocritical_pressure_pa": pc_p,
        "pseudocritical_temperature_fill_k": tc_f, "pseudocritical_pressure_fill_pa": pc_f,
        "acentric_factor": 0.0, "mixing_rule": None, "quantum_correction": True,
        "method": QUANTUM_SRK_METHOD,
    }

    isochore_array = _srk_isochore_array(k, rho)

    def isochore(t: float) -> float:
        return float(srk_quantum_pressure(rho, t, *k).require().pressure[()])

    def fill_to_peak_array(ps: np.ndarray) -> np.ndarray:
        f = srk_quantum_density(np.asarray(ps, dtype=float), t_fill, *k)
        pk = srk_quantum_pressure(np.where(f.valid, f.molar_density, 1.0), t_peak, *k)
        return np.where(f.valid & pk.valid, pk.pressure, np.nan)

    def fill_to_peak(p: float) -> float:
        r = float(srk_quantum_density(p, t_fill, *k).require().molar_density[()])
        return float(srk_quantum_pressure(r, t_peak, *k).require().pressure[()])

    return Model("generalized", True, QUANTUM_SRK_NOTE, float(peak.pressure[()]), rho,
                 isochore, fill_to_peak, extra, isochore_array, fill_to_peak_array)


# ----------------------------------------------------------------------------- phase and reference

@dataclass
class FillState:
    """The fill state as the reference model sees it (or as far as it can be established)."""

    rho_mass: float | None = None          # [kg/m3] fill density (reference, or given by mass)
    phase_fill: str | None = None
    phase_peak: str | None = None
    gas_ok: bool = True                    # ideal and generalized models may be used
    why_not_gas: str = ""
    liquid_full_temperature: float | None = None
    dry_out_temperature: float | None = None
    dp_dt_after_liquid_full: float | None = None
    crossing_pressure: float | None = None      # [Pa] where the isochore leaves the dome
    vapour_pressure_fill: float | None = None
    fluid: ReferenceFluid | None = None
    fluid_error: str | None = None
    refusal: str | None = None             # the state cannot be screened (the out-of-scope reason)


def _is_pure(fluid: ReferenceFluid) -> bool:
    """A pure fluid with a saturation dome (not a mixture, not pseudo-pure air)."""
    return not fluid.is_mixture and not fluid.is_pseudo_pure


def _reference_fluid(gas: Mixture) -> tuple[ReferenceFluid | None, str | None]:
    names = tuple(g.coolprop_name for g in gas.components)
    if any(n is None for n in names):
        missing = [g.name for g in gas.components if g.coolprop_name is None]
        return None, f"no reference equation of state for {', '.join(missing)}"
    try:
        if not gas.is_pure and all(g.kind == "liquefiable" for g in gas.components):
            # a blend of liquefiable gases may be filled as a liquid: two-phase states are screened
            return liquefied_blend(names, tuple(gas.fractions)), None
        return reference_fluid(names, tuple(gas.fractions)), None
    except NotApplicable as exc:
        return None, exc.reason


def _band_reason(case: Case, fluid: ReferenceFluid, t_fill: float) -> tuple[str, str, str] | None:
    """(code, reason, warning) where a fill given by pressure lies within the saturation band or the critical
    band, so the pressure cannot fix the density; None elsewhere. Pure fluids with a saturation dome only."""
    tol = case.tolerance
    return band_reason(case.fill_pressure_pa, t_fill, fluid, case.gas.name, case.site.atmospheric_pressure_pa,
                       tol.fill_pressure_pa if tol is not None else 0.0,
                       tol.fill_temperature_k if tol is not None else 0.0)


def saturation_band_ends(t_fill: float, fluid: ReferenceFluid, tol_t: float = 0.0) -> tuple[float, float | None]:
    """The temperatures [K] at the ends of the saturation band around a fill temperature t_fill [K] below the
    critical point (:func:`band_reason`): the lower one, and the upper one (None where it is at or above the
    critical temperature: the band then reaches up to the critical pressure)."""
    band_t = max(SATURATION_BAND_K, tol_t)
    t_hi = t_fill + band_t
    return max(t_fill - band_t, fluid.triple_temperature), (t_hi if t_hi < fluid.critical_temperature else None)


def band_reason(p: float, t_fill: float, fluid: ReferenceFluid, gas_name: str, atm: float, tol_p: float = 0.0,
                tol_t: float = 0.0, psat: float | None = None,
                psat_ends: tuple[float, float] | None = None) -> tuple[str, str, str] | None:
    """The rule of :func:`_band_reason` on plain values (one row of a batch as well as one case): fill pressure
    p [Pa] absolute at t_fill [K], atmospheric pressure atm [Pa], the input tolerances' half-bands tol_p [Pa] and
    tol_t [K] (0: none); psat [Pa]: the fluid's vapour pressure at t_fill where the caller has it; psat_ends
    [Pa]: the vapour pressures at the ends of :func:`saturation_band_ends` where the caller has them (the
    critical pressure at an upper end of None; NaN where vapour_pressure raises there)."""
    tc, pc = fluid.critical_temperature, fluid.critical_pressure
    band_t, band_p = max(CRITICAL_BAND_K, tol_t), max(CRITICAL_BAND_FRACTION * pc, tol_p)
    ask = "the fill pressure cannot fix how much is in the vessel. Give the fill mass instead."
    if abs(t_fill - tc) <= band_t and abs(p - pc) <= band_p:
        point = f"the critical point of {gas_name} ({tc - 273.15:.1f} °C, {(pc - atm) / 1e5:.1f} bar(g))"
        return "near-critical", (
            f"The fill state lies within {band_t:g} K and {band_p / 1e5:.1f} bar of {point}, where a small error in "
            f"the fill pressure or temperature changes the density a great deal: {ask}"), (
            f"The fill is near {point}.")
    if t_fill >= tc:
        return None
    band_t = max(SATURATION_BAND_K, tol_t)
    try:
        if psat is None:
            psat = fluid.vapour_pressure(t_fill)
        if psat_ends is None:
            t_lo, t_hi = saturation_band_ends(t_fill, fluid, tol_t)
            lo = fluid.vapour_pressure(t_lo)
            hi = fluid.vapour_pressure(t_hi) if t_hi is not None else pc
        else:
            lo, hi = psat_ends
            if math.isnan(lo) or math.isnan(hi):
                return None
    except NotApplicable:
        return None
    band_p = max(SATURATION_BAND_FRACTION * psat, tol_p)
    if abs(p - psat) <= band_p or lo <= p <= hi:
        return "near-saturation", (
            f"The fill pressure is within {band_p / psat * 100:.0f} % of the vapour pressure of {gas_name} at "
            f"the fill temperature ({(psat - atm) / 1e5:.1f} bar(g)) or within {band_t:g} K of the saturation "
            f"temperature: the contents may be vapour, liquid or both, and {ask}"), (
            f"The fill pressure is {p / psat * 100:.1f} % of the vapour pressure at the fill temperature.")
    return None


def _fill_state(case: Case, t_fill: float, t_peak: float, warnings: list) -> FillState:
    fs = FillState()
    fluid, err = _reference_fluid(case.gas)
    fs.fluid, fs.fluid_error = fluid, err
    M = case.gas.molar_mass
    if case.fill_mass_kg is not None:
        fs.rho_mass = case.fill_mass_kg / case.water_capacity_m3
    if fluid is None:
        # Without the reference model the phase cannot be established; a gas is assumed only where
        # both temperatures are above every component's critical temperature.
        tc_max = max(g.critical_temperature for g in case.gas.components)
        cubic = None
        if min(t_fill, t_peak) <= tc_max and not case.gas.is_pure and all(g.cas for g in case.gas.components):
            # a mixture without a reference model: its phase by the cubic route alone (physics.mixtures)
            comps = tuple(CubicComponent(g.cas, g.critical_temperature, g.critical_pressure, g.acentric_factor,
                                         g.molar_mass) for g in case.gas.components)
            rho_m = None if fs.rho_mass is None else fs.rho_mass / M
            cubic = cubic_phase_on_isochore(comps, tuple(case.gas.fractions), min(t_fill, t_peak),
                                            p=case.fill_pressure_pa, t_p=t_fill, rho=rho_m)
        if cubic is not None and cubic.single:
            fs.phase_fill = fs.phase_peak = "gas (one phase by the Peng–Robinson route; no reference model)"
            warnings.append({"code": "phase-by-one-route", "message":
                             f"No reference model for this mixture ({err}): its phase was established by the "
                             "Peng–Robinson route alone."})
        elif min(t_fill, t_peak) <= tc_max:
            fs.gas_ok = False
            fs.why_not_gas = ("the gas phase cannot be confirmed: the reference model is not available "
                              f"({err}) and the temperature is below a component's critical temperature"
                              + (f"; the Peng–Robinson route finds {cubic.reason}" if cubic is not None and
                                 cubic.reason else ""))
        else:
            fs.phase_fill = fs.phase_peak = "gas (assumed: above every component's critical temperature)"
        return fs
    if _is_pure(fluid) and case.fill_pressure_pa is not None:
        if t_fill < fluid.critical_temperature:
            try:
                fs.vapour_pressure_fill = fluid.vapour_pressure(t_fill)
            except NotApplicable:
                pass
        band = _band_reason(case, fluid, t_fill)
        if band is not None:
            code, reason, warning = band
            fs.gas_ok, fs.why_not_gas, fs.refusal = False, reason, reason
            fs.fluid_error = reason
            warnings.append({"code": code, "message": warning})
            return fs
    try:
        if case.fill_pressure_pa is not None:
            if _phase_at_root(fluid):
                _isochore_from_below(fluid, lambda: fluid.homogeneous_density(case.fill_pressure_pa, t_fill),
                                     min(t_fill, t_peak))
            rho_molar = fluid.density(case.fill_pressure_pa, t_fill)
            fs.rho_mass = rho_molar * M
        else:
            rho_molar = fs.rho_mass / M
            rho_max = max_liquid_density(fluid) if _is_pure(fluid) else math.inf
            if rho_molar > rho_max:
                raise InputError(
                    "fill density is above the liquid density at the triple point: no fill can reach it",
                    file=case.source, key="fill.mass",
                    given=f"{case.fill_mass_kg:g} kg in {case.water_capacity_m3 * 1000:g} L "
                          f"= {fs.rho_mass:.1f} kg/m3",
                    expected=f"below {rho_max * M:.1f} kg/m3 of water capacity")
        if _is_pure(fluid):
            ph = isochore_phases(fluid, rho_molar, t_fill, t_peak)
            fs.phase_fill, fs.phase_peak = ph.fill_phase, ph.peak_phase
            fs.liquid_full_temperature = ph.liquid_full_temperature
            fs.dry_out_temperature = ph.dry_out_temperature
            fs.dp_dt_after_liquid_full = ph.dp_dt_after_liquid_full
            fs.crossing_pressure = ph.crossing_pressure
        else:
            if _phase_at_root(fluid):
                _isochore_from_below(fluid, lambda: rho_molar, min(t_fill, t_peak))
            fs.phase_fill = fluid.phase(rho_molar, t_fill)
            fs.phase_peak = fluid.phase(rho_molar, t_peak)
            if isinstance(fluid, LiquefiedBlend) and fs.phase_fill == "two-phase":
                fs.liquid_full_temperature = fluid.liquid_full_temperature(rho_molar, t_fill,
                                                                           max(t_fill, t_peak) + 100.0)
    except NotApplicable as exc:
        fs.fluid_error = exc.reason
        tc_max = max(g.critical_temperature for g in case.gas.components)
        if min(t_fill, t_peak) <= tc_max:
            fs.gas_ok = False
            fs.why_not_gas = f"the gas phase cannot be confirmed: {exc.reason}"
        return fs

    condensed = condensed_reason(fs.phase_fill, fs.phase_peak)
    if condensed is not None:
        fs.gas_ok, fs.why_not_gas = False, condensed
    if not _has_liquid_full_analysis(fluid) and _mixture_liquid_like(case.gas, fluid, fs, rho_molar, t_fill):
        fs.refusal = (f"The mixture {case.gas.name} is liquid or a dense, liquid-like fluid at fill "
                      f"({fs.rho_mass:.0f} kg/m3): the temperature at which it fills the vessel cannot be "
                      "established for a mixture by this method, so the vessel cannot be screened.")
    return fs


def condensed_reason(phase_fill: str | None, phase_peak: str | None) -> str | None:
    """Why the gas models (ideal, generalized) do not apply where the contents are liquid or two-phase at fill or
    at the worst case; None where they are a gas (or supercritical) at both."""
    condensed = {"liquid", "two-phase"}
    if phase_fill not in condensed and phase_peak not in condensed:
        return None
    where = "at fill" if phase_fill in condensed else "at the worst-case temperature"
    phase = phase_fill if phase_fill in condensed else phase_peak
    return f"the contents are {phase} {where}; gas models do not apply to a liquid or a liquid–vapour mixture"


def _mixture_liquid_like(gas: Mixture, fluid: ReferenceFluid, fs: FillState, rho_molar: float,
                         t_fill: float) -> bool:
    """Whether a mixture is liquid at fill or at the worst case, or denser than its critical density at a
    fill temperature within LIQUID_LIKE_TEMPERATURE_RATIO of its critical temperature (the same dense-fluid
    rule as a pure fluid's). The mixture's critical point is CoolProp's where it has one, else Kay's rule
    (mole-fraction averages of the components' critical temperatures and volumes)."""
    if "liquid" in (fs.phase_fill, fs.phase_peak):
        return True
    tc = fluid.critical_temperature
    rho_c = fluid.critical_molar_density
    if not tc or not rho_c or not math.isfinite(tc) or not math.isfinite(rho_c):
        tc, rho_c = _kay_critical(gas)
    return rho_molar >= rho_c and t_fill <= LIQUID_LIKE_TEMPERATURE_RATIO * tc


def _phase_at_root(fluid: ReferenceFluid | None) -> bool:
    """A mixture (not a liquefied blend) whose limit solves run on its homogeneous states, the phase then
    established at the root only (see :func:`_checked_at_root`)."""
    return fluid is not None and fluid.is_mixture and not isinstance(fluid, LiquefiedBlend)


def _isochore_from_below(fluid: ReferenceFluid, density: Callable[[], float], t_need: float) -> None:
    """Establish a mixture's isochore ESTABLISH_BELOW_K under t_need [K], the lowest temperature a screening
    needs on it, before its states above it, unless those are established already: one phase there means one
    phase at every higher temperature on the same isochore and on its close neighbours 1 K higher
    (physics.mixtures, IsochoreMemo), so the checks that follow at the fill, the worst case, the tolerance
    steps and the limits need no flash of their own. Where it does not establish the phase (an isochore that
    meets the two-phase region within those kelvins, a temperature below the equations' range) nothing is
    concluded here: the checks that follow, in their usual order, decide and give their own reason, as they
    would without this step, for one flash more."""
    try:
        fluid.establish_isochore(density(), t_need)
    except NotApplicable:
        pass


def _checked_at_root(fluid: ReferenceFluid, root: float | None, checked: Callable[[float], float],
                     solve_checked: Callable[[], float | None]) -> float | None:
    """A root found on a mixture's homogeneous states (:meth:`ReferenceFluid.homogeneous_pressure`), kept
    where ``checked(root)`` establishes its state by both phase routes; else the solve again with the phase
    established at every step (``solve_checked``), as for any state.

    Why the iterates need no phase of their own: a limit is one state, the root; the solver's other states are
    no vessel's state, and where the phase holds there the homogeneous pressure is the very number the checked
    evaluation gives. Only the root is reported, and it is reported only once established."""
    if root is None:
        return None
    try:
        checked(root)
        return root
    except NotApplicable:
        return solve_checked()


def _established_fill_to_peak(fluid: ReferenceFluid, p: float, t_fill: float, t_peak: float) -> float:
    """A mixture's peak [Pa] at t_peak [K] for the fill p [Pa] at t_fill [K], its isochore established from below
    the lower of the two temperatures: one check covers its fill and worst-case states, and the fill-mass
    limit's root on the same isochore (IsochoreMemo)."""
    _isochore_from_below(fluid, lambda: fluid.homogeneous_density(p, t_fill), min(t_fill, t_peak))
    return fluid.pressure(fluid.density(p, t_fill), t_peak)


def _reference(case: Case, fs: FillState, t_fill: float, t_peak: float) -> Model:
    fluid = fs.fluid
    if fluid is None or fs.rho_mass is None:
        return not_applicable("reference", f"reference equation of state not applicable: {fs.fluid_error}")
    M = case.gas.molar_mass
    rho = fs.rho_mass / M
    try:
        peak = fluid.pressure(rho, t_peak)
        z_fill = (case.fill_pressure_pa or fluid.pressure(rho, t_fill)) / (rho * 8.314462618 * t_fill)
    except NotApplicable as exc:
        return not_applicable("reference", f"reference equation of state not applicable: {exc.reason}",
                              fluid=fluid.label)
    from screening.constants import R
    extra = {"fluid": fluid.label, "phase_fill": fs.phase_fill, "phase_peak": fs.phase_peak,
             "z_fill": z_fill, "z_peak": peak / (rho * R * t_peak),
             "eos_references": fluid.eos_references()}
    if fluid.is_mixture:
        extra["mixing_rule"] = fluid.mixing_rule

    def fill_to_peak(p: float) -> float:
        if _phase_at_root(fluid):  # a mixture's limit is solved on homogeneous states (see _limits)
            return fluid.homogeneous_pressure(fluid.homogeneous_density(p, t_fill), t_peak)
        return fluid.pressure(fluid.density(p, t_fill), t_peak)

    return Model("reference", True, "multiparameter Helmholtz-energy equation of state (CoolProp)",
                 peak, rho, lambda t: fluid.pressure(rho, t), fill_to_peak, extra,
                 isochore_points=_reference_isochore_points(fluid, rho))


def _reference_isochore_points(fluid: ReferenceFluid, rho: float) -> Callable[[np.ndarray], np.ndarray] | None:
    """T array [K] -> fluid.pressure at molar density rho [mol/m3] at every temperature (NaN where the equation
    refuses a state, as the scalar isochore raises there), the fluid's lock held once for the whole grid; None
    for a mixture, whose state costs tens of milliseconds: its points one at a time, so that the lock is not
    held for a whole curve."""
    if fluid.is_mixture:
        return None

    def isochore_points(ts: np.ndarray) -> np.ndarray:
        p, valid, _reasons = fluid.pressures(np.full(np.shape(ts), rho), ts)
        return np.where(valid, p, np.nan)
    return isochore_points


# ----------------------------------------------------------------------------- limits

def _root(f: Callable[[float], float], lo: float, hi: float, n: int = 24,
          f_array: Callable[[np.ndarray], np.ndarray] | None = None) -> float | None:
    """A root of f in [lo, hi]: scan for the first sign change, then Brent. None where f has no sign change
    or cannot be evaluated. A scan step whose ends cannot be evaluated is passed over. `f_array`, where
    given, evaluates the scan in one vectorised call (NaN where f cannot be evaluated)."""
    try:  # the functions solved here are monotonic: try the whole bracket first
        f_lo, f_hi = f(lo), f(hi)
        if f_lo == 0.0:
            return float(lo)
        if f_lo * f_hi < 0.0:
            return float(brentq(f, lo, hi, rtol=P_TOL, xtol=1e-12 * max(1.0, abs(hi))))
    except NotApplicable:
        pass
    xs = np.linspace(lo, hi, n)
    scanned = f_array(xs) if f_array is not None else None
    prev_x, prev_f = None, None
    for k, x in enumerate(xs):
        try:
            if scanned is not None:
                if not math.isfinite(scanned[k]):
                    raise NotApplicable("scan", "outside the model's range")
                fx = float(scanned[k])
            else:
                fx = f(float(x))
        except NotApplicable:
            prev_x, prev_f = None, None
            continue
        if prev_f is not None and (prev_f <= 0.0 <= fx or prev_f >= 0.0 >= fx):
            if fx == 0.0:
                return float(x)
            try:
                return float(brentq(f, prev_x, float(x), rtol=P_TOL, xtol=1e-12 * max(1.0, abs(x))))
            except NotApplicable:
                return None
        prev_x, prev_f = float(x), fx
    return None


def _known_root(x: float | None, f_array: Callable[[np.ndarray], np.ndarray], lo: float, hi: float,
                n: int, f_tol: float) -> tuple[bool, float | None]:
    """(settled, root): the root that _root(f, lo, hi, n, f_array) finds for an increasing f, given a root x found
    another way (the model's inverse) and confirmed in one vectorised call (|f(x)| <= f_tol); settled False where
    it cannot be confirmed so (the caller then runs _root). As in _root: x is the root where f at lo and hi
    brackets it; where f cannot be evaluated at hi, where the scan interval of np.linspace(lo, hi, n) that holds
    x brackets it and no earlier scan point has f >= 0."""
    if x is None or not (lo < x < hi):
        # no root inside: f evaluated at both ends with one sign has none (f increasing), as _root finds
        f_lo, f_hi = (float(v) for v in f_array(np.array([lo, hi])))
        if math.isfinite(f_lo) and math.isfinite(f_hi) and (f_lo > 0.0 and f_hi > 0.0 or f_lo < 0.0 and f_hi < 0.0):
            return True, None
        return False, None
    xs = np.linspace(lo, hi, n)
    k = min(max(int(np.searchsorted(xs, x, side="right")) - 1, 0), n - 2)
    f_lo, f_hi, f_a, f_b, f_x = (float(v) for v in f_array(np.array([lo, hi, xs[k], xs[k + 1], x])))
    if not (math.isfinite(f_x) and abs(f_x) <= f_tol):
        return False, None
    if math.isfinite(f_lo) and math.isfinite(f_hi):
        return (True, float(x)) if f_lo < 0.0 < f_hi else (False, None)
    # an end that cannot be evaluated: _root scans, and finds the first scan interval that brackets a root
    if math.isfinite(f_a) and math.isfinite(f_b) and f_a < 0.0 < f_b:
        before = f_array(xs[:k]) if k else np.array([])
        if np.all(~np.isfinite(before) | (before < 0.0)):
            return True, float(x)
    return False, None


def limit_ceiling(case: Case) -> float:
    """The pressure [Pa] the limits solve to: the rated pressure, or the relief set pressure where that is lower
    (above it the relief device opens, and :func:`decide` asks the required margin against it too)."""
    relief = case.relief_set_pressure_pa
    return case.rated_pressure_pa if relief is None else min(case.rated_pressure_pa, relief)


def _limits(case: Case, models: list[Model], t_fill: float, t_peak: float) -> dict:
    """The limits of one state (screen the vessel at them and it is on the edge): the gas temperature at which
    the governing isochore reaches :func:`limit_ceiling`, and the fill pressure and fill mass whose peak at
    `t_peak` is the target (the ceiling less the required margin), each the lowest over the applicable
    real-gas models."""
    real = [m for m in models if m.applicable and m.name != "ideal"]
    ceiling, atm = limit_ceiling(case), case.site.atmospheric_pressure_pa
    target = atm + (ceiling - atm) * (1.0 - case.required_margin)
    t_lo = min(t_fill, t_peak)
    t_hi = max(t_peak, t_fill) + 300.0
    max_t = []
    for m in real:
        f_array = ((lambda ts, m=m: m.isochore_array(ts) - ceiling)
                   if m.isochore_array is not None else None)
        settled = False
        if m.temperature_at is not None and f_array is not None:
            # the model's inverse and one check instead of a scan and a scalar solve
            settled, t = _known_root(m.temperature_at(ceiling), f_array, t_lo, t_hi, 40, 1e-9 * ceiling)
        if not settled:
            t = _root(lambda t, m=m: m.isochore(t) - ceiling, t_lo, t_hi, n=40, f_array=f_array)
        if t is not None:
            max_t.append(t)
    max_p = []
    if case.fill_pressure_pa is not None:
        p_lo = case.site.atmospheric_pressure_pa * 1.01
        p_hi = max(target, case.fill_pressure_pa) * max(1.0, t_fill / t_peak) * 1.05
        for m in real:
            f_array = (lambda ps, m=m: m.fill_to_peak_array(ps) - target) if m.fill_to_peak_array is not None else None
            settled = False
            if m.fill_for_peak is not None and f_array is not None:
                # the model's inverse and one check instead of a scan and a scalar solve
                settled, p = _known_root(m.fill_for_peak(target), f_array, p_lo, p_hi, 40, 1e-6 * target)
            if not settled:
                p = _root(lambda p, m=m: m.fill_to_peak(p) - target, p_lo, p_hi, n=40, f_array=f_array)
                fill_to_peak = m.fill_to_peak
                fluid = _reference_fluid(case.gas)[0] if m.name == "reference" else None
                if _phase_at_root(fluid):
                    fill_to_peak = functools.partial(_established_fill_to_peak, fluid, t_fill=t_fill, t_peak=t_peak)
                    p = _checked_at_root(fluid, p, fill_to_peak, lambda f=fill_to_peak: _root(
                        lambda x: f(x) - target, p_lo, p_hi, n=40))
                if p is not None and abs(fill_to_peak(p) - target) > 1e-6 * target:
                    p = None
            if p is not None:
                max_p.append(p)
    mass_limit = _mass_limit(case, models, t_fill, t_peak, target)
    fill_over = case.fill_temperature_k is not None and _fill_over_rating(case, real, t_fill)
    if fill_over:  # a temperature limit below the fill temperature would contradict the fill: say so instead
        max_t = []
    note = limits_note(bool(real), fill_over, case)
    return {
        **mass_limit,
        "max_gas_temperature_k": min(max_t) if max_t else None,
        "max_fill_pressure_pa": min(max_p) if max_p else None,
        "target_peak_pressure_pa": target,
        "note": note,
    }


def limits_note(any_real_model: bool, fill_over: bool, case: Case | None = None) -> str:
    """How the limits were found, in words: against what pressure (:func:`limit_ceiling`), with the reading
    tolerances taken off where `case` has them (:func:`take_off_tolerances`), and where the fill itself is at or
    above the rating, that."""
    if not any_real_model:
        return "no real-gas model applies, so no limit is given"
    relief_governs = case is not None and limit_ceiling(case) < case.rated_pressure_pa
    tolerances = case is not None and getattr(case, "tolerance", None) is not None
    return ("solved on each applicable real-gas model; the lowest (most conservative) value is given"
            + ("; solved against the relief set pressure, which is below the rated pressure" if relief_governs
               else "")
            + (f"; {TOLERANCES_TAKEN_OFF}" if tolerances else "")
            + ("; the fill itself is at or above the rated pressure, so no gas temperature keeps the vessel "
               "within its rating: the fill must be reduced" if fill_over else ""))


def take_off_tolerances(limits: dict, corner: dict, case: Case, fill_over: bool) -> dict:
    """The nominal `limits` of `case` with its reading tolerances taken off: `corner` holds the limits solved at
    the tolerances' bounding corner (its fill state and its worst case, where the peak is highest); the
    gas-temperature band comes off its temperature limit and the fill-pressure band off its fill-pressure limit,
    so that a reading at a limit passes at every corner. A band given as a share of the reading ('1 %') is that
    share of the reading at the limit, not of the fill's (Tolerance.fill_pressure_share). The fill-mass limit is
    the corner's (a fill mass has no band). `fill_over`: the fill itself is at or above the rating, so no temperature
    limit is given (as :func:`_limits` leaves it out); a limit the corner has not is not given."""
    tolerance, p0 = case.tolerance, case.fill_pressure_pa
    out = dict(limits)
    for key in ("max_fill_mass_kg", "max_filling_ratio_kg_per_l", "max_fill_mass_basis"):
        out[key] = corner[key]
    t = corner["max_gas_temperature_k"]
    out["max_gas_temperature_k"] = None if fill_over or t is None else t - tolerance.gas_temperature_k
    p = corner["max_fill_pressure_pa"]
    if p0 is None or p is None:
        out["max_fill_pressure_pa"] = None
        return out
    if tolerance.fill_pressure_share is not None:
        # R + share * (R - offset) = p: the reading whose band reaches the corner's limit
        share, offset = tolerance.fill_pressure_share
        reading = (p + share * offset) / (1.0 + share)
    else:
        reading = p - tolerance.fill_pressure_pa
    out["max_fill_pressure_pa"] = reading if reading > 0.0 else None
    return out


def _fill_over_rating(case: Case, real: list[Model], t_fill: float) -> bool:
    """Whether the fill state is at or above the rated pressure on any applicable real-gas model."""
    if case.fill_pressure_pa is not None:
        return case.fill_pressure_pa >= case.rated_pressure_pa
    for m in real:
        try:
            if (m.fill_pa if m.fill_pa is not None else m.isochore(t_fill)) >= case.rated_pressure_pa:
                return True
        except NotApplicable:
            return True
    return False


def generalized_density(gas: Mixture, model: Model, p: float, t: float) -> float | None:
    """The molar density [mol/m3] of the applicable generalized model `model` of `gas` at p [Pa] and t [K]
    (Lee–Kesler, or the quantum-gas SRK model where that is the model's method); None where the model does
    not apply at that state."""
    if model.extra.get("method") == QUANTUM_SRK_METHOD:
        g = gas.components[0]
        st = srk_quantum_density(p, t, g.classical_critical_temperature, g.classical_critical_pressure, g.molar_mass)
        return float(st.molar_density[()]) if st.valid[()] else None
    tc, pc, om = _lk_constants(_gas_arrays(gas), t)
    st = lee_kesler_density(np.array([p]), np.array([t]), tc, pc, om)
    return float(st.molar_density[0]) if st.valid[0] else None


def _mass_limit(case: Case, models: list[Model], t_fill: float, t_peak: float, target: float) -> dict:
    """Highest fill mass [kg] (and filling ratio [kg/L]) for which the peak at the worst-case temperature stays
    at the target pressure on the reference model and on the generalized model where it applies (the lower
    density of the two: the model that governs at that fill), and the vessel is not liquid-full (or a dense,
    liquid-like fluid) at that temperature; also capped by the vessel's maximum filling ratio. None where the
    reference model does not apply."""
    none = {"max_fill_mass_kg": None, "max_filling_ratio_kg_per_l": None, "max_fill_mass_basis": None}
    ref = next((m for m in models if m.name == "reference" and m.applicable), None)
    if ref is None:
        return none
    fluid = _reference_fluid(case.gas)[0]
    M = case.gas.molar_mass
    try:
        rho_top = max_liquid_density(fluid) if _is_pure(fluid) else 3.0 * fluid.critical_molar_density \
            if fluid.critical_molar_density else 5.0 * (ref.fill_molar_density or 1.0)
    except NotApplicable:
        return none
    basis = "the required margin at the worst-case temperature"
    rho = _root(lambda r: fluid.homogeneous_pressure(r, t_peak) - target, 1e-6 * rho_top, rho_top * 0.999, n=60)
    if _phase_at_root(fluid):
        rho = _checked_at_root(fluid, rho, lambda r: fluid.pressure(r, t_peak), lambda: _root(
            lambda r: fluid.pressure(r, t_peak) - target, 1e-6 * rho_top, rho_top * 0.999, n=60))
    if rho is None:
        return none
    gen = next((m for m in models if m.name == "generalized" and m.applicable), None)
    rho_gen = generalized_density(case.gas, gen, target, t_peak) if gen is not None else None
    if rho_gen is not None and rho_gen < rho:
        rho = rho_gen       # the generalized model reaches the target at a lower density: it governs the limit
    if _has_liquid_full_analysis(fluid):
        try:
            rho_lf = liquid_full_density(fluid, t_fill, t_peak, case.gas)
        except NotApplicable:
            return none
        if rho_lf < rho:
            rho, basis = rho_lf, "the liquid-full point at the worst-case temperature"
    rho_mass = rho * M
    if case.max_filling_ratio_kg_m3 is not None and case.max_filling_ratio_kg_m3 < rho_mass:
        rho_mass, basis = case.max_filling_ratio_kg_m3, "the vessel's maximum filling ratio"
    return {"max_fill_mass_kg": rho_mass * case.water_capacity_m3, "max_filling_ratio_kg_per_l": rho_mass / 1000.0,
            "max_fill_mass_basis": basis}


# ----------------------------------------------------------------------------- verdict

def models_disagree(peak_generalized: float | None, peak_reference: float | None) -> dict | None:
    """The warning where the generalized and reference peaks [Pa] differ by more than
    MODEL_DISAGREEMENT_WARNING (relative to the reference), else None."""
    if peak_generalized is None or not peak_reference:
        return None
    diff = abs(peak_generalized - peak_reference) / peak_reference
    if diff <= MODEL_DISAGREEMENT_WARNING:
        return None
    return {"code": "models-disagree", "message":
            f"The generalized and reference peaks differ by {diff * 100:.1f} % "
            f"(more than {MODEL_DISAGREEMENT_WARNING * 100:.0f} %); the higher one governs."}


def filling_ratio_reason(fill_density_kg_m3: float | None, max_filling_ratio_kg_m3: float | None) -> str | None:
    """The reason where the fill's mass per water capacity [kg/m3] exceeds the vessel's maximum filling
    ratio [kg/m3], else None."""
    if max_filling_ratio_kg_m3 is None or fill_density_kg_m3 is None or fill_density_kg_m3 <= max_filling_ratio_kg_m3:
        return None
    return (f"The filling ratio, {fill_density_kg_m3 / 1000.0:.3f} kg/L, is above the vessel's maximum filling "
            f"ratio of {max_filling_ratio_kg_m3 / 1000:.3f} kg/L.")


def governing_text(governing: str | None, others: list[str]) -> str:
    """Why the governing model governs, in words (the same sentence for every path)."""
    if governing is None:
        return "No real-gas model applies."
    return (f"The {governing} model gives the highest peak among the applicable real-gas models"
            + (f" ({', '.join(others)})" if others else "")
            + "; the highest is taken because it is the conservative choice. The ideal gas is shown for "
            "comparison only and governs nothing.")


def liquid_full_reason(own: str | None, corners: Iterable[str] = ()) -> str | None:
    """The liquid-full reason of a vessel: its own finding at the worst case (None: none), then each finding at a
    corner of the input tolerances not given already, in one text; None where there is none."""
    if not corners:         # none at the corners (an empty tuple or list): the vessel's own finding
        return own or None
    found = [own] if own is not None else []
    found += [r for r in corners if r not in found]
    return " ".join(found) or None


def liquid_full_text(fs: FillState, t_peak: float, corner: bool = False) -> str:
    """The reason where the vessel is liquid-full, or a dense liquid-like fluid, at the worst case."""
    rise = fs.dp_dt_after_liquid_full
    where = "At a corner of the input tolerances the" if corner else "The"
    if fs.liquid_full_temperature is not None and fs.liquid_full_temperature <= t_peak:
        head = (f"{where} liquid fills the whole vessel at {fs.liquid_full_temperature - 273.15:.1f} °C, at or "
                "below the worst-case temperature")
    else:
        head = (f"{where} contents are denser than the critical density and were filled close to the critical "
                "temperature: a dense, liquid-like fluid")
    return (head + "; beyond that point the pressure rises steeply"
            + (f" (about {rise / 1e5:.1f} bar per kelvin)" if rise else "")
            + ", so a small error in temperature means a large error in pressure.")


def _molar(case: Case, fs: FillState) -> float | None:
    """Fill molar density [mol/m3] from the fill state, as every model takes it."""
    return fs.rho_mass / case.gas.molar_mass if fs.rho_mass is not None else None


#: Each verdict's word and severity (Verdict.value, Verdict.severity), looked up once per decision.
_WORD = {v: v.value for v in Verdict}
_SEVERITY_OF = {v: v.severity for v in Verdict}


#: The reason given where the fill itself is at or above the rated pressure (beside the peak's own).
FILL_OVER_REASON = ("The fill itself is at or above the rated pressure: no gas temperature keeps the vessel within "
                    "its rating, so the fill must be reduced.")


def decide(*, peak: float | None, rated: float, relief: float | None, atm: float, required_margin: float,
           any_real_model: bool, out_of_scope_reason: str | None, liquid_full_reason: str | None = None,
           filling_ratio_reason: str | None = None, fill_over: bool = False
           ) -> tuple[str, list[str], float | None, float | None]:
    """Verdict, reasons, margin against the rated pressure and against the relief set pressure.

    margin = 1 − peak_gauge / rated_gauge, relief margin likewise against the relief set pressure.
    `over`: peak > rated, or the filling ratio above the vessel's maximum; `low-margin`: the margin below
    the required one, the relief margin below the required one (the relief device may open), or the vessel
    liquid-full (or liquid-like) at the worst case; `within`: none of these; `out-of-scope`: no applicable
    real-gas model, or a reason given by the caller. The reasons that decide the verdict come first.
    `fill_over`: the fill itself is at or above the rated pressure on an applicable real-gas model (its peak is
    then at or above the rating too): said as a reason of its own, since no limit on the temperature helps.
    """
    if out_of_scope_reason or not any_real_model or peak is None:
        return Verdict.OUT_OF_SCOPE.value, [out_of_scope_reason or "No real-gas model applies to this vessel, so it cannot "
                                "be screened."], None, None
    margin = 1.0 - (peak - atm) / (rated - atm)
    relief_margin = None if relief is None else 1.0 - (peak - atm) / (relief - atm)
    findings: list[tuple[Verdict, str]] = []
    if peak > rated:
        findings.append((Verdict.OVER, f"The peak pressure exceeds the rated pressure by {-margin * 100:.1f} % of the "
                                 "rating."))
    elif margin < required_margin:
        m, req = percent_pair(margin, required_margin)
        findings.append((Verdict.LOW_MARGIN, f"The peak pressure stays within the rating but the margin, {m}, is below "
                                       f"the required {req}."))
    if fill_over:
        findings.append((Verdict.LOW_MARGIN, FILL_OVER_REASON))
    if filling_ratio_reason:
        findings.append((Verdict.OVER, filling_ratio_reason))
    if relief is not None and peak > relief:
        findings.append((Verdict.LOW_MARGIN, "The peak pressure is above the relief set pressure: the relief device "
                                       "would open and release gas."))
    elif relief_margin is not None and relief_margin < required_margin:
        m, req = percent_pair(relief_margin, required_margin)
        findings.append((Verdict.LOW_MARGIN, f"The peak pressure is within {m} of the relief set pressure, less than the "
                                       f"required margin of {req}: the relief device may open."))
    if liquid_full_reason:
        findings.append((Verdict.LOW_MARGIN, liquid_full_reason))
    if not findings:
        verdict, reasons = _WORD[Verdict.WITHIN], []
    elif len(findings) == 1:
        verdict, reasons = _WORD[findings[0][0]], [findings[0][1]]
    else:
        verdict = _WORD[max((v for v, _ in findings), key=_SEVERITY_OF.__getitem__)]
        reasons = [r for _, r in sorted(findings, key=lambda f: -_SEVERITY_OF[f[0]])]
    if peak <= rated and margin >= required_margin:
        m, req = percent_pair(margin, required_margin)
        reasons.append(f"The peak pressure stays within the rating with a margin of {m} (required {req}).")
    return verdict, reasons, margin, relief_margin   # the word itself: results are plain data



# ----------------------------------------------------------------------------- the screening

#: The phase diagram of each pure fluid, computed once per process (it depends on the fluid alone); the lock
#: guards the dictionary (threads of the web page), not the computation, which any thread may repeat.
_PHASE_DIAGRAMS: dict[str, dict] = {}
_PHASE_DIAGRAMS_LOCK = threading.Lock()


def _phase_diagram(fs: FillState) -> dict | None:
    """Vapour-pressure curve from the triple point to the critical point (pure fluids with a dome): a fresh copy
    of the fluid's one diagram (:func:`_fluid_phase_diagram`)."""
    fluid = fs.fluid
    if fluid is None or not _is_pure(fluid):
        return None
    with _PHASE_DIAGRAMS_LOCK:
        pd = _PHASE_DIAGRAMS.get(fluid.label)
    if pd is None:
        pd = _fluid_phase_diagram(fluid)
        with _PHASE_DIAGRAMS_LOCK:
            _PHASE_DIAGRAMS.setdefault(fluid.label, pd)
    sat = pd["saturation"]
    return {**pd, "saturation": {"temperature_k": list(sat["temperature_k"]), "pressure_pa": list(sat["pressure_pa"])}}


def _fluid_phase_diagram(fluid: ReferenceFluid) -> dict:
    """The vapour-pressure curve of a pure fluid on 50 temperatures from its triple to its critical point."""
    tt, tc = fluid.triple_temperature, fluid.critical_temperature
    temps, pressures = [], []
    for t in np.linspace(tt, tc, 50)[:-1]:
        try:
            pressures.append(fluid.vapour_pressure(float(t)))
            temps.append(float(t))
        except NotApplicable:
            continue
    return {"saturation": {"temperature_k": temps + [tc], "pressure_pa": pressures + [fluid.critical_pressure]},
            "critical_temperature_k": tc, "critical_pressure_pa": fluid.critical_pressure,
            "critical_density_kg_m3": fluid.critical_molar_density * fluid.molar_mass,
            "triple_temperature_k": tt}


def curve_temperatures(t_fill: float, t_peak: float, limits: dict, points: int = 61) -> np.ndarray:
    """Gas temperatures [K] at which a result's isochore curves are drawn: from 30 K below the lower of
    the fill and worst-case temperatures to 25 K above the higher, stretched to 10 K past the highest
    gas temperature where that lies within 80 K of the worst case (plot ranges chosen here)."""
    t_lo = max(min(t_fill, t_peak) - 30.0, 1.0)
    t_top = max(t_peak, t_fill) + 25.0
    tmax = limits.get("max_gas_temperature_k")
    if tmax is not None and tmax < t_peak + 80.0:
        t_top = max(t_top, tmax + 10.0)
    return np.linspace(t_lo, t_top, points)


def _curves(models: list[Model], t_fill: float, t_peak: float, limits: dict,
            bounding: Model | None = None) -> dict:
    # a mixture's reference state costs tens of milliseconds (its consistency checks): fewer points
    slow = any(m.name == "reference" and m.applicable and m.extra.get("fluid", "").count("&") for m in models)
    grid = curve_temperatures(t_fill, t_peak, limits, 25 if slow else 61)
    out: dict = {"temperature_k": [float(t) for t in grid]}
    # (key, model) of every curve drawn, in order
    drawn = [(m.name, m) for m in models if m.applicable and m.isochore is not None]
    if bounding is not None and bounding.isochore is not None:
        drawn.append(("bounding", bounding))
    # the Lee–Kesler isochores (the generalized model's and the bounding corner's, where it governs there) in one call
    joined = _lk_isochores_joined([m for _key, m in drawn], grid)
    curves = {key: joined[k] if k in joined else m.isochore_values(grid) for k, (key, m) in enumerate(drawn)}
    for m in models:
        out[m.name] = curves[m.name] if m.applicable and m.isochore is not None else None
    if "bounding" in curves:
        out["bounding"] = curves["bounding"]
        out["bounding_model"] = bounding.name
    return out


#: A fill denser than the critical density, filled at or below this multiple of the critical temperature, is a
#: liquid or a dense, liquid-like fluid: once its isochore has passed the liquid-full point the pressure climbs
#: steeply, so it is never reported within. The rule is keyed on the fill, not the worst case, so that a hotter
#: worst case can never give a better verdict. Ratio chosen here (conservative near the critical point; at
#: 1.2 Tc a dense isochore of carbon dioxide still rises about 2 bar per kelvin, CoolProp's reference equation);
#: a permanent gas filled at room temperature (above 1.5 Tc) is never caught by it.
LIQUID_LIKE_TEMPERATURE_RATIO = 1.2


def liquid_full_density(fluid: ReferenceFluid, t_fill: float, t_peak: float, gas: Mixture | None = None,
                        saturated: float = math.nan) -> float:
    """Molar density [mol/m3] at and above which a vessel of a pure fluid or a liquefied blend counts as
    liquid-full (or a dense, liquid-like fluid) at the worst-case temperature t_peak [K] for a fill at
    t_fill [K]; inf where none. One rule for the verdict and for the fill-mass limit.

    Pure fluid: below the critical temperature the saturated-liquid density at t_peak (the liquid fills the
    vessel at or below t_peak); above it, the critical density if the fill was at or below
    LIQUID_LIKE_TEMPERATURE_RATIO × Tc, else none. Liquefied blend: its bubble-point liquid density at t_peak;
    where the blend has no bubble point there (above its critical region), the dense-fluid rule with Kay's-rule
    critical constants of `gas`. `saturated`: a pure fluid's saturated-liquid density at t_peak where the caller
    has it (what saturated_liquid_density gives; NaN: worked out here).
    """
    if isinstance(fluid, LiquefiedBlend):
        try:
            return fluid.bubble_point(t_peak)[1]
        except NotApplicable:
            tc, rho_c = _kay_critical(gas)
            return rho_c if t_fill <= LIQUID_LIKE_TEMPERATURE_RATIO * tc else math.inf
    tc = fluid.critical_temperature
    if t_peak < tc:
        return saturated if saturated == saturated else fluid.saturated_liquid_density(t_peak)
    if t_fill <= LIQUID_LIKE_TEMPERATURE_RATIO * tc:
        return fluid.critical_molar_density
    return math.inf


def _kay_critical(gas: Mixture) -> tuple[float, float]:
    """Pseudo-critical temperature [K] and molar density [mol/m3] of a mixture by Kay's rule (mole-fraction
    averages of the components' critical temperatures and volumes)."""
    tc = sum(x * g.critical_temperature for g, x in zip(gas.components, gas.fractions))
    return tc, 1.0 / sum(x * g.critical_volume for g, x in zip(gas.components, gas.fractions))


def _has_liquid_full_analysis(fluid: ReferenceFluid | None) -> bool:
    """A pure fluid with a saturation dome, or a liquefied blend: the liquid-full point is established."""
    return fluid is not None and (_is_pure(fluid) or isinstance(fluid, LiquefiedBlend))


def _liquid_full_applies(fs: FillState, rho: float | None, t_fill: float, t_peak: float,
                         gas: Mixture | None = None, rho_liquid_full: float | None = None) -> bool:
    """Whether the vessel with fill molar density rho [mol/m3] is liquid-full (or a dense, liquid-like fluid) at
    the worst-case temperature; `rho_liquid_full`: :func:`liquid_full_density` where the caller has it."""
    if rho is None or not _has_liquid_full_analysis(fs.fluid):
        return False
    try:
        return rho >= (liquid_full_density(fs.fluid, t_fill, t_peak, gas) if rho_liquid_full is None
                       else rho_liquid_full)
    except NotApplicable:
        return True  # the liquid side cannot be evaluated: not shown to be away from it


def _evaluate(case: Case, t_fill: float, t_peak: float, warnings: list) -> tuple[FillState, list[Model], str | None]:
    """Fill state and the three models at one fill and one worst-case temperature."""
    out_of_scope = None
    if case.gas.kind == "dissolved":
        dissolved = [g.name for g in case.gas.components if g.kind == "dissolved"]
        out_of_scope = (f"{', '.join(dissolved).capitalize()} is a dissolved gas: it is held in a solvent inside a "
                        "porous mass, so the pressure does not follow a gas or vapour equation of state. "
                        "This method cannot screen it.")
        models = [not_applicable(n, "dissolved gas: outside the method") for n in ("ideal", "generalized",
                                                                                   "reference")]
        fs = FillState(rho_mass=(case.fill_mass_kg / case.water_capacity_m3) if case.fill_mass_kg else None)
    else:
        fs = _fill_state(case, t_fill, t_peak, warnings)
        out_of_scope = fs.refusal
        if out_of_scope:  # the state cannot be established: no model gives a number for it
            models = [not_applicable(n, "the fill state cannot be established (see the verdict's reason)")
                      for n in ("ideal", "generalized", "reference")]
        else:
            models = [
                _ideal(case, fs.rho_mass, t_fill, t_peak, fs.gas_ok, fs.why_not_gas),
                _generalized(case, fs.rho_mass, t_fill, t_peak, fs.gas_ok, fs.why_not_gas),
                _reference(case, fs, t_fill, t_peak),
            ]
    return fs, models, out_of_scope


def _governing(models: list[Model]) -> Model | None:
    """The governing model: the highest peak among the applicable real-gas models (the ideal gas is shown
    beside them for comparison and governs nothing); None where no real-gas model applies."""
    real = [m for m in models if m.applicable and m.peak_pa is not None and m.name != "ideal"]
    return max(real, key=lambda m: m.peak_pa) if real else None


def gas_part(gas) -> dict:
    """A result's "gas" part: the gas's name, kind, hazards and components (a new dict on each call)."""
    return {"name": gas.name, "kind": gas.kind, "hazards": list(gas.hazards),
            "components": [{"name": g.name, "formula": g.formula, "fraction": x,
                            "molar_mass_kg_mol": g.molar_mass, "coolprop_name": g.coolprop_name}
                           for g, x in zip(gas.components, gas.fractions)]}


def case_parts(case: Case) -> dict:
    """The parts of a result that describe the case as entered: its identity, site, gas, vessel, inputs,
    display units and the cautions (every path's result takes them from here)."""
    return {
        "id": case.id, "description": case.description, "source": case.source,
        "tool_version": __version__, "input_sha256": case.input_sha256,
        "site": {"name": case.site.name, "atmospheric_pressure_pa": case.site.atmospheric_pressure_pa,
                 "elevation_m": case.site.elevation_m},
        "gas": gas_part(case.gas),
        "vessel": {"water_capacity_m3": case.water_capacity_m3, "rated_pressure_pa": case.rated_pressure_pa,
                   "rated_pressure_kind": case.rated_pressure_kind,
                   "relief_set_pressure_pa": case.relief_set_pressure_pa,
                   "max_filling_ratio_kg_per_l": (case.max_filling_ratio_kg_m3 / 1000.0
                                                  if case.max_filling_ratio_kg_m3 is not None else None)},
        "inputs": list(case.inputs), "display_units": dict(case.display_units),
        "cautions": {"caution": CAUTION, "short_caution": SHORT_CAUTION, "assumptions": list(ASSUMPTIONS)},
    }


def _screen_at(case: Case, t_peak: float, basis: str, warnings: list) -> dict:
    """Screen one vessel at one worst-case gas temperature (one scenario); tolerances included."""
    t_fill = _fill_temperature(case)
    atm = case.site.atmospheric_pressure_pa
    fs, models, out_of_scope = _evaluate(case, t_fill, t_peak, warnings)
    by_name = {m.name: m for m in models}
    applicable = [m for m in models if m.applicable and m.peak_pa is not None]
    real = [m for m in applicable if m.name != "ideal"]
    governing = _governing(models)
    peak = governing.peak_pa if governing else None
    governing_reason = governing_text(governing.name if governing else None,
                                      [m.name for m in real if m is not governing])
    ideal = by_name["ideal"]
    if governing is not None and ideal.applicable and ideal.peak_pa is not None:
        ideal.extra["off_governing_fraction"] = ideal.peak_pa / governing.peak_pa - 1.0
    gen, ref = by_name["generalized"], by_name["reference"]
    if gen.applicable and ref.applicable:
        disagree = models_disagree(gen.peak_pa, ref.peak_pa)
        if disagree:
            warnings.append(disagree)
    if not real and out_of_scope is None:
        # one reason shared by several models (the phase that cannot be established) is said once
        notes: dict[str, list[str]] = {}
        for m in models:
            if not m.applicable:
                core = m.note.removeprefix("reference equation of state not applicable: ") \
                    .removeprefix("the gas phase cannot be confirmed: ")
                notes.setdefault(core, []).append(m.name)
        reasons_na = "; ".join(f"{', '.join(names)}: {note}" for note, names in notes.items())
        out_of_scope = f"No real-gas model applies to this vessel ({reasons_na}), so it cannot be screened."

    liquid_full = liquid_full_text(fs, t_peak) if _liquid_full_applies(fs, _molar(case, fs), t_fill, t_peak, case.gas) \
        else None
    corners_liquid_full: list[str] = []
    ratio_reason = filling_ratio_reason(fs.rho_mass, case.max_filling_ratio_kg_m3)

    tolerance = _tolerance(case, t_fill, t_peak, models) if (case.tolerance and governing) else None
    if tolerance is not None:
        corner_findings = tolerance.pop("_findings")
        if tolerance["bounding_peak_pressure_pa"] is None:
            out_of_scope = out_of_scope or corner_findings["out_of_scope"] or (
                "At a corner of the input tolerances no real-gas model applies, so the vessel cannot be screened "
                "with these tolerances.")
        else:
            peak = max(peak, tolerance["bounding_peak_pressure_pa"])
        corners_liquid_full = corner_findings["liquid_full"]
    fill_over = bool(real) and case.fill_temperature_k is not None and _fill_over_rating(case, real, t_fill)
    verdict, reasons, margin, relief_margin = decide(
        peak=peak, rated=case.rated_pressure_pa, relief=case.relief_set_pressure_pa, atm=atm,
        required_margin=case.required_margin, any_real_model=bool(real), out_of_scope_reason=out_of_scope,
        liquid_full_reason=liquid_full_reason(liquid_full, corners_liquid_full), filling_ratio_reason=ratio_reason,
        fill_over=fill_over)

    limits = _limits(case, models, t_fill, t_peak) if real else {
        "max_fill_mass_kg": None, "max_filling_ratio_kg_per_l": None, "max_fill_mass_basis": None,
        "max_gas_temperature_k": None, "max_fill_pressure_pa": None, "target_peak_pressure_pa": None,
        "note": "no real-gas model applies, so no limit is given"}
    if real and tolerance is not None and tolerance["bounding_peak_pressure_pa"] is not None:
        limits = take_off_tolerances(limits, _corner_limits(case, tolerance["bounding_corner"]), case, fill_over)
    limits["liquid_full_temperature_k"] = fs.liquid_full_temperature
    limits["dry_out_temperature_k"] = fs.dry_out_temperature
    limits["phase_boundary_pressure_pa"] = fs.crossing_pressure
    limits["dp_dt_after_liquid_full_pa_k"] = fs.dp_dt_after_liquid_full

    mass = fs.rho_mass * case.water_capacity_m3 if fs.rho_mass is not None else None
    fill_rho_molar = (fs.rho_mass / case.gas.molar_mass) if fs.rho_mass is not None else \
        (governing.fill_molar_density if governing else None)
    if fs.rho_mass is None and fill_rho_molar is not None:
        mass = fill_rho_molar * case.gas.molar_mass * case.water_capacity_m3
    rho_mass = fill_rho_molar * case.gas.molar_mass if fill_rho_molar is not None else None
    return {
        **case_parts(case),
        "verdict": verdict, "reasons": reasons, "warnings": warnings,
        "fill": {"pressure_pa": case.fill_pressure_pa, "temperature_k": t_fill,
                 "temperature_given": case.fill_temperature_k is not None,
                 "density_kg_m3": rho_mass, "molar_density_mol_m3": fill_rho_molar, "mass_kg": mass,
                 "phase": fs.phase_fill, "filling_ratio_kg_per_l": (rho_mass / 1000.0 if rho_mass else None),
                 "vapour_pressure_pa": fs.vapour_pressure_fill,
                 "given": "pressure" if case.fill_pressure_pa is not None else "mass"},
        "worst_case_temperature_k": t_peak, "worst_case_basis": basis,
        "models": {m.name: m.as_dict() for m in models},
        "peak_pressure_pa": peak, "nominal_peak_pressure_pa": governing.peak_pa if governing else None,
        "tolerance": tolerance,
        "governing_model": governing.name if governing else None,
        "governing_reason": governing_reason,
        "rated_pressure_pa": case.rated_pressure_pa, "relief_set_pressure_pa": case.relief_set_pressure_pa,
        "required_margin_fraction": case.required_margin,
        "required_margin_is_default": case.required_margin_is_default,
        "margin_fraction": margin, "relief_margin_fraction": relief_margin,
        "nominal_margin_fraction": (1.0 - (governing.peak_pa - atm) / (case.rated_pressure_pa - atm)
                                    if governing else None),
        "limits": limits,
        "curves": None, "phase_diagram": None,
        # plot data are computed only for the governing scenario and only where a view shows them
        "_plot": lambda: (_curves(models, t_fill, t_peak, limits, _bounding_model(case, tolerance)),
                          _phase_diagram(fs)),
    }


def _fill_temperature(case: Case) -> float:
    return case.fill_temperature_k if case.fill_temperature_k is not None else DEFAULT_MASS_FILL_TEMPERATURE_K


def _corner_state(case: Case, p_fill: float | None, t_fill: float, t_peak: float):
    """(variant case, screened temperature, fill state, models, out-of-scope reason) at one tolerance corner:
    a state of its own, through the same rules as the nominal state (the corner's own bands, not widened by the
    tolerance again; the screened temperature never below its fill temperature)."""
    variant = replace(case, fill_pressure_pa=p_fill, fill_temperature_k=t_fill, tolerance=None)
    t_screen = screened_temperature(t_peak, t_fill if case.fill_temperature_k is not None else None)
    fs, models, out_of_scope = _evaluate(variant, t_fill, t_screen, [])
    return variant, t_screen, fs, models, out_of_scope


def governing_peak(peaks: dict) -> float | None:
    """The governing peak [Pa] from the models' peaks by name (None: not applicable): the highest real-gas peak,
    the ideal gas governing nothing (as _governing); None where no real-gas model applies."""
    real = [p for name, p in peaks.items() if name != "ideal" and p is not None]
    return max(real) if real else None


def _corner_peak(case: Case, p_fill: float | None, t_fill: float, t_peak: float) -> dict:
    """Peak of every model at one tolerance corner (see _corner_state), and what the state rules find there
    ("_out_of_scope", "_liquid_full": reasons or None)."""
    variant, t_screen, fs, models, out_of_scope = _corner_state(case, p_fill, t_fill, t_peak)
    out = {m.name: (m.peak_pa if m.applicable else None) for m in models}
    out["governing"] = governing_peak(out)
    out["_out_of_scope"] = out_of_scope
    out["_liquid_full"] = (liquid_full_text(fs, t_screen, corner=True)
                           if _liquid_full_applies(fs, _molar(variant, fs), t_fill, t_screen, case.gas) else None)
    return out


def _corner_limits(case: Case, corner: dict) -> dict:
    """The limits (as :func:`_limits` gives them) at a tolerance corner (a tolerance block's "bounding_corner"),
    its state evaluated as _corner_state evaluates it; no limit where no real-gas model applies there."""
    variant, t_screen, _fs, models, _ = _corner_state(case, corner["fill_pressure_pa"], corner["fill_temperature_k"],
                                                      corner["worst_case_temperature_k"])
    if not any(m.applicable and m.name != "ideal" for m in models):
        return {"max_fill_mass_kg": None, "max_filling_ratio_kg_per_l": None, "max_fill_mass_basis": None,
                "max_gas_temperature_k": None, "max_fill_pressure_pa": None}
    return _limits(variant, models, corner["fill_temperature_k"], t_screen)


def _bounding_model(case: Case, tolerance: dict | None) -> Model | None:
    """The governing model at the bounding corner (for drawing the tolerance band)."""
    if not tolerance or tolerance.get("bounding_peak_pressure_pa") is None:
        return None
    corner = tolerance["bounding_corner"]
    return _corner_model(case, (corner["fill_pressure_pa"], corner["fill_temperature_k"],
                                corner["worst_case_temperature_k"]))


def _corner_model(case: Case, corner: tuple[float | None, float, float]) -> Model | None:
    """The governing model at a tolerance corner (fill pressure [Pa] or None, fill temperature [K], worst-case
    temperature [K]), evaluated as _corner_state evaluates it."""
    _, _, _, models, _ = _corner_state(case, *corner)
    return _governing(models)


def _tolerance(case: Case, t_fill: float, t_peak: float, models: list[Model]) -> dict:
    """Nominal and bounding peak under the input tolerances (see tolerance_steps), each state evaluated by
    _corner_peak, the corners one after the other (the first out of scope ends the search)."""
    steps = tolerance_steps(case, t_fill, t_peak, [m.name for m in models if m.applicable])
    states = next(steps)
    try:
        while True:
            states = steps.send(map(lambda s: _corner_peak(case, *s), states))
    except StopIteration as done:
        return done.value


def _corner_signs(case: Case) -> tuple[tuple[int, ...], tuple[int, ...], tuple[int, ...]]:
    """The signs each input takes at the corners of its tolerance band (0 alone where it has none)."""
    tol, p0 = case.tolerance, case.fill_pressure_pa
    # a mass fill has no fill-pressure reading; its fill temperature does not change the contents
    return ((1, -1) if (p0 is not None and tol.fill_pressure_pa > 0) else (0,),
            (1, -1) if (p0 is not None and tol.fill_temperature_k > 0) else (0,),
            (1, -1) if tol.gas_temperature_k > 0 else (0,))


def _corner_at(case: Case, t_fill: float, t_peak: float, a: int, b: int, c: int) -> tuple:
    """The state (fill pressure [Pa] or None, fill temperature [K], worst-case temperature [K]) of the corner with
    signs a, b, c of the fill pressure, fill temperature and worst-case temperature bands."""
    tol, p0 = case.tolerance, case.fill_pressure_pa
    return (p0 + a * tol.fill_pressure_pa if p0 is not None else None, t_fill + b * tol.fill_temperature_k,
            t_peak + c * tol.gas_temperature_k)


def expected_corner(case: Case, t_fill: float, t_peak: float) -> tuple:
    """The state of the expected bounding corner (fill pressure high, fill temperature low, worst case high),
    the one corner :func:`tolerance_steps` asks for where every sensitivity has its expected sign: a caller that
    evaluates many states at once may evaluate it beside the sensitivities' states."""
    p_signs, tf_signs, tg_signs = _corner_signs(case)
    return _corner_at(case, t_fill, t_peak, max(p_signs), min(tf_signs), max(tg_signs))


def tolerance_steps(case: Case, t_fill: float, t_peak: float, names: list[str]):
    """Nominal and bounding peak under the input tolerances, as a generator: it yields the states to evaluate
    (lists of (fill pressure [Pa] or None, fill temperature [K], worst-case temperature [K])), is sent back an
    iterable of their corner peaks in the same order (dicts as _corner_peak gives them; read in order and only as
    far as needed) and returns the tolerance block. `names`: the models applicable at the nominal state.
    The one-vessel screening evaluates each state by _corner_peak; the batch evaluates the states of many
    vessels at once as rows of one table.

    The expected bounding corner is fill pressure high, fill temperature low, worst-case temperature high.
    The signs of dP_peak/dP_fill (> 0), dP_peak/dT_fill (< 0 at a fixed fill pressure) and dP_peak/dT (> 0)
    are checked on every applicable model by central differences; where any sign differs, all eight
    corners are evaluated and the highest governs.
    """
    tol = case.tolerance
    dp, dtf, dtg = tol.fill_pressure_pa, tol.fill_temperature_k, tol.gas_temperature_k
    p0 = case.fill_pressure_pa
    h_t = 0.05
    h_p = max(1e-5 * p0, 10.0) if p0 is not None else None

    def pair(step_p, step_tf, step_tg):
        return [(p0 + step_p if p0 else None, t_fill + step_tf, t_peak + step_tg),
                (p0 - step_p if p0 else None, t_fill - step_tf, t_peak - step_tg)]

    states = [(p0, t_fill, t_peak)] + pair(0.0, 0.0, h_t)
    if p0 is not None:
        states += pair(h_p, 0.0, 0.0) + pair(0.0, h_t, 0.0)
    got = list((yield states))
    nominal = got[0]

    def deriv(j, h):
        hi, lo = got[j], got[j + 1]
        return {n: (hi[n] - lo[n]) / (2 * h) if hi.get(n) is not None and lo.get(n) is not None else None
                for n in names + ["governing"]}

    sens = {"dp_peak_dt_gas": deriv(1, h_t), "dp_peak_dt_fill": None, "dp_peak_dp_fill": None}
    expected = all((v or 0.0) > 0.0 for v in sens["dp_peak_dt_gas"].values())
    if p0 is not None:
        sens["dp_peak_dp_fill"] = deriv(3, h_p)
        sens["dp_peak_dt_fill"] = deriv(5, h_t)
        expected = expected and all((v or 0.0) > 0.0 for v in sens["dp_peak_dp_fill"].values()) \
            and all((v or 0.0) < 0.0 for v in sens["dp_peak_dt_fill"].values())
    p_signs, tf_signs, tg_signs = _corner_signs(case)
    if expected:
        corners = [(max(p_signs), min(tf_signs), max(tg_signs))]
    else:
        corners = [(a, b, c) for a in p_signs for b in tf_signs for c in tg_signs]
    peaks = yield [_corner_at(case, t_fill, t_peak, a, b, c) for a, b, c in corners]
    best, best_corner = None, None
    findings: dict = {"out_of_scope": None, "liquid_full": []}
    for (a, b, c), peak in zip(corners, peaks):
        if peak["_liquid_full"] and peak["_liquid_full"] not in findings["liquid_full"]:
            findings["liquid_full"].append(peak["_liquid_full"])
        g = peak["governing"]
        if g is None or peak["_out_of_scope"]:
            findings["out_of_scope"] = peak["_out_of_scope"]
            best, best_corner = None, (a, b, c)
            break
        if best is None or g > best:
            best, best_corner = g, (a, b, c)
    a, b, c = best_corner
    return {
        "fill_pressure_band_pa": dp, "fill_temperature_band_k": dtf, "gas_temperature_band_k": dtg,
        "entered": dict(tol.entered),
        "nominal_peak_pressure_pa": nominal["governing"], "bounding_peak_pressure_pa": best,
        "bounding_corner": {"fill_pressure_pa": p0 + a * dp if p0 is not None else None,
                            "fill_temperature_k": t_fill + b * dtf, "worst_case_temperature_k": t_peak + c * dtg},
        "corners_evaluated": len(corners), "expected_corner_confirmed": expected,
        "sensitivities": {k: (v["governing"] if v else None) for k, v in sens.items()},
        "sensitivities_by_model": sens,
        "_findings": findings,
    }


# ----------------------------------------------------------------------------- exposure and scenarios

#: Ground solar reflectance assumed under a vessel in the sun [-]: 0.2, the value commonly assumed for
#: ordinary ground (common practice, no source); counting it is the conservative side.
GROUND_ALBEDO = 0.2
#: Absorptivity assumed when a sun exposure names no finish [-]: a dark finish, conservative.
UNKNOWN_FINISH_ABSORPTIVITY = 0.95
#: Long-wave emissivity of a painted surface when none is given [-] (non-metallic paints are about 0.9,
#: see the finishes table).
DEFAULT_EMISSIVITY = 0.90
#: Above this ambient [K] the Swinbank sky correlation is outside its range; the sky is then taken at
#: the ambient temperature (less radiative loss: the hotter, conservative wall).
SKY_CORRELATION_MAX_AMBIENT_K = 323.15


def gas_below_ambient_warning(name: str | None) -> dict:
    """The warning that a stated gas temperature below the ambient maximum gives way to the ambient maximum
    (`name`: the scenario's, prefixed where there is one)."""
    msg = "the stated gas temperature is below the ambient maximum; the ambient maximum is used."
    return {"code": "gas-below-ambient", "message": f"{name}: {msg}" if name else msg[0].upper() + msg[1:]}


def _worst_case_temperature(case: Case, sc: Exposure, warnings: list) -> tuple[float, str, dict | None]:
    """Worst-case gas temperature [K] of one scenario, its basis in words, and the energy balance if any."""
    sun = None
    if sc.solar == "sun":
        sun = sun_balance(sc, case.outside_diameter_m, case.length_m, case.water_capacity_m3, case.source)
    return worst_case_temperature(sc, case.fill_temperature_k, sun, warnings)


def worst_case_temperature(sc: Exposure, fill_temperature_k: float | None, sun: tuple[dict, list] | None,
                           warnings: list) -> tuple[float, str, dict | None]:
    """Worst-case gas temperature [K] of one scenario, its basis in words, and the energy balance if any, from
    the scenario, the fill temperature [K] (None: not given) and, for a scenario in the sun, its
    :func:`sun_balance` (the balance and that step's warnings, which are copied, never changed). The step's
    warnings are appended to `warnings` in order: the stated gas temperature below the ambient, the sun's,
    the fill state governing."""
    candidates: list[tuple[float, str]] = []
    if sc.gas_temperature_k is not None:
        candidates.append((sc.gas_temperature_k, "gas temperature stated in the case"))
    if sc.ambient_max_k is not None:
        candidates.append((sc.ambient_max_k, "ambient maximum"))
    if sc.gas_temperature_k is not None and sc.ambient_max_k is not None and sc.gas_temperature_k < sc.ambient_max_k:
        warnings.append(gas_below_ambient_warning(sc.name))
    balance_dict = None
    if sun is not None:
        balance, sun_warnings = sun
        balance_dict = {**balance, "notes": list(balance["notes"])}
        warnings.extend(dict(w) for w in sun_warnings)
        candidates.append((balance_dict["wall_temperature_k"], "vessel wall temperature in the sun (energy balance)"))
    t_exposure = max(c[0] for c in candidates)
    t = screened_temperature(t_exposure, fill_temperature_k)
    if t > t_exposure:
        candidates.append((t, FILL_STATE_BASIS))
        warnings.append(fill_state_warning(sc.name, t_exposure, t))
    t, basis = max(candidates, key=lambda c: c[0])
    return t, basis, balance_dict


def sun_balance(sc: Exposure, outside_diameter_m: float | None, length_m: float | None, water_capacity_m3: float,
                source: str | None) -> tuple[dict, list]:
    """The energy balance of a scenario in the sun (physics.exposure.solar_wall_temperature) as a result lays
    it out, and the warnings of that step. A pure function of its arguments (the scenario's ambient maximum,
    irradiance, finish or absorptivity, emissivity, wind, orientation and name; the vessel's dimensions, or
    its water capacity where they are not given): rows that share them may share its answer, which
    :func:`worst_case_temperature` copies. Raises InputError (located in `source`, the scenario's key) where
    the exposure is outside the balance's range."""
    notes = []
    warnings: list = []
    if outside_diameter_m is not None and length_m is not None:
        d, length, estimated = outside_diameter_m, length_m, False
    else:
        d, length = estimate_dimensions(water_capacity_m3)
        estimated = True
        notes.append(f"Outside diameter and length estimated from the water capacity (length/diameter "
                     f"{DEFAULT_ASPECT_RATIO:g}).")
    if sc.finish is not None:
        try:
            fin = finish(sc.finish.strip().lower().replace(" ", "_").replace("-", "_"))
        except InputError as exc:
            raise InputError(exc.message, file=source, key=f"{sc.key}.finish", given=sc.finish,
                             expected=exc.expected) from None
        alpha, eps_default = fin.absorptivity, fin.emissivity
        notes.append(f"Finish '{fin.label or fin.name}': absorptivity {fin.absorptivity:.2f}, emissivity "
                     f"{fin.emissivity:.2f} ({fin.source}).")
    elif sc.absorptivity is not None:
        alpha, eps_default = sc.absorptivity, DEFAULT_EMISSIVITY
    else:
        alpha, eps_default = UNKNOWN_FINISH_ABSORPTIVITY, DEFAULT_EMISSIVITY
        notes.append(f"No finish or absorptivity given: {UNKNOWN_FINISH_ABSORPTIVITY:.2f} assumed (a dark "
                     "finish, the conservative side).")
        warnings.append({"code": "finish-assumed", "message":
                         f"{sc.name}: no surface finish given; a dark finish (absorptivity "
                         f"{UNKNOWN_FINISH_ABSORPTIVITY:.2f}) is assumed."})
    eps = sc.emissivity if sc.emissivity is not None else eps_default
    irradiance = sc.irradiance_w_m2 if sc.irradiance_w_m2 is not None else DEFAULT_IRRADIANCE
    if sc.irradiance_w_m2 is None:
        notes.append(f"Irradiance {DEFAULT_IRRADIANCE:.0f} W/m2: the tool's default (rule of thumb: clear-sky "
                     "peak sun at sea level).")
    sky = None
    if sc.ambient_max_k > SKY_CORRELATION_MAX_AMBIENT_K:
        sky = sc.ambient_max_k
        notes.append("Ambient above the sky-temperature correlation's range: sky taken at ambient.")
    try:
        b = solar_wall_temperature(sc.ambient_max_k, irradiance_w_m2=irradiance, absorptivity=alpha,
                                   emissivity=eps, wind_speed_m_s=sc.wind_speed_m_s, outside_diameter_m=d,
                                   length_m=length, orientation=sc.orientation, sky_temperature_k=sky,
                                   ground_albedo=GROUND_ALBEDO)
    except InputError as exc:
        raise exc.located(file=source, key=sc.key) from None
    except NotApplicable as exc:
        raise InputError(f"the sun exposure is outside the energy balance's range: {exc.reason}",
                         file=source, key=sc.key) from None
    balance_dict = {
        "wall_temperature_k": b.wall_temperature_k, "ambient_k": b.ambient_k,
        "sky_temperature_k": b.sky_temperature_k, "irradiance_w_m2": b.irradiance_w_m2,
        "absorptivity": b.absorptivity, "emissivity": b.emissivity, "wind_speed_m_s": b.wind_speed_m_s,
        "absorbed_w_m2": b.absorbed_w_m2, "convected_w_m2": b.convected_w_m2, "radiated_w_m2": b.radiated_w_m2,
        "h_convection_w_m2k": b.h_convection_w_m2k, "regime": b.regime, "orientation": b.orientation,
        "outside_diameter_m": d, "length_m": length, "dimensions_estimated": estimated,
        "ground_albedo": GROUND_ALBEDO, "residual_fraction": b.residual_fraction(),
        "notes": notes + list(b.notes),
    }
    return balance_dict, warnings


def fill_state_warning(scenario: str, t_exposure: float, t_fill: float) -> dict:
    """The warning where the fill temperature [K] is above the worst-case exposure temperature [K]."""
    return {"code": "fill-state-governs", "message":
            f"{scenario}: the worst-case gas temperature ({t_exposure - 273.15:.1f} °C) is below the fill "
            f"temperature ({t_fill - 273.15:.1f} °C); the fill state is screened, since the vessel held its fill "
            "pressure then."}


def screened_temperature(t_exposure, t_fill_given):
    """The temperature [K] a vessel is screened at: the worst-case exposure temperature, or the fill temperature
    where that is higher and was given (the vessel held its fill pressure then; cooling never hides an
    over-fill). Scalars or arrays (NaN: no fill temperature given)."""
    if t_fill_given is None:
        return t_exposure
    return np.fmax(t_exposure, t_fill_given) if isinstance(t_exposure, np.ndarray) else max(t_exposure, t_fill_given)


#: A scenario's summary laid out from its fields: the result's fields it repeats in a dict, then its own
#: (result.json_record: the keys' order is result.py's).
_SUMMARY = json_record(ScenarioSummary, (), ("name", "exposure", "models", "governing"),
                       ("verdict", "reasons", "worst_case_temperature_k", "worst_case_basis", "peak_pressure_pa",
                        "nominal_peak_pressure_pa", "governing_model", "margin_fraction", "relief_margin_fraction",
                        "limits", "tolerance"))


def scenario_summary(name: str, r: dict, exposure: dict | None, governing: bool) -> dict:
    """A scenario's summary under a result's "scenarios" (fold_scenarios)."""
    return _SUMMARY(r, name, exposure, {n: {"applicable": m["applicable"], "peak_pressure_pa": m["peak_pressure_pa"]}
                                        for n, m in r["models"].items()}, governing)


def _rank(r: dict) -> tuple:
    margin = r["margin_fraction"]
    return (Verdict(r["verdict"]).severity, -(margin if margin is not None else -math.inf))


def screen_states(case: Case, *, curves: bool = True) -> Result:
    """The engine's state-by-state route: one vessel screened scenario by scenario with the scalar models
    (the governing scenario's result, SI, pressures absolute, every scenario side by side under "scenarios").
    :func:`screening.engine.screen_cases` takes this route for the rows its columns do not take (mixtures,
    dissolved gases, rows near a model's range edge…); use :func:`screening.engine.screen_case` to screen a
    vessel. `curves`: compute the plot data ("curves", "phase_diagram"); None where False."""
    per: list[tuple[str, dict, dict | None]] = []
    with case_budget():   # a mixture's phase checks share one time bound per screening
        for sc in case.scenarios:
            warnings: list[dict] = []
            if case.fill_temperature_k is None:
                warnings.append({"code": "fill-temperature-assumed", "message":
                                 f"No fill temperature given: {DEFAULT_MASS_FILL_TEMPERATURE_K - 273.15:.0f} °C "
                                 "is assumed to describe the fill state; the peak pressure does not depend on it."})
            t_peak, basis, balance = _worst_case_temperature(case, sc, warnings)
            per.append((sc.name, _screen_at(case, t_peak, basis, warnings), balance))
    plots = [r.pop("_plot") for _, r, _ in per]
    ranked, result = fold_scenarios(per)
    if curves:
        result["curves"], result["phase_diagram"] = plots[ranked]()
    return Result.from_json(result)


def plot_data(case: Case, r: Result) -> tuple[dict | None, dict | None]:
    """(curves, phase diagram) of a finished result of `case` as JSON data: the models' isochores at the
    governing scenario's fill and worst-case temperatures on :func:`curve_temperatures`' grid, the governing
    model at the bounding tolerance corner where there is one, and the fluid's vapour-pressure curve. The
    one place plot data are computed, for a single screening and for a batch's detail rows alike."""
    t_fill, t_peak = r.fill.temperature_k, r.worst_case_temperature_k
    tol = r.tolerance
    with case_budget():
        fs, models = _result_isochores(case, r)
        if models is None:
            fs, models, _ = _evaluate(case, t_fill, t_peak, [])
        bounding = None
        if tol is not None and tol.bounding_peak_pressure_pa is not None:
            c = tol.bounding_corner
            bounding = _corner_model(case, (c.fill_pressure_pa, c.fill_temperature_k, c.worst_case_temperature_k))
        return (_curves(models, t_fill, t_peak, {"max_gas_temperature_k": r.limits.max_gas_temperature_k}, bounding),
                _phase_diagram(fs))


def _result_isochores(case: Case, r: Result) -> tuple[FillState, list[Model] | None]:
    """The models' isochores of a finished result of a pure fluid (not a mixture, a blend or a dissolved gas),
    from the fill densities the result holds (each model's `fill_molar_density_mol_m3`, the density its
    isochore runs at), built by the same functions as the models' own (_ideal_isochore_array,
    _lk_isochore_array, _srk_isochore_array, _reference_isochore_points): the fill state and the models are not
    evaluated a second time for the plot. (FillState with the fluid, None) where plot_data must evaluate them."""
    fluid, _err = _reference_fluid(case.gas)
    fs = FillState(fluid=fluid)
    if not case.gas.is_pure or case.gas.kind == "dissolved" or fluid is None or fluid.is_mixture:
        return fs, None
    models: list[Model] = []
    for name, m in r.models.items():
        rho = m.fill_molar_density_mol_m3
        if not m.applicable or rho is None:
            models.append(not_applicable(name, m.note))
            continue
        if name == "ideal":
            whole = _ideal_isochore_array(rho)
        elif name == "generalized":
            if m.method == QUANTUM_SRK_METHOD:
                g = case.gas.components[0]
                whole = _srk_isochore_array((g.classical_critical_temperature, g.classical_critical_pressure,
                                             g.molar_mass), rho)
            else:
                whole = _lk_isochore_array(_gas_arrays(case.gas), rho)
        else:
            whole = _reference_isochore_points(fluid, rho)

        def isochore(t: float, whole=whole) -> float:
            return float(whole(np.array([t]))[0])
        models.append(Model(name, True, m.note, m.peak_pressure_pa, rho, isochore=isochore, isochore_array=whole,
                            extra={"fluid": m.fluid} if m.fluid else {}))
    return fs, models


def fold_scenarios(per: list[tuple[str, dict, dict | None]]) -> tuple[int, dict]:
    """(index, result) of the governing scenario among per = [(name, result, energy balance or None)] (the worst
    by _rank), its result with every scenario side by side under "scenarios", the governing scenario's name
    and exposure, the reason naming it where there are several, and every scenario's warnings once."""
    ranked = 0 if len(per) == 1 else max(range(len(per)), key=lambda i: _rank(per[i][1]))
    name, result, balance = per[ranked]
    result = dict(result)
    result["scenarios"] = [scenario_summary(n, r, b, i == ranked) for i, (n, r, b) in enumerate(per)]
    result["governing_scenario"] = name
    result["exposure"] = balance
    if len(per) > 1:
        result["reasons"] = [f"Scenario '{name}' governs (the worst of {len(per)})."] + result["reasons"]
        seen = {w["message"] for w in result["warnings"]}
        for _, r, _ in per:
            for w in r["warnings"]:
                if w["message"] not in seen:
                    result["warnings"].append(w)
                    seen.add(w["message"])
    return ranked, result
