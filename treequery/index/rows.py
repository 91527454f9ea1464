"""Trees into node rows: pre-order numbering, interval and span columns, label/word codes."""
from __future__ import annotations

import re
import sqlite3
import zlib
from collections.abc import Generator, Iterable, Iterator
from itertools import repeat
from operator import itemgetter
from pathlib import Path

from ..read.brackets import read_file, read_text_chunks
from ..read.labels import EMPTY_LABEL, decompose_label, empty_element, unescape_word
from ..read.model import SkippedTree

LABEL_OF = itemgetter(7)  # columns of a node row
WORD_OF = itemgetter(8)
INSERT_LABEL = (
    "INSERT INTO label(code, text, category, functions, coindex, gapindex) VALUES (?,?,?,?,?,?)"
)
INSERT_WORD = "INSERT INTO word(code, text, form, empty_kind, ref_index) VALUES (?,?,?,?,?)"


def syntax_codes(conn: sqlite3.Connection) -> tuple[dict, dict, dict, dict]:
    """Label code -> category, coindex and gapindex (where it has one); word code ->
    reference index (empty elements with one): what index-time syntax needs."""
    categories, coindexes, gapindexes = {}, {}, {}
    for code, category, coindex, gapindex in conn.execute(
            "SELECT code, category, coindex, gapindex FROM label"):
        categories[code] = category
        if coindex is not None:
            coindexes[code] = coindex
        if gapindex is not None:
            gapindexes[code] = gapindex
    ref_indexes = dict(conn.execute(
        "SELECT code, ref_index FROM word WHERE ref_index IS NOT NULL"))
    return categories, coindexes, gapindexes, ref_indexes


class CodeTables:
    """The label and word tables mirrored in memory, with this file's additions kept apart.

    Codes are handed out here rather than by SQLite so node rows can be built without
    a round trip; additions are written at the end of the file, or forgotten on rollback.
    """

    def __init__(self, conn: sqlite3.Connection):
        self.labels = dict(conn.execute("SELECT text, code FROM label"))
        self.words = dict(conn.execute("SELECT text, code FROM word"))
        self.forms = dict(conn.execute("SELECT code, form FROM word"))
        self.empty_words = {
            code for (code,) in conn.execute("SELECT code FROM word WHERE empty_kind IS NOT NULL")
        }
        self.next_label = (conn.execute("SELECT max(code) FROM label").fetchone()[0] or 0) + 1
        self.next_word = (conn.execute("SELECT max(code) FROM word").fetchone()[0] or 0) + 1
        # what the index-time annotation (linguistics.py) needs, kept in step with the codes
        self.categories, self.coindexes, self.gapindexes, self.ref_indexes = syntax_codes(conn)
        self._reset_pending()

    @classmethod
    def from_state(cls, state: dict) -> CodeTables:
        """Code tables rebuilt from `state()` (in a worker process, with no connection)."""
        tables = cls.__new__(cls)
        tables.__dict__.update(state)
        tables._reset_pending()
        return tables

    def state(self) -> dict:
        """What a worker process needs to hand out the same codes as this process."""
        return {"labels": self.labels, "words": self.words, "forms": self.forms,
                "empty_words": self.empty_words, "next_label": self.next_label,
                "next_word": self.next_word, "categories": self.categories,
                "coindexes": self.coindexes, "gapindexes": self.gapindexes,
                "ref_indexes": self.ref_indexes}

    def take_pending(self) -> tuple[list, list, list]:
        """This file's new labels, new words and newly empty words; forgets them here."""
        pending = (self.new_labels, self.new_words, self.newly_empty)
        self._reset_pending()
        return pending

    @staticmethod
    def write_pending(conn: sqlite3.Connection, pending: tuple[list, list, list]) -> None:
        """Insert rows from `take_pending` (perhaps of another process's tables)."""
        new_labels, new_words, newly_empty = pending
        conn.executemany(INSERT_LABEL, new_labels)
        conn.executemany(INSERT_WORD, new_words)
        conn.executemany(
            "UPDATE word SET empty_kind = ?, ref_index = ? WHERE code = ?", newly_empty
        )

    def _reset_pending(self) -> None:
        self.new_labels: list[tuple] = []
        self.new_words: list[tuple] = []
        self.newly_empty: list[tuple] = []

    def label(self, text: str) -> int:
        parts = decompose_label(text)
        code = self.next_label
        self.next_label += 1
        self.labels[text] = code
        self.new_labels.append((code, text, parts.category, "-".join(parts.functions),
                                parts.coindex, parts.gapindex))
        self._note_label(code, parts.category, parts.coindex, parts.gapindex)
        return code

    def _note_label(self, code: int, category: str, coindex: int | None,
                    gapindex: int | None) -> None:
        self.categories[code] = category
        if coindex is not None:
            self.coindexes[code] = coindex
        if gapindex is not None:
            self.gapindexes[code] = gapindex

    def word(self, text: str, empty: bool) -> int:
        code = self.next_word
        self.next_word += 1
        form = unescape_word(text)
        self.words[text] = code
        self.forms[code] = form
        kind, ref_index = self._empty_kind(text) if empty else (None, None)
        if empty:
            self.empty_words.add(code)
        if ref_index is not None:
            self.ref_indexes[code] = ref_index
        self.new_words.append((code, text, form, kind, ref_index))
        return code

    def mark_empty(self, code: int, text: str) -> None:
        """A word first seen as an overt word now also occurs under -NONE-."""
        self.empty_words.add(code)
        kind, ref_index = self._empty_kind(text)
        if ref_index is not None:
            self.ref_indexes[code] = ref_index
        self.newly_empty.append((kind, ref_index, code))

    @staticmethod
    def _empty_kind(text: str) -> tuple[str, int | None]:
        element = empty_element(EMPTY_LABEL, text)  # every leaf under -NONE- is empty
        return element.kind, element.ref_index

    def flush(self, conn: sqlite3.Connection) -> None:
        self.write_pending(conn, self.take_pending())

    def rollback(self) -> None:
        for row in self.new_labels:
            del self.labels[row[1]]
            del self.categories[row[0]]
            self.coindexes.pop(row[0], None)
            self.gapindexes.pop(row[0], None)
        for row in self.new_words:
            del self.words[row[1]]
            del self.forms[row[0]]
            self.empty_words.discard(row[0])
            self.ref_indexes.pop(row[0], None)
        for row in self.newly_empty:
            self.empty_words.discard(row[2])
            self.ref_indexes.pop(row[2], None)
        if self.new_labels:
            self.next_label = self.new_labels[0][0]
        if self.new_words:
            self.next_word = self.new_words[0][0]
        self._reset_pending()


