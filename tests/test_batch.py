"""`screening batch`: reading inventories, nothing lost, located errors, outputs written atomically."""

import csv
import json
import os

import pytest

from screening.batch import run_inventory
from screening.cli import run
from screening.inputs.inventory import read_inventory

HEAD = "id,gas,water_capacity,rated_pressure,fill_pressure,fill_temperature,ambient_max\n"
GOOD = "{id},nitrogen,50 L,300 bar(g),200 bar(g),15 degC,45 degC\n"


def write(tmp_path, text, name="inv.csv", encoding="utf-8"):
    p = tmp_path / name
    p.write_bytes(text.encode(encoding))
    return p


def results(path, **kw):
    return run_inventory(read_inventory(path), **kw)


def test_bad_row_in_the_middle_keeps_every_other_row(tmp_path):
    text = HEAD + GOOD.format(id="A") + "B,argon,50 L,300 bar(g),lots,15 degC,45 degC\n" + GOOD.format(id="C")
    rs = results(write(tmp_path, text))
    assert [r["row"] for r in rs] == [2, 3, 4]
    assert [r["verdict"] for r in rs] == ["within", "input-error", "within"]
    msg = rs[1]["reasons"][0]
    assert "row 3" in msg and "column 'fill_pressure'" in msg and "'lots'" in msg and "expected" in msg


def test_bom_semicolons_quoted_fields_and_header_units(tmp_path):
    text = ("\ufeffid;description;gas;water_capacity [L];rated_pressure [bar(g)];fill_pressure [bar(g)];"
            "fill_temperature [degC];ambient_max\n"
            'A;"shed; north, rack 2";nitrogen;50;300;200;15;45 degC\n')
    rs = results(write(tmp_path, text))
    assert rs[0]["verdict"] == "within" and rs[0]["description"] == "shed; north, rack 2"
    assert rs[0]["fill"]["pressure_pa"] == pytest.approx(200e5 + 101325.0)


def test_xlsx_first_sheet_and_named_sheet(tmp_path):
    openpyxl = pytest.importorskip("openpyxl")
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "other"
    ws.append(["nothing"])
    ws2 = wb.create_sheet("cylinders")
    ws2.append(HEAD.strip().split(","))
    ws2.append(GOOD.format(id="X").strip().split(","))
    p = tmp_path / "inv.xlsx"
    wb.save(p)
    inv = read_inventory(p, sheet="cylinders")
    assert run_inventory(inv)[0]["verdict"] == "within"


def test_defaults_fill_missing_columns(tmp_path):
    d = write(tmp_path, '[exposure]\nambient_max = "45 degC"\n[criteria]\nrequired_margin = "5 %"\n', "d.toml")
    inv = write(tmp_path, "id,gas,water_capacity,rated_pressure,fill_pressure,fill_temperature\n"
                "A,nitrogen,50 L,300 bar(g),200 bar(g),15 degC\n")
    from screening.inputs.inventory import load_defaults
    rs = results(inv, defaults=load_defaults(d))
    assert rs[0]["required_margin_fraction"] == pytest.approx(0.05)


def test_duplicate_ids_are_warned_on_each_duplicate(tmp_path):
    rs = results(write(tmp_path, HEAD + GOOD.format(id="A") * 3))
    codes = [[w["code"] for w in r["warnings"]] for r in rs]
    assert "duplicate-id" not in codes[0] and all("duplicate-id" in c for c in codes[1:])


def test_empty_file_and_unknown_column_exit_2(tmp_path, capsys):
    from screening.cli import main
    for text in ("", "id,colour\nA,red\n"):
        with pytest.raises(SystemExit) as e:
            main(["batch", str(write(tmp_path, text))])
        assert e.value.code == 2
    err = capsys.readouterr().err
    assert "empty" in err and "unknown column" in err and "Traceback" not in err


def test_exit_codes_and_outputs(tmp_path):
    inv = write(tmp_path, HEAD + GOOD.format(id="A"))
    out = tmp_path / "o.json"
    assert run(["batch", str(inv), "--json", str(out), "--csv", str(tmp_path / "o.csv"), "--quiet"]) == 0
    doc = json.loads(out.read_text())
    assert doc["summary"]["counts"]["within"] == 1 and doc["results"][0]["row"] == 2
    rows = list(csv.DictReader(open(tmp_path / "o.csv", encoding="utf-8")))
    assert rows[0]["verdict"] == "within" and rows[0]["peak_pressure"].endswith("bar(g)")
    bad = write(tmp_path, HEAD + "A,nitrogen,50 L,300 bar(g),x,15 degC,45 degC\n", "bad.csv")
    assert run(["batch", str(bad), "--quiet"]) == 1


