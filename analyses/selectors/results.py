"""Results: every result of a test; the current results of tests being entered."""
from __future__ import annotations

from collections.abc import Collection
from functools import lru_cache

from django.db import connections, router
from django.db.models import QuerySet

from analyses.models import Result, ResultStatus, ResultUncertainty, Test
from analyses.selectors.rows import RowReader, relation_keep, select_list


def result_history(test: Test | int) -> QuerySet[Result]:
    """Every result of a test, superseded and invalidated ones included, by replicate and version."""
    test_id = test.pk if isinstance(test, Test) else test
    return (
        Result.objects.filter(test_id=test_id)
        .select_related("entered_by", "supersedes", "reagent_lot")
        .prefetch_related("instrument_uses__instrument")
        .order_by("replicate", "version", "id")
    )


def current_results(test_ids: Collection[int]) -> list[Result]:
    """The current results of the tests ``test_ids``, by test and replicate, each with its
    stored budget (kept as None when it has none): what ``Result.objects.filter(status=CURRENT)
    .select_related("uncertainty")`` reads, in one text of SQL on PostgreSQL (result entry,
    issue 12; tests/analyses/selectors/test_results.py holds the two equal)."""
    connection = connections[router.db_for_read(Result)]
    if connection.vendor != "postgresql":
        return list(
            Result.objects.filter(test_id__in=test_ids, status=ResultStatus.CURRENT).select_related("uncertainty")
            .order_by("test_id", "replicate")
        )
    if not test_ids:
        return []  # no query, as the queryset makes none for an empty list
    results, budgets = RowReader.of(Result, connection), RowReader.of(ResultUncertainty, connection)
    found = []
    with connection.cursor() as cursor:
        cursor.execute(_current_results_sql(), [list(test_ids), ResultStatus.CURRENT.value])
        for row in cursor.fetchall():
            result, at = results.read(row, 0)
            relation_keep(result, "uncertainty", budgets.read(row, at)[0])
            found.append(result)
    return found


@lru_cache(maxsize=1)
def _current_results_sql() -> str:
    result, budget = Result._meta.db_table, ResultUncertainty._meta.db_table
    return (
        f"SELECT {select_list((Result, 'r'), (ResultUncertainty, 'u'))} "
        f'FROM "{result}" r LEFT JOIN "{budget}" u ON u.result_id = r.id '
        "WHERE r.test_id = ANY(%s) AND r.status = %s ORDER BY r.test_id, r.replicate"
    )
