"""TOTOX as a specification parameter of the sample, worked out from its PV and AnV test means
(issue 11; analyses/services/derived_tests.py). TOTOX = 2 PV + AnV (found, shared/references.md).

PV by AOCS Cd 8b-90 (lab_setup): 4.98 and 5.06 meq O2/kg, mean 5.02. AnV by AOCS Cd 18-90 with
25 mL: 25 x (1.2 x 0.300 - 0.080) / 2.0 g = 3.5 (both replicates). TOTOX = 2 x 5.02 + 3.5 = 13.54.
The TOTOX limit 26 on the line is invented for the test."""
from __future__ import annotations

from decimal import Decimal

import pytest

from analyses.errors import Conflict
from analyses.models import Result, ResultStatus, Test, TestState
from analyses.services.assignments import test_assign_bulk
from analyses.services.lots import lot_create
from analyses.services.results import result_record
from analyses.services.review import test_accept, test_send_back
from analyses.services.samples import sample_receive, sample_register
from analyses.services.specifications import specification_approve, specification_create
from tests.analyses.lab_setup import PV_LOW, PV_LOW_TWIN, PV_TRACE, entry
from tests.factories import ProductFactory

pytestmark = pytest.mark.django_db

ANV_INPUTS = {"sample_mass": "2.0", "absorbance_unreacted": "0.080", "absorbance_reacted": "0.300"}


@pytest.fixture
def tests_(users):
    return _totox_sample(users, "TOX", {"method": "totox", "maximum": "26"})


def _totox_sample(users, code: str, totox_line: dict) -> dict[str, Test]:
    """A received sample of lot ``code``-1 of an invented refined rapeseed oil whose specification
    has PV (Codex refined-oil default), AnV (at most 20) and ``totox_line``; its tests by method,
    PV and AnV assigned to "analyst"."""
    product = ProductFactory(code=code, name="Refined rapeseed oil (invented)", oil_type="rapeseed", created_by=users["manager"])
    draft = specification_create(users["manager"], product, effective_from="2020-01-01", lines=[
        {"method": "pv", "codex_oil_type": "refined"}, {"method": "anv", "maximum": "20"}, totox_line,
    ])
    specification_approve(users["qa"], draft)
    lot = lot_create(users["manager"], code=f"{code}-1", product=product, origin="production")
    sample = sample_receive(users["manager"], sample_register(users["manager"], lot, label=f"{code}-1-A"), condition="sealed", storage_place="A")
    tests = {t.method_code: t for t in Test.objects.filter(sample=sample)}
    test_assign_bulk(users["manager"], [tests["pv"], tests["anv"]], assignee=users["analyst"])
    return tests


def _fresh(test: Test) -> Test:
    return Test.objects.get(pk=test.pk)


def _enter_sources(users, tests):
    for inputs in (PV_LOW, PV_LOW_TWIN):
        result_record(users["analyst"], tests["pv"], inputs=inputs, **PV_TRACE)
    for _ in range(2):
        result_record(users["analyst"], tests["anv"], **entry("anv", ANV_INPUTS))


def test_totox_is_worked_out_once_both_means_stand(users, tests_):
    result_record(users["analyst"], tests_["pv"], inputs=PV_LOW, **PV_TRACE)
    result_record(users["analyst"], tests_["pv"], inputs=PV_LOW_TWIN, **PV_TRACE)
    assert _fresh(tests_["totox"]).state == TestState.PENDING  # AnV not in yet
    for _ in range(2):
        result_record(users["analyst"], tests_["anv"], **entry("anv", ANV_INPUTS))
    totox = _fresh(tests_["totox"])
    assert totox.state == TestState.RESULT_ENTERED
    assert Decimal(totox.value_exact) == Decimal("13.54") and totox.reported == "13.5" and totox.verdict == "pass"
    result = Result.objects.get(test=totox, status=ResultStatus.CURRENT)
    # the source means exactly as their tests keep them
    assert {name: Decimal(value) for name, value in result.inputs.items()} == {"peroxide_value": Decimal("5.02"), "anisidine_value": Decimal("3.5")}
    assert result.inputs["peroxide_value"] == _fresh(tests_["pv"]).value_exact


def test_totox_is_never_entered_by_hand(users, tests_):
    test_assign_bulk(users["manager"], [tests_["totox"]], assignee=users["analyst"])
    with pytest.raises(Conflict, match="worked out from the sample's pv and anv results"):
        result_record(users["analyst"], tests_["totox"], inputs={"peroxide_value": "1", "anisidine_value": "1"})


