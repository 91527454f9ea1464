"""Head rules: textbook cases, the rule-file format, and rules stored in the index.

The expected heads are textbook facts, each with its source beside it; the engine
(index-time heads, searched with `headword` / `head-of`) and the reference head
finder of tests/reference/heads.py must both give them.
"""
from __future__ import annotations

from pathlib import Path

import pytest
from click.testing import CliRunner
from nltk import Tree
from reference.nodes import build_ref_tree

from treequery.api import Treebank
from treequery.cli import main
from treequery.index.heads import (
    DEFAULT_RULES_FILE,
    HeadRulesError,
    load_head_rules,
    parse_head_rules,
)

# (bracketed phrase, lexical head of the whole phrase, source)
TEXTBOOK = [
    # Collins 1999, Appendix A: a VP's head is found from the left, verbs first.
    ("(VP (VBD moored) (PP-LOC (IN at) (NP (DT the) (NN quay))))", "moored",
     "Collins 1999, App. A: the head of a verb phrase is its verb"),
    # Collins 1999, App. A: PP -> IN first; "the head of a PP is its preposition".
    ("(PP (IN with) (NP (DT the) (NN mail)))", "with",
     "Collins 1999, App. A: the head of a prepositional phrase is its preposition"),
    # Collins 1999, App. A, the NP rule: the rightmost noun.
    ("(NP (DT the) (JJ old) (NN harbour) (NN crane))", "crane",
     "Collins 1999, App. A: the head of 'the old harbour crane' is 'crane'"),
    # Collins 1999, App. A: S -> VP before NP, so the clause is headed by its verb.
    ("(S (NP-SBJ (DT The) (NN ferry)) (VP (VBD left) (NP (NNP Kvarnsund))))", "left",
     "Collins 1999, App. A: a clause is headed by its verb phrase"),
    # Collins 1999, App. A: VP -> TO first: infinitival 'to' heads its VP.
    ("(VP (TO to) (VP (VB leave) (ADVP (RB early))))", "to",
     "Collins 1999, App. A: TO heads an infinitival VP"),
    # Collins 1999, App. A, the NP rule: a final POS heads a possessor NP.
    ("(NP (NNP Lisk) (POS 's))", "'s",
     "Collins 1999, App. A: a possessive NP is headed by its POS"),
    # Collins 1999, App. A: SBAR -> IN before S: the complementizer heads.
    ("(SBAR (IN that) (S (NP-SBJ (PRP it)) (VP (VBD sank))))", "that",
     "Collins 1999, App. A: the complementizer heads SBAR"),
    # Collins 1999, App. A, the NP rule: an NP whose first child is an NP.
    ("(NP (NP (DT the) (NN crate)) (PP (IN of) (NP (NNS lemons))))", "crate",
     "Collins 1999, App. A: NP -> NP PP is headed by the first NP"),
    # Collins's parser removes empty elements (Collins 1999, ch. 7): a null subject
    # takes no part, the VP heads the clause.
    ("(S (NP-SBJ (-NONE- *)) (VP (VB Keep) (ADVP (RB clear))))", "Keep",
     "Collins 1999: empty elements are not heads; the VP heads the clause"),
    # Coordination (Collins 1999, as we remember its treatment: the first conjunct).
    ("(NP (NN salt) (CC and) (NN pepper))", "salt",
     "Collins 1999 (from memory): a coordinated phrase is headed by its first conjunct"),
]


def _index(tmp_path: Path, texts: list[str], rules: Path | None = None,
           name: str = "t") -> Treebank:
    tree_file = tmp_path / f"{name}.mrg"
    tree_file.write_text("\n".join(texts) + "\n", encoding="utf-8")
    bank = Treebank(tmp_path / f"{name}.db")
    bank.index([str(tree_file)], head_rules=rules)
    return bank


def _headword_of_roots(bank: Treebank) -> dict[int, str]:
    """tree id -> head word of its root, through the engine's `headword` attribute."""
    found = {}
    for word in {w for _, w, _ in TEXTBOOK}:
        for result in bank.find(f'r:*; r.depth = 0; r.headword = "{word}"'):
            found[result.tree_id] = word
    return found


def test_textbook_heads_in_the_engine(tmp_path):
    bank = _index(tmp_path, [text for text, _, _ in TEXTBOOK])
    try:
        got = _headword_of_roots(bank)
        tree_ids = sorted(r[0] for r in bank.conn.execute("SELECT id FROM tree"))
        for tree_id, (text, head, source) in zip(tree_ids, TEXTBOOK, strict=True):
            assert got.get(tree_id) == head, f"{text}: {source}"
    finally:
        bank.close()


