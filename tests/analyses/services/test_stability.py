"""Stability studies: the protocol, pulls taken once when due, overdue flags, evaluation."""
import datetime as dt

import numpy as np
import pytest
from scipy import optimize, stats

from analyses.errors import InvalidInput, NotAllowed
from analyses.models import Alert, PullPoint, Sample, SampleKind, StabilityStudy, Test, TestState
from analyses.services.stability import (
    DAYS_PER_MONTH,
    pull_timing,
    stability_pulls_schedule,
    stability_study_close,
    stability_study_create,
    stability_study_evaluate,
)
from tests.factories import SampleFactory, SpecificationLineFactory, TestFactory

R = 8.314462618  # J/(mol K), CODATA 2018 (exact by definition of k_B and N_A)
TODAY = dt.date(2026, 6, 15)


def protocol(lot, **overrides):
    fields = dict(
        code="STAB-RSO-1", title="Refined soybean oil, 12 months", product=lot.product_id, lots=[lot.pk],
        started_on=TODAY - dt.timedelta(days=40), storage_temperature_c=25, claimed_shelf_life_months=12,
        conditions=[{"temperature_c": 25, "light": "dark"}, {"temperature_c": 40, "light": "dark"}],
        pull_points=[{"offset": 0, "unit": "months"}, {"offset": 1, "unit": "months"}, {"offset": 2, "unit": "months"}],
        attributes=[{"method_code": "pv", "maximum": 10}, {"method_code": "av", "maximum": 0.6}],
    )
    return fields | overrides


def test_create_makes_one_pull_per_condition_lot_and_time(users, lot):
    study = stability_study_create(users["manager"], **protocol(lot))
    pulls = PullPoint.objects.filter(study=study)
    assert pulls.count() == 2 * 1 * 3
    one_month = pulls.get(condition__temperature_c=25, offset=1)
    assert one_month.due_on == dt.date(2026, 6, 6)  # 2026-05-06 + 1 calendar month
    assert one_month.elapsed_months == 1.0


def test_pull_timing_in_days_uses_the_mean_gregorian_month():
    due, months = pull_timing(dt.date(2026, 1, 1), 90, "days")
    assert due == dt.date(2026, 4, 1)
    assert months == pytest.approx(90 / (365.25 / 12))  # 365.25 / 12 = 30.4375 days per month
    assert DAYS_PER_MONTH == 30.4375


@pytest.mark.parametrize(
    "override, field",
    [
        ({"conditions": []}, "conditions"),
        ({"conditions": [{"temperature_c": "warm"}]}, "conditions.0.temperature_c"),
        ({"conditions": [{"temperature_c": 25, "light": "dim"}]}, "conditions.0.light"),
        ({"pull_points": [{"offset": -1}]}, "pull_points.0.offset"),
        ({"pull_points": [{"offset": 1, "unit": "weeks"}]}, "pull_points.0.unit"),
        ({"attributes": [{"method_code": "xx", "maximum": 1}]}, "attributes.0.method_code"),
        ({"attributes": [{"method_code": "pv"}]}, "attributes.0"),
        ({"lots": [999999]}, "lots.0"),
        ({"claimed_shelf_life_months": 0}, "claimed_shelf_life_months"),
        ({"code": ""}, "code"),
    ],
)
def test_bad_protocols_name_the_field_and_write_nothing(users, lot, override, field):
    with pytest.raises(InvalidInput) as caught:
        stability_study_create(users["manager"], **protocol(lot, **override))
    assert field in caught.value.fields
    assert not StabilityStudy.objects.exists()


def test_analysts_may_not_create_studies(users, lot):
    with pytest.raises(NotAllowed):
        stability_study_create(users["analyst"], **protocol(lot))


def test_due_pulls_are_taken_exactly_once_with_the_studys_methods(users, lot):
    study = stability_study_create(users["manager"], **protocol(lot))
    first = stability_pulls_schedule(TODAY)
    second = stability_pulls_schedule(TODAY)
    assert (first.pulls_taken, second.pulls_taken) == (4, 0)  # 0 and 1 month, two conditions
    samples = Sample.objects.filter(kind=SampleKind.STABILITY_PULL)
    assert samples.count() == 4
    assert set(Test.objects.filter(sample__in=samples).values_list("method_code", flat=True)) == {"av", "pv"}
    assert PullPoint.objects.filter(study=study, sample__isnull=True).count() == 2


