"""A batch chunk's verdicts kept in the columns as tuples of texts and numbers (engine._verdict_columns): the same
verdicts back, and nothing a row keeps that the garbage collector must trace; the chunk's worst rows kept as
heapq.nsmallest picks them (batch._compact)."""

from __future__ import annotations

import heapq
import math
import random

import numpy as np

from screening import batch, engine
from screening.inputs.columns import read_plain
from screening.inputs.inventory import read_inventory
from screening.result import ScreeningWarning

ATOMIC = (str, float, int, bool, type(None))


def _random_verdict(rng: random.Random) -> dict:
    words = ["within", "low-margin", "over", "out-of-scope"]
    warnings = [{"code": rng.choice(["fill-state-governs", "models-disagree", "near-dome"]),
                 "message": f"sentence {rng.random():.3f}"} for _ in range(rng.randrange(3))]
    return {"verdict": rng.choice(words), "reasons": [f"reason {rng.random()}" for _ in range(rng.randrange(3))],
            "warnings": warnings, "margin_fraction": rng.choice([None, rng.uniform(-1, 1)]),
            "relief_margin_fraction": rng.choice([None, rng.uniform(-1, 1)]),
            "governing_model": rng.choice([None, "reference", "generalized"]),
            "peak_pressure_pa": rng.choice([None, rng.uniform(1e5, 1e8)]),
            "applicable": rng.choice(list(engine._APPLICABLE.values()) + [[]])}


def test_verdicts_come_back_as_given():
    rng = random.Random(5)
    given = {k: _random_verdict(rng) for k in rng.sample(range(300), 200)}
    cols: dict = {}
    engine._verdict_columns(cols, 300, given.items())
    for k in range(300):
        if k not in given:
            assert cols["verdict"][k] is None
            continue
        v, back = given[k], engine._verdict_of(cols, k)
        assert list(back) == list(v)             # the same fields in the same order
        for key in v:
            if key in ("reasons", "warnings", "applicable"):      # sequences: kept as tuples, the layouts copy them
                assert list(back[key]) == list(v[key]), key
            else:
                assert back[key] == v[key], key
        # every warning is a code and its sentence (result.ScreeningWarning), as the JSON lays it out
        assert [ScreeningWarning.json_layout(w) for w in back["warnings"]] == [
            ScreeningWarning.json_layout(w) for w in v["warnings"]]


def _register(tmp_path, header: str, row, count: int, seed: int):
    """An invented register read back: the header, then row(i, rng) for i in range(count), one random source."""
    rng = random.Random(seed)
    path = tmp_path / "register.csv"
    path.write_text("\n".join([header] + [row(i, rng) for i in range(count)]) + "\n", encoding="utf-8")
    return read_inventory(path)


def _atomic_tuple(x) -> bool:
    return type(x) is tuple and all(isinstance(e, ATOMIC) or (type(e) is tuple and all(
        isinstance(f, ATOMIC) for f in e)) for e in x)


def test_a_chunks_rows_keep_no_containers_of_their_own(tmp_path):
    # invented register: rows filled by pressure and by mass, some whose fill state governs (a warning each)
    def row(i: int, rng: random.Random) -> str:
        if i % 2:
            return f"V{i},nitrogen,50,300,{rng.uniform(20, 200):.1f},,{rng.uniform(-10, 40):.1f},{rng.uniform(-30, 60):.1f}"
        return f"V{i},propane,26,25,,{rng.uniform(1, 10):.2f},{rng.uniform(0, 30):.1f},{rng.uniform(-20, 50):.1f}"

    inv = _register(tmp_path, "id,gas,water_capacity [L],rated_pressure [bar(g)],fill_pressure [bar(g)],"
                    "fill_mass [kg],fill_temperature [degC],ambient_max [degC]", row, 60, 9)
    screened = engine.PlainScreening(read_plain(inv, None))
    groups = {id(c): c for c in screened._group.values()}
    assert len(groups) == 2
    warned = 0
    for cols in groups.values():
        for key in ("verdict", "verdict_reasons", "verdict_warnings"):
            kept = [x for x in cols[key].tolist() if x is not None]
            assert kept and all(_atomic_tuple(x) for x in kept), key
        warned += sum(1 for x in cols["verdict_warnings"].tolist() if x)
    assert warned > 0
    # the summaries laid out from them are those the rows' full results give
    for j in range(len(inv.rows)):
        s = screened.summary(j)
        assert s == screened.summary(j) and s is not screened.summary(j)
        full = screened.full(j).summary_record()
        assert {k: s[k] for k in ("verdict", "reasons", "warnings", "margin_fraction", "governing_model")} == {
            k: full[k] for k in ("verdict", "reasons", "warnings", "margin_fraction", "governing_model")}
    run = batch.BatchRun(inv)
    assert [run.result(i) for i in range(len(run))] == run.results


