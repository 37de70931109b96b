"""`screening verify` on a batch report: the PDF carries the inventory, the defaults file and a run record;
verify screens the inventory again through the batch, compares the counts and the listing, renders the pages
again, and says plainly when the PDF carries more or fewer attachments than a batch report does."""

from __future__ import annotations

import io
import json
from pathlib import Path

import pytest
from pypdf import PdfReader, PdfWriter

import screening
from screening.batch import run as run_batch
from screening.cli import main
from screening.engine import screen_text
from screening.outputs.verify import verify_report

DATE = "2026-12-01"
# three vessels: nitrogen well inside its rating, nitrogen filled to its rating (heated: over), and a row
# with a gas name no library knows (an input error); the exposure comes from the defaults file
INVENTORY = ("id,gas,water_capacity,rated_pressure,fill_pressure,fill_temperature\n"
             "N2-LOW,nitrogen,50 L,300 bar(g),150 bar(g),15 degC\n"
             "N2-FULL,nitrogen,50 L,300 bar(g),300 bar(g),15 degC\n"
             "BAD-GAS,unobtainium,50 L,300 bar(g),150 bar(g),15 degC\n")
DEFAULTS = '[exposure]\nambient_max = "45 degC"\n'
CASE = ('id = "V-N2"\n[vessel]\nwater_capacity = "50 L"\nrated_pressure = "300 bar(g)"\n[fill]\n'
        'gas = "nitrogen"\npressure = "200 bar(g)"\ntemperature = "15 degC"\n[exposure]\nambient_max = "45 degC"\n')


def _batch(folder: Path, inventory: str, defaults: str, out: Path, *extra: str) -> Path:
    with pytest.raises(SystemExit):
        main(["batch", inventory, "--defaults", defaults, "--pdf", str(out), "--quiet", "--date", DATE, *extra])
    return out


@pytest.fixture(scope="module")
def made(tmp_path_factory) -> dict:
    """A batch PDF of an inventory in a sub-folder, made with a defaults file and --all-details."""
    folder = tmp_path_factory.mktemp("batch")
    sub = folder / "register"
    sub.mkdir()
    (sub / "inv.csv").write_text(INVENTORY, encoding="utf-8")
    (sub / "exposure.toml").write_text(DEFAULTS, encoding="utf-8")
    pdf = _batch(folder, str(sub / "inv.csv"), str(sub / "exposure.toml"), folder / "b.pdf", "--all-details")
    return dict(folder=folder, pdf=pdf, inventory=sub / "inv.csv", defaults=sub / "exposure.toml")


def _attachments(pdf: Path) -> dict[str, bytes]:
    return {n: bytes(c[0]) for n, c in PdfReader(str(pdf)).attachments.items()}


def _rebuilt(pages_of: Path, attachments: dict[str, bytes], out: Path) -> Path:
    """A PDF with the pages and metadata of `pages_of` and the given attachments instead of its own."""
    reader = PdfReader(str(pages_of))
    writer = PdfWriter()
    for page in reader.pages:
        writer.add_page(page)
    writer.add_metadata(dict(reader.metadata or {}))
    for name, data in attachments.items():
        writer.add_attachment(name, data)
    buf = io.BytesIO()
    writer.write(buf)
    out.write_bytes(buf.getvalue())
    return out


def _verify(pdf: Path, capsys) -> tuple[int, str]:
    capsys.readouterr()
    with pytest.raises(SystemExit) as exc:
        main(["verify", str(pdf)])
    out = capsys.readouterr()
    return exc.value.code, out.out + out.err


def test_a_batch_report_carries_its_inventory_defaults_and_run_record_by_file_name(made):
    got = _attachments(made["pdf"])
    assert sorted(got) == ["exposure.toml", "inv.batch.json", "inv.csv"]
    assert got["inv.csv"] == made["inventory"].read_bytes()
    assert got["exposure.toml"] == made["defaults"].read_bytes()
    record = json.loads(got["inv.batch.json"])
    assert record["tool_version"] == screening.__version__ and record["report_date"] == DATE
    assert record["options"]["all_details"] is True
    assert record["defaults"]["name"] == "exposure.toml"
    assert record["rows"] == 3
    # worst first, as the listing prints them: the input error, the vessel over its rating, the one within
    assert record["listing"] == [[4, "BAD-GAS", "input-error"], [3, "N2-FULL", "over"], [2, "N2-LOW", "within"]]
    assert record["counts"]["within"] == 1 and record["counts"]["over"] == 1
    assert record["counts"]["input-error"] == 1
    # no folder of the machine that made it reaches the attachments
    assert all(b"register" not in data for data in got.values())


def test_a_fresh_batch_report_verifies_on_every_statement(made, capsys):
    code, out = _verify(made["pdf"], capsys)
    assert code == 0, out
    assert out.startswith("AGREES: b.pdf")
    assert "the attachments are the ones a batch report carries: yes" in out
    assert "the attached inventory screens again to the same counts and listing: yes" in out
    assert "pages are the ones this version renders from them: yes" in out
    assert "the same 3 rows with the same ids and verdicts in the same order" in out
    assert "not a signature" in out


def test_the_same_inventory_and_date_give_the_same_bytes_however_the_path_is_typed(tmp_path, monkeypatch):
    # (an input-error row's reason names the inventory as it was typed: this inventory has none)
    sub = tmp_path / "register"
    sub.mkdir()
    (sub / "inv.csv").write_text(INVENTORY.replace("BAD-GAS,unobtainium", "N2-ALSO,nitrogen"), encoding="utf-8")
    (sub / "exposure.toml").write_text(DEFAULTS, encoding="utf-8")
    typed_in_full = _batch(tmp_path, str(sub / "inv.csv"), str(sub / "exposure.toml"), tmp_path / "full.pdf")
    monkeypatch.chdir(sub)
    typed_short = _batch(tmp_path, "inv.csv", "exposure.toml", tmp_path / "short.pdf")
    assert typed_short.read_bytes() == typed_in_full.read_bytes()


