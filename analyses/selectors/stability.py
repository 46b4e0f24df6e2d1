"""Reads of stability studies: lists, pull points, and plot data."""
from __future__ import annotations

from dataclasses import asdict, dataclass
from typing import TYPE_CHECKING, Any

from django.db.models import QuerySet

from analyses.errors import InvalidInput, NotFound
from analyses.models import PullPoint, StabilityStudy, StudyAttribute, Test, TestState
from analyses.selectors.series_names import method_names
from plugins.contract import stored_exact

if TYPE_CHECKING:
    import pandas as pd

    from analyses.stability.extrapolation import ConditionRole, ExtrapolationBranch, SignificantChange

# pandas, numpy and the statistics are imported inside the functions: the URLconf imports this module.

RESULT_COLUMNS = [
    "test_id", "method_code", "value", "condition_id", "temperature_c", "light", "lot", "months", "pull_id", "value_exact",
]


def study_results(study: StabilityStudy) -> pd.DataFrame:
    """Accepted results of the study's pulls, one row per test (``value`` for the fits,
    ``value_exact`` for judging against the limits)."""
    import pandas as pd

    rows = Test.objects.filter(sample__pull_point__study=study, state=TestState.ACCEPTED, value__isnull=False).values_list(
        "id", "method_code", "value", "sample__pull_point__condition_id", "sample__pull_point__condition__temperature_c",
        "sample__pull_point__condition__light", "sample__pull_point__lot__code", "sample__pull_point__elapsed_months",
        "sample__pull_point__id", "value_exact",
    )
    return pd.DataFrame.from_records(list(rows), columns=RESULT_COLUMNS)


@dataclass(frozen=True)
class StudyExtrapolation:
    """The study's ICH Q1E Appendix A branch and what it rests on."""

    branch: ExtrapolationBranch
    roles: dict[int, ConditionRole]  # condition id → role
    changes: dict[str, dict[int, SignificantChange]]  # method code → condition id → change there
    accelerated: SignificantChange | None  # across attributes; None if not tested
    intermediate: SignificantChange | None

    def as_dict(self, conditions: dict[int, Any]) -> dict[str, Any]:
        def at(role: str, change: SignificantChange | None) -> dict[str, Any] | None:
            if change is None:
                return None
            ids = [cid for cid, r in self.roles.items() if r == role]
            return {"temperatures_c": sorted(conditions[cid].temperature_c for cid in ids)} | asdict(change)

        return {
            "branch": self.branch.code,
            "section": self.branch.section,
            "reason": self.branch.reason,
            "factor": self.branch.factor,
            "months_beyond": self.branch.months_beyond,
            "accelerated": at("accelerated", self.accelerated),
            "intermediate": at("intermediate", self.intermediate),
        }


def attribute_changes(
    attribute: StudyAttribute, rows: pd.DataFrame, roles: dict[int, ConditionRole]
) -> dict[int, SignificantChange]:
    """Significant change of one attribute under each accelerated or intermediate condition
    it was tested at; ``rows`` are the attribute's results under every condition."""
    from analyses.stability.extrapolation import initial_values, significant_change

    if not len(rows):
        return {}
    initial = initial_values(rows["months"], rows["value"], rows["lot"].tolist())
    out = {}
    for condition_id, role in roles.items():
        subset = rows[rows["condition_id"] == condition_id]
        if role in ("accelerated", "intermediate") and len(subset):
            out[condition_id] = significant_change(
                subset["months"], subset["value"], subset["lot"].tolist(), initial,
                minimum=attribute.minimum, maximum=attribute.maximum, amount=attribute.significant_change,
                exact=[stored_exact(text, value) for text, value in zip(subset["value_exact"], subset["value"])],
            )
    return out


def study_extrapolation(study: StabilityStudy, results: pd.DataFrame | None = None) -> StudyExtrapolation:
    """Which ICH Q1E branch the study's data put it on (``extrapolation.py``)."""
    from analyses.stability.extrapolation import change_across, condition_roles, extrapolation_branch

    results = study_results(study) if results is None else results
    conditions = list(study.conditions.all())
    roles = condition_roles(study.storage_temperature_c, [(c.pk, c.temperature_c, c.light) for c in conditions])
    changes = {
        attribute.method_code: attribute_changes(attribute, results[results["method_code"] == attribute.method_code], roles)
        for attribute in study.attributes.all()
    }

    def across(role: str) -> SignificantChange | None:
        ids = {cid for cid, r in roles.items() if r == role}
        return change_across([change for by_condition in changes.values() for cid, change in by_condition.items() if cid in ids])

    accelerated, intermediate = across("accelerated"), across("intermediate")
    branch = extrapolation_branch(study.storage_category, accelerated=accelerated, intermediate=intermediate)
    return StudyExtrapolation(branch, roles, changes, accelerated, intermediate)


def study_list() -> QuerySet[StabilityStudy]:
    return StabilityStudy.objects.select_related("product").prefetch_related("lots", "conditions", "attributes")


def study_get(study_id: int | str) -> StabilityStudy:
    """The study, or NotFound (ids beyond a 64-bit key cannot exist)."""
    study_id = int(study_id)
    study = StabilityStudy.objects.filter(pk=study_id).select_related("product").first() if 0 < study_id < 2**63 else None
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
    results = study_results(study)
    branch = study_extrapolation(study, results).branch
    rows = results[(results["method_code"] == method_code) & (results["condition_id"] == condition.pk)]
    limit, side = attribute.shelf_life_limit
    result = shelf_life_estimate(
        rows["months"], rows["value"], limit, limit_side=side, lots=rows["lot"].tolist(),
        extrapolation_factor=branch.factor or 1.0, extrapolation_months=branch.months_beyond,
    )
    title, unit = method_names(method_code)
    lots = sorted(set(rows["lot"].tolist())) or [lot.code for lot in study.lots.all()]
    return stability_plot_data(
        rows["months"].tolist(), rows["value"].tolist(), result, lots=rows["lot"].tolist(),
        title=f"Stability: {title}{f', {unit}' if unit else ''} at {condition}",
        subtitle=f"product {study.product.code} {study.product.name} · lot{'s' if len(lots) > 1 else ''} {', '.join(lots)} · study {study.code}",
        unit=unit,
    )
