"""The screening gives the answers captured in the golden corpus (tests/golden/), within 1e-9 relative
(2e-9 under `limits`): the same verdicts, reasons, warnings and keys, for every demo case, a few hundred
generated cases and two batch inventories. The corpus was captured from the code before the engine was
rewritten (`python tests/golden/make_golden.py`); `python tests/golden/compare.py --report` prints the
differences as markdown. A result changed on purpose is regenerated in the same commit that changes it,
and the commit message says which answers moved and why.
"""

from __future__ import annotations

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent / "golden"))

import compare as golden  # noqa: E402
import make_golden as mg  # noqa: E402


def test_every_single_case_gives_its_golden_answer():
    diffs, n = golden.compare(batch=False)
    assert n == len(mg.load(mg.CASES_FILE)["entries"]) > 300
    assert not diffs, golden.plain(diffs, n)


def test_batch_json_and_csv_give_their_golden_answers():
    old = mg.load(mg.BATCH_FILE)
    diffs = golden.diff_batch(old, mg.run_batch_corpus(stored=old))
    assert not diffs, golden.plain(diffs, 2)


# --- the comparer itself finds what it is meant to find -------------------------------------------

def _result(**over):
    r = {"tool_version": "0.1.0", "verdict": "within", "reasons": ["a"], "warnings": [],
         "peak_pressure_pa": 2.0e7, "limits": {"max_fill_pressure_pa": 1.0e7}, "curves": {"t": [1.0, 2.0]}}
    r.update(over)
    return r


def test_the_comparer_ignores_the_tool_version_and_moves_within_tolerance():
    old = _result()
    new = _result(tool_version="9.9", peak_pressure_pa=2.0e7 * (1 + 0.9e-9),
                  limits={"max_fill_pressure_pa": 1.0e7 * (1 + 1.9e-9)})
    assert golden.diff_values(old, new, "x") == []


def test_the_comparer_lists_verdicts_reasons_keys_and_numbers_beyond_tolerance():
    old = _result()
    new = _result(verdict="over", reasons=["b"], warnings=["w"], peak_pressure_pa=2.0e7 * (1 + 1.1e-9),
                  limits={"max_fill_pressure_pa": 1.0e7 * (1 + 2.1e-9), "extra": 1}, curves={"t": [1.0]})
    del new["tool_version"]
    kinds = {(d.kind, d.path) for d in golden.diff_values(old, new, "x")}
    assert kinds == {("verdict", "verdict"), ("reasons", "reasons"), ("warnings", "warnings"),
                     ("number moved", "peak_pressure_pa"), ("number moved", "limits.max_fill_pressure_pa"),
                     ("key added", "limits.extra"), ("value changed", "curves.t (length)")}
    gone = _result()
    del gone["curves"]
    assert [(d.kind, d.path) for d in golden.diff_values(old, gone, "x")] == [("key removed", "curves")]


def test_the_comparer_reports_changed_csv_cells_by_row_and_column():
    old = "row,id,verdict,margin\n2,A,within,16.7 %\n"
    new = "row,id,verdict,margin\n2,A,over,-1.0 %\n"
    got = [(d.kind, d.path) for d in golden.diff_csv(old, new, "x")]
    assert got == [("verdict", "row 2 (A), column 'verdict'"), ("value changed", "row 2 (A), column 'margin'")]
