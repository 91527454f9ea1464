"""Indexing files: bad input, re-indexing, atomic replacement, metadata and the skip report."""
from __future__ import annotations

import gzip
import hashlib
import json

import pytest
from nltk import Tree

from index.tree_encoding import encode_nltk, encode_parsed
from treequery.errors import TreebankFormatError
from treequery.index.builder import NODE_INDEX_NAMES, index_paths
from treequery.index.schema import connect
from treequery.index.stats import info
from treequery.index.trees import load_tree, tree_location

# Invented sentences (demo-style); the Penn layout: an unlabelled outer bracket.
GOOD = """( (S (NP-SBJ (DT The) (NN cat)) (VP (VBD sat)) (. .)) )
( (S (NP-SBJ (PRP It)) (VP (VBD purred) (NP (-NONE- *T*-1))) (. .)) )
"""
OTHER = """(ROOT (S (NP (NNS Owls)) (VP (VBP hoot)) (. .)))

(ROOT (FRAG (NP (DT A) (NN moth))))
"""
FIRST = "( (S (NP (NN one)) (VP (VBZ works))) )\n"
THIRD = "( (S (NP (NN three)) (VP (VBZ works))) )\n"


@pytest.fixture
def conn(tmp_path):
    connection = connect(str(tmp_path / "test.db"))
    yield connection
    connection.close()


@pytest.fixture
def earlier(conn, tmp_path):
    """A document indexed before the file under test, and a snapshot of its rows."""
    path = tmp_path / "earlier.mrg"
    path.write_text(GOOD, encoding="utf-8")
    index_paths(conn, [path])
    return _snapshot(conn, path.name)


def _snapshot(conn, name: str) -> tuple:
    document = conn.execute(
        "SELECT id, sha256, n_trees FROM document WHERE name = ?", (name,)).fetchone()
    trees = conn.execute("SELECT * FROM tree WHERE document = ? ORDER BY id",
                         (document[0],)).fetchall()
    nodes = conn.execute(
        "SELECT node.* FROM node JOIN tree ON node.tree = tree.id WHERE tree.document = ?"
        " ORDER BY node.id", (document[0],)).fetchall()
    return document, trees, nodes


def _texts(conn, name: str) -> list[str]:
    return [text for (text,) in conn.execute(
        "SELECT tree.text FROM tree JOIN document ON document.id = tree.document"
        " WHERE document.name = ? ORDER BY ordinal", (name,))]


def _assert_consistent(conn) -> None:
    """No orphan rows, and the planner statistics equal fresh counts."""
    orphans = conn.execute(
        "SELECT count(*) FROM node LEFT JOIN tree ON tree.id = node.tree"
        " WHERE tree.id IS NULL OR node.id NOT BETWEEN tree.first_node AND tree.last_node"
    ).fetchone()[0]
    assert orphans == 0
    in_trees = conn.execute("SELECT coalesce(sum(last_node - first_node + 1), 0) FROM tree")
    assert in_trees.fetchone()[0] == conn.execute("SELECT count(*) FROM node").fetchone()[0]
    assert conn.execute("SELECT count(*) FROM tree LEFT JOIN document ON document.id ="
                        " tree.document WHERE document.id IS NULL").fetchone()[0] == 0
    stored = dict(conn.execute("SELECT code, n_nodes FROM label WHERE n_nodes != 0"))
    assert stored == dict(conn.execute("SELECT label, count(*) FROM node GROUP BY label"))
    stored = dict(conn.execute("SELECT code, n_nodes FROM word WHERE n_nodes != 0"))
    assert stored == dict(conn.execute(
        "SELECT word, count(*) FROM node WHERE word IS NOT NULL GROUP BY word"))
    indexes = {name for (name,) in conn.execute("SELECT name FROM sqlite_master")}
    assert set(NODE_INDEX_NAMES) <= indexes


# -- bad input: (file text, message fragment, line, column) --------------------------------