def test_a_source_sent_back_withdraws_totox_and_a_new_mean_brings_it_back(users, tests_):
    _enter_sources(users, tests_)
    test_send_back(users["analyst2"], _fresh(tests_["pv"]), reason="titre misread")
    totox = _fresh(tests_["totox"])
    assert totox.state == TestState.PENDING and totox.value_exact == "" and totox.verdict == ""
    assert Result.objects.get(test=totox).status == ResultStatus.INVALIDATED
    # the retest's readings: PV 4.98 twice -> TOTOX 2 x 4.98 + 3.5 = 13.46
    for _ in range(2):
        result_record(users["analyst"], tests_["pv"], inputs=PV_LOW, **PV_TRACE)
    totox = _fresh(tests_["totox"])
    assert totox.state == TestState.RESULT_ENTERED and Decimal(totox.value_exact) == Decimal("13.46")


def test_totox_is_accepted_after_its_sources_and_never_sent_back(users, tests_):
    _enter_sources(users, tests_)
    with pytest.raises(Conflict, match="accept those first"):
        test_accept(users["analyst2"], _fresh(tests_["totox"]))
    with pytest.raises(Conflict, match="send those back instead"):
        test_send_back(users["analyst2"], _fresh(tests_["totox"]), reason="x")
    test_accept(users["analyst2"], _fresh(tests_["pv"]))
    test_accept(users["analyst2"], _fresh(tests_["anv"]))
    assert test_accept(users["analyst2"], _fresh(tests_["totox"])).state == TestState.ACCEPTED


def test_totox_budget_carries_over_the_source_means_budgets(users, tests_):
    from uncertainties import ufloat

    from analyses.models import ResultUncertainty, TestUncertainty

    _enter_sources(users, tests_)
    pv, anv = (TestUncertainty.objects.get(test=tests_[code]) for code in ("pv", "anv"))
    totox = Result.objects.get(test=tests_["totox"], status=ResultStatus.CURRENT)
    budget = ResultUncertainty.objects.get(result=totox)
    # GUM 5.1.2, the law of propagation for the linear model 2 PV + AnV, worked by the
    # uncertainties package (PyPI) from the two stored means' u_c
    expected = (2 * ufloat(5.02, pv.combined) + ufloat(3.5, anv.combined)).std_dev
    assert budget.combined == pytest.approx(expected, rel=1e-9)
    terms = {term["name"]: term for term in budget.budget["terms"]}
    assert terms["peroxide_value"]["u"] == pytest.approx(pv.combined) and f"pv test {tests_['pv'].pk}" in terms["peroxide_value"]["basis"]
    assert terms["anisidine_value"]["u"] == pytest.approx(anv.combined) and f"anv test {tests_['anv'].pk}" in terms["anisidine_value"]["basis"]
    # not the 1 % defaults the method falls back on without stored budgets
    assert terms["peroxide_value"]["u"] != pytest.approx(0.0502)


def test_totox_follows_a_source_budget_that_changed_while_its_mean_did_not(users, tests_):
    """A PV replicate corrected to the same reading on a coarser burette keeps the PV mean
    (5.02) but widens its budget; TOTOX takes the new budget in a new version."""
    from uncertainties import ufloat

    from analyses.models import ResultUncertainty, TestUncertainty
    from analyses.services.results import result_correct
    from tests.factories import usable_instrument

    _enter_sources(users, tests_)
    first = Result.objects.get(test=tests_["totox"], status=ResultStatus.CURRENT)
    narrow = TestUncertainty.objects.get(test=tests_["pv"]).combined
    # invented: a burette whose calibration allows ten times the bench burette's tolerance
    usable_instrument("BUR-COARSE", "burette", by=users["manager"], tolerance="0.3")
    replicate = Result.objects.get(test=tests_["pv"], replicate=1, status=ResultStatus.CURRENT)
    result_correct(users["analyst"], replicate, inputs=PV_LOW, reason="read again on the coarse burette",
                   titrant_lot=PV_TRACE["titrant_lot"], instruments=["BAL-BENCH", "BUR-COARSE"])
    pv = TestUncertainty.objects.get(test=tests_["pv"])
    assert Decimal(_fresh(tests_["pv"]).value_exact) == Decimal("5.02") and pv.combined > narrow  # same mean, wider budget

    totox = Result.objects.get(test=tests_["totox"], status=ResultStatus.CURRENT)
    assert totox.version == first.version + 1 and totox.supersedes_id == first.pk
    assert totox.inputs == first.inputs and "read again on the coarse burette" in totox.correction_reason
    anv = TestUncertainty.objects.get(test=tests_["anv"])
    # GUM 5.1.2 for 2 PV + AnV, worked by the uncertainties package (PyPI) from the new PV u_c
    expected = (2 * ufloat(5.02, pv.combined) + ufloat(3.5, anv.combined)).std_dev
    assert ResultUncertainty.objects.get(result=totox).combined == pytest.approx(expected, rel=1e-9)
    assert TestUncertainty.objects.get(test=tests_["totox"]).combined == pytest.approx(expected, rel=1e-9)


