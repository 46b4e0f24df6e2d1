"""Out of specification: the investigation blocks release; both conclusions; the retest."""
from __future__ import annotations

import pytest

from analyses.errors import Conflict, InvalidInput, NotAllowed
from analyses.models import (
    AuditEntry,
    Conclusion,
    Investigation,
    InvestigationState,
    LotState,
    ResultStatus,
    Sample,
    SampleState,
    Test,
    TestState,
    Verdict,
)
from analyses.services.assignments import test_assign_bulk
from analyses.services.investigations import investigation_close
from analyses.services.lots import lot_release
from analyses.services.review import test_accept
from analyses.services.samples import sample_cancel, sample_hold, sample_resume
from tests.analyses.lab_setup import AV_HIGH, AV_HIGH_TWIN, AV_LOW, AV_LOW_TWIN, PV_LOW, PV_LOW_TWIN, enter_duplicates
from tests.factories import SIGNING_PASSWORD

pytestmark = pytest.mark.django_db


@pytest.fixture
def oos(users, assigned_tests):
    """AV out of specification (0.69 > 0.6, Codex CXS 210 appendix, refined oils, found), PV passing;
    both accepted by a second analyst."""
    analyst, reviewer = users["analyst"], users["analyst2"]
    av = next(t for t in assigned_tests if t.method_code == "av")
    pv = next(t for t in assigned_tests if t.method_code == "pv")
    av = enter_duplicates(analyst, av, AV_HIGH, AV_HIGH_TWIN)
    assert av.verdict == Verdict.OUT_OF_SPECIFICATION
    test_accept(reviewer, enter_duplicates(analyst, pv, PV_LOW, PV_LOW_TWIN))
    test_accept(reviewer, av)
    return Investigation.objects.get(test=av)


def test_an_accepted_oos_result_opens_an_investigation_that_blocks_release(users, oos):
    assert oos.state == InvestigationState.OPEN
    with pytest.raises(Conflict) as caught:
        lot_release(users["qa"], oos.lot, password=SIGNING_PASSWORD)
    assert any(f"OOS investigation {oos.pk} is open" in line for line in caught.value.missing)
    assert any("av test" in line and "out of specification" in line for line in caught.value.missing)
    oos.lot.refresh_from_db()
    assert oos.lot.state == LotState.OPEN


def test_only_qa_closes_an_investigation(users, oos):
    for role in ("manager", "analyst", "analyst2"):
        with pytest.raises(NotAllowed):
            investigation_close(users[role], oos, conclusion="confirmed", findings="x")
    with pytest.raises(InvalidInput) as caught:
        investigation_close(users["qa"], oos, conclusion="maybe", findings="x")
    assert "conclusion" in caught.value.fields
    assert Investigation.objects.get(pk=oos.pk).state == InvestigationState.OPEN


def test_confirmed_oos_rejects_the_lot(users, oos):
    closed = investigation_close(
        users["qa"], oos, conclusion=Conclusion.CONFIRMED, findings="re-titration agrees", password=SIGNING_PASSWORD
    )
    assert closed.state == InvestigationState.CLOSED and closed.conclusion == "confirmed"
    lot = closed.lot
    lot.refresh_from_db()
    assert lot.state == LotState.REJECTED
    assert "re-titration agrees" in lot.decision_reason
    assert set(lot.samples.values_list("state", flat=True)) == {SampleState.REJECTED}
    with pytest.raises(Conflict):
        investigation_close(users["qa"], oos, conclusion=Conclusion.CONFIRMED, findings="again", password=SIGNING_PASSWORD)


@pytest.mark.parametrize("password", [None, "", "wrong password", SIGNING_PASSWORD.upper()])
def test_confirming_an_oos_that_rejects_the_lot_is_signed_or_refused(users, oos, password):
    """As lot_reject: a missing or wrong password is a 400 naming it, and nothing is written."""
    before = AuditEntry.objects.count()
    with pytest.raises(InvalidInput) as refused:
        investigation_close(users["qa"], oos, conclusion=Conclusion.CONFIRMED, findings="re-titration agrees", password=password)
    assert list(refused.value.fields) == ["password"]
    assert Investigation.objects.get(pk=oos.pk).state == InvestigationState.OPEN
    oos.lot.refresh_from_db()
    assert oos.lot.state == LotState.OPEN
    assert AuditEntry.objects.count() == before


