"""Run a row-wise array function over the machine's cores.

The batch engine's reference-model work is a loop over rows through CoolProp, which holds Python's
lock, so threads do not help. Here the rows are split into contiguous chunks and each chunk runs in a
worker process forked from this one (it inherits the imported modules and the cached fluids, so it
starts at once), and the chunks' column arrays are joined back in row order. The result is the same
as running the function on all rows at once: every row is computed on its own.

Where forking is not available, on one core, or for few rows, everything runs in this process.
"""

from __future__ import annotations

import multiprocessing
import os
from typing import Callable

import numpy as np

#: Below this many rows in all, the work stays in this process (a fork costs a few milliseconds).
MIN_ROWS = 4000
#: Environment variable that caps the number of worker processes ("1": no workers).
WORKERS_ENV = "SCREENING_WORKERS"


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


def _call(args):
    fn, part = args
    return fn(part)


def map_rows(fn: Callable, parts: list, min_rows: int = MIN_ROWS) -> list[dict]:
    """[fn(part) for part in parts], where fn maps rows (with ``take(idx)`` and ``p_fill``) to a dict
    of per-row arrays; large inputs are split across forked workers."""
    total = sum(p.p_fill.size for p in parts)
    n = workers()
    if n < 2 or total < min_rows or "fork" not in multiprocessing.get_all_start_methods():
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
    with multiprocessing.get_context("fork").Pool(n) as pool:
        got = pool.map(_call, [jobs[j] for j in order], chunksize=1)
    results: list[list[dict]] = [[] for _ in parts]
    for j, r in sorted(zip(order, got), key=lambda x: x[0]):
        results[owners[j]].append(r)
    out = []
    for chunks in results:
        if len(chunks) == 1:
            out.append(chunks[0])
        else:
            out.append({k: np.concatenate([c[k] for c in chunks]) for k in chunks[0]})
    return out


def map_items(fn: Callable, items: list, min_items: int = 8) -> list:
    """[fn(x) for x in items] in order, spread over forked workers where there are enough items
    (fn and the items must be picklable: a module-level function and plain data)."""
    n = workers()
    if n < 2 or len(items) < min_items or "fork" not in multiprocessing.get_all_start_methods():
        return [fn(x) for x in items]
    with multiprocessing.get_context("fork").Pool(n) as pool:
        return pool.map(fn, items, chunksize=max(1, len(items) // (4 * n)))
