"""Work queues: order, overdue flag, my queue, review queue, and a fixed number of queries."""
from __future__ import annotations

import datetime as dt

import pytest

from analyses.models import Priority, SampleState, TestState
from analyses.selectors.tests import my_queue, review_queue, review_queue_count, work_queue
from analyses.selectors import tests as test_selectors
from analyses.services.assignments import test_assign_bulk
from analyses.services.review import test_send_back
from tests.analyses.lab_setup import AV_LOW, AV_LOW_TWIN, enter_duplicates
from tests.factories import SampleFactory, SpecificationLineFactory, TestFactory

pytestmark = pytest.mark.django_db
TODAY = dt.date(2030, 6, 15)


def test_a_method_queue_is_ordered_by_priority_then_due_date_and_flags_overdue(users):
    line = SpecificationLineFactory(method_code="pv", unit="meq O2/kg", maximum="10.0")
    normal_late = TestFactory(specification_line=line, priority=Priority.NORMAL, due_on=TODAY - dt.timedelta(days=1))
    urgent_later = TestFactory(specification_line=line, priority=Priority.URGENT, due_on=TODAY + dt.timedelta(days=5))
    urgent_sooner = TestFactory(specification_line=line, priority=Priority.URGENT, due_on=TODAY)
    low = TestFactory(specification_line=line, priority=Priority.LOW, due_on=TODAY - dt.timedelta(days=9))
    TestFactory(specification_line=line, state=TestState.ACCEPTED)  # done: not in the queue
    TestFactory()  # another method (av)

    queue = list(work_queue("pv", today=TODAY))
    assert [t.pk for t in queue] == [urgent_sooner.pk, urgent_later.pk, normal_late.pk, low.pk]
    assert {t.pk: t.is_overdue for t in queue} == {
        urgent_sooner.pk: False,  # due today is not overdue
        urgent_later.pk: False,
        normal_late.pk: True,
        low.pk: True,
    }


def test_a_held_test_is_listed_not_overdue_and_filtered_in_or_out(users):
    line = SpecificationLineFactory(method_code="pv", unit="meq O2/kg", maximum="10.0")
    late = TODAY - dt.timedelta(days=4)
    held_sample = SampleFactory(state=SampleState.ON_HOLD, resume_state=SampleState.RECEIVED, state_reason="drum leaking")
    held = TestFactory(specification_line=line, sample=held_sample, due_on=late)
    free = TestFactory(specification_line=line, due_on=late)
    assert {t.pk: t.is_overdue for t in work_queue("pv", today=TODAY)} == {held.pk: False, free.pk: True}
    assert [t.pk for t in work_queue("pv", on_hold=True, today=TODAY)] == [held.pk]
    assert [t.pk for t in work_queue("pv", on_hold=False, today=TODAY)] == [free.pk]


def test_my_queue_holds_only_my_workable_tests(users, assigned_tests):
    analyst, analyst2 = users["analyst"], users["analyst2"]
    assert {t.pk for t in my_queue(analyst)} == {t.pk for t in assigned_tests}
    assert list(my_queue(analyst2)) == []
    av = next(t for t in assigned_tests if t.method_code == "av")
    enter_duplicates(analyst, av, AV_LOW, AV_LOW_TWIN)  # now awaiting review: off my queue
    assert [t.method_code for t in my_queue(analyst)] == ["pv"]
    # four-eyes: the analyst does not see their own test for review; analyst2 does
    assert list(review_queue(exclude_entered_by=analyst)) == []
    assert [t.pk for t in review_queue(exclude_entered_by=analyst2)] == [av.pk]


