"""Registers as sites keep them: their own columns, readable headers, decimal commas, notes sheets,
bad cells and hostile workbooks; every row accounted for; outputs that open as numbers.

Every file here is built by the test. The vessels are invented; the checks are about reading and
writing, not about the physics (peak pressures are only compared between two ways of reading the
same vessel)."""

import csv
import datetime
import io
import json
import os
import re
import signal
import zipfile

import pytest
from helpers import cli

from screening.cli import run
from screening.errors import InputError
from screening.inputs.inventory import load_defaults, read_inventory

HEAD = "id,gas,water_capacity,rated_pressure,fill_pressure,fill_temperature,ambient_max\n"
GOOD = "{id},nitrogen,50 L,300 bar(g),200 bar(g),15 degC,45 degC\n"


def write(tmp_path, text, name="inv.csv"):
    p = tmp_path / name
    p.write_bytes(text.encode("utf-8"))
    return p


def batch(tmp_path, path, *extra):
    out = tmp_path / "out.csv"
    code = run(["batch", str(path), "--csv", str(out), "--quiet", *extra])
    text = out.read_bytes().decode("utf-8")
    assert text.startswith("\ufeff")
    first = text[1:].split("\n", 1)[0]
    delimiter = ";" if first.count(";") > first.count(",") else ","
    return code, list(csv.DictReader(io.StringIO(text[1:]), delimiter=delimiter))


# ----------------------------------------------------------------------------- any register in

def test_extra_columns_are_carried_through_in_their_order(tmp_path):
    text = ("location,id,gas,water_capacity,serial number,rated_pressure,fill_pressure,fill_temperature,ambient_max,"
            "owner\n" "rack 2,A,nitrogen,50 L,SN-001,300 bar(g),200 bar(g),15 degC,45 degC,stores\n")
    code, rows = batch(tmp_path, write(tmp_path, text))
    assert code == 0
    keys = list(rows[0])
    assert keys[:11] == ["row", "location", "id", "gas", "water_capacity", "serial number", "rated_pressure",
                         "fill_pressure", "fill_temperature", "ambient_max", "owner"]
    assert rows[0]["location"] == "rack 2" and rows[0]["serial number"] == "SN-001" and rows[0]["owner"] == "stores"
    jl = tmp_path / "o.jsonl"
    run(["batch", str(write(tmp_path, text)), "--jsonl", str(jl), "--quiet"])
    rec = json.loads(jl.read_text(encoding="utf-8").splitlines()[0])
    assert rec["input"]["owner"] == "stores" and rec["row"] == 2


def test_human_headers_with_units_read_as_the_plain_ones(tmp_path):
    plain = write(tmp_path, HEAD + GOOD.format(id="A"), "plain.csv")
    human = write(tmp_path, "Vessel ID,Gas,Water capacity (L),Rated pressure [bar g],Fill-pressure (bar(g)),"
                  "FILL TEMPERATURE [°C],Max ambient (degC)\nA,nitrogen,50,300,200,15,45\n", "human.csv")
    _, a = batch(tmp_path, plain)
    _, b = batch(tmp_path, human)
    assert a[0]["peak_pressure [bar(g)]"] == b[0]["peak_pressure [bar(g)]"]
    assert b[0]["verdict"] == "within"


def test_near_miss_headers_are_all_reported_at_once_with_did_you_mean(tmp_path):
    p = write(tmp_path, "id,gass,water_capacty,rated_pressure [furlong],fill_pressure,fill_pressure\nA,x,1,2,3,4\n")
    with pytest.raises(InputError) as e:
        read_inventory(p)
    msg = str(e.value)
    assert "4 problems" in msg
    assert "did you mean 'gas'" in msg and "did you mean 'water_capacity'" in msg
    assert "furlong" in msg and "second column" in msg


