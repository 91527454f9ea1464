"""Expanding paths, hashing files and reading the documents.tsv sidecar."""
from __future__ import annotations

import hashlib
import os

import pytest

from treequery.errors import TreebankFormatError, TreequeryError
from treequery.read.sources import document_metadata, expand_paths, file_sha256


@pytest.fixture()
def tree_dir(tmp_path):
    for name in ["a.mrg", "b.mrg", "sub/c.mrg", "sub/deeper/d.ptb", ".hidden.mrg",
                 ".git/config", "documents.tsv", "sub/documents.tsv"]:
        path = tmp_path / name
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text("(A a)\n")
    return tmp_path


def names(paths, root):
    return [path.relative_to(root).as_posix() for path in paths]


def test_directory_is_expanded_recursively_without_hidden_files_or_sidecars(tree_dir):
    assert names(expand_paths([str(tree_dir)]), tree_dir) == [
        "a.mrg", "b.mrg", "sub/c.mrg", "sub/deeper/d.ptb"]


def test_files_and_globs_sorted_without_duplicates(tree_dir):
    found = expand_paths([str(tree_dir / "b.mrg"), str(tree_dir / "*.mrg"),
                          str(tree_dir / "**" / "*.ptb")])
    assert names(found, tree_dir) == ["a.mrg", "b.mrg", "sub/deeper/d.ptb"]


def test_glob_matching_a_directory_expands_it(tree_dir):
    assert names(expand_paths([str(tree_dir / "su?")]), tree_dir) == [
        "sub/c.mrg", "sub/deeper/d.ptb"]


def test_glob_that_matches_nothing_names_the_pattern(tree_dir):
    pattern = str(tree_dir / "*.nothing")
    with pytest.raises(TreequeryError) as raised:
        expand_paths([str(tree_dir / "a.mrg"), pattern])
    assert pattern in str(raised.value)
    assert isinstance(raised.value, FileNotFoundError)


def test_missing_path_is_an_error(tree_dir):
    with pytest.raises(FileNotFoundError, match="no-such.mrg"):
        expand_paths([str(tree_dir / "no-such.mrg")])


def test_file_sha256_matches_hashlib(tmp_path):
    path = tmp_path / "big.bin"
    data = os.urandom(3 * (1 << 20) + 17)  # crosses chunk boundaries
    path.write_bytes(data)
    assert file_sha256(path) == hashlib.sha256(data).hexdigest()


def test_document_metadata_from_sidecar(tmp_path):
    (tmp_path / "documents.tsv").write_text(
        "file\tgenre\ttitle\n"
        "a.mrg\tnews\tA headline\n"
        "\n"
        "b.mrg\tfiction\t\n", encoding="utf-8")
    assert document_metadata(tmp_path / "a.mrg") == {"genre": "news", "title": "A headline"}
    assert document_metadata(tmp_path / "b.mrg") == {"genre": "fiction"}
    assert document_metadata(tmp_path / "c.mrg") == {}


def test_document_metadata_without_sidecar(tmp_path):
    assert document_metadata(tmp_path / "a.mrg") == {}


def test_sidecar_is_read_again_after_a_change(tmp_path):
    sidecar = tmp_path / "documents.tsv"
    sidecar.write_text("file\tgenre\na.mrg\tnews\n")
    assert document_metadata(tmp_path / "a.mrg") == {"genre": "news"}
    sidecar.write_text("file\tgenre\na.mrg\tinterview\n")
    assert document_metadata(tmp_path / "a.mrg") == {"genre": "interview"}


@pytest.mark.parametrize("content, line", [
    ("name\tgenre\na.mrg\tnews\n", 1),                 # header must start with 'file'
    ("file\tgenre\na.mrg\tnews\textra\n", 2),          # more fields than the header
    ("file\tgenre\na.mrg\tnews\na.mrg\tblog\n", 3),    # two rows for one file
])
def test_bad_sidecar(tmp_path, content, line):
    (tmp_path / "documents.tsv").write_text(content)
    with pytest.raises(TreebankFormatError) as raised:
        document_metadata(tmp_path / "a.mrg")
    assert raised.value.line == line and raised.value.path.endswith("documents.tsv")


def test_directory_skips_files_that_are_not_treebanks_but_explicit_files_are_read(tmp_path):
    # Regression: a README beside the .mrg files was read as trees.
    (tmp_path / "a.mrg").write_text("(S (NN a))\n")
    (tmp_path / "b.ptb.gz").write_bytes(b"")
    (tmp_path / "README.orig").write_text("notes (C) 1995\n")
    (tmp_path / "rules.tq").write_text("rule x\n")
    assert [p.name for p in expand_paths([tmp_path])] == ["a.mrg", "b.ptb.gz"]
    assert [p.name for p in expand_paths([tmp_path / "README.orig"])] == ["README.orig"]
