"""Samples: the filtered list (each with its tests) and one sample."""
from __future__ import annotations

from typing import Any

from django.db.models import Prefetch, QuerySet

from analyses.errors import NotFound
from analyses.models import Sample, Test


def sample_list(
    *, state: str | None = None, lot=None, kind: str | None = None, label_contains: str | None = None
) -> QuerySet[Sample]:
    """Samples, newest first, with lot, product, people, specification and their tests."""
    queryset = Sample.objects.select_related(
        "lot__product", "registered_by", "received_by", "specification"
    ).prefetch_related(Prefetch("tests", queryset=Test.objects.select_related("assignee").order_by("id")))
    if state:
        queryset = queryset.filter(state=state)
    if lot is not None:
        queryset = queryset.filter(lot=lot)
    if kind:
        queryset = queryset.filter(kind=kind)
    if label_contains:
        queryset = queryset.filter(label__icontains=label_contains)
    return queryset.order_by("-registered_at", "-id")


def sample_detail(sample_id: int) -> Sample:
    sample = sample_list().filter(pk=sample_id).first()
    if sample is None:
        raise NotFound(f"sample {sample_id} not found")
    return sample


def with_test_rows(rows: list[dict[str, Any]], lookups: list[str]) -> None:
    """Puts under ``tests`` on each ``values()`` row of a sample its tests' rows (``lookups``),
    by id as ``sample_list`` prefetches them: one query for the whole page."""
    tests: dict[int, list[dict[str, Any]]] = {row["id"]: [] for row in rows}
    if tests:
        for test in Test.objects.filter(sample_id__in=tests).order_by("id").values("sample_id", *lookups):
            tests[test["sample_id"]].append(test)
    for row in rows:
        row["tests"] = tests[row["id"]]
