"""Tests over REST: lists with filters, work queues, assignment, review."""
from __future__ import annotations

import datetime as dt

import pytest
from django.utils import timezone

from analyses.models import Test
from tests.analyses.lab_setup import AV_HIGH, AV_LOW, AV_LOW_TWIN, AV_TRACE, enter_duplicates

pytestmark = pytest.mark.django_db


def ids(response) -> list[int]:
    assert response.status_code == 200, response.content
    return [row["id"] for row in response.json()["results"]]


def test_the_work_queue_orders_by_priority_then_due_date_and_flags_overdue(lab, clients):
    sample = lab.received()
    av, pv = Test.objects.filter(sample=sample).order_by("method_code")
    urgent = lab.received("L-200-B").tests.get(method_code="av")
    Test.objects.filter(pk=urgent.pk).update(priority=1)
    Test.objects.filter(pk=av.pk).update(due_on=timezone.localdate() - dt.timedelta(days=2))
    queue = clients["analyst"].get("/api/tests/queue/av/").json()["results"]
    assert [row["id"] for row in queue] == [urgent.pk, av.pk]
    assert [row["is_overdue"] for row in queue] == [False, True]
    assert queue[1]["maximum"] == "0.6" and queue[1]["sample_label"] == "L-200-A" and queue[1]["lot_code"] == "L-200"
    assert ids(clients["analyst"].get("/api/tests/", {"overdue": "true"})) == [av.pk]
    assert pv.pk in ids(clients["analyst"].get("/api/tests/queue/pv/"))


def test_a_held_test_shows_its_hold_is_never_overdue_and_can_be_filtered_in_or_out(lab, users, clients):
    held_sample, free_sample = lab.received(), lab.received("L-200-B")
    held = held_sample.tests.get(method_code="av")
    free = free_sample.tests.get(method_code="av")
    Test.objects.filter(pk__in=[held.pk, free.pk]).update(due_on=timezone.localdate() - dt.timedelta(days=3))
    response = clients["qa"].post(f"/api/samples/{held_sample.pk}/hold/", {"reason": "awaiting the customer's reference sample"}, format="json")
    assert response.status_code == 200, response.content
    rows = {row["id"]: row for row in clients["analyst"].get("/api/tests/queue/av/").json()["results"]}
    assert (rows[held.pk]["state"], rows[held.pk]["sample_state"]) == ("pending", "on_hold")
    assert rows[held.pk]["hold_reason"] == "awaiting the customer's reference sample"
    assert rows[held.pk]["is_overdue"] is False  # it waits on purpose
    assert (rows[free.pk]["sample_state"], rows[free.pk]["hold_reason"], rows[free.pk]["is_overdue"]) == ("received", None, True)
    assert ids(clients["analyst"].get("/api/tests/queue/av/", {"on_hold": "true"})) == [held.pk]
    assert ids(clients["analyst"].get("/api/tests/queue/av/", {"on_hold": "false"})) == [free.pk]
    bad = clients["analyst"].get("/api/tests/queue/av/", {"on_hold": "perhaps"})
    assert bad.status_code == 400 and list(bad.json()["fields"]) == ["on_hold"]
    # the test list and its overdue filter agree: a held test is not overdue anywhere
    assert ids(clients["analyst"].get("/api/tests/", {"overdue": "true", "method": "av"})) == [free.pk]
    assert clients["analyst"].get(f"/api/tests/{held.pk}/").json()["is_overdue"] is False
    # assigning it is still refused while the sample is held, saying why
    assign = clients["manager"].post("/api/tests/assign/", {"tests": [held.pk], "assignee": users["analyst"].pk}, format="json")
    assert assign.status_code == 409 and "on hold" in assign.json()["detail"]
    resumed = clients["qa"].post(f"/api/samples/{held_sample.pk}/resume/", {"reason": "reference sample arrived"}, format="json")
    assert resumed.status_code == 200, resumed.content
    row = next(r for r in clients["analyst"].get("/api/tests/queue/av/").json()["results"] if r["id"] == held.pk)
    assert (row["sample_state"], row["hold_reason"], row["is_overdue"]) == ("received", None, True)


def test_assignment_and_reassignment_fill_each_analysts_queue(lab, users, clients):
    tests = list(lab.received().tests.order_by("method_code").values_list("pk", flat=True))
    first = clients["manager"].post(
        "/api/tests/assign/", {"tests": tests, "assignee": users["analyst"].pk, "priority": 2, "due_on": "2030-02-01"}, format="json"
    )
    assert first.status_code == 200, first.content
    assert [(t["state"], t["priority"], t["due_on"]) for t in first.json()] == [("assigned", 2, "2030-02-01")] * 2
    assert ids(clients["analyst"].get("/api/tests/mine/")) == tests
    moved = clients["manager"].post("/api/tests/assign/", {"tests": tests[:1], "assignee": users["analyst2"].pk}, format="json")
    assert moved.status_code == 200 and moved.json()[0]["assignee"] == "analyst2"
    assert ids(clients["analyst"].get("/api/tests/mine/")) == tests[1:]
    assert ids(clients["analyst2"].get("/api/tests/mine/")) == tests[:1]
    assert ids(clients["manager"].get("/api/tests/", {"assignee": users["analyst2"].pk, "state": "assigned"})) == tests[:1]
    sample = clients["manager"].get(f"/api/samples/{lab.sample().pk}/").json()
    assert sample["state"] == "in_testing"


