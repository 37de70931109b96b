"""The report's sections for liquefied gases, sun exposure, several scenarios and input tolerances.

Each case is written here as text and screened for real (screening.screen.screen_text); every value the
test looks for in the PDF is formatted from that result, never typed in.
"""

from __future__ import annotations

import datetime as dt
import re
import textwrap

import pytest
from pypdf import PdfReader

from screening.cautions import SHORT_CAUTION
from screening.engine import screen_text
from screening.outputs import plot as plot_mod
from screening.outputs import report as report_mod
from screening.outputs.report import VERDICTS, build_view, num, render_pdf_bytes, render_report
from screening.units import format_percent, format_pressure, format_temperature

DATE = dt.date(2026, 12, 1)

CO2 = textwrap.dedent("""\
    id = "T-CO2"
    description = "Liquefied carbon dioxide, fill by mass"
    [vessel]
    water_capacity = "40 L"
    rated_pressure = "250 bar(g)"
    max_filling_ratio = "0.75 kg/L"
    [fill]
    gas = "carbon dioxide"
    mass = "30 kg"
    temperature = "15 degC"
    [exposure]
    gas_temperature = "50 degC"
    """)

N2_BASE = textwrap.dedent("""\
    id = "T-N2"
    description = "Nitrogen cylinder"
    [site]
    elevation = "240 m"
    [vessel]
    water_capacity = "50 L"
    rated_pressure = "300 bar(g)"
    relief_set_pressure = "330 bar(g)"
    [fill]
    gas = "nitrogen"
    pressure = "200 bar(g)"
    temperature = "15 degC"
    [exposure]
    ambient_max = "40 degC"
    """)

N2_SCENARIOS = N2_BASE + textwrap.dedent("""\
    [[scenario]]
    name = "store, shaded"
    [[scenario]]
    name = "yard, full sun"
    solar = "sun"
    finish = "black paint"
    [[scenario]]
    name = "closed van"
    gas_temperature = "60 degC"
    [tolerance]
    fill_pressure = "1.6 % of 400 bar"
    fill_temperature = "2 K"
    gas_temperature = "3 K"
    """)


def _flat(text: str) -> str:
    return " ".join(text.split())


_CACHE: dict[str, tuple[str, dict, list[str]]] = {}


def case(name: str) -> tuple[str, dict, list[str]]:
    """(case text, result, flattened text of every PDF page) of one of the cases above."""
    if name not in _CACHE:
        text = {"co2": CO2, "n2": N2_BASE, "n2-scenarios": N2_SCENARIOS}[name]
        result = screen_text(text, f"{name}.toml")
        pdf = render_pdf_bytes(result, text, report_date=DATE)
        import io

        pages = [_flat(p.extract_text() or "") for p in PdfReader(io.BytesIO(pdf)).pages]
        _CACHE[name] = (text, result, pages)
    return _CACHE[name]


def whole(name: str) -> str:
    return " ".join(case(name)[2])


def P(result: dict, pa: float) -> str:
    return _flat(format_pressure(pa, result.display_units["pressure"], result.site.atmospheric_pressure_pa))


def T(result: dict, k: float) -> str:
    return _flat(format_temperature(k, result.display_units["temperature"]))


# ----------------------------------------------------------------------------- every page, every case

@pytest.mark.parametrize("name", ["co2", "n2", "n2-scenarios"])
def test_short_caution_on_every_page(name):
    pages = case(name)[2]
    for number, page in enumerate(pages, start=1):
        assert _flat(SHORT_CAUTION) in page, f"page {number}"
        assert f"page {number} of {len(pages)}" in page


@pytest.mark.parametrize("name", ["co2", "n2", "n2-scenarios"])
def test_sections_are_numbered_in_order(name):
    text, result, _ = case(name)
    html = report_mod.render_html(result, text, DATE)
    numbers = [int(n) for n in re.findall(r'<h2><span class="num">(\d+)</span>', html)]
    assert numbers == list(range(1, len(numbers) + 1))


# ----------------------------------------------------------------------------- liquefied gas

def test_co2_has_the_phase_diagram_and_the_filling_ratio_paragraph():
    text, result, pages = case("co2")
    assert result.phase_diagram is not None and result.fill.phase == "two-phase"
    view = build_view(result, text, DATE)
    assert view["phase"] is not None and view["phase"]["plot_uri"].startswith("data:image/svg+xml;base64,")
    w = whole("co2")
    assert "Phase and filling ratio" in w
    assert "Phase diagram, pressure against temperature" in w
    fill, limits, vessel = result.fill, result.limits, result.vessel
    assert f"filling ratio of {num(fill.filling_ratio_kg_per_l, 4)} kg/L" in w
    assert f"largest allowed filling ratio of {num(vessel.max_filling_ratio_kg_per_l, 4)} kg/L" in w
    # the liquid-full temperature and what it means
    assert limits.liquid_full_temperature_k is not None
    assert T(result, limits.liquid_full_temperature_k) in w
    assert "the liquid-full temperature, it fills the whole vessel" in w
    assert "rises by many bar per kelvin" in w
    # the highest fill mass with its basis
    assert _flat(f"(filling ratio {num(limits.max_filling_ratio_kg_per_l, 4)} kg/L), set by {limits.max_fill_mass_basis}") in w
    # the method section says why only the reference model applies
    assert "Liquid in the vessel." in w
    assert "two-phase at fill" in w
    assert "so they do not apply to a liquid or a liquid–vapour mixture" in w
    assert "reference equation of state, which covers the liquid, the vapour and the two-phase region, governs" in w


