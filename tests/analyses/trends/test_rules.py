"""The rules in words: one sentence per rule and side, used by charts, alert texts and e-mails.

The sentences are checked against the rule definitions in /work/shared/references.md
("Westgard multirules", "Nelson rules", both "found"): the published names and the counts
and distances each rule names."""
from __future__ import annotations

import pytest

from analyses.trends.rules import RULES, rule_in_words, rule_short_name


@pytest.mark.parametrize("code, side, sentence", [
    # the issue's own example, and Westgard's names (references.md, found)
    ("westgard_10_x", "+", "10-x: 10 consecutive results above the mean"),
    ("westgard_10_x", "-", "10-x: 10 consecutive results below the mean"),
    ("westgard_1_3s", "+", "1-3s: one result more than 3 s above the mean"),
    ("westgard_2_2s", "-", "2-2s: two consecutive results more than 2 s below the mean"),
    ("westgard_4_1s", "+", "4-1s: four consecutive results more than 1 s above the mean"),
    ("westgard_r_4s", "", "R-4s: within one run, one result more than 2 s above the mean and another more than 2 s below it"),
    # Nelson (1984) as references.md summarises it (found)
    ("nelson_2", "+", "Nelson 2: nine results in a row above the mean"),
    ("nelson_3", "down", "Nelson 3: six results in a row steadily falling"),
    ("nelson_5", "+", "Nelson 5: two of three results in a row more than 2 s above the mean"),
    ("nelson_7", "", "Nelson 7: fifteen results in a row within 1 s of the mean"),
])
def test_rules_read_as_their_published_definitions(code, side, sentence):
    assert rule_in_words(code, side) == sentence


def test_every_rule_has_a_short_name_and_words_without_placeholders():
    for code, rule in RULES.items():
        assert rule.short and rule.words
        for side in ("+", "-", "", "up", "down"):
            sentence = rule_in_words(code, side)
            assert sentence.startswith(rule.short + ": ") and "{" not in sentence and "_" not in sentence


def test_other_sources_rules_and_unknown_codes():
    assert rule_in_words("pull_out_of_limit") == "pull beyond limit: a stability pull result beyond the study's acceptance limit"
    assert rule_short_name("shelf_life_short") == "shelf life short"
    assert rule_in_words("something_new") == "something new"  # a rule added elsewhere still reads
