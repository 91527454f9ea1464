"""Expected frequency tables computed without treequery's index, SQL or measures module.

Trees are read with NLTK (tests/reference/nodes.py), results come from the brute-force
matcher (tests/reference/matcher.py); every count, denominator and statistic is then
plain arithmetic over those results, or SciPy for the log-likelihood statistic and its
p-value. The formulas are written out here from their sources:

- DP, "deviation of proportions": Gries (2008), "Dispersions and adjusted frequencies
  in corpora", International Journal of Corpus Linguistics 13(4): half the sum over the
  parts of |share of the item's occurrences - share of the corpus size|.
- DP normalised: DP / (1 - the smallest part's share), Lijffijt & Gries (2012),
  International Journal of Corpus Linguistics 17(1).
- G²: Rayson & Garside (2000), the expected frequency of each side is its share of the
  total size times the total frequency; scipy.stats.power_divergence with
  lambda_="log-likelihood" gives 2 * sum(O ln(O / E)), chi2.sf its p-value (1 d.f.).
- Log ratio: Hardie (2014), log2 of the ratio of relative frequencies, a zero
  frequency replaced by 0.5 (the convention treequery documents).
"""
from __future__ import annotations

import csv
import math
from collections import defaultdict
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

from reference.matcher import match_corpus
from reference.nodes import RefTree, load_corpus
from scipy.stats import chi2, power_divergence

from treequery.pattern.check import compile_pattern


@dataclass
class RefCorpus:
    """A corpus read with NLTK: its trees, and per file the trees and overt tokens."""

    files: list[Path]
    trees: list[RefTree]

    @property
    def file_trees(self) -> dict[str, int]:
        found: dict[str, int] = defaultdict(int)
        for tree in self.trees:
            found[tree.source] += 1
        return dict(found)

    @property
    def file_tokens(self) -> dict[str, int]:
        found: dict[str, int] = defaultdict(int)
        for tree in self.trees:
            found[tree.source] += tree.nodes[0].tokens  # the root covers every overt word
        return dict(found)


def load(files: Sequence[Path]) -> RefCorpus:
    return RefCorpus(list(files), load_corpus(list(files)))



_LOADED: dict[str, RefCorpus] = {}


def reference(name: str, files: list[Path]) -> RefCorpus:
    """`load(files)` once per test session (the reference matcher is slow to set up)."""
    if name not in _LOADED:
        _LOADED[name] = load(files)
    return _LOADED[name]

def sidecar_values(folder: Path, key: str) -> dict[str, str]:
    """Resolved file path -> the value of `key` in the folder's documents.tsv (csv module)."""
    with open(folder / "documents.tsv", encoding="utf-8", newline="") as handle:
        rows = csv.DictReader(handle, delimiter="\t")
        return {str((folder / row["file"]).resolve()): row[key] for row in rows if row[key]}


def per_file(ref: RefCorpus, pattern: str, by: Sequence[str] = ()
             ) -> dict[tuple[str, tuple], tuple[int, int]]:
    """(file, key) -> (results, distinct trees) from the brute-force matcher's results."""
    compiled = compile_pattern(pattern)
    wanted = [(compiled.result_vars.index(var), attr)
              for var, attr in (text.split(".") for text in by)]
    results: dict[tuple[str, tuple], int] = defaultdict(int)
    trees: dict[tuple[str, tuple], set] = defaultdict(set)
    for number, nodes in match_corpus(compiled, ref.trees):
        tree = ref.trees[number]
        key = tuple(tree.nodes[nodes[i]].attribute(attr) for i, attr in wanted)
        results[(tree.source, key)] += 1
        trees[(tree.source, key)].add(number)
    return {place: (results[place], len(trees[place])) for place in results}


def expected_rows(ref: RefCorpus, counted: dict, cell_of: dict[str, str | None],
                  grouped: bool) -> dict[tuple, tuple]:
    """(cell, key) -> the row's values in FrequencyTable column order (after cell and keys)."""
    files_in: dict[str | None, list[str]] = defaultdict(list)
    for path in ref.file_trees:
        files_in[cell_of[path]].append(path)
    keys = {key for _, key in counted} if grouped else {()}
    rows = {}
    for cell, files in files_in.items():
        for key in keys:
            freqs = [counted.get((path, key), (0, 0))[0] for path in files]
            if grouped and not any(freqs):
                continue
            rows[(cell, key)] = cell_values(ref, files, freqs,
                                            sum(counted.get((p, key), (0, 0))[1] for p in files))
    return rows


def cell_values(ref: RefCorpus, files: list[str], freqs: list[int], trees: int) -> tuple:
    cell_trees = sum(ref.file_trees[path] for path in files)
    sizes = [ref.file_tokens[path] for path in files]
    results = sum(freqs)
    dp = dp_norm = None
    if len(files) > 1 and results:
        total = sum(sizes)
        dp = sum(abs(f / results - s / total) for f, s in zip(freqs, sizes, strict=True)) / 2
        dp_norm = dp / (1 - min(sizes) / total)
    return (results, trees, cell_trees, sum(sizes), results * 1000 / cell_trees,
            results * 1_000_000 / sum(sizes), sum(1 for f in freqs if f), len(files), dp, dp_norm)


def g2_p_ratio(freq_a: int, freq_b: int, size_a: int, size_b: int) -> tuple[float, float, float]:
    """G² (SciPy), its chi-square p-value (SciPy) and the log ratio (arithmetic)."""
    total = freq_a + freq_b
    if total == 0:
        return 0.0, 1.0, 0.0
    expected = [size_a * total / (size_a + size_b), size_b * total / (size_a + size_b)]
    g2 = float(power_divergence([freq_a, freq_b], expected, lambda_="log-likelihood").statistic)
    ratio = math.log2(((freq_a or 0.5) / size_a) / ((freq_b or 0.5) / size_b))
    return g2, float(chi2.sf(g2, 1)), ratio


def same_values(got: Sequence, expected: Sequence, rel: float, abs_tol: float = 0.0) -> bool:
    """Equal element by element: a missing value (None) only to None, numbers to within
    the tolerances (pytest.approx refuses None beside a relative tolerance)."""
    def same(g, e) -> bool:
        numbers = all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in (g, e))
        return math.isclose(g, e, rel_tol=rel, abs_tol=abs_tol) if numbers else g == e

    return len(got) == len(expected) and all(map(same, got, expected))
