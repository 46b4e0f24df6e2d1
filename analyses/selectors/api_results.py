"""Reads the result endpoints need beyond ``lists.result_history``."""
from __future__ import annotations

from django.db.models import QuerySet

from analyses.models import Result


def result_rows() -> QuerySet[Result]:
    """Every result, with the user who entered it."""
    return (
        Result.objects.select_related("entered_by", "reagent_lot")
        .prefetch_related("instrument_uses__instrument")
        .order_by("test_id", "replicate", "version", "id")
    )
