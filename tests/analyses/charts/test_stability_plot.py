"""Stability plot data and renderings (PNG signature per ISO/IEC 15948; SVG parses as XML).
Data are invented (Northmoor Oils, PV in meq/kg; limit 10 per Codex CXS 210, references.md "found").
"""
from __future__ import annotations

import json
import xml.etree.ElementTree as ET

import numpy as np

from analyses.charts.stability_plot import stability_plot_data, stability_plot_png, stability_plot_svg
from analyses.stability.shelf_life import shelf_life_estimate

TIMES = np.tile([0.0, 3.0, 6.0, 9.0, 12.0], 2)
VALUES = 1.0 + 0.4 * TIMES + np.array([0.1, -0.1, 0.2, 0.0, -0.1, 0.0, 0.1, -0.2, 0.1, 0.05])
LOTS = ["A"] * 5 + ["B"] * 5


def plot_data():
    result = shelf_life_estimate(TIMES, VALUES, 10.0, lots=LOTS)
    return stability_plot_data(TIMES, VALUES, result, lots=LOTS, title="PV at 25 °C", unit="meq O2/kg"), result


def test_data_holds_points_lines_limit_and_shelf_life():
    data, result = plot_data()
    assert len(data["points"]) == 10 and {p["lot"] for p in data["points"]} == {"A", "B"}
    assert data["limit"] == 10.0 and data["limit_side"] == "upper"
    assert data["shelf_life"] == result.shelf_life and data["pooling"] == result.pooling.model
    line = data["lines"][0]
    assert len(line["times"]) == len(line["fitted"]) == len(line["bound"])
    json.dumps(data, allow_nan=False)


def test_png_and_svg():
    data, _ = plot_data()
    assert stability_plot_png(data).startswith(b"\x89PNG\r\n\x1a\n")
    assert ET.fromstring(stability_plot_svg(data)).tag.endswith("svg")


def test_the_legend_names_each_lots_results_fitted_line_and_95_percent_bound():
    from analyses.charts.stability_plot import stability_plot_figure

    result = shelf_life_estimate(TIMES, VALUES, 10.0, lots=LOTS)
    data = stability_plot_data(TIMES, VALUES, result, lots=LOTS, title="Stability: Peroxide value, meq O2/kg at 25 °C, dark",
                               subtitle="product NMO Northmoor oil · lots A, B · study NM-STAB-1", unit="meq O2/kg")
    figure = stability_plot_figure(data)
    figure.canvas.draw()
    axes = figure.axes[0]
    assert axes.get_title(loc="left").startswith("Stability: Peroxide value, meq O2/kg at 25 °C, dark\nproduct NMO")
    legend = [text.get_text() for text in axes.get_legend().get_texts()]
    whose = "lots pooled" if result.pooling.model == "pooled" else "lot A"
    assert f"fitted line, {whose}" in legend
    assert f"one-sided 95 % confidence bound, {whose}" in legend
    assert {"results, lot A", "results, lot B", "acceptance maximum 10"} <= set(legend)
    assert any(entry.startswith("shelf life ") for entry in legend)
    ticks = [label.get_text() for label in axes.get_xticklabels() if label.get_text()]
    assert ticks and all(tick.lstrip("\u2212").isdigit() for tick in ticks)
    assert axes.get_xlabel() == "time on storage (months)"