def test_totox_is_left_as_it_is_when_its_sources_did_not_change(users, tests_):
    from analyses.services.derived_tests import derived_tests_refresh

    _enter_sources(users, tests_)
    first = Result.objects.get(test=tests_["totox"], status=ResultStatus.CURRENT)
    derived_tests_refresh(users["analyst"], [_fresh(tests_["pv"]), _fresh(tests_["anv"])], reason="nothing changed")
    assert list(Result.objects.filter(test=tests_["totox"]).values_list("pk", flat=True)) == [first.pk]
    assert Result.objects.get(pk=first.pk).status == ResultStatus.CURRENT


def test_a_totox_result_is_never_corrected_by_hand(users, tests_):
    from analyses.services.results import result_correct

    test_assign_bulk(users["manager"], [tests_["totox"]], assignee=users["analyst"])
    _enter_sources(users, tests_)
    current = Result.objects.get(test=tests_["totox"], status=ResultStatus.CURRENT)
    with pytest.raises(Conflict, match="worked out from the sample's pv and anv results; correct those instead"):
        result_correct(users["analyst"], current, inputs={"peroxide_value": "1", "anisidine_value": "1"}, reason="hand edit")
    assert Decimal(_fresh(tests_["totox"]).value_exact) == Decimal("13.54")


def test_the_audit_of_a_totox_result_records_the_verdict_its_line_decided(users):
    """A guard band on the TOTOX line turns 13.54 with its U into out-of-specification against
    a maximum of 13.6 (the limit is invented for the test); the result's audit entry must
    record that verdict, not the simple comparison's pass."""
    from analyses.models import AuditEntry

    tests = _totox_sample(users, "TGB", {"method": "totox", "maximum": "13.6", "decision_rule": "guard_band"})
    _enter_sources(users, tests)
    result = Result.objects.get(test=tests["totox"], status=ResultStatus.CURRENT)
    assert result.verdict == "oos"
    [entry] = AuditEntry.objects.filter(object_type="analyses.result", object_id=str(result.pk), action="create")
    assert entry.changes["verdict"] == [None, result.verdict]


def test_a_released_totox_takes_no_post_release_correction(users, tests_):
    from analyses.services.lots import lot_release
    from analyses.services.post_release_corrections import post_release_correction_propose
    from tests.factories import SIGNING_PASSWORD

    test_assign_bulk(users["manager"], [tests_["totox"]], assignee=users["analyst"])
    _enter_sources(users, tests_)
    for code in ("pv", "anv", "totox"):
        test_accept(users["analyst2"], _fresh(tests_[code]))
    lot_release(users["qa"], _fresh(tests_["pv"]).sample.lot, password=SIGNING_PASSWORD)
    current = Result.objects.get(test=tests_["totox"], status=ResultStatus.CURRENT)
    with pytest.raises(Conflict, match="correct those instead"):
        post_release_correction_propose(users["analyst"], current, inputs={"peroxide_value": "1", "anisidine_value": "1"}, reason="x")


# PV by AOCS Cd 8b-90 (lab_setup formula): (30.05 - 0.05) x 0.002 x 1000 / 5.0 = 12.0 and
# (30.15 - 0.05) x ... = 12.04, mean 12.02: above the Codex refined-oil limit of 10 meq/kg
PV_HIGH = {"sample_mass": "5.0", "sample_volume": "30.05", "blank_volume": "0.05"}
PV_HIGH_TWIN = {"sample_mass": "5.0", "sample_volume": "30.15", "blank_volume": "0.05"}


def _accept_all(users, tests):
    for code in ("pv", "anv", "totox"):
        test_accept(users["analyst2"], _fresh(tests[code]))


