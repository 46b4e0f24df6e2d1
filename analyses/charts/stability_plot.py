"""Stability plots: data, fitted line, one-sided confidence bound, limit, shelf life.

The dict: title, unit, time_unit, points [{time, value, lot}], lines [{lot, times,
fitted, bound}], limit, limit_side, shelf_life, estimate, extrapolation_cap, last_time,
capped, extrapolated, pooling.
"""
from __future__ import annotations

from collections.abc import Hashable, Sequence
from typing import Any

import numpy as np

from analyses.charts.render import figure_png, figure_svg, json_number, json_numbers, new_figure
from analyses.stability.shelf_life import ShelfLifeResult


def stability_plot_data(
    times: Sequence[float],
    values: Sequence[float],
    result: ShelfLifeResult,
    *,
    lots: Sequence[Hashable] | None = None,
    title: str = "",
    unit: str = "",
    time_unit: str = "months",
) -> dict[str, Any]:
    lot_names = [str(lot) for lot in lots] if lots is not None else ["all"] * len(times)
    return {
        "title": title,
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


def stability_plot_png(data: dict[str, Any]) -> bytes:
    return figure_png(_draw(data))


def stability_plot_svg(data: dict[str, Any]) -> bytes:
    return figure_svg(_draw(data))


def _draw(data: dict[str, Any]):
    figure = new_figure()
    axes = figure.add_subplot()
    colours = {}
    for lot in sorted({p["lot"] for p in data["points"]}):
        points = [p for p in data["points"] if p["lot"] == lot]
        drawn = axes.scatter([p["time"] for p in points], [p["value"] for p in points], s=18, label=f"lot {lot}")
        colours[lot] = drawn.get_facecolor()[0]
    for line in data["lines"]:
        colour = colours.get(line["lot"], "black")
        times = np.array(line["times"], dtype=float)
        axes.plot(times, np.array(line["fitted"], dtype=float), color=colour, linewidth=1)
        axes.plot(times, np.array(line["bound"], dtype=float), color=colour, linewidth=1, linestyle="--")
    axes.axhline(data["limit"], color="#c0392b", linewidth=1, label=f"limit ({data['limit_side']})")
    if data["shelf_life"] is not None:
        axes.axvline(data["shelf_life"], color="black", linewidth=1, linestyle=":", label="shelf life")
    axes.axvline(data["last_time"], color="grey", linewidth=0.6, linestyle="-.", label="last result")
    axes.set_title(data["title"])
    axes.set_xlabel(f"time ({data['time_unit']})")
    axes.set_ylabel(data["unit"])
    axes.legend(loc="best", fontsize="small")
    return figure
