"""States inside the saturation dome looked at through the saturation flash first (`ReferenceFluid._evaluate_rows`
with ``dome``: `pressures(..., dome=...)`, `states(..., dome=...)`) give what the density-temperature evaluation
gives, bit for bit: the same pressures, phase words, valid flags and reasons, on states inside the dome, next to
its boundary on either side, near the critical point, outside it and refused; and `pressures(..., why=False)` the
same pressures and valid flags without the refusals' reasons. The two-phase states it takes are
checked against CoolProp's high-level PropsSI, evaluated here (its own state and call path); and the liquefied-gas
columns, which ask for it where their states mostly lie inside the dome, are the same with it switched off."""

from __future__ import annotations

import math

import CoolProp
import CoolProp.CoolProp as CP
import numpy as np
import pytest
from test_liquefied_rows_at_once import _part, _same
from test_reference_rows import _same_bits, _states

from screening import engine
from screening.physics.eos import reference as _reference
from screening.physics.eos.reference import ReferenceFluid

#: Pure fluids of CoolProp's library filled as liquids or by mass (their reference equations).
FLUIDS = ["CarbonDioxide", "Chlorine", "Ethylene", "NitrousOxide", "n-Butane", "IsoButane", "Ethane", "Propane",
          "Ammonia", "Nitrogen", "Water"]

M = _reference._DOME_MARGIN


def _near_the_dome(f: ReferenceFluid, n: int, seed: int) -> tuple[np.ndarray, np.ndarray]:
    """States next to the dome's boundary on both sides of the margin (saturated densities from CoolProp's
    temperature-quality flash), at the critical density, near the critical temperature and below the triple
    point."""
    rng = np.random.default_rng(seed)
    a = f._state
    t_low = max(f.t_min, f.triple_temperature)
    tc, rc = f.critical_temperature, f.critical_molar_density
    rho, T = [], []
    temps = list(rng.uniform(t_low, tc, n)) + [t_low, np.nextafter(t_low, 0.0), _reference._DOME_T_MAX * tc,
                                               np.nextafter(_reference._DOME_T_MAX * tc, 0.0), 0.9999 * tc]
    for t in temps:
        try:
            a.update(CoolProp.QT_INPUTS, 0.0, max(t, t_low))
            rl = a.rhomolar()
            a.update(CoolProp.QT_INPUTS, 1.0, max(t, t_low))
            rv = a.rhomolar()
        except ValueError:
            continue
        for k in (0.5, 0.999, 1.0, 1.001, 2.0, 100.0):
            rho += [rl * (1.0 - k * M), rv * (1.0 + k * M)]
            T += [t, t]
        rho += [np.nextafter(rl * (1.0 - M), 0.0), np.nextafter(rv * (1.0 + M), math.inf), rc,
                np.nextafter(rc, 0.0), np.nextafter(rc, math.inf), rl, rv, 0.5 * (rl + rv)]
        T += [t] * 8
    order = rng.permutation(len(rho))
    return np.asarray(rho, dtype=float)[order], np.asarray(T, dtype=float)[order]


def _all_states(f: ReferenceFluid, seed: int) -> tuple[np.ndarray, np.ndarray]:
    rho1, t1 = _states(f, 600, seed=seed)
    rho2, t2 = _near_the_dome(f, 150, seed=seed + 1)
    order = np.random.default_rng(seed + 2).permutation(rho1.size + rho2.size)
    return np.concatenate([rho1, rho2])[order], np.concatenate([t1, t2])[order]


@pytest.mark.parametrize("name", FLUIDS)
def test_dome_states_equal_the_density_temperature_evaluations(name):
    f = ReferenceFluid((name,), (1.0,))
    rho, T = _all_states(f, seed=sum(name.encode()))
    want_p, want_v, want_r = f.pressures(rho, T)
    want_sp, want_ph, want_sv = f.states(rho, T)
    mask = np.random.default_rng(5).random(rho.size) < 0.5
    for dome in (True, mask):
        p, v, r = f.pressures(rho, T, dome=dome)
        assert _same_bits(p, want_p)
        assert v.tolist() == want_v.tolist() and r.tolist() == want_r.tolist()
        p, ph, v = f.states(rho, T, dome=dome)
        assert _same_bits(p, want_sp)
        assert ph.tolist() == want_ph.tolist() and v.tolist() == want_sv.tolist()
    # the reasons not asked for: the same pressures and valid flags, no reasons
    for dome in (False, True, mask):
        p, v, r = f.pressures(rho, T, dome=dome, why=False)
        assert _same_bits(p, want_p) and v.tolist() == want_v.tolist()
        # a reason only where CoolProp itself raised (the checked path answers those), and then the same one
        assert all(x in ("", y) for x, y in zip(r.tolist(), want_r.tolist()))
        assert sum(x != "" for x in r.tolist()) < 0.1 * (~want_v).sum()
    assert (~want_v).sum() > 20
    # broadcast and two-dimensional, with a mask of the same shape
    p2, v2, r2 = f.pressures(rho[:12].reshape(3, 4), T[:12].reshape(3, 4), dome=mask[:12].reshape(3, 4))
    assert _same_bits(p2.ravel(), want_p[:12]) and r2.ravel().tolist() == want_r[:12].tolist()
    p1, _v1, _r1 = f.pressures(rho[:5], T[0], dome=True)
    assert _same_bits(p1, f.pressures(rho[:5], np.full(5, T[0]))[0])
    # the states cover two-phase ones on both sides of the critical density
    two = want_ph == "two-phase"
    assert (two & (rho > f.critical_molar_density)).sum() > 50 and (two & (rho < f.critical_molar_density)).sum() > 50


