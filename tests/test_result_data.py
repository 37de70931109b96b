"""Rows folded from several scenarios or tolerance corners held as their JSON data (result.ResultData) until a full
result is asked for: their summaries, laid out from the data, are those of the Results made from it, and those
Results are the ones the engine gives without it.

Consistency checks of one layout against another (no check values): the rows are random draws (inputs), the
screening itself is checked against CoolProp in tests/test_shared_states.py and tests/test_liquefied_tolerance_rows.py."""

from __future__ import annotations

import random
from dataclasses import replace

from helpers import random_scenarios

from screening import batch, engine
from screening.inputs.case import parse_case_text
from screening.inputs.inventory import load_defaults, read_inventory
from screening.result import Result, ResultData, ScreeningWarning, summary_record_of


def _case(i: int, rnd: random.Random) -> str:
    cap = rnd.uniform(10, 60)
    if i % 2:       # a permanent gas by pressure
        fill = (f'gas = "nitrogen"\npressure = "{rnd.uniform(20, 280):.1f} bar(g)"\n'
                f'temperature = "{rnd.uniform(-20, 40):.2f} degC"\n')
        rated = rnd.uniform(150, 450)
    else:           # a liquefied gas by mass
        fill = (f'gas = "propane"\nmass = "{cap * rnd.uniform(0.05, 0.42):.3f} kg"\n'
                f'temperature = "{rnd.uniform(-20, 40):.2f} degC"\n')
        rated = rnd.uniform(15, 40)
    text = (f'id = "D{i}"\n[vessel]\nwater_capacity = "{cap:.2f} L"\nrated_pressure = "{rated:.2f} bar(g)"\n'
            f'[fill]\n{fill}[exposure]\nambient_max = "{rnd.uniform(-30, 60):.2f} degC"\n')
    text += random_scenarios(rnd, [2, 3])
    if rnd.random() < 0.5:
        text += f'[tolerance]\ngas_temperature = "{rnd.uniform(0.5, 8):.2f} K"\n'
        if i % 2:
            text += f'fill_pressure = "{rnd.uniform(0.5, 4):.2f} bar"\n'
    return text


def test_a_folded_row_held_as_data_gives_the_same_summary_and_result():
    rnd = random.Random(20261205)
    cases = [parse_case_text(_case(i, rnd), "<case>") for i in range(60)]
    held = engine.screen_cases(cases, data=True)
    made = engine.screen_cases(cases)
    folded = 0
    for h, m in zip(held, made):
        assert isinstance(m, Result)
        if not isinstance(h, ResultData):       # went per row: a Result either way
            assert h == m
            continue
        folded += 1
        assert h.summary_record() == m.summary_record() == summary_record_of(m.to_json())
        assert h.result() == m and h.result() is h.result()
        assert h.to_json() == m.to_json()
        # with other warnings, as a batch's JSON gives a row whose id is a duplicate
        extra = [*m.to_json()["warnings"], {"code": "duplicate-id", "message": "The id is also used on row 2."}]
        assert h.to_json(extra) == replace(m, warnings=tuple(ScreeningWarning.from_json(w) for w in extra)).to_json()
    assert folded >= 40


def test_a_batch_of_folded_rows_gives_their_full_results_with_their_rows(tmp_path):
    # invented register, every row with the defaults file's tolerances and two scenarios
    lines = ["id,gas,water_capacity [L],rated_pressure [bar(g)],fill_pressure [bar(g)],fill_temperature [degC],"
             "ambient_max [degC]"]
    rnd = random.Random(7)
    for i in range(30):
        lines.append(f"F{i},nitrogen,50,300,{rnd.uniform(20, 250):.1f},{rnd.uniform(-10, 40):.1f},"
                     f"{rnd.uniform(-30, 60):.1f}")
    path = tmp_path / "register.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    defaults = tmp_path / "defaults.toml"
    defaults.write_text('[tolerance]\nfill_pressure = "2 bar"\n\n[[scenario]]\nname = "as listed"\n\n'
                        '[[scenario]]\nname = "closed van"\ngas_temperature = "65 degC"\n', encoding="utf-8")
    d = load_defaults(defaults)
    run = batch.BatchRun(read_inventory(path), d)
    held = sum(isinstance(f, ResultData) for f in run._fulls.values())
    assert held == len(run) == 30
    for i in range(len(run)):
        f = run.full(i)
        assert isinstance(f, Result) and f.row == run.result(i)["row"] == i + 2
        assert dict(f.summary_record(), row=f.row) == run.result(i)
        assert [s.name for s in f.scenarios] == ["as listed", "closed van"] and f.tolerance is not None
