"""The rules-file format: named rules, each a pattern with an expectation and a message.

The format is described in RULES.md next to this module. Parsing checks the whole
file, patterns included, before any rule runs, and every problem is a RulesFileError
that carries the file's line and column.
"""
from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path

from ..errors import PatternError, TreequeryError
from ..pattern.ast import Pattern
from ..pattern.check import compile_pattern

EXPECTATIONS = ("never", "at most", "at least", "exactly", "every")
_RULE_LINE = re.compile(r"rule(?:\s+(\S+))?\s*$")
_RULE_EXTRA = re.compile(r"rule\s+\S+\s+")
_NAME = re.compile(r"[A-Za-z][A-Za-z0-9_.-]*")
_KEY = re.compile(r"(message|never|at most|at least|exactly|every|satisfies)"
                  r"(?:[ \t]+(\S+))?[ \t]*:")


class RulesFileError(TreequeryError):
    """A rules file that cannot be read; `line` and `column` are 1-based."""

    def __init__(self, message: str, path: str, line: int, column: int = 1,
                 detail: str | None = None):
        self.message, self.path, self.line, self.column = message, path, line, column
        self.detail = detail
        text = f"{path}:{line}:{column}: {message}"
        if detail:
            text += "\n" + detail
        super().__init__(text)


@dataclass(frozen=True, slots=True)
class SourceLine:
    """Where a line of pattern text came from: file line and the column of its first character."""

    line: int
    column: int


@dataclass(frozen=True, slots=True)
class PatternBlock:
    text: str
    origins: tuple[SourceLine, ...]   # one per line of `text`
    line: int                         # line of the key that introduced it
    column: int


@dataclass(frozen=True, slots=True)
class Rule:
    """One rule. `expect` is one of EXPECTATIONS; `limit` the N of at most/at least/exactly.

    `pattern` is what is searched: for `every X satisfies Y` it is X with `not { Y }`
    added, so its results are exactly the X that fail Y; for the other kinds it is
    the pattern as written.
    """

    name: str
    line: int
    message: str
    expect: str
    limit: int | None
    pattern: Pattern

    @property
    def expectation_text(self) -> str:
        return f"{self.expect} {self.limit}" if self.limit is not None else self.expect


@dataclass(frozen=True, slots=True)
class RulesFile:
    path: str
    rules: tuple[Rule, ...]


def read_rules(path: str | Path) -> RulesFile:
    """Read and check a rules file (UTF-8)."""
    try:
        text = Path(path).read_text(encoding="utf-8")
    except UnicodeDecodeError as error:
        raise RulesFileError(f"not UTF-8 text ({error.reason})", str(path), 1) from error
    except OSError as error:
        raise RulesFileError(f"cannot read the rules file: {error.strerror}", str(path), 1) \
            from error
    return parse_rules(text, str(path))


def parse_rules(text: str, path: str = "<rules>") -> RulesFile:
    """Parse rules-file text; raises RulesFileError at the first problem."""
    lines = text.splitlines()
    rules: list[Rule] = []
    seen: dict[str, int] = {}
    number = 0
    while number < len(lines):
        line = lines[number]
        if _is_blank(line):
            number += 1
            continue
        if line[0].isspace():
            raise RulesFileError("expected 'rule NAME' at the start of a line", path,
                                 number + 1, _indent(line) + 1)
        header = _RULE_LINE.match(line)
        if header is None:
            extra = _RULE_EXTRA.match(line)
            if extra is not None:
                raise RulesFileError("a rule line holds only 'rule NAME'", path, number + 1,
                                     extra.end() + 1)
            raise RulesFileError("expected 'rule NAME'", path, number + 1, 1)
        name = _check_name(header.group(1), line, path, number + 1, seen)
        end = _rule_end(lines, number + 1)
        rules.append(_parse_rule(name, lines, number, end, path))
        number = end
    if not rules:
        raise RulesFileError("the file holds no rule", path, max(1, len(lines)), 1)
    return RulesFile(path, tuple(rules))


def _check_name(name: str | None, line: str, path: str, number: int, seen: dict) -> str:
    if name is None:
        raise RulesFileError("a rule needs a name: 'rule NAME'", path, number, len(line) + 1)
    column = line.index(name) + 1
    if not _NAME.fullmatch(name):
        raise RulesFileError(f"bad rule name {name!r} (letters, digits, '_', '-', '.';"
                             " starting with a letter)", path, number, column)
    if name in seen:
        raise RulesFileError(f"rule {name!r} is already defined at line {seen[name]}",
                             path, number, column)
    seen[name] = number
    return name


def _rule_end(lines: list[str], start: int) -> int:
    """The index of the line after the rule's body (indented, blank and comment lines)."""
    end = start
    while end < len(lines) and (_is_blank(lines[end]) or lines[end][0].isspace()):
        end += 1
    return end


