"""The Python API: one `Treebank` object over an index, the layer every interface uses."""
from __future__ import annotations

from collections.abc import Iterable, Iterator
from dataclasses import replace
from pathlib import Path

from .errors import TreequeryError
from .index import schema
from .pattern.ast import ATTRIBUTES, Pattern
from .results.model import CountResult, Result

PatternLike = str | Pattern


class Treebank:
    """An indexed treebank.

    >>> tb = Treebank()                       # the bundled demo treebank
    >>> tb.count("VP parent-of PP").results   # doctest: +SKIP
    """

    def __init__(self, db: str | Path | None = None, readonly: bool = False):
        if db is None:
            from .demo import demo_index_path

            db = demo_index_path()
        self.path = Path(db)
        if readonly and not self.path.exists():
            raise TreequeryError(f"no index at {self.path}; build one with `treequery index`")
        self.conn = schema.connect(str(self.path), readonly=readonly)
        if not readonly:
            schema.create_schema(self.conn)
        from .pattern.sql import register_functions

        register_functions(self.conn)

    def close(self) -> None:
        self.conn.close()

    def __enter__(self) -> Treebank:
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    # ------------------------------------------------------------ indexing

    def index(self, paths: Iterable[str], corpus: str = "default", meta: dict | None = None,
              strict: bool = False, progress: bool = False, report_file: str | None = None):
        """Index treebank files, directories or globs; returns an IndexReport."""
        from .index.builder import index_paths

        return index_paths(self.conn, list(paths), corpus=corpus, meta=meta or {},
                           strict=strict, progress=progress, report_file=report_file)

    def info(self) -> dict:
        from .index.stats import info

        return info(self.conn)

    def tree_brackets(self, tree_id: int, indent: bool = True) -> str:
        """One tree in bracket notation, labels and words exactly as in its file."""
        from .index.trees import load_tree, to_brackets

        return to_brackets(load_tree(self.conn, tree_id), indent=indent)

    def tree_location(self, tree_id: int) -> dict:
        from .index.trees import tree_location

        return tree_location(self.conn, tree_id)

    # ------------------------------------------------------------ searching

    def compile(self, pattern: PatternLike) -> Pattern:
        """Parse and check a pattern (a Pattern passes through unchanged)."""
        if isinstance(pattern, Pattern):
            return pattern
        from .pattern.check import compile_pattern

        return compile_pattern(pattern)

    def plan(self, pattern: PatternLike, count_empty: bool = False):
        from .pattern.plan import make_plan

        return make_plan(self.conn, self.compile(pattern), count_empty=count_empty)

    def find(self, pattern: PatternLike, limit: int | None = None, offset: int = 0,
             count_empty: bool = False, timeout: float | None = None) -> Iterator[Result]:
        """Yield results in corpus order, one per distinct assignment of the result variables."""
        from .results.fetch import fetch_results

        plan = self.plan(pattern, count_empty=count_empty)
        return fetch_results(self.conn, plan, limit=limit, offset=offset, timeout=timeout)

    def count(self, pattern: PatternLike, by: Iterable[str] = (), count_empty: bool = False,
              timeout: float | None = None) -> CountResult:
        """Count results and trees, optionally grouped by `VAR.ATTR` keys (or `ATTR`)."""
        from .results.fetch import count_results

        compiled = self.compile(pattern)
        keys = [parse_group_key(text, compiled) for text in by]
        plan = self.plan(compiled, count_empty=count_empty)
        counted = count_results(self.conn, plan, by=keys, timeout=timeout)
        # Report the keys as the user wrote them (`word`, not the internal `_1.word`).
        return replace(counted, by=tuple(by))

    def explain(self, pattern: PatternLike, count_empty: bool = False) -> str:
        """The AST, the plan with its estimates, the SQL with parameters and SQLite's plan."""
        from .pattern.describe import describe
        from .results.fetch import explain_text

        compiled = self.compile(pattern)
        plan = self.plan(compiled, count_empty=count_empty)
        return f"pattern:\n{_indent(describe(compiled))}\n\n{explain_text(self.conn, plan)}"


def parse_group_key(text: str, pattern: Pattern) -> tuple[str, str]:
    """`v.word` -> ("v", "word"); a bare `word` means the only result variable."""
    var, _, attr = text.rpartition(".")
    if not var:
        if len(pattern.result_vars) != 1:
            raise TreequeryError(
                f"--by {text}: say which variable, e.g. {pattern.result_vars[0]}.{text}")
        var = pattern.result_vars[0]
    if attr not in ATTRIBUTES:
        raise TreequeryError(
            f"--by {text}: unknown attribute {attr!r}; known: {', '.join(ATTRIBUTES)}")
    if var not in pattern.result_vars:
        named = ", ".join(pattern.result_vars)
        raise TreequeryError(f"--by {text}: {var!r} is not a result variable (results: {named})")
    return var, attr


def _indent(text: str) -> str:
    return "\n".join("  " + line for line in text.split("\n"))
