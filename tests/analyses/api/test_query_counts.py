"""Every list endpoint runs the same number of SQL queries for 1 row as for 25 rows: the
related rows each list shows are joined or prefetched, never fetched row by row."""
from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import pytest
from django.db import connection, transaction
from django.test.utils import CaptureQueriesContext
from django.utils import timezone

from analyses.audit import audit_append
from analyses.models import (
    AuditAction,
    Instrument,
    Investigation,
    ReagentKind,
    ReagentLot,
    Result,
    ResultStatus,
    SpecificationStatus,
    TestState,
    TestUncertainty,
)
from tests.analyses.api.support import Lab
from tests.factories import (
    CalibrationFactory,
    InstrumentCheckFactory,
    InstrumentFactory,
    LotFactory,
    ReagentKindFactory,
    ReagentLotFactory,
    StandardisationFactory,
    ProductFactory,
    SampleFactory,
    SpecificationFactory,
    SpecificationLineFactory,
    TestFactory,
    UserFactory,
)

pytestmark = pytest.mark.django_db
MORE_ROWS = 24


def _specification():
    specification = SpecificationFactory(created_by=UserFactory())
    SpecificationLineFactory(specification=specification, method_code="av")
    SpecificationLineFactory(specification=specification, method_code="pv", unit="meq O2/kg", maximum="10")
    specification.status = SpecificationStatus.APPROVED
    specification.approved_by = UserFactory()
    specification.approved_at = timezone.now()
    specification.save()


def _lot():
    lot = LotFactory(decided_by=UserFactory())
    SampleFactory(lot=lot)


def _sample():
    sample = SampleFactory(received_by=UserFactory(), specification=SpecificationFactory())
    TestFactory(sample=sample, assignee=UserFactory())
    TestFactory(sample=sample, assignee=UserFactory())


def _test(**fields):
    return TestFactory(assignee=fields.pop("assignee", None) or UserFactory(), reviewed_by=UserFactory(), **fields)


def _held_test():
    """A pending test whose sample is on hold (its state and reason shown in the queue row)."""
    from analyses.models import SampleState

    sample = SampleFactory(state=SampleState.ON_HOLD, resume_state=SampleState.RECEIVED, state_reason="awaiting customer's approval")
    return _test(sample=sample)


def _test_with_mean_u(lab=None) -> "TestUncertainty":
    """A test with two current replicates and the stored budget of their mean (invented values)."""
    test = _test(state=TestState.RESULT_ENTERED, unit="mg KOH/g", reported="0.35")
    replicates = [
        Result.objects.create(
            test=test, replicate=n, inputs={"x": n}, value=0.35, reported="0.35", unit="mg KOH/g", method_code="av",
            method_version="1.0", verdict="pass", entered_by=UserFactory(), entered_at=timezone.now(),
        )
        for n in (1, 2)
    ]
    return TestUncertainty.objects.create(
        test=test, results=[r.pk for r in replicates], budget={"terms": []}, combined=0.0081, expanded="0.017",
        source="invented", computed_at=timezone.now(),
    )


def _investigation():
    test = _test(state=TestState.ACCEPTED)
    Investigation.objects.create(
        lot=test.sample.lot, test=test, opened_by=UserFactory(), opened_at=timezone.now(), closed_by=UserFactory(),
        retest=TestFactory(sample=test.sample),
    )


def _audit(lab: Lab, ref: str) -> None:
    with transaction.atomic():
        target = lab.lot if ref == "lot" else lab.sample()
        audit_append(
            UserFactory(), AuditAction.CHANGE, target, {"note": [None, "x"]},
            lot_ref=lab.lot.pk, sample_ref=target.pk if ref == "sample" else None,
        )


def _result(lab: Lab) -> None:
    test = lab.result_test
    replicate = test.results.count() + 1
    Result.objects.create(
        test=test, replicate=replicate, inputs={"x": 1}, value=0.1, reported="0.10", unit="mg KOH/g",
        method_code="av", method_version="1.0", verdict="pass", entered_by=UserFactory(), entered_at=timezone.now(),
    )


def _kind():
    return ReagentKindFactory(name=f"kind {ReagentKind.objects.count()}", created_by=UserFactory())


