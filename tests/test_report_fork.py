"""The report commands screen the case in a worker process (concurrent.futures) while the parent
imports the report layer.

What must hold: the worker path and the in-process path give the same result (types included), the
same JSON and the same PDF bytes; an input error found in the worker is the usual one line and exit
code 2; a worker that dies or cannot be started or handed the case, or a platform without fork, leaves
the screening to the parent; every worker started is reaped; an unreadable case starts none; `check`
without a PDF and `gases` import nothing of the report layer.
Check values come from real screenings of the demo cases in this process, never typed in.
"""

from __future__ import annotations

import datetime as dt
import json
import multiprocessing.process
import multiprocessing.reduction
import os
import pickle
import subprocess
import sys
from pathlib import Path

import pytest

from screening import cli
from screening.engine import screen_file
from screening.errors import InputError
from screening.outputs.report import render_pdf_bytes, result_json
from screening.result import Result

ROOT = Path(__file__).resolve().parents[1]
CASES = sorted((ROOT / "cases").glob("*.toml"))
DATE = dt.date(2026, 12, 1)
FORK = pytest.mark.skipif(not hasattr(os, "fork"), reason="os.fork is not available on this platform")

BAD_CASE = '''id = "T-BAD"
[vessel]
water_capacity = "fifty L"
rated_pressure = "300 bar(g)"
[fill]
gas = "nitrogen"
pressure = "200 bar(g)"
temperature = "15 degC"
[exposure]
gas_temperature = "65 degC"
'''


def _same_types(a, b, where: str = "result") -> None:
    """Equal values of equal types all the way down (a list stays a list, an int stays an int)."""
    if isinstance(a, Result) or isinstance(b, Result):   # a typed result: compared as its JSON object
        assert isinstance(b, Result), f"{where}: {type(b).__name__} is not a Result"
        a, b = (x.to_json() if isinstance(x, Result) else x for x in (a, b))
    assert type(a) is type(b), f"{where}: {type(a).__name__} != {type(b).__name__}"
    if isinstance(a, dict):
        assert list(a) == list(b), f"{where}: keys or key order differ"
        for k in a:
            _same_types(a[k], b[k], f"{where}.{k}")
    elif isinstance(a, list):
        assert len(a) == len(b), f"{where}: lengths differ"
        for i, (x, y) in enumerate(zip(a, b)):
            _same_types(x, y, f"{where}[{i}]")
    elif isinstance(a, float) and a != a:
        assert b != b, f"{where}: NaN became {b!r}"
    else:
        assert a == b, f"{where}: {a!r} != {b!r}"


def _cli(*args: str, cwd: Path) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "screening.cli", *args], cwd=cwd, capture_output=True, text=True)


@FORK
@pytest.mark.parametrize("case", CASES, ids=[c.stem for c in CASES])
def test_forked_screening_returns_the_in_process_result_and_case_text(case):
    result, text = cli._screened_for_pdf(str(case), fork=True)
    here = screen_file(case)
    _same_types(result, here)
    assert result_json(result) == result_json(here)
    assert text == case.read_bytes().decode("utf-8-sig")


@FORK
@pytest.mark.parametrize("stem", ["kq-n2-014", "kq-c3h8-009"])
def test_forked_and_in_process_reports_are_byte_identical(stem):
    case = ROOT / "cases" / f"{stem}.toml"
    forked, forked_text = cli._screened_for_pdf(str(case), fork=True)
    here, here_text = cli._screened_for_pdf(str(case), fork=False)
    assert render_pdf_bytes(forked, forked_text, report_date=DATE) == render_pdf_bytes(here, here_text,
                                                                                      report_date=DATE)


@FORK
def test_report_command_from_a_fresh_process_writes_the_in_process_bytes(tmp_path):
    # A fresh process has not loaded the screening core, so the command takes the forked path.
    case = ROOT / "cases" / "kq-n2-014.toml"
    out = tmp_path / "n2.pdf"
    done = _cli("report", str(case), "-o", str(out), "--date", DATE.isoformat(), cwd=tmp_path)
    result = screen_file(case)
    assert done.returncode == (0 if result.verdict == "within" else 1), done.stderr
    assert done.stdout == f"report written: {out}\n" and done.stderr == ""
    assert out.read_bytes() == render_pdf_bytes(result, case.read_text(encoding="utf-8"), report_date=DATE)
    assert [p.name for p in tmp_path.iterdir()] == ["n2.pdf"]  # no temporary file left beside it


