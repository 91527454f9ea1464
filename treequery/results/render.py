"""One printable block per result for every `find` output mode; the CLI only echoes them."""
from __future__ import annotations

import csv
import io
import json
from collections.abc import Callable, Sequence
from dataclasses import dataclass

from treequery.index.trees import TreeNode
from treequery.results.brackets import result_brackets
from treequery.results.display import Painter, location, shown_name
from treequery.results.export import result_json, table_header, table_row
from treequery.results.kwic import DEFAULT_WIDTH, kwic_line
from treequery.results.model import Result
from treequery.results.textart import result_drawing

# Modes that show trees print a blank line between results.
FORMATS = ("text", "kwic", "brackets", "tree", "json", "csv", "tsv", "treebank")
TREE_FORMATS = ("brackets", "tree")


@dataclass(frozen=True, slots=True)
class OutputOptions:
    """The output options shared by every command that prints results."""

    fmt: str = "text"
    color: bool = False
    width: int = DEFAULT_WIDTH
    kwic_var: str | None = None   # the result variable whose words are the match
    whole: bool = False           # brackets/tree: the whole tree, not the matched subtree


def text_line(result: Result, painter: Painter) -> str:
    """`file:line  tree N  var=LABEL "words" ...` on one line."""
    parts = [painter.dim(location(result))]
    for var, node in result.bindings.items():
        name = shown_name(var)
        parts.append(f'{name}={node.label} "{painter.words(node.words, name)}"')
    return "  ".join(parts)


def render(result: Result, tree_of: Callable[[int], TreeNode], options: OutputOptions,
           result_vars: Sequence[str]) -> str:
    """The text one result prints as in the chosen mode (no trailing newline)."""
    fmt = options.fmt
    if fmt == "json":
        return json.dumps(result_json(result), ensure_ascii=False)
    if fmt in ("csv", "tsv"):
        return _delimited(table_row(result, result_vars), fmt)
    painter = Painter.for_result(result, options.color)
    if fmt == "text":
        return text_line(result, painter)
    tree = tree_of(result.tree_id)
    if fmt == "kwic":
        return kwic_line(result, tree, options.kwic_var or result_vars[0], options.width, painter)
    if fmt == "brackets":
        return result_brackets(result, tree, options.color, whole=options.whole) + "\n"
    if fmt == "tree":
        return result_drawing(result, tree, options.color, whole=options.whole) + "\n"
    raise ValueError(f"no result view called {fmt!r}")


def header(options: OutputOptions, result_vars: Sequence[str]) -> str | None:
    """The header line printed before the first result (CSV and TSV only)."""
    if options.fmt in ("csv", "tsv"):
        return _delimited(table_header(result_vars), options.fmt)
    return None


def _delimited(row: list, fmt: str) -> str:
    buffer = io.StringIO()
    csv.writer(buffer, delimiter="," if fmt == "csv" else "\t", lineterminator="").writerow(row)
    return buffer.getvalue()
