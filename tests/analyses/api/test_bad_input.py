"""Bad input on every write endpoint: a 400 naming the field (nested fields with dots),
nothing written, never a 500. Unknown ids in the path are 404s. The error format is the
project's own (analyses/api/errors.py); no outside source."""
from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import pytest

from analyses.models import ReagentLot, Result
from analyses.services.results import result_record
from tests.analyses.api.support import Call, Lab, row_counts
from tests.analyses.lab_setup import AV_LOW, AV_LOW_TWIN, AV_TRACE, PV_TRACE

pytestmark = pytest.mark.django_db

HUGE_ID = 10**20  # beyond any database integer


@dataclass(frozen=True)
class Bad:
    name: str
    role: str  # a role allowed to call the endpoint, so the input is what fails
    arrange: Callable[[Lab], Call]
    field: str  # the field the 400 must name


def _spec(lab: Lab, **changes) -> Call:
    body = {"product": lab.product.pk, "effective_from": "2025-01-01", "lines": [{"method": "av", "maximum": "0.6"}]}
    return Call("post", "/api/specifications/", {**body, **changes})


def _line(lab: Lab, *lines) -> Call:
    return _spec(lab, lines=list(lines))


def _lot(lab: Lab, **changes) -> Call:
    return Call("post", "/api/lots/", {"code": "L-7", "product": lab.product.pk, "origin": "production", **changes})


def _receive(lab: Lab, **changes) -> Call:
    return Call("post", f"/api/samples/{lab.sample().pk}/receive/", {"condition": "sealed", "storage_place": "A1", **changes})


def _assign(lab: Lab, **changes) -> Call:
    tests = list(lab.received().tests.values_list("pk", flat=True))
    return Call("post", "/api/tests/assign/", {"tests": tests, "assignee": lab.users["analyst"].pk, **changes})


def _record(lab: Lab, headers=None, **changes) -> Call:
    av_test, _ = lab.assigned("analyst")
    return Call("post", "/api/results/", {"test": av_test.pk, "inputs": AV_LOW, **AV_TRACE, **changes}, headers=headers or {})


def _bulk(lab: Lab, *items) -> Call:
    av_test, pv_test = lab.assigned("analyst")
    ids = {"av": av_test.pk, "pv": pv_test.pk}
    return Call("post", "/api/results/bulk/", {"results": [{**item, "test": ids.get(item.get("test"), item.get("test"))} for item in items]})


def _correct(lab: Lab, **body) -> Call:
    av_test, _ = lab.assigned("analyst")
    result = result_record(lab.users["analyst"], av_test, inputs=AV_LOW, **AV_TRACE)
    return Call("post", f"/api/results/{result.pk}/correct/", body)


def _close(lab: Lab, **body) -> Call:
    return Call("post", f"/api/investigations/{lab.investigation().pk}/close/", body)


def _sample_action(action: str, body) -> Callable[[Lab], Call]:
    return lambda lab: Call("post", f"/api/samples/{lab.received().pk}/{action}/", body)


