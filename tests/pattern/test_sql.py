"""Tests of the back end (plan, SQL generation, fetching) on small hand-built indexes.

Expected results are computed independently in each test with NLTK's Tree (tree
positions) and plain Python; the database is filled by direct INSERTs that follow
the comments of treequery/index/schema.py, so these tests do not depend on the
index builder.
"""
from __future__ import annotations

import itertools
import re
import sqlite3
import time
from dataclasses import dataclass

import pytest
from nltk import Tree

from treequery.errors import PatternCheckError, SearchTimeout, TreequeryError
from treequery.index.schema import create_schema
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
from treequery.pattern.plan import make_plan
from treequery.pattern.sql import count_sql, register_functions, to_sql
from treequery.results.fetch import count_results, explain_text, fetch_results

SP = Span(0, 0)

# Invented sentences (written for these tests), Penn Treebank II bracket style:
# function tags, coindexed labels, empty elements, escaped brackets.
TREES = [
    "( (S (NP-SBJ (DT the) (NN cat)) (VP (VBD sat) (PP-LOC (IN on) (NP (DT the) (NN mat))))"
    " (. .)) )",
    "( (S (NP-SBJ-1 (PRP it)) (VP (VBD was) (VP (VBN seen) (NP (-NONE- *-1))"
    " (PP (IN by) (NP (NNS dogs))))) (. .)) )",
    "( (SBARQ (WHNP-2 (WP what)) (SQ (VBD did) (NP-SBJ (PRP she))"
    " (VP (VB eat) (NP (-NONE- *T*-2)))) (. ?)) )",
    "( (NP (NP (NN tea)) (PRN (-LRB- -LRB-) (NP (JJ green) (NN tea)) (-RRB- -RRB-))) )",
    "( (S (NP-SBJ-TMP (NN today)) (VP (VBZ rains) (ADVP-TMP (RB again)) (NP=3 (DT a) (NN lot)))) )",
]

# Penn Treebank bracket escapes (Marcus et al. 1993; written from memory).
ESCAPES = {"-LRB-": "(", "-RRB-": ")", "-LCB-": "{", "-RCB-": "}", "-LSB-": "[", "-RSB-": "]"}


# ---------------------------------------------------------------- a hand-filled index

def decompose(label: str) -> tuple[str, str, int | None, int | None]:
    """Treebank II label parts (Bies et al. 1995, sections 1-2; written from memory)."""
    if label.startswith("-") or not label:
        return label, "", None, None
    gap = None
    if "=" in label:
        label, gap_text = label.rsplit("=", 1)
        gap = int(gap_text)
    parts = label.split("-")
    coindex = int(parts.pop()) if len(parts) > 1 and parts[-1].isdigit() else None
    return parts[0], "-".join(parts[1:]), coindex, gap


@dataclass
class RefNode:
    """A node of the test corpus, as the independent expectation code sees it."""

    id: int
    tree: int          # 0-based tree number
    pos: tuple         # NLTK tree position
    sub: Tree
    parent: RefNode | None
    leaves: list[int]  # 1-based numbers of the leaves covered, empty elements included
    toks: list[int]    # 1-based numbers of the overt words covered


def is_preterminal(t: Tree) -> bool:
    return len(t) == 1 and isinstance(t[0], str)


