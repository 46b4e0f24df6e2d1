"""Findings after release through the REST API: a retained sample tested after release opens a
post-release investigation; "confirmed" is refused with the outcomes named; each outcome answers
with what it changed; the lot shows "released, under investigation" until QA lifts the notice."""
from __future__ import annotations

import pytest

from analyses.models import Alert
from tests.analyses.lab_setup import AV_HIGH, AV_HIGH_TWIN, AV_TRACE

pytestmark = pytest.mark.django_db


def ok(response, status: int = 200) -> dict:
    assert response.status_code == status, response.content
    return response.json()


@pytest.fixture
def finding(lab, clients) -> dict:
    """The lot L-200 released; its retained sample tested after release for a complaint: AV
    (2.50 - 0.05) x 0.1 x 56.1 / 20.0 = 0.687 mg KOH/g (ISO 660 formula), above the Codex 0.6 for
    refined oils (CXS 210 appendix, found). Ordered, entered and accepted through the API."""
    retain = lab.retained()
    sample = ok(clients["manager"].post(
        f"/api/samples/{retain.pk}/retain-tests/", {"methods": ["av"], "reason": "customer complaint: soapy taste"},
        format="json",
    ), 201)
    [test] = [t for t in sample["tests"] if t["state"] == "pending"]
    assert test["method_code"] == "av"
    ok(clients["manager"].post("/api/tests/assign/", {"tests": [test["id"]], "assignee": lab.users["analyst"].pk}, format="json"))
    items = [{"test": test["id"], "inputs": inputs, **AV_TRACE} for inputs in (AV_HIGH, AV_HIGH_TWIN)]
    ok(clients["analyst"].post("/api/results/bulk/", {"results": items}, format="json"), 201)
    assert ok(clients["analyst2"].post(f"/api/tests/{test['id']}/accept/", format="json"))["verdict"] == "oos"
    listed = ok(clients["qa"].get("/api/investigations/", {"kind": "post_release", "state": "open"}))
    assert listed["count"] == 1
    return listed["results"][0]


def test_a_finding_after_release_opens_a_post_release_investigation(finding, lab, clients):
    assert finding["kind"] == "post_release" and finding["lot_code"] == "L-200"
    assert finding["lot_standing"] == "released" and finding["effect"] is None
    assert ok(clients["qa"].get("/api/investigations/", {"kind": "release"}))["count"] == 0
    alerts = ok(clients["qa"].get("/api/alerts/"))["results"]
    assert [(a["source"], a["rule"]) for a in alerts] == [("post_release", "released_lot_oos")]


def test_confirmed_is_refused_with_the_outcomes_named(finding, clients):
    response = clients["qa"].post(
        f"/api/investigations/{finding['id']}/close/", {"conclusion": "confirmed", "findings": "agrees"}, format="json"
    )
    assert response.status_code == 409
    detail = response.json()["detail"]
    assert "already released" in detail and "no_action" in detail and "hold_notice" in detail
    assert ok(clients["qa"].get(f"/api/investigations/{finding['id']}/"))["state"] == "open"


def test_no_action_answers_that_nothing_changed_on_the_lot(finding, clients):
    closed = ok(clients["qa"].post(
        f"/api/investigations/{finding['id']}/close/", {"conclusion": "no_action", "findings": "retain stored warm"},
        format="json",
    ))
    assert closed["conclusion"] == "no_action" and closed["effect"] == "no change to the lot: L-200 stays released"
    lot = ok(clients["qa"].get(f"/api/lots/{finding['lot']}/"))
    assert (lot["state"], lot["standing"], lot["under_investigation"], lot["hold_notice_reason"]) == (
        "released", "released", False, None,
    )


def test_a_hold_notice_answers_what_it_changed_and_qa_lifts_it(finding, clients):
    body = {"conclusion": "hold_notice", "findings": "re-titration agrees", "hold_reason": "customers asked to hold stock"}
    refused = clients["qa"].post(f"/api/investigations/{finding['id']}/close/", {**body, "hold_reason": ""}, format="json")
    assert refused.status_code == 400 and "hold_reason" in refused.json()["fields"]
    closed = ok(clients["qa"].post(f"/api/investigations/{finding['id']}/close/", body, format="json"))
    assert closed["effect"] == "lot L-200 is now released, under investigation: customers asked to hold stock; QA notified by alert"
    assert closed["lot_standing"] == "released, under investigation"
    lot = ok(clients["manager"].get(f"/api/lots/{finding['lot']}/"))
    assert (lot["state"], lot["standing"], lot["under_investigation"]) == ("released", "released, under investigation", True)
    assert (lot["hold_notice_reason"], lot["hold_notice_by"], lot["hold_notice_investigation"]) == (
        "customers asked to hold stock", "qa", finding["id"],
    )
    assert Alert.objects.filter(rule="lot_hold_notice", lot_id=finding["lot"]).count() == 1

    lifted = ok(clients["qa"].post(f"/api/lots/{finding['lot']}/hold-notice/lift/", {"reason": "stock retested"}, format="json"))
    assert (lifted["standing"], lifted["under_investigation"], lifted["hold_notice_at"]) == ("released", False, None)
    again = clients["qa"].post(f"/api/lots/{finding['lot']}/hold-notice/lift/", {"reason": "again"}, format="json")
    assert again.status_code == 409 and "nothing to lift" in again.json()["detail"]

