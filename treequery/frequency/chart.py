"""Grouped bar charts as standalone SVG text: one cluster per group, one bar per series."""
from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from xml.sax.saxutils import escape, quoteattr


@dataclass(frozen=True, slots=True)
class Bar:
    """One bar: its cluster (`group`), its colour in the legend (`series`) and its height."""

    group: str
    series: str
    value: float


FONT_SIZE = 12
VALUE_SIZE = 10
TITLE_SIZE = 16
CHAR_WIDTH = 0.62        # of the font size: a generous average for sans-serif text
MARGIN = 16
TITLE_HEIGHT = 36
PLOT_HEIGHT = 260
BAR_WIDTH = 28           # the minimum; widened when a printed value needs more room
BAR_GAP = 4              # between the bars of one cluster
GROUP_GAP = 28           # between clusters
TICK_LENGTH = 5
LEGEND_GAP = 28
LEGEND_ROW = 20
SWATCH = 12
GROUP_LABEL_CHARS = 24   # the longest group label before the ellipsis (slanted labels)
LEGEND_LABEL_CHARS = 32
TITLE_CHARS = 90
SLANT = 35               # degrees, for group labels too wide to sit level under their cluster
# Okabe & Ito's colour-blind-safe palette (common practice for categorical colours);
# after eight series the colours repeat with stripes, then with dots.
PALETTE = ("#0072B2", "#E69F00", "#009E73", "#CC79A7",
           "#56B4E9", "#D55E00", "#F0E442", "#555555")
PATTERNS = ("solid", "stripes", "dots")

STYLE = ("text{font-family:sans-serif;font-size:12px;fill:#222}"
         ".title{font-size:16px;font-weight:bold}"
         ".value{font-size:10px;fill:#333}"
         ".tick{fill:#555}"
         ".axis{stroke:#444;stroke-width:1}"
         ".grid{stroke:#ddd;stroke-width:1}"
         ".bar{stroke:#333;stroke-width:0.5}"
         ".no-data{font-size:14px;fill:#777}")


def bar_chart_svg(bars: Sequence[Bar], title: str, value_label: str) -> str:
    """The bars as one SVG document; groups and series keep the order they first appear in.

    Same input, same bytes. Every text is XML-escaped; a label too long to fit is
    shortened with an ellipsis and carries its full text in a <title>. With no
    bars, or only zero values, the chart says "no data".
    """
    _check_bars(bars)
    if not bars or all(bar.value == 0 for bar in bars):
        return _empty_chart(title)
    return _Layout(bars, title, value_label).svg()


def _check_bars(bars: Sequence[Bar]) -> None:
    seen: set[tuple[str, str]] = set()
    for index, bar in enumerate(bars):
        where = f"bar {index + 1} ({bar.group!r}, {bar.series!r})"
        value = bar.value
        if isinstance(value, bool) or not isinstance(value, int | float):
            raise ValueError(f"{where}: the value must be a number, got {value!r}")
        if not math.isfinite(value) or value < 0:
            raise ValueError(f"{where}: the value must be a finite number >= 0, got {value!r}")
        if (bar.group, bar.series) in seen:
            raise ValueError(f"{where}: this group and series already have a bar")
        seen.add((bar.group, bar.series))


def _empty_chart(title: str) -> str:
    width = max(480.0, _text_width(_shorten(title, TITLE_CHARS), TITLE_SIZE) + 2 * MARGIN)
    height = 160
    parts = [_svg_open(width, height, title), f"<defs><style>{STYLE}</style></defs>",
             _title_text(title, MARGIN + TITLE_SIZE),
             f'<text class="no-data" x="{_num(width / 2)}" y="{_num(height / 2 + 16)}" '
             f'text-anchor="middle">no data</text>',
             "</svg>"]
    return "\n".join(parts) + "\n"


