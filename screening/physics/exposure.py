"""Worst-case wall (and gas) temperature of a cylinder standing or lying in the sun.

Steady energy balance on the lateral surface of a cylinder of outside diameter D and length L
(all fluxes per m2 of the lateral surface A = pi*D*L):

    absorbed = convected + radiated

    absorbed  = alpha * G * A_proj / A  +  alpha * rho_g * G * F_g            [W/m2]
    convected = h * (T_w - T_a)                                               [W/m2]
    radiated  = eps * sigma * [F_s (T_w^4 - T_sky^4) + F_g (T_w^4 - T_g^4)]   [W/m2]

Readings chosen (each is also recorded in `EnergyBalance.notes`):

* Sun: beam irradiance G on the projected area. Horizontal cylinder: the sun is perpendicular to
  the axis (overhead), A_proj = D*L, the largest shadow a cylinder can cast, hence the
  conservative orientation; A_proj/A = 1/pi. Vertical cylinder: the largest shadow over all
  sun elevations, A_proj = sqrt((D*L)^2 + (pi*D^2/4)^2) (side plus top end).
* Ends: treated as adiabatic, they neither convect nor radiate (conservative: less loss).
* Long-wave: the lateral surface of a horizontal cylinder resting on (tangent to) flat ground,
  and of a vertical cylinder standing on it, sees half sky and half ground, F_s = F_g = 1/2
  (infinite ground, no nearby walls). Sky at the Swinbank (1963) clear-sky temperature, ground
  at the ambient air temperature unless given (sunlit ground is hotter: give it if known).
  Sky and ground are black; the wall is grey with emissivity eps.
* Ground-reflected solar: rho_g = 0 by default in this function (the screening passes 0.2,
  GROUND_ALBEDO in screen.py); a typical ground albedo of 0.2 adds about 30 % to the absorbed flux
  of a horizontal cylinder -- pass `ground_albedo`.
* Convection: natural convection (Churchill & Chu 1975) in still air; forced convection in
  cross-flow (Churchill & Bernstein 1977) with wind perpendicular to the axis; both combined by
  Churchill's (1977) rule h^n = h_F^n + h_N^n with n = 4 (transverse flow over cylinders, after
  Incropera et al. 2007, Sec. 9.9; not independently checked here). Default wind 0: still air is the conservative
  case. Air properties from CoolProp "Air" at the film temperature and 1 atm.
* The gas is taken at the wall temperature (thermal mass and internal resistance ignored: the
  steady wall temperature is the upper bound of the gas temperature).
* Floor: with little or no sun the sky can pull the wall BELOW ambient (night-time radiative
  cooling). For screening the worst case is never below ambient: the reported wall temperature
  is max(ambient, solved) and a note says so; the fluxes stay those of the solved balance.

Sources: Churchill, S. W. & Chu, H. H. S., Int. J. Heat Mass Transfer 18 (1975) 1049-1053
(horizontal cylinder) and 1323-1329 (vertical plate); Churchill, S. W. & Bernstein, M.,
J. Heat Transfer 99 (1977) 300-306; Churchill, S. W., AIChE J. 23 (1977) 10-16 (combining free
and forced convection); Swinbank, W. C., Q. J. R. Meteorol. Soc. 89 (1963) 339-348; Incropera,
DeWitt, Bergman & Lavine (2007), Fundamentals of Heat and Mass Transfer, 6th ed., Wiley. Values
quoted from these textbooks here are not independently checked (no readable copy at hand).
Correlations are evaluated with Caleb Bell's `ht` library, imported where used (only a case with the sun's
energy balance needs it); air properties with CoolProp.
"""

from __future__ import annotations

import difflib
import math
import threading
import tomllib
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

import CoolProp
import CoolProp.CoolProp as CP

from screening.constants import G0, P_STANDARD_ATMOSPHERE, STEFAN_BOLTZMANN
from screening.errors import InputError, NotApplicable
from screening.physics.eos import coolprop_library
from screening.physics.roots import brentq

