"""Reagents, instruments and the impact search over REST (issue 9)."""
from __future__ import annotations

import datetime as dt
from decimal import Decimal

import pytest
from django.db import connection
from django.test.utils import CaptureQueriesContext
from django.utils import timezone

from analyses.models import Instrument, ReagentLot, Result
from analyses.services.lots import lot_create, lot_release
from analyses.services.samples import sample_receive, sample_register
from analyses.services.assignments import test_assign_bulk
from analyses.services.review import test_accept
from tests.analyses.lab_setup import AV_LOW, AV_TRACE, enter_passing
from tests.factories import SIGNING_PASSWORD, InstrumentCheckFactory, usable_instrument

pytestmark = pytest.mark.django_db


def ok(response, status=200):
    assert response.status_code == status, response.content
    return response.json()


def test_register_standardise_and_use_a_lot_over_rest(clients, lab, bench):
    manager, analyst = clients["manager"], clients["analyst"]
    kind = ok(manager.post("/api/reagent-kinds/", {
        "name": "KOH in ethanol, 0.1 N", "substance": "KOH", "nominal_concentration": "0.1 N", "validity_days": 7,
    }, format="json"), 201)
    assert kind["nominal_concentration"] == "0.1" and kind["spread_limit_source"] == "common practice, no source"
    today = timezone.localdate()
    lot = ok(analyst.post("/api/reagent-lots/", {
        "kind": kind["id"], "code": "KOH-REST", "prepared_on": str(today), "expires_on": str(today + dt.timedelta(days=30)),
        "prepared_by": "T. Reyne",
    }, format="json"), 201)
    assert lot["usable"] is False and "no standardisation" in lot["refusal"]
    std = ok(analyst.post(f"/api/reagent-lots/{lot['id']}/standardisations/", {
        "primary_standard": "khp", "purity": "1.0", "purity_uncertainty": "0.00029",
        "replicates": [{"mass": "0.3888", "titre": "18.64"}, {"mass": "0.3888 g", "titre": "18.64 mL"}],
        "balance": bench["BAL-BENCH"].pk, "burette": bench["BUR-BENCH"].pk,
    }, format="json"), 201)
    # Eurachem/CITAC QUAM example A2 (found): 0.10214 mol/L
    assert round(Decimal(std["concentration"]), 5) == Decimal("0.10214")
    assert ok(clients["qa"].get(f"/api/reagent-lots/{lot['id']}/"))["usable"] is True

    av_test, _ = lab.assigned("analyst")
    result = ok(analyst.post("/api/results/", {
        "test": av_test.pk, "inputs": AV_LOW, "titrant_lot": "KOH-REST", "instruments": ["BAL-BENCH", "BUR-BENCH"],
    }, format="json"), 201)
    assert result["titrant_lot"] == "KOH-REST" and result["standardisation"] == std["id"]
    assert result["titrant_concentration"] == std["concentration"]
    assert [i["asset_id"] for i in result["instruments"]] == ["BAL-BENCH", "BUR-BENCH"]


def test_disagreeing_replicates_are_a_400_naming_them(clients, bench):
    response = clients["analyst"].post(f"/api/reagent-lots/{bench['KOH-BENCH'].pk}/standardisations/", {
        "primary_standard": "khp", "replicates": [{"mass": "0.4084", "titre": "20.00"}, {"mass": "0.4084", "titre": "20.20"}],
        "balance": bench["BAL-BENCH"].pk, "burette": bench["BUR-BENCH"].pk,
    }, format="json")
    body = ok(response, 400)
    assert "replicates" in body["fields"] and "0.002" in body["detail"]


def test_entry_refused_over_rest_is_a_409_naming_the_item(clients, lab, bench):
    InstrumentCheckFactory(instrument=bench["BAL-BENCH"], measured="100.0030", passed=False, performed_at=timezone.now())
    av_test, _ = lab.assigned("analyst")
    body = ok(clients["analyst"].post("/api/results/", {"test": av_test.pk, "inputs": AV_LOW, **AV_TRACE}, format="json"), 409)
    assert body["detail"].startswith("instrument BAL-BENCH failed its routine check")
    assert not Result.objects.exists()
    body = ok(clients["analyst"].post("/api/results/", {
        "test": av_test.pk, "inputs": {**AV_LOW, "titrant_concentration": "0.1"}, **AV_TRACE,
    }, format="json"), 400)
    assert "inputs.titrant_concentration" in body["fields"]


def test_a_typed_concentration_stays_possible_in_the_calculator(clients):
    body = ok(clients["analyst"].post("/api/calculations/", {
        "method": "av", "inputs": {**AV_LOW, "titrant_concentration": "0.1"},
    }, format="json"))
    assert body["reported"] == "0.35"  # ISO 660: 1.25 x 0.1 x 56.1 / 20.0 = 0.350625