def test_nitrogen_has_no_phase_diagram():
    for name in ("n2", "n2-scenarios"):
        text, result, _ = case(name)
        assert result.gas.kind == "permanent"
        assert build_view(result, text, DATE)["phase"] is None
        w = whole(name)
        assert "Phase diagram" not in w and "Phase and filling ratio" not in w
        assert "Liquid in the vessel." not in w


def test_phase_diagram_svg_is_deterministic_and_marks_the_points():
    _, result, _ = case("co2")
    a, b = plot_mod.phase_diagram_svg(result), plot_mod.phase_diagram_svg(result)
    assert a == b
    for label in ("Vapour-pressure curve", "Fill isochore (reference EOS)", "Critical point", "Liquid-full point",
                  "Fill state", "critical point", "rated"):
        assert label in a, label
    assert "<dc:date>" not in a


def test_a_mixture_that_can_liquefy_says_why_there_is_no_diagram(tmp_path):
    text = CO2.replace('gas = "carbon dioxide"\nmass = "30 kg"', 'gas = "argon 82% + carbon dioxide 18%"\n'
                       'pressure = "200 bar(g)"').replace('max_filling_ratio = "0.75 kg/L"\n', "")
    result = screen_text(text, "mix.toml")
    if result.phase_diagram is not None or not plot_mod.phase_diagram_wanted(result):
        pytest.skip("this mixture does not exercise the no-diagram branch")
    view = build_view(result, text, DATE)
    assert view["phase"]["plot_uri"] is None
    assert "no vapour-pressure curve" in view["phase"]["no_plot"]


# ----------------------------------------------------------------------------- exposure and scenarios

def test_energy_balance_table_and_its_notes():
    _, result, _ = case("n2-scenarios")
    b = result.exposure
    assert b is not None and result.governing_scenario == "yard, full sun"
    w = whole("n2-scenarios")
    assert "Energy balance on the sunlit wall" in w
    for key in ("absorbed_w_m2", "convected_w_m2", "radiated_w_m2"):
        assert _flat(f"{num(getattr(b, key), 2)} W/m²") in w, key
    assert _flat(f"absorbed = convected + radiated: {num(b.absorbed_w_m2, 2)} W/m² = "
                 f"{num(b.convected_w_m2, 2)} W/m² + {num(b.radiated_w_m2, 2)} W/m²") in w
    assert "estimated from the water capacity" in w
    assert f"{num(b.irradiance_w_m2, 0)} W/m²" in w
    assert "Solar absorptivity of the surface " + num(b.absorptivity, 2) in w
    assert "Long-wave emissivity of the surface " + num(b.emissivity, 2) in w
    assert "Ground albedo (solar reflectance) " + num(b.ground_albedo, 2) in w
    assert T(result, b.sky_temperature_k) in w
    assert T(result, b.wall_temperature_k) in w
    for note in b.notes:
        assert _flat(note) in w, note
    # the convection term multiplied out
    assert _flat(f"= {num(b.h_convection_w_m2k, 4)} W/(m²·K) × ({num(b.wall_temperature_k, 2)} K − "
                 f"{num(b.ambient_k, 2)} K) = {num(b.convected_w_m2, 2)} W/m²") in w


def test_without_sun_one_sentence_names_the_basis():
    _, result, _ = case("n2")
    assert result.exposure is None
    w = whole("n2")
    assert _flat(f"The worst-case gas temperature, {T(result, result.worst_case_temperature_k)}, is the "
                 f"{result.worst_case_basis}.") in w
    assert "Energy balance on the sunlit wall" not in w
    assert "Input tolerances" not in w


def test_scenario_table_marks_the_governing_one_in_words():
    _, result, _ = case("n2-scenarios")
    w = whole("n2-scenarios")
    assert "Worst-case temperature and scenarios" in w
    gov = [s for s in result.scenarios if s.governing]
    assert len(gov) == 1 and gov[0].name == result.governing_scenario
    for s in result.scenarios:
        word = VERDICTS[s.verdict]["label"]
        row = _flat(f"{T(result, s.worst_case_temperature_k)} {s.worst_case_basis} "
                    f"{P(result, s.peak_pressure_pa)} {format_percent(s.margin_fraction)}")
        # names and verdict words may wrap inside their cells; the numbers of the row stay together
        assert row in w, s.name
        assert _flat(word) in w
    assert w.count("◀ governs") == 1
    assert _flat(f"{VERDICTS[gov[0].verdict]['label']} ◀ governs") in w