def _reagent_lot():
    lot = ReagentLotFactory(kind=_kind(), created_by=UserFactory())
    StandardisationFactory(lot=lot, performed_by=UserFactory())


def _bench_row(model, **lookup):
    return model.objects.get(**lookup)


@dataclass(frozen=True)
class Listing:
    name: str
    path: Callable[[Lab], str]
    add_row: Callable[[Lab], None]
    role: str = "manager"


LISTINGS = [
    Listing("products", lambda lab: "/api/products/", lambda lab: ProductFactory(created_by=UserFactory())),
    Listing("specifications", lambda lab: "/api/specifications/", lambda lab: _specification()),
    Listing("lots", lambda lab: "/api/lots/", lambda lab: _lot()),
    Listing("samples", lambda lab: "/api/samples/", lambda lab: _sample()),
    Listing("tests", lambda lab: "/api/tests/", lambda lab: _test(retest_of=TestFactory())),
    Listing("tests with their mean's U", lambda lab: "/api/tests/", _test_with_mean_u),
    Listing("tests filtered", lambda lab: f"/api/tests/?state=assigned&assignee={lab.users['analyst'].pk}",
            lambda lab: _test(state=TestState.ASSIGNED, assignee=lab.users["analyst"])),
    Listing("work queue", lambda lab: "/api/tests/queue/av/", lambda lab: _test()),
    Listing("work queue, held samples only", lambda lab: "/api/tests/queue/av/?on_hold=true", lambda lab: _held_test()),
    Listing("work queue, held samples left out", lambda lab: "/api/tests/queue/av/?on_hold=false", lambda lab: (_held_test(), _test())),
    Listing("my queue", lambda lab: "/api/tests/mine/", lambda lab: _test(state=TestState.ASSIGNED, assignee=lab.users["analyst"]), "analyst"),
    Listing("review queue", lambda lab: "/api/tests/review/", lambda lab: _test(state=TestState.RESULT_ENTERED)),
    Listing("investigations", lambda lab: "/api/investigations/", lambda lab: _investigation()),
    Listing("lot audit trail", lambda lab: f"/api/lots/{lab.lot.pk}/audit-trail/", lambda lab: _audit(lab, "lot")),
    Listing("sample audit trail", lambda lab: f"/api/samples/{lab.sample().pk}/audit-trail/", lambda lab: _audit(lab, "sample")),
    Listing("users", lambda lab: "/api/users/", lambda lab: UserFactory(roles=["analyst", "qa_reviewer"])),
    Listing("users by role", lambda lab: "/api/users/?role=analyst", lambda lab: UserFactory(roles=["analyst"])),
    Listing("result history", lambda lab: f"/api/tests/{lab.result_test.pk}/results/", _result),
    Listing("reagent kinds", lambda lab: "/api/reagent-kinds/", lambda lab: _kind()),
    Listing("reagent lots", lambda lab: "/api/reagent-lots/", lambda lab: _reagent_lot()),
    Listing(
        "standardisations of a lot",
        lambda lab: f"/api/reagent-lots/{_bench_row(ReagentLot, code='KOH-BENCH').pk}/standardisations/",
        lambda lab: StandardisationFactory(lot=_bench_row(ReagentLot, code="KOH-BENCH"), performed_by=UserFactory(),
                                           balance=_bench_row(Instrument, asset_id="BAL-BENCH"),
                                           burette=_bench_row(Instrument, asset_id="BUR-BENCH")),
    ),
    Listing("instruments", lambda lab: "/api/instruments/",
            lambda lab: CalibrationFactory(instrument=InstrumentFactory(created_by=UserFactory()), recorded_by=UserFactory())),
    Listing("calibrations", lambda lab: f"/api/instruments/{_bench_row(Instrument, asset_id='BAL-BENCH').pk}/calibrations/",
            lambda lab: CalibrationFactory(instrument=_bench_row(Instrument, asset_id="BAL-BENCH"), recorded_by=UserFactory())),
    Listing("routine checks", lambda lab: f"/api/instruments/{_bench_row(Instrument, asset_id='BAL-BENCH').pk}/checks/",
            lambda lab: InstrumentCheckFactory(instrument=_bench_row(Instrument, asset_id="BAL-BENCH"), performed_by=UserFactory())),
]


