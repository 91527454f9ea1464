"""The Python API: one `Treebank` object over an index, the layer every interface uses."""
from __future__ import annotations

import os
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
        schema.check_schema_version(self.conn, str(self.path))
        if not readonly:
            schema.create_schema(self.conn)
        from .pattern.sql import register_functions

        register_functions(self.conn)
        self._partner = None  # a results.partner.Partner once a large count needs one

    def close(self) -> None:
        if self._partner is not None:
            self._partner.close()
        self.conn.close()

    def partner_process(self):
        """The process that counts every other chunk of a large count on the other core
        (results/partner.py), started on first use; None where it cannot help."""
        from .results.fetch import count_chunk
        from .results.partner import Partner

        if self._partner is not None and not self._partner.ready():
            self._partner.close()  # it failed, or still counts for a search that failed
            self._partner = None
        if self._partner is None and self.path.is_file() and (os.cpu_count() or 1) > 1:
            self._partner = Partner(self.path, count_chunk)
        return self._partner

    def __enter__(self) -> Treebank:
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    # ------------------------------------------------------------ indexing

    def index(self, paths: Iterable[str], corpus: str = "default", meta: dict | None = None,
              strict: bool = False, progress: bool = False, report_file: str | None = None,
              head_rules: str | Path | None = None):
        """Index treebank files, directories or globs; returns an IndexReport.

        `head_rules`: a head-rule file (grammar/README.md, "Head rules") to use instead
        of the rules the index already has (the default table for a new index).
        """
        from .index.builder import index_paths

        return index_paths(self.conn, list(paths), corpus=corpus, meta=meta or {},
                           strict=strict, progress=progress, report_file=report_file,
                           head_rules=head_rules)

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

    def tree(self, tree_id: int):
        """Tree `tree_id` as TreeNode objects carrying node ids (to mark a result's nodes)."""
        from .index.trees import load_tree_nodes

        return load_tree_nodes(self.conn, tree_id)

    def tree_at(self, path: str, line: int) -> int:
        """The number of the tree spanning `line` of `path` (full, relative or trailing path).

        >>> Treebank().tree_at("board_minutes.mrg", 50)   # doctest: +SKIP
        5
        """
        from .index.trees import tree_at_line

        return tree_at_line(self.conn, path, line)

    def node_attributes(self, node_id: int) -> dict:
        """Every pattern-language attribute of one node (`tokens`, `depth`, `word`, ...)."""
        from .index.trees import node_attributes

        return node_attributes(self.conn, node_id)

    def allow_interrupt(self) -> None:
        """Let Ctrl-C stop a long search step: SQLite calls back into Python now and then,
        which is when Python notices the signal (the step then fails as `interrupted`)."""
        self.conn.set_progress_handler(lambda: 0, 50_000)

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
             count_empty: bool = False, timeout: float | None = None,
             sample: int | None = None, seed: int | None = None,
             sort: str | None = None) -> Iterator[Result]:
        """Yield results, one per distinct assignment of the result variables.

        In corpus order they stream as the search finds them. `sample=N` keeps a
        uniform random sample of N results (the same for the same `seed`), `sort`
        orders by one attribute of one variable (`"o.tokens"`, `"-o.tokens"` for
        descending); both read every result first. `offset` and `limit` then page
        through what is left.

        >>> [r.tree_id for r in Treebank().find("NP", sample=3, seed=1)]  # doctest: +SKIP
        """
        from .results import select
        from .results.fetch import fetch_results

        plan = self.plan(pattern, count_empty=count_empty)
        if sample is None and sort is None:
            return fetch_results(self.conn, plan, limit=limit, offset=offset, timeout=timeout)
        results = fetch_results(self.conn, plan, timeout=timeout)
        if sample is not None:
            results = select.sample(results, sample, seed)
        if sort is not None:
            key = select.parse_sort_key(sort, plan.pattern.result_vars)
            results = select.sort_results(results, key, self.node_attributes)
        return select.page(list(results), limit, offset)

    def result_vars(self, pattern: PatternLike) -> tuple[str, ...]:
        """The variables each result binds, in the pattern's order."""
        return tuple(self.compile(pattern).result_vars)

    def export_subtreebank(self, results: Iterable[Result], out) -> list:
        """Write each matched tree once, in corpus order, as bracketed text.

        `out` is a text stream (trees one after another) or a folder path (one file
        per source file, same names, plus a `trees.tsv` manifest of where each tree
        came from). Indexing the output gives back the same trees. Returns the
        ExportedTree records.
        """
        from .results.export import distinct_trees, write_tree_folder, write_tree_stream

        trees = ((r, self.tree_brackets(r.tree_id)) for r in distinct_trees(results))
        if isinstance(out, str | Path):
            return write_tree_folder(trees, Path(out))
        return list(write_tree_stream(trees, out))

    def count(self, pattern: PatternLike, by: Iterable[str] = (), count_empty: bool = False,
              timeout: float | None = None) -> CountResult:
        """Count results and trees, optionally grouped by `VAR.ATTR` keys (or `ATTR`)."""
        from .results.fetch import count_results

        compiled = self.compile(pattern)
        keys = [parse_group_key(text, compiled) for text in by]
        plan = self.plan(compiled, count_empty=count_empty)
        counted = count_results(self.conn, plan, by=keys, timeout=timeout,
                                partner=self.partner_process)
        # Report the keys as the user wrote them (`word`, not the internal `_1.word`).
        return replace(counted, by=tuple(by))

    # ------------------------------------------------------------ frequencies

    def frequencies(self, pattern: PatternLike, by: Iterable[str] = (), per: str | None = None,
                    count_empty: bool = False, timeout: float | None = None):
        """Counts per cell of a breakdown, normalised, with dispersion (a FrequencyTable).

        `per`: "corpus", "document", a metadata key (e.g. "genre"), or None for one cell
        of the whole index. Each row gives results, distinct trees, the cell's trees and
        tokens, results per 1,000 trees and per million tokens, and over the cell's
        documents the range and Gries's DP (README.md, "Counting and comparing").

        >>> Treebank().frequencies("VP parent-of PP", per="genre").rows[0]  # doctest: +SKIP
        """
        return self.pattern_frequencies({"": pattern}, by, per, count_empty, timeout,
                                        named=False)

    def pattern_frequencies(self, patterns, by: Iterable[str] = (), per: str | None = None,
                            count_empty: bool = False, timeout: float | None = None,
                            named: bool = True):
        """`frequencies` for several named patterns: a {name: pattern} mapping or the path of
        a pattern-set file. All are counted on one snapshot of the index (one read
        transaction), one statement per pattern; `timeout` applies to each pattern."""
        from .frequency.breakdown import CountJob, count_table
        from .frequency.patternset import read_pattern_set

        if isinstance(patterns, str | Path):
            patterns = {entry.name: entry.pattern for entry in read_pattern_set(patterns)}
        by = tuple(by)
        jobs = [CountJob(name, *self._count_plan(pattern, by, count_empty, name))
                for name, pattern in patterns.items()]
        return count_table(self.conn, jobs, per, by, named=named, timeout=timeout)

    def compare(self, pattern: PatternLike, a: str, b: str, by: Iterable[str] = (),
                count_empty: bool = False, timeout: float | None = None):
        """Compare two sides: counts, normalised frequencies, G², p-value, log ratio.

        A side is `corpus:NAME`, `document:NAME`, `KEY:VALUE` (metadata, e.g.
        `genre:letter`) or `index:PATH` (another index file, opened read-only). With
        `by`, one row per group, sorted by G² (largest first).

        >>> Treebank().compare("VP parent-of PP", "genre:letter", "genre:story")  # doctest: +SKIP
        """
        from .frequency.compare import compare_sides, parse_side

        sides = [parse_side(a), parse_side(b)]
        by = tuple(by)
        counted = [self._side_totals(side, pattern, by, count_empty, timeout) for side in sides]
        return compare_sides(*counted, by)

    def _side_totals(self, side, pattern: PatternLike, by: tuple[str, ...], count_empty: bool,
                     timeout: float | None):
        if side.kind == "index":
            with Treebank(side.value, readonly=True) as other:
                return other._local_side_totals(side, pattern, by, count_empty, timeout)
        return self._local_side_totals(side, pattern, by, count_empty, timeout)

    def _local_side_totals(self, side, pattern: PatternLike, by: tuple[str, ...],
                           count_empty: bool, timeout: float | None):
        """A side's documents in this index (all of them for `index:`) and their counts."""
        from .frequency.compare import side_documents, side_totals
        from .results.fetch import count_per_document, read_transaction

        plan, keys = self._count_plan(pattern, by, count_empty)
        with read_transaction(self.conn):
            documents = side_documents(self.conn, side)
            counts = count_per_document(self.conn, plan, keys, timeout=timeout)
        return side_totals(side, str(self.path.resolve()), documents, counts)

    def _count_plan(self, pattern: PatternLike, by: tuple[str, ...], count_empty: bool,
                    name: str = ""):
        """The plan and (var, attr) keys for counting; errors name the pattern of a set."""
        compiled = self.compile(pattern)
        try:
            keys = tuple(parse_group_key(text, compiled) for text in by)
        except TreequeryError as error:
            if name:
                raise TreequeryError(f"pattern {name!r}: {error}") from None
            raise
        return self.plan(compiled, count_empty=count_empty), keys

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
