"""Result entry over REST: Idempotency-Key, bulk all-or-nothing, corrections, history."""
from __future__ import annotations

import pytest

from analyses.models import Result, ResultStatus
from tests.analyses.lab_setup import AV_LOW, AV_LOW_TWIN, AV_TRACE, PV_LOW, PV_LOW_TWIN, PV_TRACE, entry

pytestmark = pytest.mark.django_db


def test_the_same_idempotency_key_twice_records_one_result(lab, clients):
    av_test, _ = lab.assigned("analyst")
    body = {"test": av_test.pk, "inputs": AV_LOW, **AV_TRACE}
    first = clients["analyst"].post("/api/results/", body, format="json", HTTP_IDEMPOTENCY_KEY="tab-3-row-1")
    retry = clients["analyst"].post("/api/results/", body, format="json", HTTP_IDEMPOTENCY_KEY="tab-3-row-1")
    assert first.status_code == retry.status_code == 201
    assert retry.json() == first.json()
    assert "Oleotrace-Replayed" not in first.headers
    assert retry.headers["Oleotrace-Replayed"] == "true"
    assert Result.objects.filter(test=av_test).count() == 1
    # a new key is a new determination: the second replicate
    second = clients["analyst"].post("/api/results/", {**body, "inputs": AV_LOW_TWIN}, format="json", HTTP_IDEMPOTENCY_KEY="tab-3-row-2")
    assert second.status_code == 201 and second.json()["replicate"] == 2
    # the first key still returns the first result, even now that the test is complete
    late = clients["analyst"].post("/api/results/", body, format="json", HTTP_IDEMPOTENCY_KEY="tab-3-row-1")
    assert late.status_code == 201 and late.json() == first.json()
    assert Result.objects.filter(test=av_test).count() == 2


def test_the_answer_lists_the_instruments_as_a_read_of_the_result_does_whatever_order_they_were_named_in(lab, clients):
    """The entry's answer holds the instrument uses it has just written; it must show them as
    the result's own page and a replay do (by instrument), not in the order the request named them."""
    from analyses.models import Instrument

    av_test, _ = lab.assigned("analyst")
    named = list(reversed(AV_TRACE["instruments"]))
    by_id = list(Instrument.objects.filter(asset_id__in=named).order_by("pk").values_list("asset_id", flat=True))
    assert named != by_id  # the request names them against the order a read gives
    body = {"test": av_test.pk, "inputs": AV_LOW, **AV_TRACE, "instruments": named}

    entered = clients["analyst"].post("/api/results/", body, format="json", HTTP_IDEMPOTENCY_KEY="tab-9-row-1")
    assert entered.status_code == 201, entered.content
    assert [use["asset_id"] for use in entered.json()["instruments"]] == by_id
    assert clients["analyst"].get(f"/api/results/{entered.json()['id']}/").json() == entered.json()
    replay = clients["analyst"].post("/api/results/", body, format="json", HTTP_IDEMPOTENCY_KEY="tab-9-row-1")
    assert replay.json() == entered.json()


def test_without_a_key_a_repeat_is_a_new_replicate_and_then_a_conflict(lab, clients):
    av_test, _ = lab.assigned("analyst")
    body = {"test": av_test.pk, "inputs": AV_LOW, **AV_TRACE}
    assert [clients["analyst"].post("/api/results/", body, format="json").status_code for _ in range(2)] == [201, 201]
    third = clients["analyst"].post("/api/results/", body, format="json")
    assert third.status_code == 409  # both replicates are in; a third is refused
    assert Result.objects.filter(test=av_test).count() == 2


def test_a_key_reused_for_another_test_is_a_conflict(lab, clients):
    av_test, pv_test = lab.assigned("analyst")
    clients["analyst"].post("/api/results/", {"test": av_test.pk, "inputs": AV_LOW, **AV_TRACE}, format="json", HTTP_IDEMPOTENCY_KEY="k1")
    clash = clients["analyst"].post("/api/results/", {"test": pv_test.pk, "inputs": PV_LOW, **PV_TRACE}, format="json", HTTP_IDEMPOTENCY_KEY="k1")
    assert clash.status_code == 409 and "already used" in clash.json()["detail"]
    assert Result.objects.count() == 1


