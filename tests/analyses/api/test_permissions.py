"""Who may do what: every role against every endpoint that changes something (and the
restricted reads), with a Django superuser in no group as the seventh identity: it may do
what an admin may, and never the QA decisions (issue 8). The role rules are the project's
own (analyses/roles.py and the four-eyes and segregation-of-duties rules of the services);
no outside source."""
from __future__ import annotations

import datetime as dt
from collections.abc import Callable
from dataclasses import dataclass

import pytest
from django.contrib.auth.models import Group
from django.utils import timezone

from analyses.api.urls import urlpatterns
from analyses.api.urls_monitoring import urlpatterns as monitoring_urlpatterns
from analyses.api.urls_traceability import urlpatterns as traceability_urlpatterns
from analyses.models import Alert, Instrument, ReagentKind, ReagentLot, Result, SampleState
from analyses.services.assignments import test_assign_bulk
from analyses.services.investigations import investigation_close
from analyses.services.lots import lot_release
from analyses.services.post_release_corrections import post_release_correction_propose
from analyses.services.results import result_record
from analyses.services.review import test_accept
from analyses.services.samples import sample_hold
from analyses.services.stability import stability_study_create
from tests.analyses.api.support import Call, Lab, row_counts
from tests.analyses.lab_setup import AV_LOW, AV_LOW_TWIN, AV_TRACE
from tests.factories import SIGNING_PASSWORD, UserFactory

pytestmark = pytest.mark.django_db

SIGNED = {"password": SIGNING_PASSWORD}  # the release's electronic signature

ROLES = ("manager", "analyst", "qa", "admin", "nobody", "anonymous", "superuser")


@dataclass(frozen=True)
class Case:
    name: str
    arrange: Callable[[Lab], Call]
    allowed: dict[str, int]  # role -> status when allowed; other signed-in roles get 403


def _resume(lab: Lab) -> Call:
    sample = sample_hold(lab.manager, lab.received(), reason="seal broken")
    assert sample.state == SampleState.ON_HOLD
    return Call("post", f"/api/samples/{sample.pk}/resume/", {"reason": "new seal checked"})


def _correct(lab: Lab) -> Call:
    av_test, _ = lab.assigned("analyst")
    result = result_record(lab.users["analyst"], av_test, inputs=AV_LOW, **AV_TRACE)
    return Call("post", f"/api/results/{result.pk}/correct/", {"inputs": AV_LOW_TWIN, "reason": "burette misread"})


def _study_protocol(lab: Lab, code: str = "STAB-PERM") -> dict:
    """An invented protocol: refined soybean oil at 25 and 40 °C, PV monthly."""
    return {
        "code": code, "title": "Invented shelf-life study", "product": lab.product.pk, "lots": [lab.lot.pk],
        "started_on": "2026-01-01", "storage_temperature_c": 25, "claimed_shelf_life_months": 12,
        "conditions": [{"temperature_c": 25}, {"temperature_c": 40}],
        "pull_points": [{"offset": m} for m in (0, 1, 2)], "attributes": [{"method_code": "pv", "maximum": 10}],
    }


def _study(lab: Lab) -> int:
    body = _study_protocol(lab, "STAB-PERM-0")
    body["started_on"] = dt.date.fromisoformat(body["started_on"])
    return stability_study_create(lab.users["qa"], **body).pk


def _held_lot(lab: Lab) -> Call:
    investigation_close(
        lab.users["qa"], lab.post_release_finding(), conclusion="hold_notice", findings="agrees",
        hold_reason="customers asked to hold stock",
    )
    return Call("post", f"/api/lots/{lab.lot.pk}/hold-notice/lift/", {"reason": "stock retested in specification"})


def _alert(lab: Lab) -> int:
    alert = Alert.objects.create(
        source="trend", rule="westgard_1_3s", series_key=f"qc:{lab.lot.pk}:av", episode_key="perm-1",
        message="invented alert", raised_at=timezone.now(), lot=lab.lot, product=lab.product,
    )
    return alert.pk