def test_pulls_are_taken_from_a_released_lot(users, lot):
    stability_study_create(users["manager"], **protocol(lot))
    lot.state = "released"
    lot.save(update_fields=["state"])
    assert stability_pulls_schedule(TODAY).pulls_taken == 4


def test_overdue_pulls_are_flagged_once_with_one_alert_each(users, lot):
    stability_study_create(users["manager"], **protocol(lot))  # started 2026-05-06
    # On 2026-06-15 the 0- and 1-month pulls (due 05-06 and 06-06) are more than 7 days
    # past due and untested: overdue (grace of 7 days: common practice, no source).
    first = stability_pulls_schedule(TODAY)
    assert (first.pulls_taken, first.pulls_overdue, first.alerts_raised) == (4, 4, 4)
    later = TODAY + dt.timedelta(days=30)  # the 2-month pulls, due 07-06, are taken and then overdue too
    second = stability_pulls_schedule(later)
    assert (second.pulls_taken, second.pulls_overdue) == (2, 2)
    assert PullPoint.objects.filter(overdue_since__isnull=True).count() == 0
    assert Alert.objects.filter(rule="pull_overdue").count() == 6
    assert stability_pulls_schedule(later).pulls_overdue == 0


def test_a_pull_tested_in_time_is_not_overdue(users, lot):
    stability_study_create(users["manager"], **protocol(lot, started_on=TODAY))
    stability_pulls_schedule(TODAY)
    Test.objects.filter(sample__kind=SampleKind.STABILITY_PULL).update(state=TestState.ACCEPTED)
    assert stability_pulls_schedule(TODAY + dt.timedelta(days=10)).pulls_overdue == 0


def test_a_closed_study_takes_no_pulls(users, lot):
    study = stability_study_create(users["manager"], **protocol(lot))
    stability_study_close(users["qa"], study, reason="product discontinued")
    assert stability_pulls_schedule(TODAY).pulls_taken == 0


# --- evaluation -------------------------------------------------------------------
EA = 90_000.0  # J/mol, inside the 79-104 kJ/mol of vegetable oils (references.md, found)
K25 = 0.5  # meq O2/kg per month at 25 °C (invented for the test)
PV0 = 1.0


def rate_at(celsius: float) -> float:
    """Arrhenius: k(T) = k(25 °C) exp(-Ea/R (1/T - 1/298.15))."""
    return K25 * np.exp(-EA / R * (1 / (celsius + 273.15) - 1 / 298.15))


@pytest.fixture
def evaluated_study(users, lot):
    months = [0, 1, 2, 3, 6]
    study = stability_study_create(users["manager"], **protocol(
        lot, code="STAB-ARR", claimed_shelf_life_months=18,
        conditions=[{"temperature_c": t} for t in (25, 35, 45)],
        pull_points=[{"offset": m} for m in months], attributes=[{"method_code": "pv", "maximum": 10}],
    ))
    line = SpecificationLineFactory(method_code="pv", maximum="1000")
    noise = [0.05, -0.05, 0.0, 0.05, -0.05]  # small, so the regression has a residual
    for pull in PullPoint.objects.filter(study=study).select_related("condition"):
        value = PV0 + rate_at(pull.condition.temperature_c) * pull.elapsed_months + noise[months.index(pull.offset)]
        pull.sample = SampleFactory(lot=lot, kind=SampleKind.STABILITY_PULL, label=f"pull-{pull.pk}")
        pull.save(update_fields=["sample"])
        TestFactory(sample=pull.sample, specification_line=line, method_code="pv", state=TestState.ACCEPTED,
                    value=value, reported=f"{value:.1f}", unit="meq O2/kg", verdict="pass")
    outcome = stability_study_evaluate(study)
    return study, outcome


def test_arrhenius_recovers_the_activation_energy(evaluated_study):
    _, outcome = evaluated_study
    arrhenius = outcome.evaluation["attributes"][0]["arrhenius"]
    assert arrhenius["activation_energy_kj_per_mol"] == pytest.approx(EA / 1000, rel=0.03)
    # Q10 = exp(10 Ea / (R T (T + 10))) at 298.15 K
    assert arrhenius["q10"] == pytest.approx(np.exp(10 * EA / (R * 298.15 * 308.15)), rel=0.05)
    assert arrhenius["rate_per_month"] == pytest.approx(K25, rel=0.05)


