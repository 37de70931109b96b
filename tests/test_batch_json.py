"""The batch's JSON is built without the detour through the Result where a row ran on the columns, and it is
the same JSON, key for key and in the same order, as the Result gives:

* a plain row's Case is built from the values the column reader parsed: the same Case, field for field and
  input record for input record, as the case reader gives;
* ``Result.json_layout(d)`` is ``Result.from_json(d).to_json()`` (compiled per class, as ``to_json`` is);
* ``json_record(cls)``, with which the engine lays out a row's JSON directly, writes the fields in the order
  ``to_json`` writes them (the order is defined once, by the fields of result.py);
* every JSON line of ``screen_chunk`` is the line built from the row's full Result, byte for byte, on seeded
  random rows of every kind (rows in the sun, rows refused in the saturation band, rows that cannot be read,
  tolerances and scenarios from a defaults file);
* ``json_line`` (orjson) parses to what the standard library's json writes.

Every kind of row of the demo inventory and of the benchmark kinds (benchmarks/kinds.py) is covered."""

import dataclasses
import json
import math
import random
import sys
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from screening import batch
from screening.engine import screen_case, with_plot_data
from screening.errors import InputError
from screening.inputs.case import load_case
from screening.inputs.columns import read_plain
from screening.inputs.inventory import Inventory, read_inventory
from screening.outputs.tables import json_bytes, json_line
from screening.result import (
    Curves,
    Fill,
    Gas,
    Limits,
    ModelResult,
    Result,
    ScenarioSummary,
    ScreeningWarning,
    Site,
    Vessel,
    _Part,
    json_record,
)
from screening.verdicts import Verdict

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "benchmarks"))

import kinds as K  # noqa: E402  (the benchmark's row makers by kind)


def strict(a, b, path="$"):
    """a == b, and of the same types, dict keys in the same order, all the way down."""
    assert type(a) is type(b), f"{path}: {type(a).__name__} != {type(b).__name__} ({a!r} / {b!r})"
    if dataclasses.is_dataclass(a):
        for f in dataclasses.fields(a):
            strict(getattr(a, f.name), getattr(b, f.name), f"{path}.{f.name}")
    elif isinstance(a, dict):
        assert list(a) == list(b), f"{path}: keys {list(a)} != {list(b)}"
        for k in a:
            strict(a[k], b[k], f"{path}.{k}")
    elif isinstance(a, (list, tuple)):
        assert len(a) == len(b), f"{path}: {len(a)} != {len(b)} items"
        for i, (x, y) in enumerate(zip(a, b)):
            strict(x, y, f"{path}[{i}]")
    elif isinstance(a, float) and math.isnan(a):
        assert math.isnan(b), path
    else:
        assert a == b, f"{path}: {a!r} != {b!r}"


@pytest.fixture(scope="module")
def kinds_inventory(tmp_path_factory):
    """Three rows of every benchmark kind (and of the kind with tolerances and scenarios, from its defaults file)."""
    tmp = tmp_path_factory.mktemp("kinds")
    rnd = random.Random(11)
    plain, defaulted = [K.HEADER], [K.HEADER]
    for kind in K.kinds():
        for _ in range(3):
            line, _fill = kind[3](rnd, len(plain) + len(defaulted))
            (defaulted if len(kind) > 5 else plain).append(line)
    (tmp / "kinds.csv").write_text("\n".join(plain) + "\n", encoding="utf-8")
    (tmp / "options.csv").write_text("\n".join(defaulted) + "\n", encoding="utf-8")
    (tmp / "options.toml").write_text(next(k[5] for k in K.kinds() if len(k) > 5), encoding="utf-8")
    return tmp


def _inventories(tmp: Path):
    """(inventory, defaults) of the demo inventory, the benchmark kinds, and the kind with a defaults file."""
    from screening.inputs.inventory import load_defaults

    out = [(read_inventory(ROOT / "cases" / "inventory.csv"), None), (read_inventory(tmp / "kinds.csv"), None)]
    inv = read_inventory(tmp / "options.csv")
    out.append((inv, load_defaults(str(tmp / "options.toml"), inv.columns)))
    return out


def test_a_plain_rows_case_built_from_its_columns_is_the_case_readers(kinds_inventory):
    seen = 0
    for inv, defaults in _inventories(kinds_inventory):
        plain = read_plain(inv, defaults)
        for j in range(len(plain)):
            strict(plain.case(j), plain.read_case(j))
            seen += 1
    assert seen > 150


