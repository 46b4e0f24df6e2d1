"""Lots: deliveries, release only when complete (409 listing what is missing), rejection."""
from __future__ import annotations

import datetime as dt

import pytest
from django.utils import timezone

from analyses.errors import Conflict, InvalidInput
from analyses.models import AuditEntry, Certificate, ImmutableRowError, Lot, LotState, SampleState, TestState
from analyses.services.assignments import test_assign_bulk
from analyses.services.lots import lot_create, lot_reject, lot_release
from analyses.services.results import result_record
from analyses.services.review import test_accept
from analyses.services.samples import sample_cancel, sample_hold, sample_receive, sample_register
from analyses.services.specifications import specification_approve, specification_create
from tests.analyses.lab_setup import entry, enter_passing
from tests.factories import SIGNING_PASSWORD

pytestmark = pytest.mark.django_db


def test_a_delivery_needs_its_supplier_and_container(users, product):
    with pytest.raises(InvalidInput) as caught:
        lot_create(users["manager"], code="D-1", product=product, origin="delivery", container_ref="TK-4")
    assert list(caught.value.fields) == ["supplier"]
    with pytest.raises(InvalidInput) as caught:
        lot_create(users["manager"], code="D-1", product=product, origin="delivery", supplier="Invented Crushers")
    assert list(caught.value.fields) == ["container_ref"]
    with pytest.raises(InvalidInput) as caught:
        lot_create(users["manager"], code="D-1", product=product, origin="barge")
    assert list(caught.value.fields) == ["origin"]
    lot = lot_create(
        users["manager"], code="D-1", product=product, origin="delivery",
        supplier="Invented Crushers", container_ref="ISO tank TK-4", quantity_kg="24000",
    )
    assert (lot.supplier, lot.container_ref, lot.state) == ("Invented Crushers", "ISO tank TK-4", LotState.OPEN)
    with pytest.raises(InvalidInput) as caught:
        lot_create(users["manager"], code="D-1", product=product, origin="production")
    assert list(caught.value.fields) == ["code"]


def test_a_lot_produced_in_the_future_is_refused_and_today_is_not(users, product):
    tomorrow = timezone.localdate() + dt.timedelta(days=1)
    with pytest.raises(InvalidInput) as caught:
        lot_create(users["manager"], code="F-1", product=product, origin="production", produced_on=tomorrow)
    assert list(caught.value.fields) == ["produced_on"] and tomorrow.isoformat() in caught.value.fields["produced_on"][0]
    assert not Lot.objects.filter(code="F-1").exists()
    lot = lot_create(users["manager"], code="F-1", product=product, origin="production", produced_on=timezone.localdate())
    assert lot.produced_on == timezone.localdate()


def test_release_lists_everything_missing_and_changes_nothing(users, assigned_tests):
    lot = assigned_tests[0].sample.lot
    sample_register(users["manager"], lot, label="L-100-NOT-YET")
    with pytest.raises(Conflict) as caught:
        lot_release(users["qa"], lot, password=SIGNING_PASSWORD)
    missing = caught.value.missing
    assert "sample L-100-NOT-YET has not been received" in missing
    assert sum("is assigned, not accepted" in line for line in missing) == 2
    lot.refresh_from_db()
    assert lot.state == LotState.OPEN
    assert not Certificate.objects.exists()


def test_a_lot_without_tests_or_with_a_held_sample_is_not_released(users, lot, received_sample):
    empty = lot_create(users["manager"], code="L-EMPTY", product=lot.product, origin="production")
    with pytest.raises(Conflict) as caught:
        lot_release(users["qa"], empty, password=SIGNING_PASSWORD)
    assert caught.value.missing == ["lot L-EMPTY has no release-critical test"]
    sample_hold(users["qa"], received_sample, reason="seal broken")
    with pytest.raises(Conflict) as caught:
        lot_release(users["qa"], lot, password=SIGNING_PASSWORD)
    assert "sample L-100-A is on hold: seal broken" in caught.value.missing


def _non_critical_lot(users, product, code="L-NC"):
    """A received sample with a release-critical AV line and a non-critical SV line."""
    manager, qa = users["manager"], users["qa"]
    draft = specification_create(
        manager, product, effective_from="2020-01-01",
        lines=[{"method": "av", "maximum": "0.6"}, {"method": "sv", "codex_oil_type": "soybean", "release_critical": False}],
    )
    specification_approve(qa, draft)
    lot = lot_create(manager, code=code, product=product, origin="production")
    return sample_receive(manager, sample_register(manager, lot), condition="ok", storage_place="shelf")