def test_decimal_commas_where_the_separator_is_a_semicolon(tmp_path):
    text = ("\ufeffid;gas;water_capacity [L];rated_pressure [bar(g)];fill_pressure [bar(g)];fill_temperature [degC];"
            "ambient_max [degC]\nA;nitrogen;50;300;200,5;15,0;45\nB;nitrogen;50;300;200.5;15;45\n")
    code, rows = batch(tmp_path, write(tmp_path, text))
    assert code == 0
    # the output keeps the separator and the decimal mark of the input
    assert rows[0]["peak_pressure [bar(g)]"] == rows[1]["peak_pressure [bar(g)]"]
    assert "," in rows[0]["peak_pressure [bar(g)]"]
    # and a comma file read with --decimal ,
    text2 = ('id,gas,water_capacity [L],rated_pressure [bar(g)],fill_pressure [bar(g)],fill_temperature [degC],'
             'ambient_max [degC]\nA,nitrogen,50,300,"200,5","15,0",45\n')
    _, rows2 = batch(tmp_path, write(tmp_path, text2, "c.csv"), "--decimal", ",")
    assert rows2[0]["verdict"] == "within"


def test_a_register_rows_messages_speak_of_its_cells_and_columns(tmp_path):
    # messages of a register row name its cells and columns, not a case file's keys and tables: an empty cell,
    # a fill pressure without its temperature, a decimal comma in a comma-separated file
    text = ("id,gas,water_capacity [L],rated_pressure [bar(g)],fill_pressure [bar(g)],fill_temperature [degC],"
            'ambient_max [degC]\nA,nitrogen,50,,200,15,45\nB,nitrogen,50,300,200,,45\nC,nitrogen,50,300,"200,5",15,45\n')
    _, rows = batch(tmp_path, write(tmp_path, text))
    assert [r["verdict"] for r in rows] == ["input-error"] * 3
    a, b, c = (r["reasons"] for r in rows)
    assert "the cell is empty" in a and "rated_pressure [bar(g)]" in a
    assert "fill temperature in this row" in b
    assert "decimal comma" in c and "--decimal ," in c
    for reason in (a, b, c):
        assert "[vessel]" not in reason and "[fill]" not in reason and "table)" not in reason


def test_a_bare_number_without_a_unit_says_what_is_missing(tmp_path):
    text = HEAD.replace("water_capacity", "water_capacity") + "A,nitrogen,50,300 bar(g),200 bar(g),15 degC,45 degC\n"
    _, rows = batch(tmp_path, write(tmp_path, text))
    assert rows[0]["verdict"] == "input-error"
    assert "a number without its unit" in rows[0]["reasons"] and "water_capacity [L]" in rows[0]["reasons"]


def test_a_pressure_header_without_its_basis_is_one_message_for_the_file(tmp_path, capsys):
    # '[bar]' in a header says neither gauge nor absolute: every bare number of the column would be refused, so the
    # file is refused once, naming its columns (exit 2, nothing written); a basis in the defaults, or a column of
    # its own, reads them
    text = ("id,gas,water_capacity [L],rated_pressure [bar],fill_pressure [bar],fill_temperature [degC],"
            "ambient_max [degC]\nA,nitrogen,50,300,200,15,45\nB,argon,50,300,200,15,45\n")
    path = write(tmp_path, text)
    out = tmp_path / "out.csv"
    code, _out, err = cli(capsys, "batch", str(path), "--csv", str(out), "--quiet")
    assert code == 2
    assert err.count("\n") == 1 and "Traceback" not in err
    assert "column 4 ('rated_pressure [bar]'), column 5 ('fill_pressure [bar]')" in err
    assert "'rated_pressure [bar(g)]' (gauge)" in err and "pressure_basis" in err
    assert not out.exists()
    defaults = write(tmp_path, 'pressure_basis = "gauge"\n', "d.toml")
    code, rows = batch(tmp_path, path, "--defaults", str(defaults))
    assert [r["verdict"] for r in rows] == ["within", "within"]
    code, rows = batch(tmp_path, write(tmp_path, text.replace("ambient_max [degC]\n", "ambient_max [degC],basis\n")
                                       .replace(",45\n", ",45,gauge\n"), "b.csv"))
    assert [r["verdict"] for r in rows] == ["within", "within"]