def test_the_signed_confirmation_records_the_rejections_meaning(users, oos):
    investigation_close(
        users["qa"], oos, conclusion=Conclusion.CONFIRMED, findings="re-titration agrees", password=SIGNING_PASSWORD
    )
    closing = AuditEntry.objects.get(object_type="analyses.investigation", object_id=str(oos.pk), changes__conclusion=["", "confirmed"])
    rejection = AuditEntry.objects.get(object_type="analyses.lot", object_id=str(oos.lot_id), changes__state=["open", "rejected"])
    meaning = "rejected: not to be shipped (judged against specification v1)"
    assert closing.changes["signature_meaning"] == [None, meaning]
    assert rejection.changes["signature_meaning"] == [None, meaning]
    assert closing.actor_username == rejection.actor_username == "qa"
    assert SIGNING_PASSWORD not in str(closing.changes)


def test_a_lab_error_needs_no_signature(users, oos):
    closed = investigation_close(users["qa"], oos, conclusion=Conclusion.LAB_ERROR, findings="wrong KOH normality")
    assert closed.conclusion == Conclusion.LAB_ERROR


def test_an_already_closed_investigation_is_a_conflict_before_the_password_is_asked(users, oos):
    investigation_close(users["qa"], oos, conclusion=Conclusion.LAB_ERROR, findings="wrong KOH normality")
    with pytest.raises(Conflict, match="already closed"):
        investigation_close(users["qa"], oos, conclusion=Conclusion.CONFIRMED, findings="again")


def test_lab_error_invalidates_the_result_and_a_retest_leads_to_release(users, oos):
    closed = investigation_close(users["qa"], oos, conclusion=Conclusion.LAB_ERROR, findings="wrong KOH normality")
    original = Test.objects.get(pk=oos.test_id)
    assert original.state == TestState.INVALIDATED
    assert set(original.results.values_list("status", flat=True)) == {ResultStatus.INVALIDATED}
    retest = closed.retest
    assert retest.retest_of == original
    assert retest.state == TestState.PENDING
    assert retest.specification_line == original.specification_line
    sample = retest.sample
    assert sample.state == SampleState.IN_TESTING

    test_assign_bulk(users["manager"], [retest], assignee=users["analyst2"])
    retest = enter_duplicates(users["analyst2"], retest, AV_LOW, AV_LOW_TWIN)
    test_accept(users["analyst"], retest)
    sample.refresh_from_db()
    assert sample.state == SampleState.TESTING_COMPLETE
    certificate = lot_release(users["qa"], closed.lot, password=SIGNING_PASSWORD)
    # the certificate lists the retest, not the invalidated test
    assert sorted(row["test"] for row in certificate.content["results"] if row["method"] == "av") == [retest.pk]


def test_a_sample_with_an_open_investigation_cannot_be_cancelled(users, oos):
    sample = Test.objects.get(pk=oos.test_id).sample
    with pytest.raises(Conflict) as caught:
        sample_cancel(users["manager"], sample, reason="container lost")
    assert caught.value.missing == [f"OOS investigation {oos.pk} is open"]
    sample.refresh_from_db()
    assert sample.state == SampleState.TESTING_COMPLETE
    assert not Test.objects.filter(sample=sample, state=TestState.CANCELLED).exists()


def test_no_retest_on_a_cancelled_sample(users, oos):
    # A sample cancelled before cancelling checked for open investigations (old data).
    Sample.objects.filter(pk=Test.objects.get(pk=oos.test_id).sample_id).update(state=SampleState.CANCELLED)
    with pytest.raises(Conflict, match="cancelled"):
        investigation_close(users["qa"], oos, conclusion=Conclusion.LAB_ERROR, findings="wrong KOH normality")
    assert Investigation.objects.get(pk=oos.pk).state == InvestigationState.OPEN
    assert not Test.objects.filter(retest_of=oos.test_id).exists()


def test_a_sample_resumed_with_a_retest_waiting_goes_back_to_testing(users, oos):
    sample = Test.objects.get(pk=oos.test_id).sample
    sample_hold(users["qa"], sample, reason="awaiting the investigation")
    closed = investigation_close(users["qa"], oos, conclusion=Conclusion.LAB_ERROR, findings="wrong KOH normality")
    sample.refresh_from_db()
    assert sample.state == SampleState.ON_HOLD  # the retest waits for the hold to end
    sample_resume(users["qa"], sample, reason="investigation closed")
    sample.refresh_from_db()
    assert (sample.state, sample.state_reason, sample.resume_state) == (SampleState.IN_TESTING, "", "")
    assert closed.retest.state == TestState.PENDING
