"""The column-wise reader of plain inventory rows gives exactly what the case reader gives, and never
accepts a row the case reader refuses."""

import math

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from screening.errors import InputError
from screening.inputs.columns import read_plain
from screening.inputs.inventory import read_inventory, row_case

HEAD = ("id,gas,water_capacity,rated_pressure [bar(g)],relief_set_pressure,fill_pressure,fill_temperature,"
        "ambient_max,gas_temperature,required_margin,site,elevation,atmospheric_pressure,max_filling_ratio,fill_mass,"
        "solar,finish,absorptivity,emissivity,irradiance,wind_speed,orientation,outside_diameter,length")

# cell texts, good and bad, as people type them
GAS = st.sampled_from(["nitrogen", "argon", "Argon", "N2", "methane", "carbon dioxide", "unobtainium", "",
                       "argon 82% + carbon dioxide 18%", "helium", "propane", "R-134a"])
CAP = st.sampled_from(["50 L", "10", "0.05 m3", "-1 L", "50 bar(g)", "", "1.7 ft3"])
RATED = st.sampled_from(["300", "200 bar(g)", "3000 psig", "0", "0.5 bar(a)", "20 MPa(a)", "lots", ""])
RELIEF = st.sampled_from(["", "330 bar(g)", "0.2 bar(g)", "330"])
PRESSURE = st.sampled_from(["200 bar(g)", "150.5 barg", "2900 psig", "201 bar(a)", "200 bar", "-5 bar(g)",
                            "-2 bar(a)", "", "x"])
TEMP = st.sampled_from(["15 degC", "59 degF", "288.15 K", "-300 degC", "15", "", "20 °C"])
AMB = st.sampled_from(["45 degC", "", "40 degC", "0 K", "hot"])
HOT = st.sampled_from(["", "65 degC", "30 degC"])
MARGIN = st.sampled_from(["", "10 %", "0.05", "100 %", "-1 %"])
SITE = st.sampled_from(["", "North yard"])
ELEV = st.sampled_from(["", "240 m", "20000 m"])
ATM = st.sampled_from(["", "98.5 kPa(a)", "98.5 kPa(g)", "150 kPa(a)", "0.98 bar(a)"])
RATIO = st.sampled_from(["", "0.75 kg/L", "-0.1 kg/L"])
MASS = st.sampled_from(["", "", "", "20 kg", "20", "4500 g", "44 lb", "0 kg", "-3 kg", "20 L", "heavy"])
SOLAR = st.sampled_from(["", "", "sun", "none", "Sun", "yes"])
FINISH = st.sampled_from(["", "", "white paint", "red_paint", "chrome"])
FRACTION = st.sampled_from(["", "", "", "0.6", "60 %", "0.97", "1", "0", "1.2", "-0.1", "dark"])
IRRADIANCE = st.sampled_from(["", "", "800 W/m2", "0", "1000", "-5 W/m2", "2 m/s"])
WIND = st.sampled_from(["", "", "2 m/s", "0", "10 km/h", "-1 m/s", "3"])
ORIENTATION = st.sampled_from(["", "", "vertical", "horizontal", "Vertical", "upright"])
LENGTH = st.sampled_from(["", "", "229 mm", "1.4 m", "0 m", "-1 m", "140", "6 m", "60 m"])
SUN = st.tuples(SOLAR, FINISH, FRACTION, FRACTION, IRRADIANCE, WIND, ORIENTATION, LENGTH, LENGTH)
ROW = st.tuples(GAS, CAP, RATED, RELIEF, PRESSURE, TEMP, AMB, HOT, MARGIN, SITE, ELEV, ATM, RATIO, MASS, SUN)


