"""The column reader's bare numbers read at once (columns._bare_column) give exactly what the reading cell by cell
gives: every array of PlainRows bit for bit, every list, which rows are plain; on random registers of bare numbers
of many forms, numbers with units, decimal commas, empty cells, signs, exponents, whitespace, values out of range,
bad texts, under header units of every kind."""

from __future__ import annotations

import itertools
import math
import random

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from screening.inputs import columns
from screening.inputs.columns import read_plain
from screening.inputs.headers import Column
from screening.inputs.inventory import _BARE_NUMBER, cell_value, read_inventory
from screening.units import _PATTERN, parse, si_many

# header units by column (None: no unit in the header; "K" and "mL" are not read in a header, whose unit is tried on
# "1 K" and "1 mL", outside their ranges: they are taken cell by cell below)
UNITS = {
    "water_capacity": ["L", "l", "litre", "m3", "ft3", "dm3", "cu ft", None],
    "rated_pressure": ["bar(g)", "bar(a)", "barg", "psig", "psi(g)", "psi(a)", "MPa", "MPa(a)", "kPa(g)", "bar",
                       "atm", "mbar(a)", "Pa(g)", None],
    "relief_set_pressure": ["bar(g)", "psig", "MPa(g)", "bar", None],
    "fill_pressure": ["bar(g)", "bar(a)", "psi(g)", "psia", "MPa", "kPa(a)", "bar", None],
    "fill_mass": ["kg", "lb", "g", "lbm", None],
    "fill_temperature": ["degC", "degF", "°C", "C", "°F", None],
    "ambient_max": ["degC", "degF", None],
    "gas_temperature": ["degC", "degF", None],
    "required_margin": ["%", None],
    "max_filling_ratio": ["kg/L", "kg/m3", "g/L", "lb/ft3", None],
}
# a plausible magnitude of each column in each of its units (bare numbers are drawn around it)
_SCALE = {"L": 50, "l": 50, "litre": 50, "m3": 0.05, "ft3": 1.7, "mL": 50000, "dm3": 50, "cu ft": 1.7,
          "bar(g)": 200, "bar(a)": 200, "barg": 200, "psig": 3000, "psi(g)": 3000, "psi(a)": 3000, "psia": 3000,
          "MPa": 20, "MPa(a)": 20, "MPa(g)": 20, "kPa(g)": 20000, "kPa(a)": 20000, "bar": 200, "atm": 200,
          "mbar(a)": 200000, "Pa(g)": 2e7, "kg": 20, "lb": 44, "g": 20000, "lbm": 44, "degC": 15, "degF": 59,
          "K": 288, "°C": 15, "C": 15, "°F": 59, "%": 10, "kg/L": 0.5, "kg/m3": 500, "g/L": 500, "lb/ft3": 31}
_WITH_UNIT = {"water_capacity": ["50 L", "0.05 m3", "10 bar(g)"], "fill_mass": ["20 kg", "44 lb", "3 L"],
              "fill_temperature": ["15 degC", "59 degF", "288.15 K", "-300 degC"],
              "ambient_max": ["45 degC", "0 K"], "gas_temperature": ["65 degC"], "required_margin": ["10 %", "0.05"],
              "max_filling_ratio": ["0.75 kg/L", "-0.1 kg/L"]}
_PRESSURE_WITH_UNIT = ["200 bar(g)", "150.5 barg", "2900 psig", "201 bar(a)", "200 bar", "-5 bar(g)", "20 MPa(a)"]


def _number_texts(rnd: random.Random, scale: float) -> str:
    """A cell written as a number in one of many forms (most of them bare numbers, some not read at once)."""
    x = (rnd.uniform(0.2, 2.0) if rnd.random() < 0.9 else rnd.uniform(-0.3, 0.2)) * scale
    form = rnd.randrange(150)
    if form >= 30:
        return f"{x:.2f}"
    if form < 8:
        return f"{x:.4f}"
    return [f"{x:.1f}", f"{x:g}", str(round(x)), f"+{abs(x):.3f}", f"-{abs(x):.2f}", f"{x:.6f}",
            f".{rnd.randrange(1, 99)}", f"{round(abs(x))}.", f"{x:.3e}", f"{x:.2E}", f" {x:.2f}", f"{x:.2f} ",
            f"{abs(x):,.2f}".replace(",", "_"), "1_000", "١٢", "inf", "nan", "-inf", "1e00001", "1" * 70,
            f"00{abs(x):.4f}", "-0", "+-1", "1.2.3"][form - 8]


