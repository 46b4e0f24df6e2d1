"""Control-chart data of one series, for the API (JSON, PNG, SVG)."""
from __future__ import annotations

from typing import Any

from django.conf import settings

from analyses.errors import InvalidInput, NotFound
from analyses.models import ControlBaseline, SeriesKind
from analyses.selectors.trend_series import trend_series_frame
from plugins.registry import get_registry

# The charts and rules (numpy, scipy, matplotlib) are imported inside series_chart: the
# URLconf imports this module.

CHART_KINDS = ("shewhart", "ewma")


def series_overview() -> list[dict[str, Any]]:
    """Every series with its number of results and its baseline, if any."""
    frame = trend_series_frame()
    baselines = {b.series_key: b for b in ControlBaseline.objects.all()}
    if frame.empty:
        return []
    counts = frame.groupby("series_id").agg(kind=("kind", "first"), method_code=("method_code", "first"), n=("value", "size"))
    return [
        {
            "series_key": key,
            "kind": row.kind,
            "method_code": row.method_code,
            "results": int(row.n),
            "baseline": None if key not in baselines else {"mean": baselines[key].mean, "sd": baselines[key].sd, "source": baselines[key].source},
        }
        for key, row in counts.iterrows()
    ]


def series_chart(series_key: str, chart: str = "shewhart") -> dict[str, Any]:
    """Chart data of a series: Shewhart (Westgard rules for QC series, Nelson rules for
    production) or EWMA; the baseline is QA's, else its first 20 results."""
    from analyses.charts.control_chart import ewma_chart_data, shewhart_chart_data
    from analyses.trends.ewma import ewma_chart
    from analyses.trends.run_rules import nelson_evaluate
    from analyses.trends.westgard import MINIMUM_BASELINE_POINTS, baseline_establish, westgard_evaluate

    if chart not in CHART_KINDS:
        raise InvalidInput.for_field("chart", f"must be one of {', '.join(CHART_KINDS)}")
    frame = trend_series_frame([series_key])
    if frame.empty:
        raise NotFound(f"series {series_key} has no accepted results")
    values = frame["value"].to_numpy()
    labels = [f"test {t}" for t in frame["test_id"]]
    baseline = ControlBaseline.objects.filter(series_key=series_key).first()
    if baseline is not None:
        mean, sd = baseline.mean, baseline.sd
    else:
        if len(values) < MINIMUM_BASELINE_POINTS:
            raise InvalidInput.for_field(
                "series_key", f"has {len(values)} results and no baseline; a chart needs {MINIMUM_BASELINE_POINTS} or a baseline from QA"
            )
        established = baseline_establish(values[:MINIMUM_BASELINE_POINTS])
        mean, sd = established.mean, established.sd
    method_code = frame["method_code"].iloc[0]
    unit = get_registry().unit_of(method_code) if method_code in get_registry() else ""
    title = f"{series_key} ({method_code})"
    if chart == "ewma":
        chart_data = ewma_chart(values, mean, sd, settings.TREND_EWMA_SMOOTHING, settings.TREND_EWMA_WIDTH)
        data = ewma_chart_data(chart_data, labels=labels, title=f"EWMA {title}", unit=unit)
    else:
        rules = westgard_evaluate if frame["kind"].iloc[0] == SeriesKind.QC_CHECK else nelson_evaluate
        data = shewhart_chart_data(values, mean, sd, rules(values, mean, sd), labels=labels, title=title, unit=unit)
    data["series_key"] = series_key
    data["test_ids"] = [int(t) for t in frame["test_id"]]
    return data
