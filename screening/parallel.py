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
    same as in one process)."""
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
            out.append({k: np.concatenate([c[k] for c in chunks]) for k in chunks[0]})
    return out


# ----------------------------------------------------------------------------- the report fork
# Kept only while the single report's fork still uses it; to be deleted with its last use.
import pickle  # noqa: E402


class StandbyGone(RuntimeError):
    """The standby process gave no answer (it died, or could not be reached); do the work here."""


class Standby:
    """A child process forked now that imports `modules` at once, beside this process's own work, and
    later runs the one call it is sent, ``fn(*args)``, and sends back the value (both pickled: `fn`
    must be a module-level function, the arguments and the value plain data). The call may be sent at
    once (`send`, then `answer` when the value is needed) or when it is known (`call`).

    Messages are length-prefixed, so neither side waits for an end of file that a process forked in
    between (a pool worker) could hold back. An exception raised by the call is raised again here;
    a child that dies or answers nothing raises StandbyGone, and the caller then does the work itself.
    """

    def __init__(self, modules: tuple[str, ...]) -> None:
        import sys

        sys.stdout.flush()
        sys.stderr.flush()
        to_child, self._to_child = os.pipe()
        self._from_child, from_child = os.pipe()
        try:
            self.pid = os.fork()
        except OSError:
            for fd in (to_child, self._to_child, self._from_child, from_child):
                os.close(fd)
            raise
        if self.pid == 0:
            os.close(self._to_child)
            os.close(self._from_child)
            self._serve(modules, to_child, from_child)  # does not return
        os.close(to_child)
        os.close(from_child)

    @staticmethod
    def _serve(modules, read_fd: int, write_fd: int) -> None:
        import importlib
        import sys

        status = 1
        try:
            for name in modules:  # a head start only: a failing import is left for the call to raise
                try:
                    importlib.import_module(name)
                except Exception:
                    pass
            data = _read_message(read_fd)
            if data is None:    # nothing to do after all
                status = 0
                return
            fn, args = pickle.loads(data)
            try:
                reply = ("value", fn(*args))
            except Exception as exc:
                reply = ("error", exc)
            try:
                out = pickle.dumps(reply, protocol=pickle.HIGHEST_PROTOCOL)
            except Exception as exc:  # an answer that does not pickle: the caller does the work itself
                out = pickle.dumps(("gone", f"the answer cannot be handed back: {exc}"))
            _write_message(write_fd, out)
            status = 0
        except BaseException:  # whatever happens, the child must not go on to run the parent's code
            pass
        finally:
            try:
                sys.stdout.flush()
                sys.stderr.flush()
            finally:
                os._exit(status)

    def send(self, fn: Callable, *args) -> None:
        """Hand the call to the child (it starts at once); StandbyGone if it cannot be handed over."""
        try:
            payload = pickle.dumps((fn, args), protocol=pickle.HIGHEST_PROTOCOL)
            _write_message(self._to_child, payload)
        except Exception as exc:  # a call that cannot be handed over is done here
            self.close()
            raise StandbyGone(f"the call cannot be handed over: {exc}") from exc

    def answer(self):
        """The value of the call sent; its exception raised here; StandbyGone if it gives no answer."""
        try:
            data = _read_message(self._from_child)
            if data is not None:
                os.waitpid(self.pid, 0)  # it ends as soon as it has answered
                self.pid = None
        except OSError as exc:
            raise StandbyGone(str(exc)) from exc
        finally:
            self.close()
        if data is None:
            raise StandbyGone("the standby process gave no answer")
        try:
            kind, value = pickle.loads(data)
        except Exception as exc:
            raise StandbyGone(f"the answer cannot be read: {exc}") from exc
        if kind == "error":
            raise value
        if kind == "gone":
            raise StandbyGone(value)
        return value

    def call(self, fn: Callable, *args):
        """fn(*args), run in the child; its exception raised here; StandbyGone if it gives no answer."""
        self.send(fn, *args)
        return self.answer()

    def close(self) -> None:
        """Close the pipes and reap the child (stopping it if it still runs: an error or an interrupt)."""
        for fd in (self._to_child, self._from_child):
            if fd is not None:
                os.close(fd)
        self._to_child = self._from_child = None
        if self.pid is not None:
            import signal

            try:
                pid, _ = os.waitpid(self.pid, os.WNOHANG)
                if pid == 0:
                    os.kill(self.pid, signal.SIGTERM)
                    os.waitpid(self.pid, 0)
            except OSError:
                pass
            self.pid = None


def _write_message(fd: int, data: bytes) -> None:
    out = memoryview(len(data).to_bytes(8, "big") + data)
    while out:
        out = out[os.write(fd, out):]


def _read_message(fd: int) -> bytes | None:
    """One length-prefixed message; None at an end of file before a whole message."""
    chunks, want, head = [], 8, True
    size = None
    while True:
        got = os.read(fd, min(want, 1 << 20))
        if not got:
            return None
        chunks.append(got)
        want -= len(got)
        if want == 0:
            if head:
                size = int.from_bytes(b"".join(chunks), "big")
                chunks, want, head = [], size, False
                if size == 0:
                    return b""
            else:
                return b"".join(chunks)
