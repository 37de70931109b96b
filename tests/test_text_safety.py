"""Text from a case is shown as written and cannot drive the terminal or reorder what a reviewer reads;
long text stays on the page; the PDF does not depend on where it was made or how the path was typed."""

from __future__ import annotations

import datetime as dt
import os
import shutil
import subprocess
from pathlib import Path
from types import SimpleNamespace

import pytest
from pypdf import PdfReader

from screening.engine import screen_case
from screening.inputs.case import load_case, parse_case_text
from screening.outputs import report as report_mod
from screening.outputs.summary import format_summary
from screening.outputs.text import percent_pair, pressure_unit, reasons_shown, shorten, visible

ROOT = Path(__file__).resolve().parent.parent
DATE = dt.date(2026, 12, 3)
BASE = (ROOT / "cases" / "kq-n2-014.toml").read_text(encoding="utf-8")

RLO, PDF_MARK = "\u202e", "\u202c"
ANSI_RED = "\x1b[31m"


def _with(description: str | None = None, case_id: str | None = None) -> str:
    lines = BASE.splitlines()
    if description is not None:
        lines = [f'description = "{description}"' if ln.startswith("description") else ln for ln in lines]
    if case_id is not None:
        lines = [f'id = "{case_id}"' if ln.startswith("id") else ln for ln in lines]
    return "\n".join(lines) + "\n"


def test_visible_escapes_controls_ansi_and_bidirectional_overrides():
    assert visible(f"A{ANSI_RED}B\x07C\x9bD") == "A\\x1b[31mB\\x07C\\x9bD"
    assert visible(f"evil{RLO}live{PDF_MARK}") == "evil\\u202elive\\u202c"
    assert visible("line\nnext\ttab", keep_newlines=True) == "line\nnext\ttab"
    assert visible("plain text, ümlauts, 日本語") == "plain text, ümlauts, 日本語"


def test_terminal_summary_shows_control_characters_of_an_id_escaped():
    text = _with(case_id="KQ\\u001b[31m-1\\u202eX", description="tab\\there")  # TOML escapes
    result = screen_case(parse_case_text(text, "hostile.toml"))
    out = format_summary(result, width=80)
    assert "\x1b" not in out and RLO not in out and "\t" not in out
    assert "KQ\\x1b[31m-1\\u202eX" in out


def test_terminal_summary_wraps_at_the_width_and_indents_continuations():
    result = screen_case(load_case(ROOT / "cases" / "kq-n2-031.toml"))
    for width in (60, 100):
        out = format_summary(result, width=width)
        lines = out.splitlines()
        assert max(len(ln) for ln in lines) <= width
        # a reason that wraps continues indented deeper than its bullet
        bullet = next(i for i, ln in enumerate(lines) if ln.startswith("    - The peak"))
        if len(lines[bullet + 1]) and not lines[bullet + 1].startswith("    - "):
            assert lines[bullet + 1].startswith("      ")


def test_terminal_summary_is_in_the_users_units_and_scenarios_worst_first():
    he = screen_case(load_case(ROOT / "cases" / "kq-he-007.toml"))
    out = format_summary(he, width=100)
    assert "psig" in out and "psi(g)" not in out and " Pa" not in out and "e+0" not in out
    assert pressure_unit(he) == "psig"
    n2 = screen_case(load_case(ROOT / "cases" / "kq-n2-031.toml"))
    out = format_summary(n2, width=120)
    lines = out.splitlines()
    start = lines.index("Scenarios, worst first (* governs)")
    rows = [ln for ln in lines[start + 1:start + 4]]
    margins = [float(ln.split("margin")[1].split("%")[0]) for ln in rows]
    assert margins == sorted(margins) and len(margins) == 3
    assert rows[0].lstrip().startswith("*")  # the governing scenario is the worst


def test_names_are_shortened_with_an_ellipsis():
    assert shorten("a very long scenario name indeed", 12) == "a very long\u2026"
    assert shorten("short", 12) == "short"


