"""`screening batch`: reading inventories, nothing lost, located errors, outputs written atomically."""

import csv
import json
import os
from dataclasses import replace

import pytest

from screening.batch import run_inventory
from screening.cli import run
from screening.inputs.inventory import read_inventory
from screening.result import Result

HEAD = "id,gas,water_capacity,rated_pressure,fill_pressure,fill_temperature,ambient_max\n"
GOOD = "{id},nitrogen,50 L,300 bar(g),200 bar(g),15 degC,45 degC\n"


def _json(r):
    """A full result as its JSON object (an input-error record is one already)."""
    return r.to_json() if isinstance(r, Result) else r


def write(tmp_path, text, name="inv.csv", encoding="utf-8"):
    p = tmp_path / name
    p.write_bytes(text.encode(encoding))
    return p


def results(path, **kw):
    return [_json(r) for r in run_inventory(read_inventory(path), **kw)]


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
    assert run_inventory(inv)[0].verdict == "within"


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


def test_empty_file_and_misspelt_column_exit_2(tmp_path, capsys):
    from screening.cli import main
    for text in ("", "id,gass\nA,nitrogen\n"):
        with pytest.raises(SystemExit) as e:
            main(["batch", str(write(tmp_path, text))])
        assert e.value.code == 2
    err = capsys.readouterr().err
    assert "empty" in err and "did you mean 'gas'" in err and "Traceback" not in err


def test_exit_codes_and_outputs(tmp_path):
    inv = write(tmp_path, HEAD + GOOD.format(id="A"))
    out = tmp_path / "o.json"
    assert run(["batch", str(inv), "--json", str(out), "--csv", str(tmp_path / "o.csv"), "--quiet"]) == 0
    doc = json.loads(out.read_text())
    assert doc["summary"]["counts"]["within"] == 1 and doc["results"][0]["row"] == 2
    rows = list(csv.DictReader(open(tmp_path / "o.csv", encoding="utf-8-sig")))
    assert rows[0]["verdict"] == "within" and float(rows[0]["peak_pressure [bar(g)]"]) > 200
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


def test_a_register_with_its_gases_interleaved_is_screened_by_gas_and_written_in_input_order(tmp_path, monkeypatch):
    # rows of three gases interleaved, a bad row and an id used again in a later window: screened in windows of
    # two chunks of two rows sorted by gas, and written exactly as when every chunk holds its rows in input order
    from screening import batch, parallel

    monkeypatch.setenv(parallel.WORKERS_ENV, "1")
    monkeypatch.setattr(parallel, "workers", lambda: 1)
    gases = [("nitrogen", "200 bar(g)"), ("argon", "180 bar(g)"), ("propane", "")]
    body = []
    for i in range(11):
        gas, p = gases[i % 3]
        fill = f"{p},,15 degC" if p else ",12 kg,15 degC"
        body.append(f"R{i % 9},{gas},50 L,{'300 bar(g)' if p else '30 bar(g)'},{fill},45 degC\n")
    body[4] = "BAD,argon,50 L,300 bar(g),lots,,15 degC,45 degC\n"
    inv = write(tmp_path, "id,gas,water_capacity,rated_pressure,fill_pressure,fill_mass,fill_temperature,"
                          "ambient_max\n" + "".join(body))
    monkeypatch.setattr(batch, "CHUNK_ROWS", 2)
    chunks = []
    screen_chunk = batch.screen_chunk

    def spy(job):
        chunks.append([cells[1] for _n, cells in job[0].rows])
        return screen_chunk(job)

    monkeypatch.setattr(batch, "screen_chunk", spy)
    outs = {}
    for window in (1, 2):
        monkeypatch.setattr(batch, "WINDOW_CHUNKS", window)
        chunks.clear()
        names = [tmp_path / f"o{window}.{ext}" for ext in ("csv", "jsonl")]
        run(["batch", str(inv), "--csv", str(names[0]), "--jsonl", str(names[1]), "--quiet"])
        outs[window] = [p.read_bytes() for p in names]
        if window == 2:     # the first window's four rows go out sorted by gas, two by two
            assert chunks[:2] == [["argon", "nitrogen"], ["nitrogen", "propane"]]
    assert outs[1] == outs[2]
    rows = list(csv.DictReader(outs[2][0].decode("utf-8-sig").splitlines()))
    assert [r["row"] for r in rows] == [str(n) for n in range(2, 13)]
    assert [r["id"] for r in rows][:3] == ["R0", "R1", "R2"]
    lines = [json.loads(x) for x in outs[2][1].decode("utf-8").splitlines()]
    assert lines[4]["verdict"] == "input-error" and "row 6" in lines[4]["reasons"][0]
    # R0 is on rows 2 and 11, in different windows
    assert any("also used on row 2" in w["message"] for w in lines[9]["warnings"])


