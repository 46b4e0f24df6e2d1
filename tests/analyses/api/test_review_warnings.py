"""Scope, blank, basis and plausible inputs over REST: the method's declarations, the
calculation's warnings, the result, the review queue and the lot's readiness. Sources as in tests/plugins/test_review_warnings.py."""
from __future__ import annotations

import pytest

from analyses.models import Result
from analyses.services.results import result_record
from tests.analyses.lab_setup import AV_LOW, AV_LOW_TWIN, AV_TRACE, PV_LOW, PV_LOW_TWIN, entry_for

# 12.5 mL and 12.7 mL of 0.002 mol/L thiosulfate on 5.0 g, no blank run: 5.0 and 5.08 meq O2/kg
NO_BLANK = {**{k: v for k, v in PV_LOW.items() if k != "blank_volume"}, "blank_not_run": True}
NO_BLANK_TWIN = {**{k: v for k, v in PV_LOW_TWIN.items() if k != "blank_volume"}, "blank_not_run": "yes"}


def test_method_detail_declares_scope_blank_and_basis(clients):
    pv = clients["anonymous"].get("/api/methods/pv/").json()
    assert [(s["minimum"], s["maximum"], s["maximum_inclusive"]) for s in pv["scope"]] == [(0.0, 30.0, True), (None, 70.0, False)]
    assert pv["scope"][0]["source"].startswith("ISO 3960") and pv["scope"][1]["source"] == "AOCS Cd 8b-90"
    assert pv["blank"]["prescribed"] is True and "2568/91" in pv["blank"]["source"]
    assert pv["blank"]["limit_mmol"] == 0.0005
    assert pv["basis"] is None
    assert "blank_not_run" in [spec["name"] for spec in pv["inputs"]]
    iv = clients["anonymous"].get("/api/methods/iv/").json()
    assert [(s["minimum"], s["maximum"]) for s in iv["scope"]] == [(18.0, 165.0)]
    ffa = clients["anonymous"].get("/api/methods/ffa/").json()
    assert ffa["basis"]["input"] == "fatty_acid_basis"
    assert ffa["basis"]["by_oil_type"]["palm"] == "palmitic" and ffa["basis"]["by_oil_type"]["coconut"] == "lauric"


def test_calculation_returns_its_review_warnings(clients):
    # 17.5 mL of 0.01 mol/L on 5.0 g, blank 0: 35.0 meq O2/kg, above ISO 3960's 30 (found)
    inputs = {"sample_mass": 5.0, "sample_volume": 17.5, "blank_volume": 0, "titrant_concentration": 0.01}
    body = clients["anonymous"].post("/api/calculations/", {"method": "pv", "inputs": inputs}, format="json").json()
    assert body["reported"] == "35.0"
    assert len(body["review_warnings"]) == 1 and "ISO 3960" in body["review_warnings"][0]
    inside = {**inputs, "sample_volume": 5.0}
    assert clients["anonymous"].post("/api/calculations/", {"method": "pv", "inputs": inside}, format="json").json()["review_warnings"] == []


def test_review_queue_and_readiness_show_the_warning(lab, users, clients):
    tests = {t.method_code: t for t in lab.assigned("analyst")}
    result_record(users["analyst"], tests["pv"], **entry_for(tests["pv"], NO_BLANK))
    result_record(users["analyst"], tests["pv"], **entry_for(tests["pv"], NO_BLANK_TWIN))
    queue = clients["analyst2"].get("/api/tests/review/").json()["results"]
    (row,) = [r for r in queue if r["id"] == tests["pv"].pk]
    assert len(row["review_warnings"]) == 1 and row["review_warnings"][0].startswith("replicates 1, 2: no blank was run")
    readiness = clients["manager"].get(f"/api/lots/{lab.lot.pk}/readiness/").json()
    assert readiness["warnings"] == [f"sample L-200-A: pv test {tests['pv'].pk}: {row['review_warnings'][0]}"]
    assert readiness["releasable"] is False  # for the av test, which has no results yet, not for the warning


def test_a_specification_line_takes_a_basis_over_rest(lab, clients):
    response = clients["manager"].put(
        f"/api/specifications/{lab.draft.pk}/lines/",
        {"lines": [{"method": "ffa", "maximum": "0.1", "basis": "lauric"}]},
        format="json",
    )
    assert response.status_code == 200, response.json()
    (line,) = response.json()["lines"]
    assert (line["basis"], line["unit"]) == ("lauric", "% as lauric")
    refused = clients["manager"].put(
        f"/api/specifications/{lab.draft.pk}/lines/", {"lines": [{"method": "av", "maximum": "0.6", "basis": "lauric"}]}, format="json"
    )
    assert refused.status_code == 400 and "lines.0.basis" in refused.json()["fields"]