__all__ = [
    "DEFAULT_IRRADIANCE",
    "DEFAULT_ASPECT_RATIO",
    "WALL_ALLOWANCE_FRACTION",
    "MIXED_CONVECTION_EXPONENT",
    "Finish",
    "finishes",
    "finish",
    "estimate_dimensions",
    "sky_temperature",
    "AirProperties",
    "air_properties",
    "natural_nusselt",
    "forced_nusselt",
    "mixed_nusselt",
    "EnergyBalance",
    "solar_wall_temperature",
]

#: Design irradiance [W/m2]. Rule of thumb: clear-sky peak solar irradiance at sea level with the
#: sun high, about 1000 W/m2 (it is also the reference irradiance of the photovoltaic standard test
#: conditions, IEC 60904-3). Applied as beam irradiance normal to the projected area.
DEFAULT_IRRADIANCE = 1000.0

#: Assumed inside length / inside diameter of a cylinder when the case gives no dimensions [-].
#: Common practice, not independently checked here (used only when the case gives no dimensions, and
#: the report then says the dimensions are estimated): a 50 L industrial cylinder is about 229 mm OD x
#: 1.4 m; 6.5 puts
#: `estimate_dimensions(0.050)` at 0.227 m x 1.40 m.
DEFAULT_ASPECT_RATIO = 6.5

#: Wall allowance: wall thickness as a fraction of the inside diameter, added on every side [-].
#: Common practice, not independently checked here (used only with estimated dimensions): seamless
#: steel industrial cylinders have walls of ~5-7 mm at
#: ~220 mm bore, i.e. about 3 % of the bore.
WALL_ALLOWANCE_FRACTION = 0.03

#: Exponent n of the mixed-convection rule Nu^n = Nu_F^n + Nu_N^n [-]. Churchill (1977) proposed
#: the form; Incropera et al. (2007), Sec. 9.9, state (not independently checked here) that n = 3 fits vertical geometries
#: best and 3.5 / 4 suit transverse flow over horizontal plates / cylinders. The wind here crosses
#: the cylinder transversely to the buoyant flow in both orientations, so n = 4. A larger n also
#: gives the smaller combined h, i.e. the hotter (conservative) wall.
MIXED_CONVECTION_EXPONENT = 4.0

#: View factors of the lateral surface to sky and to ground [-] (cylinder on infinite flat ground).
VIEW_FACTOR_SKY = 0.5
VIEW_FACTOR_GROUND = 0.5

#: Rayleigh-number ranges of the natural-convection correlations [-].
#: Horizontal cylinder, Churchill & Chu (1975): lower limit 1e-5 (authors), upper 1e12
#: (Incropera et al. 6th ed., eq. 9.34). Vertical plate, Churchill & Chu (1975): 1e-1 .. 1e12
#: (not independently checked here; Incropera et al. 2007, eq. 9.26, apply it "over the entire range").
RA_RANGE_HORIZONTAL = (1e-5, 1e12)
RA_RANGE_VERTICAL = (1e-1, 1e12)

#: Churchill & Bernstein (1977) apply for Re_D * Pr > 0.2 (Incropera et al. 6th ed., eq. 7.54).
RE_PR_MIN_CHURCHILL_BERNSTEIN = 0.2

#: Ambient range accepted by the Swinbank (1963) sky correlation [K]. Swinbank gives no strict
#: range; -50 degC .. +50 degC is this module's engineering judgement, not the source's. The upper
#: end is forced by the formula itself: 0.0552 T^1.5 = T at T = (1/0.0552)^2 = 328.2 K (55 degC),
#: above which it would put a clear sky warmer than the air. Hotter air: give sky_temperature_k.
SWINBANK_RANGE_K = (223.15, 323.15)

#: Highest wall temperature the solver searches up to [K] (CoolProp's air-property range ~2000 K).
_T_WALL_MAX_K = 2000.0

_DATA = Path(__file__).with_name("data") / "finishes.toml"


# --------------------------------------------------------------------------- finishes