# invented values throughout; the limits' sources do not matter for bad input
CASES = [
    Bad("product: malformed JSON", "manager", lambda lab: Call("post", "/api/products/", raw='{"code": "X",'), "body"),
    Bad("product: a list instead of an object", "manager", lambda lab: Call("post", "/api/products/", [1, 2]), "non_field_errors"),
    Bad("product: code missing", "manager", lambda lab: Call("post", "/api/products/", {"name": "Oil"}), "code"),
    Bad("product: name of the wrong type", "manager", lambda lab: Call("post", "/api/products/", {"code": "X", "name": ["a"]}), "name"),
    Bad("product: code a number, not text", "manager", lambda lab: Call("post", "/api/products/", {"code": 7, "name": "Oil"}), "code"),
    Bad("product: unknown field", "manager", lambda lab: Call("post", "/api/products/", {"code": "X", "name": "Oil", "colour": "gold"}), "colour"),
    Bad("product: code already used", "manager", lambda lab: Call("post", "/api/products/", {"code": lab.product.code, "name": "Oil"}), "code"),
    Bad("specification: unknown product", "manager", lambda lab: _spec(lab, product=999999), "product"),
    Bad("specification: product beyond any id", "manager", lambda lab: _spec(lab, product=HUGE_ID), "product"),
    Bad("specification: product not a number", "manager", lambda lab: _spec(lab, product="abc"), "product"),
    Bad("specification: date not a date", "manager", lambda lab: _spec(lab, effective_from="next week"), "effective_from"),
    Bad("specification: no lines", "manager", lambda lab: _spec(lab, lines=[]), "lines"),
    Bad("specification: lines not a list", "manager", lambda lab: _spec(lab, lines="av"), "lines"),
    Bad("specification: line without method", "manager", lambda lab: _line(lab, {"maximum": "0.6"}), "lines.0.method"),
    Bad("specification: unknown method", "manager", lambda lab: _line(lab, {"method": "xyz", "maximum": "1"}), "lines.0.method"),
    Bad(
        "specification: limit not a number", "manager",
        lambda lab: _line(lab, {"method": "av", "maximum": "0.6"}, {"method": "pv", "maximum": "ten"}), "lines.1.maximum",
    ),
    Bad(
        "specification: limit longer than a line keeps", "manager",
        lambda lab: _line(lab, {"method": "av", "maximum": "0." + "1" * 40}), "lines.0.maximum",
    ),
    Bad("specification: limit with a vast exponent", "manager", lambda lab: _line(lab, {"method": "av", "maximum": "1E-999999999"}), "lines.0.maximum"),
    Bad("specification: minimum above maximum", "manager", lambda lab: _line(lab, {"method": "av", "minimum": "2", "maximum": "1"}), "lines.0.maximum"),
    Bad("specification: no limit at all", "manager", lambda lab: _line(lab, {"method": "av"}), "lines.0.minimum"),
    Bad(
        "specification: unknown Codex oil type", "manager",
        lambda lab: _line(lab, {"method": "av", "codex_oil_type": "motor oil"}), "lines.0.codex_oil_type",
    ),
    Bad(
        "specification: limits and a Codex oil type", "manager",
        lambda lab: _line(lab, {"method": "av", "maximum": "1", "codex_oil_type": "refined"}), "lines.0.codex_oil_type",
    ),
    Bad("specification: misspelt line field", "manager", lambda lab: _line(lab, {"method": "av", "maximun": "1"}), "lines.0.maximun"),
    Bad("specification: negative turnaround", "manager", lambda lab: _line(lab, {"method": "av", "maximum": "1", "turnaround_days": -1}), "lines.0.turnaround_days"),
    Bad("specification: unknown comparison", "manager", lambda lab: _line(lab, {"method": "av", "maximum": "1", "comparison": "eyeball"}), "lines.0.comparison"),
    Bad(
        "specification: a method twice", "manager",
        lambda lab: _line(lab, {"method": "av", "maximum": "1"}, {"method": "av", "maximum": "2"}), "lines.1.method",
    ),
    Bad("specification lines: none given", "manager", lambda lab: Call("put", f"/api/specifications/{lab.draft.pk}/lines/", {}), "lines"),
    Bad(
        "specification lines: bad limit", "manager",
        lambda lab: Call("put", f"/api/specifications/{lab.draft.pk}/lines/", {"lines": [{"method": "av", "maximum": "-"}]}),
        "lines.0.maximum",
    ),
    Bad("specification revise: date missing", "qa", lambda lab: Call("post", f"/api/specifications/{lab.specification.pk}/revise/", {}), "effective_from"),
    Bad(
        "specification revise: bad line", "qa",
        lambda lab: Call("post", f"/api/specifications/{lab.specification.pk}/revise/", {"effective_from": "2031-01-01", "lines": [{}]}),
        "lines.0.method",
    ),
    Bad("lot: unknown origin", "manager", lambda lab: _lot(lab, origin="barge"), "origin"),
    Bad("lot: delivery without supplier", "manager", lambda lab: _lot(lab, origin="delivery", container_ref="T-4"), "supplier"),
    Bad("lot: negative quantity", "manager", lambda lab: _lot(lab, quantity_kg="-5"), "quantity_kg"),
    Bad("lot: quantity not a number", "manager", lambda lab: _lot(lab, quantity_kg="a lot"), "quantity_kg"),
    Bad("lot: unknown product", "manager", lambda lab: _lot(lab, product=999999), "product"),
    Bad("lot: impossible date", "manager", lambda lab: _lot(lab, produced_on="2024-13-01"), "produced_on"),
    Bad("lot: code already used", "manager", lambda lab: _lot(lab, code=lab.lot.code), "code"),
    Bad("lot release: note of the wrong type", "qa", lambda lab: Call("post", f"/api/lots/{lab.lot.pk}/release/", {"note": ["x"]}), "note"),
    Bad("lot reject: reason missing", "qa", lambda lab: Call("post", f"/api/lots/{lab.lot.pk}/reject/", {}), "reason"),
    Bad("lot reject: reason a number, not text", "qa", lambda lab: Call("post", f"/api/lots/{lab.lot.pk}/reject/", {"reason": 0}), "reason"),
    Bad("lot reject: reason blank", "qa", lambda lab: Call("post", f"/api/lots/{lab.lot.pk}/reject/", {"reason": "   "}), "reason"),
    Bad("sample: lot missing", "manager", lambda lab: Call("post", "/api/samples/", {"kind": "routine"}), "lot"),
    Bad("sample: unknown lot", "manager", lambda lab: Call("post", "/api/samples/", {"lot": 999999}), "lot"),
    Bad("sample: unknown kind", "manager", lambda lab: Call("post", "/api/samples/", {"lot": lab.lot.pk, "kind": "bucket"}), "kind"),
    Bad("sample: blank label", "manager", lambda lab: Call("post", "/api/samples/", {"lot": lab.lot.pk, "label": ""}), "label"),
    Bad("sample: label already used", "manager", lambda lab: Call("post", "/api/samples/", {"lot": lab.lot.pk, "label": lab.sample().label}), "label"),
    Bad("sample: time not a time", "manager", lambda lab: Call("post", "/api/samples/", {"lot": lab.lot.pk, "taken_at": "noon"}), "taken_at"),
    Bad("receive: condition missing", "manager", lambda lab: Call("post", f"/api/samples/{lab.sample().pk}/receive/", {"storage_place": "A1"}), "condition"),
    Bad("receive: storage place a number, not text", "manager", lambda lab: _receive(lab, storage_place=12), "storage_place"),
    Bad("receive: unknown priority", "manager", lambda lab: _receive(lab, priority=9), "priority"),
    Bad("receive: due date not a date", "manager", lambda lab: _receive(lab, due_on="soon"), "due_on"),
    Bad("receive: received far in the future", "manager", lambda lab: _receive(lab, received_at="9999-12-30T00:00:00Z"), "received_at"),
    Bad("receive: received before registration", "manager", lambda lab: _receive(lab, received_at="2001-01-01T00:00:00Z"), "received_at"),
    Bad("receive: due before receipt", "manager", lambda lab: _receive(lab, due_on="2001-01-01"), "due_on"),
    Bad("receive: malformed JSON", "manager", lambda lab: Call("post", f"/api/samples/{lab.sample().pk}/receive/", raw="{condition"), "body"),
    Bad("hold: reason missing", "manager", _sample_action("hold", {}), "reason"),
    Bad("hold: reason not text", "qa", _sample_action("hold", {"reason": {"why": "x"}}), "reason"),
    Bad("hold: reason a number, not text", "manager", _sample_action("hold", {"reason": 0}), "reason"),
    Bad("resume: reason missing", "manager", _sample_action("resume", {}), "reason"),
    Bad("cancel: reason blank", "manager", _sample_action("cancel", {"reason": ""}), "reason"),
    Bad("assign: no tests", "manager", lambda lab: _assign(lab, tests=[]), "tests"),
    Bad("assign: tests not a list", "manager", lambda lab: _assign(lab, tests="1,2"), "tests"),
    Bad("assign: unknown test, named by position", "manager", lambda lab: _assign(lab, tests=[lab.received().tests.first().pk, 999999]), "tests.1"),
    Bad("assign: a test twice", "manager", lambda lab: _assign(lab, tests=[lab.received().tests.first().pk] * 2), "tests"),
    Bad("assign: assignee missing", "manager", lambda lab: Call("post", "/api/tests/assign/", {"tests": [1]}), "assignee"),
    Bad("assign: unknown assignee", "manager", lambda lab: _assign(lab, assignee=999999), "assignee"),
    Bad("assign: assignee who may not enter results", "manager", lambda lab: _assign(lab, assignee=lab.users["qa"].pk), "assignee"),
    Bad("assign: due date in the past", "manager", lambda lab: _assign(lab, due_on="2001-01-01"), "due_on"),
    Bad("assign: unknown priority", "manager", lambda lab: _assign(lab, priority=0), "priority"),
    Bad("accept: note of the wrong type", "analyst", lambda lab: Call("post", f"/api/tests/{lab.entered('analyst2')[0].pk}/accept/", {"note": [1]}), "note"),
    Bad("send back: reason missing", "analyst", lambda lab: Call("post", f"/api/tests/{lab.entered('analyst2')[0].pk}/send-back/", {}), "reason"),
    Bad("result: test missing", "analyst", lambda lab: Call("post", "/api/results/", {"inputs": AV_LOW}), "test"),
    Bad("result: unknown test", "analyst", lambda lab: _record(lab, test=999999), "test"),
    Bad("result: inputs not an object", "analyst", lambda lab: _record(lab, inputs="20 g"), "inputs"),
    Bad("result: input not a number", "analyst", lambda lab: _record(lab, inputs={**AV_LOW, "sample_mass": "heavy"}), "inputs.sample_mass"),
    Bad("result: input in the wrong unit", "analyst", lambda lab: _record(lab, inputs={**AV_LOW, "sample_mass": "20 mL"}), "inputs.sample_mass"),
    Bad(
        "result: input missing", "analyst",
        lambda lab: _record(lab, inputs={k: v for k, v in AV_LOW.items() if k != "sample_volume"}),
        "inputs.sample_volume",
    ),
    Bad("result: inputs giving a result too large to report", "analyst", lambda lab: _record(lab, inputs={**AV_LOW, "sample_volume": "1e300"}), "inputs"),
    # issue 13: a portion no standard allows (ISO 660's smallest is 0.1 g, from memory)
    Bad("result: test portion beyond the method's hard bound", "analyst", lambda lab: _record(lab, inputs={**AV_LOW, "sample_mass": "0.000001"}), "inputs.sample_mass"),
    Bad("result: replicate zero", "analyst", lambda lab: _record(lab, replicate=0), "replicate"),
    Bad("result: replicate beyond the test's", "analyst", lambda lab: _record(lab, replicate=3), "replicate"),
    Bad("result: Idempotency-Key too long", "analyst", lambda lab: _record(lab, headers={"Idempotency-Key": "k" * 81}), "Idempotency-Key"),
    Bad("result: Idempotency-Key blank", "analyst", lambda lab: _record(lab, headers={"Idempotency-Key": "  "}), "Idempotency-Key"),
    Bad("bulk: no results", "analyst", lambda lab: Call("post", "/api/results/bulk/", {"results": []}), "results"),
    Bad("bulk: results not a list", "analyst", lambda lab: Call("post", "/api/results/bulk/", {"results": "many"}), "results"),
    Bad(
        "bulk: third item bad, the first two not written", "analyst",
        lambda lab: _bulk(
            lab, {"test": "av", "inputs": AV_LOW, **AV_TRACE}, {"test": "av", "inputs": AV_LOW_TWIN, **AV_TRACE},
            {"test": "pv", "inputs": {"sample_mass": "x", "sample_volume": "1", "blank_volume": "0"}, **PV_TRACE},
        ),
        "results.2.inputs.sample_mass",
    ),
    Bad("bulk: unknown test", "analyst", lambda lab: _bulk(lab, {"test": "av", "inputs": AV_LOW, **AV_TRACE}, {"test": 999999, "inputs": AV_LOW, **AV_TRACE}), "results.1.test"),
    Bad("bulk: inputs missing", "analyst", lambda lab: _bulk(lab, {"test": "av"}), "results.0.inputs"),
    Bad("bulk: misspelt item field", "analyst", lambda lab: _bulk(lab, {"test": "av", "inputs": AV_LOW, "replicat": 1, **AV_TRACE}), "results.0.replicat"),
    Bad("correct: reason missing", "analyst", lambda lab: _correct(lab, inputs=AV_LOW_TWIN), "reason"),
    Bad("correct: reason a number, not text", "analyst", lambda lab: _correct(lab, inputs=AV_LOW_TWIN, reason=1.5), "reason"),
    Bad("correct: input not a number", "analyst", lambda lab: _correct(lab, inputs={**AV_LOW, "sample_volume": "?"}, reason="misread"), "inputs.sample_volume"),
    Bad("close: unknown conclusion", "qa", lambda lab: _close(lab, conclusion="maybe", findings="x"), "conclusion"),
    Bad("close: findings a boolean, not text", "qa", lambda lab: _close(lab, conclusion="confirmed", findings=True), "findings"),
    Bad("close: findings missing", "qa", lambda lab: _close(lab, conclusion="confirmed"), "findings"),
    Bad("token: password missing", "anonymous", lambda lab: Call("post", "/api/auth/token/", {"username": "qa"}), "password"),
    Bad(
        "token: name too long", "anonymous",
        lambda lab: Call("post", "/api/auth/token/", {"username": "qa", "password": "x", "name": "n" * 81}), "name",
    ),
]


