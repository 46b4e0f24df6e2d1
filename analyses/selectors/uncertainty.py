"""The uncertainty budget of one result and of its test's mean, for GET /api/results/<id>/uncertainty/.

Reads only: a result entered before budgets were kept has its budget worked out here from its
inputs (the same function as at entry), not stored. Three queries whatever the number of
replicates or terms: the result with its budget, test and line, and the test's current replicates.

``test_mean_expanded`` gives the tests' lists the same mean U (k = 2) from the same stored budget;
``with_mean_uncertainty`` joins and prefetches what it reads, so a list's queries do not grow
with its rows."""
from __future__ import annotations

from typing import Any

from django.db.models import Prefetch, QuerySet

from analyses.models import Result, ResultStatus, ResultUncertainty, Test, TestUncertainty
from analyses.errors import NotFound
from analyses.services.uncertainty import budget_of, fresh_mean_budget, is_mean_of

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
    current = list(test.results.filter(status=ResultStatus.CURRENT).values_list("pk", flat=True))
    fresh = fresh_mean_budget(mean_row, current) is not None and result.pk in current
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


def with_mean_uncertainty(tests: QuerySet[Test]) -> QuerySet[Test]:
    """``tests`` with what ``test_mean_expanded`` reads: the mean's stored budget joined (its
    terms left out) and the current replicates' ids prefetched, one query for the whole page."""
    current = Result.objects.filter(status=ResultStatus.CURRENT).only("id", "test_id")
    return tests.select_related("uncertainty").defer("uncertainty__budget").prefetch_related(
        Prefetch("results", queryset=current, to_attr="current_results")
    )


def test_mean_expanded(test: Test) -> dict[str, Any] | None:
    """The expanded uncertainty U (k = 2) of the test's mean and its unit, as
    GET /api/results/<id>/uncertainty/ gives it in ``test_mean``; None until every replicate is
    in, or while a correction's new mean has no budget. Reads what ``with_mean_uncertainty``
    loaded, or the database for a single test."""
    stored = test.uncertainty if hasattr(test, "uncertainty") else None
    if stored is None:
        return None
    if hasattr(test, "current_results"):
        current = [result.pk for result in test.current_results]
    else:
        current = list(test.results.filter(status=ResultStatus.CURRENT).values_list("pk", flat=True))
    fresh = fresh_mean_budget(stored, current)
    if fresh is None:
        return None
    return {"expanded": fresh.expanded, "coverage_factor": fresh.coverage_factor, "unit": test.unit}


test_mean_expanded.__test__ = False  # a selector, not a pytest test

# what ``with_mean_expanded_rows`` reads from each values() row of tests
MEAN_UNCERTAINTY_LOOKUPS = ("id", "unit", "uncertainty__id", "uncertainty__results", "uncertainty__expanded",
                            "uncertainty__coverage_factor")


def with_mean_expanded_rows(rows: list[dict[str, Any]]) -> None:
    """Puts on each ``values()`` row of a test (with ``MEAN_UNCERTAINTY_LOOKUPS``) its
    ``mean_uncertainty``, as ``test_mean_expanded`` gives it for the instance: one query for the
    current replicates of the whole page."""
    current: dict[int, list[int]] = {row["id"]: [] for row in rows}
    if current:  # every test of the page, as the instances' prefetch reads them: one query whatever the rows
        replicates = Result.objects.filter(test_id__in=current, status=ResultStatus.CURRENT).values_list("test_id", "id")
        for test_id, result_id in replicates:
            current[test_id].append(result_id)
    for row in rows:
        fresh = row["uncertainty__id"] is not None and is_mean_of(row["uncertainty__results"], current[row["id"]])
        row["mean_uncertainty"] = (
            {"expanded": row["uncertainty__expanded"], "coverage_factor": row["uncertainty__coverage_factor"],
             "unit": row["unit"]}
            if fresh else None
        )
