"""Frequency measures against published worked examples and SciPy as an independent reference."""
from __future__ import annotations

import math

import pytest
from scipy.stats import chi2, power_divergence

from treequery.frequency.measures import (
    dispersion_dp,
    dispersion_dp_norm,
    g2_p_value,
    log_likelihood,
    log_ratio,
    per_million,
    per_thousand,
)

# --- normalised frequencies ------------------------------------------------------------


def test_rates_per_thousand_trees_and_per_million_tokens():
    # The definitions (common practice): count / denominator * 1,000 or * 1,000,000.
    assert per_thousand(5, 2_000) == pytest.approx(2.5)
    assert per_million(3, 150_000) == pytest.approx(20.0)
    assert per_thousand(0, 10) == 0.0


def test_rates_without_a_denominator_are_none():
    assert per_thousand(4, 0) is None
    assert per_million(0, 0) is None
    with pytest.raises(ValueError, match="negative"):
        per_million(1, -5)
    with pytest.raises(ValueError, match="whole number"):
        per_thousand(-1, 10)


# --- log-likelihood G² -----------------------------------------------------------------


def test_g2_matches_the_worked_example_of_the_lancaster_log_likelihood_form():
    # Rayson, "Log-likelihood and effect size calculator", ucrel.lancs.ac.uk/llwizard.html
    # (formula G2 = 2*((a*ln(a/E1)) + (b*ln(b/E2))), E1 = c*(a+b)/(c+d)); the worked
    # exercise "52 times in Corpus 1 of 50,000 tokens, 57 times in Corpus 2 of 75,000
    # tokens" gives "LL + 2.65", as reproduced in the course slides "Corpus 2"
    # (scribd.com/presentation/807361921), with "above 3.84 ... p < 0.05".
    assert round(log_likelihood(52, 57, 50_000, 75_000), 2) == 2.65


@pytest.mark.parametrize(("learner", "native", "published"), [
    (392, 170, 90),   # lemma KEEP
    (348, 99, 147),   # keep
    (15, 14, 0),      # keeps
    (9, 32, 14),      # keeping
    (21, 25, 0),      # kept
])
def test_g2_matches_rayson_2002_learner_versus_native_example(learner, native, published):
    # Rayson, P. (2002), post "statistics in learner English" to the Corpora mailing list,
    # 18 January 2002 (citing Rayson & Garside 2000): both corpora taken as one million
    # words, LL "rounded to zero d.p.": KEEP 90, keep 147, keeps 0, keeping 14, kept 0.
    assert round(log_likelihood(learner, native, 1_000_000, 1_000_000)) == published


@pytest.mark.parametrize(("freq_a", "freq_b", "size_a", "size_b"), [
    (52, 57, 50_000, 75_000),
    (1, 40, 12_345, 987_654),
    (0, 10, 1_000, 3_000),
    (7, 0, 250, 100),
    (1_000, 1_001, 2e6, 2e6),
])
def test_g2_agrees_with_scipy_goodness_of_fit(freq_a, freq_b, size_a, size_b):
    # SciPy as the reference: the two-cell form is a G-test of (a, b) against the corpus
    # size proportions; power_divergence also supplies the 0 * ln 0 = 0 convention.
    total = freq_a + freq_b
    expected = [total * size_a / (size_a + size_b), total * size_b / (size_a + size_b)]
    reference = power_divergence([freq_a, freq_b], f_exp=expected, lambda_="log-likelihood")
    assert log_likelihood(freq_a, freq_b, size_a, size_b) == pytest.approx(
        reference.statistic, rel=1e-9, abs=1e-12)


def test_g2_is_symmetric_in_the_two_sides():
    assert log_likelihood(52, 57, 50_000, 75_000) == pytest.approx(
        log_likelihood(57, 52, 75_000, 50_000), rel=1e-12)


def test_g2_is_zero_when_relative_frequencies_are_equal():
    assert log_likelihood(10, 20, 1_000, 2_000) == pytest.approx(0.0, abs=1e-12)
    assert log_likelihood(3, 3, 500, 500) == 0.0
    assert log_likelihood(0, 0, 500, 900) == 0.0
    assert log_likelihood(10, 20, 1_000, 2_000) >= 0.0  # rounding never drives it below 0


