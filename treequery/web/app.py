"""The starlette application: the page, its static files, and the JSON API (see API.md)."""
from __future__ import annotations

import json
from collections.abc import Callable, Sequence
from pathlib import Path

from starlette.applications import Starlette
from starlette.concurrency import run_in_threadpool
from starlette.middleware import Middleware
from starlette.middleware.trustedhost import TrustedHostMiddleware
from starlette.requests import Request
from starlette.responses import FileResponse, JSONResponse, PlainTextResponse, Response
from starlette.routing import Mount, Route
from starlette.staticfiles import StaticFiles

from treequery.errors import PatternError, TreequeryError
from treequery.web import work
from treequery.web.tabs import Cancelled
from treequery.web.work import Query, Settings

STATIC_DIR = Path(__file__).resolve().parent / "static"
DEFAULT_PAGE = 10
MAX_PATTERN = 20_000     # characters: a pattern is typed, not generated
MAX_TAB_ID = 100
LOOPBACK_HOSTS = ("127.0.0.1", "localhost", "[::1]")
# The page loads only its own files; inline styles are needed by the SVG drawings.
SECURITY_HEADERS = {
    "content-security-policy": "default-src 'self'; script-src 'self'; "
                               "style-src 'self' 'unsafe-inline'; img-src 'self' data:; "
                               "object-src 'none'; base-uri 'none'; frame-ancestors 'none'",
    "x-content-type-options": "nosniff",
    "referrer-policy": "no-referrer",
}


class BadRequest(Exception):
    """A request parameter that cannot be used; the message names it."""


def create_app(db: str | Path, timeout: float | None = 10.0, max_page: int = 100,
               hosts: Sequence[str] = LOOPBACK_HOSTS) -> Starlette:
    """The application over the index at `db`, opened read-only by every request.

    `hosts` are the Host headers accepted (loopback names by default, so a web page
    elsewhere cannot reach the server through a name that resolves to 127.0.0.1);
    `("*",)` accepts any.
    """
    settings = Settings(Path(db), timeout, max_page)
    if not settings.db.is_file():
        raise TreequeryError(f"no index at {settings.db}; build one with `treequery index`")
    routes = [
        Route("/", lambda request: FileResponse(STATIC_DIR / "index.html")),
        Route("/favicon.ico", lambda request: Response(status_code=204)),
        Mount("/static", StaticFiles(directory=STATIC_DIR), name="static"),
        Route("/api/info", endpoint(settings, lambda s, p: work.info(s)), methods=["GET"]),
        Route("/api/check", endpoint(settings, check), methods=["GET", "POST"]),
        Route("/api/search", endpoint(settings, search), methods=["GET", "POST"]),
        Route("/api/count", endpoint(settings, count), methods=["GET", "POST"]),
        Route("/api/explain", endpoint(settings, explain), methods=["GET", "POST"]),
        Route("/api/tree/{tree_id:int}", tree_endpoint(settings), methods=["GET"]),
        Route("/api/export", export_endpoint(settings), methods=["GET", "POST"]),
    ]
    middleware = [Middleware(TrustedHostMiddleware, allowed_hosts=list(hosts)),
                  Middleware(SecurityHeaders)]
    app = Starlette(routes=routes, middleware=middleware)
    app.state.settings = settings
    return app


# ---------------------------------------------------------------- endpoints

def check(settings: Settings, params: dict) -> dict:
    return work.check(settings, pattern_of(params))


def search(settings: Settings, params: dict) -> dict:
    limit = integer(params, "limit", DEFAULT_PAGE, low=1)
    return work.search(settings, query_of(params, limit=min(limit, settings.max_page)))


def count(settings: Settings, params: dict) -> dict:
    return work.count(settings, query_of(params))


def explain(settings: Settings, params: dict) -> dict:
    return work.explain(settings, query_of(params))


def endpoint(settings: Settings, handler: Callable[[Settings, dict], dict]):
    """A JSON endpoint: parameters from the query string and a JSON body, work in a thread."""
    async def respond(request: Request) -> Response:
        try:
            params = await read_params(request)
            return JSONResponse(await run_in_threadpool(handler, settings, params))
        except Exception as error:  # noqa: BLE001 - each kind becomes its status below
            return error_response(error)
    return respond


def tree_endpoint(settings: Settings):
    async def respond(request: Request) -> Response:
        try:
            tree_id = request.path_params["tree_id"]
            return JSONResponse(await run_in_threadpool(work.tree, settings, tree_id))
        except Exception as error:  # noqa: BLE001
            return error_response(error)
    return respond


