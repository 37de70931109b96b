"""The liquefied-gas columns' evaluations worked out over the rows at once (the target's flashes, the fill-pressure
look at the top of the range, the dome-jump check, the saturation band's ends, the isochore's slope past the
liquid-full point, the upward scan's guess) give every column the per-row evaluations give, bit for bit."""

import math
import random

import CoolProp.CoolProp as CP
import numpy as np
import pytest

from screening import engine
from screening import screen as _screen
from screening.errors import NotApplicable

ATM = 101325.0
GASES = [("carbon dioxide", "CarbonDioxide"), ("propane", "n-Propane"), ("chlorine", "Chlorine"),
         ("ammonia", "Ammonia"), ("R-134a", "R134a"), ("xenon", "Xenon")]
HEADER = ("id,gas,water_capacity [L],rated_pressure [bar(g)],fill_pressure [bar(g)],fill_mass [kg],"
          "fill_temperature [degC],ambient_max [degC]")


def _inventory(path, gas, cp, rows, seed):
    """An invented inventory of one gas: fills by pressure as vapour (0.2-0.85 of the vapour pressure), liquid
    (1.3-3 times it) or next to it (0.97-1.03: the saturation band), above the critical temperature where the fill
    temperature is; fills by mass from a thin vapour to past the liquid-full point; fill temperatures -20...40
    degC, worst cases -40...85 degC, rated 1.1-4 times the vapour pressure at 25 degC (the liquid heated past the
    equation's range and past the rating as well)."""
    rnd = random.Random(seed)
    # vapour pressures, critical point and liquid density: the gas's reference equation through CoolProp's PropsSI
    tc, pc = CP.PropsSI("Tcrit", cp), CP.PropsSI("pcrit", cp)
    p25 = CP.PropsSI("P", "T", min(298.15, tc - 1.0), "Q", 0, cp)
    rho_l = CP.PropsSI("Dmass", "T", min(253.15, tc - 5.0), "Q", 0, cp)
    lines = [HEADER]
    for i in range(rows):
        t = rnd.uniform(-20, 40) + 273.15
        rated = p25 * rnd.uniform(1.1, 4.0)
        if rnd.random() < 0.5:
            psat = CP.PropsSI("P", "T", t, "Q", 0, cp) if t < tc else pc
            share = rnd.choice([(0.2, 0.85), (1.3, 3.0), (0.97, 1.03)])
            p = min(psat * rnd.uniform(*share), 0.9 * rated)
            fill = f"{(p - ATM) / 1e5:.4f},"
        else:
            fill = f",{50 * rho_l / 1000 * rnd.uniform(0.02, 1.05):.3f}"
        lines.append(f"L{i},{gas},50,{(rated - ATM) / 1e5:.2f},{fill},{t - 273.15:.2f},{rnd.uniform(-40, 85):.2f}")
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def _part(tmp_path, gas, cp, rows, seed):
    from screening.inputs.columns import read_plain
    from screening.inputs.inventory import read_inventory

    plain = read_plain(read_inventory(_inventory(tmp_path / "inv.csv", gas, cp, rows, seed)), None)
    # the rows as the batch hands them to the columns (PlainScreening: the fill mass per water capacity)
    return engine.PlainPart(plain.gases[0], plain.fill_pressure_pa, plain.fill_temperature_k, plain.ambient_max_k,
                            plain.gas_temperature_k, plain.rated_pa, plain.atmospheric_pa, plain.required_margin,
                            plain.relief_pa, plain.max_filling_ratio_kg_m3,
                            plain.fill_mass_kg / plain.water_capacity_m3, liquefied=True)


# --- the per-row evaluations: each the scalar method of the reference model, row by row -------------------------
def _saturation_states_per_row(fluid, t, q):
    p, rho = np.full(t.size, np.nan), np.full(t.size, np.nan)
    for i, ti in enumerate(t.tolist()):
        try:
            p[i] = fluid.vapour_pressure(ti)
            rho[i] = fluid.saturated_liquid_density(ti) if q == 0.0 else fluid.saturated_vapour_density(ti)
        except NotApplicable:
            p[i] = np.nan
    return p, rho


def _target_densities_per_row(fluid, target, t_peak, vapour):
    return engine._loop(fluid.density, target, t_peak)[0]


def _fill_peak_offsets_per_row(fluid, p, t_fill, t_peak, target, vapour):
    res = np.full(p.size, np.nan)
    for j in range(p.size):
        try:
            res[j] = fluid.pressure(fluid.density(float(p[j]), float(t_fill[j])), float(t_peak[j])) - target[j]
        except NotApplicable:
            pass
    return res


