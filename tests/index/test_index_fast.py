"""The fast indexing paths agree with the reference path: the fast reader's rows equal
the rows of the public reader (read_trees) + node_rows, and the worker-process pipeline
builds the same index as the single-process run.

The reference path is itself checked against nltk.Tree (the reference library) in
test_index_corpora.py and test_index_properties.py; here the fast paths are held to it.
"""
from __future__ import annotations

import sqlite3
import re
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from index.test_index_properties import roots
from treequery.errors import TreebankFormatError
from treequery.index.builder import index_paths
from treequery.index.rows import (
    NO_VALUE,
    NODE_COLUMNS,
    RESTART,
    CodeTables,
    fast_rows,
    file_rows,
    node_rows,
)
from treequery.index.schema import connect, create_schema
from treequery.index.trees import to_brackets
from treequery.read.brackets import read_file, read_text_chunks
from treequery.read.model import SkippedTree


def _codes() -> CodeTables:
    conn = sqlite3.connect(":memory:")
    create_schema(conn)
    return CodeTables(conn)


def reference_rows(path: Path, first_node: int = 1, first_tree: int = 1):
    """Rows by the public reader and node_rows: (node rows, tree rows, skipped, codes)."""
    codes = _codes()
    nodes, trees, skipped = [], [], []
    node_id, tree_id = first_node, first_tree
    for item in read_file(path):
        if isinstance(item, SkippedTree):
            skipped.append(item)
            continue
        rows, tokens = node_rows(item.root, tree_id, node_id, codes)
        nodes.extend(tuple(NO_VALUE if v is None else v for v in row) for row in rows)
        trees.append((tree_id, item.ordinal, item.line, node_id, node_id + len(rows) - 1,
                      len(tokens), rows[0][10], " ".join(codes.forms[c] for c in tokens)))
        node_id += len(rows)
        tree_id += 1
    return nodes, trees, skipped, codes.take_pending()


def fast_file_rows(path: Path, first_node: int = 1, first_tree: int = 1):
    """Rows by file_rows (fast path, or the full reader after it declines)."""
    codes = _codes()
    nodes, trees, restarts = [], [], 0
    stream = file_rows(path, codes, first_node, first_tree)
    while True:
        try:
            batch = next(stream)
        except StopIteration as end:
            skipped = end.value
            break
        if batch == RESTART:
            nodes, trees, restarts = [], [], restarts + 1
            continue
        flat, tree_rows = batch
        nodes.extend(tuple(flat[k:k + NODE_COLUMNS]) for k in range(0, len(flat), NODE_COLUMNS))
        trees.extend(tree_rows)
    return nodes, trees, skipped, codes.take_pending(), restarts


def _same(path: Path, first_node: int = 1, first_tree: int = 1) -> int:
    """Assert that both paths give the same rows; returns how often the fast path declined."""
    nodes, trees, skipped, pending = reference_rows(path, first_node, first_tree)
    fast_nodes, fast_trees, fast_skipped, fast_pending, restarts = fast_file_rows(
        path, first_node, first_tree)
    assert fast_nodes == nodes
    assert fast_trees == trees
    assert fast_skipped == skipped
    assert fast_pending == pending  # the same new labels and words, in the same code order
    return restarts


# -- layouts the fast path reads itself ------------------------------------------------------

# a (TAG word) pair that does not start a line (a one-node tree spread over lines is left
# to the full reader on purpose)
_PRETERMINAL = re.compile(r"(?<=[ (])\(([^\s()]+) ([^\s()]+)\)")


def _one_line(trees) -> str:
    return "".join(to_brackets(root, indent=False) + "\n" for root in trees)


def _indented(trees) -> str:
    return "".join(to_brackets(root, indent=True) + "\n\n" for root in trees)


def _word_on_next_line(trees) -> str:
    """Indented, every inner preterminal's word on a line of its own (long-word layout)."""
    return _PRETERMINAL.sub(r"(\1\n        \2)", _indented(trees))


def _crlf_and_bom(trees) -> str:
    return "\ufeff" + _indented(trees).replace("\n", "\r\n")


def _several_per_line(trees) -> str:
    return "  ".join(to_brackets(root, indent=False) for root in trees) + "\n"


FIXTURE_OK = [HealthCheck.function_scoped_fixture]  # tmp_path is only overwritten per example
LAYOUTS = {"one_line": _one_line, "indented": _indented, "word_on_next_line": _word_on_next_line,
           "crlf_and_bom": _crlf_and_bom, "several_per_line": _several_per_line}


