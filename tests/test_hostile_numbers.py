"""Numbers outside every documented range are input errors located at the file and the key (or the row
and the column); no infinite or overflowing number reaches a result, and every JSON written is strict."""

from __future__ import annotations

import dataclasses
import json
import math
from pathlib import Path

import pytest
from helpers import cli, nitrogen_case

from screening.errors import InputError
from screening.units import KIND_RANGES, QUANTITY_RANGES, parse

GOOD = nitrogen_case("H-2")


def case_file(tmp_path: Path, text: str) -> Path:
    p = tmp_path / "case.toml"
    p.write_text(text, encoding="utf-8")
    return p


def replace(old: str, new: str) -> str:
    assert old in GOOD
    return GOOD.replace(old, new)


@pytest.mark.parametrize("text, key, given", [
    (replace('"50 L"', '"1e308 m3"'), "vessel.water_capacity", "1e308 m3"),
    (replace('"300 bar(g)"', '"1e308 MPa(g)"'), "vessel.rated_pressure", "1e308 MPa(g)"),
    (replace('rated_pressure = "300 bar(g)"', 'rated_pressure = "300 bar(g)"\nrelief_set_pressure = "1e308 MPa(g)"'),
     "vessel.relief_set_pressure", "1e308 MPa(g)"),
    (replace('ambient_max = "45 degC"', 'ambient_max = "45 degC"\ngas_temperature = "1e308 degF"'),
     "exposure.gas_temperature", "1e308 degF"),
    (replace('"200 bar(g)"', '"1e308 psia"'), "fill.pressure", "1e308 psia"),
    (replace('"50 L"', '"0.01 L"'), "vessel.water_capacity", "0.01 L"),
    (replace('"50 L"', '"101 m3"'), "vessel.water_capacity", "101 m3"),
    (replace('"300 bar(g)"', '"3001 bar(g)"'), "vessel.rated_pressure", "3001 bar(g)"),
    (replace('"15 degC"', '"-201 degC"'), "fill.temperature", "-201 degC"),
    (replace('"45 degC"', '"1001 degC"'), "exposure.ambient_max", "1001 degC"),
    (GOOD + '[criteria]\nrequired_margin = "91 %"\n', "criteria.required_margin", "91 %"),
    (replace('temperature = "15 degC"', 'temperature = "15 degC"').replace('pressure = "200 bar(g)"\n', "")
     .replace('temperature = "15 degC"\n', 'mass = "1e308 kg"\n'), "fill.mass", "1e308 kg"),
    (replace('ambient_max = "45 degC"', 'ambient_max = "45 degC"\nsolar = "sun"\nwind_speed = "1e308 m/s"'),
     "exposure.wind_speed", "1e308 m/s"),
    (replace('ambient_max = "45 degC"', 'ambient_max = "45 degC"\nsolar = "sun"\nirradiance = "1e308 W/m2"'),
     "exposure.irradiance", "1e308 W/m2"),
    (replace('rated_pressure = "300 bar(g)"', 'rated_pressure = "300 bar(g)"\noutside_diameter = "1e308 mm"'),
     "vessel.outside_diameter", "1e308 mm"),
    (replace('rated_pressure = "300 bar(g)"', 'rated_pressure = "300 bar(g)"\nmax_filling_ratio = "1e308 kg/L"'),
     "vessel.max_filling_ratio", "1e308 kg/L"),
    (GOOD + '[tolerance]\nfill_temperature = "1e308 K"\n', "tolerance.fill_temperature", "1e308 K"),
    (GOOD + '[[scenario]]\nname = "yard"\nambient_max = "1e308 degF"\n', "scenario[1].ambient_max", "1e308 degF"),
])
def test_a_number_outside_its_range_is_a_located_input_error(tmp_path, capsys, text, key, given):
    path = case_file(tmp_path, text)
    code, out, err = cli(capsys, "check", str(path), "--json")
    assert code == 2, out + err
    assert str(path) in err and f"'{key}'" in err and repr(given) in err and "expected" in err
    assert "Traceback" not in err and "Warning" not in err and err.count("\n") == 1
    assert out == ""


