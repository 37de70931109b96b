"""The pages of `screening serve`: vessel, inventory, gas library (Starlette).

Views only: a page shows what the engine's result and the report's view hold (run in the worker
processes of :mod:`screening.web.runner`); it computes no physics. Every page is rendered from
jinja2 templates in ``templates/web/`` with autoescaping, and carries the cautions of
:mod:`screening.cautions`.
"""

from __future__ import annotations

import contextlib
import json
import math
import re
import threading
import tomllib
from pathlib import Path, PurePath

import jinja2
from starlette.applications import Starlette
from starlette.concurrency import run_in_threadpool
from starlette.requests import Request
from starlette.responses import HTMLResponse, RedirectResponse, Response
from starlette.routing import Mount, Route
from starlette.staticfiles import StaticFiles

from screening import __version__, cautions
from screening.errors import InputError
from screening.outputs.listing import ORDER
from screening.web import batch_outputs, form
from screening.web.runner import Runner
from screening.web.security import CSP_SVG, LOOPBACK_NAMES, Guard, TooLarge, too_large_page

STATIC = Path(__file__).with_name("static")
#: Largest case file or form [bytes], and largest inventory upload [bytes].
FORM_LIMIT = 1_000_000
INVENTORY_LIMIT = 64_000_000
#: Vessels per page of the inventory's listing.
PAGE_ROWS = 50
#: The counts' order: the listing's, worst first (screening.outputs.listing.ORDER).
VERDICT_ORDER = ORDER
#: Words for the verdict codes the inventory counts (the report's words for the four of a vessel).
INPUT_ERROR_WORDS = "Could not be read"


def templates_dir() -> Path:
    """``templates/web`` of the installed package, or of the source checkout."""
    here = Path(__file__).resolve()
    for c in (here.parent.parent / "templates" / "web", here.parents[2] / "templates" / "web"):
        if (c / "base.html.j2").is_file():
            return c
    raise FileNotFoundError("web templates not found")


def _environment() -> jinja2.Environment:
    env = jinja2.Environment(loader=jinja2.FileSystemLoader(str(templates_dir())), autoescape=True,
                             undefined=jinja2.StrictUndefined, trim_blocks=True, lstrip_blocks=True)
    env.globals.update(cautions=cautions, version=__version__, form=form, unit_words=form.UNIT_WORDS)
    return env


def _safe_name(name: str, default: str) -> str:
    """A file name for a download or an upload: letters, digits, '.', '-', '_' only."""
    stem = re.sub(r"[^A-Za-z0-9._-]+", "_", PurePath(str(name).replace("\\", "/")).name).strip("._")
    return stem[:80] or default


