"""The one place that decides how every chart looks: colours, markers, line styles, texts.

Control (QC, Westgard), production (Nelson), EWMA and stability charts draw from these
names only, so one thing looks the same on every chart: a result is a teal dot, a flagged
result an amber diamond with its rule's name beside it, a specification limit a plum
dash-dot line, the mean a charcoal line and the ±1, 2, 3 s lines slate, dotted to solid
as they widen. DEVELOPERS.md ("Charts") shows the table. The colours are the project's own
picks, chosen to stay apart for the common colour-vision deficiencies (amber against teal,
plum against slate) and to print legibly in grey; every meaning also has its own marker or
line style, so no chart relies on colour alone.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any

INK = "#2e2e2e"  # titles, axis labels, the mean
RESULT = "#1b7f86"  # teal: results, EWMA statistic, fitted lines of the first lot
FLAGGED = "#e08a00"  # amber: results a rule flagged, and their rule's name
SIGMA = "#5e6b7d"  # slate: the ±1, 2, 3 s lines and EWMA limits
SPECIFICATION = "#8b3a8b"  # plum: specification and acceptance limits
FAINT = "#a9b1bb"  # raw results behind an EWMA, the "last result" marker
BACKGROUND_BAND = "#eef3f4"  # the ±1 s band

# Lots on a stability plot, in order: teal, brick, indigo, olive, then greys.
LOT_COLOURS = ("#1b7f86", "#b4532a", "#4b4f9e", "#6f7d1c", "#7a7a7a", "#3f3f3f")
LOT_MARKERS = ("o", "s", "^", "v", "P", "X")


@dataclass(frozen=True)
class LineStyle:
    colour: str
    width: float
    style: str  # matplotlib linestyle


CENTRE_LINE = LineStyle(INK, 1.2, "-")
SIGMA_LINES = {1: LineStyle(SIGMA, 0.7, ":"), 2: LineStyle(SIGMA, 0.9, "--"), 3: LineStyle(SIGMA, 1.2, "-")}
SPEC_LINE = LineStyle(SPECIFICATION, 1.6, "-.")
FITTED_LINE_STYLE = "-"
BOUND_LINE_STYLE = "--"
SHELF_LIFE_LINE = LineStyle(INK, 1.0, ":")
LAST_RESULT_LINE = LineStyle(FAINT, 0.8, "-.")

RESULT_MARKER = {"marker": "o", "markersize": 4, "color": RESULT}
FLAGGED_MARKER = {"marker": "D", "s": 46, "color": FLAGGED, "edgecolors": INK, "linewidths": 0.6, "zorder": 4}
RAW_RESULT_MARKER = {"marker": ".", "s": 16, "color": FAINT, "zorder": 2}

FONT_SIZE = 9
SMALL_FONT_SIZE = 7.5
TITLE_FONT_SIZE = 10


def sigma_label(k: int) -> str:
    """The label of a ±k s line: "+2 s", "−2 s" (a true minus sign)."""
    return f"+{k} s" if k > 0 else f"\u2212{-k} s"


def line_kwargs(line: LineStyle) -> dict[str, Any]:
    return {"color": line.colour, "linewidth": line.width, "linestyle": line.style}
