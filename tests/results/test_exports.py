"""Exports: JSON Lines and CSV/TSV columns, and sub-treebanks that index back to the same trees."""
from __future__ import annotations

import csv
import io
import json

import nltk
import pytest

from results.helpers import REPO_ROOT, cli, nltk_tree_at, tree_text_at, unescape
from treequery import Treebank

P = "vp:VP parent-of o:NP"


def reindex(folder_or_file, tmp_path) -> Treebank:
    bank = Treebank(tmp_path / "again.db")
    report = bank.index([str(folder_or_file)])
    assert not report.skipped and not report.failed_files
    return bank


@pytest.mark.parametrize("use_folder", [True, False])
def test_subtreebank_reindexes_to_the_matched_trees(demo_db, tmp_path, use_folder):
    with Treebank(demo_db, readonly=True) as bank:
        results = list(bank.find(P))
        matched = sorted({r.tree_id: r for r in results}.values(), key=lambda r: r.tree_id)
        if use_folder:
            exported = bank.export_subtreebank(results, tmp_path / "sub")
            target = tmp_path / "sub"
        else:
            target = tmp_path / "sub.mrg"
            with open(target, "w", encoding="utf-8") as out:
                exported = bank.export_subtreebank(results, out)
    assert [e.tree_id for e in exported] == [r.tree_id for r in matched]
    with reindex(target, tmp_path) as again:
        assert again.info()["trees"] == len(matched)
        for item, original in zip(exported, matched, strict=True):
            written = target / item.file if use_folder else target
            new_id = again.tree_at(str(written), item.line)
            # NLTK reads the re-indexed tree and the source tree identically.
            rebuilt = nltk.Tree.fromstring(again.tree_brackets(new_id))
            assert rebuilt == nltk_tree_at(original.path, original.line)
            assert (item.source, item.source_line) == (original.path, original.line)


def test_subtreebank_manifest_points_back_to_the_sources(demo_db, tmp_path, monkeypatch):
    monkeypatch.chdir(REPO_ROOT)
    folder = tmp_path / "sub"
    cli("find", "--db", str(demo_db), P, "--format", "treebank", "--out", str(folder))
    with open(folder / "trees.tsv", encoding="utf-8") as handle:
        rows = list(csv.DictReader(handle, delimiter="\t"))
    assert rows
    for row in rows:
        # The tree written at file:line is, bracket for bracket, the one at source:source_line.
        written = nltk_tree_at(folder / row["file"], int(row["line"]))
        assert written == nltk_tree_at(REPO_ROOT / row["source"], int(row["source_line"]))


def test_json_lines_agree_with_nltk(demo_db, monkeypatch):
    monkeypatch.chdir(REPO_ROOT)
    output = cli("find", "--db", str(demo_db), P, "--format", "json")
    rows = [json.loads(line) for line in output.splitlines()]
    assert len(rows) > 100
    for row in rows:
        tree = nltk_tree_at(row["file"], row["line"])
        overt = [unescape(w) for w, tag in tree.pos() if tag != "-NONE-"]  # Penn: empties
        for node in row["nodes"].values():
            first, last = node["span"]
            expected = "" if first is None else " ".join(overt[first - 1:last])
            assert node["words"] == expected
        assert set(row["nodes"]) == {"vp", "o"}


@pytest.mark.parametrize("fmt,delimiter", [("csv", ","), ("tsv", "\t")])
def test_tables_have_stable_columns_per_variable(demo_db, monkeypatch, fmt, delimiter):
    monkeypatch.chdir(REPO_ROOT)
    output = cli("find", "--db", str(demo_db), P, "--format", fmt)
    rows = list(csv.reader(io.StringIO(output), delimiter=delimiter))
    header, body = rows[0], rows[1:]
    for var in ("vp", "o"):
        for column in ("label", "category", "functions", "start", "end", "words"):
            assert f"{var}.{column}" in header
    assert header[:5] == ["tree", "document", "file", "line", "ordinal"]
    assert all(len(row) == len(header) for row in body)
    for row in body:
        record = dict(zip(header, row, strict=True))
        text = tree_text_at(record["file"], int(record["line"]))
        assert nltk.Tree.fromstring(text)  # file:line points at the start of a tree
        assert record["vp.category"] == "VP" and record["o.category"] == "NP"


def test_empty_result_still_prints_the_header(demo_db):
    output = cli("find", "--db", str(demo_db), 'x:NP "no-such-word-here"', "--format", "csv")
    assert output.splitlines() == ["tree,document,file,line,ordinal,x.label,x.category,"
                                   "x.functions,x.start,x.end,x.words,x.headword,x.headtag"]