def _xlsx(path, sheets):
    openpyxl = pytest.importorskip("openpyxl")
    wb = openpyxl.Workbook()
    wb.remove(wb.active)
    for name, rows in sheets:
        ws = wb.create_sheet(name)
        for r in rows:
            ws.append(r)
    wb.save(path)
    return path


XHEAD = ["id", "gas", "water_capacity [L]", "rated_pressure [bar(g)]", "fill_pressure [bar(g)]",
         "fill_temperature [degC]", "ambient_max [degC]", "last test"]


def test_notes_sheet_first_numbers_as_numbers_and_dates_refused_where_a_value_is_read(tmp_path):
    p = _xlsx(tmp_path / "reg.xlsx", [
        ("Notes", [["Cylinder register"], ["kept by the stores"]]),
        ("Cylinders", [[], XHEAD,
                       ["A", "nitrogen", 50, 300, 200.5, 15, 45, datetime.date(2024, 5, 1)],
                       ["B", "nitrogen", datetime.date(2024, 5, 1), 300, 200, 15, 45, None]])])
    code, rows = batch(tmp_path, p)
    assert code == 1
    assert [r["row"] for r in rows] == ["3", "4"]            # row 1 empty, header on row 2
    assert rows[0]["verdict"] == "within" and rows[0]["fill_pressure [bar(g)]"] == "200.5"
    assert rows[0]["last test"] == "2024-05-01"            # a date in a column of the user's own: carried
    assert rows[1]["verdict"] == "input-error"
    assert "row 4" in rows[1]["reasons"] and "water_capacity [L]" in rows[1]["reasons"] and "date" in rows[1]["reasons"]
    # the same vessel from a CSV gives the same numbers
    csv_p = write(tmp_path, ",".join(XHEAD[:-1]) + "\nA,nitrogen,50,300,200.5,15,45\n", "same.csv")
    _, same = batch(tmp_path, csv_p)
    assert same[0]["peak_pressure [bar(g)]"] == rows[0]["peak_pressure [bar(g)]"]


def test_a_workbook_without_a_header_row_lists_its_sheets(tmp_path):
    p = _xlsx(tmp_path / "none.xlsx", [("Notes", [["hello"]]), ("Stock", [["a", "b"]])])
    with pytest.raises(InputError, match="no sheet has a header row") as e:
        read_inventory(p)
    assert "Notes, Stock" in str(e.value) and "--sheet" in str(e.value)


def test_defaults_errors_are_reported_once_naming_the_defaults_file(tmp_path, capsys):
    from screening.cli import main

    inv = write(tmp_path, "id,gas,water_capacity,rated_pressure,fill_pressure,fill_temperature\n"
                + "A,nitrogen,50 L,300 bar(g),200 bar(g),15 degC\n" * 20)
    d = write(tmp_path, '[exposure]\nambient_max = "hot"\n[criteria]\nrequired_margin = "lots"\n', "d.toml")
    with pytest.raises(SystemExit) as e:
        main(["batch", str(inv), "--defaults", str(d), "--quiet"])
    assert e.value.code == 2
    err = capsys.readouterr().err
    assert err.count("d.toml") == 1 and "2 values" in err and "ambient_max" in err and "required_margin" in err


def test_the_column_unit_applies_to_a_default_value(tmp_path):
    inv = write(tmp_path, "id,gas,water_capacity,rated_pressure,fill_pressure,fill_temperature,ambient_max [degC]\n"
                "A,nitrogen,50 L,300 bar(g),200 bar(g),15 degC,\nB,nitrogen,50 L,300 bar(g),200 bar(g),15 degC,45\n")
    d = write(tmp_path, "[exposure]\nambient_max = 45\n", "d.toml")
    inv_ = read_inventory(inv)
    from screening.batch import run_inventory

    rs = run_inventory(inv_, load_defaults(d, inv_.columns))
    assert rs[0].verdict == "within" and rs[0].peak_pressure_pa == rs[1].peak_pressure_pa
    # without a column to take the unit from, a bare number is refused at once, in the defaults file
    inv2 = write(tmp_path, HEAD.replace(",ambient_max", "") + "A,nitrogen,50 L,300 bar(g),200 bar(g),15 degC\n",
                 "i2.csv")
    with pytest.raises(InputError, match="without its unit") as e:
        load_defaults(d, read_inventory(inv2).columns)
    assert "d.toml" in str(e.value)