def test_outputs_are_atomic_and_a_directory_target_is_refused(tmp_path):
    inv = write(tmp_path, HEAD + GOOD.format(id="A"))
    out = tmp_path / "o.json"
    out.write_text("earlier")
    from screening.errors import InputError
    with pytest.raises(InputError):
        run(["batch", str(inv), "--json", str(out), "--csv", str(tmp_path), "--quiet"])
    assert out.read_text() == "earlier"
    assert not [p for p in os.listdir(tmp_path) if p.endswith(".part")]


def test_pdf_has_the_counts_and_the_caution(tmp_path):
    pypdf = pytest.importorskip("pypdf")
    inv = write(tmp_path, HEAD + GOOD.format(id="A") + "B,nitrogen,50 L,200 bar(g),230 bar(g),15 degC,65 degC\n")
    pdf = tmp_path / "b.pdf"
    run(["batch", str(inv), "--pdf", str(pdf), "--quiet"])
    pages = [p.extract_text() for p in pypdf.PdfReader(pdf).pages]
    assert all("Screening aid only" in t for t in pages)
    assert any("Row 3" in t for t in pages)


def test_a_20000_row_file_completes(tmp_path):
    lines = [HEAD] + [f"R{i},{'nitrogen' if i % 2 else 'argon'},50 L,300 bar(g),{150 + i % 80} bar(g),15 degC,"
                      f"45 degC\n" for i in range(20000)]
    rs = results(write(tmp_path, "".join(lines)))
    assert len(rs) == 20000 and [r["row"] for r in rs[:3]] == [2, 3, 4]
    assert all(r["verdict"] != "input-error" for r in rs)


def test_csv_formatted_in_forked_workers_equals_one_process(tmp_path, monkeypatch):
    # every verdict, an input error, a duplicate id and a relief warning, in chunks of two rows spread
    # over workers (on a machine with one core everything stays in this process, and the file is the same)
    from screening import batch, parallel

    text = (HEAD + GOOD.format(id="A") + "B,argon,50 L,300 bar(g),lots,15 degC,45 degC\n" + GOOD.format(id="A")
            + "D,nitrogen,50 L,200 bar(g),190 bar(g),15 degC,65 degC\n"
            + "E,helium,10 L,250 bar(g),230 bar(g),20 degC,50 degC\n" + GOOD.format(id="F"))
    inv = read_inventory(write(tmp_path, text))
    run_ = batch.BatchRun(inv)
    monkeypatch.setenv(parallel.WORKERS_ENV, "1")
    batch.write_csv(inv, run_.results, tmp_path / "one.csv")
    monkeypatch.delenv(parallel.WORKERS_ENV)
    monkeypatch.setattr(batch, "CSV_CHUNK", 2)
    monkeypatch.setattr(parallel, "MIN_ROWS", 4)
    batch.write_csv(inv, run_.results, tmp_path / "forked.csv")
    one = (tmp_path / "one.csv").read_bytes()
    assert one == (tmp_path / "forked.csv").read_bytes()
    assert len(one.decode("utf-8").splitlines()) == 1 + 6


def test_a_large_inventory_read_by_the_early_reader_gives_the_same_rows(tmp_path, monkeypatch):
    import screening.batch as batch_mod

    lines = [HEAD] + [f"R{i},{'nitrogen' if i % 2 else 'argon'},50 L,300 bar(g),{150 + i % 80} bar(g),15 degC,"
                      f"45 degC\n" for i in range(300)] + ["BAD,argon,50 L,300 bar(g),lots,15 degC,45 degC\n"]
    inv = write(tmp_path, "".join(lines))
    out_here, out_early = tmp_path / "here.csv", tmp_path / "early.csv"
    run(["batch", str(inv), "--csv", str(out_here), "--quiet"])
    monkeypatch.setattr(batch_mod, "EARLY_READ_BYTES", 0)
    monkeypatch.setattr(batch_mod, "_fresh_process", lambda: True)   # as in a fresh command
    calls = []
    real = batch_mod._early_reader
    monkeypatch.setattr(batch_mod, "_early_reader", lambda args: calls.append(real(args)) or calls[-1])
    run(["batch", str(inv), "--csv", str(out_early), "--quiet"])
    assert calls and calls[0] is not None
    assert out_early.read_bytes() == out_here.read_bytes()
    # a file that cannot be read is reported from this process as usual
    bad = write(tmp_path, "", name="empty.csv")
    from screening.errors import InputError
    with pytest.raises(InputError, match="empty"):
        run(["batch", str(bad), "--csv", str(out_early), "--quiet"])
