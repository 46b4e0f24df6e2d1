"""Certificates: the lab's numbering scheme, what the content states, and reissue as a new
version that keeps the old one."""
from __future__ import annotations

import re

import pytest
from django.utils import timezone

from analyses.errors import Conflict, InvalidInput, NotAllowed
from analyses.models import AuditEntry, Certificate, Lot, Test
from analyses.services.assignments import test_assign_bulk
from analyses.services.certificates import certificate_reissue
from analyses.services.lots import lot_create, lot_release
from analyses.services.review import test_accept
from analyses.services.samples import sample_receive, sample_register
from tests.analyses.lab_setup import enter_passing
from tests.factories import SIGNING_PASSWORD


def _accept_all(users, tests) -> None:
    for test in enter_passing(users["analyst"], tests):
        test_accept(users["analyst2"], test)


@pytest.fixture
def released(users, assigned_tests) -> Lot:
    _accept_all(users, assigned_tests)
    lot = assigned_tests[0].sample.lot
    lot_release(users["qa"], lot, password=SIGNING_PASSWORD)
    lot.refresh_from_db()
    return lot


def _release_another(users, product, code: str) -> Certificate:
    lot = lot_create(users["manager"], code=code, product=product, origin="production", customer="Invented Foods")
    sample = sample_receive(users["manager"], sample_register(users["manager"], lot, label=f"{code}-A"), condition="sealed", storage_place="A1")
    tests = test_assign_bulk(users["manager"], list(Test.objects.filter(sample=sample).order_by("method_code")), assignee=users["analyst"])
    _accept_all(users, tests)
    return lot_release(users["qa"], lot, password=SIGNING_PASSWORD)


def test_numbers_follow_the_labs_scheme_prefix_year_sequence(users, released, product, settings):
    year = timezone.localdate().year
    first = released.certificates.get()
    assert first.number == f"MVO-{year}-00001" and first.version == 1 and first.replaces is None
    settings.CERTIFICATE_PREFIX = "QCL"  # another lab's prefix starts its own count
    assert _release_another(users, product, "L-101").number == f"QCL-{year}-00001"
    settings.CERTIFICATE_PREFIX = "MVO"
    assert _release_another(users, product, "L-102").number == f"MVO-{year}-00002"


def test_the_content_names_the_lab_customer_dates_and_signature(users, product, specification):
    certificate = _release_another(users, product, "L-103")
    content = certificate.content
    assert content["laboratory"]["name"].startswith("Marrowvale Oils Ltd")  # settings' invented default
    assert content["customer"] == "Invented Foods"
    today = timezone.localdate().isoformat()
    assert content["dates"]["receipt"] == {"first": today, "last": today}
    assert content["dates"]["testing"]["first"] == today and content["dates"]["sampling"] is None
    assert content["signature_meaning"] == "released for shipment against specification v1"
    assert content["statement_of_conformity"].startswith("Conforms to specification v1")
    assert content["released_by"] == "qa" and content["issued_by"] == "qa" and content["version"] == 1


def test_a_reissue_is_a_new_version_and_the_old_one_stays(users, released):
    first = released.certificates.get()
    second = certificate_reissue(
        users["qa"], released, reason="customer name misspelt", customer="Invented Bakeries plc", password=SIGNING_PASSWORD,
    )
    assert second.version == 2 and second.replaces == first and second.number != first.number
    assert re.fullmatch(r"MVO-\d{4}-00002", second.number)
    assert second.content["replaces"] == first.number and second.content["reissue_reason"] == "customer name misspelt"
    assert second.content["customer"] == "Invented Bakeries plc"
    # the release's signature is the lot's, not the reissuer's act
    assert second.content["released_at"] == first.content["released_at"]
    assert second.content["signature_meaning"] == first.content["signature_meaning"]
    kept = Certificate.objects.get(pk=first.pk)
    assert kept.content == first.content and kept.content["customer"] is None  # as issued
    assert list(released.certificates.order_by("version").values_list("version", flat=True)) == [1, 2]
    released.refresh_from_db()
    assert released.customer == "Invented Bakeries plc"
    entries = AuditEntry.objects.filter(lot_ref=released.pk, reason="customer name misspelt")
    assert {(e.object_type, e.action) for e in entries} == {("analyses.lot", "change"), ("analyses.certificate", "create")}
    created = entries.get(object_type="analyses.certificate")
    assert created.changes["replaces"] == [None, first.number]
    third = certificate_reissue(users["qa"], released, reason="result corrected after release", password=SIGNING_PASSWORD)
    assert third.replaces == second and third.version == 3
    assert third.content["customer"] == "Invented Bakeries plc"


def test_a_reissue_needs_a_released_lot_a_reason_qa_and_the_password(users, lot, released):
    with pytest.raises(Conflict, match="only a released lot"):
        certificate_reissue(users["qa"], lot_create(users["manager"], code="L-9", product=lot.product, origin="production"),
                            reason="x", password=SIGNING_PASSWORD)
    with pytest.raises(InvalidInput) as missing_reason:
        certificate_reissue(users["qa"], released, reason=" ", password=SIGNING_PASSWORD)
    assert "reason" in missing_reason.value.fields
    with pytest.raises(InvalidInput) as long_name:
        certificate_reissue(users["qa"], released, reason="x", customer="x" * 201, password=SIGNING_PASSWORD)
    assert "customer" in long_name.value.fields
    with pytest.raises(NotAllowed):
        certificate_reissue(users["manager"], released, reason="x", password=SIGNING_PASSWORD)
    for wrong in ("", "not-the-password", None):
        with pytest.raises(InvalidInput) as refused:
            certificate_reissue(users["qa"], released, reason="x", customer="Someone Else", password=wrong)
        assert list(refused.value.fields) == ["password"]
    released.refresh_from_db()
    assert released.certificates.count() == 1 and released.customer == ""  # nothing was written


@pytest.mark.django_db(transaction=True)
def test_lots_released_at_once_get_distinct_consecutive_numbers_on_postgresql(postgres, users, product, specification):
    """The sequence is counted under the audit chain's lock, so concurrent releases never share a number."""
    from tests.analyses.concurrency import race

    lots = []
    for index in range(3):
        code = f"L-R{index}"
        lot = lot_create(users["manager"], code=code, product=product, origin="production")
        sample = sample_receive(users["manager"], sample_register(users["manager"], lot, label=f"{code}-A"), condition="sealed", storage_place="A1")
        tests = test_assign_bulk(users["manager"], list(Test.objects.filter(sample=sample).order_by("method_code")), assignee=users["analyst"])
        _accept_all(users, tests)
        lots.append(lot)
    outcomes = race(lambda i: lot_release(users["qa"], lots[i].pk, password=SIGNING_PASSWORD), threads=3)
    assert all(isinstance(outcome, Certificate) for outcome in outcomes), outcomes
    year = timezone.localdate().year
    assert sorted(outcome.number for outcome in outcomes) == [f"MVO-{year}-{n:05d}" for n in (1, 2, 3)]