def test_defaults_sites_and_units_reach_the_case_as_the_case_reader_reads_them(tmp_path):
    path = tmp_path / "inv.csv"
    path.write_text(
        "id,description,gas,water_capacity,rated_pressure,rated_pressure_kind,relief_set_pressure,"
        "max_filling_ratio,fill_pressure,fill_mass,fill_temperature,gas_temperature,site,elevation,"
        "atmospheric_pressure,required_margin\n"
        "A,spare,nitrogen,50 L,300 bar(g),test,330 bar(g),,200 bar(g),,15 degC,65 degC,North yard,240 m,,5 %\n"
        "B,,propane,26 L,25 bar(g),,,0.42 kg/L,,11 kg,59 degF,,,,98.5 kPa(a),\n"
        "C,,argon,1.7 ft3,3000 psig,,,,2900 psig,,288.15 K,,,,,\n"
        "D,,R-134a,10 L,2.5 MPa(g),,,,,4500 g,20 degC,,,,,\n", encoding="utf-8")
    inv = read_inventory(path)
    for defaults, rows in ((None, 1), ({"exposure": {"ambient_max": "45 degC"}}, 4),
                           ({"exposure": {"ambient_max": "45 degC"}, "criteria": {"required_margin": 0.05},
                             "pressure_basis": "gauge"}, 4)):
        plain = read_plain(inv, defaults)
        assert len(plain) == rows
        for j in range(len(plain)):
            strict(plain.case(j), plain.read_case(j))


def test_a_plain_rows_case_row_is_its_case_as_the_json_line_reads_it(kinds_inventory):
    from screening.inputs.columns import CaseRow
    from screening.screen import case_parts, gas_part

    seen = 0
    for inv, defaults in _inventories(kinds_inventory):
        plain = read_plain(inv, defaults)
        for j in range(len(plain)):
            case = plain.case(j)
            row = plain.case_row(j, gas_part(case.gas))
            for name in CaseRow.__slots__:
                if name == "parts":
                    parts = case_parts(case)
                    del parts["cautions"]
                    strict(row.parts, parts)
                elif name == "atmospheric_pressure_pa":
                    strict(row.site.atmospheric_pressure_pa, case.site.atmospheric_pressure_pa)
                else:
                    strict(getattr(row, name), getattr(case, name))
            assert [s.name for s in row.scenarios] == [s.name for s in case.scenarios]
            seen += 1
    assert seen > 150


def _batch_run(inv, defaults):
    return batch.BatchRun(inv, defaults)


def test_a_rows_json_built_from_the_columns_is_its_results_json(kinds_inventory):
    on_columns = 0
    for inv, defaults in _inventories(kinds_inventory):
        run = _batch_run(inv, defaults)
        ps = run._plain
        for j in range(len(ps.plain)):
            full = ps.full(j)
            got = ps.full_json(j)
            if isinstance(full, Result):
                strict(got, full.to_json())
                on_columns += j in ps._where
            else:
                assert got is None
    assert on_columns > 100


def _expected_line(run, inv, i, r, headers):
    """A row's JSON line as the Result gives it: its full result with the row's warnings, less the curves and the
    cautions, with its row and its input cells."""
    f = run.full(i)
    if isinstance(f, Result):
        f = replace(f, warnings=batch._warnings(r["warnings"]))
    rec = {k: v for k, v in batch._json(f).items() if k not in ("curves", "cautions")}
    rec["row"] = r["row"]
    cells = inv.rows[i][1]
    rec["input"] = {h: str(cells[j]) if j < len(cells) else "" for j, h in enumerate(headers)}
    return rec


def test_every_json_line_of_a_chunk_is_the_line_of_its_full_result(kinds_inventory):
    for inv, defaults in _inventories(kinds_inventory):
        first = inv.rows[0][0]
        dups = {inv.rows[-1][0]: first}            # a duplicate id's warning reaches the line too
        got = batch.screen_chunk((inv, defaults, dups, {"json": True, "full": None}))
        run = _batch_run(inv, defaults)
        headers = [c.header for c in inv.columns]
        for i, (r, line, _) in enumerate(got):
            expected = _expected_line(run, inv, i, r, headers)
            strict(json.loads(line), json.loads(json.dumps(expected)))
            assert line == json_bytes(expected)
        assert any(w["code"] == "duplicate-id" for w in json.loads(got[-1][1])["warnings"])
        # with the PDF's full results asked for as well, the lines are the same
        both = batch.screen_chunk((inv, defaults, dups, {"json": True, "full": "all"}))
        assert [line for _, line, _ in both] == [line for _, line, _ in got]