def node_rows(root, tree_id: int, first_id: int, codes: CodeTables) -> tuple[list, list[int]]:
    """The node rows of one tree in pre-order, and the word codes of its overt tokens.

    Iterative (trees can be deeper than Python's recursion limit). A phrase's row is
    a list completed when its exit marker is popped: by then every node inside it
    has been numbered, so `last`, `leaf_last` and `tok_last` are known.
    """
    labels, words, empty_words = codes.labels, codes.words, codes.empty_words
    rows: list = []
    append = rows.append
    tokens: list[int] = []
    leaf = tok = 0
    stack: list = [(root, None, 0, 1)]
    pop, push, extend = stack.pop, stack.append, stack.extend
    while stack:
        node, parent, depth, position = pop()
        if node is None:  # exit marker: (None, row, _, _)
            row = parent
            row[1] = first_id + len(rows) - 1
            row[10] = leaf
            if tok >= row[11]:
                row[12] = tok
            else:
                row[11] = None
            continue
        node_id = first_id + len(rows)
        label = node.label
        code = labels.get(label) or codes.label(label)
        word = node.word
        if word is not None:
            leaf += 1
            if label == EMPTY_LABEL:
                word_code = words.get(word) or codes.word(word, True)
                if word_code not in empty_words:
                    codes.mark_empty(word_code, word)
                append((node_id, node_id, tree_id, parent, depth, position, 0, code,
                        word_code, leaf, leaf, None, None, None, None, None))
            else:
                word_code = words.get(word) or codes.word(word, False)
                tok += 1
                tokens.append(word_code)
                append((node_id, node_id, tree_id, parent, depth, position, 0, code,
                        word_code, leaf, leaf, tok, tok, None, None, None))
            continue
        children = node.children
        n_children = len(children)
        row = [node_id, 0, tree_id, parent, depth, position, n_children, code, None,
               leaf + 1, 0, tok + 1, None, None, None, None]
        append(row)
        push((None, row, 0, 0))
        extend(zip(reversed(children), repeat(node_id), repeat(depth + 1),
                   range(n_children, 0, -1)))
    return rows, tokens


# -- the fast path: bracketed text straight to flat node rows ---------------------------