def test_a_source_found_in_lab_error_takes_the_accepted_totox_with_it(users, tests_):
    """PV 12.02 is OOS; QA finds a lab error. The accepted TOTOX (2 x 12.02 + 3.5 = 27.54) stood
    on the invalidated PV: it is retested too, and its retest is worked out from the PV retest
    (2 x 5.02 + 3.5 = 13.54)."""
    from analyses.models import Conclusion, Investigation
    from analyses.services.investigations import investigation_close

    for inputs in (PV_HIGH, PV_HIGH_TWIN):
        result_record(users["analyst"], tests_["pv"], inputs=inputs, **PV_TRACE)
    for _ in range(2):
        result_record(users["analyst"], tests_["anv"], **entry("anv", ANV_INPUTS))
    assert Decimal(_fresh(tests_["totox"]).value_exact) == Decimal("27.54")
    _accept_all(users, tests_)
    closed = investigation_close(users["qa"], Investigation.objects.get(test=tests_["pv"]), conclusion=Conclusion.LAB_ERROR,
                                 findings="burette misread")
    old_totox = _fresh(tests_["totox"])
    assert old_totox.state == TestState.INVALIDATED
    assert Result.objects.get(test=old_totox).status == ResultStatus.INVALIDATED
    totox_retest = Test.objects.get(retest_of=old_totox)
    assert totox_retest.state == TestState.PENDING and f"totox test {old_totox.pk} (retest {totox_retest.pk})" in closed.effect
    # TOTOX 27.54 was out of its maximum of 26 too: its investigation closes with the PV's
    totox_investigation = Investigation.objects.get(test=old_totox)
    assert totox_investigation.conclusion == Conclusion.LAB_ERROR and totox_investigation.retest == totox_retest
    assert f"pv test {tests_['pv'].pk}, found in lab error by investigation {closed.pk}: burette misread" in totox_investigation.findings

    pv_retest = Test.objects.get(retest_of=tests_["pv"])
    test_assign_bulk(users["manager"], [pv_retest], assignee=users["analyst"])
    for inputs in (PV_LOW, PV_LOW_TWIN):
        result_record(users["analyst"], pv_retest, inputs=inputs, **PV_TRACE)
    totox_retest = _fresh(totox_retest)
    assert totox_retest.state == TestState.RESULT_ENTERED and Decimal(totox_retest.value_exact) == Decimal("13.54")
    assert Decimal(_fresh(tests_["anv"]).value_exact) == Decimal("3.5") and _fresh(tests_["anv"]).state == TestState.ACCEPTED
    assert not Investigation.objects.filter(test__sample=pv_retest.sample, state="open").exists()


def test_a_totox_found_in_lab_error_is_retested_with_its_sources(users):
    """TOTOX 13.54 above an invented maximum of 10 opens an investigation; a lab error in TOTOX
    is one in the PV or AnV it is worked out from, so both are retested with it, and the TOTOX
    retest is worked out from their retests instead of waiting forever."""
    from analyses.models import Conclusion, Investigation
    from analyses.services.investigations import investigation_close

    tests = _totox_sample(users, "TLE", {"method": "totox", "maximum": "10"})
    _enter_sources(users, tests)
    _accept_all(users, tests)
    investigation_close(users["qa"], Investigation.objects.get(test=tests["totox"]), conclusion=Conclusion.LAB_ERROR,
                        findings="anisidine reagent found contaminated")
    assert {code: _fresh(tests[code]).state for code in tests} == {code: TestState.INVALIDATED for code in tests}
    retests = {code: Test.objects.get(retest_of=tests[code]) for code in tests}
    assert all(retest.state == TestState.PENDING for retest in retests.values())

    test_assign_bulk(users["manager"], [retests["pv"], retests["anv"]], assignee=users["analyst"])
    _enter_sources(users, retests)
    totox = _fresh(retests["totox"])
    assert totox.state == TestState.RESULT_ENTERED and Decimal(totox.value_exact) == Decimal("13.54")