def build_db(brackets: list[str]) -> tuple[sqlite3.Connection, list[RefNode]]:
    conn = sqlite3.connect(":memory:")
    create_schema(conn)
    conn.execute("INSERT INTO corpus(id, name) VALUES (1, 'test')")
    conn.execute("INSERT INTO document(id, corpus, path, name, size, sha256, indexed_at) "
                 "VALUES (1, 1, '/data/test.mrg', 'test.mrg', 0, '', 'now')")
    labels: dict[str, int] = {}
    words: dict[str, int] = {}
    nodes: list[RefNode] = []
    next_id = 1
    for tree_no, text in enumerate(brackets):
        tree = Tree.fromstring(text, remove_empty_top_bracketing=False)
        first = next_id
        by_pos: dict[tuple, RefNode] = {}
        rows = []
        leaves = tree.pos()
        # 1-based leaf numbers and overt-token numbers per leaf index
        overt, tok = [], 0
        for _word, tag in leaves:
            tok += tag != "-NONE-"
            overt.append(tok if tag != "-NONE-" else None)
        positions = [p for p in tree.treepositions() if isinstance(tree[p], Tree)]
        leaf_positions = tree.treepositions("leaves")
        for pos in positions:  # NLTK lists positions in pre-order
            sub = tree[pos]
            leaf_idx = [i for i, lp in enumerate(leaf_positions) if lp[:len(pos)] == pos]
            node = RefNode(next_id, tree_no, pos, sub, by_pos.get(pos[:-1]) if pos else None,
                           [i + 1 for i in leaf_idx],
                           [overt[i] for i in leaf_idx if overt[i] is not None])
            by_pos[pos] = node
            nodes.append(node)
            next_id += 1
        for pos in positions:
            node, sub = by_pos[pos], tree[pos]
            last = max(n.id for p, n in by_pos.items() if p[:len(pos)] == pos)
            toks = node.toks
            label = sub.label()
            if label not in labels:
                labels[label] = len(labels) + 1
                cat, fun, co, gap = decompose(label)
                conn.execute("INSERT INTO label VALUES (?,?,?,?,?,?,0)",
                             (labels[label], label, cat, fun, co, gap))
            word_code = None
            if is_preterminal(sub):
                word = sub[0]
                if word not in words:
                    words[word] = len(words) + 1
                    form = re.sub("|".join(ESCAPES), lambda m: ESCAPES[m.group()], word)
                    kind = "trace" if label == "-NONE-" else None
                    conn.execute("INSERT INTO word VALUES (?,?,?,?,NULL,0)",
                                 (words[word], word, form, kind))
                word_code = words[word]
            rows.append((node.id, last, tree_no + 1, node.parent.id if node.parent else None,
                         len(pos), (pos[-1] + 1) if pos else 1,
                         0 if is_preterminal(sub) else len(sub), labels[label], word_code,
                         node.leaves[0], node.leaves[-1],
                         toks[0] if toks else None, toks[-1] if toks else None))
        conn.executemany("INSERT INTO node(id, last, tree, parent, depth, position, n_children,"
                         " label, word, leaf_first, leaf_last, tok_first, tok_last)"
                         " VALUES (?,?,?,?,?,?,?,?,?,?,?,?,?)", rows)
        text_words = " ".join(ESCAPES.get(w, w) for w, t in leaves if t != "-NONE-")
        conn.execute("INSERT INTO tree VALUES (?,1,?,?,?,?,?,?,?)",
                     (tree_no + 1, tree_no + 1, tree_no * 3 + 1, first, next_id - 1,
                      sum(1 for _, t in leaves if t != "-NONE-"), len(leaves), text_words))
    conn.execute("UPDATE label SET n_nodes = (SELECT COUNT(*) FROM node WHERE label = code)")
    conn.execute("UPDATE word SET n_nodes = (SELECT COUNT(*) FROM node WHERE word = code)")
    conn.commit()
    return conn, nodes


# ---------------------------------------------------------------- expectations in Python

def cat(n: RefNode) -> str:
    return decompose(n.sub.label())[0]


def tags(n: RefNode) -> list[str]:
    functions = decompose(n.sub.label())[1]
    return functions.split("-") if functions else []


def word(n: RefNode) -> str | None:
    if not is_preterminal(n.sub):
        return None
    return re.sub("|".join(ESCAPES), lambda m: ESCAPES[m.group()], n.sub[0])


def same_parent(a: RefNode, b: RefNode) -> bool:
    return a.tree == b.tree and bool(a.pos) and bool(b.pos) and a.pos[:-1] == b.pos[:-1]


def is_child(a: RefNode, b: RefNode) -> bool:
    """a is a child of b."""
    return a.tree == b.tree and len(a.pos) == len(b.pos) + 1 and a.pos[:-1] == b.pos


def below(a: RefNode, b: RefNode) -> int | None:
    """Levels from a down to b when a is a proper ancestor of b, else None."""
    if a.tree == b.tree and len(b.pos) > len(a.pos) and b.pos[:len(a.pos)] == a.pos:
        return len(b.pos) - len(a.pos)
    return None


def precedes(a: RefNode, b: RefNode, empty: bool = False) -> bool:
    first, second = (a.leaves, b.leaves) if empty else (a.toks, b.toks)
    return a.tree == b.tree and bool(first) and bool(second) and max(first) < min(second)


def just_before(a: RefNode, b: RefNode, empty: bool = False) -> bool:
    first, second = (a.leaves, b.leaves) if empty else (a.toks, b.toks)
    return a.tree == b.tree and bool(first) and bool(second) and max(first) + 1 == min(second)


REFERENCE_RELATIONS = {
    "dominates": lambda a, b: below(a, b) is not None,
    "parent-of": lambda a, b: is_child(b, a),
    "precedes": precedes,
    "just-before": just_before,
    "sister-of": lambda a, b: same_parent(a, b) and a.pos != b.pos,
    "left-sister-of": lambda a, b: same_parent(a, b) and a.pos[-1] < b.pos[-1],
    "immediate-left-sister-of": lambda a, b: same_parent(a, b) and a.pos[-1] + 1 == b.pos[-1],
    "first-child-of": lambda a, b: is_child(a, b) and a.pos[-1] == 0,
    "last-child-of": lambda a, b: is_child(a, b) and a.pos[-1] == len(b.sub) - 1,
    "only-child-of": lambda a, b: is_child(a, b) and len(b.sub) == 1,
    "same-node": lambda a, b: a.id == b.id,
}


def expect(nodes: list[RefNode], names: list[str], result: list[str], holds) -> list[tuple]:
    """Distinct result tuples of ids over same-tree assignments satisfying `holds(env)`."""
    found = set()
    for tree in sorted({n.tree for n in nodes}):
        in_tree = [n for n in nodes if n.tree == tree]
        for combo in itertools.product(in_tree, repeat=len(names)):
            env = dict(zip(names, combo, strict=True))
            if holds(env):
                found.add(tuple(env[r].id for r in result))
    return sorted(found)


