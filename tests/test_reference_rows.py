"""The reference model's array methods (`pressures`, `states`, `isochore_slopes`) against its checked path.

For a pure fluid the array methods recognise the states that pass every check on a fast path
(`ReferenceFluid._evaluate_rows`) and hand every other state to `_evaluate`, which says why it is refused.
These tests ask both on the same states, good and bad, and want the same numbers bit for bit, the same phase
words, valid flags and reasons. Where the states are good, the pressures and the two-phase flags are also
checked against CoolProp's high-level PropsSI, evaluated here (a separate call path with its own state).
"""

from __future__ import annotations

import math

import CoolProp
import CoolProp.CoolProp as CP
import numpy as np
import pytest

from screening.errors import NotApplicable
from screening.physics.eos.reference import ReferenceFluid, reference_fluid

#: Pure fluids of CoolProp's library: permanent, noble, quantum and liquefiable gases, and water.
FLUIDS = ["Nitrogen", "Krypton", "CarbonDioxide", "Propane", "Hydrogen", "Water"]

NAN, INF = math.nan, math.inf


def _states(f: ReferenceFluid, n: int, seed: int) -> tuple[np.ndarray, np.ndarray]:
    """Random states of a pure fluid, most of them refused somewhere: densities and temperatures that are not
    numbers, not positive or outside the range, pressures above the equation's range, states inside the dome,
    and the exact edges of every comparison (range ends, critical temperature and density)."""
    rng = np.random.default_rng(seed)
    a = f._state
    t_low = max(f.t_min, f.triple_temperature)
    a.update(CoolProp.QT_INPUTS, 0.0, t_low)
    rho_top = a.rhomolar()                           # saturated liquid at the bottom of the range
    rho = list(rng.uniform(0.0, 1.4 * rho_top, n))   # the densest ones above the equation's pressure range
    T = list(rng.uniform(f.t_min - 0.1 * f.t_min, min(f.t_max * 1.05, 4.0 * f.critical_temperature), n))
    # below the critical temperature: vapour, inside the dome (between the saturated vapour and liquid
    # densities) and liquid
    for t in rng.uniform(t_low, f.critical_temperature, n // 4):
        a.update(CoolProp.QT_INPUTS, 0.0, t)
        rl = a.rhomolar()
        a.update(CoolProp.QT_INPUTS, 1.0, t)
        rv = a.rhomolar()
        rho += [rng.uniform(0.0, rv), rng.uniform(rv, rl), rng.uniform(rl, 1.05 * rl)]
        T += [t, t, t]
    tc, rc = f.critical_temperature, f.critical_molar_density
    edges = [(rc, tc), (rc, f.t_min), (rc, f.t_max), (0.5 * rc, tc), (2.0 * rc, tc), (rc, 1.01 * tc),
             (rc, np.nextafter(tc, 0.0)), (np.nextafter(rc, INF), 0.99 * tc), (1.0, np.nextafter(f.t_min, 0.0)),
             (1.0, np.nextafter(f.t_max, INF)), (1e-300, 300.0), (5e-324, 300.0)]
    bad = [(-1.0, 300.0), (0.0, 300.0), (-0.0, 300.0), (NAN, 300.0), (INF, 300.0), (-INF, 300.0),
           (100.0, NAN), (100.0, INF), (100.0, -INF), (100.0, -5.0), (100.0, 0.0), (NAN, NAN)]
    for r, t in edges + bad:
        rho.append(r)
        T.append(t)
    order = rng.permutation(len(rho))
    return np.asarray(rho, dtype=float)[order], np.asarray(T, dtype=float)[order]


def _checked(f: ReferenceFluid, rho: np.ndarray, T: np.ndarray):
    """Each state through `_evaluate` alone: (pressures, phase words, reasons, valid, slopes as
    `isochore_slopes` reads them)."""
    p, words, reasons, valid, slopes = [], [], [], [], []
    a = f._state
    with f._lock:
        for r, t in zip(rho.tolist(), T.tolist()):
            try:
                pi, wi = f._evaluate(r, t)
            except NotApplicable as exc:
                p.append(NAN), words.append(None), reasons.append(exc.reason), valid.append(False)
                slopes.append(NAN)
                continue
            p.append(pi), words.append(wi), reasons.append(""), valid.append(True)
            try:
                slopes.append(a.first_saturation_deriv(CoolProp.iP, CoolProp.iT) if wi == "two-phase"
                              else a.first_partial_deriv(CoolProp.iP, CoolProp.iT, CoolProp.iDmolar))
            except ValueError:
                slopes.append(NAN)
    return np.array(p), words, reasons, np.array(valid), np.array(slopes)


def _where(f: ReferenceFluid):
    """Where the fluid's state stands, as far as CoolProp tells (the last state evaluated)."""
    a = f._state
    try:
        return a.T(), a.rhomolar(), a.p()
    except ValueError as exc:
        return str(exc)


def _same_bits(x: np.ndarray, y: np.ndarray) -> bool:
    x, y = np.asarray(x, dtype=float), np.asarray(y, dtype=float)
    return x.shape == y.shape and x.tobytes() == y.tobytes()


def _assert_rows_are_the_checked_path(f: ReferenceFluid, rho: np.ndarray, T: np.ndarray) -> None:
    want_p, want_words, want_reasons, want_valid, want_slopes = _checked(f, rho, T)
    where_checked = _where(f)

    p, valid, reasons = f.pressures(rho, T)
    assert _same_bits(p, want_p)
    assert valid.dtype == bool and valid.tolist() == want_valid.tolist()
    assert reasons.tolist() == want_reasons
    assert _where(f) == where_checked          # the state is left where the checked path leaves it

    p, phases, valid = f.states(rho, T)
    assert _same_bits(p, want_p)
    assert phases.dtype == object and phases.tolist() == want_words
    assert valid.tolist() == want_valid.tolist()
    assert _where(f) == where_checked

    p, d = f.isochore_slopes(rho, T)
    assert _same_bits(p, np.where(np.isnan(want_slopes), NAN, want_p))
    assert _same_bits(d, want_slopes)

    # broadcast and two-dimensional, as `pressures` takes them
    p2, v2, r2 = f.pressures(rho[:12].reshape(3, 4), T[:12].reshape(3, 4))
    assert p2.shape == v2.shape == r2.shape == (3, 4)
    assert _same_bits(p2.ravel(), want_p[:12]) and r2.ravel().tolist() == want_reasons[:12]
    p1, v1, r1 = f.pressures(rho[:5], T[0])
    assert _same_bits(p1, _checked(f, rho[:5], np.full(5, T[0]))[0])


@pytest.mark.parametrize("name", FLUIDS)
def test_array_methods_give_the_checked_paths_answers(name):
    f = ReferenceFluid((name,), (1.0,))
    assert f._rows_fast
    rho, T = _states(f, 2000, seed=sum(name.encode()))
    want_valid = _checked(f, rho, T)[3]
    # the states cover good ones of every phase and refusals of every kind checked
    words = set(f.states(rho, T)[1].tolist())
    assert {"gas", "liquid", "supercritical", "two-phase", None} <= words, words
    reasons = " ".join(f.pressures(rho, T)[2].tolist())
    assert "outside the range" in reasons and "molar density must be finite and positive" in reasons
    if name != "Hydrogen" and name != "Nitrogen":   # their ranges reach 2000 and 2200 MPa
        assert "above the range" in reasons
    assert 0 < want_valid.sum() < want_valid.size
    _assert_rows_are_the_checked_path(f, rho, T)


@pytest.mark.parametrize("name", FLUIDS)
def test_good_states_take_the_fast_path_and_agree_with_propssi(name):
    f = ReferenceFluid((name,), (1.0,))
    rho, T = _states(f, 300, seed=7 + len(name))
    calls = []
    checked = f._evaluate

    def counted(r, t):
        calls.append((r, t))
        return checked(r, t)

    f._evaluate = counted           # this instance only (not the cached fluid)
    p, phases, valid = f.states(rho, T)
    # only the refused states went through the checked path
    assert len(calls) == int((~valid).sum())
    for r, t, pi, w in zip(rho[valid].tolist(), T[valid].tolist(), p[valid].tolist(), phases[valid].tolist()):
        # source: CoolProp's PropsSI at the same (molar density, temperature), its own state and call path
        assert pi == pytest.approx(CP.PropsSI("P", "Dmolar", r, "T", t, name), rel=1e-12, abs=0.0)
        two = CP.PropsSI("Phase", "Dmolar", r, "T", t, name) == CoolProp.iphase_twophase
        assert two == (w == "two-phase")
        if not two:
            # source: CoolProp's critical temperature and density (PropsSI) name the one-phase states
            tc, rc = CP.PropsSI("Tcrit", name), CP.PropsSI("rhomolar_critical", name)
            assert w == ("supercritical" if t >= tc else "liquid" if r > rc else "gas")


def test_the_cached_fluid_and_empty_calls():
    f = reference_fluid(("Krypton",), (1.0,))
    rho, T = _states(f, 100, seed=3)
    _assert_rows_are_the_checked_path(f, rho, T)
    p, v, r = f.pressures(np.empty(0), np.empty(0))
    assert p.shape == v.shape == r.shape == (0,) and v.dtype == bool
    p, ph, v = f.states(np.empty(0), np.empty(0))
    assert p.shape == ph.shape == v.shape == (0,)
    p, d = f.isochore_slopes(np.empty(0), np.empty(0))
    assert p.shape == d.shape == (0,)


def test_pseudo_pure_from_its_maxcondentherm_and_mixtures_on_the_checked_path():
    air = reference_fluid(("Air",), (1.0,))
    assert air.is_pseudo_pure and air._rows_fast
    # below its maxcondentherm a pseudo-pure fluid is refused: those states go to the checked path, which says so
    assert air._rows_t_min == max(air.t_min, air.critical_temperature) > air.t_min
    rng = np.random.default_rng(11)
    rho = np.concatenate([rng.uniform(1.0, 20000.0, 200), [NAN, -1.0]])
    T = np.concatenate([rng.uniform(60.0, 400.0, 200), [300.0, 300.0]])   # some below its maxcondentherm
    _assert_rows_are_the_checked_path(air, rho, T)
    p, phases, valid = air.states(rho, T)
    below = T < air.critical_temperature
    assert below.any() and not valid[below].any() and valid[~below].sum() > 100
    reasons = air.pressures(rho, T)[2]
    assert all("pseudo-pure" in r for r in reasons[below].tolist())
    for r, t, pi in zip(rho[valid].tolist(), T[valid].tolist(), p[valid].tolist()):
        # source: CoolProp's PropsSI for the air pseudo-pure fluid at the same (molar density, temperature)
        assert pi == pytest.approx(CP.PropsSI("P", "Dmolar", r, "T", t, "Air"), rel=1e-12, abs=0.0)
    assert set(phases[valid].tolist()) == {"supercritical"}
    mix = reference_fluid(("Argon", "CarbonDioxide"), (0.82, 0.18))
    assert not mix._rows_fast
    rho = np.array([400.0, 2000.0, NAN, 3000.0])
    T = np.array([300.0, 320.0, 300.0, 10.0])
    p, v, r = mix.pressures(rho, T)
    want_p, _w, want_r, want_v, _s = _checked(mix, rho, T)
    assert _same_bits(p, want_p) and v.tolist() == want_v.tolist() and r.tolist() == want_r


class _Altered:
    """A fluid's AbstractState whose answers are changed in chosen states (keyed by the molar density given to
    `update`), so that the refusals no real state of a pure fluid reaches here are asked too: a flash that
    fails, a pressure that is not a positive number or lies on the end of the range, a (dP/drho)_T that is not
    positive or not a number, a one-phase state at the critical density below the critical temperature."""

    def __init__(self, state, flash_fails=(), pressure=None, phase=None, slope=None, slope_raises=()):
        self._a = state
        self._phase = phase or {}
        self._flash_fails = set(flash_fails)
        self._pressure = pressure or {}
        self._slope = slope or {}
        self._slope_raises = set(slope_raises)
        self._rho = None

    def __getattr__(self, name):
        return getattr(self._a, name)

    def update(self, inputs, x, y):
        self._rho = x if inputs == CoolProp.DmolarT_INPUTS else None
        if self._rho in self._flash_fails:
            raise ValueError("altered state: no solution here")
        self._a.update(inputs, x, y)

    def p(self):
        return self._pressure.get(self._rho, self._a.p())

    def phase(self):
        return self._phase.get(self._rho, self._a.phase())

    def first_partial_deriv(self, of, wrt, constant):
        if (of, wrt, constant) == (CoolProp.iP, CoolProp.iDmolar, CoolProp.iT):
            if self._rho in self._slope_raises:
                raise ValueError("altered state: no derivative here")
            if self._rho in self._slope:
                return self._slope[self._rho]
        return self._a.first_partial_deriv(of, wrt, constant)


def _altered_nitrogen(**changes) -> ReferenceFluid:
    f = ReferenceFluid(("Nitrogen",), (1.0,))
    f._state = _Altered(f._state, **changes)
    return f


def test_refusals_of_coolprops_answers_are_the_checked_paths():
    n2 = reference_fluid(("Nitrogen",), (1.0,))
    p_max, rc = n2.p_max, n2.critical_molar_density
    above_rc = np.nextafter(rc, INF)
    rho = np.array([100.0, 200.0, 300.0, 400.0, 500.0, 600.0, 700.0, 800.0, 900.0, 1000.0, 1100.0, 1200.0, rc,
                    above_rc])
    T = np.full(rho.size, 250.0)
    T[-2:] = 120.0          # below the critical temperature (126.19 K), where the critical density is in the dome
    f = _altered_nitrogen(flash_fails=[200.0],
                          pressure={300.0: -1.0, 400.0: NAN, 500.0: INF, 600.0: 0.0, 700.0: p_max,
                                    800.0: np.nextafter(p_max, INF)},
                          slope={900.0: -2.0, 1000.0: 0.0, 1100.0: NAN, 1200.0: INF, rc: 1.0, above_rc: 1.0},
                          phase={rc: CoolProp.iphase_gas, above_rc: CoolProp.iphase_liquid})
    want_p, want_words, want_reasons, want_valid, _ = _checked(f, rho, T)
    assert want_valid.tolist() == [True] + [False] * 5 + [True] + [False] * 5 + [True, True]
    assert want_words[-2:] == ["gas", "liquid"]
    assert "density-temperature flash failed" in want_reasons[1] and "not a stable" in want_reasons[8]
    _assert_rows_are_the_checked_path(f, rho, T)
    # the good states, the one on the end of the pressure range among them, took the fast path
    calls = []
    checked = f._evaluate
    f._evaluate = lambda r, t: calls.append(r) or checked(r, t)
    f.states(rho, T)
    assert calls == rho[~want_valid].tolist()


def test_a_derivative_that_raises_does_so_on_both_paths():
    rho = np.array([100.0, 200.0, 300.0])
    T = np.full(3, 250.0)
    f = _altered_nitrogen(slope_raises=[200.0])
    with pytest.raises(ValueError), f._lock:
        f._evaluate(200.0, 250.0)
    with pytest.raises(ValueError):
        f.pressures(rho, T)
    with pytest.raises(ValueError):
        f.states(rho, T)
    # isochore_slopes skips the state, as it skips a slope that CoolProp cannot give
    p, d = f.isochore_slopes(rho, T)
    assert np.isnan(p[1]) and np.isnan(d[1]) and np.isfinite(p[[0, 2]]).all() and np.isfinite(d[[0, 2]]).all()


def _pt_states(f: ReferenceFluid, n: int, seed: int) -> tuple[np.ndarray, np.ndarray]:
    """Random (pressure, temperature) states of a pure fluid for its pressure-temperature flash: most above the
    critical temperature (the array method's fast path), some below it (vapour and liquid), at the vapour
    pressure, above the equation's pressure range, and values that are not numbers or not positive."""
    rng = np.random.default_rng(seed)
    tc = f.critical_temperature
    T = list(rng.uniform(tc, min(f.t_max * 1.02, 4.0 * tc), n)) + list(rng.uniform(max(f.t_min, 0.6 * tc), tc, n // 4))
    p = list(np.exp(rng.uniform(math.log(1e3), math.log(1.1 * f.p_max), len(T))))
    a = f._state
    for t in rng.uniform(max(f.t_min, f.triple_temperature or f.t_min, 0.7 * tc), 0.99 * tc, 5):
        if f.is_pseudo_pure:
            break
        a.update(CoolProp.QT_INPUTS, 0.0, t)
        p.append(a.p())                                          # the vapour pressure itself: refused
        T.append(t)
    edges = [(f.p_max, 1.5 * tc), (np.nextafter(f.p_max, INF), 1.5 * tc), (1e5, tc), (1e5, np.nextafter(tc, 0.0)),
             (1e5, f.t_max), (1e5, np.nextafter(f.t_max, INF)), (-1.0, 300.0), (0.0, 300.0), (NAN, 300.0),
             (INF, 300.0), (1e5, NAN), (1e5, -5.0), (1e5, INF)]
    for pi, ti in edges:
        p.append(pi)
        T.append(ti)
    order = rng.permutation(len(p))
    return np.asarray(p, dtype=float)[order], np.asarray(T, dtype=float)[order]


def _vapour_pressures(f: ReferenceFluid, p: np.ndarray, T: np.ndarray, seed: int) -> np.ndarray:
    """The vapour pressure at each temperature below the critical one, as a caller gives it to densities()
    (NaN elsewhere, and for some states: not known, or not a number); some states put on it."""
    rng = np.random.default_rng(seed)
    ps = np.full(T.shape, NAN)
    if f.is_pseudo_pure:
        return ps
    a = f._state
    for i, t in enumerate(T.tolist()):
        if max(f.t_min, f.triple_temperature) <= t < f.critical_temperature and rng.random() < 0.8:
            a.update(CoolProp.QT_INPUTS, 0.0, t)
            ps[i] = a.p()
            if rng.random() < 0.1:
                p[i] = ps[i] * (1.0 + rng.choice([0.0, 5e-10, -5e-10, 2e-9]))    # on and next to its band
    return ps


@pytest.mark.parametrize("name", FLUIDS + ["Air", "Helium", "Methane"])
def test_densities_give_the_checked_flash_state_by_state(name):
    f = ReferenceFluid((name,), (1.0,))
    p, T = _pt_states(f, 400, seed=sum(name.encode()) + 11)
    ps = _vapour_pressures(f, p, T, seed=len(name))
    want = []
    with f._lock:
        for pi, ti, si in zip(p.tolist(), T.tolist(), ps.tolist()):
            try:
                want.append(f._pure_density(pi, ti, si if math.isfinite(si) else None))
            except NotApplicable:
                want.append(None)
        where_checked = _where(f)
    rho, p_back, phases, valid = f.densities(p, T, ps)
    assert _where(f) == where_checked           # the state is left where the checked path leaves it
    assert valid.tolist() == [w is not None for w in want]
    assert 0 < valid.sum() < valid.size
    assert _same_bits(rho, [w[0] if w else NAN for w in want])
    assert _same_bits(p_back, [w[1] if w else NAN for w in want])
    assert phases.tolist() == [w[2] if w else None for w in want]
    # and as density() gives them one at a time
    for pi, ti, r in zip(p.tolist()[:60], T.tolist()[:60], rho.tolist()[:60]):
        try:
            got = f.density(pi, ti)
        except NotApplicable:
            got = NAN
        assert _same_bits([got], [r])
    if not f.is_pseudo_pure:                                 # liquid and gas below the critical temperature
        assert {"liquid", "gas"} <= set(phases[valid & (T < f.critical_temperature)].tolist())
    below = valid & (T < f.critical_temperature) & np.isfinite(ps) & (np.abs(p / ps - 1.0) > 1e-6) & (p < 1e8)
    compared = 0
    for pi, ti, r in zip(p[below].tolist(), T[below].tolist(), rho[below].tolist()):
        # source: CoolProp's PropsSI at the same pressure and temperature, off the vapour pressure (it refuses
        # the compressed liquid below its melting line, which the low-level state does not check)
        try:
            want_rho = CP.PropsSI("Dmolar", "P", pi, "T", ti, name)
        except ValueError as exc:
            assert "Tmelt" in str(exc)
            continue
        assert r == pytest.approx(want_rho, rel=1e-9)
        compared += 1
    assert f.is_pseudo_pure or compared > 20
    fast = valid & (T >= f.critical_temperature)             # the states of the fast path above Tc
    assert fast.sum() > 100
    for pi, ti, r in zip(p[fast].tolist(), T[fast].tolist(), rho[fast].tolist()):
        # source: CoolProp's PropsSI at the same pressure and temperature, its own state and call path
        assert r == pytest.approx(CP.PropsSI("Dmolar", "P", pi, "T", ti, name), rel=1e-9)