def test_method_detail_shows_hard_bounds_and_plausible_range_of_each_input(clients):
    av = clients["anonymous"].get("/api/methods/av/").json()
    mass = next(spec for spec in av["inputs"] if spec["name"] == "sample_mass")
    # ISO 660 Table 1 / AOCS Cd 3d-63 test portions 0.1 g to 20 g (from memory), "about": ± 10 %
    assert (mass["minimum"], mass["maximum"]) == (0.01, 200.0)
    assert (mass["plausible_minimum"], mass["plausible_maximum"]) == (0.09, 22.0)
    assert "ISO 660" in mass["plausible_source"] and mass["plausible_evidence"] == "from memory"
    assert "ISO 660" in mass["bounds_source"]
    titre = next(spec for spec in av["inputs"] if spec["name"] == "sample_volume")
    assert (titre["plausible_minimum"], titre["plausible_maximum"]) == (None, 50.0)
    concentration = next(spec for spec in av["inputs"] if spec["name"] == "titrant_concentration")
    assert concentration["plausible_source"] is None  # declared for none: no warning


def test_a_portion_beyond_the_hard_bound_is_refused_naming_the_field(lab, clients):
    # issue 13: 0.000001 g stored AV 1,963,500 mg KOH/g; ISO 660's smallest portion is 0.1 g (from memory)
    av_test, _ = lab.assigned("analyst")
    before = Result.objects.count()
    body = {"test": av_test.pk, "inputs": {**AV_LOW, "sample_mass": "0.000001"}, **AV_TRACE}
    response = clients["analyst"].post("/api/results/", body, format="json")
    assert response.status_code == 400
    assert list(response.json()["fields"]) == ["inputs.sample_mass"]
    assert "at least 0.01 g" in response.json()["fields"]["inputs.sample_mass"][0]
    assert Result.objects.count() == before


def test_an_implausible_portion_is_accepted_and_warned_on_result_test_queue_and_readiness(lab, clients):
    av_test, _ = lab.assigned("analyst")
    # 30 g: above ISO 660's largest portion, 20 g (from memory), + 10 %; (1.30 - 0.05) x 0.1 x 56.1 / 30 = 0.23375
    heavy = {**AV_LOW, "sample_mass": "30.0"}
    first = clients["analyst"].post("/api/results/", {"test": av_test.pk, "inputs": heavy, **AV_TRACE}, format="json")
    assert first.status_code == 201, first.json()
    assert first.json()["reported"] == "0.23"
    (warning,) = first.json()["input_warnings"]
    assert warning.startswith("sample_mass 30 g is above its plausible maximum 22 g") and "ISO 660" in warning
    second = clients["analyst"].post("/api/results/", {"test": av_test.pk, "inputs": AV_LOW_TWIN, **AV_TRACE}, format="json")
    assert second.status_code == 201 and second.json()["input_warnings"] == []
    test = clients["analyst"].get(f"/api/tests/{av_test.pk}/").json()
    assert test["review_warnings"] == [f"replicate 1: {warning}"]
    queue = clients["analyst2"].get("/api/tests/review/").json()["results"]
    assert [r["review_warnings"] for r in queue if r["id"] == av_test.pk] == [[f"replicate 1: {warning}"]]
    readiness = clients["manager"].get(f"/api/lots/{lab.lot.pk}/readiness/").json()
    assert f"sample L-200-A: av test {av_test.pk}: replicate 1: {warning}" in readiness["warnings"]
    history = clients["analyst"].get(f"/api/tests/{av_test.pk}/results/").json()
    rows = history["results"] if isinstance(history, dict) else history
    assert [r["input_warnings"] for r in sorted(rows, key=lambda r: r["replicate"])] == [[warning], []]


def test_the_calculation_warns_of_an_implausible_portion_and_refuses_an_impossible_one(clients):
    # AOCS Cd 8b-90 (found): 5.00 ± 0.05 g; 2.5 g is plausible for no PV determination, 0.01 g for none at all
    inputs = {"sample_mass": "2.5", "sample_volume": "5.0", "blank_volume": "0", "titrant_concentration": "0.01"}
    body = clients["anonymous"].post("/api/calculations/", {"method": "pv", "inputs": inputs}, format="json").json()
    assert body["reported"] == "20.0"  # 5.0 x 0.01 x 1000 / 2.5
    assert [w.split(" ")[0] for w in body["review_warnings"]] == ["sample_mass"]
    refused = clients["anonymous"].post("/api/calculations/", {"method": "pv", "inputs": {**inputs, "sample_mass": "0.01"}}, format="json")
    assert refused.status_code == 400 and "sample_mass" in refused.json()["fields"]
