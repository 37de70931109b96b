"""A register's tolerances come from its defaults file and apply to the rows they fit: a fill-pressure tolerance to
the rows filled by pressure, the temperature tolerances to every row. A case file that asks for a fill-pressure
tolerance without a fill pressure is still refused.

Check values: CoolProp's reference equations evaluated here (PropsSI)."""

from __future__ import annotations

import json

import CoolProp.CoolProp as CP
import pytest

from screening.batch import BatchRun
from screening.errors import InputError
from screening.inputs.case import parse_case_text
from screening.inputs.inventory import read_inventory

DEFAULTS = {"tolerance": {"fill_pressure": "2 bar", "fill_temperature": "2 K", "gas_temperature": "3 K"}}


def test_a_row_filled_by_mass_takes_the_defaults_temperature_tolerances_without_the_pressure_one(tmp_path):
    path = tmp_path / "register.csv"
    path.write_text("id,gas,water_capacity [L],rated_pressure [bar(g)],fill_pressure [bar(g)],fill_mass [kg],"
                    "fill_temperature [degC],ambient_max [degC]\n"
                    "P1,propane,26,30,,10.5,15,45\n"
                    "N1,nitrogen,50,300,200,,15,45\n", encoding="utf-8")
    run = BatchRun(read_inventory(path), DEFAULTS)
    by_mass, by_pressure = (json.loads(json.dumps(run.full(i).to_json())) for i in (0, 1))
    assert by_mass["verdict"] != "input-error" and by_pressure["verdict"] != "input-error"
    assert by_mass["tolerance"]["entered"] == {"fill_temperature": "2 K", "gas_temperature": "3 K"}
    assert by_pressure["tolerance"]["entered"] == DEFAULTS["tolerance"]
    # the bounding corner of the propane row: 2 K warmer at the fill (the same mass) and 3 K hotter at the worst
    # case; its pressure there on Lemmon et al. (2009) propane through CoolProp's PropsSI (10.5 kg in 26 L is a
    # liquid-vapour mixture at 48 degC, so the vapour pressure)
    corner = by_mass["tolerance"]["bounding_corner"]
    assert corner["worst_case_temperature_k"] == pytest.approx(318.15 + 3.0)
    assert by_mass["tolerance"]["bounding_peak_pressure_pa"] == pytest.approx(
        CP.PropsSI("P", "Dmass", 10.5 / 0.026, "T", 321.15, "Propane"), rel=1e-6)


def test_a_case_file_with_a_fill_pressure_tolerance_and_a_fill_by_mass_is_refused():
    with pytest.raises(InputError, match="fill-pressure tolerance needs a fill pressure"):
        parse_case_text('id = "X"\n[vessel]\nwater_capacity = "26 L"\nrated_pressure = "30 bar(g)"\n'
                        '[fill]\ngas = "propane"\nmass = "10.5 kg"\ntemperature = "15 degC"\n'
                        '[exposure]\nambient_max = "45 degC"\n[tolerance]\nfill_pressure = "2 bar"\n')