def _dump_field_by_field(value):
    """The JSON of a part as the field-by-field walk writes it (the reference for the compiled codec)."""
    if isinstance(value, _Part) and type(value).to_json is _Part.to_json:
        return {f.name: _dump_field_by_field(getattr(value, f.name)) for f in dataclasses.fields(value)}
    if isinstance(value, _Part):                # a part with its own to_json: its keys, each walked
        own = value.to_json()
        return {k: _dump_field_by_field(getattr(value, k)) for k in own}
    if isinstance(value, Verdict):
        return value.value
    if isinstance(value, (tuple, list)):
        return [_dump_field_by_field(v) for v in value]
    if isinstance(value, dict):
        return {k: _dump_field_by_field(v) for k, v in value.items()}
    return value


@pytest.mark.parametrize("name", sorted(p.name for p in (ROOT / "cases").glob("*.toml")))
def test_the_compiled_codec_writes_and_reads_every_part_of_a_full_result(name):
    case = load_case(ROOT / "cases" / name)
    r = screen_case(case)
    try:
        r = with_plot_data(case, r)             # the curves and the phase diagram as well
    except (ValueError, RuntimeError):
        pass
    out = r.to_json()
    strict(out, _dump_field_by_field(r))
    strict(Result.json_layout(out), out)
    strict(Result.from_json(out).to_json(), out)
    strict(replace(r, row=7).to_json(), {**out, "row": 7})


@pytest.mark.parametrize("name", sorted(p.name for p in (ROOT / "cases").glob("*.toml")))
def test_the_compiled_decoder_reads_what_the_field_by_field_reader_reads(name):
    case = load_case(ROOT / "cases" / name)
    try:
        r = screen_case(case)
    except InputError:
        return
    out = r.to_json()
    read = Result._from_json_read(out)
    assert Result.from_json(out) == read == r
    strict(Result.from_json(out).to_json(), read.to_json())


def test_json_layout_refuses_what_from_json_refuses():
    r = screen_case(load_case(ROOT / "cases" / "kq-n2-014.toml"))
    data = r.to_json()
    for broken in ({**data, "colour": "red"}, {k: v for k, v in data.items() if k != "verdict"},
                   {**data, "fill": {**data["fill"], "colour": "red"}}):
        with pytest.raises(KeyError):
            Result.from_json(broken)
        with pytest.raises(KeyError):
            Result.json_layout(broken)
        with pytest.raises(KeyError) as compiled:
            Result.from_json(broken)
        with pytest.raises(KeyError) as by_field:
            Result._from_json_read(broken)
        assert str(compiled.value) == str(by_field.value)


def test_json_line_parses_to_what_the_standard_library_writes():
    record = {"id": "é – ² \u2028", "x": 1e-05, "big": 1.7976931348623157e308, "tiny": 5e-324, "neg": -0.0,
              "nan": math.nan, "inf": [math.inf, -math.inf], "n": 12, "t": (1, 2.5), "none": None, "ok": True}
    line = json_line(record)
    assert "\n" not in line and "NaN" not in line and "Infinity" not in line
    assert json.loads(line) == {**record, "nan": None, "inf": [None, None], "t": [1, 2.5]}
    # what orjson does not take goes to the standard library's writer: the same content
    assert json.loads(json_line({"v": np.float64(0.1), 3: "three"})) == {"v": 0.1, "3": "three"}
    assert json.loads(json_line({"v": np.float64("nan")})) == {"v": None}
    assert json.loads(json_line({"big": 2**70})) == {"big": 2**70}
    assert json_bytes(record) == line.encode()


def test_a_chunk_run_row_by_row_after_a_failure_still_writes_each_rows_json(monkeypatch, tmp_path):
    path = tmp_path / "inv.csv"
    path.write_text("id,gas,water_capacity,rated_pressure,fill_pressure,fill_temperature,ambient_max\n"
                    "A,nitrogen,50 L,300 bar(g),200 bar(g),15 degC,45 degC\n"
                    "B,argon,50 L,300 bar(g),200 bar(g),15 degC,45 degC\n", encoding="utf-8")
    inv = read_inventory(path)
    real = batch.BatchRun

    def fails_on_two_rows(one: Inventory, defaults=None, *a, **kw):
        if len(one.rows) > 1:
            raise ArithmeticError("the chunk fails")
        return real(one, defaults, *a, **kw)
    monkeypatch.setattr(batch, "BatchRun", fails_on_two_rows)
    got = batch.screen_chunk((inv, None, {}, {"json": True, "full": None}))
    lines = [json.loads(line) for _, line, _ in got]
    assert [x["id"] for x in lines] == ["A", "B"] and all(x["verdict"] == "within" for x in lines)
    strict(lines[0], json.loads(json.dumps(_expected_line(real(Inventory(
        inv.source, inv.columns, inv.rows[:1], inv.delimiter, inv.decimal, inv.sheet)), inv, 0, got[0][0],
        [c.header for c in inv.columns]))))


