"""Cross-checks between methods on one sample (analyses/services/cross_checks.py): AV against FFA.

AOCS Ca 5a-40 (found, shared/references.md): AV = 1.99 x %FFA as oleic. The factor per basis is
M(KOH) x 10 / M(acid), checked here against molmass. The tolerance (10 % of the larger value, at
least 0.05 mg KOH/g) is a setting: common practice, no source.
"""
from __future__ import annotations

from decimal import Decimal

import pytest
from django.test import override_settings
from molmass import Formula

from analyses.models import Test
from analyses.services.assignments import test_assign_bulk
from analyses.services.cross_checks import CROSS_CHECK_PREFIX, FATTY_ACID_MOLAR_MASS, KOH_MOLAR_MASS, av_per_ffa
from analyses.services.lots import lot_create
from analyses.services.results import result_correct, result_record
from analyses.services.review import test_send_back
from analyses.services.samples import sample_receive, sample_register
from analyses.services.specifications import specification_approve, specification_create
from tests.analyses.lab_setup import AV_LOW, AV_LOW_TWIN, entry
from tests.factories import ProductFactory

pytestmark = pytest.mark.django_db

# AV_LOW and its twin (ISO 660 by hand, lab_setup): 0.350625 and 0.35904, mean 0.3548 mg KOH/g.
AV_PAIR = ({**AV_LOW, "titrant_concentration": "0.1"}, {**AV_LOW_TWIN, "titrant_concentration": "0.1"})
# Ca 5a-40 (found): 28.2 g with 0.1 mol/L NaOH, each mL is 0.1 % as oleic. 1.78 and 1.79 mL: mean 0.1785 %,
# x 1.986 = 0.3546 mg KOH/g: agrees with the AV.
FFA_AGREEING = tuple({"sample_mass": "28.2", "sample_volume": v, "titrant_concentration": "0.1"} for v in ("1.78", "1.79"))
# 3.00 and 3.02 mL: 0.301 % as oleic, x 1.986 = 0.598 mg KOH/g, 0.24 above the AV's 0.355: a disagreement
FFA_DISAGREEING = tuple({"sample_mass": "28.2", "sample_volume": v, "titrant_concentration": "0.1"} for v in ("3.00", "3.02"))


@pytest.mark.parametrize(("basis", "formula"), [("oleic", "C18H34O2"), ("palmitic", "C16H32O2"), ("lauric", "C12H24O2")])
def test_basis_factor_from_molar_masses_agrees_with_molmass(basis, formula):
    # the module's molar masses (IUPAC atomic weights) against the molmass library
    assert float(FATTY_ACID_MOLAR_MASS[basis]) == pytest.approx(Formula(formula).mass, rel=1e-4)
    assert float(KOH_MOLAR_MASS) == pytest.approx(Formula("KOH").mass, rel=1e-4)
    assert float(av_per_ffa(basis)) == pytest.approx(Formula("KOH").mass * 10 / Formula(formula).mass, rel=2e-4)


def test_the_oleic_factor_is_ca_5a_40s_1_99():
    assert round(av_per_ffa("oleic"), 2) == Decimal("1.99")  # AOCS Ca 5a-40 (found)


@pytest.fixture
def tests_on_one_sample(users):
    product = ProductFactory(code="XSO", name="Refined sunflower oil (invented)", oil_type="sunflowerseed", created_by=users["manager"])
    draft = specification_create(
        users["manager"], product, effective_from="2020-01-01",
        lines=[{"method": "av", "codex_oil_type": "refined"}, {"method": "ffa", "maximum": "0.3", "basis": "oleic"}],
    )
    specification_approve(users["qa"], draft)
    lot = lot_create(users["manager"], code="X-1", product=product, origin="production")
    sample = sample_receive(users["manager"], sample_register(users["manager"], lot, label="X-1-A"), condition="sealed", storage_place="shelf")
    tests = test_assign_bulk(users["manager"], list(Test.objects.filter(sample=sample)), assignee=users["analyst"])
    return {t.method_code: t for t in tests}


def enter(analyst, test, pair):
    for inputs in pair:
        result_record(analyst, test, **entry(test.method_code, inputs))
    return Test.objects.get(pk=test.pk)


def cross_warnings(test):
    return [w for w in Test.objects.get(pk=test.pk).review_warnings if w.startswith(CROSS_CHECK_PREFIX)]


def test_agreeing_av_and_ffa_give_no_warning(users, tests_on_one_sample):
    av = enter(users["analyst"], tests_on_one_sample["av"], AV_PAIR)
    ffa = enter(users["analyst"], tests_on_one_sample["ffa"], FFA_AGREEING)
    assert cross_warnings(av) == [] and cross_warnings(ffa) == []


def test_a_disagreement_warns_on_both_tests_each_naming_the_other(users, tests_on_one_sample):
    av = enter(users["analyst"], tests_on_one_sample["av"], AV_PAIR)
    assert cross_warnings(av) == []  # no FFA yet: nothing to compare
    ffa = enter(users["analyst"], tests_on_one_sample["ffa"], FFA_DISAGREEING)
    [on_ffa] = cross_warnings(ffa)
    [on_av] = cross_warnings(av)
    assert f"AV {av.reported} mg KOH/g (test {av.pk})" in on_ffa
    assert f"FFA {ffa.reported} % as oleic (test {ffa.pk})" in on_av
    for warning in (on_av, on_ffa):
        assert "Ca 5a-40" in warning and "common practice, no source" in warning
        assert "1.986" in warning  # M(KOH) x 10 / M(oleic acid)
    # the warning on the earlier test is audited
    from analyses.models import AuditEntry

    assert AuditEntry.objects.filter(object_type__icontains="test", object_id=str(av.pk), reason__icontains="cross-check").exists()


def test_a_correction_that_brings_them_together_clears_both(users, tests_on_one_sample):
    av = enter(users["analyst"], tests_on_one_sample["av"], AV_PAIR)
    ffa = enter(users["analyst"], tests_on_one_sample["ffa"], FFA_DISAGREEING)
    assert cross_warnings(av) and cross_warnings(ffa)
    for result, inputs in zip(ffa.results.order_by("replicate"), FFA_AGREEING):
        result_correct(users["analyst"], result, **entry("ffa", inputs), reason="burette misread")
    assert cross_warnings(ffa) == [] and cross_warnings(av) == []


def test_a_send_back_takes_the_warning_off_the_other_test(users, tests_on_one_sample):
    av = enter(users["analyst"], tests_on_one_sample["av"], AV_PAIR)
    ffa = enter(users["analyst"], tests_on_one_sample["ffa"], FFA_DISAGREEING)
    assert cross_warnings(av)
    test_send_back(users["analyst2"], ffa, reason="titrant doubtful")
    assert cross_warnings(av) == []
    assert Test.objects.get(pk=ffa.pk).review_warnings == []


@override_settings(CROSS_CHECK_AV_FFA_RELATIVE=0.9)
def test_the_tolerance_is_a_setting(users, tests_on_one_sample):
    # 0.24 mg KOH/g apart is within 90 % of 0.598
    enter(users["analyst"], tests_on_one_sample["av"], AV_PAIR)
    ffa = enter(users["analyst"], tests_on_one_sample["ffa"], FFA_DISAGREEING)
    assert cross_warnings(ffa) == []
