"""Index-time syntax: lexical heads, c-command scopes and coindexation links per tree.

Runs after the node rows are loaded (a pass over the node table, so it does not care
how the rows were produced) and fills `node_syntax` and `link` (schema.py):

- head: the lexical head of every node by head rules (heads.py; default Collins 1999,
  Appendix A). The head child of a phrase is the child whose lexical head is the
  phrase's, which is how the search tells head children apart.
- branch_up / branch_reach: the id range of the node's first branching ancestor (an
  ancestor with at least two children), which makes c-command (Reinhart 1976) a
  range test: A c-commands B iff neither dominates the other and B lies inside
  that ancestor's subtree.
- link: coindexation (Bies et al. 1995) within one tree: a constituent whose label
  carries index n (WHNP-1, NP-SBJ-2) and each empty element whose word carries n
  (*T*-1, *-2, *ICH*-3, ...), kind 'coindex'; and the gapping index: the constituent
  labelled -n and the gapped one labelled =n, kind 'gap'.

The head rules an index was built with are stored in its `meta` table, so every later
run uses the same rules; indexing with different rules recomputes every tree.
"""
from __future__ import annotations

import sqlite3
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path

from .heads import HeadRules, head_child, load_head_rules, parse_head_rules

RULES_KEY = "head_rules"
EMPTY_CATEGORY = "-NONE-"  # Bies et al. 1995: empty elements are preterminals tagged -NONE-
TREES_PER_BATCH = 2000

NODE_COLUMNS_SQL = ("SELECT id, last, parent, n_children, label, word, tok_first FROM node "
                    "WHERE id BETWEEN ? AND ? ORDER BY id")
INSERT_SYNTAX = "INSERT OR REPLACE INTO node_syntax VALUES (?,?,?,?)"
INSERT_LINK = "INSERT OR IGNORE INTO link VALUES (?,?,?)"


@dataclass(frozen=True, slots=True)
class _Codes:
    """What the pass needs from the label and word tables."""

    category: dict[int, str]
    coindex: dict[int, int]          # label code -> coindex (labels that have one)
    gapindex: dict[int, int]
    ref_index: dict[int, int]        # word code -> reference index (empty words with one)


def _codes(conn: sqlite3.Connection) -> _Codes:
    category, coindex, gapindex = {}, {}, {}
    for code, cat, co, gap in conn.execute(
            "SELECT code, category, coindex, gapindex FROM label"):
        category[code] = cat
        if co is not None:
            coindex[code] = co
        if gap is not None:
            gapindex[code] = gap
    ref_index = dict(conn.execute(
        "SELECT code, ref_index FROM word WHERE ref_index IS NOT NULL"))
    return _Codes(category, coindex, gapindex, ref_index)


# ---------------------------------------------------------------- one tree

class _HeadCache:
    """Head choices memoised by (category, child categories, silent children)."""

    def __init__(self, rules: HeadRules):
        self.rules = rules
        self.seen: dict[tuple, int] = {}

    def choose(self, category: str, children: tuple[str, ...], silent: tuple[bool, ...]) -> int:
        key = (category, children, silent)
        found = self.seen.get(key)
        if found is None:
            found = self.seen[key] = head_child(self.rules, category, children, silent)
        return found


def tree_syntax(rows: list[tuple], codes: _Codes, heads: _HeadCache
                ) -> tuple[list[tuple], list[tuple]]:
    """node_syntax rows and link rows of one tree, from its node rows in pre-order.

    `rows` are (id, last, parent, n_children, label, word, tok_first).
    """
    ids, lasts, parents, n_children, labels, _words, tok_firsts = zip(*rows, strict=True)
    root = ids[0]
    size = len(rows)
    cats = [codes.category[label] for label in labels]
    silent = [tok is None for tok in tok_firsts]
    kids: list[list[int]] = [[] for _ in range(size)]
    for i in range(1, size):
        kids[parents[i] - root].append(i)
    head = list(range(size))
    choose = heads.choose
    for i in range(size - 1, -1, -1):  # children before their parents
        children = kids[i]
        if children:
            chosen = choose(cats[i], tuple([cats[c] for c in children]),
                            tuple([silent[c] for c in children]))
            head[i] = head[children[chosen]]
    branch: list[int | None] = [None] * size
    out = [(root, head[0], None, None)]
    for i in range(1, size):
        parent = parents[i] - root
        up = branch[i] = parent if n_children[parent] >= 2 else branch[parent]
        if up is None:
            out.append((ids[i], head[i] - i, None, None))
        else:
            out.append((ids[i], head[i] - i, i - up, lasts[up] - ids[i]))
    return out, _links(rows, codes)


