"""A released lot's result corrected over REST: the analyst proposes, QA approves signed and the
certificate is reissued (or declines); the refusals name what is wrong.

AV by the ISO 660 formula (S - B) x 0.1 x 56.1 / 20.0: replicate 1 corrected from 1.30 to 1.38 mL
gives 0.373065 -> "0.37", and the mean with the twin's 0.35904 is 0.3660525 -> "0.37"."""
from __future__ import annotations

import pytest

from analyses.models import Result, ResultStatus
from analyses.services.lots import lot_release
from tests.factories import SIGNING_PASSWORD

pytestmark = pytest.mark.django_db

CORRECTED = {"sample_mass": "20.0", "sample_volume": "1.38", "blank_volume": "0.05"}


def ok(response, status: int = 200) -> dict:
    assert response.status_code == status, response.content
    return response.json()


def _av_replicate(lab) -> Result:
    return Result.objects.get(test__sample__lot=lab.lot, method_code="av", replicate=1, status=ResultStatus.CURRENT)


def test_propose_approve_and_the_reissued_certificate(lab, clients):
    lab.released()
    first = ok(clients["qa"].get(f"/api/lots/{lab.lot.pk}/certificate/"))
    result = _av_replicate(lab)  # entered by analyst2 (support.Lab.accepted)
    url = f"/api/results/{result.pk}/post-release-correction/"
    body = {"inputs": CORRECTED, "reason": "titre misread: 1.38 mL"}
    assert clients["qa"].post(url, body, format="json").status_code == 403  # QA never enters raw data
    proposal = ok(clients["analyst2"].post(url, body, format="json"), 201)
    assert proposal["state"] == "proposed" and proposal["reported_before"] == "0.35"
    assert (proposal["reported"], proposal["mean_reported"], proposal["verdict"]) == ("0.37", "0.37", "pass")
    assert proposal["certificate"] is None and proposal["decided_by"] is None
    listed = ok(clients["qa"].get("/api/post-release-corrections/", {"state": "proposed", "lot": lab.lot.pk}))
    assert [row["id"] for row in listed["results"]] == [proposal["id"]]

    approve = f"/api/post-release-corrections/{proposal['id']}/approve/"
    refused = clients["qa"].post(approve, {}, format="json")
    assert refused.status_code == 400 and list(refused.json()["fields"]) == ["password"]
    assert clients["admin"].post(approve, {"password": SIGNING_PASSWORD}, format="json").status_code == 403
    applied = ok(clients["qa"].post(approve, {"password": SIGNING_PASSWORD, "note": "worksheet checked"}, format="json"))
    assert applied["state"] == "applied" and applied["decided_by"] == "qa" and applied["correction"]
    current = ok(clients["analyst"].get(f"/api/lots/{lab.lot.pk}/certificate/"))
    assert current["number"] == applied["certificate"] and current["replaces"] == first["number"]
    assert current["reissue_reason"] == "result correction: titre misread: 1.38 mL"
    old = ok(clients["analyst"].get(f"/api/lots/{lab.lot.pk}/certificate/?version=1"))
    assert old["content"] == first["content"] and old["replaced_by"] == current["number"]
    test = ok(clients["analyst"].get(f"/api/tests/{result.test_id}/"))
    assert test["reported"] == "0.37" and test["mean_uncertainty"]["unit"] == "mg KOH/g"
    history = ok(clients["analyst"].get(f"/api/tests/{result.test_id}/results/"))
    assert {(r["replicate"], r["version"], r["status"]) for r in history["results"]} >= {(1, 1, "superseded"), (1, 2, "current")}
    assert clients["qa"].post(approve, {"password": SIGNING_PASSWORD}, format="json").status_code == 409


def test_decline_and_the_refusals(lab, clients):
    lab.accepted()
    open_lot = _av_replicate(lab)
    early = clients["analyst2"].post(
        f"/api/results/{open_lot.pk}/post-release-correction/", {"inputs": CORRECTED, "reason": "misread"}, format="json"
    )
    assert early.status_code == 409 and "released" in early.json()["detail"]
    lot_release(lab.users["qa"], lab.lot, password=SIGNING_PASSWORD)
    url = f"/api/results/{open_lot.pk}/post-release-correction/"
    missing = clients["analyst2"].post(url, {"inputs": CORRECTED}, format="json")
    assert missing.status_code == 400 and "reason" in missing.json()["fields"]
    proposal = ok(clients["analyst2"].post(url, {"inputs": CORRECTED, "reason": "misread"}, format="json"), 201)
    decline = f"/api/post-release-corrections/{proposal['id']}/decline/"
    assert clients["analyst"].post(decline, {"reason": "no"}, format="json").status_code == 403
    declined = ok(clients["qa"].post(decline, {"reason": "the worksheet shows 1.30 mL"}, format="json"))
    assert declined["state"] == "declined" and declined["decision_note"] == "the worksheet shows 1.30 mL"
    assert clients["qa"].get("/api/post-release-corrections/999999/").status_code == 404
    assert clients["qa"].post("/api/post-release-corrections/999999/approve/", {"password": "x"}, format="json").status_code == 404