def test_assignment_is_all_or_nothing(lab, users, clients):
    av, pv = lab.entered("analyst2")
    pending = lab.received("L-200-B").tests.first()
    response = clients["manager"].post("/api/tests/assign/", {"tests": [pending.pk, av.pk], "assignee": users["analyst"].pk}, format="json")
    assert response.status_code == 409
    assert response.json()["missing"] == ["tests.1"]
    assert Test.objects.get(pk=pending.pk).assignee_id is None


def test_tests_filter_by_lot_product_method_sample_and_dates(lab, clients):
    av, pv = lab.assigned("analyst")
    get = clients["manager"].get
    assert ids(get("/api/tests/", {"lot": lab.lot.pk, "method": "pv"})) == [pv.pk]
    assert ids(get("/api/tests/", {"product": lab.product.pk, "sample": av.sample_id})) == [av.pk, pv.pk]
    assert ids(get("/api/tests/", {"due_on_before": "2000-01-01"})) == []
    assert ids(get("/api/tests/", {"created_after": "2000-01-01", "state": "assigned"})) == [av.pk, pv.pk]
    assert get(f"/api/tests/{av.pk}/").json()["assignee"] == "analyst"


def test_send_back_invalidates_the_results_and_the_analyst_enters_new_ones(lab, users, clients):
    av, _ = lab.entered("analyst")
    sent = clients["qa"].post(f"/api/tests/{av.pk}/send-back/", {"reason": "blank titration missing"}, format="json")
    assert sent.status_code == 200, sent.content
    assert sent.json()["state"] == "sent_back" and sent.json()["reported"] == ""
    assert av.pk in ids(clients["analyst"].get("/api/tests/mine/"))
    history = clients["qa"].get(f"/api/tests/{av.pk}/results/").json()["results"]
    assert {r["status"] for r in history} == {"invalidated"}
    for inputs in (AV_LOW, AV_LOW_TWIN):
        assert clients["analyst"].post("/api/results/", {"test": av.pk, "inputs": inputs, **AV_TRACE}, format="json").status_code == 201
    accepted = clients["qa"].post(f"/api/tests/{av.pk}/accept/", {"note": "ok now"}, format="json").json()
    assert accepted["state"] == "accepted" and accepted["review_note"] == "ok now"


def test_duplicates_that_disagree_cannot_be_accepted(lab, users, clients):
    av, _ = lab.assigned("analyst")
    # 0.350625 vs 0.687225 mg KOH/g: far beyond the ISO 660 repeatability the plugin applies
    enter_duplicates(users["analyst"], av, AV_LOW, AV_HIGH)
    response = clients["analyst2"].post(f"/api/tests/{av.pk}/accept/", format="json")
    assert response.status_code == 409 and "send it back" in response.json()["detail"]
    assert Test.objects.get(pk=av.pk).state == "result_entered"


def test_the_review_queue_leaves_out_what_i_entered(lab, clients):
    av, pv = lab.entered("analyst2")
    assert ids(clients["analyst2"].get("/api/tests/review/")) == []
    assert ids(clients["analyst"].get("/api/tests/review/")) == [av.pk, pv.pk]
    assert ids(clients["qa"].get("/api/tests/review/")) == [av.pk, pv.pk]
    # the page count comes from review_queue_count, not from the listed rows
    assert [clients[who].get("/api/tests/review/").json()["count"] for who in ("analyst2", "analyst", "qa")] == [0, 2, 2]


def test_a_test_without_a_verdict_shows_null_not_an_empty_string(lab, clients):
    """The schema's verdict enum is pass or oos; a test with no result yet has neither."""
    sample = lab.received()
    av = sample.tests.get(method_code="av")
    listed = clients["analyst"].get("/api/tests/", {"sample": sample.pk}).json()["results"]
    assert [row["verdict"] for row in listed] == [None, None]
    assert clients["analyst"].get(f"/api/tests/{av.pk}/").json()["verdict"] is None
    assert {row["verdict"] for row in clients["analyst"].get(f"/api/samples/{sample.pk}/").json()["tests"]} == {None}
    accepted = [test.pk for test in lab.accepted(label="L-200-B")]
    assert {clients["analyst"].get(f"/api/tests/{pk}/").json()["verdict"] for pk in accepted} == {"pass"}
