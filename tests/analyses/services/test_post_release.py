"""Findings after release: a retained sample tested after release, the post-release investigation
its out-of-specification result opens, each outcome with what it changed, its audit and alert,
and the close that would change nothing refused."""
from __future__ import annotations

import pytest
from django.core import mail

from analyses.errors import Conflict, InvalidInput, NotAllowed
from analyses.models import (
    Alert,
    AlertSource,
    AuditEntry,
    Conclusion,
    Investigation,
    InvestigationKind,
    InvestigationState,
    LotState,
    SampleState,
    Test,
    TestState,
)
from analyses.services.alert_delivery import alert_notify
from analyses.services.assignments import test_assign_bulk
from analyses.services.investigations import investigation_close
from analyses.services.lots import lot_release
from analyses.services.post_release import lot_hold_lift, retain_tests_add
from analyses.services.review import test_accept
from analyses.services.samples import sample_receive, sample_register
from tests.analyses.lab_setup import AV_HIGH, AV_HIGH_TWIN, AV_LOW, AV_LOW_TWIN, enter_duplicates, enter_passing
from tests.factories import SIGNING_PASSWORD

pytestmark = pytest.mark.django_db


@pytest.fixture
def retain(users, lot):
    sample = sample_register(users["manager"], lot, kind="retain", label="L-100-R")
    return sample_receive(users["manager"], sample, condition="sealed", storage_place="retain store")


@pytest.fixture
def released_lot(users, lot, assigned_tests, retain):
    """L-100 released on passing AV and PV, its retained sample kept."""
    for test in enter_passing(users["analyst"], assigned_tests):
        test_accept(users["analyst2"], test)
    lot_release(users["qa"], lot, password=SIGNING_PASSWORD)
    lot.refresh_from_db()
    return lot


def retain_av(users, retain, first, second) -> Test:
    """An AV test ordered on the retained sample, entered by "analyst" and accepted by "analyst2"."""
    [test] = retain_tests_add(users["manager"], retain, methods=["av"], reason="customer complaint: soapy taste")
    test_assign_bulk(users["manager"], [test], assignee=users["analyst"])
    return test_accept(users["analyst2"], enter_duplicates(users["analyst"], test, first, second))


@pytest.fixture
def finding(users, released_lot, retain):
    """AV 0.69 mg KOH/g on the retained sample (above the Codex 0.6 for refined oils, CXS 210, found)."""
    retain_av(users, retain, AV_HIGH, AV_HIGH_TWIN)
    return Investigation.objects.get()


def test_retained_sample_tests_use_the_specification_the_lot_was_released_against(users, released_lot, retain):
    [test] = retain_tests_add(users["manager"], retain, methods=["av"], reason="periodic check")
    routine_av = Test.objects.get(sample__kind="routine", method_code="av")
    assert test.specification_line_id == routine_av.specification_line_id
    assert test.state == TestState.PENDING and test.replicates == routine_av.replicates
    entry = AuditEntry.objects.get(object_type="analyses.test", object_id=str(test.pk))
    assert "periodic check" in entry.reason


@pytest.mark.parametrize(
    "who, methods, error, text",
    [
        ("analyst", ["av"], NotAllowed, ""),
        ("manager", [], InvalidInput, "methods"),
        ("manager", ["av", "av"], InvalidInput, "methods.1"),
        ("manager", ["sv"], Conflict, "no line for sv"),
    ],
)
def test_retained_sample_tests_refuse_bad_orders(users, released_lot, retain, who, methods, error, text):
    with pytest.raises(error) as caught:
        retain_tests_add(users[who], retain, methods=methods, reason="complaint")
    if error is InvalidInput:
        assert text in caught.value.fields
    elif text:
        assert text in caught.value.detail
    assert not Test.objects.filter(sample=retain).exists()


def test_only_a_retained_sample_of_a_released_lot_is_tested_this_way(users, lot, retain, received_sample):
    with pytest.raises(Conflict, match="only after its lot's release"):
        retain_tests_add(users["manager"], retain, methods=["av"], reason="complaint")
    with pytest.raises(Conflict, match="only a retained sample"):
        retain_tests_add(users["manager"], received_sample, methods=["av"], reason="complaint")


