"""The uncertainty budget of one result and of its test's mean, for GET /api/results/<id>/uncertainty/.

Reads only: a result entered before budgets were kept has its budget worked out here from its
inputs (the same function as at entry), not stored. Three queries whatever the number of
replicates or terms: the result with its budget, test and line, and the test's current replicates."""
from __future__ import annotations

from typing import Any

from analyses.models import Result, ResultStatus, ResultUncertainty, TestUncertainty
from analyses.errors import NotFound
from analyses.services.uncertainty import budget_of

NOT_YET = "the test's replicates are not all in (or were corrected since); its mean has no budget yet"


def _stored(row: ResultUncertainty | TestUncertainty) -> dict[str, Any]:
    return {**row.budget, "computed_at": row.computed_at}


def result_uncertainty(pk: int | str) -> dict[str, Any]:
    """The result's budget and, when it is the mean of the current replicates, the test mean's."""
    result = (
        Result.objects.select_related("uncertainty", "test__uncertainty", "test__specification_line")
        .filter(pk=pk).first()
    )
    if result is None:
        raise NotFound(f"result {pk} not found")
    if hasattr(result, "uncertainty"):
        budget = _stored(result.uncertainty)
    else:
        computed = budget_of(result)
        budget = None if computed is None else {**computed.as_dict(), "computed_at": None}
    test = result.test
    mean_row = test.uncertainty if hasattr(test, "uncertainty") else None
    current = sorted(test.results.filter(status=ResultStatus.CURRENT).values_list("pk", flat=True))
    fresh = mean_row is not None and sorted(mean_row.results) == current and result.pk in current
    line = test.specification_line
    return {
        "result": result.pk,
        "test": test.pk,
        "method_code": result.method_code,
        "unit": result.unit,
        "decision_rule": line.decision_rule,
        "guard_band_multiple": line.guard_band_multiple,
        "budget": budget,
        "test_mean": _stored(mean_row) if fresh else None,
        "test_mean_note": "" if fresh else NOT_YET,
    }