def _no_fill_reaches_per_row(fluid, t_fill, t_peak, target, rho_liquid=None):
    out = np.zeros(t_fill.size, dtype=bool)
    for j, (tf, tp, tg) in enumerate(zip(t_fill.tolist(), t_peak.tolist(), target.tolist())):
        try:
            vapour_end = fluid.pressure(fluid.saturated_vapour_density(tf), tp) - tg
            rho_l = fluid.saturated_liquid_density(tf)
        except NotApplicable:
            continue
        try:
            liquid_end = fluid.pressure(rho_l, tp) - tg
        except NotApplicable:
            liquid_end = math.inf
        out[j] = vapour_end < -engine._JUMP_CLEAR * tg and liquid_end > engine._JUMP_CLEAR * tg
    return out


def _isochore_slopes_per_row(fluid, rho, t):
    d, ok, _r = engine._loop(fluid.dp_dt_at_constant_density, rho, t)
    return d, ok


def _band_reason_per_row(*args, psat_ends=None, **kwargs):
    return _band_reason(*args, **kwargs)


def _liquid_full_density_per_row(fluid, t_fill, t_peak, gas=None, saturated=math.nan):
    return _liquid_full_density(fluid, t_fill, t_peak, gas)


_band_reason, _liquid_full_density = _screen.band_reason, _screen.liquid_full_density


def _per_row(monkeypatch):
    monkeypatch.setattr(engine, "_saturation_states", _saturation_states_per_row)
    monkeypatch.setattr(engine, "_target_densities", _target_densities_per_row)
    monkeypatch.setattr(engine, "_fill_peak_offsets", _fill_peak_offsets_per_row)
    monkeypatch.setattr(engine, "_no_fill_reaches", _no_fill_reaches_per_row)
    monkeypatch.setattr(engine, "_isochore_slopes", _isochore_slopes_per_row)
    monkeypatch.setattr(engine, "_newton_guess", lambda fluid, rho, rated, rows, guess, boundary=None: guess)
    monkeypatch.setattr(_screen, "band_reason", _band_reason_per_row)
    monkeypatch.setattr(_screen, "liquid_full_density", _liquid_full_density_per_row)


def _same(a, b, key):
    a, b = np.atleast_1d(a), np.atleast_1d(b)
    assert a.shape == b.shape, key
    if a.dtype.kind == "f":
        # the same floats, bit for bit (NaN where NaN)
        assert a.tobytes() == b.tobytes(), (key, np.flatnonzero(a.view(np.int64) != b.view(np.int64))[:5])
    else:
        assert list(map(str, a)) == list(map(str, b)), key


@pytest.mark.parametrize("gas,cp", GASES)
def test_liquefied_columns_at_once_equal_the_per_row_evaluations(tmp_path, monkeypatch, gas, cp):
    part = _part(tmp_path, gas, cp, 160, seed=sum(gas.encode()) + 11)
    for mass_limit in (False, True):
        got = engine._liquefied_columns(part, mass_limit=mass_limit)
        with monkeypatch.context() as m:
            _per_row(m)
            ref = engine._liquefied_columns(part, mass_limit=mass_limit)
        assert set(got) == set(ref)
        for k in got:
            _same(got[k], ref[k], k)
    # the inventory holds the kinds of rows these paths meet
    by_pressure, fb = got["by_pressure"], got["fallback"]
    assert by_pressure.any() and (~by_pressure).any()
    assert np.isfinite(got["max_t"]).any() and np.isfinite(got["max_p"]).any()
    assert np.isfinite(got["liquid_full"]).any()                     # isochores that reach the liquid-full point
    assert any(b is not None for b in got["band"])                   # fills refused at the saturation band
    assert (~fb).sum() > 0.5 * fb.size
    # what the columns hold against CoolProp's PropsSI on the gas's reference equation: the vapour pressure and
    # the saturated liquid at the fill temperature, the target's density at the worst case
    ks = np.flatnonzero(np.isfinite(got["liquid_fill_sat"]))
    assert ks.size
    for k in ks[:20].tolist():
        t = float(part.t_fill[k])
        assert got["vapour_pressure"][k] == pytest.approx(CP.PropsSI("P", "T", t, "Q", 0, cp), rel=1e-9)
        assert got["liquid_fill_sat"][k] == pytest.approx(CP.PropsSI("Dmolar", "T", t, "Q", 0, cp), rel=1e-9)
    ks = np.flatnonzero(np.isfinite(got["liquid_peak_sat"]))
    assert ks.size
    for k in ks[:20].tolist():
        t = float(got["t_peak"][k])
        assert got["vapour_pressure_peak"][k] == pytest.approx(CP.PropsSI("P", "T", t, "Q", 0, cp), rel=1e-9)
        assert got["liquid_peak_sat"][k] == pytest.approx(CP.PropsSI("Dmolar", "T", t, "Q", 0, cp), rel=1e-9)
    ks = np.flatnonzero(np.isfinite(got["rho_star"]))
    assert ks.size
    for k in ks[:20].tolist():
        assert got["rho_star"][k] == pytest.approx(
            CP.PropsSI("Dmolar", "P", float(got["target"][k]), "T", float(got["t_peak"][k]), cp), rel=1e-6)


