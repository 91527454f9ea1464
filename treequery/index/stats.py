"""Summary statistics of an index: what `info` shows and what the planner can rely on."""
from __future__ import annotations

import json
import sqlite3

TOTALS = """
SELECT count(*), coalesce(sum(n_tokens), 0), coalesce(sum(n_leaves), 0),
       coalesce(sum(last_node - first_node + 1), 0)
FROM tree
"""

CORPORA = """
SELECT corpus.name, count(DISTINCT document.id), coalesce(sum(document.n_trees), 0)
FROM corpus LEFT JOIN document ON document.corpus = corpus.id
GROUP BY corpus.id ORDER BY corpus.name
"""

DOCUMENTS = """
SELECT document.id, corpus.name, document.name, document.path, document.n_trees,
       document.n_skipped, document.meta
FROM document JOIN corpus ON corpus.id = document.corpus
ORDER BY corpus.name, document.path
"""

CATEGORIES = """
SELECT category, sum(n_nodes) AS nodes FROM label
GROUP BY category HAVING nodes > 0
ORDER BY nodes DESC, category
"""


def info(conn: sqlite3.Connection, per_document: bool = False) -> dict:
    """Counts over the whole index; `labels` maps each category to its node count, largest first.

    Nodes include preterminals and unlabelled outer brackets; `empty_elements` are
    the leaves under -NONE-, `tokens` the overt words.
    """
    trees, tokens, leaves, nodes = conn.execute(TOTALS).fetchone()
    documents, skipped = conn.execute(
        "SELECT count(*), coalesce(sum(n_skipped), 0) FROM document"
    ).fetchone()
    result = {
        "corpora": [
            {"name": name, "documents": n_documents, "trees": n_trees}
            for name, n_documents, n_trees in conn.execute(CORPORA)
        ],
        "documents": documents,
        "trees": trees,
        "tokens": tokens,
        "empty_elements": leaves - tokens,
        "nodes": nodes,
        "skipped": skipped,
        "labels": dict(conn.execute(CATEGORIES).fetchall()),
    }
    if per_document:
        result["per_document"] = [_document_entry(row) for row in conn.execute(DOCUMENTS)]
    return result


def _document_entry(row: tuple) -> dict:
    document_id, corpus, name, path, n_trees, n_skipped, meta = row
    return {"id": document_id, "corpus": corpus, "name": name, "path": path,
            "trees": n_trees, "skipped": n_skipped, "meta": json.loads(meta)}
