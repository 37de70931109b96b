"""A limit is the edge of the verdict: a vessel filled (or heated) just inside a limit the screening gave passes
on every model, at every corner of its reading tolerances and against every pressure the verdict counts (the
rating with its margin, and a relief set pressure below the rating with the same margin); just outside, it
does not.

These are checks of the tool against itself (the limits against the verdict's own rules); the models
themselves are checked against CoolProp and handbook values elsewhere. The vessels are invented.
"""

from __future__ import annotations

import pytest

from screening.engine import screen_cases, screen_text
from screening.inputs.case import parse_case_text
from screening.screen import limit_ceiling, screen_states

ATM = 101325.0

CASE = '''id = "edge"
[vessel]
water_capacity = "50 L"
rated_pressure = "{rated} bar(g)"
{relief}
[fill]
gas = "{gas}"
{fill}
temperature = "15 degC"
[exposure]
gas_temperature = "65 degC"
'''


#: Reading tolerances of a fill by pressure and of a fill by mass (whose only band is the gas temperature's).
TOLERANCE = {"pressure": '[tolerance]\nfill_pressure = "6 bar"\nfill_temperature = "2 K"\ngas_temperature = "3 K"\n',
             "mass": '[tolerance]\ngas_temperature = "3 K"\n'}


def _text(gas: str, rated: float, relief: float | None, fill: str, tolerance: bool = False) -> str:
    text = CASE.format(gas=gas, rated=rated, fill=fill,
                       relief=f'relief_set_pressure = "{relief} bar(g)"' if relief is not None else "")
    return text + (TOLERANCE["mass" if fill.startswith("mass") else "pressure"] if tolerance else "")


def _pressure(p_abs: float) -> str:
    return f'pressure = "{(p_abs - ATM) / 1e5:.9f} bar(g)"'


def _mass(kg: float) -> str:
    return f'mass = "{kg:.9f} kg"'


#: (gas, rated [bar(g)], relief [bar(g)] or None, fill): permanent gases by pressure and by mass (the generalized
#: model governs argon and nitrogen at these densities), the quantum-gas model of hydrogen, a liquefied gas by
#: mass (a vapour fill, and a supercritical worst case), and relief settings below the rating.
VESSELS = [
    ("argon", 300, None, 'pressure = "200 bar(g)"'),
    ("argon", 300, 250, 'pressure = "200 bar(g)"'),
    ("nitrogen", 300, 240, 'mass = "10 kg"'),
    ("methane", 300, None, 'pressure = "200 bar(g)"'),
    ("hydrogen", 300, 260, 'pressure = "200 bar(g)"'),
    ("propane", 20, 18, 'mass = "1 kg"'),
    ("carbon dioxide", 100, 90, 'mass = "5 kg"'),
]


def _screen(text: str, route: str):
    return screen_states(parse_case_text(text), curves=False) if route == "states" else screen_text(text)


@pytest.mark.parametrize("tolerance", [False, True], ids=["nominal", "tolerances"])
@pytest.mark.parametrize("route", ["engine", "states"])
@pytest.mark.parametrize("gas, rated, relief, fill", VESSELS)
def test_a_fill_just_inside_its_limit_passes_and_just_outside_does_not(gas, rated, relief, fill, route, tolerance):
    r = _screen(_text(gas, rated, relief, fill, tolerance), route)
    lim = r.limits
    checked = 0
    if lim.max_fill_pressure_pa is not None:
        p = lim.max_fill_pressure_pa
        inside = screen_text(_text(gas, rated, relief, _pressure(p - 1e-5 * (p - ATM)), tolerance))
        outside = screen_text(_text(gas, rated, relief, _pressure(p + 1e-5 * (p - ATM)), tolerance))
        assert inside.verdict == "within", (inside.verdict, inside.reasons)
        assert outside.verdict != "within"
        checked += 1
    if lim.max_fill_mass_kg is not None and lim.max_fill_mass_basis.startswith("the required margin"):
        m = lim.max_fill_mass_kg
        inside = screen_text(_text(gas, rated, relief, _mass(m * (1 - 1e-5)), tolerance))
        outside = screen_text(_text(gas, rated, relief, _mass(m * (1 + 1e-5)), tolerance))
        assert inside.verdict == "within", (inside.verdict, inside.reasons)
        assert outside.verdict != "within"
        checked += 1
    assert checked, "no limit of this vessel was checked"


@pytest.mark.parametrize("tolerance", [False, True], ids=["nominal", "tolerances"])
@pytest.mark.parametrize("gas, rated, relief, fill", VESSELS)
def test_the_gas_temperature_limit_is_where_the_peak_reaches_the_rating_or_a_lower_relief_setting(gas, rated, relief,
                                                                                                  fill, tolerance):
    text = _text(gas, rated, relief, fill, tolerance)
    case = parse_case_text(text)
    r = screen_text(text)
    t = r.limits.max_gas_temperature_k
    assert t is not None
    # with tolerances, the peak at the bounding corner of a gas temperature read at the limit
    at = screen_text(text.replace('gas_temperature = "65 degC"', f'gas_temperature = "{t - 273.15:.9f} degC"'))
    assert at.peak_pressure_pa == pytest.approx(limit_ceiling(case), rel=1e-7)


def test_the_limits_say_when_they_are_solved_against_the_relief_setting():
    below = screen_text(_text("argon", 300, 250, 'pressure = "200 bar(g)"'))
    above = screen_text(_text("argon", 300, 330, 'pressure = "200 bar(g)"'))
    assert "against the relief set pressure" in below.limits.note
    assert "relief" not in above.limits.note
    # a relief setting above the rating changes nothing: the rating is the lower of the two
    plain = screen_text(_text("argon", 300, None, 'pressure = "200 bar(g)"'))
    assert above.limits.max_fill_pressure_pa == plain.limits.max_fill_pressure_pa
    assert above.limits.max_gas_temperature_k == plain.limits.max_gas_temperature_k


@pytest.mark.parametrize("tolerance", [False, True], ids=["nominal", "tolerances"])
def test_a_batch_gives_the_same_limits_as_the_one_vessel_screening(tolerance):
    cases = [parse_case_text(_text(*v, tolerance)) for v in VESSELS]
    for case, batch in zip(cases, screen_cases(cases)):
        one = screen_states(case, curves=False)
        for key in ("max_fill_pressure_pa", "max_fill_mass_kg", "max_gas_temperature_k", "target_peak_pressure_pa"):
            a, b = getattr(one.limits, key), getattr(batch.limits, key)
            assert (a is None) == (b is None), key
            if a is not None:
                assert b == pytest.approx(a, rel=2e-9), key


@pytest.mark.parametrize("route", ["engine", "states"])
def test_a_band_given_as_a_share_of_the_reading_is_that_share_at_the_limit(route):
    # a fill-pressure band of 1 % of the reading, the limit well above the fill: at the limit the band is 1 % of
    # the limit's reading, larger than the fill's, and a reading just inside it still passes at every corner
    share = '[tolerance]\nfill_pressure = "1 %"\nfill_temperature = "2 K"\ngas_temperature = "3 K"\n'
    text = _text("argon", 300, None, 'pressure = "120 bar(g)"') + share
    r = _screen(text, route)
    p = r.limits.max_fill_pressure_pa
    assert p > 150e5
    inside = screen_text(_text("argon", 300, None, _pressure(p - 1e-5 * (p - ATM))) + share)
    outside = screen_text(_text("argon", 300, None, _pressure(p + 1e-5 * (p - ATM))) + share)
    assert inside.verdict == "within", (inside.verdict, inside.reasons)
    assert outside.verdict != "within"
