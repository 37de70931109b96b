"""Every bad input gives exit code 2 and one message naming the file, the key, what was given and expected."""

import subprocess
import sys
import textwrap

import pytest

from screening.cli import main

GOOD = textwrap.dedent("""\
    id = "T-1"
    [vessel]
    water_capacity = "50 L"
    rated_pressure = "300 bar(g)"
    [fill]
    gas = "nitrogen"
    pressure = "200 bar(g)"
    temperature = "15 degC"
    [exposure]
    ambient_max = "45 degC"
    """)


def run_case(tmp_path, capsys, text):
    path = tmp_path / "case.toml"
    path.write_text(text)
    with pytest.raises(SystemExit) as exc:
        main(["check", str(path)])
    out = capsys.readouterr()
    return exc.value.code, out.err, str(path)


def replace(old, new):
    assert old in GOOD
    return GOOD.replace(old, new)


@pytest.mark.parametrize("text, key, words", [
    (replace('ambient_max = "45 degC"', 'ambient_max = "45 degC"\nsolar_load = "yes"'), "exposure.solar_load",
     "unknown key"),
    (replace('id = "T-1"\n', ""), "id", "required key is missing"),
    (replace('water_capacity = "50 L"\n', ""), "vessel.water_capacity", "required key is missing"),
    (replace('"200 bar(g)"', '"200 kg"'), "fill.pressure", "unit of mass, not of pressure"),
    (replace('"200 bar(g)"', '"200 bar"'), "fill.pressure", "gauge or absolute"),
    (replace('"50 L"', '"-50 L"'), "vessel.water_capacity", "above zero"),
    (replace('"50 L"', '"0 L"'), "vessel.water_capacity", "above zero"),
    (replace('"200 bar(g)"', '"0 bar(a)"'), "fill.pressure", "absolute pressure must be above zero"),
    (replace('"200 bar(g)"', '"-2 bar(g)"'), "fill.pressure", "absolute pressure must be above zero"),
    (replace('"15 degC"', '"-274 degC"'), "fill.temperature", "absolute zero"),
    (replace('"15 degC"', '"0 K"'), "fill.temperature", "absolute zero"),
    (replace('"200 bar(g)"', '"nan bar(g)"'), "fill.pressure", "not a number"),
    (replace('"200 bar(g)"', '"1e400 bar(g)"'), "fill.pressure", "not finite"),
    (replace('"15 degC"', '"15 Coul"'), "fill.temperature", "not one this tool reads"),
    (replace('"nitrogen"', '"nitrogn"'), "fill.gas", "closest names: nitrogen"),
    (replace('"nitrogen"', '"argon 80% + carbon dioxide 18%"'), "fill.gas", "sum"),
    (replace('temperature = "15 degC"\n', 'temperature = "15 degC"\nmass = "10 kg"\n'), "fill.mass", "not both"),
    (replace('pressure = "200 bar(g)"\n', ""), "fill.pressure", "pressure (with temperature) or a mass"),
    (replace('ambient_max = "45 degC"\n', ""), "exposure.ambient_max", "ambient_max or gas_temperature"),
    (replace('"300 bar(g)"', '"0 bar(g)"'), "vessel.rated_pressure", "above atmospheric"),
    (GOOD + '[criteria]\nrequired_margin = "120 %"\n', "criteria.required_margin", "out of range"),
])
def test_bad_input_exits_2_with_a_located_message(tmp_path, capsys, text, key, words):
    code, err, path = run_case(tmp_path, capsys, text)
    assert code == 2
    assert path in err
    assert f"'{key}'" in err
    assert words in err
    assert "Traceback" not in err
    assert err.count("\n") == 1  # one message


def test_not_toml_is_an_input_error(tmp_path, capsys):
    code, err, path = run_case(tmp_path, capsys, "id = \n[vessel")
    assert code == 2 and "not valid TOML" in err and path in err


def test_missing_file_is_an_input_error(tmp_path, capsys):
    with pytest.raises(SystemExit) as exc:
        main(["check", str(tmp_path / "nope.toml")])
    assert exc.value.code == 2
    assert "case file not found" in capsys.readouterr().err


def test_bare_pressure_with_case_basis_is_accepted(tmp_path, capsys):
    text = 'pressure_basis = "gauge"\n' + GOOD.replace('"200 bar(g)"', '"200 bar"').replace('"300 bar(g)"', '"300 bar"')
    code, err, _ = run_case(tmp_path, capsys, text)
    assert code in (0, 1), err


def test_console_script_gives_no_traceback(tmp_path):
    path = tmp_path / "case.toml"
    path.write_text(replace('"50 L"', '"fifty L"'))
    proc = subprocess.run([sys.executable, "-m", "screening.cli", "check", str(path)], capture_output=True, text=True)
    assert proc.returncode == 2
    assert "vessel.water_capacity" in proc.stderr and "Traceback" not in proc.stderr
