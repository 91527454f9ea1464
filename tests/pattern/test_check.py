"""check_pattern / compile_pattern: each semantic error, with the position it points at.

The rules come from grammar/README.md (variables, attributes table, relations) and the
attribute types in treequery/pattern/ast.py (ATTRIBUTES).
"""
from __future__ import annotations

import pytest

from treequery.errors import PatternCheckError
from treequery.pattern.ast import (
    ATTRIBUTES,
    And,
    CategoryIs,
    Exists,
    NodeTest,
    NodeVar,
    Not,
    Pattern,
    Relation,
    Span,
)
from treequery.pattern.check import check_pattern, compile_pattern
from treequery.pattern.parse import parse_pattern


def error_of(text: str) -> PatternCheckError:
    with pytest.raises(PatternCheckError) as caught:
        compile_pattern(text)
    return caught.value


def at(text: str, fragment: str, occurrence: int = 1) -> int:
    """Offset of the n-th occurrence of `fragment` in `text`."""
    position = -1
    for _ in range(occurrence):
        position = text.index(fragment, position + 1)
    return position


VALID = [
    "NP",
    "vp:VP { parent-of v:/^VB/; parent-of o:NP }\nv precedes o",
    "n:NP; n.tokens >= 4; n.word = \"x\"; n.label ~ /^NP/; n.empty; not n.preterminal",
    "a:NP; b:NP; a.depth < b.depth; a != b",
    "s:S dominates n:NP within 2; s dominates NP at depth 1",
    "n:NP; n.position = 1; n.start >= 1; n.children > 0; n.tokens = 0",
    "a:NP; b:NP-SBJ; a = b",  # NP-SBJ is an NP: no contradiction
    "a:NP; b:!PP; a = b",
    "x:NP; x.category = \"NP\"",
    "x:'ADVP|PRT' parent-of RB",
    "not x parent-of PP\nx:NP",
]


@pytest.mark.parametrize("text", VALID)
def test_valid_patterns_pass_unchanged(text):
    pattern = parse_pattern(text)
    assert check_pattern(pattern) is pattern


# ---------------------------------------------------------------- names and scopes

def test_name_used_but_never_bound():
    text = "vp:VP parent-of obj"
    error = error_of(text)
    assert "`obj` is used but never bound" in error.message
    assert error.position == at(text, "obj")


def test_lower_case_category_gets_a_hint():
    text = "np parent-of PP"
    error = error_of(text)
    assert error.position == 0
    assert "NP" in error.hint and "variable name" in error.hint


def test_name_bound_twice():
    text = "x:NP\ny:VP parent-of x:PP"
    error = error_of(text)
    assert "bound twice" in error.message and "line 1, column 1" in error.message
    assert (error.line, error.column) == (2, 16)


def test_variable_bound_inside_not_used_outside():
    text = "s:S\nnot s parent-of x:NP\nx.tokens > 2"
    error = error_of(text)
    assert "inside `not` or `or`" in error.message
    assert error.position == at(text, "x.tokens")


def test_variable_bound_in_one_or_branch_used_in_the_other():
    text = "s:S\n{ s parent-of x:NP } or { x.tokens > 2 }"
    error = error_of(text)
    assert error.position == at(text, "x.tokens")


def test_pattern_with_no_top_level_node():
    error = error_of("not NP")
    assert "no node outside" in error.message


def test_earliest_problem_is_reported():
    text = "a parent-of b\nc:NP"
    assert error_of(text).position == 0


# hand-built ASTs: check_pattern must catch what a bad producer could build

def _var(name: str) -> NodeVar:
    return NodeVar(name, NodeTest(CategoryIs("NP")), True, Span(0, 1))


def test_hand_built_unbound_name():
    text = "a precedes zz"
    pattern = Pattern(text, (_var("a"),), And((Relation("precedes", "a", "zz", Span(2, 13)),)),
                      ("a",))
    with pytest.raises(PatternCheckError) as caught:
        check_pattern(pattern)
    assert caught.value.position == at(text, "zz")


def test_hand_built_scope_leak_and_duplicate():
    text = "a .............."
    inner = Exists((_var("b"),), And(()))
    leak = Pattern(text, (_var("a"),),
                   And((Not(inner, Span(0, 1)), Relation("precedes", "a", "b", Span(0, 5)))),
                   ("a",))
    with pytest.raises(PatternCheckError, match="inside `not` or `or`"):
        check_pattern(leak)
    twice = Pattern(text, (_var("a"), _var("a")), And(()), ("a",))
    with pytest.raises(PatternCheckError, match="bound twice"):
        check_pattern(twice)


# ---------------------------------------------------------------- attributes and types

