"""The bracket reader: notation, positions, bad input and recovery, against nltk.Tree."""
from __future__ import annotations

import gzip

import nltk
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from treequery.errors import TreebankFormatError
from treequery.read.brackets import read_file, read_trees
from treequery.read.model import ParsedNode, ParsedTree, SkippedTree

# NLTK's Tree.fromstring is the reference reader for the notation (labels, words,
# structure) throughout this file.


def shape(node: ParsedNode):
    """(label, word) for a preterminal, (label, [children]) otherwise."""
    if node.word is not None:
        assert not node.children
        return (node.label, node.word)
    return (node.label, [shape(child) for child in node.children])


def nltk_shape(tree: nltk.Tree):
    if len(tree) == 1 and isinstance(tree[0], str):
        return (tree.label(), tree[0])
    assert all(isinstance(child, nltk.Tree) for child in tree)
    return (tree.label(), [nltk_shape(child) for child in tree])


def read(text: str, strict: bool = False) -> list:
    return list(read_trees(text.split("\n"), "t.mrg", strict=strict))


def trees(text: str) -> list[ParsedTree]:
    items = read(text)
    assert all(isinstance(item, ParsedTree) for item in items), items
    return items


def preorder(node: ParsedNode):
    stack = [node]
    while stack:
        node = stack.pop()
        yield node
        stack.extend(reversed(node.children))


# -- valid notation, each compared with nltk.Tree.fromstring ---------------------------

@pytest.mark.parametrize("text", [
    "(NN dog)",
    "(NP (DT the) (NN dog))",
    "( (S (NP-SBJ (PRP it)) (VP (VBZ works))) )",       # unlabelled outer bracket
    "(ROOT (S (NP (PRP it)) (VP (VBZ works))))",        # ROOT wrapper: an ordinary node
    "(TOP (NP (NN x)))",
    "(S\n  (NP (DT the)\n      (NN dog))\n  (VP (VBD ran)))",  # multi-line
    "(S(NP(DT the)(NN dog))(VP(VBD ran)))",             # no spaces between brackets
    "(S (NP-SBJ-1 (-NONE- *T*-1)) (PRN (-LRB- -LRB-) (NN a-RRB-) (-RRB- -RRB-)))",
    "(NP (NN -LRB-a-RRB-) (NN -LCB-x-RCB-) (NN -LSB-y-RSB-))",  # escapes kept as written
    "(NP (NN čaj) (NN 茶) (NN शब्द) (SYM 😀))",          # any UTF-8
    "(ADVP|PRT (RP up))",
    "(S (, ,) (. .) (: :) (`` ``) ('' '') ($ $) (# #))",
    "( (NP (NN a)) (NP (NN b)) )",                      # outer bracket, two children
    "(NP\t(NN\ttab)\t)",
])
def test_single_tree_matches_nltk(text):
    [tree] = trees(text)
    assert shape(tree.root) == nltk_shape(nltk.Tree.fromstring(text))
    assert (tree.source, tree.line, tree.ordinal) == ("t.mrg", 1, 1)


def test_unlabelled_outer_bracket_has_empty_label():
    [tree] = trees("( (S (NN x)) )")
    assert tree.root.label == "" and tree.root.children[0].label == "S"
    assert nltk.Tree.fromstring("( (S (NN x)) )").label() == ""


def test_many_trees_blank_lines_and_trees_sharing_a_line():
    text = "\n\n(A (B b))\n\n\n( (C (D d))\n)\n(E e) (F (G g))\n\n"
    items = trees(text)
    assert [shape(t.root) for t in items] == [
        nltk_shape(nltk.Tree.fromstring(part))
        for part in ["(A (B b))", "( (C (D d))\n)", "(E e)", "(F (G g))"]]
    assert [(t.line, t.ordinal) for t in items] == [(3, 1), (6, 2), (8, 3), (8, 4)]


