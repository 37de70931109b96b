"""Output targets that must not be written, and writes that fail: nothing is destroyed, one message, exit 2.

Each test builds its own hostile target. A full disk cannot be made without privileges here, so the write
is replaced by one that fails with ENOSPC (the same OSError the kernel gives)."""

from __future__ import annotations

import errno
import os
import shutil
import stat
from pathlib import Path

import pytest
from helpers import cli, nitrogen_case

from screening.errors import InputError, OutputError
from screening.outputs import files

ROOT = Path(__file__).resolve().parents[1]
CASE = nitrogen_case("H-1")
HEAD = "id,gas,water_capacity,rated_pressure,fill_pressure,fill_temperature,ambient_max\n"
ROW = "A,nitrogen,50 L,300 bar(g),200 bar(g),15 degC,45 degC\n"


def one_message(err: str) -> None:
    assert "Traceback" not in err and err.count("\n") == 1, err


@pytest.fixture
def case(tmp_path) -> Path:
    p = tmp_path / "case.toml"
    p.write_text(CASE, encoding="utf-8")
    return p


@pytest.fixture
def inventory(tmp_path) -> Path:
    p = tmp_path / "inv.csv"
    p.write_text(HEAD + ROW, encoding="utf-8")
    return p


@pytest.fixture
def no_screening(monkeypatch):
    """Fail the test if any screening starts: a refused target must be refused before the work."""
    import screening.batch
    import screening.cli

    def boom(*a, **k):
        raise AssertionError("the screening started before the output target was refused")

    monkeypatch.setattr(screening.cli, "_screened_here", boom)
    monkeypatch.setattr(screening.cli, "_screened_for_pdf", boom)
    monkeypatch.setattr(screening.batch, "BatchRun", boom)


# ----------------------------------------------------------------------------- targets refused before the work

def test_report_onto_a_device_node_is_refused_and_the_device_stays(capsys, case, no_screening):
    before = os.stat("/dev/null")
    code, _, err = cli(capsys, "report", str(case), "-o", "/dev/null")
    assert code == 2 and "is a device" in err and "/dev/null" in err
    one_message(err)
    assert stat.S_ISCHR(os.stat("/dev/null").st_mode) and os.stat("/dev/null").st_ino == before.st_ino


def test_report_onto_a_fifo_is_refused_and_the_fifo_stays(capsys, case, tmp_path, no_screening):
    fifo = tmp_path / "pipe.pdf"
    os.mkfifo(fifo)
    code, _, err = cli(capsys, "check", str(case), "--pdf", str(fifo))
    assert code == 2 and "FIFO" in err and str(fifo) in err
    one_message(err)
    assert stat.S_ISFIFO(os.stat(fifo).st_mode)


def test_report_onto_its_own_case_file_is_refused_and_the_case_stays(capsys, case, no_screening):
    code, _, err = cli(capsys, "report", str(case), "-o", str(case))
    assert code == 2 and "is the input file" in err
    one_message(err)
    assert case.read_text(encoding="utf-8") == CASE


def test_report_onto_the_case_through_another_spelling_is_refused(capsys, case, monkeypatch, no_screening):
    (case.parent / "sub").mkdir()
    monkeypatch.chdir(case.parent)
    code, _, err = cli(capsys, "report", str(case), "-o", "./sub/../case.toml")
    assert code == 2 and "is the input file" in err
    assert case.read_text(encoding="utf-8") == CASE


def test_batch_csv_onto_its_own_inventory_is_refused_and_the_inventory_stays(capsys, inventory, no_screening):
    code, _, err = cli(capsys, "batch", str(inventory), "--csv", str(inventory), "--quiet")
    assert code == 2 and "is the input file" in err
    one_message(err)
    assert inventory.read_text(encoding="utf-8") == HEAD + ROW


@pytest.mark.parametrize("option", ["--xlsx", "--jsonl"])
def test_a_spreadsheet_or_json_lines_output_onto_its_own_inventory_is_refused(capsys, inventory, no_screening,
                                                                              option):
    code, _, err = cli(capsys, "batch", str(inventory), option, str(inventory), "--quiet")
    assert code == 2 and "is the input file" in err
    one_message(err)
    assert inventory.read_text(encoding="utf-8") == HEAD + ROW