def test_g2_rejects_bad_counts_and_sizes():
    with pytest.raises(ValueError, match="freq_a"):
        log_likelihood(-1, 3, 10, 10)
    with pytest.raises(ValueError, match="size_b"):
        log_likelihood(1, 3, 10, 0)
    with pytest.raises(ValueError, match="size_a"):
        log_likelihood(1, 3, float("nan"), 10)


# --- p-value ---------------------------------------------------------------------------


@pytest.mark.parametrize(("critical", "p"), [(3.841, 0.05), (6.635, 0.01), (10.828, 0.001)])
def test_p_value_at_published_critical_values(critical, p):
    # Critical values of chi-square with 1 df: 3.841 at p = 0.05 and 6.635 at p = 0.01
    # (Carr, "Critical values of the Chi-square distribution", Memorial University of
    # Newfoundland, Biology 4250 notes); 10.828 at p = 0.001 from the standard table
    # (from memory). Tables round to three decimals, hence the tolerance.
    assert g2_p_value(critical) == pytest.approx(p, rel=2e-3)


@pytest.mark.parametrize("g2", [0.0, 1e-6, 0.5, 1.0, 2.65, 3.84, 15.13, 50.0, 200.0])
def test_p_value_agrees_with_scipy_chi2_survival_function(g2):
    # Reference: scipy.stats.chi2.sf with one degree of freedom.
    assert g2_p_value(g2) == pytest.approx(chi2.sf(g2, df=1), rel=1e-9)


def test_p_value_rejects_negative_and_missing_statistics():
    assert g2_p_value(0.0) == 1.0
    with pytest.raises(ValueError, match="G²"):
        g2_p_value(-0.1)
    with pytest.raises(ValueError, match="G²"):
        g2_p_value(float("nan"))


# --- log ratio -------------------------------------------------------------------------


def test_log_ratio_matches_hardie_2014_examples():
    # Hardie, A. (2014), "Log Ratio - an informal introduction", CASS blog, Lancaster
    # University, 28 April 2014: the same relative frequency in A and B gives 0; a word
    # 2 times more common in one corpus gives 1 (and 4 times, 2: the list continues in
    # powers of two, from memory); relative frequencies 0.0006 in A and 0.0002 in B are
    # a ratio of 3, so log2(3).
    assert log_ratio(30, 60, 10_000, 20_000) == pytest.approx(0.0, abs=1e-12)
    assert log_ratio(20, 10, 10_000, 10_000) == pytest.approx(1.0)
    assert log_ratio(40, 10, 10_000, 10_000) == pytest.approx(2.0)
    assert log_ratio(6, 2, 10_000, 10_000) == pytest.approx(math.log2(3))


def test_log_ratio_is_negative_when_b_is_more_frequent():
    assert log_ratio(10, 20, 10_000, 10_000) == pytest.approx(-1.0)
    assert log_ratio(52, 57, 50_000, 75_000) == pytest.approx(
        -log_ratio(57, 52, 75_000, 50_000), rel=1e-12)


def test_log_ratio_replaces_a_zero_frequency_by_the_adjustment():
    # The convention documented in measures.log_ratio: a zero count becomes 0.5.
    assert log_ratio(4, 0, 1_000, 1_000) == pytest.approx(math.log2(4 / 0.5))
    assert log_ratio(0, 4, 1_000, 1_000) == pytest.approx(-3.0)
    assert log_ratio(1, 0, 100, 100, zero_adjust=0.25) == pytest.approx(2.0)
    assert log_ratio(0, 0, 100, 900) == 0.0
    with pytest.raises(ValueError, match="zero_adjust"):
        log_ratio(1, 0, 100, 100, zero_adjust=0)


# --- dispersion DP ---------------------------------------------------------------------

# Gries (2008), "Dispersions and adjusted frequencies in corpora", International Journal
# of Corpus Linguistics 13(4): 403-437, works every measure on a toy corpus of 50 words
# in five parts of 9, 10, 10, 10 and 11 words, in which the item "a" occurs 1, 2, 3, 4
# and 5 times. The part sizes and frequencies are as restated in Gries (2020),
# "Analyzing dispersion", in Paquot & Gries (eds.), A Practical Handbook of Corpus
# Linguistics, Springer, ch. 5.
TOY_PART_SIZES = [9, 10, 10, 10, 11]


