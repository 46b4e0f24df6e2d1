"""Figures to PNG or SVG bytes through the Agg canvas."""
from __future__ import annotations

import io
import math
from collections.abc import Iterable

from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

FIGURE_SIZE = (8.0, 4.5)  # inches
NOTE_LINE_HEIGHT = 0.17  # inches per line of notes below a chart
DPI = 100


def new_figure(*, notes: int | None = None) -> Figure:
    """A figure on the Agg canvas. With ``notes`` (a number of text lines) it holds two
    axes: the chart, and below it a text-only strip tall enough for that many lines."""
    if notes is None:
        figure = Figure(figsize=FIGURE_SIZE, dpi=DPI, layout="constrained")
        FigureCanvasAgg(figure)
        return figure
    strip = NOTE_LINE_HEIGHT * (notes + 1) if notes else 0.05
    figure = Figure(figsize=(FIGURE_SIZE[0], FIGURE_SIZE[1] + strip), dpi=DPI, layout="constrained")
    FigureCanvasAgg(figure)
    figure.subplots(2, 1, height_ratios=[FIGURE_SIZE[1], strip])
    return figure


def figure_png(figure: Figure) -> bytes:
    buffer = io.BytesIO()
    figure.savefig(buffer, format="png")
    return buffer.getvalue()


def figure_svg(figure: Figure) -> bytes:
    buffer = io.BytesIO()
    figure.savefig(buffer, format="svg", metadata={"Date": None})  # no date: the same chart, the same bytes
    return buffer.getvalue()


def json_number(value: float | None) -> float | None:
    """A float JSON can carry: NaN and infinities become None."""
    if value is None:
        return None
    number = float(value)
    return number if math.isfinite(number) else None


def json_numbers(values: Iterable[float]) -> list[float | None]:
    return [json_number(v) for v in values]
