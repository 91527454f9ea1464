"""Paging, sampling and sorting results."""
from __future__ import annotations

import pytest

from treequery import Treebank
from treequery.errors import TreequeryError

P = "vp:VP parent-of o:NP"


def keys(results) -> list[tuple]:
    return [(r.tree_id, *(n.id for n in r.bindings.values())) for r in results]


def test_same_seed_same_sample_and_a_subset(demo_db):
    with Treebank(demo_db, readonly=True) as bank:
        everything = keys(bank.find(P))
        first = keys(bank.find(P, sample=10, seed=42))
        again = keys(bank.find(P, sample=10, seed=42))
        other = keys(bank.find(P, sample=10, seed=43))
    assert first == again
    assert len(first) == len(set(first)) == 10
    assert set(first) <= set(everything)
    assert first == sorted(first, key=everything.index)  # shown in corpus order
    assert first != other  # with 176 results two seeds agreeing fully is ~1e-14 unlikely


def test_sample_is_roughly_uniform(demo_db):
    """Each result should be drawn with probability k/n (reservoir sampling, Vitter 1985)."""
    with Treebank(demo_db, readonly=True) as bank:
        results = list(bank.find("n:NN"))
    from treequery.results.select import sample

    n, k, runs = len(results), 5, 400
    hits = {r.bindings["n"].id: 0 for r in results}
    for seed in range(runs):
        for r in sample(results, k, seed):
            hits[r.bindings["n"].id] += 1
    expected = runs * k / n
    # Loose bound (the first and last results get no favour): mean within 25 %.
    first_half = sum(list(hits.values())[: n // 2]) / (n // 2)
    second_half = sum(list(hits.values())[n // 2:]) / (n - n // 2)
    assert abs(first_half - expected) < 0.25 * expected
    assert abs(second_half - expected) < 0.25 * expected


def test_sample_larger_than_results_gives_everything(demo_db):
    with Treebank(demo_db, readonly=True) as bank:
        assert keys(bank.find(P, sample=10_000, seed=1)) == keys(bank.find(P))


def test_limit_and_offset_page_through_results(demo_db):
    with Treebank(demo_db, readonly=True) as bank:
        everything = keys(bank.find(P))
        assert keys(bank.find(P, limit=5, offset=3)) == everything[3:8]
        assert keys(bank.find(P, sort="o.start", limit=5, offset=3)) == \
            keys(list(bank.find(P, sort="o.start")))[3:8]


def test_sort_by_attribute_both_ways(demo_db):
    with Treebank(demo_db, readonly=True) as bank:
        up = list(bank.find(P, sort="o.tokens"))
        down = list(bank.find(P, sort="-o.tokens"))
        # Token count from the words themselves (one token per space-separated word).
        sizes = [len(r.bindings["o"].words.split()) for r in up]
        assert sizes == sorted(sizes)
        assert [len(r.bindings["o"].words.split()) for r in down] == sorted(sizes, reverse=True)
        assert len(up) == len(list(bank.find(P)))


def test_sort_missing_values_come_last(demo_db):
    with Treebank(demo_db, readonly=True) as bank:
        ordered = list(bank.find(P, sort="o.start"))
    starts = [r.bindings["o"].tok_first for r in ordered]
    present = [s for s in starts if s is not None]
    assert starts == present + [None] * (len(starts) - len(present))
    assert present == sorted(present)


@pytest.mark.parametrize("bad", ["x.tokens", "o.size", "tokens"])
def test_bad_sort_keys_are_reported(demo_db, bad):
    with Treebank(demo_db, readonly=True) as bank, pytest.raises(TreequeryError):
        list(bank.find(P, sort=bad))
