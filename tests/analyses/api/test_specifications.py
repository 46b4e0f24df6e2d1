"""Specifications over REST: drafts with Codex default lines, line replacement,
approval, revision."""
from __future__ import annotations

from decimal import Decimal

import pytest

from analyses.models import Specification

pytestmark = pytest.mark.django_db


def test_a_draft_takes_codex_defaults_and_keeps_limits_as_written(lab, clients):
    response = clients["qa"].post("/api/specifications/", {
        "product": lab.product.pk,
        "effective_from": "2024-06-01",
        "note": "identity and quality",
        "lines": [
            {"method": "sv", "codex_oil_type": "soybean", "release_critical": False},
            {"method": "iv", "codex_oil_type": "soybean"},
            {"method": "av", "maximum": "0.60", "comparison": "rounding", "turnaround_days": 1},
        ],
    }, format="json")
    assert response.status_code == 201, response.content
    body = response.json()
    lines = {line["method_code"]: line for line in body["lines"]}
    # Codex CXS 210, soybean oil (found, plugins/codex.py): SV 189-195 mg KOH/g, IV 124-139 g I2/100 g
    assert (Decimal(lines["sv"]["minimum"]), Decimal(lines["sv"]["maximum"])) == (189, 195)
    assert (Decimal(lines["iv"]["minimum"]), Decimal(lines["iv"]["maximum"])) == (124, 139)
    assert "CXS 210" in lines["sv"]["limits_source"] and lines["sv"]["release_critical"] is False
    assert lines["av"]["maximum"] == "0.60"  # the places as written count for the rounding comparison
    assert lines["av"]["comparison"] == "rounding" and lines["av"]["turnaround_days"] == 1
    assert body["status"] == "draft" and body["created_by"] == "qa" and body["product_code"] == "RSO"


def test_lines_of_a_draft_are_replaced_and_an_approved_one_is_frozen(lab, clients):
    draft = lab.draft
    replaced = clients["manager"].put(
        f"/api/specifications/{draft.pk}/lines/", {"lines": [{"method": "pv", "codex_oil_type": "refined"}]}, format="json"
    )
    assert replaced.status_code == 200, replaced.content
    assert [(line["method_code"], line["maximum"]) for line in replaced.json()["lines"]] == [("pv", "10.0")]
    approved = clients["qa"].post(f"/api/specifications/{draft.pk}/approve/")
    assert approved.status_code == 200 and approved.json()["approved_by"] == "qa"
    frozen = clients["manager"].put(f"/api/specifications/{draft.pk}/lines/", {"lines": [{"method": "av", "maximum": "1"}]}, format="json")
    assert frozen.status_code == 409 and "revise it instead" in frozen.json()["detail"]
    twice = clients["qa"].post(f"/api/specifications/{draft.pk}/approve/")
    assert twice.status_code == 409


def test_a_revision_copies_the_lines_into_a_new_draft_version(lab, clients):
    approved = lab.specification
    response = clients["manager"].post(
        f"/api/specifications/{approved.pk}/revise/", {"effective_from": "2030-01-01", "note": "yearly review"}, format="json"
    )
    assert response.status_code == 201, response.content
    revision = response.json()
    assert revision["version"] == approved.version + 1 and revision["revised_from"] == approved.pk
    assert revision["status"] == "draft"
    assert [line["method_code"] for line in revision["lines"]] == ["av", "pv"]
    assert Specification.objects.get(pk=approved.pk).is_approved  # the approved version is untouched
    draft_again = clients["manager"].post(f"/api/specifications/{revision['id']}/revise/", {"effective_from": "2031-01-01"}, format="json")
    assert draft_again.status_code == 409  # a draft is edited, not revised


def test_specifications_filter_by_product_and_status(lab, clients):
    lab.specification, lab.draft
    listing = clients["analyst"].get("/api/specifications/", {"product": lab.product.pk, "status": "approved"}).json()
    assert [s["id"] for s in listing["results"]] == [lab.specification.pk]
    assert clients["analyst"].get(f"/api/specifications/{lab.draft.pk}/").json()["status"] == "draft"