def test_outputs_are_the_same_whatever_the_number_of_workers(tmp_path, monkeypatch):
    # every verdict, an input error, a duplicate id across chunks, in chunks of two rows: one process
    # against a pool of workers (on one core both runs stay in this process and must still agree)
    from screening import batch, parallel

    text = (HEAD + GOOD.format(id="A") + "B,argon,50 L,300 bar(g),lots,15 degC,45 degC\n" + GOOD.format(id="A")
            + "D,nitrogen,50 L,200 bar(g),190 bar(g),15 degC,65 degC\n"
            + "E,helium,10 L,250 bar(g),230 bar(g),20 degC,50 degC\n" + GOOD.format(id="F")
            + "G,methane,50 L,200 bar(g),150 bar(g),15 degC,45 degC\n")
    inv = write(tmp_path, text)
    monkeypatch.setattr(batch, "CHUNK_ROWS", 2)
    outs = {}
    for n in ("1", "2"):
        monkeypatch.setenv(parallel.WORKERS_ENV, n)
        monkeypatch.setattr(parallel, "workers", lambda n=n: int(n))
        names = [tmp_path / f"o{n}.{ext}" for ext in ("csv", "jsonl", "json")]
        run(["batch", str(inv), "--csv", str(names[0]), "--jsonl", str(names[1]), "--json", str(names[2]),
             "--quiet"])
        outs[n] = [p.read_bytes() for p in names]
    assert outs["1"] == outs["2"]
    lines = outs["1"][0].decode("utf-8-sig").splitlines()
    assert len(lines) == 1 + 7 and "also used on row 2" in lines[3]


# ----------------------------------------------------------------------------- mixtures routed to their home worker

MIXED_HEAD = "id,gas,water_capacity,rated_pressure,fill_pressure,fill_temperature,ambient_max\n"


def _mixed_register(tmp_path):
    """Pure gases, two mixtures (each on rows of several windows, one spelt two ways), a row entered in psig,
    a bad row and an id used twice."""
    gases = ["nitrogen", "nitrogen 79% + oxygen 21%", "argon", "helium", "methane 90% + ethane 6% + nitrogen 4%",
             "nitrogen", "oxygen 21% + nitrogen 79%", "argon"]
    body = []
    for i in range(40):
        gas = gases[i % len(gases)]
        body.append(f"R{i},{gas},50 L,300 bar(g),{120 + 7 * (i % 23)} bar(g),15 degC,{40 + i % 25} degC\n")
    body[9] = "R9,nitrogen,50 L,4350 psig,2900 psig,59 degF,45 degC\n"
    body[14] = "BAD,argon,50 L,300 bar(g),lots,15 degC,45 degC\n"
    body[33] = body[3].replace("R3,", "R0,")
    return write(tmp_path, MIXED_HEAD + "".join(body))


def _outputs(tmp_path, inv, tag, capsys):
    names = [tmp_path / f"{tag}.{ext}" for ext in ("csv", "jsonl", "json")]
    run(["batch", str(inv), "--csv", str(names[0]), "--jsonl", str(names[1]), "--json", str(names[2])])
    return [p.read_bytes() for p in names] + [capsys.readouterr().out]


