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
