"""Syntax errors: the caret line, what was expected in plain words, and hints for common slips.

The slips are the ones the language reference (grammar/README.md) steers users away from:
symbol operators instead of relation words, bracketed filters after a label, lower-case
categories, unterminated quotes, unclosed braces.
"""
from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from treequery.errors import PatternCheckError, PatternError, PatternSyntaxError
from treequery.pattern.check import compile_pattern
from treequery.pattern.parse import parse_pattern

RELATIONS_HINT = "relations are words"


def syntax_error(text: str) -> PatternSyntaxError:
    with pytest.raises(PatternSyntaxError) as caught:
        parse_pattern(text)
    return caught.value


def caret_lines(error: PatternError) -> list[str]:
    return str(error).splitlines()[1:3]


# ---------------------------------------------------------------- rendering

def test_render_shows_the_line_and_a_caret():
    error = syntax_error("s:S\nvp:VP < NP")
    assert (error.line, error.column) == (2, 7)
    assert str(error).startswith("syntax error at line 2, column 7: unexpected `<`")
    assert caret_lines(error) == ["  vp:VP < NP", "        ^"]
    assert "a relation word such as dominates or parent-of" in error.message


def test_expected_words_are_plain():
    error = syntax_error("x:NP dominates")
    assert error.position == len("x:NP dominates")
    assert "unexpected end of pattern" in error.message
    assert "a node test such as NP or *" in error.message
    assert "a variable name" in error.message
    assert "RELATION" not in str(error) and "CATEGORY" not in str(error)


def test_comparison_expects_a_value():
    error = syntax_error("n:NP; n.tokens > ")
    assert "a value (a number" in error.message


def test_end_of_line_is_named():
    error = syntax_error("a:NP dominates b:NP within\n\nx:NP")
    assert "expected a number" in error.message or "a value" in error.message


# ---------------------------------------------------------------- symbol operators

@pytest.mark.parametrize("operator", ["<", ">", "<<", ">>", "$", ".", "..", "%", "@", "==",
                                      "$++", ">-", "!<", "!>>"])
def test_symbol_operators_get_the_relation_words_hint(operator):
    text = f"vp:VP {operator} NP"
    error = syntax_error(text)
    assert error.position == len("vp:VP ")
    assert RELATIONS_HINT in error.hint
    if operator.startswith("!"):
        assert "not a dominates b" in error.hint


def test_double_equals_between_names():
    error = syntax_error("a:NP; b:NP; a == b")
    assert "same node" in error.hint and RELATIONS_HINT in error.hint


def test_double_equals_in_a_comparison():
    text = "n:NP; n.tokens == 3"
    error = syntax_error(text)
    assert error.position == text.index("==") + 1
    assert "single `=`" in error.hint


def test_equals_after_a_label():
    error = syntax_error("NP=n parent-of PP")
    assert error.position == 2
    assert "n:NP" in error.hint


# ---------------------------------------------------------------- brackets, categories, names

@pytest.mark.parametrize("text", ["NP[tokens > 4]", "n:NP [n.tokens > 4]", "(VP [x] (NP))"])
def test_square_brackets(text):
    error = syntax_error(text)
    assert error.position == text.index("[")
    assert "n:NP" in error.hint and "n.tokens >= 4" in error.hint


def test_lower_case_category_after_a_colon():
    error = syntax_error("vp:vp parent-of NP")
    assert error.position == 3
    assert "upper case" in error.hint and "VP" in error.hint


def test_lower_case_category_heading_a_fragment():
    error = syntax_error("(np (DT) (NN))")
    assert "upper case" in error.hint


def test_lower_case_category_as_an_operand_is_an_unbound_name():
    # a lower-case word is a variable name; the checker explains
    with pytest.raises(PatternCheckError) as caught:
        compile_pattern("VP parent-of np")
    assert "upper case (NP)" in caught.value.hint


@pytest.mark.parametrize("word", ["not", "or", "within", "at", "depth"])
def test_keywords_cannot_be_names(word):
    error = syntax_error(f"{word}:NP")
    assert error.position == 0
    assert "reserved word" in error.hint


@pytest.mark.parametrize("text", ["x:NP; dominates.tokens > 1", "x:NP; not.tokens > 1"])
def test_reserved_words_in_attribute_references(text):
    error = syntax_error(text)
    assert "reserved word" in error.message or "reserved word" in (error.hint or "")


@pytest.mark.parametrize("name", ["_1", "_2x", "__", "__x"])
def test_underscore_names_must_continue_with_a_letter(name):
    error = syntax_error(f"{name}:NP")
    assert error.position == 0
    assert "must continue with a letter" in error.message