def test_q1e_shelf_life_at_storage_matches_scipy(evaluated_study):
    study, outcome = evaluated_study
    at_25 = next(c for c in outcome.evaluation["attributes"][0]["conditions"] if c["temperature_c"] == 25)
    rows = Test.objects.filter(sample__pull_point__condition_id=at_25["condition_id"]).values_list(
        "sample__pull_point__elapsed_months", "value")
    t, y = map(np.array, zip(*rows))
    fit = stats.linregress(t, y)
    n, resid = len(t), y - (fit.intercept + fit.slope * t)
    s = np.sqrt(resid @ resid / (n - 2))
    sxx = ((t - t.mean()) ** 2).sum()

    def upper_bound(x):  # one-sided 95 % bound of the regression mean (ICH Q1E, found)
        return fit.intercept + fit.slope * x + stats.t.ppf(0.95, n - 2) * s * np.sqrt(1 / n + (x - t.mean()) ** 2 / sxx)

    crossing = optimize.brentq(lambda x: upper_bound(x) - 10, 0, 100)
    shelf = at_25["shelf_life"]
    assert shelf["estimate_months"] == pytest.approx(crossing, rel=1e-6)
    # 35 °C is the intermediate condition (10 °C above storage) and PV passes 10 there at 6 months
    # (k = 1.6 per month): significant change at intermediate, so ICH Q1E allows no extrapolation
    # (Q1E 2.4.2.2; found in a summary of Appendix A): the cap is X = 6 months.
    assert outcome.evaluation["extrapolation"]["branch"] == "room_temperature.intermediate_change"
    assert shelf["extrapolation_cap_months"] == 6
    assert shelf["capped"] and shelf["months"] == 6
    # the prediction is the crossing itself; what 6 months of data support so far is the cap
    assert outcome.evaluation["predicted_shelf_life_months"] == pytest.approx(crossing, rel=1e-6)
    assert outcome.evaluation["supported_shelf_life_months"] == 6


def test_short_shelf_life_and_out_of_limit_pulls_raise_alerts_once(evaluated_study):
    study, outcome = evaluated_study
    # the ICH Q1E crossing (about 17.5 months) falls short of the claimed 18
    assert Alert.objects.filter(rule="shelf_life_short", study=study).count() == 1
    # 45 °C: k = 0.5 exp(...) ≈ 5.5 per month, so PV > 10 from 2 months on
    beyond = Alert.objects.filter(rule="pull_out_of_limit", study=study).count()
    assert beyond >= 3
    again = stability_study_evaluate(study)
    assert again.alerts_raised == 0
    study.refresh_from_db()
    assert study.evaluation["predicted_shelf_life_months"] == outcome.evaluation["predicted_shelf_life_months"]


def test_evaluation_with_too_little_data_says_so(users, lot):
    study = stability_study_create(users["manager"], **protocol(lot, code="STAB-EMPTY"))
    outcome = stability_study_evaluate(study)
    assert outcome.evaluation["predicted_shelf_life_months"] is None
    assert outcome.evaluation["attributes"][0]["basis"] == "not enough data"


def test_a_missing_specification_line_fails_that_pull_only(users, lot):
    stability_study_create(users["manager"], **protocol(lot, attributes=[{"method_code": "iv", "maximum": 200}]))
    summary = stability_pulls_schedule(TODAY)
    assert (summary.pulls_taken, summary.pulls_failed) == (0, 4)
    assert not Sample.objects.filter(kind=SampleKind.STABILITY_PULL).exists()


def test_a_young_study_whose_trend_clears_the_claim_raises_no_shelf_life_alert(users, lot):
    """Three months of slow growth at 25 °C only: with no accelerated condition the ICH Q1E
    tree allows no extrapolation, so the data support 3 months, but the predicted crossing
    lies beyond the 12-month claim, so no alert (the cap is not a prediction)."""
    study = stability_study_create(users["manager"], **protocol(
        lot, code="STAB-SLOW", conditions=[{"temperature_c": 25}], pull_points=[{"offset": m} for m in (0, 1, 2, 3)],
        attributes=[{"method_code": "pv", "maximum": 10}],
    ))
    line = SpecificationLineFactory(method_code="pv", maximum="1000")
    for pull, value in zip(PullPoint.objects.filter(study=study).order_by("offset"), (1.0, 1.25, 1.45, 1.7)):
        pull.sample = SampleFactory(lot=lot, kind=SampleKind.STABILITY_PULL, label=f"slow-{pull.pk}")
        pull.save(update_fields=["sample"])
        TestFactory(sample=pull.sample, specification_line=line, method_code="pv", state=TestState.ACCEPTED, value=value)
    outcome = stability_study_evaluate(study)
    assert outcome.evaluation["extrapolation"]["branch"] == "room_temperature.accelerated_not_shown"
    assert outcome.evaluation["supported_shelf_life_months"] == 3  # X = 3, no extrapolation (project rule)
    assert outcome.evaluation["predicted_shelf_life_months"] > 12
    assert not Alert.objects.filter(rule="shelf_life_short").exists()