# ----------------------------------------------------------------------------- nothing lost

@pytest.mark.parametrize("cell", ["inf bar(g)", "nan bar(g)", "1e308 psia", "1e400 bar(g)", "-inf bar(g)"])
def test_non_finite_and_overflowing_cells_are_input_error_rows(tmp_path, cell):
    text = HEAD + GOOD.format(id="A") + f"B,nitrogen,50 L,300 bar(g),{cell},15 degC,45 degC\n" + GOOD.format(id="C")
    code, rows = batch(tmp_path, write(tmp_path, text))
    assert code == 1
    assert [r["verdict"] for r in rows] == ["within", "input-error", "within"]
    assert "row 3" in rows[1]["reasons"] and "fill_pressure" in rows[1]["reasons"]


def test_a_huge_cell_makes_its_row_an_input_error_row(tmp_path):
    huge = "x" * 5_000_000
    text = HEAD.strip() + ",notes\n" + GOOD.format(id="A").strip() + ",ok\n" + GOOD.format(id="B").strip() + f",{huge}\n"
    code, rows = batch(tmp_path, write(tmp_path, text))
    assert [r["verdict"] for r in rows] == ["within", "input-error"]
    assert "32767 characters" in rows[1]["reasons"] and len(rows[1]["notes"]) < 100


def _rewrite_sheet(src, dst, edit):
    with zipfile.ZipFile(src) as zin, zipfile.ZipFile(dst, "w", zipfile.ZIP_DEFLATED) as zout:
        for item in zin.infolist():
            data = zin.read(item.filename)
            if item.filename.startswith("xl/worksheets/"):
                data = edit(data.decode("utf-8")).encode("utf-8")
            zout.writestr(item, data)
    return dst


def test_hostile_workbooks_are_refused_before_memory_grows(tmp_path):
    base = _xlsx(tmp_path / "base.xlsx", [("Cylinders", [XHEAD[:-1], ["A", "nitrogen", 50, 300, 200, 15, 45]])])
    # cells declared at the far corner of the sheet (a dense grid of 17 000 million cells)
    far = _rewrite_sheet(base, tmp_path / "far.xlsx", lambda s: s.replace(
        "</sheetData>", '<row r="1048576"><c r="XFD1048576"><v>1</v></c></row></sheetData>'))
    with pytest.raises(InputError, match="spans 1,048,576 rows by 16,384 columns"):
        read_inventory(far)
    # a declared dimension of the whole sheet, with the cells where they are: read as it is
    dim = _rewrite_sheet(base, tmp_path / "dim.xlsx", lambda s: re.sub(r'<dimension ref="[^"]*"',
                                                                        '<dimension ref="A1:XFD1048576"', s))
    with zipfile.ZipFile(dim) as z:
        assert b'ref="A1:XFD1048576"' in z.read("xl/worksheets/sheet1.xml")
    assert len(read_inventory(dim).rows) == 1
    # one cell of 300 MB of text (compresses to a few hundred KB)
    with zipfile.ZipFile(base) as z:
        names = z.namelist()
    big = _rewrite_sheet(base, tmp_path / "big.xlsx", lambda s: s.replace(
        "<v>45</v>", "<v>45</v></c><c r=\"H2\" t=\"inlineStr\"><is><t>" + "a" * 3_000_000 + "</t></is>", 1))
    assert os.path.getsize(big) < 200_000 and "xl/worksheets/sheet1.xml" in names
    with pytest.raises(InputError, match="holds more than 256 KiB of text"):
        read_inventory(big)