# ---------------------------------------------------------------- building patterns

def var(name: str, label=None, word_: str | None = None, reported: bool | None = None) -> NodeVar:
    if reported is None:
        reported = not name.startswith("_")
    return NodeVar(name, NodeTest(label or AnyLabel(), word_), reported, SP)


def pattern(variables: list[NodeVar], *conditions) -> Pattern:
    reported = tuple(v.name for v in variables if v.reported)
    return Pattern("(hand-built)", tuple(variables), And(tuple(conditions)), reported)


def rel(kind: str, left: str, right: str, **depth) -> Relation:
    return Relation(kind, left, right, SP, **depth)


def cmp(name: str, attr: str, op: str, value) -> Compare:
    right = Attr(value[0], value[1], SP) if isinstance(value, tuple) else Literal(value, SP)
    return Compare(Attr(name, attr, SP), op, right, SP)


def search(conn, pat: Pattern, count_empty: bool = False, **kw) -> list[tuple]:
    plan = make_plan(conn, pat, count_empty=count_empty)
    return [tuple(r.bindings[v].id for v in pat.result_vars)
            for r in fetch_results(conn, plan, **kw)]


@pytest.fixture(scope="module")
def corpus():
    conn, nodes = build_db(TREES)
    yield conn, nodes
    conn.close()


# ---------------------------------------------------------------- relations

@pytest.mark.parametrize("kind", sorted(REFERENCE_RELATIONS))
def test_each_relation_over_all_node_pairs(corpus, kind):
    conn, nodes = corpus
    got = search(conn, pattern([var("a"), var("b")], rel(kind, "a", "b")))
    ref = REFERENCE_RELATIONS[kind]
    assert got == expect(nodes, ["a", "b"], ["a", "b"], lambda e: ref(e["a"], e["b"]))
    assert got  # every relation occurs in the test trees


@pytest.mark.parametrize("kind", ["precedes", "just-before"])
def test_token_relations_counting_empty_leaves(corpus, kind):
    conn, nodes = corpus
    got = search(conn, pattern([var("a"), var("b")], rel(kind, "a", "b")), count_empty=True)
    ref = REFERENCE_RELATIONS[kind]
    want = expect(nodes, ["a", "b"], ["a", "b"], lambda e: ref(e["a"], e["b"], empty=True))
    assert got == want
    default = search(conn, pattern([var("a"), var("b")], rel(kind, "a", "b")))
    assert default != got  # the traces in the test trees make a difference


@pytest.mark.parametrize("low,high", [(None, 2), (2, 2), (3, 3), (2, None), (None, 1)])
def test_dominates_with_depth_bounds(corpus, low, high):
    conn, nodes = corpus
    got = search(conn, pattern([var("a"), var("b")],
                               rel("dominates", "a", "b", min_depth=low, max_depth=high)))

    def holds(e):
        levels = below(e["a"], e["b"])
        return levels is not None and levels >= (low or 1) and (high is None or levels <= high)

    assert got == expect(nodes, ["a", "b"], ["a", "b"], holds)


def test_labelled_relation_chain(corpus):
    conn, nodes = corpus
    p = pattern([var("vp", CategoryIs("VP")), var("np", CategoryIs("NP")),
                 var("pp", CategoryIs("PP"))],
                rel("parent-of", "vp", "np"), rel("dominates", "vp", "pp"),
                rel("precedes", "np", "pp"))
    # only a trace NP precedes a PP here, so empty leaves must count
    got = search(conn, p, count_empty=True)
    want = expect(nodes, ["vp", "np", "pp"], ["vp", "np", "pp"], lambda e: (
        cat(e["vp"]) == "VP" and cat(e["np"]) == "NP" and cat(e["pp"]) == "PP"
        and is_child(e["np"], e["vp"]) and below(e["vp"], e["pp"]) is not None
        and precedes(e["np"], e["pp"], empty=True)))
    assert got == want and got


# ---------------------------------------------------------------- node tests

LABEL_TESTS = [
    (CategoryIs("NP"), lambda n: cat(n) == "NP"),
    (CategoryIs("NP", ("SBJ",)), lambda n: cat(n) == "NP" and "SBJ" in tags(n)),
    (CategoryIs("NP", ("TMP", "SBJ")), lambda n: cat(n) == "NP" and {"SBJ", "TMP"} <= set(tags(n))),
    (CategoryIs("-NONE-"), lambda n: n.sub.label() == "-NONE-"),
    (CategoryIs(""), lambda n: n.sub.label() == ""),
    (CategoryRegex("^WH"), lambda n: cat(n).startswith("WH")),
    (CategoryRegex("P$"), lambda n: cat(n).endswith("P")),
    (LabelOneOf((CategoryIs("PP"), CategoryRegex("^VB"))),
     lambda n: cat(n) == "PP" or cat(n).startswith("VB")),
    (LabelNot(CategoryIs("NP")), lambda n: cat(n) != "NP"),
    (LabelNot(LabelOneOf((CategoryIs("NP"), CategoryIs("VP")))),
     lambda n: cat(n) not in ("NP", "VP")),
]


