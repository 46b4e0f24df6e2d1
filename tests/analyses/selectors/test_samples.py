"""Samples with their lots and products (analyses/selectors/samples.py): on PostgreSQL one text
of SQL, elsewhere the queryset; both give the same samples, lots and products."""
from __future__ import annotations

import pytest
from django.db import connection, connections, transaction
from django.test.utils import CaptureQueriesContext

from analyses.models import Sample
from analyses.selectors.samples import samples_with_lot
from tests.analyses.selectors.same_rows import assert_same_rows
from tests.factories import LotFactory, SampleFactory

pytestmark = pytest.mark.django_db


def test_samples_with_lot_are_the_querysets_samples_lots_and_products():
    lot = LotFactory()
    one, two, elsewhere = SampleFactory(lot=lot), SampleFactory(lot=lot), SampleFactory()
    SampleFactory()  # not named
    ids = [one.pk, two.pk, elsewhere.pk, 999_999]
    with CaptureQueriesContext(connection) as captured:
        ours = samples_with_lot(ids)
    assert len(captured) == 1
    theirs = Sample.objects.select_related("lot__product").in_bulk(ids)
    assert set(ours) == set(theirs) == {one.pk, two.pk, elsewhere.pk}
    for pk, sample in theirs.items():
        assert_same_rows(ours[pk], sample, {"lot": {"product": {}}})
    with CaptureQueriesContext(connection) as captured:
        assert ours[one.pk].lot.product.code == lot.product.code
    assert len(captured) == 0
    with CaptureQueriesContext(connection) as captured:
        assert samples_with_lot([]) == {}
    assert len(captured) == 0  # as in_bulk([]) makes none


def test_the_samples_of_tests_are_locked_as_the_queryset_locks_them():
    """samples_of_tests_locked against the queryset it stands for: each sample once, in order,
    whatever the number of its tests named; the rows locked (FOR UPDATE, on PostgreSQL)."""
    from analyses.models import Test
    from analyses.selectors.samples import samples_of_tests_locked
    from tests.factories import TestFactory

    first, second = SampleFactory(), SampleFactory()
    tests = [TestFactory(sample=second), TestFactory(sample=first), TestFactory(sample=second)]
    TestFactory()  # its sample is not named
    ids = [t.pk for t in tests] + [999_999]
    with transaction.atomic():
        with CaptureQueriesContext(connection) as captured:
            ours = samples_of_tests_locked(ids)
        theirs = list(
            Sample.objects.select_for_update().filter(pk__in=Test.objects.filter(pk__in=ids).values("sample_id"))
            .order_by("pk").values_list("pk", flat=True)
        )
        assert ours == theirs == sorted([first.pk, second.pk])
        [locking] = captured.captured_queries
        if connection.vendor == "postgresql":
            assert locking["sql"].endswith("FOR UPDATE")
        assert samples_of_tests_locked([999_999]) == []


@pytest.mark.django_db(transaction=True)
def test_the_samples_are_not_locked_outside_a_transaction():
    """Refused on PostgreSQL, as Django refuses select_for_update there (SQLite has no row locks)."""
    from django.db.transaction import TransactionManagementError

    from analyses.selectors.samples import samples_of_tests_locked
    from tests.factories import TestFactory

    test = TestFactory()
    if connection.vendor == "postgresql":
        with pytest.raises(TransactionManagementError):
            samples_of_tests_locked([test.pk])
    with transaction.atomic():
        assert samples_of_tests_locked([test.pk]) == [test.sample_id]


def test_a_models_row_reader_is_made_once_per_connection():
    from analyses.models import Lot
    from analyses.selectors.rows import RowReader

    wrapper = connections["default"]  # as the selectors pass it (django.db.connection is a proxy)
    reader = RowReader.of(Sample, wrapper)
    assert RowReader.of(Sample, wrapper) is reader and reader.connection is wrapper
    assert RowReader.of(Lot, wrapper) is not reader and RowReader.of(Lot, wrapper).model is Lot
    # kept on the wrapper, not by the module: a wrapper dropped (its thread ended) is let go
    import gc
    import weakref

    from django.db import connections as handler

    other = handler.create_connection("default")
    RowReader.of(Sample, other)
    gone = weakref.ref(other)
    del other
    gc.collect()
    assert gone() is None
