"""Helpers for the consistency-check tests: small indexed treebanks written in tmp_path."""
from __future__ import annotations

from pathlib import Path

from treequery.api import Treebank


def build_index(tmp_path: Path, files: dict[str, list[str]], corpus: str = "test") -> Path:
    """Write each file's trees one per line and index them all; returns the index path."""
    paths = []
    for name, trees in files.items():
        path = tmp_path / name
        path.write_text("\n".join(trees) + "\n", encoding="utf-8")
        paths.append(str(path))
    db = tmp_path / "index.db"
    with Treebank(db) as treebank:
        report = treebank.index(paths, corpus=corpus)
    assert not report.failed_files and not report.skipped
    return db