def test_release_cancels_open_non_critical_tests_and_releases_the_sample(users, product):
    # Changed behaviour: the non-critical SV test used to stay pending and the sample
    # in_testing after release; now the release cancels it and releases the sample.
    sample = _non_critical_lot(users, product)
    av = sample.tests.get(method_code="av")
    sv = sample.tests.get(method_code="sv")
    test_assign_bulk(users["manager"], [av], assignee=users["analyst"])
    test_accept(users["analyst2"], enter_passing(users["analyst"], [av])[0])
    certificate = lot_release(users["qa"], sample.lot, password=SIGNING_PASSWORD)
    assert [row["method"] for row in certificate.content["results"]] == ["av"]
    sv.refresh_from_db()
    assert sv.state == TestState.CANCELLED
    entry = AuditEntry.objects.filter(object_type="analyses.test", object_id=str(sv.pk)).last()
    assert (entry.changes["state"], entry.reason) == (["pending", "cancelled"], "lot released")
    sample.refresh_from_db()
    assert sample.state == SampleState.RELEASED
    # the lot is decided: its routine sample's tests take no more work
    with pytest.raises(Conflict):
        test_assign_bulk(users["manager"], [sv], assignee=users["analyst"])
    with pytest.raises(Conflict):
        sample_cancel(users["manager"], sample, reason="too late")


def test_a_non_critical_result_awaiting_review_blocks_release(users, product):
    sample = _non_critical_lot(users, product)
    av = sample.tests.get(method_code="av")
    sv = sample.tests.get(method_code="sv")
    test_assign_bulk(users["manager"], [av, sv], assignee=users["analyst"])
    test_accept(users["analyst2"], enter_passing(users["analyst"], [av])[0])
    # AOCS Cd 3-25: SV = (B - S) * c * 56.1 / m; (24.0 - 4.0) * 0.5 * 56.1 / 2.9 = 193.4 (in the Codex soybean range)
    sv_inputs = {"sample_mass": "2.9", "sample_volume": "4.0", "blank_volume": "24.0", "titrant_concentration": "0.5"}
    result_record(users["analyst"], sv, **entry("sv", sv_inputs))
    result_record(users["analyst"], sv, **entry("sv", sv_inputs))
    sv.refresh_from_db()
    assert sv.state == TestState.RESULT_ENTERED
    with pytest.raises(Conflict) as caught:
        lot_release(users["qa"], sample.lot, password=SIGNING_PASSWORD)
    assert caught.value.missing == [f"sample {sample.label}: sv test {sv.pk} is result_entered, awaiting review"]
    sample.lot.refresh_from_db()
    assert sample.lot.state == LotState.OPEN


def test_rejection_needs_a_reason_and_closes_the_lot(users, assigned_tests):
    lot = assigned_tests[0].sample.lot
    with pytest.raises(InvalidInput):
        lot_reject(users["qa"], lot, reason=" ", password=SIGNING_PASSWORD)
    rejected = lot_reject(users["qa"], lot, reason="tank contaminated with water", password=SIGNING_PASSWORD)
    assert rejected.state == LotState.REJECTED and rejected.decided_by == users["qa"]
    assert set(lot.samples.values_list("state", flat=True)) == {SampleState.REJECTED}
    assert set(assigned_tests[0].sample.tests.values_list("state", flat=True)) == {TestState.CANCELLED}
    with pytest.raises(Conflict):
        lot_release(users["qa"], lot, password=SIGNING_PASSWORD)
    with pytest.raises(Conflict):
        lot_reject(users["qa"], lot, reason="again", password=SIGNING_PASSWORD)


def test_a_certificate_is_never_changed(users, assigned_tests):
    for test in enter_passing(users["analyst"], assigned_tests):
        test_accept(users["analyst2"], test)
    certificate = lot_release(users["qa"], assigned_tests[0].sample.lot, password=SIGNING_PASSWORD)
    certificate.content["results"] = []
    with pytest.raises(ImmutableRowError):
        certificate.save()
    with pytest.raises(ImmutableRowError):
        certificate.delete()
    with pytest.raises(ImmutableRowError):
        Certificate.objects.filter(pk=certificate.pk).update(number="X")
    assert len(Certificate.objects.get(pk=certificate.pk).content["results"]) == 2
