"""Control-chart data and renderings. PNG signature per the PNG specification
(ISO/IEC 15948: 89 50 4E 47 0D 0A 1A 0A); SVG must parse as XML with an <svg> root.
Series values are invented QC results from a made-up lab (Northmoor Oils).
"""
from __future__ import annotations

import json
import xml.etree.ElementTree as ET

import numpy as np

from analyses.charts.control_chart import (
    control_chart_png,
    control_chart_svg,
    ewma_chart_data,
    shewhart_chart_data,
)
from analyses.trends.ewma import ewma_chart
from analyses.trends.westgard import westgard_evaluate

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"
VALUES = [0.52, 0.49, 0.50, 0.55, 0.61, 0.47, 0.50, 0.51, 0.62, 0.63, 0.50, 0.48]  # AV, mg KOH/g (invented)
MEAN, SD = 0.50, 0.04


def shewhart():
    episodes = westgard_evaluate(VALUES, MEAN, SD)
    return shewhart_chart_data(VALUES, MEAN, SD, episodes, title="AV control sample", unit="mg KOH/g"), episodes


def test_shewhart_data_has_points_centre_limits_and_flags():
    data, episodes = shewhart()
    assert data["centre"] == MEAN
    assert data["limits"]["lower"] == MEAN - 3 * SD and data["limits"]["upper"] == MEAN + 3 * SD
    assert [z["sd"] for z in data["zones"]] == [1, 2]
    flagged = sorted({p for e in episodes for p in e.points})
    assert data["flagged"] == flagged and flagged  # 0.61 is +2.75 s; 0.62, 0.63 two in a row beyond +2 s
    assert [p["index"] for p in data["points"] if p["flagged"]] == flagged
    assert "westgard_2_2s" in data["points"][9]["rules"]
    json.dumps(data, allow_nan=False)


def test_ewma_data_has_limits_per_point():
    chart = ewma_chart(VALUES, MEAN, SD)
    data = ewma_chart_data(chart)
    assert len(data["limits"]["upper"]) == len(VALUES)
    assert data["limits"]["upper"][0] < data["limits"]["upper"][-1]
    assert [p["value"] for p in data["points"]] == chart.statistic.tolist()
    assert data["results"] == VALUES
    assert data["flagged"] == np.flatnonzero(chart.flagged).tolist()
    json.dumps(data, allow_nan=False)


def test_png_and_svg():
    data, _ = shewhart()
    assert control_chart_png(data).startswith(PNG_SIGNATURE)
    root = ET.fromstring(control_chart_svg(data))
    assert root.tag.endswith("svg")
    assert control_chart_png(ewma_chart_data(ewma_chart(VALUES, MEAN, SD))).startswith(PNG_SIGNATURE)


# --- What QA reads on the drawn figure (matplotlib objects, not pixels) ---------------------

LABELS = [f"NM-QC-A-{i + 1:02d}" for i in range(len(VALUES))]  # invented sample labels
RECEIVED = [f"2026-03-{i + 1:02d}T08:00:00+00:00" for i in range(len(VALUES))]


def _texts(axes) -> list[str]:
    return [text.get_text() for text in axes.texts]


def _figure(data):
    from analyses.charts.control_chart import control_chart_figure

    figure = control_chart_figure(data)
    figure.canvas.draw()  # tick labels are set at drawing
    return figure


def _tick_numbers(axes) -> list[str]:
    return [label.get_text() for label in axes.get_xticklabels() if label.get_text()]


