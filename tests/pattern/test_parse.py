"""parse_pattern: every construct of grammar/README.md to its normal-form AST (ast.py).

Expected ASTs are written by hand from the language reference (grammar/README.md) and
the normal form documented in treequery/pattern/ast.py and treequery/pattern/parse.py.
Most tests compare with spans blanked out; test_spans_* check the offsets.
"""
from __future__ import annotations

import dataclasses

import pytest

from treequery.pattern.ast import (
    And,
    AnyLabel,
    Attr,
    CategoryIs,
    CategoryRegex,
    Compare,
    Exists,
    Flag,
    LabelNot,
    LabelOneOf,
    Literal,
    NodeTest,
    NodeVar,
    Not,
    Or,
    Pattern,
    Relation,
    Span,
)
from treequery.pattern.parse import parse_pattern

S = Span(0, 0)


def blank(value):
    """The same AST with every Span replaced by Span(0, 0)."""
    if isinstance(value, Span):
        return S
    if isinstance(value, tuple):
        return tuple(blank(item) for item in value)
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        changes = {field.name: blank(getattr(value, field.name))
                   for field in dataclasses.fields(value)}
        return dataclasses.replace(value, **changes)
    return value


def parsed(text: str) -> Pattern:
    return blank(parse_pattern(text))


def cat(category: str, *functions: str, word: str | None = None) -> NodeTest:
    return NodeTest(CategoryIs(category, functions), word)


def var(name: str, test: NodeTest, reported: bool | None = None) -> NodeVar:
    if reported is None:
        reported = not name.startswith("_")
    return NodeVar(name, test, reported, S)


def rel(kind: str, left: str, right: str, min_depth=None, max_depth=None) -> Relation:
    return Relation(kind, left, right, S, min_depth, max_depth)


def attr(name: str) -> Attr:
    variable, _, attribute = name.partition(".")
    return Attr(variable, attribute, S)


def only_test(text: str) -> NodeTest:
    """The node test of a one-node pattern `x:TEST`."""
    pattern = parse_pattern(f"x:{text}")
    assert len(pattern.vars) == 1
    return pattern.vars[0].test


# ---------------------------------------------------------------- node tests
# README "Node tests" table.

@pytest.mark.parametrize("written, expected", [
    ("NP", cat("NP")),
    ("NP-SBJ", cat("NP", "SBJ")),
    ("NP-SBJ-TMP", cat("NP", "SBJ", "TMP")),
    ("WHNP", cat("WHNP")),
    ("PRP$", cat("PRP$")),
    ("-NONE-", cat("-NONE-")),
    ("-LRB-", cat("-LRB-")),
    ("'ADVP|PRT'", cat("ADVP|PRT")),
    ("','", cat(",")),
    ("'.'", cat(".")),
    ("'``'", cat("``")),
    ("''", cat("")),
    (r"'\'\''", cat("''")),
    ("/^WH/", NodeTest(CategoryRegex("^WH"))),
    (r"/^a\/b$/", NodeTest(CategoryRegex("^a/b$"))),
    (r"/\d+/", NodeTest(CategoryRegex(r"\d+"))),
    ("*", NodeTest(AnyLabel())),
    ("!PP", NodeTest(LabelNot(CategoryIs("PP")))),
    ("!NP|PP", NodeTest(LabelNot(LabelOneOf((CategoryIs("NP"), CategoryIs("PP")))))),
    ("NP|NX|/^WH/", NodeTest(LabelOneOf((CategoryIs("NP"), CategoryIs("NX"),
                                         CategoryRegex("^WH"))))),
    ('VBD "moored"', cat("VBD", word="moored")),
    ('* "moored"', NodeTest(AnyLabel(), "moored")),
    (r'POS "\"s"', cat("POS", word='"s')),
    (r'SYM "a\\b"', cat("SYM", word="a\\b")),
    ('-LRB- "("', cat("-LRB-", word="(")),
])
def test_node_tests(written, expected):
    assert only_test(written) == expected


