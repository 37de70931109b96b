"""The PDF report: content, attachments, determinism, safe rendering, atomic writing, verification.

Every check value comes from a real screening of the demo cases (screening.screen.screen_text), never
from numbers typed into the test.
"""

from __future__ import annotations

import datetime as dt
import hashlib
import json
import os
from dataclasses import replace
from pathlib import Path

import pytest
from pypdf import PdfReader, PdfWriter

from screening.cautions import CAUTION, SHORT_CAUTION
from screening.engine import screen_text
from screening.errors import InputError
from screening.outputs import report as report_mod
from screening.outputs.report import VERDICTS, render_pdf_bytes, render_report, templates_dir
from screening.outputs.verify import verify_report
from screening.result import Result
from screening.units import format_percent, format_pressure
from screening.verdicts import Verdict

ROOT = Path(__file__).resolve().parents[1]
CASES = sorted((ROOT / "cases").glob("*.toml"))
DATE = dt.date(2026, 12, 1)


def _flat(text: str) -> str:
    """Whitespace-insensitive text (line breaks and thin spaces from layout do not matter)."""
    return " ".join(text.split())


_SCREENED: dict[str, tuple[str, dict]] = {}
_RENDERED: dict[str, Path] = {}


def screened(case: Path) -> tuple[str, dict]:
    if case.name not in _SCREENED:
        text = case.read_text(encoding="utf-8")
        _SCREENED[case.name] = (text, screen_text(text, case.name))
    return _SCREENED[case.name]


@pytest.fixture(scope="module")
def outdir(tmp_path_factory) -> Path:
    return tmp_path_factory.mktemp("reports")


def rendered(case: Path, outdir: Path) -> Path:
    if case.name not in _RENDERED:
        text, result = screened(case)
        _RENDERED[case.name] = render_report(result, text, outdir / (case.stem + ".pdf"), report_date=DATE)
    return _RENDERED[case.name]


def pages_text(pdf: Path) -> list[str]:
    return [_flat(p.extract_text() or "") for p in PdfReader(str(pdf)).pages]


def test_there_are_demo_cases():
    assert CASES, "cases/*.toml should hold the demo cases"


def test_templates_folder_is_found():
    folder = templates_dir()
    assert (folder / "report.html.j2").is_file() and (folder / "report.css").is_file()


@pytest.mark.parametrize("case", CASES, ids=[c.stem for c in CASES])
def test_each_demo_case_renders_with_its_numbers(case, outdir):
    text, result = screened(case)
    pdf = rendered(case, outdir)
    pages = pages_text(pdf)
    assert len(pages) >= 2
    whole = " ".join(pages)

    # the short caution on every page, the full caution on the first
    for number, page in enumerate(pages, start=1):
        assert _flat(SHORT_CAUTION) in page, f"short caution missing on page {number}"
        assert f"page {number} of {len(pages)}" in page
    assert _flat(CAUTION) in pages[0]

    # verdict in words and its code, first page
    verdict = result.verdict
    assert _flat(VERDICTS[verdict]["label"]) in pages[0]
    assert f"Result code: {verdict}" in pages[0]
    for reason in result.reasons:
        assert _flat(reason) in whole

    # document id (title block and every footer)
    doc_id = result.input_sha256[:12]
    assert all(doc_id in page for page in pages)

    # peak pressure and margin in the units the user wrote (a pressure entered in psig is shown in psig)
    entered_unit = next(i.entered.split()[-1] for i in result.inputs if i.si_unit.startswith("Pa"))
    atm = result.site.atmospheric_pressure_pa

    def shown(p_abs):
        value = format_pressure(p_abs, entered_unit, atm).split()[0]
        return f"{value} {entered_unit}"

    if result.peak_pressure_pa is not None:
        assert _flat(shown(result.peak_pressure_pa)) in pages[0]
    if result.margin_fraction is not None:
        assert _flat(format_percent(result.margin_fraction)) in pages[0]
    assert _flat(shown(result.rated_pressure_pa)) in pages[0]

    # the method carries the references: Lee–Kesler's (Lee & Kesler, AIChE J. 21 (1975) 510, its doi), and for a
    # quantum gas the Soave–Redlich–Kwong equation's it is screened with (Soave, Chem. Eng. Sci. 27 (1972) 1197)
    assert "doi:10.1002/aic.690210313" in whole
    if result.models["generalized"].method:
        assert "Soave, G. (1972)" in whole and "Lee\u2013Kesler tables: reduced temperature" not in whole
    assert "8.314462618" in whole
    for ref in result.models["reference"].eos_references or []:
        assert _flat(ref)[:40] in whole

    # metadata
    meta = PdfReader(str(pdf)).metadata
    assert result.id in meta.title
    assert f"verdict {verdict}" in meta["/Keywords"]
    assert meta["/CreationDate"].startswith("D:20261201")


