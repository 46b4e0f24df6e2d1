"""Control charts: a JSON-ready data dict, and the matplotlib Figure, PNG and SVG drawn from it.

The dict: title, subtitle, chart ("shewhart" or "ewma"), unit, x_label, dates {first, last},
points [{index, number, label, lot, received_at, value, flagged, rules, rule_names}],
centre, limits {lower, upper} (numbers, or one per point for EWMA),
zones [{sd, lower, upper}] (±1 and ±2 s; the limits are ±3 s),
specification {lower, upper} (production charts; None where the line has no such limit),
flagged [indices], episodes [{rule, side, first, last, points, name, words}].
``index`` counts from 0 in the series; ``number`` is the result's place in order of receipt
(1, 2, ...), which the x axis shows; ``label`` is the sample's label.
How everything looks comes from ``style``.
"""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np
from matplotlib.figure import Figure
from matplotlib.ticker import MaxNLocator
from matplotlib.transforms import blended_transform_factory

from analyses.charts import style
from analyses.charts.render import figure_png, figure_svg, json_number, json_numbers, new_figure
from analyses.trends.episodes import Episode
from analyses.trends.ewma import EwmaChart
from analyses.trends.rules import rule_in_words, rule_short_name

LEGEND_LINES = 4  # the most entries a control chart's legend has


def control_chart_data(
    values: Sequence[float],
    *,
    centre: float,
    lower: float | Sequence[float],
    upper: float | Sequence[float],
    episodes: Sequence[Episode] = (),
    labels: Sequence[str] | None = None,
    lots: Sequence[str] | None = None,
    received: Sequence[str] | None = None,
    zones: Sequence[tuple[float, float, float]] = (),
    specification: Mapping[str, float | None] | None = None,
    title: str = "",
    subtitle: str = "",
    unit: str = "",
    chart: str = "shewhart",
) -> dict[str, Any]:
    """Chart data for any control chart; ``zones`` holds (k, lower, upper) lines at ±k s;
    ``received`` holds each result's ISO date (or time) of receipt."""
    rules_at: dict[int, list[str]] = {}
    for episode in episodes:
        for point in episode.points:
            rules_at.setdefault(point, []).append(episode.rule)
    points = []
    for i, value in enumerate(values):
        rules = sorted(set(rules_at.get(i, [])))
        points.append({
            "index": i,
            "number": i + 1,
            "label": str(labels[i]) if labels is not None else str(i + 1),
            "lot": str(lots[i]) if lots is not None else None,
            "received_at": str(received[i]) if received is not None else None,
            "value": json_number(value),
            "flagged": i in rules_at,
            "rules": rules,
            "rule_names": [rule_short_name(rule) for rule in rules],
        })
    dates = _date_range(received)
    return {
        "title": title,
        "subtitle": subtitle,
        "chart": chart,
        "unit": unit,
        "x_label": "result no., in order of receipt" + (f" ({dates['first']} to {dates['last']})" if dates else ""),
        "dates": dates,
        "points": points,
        "centre": json_number(centre),
        "limits": {"lower": _limit(lower), "upper": _limit(upper)},
        "zones": [{"sd": k, "lower": json_number(lo), "upper": json_number(hi)} for k, lo, hi in zones],
        "specification": None if specification is None else {
            "lower": json_number(specification.get("lower")), "upper": json_number(specification.get("upper")),
        },
        "flagged": sorted(rules_at),
        "episodes": [
            {
                "rule": e.rule, "side": e.side, "first": e.first, "last": e.last, "points": list(e.points),
                "name": rule_short_name(e.rule), "words": rule_in_words(e.rule, e.side),
            }
            for e in episodes
        ],
    }


def shewhart_chart_data(
    values: Sequence[float], mean: float, sd: float, episodes: Sequence[Episode] = (), **context: Any
) -> dict[str, Any]:
    """Levey-Jennings/Shewhart chart: centre at the mean, limits at ±3 s, zones at ±1 and ±2 s.
    ``context``: labels, lots, received, specification, title, subtitle, unit."""
    return control_chart_data(
        values,
        centre=mean,
        lower=mean - 3 * sd,
        upper=mean + 3 * sd,
        episodes=episodes,
        zones=[(k, mean - k * sd, mean + k * sd) for k in (1, 2)],
        chart="shewhart",
        **context,
    )