def test_a_single_scenario_has_no_scenario_table():
    text, result, _ = case("n2")
    assert len(result.scenarios) == 1
    assert build_view(result, text, DATE)["scenarios"] is None
    assert "◀ governs" not in whole("n2")


# ----------------------------------------------------------------------------- tolerances

def test_tolerance_section_shows_nominal_and_bounding_side_by_side():
    _, result, _ = case("n2-scenarios")
    tol = result.tolerance
    assert tol is not None and result.peak_pressure_pa == tol.bounding_peak_pressure_pa
    w = whole("n2-scenarios")
    assert "Input tolerances" in w
    assert "Nominal Bounding corner" in w
    corner = tol.bounding_corner
    assert _flat(f"Fill pressure {P(result, result.fill.pressure_pa)} {P(result, corner.fill_pressure_pa)}") in w
    assert _flat(f"Fill temperature {T(result, result.fill.temperature_k)} "
                 f"{T(result, corner.fill_temperature_k)}") in w
    assert _flat(f"Worst-case gas temperature {T(result, result.worst_case_temperature_k)} "
                 f"{T(result, corner.worst_case_temperature_k)}") in w
    assert P(result, tol.nominal_peak_pressure_pa) in w and P(result, tol.bounding_peak_pressure_pa) in w
    # the bands as entered, and their half-widths
    for key, entered in tol.entered.items():
        assert _flat(f"tolerance.{key} {entered}") in w
    assert _flat(f"± {num(tol.fill_pressure_band_pa / 1e5, 2)} bar") in w
    assert _flat(f"± {num(tol.gas_temperature_band_k, 2)} K") in w
    # sensitivities in display units (bar per kelvin here) and dimensionless
    s = tol.sensitivities
    assert f"{num(s.dp_peak_dt_gas / 1e5, 4)} bar/K" in w
    assert f"{num(s.dp_peak_dt_fill / 1e5, 4)} bar/K".replace("-", "−") in w
    assert f"{num(s.dp_peak_dp_fill, 4)} (dimensionless)" in w
    assert tol.expected_corner_confirmed
    assert f"{tol.corners_evaluated} corner evaluated" in w
    # the first page names both peaks
    first = case("n2-scenarios")[2][0]
    assert "Peak pressure, bounding the input tolerances" in first
    assert P(result, tol.nominal_peak_pressure_pa) in first


def test_isochore_plot_draws_the_tolerance_band_and_the_bounding_curve():
    _, result, _ = case("n2-scenarios")
    assert result.curves.bounding and result.curves.bounding_model
    svg = plot_mod.plot_svg(result)
    assert "fill at the bounding corner" in svg
    assert "Worst-case temperature ± 3 K (tolerance)" in svg
    assert "Bounding peak (verdict)" in svg
    # the star sits at the bounding corner, where the bounding peak is reached
    assert plot_mod.worst_case_point_temperature(result) == result.tolerance.bounding_corner\
        .worst_case_temperature_k
    _, plain, _ = case("n2")
    assert plot_mod.worst_case_point_temperature(plain) == plain.worst_case_temperature_k
    assert "(tolerance)" not in plot_mod.plot_svg(plain)


# ----------------------------------------------------------------------------- safety and determinism

HOSTILE = '<img src="file:///etc/passwd"> {{ 7*7 }} <b>x</b>'


def test_scenario_names_and_tolerance_text_are_only_escaped_text(tmp_path):
    text = N2_SCENARIOS.replace('name = "closed van"', f"name = '{HOSTILE}'")
    result = screen_text(text, "hostile.toml")
    assert any(s.name == HOSTILE for s in result.scenarios)
    html = report_mod.render_html(result, text, DATE)
    assert "<img src=\"file:///etc/passwd\">" not in html
    assert "<b>x</b>" not in html
    assert "&lt;img src=&#34;file:///etc/passwd&#34;&gt;" in html
    pdf = render_report(result, text, tmp_path / "hostile.pdf", report_date=DATE)
    assert _flat(HOSTILE) in _flat(" ".join(p.extract_text() or "" for p in PdfReader(str(pdf)).pages))


@pytest.mark.parametrize("name", ["co2", "n2-scenarios"])
def test_renders_are_byte_identical(name, tmp_path):
    text, result, _ = case(name)
    a = render_report(result, text, tmp_path / "a.pdf", report_date=DATE).read_bytes()
    b = render_report(result, text, tmp_path / "b.pdf", report_date=DATE).read_bytes()
    assert a == b