def test_the_chunks_worst_rows_are_heapq_nsmallest():
    rng = random.Random(3)
    rows = []
    for i in range(3000):
        margin = rng.choice([None, rng.uniform(-0.5, 0.9)])
        rows.append({"row": i + 2, "verdict": rng.choice(["within", "low-margin", "over", "input-error"]),
                     "margin_fraction": margin})
    keys = []

    def summary(r, line, short, units=None):
        key = (-batch.ORDER.index(r["verdict"]) if r["verdict"] in batch.ORDER else 0,
               r["margin_fraction"] if r["margin_fraction"] is not None else -math.inf, r["row"])
        keys.append(key)
        return (*key, r["verdict"], False, None, line, short)

    real = batch._row_summary
    batch._row_summary = summary
    try:
        out = batch._compact(iter([(r, None, None) for r in rows]))
    finally:
        batch._row_summary = real
    kept = {i for i, x in enumerate(out) if x[batch._SHORT] is not None}
    assert kept == set(heapq.nsmallest(batch.TERMINAL_ROWS, range(len(rows)), key=keys.__getitem__))
    assert all(out[i][batch._SHORT] is rows[i] for i in kept)
    assert np.all([x[batch._SHORT] is None for i, x in enumerate(out) if i not in kept])


def test_a_row_laid_out_from_its_fields_is_the_row_laid_out_from_its_summary(tmp_path):
    # invented register: nitrogen by pressure and propane by mass, margins on both sides of the required one, rows
    # over their rating, rows in the sun (laid out from their summaries) and rows with a relief valve
    def row(i: int, rng: random.Random) -> str:
        relief = f"{rng.uniform(150, 320):.0f}" if i % 7 == 0 else ""
        solar = "sun" if i % 13 == 0 else ""
        if i % 3:
            return (f"V{i},nitrogen,50,{rng.uniform(150, 320):.0f},{relief},{rng.uniform(20, 260):.1f},,"
                    f"{rng.uniform(-10, 40):.1f},{rng.uniform(-30, 60):.1f},{solar}")
        return (f"V{i},propane,26,25,,,{rng.uniform(1, 12):.2f},{rng.uniform(0, 30):.1f},"
                f"{rng.uniform(-20, 60):.1f},{solar}")

    run = batch.BatchRun(_register(tmp_path, "id,gas,water_capacity [L],rated_pressure [bar(g)],"
                                   "relief_set_pressure [bar(g)],fill_pressure [bar(g)],fill_mass [kg],"
                                   "fill_temperature [degC],ambient_max [degC],solar", row, 80, 11))
    lean = 0
    verdicts = set()
    for i in range(len(run)):
        fields = run.fields(i)
        r = run.result(i)
        verdicts.add(r["verdict"])
        if fields is None:      # a row in the sun (or not on the columns): laid out from its summary alone
            continue
        lean += 1
        units: dict = {}
        assert batch._lean_summary(fields, r, units) == batch._row_summary(r, None, r)
        assert batch._lean_summary(fields, None) == batch._row_summary(r, None, None)
        # in other units than the row's own, as a file whose first row was entered so lays it out
        pu, tu = ("psig", "degF")
        assert batch.result_cells(
            fields[1], " ".join(fields[5]), " ".join(fields[6][1::2]), fields[7], fields[4], fields[3], fields[2],
            fields[8], fields[9], pu, tu) == batch.result_values(r, pu, tu)
    assert lean >= 60 and {"within", "low-margin", "over"} <= verdicts