def test_node_positions_are_opening_brackets():
    text = "( (S\n    (NP (DT a)   (NN b))\n  (VP (VB c))))"
    [tree] = trees(text)
    positions = [(node.label, node.line, node.column) for node in preorder(tree.root)]
    assert positions == [("", 1, 1), ("S", 1, 3), ("NP", 2, 5), ("DT", 2, 9), ("NN", 2, 18),
                         ("VP", 3, 3), ("VB", 3, 7)]
    lines = text.split("\n")
    for node in preorder(tree.root):
        assert lines[node.line - 1][node.column - 1] == "("


def test_columns_count_characters_not_bytes():
    [tree] = trees("(X (W ééé) (Y z))")
    assert [n.column for n in preorder(tree.root)] == [1, 4, 12]


def test_deep_tree_needs_no_recursion():
    depth = 20_000  # far beyond Python's recursion limit
    text = "(X " * depth + "(W w)" + ")" * depth
    [tree] = trees(text)
    assert sum(1 for _ in preorder(tree.root)) == depth + 1


def test_crlf_line_endings():
    [tree] = trees("(S\r\n  (NN a))\r\n")
    assert shape(tree.root) == ("S", [("NN", "a")])


def test_reading_streams_line_by_line():
    consumed = []

    def lines():
        for number, line in enumerate(["(A", " (B b))", "(C (D d))"] + ["(E e)"] * 1000, 1):
            consumed.append(number)
            yield line

    stream = read_trees(lines(), "t.mrg")
    first = next(stream)
    assert shape(first.root) == ("A", [("B", "b")])
    assert len(consumed) == 2  # the tree is handed out at the end of the line closing it
    assert sum(1 for _ in stream) == 1001


def test_empty_input_yields_nothing():
    assert read("") == []
    assert read("\n   \n\t\n") == []


def test_backslash_is_an_ordinary_character():
    # Penn Treebank files write brackets in words as -LRB- / -RRB- (Marcus et al. 1993);
    # a backslash before a bracket is no escape for us (the NLTK we test with reads one).
    [tree] = trees(r"(NP (NN a\) (SYM \\))")
    assert shape(tree.root) == ("NP", [("NN", "a\\"), ("SYM", "\\\\")])


# -- bad input: message, position, what was expected, and the next tree is read -------

GOOD = "(X (Y z))"


def check_skip(text: str, line: int, column: int, words: list[str], expected: str,
               good_line: int, good_ordinal: int) -> SkippedTree:
    """`text` then GOOD on its own line: one SkippedTree, then GOOD is read."""
    items = read(text + "\n" + GOOD)
    skipped = [item for item in items if isinstance(item, SkippedTree)]
    good = [item for item in items if isinstance(item, ParsedTree)]
    assert len(skipped) == 1, items
    problem = skipped[0]
    assert (problem.source, problem.line, problem.column) == ("t.mrg", line, column)
    for word in words:
        assert word in problem.message
    assert f"expected {expected}" in problem.message
    assert good and shape(good[-1].root) == ("X", [("Y", "z")])
    assert (good[-1].line, good[-1].ordinal) == (good_line, good_ordinal)
    with pytest.raises(TreebankFormatError) as raised:
        read(text + "\n" + GOOD, strict=True)
    error = raised.value
    assert (error.path, error.line, error.column) == ("t.mrg", line, column)
    assert error.expected == expected
    assert f"t.mrg:{line}:{column}" in str(error)
    return problem


def test_missing_label_inside_tree():
    check_skip("(NP ((NN dog)))", 1, 6, ["missing label", "column 5"],
               "a label after '('", 2, 2)


def test_missing_label_before_a_phrase():
    check_skip("(S (NP (PP (IN in) ((NN x) (NN y)))))", 1, 21, ["missing label", "column 20"],
               "a label after '('", 2, 2)


def test_label_without_word_or_child():
    check_skip("(NP (dog))", 1, 9, ["(dog) has no word and no children", "column 5"],
               "a word or a bracketed child", 2, 2)


