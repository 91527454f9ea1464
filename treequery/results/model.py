"""The result model: what a search returns, independent of how it is shown."""
from __future__ import annotations

import os
from dataclasses import dataclass, field


@dataclass(frozen=True, slots=True)
class BoundNode:
    """A node bound to a named variable of the pattern."""

    id: int                 # node id in the index
    label: str              # as written
    category: str
    functions: str          # '-'-joined function tags, '' when none
    tok_first: int | None   # 1-based overt-token span in the tree, None when no overt word
    tok_last: int | None
    words: str              # the overt words covered, un-escaped, space-separated
    head_word: str | None = None  # lexical head (Collins 1999 rules), un-escaped
    head_tag: str | None = None   # its part-of-speech tag


@dataclass(frozen=True, slots=True)
class Result:
    """One distinct assignment of nodes to the pattern's result variables."""

    tree_id: int
    document: str           # document name (file name)
    path: str               # path of the source file
    line: int               # 1-based line where the tree starts
    ordinal: int            # 1-based number of the tree in its file
    bindings: dict[str, BoundNode] = field(default_factory=dict)

    @property
    def location(self) -> str:
        """`file:line` for an editor, the file relative to the working folder when inside it."""
        return f"{display_path(self.path)}:{self.line}"


def display_path(path: str) -> str:
    """A stored (absolute) path as a person wants to read it: relative when under the cwd."""
    try:
        relative = os.path.relpath(path)
    except ValueError:  # another drive on Windows
        return path
    return path if relative.startswith("..") else relative


@dataclass(frozen=True, slots=True)
class CountGroup:
    key: tuple
    results: int


@dataclass(frozen=True, slots=True)
class CountResult:
    results: int            # distinct results
    trees: int              # distinct trees with at least one result
    by: tuple[str, ...] = ()
    groups: tuple[CountGroup, ...] = ()

    def to_json(self) -> dict:
        return {
            "results": self.results,
            "trees": self.trees,
            "by": list(self.by),
            "groups": [{"key": list(g.key), "results": g.results} for g in self.groups],
        }


@dataclass(frozen=True, slots=True)
class DocumentSize:
    """One document of an index with the denominators a breakdown needs."""

    id: int
    corpus: str
    name: str
    meta_value: str | None  # the value of the metadata key asked for, None when absent
    trees: int              # trees in the tree table
    tokens: int             # overt words of those trees (tree.n_tokens summed)


@dataclass(frozen=True, slots=True)
class DocumentCount:
    """Results of one pattern in one document (for one group key when counted by keys)."""

    document: int           # document id
    key: tuple
    results: int
    trees: int              # distinct trees of the document with at least one result
