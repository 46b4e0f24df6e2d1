"""Reads of stability studies: lists, pull points, and plot data."""
from __future__ import annotations

from typing import TYPE_CHECKING, Any

from django.db.models import QuerySet

from analyses.errors import InvalidInput, NotFound
from analyses.models import PullPoint, StabilityStudy, Test, TestState
from plugins.registry import get_registry

if TYPE_CHECKING:
    import pandas as pd

# pandas and the statistics are imported inside the functions: the URLconf imports this module.

RESULT_COLUMNS = ["test_id", "method_code", "value", "condition_id", "temperature_c", "light", "lot", "months", "pull_id"]


def study_results(study: StabilityStudy) -> pd.DataFrame:
    """Accepted results of the study's pulls, one row per test."""
    import pandas as pd

    rows = Test.objects.filter(sample__pull_point__study=study, state=TestState.ACCEPTED, value__isnull=False).values_list(
        "id", "method_code", "value", "sample__pull_point__condition_id", "sample__pull_point__condition__temperature_c",
        "sample__pull_point__condition__light", "sample__pull_point__lot__code", "sample__pull_point__elapsed_months",
        "sample__pull_point__id",
    )
    return pd.DataFrame.from_records(list(rows), columns=RESULT_COLUMNS)


def study_list() -> QuerySet[StabilityStudy]:
    return StabilityStudy.objects.select_related("product").prefetch_related("lots", "conditions", "attributes")


def study_get(study_id: int | str) -> StabilityStudy:
    """The study, or NotFound (ids beyond a 64-bit key cannot exist)."""
    study_id = int(study_id)
    study = StabilityStudy.objects.filter(pk=study_id).first() if 0 < study_id < 2**63 else None
    if study is None:
        raise NotFound(f"stability study {study_id} not found")
    return study


def pull_point_list(study_id: int) -> QuerySet[PullPoint]:
    study = study_get(study_id)
    return PullPoint.objects.filter(study=study).select_related("condition", "lot", "sample")


def study_plot(study_id: int, method_code: str, condition_id: int) -> dict[str, Any]:
    """Data, fitted line, one-sided bound, limit and shelf life of one attribute under one condition."""
    from analyses.charts.stability_plot import stability_plot_data
    from analyses.stability.shelf_life import shelf_life_estimate

    study = study_get(study_id)
    attribute = study.attributes.filter(method_code=method_code).first()
    if attribute is None:
        raise InvalidInput.for_field("method", f"{method_code!r} is not an attribute of study {study.code}")
    condition = study.conditions.filter(pk=condition_id).first()
    if condition is None:
        raise InvalidInput.for_field("condition", f"{condition_id} is not a condition of study {study.code}")
    rows = study_results(study)
    rows = rows[(rows["method_code"] == method_code) & (rows["condition_id"] == condition.pk)]
    limit, side = attribute.shelf_life_limit
    result = shelf_life_estimate(rows["months"], rows["value"], limit, limit_side=side, lots=rows["lot"].tolist())
    return stability_plot_data(
        rows["months"].tolist(), rows["value"].tolist(), result, lots=rows["lot"].tolist(),
        title=f"{study.code}: {method_code} at {condition}",
        unit=get_registry().get(method_code).result_unit if method_code in get_registry() else "",
    )
