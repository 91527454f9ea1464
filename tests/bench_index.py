"""Benchmark of the index builder: GUM's constituency trees into a fresh index, figures as JSON.

Usage: python tests/bench_index.py [--corpus DIR] [--out bench_out/bench_index.json] [--keep DB]
The corpus folder defaults to $TREEQUERY_CORPORA/gum/const (or ../shared/corpora/gum/const
next to the repository). Speed targets are read from this JSON, never asserted in tests.
"""
from __future__ import annotations

import argparse
import json
import os
import platform
import resource
import sqlite3
import sys
import tempfile
import time
from pathlib import Path

REPO_ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(REPO_ROOT))

from treequery.index.builder import index_paths  # noqa: E402
from treequery.index.schema import connect  # noqa: E402

CORPORA = Path(os.environ.get("TREEQUERY_CORPORA", REPO_ROOT.parent / "shared" / "corpora"))


def _arguments() -> argparse.Namespace:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--corpus", type=Path, default=CORPORA / "gum" / "const")
    parser.add_argument("--out", type=Path, default=REPO_ROOT / "bench_out" / "bench_index.json")
    parser.add_argument("--keep", type=Path, help="build the index here and keep it")
    return parser.parse_args()


def _database_bytes(db: Path) -> int:
    """Bytes of the index on disk once the write-ahead log is folded in."""
    conn = sqlite3.connect(db)
    conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    conn.close()
    return sum(p.stat().st_size for p in db.parent.glob(db.name + "*"))


def bench(corpus: Path, db: Path) -> dict:
    conn = connect(str(db))
    started, cpu_started = time.perf_counter(), time.process_time()
    report = index_paths(conn, [corpus], corpus="bench")
    seconds = time.perf_counter() - started
    cpu_seconds = time.process_time() - cpu_started  # less sensitive to a busy machine
    conn.close()
    size = _database_bytes(db)
    return {
        "corpus": str(corpus),
        "documents": report.documents_added,
        "trees": report.trees,
        "nodes": report.nodes,
        "skipped": len(report.skipped),
        "seconds": round(seconds, 3),
        "cpu_seconds": round(cpu_seconds, 3),
        "trees_per_s": round(report.trees / seconds),
        "nodes_per_s": round(report.nodes / seconds),
        "nodes_per_cpu_s": round(report.nodes / cpu_seconds),
        "load_average": os.getloadavg()[0],
        "db_bytes": size,
        "bytes_per_node": round(size / max(report.nodes, 1), 1),
        "peak_rss_mb": round(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024, 1),
        "python": platform.python_version(),
        "sqlite": sqlite3.sqlite_version,
        "cpus": os.cpu_count(),
    }


def main() -> None:
    args = _arguments()
    if not args.corpus.is_dir():
        sys.exit(f"corpus folder not found: {args.corpus} (set TREEQUERY_CORPORA)")
    with tempfile.TemporaryDirectory() as scratch:
        db = args.keep or Path(scratch) / "bench.db"
        if db.exists():
            sys.exit(f"{db} exists; the benchmark builds a fresh index")
        figures = bench(args.corpus, db)
    args.out.parent.mkdir(parents=True, exist_ok=True)
    args.out.write_text(json.dumps(figures, indent=2) + "\n", encoding="utf-8")
    print(json.dumps(figures, indent=2))


if __name__ == "__main__":
    main()
