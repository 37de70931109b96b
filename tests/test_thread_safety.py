"""Screening from several threads at once gives exactly the answers of one thread: the reference model's
CoolProp states are shared by every thread of a process (one per fluid), so each evaluation must hold its
fluid for itself. The thread switch interval is made tiny so that threads interleave between CoolProp
calls as often as they can."""

from __future__ import annotations

import json
import sys
import threading
from pathlib import Path

from screening.engine import screen_text

sys.path.insert(0, str(Path(__file__).resolve().parent / "golden"))
import make_golden as mg  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
THREADS = 8


def _cases() -> list[tuple[str, str]]:
    """Demo nitrogen cases and generated pure-gas cases of several kinds (the golden corpus's texts)."""
    texts = [(p.name, p.read_text(encoding="utf-8")) for p in sorted((ROOT / "cases").glob("kq-n2-*.toml"))]
    wanted = ("-perm", "-quantum", "-partly", "-mass", "-lqp", "-dense")
    corpus = [(e["name"], e["text"]) for e in mg.load(mg.CASES_FILE)["entries"] if "text" in e and "result" in e]
    for kind in wanted:
        texts += [c for c in corpus if c[0].endswith(kind)][:3]
    return texts


def _answer(name: str, text: str) -> str:
    return json.dumps(screen_text(text, source=name).to_json(), sort_keys=True, allow_nan=False)


def test_eight_threads_screening_at_once_give_the_sequential_answers():
    cases = _cases()
    sequential = {name: _answer(name, text) for name, text in cases}
    got: dict[int, dict[str, str]] = {i: {} for i in range(THREADS)}
    errors: list[BaseException] = []
    start = threading.Barrier(THREADS)

    def work(i: int) -> None:
        try:
            start.wait()
            order = cases[i:] + cases[:i]  # every thread in another order: different fluids at once
            for name, text in order:
                got[i][name] = _answer(name, text)
        except BaseException as exc:  # pragma: no cover - reported below
            errors.append(exc)

    old = sys.getswitchinterval()
    sys.setswitchinterval(1e-6)
    try:
        threads = [threading.Thread(target=work, args=(i,)) for i in range(THREADS)]
        for t in threads:
            t.start()
        for t in threads:
            t.join()
    finally:
        sys.setswitchinterval(old)
    assert not errors, errors
    differing = sorted({name for i in got for name in got[i] if got[i][name] != sequential[name]})
    assert differing == [], f"results differ from the sequential ones for {differing}"
    assert all(len(got[i]) == len(cases) for i in got)