def test_anonymous_node_statement():
    assert parsed("NP") == Pattern("NP", (var("_1", cat("NP")),), And(()), ())


def test_result_is_first_node_when_nothing_is_named():
    # README "Variables": "When the pattern names no variable, the first node ... is the result"
    pattern = parse_pattern("VP parent-of NP")
    assert pattern.reported == ()
    assert pattern.result_vars == ("_1",)


def test_named_underscore_and_anonymous_variables():
    pattern = parsed("vp:VP parent-of _obj:NP\nvp parent-of PP")
    assert pattern == Pattern(
        pattern.text,
        (var("vp", cat("VP")), var("_obj", cat("NP"), reported=False), var("_1", cat("PP"))),
        And((rel("parent-of", "vp", "_obj"), rel("parent-of", "vp", "_1"))),
        ("vp",),
    )


# ---------------------------------------------------------------- relations
# README "Relations" table: each word, its canonical kind, and whether operands swap.

RELATIONS = [
    ("dominates", "dominates", False),
    ("dominated-by", "dominates", True),
    ("parent-of", "parent-of", False),
    ("child-of", "parent-of", True),
    ("precedes", "precedes", False),
    ("follows", "precedes", True),
    ("just-before", "just-before", False),
    ("just-after", "just-before", True),
    ("sister-of", "sister-of", False),
    ("left-sister-of", "left-sister-of", False),
    ("right-sister-of", "left-sister-of", True),
    ("immediate-left-sister-of", "immediate-left-sister-of", False),
    ("immediate-right-sister-of", "immediate-left-sister-of", True),
    ("first-child-of", "first-child-of", False),
    ("has-first-child", "first-child-of", True),
    ("last-child-of", "last-child-of", False),
    ("has-last-child", "last-child-of", True),
    ("only-child-of", "only-child-of", False),
    ("has-only-child", "only-child-of", True),
]


@pytest.mark.parametrize("word, kind, swapped", RELATIONS)
def test_relation_words(word, kind, swapped):
    pattern = parsed(f"a:NP {word} b:PP")
    expected = rel(kind, "b", "a") if swapped else rel(kind, "a", "b")
    assert pattern.condition == And((expected,))
    assert pattern.reported == ("a", "b")


def test_within_and_at_depth():
    assert parsed("a:S dominates b:NP within 3").condition == And(
        (rel("dominates", "a", "b", None, 3),))
    assert parsed("a:S dominates b:NP at depth 2").condition == And(
        (rel("dominates", "a", "b", 2, 2),))
    # inverse keeps the limit
    assert parsed("b:NP dominated-by a:S within 2").condition == And(
        (rel("dominates", "a", "b", None, 2),))


def test_same_and_different_node():
    pattern = parsed("a:NP; b:NP; a = b; a != b")
    assert pattern.condition == And((
        rel("same-node", "a", "b"),
        Not(rel("same-node", "a", "b"), S),
    ))


def test_relation_between_anonymous_nodes_and_references():
    pattern = parsed("s:S parent-of NP\nNP-SBJ child-of s")
    assert pattern.vars == (var("s", cat("S")), var("_1", cat("NP")), var("_2", cat("NP", "SBJ")))
    assert pattern.condition == And((rel("parent-of", "s", "_1"), rel("parent-of", "s", "_2")))


def test_relation_words_are_not_split_by_the_lexer():
    # `left-sister-of` must not be read as `left` - `sister` - `of`
    pattern = parsed("a:NP immediate-left-sister-of b:PP")
    assert pattern.condition == And((rel("immediate-left-sister-of", "a", "b"),))


# ---------------------------------------------------------------- conditions