@FORK
def test_check_json_with_pdf_from_a_fresh_process_prints_and_writes_what_the_in_process_path_does(tmp_path):
    case = ROOT / "cases" / "kq-c3h8-009.toml"
    out = tmp_path / "c3h8.pdf"
    done = _cli("check", str(case), "--json", "--pdf", str(out), "--date", DATE.isoformat(), cwd=tmp_path)
    result = screen_file(case)
    assert done.returncode == (0 if result.verdict == "within" else 1), done.stderr
    assert done.stdout == json.dumps(result.to_json(), indent=2, ensure_ascii=False, allow_nan=False) + "\n"
    assert done.stderr == f"report written: {out}\n"
    assert out.read_bytes() == render_pdf_bytes(result, case.read_text(encoding="utf-8"), report_date=DATE)


def _overfilled(tmp_path: Path) -> Path:
    """The propane demo case with more propane than the vessel can hold even as liquid at the triple
    point: the case reads cleanly, and the screening itself finds the input error."""
    text = (ROOT / "cases" / "kq-c3h8-009.toml").read_text(encoding="utf-8")
    assert 'mass = "10.9 kg"' in text
    path = tmp_path / "overfilled.toml"
    path.write_text(text.replace('mass = "10.9 kg"', 'mass = "20 kg"'), encoding="utf-8")
    return path


def _children_made(monkeypatch) -> list[int]:
    """The pids of the worker processes started from now on (any process this test process starts)."""
    made: list[int] = []
    real_start = multiprocessing.process.BaseProcess.start

    def start(self):
        real_start(self)
        made.append(self.pid)

    monkeypatch.setattr(multiprocessing.process.BaseProcess, "start", start)
    return made


def _exit_at_once(case):
    os._exit(1)


def _open_fds() -> set[str] | None:
    """This process's open file descriptors, where the system lists them (Linux)."""
    try:
        return set(os.listdir("/proc/self/fd"))
    except OSError:
        return None


def _reaped(pid: int) -> bool:
    try:
        os.waitpid(pid, os.WNOHANG)
    except ChildProcessError:
        return True
    return False


@FORK
def test_input_error_found_by_the_forked_child_is_the_in_process_message(tmp_path, monkeypatch):
    path = _overfilled(tmp_path)
    with pytest.raises(InputError) as here:
        cli._screened_for_pdf(str(path), fork=False)
    assert "fill.mass" in str(here.value)
    made = _children_made(monkeypatch)
    with pytest.raises(InputError) as forked:
        cli._screened_for_pdf(str(path), fork=True)
    assert str(forked.value) == str(here.value)
    assert len(made) == 1 and _reaped(made[0])


@FORK
def test_input_error_in_a_fresh_report_command_is_one_line_and_exit_2(tmp_path, capsys):
    path = _overfilled(tmp_path)
    out = tmp_path / "overfilled.pdf"
    # The message of the in-process path (this test process has the core loaded: no fork by default).
    with pytest.raises(SystemExit) as exc:
        cli.main(["report", str(path), "-o", str(out)])
    assert exc.value.code == 2
    expected = capsys.readouterr().err
    assert expected.startswith("screening: input error: ") and "fill.mass" in expected

    done = _cli("report", str(path), "-o", str(out), cwd=tmp_path)
    assert done.returncode == 2
    assert done.stderr == expected and done.stdout == ""
    assert "Traceback" not in done.stderr and len(done.stderr.splitlines()) == 1
    assert not out.exists()


@FORK
def test_unreadable_case_is_reported_by_the_parent_before_any_worker_starts(tmp_path, monkeypatch):
    made = _children_made(monkeypatch)
    bad = tmp_path / "bad.toml"
    bad.write_text(BAD_CASE, encoding="utf-8")
    for path in (bad, tmp_path / "nope.toml"):
        with pytest.raises(InputError) as forked:
            cli._screened_for_pdf(str(path), fork=True)
        with pytest.raises(InputError) as here:
            cli._screened_for_pdf(str(path), fork=False)
        assert str(forked.value) == str(here.value)
    assert "vessel.water_capacity" in str(forked.value) or "case file not found" in str(forked.value)
    assert made == []


