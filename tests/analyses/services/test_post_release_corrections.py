"""A result corrected after its lot was released: the analyst proposes, QA approves with a
signature, the result gets a new version and the certificate is reissued; a correction that
breaks conformity is refused.

Expected values are worked by hand with the ISO 660 formula AV = (S - B) x c x 56.1 / m
(c = 0.1 mol/L from the bench lot), reported to 2 places by ASTM E29 (half to even); the
limit AV <= 0.6 mg KOH/g is Codex CXS 210's for refined oils (found).
"""
from __future__ import annotations

import pytest
from django.contrib.auth.models import Group

from analyses.errors import Conflict, InvalidInput, NotAllowed
from analyses.models import (
    AuditEntry,
    Certificate,
    CorrectionState,
    Investigation,
    InvestigationState,
    Lot,
    PostReleaseCorrection,
    Result,
    ResultStatus,
    Test,
    TestUncertainty,
    Verdict,
)
from analyses.roles import QA_REVIEWER
from analyses.services.assignments import test_assign_bulk
from analyses.services.lots import lot_create, lot_release
from analyses.services.post_release_corrections import (
    post_release_correction_approve,
    post_release_correction_decline,
    post_release_correction_propose,
)
from analyses.services.review import test_accept
from analyses.services.samples import sample_receive, sample_register
from analyses.services.specifications import specification_approve, specification_create
from tests.analyses.lab_setup import PV_LOW, PV_LOW_TWIN, enter_duplicates, enter_passing
from tests.factories import SIGNING_PASSWORD, ProductFactory, UserFactory

pytestmark = pytest.mark.django_db

# (1.38 - 0.05) x 0.1 x 56.1 / 20.0 = 0.373065 -> "0.37"; the test's mean with the twin's
# 0.35904 is 0.3660525 -> "0.37" (it was (0.350625 + 0.35904) / 2 = 0.3548325 -> "0.35")
AV_CORRECTED = {"sample_mass": "20.0", "sample_volume": "1.38", "blank_volume": "0.05"}
# near the limit: (2.15 - 0.05) x 0.28050 = 0.589050 and (2.17 - 0.05) x 0.28050 = 0.594660, mean 0.591855: passes
AV_NEAR = {"sample_mass": "20.0", "sample_volume": "2.15", "blank_volume": "0.05"}
AV_NEAR_TWIN = {"sample_mass": "20.0", "sample_volume": "2.17", "blank_volume": "0.05"}
# (2.25 - 0.05) x 0.28050 = 0.617100; mean with 0.594660 = 0.605880 > 0.6 (absolute comparison): out of
# specification, while the pair agrees (0.02244 apart, under 5 % of the mean: ISO 660 repeatability, from memory)
AV_OVER = {"sample_mass": "20.0", "sample_volume": "2.25", "blank_volume": "0.05"}
# (1.30 - 0.05) x 0.1 x 56.1 / 2.0 = 3.50625: ten times the twin, far beyond any repeatability
AV_TYPO = {"sample_mass": "2.0", "sample_volume": "1.30", "blank_volume": "0.05"}


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


def _av(lot: Lot) -> Test:
    return Test.objects.get(sample__lot=lot, method_code="av", state="accepted")


def _first_replicate(lot: Lot) -> Result:
    return _av(lot).results.get(status=ResultStatus.CURRENT, replicate=1)


def _released_near_the_limit(users, *, code: str, av_line: dict, av_pair=None) -> Lot:
    """Another product and lot whose AV pair (AV_NEAR, AV_NEAR_TWIN) passes close to 0.6, released."""
    manager = users["manager"]
    product = ProductFactory(code=f"P-{code}", name=f"Invented oil {code}", oil_type="soybean", created_by=manager)
    draft = specification_create(
        manager, product, effective_from="2020-01-01",
        lines=[{"method": "av", "codex_oil_type": "refined", **av_line}, {"method": "pv", "codex_oil_type": "refined"}],
    )
    specification_approve(users["qa"], draft)
    lot = lot_create(manager, code=code, product=product, origin="production")
    sample = sample_receive(manager, sample_register(manager, lot, label=f"{code}-A"), condition="sealed", storage_place="A1")
    tests = test_assign_bulk(manager, list(Test.objects.filter(sample=sample).order_by("method_code")), assignee=users["analyst"])
    av, pv = tests
    test_accept(users["analyst2"], enter_duplicates(users["analyst"], av, *(av_pair or (AV_NEAR, AV_NEAR_TWIN))))
    test_accept(users["analyst2"], enter_duplicates(users["analyst"], pv, PV_LOW, PV_LOW_TWIN))
    lot_release(users["qa"], lot, password=SIGNING_PASSWORD)
    lot.refresh_from_db()
    return lot