def test_an_oos_finding_on_a_released_lot_opens_a_post_release_investigation_and_notifies_qa(users, finding, settings):
    assert (finding.kind, finding.state) == (InvestigationKind.POST_RELEASE, InvestigationState.OPEN)
    lot = finding.lot
    assert lot.state == LotState.RELEASED and not lot.under_investigation
    alert = Alert.objects.get()
    assert (alert.source, alert.rule, alert.lot_id) == (AlertSource.POST_RELEASE, "released_lot_oos", lot.pk)
    assert f"post-release investigation {finding.pk} is open" in alert.message and "L-100-R" in alert.message
    settings.ALERT_EMAIL_RECIPIENTS, settings.ALERT_WEBHOOK_URL = ["qa@example.invalid"], ""
    assert alert_notify(alert.pk).emailed
    assert len(mail.outbox) == 1 and "released_lot_oos" in mail.outbox[0].subject
    # the retained sample finished its testing; nothing else on the lot moved
    assert Test.objects.get(pk=finding.test_id).sample.state == SampleState.TESTING_COMPLETE


def test_a_passing_retained_sample_opens_nothing(users, released_lot, retain):
    retain_av(users, retain, AV_LOW, AV_LOW_TWIN)
    assert not Investigation.objects.exists() and not Alert.objects.exists()


def test_confirmed_on_a_released_lot_is_refused_and_changes_nothing(users, finding):
    with pytest.raises(Conflict) as caught:
        investigation_close(users["qa"], finding, conclusion=Conclusion.CONFIRMED, findings="agrees")
    assert "already released" in caught.value.detail and "hold_notice" in caught.value.detail
    finding.refresh_from_db()
    assert finding.state == InvestigationState.OPEN
    finding.lot.refresh_from_db()
    assert finding.lot.state == LotState.RELEASED


def test_no_action_says_the_lot_is_unchanged(users, finding):
    closed = investigation_close(users["qa"], finding, conclusion=Conclusion.NO_ACTION, findings="retain stored warm; not the lot")
    assert (closed.state, closed.conclusion) == (InvestigationState.CLOSED, "no_action")
    assert closed.effect == "no change to the lot: L-100 stays released"
    closed.lot.refresh_from_db()
    assert closed.lot.state == LotState.RELEASED and closed.lot.standing == "released"
    entry = AuditEntry.objects.filter(object_type="analyses.investigation", object_id=str(closed.pk)).latest("sequence")
    assert entry.changes["effect"] == ["", closed.effect] and entry.changes["conclusion"] == ["", "no_action"]
    assert not Alert.objects.filter(rule="lot_hold_notice").exists()


def test_a_hold_notice_marks_the_lot_audits_it_and_notifies_qa(users, finding, settings):
    closed = investigation_close(
        users["qa"], finding, conclusion=Conclusion.HOLD_NOTICE, findings="re-titration agrees",
        hold_reason="AV above specification in the retained sample; customers asked to hold stock",
    )
    assert closed.conclusion == "hold_notice"
    assert closed.effect.startswith("lot L-100 is now released, under investigation: AV above specification")
    lot = closed.lot
    lot.refresh_from_db()
    assert lot.state == LotState.RELEASED and lot.under_investigation
    assert lot.standing == "released, under investigation"
    assert (lot.hold_notice_by, lot.hold_notice_investigation_id) == (users["qa"], closed.pk)
    entry = AuditEntry.objects.filter(object_type="analyses.lot", object_id=str(lot.pk)).latest("sequence")
    assert entry.changes["standing"] == ["released", "released, under investigation"]
    assert entry.actor_username == "qa" and "customers asked to hold stock" in entry.reason
    alert = Alert.objects.get(rule="lot_hold_notice")
    assert (alert.source, alert.lot_id) == (AlertSource.POST_RELEASE, lot.pk)
    assert "released, under investigation" in alert.message and "customers asked to hold stock" in alert.message
    settings.ALERT_EMAIL_RECIPIENTS, settings.ALERT_WEBHOOK_URL = ["qa@example.invalid"], ""
    assert alert_notify(alert.pk).emailed and "lot_hold_notice" in mail.outbox[-1].subject


