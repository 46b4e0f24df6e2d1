"""Review warnings on tests (analyses/services/review_warnings.py): worked out when the last
replicate arrives, shown on the test and on the lot's readiness, never a block.

Peroxide value facts (see plugins/peroxide.py): ISO 3960 covers 0-30 meq/kg (found); Commission
Regulation (EEC) No 2568/91 Annex III prescribes a blank with every series (found).
"""
from __future__ import annotations

import pytest

from analyses.models import Result, Test
from analyses.selectors.lots import lot_readiness
from analyses.services.results import result_correct, result_record
from analyses.services.review import test_accept, test_send_back
from tests.analyses.lab_setup import AV_LOW, AV_LOW_TWIN, PV_LOW, PV_LOW_TWIN, enter_duplicates, entry_for

pytestmark = pytest.mark.django_db

# 12.5 mL and 12.7 mL of 0.002 mol/L on 5.0 g with no blank: 5.0 and 5.08 meq O2/kg (Cd 8b-90 formula by hand)
NO_BLANK = {**{k: v for k, v in PV_LOW.items() if k != "blank_volume"}, "blank_not_run": "true"}
NO_BLANK_TWIN = {**{k: v for k, v in PV_LOW_TWIN.items() if k != "blank_volume"}, "blank_not_run": "true"}
# (15.55 - 0.05) mL and (15.65 - 0.05) mL of 0.01 mol/L on 5.0 g: 31.0 and 31.2, mean 31.1 meq O2/kg
ABOVE_ISO_3960 = {"sample_mass": "5.0", "sample_volume": "15.55", "blank_volume": "0.05", "titrant_concentration": "0.01"}
ABOVE_ISO_3960_TWIN = {**ABOVE_ISO_3960, "sample_volume": "15.65"}
# (14.55 - 0.05) mL: 29.0 meq O2/kg, inside ISO 3960's range
INSIDE_ISO_3960 = {**ABOVE_ISO_3960, "sample_volume": "14.55"}


def by_method(assigned_tests) -> dict[str, Test]:
    return {t.method_code: t for t in assigned_tests}


def test_a_blank_not_run_warns_on_the_test_and_the_readiness_but_does_not_block(users, assigned_tests, lot):
    tests = by_method(assigned_tests)
    enter_duplicates(users["analyst"], tests["av"], AV_LOW, AV_LOW_TWIN)
    pv = enter_duplicates(users["analyst"], tests["pv"], NO_BLANK, NO_BLANK_TWIN)
    assert pv.verdict == "pass"
    assert len(pv.review_warnings) == 1
    assert pv.review_warnings[0].startswith("replicates 1, 2: no blank was run")
    assert "2568/91" in pv.review_warnings[0]
    assert by_method(Test.objects.filter(pk__in=[t.pk for t in assigned_tests]))["av"].review_warnings == []

    for test in tests.values():
        test_accept(users["analyst2"], test)
    readiness = lot_readiness(lot)
    assert readiness["releasable"] is True and readiness["missing"] == []
    assert readiness["warnings"] == [f"sample L-100-A: pv test {pv.pk}: {pv.review_warnings[0]}"]


def test_a_result_outside_the_scope_warns_and_is_judged_as_usual(users, assigned_tests):
    pv = enter_duplicates(users["analyst"], by_method(assigned_tests)["pv"], ABOVE_ISO_3960, ABOVE_ISO_3960_TWIN)
    assert pv.reported == "31.1"
    assert pv.verdict == "oos"  # Codex refined-oil limit 10 (CXS 210 appendix, found)
    assert len(pv.review_warnings) == 1
    assert "31.1 meq O2/kg" in pv.review_warnings[0] and "ISO 3960" in pv.review_warnings[0]


def test_a_correction_back_into_scope_clears_the_warning_and_a_send_back_clears_all(users, assigned_tests):
    pv = enter_duplicates(users["analyst"], by_method(assigned_tests)["pv"], ABOVE_ISO_3960, INSIDE_ISO_3960)
    assert pv.reported == "30.0" and pv.review_warnings == []  # mean of 31.0 and 29.0 is inside 0-30
    second = pv.results.get(replicate=2)
    result_correct(users["analyst"], second, **entry_for(pv, ABOVE_ISO_3960_TWIN), reason="titre misread")
    pv.refresh_from_db()
    assert pv.reported == "31.1" and len(pv.review_warnings) == 1
    test_send_back(users["analyst2"], pv, reason="retest the pair")
    pv.refresh_from_db()
    assert pv.review_warnings == []


def test_a_replicate_entered_under_older_checks_is_named_not_refused(users, assigned_tests):
    pv = by_method(assigned_tests)["pv"]
    first = result_record(users["analyst"], pv, **entry_for(pv, PV_LOW))
    # as a result entered before the blank became required would have been stored
    Result.objects.filter(pk=first.pk).update(inputs={k: v for k, v in PV_LOW.items() if k != "blank_volume"})
    result_record(users["analyst"], pv, **entry_for(pv, PV_LOW_TWIN))
    pv.refresh_from_db()
    assert len(pv.review_warnings) == 1
    assert pv.review_warnings[0].startswith("replicate 1: its inputs no longer pass method pv's checks (blank_volume:")


def test_an_implausible_input_warns_by_replicate_and_a_correction_clears_it(users, assigned_tests):
    pv = by_method(assigned_tests)["pv"]
    # 2.5 g: outside AOCS Cd 8b-90's 5.00 ± 0.05 g (found); 12.45 mL x 0.002 mol/L x 1000 / 2.5 g = 9.96 meq O2/kg
    half = {**PV_LOW, "sample_mass": "2.5"}
    enter_duplicates(users["analyst"], pv, half, PV_LOW_TWIN)
    pv.refresh_from_db()
    (warning,) = pv.review_warnings
    assert warning.startswith("replicate 1: sample_mass 2.5 g is below its plausible minimum 4.95 g")
    first = Result.objects.get(test=pv, replicate=1, status="current")
    result_correct(users["analyst"], first, **entry_for(pv, PV_LOW), reason="portion misread: 5.0 g")
    pv.refresh_from_db()
    assert pv.review_warnings == []
