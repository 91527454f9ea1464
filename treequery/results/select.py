"""Choosing and ordering results: reproducible uniform samples, sorting, pages."""
from __future__ import annotations

import itertools
import random
from collections.abc import Callable, Iterable, Iterator
from dataclasses import dataclass

from treequery.errors import TreequeryError
from treequery.pattern.ast import ATTRIBUTES
from treequery.results.display import shown_name
from treequery.results.model import Result


def sample(results: Iterable[Result], size: int, seed: int | None) -> list[Result]:
    """A uniform random sample of `size` results, in corpus order.

    Reservoir sampling (Vitter's Algorithm R, 1985): one pass over the stream,
    `size` results in memory, every subset of that size equally likely. The same
    seed over the same results gives the same sample.
    """
    if size < 0:
        raise TreequeryError("--sample must be 0 or more")
    rng = random.Random(seed)
    reservoir: list[tuple[int, Result]] = []
    for seen, result in enumerate(results):
        if seen < size:
            reservoir.append((seen, result))
        else:
            slot = rng.randint(0, seen)
            if slot < size:
                reservoir[slot] = (seen, result)
    return [result for _, result in sorted(reservoir, key=lambda pair: pair[0])]


@dataclass(frozen=True, slots=True)
class SortKey:
    """`o.tokens` (ascending) or `-o.tokens` (descending)."""

    var: str
    attr: str
    descending: bool = False


def parse_sort_key(text: str, result_vars: tuple[str, ...]) -> SortKey:
    """`VAR.ATTR`, `-VAR.ATTR`, or a bare `ATTR` when the pattern has one result variable."""
    descending = text.startswith("-")
    body = text[1:] if descending else text
    var, _, attr = body.rpartition(".")
    if not var:
        if len(result_vars) != 1:
            named = ", ".join(shown_name(v) for v in result_vars)
            raise TreequeryError(f"--sort {text}: say which variable ({named}), e.g. "
                                 f"{shown_name(result_vars[0])}.{body}")
        var = result_vars[0]
    found = next((v for v in result_vars if var in (v, shown_name(v))), None)
    if found is None:
        named = ", ".join(shown_name(v) for v in result_vars)
        raise TreequeryError(f"--sort {text}: {var!r} is not a result variable ({named})")
    if attr not in ATTRIBUTES:
        raise TreequeryError(f"--sort {text}: unknown attribute {attr!r}; known: "
                             f"{', '.join(ATTRIBUTES)}")
    return SortKey(found, attr, descending)


def sort_results(results: Iterable[Result], key: SortKey,
                 attributes: Callable[[int], dict]) -> list[Result]:
    """Results ordered by one attribute of one variable; ties keep corpus order.

    Missing values (a node with no word, no index...) come last either way.
    """
    keyed = [(attributes(r.bindings[key.var].id)[key.attr], r) for r in results]
    present = [pair for pair in keyed if pair[0] is not None]
    missing = [r for value, r in keyed if value is None]
    present.sort(key=lambda pair: pair[0], reverse=key.descending)  # stable both ways
    return [r for _, r in present] + missing


def page(results: Iterable[Result], limit: int | None, offset: int) -> Iterator[Result]:
    """Skip `offset` results, then give at most `limit` (all when None)."""
    stop = None if limit is None else offset + limit
    return itertools.islice(results, offset, stop)
