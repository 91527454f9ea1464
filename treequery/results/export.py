"""Results as data: JSON Lines, CSV and TSV rows, and a sub-treebank of the matched trees."""
from __future__ import annotations

import csv
from collections.abc import Callable, Iterable, Iterator, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import TextIO

from treequery.results.display import shown_name, shown_path
from treequery.results.model import Result

TREE_COLUMNS = ("tree", "document", "file", "line", "ordinal")
NODE_COLUMNS = ("label", "category", "functions", "start", "end", "words", "headword", "headtag")
MANIFEST = "trees.tsv"
MANIFEST_COLUMNS = ("file", "line", "tree", "source", "source_line")


def result_json(result: Result) -> dict:
    """One JSON Lines object: where the result is, and each named variable's node."""
    return {
        "tree": result.tree_id,
        "document": result.document,
        "file": shown_path(result.path),
        "line": result.line,
        "ordinal": result.ordinal,
        "nodes": {
            shown_name(var): {
                "id": node.id,
                "label": node.label,
                "category": node.category,
                "functions": node.functions,
                "span": [node.tok_first, node.tok_last],
                "words": node.words,
                "headword": node.head_word,
                "headtag": node.head_tag,
            }
            for var, node in result.bindings.items()
        },
    }


def table_header(result_vars: Sequence[str]) -> list[str]:
    """Stable columns: the tree's, then `VAR.ATTR` for every result variable in order."""
    header = list(TREE_COLUMNS)
    for var in result_vars:
        header += [f"{shown_name(var)}.{column}" for column in NODE_COLUMNS]
    return header


def table_row(result: Result, result_vars: Sequence[str]) -> list:
    row = [result.tree_id, result.document, shown_path(result.path), result.line, result.ordinal]
    for var in result_vars:
        node = result.bindings[var]
        row += [node.label, node.category, node.functions,
                "" if node.tok_first is None else node.tok_first,
                "" if node.tok_last is None else node.tok_last, node.words,
                node.head_word or "", node.head_tag or ""]
    return row


def table_writer(out: TextIO, delimiter: str) -> Callable[[list], None]:
    """A row writer for CSV (`,`) or TSV (tab); one line per row, flushed by the caller."""
    writer = csv.writer(out, delimiter=delimiter, lineterminator="\n")
    return writer.writerow


# ---------------------------------------------------------------- sub-treebank

@dataclass(frozen=True, slots=True)
class ExportedTree:
    """One tree written to a sub-treebank and where it came from."""

    file: str           # the file it was written to ('-' for a stream)
    line: int           # 1-based line of its opening bracket there
    tree_id: int        # its number in the searched index
    source: str         # the file it was read from
    source_line: int


def distinct_trees(results: Iterable[Result]) -> list[Result]:
    """One result per matched tree, in corpus order (tree numbers follow it)."""
    first: dict[int, Result] = {}
    for result in results:
        first.setdefault(result.tree_id, result)
    return [first[tree_id] for tree_id in sorted(first)]


def write_tree_stream(trees: Iterable[tuple[Result, str]], out: TextIO,
                      file: str = "-") -> Iterator[ExportedTree]:
    """Write bracketed trees one after another, a blank line between them."""
    line = 1
    for result, brackets in trees:
        out.write(brackets + "\n\n")
        yield ExportedTree(file, line, result.tree_id, result.path, result.line)
        line += brackets.count("\n") + 2


def write_tree_folder(trees: Iterable[tuple[Result, str]], folder: Path) -> list[ExportedTree]:
    """One file per source document (same name), and a `trees.tsv` manifest.

    The files keep the source's file names, so a sub-treebank reads like the corpus
    it came from; the manifest maps every written tree back to its source line.
    """
    folder.mkdir(parents=True, exist_ok=True)
    names: dict[str, str] = {}  # source path -> written file name
    handles: dict[str, TextIO] = {}
    lines: dict[str, int] = {}
    exported: list[ExportedTree] = []
    try:
        for result, brackets in trees:
            name = names.get(result.path) or _free_name(result.document, set(names.values()))
            names[result.path] = name
            if name not in handles:
                handles[name] = open(folder / name, "w", encoding="utf-8")  # noqa: SIM115
                lines[name] = 1
            handles[name].write(brackets + "\n\n")
            exported.append(ExportedTree(name, lines[name], result.tree_id, result.path,
                                         result.line))
            lines[name] += brackets.count("\n") + 2
    finally:
        for handle in handles.values():
            handle.close()
    _write_manifest(folder / MANIFEST, exported)
    return exported


def _free_name(document: str, taken: set[str]) -> str:
    """The source's file name, numbered when two sources share one name.

    Trees are written as plain text, so a `.gz` ending is dropped.
    """
    document = document.removesuffix(".gz")
    if document not in taken:
        return document
    stem, dot, suffix = document.partition(".")
    number = 2
    while f"{stem}-{number}{dot}{suffix}" in taken:
        number += 1
    return f"{stem}-{number}{dot}{suffix}"


def _write_manifest(path: Path, exported: Sequence[ExportedTree]) -> None:
    with open(path, "w", encoding="utf-8") as handle:
        write = table_writer(handle, "\t")
        write(list(MANIFEST_COLUMNS))
        for tree in exported:
            write([tree.file, tree.line, tree.tree_id, shown_path(tree.source),
                   tree.source_line])