def test_comparisons_and_flags():
    text = 'n:NP\nn.tokens >= 4\nn.word = "x"\nn.label ~ /^NP-SBJ/\nn.word !~ "^un"\n' \
           "n.depth < m.depth\nm:VP\nn.empty\nn.index != -1"
    pattern = parsed(text)
    assert pattern.vars == (var("n", cat("NP")), var("m", cat("VP")))
    assert pattern.condition == And((
        Compare(attr("n.tokens"), ">=", Literal(4, S), S),
        Compare(attr("n.word"), "=", Literal("x", S), S),
        Compare(attr("n.label"), "~", Literal("^NP-SBJ", S), S),
        Compare(attr("n.word"), "!~", Literal("^un", S), S),
        Compare(attr("n.depth"), "<", attr("m.depth"), S),
        Flag(attr("n.empty"), S),
        Compare(attr("n.index"), "!=", Literal(-1, S), S),
    ))


@pytest.mark.parametrize("op", ["=", "!=", "<", "<=", ">", ">=", "~", "!~"])
def test_every_compare_operator(op):
    # ast.py COMPARE_OPS
    value = '"a"' if "~" in op else "1"
    pattern = parsed(f"n:NP; n.tokens {op} {value}")
    assert pattern.condition.items[0].op == op


def test_string_escapes_keep_unknown_backslashes():
    # a "\d+" string stays usable as a regular expression
    pattern = parsed(r'n:NN; n.word ~ "\d+\"\\"')
    assert pattern.condition.items[0].right.value == '\\d+"\\'


# ---------------------------------------------------------------- fragments

def test_fragment_expansion():
    # README "Tree fragments" example
    pattern = parsed('(VP /^VB/ (NP) (PP (IN "with")))')
    assert pattern.vars == (
        var("_1", cat("VP")),
        var("_2", NodeTest(CategoryRegex("^VB"))),
        var("_3", cat("NP")),
        var("_4", cat("PP")),
        var("_5", cat("IN", word="with")),
    )
    assert pattern.condition == And((
        rel("parent-of", "_1", "_2"),
        rel("parent-of", "_1", "_3"),
        rel("left-sister-of", "_2", "_3"),
        rel("parent-of", "_1", "_4"),
        rel("left-sister-of", "_3", "_4"),
        rel("parent-of", "_4", "_5"),
    ))
    assert pattern.reported == ()


def test_fragment_with_names_and_a_reference():
    pattern = parsed("(vp:VP v:/^VB/ (o:NP) p)\np:PP")
    assert pattern.vars == (
        var("vp", cat("VP")), var("v", NodeTest(CategoryRegex("^VB"))),
        var("o", cat("NP")), var("p", cat("PP")),
    )
    assert pattern.condition == And((
        rel("parent-of", "vp", "v"),
        rel("parent-of", "vp", "o"), rel("left-sister-of", "v", "o"),
        rel("parent-of", "vp", "p"), rel("left-sister-of", "o", "p"),
    ))
    assert pattern.reported == ("vp", "v", "o", "p")


def test_fragment_as_relation_operand_and_over_lines():
    pattern = parsed("s:S dominates (VP\n   (NP)\n   (PP))")
    assert pattern.vars == (var("s", cat("S")), var("_1", cat("VP")), var("_2", cat("NP")),
                            var("_3", cat("PP")))
    assert pattern.condition == And((
        rel("parent-of", "_1", "_2"),
        rel("parent-of", "_1", "_3"), rel("left-sister-of", "_2", "_3"),
        rel("dominates", "s", "_1"),
    ))


def test_fragment_word_is_the_word_of_the_node():
    # README: `(IN "with")` is `IN "with"`
    assert parsed('(IN "with")').vars == parsed('IN "with"').vars


# ---------------------------------------------------------------- blocks

def test_block_statements_take_the_node_as_left_operand():
    # README "Overview" example
    text = ("# a verb phrase whose verb is followed by an object and then a PP\n"
            "vp:VP {\n  parent-of v:/^VB/\n  parent-of o:NP\n  parent-of p:PP\n}\n"
            "v precedes o\no precedes p\n")
    pattern = parsed(text)
    assert pattern.vars == (var("vp", cat("VP")), var("v", NodeTest(CategoryRegex("^VB"))),
                            var("o", cat("NP")), var("p", cat("PP")))
    assert pattern.condition == And((
        rel("parent-of", "vp", "v"), rel("parent-of", "vp", "o"), rel("parent-of", "vp", "p"),
        rel("precedes", "v", "o"), rel("precedes", "o", "p"),
    ))
    assert pattern.reported == ("vp", "v", "o", "p")