def ewma_chart_data(chart: EwmaChart, **context: Any) -> dict[str, Any]:
    """EWMA chart: the plotted points are the EWMA statistic, limits vary per point."""
    data = control_chart_data(
        chart.statistic,
        centre=chart.centre,
        lower=chart.lower,
        upper=chart.upper,
        episodes=chart.episodes,
        chart="ewma",
        **context,
    )
    data["results"] = json_numbers(chart.values)
    data["smoothing"], data["width"] = chart.smoothing, chart.width
    return data


def control_chart_figure(data: Mapping[str, Any]) -> Figure:
    """The chart as a matplotlib Figure: axes[0] holds the chart, axes[1] the rules in words."""
    return _draw(data)


def control_chart_png(data: Mapping[str, Any]) -> bytes:
    return figure_png(_draw(data))


def control_chart_svg(data: Mapping[str, Any]) -> bytes:
    return figure_svg(_draw(data))


def _limit(limit: float | Sequence[float]) -> float | None | list[float | None]:
    return json_numbers(limit) if np.ndim(limit) else json_number(limit)


def _date_range(received: Sequence[str] | None) -> dict[str, str] | None:
    days = sorted(str(r)[:10] for r in received or () if r)
    return {"first": days[0], "last": days[-1]} if days else None


def _draw(data: Mapping[str, Any]) -> Figure:
    rules = _rules_in_words(data)
    figure = new_figure(notes=max(len(rules) + 1, LEGEND_LINES))
    axes, notes = figure.axes
    points = data["points"]
    x = np.array([p["number"] for p in points], dtype=float)
    y = np.array([np.nan if p["value"] is None else p["value"] for p in points], dtype=float)
    ewma = data.get("chart") == "ewma"
    if ewma and data.get("results"):
        axes.scatter(x, np.array(data["results"], dtype=float), label="result", **style.RAW_RESULT_MARKER)
    axes.plot(x, y, linewidth=1, label="EWMA of the results" if ewma else "result", **style.RESULT_MARKER)
    flagged = np.array([p["flagged"] for p in points], dtype=bool)
    if flagged.any():
        axes.scatter(x[flagged], y[flagged], label="flagged by a rule", **style.FLAGGED_MARKER)
    _horizontal(axes, data["centre"], style.CENTRE_LINE, f"mean {_number(data['centre'])}" if not ewma else f"target {_number(data['centre'])}")
    _limits(axes, x, data, ewma)
    _specification(axes, data.get("specification"))
    _rule_marks(axes, points, data["episodes"], x, y)
    axes.xaxis.set_major_locator(MaxNLocator(integer=True, min_n_ticks=3))
    axes.set_xlim(0.5, max(len(points), 1) + 0.5)
    axes.set_xlabel(data.get("x_label") or "result no.", fontsize=style.FONT_SIZE, color=style.INK)
    axes.set_ylabel(data["unit"], fontsize=style.FONT_SIZE, color=style.INK)
    axes.tick_params(labelsize=style.SMALL_FONT_SIZE, colors=style.INK)
    title = data["title"] + (f"\n{data['subtitle']}" if data.get("subtitle") else "")
    axes.set_title(title, fontsize=style.TITLE_FONT_SIZE, color=style.INK, loc="left")
    axes.margins(y=0.12)  # room for the rules' names above and below the outermost points
    _notes(notes, rules)
    handles, labels = axes.get_legend_handles_labels()
    notes.legend(handles, labels, loc="upper right", fontsize=style.SMALL_FONT_SIZE, frameon=False)
    return figure


def _number(value: float | None) -> str:
    return "" if value is None else f"{value:.4g}"


def _label_at_right(axes, y: float, text: str, colour: str) -> None:
    """A line's label just right of the plot, at the line's height."""
    transform = blended_transform_factory(axes.transAxes, axes.transData)
    axes.annotate(text, xy=(1.0, y), xycoords=transform, xytext=(4, 0), textcoords="offset points",
                  va="center", ha="left", fontsize=style.SMALL_FONT_SIZE, color=colour, annotation_clip=False)


