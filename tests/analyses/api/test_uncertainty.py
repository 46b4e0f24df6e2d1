"""GET /api/results/<id>/uncertainty/: each input's value, u, sensitivity coefficient,
contribution and share; the expanded U (k = 2, GUM JCGM 100:2008, found); the mean's budget."""
from __future__ import annotations

from decimal import Decimal

import pytest

from analyses.models import ResultUncertainty
from tests.analyses.lab_setup import AV_LOW, AV_LOW_TWIN, AV_TRACE, entry_for

pytestmark = pytest.mark.django_db


def test_one_result_then_the_mean(lab, clients):
    av_test, _ = lab.assigned("analyst")
    first = clients["analyst"].post("/api/results/", {"test": av_test.pk, "inputs": AV_LOW, **AV_TRACE}, format="json").json()
    body = clients["qa"].get(f"/api/results/{first['id']}/uncertainty/").json()
    budget = body["budget"]
    assert body["result"] == first["id"] and body["decision_rule"] == "simple"
    assert budget["coverage_factor"] == 2 and budget["replicates"] == 1
    assert Decimal(budget["expanded_uncertainty"]) >= Decimal(repr(2 * budget["combined_standard_uncertainty"])).quantize(Decimal("1e-9"))
    terms = {t["name"]: t for t in budget["terms"]}
    # AV = (S - B) c 56.1 / m: dAV/dS = c 56.1 / m = 0.2805 per mL at 0.1 mol/L and 20 g (ISO 660 formula)
    assert terms["sample_volume"]["sensitivity"] == pytest.approx(0.2805)
    assert terms["sample_volume"]["contribution"] == pytest.approx(0.2805 * terms["sample_volume"]["u"])
    assert sum(t["share"] for t in budget["terms"]) == pytest.approx(1.0)
    assert "plugin repeatability" in terms["repeatability"]["basis"]
    assert body["test_mean"] is None and body["test_mean_note"]
    clients["analyst"].post("/api/results/", {"test": av_test.pk, "inputs": AV_LOW_TWIN, **AV_TRACE}, format="json")
    body = clients["qa"].get(f"/api/results/{first['id']}/uncertainty/").json()
    mean = body["test_mean"]
    assert mean["replicates"] == 2 and mean["value"] == pytest.approx((0.350625 + 0.35904) / 2)
    assert mean["combined_standard_uncertainty"] < budget["combined_standard_uncertainty"]


def test_an_older_result_without_a_stored_budget_gets_one_worked_out(lab, clients):
    av_test, _ = lab.assigned("analyst")
    first = clients["analyst"].post("/api/results/", {"test": av_test.pk, "inputs": AV_LOW, **AV_TRACE}, format="json").json()
    stored = ResultUncertainty.objects.get(result_id=first["id"])
    expected = stored.budget["expanded_uncertainty"]
    ResultUncertainty.objects.filter(pk=stored.pk).delete()
    body = clients["qa"].get(f"/api/results/{first['id']}/uncertainty/").json()
    assert body["budget"]["expanded_uncertainty"] == expected and body["budget"]["computed_at"] is None


def test_a_missing_result_is_404(clients):
    response = clients["qa"].get("/api/results/999999/uncertainty/")
    assert response.status_code == 404 and response.json()["detail"]