def test_an_xlsx_and_a_json_lines_output_onto_one_file_are_refused(capsys, inventory, tmp_path, no_screening):
    out = tmp_path / "o.xlsx"
    code, _, err = cli(capsys, "batch", str(inventory), "--xlsx", str(out), "--jsonl", str(out), "--quiet")
    assert code == 2 and "another output" in err
    assert not out.exists()


def test_two_batch_outputs_onto_one_file_are_refused(capsys, inventory, tmp_path, no_screening):
    out = tmp_path / "o.txt"
    code, _, err = cli(capsys, "batch", str(inventory), "--csv", str(out), "--json", str(out), "--quiet")
    assert code == 2 and "another output" in err
    assert not out.exists()


def test_a_directory_target_is_refused_before_the_work(capsys, case, tmp_path, no_screening):
    code, _, err = cli(capsys, "report", str(case), "-o", str(tmp_path))
    assert code == 2 and "is a directory" in err
    one_message(err)


def test_an_empty_output_name_gets_its_own_message(capsys, case, no_screening):
    code, _, err = cli(capsys, "report", str(case), "-o", "")
    assert code == 2 and "no file name given" in err and "directory" not in err
    one_message(err)


def test_batch_output_in_a_folder_that_takes_no_new_file_is_refused_before_the_work(capsys, inventory,
                                                                                    no_screening):
    # /proc takes no new files even for root (the kernel's process table): the probe finds it first
    code, _, err = cli(capsys, "batch", str(inventory), "--csv", "/proc/x.csv", "--quiet")
    assert code == 2 and "/proc/x.csv" in err
    one_message(err)


@pytest.mark.skipif(hasattr(os, "geteuid") and os.geteuid() == 0, reason="root ignores file permissions")
def test_a_read_only_folder_is_refused_before_the_work(capsys, inventory, tmp_path, no_screening):
    ro = tmp_path / "ro"
    ro.mkdir()
    ro.chmod(0o555)
    try:
        code, _, err = cli(capsys, "batch", str(inventory), "--json", str(ro / "o.json"), "--quiet")
    finally:
        ro.chmod(0o755)
    assert code == 2 and "not writable" in err


# ----------------------------------------------------------------------------- write failures

def _full_disk(monkeypatch, after: int = 0):
    """Every write to a temporary output file fails with ENOSPC after `after` bytes."""
    real_fdopen = os.fdopen

    class Full:
        def __init__(self, fh):
            self.fh, self.n = fh, 0

        def write(self, data):
            if self.n + len(data) > after:
                raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))
            self.n += len(data)
            return self.fh.write(data)

        def __getattr__(self, name):
            return getattr(self.fh, name)

        def __enter__(self):
            return self

        def __exit__(self, *exc):
            return self.fh.__exit__(*exc)

    monkeypatch.setattr(files.os, "fdopen", lambda *a, **k: Full(real_fdopen(*a, **k)))


def _no_part_files(folder: Path) -> None:
    assert not [p for p in os.listdir(folder) if p.endswith(".part")]


def test_full_disk_under_the_report_writer_is_one_message_and_keeps_the_earlier_report(capsys, case, tmp_path,
                                                                                      monkeypatch):
    out = tmp_path / "r.pdf"
    out.write_bytes(b"earlier report")
    _full_disk(monkeypatch)
    code, _, err = cli(capsys, "report", str(case), "-o", str(out), "--date", "2026-12-01")
    assert code == 2 and "No space left on device" in err and str(out) in err and "earlier file" in err
    one_message(err)
    assert out.read_bytes() == b"earlier report"
    _no_part_files(tmp_path)


def test_full_disk_under_the_json_writer_is_one_message_and_keeps_the_earlier_file(capsys, inventory, tmp_path,
                                                                                  monkeypatch):
    out = tmp_path / "o.json"
    out.write_text("earlier")
    _full_disk(monkeypatch, after=10)
    code, _, err = cli(capsys, "batch", str(inventory), "--json", str(out), "--quiet")
    assert code == 2 and "No space left on device" in err and "JSON output" in err
    assert "Traceback" not in err
    assert out.read_text() == "earlier"
    _no_part_files(tmp_path)


