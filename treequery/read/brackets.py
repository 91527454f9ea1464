"""The streaming reader of bracketed trees: lines in, ParsedTree / SkippedTree out.

Reading is line by line with one compiled tokenizer and an explicit stack, so no
file is ever held whole in memory and deep trees cannot overflow the Python stack.
A tree is built as its brackets close and handed out at the end of the line that
closes it.

The notation (the same trees as nltk.Tree.fromstring reads):
- `(TAG word)` is a preterminal; a phrase has one or more bracketed children.
- Only the outermost bracket of a tree may be unlabelled: `( (S ...) )` gives a
  root with label ''. A `ROOT` or `TOP` wrapper is an ordinary node.
- Words and labels are kept exactly as written (escapes such as -LRB- included).
  A backslash is an ordinary character: brackets inside words must be written as
  -LRB- / -RRB- (Penn Treebank practice); a backslash before a bracket escapes nothing.
- Ordinals count every tree that starts in the file, skipped ones included, so
  tree N is always the N-th tree of the file.
- A file with no trees (empty or blank) yields nothing.

Recovery rule after bad input (each problem gives one SkippedTree, or raises
TreebankFormatError with strict=True):
1. A problem inside a tree whose brackets still balance (missing label, empty `()`,
   a word and brackets mixed, a second word, invalid UTF-8) discards that tree: the
   reader keeps counting brackets and resumes after the bracket that closes it.
2. A line that begins with '(' in column 1 always starts a new tree. Every common
   layout indents the continuation lines of a tree, so if a tree (or a tree being
   discarded) is still open there, it lacks a ')': it is reported (if not already)
   and reading resumes with the new tree. This bounds the damage of a missing ')'
   to one tree.
3. Material outside any tree (stray text, a ')' with no open bracket) is reported
   once per run and skipped up to the next '('.
4. A tree still open at the end of the input is reported.
"""
from __future__ import annotations

import gzip
import re
import zlib
from collections.abc import Iterable, Iterator
from pathlib import Path

from treequery.errors import TreebankFormatError
from treequery.read.model import ParsedNode, ParsedTree, SkippedTree

# Alternatives, in order: a whole one-line preterminal `(TAG word)` (about half of
# all nodes, so worth one regex step instead of four), a bracket, a run of text.
# `m.lastindex` tells them apart: 2, 3, or None.
_TOKEN = re.compile(r"\(([^\s()]+)\s+([^\s()]+)\s*\)|([()])|[^\s()]+")
_BRACKET = re.compile(r"[()]")
_TEXT_END = re.compile(r"[\s()]")

Item = ParsedTree | SkippedTree


class _Problem(Exception):
    """Bad input found while scanning; turned into a SkippedTree or an error."""

    def __init__(self, message: str, expected: str, line: int, column: int, open_brackets: int):
        super().__init__(message)
        self.message = message
        self.expected = expected
        self.line = line
        self.column = column
        self.open_brackets = open_brackets  # brackets of the bad tree still open
        self.resume: int | None = None  # where reading goes on in the line


class UndecodableLine(str):
    """A line with invalid UTF-8, decoded with a replacement character for each bad byte.

    `bad_bytes` lists (character index in the text, 1-based byte column, byte value),
    one entry per undecodable byte sequence, in order.
    """

    bad_bytes: list[tuple[int, int, int]]


def read_trees(lines: Iterable[str], source: str, strict: bool = False) -> Iterator[Item]:
    """Read bracketed trees from decoded lines (numbered from 1), streaming."""
    reader = _Reader(source, strict)
    out = reader.out
    line_no, line = 0, ""
    for line_no, line in enumerate(lines, 1):
        reader.feed(line_no, line)
        if out:
            yield from out
            out.clear()
    reader.finish(line_no, line)
    yield from out