@pytest.mark.parametrize("gas,cp", GASES[:4])
def test_no_fill_reaches_at_once_equals_the_per_row_check_near_the_dome(gas, cp):
    from screening.physics.eos.reference import reference_fluid

    fluid = reference_fluid((cp,), (1.0,))
    rnd = np.random.default_rng(sum(gas.encode()))
    n = 300
    tc = fluid.critical_temperature
    # fill temperatures up to and past the critical point, and below the triple point for a few rows
    t_fill = np.concatenate([rnd.uniform(fluid.triple_temperature - 5.0, tc + 3.0, n - 2), [tc, tc - 1e-9]])
    t_peak = t_fill + rnd.uniform(0.0, 120.0, n)
    # targets around the peaks of the saturated vapour and liquid at t_fill (the jump's ends), up to the range
    ends = np.array([_peak(fluid, tf, tp) for tf, tp in zip(t_fill.tolist(), t_peak.tolist())])
    pick = rnd.integers(0, 2, n)
    base = np.where(np.isfinite(ends[np.arange(n), pick]), ends[np.arange(n), pick], 5e6)
    target = base * (1.0 + rnd.choice([-1.0, 1.0], n) * 10.0 ** rnd.uniform(-7.0, -1.0, n))
    got = engine._no_fill_reaches(fluid, t_fill, t_peak, target)
    ref = _no_fill_reaches_per_row(fluid, t_fill, t_peak, target)
    assert got.tolist() == ref.tolist()
    assert got.any() and (~got).any()
    # with the saturated liquid's density given (as the fill state's flash leaves it)
    _p, rho_l = engine._saturation_states(fluid, t_fill, 0.0)
    assert engine._no_fill_reaches(fluid, t_fill, t_peak, target, rho_l).tolist() == ref.tolist()
    # the saturated liquid against CoolProp's PropsSI
    k = int(np.flatnonzero(np.isfinite(rho_l))[0])
    assert rho_l[k] == pytest.approx(CP.PropsSI("Dmolar", "T", float(t_fill[k]), "Q", 0, cp), rel=1e-9)


def _peak(fluid, tf, tp):
    out = []
    for side in (fluid.saturated_vapour_density, fluid.saturated_liquid_density):
        try:
            out.append(fluid.pressure(side(tf), tp))
        except NotApplicable:
            out.append(math.nan)
    return out


def test_band_reason_with_the_band_ends_given_equals_it_working_them_out():
    from screening.physics.eos.reference import reference_fluid

    rnd = random.Random(5)
    for gas, cp in GASES:
        fluid = reference_fluid((cp,), (1.0,))
        tc = fluid.critical_temperature
        for _ in range(60):
            t = rnd.uniform(fluid.triple_temperature, tc + 2.0)
            # the vapour pressure: CoolProp's PropsSI on the gas's reference equation
            psat = CP.PropsSI("P", "T", min(t, tc - 0.01), "Q", 0, cp)
            p = psat * rnd.uniform(0.9, 1.1)
            t_lo, t_hi = _screen.saturation_band_ends(t, fluid)
            ends = engine._saturation_states(fluid, np.array([t_lo] + ([t_hi] if t_hi is not None else [])), 0.0)[0]
            given = (float(ends[0]), float(ends[1]) if t_hi is not None else fluid.critical_pressure)
            assert (_screen.band_reason(p, t, fluid, gas, ATM, psat_ends=given)
                    == _screen.band_reason(p, t, fluid, gas, ATM))
        # an end where vapour_pressure raises: no band, as when it raises inside
        assert _screen.band_reason(psat, tc - 3.0, fluid, gas, ATM, psat_ends=(math.nan, psat)) is None
