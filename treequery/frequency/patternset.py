"""Pattern-set files: several named patterns in one file (format in grammar/README.md).

A line whose first non-blank character is `@` starts a pattern: `@NAME`, then the
pattern, which may begin on the same line and runs to the next `@` line or the end of
the file. `@` is no symbol of the pattern language, and no string or regular
expression of a pattern runs over a line end, so such a line can only be a header.
Before the first header only blank lines and `#` comments may stand.
"""
from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path

from treequery.errors import PatternError
from treequery.pattern.ast import Pattern
from treequery.pattern.check import compile_pattern

HEADER = re.compile(r"[ \t]*@")
NAME = re.compile(r"[A-Za-z0-9_][A-Za-z0-9_.\-]*")
NAME_RULE = "a pattern name of letters, digits, `_`, `-` and `.` right after `@`"


class PatternSetError(PatternError):
    """A pattern-set file that cannot be read; reported as FILE:LINE:COLUMN."""

    kind = "pattern-set error"

    def __init__(self, message: str, path: str, text: str, position: int,
                 hint: str | None = None):
        self.path = path
        super().__init__(message, text, position, hint)

    def render(self) -> str:
        lines = self.pattern.split("\n")
        source_line = lines[self.line - 1] if lines else ""
        text = f"{self.path}:{self.line}:{self.column}: {self.message}\n"
        text += f"  {source_line}\n  {' ' * (self.column - 1)}^"
        if self.hint:
            text += f"\nhint: {self.hint}"
        return text


@dataclass(frozen=True, slots=True)
class NamedPattern:
    name: str
    pattern: Pattern
    line: int           # 1-based line of its `@NAME` header


def read_pattern_set(path: str | Path) -> tuple[NamedPattern, ...]:
    """Read and compile every pattern of a pattern-set file."""
    return parse_pattern_set(Path(path).read_text(encoding="utf-8"), str(path))


def parse_pattern_set(text: str, path: str = "<patterns>") -> tuple[NamedPattern, ...]:
    """Split the text at its `@NAME` lines and compile each pattern (positions are the file's)."""
    headers = _headers(text, path)
    found: dict[str, NamedPattern] = {}
    # a pattern ends where the next header's line begins
    ends = [text.rfind("\n", 0, name_at) + 1 for _, name_at, _ in headers[1:]] + [len(text)]
    for (name, name_at, body_at), end in zip(headers, ends, strict=True):
        line = text.count("\n", 0, name_at) + 1
        if name in found:
            raise PatternSetError(f"a second pattern named {name!r} (the first is at line "
                                  f"{found[name].line}); expected a new name", path, text,
                                  name_at)
        # without the blank end, "unexpected end" points just after the last statement
        body = text[body_at:end].rstrip()
        found[name] = NamedPattern(name, _compile(body, name, path, text, body_at), line)
    return tuple(found.values())


def _headers(text: str, path: str) -> list[tuple[str, int, int]]:
    """(name, offset of the name, offset where its pattern starts) for every `@` line."""
    headers = []
    offset = 0
    for line in text.split("\n"):
        at = HEADER.match(line)
        if at:
            headers.append(_header(text, path, offset + at.end()))
        elif not headers and line.strip() and not line.lstrip().startswith("#"):
            column = len(line) - len(line.lstrip())
            raise PatternSetError("text before the first pattern; expected `@NAME` to start a "
                                  "pattern (or a # comment)", path, text, offset + column)
        offset += len(line) + 1
    if not headers:
        raise PatternSetError("no pattern in the file; expected `@NAME` followed by a pattern",
                              path, text, 0)
    return headers


def _header(text: str, path: str, name_at: int) -> tuple[str, int, int]:
    named = NAME.match(text, name_at)
    if named is None:
        raise PatternSetError(f"missing pattern name; expected {NAME_RULE}", path, text,
                              name_at)
    after = named.end()
    if after < len(text) and text[after] not in " \t\r\n":
        raise PatternSetError(f"unexpected character {text[after]!r} in the pattern name; "
                              f"expected {NAME_RULE}, then a space or a line end",
                              path, text, after)
    return named.group(), name_at, after


def _compile(body: str, name: str, path: str, text: str, body_at: int) -> Pattern:
    try:
        return compile_pattern(body)
    except PatternError as error:
        raise PatternSetError(f"in pattern {name!r}: {error.message}", path, text,
                              body_at + error.position, error.hint) from None