@pytest.mark.parametrize("case", CASES, ids=[case.name for case in CASES])
def test_bad_input_is_a_400_naming_the_field_and_writes_nothing(case: Bad, lab, clients):
    call = case.arrange(lab)
    before = row_counts()
    response = call.send(clients[case.role])
    assert response.status_code == 400, response.content
    body = response.json()
    assert case.field in body["fields"], body
    assert body["fields"][case.field] and body["detail"]
    assert row_counts() == before


@pytest.mark.parametrize(
    "query, field",
    [
        ("/api/lots/?state=lost", "state"),
        ("/api/lots/?product=abc", "product"),
        ("/api/lots/?product=999999", "product"),
        ("/api/lots/?created_after=yesterday", "created"),
        ("/api/samples/?kind=bucket", "kind"),
        ("/api/tests/?overdue=perhaps", "overdue"),
        ("/api/tests/?assignee=999999", "assignee"),
        ("/api/tests/?due_on_before=2024-02-30", "due_on"),
        ("/api/investigations/?state=pending", "state"),
        ("/api/specifications/?status=final", "status"),
        ("/api/turnaround/?since=last+week", "since"),
    ],
)
def test_bad_filters_are_a_400_naming_the_parameter(query, field, clients):
    response = clients["manager"].get(query)
    assert response.status_code == 400, response.content
    assert field in response.json()["fields"]