BAD_CASES = {
    # the second tree lacks its final ')'; the third starts in column 1 of line 3
    "unbalanced": (FIRST + "( (S (NP (NN two)) (VP (VBZ fails))\n" + THIRD,
                   "missing ')'", 3, 1),
    "stray_text": (FIRST + "oops here\n" + THIRD, "stray text 'oops'", 2, 1),
    # the bracket at column 20 has no label; that shows at the '(' in column 22
    "missing_label": (FIRST + "( (S (NP (NN two)) ( (VBZ fails))) )\n" + THIRD,
                      "missing label: the bracket at line 2, column 20", 2, 22),
}


@pytest.mark.parametrize("case", sorted(BAD_CASES))
def test_bad_tree_is_skipped_and_the_rest_indexed(case, conn, tmp_path, earlier):
    text, message, line, column = BAD_CASES[case]
    path = tmp_path / f"{case}.mrg"
    path.write_text(text, encoding="utf-8")
    report = index_paths(conn, [path])
    assert len(report.skipped) == 1
    skip = report.skipped[0]
    assert message in skip.message
    assert (skip.line, skip.column) == (line, column)
    assert report.trees == 2
    assert _texts(conn, path.name) == ["one works", "three works"]
    n_skipped = conn.execute("SELECT n_skipped FROM document WHERE name = ?", (path.name,))
    assert n_skipped.fetchone()[0] == 1
    assert _snapshot(conn, "earlier.mrg") == earlier
    _assert_consistent(conn)


@pytest.mark.parametrize("case", sorted(BAD_CASES))
def test_strict_makes_a_bad_tree_fatal(case, conn, tmp_path, earlier):
    text, message, line, column = BAD_CASES[case]
    path = tmp_path / f"{case}.mrg"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(TreebankFormatError) as caught:
        index_paths(conn, [path], strict=True)
    assert message in caught.value.message
    assert (caught.value.line, caught.value.column) == (line, column)
    # the whole file is rolled back: not even its first, good tree stays
    assert conn.execute("SELECT count(*) FROM document WHERE name = ?",
                        (path.name,)).fetchone()[0] == 0
    assert _snapshot(conn, "earlier.mrg") == earlier
    _assert_consistent(conn)


def _invalid_utf8(tmp_path):
    path = tmp_path / "latin1.mrg"
    # "caf\xe9" is Latin-1, not UTF-8: byte 0xe9 sits at byte column 17 of line 2
    path.write_bytes(FIRST.encode() + b"( (S (NP (NN caf\xe9)) (VP (VBZ fails))) )\n"
                     + THIRD.encode())
    return path


def test_invalid_utf8_skips_its_tree(conn, tmp_path, earlier):
    path = _invalid_utf8(tmp_path)
    report = index_paths(conn, [path])
    assert [(s.line, s.column) for s in report.skipped] == [(2, 17)]
    assert "UTF-8" in report.skipped[0].message
    assert _texts(conn, path.name) == ["one works", "three works"]
    assert _snapshot(conn, "earlier.mrg") == earlier
    with pytest.raises(TreebankFormatError) as caught:
        index_paths(conn, [path], corpus="strict", strict=True)
    assert (caught.value.line, caught.value.column) == (2, 17)
    _assert_consistent(conn)