@pytest.mark.parametrize("test,ref", LABEL_TESTS)
def test_label_tests(corpus, test, ref):
    conn, nodes = corpus
    got = search(conn, pattern([var("x", test)]))
    want = sorted((n.id,) for n in nodes if ref(n))
    assert got == want and got


@pytest.mark.parametrize("label,form", [(AnyLabel(), "the"), (CategoryIs("DT"), "the"),
                                        (CategoryIs("NN"), "the"), (AnyLabel(), "("),
                                        (AnyLabel(), "-LRB-")])
def test_word_tests(corpus, label, form):
    conn, nodes = corpus
    got = search(conn, pattern([var("x", label, form)]))
    want = sorted((n.id,) for n in nodes
                  if word(n) == form and (isinstance(label, AnyLabel) or cat(n) == label.category))
    assert got == want


# ---------------------------------------------------------------- attributes

def ref_attr(n: RefNode, name: str):
    category, functions, coindex, gap = decompose(n.sub.label())
    return {
        "category": category, "label": n.sub.label(), "functions": functions,
        "word": word(n), "index": coindex, "gap": gap,
        "children": 0 if is_preterminal(n.sub) else len(n.sub),
        "tokens": len(n.toks), "leaves": len(n.leaves), "depth": len(n.pos),
        "position": n.pos[-1] + 1 if n.pos else 1,
        "start": min(n.toks) if n.toks else None, "end": max(n.toks) if n.toks else None,
        "empty": n.sub.label() == "-NONE-", "preterminal": is_preterminal(n.sub),
    }[name]


PY_OPS = {"=": lambda x, y: x == y, "!=": lambda x, y: x != y, "<": lambda x, y: x < y,
          "<=": lambda x, y: x <= y, ">": lambda x, y: x > y, ">=": lambda x, y: x >= y,
          "~": lambda x, y: re.search(y, x) is not None,
          "!~": lambda x, y: re.search(y, x) is None}


def ref_compare(x, op, y) -> bool:
    """Two-valued logic: a comparison with a missing value is false."""
    return x is not None and y is not None and PY_OPS[op](x, y)


ATTR_CASES = [
    ("category", "=", "NP"), ("category", "!=", "NP"), ("category", "~", "^V"),
    ("category", "!~", "P"), ("label", "=", "NP-SBJ-1"), ("label", "<", "N"),
    ("functions", "=", "SBJ-TMP"), ("functions", "=", ""), ("functions", "~", "TMP"),
    ("word", "=", "the"), ("word", "!=", "the"), ("word", "~", "^t"), ("word", "!~", "e"),
    ("word", ">", "m"), ("index", "=", 1), ("index", "!=", 1), ("index", ">=", 1),
    ("gap", "=", 3), ("children", "=", 2), ("children", ">", 2), ("tokens", "=", 0),
    ("tokens", ">=", 3), ("leaves", "=", 1), ("leaves", ">", 4), ("depth", "=", 2),
    ("depth", "<", 2), ("position", "=", 3), ("position", ">", 1), ("start", "=", 1),
    ("start", "!=", 1), ("end", ">=", 4), ("end", "<", 2),
]


@pytest.mark.parametrize("attr,op,value", ATTR_CASES)
def test_attribute_comparisons_and_their_negation(corpus, attr, op, value):
    conn, nodes = corpus
    got = search(conn, pattern([var("x")], cmp("x", attr, op, value)))
    want = sorted((n.id,) for n in nodes if ref_compare(ref_attr(n, attr), op, value))
    assert got == want
    # `not` of a comparison with a missing value is true (two-valued logic)
    negated = search(conn, pattern([var("x")], Not(cmp("x", attr, op, value), SP)))
    assert negated == sorted((n.id,) for n in nodes if (n.id,) not in set(want))


def test_missing_values_make_both_equal_and_unequal_false(corpus):
    conn, nodes = corpus
    phrases = {n.id for n in nodes if not is_preterminal(n.sub)}
    equal = {r[0] for r in search(conn, pattern([var("x")], cmp("x", "word", "=", "the")))}
    unequal = {r[0] for r in search(conn, pattern([var("x")], cmp("x", "word", "!=", "the")))}
    assert not (equal | unequal) & phrases
    not_unequal = {r[0] for r in search(
        conn, pattern([var("x")], Not(cmp("x", "word", "!=", "the"), SP)))}
    assert phrases <= not_unequal


@pytest.mark.parametrize("attr", ["category", "word", "index", "depth", "tokens", "start"])
def test_attribute_against_attribute(corpus, attr):
    conn, nodes = corpus
    p = pattern([var("a"), var("b")], rel("sister-of", "a", "b"),
                cmp("a", attr, "=", ("b", attr)))
    got = search(conn, p)
    want = expect(nodes, ["a", "b"], ["a", "b"], lambda e: (
        REFERENCE_RELATIONS["sister-of"](e["a"], e["b"])
        and ref_compare(ref_attr(e["a"], attr), "=", ref_attr(e["b"], attr))))
    assert got == want


