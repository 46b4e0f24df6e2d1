"""Results: every result of a test."""
from __future__ import annotations

from django.db.models import QuerySet

from analyses.models import Result, Test


def result_history(test: Test | int) -> QuerySet[Result]:
    """Every result of a test, superseded and invalidated ones included, by replicate and version."""
    test_id = test.pk if isinstance(test, Test) else test
    return (
        Result.objects.filter(test_id=test_id)
        .select_related("entered_by", "supersedes", "reagent_lot")
        .prefetch_related("instrument_uses__instrument")
        .order_by("replicate", "version", "id")
    )
