"""Samples with their lots and products (analyses/selectors/samples.py): on PostgreSQL one text
of SQL, elsewhere the queryset; both give the same samples, lots and products."""
from __future__ import annotations

import pytest
from django.db import connection
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
    assert samples_with_lot([]) == {}