@pytest.mark.skipif(not hasattr(os, "fork"), reason="needs fork")
def test_mixtures_and_pure_gases_give_the_same_outputs_with_one_or_two_workers_and_with_full_rows(
        tmp_path, monkeypatch, capsys):
    # windows of 16 rows cut into chunks of 4 pure-gas rows or up to 4 mixture rows of one composition; the
    # terminal table keeps the worst row only (a worker sends the short result of its chunk's worst row only, so
    # the psig row's window is laid out again in the file's units): one process, two home workers, and two
    # workers sending every row's short result (the route a PDF takes) agree
    from screening import batch, parallel

    inv = _mixed_register(tmp_path)
    monkeypatch.setattr(batch, "CHUNK_ROWS", 4)
    monkeypatch.setattr(batch, "MIXTURE_WORK", 1)
    monkeypatch.setattr(batch, "TERMINAL_ROWS", 1)
    again = []
    expanded = batch._expanded
    monkeypatch.setattr(batch, "_expanded", lambda got: again.append(len(got)) or expanded(got))
    outs = {}
    for n in ("1", "2"):
        monkeypatch.setenv(parallel.WORKERS_ENV, n)
        monkeypatch.setattr(parallel, "workers", lambda n=n: int(n))
        outs[n] = _outputs(tmp_path, inv, f"o{n}", capsys)
    assert again == [16, 16]        # the psig row's window (rows 2-17), once in each run
    monkeypatch.setattr(batch, "_compact", lambda rows: expanded(list(rows)))
    outs["full"] = _outputs(tmp_path, inv, "full", capsys)
    assert outs["1"] == outs["2"] == outs["full"]
    table = outs["1"][3]
    assert "the 1 worst rows of 40 shown" in table and "\n    16  BAD" in table     # the bad row, worst of all
    rows = list(csv.DictReader(outs["1"][0].decode("utf-8-sig").splitlines()))
    assert [r["row"] for r in rows] == [str(n) for n in range(2, 42)]
    # the psig row's result columns in the file's units (those of its first row), as every other row's
    assert "peak_pressure [bar(g)]" in rows[0] and float(rows[9]["peak_pressure [bar(g)]"]) < 400
    verdicts = {r["gas"]: r["verdict"] for r in rows}
    assert verdicts["nitrogen 79% + oxygen 21%"] != "input-error" and verdicts["methane 90% + ethane 6% + nitrogen 4%"]


def _log_pid(job):
    """batch.screen_chunk, noting the gases of the chunk and the process that screened it."""
    with open(os.environ["SCREENING_TEST_PIDS"], "a", encoding="utf-8") as fh:
        fh.write(f"{os.getpid()}\t{'|'.join(sorted({c[1] for _n, c in job[0].rows}))}\n")
    return _screen_chunk(job)


def _screen_chunk(job):
    from screening import batch

    return batch._real_screen_chunk(job)