def _bench(name: str) -> int:
    """A row of the bench fixture (tests/analyses/lab_setup.py) by its code."""
    if name.startswith(("BAL", "BUR", "UV")):
        return Instrument.objects.get(asset_id=name).pk
    return ReagentLot.objects.get(code=name).pk


KHP_REPLICATES = [{"mass": "0.4084", "titre": "20.00"}, {"mass": "0.4085", "titre": "20.01"}]


def _standardise(lab: Lab) -> Call:
    body = {"primary_standard": "khp", "replicates": KHP_REPLICATES, "balance": _bench("BAL-BENCH"), "burette": _bench("BUR-BENCH")}
    return Call("post", f"/api/reagent-lots/{_bench('KOH-BENCH')}/standardisations/", body)


def _supersede(lab: Lab) -> Call:
    lot = ReagentLot.objects.get(code="KOH-BENCH")
    body = {"primary_standard": "khp", "replicates": KHP_REPLICATES, "balance": _bench("BAL-BENCH"),
            "burette": _bench("BUR-BENCH"), "reason": "KHP mass transcribed wrongly"}
    return Call("post", f"/api/standardisations/{lot.standardisations.get().pk}/supersede/", body)


def _released_result(lab: Lab) -> Result:
    """Replicate 1 of the AV test, entered by "analyst" (its assignee), accepted by analyst2, released."""
    tests = lab.entered("analyst")
    for test in tests:
        test_accept(lab.users["analyst2"], test)
    lot_release(lab.users["qa"], lab.lot, password=SIGNING_PASSWORD)
    return tests[0].results.get(replicate=1, status="current")


def _post_release_proposal(lab: Lab) -> int:
    result = _released_result(lab)
    return post_release_correction_propose(lab.users["analyst"], result, inputs=AV_LOW_TWIN, reason="titre misread").pk


MANAGER_ADMIN = {"manager": 201, "admin": 201, "superuser": 201}
DRAFTERS = {"manager": 201, "qa": 201, "admin": 201, "superuser": 201}
QA_ADMIN_200 = {"qa": 200, "admin": 200, "superuser": 200}
ENTERERS = {"analyst": 201, "admin": 201, "superuser": 201}
REVIEWERS = {"manager": 200, "analyst": 200, "qa": 200, "admin": 200, "superuser": 200}
MANAGER_QA_ADMIN_200 = {"manager": 200, "qa": 200, "admin": 200, "superuser": 200}
MANAGER_ADMIN_200 = {"manager": 200, "admin": 200, "superuser": 200}
SIGNED_IN_READ = {"manager": 200, "analyst": 200, "qa": 200, "admin": 200, "nobody": 200, "superuser": 200}
SIGNED_IN_200 = {role: 200 for role in ("manager", "analyst", "qa", "admin", "nobody", "superuser")}
EVERYONE_200 = {role: 200 for role in ROLES if role != "anonymous"}

