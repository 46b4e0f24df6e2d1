"""Investigations: the filtered list."""
from __future__ import annotations

from django.db.models import QuerySet

from analyses.models import Investigation


def investigation_list(*, state: str | None = None, lot=None) -> QuerySet[Investigation]:
    queryset = Investigation.objects.select_related(
        "lot__product", "test__sample", "test__specification_line", "opened_by", "closed_by", "retest"
    )
    if state:
        queryset = queryset.filter(state=state)
    if lot is not None:
        queryset = queryset.filter(lot=lot)
    return queryset.order_by("-opened_at", "-id")