class _Layout:
    """Positions for one chart, worked out once from the bars."""

    def __init__(self, bars: Sequence[Bar], title: str, value_label: str) -> None:
        self.title, self.value_label = title, value_label
        self.groups = list(dict.fromkeys(bar.group for bar in bars))
        self.series = list(dict.fromkeys(bar.series for bar in bars))
        self.values = {(bar.group, bar.series): float(bar.value) for bar in bars}
        self.step, self.top = nice_axis(max(self.values.values()))
        self.ticks = [self.step * index for index in range(round(self.top / self.step) + 1)]
        self.bar_width = max(
            BAR_WIDTH,
            max(_text_width(format_value(value), VALUE_SIZE) for value in self.values.values()) + 4)
        self.cluster_width = len(self.series) * (self.bar_width + BAR_GAP) - BAR_GAP
        self.pitch = self.cluster_width + GROUP_GAP
        tick_width = max(_text_width(format_tick(tick, self.step)) for tick in self.ticks)
        self.plot_left = MARGIN + FONT_SIZE + 10 + tick_width + TICK_LENGTH + 4
        self.plot_top = MARGIN + TITLE_HEIGHT
        self.plot_width = len(self.groups) * self.pitch
        self.plot_bottom = self.plot_top + PLOT_HEIGHT
        self.slanted = any(_text_width(group) > self.pitch - 6 for group in self.groups)

    def svg(self) -> str:
        parts = [_svg_open(self.width(), self.height(), self.title), self._defs(),
                 _title_text(self.title, MARGIN + TITLE_SIZE)]
        parts += self._axis()
        for index, group in enumerate(self.groups):
            parts += self._cluster(index, group)
        parts += self._legend()
        parts.append("</svg>")
        return "\n".join(parts) + "\n"

    def width(self) -> float:
        legend_width = SWATCH + 6 + max(
            _text_width(_shorten(series, LEGEND_LABEL_CHARS)) for series in self.series)
        chart = self.plot_left + self.plot_width + LEGEND_GAP + legend_width + MARGIN
        title = _text_width(_shorten(self.title, TITLE_CHARS), TITLE_SIZE) + 2 * MARGIN
        return max(chart, title)

    def height(self) -> float:
        if self.slanted:
            longest = max(_text_width(_shorten(group, GROUP_LABEL_CHARS)) for group in self.groups)
            labels = longest * math.sin(math.radians(SLANT)) + FONT_SIZE + 12
        else:
            labels = FONT_SIZE + 14
        legend = self.plot_top + len(self.series) * LEGEND_ROW
        return max(self.plot_bottom + labels, legend) + MARGIN

    def _defs(self) -> str:
        patterns = []
        for index in range(len(PALETTE), len(self.series)):
            colour, pattern = _swatch(index)
            patterns.append(_pattern(index, colour, pattern))
        return f"<defs><style>{STYLE}</style>{''.join(patterns)}</defs>"

    def y_of(self, value: float) -> float:
        return self.plot_bottom - PLOT_HEIGHT * value / self.top

    def _axis(self) -> list[str]:
        left, right = self.plot_left, self.plot_left + self.plot_width
        parts = []
        for tick in self.ticks:
            y = _num(self.y_of(tick))
            if tick > 0:
                parts.append(f'<line class="grid" x1="{_num(left)}" y1="{y}" '
                             f'x2="{_num(right)}" y2="{y}"/>')
            parts.append(f'<line class="axis" x1="{_num(left - TICK_LENGTH)}" y1="{y}" '
                         f'x2="{_num(left)}" y2="{y}"/>')
            parts.append(f'<text class="tick" x="{_num(left - TICK_LENGTH - 3)}" '
                         f'y="{_num(self.y_of(tick) + 4)}" text-anchor="end">'
                         f'{format_tick(tick, self.step)}</text>')
        parts.append(f'<line class="axis" x1="{_num(left)}" y1="{_num(self.plot_top)}" '
                     f'x2="{_num(left)}" y2="{_num(self.plot_bottom)}"/>')
        parts.append(f'<line class="axis" x1="{_num(left)}" y1="{_num(self.plot_bottom)}" '
                     f'x2="{_num(right)}" y2="{_num(self.plot_bottom)}"/>')
        label_x, label_y = MARGIN + FONT_SIZE, self.plot_top + PLOT_HEIGHT / 2
        parts.append(f'<text class="axis-label" x="{_num(label_x)}" y="{_num(label_y)}" '
                     f'text-anchor="middle" transform="rotate(-90 {_num(label_x)} '
                     f'{_num(label_y)})">{_label(self.value_label, 40)}</text>')
        return parts

    def _cluster(self, group_index: int, group: str) -> list[str]:
        cluster_left = self.plot_left + GROUP_GAP / 2 + group_index * self.pitch
        parts = []
        for series_index, series in enumerate(self.series):
            value = self.values.get((group, series))
            if value is None:
                continue
            x = cluster_left + series_index * (self.bar_width + BAR_GAP)
            y = self.y_of(value)
            parts.append(
                f'<rect class="bar" x="{_num(x)}" y="{_num(y)}" width="{_num(self.bar_width)}" '
                f'height="{_num(self.plot_bottom - y)}" fill="{_fill(series_index)}" '
                f'data-group={quoteattr(group)} data-series={quoteattr(series)} '
                f'data-value="{value!r}"><title>{escape(group)} · {escape(series)}: '
                f'{format_value(value)}</title></rect>')
            parts.append(f'<text class="value" x="{_num(x + self.bar_width / 2)}" '
                         f'y="{_num(y - 3)}" text-anchor="middle">{format_value(value)}</text>')
        centre = cluster_left + self.cluster_width / 2
        label_y = self.plot_bottom + FONT_SIZE + 6
        if self.slanted:
            end_x = centre + 4
            parts.append(f'<text class="group" x="{_num(end_x)}" y="{_num(label_y)}" '
                         f'text-anchor="end" transform="rotate(-{SLANT} {_num(end_x)} '
                         f'{_num(label_y)})">{_label(group, GROUP_LABEL_CHARS)}</text>')
        else:
            parts.append(f'<text class="group" x="{_num(centre)}" y="{_num(label_y)}" '
                         f'text-anchor="middle">{_label(group, GROUP_LABEL_CHARS)}</text>')
        return parts

    def _legend(self) -> list[str]:
        left = self.plot_left + self.plot_width + LEGEND_GAP
        parts = []
        for index, series in enumerate(self.series):
            top = self.plot_top + index * LEGEND_ROW
            parts.append(f'<rect class="swatch" x="{_num(left)}" y="{_num(top)}" '
                         f'width="{SWATCH}" height="{SWATCH}" fill="{_fill(index)}" '
                         f'stroke="#333" stroke-width="0.5"/>')
            parts.append(f'<text class="legend" x="{_num(left + SWATCH + 6)}" '
                         f'y="{_num(top + SWATCH - 1)}">'
                         f'{_label(series, LEGEND_LABEL_CHARS)}</text>')
        return parts