CASES = [
    Case("product create", lambda lab: Call("post", "/api/products/", {"code": "HOO", "name": "High-oleic oil"}), MANAGER_ADMIN),
    Case(
        "specification create",
        lambda lab: Call("post", "/api/specifications/", {
            "product": lab.product.pk, "effective_from": "2025-01-01", "lines": [{"method": "av", "maximum": "0.6"}],
        }),
        DRAFTERS,
    ),
    Case(
        "specification lines replace",
        lambda lab: Call("put", f"/api/specifications/{lab.draft.pk}/lines/", {"lines": [{"method": "pv", "maximum": "5"}]}),
        MANAGER_QA_ADMIN_200,
    ),
    # only QA approves specifications and releases or rejects lots (issue 3), admins and superusers included (issue 8)
    Case("specification approve", lambda lab: Call("post", f"/api/specifications/{lab.draft.pk}/approve/"), {"qa": 200}),
    Case(
        "specification revise",
        lambda lab: Call("post", f"/api/specifications/{lab.specification.pk}/revise/", {"effective_from": "2031-01-01"}),
        DRAFTERS,
    ),
    Case("lot create", lambda lab: Call("post", "/api/lots/", {"code": "L-9", "product": lab.product.pk, "origin": "production"}), MANAGER_ADMIN),
    Case("lot release", lambda lab: (lab.accepted(), Call("post", f"/api/lots/{lab.lot.pk}/release/", SIGNED))[1], {"qa": 201}),
    Case(
        "certificate reissue",
        lambda lab: (lab.released(), Call("post", f"/api/lots/{lab.lot.pk}/certificate/reissue/", {
            "reason": "customer name corrected", "customer": "Invented Bakeries plc", **SIGNED,
        }))[1],
        {"qa": 201},
    ),
    Case("lot reject", lambda lab: Call("post", f"/api/lots/{lab.lot.pk}/reject/", {"reason": "tank contaminated", "password": SIGNING_PASSWORD}), {"qa": 200}),
    Case("sample register", lambda lab: Call("post", "/api/samples/", {"lot": lab.lot.pk}), MANAGER_ADMIN),
    Case(
        "sample receive",
        lambda lab: Call("post", f"/api/samples/{lab.sample().pk}/receive/", {"condition": "sealed", "storage_place": "shelf 3"}),
        MANAGER_ADMIN_200,
    ),
    Case(
        "sample hold",
        lambda lab: Call("post", f"/api/samples/{lab.received().pk}/hold/", {"reason": "seal broken"}),
        MANAGER_QA_ADMIN_200,
    ),
    Case("sample resume", _resume, MANAGER_QA_ADMIN_200),
    Case(
        "sample cancel",
        lambda lab: Call("post", f"/api/samples/{lab.sample().pk}/cancel/", {"reason": "duplicate registration"}),
        MANAGER_ADMIN_200,
    ),
    Case(
        "tests assign",
        lambda lab: Call("post", "/api/tests/assign/", {
            "tests": list(lab.received().tests.values_list("pk", flat=True)), "assignee": lab.users["analyst"].pk,
        }),
        MANAGER_ADMIN_200,
    ),
    Case("test accept", lambda lab: Call("post", f"/api/tests/{lab.entered('analyst2')[0].pk}/accept/"), REVIEWERS),
    Case(
        "test send back",
        lambda lab: Call("post", f"/api/tests/{lab.entered('analyst2')[0].pk}/send-back/", {"reason": "blank too high"}),
        REVIEWERS,
    ),
    Case("result record", lambda lab: Call("post", "/api/results/", {"test": lab.assigned("analyst")[0].pk, "inputs": AV_LOW, **AV_TRACE}), ENTERERS),
    Case(
        "result record bulk",
        lambda lab: Call("post", "/api/results/bulk/", {"results": [{"test": lab.assigned("analyst")[0].pk, "inputs": AV_LOW, **AV_TRACE}]}),
        ENTERERS,
    ),
    Case("result correct", _correct, ENTERERS),
    Case(
        "investigation close",
        lambda lab: Call("post", f"/api/investigations/{lab.investigation().pk}/close/", {
            "conclusion": "confirmed", "findings": "re-titration agrees", "password": SIGNING_PASSWORD,
        }),
        QA_ADMIN_200,
    ),
    # findings after release (issue 13): the lab manager orders tests on a retained sample; only QA
    # issues (through the investigation's close) and lifts a hold notice on a released lot
    Case(
        "retained sample tests",
        lambda lab: Call("post", f"/api/samples/{lab.retained().pk}/retain-tests/", {"methods": ["av"], "reason": "complaint"}),
        MANAGER_ADMIN,
    ),
    Case("lot hold notice lift", _held_lot, {"qa": 200}),
    Case(
        "post-release correction propose",
        lambda lab: Call("post", f"/api/results/{_released_result(lab).pk}/post-release-correction/",
                         {"inputs": AV_LOW_TWIN, "reason": "titre misread"}),
        ENTERERS,
    ),
    Case(
        "post-release correction approve",
        lambda lab: Call("post", f"/api/post-release-corrections/{_post_release_proposal(lab)}/approve/", SIGNED),
        {"qa": 200},
    ),
    Case(
        "post-release correction decline",
        lambda lab: Call("post", f"/api/post-release-corrections/{_post_release_proposal(lab)}/decline/", {"reason": "worksheet says 1.30"}),
        {"qa": 200},
    ),
    # monitoring (analyses/api/urls_monitoring.py)
    Case("stability study create", lambda lab: Call("post", "/api/stability-studies/", _study_protocol(lab)), DRAFTERS),
    Case(
        "stability study evaluate", lambda lab: Call("post", f"/api/stability-studies/{_study(lab)}/evaluate/"),
        MANAGER_QA_ADMIN_200,
    ),
    Case(
        "stability study close",
        lambda lab: Call("post", f"/api/stability-studies/{_study(lab)}/close/", {"reason": "claim confirmed"}),
        MANAGER_QA_ADMIN_200,
    ),
    Case("alert acknowledge", lambda lab: Call("post", f"/api/alerts/{_alert(lab)}/acknowledge/", {"comment": "titrant restandardised"}), QA_ADMIN_200),
    Case(
        "control baseline create",
        lambda lab: Call("post", "/api/trends/baselines/", {
            "series_key": f"qc:{lab.lot.pk}:av", "mean": 0.35, "sd": 0.01, "reason": "reference oil certificate (invented)",
        }),
        {"qa": 201, "admin": 201, "superuser": 201},
    ),
    # traceable measurements (issue 9): analysts record standardisations and routine checks; lab
    # managers and admins register instruments, reagent kinds and calibrations; QA reads everything
    Case(
        "reagent kind create",
        lambda lab: Call("post", "/api/reagent-kinds/", {"name": "HCl 1 mol/L", "substance": "HCl", "nominal_concentration": "1 N", "validity_days": 30}),
        MANAGER_ADMIN,
    ),
    Case(
        "reagent kind change",
        lambda lab: Call("post", f"/api/reagent-kinds/{ReagentKind.objects.get(name='KOH 0.1 mol/L').pk}/change/",
                         {"validity_days": 1, "reason": "drifts in warm weather"}),
        {"manager": 200, "admin": 200, "superuser": 200},
    ),
    Case(
        "reagent lot register",
        lambda lab: Call("post", "/api/reagent-lots/", {
            "kind": ReagentKind.objects.get(name="KOH 0.1 mol/L").pk, "code": "KOH-PERM", "prepared_on": "2026-01-05",
            "expires_on": "2027-01-05", "prepared_by": "T. Reyne",
        }),
        {"manager": 201, "analyst": 201, "admin": 201, "superuser": 201},
    ),
    Case("standardisation record", _standardise, ENTERERS),
    Case("standardisation supersede", _supersede, ENTERERS),
    Case("instrument register", lambda lab: Call("post", "/api/instruments/", {"asset_id": "OV-1", "kind": "oven"}), MANAGER_ADMIN),
    Case(
        "calibration record",
        lambda lab: Call("post", f"/api/instruments/{_bench('BUR-BENCH')}/calibrations/", {
            "calibrated_on": "2026-01-10", "due_on": "2027-01-10", "certificate_ref": "CERT-9", "passed": True,
            "tolerance": "0.03", "unit": "mL",
        }),
        MANAGER_ADMIN,
    ),
    Case(
        "instrument check record",
        lambda lab: Call("post", f"/api/instruments/{_bench('BAL-BENCH')}/checks/", {
            "kind": "check_weight", "nominal": "100.0000", "measured": "100.0001", "tolerance": "0.0005",
        }),
        ENTERERS,
    ),
    Case("reagent lot impact", lambda lab: Call("get", f"/api/reagent-lots/{_bench('KOH-BENCH')}/impact/"), SIGNED_IN_READ),
    Case("instrument impact", lambda lab: Call("get", f"/api/instruments/{_bench('BAL-BENCH')}/impact/?from=2026-01-01"), SIGNED_IN_READ),
    # restricted reads
    Case("lot audit trail", lambda lab: Call("get", f"/api/lots/{lab.lot.pk}/audit-trail/"), MANAGER_QA_ADMIN_200),
    Case(
        "sample audit trail",
        lambda lab: Call("get", f"/api/samples/{lab.sample().pk}/audit-trail/"),
        MANAGER_QA_ADMIN_200,
    ),
    Case("turnaround", lambda lab: Call("get", "/api/turnaround/"), MANAGER_ADMIN_200),
    # open to every signed-in user, as the result itself is
    Case(
        "result uncertainty",
        lambda lab: Call("get", f"/api/results/{lab.entered()[0].results.first().pk}/uncertainty/"),
        SIGNED_IN_200,
    ),
    # certificates: every signed-in user may read them, in every form (not JSON: the body is not parsed)
    Case("certificate pdf", lambda lab: (lab.released(), Call("get", f"/api/lots/{lab.lot.pk}/certificate.pdf"))[1], EVERYONE_200),
    Case("certificate html", lambda lab: (lab.released(), Call("get", f"/api/lots/{lab.lot.pk}/certificate.html"))[1], EVERYONE_200),
    Case("certificate versions", lambda lab: (lab.released(), Call("get", f"/api/lots/{lab.lot.pk}/certificates/"))[1], EVERYONE_200),
    Case("users list", lambda lab: Call("get", "/api/users/?role=analyst"), MANAGER_ADMIN_200),
]