def test_an_arrhenius_shelf_life_far_beyond_the_data_is_flagged_as_a_time_extrapolation(evaluated_study):
    _, outcome = evaluated_study
    arrhenius = outcome.evaluation["attributes"][0]["arrhenius"]
    # (10 - 1.0) / 0.5 = 18 months from 6 months of long-term data, which the branch (significant
    # change at the intermediate 35 °C) does not let reach beyond X = 6 months (ICH Q1E 2.4.2.2)
    assert arrhenius["shelf_life_months"] == pytest.approx((10 - PV0) / K25, rel=0.1)
    assert (arrhenius["long_term_months"], arrhenius["allowed_months"]) == (6, 6)
    assert arrhenius["time_extrapolated"] is True


# --- storage category and the ICH Q1E branch ---------------------------------------------
@pytest.mark.parametrize(
    "override, field",
    [
        ({"storage_category": "ambient"}, "storage_category"),
        # room temperature is more permissive than 5 °C storage allows (refrigerated)
        ({"storage_category": "room_temperature", "storage_temperature_c": 5}, "storage_category"),
        ({"attributes": [{"method_code": "pv", "maximum": 10, "significant_change": 0}]}, "attributes.0.significant_change"),
        ({"attributes": [{"method_code": "pv", "maximum": 10, "significant_change": "a lot"}]}, "attributes.0.significant_change"),
    ],
)
def test_bad_categories_and_amounts_name_the_field(users, lot, override, field):
    with pytest.raises(InvalidInput) as caught:
        stability_study_create(users["manager"], **protocol(lot, **override))
    assert field in caught.value.fields
    assert not StabilityStudy.objects.exists()


@pytest.mark.parametrize(
    "storage, declared, stored",
    [(25, None, "room_temperature"), (5, None, "refrigerated"), (-20, None, "frozen"), (15, "refrigerated", "refrigerated")],
)
def test_the_storage_category_is_declared_or_taken_from_the_temperature(users, lot, storage, declared, stored):
    study = stability_study_create(
        users["manager"], **protocol(lot, storage_temperature_c=storage, storage_category=declared,
                                     attributes=[{"method_code": "pv", "maximum": 10, "significant_change": 3}]),
    )
    assert study.storage_category == stored
    assert study.attributes.get().significant_change == 3


def study_with_rates(users, lot, *, code, storage_c, category, rates, months, amount, long_term_months=None):
    """A one-lot PV study: results 1.0 + rate · t (± 0.05) under each condition {°C: rate per month};
    the long-term condition tested only up to ``long_term_months`` if given (invented data)."""
    study = stability_study_create(users["manager"], **protocol(
        lot, code=code, storage_temperature_c=storage_c, storage_category=category, claimed_shelf_life_months=6,
        conditions=[{"temperature_c": t} for t in rates], pull_points=[{"offset": m} for m in months],
        attributes=[{"method_code": "pv", "maximum": 10, "significant_change": amount}],
    ))
    line = SpecificationLineFactory(method_code="pv", maximum="1000")
    for pull in PullPoint.objects.filter(study=study).select_related("condition"):
        at_storage = pull.condition.temperature_c == storage_c
        if at_storage and long_term_months is not None and pull.elapsed_months > long_term_months:
            continue
        value = 1.0 + rates[pull.condition.temperature_c] * pull.elapsed_months + (0.05 if pull.offset % 2 else -0.05)
        pull.sample = SampleFactory(lot=lot, kind=SampleKind.STABILITY_PULL, label=f"{code}-{pull.pk}")
        pull.save(update_fields=["sample"])
        TestFactory(sample=pull.sample, specification_line=line, method_code="pv", state=TestState.ACCEPTED, value=value)
    return stability_study_evaluate(study).evaluation