def _horizontal(axes, y: float | None, line: style.LineStyle, label: str) -> None:
    if y is None:
        return
    axes.axhline(y, **style.line_kwargs(line))
    _label_at_right(axes, y, label, line.colour)


def _limits(axes, x: np.ndarray, data: Mapping[str, Any], ewma: bool) -> None:
    """±1, ±2 s zones and the ±3 s limits (EWMA: its limits, one per point), each labelled."""
    for zone in data["zones"]:
        k = int(zone["sd"])
        _horizontal(axes, zone["upper"], style.SIGMA_LINES[k], style.sigma_label(k))
        _horizontal(axes, zone["lower"], style.SIGMA_LINES[k], style.sigma_label(-k))
    width = data.get("width", 3)
    for name, sign in (("upper", 1), ("lower", -1)):
        limit = data["limits"][name]
        if isinstance(limit, list):
            values = np.array([np.nan if v is None else v for v in limit], dtype=float)
            axes.step(x, values, where="mid", **style.line_kwargs(style.SIGMA_LINES[3]))
            finite = values[np.isfinite(values)]
            if len(finite):
                label = f"{'+' if sign > 0 else chr(0x2212)}{width:g} \u03c3 EWMA limit"
                _label_at_right(axes, float(finite[-1]), label, style.SIGMA)
        elif limit is not None:
            _horizontal(axes, limit, style.SIGMA_LINES[3], style.sigma_label(3 * sign))


def _specification(axes, specification: Mapping[str, float | None] | None) -> None:
    """The specification limits, in the legend once and labelled beside the plot."""
    if not specification:
        return
    legend = "specification limit"
    for name, words in (("upper", "spec max"), ("lower", "spec min")):
        limit = specification.get(name)
        if limit is not None:
            axes.axhline(limit, label=legend, **style.line_kwargs(style.SPEC_LINE))
            legend = None  # one legend entry for both lines
            _label_at_right(axes, limit, f"{words} {_number(limit)}", style.SPECIFICATION)


def _rule_marks(axes, points: Sequence[Mapping[str, Any]], episodes: Sequence[Mapping[str, Any]], x: np.ndarray, y: np.ndarray) -> None:
    """Beside the point where each episode fired (its last point): the rules' names and the sample."""
    fired: dict[int, list[str]] = {}
    for episode in episodes:
        names = fired.setdefault(int(episode["last"]), [])
        if episode["name"] not in names:
            names.append(episode["name"])
    middle = (x[0] + x[-1]) / 2 if len(x) else 0
    for index, names in sorted(fired.items()):
        if not np.isfinite(y[index]):
            continue
        # above a point that broke a rule upwards, below one that broke it downwards, and
        # towards the middle of the chart, where the drift that set the rule off is not
        above = _side_of(index, episodes) != "-"
        left = x[index] > middle
        axes.annotate(
            ", ".join(names) + "\n" + points[index]["label"], xy=(x[index], y[index]),
            xytext=(-8 if left else 8, 8 if above else -8), textcoords="offset points",
            ha="right" if left else "left", va="bottom" if above else "top",
            fontsize=style.SMALL_FONT_SIZE, color=style.FLAGGED, fontweight="bold",
            bbox={"boxstyle": "round,pad=0.2", "facecolor": "white", "edgecolor": "none", "alpha": 0.85},
            arrowprops={"arrowstyle": "-", "color": style.FLAGGED, "linewidth": 0.6},
        )


def _side_of(index: int, episodes: Sequence[Mapping[str, Any]]) -> str:
    return next((e["side"] for e in episodes if int(e["last"]) == index and e["side"]), "+")


def _rules_in_words(data: Mapping[str, Any]) -> list[str]:
    seen: list[str] = []
    for episode in data["episodes"]:
        if episode["words"] not in seen:
            seen.append(episode["words"])
    return seen


def _notes(notes, rules: Sequence[str]) -> None:
    notes.set_axis_off()
    if not rules:
        return
    notes.text(0.0, 1.0, "Rules broken:\n" + "\n".join(f"\u2022 {line}" for line in rules), transform=notes.transAxes,
               va="top", ha="left", fontsize=style.SMALL_FONT_SIZE, color=style.INK)