def export_endpoint(settings: Settings):
    """Every result as a CSV or JSON Lines file, the same bytes `find --format` prints."""
    async def respond(request: Request) -> Response:
        try:
            params = await read_params(request)
            fmt = params.get("format", "csv")
            if fmt not in work.EXPORT_NAMES:
                raise BadRequest(f"format: {fmt!r} is not csv or jsonl")
            limit = integer(params, "limit", None, low=0)
            text = await run_in_threadpool(work.export, settings, query_of(params, limit), fmt)
        except Exception as error:  # noqa: BLE001
            return error_response(error)
        media = "text/csv" if fmt == "csv" else "application/jsonl"
        disposition = f'attachment; filename="treequery-results.{fmt}"'
        return PlainTextResponse(text, media_type=f"{media}; charset=utf-8",
                                 headers={"content-disposition": disposition})
    return respond


def error_response(error: Exception) -> JSONResponse:
    """Bad input is 400 (a pattern error with its position), a replaced search 409,
    a stopped export 503, a missing tree 404; anything else is the server's fault."""
    if isinstance(error, PatternError):
        return JSONResponse({"error": pattern_error(error)}, status_code=400)
    if isinstance(error, BadRequest | TreequeryError):
        return JSONResponse({"error": {"kind": "bad request", "message": str(error)}},
                            status_code=400)
    if isinstance(error, Cancelled):
        return JSONResponse({"stopped": "cancelled",
                             "message": "a newer search from the same tab replaced this one"},
                            status_code=409)
    if isinstance(error, work.TimeLimit):
        return JSONResponse({"stopped": "time limit", "message": str(error)}, status_code=503)
    if isinstance(error, LookupError):
        return JSONResponse({"error": {"kind": "not found", "message": str(error)}},
                            status_code=404)
    raise error


def pattern_error(error: PatternError) -> dict:
    return {"kind": error.kind, "message": error.message, "hint": error.hint,
            "position": error.position, "line": error.line, "column": error.column,
            "text": error.render()}


# ---------------------------------------------------------------- parameters

async def read_params(request: Request) -> dict:
    """Query-string parameters, overridden by a JSON object body on POST."""
    params: dict = dict(request.query_params)
    if request.query_params.getlist("by"):
        params["by"] = request.query_params.getlist("by")
    if request.method == "POST":
        body = await request.body()
        if body:
            try:
                data = json.loads(body)
            except ValueError:
                raise BadRequest("the request body is not JSON") from None
            if not isinstance(data, dict):
                raise BadRequest("the request body must be a JSON object")
            params.update(data)
    return params


def pattern_of(params: dict) -> str:
    pattern = params.get("pattern")
    if not isinstance(pattern, str) or not pattern.strip():
        raise BadRequest("pattern: give a pattern, e.g. VP parent-of PP")
    if len(pattern) > MAX_PATTERN:
        raise BadRequest(f"pattern: longer than {MAX_PATTERN} characters")
    return pattern


def query_of(params: dict, limit: int | None = None) -> Query:
    by = params.get("by", [])
    by = [by] if isinstance(by, str) else by
    if not isinstance(by, list) or not all(isinstance(key, str) and key for key in by):
        raise BadRequest("by: give VAR.ATTR keys, e.g. o.label")
    tab = params.get("tab", "")
    if not isinstance(tab, str) or len(tab) > MAX_TAB_ID:
        raise BadRequest(f"tab: a text of at most {MAX_TAB_ID} characters")
    return Query(pattern_of(params), offset=integer(params, "offset", 0, low=0), limit=limit,
                 tab=tab, count_empty=flag(params, "count_empty"), by=tuple(by),
                 svg=flag(params, "svg", default=True))


def integer(params: dict, name: str, default: int | None, low: int) -> int | None:
    value = params.get(name)
    if value is None or value == "":
        return default
    try:
        number = int(value)
    except (TypeError, ValueError):
        raise BadRequest(f"{name}: {value!r} is not a whole number") from None
    if isinstance(value, bool) or number < low:
        raise BadRequest(f"{name}: must be a whole number of at least {low}")
    return number


def flag(params: dict, name: str, default: bool = False) -> bool:
    value = params.get(name, default)
    if isinstance(value, str):
        return value.lower() in ("1", "true", "yes", "on")
    return bool(value)


# ---------------------------------------------------------------- headers

class SecurityHeaders:
    """Adds SECURITY_HEADERS to every response (plain ASGI middleware)."""

    def __init__(self, app):
        self.app = app

    async def __call__(self, scope, receive, send):
        if scope["type"] != "http":
            await self.app(scope, receive, send)
            return

        async def send_with_headers(message):
            if message["type"] == "http.response.start":
                headers = list(message.get("headers", []))
                headers += [(k.encode(), v.encode()) for k, v in SECURITY_HEADERS.items()]
                message = {**message, "headers": headers}
            await send(message)

        await self.app(scope, receive, send_with_headers)
