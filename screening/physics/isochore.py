"""Phase along an isochore (fixed molar density) of a pure fluid, for a closed rigid tank being heated.

A liquefied-gas fill with density above the critical density follows the vapour pressure until the
expanding liquid fills the vessel (liquid-full temperature: the saturated-liquid density equals the fill
density); beyond it the pressure climbs steeply along the compressed-liquid isochore. A fill below the
critical density leaves the dome at the dry-out temperature (saturated-vapour density equals the fill
density) and continues as a gas.

Units: [K], [Pa], [mol/m3], [Pa/K].
"""

from __future__ import annotations

from dataclasses import dataclass

from screening.errors import NotApplicable
from screening.physics.eos.reference import MODEL, ReferenceFluid
from screening.physics.roots import brentq

#: Within this distance [K] of the critical temperature the dome boundary is reported as near-critical.
NEAR_CRITICAL_BAND = 0.5

#: Step [K] above the liquid-full temperature at which the compressed-liquid dP/dT is evaluated.
LIQUID_FULL_STEP = 0.01

#: Closest approach [K] to Tc used for saturation calls in root finding.
_TC_GAP = 1e-4


@dataclass(frozen=True)
class IsochorePhases:
    """Phases along one isochore between the fill and the peak temperature.

    liquid_full_temperature [K]: for rho_fill > rho_c, where the saturated-liquid density equals the fill.
    dry_out_temperature [K]: for rho_fill < rho_c, where the saturated-vapour density equals the fill.
    Both are properties of the isochore (reported whenever it meets the dome above the triple point),
    whether or not they lie between t_fill and t_peak.
    crossing_pressure [Pa]: vapour pressure where the isochore leaves the dome.
    dp_dt_after_liquid_full [Pa/K]: (dP/dT)_rho just above the liquid-full temperature.
    near_critical: the boundary lies within NEAR_CRITICAL_BAND of Tc (values there are sensitive).
    """

    molar_density: float
    fill_phase: str
    peak_phase: str
    liquid_full_temperature: float | None
    dry_out_temperature: float | None
    crossing_pressure: float | None
    dp_dt_after_liquid_full: float | None
    near_critical: bool = False
    note: str = ""


def _require_pure(fluid: ReferenceFluid) -> None:
    if fluid.is_mixture or fluid.is_pseudo_pure:
        raise NotApplicable(MODEL, f"isochore phase analysis is for pure fluids; {fluid.label} is not one",
                            value=fluid.label)


def max_liquid_density(fluid: ReferenceFluid) -> float:
    """Saturated-liquid density at the triple point [mol/m3]: no liquefied-gas fill can be denser."""
    _require_pure(fluid)
    return fluid.saturated_liquid_density(fluid.triple_temperature)


def _boundary(fluid: ReferenceFluid, rho: float) -> tuple[str | None, float | None, bool]:
    """(kind, temperature [K], near_critical) where the isochore leaves the dome; kind None if it never meets it."""
    tt, tc, rc = fluid.triple_temperature, fluid.critical_temperature, fluid.critical_molar_density
    t_hi = tc - _TC_GAP
    if rho > rc:
        f = lambda T: fluid.saturated_liquid_density(T) - rho  # noqa: E731  decreasing in T
        kind = "liquid-full"
        f_lo = f(tt)
        if f_lo < 0.0:
            raise NotApplicable(MODEL, f"fill density {rho:.6g} mol/m3 of {fluid.label} is above the saturated-"
                                f"liquid density at the triple point ({f_lo + rho:.6g} mol/m3); no fill of the "
                                "liquefied gas reaches it — check the input", value=rho,
                                valid_range=f"<= {f_lo + rho:.6g} mol/m3")
    else:
        f = lambda T: fluid.saturated_vapour_density(T) - rho  # noqa: E731  increasing in T
        kind = "dry-out"
        if f(tt) > 0.0:
            return None, None, False  # vapour at the triple point is already denser: never in the dome
    f_hi = f(t_hi)
    if f_hi == 0.0:
        return kind, t_hi, True
    if (f(tt) > 0) == (f_hi > 0):
        # the root lies in the last _TC_GAP below Tc: the isochore passes (practically) through the critical point
        return kind, tc, True
    t = brentq(f, tt, t_hi, xtol=1e-9, rtol=1e-13, maxiter=200)
    return kind, float(t), (tc - t) < NEAR_CRITICAL_BAND


def isochore_phases(fluid: ReferenceFluid, molar_density: float, t_fill: float, t_peak: float) -> IsochorePhases:
    """Phases at fill and peak and where the isochore at molar_density [mol/m3] leaves the dome."""
    _require_pure(fluid)
    rho = float(molar_density)
    if not rho > 0.0:
        raise NotApplicable(MODEL, "molar density must be positive", value=molar_density, valid_range="> 0")
    kind, t_b, near = _boundary(fluid, rho)
    fill_phase = fluid.phase(rho, t_fill)
    peak_phase = fluid.phase(rho, t_peak)
    lf = do = p_cross = dpdt = None
    note = ""
    if kind is not None:
        tc = fluid.critical_temperature
        p_cross = fluid.critical_pressure if t_b >= tc else fluid.vapour_pressure(t_b)
        if kind == "liquid-full":
            lf = t_b
            dpdt = fluid.dp_dt_at_constant_density(rho, t_b + LIQUID_FULL_STEP)
        else:
            do = t_b
        if near:
            note = (f"the isochore leaves the dome within {NEAR_CRITICAL_BAND} K of the critical temperature "
                    f"({tc:.6g} K): a near-critical fill, boundary temperature and slope are sensitive to the "
                    "fill density")
    return IsochorePhases(rho, fill_phase, peak_phase, lf, do, p_cross, dpdt, near, note)


def temperature_at_pressure_on_isochore(fluid: ReferenceFluid, molar_density: float, p_target: float,
                                        t_lo: float, t_hi: float) -> float:
    """Temperature [K] in [t_lo, t_hi] where pressure(molar_density, T) = p_target [Pa].

    For a pure fluid the bracket is split at the liquid-full / dry-out temperature (kink of the isochore).
    Raises NotApplicable if no root is in the bracket.
    """
    rho, p_target, t_lo, t_hi = float(molar_density), float(p_target), float(t_lo), float(t_hi)
    if not t_hi > t_lo:
        raise NotApplicable(MODEL, "temperature bracket must have t_hi > t_lo", value=(t_lo, t_hi))
    edges = [t_lo, t_hi]
    if not (fluid.is_mixture or fluid.is_pseudo_pure):
        _, t_b, _ = _boundary(fluid, rho)
        if t_b is not None and t_lo < t_b < t_hi:
            edges = [t_lo, t_b, t_hi]
    g = lambda T: fluid.pressure(rho, T) - p_target  # noqa: E731
    values = [g(t) for t in edges]
    for (a, b), (ga, gb) in zip(zip(edges[:-1], edges[1:]), zip(values[:-1], values[1:])):
        if ga == 0.0:
            return a
        if gb == 0.0:
            return b
        if (ga < 0) != (gb < 0):
            return float(brentq(g, a, b, xtol=1e-9, rtol=1e-13, maxiter=200))
    raise NotApplicable(MODEL, f"{fluid.label} at {rho:.6g} mol/m3 does not reach {p_target:.6g} Pa between "
                        f"{t_lo:.6g} K and {t_hi:.6g} K", value=p_target,
                        valid_range=f"{values[0] + p_target:.6g} Pa to {values[-1] + p_target:.6g} Pa")
