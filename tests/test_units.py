"""The strict front door for quantities (screening.units)."""

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

from screening.errors import InputError
from screening.units import (
    format_pressure,
    parse,
    pressure_in,
    si_many,
    standard_atmosphere_pressure,
    temperature_in,
    to_absolute_pressure,
)


# Conversion factors: exact by definition (1 bar = 1e5 Pa; 1 psi = 6894.757293168 Pa;
# 1 ft = 0.3048 m exactly; T[K] = T[degC] + 273.15; T[degF] = T[degC] * 9/5 + 32) — SI brochure / NIST SP 811.
@pytest.mark.parametrize("text, kind, si", [
    ("50 L", "volume", 0.050),
    ("2.5 ft3", "volume", 2.5 * 0.3048**3),
    ("15 degC", "temperature", 288.15),
    ("59 degF", "temperature", 288.15),
    ("288.15 K", "temperature", 288.15),
    ("200 bar(g)", "pressure", 200e5),
    ("200 barg", "pressure", 200e5),
    ("21 MPa(a)", "pressure", 21e6),
    ("3000 psig", "pressure", 3000 * 6894.757293168),
    ("101.325 kPa(a)", "pressure", 101325.0),
    ("10 %", "fraction", 0.10),
    ("0.75 kg/L", "density", 750.0),
    ("37.5 kg", "mass", 37.5),
])
def test_allowlisted_units_convert_to_si(text, kind, si):
    assert parse(text, kind).si() == pytest.approx(si, rel=1e-12)


@pytest.mark.parametrize("text, basis", [
    ("200 bar(g)", "gauge"), ("200 barg", "gauge"), ("200 bar(a)", "absolute"), ("200 bara", "absolute"),
    ("3000 psig", "gauge"), ("3000 psia", "absolute"), ("900 kPa(g)", "gauge"), ("900 kPa(a)", "absolute"),
    ("20 MPa(g)", "gauge"), ("20 MPa(a)", "absolute"),
])
def test_pressure_units_carry_their_basis(text, basis):
    assert parse(text, "pressure").unit.basis == basis


def test_gauge_pressure_adds_the_site_atmosphere():
    assert to_absolute_pressure(parse("200 bar(g)", "pressure"), 95000.0) == pytest.approx(200e5 + 95000.0)
    assert to_absolute_pressure(parse("200 bar(a)", "pressure"), 95000.0) == pytest.approx(200e5)


def test_bare_pressure_needs_a_basis_unless_the_case_sets_one():
    with pytest.raises(InputError, match="gauge or absolute"):
        parse("200 bar", "pressure", key="fill.pressure")
    assert parse("200 bar", "pressure", pressure_basis="gauge").unit.basis == "gauge"


@pytest.mark.parametrize("text, message", [
    # measured with pint 0.25: pint's parser would read these as bar*gram, coulomb, NaN, inf, or hang
    ("200 bar(gr)", "not one this tool reads"),
    ("15 coulomb", "not one this tool reads"),
    ("nan bar(g)", "not a number"),
    ("inf bar(g)", "not a number"),
    ("1e309 bar(g)", "not finite"),
    ("9**9**9 bar(g)", "not one this tool reads"),
    ("200 kg", "unit of mass, not of pressure"),
    ("__import__('os') bar", "not a number"),
    ("", "not a number"),
])
def test_bad_quantities_are_refused_before_pint(text, message):
    with pytest.raises(InputError, match=message):
        parse(text, "pressure")


def test_power_tower_is_refused_quickly():
    # "9**9**9 bar" makes pint's expression parser hang (measured with pint 0.25); here it is refused.
    with pytest.raises(InputError):
        parse("9**9**9 bar", "pressure")


def test_standard_atmosphere_at_1000_m():
    # ISO 2533 / U.S. Standard Atmosphere 1976 table: 89 874.6 Pa at 1000 m geopotential altitude.
    assert standard_atmosphere_pressure(1000.0) == pytest.approx(89874.6, rel=1e-5)


@given(st.floats(min_value=-50.0, max_value=500.0, allow_nan=False))
def test_temperature_display_round_trip(t_c):
    k = parse(f"{t_c!r} degC", "temperature").si()
    assert math.isclose(temperature_in(k, "degC"), t_c, rel_tol=1e-12, abs_tol=1e-9)


@given(st.floats(min_value=0.0, max_value=1000.0, allow_nan=False))
def test_pressure_display_round_trip(p_bar):
    p_abs = to_absolute_pressure(parse(f"{p_bar!r} bar(g)", "pressure"), 101325.0)
    assert math.isclose(pressure_in(p_abs, "bar(g)", 101325.0), p_bar, rel_tol=1e-12, abs_tol=1e-9)


def test_format_pressure_in_user_unit():
    assert format_pressure(250e5 + 101325.0, "bar(g)", 101325.0) == "250.0 bar(g)"


_MANY_UNITS = st.sampled_from(["bar(g)", "barg", "bar(a)", "psig", "psia", "MPa(a)", "kPa(g)", "bar", "atm",
                               "degC", "°C", "degF", "K", "L", "m3", "ft3", "mL", "kg/L", "lb/ft3", "%", "",
                               "kg", "lb", "m", "mm", "W/m2", "bogus"])
