"""Turning lark's parse errors into PatternSyntaxError: plain-word expectations and hints."""
from __future__ import annotations

import re

from lark import Token
from lark.exceptions import UnexpectedCharacters, UnexpectedInput, UnexpectedToken

from treequery.errors import PatternSyntaxError

NODE_TEST = "a node test such as NP or *"
VALUE = 'a value (a number, a "string", a /regex/ or n.attr)'
COMPARISON = "a comparison operator (= != < <= > >= ~ !~)"

# Plain words for the grammar's terminals, most helpful first.
EXPECTED_WORDS: dict[str, str] = {
    "RELATION": "a relation word such as dominates or parent-of",
    "CATEGORY": NODE_TEST,
    "DASH_CATEGORY": NODE_TEST,
    "QUOTED_CATEGORY": NODE_TEST,
    "STAR": NODE_TEST,
    "BANG": NODE_TEST,
    "REGEX": NODE_TEST,
    "INT": VALUE,
    "STRING": 'a "word" for the node test',
    "NAME": "a variable name",
    "LPAR": "a tree fragment such as (NP ...)",
    "ATTR_REF": "a condition such as n.tokens > 3",
    "EQ": COMPARISON, "NE": COMPARISON, "LT": COMPARISON, "LE": COMPARISON,
    "GT": COMPARISON, "GE": COMPARISON, "MATCH": COMPARISON, "NOMATCH": COMPARISON,
    "COLON": "`:`",
    "RBRACE": "`}`",
    "RPAR": "`)`",
    "LBRACE": "`{`",
    "NOT": "`not`",
    "DEPTH": "`depth`",
    "_SEP": "the end of the statement",
    "$END": "the end of the pattern",
}
# Listed only when nothing better is expected: they are possible almost everywhere.
MINOR = {"PIPE", "OR", "WITHIN", "AT", "LBRACE", "NOT", "_SEP", "$END", "STRING"}

RELATIONS_HINT = ("relations are words: write `a dominates b`, `a parent-of b`, "
                  "`a precedes b`, ...")
BRACKETS_HINT = ("write conditions on variables: `n:NP` then `n.tokens >= 4` "
                 "(on its own line or after `;`)")
CATEGORY_HINT = ("categories are written as in the treebank, in upper case (NP); "
                 "a lower-case word is a variable name")

RESERVED_HINT = ("reserved words (not, or, within, at, depth and the relation words) "
                 "cannot be variable names")
KEYWORD_AS_NAME = re.compile(r"(?<![\w.])(not|or|within|at|depth)\s*$")
KEYWORD_AT = re.compile(r"(not|or|within|at|depth)\s*:")
SYMBOL_OPERATOR = re.compile(r"!?(<<|>>|<|>|\$|\.\.|\.|%|@|==|=)")
UNTERMINATED = {
    '"': ("STRING", "unterminated string: the closing \" is missing on this line"),
    "/": ("REGEX", "unterminated regular expression: the closing / is missing on this line"),
    "'": ("QUOTED_CATEGORY", "unterminated quoted category: the closing ' is missing"),
}


def describe_syntax_error(text: str, error: UnexpectedInput) -> PatternSyntaxError:
    """A PatternSyntaxError saying what was found, what was expected, and a hint if we can."""
    position, found = _found(text, error)
    expected = _accepted(error)
    unterminated = _unterminated(text, position)
    if unterminated:
        return PatternSyntaxError(unterminated, text, position)
    keyword = KEYWORD_AS_NAME.search(text[:position]) if text[position:position + 1] == ":" \
        else KEYWORD_AT.match(text, position)
    if keyword:
        return PatternSyntaxError(f"`{keyword.group(1)}` is a reserved word", text,
                                  keyword.start(1), hint=RESERVED_HINT)
    message = f"unexpected {found}"
    if expected:
        message += f"; expected {_expected_words(expected)}"
    hint = _hint(text, position, error, expected)
    if found == "end of pattern" and "RBRACE" in expected:
        message, hint = "missing `}`", _unclosed_hint(text, "{", "}") or hint
    elif found == "end of pattern" and "RPAR" in expected:
        message, hint = "missing `)`", _unclosed_hint(text, "(", ")") or hint
    return PatternSyntaxError(message, text, position, hint=hint)


def _found(text: str, error: UnexpectedInput) -> tuple[int, str]:
    if isinstance(error, UnexpectedToken):
        token: Token = error.token
        if token.type == "$END":
            return len(text), "end of pattern"
        if token.type == "_SEP":
            return token.start_pos, "`;`" if token.value == ";" else "end of line"
        if token.type == "RELATION":
            return token.start_pos, f"relation word `{token.value}`"
        if token.type == "NAME":
            return token.start_pos, f"name `{token.value}`"
        return token.start_pos, f"`{token.value}`"
    position = error.pos_in_stream or 0
    if position >= len(text):
        return len(text), "end of pattern"
    return position, f"character `{text[position]}`"


