"""Nelson's eight rules.

Source: Nelson 1984, Journal of Quality Technology, with the thresholds as summarised in
/work/shared/references.md (tag "found"): 1 beyond 3σ; 9 in a row on one side; 6 rising
or falling; 14 alternating; 2 of 3 beyond 2σ; 4 of 5 beyond 1σ; 15 in a row within 1σ;
8 in a row none within 1σ. "Beyond" is strict. Series are z-scores (mean 0, SD 1).
"""
from __future__ import annotations

import pytest

from analyses.trends.rules import NELSON_RULES
from analyses.trends.run_rules import nelson_evaluate


def hits(values, rule):
    return [(e.side, e.points) for e in nelson_evaluate(values, 0.0, 1.0) if e.rule == rule]


def test_all_eight_rules_are_named():
    assert [rule.code for rule in NELSON_RULES] == [f"nelson_{n}" for n in range(1, 9)]
    assert all(rule.title.startswith(f"Nelson {n}:") for n, rule in enumerate(NELSON_RULES, start=1))


# Rule 1: one point beyond 3σ (references.md "found")
def test_rule_1():
    assert hits([0.0, 3.01, -3.2], "nelson_1") == [("+", (1,)), ("-", (2,))]
    assert hits([3.0, -3.0], "nelson_1") == []


# Rule 2: nine points in a row on one side (references.md "found")
def test_rule_2_nine_in_a_row():
    assert hits([0.5] * 9, "nelson_2") == [("+", tuple(range(9)))]
    assert hits([-0.5] * 9, "nelson_2") == [("-", tuple(range(9)))]


@pytest.mark.parametrize("values", [[0.5] * 8, [0.5] * 4 + [0.0] + [0.5] * 4, [0.5] * 4 + [-0.5] + [0.5] * 4])
def test_rule_2_not_triggered(values):
    assert hits(values, "nelson_2") == []


# Rule 3: six points in a row steadily rising or falling (references.md "found")
def test_rule_3_six_rising_or_falling():
    rising = [0.1 * i for i in range(6)]
    assert hits(rising, "nelson_3") == [("up", tuple(range(6)))]
    assert hits(rising[::-1], "nelson_3") == [("down", tuple(range(6)))]


@pytest.mark.parametrize(
    "values",
    [
        [0.1 * i for i in range(5)],  # five points only
        [0.0, 0.1, 0.2, 0.2, 0.3, 0.4],  # a tie stops the rise
        [0.0, 0.1, 0.2, 0.1, 0.3, 0.4],
    ],
)
def test_rule_3_not_triggered(values):
    assert hits(values, "nelson_3") == []


# Rule 4: fourteen points in a row alternating up and down (references.md "found")
def test_rule_4_fourteen_alternating():
    assert hits([0.5, -0.5] * 7, "nelson_4") == [("", tuple(range(14)))]


@pytest.mark.parametrize("values", [[0.5, -0.5] * 6 + [0.5], [0.5, -0.5] * 3 + [-0.5] + [0.5, -0.5] * 4])
def test_rule_4_not_triggered(values):
    # 13 alternating points; and 15 points broken by a repeat in the middle.
    assert hits(values, "nelson_4") == []


# Rule 5: two of three points in a row beyond 2σ, same side (references.md "found")
def test_rule_5_two_of_three():
    assert hits([0.0, 2.5, 0.0, 2.1], "nelson_5") == [("+", (1, 3))]
    assert hits([0.0, -2.5, -2.1], "nelson_5") == [("-", (1, 2))]


@pytest.mark.parametrize(
    "values",
    [
        [2.5, 0.0, 0.0, 2.5],  # two of four
        [0.0, 2.5, 0.0, -2.5],  # different sides
        [0.0, 2.0, 0.0, 2.5],  # exactly 2σ is not beyond
        [2.5, 2.5],  # our reading: the three-point window must exist
    ],
)
def test_rule_5_not_triggered(values):
    assert hits(values, "nelson_5") == []


# Rule 6: four of five points in a row beyond 1σ, same side (references.md "found")
def test_rule_6_four_of_five():
    assert hits([1.5, 1.5, 0.0, 1.5, 1.5], "nelson_6") == [("+", (0, 1, 3, 4))]
    assert hits([-1.1, -1.1, -1.1, -1.1, 0.0], "nelson_6") == [("-", (0, 1, 2, 3))]


@pytest.mark.parametrize(
    "values",
    [
        [1.5, 1.5, 0.0, 0.0, 1.5, 1.5],  # never four within five
        [1.5, 1.5, 1.0, 1.5, 0.0],  # exactly 1σ is not beyond
        [1.5, 1.5, -1.5, 1.5, -1.5],
    ],
)
def test_rule_6_not_triggered(values):
    assert hits(values, "nelson_6") == []


# Rule 7: fifteen points in a row within 1σ (references.md "found")
def test_rule_7_fifteen_within_1_sigma():
    values = [0.5, -0.5] * 7 + [1.0]  # a point at exactly 1σ is within
    assert hits(values, "nelson_7") == [("", tuple(range(15)))]


@pytest.mark.parametrize("values", [[0.5, -0.5] * 7, [0.5, -0.5] * 7 + [1.01]])
def test_rule_7_not_triggered(values):
    assert hits(values, "nelson_7") == []


# Rule 8: eight points in a row with none within 1σ (references.md "found")
def test_rule_8_eight_outside_1_sigma():
    assert hits([1.5, -1.5] * 4, "nelson_8") == [("", tuple(range(8)))]


@pytest.mark.parametrize("values", [[1.5, -1.5] * 3 + [1.5], [1.5, -1.5] * 3 + [1.5, -1.0]])
def test_rule_8_not_triggered(values):
    assert hits(values, "nelson_8") == []