def test_an_altered_inventory_is_reported_as_differing(made, tmp_path, capsys):
    got = _attachments(made["pdf"])
    # the vessel within its rating is now filled to its rating: heated, it goes over
    got["inv.csv"] = got["inv.csv"].replace(b"N2-LOW,nitrogen,50 L,300 bar(g),150 bar(g)",
                                            b"N2-LOW,nitrogen,50 L,300 bar(g),300 bar(g)")
    pdf = _rebuilt(made["pdf"], got, tmp_path / "altered.pdf")
    code, out = _verify(pdf, capsys)
    assert code == 1
    assert out.startswith("DISAGREES")
    assert "the attachments are the ones a batch report carries: yes" in out
    assert "the attached inventory screens again to the same counts and listing: NO" in out
    lines = out.splitlines()
    sha = [k for k, ln in enumerate(lines) if "inventory SHA-256" in ln][0]
    assert lines[sha + 1].rstrip().endswith("DIFFERENT")
    assert "within 0" in [ln for ln in lines if "re-run:" in ln and "within" in ln][0]
    assert "listing            DIFFERENT" in out and "row 2 (id N2-LOW): attached within; re-run over" in out
    assert "pages are the ones this version renders from them: NO" in out


def test_a_missing_inventory_is_said_plainly(made, tmp_path, capsys):
    got = _attachments(made["pdf"])
    del got["inv.csv"]
    pdf = _rebuilt(made["pdf"], got, tmp_path / "no-inventory.pdf")
    code, out = _verify(pdf, capsys)
    assert code == 1 and out.startswith("DISAGREES")
    assert "the attachments are the ones a batch report carries: NO" in out
    assert "expected 3:" in out and "carried 2:" in out
    assert "MISSING: 'inv.csv' (named by the run record, not attached)" in out
    assert "counts and listing: NOT CHECKED" in out and "pages are the ones this version renders from them: " \
        "NOT CHECKED" in out


def test_an_added_attachment_is_said_plainly(made, tmp_path, capsys):
    got = _attachments(made["pdf"])
    got["notes.txt"] = b"not part of the run"
    pdf = _rebuilt(made["pdf"], got, tmp_path / "extra.pdf")
    code, out = _verify(pdf, capsys)
    assert code == 1 and out.startswith("DISAGREES")
    assert "the attachments are the ones a batch report carries: NO" in out
    assert "expected 3:" in out and "carried 4:" in out and "NOT ACCOUNTED FOR: 'notes.txt'" in out
    # what the attachments it expects say still holds, and is said
    assert "the attached inventory screens again to the same counts and listing: yes" in out
    assert "pages are the ones this version renders from them: yes" in out


def test_a_single_reports_attachments_in_a_batch_report_are_said_plainly(made, tmp_path, capsys):
    result = screen_text(CASE, "v-n2.toml")
    from screening.outputs.report import result_json

    pdf = _rebuilt(made["pdf"], {"v-n2.toml": CASE.encode(), "v-n2.result.json": result_json(result).encode()},
                   tmp_path / "swapped.pdf")
    code, out = _verify(pdf, capsys)
    assert code == 1 and out.startswith("DISAGREES")
    assert "is a batch report" in out and "a single report's attachments" in out
    assert "'v-n2.toml'" in out and "'v-n2.result.json'" in out


def test_a_run_record_that_is_not_json_is_an_input_error(made, tmp_path, capsys):
    got = _attachments(made["pdf"])
    got["inv.batch.json"] = b"{not json"
    pdf = _rebuilt(made["pdf"], got, tmp_path / "garbled.pdf")
    code, out = _verify(pdf, capsys)
    assert code == 2 and "run record is not JSON" in out and "inv.batch.json" in out and "Traceback" not in out


def test_another_version_re_runs_the_counts_but_does_not_check_the_pages(made, monkeypatch):
    monkeypatch.setattr(screening, "__version__", "99.0.0")
    ok, message = verify_report(made["pdf"], run_batch=run_batch)
    assert not ok and message.startswith("NOT VERIFIED")
    assert "the attached inventory screens again to the same counts and listing: yes" in message
    assert "pages are the ones this version renders from them: NOT CHECKED" in message
    assert f"run verify with version {_version_of(made['pdf'])}" in message


def _version_of(pdf: Path) -> str:
    return json.loads(_attachments(pdf)["inv.batch.json"])["tool_version"]


def test_control_characters_in_an_attached_run_record_are_shown_not_obeyed(made, tmp_path, capsys):
    got = _attachments(made["pdf"])
    record = json.loads(got["inv.batch.json"])
    record["listing"][2][1] = "N2-\x1b[2J\u202eWOL"      # a terminal clear-screen and a right-to-left override
    got["inv.batch.json"] = json.dumps(record).encode()
    pdf = _rebuilt(made["pdf"], got, tmp_path / "escapes.pdf")
    code, out = _verify(pdf, capsys)
    assert code == 1 and "the attached inventory screens again to the same counts and listing: NO" in out
    assert "\x1b" not in out and "\u202e" not in out
    assert "N2-\\u001b[2J\\u202eWOL" in out


def test_verify_and_the_batch_report_name_the_run_record_alike():
    from screening.outputs import batch_report, verify

    assert verify.RUN_SUFFIX == batch_report.RUN_SUFFIX
