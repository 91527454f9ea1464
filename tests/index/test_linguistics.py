"""Index-time syntax tables: links, c-command scopes, and keeping them in step on re-index.

Expected values are read off small trees by hand from the definitions (Bies et al.
1995 for indices; Reinhart 1976 for c-command), not from the engine's own output.
"""
from __future__ import annotations

from pathlib import Path

from treequery.api import Treebank

# A relative clause with a subject trace, and a gapped coordination
# (Bies et al. 1995: WHNP-n ... *T*-n; NP-SBJ-n ... NP-SBJ=n).
RELATIVE = ("( (NP (NP (DT the) (NN ferry)) (SBAR (WHNP-1 (WDT that)) "
            "(S (NP-SBJ (-NONE- *T*-1)) (VP (VBD sank))))) )")
GAPPED = ("( (S (S (NP-SBJ-1 (NNS Cars)) (VP (VBP pay) (NP-2 (CD ten)))) (CC and) "
          "(S (NP-SBJ=1 (NNS bikes)) (NP=2 (CD two)))) )")


def _bank(tmp_path: Path, texts: list[str]) -> tuple[Treebank, Path]:
    tree_file = tmp_path / "t.mrg"
    tree_file.write_text("\n".join(texts) + "\n", encoding="utf-8")
    bank = Treebank(tmp_path / "t.db")
    bank.index([str(tree_file)])
    return bank, tree_file


def _labels(bank: Treebank, sql: str) -> list[tuple[str, ...]]:
    return sorted(bank.conn.execute(sql).fetchall())


def test_links_by_kind(tmp_path):
    bank, _ = _bank(tmp_path, [RELATIVE, GAPPED])
    try:
        links = _labels(bank, "SELECT la.text, lt.text, link.kind FROM link "
                              "JOIN node a ON a.id = link.antecedent "
                              "JOIN node t ON t.id = link.target "
                              "JOIN label la ON la.code = a.label "
                              "JOIN label lt ON lt.code = t.label")
        assert links == [("NP-2", "NP=2", "gap"), ("NP-SBJ-1", "NP-SBJ=1", "gap"),
                         ("WHNP-1", "-NONE-", "coindex")]
    finally:
        bank.close()


def test_c_command_by_hand(tmp_path):
    bank, _ = _bank(tmp_path, [RELATIVE])
    try:
        # The top NP branches (NP -> NP SBAR): the inner NP c-commands SBAR and all in it.
        assert bank.count("a:NP; a.depth = 2 ; a c-commands w:WHNP").results == 1
        # WHNP-1's first branching ancestor is SBAR: it c-commands S and the four nodes
        # below it (NP-SBJ, -NONE-, VP, VBD)
        assert bank.count("w:WHNP c-commands x:*").results == 5
        # ...plus nothing outside SBAR: the ferry NP is not c-commanded by WHNP
        assert bank.count("w:WHNP c-commands n:NN").results == 0
        # the outer bracket has a single child: the top NP has no branching ancestor
        assert bank.count("n:NP; n.depth = 1; n c-commands x:*").results == 0
    finally:
        bank.close()


def test_reindexing_a_changed_file_keeps_the_tables_in_step(tmp_path):
    bank, tree_file = _bank(tmp_path, [RELATIVE, GAPPED])
    try:
        tree_file.write_text(GAPPED + "\n", encoding="utf-8")  # the relative clause is gone
        bank.index([str(tree_file)])
        nodes = bank.conn.execute("SELECT count(*) FROM node").fetchone()[0]
        headed = bank.conn.execute("SELECT count(*) FROM node WHERE head IS NOT NULL "
                                   "AND id + head BETWEEN id AND last").fetchone()[0]
        orphans = bank.conn.execute("SELECT count(*) FROM link WHERE antecedent NOT IN "
                                    "(SELECT id FROM node)").fetchone()[0]
        assert (headed, orphans) == (nodes, 0)
        kinds = [kind for (kind,) in bank.conn.execute("SELECT kind FROM link")]
        assert sorted(kinds) == ["gap", "gap"]
        assert bank.count("w:WHNP antecedent-of t:*").results == 0
        assert bank.count("a:* correspondent-of b:*").results == 2
    finally:
        bank.close()
