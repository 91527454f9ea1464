"""What each API endpoint does, through the Python API, on its own read-only connection.

Every request opens the index read-only and closes it when done: sqlite3
connections are not shared between the server's worker threads, and a closed
connection can never receive another tab's interrupt by mistake.
"""
from __future__ import annotations

from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path

from treequery.api import Treebank
from treequery.errors import SearchTimeout, TreequeryError
from treequery.pattern.ast import ATTRIBUTES
from treequery.results.display import shown_name, shown_path
from treequery.results.export import result_json
from treequery.results.kwic import kwic_columns
from treequery.results.render import OutputOptions, header, render
from treequery.results.svg import result_svg, tree_svg
from treequery.web.tabs import TabSearches

MAX_GROUPS = 1000  # count groups returned; the page draws the largest ones
EXPORT_NAMES = {"csv": "csv", "jsonl": "json"}  # export format -> `find --format`


@dataclass(frozen=True, slots=True)
class Settings:
    """What one server holds: the index, the limits, and the running searches."""

    db: Path
    timeout: float | None = 10.0
    max_page: int = 100
    tabs: TabSearches = field(default_factory=TabSearches)


@dataclass(frozen=True, slots=True)
class Query:
    """The request parameters shared by the endpoints (checked in app.py)."""

    pattern: str
    offset: int = 0
    limit: int | None = None
    tab: str = ""
    count_empty: bool = False
    by: tuple[str, ...] = ()
    svg: bool = True


class TimeLimit(Exception):
    """An export stopped at the server's time limit (a partial file is never sent)."""


@contextmanager
def opened(settings: Settings) -> Iterator[Treebank]:
    with Treebank(settings.db, readonly=True) as treebank:
        yield treebank


# ---------------------------------------------------------------- endpoints

def check(settings: Settings, pattern: str) -> dict:
    """Compile only: the result variables and the attributes a count can group by."""
    with opened(settings) as treebank:
        result_vars = treebank.result_vars(pattern)
    return {"ok": True, "result_vars": [shown_name(v) for v in result_vars],
            "attributes": list(ATTRIBUTES)}


def search(settings: Settings, query: Query) -> dict:
    """One page of results: location, bound nodes, concordance columns and the drawing."""
    with opened(settings) as treebank, settings.tabs.start(query.tab, treebank.conn) as running:
        result_vars = treebank.result_vars(query.pattern)
        # One more than asked for tells whether another page follows.
        results = treebank.find(query.pattern, limit=query.limit + 1, offset=query.offset,
                                count_empty=query.count_empty, timeout=settings.timeout)
        found, more, stopped = [], False, None
        try:
            for result in results:
                running.check()
                if len(found) == query.limit:
                    more = True
                    break
                tree = treebank.tree(result.tree_id)
                found.append(result_view(result, tree, query.offset + len(found) + 1,
                                         query.svg))
        except SearchTimeout as error:
            more, stopped = None, str(error)
        finally:
            results.close()  # ends the SQL statement before the connection closes
    answer = {"result_vars": [shown_name(v) for v in result_vars], "offset": query.offset,
              "limit": query.limit, "results": found, "more": more}
    if stopped:
        answer.update(stopped="time limit", message=stopped)
    return answer


def result_view(result, tree, number: int, with_svg: bool) -> dict:
    """One result as `find --format json` gives it, plus what the page shows."""
    view = result_json(result)
    first_var = next(iter(result.bindings))  # the concordance's match, as in `find`
    left, match, right = kwic_columns(result, tree, first_var)
    view.update(number=number, location=result.location,
                kwic={"var": shown_name(first_var), "left": left, "match": match,
                      "right": right})
    if with_svg:
        view["svg"] = result_svg(result, tree)
    return view


def count(settings: Settings, query: Query) -> dict:
    """Results and trees, grouped by `VAR.ATTR` keys (shown names, `match` included)."""
    with opened(settings) as treebank, settings.tabs.start(query.tab, treebank.conn) as running:
        pattern = treebank.compile(query.pattern)
        by = [internal_key(key, pattern.result_vars) for key in query.by]
        try:
            running.check()  # replaced by a newer search of the tab already
            counted = treebank.count(pattern, by=by, count_empty=query.count_empty,
                                     timeout=settings.timeout)
        except SearchTimeout as error:
            return {"results": None, "trees": None, "by": list(query.by), "groups": [],
                    "groups_total": None, "stopped": "time limit", "message": str(error)}
    answer = counted.to_json()
    answer.update(by=list(query.by), groups_total=len(answer["groups"]))
    answer["groups"] = answer["groups"][:MAX_GROUPS]
    return answer


def internal_key(key: str, result_vars) -> str:
    """`match.word` -> `_1.word`: the page names the unnamed result as the CLI shows it."""
    var, dot, attr = key.rpartition(".")
    for name in result_vars:
        if dot and var != name and var == shown_name(name):
            return f"{name}.{attr}"
    return key


def export(settings: Settings, query: Query, fmt: str) -> str:
    """Every result (or the offset/limit slice) exactly as `find --format csv|json` prints."""
    options = OutputOptions(EXPORT_NAMES[fmt])
    lines: list[str] = []
    with opened(settings) as treebank, settings.tabs.start(query.tab, treebank.conn) as running:
        result_vars = treebank.result_vars(query.pattern)
        first = header(options, result_vars)
        if first is not None:
            lines.append(first)
        results = treebank.find(query.pattern, limit=query.limit, offset=query.offset,
                                count_empty=query.count_empty, timeout=settings.timeout)
        try:
            for result in results:
                running.check()
                lines.append(render(result, treebank.tree, options, result_vars))
        except SearchTimeout as error:
            raise TimeLimit(str(error)) from None
        finally:
            results.close()
    return "".join(line + "\n" for line in lines)


def tree(settings: Settings, tree_id: int) -> dict:
    """One tree: where it is, its drawing and its brackets (LookupError: no such tree)."""
    with opened(settings) as treebank:
        try:
            where = treebank.tree_location(tree_id)
        except TreequeryError as error:
            raise LookupError(str(error)) from None
        nodes = treebank.tree(tree_id)
        brackets = treebank.tree_brackets(tree_id)
    location = f"{shown_path(where['path'])}:{where['line']}"
    return {"tree": tree_id, "document": where["name"], "file": shown_path(where["path"]),
            "line": where["line"], "location": location,
            "svg": tree_svg(nodes, {}, f"{location}  tree {tree_id}"), "brackets": brackets}


def explain(settings: Settings, query: Query) -> dict:
    with opened(settings) as treebank:
        return {"text": treebank.explain(query.pattern, count_empty=query.count_empty)}


def info(settings: Settings) -> dict:
    """The index's name and size, for the page's header."""
    with opened(settings) as treebank:
        counts = treebank.info()
    return {"index": settings.db.name, "timeout": settings.timeout,
            "max_page": settings.max_page, "attributes": list(ATTRIBUTES),
            **{k: v for k, v in counts.items() if isinstance(v, int | str)}}
