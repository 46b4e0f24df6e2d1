"""The catalogue of trend rules: code, family and title of each.

Westgard multirules and Nelson rules as summarised in /work/shared/references.md
("found"); EWMA per the NIST/SEMATECH e-Handbook; out-of-trend is the project's own rule.
"""
from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class TrendRule:
    code: str
    family: str
    title: str
    warning_only: bool = False  # 1-2s only warns; every other rule raises an alert


WESTGARD_RULES: tuple[TrendRule, ...] = (
    TrendRule("westgard_1_2s", "westgard", "1-2s: one point beyond ±2 s (warning only)", warning_only=True),
    TrendRule("westgard_1_3s", "westgard", "1-3s: one point beyond ±3 s"),
    TrendRule("westgard_2_2s", "westgard", "2-2s: two consecutive points beyond the same ±2 s"),
    TrendRule("westgard_r_4s", "westgard", "R-4s: within a run, one point above +2 s and one below −2 s"),
    TrendRule("westgard_4_1s", "westgard", "4-1s: four consecutive points beyond the same ±1 s"),
    TrendRule("westgard_10_x", "westgard", "10-x: ten consecutive points on one side of the mean"),
)

# Across the control materials (levels) of one method measured in the same run; see
# analyses/trends/across_materials.py for the sources.
ACROSS_MATERIAL_RULES: tuple[TrendRule, ...] = (
    TrendRule("westgard_r_4s_across", "westgard", "R-4s across materials: in one run, one control above +2 s and another below −2 s"),
    TrendRule("westgard_2_2s_across", "westgard", "2-2s across materials: in one run, two controls beyond the same ±2 s"),
    TrendRule("westgard_2of3_2s", "westgard", "2 of 3 2s: in a run of three levels, two controls beyond the same ±2 s"),
)

NELSON_RULES: tuple[TrendRule, ...] = (
    TrendRule("nelson_1", "nelson", "Nelson 1: one point beyond 3 σ"),
    TrendRule("nelson_2", "nelson", "Nelson 2: nine points in a row on one side of the centre line"),
    TrendRule("nelson_3", "nelson", "Nelson 3: six points in a row steadily rising or falling"),
    TrendRule("nelson_4", "nelson", "Nelson 4: fourteen points in a row alternating up and down"),
    TrendRule("nelson_5", "nelson", "Nelson 5: two of three points in a row beyond 2 σ on one side"),
    TrendRule("nelson_6", "nelson", "Nelson 6: four of five points in a row beyond 1 σ on one side"),
    TrendRule("nelson_7", "nelson", "Nelson 7: fifteen points in a row within 1 σ"),
    TrendRule("nelson_8", "nelson", "Nelson 8: eight points in a row none within 1 σ"),
)

EWMA_RULE = TrendRule("ewma", "ewma", "EWMA statistic beyond its control limits")

OUT_OF_TREND_RULE = TrendRule("out_of_trend", "out_of_trend", "Result outside the prediction interval of its recent trend")

RULES: dict[str, TrendRule] = {
    rule.code: rule for rule in (*WESTGARD_RULES, *ACROSS_MATERIAL_RULES, *NELSON_RULES, EWMA_RULE, OUT_OF_TREND_RULE)
}