def read_file(path: str | Path, strict: bool = False) -> Iterator[Item]:
    """Read a plain or gzipped (.gz) treebank file as a stream of trees.

    Invalid UTF-8 skips the tree that holds it; a truncated or corrupt .gz, or a file
    that cannot be read, raises TreebankFormatError for the whole file. An empty file
    yields no trees.
    """
    path = Path(path)
    source = str(path)
    position = [0]  # last line handed out, for the error message
    try:
        with _open(path) as handle:
            yield from read_trees(_decode(handle, position), source, strict)
    except (OSError, EOFError, zlib.error) as exc:
        what = "truncated or corrupt gzip file" if path.suffix == ".gz" else "cannot read file"
        raise TreebankFormatError(f"{what}: {exc}", source, position[0] + 1, 0) from exc


def read_text_chunks(path: str | Path, chunk_bytes: int = 1 << 20) -> Iterator[str]:
    """A file (plain or .gz) as decoded runs of whole lines, about `chunk_bytes` each.

    For fast consumers that read well-formed files in bulk (the index builder): no
    recovery here, so invalid UTF-8 raises UnicodeDecodeError and an unreadable or
    truncated file raises OSError / EOFError / zlib.error; such callers then read the
    file with `read_file`, which reports the problem with its position.
    """
    with _open(Path(path)) as handle:
        rest = handle.read(chunk_bytes)
        if rest.startswith(b"\xef\xbb\xbf"):
            rest = rest[3:]  # a UTF-8 byte order mark is not part of the text
        while True:
            more = handle.read(chunk_bytes)
            if not more:
                if rest:
                    yield rest.decode("utf-8")
                return
            cut = more.rfind(b"\n") + 1
            if cut == 0:  # no line break in this read: keep collecting
                rest += more
                continue
            yield (rest + more[:cut]).decode("utf-8")
            rest = more[cut:]


def _open(path: Path):
    if path.suffix == ".gz":
        return gzip.open(path, "rb")
    return open(path, "rb")


def _decode(handle, position: list[int]) -> Iterator[str]:
    """Decode a binary file line by line; bad lines become UndecodableLine."""
    for line_no, raw in enumerate(handle, 1):
        position[0] = line_no
        if line_no == 1 and raw.startswith(b"\xef\xbb\xbf"):
            raw = raw[3:]  # a UTF-8 byte order mark is not part of the text
        try:
            yield raw.decode("utf-8")
        except UnicodeDecodeError:
            yield _undecodable(raw)


def _undecodable(raw: bytes) -> UndecodableLine:
    """Decode a line with invalid UTF-8, noting where every bad byte is."""
    text, bad_bytes, pos = "", [], 0
    while True:
        try:
            text += raw[pos:].decode("utf-8")
            break
        except UnicodeDecodeError as exc:
            bad = pos + exc.start
            text += raw[pos:bad].decode("utf-8")
            bad_bytes.append((len(text), bad + 1, raw[bad]))
            text += "\ufffd"
            pos = pos + exc.end
    line = UndecodableLine(text)
    line.bad_bytes = bad_bytes
    return line


