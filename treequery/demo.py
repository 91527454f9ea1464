"""The bundled demo treebank: where its files are and its index, built on first use."""
from __future__ import annotations

import hashlib
import os
from pathlib import Path

PACKAGE_DIR = Path(__file__).resolve().parent


def demo_treebank_dir() -> Path:
    """The demo treebank folder: inside an installed wheel, else at the repository top."""
    installed = PACKAGE_DIR / "_data" / "demo_treebank"
    for candidate in (installed, PACKAGE_DIR.parent / "demo_treebank"):
        if candidate.is_dir():
            return candidate
    raise FileNotFoundError("the demo treebank is not installed with this copy of treequery")


def cache_dir() -> Path:
    """Per-user cache folder ($TREEQUERY_CACHE, else $XDG_CACHE_HOME/treequery, else ~/.cache)."""
    if os.environ.get("TREEQUERY_CACHE"):
        return Path(os.environ["TREEQUERY_CACHE"])
    base = os.environ.get("XDG_CACHE_HOME") or str(Path.home() / ".cache")
    return Path(base) / "treequery"


def _demo_fingerprint(folder: Path) -> str:
    # The index is rebuilt whenever the demo files or the indexing code change (an
    # upgrade, a schema change), so a stale cached index is never used.
    digest = hashlib.sha256()
    for path in sorted((PACKAGE_DIR / "index").glob("*.*")):  # code and head rules
        digest.update(path.read_bytes())
    for path in sorted(folder.iterdir()):
        if path.is_file():
            digest.update(path.name.encode())
            digest.update(path.read_bytes())
    return digest.hexdigest()[:16]


def demo_index_path() -> Path:
    """The demo index, built into the cache the first time it is asked for."""
    from .index.builder import index_paths
    from .index.schema import connect, create_schema

    folder = demo_treebank_dir()
    target = cache_dir() / f"demo-{_demo_fingerprint(folder)}.db"
    if target.exists():
        return target
    target.parent.mkdir(parents=True, exist_ok=True)
    partial = target.with_suffix(".building")
    for leftover in (partial, Path(f"{partial}-wal"), Path(f"{partial}-shm")):
        leftover.unlink(missing_ok=True)
    conn = connect(str(partial))
    try:
        create_schema(conn)
        files = sorted(p for p in folder.iterdir() if p.suffix == ".mrg")
        index_paths(conn, [str(p) for p in files], corpus="demo")
        conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    finally:
        conn.close()
    partial.replace(target)  # atomic: a half-built demo index is never used
    return target