def _parse_rule(name: str, lines: list[str], header: int, end: int, path: str) -> Rule:
    fields: dict[str, tuple[int, int, str | None, PatternBlock | str]] = {}
    number = header + 1
    while number < end:
        line = lines[number]
        if _is_blank(line):
            number += 1
            continue
        key, argument, key_column, block, number = _parse_field(lines, number, end, path)
        if key in fields:
            raise RulesFileError(f"'{key}' given twice in rule {name!r}", path,
                                 block.line if isinstance(block, PatternBlock) else number,
                                 key_column)
        fields[key] = (block.line if isinstance(block, PatternBlock) else number, key_column,
                       argument, block)
    return _build_rule(name, header + 1, fields, path)


def _parse_field(lines: list[str], number: int, end: int, path: str):
    """One `key: value` field; a pattern key takes the indented lines below it too."""
    line = lines[number]
    indent = _indent(line)
    match = _KEY.match(line, indent)
    if match is None:
        raise RulesFileError("expected a field: message, never, at most N, at least N,"
                             " exactly N, every or satisfies, followed by ':'",
                             path, number + 1, indent + 1)
    key, argument = match.group(1), match.group(2)
    value_column = match.end()
    rest = line[value_column:]
    if argument is not None and key in ("message", "never", "every", "satisfies"):
        raise RulesFileError(f"'{key}' takes nothing between it and ':'", path, number + 1,
                             match.start(2) + 1)
    below = number + 1
    while below < end and (_is_blank(lines[below]) or _indent(lines[below]) > indent):
        below += 1
    if key == "message":
        # A message may go on over lines indented deeper than its key.
        words = [rest, *(lines[n] for n in range(number + 1, below)
                         if not _is_blank(lines[n]))]
        message = " ".join(" ".join(words).split())
        if not message:
            raise RulesFileError("the message is empty", path, number + 1, value_column + 1)
        return key, argument, indent + 1, message, below
    origins, texts = [], []
    if rest.strip():
        origins.append(SourceLine(number + 1, value_column))
        texts.append(rest)
    for below_number in range(number + 1, below):
        origins.append(SourceLine(below_number + 1, 0))
        texts.append(lines[below_number])
    while texts and _is_blank(texts[-1]):  # trailing blank lines belong to nobody
        texts.pop()
        origins.pop()
    if not texts:
        raise RulesFileError(f"'{key}' needs a pattern, on its line or indented below it",
                             path, number + 1, value_column + 1)
    block = PatternBlock("\n".join(texts), tuple(origins), number + 1, indent + 1)
    return key, argument, indent + 1, block, below


def _build_rule(name: str, line: int, fields: dict, path: str) -> Rule:
    kinds = [key for key in fields if key in EXPECTATIONS]
    if not kinds:
        raise RulesFileError(f"rule {name!r} has no expectation (never, at most N, at least N,"
                             " exactly N or every ... satisfies ...)", path, line, 1)
    if len(kinds) > 1:
        second = fields[kinds[1]]
        raise RulesFileError(f"rule {name!r} has two expectations: {kinds[0]} and {kinds[1]}",
                             path, second[0], second[1])
    if "message" not in fields:
        raise RulesFileError(f"rule {name!r} has no 'message:'", path, line, 1)
    expect = kinds[0]
    key_line, key_column, argument, block = fields[expect]
    limit = _limit(expect, argument, path, key_line, key_column)
    if expect == "every":
        if "satisfies" not in fields:
            raise RulesFileError("'every' needs a 'satisfies:' pattern", path, key_line,
                                 key_column)
        pattern = _compile_every(block, fields["satisfies"][3], path)
    else:
        if "satisfies" in fields:
            satisfies = fields["satisfies"]
            raise RulesFileError("'satisfies' goes only with 'every'", path, satisfies[0],
                                 satisfies[1])
        pattern = _compile(block.text, block.origins, path)
    return Rule(name, line, fields["message"][3], expect, limit, pattern)


def _limit(expect: str, argument: str | None, path: str, line: int, column: int) -> int | None:
    if expect not in ("at most", "at least", "exactly"):
        return None
    if argument is None or not argument.isdigit():
        shown = "nothing" if argument is None else repr(argument)
        raise RulesFileError(f"'{expect}' needs a whole number >= 0, found {shown}",
                             path, line, column + len(expect) + 1)
    return int(argument)


def _compile_every(every: PatternBlock, satisfies: PatternBlock, path: str) -> Pattern:
    # Results of "X; not { Y }" are the X for which no way of satisfying Y exists.
    wrapper = SourceLine(satisfies.line, satisfies.column - 1)
    text = f"{every.text}\nnot {{\n{satisfies.text}\n}}"
    origins = (*every.origins, wrapper, *satisfies.origins, wrapper)
    return _compile(text, origins, path)


def _compile(text: str, origins: tuple[SourceLine, ...], path: str) -> Pattern:
    try:
        return compile_pattern(text)
    except PatternError as error:
        origin = origins[min(error.line, len(origins)) - 1]
        detail = f"hint: {error.hint}" if error.hint else None
        raise RulesFileError(f"{error.kind}: {error.message}", path, origin.line,
                             origin.column + error.column, detail) from error


def _is_blank(line: str) -> bool:
    stripped = line.strip()
    return not stripped or stripped.startswith("#")


def _indent(line: str) -> int:
    return len(line) - len(line.lstrip())