@pytest.mark.parametrize("flag", ["empty", "preterminal"])
def test_flags(corpus, flag):
    conn, nodes = corpus
    got = search(conn, pattern([var("x")], Flag(Attr("x", flag, SP), SP)))
    assert got == sorted((n.id,) for n in nodes if ref_attr(n, flag)) and got
    negated = search(conn, pattern([var("x")], Not(Flag(Attr("x", flag, SP), SP), SP)))
    assert negated == sorted((n.id,) for n in nodes if not ref_attr(n, flag))


# ---------------------------------------------------------------- not, or, exists, results

def test_not_exists_child(corpus):
    conn, nodes = corpus
    inner = Exists((var("_1", CategoryIs("PP")),), rel("parent-of", "np", "_1"))
    got = search(conn, pattern([var("np", CategoryIs("VP"))], Not(inner, SP)))
    want = sorted((n.id,) for n in nodes if cat(n) == "VP"
                  and not any(cat(c) == "PP" and is_child(c, n) for c in nodes))
    assert got == want and got


def test_not_exists_ancestor_and_word(corpus):
    conn, nodes = corpus
    inner = Exists((var("_1", CategoryIs("VP")),), rel("dominates", "_1", "x"))
    got = search(conn, pattern([var("x", CategoryIs("NP"))], Not(inner, SP)))
    want = sorted((n.id,) for n in nodes if cat(n) == "NP"
                  and not any(cat(a) == "VP" and below(a, n) for a in nodes))
    assert got == want and got


def test_or_of_branches_gives_no_duplicates(corpus):
    conn, nodes = corpus
    first = Exists((var("_1", CategoryIs("DT")),), rel("parent-of", "np", "_1"))
    second = Exists((var("_2", CategoryRegex("^N")),), rel("parent-of", "np", "_2"))
    third = cmp("np", "tokens", "=", 1)
    got = search(conn, pattern([var("np", CategoryIs("NP"))], Or((first, second, third))))
    want = sorted((n.id,) for n in nodes if cat(n) == "NP" and (
        any(is_child(c, n) and (cat(c) == "DT" or cat(c).startswith("N")) for c in nodes)
        or len(n.toks) == 1))
    assert got == want and len(got) == len(set(got))


def test_exists_with_two_local_nodes_and_a_precedence(corpus):
    conn, nodes = corpus
    inner = Exists((var("_1", CategoryIs("NP")), var("_2", CategoryIs("PP"))),
                   And((rel("parent-of", "s", "_1"), rel("dominates", "s", "_2"),
                        rel("precedes", "_1", "_2"))))
    got = search(conn, pattern([var("s")], inner))
    want = sorted((s.id,) for s in nodes if any(
        cat(a) == "NP" and cat(b) == "PP" and is_child(a, s) and below(s, b) and precedes(a, b)
        for a in nodes for b in nodes))
    assert got == want and got


def test_not_of_a_conjunction_with_a_missing_value(corpus):
    conn, nodes = corpus
    # not { x.word = "the" and x.depth > 1 }: true on every phrase (word missing)
    cond = Not(And((cmp("x", "word", "=", "the"), cmp("x", "depth", ">", 1))), SP)
    got = search(conn, pattern([var("x")], cond))
    want = sorted((n.id,) for n in nodes if not (word(n) == "the" and len(n.pos) > 1))
    assert got == want


def test_anonymous_nodes_do_not_multiply_results(corpus):
    conn, nodes = corpus
    p = pattern([var("vp", CategoryIs("VP")), var("_1")], rel("dominates", "vp", "_1"))
    got = search(conn, p)
    want = sorted((n.id,) for n in nodes if cat(n) == "VP" and any(below(n, m) for m in nodes))
    assert got == want and len(got) == len(set(got))


def test_unrelated_nodes_stay_in_one_tree(corpus):
    conn, nodes = corpus
    p = pattern([var("a", CategoryIs("PRP")), var("b", CategoryIs("NNS"))])
    got = search(conn, p)
    want = expect(nodes, ["a", "b"], ["a", "b"],
                  lambda e: cat(e["a"]) == "PRP" and cat(e["b"]) == "NNS")
    assert got == want and got


def test_limit_and_offset_page_through_corpus_order(corpus):
    conn, _ = corpus
    p = pattern([var("x", CategoryRegex("^N"))])
    everything = search(conn, p)
    assert search(conn, p, limit=3, offset=2) == everything[2:5]
    assert everything == sorted(everything)


def test_result_details(corpus):
    conn, nodes = corpus
    p = pattern([var("np", CategoryIs("NP")), var("w", CategoryIs("-LRB-"))],
                rel("dominates", "np", "w"))
    [result] = list(fetch_results(conn, make_plan(conn, p)))
    outer = next(n for n in nodes if n.id == result.bindings["np"].id)
    assert result.document == "test.mrg" and result.path == "/data/test.mrg"
    assert (result.tree_id, result.ordinal, result.line) == (4, 4, 10)
    bound = result.bindings["np"]
    # the words of the constituent, brackets un-escaped (Penn Treebank escapes)
    assert bound.words == " ".join(ESCAPES.get(w, w) for w in outer.sub.leaves())
    assert (bound.tok_first, bound.tok_last) == (min(outer.toks), max(outer.toks))
    assert result.bindings["w"].words == "("


