"""Error types, each carrying the position of the problem so the CLI can point at it."""
from __future__ import annotations


class TreequeryError(Exception):
    """Base of every error the library raises on purpose."""


class TreebankFormatError(TreequeryError):
    """A treebank file that cannot be read as bracketed trees.

    `path`, `line` and `column` (1-based) locate the problem; `expected` says what
    the reader wanted to see there.
    """

    def __init__(self, message: str, path: str = "<input>", line: int = 0, column: int = 0,
                 expected: str | None = None):
        self.message = message
        self.path = path
        self.line = line
        self.column = column
        self.expected = expected
        where = f"{path}:{line}:{column}"
        text = f"{where}: {message}"
        if expected:
            text += f" (expected {expected})"
        super().__init__(text)


class PatternError(TreequeryError):
    """A pattern that cannot be compiled; `position` is a 0-based character offset."""

    def __init__(self, message: str, pattern: str, position: int, hint: str | None = None):
        self.message = message
        self.pattern = pattern
        self.position = max(0, min(position, len(pattern)))
        self.hint = hint
        super().__init__(self.render())

    @property
    def line(self) -> int:
        return self.pattern.count("\n", 0, self.position) + 1

    @property
    def column(self) -> int:
        return self.position - (self.pattern.rfind("\n", 0, self.position) + 1) + 1

    def render(self) -> str:
        """The message, the pattern line at fault, and a caret under the position."""
        lines = self.pattern.split("\n")
        source_line = lines[self.line - 1] if lines else ""
        caret = " " * (self.column - 1) + "^"
        text = f"{self.kind} at line {self.line}, column {self.column}: {self.message}\n"
        text += f"  {source_line}\n  {caret}"
        if self.hint:
            text += f"\nhint: {self.hint}"
        return text

    kind = "pattern error"


class PatternSyntaxError(PatternError):
    """The pattern text does not follow the grammar."""

    kind = "syntax error"


class PatternCheckError(PatternError):
    """The pattern parses but means nothing sensible (unbound variable, unknown attribute...)."""

    kind = "pattern error"


class SearchTimeout(TreequeryError):
    """A search ran past its time limit and was stopped."""