# ----------------------------------------------------------------------------- the JSON laid out directly

def _parts(value):
    """Every part of a result, nested parts included (each once per place it appears)."""
    if isinstance(value, _Part):
        yield value
        for f in dataclasses.fields(value):
            yield from _parts(getattr(value, f.name))
    elif isinstance(value, (tuple, list)):
        for v in value:
            yield from _parts(v)
    elif isinstance(value, dict):
        for v in value.values():
            yield from _parts(v)


@pytest.mark.parametrize("name", ["kq-n2-014.toml", "kq-co2-002.toml", "kq-c3h8-009.toml", "kq-n2-031.toml"])
def test_a_parts_json_record_lays_out_its_fields_in_the_order_to_json_writes(name):
    case = load_case(ROOT / "cases" / name)   # a pure gas, a liquefied gas, in the sun, with tolerances and scenarios
    r = with_plot_data(case, screen_case(case, curves=False))
    seen = set()
    for part in _parts(replace(r, row=3)):
        cls = type(part)
        if cls is ModelResult:          # its keys are the model's own (detail_keys), not a fixed layout
            continue
        data = part.to_json()
        if cls is Curves and "bounding" not in data:
            continue                    # to_json leaves the unused bounding curve out
        # given in reverse order, by name: laid out in the fields' order all the same
        strict(json_record(cls)(**dict(reversed(data.items()))), data)
        seen.add(cls)
    strict(json_record(Result, ("row",))(**r.to_json()), r.to_json())
    assert {Result, Site, Gas, Vessel, Fill, Limits, ScenarioSummary} <= seen


def test_a_json_record_refuses_a_missing_or_unknown_field():
    data = ScreeningWarning("a", "b").to_json()
    with pytest.raises(TypeError):
        json_record(ScreeningWarning)(code="a")
    with pytest.raises(TypeError):
        json_record(ScreeningWarning)(**data, colour="red")
    with pytest.raises(TypeError):
        json_record(Result, ("row",))(**screen_case(load_case(ROOT / "cases" / "kq-n2-014.toml"),
                                                    curves=False).to_json(), row=2)


#: Rows that cannot be screened, each for a different reason (the cells of benchmarks/kinds.py's header).
_BAD_ROWS = ("B1,nitrogen,50,abc,200,,15,45,", "B2,unobtainium,50,300,200,,15,45,", "B3,nitrogen,-5,300,200,,15,45,",
             "B4,nitrogen,50,300,,,15,45,", "B5,carbon dioxide,50,300,,99999,15,45,", "B6,propane,26,25,,11,15,45,moon")
#: Rows filled within the saturation band (refused as the single screening refuses them): propane, carbon dioxide
#: and ammonia at their vapour pressure at the fill temperature (CoolProp, PropsSI("P", "T", T, "Q", 0, fluid):
#: 6.30, 56.28 and 7.56 bar(g) at 15, 20 and 20 degC; inputs, not check values).
_BAND_ROWS = ("S1,propane,26,25,6.3,,15,45,", "S2,carbon dioxide,40,250,56.3,,20,45,", "S3,ammonia,40,30,7.6,,20,45,")