class App:
    def __init__(self, runner: Runner, hosts: set[str]) -> None:
        self.runner = runner
        self.env = _environment()
        self._labels = None
        self._labels_lock = threading.Lock()
        routes = [
            Route("/", self.vessel_page, methods=["GET"]),
            Route("/vessel", self.vessel_post, methods=["POST"]),
            Route("/vessel/upload", self.vessel_upload, methods=["POST"]),
            Route("/answer/{token}/{name}", self.answer_file, methods=["GET"]),
            Route("/inventory", self.inventory_page, methods=["GET"]),
            Route("/inventory", self.inventory_post, methods=["POST"]),
            Route("/inventory/{token}", self.inventory_job, methods=["GET"]),
            Route("/inventory/{token}/status", self.inventory_status, methods=["GET"]),
            Route("/inventory/{token}/pdf", self.inventory_pdf, methods=["POST"]),
            Route("/inventory/{token}/file/{name}", self.inventory_file, methods=["GET"]),
            Route("/gases", self.gases_page, methods=["GET"]),
            Route("/favicon.ico", lambda request: RedirectResponse("/static/icon.svg", status_code=301)),
            Mount("/static", app=StaticFiles(directory=str(STATIC)), name="static"),
        ]
        self.starlette = Starlette(routes=routes)
        self.asgi = Guard(self.starlette, hosts, {"/inventory": INVENTORY_LIMIT}, FORM_LIMIT)

    # ------------------------------------------------------------------ helpers
    def render(self, name: str, status: int = 200, **ctx) -> HTMLResponse:
        return HTMLResponse(self.env.get_template(name).render(**ctx), status_code=status)

    def labels(self) -> dict:
        """Finish and verdict words (asked once of a worker: the server does not load the engine)."""
        with self._labels_lock:
            if self._labels is None:
                got = self.runner.labels()
                got["verdicts"] = dict(got["verdicts"], **{"input-error": INPUT_ERROR_WORDS})
                self._labels = got
            return self._labels

    def finishes(self) -> list[tuple[str, str]]:
        return self.labels()["finishes"]

    def gas_names(self) -> list[tuple[str, str]]:
        """(name, other names) of every gas of the library, for the picker's suggestions."""
        from screening.physics.gases import library

        return [(g.name, ", ".join(g.aliases)) for g in library().values() if g.kind != "dissolved"] + \
               [(g.name, ", ".join(g.aliases) + " (dissolved: outside the method)") for g in library().values()
                if g.kind == "dissolved"]

    def vessel(self, values: dict, *, answer=None, error=None, field_errors=None, notes=(), status=200):
        """The vessel page: `error` a message on top (no field of its own), `field_errors` {field name: message}
        in the form's order of messages (the first field gets the focus)."""
        field_errors = dict(field_errors or {})
        return self.render("vessel.html.j2", status=status, page="vessel", v=values, answer=answer, error=error,
                           field_errors=field_errors, first_error=next(iter(field_errors), None),
                           labels_of={n: form.BY_NAME[n].label for n in field_errors},
                           optional_error=any(n.startswith(("sc", "tol")) or n == "required_margin"
                                              for n in field_errors), notes=list(notes),
                           gases=self.gas_names(), finishes=self.finishes(), title="Screen one vessel")

    def screened(self, values: dict, text: str, notes=(), source: str | None = None):
        source = source or _safe_name(values.get("id") or "case", "case") + ".toml"
        got = self.runner.answer(text, source)
        if isinstance(got, InputError):
            field = form.field_for_key(got.key, values)
            if field is None:
                return self.vessel(values, error=form.message_for_field(got, None), notes=notes, status=422)
            # the other fields the reader refuses too, in one round trip
            field_errors = {field.name: form.message_for_field(got, field)}
            for more in self.runner.form_errors(values, source):
                f = form.field_for_key(more.key, values)
                if f is not None and f.name not in field_errors:
                    field_errors[f.name] = form.message_for_field(more, f)
            return self.vessel(values, field_errors=field_errors, notes=notes, status=422)
        return self.vessel(values, answer=got, notes=notes)

    async def read_form(self, request: Request):
        try:
            return await request.form(max_files=1, max_fields=400), None
        except TooLarge as exc:
            return None, too_large_page(exc.limit)

    # ------------------------------------------------------------------ vessel
    async def vessel_page(self, request: Request):
        return await run_in_threadpool(self.vessel, form.blank())

    async def vessel_post(self, request: Request):
        data, refused = await self.read_form(request)
        if refused:
            return refused
        values = form.values_from_form(data)
        return await run_in_threadpool(self.screened, values, form.case_text(values))

    async def vessel_upload(self, request: Request):
        data, refused = await self.read_form(request)
        if refused:
            return refused
        upload = data.get("case_file")
        raw = await upload.read() if upload is not None and hasattr(upload, "read") else b""
        name = _safe_name(getattr(upload, "filename", "") or "", "case.toml")
        if not raw:
            return await run_in_threadpool(lambda: self.vessel(form.blank(), error="Choose a case file (.toml) to upload.", status=422))
        try:
            text = raw.decode("utf-8-sig")
        except UnicodeDecodeError:
            return await run_in_threadpool(lambda: self.vessel(form.blank(), error=f"{name}: the case file is not UTF-8 text.", status=422))
        try:
            values, notes = form.values_from_case_text(text)
        except tomllib.TOMLDecodeError as exc:
            message = f"{name}: not valid TOML: {exc}"
            return await run_in_threadpool(lambda: self.vessel(form.blank(), error=message, status=422))
        # the file as uploaded is screened (its answer and its downloads are those of the file); the form
        # shows its values for a change and a new screening
        return await run_in_threadpool(self.screened, values, text, notes, name)

    async def answer_file(self, request: Request):
        a = self.runner.get_answer(request.path_params["token"])
        name = request.path_params["name"]
        if a is None:
            return self.render("gone.html.j2", status=404, page="", title="Answer no longer kept")
        stem = PurePath(a.source).stem
        if name == "plot.svg" and a.plot_svg:
            return Response(a.plot_svg, media_type="image/svg+xml", headers={"content-security-policy": CSP_SVG})
        if name == "phase.svg" and a.phase_svg:
            return Response(a.phase_svg, media_type="image/svg+xml", headers={"content-security-policy": CSP_SVG})
        if name == "case.toml":
            return _download(a.case_text.encode("utf-8"), "application/toml; charset=utf-8", a.source)
        if name == "result.json":
            body = json.dumps(a.result.to_json(), indent=2, ensure_ascii=False, allow_nan=False) + "\n"
            return _download(body.encode("utf-8"), "application/json", f"{stem}.result.json")
        if name == "report.pdf":
            return _download(await run_in_threadpool(self.runner.pdf, a), "application/pdf", f"{stem}.pdf")
        return self.render("gone.html.j2", status=404, page="", title="Not found")

    # ------------------------------------------------------------------ inventory
    async def inventory_page(self, request: Request):
        return self.render("inventory.html.j2", page="inventory", title="Screen an inventory", job=None, error=None,
                           limit=INVENTORY_LIMIT)

    async def inventory_post(self, request: Request):
        data, refused = await self.read_form(request)
        if refused:
            return refused
        upload = data.get("inventory_file")
        raw = await upload.read() if upload is not None and hasattr(upload, "read") else b""
        name = _safe_name(getattr(upload, "filename", "") or "", "inventory.csv")
        sheet = form.clean(data.get("sheet")) or None
        error = None
        if not raw:
            error = "Choose an inventory file (.csv or .xlsx) to upload."
        elif PurePath(name).suffix.lower() not in (".csv", ".xlsx", ".txt"):
            error = f"{name}: expected a .csv or .xlsx file."
        if error:
            return self.render("inventory.html.j2", status=422, page="inventory", title="Screen an inventory",
                               job=None, error=error, limit=INVENTORY_LIMIT)
        job = self.runner.start_inventory(name, raw, sheet)
        return RedirectResponse(f"/inventory/{job.token}", status_code=303)

    def _job_state(self, job) -> dict:
        try:
            with open(Path(job.folder) / "status.json", encoding="utf-8") as fh:
                state = json.load(fh)
        except (OSError, ValueError):
            state = {"stage": "waiting", "message": "Waiting for the screening process"}
        if job.future.done() and job.future.exception() is not None and state.get("stage") != "failed":
            state = {"stage": "failed", "message": f"The screening stopped: {job.future.exception()}"}
        return state

    def _listing(self, job, page: int) -> dict | None:
        with job.lock:   # read once: the page polls, and a large inventory's listing is large
            if job.listing is None:
                path = Path(job.folder) / "rows.json"
                if not path.is_file():
                    return None
                with open(path, encoding="utf-8") as fh:
                    job.listing = json.load(fh)
            data = job.listing
        rows = data["rows"]
        pages = max(1, math.ceil(len(rows) / PAGE_ROWS))
        page = min(max(1, page), pages)
        return dict(summary=data["summary"], rows=rows[(page - 1) * PAGE_ROWS: page * PAGE_ROWS],
                    page=page, pages=pages, first=(page - 1) * PAGE_ROWS + 1, total=len(rows))

    def _job_view(self, request: Request, template: str, page: str = "inventory"):
        job = self.runner.get_job(request.path_params["token"])
        if job is None:
            return self.render("gone.html.j2", status=404, page="", title="Inventory no longer kept")
        try:
            page_no = int(request.query_params.get("page", "1"))
        except ValueError:
            page_no = 1
        state = self._job_state(job)
        listing = self._listing(job, page_no) if state.get("stage") in ("writing", "done") \
            or job.listing is not None else None
        return self.render(template, page=page, title=f"Inventory {job.filename}", job=job, state=state,
                           listing=listing, verdict_words=self.labels()["verdicts"], order=VERDICT_ORDER, kinds=batch_outputs.MEDIA, error=None,
                           limit=INVENTORY_LIMIT)

    async def inventory_job(self, request: Request):
        return await run_in_threadpool(self._job_view, request, "inventory.html.j2")

    async def inventory_status(self, request: Request):
        return await run_in_threadpool(self._job_view, request, "inventory_status.html.j2")

    async def inventory_pdf(self, request: Request):
        job = self.runner.get_job(request.path_params["token"])
        if job is None:
            return self.render("gone.html.j2", status=404, page="", title="Inventory no longer kept")
        await request.body()
        self.runner.start_pdf(job)
        return RedirectResponse(f"/inventory/{job.token}", status_code=303)

    async def inventory_file(self, request: Request):
        job = self.runner.get_job(request.path_params["token"])
        name = request.path_params["name"]
        if job is None or name not in (self._job_state(job).get("made") or []):
            return self.render("gone.html.j2", status=404, page="", title="File not found")
        kind = name.rsplit(".", 1)[-1]
        return _download((Path(job.folder) / name).read_bytes(), batch_outputs.MEDIA.get(kind, "application/octet-stream"),
                         name)

    # ------------------------------------------------------------------ gas library
    async def gases_page(self, request: Request):
        from screening.physics.gases import citations, edition, library

        return self.render("gases.html.j2", page="gases", title="Gas library",
                           gases=[gas_row(g, citations()) for g in library().values()],
                           citations=citations(), edition=edition())