def test_a_part_that_unpacks_beyond_the_bound_is_refused(tmp_path, monkeypatch):
    from screening.inputs import xlsx

    base = _xlsx(tmp_path / "base.xlsx", [("Cylinders", [XHEAD[:-1]] + [["A", "nitrogen", 50, 300, 200, 15, 45]] * 200)])
    monkeypatch.setattr(xlsx, "MAX_PART_BYTES", 4096)
    with pytest.raises(InputError, match="unpacks to more than"):
        read_inventory(base)


def test_a_file_that_is_not_a_workbook_is_one_file_level_error(tmp_path):
    p = tmp_path / "x.xlsx"
    p.write_bytes(b"PK\x03\x04" + b"\x00" * 100)
    with pytest.raises(InputError, match="not a readable .xlsx"):
        read_inventory(p)


# ----------------------------------------------------------------------------- results people can use

def test_csv_numbers_units_in_headers_bom_and_severity_order(tmp_path):
    text = (HEAD + GOOD.format(id="A") + "B,argon,50 L,300 bar(g),lots,15 degC,45 degC\n"
            + "C,nitrogen,50 L,200 bar(g),230 bar(g),15 degC,65 degC\n"
            + "D,nitrogen,50 L,300 bar(g),230 bar(g),15 degC,45 degC\n")
    code, rows = batch(tmp_path, write(tmp_path, text))
    assert [r["row"] for r in rows] == ["2", "3", "4", "5"]           # input order by default
    assert float(rows[0]["margin [%]"]) > 10 and float(rows[0]["max_gas_temperature [°C]"]) > 45
    _, ranked = batch(tmp_path, write(tmp_path, text), "--sort", "severity")
    assert [r["verdict"] for r in ranked][:2] == ["input-error", "over"]
    within = [float(r["margin [%]"]) for r in ranked if r["verdict"] == "within"]
    assert within == sorted(within)


def test_xlsx_output_has_numbers_frozen_header_filter_shades_and_a_summary_sheet(tmp_path):
    openpyxl = pytest.importorskip("openpyxl")
    text = HEAD + GOOD.format(id="A") + "C,nitrogen,50 L,200 bar(g),230 bar(g),15 degC,65 degC\n"
    out = tmp_path / "o.xlsx"
    run(["batch", str(write(tmp_path, text)), "--xlsx", str(out), "--quiet"])
    wb = openpyxl.load_workbook(out)
    ws = wb["results"]
    head = [c.value for c in ws[1]]
    assert ws.freeze_panes == "A2" and ws.auto_filter.ref == f"A1:{openpyxl.utils.get_column_letter(len(head))}3"
    peak = head.index("peak_pressure [bar(g)]") + 1
    verdict = head.index("verdict") + 1
    assert isinstance(ws.cell(2, peak).value, float)
    assert ws.cell(2, verdict).value == "within" and ws.cell(3, verdict).value == "over"
    assert ws.cell(2, verdict).fill.start_color.rgb != ws.cell(3, verdict).fill.start_color.rgb
    summary = {r[0]: r[1] for r in wb["summary"].values if r and r[0]}
    assert summary["over"] == 1 and summary["within"] == 1
    from screening.cautions import CAUTION
    assert summary["caution"] == CAUTION


def test_templates_screen_as_they_are(tmp_path):
    for name in ("t.csv", "t.xlsx"):
        assert run(["template", "inventory", "-o", str(tmp_path / name)]) == 0
        code, rows = batch(tmp_path, tmp_path / name)
        assert len(rows) == 2 and all(r["verdict"] in ("within", "low-margin") for r in rows)
        assert rows[0]["location"]
    assert run(["template", "case", "-o", str(tmp_path / "c.toml")]) == 0
    assert run(["check", str(tmp_path / "c.toml")]) == 0


# ----------------------------------------------------------------------------- streaming, workers

def _killed(job):
    os.kill(os.getpid(), signal.SIGKILL)