def expected_status(case: Case, role: str) -> int:
    if role == "anonymous":
        return 401
    return case.allowed.get(role, 403)


@pytest.fixture
def identities(clients, client_for) -> dict:
    """The role clients, and a superuser in no group (as ``createsuperuser`` makes one)."""
    root = UserFactory(username="root", is_staff=True, is_superuser=True)
    return {**clients, "superuser": client_for(root)}


@pytest.mark.parametrize("role", ROLES)
@pytest.mark.parametrize("case", CASES, ids=[case.name for case in CASES])
def test_permission_matrix(case: Case, role: str, lab, identities):
    call = case.arrange(lab)
    before = row_counts()
    response = call.send(identities[role])
    expected = expected_status(case, role)
    assert response.status_code == expected, (role, case.name, response.content[:300])
    if expected in (401, 403):
        assert response.json()["detail"]  # the reason is given
        assert row_counts() == before  # a refusal writes nothing


def test_every_state_changing_route_is_in_the_matrix():
    """A new write endpoint must be added to the matrix above."""
    covered = {case.name for case in CASES}
    writers = {
        pattern.name for pattern in [*urlpatterns, *monitoring_urlpatterns, *traceability_urlpatterns]
        if any(hasattr(pattern.callback.view_class, method) for method in ("post", "put", "patch", "delete"))
    }
    expected_names = {
        "product-list": "product create", "specification-list": "specification create",
        "specification-lines": "specification lines replace", "specification-approve": "specification approve",
        "specification-revise": "specification revise", "lot-list": "lot create", "lot-release": "lot release",
        "lot-reject": "lot reject", "lot-certificate-reissue": "certificate reissue", "sample-list": "sample register", "sample-receive": "sample receive",
        "sample-hold": "sample hold", "sample-resume": "sample resume", "sample-cancel": "sample cancel",
        "test-assign": "tests assign", "test-accept": "test accept", "test-send-back": "test send back",
        "result-record": "result record", "result-record-bulk": "result record bulk", "result-correct": "result correct",
        "investigation-close": "investigation close",
        "sample-retain-tests": "retained sample tests", "lot-hold-lift": "lot hold notice lift",
        "result-post-release-correction": "post-release correction propose",
        "post-release-correction-approve": "post-release correction approve",
        "post-release-correction-decline": "post-release correction decline",
        "study-list": "stability study create", "study-evaluate": "stability study evaluate",
        "study-close": "stability study close", "alert-acknowledge": "alert acknowledge",
        "baseline-list": "control baseline create",
        "reagent-kind-list": "reagent kind create", "reagent-kind-change": "reagent kind change",
        "reagent-lot-list": "reagent lot register", "reagent-lot-standardisations": "standardisation record",
        "standardisation-supersede": "standardisation supersede", "instrument-list": "instrument register",
        "instrument-calibrations": "calibration record", "instrument-checks": "instrument check record",
    }
    # stateless or open to everyone: the calculator and the token endpoint; and revoking one's
    # own token, open to every signed-in user (tests/analyses/api/test_tokens.py: others' are 404)
    assert writers - set(expected_names) == {"calculation", "auth-token", "auth-token-revoke"}
    assert {expected_names[name] for name in writers if name in expected_names} <= covered
    assert set(expected_names) <= writers  # no stale names either


