"""The catalogue of trend rules: code, family, title, short name and the rule in words.

Westgard multirules and Nelson rules as summarised in /work/shared/references.md
("found"); EWMA per the NIST/SEMATECH e-Handbook; out-of-trend is the project's own rule.
Westgard rules keep their published names (1-3s, 2-2s, R-4s, 4-1s, 10-x) and Nelson's are
numbered as Nelson (1984) numbers them; ``rule_in_words`` turns a rule and the side it broke
on into the sentence that charts, alert texts and e-mails all use.
"""
from __future__ import annotations

from dataclasses import dataclass

# How an episode's side reads in a sentence; "" is a rule that broke on no one side.
SIDE_WORDS = {"+": "above", "-": "below", "up": "rising", "down": "falling"}


@dataclass(frozen=True)
class TrendRule:
    code: str
    family: str
    title: str
    warning_only: bool = False  # 1-2s only warns; every other rule raises an alert
    short: str = ""  # the published name, drawn beside a flagged point
    words: str = ""  # the rule in words; "{side}" is filled from SIDE_WORDS
    unsided: str = ""  # what "{side}" reads when the episode has no side


WESTGARD_RULES: tuple[TrendRule, ...] = (
    TrendRule("westgard_1_2s", "westgard", "1-2s: one point beyond ±2 s (warning only)", warning_only=True,
              short="1-2s", words="one result more than 2 s {side} the mean (a warning)", unsided="away from"),
    TrendRule("westgard_1_3s", "westgard", "1-3s: one point beyond ±3 s",
              short="1-3s", words="one result more than 3 s {side} the mean", unsided="away from"),
    TrendRule("westgard_2_2s", "westgard", "2-2s: two consecutive points beyond the same ±2 s",
              short="2-2s", words="two consecutive results more than 2 s {side} the mean", unsided="on the same side of"),
    TrendRule("westgard_r_4s", "westgard", "R-4s: within a run, one point above +2 s and one below −2 s",
              short="R-4s", words="within one run, one result more than 2 s above the mean and another more than 2 s below it"),
    TrendRule("westgard_4_1s", "westgard", "4-1s: four consecutive points beyond the same ±1 s",
              short="4-1s", words="four consecutive results more than 1 s {side} the mean", unsided="on the same side of"),
    TrendRule("westgard_10_x", "westgard", "10-x: ten consecutive points on one side of the mean",
              short="10-x", words="10 consecutive results {side} the mean", unsided="on one side of"),
)

# Across the control materials (levels) of one method measured in the same run; see
# analyses/trends/across_materials.py for the sources.
ACROSS_MATERIAL_RULES: tuple[TrendRule, ...] = (
    TrendRule("westgard_r_4s_across", "westgard", "R-4s across materials: in one run, one control above +2 s and another below −2 s",
              short="R-4s across", words="in one run, one control material more than 2 s above its mean and another more than 2 s below its own"),
    TrendRule("westgard_2_2s_across", "westgard", "2-2s across materials: in one run, two controls beyond the same ±2 s",
              short="2-2s across", words="in one run, two control materials each more than 2 s {side} its mean", unsided="on the same side of"),
    TrendRule("westgard_2of3_2s", "westgard", "2 of 3 2s: in a run of three levels, two controls beyond the same ±2 s",
              short="2 of 3 2s", words="in a run of three control materials, two more than 2 s {side} their means", unsided="on the same side of"),
)

NELSON_RULES: tuple[TrendRule, ...] = (
    TrendRule("nelson_1", "nelson", "Nelson 1: one point beyond 3 σ",
              short="Nelson 1", words="one result more than 3 s {side} the mean", unsided="away from"),
    TrendRule("nelson_2", "nelson", "Nelson 2: nine points in a row on one side of the centre line",
              short="Nelson 2", words="nine results in a row {side} the mean", unsided="on one side of"),
    TrendRule("nelson_3", "nelson", "Nelson 3: six points in a row steadily rising or falling",
              short="Nelson 3", words="six results in a row steadily {side}", unsided="rising or falling"),
    TrendRule("nelson_4", "nelson", "Nelson 4: fourteen points in a row alternating up and down",
              short="Nelson 4", words="fourteen results in a row alternating up and down"),
    TrendRule("nelson_5", "nelson", "Nelson 5: two of three points in a row beyond 2 σ on one side",
              short="Nelson 5", words="two of three results in a row more than 2 s {side} the mean", unsided="on the same side of"),
    TrendRule("nelson_6", "nelson", "Nelson 6: four of five points in a row beyond 1 σ on one side",
              short="Nelson 6", words="four of five results in a row more than 1 s {side} the mean", unsided="on the same side of"),
    TrendRule("nelson_7", "nelson", "Nelson 7: fifteen points in a row within 1 σ",
              short="Nelson 7", words="fifteen results in a row within 1 s of the mean"),
    TrendRule("nelson_8", "nelson", "Nelson 8: eight points in a row none within 1 σ",
              short="Nelson 8", words="eight results in a row more than 1 s from the mean, none within 1 s"),
)

EWMA_RULE = TrendRule("ewma", "ewma", "EWMA statistic beyond its control limits",
                      short="EWMA", words="the EWMA of recent results {side} its control limit", unsided="beyond")

OUT_OF_TREND_RULE = TrendRule("out_of_trend", "out_of_trend", "Result outside the prediction interval of its recent trend",
                              short="out of trend", words="a result in specification but outside the 99 % prediction interval of the line through the results before it")

RULES: dict[str, TrendRule] = {
    rule.code: rule for rule in (*WESTGARD_RULES, *ACROSS_MATERIAL_RULES, *NELSON_RULES, EWMA_RULE, OUT_OF_TREND_RULE)
}

# The rules of stability studies and of the traceability look-ahead, in the same words.
OTHER_RULE_WORDS: dict[str, tuple[str, str]] = {
    "pull_out_of_limit": ("pull beyond limit", "a stability pull result beyond the study's acceptance limit"),
    "shelf_life_short": ("shelf life short", "the predicted shelf life is shorter than the claimed shelf life"),
    "pull_overdue": ("pull overdue", "a stability pull not tested within a week of its due date"),
    "calibration_due": ("calibration due", "an instrument's calibration falls due"),
    "check_due": ("check due", "an instrument's routine check falls due"),
    "standardisation_due": ("standardisation due", "a titrant lot's standardisation falls due"),
    "lot_expiring": ("lot expiring", "a titrant lot reaches its expiry date"),
}


def rule_short_name(code: str) -> str:
    """The rule's published or short name ("1-3s", "Nelson 2"); an unknown code as written."""
    if code in RULES:
        return RULES[code].short
    return OTHER_RULE_WORDS.get(code, (code.replace("_", " "), ""))[0]


def rule_in_words(code: str, side: str = "") -> str:
    """"<name>: <the rule in words>", e.g. "10-x: 10 consecutive results above the mean".
    A code the catalogue does not know reads as its code with spaces."""
    rule = RULES.get(code)
    if rule is None:
        short, words = OTHER_RULE_WORDS.get(code, (code.replace("_", " "), ""))
        return f"{short}: {words}" if words else short
    sentence = rule.words.format(side=SIDE_WORDS.get(side, rule.unsided) if side else rule.unsided)
    return f"{rule.short}: {sentence}"