def test_result_details_of_a_trace_and_a_tagged_label(corpus):
    conn, nodes = corpus
    p = pattern([var("s", CategoryIs("S")), var("e", CategoryIs("-NONE-")),
                 var("subj", CategoryIs("NP", ("SBJ",)))],
                rel("dominates", "s", "e"), rel("parent-of", "s", "subj"))
    [result] = list(fetch_results(conn, make_plan(conn, p)))
    trace, subj = result.bindings["e"], result.bindings["subj"]
    assert (trace.words, trace.tok_first, trace.tok_last) == ("", None, None)
    assert (subj.label, subj.category, subj.functions) == ("NP-SBJ-1", "NP", "SBJ")
    assert subj.words == "it"


# ---------------------------------------------------------------- counting

def test_count_results_and_trees(corpus):
    conn, nodes = corpus
    p = pattern([var("np", CategoryIs("NP")), var("_1", CategoryRegex("^N"))],
                rel("parent-of", "np", "_1"))
    want = expect(nodes, ["np", "_1"], ["np"], lambda e: cat(e["np"]) == "NP"
                  and cat(e["_1"]).startswith("N") and is_child(e["_1"], e["np"]))
    counted = count_results(conn, make_plan(conn, p))
    trees = {n.tree for n in nodes if (n.id,) in set(want)}
    assert (counted.results, counted.trees) == (len(want), len(trees))


def test_count_by_groups(corpus):
    conn, nodes = corpus
    p = pattern([var("p", CategoryIs("NP")), var("c")], rel("parent-of", "p", "c"))
    counted = count_results(conn, make_plan(conn, p), by=[("c", "category"), "p.functions"])
    pairs = expect(nodes, ["p", "c"], ["p", "c"],
                   lambda e: cat(e["p"]) == "NP" and is_child(e["c"], e["p"]))
    by_id = {n.id: n for n in nodes}
    groups: dict[tuple, int] = {}
    for p_id, c_id in pairs:
        key = (cat(by_id[c_id]), decompose(by_id[p_id].sub.label())[1])
        groups[key] = groups.get(key, 0) + 1
    expected = sorted(groups.items(), key=lambda kv: (-kv[1], kv[0]))
    assert [(g.key, g.results) for g in counted.groups] == expected
    assert counted.results == len(pairs) and counted.by == ("c.category", "p.functions")


def test_count_by_a_node_that_is_not_reported(corpus):
    conn, nodes = corpus
    # results are VPs; a VP with children of two categories counts in both groups
    p = pattern([var("vp", CategoryIs("VP")), var("_1")], rel("parent-of", "vp", "_1"))
    counted = count_results(conn, make_plan(conn, p), by=["_1.category"])
    by_key: dict[tuple, set] = {}
    for n in nodes:
        if n.parent is not None and cat(n.parent) == "VP":
            by_key.setdefault((cat(n),), set()).add(n.parent.id)
    assert {g.key: g.results for g in counted.groups} == {k: len(v) for k, v in by_key.items()}
    assert counted.results == len({n.id for n in nodes if cat(n) == "VP"})


def test_count_by_missing_and_bool_values(corpus):
    conn, nodes = corpus
    p = pattern([var("x", CategoryRegex("^N"))])
    counted = count_results(conn, make_plan(conn, p), by=["x.index", "x.preterminal"])
    keys = {}
    for n in nodes:
        if cat(n).startswith("N"):
            key = (ref_attr(n, "index"), ref_attr(n, "preterminal"))
            keys[key] = keys.get(key, 0) + 1
    assert {g.key: g.results for g in counted.groups} == keys
    assert counted.trees == len({n.tree for n in nodes if cat(n).startswith("N")})


def test_count_of_nothing(corpus):
    conn, _ = corpus
    p = pattern([var("x", CategoryIs("NOSUCH"))])
    assert count_results(conn, make_plan(conn, p)).results == 0
    assert count_results(conn, make_plan(conn, p), by=["x.word"]).groups == ()


# ---------------------------------------------------------------- SQL hygiene

def test_user_text_only_travels_as_parameters(corpus):
    conn, _ = corpus
    odd = ["Zq'x", 'W"q', "-- drop", "Rx;Y", "%_x"]
    p = pattern([var("mine", CategoryIs(odd[0], (odd[1],))),
                 var("yours", LabelOneOf((CategoryRegex(odd[2]), CategoryIs(odd[3]))), odd[4])],
                rel("dominates", "mine", "yours", max_depth=77),
                cmp("mine", "word", "~", "qq(z)"), cmp("yours", "label", "=", "Lbl'"))
    plan = make_plan(conn, p)
    for sql, params in (to_sql(plan), count_sql(plan, ["yours.category"])):
        for text in odd + ["qq(z)", "Lbl'", "77", "mine", "yours"]:
            assert text not in sql
            assert "'" not in sql.replace("'-'", "")  # no string literal other than '-'
        assert set(odd) <= set(params) and 77 in params
    assert search(conn, p) == []


