"""Frequency tables and comparisons as text tables, CSV, TSV, JSON and bar charts.

CSV, TSV and JSON carry every column under its stable name with full-precision
numbers (a missing value is an empty field, or null in JSON); the text table rounds.
"""
from __future__ import annotations

import csv
import json
from collections.abc import Sequence
from typing import TextIO

from treequery.frequency.breakdown import FrequencyTable
from treequery.frequency.chart import Bar, bar_chart_svg
from treequery.frequency.compare import Comparison

FORMATS = ("table", "csv", "tsv", "json")
CHART_GROUPS = 20      # clusters drawn at most: the groups with most results
NO_VALUE = "(none)"    # a cell of documents without the metadata key, in tables and charts

# Decimal places in the text table, by column name (the end of the name for a_/b_ columns).
DECIMALS = {"per_1000_trees": 2, "per_million_tokens": 1, "dp": 3, "dp_norm": 3, "g2": 2,
            "log_ratio": 2}


def write_rows(columns: Sequence[str], records: Sequence[Sequence], out: TextIO,
               delimiter: str = ",") -> None:
    """A header row and one row per record (CSV, or TSV with a tab delimiter)."""
    writer = csv.writer(out, delimiter=delimiter, lineterminator="\n")
    writer.writerow(columns)
    writer.writerows(records)


def json_text(data: FrequencyTable | Comparison) -> str:
    return json.dumps(data.to_json(), ensure_ascii=False, indent=2, allow_nan=False)


def frequency_table_text(table: FrequencyTable) -> str:
    return aligned(table.columns, table.records())


def comparison_text(comparison: Comparison) -> str:
    """Each side with its sizes, then one line per group (the columns a reader compares)."""
    lines = [f"{x}: {side.side}  ({_plural(len(side.documents), 'document')}, "
             f"{_plural(side.trees, 'tree')}, {_plural(side.tokens, 'token')})"
             for x, side in (("a", comparison.a), ("b", comparison.b))]
    shown = [*comparison.by] + [f"{x}_{name}" for x in "ab" for name in
                                ("results", "per_1000_trees", "per_million_tokens")]
    shown += ["g2", "p_value", "log_ratio"]
    where = [comparison.columns.index(name) for name in shown]
    records = [[record[i] for i in where] for record in comparison.records()]
    return "\n".join(lines) + "\n\n" + aligned(shown, records)


def aligned(columns: Sequence[str], records: Sequence[Sequence]) -> str:
    """Columns padded to width: text left-aligned, numbers right-aligned."""
    cells = [[_shown(name, value) for name, value in zip(columns, record, strict=True)]
             for record in records]
    numeric = [all(_is_number(record[i]) for record in records) and bool(records)
               for i in range(len(columns))]
    widths = [max(len(row[i]) for row in [list(columns), *cells]) for i in range(len(columns))]
    lines = []
    for row in [list(columns), *cells]:
        parts = [cell.rjust(w) if is_number else cell.ljust(w)
                 for cell, w, is_number in zip(row, widths, numeric, strict=True)]
        lines.append("  ".join(parts).rstrip())
    lines.insert(1, "  ".join("-" * w for w in widths))
    return "\n".join(lines)


def _shown(column: str, value) -> str:
    if value is None:
        return "-" if column != "cell" else NO_VALUE
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, int):
        return f"{value:,}"
    if isinstance(value, float):
        name = column[2:] if column[:2] in ("a_", "b_") else column
        if name == "p_value":
            return f"{value:.3g}"
        return f"{value:,.{DECIMALS.get(name, 2)}f}"
    return str(value)


def _is_number(value) -> bool:
    return value is None or (isinstance(value, int | float) and not isinstance(value, bool))


def _plural(number: int, noun: str) -> str:
    return f"{number:,} {noun}{'' if number == 1 else 's'}"


# ---------------------------------------------------------------- charts

def frequency_chart(table: FrequencyTable, title: str) -> str:
    """Per million tokens: one cluster per pattern / --by group, one bar per cell."""
    totals: dict[str, int] = {}
    bars = []
    for row in table.rows:
        names = [row.pattern] if table.named else []
        group = " / ".join(names + [_label(v) for v in row.key]) or "all"
        series = NO_VALUE if row.cell is None else row.cell
        totals[group] = totals.get(group, 0) + row.results
        bars.append(Bar(group, series, row.per_million_tokens or 0.0))
    return _chart(bars, totals, title)


def comparison_chart(comparison: Comparison, title: str) -> str:
    """Per million tokens: one cluster per --by group, one bar per side."""
    totals: dict[str, int] = {}
    bars = []
    for row in comparison.rows:
        group = " / ".join(_label(v) for v in row.key) or "all"
        totals[group] = row.a_results + row.b_results
        bars.append(Bar(group, comparison.a.side, row.a_per_million_tokens or 0.0))
        bars.append(Bar(group, comparison.b.side, row.b_per_million_tokens or 0.0))
    return _chart(bars, totals, title)


def _chart(bars: list[Bar], totals: dict[str, int], title: str) -> str:
    kept = sorted(totals, key=lambda group: -totals[group])[:CHART_GROUPS]
    if len(totals) > CHART_GROUPS:
        title += f" ({CHART_GROUPS} groups with most results of {len(totals)})"
    chosen = set(kept)
    return bar_chart_svg([bar for bar in bars if bar.group in chosen], title,
                         "results per million tokens")


def _label(value) -> str:
    return "-" if value is None else str(value)