class _Reader:
    """The state of one reading: the open brackets and what to skip."""

    def __init__(self, source: str, strict: bool):
        self.source = source
        self.strict = strict
        self.stack: list[ParsedNode] = []  # open brackets of the tree being built
        self.tree_line = 0
        self.ordinal = 0
        self.discarding = 0  # > 0: open brackets of a bad tree being skipped
        self.in_junk = False  # inside material already reported as stray
        self.out: list[Item] = []

    # -- driving -----------------------------------------------------------------

    def feed(self, line_no: int, line: str) -> None:
        """Read one line; finished trees and problems are appended to `self.out`."""
        if line[:1] == "(" and (self.stack or self.discarding or self.in_junk):
            self._new_tree_at_column_one(line_no)
        pos: int | None = 0
        if type(line) is str and not (self.discarding or self.in_junk):
            try:  # the common case, kept free of the checks below
                self._scan(line_no, line, 0, len(line))
                return
            except _Problem as problem:
                pos = self._recover(problem)
        if type(line) is UndecodableLine:
            for char_index, byte_column, byte_value in line.bad_bytes:
                start = _text_start(line, char_index)
                self._run(line_no, line, pos, start)
                pos = max(pos or 0, start)
                self._bad_byte(line_no, byte_column, byte_value)
        self._run(line_no, line, pos, len(line))

    def finish(self, line_no: int, line: str) -> None:
        """Report a tree left open at the end of the input (`line` is the last one)."""
        if self.stack:
            root = self.stack[0]
            self._report(_Problem(
                f"missing ')': the tree that opens at line {root.line}, column {root.column}"
                " is still open at the end of the file", "')'",
                line_no, len(line.rstrip("\r\n")) + 1, 0))
            self.stack = []

    def _run(self, line_no: int, line: str, pos: int | None, end: int) -> None:
        """Read line[pos:end] in whatever mode the reader is in, switching as needed."""
        while pos is not None and pos < end:
            pos = self._step(line_no, line, pos, end)

    def _step(self, line_no: int, line: str, pos: int, end: int) -> int | None:
        """Go on from `pos` in whatever mode the reader is in."""
        if self.discarding:
            return self._discard(line, pos, end)
        if self.in_junk:
            start = line.find("(", pos, end)
            if start < 0:
                return None
            self.in_junk = False
            return start
        try:
            self._scan(line_no, line, pos, end)
            return None
        except _Problem as problem:
            return self._recover(problem)

    def _recover(self, problem: _Problem) -> int | None:
        """Report a problem, drop the tree and say where reading goes on."""
        self._report(problem)
        self.stack = []
        self.discarding = problem.open_brackets
        return problem.resume

    def _discard(self, line: str, pos: int, end: int) -> int | None:
        """Skip the rest of a bad tree by counting its brackets."""
        depth = self.discarding
        for match in _BRACKET.finditer(line, pos, end):
            depth += 1 if match.group() == "(" else -1
            if depth == 0:
                self.discarding = 0
                return match.end()
        self.discarding = depth
        return None

    def _new_tree_at_column_one(self, line_no: int) -> None:
        """Rule 2 of the module docstring: a '(' in column 1 starts a new tree."""
        self.in_junk = False
        self.discarding = 0
        if self.stack:
            root = self.stack[0]
            self._report(_Problem(
                f"missing ')': the tree that opens at line {root.line}, column {root.column}"
                " is still open where a new tree starts in column 1", "')' before the new tree",
                line_no, 1, 0))
            self.stack = []

    def _bad_byte(self, line_no: int, byte_column: int, byte_value: int) -> None:
        """Report invalid UTF-8 and skip the tree (or stray text) that holds it."""
        if self.discarding or self.in_junk:
            return  # inside something already reported and being skipped
        self._report(_Problem(
            f"invalid UTF-8 byte 0x{byte_value:02x} at byte column {byte_column}",
            "UTF-8 text", line_no, byte_column, len(self.stack)))
        self.discarding = len(self.stack)
        self.in_junk = not self.stack
        self.stack = []

    def _report(self, problem: _Problem) -> None:
        if self.strict:
            raise TreebankFormatError(problem.message, self.source, problem.line,
                                      problem.column, problem.expected)
        message = f"{problem.message}; expected {problem.expected}"
        self.out.append(SkippedTree(self.source, problem.line, problem.column, message))

    # -- the hot loop ----------------------------------------------------------------

    def _scan(self, line_no: int, line: str, pos: int, end: int) -> None:
        """Build nodes from the tokens of line[pos:end]; raises _Problem on bad input."""
        stack = self.stack
        node_type = ParsedNode
        for match in _TOKEN.finditer(line, pos, end):
            kind = match.lastindex
            if kind == 2:  # (TAG word)
                node = node_type(match.group(1), [], match.group(2), line_no, match.start() + 1)
                if stack:
                    parent = stack[-1]
                    if parent.label is None or parent.word is not None:
                        self._check_parent(parent, match, line_no)
                    parent.children.append(node)
                else:
                    self.ordinal += 1
                    self.out.append(ParsedTree(node, self.source, line_no, self.ordinal))
            elif kind == 3:
                if match.group(3) == "(":
                    # label None: no label read yet; it becomes a str (maybe '') before
                    # the node can close without a problem
                    node = node_type(None, [], None, line_no, match.start() + 1)
                    if stack:
                        parent = stack[-1]
                        if parent.label is None or parent.word is not None:
                            self._check_parent(parent, match, line_no)
                        parent.children.append(node)
                    else:
                        self.ordinal += 1
                        self.tree_line = line_no
                    stack.append(node)
                else:
                    if not stack:
                        self._stray(match, line_no)  # raises
                    node = stack.pop()
                    if node.word is None and not node.children:
                        self._empty_bracket(node, match, line_no)
                    if not stack:
                        self.out.append(
                            ParsedTree(node, self.source, self.tree_line, self.ordinal))
            else:
                if not stack:
                    self._stray(match, line_no)  # raises
                node = stack[-1]
                if node.label is None:
                    node.label = match.group()
                elif node.children or node.word is not None:
                    self._misplaced_word(node, match, line_no)
                else:
                    node.word = match.group()

    # -- problems found by the hot loop -------------------------------------------------

    def _check_parent(self, parent: ParsedNode, match: re.Match, line_no: int) -> None:
        """A bracket opens inside `parent`: fine unless parent lacks a label or has a word."""
        column = match.start() + 1
        still_open = len(self.stack) + (1 if match.lastindex == 3 else 0)  # '(' opens one
        if parent.word is not None:
            raise _at(match, _Problem(
                f"a bracket after the word {parent.word!r} of ({parent.label} ...) opened at "
                f"line {parent.line}, column {parent.column}: a node holds either one word or "
                "bracketed children, not both", "')'", line_no, column, still_open))
        if len(self.stack) > 1:
            raise _at(match, _Problem(
                f"missing label: the bracket at line {parent.line}, column {parent.column} has "
                "no label (only the outermost bracket of a tree may be unlabelled)",
                "a label after '('", line_no, column, still_open))
        parent.label = ""  # the unlabelled outer bracket of a tree

    def _empty_bracket(self, node: ParsedNode, match: re.Match, line_no: int) -> None:
        if node.label is None:
            message, expected = "empty brackets '()'", "a label"
        else:
            message = f"({node.label}) has no word and no children"
            expected = "a word or a bracketed child"
        raise _at(match, _Problem(
            f"{message} at line {node.line}, column {node.column}", expected, line_no,
            match.start() + 1, len(self.stack)))

    def _misplaced_word(self, node: ParsedNode, match: re.Match, line_no: int) -> None:
        if node.word is not None:
            message = (f"a second word {match.group()!r} in ({node.label} {node.word} ...): "
                       "a preterminal holds one word")
        else:
            message = (f"the word {match.group()!r} follows bracketed children of "
                       f"({node.label} ...): a node holds either one word or bracketed "
                       "children, not both")
        raise _at(match, _Problem(message, "'(' or ')'", line_no, match.start() + 1,
                                  len(self.stack)))

    def _stray(self, match: re.Match, line_no: int) -> None:
        if match.group() == ")":
            message = "unbalanced ')': no bracket is open here"
        else:
            message = f"stray text {match.group()!r} outside any tree"
        self.in_junk = True
        problem = _Problem(message, "'(' to start a tree", line_no, match.start() + 1, 0)
        raise _at(match, problem)


def _at(match: re.Match, problem: _Problem) -> _Problem:
    """Note where reading goes on after the problem: just past the token."""
    problem.resume = match.end()
    return problem


def _text_start(line: str, index: int) -> int:
    """Where the run of text holding line[index] begins."""
    start = index
    while start > 0 and not _TEXT_END.match(line, start - 1):
        start -= 1
    return start
