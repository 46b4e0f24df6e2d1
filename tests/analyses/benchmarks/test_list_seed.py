"""The list benchmark's seed: the history it promises, and an audit chain that verifies."""
from __future__ import annotations

import pytest
from django.db import transaction

from analyses.audit import audit_chain_verify
from analyses.benchmarks.list_seed import SAMPLES_PER_LOT, list_seed, open_sample_count
from analyses.models import AuditEntry, Lot, Result, ResultStatus, Sample, SampleState, Test, TestState
from analyses.selectors.tests import my_queue, review_queue, work_queue

pytestmark = pytest.mark.django_db


@pytest.mark.parametrize(("samples", "share", "expected"), [(100, 0.05, 10), (1000, 0.05, 50), (4, 0.05, 4), (20, 0.5, 10)])
def test_open_samples_are_the_share_asked_for_at_least_one_lot(samples, share, expected):
    assert open_sample_count(samples, share) == expected


def test_seeds_the_history_it_describes_with_an_intact_audit_chain():
    with transaction.atomic():
        scope = list_seed(30, open_share=0.5)
        mine = Sample.objects.filter(label__startswith=scope.prefix)
        assert mine.count() == 30
        assert mine.filter(state=SampleState.IN_TESTING).count() == scope.open_samples == 15
        assert Lot.objects.filter(code__startswith=scope.prefix).count() == 30 // SAMPLES_PER_LOT
        tests = Test.objects.filter(sample__in=mine)
        assert tests.count() == 90
        # every state a queue shows is there
        for state in (TestState.PENDING, TestState.ASSIGNED, TestState.RESULT_ENTERED, TestState.SENT_BACK, TestState.ACCEPTED):
            assert tests.filter(state=state).exists(), state
        # two replicates for every test with results; current unless the test was sent back
        entered = tests.filter(state__in=(TestState.RESULT_ENTERED, TestState.ACCEPTED, TestState.SENT_BACK))
        assert Result.objects.filter(test__in=entered).count() == 2 * entered.count() == scope.rows["results"]
        assert not Result.objects.filter(test__state=TestState.SENT_BACK, status=ResultStatus.CURRENT, test__in=tests).exists()
        analyst = scope.users["analyst1"]
        assert work_queue("av").filter(sample__in=mine).exists()
        assert my_queue(analyst).exists()
        assert review_queue(exclude_entered_by=analyst).exists()
        # the trail names each sample and lot as the services do, and the chain holds
        assert AuditEntry.objects.filter(sample_ref__in=scope.sample_ids).exists()
        assert AuditEntry.objects.filter(object_type="analyses.lot", object_id=str(scope.lot_ids[0])).exists()
        report = audit_chain_verify()
        assert report.ok, report
        assert report.checked >= scope.rows["audit entries"]
        transaction.set_rollback(True)
    assert not Sample.objects.filter(label__startswith=scope.prefix).exists()
