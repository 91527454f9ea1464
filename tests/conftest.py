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
        pytest.skip(f"{what} not found at {path} (set TREEQUERY_CORPORA to the shared corpora folder)")
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
