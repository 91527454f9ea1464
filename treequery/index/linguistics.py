"""Index-time syntax: lexical heads, c-command scopes and coindexation links per tree.

Computed where the node rows are built (pipeline.py: in the worker process of a large
build), before they are written: the columns `head`, `branch_up` and `branch_reach` of
each node row, and the rows of `link` (schema.py). A pass over the node table
(`annotate_index`) does the same for trees that lack it, after the head rules change.

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
from .rows import NO_VALUE, NODE_COLUMNS, CodeTables, syntax_codes

HEAD_COLUMN = 13  # place of `head` in a node row; branch_up and branch_reach follow

RULES_KEY = "head_rules"
EMPTY_CATEGORY = "-NONE-"  # Bies et al. 1995: empty elements are preterminals tagged -NONE-
TREES_PER_BATCH = 2000

# NULLs as NO_VALUE, as in the flat rows of the row builder (rows.py)
NODE_COLUMNS_SQL = ("SELECT id, last, ifnull(parent, -1), n_children, label, ifnull(word, -1),"
                    " ifnull(tok_first, -1) FROM node WHERE id BETWEEN ? AND ? ORDER BY id")
UPDATE_SYNTAX = ("UPDATE node SET head = ?, branch_up = nullif(?,-1), branch_reach = nullif(?,-1)"
                 " WHERE id = ?")
INSERT_LINK = "INSERT OR IGNORE INTO link VALUES (?,?,?)"


@dataclass(frozen=True, slots=True)
class SyntaxCodes:
    """What the pass needs from the label and word tables."""

    category: dict[int, str]
    coindex: dict[int, int]          # label code -> coindex (labels that have one)
    gapindex: dict[int, int]
    ref_index: dict[int, int]        # word code -> reference index (empty words with one)

    @classmethod
    def of_tables(cls, tables: CodeTables) -> SyntaxCodes:
        """A live view of code tables that are still growing (the row builder's)."""
        return cls(tables.categories, tables.coindexes, tables.gapindexes, tables.ref_indexes)


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


def tree_syntax(root: int, lasts, parents, n_children, labels, words, tok_firsts,
                codes: SyntaxCodes, heads: _HeadCache
                ) -> tuple[list[int], list[int], list[int], list[tuple]]:
    """The head, branch_up and branch_reach columns (NO_VALUE for NULL) and the link rows
    of one tree.

    The arguments are the tree's node columns in pre-order (NO_VALUE for NULL), the
    root's id first: ids are root, root + 1, ... so places in the lists are id - root.
    """
    size = len(labels)
    category = codes.category
    cats = [category[label] for label in labels]
    silent = [tok < 0 for tok in tok_firsts]
    head = list(range(size))
    choose = heads.choose
    for i in range(size - 1, -1, -1):  # children before their parents
        count = n_children[i]
        if count < 2:
            if count:  # an only child is the head, whatever the rules
                head[i] = head[i + 1]
            continue
        children = [i + 1]  # pre-order: the next sister starts after a child's last node
        for _ in range(count - 1):
            children.append(lasts[children[-1]] - root + 1)
        chosen = choose(cats[i], tuple([cats[c] for c in children]),
                        tuple([silent[c] for c in children]))
        head[i] = head[children[chosen]]
    ups = [NO_VALUE] * size  # place of the first branching ancestor
    reaches = [NO_VALUE] * size
    for i in range(1, size):
        parent = parents[i] - root
        up = ups[i] = parent if n_children[parent] >= 2 else ups[parent]
        if up != NO_VALUE:
            reaches[i] = lasts[up] - root - i
    offsets = [h - i for i, h in enumerate(head)]
    branch_up = [NO_VALUE if up == NO_VALUE else i - up for i, up in enumerate(ups)]
    return offsets, branch_up, reaches, _links(root, labels, words, codes)


def _links(root: int, labels, words, codes: SyntaxCodes) -> list[tuple]:
    by_index: dict[int, list[int]] = {}
    traces: list[tuple[int, int]] = []
    gapped: list[tuple[int, int]] = []
    coindex, gapindex, ref_index = codes.coindex, codes.gapindex, codes.ref_index
    for i, label in enumerate(labels):
        if label in coindex:
            by_index.setdefault(coindex[label], []).append(root + i)
        if label in gapindex:
            gapped.append((gapindex[label], root + i))
    for i, word in enumerate(words):
        if word in ref_index and codes.category[labels[i]] == EMPTY_CATEGORY:
            traces.append((ref_index[word], root + i))
    links = []
    for kind, targets in (("coindex", traces), ("gap", gapped)):
        for index, target in targets:
            links.extend((antecedent, target, kind) for antecedent in by_index.get(index, ())
                         if antecedent != target)
    return links


def annotate_rows(flat, trees: list[tuple], codes: SyntaxCodes, heads: _HeadCache
                  ) -> list[tuple]:
    """Fill the head, branch_up and branch_reach columns of flat node rows (rows.py) in
    place; returns the batch's link rows.

    `trees` are the batch's tree rows: (id, ordinal, line, first node, last node, ...).
    """
    base = flat[0]
    links: list[tuple] = []
    width = NODE_COLUMNS
    for tree in trees:
        root = tree[3]
        start, end = (root - base) * width, (tree[4] - base + 1) * width
        offsets, branch_up, reaches, tree_links = tree_syntax(
            root, flat[start + 1:end:width], flat[start + 3:end:width],
            flat[start + 6:end:width], flat[start + 7:end:width], flat[start + 8:end:width],
            flat[start + 11:end:width], codes, heads)
        flat[start + HEAD_COLUMN:end:width] = offsets
        flat[start + HEAD_COLUMN + 1:end:width] = branch_up
        flat[start + HEAD_COLUMN + 2:end:width] = reaches
        links.extend(tree_links)
    return links


class Annotator:
    """Index-time syntax for batches of new rows, made where the rows are made."""

    def __init__(self, tables: CodeTables, rules: HeadRules):
        self.codes = SyntaxCodes.of_tables(tables)
        self.heads = _HeadCache(rules)

    def __call__(self, flat, trees: list[tuple]) -> list[tuple]:
        return annotate_rows(flat, trees, self.codes, self.heads) if trees else []


def write_links(conn: sqlite3.Connection, links: list[tuple]) -> None:
    conn.executemany(INSERT_LINK, links)


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
        "SELECT first_node, last_node FROM tree WHERE "
        "(SELECT head FROM node WHERE node.id = tree.first_node) IS NULL ORDER BY first_node")