def test_empty_brackets():
    check_skip("(NP (NN a) ())", 1, 13, ["empty brackets"], "a label", 2, 2)


def test_word_after_children():
    check_skip("(NP (NN dog) cat)", 1, 14, ["'cat'", "not both"], "'(' or ')'", 2, 2)


def test_bracket_after_word():
    check_skip("(NP cat (NN dog))", 1, 9, ["'cat'", "not both"], "')'", 2, 2)


def test_second_word_in_preterminal():
    check_skip("(NN big dog)", 1, 9, ["second word 'dog'"], "'(' or ')'", 2, 2)


def test_unbalanced_close_bracket():
    check_skip("(A (B b)))", 1, 10, ["unbalanced ')'"], "'(' to start a tree", 2, 2)


def test_stray_text_between_trees_is_reported_once():
    check_skip("(A (B b))\nsome stray\ntext here", 2, 1, ["stray text 'some'"],
               "'(' to start a tree", 4, 2)


def test_tree_open_at_end_of_file():
    items = read("(A (B b))\n(S (NP (NN a))\n   (VP (VB b))")
    assert isinstance(items[0], ParsedTree)
    [problem] = items[1:]
    assert isinstance(problem, SkippedTree)
    assert (problem.line, problem.column) == (3, 15)
    assert "line 2, column 1" in problem.message and "end of the file" in problem.message
    assert "expected ')'" in problem.message


def test_tree_open_at_end_of_file_strict():
    with pytest.raises(TreebankFormatError) as raised:
        read("(A (B b)", strict=True)
    assert (raised.value.line, raised.value.column, raised.value.expected) == (1, 9, "')'")


def test_missing_close_bracket_recovers_at_column_one():
    check_skip("(S (NP (NN a))\n   (VP (VB b))", 3, 1, ["missing ')'", "line 1, column 1"],
               "')' before the new tree", 3, 2)


def test_discarded_tree_spanning_lines_then_next_tree():
    text = "(S (NP ((NN a)))\n   (VP (VB b)))\n  (T (U u))"
    items = read(text)
    assert isinstance(items[0], SkippedTree) and items[0].line == 1
    assert shape(items[1].root) == ("T", [("U", "u")])
    assert (items[1].line, items[1].ordinal) == (3, 2)


def test_recovery_on_the_same_line():
    items = read("(A ()) (B (C c)) ) (D d)")
    kinds = [type(item).__name__ for item in items]
    assert kinds == ["SkippedTree", "ParsedTree", "SkippedTree", "ParsedTree"]
    assert [item.ordinal for item in items if isinstance(item, ParsedTree)] == [2, 3]


def test_discard_stops_at_column_one_without_second_report():
    # The broken tree also lacks a ')': one report only, then the next tree.
    items = read("(S (NP ((NN a)))\n(T (U u))")
    assert [type(item).__name__ for item in items] == ["SkippedTree", "ParsedTree"]


# -- files ---------------------------------------------------------------------------

TEXT = "( (S (NP (NN a)) (VP (VB b))) )\n\n(ROOT (NP (NN -LRB-c-RRB-) (NN ü)))\n"


def test_read_file_plain_and_gz(tmp_path):
    plain = tmp_path / "a.mrg"
    plain.write_text(TEXT, encoding="utf-8")
    packed = tmp_path / "a.mrg.gz"
    packed.write_bytes(gzip.compress(TEXT.encode("utf-8")))
    expected = [nltk_shape(nltk.Tree.fromstring(part)) for part in TEXT.strip().split("\n\n")]
    for path in (plain, packed):
        items = list(read_file(path))
        assert [shape(t.root) for t in items] == expected
        assert [(t.source, t.line, t.ordinal) for t in items] == [
            (str(path), 1, 1), (str(path), 3, 2)]


def test_byte_order_mark_is_ignored(tmp_path):
    path = tmp_path / "bom.mrg"
    path.write_bytes(b"\xef\xbb\xbf(A (B b))\n")
    [tree] = list(read_file(path))
    assert shape(tree.root) == ("A", [("B", "b")]) and tree.root.column == 1


