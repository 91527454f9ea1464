"""The index schema: one table of nodes numbered in pre-order across the whole index.

Interval (nested-set) encoding: every node has `id`, its pre-order number over the
whole index, and `last`, the largest id inside its subtree, so
"a dominates b" is `a.id < b.id AND b.id <= a.last` with no tree comparison at all.
The nodes of one tree are the contiguous id range [tree.first_node, tree.last_node],
and the root of a tree is its first node.

Labels and words are integer-coded through the `label` and `word` tables, so the
node table stays narrow and joins compare integers.
"""
from __future__ import annotations

import sqlite3

from ..errors import TreequeryError

SCHEMA_VERSION = 2  # 2: heads and c-command scopes are node columns

SCHEMA = """
CREATE TABLE IF NOT EXISTS meta (
    key   TEXT PRIMARY KEY,
    value TEXT NOT NULL
);

CREATE TABLE IF NOT EXISTS corpus (
    id   INTEGER PRIMARY KEY,
    name TEXT NOT NULL UNIQUE,
    meta TEXT NOT NULL DEFAULT '{}'          -- JSON object
);

CREATE TABLE IF NOT EXISTS document (
    id         INTEGER PRIMARY KEY,
    corpus     INTEGER NOT NULL REFERENCES corpus(id),
    path       TEXT NOT NULL,                -- as resolved when indexed (absolute)
    name       TEXT NOT NULL,                -- file name shown to users
    size       INTEGER NOT NULL,             -- bytes on disk
    sha256     TEXT NOT NULL,                -- content hash of the bytes on disk
    meta       TEXT NOT NULL DEFAULT '{}',   -- JSON object (genre, source, ...)
    n_trees    INTEGER NOT NULL DEFAULT 0,
    n_skipped  INTEGER NOT NULL DEFAULT 0,   -- trees that could not be read
    indexed_at TEXT NOT NULL,
    UNIQUE (corpus, path)
);

CREATE TABLE IF NOT EXISTS tree (
    id         INTEGER PRIMARY KEY,
    document   INTEGER NOT NULL REFERENCES document(id),
    ordinal    INTEGER NOT NULL,             -- 1-based number of the tree in its file
    line       INTEGER NOT NULL,             -- 1-based line of its opening bracket
    first_node INTEGER NOT NULL,             -- id of the root
    last_node  INTEGER NOT NULL,             -- last id in the tree
    n_tokens   INTEGER NOT NULL,             -- overt words
    n_leaves   INTEGER NOT NULL,             -- words and empty elements
    text       TEXT NOT NULL                 -- overt words, un-escaped, space-separated
);
CREATE INDEX IF NOT EXISTS tree_document ON tree(document, ordinal);
CREATE INDEX IF NOT EXISTS tree_line ON tree(document, line);

-- Treebank II label decomposition (Bies et al. 1995), one row per distinct label.
CREATE TABLE IF NOT EXISTS label (
    code      INTEGER PRIMARY KEY,
    text      TEXT NOT NULL UNIQUE,          -- the label as written: NP-SBJ-1
    category  TEXT NOT NULL,                 -- NP ('' for the unlabelled outer bracket)
    functions TEXT NOT NULL DEFAULT '',      -- function tags in written order, '-'-joined: SBJ-TMP
    coindex   INTEGER,                       -- NP-SBJ-1 -> 1
    gapindex  INTEGER,                       -- NP=2 -> 2
    n_nodes   INTEGER NOT NULL DEFAULT 0     -- statistics for the planner
);

-- One row per distinct word as written; `form` is the un-escaped word (-LRB- -> ().
CREATE TABLE IF NOT EXISTS word (
    code       INTEGER PRIMARY KEY,
    text       TEXT NOT NULL UNIQUE,
    form       TEXT NOT NULL,
    empty_kind TEXT,                         -- kind of empty element, NULL for overt words
    ref_index  INTEGER,                      -- *T*-1 -> 1
    n_nodes    INTEGER NOT NULL DEFAULT 0
);

CREATE TABLE IF NOT EXISTS node (
    id         INTEGER PRIMARY KEY,          -- pre-order number over the whole index
    last       INTEGER NOT NULL,             -- largest id in this node's subtree
    tree       INTEGER NOT NULL,
    parent     INTEGER,                      -- NULL at a root
    depth      INTEGER NOT NULL,             -- 0 at a root
    position   INTEGER NOT NULL,             -- 1-based place among its sisters (1 at a root)
    n_children INTEGER NOT NULL,
    label      INTEGER NOT NULL,             -- label.code
    word       INTEGER,                      -- word.code on preterminals, else NULL
    leaf_first INTEGER NOT NULL,             -- 1-based, counting empty elements
    leaf_last  INTEGER NOT NULL,
    tok_first  INTEGER,                      -- 1-based, overt words only; NULL when the
    tok_last   INTEGER,                      -- node covers no overt word
    -- Heads and c-command scopes (treequery/index/linguistics.py computes them as the
    -- rows are built). Offsets from the node's own id: small numbers that SQLite
    -- stores in one byte or two.
    head         INTEGER,                    -- lexical head's id - id (0 on preterminals);
                                             -- NULL on a root: tree not annotated yet
    branch_up    INTEGER,                    -- id - id of the first ancestor with >= 2
                                             -- children; NULL when there is none
    branch_reach INTEGER                     -- that ancestor's last - id
);

-- Coindexation resolved within each tree (Bies et al. 1995): kind 'coindex' links a
-- constituent labelled -n to an empty element written with -n (*T*-1, *-2, *ICH*-3);
-- kind 'gap' links a constituent labelled -n to the gapped one labelled =n.
CREATE TABLE IF NOT EXISTS link (
    antecedent INTEGER NOT NULL,             -- node.id of the -n constituent
    target     INTEGER NOT NULL,             -- node.id of the empty element / =n node
    kind       TEXT NOT NULL,
    PRIMARY KEY (antecedent, target, kind)
) WITHOUT ROWID;
CREATE INDEX IF NOT EXISTS link_target ON link(target, antecedent);

-- Deleting nodes (re-indexing a document) deletes their links; a link never leaves
-- its tree, so its antecedent goes with it.
CREATE TRIGGER IF NOT EXISTS links_follow_node AFTER DELETE ON node BEGIN
    DELETE FROM link WHERE antecedent = old.id;
END;
"""