@pytest.fixture(scope="module", params=[3, 29])
def seeded_inventories(request, tmp_path_factory):
    """(inventory, defaults) of seeded random rows: two of every kind of benchmarks/kinds.py, one row in four of
    the plain ones in the sun, the rows that cannot be screened; and the kinds with a defaults file (input
    tolerances and scenarios), one inventory per defaults file."""
    from screening.inputs.inventory import load_defaults

    seed = request.param
    tmp = tmp_path_factory.mktemp(f"seeded{seed}")
    rnd = random.Random(seed)
    plain, by_defaults, n = [K.HEADER], {}, 0
    for kind in K.kinds():
        for _ in range(2):
            line, _fill = kind[3](rnd, n)
            n += 1
            if len(kind) > 5:
                by_defaults.setdefault(kind[5], [K.HEADER]).append(line)
            else:
                plain.append(line[:line.rindex(",") + 1] + ("sun" if rnd.random() < 0.25 else ""))
    plain[1:1] = _BAD_ROWS[:3]
    plain += _BAD_ROWS[3:] + _BAND_ROWS
    (tmp / "plain.csv").write_text("\n".join(plain) + "\n", encoding="utf-8")
    out = [(read_inventory(tmp / "plain.csv"), None)]
    for i, (text, lines) in enumerate(by_defaults.items()):
        (tmp / f"d{i}.csv").write_text("\n".join(lines) + "\n", encoding="utf-8")
        (tmp / f"d{i}.toml").write_text(text, encoding="utf-8")
        inv = read_inventory(tmp / f"d{i}.csv")
        out.append((inv, load_defaults(str(tmp / f"d{i}.toml"), inv.columns)))
    return out


def test_every_json_line_is_byte_for_byte_the_line_of_its_results_to_json(seeded_inventories):
    verdicts, on_columns, in_sun, scenarios, tolerances = set(), 0, 0, 0, 0
    for inv, defaults in seeded_inventories:
        dups = {inv.rows[-1][0]: inv.rows[0][0]}
        got = batch.screen_chunk((inv, defaults, dups, {"json": True, "full": None}))
        run = _batch_run(inv, defaults)
        headers = [c.header for c in inv.columns]
        for i, (r, line, _) in enumerate(got):
            expected = _expected_line(run, inv, i, r, headers)
            assert line == json_bytes(expected), f"row {r['row']}"
            verdicts.add(expected["verdict"])
            on_columns += run._plain_at.get(i) in run._plain._where
            in_sun += expected.get("exposure") is not None
            scenarios += len(expected.get("scenarios") or ()) > 1
            tolerances += expected.get("tolerance") is not None
    assert {"input-error", "within", "over"} <= verdicts
    assert on_columns > 80 and in_sun > 10 and scenarios >= 6 and tolerances >= 4


def test_a_column_rows_json_is_its_results_to_json_whichever_is_asked_first(seeded_inventories):
    inv, defaults = seeded_inventories[0]
    run = _batch_run(inv, defaults)
    ps = run._plain
    rows = list(ps._where)
    assert len(rows) > 80
    # the JSON first for every row (the columns listed once per group), then the Result: the same
    first = [ps.full_json(j) for j in rows]
    for j, data in zip(rows, first):
        full = ps.full(j)
        if isinstance(full, Result):
            strict(data, full.to_json())
            assert json_bytes(data) == json_bytes(full.to_json())
        else:
            assert data is None


def test_a_chunk_s_lines_come_back_through_its_spool_file_byte_for_byte(kinds_inventory, tmp_path):
    # the batch's workers write a chunk's JSON lines to a file of the spool folder and send their lengths; the
    # batch's process puts them back in place and removes the file; where no file can be written, the lines stay
    # in the rows
    import os

    inv, defaults = _inventories(kinds_inventory)[1]
    want = {"json": True, "full": None, "compact": True}
    plain = batch.screen_chunk((inv, defaults, {}, want))
    assert all(isinstance(x[batch._LINE], bytes) for x in plain)
    spooled = batch.screen_chunk((inv, defaults, {}, dict(want, spool=str(tmp_path))))
    assert isinstance(spooled, batch.Spooled) and os.listdir(tmp_path) == [os.path.basename(spooled.path)]
    assert [x[batch._LINE] for x in spooled.rows] == [len(x[batch._LINE]) for x in plain]
    rows, lines = batch._unspooled(spooled)
    assert [bytes(line) for line in lines] == [x[batch._LINE] for x in plain]
    assert [(*x[:batch._LINE], *x[batch._LINE + 1:]) for x in rows] == [
        (*x[:batch._LINE], *x[batch._LINE + 1:]) for x in plain]
    assert os.listdir(tmp_path) == []
    assert batch.screen_chunk((inv, defaults, {}, dict(want, spool=str(tmp_path / "gone")))) == plain
    assert batch._unspooled(plain) == (plain, [x[batch._LINE] for x in plain])
    # a file's bytes, mapped or read: an empty file too
    for content in (b"", b'{"a":1}\n' * 3000):
        (tmp_path / "f").write_bytes(content)
        with open(tmp_path / "f", "rb") as fh:
            assert bytes(batch._whole_file(fh)) == content