@pytest.mark.parametrize("text, head, source", TEXTBOOK, ids=[s for _, _, s in TEXTBOOK])
def test_textbook_heads_in_the_reference(text, head, source):
    tree = build_ref_tree(Tree.fromstring(text))
    assert tree.nodes[0].headword == head, source


def test_head_child_and_lexical_head_relations(tmp_path):
    # "(VP (VBD moored) (PP-LOC ...))": VBD is the head child and the lexical head.
    bank = _index(tmp_path, [TEXTBOOK[0][0], TEXTBOOK[3][0]])
    try:
        assert bank.count("v:VBD head-of vp:VP").results == 2
        assert bank.count("p:PP-LOC head-of vp:VP").results == 0
        # S's head child is its VP; its lexical head is the VBD two levels down
        assert bank.count("vp:VP head-of s:S").results == 1
        assert bank.count("v:VBD lexical-head-of s:S").results == 1
        assert bank.count("v:VBD head-of s:S").results == 0
        assert bank.count('s:S; s.headtag = "VBD"; s.headword = "left"').results == 1
    finally:
        bank.close()


# ---------------------------------------------------------------- the rule file

def test_default_rules_parse_and_cover_the_penn_phrases():
    rules = load_head_rules()
    # Phrase categories of Treebank II (Bies et al. 1995, section 1; from memory)
    for category in ("ADJP", "ADVP", "CONJP", "FRAG", "INTJ", "LST", "NAC", "NP", "NX", "PP",
                     "PRN", "PRT", "QP", "RRC", "S", "SBAR", "SBARQ", "SINV", "SQ", "UCP",
                     "VP", "WHADJP", "WHADVP", "WHNP", "WHPP", "X"):
        assert category in rules.rules, category
    assert rules.coordination == frozenset({"CC", "CONJP"})


@pytest.mark.parametrize("text, line", [
    ("VP sideways VB", 1),
    ("# fine\nNP\n", 2),
    ("PP left IN\nNP last-if\n", 2),
])
def test_bad_rule_files_name_their_line(text, line):
    with pytest.raises(HeadRulesError) as caught:
        parse_head_rules(text, "rules.txt")
    assert caught.value.line == line
    assert f"rules.txt:{line}:" in str(caught.value)


RIGHTMOST = "# every phrase is headed by its last child\n* right\n"


def test_user_rules_are_used_stored_and_kept(tmp_path):
    rules = tmp_path / "last.rules"
    rules.write_text(RIGHTMOST, encoding="utf-8")
    texts = [TEXTBOOK[1][0]]  # (PP (IN with) (NP (DT the) (NN mail)))
    bank = _index(tmp_path, texts, rules)
    try:
        assert bank.count('p:PP; p.headword = "mail"').results == 1
        stored = bank.conn.execute("SELECT value FROM meta WHERE key = 'head_rules'").fetchone()
        assert stored == (RIGHTMOST,)
        # more files without --head-rules: the stored rules go on being used
        more = tmp_path / "more.mrg"
        more.write_text(TEXTBOOK[2][0] + "\n", encoding="utf-8")
        bank.index([str(more)])
        assert bank.count('n:NP; n.depth = 0; n.headword = "crane"').results == 1
        assert bank.count('p:PP; p.headword = "mail"').results == 1
        # back to the default rules: every tree is annotated again
        bank.index([str(more)], head_rules=DEFAULT_RULES_FILE)
        assert bank.count('p:PP; p.headword = "with"').results == 1
    finally:
        bank.close()


def test_cli_index_takes_head_rules(tmp_path):
    rules = tmp_path / "last.rules"
    rules.write_text(RIGHTMOST, encoding="utf-8")
    trees = tmp_path / "t.mrg"
    trees.write_text(TEXTBOOK[1][0] + "\n", encoding="utf-8")
    db = tmp_path / "t.db"
    runner = CliRunner()
    done = runner.invoke(main, ["index", "--db", str(db), "--quiet", "--head-rules", str(rules),
                                str(trees)])
    assert done.exit_code == 0, done.output
    counted = runner.invoke(main, ["count", "--db", str(db), "p:PP", "--by", "p.headword",
                                   "--format", "csv"])
    assert counted.exit_code == 0, counted.output
    assert "mail" in counted.output and "with" not in counted.output
    bad = tmp_path / "bad.rules"
    bad.write_text("PP upwards IN\n", encoding="utf-8")
    failed = runner.invoke(main, ["index", "--db", str(db), "--quiet", "--head-rules", str(bad),
                                  str(trees)])
    assert failed.exit_code != 0
    assert "bad.rules:1:" in failed.output
