"""Shared test fixtures: where the real treebanks are, and small helpers."""
from __future__ import annotations

import os
import sys
from pathlib import Path

import pytest

REPO_ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(REPO_ROOT))  # tests run the working tree, installed or not
sys.path.insert(0, str(REPO_ROOT / "tests"))

CORPORA = Path(os.environ.get("TREEQUERY_CORPORA", REPO_ROOT.parent / "shared" / "corpora"))
WSJ_DIR = CORPORA / "wsj-sample"
GUM_DIR = CORPORA / "gum"
DEMO_DIR = REPO_ROOT / "demo_treebank"


def _need(path: Path, what: str) -> Path:
    if not path.is_dir():
        pytest.skip(f"{what} not found at {path} "
                    "(set TREEQUERY_CORPORA to the shared corpora folder)")
    return path


@pytest.fixture(scope="session")
def wsj_dir() -> Path:
    """The Penn Treebank WSJ sample (.mrg files), read in place."""
    return _need(WSJ_DIR, "the WSJ sample of the shared corpora")


@pytest.fixture(scope="session")
def gum_dir() -> Path:
    """The GUM corpus (const/*.ptb and dep/*.conllu), read in place."""
    return _need(GUM_DIR, "the GUM corpus of the shared corpora")


@pytest.fixture(scope="session")
def demo_dir() -> Path:
    return _need(DEMO_DIR, "the demo treebank")


# -- built indexes, one per test session ------------------------------------------------

# Files of the demo folder that are documentation, not trees.
NOT_TREE_SUFFIXES = {".md", ".tsv", ".txt", ".json", ".py", ".db", ".svg", ".png"}


def _build_index(tmp_path_factory, name: str, paths: list[str]) -> Path:
    from treequery.index.builder import index_paths
    from treequery.index.schema import connect

    db = tmp_path_factory.mktemp(f"{name}-index") / f"{name}.db"
    conn = connect(str(db))
    try:
        index_paths(conn, paths, corpus=name)
    finally:
        conn.close()
    return db


def demo_tree_files(demo: Path) -> list[Path]:
    return sorted(p for p in demo.rglob("*") if p.is_file() and not p.name.startswith(".")
                  and p.suffix not in NOT_TREE_SUFFIXES)


@pytest.fixture(scope="session")
def demo_db(tmp_path_factory, demo_dir) -> Path:
    """An index of the demo treebank, built once per session."""
    files = demo_tree_files(demo_dir)
    if not files:
        pytest.skip(f"the demo treebank at {demo_dir} has no tree files yet")
    return _build_index(tmp_path_factory, "demo", [str(p) for p in files])


@pytest.fixture(scope="session")
def wsj_db(tmp_path_factory, wsj_dir) -> Path:
    """An index of the WSJ sample (its .mrg files), built once per session."""
    return _build_index(tmp_path_factory, "wsj", [str(wsj_dir / "*.mrg")])


@pytest.fixture(scope="session")
def gum_db(tmp_path_factory, gum_dir) -> Path:
    """An index of the GUM constituency trees (const/*.ptb), built once per session."""
    return _build_index(tmp_path_factory, "gum", [str(gum_dir / "const" / "*.ptb")])


@pytest.fixture(scope="session")
def demo_cache(tmp_path_factory):
    """Commands without --db use the demo index; build it in a fresh cache for the tests."""
    previous = os.environ.get("TREEQUERY_CACHE")
    os.environ["TREEQUERY_CACHE"] = str(tmp_path_factory.mktemp("cache"))
    yield Path(os.environ["TREEQUERY_CACHE"])
    if previous is None:
        del os.environ["TREEQUERY_CACHE"]
    else:
        os.environ["TREEQUERY_CACHE"] = previous
