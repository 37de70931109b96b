"""Lee–Kesler three-parameter corresponding-states model of the compressibility factor.

A closed rigid tank keeps its mass and volume, so its molar density is fixed; the
screening asks for the pressure at that density and the worst-case temperature
(:func:`lee_kesler_pressure`) and, to fill the tank, for the density at the fill
pressure and temperature (:func:`lee_kesler_density`).

Model
-----
Reference: Lee, B. I.; Kesler, M. G. "A generalized thermodynamic correlation based on
three-parameter corresponding states." AIChE J. 1975, 21 (3), 510–527,
doi:10.1002/aic.690210313 (called LK below). Equation numbers are not independently checked
against the paper here (no copy at hand); the constants are those of LK Table 1, and the
correlation is tested against the reference equations of state (CoolProp) and `chemicals`.

* LK eq. (1), the interpolation between a simple fluid (0) and the reference fluid
  n-octane (r), both evaluated at the same (T_r, P_r)::

      Z = Z0 + (omega / omega_r) (Z_r - Z0),    omega_r = 0.3978

* LK eq. (2) with (3)–(5), a modified Benedict–Webb–Rubin equation in the reduced
  ideal volume V_r = P_c V / (R T_c), solved for each fluid::

      Z_i = P_r V_r / T_r = 1 + B/V_r + C/V_r^2 + D/V_r^5
                            + c4 / (T_r^3 V_r^2) (beta + gamma/V_r^2) exp(-gamma/V_r^2)
      B = b1 - b2/T_r - b3/T_r^2 - b4/T_r^3
      C = c1 - c2/T_r + c3/T_r^3
      D = d1 + d2/T_r

  The gas (vapour-like) root is taken: the largest V_r, i.e. the smallest reduced
  density 1/V_r.

* LK vapour-pressure equation (the LK paper's saturation relation, as reproduced in
  Reid, Prausnitz & Poling, The Properties of Gases and Liquids, 4th ed., 1987, eq. 7-2.6,
  equation number not independently checked here)::

      ln P_r,sat = f0(T_r) + omega f1(T_r)
      f0 = 5.92714 - 6.09648/T_r - 1.28862 ln T_r + 0.169347 T_r^6
      f1 = 15.2518 - 15.6875/T_r - 13.4721 ln T_r + 0.43577 T_r^6

  used only to say that a state with T_r < 1 and P_r above the vapour pressure is not
  a gas state (the gas root there is metastable at best).

Validity (the range of the published LK tables): 0.3 <= T_r <= 4 and 0 < P_r <= 10, gas
states only. Outside, every result carries ``valid=False`` with a reason in plain words
and NaN in the numbers; :meth:`GeneralizedState.require` raises
:class:`~screening.errors.NotApplicable`.

Quantum gases (H2, He, Ne) use the effective critical constants of Gunn, Chueh &
Prausnitz (AIChE J. 1966, 12, 937), as given in Reid, Prausnitz & Poling; mixtures use
Kay's rule (Kay, Ind. Eng. Chem. 1936, 28, 1014).

Everything works on numpy arrays and broadcasts; a scalar is a length-1 (or 0-d) array.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from screening.constants import R
from screening.errors import InputError, NotApplicable

__all__ = [
    "LK_REDUCED_TEMPERATURE_RANGE",
    "LK_REDUCED_PRESSURE_RANGE",
    "OMEGA_REFERENCE",
    "GeneralizedState",
    "lee_kesler_z",
    "lee_kesler_pressure",
    "lee_kesler_density",
    "lee_kesler_density_valid",
    "lee_kesler_pressure_valid",
    "lee_kesler_vapour_pressure",
    "quantum_effective_critical",
    "kay_pseudocritical",
    "pseudocritical",
    "srk_quantum_pressure",
    "srk_quantum_density",
]

#: [-] reduced-temperature range of the published LK tables.
LK_REDUCED_TEMPERATURE_RANGE = (0.3, 4.0)
#: [-] reduced-pressure range of the published LK tables (0 excluded).
LK_REDUCED_PRESSURE_RANGE = (0.0, 10.0)
#: [-] acentric factor of the LK reference fluid, n-octane (LK 1975).
OMEGA_REFERENCE = 0.3978

_MODEL = "generalized (Lee–Kesler)"

# LK 1975 Table 1: b1, b2, b3, b4, c1, c2, c3, c4, d1, d2, beta, gamma.
_SIMPLE = (0.1181193, 0.265728, 0.154790, 0.030323,
           0.0236744, 0.0186984, 0.0, 0.042724,
           0.155488e-4, 0.623689e-4, 0.65392, 0.060167)
_REFERENCE = (0.2026579, 0.331511, 0.027655, 0.203488,
              0.0313385, 0.0503618, 0.016901, 0.041577,
              0.48736e-4, 0.0740336e-4, 1.226, 0.03754)

_TR_LO, _TR_HI = LK_REDUCED_TEMPERATURE_RANGE
_PR_LO, _PR_HI = LK_REDUCED_PRESSURE_RANGE
_RANGE_TEXT_TR = "0.3 to 4"
_RANGE_TEXT_PR = "0 to 10"

_RTOL = 1e-13          # relative step at which the inner (volume) Newton stops
_PTOL = 1e-12          # relative step at which the outer (pressure) solve stops
_MAX_INNER = 100
_MAX_OUTER = 200
_MAX_NEWTON = 30      # steps of the coupled Newton before the bracketed solve takes over
_PR_SOLVE_MAX = 40.0   # [-] the pressure solve brackets P_r in (0, 40]; above 10 is reported invalid
_SCALAR_MAX = 40       # calls and gas roots of at most this many elements are solved element by element on floats
_SCALAR_TAIL = 8       # the gas roots' array loop hands its last open elements to the float loop
_BLOCK = 2500          # the array loops take at most this many states at once (measured: longer arrays cost more a state)
_SCALAR_MAX_NEWTON = 8  # the same for the coupled pressure Newton (measured: beyond these, the array loop is cheaper)

# Gunn, Chueh & Prausnitz (1966) constants of the quantum correction [g K/mol], as given in Reid,
# Prausnitz & Poling (not independently checked here; tested through the compressibility they give
# against the reference equations of H2, He and Ne).
_GCP_TC = 21.8
_GCP_PC = 44.2


# --------------------------------------------------------------------------- helpers


def _as_float_array(x: object, name: str) -> np.ndarray:
    try:
        a = np.asarray(x, dtype=float)
    except (TypeError, ValueError) as exc:
        raise InputError(f"{name} must be a number or an array of numbers", given=x,
                         expected="float or numpy array") from exc
    return a


def _positive_finite(a: np.ndarray) -> bool:
    """True if every element of the float array a is finite and positive (and it has one); NaN fails every
    comparison."""
    if a.size == 1:
        return 0.0 < a.item() < math.inf
    return a.size > 0 and 0.0 < a.min() and a.max() < math.inf


def _finite(a: np.ndarray) -> bool:
    """True if every element of the float array a is finite (and it has one)."""
    if a.size == 1:
        return -math.inf < a.item() < math.inf
    return a.size > 0 and -math.inf < a.min() and a.max() < math.inf


def _require_positive_finite(a: np.ndarray, name: str, unit: str) -> None:
    if _positive_finite(a):
        return
    bad = ~np.isfinite(a) | (a <= 0.0)
    if np.any(bad):
        first = a[bad].flat[0] if a.ndim else float(a)
        raise InputError(f"{name} must be finite and positive", given=float(first),
                         expected=f"{name} > 0 {unit}")


def _require_finite(a: np.ndarray, name: str) -> None:
    if _finite(a):
        return
    bad = ~np.isfinite(a)
    if np.any(bad):
        first = a[bad].flat[0] if a.ndim else float(a)
        raise InputError(f"{name} must be finite", given=float(first), expected="a finite number")


def _state_arrays(first, first_name: str, first_unit: str, temperature, tc, pc, omega):
    """Checked float arrays of (first, T, Tc, Pc, omega) of one broadcast shape: first and the temperatures and
    critical constants must be positive and finite, omega finite. Raises InputError otherwise. Arrays that
    already have the broadcast shape are returned as they are (the functions here never write into them);
    the others are broadcast into new arrays."""
    first = _as_float_array(first, first_name)
    t = _as_float_array(temperature, "temperature")
    tc = _as_float_array(tc, "critical temperature")
    pc = _as_float_array(pc, "critical pressure")
    omega = _as_float_array(omega, "acentric factor")
    # one test of the usual case (NaN fails every comparison, so it takes the detailed checks below)
    if not (_positive_finite(first) and _positive_finite(t) and _positive_finite(tc) and _positive_finite(pc)
            and _finite(omega)):
        _require_positive_finite(first, first_name, first_unit)
        _require_positive_finite(t, "temperature", "[K]")
        _require_positive_finite(tc, "critical temperature", "[K]")
        _require_positive_finite(pc, "critical pressure", "[Pa]")
        _require_finite(omega, "acentric factor")
    args = (first, t, tc, pc, omega)
    shape = first.shape
    if t.shape == shape and tc.shape == shape and pc.shape == shape and omega.shape == shape:
        return args
    shapes = {x.shape for x in args}
    shapes.discard(())
    shape = shapes.pop() if len(shapes) == 1 else np.broadcast_shapes(*(x.shape for x in args))
    return tuple(x if x.shape == shape else np.full(shape, x) if x.ndim == 0
                 else np.array(np.broadcast_to(x, shape), dtype=float) for x in args)


def _fmt(x: float) -> str:
    return f"{x:.4g}"


def _coefficients(consts: tuple, tr: np.ndarray):
    """B, C, D and c4/T_r^3 of one LK fluid at reduced temperature tr (LK eq. 3–5)."""
    b1, b2, b3, b4, c1, c2, c3, c4, d1, d2, _beta, _gamma = consts
    itr = 1.0 / tr
    itr3 = itr * itr * itr
    return (b1 - itr * (b2 + itr * (b3 + itr * b4)), c1 - c2 * itr + c3 * itr3, d1 + d2 * itr, c4 * itr3)


def _bwr(consts: tuple, coef: tuple, rho):
    """Z of one LK fluid and dZ/d(rho) at reduced density rho = 1/V_r [-] (LK eq. 2) of arrays rho and coef
    (:func:`_bwr_one` on floats: the same arithmetic, bit for bit)."""
    beta, gamma = consts[10], consts[11]
    B, C, D, E = coef
    r2 = rho * rho
    r4 = r2 * r2
    ex = E * np.exp(-gamma * r2)
    z = 1.0 + rho * (B + rho * C + D * r4) + ex * r2 * (beta + gamma * r2)
    dz = B + rho * (2.0 * C + 5.0 * D * r2 * rho) + ex * rho * (
        2.0 * beta + r2 * (4.0 * gamma - 2.0 * gamma * beta) - 2.0 * gamma * gamma * r4)
    return z, dz


def _gas_roots(tr: np.ndarray, pr: np.ndarray, active: np.ndarray):
    """Smallest reduced density solving P_r = T_r rho Z(rho) (the gas / vapour-like root) of each LK fluid.

    Newton from rho = 0 with a bracket. On the vapour branch the isotherm P_r(rho) is
    concave, so Newton from the left climbs monotonically to the first root; where it
    is convex (supercritical) it overshoots once and comes back from the right inside
    the bracket (bisection if a step leaves it). If the slope reaches zero before P_r
    is reached, the isotherm has a maximum below P_r: no gas root (``no_root``).

    Returns, for the simple fluid then the reference fluid, (rho, z, dp_drho, no_root, converged) as arrays of the
    broadcast shape. Up to _SCALAR_MAX elements each is solved on floats (:func:`_gas_root_few`); on arrays both
    fluids' elements iterate in one loop (:func:`_gas_root_arrays`, one set of numpy calls a step for the two), in
    blocks of at most _BLOCK states (measured: longer arrays cost more a state), each element's steps its own, so
    the numbers do not depend on the others in the call, bit for bit.
    """
    shape = tr.shape
    trf = tr.reshape(-1)
    prf = pr.reshape(-1)
    act = active.reshape(-1)
    n = trf.size
    if n <= _SCALAR_MAX:
        return (_gas_root_few(_SIMPLE, trf, prf, act, shape), _gas_root_few(_REFERENCE, trf, prf, act, shape))
    parts = []
    for s in _blocks(n):
        m = s.stop - s.start
        both = _gas_root_arrays(_both_rows(trf[s]), np.concatenate([trf[s], trf[s]]),
                                np.concatenate([prf[s], prf[s]]), np.concatenate([act[s], act[s]]))
        parts.append(tuple((x[:m], x[m:]) for x in both))
    if len(parts) == 1:
        return tuple(tuple(x[f].reshape(shape) for x in parts[0]) for f in (0, 1))
    return tuple(tuple(np.concatenate([part[j][f] for part in parts]).reshape(shape) for j in range(5))
                 for f in (0, 1))


def _blocks(n: int) -> list[slice]:
    """n elements cut into blocks of at most _BLOCK, of nearly equal sizes."""
    if n == 0:
        return []
    k = -(-n // _BLOCK)
    size = -(-n // k)
    return [slice(i, min(n, i + size)) for i in range(0, n, size)]


def _both_rows(trf: np.ndarray) -> list[np.ndarray]:
    """The constants of :func:`_bwr` of the simple fluid at the reduced temperatures trf (1-d), then of the reference
    fluid, an element per state and fluid: B, C, D, c4/T_r^3 (:func:`_coefficients`), 2 C, 5 D, beta, gamma,
    -gamma, 2 beta, 4 gamma - 2 gamma beta, 2 gamma gamma, computed as :func:`_coefficients` and :func:`_bwr` form
    them (the same operations on each element: bit for bit)."""
    m = trf.size
    tt = np.concatenate([trf, trf])
    c = np.repeat(_FLUID_CONSTS, m, axis=1)
    b1, b2, b3, b4, c1, c2, c3, c4, d1, d2 = c[:10]
    itr = 1.0 / tt
    itr3 = itr * itr * itr
    B, C, D = b1 - itr * (b2 + itr * (b3 + itr * b4)), c1 - c2 * itr + c3 * itr3, d1 + d2 * itr
    return [B, C, D, c4 * itr3, 2.0 * C, 5.0 * D, *c[10:]]


def _bwr_rows(k: list, rho: np.ndarray):
    """:func:`_bwr` with the constants of each element in k (:func:`_both_rows`): the same
    operations in the same order, bit for bit."""
    B, C, D, E, C2, D5, beta, gamma, ngamma, beta2, k1, k2 = k
    r2 = rho * rho
    r4 = r2 * r2
    ex = E * np.exp(ngamma * r2)
    z = 1.0 + rho * (B + rho * C + D * r4) + ex * r2 * (beta + gamma * r2)
    dz = B + rho * (C2 + D5 * r2 * rho) + ex * rho * (beta2 + r2 * k1 - k2 * r4)
    return z, dz


def _gas_root_arrays(k: np.ndarray, trf: np.ndarray, prf: np.ndarray, active: np.ndarray):
    """The array loop of :func:`_gas_roots` on 1-d arrays of the simple fluid's states, then the reference
    fluid's, each element with its fluid's constants in k (:func:`_both_rows`). Returns (rho, z, dp_drho,
    no_root, converged), 1-d. The last _SCALAR_TAIL elements still open go on on floats (:func:`_gas_root_one`
    from where they are: the same steps, bit for bit), where a numpy call costs more than its few elements'
    arithmetic (near the critical point some take all _MAX_INNER steps)."""
    half = trf.size // 2
    rho = np.zeros(trf.shape)
    no_root = np.zeros(trf.shape, dtype=bool)
    converged = np.zeros(trf.shape, dtype=bool)
    if active.all():
        idx, t, p_t, kk = np.arange(trf.size), trf, prf, k
    else:
        idx = np.flatnonzero(active)
        t, p_t, kk = trf[idx], prf[idx], [x[idx] for x in k]
    r = np.zeros(idx.shape)
    lo = np.zeros(idx.shape)
    hi = np.full(idx.shape, np.inf)
    bracketed = False               # some element has a finite upper end (else no bisection can be asked for)
    # elements that have finished stay in the arrays (their later steps are not used) until a quarter of them
    # has: the arrays are compacted then, not at every step
    done = np.zeros(idx.shape, dtype=bool)
    n_open = idx.size
    for step in range(_MAX_INNER):
        if n_open == 0:
            break
        if n_open <= _SCALAR_TAIL:
            # the last few elements go on on floats from where they are (the same steps, bit for bit)
            for j in np.flatnonzero(~done).tolist():
                i = int(idx[j])
                fluid = _SIMPLE if i < half else _REFERENCE
                rho[i], converged[i], no_root[i] = _gas_root_one(
                    fluid, (float(kk[0][j]), float(kk[1][j]), float(kk[2][j]), float(kk[3][j])), float(t[j]),
                    float(p_t[j]), float(r[j]), float(lo[j]), float(hi[j]), step)
            idx = idx[:0]
            break
        z, dz = _bwr_rows(kk, r)
        f = t * r * z - p_t
        dp = t * (z + r * dz)
        below = f < 0.0
        lo = np.where(below, np.maximum(lo, r), lo)
        if bracketed or not below.all():
            hi = np.where(below, hi, np.minimum(hi, r))
            finite_hi = np.isfinite(hi)
            bracketed = bool(finite_hi.any())
        newton = r - f / dp
        conv = (dp > 0.0) & (np.abs(newton - r) <= _RTOL * newton)
        if bracketed:
            # non-positive slope while still below the target: past the vapour-branch maximum
            stuck = below & (dp <= 0.0) & ~finite_hi
            bisect = finite_hi & (~np.isfinite(newton) | (newton < lo) | (newton > hi) | (dp <= 0.0))
            new = np.where(bisect & ~conv, 0.5 * (lo + hi), newton)
            conv |= finite_hi & ((hi - lo) <= _RTOL * hi)
        else:                       # every upper end infinite: no bisection, no collapsed bracket
            stuck = below & (dp <= 0.0)
            new = newton
        conv &= ~stuck
        finished = (conv | stuck) & ~done
        r = new
        if not finished.any():          # nothing to record or drop this step
            continue
        rho[idx[finished]] = new[finished]
        converged[idx[conv & finished]] = True
        no_root[idx[stuck & finished]] = True
        done |= finished
        n_open -= np.count_nonzero(finished)
        if 4 * np.count_nonzero(done) >= done.size:
            keep = ~done
            idx, t, p_t, r, lo, hi = idx[keep], t[keep], p_t[keep], r[keep], lo[keep], hi[keep]
            kk = [x[keep] for x in kk]
            done = done[keep]
    if idx.size:
        open_ = ~done
        rho[idx[open_]] = r[open_]      # elements still iterating after _MAX_INNER steps: their last step
    z, dz = _bwr_rows(k, rho)
    dp = trf * (z + rho * dz)
    # a converged point on an unstable (dP/drho <= 0) branch is not a gas root
    bad_branch = converged & (dp <= 0.0)
    no_root |= bad_branch
    converged &= ~bad_branch
    return rho, z, dp, no_root, converged


def _div(a: float, b: float) -> float:
    """a / b of floats as numpy divides (inf or NaN for b = 0, where Python raises)."""
    if b == 0.0:
        if a == 0.0 or a != a:
            return math.nan
        return math.copysign(math.inf, a) * math.copysign(1.0, b)
    return a / b


def _scalar_consts(consts: tuple) -> tuple[float, ...]:
    """(beta, gamma, -gamma, 2 beta, 4 gamma - 2 gamma beta, 2 gamma gamma) of one LK fluid: the constant factors
    of :func:`_bwr`, computed as it computes them (bit for bit), for the float loops (numpy's exp of a float is
    the exp of its arrays; math.exp may differ in the last digit)."""
    beta, gamma = consts[10], consts[11]
    return beta, gamma, -gamma, 2.0 * beta, 4.0 * gamma - 2.0 * gamma * beta, 2.0 * gamma * gamma


_SIMPLE_1 = _scalar_consts(_SIMPLE)
_REFERENCE_1 = _scalar_consts(_REFERENCE)
_SCALAR_CONSTS = {_SIMPLE: _SIMPLE_1, _REFERENCE: _REFERENCE_1}
#: Per fluid (a column each: simple, reference): b1 ... d2 of LK Table 1, then beta, gamma and the factors of
#: :func:`_scalar_consts`, for :func:`_both_rows`.
_FLUID_CONSTS = np.ascontiguousarray(np.array([[*_SIMPLE[:10], *_SIMPLE_1], [*_REFERENCE[:10], *_REFERENCE_1]]).T)


def _gas_root_one(consts: tuple, coef: tuple, t: float, p: float, r: float = 0.0, lo: float = 0.0,
                  hi: float = math.inf, start: int = 0) -> tuple[float, bool, bool]:
    """One element of :func:`_gas_roots`'s Newton, on floats: the same steps and tests, bit for bit (:func:`_bwr`,
    :func:`_div` and the bracket's np.maximum / np.minimum, NaN propagating, written out in the loop, the same
    operations in the same order). Returns (rho, converged, no_root) before the branch check. `r`, `lo`, `hi`,
    `start`: the state of an element after `start` steps of the array loop, which it continues."""
    beta, gamma, ngamma, beta2, k1, k2 = _SCALAR_CONSTS[consts]
    B, C, D, E = coef
    C2, D5 = 2.0 * C, 5.0 * D
    exp = np.exp
    inf = math.inf
    for _ in range(start, _MAX_INNER):
        r2 = r * r
        r4 = r2 * r2
        # exp(-gamma 0) is 1 exactly whatever the exp
        ex = E * float(exp(ngamma * r2)) if r2 != 0.0 else E
        z = 1.0 + r * (B + r * C + D * r4) + ex * r2 * (beta + gamma * r2)
        dz = B + r * (C2 + D5 * r2 * r) + ex * r * (beta2 + r2 * k1 - k2 * r4)
        f = t * r * z - p
        dp = t * (z + r * dz)
        below = f < 0.0
        if below:
            if lo == lo and (r != r or r > lo):
                lo = r
        elif hi == hi and (r != r or r < hi):
            hi = r
        finite_hi = -inf < hi < inf         # math.isfinite
        stuck = below and dp <= 0.0 and not finite_hi
        newton = r - (f / dp if dp != 0.0 else _div(f, dp))
        conv = dp > 0.0 and abs(newton - r) <= _RTOL * newton
        if finite_hi and not conv and (not -inf < newton < inf or newton < lo or newton > hi or dp <= 0.0):
            new = 0.5 * (lo + hi)
        else:
            new = newton
        conv = (conv or (finite_hi and (hi - lo) <= _RTOL * hi)) and not stuck
        if conv or stuck:
            return new, conv, stuck
        r = new
    return r, False, False


def _bwr_one(consts1: tuple, coef: tuple, rho: float) -> tuple[float, float]:
    """:func:`_bwr` of one float (consts1 from :func:`_scalar_consts`), bit for bit."""
    beta, gamma, ngamma, beta2, k1, k2 = consts1
    B, C, D, E = coef
    r2 = rho * rho
    r4 = r2 * r2
    ex = E * float(np.exp(ngamma * r2)) if r2 != 0.0 else E
    z = 1.0 + rho * (B + rho * C + D * r4) + ex * r2 * (beta + gamma * r2)
    dz = B + rho * (2.0 * C + 5.0 * D * r2 * rho) + ex * rho * (beta2 + r2 * k1 - k2 * r4)
    return z, dz


def _gas_root_few(consts: tuple, trf: np.ndarray, prf: np.ndarray, active: np.ndarray, shape: tuple):
    """:func:`_gas_roots` of one fluid for a few elements, one by one on floats (numpy's cost per call dominates
    small arrays); the same arithmetic as the array loop, bit for bit."""
    consts1 = _SCALAR_CONSTS[consts]
    b1, b2, b3, b4, c1, c2, c3, c4, d1, d2, _beta, _gamma = consts
    rho, z, dp, no_root, converged = [], [], [], [], []
    for t, p, on in zip(trf.tolist(), prf.tolist(), active.tolist()):
        # _coefficients of one float
        itr = 1.0 / t
        itr3 = itr * itr * itr
        coef = (b1 - itr * (b2 + itr * (b3 + itr * b4)), c1 - c2 * itr + c3 * itr3, d1 + d2 * itr, c4 * itr3)
        r, conv, stuck = _gas_root_one(consts, coef, t, p) if on else (0.0, False, False)
        zk, dzk = _bwr_one(consts1, coef, r)
        dpk = t * (zk + r * dzk)
        # a converged point on an unstable (dP/drho <= 0) branch is not a gas root
        if conv and dpk <= 0.0:
            conv, stuck = False, True
        rho.append(r)
        z.append(zk)
        dp.append(dpk)
        no_root.append(stuck)
        converged.append(conv)
    return (np.array(rho).reshape(shape), np.array(z).reshape(shape), np.array(dp).reshape(shape),
            np.array(no_root, dtype=bool).reshape(shape), np.array(converged, dtype=bool).reshape(shape))


def _root_one(consts: tuple, coef: tuple, t: float, p: float) -> tuple[float, float, bool, bool]:
    """One element of :func:`_gas_root_few` (active): (rho, Z, no_root, converged), the same numbers bit for bit."""
    r, conv, stuck = _gas_root_one(consts, coef, t, p)
    z, dz = _bwr_one(_SCALAR_CONSTS[consts], coef, r)
    if conv and t * (z + r * dz) <= 0.0:
        return r, z, True, False
    return r, z, stuck, conv


def _vapour_caps(tr: np.ndarray, omega: np.ndarray) -> list | None:
    """LK vapour pressures where 0.3 <= T_r < 1 (inf elsewhere) as :func:`_flag_gas_state` computes them, as
    floats; None where no element is there."""
    sub = (tr < 1.0) & (tr >= _TR_LO)
    if not sub.any():
        return None
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):     # as in _z_checked
        return np.where(sub, lee_kesler_vapour_pressure(np.where(sub, tr, 0.5), omega), np.inf).tolist()


def _z_few(tr: np.ndarray, pr: np.ndarray, omega: np.ndarray) -> tuple[list, list]:
    """Z of :func:`_z_checked` for a few elements (1-d, P_r positive), element by element on floats (the same
    numbers, bit for bit), and the indices of the elements that are not valid (Z NaN there): the caller solves
    those by the array path, which says why (a state's numbers do not depend on the others in its call)."""
    trl, prl = tr.tolist(), pr.tolist()
    psat = _vapour_caps(tr, omega)
    out, failed = [], []
    for k, (t, p, a) in enumerate(zip(trl, prl, (omega / OMEGA_REFERENCE).tolist())):
        if not (_TR_LO <= t <= _TR_HI and p <= _PR_HI) or (psat is not None and p > psat[k]):
            out.append(math.nan)
            failed.append(k)
            continue
        r0, z0, nr0, c0 = _root_one(_SIMPLE, _coefficients(_SIMPLE, t), t, p)
        rr, zr, nrr, cr = _root_one(_REFERENCE, _coefficients(_REFERENCE, t), t, p)
        if nr0 or nrr or not (c0 and cr):
            out.append(math.nan)
            failed.append(k)
            continue
        out.append(z0 + a * (zr - z0))
    return out, failed


def lee_kesler_vapour_pressure(tr, omega) -> np.ndarray:
    """Reduced vapour pressure of the LK correlation, ln P_r,sat = f0 + omega f1 [-].

    Parameters: ``tr`` reduced temperature [-] (meaningful for T_r < 1), ``omega``
    acentric factor [-]. Source: LK 1975 (see module docstring); returns P_sat / P_c [-].
    Defined for T_r <= 1; returned as computed (it is a smooth formula) for T_r > 1 too.

    >>> round(float(lee_kesler_vapour_pressure(0.7, 0.0)), 4)  # omega = 0 means P_r,sat(0.7) = 0.1
    0.1
    """
    tr = np.asarray(tr, dtype=float)
    omega = np.asarray(omega, dtype=float)
    t6 = tr**6
    lt = np.log(tr)
    f0 = 5.92714 - 6.09648 / tr - 1.28862 * lt + 0.169347 * t6
    f1 = 15.2518 - 15.6875 / tr - 13.4721 * lt + 0.43577 * t6
    return np.exp(f0 + omega * f1)


def _range_reasons(tr: np.ndarray, pr: np.ndarray | None, temperatures: bool = True) -> np.ndarray:
    """Per element, why (T_r, P_r) is outside the Lee–Kesler range ('' inside); P_r only where given, T_r
    unless `temperatures` is False. The texts are built from the masked values in one pass each."""
    reason = np.full(tr.shape, "", dtype=object)
    if pr is not None:
        hi_p = np.isfinite(pr) & (pr > _PR_HI)
        if hi_p.any():
            reason[hi_p] = [f"reduced pressure {_fmt(x)} is above the Lee–Kesler range ({_RANGE_TEXT_PR})"
                            for x in np.asarray(pr)[hi_p].tolist()]
    if temperatures:
        for mask, word in ((tr < _TR_LO, "below"), (tr > _TR_HI, "above")):
            if mask.any():
                reason[mask] = [f"reduced temperature {_fmt(x)} is {word} the Lee–Kesler range ({_RANGE_TEXT_TR})"
                                for x in np.asarray(tr)[mask].tolist()]
    return reason


def _set_reasons(reason: np.ndarray, mask: np.ndarray, make) -> None:
    """Write make(idx) into reason where mask holds and no reason is recorded yet."""
    if not mask.any():
        return
    mask = mask & (reason == "")
    if mask.ndim == 0:
        if bool(mask):
            reason[()] = make(())
        return
    for idx in zip(*np.nonzero(mask)):
        reason[idx] = make(idx)


def _z_core(tr: np.ndarray, pr: np.ndarray, omega: np.ndarray, active: np.ndarray):
    """Z, dZ/dP_r, reduced volumes and per-element failure reasons at (T_r, P_r, omega)."""
    a = omega / OMEGA_REFERENCE
    (r0, z0, dp0, nr0, c0), (rr, zr, dpr, nrr, cr) = _gas_roots(tr, pr, active)
    z = z0 + a * (zr - z0)
    # Z_i = P_r / (T_r rho_i): dZ_i/dP_r = (1/rho_i - P_r/(rho_i^2 dP_i/drho_i)) / T_r
    with np.errstate(divide="ignore", invalid="ignore"):
        v0 = 1.0 / r0
        vr = 1.0 / rr
        dv0 = -v0 * v0 / dp0
        dvr = -vr * vr / dpr
    no_root = active & (nr0 | nrr)
    not_conv = active & ~no_root & ~(c0 & cr)
    return z, v0, vr, dv0, dvr, no_root, not_conv, a


# --------------------------------------------------------------------------- state


@dataclass(frozen=True)
class GeneralizedState:
    """Result of a Lee–Kesler evaluation; every field is a numpy array of the broadcast shape.

    pressure [Pa] (absolute), molar_density [mol/m3], z [-], reduced_temperature [-],
    reduced_pressure [-], valid (bool), reason (str; '' where valid). Invalid elements
    carry NaN in pressure, molar_density and z, and say why in ``reason``; the reduced
    temperature and pressure are kept where they could be computed, for the message.
    """

    pressure: np.ndarray
    molar_density: np.ndarray
    z: np.ndarray
    reduced_temperature: np.ndarray
    reduced_pressure: np.ndarray
    valid: np.ndarray
    reason: np.ndarray

    def require(self, model: str = "generalized") -> "GeneralizedState":
        """Return self if every element is valid, else raise NotApplicable for the first invalid one."""
        if np.all(self.valid):
            return self
        idx = tuple(int(i) for i in np.argwhere(~np.asarray(self.valid))[0]) if np.ndim(self.valid) else ()
        reason = str(self.reason[idx])
        tr = float(self.reduced_temperature[idx])
        pr = float(self.reduced_pressure[idx])
        if not (_TR_LO <= tr <= _TR_HI):
            value, rng = tr, f"reduced temperature {_RANGE_TEXT_TR}"
        elif not (np.isfinite(pr) and _PR_LO < pr <= _PR_HI):
            value, rng = pr, f"reduced pressure {_RANGE_TEXT_PR}"
        else:
            value, rng = (tr, pr), "gas states within reduced temperature 0.3 to 4, reduced pressure 0 to 10"
        raise NotApplicable(model, reason, value=value, valid_range=rng)


#: Field names of GeneralizedState, in order (to merge two states element by element).
GENERALIZED_FIELDS = ("pressure", "molar_density", "z", "reduced_temperature", "reduced_pressure", "valid", "reason")


# --------------------------------------------------------------------------- public API


def lee_kesler_z(tr, pr, omega) -> np.ndarray:
    """Compressibility factor Z [-] of the gas root of the Lee–Kesler model.

    Z = Z0 + (omega/omega_r)(Z_r - Z0) (LK eq. 1), each Z_i from the modified BWR
    equation of LK eq. (2)–(5) solved for the largest reduced volume V_r at (T_r, P_r).

    Parameters: ``tr`` reduced temperature T/T_c [-], ``pr`` reduced pressure P/P_c [-],
    ``omega`` acentric factor [-]; arrays broadcast together.
    Validity: 0.3 <= T_r <= 4, 0 < P_r <= 10, and a gas root must exist (for T_r < 1,
    P_r must not exceed the LK vapour pressure). Raises NotApplicable naming the first
    element outside that (use :func:`lee_kesler_density` for per-element flags).

    >>> round(float(lee_kesler_z(1.2, 0.659, 0.0)), 3)   # simple fluid, T_r = 1.2, P_r = 0.659
    0.865
    """
    tr = _as_float_array(tr, "reduced temperature")
    pr = _as_float_array(pr, "reduced pressure")
    omega = _as_float_array(omega, "acentric factor")
    _require_positive_finite(tr, "reduced temperature", "[-]")
    _require_positive_finite(pr, "reduced pressure", "[-]")
    _require_finite(omega, "acentric factor")
    tr, pr, omega = np.broadcast_arrays(tr, pr, omega)
    z, valid, reason = _z_checked(tr.astype(float), pr.astype(float), omega.astype(float))
    if not np.all(valid):
        state = GeneralizedState(
            pressure=np.full(tr.shape, np.nan), molar_density=np.full(tr.shape, np.nan),
            z=z, reduced_temperature=tr, reduced_pressure=pr, valid=valid, reason=reason)
        state.require(_MODEL)
    return z


@np.errstate(divide="ignore", invalid="ignore", over="ignore")
def _z_checked(tr, pr, omega):
    """Z at (T_r, P_r) with per-element validity and reasons (NaN where invalid)."""
    reason = _range_reasons(tr, pr)
    in_range = reason == ""
    z, *_rest, no_root, not_conv, _a = _z_core(tr, pr, omega, in_range)
    _flag_gas_state(reason, tr, pr, omega, no_root, not_conv)
    valid = reason == ""
    z = np.where(valid, z, np.nan)
    return z, valid, reason


def _flag_gas_state(reason, tr, pr, omega, no_root, not_conv) -> None:
    _set_reasons(reason, no_root, lambda i: (
        f"no gas root at reduced temperature {_fmt(tr[i])} and reduced pressure {_fmt(pr[i])}: "
        "the state is liquid-like (above the vapour-like branch of the Lee–Kesler equation)"))
    sub = (tr < 1.0) & np.isfinite(pr)
    if sub.any():
        psat = np.where(sub, lee_kesler_vapour_pressure(np.where(sub, tr, 0.5), omega), np.inf)
        _set_reasons(reason, sub & (pr > psat), lambda i: (
            f"reduced pressure {_fmt(pr[i])} is above the Lee–Kesler vapour pressure {_fmt(psat[i])} "
            f"at reduced temperature {_fmt(tr[i])}: the stable state is liquid or two-phase, not gas"))
    _set_reasons(reason, not_conv, lambda i: (
        f"the Lee–Kesler volume solve did not converge at reduced temperature {_fmt(tr[i])} "
        f"and reduced pressure {_fmt(pr[i])}"))


def lee_kesler_density(pressure, temperature, tc, pc, omega) -> GeneralizedState:
    """Molar density [mol/m3] of the gas at absolute pressure [Pa] and temperature [K].

    rho = P / (Z R T) with Z = lee_kesler_z(T/T_c, P/P_c, omega) (LK eq. 1–5).
    Parameters: ``pressure`` [Pa] absolute, ``temperature`` [K], ``tc`` critical (or
    pseudocritical) temperature [K], ``pc`` critical pressure [Pa], ``omega`` [-].
    Validity: 0.3 <= T_r <= 4, 0 < P_r <= 10, gas states; others are flagged per element.

    >>> s = lee_kesler_density(101325.0, 300.0, 126.192, 3.3958e6, 0.0372)  # nitrogen, 1 atm
    >>> round(float(s.z), 4), bool(s.valid)
    (0.9998, True)
    """
    p, t, tc, pc, omega = _state_arrays(pressure, "pressure", "[Pa] (absolute)", temperature, tc, pc, omega)
    tr = t / tc
    pr = p / pc
    if tr.ndim == 1 and 0 < tr.size <= _SCALAR_MAX:
        # element by element; reasons built only for the elements that are not valid
        zl, failed = _z_few(tr, pr, omega)
        z = np.array(zl)
        reason = np.full(tr.shape, "", dtype=object)
        valid = reason == ""
        if failed:
            z[failed], valid[failed], reason[failed] = _z_checked(tr[failed], pr[failed], omega[failed])
    else:
        z, valid, reason = _z_checked(tr, pr, omega)
    rho = np.where(valid, p / (z * R * t), np.nan)
    return GeneralizedState(
        pressure=np.where(valid, p, np.nan), molar_density=rho, z=z,
        reduced_temperature=tr, reduced_pressure=pr, valid=valid, reason=reason)


def lee_kesler_density_valid(pressure, temperature, tc, pc, omega) -> tuple[np.ndarray, np.ndarray]:
    """(molar density [mol/m3], valid) as :func:`lee_kesler_density` gives them (the same numbers and validity,
    bit for bit), without the reasons in words: for a solver that evaluates it many times and reads only these.

    >>> rho, ok = lee_kesler_density_valid(101325.0, 300.0, 126.192, 3.3958e6, 0.0372)   # nitrogen, 1 atm
    >>> bool(ok), bool(rho == lee_kesler_density(101325.0, 300.0, 126.192, 3.3958e6, 0.0372).molar_density)
    (True, True)
    """
    p, t, tc, pc, omega = _state_arrays(pressure, "pressure", "[Pa] (absolute)", temperature, tc, pc, omega)
    tr = t / tc
    pr = p / pc
    if tr.ndim == 1 and 0 < tr.size <= _SCALAR_MAX:
        zl, failed = _z_few(tr, pr, omega)
        if not failed:
            return p / (np.array(zl) * R * t), np.ones(tr.shape, dtype=bool)
        z = np.array(zl)
        valid = np.ones(tr.shape, dtype=bool)
        z[failed], valid[failed] = _z_valid(tr[failed], pr[failed], omega[failed])
    else:
        z, valid = _z_valid(tr, pr, omega)
    return np.where(valid, p / (z * R * t), np.nan), valid


@np.errstate(divide="ignore", invalid="ignore", over="ignore")
def _z_valid(tr, pr, omega):
    """Z and validity of :func:`_z_checked` without its reasons: the same tests (range, gas root, vapour
    pressure below the critical temperature, convergence)."""
    in_range = ~((np.isfinite(pr) & (pr > _PR_HI)) | (tr < _TR_LO) | (tr > _TR_HI))
    z, *_rest, no_root, not_conv, _a = _z_core(tr, pr, omega, in_range)
    valid = in_range & ~no_root & ~not_conv
    sub = (tr < 1.0) & np.isfinite(pr)
    if sub.any():
        valid &= ~(sub & (pr > np.where(sub, lee_kesler_vapour_pressure(np.where(sub, tr, 0.5), omega), np.inf)))
    return np.where(valid, z, np.nan), valid


def _newton_reduced_pressure(tr, vf, omega, active):
    """Coupled Newton on (rho_0, rho_ref, P_r) for T_r rho_i Z_i(rho_i) = P_r, (1-a)/rho_0 + a/rho_ref = V_r.

    The same condition as :func:`_solve_reduced_pressure` (LK eq. 1–5 at fixed V_r), but the two
    reduced densities rho_i = 1/V_i are iterated together with P_r instead of re-solving both gas
    roots from rho = 0 at every trial P_r. One step: each P_i(rho_i) = T_r rho_i Z_i is linearised,
    rho_i' = rho_i + (P_r' - P_i)/(dP_i/drho_i), and P_r' is chosen so that the linearised volume
    condition holds, with w_i = a_i / (rho_i^2 dP_i/drho_i), a_0 = 1 - a, a_ref = a::

        P_r' = ((1-a)/rho_0 + a/rho_ref - V_r + w_0 P_0 + w_ref P_ref) / (w_0 + w_ref)

    Started from the ideal gas (rho_i = 1/V_r, P_r = T_r/V_r); stops when the steps in P_r, rho_0 and
    rho_ref are below _PTOL, _RTOL, _RTOL relative (the tolerances of the bracketed solve).
    This finds *a* solution, not necessarily on the gas branch: the caller checks the roots against
    the cold-started gas roots at the result and solves the rest with the bracketed solver.
    Elements that leave the physical region (a slope dP_i/drho_i <= 0, a density <= 0, P_r outside
    (0, 10], or above the LK vapour pressure where T_r < 1: not a gas state, whose reason the
    bracketed solve gives) or do not settle in _MAX_NEWTON steps are not converged.

    Returns (pr, v0, vr, converged) of the broadcast shape: P_r, the reduced volumes 1/rho_i [-].
    """
    shape = tr.shape
    n = tr.size
    pr_out = np.full(n, np.nan)
    v0_out = np.full(n, np.nan)
    vr_out = np.full(n, np.nan)
    converged = np.zeros(n, dtype=bool)
    idx = np.flatnonzero(active.reshape(-1))
    t, v, a = tr.reshape(-1)[idx], vf.reshape(-1)[idx], omega.reshape(-1)[idx] / OMEGA_REFERENCE
    r0 = 1.0 / v
    p = t * r0
    p_max = np.where(t < 1.0, np.minimum(lee_kesler_vapour_pressure(np.minimum(t, 1.0), a * OMEGA_REFERENCE), _PR_HI),
                     _PR_HI)
    if idx.size <= _SCALAR_MAX_NEWTON:
        c0, cr = _coefficients(_SIMPLE, t), _coefficients(_REFERENCE, t)
        for k, tk, vk, ak, r0k, pk, pmk, c0k, crk in zip(idx.tolist(), t.tolist(), v.tolist(), a.tolist(), r0.tolist(),
                                                       p.tolist(), p_max.tolist(), zip(*c0), zip(*cr)):
            got = _newton_reduced_pressure_one(tk, vk, ak, r0k, pk, pmk, c0k, crk)
            if got is not None:
                pr_out[k], v0_out[k], vr_out[k] = got
                converged[k] = True
        return pr_out.reshape(shape), v0_out.reshape(shape), vr_out.reshape(shape), converged.reshape(shape)
    for s in _blocks(idx.size):
        _newton_block(idx[s], t[s], v[s], a[s], r0[s], p[s], p_max[s], pr_out, v0_out, vr_out, converged)
    return pr_out.reshape(shape), v0_out.reshape(shape), vr_out.reshape(shape), converged.reshape(shape)


def _newton_block(idx, t, v, a, r0, p, p_max, pr_out, v0_out, vr_out, converged) -> None:
    """The array loop of :func:`_newton_reduced_pressure` over the elements idx (their T_r, V_r, a, start and cap),
    into its outputs. Both fluids' densities are stepped in one array (simple, then reference), so that each step's
    numpy calls serve both: the same operations per element as the two fluids' own arrays, in the same order (bit
    for bit). Elements that have finished stay in the arrays (their later steps are not used) until a quarter of
    them has."""
    m = idx.size
    k = _both_rows(t)
    tt = np.concatenate([t, t])
    wa = np.concatenate([1.0 - a, a])
    r = np.concatenate([r0, r0])
    finished = np.zeros(m, dtype=bool)
    for _ in range(_MAX_NEWTON):
        if m == 0:
            break
        z, dz = _bwr_rows(k, r)
        pz = tt * r * z                             # P_0, P_ref
        d = tt * (z + r * dz)                       # dP_0/drho_0, dP_ref/drho_ref
        w = wa / (d * r * r)                        # w_0, w_ref
        q = wa / r
        wp = w * pz
        p_new = (q[:m] + q[m:] - v + wp[:m] + wp[m:]) / (w[:m] + w[m:])
        r_new = r + (np.concatenate([p_new, p_new]) - pz) / d
        ok = (d > 0.0) & (r_new > 0.0) & np.isfinite(r_new)
        good = ok[:m] & ok[m:] & (p_new > 0.0) & (p_new <= p_max) & ~finished
        close = np.abs(r_new - r) <= _RTOL * r_new
        done = good & (np.abs(p_new - p) <= _PTOL * p_new) & close[:m] & close[m:]
        fin = idx[done]
        pr_out[fin], v0_out[fin], vr_out[fin] = p_new[done], 1.0 / r_new[:m][done], 1.0 / r_new[m:][done]
        converged[fin] = True
        finished |= done | ~good
        r, p = r_new, p_new
        if 4 * np.count_nonzero(finished) >= m:
            keep = ~finished
            keep2 = np.concatenate([keep, keep])
            idx, v, p, p_max = idx[keep], v[keep], p[keep], p_max[keep]
            tt, wa, r, k = tt[keep2], wa[keep2], r[keep2], [x[keep2] for x in k]
            m = idx.size
            finished = finished[keep]


def _newton_reduced_pressure_one(t: float, v: float, a: float, r0: float, p: float, p_max: float, c0: tuple,
                                 cr: tuple) -> tuple[float, float, float] | None:
    """One element of :func:`_newton_reduced_pressure`'s loop, on floats: the same steps and tests, bit for bit
    (:func:`_bwr_one` and :func:`_div` written out, the same operations in the same order).
    Returns (P_r, V_0, V_ref), or None where it does not converge."""
    beta0, gamma0, ngamma0, beta20, k10, k20 = _SIMPLE_1
    betar, gammar, ngammar, beta2r, k1r, k2r = _REFERENCE_1
    B0, C0, D0, E0 = c0
    Br, Cr, Dr, Er = cr
    C20, D50, C2r, D5r = 2.0 * C0, 5.0 * D0, 2.0 * Cr, 5.0 * Dr
    b = 1.0 - a
    exp = np.exp
    inf = math.inf
    rr = r0
    for _ in range(_MAX_NEWTON):
        s2 = r0 * r0
        s4 = s2 * s2
        ex = E0 * float(exp(ngamma0 * s2)) if s2 != 0.0 else E0
        z0 = 1.0 + r0 * (B0 + r0 * C0 + D0 * s4) + ex * s2 * (beta0 + gamma0 * s2)
        dz0 = B0 + r0 * (C20 + D50 * s2 * r0) + ex * r0 * (beta20 + s2 * k10 - k20 * s4)
        s2 = rr * rr
        s4 = s2 * s2
        ex = Er * float(exp(ngammar * s2)) if s2 != 0.0 else Er
        zr = 1.0 + rr * (Br + rr * Cr + Dr * s4) + ex * s2 * (betar + gammar * s2)
        dzr = Br + rr * (C2r + D5r * s2 * rr) + ex * rr * (beta2r + s2 * k1r - k2r * s4)
        p0, pref = t * r0 * z0, t * rr * zr
        d0, dref = t * (z0 + r0 * dz0), t * (zr + rr * dzr)
        x, y = d0 * r0 * r0, dref * rr * rr
        w0 = b / x if x else _div(b, x)
        wref = a / y if y else _div(a, y)
        x, y = w0 + wref, (b / r0 if r0 else _div(b, r0)) + (a / rr if rr else _div(a, rr)) - v + w0 * p0 + wref * pref
        p_new = y / x if x else _div(y, x)
        r0_new = r0 + ((p_new - p0) / d0 if d0 else _div(p_new - p0, d0))
        rr_new = rr + ((p_new - pref) / dref if dref else _div(p_new - pref, dref))
        if not (d0 > 0.0 and dref > 0.0 and r0_new > 0.0 and rr_new > 0.0 and p_new > 0.0 and p_new <= p_max
                and -inf < r0_new < inf and -inf < rr_new < inf):
            return None
        if (abs(p_new - p) <= _PTOL * p_new and abs(r0_new - r0) <= _RTOL * r0_new
                and abs(rr_new - rr) <= _RTOL * rr_new):
            return p_new, _div(1.0, r0_new), _div(1.0, rr_new)
        r0, rr, p = r0_new, rr_new, p_new
    return None


def _pressure_few(tr: np.ndarray, vf: np.ndarray, omega: np.ndarray, one_root: bool = False
                  ) -> tuple[list, list, list, tuple]:
    """(P_r, Z) of :func:`lee_kesler_pressure` for a few elements (1-d), element by element on floats: the same
    steps and tests as the array path (range, :func:`_newton_reduced_pressure`, the check by the cold-started gas
    roots, the volume and vapour-pressure tests), bit for bit, for the elements that are valid and whose coupled
    Newton settles on the gas branch; and the indices of the others (NaN there), which the caller solves by the
    array path (bracketed solve, reasons; a state's numbers do not depend on the others in its call), with what
    the coupled Newton gave them: arrays (P_r, V_0, V_ref, settled) as :func:`_newton_reduced_pressure` returns
    them (the array path need not run it again). `one_root` (for :func:`lee_kesler_pressure_valid`): from
    _ONE_ROOT_TR up the settled densities are taken as the gas roots without solving those again (the same P_r
    and validity; Z is then P_r V_r / T_r of the coupled solution, which that function does not give)."""
    a = omega / OMEGA_REFERENCE
    if (tr < 1.0).any():
        t_in = np.where(tr < _TR_LO, 0.5, tr)       # only the elements in the range are used
        p_max = np.where(t_in < 1.0, np.minimum(lee_kesler_vapour_pressure(np.minimum(t_in, 1.0), a * OMEGA_REFERENCE),
                                                _PR_HI), _PR_HI).tolist()
        psat = _vapour_caps(tr, omega)
    else:
        p_max, psat = [_PR_HI] * tr.size, None
    prs, zs, failed, newton = [], [], [], []
    for k, (t, v, ak) in enumerate(zip(tr.tolist(), vf.tolist(), a.tolist())):
        ok = _TR_LO <= t <= _TR_HI
        got = None
        if ok:
            c0, cr = _coefficients(_SIMPLE, t), _coefficients(_REFERENCE, t)
            r0 = _div(1.0, v)
            got = _newton_reduced_pressure_one(t, v, ak, r0, t * r0, p_max[k], c0, cr)
            ok = got is not None and got[0] <= _PR_HI and (psat is None or not got[0] > psat[k])
        if ok and one_root and t >= _ONE_ROOT_TR and abs((1.0 - ak) * got[1] + ak * got[2] - v) <= 1e-9 * v:
            prs.append(got[0])
            zs.append(got[0] * v / t)
            continue
        if ok:
            pr, fast_v0, fast_vr = got
            rho0, z0, nr0, cv0 = _root_one(_SIMPLE, c0, t, pr)
            rhor, zr, nrr, cvr = _root_one(_REFERENCE, cr, t, pr)
            ok = not (nr0 or nrr) and cv0 and cvr
            if ok:
                v0, vr = _div(1.0, rho0), _div(1.0, rhor)
                ok = (abs(v0 - fast_v0) <= 1e-9 * fast_v0 and abs(vr - fast_vr) <= 1e-9 * fast_vr
                      and abs((1.0 - ak) * v0 + ak * vr - v) <= 1e-9 * v)
        if ok:
            prs.append(pr)
            zs.append(z0 + ak * (zr - z0))
        else:
            prs.append(math.nan)
            zs.append(math.nan)
            failed.append(k)
            newton.append((*got, True) if got is not None else (math.nan, math.nan, math.nan, False))
    return prs, zs, failed, (tuple(np.array(x) for x in zip(*newton)) if newton else ())


def _solve_reduced_pressure(tr, vf, omega, active):
    """Bracketed Newton on P_r for H(P_r) = (1-a) V0(P_r) + a V_ref(P_r) - V_r = 0.

    H decreases with P_r on the gas branch. Where no gas root exists at a trial P_r, the
    solution lies at lower pressure (bisection). Only elements still iterating are
    computed. Returns (pr, converged, above_cap) of the broadcast shape.
    """
    shape = tr.shape
    trf, vff, omf = tr.reshape(-1), vf.reshape(-1), omega.reshape(-1)
    pr_out = np.full(trf.shape, np.nan)
    converged = np.zeros(trf.shape, dtype=bool)
    above_cap = np.zeros(trf.shape, dtype=bool)
    idx = np.flatnonzero(active.reshape(-1))
    t, v, w = trf[idx], vff[idx], omf[idx]
    lo = np.zeros(idx.shape)
    hi = np.full(idx.shape, _PR_SOLVE_MAX)
    pr = np.minimum(t / v, 0.5 * _PR_SOLVE_MAX)     # ideal-gas start
    everywhere = np.ones(idx.shape, dtype=bool)
    for _ in range(_MAX_OUTER):
        if idx.size == 0:
            break
        _z, v0, vr, dv0, dvr, no_root, not_conv, a = _z_core(t, pr, w, everywhere)
        h = (1.0 - a) * v0 + a * vr - v
        dh = (1.0 - a) * dv0 + a * dvr
        # An inner solve that does not converge sits at the tangent point where the gas root
        # disappears (slow Newton on a double root): treated like no root, i.e. too high.
        no_root = no_root | not_conv
        too_high = no_root | (h < 0.0)
        bad = ~no_root & ~np.isfinite(h)
        hi = np.where(too_high & ~bad, np.minimum(hi, pr), hi)
        lo = np.where(~too_high & ~bad, np.maximum(lo, pr), lo)
        newton = pr - h / dh
        conv = ~no_root & ~bad & (dh < 0.0) & (np.abs(newton - pr) <= _PTOL * pr)
        use_bisect = no_root | bad | ~np.isfinite(newton) | (newton < lo) | (newton > hi) | (dh >= 0.0)
        new = np.where(use_bisect & ~conv, 0.5 * (lo + hi), newton)
        collapsed = (hi - lo) <= _PTOL * hi
        # bracket pinned at the cap: the solution is above _PR_SOLVE_MAX
        capped = lo >= _PR_SOLVE_MAX * (1.0 - 1e-9)
        pr_out[idx] = new
        converged[idx[(conv | collapsed) & ~capped]] = True
        above_cap[idx[capped]] = True
        keep = ~(conv | collapsed | capped)
        idx, t, v, w, lo, hi, pr = idx[keep], t[keep], v[keep], w[keep], lo[keep], hi[keep], new[keep]
        everywhere = everywhere[keep]
    return pr_out.reshape(shape), converged.reshape(shape), above_cap.reshape(shape)


#: The reduced gas volume (1 - a) V_0 + a V_ref of the two LK fluids' gas roots decreases as P_r rises wherever
#: 0 <= a <= 1 (each V_i does); with a < 0 it does where (1 - a) |dV_0/dP_r| > |a| |dV_ref/dP_r|, which holds from
#: T_r = 1.1 up for every a above -0.38 (the ratio of the two fluids' slopes stays above 0.63 there up to P_r = 10;
#: tests/test_generalized.py checks it on a grid): the states of :func:`_no_gas_state_up_to_cap` are those.
_MONOTONE_TR = 1.1
_MONOTONE_A = -0.25
#: From this reduced temperature up (to the top of the tables, T_r = 4) each LK fluid's isotherm P_r(rho) rises at
#: every density (dP_r/drho >= 0.11 on a grid of rho up to 1e4; each fluid's critical point lies at T_r = 1, below
#: which the isotherm has its loop: tests/test_generalized.py checks the grid). Each fluid then has one root at any
#: P_r, which is its gas root: the densities the coupled Newton settles on there are those the cold-started gas
#: roots give, so :func:`lee_kesler_pressure_valid` does not solve those again (its pressures and validity are
#: those of :func:`lee_kesler_pressure`, bit for bit).
_ONE_ROOT_TR = 1.05
#: Relative margin by which the reduced gas volume at the cap must exceed V_r (a state is valid only where they
#: agree to 1e-9; round-off is some 1e-13).
_NO_GAS_MARGIN = 1e-6


def _no_gas_state_up_to_cap(tr, vf, omega, cand) -> np.ndarray:
    """Where (among cand, inside the T_r range) no gas state of the LK model has the reduced ideal volume vf at any
    reduced pressure it accepts (up to 10, and up to the LK vapour pressure below T_r = 1): the gas volume
    (1 - a) V_0 + a V_ref at that cap exceeds vf by _NO_GAS_MARGIN, and the gas volume only falls as P_r rises
    (a in [0, 1], or T_r >= _MONOTONE_TR and a >= _MONOTONE_A), so every accepted pressure gives a larger volume
    than vf: the bracketed solve can only end above the cap or unsettled, and the state is refused whatever it
    finds. False where not sure (the caller solves)."""
    shape = tr.shape
    out = np.zeros(tr.size, dtype=bool)
    trf, vff, omf = tr.reshape(-1), vf.reshape(-1), omega.reshape(-1)
    a = omf / OMEGA_REFERENCE
    sure = cand.reshape(-1) & (((a >= 0.0) & (a <= 1.0)) | ((trf >= _MONOTONE_TR) & (a >= _MONOTONE_A) & (a < 0.0)))
    k = np.flatnonzero(sure)
    if k.size == 0:
        return out.reshape(shape)
    t = trf[k]
    cap = np.full(k.size, _PR_HI)
    sub = t < 1.0
    if sub.any():
        cap[sub] = np.minimum(lee_kesler_vapour_pressure(t[sub], omf[k][sub]), _PR_HI)
    _z, v0, vr, _dv0, _dvr, no_root, not_conv, ak = _z_core(t, cap, omf[k], np.ones(k.size, dtype=bool))
    mix = (1.0 - ak) * v0 + ak * vr
    out[k] = ~no_root & ~not_conv & (mix > vff[k] * (1.0 + _NO_GAS_MARGIN))
    return out.reshape(shape)


@np.errstate(divide="ignore", invalid="ignore", over="ignore")
def lee_kesler_pressure(molar_density, temperature, tc, pc, omega) -> GeneralizedState:
    """Absolute pressure [Pa] of the gas at fixed molar density [mol/m3] and temperature [K].

    Solves P = Z(T/T_c, P/P_c, omega) rho R T (LK eq. 1–5) for P. With V_r = P_c/(rho R T_c)
    the reduced ideal volume of the gas, this is the condition
    (1 - a) V0(P_r) + a V_ref(P_r) = V_r, a = omega/omega_r, where V0, V_ref are the gas
    roots of the two LK fluids at (T_r, P_r). It is solved for P_r first by a Newton on P_r and
    both roots together (:func:`_newton_reduced_pressure`), accepted where its roots are the
    cold-started gas roots at the result; elsewhere by a bracketed Newton on P_r alone (analytic
    derivative dV_i/dP_r = -V_i^2 / (dP_r/drho_i)), bisection as the fallback. Both to 1e-12
    relative in P_r; the two agree to round-off where both settle.

    Parameters: ``molar_density`` [mol/m3], ``temperature`` [K], ``tc`` [K], ``pc`` [Pa],
    ``omega`` [-]; arrays broadcast together.
    Validity: 0.3 <= T_r <= 4 and 0 < P_r <= 10 at the solution, gas states only; others
    are flagged per element (NaN with valid=False and the reason).

    >>> s = lee_kesler_pressure(40.6, 300.0, 126.192, 3.3958e6, 0.0372)  # nitrogen near 1 atm
    >>> round(float(s.pressure) / 1e5, 3), bool(s.valid)
    (1.012, True)
    """
    return _pressure(molar_density, temperature, tc, pc, omega)


@np.errstate(divide="ignore", invalid="ignore", over="ignore")
def lee_kesler_pressure_valid(molar_density, temperature, tc, pc, omega) -> tuple[np.ndarray, np.ndarray]:
    """(pressure [Pa], valid) as :func:`lee_kesler_pressure` gives them (the same numbers and validity, bit for
    bit), for a solver that evaluates it many times and reads only these. A state that has no gas state of the
    model up to the highest pressure one can have (:func:`_no_gas_state_up_to_cap`) is refused without the
    bracketed solve that would find its reduced pressure (above 10, or above the vapour pressure), which only
    its reason in words uses.

    >>> p, ok = lee_kesler_pressure_valid(40.6, 300.0, 126.192, 3.3958e6, 0.0372)   # nitrogen near 1 atm
    >>> bool(ok), bool(p == lee_kesler_pressure(40.6, 300.0, 126.192, 3.3958e6, 0.0372).pressure)
    (True, True)
    """
    s = _pressure(molar_density, temperature, tc, pc, omega, sure_none=True)
    return s.pressure, s.valid


def _pressure(molar_density, temperature, tc, pc, omega, sure_none: bool = False) -> GeneralizedState:
    """:func:`lee_kesler_pressure`; `sure_none`: the states :func:`_no_gas_state_up_to_cap` finds are refused
    without their bracketed solve (their reasons and reduced pressures are then not those of
    :func:`lee_kesler_pressure`: for :func:`lee_kesler_pressure_valid` only), and from _ONE_ROOT_TR up the
    coupled Newton's densities are not checked against the cold-started gas roots (there they are those)."""
    rho, t, tc, pc, omega = _state_arrays(molar_density, "molar density", "[mol/m3]", temperature, tc, pc, omega)
    tr = t / tc
    vf = pc / (rho * R * tc)          # reduced ideal volume of the gas [-]
    if not (tr.ndim == 1 and 0 < tr.size <= _SCALAR_MAX):
        return _pressure_arrays(rho, t, pc, omega, tr, vf, sure_none=sure_none)
    # element by element; the array path (and its reasons) only for the elements that need it
    prs, zs, failed, newton = _pressure_few(tr, vf, omega, one_root=sure_none)
    pr_final, z = np.array(prs), np.array(zs)
    p, rho = pr_final * pc, rho.copy()
    reason = np.full(tr.shape, "", dtype=object)
    valid = reason == ""
    if failed:
        sub = _pressure_arrays(rho[failed], t[failed], pc[failed], omega[failed], tr[failed], vf[failed], newton,
                               sure_none)
        p[failed], rho[failed], z[failed], pr_final[failed] = (sub.pressure, sub.molar_density, sub.z,
                                                               sub.reduced_pressure)
        valid[failed], reason[failed] = sub.valid, sub.reason
    return GeneralizedState(pressure=p, molar_density=rho, z=z, reduced_temperature=tr, reduced_pressure=pr_final,
                            valid=valid, reason=reason)


def _pressure_arrays(rho, t, pc, omega, tr, vf, newton: tuple | None = None,
                     sure_none: bool = False) -> GeneralizedState:
    """:func:`lee_kesler_pressure` on arrays of one shape (already checked), with T_r and the reduced ideal
    volume V_r given; `newton`: what :func:`_newton_reduced_pressure` gives for them, if already known;
    `sure_none`: as :func:`_pressure` takes it."""
    outside = _range_reasons(tr, None)
    active = outside == ""

    # The coupled Newton first; where it does not settle, or settles off the gas branch (its roots
    # differ from the cold-started gas roots of the check below), the bracketed solve decides.
    fast_pr, fast_v0, fast_vr, fast = newton or _newton_reduced_pressure(tr, vf, omega, active)
    a_f = omega / OMEGA_REFERENCE
    solve = active & ~fast
    if sure_none and solve.any():
        # no gas state of the model at this density: not solved, so not converged (refused)
        solve &= ~_no_gas_state_up_to_cap(tr, vf, omega, solve)
    pr, converged, above_cap = _solve_reduced_pressure(tr, vf, omega, solve)
    pr = np.where(fast, fast_pr, pr)
    converged = converged | fast
    while True:
        reason = outside.copy()
        # Final, independent evaluation at the converged P_r: the cold-started gas root must
        # reproduce the density (guards against the solve having followed another branch).
        pr_final = np.where(active & converged & ~above_cap, pr, np.nan)
        _range = _range_reasons(tr, pr_final, temperatures=False)   # T_r outside: already in `reason`
        reason = np.where(reason == "", _range, reason)
        _set_reasons(reason, active & above_cap, lambda i: (
            f"reduced pressure is above {_fmt(_PR_SOLVE_MAX)}, beyond the Lee–Kesler range ({_RANGE_TEXT_PR})"))
        check = (reason == "") & np.isfinite(pr_final)
        # sure_none: from _ONE_ROOT_TR up a settled coupled Newton's densities are the gas roots (one root each)
        one = (check & fast & (tr >= _ONE_ROOT_TR) & (np.abs((1.0 - a_f) * fast_v0 + a_f * fast_vr - vf) <= 1e-9 * vf)
               if sure_none else np.zeros(tr.shape, dtype=bool))
        cold = check & ~one
        z, v0, vr, _dv0, _dvr, no_root, not_conv, a = _z_core(tr, np.where(cold, pr_final, 1.0), omega, cold)
        if one.any():
            z, v0, vr = (np.where(one, pr_final * vf / tr, z), np.where(one, fast_v0, v0),
                         np.where(one, fast_vr, vr))
        off = fast & ~(check & ~no_root & ~not_conv & (np.abs(v0 - fast_v0) <= 1e-9 * fast_v0)
                       & (np.abs(vr - fast_vr) <= 1e-9 * fast_vr))
        if not off.any():
            break
        fast = fast & ~off
        pr_s, converged_s, above_cap_s = _solve_reduced_pressure(tr, vf, omega, off)
        pr, converged, above_cap = (np.where(off, pr_s, pr), np.where(off, converged_s, converged),
                                    np.where(off, above_cap_s, above_cap))
    mix_v = (1.0 - a) * v0 + a * vr
    edge = not_conv & (tr < 1.0)      # slow inner solve at the end of the vapour branch
    mismatch = check & (~not_conv | edge) & (no_root | edge | ~(np.abs(mix_v - vf) <= 1e-9 * vf))
    _set_reasons(reason, mismatch, lambda i: (
        f"no gas state at temperature {_fmt(t[i])} K (reduced {_fmt(tr[i])}) and molar density "
        f"{_fmt(rho[i])} mol/m3: at this density the Lee–Kesler fluid is liquid-like or two-phase"))
    _flag_gas_state(reason, tr, np.where(np.isfinite(pr_final), pr_final, pr), omega, no_root & check,
                    (not_conv & check) | (active & ~converged & ~above_cap))
    valid = reason == ""
    p = np.where(valid, pr_final * pc, np.nan)
    return GeneralizedState(
        pressure=p, molar_density=np.where(valid, rho, np.nan), z=np.where(valid, z, np.nan),
        reduced_temperature=tr, reduced_pressure=np.where(mismatch, np.nan, pr_final), valid=valid,
        reason=reason)


def quantum_effective_critical(tc_classical, pc_classical, molar_mass, temperature):
    """Effective critical temperature [K] and pressure [Pa] of a quantum gas at temperature [K].

    Gunn, Chueh & Prausnitz, AIChE J. 1966, 12, 937, as given in Reid, Prausnitz &
    Poling, The Properties of Gases and Liquids (constants 21.8 and 44.2; not independently
    checked here)::

        T_c = T_c0 / (1 + 21.8 / (M T)),   P_c = P_c0 / (1 + 44.2 / (M T)),  M in g/mol, T in K

    Parameters: ``tc_classical`` T_c0 [K], ``pc_classical`` P_c0 [Pa], ``molar_mass``
    [kg/mol] (converted to g/mol inside), ``temperature`` [K]; arrays broadcast.
    Valid for H2, He and Ne with their classical constants (T_c0, P_c0), at temperatures
    where the gas is far from quantum degeneracy (the screening's range, above ~20 K).

    >>> tc, pc = quantum_effective_critical(43.6, 20.5e5, 2.016e-3, 300.0)  # hydrogen
    >>> round(float(tc), 3), round(float(pc) / 1e5, 3)
    (42.083, 19.104)
    """
    tc0 = _as_float_array(tc_classical, "classical critical temperature")
    pc0 = _as_float_array(pc_classical, "classical critical pressure")
    m = _as_float_array(molar_mass, "molar mass")
    t = _as_float_array(temperature, "temperature")
    _require_positive_finite(tc0, "classical critical temperature", "[K]")
    _require_positive_finite(pc0, "classical critical pressure", "[Pa]")
    _require_positive_finite(m, "molar mass", "[kg/mol]")
    _require_positive_finite(t, "temperature", "[K]")
    mt = (m * 1000.0) * t   # [g/mol K]
    return tc0 / (1.0 + _GCP_TC / mt), pc0 / (1.0 + _GCP_PC / mt)


def kay_pseudocritical(fractions, tc, pc, omega):
    """Kay's rule: mole-fraction averages of T_c [K], P_c [Pa] and omega [-].

    Kay, W. B. Ind. Eng. Chem. 1936, 28, 1014: T_pc = sum y_i T_c,i, P_pc = sum y_i P_c,i;
    omega_m = sum y_i omega_i (the usual companion rule for the acentric factor).
    Components along the last axis; ``fractions`` [-] must lie in [0, 1] and sum to 1
    (to 1e-6). Returns (tc_pc, pc_pc, omega_m), arrays over the leading axes.

    >>> kay_pseudocritical([0.5, 0.5], [100.0, 200.0], [1e6, 3e6], [0.0, 0.2])
    (150.0, 2000000.0, 0.1)
    """
    y = _as_float_array(fractions, "mole fractions")
    tc = _as_float_array(tc, "critical temperature")
    pc = _as_float_array(pc, "critical pressure")
    omega = _as_float_array(omega, "acentric factor")
    if y.ndim == 0:
        raise InputError("mole fractions must be given along a component axis", given=float(y),
                         expected="an array of fractions, components along the last axis")
    _require_finite(y, "mole fractions")
    if np.any((y < 0.0) | (y > 1.0)):
        raise InputError("mole fractions must lie between 0 and 1", given=y.tolist(), expected="0 <= y <= 1")
    total = y.sum(axis=-1)
    if np.any(np.abs(total - 1.0) > 1e-6):
        bad = np.atleast_1d(total)[np.abs(np.atleast_1d(total) - 1.0) > 1e-6][0]
        raise InputError("mole fractions must sum to 1", given=float(bad), expected="sum of fractions = 1")
    _require_positive_finite(tc, "critical temperature", "[K]")
    _require_positive_finite(pc, "critical pressure", "[Pa]")
    _require_finite(omega, "acentric factor")
    y, tc, pc, omega = np.broadcast_arrays(y, tc, pc, omega)
    out = ((y * tc).sum(axis=-1), (y * pc).sum(axis=-1), (y * omega).sum(axis=-1))
    if out[0].ndim == 0:
        return tuple(float(v) for v in out)
    return out


def pseudocritical(fractions, tc, pc, omega, molar_mass, quantum, tc_classical, pc_classical, temperature):
    """Pseudocritical T_c [K], P_c [Pa] and omega [-] of a gas or mixture at temperature [K].

    Per component: quantum components (``quantum`` True: H2, He, Ne) get the effective
    constants of :func:`quantum_effective_critical` at the temperature and omega = 0 (Reid,
    Prausnitz & Poling's recommendation for quantum gases); the others keep (tc, pc, omega).
    Then Kay's rule (:func:`kay_pseudocritical`). Components along the last axis
    (``fractions``, ``tc`` [K], ``pc`` [Pa], ``omega`` [-], ``molar_mass`` [kg/mol],
    ``quantum`` bool, ``tc_classical`` [K], ``pc_classical`` [Pa]); ``temperature`` [K]
    broadcasts over the leading axes. Entries of tc_classical/pc_classical for
    non-quantum components are ignored (may be NaN).

    >>> tc, pc, w = pseudocritical([1.0], [33.145], [1.2964e6], [-0.219], [2.016e-3], [True],
    ...                            [43.6], [20.5e5], 300.0)   # hydrogen at 300 K
    >>> round(float(tc), 3), round(float(w), 3)
    (42.083, 0.0)
    """
    q = np.asarray(quantum, dtype=bool)
    t = _as_float_array(temperature, "temperature")
    _require_positive_finite(t, "temperature", "[K]")
    tc = _as_float_array(tc, "critical temperature")
    pc = _as_float_array(pc, "critical pressure")
    omega = _as_float_array(omega, "acentric factor")
    m = _as_float_array(molar_mass, "molar mass")
    tcc = _as_float_array(tc_classical, "classical critical temperature")
    pcc = _as_float_array(pc_classical, "classical critical pressure")
    tcc, pcc, m, q_b = np.broadcast_arrays(tcc, pcc, m, q)
    tcc = np.where(q_b, tcc, 1.0)
    pcc = np.where(q_b, pcc, 1.0)
    m_safe = np.where(q_b, m, 1.0)
    tq, pq = quantum_effective_critical(tcc, pcc, m_safe, t[..., None])
    tq, q2 = np.broadcast_arrays(tq, q)
    tc_eff = np.where(q2, tq, tc)
    pc_eff = np.where(q2, pq, pc)
    w_eff = np.where(q2, 0.0, omega)
    y = _as_float_array(fractions, "mole fractions")
    y = np.broadcast_to(y, tc_eff.shape)
    return kay_pseudocritical(y, tc_eff, pc_eff, w_eff)


# --------------------------------------------------------------------------- quantum gases above the LK range

#: [K] temperatures over which the quantum-gas SRK model's error was measured (-40 to +150 degC).
SRK_QUANTUM_TEMPERATURE_RANGE = (233.15, 423.15)
#: [Pa] highest absolute pressure at which the quantum-gas SRK model's error was measured (1 000 bar).
SRK_QUANTUM_PRESSURE_MAX = 1.0e8
#: [-] largest |Z / Z_reference - 1| measured per gas over that range (see srk_quantum_pressure).
SRK_QUANTUM_Z_ERROR = {"hydrogen": 0.013, "helium": 0.023, "neon": 0.034}

# exact values of Soave's 0.42748 and 0.08664: 1 / (9 (2^(1/3) - 1)) and (2^(1/3) - 1) / 3
_SRK_OMEGA_A = 1.0 / (9.0 * (2.0 ** (1.0 / 3.0) - 1.0))
_SRK_OMEGA_B = (2.0 ** (1.0 / 3.0) - 1.0) / 3.0
_SRK_MAX_NEWTON = 100


def _srk_constants(temperature, tc_classical, pc_classical, molar_mass):
    tc, pc = quantum_effective_critical(tc_classical, pc_classical, molar_mass, temperature)
    # omega = 0 with the effective constants (Reid, Prausnitz & Poling's advice for quantum gases):
    # m = 0.480, alpha = (1 + 0.480 (1 - sqrt(T_r)))^2
    tr = temperature / tc
    alpha = (1.0 + 0.480 * (1.0 - np.sqrt(tr))) ** 2
    a = _SRK_OMEGA_A * (R * tc) ** 2 / pc * alpha
    b = _SRK_OMEGA_B * R * tc / pc
    return a, b, tc, pc


def _srk_domain(t: np.ndarray, p: np.ndarray) -> np.ndarray:
    """Reasons ('' inside) for states outside the measured domain of the quantum-gas SRK model."""
    lo, hi = SRK_QUANTUM_TEMPERATURE_RANGE
    reason = np.full(np.broadcast(t, p).shape, "", dtype=object)
    t_b, p_b = np.broadcast_arrays(t, p)
    bad_t = ~((t_b >= lo) & (t_b <= hi))
    bad_p = ~(np.isfinite(p_b) & (p_b > 0.0) & (p_b <= SRK_QUANTUM_PRESSURE_MAX))
    _set_reasons(reason, bad_t, lambda i: (f"temperature {_fmt(t_b[i])} K is outside the range where the "
                                           f"quantum-gas model was checked ({lo:g} K to {hi:g} K)"))
    _set_reasons(reason, bad_p, lambda i: (f"pressure {_fmt(p_b[i] / 1e5)} bar(a) is outside the range where the "
                                           "quantum-gas model was checked (up to 1000 bar)"))
    return reason


def srk_quantum_pressure(molar_density, temperature, tc_classical, pc_classical, molar_mass) -> GeneralizedState:
    """Pressure [Pa] of a quantum gas (H2, He, Ne) by the Soave–Redlich–Kwong equation with the
    Gunn–Chueh–Prausnitz effective critical constants, at molar density [mol/m3] and temperature [K].

    Soave, G. "Equilibrium constants from a modified Redlich–Kwong equation of state." Chem. Eng. Sci.
    1972, 27, 1197–1203, doi:10.1016/0009-2509(72)80096-4::

        P = R T / (v - b) - a alpha(T_r) / (v (v + b)),  a = 0.42748 R^2 T_c^2 / P_c,  b = 0.08664 R T_c / P_c
        alpha = (1 + m (1 - sqrt(T_r)))^2,  m = 0.480 + 1.574 omega - 0.176 omega^2

    with T_c, P_c the effective constants of :func:`quantum_effective_critical` at the temperature and
    omega = 0. Arguments: ``tc_classical`` [K], ``pc_classical`` [Pa], ``molar_mass`` [kg/mol] of the
    gas (its classical constants, as for the Lee–Kesler model).

    Used where the Lee–Kesler tables end (reduced temperature above 4: hydrogen, helium and neon at every
    cylinder temperature) for a pure quantum gas only. Validity, as measured: 233.15 K to 423.15 K
    (-40 to +150 degC), absolute pressure up to 1000 bar; outside, ``valid`` is False with the reason.
    Error bound, measured on 2026-12-03 against the reference equations through CoolProp 8.0.0 (Leachman et
    al. 2009 for normal hydrogen, Ortiz-Vega et al. 2019 for helium, Katti et al. 1986 for neon) on a grid
    of 8 temperatures x 21 pressures (1 to 1000 bar) over that range: |Z / Z_ref - 1| at most 1.3 %
    (hydrogen), 2.3 % (helium), 3.4 % (neon) — :data:`SRK_QUANTUM_Z_ERROR`; within 0.5 % (H2), 1.3 % (He)
    and 0.6 % (Ne) up to 200 bar. Mixtures are not covered: with Kay's rule the error reached 9 % for
    heliox and 19 % for argon + 75 % helium, so they keep the Lee–Kesler answer (not applicable there).

    >>> s = srk_quantum_pressure(20000.0, 300.0, 43.6, 2077162.5, 2.01588e-3)   # hydrogen
    >>> round(float(s.pressure[()]) / 1e5, 1), bool(s.valid[()])
    (723.1, True)
    """
    rho = _as_float_array(molar_density, "molar density")
    t = _as_float_array(temperature, "temperature")
    _require_positive_finite(rho, "molar density", "[mol/m3]")
    _require_positive_finite(t, "temperature", "[K]")
    rho, t = np.broadcast_arrays(rho, t)
    a, b, tc, pc = _srk_constants(t, tc_classical, pc_classical, molar_mass)
    v = 1.0 / rho
    with np.errstate(divide="ignore", invalid="ignore"):
        p = np.where(v > b, R * t / (v - b) - a / (v * (v + b)), np.nan)
    return _srk_state(p, rho, p / (rho * R * t), t, tc, pc, _srk_domain(t, p))


def srk_quantum_density(pressure, temperature, tc_classical, pc_classical, molar_mass) -> GeneralizedState:
    """Molar density [mol/m3] of a quantum gas at pressure [Pa] and temperature [K] by the model of
    :func:`srk_quantum_pressure` (same equation, validity and error bound).

    The largest real root of the SRK cubic in Z, Z^3 - Z^2 + (A - B - B^2) Z - A B = 0 (A = a alpha P /
    (R T)^2, B = b P / (R T)), by Newton steps started above the Cauchy bound of the roots: the cubic is
    convex there, so the steps fall monotonically onto the largest root (at most 100 steps).

    >>> p = srk_quantum_pressure(20000.0, 300.0, 43.6, 2077162.5, 2.01588e-3).pressure   # hydrogen
    >>> round(float(srk_quantum_density(p, 300.0, 43.6, 2077162.5, 2.01588e-3).molar_density[()]), 6)
    20000.0
    """
    p = _as_float_array(pressure, "pressure")
    t = _as_float_array(temperature, "temperature")
    _require_positive_finite(p, "pressure", "[Pa]")
    _require_positive_finite(t, "temperature", "[K]")
    p, t = np.broadcast_arrays(p, t)
    a, b, tc, pc = _srk_constants(t, tc_classical, pc_classical, molar_mass)
    A = a * p / (R * t) ** 2
    B = b * p / (R * t)
    c1 = A - B - B * B
    c0 = -A * B
    z = 1.0 + np.maximum(1.0, np.maximum(np.abs(c1), np.abs(c0))) + 1.0
    if z.ndim == 1 and z.size <= _SCALAR_MAX_NEWTON:
        z, converged = _srk_newton_few(z, c1, c0)
    else:
        z, converged = _srk_newton(z, c1, c0)
    reason = _srk_domain(t, p)
    _set_reasons(reason, ~converged, lambda i: "the quantum-gas model's root did not converge")
    return _srk_state(p, p / (z * R * t), z, t, tc, pc, reason)


def _srk_state(p, rho, z, t, tc, pc, reason: np.ndarray) -> GeneralizedState:
    """The quantum-gas model's state of pressures p [Pa], molar densities rho [mol/m3] and Z at t [K] (its
    critical constants tc, pc): NaN where `reason` says why the model does not apply there."""
    valid = reason == ""
    return GeneralizedState(
        pressure=np.where(valid, p, np.nan), molar_density=np.where(valid, rho, np.nan),
        z=np.where(valid, z, np.nan), reduced_temperature=t / tc, reduced_pressure=p / pc, valid=valid,
        reason=reason)


def _srk_newton(z: np.ndarray, c1: np.ndarray, c0: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Newton steps on the SRK cubic from z until every element's step is below 1e-14 relative (all elements
    step together). Returns (z, converged)."""
    converged = np.zeros(z.shape, dtype=bool)
    for _ in range(_SRK_MAX_NEWTON):
        f = ((z - 1.0) * z + c1) * z + c0
        d = (3.0 * z - 2.0) * z + c1
        step = f / d
        z = z - step
        converged = np.abs(step) <= 1e-14 * z
        if np.all(converged):
            break
    return z, converged


def _srk_newton_few(z: np.ndarray, c1: np.ndarray, c0: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """:func:`_srk_newton` of a few elements (1-d) on floats, the same steps in the same lockstep (every element
    steps until all have converged), bit for bit."""
    zl, c1l, c0l = z.tolist(), c1.tolist(), c0.tolist()
    conv = [False] * len(zl)
    for _ in range(_SRK_MAX_NEWTON):
        done = True
        for k, (zk, c1k, c0k) in enumerate(zip(zl, c1l, c0l)):
            f = ((zk - 1.0) * zk + c1k) * zk + c0k
            d = (3.0 * zk - 2.0) * zk + c1k
            step = _div(f, d)
            zk = zk - step
            zl[k] = zk
            conv[k] = c = abs(step) <= 1e-14 * zk
            done = done and c
        if done:
            break
    return np.array(zl), np.array(conv, dtype=bool)
