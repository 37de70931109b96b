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

import contextlib
import multiprocessing
import os
from collections import deque
from concurrent.futures import FIRST_COMPLETED, ProcessPoolExecutor, wait
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
    with _in_flight(pending):
        for x in items:
            pending.append(pool.submit(fn, x))
            while len(pending) >= limit:
                yield pending.popleft().result()
        while pending:
            yield pending.popleft().result()


@contextlib.contextmanager
def _in_flight(pending: deque):
    """Around the answers of a pool: a broken pool raised as WorkerLost, the calls not yet answered cancelled."""
    try:
        yield
    except BrokenProcessPool as exc:
        raise WorkerLost(str(exc)) from None
    finally:
        for f in pending:
            f.cancel()


def homes(n: int | None = None) -> list[ProcessPoolExecutor]:
    """`n` (default :func:`workers`) pools of one process each, for :func:`routed` (each a worker that work can be
    sent back to)."""
    return [executor(1) for _ in range(n or workers())]


def routed(pools: list[ProcessPoolExecutor] | None, fn: Callable, items: Iterable, ahead: int = 3) -> Iterator:
    """fn(x) for each (home, weight, x) of `items`, in order, over single-process pools (:func:`homes`).

    An item with a `home` (any hashable key, None for none) goes to the pool that key was first sent to, every time:
    what that process keeps between calls (a mixture's reference state, its caches) is built once. A key met for
    the first time goes to the pool with the least weight of homes so far (then the least work in flight); an item
    without a home goes to the pool with the least weight of unfinished work. At most `ahead` calls are in flight
    per pool, and the answers not yet used are bounded (memory stays bounded). A dead worker raises WorkerLost.
    Without pools, everything runs in this process."""
    if not pools:
        for _home, _weight, x in items:
            yield fn(x)
        return
    n = len(pools)
    home_of: dict = {}
    homed = [0.0] * n                   # weight of the homes given to each pool
    busy: list[dict] = [{} for _ in range(n)]   # per pool: unfinished future -> its weight
    pending: deque = deque()            # every future whose answer is not yet used, in order
    most = 2 * ahead * n
    with _in_flight(pending):
        for home, weight, x in items:
            for b in busy:
                for f in [f for f in b if f.done()]:
                    del b[f]
            if home is not None and home in home_of:
                p = home_of[home]
            elif home is not None:
                p = min(range(n), key=lambda i: (homed[i], sum(busy[i].values()), i))
                home_of[home] = p
                homed[p] += weight
            else:
                p = min(range(n), key=lambda i: (len(busy[i]) >= ahead, sum(busy[i].values()), i))
            while True:
                if pending and pending[0].done():
                    yield pending.popleft().result()
                    continue
                for f in [f for f in busy[p] if f.done()]:
                    del busy[p][f]
                if len(busy[p]) < ahead and len(pending) < most:
                    break
                wait(list(busy[p]) + [pending[0]], return_when=FIRST_COMPLETED)
            f = pools[p].submit(fn, x)
            busy[p][f] = weight
            pending.append(f)
        while pending:
            yield pending.popleft().result()


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
