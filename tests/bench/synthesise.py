"""Synthesising large treebanks of realistic shape by recombining the subtrees of a real one.

Usage (a script, and importable functions for the tests and the scale benchmark):

    python tests/bench/synthesise.py --source ../shared/corpora/wsj-sample \\
        --trees 1000000 --seed 1 --out DIR [--per-file 1000] [--gzip] [--replace 0.3]

Method. Every synthetic tree starts from a source tree (its skeleton, chosen at
random). Walking it top down, each phrase below the root is, with probability
`replace`, swapped for a whole subtree taken from anywhere in the source that stood in
the same place: same label (indices aside), same parent label, same label of the left
sister. The swapped-in subtree is walked the same way, so its own phrases may be
swapped in turn. Because donors are drawn from the real subtrees of their context,
depth, size, function tags and empty elements keep their real distributions, and
every local configuration is one annotators wrote.

Coindexation stays consistent (Bies, Ferguson, Katz & MacIntyre 1995: a constituent
labelled -n is the antecedent of the empty elements written *T*-n, *-n, ... and of
the constituent labelled =n). Only "closed" subtrees move: a subtree is closed when
every index used inside it is used only inside it (all its antecedents and all its
references are within), so neither the removed subtree nor the donor leaves a
reference without its antecedent. Each copied donor gets its own index namespace,
and on output all indices of a tree are renumbered 1, 2, 3, ... in order of first
appearance, so indices from different donors never collide. Source trees that are
themselves inconsistent (a reference without an antecedent, or two antecedents with
one index) are left out, so every synthetic tree is consistent.

Deterministic: one `random.Random(seed)` drives every choice, source files are read in
sorted order, and gzip headers carry no time stamp, so a seed gives identical bytes.
Streaming: trees are written as they are made (one per line, `per_file` per file);
memory holds only the source treebank.
"""
from __future__ import annotations

import argparse
import gzip
import io
import json
import random
import re
import sys
import time
from collections import Counter
from collections.abc import Iterable, Iterator
from dataclasses import dataclass
from pathlib import Path

# Treebank file extensions the synthesiser reads from a source folder (those the
# index accepts, treequery/read/sources.py; a `.gz` suffix is allowed).
SOURCE_SUFFIXES = (".mrg", ".ptb", ".tree", ".trees", ".penn", ".bracketed", ".psd")
EMPTY_LABEL = "-NONE-"  # Bies et al. 1995: empty elements are preterminals tagged -NONE-
FILE_PREFIX = "synth-"
MANIFEST = "synth.json"

_TOKEN = re.compile(r"\(|\)|[^\s()]+")
# After the category a label is a run of -PIECE / =PIECE parts; a numeric -n is a
# coindex (antecedent), a numeric =n a gapping index (a reference to -n).
_LABEL_INDEX = re.compile(r"([-=])(\d+)(?=[-=]|$)")
_EMPTY_INDEX = re.compile(r"(.+?)-(\d+)")  # *T*-1, *-2, *ICH*-3 (under -NONE- only)


# ---------------------------------------------------------------- the source treebank

@dataclass(frozen=True, slots=True)
class SourceNode:
    """One node of a source tree; leaves are plain strings (the words as written)."""

    label: str
    children: tuple[SourceNode | str, ...]
    key: str        # the label without its indices: donors and sites must agree on it
    indexed: bool   # the label, or the empty element below it, carries an index
    closed: bool    # every index used inside the subtree is used only inside it
    height: int     # nodes on the longest path down from here (1 on a preterminal)


# Where a phrase stands: (parent's key, left sister's key or "", its own key). A donor
# must have stood in the same place, so an infinitival VP after TO is replaced by
# another one, not by a finite VP.
Context = tuple[str, str, str]


@dataclass(frozen=True, slots=True)
class SourceBank:
    """The source trees, and the movable subtrees grouped by label."""

    trees: tuple[SourceNode, ...]
    donors: dict[Context, tuple[SourceNode, ...]]
    files: int
    dropped: int     # source trees left out because their coindexation is inconsistent
    height: int      # the tallest source tree: no synthetic tree grows taller