def test_qa_in_the_analyst_group_still_may_not_enter_results(users, lab, clients, client_for):
    """Segregation of duties (the project's rule, analyses/services/access.py): a QA reviewer
    never enters raw data, even when also in the analyst group."""
    both = UserFactory(username="qa-analyst", roles=["analyst"])
    av_test, _ = lab.assigned("analyst")
    test_assign_bulk(lab.manager, [av_test], assignee=both)
    both.groups.add(Group.objects.get(name="qa_reviewer"))  # joined QA after the assignment
    response = client_for(both).post("/api/results/", {"test": av_test.pk, "inputs": AV_LOW, **AV_TRACE}, format="json")
    assert response.status_code == 403
    assert "QA reviewer" in response.json()["detail"]
    assert not Result.objects.exists()


def test_qa_in_the_analyst_group_may_not_be_assigned_tests(lab, clients):
    """The same segregation of duties, at assignment: work goes to someone who may do it."""
    both = UserFactory(username="qa-analyst", roles=["qa_reviewer", "analyst"])
    tests = list(lab.received().tests.values_list("pk", flat=True))
    before = row_counts()
    response = clients["manager"].post("/api/tests/assign/", {"tests": tests, "assignee": both.pk}, format="json")
    assert response.status_code == 400
    assert "QA reviewer" in response.json()["fields"]["assignee"][0]
    assert row_counts() == before