_MANY_NUMBERS = st.one_of(st.floats(min_value=-1e6, max_value=1e6, allow_nan=False),
                          st.decimals(min_value=-5000, max_value=5000, places=2).map(str))


@given(st.lists(st.tuples(_MANY_NUMBERS, _MANY_UNITS), min_size=1, max_size=40),
       st.sampled_from(["pressure", "temperature", "volume", "density", "fraction", "mass"]),
       st.sampled_from([None, "gauge", "absolute"]))
def test_many_texts_read_at_once_give_exactly_what_parse_gives(pairs, kind, basis):
    texts = [f"{x} {u}".strip() for x, u in pairs]
    values, specs = si_many(texts, kind, pressure_basis=basis)
    for text, v, spec in zip(texts, values, specs):
        try:
            reading = parse(text, kind, pressure_basis=basis)
        except InputError:
            assert v is None and spec is None, text
            continue
        if v is not None:           # a text si_many leaves out goes through parse, which decides
            assert v == reading.si(), text
            assert spec == reading.unit, text


def test_the_registry_of_the_allowlisted_units_converts_exactly_as_pints_full_registry():
    # Reference: pint's own full default registry (every definition of default_en.txt), built here. The
    # package's registry holds only the definitions its allowlist uses, taken from the same files.
    import numpy as np
    import pint

    from screening import units

    assert units._pint_definitions() is not None, "pint's definition files no longer hold the units as read"
    small = units._registry()
    assert len(small._units) < 200
    full = pint.UnitRegistry(autoconvert_offset_to_baseunit=False)
    values = [0.0, 1.0, -40.0, 15.0, 200.0, 3.3333333, 1e6, np.array([0.5, 20.0, 873.15])]
    for label, spec in units._UNITS.items():
        si_name = units._SI_UNIT[spec.kind]
        for x in values:
            for src, dst in ((spec.pint_name, si_name), (si_name, spec.pint_name)):
                ours = small.Quantity(x, small.Unit(src)).to(small.Unit(dst)).magnitude
                theirs = full.Quantity(x, full.Unit(src)).to(full.Unit(dst)).magnitude
                assert np.array_equal(ours, theirs), (label, src, dst, x, ours, theirs)


def test_every_allowlisted_unit_converts_by_its_factor_exactly_as_pint_does():
    # Reference: pint's conversion of each number (the package's registry, which the test above holds to pint's
    # full registry). The reader multiplies by the unit's factor (and adds its offset) instead: the same
    # arithmetic, so the same number to the last bit, on numbers written as a register writes them.
    import random

    from screening import units

    rnd = random.Random(5)
    numbers = ([rnd.uniform(-1e4, 1e4) for _ in range(1500)] + [round(rnd.uniform(-100, 1000), 2) for _ in range(1500)]
               + [float(rnd.randint(-500, 5000)) for _ in range(500)] + [rnd.uniform(0, 1) * 10 ** rnd.randint(-9, 9)
                                                                       for _ in range(500)])
    for spec in {(s.pint_name, s.kind) for s in units._UNITS.values() if s.kind}:
        assert units._to_si_factor(*spec) is not None, spec
        for x in numbers:
            assert units._to_si(x, *spec) == units._pint_to_si(x, *spec), (spec, x)


def test_a_text_read_again_gives_the_same_reading_and_a_refused_one_names_its_own_key():
    # A register repeats its values: a text read before with the same kind, basis and key is not read anew. The
    # reading must be what reading it anew gives, and the key still chooses the accepted range: the same text
    # accepted under one key and refused under another names the key, file and row it was given under.
    from screening.units import _parse

    first = parse("65 degC", "temperature", key="exposure.gas_temperature", file="a.csv")
    again = parse("65 degC", "temperature", key="exposure.gas_temperature", file="b.csv")
    assert first == again == _parse("65 degC", "temperature", None, {"key": "exposure.gas_temperature"})
    assert parse("200 bar", "pressure", pressure_basis="gauge").unit.basis == "gauge"
    assert parse("200 bar", "pressure", pressure_basis="absolute").unit.basis == "absolute"
    # 150 K is a difference of 150 K as a tolerance (above its 100 K), a temperature elsewhere
    assert parse("150 K", "temperature", key="fill.temperature").si() == 150.0
    with pytest.raises(InputError) as err:
        parse("150 K", "temperature", key="tolerance.fill_temperature", file="site.toml", row=7)
    assert err.value.key == "tolerance.fill_temperature" and err.value.file == "site.toml"
    assert "7" in str(err.value)
    with pytest.raises(InputError) as err:     # refused, then refused again with its own file
        parse("200 bar", "pressure", file="second.toml", key="fill.pressure")
    assert err.value.file == "second.toml" and "gauge or absolute" in str(err.value)


def test_a_bare_number_is_refused_as_a_number_without_its_unit():
    # a case file's `pressure = 200` (a TOML number, no unit): said as such, with an example of what is read
    with pytest.raises(InputError) as err:
        parse(200, "pressure", key="fill.pressure")
    assert err.value.message == "a number without its unit" and "200 bar(g)" in err.value.expected
    assert parse("0.1", "fraction").si() == 0.1       # a fraction needs none