def test_rounded_margins_never_contradict_the_comparison():
    # 9.96 % against a required 10 %: one decimal would print both as 10.0 %
    assert percent_pair(0.0996, 0.10) == ("9.96 %", "10.00 %")
    assert percent_pair(0.167, 0.10) == ("16.7 %", "10.0 %")
    # the engine writes the reason with the same rounding, and the views show it as written
    from screening.screen import decide

    rated, atm = 300e5 + 101325.0, 101325.0
    peak = atm + (rated - atm) * (1 - 0.0996)
    verdict, reasons, _, _ = decide(peak=peak, rated=rated, relief=None, atm=atm, required_margin=0.10,
                                    any_real_model=True, out_of_scope_reason=None)
    assert verdict == "low-margin"
    assert reasons_shown(SimpleNamespace(reasons=tuple(reasons))) == ["The peak pressure stays within the rating but the margin, "
                                                   "9.96 %, is below the required 10.00 %."]


def test_pdf_shows_bidirectional_overrides_as_visible_escapes():
    text = _with(description=f"site evil{RLO}live{PDF_MARK} end")
    result = screen_case(parse_case_text(text, "bidi.toml"))
    pdf = report_mod.render_pdf_bytes(result, text, report_date=DATE)
    import io

    pages = [p.extract_text() or "" for p in PdfReader(io.BytesIO(pdf)).pages]
    whole = "".join(pages)
    assert RLO not in whole and "\\u202e" in whole


def _boxes_outside_the_page(html: str) -> list[str]:
    import weasyprint

    folder = report_mod.templates_dir()
    doc = weasyprint.HTML(string=html, base_url=str(folder) + os.sep,
                          url_fetcher=report_mod._make_fetcher(folder)).render()
    outside = []
    for page in doc.pages:
        width = page.width

        def walk(box, width=width):
            text = getattr(box, "text", None)
            if text and box.position_x + box.width > width + 0.5:
                outside.append(text[:30])
            for child in getattr(box, "children", []) or []:
                walk(child)

        walk(page._page_box)
    return outside


def test_long_unbroken_text_wraps_and_stays_on_the_page():
    long = "X" * 20000
    text = _with(description=long)
    result = screen_case(parse_case_text(text, "long.toml"))
    html = report_mod.render_html(result, text, DATE)
    assert _boxes_outside_the_page(html) == []


def test_pdf_bytes_do_not_depend_on_the_working_directory_or_the_typed_path(tmp_path, monkeypatch):
    folder = tmp_path / "some user" / "cases"
    folder.mkdir(parents=True)
    (folder / "kq-n2-014.toml").write_text(BASE, encoding="utf-8")
    absolute = load_case(folder / "kq-n2-014.toml")
    monkeypatch.chdir(folder.parent)
    relative = load_case(Path("cases/../cases/./kq-n2-014.toml"))
    a = report_mod.render_pdf_bytes(screen_case(absolute), absolute.text, report_date=DATE)
    b = report_mod.render_pdf_bytes(screen_case(relative), relative.text, report_date=DATE)
    assert a == b
    assert b"some user" not in a


def _font_file(family: str) -> str | None:
    if not shutil.which("fc-match"):
        return None
    out = subprocess.run(["fc-match", "-f", "%{family}", family], capture_output=True, text=True).stdout
    return out if family.split()[0].lower() in out.lower() else None


@pytest.mark.skipif(_font_file("Noto Sans CJK SC") is None, reason="fonts-noto-cjk is not installed here")
def test_cjk_text_is_set_in_an_embedded_wide_coverage_font():
    text = _with(description="圧縮ガス容器 試験")
    result = screen_case(parse_case_text(text, "cjk.toml"))
    import io

    reader = PdfReader(io.BytesIO(report_mod.render_pdf_bytes(result, text, report_date=DATE)))
    fonts = set()
    for page in reader.pages:
        for f in (page["/Resources"].get("/Font") or {}).values():
            fonts.add(str(f.get_object().get("/BaseFont")))
    assert any("Noto" in f and "CJK" in f for f in fonts), fonts
    assert "圧縮ガス容器" in (reader.pages[0].extract_text() or "")


def test_a_gas_below_its_critical_pressure_is_called_a_gas_not_supercritical():
    text = """id = "T-AIR"
[vessel]
water_capacity = "50 L"
rated_pressure = "16 bar(g)"
[fill]
gas = "air"
pressure = "10 bar(g)"
temperature = "15 degC"
[exposure]
gas_temperature = "50 degC"
"""
    result = screen_case(parse_case_text(text, "air.toml"))
    out = format_summary(result, width=100)
    assert "supercritical" not in out and "gas (above its critical temperature)" in out
    html = report_mod.render_html(result, text, DATE)
    assert "supercritical" not in html