def test_dp_of_a_in_gries_2008_toy_corpus():
    # Gries (2008: 415-416): DP = 0.18 for "a" (published value recalled from memory).
    assert dispersion_dp([1, 2, 3, 4, 5], TOY_PART_SIZES) == pytest.approx(0.18, abs=1e-12)


@pytest.mark.parametrize(("freqs", "dp", "dp_norm"), [
    ([2, 2, 2, 2, 2], 0.02, 0.024),    # "b"
    ([1, 0, 0, 0, 0], 0.82, 1.0),      # "i"
    ([0, 1, 0, 0, 0], 0.80, 0.976),    # "q"
    ([0, 0, 0, 0, 1], 0.78, 0.951),    # "x"
])
def test_dp_and_dp_norm_of_gries_2020_toy_corpus(freqs, dp, dp_norm):
    # Gries (2020), "Analyzing dispersion" (see above): DP and DPnorm for the items b, i,
    # q and x of the same toy corpus, given to 2-3 decimals. Taken from a reproduction
    # of the chapter's values, not read in the chapter itself.
    assert dispersion_dp(freqs, TOY_PART_SIZES) == pytest.approx(dp, abs=5e-4)
    assert dispersion_dp_norm(freqs, TOY_PART_SIZES) == pytest.approx(dp_norm, abs=5e-4)


def test_dp_norm_divides_by_one_minus_the_smallest_part_share():
    # Lijffijt & Gries (2012), "Correction to Stefan Th. Gries' 'Dispersions and adjusted
    # frequencies in corpora'", IJCL 17(1): 147-149: DPnorm = DP / (1 - min(s)); for "a"
    # in the toy corpus 0.18 / (1 - 0.18).
    assert dispersion_dp_norm([1, 2, 3, 4, 5], TOY_PART_SIZES) == pytest.approx(0.18 / 0.82)
    # Three equal parts, counts 2, 1, 0: DP = 1/3, DPnorm = (1/3) / (2/3) = 0.5.
    assert dispersion_dp_norm([2, 1, 0], [100, 100, 100]) == pytest.approx(0.5)


def test_dp_is_zero_for_a_spread_proportional_to_part_sizes():
    # Gries (2008): DP is 0 when observed and expected proportions agree.
    assert dispersion_dp(TOY_PART_SIZES, TOY_PART_SIZES) == pytest.approx(0.0, abs=1e-12)
    assert dispersion_dp([3, 3, 3], [500, 500, 500]) == pytest.approx(0.0, abs=1e-12)
    assert dispersion_dp_norm([18, 20, 20, 20, 22], TOY_PART_SIZES) == pytest.approx(
        0.0, abs=1e-12)


@pytest.mark.parametrize("part", range(5))
def test_dp_of_an_item_in_one_part_is_one_minus_that_part_share(part):
    # Gries (2008): everything in part i gives DP = 1 - s_i (s_i: that part's share).
    freqs = [0] * 5
    freqs[part] = 7
    share = TOY_PART_SIZES[part] / sum(TOY_PART_SIZES)
    assert dispersion_dp(freqs, TOY_PART_SIZES) == pytest.approx(1 - share)


def test_dp_is_undefined_for_an_item_that_never_occurs():
    assert dispersion_dp([0, 0, 0], [10, 20, 30]) is None
    assert dispersion_dp_norm([0, 0, 0], [10, 20, 30]) is None


def test_dp_norm_is_undefined_for_a_single_part():
    assert dispersion_dp([4], [100]) == 0.0
    assert dispersion_dp_norm([4], [100]) is None


def test_dp_rejects_bad_input_with_a_clear_message():
    with pytest.raises(ValueError, match="3 frequencies, 2 sizes"):
        dispersion_dp([1, 2, 3], [10, 20])
    with pytest.raises(ValueError, match="at least one"):
        dispersion_dp([], [])
    with pytest.raises(ValueError, match="part 2"):
        dispersion_dp([1, -2], [10, 20])
    with pytest.raises(ValueError, match="size of part 1"):
        dispersion_dp([1, 2], [-10, 20])
    with pytest.raises(ValueError, match="total size"):
        dispersion_dp([1, 2], [0, 0])
