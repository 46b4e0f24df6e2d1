"""A sample from receipt to release, through the services as each role would use them."""
from __future__ import annotations

import re
from decimal import Decimal

import pytest

from analyses.audit import audit_chain_verify
from analyses.models import AuditEntry, Certificate, LotState, Result, SampleState, Test, TestState, Verdict
from analyses.services.assignments import test_assign_bulk
from analyses.services.lots import lot_release
from analyses.services.results import result_record
from analyses.services.review import test_accept
from tests.analyses.lab_setup import AV_LOW, AV_LOW_TWIN, PV_LOW, PV_LOW_TWIN, AV_TRACE, PV_TRACE
from tests.factories import SIGNING_PASSWORD

pytestmark = pytest.mark.django_db


def test_receipt_to_release_with_certificate(users, received_sample):
    manager, analyst, analyst2, qa = users["manager"], users["analyst"], users["analyst2"], users["qa"]
    tests = list(Test.objects.filter(sample=received_sample).order_by("method_code"))
    assert [t.method_code for t in tests] == ["av", "pv"]
    assert all(t.state == TestState.PENDING and t.replicates == 2 for t in tests)

    test_assign_bulk(manager, tests, assignee=analyst)
    received_sample.refresh_from_db()
    assert received_sample.state == SampleState.IN_TESTING

    av, pv = tests
    first = result_record(analyst, av, inputs=AV_LOW, **AV_TRACE)
    # ISO 660 formula by hand: (1.30 - 0.05) * 0.1 * 56.1 / 20.0 = 0.350625 -> 0.35 at 2 places (ASTM E29)
    assert first.value == pytest.approx(0.350625)
    assert first.reported == "0.35"
    assert first.unit == "mg KOH/g"
    assert first.inputs == AV_LOW  # kept exactly as entered (strings stay strings)
    assert first.method_code == "av" and first.method_version == "1.0"
    assert first.duplicate_check is None  # only one replicate so far
    second = result_record(analyst, av, inputs=AV_LOW_TWIN, **AV_TRACE)
    assert second.replicate == 2
    av.refresh_from_db()
    assert av.state == TestState.RESULT_ENTERED
    # mean of 0.350625 and 0.35904 = 0.3548325 -> 0.35
    assert av.value == pytest.approx((0.350625 + 0.35904) / 2)
    assert av.reported == "0.35"
    assert av.verdict == Verdict.PASS
    assert av.duplicate_check["agrees"] is True

    result_record(analyst, pv, inputs=PV_LOW, **PV_TRACE)
    result_record(analyst, pv, inputs=PV_LOW_TWIN, **PV_TRACE)

    test_accept(analyst2, av)
    test_accept(analyst2, pv)
    received_sample.refresh_from_db()
    assert received_sample.state == SampleState.TESTING_COMPLETE

    certificate = lot_release(qa, received_sample.lot, password=SIGNING_PASSWORD)
    received_sample.refresh_from_db()
    received_sample.lot.refresh_from_db()
    assert received_sample.lot.state == LotState.RELEASED
    assert received_sample.state == SampleState.RELEASED
    content = certificate.content
    assert content["lot"]["code"] == "L-100"
    assert content["product"]["name"] == "Refined soybean oil"
    assert content["specifications"][0]["version"] == 1
    assert content["released_by"] == "qa"
    by_method = {row["method"]: row for row in content["results"]}
    assert by_method["av"]["reported"] == "0.35"
    assert by_method["av"]["unit"] == "mg KOH/g"
    assert Decimal(by_method["av"]["maximum"]) == Decimal("0.6")  # Codex CXS 210 appendix, refined oils (found)
    assert by_method["av"]["verdict"] == "pass"
    assert by_method["av"]["accepted_by"] == "analyst2"
    assert by_method["pv"]["maximum"] == "10.0"  # CXS 210 appendix / CXS 19, refined oils (found)
    # issue 9: each replicate names what it was measured with
    measured = by_method["av"]["measured_with"][0]
    assert measured["titrant_lot"] == "KOH-BENCH" and measured["titrant_concentration"] == "0.1"
    assert [i["asset_id"] for i in measured["instruments"]] == ["BAL-BENCH", "BUR-BENCH"]
    assert measured["instruments"][0]["calibration"] and measured["instruments"][0]["check"]
    assert by_method["pv"]["measured_with"][1]["titrant_lot"] == "THIO-BENCH"
    assert re.fullmatch(r"MVO-\d{4}-00001", Certificate.objects.get(lot=received_sample.lot).number)  # the first this year
    assert Result.objects.filter(test__sample=received_sample).count() == 4
    assert AuditEntry.objects.filter(sample_ref=received_sample.pk).count() > 10
    assert audit_chain_verify().ok