def test_empty_file_yields_no_trees(tmp_path):
    path = tmp_path / "empty.mrg"
    path.write_bytes(b"")
    assert list(read_file(path)) == []


def test_invalid_utf8_skips_its_tree(tmp_path):
    path = tmp_path / "bad.mrg"
    path.write_bytes(b"(A (B b))\n(S (NP (NN caf\xe9))\n  (VP (VB x)))\n(C (D d))\n")
    items = list(read_file(path))
    assert [type(item).__name__ for item in items] == ["ParsedTree", "SkippedTree", "ParsedTree"]
    problem = items[1]
    # Byte column: "(S (NP (NN caf" is 14 bytes, the bad byte is the 15th.
    assert (problem.line, problem.column) == (2, 15)
    assert "invalid UTF-8" in problem.message and "0xe9" in problem.message
    assert (items[2].line, items[2].ordinal) == (4, 3)
    with pytest.raises(TreebankFormatError) as raised:
        list(read_file(path, strict=True))
    assert (raised.value.line, raised.value.column) == (2, 15)


def test_invalid_utf8_byte_column_after_multibyte_text(tmp_path):
    path = tmp_path / "bad2.mrg"
    path.write_bytes("(A (B é) (C ".encode() + b"\xff)) (D d)\n")
    items = list(read_file(path))
    assert [type(item).__name__ for item in items] == ["SkippedTree", "ParsedTree"]
    assert items[0].column == len("(A (B é) (C ".encode()) + 1
    assert shape(items[1].root) == ("D", "d")


def test_invalid_utf8_between_trees(tmp_path):
    path = tmp_path / "bad3.mrg"
    path.write_bytes(b"(A a)\n\xff\xfe junk\n(B b)\n")
    items = list(read_file(path))
    assert [type(item).__name__ for item in items] == ["ParsedTree", "SkippedTree", "ParsedTree"]
    assert (items[1].line, items[1].column) == (2, 1)


def test_every_bad_byte_of_a_line_is_found(tmp_path):
    # Two bad bytes in one word (one report), then one in a later tree on the same
    # line (a second report): no tree is read with a replacement character in it.
    path = tmp_path / "bad4.mrg"
    path.write_bytes(b"(A (B x\xff\xfey)) (C c) (D \xc3) (E e)\n")
    items = list(read_file(path))
    assert [type(item).__name__ for item in items] == [
        "SkippedTree", "ParsedTree", "SkippedTree", "ParsedTree"]
    assert [item.column for item in items if isinstance(item, SkippedTree)] == [8, 23]
    assert [shape(item.root) for item in items if isinstance(item, ParsedTree)] == [
        ("C", "c"), ("E", "e")]