class _Counting:
    """A fluid's AbstractState that counts the flashes asked of it by input pair."""

    def __init__(self, state) -> None:
        self._a = state
        self.pairs: list[int] = []

    def update(self, pair, x, y):
        self.pairs.append(pair)
        return self._a.update(pair, x, y)

    def __getattr__(self, name):
        return getattr(self._a, name)


@pytest.mark.parametrize("name", ["CarbonDioxide", "Chlorine", "n-Butane"])
def test_two_phase_states_take_one_saturation_flash_and_agree_with_propssi(name):
    f = ReferenceFluid((name,), (1.0,))
    rho, T = _near_the_dome(f, 200, seed=len(name))
    counting = _Counting(f._state)
    f._state = counting             # this instance only (not the cached fluid)
    p, ph, v = f.states(rho, T, dome=True)
    sat_lo, sat_hi = max(f.t_min, f.triple_temperature), _reference._DOME_T_MAX * f.critical_temperature
    inside = np.zeros(rho.size, dtype=bool)
    for i, (r, t) in enumerate(zip(rho.tolist(), T.tolist())):
        # source: CoolProp's PropsSI, the saturated density on the state's side of the critical density
        if sat_lo <= t < sat_hi:
            q = 0 if r > f.critical_molar_density else 1
            rs = CP.PropsSI("Dmolar", "T", t, "Q", q, name)
            inside[i] = r < rs * (1.0 - M) if q == 0 else r > rs * (1.0 + M)
    # one saturation flash for every state in range; a density-temperature flash only for those not inside
    # (and inside the equation's temperature range, which the checks ask first)
    pairs = np.array(counting.pairs)
    in_range = (T >= sat_lo) & (T < sat_hi)
    assert (pairs == CoolProp.QT_INPUTS).sum() == in_range.sum()
    assert (pairs == CoolProp.DmolarT_INPUTS).sum() == (~inside & (T >= f.t_min) & (T <= f.t_max)).sum()
    assert inside.sum() > 0.3 * rho.size
    for r, t, pi, w in zip(rho[inside].tolist(), T[inside].tolist(), p[inside].tolist(), ph[inside].tolist()):
        # source: CoolProp's PropsSI at the same (molar density, temperature) and its vapour pressure there
        assert w == "two-phase"
        assert CP.PropsSI("Phase", "Dmolar", r, "T", t, name) == CoolProp.iphase_twophase
        assert pi == pytest.approx(CP.PropsSI("P", "Dmolar", r, "T", t, name), rel=1e-12, abs=0.0)
        assert pi == pytest.approx(CP.PropsSI("P", "T", t, "Q", 0, name), rel=1e-12, abs=0.0)
    assert v[inside].all()


def _without_dome(monkeypatch):
    evaluate_rows = ReferenceFluid._evaluate_rows

    def plain(self, rho_f, T_f, slopes=False, dome=False, why=True):     # every state evaluated, every reason
        return evaluate_rows(self, rho_f, T_f, slopes)

    monkeypatch.setattr(ReferenceFluid, "_evaluate_rows", plain)


@pytest.mark.parametrize("gas,cp", [("carbon dioxide", "CarbonDioxide"), ("chlorine", "Chlorine"),
                                    ("ethylene", "Ethylene"), ("n-butane", "n-Butane"),
                                    ("nitrous oxide", "NitrousOxide")])