def test_full_disk_under_the_batch_pdf_is_one_message(capsys, inventory, tmp_path, monkeypatch):
    monkeypatch.setenv("SCREENING_WORKERS", "1")
    out = tmp_path / "b.pdf"
    _full_disk(monkeypatch, after=1000)
    code, _, err = cli(capsys, "batch", str(inventory), "--pdf", str(out), "--quiet", "--date", "2026-12-01")
    assert code == 2 and "No space left on device" in err and "PDF report" in err
    assert "Traceback" not in err
    assert not out.exists()
    _no_part_files(tmp_path)


def test_a_failed_move_into_place_is_one_message_and_keeps_the_earlier_file(tmp_path, monkeypatch):
    out = tmp_path / "o.csv"
    out.write_text("earlier")

    def refuse(src, dst):
        raise PermissionError(errno.EACCES, os.strerror(errno.EACCES))

    monkeypatch.setattr(files.os, "replace", refuse)
    with pytest.raises(OutputError, match="Permission denied") as exc:
        with files.atomic_writer(out, "CSV output") as fh:
            fh.write("new")
    assert isinstance(exc.value, InputError) and str(out) in str(exc.value)
    assert out.read_text() == "earlier"
    _no_part_files(tmp_path)


def test_a_legal_249_character_output_name_is_written(tmp_path):
    name = "r" * 245 + ".pdf"           # 249 bytes: the temporary name must stay within 255
    with files.atomic_writer(tmp_path / name, "report", binary=True) as fh:
        fh.write(b"%PDF-1.7 test")
    assert (tmp_path / name).read_bytes() == b"%PDF-1.7 test"
    _no_part_files(tmp_path)


def test_a_255_byte_multibyte_name_keeps_its_temporary_name_within_the_limit(tmp_path):
    name = "é" * 125 + ".pdf"           # 254 bytes in UTF-8
    with files.atomic_writer(tmp_path / name, "report", binary=True) as fh:
        fh.write(b"x")
    assert (tmp_path / name).read_bytes() == b"x"


def test_a_name_over_the_limit_is_refused_before_the_work(tmp_path):
    with pytest.raises(OutputError, match="longer than the file system allows"):
        files.check_target(tmp_path / ("r" * 256), "report")


def test_a_symlink_to_a_regular_file_updates_the_file_and_keeps_the_link(tmp_path):
    real = tmp_path / "real.csv"
    real.write_text("old")
    link = tmp_path / "link.csv"
    link.symlink_to(real)
    with files.atomic_writer(link, "CSV output") as fh:
        fh.write("new")
    assert link.is_symlink() and real.read_text() == "new"


def test_a_symlink_to_a_device_is_refused(tmp_path):
    link = tmp_path / "null.pdf"
    link.symlink_to("/dev/null")
    with pytest.raises(OutputError, match="is a device"):
        files.check_target(link, "report")


def test_a_new_file_gets_the_umask_mode_and_a_replaced_file_keeps_its_mode(tmp_path):
    new = tmp_path / "new.csv"
    with files.atomic_writer(new, "CSV output") as fh:
        fh.write("x")
    assert stat.S_IMODE(new.stat().st_mode) == 0o666 & ~files._umask()
    old = tmp_path / "old.csv"
    old.write_text("y")
    old.chmod(0o600)
    with files.atomic_writer(old, "CSV output") as fh:
        fh.write("z")
    assert stat.S_IMODE(old.stat().st_mode) == 0o600


def test_demo_case_still_writes_its_report_through_the_checked_writer(capsys, tmp_path):
    case = tmp_path / "kq-n2-014.toml"
    shutil.copy(ROOT / "cases" / "kq-n2-014.toml", case)
    out = tmp_path / "n2.pdf"
    code, outp, err = cli(capsys, "report", str(case), "-o", str(out), "--date", "2026-12-01")
    assert code == 0 and out.read_bytes().startswith(b"%PDF-") and "Traceback" not in err


def test_an_output_error_survives_pickling_as_an_input_error_with_its_message():
    import pickle

    err = OutputError("cannot write the report: No space left on device; nothing was written", file="r.pdf")
    back = pickle.loads(pickle.dumps(err))
    assert type(back) is OutputError and isinstance(back, InputError) and str(back) == str(err)