def test_a_source_corrected_after_release_reissues_the_certificate_with_the_new_totox(users, tests_):
    """PV replicate 1 corrected after release from 12.5 mL to 13.0 mL: PV (13.0 - 0.05) x 0.002 x
    1000 / 5.0 = 5.18, mean (5.18 + 5.06) / 2 = 5.12 (AOCS Cd 8b-90 formula, lab_setup), so TOTOX
    = 2 x 5.12 + 3.5 = 13.74, reported 13.7 (definition, shared/references.md)."""
    from analyses.models import AuditEntry, Certificate
    from analyses.services.lots import lot_release
    from analyses.services.post_release_corrections import post_release_correction_approve, post_release_correction_propose
    from tests.factories import SIGNING_PASSWORD

    _enter_sources(users, tests_)
    _accept_all(users, tests_)
    lot = _fresh(tests_["pv"]).sample.lot
    lot_release(users["qa"], lot, password=SIGNING_PASSWORD)
    first = Result.objects.get(test=tests_["totox"], status=ResultStatus.CURRENT)
    replicate = Result.objects.get(test=tests_["pv"], replicate=1, status=ResultStatus.CURRENT)
    proposal = post_release_correction_propose(
        users["analyst"], replicate, inputs={**PV_LOW, "sample_volume": "13.0"}, reason="titre misread: 13.0 not 12.5"
    )
    assert Result.objects.get(test=tests_["totox"], status=ResultStatus.CURRENT) == first  # the preview was rolled back
    # the proposal shows QA what the TOTOX would become, as the API gives it
    from analyses.api.serializers.post_release import PostReleaseCorrectionSerializer

    expected = [{"test": tests_["totox"].pk, "method_code": "totox", "reported": "13.7", "unit": first.unit, "verdict": "pass"}]
    assert proposal.derived == expected and PostReleaseCorrectionSerializer(proposal).data["derived"] == expected
    post_release_correction_approve(users["qa"], proposal, password=SIGNING_PASSWORD)

    totox = _fresh(tests_["totox"])
    assert totox.state == TestState.ACCEPTED and Decimal(totox.value_exact) == Decimal("13.74") and totox.reported == "13.7"
    renewed = Result.objects.get(test=totox, status=ResultStatus.CURRENT)
    assert renewed.supersedes == first and "corrected after release" in renewed.correction_reason
    # worked out from the data the analyst corrected, not entered by QA; every change audited under QA
    assert renewed.entered_by == users["analyst"]
    first.refresh_from_db()
    assert first.status == ResultStatus.SUPERSEDED and "corrected after release" in first.status_reason
    superseded = AuditEntry.objects.get(object_type="analyses.result", object_id=str(first.pk), action="transition")
    assert superseded.changes == {"status": ["current", "superseded"]} and superseded.actor == users["qa"]
    assert AuditEntry.objects.get(object_type="analyses.result", object_id=str(renewed.pk), action="create").actor == users["qa"]
    certificate = Certificate.objects.filter(lot=lot).order_by("-version").first()
    shown = {row["method"]: row["reported"] for row in certificate.content["results"]}
    assert certificate.version == 2 and shown["pv"] == "5.1" and shown["totox"] == "13.7"


def test_a_correction_after_release_that_puts_a_critical_totox_out_is_refused(users):
    """TOTOX 2 x 5.12 + 3.5 = 13.74 against an invented release-critical maximum of 13.6: the
    correction of the PV would make the certificate state a conformity that no longer holds."""
    from analyses.errors import Conflict as Refused
    from analyses.services.lots import lot_release
    from analyses.services.post_release_corrections import post_release_correction_approve, post_release_correction_propose
    from tests.factories import SIGNING_PASSWORD

    tests = _totox_sample(users, "TPR", {"method": "totox", "maximum": "13.6"})
    lot = tests["pv"].sample.lot
    _enter_sources(users, tests)
    _accept_all(users, tests)
    lot_release(users["qa"], lot, password=SIGNING_PASSWORD)
    replicate = Result.objects.get(test=tests["pv"], replicate=1, status=ResultStatus.CURRENT)
    proposal = post_release_correction_propose(users["analyst"], replicate, inputs={**PV_LOW, "sample_volume": "13.0"}, reason="typo")
    with pytest.raises(Refused, match="totox result 13.7 .* is out of specification"):
        post_release_correction_approve(users["qa"], proposal, password=SIGNING_PASSWORD)
    assert Decimal(_fresh(tests["totox"]).value_exact) == Decimal("13.54") and Decimal(_fresh(tests["pv"]).value_exact) == Decimal("5.02")


def test_a_totox_lab_error_waits_for_a_sources_own_investigation(users, tests_):
    """PV 12.02 is out of specification with its own investigation; QA may not conclude a lab
    error on the TOTOX (2 x 12.02 + 3.5 = 27.54, above 26) that would throw the PV out with it:
    the PV's investigation is concluded first. Nothing is written."""
    from analyses.models import Conclusion, Investigation
    from analyses.services.investigations import investigation_close

    for inputs in (PV_HIGH, PV_HIGH_TWIN):
        result_record(users["analyst"], tests_["pv"], inputs=inputs, **PV_TRACE)
    for _ in range(2):
        result_record(users["analyst"], tests_["anv"], **entry("anv", ANV_INPUTS))
    _accept_all(users, tests_)
    pv_investigation = Investigation.objects.get(test=tests_["pv"])
    with pytest.raises(Conflict, match=f"has its own open investigation {pv_investigation.pk}; conclude that one first"):
        investigation_close(users["qa"], Investigation.objects.get(test=tests_["totox"]), conclusion=Conclusion.LAB_ERROR,
                            findings="x")
    assert {code: _fresh(tests_[code]).state for code in tests_} == {code: TestState.ACCEPTED for code in tests_}
    assert Investigation.objects.filter(state="open").count() == 2