@dataclass(frozen=True)
class Finish:
    """A named surface finish.

    absorptivity: solar absorptivity [-]; emissivity: long-wave emissivity near ambient [-];
    source: where the numbers come from.
    """

    name: str
    absorptivity: float
    emissivity: float
    source: str
    label: str = ""


@lru_cache(maxsize=1)
def _load_finishes() -> tuple[Finish, ...]:
    with open(_DATA, "rb") as fh:
        table = tomllib.load(fh)
    out = []
    for name, row in table["finish"].items():
        for key in ("absorptivity", "emissivity"):
            v = row[key]
            if not (isinstance(v, (int, float)) and 0.0 <= v <= 1.0):
                raise InputError(
                    "finish property out of range", file=str(_DATA), key=f"finish.{name}.{key}",
                    given=v, expected="a number between 0 and 1",
                )
        out.append(Finish(name, float(row["absorptivity"]), float(row["emissivity"]),
                          row["source"], row.get("label", "")))
    return tuple(out)


def finishes() -> dict[str, Finish]:
    """All finishes of `data/finishes.toml`, by name.

    >>> finishes()["black_paint"].absorptivity
    0.98
    """
    return {f.name: f for f in _load_finishes()}


def finish(name: str) -> Finish:
    """The finish called `name`; InputError naming the closest names if unknown.

    >>> finish("white_paint").emissivity
    0.9
    """
    table = finishes()
    if name in table:
        return table[name]
    close = difflib.get_close_matches(str(name), list(table), n=3, cutoff=0.4)
    hint = ("; closest names: " + ", ".join(close)) if close else ""
    raise InputError(f"unknown finish '{name}'{hint}", key="finish", given=name,
                     expected="one of: " + ", ".join(sorted(table)))


# --------------------------------------------------------------------------- checks


def _finite(value: object, key: str, expected: str) -> float:
    try:
        x = float(value)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        raise InputError(f"{key} is not a number", key=key, given=value, expected=expected) from None
    if not math.isfinite(x):
        raise InputError(f"{key} is not finite", key=key, given=value, expected=expected)
    return x


def _positive(value: object, key: str, unit: str) -> float:
    x = _finite(value, key, f"a positive number [{unit}]")
    if x <= 0.0:
        raise InputError(f"{key} must be positive", key=key, given=value, expected=f"> 0 [{unit}]")
    return x


def _non_negative(value: object, key: str, unit: str) -> float:
    x = _finite(value, key, f"a number >= 0 [{unit}]")
    if x < 0.0:
        raise InputError(f"{key} must not be negative", key=key, given=value, expected=f">= 0 [{unit}]")
    return x


def _fraction(value: object, key: str) -> float:
    x = _finite(value, key, "a number between 0 and 1")
    if not 0.0 <= x <= 1.0:
        raise InputError(f"{key} must lie between 0 and 1", key=key, given=value,
                         expected="0 <= value <= 1")
    return x


# --------------------------------------------------------------------------- geometry, sky, air


def estimate_dimensions(water_capacity_m3: float, aspect_ratio: float = DEFAULT_ASPECT_RATIO
                        ) -> tuple[float, float]:
    """Outside diameter and length [m] of a cylinder of the given water capacity [m3].

    Used when the case does not give the dimensions. The inside is read as a right circular
    cylinder of inside diameter d and inside length ``aspect_ratio * d`` (the domed heads folded
    into the length): V = pi/4 * aspect_ratio * d^3. The outside adds a wall of
    ``WALL_ALLOWANCE_FRACTION * d`` on every side: D = d (1 + 2f), L = aspect_ratio*d + 2 f d.
    Rules of thumb (see DEFAULT_ASPECT_RATIO, WALL_ALLOWANCE_FRACTION); valve and foot ring
    are not included.

    >>> D, L = estimate_dimensions(0.050)
    >>> round(D, 3), round(L, 2)
    (0.227, 1.4)
    """
    v = _positive(water_capacity_m3, "water_capacity_m3", "m3")
    a = _positive(aspect_ratio, "aspect_ratio", "-")
    d = (4.0 * v / (math.pi * a)) ** (1.0 / 3.0)
    t = WALL_ALLOWANCE_FRACTION * d
    return d + 2.0 * t, a * d + 2.0 * t