# Node rows of the fast path are flat lists of ints, 16 per node, with NO_VALUE where
# the column is NULL: ints move between processes as raw bytes and bind to SQLite
# without a Python tuple being built per node (the INSERT turns NO_VALUE into NULL).
# The last three (head, branch_up, branch_reach) are filled in by linguistics.py.
NO_VALUE = -1
NODE_COLUMNS = 16
INSERT_FLAT_NODE = ("INSERT INTO node VALUES (?,?,?,nullif(?,-1),?,?,?,?,nullif(?,-1),?,?,"
                    "nullif(?,-1),nullif(?,-1),nullif(?,-1),nullif(?,-1),nullif(?,-1))")
FLAT_BATCH = 65_000 * NODE_COLUMNS  # values per batch handed to the writer

# One findall over a chunk of whole lines. Groups: preterminal tag and word when the
# whole `(TAG word)` sits on one line; the same spread over lines (tag, the space after
# it, word, the space before ')'), which pretty-printers write for long words; the label
# of an opening bracket; ')'; a line break before a '(' in column 1; any other line
# break; text anywhere else. The
# fast path knows only well-formed trees: everything unusual is left to the full
# reader (see FastPathDeclined).
_FAST_TOKEN = re.compile(
    r"[ \t\r]*(?:"  # spaces before a token are eaten here: fewer failed match attempts
    r"\(([^\s()]+)[^\S\n]+([^\s()]+)[^\S\n]*\)|\(([^\s()]+)(\s+)([^\s()]+)(\s*)\)"
    r"|\(([^\s()]*)|(\))|(\n(?=\())|(\n)|([^\s()]+))"
)


class FastPathDeclined(Exception):
    """The fast path met something only the full reader handles (bad input, odd layout)."""


def fast_rows(chunks: Iterable[str], codes: CodeTables, first_node: int,
              first_tree: int) -> Iterator[tuple[list[int], list[tuple]]]:
    """Node rows and tree rows of well-formed bracketed text, batch by batch.

    `chunks` are decoded runs of whole lines of one file. Yields (flat node rows,
    tree rows without the document column) after whole trees, about FLAT_BATCH values
    at a time. The rows equal those of `read_trees` + `node_rows` for the same text;
    any input the full reader would report, or reads in a way this loop does not,
    raises FastPathDeclined instead (the caller then reads the file the full way).
    """
    labels, words, empty_words, forms = codes.labels, codes.words, codes.empty_words, codes.forms
    new_label, new_word = codes.label, codes.word
    flat: list[int] = []
    extend = flat.extend
    trees: list[tuple] = []
    ids: list[int] = []  # open phrases: their ids, row offsets and children so far
    offsets: list[int] = []
    kids: list[int] = []
    node_id, tree_id, ordinal, line = first_node, first_tree, 0, 1
    root = tree_line = leaf = tok = 0
    tokens: list[int] = []
    for chunk in chunks:
        if ids and chunk[:1] == "(":
            raise FastPathDeclined("a '(' in column 1 inside an open tree")
        for (tag, word, long_tag, space_before, long_word, space_after, label, close,
             column_one, newline, other) in _FAST_TOKEN.findall(chunk):
            if tag or long_tag:  # (TAG word)
                if long_tag:  # over several lines: rare, so turned into the usual case
                    if not ids:
                        raise FastPathDeclined("a one-node tree over several lines")
                    tag, word = long_tag, long_word
                    line += space_before.count("\n") + space_after.count("\n")
                if ids:
                    kids[-1] += 1
                    parent, position, depth = ids[-1], kids[-1], len(ids)
                else:  # a tree that is one preterminal
                    ordinal += 1
                    root, tree_line, leaf, tok, tokens = node_id, line, 0, 0, []
                    parent, position, depth = NO_VALUE, 1, 0
                code = labels.get(tag) or new_label(tag)
                leaf += 1
                if tag == EMPTY_LABEL:
                    word_code = words.get(word) or new_word(word, True)
                    if word_code not in empty_words:
                        codes.mark_empty(word_code, word)
                    extend((node_id, node_id, tree_id, parent, depth, position, 0, code,
                            word_code, leaf, leaf, NO_VALUE, NO_VALUE, NO_VALUE, NO_VALUE,
                            NO_VALUE))
                else:
                    word_code = words.get(word) or new_word(word, False)
                    tok += 1
                    tokens.append(word_code)
                    extend((node_id, node_id, tree_id, parent, depth, position, 0, code,
                            word_code, leaf, leaf, tok, tok, NO_VALUE, NO_VALUE, NO_VALUE))
                node_id += 1
                if ids:
                    continue
            elif label:  # (LABEL
                if ids:
                    kids[-1] += 1
                    parent, position, depth = ids[-1], kids[-1], len(ids)
                else:
                    ordinal += 1
                    root, tree_line, leaf, tok, tokens = node_id, line, 0, 0, []
                    parent, position, depth = NO_VALUE, 1, 0
                code = labels.get(label) or new_label(label)
                offsets.append(len(flat))
                ids.append(node_id)
                kids.append(0)
                extend((node_id, 0, tree_id, parent, depth, position, 0, code, NO_VALUE,
                        leaf + 1, 0, tok + 1, NO_VALUE, NO_VALUE, NO_VALUE, NO_VALUE))
                node_id += 1
                continue
            elif close:
                if not ids or not kids[-1]:
                    raise FastPathDeclined("')' with no open bracket, or an empty bracket")
                offset = offsets.pop()
                ids.pop()
                flat[offset + 1] = node_id - 1
                flat[offset + 6] = kids.pop()
                flat[offset + 10] = leaf
                if tok >= flat[offset + 11]:
                    flat[offset + 12] = tok
                else:
                    flat[offset + 11] = NO_VALUE
                if ids:
                    continue
            elif newline:
                line += 1
                continue
            elif column_one:
                line += 1
                if ids:
                    raise FastPathDeclined("a '(' in column 1 inside an open tree")
                continue
            elif other or ids:  # stray text, or an unlabelled bracket inside a tree
                raise FastPathDeclined("text outside a (TAG word) pair, or a missing label")
            else:  # '(' with no label: the outer bracket of a tree
                ordinal += 1
                root, tree_line, leaf, tok, tokens = node_id, line, 0, 0, []
                code = labels.get("") or new_label("")
                offsets.append(len(flat))
                ids.append(node_id)
                kids.append(0)
                extend((node_id, 0, tree_id, NO_VALUE, 0, 1, 0, code, NO_VALUE,
                        1, 0, 1, NO_VALUE, NO_VALUE, NO_VALUE, NO_VALUE))
                node_id += 1
                continue
            # a tree has just closed
            trees.append((tree_id, ordinal, tree_line, root,
                          node_id - 1, tok, leaf, " ".join(map(forms.__getitem__, tokens))))
            tree_id += 1
            if len(flat) >= FLAT_BATCH:
                yield flat, trees
                flat, trees = [], []
                extend = flat.extend
    if ids:
        raise FastPathDeclined("a tree still open at the end of the file")
    if flat or trees:
        yield flat, trees