def _accepted(error: UnexpectedInput) -> set[str]:
    """The terminals the parser could take at the error (lark's interactive parser knows)."""
    interactive = getattr(error, "interactive_parser", None)
    if interactive is not None:
        try:
            return set(interactive.accepts())
        except Exception:  # accepts() replays the parser; never let it hide the real error
            pass
    return set(getattr(error, "expected", None) or ())


def _expected_words(expected: set[str]) -> str:
    major = [name for name in EXPECTED_WORDS if name in expected and name not in MINOR]
    minor = [name for name in EXPECTED_WORDS if name in expected and name in MINOR]
    value_expected = "INT" in expected  # a comparison's right side: STRING/REGEX are values
    if value_expected:
        major = [name for name in major if EXPECTED_WORDS[name] != NODE_TEST]
        minor = [name for name in minor if name != "STRING"]
    words: list[str] = []
    for name in major + minor:
        word = EXPECTED_WORDS[name]
        if word not in words:
            words.append(word)
    words = words[:4]
    return words[0] if len(words) == 1 else ", ".join(words[:-1]) + " or " + words[-1]


def _unterminated(text: str, position: int) -> str | None:
    if position >= len(text) or text[position] not in UNTERMINATED:
        return None
    terminal, message = UNTERMINATED[text[position]]
    closed = {"STRING": r'"([^"\\\n]|\\.)*"', "REGEX": r"/([^/\\\n]|\\.)+/",
              "QUOTED_CATEGORY": r"'([^'\\\n]|\\.)*'"}[terminal]
    return None if re.compile(closed).match(text, position) else message


def _hint(text: str, position: int, error: UnexpectedInput, expected: set[str]) -> str | None:
    rest = text[position:]
    token = getattr(error, "token", None)
    if rest.startswith("["):
        return BRACKETS_HINT
    if rest.startswith("!") and text[:position].rstrip().endswith("|"):
        return "`!` goes first and negates the whole test: !NP|PP is neither NP nor PP"
    if rest.startswith("=") and text[:position].rstrip().endswith("="):
        if "INT" in expected:
            return "compare with a single `=`: n.tokens = 3"
        return "`a = b` says a and b are the same node; " + RELATIONS_HINT
    if rest.startswith("==") and "RELATION" in expected:
        return RELATIONS_HINT
    if rest.startswith("=") and "RELATION" in expected:
        return ("bind a name with name:TEST (`n:NP`, not NP=n); indices are attributes: "
                "`n.index = 1`, `n.gap = 2`")
    operator = SYMBOL_OPERATOR.match(rest)
    if operator and ("RELATION" in expected or isinstance(error, UnexpectedCharacters)):
        if operator.group().startswith("!"):
            return RELATIONS_HINT + "; negate with `not a dominates b`"
        return RELATIONS_HINT
    return _word_hint(text, position, token, expected)


def _word_hint(text: str, position: int, token, expected: set[str]) -> str | None:
    if token is None:
        return None
    if token.type == "NAME" and "CATEGORY" in expected:
        return CATEGORY_HINT + f" (write {token.value.upper()})"
    if token.type == "NAME" and token.value in ("and", "&&"):
        return "statements all hold together: put them on separate lines or separate them by `;`"
    if expected == {"COLON"} and re.search(r"\(\s*[a-z]\w*\s*$", text[:position]):
        return CATEGORY_HINT + "; a fragment starts with a node test: (NP ...) or (n:NP ...)"
    if token.type == "RBRACE" and "RBRACE" not in expected:
        return "this `}` has no matching `{`"
    if token.type == "RPAR" and "RPAR" not in expected:
        return "this `)` has no matching `(`"
    return None


def _unclosed_hint(text: str, opening: str, closing: str) -> str | None:
    """Where the last still-open bracket is, skipping strings, regexes and comments."""
    skipped = re.compile(r'"([^"\\\n]|\\.)*"|\'([^\'\\\n]|\\.)*\'|/([^/\\\n]|\\.)+/|#[^\n]*')
    open_positions: list[int] = []
    index = 0
    while index < len(text):
        match = skipped.match(text, index)
        if match:
            index = match.end()
            continue
        if text[index] == opening:
            open_positions.append(index)
        elif text[index] == closing and open_positions:
            open_positions.pop()
        index += 1
    if not open_positions:
        return None
    where = open_positions[-1]
    line = text.count("\n", 0, where) + 1
    column = where - (text.rfind("\n", 0, where) + 1) + 1
    return f"the `{opening}` at line {line}, column {column} is never closed"