def sky_temperature(ambient_k: float) -> float:
    """Clear-sky effective radiating temperature [K] from the screen air temperature [K].

    Swinbank, W. C. (1963), "Long-wave radiation from clear skies", Q. J. R. Meteorol. Soc. 89,
    339-348; as given in Duffie, J. A. & Beckman, W. A. (2013), Solar Engineering of Thermal
    Processes, 4th ed., Wiley, Sec. 3.9 (not independently checked here):
    T_sky = 0.0552 * T_a^1.5   (both in K).
    Clear skies only. Cloud raises T_sky towards T_a and so makes the wall hotter: under a
    partly cloudy sky with the sun still out the clear-sky value is not the conservative one
    (pass sky_temperature_k = ambient to bound it). NotApplicable outside SWINBANK_RANGE_K
    (the formula crosses T_sky = T_a at 328.2 K).

    >>> round(sky_temperature(300.0), 2)
    286.83
    """
    t = _positive(ambient_k, "ambient_k", "K")
    lo, hi = SWINBANK_RANGE_K
    if not lo <= t <= hi:
        raise NotApplicable("Swinbank (1963) clear-sky temperature", "ambient outside the accepted range",
                            value=t, valid_range=f"{lo} K .. {hi} K")
    return 0.0552 * t**1.5


@dataclass(frozen=True)
class AirProperties:
    """Dry air at one temperature and 1 atm: k [W/(m K)], nu [m2/s], Pr [-], beta [1/K]."""

    temperature_k: float
    conductivity_w_mk: float
    kinematic_viscosity_m2_s: float
    prandtl: float
    expansion_1_k: float


@lru_cache(maxsize=4096)
def air_properties(temperature_k: float, pressure_pa: float = P_STANDARD_ATMOSPHERE) -> AirProperties:
    """Properties of dry air from CoolProp's "Air" (Lemmon et al. 2000 equation of state,
    Lemmon & Jacobsen 2004 transport). Expansion coefficient of the ideal gas, beta = 1/T
    (Incropera et al. 6th ed., Sec. 9.1). Valid ~60 K .. 2000 K.

    >>> round(air_properties(300.0).prandtl, 3)
    0.707
    """
    t, p = float(temperature_k), float(pressure_pa)
    # one state updated once and read four times: the values of PropsSI("L" / "V" / "D" / "Prandtl", "T", t,
    # "P", p, "Air"), bit for bit, at a fortieth of the cost (a sunlit row's balance needs about ten of them)
    with _AIR_LOCK:
        state = _air_state()
        state.update(CoolProp.PT_INPUTS, p, t)
        k, mu, rho, pr = state.conductivity(), state.viscosity(), state.rhomass(), state.Prandtl()
    return AirProperties(t, k, mu / rho, pr, 1.0 / t)


_AIR_LOCK = threading.Lock()     # held around every use of the one air state
_AIR: list = []                  # the one CoolProp state of air, made on first use


def _air_state():
    """The one CoolProp state of air of this process (call with _AIR_LOCK held)."""
    if not _AIR:
        coolprop_library.use(("Air",))   # whole before its first state (see coolprop_library)
        _AIR.append(CP.AbstractState("HEOS", "Air"))
    return _AIR[0]


# --------------------------------------------------------------------------- correlations


