"""A report a reviewer reads in two minutes: page counts of every demo case, the verdict, numbers and plot
on the first pages, one batch-PDF page per vessel, and an action line on every result but `within`."""

from __future__ import annotations

import datetime as dt
from dataclasses import replace
from pathlib import Path

import pytest
from pypdf import PdfReader

from screening.engine import screen_case
from screening.inputs.case import load_case
from screening.outputs.actions import action_line
from screening.outputs.report import render_report
from screening.verdicts import Verdict

ROOT = Path(__file__).resolve().parent.parent
CASES = sorted((ROOT / "cases").glob("*.toml"))
DATE = dt.date(2026, 12, 3)


@pytest.fixture(scope="module")
def rendered(tmp_path_factory):
    out = tmp_path_factory.mktemp("length")
    done = {}
    for path in CASES:
        case = load_case(path)
        result = screen_case(case)
        pdf = render_report(result, case.text, out / (path.stem + ".pdf"), report_date=DATE)
        done[path.stem] = (result, [p.extract_text() or "" for p in PdfReader(str(pdf)).pages])
    return done


def _liquefied_or_several(result) -> bool:
    ref = result.models["reference"]
    phases = {result.fill.phase, ref.phase_fill, ref.phase_peak}
    return bool(phases & {"liquid", "two-phase"}) or len(result.scenarios) > 1


@pytest.mark.parametrize("case", [p.stem for p in CASES])
def test_demo_report_fits_its_page_budget(rendered, case):
    result, pages = rendered[case]
    budget = 4 if _liquefied_or_several(result) else 3
    assert len(pages) <= budget, f"{case}: {len(pages)} pages, budget {budget}"


@pytest.mark.parametrize("case", [p.stem for p in CASES])
def test_verdict_numbers_and_plot_come_first(rendered, case):
    result, pages = rendered[case]
    first = " ".join(" ".join(pages[:2]).split())
    assert "Result code: " + result.verdict in " ".join(pages[0].split())
    if result.peak_pressure_pa is not None:
        assert "Peak pressure" in first and "Margin to rated" in first
        assert "Pressure against gas temperature along the fill isochore" in first
    # the method, references and case file are in the appendix, after the results
    whole = " ".join(" ".join(pages).split())
    assert whole.index("Method and hand check") > whole.index("Peak pressure, margin and limits")
    assert whole.index("Case file as entered") > whole.index("Assumptions and references")


@pytest.mark.parametrize("case", [p.stem for p in CASES])
def test_every_result_but_within_says_what_would_make_it_pass(rendered, case):
    result, pages = rendered[case]
    line = action_line(result)
    whole = " ".join(" ".join(pages).split())
    if result.verdict == "within":
        assert line is None and "What would make it pass" not in whole
    else:
        assert line and "What would make it pass" in " ".join(pages[0].split())
        assert " ".join(line.split())[:60] in whole


def test_no_liquid_full_or_phase_diagram_for_a_gas_far_above_its_critical_point():
    # Hydrogen at 700 bar(g): its liquid-full point (about -240 degC on the reference EOS) lies far below
    # the fill, so the report shows neither a phase section nor a liquid-full temperature.
    from screening.outputs import report as report_mod

    text = """id = "T-H2"
[vessel]
water_capacity = "50 L"
rated_pressure = "1050 bar(g)"
[fill]
gas = "hydrogen"
pressure = "700 bar(g)"
temperature = "15 degC"
[exposure]
gas_temperature = "65 degC"
"""
    from screening.inputs.case import parse_case_text

    result = screen_case(parse_case_text(text, "h2.toml"))
    view = report_mod.build_view(result, text, DATE)
    assert view["phase"] is None
    html = report_mod.render_html(result, text, DATE)
    assert "liquid fills the vessel" not in html.lower() and "Phase and filling ratio" not in html


def test_action_line_moves_a_vessel_out_of_the_sun_where_a_shaded_scenario_passes():
    # Formatting only: a result whose sunny scenario governs and whose shaded one is within.
    result = screen_case(load_case(ROOT / "cases" / "kq-n2-031.toml"))
    scenarios = tuple(replace(sc, governing=bool(sc.exposure),
                              verdict=Verdict.LOW_MARGIN if sc.exposure else sc.verdict) for sc in result.scenarios)
    result = replace(result, verdict=Verdict.LOW_MARGIN, scenarios=scenarios)
    line = action_line(result)
    assert line.startswith("To pass: move it out of the sun (scenario \u2018store, shaded\u2019 is within)")


def test_a_vessel_that_fails_on_its_tolerances_alone_is_told_the_fill_that_passes_with_them():
    # A nitrogen cylinder (one scenario) filled at 213 bar(g): below its highest fill pressure at the nominal
    # readings (about 215 bar(g)), yet low-margin once its tolerances are counted. The limits have the
    # tolerances taken off, so the action line gives the fill that passes with them, and a fill read just
    # below it is within.
    from screening.inputs.case import parse_case_text

    text = """id = "T-TOL"
[vessel]
water_capacity = "50 L"
rated_pressure = "300 bar(g)"
[fill]
gas = "nitrogen"
pressure = "{fill} bar(g)"
temperature = "15 degC"
[exposure]
gas_temperature = "65 degC"
[tolerance]
fill_pressure = "3 bar"
fill_temperature = "3 K"
gas_temperature = "3 K"
"""
    result = screen_case(parse_case_text(text.format(fill=213), "t.toml"))
    assert result.verdict != "within"
    p_max = result.limits.max_fill_pressure_pa
    assert p_max < result.fill.pressure_pa
    line = action_line(result)
    assert line.startswith("To pass: fill to at most ") and "No limit" not in line
    assert "within the reading tolerances" in line
    again = screen_case(parse_case_text(text.format(fill=(p_max - 101325.0) / 1e5 - 1e-4), "t.toml"))
    assert again.verdict == "within"
