"""The ASGI application: routes of the bench page, each a thin call into :mod:`bench`."""

from __future__ import annotations

import threading
from pathlib import Path
from typing import Any

from speccheck.errors import SpeccheckError
from speccheck.web.bench import BenchSession, Sessions
from speccheck.web.config import BenchConfig, is_loopback
from speccheck.web.page import CAUTION, bench_page
from speccheck.web.security import AccessToken, BodyLimit, SecurityHeaders, csrf_ok
from speccheck.web.specs import SpecCatalogue

__all__ = ["create_app", "SESSION_COOKIE"]

SESSION_COOKIE = "speccheck_bench"
CSRF_REFUSED = "refused: the request carries no valid CSRF token; reload the page and try again"
IDENTITY = ("serial", "operator", "instrument")
_FORM_LIMITS = {"max_files": 24, "max_fields": 20, "max_part_size": 64 * 1024}


def _templates() -> Any:
    from jinja2 import Environment, PackageLoader, select_autoescape

    env = Environment(
        loader=PackageLoader("speccheck.web", "templates"),
        autoescape=select_autoescape(default=True, default_for_string=True),
        trim_blocks=True,
        lstrip_blocks=True,
    )
    env.globals["caution"] = CAUTION
    return env


def create_app(config: BenchConfig) -> Any:
    """The Starlette application serving one bench configuration."""
    from starlette.applications import Starlette
    from starlette.concurrency import run_in_threadpool
    from starlette.middleware import Middleware
    from starlette.middleware.trustedhost import TrustedHostMiddleware
    from starlette.requests import Request
    from starlette.responses import (
        FileResponse,
        HTMLResponse,
        PlainTextResponse,
        RedirectResponse,
        Response,
    )
    from starlette.routing import Mount, Route
    from starlette.staticfiles import StaticFiles

    config.prepare()
    env = _templates()
    sessions = Sessions(config)
    catalogue = SpecCatalogue(config.specs_dir)
    store_lock = threading.Lock()

    def render(name: str, status: int = 200, **ctx: Any) -> HTMLResponse:
        return HTMLResponse(env.get_template(name).render(**ctx), status_code=status)

    def session_of(request: Request) -> BenchSession | None:
        return sessions.get(request.cookies.get(SESSION_COOKIE))

    def with_cookie(response: Response, s: BenchSession) -> Response:
        response.set_cookie(SESSION_COOKIE, s.id, httponly=True, samesite="strict", path="/")
        return response

    def is_fetch(request: Request) -> bool:
        return request.headers.get("x-bench-fetch") == "1"

    def bench_html(s: BenchSession, request: Request, status: int = 200) -> HTMLResponse:
        plot = request.query_params.get("m")
        index = int(plot) - 1 if plot and plot.isdigit() else None
        page = bench_page(s, plot=index, signer=config.signer)
        template = "work.html" if is_fetch(request) else "bench.html"
        messages, s.messages = s.messages, []
        return render(template, status, p=page, s=s, messages=messages)

    def start_html(s: BenchSession, status: int = 200) -> HTMLResponse:
        entries, problems = catalogue.scan()
        messages, s.messages = s.messages, []
        return render(
            "start.html", status, s=s, entries=entries, problems=problems, messages=messages
        )

    async def state_changing(request: Request) -> tuple[BenchSession | None, Any, Response | None]:
        """The session and form of a POST, or the refusal: no session or no CSRF token.

        The form comes back as (fields, uploads): text fields, and (file name, bytes) of every
        ``trace`` file, each read to at most one byte over the upload limit.
        """
        s = session_of(request)
        ctype = request.headers.get("content-type", "")
        fields: dict[str, str] = {}
        uploads: list[tuple[str, bytes]] = []
        if ctype.startswith(("multipart/form-data", "application/x-www-form-urlencoded")):
            form = await request.form(**_FORM_LIMITS)
            try:
                for k, v in form.multi_items():
                    if isinstance(v, str):
                        fields.setdefault(k, v)
                    elif k == "trace":
                        data = await v.read(config.max_upload_bytes + 1)
                        uploads.append((v.filename or "upload", data))
            finally:
                await form.close()
        given = request.headers.get("x-csrf-token") or fields.get("csrf")
        if s is None or not csrf_ok(s.csrf, given):
            return None, (fields, uploads), PlainTextResponse(CSRF_REFUSED, status_code=403)
        return s, (fields, uploads), None

    def after(s: BenchSession, request: Request) -> Response:
        if is_fetch(request):
            return bench_html(s, request)
        return RedirectResponse("/", status_code=303)

    async def locked(s: BenchSession, fn: Any, *args: Any) -> Any:
        """Run ``fn(*args)`` in a worker thread holding the session's lock: one request of a
        session at a time, other sessions untouched."""

        def run() -> Any:
            with s.lock:
                return fn(*args)

        return await run_in_threadpool(run)

    async def home(request: Request) -> Response:
        s = session_of(request) or sessions.new()

        def page() -> Response:
            return bench_html(s, request) if s.spec is not None else start_html(s)

        return with_cookie(await locked(s, page), s)

    def _choose(s: BenchSession, number: str, spec_name: str, ident: dict[str, str]) -> Response:
        if spec_name:
            entry = catalogue.get(spec_name)
            matches = [entry] if entry is not None else []
        else:
            matches = catalogue.find(number)
        if not matches:
            s.messages.append(
                f"{number or spec_name or '(empty)'}: no specification for this part number "
                f"in the spec folder"
            )
        elif len(matches) > 1:
            s.candidates = matches
            s.serial, s.operator, s.instrument = (ident[k] for k in IDENTITY)
            return start_html(s)
        else:
            s.start_part(matches[0], **ident)
        return RedirectResponse("/", status_code=303)

    async def choose_part(request: Request) -> Response:
        s, form, refused = await state_changing(request)
        if refused is not None or s is None:
            return refused or PlainTextResponse(CSRF_REFUSED, status_code=403)
        fields = form[0]
        number = fields.get("part", "").strip()
        spec_name = fields.get("spec", "")
        ident = {k: fields.get(k, "") for k in IDENTITY}
        return await locked(s, _choose, s, number, spec_name, ident)

    def _add(s: BenchSession, uploads: list[tuple[str, bytes]]) -> None:
        if not uploads:
            s.messages.append("no file received: drop trace files or choose them")
        for name, data in uploads:
            try:
                s.add_trace(name, data, config)
            except SpeccheckError as exc:
                s.messages.append(exc.one_line())

    async def add_traces(request: Request) -> Response:
        s, form, refused = await state_changing(request)
        if refused is not None or s is None:
            return refused or PlainTextResponse(CSRF_REFUSED, status_code=403)
        await locked(s, _add, s, form[1])
        if is_fetch(request):
            status = 422 if s.messages else 200
            return await locked(s, bench_html, s, request, status)
        return RedirectResponse("/", status_code=303)

    def _act(s: BenchSession, fn: Any, *args: Any) -> None:
        try:
            fn(*args)
        except SpeccheckError as exc:
            s.messages.append(exc.one_line())

    async def act(request: Request, what: str) -> Response:
        s, _, refused = await state_changing(request)
        if refused is not None or s is None:
            return refused or PlainTextResponse(CSRF_REFUSED, status_code=403)
        if what == "undo":
            await locked(s, _act, s, s.remove_last)
        elif what == "record":
            await locked(s, _act, s, s.sign_and_record, config, store_lock)
        else:
            await locked(s, s.next_part)
        if is_fetch(request):
            return await locked(s, bench_html, s, request)
        return RedirectResponse("/", status_code=303)

    async def undo_trace(request: Request) -> Response:
        return await act(request, "undo")

    async def record(request: Request) -> Response:
        return await act(request, "record")

    async def next_part(request: Request) -> Response:
        return await act(request, "next")

    async def plot(request: Request) -> Response:
        s = session_of(request)
        if s is None:
            return PlainTextResponse("no bench session", status_code=404)
        svg = await locked(s, s.plot, int(request.path_params["n"]) - 1)
        if isinstance(svg, str):
            return PlainTextResponse(svg, status_code=404)
        return Response(
            svg, media_type="image/svg+xml", headers={"cache-control": "private, max-age=600"}
        )

    async def record_pdf(request: Request) -> Response:
        s = session_of(request)
        rid = int(request.path_params["rid"])
        if s is None or s.recorded is None or s.recorded.record_id != rid:
            return PlainTextResponse(f"record {rid}: not written on this bench", status_code=404)
        return FileResponse(
            s.recorded.pdf, media_type="application/pdf", filename=s.recorded.pdf.name
        )

    static = Path(__file__).with_name("static")
    routes = [
        Route("/", home),
        Route("/part", choose_part, methods=["POST"]),
        Route("/traces", add_traces, methods=["POST"]),
        Route("/traces/undo", undo_trace, methods=["POST"]),
        Route("/record", record, methods=["POST"]),
        Route("/next", next_part, methods=["POST"]),
        Route("/plot/{n:int}.svg", plot),
        Route("/record/{rid:int}.pdf", record_pdf),
        Mount("/static", StaticFiles(directory=static), name="static"),
    ]
    hosts = ["127.0.0.1", "localhost", "[::1]", "::1"] if is_loopback(config.host) else ["*"]
    middleware = [
        Middleware(SecurityHeaders),
        Middleware(AccessToken, token=config.token),
        Middleware(TrustedHostMiddleware, allowed_hosts=hosts),
        Middleware(BodyLimit, limit=config.max_upload_bytes + 1024 * 1024),
    ]
    return Starlette(routes=routes, middleware=middleware)
