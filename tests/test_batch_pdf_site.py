"""The batch PDF names its site, lists each vessel's description and location, ends with a sign-off
block, gives one page to each detailed vessel, and names the inventory file without its folder."""

from __future__ import annotations

import datetime as dt
import io
import re

import pytest

from screening.batch import run_inventory
from screening.inputs.inventory import read_inventory
from screening.outputs import batch_report as br

pypdf = pytest.importorskip("pypdf")

DATE = dt.date(2026, 12, 3)
HEAD = "id,description,site,gas,water_capacity,rated_pressure,fill_pressure,fill_temperature,ambient_max\n"


def _inventory(tmp_path, site="Kestrel Quarry workshop"):
    lines = [HEAD]
    for i in range(3):   # 230 bar(g) heated from 15 to 65 degC is over a 200 bar(g) rating
        lines.append(f"OVER-{i},Purge cylinder bay {i},{site},nitrogen,50 L,200 bar(g),230 bar(g),15 degC,65 degC\n")
    for i in range(2):
        lines.append(f"OK-{i},Welding argon rack {i},{site},argon,50 L,300 bar(g),150 bar(g),15 degC,45 degC\n")
    folder = tmp_path / "private folder"
    folder.mkdir()
    p = folder / "inv.csv"
    p.write_text("".join(lines), encoding="utf-8")
    inv = read_inventory(p)
    return inv, run_inventory(inv)


def _texts(pdf: bytes) -> list[str]:
    return [" ".join((p.extract_text() or "").split()) for p in pypdf.PdfReader(io.BytesIO(pdf)).pages]


def test_title_names_the_site_the_rows_share_and_the_file_without_its_folder(tmp_path):
    inv, results = _inventory(tmp_path)
    rows, full = br._as_rows(results, None)
    rows = br._with_texts(rows, br.row_texts(inv))
    pdf = br.render_batch_pdf_bytes(rows, source=inv.source, report_date=DATE, full=full)
    texts = _texts(pdf)
    assert "SITE Kestrel Quarry workshop" in texts[0]
    assert "inv.csv" in texts[0] and "private folder" not in " ".join(texts)
    assert "Purge cylinder bay 0" in " ".join(texts[1:])
    assert "Prepared by" in texts[-1] and "Reviewed by" in texts[-1]


def test_site_option_overrides_and_each_detailed_vessel_takes_one_page(tmp_path):
    inv, results = _inventory(tmp_path)
    rows, full = br._as_rows(results, None)
    rows = br._with_texts(rows, br.row_texts(inv))
    pdf = br.render_batch_pdf_bytes(rows, source=inv.source, report_date=DATE, all_details=True,
                                    site="North yard", full=full)
    texts = _texts(pdf)
    assert "SITE North yard" in texts[0]
    details = [t for t in texts if re.search(r"Row \d+ · (OVER|OK)-\d", t)]
    assert len(details) == len(rows)          # one page each, none spilling onto a second page
    assert len(texts) == 1 + 1 + len(rows) + 1
    for t in details:
        if "Exceeds rated pressure" in t:
            assert "What would make it pass. To pass: fill to at most" in t


def test_location_column_is_carried_into_the_listing(tmp_path):
    inv, results = _inventory(tmp_path)
    texts = br.row_texts(inv)
    for r in results:
        texts[r.row]["location"] = f"Shelf {r.row}"
    rows = br._with_texts(br._as_rows(results, None)[0], texts)
    common = br._common(rows, source=inv.source, all_details=False, report_date=DATE)
    assert "Location" in common["listing_head"][1]
    listing = "\n".join(t for page in common["pages"] for _, t in page)
    assert all(f"Shelf {r['row']}" in listing for r in rows)
