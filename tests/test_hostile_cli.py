"""The command line facing hostile inputs: a closed pipe, endless or huge files, empty inventories, a
broken quote; and the version a report names."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest
from helpers import cli, nitrogen_case

import screening
from screening.cli import MAX_INVENTORY_BYTES, main
from screening.inputs.case import MAX_CASE_BYTES

ROOT = Path(__file__).resolve().parents[1]
CASE = nitrogen_case("H-3")
HEAD = "id,gas,water_capacity,rated_pressure,fill_pressure,fill_temperature,ambient_max\n"
ROW = "{id},nitrogen,50 L,300 bar(g),200 bar(g),15 degC,45 degC\n"


def _into_a_closed_pipe(*args: str) -> subprocess.CompletedProcess:
    """Run the CLI with its stdout a pipe whose reading end is already closed (`screening … | head`
    where head has gone)."""
    r, w = os.pipe()
    os.close(r)
    try:
        proc = subprocess.run([sys.executable, "-m", "screening.cli", *args], stdout=w, stderr=subprocess.PIPE,
                              text=True, cwd=ROOT, timeout=300)
    finally:
        os.close(w)
    return proc


@pytest.mark.parametrize("extra", [[], ["--json"]])
def test_check_into_a_closed_pipe_ends_quietly(tmp_path, extra):
    case = tmp_path / "case.toml"
    case.write_text(CASE, encoding="utf-8")
    proc = _into_a_closed_pipe("check", str(case), *extra)
    assert proc.stderr == "", proc.stderr
    assert proc.returncode in (0, 1)


def test_batch_into_a_closed_pipe_ends_quietly(tmp_path):
    inv = tmp_path / "inv.csv"
    inv.write_text(HEAD + "".join(ROW.format(id=f"R{i}") for i in range(50)), encoding="utf-8")
    proc = _into_a_closed_pipe("batch", str(inv))
    assert "Traceback" not in proc.stderr and "BrokenPipe" not in proc.stderr, proc.stderr
    assert proc.returncode in (0, 1)


def test_an_endless_device_as_case_file_is_refused_without_reading_it_all(capsys):
    code, _, err = cli(capsys, "check", "/dev/zero")
    assert code == 2 and "/dev/zero" in err and "larger than this tool reads" in err
    assert "Traceback" not in err and "MemoryError" not in err


def test_a_case_file_over_the_bound_is_refused(tmp_path, capsys):
    big = tmp_path / "big.toml"
    with big.open("wb") as fh:
        fh.write(CASE.encode())
        fh.truncate(MAX_CASE_BYTES + 1)          # sparse: no disk space used
    code, _, err = cli(capsys, "check", str(big))
    assert code == 2 and "larger than this tool reads" in err and "10 MB" in err


def test_a_case_from_a_fifo_of_ordinary_size_is_still_read(tmp_path, capsys):
    import threading

    fifo = tmp_path / "case.toml"
    os.mkfifo(fifo)

    def feed():
        with open(fifo, "w", encoding="utf-8") as fh:
            fh.write(CASE)

    t = threading.Thread(target=feed)
    t.start()
    code, out, err = cli(capsys, "check", str(fifo))
    t.join()
    assert code in (0, 1) and "H-3" in out, err


@pytest.mark.parametrize("device", ["/dev/zero", "/dev/urandom"])
def test_an_endless_device_as_inventory_is_refused(capsys, device):
    code, _, err = cli(capsys, "batch", device, "--quiet")
    assert code == 2 and "not a regular file" in err and device in err


def test_an_inventory_over_the_bound_is_refused_before_reading(tmp_path, capsys):
    big = tmp_path / "big.csv"
    with big.open("wb") as fh:
        fh.write(HEAD.encode())
        fh.truncate(MAX_INVENTORY_BYTES + 1)     # sparse
    code, _, err = cli(capsys, "batch", str(big), "--quiet")
    assert code == 2 and "larger than this tool reads" in err


def test_a_header_only_inventory_says_it_has_no_rows(tmp_path, capsys):
    inv = tmp_path / "inv.csv"
    inv.write_text(HEAD, encoding="utf-8")
    code, out, err = cli(capsys, "batch", str(inv), "--quiet")
    assert code == 2 and "no rows" in err and str(inv) in err and "Traceback" not in err


def test_an_unclosed_quote_names_the_row_it_opens_in(tmp_path, capsys):
    inv = tmp_path / "inv.csv"
    inv.write_text(HEAD + ROW.format(id="A") + ROW.format(id='"B') + ROW.format(id="C"), encoding="utf-8")
    code, _, err = cli(capsys, "batch", str(inv), "--quiet")
    assert code == 2 and "row 3" in err and "quote" in err and "Traceback" not in err


def test_the_version_follows_the_releases_and_the_report_names_it(capsys):
    from screening.engine import screen_text
    from screening.outputs.report import render_html

    # this release: every change to a result or a report's bytes bumps it (DEVELOPERS.md, "Versions")
    assert tuple(int(x) for x in screening.__version__.split(".")) >= (0, 2, 0)
    with pytest.raises(SystemExit):
        main(["--version"])
    assert capsys.readouterr().out.strip() == f"screening {screening.__version__}"
    result = screen_text(CASE, "case.toml")
    assert result.tool_version == screening.__version__
    assert f"screening {screening.__version__}" in render_html(result, CASE, __import__("datetime").date(2026, 12, 1))


def test_a_header_only_workbook_says_it_has_no_rows(tmp_path, capsys):
    openpyxl = pytest.importorskip("openpyxl")
    wb = openpyxl.Workbook()
    wb.active.append(HEAD.strip().split(","))
    path = tmp_path / "inv.xlsx"
    wb.save(path)
    code, _, err = cli(capsys, "batch", str(path), "--quiet")
    assert code == 2 and "no rows" in err and str(path) in err