def _label_split(label: str) -> int:
    """Where a label's -PIECE / =PIECE parts start; len(label) for labels kept whole.

    Kept whole, as treequery's reader does: the outer bracket '', labels beginning
    with '-' (-NONE-, -LRB-) and punctuation tags with no letter or digit.
    """
    if not label or label[0] == "-" or not any(char.isalnum() for char in label):
        return len(label)
    return min((i for i in (label.find("-"), label.find("=")) if i > 0), default=len(label))


def label_indices(label: str) -> list[tuple[str, int]]:
    """The indices written on a label: NP-SBJ-1 -> [('-', 1)], NP=2 -> [('=', 2)]."""
    return [(mark, int(digits)) for mark, digits in
            _LABEL_INDEX.findall(label, _label_split(label))]


def empty_index(label: str, word: str) -> int | None:
    """The index an empty element refers to (*T*-1 under -NONE- -> 1), else None."""
    if label != EMPTY_LABEL:
        return None
    found = _EMPTY_INDEX.fullmatch(word)
    return int(found.group(2)) if found else None


def _label_key(label: str) -> str:
    split = _label_split(label)
    return label[:split] + _LABEL_INDEX.sub("", label[split:])


def parse_trees(text: str) -> Iterator[tuple]:
    """Raw trees `(label, [children])` of bracketed text; words never hold raw brackets."""
    tokens = _TOKEN.findall(text)
    stack: list[tuple] = []
    i = 0
    while i < len(tokens):
        token = tokens[i]
        if token == "(":
            label = ""
            if i + 1 < len(tokens) and tokens[i + 1] not in "()":
                label, i = tokens[i + 1], i + 1
            stack.append((label, []))
        elif token == ")":
            if not stack:
                raise ValueError("unbalanced ')' in source text")
            done = stack.pop()
            if stack:
                stack[-1][1].append(done)
            else:
                yield done
        elif stack:
            stack[-1][1].append(token)
        i += 1
    if stack:
        raise ValueError("unbalanced '(' in source text")


def _members(raw: tuple, into: Counter, roles: Counter) -> None:
    """Count, per index, the nodes that use it (antecedents and references apart)."""
    label, children = raw
    for mark, number in label_indices(label):
        into[number] += 1
        roles[(number, mark)] += 1
    for child in children:
        if isinstance(child, str):
            number = empty_index(label, child)
            if number is not None:
                into[number] += 1
                roles[(number, "=")] += 1
        else:
            _members(child, into, roles)


def is_consistent(raw: tuple) -> bool:
    """Every index has exactly one antecedent (-n) and every reference one to point at."""
    uses: Counter = Counter()
    roles: Counter = Counter()
    _members(raw, uses, roles)
    return all(roles[(number, "-")] == 1 for number in uses)


def _build(raw: tuple, tree_uses: Counter) -> tuple[SourceNode, Counter]:
    """A SourceNode and the index uses inside it, bottom up."""
    label, raw_children = raw
    inside: Counter = Counter(number for _, number in label_indices(label))
    indexed = bool(inside)
    children: list[SourceNode | str] = []
    height = 1
    for child in raw_children:
        if isinstance(child, str):
            number = empty_index(label, child)
            if number is not None:
                inside[number] += 1
                indexed = True
            children.append(child)
        else:
            node, used = _build(child, tree_uses)
            inside.update(used)
            children.append(node)
            height = max(height, node.height + 1)
    closed = all(tree_uses[number] == count for number, count in inside.items())
    node = SourceNode(label, tuple(children), _label_key(label), indexed, closed, height)
    return node, inside


def _is_phrase(node: SourceNode) -> bool:
    return not (len(node.children) == 1 and isinstance(node.children[0], str))


def source_files(source: Path) -> list[Path]:
    """The treebank files of a file or folder (searched recursively), in sorted order."""
    if source.is_file():
        return [source]
    return sorted(p for p in source.rglob("*") if p.is_file()
                  and p.name.removesuffix(".gz").lower().endswith(SOURCE_SUFFIXES))


def _read_text(path: Path) -> str:
    if path.suffix == ".gz":
        with gzip.open(path, "rt", encoding="utf-8") as handle:
            return handle.read()
    return path.read_text(encoding="utf-8")