def _cell(rnd: random.Random, name: str, unit: str | None, decimal: str, noise: float) -> str:
    form = rnd.random()
    if form < noise * 0.4:
        return ""
    if form < noise * 0.7:
        return rnd.choice(["x", "lots", "-", ".", "12 bogus", "1e5", "0", "0.0"])
    if form < noise:
        pool = _PRESSURE_WITH_UNIT if "pressure" in name else _WITH_UNIT[name]
        return rnd.choice(pool)
    text = _number_texts(rnd, _SCALE.get(unit, 10.0))
    if decimal == "," and rnd.random() < 0.7:
        text = text.replace(".", ",")
    return text


def _register(seed: int, tmp_path) -> tuple:
    rnd = random.Random(seed)
    decimal = "," if rnd.random() < 0.2 else "."
    noise = rnd.choice([0.01, 0.05, 0.2])
    delim = ";" if decimal == "," else ","
    names = [n for n in UNITS if n in ("water_capacity", "rated_pressure", "fill_temperature", "fill_pressure")
             or rnd.random() < 0.7]
    units = {n: rnd.choice(UNITS[n][:-1]) if rnd.random() < 0.98 else None for n in names}
    basis_column = rnd.random() < 0.4
    head = ["id", "gas"] + [f"{n} [{units[n]}]" if units[n] else n for n in names] + (
        ["pressure_basis"] if basis_column else [])
    lines = [delim.join(head)]
    rows = rnd.randrange(1, 60) if rnd.random() < 0.7 else rnd.randrange(65, 300)
    # some registers repeat their values, as a site's does (a column then reads each distinct number once)
    pools = {n: [_cell(rnd, n, units[n], decimal, noise) for _ in range(rnd.randrange(1, 12))]
             for n in names} if rnd.random() < 0.4 else None
    for i in range(rows):
        cells = [f"R{i}", rnd.choice(["nitrogen"] * 6 + ["argon", "propane", "", "unobtainium"])]
        by_mass = rnd.random() < 0.4
        for n in names:
            if (n == "fill_pressure" and by_mass) or (n == "fill_mass" and not by_mass and rnd.random() < 0.9):
                cells.append("")
                continue
            cells.append(rnd.choice(pools[n]) if pools else _cell(rnd, n, units[n], decimal, noise))
        if basis_column:
            cells.append(rnd.choice(["gauge"] * 4 + ["absolute", "", "gage"]))
        lines.append(delim.join(f'"{c}"' if delim in c else c for c in cells))
    path = tmp_path / f"inv{seed}.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    inv = read_inventory(path, decimal=decimal)
    defaults = rnd.choice([None, None, {"exposure": {"ambient_max": "45 degC"}},
                           {"exposure": {"ambient_max": 45}, "fill": {"temperature": 15.5}, "pressure_basis": "gauge"},
                           {"pressure_basis": "absolute", "vessel": {"water_capacity": "50 L"}},
                           {"fill": {"mass": "12"}, "criteria": {"required_margin": 0.05}}])
    return inv, defaults


def _same_float_array(a: np.ndarray, b: np.ndarray) -> bool:
    return a.dtype == b.dtype and a.shape == b.shape and a.tobytes() == b.tobytes()


def _same_value(a, b) -> bool:
    if isinstance(a, float) and isinstance(b, float):
        return (math.isnan(a) and math.isnan(b)) or (a == b and math.copysign(1, a) == math.copysign(1, b))
    return type(a) is type(b) and a == b