def test_unknown_attribute_lists_the_known_ones():
    text = "n:NP\nn.size > 3"
    error = error_of(text)
    assert "unknown attribute `size`" in error.message
    for name in ATTRIBUTES:
        assert name in error.message
    assert error.position == at(text, "size")


def test_unknown_attribute_suggests_a_close_one():
    assert "n.tokens" in error_of("n:NP; n.tokns > 3").hint


def test_unknown_attribute_on_the_right_side():
    text = "a:NP; b:NP; a.tokens = b.lenght"
    assert error_of(text).position == at(text, "lenght")


@pytest.mark.parametrize("text, fragment, words", [
    ('n:NP; n.tokens = "four"', '"four"', "number"),
    ("n:NN; n.word = 3", "3", "is text"),
    ('n:NP; n.depth ~ "1"', "n.depth", "searches text"),
    ("n:NP; n.word ~ 3", "3", "regular expression"),
    ("n:NP; m:NP; n.word ~ m.word", "m.word", "regular expression"),
    ("n:NP; m:NP; n.word = m.tokens", "m.tokens", "cannot compare"),
    ("e:*; e.empty = 1", "e.empty", "yes/no"),
    ("e:*; f:*; e.tokens = f.preterminal", "f.preterminal", "yes/no"),
    ("n:NP; n.tokens", "n.tokens", "not a yes/no attribute"),
    ("n:NP; n.word", "n.word", "not a yes/no attribute"),
])
def test_type_errors(text, fragment, words):
    error = error_of(text)
    assert words in error.message
    assert error.position == at(text, fragment)


# ---------------------------------------------------------------- regular expressions

def test_bad_category_regex_points_inside_it():
    text = "s:S parent-of x:/^(VB/"
    error = error_of(text)
    assert "bad regular expression" in error.message and "missing )" in error.message
    assert error.position == len(text) - 1  # regex module reports the end of "^(VB"


def test_bad_regex_in_alternatives_and_negation():
    text = "x:!NP|/a**/"
    error = error_of(text)
    assert error.position == at(text, "*", 2)


def test_bad_regex_value_points_inside_the_string_through_escapes():
    text = r'n:NN; n.word ~ "\"a**"'
    assert error_of(text).position == at(text, "*", 2)
    text = r"n:NN; n.word !~ /a\/b**/"
    assert error_of(text).position == at(text, "*", 2)


# ---------------------------------------------------------------- relations and contradictions

@pytest.mark.parametrize("clause", ["within 0", "at depth 0"])
def test_depth_zero(clause):
    text = f"s:S dominates NP {clause}"
    error = error_of(text)
    assert "at least 1" in error.message
    assert error.position == len(text) - 1


@pytest.mark.parametrize("word", ["dominates", "precedes", "parent-of", "sister-of",
                                  "just-before", "first-child-of"])
def test_node_in_relation_with_itself(word):
    text = f"a:NP\na {word} a"
    error = error_of(text)
    assert "can never hold" in error.message
    assert error.position == at(text, word)


@pytest.mark.parametrize("condition, minimum", [
    ("x.tokens < 0", 0), ("x.children <= -1", 0), ("x.position = 0", 1), ("x.depth < 0", 0),
    ("x.start < 1", 1),
])
def test_impossible_counts(condition, minimum):
    # counts are never negative; position/start/end are 1-based (ast.py ATTRIBUTES)
    text = f"x:NP\n{condition}"
    error = error_of(text)
    assert f"never below {minimum}" in error.message
    assert error.position == at(text, condition)


def test_node_test_and_its_negation_on_one_node():
    text = "a:NP\nb:!NP\na = b"
    error = error_of(text)
    assert "contradicts" in error.message
    assert error.position == at(text, "b:!NP")


def test_two_categories_on_one_node():
    text = "a:NP\nb:VP\nb = a"
    assert error_of(text).position == at(text, "b:VP")


def test_category_condition_contradicts_node_test():
    text = 'x:NP\nx.category = "PP"'
    assert error_of(text).position == at(text, "x.category")
    text = 'x:NP-SBJ\nx.category != "NP"'
    assert error_of(text).position == at(text, "x.category")


def test_two_words_on_one_node():
    text = 'a:* "dog"\nb:* "cat"\na = b'
    assert "both words" in error_of(text).message


# ---------------------------------------------------------------- compile_pattern

def test_compile_pattern_is_parse_then_check():
    text = "vp:VP parent-of NP"
    assert compile_pattern(text) == parse_pattern(text)


def test_check_error_renders_with_caret():
    error = error_of("n:NP\nn.size > 3")
    assert str(error).splitlines()[1:3] == ["  n.size > 3", "    ^"]