def test_liquefied_columns_equal_those_without_the_saturation_flash_and_with_every_reason(tmp_path, monkeypatch, gas, cp):
    part = _part(tmp_path, gas, cp, 160, seed=sum(gas.encode()) + 5)
    got = engine._liquefied_columns(part)
    with monkeypatch.context() as m:
        _without_dome(m)
        ref = engine._liquefied_columns(part)
    assert set(got) == set(ref)
    for k in got:
        _same(got[k], ref[k], k)
    # rows by mass whose fill lies inside the dome, and temperature limits found
    assert np.sum(got["phase_fill"] == "two-phase") > 20
    assert np.isfinite(got["max_t"]).sum() > 40


@pytest.mark.parametrize("triple", [False, True])
def test_newton_in_bracket_with_f_alone_at_the_pushed_points_equals_it_without(triple):
    """Roots of x**3 - c on brackets around them by Newton steps (the point set past a converged step closes the
    bracket), and of (x - r)**3, a triple root, from next to it (Newton converges slowly there: the points set
    past a step fall short of the root, and g is asked there for the derivative): the same roots and flags, bit
    for bit."""
    rng = np.random.default_rng(3 if triple else 4)
    c = rng.uniform(1.0, 1000.0, 400)
    root = np.cbrt(c)
    if triple:
        a, b = root * (1.0 - 1e-3), root * (1.0 + 1e-3)
        x0 = root * (1.0 + rng.uniform(-1e-9, 1e-9, c.size))
    else:
        a, b = root * rng.uniform(0.5, 0.99, c.size), root * rng.uniform(1.01, 2.0, c.size)
        x0 = 0.5 * (a + b)
    calls = {"g": 0, "f": 0}

    def f(x, ix):
        return (x - root[ix]) ** 3 if triple else x ** 3 - c[ix]

    def g(x, ix):
        calls["g"] += x.size
        return f(x, ix), 3.0 * (x - root[ix]) ** 2 if triple else 3.0 * x ** 2

    def f_only(x, ix):
        calls["f"] += x.size
        return f(x, ix)

    idx = np.arange(c.size)
    fa, fb = f(a, idx), f(b, idx)
    want, ok_want = engine._newton_in_bracket(g, a, fa, b, fb, x0, idx)
    g_plain = calls["g"]
    calls["g"] = 0
    got, ok_got = engine._newton_in_bracket(g, a, fa, b, fb, x0, idx, f_only)
    assert ok_got.tolist() == ok_want.tolist() and ok_want.sum() > 0.9 * c.size
    assert _same_bits(got, want)
    assert calls["f"] > 0
    if triple:
        assert calls["g"] + calls["f"] > g_plain           # pushed points that did not close: g asked there too
    else:
        assert calls["g"] + calls["f"] == g_plain          # every pushed point closed its bracket
    # the roots against numpy's cube root (an independent computation)
    assert np.allclose(got[ok_got], root[ok_got], rtol=1e-11, atol=0.0)


@pytest.mark.parametrize("cp", ["Chlorine", "IsoButane", "n-Butane", "CO2", "Ammonia"])
def test_temperature_limit_equals_it_with_the_slope_at_every_point(cp, monkeypatch):
    from test_liquefied_solves import _limit_problem, _rows

    fluid, rho, t_fill, t_peak, rated = _rows(cp, 253.0, 298.0, 233.0, 358.0, 300, seed=len(cp) + 3)
    rho = np.concatenate([rho, 0.6 * rho])
    t_fill, t_peak, rated = (np.concatenate([x, x]) for x in (t_fill, t_peak, rated))
    live, rc, boundary, f_t, t_lo, t_hi, f_mid = _limit_problem(fluid, rho, t_fill, t_peak, rated)
    args = (fluid, f_t, rho, rated, live, t_lo, t_peak[live], f_mid, t_hi, boundary[live])
    got, ok_got = engine._temperature_limit(*args)
    newton = engine._newton_in_bracket
    with monkeypatch.context() as m:
        m.setattr(engine, "_newton_in_bracket", lambda g, a, fa, b, fb, x0, idx, f_only=None:
                  newton(g, a, fa, b, fb, x0, idx))
        want, ok_want = engine._temperature_limit(*args)
    assert ok_got.tolist() == ok_want.tolist()
    assert _same_bits(got, want)
    found = np.flatnonzero(np.isfinite(got))
    assert found.size > 100
    # roots on the dome part of the isochore among them
    assert (got[found] < boundary[live][found]).sum() > 10
    # CoolProp's reference equation through PropsSI (an independent call path): the rating at the root
    for j in found[:: max(1, found.size // 40)].tolist():
        r = live[j]
        assert CP.PropsSI("P", "Dmolar", rho[r], "T", got[j], cp) == pytest.approx(rated[r], rel=1e-9)