def _links(rows: list[tuple], codes: _Codes) -> list[tuple]:
    by_index: dict[int, list[int]] = {}
    traces: list[tuple[int, int]] = []
    gapped: list[tuple[int, int]] = []
    for node_id, _last, _parent, _n, label, word, _tok in rows:
        index = codes.coindex.get(label)
        if index is not None:
            by_index.setdefault(index, []).append(node_id)
        gap = codes.gapindex.get(label)
        if gap is not None:
            gapped.append((gap, node_id))
        if word is not None and codes.category[label] == EMPTY_CATEGORY:
            ref = codes.ref_index.get(word)
            if ref is not None:
                traces.append((ref, node_id))
    links = []
    for kind, targets in (("coindex", traces), ("gap", gapped)):
        for index, target in targets:
            links.extend((antecedent, target, kind) for antecedent in by_index.get(index, ())
                         if antecedent != target)
    return links


# ---------------------------------------------------------------- the whole index

def _stored_rules(conn: sqlite3.Connection) -> str | None:
    row = conn.execute("SELECT value FROM meta WHERE key = ?", (RULES_KEY,)).fetchone()
    return row[0] if row else None


def index_head_rules(conn: sqlite3.Connection) -> HeadRules:
    """The head rules the index was built with (the default table for an empty index)."""
    stored = _stored_rules(conn)
    return parse_head_rules(stored, "<index>") if stored is not None else load_head_rules()


def _unannotated_trees(conn: sqlite3.Connection) -> Iterator[tuple[int, int]]:
    return conn.execute(
        "SELECT first_node, last_node FROM tree WHERE NOT EXISTS "
        "(SELECT 1 FROM node_syntax WHERE node_syntax.id = tree.first_node) "
        "ORDER BY first_node")


def _batches(trees: list[tuple[int, int]]) -> Iterator[list[tuple[int, int]]]:
    for start in range(0, len(trees), TREES_PER_BATCH):
        yield trees[start:start + TREES_PER_BATCH]


def _annotate_batch(conn: sqlite3.Connection, batch: list[tuple[int, int]], codes: _Codes,
                    heads: _HeadCache) -> None:
    syntax_rows: list[tuple] = []
    link_rows: list[tuple] = []
    # one read per batch; trees are contiguous id ranges within it
    every = conn.execute(NODE_COLUMNS_SQL, (batch[0][0], batch[-1][1])).fetchall()
    offset = {row[0]: place for place, row in enumerate(every)}
    for first, last in batch:
        start = offset.get(first)
        rows = every[start:start + last - first + 1] if start is not None else []
        if not rows:
            continue
        tree_rows, tree_links = tree_syntax(rows, codes, heads)
        syntax_rows.extend(tree_rows)
        link_rows.extend(tree_links)
    conn.executemany(INSERT_SYNTAX, syntax_rows)
    conn.executemany(INSERT_LINK, link_rows)


def annotate_index(conn: sqlite3.Connection, head_rules: str | Path | None = None) -> int:
    """Fill node_syntax and link for every tree that lacks them; returns trees annotated.

    (Rows of deleted nodes go with them: a trigger, schema.py.) With `head_rules` (a
    file) different from the rules stored in the index, every tree is annotated again
    with the new rules, which are then stored.
    """
    stored = _stored_rules(conn)
    rules = load_head_rules(head_rules) if head_rules is not None else index_head_rules(conn)
    own_transaction = not conn.in_transaction
    if own_transaction:
        conn.execute("BEGIN")
    try:
        if stored != rules.text:
            conn.execute("DELETE FROM node_syntax")
            conn.execute("DELETE FROM link")  # links do not depend on rules; cheap to redo
            conn.execute("INSERT OR REPLACE INTO meta(key, value) VALUES (?, ?)",
                         (RULES_KEY, rules.text))
        codes, heads = _codes(conn), _HeadCache(rules)
        trees = list(_unannotated_trees(conn))
        for batch in _batches(trees):
            _annotate_batch(conn, batch, codes, heads)
        if own_transaction:
            conn.execute("COMMIT")
    except BaseException:
        if own_transaction:
            conn.execute("ROLLBACK")
        raise
    return len(trees)