def assert_same_plain(fast, slow) -> None:
    """Every array bit for bit (NaN where NaN), every list and dict equal."""
    assert fast.index.tolist() == slow.index.tolist()
    for name in ("atmospheric_pa", "water_capacity_m3", "rated_pa", "relief_pa", "max_filling_ratio_kg_m3",
                 "fill_pressure_pa", "fill_temperature_k", "ambient_max_k", "gas_temperature_k", "required_margin",
                 "fill_mass_kg", "elevation_m"):
        assert _same_float_array(getattr(fast, name), getattr(slow, name)), name
    for name in ("required_margin_is_default", "sun"):
        a, b = getattr(fast, name), getattr(slow, name)
        assert a.dtype == b.dtype and a.tolist() == b.tolist(), name
    assert fast.ids == slow.ids and fast.gases == slow.gases and fast.display_units == slow.display_units
    assert fast.finishes == slow.finishes
    assert (fast.entered is None) == (slow.entered is None)
    if fast.entered is not None:
        assert list(fast.entered) == list(slow.entered)
        for key in fast.entered:
            a, b = fast.entered[key], slow.entered[key]
            assert len(a) == len(b) and all(_same_value(x, y) or x is y for x, y in zip(a, b)), key
    assert fast.cell_texts == slow.cell_texts
    for header, values in fast.cell_texts or ():
        assert all(type(v) is str for v in values), header
    assert (fast.sun_inputs or {}).keys() == (slow.sun_inputs or {}).keys()
    for key, values in (fast.sun_inputs or {}).items():
        assert all(_same_value(x, y) for x, y in zip(values, slow.sun_inputs[key])), key
    for j in range(len(fast)):
        assert fast.case(j) == slow.case(j)


def _slow(monkeypatch, inv, defaults):
    with monkeypatch.context() as m:
        m.setattr(columns, "_bare_column", lambda col, cells: None)
        return read_plain(inv, defaults)


@settings(max_examples=120, deadline=None, suppress_health_check=[HealthCheck.too_slow,
                                                                 HealthCheck.function_scoped_fixture])
@given(st.integers(0, 2**32 - 1))
def test_bare_numbers_read_at_once_give_what_the_cell_by_cell_reading_gives(tmp_path_factory, monkeypatch, seed):
    inv, defaults = _register(seed, tmp_path_factory.mktemp("bare"))
    fast = read_plain(inv, defaults)
    slow = _slow(monkeypatch, inv, defaults)
    assert_same_plain(fast, slow)


def test_the_random_registers_reach_both_paths_and_plain_rows(tmp_path, monkeypatch):
    """The registers above do exercise the bare numbers read at once and rows that are plain (not a vacuous test)."""
    read, plain_rows, units = 0, 0, set()
    real = columns._bare_column

    def counting(col, cells):
        nonlocal read
        got = real(col, cells)
        if got is not None:
            read += int(got.fast.sum())
            units.add(got.spec.label)
        return got
    monkeypatch.setattr(columns, "_bare_column", counting)
    for seed in range(60):
        inv, defaults = _register(seed, tmp_path)
        plain_rows += len(read_plain(inv, defaults))
    assert read > 1000 and plain_rows > 50
    assert {"bar(g)", "psi(g)", "degC", "degF", "L", "m3", "kg", "lb"} <= units


@pytest.mark.parametrize("unit,kind", [("bar(g)", "pressure"), ("psia", "pressure"), ("degC", "temperature"),
                                       ("degF", "temperature"), ("K", "temperature"), ("L", "volume"),
                                       ("ft3", "volume"), ("kg", "mass"), ("lb", "mass"), ("%", "fraction"),
                                       ("kg/L", "density")])
def test_every_short_text_of_the_number_characters_is_read_at_once_only_as_the_slow_path_reads_it(unit, kind):
    """Every text of up to 5 characters of "1", "0", ".", "+", "-" and "e" (and some of other characters): read at
    once exactly where float() reads it without an "e", and then its text and value are the slow path's."""
    key = {"pressure": "fill.pressure", "temperature": "fill.temperature", "volume": "vessel.water_capacity",
           "mass": "fill.mass", "fraction": "criteria.required_margin", "density": "vessel.max_filling_ratio"}[kind]
    col = Column(f"x [{unit}]", "x", key, unit)
    texts = ["".join(t) for n in range(1, 6) for t in itertools.product("10.+-e", repeat=n)]
    texts += ["1_000", "١٢", "inf", "nan", "Infinity", " 12", "12 ", "1\n", "0x1", "12,5", "1e5", "1E+05",
              "²", "1" * 80, "9" * 61]
    for text in texts:
        got = columns._bare_column(col, [text])
        numbered = got is not None and (got.numbered is None or bool(got.numbered[0]))
        try:
            as_float = float(text)
        except ValueError:
            as_float = None
        fast_form = (set(text) <= set("0123456789.+-") and as_float is not None
                     and len(text) + 1 + len(unit) <= 64)
        assert numbered == fast_form, text
        assert numbered == bool(columns._BARE_FAST.fullmatch(text) and len(text) + 1 + len(unit) <= 64), text
        if not numbered:
            continue
        # the slow path: the cell's text with its unit, split by the unit pattern into this very number and unit
        full = cell_value(col, text)
        assert _BARE_NUMBER.match(text) and full == f"{text} {unit}"
        m = _PATTERN.match(full)
        assert m.group(1) == text and float(m.group(1)) == as_float and m.group(2) == unit
        values, specs = si_many([full], kind, pressure_basis="gauge" if kind == "pressure" else None)
        if bool(got.fast[0]):
            assert values[0] is not None and specs[0] == got.spec or (specs[0].basis and got.spec.basis is None)
            assert got.si[0] == values[0] and math.copysign(1, got.si[0]) == math.copysign(1, values[0])
            assert got.si[0] == parse(full, kind, pressure_basis="gauge").si()