def test_truncated_gz_fails_the_whole_file(tmp_path):
    path = tmp_path / "cut.mrg.gz"
    data = gzip.compress((TEXT * 200).encode())
    path.write_bytes(data[: len(data) // 2])
    with pytest.raises(TreebankFormatError) as raised:
        list(read_file(path))
    assert "gzip" in str(raised.value) and raised.value.path == str(path)


def test_unreadable_file(tmp_path):
    with pytest.raises(TreebankFormatError):
        list(read_file(tmp_path / "missing.mrg"))


# -- random trees round-trip -------------------------------------------------------------

CATEGORIES = ["S", "NP", "VP", "PP", "SBAR", "WHNP", "ADVP|PRT", "ROOT", "X"]
FUNCTIONS = ["SBJ", "TMP", "LOC", "CLR", "PRD", "TPC"]
TAGS = ["NN", "DT", "VBZ", "PRP$", ",", ".", "``", "''", "-LRB-", "-RRB-", "$", "#"]
ESCAPES = ["-LRB-", "-RRB-", "-LCB-", "-RCB-", "-LSB-", "-RSB-"]
# Word characters: anything but brackets, whitespace and control/format characters.
# No backslash: nltk.Tree.fromstring reads "\\)" as an escaped bracket, we do not (see
# test_backslash_is_an_ordinary_character), so the reference would differ by design.
WORD_CHARS = st.characters(blacklist_categories=("Z", "C"), blacklist_characters="()\\")


@st.composite
def phrase_labels(draw):
    label = draw(st.sampled_from(CATEGORIES))
    for function in draw(st.lists(st.sampled_from(FUNCTIONS), max_size=2)):
        label += "-" + function
    if draw(st.booleans()):
        label += f"-{draw(st.integers(1, 300))}"
    if draw(st.integers(0, 4)) == 0:
        label += f"={draw(st.integers(1, 9))}"
    return label


words = st.one_of(
    st.text(WORD_CHARS, min_size=1, max_size=8),
    st.lists(st.one_of(st.sampled_from(ESCAPES), st.text(WORD_CHARS, min_size=1, max_size=3)),
             min_size=1, max_size=4).map("".join),
    st.sampled_from(["*T*-1", "*", "*-2", "0", "*U*", "*?*"]),
)
preterminals = st.tuples(st.sampled_from(TAGS + ["-NONE-"]), words)
nodes = st.recursive(
    preterminals,
    lambda children: st.tuples(phrase_labels(), st.lists(children, min_size=1, max_size=4)),
    max_leaves=30)


def tokens_of(node, out: list) -> None:
    """The tokens of a node: '(' label (word | children) ')'; '(' carries the node."""
    label, content = node
    out.append(("(", node))
    if label != "":
        out.append((label, None))
    if isinstance(content, str):
        out.append((content, None))
    else:
        for child in content:
            tokens_of(child, out)
    out.append((")", None))


@st.composite
def rendered(draw):
    """Random trees as text with random spacing and line breaks, plus where each '(' is."""
    roots = draw(st.lists(nodes, min_size=1, max_size=3))
    roots = [("", [root]) if draw(st.booleans()) else root for root in roots]
    text, positions, line, column = "", [], 1, 1
    for number, root in enumerate(roots):
        tokens: list = []
        tokens_of(root, tokens)
        previous = None
        for token, node in tokens:
            if previous is None:
                gap = draw(st.sampled_from(["", "\n", "\n\n", " "])) if number else ""
            else:
                gap = draw(st.sampled_from([" ", "  ", "\t", "\n ", "\n    ", "\n\n  ", ""]))
                if gap == "" and previous not in "()" and token not in "()":
                    gap = " "  # two words need a space between them
            if token == "(" and previous is not None and gap.endswith("\n"):
                gap += " "  # continuation lines are indented (the reader's rule 2)
            for char in gap:
                line, column = (line + 1, 1) if char == "\n" else (line, column + 1)
            text += gap
            if node is not None:
                positions.append((line, column))
            text += token
            column += len(token)
            previous = token
    return roots, text, positions


def tuple_shape(node):
    label, content = node
    if isinstance(content, str):
        return (label, content)
    return (label, [tuple_shape(child) for child in content])


@settings(max_examples=300, deadline=None)
@given(rendered())
def test_random_trees_read_back(case):
    roots, text, positions = case
    items = trees(text)
    assert [shape(item.root) for item in items] == [tuple_shape(root) for root in roots]
    assert [(n.line, n.column) for item in items for n in preorder(item.root)] == positions
    assert [item.ordinal for item in items] == list(range(1, len(roots) + 1))
    assert [item.line for item in items] == [item.root.line for item in items]
    # and the reference reader agrees on every tree
    for item, root in zip(items, roots, strict=True):
        assert nltk_shape(nltk.Tree.fromstring(render_plain(root))) == shape(item.root)


def render_plain(node) -> str:
    label, content = node
    if isinstance(content, str):
        return f"({label} {content})"
    return f"({label} " + " ".join(render_plain(child) for child in content) + ")"