def test_the_analyst_proposes_and_nothing_released_changes(users, released):
    old = _first_replicate(released)
    proposal = post_release_correction_propose(users["analyst"], old, inputs=AV_CORRECTED, reason="titre misread: 1.38 mL")
    assert proposal.state == CorrectionState.PROPOSED and proposal.proposed_by == users["analyst"]
    assert (proposal.reported, proposal.mean_reported, proposal.verdict) == ("0.37", "0.37", Verdict.PASS)
    old.refresh_from_db()
    assert old.status == ResultStatus.CURRENT and old.version == 1
    assert _av(released).reported == "0.35"
    assert released.certificates.count() == 1
    assert Result.objects.filter(test=old.test).count() == 2  # the preview was rolled back
    assert AuditEntry.objects.filter(object_type="analyses.postreleasecorrection", object_id=str(proposal.pk)).count() == 1
    with pytest.raises(Conflict, match="awaiting QA"):
        post_release_correction_propose(users["analyst"], old, inputs=AV_CORRECTED, reason="again")


@pytest.mark.parametrize("role", ["qa", "manager", "analyst2", "nobody"])
def test_only_who_may_correct_the_result_proposes_and_qa_never(users, released, role):
    with pytest.raises(NotAllowed):
        post_release_correction_propose(users[role], _first_replicate(released), inputs=AV_CORRECTED, reason="misread")
    assert not PostReleaseCorrection.objects.exists()


def test_a_qa_member_with_the_analyst_role_still_never_enters_raw_data(users, released):
    users["analyst"].groups.add(Group.objects.get(name=QA_REVIEWER))  # now covering QA too
    with pytest.raises(NotAllowed, match="QA reviewer"):
        post_release_correction_propose(users["analyst"], _first_replicate(released), inputs=AV_CORRECTED, reason="misread")


def test_an_open_lots_results_are_corrected_the_ordinary_way(users, assigned_tests):
    _accept_all(users, assigned_tests)
    result = Result.objects.filter(test__method_code="av", status=ResultStatus.CURRENT).first()
    with pytest.raises(Conflict, match="only a released lot"):
        post_release_correction_propose(users["analyst"], result, inputs=AV_CORRECTED, reason="misread")


def test_bad_inputs_are_named(users, released):
    with pytest.raises(InvalidInput) as refused:
        post_release_correction_propose(
            users["analyst"], _first_replicate(released), inputs={**AV_CORRECTED, "sample_volume": "?"}, reason="misread"
        )
    assert "inputs.sample_volume" in refused.value.fields
    with pytest.raises(InvalidInput) as refused:
        post_release_correction_propose(users["analyst"], _first_replicate(released), inputs=AV_CORRECTED, reason=" ")
    assert "reason" in refused.value.fields