def test_bad_regex_is_a_pattern_error(corpus):
    conn, _ = corpus
    with pytest.raises(PatternCheckError):
        make_plan(conn, pattern([var("x", CategoryRegex("(unclosed"))]))
    with pytest.raises(PatternCheckError):
        make_plan(conn, pattern([var("x")], cmp("x", "word", "~", "[z")))


# ---------------------------------------------------------------- time limits

def test_search_timeout_stops_and_leaves_no_handler():
    conn, _ = build_db(TREES * 12)
    heavy = pattern([var("a"), var("b"), var("c"), var("d")],
                    cmp("a", "category", "!=", ("d", "category")))
    started = time.monotonic()
    with pytest.raises(SearchTimeout, match="time limit"):
        count_results(conn, make_plan(conn, heavy), timeout=0.05)
    assert time.monotonic() - started < 2.0
    with pytest.raises(SearchTimeout):
        list(fetch_results(conn, make_plan(conn, heavy), timeout=0.05))
    # the progress handler is gone: the same search now runs to its end
    started = time.monotonic()
    full = count_results(conn, make_plan(conn, heavy))
    assert full.results > 0 and time.monotonic() - started > 0.05


def test_regex_timeout_is_a_clear_error():
    conn, _ = build_db(["( (X (NN " + "a" * 40 + "!)) )"])
    # nested quantifiers backtrack exponentially on a non-match (common practice)
    p = pattern([var("x")], cmp("x", "word", "~", "^(a|aa|aaa)+$"))
    with pytest.raises(TreequeryError, match="regular expression took too long"):
        search(conn, p)


# ---------------------------------------------------------------- planner and explain

def test_planner_drives_from_the_rarest_node(corpus):
    conn, nodes = corpus
    p = pattern([var("np", CategoryIs("NP")), var("w", CategoryIs("WP"))],
                rel("dominates", "np", "w"))
    plan = make_plan(conn, p)
    assert plan.order == ("w", "np")  # 1 WP against many NPs in the test trees
    assert plan.steps[0].matches == sum(1 for n in nodes if cat(n) == "WP")
    assert plan.steps[1].access == "ancestors"
    p2 = pattern([var("vp", CategoryIs("VP")), var("x", CategoryIs("-RRB-"))],
                 rel("parent-of", "vp", "x"))
    assert make_plan(conn, p2).steps[1].access == "parent"


def test_explain_shows_order_sql_parameters_and_sqlite_plan(corpus):
    conn, _ = corpus
    p = pattern([var("vp", CategoryIs("VP")), var("np", CategoryIs("NP"))],
                rel("parent-of", "vp", "np"))
    text = explain_text(conn, make_plan(conn, p))
    assert "join order" in text and "SELECT" in text and "'VP'" in text
    assert "SQLite query plan" in text and ("SEARCH" in text or "SCAN" in text)


def test_registered_regexp_treats_missing_as_false():
    conn = sqlite3.connect(":memory:")
    register_functions(conn)
    assert conn.execute("SELECT tq_regexp('b', 'abc'), tq_regexp('^b', 'abc')").fetchone() == (1, 0)
    assert conn.execute("SELECT IFNULL(NOT tq_regexp('b', NULL), 0)").fetchone() == (0,)


# ---------------------------------------------------------------- parsed patterns

def test_parsed_patterns_give_the_hand_built_results(corpus):
    from treequery.pattern.parse import parse_pattern
    conn, nodes = corpus
    p = parse_pattern("vp:VP parent-of np:NP\nnot np.tokens = 0")
    got = search(conn, p)
    want = expect(nodes, ["vp", "np"], ["vp", "np"], lambda e: cat(e["vp"]) == "VP"
                  and cat(e["np"]) == "NP" and is_child(e["np"], e["vp"]) and e["np"].toks)
    assert got == want and got
    p = parse_pattern('n:NP\n{ n parent-of NN "tea" } or { n parent-of PRP }')
    got = search(conn, p)
    want = sorted((n.id,) for n in nodes if cat(n) == "NP" and any(
        is_child(c, n) and ((cat(c) == "NN" and word(c) == "tea") or cat(c) == "PRP")
        for c in nodes))
    assert got == want and got


# ---------------------------------------------------------------- real treebanks

def open_index(path) -> sqlite3.Connection:
    from treequery.index.schema import connect
    return connect(str(path), readonly=True)


def count_text(conn, text: str, **kw):
    from treequery.pattern.parse import parse_pattern
    return count_results(conn, make_plan(conn, parse_pattern(text)), **kw)


def test_wsj_counts_match_the_published_figures(wsj_db):
    conn = open_index(wsj_db)
    # figures counted on the files: /work/shared/corpora/README.md (WSJ sample section)
    assert count_text(conn, "x:*").results == 183_274
    assert count_text(conn, "x:*; x.preterminal").results == 100_676
    assert count_text(conn, "x:-NONE-").results == 6_592
    assert count_text(conn, "x:*; x.empty").trees > 0
    assert count_text(conn, "r:''; not r child-of *").trees == 3_914