@pytest.mark.skipif(not hasattr(os, "fork"), reason="needs fork")
def test_a_killed_worker_gives_a_clear_message_and_no_file(tmp_path, monkeypatch, capsys):
    from screening import batch as batch_mod
    from screening import parallel

    inv = write(tmp_path, HEAD + "".join(GOOD.format(id=f"R{i}") for i in range(8)))
    monkeypatch.setattr(batch_mod, "CHUNK_ROWS", 2)
    monkeypatch.setattr(parallel, "workers", lambda: 2)
    monkeypatch.setattr(batch_mod, "screen_chunk", _killed)
    out = tmp_path / "o.csv"
    assert run(["batch", str(inv), "--csv", str(out), "--quiet"]) == 2
    assert "worker process stopped" in capsys.readouterr().err
    assert not out.exists() and not [p for p in os.listdir(tmp_path) if p.endswith(".part")]


class _NoUnpickle(ValueError):
    def __init__(self, a, b):
        super().__init__(f"{a} {b}")


def _raise(kind):
    if kind == "input":
        raise InputError("m", file="f", row=3, column="c", given="g", expected="e")
    raise _NoUnpickle("cannot", "come back")


def test_an_error_in_a_worker_comes_back_and_one_that_cannot_come_back_never_hangs():
    from screening import parallel

    with parallel.executor(2) as pool:
        with pytest.raises(InputError) as e:
            list(parallel.ordered(pool, _raise, ["input"]))
        assert str(e.value) == "f, row 3, column 'c': m (given: 'g'; expected: e)"
    with parallel.executor(2) as pool:
        with pytest.raises(parallel.WorkerLost):
            list(parallel.ordered(pool, _raise, ["other"]))


def test_rows_are_streamed_in_chunks_and_every_row_is_accounted_for(tmp_path, monkeypatch):
    from screening import batch as batch_mod

    monkeypatch.setattr(batch_mod, "CHUNK_ROWS", 7)
    monkeypatch.setattr(batch_mod, "SORT_RUN_ROWS", 5)        # several sorted runs merged
    lines = [HEAD] + [GOOD.format(id=f"R{i}") if i % 9 else f"R{i},nitrogen,50 L,300 bar(g),x,15 degC,45 degC\n"
                      for i in range(50)]
    code, rows = batch(tmp_path, write(tmp_path, "".join(lines)), "--sort", "severity")
    assert sorted(int(r["row"]) for r in rows) == list(range(2, 52))
    assert [r["verdict"] for r in rows[:6]] == ["input-error"] * 6 and rows[6]["verdict"] == "within"


class _Terminal(io.StringIO):
    def isatty(self):
        return True


def test_a_progress_bar_counts_the_rows_on_a_terminal_only(tmp_path, monkeypatch, capsys):
    import sys

    from screening import batch as batch_mod

    monkeypatch.setattr(batch_mod, "CHUNK_ROWS", 3)
    inv = write(tmp_path, HEAD + "".join(GOOD.format(id=f"R{i}") for i in range(7)))
    term = _Terminal()
    monkeypatch.setattr(sys, "stderr", term)
    assert run(["batch", str(inv)]) == 0
    assert re.search(r"screening: [0-9.]+k? rows", term.getvalue())
    term2 = _Terminal()
    monkeypatch.setattr(sys, "stderr", term2)
    run(["batch", str(inv), "--quiet"])
    assert term2.getvalue() == ""


def test_an_unclosed_quote_and_a_header_without_rows_are_errors_of_the_file(tmp_path, capsys):
    from screening.cli import main

    for text, words in ((HEAD + GOOD.format(id="A") + GOOD.format(id='"B') + GOOD.format(id="C"), "row 3"),
                        (HEAD, "no rows")):
        out = tmp_path / "o.csv"
        with pytest.raises(SystemExit) as e:
            main(["batch", str(write(tmp_path, text)), "--csv", str(out), "--quiet"])
        assert e.value.code == 2 and not out.exists()
        assert words in capsys.readouterr().err