def test_qa_approves_signed_the_result_gets_a_new_version_and_the_certificate_is_reissued(users, released):
    old = _first_replicate(released)
    first = released.certificates.get()
    proposal = post_release_correction_propose(users["analyst"], old, inputs=AV_CORRECTED, reason="titre misread: 1.38 mL")
    applied = post_release_correction_approve(users["qa"], proposal, password=SIGNING_PASSWORD, note="checked the burette log")

    assert applied.state == CorrectionState.APPLIED and applied.decided_by == users["qa"]
    old.refresh_from_db()
    assert old.status == ResultStatus.SUPERSEDED  # kept, never overwritten
    new = applied.correction
    assert new.status == ResultStatus.CURRENT and new.version == 2 and new.supersedes == old
    assert new.entered_by == users["analyst"] and new.reported == "0.37" and new.correction_reason == "titre misread: 1.38 mL"
    assert new.inputs == AV_CORRECTED and new.reagent_lot_id == old.reagent_lot_id  # measured with the same titrant
    test = _av(released)
    assert (test.reported, test.verdict) == ("0.37", Verdict.PASS)
    assert sorted(TestUncertainty.objects.get(test=test).results) == sorted([new.pk, test.results.get(replicate=2, status="current").pk])

    reissued = applied.certificate
    assert reissued.version == 2 and reissued.replaces == first
    assert reissued.reissue_reason == "result correction: titre misread: 1.38 mL"
    assert reissued.content["replaces"] == first.number
    av_row = next(row for row in reissued.content["results"] if row["method"] == "av")
    assert av_row["reported"] == "0.37" and sorted(av_row["replicates"]) == ["0.36", "0.37"]
    assert av_row["expanded_uncertainty"] == TestUncertainty.objects.get(test=test).expanded
    first = Certificate.objects.get(pk=first.pk)  # the old version stays as issued
    assert next(row for row in first.content["results"] if row["method"] == "av")["reported"] == "0.35"
    assert first.content["statement_of_conformity"].startswith("Conforms")
    assert reissued.content["statement_of_conformity"].startswith("Conforms")

    signed = AuditEntry.objects.get(object_type="analyses.postreleasecorrection", object_id=str(proposal.pk), action="transition")
    assert signed.actor_username == "qa"
    assert signed.changes["signature_meaning"][1] == (
        f"approved the correction of result {old.pk} after release; certificate {reissued.number} replaces {first.number}"
    )
    for obj_type, obj_id in (("analyses.result", old.pk), ("analyses.result", new.pk), ("analyses.test", test.pk),
                             ("analyses.certificate", reissued.pk)):
        assert AuditEntry.objects.filter(object_type=obj_type, object_id=str(obj_id)).exists(), obj_type
    with pytest.raises(Conflict, match="already applied"):
        post_release_correction_approve(users["qa"], proposal, password=SIGNING_PASSWORD)


@pytest.mark.parametrize("password", [None, "", "wrong password"])
def test_approval_without_the_signature_changes_nothing(users, released, password):
    proposal = post_release_correction_propose(users["analyst"], _first_replicate(released), inputs=AV_CORRECTED, reason="misread")
    before = AuditEntry.objects.count()
    with pytest.raises(InvalidInput) as refused:
        post_release_correction_approve(users["qa"], proposal, password=password)
    assert list(refused.value.fields) == ["password"]
    assert AuditEntry.objects.count() == before and released.certificates.count() == 1
    assert PostReleaseCorrection.objects.get(pk=proposal.pk).state == CorrectionState.PROPOSED


@pytest.mark.parametrize("role", ["admin", "superuser", "analyst2", "manager"])
def test_only_qa_approves_by_membership_and_no_superuser_bypasses(users, released, role):
    actor = UserFactory(username="root", is_staff=True, is_superuser=True) if role == "superuser" else users[role]
    proposal = post_release_correction_propose(users["analyst"], _first_replicate(released), inputs=AV_CORRECTED, reason="misread")
    with pytest.raises(NotAllowed):
        post_release_correction_approve(actor, proposal, password=SIGNING_PASSWORD)
    with pytest.raises(NotAllowed):
        post_release_correction_decline(actor, proposal, reason="no")
    assert released.certificates.count() == 1


def test_four_eyes_the_proposer_never_approves_even_after_joining_qa(users, released):
    proposal = post_release_correction_propose(users["analyst"], _first_replicate(released), inputs=AV_CORRECTED, reason="misread")
    users["analyst"].groups.add(Group.objects.get(name=QA_REVIEWER))  # now covering QA too
    with pytest.raises(NotAllowed, match="four-eyes"):
        post_release_correction_approve(users["analyst"], proposal, password=SIGNING_PASSWORD)


def test_qa_declines_with_a_reason_and_the_record_stays(users, released):
    proposal = post_release_correction_propose(users["analyst"], _first_replicate(released), inputs=AV_CORRECTED, reason="misread")
    declined = post_release_correction_decline(users["qa"], proposal, reason="the worksheet shows 1.30 mL")
    assert declined.state == CorrectionState.DECLINED and declined.decision_note == "the worksheet shows 1.30 mL"
    assert _first_replicate(released).version == 1 and released.certificates.count() == 1
    with pytest.raises(Conflict):
        post_release_correction_approve(users["qa"], proposal, password=SIGNING_PASSWORD)


def test_replicates_that_no_longer_agree_are_refused(users, released):
    proposal = post_release_correction_propose(users["analyst"], _first_replicate(released), inputs=AV_TYPO, reason="mass")
    assert proposal.mean_reported == "1.93"  # (3.50625 + 0.35904) / 2 = 1.932645
    with pytest.raises(Conflict, match="repeatability"):
        post_release_correction_approve(users["qa"], proposal, password=SIGNING_PASSWORD)
    assert released.certificates.count() == 1 and _first_replicate(released).version == 1