def _same(a, b):
    if a is None or (isinstance(a, float) and math.isnan(a)):
        return b is None
    return a == b


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(ROW, min_size=5, max_size=25))
def test_plain_rows_match_the_case_reader(tmp_path_factory, rows):
    path = tmp_path_factory.mktemp("inv") / "inv.csv"
    lines = [HEAD] + [f"R{i}," + ",".join(cells[:-1] + cells[-1]) for i, cells in enumerate(rows)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    inv = read_inventory(path)
    plain = read_plain(inv, None)
    accepted = {int(pos): j for j, pos in enumerate(plain.index)}
    for pos, (n, cells) in enumerate(inv.rows):
        try:
            case = row_case(inv, n, cells, None)
        except InputError:
            assert pos not in accepted, (cells, "accepted by the column reader, refused by the case reader")
            continue
        if pos not in accepted:
            continue
        j = accepted[pos]
        assert plain.ids[j] == case.id
        assert plain.gases[j] == case.gas
        assert plain.atmospheric_pa[j] == case.site.atmospheric_pressure_pa
        assert plain.water_capacity_m3[j] == case.water_capacity_m3
        assert plain.rated_pa[j] == case.rated_pressure_pa
        assert _same(float(plain.relief_pa[j]), case.relief_set_pressure_pa)
        assert _same(float(plain.max_filling_ratio_kg_m3[j]), case.max_filling_ratio_kg_m3)
        assert _same(float(plain.fill_pressure_pa[j]), case.fill_pressure_pa)
        assert _same(float(plain.fill_mass_kg[j]), case.fill_mass_kg)
        assert plain.fill_temperature_k[j] == case.fill_temperature_k
        assert _same(float(plain.ambient_max_k[j]), case.ambient_max_k)
        assert _same(float(plain.gas_temperature_k[j]), case.gas_temperature_k)
        assert plain.required_margin[j] == case.required_margin
        assert bool(plain.required_margin_is_default[j]) == case.required_margin_is_default
        assert plain.display_units[j] == case.display_units
        assert plain.in_sun(j) == (case.scenarios[0].solar == "sun")
        assert plain.finish(j) == case.scenarios[0].finish
        assert plain.exposure(j) == case.scenarios[0]
        assert plain.case(j) == case


def test_defaults_fill_plain_rows_and_unusual_defaults_send_every_row_to_the_case_reader(tmp_path):
    path = tmp_path / "inv.csv"
    path.write_text("id,gas,water_capacity,rated_pressure,fill_pressure,fill_temperature\n"
                    "A,nitrogen,50 L,300 bar(g),200 bar(g),15 degC\n", encoding="utf-8")
    inv = read_inventory(path)
    plain = read_plain(inv, {"exposure": {"ambient_max": "45 degC"}, "criteria": {"required_margin": "5 %"}})
    assert len(plain) == 1 and plain.ambient_max_k[0] == 318.15 and plain.required_margin[0] == 0.05
    # a finish and an absorptivity: the case reader refuses the pair
    assert len(read_plain(inv, {"exposure": {"ambient_max": "45 degC", "solar": "sun", "absorptivity": "0.6",
                                             "finish": "white paint"}})) == 0
    assert len(read_plain(inv, {"exposure": {"ambient_max": "45 degC"}, "tolerance": {"fill_temperature": "2 K"}})) == 0


def test_a_row_the_case_reader_refuses_for_its_sun_inputs_goes_to_the_case_reader(tmp_path):
    # every column of a case key is a plain key now; a row giving both a finish and an absorptivity is refused
    path = tmp_path / "inv.csv"
    path.write_text("id,gas,water_capacity,rated_pressure,fill_pressure,fill_temperature,ambient_max,solar,"
                    "absorptivity,finish\n"
                    "A,nitrogen,50 L,300 bar(g),200 bar(g),15 degC,45 degC,sun,0.6,white paint\n"
                    "B,nitrogen,50 L,300 bar(g),200 bar(g),15 degC,45 degC,,,\n"
                    "C,nitrogen,50 L,300 bar(g),200 bar(g),15 degC,45 degC,sun,0.6,\n", encoding="utf-8")
    inv = read_inventory(path)
    plain = read_plain(inv, None)
    assert plain.ids == ["B", "C"]
    with pytest.raises(InputError, match="finish or an absorptivity"):
        row_case(inv, *inv.rows[0], None)


def test_a_row_in_the_sun_is_plain_with_its_ambient_and_is_read_as_the_case_reader_reads_it(tmp_path):
    path = tmp_path / "inv.csv"
    path.write_text("id,gas,water_capacity,rated_pressure,fill_pressure,fill_temperature,ambient_max,"
                    "gas_temperature,solar\n"
                    "S,nitrogen,50 L,300 bar(g),200 bar(g),15 degC,45 degC,,sun\n"
                    "H,nitrogen,50 L,300 bar(g),200 bar(g),15 degC,45 degC,65 degC,sun\n"
                    "N,nitrogen,50 L,300 bar(g),200 bar(g),15 degC,45 degC,,none\n"
                    "E,nitrogen,50 L,300 bar(g),200 bar(g),15 degC,,,\n"
                    "G,nitrogen,50 L,300 bar(g),200 bar(g),15 degC,,65 degC,sun\n"
                    "C,nitrogen,50 L,300 bar(g),200 bar(g),15 degC,45 degC,,Sun\n"
                    "Y,nitrogen,50 L,300 bar(g),200 bar(g),15 degC,45 degC,,yes\n", encoding="utf-8")
    inv = read_inventory(path)
    plain = read_plain(inv, None)
    # a sun exposure needs its ambient (G), and only "none" or "sun" is read (C, Y): the case reader refuses them
    assert plain.ids == ["S", "H", "N"]
    assert plain.sun.tolist() == [True, True, False]
    for j, pos in enumerate(plain.index):
        assert plain.case(j) == row_case(inv, *inv.rows[int(pos)], None)
    for pos in (4, 5, 6):
        with pytest.raises(InputError):
            row_case(inv, *inv.rows[pos], None)
    with_default = read_plain(inv, {"exposure": {"solar": "sun", "finish": "white paint"}})
    assert with_default.ids == ["S", "H", "N"] and with_default.sun.tolist() == [True, True, False]
    assert with_default.case(0).scenarios[0].solar == "sun"
    for j, pos in enumerate(with_default.index):
        case = row_case(inv, *inv.rows[int(pos)], {"exposure": {"solar": "sun", "finish": "white paint"}})
        assert with_default.case(j) == case and case.scenarios[0].finish == "white paint"


def test_a_fill_by_mass_is_a_plain_row_and_a_fill_by_both_or_neither_is_not(tmp_path):
    path = tmp_path / "inv.csv"
    path.write_text("id,gas,water_capacity,rated_pressure,fill_pressure,fill_mass,fill_temperature,ambient_max\n"
                    "M,propane,26 L,25 bar(g),,11 kg,15 degC,45 degC\n"
                    "P,propane,26 L,25 bar(g),3 bar(g),,15 degC,45 degC\n"
                    "B,propane,26 L,25 bar(g),3 bar(g),11 kg,15 degC,45 degC\n"
                    "N,propane,26 L,25 bar(g),,,15 degC,45 degC\n"
                    "G,propane,26 L,25 bar(g),,24.25 lb,15 degC,45 degC\n", encoding="utf-8")
    inv = read_inventory(path)
    plain = read_plain(inv, None)
    assert plain.ids == ["M", "P", "G"]
    assert plain.fill_mass_kg[0] == 11.0 and math.isnan(plain.fill_pressure_pa[0])
    assert math.isnan(plain.fill_mass_kg[1])
    # the display units follow the mass as entered, as the case reader's do
    assert plain.display_units[2] == row_case(inv, *inv.rows[4], None).display_units
    assert plain.display_units[2]["mass"] == "lb"