def test_block_mixes_subject_and_ordinary_statements():
    pattern = parsed("vp:VP { parent-of o:NP; o.tokens > 2; child-of S; not parent-of PP }")
    assert pattern.condition == And((
        rel("parent-of", "vp", "o"),
        Compare(attr("o.tokens"), ">", Literal(2, S), S),
        rel("parent-of", "_1", "vp"),
        Not(Exists((var("_2", cat("PP")),), And((rel("parent-of", "vp", "_2"),))), S),
    ))
    assert [v.name for v in pattern.vars] == ["vp", "o", "_1"]


def test_block_on_a_relation_operand_and_nested_blocks():
    pattern = parsed("s:S parent-of vp:VP { parent-of NP { parent-of DT } }")
    assert pattern.condition == And((
        rel("parent-of", "_1", "_2"),
        rel("parent-of", "vp", "_1"),
        rel("parent-of", "s", "vp"),
    ))
    assert [v.name for v in pattern.vars] == ["s", "vp", "_1", "_2"]


def test_block_on_an_anonymous_node_and_or_inside_a_block():
    pattern = parsed("NP { parent-of DT or parent-of PRP$ }")
    assert pattern.condition == And((Or((
        Exists((var("_2", cat("DT")),), And((rel("parent-of", "_1", "_2"),))),
        Exists((var("_3", cat("PRP$")),), And((rel("parent-of", "_1", "_3"),))),
    )),))


# ---------------------------------------------------------------- not / or scoping

def test_not_with_local_nodes_is_an_exists():
    # README "Negation and alternatives" example
    text = "np:NP\nnot np parent-of PP\n{ np parent-of DT } or { np parent-of PRP$ }"
    pattern = parsed(text)
    assert pattern.vars == (var("np", cat("NP")),)
    assert pattern.condition == And((
        Not(Exists((var("_1", cat("PP")),), And((rel("parent-of", "np", "_1"),))), S),
        Or((
            Exists((var("_2", cat("DT")),), And((rel("parent-of", "np", "_2"),))),
            Exists((var("_3", cat("PRP$")),), And((rel("parent-of", "np", "_3"),))),
        )),
    ))
    assert pattern.reported == ("np",)


def test_named_variables_inside_not_are_local_and_not_reported():
    pattern = parsed("s:S\nnot { s parent-of x:NP; x.tokens > 3 }")
    assert pattern.vars == (var("s", cat("S")),)
    assert pattern.condition == And((
        Not(Exists((var("x", cat("NP"), reported=False),),
                   And((rel("parent-of", "s", "x"),
                        Compare(attr("x.tokens"), ">", Literal(3, S), S)))), S),
    ))
    assert pattern.reported == ("s",)


def test_not_without_local_nodes():
    pattern = parsed("a:NP; b:NP; not a precedes b; not { a.tokens > 1; b.empty }")
    assert pattern.condition == And((
        Not(rel("precedes", "a", "b"), S),
        Not(And((Compare(attr("a.tokens"), ">", Literal(1, S), S), Flag(attr("b.empty"), S))),
            S),
    ))


def test_or_binds_more_loosely_than_not():
    # README: "or binds more loosely than the statements it joins"
    pattern = parsed("a:NP\nnot a.empty or a.tokens > 2 or a.preterminal")
    assert pattern.condition == And((Or((
        Not(Flag(attr("a.empty"), S), S),
        Compare(attr("a.tokens"), ">", Literal(2, S), S),
        Flag(attr("a.preterminal"), S),
    )),))