# Created after a bulk load, not before: building an index once is faster than
# keeping it up to date row by row.
NODE_INDEXES = """
CREATE INDEX IF NOT EXISTS node_label ON node(label);          -- + rowid: label then id range
CREATE INDEX IF NOT EXISTS node_parent ON node(parent, label);
CREATE INDEX IF NOT EXISTS node_word ON node(word) WHERE word IS NOT NULL;
"""


def connect(path: str, readonly: bool = False) -> sqlite3.Connection:
    """Open an index with the pragmas every connection needs."""
    if readonly:
        conn = sqlite3.connect(f"file:{path}?mode=ro", uri=True, check_same_thread=False)
    else:
        conn = sqlite3.connect(path, check_same_thread=False)
        conn.execute("PRAGMA journal_mode=WAL")  # searches can run while indexing
        conn.execute("PRAGMA synchronous=NORMAL")
    conn.execute("PRAGMA foreign_keys=OFF")
    conn.execute("PRAGMA cache_size=-65536")  # 64 MiB page cache
    conn.execute("PRAGMA temp_store=MEMORY")
    return conn


def schema_version(conn: sqlite3.Connection) -> int | None:
    """The schema version an index was built with (None: not an index yet)."""
    try:
        row = conn.execute("SELECT value FROM meta WHERE key = 'schema_version'").fetchone()
    except sqlite3.OperationalError:  # no meta table: an empty or foreign database
        return None
    return int(row[0]) if row else None


def check_schema_version(conn: sqlite3.Connection, path: str) -> None:
    """Refuse an index of another schema version with what to do about it."""
    found = schema_version(conn)
    if found is not None and found != SCHEMA_VERSION:
        raise TreequeryError(
            f"{path} was built by another version of treequery (index schema {found}, this "
            f"version reads {SCHEMA_VERSION}); build it again with `treequery index --db "
            f"NEW.db FILES...`")


def create_schema(conn: sqlite3.Connection) -> None:
    conn.executescript(SCHEMA)
    conn.executescript(NODE_INDEXES)
    conn.execute(
        "INSERT OR IGNORE INTO meta(key, value) VALUES ('schema_version', ?)",
        (str(SCHEMA_VERSION),),
    )
    conn.commit()