@pytest.mark.parametrize("case", CASES[:2], ids=[c.stem for c in CASES[:2]])
def test_attachments_parse_back_to_case_and_result(case, outdir):
    text, result = screened(case)
    files = {name: copies[0] for name, copies in PdfReader(str(rendered(case, outdir))).attachments.items()}
    assert files[case.name].decode("utf-8") == text
    assert hashlib.sha256(files[case.name]).hexdigest() == result.input_sha256
    attached = json.loads(files[case.stem + ".result.json"].decode("utf-8"))
    # the attached result names the case file by its name only (no folder of the machine it was made on)
    assert attached["source"] == case.name
    assert attached == json.loads(json.dumps(dict(result.to_json(), source=case.name)))


def test_two_renders_are_byte_identical(tmp_path):
    text, result = screened(CASES[0])
    before = os.environ.get("SOURCE_DATE_EPOCH")
    a = render_report(result, text, tmp_path / "a.pdf", report_date=DATE).read_bytes()
    b = render_report(result, text, tmp_path / "b.pdf", report_date=DATE).read_bytes()
    assert a == b
    assert os.environ.get("SOURCE_DATE_EPOCH") == before  # set around the render, then restored


def test_report_date_is_the_only_clock():
    text, result = screened(CASES[0])
    later = render_pdf_bytes(result, text, report_date=dt.date(2027, 1, 2))
    assert b"20270102" in later or b"2027-01-02" in later


HOSTILE = '<img src="file:///etc/passwd"> {{ 7*7 }} <b>bold</b> & </p>'


def test_case_text_appears_literally_and_fetches_nothing(tmp_path, monkeypatch):
    base = CASES[0].read_text(encoding="utf-8")
    lines = [ln for ln in base.splitlines() if not ln.startswith("description")]
    text = f"description = '{HOSTILE}'\n" + "\n".join(lines) + "\n"
    result = screen_text(text, "hostile.toml")
    assert result.description == HOSTILE

    fetched: list[str] = []
    real = report_mod._make_fetcher

    def recording(folder):
        fetcher = real(folder)
        inner = fetcher.fetch

        def fetch(url, headers=None):
            fetched.append(url)
            return inner(url, headers)

        fetcher.fetch = fetch
        return fetcher

    monkeypatch.setattr(report_mod, "_make_fetcher", recording)
    html = report_mod.render_html(result, text, DATE)
    assert "<img src=\"file:///etc/passwd\">" not in html
    assert "&lt;img src=&#34;file:///etc/passwd&#34;&gt;" in html
    pdf = render_report(result, text, tmp_path / "hostile.pdf", report_date=DATE)
    first = pages_text(pdf)[0]
    assert _flat(HOSTILE) in first
    folder = templates_dir()
    for url in fetched:
        assert url.startswith("data:") or url.startswith(folder.as_uri()), url
    assert not any("passwd" in url for url in fetched)


def test_fetcher_refuses_anything_outside_the_templates_folder():
    fetcher = report_mod._make_fetcher(templates_dir())
    css = (templates_dir() / "report.css").as_uri()
    assert fetcher.fetch(css).read()
    for url in ("file:///etc/passwd", (templates_dir() / ".." / "pyproject.toml").as_uri(),
                "http://127.0.0.1/x.css", "https://example.org/x.png", "ftp://example.org/x"):
        with pytest.raises(report_mod.ResourceRefused):
            fetcher.fetch(url)


def test_missing_stylesheet_fails_the_render(tmp_path, monkeypatch):
    folder = tmp_path / "templates"
    folder.mkdir()
    (folder / "report.html.j2").write_text((templates_dir() / "report.html.j2").read_text())
    monkeypatch.setattr(report_mod, "templates_dir", lambda: folder)
    text, result = screened(CASES[0])
    target = tmp_path / "out.pdf"
    with pytest.raises(report_mod.ReportRenderError):
        render_report(result, text, target, report_date=DATE)
    assert not target.exists()


def test_template_is_strict_about_missing_keys():
    text, result = screened(CASES[0])
    broken = result.to_json()
    del broken["verdict"]
    with pytest.raises(KeyError):
        report_mod.render_html(Result.from_json(broken), text, DATE)


def test_directory_target_is_an_input_error(tmp_path):
    text, result = screened(CASES[0])
    with pytest.raises(InputError):
        render_report(result, text, tmp_path, report_date=DATE)


def test_missing_or_unwritable_folder_is_an_input_error(tmp_path):
    text, result = screened(CASES[0])
    blocker = tmp_path / "a-file"
    blocker.write_text("not a folder")
    with pytest.raises(InputError):
        render_report(result, text, blocker / "out.pdf", report_date=DATE)
    with pytest.raises(InputError):
        render_report(result, text, tmp_path / "no" / "such" / "out.pdf", report_date=DATE)


