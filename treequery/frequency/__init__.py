"""Frequencies: breakdowns, normalisation, comparison statistics, dispersion and charts."""
from treequery.frequency.breakdown import BreakdownError, FrequencyRow, FrequencyTable
from treequery.frequency.compare import Comparison, ComparisonRow
from treequery.frequency.patternset import NamedPattern, PatternSetError, read_pattern_set

__all__ = [
    "BreakdownError",
    "Comparison",
    "ComparisonRow",
    "FrequencyRow",
    "FrequencyTable",
    "NamedPattern",
    "PatternSetError",
    "read_pattern_set",
]
