"""The ICH Q1E Appendix A tree: one invented dataset per branch, each test named after its branch.

Branch limits (see analyses/stability/extrapolation.py for the sources):
- room temperature, no significant change at accelerated: up to 2X, at most X + 12 months
  (Q1E 2.4.1; found in a summary of Appendix A);
- room temperature, significant change at accelerated, none at intermediate: up to 1.5X
  (from memory), at most X + 6 months (found);
- room temperature, significant change at intermediate: no extrapolation (found);
- refrigerated, no significant change at accelerated: up to 1.5X (memory), at most X + 6 (found);
- refrigerated, significant change at accelerated (within 3 months, or later): no extrapolation (found);
- frozen: no extrapolation (found);
- a condition needed to show "no significant change" that is missing or covers less than the
  6 months of Q1A(R2) (found): no extrapolation (project rule).

Data are invented (Northmoor Oils, a made-up refinery): peroxide value in meq O2/kg against
the Codex CXS 210 limit of 10 for refined oils (references.md, "found"), with a study-defined
significant change of 3 meq O2/kg from the initial value.
"""
from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from analyses.errors import InvalidInput
from analyses.stability.extrapolation import (
    ExtrapolationBranch,
    SignificantChange,
    category_fits,
    change_across,
    condition_roles,
    extrapolation_branch,
    initial_values,
    significant_change,
    storage_category_for,
)
from analyses.stability.shelf_life import shelf_life_estimate

PV_LIMIT = 10.0
AMOUNT = 3.0
MONTHS = [0.0, 1.0, 2.0, 3.0, 6.0]


def change_at(values, months=MONTHS, amount=AMOUNT, maximum=PV_LIMIT, minimum=None) -> SignificantChange:
    """Significant change of one lot (initial value at time 0) under one condition."""
    lots = ["N1"] * len(months)
    initial = initial_values(months, values, lots)
    return significant_change(months, values, lots, initial, minimum=minimum, maximum=maximum, amount=amount)


STEADY = change_at([1.0, 1.2, 1.5, 1.9, 2.8])  # +1.8 over 6 months: no significant change
ABOVE_AMOUNT_AT_3 = change_at([1.0, 2.0, 3.1, 4.3, 7.5])  # +3.3 at 3 months
ABOVE_LIMIT_AT_6 = change_at([1.0, 1.8, 2.9, 3.9, 10.4], amount=None)  # beyond PV 10 at 6 months
ABOVE_AMOUNT_AT_2 = change_at([1.0, 2.9, 4.2, 5.6, 9.0])  # +3.2 at 2 months
STEADY_BUT_SHORT = change_at([1.0, 1.2, 1.4, 1.7], MONTHS[:4])  # 3 months only


def test_significant_change_by_the_study_amount_is_found_at_its_first_pull():
    assert (ABOVE_AMOUNT_AT_3.found, ABOVE_AMOUNT_AT_3.first_months) == (True, 3.0)
    assert "changed by +3.3 from 1" in ABOVE_AMOUNT_AT_3.reasons[0]
    assert not STEADY.found and STEADY.tested_months == 6.0


def test_significant_change_by_the_acceptance_limit_counts_without_an_amount():
    assert (ABOVE_LIMIT_AT_6.found, ABOVE_LIMIT_AT_6.first_months) == (True, 6.0)
    assert "above the limit 10" in ABOVE_LIMIT_AT_6.reasons[0]
    low = change_at([20.0, 19.5, 19.0, 18.5, 11.5], amount=None, maximum=None, minimum=12.0)
    assert low.found and "below the limit 12" in low.reasons[0]


def test_a_fall_larger_than_the_amount_is_a_significant_change_too():
    assert change_at([5.0, 4.5, 4.0, 1.8, 1.5]).first_months == 3.0  # -3.2 at 3 months


def test_the_initial_pull_itself_is_never_a_significant_change():
    # a lot that starts above the limit has an out-of-limit result, not a change under storage
    assert not change_at([10.5, 9.8, 9.9, 9.8, 9.9], amount=None).found
    assert change_at([10.5, 10.6, 10.5, 10.6, 10.7], amount=None).first_months == 1.0


def test_the_initial_value_is_the_lots_earliest_pull_under_any_condition():
    initial = initial_values([0, 0, 3, 1], [1.0, 1.2, 5.0, 2.0], ["A", "A", "A", "B"])
    assert initial == {"A": (0.0, pytest.approx(1.1)), "B": (1.0, 2.0)}


def test_change_across_attributes_takes_any_change_and_the_shortest_coverage():
    both = change_across([STEADY, ABOVE_AMOUNT_AT_3])
    assert both.found and both.first_months == 3.0 and both.tested_months == 6.0
    assert change_across([STEADY, STEADY_BUT_SHORT]).tested_months == 3.0
    assert change_across([]) is None