def nice_axis(maximum: float) -> tuple[float, float]:
    """A round tick step (1, 2 or 5 times a power of ten) and the axis top it gives.

    About five ticks up to the first multiple of the step at or above `maximum`
    (the "nice numbers" idea of Heckbert 1990, Graphics Gems; common practice).
    """
    if not maximum > 0:
        raise ValueError(f"the axis needs a maximum above 0, got {maximum}")
    rough = maximum / 5
    power = 10 ** math.floor(math.log10(rough))
    step = next(multiple * power for multiple in (1, 2, 5, 10) if multiple * power >= rough)
    top = math.ceil(maximum / step - 1e-9) * step
    return step, top


def format_value(value: float) -> str:
    """At most three significant figures (whole numbers from 1,000), thousands separated."""
    if value >= 1000:
        return f"{value:,.0f}"
    if value == 0:
        return "0"
    decimals = max(0, 2 - math.floor(math.log10(abs(value))))
    text = f"{value:.{decimals}f}"
    return text.rstrip("0").rstrip(".") if "." in text else text


def format_tick(tick: float, step: float) -> str:
    decimals = max(0, -math.floor(math.log10(step)))
    return f"{tick:,.{decimals}f}"


def _shorten(text: str, limit: int) -> str:
    return text if len(text) <= limit else text[: limit - 1] + "…"


def _label(text: str, limit: int) -> str:
    """Escaped text, shortened with an ellipsis and the full text in a <title> when too long."""
    short = _shorten(text, limit)
    if short == text:
        return escape(text)
    return f"<title>{escape(text)}</title>{escape(short)}"


def _title_text(title: str, y: float) -> str:
    return (f'<text class="title" x="{MARGIN}" y="{_num(y)}">'
            f'{_label(title, TITLE_CHARS)}</text>')


def _svg_open(width: float, height: float, title: str) -> str:
    return (f'<svg xmlns="http://www.w3.org/2000/svg" width="{_num(width)}" '
            f'height="{_num(height)}" viewBox="0 0 {_num(width)} {_num(height)}" '
            f'role="img">\n<title>{escape(title)}</title>\n'
            f'<rect width="100%" height="100%" fill="#fff"/>')


def _swatch(index: int) -> tuple[str, str]:
    return PALETTE[index % len(PALETTE)], PATTERNS[(index // len(PALETTE)) % len(PATTERNS)]


def _fill(index: int) -> str:
    colour, pattern = _swatch(index)
    return colour if pattern == "solid" else f"url(#fill-{index})"


def _pattern(index: int, colour: str, pattern: str) -> str:
    if pattern == "stripes":
        marks = '<rect width="3" height="6" fill="#fff"/>'
        transform = ' patternTransform="rotate(45)"'
    else:
        marks = '<circle cx="3" cy="3" r="1.5" fill="#fff"/>'
        transform = ""
    return (f'<pattern id="fill-{index}" width="6" height="6" patternUnits="userSpaceOnUse"'
            f'{transform}><rect width="6" height="6" fill="{colour}"/>{marks}</pattern>')


def _text_width(text: str, size: int = FONT_SIZE) -> float:
    return len(text) * size * CHAR_WIDTH


def _num(value: float) -> str:
    """Coordinates with two decimals and no trailing zeros: stable bytes for the same input."""
    text = f"{value:.2f}".rstrip("0").rstrip(".")
    return "0" if text == "-0" else text