def test_or_branch_without_braces_binding_nodes():
    pattern = parsed("a:NP\na parent-of DT or a parent-of x:PRP$")
    assert pattern.condition == And((Or((
        Exists((var("_1", cat("DT")),), And((rel("parent-of", "a", "_1"),))),
        Exists((var("x", cat("PRP$"), reported=False),), And((rel("parent-of", "a", "x"),))),
    )),))


def test_groups_at_the_top_level_are_spliced():
    grouped = parsed("{ a:NP; { a.tokens > 1 } }\na.empty")
    flat = parsed("a:NP\na.tokens > 1\na.empty")
    assert (grouped.vars, grouped.condition) == (flat.vars, flat.condition)


def test_nested_not_scopes():
    pattern = parsed("s:S\nnot { s parent-of x:NP\n      not x parent-of DT }")
    inner = Not(Exists((var("_1", cat("DT")),), And((rel("parent-of", "x", "_1"),))), S)
    assert pattern.condition == And((
        Not(Exists((var("x", cat("NP"), reported=False),),
                   And((rel("parent-of", "s", "x"), inner))), S),
    ))


def test_top_level_variable_may_be_bound_after_its_use_inside_not():
    pattern = parsed("not x parent-of PP\nx:NP")
    assert pattern.vars == (var("x", cat("NP")),)


# ---------------------------------------------------------------- order of names

def test_binding_after_use_and_order_of_first_appearance():
    # brief: `o precedes p` then `o:NP` is fine; vars in order of first appearance
    pattern = parsed("o precedes p\no:NP\np:PP\nq:VP")
    assert [v.name for v in pattern.vars] == ["o", "p", "q"]
    assert pattern.reported == ("o", "p", "q")
    assert pattern.condition == And((rel("precedes", "o", "p"),))


def test_anonymous_names_follow_the_text_everywhere():
    pattern = parse_pattern("s:S parent-of NP\nnot s parent-of PP\ns parent-of VP")
    names = [v.name for v in pattern.vars]
    assert names == ["s", "_1", "_3"]
    assert pattern.condition.items[1].item.vars[0].name == "_2"


# ---------------------------------------------------------------- separators and comments

def test_semicolons_newlines_blank_lines_and_comments_are_equivalent():
    one_line = parsed("a:NP; b:VP; a precedes b")
    variants = [
        "a:NP\nb:VP\na precedes b",
        "\n\n# leading comment\na:NP   # trailing comment\n\n\n;b:VP;\n  # x\na precedes b;\n",
        "a:NP;;b:VP ; a precedes b;",
        "a:NP\r\nb:VP\r\na precedes b\r\n",
        "a:NP\nb:VP\na precedes\n  b",  # newline after a relation word
    ]
    for text in variants:
        assert blank(parsed(text)).vars == one_line.vars, text
        assert parsed(text).condition == one_line.condition, text


def test_newlines_inside_braces_and_around_or():
    compact = parsed("a:NP; { a.empty } or { a.preterminal }")
    spread = parsed("a:NP\n{\n  a.empty\n}\nor\n{\n  a.preterminal\n\n}\n")
    assert spread.condition == compact.condition
    before_or = parsed("a:NP\n{ a.empty }\n  or { a.preterminal }")
    assert before_or.condition == compact.condition


def test_statement_continues_after_operators_not_and_colon():
    compact = parsed("x:NP; x.tokens > 3; not x.empty")
    assert parsed("x:\n NP\nx.tokens >\n 3\nnot\n x.empty").condition == compact.condition


def test_hash_inside_strings_and_regexes_is_not_a_comment():
    pattern = parse_pattern('x:/#/\nx.word = "#1"')
    assert pattern.vars[0].test == NodeTest(CategoryRegex("#"))
    assert pattern.condition.items[0].right.value == "#1"


def test_keyword_prefixes_are_names():
    # `notable`, `order`, `atom` are names, not keywords followed by something
    pattern = parse_pattern("notable:NP; order:VP; atom:PP; dominatesx:S")
    assert pattern.reported == ("notable", "order", "atom", "dominatesx")