@pytest.mark.skipif(hasattr(os, "geteuid") and os.geteuid() == 0, reason="root ignores file permissions")
def test_read_only_folder_fails_cleanly_and_keeps_the_old_file(tmp_path):
    text, result = screened(CASES[0])
    folder = tmp_path / "ro"
    folder.mkdir()
    old = folder / "out.pdf"
    old.write_bytes(b"earlier report")
    folder.chmod(0o555)
    try:
        with pytest.raises(InputError):
            render_report(result, text, old, report_date=DATE)
        assert old.read_bytes() == b"earlier report"
    finally:
        folder.chmod(0o755)


def test_failed_render_leaves_the_earlier_report_untouched(tmp_path, monkeypatch):
    text, result = screened(CASES[0])
    old = tmp_path / "out.pdf"
    old.write_bytes(b"earlier report")

    def boom(_result):
        raise RuntimeError("plot failed")

    monkeypatch.setattr(report_mod, "plot_svg", boom)
    with pytest.raises(RuntimeError):
        render_report(result, text, old, report_date=DATE)
    assert old.read_bytes() == b"earlier report"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out.pdf"]


def test_successful_render_replaces_the_earlier_report_and_leaves_no_temp_file(tmp_path):
    text, result = screened(CASES[0])
    old = tmp_path / "out.pdf"
    old.write_bytes(b"earlier report")
    render_report(result, text, old, report_date=DATE)
    assert old.read_bytes().startswith(b"%PDF-")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out.pdf"]


def test_verify_agrees_on_a_fresh_report(outdir):
    ok, message = verify_report(rendered(CASES[0], outdir))
    assert ok, message
    _, result = screened(CASES[0])
    assert result.verdict in message
    assert message.count(repr(result.peak_pressure_pa)) == 2 or result.peak_pressure_pa is None


def _first_with_peak() -> tuple[str, dict]:
    for case in CASES:
        text, result = screened(case)
        if result.peak_pressure_pa is not None:
            return text, result
    pytest.skip("no demo case with a peak pressure")


def test_verify_disagrees_when_the_attached_peak_was_altered(tmp_path):
    text, result = _first_with_peak()
    tampered = replace(result, peak_pressure_pa=result.peak_pressure_pa * (1.0 + 1e-6))
    pdf = render_report(tampered, text, tmp_path / "tampered.pdf", report_date=DATE)
    ok, message = verify_report(pdf)
    assert not ok
    assert "DIFFERENT" in message


def test_verify_disagrees_when_the_attached_verdict_was_altered(tmp_path):
    text, result = screened(CASES[0])
    tampered = replace(result, verdict=Verdict.OVER if result.verdict != "over" else Verdict.WITHIN)
    pdf = render_report(tampered, text, tmp_path / "tampered.pdf", report_date=DATE)
    ok, _ = verify_report(pdf)
    assert not ok


def test_verify_without_attachments_or_on_garbage_is_an_input_error(tmp_path):
    blank = tmp_path / "blank.pdf"
    writer = PdfWriter()
    writer.add_blank_page(200, 200)
    with blank.open("wb") as fh:
        writer.write(fh)
    with pytest.raises(InputError):
        verify_report(blank)
    garbage = tmp_path / "garbage.pdf"
    garbage.write_bytes(b"this is not a PDF")
    with pytest.raises(InputError):
        verify_report(garbage)
    with pytest.raises(InputError):
        verify_report(tmp_path / "missing.pdf")


@pytest.mark.parametrize("case", CASES, ids=[c.stem for c in CASES])
def test_each_demo_case_says_what_its_worst_case_temperature_rests_on(case, outdir):
    import re

    text, result = screened(case)
    html = report_mod.render_html(result, text, DATE)
    numbers = [int(n) for n in re.findall(r'<h2><span class="num">(\d+)</span>', html)]
    assert numbers == list(range(1, len(numbers) + 1))
    whole = " ".join(pages_text(rendered(case, outdir)))
    assert "Worst-case temperature" in whole
    assert _flat(str(result.worst_case_basis)) in whole
    if result.exposure is not None:
        assert "Energy balance on the sunlit wall" in whole
    if result.tolerance is not None:
        assert "Input tolerances" in whole
    shows_diagram = report_mod.build_view(result, text, DATE)["phase"] is not None and \
        report_mod.build_view(result, text, DATE)["phase"]["plot_uri"] is not None
    assert ("Phase diagram, pressure against temperature" in whole) == shows_diagram
    if "co2" in case.stem and "ar" not in case.stem:
        assert shows_diagram
    if case.stem.startswith("kq-n2"):
        assert not shows_diagram
