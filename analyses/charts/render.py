"""Figures to PNG or SVG bytes through the Agg canvas."""
from __future__ import annotations

import io
import math
from collections.abc import Iterable

from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

FIGURE_SIZE = (8.0, 4.5)  # inches
DPI = 100


def new_figure() -> Figure:
    figure = Figure(figsize=FIGURE_SIZE, dpi=DPI, layout="constrained")
    FigureCanvasAgg(figure)
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