REASON = {"reason": "checked"}


@pytest.mark.parametrize(
    "role, method, path, body",
    [
        ("qa", "post", "/api/lots/999999/release/", {}),
        ("qa", "post", "/api/lots/999999/reject/", REASON),
        ("qa", "post", f"/api/lots/{HUGE_ID}/release/", {}),
        ("manager", "get", "/api/lots/999999/", None),
        ("manager", "get", "/api/lots/999999/readiness/", None),
        ("manager", "get", "/api/lots/999999/certificate/", None),
        ("manager", "get", "/api/lots/999999/audit-trail/", None),
        ("manager", "get", "/api/samples/999999/", None),
        ("manager", "post", "/api/samples/999999/receive/", {"condition": "ok", "storage_place": "A1"}),
        ("manager", "post", "/api/samples/999999/hold/", REASON),
        ("manager", "post", "/api/samples/999999/resume/", REASON),
        ("manager", "post", "/api/samples/999999/cancel/", REASON),
        ("manager", "get", "/api/samples/999999/audit-trail/", None),
        ("manager", "get", "/api/products/999999/", None),
        ("manager", "get", "/api/specifications/999999/", None),
        ("manager", "put", "/api/specifications/999999/lines/", {"lines": [{"method": "av", "maximum": "1"}]}),
        ("qa", "post", "/api/specifications/999999/approve/", {}),
        ("qa", "post", "/api/specifications/999999/revise/", {"effective_from": "2031-01-01"}),
        ("manager", "get", "/api/tests/999999/", None),
        ("manager", "get", "/api/tests/999999/results/", None),
        ("manager", "get", "/api/tests/queue/xyz/", None),
        ("analyst", "post", "/api/tests/999999/accept/", {}),
        ("analyst", "post", "/api/tests/999999/send-back/", REASON),
        ("analyst", "get", "/api/results/999999/", None),
        ("analyst", "post", "/api/results/999999/correct/", {"inputs": AV_LOW, "reason": "misread"}),
        ("qa", "get", "/api/investigations/999999/", None),
        ("qa", "post", "/api/investigations/999999/close/", {"conclusion": "confirmed", "findings": "x"}),
        ("manager", "get", "/api/lots/?page=99", None),
    ],
)
def test_unknown_ids_in_the_path_are_404(role, method, path, body, clients):
    before = row_counts()
    response = getattr(clients[role], method)(path, body, format="json")
    assert response.status_code == 404, response.content
    assert response.json()["detail"]
    assert row_counts() == before