def test_a_correction_that_breaks_a_release_critical_limit_is_refused_and_changes_nothing(users):
    lot = _released_near_the_limit(users, code="L-200", av_line={})
    assert _av(lot).reported == "0.59"
    old = _first_replicate(lot)
    proposal = post_release_correction_propose(users["analyst"], old, inputs=AV_OVER, reason="titre misread: 2.25 mL")
    assert (proposal.mean_reported, proposal.verdict) == ("0.61", Verdict.OUT_OF_SPECIFICATION)  # shown before QA signs
    before = AuditEntry.objects.count()
    with pytest.raises(Conflict) as refused:
        post_release_correction_approve(users["qa"], proposal, password=SIGNING_PASSWORD)
    assert "out of specification" in refused.value.detail and "cannot be reissued" in refused.value.detail
    assert AuditEntry.objects.count() == before
    assert lot.certificates.count() == 1 and _first_replicate(lot).pk == old.pk
    assert _av(lot).verdict == Verdict.PASS
    assert PostReleaseCorrection.objects.get(pk=proposal.pk).state == CorrectionState.PROPOSED
    assert not Investigation.objects.filter(lot=lot).exists()


def test_a_non_critical_result_out_of_specification_is_applied_stated_and_investigated(users):
    lot = _released_near_the_limit(users, code="L-201", av_line={"release_critical": False})
    proposal = post_release_correction_propose(users["analyst"], _first_replicate(lot), inputs=AV_OVER, reason="titre misread")
    applied = post_release_correction_approve(users["qa"], proposal, password=SIGNING_PASSWORD)
    assert applied.verdict == Verdict.OUT_OF_SPECIFICATION
    statement = applied.certificate.content["statement_of_conformity"]
    assert statement.startswith("Conforms") and "Outside the limits but not release-critical" in statement
    investigation = Investigation.objects.get(lot=lot)
    assert investigation.state == InvestigationState.OPEN and investigation.test == _av(lot)


@pytest.mark.django_db(transaction=True)  # the counts wait for the commit
def test_the_corrected_result_and_the_investigation_it_opens_are_counted_in_the_metrics(users):
    lot = _released_near_the_limit(users, code="L-203", av_line={"release_critical": False})
    results, oos = _metric("oleotrace_results_entered_total"), _metric("oleotrace_oos_investigations_opened_total")
    proposal = post_release_correction_propose(users["analyst"], _first_replicate(lot), inputs=AV_OVER, reason="titre misread")
    post_release_correction_approve(users["qa"], proposal, password=SIGNING_PASSWORD)
    assert Investigation.objects.filter(lot=lot, state=InvestigationState.OPEN).count() == 1
    assert _metric("oleotrace_results_entered_total") == results + 1
    assert _metric("oleotrace_oos_investigations_opened_total") == oos + 1


def _metric(name: str) -> float:
    from prometheus_client import REGISTRY

    return REGISTRY.get_sample_value(name) or 0.0


def test_the_verdict_is_decided_again_by_the_lines_guard_band(users):
    """Guard band w = U (ILAC G8:09/2019): a mean inside the 0.6 limit by less than U is out of
    specification. (2.05 - 0.05) x 0.28050 = 0.561000 and (2.12 - 0.05) x 0.28050 = 0.580635 (mean
    0.5708175) pass; replicate 1 corrected to 2.18 mL gives 0.597465 and the mean 0.589050, which
    simple acceptance would pass (<= 0.6) but which lies within U of the limit."""
    lot = _released_near_the_limit(
        users, code="L-202", av_line={"decision_rule": "guard_band"},
        av_pair=({"sample_mass": "20.0", "sample_volume": "2.05", "blank_volume": "0.05"},
                 {"sample_mass": "20.0", "sample_volume": "2.12", "blank_volume": "0.05"}),
    )
    assert _av(lot).verdict == Verdict.PASS
    corrected = {"sample_mass": "20.0", "sample_volume": "2.18", "blank_volume": "0.05"}
    proposal = post_release_correction_propose(users["analyst"], _first_replicate(lot), inputs=corrected, reason="titre misread")
    assert proposal.mean_reported == "0.59" and proposal.verdict == Verdict.OUT_OF_SPECIFICATION
    with pytest.raises(Conflict, match="out of specification"):
        post_release_correction_approve(users["qa"], proposal, password=SIGNING_PASSWORD)
    assert _av(lot).verdict == Verdict.PASS and lot.certificates.count() == 1