@settings(max_examples=60, deadline=None, suppress_health_check=FIXTURE_OK)
@given(st.lists(roots(), min_size=1, max_size=5), st.sampled_from(sorted(LAYOUTS)),
       st.integers(1, 1000))
def test_fast_path_reads_well_formed_layouts_like_the_reader(tmp_path, trees, layout, first):
    path = tmp_path / "trees.mrg"
    path.write_bytes(LAYOUTS[layout](trees).encode("utf-8"))
    restarts = _same(path, first_node=first, first_tree=first + 7)
    assert restarts == 0  # read by the fast path itself, not handed to the full reader


# -- damaged input: whatever the fast path accepts, the reader reads the same way ------------

DAMAGE = ("(", ")", "x", " (", "\n(", "\n", "()", "(NP", "(NN\n")


@settings(max_examples=150, deadline=None, suppress_health_check=FIXTURE_OK)
@given(st.lists(roots(), min_size=1, max_size=4), st.sampled_from(sorted(LAYOUTS)),
       st.data())
def test_damaged_input_gives_the_readers_rows_and_skips(tmp_path, trees, layout, data):
    text = LAYOUTS[layout](trees)
    for _ in range(data.draw(st.integers(1, 3))):
        where = data.draw(st.integers(0, len(text)))
        action = data.draw(st.sampled_from(["insert", "delete", "break_before_bracket"]))
        if action == "insert":
            text = text[:where] + data.draw(st.sampled_from(DAMAGE)) + text[where:]
        elif action == "delete":
            text = text[:where] + text[where + 1:]
        elif "(" in text[1:]:  # a '(' moved to column 1, perhaps inside an open tree
            where = text.find("(", max(where, 1))
            where = where if where > 0 else text.find("(", 1)
            text = text[:where] + "\n" + text[where:]
    path = tmp_path / "damaged.mrg"
    path.write_bytes(text.encode("utf-8"))
    _same(path)


@pytest.mark.parametrize("raw", [
    b"( (S (NP (NN caf\xe9)) (VP (VBZ opens))) )\n( (S (NP (NN b)) (VP (VBZ c))) )\n",
    b"(NN alone)\n( (S (NP (NN two)) (VP (VBZ c))) )\n",
    b"( NP (NN label-after-space))\n",
    b"(NN\n  split-root)\n",
    b"",
    b"\n\n   \n",
    b"( (S (NP (NN x))\n(VP (VB y))) )\n",
    b"( (S (NP (NN x)) (VP (VB y))) ) junk\n( (S (NP (NN z))) )\n",
    b"( (S (NP (NN x))) ))\n( (S (NP (NN z))) )\n",
    b"( (S (NP (NN x)) (NP)) )\n",
], ids=["invalid_utf8", "preterminal_root", "label_after_space", "split_root", "empty",
        "blank", "column_one_inside_a_tree", "stray_text", "extra_close", "empty_phrase"])
def test_special_files_give_the_readers_rows(tmp_path, raw):
    path = tmp_path / "special.mrg"
    path.write_bytes(raw)
    _same(path)


def test_chunks_hold_whole_lines_and_drop_the_byte_order_mark(tmp_path):
    path = tmp_path / "lines.mrg"
    text = "".join(f"(NN w{k})\n" for k in range(5000))
    path.write_bytes(b"\xef\xbb\xbf" + text.encode("utf-8"))
    chunks = list(read_text_chunks(path, chunk_bytes=1000))
    assert len(chunks) > 10
    assert all(chunk.endswith("\n") for chunk in chunks)
    assert "".join(chunks) == text


def test_a_tree_split_over_chunks_is_read_whole(tmp_path):
    """Trees that cross chunk boundaries keep their rows and line numbers."""
    path = tmp_path / "long.mrg"
    tree = "( (S\n" + "".join(f"    (NP (NN w{k}))\n" for k in range(400)) + "  ) )\n\n"
    path.write_text(tree * 5, encoding="utf-8")
    codes = _codes()
    fast = [batch for batch in fast_rows(read_text_chunks(path, 512), codes, 1, 1)]
    assert [t[2] for batch in fast for t in batch[1]] == [1 + 403 * k for k in range(5)]
    assert _same(path) == 0


# -- the worker-process pipeline builds the same index --------------------------------------

TABLES = {
    "node": "SELECT * FROM node ORDER BY id",
    "tree": "SELECT * FROM tree ORDER BY id",
    "label": "SELECT * FROM label ORDER BY code",
    "word": "SELECT * FROM word ORDER BY code",
    "document": "SELECT id, corpus, path, name, size, sha256, meta, n_trees, n_skipped"
                " FROM document ORDER BY id",
}