def test_four_eyes_the_enterer_may_not_accept(lab, clients):
    av_test, _ = lab.entered("analyst")
    response = clients["analyst"].post(f"/api/tests/{av_test.pk}/accept/", format="json")
    assert response.status_code == 403
    assert "four-eyes" in response.json()["detail"]


def test_an_analyst_may_not_enter_results_on_another_analysts_test(lab, clients):
    av_test, _ = lab.assigned("analyst2")
    response = clients["analyst"].post("/api/results/", {"test": av_test.pk, "inputs": AV_LOW, **AV_TRACE}, format="json")
    assert response.status_code == 403
    assert "assigned to analyst2" in response.json()["detail"]


def test_a_superuser_in_the_qa_group_still_may_not_enter_results(lab, client_for):
    """Segregation of duties holds against the superuser flag too (issue 8)."""
    root = UserFactory(username="root-qa", is_staff=True, is_superuser=True, roles=["qa_reviewer"])
    av_test, _ = lab.assigned("analyst")
    client = client_for(root)  # issuing its token is audited; count from here
    before = row_counts()
    for path, body in (
        ("/api/results/", {"test": av_test.pk, "inputs": AV_LOW}),
        ("/api/results/bulk/", {"results": [{"test": av_test.pk, "inputs": AV_LOW}]}),
    ):
        response = client.post(path, body, format="json")
        assert response.status_code == 403, path
        assert "QA reviewer" in response.json()["detail"]
    assert row_counts() == before


def test_a_superuser_is_told_that_release_is_for_the_qa_group(lab, identities):
    response = identities["superuser"].post(f"/api/lots/{lab.lot.pk}/release/", SIGNED, format="json")
    assert response.status_code == 403
    assert "qa_reviewer group only" in response.json()["detail"]


def test_me_shows_a_superuser_no_qa_decisions(identities):
    me = identities["superuser"].get("/api/me/").json()
    assert me["roles"] == ["admin"]
    assert {"record_any_result", "close_investigation", "assign_test"} <= set(me["permissions"])
    assert not {"release_lot", "approve_specification"} & set(me["permissions"])