def test_a_control_chart_names_its_material_method_and_unit_and_labels_every_s_line():
    episodes = westgard_evaluate(VALUES, MEAN, SD)
    data = shewhart_chart_data(
        VALUES, MEAN, SD, episodes, labels=LABELS, received=RECEIVED, unit="mg KOH/g",
        title="Control chart: Acid value, mg KOH/g", subtitle="control material NM-QC-A · product NMO Northmoor oil",
    )
    axes, notes = _figure(data).axes
    assert axes.get_title(loc="left") == "Control chart: Acid value, mg KOH/g\ncontrol material NM-QC-A · product NMO Northmoor oil"
    texts = _texts(axes)
    for label in ("+1 s", "\u22121 s", "+2 s", "\u22122 s", "+3 s", "\u22123 s", "mean 0.5"):
        assert label in texts
    # x: whole result numbers, and the dates in the axis label
    ticks = _tick_numbers(axes)
    assert ticks and all(tick.lstrip("\u2212-").isdigit() for tick in ticks)
    assert axes.get_xlabel() == "result no., in order of receipt (2026-03-01 to 2026-03-12)"
    assert axes.get_ylabel() == "mg KOH/g"
    # 0.61 is +2.75 s (1-2s); 0.62 and 0.63 are two in a row beyond +2 s (2-2s) and 0.63 is +3.25 s
    # (1-3s): the rules are named beside the point where each fired, with its sample
    assert "1-2s\nNM-QC-A-05" in texts and "1-2s, 1-3s, 2-2s\nNM-QC-A-10" in texts
    rules = notes.texts[0].get_text()
    assert "2-2s: two consecutive results more than 2 s above the mean" in rules
    assert "1-3s: one result more than 3 s above the mean" in rules
    assert not any("test " in text for text in texts)


def test_a_production_chart_draws_the_specification_limits():
    from analyses.charts import style
    from analyses.trends.run_rules import nelson_evaluate

    data = shewhart_chart_data(
        VALUES, MEAN, SD, nelson_evaluate(VALUES, MEAN, SD), labels=LABELS, lots=[f"NM-{i}" for i in range(12)],
        received=RECEIVED, specification={"lower": 0.3, "upper": 0.7}, unit="mg KOH/g",
        title="Production chart: Acid value, mg KOH/g", subtitle="product NMO Northmoor oil · lots NM-0 to NM-11 (12)",
    )
    axes, notes = _figure(data).axes
    spec_lines = [line for line in axes.get_lines() if line.get_color() == style.SPECIFICATION]
    assert sorted(line.get_ydata()[0] for line in spec_lines) == [0.3, 0.7]
    assert {"spec max 0.7", "spec min 0.3"} <= set(_texts(axes))
    legend = [text.get_text() for text in notes.get_legend().get_texts()]
    assert "specification limit" in legend and legend.count("specification limit") == 1
    assert data["points"][0]["lot"] == "NM-0" and data["points"][0]["label"] == "NM-QC-A-01"


def test_an_ewma_chart_labels_its_limits_and_marks_the_rule():
    chart = ewma_chart(VALUES, MEAN, SD)
    data = ewma_chart_data(chart, labels=LABELS, received=RECEIVED, unit="mg KOH/g", title="EWMA chart (λ 0.2, L 3): Acid value, mg KOH/g")
    axes, notes = _figure(data).axes
    texts = _texts(axes)
    assert "+3 \u03c3 EWMA limit" in texts and "\u22123 \u03c3 EWMA limit" in texts and "target 0.5" in texts
    flagged = np.flatnonzero(chart.flagged)
    assert flagged.size  # the run of 0.61, 0.62, 0.63 pushes the EWMA above its limit
    assert any(text.startswith("EWMA\n") for text in texts)
    assert notes.texts[0].get_text().startswith("Rules broken:\n\u2022 EWMA: the EWMA of recent results above its control limit")
    assert all(tick.isdigit() for tick in _tick_numbers(axes))


def test_a_chart_with_nothing_flagged_has_no_rule_notes():
    quiet = [0.50, 0.51, 0.49, 0.50, 0.52, 0.48]
    data = shewhart_chart_data(quiet, MEAN, SD, westgard_evaluate(quiet, MEAN, SD), labels=LABELS[:6])
    axes, notes = _figure(data).axes
    assert not notes.texts and data["flagged"] == []
    assert axes.get_xlabel() == "result no., in order of receipt"
