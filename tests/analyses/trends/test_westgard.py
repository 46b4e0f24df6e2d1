"""Westgard multirules.

Source for every rule check: the Westgard multirule definitions as summarised in
/work/shared/references.md (tag "found"): 1-2s warning; 1-3s one point beyond ±3 s;
2-2s two consecutive beyond the same ±2 s; R-4s within a run one above +2 s and one
below −2 s; 4-1s four consecutive beyond the same ±1 s; 10-x ten consecutive on one
side of the mean. "Beyond" is strict. Series are given directly as z-scores (mean 0, SD 1).
"""
from __future__ import annotations

import statistics

import pandas as pd
import pytest

from analyses.errors import InvalidInput
from analyses.trends.episodes import episodes_by_rule
from analyses.trends.rules import RULES, WESTGARD_RULES
from analyses.trends.scan import series_scan
from analyses.trends.westgard import baseline_establish, westgard_evaluate, z_scores


def hits(values, rule, run_ids=None):
    return [(e.side, e.points) for e in westgard_evaluate(values, 0.0, 1.0, run_ids) if e.rule == rule]


# 1-2s (warning only; references.md "found")
def test_1_2s_triggers_strictly_beyond_2s_on_either_side():
    assert hits([0.0, 2.01, 0.0, -2.01], "westgard_1_2s") == [("+", (1,)), ("-", (3,))]


def test_1_2s_not_at_exactly_2s():
    assert hits([0.0, 2.0, -2.0, 1.9], "westgard_1_2s") == []


def test_a_point_on_the_2s_line_in_original_units_is_not_beyond_it():
    # 5.2 for mean 5.0 and s 0.1 is exactly 2 s, but (5.2 - 5.0) / 0.1 is 2.0000000000000018 in
    # floats; z is rounded to Z_DECIMALS places first (invented control values)
    assert (5.2 - 5.0) / 0.1 > 2
    assert [e for e in westgard_evaluate([5.0, 5.2, 5.0], 5.0, 0.1) if e.rule == "westgard_1_2s"] == []
    [beyond] = [e for e in westgard_evaluate([5.0, 5.2001, 5.0], 5.0, 0.1) if e.rule == "westgard_1_2s"]
    assert beyond.points == (1,)


def test_the_scan_of_many_series_rounds_z_as_one_series_does():
    results = pd.DataFrame({"series_id": "QC-A", "sequence": [1, 2, 3], "value": [5.0, 5.2, 5.2001]})
    limits = pd.DataFrame({"series_id": ["QC-A"], "mean": [5.0], "sd": [0.1]})
    scan = series_scan(results, limits, families=("westgard",))
    assert scan[scan["rule"] == "westgard_1_2s"]["first"].tolist() == [2]


def test_1_2s_is_a_warning_only():
    assert RULES["westgard_1_2s"].warning_only
    assert not RULES["westgard_1_3s"].warning_only


# 1-3s (references.md "found")
def test_1_3s_triggers_beyond_3s():
    assert hits([0.0, 3.01, -3.5], "westgard_1_3s") == [("+", (1,)), ("-", (2,))]


def test_1_3s_not_at_exactly_3s():
    assert hits([3.0, -3.0, 2.99], "westgard_1_3s") == []


# 2-2s (references.md "found")
def test_2_2s_two_consecutive_beyond_same_2s():
    assert hits([0.0, 2.5, 2.1, 0.0], "westgard_2_2s") == [("+", (1, 2))]
    assert hits([-2.2, -2.3], "westgard_2_2s") == [("-", (0, 1))]


@pytest.mark.parametrize(
    "values",
    [
        [2.5, -2.5],  # opposite sides
        [2.5, 0.0, 2.5],  # not consecutive
        [2.0, 2.5],  # exactly 2.0 s is not beyond
    ],
)
def test_2_2s_not_triggered(values):
    assert hits(values, "westgard_2_2s") == []


# R-4s (references.md "found")
def test_r_4s_consecutive_pair_without_runs():
    assert hits([0.0, 2.1, -2.1, 0.0], "westgard_r_4s") == [("", (1, 2))]


def test_r_4s_without_runs_needs_consecutive_points():
    assert hits([2.5, 0.0, -2.5], "westgard_r_4s") == []


def test_r_4s_within_a_run_need_not_be_consecutive():
    assert hits([2.5, 0.0, -2.5], "westgard_r_4s", run_ids=["a", "a", "a"]) == [("", (0, 2))]


