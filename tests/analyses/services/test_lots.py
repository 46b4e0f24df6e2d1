"""Lots: deliveries, release only when complete (409 listing what is missing), rejection."""
from __future__ import annotations

import pytest

from analyses.errors import Conflict, InvalidInput
from analyses.models import Certificate, ImmutableRowError, LotState, SampleState, TestState
from analyses.services.assignments import test_assign_bulk
from analyses.services.lots import lot_create, lot_reject, lot_release
from analyses.services.review import test_accept
from analyses.services.samples import sample_hold, sample_receive, sample_register
from analyses.services.specifications import specification_approve, specification_create
from tests.analyses.lab_setup import enter_passing

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


def test_release_lists_everything_missing_and_changes_nothing(users, assigned_tests):
    lot = assigned_tests[0].sample.lot
    sample_register(users["manager"], lot, label="L-100-NOT-YET")
    with pytest.raises(Conflict) as caught:
        lot_release(users["qa"], lot)
    missing = caught.value.missing
    assert "sample L-100-NOT-YET has not been received" in missing
    assert sum("is assigned, not accepted" in line for line in missing) == 2
    lot.refresh_from_db()
    assert lot.state == LotState.OPEN
    assert not Certificate.objects.exists()


def test_a_lot_without_tests_or_with_a_held_sample_is_not_released(users, lot, received_sample):
    empty = lot_create(users["manager"], code="L-EMPTY", product=lot.product, origin="production")
    with pytest.raises(Conflict) as caught:
        lot_release(users["qa"], empty)
    assert caught.value.missing == ["lot L-EMPTY has no release-critical test"]
    sample_hold(users["qa"], received_sample, reason="seal broken")
    with pytest.raises(Conflict) as caught:
        lot_release(users["qa"], lot)
    assert "sample L-100-A is on hold: seal broken" in caught.value.missing


def test_a_pending_test_that_is_not_release_critical_does_not_block(users, product):
    manager, qa = users["manager"], users["qa"]
    draft = specification_create(
        manager, product, effective_from="2020-01-01",
        lines=[{"method": "av", "maximum": "0.6"}, {"method": "sv", "codex_oil_type": "soybean", "release_critical": False}],
    )
    specification_approve(qa, draft)
    lot = lot_create(manager, code="L-NC", product=product, origin="production")
    sample = sample_receive(manager, sample_register(manager, lot), condition="ok", storage_place="shelf")
    av = sample.tests.get(method_code="av")
    test_assign_bulk(manager, [av], assignee=users["analyst"])
    test_accept(users["analyst2"], enter_passing(users["analyst"], [av])[0])
    certificate = lot_release(qa, lot)
    assert [row["method"] for row in certificate.content["results"]] == ["av"]
    assert sample.tests.get(method_code="sv").state == TestState.PENDING
    sample.refresh_from_db()
    assert sample.state == SampleState.IN_TESTING  # its testing is not complete, so it is not "released"


def test_rejection_needs_a_reason_and_closes_the_lot(users, assigned_tests):
    lot = assigned_tests[0].sample.lot
    with pytest.raises(InvalidInput):
        lot_reject(users["qa"], lot, reason=" ")
    rejected = lot_reject(users["qa"], lot, reason="tank contaminated with water")
    assert rejected.state == LotState.REJECTED and rejected.decided_by == users["qa"]
    assert set(lot.samples.values_list("state", flat=True)) == {SampleState.REJECTED}
    assert set(assigned_tests[0].sample.tests.values_list("state", flat=True)) == {TestState.CANCELLED}
    with pytest.raises(Conflict):
        lot_release(users["qa"], lot)
    with pytest.raises(Conflict):
        lot_reject(users["qa"], lot, reason="again")


def test_a_certificate_is_never_changed(users, assigned_tests):
    for test in enter_passing(users["analyst"], assigned_tests):
        test_accept(users["analyst2"], test)
    certificate = lot_release(users["qa"], assigned_tests[0].sample.lot)
    certificate.content["results"] = []
    with pytest.raises(ImmutableRowError):
        certificate.save()
    with pytest.raises(ImmutableRowError):
        certificate.delete()
    with pytest.raises(ImmutableRowError):
        Certificate.objects.filter(pk=certificate.pk).update(number="X")
    assert len(Certificate.objects.get(pk=certificate.pk).content["results"]) == 2
