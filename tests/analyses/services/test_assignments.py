"""Bulk assignment by the lab manager: all or nothing."""
from __future__ import annotations

import datetime as dt

import pytest
from django.utils import timezone

from analyses.errors import Conflict, InvalidInput
from analyses.models import AuditEntry, Priority, SampleState, Test, TestState
from analyses.services.assignments import test_assign_bulk
from analyses.services.review import test_accept
from tests.analyses.lab_setup import AV_LOW, AV_LOW_TWIN, enter_duplicates
from tests.factories import UserFactory

pytestmark = pytest.mark.django_db


def _states(tests):
    return [(t.state, t.assignee_id, t.priority) for t in Test.objects.filter(pk__in=[t.pk for t in tests]).order_by("pk")]


def test_assign_sets_assignee_priority_and_due_date_and_starts_testing(users, received_sample):
    tests = list(received_sample.tests.order_by("pk"))
    due = dt.date(2031, 5, 1)
    assigned = test_assign_bulk(users["manager"], tests, assignee=users["analyst"], priority=Priority.URGENT, due_on=due)
    assert {(t.state, t.assignee, t.priority, t.due_on) for t in assigned} == {
        (TestState.ASSIGNED, users["analyst"], Priority.URGENT, due)
    }
    received_sample.refresh_from_db()
    assert received_sample.state == SampleState.IN_TESTING


def test_a_due_date_in_the_past_is_refused(users, received_sample):
    tests = list(received_sample.tests.order_by("pk"))
    before = _states(tests), AuditEntry.objects.count()
    with pytest.raises(InvalidInput) as caught:
        test_assign_bulk(users["manager"], tests, assignee=users["analyst"], due_on=timezone.localdate() - dt.timedelta(days=1))
    assert list(caught.value.fields) == ["due_on"]
    assert (_states(tests), AuditEntry.objects.count()) == before
    assigned = test_assign_bulk(users["manager"], tests, assignee=users["analyst"], due_on=timezone.localdate())
    assert {t.due_on for t in assigned} == {timezone.localdate()}


def test_reassignment_keeps_the_state_and_is_recorded(users, assigned_tests):
    test = assigned_tests[0]
    test_assign_bulk(users["manager"], [test.pk], assignee=users["analyst2"].pk)
    test.refresh_from_db()
    assert test.assignee == users["analyst2"] and test.state == TestState.ASSIGNED
    entry = AuditEntry.objects.filter(object_type="analyses.test", object_id=str(test.pk)).last()
    assert entry.changes["assignee"] == [users["analyst"].pk, users["analyst2"].pk]
    assert entry.actor_username == "manager"


def test_one_bad_test_assigns_none(users, assigned_tests):
    av = next(t for t in assigned_tests if t.method_code == "av")
    test_accept(users["analyst2"], enter_duplicates(users["analyst"], av, AV_LOW, AV_LOW_TWIN))
    before = _states(assigned_tests), AuditEntry.objects.count()
    ordered = sorted(assigned_tests, key=lambda t: t.method_code != "pv")  # pv first, the accepted av second
    with pytest.raises(Conflict, match=r"tests\.1: .* accepted") as caught:
        test_assign_bulk(users["manager"], ordered, assignee=users["analyst2"])
    assert caught.value.missing == ["tests.1"]
    with pytest.raises(InvalidInput) as caught:  # an unknown test in the list is bad input, named by position
        test_assign_bulk(users["manager"], [ordered[0], 0], assignee=users["analyst2"])
    assert list(caught.value.fields) == ["tests.1"]
    with pytest.raises(InvalidInput) as caught:  # beyond any database integer: no such test either
        test_assign_bulk(users["manager"], [ordered[0], 10**20], assignee=users["analyst2"])
    assert list(caught.value.fields) == ["tests.1"]
    assert (_states(assigned_tests), AuditEntry.objects.count()) == before


def test_the_assignee_must_be_able_to_enter_results(users, received_sample):
    tests = list(received_sample.tests.all())
    for who in ("qa", "manager", "nobody"):
        with pytest.raises(InvalidInput) as caught:
            test_assign_bulk(users["manager"], tests, assignee=users[who])
        assert list(caught.value.fields) == ["assignee"]
    with pytest.raises(InvalidInput) as caught:
        test_assign_bulk(users["manager"], [tests[0], tests[0]], assignee=users["analyst"])
    assert list(caught.value.fields) == ["tests"]
    with pytest.raises(InvalidInput) as caught:
        test_assign_bulk(users["manager"], tests, assignee=users["analyst"], priority=9)
    assert list(caught.value.fields) == ["priority"]
    assert set(Test.objects.filter(sample=received_sample).values_list("state", flat=True)) == {TestState.PENDING}


def test_a_qa_reviewer_is_not_assigned_work_even_in_the_analyst_group(users, received_sample):
    # segregation of duties (the project's rule, analyses/services/access.py): QA never enters raw data
    both = UserFactory(username="qa-analyst", roles=["qa_reviewer", "analyst"])
    tests = list(received_sample.tests.order_by("pk"))
    before = _states(tests), AuditEntry.objects.count()
    with pytest.raises(InvalidInput) as caught:
        test_assign_bulk(users["manager"], tests, assignee=both)
    assert list(caught.value.fields) == ["assignee"]
    assert "QA reviewer" in caught.value.fields["assignee"][0]
    assert (_states(tests), AuditEntry.objects.count()) == before