def gas_row(g, cites: dict) -> dict:
    """One gas of the library as the page shows it (numbers formatted here, from the library's data)."""
    keys = {text: k for k, text in cites.items()}
    sources = []
    for text in g.sources.values():
        k = keys.get(text)
        if k and k not in sources:
            sources.append(k)
    if g.kind == "dissolved":
        models = ["none: a dissolved gas is outside the method"]
    else:
        models = ["ideal gas (for comparison)",
                  ("Soave\u2013Redlich\u2013Kwong with the Gunn\u2013Chueh\u2013Prausnitz quantum-gas constants "
                   "(above the Lee\u2013Kesler tables at every cylinder temperature)" if g.quantum else
                   "Lee\u2013Kesler, single-phase gas within its range"),
                  f"reference equation of state ({g.coolprop_name})" if g.coolprop_name
                  else "no reference equation of state"]
    return dict(name=g.name, aliases=list(g.aliases), formula=g.formula, cas=g.cas,
                molar_mass=f"{g.molar_mass * 1e3:.4f} g/mol", tc=f"{g.critical_temperature:.2f} K",
                pc=f"{g.critical_pressure / 1e5:.2f} bar(a)", omega=f"{g.acentric_factor:+.4f}",
                kind=g.kind + (" (quantum gas)" if g.quantum else ""), hazards=", ".join(g.hazards) or "none listed",
                models=models, sources=sources, note=g.note)


def _download(body: bytes, media: str, filename: str) -> Response:
    return Response(body, media_type=media,
                    headers={"content-disposition": f'attachment; filename="{_safe_name(filename, "download")}"'})


def allowed_hosts(host: str, port: int) -> set[str]:
    """The Host header values this server answers to: its loopback names (and `host` if another), with
    the port (and without it for port 80)."""
    names = set(LOOPBACK_NAMES)
    extra = {host}
    if host in ("0.0.0.0", "::", ""):  # every interface: the names this machine goes by
        import socket

        extra = {socket.gethostname(), socket.getfqdn()}
        with contextlib.suppress(OSError):
            extra |= {a[4][0] for a in socket.getaddrinfo(socket.gethostname(), None)}
    for name in extra - {"127.0.0.1", "localhost", "::1", "0.0.0.0", "::", ""}:
        names.add(f"[{name}]" if ":" in name else name.lower())
    out = {f"{n}:{port}" for n in names}
    if port == 80:
        out |= names
    return out


def create_app(runner: Runner, host: str = "127.0.0.1", port: int = 8765):
    """The ASGI application of the server (with its defences) for `runner`'s pools."""
    return App(runner, allowed_hosts(host, port)).asgi
