"""Stability plots: data, fitted line, one-sided confidence bound, limit, shelf life.

The dict: title, subtitle, unit, time_unit, points [{time, value, lot}], lines [{lot, times,
fitted, bound}], limit, limit_side, shelf_life, estimate, extrapolation_cap, last_time,
capped, extrapolated, pooling. How everything looks comes from ``style``; the legend names
every lot's fitted line and its one-sided 95 % confidence bound (ICH Q1E).
"""
from __future__ import annotations

from collections.abc import Hashable, Sequence
from typing import Any

import numpy as np
from matplotlib.figure import Figure
from matplotlib.ticker import MaxNLocator

from analyses.charts import style
from analyses.charts.render import figure_png, figure_svg, json_number, json_numbers, new_figure
from analyses.stability.shelf_life import ShelfLifeResult


def stability_plot_data(
    times: Sequence[float],
    values: Sequence[float],
    result: ShelfLifeResult,
    *,
    lots: Sequence[Hashable] | None = None,
    title: str = "",
    subtitle: str = "",
    unit: str = "",
    time_unit: str = "months",
) -> dict[str, Any]:
    lot_names = [str(lot) for lot in lots] if lots is not None else ["all"] * len(times)
    return {
        "title": title,
        "subtitle": subtitle,
        "unit": unit,
        "time_unit": time_unit,
        "points": [
            {"time": json_number(t), "value": json_number(v), "lot": lot}
            for t, v, lot in zip(times, values, lot_names)
        ],
        "lines": [
            {
                "lot": lot.lot,
                "times": json_numbers(lot.curve.times),
                "fitted": json_numbers(lot.curve.fitted),
                "bound": json_numbers(lot.curve.bound),
            }
            for lot in result.lots
        ],
        "limit": result.limit,
        "limit_side": result.limit_side,
        "shelf_life": json_number(result.shelf_life),
        "estimate": json_number(result.estimate),
        "extrapolation_cap": json_number(result.extrapolation_cap),
        "last_time": result.last_time,
        "capped": result.capped,
        "extrapolated": result.extrapolated,
        "pooling": result.pooling.model,
    }


def stability_plot_figure(data: dict[str, Any]) -> Figure:
    return _draw(data)


def stability_plot_png(data: dict[str, Any]) -> bytes:
    return figure_png(_draw(data))


def stability_plot_svg(data: dict[str, Any]) -> bytes:
    return figure_svg(_draw(data))


def _draw(data: dict[str, Any]) -> Figure:
    figure = new_figure()
    axes = figure.add_subplot()
    lots = sorted({p["lot"] for p in data["points"]} | {line["lot"] for line in data["lines"] if line["lot"] != "all"})
    looks = {lot: (style.LOT_COLOURS[i % len(style.LOT_COLOURS)], style.LOT_MARKERS[i % len(style.LOT_MARKERS)]) for i, lot in enumerate(lots)}
    for lot in lots:
        points = [p for p in data["points"] if p["lot"] == lot]
        if points:
            colour, marker = looks[lot]
            axes.scatter([p["time"] for p in points], [p["value"] for p in points], s=22, color=colour, marker=marker,
                         label=f"results, lot {lot}", zorder=3)
    for line in data["lines"]:
        pooled = line["lot"] == "all"
        colour = style.INK if pooled else looks.get(line["lot"], (style.RESULT, "o"))[0]
        whose = "lots pooled" if pooled else f"lot {line['lot']}"
        times = np.array(line["times"], dtype=float)
        axes.plot(times, np.array(line["fitted"], dtype=float), color=colour, linewidth=1.2,
                  linestyle=style.FITTED_LINE_STYLE, label=f"fitted line, {whose}")
        axes.plot(times, np.array(line["bound"], dtype=float), color=colour, linewidth=1.0,
                  linestyle=style.BOUND_LINE_STYLE, label=f"one-sided 95 % confidence bound, {whose}")
    side = "maximum" if data["limit_side"] == "upper" else "minimum"
    axes.axhline(data["limit"], label=f"acceptance {side} {data['limit']:g}", **style.line_kwargs(style.SPEC_LINE))
    if data["shelf_life"] is not None:
        axes.axvline(data["shelf_life"], label=f"shelf life {data['shelf_life']:.1f} {data['time_unit']}",
                     **style.line_kwargs(style.SHELF_LIFE_LINE))
    axes.axvline(data["last_time"], label="last result", **style.line_kwargs(style.LAST_RESULT_LINE))
    axes.xaxis.set_major_locator(MaxNLocator(integer=True))
    title = data["title"] + (f"\n{data['subtitle']}" if data.get("subtitle") else "")
    axes.set_title(title, fontsize=style.TITLE_FONT_SIZE, color=style.INK, loc="left")
    axes.set_xlabel(f"time on storage ({data['time_unit']})", fontsize=style.FONT_SIZE, color=style.INK)
    axes.set_ylabel(data["unit"], fontsize=style.FONT_SIZE, color=style.INK)
    axes.tick_params(labelsize=style.SMALL_FONT_SIZE, colors=style.INK)
    axes.legend(loc="center left", bbox_to_anchor=(1.01, 0.5), fontsize=style.SMALL_FONT_SIZE, frameon=False)
    return figure