def test_gum_counts_match_the_published_figures(gum_db):
    conn = open_index(gum_db)
    # figures counted on the files: /work/shared/corpora/README.md (GUM section)
    assert count_text(conn, "x:*").results == 474_698
    assert count_text(conn, "x:*; x.preterminal").results == 251_725
    assert count_text(conn, "r:ROOT").trees == 14_597


def wsj_nltk_trees(wsj_dir) -> list[Tree]:
    from reference.nodes import read_nltk_trees  # nltk.Tree.fromstring per tree
    return [t for path in sorted(wsj_dir.glob("*.mrg")) for t in read_nltk_trees(path)]


def nltk_category(label: str) -> str:
    """Category: the label up to its first '-' or '=' (Bies et al. 1995; from memory)."""
    if label.startswith("-"):
        return label
    return re.split("[-=]", label, maxsplit=1)[0]


def test_wsj_relations_against_nltk(wsj_db, wsj_dir):
    conn = open_index(wsj_db)
    vp_np = pp_in_np = 0
    for tree in wsj_nltk_trees(wsj_dir):  # NLTK's own reader as the reference
        for pos in tree.treepositions():
            node = tree[pos]
            if not isinstance(node, Tree) or is_preterminal(node):
                continue
            kids = [k for k in node if isinstance(k, Tree)]
            if nltk_category(node.label()) == "VP":
                vp_np += sum(nltk_category(k.label()) == "NP" for k in kids)
            if nltk_category(node.label()) == "NP":
                pp_in_np += any(nltk_category(d.label()) == "PP"
                                for d in node.subtrees() if d is not node)
    assert count_text(conn, "vp:VP parent-of np:NP").results == vp_np
    assert count_text(conn, "np:NP dominates PP").results == pp_in_np


def test_wsj_result_words_follow_the_tree_text(wsj_db):
    from treequery.pattern.parse import parse_pattern
    conn = open_index(wsj_db)
    plan = make_plan(conn, parse_pattern("s:S-TPC parent-of n:NP-SBJ"))
    results = list(fetch_results(conn, plan, limit=40))
    assert len(results) == 40
    for result in results:
        text = conn.execute("SELECT text FROM tree WHERE id = ?", (result.tree_id,)).fetchone()[0]
        for bound in result.bindings.values():
            words = text.split(" ")[bound.tok_first - 1:bound.tok_last]
            assert bound.words == " ".join(words)
        assert result.document.endswith(".mrg") and result.line >= 1


# ---------------------------------------------------------------- every join order

ORDER_PATTERNS = [
    # (variables, conditions, expected holds(env))
    ([var("s", CategoryIs("S")), var("n", CategoryIs("NP")), var("v", CategoryRegex("^VB"))],
     [rel("dominates", "s", "n"), rel("dominates", "s", "v"), rel("precedes", "n", "v")],
     lambda e: cat(e["s"]) == "S" and cat(e["n"]) == "NP" and cat(e["v"]).startswith("VB")
     and below(e["s"], e["n"]) and below(e["s"], e["v"]) and precedes(e["n"], e["v"])),
    ([var("p"), var("a", LabelNot(CategoryIs("DT"))), var("b", CategoryRegex("N"))],
     [rel("parent-of", "p", "a"), rel("immediate-left-sister-of", "a", "b")],
     lambda e: is_child(e["a"], e["p"]) and cat(e["a"]) != "DT" and "N" in cat(e["b"])
     and REFERENCE_RELATIONS["immediate-left-sister-of"](e["a"], e["b"])),
    ([var("x", CategoryRegex("^(VP|SQ)$")), var("y"), var("z", CategoryIs("-NONE-"))],
     [rel("last-child-of", "y", "x"), rel("dominates", "y", "z")],
     lambda e: cat(e["x"]) in ("VP", "SQ") and cat(e["z"]) == "-NONE-"
     and REFERENCE_RELATIONS["last-child-of"](e["y"], e["x"]) and below(e["y"], e["z"])),
]


@pytest.mark.parametrize("number", range(len(ORDER_PATTERNS)))
def test_every_join_order_gives_the_same_results(corpus, number):
    conn, nodes = corpus
    variables, conditions, holds = ORDER_PATTERNS[number]
    p = pattern(variables, *conditions)
    names = [v.name for v in variables]
    want = expect(nodes, names, names, holds)
    assert want
    for order in itertools.permutations(names):
        plan = make_plan(conn, p, order=order)
        assert plan.order == order
        got = [tuple(r.bindings[n].id for n in names) for r in fetch_results(conn, plan)]
        assert got == want, order


def test_long_chains_are_planned_greedily(corpus):
    conn, nodes = corpus
    names = [f"v{i}" for i in range(7)]  # more nodes than are ordered exhaustively
    p = pattern([var(n) for n in names],
                *[rel("parent-of", a, b) for a, b in zip(names, names[1:], strict=False)])
    by_pos = {(n.tree, n.pos): n for n in nodes}
    want = sorted(tuple(by_pos[(n.tree, n.pos[:len(n.pos) - 6 + i])].id for i in range(7))
                  for n in nodes if len(n.pos) >= 6)
    plan = make_plan(conn, p)
    assert sorted(plan.order) == sorted(names)
    assert search(conn, p) == want and want