def test_bulk_entry_is_all_or_nothing(lab, clients):
    call = CASES[[c.name for c in CASES].index("bulk: third item bad, the first two not written")].arrange(lab)
    response = call.send(clients["analyst"])
    assert response.status_code == 400
    assert not Result.objects.exists()


WRITE_ENDPOINTS = [
    ("manager", "post", lambda lab: "/api/products/"),
    ("manager", "post", lambda lab: "/api/specifications/"),
    ("manager", "put", lambda lab: f"/api/specifications/{lab.draft.pk}/lines/"),
    ("qa", "post", lambda lab: f"/api/specifications/{lab.specification.pk}/revise/"),
    ("manager", "post", lambda lab: "/api/lots/"),
    ("qa", "post", lambda lab: f"/api/lots/{lab.lot.pk}/release/"),
    ("qa", "post", lambda lab: f"/api/lots/{lab.lot.pk}/reject/"),
    ("manager", "post", lambda lab: "/api/samples/"),
    ("manager", "post", lambda lab: f"/api/samples/{lab.sample().pk}/receive/"),
    ("manager", "post", lambda lab: f"/api/samples/{lab.sample().pk}/hold/"),
    ("manager", "post", lambda lab: f"/api/samples/{lab.sample().pk}/resume/"),
    ("manager", "post", lambda lab: f"/api/samples/{lab.sample().pk}/cancel/"),
    ("manager", "post", lambda lab: "/api/tests/assign/"),
    ("analyst", "post", lambda lab: f"/api/tests/{lab.entered('analyst2')[0].pk}/accept/"),
    ("analyst", "post", lambda lab: f"/api/tests/{lab.entered('analyst2')[0].pk}/send-back/"),
    ("analyst", "post", lambda lab: "/api/results/"),
    ("analyst", "post", lambda lab: "/api/results/bulk/"),
    ("analyst", "post", lambda lab: f"/api/results/{_a_result(lab).pk}/correct/"),
    ("qa", "post", lambda lab: f"/api/investigations/{lab.investigation().pk}/close/"),
    ("anonymous", "post", lambda lab: "/api/auth/token/"),
]
ODD_BODIES = {
    "null": "null",
    "number": "42",
    "string": '"approve"',
    "list": "[1, 2]",
    "nested junk": '{"lines": {"0": null}, "results": [[1]], "tests": [{"id": 1}], "inputs": [1], "reason": 7, "product": [1]}',
    "huge ids": f'{{"product": {HUGE_ID}, "lot": {HUGE_ID}, "test": {HUGE_ID}, "tests": [{HUGE_ID}], "assignee": {HUGE_ID}, '
                f'"results": [{{"test": {HUGE_ID}, "inputs": {{}}}}], "replicate": {HUGE_ID}, "quantity_kg": "1e30"}}',
    "not JSON": "<xml/>",
}


