"""Lots over REST: creation, lists with filters, readiness, rejection, certificates."""
from __future__ import annotations

import datetime as dt

import pytest
from django.utils import timezone

from tests.factories import SIGNING_PASSWORD

pytestmark = pytest.mark.django_db

SIGNED = {"password": SIGNING_PASSWORD}  # the release's electronic signature


def test_an_incoming_delivery_is_created_with_its_supplier_and_tank(lab, clients):
    response = clients["manager"].post("/api/lots/", {
        "code": "DEL-0425", "product": lab.product.pk, "origin": "delivery",
        "supplier": "Invented Oils Ltd", "container_ref": "ISO tank 7", "quantity_kg": "21500.5", "produced_on": "2024-05-02",
    }, format="json")
    assert response.status_code == 201, response.content
    lot = response.json()
    assert lot["origin"] == "delivery" and lot["supplier"] == "Invented Oils Ltd"
    assert lot["quantity_kg"] == "21500.500" and lot["produced_on"] == "2024-05-02"
    assert lot["state"] == "open" and lot["created_by"] == "manager" and lot["product_code"] == "RSO"


def test_a_lot_produced_in_the_future_is_a_400_naming_produced_on(lab, clients):
    future = (timezone.localdate() + dt.timedelta(days=30)).isoformat()
    response = clients["manager"].post(
        "/api/lots/", {"code": "L-FUTURE", "product": lab.product.pk, "origin": "production", "produced_on": future}, format="json"
    )
    assert response.status_code == 400
    assert list(response.json()["fields"]) == ["produced_on"] and "future" in response.json()["fields"]["produced_on"][0]
    assert clients["manager"].get("/api/lots/", {"code": "L-FUTURE"}).json()["count"] == 0


def test_lots_filter_by_state_product_origin_code_and_dates(lab, clients):
    lab.lot
    clients["manager"].post("/api/lots/", {"code": "L-300", "product": lab.product.pk, "origin": "production", "produced_on": "2024-01-10"}, format="json")
    clients["qa"].post(f"/api/lots/{lab.lot.pk}/reject/", {"reason": "tank contaminated", "password": SIGNING_PASSWORD}, format="json")
    get = clients["analyst"].get
    assert [x["code"] for x in get("/api/lots/", {"state": "rejected"}).json()["results"]] == ["L-200"]
    assert [x["code"] for x in get("/api/lots/", {"code": "300"}).json()["results"]] == ["L-300"]
    assert get("/api/lots/", {"product": lab.product.pk, "origin": "production"}).json()["count"] == 2
    assert get("/api/lots/", {"origin": "delivery"}).json()["count"] == 0
    assert [x["code"] for x in get("/api/lots/", {"produced_on_before": "2024-01-31"}).json()["results"]] == ["L-300"]
    assert get("/api/lots/", {"created_before": "2000-01-01"}).json()["count"] == 0
    listed = {x["code"]: x for x in get("/api/lots/").json()["results"]}
    assert listed["L-200"]["decided_by"] == "qa" and listed["L-200"]["decision_reason"] == "tank contaminated"


def test_rejection_rejects_the_open_samples_and_ends_the_lot(lab, clients):
    sample = lab.received()
    response = clients["qa"].post(f"/api/lots/{lab.lot.pk}/reject/", {"reason": "water in tank", "password": SIGNING_PASSWORD}, format="json")
    assert response.status_code == 200 and response.json()["state"] == "rejected"
    detail = clients["qa"].get(f"/api/samples/{sample.pk}/").json()
    assert detail["state"] == "rejected" and {t["state"] for t in detail["tests"]} == {"cancelled"}
    again = clients["qa"].post(f"/api/lots/{lab.lot.pk}/reject/", {"reason": "again", "password": SIGNING_PASSWORD}, format="json")
    assert again.status_code == 409
    register = clients["manager"].post("/api/samples/", {"lot": lab.lot.pk}, format="json")
    assert register.status_code == 409


def test_readiness_lists_what_is_missing_and_release_refuses_with_it(lab, clients):
    lab.assigned("analyst")
    readiness = clients["manager"].get(f"/api/lots/{lab.lot.pk}/readiness/").json()
    assert readiness["releasable"] is False
    assert any("av test" in line and "is assigned, not accepted" in line for line in readiness["missing"])
    refused = clients["qa"].post(f"/api/lots/{lab.lot.pk}/release/", {"note": "try"}, format="json")
    assert refused.status_code == 409
    assert refused.json()["missing"] == readiness["missing"]
    missing = clients["qa"].get(f"/api/lots/{lab.lot.pk}/certificate/")
    assert missing.status_code == 404 and "not been released" in missing.json()["detail"]


def test_a_lot_without_samples_is_not_releasable(lab, clients):
    response = clients["qa"].post(f"/api/lots/{lab.lot.pk}/release/", SIGNED, format="json")
    assert response.status_code == 409
    assert response.json()["missing"] == ["lot L-200 has no release-critical test"]


def test_a_released_lot_is_not_released_twice(lab, clients):
    lab.accepted()
    assert clients["qa"].post(f"/api/lots/{lab.lot.pk}/release/", SIGNED, format="json").status_code == 201
    again = clients["qa"].post(f"/api/lots/{lab.lot.pk}/release/", SIGNED, format="json")
    assert again.status_code == 409 and "released" in again.json()["detail"]
    assert clients["qa"].get(f"/api/lots/{lab.lot.pk}/readiness/").json()["missing"] == ["lot L-200 is released"]
