"""Benchmark of `check variation` (and `check tags`) on GUM: wall and CPU seconds as JSON.

Usage: python tests/bench_check_variation.py [--corpus DIR] [--db DB] [--max-length 6]
                                             [--out bench_out/bench_check_variation.json]
The corpus folder defaults to $TREEQUERY_CORPORA/gum/const (or ../shared/corpora/gum/const
next to the repository); it is indexed into a temporary index first unless --db names an
existing one (indexing is not timed). Target: under 60 s for nuclei of up to 6 words on
one core. Speed targets are read from this JSON, never asserted in tests.
"""
from __future__ import annotations

import argparse
import json
import os
import platform
import resource
import sys
import tempfile
import time
from pathlib import Path

REPO_ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(REPO_ROOT))

from treequery.checks.tags import find_tag_variation  # noqa: E402
from treequery.checks.variation import find_variation_nuclei  # noqa: E402
from treequery.index.builder import index_paths  # noqa: E402
from treequery.index.schema import connect, create_schema  # noqa: E402

CORPORA = Path(os.environ.get("TREEQUERY_CORPORA", REPO_ROOT.parent / "shared" / "corpora"))
TARGET_SECONDS = 60.0


def _arguments() -> argparse.Namespace:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--corpus", type=Path, default=CORPORA / "gum" / "const")
    parser.add_argument("--db", type=Path, help="an existing index of the corpus to use")
    parser.add_argument("--max-length", type=int, default=6)
    parser.add_argument("--out", type=Path,
                        default=REPO_ROOT / "bench_out" / "bench_check_variation.json")
    return parser.parse_args()


def _timed(call):
    started, cpu_started = time.perf_counter(), time.process_time()
    value = call()
    return value, round(time.perf_counter() - started, 3), round(
        time.process_time() - cpu_started, 3)


def bench(db: Path, max_length: int) -> dict:
    conn = connect(str(db), readonly=True)
    try:
        nuclei, seconds, cpu = _timed(lambda: find_variation_nuclei(
            conn, max_length=max_length, min_context=0))
        tags, tag_seconds, tag_cpu = _timed(lambda: find_tag_variation(conn, min_context=0))
        trees, tokens = conn.execute("SELECT count(*), sum(n_tokens) FROM tree").fetchone()
    finally:
        conn.close()
    return {
        "trees": trees,
        "tokens": tokens,
        "max_length": max_length,
        "variation": {
            "seconds": seconds,
            "cpu_seconds": cpu,
            "nuclei": len(nuclei),
            "occurrences": sum(len(v.occurrences) for v in nuclei),
            "nuclei_with_context_1": sum(v.context >= 1 for v in nuclei),
            "target_seconds": TARGET_SECONDS,
            "within_target": seconds < TARGET_SECONDS,
        },
        "tags": {
            "seconds": tag_seconds,
            "cpu_seconds": tag_cpu,
            "variations": len(tags),
            "occurrences": sum(len(v.occurrences) for v in tags),
        },
        "peak_rss_mib": round(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024, 1),
        "python": platform.python_version(),
        "machine": platform.machine(),
    }


def main() -> None:
    args = _arguments()
    with tempfile.TemporaryDirectory() as scratch:
        db = args.db
        if db is None:
            if not args.corpus.is_dir():
                sys.exit(f"no corpus at {args.corpus} (set TREEQUERY_CORPORA)")
            db = Path(scratch) / "bench.db"
            conn = connect(str(db))
            create_schema(conn)
            index_paths(conn, [str(args.corpus)], corpus="bench")
            conn.close()
        figures = {"corpus": str(args.corpus if args.db is None else args.db),
                   **bench(db, args.max_length)}
    args.out.parent.mkdir(parents=True, exist_ok=True)
    args.out.write_text(json.dumps(figures, indent=2) + "\n", encoding="utf-8")
    print(json.dumps(figures, indent=2))


if __name__ == "__main__":
    main()