def _a_result(lab: Lab) -> Result:
    av_test, _ = lab.assigned("analyst", label="L-200-C")
    return result_record(lab.users["analyst"], av_test, inputs=AV_LOW, **AV_TRACE)


@pytest.mark.parametrize("body_name", list(ODD_BODIES))
@pytest.mark.parametrize("role, method, path", WRITE_ENDPOINTS, ids=[f"{m} {i}" for i, (_, m, _) in enumerate(WRITE_ENDPOINTS)])
def test_odd_bodies_are_refused_as_input_never_a_server_error(role, method, path, body_name, lab, clients):
    url = path(lab)
    before = row_counts()
    response = Call(method, url, raw=ODD_BODIES[body_name]).send(clients[role])
    assert response.status_code == 400, response.content
    assert response.json()["fields"]
    assert row_counts() == before


def test_form_encoded_input_is_read_or_refused_never_a_server_error(lab, clients):
    av_test, _ = lab.assigned("analyst")
    response = clients["analyst"].post(  # multipart
        "/api/results/", {"test": av_test.pk, "inputs": "sample_mass=20", **AV_TRACE}
    )
    assert response.status_code == 400
    assert all(name.startswith("inputs") for name in response.json()["fields"])
    plain = clients["analyst"].generic("POST", "/api/results/", "test=1", content_type="text/plain")
    assert plain.status_code == 415 and plain.json()["detail"]