def load_source(source: Path | str) -> SourceBank:
    """Read a source treebank and group its closed phrases by label as donors."""
    files = source_files(Path(source))
    if not files:
        raise SystemExit(f"no treebank files under {source}")
    trees: list[SourceNode] = []
    donors: dict[Context, list[SourceNode]] = {}
    dropped = 0
    for path in files:
        for raw in parse_trees(_read_text(path)):
            if not is_consistent(raw):
                dropped += 1
                continue
            uses: Counter = Counter()
            _members(raw, uses, Counter())
            root, _ = _build(raw, uses)
            trees.append(root)
            _collect_donors(root, donors)
    return SourceBank(tuple(trees), {key: tuple(nodes) for key, nodes in donors.items()},
                      len(files), dropped, max((tree.height for tree in trees), default=0))


def _collect_donors(parent: SourceNode, donors: dict[Context, list[SourceNode]]) -> None:
    """Every closed phrase below `parent` (the root itself never moves), by context."""
    stack = [parent]
    while stack:
        node = stack.pop()
        previous = ""
        for child in node.children:
            if isinstance(child, str) or not _is_phrase(child):
                previous = child.key if isinstance(child, SourceNode) else previous
                continue
            if child.closed:
                donors.setdefault((node.key, previous, child.key), []).append(child)
            stack.append(child)
            previous = child.key


# ---------------------------------------------------------------- making trees

class _TreeMaker:
    """Builds the text of one synthetic tree at a time (state: the index renumbering)."""

    def __init__(self, bank: SourceBank, rng: random.Random, replace: float):
        self.bank, self.rng, self.replace = bank, rng, replace
        self.parts: list[str] = []
        self.numbers: dict[tuple[int, int], int] = {}
        self.namespaces = 0
        self.nodes = 0

    def make(self) -> str:
        self.parts, self.numbers, self.namespaces = [], {}, 0
        self._emit(self.rng.choice(self.bank.trees), 0, None, 0)
        return "".join(self.parts)

    def _renumber(self, namespace: int, number: int) -> int:
        key = (namespace, number)
        if key not in self.numbers:
            self.numbers[key] = len(self.numbers) + 1
        return self.numbers[key]

    def _label(self, node: SourceNode, namespace: int) -> str:
        label = node.label
        if not node.indexed:
            return label
        split = _label_split(label)
        return label[:split] + _LABEL_INDEX.sub(
            lambda m: f"{m.group(1)}{self._renumber(namespace, int(m.group(2)))}",
            label[split:])

    def _word(self, label: str, word: str, namespace: int) -> str:
        if label != EMPTY_LABEL:
            return word
        found = _EMPTY_INDEX.fullmatch(word)
        if not found:
            return word
        return f"{found.group(1)}-{self._renumber(namespace, int(found.group(2)))}"

    def _emit(self, node: SourceNode, namespace: int, context: Context | None,
              depth: int) -> None:
        """Write `node` (or a donor in its place); `context` is None at the root."""
        if (context is not None and node.closed and _is_phrase(node)
                and self.rng.random() < self.replace):
            donors = self.bank.donors.get(context)
            donor = self.rng.choice(donors) if donors else None
            # Swaps inside swaps could otherwise build trees taller than any real one.
            if donor is not None and depth + donor.height <= self.bank.height:
                self.namespaces += 1
                # The donor is recombined in turn (its phrases may be swapped too), so
                # swapping a phrase near the root does not copy a whole source tree.
                self._emit(donor, self.namespaces, context, depth)
                return
        self.nodes += 1
        parts = self.parts
        parts.append("(")
        parts.append(self._label(node, namespace))
        previous = ""
        for child in node.children:
            parts.append(" ")
            if isinstance(child, str):
                parts.append(self._word(node.label, child, namespace) if node.indexed
                             else child)
            else:
                self._emit(child, namespace, (node.key, previous, child.key), depth + 1)
                previous = child.key
        parts.append(")")


def synthesise_trees(bank: SourceBank, trees: int, seed: int,
                     replace: float = 0.3) -> Iterator[str]:
    """The texts of `trees` synthetic trees, one bracketed tree per string, in order."""
    maker = _TreeMaker(bank, random.Random(seed), replace)
    for _ in range(trees):
        yield maker.make()


# ---------------------------------------------------------------- writing files

