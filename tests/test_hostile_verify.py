"""`screening verify` says what it can prove: that the attachments re-run to the same verdict and peak, and
that the pages are the ones this version renders from them; and it says plainly what it cannot check."""

from __future__ import annotations

import datetime as dt
import io
import textwrap
from pathlib import Path

import pytest
from helpers import nitrogen_case
from pypdf import PdfReader, PdfWriter

from screening.cli import main
from screening.engine import screen_text
from screening.errors import InputError
from screening.outputs.report import render_report
from screening.outputs.verify import verify_report

DATE = dt.date(2026, 12, 1)
NITROGEN = nitrogen_case("V-N2")
# a methane vessel filled close to its rating, in psi: heated, it goes over
METHANE = textwrap.dedent("""\
    id = "V-CH4"
    [vessel]
    water_capacity = "50 L"
    rated_pressure = "3000 psig"
    [fill]
    gas = "methane"
    pressure = "2900 psig"
    temperature = "15 degC"
    [exposure]
    ambient_max = "65 degC"
    """)


def _report(folder: Path, name: str, text: str) -> Path:
    result = screen_text(text, name)
    return render_report(result, text, folder / (Path(name).stem + ".pdf"), report_date=DATE)


@pytest.fixture(scope="module")
def reports(tmp_path_factory) -> dict[str, Path]:
    folder = tmp_path_factory.mktemp("verify")
    return {"n2": _report(folder, "v-n2.toml", NITROGEN), "ch4": _report(folder, "v-ch4.toml", METHANE)}


def _rebuilt(pages_of: Path, attachments: list[tuple[str, bytes]], out: Path) -> Path:
    """A PDF with the pages and metadata of `pages_of` and the given attachments instead of its own."""
    reader = PdfReader(str(pages_of))
    writer = PdfWriter()
    for page in reader.pages:
        writer.add_page(page)
    writer.add_metadata(dict(reader.metadata or {}))
    for name, data in attachments:
        writer.add_attachment(name, data)
    buf = io.BytesIO()
    writer.write(buf)
    out.write_bytes(buf.getvalue())
    return out


def _attachments(pdf: Path) -> list[tuple[str, bytes]]:
    return [(n, bytes(c[0])) for n, c in PdfReader(str(pdf)).attachments.items()]


def test_a_fresh_report_verifies_on_both_counts_in_the_cases_units(reports):
    ok, message = verify_report(reports["ch4"])
    assert ok, message
    assert message.startswith("AGREES")
    assert "attachments re-run to the same verdict and peak: yes" in message
    assert "pages are the ones this version renders from them: yes" in message
    assert "psi(g)" in message                   # the case's own unit, not only pascals
    assert "not a signature" in message


def test_pages_of_one_vessel_with_the_attachments_of_another_do_not_verify(reports, tmp_path):
    forged = _rebuilt(reports["n2"], _attachments(reports["ch4"]), tmp_path / "forged.pdf")
    ok, message = verify_report(forged)
    assert not ok
    assert message.startswith("DISAGREES")
    assert "attachments re-run to the same verdict and peak: yes" in message
    assert "pages are the ones this version renders from them: NO" in message


def test_a_report_with_an_extra_attachment_says_so(reports, tmp_path):
    extra = _rebuilt(reports["n2"], _attachments(reports["n2"]) + [("notes.txt", b"hello")], tmp_path / "x.pdf")
    ok, message = verify_report(extra)
    assert not ok and "3 attachments" in message and "'notes.txt'" in message


def test_a_report_with_two_results_is_refused_with_its_own_message(reports, tmp_path):
    two = _rebuilt(reports["n2"], _attachments(reports["n2"]) + [
        (n.replace("v-ch4", "other"), d) for n, d in _attachments(reports["ch4"]) if n.endswith(".result.json")],
        tmp_path / "two.pdf")
    with pytest.raises(InputError, match="2 result attachments"):
        verify_report(two)


def test_a_report_whose_pages_lost_their_attachments_names_what_it_has(reports, tmp_path):
    bare = _rebuilt(reports["n2"], [], tmp_path / "bare.pdf")
    with pytest.raises(InputError, match=r"no attached result \(attachments: none\)"):
        verify_report(bare)


def test_a_report_of_another_version_has_its_attachments_rerun_and_its_pages_left_unchecked(reports,
                                                                                          monkeypatch):
    import screening

    monkeypatch.setattr(screening, "__version__", "99.0.0")
    ok, message = verify_report(reports["n2"])
    assert not ok and message.startswith("NOT VERIFIED")
    assert "attachments re-run to the same verdict and peak: yes" in message
    assert "pages are the ones this version renders from them: NOT CHECKED" in message


def test_a_batch_report_without_attachments_says_what_cannot_be_checked(tmp_path, capsys):
    # a batch report carries its inventory and run record (tests/test_verify_batch.py); one without them
    # (an earlier version's, the web page's, or with its attachments removed) cannot be re-run
    from screening.batch import run_inventory
    from screening.inputs.inventory import read_inventory
    from screening.outputs.batch_report import render_batch_report

    inv = tmp_path / "inv.csv"
    inv.write_text("id,gas,water_capacity,rated_pressure,fill_pressure,fill_temperature,ambient_max\n"
                   "A,nitrogen,50 L,300 bar(g),200 bar(g),15 degC,45 degC\n", encoding="utf-8")
    pdf = render_batch_report(run_inventory(read_inventory(inv)), tmp_path / "b.pdf", source="inv.csv",
                              report_date=DATE)
    capsys.readouterr()
    with pytest.raises(SystemExit) as exc:
        main(["verify", str(pdf)])
    out = capsys.readouterr().out
    assert exc.value.code == 1
    assert "CANNOT VERIFY" in out and "batch report" in out and "no attached inventory" in out
    assert "carries no attached result" not in out


def test_verify_on_a_directory_says_it_is_a_directory(tmp_path, capsys):
    with pytest.raises(SystemExit) as exc:
        main(["verify", str(tmp_path)])
    err = capsys.readouterr().err
    assert exc.value.code == 2 and "is a directory" in err and "no such report file" not in err
