"""A one-case command loads CoolProp's library lean (no superancillaries) and adds back each fluid it uses
(screening.physics.eos.coolprop_library). What must hold: every fluid the tool uses gives, bit for bit,
the numbers of a fully loaded CoolProp; CoolProp's line about the switch never reaches the command's
output; a fresh `check` prints what the in-process screening gives; nothing changes in a process that
imported CoolProp already.

Check values: CoolProp's `PropsSI` in a separate, fully loaded process (the library as CoolProp loads it
by default), never typed in.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

from screening.physics import gases
from screening.physics.eos import coolprop_library

ROOT = Path(__file__).resolve().parents[1]
CASES = sorted((ROOT / "cases").glob("*.toml"))

#: Every CoolProp fluid the tool can use: the gas library's and the air of the sun's energy balance.
FLUIDS = sorted({g.coolprop_name for g in gases.library().values() if g.coolprop_name} | {"Air"})

#: States read for each fluid: the critical point, saturation at 0.8 Tc (pure fluids), a gas state.
PROBE = r'''
import json, sys
lean = sys.argv[1] == "lean"
if lean:
    from screening.physics.eos import coolprop_library
    assert coolprop_library.load_lean()
import CoolProp.CoolProp as CP
out = {}
for name in json.loads(sys.argv[2]):
    if lean:
        coolprop_library.use([name])
    tc = CP.PropsSI("Tcrit", name)
    row = [tc, CP.PropsSI("pcrit", name), CP.PropsSI("rhomolar_critical", name), CP.PropsSI("Tmin", name)]
    if CP.get_fluid_param_string(name, "pure") == "true":
        t = 0.8 * tc
        row += [CP.PropsSI("P", "T", t, "Q", 0, name), CP.PropsSI("Dmolar", "T", t, "Q", 0, name),
                CP.PropsSI("Dmolar", "T", t, "Q", 1, name)]
    row.append(CP.PropsSI("P", "T", 1.5 * tc, "Dmolar", 0.5 * row[2], name))
    out[name] = [repr(x) for x in row]
print(json.dumps(out))
'''


def _probe(mode: str, env: dict | None = None) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-c", PROBE, mode, json.dumps(FLUIDS)], cwd=ROOT,
                          capture_output=True, text=True, env=env)


def test_every_fluid_added_back_gives_the_fully_loaded_numbers_bit_for_bit():
    full, lean = _probe("full"), _probe("lean")
    assert full.returncode == 0, full.stderr
    assert lean.returncode == 0, lean.stderr
    # CoolProp's own message about the switch is not on the output: the output is the JSON alone
    assert lean.stderr == "" and lean.stdout.count("\n") == 1
    # reference: PropsSI in a fully loaded CoolProp (another process)
    reference, got = json.loads(full.stdout), json.loads(lean.stdout)
    assert set(got) == set(FLUIDS)
    for name in FLUIDS:
        assert got[name] == reference[name], name


def test_a_fluid_not_added_back_would_differ_so_the_switch_matters():
    # The superancillaries are what the lean load leaves out: without them CoolProp's critical density
    # of helium moves (this is why every fluid is added back before its first state).
    env = {**os.environ, coolprop_library.SWITCH: "1"}
    without = subprocess.run([sys.executable, "-c", "import CoolProp.CoolProp as CP; "
                              "print(repr(CP.PropsSI('rhomolar_critical', 'Helium')))"],
                             cwd=ROOT, capture_output=True, text=True, env=env)
    # reference: PropsSI in a fully loaded CoolProp (another process)
    full = json.loads(_probe("full").stdout)["Helium"][2]
    assert without.returncode == 0, without.stderr
    assert without.stdout.strip().splitlines()[-1] != full


@pytest.mark.parametrize("case", CASES, ids=[c.stem for c in CASES])
def test_fresh_check_prints_the_in_process_screening(case):
    from screening.engine import screen_file

    done = subprocess.run([sys.executable, "-m", "screening.cli", "check", str(case), "--json"], cwd=ROOT,
                          capture_output=True, text=True)
    result = screen_file(case).to_json()   # this process: CoolProp loaded whole
    assert done.returncode == (0 if result["verdict"] == "within" else 1), done.stderr
    assert done.stderr == ""
    assert done.stdout == json.dumps(result, indent=2, ensure_ascii=False, allow_nan=False) + "\n"


def test_nothing_changes_where_coolprop_was_imported_already():
    import CoolProp.CoolProp  # noqa: F401  (as the test process, the web page or a batch have it)

    assert coolprop_library.load_lean() is False
    assert coolprop_library.is_lean() is False
    coolprop_library.use(["Nitrogen"])   # nothing to add back: the library is whole
    assert coolprop_library.SWITCH not in os.environ


def test_golden_corpus_of_single_cases_is_unchanged_with_the_lean_library():
    # reference: the golden corpus (tests/golden/), captured with CoolProp loaded whole
    script = ("import runpy, sys\n"
              "from screening.physics.eos import coolprop_library\n"
              "assert coolprop_library.load_lean()\n"
              "sys.argv = ['compare.py', '--no-batch']\n"
              "runpy.run_path('tests/golden/compare.py', run_name='__main__')\n")
    done = subprocess.run([sys.executable, "-c", script], cwd=ROOT, capture_output=True, text=True)
    assert done.returncode == 0, done.stdout[-3000:] + done.stderr[-3000:]
    assert "no differences" in done.stdout


def test_fresh_batch_writes_what_the_batch_writes_with_the_library_whole(tmp_path):
    # reference: the same command in this process, where CoolProp is loaded whole; the fresh command loads it
    # lean and adds back the fluids of the register's first chunk before any work
    from screening.cli import run

    inv = ROOT / "cases" / "inventory.csv"
    fresh, here = tmp_path / "fresh", tmp_path / "here"
    fresh.mkdir(), here.mkdir()
    done = subprocess.run([sys.executable, "-m", "screening.cli", "batch", str(inv), "--csv", str(fresh / "o.csv"),
                           "--jsonl", str(fresh / "o.jsonl"), "--quiet"], cwd=ROOT, capture_output=True, text=True)
    code = run(["batch", str(inv), "--csv", str(here / "o.csv"), "--jsonl", str(here / "o.jsonl"), "--quiet"])
    assert done.returncode == code, done.stderr
    for name in ("o.csv", "o.jsonl"):
        assert (fresh / name).read_bytes() == (here / name).read_bytes(), name
