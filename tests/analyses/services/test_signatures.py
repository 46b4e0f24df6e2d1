"""Electronic signatures on release and rejection: the password re-entered, the meaning audited."""
from __future__ import annotations

import pytest

from analyses.errors import InvalidInput
from analyses.models import AuditEntry, Certificate, LotState
from analyses.services.lots import lot_reject, lot_release
from analyses.services.review import test_accept
from analyses.services.signatures import release_meaning, specification_versions_text
from tests.analyses.lab_setup import enter_passing
from tests.factories import SIGNING_PASSWORD


@pytest.fixture
def releasable(users, assigned_tests):
    for test in enter_passing(users["analyst"], assigned_tests):
        test_accept(users["analyst2"], test)
    return assigned_tests[0].sample.lot


@pytest.mark.parametrize("password", ["", None, "wrong password", SIGNING_PASSWORD.upper(), 12345])
def test_release_refuses_a_missing_or_wrong_password_and_changes_nothing(users, releasable, password):
    before = AuditEntry.objects.count()
    with pytest.raises(InvalidInput) as refused:
        lot_release(users["qa"], releasable, password=password)
    assert list(refused.value.fields) == ["password"]
    releasable.refresh_from_db()
    assert releasable.state == LotState.OPEN and not Certificate.objects.exists()
    assert AuditEntry.objects.count() == before


def test_another_users_password_does_not_sign(users, releasable):
    users["analyst"].set_password("the analyst's own")
    users["analyst"].save()
    with pytest.raises(InvalidInput, match="password"):
        lot_release(users["qa"], releasable, password="the analyst's own")


def test_the_release_signature_and_its_meaning_are_in_the_audit_trail(users, releasable):
    lot_release(users["qa"], releasable, password=SIGNING_PASSWORD, note="all met")
    entry = AuditEntry.objects.get(object_type="analyses.lot", object_id=str(releasable.pk), changes__state=["open", "released"])
    assert entry.actor_username == "qa"
    assert entry.changes["signature_meaning"] == [None, "released for shipment against specification v1"]
    assert "password" not in str(entry.changes) and SIGNING_PASSWORD not in str(entry.changes)


def test_rejection_is_signed_too(users, lot):
    with pytest.raises(InvalidInput) as refused:
        lot_reject(users["qa"], lot, reason="water in tank", password="wrong")
    assert list(refused.value.fields) == ["password"]
    lot_reject(users["qa"], lot, reason="water in tank", password=SIGNING_PASSWORD)
    entry = AuditEntry.objects.get(object_type="analyses.lot", changes__state=["open", "rejected"])
    assert entry.changes["signature_meaning"][1].startswith("rejected: not to be shipped")
    assert entry.reason == "water in tank"


def test_the_meaning_names_every_specification_version():
    assert release_meaning([2]) == "released for shipment against specification v2"
    assert specification_versions_text([3, 1, 3]) == "specifications v1, v3"
    assert specification_versions_text([]) == "its specification"
