"""Frequency measures: normalised rates, log-likelihood G², its p-value, log ratio, DP dispersion.

Pure functions over counts and sizes (no SQL, standard library only), so the
breakdown and comparison code can call them cell by cell and the tests can check
them against published worked examples.
"""
from __future__ import annotations

import math
from collections.abc import Sequence


def per_thousand(count: int, trees: int) -> float | None:
    """`count` per 1,000 trees; None when there are no trees to divide by."""
    return _rate(count, trees, 1_000)


def per_million(count: int, tokens: int) -> float | None:
    """`count` per million tokens; None when there are no tokens to divide by."""
    return _rate(count, tokens, 1_000_000)


def _rate(count: int, denominator: int, scale: int) -> float | None:
    _check_count("count", count)
    if denominator < 0:
        raise ValueError(f"a denominator cannot be negative, got {denominator}")
    if denominator == 0:
        return None
    return count * scale / denominator


def log_likelihood(freq_a: int, freq_b: int, size_a: float, size_b: float) -> float:
    """G² for one item in two corpora, the two-cell form of Rayson & Garside (2000).

    E_a = size_a * (freq_a + freq_b) / (size_a + size_b), E_b likewise, and
    G² = 2 * (freq_a * ln(freq_a / E_a) + freq_b * ln(freq_b / E_b)); a cell with
    an observed 0 adds nothing (the limit of x ln x at 0). G² is 0 when the
    relative frequencies are equal and does not say which side is larger: see
    `log_ratio` for the direction and size of the difference.
    """
    _check_count("freq_a", freq_a)
    _check_count("freq_b", freq_b)
    _check_size("size_a", size_a)
    _check_size("size_b", size_b)
    total = freq_a + freq_b
    if total == 0:
        return 0.0
    expected_a = size_a * total / (size_a + size_b)
    expected_b = size_b * total / (size_a + size_b)
    g2 = 2 * (_observed_log_term(freq_a, expected_a) + _observed_log_term(freq_b, expected_b))
    return max(g2, 0.0)  # rounding can leave -1e-15 where the true value is 0


def _observed_log_term(observed: int, expected: float) -> float:
    return 0.0 if observed == 0 else observed * math.log(observed / expected)


def g2_p_value(g2: float) -> float:
    """P(X >= g2) for X chi-square distributed with one degree of freedom.

    With one degree of freedom X = Z² for a standard normal Z, so the survival
    function is P(|Z| >= sqrt(g2)) = erfc(sqrt(g2 / 2)).
    """
    if math.isnan(g2) or g2 < 0:
        raise ValueError(f"G² must be a number >= 0, got {g2}")
    return math.erfc(math.sqrt(g2 / 2))


def log_ratio(freq_a: int, freq_b: int, size_a: float, size_b: float,
              zero_adjust: float = 0.5) -> float:
    """Hardie's (2014) Log Ratio: log2 of (freq_a / size_a) / (freq_b / size_b).

    0 means equal relative frequencies, +1 twice as frequent in A, -1 twice as
    frequent in B. A zero frequency would make the ratio 0 or infinite, so it is
    replaced by `zero_adjust` before dividing. Hardie (2014) raises the zero
    problem; 0.5, half the smallest possible count, is the usual continuity
    adjustment (common practice; that Hardie's own implementation uses 0.5 is
    from memory, not checked). When both frequencies are 0 there is no
    difference to measure and the result is 0.
    """
    _check_count("freq_a", freq_a)
    _check_count("freq_b", freq_b)
    _check_size("size_a", size_a)
    _check_size("size_b", size_b)
    if not zero_adjust > 0:
        raise ValueError(f"zero_adjust must be > 0, got {zero_adjust}")
    if freq_a == 0 and freq_b == 0:
        return 0.0
    adjusted_a = freq_a or zero_adjust
    adjusted_b = freq_b or zero_adjust
    return math.log2((adjusted_a / size_a) / (adjusted_b / size_b))


def dispersion_dp(freqs: Sequence[int], sizes: Sequence[float]) -> float | None:
    """Gries's (2008: 415) DP, "deviation of proportions", over the parts of a corpus.

    DP = 0.5 * sum(|freq_i / sum(freqs) - size_i / sum(sizes)|): 0 when the item
    is spread exactly like the parts' sizes, approaching 1 when it sits in one
    small part (all in part i gives 1 - that part's share). DP is undefined
    for an item that never occurs: the result is then None.
    """
    item_shares, part_shares = _shares(freqs, sizes)
    if item_shares is None:
        return None
    return 0.5 * sum(abs(item - part) for item, part in zip(item_shares, part_shares, strict=True))


def dispersion_dp_norm(freqs: Sequence[int], sizes: Sequence[float]) -> float | None:
    """DP scaled to [0, 1]: DP / (1 - the smallest part's share of the corpus).

    Lijffijt & Gries (2012), "Correction to Stefan Th. Gries' 'Dispersions and
    adjusted frequencies in corpora'", International Journal of Corpus
    Linguistics 17(1): 147-149. None when DP is undefined (the item never
    occurs) or when there is a single part (the maximum is then 0).
    """
    dp = dispersion_dp(freqs, sizes)
    if dp is None:
        return None
    total_size = sum(sizes)
    maximum = 1 - min(sizes) / total_size
    if maximum <= 0:
        return None
    return dp / maximum


def _shares(freqs: Sequence[int], sizes: Sequence[float]
            ) -> tuple[list[float] | None, list[float]]:
    """Each part's share of the item's occurrences (None if it never occurs) and of the corpus."""
    if len(freqs) != len(sizes):
        raise ValueError(
            f"DP needs one size per part: {len(freqs)} frequencies, {len(sizes)} sizes")
    if not sizes:
        raise ValueError("DP needs at least one corpus part")
    for index, freq in enumerate(freqs):
        _check_count(f"frequency of part {index + 1}", freq)
    for index, size in enumerate(sizes):
        if not (math.isfinite(size) and size >= 0):
            raise ValueError(f"size of part {index + 1} must be a number >= 0, got {size}")
    total_size = sum(sizes)
    if total_size <= 0:
        raise ValueError("DP needs corpus parts with a total size above 0")
    part_shares = [size / total_size for size in sizes]
    total_freq = sum(freqs)
    if total_freq == 0:
        return None, part_shares
    return [freq / total_freq for freq in freqs], part_shares


def _check_count(name: str, value: int) -> None:
    if isinstance(value, bool) or not isinstance(value, int) or value < 0:
        raise ValueError(f"{name} must be a whole number >= 0, got {value!r}")


def _check_size(name: str, value: float) -> None:
    if not (isinstance(value, int | float) and math.isfinite(value) and value > 0):
        raise ValueError(f"{name} must be a number > 0, got {value!r}")