def test_roles_of_the_conditions_follow_q1a_offsets_above_storage():
    # Q1A(R2): long-term 25, intermediate 30, accelerated 40 °C (found); 50 °C is a stress condition here
    conditions = [(1, 25.0, "dark"), (2, 30.0, "dark"), (3, 40.0, "dark"), (4, 50.0, "dark"), (5, 25.0, "light"), (6, 5.0, "dark")]
    assert condition_roles(25.0, conditions) == {
        1: "long_term", 2: "intermediate", 3: "accelerated", 4: "stress", 5: "other", 6: "other",
    }
    # refrigerated: long-term 5 °C, accelerated 25 °C (Q1A(R2), found)
    assert condition_roles(5.0, [(1, 5.0, "dark"), (2, 25.0, "dark")]) == {1: "long_term", 2: "accelerated"}


@pytest.mark.parametrize("temperature, category", [(-20, "frozen"), (-10, "frozen"), (5, "refrigerated"), (10, "refrigerated"), (20, "room_temperature"), (30, "room_temperature")])
def test_storage_category_of_a_temperature(temperature, category):
    # Q1A(R2) long-term conditions: freezer -20, refrigerator 5, room 25 or 30 °C (found); the boundaries are ours
    assert storage_category_for(temperature) == category


def test_a_declared_category_may_be_stricter_than_the_temperature_never_more_permissive():
    assert category_fits("refrigerated", 15.0) and category_fits("frozen", 5.0)
    assert not category_fits("room_temperature", 5.0) and not category_fits("refrigerated", -20.0)


# --- one dataset per branch ---------------------------------------------------------------
def test_branch_room_temperature_no_accelerated_change_allows_2x_up_to_x_plus_12():
    branch = extrapolation_branch("room_temperature", accelerated=STEADY, intermediate=None)
    assert branch.code == "room_temperature.no_accelerated_change"
    assert branch.limit(6.0) == 12.0  # 2X
    assert branch.limit(18.0) == 30.0  # X + 12 < 2X


def test_branch_room_temperature_accelerated_change_no_intermediate_change_allows_1_5x_up_to_x_plus_6():
    branch = extrapolation_branch("room_temperature", accelerated=ABOVE_AMOUNT_AT_3, intermediate=STEADY)
    assert branch.code == "room_temperature.accelerated_change_no_intermediate_change"
    assert branch.limit(6.0) == 9.0  # 1.5X
    assert branch.limit(18.0) == 24.0  # X + 6 < 1.5X
    assert "from 3 months" in branch.reason


def test_branch_room_temperature_intermediate_change_allows_no_extrapolation():
    branch = extrapolation_branch("room_temperature", accelerated=ABOVE_AMOUNT_AT_3, intermediate=ABOVE_LIMIT_AT_6)
    assert branch.code == "room_temperature.intermediate_change" and branch.section == "ICH Q1E 2.4.2.2"
    assert branch.factor is None and branch.limit(12.0) == 12.0


def test_branch_room_temperature_intermediate_not_shown_allows_no_extrapolation():
    """Significant change at accelerated, and the intermediate data (3 months) too short to show none."""
    for intermediate in (None, STEADY_BUT_SHORT):
        branch = extrapolation_branch("room_temperature", accelerated=ABOVE_AMOUNT_AT_3, intermediate=intermediate)
        assert branch.code == "room_temperature.intermediate_not_shown"
        assert branch.limit(12.0) == 12.0


def test_branch_room_temperature_accelerated_not_shown_allows_no_extrapolation():
    """No accelerated condition, or one tested for 3 of the 6 months without change yet."""
    for accelerated in (None, STEADY_BUT_SHORT):
        branch = extrapolation_branch("room_temperature", accelerated=accelerated, intermediate=None)
        assert branch.code == "room_temperature.accelerated_not_shown" and branch.limit(12.0) == 12.0
    # a significant change already seen needs no 6 months to count
    seen_early = change_at([1.0, 2.0, 3.1, 4.3], MONTHS[:4])
    assert extrapolation_branch("room_temperature", accelerated=seen_early, intermediate=STEADY).factor == 1.5


def test_branch_refrigerated_no_accelerated_change_allows_1_5x_up_to_x_plus_6():
    branch = extrapolation_branch("refrigerated", accelerated=STEADY, intermediate=None)
    assert branch.code == "refrigerated.no_accelerated_change" and branch.section == "ICH Q1E 2.5.1.1"
    assert branch.limit(6.0) == 9.0 and branch.limit(18.0) == 24.0