def test_double_underscore_wildcard_hint():
    assert "*" in syntax_error("__ parent-of NP").hint


def test_indices_are_not_part_of_node_tests():
    text = "x:NP-SBJ-1"
    error = syntax_error(text)
    assert error.position == text.index("1")
    assert "n.index = 1" in error.hint


def test_and_between_statements():
    error = syntax_error("x:NP and y:PP")
    assert "separate lines" in error.hint


def test_bang_in_the_middle_of_alternatives():
    assert "negates the whole test" in syntax_error("x:NP|!PP").hint


# ---------------------------------------------------------------- quotes and brackets

@pytest.mark.parametrize("text, opening, words", [
    ('x:VBD "moored', '"', "unterminated string"),
    ("x:/^VB", "/", "unterminated regular expression"),
    ("x:'ADVP|PRT", "'", "unterminated quoted category"),
    ('n:NN\nn.word = "abc\nn.tokens > 1', '"', "unterminated string"),
])
def test_unterminated_quotes(text, opening, words):
    error = syntax_error(text)
    assert words in error.message
    assert error.position == text.index(opening)


def test_missing_closing_brace():
    text = "vp:VP {\n  parent-of NP\n  parent-of PP\n"
    error = syntax_error(text)
    assert error.message == "missing `}`"
    assert error.hint == "the `{` at line 1, column 7 is never closed"


def test_missing_closing_brace_skips_braces_in_strings():
    text = 'w:* "{"\nvp:VP { parent-of NP'
    assert syntax_error(text).hint == "the `{` at line 2, column 7 is never closed"


def test_missing_closing_parenthesis():
    text = "(VP (NP) (PP"
    error = syntax_error(text)
    assert error.message == "missing `)`"
    assert error.hint == "the `(` at line 1, column 10 is never closed"


def test_unmatched_closing_brace():
    text = "x:NP }"
    error = syntax_error(text)
    assert error.position == text.index("}")
    assert "no matching `{`" in error.hint


# ---------------------------------------------------------------- statements and separators

def test_block_opening_on_the_next_line():
    text = "vp:VP\n{ parent-of NP }"
    error = syntax_error(text)
    assert error.position == text.index("parent-of")
    assert "same line" in error.hint


def test_relation_word_without_left_operand():
    error = syntax_error("parent-of NP")
    assert error.position == 0
    assert "needs a node on its left" in error.message


def test_semicolon_inside_an_unfinished_statement_is_an_error():
    text = "a:NP dominates ; b:NP"
    error = syntax_error(text)
    assert error.position == text.index(";")
    assert "unexpected `;`" in error.message


def test_semicolon_inside_a_fragment_is_an_error():
    assert syntax_error("(VP (NP); (PP))").position == len("(VP (NP)")


def test_newline_ends_a_statement():
    text = "a:NP\nparent-of b:PP"
    error = syntax_error(text)
    assert error.position == text.index("parent-of")


def test_within_only_goes_with_dominates():
    text = "a:NP precedes b:NP within 2"
    error = syntax_error(text)
    assert error.position == text.index("within")


def test_regex_value_needs_a_match_operator():
    text = "n:NN; n.word = /^un/"
    error = syntax_error(text)
    assert error.position == text.index("/")
    assert "~" in error.message


def test_word_on_a_fragment_with_children():
    text = '(IN "of" (NP))'
    assert syntax_error(text).position == text.index("(NP)")


@pytest.mark.parametrize("text", ["", "   ", "# only a comment\n\n", ";;"])
def test_empty_pattern(text):
    error = syntax_error(text)
    assert "empty" in error.message


# ---------------------------------------------------------------- robustness

PIECES = ["NP", "VP", "-NONE-", "'.'", "x", "y", ":", "(", ")", "{", "}", ";", "\n", " ",
          "dominates", "child-of", "not", "or", "within", "at", "depth", "2", "0", "*", "!",
          "|", '"w"', "/^V/", "x.tokens", "x.word", "=", "!=", "<", "~", "#c\n", "[", "$",
          ".", '"', "/", "'", "_1", "_a"]


@settings(max_examples=400, deadline=None)
@given(st.lists(st.sampled_from(PIECES), max_size=12))
def test_any_text_gives_a_pattern_or_a_pattern_error(pieces):
    # the front end never fails with anything but its own typed errors
    text = "".join(pieces)
    try:
        compile_pattern(text)
    except PatternError as error:
        assert 0 <= error.position <= len(text)
        assert error.render()