def natural_nusselt(rayleigh: float, prandtl: float, orientation: str = "horizontal") -> float:
    """Natural-convection Nusselt number of an isothermal cylinder [-].

    horizontal: Churchill & Chu (1975) horizontal cylinder, Nu_D, Ra_D in RA_RANGE_HORIZONTAL
        Nu_D = [0.60 + 0.387 Ra_D^(1/6) / (1 + (0.559/Pr)^(9/16))^(8/27)]^2
    vertical:   Churchill & Chu (1975) vertical plate, Nu_L, Ra_L in RA_RANGE_VERTICAL
        Nu_L = [0.825 + 0.387 Ra_L^(1/6) / (1 + (0.492/Pr)^(9/16))^(8/27)]^2
      (a vertical cylinder behaves as a plate when D/L >= 35 / Gr_L^(1/4), Incropera et al. 6th ed.
      eq. 9.33; a thinner one transfers more, so the plate value is the conservative one).
    Evaluated with `ht`. NotApplicable outside the Rayleigh range.

    >>> round(natural_nusselt(1e7, 0.7), 2)
    28.2
    """
    from ht.conv_free_immersed import Nu_horizontal_cylinder_Churchill_Chu, Nu_vertical_plate_Churchill

    ra = _non_negative(rayleigh, "rayleigh", "-")
    pr = _positive(prandtl, "prandtl", "-")
    if orientation == "horizontal":
        lo, hi = RA_RANGE_HORIZONTAL
        model, fn = "Churchill-Chu horizontal cylinder", Nu_horizontal_cylinder_Churchill_Chu
    elif orientation == "vertical":
        lo, hi = RA_RANGE_VERTICAL
        model, fn = "Churchill-Chu vertical plate", Nu_vertical_plate_Churchill
    else:
        raise InputError("unknown orientation", key="orientation", given=orientation,
                         expected="'horizontal' or 'vertical'")
    if not lo <= ra <= hi:
        raise NotApplicable(model, "Rayleigh number outside the correlation's range", value=ra,
                            valid_range=f"{lo:g} <= Ra <= {hi:g}")
    return fn(Pr=pr, Gr=ra / pr)


def forced_nusselt(reynolds: float, prandtl: float) -> float:
    """Cross-flow Nusselt number of a circular cylinder, Churchill & Bernstein (1977) [-]:

        Nu_D = 0.3 + 0.62 Re^(1/2) Pr^(1/3) / [1 + (0.4/Pr)^(2/3)]^(1/4)
                     * [1 + (Re/282000)^(5/8)]^(4/5)

    valid for Re_D * Pr > 0.2 (Incropera et al. 6th ed., eq. 7.54), properties at the film
    temperature. Evaluated with `ht`. NotApplicable below that.

    >>> round(forced_nusselt(1e4, 0.7), 2)
    53.33
    """
    from ht.conv_external import Nu_cylinder_Churchill_Bernstein

    re = _non_negative(reynolds, "reynolds", "-")
    pr = _positive(prandtl, "prandtl", "-")
    if re * pr <= RE_PR_MIN_CHURCHILL_BERNSTEIN:
        raise NotApplicable("Churchill-Bernstein cylinder in cross-flow", "Re*Pr too small (use wind 0 "
                            "for still air)", value=re * pr,
                            valid_range=f"Re*Pr > {RE_PR_MIN_CHURCHILL_BERNSTEIN}")
    return Nu_cylinder_Churchill_Bernstein(Re=re, Pr=pr)


def mixed_nusselt(nu_forced: float, nu_natural: float, n: float = MIXED_CONVECTION_EXPONENT) -> float:
    """Combined free and forced convection, Churchill (1977), assisting/transverse flow [-]:

        Nu^n = Nu_F^n + Nu_N^n    (n = 4 for transverse flow over cylinders; see the constant)

    Both Nusselt numbers must share one length scale.

    >>> mixed_nusselt(3.0, 4.0)
    4.284572294953817
    """
    f = _non_negative(nu_forced, "nu_forced", "-")
    b = _non_negative(nu_natural, "nu_natural", "-")
    return (f**n + b**n) ** (1.0 / n)


# --------------------------------------------------------------------------- balance