@pytest.mark.skipif(not hasattr(os, "fork"), reason="needs fork")
def test_a_composition_s_chunks_go_to_its_home_worker_and_first_in_their_window(tmp_path, monkeypatch):
    from screening import batch, parallel

    inv = _mixed_register(tmp_path)
    log = tmp_path / "pids.txt"
    monkeypatch.setenv("SCREENING_TEST_PIDS", str(log))
    monkeypatch.setattr(batch, "CHUNK_ROWS", 4)
    monkeypatch.setattr(batch, "MIXTURE_WORK", 1)
    monkeypatch.setattr(parallel, "workers", lambda: 2)
    monkeypatch.setattr(batch, "_real_screen_chunk", batch.screen_chunk, raising=False)
    monkeypatch.setattr(batch, "screen_chunk", _log_pid)
    run(["batch", str(inv), "--csv", str(tmp_path / "o.csv"), "--quiet"])
    chunks = [line.split("\t") for line in log.read_text(encoding="utf-8").splitlines()]
    assert len({pid for pid, _ in chunks}) == 2 and os.getpid() not in {int(pid) for pid, _ in chunks}
    homes: dict[str, set] = {}
    for pid, gases in chunks:
        if "%" in gases:     # one composition to a chunk (both spellings of nitrogen/oxygen together)
            key = "air" if "oxygen" in gases else gases
            assert key == "air" or "|" not in gases
            homes.setdefault(key, set()).add(pid)
    assert set(homes) == {"air", "methane 90% + ethane 6% + nitrogen 4%"}
    assert all(len(pids) == 1 for pids in homes.values())
    # in each window (16 rows: 2 rows of each mixture, 12 of pure gases) the mixture chunks go out first
    reg = read_inventory(inv)
    window = replace(reg, rows=reg.rows[:16])
    cuts = batch._chunk_cuts(window, batch._gas_order(window))
    assert [(h is not None, len(k)) for h, _w, k in cuts] == [(True, 2)] * 2 + [(False, 4)] * 3


def _pid(x):
    return x, os.getpid()


def _die(x):
    if x == "die":
        os.kill(os.getpid(), 9)
    return x


@pytest.mark.skipif(not hasattr(os, "fork"), reason="needs fork")
def test_routed_answers_in_order_each_home_in_one_process_and_a_dead_worker_never_hangs():
    from screening import parallel

    items = [(("a" if i % 3 == 0 else "b" if i % 3 == 1 else None), 1 + i % 4, i) for i in range(30)]
    pools = parallel.homes(2)
    try:
        got = list(parallel.routed(pools, _pid, items, ahead=2))
    finally:
        for p in pools:
            p.shutdown()
    assert [x for x, _ in got] == list(range(30))
    by_home = {h: {pid for (x, pid) in got if items[x][0] == h} for h in ("a", "b")}
    assert all(len(p) == 1 for p in by_home.values()) and by_home["a"] != by_home["b"]
    assert os.getpid() not in {pid for _, pid in got}
    pools = parallel.homes(2)
    try:
        with pytest.raises(parallel.WorkerLost):
            list(parallel.routed(pools, _die, [("a", 1, 1), (None, 1, "die"), ("a", 1, 2), (None, 1, 3)]))
    finally:
        for p in pools:
            p.shutdown()
    # without pools: in this process, in order
    assert list(parallel.routed(None, _pid, items[:3])) == [(i, os.getpid()) for i in range(3)]


@pytest.mark.skipif(not hasattr(os, "fork"), reason="needs fork")
def test_sorted_by_severity_the_outputs_are_the_same_with_one_or_two_workers(tmp_path, monkeypatch, capsys):
    # with two workers the JSON lines come back through spool files, as slices of the files' bytes; sorted by
    # severity they are spilled to temporary files: the same bytes as one process writes
    from screening import batch, parallel

    inv = _mixed_register(tmp_path)
    monkeypatch.setattr(batch, "CHUNK_ROWS", 4)
    monkeypatch.setattr(batch, "MIXTURE_WORK", 1)
    monkeypatch.setattr(batch, "SORT_RUN_ROWS", 7)        # several sorted runs spilled, then merged
    outs = {}
    for n in ("1", "2"):
        monkeypatch.setenv(parallel.WORKERS_ENV, n)
        monkeypatch.setattr(parallel, "workers", lambda n=n: int(n))
        names = [tmp_path / f"s{n}.{ext}" for ext in ("csv", "jsonl", "json")]
        run(["batch", str(inv), "--sort", "severity", "--csv", str(names[0]), "--jsonl", str(names[1]),
             "--json", str(names[2])])
        outs[n] = [p.read_bytes() for p in names] + [capsys.readouterr().out]
    assert outs["1"] == outs["2"]
    assert outs["1"][1].count(b"\n") == 40