def test_the_units_read_at_once_convert_as_their_definitions():
    """The conversions the bare numbers take (those of units.si_many), checked against the units' definitions:
    1 psi = 6 894.757 293 168 Pa (NIST SP 811, appendix B.8: 6.894 757 293 168 E+03 Pa, from 1 lbf/in2 with the
    pound-force of 0.453 592 37 kg x 9.806 65 m/s2 and the inch of 0.0254 m); 1 bar = 1e5 Pa (by definition,
    SP 811 table 8); 1 L = 1e-3 m3 (CGPM 1964); 1 lb = 0.453 592 37 kg (international yard and pound, 1959);
    t/degC = T/K - 273.15 and t/degF = 1.8 t/degC + 32 (SP 811, 4.2.1.1 and B.9)."""
    cases = [("psig", "fill.pressure", "1000", 6894.757293168e3), ("bar(g)", "fill.pressure", "200.5", 200.5e5),
             ("MPa(a)", "fill.pressure", "21", 21e6), ("L", "vessel.water_capacity", "50", 0.05),
             ("kg", "fill.mass", "12.5", 12.5), ("lb", "fill.mass", "44", 44 * 0.45359237),
             ("degC", "fill.temperature", "15", 288.15), ("degF", "fill.temperature", "59", 288.15),
             ("K", "fill.temperature", "300.5", 300.5), ("%", "criteria.required_margin", "10", 0.1)]
    for unit, key, text, expected in cases:
        got = columns._bare_column(Column(f"x [{unit}]", "x", key, unit), [text])
        assert got is not None and bool(got.fast[0]), unit
        assert got.si[0] == pytest.approx(expected, rel=1e-12, abs=1e-12), unit      # SP 811 gives 13 digits
    # the psi from its definition, to the last digits: 0.453 592 37 kg x 9.806 65 m/s2 / (0.0254 m)2
    got = columns._bare_column(Column("x [psia]", "x", "fill.pressure", "psia"), ["1"])
    assert got.si[0] == pytest.approx(0.45359237 * 9.80665 / 0.0254 ** 2, rel=4e-16)


def test_a_column_of_bare_numbers_and_other_cells_reads_each_cell_where_it_belongs(tmp_path, monkeypatch):
    path = tmp_path / "inv.csv"
    path.write_text("id,gas,water_capacity [L],rated_pressure [bar(g)],fill_pressure [bar],fill_temperature [degC],"
                    "ambient_max [degC],pressure_basis\n"
                    "A,nitrogen,50,300,200,15,45,gauge\n"
                    "B,nitrogen,50 L,300.0,200.,15 degC,45,absolute\n"
                    "C,nitrogen, 50 ,300,1e2,+15,45,\n"
                    "D,nitrogen,50,-300,200,-15.5,45,gauge\n"
                    "E,nitrogen,50,300,200,-300,45,gauge\n"
                    "F,nitrogen,,300,200,15,45,gauge\n"
                    "G,nitrogen,50,300,200,15,1_000,gauge\n"
                    "H,nitrogen,.5,300.5,20.25,15,45,absolute\n"
                    "I,nitrogen,.5,3000.5,20.25,15,45,absolute\n", encoding="utf-8")
    inv = read_inventory(path)
    fast = read_plain(inv, None)
    assert_same_plain(fast, _slow(monkeypatch, inv, None))
    assert fast.ids == ["A", "B", "H"]
    assert fast.display_units[0]["pressure"] == "bar(g)" and fast.fill_pressure_pa[2] == 20.25e5
    assert dict(fast.cell_texts)["fill_pressure [bar]"] == ["200 bar", "200. bar", "20.25 bar"]