def test_r_4s_not_across_runs():
    assert hits([2.5, -2.5], "westgard_r_4s", run_ids=["a", "b"]) == []
    # A point without a run id stands alone.
    assert hits([2.5, -2.5], "westgard_r_4s", run_ids=["a", None]) == []


def test_r_4s_not_at_exactly_2s():
    assert hits([2.0, -2.5], "westgard_r_4s") == []
    assert hits([2.0, -2.5], "westgard_r_4s", run_ids=[1, 1]) == []


# 4-1s (references.md "found")
def test_4_1s_four_consecutive_beyond_same_1s():
    assert hits([0.0, 1.5, 1.2, 1.1, 1.01], "westgard_4_1s") == [("+", (1, 2, 3, 4))]
    assert hits([-1.2] * 4, "westgard_4_1s") == [("-", (0, 1, 2, 3))]


@pytest.mark.parametrize(
    "values",
    [
        [1.5, 1.5, 1.5],  # only three
        [1.5, 1.5, 1.5, 1.0],  # exactly 1.0 s is not beyond
        [1.5, 1.5, -1.5, -1.5],  # not the same side
    ],
)
def test_4_1s_not_triggered(values):
    assert hits(values, "westgard_4_1s") == []


# 10-x (references.md "found")
def test_10_x_ten_on_one_side():
    assert hits([0.5] * 10, "westgard_10_x") == [("+", tuple(range(10)))]
    assert hits([-0.1] * 10, "westgard_10_x") == [("-", tuple(range(10)))]


def test_10_x_not_nine_and_not_through_the_mean():
    assert hits([0.5] * 9, "westgard_10_x") == []
    assert hits([0.5] * 5 + [0.0] + [0.5] * 5, "westgard_10_x") == []


def test_a_longer_violation_is_one_episode():
    # Our grouping rule: a contiguous violation is one episode (11 points on one side -> one 10-x episode).
    assert hits([0.5] * 11, "westgard_10_x") == [("+", tuple(range(11)))]
    assert hits([2.5, 2.5, 2.5, 0.0, 2.5], "westgard_1_2s") == [("+", (0, 1, 2)), ("+", (4,))]


def test_z_scores_use_mean_and_sd():
    assert z_scores([12.0, 8.0], mean=10.0, sd=2.0).tolist() == [1.0, -1.0]


def test_values_in_original_units():
    # mean 10, SD 2: 14.5 is +2.25 s and 15.0 is +2.5 s.
    episodes = westgard_evaluate([10.0, 14.5, 15.0], mean=10.0, sd=2.0)
    assert [(e.rule, e.points) for e in episodes] == [("westgard_1_2s", (1, 2)), ("westgard_2_2s", (1, 2))]


# Baseline: Westgard recommends at least 20 control results (from memory).
def test_baseline_from_20_points_matches_statistics_module():
    values = [10 + 0.1 * ((i * 7) % 11) for i in range(20)]
    baseline = baseline_establish(values)
    assert baseline.n == 20
    assert baseline.mean == pytest.approx(statistics.mean(values))
    assert baseline.sd == pytest.approx(statistics.stdev(values))


def test_baseline_below_20_points_is_refused():
    with pytest.raises(InvalidInput) as caught:
        baseline_establish([1.0, 2.0] * 9 + [1.5])
    assert "values" in caught.value.fields
    assert "20" in caught.value.fields["values"][0]


def test_bad_input_names_the_field():
    with pytest.raises(InvalidInput) as caught:
        westgard_evaluate([1.0, float("nan")], 0.0, 1.0)
    assert "values" in caught.value.fields
    with pytest.raises(InvalidInput) as caught:
        westgard_evaluate([1.0], 0.0, 0.0)
    assert "sd" in caught.value.fields
    with pytest.raises(InvalidInput) as caught:
        westgard_evaluate([1.0, 2.0], 0.0, 1.0, run_ids=["a"])
    assert "run_ids" in caught.value.fields


def test_episodes_grouped_per_rule():
    grouped = episodes_by_rule(westgard_evaluate([0.0, 2.5, 2.5], 0.0, 1.0), [r.code for r in WESTGARD_RULES])
    assert list(grouped) == [r.code for r in WESTGARD_RULES]
    assert [e.points for e in grouped["westgard_2_2s"]] == [(1, 2)]
    assert grouped["westgard_10_x"] == []  # rules not broken still have a (empty) entry
