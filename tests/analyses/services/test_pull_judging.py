"""Stability pulls are judged against their study's acceptance limits; a failed pull raises the
study's alert and opens no OOS investigation, before or after the lot's release."""
from __future__ import annotations

import pytest
from django.utils import timezone

from analyses.models import Alert, AlertSource, Investigation, LotState, PullPoint, Test, TestState, Verdict
from analyses.services.assignments import test_assign_bulk
from analyses.services.lots import lot_release
from analyses.services.review import test_accept
from analyses.services.stability import stability_pulls_schedule, stability_study_create, stability_study_evaluate
from tests.analyses.lab_setup import AV_HIGH, AV_HIGH_TWIN, AV_LOW, AV_LOW_TWIN, enter_duplicates, enter_passing
from tests.factories import SIGNING_PASSWORD

pytestmark = pytest.mark.django_db


def av_pull(users, lot, *, maximum: float) -> Test:
    """A study on ``lot`` whose AV limit is ``maximum``, its pull at 0 months taken today, the
    AV test assigned to "analyst"."""
    today = timezone.localdate()
    stability_study_create(
        users["manager"], code=f"STAB-{lot.code}", title="AV only", product=lot.product_id, lots=[lot.pk],
        started_on=today, storage_temperature_c=25, claimed_shelf_life_months=12,
        conditions=[{"temperature_c": 40, "light": "dark"}], pull_points=[{"offset": 0, "unit": "months"}],
        attributes=[{"method_code": "av", "maximum": maximum}],
    )
    assert stability_pulls_schedule(today).pulls_taken == 1
    test = Test.objects.get(sample__pull_point__isnull=False)
    return test_assign_bulk(users["manager"], [test], assignee=users["analyst"])[0]


def released(users, lot, assigned_tests):
    for test in enter_passing(users["analyst"], assigned_tests):
        test_accept(users["analyst2"], test)
    lot_release(users["qa"], lot, password=SIGNING_PASSWORD)
    lot.refresh_from_db()
    return lot


def test_a_pull_within_the_studys_limit_passes_though_beyond_the_release_specification(users, lot):
    # AV 0.687 mg KOH/g (lab_setup: (2.50 - 0.05) x 0.1 x 56.1 / 20.0, worked by hand) is above the
    # specification's 0.6 (Codex CXS 210 refined oils, found) and below this study's 0.8
    test = enter_duplicates(users["analyst"], av_pull(users, lot, maximum=0.8), AV_HIGH, AV_HIGH_TWIN)
    assert test.verdict == Verdict.PASS
    assert set(test.results.values_list("verdict", flat=True)) == {Verdict.PASS}
    test_accept(users["analyst2"], test)
    assert not Investigation.objects.exists() and not Alert.objects.exists()


def test_a_pull_beyond_the_studys_limit_raises_the_study_alert_and_opens_no_investigation(users, lot):
    # AV 0.35 mg KOH/g (lab_setup's AV_LOW, the plugin's worked example) passes the specification's
    # 0.6 but not a study limit of 0.3
    test = enter_duplicates(users["analyst"], av_pull(users, lot, maximum=0.3), AV_LOW, AV_LOW_TWIN)
    assert test.verdict == Verdict.OUT_OF_SPECIFICATION
    test_accept(users["analyst2"], test)
    assert Test.objects.get(pk=test.pk).state == TestState.ACCEPTED
    assert not Investigation.objects.exists()
    alert = Alert.objects.get()
    pull = PullPoint.objects.get(sample_id=test.sample_id)
    assert (alert.source, alert.rule, alert.study_id, alert.lot_id) == (AlertSource.STABILITY, "pull_out_of_limit", pull.study_id, lot.pk)
    assert "at most 0.3" in alert.message and "40 °C" in alert.message
    assert alert.points[0]["test_id"] == test.pk
    # the evaluation finds the same pull beyond its limit: the same episode, not a second alert
    stability_study_evaluate(pull.study_id)
    assert Alert.objects.filter(rule="pull_out_of_limit").count() == 1


def test_a_failed_pull_of_a_released_lot_leaves_the_lot_released_and_opens_nothing(users, lot, assigned_tests):
    lot = released(users, lot, assigned_tests)
    test = enter_duplicates(users["analyst"], av_pull(users, lot, maximum=0.6), AV_HIGH, AV_HIGH_TWIN)
    test_accept(users["analyst2"], test)
    lot.refresh_from_db()
    assert lot.state == LotState.RELEASED and not lot.under_investigation
    assert not Investigation.objects.exists()
    assert Alert.objects.get().rule == "pull_out_of_limit"


def test_a_failed_pull_does_not_block_the_release_of_an_open_lot(users, lot, assigned_tests):
    test = enter_duplicates(users["analyst"], av_pull(users, lot, maximum=0.6), AV_HIGH, AV_HIGH_TWIN)
    test_accept(users["analyst2"], test)
    assert released(users, lot, assigned_tests).state == LotState.RELEASED


def test_the_evaluation_judges_a_pull_on_the_exact_value_its_verdict_used(users, lot):
    """A titre of 1.3000000000000000001 mL gives AV 0.3506250000000000000280..., whose float is
    0.350625 exactly the study's limit (lab_setup's ISO 660 formula, worked by hand). The
    pull's verdict is decided on the exact value: beyond the limit; the evaluation must agree,
    not find the float at the limit."""
    from decimal import Decimal

    from analyses.selectors.stability import study_results
    from analyses.services.stability_evaluation import _beyond
    from plugins.contract import float_as_decimal

    just_above = {**AV_LOW, "sample_volume": "1.3000000000000000001"}
    test = enter_duplicates(users["analyst"], av_pull(users, lot, maximum=0.350625), just_above, just_above)
    assert test.verdict == Verdict.OUT_OF_SPECIFICATION
    test_accept(users["analyst2"], test)
    pull = PullPoint.objects.select_related("study").get(sample_id=test.sample_id)
    [row] = list(study_results(pull.study).itertuples(index=False))
    attribute = pull.study.attributes.get(method_code="av")
    assert Decimal(row.value_exact) > Decimal("0.350625") and float_as_decimal(row.value) == Decimal("0.350625")
    assert _beyond(row.value_exact, row.value, attribute)
