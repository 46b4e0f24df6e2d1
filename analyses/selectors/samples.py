"""Samples: the filtered list (each with its tests), one sample, and what result entry locks
and reads of the samples of its tests."""
from __future__ import annotations

from collections.abc import Collection
from functools import lru_cache
from typing import Any

from django.db import connections, router
from django.db.models import Prefetch, QuerySet

from analyses.errors import NotFound
from analyses.models import Lot, Product, Sample, Test
from analyses.selectors.rows import RowReader, lock_needs_transaction, relation_keep, select_list


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


def samples_of_tests_locked(test_ids: Collection[int]) -> list[int]:
    """The ids of the samples of the tests ``test_ids``, their rows locked, in order: what
    ``Sample.objects.select_for_update().filter(pk__in=<the tests' sample ids>)`` reads, in one
    text of SQL on PostgreSQL, the ids as one array (Django's compiling, and psycopg's quoting of
    one parameter per id, took longer than the query: issue 12)."""
    connection = connections[router.db_for_write(Sample)]
    if connection.vendor != "postgresql":
        return list(
            Sample.objects.select_for_update().filter(pk__in=Test.objects.filter(pk__in=test_ids).values("sample_id"))
            .order_by("pk").values_list("pk", flat=True)
        )
    lock_needs_transaction(connection)
    with connection.cursor() as cursor:
        cursor.execute(_samples_of_tests_locked_sql(), [list(test_ids)])
        return [pk for (pk,) in cursor.fetchall()]


@lru_cache(maxsize=1)
def _samples_of_tests_locked_sql() -> str:
    sample, test = Sample._meta.db_table, Test._meta.db_table
    return (
        f'SELECT s.id FROM "{sample}" s WHERE s.id IN (SELECT t.sample_id FROM "{test}" t WHERE t.id = ANY(%s)) '
        "ORDER BY s.id FOR UPDATE"
    )


def samples_with_lot(sample_ids: Collection[int]) -> dict[int, Sample]:
    """The samples ``sample_ids`` by id, each with its lot and the lot's product: what
    ``Sample.objects.select_related("lot__product").in_bulk(...)`` reads, in one text of SQL on
    PostgreSQL (result entry, issue 12; tests/analyses/selectors/test_samples.py holds the two
    equal)."""
    connection = connections[router.db_for_read(Sample)]
    if connection.vendor != "postgresql":
        return Sample.objects.select_related("lot__product").in_bulk(sample_ids)
    if not sample_ids:
        return {}  # no query, as in_bulk([]) makes none
    readers = [RowReader.of(model, connection) for model in (Sample, Lot, Product)]
    found = {}
    with connection.cursor() as cursor:
        cursor.execute(_samples_with_lot_sql(), [list(sample_ids)])
        for row in cursor.fetchall():
            sample, at = readers[0].read(row, 0)
            lot, at = readers[1].read(row, at)
            relation_keep(lot, "product", readers[2].read(row, at)[0])
            relation_keep(sample, "lot", lot)
            found[sample.pk] = sample
    return found


@lru_cache(maxsize=1)
def _samples_with_lot_sql() -> str:
    sample, lot, product = (model._meta.db_table for model in (Sample, Lot, Product))
    return (
        f"SELECT {select_list((Sample, 's'), (Lot, 'l'), (Product, 'p'))} "
        f'FROM "{sample}" s JOIN "{lot}" l ON l.id = s.lot_id JOIN "{product}" p ON p.id = l.product_id '
        "WHERE s.id = ANY(%s)"
    )
