"""Exposure scenarios, the sun's energy balance in a case, and input tolerances."""

import textwrap

import CoolProp.CoolProp as CP
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from screening.cli import main
from screening.engine import screen_text

ATM = 101325.0

BASE = textwrap.dedent("""\
    id = "S"
    [vessel]
    water_capacity = "50 L"
    rated_pressure = "300 bar(g)"
    [fill]
    gas = "nitrogen"
    pressure = "{p} bar(g)"
    temperature = "{t} degC"
    [exposure]
    ambient_max = "{amb} degC"
    """)


def base(p=200.0, t=15.0, amb=40.0):
    return BASE.format(p=p, t=t, amb=amb)


def test_no_sun_gives_the_ambient_temperature():
    r = screen_text(base() + 'solar = "none"\n').to_json()
    assert r["worst_case_temperature_k"] == pytest.approx(313.15)
    assert r["exposure"] is None


def test_sun_raises_the_gas_temperature_and_the_balance_closes():
    r = screen_text(base() + 'solar = "sun"\nfinish = "medium grey paint"\n').to_json()
    b = r["exposure"]
    assert r["worst_case_temperature_k"] == pytest.approx(b["wall_temperature_k"])
    assert b["wall_temperature_k"] > 313.15
    assert abs(b["absorbed_w_m2"] - b["convected_w_m2"] - b["radiated_w_m2"]) <= 1e-3 * b["absorbed_w_m2"]
    assert b["dimensions_estimated"]


def test_black_is_hotter_than_white_and_wind_cools():
    black = screen_text(base() + 'solar = "sun"\nfinish = "black paint"\n').to_json()
    white = screen_text(base() + 'solar = "sun"\nfinish = "white paint"\n').to_json()
    windy = screen_text(base() + 'solar = "sun"\nfinish = "black paint"\nwind_speed = "3 m/s"\n').to_json()
    assert black["worst_case_temperature_k"] > white["worst_case_temperature_k"]
    assert windy["worst_case_temperature_k"] < black["worst_case_temperature_k"]
    assert black["peak_pressure_pa"] > white["peak_pressure_pa"]


SCENARIOS = base(amb=35.0) + textwrap.dedent("""\
    [[scenario]]
    name = "store, shaded"
    [[scenario]]
    name = "yard, full sun"
    solar = "sun"
    absorptivity = 0.7
    [[scenario]]
    name = "closed van"
    gas_temperature = "75 degC"
    """)


def test_each_scenario_is_screened_and_the_worst_governs():
    r = screen_text(SCENARIOS).to_json()
    names = [s["name"] for s in r["scenarios"]]
    assert names == ["store, shaded", "yard, full sun", "closed van"]
    assert r["governing_scenario"] == "closed van"
    assert [s["governing"] for s in r["scenarios"]] == [False, False, True]
    for s in r["scenarios"]:
        assert {"verdict", "reasons", "peak_pressure_pa", "margin_fraction", "limits", "models"} <= set(s)
    # the governing scenario's peak is the reference EOS peak at 75 degC (Span 2000 via PropsSI), or above
    d = CP.PropsSI("Dmolar", "P", 200e5 + ATM, "T", 288.15, "Nitrogen")
    assert r["peak_pressure_pa"] >= CP.PropsSI("P", "Dmolar", d, "T", 348.15, "Nitrogen") * (1 - 1e-9)
    assert r["peak_pressure_pa"] == max(s["peak_pressure_pa"] for s in r["scenarios"])


def test_tolerances_give_a_bounding_peak_above_the_nominal():
    r = screen_text(base() + '[tolerance]\nfill_pressure = "2 bar"\nfill_temperature = "2 K"\n'
                    'gas_temperature = "3 K"\n').to_json()
    tol = r["tolerance"]
    assert tol["bounding_peak_pressure_pa"] > tol["nominal_peak_pressure_pa"]
    assert r["peak_pressure_pa"] == tol["bounding_peak_pressure_pa"]
    assert tol["expected_corner_confirmed"]
    # the sensitivities have the physical signs of a heated rigid tank
    s = tol["sensitivities"]
    assert s["dp_peak_dt_gas"] > 0 and s["dp_peak_dp_fill"] > 0 and s["dp_peak_dt_fill"] < 0


def test_percent_of_full_scale_tolerance():
    r = screen_text(base() + '[tolerance]\nfill_pressure = "1.6 % of 400 bar"\n').to_json()
    assert r["tolerance"]["fill_pressure_band_pa"] == pytest.approx(0.016 * 400e5)
    r = screen_text(base() + '[tolerance]\nfill_pressure = "1 %"\n').to_json()
    assert r["tolerance"]["fill_pressure_band_pa"] == pytest.approx(0.01 * 200e5)


@settings(max_examples=6, deadline=None)
@given(dp=st.floats(min_value=0.5, max_value=8.0), dtf=st.floats(min_value=0.5, max_value=5.0),
       dtg=st.floats(min_value=0.5, max_value=5.0), p=st.floats(min_value=50.0, max_value=230.0))
def test_bounding_peak_is_at_least_every_corner(dp, dtf, dtg, p):
    dp, dtf, dtg, p = (round(x, 3) for x in (dp, dtf, dtg, p))  # the same numbers in every case text
    text = base(p=p) + f'[tolerance]\nfill_pressure = "{dp:.4f} bar"\nfill_temperature = "{dtf:.4f} K"\n' \
                       f'gas_temperature = "{dtg:.4f} K"\n'
    bounding = screen_text(text).to_json()["peak_pressure_pa"]
    for a in (-1, 1):
        for b in (-1, 1):
            for c in (-1, 1):
                corner = screen_text(base(p=p + a * dp, t=15.0 + b * dtf, amb=40.0 + c * dtg)).to_json()
                assert bounding >= corner["peak_pressure_pa"] * (1 - 1e-9)


@pytest.mark.parametrize("extra, key, words", [
    ('solar = "sun"\nabsorptivity = 1.4\n', "exposure.absorptivity", "between 0 and 1"),
    ('solar = "sun"\nabsorptivity = -0.1\n', "exposure.absorptivity", "between 0 and 1"),
    ('solar = "sun"\nwind_speed = "-2 m/s"\n', "exposure.wind_speed", "negative"),
    ('solar = "sun"\nirradiance = "-100 W/m2"\n', "exposure.irradiance", "negative"),
    ('solar = "sometimes"\n', "exposure.solar", "unknown solar"),
    ('solar = "sun"\nfinish = "tartan"\n', "exposure.finish", "unknown"),
    ('[tolerance]\nfill_pressure = "250 bar"\n', "tolerance.fill_pressure", "smaller than the reading"),
    ('[tolerance]\nfill_pressure = "120 %"\n', "tolerance.fill_pressure", "smaller than the reading"),
    ('[tolerance]\nfill_temperature = "-2 K"\n', "tolerance.fill_temperature", "at least zero"),
    ('[[scenario]]\nsolar = "sun"\n', "scenario[1].name", "required"),
    ('[[scenario]]\nname = "a"\nshade = "yes"\n', "scenario[1].shade", "unknown key"),
])
def test_bad_exposure_and_tolerance_inputs_exit_2(tmp_path, capsys, extra, key, words):
    path = tmp_path / "c.toml"
    path.write_text(base() + extra)
    with pytest.raises(SystemExit) as exc:
        main(["check", str(path)])
    err = capsys.readouterr().err
    assert exc.value.code == 2, err
    assert f"'{key}'" in err and words in err and str(path) in err
