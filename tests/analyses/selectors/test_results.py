"""The current results of the tests being entered (analyses/selectors/results.py): on
PostgreSQL one text of SQL, elsewhere the queryset; both give the same results and budgets."""
from __future__ import annotations

import pytest
from django.db import connection
from django.test.utils import CaptureQueriesContext
from django.utils import timezone

from analyses.models import Result, ResultStatus, ResultUncertainty
from analyses.row_writes import new_row
from analyses.selectors.results import current_results
from tests.analyses.selectors.same_rows import assert_same_rows
from tests.factories import TestFactory, UserFactory

pytestmark = pytest.mark.django_db


def _result(test, user, replicate: int, status: str = ResultStatus.CURRENT) -> Result:
    return Result.objects.create(
        test=test, entered_by=user, replicate=replicate, status=status, inputs={"sample_mass": "20.0"}, value=0.35,
        value_exact="0.350625", reported="0.35", unit="mg KOH/g", method_code="av", entered_at=timezone.now(),
        duplicate_check={"within_r": True}, titrant_concentration="0.1002",
    )


def test_current_results_are_the_querysets_results_with_their_budgets():
    user = UserFactory()
    first, second, other = TestFactory(), TestFactory(), TestFactory()
    budgeted = _result(second, user, 2)
    ResultUncertainty.objects.create(
        result=budgeted, budget={"terms": [{"name": "sample_mass", "u": 0.0001}]}, combined=0.004, expanded="0.0080",
        source="test", computed_at=timezone.now(),
    )
    plain = _result(second, user, 1)
    _result(first, user, 1)
    _result(first, user, 2, status=ResultStatus.SUPERSEDED)  # not current
    _result(other, user, 1)  # not named
    ids = [first.pk, second.pk]

    with CaptureQueriesContext(connection) as captured:
        ours = current_results(ids)
    assert len(captured) == 1
    theirs = list(
        Result.objects.filter(test_id__in=ids, status=ResultStatus.CURRENT).select_related("uncertainty")
        .order_by("test_id", "replicate")
    )
    assert [(r.test_id, r.replicate) for r in ours] == [(r.test_id, r.replicate) for r in theirs]
    assert [r.pk for r in ours if r.test_id == second.pk] == [plain.pk, budgeted.pk]
    for mine, its in zip(ours, theirs):
        assert_same_rows(mine, its, {"uncertainty": {}})
    with CaptureQueriesContext(connection) as captured:
        kept = {r.pk: getattr(r, "uncertainty", None) for r in ours}
    assert len(captured) == 0  # the budgets, and their absence, read with the results
    assert kept[plain.pk] is None and kept[budgeted.pk].expanded == "0.0080"
    with CaptureQueriesContext(connection) as captured:
        assert current_results([]) == []
    assert len(captured) == 0  # as the queryset makes none for an empty list


def test_new_row_results_read_back_as_entered():
    """A result built as a batch builds it reads back with the same values (JSON and decimals
    through their columns' converters)."""
    from analyses.row_writes import rows_insert

    test, user = TestFactory(), UserFactory()
    row = new_row(Result, test=test, entered_by=user, replicate=1, inputs={"sample_mass": "20.0", "n": 1.5},
                  value=0.35, value_exact="0.35", reported="0.35", unit="mg KOH/g", method_code="av", entered_at=timezone.now())
    rows_insert([row])
    [read] = current_results([test.pk])
    assert read.inputs == {"sample_mass": "20.0", "n": 1.5} and read.entered_at == row.entered_at
