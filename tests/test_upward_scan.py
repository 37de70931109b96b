"""The generalized model's limits of liquefied-gas rows (engine._lk_limits) solve upwards from the worst case, and
where the model cannot be evaluated at the bracket's end they follow screen._root's scan: the root only inside a
scan interval whose two ends can be evaluated. engine._scan_up finds the scan point that settles it by a search
over the scan's index; these tests check, on seeded invented rows, that it settles where a scan stepping up one
point at a time settles (the same roots, bit for bit), with roots anywhere in the bracket, next to the edges of the
model's range (its highest reduced pressure and temperature, the vapour pressure at the fill) or nowhere, and check
the roots against CoolProp's reference equations (PropsSI) where the model is close to them."""

import CoolProp.CoolProp as CP
import numpy as np
import pytest

from screening import engine
from screening.physics.eos.generalized import (
    LK_REDUCED_PRESSURE_RANGE,
    LK_REDUCED_TEMPERATURE_RANGE,
    lee_kesler_density_valid,
    lee_kesler_pressure,
    lee_kesler_vapour_pressure,
)

PR_HI = LK_REDUCED_PRESSURE_RANGE[1]
TR_HI = LK_REDUCED_TEMPERATURE_RANGE[1]
ATM = 101325.0
#: CoolProp names: liquefied gases and permanent gases filled by mass (both run on the liquefied columns)
FLUIDS = ["Propane", "CO2", "Ammonia", "n-Butane", "R134a", "Nitrogen", "Argon", "Methane"]
#: of those, the non-polar ones, where the generalized model is meant to be close to the reference equation
NONPOLAR = {"Propane", "CO2", "n-Butane", "Nitrogen", "Argon", "Methane"}
#: of those, the ones filled above their critical temperature (253 to 313 K)
SUPERCRITICAL = {"Nitrogen", "Argon", "Methane"}


def stepwise_scan_up(f, rows, lo, mid, f_mid, hi, n=engine._SCAN_N, **_known):
    """The upward scan as it stepped before: every scan point above mid in turn, until f >= 0 (Illinois between
    the last point below zero and that one) or f cannot be evaluated (none). What the caller knows (`_known`:
    where f stops being evaluable, a guess) is not used."""
    m = rows.size
    root = np.full(m, np.nan)
    if m == 0:
        return root
    step = (hi - lo) / (n - 1)
    _a, b = engine._linspace_bracket(lo, hi, mid, n)
    k = np.rint((b - lo) / step)
    x0, f0 = np.array(mid, dtype=float), np.array(f_mid, dtype=float)
    x1, f1 = np.full(m, np.nan), np.full(m, np.nan)
    live = np.flatnonzero(b > mid)
    while live.size:
        x = np.where(k[live] >= n - 1, hi[live], k[live] * step[live] + lo[live])
        fx = f(x, rows[live])
        below = np.isfinite(fx) & (fx < 0.0)
        found = np.isfinite(fx) & (fx >= 0.0)
        x1[live[found]], f1[live[found]] = x[found], fx[found]
        x0[live[below]], f0[live[below]] = x[below], fx[below]
        k[live] += 1
        live = live[below & (k[live] <= n - 1)]
    zero = f1 == 0.0
    root[zero] = x1[zero]
    go = np.flatnonzero(np.isfinite(f1) & ~zero)
    if go.size:
        root[go] = engine._illinois(f, x0[go], x1[go], f0[go], f1[go], rows[go])
    return root


def critical(fluid):
    """Critical temperature [K], pressure [Pa] and acentric factor of CoolProp's equation for fluid."""
    return CP.PropsSI("Tcrit", fluid), CP.PropsSI("pcrit", fluid), CP.PropsSI("acentric", fluid)


def _gas_rows(fluid, n, seed):
    """Invented rows that are a gas of the model at fill and at the worst case: fill and worst-case temperatures
    over the benchmark's ranges, fill pressures from 5 to 95 % of the model's vapour pressure at the fill (above
    the critical temperature from 5 % to 9 times the critical pressure: the permanent gases filled by mass, whose
    isochores reach the model's highest pressure). Returns the constants and the rows' arrays."""
    rnd = np.random.default_rng(seed)
    tc, pc, om = critical(fluid)
    t_fill = rnd.uniform(253.0, 313.0, n)
    t_peak = rnd.uniform(233.0, 358.0, n)
    tr = t_fill / tc
    sub = tr < 1.0
    p_fill = np.where(sub, lee_kesler_vapour_pressure(np.minimum(tr, 1.0), om) * rnd.uniform(0.05, 0.95, n),
                      rnd.uniform(0.05, 9.0, n)) * pc
    rho, ok = lee_kesler_density_valid(p_fill, t_fill, tc, pc, om)
    peak = lee_kesler_pressure(np.where(ok, rho, 1.0), t_peak, tc, pc, om)
    keep = ok & peak.valid
    return (tc, pc, om), rnd, p_fill[keep], t_fill[keep], t_peak[keep], rho[keep], peak.pressure[keep]