def _truncated_gz(tmp_path, name="cut.mrg.gz"):
    whole = gzip.compress((GOOD * 200).encode())
    path = tmp_path / name
    path.write_bytes(whole[: len(whole) // 2])
    return path


def test_truncated_gz_fails_the_whole_file(conn, tmp_path, earlier):
    path = _truncated_gz(tmp_path)
    good = tmp_path / "later.mrg"
    good.write_text(OTHER, encoding="utf-8")
    report = index_paths(conn, [path, good])
    assert [failed for failed, _ in report.failed_files] == [str(path)]
    assert "gzip" in report.failed_files[0][1]
    assert conn.execute("SELECT count(*) FROM document WHERE name = ?",
                        (path.name,)).fetchone()[0] == 0
    assert _texts(conn, "later.mrg") == ["Owls hoot .", "A moth"]  # the run went on
    assert _snapshot(conn, "earlier.mrg") == earlier
    with pytest.raises(TreebankFormatError):
        index_paths(conn, [path], strict=True)
    _assert_consistent(conn)


def test_empty_file_is_a_warning(conn, tmp_path, earlier):
    path = tmp_path / "empty.mrg"
    path.write_text("", encoding="utf-8")
    report = index_paths(conn, [path])
    assert report.trees == 0 and not report.skipped
    assert len(report.warnings) == 1 and "empty.mrg" in report.warnings[0]
    assert conn.execute("SELECT n_trees FROM document WHERE name = 'empty.mrg'").fetchone() == (0,)
    assert _snapshot(conn, "earlier.mrg") == earlier


def test_skip_report_file_has_one_line_per_problem(conn, tmp_path):
    bad = tmp_path / "bad.mrg"
    bad.write_text(BAD_CASES["stray_text"][0] + "( (S (NP (NN x)) ( (NN y))) )\n",
                   encoding="utf-8")
    cut = _truncated_gz(tmp_path)
    out = tmp_path / "skips.txt"
    report = index_paths(conn, [bad, cut], report_file=out)
    lines = out.read_text(encoding="utf-8").splitlines()
    assert len(report.skipped) == 2 and len(report.failed_files) == 1
    assert len(lines) == 3
    assert lines[0].startswith(f"{bad}:2:1: stray text")
    assert lines[1].startswith(f"{bad}:4:")
    assert lines[2].startswith(f"{cut}:")
    assert info(conn)["skipped"] == 2


# -- re-indexing -------------------------------------------------------------------------


def test_unchanged_file_is_left_alone(conn, tmp_path, earlier):
    path = tmp_path / "earlier.mrg"
    report = index_paths(conn, [path])
    assert (report.documents_unchanged, report.documents_added, report.trees) == (1, 0, 0)
    assert _snapshot(conn, "earlier.mrg") == earlier


def test_changed_file_replaces_its_trees(conn, tmp_path, earlier):
    other = tmp_path / "other.mrg"
    other.write_text(OTHER, encoding="utf-8")
    index_paths(conn, [other])
    kept = _snapshot(conn, "other.mrg")
    path = tmp_path / "earlier.mrg"
    path.write_text(GOOD + FIRST + THIRD, encoding="utf-8")
    report = index_paths(conn, [path])
    assert (report.documents_replaced, report.documents_added, report.trees) == (1, 0, 4)
    document, trees, nodes = _snapshot(conn, "earlier.mrg")
    assert document[0] == earlier[0][0]  # the same document row, updated
    assert document[2] == len(trees) == 4
    assert min(node[0] for node in nodes) > max(node[0] for node in earlier[2])
    assert _snapshot(conn, "other.mrg") == kept
    assert info(conn)["trees"] == 6
    for tree, text in zip(trees, _lines(GOOD + FIRST + THIRD), strict=True):
        assert encode_parsed(load_tree(conn, tree[0])) == encode_nltk(Tree.fromstring(text))
    _assert_consistent(conn)


def _lines(text: str) -> list[str]:
    """The trees of a fixture text, which holds one tree per line."""
    return [line for line in text.splitlines() if line.strip()]


def test_failed_replacement_keeps_the_old_trees(conn, tmp_path):
    path = tmp_path / "book.mrg.gz"
    path.write_bytes(gzip.compress(GOOD.encode()))
    index_paths(conn, [path])
    before = _snapshot(conn, path.name)
    _truncated_gz(tmp_path, path.name)  # the file changes into a broken one
    report = index_paths(conn, [path])
    assert len(report.failed_files) == 1
    assert _snapshot(conn, path.name) == before  # old trees, old sha256
    _assert_consistent(conn)


def test_strict_failure_in_a_changed_file_keeps_the_old_trees(conn, tmp_path, earlier):
    path = tmp_path / "earlier.mrg"
    # a good first tree with a new label and a new word, then a missing label
    path.write_text("( (XYZ-NEW (NN novel)) )\n( (S (NP (NN x)) ( (NN y))) )\n",
                    encoding="utf-8")
    with pytest.raises(TreebankFormatError):
        index_paths(conn, [path], strict=True)
    assert _snapshot(conn, "earlier.mrg") == earlier
    assert conn.execute("SELECT count(*) FROM label WHERE text = 'XYZ-NEW'").fetchone() == (0,)
    # codes handed out for the failed file were forgotten, so the next load stores them
    report = index_paths(conn, [path])
    assert (report.documents_replaced, report.trees, len(report.skipped)) == (1, 1, 1)
    assert _texts(conn, "earlier.mrg") == ["novel"]
    assert conn.execute("SELECT n_nodes FROM label WHERE text = 'XYZ-NEW'").fetchone() == (1,)
    assert conn.execute("SELECT n_nodes FROM word WHERE text = 'novel'").fetchone() == (1,)
    _assert_consistent(conn)


def test_new_labels_of_a_rolled_back_file_do_not_break_the_next_file(conn, tmp_path):
    broken = tmp_path / "a.mrg.gz"
    whole = gzip.compress(("( (QQQ (ZZZ novelword)) )\n" * 3000).encode())
    broken.write_bytes(whole[: len(whole) - 20])
    good = tmp_path / "b.mrg"
    good.write_text("( (QQQ (ZZZ novelword)) )\n", encoding="utf-8")
    report = index_paths(conn, [broken, good])
    assert len(report.failed_files) == 1 and report.trees == 1
    assert conn.execute("SELECT n_nodes FROM label WHERE text = 'QQQ'").fetchone() == (1,)
    _assert_consistent(conn)


# -- metadata and locations --------------------------------------------------------------


def test_document_row_and_metadata(conn, tmp_path):
    folder = tmp_path / "news"
    folder.mkdir()
    (folder / "a.mrg").write_text(GOOD, encoding="utf-8")
    (folder / "b.mrg").write_text(OTHER, encoding="utf-8")
    (folder / "documents.tsv").write_text("file\tgenre\tyear\na.mrg\tfable\t2001\n",
                                          encoding="utf-8")
    index_paths(conn, [folder], corpus="mine", meta={"genre": "news", "source": "invented"})
    rows = {name: (path, size, sha, json.loads(meta)) for name, path, size, sha, meta in
            conn.execute("SELECT name, path, size, sha256, meta FROM document")}
    path, size, sha, meta = rows["a.mrg"]
    assert path == str((folder / "a.mrg").resolve())
    assert size == len(GOOD.encode())
    assert sha == hashlib.sha256(GOOD.encode()).hexdigest()  # SHA-256: FIPS 180-4, stdlib
    assert meta == {"genre": "fable", "year": "2001", "source": "invented"}  # sidecar wins
    assert rows["b.mrg"][3] == {"genre": "news", "source": "invented"}
    assert info(conn)["corpora"] == [{"name": "mine", "documents": 2, "trees": 4}]
    tree_id = conn.execute("SELECT tree.id FROM tree JOIN document ON document.id ="
                           " tree.document WHERE document.name = 'b.mrg' AND ordinal = 2"
                           ).fetchone()[0]
    location = tree_location(conn, tree_id)
    assert location["name"] == "b.mrg" and location["ordinal"] == 2
    assert location["line"] == 3  # the blank line separates the two trees


def test_same_file_in_two_corpora_is_two_documents(conn, tmp_path):
    path = tmp_path / "a.mrg"
    path.write_text(GOOD, encoding="utf-8")
    index_paths(conn, [path], corpus="one")
    index_paths(conn, [path], corpus="two")
    summary = info(conn)
    assert [c["name"] for c in summary["corpora"]] == ["one", "two"]
    assert summary["trees"] == 4
    _assert_consistent(conn)


def test_progress_bar_goes_to_stderr(conn, tmp_path, capsys):
    path = tmp_path / "a.mrg"
    path.write_text(GOOD, encoding="utf-8")
    index_paths(conn, [path], progress=True)
    captured = capsys.readouterr()
    assert captured.out == ""
    assert "file" in captured.err