def test_branch_room_temperature_accelerated_change_no_intermediate_change_caps_supported_at_1_5x(users, lot):
    """PV at 40 °C rises 1.2 per month: more than the study's 3 meq/kg by 3 months. At 30 °C
    (0.1 per month) no change in 6 months. ICH Q1E 2.4.2.1: up to 1.5X, at most X + 6 (1.5X: memory)."""
    evaluation = study_with_rates(
        users, lot, code="STAB-RT-ACC", storage_c=25, category="room_temperature",
        rates={25: 0.05, 30: 0.1, 40: 1.2}, months=[0, 1, 2, 3, 6], amount=3,
    )
    extrapolation = evaluation["extrapolation"]
    assert extrapolation["branch"] == "room_temperature.accelerated_change_no_intermediate_change"
    assert extrapolation["accelerated"]["found"] and extrapolation["accelerated"]["first_months"] == 3
    assert extrapolation["intermediate"]["temperatures_c"] == [30] and not extrapolation["intermediate"]["found"]
    pv = evaluation["attributes"][0]
    assert (pv["long_term_months"], pv["extrapolation_limit_months"]) == (6, 9)  # min(1.5 x 6, 6 + 6)
    # PV 1.0 + 0.05 t reaches 10 far beyond 9 months: the supported shelf life is the cap, not 12 (2X)
    assert evaluation["predicted_shelf_life_months"] > 12
    assert evaluation["supported_shelf_life_months"] == 9
    at_40 = next(c for c in pv["conditions"] if c["temperature_c"] == 40)
    assert at_40["role"] == "accelerated" and at_40["significant_change"]["found"]


def test_branch_room_temperature_no_accelerated_change_caps_supported_at_2x(users, lot):
    """The same oil with a study amount of 10: no significant change at 40 °C in 6 months
    (PV 8.2 < 10): ICH Q1E 2.4.1, up to 2X, at most X + 12."""
    evaluation = study_with_rates(
        users, lot, code="STAB-RT-OK", storage_c=25, category="room_temperature",
        rates={25: 0.05, 40: 1.2}, months=[0, 1, 2, 3, 6], amount=10,
    )
    assert evaluation["extrapolation"]["branch"] == "room_temperature.no_accelerated_change"
    assert evaluation["supported_shelf_life_months"] == 12  # min(2 x 6, 6 + 12)


def test_branch_refrigerated_no_accelerated_change_caps_supported_at_1_5x(users, lot):
    """Refrigerated at 5 °C with accelerated 25 °C (Q1A(R2), found) and no significant change
    there: ICH Q1E 2.5.1.1, up to 1.5X, at most X + 6 (1.5X: memory), never 2X."""
    evaluation = study_with_rates(
        users, lot, code="STAB-FRIDGE", storage_c=5, category="refrigerated",
        rates={5: 0.02, 25: 0.2}, months=[0, 1, 2, 3, 6], amount=3,
    )
    assert evaluation["storage_category"] == "refrigerated"
    assert evaluation["extrapolation"]["branch"] == "refrigerated.no_accelerated_change"
    assert evaluation["supported_shelf_life_months"] == 9


def test_branch_frozen_supports_no_extrapolation(users, lot):
    evaluation = study_with_rates(
        users, lot, code="STAB-FROZEN", storage_c=-20, category="frozen",
        rates={-20: 0.01, 5: 0.05}, months=[0, 1, 2, 3, 6], amount=3,
    )
    assert evaluation["extrapolation"]["branch"] == "frozen"
    assert evaluation["supported_shelf_life_months"] == 6  # X itself (ICH Q1E 2.5.2)


def test_arrhenius_takes_x_from_the_long_term_condition_not_the_last_accelerated_pull(users, lot):
    """25 °C tested to 3 months, 40 and 50 °C to 6: X is 3, so the Arrhenius shelf life is
    judged against the branch's limit on 3 months, not on 6."""
    evaluation = study_with_rates(
        users, lot, code="STAB-ARR-X", storage_c=25, category="room_temperature",
        rates={25: 0.3, 40: 0.9, 50: 2.0}, months=[0, 1, 2, 3, 6], amount=20, long_term_months=3,
    )
    pv = evaluation["attributes"][0]
    # PV at 50 °C passes 10 at 6 months: a stress condition, not accelerated; 40 °C shows no change
    assert evaluation["extrapolation"]["branch"] == "room_temperature.no_accelerated_change"
    assert pv["arrhenius"]["long_term_months"] == 3
    assert pv["arrhenius"]["allowed_months"] == 6  # min(2 x 3, 3 + 12); it was 12 with X from the 6-month pulls
    assert pv["arrhenius"]["shelf_life_months"] > 6 and pv["arrhenius"]["time_extrapolated"] is True
    assert pv["long_term_months"] == 3 and pv["supported_shelf_life_months"] <= 6
