"""Bar chart SVG read back with xml.etree: well formed, labelled, escaped, to scale, stable."""
from __future__ import annotations

import math
import xml.etree.ElementTree as ET

import pytest

from treequery.frequency.chart import Bar, bar_chart_svg

SVG = "{http://www.w3.org/2000/svg}"
HOSTILE = 'a <script>alert("x")</script> & "quoted"'

BARS = [
    Bar("NP-SBJ", "spoken", 12.5),
    Bar("NP-SBJ", "written", 30.0),
    Bar("PP-LOC", "spoken", 4.0),
    Bar("PP-LOC", "written", 18.75),
    Bar("relative clauses", "spoken", 7.0),
]


def parse(svg: str) -> ET.Element:
    root = ET.fromstring(svg)
    assert root.tag == f"{SVG}svg"
    return root


def bar_rects(root: ET.Element) -> list[ET.Element]:
    return [rect for rect in root.iter(f"{SVG}rect") if rect.get("class") == "bar"]


def all_text(root: ET.Element) -> str:
    """Every text node of the document, <title> tooltips included."""
    return "\n".join(element.text or "" for element in root.iter()) + "\n" + "\n".join(
        element.tail or "" for element in root.iter())


def texts_of_class(root: ET.Element, name: str) -> list[str]:
    """The full text of each <text> of a class: its <title> if it was shortened."""
    found = []
    for text in root.iter(f"{SVG}text"):
        if text.get("class") == name:
            tooltip = text.find(f"{SVG}title")
            found.append(text.text if tooltip is None else tooltip.text)
    return found


def test_the_chart_is_well_formed_svg_with_one_rect_per_bar():
    root = parse(bar_chart_svg(BARS, "Matches per 1,000 trees", "per 1,000 trees"))
    rects = bar_rects(root)
    assert [(rect.get("data-group"), rect.get("data-series")) for rect in rects] == [
        (bar.group, bar.series) for bar in BARS]
    assert float(root.get("width")) > 0 and float(root.get("height")) > 0


def test_bar_heights_are_proportional_to_values_and_stand_on_one_baseline():
    root = parse(bar_chart_svg(BARS, "t", "v"))
    rects = bar_rects(root)
    heights = [float(rect.get("height")) for rect in rects]
    for rect, bar in zip(rects, BARS, strict=True):
        assert float(rect.get("data-value")) == bar.value
    # Coordinates are written with two decimals: ratios hold to that precision.
    for height, bar in zip(heights, BARS, strict=True):
        assert height / heights[1] == pytest.approx(bar.value / BARS[1].value, abs=2e-3)
    baselines = {round(float(rect.get("y")) + float(rect.get("height")), 1) for rect in rects}
    assert len(baselines) == 1


def test_the_tallest_bar_stays_inside_the_axis_and_ticks_are_round():
    root = parse(bar_chart_svg(BARS, "t", "v"))
    ticks = [float(text.replace(",", "")) for text in texts_of_class(root, "tick")]
    assert ticks[0] == 0 and ticks[-1] >= max(bar.value for bar in BARS)
    step = ticks[1] - ticks[0]
    mantissa = step / 10 ** math.floor(math.log10(step))
    assert round(mantissa, 6) in {1.0, 2.0, 5.0}  # 1, 2 or 5 times a power of ten
    assert all(later - earlier == pytest.approx(step) for earlier, later in zip(
        ticks, ticks[1:], strict=False))


def test_every_value_is_printed_above_its_bar():
    root = parse(bar_chart_svg(BARS, "t", "v"))
    assert texts_of_class(root, "value") == ["12.5", "30", "4", "18.8", "7"]


def test_every_group_and_series_label_appears_escaped():
    bars = [Bar(HOSTILE, "spoken & <written>", 3.0), Bar("plain", HOSTILE, 5.0)]
    svg = bar_chart_svg(bars, f"title {HOSTILE}", f"axis {HOSTILE}")
    assert "<script>" not in svg
    root = parse(svg)
    text = all_text(root)
    for label in (HOSTILE, "spoken & <written>", "plain", f"title {HOSTILE}"):
        assert label in text
    assert texts_of_class(root, "legend") == ["spoken & <written>", HOSTILE]


def test_long_labels_are_shortened_with_an_ellipsis_and_keep_the_full_text():
    long_group = "clauses with a fronted prepositional phrase and a heavy subject"
    long_series = "the minutes of the ferry cooperative's spring meeting, second half"
    root = parse(bar_chart_svg([Bar(long_group, long_series, 2.0)], "t", "v"))
    group_label = next(text for text in root.iter(f"{SVG}text") if text.get("class") == "group")
    assert group_label.find(f"{SVG}title").text == long_group
    assert group_label.find(f"{SVG}title").tail.endswith("…")
    legend = next(text for text in root.iter(f"{SVG}text") if text.get("class") == "legend")
    assert legend.find(f"{SVG}title").text == long_series
    assert legend.find(f"{SVG}title").tail.endswith("…")


def test_series_keep_their_colour_across_groups_and_differ_from_each_other():
    root = parse(bar_chart_svg(BARS, "t", "v"))
    fill_of = {}
    for rect in bar_rects(root):
        fill_of.setdefault(rect.get("data-series"), set()).add(rect.get("fill"))
    assert all(len(fills) == 1 for fills in fill_of.values())
    assert fill_of["spoken"] != fill_of["written"]


def test_many_series_get_distinct_fills_and_every_pattern_is_defined():
    bars = [Bar("all", f"document {index:02d}", float(index + 1)) for index in range(24)]
    root = parse(bar_chart_svg(bars, "t", "v"))
    fills = [rect.get("fill") for rect in bar_rects(root)]
    assert len(set(fills)) == 24
    defined = {pattern.get("id") for pattern in root.iter(f"{SVG}pattern")}
    for fill in fills:
        if fill.startswith("url(#"):
            assert fill[len("url(#"):-1] in defined


def test_a_missing_group_and_series_pair_draws_no_bar():
    root = parse(bar_chart_svg(BARS, "t", "v"))
    pairs = {(rect.get("data-group"), rect.get("data-series")) for rect in bar_rects(root)}
    assert ("relative clauses", "written") not in pairs
    assert texts_of_class(root, "legend") == ["spoken", "written"]


def test_same_input_gives_the_same_bytes():
    first = bar_chart_svg(BARS, "Matches", "per 1,000 trees")
    again = bar_chart_svg([Bar(bar.group, bar.series, bar.value) for bar in BARS],
                          "Matches", "per 1,000 trees")
    assert first == again


@pytest.mark.parametrize("bars", [[], [Bar("all", "a", 0.0), Bar("all", "b", 0)]])
def test_no_bars_or_only_zeros_give_a_valid_chart_saying_no_data(bars):
    root = parse(bar_chart_svg(bars, "Nothing <here>", "per 1,000 trees"))
    assert texts_of_class(root, "no-data") == ["no data"]
    assert "Nothing <here>" in all_text(root)
    assert bar_rects(root) == []


@pytest.mark.parametrize(("bars", "message"), [
    ([Bar("g", "s", -1.0)], "finite number >= 0"),
    ([Bar("g", "s", float("nan"))], "finite number >= 0"),
    ([Bar("g", "s", float("inf"))], "finite number >= 0"),
    ([Bar("g", "s", 1.0), Bar("g", "s", 2.0)], "already have a bar"),
])
def test_bad_bars_are_refused_with_the_bar_named(bars, message):
    with pytest.raises(ValueError, match=message) as caught:
        bar_chart_svg(bars, "t", "v")
    assert "'g'" in str(caught.value)
