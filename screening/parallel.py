"""Work spread over the machine's cores, through ``concurrent.futures`` only.

The screening's reference-model work is a loop over rows through CoolProp, which holds Python's lock,
so threads do not help: the work goes to a :class:`~concurrent.futures.ProcessPoolExecutor` (forked
workers where the platform forks, so that they start with this process's modules loaded). Every call
is a module-level function of picklable data, and its answer comes back pickled, so a result is the
same whichever process computed it. A worker that dies (killed by the system, out of memory) makes
the pool broken: that is raised as :class:`WorkerLost`, with a message saying so, never a wait.

Where there is one core, or few items, everything runs in this process.
"""

from __future__ import annotations

import multiprocessing
import os
from collections import deque
from concurrent.futures import ProcessPoolExecutor
from concurrent.futures.process import BrokenProcessPool
from typing import Callable, Iterable, Iterator

import numpy as np

#: Below this many rows in all, the work stays in this process (a worker costs a few milliseconds).
MIN_ROWS = 4000
#: Environment variable that caps the number of worker processes ("1": no workers).
WORKERS_ENV = "SCREENING_WORKERS"


class WorkerLost(RuntimeError):
    """A worker process ended without answering (killed by the system, e.g. when memory ran out)."""

    def __init__(self, detail: str = "") -> None:
        self.detail = detail
        super().__init__("a worker process stopped before it finished its part of the work"
                         + (f" ({detail})" if detail else "") + "; it may have been stopped by the system "
                         "for lack of memory. Nothing was written; try again with fewer workers "
                         f"({WORKERS_ENV}=1) or a smaller file")

    def __reduce__(self):
        return (WorkerLost, (self.detail,))


def workers() -> int:
    """How many processes to use: the cores this process may run on, capped by SCREENING_WORKERS."""
    try:
        n = len(os.sched_getaffinity(0))
    except AttributeError:
        n = os.cpu_count() or 1
    cap = os.environ.get(WORKERS_ENV, "").strip()
    if cap.isdigit() and int(cap) >= 1:
        n = min(n, int(cap))
    return max(1, n)


def _one_process() -> None:
    """In a worker: its own calls into this module stay in it (no pool inside a pool)."""
    os.environ[WORKERS_ENV] = "1"


def executor(n: int | None = None) -> ProcessPoolExecutor:
    """A pool of `n` (default :func:`workers`) processes, forked where the platform forks."""
    methods = multiprocessing.get_all_start_methods()
    ctx = multiprocessing.get_context("fork" if "fork" in methods else None)
    return ProcessPoolExecutor(max_workers=n or workers(), mp_context=ctx, initializer=_one_process)


def ordered(pool: ProcessPoolExecutor | None, fn: Callable, items: Iterable, ahead: int = 2) -> Iterator:
    """fn(x) for each x of `items`, in order; with a pool, at most ``ahead`` calls per worker in flight
    (the items are read only as fast as the answers are used, so memory stays bounded). A dead worker
    raises WorkerLost."""
    if pool is None:
        for x in items:
            yield fn(x)
        return
    limit = max(1, ahead * pool._max_workers)
    pending: deque = deque()
    try:
        for x in items:
            pending.append(pool.submit(fn, x))
            while len(pending) >= limit:
                yield pending.popleft().result()
        while pending:
            yield pending.popleft().result()
    except BrokenProcessPool as exc:
        raise WorkerLost(str(exc)) from None
    finally:
        for f in pending:
            f.cancel()


def map_items(fn: Callable, items: list, min_items: int = 8) -> list:
    """[fn(x) for x in items] in order, spread over worker processes where there are enough items
    (fn and the items must be picklable: a module-level function and plain data)."""
    n = workers()
    if n < 2 or len(items) < min_items:
        return [fn(x) for x in items]
    with executor(n) as pool:
        return list(ordered(pool, fn, items, ahead=len(items)))


def _call(args):
    fn, part = args
    return fn(part)


def map_rows(fn: Callable, parts: list, min_rows: int = MIN_ROWS) -> list[dict]:
    """[fn(part) for part in parts], where fn maps rows (with ``take(idx)`` and ``p_fill``) to a dict
    of per-row arrays; large inputs are split in contiguous chunks across worker processes and the
    chunks' arrays joined back in row order (every row is computed on its own, so the result is the
    same as in one process); a value that is not an array (the kind of columns) is the same in every chunk."""
    total = sum(p.p_fill.size for p in parts)
    n = workers()
    if n < 2 or total < min_rows:
        return [fn(p) for p in parts]
    jobs, owners = [], []
    for i, p in enumerate(parts):
        size = p.p_fill.size
        k = max(1, min(n, round(n * size / total))) if size >= 2 * n else 1
        for idx in np.array_split(np.arange(size), k):
            jobs.append((fn, p.take(idx)))
            owners.append(i)
    # largest chunks first, so that the workers finish together
    order = sorted(range(len(jobs)), key=lambda j: -jobs[j][1].p_fill.size)
    with executor(n) as pool:
        got = list(ordered(pool, _call, [jobs[j] for j in order], ahead=len(jobs)))
    results: list[list[dict]] = [[] for _ in parts]
    for j, r in sorted(zip(order, got), key=lambda x: x[0]):
        results[owners[j]].append(r)
    out = []
    for chunks in results:
        if len(chunks) == 1:
            out.append(chunks[0])
        else:
            out.append({k: np.concatenate([c[k] for c in chunks]) if isinstance(v, np.ndarray) else v
                        for k, v in chunks[0].items()})
    return out