# One bad id per request, so each field's own check is exercised (the "huge ids" odd body
# above puts them all in one request, where the first one checked hides the others).
ONE_HUGE_ID = [
    Bad("huge id: specification product", "manager", lambda lab: _spec(lab, product=HUGE_ID), "product"),
    Bad("huge id: lot product", "manager", lambda lab: _lot(lab, product=HUGE_ID), "product"),
    Bad("huge id: sample lot", "manager", lambda lab: Call("post", "/api/samples/", {"lot": HUGE_ID}), "lot"),
    Bad("huge id: assigned test", "manager", lambda lab: _assign(lab, tests=[HUGE_ID]), "tests.0"),
    Bad(
        "huge id: second assigned test", "manager",
        lambda lab: _assign(lab, tests=[lab.received().tests.first().pk, HUGE_ID]), "tests.1",
    ),
    Bad("huge id: assignee", "manager", lambda lab: _assign(lab, assignee=HUGE_ID), "assignee"),
    Bad("huge id: result test", "analyst", lambda lab: _record(lab, test=HUGE_ID), "test"),
    Bad("huge id: result replicate", "analyst", lambda lab: _record(lab, replicate=HUGE_ID), "replicate"),
    Bad("huge id: bulk item test", "analyst", lambda lab: _bulk(lab, {"test": HUGE_ID, "inputs": AV_LOW, **AV_TRACE}), "results.0.test"),
    Bad("huge id: bulk item replicate", "analyst", lambda lab: _bulk(lab, {"test": "av", "inputs": AV_LOW, "replicate": HUGE_ID, **AV_TRACE}), "results.0.replicate"),
    Bad("huge quantity", "manager", lambda lab: _lot(lab, quantity_kg="1e30"), "quantity_kg"),
    Bad("huge id: result titrant lot", "analyst", lambda lab: _record(lab, titrant_lot=HUGE_ID), "titrant_lot"),
    Bad("huge id: result instrument", "analyst", lambda lab: _record(lab, instruments=["BAL-BENCH", HUGE_ID]), "instruments.1"),
    Bad(
        "huge id: standardisation burette", "analyst",
        lambda lab: Call("post", f"/api/reagent-lots/{ReagentLot.objects.get(code='KOH-BENCH').pk}/standardisations/", {
            "primary_standard": "khp", "replicates": [{"mass": "0.4", "titre": "20"}] * 2, "burette": HUGE_ID,
        }),
        "burette",
    ),
]