def _open_output(path: Path, compress: bool):
    if not compress:
        return open(path, "w", encoding="utf-8", newline="\n")
    # No file name and mtime 0 in the gzip header: the same seed gives the same bytes.
    raw = gzip.GzipFile(filename="", mode="wb", fileobj=open(path, "wb"), mtime=0,
                        compresslevel=6)
    return _ClosingText(raw)


class _ClosingText(io.TextIOWrapper):
    """A text stream over a GzipFile that also closes the file object under it."""

    def __init__(self, raw: gzip.GzipFile):
        super().__init__(raw, encoding="utf-8", newline="\n")
        self._under = raw.fileobj

    def close(self) -> None:
        super().close()
        if self._under is not None:
            self._under.close()


def output_name(number: int, compress: bool) -> str:
    return f"{FILE_PREFIX}{number:06d}.mrg" + (".gz" if compress else "")


def clear_output(out: Path) -> None:
    """Remove what an earlier run wrote here (only the synthesiser's own files)."""
    for path in out.glob(f"{FILE_PREFIX}*.mrg*"):
        path.unlink()
    (out / MANIFEST).unlink(missing_ok=True)


def write_corpus(source: Path | str, out: Path | str, trees: int, seed: int,
                 per_file: int = 1000, compress: bool = False, replace: float = 0.3,
                 progress: bool = False) -> dict:
    """Synthesise `trees` trees into `out` (files of `per_file` trees); returns the manifest.

    The manifest (also written last, as synth.json, so its presence means the run
    finished) records the parameters, files, trees and nodes written.
    """
    started = time.perf_counter()
    bank = load_source(source)
    out = Path(out)
    out.mkdir(parents=True, exist_ok=True)
    clear_output(out)
    maker = _TreeMaker(bank, random.Random(seed), replace)
    files = _write_files(maker, out, trees, per_file, compress, progress)
    manifest = {"source": str(Path(source).resolve()), "seed": seed, "trees": trees,
                "nodes": maker.nodes, "files": files, "per_file": per_file,
                "gzip": compress, "replace": replace, "source_files": bank.files,
                "source_trees": len(bank.trees), "source_trees_dropped": bank.dropped,
                "seconds": round(time.perf_counter() - started, 3)}
    (out / MANIFEST).write_text(json.dumps(manifest, indent=2) + "\n", encoding="utf-8")
    return manifest


def _write_files(maker: _TreeMaker, out: Path, trees: int, per_file: int, compress: bool,
                 progress: bool) -> int:
    written, files = 0, 0
    while written < trees:
        files += 1
        batch = min(per_file, trees - written)
        with _open_output(out / output_name(files, compress), compress) as handle:
            for _ in range(batch):
                handle.write(maker.make())
                handle.write("\n")
        written += batch
        if progress and (written % 100_000 < batch or written == trees):
            print(f"{written:,} trees, {maker.nodes:,} nodes", file=sys.stderr)
    return files


def read_manifest(out: Path | str) -> dict | None:
    path = Path(out) / MANIFEST
    return json.loads(path.read_text(encoding="utf-8")) if path.exists() else None


def main(argv: Iterable[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--source", required=True, type=Path,
                        help="a treebank file or folder (e.g. ../shared/corpora/wsj-sample)")
    parser.add_argument("--trees", type=int, default=1_000_000)
    parser.add_argument("--seed", type=int, default=1)
    parser.add_argument("--out", required=True, type=Path)
    parser.add_argument("--per-file", type=int, default=1000, help="trees per output file")
    parser.add_argument("--gzip", action="store_true", help="write .mrg.gz files")
    parser.add_argument("--replace", type=float, default=0.3,
                        help="probability of swapping each movable phrase for a donor")
    parser.add_argument("--quiet", action="store_true")
    args = parser.parse_args(list(argv) if argv is not None else None)
    if args.trees < 1 or args.per_file < 1 or not 0.0 <= args.replace <= 1.0:
        parser.error("--trees and --per-file must be positive, --replace in [0, 1]")
    manifest = write_corpus(args.source, args.out, args.trees, args.seed, args.per_file,
                            args.gzip, args.replace, progress=not args.quiet)
    print(json.dumps(manifest, indent=2))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
