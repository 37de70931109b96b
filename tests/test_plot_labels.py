"""The plots' texts never overlap, and curves that coincide are drawn once and named together.

Measured on the demo cases with matplotlib's own text extents (the bounding boxes of every tick label,
axis label and legend entry of the drawn figure).
"""

from __future__ import annotations

import itertools
from dataclasses import replace
from pathlib import Path

import pytest

from screening.engine import screen_case
from screening.inputs.case import load_case
from screening.outputs import plot

CASES = sorted((Path(__file__).resolve().parent.parent / "cases").glob("*.toml"))


@pytest.fixture(scope="module")
def results():
    return {p.stem: screen_case(load_case(p)) for p in CASES}


def _overlaps(boxes):
    found = []
    for (ta, a), (tb, b) in itertools.combinations(boxes, 2):
        # touching edges are not an overlap; half a pixel of slack for anti-aliased extents
        if a[0] < b[2] - 0.5 and b[0] < a[2] - 0.5 and a[1] < b[3] - 0.5 and b[1] < a[3] - 0.5:
            found.append((ta, tb))
    return found


@pytest.mark.parametrize("case", [p.stem for p in CASES])
def test_isochore_plot_labels_do_not_overlap(results, case):
    result = results[case]
    if not plot.drawable_models(result):
        pytest.skip("no model applies: no plot is drawn")
    fig = plot.plot_svg(result, return_figure=True)
    boxes = plot.text_boxes(fig)
    assert len(boxes) >= 5  # ticks, axis labels and legend entries were measured
    assert _overlaps(boxes) == []
    width, height = fig.bbox.width, fig.bbox.height
    for text, (x0, y0, x1, y1) in boxes:  # and every text stays inside the figure
        assert x0 >= -1 and y0 >= -1 and x1 <= width + 1 and y1 <= height + 1, text


@pytest.mark.parametrize("case", [p.stem for p in CASES])
def test_phase_diagram_labels_do_not_overlap(results, case):
    result = results[case]
    if not plot.phase_diagram_drawable(result):
        pytest.skip("no phase diagram for this case")
    fig = plot.phase_diagram_svg(result, return_figure=True)
    assert _overlaps(plot.text_boxes(fig)) == []


def test_coinciding_model_curves_are_drawn_once_and_named_together(results):
    # Nitrogen at 200 bar(g): the reference EOS and Lee-Kesler agree within 0.2 % along the isochore
    # (250.0 against 249.6 bar(g) at 65 degC), closer than a printed line is wide.
    result = results["kq-n2-014"]
    assert plot.coinciding_groups(result) == [["reference", "generalized"], ["ideal"]]
    fig = plot.plot_svg(result, return_figure=True)
    labels = [t for t, _ in plot.text_boxes(fig)]
    assert any("Reference" in t and "Generalized" in t for t in labels)
    curves = [line for line in fig.axes[0].get_lines() if len(line.get_xdata()) > 2]
    assert len(curves) == 2  # one line for the two coinciding models, one for the ideal gas


def test_liquid_full_line_meeting_the_worst_case_line_is_drawn_once():
    # A result whose liquid-full temperature equals its worst-case temperature: one vertical line, one name.
    result = screen_case(load_case(CASES[[p.stem for p in CASES].index("kq-co2-002")]))
    result = replace(result, limits=replace(result.limits, liquid_full_temperature_k=result.worst_case_temperature_k))
    fig = plot.plot_svg(result, return_figure=True)
    labels = [t for t, _ in plot.text_boxes(fig)]
    assert any("Worst-case temperature" in t and "liquid-full" in t for t in labels)
    assert not any(t.startswith("Liquid fills") for t in labels)
