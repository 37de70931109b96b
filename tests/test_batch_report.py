"""The batch PDF: the vessel listing, and a long document laid out in parts that join into one
document whose pages are numbered as if it had been laid out whole."""

import datetime as dt
import io
import re

import pytest

from screening import parallel
from screening.batch import run_inventory
from screening.inputs.inventory import read_inventory
from screening.outputs import batch_report as br

pypdf = pytest.importorskip("pypdf")

DATE = dt.date(2026, 12, 2)
HEAD = "id,gas,water_capacity,rated_pressure,fill_pressure,fill_temperature,ambient_max\n"


def inventory(tmp_path, n_over=4, n_within=6, long_id=False):
    lines = [HEAD]
    for i in range(n_over):      # 230 bar(g) heated from 15 to 65 degC is over a 200 bar(g) rating
        lines.append(f"OVER-{i},nitrogen,50 L,200 bar(g),230 bar(g),15 degC,65 degC\n")
    for i in range(n_within):
        lines.append(f"OK-{i},argon,50 L,300 bar(g),150 bar(g),15 degC,45 degC\n")
    if long_id:
        lines.append("RACK-NORTH-SHED-BAY-17-POSITION-0042-SPARE-CYLINDER,helium,50 L,300 bar(g),150 bar(g),"
                     "15 degC,45 degC\n")
    p = tmp_path / "inv.csv"
    p.write_text("".join(lines), encoding="utf-8")
    return run_inventory(read_inventory(p))


def page_texts(pdf: bytes) -> list[str]:
    return [p.extract_text() for p in pypdf.PdfReader(io.BytesIO(pdf)).pages]


def footers(texts):
    return [tuple(int(x) for x in re.search(r"page (\d+) of (\d+)", t).groups()) for t in texts]


def test_listing_has_every_row_and_keeps_its_width(tmp_path):
    rs = inventory(tmp_path, long_id=True)
    common = br._common(br._as_rows(rs, None)[0], source="inv.csv", all_details=False, report_date=DATE)
    head, lines = common["listing_head"], [t for page in common["pages"] for _, t in page]
    assert all(len(x) <= br.LISTING_WIDTH for x in head + lines)
    text = "\n".join(lines)
    for r in rs:
        assert f" {r.row} " in f" {text} "
    # the long id wraps within its column: its pieces, read down the column, give it back whole
    a, b = head[1].index("Id"), head[1].index("Verdict")
    start = next(k for k, ln in enumerate(lines) if "RACK" in ln)
    pieces = [lines[start][a:b].strip()]
    for ln in lines[start + 1:]:
        if ln[:a].strip():       # the next row
            break
        pieces.append(ln[a:b].strip())
    assert len(pieces) > 1 and "".join(pieces) == "RACK-NORTH-SHED-BAY-17-POSITION-0042-SPARE-CYLINDER"


def test_parts_join_into_one_document_numbered_throughout(tmp_path, monkeypatch):
    rs = inventory(tmp_path)
    monkeypatch.setattr(br, "SPLIT_ABOVE", 2)
    monkeypatch.setattr(br, "PARTS", 3)
    pdf = br.render_batch_pdf_bytes(rs, source="inv.csv", report_date=DATE)
    texts = page_texts(pdf)
    n = len(texts)
    # summary, one listing page, four detail pages, assumptions
    assert n == 7
    assert footers(texts) == [(k, n) for k in range(1, n + 1)]
    assert all("Screening aid only" in t for t in texts)
    assert [t for t in texts if "Row 2" in t and "OVER-0" in t]
    # the same input gives the same bytes, in workers or in this process
    monkeypatch.setenv(parallel.WORKERS_ENV, "1")
    assert br.render_batch_pdf_bytes(rs, source="inv.csv", report_date=DATE) == pdf


def test_a_part_longer_than_predicted_is_numbered_again(tmp_path, monkeypatch):
    rs = inventory(tmp_path, n_over=2, n_within=70)
    monkeypatch.setattr(br, "SPLIT_ABOVE", 2)
    monkeypatch.setattr(br, "PARTS", 2)
    monkeypatch.setattr(br, "LINES_PER_PAGE", 200)  # one listing block of 72 lines: more than a page
    calls = []
    real = br._render_part
    monkeypatch.setattr(br, "_render_part", lambda spec: calls.append(spec) or real(spec))
    monkeypatch.setenv(parallel.WORKERS_ENV, "1")
    texts = page_texts(br.render_batch_pdf_bytes(rs, source="inv.csv", report_date=DATE))
    n = len(texts)
    assert footers(texts) == [(k, n) for k in range(1, n + 1)]
    assert len(calls) == 4          # two parts, laid out twice: the listing ran over its page


def test_a_short_document_is_one_part(tmp_path, monkeypatch):
    rs = inventory(tmp_path, n_over=1, n_within=1)
    monkeypatch.setattr(br, "_render_part", lambda spec: pytest.fail("a short document needs no parts"))
    texts = page_texts(br.render_batch_pdf_bytes(rs, source="inv.csv", report_date=DATE))
    assert footers(texts) == [(k, len(texts)) for k in range(1, len(texts) + 1)]


def test_the_chart_caption_describes_the_chart_drawn(tmp_path, monkeypatch):
    rs, _ = br._as_rows(inventory(tmp_path, n_over=2, n_within=2), None)
    common = br._common(rs, source="inv.csv", all_details=False, report_date=DATE)
    view = br._part_view([("summary",)], common, rs, None)
    assert "worst first" in view["units"][0]["chart_caption"]
    monkeypatch.setattr(br, "BAR_CHART_MAX", 1)            # more vessels than bars: a histogram
    view = br._part_view([("summary",)], common, rs, None)
    assert "How many vessels" in view["units"][0]["chart_caption"]


def test_a_detail_lists_the_reading_tolerances_and_the_relief_setting_its_verdict_counts():
    # an invented vessel with tolerances and a relief set below its rating: its detail says what the verdict and
    # the limits counted (the bands, the bounding and the nominal peak, the relief setting and the margin to it)
    from screening.engine import screen_text

    r = screen_text('id = "T"\n[vessel]\nwater_capacity = "50 L"\nrated_pressure = "300 bar(g)"\n'
                    'relief_set_pressure = "250 bar(g)"\n[fill]\ngas = "argon"\npressure = "200 bar(g)"\n'
                    'temperature = "15 degC"\n[exposure]\nambient_max = "55 degC"\n[tolerance]\n'
                    'fill_pressure = "6 bar"\nfill_temperature = "2 K"\ngas_temperature = "3 K"\n')
    figures = dict(br._detail(r)["figures"])
    assert figures["Reading tolerances"] == ("fill pressure \u00b1 6.00 bar, fill temperature \u00b1 2.00 K, "
                                             "gas temperature \u00b1 3.00 K")
    assert figures["Peak pressure, bounding the tolerances"] != figures["Nominal peak pressure"]
    assert figures["Relief set pressure"] == "250.0 bar(g)"
    assert "Margin to relief set pressure" in figures
    assert "Highest gas temperature (the relief set pressure reached, tolerances taken off)" in figures