def _batches(trees: list[tuple[int, int]]) -> Iterator[list[tuple[int, int]]]:
    for start in range(0, len(trees), TREES_PER_BATCH):
        yield trees[start:start + TREES_PER_BATCH]


def _annotate_batch(conn: sqlite3.Connection, batch: list[tuple[int, int]], codes: SyntaxCodes,
                    heads: _HeadCache) -> None:
    updates: list[tuple] = []
    link_rows: list[tuple] = []
    # one read per batch; trees are contiguous id ranges within it
    every = conn.execute(NODE_COLUMNS_SQL, (batch[0][0], batch[-1][1])).fetchall()
    offset = {row[0]: place for place, row in enumerate(every)}
    for first, last in batch:
        start = offset.get(first)
        rows = every[start:start + last - first + 1] if start is not None else []
        if not rows:
            continue
        ids, lasts, parents, n_children, labels, words, tok_firsts = zip(*rows, strict=True)
        offsets, branch_up, reaches, tree_links = tree_syntax(
            first, lasts, parents, n_children, labels, words, tok_firsts, codes, heads)
        updates.extend(zip(offsets, branch_up, reaches, ids, strict=True))
        link_rows.extend(tree_links)
    conn.executemany(UPDATE_SYNTAX, updates)
    conn.executemany("DELETE FROM link WHERE antecedent BETWEEN ? AND ?",
                     [(first, last) for first, last in batch])
    write_links(conn, link_rows)


def prepare_head_rules(conn: sqlite3.Connection, head_rules: str | Path | None = None
                       ) -> HeadRules:
    """The rules new trees are annotated with while they are loaded.

    Rules other than the stored ones are stored now, and what the old rules computed is
    dropped (annotate_index then annotates the older trees again).
    """
    rules = load_head_rules(head_rules) if head_rules is not None else index_head_rules(conn)
    if _stored_rules(conn) != rules.text:
        own_transaction = not conn.in_transaction
        if own_transaction:
            conn.execute("BEGIN")
        _mark_unannotated(conn)
        conn.execute("INSERT OR REPLACE INTO meta(key, value) VALUES (?, ?)",
                     (RULES_KEY, rules.text))
        if own_transaction:
            conn.execute("COMMIT")
    return rules


def _mark_unannotated(conn: sqlite3.Connection) -> None:
    """A root without a head marks its tree as not annotated (with the current rules)."""
    conn.execute("UPDATE node SET head = NULL WHERE id IN (SELECT first_node FROM tree)")


def annotate_index(conn: sqlite3.Connection, head_rules: str | Path | None = None) -> int:
    """Fill the syntax columns and links of every tree that lacks them (its root has no
    head); returns trees annotated.

    With `head_rules` (a file) different from the rules stored in the index, every tree
    is annotated again with the new rules, which are then stored.
    """
    stored = _stored_rules(conn)
    rules = load_head_rules(head_rules) if head_rules is not None else index_head_rules(conn)
    own_transaction = not conn.in_transaction
    if own_transaction:
        conn.execute("BEGIN")
    try:
        if stored != rules.text:
            _mark_unannotated(conn)
            conn.execute("INSERT OR REPLACE INTO meta(key, value) VALUES (?, ?)",
                         (RULES_KEY, rules.text))
        trees = list(_unannotated_trees(conn))
        if trees:  # usually none: new trees are annotated as they are built
            codes, heads = SyntaxCodes(*syntax_codes(conn)), _HeadCache(rules)
            for batch in _batches(trees):
                _annotate_batch(conn, batch, codes, heads)
        if own_transaction:
            conn.execute("COMMIT")
    except BaseException:
        if own_transaction:
            conn.execute("ROLLBACK")
        raise
    return len(trees)
