"""Westgard rules across the control materials (levels) measured in one run.

Sources for every rule check (pages found with the search tool, tag "found"):
- R-4s within a run, across the levels in it: one control above +2 s and another below
  −2 s (LabCE, "Westgard Multi-Rule Approach", labce.com/spg113780; references.md).
- 2-2s across materials: two controls in one run, one of each level, beyond the same 2 s
  (LabCE spg113780; PMC3909142 table 1, "within" or "across" materials).
- 2 of 3 2s: with three levels, two of the three in one run beyond the same 2 s
  (LabCE, "Westgard Multi-Rule Approach continued", labce.com/spg574557).
"Beyond" is strict ("exceeds" in the sources), as for the within-material rules.

Runs are hand-built: two invented control oils for the acid value, a low level (mean
0.30, SD 0.01 mg KOH/g) and a high level (mean 2.00, SD 0.05), and a third level for the
2 of 3 rule (mean 4.00, SD 0.10). Cases at exactly 2 s use a level whose mean and SD are
exact in binary (1.0 and 0.25), so that "exactly 2 s" is exactly 2.0 in floating point.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from analyses.errors import InvalidInput
from analyses.trends.across_materials import across_materials_evaluate, across_materials_scan
from analyses.trends.rules import ACROSS_MATERIAL_RULES, RULES

LEVELS = {"low": (0.30, 0.01), "high": (2.00, 0.05), "third": (4.00, 0.10)}
BASELINES = {**LEVELS, "binary": (1.0, 0.25)}


def value(material: str, z: float) -> float:
    mean, sd = BASELINES[material]
    return mean + z * sd


def run(*controls: tuple[str, float], run_id="day 1") -> tuple[list, list, list]:
    """One run: (material, z) for each control measured in it."""
    return [value(m, z) for m, z in controls], [m for m, _ in controls], [run_id] * len(controls)


def runs(*each: tuple[list, list, list]) -> tuple[list, list, list]:
    return tuple(sum((part[i] for part in each), []) for i in range(3))


def hits(values, materials, run_ids, rule):
    episodes = across_materials_evaluate(values, materials, run_ids, BASELINES)
    return [(e.side, e.points) for e in episodes if e.rule == rule]


def test_the_rules_are_westgard_alarms():
    assert [r.code for r in ACROSS_MATERIAL_RULES] == ["westgard_r_4s_across", "westgard_2_2s_across", "westgard_2of3_2s"]
    assert all(RULES[r.code].family == "westgard" and not r.warning_only for r in ACROSS_MATERIAL_RULES)


# R-4s across materials
def test_r_4s_fires_on_a_two_level_run():
    assert hits(*run(("low", 2.5), ("high", -2.3)), "westgard_r_4s_across") == [("", (0, 1))]
    assert hits(*run(("high", -2.1), ("low", 3.5)), "westgard_r_4s_across") == [("", (0, 1))]


@pytest.mark.parametrize(
    "controls",
    [
        (("low", 2.5), ("high", 1.9)),  # only one beyond 2 s
        (("low", 2.5), ("high", 2.5)),  # both on the same side: 2-2s, not R-4s
        (("binary", 2.0), ("high", -2.5)),  # exactly +2.0 s is not beyond
        (("low", 2.8), ("high", -1.3)),  # a range of 4.1 s, but Westgard asks for +2 s and −2 s
    ],
)
def test_r_4s_does_not_fire(controls):
    assert hits(*run(*controls), "westgard_r_4s_across") == []


def test_r_4s_compares_within_a_run_only():
    values, materials, run_ids = runs(run(("low", 2.5), ("high", 0.0)), run(("low", 0.0), ("high", -2.5), run_id="day 2"))
    assert hits(values, materials, run_ids, "westgard_r_4s_across") == []


def test_r_4s_across_leaves_one_material_alone_to_the_within_material_rule():
    # The same level twice in a run, +2.5 s and −2.5 s: the within-material R-4s, not this one.
    assert hits(*run(("low", 2.5), ("low", -2.5), ("high", 0.0)), "westgard_r_4s_across") == []
    # ... but a second level below −2 s makes it an across-material violation too.
    assert hits(*run(("low", 2.5), ("low", -2.5), ("high", -2.2)), "westgard_r_4s_across") == [("", (0, 1, 2))]


def test_r_4s_in_one_run_of_three_levels():
    assert hits(*run(("low", 0.5), ("high", 2.4), ("third", -2.6)), "westgard_r_4s_across") == [("", (1, 2))]


# 2-2s across materials within a run
def test_2_2s_across_fires_when_both_levels_are_beyond_the_same_2s():
    assert hits(*run(("low", 2.5), ("high", 2.1)), "westgard_2_2s_across") == [("+", (0, 1))]
    assert hits(*run(("low", -2.2), ("high", -3.1)), "westgard_2_2s_across") == [("-", (0, 1))]


@pytest.mark.parametrize(
    "controls",
    [
        (("low", 2.5), ("high", -2.5)),  # opposite sides: R-4s
        (("low", 2.5), ("binary", 2.0)),  # exactly 2.0 s is not beyond
        (("low", 2.5), ("low", 2.4), ("high", 0.0)),  # one level twice: the within-material 2-2s
    ],
)
def test_2_2s_across_does_not_fire(controls):
    assert hits(*run(*controls), "westgard_2_2s_across") == []


def test_2_2s_across_needs_the_same_run():
    values, materials, run_ids = runs(run(("low", 2.5), ("high", 0.3)), run(("low", 0.1), ("high", 2.5), run_id="day 2"))
    assert hits(values, materials, run_ids, "westgard_2_2s_across") == []


# 2 of 3 2s where three levels are run
def test_2_of_3_2s_fires_on_a_three_level_run():
    assert hits(*run(("low", 2.3), ("high", 0.4), ("third", 2.7)), "westgard_2of3_2s") == [("+", (0, 2))]
    assert hits(*run(("low", -2.3), ("high", -2.2), ("third", -2.7)), "westgard_2of3_2s") == [("-", (0, 1, 2))]


def test_a_three_level_run_is_judged_by_2_of_3_not_also_2_2s():
    controls = run(("low", 2.3), ("high", 0.4), ("third", 2.7))
    assert hits(*controls, "westgard_2_2s_across") == []


@pytest.mark.parametrize(
    "controls",
    [
        (("low", 2.3), ("high", 0.4), ("third", 1.9)),  # one of three beyond 2 s
        (("low", 2.3), ("high", 0.4), ("third", -2.7)),  # two beyond, opposite sides: R-4s
        (("low", 2.3), ("binary", 2.0), ("third", 0.0)),  # exactly 2.0 s is not beyond
    ],
)
def test_2_of_3_2s_does_not_fire(controls):
    assert hits(*run(*controls), "westgard_2of3_2s") == []


def test_2_of_3_2s_is_not_used_on_two_level_runs():
    assert hits(*run(("low", 2.3), ("high", 2.7)), "westgard_2of3_2s") == []


# Episodes
def test_broken_runs_in_a_row_are_one_episode():
    values, materials, run_ids = runs(
        run(("low", 0.0), ("high", 0.0), run_id=1),
        run(("low", 2.5), ("high", -2.5), run_id=2),
        run(("low", -2.4), ("high", 2.2), run_id=3),
        run(("low", 0.0), ("high", 0.0), run_id=4),
        run(("low", 2.1), ("high", -2.1), run_id=5),
    )
    assert hits(values, materials, run_ids, "westgard_r_4s_across") == [("", (2, 3, 4, 5)), ("", (8, 9))]


def test_bad_input_names_the_field():
    with pytest.raises(InvalidInput) as caught:
        across_materials_evaluate([0.3, 2.0], ["low"], ["a", "a"], BASELINES)
    assert "materials" in caught.value.fields
    with pytest.raises(InvalidInput) as caught:
        across_materials_evaluate([0.3, 2.0], ["low", "high"], ["a"], BASELINES)
    assert "run_ids" in caught.value.fields
    with pytest.raises(InvalidInput) as caught:
        across_materials_evaluate([0.3, 2.0], ["low", "other"], ["a", "a"], BASELINES)
    assert "baselines" in caught.value.fields
    with pytest.raises(InvalidInput) as caught:
        across_materials_evaluate([0.3, 2.0], ["low", "high"], ["a", "a"], {"low": (0.3, 0.0), "high": (2.0, 0.05)})
    assert "baselines" in caught.value.fields


# The scan of many methods at once must equal the single-method function, method by method.
def invented_runs(seed: int = 11) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    frames = []
    for method in ("av", "pv"):
        for level, (mean, sd) in LEVELS.items():
            n = 60
            measured = rng.random(n) < (0.9 if level != "third" else 0.5)  # the third level on some days only
            z = rng.normal(0.0, 1.6, n)  # a wide spread, so that the rules do break
            frames.append(pd.DataFrame({
                "run_group": method, "series_id": f"{method}-{level}", "run_id": np.arange(n)[measured],
                "sequence": np.arange(n)[measured] * 10 + list(LEVELS).index(level), "value": (mean + z * sd)[measured],
            }))
    return pd.concat(frames, ignore_index=True)


def test_scan_equals_the_single_method_function():
    results = invented_runs()
    limits = pd.DataFrame(
        [(f"{m}-{level}", mean, sd) for m in ("av", "pv") for level, (mean, sd) in LEVELS.items()],
        columns=["series_id", "mean", "sd"],
    )
    scan = across_materials_scan(results.sample(frac=1.0, random_state=2), limits)
    expected = set()
    for method, frame in results.sort_values("sequence").groupby("run_group"):
        levels = frame["series_id"].str.split("-").str[1]
        for e in across_materials_evaluate(frame["value"].tolist(), levels.tolist(), frame["run_id"].tolist(), BASELINES):
            expected.add((method, e.rule, e.side, e.first, e.last, e.points))
    assert {r.rule for r in scan.itertuples()} == {r.code for r in ACROSS_MATERIAL_RULES}  # every rule broken somewhere
    assert {(r.series_id, r.rule, r.side, r.first, r.last, r.points) for r in scan.itertuples()} == expected


def test_scan_refuses_missing_columns_and_limits():
    results = invented_runs().drop(columns="run_id")
    with pytest.raises(InvalidInput) as caught:
        across_materials_scan(results, pd.DataFrame(columns=["series_id", "mean", "sd"]))
    assert "run_id" in caught.value.fields
    with pytest.raises(InvalidInput) as caught:
        across_materials_scan(invented_runs(), pd.DataFrame({"series_id": ["av-low"], "mean": [0.3], "sd": [0.01]}))
    assert "limits" in caught.value.fields
