"""Pattern-set files: a good file, and malformed ones reported at their exact FILE:LINE:COLUMN.

The expected positions are counted by hand on the small texts below (lines and
columns 1-based, as an editor shows them).
"""
from __future__ import annotations

import pytest

from treequery.errors import PatternError
from treequery.frequency.patternset import PatternSetError, parse_pattern_set, read_pattern_set
from treequery.pattern.check import compile_pattern

GOOD = """\
# Patterns counted together (comments and blank lines before the first one are fine)

@pp-in-vp   VP parent-of PP
@subject    # a comment after the name belongs to the pattern
  s:S parent-of np:NP-SBJ
  np.tokens >= 2

@v2.wh_1
w:/^WH/
"""


def test_good_file(tmp_path):
    path = tmp_path / "set.tqp"
    path.write_text(GOOD, encoding="utf-8")
    entries = read_pattern_set(path)
    assert [(e.name, e.line) for e in entries] == [("pp-in-vp", 3), ("subject", 4),
                                                   ("v2.wh_1", 8)]
    # each pattern is the text from after its name to the next header, blank end cut
    assert entries[0].pattern.text == "   VP parent-of PP"
    assert entries[1].pattern.text.endswith("np.tokens >= 2")
    assert len(entries[0].pattern.vars) == len(compile_pattern("VP parent-of PP").vars)
    assert entries[1].pattern.result_vars == ("s", "np")
    assert entries[2].pattern.result_vars == ("w",)


@pytest.mark.parametrize("text, line, column, message", [
    ("VP parent-of PP\n", 1, 1, "expected `@NAME`"),
    ("# only a comment\n\n", 1, 1, "no pattern in the file"),
    ("@a NP\n\n  @a VP\n", 3, 4, "a second pattern named 'a' (the first is at line 1)"),
    ("@ NP\n", 1, 2, "missing pattern name"),
    ("@pp(NP PP)\n", 1, 4, "unexpected character '('"),
    ("@a NP\n@b\n  VP parent-of\n@c NP\n", 3, 15, "in pattern 'b': unexpected end of pattern"),
    ("@a NP\n@b  x:NP\n  y.word = \"a\"\n", 3, 3, "in pattern 'b': `y` is used but never bound"),
    ("@a\n  # nothing but a comment\n@b NP\n", 1, 3, "in pattern 'a': the pattern is empty"),
    ("@a VP [PP]\n", 1, 7, "in pattern 'a': unexpected character `[`"),
])
def test_malformed_files(text, line, column, message):
    with pytest.raises(PatternSetError) as caught:
        parse_pattern_set(text, "set.tqp")
    error = caught.value
    assert (error.line, error.column) == (line, column)
    assert message in error.message
    first = str(error).split("\n")[0]
    assert first.startswith(f"set.tqp:{line}:{column}: ")
    assert "expected" in first or "empty" in first or "never bound" in first
    # the caret stands under the column in the quoted line
    assert str(error).split("\n")[2] == "  " + " " * (column - 1) + "^"
    assert isinstance(error, PatternError)  # the CLI reports it as bad input (exit 2)