def _tables(db: Path) -> dict[str, list]:
    conn = sqlite3.connect(db)
    try:
        return {name: conn.execute(sql).fetchall() for name, sql in TABLES.items()}
    finally:
        conn.close()


def _build(db: Path, paths, processes: int, **options):
    conn = connect(str(db))
    try:
        return index_paths(conn, paths, processes=processes, **options)
    finally:
        conn.close()


@pytest.mark.parametrize("corpus", ["wsj", "gum"])
def test_worker_pipeline_builds_the_same_index(corpus, request, tmp_path):
    folder = request.getfixturevalue(f"{corpus}_dir")
    paths = [str(folder / "*.mrg")] if corpus == "wsj" else [str(folder / "const" / "*.ptb")]
    one = _build(tmp_path / "one.db", paths, processes=1)
    two = _build(tmp_path / "two.db", paths, processes=2)
    assert (one.trees, one.nodes, one.documents_added) == (two.trees, two.nodes,
                                                           two.documents_added)
    first, second = _tables(tmp_path / "one.db"), _tables(tmp_path / "two.db")
    for name in TABLES:
        assert first[name] == second[name], name


@pytest.mark.parametrize("corpus", ["wsj", "gum"])
def test_fast_path_reads_the_corpora_like_the_reader(corpus, request):
    folder = request.getfixturevalue(f"{corpus}_dir")
    files = sorted(folder.glob("*.mrg")) if corpus == "wsj" else sorted(
        (folder / "const").glob("*.ptb"))
    for path in files[::7]:  # every 7th file keeps the test short; all are read above
        assert _same(path) == 0, path


GOOD = "( (S (NP-SBJ (DT The) (NN owl)) (VP (VBD slept)) (. .)) )\n"
BAD = "( (S (NP-SBJ (DT A) (NN bat)) (VP (VBD flew)) (. .))\n"  # one ')' short


def _files(folder: Path, texts: dict[str, str]) -> list[str]:
    folder.mkdir(exist_ok=True)
    for name, text in texts.items():
        (folder / name).write_text(text, encoding="utf-8")
    return [str(folder / name) for name in sorted(texts)]


def test_worker_pipeline_reindexes_skips_and_fails_like_one_process(tmp_path):
    """Unchanged, changed, bad-tree and unreadable (.gz) files, indexed twice each way."""
    results = {}
    for processes in (1, 2):
        folder = tmp_path / f"p{processes}"
        paths = _files(folder, {"a.mrg": GOOD * 3, "b.mrg": GOOD + BAD + GOOD,
                                "c.mrg": GOOD * 2})
        (folder / "d.mrg.gz").write_bytes(b"\x1f\x8b\x08\x00broken")
        db = tmp_path / f"p{processes}.db"
        first = _build(db, paths + [str(folder / "d.mrg.gz")], processes)
        (folder / "c.mrg").write_text(GOOD * 4, encoding="utf-8")
        second = _build(db, paths, processes)
        results[processes] = (first, second, _tables(db))
    (first1, second1, tables1), (first2, second2, tables2) = results[1], results[2]
    assert (first1.documents_added, len(first1.skipped), len(first1.failed_files)) == (3, 1, 1)
    assert (second1.documents_unchanged, second1.documents_replaced) == (2, 1)
    for one, two in ((first1, first2), (second1, second2)):
        assert (one.documents_added, one.documents_replaced, one.documents_unchanged,
                one.trees, one.nodes) == (two.documents_added, two.documents_replaced,
                                          two.documents_unchanged, two.trees, two.nodes)
        assert [(s.line, s.column, s.message) for s in one.skipped] == [
            (s.line, s.column, s.message) for s in two.skipped]
        assert [m.split(":", 1)[1] for _, m in one.failed_files] == [
            m.split(":", 1)[1] for _, m in two.failed_files]
    for name in ("node", "tree", "label", "word"):
        assert tables1[name] == tables2[name], name


def test_worker_pipeline_strict_stops_at_the_first_bad_tree(tmp_path):
    paths = _files(tmp_path / "in", {"a.mrg": GOOD, "b.mrg": GOOD + BAD, "c.mrg": GOOD})
    db = tmp_path / "strict.db"
    with pytest.raises(TreebankFormatError) as caught:
        _build(db, paths, processes=2, strict=True)
    assert caught.value.path.endswith("b.mrg") and caught.value.line == 2
    conn = sqlite3.connect(db)
    names = [name for (name,) in conn.execute("SELECT name FROM document ORDER BY id")]
    assert names == ["a.mrg"]  # the file before stays; the bad one left nothing
    assert conn.execute("SELECT count(*) FROM tree").fetchone()[0] == 1
    conn.close()
