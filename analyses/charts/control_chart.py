"""Control charts: a JSON-ready data dict, and PNG/SVG renderings of it.

The dict: title, unit, points [{index, label, value, flagged, rules}], centre,
limits {lower, upper} (numbers, or one per point for EWMA), zones [{sd, lower, upper}],
flagged [indices], episodes [{rule, side, first, last, points}].
"""
from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np

from analyses.charts.render import figure_png, figure_svg, json_number, json_numbers, new_figure
from analyses.trends.episodes import Episode
from analyses.trends.ewma import EwmaChart

FLAG_COLOUR = "#c0392b"
LINE_COLOUR = "#1f4e79"


def control_chart_data(
    values: Sequence[float],
    *,
    centre: float,
    lower: float | Sequence[float],
    upper: float | Sequence[float],
    episodes: Sequence[Episode] = (),
    labels: Sequence[str] | None = None,
    zones: Sequence[tuple[float, float, float]] = (),
    title: str = "",
    unit: str = "",
) -> dict[str, Any]:
    """Chart data for any control chart; ``zones`` holds (k, lower, upper) lines at ±k s."""
    rules_at: dict[int, list[str]] = {}
    for episode in episodes:
        for point in episode.points:
            rules_at.setdefault(point, []).append(episode.rule)
    points = [
        {
            "index": i,
            "label": str(labels[i]) if labels is not None else str(i),
            "value": json_number(value),
            "flagged": i in rules_at,
            "rules": sorted(set(rules_at.get(i, []))),
        }
        for i, value in enumerate(values)
    ]
    return {
        "title": title,
        "unit": unit,
        "points": points,
        "centre": json_number(centre),
        "limits": {"lower": _limit(lower), "upper": _limit(upper)},
        "zones": [{"sd": k, "lower": json_number(lo), "upper": json_number(hi)} for k, lo, hi in zones],
        "flagged": sorted(rules_at),
        "episodes": [
            {"rule": e.rule, "side": e.side, "first": e.first, "last": e.last, "points": list(e.points)}
            for e in episodes
        ],
    }


def shewhart_chart_data(
    values: Sequence[float],
    mean: float,
    sd: float,
    episodes: Sequence[Episode] = (),
    *,
    labels: Sequence[str] | None = None,
    title: str = "",
    unit: str = "",
) -> dict[str, Any]:
    """Levey-Jennings/Shewhart chart: centre at the mean, limits at ±3 s, zones at ±1 and ±2 s."""
    return control_chart_data(
        values,
        centre=mean,
        lower=mean - 3 * sd,
        upper=mean + 3 * sd,
        episodes=episodes,
        labels=labels,
        zones=[(k, mean - k * sd, mean + k * sd) for k in (1, 2)],
        title=title,
        unit=unit,
    )


def ewma_chart_data(
    chart: EwmaChart, *, labels: Sequence[str] | None = None, title: str = "", unit: str = ""
) -> dict[str, Any]:
    """EWMA chart: the plotted points are the EWMA statistic, limits vary per point."""
    data = control_chart_data(
        chart.statistic,
        centre=chart.centre,
        lower=chart.lower,
        upper=chart.upper,
        episodes=chart.episodes,
        labels=labels,
        title=title,
        unit=unit,
    )
    data["results"] = json_numbers(chart.values)
    data["smoothing"], data["width"] = chart.smoothing, chart.width
    return data


def control_chart_png(data: dict[str, Any]) -> bytes:
    return figure_png(_draw(data))


def control_chart_svg(data: dict[str, Any]) -> bytes:
    return figure_svg(_draw(data))


def _limit(limit: float | Sequence[float]) -> float | None | list[float | None]:
    return json_numbers(limit) if np.ndim(limit) else json_number(limit)


def _draw(data: dict[str, Any]):
    figure = new_figure()
    axes = figure.add_subplot()
    x = np.array([p["index"] for p in data["points"]], dtype=float)
    y = np.array([np.nan if p["value"] is None else p["value"] for p in data["points"]], dtype=float)
    axes.plot(x, y, marker="o", markersize=3, linewidth=1, color=LINE_COLOUR, label="result")
    flagged = np.array([p["flagged"] for p in data["points"]], dtype=bool)
    if flagged.any():
        axes.scatter(x[flagged], y[flagged], s=36, color=FLAG_COLOUR, zorder=3, label="flagged")
    axes.axhline(data["centre"], color="black", linewidth=1, label="centre")
    for name in ("lower", "upper"):
        limit = data["limits"][name]
        if isinstance(limit, list):
            axes.step(x, np.array(limit, dtype=float), where="mid", color="grey", linewidth=1)
        elif limit is not None:
            axes.axhline(limit, color="grey", linewidth=1)
    for zone in data["zones"]:
        for edge in (zone["lower"], zone["upper"]):
            axes.axhline(edge, color="grey", linewidth=0.6, linestyle=":")
    axes.set_title(data["title"])
    axes.set_xlabel("result")
    axes.set_ylabel(data["unit"])
    axes.legend(loc="best", fontsize="small")
    return figure