@FORK
def test_a_fresh_command_with_an_unreadable_case_is_one_line_and_exit_2(tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text(BAD_CASE, encoding="utf-8")
    done = _cli("report", str(bad), "-o", str(tmp_path / "bad.pdf"), cwd=tmp_path)
    assert done.returncode == 2 and done.stdout == ""
    assert done.stderr.startswith("screening: input error: ") and "vessel.water_capacity" in done.stderr
    assert "Traceback" not in done.stderr and len(done.stderr.splitlines()) == 1
    assert [p.name for p in tmp_path.iterdir()] == ["bad.toml"]


@FORK
def test_a_child_that_gives_no_answer_leaves_the_screening_to_the_parent(monkeypatch):
    case = ROOT / "cases" / "kq-n2-014.toml"
    monkeypatch.setattr(cli, "_screen_in_worker", _exit_at_once)
    made = _children_made(monkeypatch)
    result, _ = cli._screened_for_pdf(str(case), fork=True)
    _same_types(result, screen_file(case))
    assert len(made) == 1 and _reaped(made[0])


def test_without_fork_the_case_is_screened_in_process(monkeypatch):
    case = ROOT / "cases" / "kq-n2-014.toml"
    monkeypatch.delattr(os, "fork", raising=False)
    assert not cli._worker_helps()
    result, text = cli._screened_for_pdf(str(case))
    _same_types(result, screen_file(case))
    assert text == case.read_text(encoding="utf-8")


@FORK
def test_a_failed_fork_leaves_the_screening_to_the_parent(monkeypatch):
    case = ROOT / "cases" / "kq-n2-014.toml"

    def no_more_processes():
        raise BlockingIOError(11, "Resource temporarily unavailable")

    monkeypatch.setattr(os, "fork", no_more_processes)
    fds = _open_fds()
    result, _ = cli._screened_for_pdf(str(case), fork=True)
    _same_types(result, screen_file(case))
    # The pool's own pipes are closed again. The standard library's fork start method opens two pipes
    # (four descriptors) just before os.fork and does not close them when the fork fails
    # (multiprocessing/popen_fork.py, Popen._launch in Python 3.11); nothing else may stay open.
    if fds is not None:
        assert len(_open_fds() - fds) <= 4


@FORK
def test_a_case_that_cannot_be_handed_to_the_child_is_screened_by_the_parent(monkeypatch):
    case = ROOT / "cases" / "kq-n2-014.toml"
    real_dumps = multiprocessing.reduction.ForkingPickler.dumps

    def refuse(obj, protocol=None):
        if obj is not None:  # the call with its case; the pool's own stop signal (None) still goes through
            raise TypeError("cannot pickle this")
        return real_dumps(obj, protocol)

    monkeypatch.setattr(multiprocessing.reduction.ForkingPickler, "dumps", staticmethod(refuse))
    made = _children_made(monkeypatch)
    fds = _open_fds()
    result, _ = cli._screened_for_pdf(str(case), fork=True)
    _same_types(result, screen_file(case))
    assert len(made) == 1 and _reaped(made[0])
    assert _open_fds() == fds


def test_a_fresh_command_forks_and_a_long_lived_caller_does_not(monkeypatch):
    # This test process has loaded the screening core already: forking would only add work.
    assert "screening.engine" in sys.modules and not cli._worker_helps()
    if hasattr(os, "fork"):
        monkeypatch.delitem(sys.modules, "screening.engine")
        assert cli._worker_helps()


def test_the_child_screens_a_read_case_without_the_unit_registry():
    # The parent reads the case (units through pint); the child that screens it needs no pint at all.
    case = ROOT / "cases" / "kq-n2-014.toml"
    from screening.inputs.case import load_case

    code = ("import pickle, sys, json\n"
            "import screening.engine as s\n"
            "assert 'pint' not in sys.modules\n"
            "result = s.screen_case(pickle.loads(sys.stdin.buffer.read()))\n"
            "assert 'pint' not in sys.modules, 'the screening built the unit registry'\n"
            "import screening.units as u\n"
            "assert type(u.ureg).__name__ == '_RegistryOnFirstUse'\n"
            "assert u.parse('50 L', 'volume').si() > 0 and type(u.ureg).__name__ == 'UnitRegistry'\n"
            "sys.stdout.write(json.dumps(result.to_json()))\n")
    done = subprocess.run([sys.executable, "-c", code], input=pickle.dumps(load_case(case)), cwd=ROOT,
                          capture_output=True)
    assert done.returncode == 0, done.stderr.decode()
    _same_types(json.loads(done.stdout), screen_file(case))


def test_each_command_imports_only_what_it_needs():
    # `gases` needs no screening core but CoolProp's table of fitted mixture pairs (which mixtures have a
    # reference model); `check` without --pdf no report layer.
    code = ("import contextlib, io, sys\n"
            "from screening import cli\n"
            "heavy = ('CoolProp', 'scipy', 'weasyprint', 'matplotlib', 'jinja2', 'pint')\n"
            "loaded = lambda: sorted({m.split('.')[0] for m in sys.modules} & set(heavy))\n"
            "with contextlib.redirect_stdout(io.StringIO()):\n"
            "    cli.run(['gases'])\n"
            "print(loaded())\n"
            "with contextlib.redirect_stdout(io.StringIO()):\n"
            "    cli.run(['check', 'cases/kq-n2-014.toml'])\n"
            "print(loaded())\n")
    done = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    after_gases, after_check = done.stdout.splitlines()
    assert after_gases == "['CoolProp']"
    assert after_check == "['CoolProp', 'pint', 'scipy']"