def _ratings(rnd, fluid, tc, pc, om, rho, t_peak, t_hi, peak):
    """Ratings of four kinds, a quarter each: 1.05 to 3 times the peak (a root anywhere in the bracket), 90 to
    100 % of the model's highest pressure (roots next to it, and rows whose scan point after the root is past
    it), above that pressure (no root), and the isochore's pressure 0 to 15 K below the top of the model's
    temperature range, times 0.98 to 1.02, where the bracket reaches past it (roots next to it); returns
    (ratings, kind)."""
    n = rho.size
    kind = rnd.integers(0, 4, n)
    rated = peak * rnd.uniform(1.05, 3.0, n)
    near_p = kind == 1
    rated[near_p] = PR_HI * pc * rnd.uniform(0.9, 1.0, near_p.sum())
    above = kind == 2
    rated[above] = PR_HI * pc * rnd.uniform(1.0 + 1e-6, 1.2, above.sum())
    t_top = TR_HI * tc - rnd.uniform(0.0, 15.0, n)
    near_t = (kind == 3) & (t_hi > t_top)
    if near_t.any():
        at_top = lee_kesler_pressure(rho[near_t], t_top[near_t], tc, pc, om)
        rated[near_t] = np.where(at_top.valid, at_top.pressure * rnd.uniform(0.98, 1.02, near_t.sum()),
                                 rated[near_t])
    rated = np.maximum(rated, peak * 1.01)        # the worst case below the rating: the solve goes upwards
    return rated, np.where((kind == 3) & ~near_t, 0, kind)


@pytest.mark.parametrize("fluid", FLUIDS)
def test_temperature_limit_search_settles_where_the_stepwise_scan_does(fluid, monkeypatch):
    (tc, pc, om), rnd, _p, t_fill, t_peak, rho, peak = _gas_rows(fluid, 400, seed=FLUIDS.index(fluid))
    t_lo, t_hi = np.minimum(t_fill, t_peak), np.maximum(t_fill, t_peak) + 300.0
    rated, kind = _ratings(rnd, fluid, tc, pc, om, rho, t_peak, t_hi, peak)

    def isochore(t, r):
        st = lee_kesler_pressure(rho[r], t, tc, pc, om)
        return np.where(st.valid, st.pressure - rated[r], np.nan)

    f = isochore
    rows = np.arange(rho.size)
    f_mid = peak - rated
    # as engine._lk_limits calls it: the peak as f at the worst case, the top of the model's temperature range,
    # the isochore in proportion to the temperature as the guess
    fast = engine._upward_root(f, t_lo, t_peak, t_hi, f_mid=f_mid, nan_from=np.full(rows.size, TR_HI * tc * (1.0 + 1e-9)),
                               guess=t_peak * rated / peak)
    with monkeypatch.context() as m:
        m.setattr(engine, "_scan_up", stepwise_scan_up)
        slow = engine._upward_root(f, t_lo, t_peak, t_hi)
    assert np.array_equal(fast, slow, equal_nan=True)
    # the search alone, without what the caller knows (its bisection and secant rounds), from the first point
    # above the worst case or from the top
    step = stepwise_scan_up(f, rows, t_lo, t_peak, f_mid, t_hi)
    for top_first in (False, True):
        bare = engine._scan_up(f, rows, t_lo, t_peak, f_mid, t_hi, top_first=top_first)
        assert np.array_equal(bare, step, equal_nan=True)
    # a rating above every pressure of the model: no root, as engine._lk_limits skips them
    assert np.isnan(slow[engine._above_lk_pressures(rated, np.full(rated.size, pc))]).all()
    found = np.isfinite(slow)
    assert found.sum() >= 40 and (~found).sum() >= 40
    if fluid in SUPERCRITICAL:
        # roots next to the model's highest pressure, and rows that find none there although the rating is below
        # it (the scan point after the root is past it)
        near_p = kind == 1
        assert (near_p & found).sum() >= 5 and (near_p & ~found).sum() >= 1
    if (kind == 3).any():
        assert (kind == 3).sum() >= 10 and ((kind == 3) & found).sum() >= 3
    # the model's pressure at a root is the rating (to the solve's tolerance)
    at_root = lee_kesler_pressure(rho[found], slow[found], tc, pc, om)
    assert np.allclose(at_root.pressure, rated[found], rtol=1e-9, atol=0.0)
    if fluid in NONPOLAR:
        # CoolProp's reference equation (PropsSI) at the fill density and the model's root temperature: the
        # rating, within the model's distance from the reference in these gas states (measured on these rows,
        # below a reduced pressure of 2: under 1 %)
        low = np.flatnonzero(found & (rated < 2.0 * pc))
        assert low.size >= 10
        for r in low[:25]:
            p = CP.PropsSI("P", "Dmolar", rho[r], "T", slow[r], fluid)
            assert p == pytest.approx(rated[r], rel=0.02)