def test_a_test_sent_back_and_re_entered_by_another_analyst_is_in_the_first_ones_review_queue(users, assigned_tests):
    analyst, analyst2 = users["analyst"], users["analyst2"]
    av = next(t for t in assigned_tests if t.method_code == "av")
    enter_duplicates(analyst, av, AV_LOW, AV_LOW_TWIN)
    test_send_back(users["manager"], av, reason="burette not rinsed")  # analyst's results: invalidated
    test_assign_bulk(users["manager"], [av], assignee=analyst2)
    enter_duplicates(analyst2, av, AV_LOW, AV_LOW_TWIN)
    # four-eyes looks at the current results only (analyst2's), so analyst may review
    assert [t.pk for t in review_queue(exclude_entered_by=analyst)] == [av.pk]
    assert list(review_queue(exclude_entered_by=analyst2)) == []


def test_the_review_queue_count_is_the_number_of_tests_in_it_for_each_reviewer(users, assigned_tests):
    """review_queue_count is a query of its own; it must count what the queue lists, for users
    with none and some of the waiting tests, and after a send-back has made one user's results
    no longer current."""
    analyst, analyst2, qa = users["analyst"], users["analyst2"], users["qa"]
    av = next(t for t in assigned_tests if t.method_code == "av")
    pv = next(t for t in assigned_tests if t.method_code == "pv")
    others = TestFactory.create_batch(3, state=TestState.RESULT_ENTERED)  # waiting, entered by nobody here
    enter_duplicates(analyst, av, AV_LOW, AV_LOW_TWIN)
    test_send_back(users["manager"], av, reason="burette not rinsed")
    test_assign_bulk(users["manager"], [av, pv], assignee=analyst2)
    enter_duplicates(analyst2, av, AV_LOW, AV_LOW_TWIN)  # analyst's results on av are no longer current

    for user, expected in ((analyst, 4), (analyst2, 3), (qa, 4)):
        assert review_queue(exclude_entered_by=user).count() == expected
        assert review_queue_count(user) == expected, user.username
    assert {t.pk for t in review_queue(exclude_entered_by=analyst2)} == {t.pk for t in others}


def test_queues_take_a_fixed_number_of_queries(users, django_assert_num_queries):
    line = SpecificationLineFactory(method_code="iv", unit="g I2/100 g", maximum="139")
    sample = SampleFactory()
    TestFactory.create_batch(3, specification_line=line, sample=sample, assignee=users["analyst"], state="assigned")

    def touch(rows):
        for t in rows:
            (t.sample.lot.product.code, t.assignee.username if t.assignee else None, t.specification_line.maximum, t.is_overdue)

    with django_assert_num_queries(1):
        touch(list(work_queue("iv")))
    TestFactory.create_batch(12, specification_line=line, assignee=users["analyst"], state="assigned")
    with django_assert_num_queries(1):
        touch(list(work_queue("iv")))
    with django_assert_num_queries(1):
        touch(list(my_queue(users["analyst"])))
    with django_assert_num_queries(1):
        touch(list(test_selectors.test_list(method_code="iv", overdue=False)))


def _mean_budget(test):
    from django.utils import timezone

    from analyses.models import TestUncertainty

    return TestUncertainty.objects.create(
        test=test, results=[], budget={"terms": []}, combined=0.01, expanded="0.020", source="test", computed_at=timezone.now(),
    )