# What the fast path's readers raise on input they leave to the full reader.
_DECLINED = (FastPathDeclined, UnicodeDecodeError, OSError, EOFError, zlib.error)
RESTART = "restart"  # yielded by file_rows: forget this file's rows so far


def file_rows(path: str | Path, codes: CodeTables, first_node: int, first_tree: int,
              strict: bool = False) -> Generator[tuple | str, None, list[SkippedTree]]:
    """The rows of one file, batch by batch, as (flat node rows, tree rows); returns the
    trees skipped.

    Tries the fast path first. If it declines, the codes it handed out are taken back,
    RESTART is yielded (the consumer drops the rows it has of this file) and the file
    is read again by the full reader, which reports bad trees (or raises
    TreebankFormatError: strict mode, unreadable file).
    """
    try:
        yield from fast_rows(read_text_chunks(path), codes, first_node, first_tree)
        return []
    except _DECLINED:
        codes.rollback()
    yield RESTART
    skipped: list[SkippedTree] = []
    flat: list = []
    trees: list[tuple] = []
    node_id, tree_id = first_node, first_tree
    for item in read_file(path, strict=strict):
        if isinstance(item, SkippedTree):
            skipped.append(item)
            continue
        rows, tokens = node_rows(item.root, tree_id, node_id, codes)
        flat.extend(NO_VALUE if value is None else value for row in rows for value in row)
        trees.append((tree_id, item.ordinal, item.line, node_id, node_id + len(rows) - 1,
                      len(tokens), rows[0][10], " ".join(map(codes.forms.__getitem__, tokens))))
        node_id += len(rows)
        tree_id += 1
        if len(flat) >= FLAT_BATCH:
            yield flat, trees
            flat, trees = [], []
    if flat or trees:
        yield flat, trees
    return skipped