@pytest.mark.parametrize(
    "who, conclusion, hold_reason, error, field",
    [
        ("admin", Conclusion.HOLD_NOTICE, "hold", NotAllowed, None),  # a decision on the lot: QA's alone
        ("manager", Conclusion.NO_ACTION, "", NotAllowed, None),
        ("qa", Conclusion.HOLD_NOTICE, "  ", InvalidInput, "hold_reason"),
        ("qa", Conclusion.NO_ACTION, "hold it", InvalidInput, "hold_reason"),
        ("qa", Conclusion.CONFIRMED, "hold it", InvalidInput, "hold_reason"),
    ],
)
def test_post_release_closes_refuse_bad_requests(users, finding, who, conclusion, hold_reason, error, field):
    with pytest.raises(error) as caught:
        investigation_close(users[who], finding, conclusion=conclusion, findings="x", hold_reason=hold_reason)
    if field:
        assert field in caught.value.fields
    finding.refresh_from_db()
    assert finding.state == InvestigationState.OPEN and not finding.lot.under_investigation


def test_post_release_outcomes_are_refused_on_an_open_lot(users, assigned_tests):
    av = next(t for t in assigned_tests if t.method_code == "av")
    test_accept(users["analyst2"], enter_duplicates(users["analyst"], av, AV_HIGH, AV_HIGH_TWIN))
    investigation = Investigation.objects.get()
    assert investigation.kind == InvestigationKind.RELEASE
    for conclusion, hold_reason in ((Conclusion.NO_ACTION, ""), (Conclusion.HOLD_NOTICE, "h")):
        with pytest.raises(Conflict, match="closes an investigation on a released lot"):
            investigation_close(users["qa"], investigation, conclusion=conclusion, findings="x", hold_reason=hold_reason)
    # on an open lot "confirmed" rejects it, signed as a rejection is (issue 10)
    closed = investigation_close(users["qa"], investigation, conclusion=Conclusion.CONFIRMED, findings="agrees",
                                 password=SIGNING_PASSWORD)
    assert closed.effect == "lot L-100 is now rejected"


def test_a_second_hold_notice_is_refused_and_a_lifted_one_frees_the_lot(users, finding, retain):
    investigation_close(users["qa"], finding, conclusion=Conclusion.HOLD_NOTICE, findings="f", hold_reason="first")
    second = retain_av(users, retain, AV_HIGH, AV_HIGH_TWIN)
    other = Investigation.objects.get(test=second)
    with pytest.raises(Conflict, match="already released, under investigation"):
        investigation_close(users["qa"], other, conclusion=Conclusion.HOLD_NOTICE, findings="f", hold_reason="second")
    closed = investigation_close(users["qa"], other, conclusion=Conclusion.NO_ACTION, findings="same finding")
    assert "stays released, under investigation" in closed.effect

    with pytest.raises(NotAllowed):
        lot_hold_lift(users["admin"], finding.lot, reason="x")
    lot = lot_hold_lift(users["qa"], finding.lot, reason="customer's stock retested in specification")
    assert lot.state == LotState.RELEASED and not lot.under_investigation and lot.hold_notice_reason == ""
    entry = AuditEntry.objects.filter(object_type="analyses.lot", object_id=str(lot.pk)).latest("sequence")
    assert entry.changes["standing"] == ["released, under investigation", "released"]
    with pytest.raises(Conflict, match="nothing to lift"):
        lot_hold_lift(users["qa"], lot, reason="again")


def test_lab_error_on_a_post_release_finding_retests_the_retained_sample(users, finding):
    closed = investigation_close(users["qa"], finding, conclusion=Conclusion.LAB_ERROR, findings="burette misread")
    assert closed.retest is not None and closed.retest.sample_id == Test.objects.get(pk=finding.test_id).sample_id
    assert closed.effect == f"test {finding.test_id} invalidated; retest {closed.retest.pk} created on sample L-100-R"
