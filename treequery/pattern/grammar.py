"""Finding grammar/pattern.lark and building the one cached lark parser for patterns."""
from __future__ import annotations

import functools
from collections.abc import Iterator
from importlib import resources
from importlib.abc import Traversable
from pathlib import Path

from lark import Lark, Token
from lark.lark import PostLex

GRAMMAR_FILE = "pattern.lark"

# Tokens that can end a statement: a separator after anything else is a line break
# inside an unfinished statement (`a dominates` NEWLINE `b`) and is dropped.
STATEMENT_END = frozenset({
    "NAME", "ATTR_REF", "CATEGORY", "DASH_CATEGORY", "QUOTED_CATEGORY", "REGEX",
    "STAR", "STRING", "INT", "RPAR", "RBRACE",
})


def grammar_location() -> Traversable:
    """The grammar file: the copy inside an installed wheel first, else the repository's."""
    packaged = resources.files("treequery") / "_data" / "grammar" / GRAMMAR_FILE
    if packaged.is_file():
        return packaged
    in_repo = Path(__file__).resolve().parents[2] / "grammar" / GRAMMAR_FILE
    if in_repo.is_file():
        return in_repo
    raise FileNotFoundError(
        f"{GRAMMAR_FILE} not found in the installed package (treequery/_data/grammar) "
        f"nor in the repository ({in_repo})"
    )


class SeparatorPostLex(PostLex):
    """Turns newlines and `;` into _SEP tokens where they end a statement, drops the rest.

    Kept: one separator between two statements. Dropped: leading and trailing ones,
    repeats (blank lines, comment lines), newlines inside parentheses, separators after
    `{` or before `}`, and newlines before `or` or after a token that cannot end a
    statement (a relation word, `or`, `not`, `:`...). A `;` in such a place is kept,
    so that `a dominates ; b` is a syntax error rather than silently joined.
    """

    always_accept = ("NEWLINE", "SEMI")

    def process(self, stream: Iterator[Token]) -> Iterator[Token]:
        paren_depth = 0
        pending: Token | None = None  # the first separator since the last real token
        pending_semi = False
        previous: str | None = None  # type of the last real token passed on
        for token in stream:
            if token.type in ("NEWLINE", "SEMI"):
                if token.type == "NEWLINE" and paren_depth:
                    continue
                pending = pending or token
                pending_semi = pending_semi or token.type == "SEMI"
                continue
            if pending is not None:
                if _keeps_separator(previous, token.type, pending_semi):
                    yield Token.new_borrow_pos("_SEP", pending.value, pending)
                pending, pending_semi = None, False
            if token.type == "LPAR":
                paren_depth += 1
            elif token.type == "RPAR":
                paren_depth = max(0, paren_depth - 1)
            previous = token.type
            yield token


def _keeps_separator(previous: str | None, following: str, has_semicolon: bool) -> bool:
    if previous in (None, "LBRACE") or following == "RBRACE":
        return False
    if previous in STATEMENT_END:
        return following != "OR" or has_semicolon
    return has_semicolon


@functools.cache
def pattern_parser() -> Lark:
    """The LALR parser for patterns, built once per process."""
    text = grammar_location().read_text(encoding="utf-8")
    return Lark(text, parser="lalr", lexer="basic", postlex=SeparatorPostLex(), start="start")
