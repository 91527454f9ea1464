"""Benchmark of the index builder: GUM's constituency trees into a fresh index, figures as JSON.

Usage: python tests/bench_index.py [--corpus DIR] [--out bench_out/bench_index.json] [--keep DB]
                                   [--processes 1|2]
The corpus folder defaults to $TREEQUERY_CORPORA/gum/const (or ../shared/corpora/gum/const
next to the repository); any folder of bracketed files works (e.g. a synthesised corpus).
Speed targets are read from this JSON, never asserted in tests. CPU time and peak memory
include the row-building worker process; the load average says how busy the machine was.
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

from treequery.index import builder  # noqa: E402
from treequery.index.builder import index_paths  # noqa: E402
from treequery.index.schema import connect  # noqa: E402

CORPORA = Path(os.environ.get("TREEQUERY_CORPORA", REPO_ROOT.parent / "shared" / "corpora"))


def _arguments() -> argparse.Namespace:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--corpus", type=Path, default=CORPORA / "gum" / "const")
    parser.add_argument("--out", type=Path, default=REPO_ROOT / "bench_out" / "bench_index.json")
    parser.add_argument("--keep", type=Path, help="build the index here and keep it")
    parser.add_argument("--processes", type=int, choices=(1, 2),
                        help="force one process or a row-building worker (default: by size)")
    return parser.parse_args()


def _database_bytes(db: Path) -> int:
    """Bytes of the index on disk once the write-ahead log is folded in."""
    conn = sqlite3.connect(db)
    conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    conn.close()
    return sum(p.stat().st_size for p in db.parent.glob(db.name + "*"))


def _cpu_seconds() -> tuple[float, float]:
    """CPU time of this process, and of its finished children (the row-building worker)."""
    times = os.times()
    return times.user + times.system, times.children_user + times.children_system


def _peak_rss_mb() -> dict[str, float]:
    """Peak resident memory of this process, of its largest child, and their sum."""
    own = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024  # KiB on Linux
    child = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024
    return {"peak_rss_mb": round(own + child, 1), "peak_rss_main_mb": round(own, 1),
            "peak_rss_worker_mb": round(child, 1)}


class _Stopwatch:
    """Wraps a builder step to time it (the post-load annotation pass of issue 4)."""

    def __init__(self, step):
        self.step = step
        self.seconds = 0.0
        self.cpu_seconds = 0.0

    def __call__(self, *args, **kwargs):
        started, cpu_started = time.perf_counter(), time.process_time()
        try:
            return self.step(*args, **kwargs)
        finally:
            self.seconds += time.perf_counter() - started
            self.cpu_seconds += time.process_time() - cpu_started


def bench(corpus: Path, db: Path, processes: int | None) -> dict:
    annotate = builder.annotate_index = _Stopwatch(builder.annotate_index)
    conn = connect(str(db))
    load_before = os.getloadavg()[0]
    started, (main_started, worker_started) = time.perf_counter(), _cpu_seconds()
    report = index_paths(conn, [corpus], corpus="bench", processes=processes)
    seconds = time.perf_counter() - started
    main_cpu, worker_cpu = _cpu_seconds()
    main_cpu, worker_cpu = main_cpu - main_started, worker_cpu - worker_started
    cpu_seconds = main_cpu + worker_cpu  # less sensitive to a busy machine than seconds
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
        "cpu_seconds_main": round(main_cpu, 3),
        "cpu_seconds_worker": round(worker_cpu, 3),
        "annotate_seconds": round(annotate.seconds, 3),
        "annotate_cpu_seconds": round(annotate.cpu_seconds, 3),
        "nodes_per_s_without_annotate": round(report.nodes / (seconds - annotate.seconds)),
        "nodes_per_cpu_s_without_annotate": round(
            report.nodes / max(cpu_seconds - annotate.cpu_seconds, 1e-9)),
        "trees_per_s": round(report.trees / seconds),
        "nodes_per_s": round(report.nodes / seconds),
        "nodes_per_cpu_s": round(report.nodes / cpu_seconds),
        "processes": processes or "auto",
        "load_average_before": load_before,
        "load_average": os.getloadavg()[0],
        "db_bytes": size,
        "bytes_per_node": round(size / max(report.nodes, 1), 1),
        **_peak_rss_mb(),
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
        figures = bench(args.corpus, db, args.processes)
    args.out.parent.mkdir(parents=True, exist_ok=True)
    args.out.write_text(json.dumps(figures, indent=2) + "\n", encoding="utf-8")
    print(json.dumps(figures, indent=2))


if __name__ == "__main__":
    main()