# ----------------------------------------------------------------------------- records by position, shared parts

@pytest.mark.parametrize("cls", [Result, Fill, Limits, ScenarioSummary, Site, Vessel, Gas])
def test_a_json_record_by_position_lays_out_what_the_record_by_name_does(cls):
    # the fields given in a random order, some of them in a dict (parts): the same keys in the same order and the
    # same values as the record by name (the keys' order is result.py's either way)
    rnd = random.Random(cls.__name__)
    names = [f.name for f in dataclasses.fields(cls) if f.name != "row"]
    by_name = json_record(cls, ("row",) if cls is Result else ())
    for _ in range(20):
        values = {n: rnd.choice([None, rnd.random(), f"text {rnd.random()}", [rnd.random()], {"k": 1}])
                  for n in names}
        order = rnd.sample(names, len(names))
        cut = rnd.randrange(len(order) + 1)
        parts, args = tuple(order[:cut]), tuple(order[cut:])
        by_position = json_record(cls, ("row",) if cls is Result else (), args, parts)
        got = by_position(*(({n: values[n] for n in parts},) if parts else ()), *(values[n] for n in args))
        strict(got, by_name(**values))


def test_a_json_record_by_position_refuses_fields_missing_unknown_or_twice():
    names = tuple(f.name for f in dataclasses.fields(Limits))
    json_record(Limits, (), names)
    for args, parts in ((names[1:], ()), (names + ("colour",), ()), (names, names[:1]), (names[2:], names[:1])):
        with pytest.raises(TypeError):
            json_record(Limits, (), args, parts)


def test_json_bytes_writes_a_shared_part_as_it_is_on_either_writer():
    import orjson

    gas = {"name": "nitrogen", "kind": "permanent", "hazards": ["asphyxiant"], "x": 1e-05}
    record = {"a": 1.5, "gas": orjson.Fragment(orjson.dumps(gas)), "b": [None, "é"]}
    assert json_bytes(record) == orjson.dumps({"a": 1.5, "gas": gas, "b": [None, "é"]})
    # a value orjson does not take: the standard library's writer, the fragment's content in its place
    odd = {**record, "n": np.float64(2.5), "nan": math.nan}
    assert json.loads(json_bytes(odd)) == {"a": 1.5, "gas": gas, "b": [None, "é"], "n": 2.5, "nan": None}
    with pytest.raises(TypeError):
        json_bytes({"n": np.float64(1.0), "x": object()})


@pytest.fixture(scope="module", params=[5, 17, 23])
def random_register(request, tmp_path_factory):
    """A register of seeded random rows of the plain kinds of benchmarks/kinds.py (each kind drawn by its share),
    one row in five in the sun."""
    rnd = random.Random(request.param)
    kinds = [k for k in K.kinds() if len(k) == 5]
    lines = [K.HEADER]
    for i in range(160):
        line, _fill = rnd.choices(kinds, [k[4] for k in kinds])[0][3](rnd, i)
        lines.append(line[:line.rindex(",") + 1] + ("sun" if rnd.random() < 0.2 else ""))
    path = tmp_path_factory.mktemp(f"random{request.param}") / "register.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return read_inventory(path)


def test_the_line_builder_on_random_rows_is_the_results_to_json_and_the_json_modules_parse(random_register):
    # each row's line (laid out from its columns by position, its gas part and references shared, written by
    # orjson) against its full Result's to_json written by the standard library's json: the same parse, key for
    # key and in order; and byte for byte the line orjson writes of that Result's JSON
    inv = random_register
    got = batch.screen_chunk((inv, None, {}, {"json": True, "full": None}))
    run = _batch_run(inv, None)
    headers = [c.header for c in inv.columns]
    on_columns = 0
    for i, (r, line, _) in enumerate(got):
        expected = _expected_line(run, inv, i, r, headers)
        strict(json.loads(line), json.loads(json.dumps(expected, ensure_ascii=False)))
        assert line == json_bytes(expected), f"row {r['row']}"
        on_columns += run._plain_at.get(i) in run._plain._where
    assert on_columns > 120
    # the compact rows with their lines through a spool file give the same lines
    import tempfile

    with tempfile.TemporaryDirectory() as folder:
        spooled = batch.screen_chunk((inv, None, {}, {"json": True, "full": None, "compact": True, "spool": folder}))
        assert isinstance(spooled, batch.Spooled)
        _rows, lines = batch._unspooled(spooled)
        assert [bytes(x) for x in lines] == [line for _, line, _ in got]