@dataclass(frozen=True)
class EnergyBalance:
    """Steady energy balance of the sunlit cylinder. Fluxes [W/m2] per m2 of the lateral surface.

    wall_temperature_k is the screening value, max(ambient, solved_wall_temperature_k); the
    fluxes, h, Nu, Ra and Re belong to the solved balance (so absorbed = convected + radiated).
    nusselt is h*D/k (diameter based in both orientations); rayleigh is the one the natural
    correlation used (Ra_D horizontal, Ra_L vertical); reynolds is V*D/nu (0 in still air).
    """

    wall_temperature_k: float
    ambient_k: float
    sky_temperature_k: float
    irradiance_w_m2: float
    absorptivity: float
    emissivity: float
    wind_speed_m_s: float
    absorbed_w_m2: float
    convected_w_m2: float
    radiated_w_m2: float
    h_convection_w_m2k: float
    nusselt: float
    rayleigh: float
    reynolds: float
    regime: str
    projected_to_surface_ratio: float
    notes: tuple[str, ...]
    solved_wall_temperature_k: float = math.nan
    ground_temperature_k: float = math.nan
    ground_albedo: float = 0.0
    orientation: str = "horizontal"
    outside_diameter_m: float = math.nan
    length_m: float = math.nan

    def residual_fraction(self) -> float:
        """|absorbed - convected - radiated| / scale [-].

        scale is the largest of |absorbed|, |convected|, |radiated|. When convection and radiation
        both carry heat away (the sunlit case) that is `absorbed`, i.e. the fraction is
        |absorbed - convected - radiated| / absorbed; with little or no sun (sky cooling, one flux
        negative) dividing by a vanishing `absorbed` would say nothing, hence the larger scale.
        0.0 if every flux is zero.
        """
        res = abs(self.absorbed_w_m2 - self.convected_w_m2 - self.radiated_w_m2)
        scale = max(abs(self.absorbed_w_m2), abs(self.convected_w_m2), abs(self.radiated_w_m2))
        return 0.0 if scale == 0.0 else res / scale


@dataclass(frozen=True)
class _Convection:
    h: float
    nusselt: float
    rayleigh: float
    reynolds: float
    natural_share: float
    thin_vertical: bool


def _convection(t_wall: float, t_amb: float, wind: float, d: float, length: float,
                orientation: str) -> _Convection:
    """h [W/(m2 K)] at the film temperature, the correlations evaluated with their range checks (the
    final state of the balance; inside the root search :func:`_convection_h` evaluates h without them)."""
    from ht.conv_free_immersed import Nu_horizontal_cylinder_Churchill_Chu, Nu_vertical_plate_Churchill

    air = air_properties(0.5 * (t_wall + t_amb))
    k, nu, pr = air.conductivity_w_mk, air.kinematic_viscosity_m2_s, air.prandtl
    l_nat = d if orientation == "horizontal" else length
    gr = G0 * air.expansion_1_k * abs(t_wall - t_amb) * l_nat**3 / nu**2
    ra = gr * pr
    if ra > 0.0:
        nu_n = natural_nusselt(ra, pr, orientation)
    else:
        fn = (Nu_horizontal_cylinder_Churchill_Chu if orientation == "horizontal"
              else Nu_vertical_plate_Churchill)
        nu_n = fn(Pr=pr, Gr=gr)
    h_n = nu_n * k / l_nat
    re = wind * d / nu
    if wind > 0.0:
        h_f = forced_nusselt(re, pr) * k / d
    else:
        h_f = 0.0
    n = MIXED_CONVECTION_EXPONENT
    h = (h_f**n + h_n**n) ** (1.0 / n)
    share = h_n**n / h**n if h > 0.0 else 1.0
    thin = orientation == "vertical" and gr > 0.0 and d / length < 35.0 / gr**0.25
    return _Convection(h, h * d / k, ra, re, share, thin)


def _convection_h(t_amb: float, wind: float, d: float, length: float, orientation: str):
    """t_wall [K] -> h [W/(m2 K)] at the film temperature, the correlations evaluated without their range
    checks: the function the root search calls (about ten times a balance), the arithmetic of
    :func:`_convection` step for step without building its record."""
    from ht.conv_external import Nu_cylinder_Churchill_Bernstein
    from ht.conv_free_immersed import Nu_horizontal_cylinder_Churchill_Chu, Nu_vertical_plate_Churchill

    natural = Nu_horizontal_cylinder_Churchill_Chu if orientation == "horizontal" else Nu_vertical_plate_Churchill
    l_nat = d if orientation == "horizontal" else length
    l_nat3 = l_nat**3
    n = MIXED_CONVECTION_EXPONENT
    root_n = 1.0 / n

    def h(t_wall: float) -> float:
        air = air_properties(0.5 * (t_wall + t_amb))
        k, nu, pr = air.conductivity_w_mk, air.kinematic_viscosity_m2_s, air.prandtl
        h_n = natural(Pr=pr, Gr=G0 * air.expansion_1_k * abs(t_wall - t_amb) * l_nat3 / nu**2) * k / l_nat
        h_f = Nu_cylinder_Churchill_Bernstein(Re=wind * d / nu, Pr=pr) * k / d if wind > 0.0 else 0.0
        return (h_f**n + h_n**n) ** root_n
    return h