def test_the_tests_result_entry_locks_are_the_querysets_tests_with_lines_and_mean_budgets():
    """tests_locked and tests_of_samples_locked (one text of SQL each on PostgreSQL) against the
    querysets they stand for: the same tests in the same order, with the same specification
    lines and stored mean budgets (None where there is none), and the rows locked."""
    from django.db import connection, transaction
    from django.test.utils import CaptureQueriesContext

    from analyses.models import Test
    from analyses.selectors.tests import tests_locked, tests_of_samples_locked
    from tests.analyses.selectors.same_rows import assert_same_rows

    first, second = SampleFactory(), SampleFactory()
    with_budget, without, ffa, elsewhere = (
        TestFactory(sample=first), TestFactory(sample=first), TestFactory(sample=first, method_code="ffa"),
        TestFactory(sample=second, method_code="ffa"),
    )
    _mean_budget(with_budget)
    TestFactory(sample=second)  # not named
    ids = [without.pk, with_budget.pk, 999_999]
    with transaction.atomic():
        with CaptureQueriesContext(connection) as captured:
            ours = tests_locked(ids)
        theirs = list(
            Test.objects.select_for_update(of=("self",)).select_related("specification_line", "uncertainty")
            .filter(pk__in=ids).order_by("pk")
        )
        assert [t.pk for t in ours] == [t.pk for t in theirs] == sorted([with_budget.pk, without.pk])
        for mine, its in zip(ours, theirs):
            assert_same_rows(mine, its, {"specification_line": {}, "uncertainty": {}})
        assert ours[0].uncertainty.test is ours[0]
        [locking] = captured.captured_queries
        if connection.vendor == "postgresql":
            assert locking["sql"].endswith("FOR UPDATE OF t")

        codes = {"ffa", "pv"}
        with CaptureQueriesContext(connection) as captured:
            ours = tests_of_samples_locked({first.pk, second.pk}, codes)
        theirs = list(
            Test.objects.select_for_update().select_related("specification_line")
            .filter(sample_id__in={first.pk, second.pk}, method_code__in=codes).order_by("pk")
        )
        assert [t.pk for t in ours] == [t.pk for t in theirs] == [ffa.pk, elsewhere.pk]
        for mine, its in zip(ours, theirs):
            assert_same_rows(mine, its, {"specification_line": {}})
        if connection.vendor == "postgresql":
            assert captured.captured_queries[0]["sql"].endswith("FOR UPDATE")


@pytest.mark.django_db(transaction=True)
def test_the_tests_are_not_locked_outside_a_transaction():
    """A lock taken in autocommit would end with its statement: refused on PostgreSQL, as Django
    refuses select_for_update there (SQLite has no row locks, and Django lets it through)."""
    from django.db import connection, transaction
    from django.db.transaction import TransactionManagementError

    from analyses.selectors.tests import tests_locked, tests_of_samples_locked

    test = TestFactory()
    for read in (lambda: tests_locked([test.pk]), lambda: tests_of_samples_locked([test.sample_id], ["av"])):
        if connection.vendor == "postgresql":
            with pytest.raises(TransactionManagementError):
                read()
        with transaction.atomic():
            assert [t.pk for t in read()] == [test.pk]


@pytest.mark.django_db(transaction=True)
def test_the_rows_each_read_locks_are_the_rows_its_queryset_locks(postgres):
    """Seen from a second connection (NOWAIT): samples_of_tests_locked locks the samples,
    tests_locked the tests but not their lines (FOR UPDATE OF, as of=("self",)), and
    tests_of_samples_locked the tests and their lines (FOR UPDATE, as select_for_update())."""
    import psycopg
    from django.db import transaction

    from analyses.selectors.samples import samples_of_tests_locked
    from analyses.selectors.tests import tests_locked, tests_of_samples_locked

    test = TestFactory(method_code="ffa")
    settings = postgres.get_connection_params()
    other = psycopg.connect(**{k: v for k, v in settings.items() if k in ("host", "port", "dbname", "user", "password")},
                            autocommit=True)

    def locked(table: str, pk: int) -> bool:
        try:
            other.execute(f'SELECT 1 FROM "{table}" WHERE id = %s FOR UPDATE NOWAIT', [pk])
        except psycopg.errors.LockNotAvailable:
            return True
        return False

    rows = {"sample": ("analyses_sample", test.sample_id), "test": ("analyses_test", test.pk),
            "line": ("analyses_specificationline", test.specification_line_id)}
    try:
        for read, expected in (
            (lambda: samples_of_tests_locked([test.pk]), {"sample"}),
            (lambda: tests_locked([test.pk]), {"test"}),
            (lambda: tests_of_samples_locked([test.sample_id], ["ffa"]), {"test", "line"}),
        ):
            with transaction.atomic():
                read()
                assert {name for name, (table, pk) in rows.items() if locked(table, pk)} == expected
            assert not any(locked(table, pk) for table, pk in rows.values())  # released with the transaction
    finally:
        other.close()