# ---------------------------------------------------------------- spans

def test_spans_are_character_offsets():
    text = "vp:VP-TMP parent-of o:NP\no.tokens >= 4"
    pattern = parse_pattern(text)
    vp, o = pattern.vars
    assert text[vp.span.start:vp.span.end] == "vp:VP-TMP"
    assert text[o.span.start:o.span.end] == "o:NP"
    relation, compare = pattern.condition.items
    assert text[relation.span.start:relation.span.end] == "parent-of o:NP"
    assert text[compare.span.start:compare.span.end] == "o.tokens >= 4"
    assert text[compare.left.span.start:compare.left.span.end] == "o.tokens"
    assert text[compare.right.span.start:compare.right.span.end] == "4"


def test_spans_of_not_and_fragment_nodes():
    text = 'x:NP\nnot x parent-of (PP (IN "of"))'
    pattern = parse_pattern(text)
    negation = pattern.condition.items[0]
    assert text[negation.span.start:negation.span.end] == 'not x parent-of (PP (IN "of"))'
    pp, word = negation.item.vars
    assert text[pp.span.start:pp.span.end] == "PP"
    assert text[word.span.start:word.span.end] == 'IN "of"'


def test_parser_is_cached():
    from treequery.pattern.grammar import pattern_parser
    assert pattern_parser() is pattern_parser()


def test_grammar_is_found_in_the_repository():
    from pathlib import Path

    from treequery.pattern.grammar import grammar_location
    repo_copy = Path(__file__).resolve().parents[2] / "grammar" / "pattern.lark"
    packaged = Path(__file__).resolve().parents[2] / "treequery" / "_data" / "grammar"
    if not packaged.exists():  # a working tree: only the repository copy exists
        assert Path(str(grammar_location())) == repo_copy


def test_packaged_grammar_is_preferred(tmp_path, monkeypatch):
    # a wheel ships the grammar as treequery/_data/grammar/pattern.lark (pyproject force-include)
    from treequery.pattern import grammar
    packaged = tmp_path / "_data" / "grammar" / "pattern.lark"
    packaged.parent.mkdir(parents=True)
    packaged.write_text("start: NAME\nNAME: /x/\n")
    monkeypatch.setattr(grammar.resources, "files", lambda package: tmp_path)
    assert grammar.grammar_location() == packaged


# ---------------------------------------------------------------- real labels

def _label_test_text(label: str) -> tuple[str, CategoryIs]:
    """How a treebank label (indices removed) is written as a node test, and its meaning.

    README "Node tests": bare when it starts with an upper-case letter (letters, digits,
    `$`, `-FUNC` parts) or begins and ends with `-`; anything else in single quotes.
    """
    import re
    if re.fullmatch(r"[A-Z][A-Za-z0-9$-]*", label):
        category, *functions = label.split("-")
        return label, CategoryIs(category, tuple(functions))
    if len(label) > 2 and label[0] == label[-1] == "-":
        return label, CategoryIs(label)
    quoted = label.replace("\\", "\\\\").replace("'", "\\'")
    return f"'{quoted}'", CategoryIs(label)


@pytest.mark.corpora
def test_every_label_of_the_wsj_sample_can_be_written(wsj_dir):
    # the labels are read with nltk.Tree (the reference library, via tests/reference), not
    # our reader; indices (NP-SBJ-1, NP=2) are attributes, so they are removed first
    import re

    from reference.nodes import read_nltk_trees
    labels = {subtree.label() for path in sorted(wsj_dir.glob("wsj_*.mrg"))
              for tree in read_nltk_trees(path) for subtree in tree.subtrees()}
    labels = {re.sub(r"([-=]\d+)+$", "", label) for label in labels} - {""}
    assert len(labels) > 100
    for label in sorted(labels):
        written, expected = _label_test_text(label)
        assert only_test(written).label == expected, label