def test_branch_refrigerated_accelerated_change_within_3_months_allows_no_extrapolation():
    branch = extrapolation_branch("refrigerated", accelerated=ABOVE_AMOUNT_AT_2, intermediate=None)
    assert branch.code == "refrigerated.accelerated_change_within_3_months"
    assert branch.limit(12.0) == 12.0 and "excursions" in branch.reason


def test_branch_refrigerated_accelerated_change_after_3_months_allows_no_extrapolation():
    branch = extrapolation_branch("refrigerated", accelerated=ABOVE_LIMIT_AT_6, intermediate=None)
    assert branch.code == "refrigerated.accelerated_change_after_3_months" and branch.limit(12.0) == 12.0


def test_branch_refrigerated_accelerated_not_shown_allows_no_extrapolation():
    for accelerated in (None, STEADY_BUT_SHORT):
        branch = extrapolation_branch("refrigerated", accelerated=accelerated, intermediate=None)
        assert branch.code == "refrigerated.accelerated_not_shown" and branch.limit(12.0) == 12.0


def test_branch_refrigerated_intermediate_change_allows_no_extrapolation():
    branch = extrapolation_branch("refrigerated", accelerated=STEADY, intermediate=ABOVE_AMOUNT_AT_3)
    assert branch.code == "refrigerated.intermediate_change" and branch.limit(12.0) == 12.0


def test_branch_frozen_allows_no_extrapolation_whatever_the_data():
    branch = extrapolation_branch("frozen", accelerated=STEADY, intermediate=STEADY)
    assert branch.code == "frozen" and branch.section == "ICH Q1E 2.5.2" and branch.limit(12.0) == 12.0


def test_an_unknown_category_names_the_field():
    with pytest.raises(InvalidInput) as caught:
        extrapolation_branch("ambient", accelerated=None, intermediate=None)
    assert "storage_category" in caught.value.fields


BRANCHES = [
    extrapolation_branch("room_temperature", accelerated=STEADY, intermediate=None),
    extrapolation_branch("room_temperature", accelerated=ABOVE_AMOUNT_AT_3, intermediate=STEADY),
    extrapolation_branch("frozen", accelerated=None, intermediate=None),
]


@settings(max_examples=30, deadline=None)
@given(
    slope=st.floats(0.0, 1.0),
    last=st.sampled_from([3.0, 6.0, 12.0, 24.0]),
    branch=st.sampled_from(BRANCHES),
)
def test_the_reported_shelf_life_never_exceeds_what_the_branch_allows(slope, last, branch: ExtrapolationBranch):
    times = np.linspace(0.0, last, 5)
    values = 1.0 + slope * times + np.array([0.05, -0.05, 0.0, 0.05, -0.05])
    result = shelf_life_estimate(
        times, values, PV_LIMIT, extrapolation_factor=branch.factor or 1.0, extrapolation_months=branch.months_beyond,
    )
    assert result.shelf_life <= branch.limit(last) + 1e-12
    assert result.extrapolation_cap == branch.limit(last)


def test_a_change_of_exactly_the_amount_or_a_result_at_the_limit_is_not_significant():
    # Decided in decimal arithmetic (issue 7): in floats 1.1 + 3.0 - ... noise would decide. 4.1 - 1.1 is
    # 2.9999999999999996 and 7.3 - 4.3 is 3.0000000000000004 in binary; on paper both are exactly 3.0.
    assert not change_at([1.1, 2.0, 3.0, 4.1, 4.1]).found
    assert not change_at([4.3, 5.0, 6.0, 7.3, 7.3]).found
    # PV 10.000000000000002 is 4.97 x 0.01 x 1000 / 4.97 in floats; exactly the limit 10 on paper
    assert not change_at([1.0, 2.0, 3.0, 4.0, 10.000000000000002], amount=None).found


def test_a_result_beyond_the_limit_only_past_fifteen_digits_counts_when_its_exact_value_is_given():
    """PV 10.0000000000000000001 (an exact value a pull's verdict is decided on) has the float
    10.0, at the limit: beyond it on the exact value, not on the float alone."""
    from decimal import Decimal

    values = [1.0, 1.8, 2.9, 3.9, 10.0]
    lots = ["N1"] * len(MONTHS)
    initial = initial_values(MONTHS, values, lots)
    exact = [None, None, None, None, Decimal("10.0000000000000000001")]
    on_float = significant_change(MONTHS, values, lots, initial, minimum=None, maximum=PV_LIMIT, amount=None)
    on_exact = significant_change(MONTHS, values, lots, initial, minimum=None, maximum=PV_LIMIT, amount=None, exact=exact)
    assert not on_float.found
    assert (on_exact.found, on_exact.first_months) == (True, 6.0) and "above the limit 10" in on_exact.reasons[0]