@pytest.mark.parametrize("case", ONE_HUGE_ID, ids=[case.name for case in ONE_HUGE_ID])
def test_one_id_beyond_any_integer_is_a_400_naming_its_field(case: Bad, lab, clients):
    call = case.arrange(lab)
    before = row_counts()
    response = call.send(clients[case.role])
    assert response.status_code == 400, response.content
    assert case.field in response.json()["fields"], response.json()
    assert row_counts() == before


@pytest.mark.parametrize(
    "query, field",
    [
        ("/api/tests/?sample=1e30", "sample"),
        ("/api/tests/?sample=1.5", "sample"),  # not sample 1
        (f"/api/tests/?sample={HUGE_ID}", "sample"),
        (f"/api/tests/?lot={HUGE_ID}", "lot"),
        (f"/api/tests/?assignee={HUGE_ID}", "assignee"),
        (f"/api/tests/?product={HUGE_ID}", "product"),
        (f"/api/lots/?product={HUGE_ID}", "product"),
        (f"/api/samples/?lot={HUGE_ID}", "lot"),
        (f"/api/investigations/?lot={HUGE_ID}", "lot"),
        (f"/api/specifications/?product={HUGE_ID}", "product"),
    ],
)
def test_filter_ids_beyond_any_integer_or_not_whole_are_a_400(query, field, clients):
    response = clients["manager"].get(query)
    assert response.status_code == 400, response.content
    assert field in response.json()["fields"]


@pytest.mark.parametrize(
    "role, method, path, body",
    [
        ("manager", "get", f"/api/lots/{HUGE_ID}/", None),
        ("manager", "get", f"/api/lots/{HUGE_ID}/readiness/", None),
        ("manager", "get", f"/api/lots/{HUGE_ID}/certificate/", None),
        ("manager", "get", f"/api/lots/{HUGE_ID}/audit-trail/", None),
        ("qa", "post", f"/api/lots/{HUGE_ID}/reject/", REASON),
        ("manager", "get", f"/api/samples/{HUGE_ID}/", None),
        ("manager", "post", f"/api/samples/{HUGE_ID}/receive/", {"condition": "ok", "storage_place": "A1"}),
        ("manager", "post", f"/api/samples/{HUGE_ID}/hold/", REASON),
        ("manager", "post", f"/api/samples/{HUGE_ID}/resume/", REASON),
        ("manager", "post", f"/api/samples/{HUGE_ID}/cancel/", REASON),
        ("manager", "get", f"/api/samples/{HUGE_ID}/audit-trail/", None),
        ("manager", "get", f"/api/products/{HUGE_ID}/", None),
        ("manager", "get", f"/api/specifications/{HUGE_ID}/", None),
        ("manager", "put", f"/api/specifications/{HUGE_ID}/lines/", {"lines": [{"method": "av", "maximum": "1"}]}),
        ("qa", "post", f"/api/specifications/{HUGE_ID}/approve/", {}),
        ("qa", "post", f"/api/specifications/{HUGE_ID}/revise/", {"effective_from": "2031-01-01"}),
        ("manager", "get", f"/api/tests/{HUGE_ID}/", None),
        ("manager", "get", f"/api/tests/{HUGE_ID}/results/", None),
        ("analyst", "post", f"/api/tests/{HUGE_ID}/accept/", {}),
        ("analyst", "post", f"/api/tests/{HUGE_ID}/send-back/", REASON),
        ("analyst", "get", f"/api/results/{HUGE_ID}/", None),
        ("analyst", "post", f"/api/results/{HUGE_ID}/correct/", {"inputs": AV_LOW, "reason": "misread"}),
        ("qa", "get", f"/api/investigations/{HUGE_ID}/", None),
        ("qa", "post", f"/api/investigations/{HUGE_ID}/close/", {"conclusion": "confirmed", "findings": "x"}),
    ],
)
def test_path_ids_beyond_any_integer_are_404(role, method, path, body, clients):
    before = row_counts()
    response = getattr(clients[role], method)(path, body, format="json")
    assert response.status_code == 404, response.content
    assert row_counts() == before
