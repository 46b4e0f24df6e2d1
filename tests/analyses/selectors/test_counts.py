"""A list's count is exact: for the whole tests table PostgreSQL keeps it as rows are written
(migration 0022), and it matches COUNT(*) after every kind of write; anything narrower is counted."""
from __future__ import annotations

import pytest
from django.db import connection
from django.test.utils import CaptureQueriesContext

from analyses.models import Test, TestState
from analyses.selectors.counts import list_count
from analyses.selectors.tests import test_list, with_usernames
from tests.factories import SampleFactory, SpecificationLineFactory, TestFactory

pytestmark = pytest.mark.django_db


def _kept() -> int:
    with connection.cursor() as cursor:
        cursor.execute("SELECT row_count FROM analyses_rowcount WHERE table_name = 'analyses_test'")
        return cursor.fetchone()[0]


def test_the_kept_count_follows_every_write(postgres):
    assert _kept() == Test.objects.count()
    TestFactory.create_batch(3)
    line = SpecificationLineFactory()
    Test.objects.bulk_create([
        Test(sample=SampleFactory(), specification_line=line, method_code=line.method_code, due_on="2030-01-01",
             created_at="2030-01-01T00:00:00Z")
        for _ in range(5)
    ])
    assert _kept() == Test.objects.count() == 8
    Test.objects.filter(pk__in=list(Test.objects.values_list("pk", flat=True)[:2])).delete()
    assert _kept() == Test.objects.count() == 6
    Test.objects.update(state=TestState.ASSIGNED)  # an update changes no count
    assert _kept() == 6


def test_the_kept_count_is_counted_afresh_when_its_row_is_gone(postgres):
    TestFactory.create_batch(2)
    with connection.cursor() as cursor:
        cursor.execute("DELETE FROM analyses_rowcount")
    assert list_count(test_list()) == 2  # no kept count: counted
    TestFactory()
    assert _kept() == 3


def test_the_whole_list_reads_the_kept_count_and_a_filtered_one_counts(postgres):
    TestFactory.create_batch(4)
    TestFactory.create_batch(2, state=TestState.ASSIGNED)
    whole = with_usernames(test_list())
    with CaptureQueriesContext(connection) as whole_queries:
        assert list_count(whole) == 6
    assert "analyses_rowcount" in whole_queries[0]["sql"]
    with CaptureQueriesContext(connection) as filtered_queries:
        assert list_count(test_list(state=TestState.ASSIGNED)) == 2
        assert list_count(test_list().filter(sample__lot__code="nothing")) == 0
        assert list_count(test_list(overdue=True)) == 0
    assert all("COUNT(*)" in query["sql"] for query in filtered_queries)
    assert len(whole_queries) == 1


@pytest.mark.django_db(transaction=True)
def test_a_writer_of_tests_holds_the_audit_head_before_the_count(postgres):
    # The lock order that keeps two writers from deadlocking: the audit chain's head, then the
    # count. Inserting a test must have taken the head: another connection cannot lock it.
    import threading

    from django.db import OperationalError, connections, transaction

    from analyses.models import AuditChainHead

    AuditChainHead.objects.get_or_create(id=1)
    line = SpecificationLineFactory()
    sample = SampleFactory()
    outcome: list[object] = []

    def other_writer() -> None:
        try:
            with transaction.atomic():
                outcome.append(list(AuditChainHead.objects.select_for_update(nowait=True).filter(id=1)))
        except OperationalError as exc:
            outcome.append(exc)
        finally:
            connections["default"].close()

    with transaction.atomic():
        Test.objects.create(sample=sample, specification_line=line, method_code=line.method_code, due_on="2030-01-01",
                            created_at="2030-01-01T00:00:00Z")
        thread = threading.Thread(target=other_writer)
        thread.start()
        thread.join()
    assert isinstance(outcome[0], OperationalError) and "lock" in str(outcome[0])