def test_a_huge_cell_of_an_inventory_is_located_at_its_row_and_column(tmp_path, capsys):
    inv = tmp_path / "inv.csv"
    inv.write_text("id,gas,water_capacity,rated_pressure,fill_pressure [psia],fill_temperature,ambient_max\n"
                   "A,nitrogen,50 L,300 bar(g),2900,15 degC,45 degC\n"
                   "B,nitrogen,1e308 m3,300 bar(g),2900,15 degC,45 degC\n"
                   "C,nitrogen,50 L,300 bar(g),1e308,15 degC,45 degC\n", encoding="utf-8")
    out = tmp_path / "o.json"
    code, stdout, err = cli(capsys, "batch", str(inv), "--json", str(out), "--quiet")
    assert code == 1 and "Traceback" not in err
    doc = json.loads(out.read_text(encoding="utf-8"))
    by_row = {r["row"]: r for r in doc["results"]}
    assert by_row[2]["verdict"] != "input-error"
    assert by_row[3]["verdict"] == "input-error" and by_row[3]["error"]["column"] == "water_capacity"
    assert "1e308 m3" in by_row[3]["reasons"][0]
    assert by_row[4]["verdict"] == "input-error" and by_row[4]["error"]["column"] == "fill_pressure [psia]"
    assert "out of range" in by_row[4]["reasons"][0]


def test_every_range_is_finite_and_ordered():
    for rng in list(KIND_RANGES.values()) + list(QUANTITY_RANGES.values()):
        assert math.isfinite(rng.low) and math.isfinite(rng.high) and rng.low < rng.high, rng
        assert rng.text


@pytest.mark.parametrize("kind", sorted(KIND_RANGES))
def test_no_kind_lets_an_overflowing_number_through(kind):
    unit = {"pressure": "psia", "temperature": "degF", "volume": "ft3", "mass": "lb", "fraction": "%",
            "density": "lb/ft3", "length": "in", "speed": "mph", "irradiance": "W/m2"}[kind]
    for number in ("1e308", "-1e308", "9e307"):
        with pytest.raises(InputError):
            parse(f"{number} {unit}", kind, key="x.y")


def test_check_json_is_strict_and_finite_for_every_demo_case(capsys):
    root = Path(__file__).resolve().parents[1]
    for case in sorted((root / "cases").glob("*.toml")):
        code, out, err = cli(capsys, "check", str(case), "--json")
        assert code in (0, 1), err

        def no_constant(name, where=case.name):
            raise AssertionError(f"non-strict JSON constant {name} in {where}")

        json.loads(out, parse_constant=no_constant)


def test_the_json_attached_to_a_report_is_strict(tmp_path):
    from screening.engine import screen_text
    from screening.outputs.report import result_json

    result = screen_text(GOOD, "case.toml")
    json.loads(result_json(result), parse_constant=lambda name: pytest.fail(name))
    broken = dataclasses.replace(result, peak_pressure_pa=math.inf)
    with pytest.raises(ValueError):
        result_json(broken)


def test_the_batch_json_is_strict(tmp_path, capsys):
    inv = tmp_path / "inv.csv"
    inv.write_text("id,gas,water_capacity,rated_pressure,fill_pressure,fill_temperature,ambient_max\n"
                   "A,nitrogen,50 L,300 bar(g),200 bar(g),15 degC,45 degC\n", encoding="utf-8")
    out = tmp_path / "o.json"
    cli(capsys, "batch", str(inv), "--json", str(out), "--quiet")
    json.loads(out.read_text(encoding="utf-8"), parse_constant=lambda name: pytest.fail(name))


def test_the_limits_of_each_range_are_accepted(tmp_path, capsys):
    text = replace('"50 L"', '"0.1 L"').replace('"45 degC"', '"1000 degC"')
    path = case_file(tmp_path, text + '[criteria]\nrequired_margin = "90 %"\n')
    code, _, err = cli(capsys, "check", str(path))
    assert code in (0, 1), err


def test_more_than_twenty_scenarios_is_an_input_error_before_any_screening(tmp_path, capsys, monkeypatch):
    import screening.engine

    monkeypatch.setattr(screening.engine, "screen_case", lambda *a, **k: pytest.fail("screened"))
    text = GOOD + "".join(f'[[scenario]]\nname = "s{i}"\nambient_max = "{20 + i % 30} degC"\n' for i in range(1000))
    path = case_file(tmp_path, text)
    code, _, err = cli(capsys, "check", str(path))
    assert code == 2 and "'scenario'" in err and "1000 [[scenario]] tables" in err and "at most 20" in err


def test_twenty_scenarios_are_accepted(tmp_path):
    from screening.inputs.case import parse_case_text

    text = GOOD + "".join(f'[[scenario]]\nname = "s{i}"\nambient_max = "{20 + i} degC"\n' for i in range(20))
    assert len(parse_case_text(text, "c.toml").scenarios) == 20
