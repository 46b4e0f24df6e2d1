"""Control-chart data of one series, for the API (JSON, PNG, SVG)."""
from __future__ import annotations

from typing import Any

from django.conf import settings

from analyses.errors import InvalidInput, NotFound
from analyses.models import ControlBaseline, SeriesKind
from analyses.selectors.series_names import SeriesNames, code_range, point_names, series_names
from analyses.selectors.trend_series import trend_series_frame

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
    production) or EWMA; the baseline is QA's, else its first 20 results. The data name
    the product, the control material or lots, the method with its unit and each point's
    sample; a production chart carries the specification limits of its latest result.
    Four queries whatever the series' length."""
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
    test_ids = [int(t) for t in frame["test_id"]]
    names = series_names([series_key])[series_key]
    points = point_names(test_ids)
    last = points[test_ids[-1]]
    context = {
        "labels": [points[t].sample_label for t in test_ids],
        "lots": [points[t].lot_code for t in test_ids],
        "received": [None if stamp is None or stamp != stamp else stamp.isoformat() for stamp in frame["received_at"]],
        "unit": last.unit or names.unit,
        "specification": None if names.kind == SeriesKind.QC_CHECK else {"lower": last.spec_minimum, "upper": last.spec_maximum},
    }
    context["title"], context["subtitle"] = chart_titles(names, chart, context["unit"], context["lots"])
    if chart == "ewma":
        chart_data = ewma_chart(values, mean, sd, settings.TREND_EWMA_SMOOTHING, settings.TREND_EWMA_WIDTH)
        data = ewma_chart_data(chart_data, **context)
    else:
        rules = westgard_evaluate if frame["kind"].iloc[0] == SeriesKind.QC_CHECK else nelson_evaluate
        data = shewhart_chart_data(values, mean, sd, rules(values, mean, sd), **context)
    data["series_key"] = series_key
    data["test_ids"] = test_ids
    data["product"] = {"code": names.product_code, "name": names.product_name}
    data["control_material"] = names.material
    data["method"] = {"code": names.method_code, "title": names.method_title, "unit": context["unit"]}
    return data


def chart_titles(names: SeriesNames, chart: str, unit: str, lots: list[str]) -> tuple[str, str]:
    """Title (the chart and the method with its unit) and subtitle (whose results, which rules)."""
    what = {"ewma": f"EWMA chart (λ {settings.TREND_EWMA_SMOOTHING:g}, L {settings.TREND_EWMA_WIDTH:g})"}.get(
        chart, "Control chart" if names.kind == SeriesKind.QC_CHECK else "Production chart"
    )
    title = f"{what}: {names.method_title}, {unit}" if unit else f"{what}: {names.method_title}"
    if names.kind == SeriesKind.QC_CHECK:
        subtitle = f"control material {names.material} · product {names.product}"
        rules = "Westgard rules"
    else:
        subtitle = f"product {names.product} · lots {code_range(lots)}"
        rules = "Nelson rules"
    return title, subtitle + ("" if chart == "ewma" else f" · {rules}")