def solar_wall_temperature(
    ambient_k: float,
    *,
    irradiance_w_m2: float = DEFAULT_IRRADIANCE,
    absorptivity: float,
    emissivity: float,
    wind_speed_m_s: float = 0.0,
    outside_diameter_m: float,
    length_m: float,
    orientation: str = "horizontal",
    sky_temperature_k: float | None = None,
    ground_temperature_k: float | None = None,
    ground_albedo: float = 0.0,
) -> EnergyBalance:
    """Steady wall temperature [K] of a cylinder in the sun, taken as the gas temperature.

    ambient_k [K] air temperature; irradiance_w_m2 [W/m2] beam irradiance normal to the sun;
    absorptivity, emissivity [-] (see `finish`); wind_speed_m_s [m/s] perpendicular to the axis;
    outside_diameter_m, length_m [m]; orientation "horizontal" (lying) or "vertical" (standing);
    sky_temperature_k [K] default Swinbank (1963); ground_temperature_k [K] default ambient;
    ground_albedo [-] solar reflectance of the ground, default 0 (not counted).
    Balance and readings: see the module docstring. Solved with scipy's brentq.
    Raises InputError for bad arguments, NotApplicable outside a correlation's range.

    >>> b = solar_wall_temperature(308.15, absorptivity=0.98, emissivity=0.98,
    ...                            outside_diameter_m=0.23, length_m=1.4)
    >>> 55.0 < b.wall_temperature_k - 273.15 < 70.0, b.regime, b.residual_fraction() < 1e-6
    (True, 'natural', True)
    """
    t_a = _positive(ambient_k, "ambient_k", "K")
    g = _non_negative(irradiance_w_m2, "irradiance_w_m2", "W/m2")
    alpha = _fraction(absorptivity, "absorptivity")
    eps = _fraction(emissivity, "emissivity")
    wind = _non_negative(wind_speed_m_s, "wind_speed_m_s", "m/s")
    d = _positive(outside_diameter_m, "outside_diameter_m", "m")
    length = _positive(length_m, "length_m", "m")
    rho_g = _fraction(ground_albedo, "ground_albedo")
    if orientation not in ("horizontal", "vertical"):
        raise InputError("unknown orientation", key="orientation", given=orientation,
                         expected="'horizontal' or 'vertical'")
    notes: list[str] = []
    if sky_temperature_k is None:
        t_sky = sky_temperature(t_a)
        notes.append(f"sky at the Swinbank (1963) clear-sky temperature {t_sky:.1f} K; a cloudy sky "
                     "is warmer and would make the wall hotter")
    else:
        t_sky = _positive(sky_temperature_k, "sky_temperature_k", "K")
        notes.append(f"sky temperature given: {t_sky:.1f} K")
    if ground_temperature_k is None:
        t_g = t_a
        notes.append("ground at the ambient air temperature; sunlit ground is hotter and would make "
                     "the wall hotter (a case cannot state a ground temperature: not conservative over hot paving)")
    else:
        t_g = _positive(ground_temperature_k, "ground_temperature_k", "K")
        notes.append(f"ground temperature given: {t_g:.1f} K")

    a_lat = math.pi * d * length
    if orientation == "horizontal":
        a_proj = d * length
        notes.append("sun perpendicular to the axis (overhead): projected area D*L, the conservative "
                     "orientation")
    else:
        a_proj = math.hypot(d * length, math.pi * d * d / 4.0)
        notes.append("sun at the elevation of the largest shadow: projected area "
                     "sqrt((D*L)^2 + (pi*D^2/4)^2)")
    ratio = a_proj / a_lat
    absorbed = alpha * g * ratio + alpha * rho_g * g * VIEW_FACTOR_GROUND
    if rho_g == 0.0:
        notes.append("ground-reflected sunlight not counted (ground_albedo 0); an albedo of 0.2 adds "
                     "about 30 % to the absorbed flux of a horizontal cylinder")
    else:
        notes.append(f"ground-reflected sunlight counted with albedo {rho_g:g} on the half of the "
                     "surface that sees the ground, ground irradiated at the full irradiance")
    notes.append("ends adiabatic: they neither absorb (horizontal), convect nor radiate")
    notes.append("long-wave exchange: half of the lateral surface sees the sky, half the ground")
    notes.append("gas temperature taken equal to the steady wall temperature (thermal mass ignored)")
    if wind > 0.0:
        notes.append("wind perpendicular to the axis; wind along the axis of a lying cylinder cools less")
    else:
        notes.append("still air (no wind): the conservative case")
    notes.append("air at 1 atm; at altitude thinner air convects less and the sun is stronger")

    def radiated(t: float) -> float:
        return eps * STEFAN_BOLTZMANN * (VIEW_FACTOR_SKY * (t**4 - t_sky**4)
                                         + VIEW_FACTOR_GROUND * (t**4 - t_g**4))

    h_of = _convection_h(t_a, wind, d, length, orientation)

    def residual(t: float) -> float:
        return absorbed - h_of(t) * (t - t_a) - radiated(t)

    t_lo = min(t_a, t_sky, t_g)
    if residual(t_lo) == 0.0:
        t_w = t_lo
    else:
        step, t_hi = 20.0, max(t_a, t_g) + 20.0
        while residual(t_hi) > 0.0:
            step *= 2.0
            t_hi = max(t_a, t_g) + step
            if t_hi > _T_WALL_MAX_K:
                raise NotApplicable("solar wall temperature", "wall temperature beyond the air-property "
                                    "range", value=t_hi, valid_range=f"< {_T_WALL_MAX_K} K")
        t_w = brentq(residual, t_lo, t_hi, xtol=1e-10, rtol=1e-14, maxiter=200)

    conv = _convection(t_w, t_a, wind, d, length, orientation)
    convected = conv.h * (t_w - t_a)
    rad = radiated(t_w)
    if conv.thin_vertical:
        notes.append("vertical cylinder thinner than D/L >= 35/Gr_L^(1/4): the plate correlation "
                     "underestimates h (conservative)")
    if wind == 0.0:
        regime = "natural"
    elif conv.natural_share > 0.9:
        regime = "natural"
    elif conv.natural_share < 0.1:
        regime = "forced"
    else:
        regime = "mixed"
    if wind > 0.0:
        notes.append(f"mixed-convection rule h^4 = h_F^4 + h_N^4; natural part {conv.natural_share:.0%} "
                     "of h^4 (regime 'natural' > 90 %, 'forced' < 10 %)")
    t_report = t_w
    if t_w < t_a:
        t_report = t_a
        notes.append(f"solved wall {t_w:.2f} K is below ambient (sky cooling); screening floor: wall "
                     "reported at ambient")
    return EnergyBalance(
        wall_temperature_k=t_report, ambient_k=t_a, sky_temperature_k=t_sky, irradiance_w_m2=g,
        absorptivity=alpha, emissivity=eps, wind_speed_m_s=wind, absorbed_w_m2=absorbed,
        convected_w_m2=convected, radiated_w_m2=rad, h_convection_w_m2k=conv.h, nusselt=conv.nusselt,
        rayleigh=conv.rayleigh, reynolds=conv.reynolds, regime=regime, projected_to_surface_ratio=ratio,
        notes=tuple(notes), solved_wall_temperature_k=t_w, ground_temperature_k=t_g,
        ground_albedo=rho_g, orientation=orientation, outside_diameter_m=d, length_m=length,
    )
