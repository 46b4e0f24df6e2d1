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