@pytest.fixture
def lab_with_result_test(lab):
    lab.result_test = TestFactory(replicates=30)
    return lab


@pytest.mark.parametrize("listing", LISTINGS, ids=[listing.name for listing in LISTINGS])
def test_list_queries_do_not_grow_with_the_rows(listing: Listing, lab_with_result_test, clients, django_assert_num_queries):
    lab = lab_with_result_test
    client = clients[listing.role]
    path = listing.path(lab)
    listing.add_row(lab)
    separator = "&" if "?" in path else "?"
    client.get("/api/me/")  # the token's first use records when it was used (a write of its own)
    with CaptureQueriesContext(connection) as one_row:
        response = client.get(f"{path}{separator}page_size=1")
    assert response.status_code == 200, response.content
    assert len(response.json()["results"]) == 1
    for _ in range(MORE_ROWS):
        listing.add_row(lab)
    with django_assert_num_queries(len(one_row)):
        response = client.get(f"{path}{separator}page_size=50")
    assert response.status_code == 200
    assert len(response.json()["results"]) >= MORE_ROWS + 1


def _entered_test(replicates: int):
    """A test with ``replicates`` AV results entered through the service (so budgets are stored)."""
    from analyses.models import Test
    from analyses.services.results import result_record
    from tests.analyses.lab_setup import AV_LOW, AV_TRACE

    from analyses.models import SampleState

    sample = SampleFactory(state=SampleState.IN_TESTING, received_by=UserFactory(), received_at=timezone.now())
    test = TestFactory(
        sample=sample, replicates=replicates, assignee=UserFactory(roles=["analyst"]), state=TestState.ASSIGNED
    )
    for _ in range(replicates):
        result = result_record(test.assignee, test, inputs=AV_LOW, **AV_TRACE)
    return Test.objects.get(pk=test.pk), result


def test_the_uncertainty_endpoint_reads_as_many_queries_for_2_replicates_as_for_12(clients, django_assert_num_queries):
    """GET /api/results/<id>/uncertainty/ reads the result with its budget, test and line in one
    query and the current replicates in one more, whatever their number."""
    client = clients["manager"]
    client.get("/api/me/")  # the token's first use records when it was used (a write of its own)
    _, few = _entered_test(2)
    with CaptureQueriesContext(connection) as two:
        response = client.get(f"/api/results/{few.pk}/uncertainty/")
    assert response.status_code == 200, response.content
    assert response.json()["test_mean"]["replicates"] == 2
    _, many = _entered_test(12)
    with django_assert_num_queries(len(two)):
        response = client.get(f"/api/results/{many.pk}/uncertainty/")
    assert response.json()["test_mean"]["replicates"] == 12


def test_the_tests_list_shows_the_means_u_only_while_it_is_the_current_replicates(clients):
    """The mean's U (k = 2) and unit on /api/tests/ as /api/results/<id>/uncertainty/ gives it; once a
    replicate is corrected the stored budget is of other replicates, and the list says null."""
    fresh = _test_with_mean_u()
    stale = _test_with_mean_u()
    Result.objects.filter(test=stale.test, replicate=2).update(status=ResultStatus.SUPERSEDED)
    rows = {row["id"]: row for row in clients["manager"].get("/api/tests/", {"page_size": 50}).json()["results"]}
    assert rows[fresh.test_id]["mean_uncertainty"] == {"expanded": "0.017", "coverage_factor": 2, "unit": "mg KOH/g"}
    assert rows[stale.test_id]["mean_uncertainty"] is None
    detail = clients["manager"].get(f"/api/tests/{fresh.test_id}/").json()
    assert detail["mean_uncertainty"] == rows[fresh.test_id]["mean_uncertainty"]


def test_the_tests_list_and_the_uncertainty_endpoint_give_the_same_u(clients):
    test, result = _entered_test(2)
    mean = clients["manager"].get(f"/api/results/{result.pk}/uncertainty/").json()["test_mean"]
    row = clients["manager"].get(f"/api/tests/{test.pk}/").json()["mean_uncertainty"]
    assert row == {"expanded": mean["expanded_uncertainty"], "coverage_factor": mean["coverage_factor"], "unit": mean["unit"]}
