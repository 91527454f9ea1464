"""Trees into node rows: pre-order numbering, interval and span columns, label/word codes."""
from __future__ import annotations

import sqlite3
from itertools import repeat
from operator import itemgetter

from ..read.labels import EMPTY_LABEL, decompose_label, empty_element, unescape_word

LABEL_OF = itemgetter(7)  # columns of a node row
WORD_OF = itemgetter(8)
INSERT_LABEL = (
    "INSERT INTO label(code, text, category, functions, coindex, gapindex) VALUES (?,?,?,?,?,?)"
)
INSERT_WORD = "INSERT INTO word(code, text, form, empty_kind, ref_index) VALUES (?,?,?,?,?)"


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
        self._reset_pending()

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
        return code

    def word(self, text: str, empty: bool) -> int:
        code = self.next_word
        self.next_word += 1
        form = unescape_word(text)
        self.words[text] = code
        self.forms[code] = form
        kind, ref_index = self._empty_kind(text) if empty else (None, None)
        if empty:
            self.empty_words.add(code)
        self.new_words.append((code, text, form, kind, ref_index))
        return code

    def mark_empty(self, code: int, text: str) -> None:
        """A word first seen as an overt word now also occurs under -NONE-."""
        self.empty_words.add(code)
        kind, ref_index = self._empty_kind(text)
        self.newly_empty.append((kind, ref_index, code))

    @staticmethod
    def _empty_kind(text: str) -> tuple[str, int | None]:
        element = empty_element(EMPTY_LABEL, text)  # every leaf under -NONE- is empty
        return element.kind, element.ref_index

    def flush(self, conn: sqlite3.Connection) -> None:
        conn.executemany(INSERT_LABEL, self.new_labels)
        conn.executemany(INSERT_WORD, self.new_words)
        conn.executemany(
            "UPDATE word SET empty_kind = ?, ref_index = ? WHERE code = ?", self.newly_empty
        )
        self._reset_pending()

    def rollback(self) -> None:
        for row in self.new_labels:
            del self.labels[row[1]]
        for row in self.new_words:
            del self.words[row[1]]
            del self.forms[row[0]]
            self.empty_words.discard(row[0])
        for row in self.newly_empty:
            self.empty_words.discard(row[2])
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
                        word_code, leaf, leaf, None, None))
            else:
                word_code = words.get(word) or codes.word(word, False)
                tok += 1
                tokens.append(word_code)
                append((node_id, node_id, tree_id, parent, depth, position, 0, code,
                        word_code, leaf, leaf, tok, tok))
            continue
        children = node.children
        n_children = len(children)
        row = [node_id, 0, tree_id, parent, depth, position, n_children, code, None,
               leaf + 1, 0, tok + 1, None]
        append(row)
        push((None, row, 0, 0))
        extend(zip(reversed(children), repeat(node_id), repeat(depth + 1),
                   range(n_children, 0, -1)))
    return rows, tokens
