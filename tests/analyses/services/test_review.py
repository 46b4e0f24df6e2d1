"""Review: the four-eyes rule, duplicate agreement, send-back for retest."""
from __future__ import annotations

import pytest

from analyses.errors import Conflict, InvalidInput, NotAllowed
from analyses.models import AuditEntry, ResultStatus, Test, TestState
from analyses.services import review
from analyses.services.assignments import test_assign_bulk
from analyses.services.results import result_record
from tests.analyses.lab_setup import AV_LOW, AV_LOW_TWIN, enter_duplicates, AV_TRACE

pytestmark = pytest.mark.django_db


def _av(tests):
    return next(t for t in tests if t.method_code == "av")


def test_the_person_who_entered_a_result_cannot_accept_it(users, assigned_tests):
    av = enter_duplicates(users["analyst"], _av(assigned_tests), AV_LOW, AV_LOW_TWIN)
    entries = AuditEntry.objects.count()
    with pytest.raises(NotAllowed, match="four-eyes"):
        review.test_accept(users["analyst"], av)
    av.refresh_from_db()
    assert av.state == TestState.RESULT_ENTERED
    assert AuditEntry.objects.count() == entries


def test_an_admin_cannot_bypass_four_eyes(users, received_sample):
    admin = users["admin"]
    test = Test.objects.get(sample=received_sample, method_code="av")
    test_assign_bulk(users["manager"], [test], assignee=users["analyst"])
    # admins may enter results for any test ...
    result_record(admin, test, inputs=AV_LOW, **AV_TRACE)
    result_record(users["analyst"], test, inputs=AV_LOW_TWIN, **AV_TRACE)
    # ... but having entered one, may not accept it; nor may the analyst
    with pytest.raises(NotAllowed, match="four-eyes"):
        review.test_accept(admin, test)
    with pytest.raises(NotAllowed, match="four-eyes"):
        review.test_accept(users["analyst"], test)
    accepted = review.test_accept(users["qa"], test)
    assert accepted.state == TestState.ACCEPTED
    assert accepted.reviewed_by == users["qa"]


def test_duplicates_that_disagree_cannot_be_accepted(users, assigned_tests):
    # ISO 660 repeatability here is 5 % of the mean (plugin value, from memory); 0.35 vs 0.69 is far outside.
    far = {"sample_mass": "20.0", "sample_volume": "2.50", "blank_volume": "0.05"}  # with KOH-BENCH, 0.1 mol/L
    av = enter_duplicates(users["analyst"], _av(assigned_tests), AV_LOW, far)
    assert av.duplicate_check["agrees"] is False
    with pytest.raises(Conflict, match="send it back"):
        review.test_accept(users["analyst2"], av)
    assert Test.objects.get(pk=av.pk).state == TestState.RESULT_ENTERED


def test_send_back_invalidates_results_and_the_analyst_enters_again(users, assigned_tests):
    analyst = users["analyst"]
    av = enter_duplicates(analyst, _av(assigned_tests), AV_LOW, AV_LOW_TWIN)
    old_ids = set(av.results.values_list("pk", flat=True))
    sent = review.test_send_back(users["analyst2"], av, reason="burette not rinsed")
    assert sent.state == TestState.SENT_BACK
    assert sent.verdict == "" and sent.value is None
    assert set(sent.results.filter(status=ResultStatus.INVALIDATED).values_list("pk", flat=True)) == old_ids
    assert sent.results.get(replicate=1).status_reason == "burette not rinsed"

    again = enter_duplicates(analyst, sent, AV_LOW, AV_LOW_TWIN)
    assert again.state == TestState.RESULT_ENTERED
    assert again.results.count() == 4  # the first pair stays visible
    assert review.test_accept(users["analyst2"], again).state == TestState.ACCEPTED


def test_send_back_needs_a_reason_and_an_entered_test(users, assigned_tests):
    av = _av(assigned_tests)
    with pytest.raises(Conflict):
        review.test_send_back(users["analyst2"], av, reason="too early")
    av = enter_duplicates(users["analyst"], av, AV_LOW, AV_LOW_TWIN)
    with pytest.raises(InvalidInput) as caught:
        review.test_send_back(users["analyst2"], av, reason="  ")
    assert caught.value.fields == {"reason": ["is required"]}


def test_a_test_cannot_be_accepted_twice(users, assigned_tests):
    av = enter_duplicates(users["analyst"], _av(assigned_tests), AV_LOW, AV_LOW_TWIN)
    review.test_accept(users["analyst2"], av)
    with pytest.raises(Conflict, match="accepted"):
        review.test_accept(users["qa"], av)
