"""Benchmark: the SQL engine against the NLTK brute-force matcher on every suite pattern.

Run as a script (not collected by pytest):

    python tests/bench_patterns.py [--corpora wsj gum] [--out bench_out/bench_patterns.json]

For each corpus and suite pattern it measures
- engine: `Treebank.count(pattern_text)` on a built index (parse + plan + SQL), best of
  --repeat runs;
- loaded: the brute-force matcher over nltk trees already in memory;
- end to end: what a hand-written script does, reading the files with NLTK and then
  matching. Reading is the same for every pattern, so it is timed once per corpus and
  added to each pattern's matching time.
and writes the times, both ratios (brute force / engine) and a summary (median and
worst ratios, and whether the targets hold: end to end >= 50x on the median pattern;
loaded >= 5x on the median and never slower than the brute force).
"""
from __future__ import annotations

import argparse
import json
import os
import statistics
import sys
import tempfile
import time
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(REPO))
sys.path.insert(0, str(REPO / "tests"))

from reference.matcher import match_corpus  # noqa: E402
from reference.nodes import load_corpus  # noqa: E402
from reference.suite import SUITE  # noqa: E402

from treequery.api import Treebank  # noqa: E402
from treequery.errors import TreequeryError  # noqa: E402
from treequery.pattern.check import compile_pattern  # noqa: E402

CORPORA = Path(os.environ.get("TREEQUERY_CORPORA", REPO.parent / "shared" / "corpora"))
TARGET_E2E_MEDIAN = 50.0
TARGET_LOADED_MEDIAN = 5.0
TARGET_LOADED_WORST = 1.0


def corpus_files(name: str) -> list[Path]:
    if name == "wsj":
        return sorted((CORPORA / "wsj-sample").glob("*.mrg"))
    if name == "gum":
        return sorted((CORPORA / "gum" / "const").glob("*.ptb"))
    raise SystemExit(f"unknown corpus {name!r} (known: wsj, gum)")


def build_index(name: str, files: list[Path], folder: Path) -> tuple[Path, float]:
    db = folder / f"{name}.db"
    started = time.perf_counter()
    if not db.exists():
        with Treebank(db) as bank:
            bank.index([str(p) for p in files])
    return db, time.perf_counter() - started


def best_of(repeat: int, run) -> tuple[float, object]:
    best, value = float("inf"), None
    for _ in range(repeat):
        started = time.perf_counter()
        value = run()
        best = min(best, time.perf_counter() - started)
    return best, value


def bench_corpus(name: str, folder: Path, repeat: int, only: set[str] | None) -> dict:
    files = corpus_files(name)
    if not files:
        print(f"{name}: no files under {CORPORA}, skipped", file=sys.stderr)
        return {}
    db, index_seconds = build_index(name, files, folder)
    started = time.perf_counter()
    trees = load_corpus(files)
    read_seconds = time.perf_counter() - started
    rows, errors = [], []
    with Treebank(db, readonly=True) as bank:
        for entry in SUITE:
            if only and entry.name not in only:
                continue
            try:
                rows.append(bench_pattern(bank, trees, entry, read_seconds, repeat))
            except TreequeryError as error:
                errors.append({"pattern": entry.name, "error": str(error)})
                print(f"{name:4} {entry.name:30} ERROR {error}", file=sys.stderr)
                continue
            row = rows[-1]
            print(f"{name:4} {entry.name:30} engine {row['engine_s']:8.4f}s  loaded "
                  f"{row['loaded_ratio']:8.1f}x  end-to-end {row['e2e_ratio']:9.1f}x"
                  f"{'' if row['agree'] else '  COUNTS DIFFER'}", file=sys.stderr)
    return {"files": len(files), "trees": len(trees), "index_seconds": index_seconds,
            "nltk_read_seconds": read_seconds, "patterns": rows, "errors": errors,
            "summary": summarise(rows)}


def bench_pattern(bank: Treebank, trees, entry, read_seconds: float, repeat: int) -> dict:
    engine_s, counted = best_of(repeat, lambda: bank.count(
        entry.text, count_empty=entry.count_empty).results)
    started = time.perf_counter()
    found = match_corpus(compile_pattern(entry.text), trees, entry.count_empty)
    loaded_s = time.perf_counter() - started
    e2e_s = read_seconds + loaded_s
    engine_floor = max(engine_s, 1e-6)
    return {"pattern": entry.name, "text": entry.text, "count_empty": entry.count_empty,
            "results": counted, "reference_results": len(found), "agree": counted == len(found),
            "engine_s": engine_s, "loaded_s": loaded_s, "e2e_s": e2e_s,
            "loaded_ratio": loaded_s / engine_floor, "e2e_ratio": e2e_s / engine_floor}


def summarise(rows: list[dict]) -> dict:
    if not rows:
        return {}
    loaded = [r["loaded_ratio"] for r in rows]
    e2e = [r["e2e_ratio"] for r in rows]
    worst = min(rows, key=lambda r: r["loaded_ratio"])
    return {
        "patterns": len(rows),
        "median_loaded_ratio": statistics.median(loaded),
        "median_e2e_ratio": statistics.median(e2e),
        "worst_loaded_ratio": worst["loaded_ratio"],
        "worst_loaded_pattern": worst["pattern"],
        "worst_e2e_ratio": min(e2e),
        "slower_than_brute_force": [r["pattern"] for r in rows if r["loaded_ratio"] < 1.0],
        "all_counts_agree": all(r["agree"] for r in rows),
        "target_e2e_median_50x": statistics.median(e2e) >= TARGET_E2E_MEDIAN,
        "target_loaded_median_5x": statistics.median(loaded) >= TARGET_LOADED_MEDIAN,
        "target_never_slower": worst["loaded_ratio"] >= TARGET_LOADED_WORST,
    }


def print_table(report: dict) -> None:
    print(f"{'corpus':6} {'patterns':>8} {'median loaded':>14} {'median e2e':>11} "
          f"{'worst loaded':>13}  worst pattern / slower than brute force")
    for name, data in report["corpora"].items():
        s = data.get("summary")
        if not s:
            continue
        print(f"{name:6} {s['patterns']:8d} {s['median_loaded_ratio']:13.1f}x "
              f"{s['median_e2e_ratio']:10.1f}x {s['worst_loaded_ratio']:12.2f}x  "
              f"{s['worst_loaded_pattern']} / {s['slower_than_brute_force']}")


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--corpora", nargs="+", default=["wsj", "gum"])
    parser.add_argument("--out", default="bench_out/bench_patterns.json")
    parser.add_argument("--repeat", type=int, default=3, help="engine runs per pattern (best)")
    parser.add_argument("--index-dir", help="where to build or reuse the indexes")
    parser.add_argument("--pattern", action="append", help="only these suite patterns")
    args = parser.parse_args(argv)
    folder = Path(args.index_dir) if args.index_dir else Path(tempfile.mkdtemp())
    folder.mkdir(parents=True, exist_ok=True)
    only = set(args.pattern) if args.pattern else None
    report = {"corpora": {name: bench_corpus(name, folder, args.repeat, only)
                          for name in args.corpora}}
    out = Path(args.out)
    out.parent.mkdir(parents=True, exist_ok=True)
    out.write_text(json.dumps(report, indent=2) + "\n", encoding="utf-8")
    print_table(report)
    print(f"written to {out}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