def test_bulk_entry_records_all_and_a_retry_with_the_same_key_records_nothing_more(lab, clients):
    av_test, pv_test = lab.assigned("analyst")
    items = [
        {"test": av_test.pk, "inputs": AV_LOW, **AV_TRACE}, {"test": av_test.pk, "inputs": AV_LOW_TWIN, **AV_TRACE},
        {"test": pv_test.pk, "inputs": PV_LOW, **PV_TRACE}, {"test": pv_test.pk, "inputs": PV_LOW_TWIN, **PV_TRACE},
    ]
    first = clients["analyst"].post("/api/results/bulk/", {"results": items}, format="json", HTTP_IDEMPOTENCY_KEY="batch-1")
    assert first.status_code == 201, first.content
    body = first.json()
    assert [(r["test"], r["replicate"]) for r in body] == [(av_test.pk, 1), (av_test.pk, 2), (pv_test.pk, 1), (pv_test.pk, 2)]
    # AOCS Cd 8b-90: (12.5 - 0.05) mL * 0.002 mol/L * 1000 / 5.0 g = 4.98 meq O2/kg
    assert body[2]["value"] == pytest.approx(4.98) and body[2]["unit"] == "meq O2/kg"
    retry = clients["analyst"].post("/api/results/bulk/", {"results": items}, format="json", HTTP_IDEMPOTENCY_KEY="batch-1")
    assert retry.status_code == 201 and retry.json() == body
    assert retry.headers["Oleotrace-Replayed"] == "true"
    assert Result.objects.count() == 4
    tests = clients["analyst"].get("/api/tests/", {"sample": av_test.sample_id}).json()["results"]
    assert {t["state"] for t in tests} == {"result_entered"}


def test_bulk_refusal_names_the_item_and_rolls_back(lab, clients):
    av_test, _ = lab.assigned("analyst")
    other, _ = lab.assigned("analyst2", label="L-200-B")
    items = [{"test": av_test.pk, "inputs": AV_LOW, **AV_TRACE}, {"test": other.pk, "inputs": AV_LOW, **AV_TRACE}]
    response = clients["analyst"].post("/api/results/bulk/", {"results": items}, format="json")
    assert response.status_code == 403
    assert response.json()["detail"].startswith("results.1: ")
    assert not Result.objects.exists()


def test_a_correction_keeps_the_old_result_and_its_reason(lab, clients):
    av_test, _ = lab.assigned("analyst")
    first = clients["analyst"].post("/api/results/", {"test": av_test.pk, "inputs": AV_LOW, **AV_TRACE}, format="json").json()
    correction = clients["analyst"].post(
        f"/api/results/{first['id']}/correct/", {"inputs": AV_LOW_TWIN, "reason": "burette read at 1.33 mL"},
        format="json", HTTP_IDEMPOTENCY_KEY="fix-1",
    )
    assert correction.status_code == 201, correction.content
    fixed = correction.json()
    assert fixed["version"] == 2 and fixed["supersedes"] == first["id"] and fixed["replicate"] == 1
    assert fixed["correction_reason"] == "burette read at 1.33 mL"
    # ISO 660: (1.33 - 0.05) * 0.1 * 56.1 / 20.0 = 0.35904
    assert fixed["value"] == pytest.approx(0.35904)
    retry = clients["analyst"].post(
        f"/api/results/{first['id']}/correct/", {"inputs": AV_LOW_TWIN, "reason": "burette read at 1.33 mL"},
        format="json", HTTP_IDEMPOTENCY_KEY="fix-1",
    )
    assert retry.status_code == 201 and retry.json() == fixed
    history = clients["manager"].get(f"/api/tests/{av_test.pk}/results/").json()["results"]
    assert [(r["version"], r["status"]) for r in history] == [(1, ResultStatus.SUPERSEDED), (2, ResultStatus.CURRENT)]
    assert history[0]["status_reason"] == "burette read at 1.33 mL"
    again = clients["analyst"].post(f"/api/results/{first['id']}/correct/", {"inputs": AV_LOW, "reason": "x"}, format="json")
    assert again.status_code == 409  # a superseded result is not corrected twice
    assert clients["analyst"].get(f"/api/results/{fixed['id']}/").json() == fixed


def test_results_of_an_accepted_test_cannot_be_corrected(lab, clients):
    av_test, _ = lab.accepted()
    result = Result.objects.filter(test=av_test).first()
    response = clients["admin"].post(f"/api/results/{result.pk}/correct/", {"inputs": AV_LOW, "reason": "late"}, format="json")
    assert response.status_code == 409
    assert Result.objects.filter(test=av_test).count() == 2