@pytest.mark.parametrize("fluid", ["Propane", "CO2", "Ammonia", "n-Butane", "R134a"])
def test_fill_pressure_limit_search_settles_where_the_stepwise_scan_does(fluid, monkeypatch):
    (tc, pc, om), rnd, p_fill, t_fill, t_peak, rho, peak = _gas_rows(fluid, 300, seed=10 + len(fluid))
    n = p_fill.size
    tr = t_fill / tc
    psat_r = np.where(tr < 1.0, lee_kesler_vapour_pressure(np.minimum(tr, 1.0), om), np.inf)
    # targets: 1.05 to 3 times the peak, or the peak of a fill just below the model's vapour pressure at the fill
    # temperature, times 0.99 to 1.01 (roots next to where the model's gas condenses at the fill)
    target = peak * rnd.uniform(1.05, 3.0, n)
    edge = (rnd.random(n) < 0.5) & np.isfinite(psat_r)
    rho_e, ok_e = lee_kesler_density_valid(psat_r[edge] * pc * (1.0 - 1e-4), t_fill[edge], tc, pc, om)
    peak_e = lee_kesler_pressure(np.where(ok_e, rho_e, 1.0), t_peak[edge], tc, pc, om)
    target[edge] = np.where(peak_e.valid, peak_e.pressure * rnd.uniform(0.99, 1.01, edge.sum()), target[edge])
    target = np.maximum(target, peak * 1.01)

    def fill(p, r):
        rho1, ok1 = lee_kesler_density_valid(p, t_fill[r], tc, pc, om)
        s2 = lee_kesler_pressure(np.where(ok1, rho1, 1.0), t_peak[r], tc, pc, om)
        return np.where(ok1 & s2.valid, s2.pressure - target[r], np.nan)

    p_lo = np.full(n, ATM * 1.01)
    p_hi = np.maximum(target, p_fill) * np.maximum(1.0, t_fill / t_peak) * 1.05
    # as engine._lk_limits calls it: the peak as f at the fill, the model's reduced-pressure range and vapour
    # pressure at the fill temperature as where it stops, the highest fill pressure it holds looked at first
    fast = engine._upward_root(fill, p_lo, p_fill, p_hi, f_mid=peak - target,
                               nan_from=pc * np.minimum(PR_HI, psat_r) * (1.0 + 1e-9), top_first=True)
    with monkeypatch.context() as m:
        m.setattr(engine, "_scan_up", stepwise_scan_up)
        slow = engine._upward_root(fill, p_lo, p_fill, p_hi)
    assert np.array_equal(fast, slow, equal_nan=True)
    found = np.isfinite(slow)
    assert found.sum() >= 20 and (~found).sum() >= 20
    assert (edge & found).sum() >= 3 and (edge & ~found).sum() >= 3
    # the model's peak from a fill at the root is the target
    assert np.allclose(fill(slow[found], np.flatnonzero(found)), 0.0, rtol=0.0, atol=1e-9 * target.max())
    if fluid in NONPOLAR:
        # CoolProp's reference equation (PropsSI): the density of a fill at the root and its pressure at the
        # worst case, the target within the model's distance from the reference in these gas states (measured on
        # these rows: under 1 %)
        for r in np.flatnonzero(found & (target < 2.0 * pc))[:20]:
            d = CP.PropsSI("Dmolar", "P", slow[r], "T", t_fill[r], fluid)
            assert CP.PropsSI("P", "Dmolar", d, "T", t_peak[r], fluid) == pytest.approx(target[r], rel=0.02)
