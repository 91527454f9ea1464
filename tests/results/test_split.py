"""A search run in pieces of whole trees gives exactly what one statement gives.

Windows (streaming in corpus order) and chunks (counting on two connections) only
start on large indexes; here the thresholds are lowered so that the real WSJ sample
(3,914 trees) is split into many small windows and chunks, and every pattern of
the differential suite (tests/reference/suite.py) is run both ways. The reference is
the same engine run as one statement, which the differential tests check against the
brute-force matcher.
"""
from __future__ import annotations

import pytest
from reference.suite import SUITE

from treequery.api import Treebank
from treequery.results import split

pytestmark = pytest.mark.corpora

GROUPED = (("x:NP", ("x.functions",)), ("v:/^VB/", ("v.word",)),
           ("e:-NONE-", ("e.kind",)), ("p:PP parent-of o:NP", ("o.headword", "p.category")))


@pytest.fixture(scope="module")
def bank(wsj_db):
    with Treebank(wsj_db, readonly=True) as treebank:
        yield treebank


def _ids(results) -> list[tuple]:
    return [(r.tree_id, tuple(node.id for node in r.bindings.values())) for r in results]


@pytest.fixture
def pieces(monkeypatch):
    """Windows of 7 trees growing threefold; chunks of 301 trees from 2 trees on."""
    monkeypatch.setattr(split, "WINDOW_MIN_TREES", 2)
    monkeypatch.setattr(split, "WINDOW_FIRST_TREES", 7)
    monkeypatch.setattr(split, "WINDOW_GROWTH", 3)
    monkeypatch.setattr(split, "SPLIT_MIN_TREES", 2)
    monkeypatch.setattr(split, "CHUNK_TREES", 301)


def _whole(bank: Treebank, call):
    """`call()` with splitting switched off."""
    saved = split.WINDOW_MIN_TREES, split.SPLIT_MIN_TREES
    split.WINDOW_MIN_TREES = split.SPLIT_MIN_TREES = 10 ** 12
    try:
        return call()
    finally:
        split.WINDOW_MIN_TREES, split.SPLIT_MIN_TREES = saved


def test_the_pieces_cover_every_tree_once(bank, pieces):
    ranges = split.windows(bank.conn)
    first, last = bank.conn.execute("SELECT min(first_node), max(last_node) FROM tree").fetchone()
    assert ranges[0][0] == first and ranges[-1][1] == last
    assert all(a[1] + 1 == b[0] for a, b in zip(ranges, ranges[1:], strict=False))
    starts = {row[0] for row in bank.conn.execute("SELECT first_node FROM tree")}
    assert all(low in starts for low, _ in ranges)  # every piece starts at a tree's root
    assert len(ranges) > 5
    parts = split.chunks(bank.conn)
    assert len(parts) == 14  # 3,914 trees in chunks of 301 (the sample's count, README)
    assert all(a[1] + 1 == b[0] for a, b in zip(parts, parts[1:], strict=False))
    assert (parts[0][0], parts[-1][1]) == (first, last)


@pytest.mark.parametrize("case", SUITE, ids=[case.name for case in SUITE])
def test_windows_and_chunks_agree_with_one_statement(bank, pieces, case):
    whole = _whole(bank, lambda: _ids(bank.find(case.text, count_empty=case.count_empty)))
    assert _ids(bank.find(case.text, count_empty=case.count_empty)) == whole
    # a page from the middle: offset and limit across window boundaries
    page = _ids(bank.find(case.text, count_empty=case.count_empty, offset=5, limit=11))
    assert page == whole[5:16]
    counted = bank.count(case.text, count_empty=case.count_empty)
    assert (counted.results, counted.trees) == (len(whole), len({t for t, _ in whole}))


@pytest.mark.parametrize(("text", "by"), GROUPED)
def test_grouped_counts_in_chunks_equal_one_statement(bank, pieces, text, by):
    whole = _whole(bank, lambda: bank.count(text, by=by))
    assert bank.partner_process() is not None
    assert bank.count(text, by=by) == whole


def test_a_time_limit_covers_all_chunks_together(bank, pieces):
    from treequery.errors import SearchTimeout

    with pytest.raises(SearchTimeout, match="time limit of 0.05 s"):
        bank.count("a:* dominates b:*; b precedes c:*", timeout=0.05)
    # both connections are usable afterwards
    assert bank.count("x:NP", by=("x.functions",)) == _whole(
        bank, lambda: bank.count("x:NP", by=("x.functions",)))


def test_a_count_while_a_search_is_still_being_read(bank, pieces):
    """An open result stream on the connection must not stop a count (or another find)."""
    stream = bank.find("VP parent-of PP")
    first = next(stream)
    assert bank.count("VP parent-of PP").results > 1
    assert next(bank.find("x:NN; x.word ~ /s$/")).bindings
    assert next(stream).tree_id >= first.tree_id