def test_results_exactly_at_the_limit_pass_over_rest(lab, clients):
    # The audit's AV and PV reproducers (issue 7) against the lab's Codex refined-oil limits, AV max 0.6
    # by the absolute method and PV max 10 by the rounding method (CXS 210 appendix, found). On paper
    # AV = 1.00 x 0.1 x 56.1 / 9.35 = 0.6 and PV = 4.97 x 0.01 x 1000 / 4.97 = 10 exactly.
    av_test, pv_test = lab.assigned("analyst")
    av = {"sample_mass": "9.35", "sample_volume": "1.00", "titrant_concentration": "0.1"}
    pv = {"sample_mass": "4.97", "sample_volume": "4.97", "blank_volume": "0", "titrant_concentration": "0.01"}
    for test, inputs in ((av_test, av), (pv_test, pv)):
        code = test.method_code
        as_text = clients["analyst"].post("/api/results/", {"test": test.pk, **entry(code, inputs)}, format="json")
        as_numbers = clients["analyst"].post(
            "/api/results/", {"test": test.pk, **entry(code, {k: float(v) for k, v in inputs.items()})}, format="json"
        )
        assert as_text.status_code == as_numbers.status_code == 201, as_text.json()
        assert as_text.json()["verdict"] == as_numbers.json()["verdict"] == "pass"
        assert clients["analyst"].get(f"/api/tests/{test.pk}/").json()["verdict"] == "pass"


def test_bulk_entry_over_http_runs_the_same_number_of_queries_for_4_and_for_40_results(postgres, lab, clients):
    from django.db import connection
    from django.test.utils import CaptureQueriesContext

    def items(label: str) -> list[dict]:
        av_test, pv_test = lab.assigned("analyst", label=label)
        return [
            {"test": av_test.pk, "inputs": AV_LOW, **AV_TRACE}, {"test": av_test.pk, "inputs": AV_LOW_TWIN, **AV_TRACE},
            {"test": pv_test.pk, "inputs": PV_LOW, **PV_TRACE}, {"test": pv_test.pk, "inputs": PV_LOW_TWIN, **PV_TRACE},
        ]

    small, large = items("Q-0"), [item for n in range(1, 11) for item in items(f"Q-{n}")]
    counts = []
    for batch in (small, large):
        with CaptureQueriesContext(connection) as captured:
            response = clients["analyst"].post("/api/results/bulk/", {"results": batch}, format="json")
        assert response.status_code == 201, response.content
        assert len(response.json()) == len(batch) and all(r["instruments"] for r in response.json())
        # the token's last use is written at most once a while: not part of entering results
        counts.append([q["sql"][:150] for q in captured.captured_queries if "analyses_apitoken" not in q["sql"]])
    assert len(counts[0]) == len(counts[1]), "\n".join(counts[0]) + "\n----\n" + "\n".join(counts[1])
    # the answer shows the instrument uses just written, without reading them back
    assert not any(q.startswith("SELECT") and '"analyses_resultinstrument"' in q for q in counts[1]), counts[1]


def test_results_once_shown_are_freed_without_the_cyclic_collector(lab, users):
    """A batch's results, their budgets, instrument uses, tests and mean budgets refer to one
    another through the rows kept on them; once the answer is built they let go of those, so
    that reference counting frees them at once (issue 12: the cyclic collector held them for a
    dozen batches, then paused up to 100 ms). Without the letting go they outlive this check."""
    import gc
    import weakref

    from analyses.api.views.results import _shown
    from analyses.services.results import result_record_bulk_once

    av_test, _ = lab.assigned("analyst")
    batch = result_record_bulk_once(users["analyst"], [
        {"test": av_test.pk, "inputs": AV_LOW, **AV_TRACE}, {"test": av_test.pk, "inputs": AV_LOW_TWIN, **AV_TRACE},
    ])
    result = batch.results[1]  # it completed its test: a mean budget too
    test = result.test
    kept = [result, test, result.uncertainty, test.uncertainty, *result.instrument_uses.all()]
    watched = [weakref.ref(obj) for obj in kept]
    gc.collect()
    gc.disable()
    try:
        shown = _shown(batch.results)
        del batch, result, test, kept
        assert [ref() for ref in watched] == [None] * len(watched)
    finally:
        gc.enable()
    assert [row["replicate"] for row in shown] == [1, 2] and all(len(row["instruments"]) == 2 for row in shown)
