"""The server's warm worker processes and what it keeps of the answers.

Two `concurrent.futures.ProcessPoolExecutor`s, started with the server: one for vessel answers and
reports, one for inventories, so that a long inventory never stands in front of a vessel answer.
The workers are forked from a fork server that has imported the engine and screened a small case once
(`screening.web.warmed`), so each starts warm. The engine is not
shared between threads: the server's threads only hand work to the processes and wait.

Answers and inventory jobs are kept in bounded stores under a lock, addressed by random tokens.
"""

from __future__ import annotations

import concurrent.futures as cf
import datetime as _dt
import multiprocessing
import os
import secrets
import shutil
import tempfile
import threading
from collections import OrderedDict
from dataclasses import dataclass, field

from screening.errors import InputError
from screening.result import Result
from screening.web import engine

#: Answers kept for downloads (the oldest are dropped first).
ANSWERS_KEPT = 200
#: Inventory jobs kept with their files (the oldest are dropped first, with their folder).
JOBS_KEPT = 10


def _vessel_workers() -> int:
    try:
        n = len(os.sched_getaffinity(0))
    except AttributeError:
        n = os.cpu_count() or 1
    return max(1, min(2, n))


@dataclass
class Answer:
    token: str
    case_text: str
    source: str
    result: Result
    view: dict
    plot_svg: str | None
    phase_svg: str | None
    seconds: float
    pdf: bytes | None = None
    lock: threading.Lock = field(default_factory=threading.Lock)


@dataclass
class Job:
    token: str
    folder: str
    filename: str
    future: cf.Future
    started: _dt.datetime
    sheet: str | None = None
    listing: dict | None = None          # rows.json once read (it is written once)
    pdf_asked: bool = False
    lock: threading.Lock = field(default_factory=threading.Lock)


class Runner:
    """The pools, started at once and warmed; `close()` stops them."""

    def __init__(self, vessel_workers: int | None = None, warm: bool = True) -> None:
        # forkserver: workers start from a clean process that has imported and warmed the engine once
        # (screening.web.warmed), not from the server with its threads; each worker is forked ready
        if "forkserver" in multiprocessing.get_all_start_methods():
            ctx = multiprocessing.get_context("forkserver")
            ctx.set_forkserver_preload(["screening.web.warmed"])
        else:
            ctx = multiprocessing.get_context("spawn")
        n = vessel_workers or _vessel_workers()
        self._n, self._ctx = n, ctx
        self.vessel_pool = cf.ProcessPoolExecutor(max_workers=n, mp_context=ctx)
        self.inventory_pool = cf.ProcessPoolExecutor(max_workers=1, mp_context=ctx)
        self.warming: list[cf.Future] = []
        if warm:
            # started beside the server: the fork server's warm-up takes as long as one fresh screening, and
            # the page is served meanwhile (an answer asked for in that time waits for it)
            threading.Thread(target=self._warm, args=(n,), daemon=True).start()
        self._lock = threading.Lock()
        self._answers: OrderedDict[str, Answer] = OrderedDict()
        self._jobs: OrderedDict[str, Job] = OrderedDict()
        self.workdir = tempfile.mkdtemp(prefix="screening-web-")

    def _warm(self, n: int) -> None:
        try:
            self.warming = [self.vessel_pool.submit(engine.started) for _ in range(n)]
            self.warming.append(self.inventory_pool.submit(engine.started, True))
        except RuntimeError:  # closed before it started
            pass

    # -- vessels
    def _vessel(self, fn, *args):
        """fn(*args) in a vessel worker; a pool whose worker died is replaced once and the work retried."""
        pool = self.vessel_pool
        try:
            return pool.submit(fn, *args).result()
        except cf.process.BrokenProcessPool:
            with self._lock:
                if self.vessel_pool is pool:
                    self.vessel_pool = cf.ProcessPoolExecutor(max_workers=self._n, mp_context=self._ctx)
            return self.vessel_pool.submit(fn, *args).result()

    def answer(self, text: str, source: str) -> Answer | InputError:
        got = self._vessel(engine.answer, text, source)
        if "error" in got:
            return InputError(**got["error"])
        a = Answer(secrets.token_urlsafe(12), text, source, got["result"], got["view"], got["plot_svg"],
                   got["phase_svg"], got["seconds"])
        with self._lock:
            self._answers[a.token] = a
            while len(self._answers) > ANSWERS_KEPT:
                self._answers.popitem(last=False)
        return a

    def labels(self) -> dict:
        return self._vessel(engine.labels)

    def form_errors(self, values: dict, source: str) -> list[InputError]:
        """Every refused field of a form, each with its first message (engine.form_errors)."""
        return [InputError(**e) for e in self._vessel(engine.form_errors, values, source)]

    def get_answer(self, token: str) -> Answer | None:
        with self._lock:
            return self._answers.get(token)

    def pdf(self, a: Answer) -> bytes:
        with a.lock:
            if a.pdf is None:
                a.pdf = self._vessel(engine.report_pdf, a.result, a.case_text, _dt.date.today().isoformat())
            return a.pdf

    # -- inventories
    def start_inventory(self, filename: str, data: bytes, sheet: str | None) -> Job:
        token = secrets.token_urlsafe(12)
        folder = os.path.join(self.workdir, token)
        os.makedirs(folder)
        with open(os.path.join(folder, filename), "wb") as fh:
            fh.write(data)
        future = self.inventory_pool.submit(engine.inventory, folder, filename, sheet, _dt.date.today().isoformat())
        job = Job(token, folder, filename, future, _dt.datetime.now(), sheet)
        with self._lock:
            self._jobs[token] = job
            while len(self._jobs) > JOBS_KEPT:
                _, old = self._jobs.popitem(last=False)
                if old.future.done():
                    shutil.rmtree(old.folder, ignore_errors=True)
        return job

    def start_pdf(self, job: Job) -> None:
        """Write the batch PDF of a screened inventory that offered it (in the inventory worker)."""
        with job.lock:
            if job.future.done() and not job.pdf_asked:
                job.pdf_asked = True
                job.future = self.inventory_pool.submit(engine.inventory, job.folder, job.filename, job.sheet,
                                                        _dt.date.today().isoformat(), True)

    def get_job(self, token: str) -> Job | None:
        with self._lock:
            return self._jobs.get(token)

    def close(self) -> None:
        """Stop the pools: queued work is dropped, and an inventory still being screened is stopped (its
        worker ended) rather than waited for; the uploaded files and outputs are removed."""
        for pool in (self.vessel_pool, self.inventory_pool):
            pool.shutdown(wait=False, cancel_futures=True)
        busy = [j for j in self._jobs.values() if not j.future.done()]
        if busy:
            # concurrent.futures has no public way to end a running task before Python 3.14
            # (ProcessPoolExecutor.terminate_workers); its worker processes are ended here
            for proc in list((getattr(self.inventory_pool, "_processes", None) or {}).values()):
                proc.terminate()
        for pool in (self.vessel_pool, self.inventory_pool):
            pool.shutdown(wait=True)
        shutil.rmtree(self.workdir, ignore_errors=True)
