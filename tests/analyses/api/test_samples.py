"""Samples over REST: registration, receipt creating the tests, hold, resume, cancel."""
from __future__ import annotations

import datetime as dt

import pytest

from analyses.services.samples import sample_register

pytestmark = pytest.mark.django_db


def test_a_registered_sample_gets_a_label_and_receipt_creates_its_tests(lab, clients):
    registered = clients["manager"].post("/api/samples/", {"lot": lab.lot.pk, "kind": "qc_check"}, format="json")
    assert registered.status_code == 201, registered.content
    sample = registered.json()
    assert sample["label"] == "L-200-S1" and sample["kind"] == "qc_check" and sample["tests"] == []
    received = clients["manager"].post(f"/api/samples/{sample['id']}/receive/", {
        "condition": "sealed, 250 mL amber glass", "storage_place": "cold room B", "priority": 1, "due_on": "2030-01-15",
    }, format="json")
    assert received.status_code == 200, received.content
    body = received.json()
    assert body["state"] == "received" and body["specification"] == lab.specification.pk
    assert body["specification_version"] == lab.specification.version
    assert body["condition_on_receipt"] == "sealed, 250 mL amber glass"
    assert [(t["method_code"], t["priority"], t["due_on"], t["state"]) for t in body["tests"]] == [
        ("av", 1, "2030-01-15", "pending"), ("pv", 1, "2030-01-15", "pending"),
    ]
    again = clients["manager"].post(f"/api/samples/{sample['id']}/receive/", {"condition": "x", "storage_place": "y"}, format="json")
    assert again.status_code == 409


def test_receipt_without_an_approved_specification_in_effect_is_a_conflict(lab, clients):
    """The approved specification is effective from 2020; a receipt dated 2019 has none.
    (The sample was registered in 2019 too: a receipt before registration is bad input.)"""
    sample = {"id": sample_register(lab.manager, lab.lot, registered_at=dt.datetime(2019, 6, 1, 8, tzinfo=dt.UTC)).pk}
    received = clients["manager"].post(
        f"/api/samples/{sample['id']}/receive/", {"condition": "ok", "storage_place": "A1", "received_at": "2019-06-01T09:00:00Z"},
        format="json",
    )
    assert received.status_code == 409
    assert received.json()["missing"] == ["approved specification for RSO"]


def test_hold_and_resume_return_the_sample_to_where_it_was(lab, clients):
    sample = lab.received()
    held = clients["qa"].post(f"/api/samples/{sample.pk}/hold/", {"reason": "label smudged"}, format="json").json()
    assert held["state"] == "on_hold" and held["resume_state"] == "received" and held["state_reason"] == "label smudged"
    test_id = held["tests"][0]["id"]
    assign = clients["manager"].post("/api/tests/assign/", {"tests": [test_id], "assignee": lab.users["analyst"].pk}, format="json")
    assert assign.status_code == 409 and "on hold" in assign.json()["detail"]
    resumed = clients["manager"].post(f"/api/samples/{sample.pk}/resume/", {"reason": "label confirmed"}, format="json").json()
    assert resumed["state"] == "received" and resumed["resume_state"] == ""
    not_held = clients["manager"].post(f"/api/samples/{sample.pk}/resume/", {"reason": "again"}, format="json")
    assert not_held.status_code == 409


def test_cancel_cancels_the_open_tests_and_is_final(lab, clients):
    sample = lab.received()
    cancelled = clients["manager"].post(f"/api/samples/{sample.pk}/cancel/", {"reason": "registered twice"}, format="json").json()
    assert cancelled["state"] == "cancelled" and {t["state"] for t in cancelled["tests"]} == {"cancelled"}
    hold = clients["manager"].post(f"/api/samples/{sample.pk}/hold/", {"reason": "late"}, format="json")
    assert hold.status_code == 409


def test_samples_filter_by_state_kind_lot_product_label_and_dates(lab, clients):
    lab.received("L-200-A")
    lab.sample("L-200-B")
    get = clients["analyst"].get
    assert [s["label"] for s in get("/api/samples/", {"state": "received"}).json()["results"]] == ["L-200-A"]
    assert get("/api/samples/", {"lot": lab.lot.pk, "product": lab.product.pk, "kind": "routine"}).json()["count"] == 2
    assert [s["label"] for s in get("/api/samples/", {"label": "-b"}).json()["results"]] == ["L-200-B"]
    assert get("/api/samples/", {"received_before": "2000-01-01"}).json()["count"] == 0
    assert get("/api/samples/", {"registered_after": "2000-01-01"}).json()["count"] == 2


def test_the_sample_audit_trail_shows_who_did_what(lab, clients):
    sample = lab.received()
    clients["qa"].post(f"/api/samples/{sample.pk}/hold/", {"reason": "label smudged"}, format="json")
    trail = clients["qa"].get(f"/api/samples/{sample.pk}/audit-trail/").json()["results"]
    transitions = [(e["actor"], e["changes"].get("state")) for e in trail if e["action"] == "transition"]
    assert ("manager", ["registered", "received"]) in transitions
    assert ("qa", ["received", "on_hold"]) in transitions
    held = next(e for e in trail if e["changes"].get("state") == ["received", "on_hold"])
    assert held["reason"] == "label smudged" and len(held["entry_hash"]) == 64
    assert [e["sequence"] for e in trail] == sorted(e["sequence"] for e in trail)