def _released_lot_with_results(lab, users, code: str, samples: int) -> None:
    """A lot whose samples were all tested with the bench titrants and instruments, released by QA."""
    lot = lot_create(users["manager"], code=code, product=lab.product, origin="production")
    for n in range(samples):
        sample = sample_receive(users["manager"], sample_register(users["manager"], lot, label=f"{code}-{n}"),
                                condition="sealed", storage_place="shelf")
        tests = test_assign_bulk(users["manager"], list(sample.tests.order_by("method_code")), assignee=users["analyst"])
        for test in enter_passing(users["analyst"], tests):
            test_accept(users["analyst2"], test)
    lot_release(users["qa"], lot, password=SIGNING_PASSWORD)


def test_impact_of_a_titrant_lot_finds_the_released_lot_in_constant_queries(clients, lab, users, django_assert_num_queries):
    lab.specification
    _released_lot_with_results(lab, users, "L-IMP-1", 1)
    koh = ReagentLot.objects.get(code="KOH-BENCH")
    path = f"/api/reagent-lots/{koh.pk}/impact/"
    ok(clients["qa"].get("/api/me/"))  # warm-up: a token's first use writes its last-used time
    with CaptureQueriesContext(connection) as few:
        first = ok(clients["qa"].get(path))
    assert first["released_lots"] == ["L-IMP-1"]
    assert {row["method_code"] for row in first["results"]} == {"av"} and len(first["results"]) == 2
    _released_lot_with_results(lab, users, "L-IMP-2", 3)
    av_test, _ = lab.assigned("analyst")  # an open lot touched too
    from analyses.services.results import result_record

    result_record(users["analyst"], av_test, inputs=AV_LOW, **AV_TRACE)
    with django_assert_num_queries(len(few)):
        more = ok(clients["qa"].get(path))
    assert len(more["results"]) == 2 + 6 + 1 and len(more["samples"]) == 1 + 3 + 1
    assert more["released_lots"] == ["L-IMP-1", "L-IMP-2"]
    assert {row["code"]: row["released"] for row in more["lots"]} == {"L-200": False, "L-IMP-1": True, "L-IMP-2": True}


def test_impact_of_an_instrument_in_a_period(clients, lab, users, django_assert_num_queries):
    lab.specification
    balance = Instrument.objects.get(asset_id="BAL-BENCH")
    path = f"/api/instruments/{balance.pk}/impact/"
    ok(clients["qa"].get("/api/me/"))  # warm-up: a token's first use writes its last-used time
    with CaptureQueriesContext(connection) as empty:
        assert ok(clients["qa"].get(path))["results"] == []
    _released_lot_with_results(lab, users, "L-IMP-3", 2)
    with django_assert_num_queries(len(empty)):
        found = ok(clients["qa"].get(path, {"from": str(timezone.localdate()), "to": str(timezone.localdate())}))
    assert len(found["results"]) == 8 and found["released_lots"] == ["L-IMP-3"]  # AV and PV duplicates on 2 samples
    yesterday = timezone.localdate() - dt.timedelta(days=1)
    assert ok(clients["qa"].get(path, {"to": str(yesterday)}))["results"] == []
    assert "from" in ok(clients["qa"].get(path, {"from": "last week"}), 400)["fields"]


def test_impact_follows_a_standardisation_made_on_the_instrument(clients, lab, users, bench):
    from analyses.services.reagents import standardisation_record
    from analyses.services.results import result_record

    standardisation_record(users["analyst"], bench["KOH-BENCH"], primary_standard="khp", balance=bench["BAL-BENCH"],
                           burette=bench["BUR-BENCH"], replicates=[{"mass": "0.4084", "titre": "20.00"}] * 2)
    usable_instrument("BAL-OTHER", "balance")
    av_test, _ = lab.assigned("analyst")
    # the sample weighed on another balance, the titrant's KHP on BAL-BENCH: BAL-BENCH touched it too
    result = result_record(users["analyst"], av_test, inputs=AV_LOW, titrant_lot="KOH-BENCH", instruments=["BAL-OTHER", "BUR-BENCH"])
    found = ok(clients["manager"].get(f"/api/instruments/{bench['BAL-BENCH'].pk}/impact/"))
    assert [s["titrant_lot"] for s in found["standardisations"]] == ["KOH-BENCH"]
    assert [r["id"] for r in found["results"]] == [result.pk]
    assert found["results"][0]["via"] == f"standardisation {result.standardisation_id}"
    direct = ok(clients["manager"].get(f"/api/instruments/{Instrument.objects.get(asset_id='BAL-OTHER').pk}/impact/"))
    assert direct["results"][0]["via"] == "direct"


def test_instrument_list_shows_why_one_may_not_be_used(clients, bench):
    InstrumentCheckFactory(instrument=bench["BAL-BENCH"], measured="100.0030", passed=False, performed_at=timezone.now())
    rows = {row["asset_id"]: row for row in ok(clients["qa"].get("/api/instruments/"))["results"]}
    assert rows["BAL-BENCH"]["usable"] is False and "failed its routine check" in rows["BAL-BENCH"]["refusal"]
    assert rows["BUR-BENCH"]["usable"] is True and rows["BUR-BENCH"]["refusal"] is None
